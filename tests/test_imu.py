"""Tests of wavebench.sensors.allan and wavebench.sensors.imu.

External checks: IEEE Std 952-1997 (Allan-variance slopes and read-off
points), the `allantools` package (overlapping Allan deviation), the Allan
variance of a first-order Gauss-Markov process from El-Sheimy, Hou & Niu
(2008), IEEE Trans. Instrum. Meas. 57(1), and the IMU grade table of
El-Sheimy & Youssef (2020), Satellite Navigation 1:2, Table 1.

Tolerances on estimated Allan variances: the pooled overlapping Allan
variance over C independent channels is treated as chi-square with C * edf
degrees of freedom, edf from the approximations of Howe, Allan & Barnes
(1981) as given in NIST SP 1065 (Riley 2008) (formulas from memory, not
re-checked; a simulation with 400 trials agreed with them to within its
own scatter):
  white FM:  edf = [3(N-1)/(2m) - 2(N-2)/N] * 4m^2/(4m^2 + 5)
  RW FM:     edf = (N-2)/m * [(N-1)^2 - 3m(N-1) + 4m^2]/(N-3)^2
with N phase points (n_samples + 1) and tau = m dt. For a Gauss-Markov
process the RW-FM value is used: it is the smallest of the power-law
values, so the bounds are the widest. Bounds at a two-sided 1e-4 level.
"""

from __future__ import annotations

import dataclasses
import math

import allantools
import numpy as np
import pytest
from scipy import optimize, stats

from wavebench.core.errors import ParameterError
from wavebench.core.streams import TrialStreams
from wavebench.sensors.allan import (
    FLICKER_FLOOR_FACTOR,
    GM_ADEV_PEAK_RATIO,
    GM_ADEV_PEAK_TAU_RATIO,
    allan_deviation,
    allan_taus,
    gauss_markov_allan_variance,
)
from wavebench.sensors.imu import IMU_GRADES, ImuGrade, imu_grade, imu_measure
from wavebench.sensors.noise import density_to_sd, gauss_markov_sequence, random_walk_sequence, white_sequence

SEED = 952
ALPHA = 1e-4
DEG = math.pi / 180.0
G_STANDARD = 9.80665  # standard gravity, CGPM 1901 (units of the grade table's mg / ug)


def edf_white(n_phase: int, m: int) -> float:
    return (3 * (n_phase - 1) / (2 * m) - 2 * (n_phase - 2) / n_phase) * 4 * m * m / (4 * m * m + 5)


def edf_rw(n_phase: int, m: int) -> float:
    return (n_phase - 2) / m * ((n_phase - 1) ** 2 - 3 * m * (n_phase - 1) + 4 * m * m) / (n_phase - 3) ** 2


def adev_bounds(dof: float) -> tuple[float, float]:
    """Bounds on (estimated ADEV / true ADEV) for a chi-square(dof) Allan variance."""
    lo, hi = stats.chi2.ppf([ALPHA / 2, 1 - ALPHA / 2], dof) / dof
    return math.sqrt(lo), math.sqrt(hi)


def pooled_adev(x: np.ndarray, dt: float, taus: np.ndarray) -> np.ndarray:
    """ADEV from the Allan variance averaged over all channels; x is (n_trials, n_samples[, n_axes])."""
    ad = allan_deviation(x, dt, taus, axis=1)
    return np.sqrt(np.mean(ad**2, axis=tuple(i for i in range(ad.ndim) if i != 1)))


def el_sheimy_gm_avar(tau, sigma, tc):
    # El-Sheimy, Hou & Niu (2008): sigma^2(tau) = (q_c T_c)^2/tau [1 - T_c/(2 tau)(3 - 4 e^{-tau/T_c} + e^{-2 tau/T_c})]
    # with (q_c T_c)^2 = 2 sigma_GM^2 T_c (stationary variance sigma_GM^2 = q_c^2 T_c / 2)
    tau = np.asarray(tau, dtype=float)
    qt2 = 2.0 * sigma**2 * tc
    return qt2 / tau * (1.0 - tc / (2.0 * tau) * (3.0 - 4.0 * np.exp(-tau / tc) + np.exp(-2.0 * tau / tc)))


# ---------------------------------------------------------------------------
# Allan deviation
# ---------------------------------------------------------------------------


