"""Tests of the current block (wavebench.sea.current)."""

from __future__ import annotations

import math

import numpy as np
import pytest
import xarray as xr
from scipy.interpolate import RegularGridInterpolator

from wavebench.core.errors import ParameterError
from wavebench.core.params import params_from_dict
from wavebench.core.streams import TrialStreams
from wavebench.sea.current import (
    M2_PERIOD_H,
    S2_PERIOD_H,
    CurrentModel,
    CurrentVariationParams,
    EddyCurrentParams,
    GriddedCurrent,
    JetCurrentParams,
    TidalCurrentParams,
    UniformCurrentParams,
    WindDrivenCurrentParams,
    current_velocity_ned,
    eddy_velocity_ned,
    gauss_markov_record,
    gridded_current_from_dataset,
    gridded_velocity_ned,
    init_current,
    jet_velocity_ned,
    linear_profile,
    power_law_profile,
    tidal_along_axis_speed,
)

# ---------------------------------------------------------------------------
# First-order Gauss--Markov process
# ---------------------------------------------------------------------------


def _ar1_lag_corr_std(phi: float, lag: int, n: int) -> float:
    """Std of the sample autocorrelation at ``lag`` of an AR(1) series of n samples.

    Bartlett's (1946) large-sample formula specialised to AR(1) (as given in
    Box, Jenkins & Reinsel, Time Series Analysis):
    Var r_m = [(1 + phi^2)(1 - phi^(2m)) / (1 - phi^2) - 2 m phi^(2m)] / n
    (formula from memory, not re-checked).
    """
    p2m = phi ** (2 * lag)
    return math.sqrt(((1 + phi**2) * (1 - p2m) / (1 - phi**2) - 2 * lag * p2m) / n)


def _ar1_var_rel_std(phi: float, n: int) -> float:
    """Relative std of the mean of squares of a zero-mean Gaussian AR(1) series.

    Var(mean x^2) = (2 sigma^4 / n) sum_k rho_k^2 = (2 sigma^4 / n)(1 + phi^2)/(1 - phi^2)
    (Bartlett (1946); standard result for the sample variance of a Gaussian series).
    """
    return math.sqrt(2.0 * (1 + phi**2) / (1 - phi**2) / n)


def _pooled_stats(x: np.ndarray, lag: int) -> tuple[float, float]:
    """Mean square (the mean is known to be 0) and lag-``lag`` autocorrelation, pooled."""
    var = float(np.mean(x * x))
    corr = float(np.sum(x[:, lag:] * x[:, :-lag]) / np.sum(x[:, :-lag] ** 2))
    return var, corr


@pytest.mark.parametrize(("dt_s", "n_samples"), [(1.0, 50_000), (10.0, 20_000)])
def test_gauss_markov_stationary_stats_any_dt(dt_s: float, n_samples: int) -> None:
    # Brown & Hwang, Introduction to Random Signals and Applied Kalman Filtering:
    # exact discretisation phi = exp(-dt/Tc), Var w = sigma^2 (1 - phi^2) gives a
    # stationary variance sigma^2 and lag-m autocorrelation exp(-m dt / Tc) for ANY dt.
    # (An Euler discretisation would give sigma^2 / (1 - dt/(2 Tc)), 11 % high at dt = 10 s:
    # the tolerances below are 5 standard errors, ~2.5 % at dt = 10 s.)
    sigma, tc = 0.3, 50.0
    n_trials = 20
    x = gauss_markov_record(
        TrialStreams(seed=11, trials=n_trials),
        "test.gm",
        [sigma],
        [tc],
        dt_s=dt_s,
        n_samples=n_samples,
    )[:, :, 0]
    n_total = n_trials * n_samples
    phi = math.exp(-dt_s / tc)
    var, r1 = _pooled_stats(x, 1)
    assert abs(var / sigma**2 - 1.0) < 5 * _ar1_var_rel_std(phi, n_total)
    assert abs(r1 - phi) < 5 * _ar1_lag_corr_std(phi, 1, n_total)
    # the same physical lag (10 s) in both records: exp(-10/50)
    lag = round(10.0 / dt_s)
    _, r10s = _pooled_stats(x, lag)
    assert abs(r10s - math.exp(-10.0 / tc)) < 5 * _ar1_lag_corr_std(phi, lag, n_total)


