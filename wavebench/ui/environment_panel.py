"""The environment panel: current, wind and seabed controls with a map.

:class:`EnvironmentPanel` shows the generated controls of the ``[current]``,
``[wind]`` and ``[seabed]`` tables (:mod:`wavebench.ui.controls`) beside

* a map of the mission area: the seabed depth as a heat map with depth
  contours (traced by :func:`contour_segments`, a small marching-squares
  routine of our own), the mission's path, arrows of the current's velocity
  on a grid over the area (:func:`~wavebench.sea.current.current_velocity_ned`)
  and one arrow for the direction the wind blows toward;
* a record of the wind speed at the windage height (NPD gusts,
  :func:`~wavebench.sea.wind.wind_speed_series`) and of the current speed at
  the origin (with its slow Gauss--Markov variation when the spec has
  ``[current.variation]``), both drawn from trial 0's streams of the
  campaign seed, as :func:`~wavebench.spec.build.build_environment` would.

The seabed grid is the one a trial uses (:func:`~wavebench.trial.setup.build_seabed`).
Distributed fields are drawn at their representative values
(:func:`~wavebench.spec.fields.representative`) and the panel says so.
The static twin draws the map and the records as inline SVG with a table
of the values.
"""

from __future__ import annotations

import contextlib
import html
import math
from dataclasses import dataclass, field
from typing import Any

import bqplot
import ipywidgets as widgets
import numpy as np
from numpy.typing import ArrayLike

from ..core.errors import ParameterError
from ..core.streams import TrialStreams
from ..report.html import cell_number, escape
from ..report.svg import Series, Svg, _fmt, line_chart, nice_ticks
from ..sea.current import CurrentModel, CurrentVariationParams, UniformCurrentParams, current_velocity_ned, init_current
from ..sea.wind import WindParams, init_wind, wind_speed_series
from ..spec.distributions import distribution_to_data
from ..spec.fields import DIST_TYPES, representative
from ..spec.schema import Spec
from ..trial.setup import build_seabed
from .controls import SpecEditor
from .twin import EditorPanel

__all__ = [
    "ARROW_GRID",
    "DEPTH_COLORS",
    "EnvironmentPanel",
    "EnvironmentView",
    "contour_lines",
    "contour_segments",
    "environment_view",
]

#: Current arrows per side of the map.
ARROW_GRID = 7
#: Depth colours: shallow, deep; and dry ground (negative depth).
DEPTH_COLORS = ("#dcefe9", "#123f63")
LAND_COLOR = "#d8c9a3"
_WIND_COLOR = "#c8553d"
_CURRENT_COLOR = "#d4a017"
_PATH_COLOR = "#222222"
_CONTOUR_COLOR = "#4a4a4a"


# ---------------------------------------------------------------------------
# contours: marching squares
# ---------------------------------------------------------------------------