def test_allan_white_rate_noise_reads_n_at_one_second():
    # IEEE Std 952-1997: white rate noise of density N (angle random walk) has
    # sigma(tau) = N / sqrt(tau); read N at tau = 1 s.
    n_trials, n, dt, dens = 16, 20_000, 0.01, 0.003  # rad/s/sqrt(Hz)
    x = white_sequence(TrialStreams(SEED, n_trials), "allan.white", n, density_to_sd(dens, dt))
    taus = np.array([0.1, 1.0, 10.0])
    got = pooled_adev(x, dt, taus)
    for tau, value in zip(taus, got, strict=True):
        lo, hi = adev_bounds(n_trials * edf_white(n + 1, round(tau / dt)))
        assert lo < value / (dens / math.sqrt(tau)) < hi, (tau, value)


def test_allan_rate_random_walk():
    # IEEE Std 952-1997: rate random walk K gives sigma(tau) = K sqrt(tau / 3). Sampling
    # the walk every dt adds a factor sqrt(1 + 1/(2 m^2)) (m = tau/dt >= 100 here: < 3e-5).
    n_trials, n, dt, k = 16, 20_000, 0.1, 2e-4  # rad/s/sqrt(s)
    x = random_walk_sequence(TrialStreams(SEED, n_trials), "allan.rrw", n, k, dt)
    taus = np.array([10.0, 30.0, 100.0])
    got = pooled_adev(x, dt, taus)
    for tau, value in zip(taus, got, strict=True):
        lo, hi = adev_bounds(n_trials * edf_rw(n + 1, round(tau / dt)))
        assert lo < value / (k * math.sqrt(tau / 3.0)) < hi, (tau, value)


def test_allan_agrees_with_allantools():
    # allantools.oadev (NIST SP 1065 overlapping Allan deviation from frequency data)
    rng = np.random.default_rng(7)
    dt = 0.1
    x = rng.standard_normal((3, 5000)) * 0.02 + np.cumsum(rng.standard_normal((3, 5000)), axis=1) * 1e-3 + 0.5
    taus = allan_taus(5000, dt, per_decade=8)
    ours = allan_deviation(x, dt, taus)
    assert ours.shape == (3, taus.size)
    for row in range(3):
        taus_ref, ref, _, _ = allantools.oadev(x[row], rate=1.0 / dt, data_type="freq", taus=taus)
        np.testing.assert_allclose(taus_ref, taus, rtol=1e-12)
        np.testing.assert_allclose(ours[row], ref, rtol=1e-9)
    # time along another axis gives the same numbers
    moved = allan_deviation(np.moveaxis(x[:, :, None], 1, 0), dt, taus, axis=0)
    np.testing.assert_allclose(np.moveaxis(moved, 0, 1)[:, :, 0], ours, rtol=1e-12)


def test_allan_bad_taus_are_named():
    x = np.zeros((2, 100))
    for taus in ([0.15], [0.0], [6.0], [[0.1, 0.2]]):  # not a multiple, zero, m > n/2, 2-D
        with pytest.raises(ParameterError) as err:
            allan_deviation(x, 0.1, taus)
        assert err.value.field == "taus_s"
    with pytest.raises(ParameterError) as err:
        allan_deviation(x, -0.1, [0.1])
    assert err.value.field == "dt_s"


def test_gauss_markov_allan_closed_form_and_peak_constants():
    # El-Sheimy, Hou & Niu (2008) closed form, written out here independently; its
    # maximum (found with scipy) gives the peak constants the IMU model relies on.
    tau = np.array([0.05, 0.5, 1.0, 2.0, 10.0, 1e3])  # tau/T_c >= 0.025: the written-out form keeps full precision
    np.testing.assert_allclose(gauss_markov_allan_variance(tau, 1.3, 2.0), el_sheimy_gm_avar(tau, 1.3, 2.0), rtol=1e-9)
    # El-Sheimy et al. (2008): for tau << T_c the process looks like a rate random walk
    # with K^2 = q_c^2 = 2 sigma^2 / T_c, i.e. sigma_A^2 = K^2 tau / 3
    assert gauss_markov_allan_variance(2e-6, 1.3, 2.0) == pytest.approx(2 * 1.3**2 / 2.0 * 2e-6 / 3, rel=1e-5)
    res = optimize.minimize_scalar(
        lambda x: -el_sheimy_gm_avar(x, 1.0, 1.0), bounds=(0.5, 5.0), method="bounded", options={"xatol": 1e-10}
    )
    assert GM_ADEV_PEAK_TAU_RATIO == pytest.approx(res.x, rel=1e-6)
    assert GM_ADEV_PEAK_RATIO == pytest.approx(math.sqrt(-res.fun), rel=1e-9)
    # IEEE Std 952-1997: flicker (bias instability) floor sqrt(2 ln 2 / pi) B = 0.664 B
    assert FLICKER_FLOOR_FACTOR == pytest.approx(0.664, abs=5e-4)