def test_gauss_markov_stationary_start() -> None:
    # Brown & Hwang: a stationary process has Var x(0) = sigma^2 at the first sample too.
    # Across 4000 independent trials the sample variance of x[0] has relative
    # std sqrt(2/4000) = 2.2 % (chi-square with n-1 dof); tolerance 5 std.
    sigma = 2.0
    x0 = gauss_markov_record(
        TrialStreams(seed=5, trials=4000), "test.gm0", [sigma], [30.0], dt_s=1.0, n_samples=1
    )[:, 0, 0]
    assert abs(np.mean(x0**2) / sigma**2 - 1.0) < 5 * math.sqrt(2.0 / 4000)


def test_current_variation_channels_use_their_sigmas() -> None:
    # Brown & Hwang stationary variance, through the public model: speed sigma in m/s,
    # set sigma given in degrees and stored in radians.
    var = CurrentVariationParams(
        speed_sigma_mps=0.1, speed_tc_s=20.0, set_sigma_deg=8.0, set_tc_s=40.0
    )
    model = CurrentModel(uniform=UniformCurrentParams(speed_mps=1.0), variation=var)
    state = init_current(model, TrialStreams(seed=2, trials=40), duration_s=20_000.0, dt_s=2.0)
    x = state.variation.values
    n_total = x.shape[0] * x.shape[1]
    for channel, sigma, tc in ((0, 0.1, 20.0), (1, math.radians(8.0), 40.0)):
        phi = math.exp(-2.0 / tc)
        v, r1 = _pooled_stats(x[:, :, channel], 1)
        assert abs(v / sigma**2 - 1.0) < 5 * _ar1_var_rel_std(phi, n_total)
        assert abs(r1 - phi) < 5 * _ar1_lag_corr_std(phi, 1, n_total)


def test_record_query_outside_is_an_error() -> None:
    model = CurrentModel(
        uniform=UniformCurrentParams(speed_mps=1.0),
        variation=CurrentVariationParams(speed_sigma_mps=0.1),
    )
    state = init_current(model, TrialStreams(seed=0, trials=3), duration_s=60.0, dt_s=1.0)
    current_velocity_ned(model, state, np.zeros(3), np.zeros(3), 0.0, 60.0)
    with pytest.raises(ParameterError) as exc:
        current_velocity_ned(model, state, np.zeros(3), np.zeros(3), 0.0, 61.0)
    assert exc.value.field == "t_s"


# ---------------------------------------------------------------------------
# Batch slicing (every stochastic part)
# ---------------------------------------------------------------------------


def test_trial_alone_equals_trial_in_batch_of_50() -> None:
    # Architecture principle 4: trial i is bit-identical alone or in a batch.
    model = CurrentModel(
        uniform=UniformCurrentParams(speed_mps=0.6, set_deg=45.0),
        variation=CurrentVariationParams(
            speed_sigma_mps=0.1, speed_tc_s=120.0, set_sigma_deg=10.0, set_tc_s=300.0
        ),
        tidal=TidalCurrentParams(
            flood_set_deg=100.0,
            water_depth_m=30.0,
            amplitudes_mps=[0.8],
            periods_h=[M2_PERIOD_H],
            phases_deg=[20.0],
        ),
    )
    batch = init_current(model, TrialStreams(seed=99, trials=50), duration_s=900.0, dt_s=0.5)
    rng = np.random.default_rng(0)
    north, east = rng.uniform(-500, 500, 50), rng.uniform(-500, 500, 50)
    depth, t = rng.uniform(0, 20, 50), rng.uniform(0, 900, 50)
    v_batch = current_velocity_ned(model, batch, north, east, depth, t)
    for i in (0, 17, 49):
        alone = init_current(model, TrialStreams(seed=99, trials=[i]), duration_s=900.0, dt_s=0.5)
        assert np.array_equal(alone.variation.values[0], batch.variation.values[i])
        v_alone = current_velocity_ned(
            model, alone, north[i : i + 1], east[i : i + 1], depth[i : i + 1], t[i : i + 1]
        )
        assert np.array_equal(v_alone[0], v_batch[i])


