"""The navigator role in closed loop: the compiled filter, its consistency, and the engines agreeing."""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
from scipy import stats

from wavebench.campaign import run_campaign
from wavebench.navigation.kalman import ekf_update
from wavebench.spec import example_spec_path, load_spec
from wavebench.trial import nav_kernel as nk

SENSORS = """
[sensors.gps]
kind = "gnss"
rate_hz = 1.0
outages_s = OUTAGES

[sensors.gps.gnss]
horizontal_sd_m = 1.5

[sensors.mag]
kind = "compass"
rate_hz = 10.0

[sensors.mag.compass]
bias_deg = BIAS

[sensors.ins]
kind = "imu"
rate_hz = 10.0
grade = "tactical"

[sensors.log]
kind = "dvl"
rate_hz = 5.0
"""


def spec_text(outages: str = "[]", navigator: str = "ekf", duration_s: float = 200.0, bias_deg: float = 0.0,
              dvl: bool = True) -> str:  # fmt: skip
    base = example_spec_path("skerrow_sound").read_text(encoding="utf-8")
    base = base.replace('navigator = "truth"', f'navigator = "{navigator}"')
    base = base.replace("duration_s = 600.0", f"duration_s = {duration_s}")
    sensors = SENSORS.replace("OUTAGES", outages).replace("BIAS", str(bias_deg))
    if not dvl:
        sensors = sensors[: sensors.index("[sensors.log]")]
    return base + sensors


# --- the compiled update against the batched library filter ---------------------------------------------------


def _random_cov(rng: np.random.Generator, n: int) -> np.ndarray:
    a = rng.normal(size=(n, n))
    return a @ a.T + n * np.eye(n)


def test_scalar_and_fix_updates_equal_the_library_ekf_update() -> None:
    # The library's ekf_update is checked step by step against filterpy's KalmanFilter (tests/test_kalman.py);
    # sequential scalar updates linearised at the prior equal the vector update for a diagonal R
    # (Bar-Shalom, Li & Kirubarajan 2001, sequential processing of measurements).
    rng = np.random.default_rng(4)
    for _ in range(20):
        x = rng.normal(size=nk.NX)
        P = _random_cov(rng, nk.NX)
        lx, ly = rng.normal(size=2)
        z = rng.normal(size=2) * 3.0
        var = 0.7

        def h(xb, lx=lx, ly=ly):
            c, s = np.cos(xb[:, 2]), np.sin(xb[:, 2])
            return np.stack([xb[:, 0] + c * lx - s * ly, xb[:, 1] + s * lx + c * ly], axis=1)

        def jac(xb, lx=lx, ly=ly):
            c, s = np.cos(xb[:, 2]), np.sin(xb[:, 2])
            out = np.zeros((xb.shape[0], 2, nk.NX))
            out[:, 0, 0] = out[:, 1, 1] = 1.0
            out[:, 0, 2] = -s * lx - c * ly
            out[:, 1, 2] = c * lx - s * ly
            return out

        ref = ekf_update(x[None], P[None], z[None], h, jac, np.eye(2) * var)
        c, s = np.cos(x[2]), np.sin(x[2])
        h1 = np.zeros(nk.NX)
        h2 = np.zeros(nk.NX)
        h1[0], h1[2] = 1.0, -s * lx - c * ly
        h2[1], h2[2] = 1.0, c * lx - s * ly
        nu = z - h(x[None])[0]
        xk, Pk = x.copy(), P.copy()
        nis, accepted = nk._fix_update(xk, Pk, h1, h2, nu[0], nu[1], var, np.zeros(nk.NX), np.zeros(nk.NX), False, 0.0)
        assert accepted
        np.testing.assert_allclose(xk, ref.x[0], rtol=1e-10, atol=1e-12)
        np.testing.assert_allclose(Pk, ref.P[0], rtol=1e-9, atol=1e-11)
        assert nis == pytest.approx(float(ref.nis[0]), rel=1e-10)