def test_simulated_gauss_markov_matches_el_sheimy():
    # dt / T_c = 0.005, so point sampling against the continuous-time averages of the
    # closed form differs by well under the statistical bounds.
    n_trials, n, dt, sigma, tc = 16, 40_000, 0.1, 1.0, 20.0
    b = gauss_markov_sequence(TrialStreams(SEED, n_trials), "allan.gm", n, sigma, tc, dt)
    taus = np.array([5.0, GM_ADEV_PEAK_TAU_RATIO * tc, 100.0, 400.0])
    taus = np.round(taus / dt) * dt
    got = pooled_adev(b, dt, taus)
    expected = np.sqrt(el_sheimy_gm_avar(taus, sigma, tc))
    for tau, value, exp in zip(taus, got, expected, strict=True):
        lo, hi = adev_bounds(n_trials * edf_rw(n + 1, round(tau / dt)))
        assert lo < value / exp < hi, (tau, value / exp)


# ---------------------------------------------------------------------------
# IMU from a preset
# ---------------------------------------------------------------------------


def test_preset_gyro_and_accel_random_walks_at_one_second():
    # IEEE Std 952-1997: the Allan deviation at tau = 1 s reads the angle (velocity)
    # random walk, with N [rad/s/sqrt(Hz)] = ARW [deg/sqrt(h)] * (pi/180) / 60 and
    # VRW [m/s^2/sqrt(Hz)] = VRW [m/s/sqrt(h)] / 60. The Gauss-Markov bias adds its
    # own (El-Sheimy) Allan variance at 1 s, 0.2 % of N^2 here, allowed for in the
    # upper bound (sigma_GM = 1.076 B = (0.664/0.617) B, see wavebench.sensors.imu);
    # constants (turn-on bias) do not enter the Allan variance.
    grade = imu_grade("consumer_mems")
    n_trials, n, dt = 8, 30_000, 0.01
    zero = np.zeros((n_trials, n, 3))
    meas = imu_measure(TrialStreams(SEED, n_trials), grade, zero, zero, dt)
    lo, hi = adev_bounds(3 * n_trials * edf_white(n + 1, 100))
    checks = [
        (
            meas.gyro_rad_s,
            grade.gyro_arw_deg_per_sqrt_h * DEG / 60.0,
            1.076 * grade.gyro_bias_instability_deg_per_h * DEG / 3600.0,
            grade.gyro_bias_corr_time_s,
        ),
        (
            meas.accel_mps2,
            grade.accel_vrw_mps_per_sqrt_h / 60.0,
            1.076 * grade.accel_bias_instability_mps2,
            grade.accel_bias_corr_time_s,
        ),
    ]
    for signal, n_density, sigma_gm, tc in checks:
        got = float(pooled_adev(signal, dt, np.array([1.0]))[0])
        extra = math.sqrt(1.0 + float(el_sheimy_gm_avar(1.0, sigma_gm, tc)) / n_density**2)
        assert extra < 1.01
        assert lo < got / n_density < hi * extra, (got, n_density)


def test_preset_gyro_bias_instability_floor():
    # IEEE Std 952-1997: bias instability B shows as an Allan-deviation floor of
    # 0.664 B. The model's Gauss-Markov bias touches that value at tau = 1.89 T_c
    # (El-Sheimy et al. 2008 closed form). The white noise is still there at that tau
    # and adds N^2/tau (IEEE Std 952-1997 slope) to the Allan variance: that known
    # part is taken off before comparing with (0.664 B)^2. Tolerance: the chi-square
    # bound on the total Allan variance (RW-FM edf, 24 channels), scaled by
    # total / floor^2 because the white part is subtracted.
    grade = imu_grade("consumer_mems")
    n_trials, n, dt = 8, 80_000, 1.0
    zero = np.zeros((n_trials, n, 3))
    meas = imu_measure(TrialStreams(SEED, n_trials), grade, zero, zero, dt)
    tc = grade.gyro_bias_corr_time_s
    tau = round(GM_ADEV_PEAK_TAU_RATIO * tc / dt) * dt
    got = float(pooled_adev(meas.gyro_rad_s, dt, np.array([tau]))[0])
    floor = 0.664 * grade.gyro_bias_instability_deg_per_h * DEG / 3600.0
    white2 = (grade.gyro_arw_deg_per_sqrt_h * DEG / 60.0) ** 2 / tau
    lo, hi = adev_bounds(3 * n_trials * edf_rw(n + 1, round(tau / dt)))
    scale = (floor**2 + white2) / floor**2
    recovered = (got**2 - white2) / floor**2  # Allan variance of the bias part / (0.664 B)^2
    assert 1 - (1 - lo**2) * scale < recovered < 1 + (hi**2 - 1) * scale, (recovered, lo, hi, scale)
    # the check has teeth: the bound is under 7 % of (0.664 B)^2 in variance (3.5 % in deviation)
    assert (hi**2 - 1) * scale < 0.07