def contour_segments(x: ArrayLike, y: ArrayLike, z: ArrayLike, level: float) -> np.ndarray:
    """Line segments of the contour ``z = level`` of a gridded field (marching squares).

    Parameters
    ----------
    x : array_like of shape (nx,)
        Increasing column coordinates.
    y : array_like of shape (ny,)
        Increasing row coordinates.
    z : array_like of shape (ny, nx)
        Values at ``(x[j], y[i])``; cells with a NaN corner are skipped.
    level : float
        Contour level.

    Returns
    -------
    ndarray of shape (n_segments, 2, 2)
        ``[[x_a, y_a], [x_b, y_b]]`` per segment; crossings are placed by
        linear interpolation along the cell edges. A corner counts as
        inside when ``z >= level``.

    Notes
    -----
    Each cell is classified by which of its four edges the level crosses
    (none, two or four). With two, one segment joins the crossings. With
    four (a saddle) the cell's mean value decides: the corners on the other
    side of the level from the mean are cut off, each by the segment
    joining its two edges. This is the two-dimensional case of Lorensen &
    Cline's marching cubes, with the saddle resolved by the cell mean.

    References
    ----------
    W. E. Lorensen and H. E. Cline, "Marching cubes: a high resolution 3D
    surface construction algorithm", SIGGRAPH '87, Computer Graphics 21(4),
    163-169 (1987).

    Examples
    --------
    >>> seg = contour_segments([0.0, 1.0], [0.0, 1.0], [[0.0, 1.0], [0.0, 1.0]], 0.5)
    >>> seg.tolist()
    [[[0.5, 0.0], [0.5, 1.0]]]
    """
    xs = np.asarray(x, dtype=float)
    ys = np.asarray(y, dtype=float)
    zz = np.asarray(z, dtype=float)
    if xs.ndim != 1 or ys.ndim != 1 or zz.shape != (ys.size, xs.size) or xs.size < 2 or ys.size < 2:
        raise ParameterError("z", zz.shape, f"must have shape (len(y), len(x)) = {(ys.size, xs.size)}, both >= 2")
    lv = float(level)
    v0, v1, v2, v3 = zz[:-1, :-1], zz[:-1, 1:], zz[1:, 1:], zz[1:, :-1]
    x0, x1 = np.broadcast_to(xs[None, :-1], v0.shape), np.broadcast_to(xs[None, 1:], v0.shape)
    y0, y1 = np.broadcast_to(ys[:-1, None], v0.shape), np.broadcast_to(ys[1:, None], v0.shape)

    def frac(a: np.ndarray, b: np.ndarray) -> np.ndarray:
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.where(b != a, (lv - a) / (b - a), 0.5)

    def crossed(a: np.ndarray, b: np.ndarray) -> np.ndarray:
        return (a >= lv) != (b >= lv)

    # edges in order: bottom (v0-v1), right (v1-v2), top (v3-v2), left (v0-v3)
    t = [frac(v0, v1), frac(v1, v2), frac(v3, v2), frac(v0, v3)]
    pts = np.stack(
        [
            np.stack([x0 + t[0] * (x1 - x0), y0], axis=-1),
            np.stack([x1, y0 + t[1] * (y1 - y0)], axis=-1),
            np.stack([x0 + t[2] * (x1 - x0), y1], axis=-1),
            np.stack([x0, y0 + t[3] * (y1 - y0)], axis=-1),
        ]
    )  # (4, ny-1, nx-1, 2)
    cross = np.stack([crossed(v0, v1), crossed(v1, v2), crossed(v3, v2), crossed(v0, v3)])
    valid = np.isfinite(v0) & np.isfinite(v1) & np.isfinite(v2) & np.isfinite(v3)
    cross &= valid[None]
    n = cross.sum(axis=0)
    out = []
    two = n == 2
    if np.any(two):
        first = np.argmax(cross, axis=0)
        last = 3 - np.argmax(cross[::-1], axis=0)
        i, j = np.nonzero(two)
        out.append(np.stack([pts[first[i, j], i, j], pts[last[i, j], i, j]], axis=1))
    four = n == 4
    if np.any(four):
        i, j = np.nonzero(four)
        centre = 0.25 * (v0 + v1 + v2 + v3)[i, j] >= lv
        a0 = v0[i, j] >= lv
        # corners 1 and 3 cut off (edges b-r, t-l) when corner 0 is on the centre's side
        same = a0 == centre
        e = np.where(same[:, None], np.array([[0, 1, 2, 3]]), np.array([[0, 3, 1, 2]]))
        for a, b in ((0, 1), (2, 3)):
            out.append(np.stack([pts[e[:, a], i, j], pts[e[:, b], i, j]], axis=1))
    if not out:
        return np.zeros((0, 2, 2))
    return np.concatenate(out, axis=0)


def contour_lines(
    x: ArrayLike, y: ArrayLike, z: ArrayLike, levels: ArrayLike
) -> tuple[list[np.ndarray], list[np.ndarray]]:
    """Contour segments of several levels as NaN-separated polylines (one per level).

    Returns
    -------
    xs, ys : list of ndarray
        For each level, the segment end points with a NaN after each
        segment (``[xa, xb, nan, xa, xb, nan, ...]``), ready for a line plot
        that breaks at NaN.
    """
    xs, ys = [], []
    for lv in np.atleast_1d(np.asarray(levels, dtype=float)):
        seg = contour_segments(x, y, z, float(lv))
        pad = np.full((seg.shape[0], 1), np.nan)
        xs.append(np.concatenate([seg[:, :, 0], pad], axis=1).ravel())
        ys.append(np.concatenate([seg[:, :, 1], pad], axis=1).ravel())
    return xs, ys


