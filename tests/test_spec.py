"""Tests of the spec layer: schema, distributions, round trip, hash, per-trial draws."""

from __future__ import annotations

import copy
import math
import sys

import numpy as np
import pytest
import tomli_w
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import stats

from wavebench.core.errors import ParameterError
from wavebench.core.streams import TrialStreams
from wavebench.spec import (
    Choice,
    LogNormal,
    Normal,
    SeaSpec,
    TruncatedNormal,
    Uniform,
    distributed_fields,
    draw_trial_parameters,
    dump_spec,
    example_spec_names,
    example_spec_path,
    load_spec,
    save_spec,
    spec_from_data,
    spec_hash,
)

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover
    import tomli as tomllib

BASE: dict = {
    "spec_version": 1,
    "scenario": {
        "name": "Test reach",
        "origin": {"lat_deg": 58.0, "lon_deg": -5.5},
        "duration_s": 60.0,
        "dt_s": 0.1,
    },
    "craft": {"demo": "Tholepin"},
    "sea": {
        "kind": "jonswap",
        "hs_m": {"uniform": [1.0, 2.5]},
        "tp_s": 6.0,
        "spreading": {"kind": "cos2s", "exponent": 10.0, "mean_dir_deg": 200.0},
    },
    "current": {"speed_mps": {"lognormal": {"median": 0.4, "sigma": 0.2}}, "set_deg": 90.0},
    "wind": {"speed_mps": 8.0, "direction_from_deg": 230.0},
    "mission": {"kind": "waypoints", "waypoints_ne_m": [[0.0, 0.0], [100.0, 0.0]], "speed_mps": 2.0},
    "campaign": {"trials": 10, "seed": 7},
}


def edited(path: str, value, base: dict = BASE) -> dict:
    """Copy of ``base`` with the dotted ``path`` set to ``value`` (``...`` deletes it)."""
    data = copy.deepcopy(base)
    *parents, last = path.split(".")
    node = data
    for p in parents:
        node = node[p]
    if value is ...:
        del node[last]
    else:
        node[last] = value
    return data


def load_data(data: dict):
    return load_spec(tomli_w.dumps(data))


# ---------------------------------------------------------------------------
# the example file and the round trip
# ---------------------------------------------------------------------------


def test_example_file_loads_with_its_distributions():
    assert "skerrow_sound" in example_spec_names()
    spec = load_spec(example_spec_path("skerrow_sound"))
    assert spec.craft.demo == "Tholepin"
    assert spec.scenario.n_steps == 6000
    assert isinstance(spec.sea.hs_m, TruncatedNormal)
    assert set(distributed_fields(spec)) == {
        "sea.hs_m",
        "sea.tp_s",
        "sea.spreading.exponent",
        "sea.spreading.mean_dir_deg",
        "current.speed_mps",
        "current.set_deg",
        "wind.speed_mps",
        "mission.start_north_m",
        "mission.start_east_m",
    }


def test_round_trip_is_lossless_and_text_is_stable(tmp_path):
    spec = load_spec(example_spec_path("skerrow_sound"))
    text = dump_spec(spec)
    again = load_spec(text)
    assert again == spec
    assert dump_spec(again) == text
    path = tmp_path / "copy.toml"
    save_spec(spec, path)
    assert load_spec(path) == spec
    assert load_spec(str(path)) == spec
    # the written text is plain TOML for any reader
    assert tomllib.loads(text)["sea"]["hs_m"] == {"truncated_normal": {"mean": 1.2, "sd": 0.3, "low": 0.5, "high": 2.0}}


def test_round_trip_keeps_every_distribution_kind_and_infinite_depth():
    data = edited("sea.spreading.exponent", {"choice": [4.0, 10.0], "weights": [0.25, 0.75]})
    data = edited("sea.tp_s", {"truncated_normal": {"mean": 6.0, "sd": 1.0, "low": 4.0, "high": 9.0}}, data)
    data = edited("sea.spreading.mean_dir_deg", {"choice": [180.0]}, data)
    data = edited("current.variation", {"speed_sigma_mps": {"uniform": [0.0, 0.1]}}, data)
    spec = load_data(data)
    assert spec.sea.depth_m == math.inf
    assert spec.sea.spreading.exponent == Choice((4.0, 10.0), (0.25, 0.75))
    text = dump_spec(spec)
    assert load_spec(text) == spec
    assert dump_spec(load_spec(text)) == text