def test_turn_on_bias_and_scale_factor_statistics():
    # Random constants per trial and axis: the ensemble variance over independent trials
    # and axes is chi-square; units: 1 deg/h = (pi/180)/3600 rad/s, 1 ppm = 1e-6.
    n_trials, n, dt = 2000, 5, 0.1
    grade = ImuGrade(
        gyro_turn_on_bias_sd_deg_per_h=100.0,
        gyro_scale_factor_sd_ppm=1000.0,
        accel_turn_on_bias_sd_mps2=0.02,
        accel_scale_factor_sd_ppm=500.0,
    )
    rate = np.full((n_trials, n, 3), 0.5)
    force = np.zeros((n_trials, n, 3))
    force[..., 2] = -9.81
    meas = imu_measure(TrialStreams(SEED, n_trials), grade, rate, force, dt)
    # constant over time, and the measurement is (1 + s) truth + b exactly
    assert np.all(meas.gyro_bias_rad_s == meas.gyro_bias_rad_s[:, :1])
    np.testing.assert_allclose(
        meas.gyro_rad_s, (1 + meas.gyro_scale_factor[:, None, :]) * rate + meas.gyro_bias_rad_s, rtol=1e-15
    )
    lo, hi = stats.chi2.ppf([ALPHA / 2, 1 - ALPHA / 2], 3 * n_trials) / (3 * n_trials)
    for values, sd in [
        (meas.gyro_bias_rad_s[:, 0], 100.0 * DEG / 3600.0),
        (meas.gyro_scale_factor, 1e-3),
        (meas.accel_bias_mps2[:, 0], 0.02),
        (meas.accel_scale_factor, 5e-4),
    ]:
        assert lo < float(np.mean(values**2)) / sd**2 < hi


# ---------------------------------------------------------------------------
# Batching, streams, presets and bad inputs
# ---------------------------------------------------------------------------


def test_imu_trial_alone_is_bit_identical_to_trial_in_batch():
    trials = [3, 0, 8, 5, 1]
    arw = np.array([0.1, 0.5, 0.0, 0.2, 0.3])
    base = imu_grade("industrial_mems", gyro_rrw_deg_per_h_per_sqrt_h=5.0, accel_bias_rw_mps2_per_sqrt_h=1e-3)
    n, dt = 200, 0.02
    t = np.arange(n) * dt
    rate = np.stack([np.stack([np.sin(t + i), np.cos(t), 0.1 * t], axis=-1) for i in range(len(trials))])
    force = rate[..., ::-1] * 3.0
    batch = imu_measure(
        TrialStreams(SEED, trials), dataclasses.replace(base, gyro_arw_deg_per_sqrt_h=arw), rate, force, dt
    )
    for pos, trial in enumerate(trials):
        alone = imu_measure(
            TrialStreams(SEED, [trial]),
            dataclasses.replace(base, gyro_arw_deg_per_sqrt_h=float(arw[pos])),
            rate[pos : pos + 1],
            force[pos : pos + 1],
            dt,
        )
        for field in dataclasses.fields(alone):
            a, b = getattr(alone, field.name), getattr(batch, field.name)
            assert a[0].tobytes() == b[pos].tobytes(), field.name


