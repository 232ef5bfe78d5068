"""Tests of wavebench.sensors.noise: timing, coloured noise, dropouts, outages, outliers.

Statistical checks use fixed seeds and tolerances derived from the sampling
distribution of each estimator (stated beside each check): chi-square bounds
for variances of independent normals, Bartlett's formula for autocorrelations
of an AR(1) sequence, the Markov-chain central limit theorem for
availability. Bounds are at a two-sided 1e-4 level (about 3.9 sigma), so a
correct implementation fails none of them except by a freak seed.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import stats

from wavebench.core.errors import ParameterError
from wavebench.core.streams import TrialStreams
from wavebench.sensors.noise import (
    SensorTiming,
    delay,
    density_to_sd,
    gauss_markov_sequence,
    latency_steps,
    markov_dropout_mask,
    outage_mask,
    outlier_sequence,
    quantise,
    random_constant,
    random_walk_sequence,
    sample_steps,
    white_sequence,
)

SEED = 20240917
ALPHA = 1e-4
Z = stats.norm.ppf(1 - ALPHA / 2)  # ~3.89 standard deviations


def var_ratio_bounds(dof: float) -> tuple[float, float]:
    """Bounds on (sample variance / true variance) for ``dof`` independent normals
    with known zero mean: dof * ratio ~ chi-square(dof)."""
    return stats.chi2.ppf(ALPHA / 2, dof) / dof, stats.chi2.ppf(1 - ALPHA / 2, dof) / dof


# ---------------------------------------------------------------------------
# Timing
# ---------------------------------------------------------------------------


def test_sample_and_latency_steps():
    assert sample_steps(SensorTiming(rate_hz=10.0, latency_s=0.05), 0.01) == 10
    # 1/100 / 0.001 = 10.000000000000002 in floating point: still a whole number
    assert sample_steps(SensorTiming(rate_hz=100.0), 0.001) == 10
    assert sample_steps(SensorTiming(rate_hz=1.0 / 3.0), 0.5) == 6
    assert latency_steps(SensorTiming(rate_hz=1.0, latency_s=0.3), 0.1) == 3
    assert latency_steps(SensorTiming(rate_hz=1.0), 0.1) == 0
    # a uniform per-trial array is one shared grid
    assert sample_steps(SensorTiming(rate_hz=np.array([5.0, 5.0])), 0.1) == 2


@pytest.mark.parametrize(
    ("timing", "dt", "field"),
    [
        (SensorTiming(rate_hz=3.0), 0.01, "rate_hz"),  # 1/3 s is 33.3 steps
        (SensorTiming(rate_hz=200.0), 0.01, "rate_hz"),  # faster than the step
        (SensorTiming(rate_hz=10.0, latency_s=0.055), 0.01, "latency_s"),  # 5.5 steps
        (SensorTiming(rate_hz=np.array([5.0, 10.0])), 0.1, "rate_hz"),  # not one grid
    ],
)
def test_timing_not_whole_steps_is_named(timing, dt, field):
    with pytest.raises(ParameterError) as err:
        sample_steps(timing, dt)
    assert err.value.field == field


def test_timing_bad_values():
    with pytest.raises(ParameterError) as err:
        SensorTiming(rate_hz=-1.0)
    assert err.value.field == "rate_hz"
    with pytest.raises(ParameterError) as err:
        SensorTiming(rate_hz=1.0, latency_s=-0.1)
    assert err.value.field == "latency_s"
    with pytest.raises(ParameterError) as err:
        sample_steps(SensorTiming(rate_hz=1.0), 0.0)
    assert err.value.field == "dt_s"


# ---------------------------------------------------------------------------
# Gauss-Markov
# ---------------------------------------------------------------------------

GM_TRIALS = 2000
GM_SAMPLES = 400
GM_SIGMA = 2.0
GM_TAU = 10.0


@pytest.fixture(scope="module", params=[0.5, 2.0], ids=["dt0.5", "dt2"])
def gm_run(request):
    dt = request.param
    b = gauss_markov_sequence(TrialStreams(SEED, GM_TRIALS), "test.gm", GM_SAMPLES, GM_SIGMA, GM_TAU, dt)
    return dt, b


def test_gauss_markov_stationary_variance(gm_run):
    # Brown & Hwang, first-order Gauss-Markov: stationary variance sigma^2 for any dt
    # (exact discretisation). Pooled over K samples of each trial, the estimator
    # mean(b^2) has variance (2 sigma^4 / (n_trials K)) (1 + rho^2)/(1 - rho^2),
    # rho = exp(-dt/T) (Cov(b_j^2, b_k^2) = 2 sigma^4 rho^(2|j-k|) for Gaussians).
    dt, b = gm_run
    rho = math.exp(-dt / GM_TAU)
    est = float(np.mean(b**2)) / GM_SIGMA**2
    sd = math.sqrt(2.0 * (1 + rho**2) / (1 - rho**2) / b.size)
    assert abs(est - 1.0) < Z * sd, (est, sd)


def test_gauss_markov_autocorrelation(gm_run):
    # Brown & Hwang: autocorrelation exp(-|lag| dt / T). Checked at the lags
    # 4 s, 10 s and 20 s (whole steps for both dt). Tolerance: Bartlett's variance of the sample
    # autocorrelation of an AR(1) sequence (Box, Jenkins & Reinsel, Time Series
    # Analysis), Var r_m = [(1 + phi^2)(1 - phi^(2m))/(1 - phi^2) - 2 m phi^(2m)] / n.
    dt, b = gm_run
    phi = math.exp(-dt / GM_TAU)
    c0 = float(np.mean(b**2))
    for lag_s in (4.0, 10.0, 20.0):
        m = round(lag_s / dt)
        assert m * dt == lag_s
        r = float(np.mean(b[:, m:] * b[:, :-m])) / c0
        n = GM_TRIALS * (GM_SAMPLES - m)
        var = ((1 + phi**2) * (1 - phi ** (2 * m)) / (1 - phi**2) - 2 * m * phi ** (2 * m)) / n
        assert abs(r - math.exp(-lag_s / GM_TAU)) < Z * math.sqrt(var), (lag_s, r)


def test_gauss_markov_transient_is_independent_of_dt():
    # Brown & Hwang: from b(0) = 0, Var b(t) = sigma^2 (1 - exp(-2t/T)), whatever the
    # step. Across independent trials the sample variance at one time is chi-square.
    n_trials = 4000
    lo, hi = var_ratio_bounds(n_trials)
    for dt in (0.25, 2.5):
        b = gauss_markov_sequence(TrialStreams(SEED, n_trials), "test.gm.zero", 9, GM_SIGMA, GM_TAU, dt, initial="zero")
        assert np.all(b[:, 0] == 0.0)
        t = 8 * dt
        expected = GM_SIGMA**2 * (1 - math.exp(-2 * t / GM_TAU))
        ratio = float(np.mean(b[:, 8] ** 2)) / expected
        assert lo < ratio < hi, (dt, ratio)


def test_gauss_markov_infinite_tau_is_a_random_constant():
    # Brown & Hwang: the random constant is the T -> inf limit of the Gauss-Markov process
    n_trials = 4000
    b = gauss_markov_sequence(TrialStreams(SEED, n_trials), "test.gm.bias", 50, 0.3, np.inf, 1.0, n_axes=2)
    assert np.all(b == b[:, :1, :])
    lo, hi = var_ratio_bounds(2 * n_trials)
    assert lo < float(np.mean(b[:, 0] ** 2)) / 0.3**2 < hi


def test_gauss_markov_per_trial_parameters_and_shapes():
    s = TrialStreams(SEED, 3)
    b = gauss_markov_sequence(s, "x", 5, [1.0, 2.0, 0.0], 4.0, 1.0)
    assert b.shape == (3, 5)
    assert np.all(b[2] == 0.0)  # sigma = 0 for the third trial
    b = gauss_markov_sequence(s, "x", 5, np.array([[1.0, 0.0, 2.0]]), 4.0, 1.0, n_axes=3)
    assert b.shape == (3, 5, 3)
    assert np.all(b[:, :, 1] == 0.0)  # per-axis sigma shared by all trials


# ---------------------------------------------------------------------------
# White noise and random walks
# ---------------------------------------------------------------------------


def test_density_to_sd_follows_ieee952():
    # IEEE Std 952-1997: white rate noise of density N has Allan variance N^2/tau; the
    # mean of m samples of sd s is s^2/m = N^2/(m dt) only if s = N / sqrt(dt).
    assert density_to_sd(0.1, 0.01) == pytest.approx(1.0)
    assert density_to_sd(2.0, 4.0) == pytest.approx(1.0)
    np.testing.assert_allclose(density_to_sd(np.array([1.0, 3.0]), 0.25), [2.0, 6.0])


def test_white_sequence_variance():
    n_trials, n = 500, 40
    x = white_sequence(TrialStreams(SEED, n_trials), "test.white", n, 0.7, n_axes=3)
    assert x.shape == (n_trials, n, 3)
    lo, hi = var_ratio_bounds(x.size)  # independent normals
    assert lo < float(np.mean(x**2)) / 0.49 < hi


def test_random_walk_variance_grows_linearly():
    # Wiener process (Brown & Hwang; IEEE Std 952-1997 angle random walk): the
    # standard deviation after t is N sqrt(t). Ensemble at two times, chi-square bounds.
    n_trials, n, dt, dens = 4000, 101, 0.5, 0.2
    x = random_walk_sequence(TrialStreams(SEED, n_trials), "test.rw", n, dens, dt)
    assert np.all(x[:, 0] == 0.0)
    lo, hi = var_ratio_bounds(n_trials)
    for k in (10, 100):
        ratio = float(np.mean(x[:, k] ** 2)) / (dens**2 * k * dt)
        assert lo < ratio < hi, (k, ratio)


def test_random_constant_variance():
    n_trials = 3000
    c = random_constant(TrialStreams(SEED, n_trials), "test.const", 0.05, n_axes=3)
    assert c.shape == (n_trials, 3)
    lo, hi = var_ratio_bounds(c.size)
    assert lo < float(np.mean(c**2)) / 0.05**2 < hi


# ---------------------------------------------------------------------------
# Per-trial bit identity
# ---------------------------------------------------------------------------


def _draw_all(streams, sigma, tau, p_drop, scale):
    return [
        gauss_markov_sequence(streams, "bi.gm", 300, sigma, tau, 0.2, n_axes=3),
        gauss_markov_sequence(streams, "bi.gm1", 300, sigma, tau, 0.2),
        white_sequence(streams, "bi.white", 300, sigma, n_axes=2),
        random_walk_sequence(streams, "bi.rw", 300, sigma, 0.2),
        random_constant(streams, "bi.const", sigma, n_axes=3),
        markov_dropout_mask(streams, "bi.drop", 3000, p_drop, 0.2),
        outlier_sequence(streams, "bi.out", 300, p_drop, scale, n_axes=3),
    ]


def test_trial_alone_is_bit_identical_to_trial_in_batch():
    # Design rule (ARCHITECTURE principle 4): trial i draws only from its own stream.
    trials = [4, 0, 17, 9, 2, 11, 6]
    sigma = np.array([0.5, 1.0, 2.0, 0.0, 1.5, 0.25, 3.0])
    tau = np.array([1.0, 5.0, np.inf, 2.0, 5.0, 30.0, 0.1])
    p_drop = np.array([0.0, 0.01, 0.1, 0.5, 1.0, 0.05, 0.02])
    scale = np.array([1.0, 10.0, 3.0, 0.0, 5.0, 2.0, 8.0])
    batch = _draw_all(TrialStreams(SEED, trials), sigma, tau, p_drop, scale)
    for pos, trial in enumerate(trials):
        alone = _draw_all(TrialStreams(SEED, [trial]), sigma[pos], tau[pos], p_drop[pos], scale[pos])
        for a, b in zip(alone, batch, strict=True):
            assert a.shape[1:] == b.shape[1:]
            assert a[0].tobytes() == b[pos].tobytes()
    # shared parameters: all rows in one filter call vs alone
    shared = gauss_markov_sequence(TrialStreams(SEED, trials), "bi.gm", 300, 1.0, 5.0, 0.2, n_axes=3)
    alone = gauss_markov_sequence(TrialStreams(SEED, [17]), "bi.gm", 300, 1.0, 5.0, 0.2, n_axes=3)
    assert alone[0].tobytes() == shared[2].tobytes()


def test_purposes_are_independent_streams():
    s = TrialStreams(SEED, 2)
    a = white_sequence(s, "sensor_a.white", 10, 1.0)
    b = white_sequence(s, "sensor_b.white", 10, 1.0)
    assert not np.array_equal(a, b)
    # drawing another purpose first does not move the first one
    np.testing.assert_array_equal(white_sequence(s, "sensor_a.white", 10, 1.0), a)


# ---------------------------------------------------------------------------
# Dropouts and outages
# ---------------------------------------------------------------------------


def test_markov_dropout_availability_and_outage_length():
    # Two-state Markov chain (Kemeny & Snell, Finite Markov Chains): stationary
    # availability A = p_r/(p_d + p_r); sojourns are geometric, so the mean outage
    # lasts 1/p_r samples. Tolerance on A: Markov-chain CLT, the indicator has
    # autocorrelation lambda^k with lambda = 1 - p_d - p_r, so
    # Var(mean) = A(1 - A)(1 + lambda)/((1 - lambda) n).
    p_d, p_r = 0.02, 0.1
    n_trials, n = 200, 5000
    m = markov_dropout_mask(TrialStreams(SEED, n_trials), "test.dropout", n, p_d, p_r)
    assert m.shape == (n_trials, n) and m.dtype == bool
    assert np.all(m[:, 0])
    a = p_r / (p_d + p_r)
    lam = 1 - p_d - p_r
    sd = math.sqrt(a * (1 - a) * (1 + lam) / (1 - lam) / m.size)
    assert abs(float(m.mean()) - a) < Z * sd

    # outage runs that end inside the record: geometric(p_r), mean 1/p_r, var (1-p_r)/p_r^2
    edges = np.diff(m.astype(np.int8), axis=1)
    lengths = []
    for row in range(n_trials):
        starts = np.flatnonzero(edges[row] == -1) + 1
        ends = np.flatnonzero(edges[row] == 1) + 1
        k = min(len(starts), len(ends))
        lengths.extend((ends[:k] - starts[:k]).tolist())
    lengths = np.asarray(lengths)
    sd_mean = math.sqrt((1 - p_r) / p_r**2 / lengths.size)
    assert abs(lengths.mean() - 1 / p_r) < Z * sd_mean


def test_markov_dropout_edge_cases():
    s = TrialStreams(SEED, 3)
    assert markov_dropout_mask(s, "d", 100, 0.0, 0.5).all()  # never drops
    assert not markov_dropout_mask(s, "d", 100, 0.5, 0.0, start_valid=False).any()  # never recovers
    m = markov_dropout_mask(s, "d", 100, 0.3, 0.3, start_valid=False)
    assert not m[:, 0].any()
    m = markov_dropout_mask(s, "d", 10, 1.0, 1.0)  # flips every sample
    assert m[0].tolist() == [True, False] * 5


def test_outage_windows_exact():
    # hand case: half-open windows [start, end)
    t = np.arange(0.0, 10.0, 0.5)
    got = outage_mask(t, [(2.0, 3.5), (7.0, 8.0)])
    out_times = [2.0, 2.5, 3.0, 7.0, 7.5]
    expected = np.array([ti not in out_times for ti in t])
    np.testing.assert_array_equal(got, expected)
    # per-trial windows, and per-trial times
    got = outage_mask([0.0, 1.0, 2.0, 3.0], [[(1.0, 2.0)], [], [(0.0, 10.0), (1.0, 1.5)]])
    assert got.tolist() == [
        [True, False, True, True],
        [True, True, True, True],
        [False, False, False, False],
    ]
    times = np.array([[0.0, 1.0, 2.0], [10.0, 11.0, 12.0]])
    assert outage_mask(times, [(1.0, 11.0)]).tolist() == [[True, False, False], [False, True, True]]
    assert outage_mask(t, []).all()


def test_outage_windows_bad():
    with pytest.raises(ParameterError) as err:
        outage_mask([0.0, 1.0], [(2.0, 1.0)])
    assert err.value.field == "windows"
    with pytest.raises(ParameterError) as err:
        outage_mask([0.0, np.nan], [(0.0, 1.0)])
    assert err.value.field == "times_s"


# ---------------------------------------------------------------------------
# Outliers, quantisation, delay
# ---------------------------------------------------------------------------


def test_outlier_rate_and_size():
    # Bernoulli(p) events: the count is binomial (scipy.stats.binom bounds); sizes are
    # scale * N(0, 1), chi-square bounds on their mean square.
    p, scale, n_trials, n = 0.02, 12.0, 100, 2000
    e = outlier_sequence(TrialStreams(SEED, n_trials), "test.outlier", n, p, scale, n_axes=2)
    events = np.any(e != 0.0, axis=-1)
    count = int(events.sum())
    lo_c, hi_c = stats.binom.ppf([ALPHA / 2, 1 - ALPHA / 2], n_trials * n, p)
    assert lo_c <= count <= hi_c
    sizes = e[events]
    lo, hi = var_ratio_bounds(sizes.size)
    assert lo < float(np.mean(sizes**2)) / scale**2 < hi


def test_quantise_hand_cases():
    np.testing.assert_array_equal(quantise([0.26, -0.74, 1.0, 0.3, -0.2], 0.5), [0.5, -0.5, 1.0, 0.5, -0.0])
    np.testing.assert_array_equal(quantise([3.0, 7.0, -4.0], 4.0), [4.0, 8.0, -4.0])
    np.testing.assert_array_equal(quantise([0.123], 0.0), [0.123])
    got = quantise([[0.26, 1.3], [0.26, 1.3]], np.array([0.5, 0.0]))  # per-trial lsb
    np.testing.assert_array_equal(got, [[0.5, 1.5], [0.26, 1.3]])
    with pytest.raises(ParameterError) as err:
        quantise([1.0], -0.1)
    assert err.value.field == "lsb"


def test_delay_hand_cases():
    y, ok = delay([1.0, 2.0, 3.0, 4.0, 5.0], 2, axis=0)
    np.testing.assert_array_equal(y, [np.nan, np.nan, 1.0, 2.0, 3.0])
    assert ok.tolist() == [False, False, True, True, True]
    y, ok = delay(np.arange(6.0).reshape(2, 3), 1)
    np.testing.assert_array_equal(y, [[np.nan, 0.0, 1.0], [np.nan, 3.0, 4.0]])
    y, ok = delay(np.array([[True, True, False]]), 1)
    assert y.tolist() == [[False, True, True]]
    y, ok = delay([1.0, 2.0], 0, axis=0)
    assert y.tolist() == [1.0, 2.0] and ok.all()
    y, ok = delay([1.0, 2.0], 5, axis=0)
    assert np.isnan(y).all() and not ok.any()
    with pytest.raises(ParameterError) as err:
        delay([1.0, 2.0], -1, axis=0)
    assert err.value.field == "n_steps"


# ---------------------------------------------------------------------------
# Bad inputs name their field
# ---------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("call", "field"),
    [
        (lambda s: white_sequence(s, "p", 10, -1.0), "sigma"),
        (lambda s: random_walk_sequence(s, "p", 10, -0.1, 1.0), "density"),
        (lambda s: density_to_sd(-0.1, 1.0), "density"),
        (lambda s: gauss_markov_sequence(s, "p", 10, 1.0, -5.0, 1.0), "tau_s"),
        (lambda s: gauss_markov_sequence(s, "p", 10, -1.0, 5.0, 1.0), "sigma"),
        (lambda s: gauss_markov_sequence(s, "p", 10, 1.0, 5.0, 0.0), "dt_s"),
        (lambda s: gauss_markov_sequence(s, "p", 0, 1.0, 5.0, 1.0), "n_samples"),
        (lambda s: gauss_markov_sequence(s, "p", 10, 1.0, 5.0, 1.0, initial="cold"), "initial"),
        (lambda s: white_sequence(s, "p", 10, [1.0, 2.0]), "sigma"),  # 2 values for 3 trials
        (lambda s: markov_dropout_mask(s, "p", 10, 1.5, 0.1), "p_drop"),
        (lambda s: markov_dropout_mask(s, "p", 10, 0.1, -0.1), "p_recover"),
        (lambda s: outlier_sequence(s, "p", 10, 0.1, -2.0), "scale"),
        (lambda s: outlier_sequence(s, "p", 10, 2.0, 2.0), "probability"),
    ],
)
def test_bad_inputs_name_their_field(call, field):
    with pytest.raises(ParameterError) as err:
        call(TrialStreams(SEED, 3))
    assert err.value.field == field