def _arrows(east: np.ndarray, north: np.ndarray, de: np.ndarray, dn: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """NaN-separated line points drawing arrows from (east, north) by (de, dn), heads at the tips."""
    xs, ys = [], []
    for e, n, u, v in zip(east, north, de, dn, strict=True):
        length = math.hypot(u, v)
        if length == 0.0:
            continue
        ang = math.atan2(v, u)
        te, tn = e + u, n + v
        head = 0.3 * length
        xs += [e, te, math.nan]
        ys += [n, tn, math.nan]
        for side in (+1, -1):
            a = ang + math.pi - side * math.radians(25.0)
            xs += [te, te + head * math.cos(a), math.nan]
            ys += [tn, tn + head * math.sin(a), math.nan]
    return np.asarray(xs, dtype=float), np.asarray(ys, dtype=float)


# ---------------------------------------------------------------------------
# what is plotted
# ---------------------------------------------------------------------------


@dataclass
class EnvironmentView:
    """What the environment panel draws, computed from a spec.

    Attributes
    ----------
    extent : (east_min, east_max, north_min, north_max)
        The map's extent [m].
    grid_east_m, grid_north_m, depth_m : ndarray or None
        The depth grid (None without ``[seabed]``); ``depth_m`` of shape
        (n_north, n_east), positive down.
    levels_m : ndarray
        Contour levels [m].
    contour_x, contour_y : list of ndarray
        NaN-separated contour segments per level (east, north).
    path_east_m, path_north_m : ndarray
        The mission's waypoints (survey patterns expanded).
    arrow_east_m, arrow_north_m : ndarray
        Current arrows (NaN-separated), tails on a grid over the area.
    current_ne_mps : ndarray of shape (2,) or None
        Mean current velocity [north, east] [m/s].
    wind_arrow_east_m, wind_arrow_north_m : ndarray
        One arrow pointing where the wind blows toward.
    t_s, wind_speed_mps, current_speed_mps : ndarray or None
        Records for trial 0 of the campaign seed.
    values : list of (str, str)
        The table of values.
    notes : list of str
        Representative values of distributions and other remarks.
    """

    extent: tuple[float, float, float, float]
    grid_east_m: np.ndarray | None
    grid_north_m: np.ndarray | None
    depth_m: np.ndarray | None
    levels_m: np.ndarray
    contour_x: list[np.ndarray]
    contour_y: list[np.ndarray]
    path_east_m: np.ndarray
    path_north_m: np.ndarray
    arrow_east_m: np.ndarray
    arrow_north_m: np.ndarray
    current_ne_mps: np.ndarray | None
    wind_arrow_east_m: np.ndarray
    wind_arrow_north_m: np.ndarray
    t_wind_s: np.ndarray | None
    wind_speed_mps: np.ndarray | None
    t_current_s: np.ndarray | None
    current_speed_mps: np.ndarray | None
    values: list[tuple[str, str]] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)


def _plotted(name: str, value: Any, unit: str, notes: list[str]) -> float:
    if isinstance(value, DIST_TYPES):
        rep = float(representative(value))
        kind = next(iter(distribution_to_data(value)))
        notes.append(f"{name} is a distribution ({kind}); drawn at its representative value {rep:.4g}{unit}")
        return rep
    return float(value)


#: Longest wind record drawn [s] and its sample interval [s].
WIND_RECORD_S, WIND_DT_S = 600.0, 0.5
#: Longest current record drawn [s] and its sample interval [s].
CURRENT_RECORD_S, CURRENT_DT_S = 3600.0, 5.0


