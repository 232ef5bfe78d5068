"""Tests of wavebench.analysis.sequential.

Checked against scipy.stats.binomtest(...).proportion_ci(method="exact")
(the Clopper & Pearson 1934 interval) at the spent confidence
1 - 6 alpha / (pi^2 k^2) of each look, Euler's sum of 1/k^2 = pi^2/6, the
zero-failure bound 1 - (1 - c)^(1/n) and the "rule of three" 3/n of Hanley &
Lippman-Hand (1983, JAMA 249(13)) / Eypasch et al. (1995, BMJ 311:619,
"3/n for n > 30"), and on simulated Bernoulli campaigns with a known
probability, where the rate of wrong decisions is compared with binomial
quantiles (scipy.stats.binom) of the allowed rate.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import stats

from wavebench.analysis.sequential import (
    SequentialMonitor,
    SequentialPlan,
    SequentialStatus,
    sequential_decision,
    sequential_interval,
    zero_failure_upper_bound,
)
from wavebench.analysis.stats import clopper_pearson, min_trials_to_pass
from wavebench.core.errors import ParameterError

# scipy's exact interval finds its bounds with brentq (xtol 2e-12); ours uses beta.ppf.
CP_ATOL = 1e-10

N_CAMPAIGNS = 2000
# Tail probability of the Monte Carlo bounds below: a procedure whose true error
# rate sits exactly at the allowed rate exceeds the bound with probability <= 0.1 %.
MC_TAIL = 0.001


def _spent_alpha(alpha: float, k: int) -> float:
    # Union bound over looks with Euler's sum: sum_k 6 alpha / (pi^2 k^2) = alpha.
    return 6.0 * alpha / (math.pi**2 * k**2)


def _run_campaigns(p_true: float, p_req: float, plan: SequentialPlan, seed: int, *, naive: bool):
    """First decision and trials needed for N_CAMPAIGNS simulated campaigns.

    Each row of one fixed-seed Generator's draw is a campaign of Bernoulli(p_true)
    "met" flags. The corrected rule is the library's sequential_decision; the naive
    rule is the fixed-confidence Clopper-Pearson interval at every look.
    """
    rng = np.random.default_rng(seed)
    met = rng.random((N_CAMPAIGNS, plan.max_trials)) < p_true
    cum = np.cumsum(met, axis=1)
    final = np.full(N_CAMPAIGNS, "undecided", dtype="<U9")
    needed = np.zeros(N_CAMPAIGNS, dtype=np.int64)
    for k, n_k in enumerate(plan.looks(), start=1):
        open_ = np.flatnonzero(final == "undecided")
        if open_.size == 0:
            break
        n_met = cum[open_, n_k - 1]
        if naive:
            low, high = clopper_pearson(n_met, int(n_k), plan.confidence)
            dec = np.where(low >= p_req, "pass", np.where(high < p_req, "fail", "undecided"))
        else:
            dec = sequential_decision(n_met, int(n_k), p_req, k, plan)
        decided = dec != "undecided"
        final[open_[decided]] = dec[decided]
        needed[open_[decided]] = n_k
    return final, needed, met


# ---------------------------------------------------------------- the plan


def test_plan_schedule_ends_at_the_cap():
    plan = SequentialPlan(confidence=0.95, max_trials=95, first_look=10, look_every=30)
    assert plan.n_looks == 4
    np.testing.assert_array_equal(plan.looks(), [10, 40, 70, 95])
    on_grid = SequentialPlan(confidence=0.95, max_trials=100, first_look=10, look_every=30)
    np.testing.assert_array_equal(on_grid.looks(), [10, 40, 70, 100])
    single = SequentialPlan(confidence=0.95, max_trials=50, first_look=50, look_every=7)
    np.testing.assert_array_equal(single.looks(), [50])


def test_spent_alpha_sums_to_alpha():
    # Euler (Basel problem): sum_{k>=1} 1/k^2 = pi^2/6, so sum_k alpha_k = alpha; the tail
    # after K looks is below 6 alpha / (pi^2 K).
    alpha = 0.05
    plan = SequentialPlan(confidence=1 - alpha, max_trials=100_000, first_look=1, look_every=1)
    total = sum(plan.look_alpha(k) for k in range(1, plan.n_looks + 1))
    assert total < alpha
    assert total > alpha - 6 * alpha / (math.pi**2 * plan.n_looks)
    assert plan.look_alpha(1) == pytest.approx(6 * alpha / math.pi**2, rel=1e-15)
    assert plan.look_confidence(3) == pytest.approx(1 - _spent_alpha(alpha, 3), rel=1e-15)


@pytest.mark.parametrize("confidence", [0.9, 0.95, 0.99])
def test_sequential_interval_is_clopper_pearson_at_the_spent_confidence(confidence):
    # Reference: scipy.stats.binomtest(k, n).proportion_ci(1 - alpha_k, method="exact").
    plan = SequentialPlan(confidence=confidence, max_trials=500, first_look=20, look_every=40)
    for k in (1, 2, 5, plan.n_looks):
        n = plan.trials_at(k)
        for n_met in sorted({0, 1, n // 2, n - 3, n}):
            ref = stats.binomtest(n_met, n).proportion_ci(1 - _spent_alpha(1 - confidence, k), method="exact")
            low, high = sequential_interval(n_met, n, k, plan)
            assert low == pytest.approx(ref.low, abs=CP_ATOL), (k, n_met)
            assert high == pytest.approx(ref.high, abs=CP_ATOL), (k, n_met)


def test_sequential_decision_follows_the_interval():
    # Decision rule as in evaluate_requirement, on scipy's exact interval at the spent level.
    plan = SequentialPlan(confidence=0.95, max_trials=300, first_look=30, look_every=30)
    p_req = 0.8
    for k in (1, 4):
        n = plan.trials_at(k)
        n_met = np.arange(n + 1)
        got = sequential_decision(n_met, n, p_req, k, plan)
        assert got.shape == (n + 1,)
        for m in range(n + 1):
            ref = stats.binomtest(m, n).proportion_ci(1 - _spent_alpha(0.05, k), method="exact")
            want = "pass" if ref.low >= p_req else ("fail" if ref.high < p_req else "undecided")
            assert got[m] == want, (k, m)
        assert sequential_decision(int(n), n, p_req, k, plan) == got[-1]
        assert isinstance(sequential_decision(int(n), n, p_req, k, plan), str)


# ---------------------------------------------------------------- error rates on simulated campaigns

# (confidence, required probability, true probability, the wrong decision, seed).
# The true probability sits at (or just below) the requirement: the hardest case for
# the wrong decision. 100 looks: after 10 trials, then every 10, up to 1000.
ERROR_CASES = [
    (0.95, 0.9, 0.9, "fail", 101),
    (0.95, 0.9, 0.897, "pass", 102),
    (0.90, 0.5, 0.5, "fail", 103),
    (0.90, 0.5, 0.495, "pass", 104),
]


@pytest.mark.parametrize(("confidence", "p_req", "p_true", "wrong", "seed"), ERROR_CASES)
def test_wrong_decision_rate_corrected_vs_naive(confidence, p_req, p_true, wrong, seed):
    plan = SequentialPlan(confidence=confidence, max_trials=1000, first_look=10, look_every=10)
    alpha = 1 - confidence
    final, _, _ = _run_campaigns(p_true, p_req, plan, seed, naive=False)
    naive, _, _ = _run_campaigns(p_true, p_req, plan, seed, naive=True)
    n_wrong = int(np.count_nonzero(final == wrong))
    n_wrong_naive = int(np.count_nonzero(naive == wrong))
    # Union bound (Boole): a wrong one-sided decision at any look has probability
    # <= sum_k alpha_k / 2 = alpha / 2 (stricter than the overall 1 - confidence).
    # Monte Carlo bound: the 99.9 % quantile of Binomial(N_CAMPAIGNS, alpha / 2).
    assert n_wrong <= stats.binom.ppf(1 - MC_TAIL, N_CAMPAIGNS, alpha / 2), n_wrong
    # The same campaigns judged at a fixed confidence at every look: the wrong decision
    # comes more often than even the two-sided alpha allows, beyond the 99.9 % quantile
    # of Binomial(N_CAMPAIGNS, alpha).
    assert n_wrong_naive > stats.binom.isf(MC_TAIL, N_CAMPAIGNS, alpha), n_wrong_naive


def test_corrected_rule_still_decides_when_the_margin_is_clear():
    # P(met) = 0.97 against 0.9 required: the corrected rule passes almost every campaign
    # before the cap. Common practice, no source: a valid test should have power here.
    plan = SequentialPlan(confidence=0.95, max_trials=1000, first_look=10, look_every=10)
    final, needed, met = _run_campaigns(0.97, 0.9, plan, seed=105, naive=False)
    assert np.count_nonzero(final == "pass") >= 0.99 * N_CAMPAIGNS
    assert np.count_nonzero(final == "fail") <= stats.binom.ppf(1 - MC_TAIL, N_CAMPAIGNS, 0.025)
    # Campaigns without a single miss up to the zero-failure count pass exactly there.
    n0 = plan.min_trials_to_pass(0.9)
    clean = ~np.any(~met[:, :n0], axis=1)
    assert clean.any()
    assert np.all(final[clean] == "pass") and np.all(needed[clean] == n0)


# ---------------------------------------------------------------- zero failures


@pytest.mark.parametrize("confidence", [0.9, 0.95, 0.99])
def test_zero_failure_bound_matches_one_sided_exact_interval(confidence):
    # Reference: scipy.stats.binomtest(0, n, alternative="less") one-sided exact upper bound
    # on the miss probability; closed form 1 - (1 - c)^(1/n) (Clopper & Pearson 1934).
    ns = np.array([1, 2, 5, 14, 30, 100, 112, 167, 1000, 10_000])
    got = zero_failure_upper_bound(ns, confidence)
    assert got.shape == ns.shape
    for n, g in zip(ns, got, strict=True):
        ref = stats.binomtest(0, int(n), alternative="less").proportion_ci(confidence, method="exact").high
        assert g == pytest.approx(ref, abs=CP_ATOL), n
        assert g == pytest.approx(1 - (1 - confidence) ** (1 / n), rel=1e-12)
    assert isinstance(zero_failure_upper_bound(10, confidence), float)


def test_rule_of_three():
    # Hanley & Lippman-Hand (1983), JAMA 249(13): with no event in n, the 95 % upper bound is
    # about 3/n; Eypasch et al. (1995), BMJ 311:619, quote it "for n > 30". The exact bound is
    # below 3/n for every n (1 - e^-x < x and -ln 0.05 = 2.996 < 3).
    ns = np.arange(1, 5001)
    exact = zero_failure_upper_bound(ns, 0.95)
    assert np.all(exact < 3 / ns)
    rel = (3 / ns - exact) / (3 / ns)
    # From n = 30 on, 3/n is within 6 % of the exact value (5.1 % at n = 30, from the series
    # 1 - e^-x = x - x^2/2 + ... with x = 2.996 / n), and within 1 % from n = 300.
    assert rel[ns >= 30].max() < 0.06
    assert rel[ns >= 300].max() < 0.01
    # Hanley's illustration: none in 100 -> at most about 3 in 100.
    assert zero_failure_upper_bound(100, 0.95) == pytest.approx(0.03, abs=0.001)


@pytest.mark.parametrize("p", [0.8, 0.9, 0.95, 0.99, 0.999])
@pytest.mark.parametrize("c", [0.9, 0.95, 0.99])
def test_trials_without_a_miss_needed_to_pass(p, c):
    # One-sided exact: n >= ln(1 - c) / ln(p) trials without a miss show P(met) >= p at
    # confidence c (scipy.stats.binomtest(n, n, alternative="greater") lower bound).
    # stats.min_trials_to_pass uses the two-sided interval (each side at (1 - c')/2), so the
    # one-sided count at c is min_trials_to_pass at c' = 2c - 1.
    n = min_trials_to_pass(p, 2 * c - 1)
    assert n == math.ceil(math.log(1 - c) / math.log(p))
    low = stats.binomtest(n, n, alternative="greater").proportion_ci(c, method="exact").low
    assert low >= p - 1e-12
    if n > 1:
        low_before = stats.binomtest(n - 1, n - 1, alternative="greater").proportion_ci(c, method="exact").low
        assert low_before < p


@pytest.mark.parametrize("p", [0.8, 0.9, 0.95, 0.99])
def test_plan_min_trials_to_pass_is_the_first_look_that_passes(p):
    # A record without a miss passes at look k when (alpha_k / 2)^(1 / n_k) >= p, i.e.
    # n_k >= ln(alpha_k / 2) / ln p; checked with scipy's exact interval at the spent level.
    plan = SequentialPlan(confidence=0.95, max_trials=2000, first_look=25, look_every=25)
    got = plan.min_trials_to_pass(p)
    want = None
    for k, n_k in enumerate(plan.looks(), start=1):
        if n_k >= math.log(_spent_alpha(0.05, k) / 2) / math.log(p):
            want = int(n_k)
            break
    assert got == want
    if got is not None:
        k = int(np.flatnonzero(plan.looks() == got)[0]) + 1
        ref = stats.binomtest(got, got).proportion_ci(1 - _spent_alpha(0.05, k), method="exact")
        assert ref.low >= p
        if k > 1:
            n_prev = plan.trials_at(k - 1)
            prev = stats.binomtest(n_prev, n_prev).proportion_ci(1 - _spent_alpha(0.05, k - 1), method="exact")
            assert prev.low < p
        # Looking repeatedly costs trials: never fewer than a single look would need.
        assert got >= min_trials_to_pass(p, 0.95)
    else:
        assert p == 0.99  # 0.99 needs more than 2000 trials on this schedule


# ---------------------------------------------------------------- the monitor


def test_monitor_stops_when_all_are_decided_and_reports_trials_needed():
    plan = SequentialPlan(confidence=0.95, max_trials=1000, first_look=20, look_every=20)
    mon = SequentialMonitor(plan, {"always": 0.9, "half": 0.9})
    assert not mon.may_stop and mon.n_trials == 0
    assert mon.statuses["always"].look_index == 0 and math.isnan(mon.statuses["always"].p_low)
    half = np.tile([True, False], 5)
    n_batches = 0
    while not mon.may_stop:
        mon.update({"always": np.ones(10, bool), "half": half})
        n_batches += 1
    s_always, s_half = mon.statuses["always"], mon.statuses["half"]
    # "half" (P met = 0.5 observed) fails at the first look: upper bound of 10/20 at the spent
    # level is far below 0.9. "always" passes at the plan's zero-failure count.
    ref = stats.binomtest(10, 20).proportion_ci(1 - _spent_alpha(0.05, 1), method="exact")
    assert ref.high < 0.9
    assert (s_half.decision, s_half.n_trials, s_half.n_met, s_half.look_index) == ("fail", 20, 10, 1)
    assert s_half.p_high == pytest.approx(ref.high, abs=CP_ATOL)
    n0 = plan.min_trials_to_pass(0.9)
    assert (s_always.decision, s_always.n_trials, s_always.n_met) == ("pass", n0, n0)
    assert mon.all_decided and mon.n_trials == n_batches * 10 == n0
    # The rule of three across looks: one-sided bound at level 1 - alpha_k of the deciding look.
    k = s_always.look_index
    assert s_always.zero_failure_bound == pytest.approx(1 - _spent_alpha(0.05, k) ** (1 / n0), rel=1e-12)
    assert math.isnan(s_half.zero_failure_bound)
    assert s_always.look_confidence == pytest.approx(1 - _spent_alpha(0.05, k), rel=1e-15)
    frame = mon.to_frame()
    assert list(frame.columns) == [
        "name",
        "probability",
        "decision",
        "look_index",
        "n_trials",
        "n_met",
        "p_low",
        "p_high",
        "look_confidence",
        "zero_failure_bound",
        "min_trials_to_pass",
    ]
    assert frame["decision"].tolist() == ["pass", "fail"]


def test_monitor_keeps_the_first_decision():
    plan = SequentialPlan(confidence=0.95, max_trials=400, first_look=100, look_every=100)
    mon = SequentialMonitor(plan, {"r": 0.9})
    mon.update({"r": np.ones(100, bool)})  # passes at the first look: 100 >= ln(0.0152)/ln(0.9)
    assert mon.statuses["r"].decision == "pass"
    mon.update({"r": np.zeros(100, bool)})  # a fixed-confidence look would now say fail
    assert clopper_pearson(100, 200, 0.95)[1] < 0.9
    s = mon.statuses["r"]
    assert (s.decision, s.n_trials, s.look_index) == ("pass", 100, 1)


def test_monitor_stops_at_the_cap_with_undecided_requirements():
    plan = SequentialPlan(confidence=0.95, max_trials=60, first_look=20, look_every=20)
    mon = SequentialMonitor(plan, {"tight": 0.99})
    assert mon.statuses["tight"].min_trials_to_pass is None
    mon.update({"tight": np.ones(50, bool)})
    assert not mon.may_stop and mon.remaining == 10
    mon.update({"tight": np.ones(10, bool)})
    s = mon.statuses["tight"]
    assert mon.may_stop and not mon.all_decided
    assert (s.decision, s.look_index, s.n_trials) == ("undecided", 3, 60)
    with pytest.raises(ParameterError, match="max_trials"):
        mon.update({"tight": np.ones(1, bool)})


def test_monitor_batches_need_not_match_the_looks():
    # Any split of the same trials into batches gives the decisions of the look-by-look
    # computation on the whole stream.
    plan = SequentialPlan(confidence=0.9, max_trials=300, first_look=15, look_every=15)
    final, needed, met = _run_campaigns(0.85, 0.8, plan, seed=106, naive=False)
    rng = np.random.default_rng(7)
    for i in range(30):
        mon = SequentialMonitor(plan, {"a": 0.8, "b": 0.5})
        start = 0
        while start < plan.max_trials and not mon.all_decided:
            size = min(int(rng.integers(1, 38)), plan.max_trials - start)
            mon.update({"a": met[i, start : start + size], "b": met[i, start : start + size]})
            start += size
        s = mon.statuses["a"]
        assert s.decision == final[i], i
        if s.decision != "undecided":
            assert s.n_trials == needed[i]
            assert s.n_met == int(np.count_nonzero(met[i, : s.n_trials]))


# ---------------------------------------------------------------- refusals


def test_plan_refusals_name_the_field():
    with pytest.raises(ParameterError, match="first_look"):
        SequentialPlan(confidence=0.95, max_trials=10, first_look=20, look_every=5)
    with pytest.raises(ParameterError, match="confidence"):
        SequentialPlan(confidence=1.0)
    with pytest.raises(ParameterError, match="look_every"):
        SequentialPlan(look_every=0)
    with pytest.raises(ParameterError, match="max_trials"):
        SequentialPlan(max_trials=10.5)
    with pytest.raises(ParameterError, match="max_trials"):
        SequentialPlan(max_trials=np.array([100, 200]))
    plan = SequentialPlan(confidence=0.95, max_trials=100, first_look=10, look_every=10)
    with pytest.raises(ParameterError, match="look_index"):
        plan.trials_at(0)
    with pytest.raises(ParameterError, match="look_index"):
        plan.look_alpha(plan.n_looks + 1)


def test_decision_refuses_counts_off_the_schedule():
    plan = SequentialPlan(confidence=0.95, max_trials=100, first_look=10, look_every=10)
    with pytest.raises(ParameterError, match="n_trials"):
        sequential_decision(5, 15, 0.9, 1, plan)
    with pytest.raises(ParameterError, match="must not exceed"):
        sequential_decision(11, 10, 0.9, 1, plan)
    with pytest.raises(ParameterError, match="probability"):
        sequential_decision(5, 10, 1.0, 1, plan)
    with pytest.raises(ParameterError, match="plan"):
        sequential_decision(5, 10, 0.9, 1, {"confidence": 0.95})
    with pytest.raises(ParameterError, match="n_trials"):
        zero_failure_upper_bound(0)
    with pytest.raises(ParameterError, match="confidence"):
        zero_failure_upper_bound(10, 0.0)


def test_monitor_refusals():
    plan = SequentialPlan(confidence=0.95, max_trials=100, first_look=10, look_every=10)
    with pytest.raises(ParameterError, match="requirements"):
        SequentialMonitor(plan, {})
    with pytest.raises(ParameterError, match="requirements"):
        SequentialMonitor(plan, {"a": 1.5})
    mon = SequentialMonitor(plan, {"a": 0.9, "b": 0.8})
    with pytest.raises(ParameterError, match="'b'"):
        mon.update({"a": np.ones(5, bool)})
    with pytest.raises(ParameterError, match="'c'"):
        mon.update({"a": np.ones(5, bool), "b": np.ones(5, bool), "c": np.ones(5, bool)})
    with pytest.raises(ParameterError, match="boolean"):
        mon.update({"a": np.ones(5), "b": np.ones(5, bool)})
    with pytest.raises(ParameterError, match="5 flags"):
        mon.update({"a": np.ones(5, bool), "b": np.ones(4, bool)})
    assert mon.n_trials == 0  # nothing was taken from refused batches
    assert isinstance(mon.statuses["a"], SequentialStatus)