# ---------------------------------------------------------------------------
# Uniform current and the set convention
# ---------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("set_deg", "expected"),
    [(0.0, (1.0, 0.0)), (90.0, (0.0, 1.0)), (180.0, (-1.0, 0.0)), (-90.0, (0.0, -1.0))],
)
def test_set_is_the_direction_the_current_flows_toward(set_deg, expected) -> None:
    # Bowditch, The American Practical Navigator (NGA Pub. 9), glossary: "set" is the
    # direction toward which a current flows. NED: [north, east].
    model = CurrentModel(uniform=UniformCurrentParams(speed_mps=1.0, set_deg=set_deg))
    state = init_current(model, TrialStreams(seed=0, trials=1), duration_s=0.0)
    v = current_velocity_ned(model, state, [0.0], [0.0])
    np.testing.assert_allclose(v[0], expected, atol=1e-15)


# ---------------------------------------------------------------------------
# DNV-RP-C205 depth profiles
# ---------------------------------------------------------------------------


def test_power_law_profile_against_dnv_formula() -> None:
    # DNV-RP-C205 (2010), current section: tidal current v(z) = v(0) ((d - z)/d)^(1/7),
    # z positive down, d water depth. d = 50 m:
    #   z = 25 m: (25/50)^(1/7) = 2^(-1/7) = 0.9057236642639067 (hand value)
    #   z = 10 m: (40/50)^(1/7);  z = 49 m: (1/50)^(1/7);  z = 0: 1;  z = d: 0.
    depths = np.array([0.0, 10.0, 25.0, 49.0, 50.0])
    expected = np.array([1.0, 0.8 ** (1 / 7), 0.9057236642639067, 0.02 ** (1 / 7), 0.0])
    np.testing.assert_allclose(power_law_profile(depths, 50.0), expected, rtol=1e-14, atol=0)
    # through the combined model: 1.2 m/s flood toward north, surface speed at z = 25 m
    tidal = TidalCurrentParams(flood_set_deg=0.0, water_depth_m=50.0, mean_speed_mps=1.2)
    model = CurrentModel(tidal=tidal)
    state = init_current(model, TrialStreams(seed=0, trials=5), duration_s=0.0)
    v = current_velocity_ned(model, state, np.zeros(5), np.zeros(5), depths)
    np.testing.assert_allclose(v[:, 0], 1.2 * expected, rtol=1e-14, atol=1e-15)
    np.testing.assert_allclose(v[:, 1], 0.0, atol=1e-15)


def test_power_law_exponent_and_water_depth_override() -> None:
    # DNV-RP-C205 power law with a configurable exponent alpha = 0.2:
    # (d - z)/d = (20 - 5)/20 = 0.75 -> 0.75^0.2; water depth taken from the query.
    tidal = TidalCurrentParams(
        flood_set_deg=90.0, water_depth_m=100.0, mean_speed_mps=1.0, exponent=0.2
    )
    model = CurrentModel(tidal=tidal)
    state = init_current(model, TrialStreams(seed=0, trials=1), duration_s=0.0)
    v = current_velocity_ned(model, state, [0.0], [0.0], 5.0, water_depth_m=20.0)
    assert v[0, 1] == pytest.approx(0.75**0.2, rel=1e-14)


def test_linear_profile_against_dnv_formula() -> None:
    # DNV-RP-C205 (2010), current section: wind-generated current
    # v(z) = v(0) (d0 - z)/d0 for 0 <= z <= d0, zero below; with d0 = 50 m:
    # z = 10 -> 0.8, z = 25 -> 0.5, z = 50 -> 0, z = 70 -> 0.
    depths = np.array([0.0, 10.0, 25.0, 50.0, 70.0])
    np.testing.assert_allclose(
        linear_profile(depths, 50.0), [1.0, 0.8, 0.5, 0.0, 0.0], rtol=1e-15, atol=0
    )
    wind = WindDrivenCurrentParams(surface_speed_mps=0.3, set_deg=90.0, reference_depth_m=50.0)
    model = CurrentModel(wind_driven=wind)
    state = init_current(model, TrialStreams(seed=0, trials=5), duration_s=0.0)
    v = current_velocity_ned(model, state, np.zeros(5), np.zeros(5), depths)
    np.testing.assert_allclose(v[:, 1], 0.3 * np.array([1.0, 0.8, 0.5, 0.0, 0.0]), atol=1e-15)


