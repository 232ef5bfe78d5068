"""A campaign killed at any point resumes from its finished chunks and ends with the uninterrupted bits."""

from __future__ import annotations

import contextlib
import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pandas as pd
import pytest

from wavebench.campaign import chunks as chunk_files
from wavebench.campaign import read_store, run_campaign
from wavebench.cli import main
from wavebench.core.errors import ParameterError, WavebenchWarning
from wavebench.spec import example_spec_path, load_spec

SETTINGS = ["scenario.duration_s=200.0", "campaign.trials=24", "campaign.batch_size=2"]
CLI_SETTINGS = [arg for s in SETTINGS for arg in ("--set", s)]


@pytest.fixture(scope="module")
def spec():
    return load_spec(example_spec_path("skerrow_sound"), SETTINGS)


@pytest.fixture(scope="module")
def uninterrupted(spec):
    return run_campaign(spec, progress=False)


@contextlib.contextmanager
def _write_fails_at(monkeypatch, n: int, error: OSError):
    """Inside the block, the n-th chunk write raises ``error`` (a full disk, an I/O error)."""
    real, calls = chunk_files.write_chunk, {"n": 0}

    def failing(folder, out):
        calls["n"] += 1
        if calls["n"] == n:
            raise error
        real(folder, out)

    monkeypatch.setattr(chunk_files, "write_chunk", failing)
    try:
        yield
    finally:
        monkeypatch.setattr(chunk_files, "write_chunk", real)


def _same_as(store: Path, ref) -> None:
    got = read_store(store)
    pd.testing.assert_frame_equal(got["metrics"], ref.metrics, check_exact=True, check_dtype=False)
    assert got["timeseries"].equals(ref.timeseries)
    assert got["manifest"]["complete"] and got["manifest"]["trials"] == len(ref.metrics)
    assert not (store / "chunks").exists()