def test_the_fix_gate_rejects_an_outlier_but_not_forever() -> None:
    # Gate at the chi-square(2) 0.9999 point (scipy.stats.chi2 gives the same value as -2 ln 1e-4).
    assert nk.GATE_NIS_2DOF == pytest.approx(stats.chi2.ppf(0.9999, 2), rel=1e-12)
    x = np.zeros(nk.NX)
    P = np.eye(nk.NX)
    h1 = np.zeros(nk.NX)
    h2 = np.zeros(nk.NX)
    h1[0] = h2[1] = 1.0
    work = np.zeros(nk.NX)
    nis, ok = nk._fix_update(x.copy(), P.copy(), h1, h2, 50.0, 0.0, 1.0, work, work.copy(), True, 0.0)
    assert not ok and nis == pytest.approx(50.0**2 / 2.0)
    _, ok = nk._fix_update(x.copy(), P.copy(), h1, h2, 50.0, 0.0, 1.0, work, work.copy(), True, float(nk.MAX_REJECTS))
    assert ok


def test_mechanisation_follows_a_constant_turn() -> None:
    # Constant surge u and yaw rate r: the track is a circle of radius u / r (plane kinematics, e.g. Fossen 2021
    # ch. 2): after time t, north = (u/r) sin(r t), east = (u/r)(1 - cos(r t)). The IMU then measures
    # f_x = 0 and f_y = r u (centripetal); the trapezoidal mechanisation must follow the circle to O(T^2).
    u, r, T, n = 2.0, 0.05, 0.1, 600
    x = np.zeros((1, nk.NX))
    x[0, 3] = u
    P = np.zeros((1, nk.NX, nk.NX))
    diag = np.zeros((1, nk.N_DIAG))
    cfg = np.ones(nk.N_CFG, dtype=np.int64)
    par = np.zeros((1, nk.N_PAR))
    par[0, nk.P_BG_PHI] = par[0, nk.P_BA_PHI] = 1.0
    imu_err = np.zeros((1, n, 3))
    work = np.empty(nk.WORK)
    for tick in range(n):
        psi0, psi1 = r * T * tick, r * T * (tick + 1)
        nk.nav_predict_one(0, tick, T, u, 0.0, psi0, u, 0.0, psi1, x, P, diag, cfg, par, imu_err, work)
    t = n * T
    assert diag[0, nk.D_FY] == pytest.approx(r * u, rel=1e-9)
    assert abs(diag[0, nk.D_FX]) < 1e-12
    assert x[0, 0] == pytest.approx(u / r * math.sin(r * t), abs=0.05)
    assert x[0, 1] == pytest.approx(u / r * (1.0 - math.cos(r * t)), abs=0.05)
    assert x[0, 3] == pytest.approx(u, abs=1e-9) and abs(x[0, 4]) < 1e-9


# --- closed loop --------------------------------------------------------------------------------------------


@pytest.fixture(scope="module")
def runs():
    clear = run_campaign(load_spec(spec_text()), trials=8, batch_size=8, progress=False)
    # without the DVL the filter coasts through the outage on the IMU alone; the window ends just after the fix
    # due at 160 s, so the last control period inside it is the recorded sample at 160 s
    outage = run_campaign(load_spec(spec_text("[[40.0, 160.05]]", dvl=False)), trials=8, batch_size=8,
                          progress=False)  # fmt: skip
    return clear, outage


def test_ekf_beats_the_raw_fixes(runs) -> None:
    clear, _ = runs
    m = clear.metrics
    assert (m["ended"] != "failed").all()
    # A raw fix with independent N(0, sd^2) errors per axis has RMS horizontal error sqrt(2) sd (chi distribution,
    # 2 degrees of freedom): fusing the fixes with the IMU and DVL must do much better.
    assert (m["nav_err_rms_m"] < 0.5 * math.sqrt(2.0) * 1.5).all()


