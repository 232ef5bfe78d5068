"""Tests of wavebench.core.geodesy: WGS-84 <-> local NED, geodesic distance.

Checked against pymap3d (the library wrapped), against geographiclib
(Karney 2013, J. Geodesy 87, an independent geodesic solver) and against
the WGS-84 defining constants of NIMA TR8350.2 (3rd ed., 2000).
"""

from __future__ import annotations

import math

import numpy as np
import pymap3d
import pytest
from geographiclib.geodesic import Geodesic

from wavebench.core.errors import ParameterError
from wavebench.core.geodesy import (
    WGS84,
    GeodeticOrigin,
    geodesic_distance_m,
    geodetic_to_ned,
    ned_to_geodetic,
)
from wavebench.core.params import params_from_dict

# NIMA TR8350.2 (3rd ed., 2000), WGS-84 defining parameters.
A_WGS84_M = 6378137.0
INV_F_WGS84 = 298.257223563
F = 1.0 / INV_F_WGS84
E2 = F * (2.0 - F)  # first eccentricity squared
EP2 = E2 / (1.0 - E2)  # second eccentricity squared
M_EQUATOR_M = A_WGS84_M * (1.0 - E2)  # smallest radius of curvature (meridian, equator)
C_POLE_M = A_WGS84_M / math.sqrt(1.0 - E2)  # largest radius of curvature (at the poles)

ORIGINS = [
    GeodeticOrigin(lat_deg=0.0, lon_deg=0.0, h_m=0.0),
    GeodeticOrigin(lat_deg=35.2, lon_deg=-120.7, h_m=0.0),
    GeodeticOrigin(lat_deg=-45.0, lon_deg=170.0, h_m=0.0),
    GeodeticOrigin(lat_deg=63.4, lon_deg=10.4, h_m=25.0),
    GeodeticOrigin(lat_deg=78.2, lon_deg=15.6, h_m=-3.0),
]


@pytest.fixture
def rng() -> np.random.Generator:
    return np.random.default_rng(8350)


# --- the ellipsoid -----------------------------------------------------------


def test_ellipsoid_is_wgs84():
    # NIMA TR8350.2 (2000): a = 6378137 m, 1/f = 298.257223563.
    assert WGS84.semimajor_axis == A_WGS84_M
    assert 1.0 / WGS84.flattening == pytest.approx(INV_F_WGS84, rel=1e-12)
    # pymap3d's own default ellipsoid (used when ell=None) is the same one
    default = pymap3d.Ellipsoid.from_name("wgs84")
    assert default.semimajor_axis == A_WGS84_M
    assert 1.0 / default.flattening == pytest.approx(INV_F_WGS84, rel=1e-12)
    # and geographiclib uses the same ellipsoid, so the cross-checks below compare like
    # with like (Karney 2013 / geographiclib Geodesic.WGS84).
    assert Geodesic.WGS84.a == A_WGS84_M
    assert Geodesic.WGS84.f == pytest.approx(F, rel=1e-15)


# --- origin validation -------------------------------------------------------


@pytest.mark.parametrize(
    ("kwargs", "field"),
    [
        ({"lat_deg": 90.5, "lon_deg": 0.0}, "lat_deg"),
        ({"lat_deg": -91.0, "lon_deg": 0.0}, "lat_deg"),
        ({"lat_deg": 0.0, "lon_deg": 180.1}, "lon_deg"),
        ({"lat_deg": 0.0, "lon_deg": -200.0}, "lon_deg"),
        ({"lat_deg": float("nan"), "lon_deg": 0.0}, "lat_deg"),
        ({"lat_deg": 0.0, "lon_deg": 0.0, "h_m": float("inf")}, "h_m"),
        ({"lat_deg": "60", "lon_deg": 0.0}, "lat_deg"),
    ],
)
def test_origin_rejects_bad_values(kwargs, field):
    with pytest.raises(ParameterError) as info:
        GeodeticOrigin(**kwargs)
    assert info.value.field == field
    assert field in str(info.value)