def test_a_killed_campaign_resumes_to_the_same_bits(tmp_path, uninterrupted) -> None:
    store = tmp_path / "store"
    code = ("import sys; from wavebench.cli import main; "
            f"sys.exit(main(['run', 'skerrow_sound', '--out', {str(store)!r}, '--quiet', *{CLI_SETTINGS!r}]))")  # fmt: skip
    proc = subprocess.Popen([sys.executable, "-c", code], stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    try:
        deadline = time.monotonic() + 300.0
        while len(list((store / "chunks").glob("metrics-*.parquet"))) < 3:
            assert proc.poll() is None, "the campaign ended before it could be killed"
            assert time.monotonic() < deadline, "no chunk written in time"
            time.sleep(0.05)
        os.kill(proc.pid, signal.SIGKILL)  # a real kill, mid-campaign
        proc.wait(timeout=30)
    finally:
        if proc.poll() is None:
            proc.kill()
    done = len(list((store / "chunks").glob("metrics-*.parquet")))
    assert 3 <= done < 12, done  # killed part way: some chunks finished, not all
    assert not (store / "metrics.parquet").exists()
    with pytest.raises(ParameterError, match="unfinished campaign"):
        run_campaign(load_spec(example_spec_path("skerrow_sound"), SETTINGS), progress=False, store=store)
    assert main(["run", "--resume", str(store), "--quiet"]) == 0
    _same_as(store, uninterrupted)


def test_a_corrupted_chunk_runs_again(tmp_path, spec, uninterrupted, monkeypatch) -> None:
    store = tmp_path / "store"
    with _write_fails_at(monkeypatch, 4, OSError(28, "No space left on device")), \
            pytest.raises(OSError, match=r"No space left on device.*kept.*--resume"):
        run_campaign(spec, progress=False, store=store)
    written = sorted((store / "chunks").glob("metrics-*.parquet"))
    assert len(written) == 3  # the chunks finished before the failing write are kept
    written[1].write_bytes(written[1].read_bytes()[:40])  # a chunk file cut short
    with pytest.warns(WavebenchWarning, match="cannot be read"):
        result = run_campaign(spec, progress=False, store=store, resume=True)
    assert result.complete
    _same_as(store, uninterrupted)


def test_resume_refuses_a_differently_planned_store(tmp_path, spec, monkeypatch) -> None:
    store = tmp_path / "store"
    with _write_fails_at(monkeypatch, 2, OSError(5, "Input/output error")), pytest.raises(OSError):
        run_campaign(spec, progress=False, store=store)
    with pytest.raises(ParameterError, match=r"planned differently \(.*seed: store 20240611, now 20240612"):
        run_campaign(spec, seed=spec.campaign.seed + 1, progress=False, store=store, resume=True)
    with pytest.raises(ParameterError, match="no unfinished campaign"):
        run_campaign(spec, progress=False, store=tmp_path / "empty", resume=True)
    assert main(["run", "--resume", str(store), "--trials", "3"]) == 2


def test_a_stored_campaign_reads_its_time_series_from_disk(tmp_path, spec, uninterrupted) -> None:
    # with a store, chunks' time series go to timeseries.zarr as they finish and the result reads it lazily
    result = run_campaign(spec, progress=False, store=tmp_path / "store")
    assert (tmp_path / "store" / "timeseries.zarr").is_dir()
    assert not any(v._in_memory for v in result.timeseries.data_vars.values())
    assert result.timeseries.equals(uninterrupted.timeseries)


def test_a_chunk_that_fails_whole_is_kept_as_failed_trials(tmp_path, spec, monkeypatch) -> None:
    import numpy as np

    from wavebench.campaign import executor

    real = executor.run_batch

    def broken_for_trial_2(spec_, setup, **kw):
        if 2 in np.asarray(setup.env.trials.trials):
            raise RuntimeError("solver blew up")
        return real(spec_, setup, **kw)

    monkeypatch.setattr(executor, "run_batch", broken_for_trial_2)
    with pytest.warns(WavebenchWarning, match="solver blew up"):
        held = run_campaign(spec, trials=6, progress=False)
    with pytest.warns(WavebenchWarning, match="solver blew up"):
        stored = run_campaign(spec, trials=6, progress=False, store=tmp_path / "store")
    pd.testing.assert_frame_equal(stored.metrics, held.metrics, check_exact=True)
    assert stored.timeseries.equals(held.timeseries)
    # the time series keep a row per trial, NaN for the trials of the chunk that failed
    assert list(stored.timeseries["trial"].values) == [0, 1, 2, 3, 4, 5]
    xte = stored.timeseries["xte_m"].values
    assert np.isnan(xte[2:4]).all() and np.isfinite(xte[[0, 1, 4, 5], 0]).all()
    assert (stored.metrics["failure_reason"].iloc[2:4] == "error: RuntimeError: solver blew up").all()


def test_a_sequential_campaign_resumes_and_stops_where_it_would_have(tmp_path, monkeypatch) -> None:
    import numpy as np

    from wavebench.analysis.sequential import SequentialPlan

    spec = load_spec(example_spec_path("skerrow_sound"), [
        "scenario.duration_s=30.0", "campaign.batch_size=10", "requirements.track_keeping=",
        "requirements.finishes_in_time=", "requirements.easy.metric=xte_max_m", "requirements.easy.below=1000.0",
        "requirements.easy.probability=0.8"])  # fmt: skip
    plan = SequentialPlan(confidence=0.95, max_trials=60, first_look=10, look_every=10)
    # Clopper & Pearson (1934): with all n trials met, the lower bound at confidence 1 - a is (a/2)^(1/n); the
    # union-bound schedule spends a_k = 6 (0.05) / (pi^2 k^2) at look k. Look 2 (n = 20): 0.73 < 0.8; look 3
    # (n = 30): 0.81 > 0.8 -> "pass" after 30 trials, before the cap of 60.
    a = [6 * 0.05 / (np.pi**2 * k**2) for k in (2, 3)]
    assert (a[0] / 2) ** (1 / 20) < 0.8 < (a[1] / 2) ** (1 / 30)
    whole = run_campaign(spec, progress=False, until=plan, store=tmp_path / "whole")
    assert len(whole.metrics) == 30 and whole.sequential["easy"].decision == "pass"

    store = tmp_path / "store"
    with _write_fails_at(monkeypatch, 2, OSError(28, "No space left on device")), \
            pytest.raises(OSError, match="No space left"):
        run_campaign(spec, progress=False, until=plan, store=store)
    other = SequentialPlan(confidence=0.95, max_trials=60, first_look=20, look_every=20)
    with pytest.raises(ParameterError, match="planned differently"):
        run_campaign(spec, progress=False, until=other, store=store, resume=True)
    assert main(["run", "--resume", str(store), "--quiet"]) == 0  # the CLI takes the plan from the store
    got = read_store(store)
    pd.testing.assert_frame_equal(got["metrics"], whole.metrics, check_exact=True, check_dtype=False)
    assert got["timeseries"].sizes["trial"] == 30 and got["timeseries"].equals(whole.timeseries)


def test_a_damaged_time_series_chunk_runs_again(tmp_path, spec, uninterrupted, monkeypatch) -> None:
    store = tmp_path / "store"
    with _write_fails_at(monkeypatch, 5, OSError(5, "Input/output error")), pytest.raises(OSError):
        run_campaign(spec, progress=False, store=store)
    series = store / "timeseries.zarr"
    # Zarr format 3 chunk keys <array>/c/<i>/<j>: flip bytes in one chunk (its CRC-32C no longer matches)
    # and delete another (it would read back as fill values without complaint)
    bad = series / "xte_m" / "c" / "1" / "0"
    data = bytearray(bad.read_bytes())
    data[len(data) // 2] ^= 0xFF
    bad.write_bytes(bytes(data))
    (series / "heading_deg" / "c" / "3" / "0").unlink()
    with pytest.warns(WavebenchWarning, match="cannot be read") as caught:
        result = run_campaign(spec, progress=False, store=store, resume=True)
    texts = " ".join(str(w.message) for w in caught)
    assert "000000002-000000003" in texts and "000000006-000000007" in texts  # the two damaged chunks, named
    assert result.complete
    _same_as(store, uninterrupted)


def test_an_interrupted_cli_run_keeps_its_time_series_for_resume(tmp_path, uninterrupted, monkeypatch) -> None:
    # Ctrl-C part way: the CLI writes what there is, and the finished chunks' time series must survive it
    from wavebench.campaign import executor

    real, calls = executor.run_chunk, {"n": 0}

    def interrupt_fourth(*args, **kw):
        calls["n"] += 1
        if calls["n"] == 4:
            raise KeyboardInterrupt
        return real(*args, **kw)

    monkeypatch.setattr(executor, "run_chunk", interrupt_fourth)
    store = tmp_path / "store"
    with pytest.warns(WavebenchWarning, match="interrupted"):
        assert main(["run", "skerrow_sound", "--out", str(store), "--quiet", *CLI_SETTINGS]) == 130
    monkeypatch.setattr(executor, "run_chunk", real)
    assert (store / "timeseries.zarr").is_dir()
    done = {p.name for p in (store / "chunks").glob("metrics-*.parquet")}
    assert len(done) == 3
    ran = []
    monkeypatch.setattr(executor, "run_chunk", lambda spec, idx, **kw: ran.append(int(idx[0])) or real(spec, idx, **kw))
    assert main(["run", "--resume", str(store), "--quiet"]) == 0
    assert min(ran) == 6  # the three finished chunks (trials 0-5) were not run again
    _same_as(store, uninterrupted)


def test_a_new_campaign_replaces_a_finished_store_in_its_folder(tmp_path, spec, uninterrupted) -> None:
    store = tmp_path / "store"
    run_campaign(spec, trials=4, batch_size=1, seed=spec.campaign.seed + 5, progress=False, store=store)
    run_campaign(spec, progress=False, store=store)  # other trials, batch size and seed: nothing of the old may mix
    _same_as(store, uninterrupted)
    from wavebench.campaign.series import open_timeseries

    with open_timeseries(store) as ds:
        assert ds.attrs["spec_hash"] == read_store(store)["manifest"]["spec_hash"]
        assert ds["trial"].values.tolist() == list(range(24))