# ---------------------------------------------------------------------------
# Tidal harmonics
# ---------------------------------------------------------------------------


def test_m2_period_constant() -> None:
    # M2 principal lunar semidiurnal constituent: angular speed 28.9841042 deg/h (IHO
    # standard constituent list; value from memory), period 360/28.9841042 = 12.4206012 h.
    assert M2_PERIOD_H == pytest.approx(12.4206012, abs=1e-7)
    assert S2_PERIOD_H == 12.0


def test_tidal_harmonic_against_hand_evaluated_cosine_sum() -> None:
    # Harmonic tidal stream u(t) = U0 + sum A_k cos(2 pi t / T_k - g_k), with the M2 period
    # 12.4206012 h (astronomical constant, see test_m2_period_constant) and S2 = 12 h,
    # evaluated by hand with math.cos; velocity along the flood axis (set 60 deg).
    tidal = TidalCurrentParams(
        flood_set_deg=60.0,
        water_depth_m=40.0,
        mean_speed_mps=0.05,
        amplitudes_mps=[1.1, 0.35],
        periods_h=[12.4206012, 12.0],
        phases_deg=[40.0, 75.0],
    )
    model = CurrentModel(tidal=tidal)
    times = np.array([0.0, 3.7 * 3600.0, 12.4206012 * 3600.0 / 2.0, 86_400.0])
    state = init_current(model, TrialStreams(seed=0, trials=4), duration_s=0.0)
    v = current_velocity_ned(model, state, np.zeros(4), np.zeros(4), 0.0, times)
    for k, t in enumerate(times):
        u = (
            0.05
            + 1.1 * math.cos(2 * math.pi * t / (12.4206012 * 3600.0) - math.radians(40.0))
            + 0.35 * math.cos(2 * math.pi * t / (12.0 * 3600.0) - math.radians(75.0))
        )
        assert v[k, 0] == pytest.approx(u * math.cos(math.radians(60.0)), abs=1e-12)
        assert v[k, 1] == pytest.approx(u * math.sin(math.radians(60.0)), abs=1e-12)


def test_m2_alone_reverses_after_half_a_period() -> None:
    # A pure M2 stream with zero phase: flood maximum at t = 0, ebb maximum (the
    # same speed, opposite direction) half an M2 period (6.2103006 h) later.
    tidal = TidalCurrentParams(
        flood_set_deg=0.0,
        water_depth_m=40.0,
        amplitudes_mps=[1.0],
        periods_h=[M2_PERIOD_H],
        phases_deg=[0.0],
    )
    model = CurrentModel(tidal=tidal)
    state = init_current(model, TrialStreams(seed=0, trials=2), duration_s=0.0)
    v = current_velocity_ned(model, state, [0.0, 0.0], [0.0, 0.0], 0.0, [0.0, 6.2103006 * 3600])
    np.testing.assert_allclose(v[:, 0], [1.0, -1.0], atol=1e-12)


# ---------------------------------------------------------------------------
# Gridded field
# ---------------------------------------------------------------------------


def _grid_axes() -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    time = np.array([0.0, 600.0, 1500.0, 3600.0])
    north = np.array([-200.0, -50.0, 0.0, 130.0, 400.0])
    east = np.array([0.0, 100.0, 250.0, 300.0, 700.0, 800.0])
    return time, north, east


def test_gridded_reproduces_a_linear_field_exactly() -> None:
    # Property of multilinear interpolation: it is exact for a + b t + c n + d e.
    time, north, east = _grid_axes()
    tt, nn, ee = np.meshgrid(time, north, east, indexing="ij")
    vn = 0.3 + 1e-4 * tt - 2e-3 * nn + 5e-4 * ee
    ve = -0.1 - 2e-5 * tt + 1e-3 * nn + 3e-4 * ee
    field = GriddedCurrent(time_s=time, north_m=north, east_m=east, v_north_mps=vn, v_east_mps=ve)
    rng = np.random.default_rng(3)
    t = rng.uniform(0, 3600, 200)
    n = rng.uniform(-200, 400, 200)
    e = rng.uniform(0, 800, 200)
    v = gridded_velocity_ned(field, n, e, t)
    np.testing.assert_allclose(v[:, 0], 0.3 + 1e-4 * t - 2e-3 * n + 5e-4 * e, rtol=0, atol=1e-13)
    np.testing.assert_allclose(v[:, 1], -0.1 - 2e-5 * t + 1e-3 * n + 3e-4 * e, rtol=0, atol=1e-13)