def test_gnss_innovations_are_consistent(runs) -> None:
    # Time-averaged NIS over N runs and K fixes of a 2-dof measurement: N K ANIS ~ chi2(2 N K) for a consistent
    # filter; two-sided 95 % region (Bar-Shalom, Li & Kirubarajan 2001, ch. 5.4). The GNSS error is white and
    # modelled exactly, so the region must hold (fixes are close to independent at 1 Hz).
    clear, _ = runs
    m = clear.metrics
    assert m["time_to_complete_s"].isna().all()  # every trial runs the whole 200 s: 200 fixes each at 1 Hz
    n_fixes = 8 * 200
    anis = float(m["nis_mean"].mean())  # equal counts per trial: the pooled average
    lo, hi = stats.chi2.ppf([0.025, 0.975], 2 * n_fixes) / n_fixes
    assert lo <= anis <= hi, (lo, anis, hi)


def test_the_recorded_drms_is_the_filters_own_accuracy_claim(runs) -> None:
    # For an unbiased estimate with covariance P, E[e_n^2 + e_e^2] = P_nn + P_ee = DRMS^2 (definition of the
    # covariance; Bar-Shalom, Li & Kirubarajan 2001, ch. 5.4 for the consistency idea). The GNSS-aided filter is
    # close to consistent (its NIS test above), so the pooled ratio of mean squared error to mean DRMS^2 must be near
    # 1 (0.5..1.5 allows the process-noise floors that make it a little pessimistic). For a 2-D Gaussian error the
    # circle of radius 2 DRMS holds 95.4 % (very elongated) to 98.2 % (circular) of the errors (the usual "2DRMS"
    # figure); ask for 90 % of the samples to allow for the correlation between samples.
    clear, outage = runs
    ts = clear.timeseries
    err, drms = ts["nav_err_m"].values[:, 1:], ts["nav_drms_m"].values[:, 1:]
    ok = np.isfinite(err) & np.isfinite(drms)
    assert ok.sum() > 1000
    ratio = np.mean(err[ok] ** 2) / np.mean(drms[ok] ** 2)
    assert 0.5 < ratio < 1.5, ratio
    assert np.mean(err[ok] <= 2.0 * drms[ok]) >= 0.9
    # through the outage (40-160 s) the claim grows, and recovers after the fixes return
    t = outage.timeseries["time"].values
    d = outage.timeseries["nav_drms_m"].values
    before, inside = d[:, np.searchsorted(t, 39.0)], d[:, np.searchsorted(t, 159.0)]
    assert (inside > 3.0 * before).all()


def test_an_unmodelled_compass_bias_makes_the_filter_optimistic() -> None:
    # The same check with a 3 deg compass bias that the filter does not estimate: the heading error is far larger
    # than the filter believes, and the time-averaged NEES leaves the chi-square region above
    # (Bar-Shalom, Li & Kirubarajan 2001, ch. 5.4).
    good = run_campaign(load_spec(spec_text(duration_s=120.0)), trials=6, progress=False).metrics
    bad = run_campaign(load_spec(spec_text(duration_s=120.0, bias_deg=3.0)), trials=6, progress=False).metrics
    n_samples = 1200  # control periods per trial
    upper = stats.chi2.ppf(0.975, 5 * 6 * n_samples) / (6 * n_samples)
    assert bad["nees_mean"].mean() > 10.0 * upper
    assert good["nees_mean"].mean() < bad["nees_mean"].mean() / 10.0


def test_an_outage_grows_the_error_and_the_fix_flag_shows_it(runs) -> None:
    clear, outage = runs
    m = outage.metrics
    assert (m["ended"] != "failed").all()
    # against the same trials (same seeds, with a DVL and the fixes) at the same moment
    clear_at_end = clear.timeseries["nav_err_m"].sel(time=160.0).values
    ratio = m["nav_err_outage_end_m"].to_numpy() / clear_at_end
    assert (ratio > 1.0).all() and np.median(ratio) > 2.0, ratio
    # the metric is the error at the last control period inside the window, before the first fix
    ds = outage.timeseries
    at_end = ds["nav_err_m"].sel(time=160.0).values
    np.testing.assert_allclose(m["nav_err_outage_end_m"].to_numpy(), at_end, rtol=1e-6)
    assert clear.metrics["nav_err_outage_end_m"].isna().all()
    fix = ds["fix_ok"].sel(time=slice(41.0, 159.0)).values
    assert (fix == 0.0).all()
    after = ds["fix_ok"].sel(time=slice(165.0, 195.0)).values
    assert (after[np.isfinite(after)] == 1.0).mean() > 0.95