def environment_view(spec: Spec) -> EnvironmentView:
    """Compute the environment panel's map and records from ``spec``."""
    notes: list[str] = []
    values: list[tuple[str, str]] = []
    wp = np.asarray(spec.mission.waypoints(), dtype=float)
    seabed = build_seabed(spec)
    grid_e = grid_n = depth = None
    if seabed is not None and spec.seabed.kind != "flat":
        grid_e, grid_n, depth = np.asarray(seabed.east_m), np.asarray(seabed.north_m), np.asarray(seabed.depth_m)
        e_lo, e_hi = float(min(grid_e[0], wp[:, 1].min())), float(max(grid_e[-1], wp[:, 1].max()))
        n_lo, n_hi = float(min(grid_n[0], wp[:, 0].min())), float(max(grid_n[-1], wp[:, 0].max()))
    else:
        e_lo, e_hi = float(wp[:, 1].min()), float(wp[:, 1].max())
        n_lo, n_hi = float(wp[:, 0].min()), float(wp[:, 0].max())
        pad = max(50.0, 0.15 * max(e_hi - e_lo, n_hi - n_lo))
        e_lo, e_hi, n_lo, n_hi = e_lo - pad, e_hi + pad, n_lo - pad, n_hi + pad
        if seabed is not None:
            grid_e, grid_n = np.array([e_lo, e_hi]), np.array([n_lo, n_hi])
            depth = np.full((2, 2), float(spec.seabed.depth_m))
    extent = (e_lo, e_hi, n_lo, n_hi)

    levels = np.zeros(0)
    cx: list[np.ndarray] = []
    cy: list[np.ndarray] = []
    if depth is not None:
        lo, hi = float(np.min(depth)), float(np.max(depth))
        if hi > lo:
            levels = np.array([v for v in nice_ticks(lo, hi, 6) if lo < v < hi])
            if lo < 0.0 < hi and 0.0 not in levels:
                levels = np.sort(np.append(levels, 0.0))
            cx, cy = contour_lines(grid_e, grid_n, depth, levels)
        kind = spec.seabed.kind
        values.append(("seabed", f"{kind}" + (f", layout seed {spec.seabed.layout_seed}" if kind != "flat" else "")))
        values.append(("depth range [m]", f"{cell_number(lo)} to {cell_number(hi)}"))
        if levels.size:
            values.append(("contours [m]", ", ".join(_fmt(float(v)) for v in levels)))
        if lo < 0.0:
            notes.append("negative depth is dry ground (a shoal breaking the surface)")
    else:
        values.append(("seabed", "none (no [seabed] table)"))

    span = max(e_hi - e_lo, n_hi - n_lo)
    seed = int(spec.campaign.seed)
    streams = TrialStreams(seed=seed, trials=(0,))
    duration = float(spec.scenario.duration_s)

    arrow_e = arrow_n = np.zeros(0)
    current_ne = None
    t_cur = cur_speed = None
    if spec.current is not None:
        c = spec.current
        speed = _plotted("current.speed_mps", c.speed_mps, " m/s", notes)
        set_deg = _plotted("current.set_deg", c.set_deg, " deg", notes)
        model = CurrentModel(uniform=UniformCurrentParams(speed_mps=speed, set_deg=set_deg))
        ge = np.linspace(e_lo, e_hi, ARROW_GRID + 2)[1:-1]
        gn = np.linspace(n_lo, n_hi, ARROW_GRID + 2)[1:-1]
        ee, nn = (a.ravel() for a in np.meshgrid(ge, gn))
        calm = init_current(model, TrialStreams(seed=seed, trials=range(ee.size)), duration_s=0.0)
        v = current_velocity_ned(model, calm, nn, ee)
        current_ne = v[0].copy()
        vmax = float(np.max(np.hypot(v[:, 0], v[:, 1])))
        if vmax > 0.0:
            scale = 0.7 * (ge[1] - ge[0] if ge.size > 1 else span / 4) / vmax
            arrow_e, arrow_n = _arrows(ee, nn, v[:, 1] * scale, v[:, 0] * scale)
        values.append(("current speed [m/s]", cell_number(speed)))
        values.append(("current set, flowing toward [deg]", cell_number(set_deg)))
        if c.variation is not None:
            var = c.variation
            names = ("speed_sigma_mps", "speed_tc_s", "set_sigma_deg", "set_tc_s")
            vv = {k: _plotted(f"current.variation.{k}", getattr(var, k), "", notes) for k in names}
            model = CurrentModel(uniform=model.uniform, variation=CurrentVariationParams(**vv))
            values.append(("current variation", f"speed sd {vv['speed_sigma_mps']:.3g} m/s over "
                           f"{vv['speed_tc_s']:.4g} s, set sd {vv['set_sigma_deg']:.3g} deg over "
                           f"{vv['set_tc_s']:.4g} s"))  # fmt: skip
        t_end = min(CURRENT_RECORD_S, duration)
        t_cur = np.arange(0.0, t_end + 0.5 * CURRENT_DT_S, CURRENT_DT_S)
        t_cur = t_cur[t_cur <= t_end]
        state = init_current(model, streams, duration_s=t_end, dt_s=1.0)
        vel = np.array([current_velocity_ned(model, state, [0.0], [0.0], t_s=t)[0] for t in t_cur])
        cur_speed = np.hypot(vel[:, 0], vel[:, 1])
    else:
        values.append(("current", "none (no [current] table)"))

    wind_e = wind_n = np.zeros(0)
    t_wind = wind_speed = None
    if spec.wind is not None:
        w = spec.wind
        speed = _plotted("wind.speed_mps", w.speed_mps, " m/s", notes)
        from_deg = _plotted("wind.direction_from_deg", w.direction_from_deg, " deg", notes)
        height = _plotted("wind.height_m", w.height_m, " m", notes)
        params = WindParams(speed_mps=speed, direction_from_deg=from_deg, height_m=height,
                            gust_spectrum=w.gust_spectrum, n_components=w.n_components,
                            f_min_hz=w.f_min_hz, f_max_hz=w.f_max_hz)  # fmt: skip
        state = init_wind(params, streams)
        t_end = min(WIND_RECORD_S, duration)
        t_wind = np.arange(0.0, t_end + 0.5 * WIND_DT_S, WIND_DT_S)
        wind_speed = wind_speed_series(state, t_wind)[0]
        toward = math.radians(from_deg) + math.pi
        length = 0.18 * span
        te, tn = e_lo + 0.12 * (e_hi - e_lo), n_hi - 0.12 * (n_hi - n_lo)
        tail_e, tail_n = te - 0.5 * length * math.sin(toward), tn - 0.5 * length * math.cos(toward)
        wind_e, wind_n = _arrows(np.array([tail_e]), np.array([tail_n]), np.array([length * math.sin(toward)]),
                                 np.array([length * math.cos(toward)]))  # fmt: skip
        values.append(("wind speed at 10 m [m/s]", cell_number(speed)))
        values.append(("wind from [deg]", cell_number(from_deg)))
        values.append(("gust spectrum", w.gust_spectrum))
    else:
        values.append(("wind", "none (no [wind] table)"))
    values.append(("record seed (trial 0)", str(seed)))

    return EnvironmentView(
        extent=extent, grid_east_m=grid_e, grid_north_m=grid_n, depth_m=depth, levels_m=levels,
        contour_x=cx, contour_y=cy, path_east_m=wp[:, 1].copy(), path_north_m=wp[:, 0].copy(),
        arrow_east_m=arrow_e, arrow_north_m=arrow_n, current_ne_mps=current_ne,
        wind_arrow_east_m=wind_e, wind_arrow_north_m=wind_n, t_wind_s=t_wind, wind_speed_mps=wind_speed,
        t_current_s=t_cur, current_speed_mps=cur_speed, values=values, notes=notes,
    )  # fmt: skip