def test_gridded_matches_scipy_regular_grid_interpolator() -> None:
    # Reference library: scipy.interpolate.RegularGridInterpolator(method="linear").
    time, north, east = _grid_axes()
    rng = np.random.default_rng(4)
    vn = rng.normal(size=(time.size, north.size, east.size))
    ve = rng.normal(size=vn.shape)
    # stored the way an ocean model might: dims (y, x, time), y decreasing
    ds = xr.Dataset(
        {
            "v_north": (("y", "x", "time"), np.moveaxis(vn, 0, -1)[::-1]),
            "v_east": (("y", "x", "time"), np.moveaxis(ve, 0, -1)[::-1]),
        },
        coords={"y": north[::-1], "x": east, "time": time},
    )
    field = gridded_current_from_dataset(ds)
    pts = np.column_stack(
        [rng.uniform(0, 3600, 300), rng.uniform(-200, 400, 300), rng.uniform(0, 800, 300)]
    )
    v = gridded_velocity_ned(field, pts[:, 1], pts[:, 2], pts[:, 0])
    for k, grid in enumerate((vn, ve)):
        ref = RegularGridInterpolator((time, north, east), grid, method="linear")(pts)
        np.testing.assert_allclose(v[:, k], ref, rtol=1e-12, atol=1e-13)


def test_gridded_steady_field_and_cf_standard_names() -> None:
    # CF standard names (CF Standard Name Table): northward_sea_water_velocity,
    # eastward_sea_water_velocity; no time dim = steady field. Checked against scipy.
    north = np.array([0.0, 100.0, 200.0])
    east = np.array([0.0, 50.0])
    rng = np.random.default_rng(5)
    a, b = rng.normal(size=(3, 2)), rng.normal(size=(3, 2))
    ds = xr.Dataset(
        {
            "vo": (("north", "east"), a, {"standard_name": "northward_sea_water_velocity"}),
            "uo": (("north", "east"), b, {"standard_name": "eastward_sea_water_velocity"}),
        },
        coords={"north": north, "east": east},
    )
    field = gridded_current_from_dataset(ds)
    v = gridded_velocity_ned(field, [30.0, 170.0], [10.0, 45.0], t_s=[0.0, 9999.0])
    ref = RegularGridInterpolator((north, east), a)(np.array([[30.0, 10.0], [170.0, 45.0]]))
    np.testing.assert_allclose(v[:, 0], ref, rtol=1e-13)


def test_gridded_datetime_time_coordinate() -> None:
    # datetime64 times become seconds since the first time: half way through a
    # 1-hour step the value is the mean of the two time slices.
    times = np.array(["2026-01-01T00:00", "2026-01-01T01:00"], dtype="datetime64[ns]")
    vn = np.stack([np.zeros((2, 2)), np.ones((2, 2))])
    ds = xr.Dataset(
        {"v_north": (("time", "north", "east"), vn), "v_east": (("time", "north", "east"), vn)},
        coords={"time": times, "north": [0.0, 1.0], "east": [0.0, 1.0]},
    )
    field = gridded_current_from_dataset(ds)
    assert field.time_s.tolist() == [0.0, 3600.0]
    assert gridded_velocity_ned(field, [0.5], [0.5], 1800.0)[0, 0] == pytest.approx(0.5)


def test_gridded_outside_policy() -> None:
    time, north, east = _grid_axes()
    rng = np.random.default_rng(6)
    vn = rng.normal(size=(time.size, north.size, east.size))
    kwargs = dict(time_s=time, north_m=north, east_m=east, v_north_mps=vn, v_east_mps=-vn)
    strict = GriddedCurrent(**kwargs)
    with pytest.raises(ParameterError) as exc:
        gridded_velocity_ned(strict, [500.0], [100.0], 0.0)
    assert exc.value.field == "north_m"
    with pytest.raises(ParameterError) as exc:
        gridded_velocity_ned(strict, [0.0], [100.0], 4000.0)
    assert exc.value.field == "t_s"
    clamped = GriddedCurrent(**kwargs, outside="clamp")
    np.testing.assert_array_equal(
        gridded_velocity_ned(clamped, [500.0, -900.0], [900.0, -5.0], [4000.0, -1.0]),
        gridded_velocity_ned(clamped, [400.0, -200.0], [800.0, 0.0], [3600.0, 0.0]),
    )


