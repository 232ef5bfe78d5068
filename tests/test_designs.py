"""Sampling designs over a spec's distributed fields: quantile functions, Latin hypercube, scrambled Sobol'.

Sources of the checks:

* quantile functions against scipy.stats (``uniform``, ``norm``, ``truncnorm``,
  ``lognorm``, ``rv_discrete``) and, for a choice, a cumulative table worked
  by hand;
* Latin hypercube stratification: McKay, Beckman & Conover (1979),
  Technometrics 21(2) 239-245 -- each of the n equal-probability bins of
  every input holds exactly one of the n points;
* space filling: the centered L2 discrepancy (Hickernell 1998, as computed by
  ``scipy.stats.qmc.discrepancy``) of a Latin hypercube and of a scrambled
  Sobol' design is lower than that of plain Monte Carlo points;
* marginals: Kolmogorov-Smirnov test (``scipy.stats.kstest``) against each
  field's scipy distribution.
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest
from scipy import special, stats
from scipy.stats import qmc

from wavebench.core.errors import ParameterError
from wavebench.core.streams import TrialStreams
from wavebench.spec import (
    DESIGNS,
    Choice,
    LogNormal,
    Normal,
    TruncatedNormal,
    Uniform,
    distributed_fields,
    draw_trial_parameters,
    dump_spec,
    example_spec_path,
    load_spec,
    spec_hash,
    unit_design,
)
from wavebench.spec.designs import design_seed_sequence

SPACE_FILLING = ("latin_hypercube", "sobol")


def _spec(*settings: str):
    return load_spec(example_spec_path("skerrow_sound"), list(settings))


def _scipy(dist):
    """The same distribution as a frozen scipy.stats object."""
    if isinstance(dist, Uniform):
        return stats.uniform(loc=dist.low, scale=dist.high - dist.low)
    if isinstance(dist, Normal):
        return stats.norm(loc=dist.mean, scale=dist.sd)
    if isinstance(dist, TruncatedNormal):
        a, b = (dist.low - dist.mean) / dist.sd, (dist.high - dist.mean) / dist.sd
        return stats.truncnorm(a, b, loc=dist.mean, scale=dist.sd)
    if isinstance(dist, LogNormal):
        return stats.lognorm(s=dist.sigma, scale=dist.median)
    raise TypeError(dist)


# ---------------------------------------------------------------------------
# quantile functions
# ---------------------------------------------------------------------------

U_GRID = np.concatenate([np.linspace(1e-3, 1.0 - 1e-3, 2001), [1e-9, 0.5, 1.0 - 1e-9]])


@pytest.mark.parametrize(
    ("dist", "ref"),
    [
        (Uniform(0.5, 2.5), stats.uniform(loc=0.5, scale=2.0)),
        (Uniform(-30.0, 10.0), stats.uniform(loc=-30.0, scale=40.0)),
        (Normal(1.5, 0.2), stats.norm(loc=1.5, scale=0.2)),
        (Normal(-20.0, 5.0), stats.norm(loc=-20.0, scale=5.0)),
        (LogNormal(0.4, 0.25), stats.lognorm(s=0.25, scale=0.4)),
        (LogNormal(3.0, 1.2), stats.lognorm(s=1.2, scale=3.0)),
    ],
)
def test_ppf_matches_scipy(dist, ref):
    # scipy.stats uniform.ppf / norm.ppf / lognorm.ppf
    x = dist.ppf(U_GRID)
    expected = ref.ppf(U_GRID)
    scale = ref.std()
    np.testing.assert_allclose(x, expected, rtol=1e-12, atol=1e-12 * scale)


@pytest.mark.parametrize(
    ("mean", "sd", "low", "high"),
    [
        (1.2, 0.3, 0.5, 2.0),  # both limits inside 5 sd: written-out inverse
        (225.0, 15.0, 180.0, 270.0),
        (0.0, 1.0, -1.0, 4.9),  # upper limit near 5 sd
        (0.15, 0.05, 0.0, 0.3),
        (2.0, 0.5, 2.5, 4.0),  # window wholly above the mean
        (0.0, 1.0, 6.0, 8.0),  # far tail: scipy's truncnorm is used
        (-3.0, 2.0, -20.0, -2.0),  # lower limit beyond 5 sd
    ],
)
def test_truncated_normal_ppf_matches_scipy(mean, sd, low, high):
    # scipy.stats.truncnorm.ppf, on u in [1e-3, 1 - 1e-3]
    dist = TruncatedNormal(mean, sd, low, high)
    u = U_GRID[:2001]
    x = dist.ppf(u)
    a, b = (low - mean) / sd, (high - mean) / sd
    np.testing.assert_allclose(x, stats.truncnorm(a, b, loc=mean, scale=sd).ppf(u), rtol=1e-12, atol=1e-12 * sd)
    assert np.all((x >= low) & (x <= high))


def test_truncated_normal_ppf_inverts_the_cdf_near_the_upper_limit():
    # truncated-normal survival function (Phi(-z) - Phi(-b)) / (Phi(-a) - Phi(-b)), written from the
    # textbook CDF F = (Phi(z) - Phi(a)) / (Phi(b) - Phi(a)) (scipy.stats.truncnorm documentation); with
    # Phi(-.) it keeps full relative precision where 1 - u is small
    a, b = -1.0, 4.9
    dist = TruncatedNormal(0.0, 1.0, a, b)
    one_minus_u = np.array([1e-9, 1e-7, 1e-5])
    z = dist.ppf(1.0 - one_minus_u)
    sf = (special.ndtr(-z) - special.ndtr(-b)) / (special.ndtr(-a) - special.ndtr(-b))
    np.testing.assert_allclose(sf, one_minus_u, rtol=1e-6)


def test_choice_ppf_hand_table():
    # values (3, 1, 2) with weights (0.25, 0.25, 0.5): sorted 1, 2, 3 with weights 0.25, 0.5, 0.25,
    # cumulative F = 0.25, 0.75, 1.0 (worked by hand); quantile = min{x : F(x) >= u}
    dist = Choice((3.0, 1.0, 2.0), (0.25, 0.25, 0.5))
    u = np.array([1e-9, 0.1, 0.25, 0.2500001, 0.5, 0.75, 0.7500001, 0.99, 1.0])
    expected = np.array([1.0, 1.0, 1.0, 2.0, 2.0, 2.0, 3.0, 3.0, 3.0])
    np.testing.assert_array_equal(dist.ppf(u), expected)


def test_choice_ppf_equal_weights_and_zero_weight():
    # four equal weights: F = 0.25, 0.5, 0.75, 1.0 (by hand)
    eq = Choice((40.0, 10.0, 30.0, 20.0))
    np.testing.assert_array_equal(eq.ppf([0.1, 0.3, 0.6, 0.9]), [10.0, 20.0, 30.0, 40.0])
    # a value of weight 0 is never given: F = 0.5, 0.5, 1.0 (by hand)
    zero = Choice((1.0, 2.0, 3.0), (0.5, 0.0, 0.5))
    np.testing.assert_array_equal(zero.ppf([0.4999, 0.5, 0.5001, 0.99]), [1.0, 1.0, 3.0, 3.0])


def test_choice_ppf_matches_scipy_rv_discrete():
    # scipy.stats.rv_discrete(values=(xk, pk)).ppf
    dist = Choice((4.0, 10.0, 20.0, 7.0), (0.1, 0.4, 0.3, 0.2))
    ref = stats.rv_discrete(values=([4.0, 7.0, 10.0, 20.0], [0.1, 0.2, 0.4, 0.3]))
    u = np.linspace(0.005, 0.995, 199)
    np.testing.assert_array_equal(dist.ppf(u), ref.ppf(u))


@pytest.mark.parametrize(
    "dist", [Uniform(0.0, 1.0), Normal(0.0, 1.0), TruncatedNormal(0.0, 1.0, -1.0, 1.0), LogNormal(1.0, 0.5),
             Choice((1.0, 2.0))],
)  # fmt: skip
def test_ppf_keeps_shape_and_refuses_probabilities_outside_0_1(dist):
    assert dist.ppf(np.full((3, 2), 0.5)).shape == (3, 2)
    for bad in (-0.1, 1.5, np.nan):
        with pytest.raises(ParameterError, match=r"u = .* must lie in \[0, 1\]"):
            dist.ppf([0.5, bad])


# ---------------------------------------------------------------------------
# the spec field
# ---------------------------------------------------------------------------


def test_design_field_default_choices_and_typo():
    spec = _spec()
    assert spec.campaign.design == "monte_carlo"
    assert DESIGNS == ("monte_carlo", "latin_hypercube", "sobol")
    with pytest.raises(ParameterError, match=r"campaign\.design = 'sobel'.*did you mean 'sobol'"):
        _spec("campaign.design=sobel")


@pytest.mark.parametrize("design", DESIGNS)
def test_design_round_trip_and_hash(design):
    spec = _spec(f"campaign.design={design}")
    text = dump_spec(spec)
    assert f'design = "{design}"' in text
    again = load_spec(text)
    assert again == spec and spec_hash(again) == spec_hash(spec)
    hashes = {d: spec_hash(_spec(f"campaign.design={d}")) for d in DESIGNS}
    assert len(set(hashes.values())) == len(DESIGNS)
    # the default written out or left out: same spec, same hash
    assert spec_hash(_spec("campaign.design=monte_carlo")) == spec_hash(_spec())


# ---------------------------------------------------------------------------
# the default is plain Monte Carlo, bit for bit
# ---------------------------------------------------------------------------


def _per_trial_sample(dist, rng: np.random.Generator) -> float:
    """One plain Monte Carlo draw, written out with numpy primitives as the sampler has always drawn it."""
    if isinstance(dist, Uniform):
        return rng.uniform(dist.low, dist.high, 1)[0]
    if isinstance(dist, Normal):
        return rng.normal(dist.mean, dist.sd, 1)[0]
    if isinstance(dist, TruncatedNormal):
        u = rng.random(1)
        a, b = (dist.low - dist.mean) / dist.sd, (dist.high - dist.mean) / dist.sd
        assert -5.0 <= a and b <= 5.0  # the skerrow_sound fields are within five sd
        pa, pb = special.ndtr(a), special.ndtr(b)
        return np.clip(dist.mean + dist.sd * special.ndtri(pa + u * (pb - pa)), dist.low, dist.high)[0]
    if isinstance(dist, LogNormal):
        return dist.median * np.exp(dist.sigma * rng.standard_normal(1))[0]
    return rng.choice(np.asarray(dist.values, dtype=float), size=1, p=dist.weights)[0]


def test_default_design_keeps_the_per_trial_draws():
    spec = _spec()
    seed, n = spec.campaign.seed, 40
    draws = draw_trial_parameters(spec, TrialStreams(seed, range(n)))
    fields = distributed_fields(spec)
    assert list(draws) == list(fields) and len(fields) == 9
    for path, dist in fields.items():
        # each trial alone, from its own "spec.<path>" stream
        expected = [_per_trial_sample(dist, TrialStreams(seed, [i]).generators(f"spec.{path}")[0]) for i in range(n)]
        np.testing.assert_array_equal(draws[path], np.asarray(expected), err_msg=path)


# ---------------------------------------------------------------------------
# Latin hypercube stratification (McKay, Beckman & Conover 1979)
# ---------------------------------------------------------------------------


@pytest.mark.parametrize("seed", [0, 1, 20240611])
def test_latin_hypercube_one_point_per_bin_in_the_unit_cube(seed):
    n, d = 50, 6
    u = unit_design("latin_hypercube", n, d, seed)
    assert u.shape == (n, d) and np.all((u > 0.0) & (u < 1.0))
    for j in range(d):
        np.testing.assert_array_equal(np.sort(np.floor(u[:, j] * n).astype(int)), np.arange(n))


def test_latin_hypercube_one_point_per_bin_after_the_quantile_function():
    n = 50
    spec = _spec("campaign.design=latin_hypercube", f"campaign.trials={n}")
    draws = draw_trial_parameters(spec, TrialStreams(spec.campaign.seed, range(n)))
    for path, dist in distributed_fields(spec).items():
        if isinstance(dist, Choice):
            # a stratified uniform gives each of the k equally likely values n/k points, within one
            counts = np.array([np.sum(draws[path] == v) for v in dist.values])
            assert counts.sum() == n and np.all(np.abs(counts - n / len(dist.values)) <= 1.0), (path, counts)
            continue
        # scipy's CDF takes every value back to its own equal-probability bin
        bins = np.floor(_scipy(dist).cdf(draws[path]) * n).astype(int)
        np.testing.assert_array_equal(np.sort(bins), np.arange(n), err_msg=path)


def test_sobol_power_of_two_is_stratified_in_every_dimension():
    # a scrambled Sobol' (t, m, s)-net in base 2 has t = 0 in each one-dimensional projection
    # (Sobol' 1967; Owen 1998 for scrambling): one point per interval [k/n, (k+1)/n) when n = 2**m
    n, d = 64, 9
    u = unit_design("sobol", n, d, seed=5)
    for j in range(d):
        np.testing.assert_array_equal(np.sort(np.floor(u[:, j] * n).astype(int)), np.arange(n))


# ---------------------------------------------------------------------------
# space filling: centered L2 discrepancy
# ---------------------------------------------------------------------------

CONTINUOUS = ("sea.spreading.exponent=10.0",)  # drop the one choice field: a discrete field has no CDF inverse


def _to_unit_cube(spec, draws):
    return np.column_stack([_scipy(dist).cdf(draws[path]) for path, dist in distributed_fields(spec).items()])


def test_designs_have_lower_centered_discrepancy_than_monte_carlo():
    # centered L2 discrepancy (Hickernell 1998) by scipy.stats.qmc.discrepancy(method="CD"); every
    # design mapped back to the unit cube by scipy's CDF of its field; fixed seeds 1..5
    n = 128
    table = []
    for seed in range(1, 6):
        cd = {}
        for design in DESIGNS:
            spec = _spec(*CONTINUOUS, f"campaign.design={design}", f"campaign.trials={n}", f"campaign.seed={seed}")
            draws = draw_trial_parameters(spec, TrialStreams(seed, range(n)))
            cd[design] = qmc.discrepancy(_to_unit_cube(spec, draws), method="CD")
        table.append(cd)
    for cd in table:
        assert cd["sobol"] < cd["monte_carlo"] and cd["latin_hypercube"] < cd["monte_carlo"], table
    mean = {d: np.mean([cd[d] for cd in table]) for d in DESIGNS}
    assert mean["sobol"] < mean["latin_hypercube"] < mean["monte_carlo"], mean


# ---------------------------------------------------------------------------
# marginals still follow the distributions
# ---------------------------------------------------------------------------


@pytest.mark.parametrize("design", SPACE_FILLING)
def test_marginals_follow_their_distributions(design):
    # Kolmogorov-Smirnov against each field's scipy distribution, fixed seed (the spec's), n = 256;
    # a stratified sample puts one point in each [k/n, (k+1)/n) of probability, so D <= 1/n
    n = 256
    spec = _spec(f"campaign.design={design}", f"campaign.trials={n}")
    draws = draw_trial_parameters(spec, TrialStreams(spec.campaign.seed, range(n)))
    for path, dist in distributed_fields(spec).items():
        if isinstance(dist, Choice):
            counts = np.array([np.sum(draws[path] == v) for v in dist.values])
            assert np.all(np.abs(counts - n / len(dist.values)) <= 1.0), (path, counts)
            continue
        res = stats.kstest(draws[path], _scipy(dist).cdf)
        assert res.pvalue > 0.05, (path, res)
        assert res.statistic <= 1.0 / n + 1e-12, (path, res)


# ---------------------------------------------------------------------------
# batches, limits, seeds
# ---------------------------------------------------------------------------


@pytest.mark.parametrize("design", SPACE_FILLING)
def test_same_bits_for_any_batch_size(design):
    n = 23  # not a power of two: the Sobol' design takes the first 23 points, without a warning
    spec = _spec(f"campaign.design={design}", f"campaign.trials={n}")
    seed = spec.campaign.seed
    whole = draw_trial_parameters(spec, TrialStreams(seed, range(n)))
    for size in (1, 7, n):
        parts = [draw_trial_parameters(spec, TrialStreams(seed, range(s, min(s + size, n)))) for s in range(0, n, size)]
        for path in whole:
            np.testing.assert_array_equal(np.concatenate([p[path] for p in parts]), whole[path], err_msg=path)
    backwards = draw_trial_parameters(spec, TrialStreams(seed, range(n - 1, -1, -1)))
    for path in whole:
        np.testing.assert_array_equal(backwards[path][::-1], whole[path])


@pytest.mark.parametrize("design", SPACE_FILLING)
def test_trial_beyond_the_design_is_refused(design):
    spec = _spec(f"campaign.design={design}", "campaign.trials=10")
    with pytest.raises(ParameterError, match=rf"trials = 10 .*must be < campaign\.trials = 10 under design '{design}'"):
        draw_trial_parameters(spec, TrialStreams(spec.campaign.seed, [3, 10]))
    # a larger planned count is a larger design
    out = draw_trial_parameters(spec, TrialStreams(spec.campaign.seed, [10]), planned_trials=11)
    assert out["sea.hs_m"].shape == (1,)
    with pytest.raises(ParameterError, match="planned_trials"):
        draw_trial_parameters(spec, TrialStreams(spec.campaign.seed, [0]), planned_trials=0)
    # plain Monte Carlo has no design size
    mc = dataclasses.replace(spec, campaign=dataclasses.replace(spec.campaign, design="monte_carlo"))
    assert draw_trial_parameters(mc, TrialStreams(spec.campaign.seed, [10]))["sea.hs_m"].shape == (1,)


def test_design_depends_on_seed_n_and_d_only():
    a = unit_design("sobol", 16, 3, seed=1)
    assert np.array_equal(a, unit_design("sobol", 16, 3, seed=1))
    assert not np.array_equal(a, unit_design("sobol", 16, 3, seed=2))
    assert not np.array_equal(unit_design("latin_hypercube", 16, 3, seed=1), unit_design("latin_hypercube", 16, 3, 2))
    # a scrambled Sobol' sequence is drawn point by point: the first k points do not depend on n
    np.testing.assert_array_equal(unit_design("sobol", 37, 3, seed=1), unit_design("sobol", 100, 3, seed=1)[:37])
    # the design's seed sequence is a one-word child; the trial streams use (trial, purpose) keys
    assert len(design_seed_sequence(1).spawn_key) == 1
    assert len(TrialStreams(1, [0]).sequence(0, "spec.sea.hs_m").spawn_key) == 2
    with pytest.raises(ParameterError, match="design"):
        unit_design("monte_carlo", 4, 2, seed=0)
    with pytest.raises(ParameterError, match="n = 0"):
        unit_design("sobol", 0, 2, seed=0)


def test_no_distributed_field_gives_no_draws():
    spec = _spec("campaign.design=latin_hypercube")
    fixed = dataclasses.replace(
        spec,
        sea=None, current=None, wind=None,
        mission=dataclasses.replace(spec.mission, start_north_m=0.0, start_east_m=0.0),
    )  # fmt: skip
    assert distributed_fields(fixed) == {}
    assert draw_trial_parameters(fixed, TrialStreams(1, range(3))) == {}