# ---------------------------------------------------------------------------
# static map
# ---------------------------------------------------------------------------


def _mix(c0: str, c1: str, f: float) -> str:
    a = [int(c0[i : i + 2], 16) for i in (1, 3, 5)]
    b = [int(c1[i : i + 2], 16) for i in (1, 3, 5)]
    return "#" + "".join(f"{round(x + (y - x) * f):02x}" for x, y in zip(a, b, strict=True))


def depth_color(depth_m: float, lo: float, hi: float) -> str:
    """Fill colour of a depth: dry ground below 0, then shallow to deep between ``max(lo, 0)`` and ``hi``."""
    if depth_m < 0.0:
        return LAND_COLOR
    base = max(lo, 0.0)
    f = 0.0 if hi <= base else min(max((depth_m - base) / (hi - base), 0.0), 1.0)
    return _mix(DEPTH_COLORS[0], DEPTH_COLORS[1], f)


def map_svg(view: EnvironmentView, *, width: int = 520, max_cells: int = 50) -> Svg:
    """The map as SVG: depth cells (at most ``max_cells`` per side), contours, path and arrows."""
    e0, e1, n0, n1 = view.extent
    left, top, right, bottom = 62, 48, 16, 44
    pw = width - left - right
    ph = max(120, min(600, round(pw * (n1 - n0) / (e1 - e0))))
    s = min(pw / (e1 - e0), ph / (n1 - n0))
    pw, ph = round((e1 - e0) * s), round((n1 - n0) * s)
    height = ph + top + bottom

    def px(e: Any) -> Any:
        return left + (np.asarray(e, dtype=float) - e0) * s

    def py(n: Any) -> Any:
        return top + ph - (np.asarray(n, dtype=float) - n0) * s

    out = [
        f'<svg xmlns="http://www.w3.org/2000/svg" width="{width}" height="{height}" viewBox="0 0 {width} {height}" '
        f'font-family="sans-serif" font-size="11">',
        f'<text x="{left}" y="18" font-size="13" font-weight="bold">mission area: depth, current, wind</text>',
        f'<rect x="{left}" y="{top}" width="{pw}" height="{ph}" fill="#fbfbf8" stroke="#999"/>',
    ]
    if view.depth_m is not None:
        d = view.depth_m
        lo, hi = float(np.min(d)), float(np.max(d))
        ie = np.arange(0, d.shape[1], max(1, math.ceil(d.shape[1] / max_cells)))
        in_ = np.arange(0, d.shape[0], max(1, math.ceil(d.shape[0] / max_cells)))
        edges_e = _cell_edges(view.grid_east_m, ie)
        edges_n = _cell_edges(view.grid_north_m, in_)
        xe, yn = px(edges_e), py(edges_n)
        for a, i in enumerate(in_):
            for b, j in enumerate(ie):
                fill = depth_color(d[i, j], lo, hi)
                out.append(f'<rect x="{xe[b]:.1f}" y="{yn[a + 1]:.1f}" width="{xe[b + 1] - xe[b] + 0.3:.1f}" '
                           f'height="{yn[a] - yn[a + 1] + 0.3:.1f}" fill="{fill}"/>')  # fmt: skip
    for xs, ys in zip(view.contour_x, view.contour_y, strict=True):
        out.append(_path(px(xs), py(ys), _CONTOUR_COLOR, 0.8))
    out.append(_path(px(view.path_east_m), py(view.path_north_m), _PATH_COLOR, 1.6, dashed=True))
    out.append(_path(px(view.arrow_east_m), py(view.arrow_north_m), _CURRENT_COLOR, 1.4))
    out.append(_path(px(view.wind_arrow_east_m), py(view.wind_arrow_north_m), _WIND_COLOR, 2.2))
    for t in nice_ticks(e0, e1):
        X = float(px(t))
        out.append(f'<text x="{X:.1f}" y="{top + ph + 14}" text-anchor="middle">{_fmt(t)}</text>')
    for t in nice_ticks(n0, n1):
        Y = float(py(t))
        out.append(f'<text x="{left - 6}" y="{Y + 4:.1f}" text-anchor="end">{_fmt(t)}</text>')
    out.append(f'<text x="{left + pw / 2:.1f}" y="{height - 8}" text-anchor="middle">east [m]</text>')
    out.append(f'<text x="14" y="{top + ph / 2:.1f}" text-anchor="middle" '
               f'transform="rotate(-90 14 {top + ph / 2:.1f})">north [m]</text>')  # fmt: skip
    legend = [("path", _PATH_COLOR), ("current", _CURRENT_COLOR), ("wind toward", _WIND_COLOR)]
    X = float(left)
    for label, color in legend:
        out.append(f'<line x1="{X}" y1="32" x2="{X + 16}" y2="32" stroke="{color}" stroke-width="2.5"/>')
        out.append(f'<text x="{X + 20}" y="36">{html.escape(label)}</text>')
        X += 28 + 6.6 * len(label)
    if view.depth_m is not None:
        lo, hi = float(np.min(view.depth_m)), float(np.max(view.depth_m))
        swatches = [(f"{_fmt(round(v, 1))} m", depth_color(v, lo, hi)) for v in np.linspace(max(lo, 0.0), hi, 3)]
        if lo < 0.0:
            swatches.insert(0, ("dry", LAND_COLOR))
        for label, color in swatches:
            out.append(f'<rect x="{X:.1f}" y="26" width="12" height="11" fill="{color}" stroke="#bbb"/>')
            out.append(f'<text x="{X + 15:.1f}" y="36">{html.escape(label)}</text>')
            X += 22 + 6.6 * len(label)
    out.append("</svg>")
    return Svg("\n".join(out))