finite_pos = st.floats(min_value=0.01, max_value=50.0, allow_nan=False, allow_infinity=False)


@st.composite
def positive_distributions(draw):
    kind = draw(st.sampled_from(["fixed", "uniform", "truncated_normal", "lognormal", "choice"]))
    a, b = sorted(draw(st.lists(finite_pos, min_size=2, max_size=2, unique=True)))
    if kind == "fixed":
        return a
    if kind == "uniform":
        return {"uniform": [a, b]}
    if kind == "truncated_normal":
        return {"truncated_normal": {"mean": draw(finite_pos), "sd": draw(finite_pos), "low": a, "high": b}}
    if kind == "lognormal":
        return {"lognormal": {"median": a, "sigma": draw(st.floats(0.01, 2.0))}}
    return {"choice": draw(st.lists(finite_pos, min_size=1, max_size=5))}


# TOML v1.0.0: integers are 64-bit signed, so a seed above 2**63 - 1 is refused at load (tests/test_spec_fuzz.py)
@settings(max_examples=60, deadline=None)
@given(hs=positive_distributions(), tp=positive_distributions(), speed=positive_distributions(),
       seed=st.integers(0, 2**63 - 1), trials=st.integers(1, 10_000))
def test_round_trip_property(hs, tp, speed, seed, trials):
    data = edited("sea.hs_m", hs)
    data = edited("sea.tp_s", tp, data)
    data = edited("wind.speed_mps", speed, data)
    data = edited("campaign", {"trials": trials, "seed": seed}, data)
    spec = load_data(data)
    text = dump_spec(spec)
    assert load_spec(text) == spec
    assert dump_spec(load_spec(text)) == text
    assert spec_hash(load_spec(text)) == spec_hash(spec)


def test_python_construction_is_validated_too():
    with pytest.raises(ParameterError, match=r"^hs_m = .*truncated_normal"):
        SeaSpec(hs_m=Normal(1.0, 0.2), tp_s=6.0)
    assert SeaSpec(hs_m=Uniform(0.5, 1.0), tp_s=6.0).spreading.kind == "cos2s"


# ---------------------------------------------------------------------------
# the hash
# ---------------------------------------------------------------------------

REORDERED = """
# same content as BASE, keys and tables in another order, other spacing
[campaign]
seed = 7
trials   =   10

[wind]
direction_from_deg = 230
speed_mps = 8.0

[current]
set_deg = 90.0
speed_mps = {lognormal={sigma=0.2,median=0.4}}

[sea.spreading]
mean_dir_deg = 2.0e2
exponent = 10.0
kind = "cos2s"

[sea]
tp_s = 6.0
hs_m = { uniform = [ 1.0 , 2.5 ] }
kind = "jonswap"

[craft]
demo = "Tholepin"

[mission]
speed_mps = 2
waypoints_ne_m = [[0, 0], [100.0, 0.0]]
kind = "waypoints"

[scenario]
dt_s = 0.1
duration_s = 60.0
name = "Test reach"
origin = { lon_deg = -5.5, lat_deg = 58.0 }
"""


def test_hash_ignores_order_whitespace_spelling_and_explicit_defaults():
    base = load_data(BASE)
    other = load_spec("spec_version = 1\n" + REORDERED)
    assert other == base
    assert spec_hash(other) == spec_hash(base)
    explicit = edited("sea.n_components", 100)  # the default, written out
    explicit = edited("scenario.origin.h_m", 0.0, explicit)
    assert spec_hash(load_data(explicit)) == spec_hash(base)
    assert len(spec_hash(base)) == 64
    int(spec_hash(base), 16)


