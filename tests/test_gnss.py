"""Tests of the GNSS receiver geometry and error budget (wavebench.sensors.gnss).

Checked against the GPS SPS Performance Standard (5th ed., 2020) accuracy
statistics through scipy.stats (Rayleigh and normal laws), against pymap3d
(the geodesy library wrapped), geographiclib (Karney 2013, J. Geodesy 87,
an independent geodesic solver) and pyproj when installed, and against hand
geometry for lever arms.
"""

from __future__ import annotations

import math

import numpy as np
import pymap3d
import pytest
from geographiclib.geodesic import Geodesic
from scipy import stats

from wavebench.core.errors import ParameterError
from wavebench.core.geodesy import GeodeticOrigin
from wavebench.core.params import params_from_dict
from wavebench.sensors.gnss import (
    GnssParams,
    antenna_velocity_ned,
    course_speed_over_ground,
    gnss_fix,
    gnss_geodetic,
    gnss_position_ned,
    sigma_from_horizontal_95,
    sigma_from_vertical_95,
)

ORIGINS = [
    GeodeticOrigin(lat_deg=0.0, lon_deg=0.0),
    GeodeticOrigin(lat_deg=58.97, lon_deg=5.73, h_m=12.0),
    GeodeticOrigin(lat_deg=-33.86, lon_deg=151.2),
    GeodeticOrigin(lat_deg=71.0, lon_deg=-8.0, h_m=-2.0),
]


# --- error budget -------------------------------------------------------------


def test_default_horizontal_sigma_gives_the_sps_95_percent_radius() -> None:
    # GPS SPS Performance Standard, 5th ed. (2020): 95 % horizontal error <= 8 m
    # (global average; value from memory, not re-checked). For independent equal
    # N(0, s^2) errors per axis the radial error is Rayleigh(s) (scipy.stats.rayleigh).
    p = GnssParams()
    assert stats.rayleigh.cdf(8.0, scale=p.horizontal_sd_m) == pytest.approx(0.95, abs=1e-12)
    # same statement through the chi-square law with 2 degrees of freedom
    assert 8.0 / p.horizontal_sd_m == pytest.approx(math.sqrt(stats.chi2.ppf(0.95, 2)), rel=1e-12)


def test_default_vertical_sigma_gives_the_sps_95_percent_bound() -> None:
    # GPS SPS Performance Standard, 5th ed. (2020): 95 % vertical error <= 13 m
    # (value from memory, not re-checked); two-sided normal bound (scipy.stats.norm).
    p = GnssParams()
    s = p.vertical_sd_m
    assert stats.norm.cdf(13.0 / s) - stats.norm.cdf(-13.0 / s) == pytest.approx(0.95, abs=1e-12)
    assert sigma_from_vertical_95(13.0) == pytest.approx(13.0 / stats.norm.ppf(0.975), rel=1e-12)


def test_horizontal_conversion_matches_simulated_fixes() -> None:
    # Monte Carlo of the Rayleigh statement above: with s = sigma_from_horizontal_95(R),
    # the fraction of fixes within R is 0.95; binomial 5-sigma band for 200 000 draws.
    rng = np.random.default_rng(2020)
    s = sigma_from_horizontal_95(8.0)
    err = s * rng.standard_normal((200_000, 2))
    frac = np.mean(np.hypot(err[:, 0], err[:, 1]) <= 8.0)
    assert abs(frac - 0.95) < 5.0 * math.sqrt(0.95 * 0.05 / 200_000)


def test_position_sd_per_axis_and_per_trial() -> None:
    p = GnssParams(horizontal_sd_m=np.array([1.0, 2.0]), vertical_sd_m=3.0)
    np.testing.assert_array_equal(p.position_sd_m, [[1.0, 1.0, 3.0], [2.0, 2.0, 3.0]])
    np.testing.assert_array_equal(GnssParams(lever_y_m=0.5).lever_arm_m, [0.0, 0.5, 0.0])


# --- lever arm and wave motion (hand geometry) ----------------------------------


def test_antenna_forward_at_heading_east_is_east_of_the_craft() -> None:
    # Hand geometry: heading 090, antenna 1 m forward -> 1 m east of the reference point.
    p = gnss_position_ned([100.0], [-50.0], [math.pi / 2], [1.0, 0.0, 0.0])
    np.testing.assert_allclose(p, [[100.0, -49.0, 0.0]], atol=1e-12)