def _cell_edges(grid: np.ndarray, idx: np.ndarray) -> np.ndarray:
    """Edges of the cells around the sampled grid nodes ``grid[idx]``: midpoints, clipped to the grid."""
    c = np.asarray(grid, dtype=float)[idx]
    return np.concatenate([[float(grid[0])], 0.5 * (c[:-1] + c[1:]), [float(grid[-1])]])


def _path(xs: np.ndarray, ys: np.ndarray, color: str, width: float, dashed: bool = False) -> str:
    parts, pen = [], False
    for a, b in zip(np.atleast_1d(xs), np.atleast_1d(ys), strict=True):
        if math.isfinite(a) and math.isfinite(b):
            parts.append(f"{'L' if pen else 'M'}{a:.1f},{b:.1f}")
            pen = True
        else:
            pen = False
    if not parts:
        return ""
    dash = ' stroke-dasharray="6,4"' if dashed else ""
    return f'<path d="{" ".join(parts)}" fill="none" stroke="{color}" stroke-width="{width}"{dash}/>'


# ---------------------------------------------------------------------------
# the panel
# ---------------------------------------------------------------------------


def _nan_rows(rows: list[np.ndarray]) -> np.ndarray:
    """Rows of unequal length as one 2-D array padded with NaN (for a multi-line mark)."""
    if not rows:
        return np.full((1, 2), np.nan)
    n = max(2, max(r.size for r in rows))
    out = np.full((len(rows), n), np.nan)
    for k, r in enumerate(rows):
        out[k, : r.size] = r
    return out