@pytest.mark.parametrize(
    ("path", "value"),
    [
        ("scenario.name", "Test reach 2"),
        ("scenario.dt_s", 0.05),
        ("scenario.origin.lat_deg", 58.000001),
        ("craft.demo", "Dulse"),
        ("sea.hs_m", {"uniform": [1.0, 2.5000000001]}),
        ("sea.hs_m", {"truncated_normal": {"mean": 1.75, "sd": 0.5, "low": 1.0, "high": 2.5}}),
        ("sea.tp_s", 6.1),
        ("sea.gamma", 3.3),
        ("sea.spreading.kind", "cosn"),
        ("current.speed_mps", {"lognormal": {"median": 0.4, "sigma": 0.21}}),
        ("wind", ...),
        ("campaign.seed", 8),
        ("campaign.trials", 11),
    ],
)
def test_hash_changes_with_any_value(path, value):
    assert spec_hash(load_data(edited(path, value))) != spec_hash(load_data(BASE))


# ---------------------------------------------------------------------------
# rejections: each names the TOML path
# ---------------------------------------------------------------------------

BAD = [
    # (path edited, value, expected field in the error, expected text)
    ("sea.hs", 1.0, "sea.hs", "did you mean 'hs_m'"),
    ("caimpaign", {"trials": 1, "seed": 0}, "caimpaign", "did you mean 'campaign'"),
    ("sea.spreading.exponant", 4.0, "sea.spreading.exponant", "did you mean 'exponent'"),
    ("scenario.origin.lat", 58.0, "scenario.origin.lat", "did you mean 'lat_deg'"),
    ("scenario.dt_s", ..., "scenario.dt_s", "required but missing"),
    ("spec_version", ..., "spec_version", "required but missing"),
    ("spec_version", 2, "spec_version", "<= 1"),
    ("campaign", ..., "campaign", "required but missing"),
    ("sea.hs_m", "big", "sea.hs_m", "must be a finite number"),
    ("sea.hs_m", [1.0, 2.0], "sea.hs_m", "must be a number, not an array"),
    ("scenario.name", 3, "scenario.name", "must be a string"),
    ("sea", 5, "sea", "must be a table"),
    ("campaign.trials", True, "campaign.trials", "whole number"),
    ("campaign.trials", 0, "campaign.trials", ">= 1"),
    ("campaign.trials", 2.5, "campaign.trials", "whole number"),
    ("campaign.seed", -1, "campaign.seed", ">= 0"),
    ("sea.hs_m", -1.0, "sea.hs_m", "> 0.0"),
    ("scenario.origin.lat_deg", 95.0, "scenario.origin.lat_deg", "<= 90.0"),
    ("scenario.dt_s", 0.7, "scenario.dt_s", "whole number of steps"),
    ("craft.demo", "Tholpin", "craft.demo", "did you mean 'Tholepin'"),
    ("sea.kind", "jonswop", "sea.kind", "did you mean 'jonswap'"),
    ("sea.spreading.kind", "cos2", "sea.spreading.kind", "did you mean 'cos2s'"),
    ("wind.gust_spectrum", "NPD", "wind.gust_spectrum", "must be one of"),
    # distributions: support against the field's bound
    ("sea.hs_m", {"normal": {"mean": 1.5, "sd": 0.2}}, "sea.hs_m", "use truncated_normal"),
    ("sea.hs_m", {"uniform": [0.0, 1.0]}, "sea.hs_m", "support [0.0, 1.0] breaks this bound"),
    ("sea.hs_m", {"truncated_normal": {"mean": 1.0, "sd": 1.0, "low": -0.5, "high": 2.0}}, "sea.hs_m", "breaks"),
    ("sea.hs_m", {"choice": [1.0, -1.0]}, "sea.hs_m", "every choice"),
    ("current.set_deg", {"lognormal": {"median": 90.0, "sigma": 0.1}}, "current.set_deg", "<= 360.0"),
    ("wind.speed_mps", {"normal": {"mean": 8.0, "sd": 2.0}}, "wind.speed_mps", ">= 0.0"),
    ("sea.gamma", {"uniform": [0.5, 3.0]}, "sea.gamma", ">= 1.0"),
    # distributions where none is allowed
    ("campaign.trials", {"uniform": [1.0, 5.0]}, "campaign.trials", "no distribution allowed"),
    ("wind.n_components", {"choice": [100, 200]}, "wind.n_components", "no distribution allowed"),
    ("scenario.duration_s", {"uniform": [10.0, 20.0]}, "scenario.duration_s", "no distribution allowed"),
    ("scenario.origin.lat_deg", {"uniform": [57.0, 58.0]}, "scenario.origin.lat_deg", "finite number"),
    # distribution parameters
    ("sea.hs_m", {"normal": {"mean": 1.5, "sd": 0.0}}, "sea.hs_m.normal.sd", "must be > 0"),
    ("sea.hs_m", {"normal": {"mean": 1.5, "sd": -1.0}}, "sea.hs_m.normal.sd", "must be > 0"),
    ("sea.tp_s", {"uniform": [7.0, 5.0]}, "sea.tp_s.uniform", "low < high"),
    ("sea.tp_s", {"uniform": [5.0, 5.0]}, "sea.tp_s.uniform", "low < high"),
    ("sea.tp_s", {"uniform": [5.0]}, "sea.tp_s.uniform", "[low, high]"),
    ("sea.tp_s", {"unifrom": [5.0, 6.0]}, "sea.tp_s.unifrom", "did you mean 'uniform'"),
    ("sea.hs_m", {"truncated_normal": {"mean": 1.0, "sd": 0.3, "low": 2.0, "high": 1.0}},
     "sea.hs_m.truncated_normal.high", "must be > low"),
    ("sea.hs_m", {"truncated_normal": {"mean": 1.0, "sd": 0.3, "low": 0.5}},
     "sea.hs_m.truncated_normal.high", "required but missing"),
    ("sea.hs_m", {"truncated_normal": {"mean": 1.0, "sdev": 0.3, "low": 0.5, "high": 2.0}},
     "sea.hs_m.truncated_normal.sdev", "did you mean 'sd'"),
    ("sea.hs_m", {"lognormal": {"median": 0.0, "sigma": 0.3}}, "sea.hs_m.lognormal.median", "must be > 0"),
    ("sea.hs_m", {"lognormal": {"median": 1.0, "sigma": 0.0}}, "sea.hs_m.lognormal.sigma", "must be > 0"),
    ("sea.hs_m", {"normal": {"mean": "1", "sd": 0.2}}, "sea.hs_m.normal.mean", "finite number"),
    ("sea.spreading.exponent", {"choice": []}, "sea.spreading.exponent.choice", "at least one value"),
    ("sea.spreading.exponent", {"choice": [4.0, 10.0], "weights": [0.5, 0.6]},
     "sea.spreading.exponent.weights", "must sum to 1"),
    ("sea.spreading.exponent", {"choice": [4.0, 10.0], "weights": [0.5, 0.5 + 1e-8]},
     "sea.spreading.exponent.weights", "must sum to 1"),
    ("sea.spreading.exponent", {"choice": [4.0, 10.0], "weights": [1.0]},
     "sea.spreading.exponent.weights", "one weight per value"),
    ("sea.spreading.exponent", {"choice": [4.0, 10.0], "weights": [1.5, -0.5]},
     "sea.spreading.exponent.weights", ">= 0"),
    ("sea.spreading.exponent", {"choice": [4.0], "weight": [1.0]},
     "sea.spreading.exponent.weight", "did you mean 'weights'"),
    ("sea.spreading.exponent", {"uniform": [1.0, 2.0], "normal": {"mean": 1.0, "sd": 1.0}},
     "sea.spreading.exponent", "exactly one kind"),
]