def test_dead_reckoning_error_grows_while_the_ekf_stays_bounded() -> None:
    ekf = run_campaign(load_spec(spec_text(duration_s=300.0)), trials=4, progress=False)
    dr = run_campaign(load_spec(spec_text(navigator="dead_reckoning", duration_s=300.0)), trials=4, progress=False)
    assert dr.metrics["nis_mean"].isna().all()  # no fixes used
    err = dr.timeseries["nav_err_m"]
    early = err.sel(time=slice(20.0, 60.0)).mean("time")
    late = err.sel(time=slice(240.0, 280.0)).mean("time")
    assert (late > early).all() and float((late / early).median()) > 2.0
    # the EKF's error is held by the fixes: no growth from the first minute to the last
    e = ekf.timeseries["nav_err_m"]
    assert (e.sel(time=slice(240.0, 280.0)).mean("time") < 2.0 * e.sel(time=slice(20.0, 60.0)).mean("time")).all()


def test_truth_navigation_has_no_navigation_error() -> None:
    res = run_campaign(load_spec(spec_text(navigator="truth", duration_s=20.0)), trials=2, progress=False)
    assert res.metrics["nav_err_rms_m"].isna().all() and res.metrics["nees_mean"].isna().all()
    assert np.isnan(res.timeseries["nav_err_m"].values).all()


def test_ekf_campaign_same_bits_whatever_the_batch_size() -> None:
    spec = load_spec(spec_text("[[20.0, 40.0]]", duration_s=60.0))
    a = run_campaign(spec, trials=5, batch_size=5, progress=False)
    b = run_campaign(spec, trials=5, batch_size=2, progress=False)
    pd.testing.assert_frame_equal(a.metrics, b.metrics, check_exact=True)
    assert a.timeseries.equals(b.timeseries)
    assert np.isfinite(a.metrics["nav_err_rms_m"]).all()


def test_the_engines_agree_with_a_navigator() -> None:
    # The Python loop with the numpy blocks is the oracle; the navigator is the same compiled function in every
    # engine, so only the control arithmetic may differ (about 1e-15 relative per period, see tests/test_fused.py).
    spec = load_spec(spec_text("[[20.0, 40.0]]", duration_s=60.0))
    ref = run_campaign(spec, trials=3, progress=False, engine="numpy").metrics
    for engine in ("tick", "fused"):
        got = run_campaign(spec, trials=3, progress=False, engine=engine).metrics
        for col in ("xte_rms_m", "nav_err_rms_m", "nav_err_max_m", "nees_mean", "nis_mean", "energy_kj"):
            np.testing.assert_allclose(got[col], ref[col], rtol=1e-7, err_msg=f"{engine}: {col}")


def _swap_sensors(text: str, replacement: str) -> str:
    return text[: text.index("[sensors.gps]")] + replacement + text[text.index("[sensors.ins]"):]