class EnvironmentPanel(EditorPanel):
    """The ``[current]``, ``[wind]`` and ``[seabed]`` controls with a map and records.

    Parameters
    ----------
    spec : Spec
        The starting spec.

    Attributes
    ----------
    editor : SpecEditor
        The generated controls of the three tables; its file row saves and loads
        the whole spec;
        ``editor.spec`` is the current valid spec.
    view : EnvironmentView
        What is drawn now.
    map_fig, record_fig : bqplot.Figure
        The live map (depth heat map, contours, path, arrows) and the
        wind and current speed records.
    redraws : int
        Number of redraws (one per accepted change that touches what is drawn).
    widget : ipywidgets.VBox
        The panel.
    """

    title = "environment"

    def __init__(self, spec: Spec) -> None:
        self.editor = SpecEditor(spec, tables=("current", "wind", "seabed"))
        self.redraws = 0
        sx, sy = bqplot.LinearScale(), bqplot.LinearScale()
        self._map_scales = (sx, sy)
        sc = bqplot.ColorScale(colors=list(DEPTH_COLORS))
        self.heatmap = bqplot.HeatMap(x=np.zeros(2), y=np.zeros(2), color=np.zeros((2, 2)),
                                      scales={"x": sx, "y": sy, "color": sc}, visible=False)  # fmt: skip
        self.contours = bqplot.Lines(x=np.zeros((1, 2)), y=np.zeros((1, 2)), scales={"x": sx, "y": sy},
                                     colors=[_CONTOUR_COLOR], stroke_width=1)  # fmt: skip
        self.path = bqplot.Lines(x=np.zeros(2), y=np.zeros(2), scales={"x": sx, "y": sy}, colors=[_PATH_COLOR],
                                 line_style="dashed", labels=["path"])  # fmt: skip
        self.current_arrows = bqplot.Lines(x=np.zeros(2), y=np.zeros(2), scales={"x": sx, "y": sy},
                                           colors=[_CURRENT_COLOR], stroke_width=2, labels=["current"])  # fmt: skip
        self.wind_arrow = bqplot.Lines(x=np.zeros(2), y=np.zeros(2), scales={"x": sx, "y": sy},
                                       colors=[_WIND_COLOR], stroke_width=3, labels=["wind toward"])  # fmt: skip
        self._map_axes = (
            bqplot.Axis(scale=sx, label="east [m]"),
            bqplot.Axis(scale=sy, label="north [m]", side="left", label_offset="48px"),
        )
        axes = [*self._map_axes,
                bqplot.ColorAxis(scale=sc, label="depth [m]", side="right")]  # fmt: skip
        self.map_fig = bqplot.Figure(
            marks=[self.heatmap, self.contours, self.path, self.current_arrows, self.wind_arrow], axes=axes,
            title="mission area", layout=widgets.Layout(width="560px", height="520px"),
            fig_margin={"top": 40, "bottom": 45, "left": 65, "right": 80},
        )  # fmt: skip
        rx, ry = bqplot.LinearScale(), bqplot.LinearScale(min=0.0)
        self.wind_line = bqplot.Lines(x=np.zeros(2), y=np.zeros(2), scales={"x": rx, "y": ry}, colors=[_WIND_COLOR],
                                      labels=["wind at windage height"], display_legend=True)  # fmt: skip
        self.current_line = bqplot.Lines(x=np.zeros(2), y=np.zeros(2), scales={"x": rx, "y": ry},
                                         colors=[_CURRENT_COLOR], labels=["current at the origin"],
                                         display_legend=True)  # fmt: skip
        self.record_fig = bqplot.Figure(
            marks=[self.wind_line, self.current_line],
            axes=[bqplot.Axis(scale=rx, label="t [s]"),
                  bqplot.Axis(scale=ry, label="speed [m/s]", side="left", tick_format=".3~g",
                              label_offset="48px")],
            title="speeds (trial 0)", layout=widgets.Layout(width="460px", height="300px"),
            legend_location="bottom-right",
            fig_margin={"top": 40, "bottom": 45, "left": 68, "right": 15},
        )  # fmt: skip
        self.table = widgets.HTML()
        self.notes = widgets.HTML()
        figs = widgets.HBox([self.map_fig, widgets.VBox([self.record_fig, self.table])],
                            layout=widgets.Layout(flex_flow="row wrap"))  # fmt: skip
        self.widget = widgets.VBox([self.editor.widget, figs, self.notes])
        self._follow_editor()

    def _redraw(self, spec: Spec) -> None:
        key = (spec.current, spec.wind, spec.seabed, spec.mission, spec.campaign.seed, spec.scenario.duration_s)
        if key == self._key:
            return
        self._key = key
        view = environment_view(spec)
        self.view = view
        self.redraws += 1
        sx, sy = self._map_scales
        marks = (self.heatmap, self.contours, self.path, self.current_arrows, self.wind_arrow, self.wind_line,
                 self.current_line)  # fmt: skip
        with contextlib.ExitStack() as stack:
            for w in (*marks, sx, sy, *self._map_axes, self.map_fig):
                stack.enter_context(w.hold_sync())
            e0, e1, n0, n1 = view.extent
            half = 0.5 * max(e1 - e0, n1 - n0)
            ce, cn = 0.5 * (e0 + e1), 0.5 * (n0 + n1)
            sx.min, sx.max, sy.min, sy.max = ce - half, ce + half, cn - half, cn + half
            for axis, lo in zip(self._map_axes, (ce - half, cn - half), strict=True):
                axis.tick_values = np.asarray(nice_ticks(lo, lo + 2.0 * half, 5))
            if view.depth_m is not None:
                self.heatmap.x, self.heatmap.y, self.heatmap.color = view.grid_east_m, view.grid_north_m, view.depth_m
                self.heatmap.visible = True
            else:
                self.heatmap.visible = False
            self.contours.x, self.contours.y = _nan_rows(view.contour_x), _nan_rows(view.contour_y)
            self.path.x, self.path.y = view.path_east_m, view.path_north_m
            self.current_arrows.x = view.arrow_east_m if view.arrow_east_m.size else np.full(2, np.nan)
            self.current_arrows.y = view.arrow_north_m if view.arrow_north_m.size else np.full(2, np.nan)
            self.wind_arrow.x = view.wind_arrow_east_m if view.wind_arrow_east_m.size else np.full(2, np.nan)
            self.wind_arrow.y = view.wind_arrow_north_m if view.wind_arrow_north_m.size else np.full(2, np.nan)
            for line, t, v in ((self.wind_line, view.t_wind_s, view.wind_speed_mps),
                               (self.current_line, view.t_current_s, view.current_speed_mps)):  # fmt: skip
                line.x, line.y = (t, v) if t is not None else (np.zeros(0), np.zeros(0))
            self.table.value = _table_html(view)
            self.notes.value = "".join(f"<div>{escape(n)}</div>" for n in view.notes)

    def static_html(self) -> str:
        """The map and the records as inline SVG, with the table of values."""
        view = self.view
        assert view is not None
        svgs = [map_svg(view)]
        series = []
        if view.t_wind_s is not None:
            series.append(Series(view.t_wind_s, view.wind_speed_mps, label="wind", color=_WIND_COLOR, width=1.0))
        if view.t_current_s is not None:
            series.append(Series(view.t_current_s, view.current_speed_mps, label="current", color=_CURRENT_COLOR))
        if series:
            svgs.append(line_chart(series, title="speeds (trial 0)", xlabel="t [s]", ylabel="speed [m/s]",
                                   width=460, height=280))  # fmt: skip
        notes = "".join(f"<li>{escape(n)}</li>" for n in view.notes)
        return (_table_html(view) + (f"<ul>{notes}</ul>" if notes else "")
                + '<div style="display:flex;flex-wrap:wrap;gap:8px">' + "".join(svgs) + "</div>")  # fmt: skip


def _table_html(view: EnvironmentView) -> str:
    rows = "".join(f"<tr><th style='text-align:left'>{escape(k)}</th><td>{escape(v)}</td></tr>"
                   for k, v in view.values)  # fmt: skip
    return f"<table>{rows}</table>"