def test_gridded_dataset_errors_name_the_problem() -> None:
    good = {"north": [0.0, 1.0], "east": [0.0, 1.0]}
    z = np.zeros((2, 2))
    ds = xr.Dataset({"v_north": (("north", "east"), z)}, coords=good)
    with pytest.raises(ParameterError) as exc:
        gridded_current_from_dataset(ds)
    assert exc.value.field == "east_var"
    ds = xr.Dataset(
        {"v_north": (("lat", "lon"), z), "v_east": (("lat", "lon"), z)},
        coords={"lat": [0.0, 1.0], "lon": [0.0, 1.0]},
    )
    with pytest.raises(ParameterError, match="spatial dims") as exc:
        gridded_current_from_dataset(ds)
    assert exc.value.field == "dims"
    z3 = np.zeros((3, 2, 2))
    ds = xr.Dataset(
        {"v_north": (("depth", "north", "east"), z3), "v_east": (("depth", "north", "east"), z3)},
        coords={"depth": [0.0, 5.0, 10.0], **good},
    )
    with pytest.raises(ParameterError, match="unexpected dimensions"):
        gridded_current_from_dataset(ds)
    ds = xr.Dataset({"v_north": (("north", "east"), z), "v_east": (("north", "east"), z)})
    with pytest.raises(ParameterError, match="coordinate"):
        gridded_current_from_dataset(ds)
    ds = xr.Dataset(
        {
            "v_north": (("north", "east"), [[0.0, np.nan], [0.0, 0.0]]),
            "v_east": (("north", "east"), z),
        },
        coords=good,
    )
    with pytest.raises(ParameterError) as exc:
        gridded_current_from_dataset(ds)
    assert exc.value.field == "v_north_mps"
    ds = xr.Dataset(
        {
            "v_north": (("north", "east"), np.zeros((3, 2))),
            "v_east": (("north", "east"), np.zeros((3, 2))),
        },
        coords={"north": [0.0, 2.0, 1.0], "east": [0.0, 1.0]},
    )
    with pytest.raises(ParameterError, match="strictly increasing") as exc:
        gridded_current_from_dataset(ds)
    assert exc.value.field == "north_m"


# ---------------------------------------------------------------------------
# Analytic fields (our own designs): mathematical properties only
# ---------------------------------------------------------------------------


def _divergence(fn, params, n: np.ndarray, e: np.ndarray, h: float = 1e-3) -> np.ndarray:
    dvn = (fn(params, n + h, e)[:, 0] - fn(params, n - h, e)[:, 0]) / (2 * h)
    dve = (fn(params, n, e + h)[:, 1] - fn(params, n, e - h)[:, 1]) / (2 * h)
    return dvn + dve


def test_analytic_fields_are_divergence_free() -> None:
    # Vector calculus: a parallel flow whose speed varies only across the flow, and a
    # purely azimuthal flow whose speed depends only on r, both have zero divergence.
    rng = np.random.default_rng(7)
    n, e = rng.uniform(-400, 400, 50), rng.uniform(-400, 400, 50)
    jet = JetCurrentParams(peak_speed_mps=1.5, set_deg=33.0, axis_east_m=40.0, half_width_m=120.0)
    eddy = EddyCurrentParams(peak_speed_mps=0.8, centre_north_m=30.0, radius_m=150.0)
    np.testing.assert_allclose(_divergence(jet_velocity_ned, jet, n, e), 0.0, atol=1e-9)
    np.testing.assert_allclose(_divergence(eddy_velocity_ned, eddy, n, e), 0.0, atol=1e-9)