@pytest.mark.parametrize(("path", "value", "field", "text"), BAD, ids=[f"{b[0]}={b[1]!r}" for b in BAD])
def test_bad_spec_is_rejected_with_its_path(path, value, field, text):
    with pytest.raises(ParameterError) as info:
        load_data(edited(path, value))
    assert info.value.field == field
    assert str(info.value).startswith(f"{field} = ")
    assert text in str(info.value)


def test_gamma_distribution_rejected_for_pierson_moskowitz():
    data = edited("sea.kind", "pierson_moskowitz")
    data = edited("sea.gamma", {"uniform": [1.0, 3.0]}, data)
    with pytest.raises(ParameterError, match=r"^sea\.gamma = .*pierson_moskowitz"):
        load_data(data)


def test_weights_within_tolerance_accepted_and_bounds_that_fit_accepted():
    data = edited("sea.spreading.exponent", {"choice": [4.0, 10.0], "weights": [0.5, 0.5 + 1e-12]})
    data = edited("current.speed_mps", {"uniform": [0.0, 1.0]}, data)  # ge 0 allows a closed end at 0
    data = edited("sea.hs_m", {"lognormal": {"median": 1.0, "sigma": 0.5}}, data)  # (0, inf) fits > 0
    spec = load_data(data)
    assert spec.current.speed_mps == Uniform(0.0, 1.0)