def test_beacon_ranges_fix_the_position_without_gnss() -> None:
    # Three fixed beacons around the route, 0.3 m range noise (the acoustic model's slant range and sound-speed
    # scaling); the EKF takes the ranges as scalar updates. With the ranges alone for position, the error must stay
    # near the range noise, far below dead reckoning's drift over the same run.
    beacons = """
[sensors.lbl]
kind = "acoustic"
rate_hz = 1.0
beacons_ned_m = [[-100.0, -100.0, 30.0], [400.0, 0.0, 30.0], [150.0, 700.0, 30.0]]

[sensors.lbl.acoustic]
noise_sd_m = 0.3

[sensors.mag]
kind = "compass"
rate_hz = 10.0

"""
    # The water is 10 degC, 35 ppt (the navigator's choice); a receiver that assumes the Mackenzie (1981) speed
    # there has no scale error, one that assumes 1500 m/s reads every range long by the speed ratio.
    from wavebench.sensors.ranging import mackenzie_sound_speed
    from wavebench.trial.navigator import WATER_S_PPT, WATER_T_C

    c_true = float(mackenzie_sound_speed(WATER_T_C, WATER_S_PPT, 30.0))
    text = _swap_sensors(spec_text(duration_s=150.0), beacons)
    matched = run_campaign(load_spec(text, [f"sensors.lbl.acoustic.assumed_sound_speed_mps={c_true!r}"]), trials=4,
                           progress=False).metrics  # fmt: skip
    assert (matched["ended"] != "failed").all()
    assert (matched["nav_err_rms_m"] < 0.6).all(), matched["nav_err_rms_m"]
    assert np.isfinite(matched["nees_mean"]).all() and matched["nis_mean"].isna().all()  # NIS: GNSS fixes only
    # the kernel's reading against the library's acoustic range model for the same geometry
    from wavebench.core.streams import TrialStreams
    from wavebench.sensors.ranging import AcousticRangeParams, acoustic_range
    from wavebench.spec import build_environment
    from wavebench.trial import build_trial_setup

    spec = load_spec(text)
    setup = build_trial_setup(spec, build_environment(spec, TrialStreams(1, range(2))))
    lib = acoustic_range(np.array([[0.0, 0.0, 30.0]]), np.array([[400.0, 0.0, 30.0]]), AcousticRangeParams(),
                         sound_speed_mps=c_true)  # fmt: skip
    np.testing.assert_allclose(400.0 * setup.nav.par[:, nk.P_AC_SCALE], np.ravel(lib.range_m)[0], rtol=1e-12)
    assert np.ravel(lib.range_m)[0] > 400.0  # assumed 1500 m/s is faster than the water: ranges read long
    scaled = run_campaign(spec, trials=4, progress=False).metrics
    # ranges of a few hundred metres read long by 1 - c_true / 1500 (about 0.7 %): metres of error, not decimetres
    assert (scaled["nav_err_rms_m"] > 0.5 * (1.0 - c_true / 1500.0) * 300.0).all()
    assert (scaled["nav_err_rms_m"] > 2.0 * matched["nav_err_rms_m"]).all()


def test_a_gyrocompass_heading_source_runs_within_its_error_budget() -> None:
    # IMO A.424(XI): settle-point error within 0.75 deg sec(latitude); the scenario origin is at 47.5 deg N.
    gyro = """
[sensors.gps]
kind = "gnss"
rate_hz = 1.0

[sensors.gyro]
kind = "gyrocompass"
rate_hz = 10.0

"""
    spec = load_spec(_swap_sensors(spec_text(duration_s=120.0), gyro))
    m = run_campaign(spec, trials=4, progress=False).metrics
    assert (m["ended"] != "failed").all() and np.isfinite(m["nav_err_rms_m"]).all()
    # each trial's settle-point error is drawn uniformly within the bound at the scenario's latitude
    from wavebench.core.streams import TrialStreams
    from wavebench.spec import build_environment
    from wavebench.trial import build_trial_setup
    from wavebench.trial import nav_kernel as nk_

    setup = build_trial_setup(spec, build_environment(spec, TrialStreams(spec.campaign.seed, range(4))))
    settle_deg = np.degrees(setup.nav.par[:, nk_.P_HEAD_BIAS])
    bound_deg = 0.75 / math.cos(math.radians(47.5))  # IMO A.424(XI) settle-point limit x sec(latitude)
    assert (np.abs(settle_deg) <= bound_deg).all() and np.ptp(settle_deg) > 0.0