def test_origin_accepts_the_closed_ranges():
    for lat, lon in [(90.0, 180.0), (-90.0, -180.0)]:
        o = GeodeticOrigin(lat_deg=lat, lon_deg=lon)
        assert (o.lat_deg, o.lon_deg, o.h_m) == (lat, lon, 0.0)


def test_origin_from_dict_suggests_the_key():
    with pytest.raises(ParameterError, match="did you mean 'lat_deg'"):
        params_from_dict(GeodeticOrigin, {"lat_dg": 1.0, "lon_deg": 2.0}, path="origin")


# --- geodetic <-> NED --------------------------------------------------------


@pytest.mark.parametrize("origin", ORIGINS)
def test_geodetic_to_ned_matches_pymap3d(rng, origin):
    # Reference library: pymap3d.geodetic2ned on WGS-84 (the call we wrap; this checks
    # argument order, units and the ellipsoid).
    n = 500
    lat = np.clip(origin.lat_deg + rng.uniform(-0.2, 0.2, n), -90.0, 90.0)
    lon = origin.lon_deg + rng.uniform(-0.3, 0.3, n)
    h = rng.uniform(-50.0, 50.0, n)
    got = geodetic_to_ned(lat, lon, h, origin)
    ref = pymap3d.geodetic2ned(lat, lon, h, origin.lat_deg, origin.lon_deg, origin.h_m)
    for g, r in zip(got, ref, strict=True):
        assert g.shape == (n,)
        np.testing.assert_allclose(g, r, rtol=0, atol=1e-9)
    back = ned_to_geodetic(*got, origin)
    ref_back = pymap3d.ned2geodetic(*got, origin.lat_deg, origin.lon_deg, origin.h_m)
    for g, r in zip(back, ref_back, strict=True):
        np.testing.assert_allclose(g, r, rtol=0, atol=1e-9)


@pytest.mark.parametrize("origin", ORIGINS)
def test_ned_geodetic_round_trip_below_a_micrometre(rng, origin):
    # Exactness of the pymap3d ECEF/geodetic conversions: a round trip over 20 km
    # must close to < 1e-6 m.
    n = 2000
    north = rng.uniform(-2e4, 2e4, n)
    east = rng.uniform(-2e4, 2e4, n)
    down = rng.uniform(-30.0, 200.0, n)
    lat, lon, h = ned_to_geodetic(north, east, down, origin)
    n2, e2, d2 = geodetic_to_ned(lat, lon, h, origin)
    err = np.sqrt((n2 - north) ** 2 + (e2 - east) ** 2 + (d2 - down) ** 2)
    assert err.max() < 1e-6