def test_eddy_rotation_sense_in_ned() -> None:
    # NED right-hand rule: positive rotation about the down axis is clockwise seen from
    # above, so north of the centre a clockwise eddy flows east.
    cw = EddyCurrentParams(peak_speed_mps=1.0, radius_m=100.0, clockwise=True)
    ccw = EddyCurrentParams(peak_speed_mps=1.0, radius_m=100.0, clockwise=False)
    v = eddy_velocity_ned(cw, [100.0], [0.0])[0]
    assert v[1] > 0 and abs(v[0]) < 1e-15
    np.testing.assert_allclose(eddy_velocity_ned(ccw, [100.0], [0.0]), -v[None, :])


# ---------------------------------------------------------------------------
# Bad input
# ---------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("cls", "kwargs", "field"),
    [
        (UniformCurrentParams, {"speed_mps": -0.1}, "speed_mps"),
        (UniformCurrentParams, {"speed_mps": float("nan")}, "speed_mps"),
        (UniformCurrentParams, {"set_deg": 400.0}, "set_deg"),
        (CurrentVariationParams, {"speed_tc_s": 0.0}, "speed_tc_s"),
        (CurrentVariationParams, {"set_tc_s": -5.0}, "set_tc_s"),
        (CurrentVariationParams, {"speed_sigma_mps": -1.0}, "speed_sigma_mps"),
        (WindDrivenCurrentParams, {"surface_speed_mps": -1.0}, "surface_speed_mps"),
        (WindDrivenCurrentParams, {"reference_depth_m": 0.0}, "reference_depth_m"),
        (TidalCurrentParams, {"water_depth_m": -3.0}, "water_depth_m"),
        (
            TidalCurrentParams,
            {
                "water_depth_m": 10.0,
                "amplitudes_mps": [1.0, -1.0],
                "periods_h": [12.0, 12.0],
                "phases_deg": [0.0, 0.0],
            },
            "amplitudes_mps",
        ),
        (
            TidalCurrentParams,
            {
                "water_depth_m": 10.0,
                "amplitudes_mps": [1.0],
                "periods_h": [12.0, 6.0],
                "phases_deg": [0.0],
            },
            "periods_h",
        ),
        (JetCurrentParams, {"half_width_m": 0.0}, "half_width_m"),
        (EddyCurrentParams, {"peak_speed_mps": float("inf")}, "peak_speed_mps"),
    ],
)
def test_bad_parameters_name_the_field(cls, kwargs, field) -> None:
    with pytest.raises(ParameterError) as exc:
        cls(**kwargs)
    assert exc.value.field == field
    assert field in str(exc.value)


def test_unknown_key_via_params_from_dict() -> None:
    with pytest.raises(ParameterError) as exc:
        params_from_dict(UniformCurrentParams, {"speed_mps": 1.0, "sett_deg": 10.0}, "current")
    assert exc.value.field == "current.sett_deg"
    assert "set_deg" in str(exc.value)
    with pytest.raises(ParameterError) as exc:
        params_from_dict(CurrentVariationParams, {"speed_tc_s": -1.0}, "current.variation")
    assert exc.value.field == "current.variation.speed_tc_s"


def test_model_checks() -> None:
    with pytest.raises(ParameterError) as exc:
        CurrentModel(variation=CurrentVariationParams(speed_sigma_mps=0.1))
    assert exc.value.field == "variation"
    with pytest.raises(ParameterError) as exc:
        CurrentModel(fields=(UniformCurrentParams(),))
    assert exc.value.field == "fields[0]"
    with pytest.raises(ParameterError) as exc:
        gauss_markov_record(TrialStreams(0, 2), "x", [1.0], [0.0], dt_s=1.0, n_samples=3)
    assert exc.value.field == "tc_s"


# --- shapes of per-trial and per-constituent parameters ----------------------------------
# ARCHITECTURE: numeric fields are scalars or per-trial arrays of shape (n_trials,), and a
# shape error is a ParameterError naming the field at fault (common practice, no source).

_TIDE = dict(flood_set_deg=45.0, water_depth_m=30.0)