@pytest.mark.parametrize(
    ("heading_deg", "lever", "expected"),
    [
        (0.0, [0.0, 1.0, 0.0], [0.0, 1.0, 0.0]),  # starboard at heading 000 is east
        (90.0, [0.0, 1.0, 0.0], [-1.0, 0.0, 0.0]),  # starboard at heading 090 is south
        (180.0, [2.0, 0.0, 0.0], [-2.0, 0.0, 0.0]),  # forward at heading 180 is south
        (270.0, [1.0, 0.0, -3.0], [0.0, -1.0, -3.0]),  # forward at 270 is west; z up stays up
        (45.0, [math.sqrt(2.0), 0.0, 0.0], [1.0, 1.0, 0.0]),  # 45 deg: equal north and east
    ],
)
def test_lever_arm_rotation_hand_cases(heading_deg: float, lever: list[float], expected: list[float]) -> None:
    # Hand geometry of a rotation about the down axis (heading clockwise from north).
    p = gnss_position_ned([0.0], [0.0], [math.radians(heading_deg)], lever)
    np.testing.assert_allclose(p[0], expected, atol=1e-12)


def test_wave_roll_moves_a_mast_top_antenna_to_starboard() -> None:
    # Hand geometry, small angles: a roll of 0.02 rad (starboard down) moves a point
    # 10 m above the reference point 10 * 0.02 = 0.2 m to starboard; heave 0.5 m down
    # moves it 0.5 m down. At heading 090 starboard is south.
    wave = np.zeros((1, 6))
    wave[0, 2] = 0.5
    wave[0, 3] = 0.02
    p = gnss_position_ned([0.0], [0.0], [math.pi / 2], [0.0, 0.0, -10.0], wave)
    np.testing.assert_allclose(p[0], [-0.2, 0.0, -9.5], atol=1e-12)
    # the same translation given directly as [x, y, z] in body axes
    p3 = gnss_position_ned([0.0], [0.0], [math.pi / 2], [0.0, 0.0, -10.0], np.array([[0.0, 0.2, 0.5]]))
    np.testing.assert_allclose(p3, p, atol=1e-12)


def test_antenna_velocity_from_yaw_rate() -> None:
    # Hand geometry: rotation at r about the reference point moves a point 2 m
    # forward at r * 2 m/s to starboard (v = omega x l); heading 000 -> east.
    v = antenna_velocity_ned([1.0], [0.0], [0.0], [2.0, 0.0, -5.0], yaw_rate_radps=[0.1])
    np.testing.assert_allclose(v, [[1.0, 0.2, 0.0]], atol=1e-12)
    # a point 1 m to starboard moves aft at r * 1 m/s; heading 090 -> aft is west
    v = antenna_velocity_ned([0.0], [0.0], [math.pi / 2], [0.0, 1.0, 0.0], yaw_rate_radps=[0.3])
    np.testing.assert_allclose(v, [[0.0, -0.3, 0.0]], atol=1e-12)


def test_course_and_speed_over_ground_hand_cases() -> None:
    # Hand geometry: course = atan2(v_e, v_n) clockwise from north, wrapped to [-pi, pi).
    vn = np.array([1.0, 0.0, -1.0, 0.0, 3.0, 0.0])
    ve = np.array([1.0, 2.0, 0.0, -2.0, -4.0, 0.0])
    c, s = course_speed_over_ground(vn, ve)
    np.testing.assert_allclose(np.degrees(c[:5]), [45.0, 90.0, -180.0, -90.0, -53.13010235415598], atol=1e-9)
    np.testing.assert_allclose(s, [math.sqrt(2.0), 2.0, 1.0, 2.0, 5.0, 0.0], atol=1e-12)
    assert np.isnan(c[5])  # undefined at rest