@pytest.mark.parametrize("origin", ORIGINS)
@pytest.mark.parametrize("s", [2e3, 5e3, 10e3])
def test_tangent_plane_against_geographiclib(origin, s):
    """NED of a point a geodesic distance s away, checked with geographiclib.

    The target is placed with geographiclib's Direct problem (Karney 2013), a
    path independent of pymap3d. For a point on the ellipsoid (h = 0 at an
    origin with h = 0) the tangent-plane coordinates must satisfy, to leading
    order in s / R (normal section of radius R_alpha through the point):

    * horizontal distance: sqrt(n^2 + e^2) = R sin(s / R) ~ s - s^3 / (6 R^2);
    * depth below the tangent plane: d ~ s^2 / (2 R);
    * azimuth: atan2(e, n) is the normal-section azimuth, which differs from the
      geodesic azimuth by about (e'^2 / 12) (s / N)^2 cos^2(lat) sin(2 alpha)
      (Bomford, Geodesy, normal section vs geodesic; value from memory, not
      re-checked), i.e. <= 1.4e-9 rad at 10 km.

    R_alpha lies between the meridian radius at the equator a (1 - e^2) and the
    polar radius a / sqrt(1 - e^2) (WGS-84, NIMA TR8350.2), which gives the
    two-sided bounds. At s = 10 km, s - hypot(n, e) is 4.1 to 4.2 mm (relative
    4.2e-7, far inside the 1e-3 one might guess) and d is 7.81 to 7.89 m. The
    0.1 % margin covers the neglected higher-order terms (relative size
    (s / R)^2 ~ 2.5e-6 and e^2 s / R ~ 1e-5).
    """
    if origin.h_m != 0.0:
        origin = GeodeticOrigin(lat_deg=origin.lat_deg, lon_deg=origin.lon_deg, h_m=0.0)
    azimuths = np.arange(0.0, 360.0, 7.5)
    lat2, lon2 = [], []
    for az in azimuths:
        g = Geodesic.WGS84.Direct(origin.lat_deg, origin.lon_deg, az, s)
        lat2.append(g["lat2"])
        lon2.append(g["lon2"])
    n, e, d = geodetic_to_ned(np.array(lat2), np.array(lon2), 0.0, origin)
    shortfall = s - np.hypot(n, e)
    lo, hi = s**3 / (6 * C_POLE_M**2), s**3 / (6 * M_EQUATOR_M**2)
    assert np.all(shortfall >= lo * (1 - 1e-3) - 1e-9)
    assert np.all(shortfall <= hi * (1 + 1e-3) + 1e-9)
    assert np.all(d >= s**2 / (2 * C_POLE_M) * (1 - 1e-3))
    assert np.all(d <= s**2 / (2 * M_EQUATOR_M) * (1 + 1e-3))
    az_err = np.abs(np.angle(np.exp(1j * (np.arctan2(e, n) - np.radians(azimuths)))))
    assert np.all(az_err <= 1.05 * EP2 * s**2 / (12 * M_EQUATOR_M**2) + 1e-12)


def test_point_above_origin_and_due_north():
    # Geometry of the NED frame: straight up is negative down; along the meridian
    # the east component vanishes and a 0.01 deg step north is about
    # M(lat) * 0.01 deg with the WGS-84 meridian radius M = a(1-e^2)/(1-e^2 sin^2)^1.5.
    o = GeodeticOrigin(lat_deg=52.0, lon_deg=4.0, h_m=10.0)
    n, e, d = geodetic_to_ned(52.0, 4.0, 35.0, o)
    assert abs(n) < 1e-6 and abs(e) < 1e-6
    assert float(d) == pytest.approx(-25.0, abs=1e-6)
    n, e, d = geodetic_to_ned(52.01, 4.0, 10.0, o)
    s2 = math.sin(math.radians(52.005)) ** 2
    m = A_WGS84_M * (1 - E2) / (1 - E2 * s2) ** 1.5
    assert abs(float(e)) < 1e-6
    # arc vs chord over 1.1 km and evaluating M at mid-latitude: < 1 mm
    assert float(n) == pytest.approx((m + 10.0) * math.radians(0.01), abs=1e-3)


def test_broadcasting_and_scalar_shapes():
    o = ORIGINS[1]
    n, e, d = geodetic_to_ned(np.array([35.21, 35.22, 35.23]), -120.7, 0.0, o)
    assert n.shape == e.shape == d.shape == (3,)
    lat, lon, h = ned_to_geodetic(np.zeros((2, 4)), 100.0, 0.0, o)
    assert lat.shape == lon.shape == h.shape == (2, 4)
    n, e, d = geodetic_to_ned(35.2, -120.7, 0.0, o)
    assert np.ndim(n) == 0


@pytest.mark.parametrize(
    ("args", "field"),
    [
        ((91.0, 0.0, 0.0), "lat_deg"),
        ((np.array([10.0, np.nan]), 0.0, 0.0), "lat_deg"),
        ((10.0, np.inf, 0.0), "lon_deg"),
        ((10.0, 0.0, "high"), "h_m"),
        ((10.0, 0.0, None), "h_m"),
    ],
)
def test_geodetic_to_ned_rejects_bad_input(args, field):
    with pytest.raises(ParameterError) as info:
        geodetic_to_ned(*args, ORIGINS[0])
    assert info.value.field == field


