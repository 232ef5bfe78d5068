"""Parallel survey lines over a convex polygon, as a boustrophedon waypoint list.

Lines run along ``line_heading_deg`` (from north, clockwise) and are spaced
``line_spacing_m`` apart across track. They are centred across the polygon's
width (the outer lines sit at most half a spacing inside the extreme
vertices, common practice, no source) and each line is clipped to the
polygon's boundary. Consecutive lines are run in opposite directions.

Examples
--------
>>> sq = [[0.0, 0.0], [0.0, 20.0], [20.0, 20.0], [20.0, 0.0]]
>>> survey_waypoints(sq, SurveyParams(line_spacing_m=10.0, line_heading_deg=0.0)).tolist()
[[0.0, 5.0], [20.0, 5.0], [20.0, 15.0], [0.0, 15.0]]
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from wavebench.core.errors import ParameterError
from wavebench.core.params import Params, bounded

__all__ = ["SurveyParams", "check_convex_polygon", "survey_lines", "survey_waypoints"]

_TOL = 1e-9


@dataclass(frozen=True, kw_only=True)
class SurveyParams(Params):
    """Parameters of a parallel-line survey pattern.

    Parameters
    ----------
    line_spacing_m : float
        Across-track distance between neighbouring lines, m (> 0).
    line_heading_deg : float
        Direction of the first line, deg from north, clockwise, in [-360, 360].
    """

    line_spacing_m: float = bounded(50.0, gt=0.0, unit="m", doc="distance between neighbouring lines")
    line_heading_deg: float = bounded(0.0, ge=-360.0, le=360.0, unit="deg", doc="line direction from north")


def check_convex_polygon(polygon: ArrayLike) -> np.ndarray:
    """Validate a convex polygon and return it counter-clockwise in (north, east) axes.

    Parameters
    ----------
    polygon : array_like of shape (V, 2)
        North, east vertices, m, in order (either sense), V >= 3.

    Returns
    -------
    ndarray of shape (V, 2)

    Raises
    ------
    ParameterError
        Wrong shape, non-finite entries, zero area or not convex.
    """
    p = np.asarray(polygon, dtype=float)
    if p.ndim != 2 or p.shape[1] != 2 or p.shape[0] < 3:
        raise ParameterError("polygon", p, "an array of shape (V, 2) with V >= 3 vertices")
    if not np.all(np.isfinite(p)):
        raise ParameterError("polygon", p, "finite vertices")
    d = np.roll(p, -1, axis=0) - p
    cross = d[:, 0] * np.roll(d, -1, axis=0)[:, 1] - d[:, 1] * np.roll(d, -1, axis=0)[:, 0]
    scale = np.max(np.abs(d)) ** 2
    if np.all(cross >= -_TOL * scale):
        ccw = p
    elif np.all(cross <= _TOL * scale):
        ccw = p[::-1].copy()
    else:
        raise ParameterError("polygon", p, "a convex polygon with vertices in order")
    if np.sum(np.abs(cross)) <= _TOL * scale:
        raise ParameterError("polygon", p, "a polygon with non-zero area")
    # Turns all one way is not enough: a pentagram has that too. A simple convex
    # polygon turns through exactly one full circle.
    d_next = np.roll(d, -1, axis=0)
    dot = d[:, 0] * d_next[:, 0] + d[:, 1] * d_next[:, 1]
    turning = np.sum(np.arctan2(cross, dot))
    if abs(abs(turning) - 2.0 * np.pi) > 1e-6:
        raise ParameterError("polygon", p, "a simple (not self-intersecting) convex polygon")
    return ccw


def survey_lines(polygon: ArrayLike, params: SurveyParams) -> np.ndarray:
    """Survey lines clipped to a convex polygon, in boustrophedon order.

    Parameters
    ----------
    polygon : array_like of shape (V, 2)
        Convex polygon, north, east vertices, m.
    params : SurveyParams

    Returns
    -------
    ndarray of shape (n_lines, 2, 2)
        Start and end (north, east) of each line, m. Line 0 runs along
        ``line_heading_deg``, line 1 against it, and so on.

    Notes
    -----
    With unit vectors ``d = (cos h, sin h)`` along and ``n = (-sin h, cos h)``
    across the lines (``n`` points to starboard of ``d``), line ``i`` is the
    set ``{p : p . n = c_i}``. Its intersections with each polygon edge
    ``a -> b`` are found where ``(a . n - c_i)`` and ``(b . n - c_i)`` differ
    in sign, at ``t = (a . n - c_i) / ((a - b) . n)``; for a convex polygon
    the lowest and highest along-track coordinate ``p . d`` of the
    intersections are the line's ends.
    """
    poly = check_convex_polygon(polygon)
    spacing = float(params.line_spacing_m)
    h = np.deg2rad(float(params.line_heading_deg))
    d = np.array([np.cos(h), np.sin(h)])
    n = np.array([-np.sin(h), np.cos(h)])
    across = poly @ n
    lo, hi = across.min(), across.max()
    k = max(1, int(np.ceil((hi - lo) / spacing - 1e-9)))
    offsets = 0.5 * (lo + hi) + (np.arange(k) - 0.5 * (k - 1)) * spacing

    a = poly
    b = np.roll(poly, -1, axis=0)
    fa = (a @ n)[None, :] - offsets[:, None]  # (k, V)
    fb = (b @ n)[None, :] - offsets[:, None]
    crosses = (fa * fb <= 0.0) & (fa != fb)
    with np.errstate(divide="ignore", invalid="ignore"):
        t = np.where(crosses, fa / (fa - fb), np.nan)
    along_a = a @ d
    along_b = b @ d
    s = along_a[None, :] + t * (along_b - along_a)[None, :]
    s_start = np.nanmin(s, axis=1)
    s_end = np.nanmax(s, axis=1)
    # boustrophedon: odd lines reversed
    odd = (np.arange(k) % 2) == 1
    first = np.where(odd, s_end, s_start)
    second = np.where(odd, s_start, s_end)
    p0 = offsets[:, None] * n + first[:, None] * d
    p1 = offsets[:, None] * n + second[:, None] * d
    return np.stack([p0, p1], axis=1)


def survey_waypoints(polygon: ArrayLike, params: SurveyParams) -> np.ndarray:
    """Boustrophedon waypoint list over a convex polygon.

    Parameters
    ----------
    polygon : array_like of shape (V, 2)
        Convex polygon, north, east vertices, m.
    params : SurveyParams

    Returns
    -------
    ndarray of shape (2 * n_lines, 2)
        North, east waypoints, m: start and end of line 0, start and end of
        line 1 (run the other way), ...; ready for
        :func:`wavebench.guidance.path.make_path`.
    """
    return survey_lines(polygon, params).reshape(-1, 2)