def test_not_toml_and_missing_file_are_parameter_errors(tmp_path):
    with pytest.raises(ParameterError, match="is not valid TOML"):
        load_spec("spec_version = 1\n[sea\n")
    with pytest.raises(ParameterError, match="no such spec file"):
        load_spec(tmp_path / "absent.toml")
    with pytest.raises(ParameterError, match="spec_version = None"):
        spec_from_data({})


# ---------------------------------------------------------------------------
# sampling against scipy.stats
# ---------------------------------------------------------------------------

N_DRAWS = 20_000


@pytest.mark.parametrize(
    ("dist", "reference"),
    [
        # reference distributions from scipy.stats, parameterised independently of our code
        (Uniform(1.0, 2.5), stats.uniform(loc=1.0, scale=1.5)),
        (Normal(1.5, 0.2), stats.norm(loc=1.5, scale=0.2)),
        (TruncatedNormal(1.2, 0.3, 0.5, 2.0), stats.truncnorm((0.5 - 1.2) / 0.3, (2.0 - 1.2) / 0.3, loc=1.2, scale=0.3)),
        (TruncatedNormal(0.0, 1.0, 1.5, 4.0), stats.truncnorm(1.5, 4.0)),  # one-sided tail
        (LogNormal(0.4, 0.25), stats.lognorm(s=0.25, scale=0.4)),
    ],
)
def test_continuous_sampling_matches_scipy_stats(dist, reference):
    x = dist.sample(np.random.default_rng(20240611), N_DRAWS)
    assert x.shape == (N_DRAWS,)
    # scipy.stats.kstest: one-sample Kolmogorov-Smirnov test against the scipy.stats cdf
    assert stats.kstest(x, reference.cdf).pvalue > 1e-3
    low, high = dist.support()
    assert np.all((x >= low) & (x <= high))


@pytest.mark.parametrize(("mean", "sd", "low", "high"), [(1.2, 0.3, 0.5, 2.0), (0.0, 1.0, 1.5, 4.0), (0.0, 1.0, 5.5, 9.0)])
def test_truncated_normal_inverse_transform_equals_scipy_ppf(mean, sd, low, high):
    # the written-out inverse transform (central case) and the far-tail fallback against scipy.stats.truncnorm.ppf
    u = np.random.default_rng(8).random(1000)
    ref = stats.truncnorm((low - mean) / sd, (high - mean) / sd, loc=mean, scale=sd).ppf(u)
    x = TruncatedNormal(mean, sd, low, high).sample(np.random.default_rng(8), 1000)
    np.testing.assert_allclose(x, ref, rtol=1e-9, atol=1e-12)