def test_fix_adds_errors_and_takes_course_from_the_measured_velocity() -> None:
    pos = np.array([[10.0, 20.0, -2.0], [0.0, 0.0, 0.0]])
    vel = np.array([[0.0, 1.0, 0.0], [2.0, 0.0, 0.0]])
    fix = gnss_fix(
        pos,
        vel,
        position_error_m=np.array([[1.0, -1.0, 0.5], [0.0, 0.0, 0.0]]),
        velocity_error_mps=np.array([[1.0, 0.0, 0.0], [0.0, 0.0, 0.0]]),
    )
    np.testing.assert_allclose(fix.position_ned_m, [[11.0, 19.0, -1.5], [0.0, 0.0, 0.0]])
    # measured velocity (1, 1): course 45 deg (hand geometry)
    np.testing.assert_allclose(np.degrees(fix.course_rad), [45.0, 0.0], atol=1e-12)
    np.testing.assert_allclose(fix.speed_mps, [math.sqrt(2.0), 2.0])


# --- geodetic output ------------------------------------------------------------


@pytest.mark.parametrize("origin", ORIGINS, ids=lambda o: f"lat{o.lat_deg}")
def test_geodetic_output_matches_pymap3d(origin: GeodeticOrigin) -> None:
    # Reference library: pymap3d.ned2geodetic on the WGS-84 ellipsoid.
    rng = np.random.default_rng(7)
    n, e, d = rng.uniform(-5000.0, 5000.0, (3, 50))
    d = d / 100.0
    lat, lon, h = gnss_geodetic(origin, n, e, d)
    rlat, rlon, rh = pymap3d.ned2geodetic(
        n, e, d, origin.lat_deg, origin.lon_deg, origin.h_m, ell=pymap3d.Ellipsoid.from_name("wgs84"), deg=True
    )
    np.testing.assert_allclose(lat, rlat, rtol=0, atol=1e-11)
    np.testing.assert_allclose(lon, rlon, rtol=0, atol=1e-11)
    np.testing.assert_allclose(h, rh, rtol=0, atol=1e-6)


@pytest.mark.parametrize(
    "origin",
    [o for o in ORIGINS if o.h_m == 0.0] + [GeodeticOrigin(lat_deg=60.0, lon_deg=5.0)],
    ids=lambda o: f"lat{o.lat_deg}",
)
def test_geodetic_output_distance_and_azimuth_match_geographiclib(origin: GeodeticOrigin) -> None:
    # Independent check with geographiclib (Karney 2013): from an origin on the
    # ellipsoid (h = 0; a height h would scale distances by R / (R + h)), a point 1 km
    # away on the tangent plane, in direction alpha, lies at geodesic distance 1 km and
    # azimuth alpha on the ellipsoid (the tangent plane and the ellipsoid differ by
    # about r^3/R^2 ~ 1e-5 m in distance at r = 1 km, well inside the tolerance).
    for alpha_deg in (0.0, 37.0, 90.0, 200.0):
        a = math.radians(alpha_deg)
        lat, lon, _h = gnss_geodetic(origin, 1000.0 * math.cos(a), 1000.0 * math.sin(a), 0.0)
        g = Geodesic.WGS84.Inverse(origin.lat_deg, origin.lon_deg, float(lat), float(lon))
        assert g["s12"] == pytest.approx(1000.0, abs=1e-3)
        assert (g["azi1"] - alpha_deg + 180.0) % 360.0 - 180.0 == pytest.approx(0.0, abs=1e-3)


def test_geodetic_output_matches_pyproj_if_installed() -> None:
    # Optional reference library: PROJ via pyproj, geocentric (EPSG:4978) -> geodetic
    # 3-D (EPSG:4979). NED -> ECEF by the standard rotation (Groves 2013, ch. 2).
    pyproj = pytest.importorskip("pyproj")
    origin = ORIGINS[1]
    to_ecef = pyproj.Transformer.from_crs("EPSG:4979", "EPSG:4978", always_xy=True)
    to_geo = pyproj.Transformer.from_crs("EPSG:4978", "EPSG:4979", always_xy=True)
    x0, y0, z0 = to_ecef.transform(origin.lon_deg, origin.lat_deg, origin.h_m)
    phi, lam = math.radians(origin.lat_deg), math.radians(origin.lon_deg)
    r_ned_to_ecef = np.array(
        [
            [-math.sin(phi) * math.cos(lam), -math.sin(lam), -math.cos(phi) * math.cos(lam)],
            [-math.sin(phi) * math.sin(lam), math.cos(lam), -math.cos(phi) * math.sin(lam)],
            [math.cos(phi), 0.0, -math.sin(phi)],
        ]
    )
    ned = np.array([[1200.0, -800.0, 3.0], [-50.0, 4000.0, -20.0]])
    ecef = np.array([x0, y0, z0]) + ned @ r_ned_to_ecef.T
    rlon, rlat, rh = to_geo.transform(ecef[:, 0], ecef[:, 1], ecef[:, 2])
    lat, lon, h = gnss_geodetic(origin, ned[:, 0], ned[:, 1], ned[:, 2])
    np.testing.assert_allclose(lat, rlat, atol=1e-9)
    np.testing.assert_allclose(lon, rlon, atol=1e-9)
    np.testing.assert_allclose(h, rh, atol=1e-4)


