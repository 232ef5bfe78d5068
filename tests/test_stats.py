"""Tests of wavebench.analysis.stats and wavebench.analysis.verdicts.

Checked against scipy.stats (binomtest(...).proportion_ci with the "exact"
Clopper-Pearson and "wilson" methods, and bootstrap(method="percentile")),
the closed forms of the Clopper & Pearson (1934) interval at k = 0 and k = n,
Wilson's (1927) defining score equation, the exact coverage property of the
Clopper-Pearson interval, and Efron's (1979) exact bootstrap distribution of a
sample order statistic, with the exact distribution of the order statistics of
the bootstrap replicates (David & Nagaraja) as the Monte Carlo tolerance.
"""

from __future__ import annotations

import dataclasses
import json
import math

import numpy as np
import pytest
from scipy import stats

from wavebench.analysis import stats as wstats
from wavebench.analysis.stats import bootstrap_quantile, clopper_pearson, min_trials_to_pass, wilson
from wavebench.analysis.verdicts import Verdict, evaluate_requirement, verdicts_table_text
from wavebench.core.errors import ParameterError

# scipy's exact interval finds its bounds with brentq (xtol 2e-12); ours uses beta.ppf.
CP_ATOL = 1e-10

GRID = [
    (n, k) for n in (1, 2, 3, 7, 20, 57, 200, 1000) for k in sorted({0, 1, n // 3, n // 2, n - 1, n}) if 0 <= k <= n
]


# ---------------------------------------------------------------- Clopper-Pearson


@pytest.mark.parametrize("confidence", [0.8, 0.9, 0.95, 0.99])
def test_clopper_pearson_matches_scipy_binomtest(confidence):
    # Reference: scipy.stats.binomtest(k, n).proportion_ci(method="exact") (Clopper & Pearson 1934).
    for n, k in GRID:
        ref = stats.binomtest(k, n).proportion_ci(confidence_level=confidence, method="exact")
        low, high = clopper_pearson(k, n, confidence)
        assert isinstance(low, float) and isinstance(high, float)
        assert low == pytest.approx(ref.low, abs=CP_ATOL), (n, k)
        assert high == pytest.approx(ref.high, abs=CP_ATOL), (n, k)


def test_clopper_pearson_vectorised_equals_scalar_calls():
    # Reference: scipy.stats.binomtest exact interval, element by element.
    ns = np.array([n for n, _ in GRID])
    ks = np.array([k for _, k in GRID])
    low, high = clopper_pearson(ks, ns, 0.95)
    assert low.shape == high.shape == ks.shape
    ref = [stats.binomtest(int(k), int(n)).proportion_ci(0.95, method="exact") for k, n in zip(ks, ns, strict=True)]
    np.testing.assert_allclose(low, [r.low for r in ref], rtol=0, atol=CP_ATOL)
    np.testing.assert_allclose(high, [r.high for r in ref], rtol=0, atol=CP_ATOL)
    # Broadcasting a column of k against a row of n (k <= n everywhere).
    low2, _ = clopper_pearson(np.array([[0], [1]]), np.array([5, 10, 50]))
    assert low2.shape == (2, 3)


@pytest.mark.parametrize("n", [1, 10, 50, 300])
def test_clopper_pearson_edge_closed_forms(n):
    # Clopper & Pearson (1934): at k = n the lower bound is (alpha/2)^(1/n) and the upper is 1;
    # at k = 0 the upper bound is 1 - (alpha/2)^(1/n) (the zero-failure bound at level alpha/2).
    alpha = 0.05
    low, high = clopper_pearson(n, n, 0.95)
    assert low == pytest.approx((alpha / 2) ** (1 / n), rel=1e-12)
    assert high == 1.0
    low, high = clopper_pearson(0, n, 0.95)
    assert low == 0.0
    assert high == pytest.approx(1 - (alpha / 2) ** (1 / n), rel=1e-12)


@pytest.mark.parametrize("n", [20, 50])
def test_clopper_pearson_exact_coverage_at_least_nominal(n):
    # Clopper & Pearson (1934); Brown, Cai & DasGupta (2001), Statistical Science 16(2):
    # the exact interval's coverage sum_k Binom(k; n, p) [low_k <= p <= high_k] is >= the
    # nominal level for every p. Computed exactly (no sampling) over a fine grid of p.
    k = np.arange(n + 1)
    low, high = clopper_pearson(k, n, 0.95)
    p = np.linspace(0.0005, 0.9995, 1999)
    covered = (low[None, :] <= p[:, None]) & (p[:, None] <= high[None, :])
    coverage = (stats.binom.pmf(k[None, :], n, p[:, None]) * covered).sum(axis=1)
    assert coverage.min() >= 0.95 - 1e-9


@pytest.mark.parametrize(
    ("k", "n", "confidence", "field"),
    [
        (-1, 10, 0.95, "k"),
        (11, 10, 0.95, "k"),
        (2.5, 10, 0.95, "k"),
        (np.nan, 10, 0.95, "k"),
        ("3", 10, 0.95, "k"),
        (0, 0, 0.95, "n"),
        (1, 7.5, 0.95, "n"),
        (1, 10, 1.0, "confidence"),
        (1, 10, 0.0, "confidence"),
        (1, 10, 95, "confidence"),
        (1, 10, True, "confidence"),
    ],
)
def test_interval_bad_input_names_the_field(k, n, confidence, field):
    for fn in (clopper_pearson, wilson):
        with pytest.raises(ParameterError, match=rf"^{field} = ") as info:
            fn(k, n, confidence)
        assert info.value.field == field


# ------------------------------------------------------------------------ Wilson


@pytest.mark.parametrize("confidence", [0.9, 0.95, 0.99])
def test_wilson_matches_scipy_binomtest(confidence):
    # Reference: scipy.stats.binomtest(k, n).proportion_ci(method="wilson"); scipy documents
    # "wilson" as Wilson's method without continuity correction ("wilsoncc" has it).
    for n, k in GRID:
        ref = stats.binomtest(k, n).proportion_ci(confidence_level=confidence, method="wilson")
        low, high = wilson(k, n, confidence)
        assert low == pytest.approx(ref.low, abs=1e-12), (n, k)
        assert high == pytest.approx(ref.high, abs=1e-12), (n, k)


def test_wilson_bounds_solve_the_score_equation():
    # Wilson (1927): the bounds are the two roots p of (p_hat - p)^2 = z^2 p (1 - p) / n.
    z = stats.norm.ppf(0.975)
    for n, k in GRID:
        p_hat = k / n
        for bound in wilson(k, n, 0.95):
            assert (p_hat - bound) ** 2 == pytest.approx(z**2 * bound * (1 - bound) / n, abs=1e-12), (n, k)


def test_wilson_is_not_the_continuity_corrected_interval():
    # Guard that the scipy reference above is the uncorrected one: scipy's "wilsoncc" differs.
    low, high = wilson(7, 20, 0.95)
    ref_cc = stats.binomtest(7, 20).proportion_ci(0.95, method="wilsoncc")
    assert abs(low - ref_cc.low) > 1e-3 and abs(high - ref_cc.high) > 1e-3


# ------------------------------------------------------------ min_trials_to_pass


@pytest.mark.parametrize("probability", [0.5, 0.8, 0.9, 0.95, 0.99, 0.999])
@pytest.mark.parametrize("confidence", [0.9, 0.95])
def test_min_trials_to_pass_against_scipy_exact_interval(probability, confidence):
    # Reference: scipy.stats.binomtest(n, n).proportion_ci(method="exact"): n all-met trials
    # reach the required probability with their lower bound, n - 1 do not.
    n = min_trials_to_pass(probability, confidence)
    assert n == math.ceil(math.log((1 - confidence) / 2) / math.log(probability))
    assert stats.binomtest(n, n).proportion_ci(confidence, method="exact").low >= probability - CP_ATOL
    if n > 1:
        assert stats.binomtest(n - 1, n - 1).proportion_ci(confidence, method="exact").low < probability


def test_min_trials_to_pass_bad_input():
    with pytest.raises(ParameterError, match=r"^probability = "):
        min_trials_to_pass(1.0)
    with pytest.raises(ParameterError, match=r"^confidence = "):
        min_trials_to_pass(0.9, confidence=1.2)


# ---------------------------------------------------------------------- bootstrap


def _exact_bootstrap_cdf(sorted_x: np.ndarray, h: int) -> np.ndarray:
    """CDF of the bootstrap distribution of the (h+1)-th smallest of n resampled values.

    Efron (1979), Ann. Statist. 7(1), derives the bootstrap distribution of the sample
    median this way: with distinct data x_(1) < ... < x_(n), the resampled order statistic
    T* <= x_(i) iff at least h + 1 of the n draws are <= x_(i), and that count is
    Binomial(n, i/n). So F(x_(i)) = P(Binom(n, i/n) >= h + 1).
    """
    n = sorted_x.size
    return stats.binom.sf(h, n, np.arange(1, n + 1) / n)


def _percentile_band(
    sorted_x: np.ndarray, cdf: np.ndarray, u: float, n_resamples: int, delta: float
) -> tuple[float, float]:
    """Range in which the level-u percentile of B bootstrap replicates lies, except with probability delta.

    numpy's linear percentile of B replicates at level u lies between their order statistics
    R_(j+1) and R_(j'+1), j = floor((B-1)u), j' = ceil((B-1)u). For B independent replicates
    with CDF F, P(R_(r) <= x) = P(Binom(B, F(x)) >= r) (distribution of the r-th order
    statistic, e.g. David & Nagaraja, Order Statistics, 3rd ed. 2003). The band runs from
    the largest value below which R_(j+1) falls with probability < delta/4 to the smallest
    value above which R_(j'+1) falls with probability <= delta/4.
    """
    pos = (n_resamples - 1) * u
    cdf_lo = stats.binom.sf(math.floor(pos), n_resamples, cdf)  # P(R_(j+1) <= x_(i))
    cdf_hi = stats.binom.sf(math.ceil(pos), n_resamples, cdf)  # P(R_(j'+1) <= x_(i))
    lower = sorted_x[np.argmax(cdf_lo >= delta / 4)]
    upper = sorted_x[np.argmax(cdf_hi >= 1 - delta / 4)]
    return float(lower), float(upper)


# Sample data: draws from a fixed-seed generator (not check values; the checks are the exact
# bootstrap distribution of these data). n and q are chosen so that (n - 1) q is a whole number:
# numpy's linear quantile is then exactly one order statistic.
CASES = [(101, 0.5, 0.95), (201, 0.9, 0.95), (201, 0.9, 0.5), (301, 0.1, 0.9)]
B_BIG = 20_000
DELTA = 1e-6  # probability that a correct implementation falls outside the band for a random seed


@pytest.mark.parametrize(("n", "q", "confidence"), CASES)
def test_bootstrap_quantile_against_exact_bootstrap_and_scipy(n, q, confidence):
    x = np.random.default_rng(7).lognormal(0.0, 0.5, n)
    sx = np.sort(x)
    h = round((n - 1) * q)
    assert np.unique(x).size == n and np.quantile(x, q) == sx[h]  # premises of the exact distribution below
    cdf = _exact_bootstrap_cdf(sx, h)

    est, low, high = bootstrap_quantile(x, q, confidence=confidence, n_resamples=B_BIG, rng=np.random.default_rng(11))
    assert est == np.quantile(x, q)  # estimate is numpy's default (linear) quantile

    # scipy.stats.bootstrap, percentile method, same statistic, its own resampling draws.
    ref = stats.bootstrap(
        (x,),
        lambda s, axis: np.quantile(s, q, axis=axis),
        vectorized=True,
        n_resamples=B_BIG,
        confidence_level=confidence,
        method="percentile",
        rng=np.random.default_rng(12),
    ).confidence_interval

    alpha = 1 - confidence
    band_low = _percentile_band(sx, cdf, alpha / 2, B_BIG, DELTA)
    band_high = _percentile_band(sx, cdf, 1 - alpha / 2, B_BIG, DELTA)
    for ours, theirs, band in ((low, ref.low, band_low), (high, ref.high, band_high)):
        assert band[0] <= ours <= band[1]
        assert band[0] <= theirs <= band[1]
        # Both inside the same band, so they differ by at most its width.
        assert abs(ours - theirs) <= band[1] - band[0]
    assert low <= est <= high


def test_bootstrap_quantile_chunked_draws(monkeypatch):
    # Force many small chunks of resample indices; the interval must still follow the exact
    # bootstrap distribution (Efron 1979) within the same Monte Carlo band.
    monkeypatch.setattr(wstats, "_CHUNK_ELEMENTS", 1000)
    n, q = 201, 0.9
    x = np.random.default_rng(3).normal(10.0, 2.0, n)
    sx = np.sort(x)
    cdf = _exact_bootstrap_cdf(sx, round((n - 1) * q))
    b = 5000
    _, low, high = bootstrap_quantile(x, q, n_resamples=b, rng=np.random.default_rng(5))
    lo_band = _percentile_band(sx, cdf, 0.025, b, DELTA)
    hi_band = _percentile_band(sx, cdf, 0.975, b, DELTA)
    assert lo_band[0] <= low <= lo_band[1]
    assert hi_band[0] <= high <= hi_band[1]


def test_bootstrap_quantile_deterministic_and_uses_only_its_rng():
    x = np.random.default_rng(1).normal(size=500)
    before = np.random.get_state()[1].copy()  # noqa: NPY002 (inspects the legacy global RNG on purpose)
    a = bootstrap_quantile(x, 0.95, rng=np.random.default_rng(42))
    b = bootstrap_quantile(x, 0.95, rng=np.random.default_rng(42))
    assert a == b
    np.testing.assert_array_equal(np.random.get_state()[1], before)  # noqa: NPY002 (global RNG untouched)
    rng = np.random.default_rng(42)
    bootstrap_quantile(x, 0.95, n_resamples=10, rng=rng)
    assert rng.bit_generator.state != np.random.default_rng(42).bit_generator.state  # draws from rng


@pytest.mark.parametrize(
    ("kwargs", "field"),
    [
        ({"values": [1.0, np.nan, 2.0]}, "values"),
        ({"values": [1.0, np.inf, 2.0]}, "values"),
        ({"values": [1.0]}, "values"),
        ({"values": [[1.0, 2.0], [3.0, 4.0]]}, "values"),
        ({"values": ["a", "b"]}, "values"),
        ({"q": 1.5}, "q"),
        ({"q": -0.1}, "q"),
        ({"confidence": 1.0}, "confidence"),
        ({"n_resamples": 0}, "n_resamples"),
        ({"n_resamples": 100.0}, "n_resamples"),
        ({"rng": 42}, "rng"),
    ],
)
def test_bootstrap_quantile_bad_input_names_the_field(kwargs, field):
    args = {"values": [1.0, 2.0, 3.0], "q": 0.5, "rng": np.random.default_rng(0)} | kwargs
    with pytest.raises(ParameterError, match=rf"^{field} = "):
        bootstrap_quantile(args.pop("values"), args.pop("q"), **args)


# ----------------------------------------------------------------------- verdicts

CONTRACT_KEYS = [
    "name",
    "metric",
    "comparator",
    "threshold",
    "probability",
    "confidence",
    "n_trials",
    "n_met",
    "n_failed",
    "p_hat",
    "p_low",
    "p_high",
    "verdict",
    "quantile_level",
    "quantile_value",
    "quantile_low",
    "quantile_high",
    "unit",
]


def _evaluate(values, **kwargs):
    args = {
        "metric": "xte_p95_m",
        "comparator": "below",
        "threshold": 2.0,
        "probability": 0.9,
        "unit": "m",
        "rng": np.random.default_rng(0),
        "n_resamples": 200,
    } | kwargs
    return evaluate_requirement("xte within 2 m", values, **args)


def test_all_50_met_passes_by_the_closed_form():
    # Clopper & Pearson (1934), k = n: p_low = (alpha/2)^(1/n) = 0.025^(1/50) = 0.9289 >= 0.9 -> pass.
    v = _evaluate(np.linspace(0.2, 1.9, 50))
    assert (v.n_trials, v.n_met, v.n_failed) == (50, 50, 0)
    assert v.p_hat == 1.0 and v.p_high == 1.0
    assert v.p_low == pytest.approx(0.025 ** (1 / 50), rel=1e-12)
    assert v.verdict == "pass"


def test_all_30_met_is_undecided_by_the_closed_form():
    # 0.025^(1/30) = 0.8843 < 0.9 <= p_high = 1: not enough trials to pass (min_trials_to_pass(0.9) = 36).
    v = _evaluate(np.full(30, 1.0))
    assert v.p_low == pytest.approx(0.025 ** (1 / 30), rel=1e-12)
    assert v.p_low < 0.9
    assert v.verdict == "undecided"


def test_none_of_20_met_fails_by_the_closed_form():
    # k = 0: p_high = 1 - 0.025^(1/20) = 0.168 < 0.9 -> fail.
    v = _evaluate(np.full(20, 5.0))
    assert v.n_met == 0 and v.p_low == 0.0
    assert v.p_high == pytest.approx(1 - 0.025 ** (1 / 20), rel=1e-12)
    assert v.verdict == "fail"


def test_failed_trials_count_as_not_met():
    # 48 good values below the threshold and 2 NaN (failed): k = 48 of n = 50.
    values = np.concatenate([np.linspace(0.5, 1.5, 48), [np.nan, np.nan]])
    v = _evaluate(values)
    ref = stats.binomtest(48, 50).proportion_ci(0.95, method="exact")  # scipy reference
    assert (v.n_trials, v.n_met, v.n_failed) == (50, 48, 2)
    assert v.p_hat == 48 / 50
    assert v.p_low == pytest.approx(ref.low, abs=CP_ATOL)
    assert v.p_high == pytest.approx(ref.high, abs=CP_ATOL)
    # The quantile is over the 48 trials with a value.
    assert v.quantile_value == np.quantile(values[:48], 0.9)


def test_verdict_rule_over_every_count():
    # For n = 40 and every k, the verdict follows the scipy exact interval:
    # pass iff low >= p_req, fail iff high < p_req (scipy.stats.binomtest reference).
    n, p_req = 40, 0.8
    seen = set()
    for k in range(n + 1):
        values = np.where(np.arange(n) < k, 1.0, 3.0)
        v = _evaluate(values, probability=p_req, n_resamples=20)
        ref = stats.binomtest(k, n).proportion_ci(0.95, method="exact")
        expected = "pass" if ref.low >= p_req else ("fail" if ref.high < p_req else "undecided")
        assert v.verdict == expected, k
        seen.add(v.verdict)
    assert seen == {"pass", "fail", "undecided"}


def test_comparators_strict_and_quantile_level():
    values = np.array([0.5, 1.0, 1.0, 2.0, 3.0])
    below = _evaluate(values, threshold=1.0, probability=0.8)
    above = _evaluate(values, threshold=1.0, probability=0.8, comparator="above")
    assert below.n_met == 1  # 0.5 only: equality does not meet "below"
    assert above.n_met == 2  # 2.0 and 3.0: equality does not meet "above"
    assert below.quantile_level == 0.8
    assert above.quantile_level == 1 - 0.8
    assert above.quantile_value == np.quantile(values, 1 - 0.8)
    assert above.quantile_low <= above.quantile_value <= above.quantile_high


def test_quantile_is_nan_with_fewer_than_two_values():
    v = _evaluate(np.array([1.0, np.nan, np.nan]))
    assert (v.n_met, v.n_failed) == (1, 2)
    assert math.isnan(v.quantile_value) and math.isnan(v.quantile_low) and math.isnan(v.quantile_high)
    d = v.to_dict()
    assert d["quantile_value"] is None and d["quantile_low"] is None and d["quantile_high"] is None
    back = Verdict.from_dict(json.loads(json.dumps(d, allow_nan=False)))
    assert math.isnan(back.quantile_value)
    assert back.to_dict() == d


def test_to_dict_round_trip_through_strict_json():
    v = _evaluate(np.concatenate([np.linspace(0.1, 2.5, 97), [np.nan] * 3]))
    d = v.to_dict()
    assert list(d) == CONTRACT_KEYS  # the store contract's verdicts.json fields, in order
    text = json.dumps(d, allow_nan=False)
    for key, value in json.loads(text).items():
        assert type(value) in (str, int, float), key
    assert Verdict.from_dict(json.loads(text)) == v


def test_from_dict_errors_name_the_field():
    d = _evaluate(np.full(10, 1.0)).to_dict()
    with pytest.raises(ParameterError, match=r"^p_low = None is not allowed: a value is required"):
        Verdict.from_dict({k: val for k, val in d.items() if k != "p_low"})
    with pytest.raises(ParameterError, match=r"^colour = "):
        Verdict.from_dict(d | {"colour": "red"})
    with pytest.raises(ParameterError, match=r"^n_met = "):
        Verdict.from_dict(d | {"n_met": 2.5})
    with pytest.raises(ParameterError, match=r"^p_hat = "):
        Verdict.from_dict(d | {"p_hat": "0.9"})
    with pytest.raises(ParameterError, match=r"^verdict = "):
        Verdict.from_dict(d | {"verdict": "maybe"})
    with pytest.raises(ParameterError, match=r"^n_met = "):
        Verdict.from_dict(d | {"n_met": 11})


@pytest.mark.parametrize(
    ("kwargs", "field"),
    [
        ({"comparator": "less"}, "comparator"),
        ({"probability": 1.0}, "probability"),
        ({"probability": 0.0}, "probability"),
        ({"probability": 90}, "probability"),
        ({"confidence": 1.5}, "confidence"),
        ({"threshold": math.nan}, "threshold"),
        ({"threshold": "2"}, "threshold"),
        ({"metric": ""}, "metric"),
        ({"unit": None}, "unit"),
        ({"rng": None}, "rng"),
        ({"n_resamples": 0}, "n_resamples"),
    ],
)
def test_evaluate_requirement_bad_parameters_name_the_field(kwargs, field):
    with pytest.raises(ParameterError, match=rf"^{field} = "):
        _evaluate(np.ones(10), **kwargs)


@pytest.mark.parametrize("values", [[], np.ones((3, 2)), [1.0, np.inf], ["a"], [True, False]])
def test_evaluate_requirement_bad_values(values):
    with pytest.raises(ParameterError, match=r"^values = "):
        _evaluate(values)


def test_evaluate_requirement_empty_name():
    with pytest.raises(ParameterError, match=r"^name = "):
        evaluate_requirement(" ", [1.0], metric="m", comparator="below", threshold=1.0, probability=0.5, rng=None)


def test_text_summary_format():
    # The one-line summary format agreed for reports (numbers set directly, not computed).
    v = Verdict(
        name="xte within 2 m",
        metric="xte_p95_m",
        comparator="below",
        threshold=2.0,
        probability=0.9,
        confidence=0.95,
        n_trials=1000,
        n_met=943,
        n_failed=3,
        p_hat=0.943,
        p_low=0.921,
        p_high=0.960,
        verdict="pass",
        quantile_level=0.9,
        quantile_value=1.6,
        quantile_low=1.5,
        quantile_high=1.7,
        unit="m",
    )
    assert v.text() == (
        "xte within 2 m: PASS  P(xte_p95_m < 2 m) = 0.943 [0.921, 0.960] >= 0.90 required "
        "(n = 1000, 3 trials without a value counted as not met)"
    )
    one = dataclasses.replace(v, n_failed=1, verdict="undecided", probability=0.95, unit="")
    assert one.text().endswith("includes 0.95 required (n = 1000, 1 trial without a value counted as not met)")
    assert "P(xte_p95_m < 2)" in one.text()
    none = dataclasses.replace(v, n_failed=0, verdict="fail", comparator="above", probability=0.995)
    assert none.text() == "xte within 2 m: FAIL  P(xte_p95_m > 2 m) = 0.943 [0.921, 0.960] < 0.995 required (n = 1000)"


def test_table_text():
    a = _evaluate(np.linspace(0.2, 1.9, 50))
    b = _evaluate(np.array([1.0, np.nan, np.nan]), confidence=0.9)
    lines = verdicts_table_text([a, b]).splitlines()
    assert len(lines) == 5  # header, rule, two rows, note
    assert lines[0].split()[0] == "requirement" and set(lines[1]) <= {"-", " "}
    # b: 1 of 3 met, Clopper-Pearson 90 % upper bound 0.865 < 0.9 -> FAIL
    assert lines[2].endswith("PASS") and lines[3].endswith("FAIL")
    assert "(90%)" in lines[3] and "(95%)" in lines[2]  # mixed confidence: each interval says its level
    assert "q0.90 = n/a" in lines[3]
    # columns line up: the verdict column starts at the same offset on every row
    assert lines[2].index("PASS") == lines[3].index("FAIL") == lines[0].index("verdict")
    single = verdicts_table_text([a]).splitlines()
    assert single[-1].startswith("intervals: 95% two-sided")
