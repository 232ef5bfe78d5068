"""Tests of the aiding sensors: heading, DVL, depth, altimeter and acoustic range.

Sources beside each check: Mackenzie (1981), J. Acoust. Soc. Am. 70(3)
(nine-term sound speed and its check value); Fofonoff & Millard (1983),
UNESCO Tech. Pap. Mar. Sci. 44 (Chen & Millero sound speed and depth from
pressure, with their check values); IMO Resolution A.424(XI) (gyro-compass
settle-point error x sec latitude); wavebench.sea.seabed.depth_at and
scipy's RegularGridInterpolator (bilinear seabed); hand geometry.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.interpolate import RegularGridInterpolator

from wavebench.core.errors import ParameterError, WavebenchWarning
from wavebench.sea.seabed import SeabedGrid, depth_at
from wavebench.sensors.dvl import (
    DvlParams,
    dvl_altitude_m,
    dvl_measurement,
    dvl_noise_sd_mps,
    dvl_velocity_body,
)
from wavebench.sensors.heading import (
    CompassParams,
    GyrocompassParams,
    compass_heading,
    gyrocompass_error_bound_deg,
    gyrocompass_heading,
)
from wavebench.sensors.ranging import (
    AcousticRangeParams,
    AltimeterParams,
    DepthSensorParams,
    acoustic_range,
    altimeter_range,
    depth_sensor,
    mackenzie_sound_speed,
    slant_range_m,
    unesco_depth_from_pressure,
    unesco_sound_speed,
)


def _flat(depth_m: float) -> SeabedGrid:
    return SeabedGrid(north_m=[0.0, 500.0], east_m=[0.0, 500.0], depth_m=np.full((2, 2), depth_m))


def _sloping() -> SeabedGrid:
    # a non-planar grid: random depths on a non-uniform grid
    rng = np.random.default_rng(11)
    north = np.cumsum(rng.uniform(10.0, 30.0, 10))
    east = np.cumsum(rng.uniform(10.0, 30.0, 8))
    return SeabedGrid(north_m=north, east_m=east, depth_m=rng.uniform(8.0, 40.0, (10, 8)))


# --- sound speed and pressure-to-depth --------------------------------------------


def test_mackenzie_check_value() -> None:
    # Mackenzie (1981), J. Acoust. Soc. Am. 70(3) 807-812: check value
    # c = 1550.744 m/s at T = 25 degC, S = 35 ppt, D = 1000 m (value from memory,
    # not re-checked; it agrees with the nine-term formula evaluated by hand).
    assert mackenzie_sound_speed(25.0, 35.0, 1000.0) == pytest.approx(1550.744, abs=5e-4)


def test_mackenzie_validity_range_is_enforced_or_warned() -> None:
    # Mackenzie (1981) stated validity: 2-30 degC, 25-40 ppt, 0-8000 m.
    with pytest.warns(WavebenchWarning, match="temperature_c"):
        mackenzie_sound_speed(35.0, 35.0, 100.0)
    with pytest.warns(WavebenchWarning, match="salinity_ppt"):
        mackenzie_sound_speed(10.0, 5.0, 100.0)
    with pytest.raises(ParameterError) as info:
        mackenzie_sound_speed(10.0, 35.0, 9000.0, strict=True)
    assert info.value.field == "depth_m"
    with pytest.raises(ParameterError) as info:
        mackenzie_sound_speed(np.nan, 35.0, 10.0)
    assert info.value.field == "temperature_c"
    # array input inside the range: no warning (filterwarnings = error), shape kept
    c = mackenzie_sound_speed(np.array([[5.0, 15.0]]), 35.0, np.array([[0.0, 500.0]]))
    assert c.shape == (1, 2)


def test_unesco_sound_speed_check_value() -> None:
    # Fofonoff & Millard (1983), UNESCO Tech. Pap. Mar. Sci. 44, Chen & Millero (1977)
    # sound speed check value: 1731.995 m/s at S = 40, T = 40 degC (IPTS-68), P = 10000 dbar.
    assert unesco_sound_speed(40.0, 40.0, 10000.0) == pytest.approx(1731.995, abs=5e-4)
    with pytest.warns(WavebenchWarning, match="pressure_dbar"):
        unesco_sound_speed(10.0, 35.0, 12000.0)


def test_unesco_depth_from_pressure_check_value() -> None:
    # Fofonoff & Millard (1983), UNESCO 44, depth check value: 9712.653 m at
    # p = 10000 dbar, latitude 30 deg.
    assert unesco_depth_from_pressure(10000.0, 30.0) == pytest.approx(9712.653, abs=5e-4)
    assert unesco_depth_from_pressure(0.0, 45.0) == 0.0
    with pytest.raises(ParameterError) as info:
        unesco_depth_from_pressure(-1.0, 45.0)
    assert info.value.field == "pressure_dbar"


# --- acoustic slant range -----------------------------------------------------------


def test_slant_range_pythagoras_hand_cases() -> None:
    # Pythagoras: (3, 4, 12) -> 13; (3, 4, 0) -> 5; beacon straight below at 12 m -> 12.
    pos = np.array([[10.0, 20.0, 5.0]])
    beacons = np.array([[13.0, 24.0, 17.0], [13.0, 24.0, 5.0], [10.0, 20.0, 17.0]])
    np.testing.assert_allclose(slant_range_m(pos, beacons), [[13.0, 5.0, 12.0]], rtol=1e-15)


def test_travel_time_is_range_over_sound_speed() -> None:
    # t = r / c (one-way); the receiver reports c_assumed * t.
    pos = np.zeros((2, 3))
    beacons = np.array([[300.0, 400.0, 0.0], [0.0, 0.0, 1200.0]])
    c_true = np.array([1480.0, 1520.0])  # per trial
    out = acoustic_range(pos, beacons, AcousticRangeParams(max_range_m=2000.0), sound_speed_mps=c_true)
    r = np.array([500.0, 1200.0])
    np.testing.assert_allclose(out.travel_time_s, r[None, :] / c_true[:, None], rtol=1e-15)
    np.testing.assert_allclose(out.range_m, 1500.0 * r[None, :] / c_true[:, None], rtol=1e-15)
    assert out.valid.all()


def test_acoustic_range_max_range_noise_and_outliers() -> None:
    pos = np.zeros((1, 3))
    beacons = np.array([[600.0, 800.0, 0.0], [0.0, 0.0, 100.0]])  # 1000 m and 100 m
    p = AcousticRangeParams(max_range_m=900.0, assumed_sound_speed_mps=1500.0)
    out = acoustic_range(
        pos, beacons, p, sound_speed_mps=1500.0, noise_m=np.array([[0.1, -0.2]]), outlier_m=np.array([[0.0, 30.0]])
    )
    assert out.valid.tolist() == [[False, True]]
    assert np.isnan(out.range_m[0, 0])
    assert out.range_m[0, 1] == pytest.approx(100.0 - 0.2 + 30.0, abs=1e-12)


def test_acoustic_range_batched_shapes() -> None:
    rng = np.random.default_rng(5)
    pos = rng.normal(0.0, 50.0, (4, 6, 3))
    beacons = rng.normal(0.0, 200.0, (4, 3, 3))  # per-trial beacons
    r = slant_range_m(pos, beacons)
    assert r.shape == (4, 6, 3)
    np.testing.assert_allclose(r[2, 5, 1], np.linalg.norm(pos[2, 5] - beacons[2, 1]), rtol=1e-14)
    out = acoustic_range(pos, beacons[0], AcousticRangeParams(), sound_speed_mps=np.full(4, 1500.0))
    assert out.range_m.shape == (4, 6, 3)


# --- depth sensor ---------------------------------------------------------------------


def test_depth_sensor_noise_bias_quantisation_and_full_scale() -> None:
    p = DepthSensorParams(full_scale_m=50.0, resolution_m=0.1)
    true = np.array([[12.34, 49.0, 60.0], [-1.5, 0.0, 20.0]])
    r = depth_sensor(true, p, noise_m=0.02, bias_m=np.array([0.0, 0.3]))
    # hand arithmetic: quantise(max(d, 0) + bias + noise) to 0.1 m; > full scale invalid
    expected = np.array([[12.4, 49.0, np.nan], [0.3, 0.3, 20.3]])
    np.testing.assert_allclose(r.value, expected, atol=1e-12)
    assert r.valid.tolist() == [[True, True, False], [True, True, True]]
    assert p.noise_sd_m == pytest.approx(0.05)  # 0.1 % of 50 m


# --- single-beam altimeter --------------------------------------------------------------


def test_altimeter_on_a_flat_seabed_is_depth_minus_draft() -> None:
    # Hand geometry: flat bed 25 m deep, transducer at the draft 1.8 m -> 23.2 m,
    # with or without a beam footprint (the footprint is flat too).
    n = np.array([100.0, 250.0, 400.0])
    for beam in (0.0, 30.0):
        r = altimeter_range(_flat(25.0), n, n, 1.8, AltimeterParams(beam_width_deg=beam))
        np.testing.assert_allclose(r.value, 25.0 - 1.8, rtol=1e-14)
        assert r.valid.all()
    # tide raises the water level: +0.7 m of water
    r = altimeter_range(_flat(25.0), n, n, 1.8, AltimeterParams(), water_level_m=0.7)
    np.testing.assert_allclose(r.value, 25.0 + 0.7 - 1.8, rtol=1e-14)


def test_altimeter_on_a_sloping_grid_matches_bilinear_interpolation() -> None:
    # wavebench.sea.seabed.depth_at (bilinear), itself checked against scipy's
    # RegularGridInterpolator(method="linear") in test_seabed.py; here both.
    bed = _sloping()
    rng = np.random.default_rng(12)
    n = rng.uniform(bed.north_m[0] + 1.0, bed.north_m[-1] - 1.0, (3, 40))
    e = rng.uniform(bed.east_m[0] + 1.0, bed.east_m[-1] - 1.0, (3, 40))
    r = altimeter_range(bed, n, e, 3.0, AltimeterParams(min_range_m=0.0))
    ref = depth_at(bed, n.ravel(), e.ravel()).reshape(n.shape) - 3.0
    np.testing.assert_allclose(r.value, ref, rtol=1e-14)
    interp = RegularGridInterpolator((bed.north_m, bed.east_m), bed.depth_m, method="linear")
    np.testing.assert_allclose(r.value, interp(np.stack([n, e], axis=-1)) - 3.0, rtol=1e-12)


def test_altimeter_footprint_on_a_plane_equals_the_centre() -> None:
    # Hand geometry: the mean of a plane over a disc (or over a ring of equally
    # spaced points) about a centre is the plane's value at the centre.
    north = np.linspace(0.0, 400.0, 9)
    east = np.linspace(0.0, 400.0, 9)
    nn, ee = np.meshgrid(north, east, indexing="ij")
    bed = SeabedGrid(north_m=north, east_m=east, depth_m=20.0 + 0.05 * nn - 0.03 * ee)
    n = np.array([120.0, 200.0, 333.0])
    e = np.array([80.0, 200.0, 250.0])
    r = altimeter_range(bed, n, e, 2.0, AltimeterParams(beam_width_deg=40.0, n_footprint_points=5))
    np.testing.assert_allclose(r.value, 20.0 + 0.05 * n - 0.03 * e - 2.0, rtol=1e-12)


def test_altimeter_invalid_beyond_max_range_below_blanking_and_off_grid() -> None:
    p = AltimeterParams(max_range_m=30.0, min_range_m=0.5)
    bed = SeabedGrid(north_m=[0.0, 100.0], east_m=[0.0, 100.0], depth_m=[[10.0, 10.0], [60.0, 60.0]])
    n = np.array([0.0, 100.0, 0.0, 500.0, 0.0])
    e = np.full(5, 50.0)
    z = np.array([1.0, 1.0, 9.8, 1.0, 12.0])  # ranges 9, 59 (too far), 0.2 (blanked), off grid, below bed
    r = altimeter_range(bed, n, e, z, p)
    assert r.valid.tolist() == [True, False, False, False, False]
    assert r.value[0] == pytest.approx(9.0)
    assert np.isnan(r.value[1:]).all()


# --- DVL ----------------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("heading_deg", "v_ned", "expected_body"),
    [
        (90.0, (0.0, 2.0, 0.0), (2.0, 0.0, 0.0)),  # heading east, moving east: pure surge
        (0.0, (0.0, 1.0, 0.0), (0.0, 1.0, 0.0)),  # heading north, moving east: sway to starboard
        (30.0, (1.0, 0.0, 0.0), (math.cos(math.radians(30.0)), -0.5, 0.0)),  # u = cos 30, v = -sin 30
        (180.0, (1.0, 0.0, 0.3), (-1.0, 0.0, 0.3)),  # moving astern, sinking
    ],
)
def test_dvl_body_frame_rotation_hand_cases(heading_deg, v_ned, expected_body) -> None:
    # Hand geometry: v_body = R(psi)^T v_ned for a rotation about the down axis.
    v = dvl_velocity_body([v_ned[0]], [v_ned[1]], [math.radians(heading_deg)], velocity_down_mps=[v_ned[2]])
    np.testing.assert_allclose(v[0], expected_body, atol=1e-12)


def test_dvl_pitch_and_lever_arm_hand_cases() -> None:
    # Hand geometry: bow up by theta while moving horizontally forward at 1 m/s ->
    # body velocity [cos theta, 0, sin theta] (the flow enters the body's +z).
    th = math.radians(10.0)
    v = dvl_velocity_body([1.0], [0.0], [0.0], pitch_rad=[th])
    np.testing.assert_allclose(v[0], [math.cos(th), 0.0, math.sin(th)], atol=1e-12)
    # turning to starboard at r = 0.05 rad/s with the DVL 4 m aft: the stern swings
    # to port at r * 4 = 0.2 m/s (v = omega x l).
    v = dvl_velocity_body([0.0], [0.0], [0.0], yaw_rate_radps=[0.05], lever_arm_m=[-4.0, 0.0, 1.0])
    np.testing.assert_allclose(v[0], [0.0, -0.2, 0.0], atol=1e-12)


def test_dvl_invalid_outside_bottom_lock() -> None:
    bed = SeabedGrid(north_m=[0.0, 1000.0], east_m=[0.0, 100.0], depth_m=[[5.0, 5.0], [205.0, 205.0]])
    p = DvlParams(min_altitude_m=1.0, max_altitude_m=100.0)
    n = np.array([0.0, 100.0, 500.0, 900.0, 2000.0])  # depths 5, 25, 105, 185, off grid
    e = np.full(5, 50.0)
    alt = dvl_altitude_m(bed, n, e, 4.5)  # altitudes 0.5, 20.5, 100.5, 180.5, nan
    np.testing.assert_allclose(alt[:4], [0.5, 20.5, 100.5, 180.5])
    v = np.tile([1.0, 0.1, 0.0], (5, 1))
    out = dvl_measurement(v, alt, p)
    assert out.valid.tolist() == [False, True, False, False, False]
    np.testing.assert_allclose(out.velocity_body_mps[1], [1.0, 0.1, 0.0])
    assert np.isnan(out.velocity_body_mps[[0, 2, 3, 4]]).all()


def test_dvl_noise_scales_with_speed() -> None:
    # sd = a + b |v| (the stated error model); sample standard deviation of 40 000
    # unit-normal draws scaled by it, within 4 % (sampling sd of a sd: 1/sqrt(2n) = 0.35 %).
    p = DvlParams(noise_floor_mps=0.003, noise_speed_fraction=0.01)
    assert float(dvl_noise_sd_mps(2.0, p)) == pytest.approx(0.023)
    rng = np.random.default_rng(952)
    v = np.tile([2.0, 0.0, 0.0], (2, 40_000, 1))
    v[1, :, 0] = 0.0
    alt = np.full((2, 40_000), 20.0)
    out = dvl_measurement(v, alt, p, unit_noise=rng.standard_normal((2, 40_000, 3)))
    err = out.velocity_body_mps - v
    np.testing.assert_allclose(err.std(axis=1), [[0.023] * 3, [0.003] * 3], rtol=0.04)
    # scale-factor error per trial: (1 + k) v
    out = dvl_measurement(v[:, :2], alt[:, :2], p, scale_factor_error=np.array([0.01, 0.0]))
    np.testing.assert_allclose(out.velocity_body_mps[0, :, 0], 2.02)


# --- heading -------------------------------------------------------------------------------


def test_gyrocompass_bound_follows_secant_latitude() -> None:
    # IMO A.424(XI): settle-point error <= 0.75 deg x sec(latitude): 0.75 deg at the
    # equator, 0.75 / cos 60 = 1.5 deg at 60 deg (north or south).
    assert gyrocompass_error_bound_deg(0.0) == pytest.approx(0.75, rel=1e-15)
    np.testing.assert_allclose(gyrocompass_error_bound_deg(np.array([60.0, -60.0])), [1.5, 1.5], rtol=1e-12)
    # A.424(XI): RMS about the settle point <= 0.25 deg x sec(latitude)
    p = GyrocompassParams()
    assert math.degrees(p.noise_sd_rad(60.0)) == pytest.approx(0.5, rel=1e-12)
    assert math.degrees(p.settle_error_limit_rad(0.0)) == pytest.approx(0.75, rel=1e-12)


def test_gyrocompass_flags_latitudes_beyond_the_standard() -> None:
    # A.424(XI) covers latitudes up to 60 deg (value from memory, not re-checked).
    with pytest.warns(WavebenchWarning, match="latitude"):
        b = gyrocompass_error_bound_deg(70.0)
    assert b == pytest.approx(0.75 / math.cos(math.radians(70.0)))
    with pytest.raises(ParameterError) as info:
        gyrocompass_error_bound_deg(65.0, strict=True)
    assert info.value.field == "latitude_deg"
    with pytest.raises(ParameterError) as info:
        gyrocompass_error_bound_deg(90.0)
    assert info.value.field == "latitude_deg"
    # the high-speed-craft standard A.821(19) reaches 70 deg: no warning there
    assert gyrocompass_error_bound_deg(70.0, max_latitude_deg=70.0) == pytest.approx(b)


def test_gyrocompass_reading_adds_and_wraps() -> None:
    psi = np.radians(np.array([[359.5, 10.0], [-179.5, 0.0]]))
    out = gyrocompass_heading(
        psi, settle_error_rad=np.radians([1.0, -1.0]), noise_rad=np.radians([[0.0, 0.2], [0.0, 0.0]])
    )
    np.testing.assert_allclose(np.degrees(out), [[0.5, 11.2], [179.5, -1.0]], atol=1e-9)
    assert np.all((out >= -math.pi) & (out < math.pi))


def test_compass_bias_adds_and_heading_wraps() -> None:
    p = CompassParams(bias_deg=2.0)
    out = compass_heading(np.radians([10.0, 359.0, 179.0]), p)
    np.testing.assert_allclose(np.degrees(out), [12.0, 1.0, -179.0], atol=1e-9)
    # disturbance and noise inputs add; per-trial bias with (n_trials, n_samples) headings
    p = CompassParams(bias_deg=np.array([1.0, -1.0]))
    psi = np.zeros((2, 3))
    dist = np.radians(np.array([[0.0, 0.5, 1.0], [0.0, 0.0, 0.0]]))
    out = compass_heading(psi, p, disturbance_rad=dist, noise_rad=np.radians(0.25))
    np.testing.assert_allclose(np.degrees(out), [[1.25, 1.75, 2.25], [-0.75, -0.75, -0.75]], atol=1e-9)


def test_compass_deviation_coefficients_hand_cases() -> None:
    # Five-coefficient deviation (Bowditch, The American Practical Navigator, magnetic
    # compass adjustment; value from memory, not re-checked), reading-error sign:
    # A everywhere; B sin psi (max at 090); C cos psi (max at 000);
    # D sin 2psi (max at 045); E cos 2psi (+ at 000, - at 090).
    headings = np.radians([0.0, 45.0, 90.0, 180.0, 270.0])
    cases = {
        "deviation_a_deg": [1.0, 1.0, 1.0, 1.0, 1.0],
        "deviation_b_deg": [0.0, math.sqrt(0.5), 1.0, 0.0, -1.0],
        "deviation_c_deg": [1.0, math.sqrt(0.5), 0.0, -1.0, 0.0],
        "deviation_d_deg": [0.0, 1.0, 0.0, 0.0, 0.0],
        "deviation_e_deg": [1.0, 0.0, -1.0, 1.0, -1.0],
    }
    for field, expected in cases.items():
        out = compass_heading(headings, CompassParams(**{field: 1.0}))
        err = np.degrees(np.asarray(out) - headings)
        err = (err + 180.0) % 360.0 - 180.0
        np.testing.assert_allclose(err, expected, atol=1e-9, err_msg=field)


# --- bad input --------------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("cls", "kwargs", "field"),
    [
        (CompassParams, {"noise_sd_deg": -0.5}, "noise_sd_deg"),
        (CompassParams, {"bias_deg": 270.0}, "bias_deg"),
        (GyrocompassParams, {"settle_error_limit_deg": 0.0}, "settle_error_limit_deg"),
        (GyrocompassParams, {"max_latitude_deg": 90.0}, "max_latitude_deg"),
        (DvlParams, {"noise_speed_fraction": -0.01}, "noise_speed_fraction"),
        (DvlParams, {"min_altitude_m": 5.0, "max_altitude_m": 2.0}, "min_altitude_m"),
        (DvlParams, {"lever_y_m": float("nan")}, "lever_y_m"),
        (DepthSensorParams, {"full_scale_m": 0.0}, "full_scale_m"),
        (DepthSensorParams, {"resolution_m": -0.01}, "resolution_m"),
        (AltimeterParams, {"n_footprint_points": 2}, "n_footprint_points"),
        (AltimeterParams, {"n_footprint_points": 4.5}, "n_footprint_points"),
        (AltimeterParams, {"beam_width_deg": 90.0}, "beam_width_deg"),
        (AltimeterParams, {"min_range_m": 50.0, "max_range_m": 10.0}, "min_range_m"),
        (AcousticRangeParams, {"assumed_sound_speed_mps": 0.0}, "assumed_sound_speed_mps"),
        (AcousticRangeParams, {"max_range_m": -1.0}, "max_range_m"),
    ],
)
def test_bad_parameters_name_the_field(cls, kwargs, field) -> None:
    with pytest.raises(ParameterError) as info:
        cls(**kwargs)
    assert info.value.field == field


def test_bad_inputs_name_the_argument() -> None:
    bed = _flat(20.0)
    with pytest.raises(ParameterError) as info:
        altimeter_range(bed, [np.inf], [0.0], 1.0, AltimeterParams())
    assert info.value.field == "north_m"
    with pytest.raises(ParameterError) as info:
        altimeter_range(bed, [1.0], [1.0], 1.0, DvlParams())  # type: ignore[arg-type]
    assert info.value.field == "params"
    with pytest.raises(ParameterError) as info:
        acoustic_range(np.zeros((1, 3)), np.zeros((2, 2)), AcousticRangeParams(), sound_speed_mps=1500.0)
    assert info.value.field == "beacon_ned_m"
    with pytest.raises(ParameterError) as info:
        acoustic_range(np.zeros((1, 3)), np.ones((1, 3)), AcousticRangeParams(), sound_speed_mps=-1.0)
    assert info.value.field == "sound_speed_mps"
    with pytest.raises(ParameterError) as info:
        dvl_measurement(np.zeros((2, 3)), np.zeros(3), DvlParams())
    assert info.value.field == "altitude_m"
    with pytest.raises(ParameterError) as info:
        dvl_velocity_body([0.0], [0.0], [0.0], lever_arm_m=[1.0, 2.0])
    assert info.value.field == "lever_arm_m"
    with pytest.raises(ParameterError) as info:
        compass_heading([0.0, 1.0], CompassParams(), noise_rad=np.zeros(3))
    assert info.value.field == "noise_rad"
    with pytest.raises(ParameterError) as info:
        depth_sensor([1.0], DepthSensorParams(), noise_m=[np.nan])
    assert info.value.field == "noise_m"