# --- batching ---------------------------------------------------------------------


def test_batched_shapes_and_trial_slicing() -> None:
    rng = np.random.default_rng(3)
    n_trials, n_samples = 5, 7
    north, east = rng.normal(0.0, 100.0, (2, n_trials, n_samples))
    psi = rng.uniform(-math.pi, math.pi, (n_trials, n_samples))
    lever = rng.normal(0.0, 2.0, (n_trials, 3))
    wave = rng.normal(0.0, 0.05, (n_trials, n_samples, 6))
    p = gnss_position_ned(north, east, psi, lever, wave)
    assert p.shape == (n_trials, n_samples, 3)
    for i in (0, 3):
        alone = gnss_position_ned(north[i : i + 1], east[i : i + 1], psi[i : i + 1], lever[i : i + 1], wave[i : i + 1])
        np.testing.assert_array_equal(alone[0], p[i])
    # (n_trials,) inputs with a per-trial lever arm: row i is trial i alone
    q = gnss_position_ned(north[:, 0], east[:, 0], psi[:, 0], lever)
    assert q.shape == (n_trials, 3)
    for i in range(n_trials):
        np.testing.assert_array_equal(q[i], gnss_position_ned(north[i, 0], east[i, 0], psi[i, 0], lever[i]))
    v = antenna_velocity_ned(north, east, psi, lever, yaw_rate_radps=psi)
    assert v.shape == (n_trials, n_samples, 3)


# --- bad input --------------------------------------------------------------------


@pytest.mark.parametrize(
    ("kwargs", "field"),
    [
        ({"horizontal_sd_m": -1.0}, "horizontal_sd_m"),
        ({"vertical_sd_m": float("nan")}, "vertical_sd_m"),
        ({"velocity_sd_mps": -0.1}, "velocity_sd_mps"),
        ({"lever_z_m": float("inf")}, "lever_z_m"),
        ({"lever_x_m": "2"}, "lever_x_m"),
    ],
)
def test_bad_parameters_name_the_field(kwargs: dict, field: str) -> None:
    with pytest.raises(ParameterError) as info:
        GnssParams(**kwargs)
    assert info.value.field == field


def test_unknown_key_suggests_the_field() -> None:
    with pytest.raises(ParameterError, match="did you mean 'horizontal_sd_m'"):
        params_from_dict(GnssParams, {"horizontal_sd": 1.0})


def test_bad_inputs_name_the_argument() -> None:
    with pytest.raises(ParameterError) as info:
        gnss_position_ned([0.0], [0.0], [0.0], [1.0, 2.0])
    assert info.value.field == "lever_arm_m"
    with pytest.raises(ParameterError) as info:
        gnss_position_ned([np.nan], [0.0], [0.0], [1.0, 2.0, 3.0])
    assert info.value.field == "north_m"
    with pytest.raises(ParameterError) as info:
        gnss_position_ned([0.0, 1.0], [0.0, 1.0], [0.0, 0.0], np.zeros((3, 3)))
    assert info.value.field == "lever_arm_m"
    with pytest.raises(ParameterError) as info:
        gnss_position_ned([0.0], [0.0], [0.0], [0.0, 0.0, 0.0], np.zeros((1, 4)))
    assert info.value.field == "wave_displacement"
    with pytest.raises(ParameterError) as info:
        gnss_geodetic((60.0, 5.0, 0.0), 0.0, 0.0, 0.0)  # type: ignore[arg-type]
    assert info.value.field == "origin"
    with pytest.raises(ParameterError) as info:
        gnss_fix(np.zeros((2, 3)), np.zeros((2, 2)))
    assert info.value.field == "antenna_velocity_ned_mps"
    with pytest.raises(ParameterError) as info:
        sigma_from_horizontal_95(-8.0)
    assert info.value.field == "r95_m"
