"""Tests of wavebench.core.streams: per-trial random streams.

Checked against numpy itself (SeedSequence spawn keys, PCG64; numpy docs
"Parallel Random Number Generation") and zlib's CRC-32 (with the standard
CRC-32 check value).
"""

from __future__ import annotations

import zlib

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from wavebench.core.errors import ParameterError
from wavebench.core.streams import TrialStreams, purpose_key

SEED = 20240611
N_BATCH = 2000


def _normals(rng: np.random.Generator) -> np.ndarray:
    return rng.standard_normal(8)


@pytest.fixture(scope="module")
def batch() -> np.ndarray:
    return TrialStreams(SEED, range(N_BATCH)).draw("sea.components", _normals)


def test_draw_shape(batch):
    assert batch.shape == (N_BATCH, 8)
    assert TrialStreams(SEED, 3).draw("x", lambda rng: rng.random((2, 5))).shape == (3, 2, 5)


@pytest.mark.parametrize("i", [0, 1, 2, 999, 1234, N_BATCH - 1])
def test_trial_alone_equals_trial_in_batch(batch, i):
    # The design rule: trial i is bit-identical alone or in a batch of any size.
    alone = TrialStreams(SEED, [i]).draw("sea.components", _normals)
    assert alone.shape == (1, 8)
    np.testing.assert_array_equal(alone[0], batch[i])


def test_batch_order_and_subsets_do_not_matter(batch):
    idx = [1999, 5, 1000, 6]
    shuffled = TrialStreams(SEED, idx).draw("sea.components", _normals)
    np.testing.assert_array_equal(shuffled, batch[idx])
    sub = TrialStreams(SEED, range(N_BATCH)).subset([3, 7])
    assert sub.trials == (3, 7)
    np.testing.assert_array_equal(sub.draw("sea.components", _normals), batch[[3, 7]])
    sub = TrialStreams(SEED, range(N_BATCH)).subset(slice(10, 13))
    np.testing.assert_array_equal(sub.draw("sea.components", _normals), batch[10:13])


@settings(max_examples=40, deadline=None)
@given(
    seed=st.integers(min_value=0, max_value=2**64 - 1),
    trial=st.integers(min_value=0, max_value=10**9),
    others=st.lists(st.integers(min_value=0, max_value=10**9), max_size=12, unique=True),
    position=st.integers(min_value=0, max_value=12),
)
def test_property_trial_independent_of_batch(seed, trial, others, position):
    # Property: wherever trial i sits in whatever batch, its draws are the same.
    idx = [i for i in others if i != trial]  # a batch holds each trial once
    pos = min(position, len(idx))
    idx.insert(pos, trial)
    in_batch = TrialStreams(seed, idx).draw("current.gm", lambda rng: rng.random(5))
    alone = TrialStreams(seed, [trial]).draw("current.gm", lambda rng: rng.random(5))
    np.testing.assert_array_equal(in_batch[pos], alone[0])


def test_generators_restart_on_each_call():
    s = TrialStreams(SEED, [4, 9])
    a = [g.random(3) for g in s.generators("imu.noise")]
    b = [g.random(3) for g in s.generators("imu.noise")]
    np.testing.assert_array_equal(a, b)


def test_purposes_give_different_streams(batch):
    other = TrialStreams(SEED, range(N_BATCH)).draw("gnss.noise", _normals)
    # With continuous draws equal values would need a collision of 64-bit streams.
    assert not np.any(other == batch)


def test_seeds_give_different_streams(batch):
    other = TrialStreams(SEED + 1, range(N_BATCH)).draw("sea.components", _normals)
    assert not np.any(other == batch)


def test_trials_give_different_streams(batch):
    # no two trials of the batch share a first draw
    assert np.unique(batch[:, 0]).size == N_BATCH


def test_sequence_is_numpy_seedsequence_with_spawn_key():
    # numpy docs, "Parallel Random Number Generation": a SeedSequence addressed by
    # spawn_key; the varying key (trial index) first, then the purpose key.
    s = TrialStreams(SEED, [0, 17])
    for i in (0, 17, 123456):
        for p in ("sea.components", "current.gm", "navigation.ekf"):
            seq = s.sequence(i, p)
            assert isinstance(seq, np.random.SeedSequence)
            assert seq.entropy == SEED
            assert seq.spawn_key == (i, purpose_key(p))


def test_generator_equals_one_built_directly_with_numpy():
    # Reference: numpy's own SeedSequence + PCG64, built here without wavebench.
    s = TrialStreams(SEED, [3, 42])
    got = s.draw("wind.gust", lambda rng: rng.standard_normal(6))
    key = zlib.crc32(b"wind.gust")
    for row, i in enumerate((3, 42)):
        rng = np.random.Generator(np.random.PCG64(np.random.SeedSequence(SEED, spawn_key=(i, key))))
        np.testing.assert_array_equal(got[row], rng.standard_normal(6))


@pytest.mark.parametrize("purpose", ["sea.components", "x", "navigation.ekf.init", "été"])
def test_purpose_key_is_crc32(purpose):
    # Reference: zlib.crc32 of the UTF-8 bytes.
    assert purpose_key(purpose) == zlib.crc32(purpose.encode("utf-8"))
    assert 0 <= purpose_key(purpose) < 2**32


def test_purpose_key_standard_check_value():
    # CRC-32 (ISO-HDLC) standard check value: CRC of ASCII "123456789" is 0xCBF43926
    # (value from memory, not re-checked; zlib agrees, see test above).
    assert purpose_key("123456789") == 0xCBF43926


def test_empty_purpose_rejected():
    with pytest.raises(ParameterError, match="purpose"):
        purpose_key("")


@pytest.mark.parametrize(
    "bad", [-1, 1.0, 2.5, True, False, "7", None, np.float64(3.0), np.bool_(1)]
)
def test_bad_seeds_rejected_naming_seed(bad):
    with pytest.raises(ParameterError) as info:
        TrialStreams(bad, [0])
    assert info.value.field == "seed"
    assert str(info.value).startswith("seed = ")


def test_numpy_integer_seed_accepted():
    a = TrialStreams(np.int64(5), [0, 1]).draw("x", lambda rng: rng.random(2))
    b = TrialStreams(5, [0, 1]).draw("x", lambda rng: rng.random(2))
    np.testing.assert_array_equal(a, b)


def test_negative_trial_rejected():
    with pytest.raises(ParameterError, match="trials"):
        TrialStreams(1, [0, -3])


def test_int_trials_means_range():
    assert TrialStreams(1, 4).trials == (0, 1, 2, 3)
    assert TrialStreams(1, 0).n_trials == 0


def test_fractional_trial_indices_rejected():
    with pytest.raises(ParameterError, match="trials"):
        TrialStreams(1, [0.5, 0.9])


def test_duplicate_trial_indices_rejected():
    # two copies of one trial in a batch would silently share one stream
    with pytest.raises(ParameterError, match="unique"):
        TrialStreams(1, [3, 5, 3])
