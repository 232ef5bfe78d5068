"""Geodetic coordinates at the edges: WGS-84 <-> local NED, through pymap3d.

Inside wavebench positions live in a local NED frame (north, east, down, in
metres) whose origin is a geodetic point on the WGS-84 ellipsoid. The NED
frame is the tangent plane at the origin: north and east lie in the plane
normal to the ellipsoid normal at the origin, down is along that normal.
Geodetic latitude/longitude/height appear only at the edges (GNSS output,
exports, spec input), converted exactly (to numerical precision) by
:mod:`pymap3d` on the WGS-84 ellipsoid.

No flat-earth (constant radius of curvature) shortcut is offered: it would
disagree with the tangent-plane frame by about ``r**2 / (2 R)`` in height
(7.9 m at r = 10 km) and by up to ``r**2 tan(lat) / (2 R)`` horizontally,
while pymap3d converts 10**6 points in well under a second.

References
----------
NIMA TR8350.2, *Department of Defense World Geodetic System 1984*, 3rd ed.,
2000 (WGS-84 defining constants a = 6378137 m, 1/f = 298.257223563).
M. Hirsch, pymap3d: Python 3-D coordinate conversions (geodetic2ned,
ned2geodetic, vincenty.vdist).
T. Vincenty, "Direct and inverse solutions of geodesics on the ellipsoid with
application of nested equations", Survey Review 23(176), 1975.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pymap3d
from numpy.typing import ArrayLike, NDArray
from pymap3d.vincenty import vdist

from .errors import ParameterError
from .params import Params, bounded

__all__ = [
    "MAX_SEPARATION_DEG",
    "WGS84",
    "GeodeticOrigin",
    "geodesic_distance_m",
    "geodetic_to_ned",
    "ned_to_geodetic",
]

#: The WGS-84 ellipsoid as defined in pymap3d (a = 6378137 m, 1/f = 298.257223563).
WGS84 = pymap3d.Ellipsoid.from_name("wgs84")

#: Largest great-circle separation [deg] accepted by :func:`geodesic_distance_m`.
#: Vincenty's inverse iteration may fail to converge for nearly antipodal points.
MAX_SEPARATION_DEG = 179.0


@dataclass(frozen=True, kw_only=True)
class GeodeticOrigin(Params):
    """Geodetic origin of the local NED world frame (WGS-84).

    Parameters
    ----------
    lat_deg : float
        Geodetic latitude [deg], in [-90, 90]. At a pole the north axis is
        defined by ``lon_deg`` (pymap3d's formulas), a convention only.
    lon_deg : float
        Longitude [deg], in [-180, 180], positive east.
    h_m : float
        Height above the WGS-84 ellipsoid [m] (not above mean sea level).

    Examples
    --------
    >>> GeodeticOrigin(lat_deg=95.0, lon_deg=10.0)  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    wavebench.core.errors.ParameterError: lat_deg = 95.0 is not allowed: ... <= 90.0
    """

    lat_deg: float = bounded(ge=-90.0, le=90.0, unit="deg", doc="geodetic latitude")
    lon_deg: float = bounded(ge=-180.0, le=180.0, unit="deg", doc="longitude, positive east")
    h_m: float = bounded(0.0, unit="m", doc="height above the WGS-84 ellipsoid")


def _check_range(name: str, value: ArrayLike, lo: float | None, hi: float | None) -> NDArray:
    """Float array of ``value``; ParameterError if not finite or outside [lo, hi]."""
    if isinstance(value, (bool, str)) or value is None:
        raise ParameterError(name, value, "must be a finite number")
    try:
        arr = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise ParameterError(name, value, "must be a finite number") from None
    bad = ~np.isfinite(arr)
    if lo is not None:
        bad |= arr < lo
    if hi is not None:
        bad |= arr > hi
    if np.any(bad):
        allowed = "must be a finite number"
        if lo is not None and hi is not None:
            allowed += f" in [{lo}, {hi}]"
        raise ParameterError(name, arr if arr.ndim else float(arr), allowed)
    return arr


def geodetic_to_ned(
    lat_deg: ArrayLike, lon_deg: ArrayLike, h_m: ArrayLike, origin: GeodeticOrigin
) -> tuple[NDArray[np.float64], NDArray[np.float64], NDArray[np.float64]]:
    """Geodetic WGS-84 coordinates to local NED about ``origin``.

    Parameters
    ----------
    lat_deg : float or array_like of shape (...)
        Geodetic latitude [deg], in [-90, 90].
    lon_deg : float or array_like of shape (...)
        Longitude [deg] (any finite value; 360 deg periodic).
    h_m : float or array_like of shape (...)
        Height above the ellipsoid [m].
    origin : GeodeticOrigin
        Origin of the NED frame.

    Returns
    -------
    north_m, east_m, down_m : ndarray of the broadcast shape
        Tangent-plane coordinates [m].

    Raises
    ------
    ParameterError
        For non-finite input or latitude outside [-90, 90].

    Examples
    --------
    >>> o = GeodeticOrigin(lat_deg=60.0, lon_deg=5.0)
    >>> n, e, d = geodetic_to_ned(60.0, 5.0, 12.0, o)
    >>> round(float(d), 6)
    -12.0
    >>> bool(abs(n) < 1e-6 and abs(e) < 1e-6)
    True
    """
    lat = _check_range("lat_deg", lat_deg, -90.0, 90.0)
    lon = _check_range("lon_deg", lon_deg, None, None)
    h = _check_range("h_m", h_m, None, None)
    n, e, d = pymap3d.geodetic2ned(
        lat, lon, h, origin.lat_deg, origin.lon_deg, origin.h_m, ell=WGS84, deg=True
    )
    shape = np.broadcast_shapes(lat.shape, lon.shape, h.shape)
    return (
        np.broadcast_to(np.asarray(n, dtype=float), shape).copy(),
        np.broadcast_to(np.asarray(e, dtype=float), shape).copy(),
        np.broadcast_to(np.asarray(d, dtype=float), shape).copy(),
    )


def ned_to_geodetic(
    north_m: ArrayLike, east_m: ArrayLike, down_m: ArrayLike, origin: GeodeticOrigin
) -> tuple[NDArray[np.float64], NDArray[np.float64], NDArray[np.float64]]:
    """Local NED about ``origin`` to geodetic WGS-84 coordinates.

    Parameters
    ----------
    north_m, east_m, down_m : float or array_like of shape (...)
        Tangent-plane coordinates [m].
    origin : GeodeticOrigin
        Origin of the NED frame.

    Returns
    -------
    lat_deg, lon_deg, h_m : ndarray of the broadcast shape
        Geodetic latitude [deg], longitude [deg] in [-180, 180] and height
        above the ellipsoid [m].

    Raises
    ------
    ParameterError
        For non-finite input.

    Examples
    --------
    >>> o = GeodeticOrigin(lat_deg=60.0, lon_deg=5.0, h_m=0.0)
    >>> lat, lon, h = ned_to_geodetic(0.0, 0.0, -3.0, o)
    >>> round(float(lat), 9), round(float(lon), 9), round(float(h), 6)
    (60.0, 5.0, 3.0)
    """
    n = _check_range("north_m", north_m, None, None)
    e = _check_range("east_m", east_m, None, None)
    d = _check_range("down_m", down_m, None, None)
    lat, lon, h = pymap3d.ned2geodetic(
        n, e, d, origin.lat_deg, origin.lon_deg, origin.h_m, ell=WGS84, deg=True
    )
    shape = np.broadcast_shapes(n.shape, e.shape, d.shape)
    return (
        np.broadcast_to(np.asarray(lat, dtype=float), shape).copy(),
        np.broadcast_to(np.asarray(lon, dtype=float), shape).copy(),
        np.broadcast_to(np.asarray(h, dtype=float), shape).copy(),
    )


def _great_circle_deg(lat1: NDArray, lon1: NDArray, lat2: NDArray, lon2: NDArray) -> NDArray:
    """Spherical central angle [deg] (haversine form), used only to screen inputs."""
    p1, p2 = np.radians(lat1), np.radians(lat2)
    dp = p2 - p1
    dl = np.radians(lon2 - lon1)
    hav = np.sin(dp / 2) ** 2 + np.cos(p1) * np.cos(p2) * np.sin(dl / 2) ** 2
    return np.degrees(2.0 * np.arcsin(np.sqrt(np.clip(hav, 0.0, 1.0))))


def geodesic_distance_m(
    lat1_deg: ArrayLike, lon1_deg: ArrayLike, lat2_deg: ArrayLike, lon2_deg: ArrayLike
) -> NDArray[np.float64] | np.float64:
    """Geodesic distance on the WGS-84 ellipsoid (Vincenty, via pymap3d).

    Parameters
    ----------
    lat1_deg, lon1_deg : float or array_like of shape (...)
        First point: geodetic latitude in [-90, 90] and longitude [deg].
    lat2_deg, lon2_deg : float or array_like of shape (...)
        Second point [deg].

    Returns
    -------
    float or ndarray of the broadcast shape
        Distance along the ellipsoid surface [m]; 0 for coincident points.

    Raises
    ------
    ParameterError
        For non-finite input, latitude outside [-90, 90], or a pair of
        nearly antipodal points (great-circle separation above
        ``MAX_SEPARATION_DEG`` = 179 deg), where Vincenty's inverse method
        may not converge.

    Notes
    -----
    Vincenty's method is accurate to well below a millimetre on the
    ellipsoid away from antipodes. Pairs are passed to
    :func:`pymap3d.vincenty.vdist` only when they are distinct: in pymap3d
    3.2 a coincident pair inside a vectorised call disturbs the results of
    the other pairs, so coincident pairs are answered with 0 here. pymap3d
    moves a point lying exactly on a pole by 0.6 mm, which bounds the error
    there.

    Examples
    --------
    >>> round(float(geodesic_distance_m(0.0, 0.0, 0.0, 1.0)), 3)
    111319.491
    """
    lat1 = _check_range("lat1_deg", lat1_deg, -90.0, 90.0)
    lon1 = _check_range("lon1_deg", lon1_deg, None, None)
    lat2 = _check_range("lat2_deg", lat2_deg, -90.0, 90.0)
    lon2 = _check_range("lon2_deg", lon2_deg, None, None)
    lat1, lon1, lat2, lon2 = (
        np.asarray(a, dtype=float) for a in np.broadcast_arrays(lat1, lon1, lat2, lon2)
    )
    sep = _great_circle_deg(lat1, lon1, lat2, lon2)
    if np.any(sep > MAX_SEPARATION_DEG):
        raise ParameterError(
            "lat2_deg, lon2_deg",
            sep,
            f"points must not be nearly antipodal (great-circle separation "
            f"<= {MAX_SEPARATION_DEG} deg) for Vincenty's inverse method",
        )
    out = np.zeros(sep.shape)
    # Coincident points (same latitude, longitudes equal modulo 360): distance 0.
    same = (lat1 == lat2) & (np.mod(lon1 - lon2, 360.0) == 0.0)
    todo = ~same
    if np.any(todo):
        dist, _az = vdist(lat1[todo], lon1[todo], lat2[todo], lon2[todo], ell=WGS84)
        out[todo] = dist
    return out[()] if out.ndim == 0 else out