def test_truncated_normal_mean_matches_closed_form():
    # Johnson, Kotz & Balakrishnan, Continuous Univariate Distributions vol. 1 (2nd ed.), ch. 13:
    # E[X] = mu + sd (phi(a) - phi(b)) / (Phi(b) - Phi(a)), a = (low - mu)/sd, b = (high - mu)/sd
    mu, sd, low, high = 1.2, 0.3, 0.5, 2.0
    a, b = (low - mu) / sd, (high - mu) / sd
    mean = mu + sd * (stats.norm.pdf(a) - stats.norm.pdf(b)) / (stats.norm.cdf(b) - stats.norm.cdf(a))
    x = TruncatedNormal(mu, sd, low, high).sample(np.random.default_rng(3), N_DRAWS)
    # 5 standard errors of the sample mean
    assert abs(x.mean() - mean) < 5 * x.std() / math.sqrt(N_DRAWS)


def test_lognormal_median_parameterisation():
    # lognormal with ln X ~ N(ln m, s^2): median m, mean m exp(s^2/2) (scipy.stats.lognorm(s, scale=m))
    x = LogNormal(2.0, 0.5).sample(np.random.default_rng(5), N_DRAWS)
    ref = stats.lognorm(s=0.5, scale=2.0)
    assert ref.median() == pytest.approx(2.0)
    assert abs(np.median(x) - 2.0) < 0.03
    assert abs(x.mean() - ref.mean()) < 5 * ref.std() / math.sqrt(N_DRAWS)


@pytest.mark.parametrize("weights", [None, (0.2, 0.5, 0.3)])
def test_choice_frequencies_match_weights(weights):
    values = (0.5, 1.0, 2.0)
    x = Choice(values, weights).sample(np.random.default_rng(11), N_DRAWS)
    counts = np.array([(x == v).sum() for v in values])
    assert counts.sum() == N_DRAWS
    p = np.full(3, 1 / 3) if weights is None else np.array(weights)
    # scipy.stats.chisquare: Pearson goodness-of-fit against the stated probabilities
    assert stats.chisquare(counts, N_DRAWS * p).pvalue > 1e-3


# ---------------------------------------------------------------------------
# per-trial draws
# ---------------------------------------------------------------------------


def test_trial_draws_are_bit_identical_alone_or_in_a_batch():
    spec = load_spec(example_spec_path("skerrow_sound"))
    batch = draw_trial_parameters(spec, TrialStreams(seed=spec.campaign.seed, trials=range(12)))
    assert set(batch) == set(distributed_fields(spec))
    for path, values in batch.items():
        assert values.shape == (12,)
        low, high = distributed_fields(spec)[path].support()
        assert np.all((values >= low) & (values <= high))
    for i in (0, 5, 11):
        alone = draw_trial_parameters(spec, TrialStreams(seed=spec.campaign.seed, trials=[i]))
        for path in batch:
            assert alone[path][0] == batch[path][i]
    shuffled = draw_trial_parameters(spec, TrialStreams(seed=spec.campaign.seed, trials=[11, 3, 7]))
    for path in batch:
        np.testing.assert_array_equal(shuffled[path], batch[path][[11, 3, 7]])


def test_each_field_has_its_own_stream():
    base = load_data(BASE)
    more = load_data(edited("wind.speed_mps", {"uniform": [5.0, 10.0]}))
    streams = TrialStreams(seed=3, trials=range(50))
    a, b = draw_trial_parameters(base, streams), draw_trial_parameters(more, streams)
    assert set(b) == set(a) | {"wind.speed_mps"}
    np.testing.assert_array_equal(a["sea.hs_m"], b["sea.hs_m"])
    # two fields with the same distribution still draw different numbers
    same = load_data(edited("sea.tp_s", {"uniform": [1.0, 2.5]}))
    d = draw_trial_parameters(same, streams)
    assert not np.array_equal(d["sea.hs_m"], d["sea.tp_s"])
    # a different seed gives different draws
    other = draw_trial_parameters(base, TrialStreams(seed=4, trials=range(50)))
    assert not np.array_equal(other["sea.hs_m"], a["sea.hs_m"])


def test_fixed_spec_draws_nothing():
    data = edited("sea.hs_m", 1.5)
    data = edited("current.speed_mps", 0.3, data)
    assert draw_trial_parameters(load_data(data), TrialStreams(seed=1, trials=range(3))) == {}