def test_each_error_term_has_its_own_stream():
    # changing the accelerometer figures does not touch one bit of the gyro output
    s = TrialStreams(SEED, 4)
    zero = np.zeros((4, 300, 3))
    a = imu_measure(s, imu_grade("tactical"), zero, zero, 0.01)
    b = imu_measure(
        s, imu_grade("tactical", accel_vrw_mps_per_sqrt_h=0.5, accel_scale_factor_sd_ppm=0.0), zero, zero, 0.01
    )
    assert a.gyro_rad_s.tobytes() == b.gyro_rad_s.tobytes()
    assert not np.array_equal(a.accel_mps2, b.accel_mps2)
    # a second IMU with its own purpose prefix draws other numbers
    c = imu_measure(s, imu_grade("tactical"), zero, zero, 0.01, purpose="imu2")
    assert not np.array_equal(a.gyro_rad_s, c.gyro_rad_s)


def test_planar_subset_of_axes():
    s = TrialStreams(SEED, 2)
    zero = np.zeros((2, 50, 1))  # yaw rate only, e.g. a surface craft's heading gyro
    meas = imu_measure(s, imu_grade("tactical"), zero, zero, 0.1)
    assert meas.gyro_rad_s.shape == (2, 50, 1) and meas.gyro_scale_factor.shape == (2, 1)


def test_presets_follow_the_published_grade_table():
    # El-Sheimy & Youssef (2020), Satellite Navigation 1:2, Table 1: gyro drift
    # commercial 0.1 deg/s, tactical 1-10 deg/h, navigation < 0.01 deg/h; accelerometer
    # bias commercial 100-1000 ug, tactical 1-5 mg, navigation < 100 ug.
    ug = 1e-6 * G_STANDARD
    consumer, tactical, nav = IMU_GRADES["consumer_mems"], IMU_GRADES["tactical"], IMU_GRADES["navigation"]
    assert consumer.gyro_turn_on_bias_sd_deg_per_h == pytest.approx(0.1 * 3600)
    assert 100 * ug <= consumer.accel_turn_on_bias_sd_mps2 <= 1000 * ug * (1 + 1e-12)
    assert 1.0 <= tactical.gyro_turn_on_bias_sd_deg_per_h <= 10.0
    assert 1.0 <= tactical.gyro_bias_instability_deg_per_h <= 10.0
    assert 1000 * ug * (1 - 1e-12) <= tactical.accel_turn_on_bias_sd_mps2 <= 5000 * ug
    assert nav.gyro_turn_on_bias_sd_deg_per_h <= 0.01
    assert nav.accel_turn_on_bias_sd_mps2 < 100 * ug
    assert set(IMU_GRADES) == {"consumer_mems", "industrial_mems", "tactical", "navigation"}


def test_bad_grade_and_inputs_are_named():
    with pytest.raises(ParameterError) as err:
        ImuGrade(gyro_arw_deg_per_sqrt_h=-0.1)
    assert err.value.field == "gyro_arw_deg_per_sqrt_h"
    with pytest.raises(ParameterError) as err:
        ImuGrade(accel_vrw_mps_per_sqrt_h=-1.0)
    assert err.value.field == "accel_vrw_mps_per_sqrt_h"
    with pytest.raises(ParameterError) as err:
        ImuGrade(gyro_bias_corr_time_s=0.0)
    assert err.value.field == "gyro_bias_corr_time_s"
    with pytest.raises(ParameterError) as err:
        imu_grade("tactcal")
    assert err.value.field == "grade" and "tactical" in str(err.value)
    s = TrialStreams(SEED, 2)
    with pytest.raises(ParameterError) as err:
        imu_measure(s, imu_grade("tactical"), np.zeros((2, 10, 3)), np.zeros((2, 10, 2)), 0.1)
    assert err.value.field == "true_specific_force_mps2"
    with pytest.raises(ParameterError) as err:
        imu_measure(s, imu_grade("tactical"), np.zeros((3, 10, 3)), np.zeros((3, 10, 3)), 0.1)
    assert err.value.field == "true_rate_rad_s"
    with pytest.raises(ParameterError) as err:
        imu_measure(s, imu_grade("tactical"), np.zeros((2, 10, 3)), np.zeros((2, 10, 3)), -0.1)
    assert err.value.field == "dt_s"
    with pytest.raises(ParameterError) as err:  # per-trial array of the wrong length
        imu_measure(
            s,
            imu_grade("tactical", gyro_arw_deg_per_sqrt_h=np.ones(3)),
            np.zeros((2, 10, 3)),
            np.zeros((2, 10, 3)),
            0.1,
        )
    assert err.value.field == "gyro_arw_deg_per_sqrt_h"