@pytest.mark.parametrize(
    ("kwargs", "field"),
    [
        # constituent counts: compared with amplitudes_mps, the field that differs is named
        ({"amplitudes_mps": [1.0, 0.5], "periods_h": [M2_PERIOD_H], "phases_deg": [0.0, 0.0]}, "periods_h"),
        ({"amplitudes_mps": [1.0], "periods_h": [M2_PERIOD_H], "phases_deg": [0.0, 10.0]}, "phases_deg"),
        # per-trial rows of the tables must agree with each other ...
        (
            {
                "amplitudes_mps": np.ones((3, 2)),
                "periods_h": np.full((2, 2), M2_PERIOD_H),
                "phases_deg": [0.0, 0.0],
            },
            "periods_h",
        ),
        (
            {
                "amplitudes_mps": [1.0, 0.5],
                "periods_h": [M2_PERIOD_H, S2_PERIOD_H],
                "phases_deg": np.zeros((4, 2)),
                "water_depth_m": np.full(3, 30.0),
            },
            "phases_deg",
        ),
        # ... and with the per-trial scalars
        (
            {
                "amplitudes_mps": np.ones((2, 1)),
                "periods_h": [M2_PERIOD_H],
                "phases_deg": [0.0],
                "mean_speed_mps": np.zeros(3),
            },
            "amplitudes_mps",
        ),
        (
            {"amplitudes_mps": [1.0], "periods_h": [M2_PERIOD_H], "phases_deg": [0.0],
             "flood_set_deg": np.zeros(2), "exponent": np.full(3, 1 / 7)},
            "exponent",
        ),
        # more than 2-D tables, 2-D per-trial scalars
        ({"amplitudes_mps": np.ones((2, 2, 1)), "periods_h": [M2_PERIOD_H], "phases_deg": [0.0]}, "amplitudes_mps"),
        ({"amplitudes_mps": [1.0], "periods_h": [M2_PERIOD_H], "phases_deg": [0.0],
          "mean_speed_mps": np.zeros((2, 1))}, "mean_speed_mps"),
    ],
)
def test_tidal_shapes_are_cross_checked(kwargs, field) -> None:
    args = {**_TIDE, **kwargs}
    with pytest.raises(ParameterError) as exc:
        TidalCurrentParams(**args)
    assert exc.value.field == field


def test_tidal_consistent_per_trial_shapes_accepted() -> None:
    # per-trial tables and per-trial scalars of the same length, or shared (n_constituents,)
    # tables with per-trial scalars: accepted, and each trial's speed is its own sum
    # u = mean + A cos(2 pi t / T - phi) (the formula in the TidalCurrentParams docstring).
    amps = np.array([[1.0, 0.2], [0.5, 0.1], [0.0, 0.3]])
    p = TidalCurrentParams(
        flood_set_deg=np.array([0.0, 90.0, 180.0]),
        water_depth_m=30.0,
        amplitudes_mps=amps,
        periods_h=[M2_PERIOD_H, S2_PERIOD_H],
        phases_deg=np.zeros((3, 2)),
    )
    t = np.full(3, 3600.0)
    expected = amps[:, 0] * np.cos(2 * np.pi / M2_PERIOD_H) + amps[:, 1] * np.cos(2 * np.pi / S2_PERIOD_H)
    np.testing.assert_allclose(tidal_along_axis_speed(p, t), expected, rtol=1e-12)


@pytest.mark.parametrize(
    ("cls", "kwargs", "field"),
    [
        (UniformCurrentParams, {"speed_mps": np.ones((2, 1))}, "speed_mps"),
        (UniformCurrentParams, {"speed_mps": 0.5, "set_deg": np.zeros((1, 3))}, "set_deg"),
        (UniformCurrentParams, {"speed_mps": np.ones(2), "set_deg": np.zeros(3)}, "set_deg"),
        (WindDrivenCurrentParams, {"surface_speed_mps": np.ones((2, 2))}, "surface_speed_mps"),
        (CurrentVariationParams, {"speed_sigma_mps": np.ones(2), "set_tc_s": np.full(3, 60.0)}, "set_tc_s"),
        (JetCurrentParams, {"peak_speed_mps": np.ones((2, 1))}, "peak_speed_mps"),
        (EddyCurrentParams, {"radius_m": np.full((2, 1), 100.0)}, "radius_m"),
    ],
)
def test_current_blocks_require_scalar_or_per_trial_vector(cls, kwargs, field) -> None:
    with pytest.raises(ParameterError) as exc:
        cls(**kwargs)
    assert exc.value.field == field
    assert "n_trials" in str(exc.value) or "trials" in str(exc.value)