def test_ned_to_geodetic_rejects_nan():
    with pytest.raises(ParameterError, match="east_m"):
        ned_to_geodetic(0.0, np.array([0.0, np.nan]), 0.0, ORIGINS[0])


# --- geodesic distance -------------------------------------------------------


def test_geodesic_distance_matches_geographiclib(rng):
    # Reference library: geographiclib Inverse (Karney 2013), accurate to ~15 nm.
    # Vincenty's method (via pymap3d) is sub-millimetre away from antipodes; 1 mm
    # tolerance.
    n = 400
    lat1 = rng.uniform(-89.0, 89.0, n)
    lon1 = rng.uniform(-180.0, 180.0, n)
    lat2 = rng.uniform(-89.0, 89.0, n)
    lon2 = rng.uniform(-180.0, 180.0, n)
    # keep clear of nearly antipodal pairs, which the function rejects
    anti = np.abs(lat1 + lat2) < 2.0
    lat2[anti] = np.clip(lat2[anti] + 10.0, -89.0, 89.0)
    got = geodesic_distance_m(lat1, lon1, lat2, lon2)
    ref = np.array(
        [Geodesic.WGS84.Inverse(*p)["s12"] for p in zip(lat1, lon1, lat2, lon2, strict=True)]
    )
    np.testing.assert_allclose(got, ref, rtol=0, atol=1e-3)


def test_geodesic_distance_along_the_equator():
    # On the equator the geodesic between points less than (1 - f) * 180 deg of
    # longitude apart is the equator itself: s = a * dlon (WGS-84, NIMA TR8350.2).
    # Tolerance: pymap3d's Vincenty iteration stops once lambda changes by < 1e-12 rad,
    # a few micrometres on the Earth (a * 1e-12 rad = 6.4e-6 m); 2e-5 m allows for that.
    for dlon in [0.001, 1.0, 45.0, 170.0]:
        got = float(geodesic_distance_m(0.0, 10.0, 0.0, 10.0 + dlon))
        assert got == pytest.approx(A_WGS84_M * math.radians(dlon), rel=0, abs=2e-5)


def test_geodesic_distance_with_coincident_pairs_in_a_batch():
    # Reference library: geographiclib. A coincident pair must give 0 and must not
    # disturb the other pairs of the same call (pymap3d 3.2 vdist does, in a batch).
    lat1 = np.array([10.0, 10.0, -33.9, 60.0])
    lon1 = np.array([20.0, 20.0, 151.2, 5.0])
    lat2 = np.array([10.05, 10.0, -33.9, 60.0])
    lon2 = np.array([20.05, 20.0, 151.3, 365.0])  # last: same point, lon + 360
    got = geodesic_distance_m(lat1, lon1, lat2, lon2)
    ref = [Geodesic.WGS84.Inverse(*p)["s12"] for p in zip(lat1, lon1, lat2, lon2, strict=True)]
    # 2e-5 m: Vincenty convergence threshold, see test_geodesic_distance_along_the_equator
    np.testing.assert_allclose(got, ref, rtol=0, atol=2e-5)
    assert got[1] == 0.0 and got[3] == 0.0
    assert isinstance(geodesic_distance_m(1.0, 2.0, 1.0, 2.0), float)


def test_geodesic_distance_rejects_antipodes_and_bad_latitudes():
    with pytest.raises(ParameterError, match="antipodal"):
        geodesic_distance_m(0.0, 0.0, 0.0, 179.5)
    with pytest.raises(ParameterError, match="antipodal"):
        geodesic_distance_m(np.array([0.0, 30.0]), 0.0, np.array([1.0, -30.0]), [1.0, 180.0])
    with pytest.raises(ParameterError) as info:
        geodesic_distance_m(0.0, 0.0, 95.0, 0.0)
    assert info.value.field == "lat2_deg"
