"""Study sections of the campaign HTML report: what drives the results, operability, closest to failing.

Three sections built from a store's metrics table (one row per trial, the
metrics and the ``param.<toml path>`` draws) and the spec's requirements:

- *What drives the results*: for each requirement, the Spearman rank
  correlation of every drawn input with the requirement's metric and with
  meeting the requirement (:func:`~wavebench.analysis.sensitivity.rank_sensitivity`,
  :func:`~wavebench.analysis.sensitivity.requirement_sensitivity`), as ranked
  signed bars with a table of rho, p-value and n. Inputs with p > 0.05 (or an
  undefined rho) are drawn pale.
- *Operability*: when the trials drew the sea's mean wave direction
  (``param.sea.spreading.mean_dir_deg``), the spec (its route) is known and
  the significant wave height is drawn (``param.sea.hs_m``) or fixed, per
  requirement a polar chart and a matrix table of the share of trials that
  met it by wave heading RELATIVE to the craft's course
  (:func:`relative_heading_deg`: 180 deg head seas, 0 following, 90/270
  beam) and Hs. The course is that of the route's longest leg
  (:func:`route_course`). Grid axes
  (``{ grid = [...] }``) give exact cells, one per level; drawn values are
  binned (30-degree sectors, Hs quantile bins). Cells with fewer than 5
  trials are hatched. :func:`operability_of` gives one requirement's counts
  from a store's metrics and spec.
- *Closest to failing*: per requirement, the 5 trials with the least margin
  to the threshold (:func:`closest_trials`), trials without a value first,
  with how they ended, why they failed and what they drew; and the Python
  lines that replay one trial alone from the store's ``spec.toml``.

:func:`study_sections` returns ``(anchor, link text, HTML)`` tuples, only for
the sections that have something to show. Every text taken from the store is
HTML-escaped.

References
----------
.. [1] C. Spearman, "The proof and measurement of association between two
   things", American Journal of Psychology 15(1), 72-101, 1904.
.. [2] T. I. Fossen, Handbook of Marine Craft Hydrodynamics and Motion
   Control, 2nd ed., Wiley, 2021 (wave encounter angle and frequency).
"""

from __future__ import annotations

import hashlib
import json
import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
import pandas as pd

from ..analysis.sensitivity import PARAM_PREFIX, rank_sensitivity, requirement_sensitivity
from ..core.errors import ParameterError
from ..spec.distributions import Grid
from .charts import signed_bar_chart
from .html import cell_number, escape
from .svg import Svg

__all__ = [
    "COURSE_TOLERANCE_DEG",
    "DIRECTION_COLUMN",
    "HEADING_BIN_DEG",
    "HS_COLUMN",
    "MIN_CELL_TRIALS",
    "N_CLOSEST",
    "SHARE_SCALE",
    "SIGNIFICANCE",
    "STUDY_CSS",
    "Operability",
    "Requirement",
    "RouteCourse",
    "closest_trials",
    "meets",
    "operability",
    "operability_of",
    "operability_polar_chart",
    "operability_table",
    "relative_heading_deg",
    "replay_code",
    "requirements_of",
    "route_course",
    "share_fill",
    "study_sections",
]

#: Drawn input used as the wave direction (coming from, clockwise from north) of the operability chart [deg].
DIRECTION_COLUMN = "param.sea.spreading.mean_dir_deg"
#: Drawn input used as the sea state of the operability chart [m].
HS_COLUMN = "param.sea.hs_m"
#: Width of the relative-heading sectors for drawn (not grid) directions [deg].
HEADING_BIN_DEG = 30.0
#: Legs within this of a course count as on it (:func:`route_course`) [deg] (common practice, no source).
COURSE_TOLERANCE_DEG = 10.0
#: Relative tolerance of a value on a grid level (floats read back from the store).
_LEVEL_TOL = 1e-9
#: Stops of the operability colour scale, share 0 to 1 (:func:`share_fill`); CIE L* 96 down to 19.
SHARE_SCALE = ("#fbf4dc", "#bfe0ab", "#7ec29e", "#3f9c9c", "#2b6f92", "#27467f", "#1f2a5c")
#: Cells with fewer trials are shown as too few.
MIN_CELL_TRIALS = 5
#: Trials listed per requirement in "Closest to failing".
N_CLOSEST = 5
#: p-values above this are drawn pale.
SIGNIFICANCE = 0.05

_SYMBOL = {"below": "<", "above": ">"}

#: Style rules the sections use, for the page's ``<style>`` (added to the campaign report's CSS).
STUDY_CSS = """
tr.muted td { color: #999; }
.scroll { overflow-x: auto; max-width: 100%; }
td.reason { min-width: 12rem; }
table.operability td.cell { text-align: center; min-width: 3.2rem; }
table.operability td.few { color: #555;
  background: repeating-linear-gradient(45deg, #efefe9 0 4px, #dcdcd4 4px 6px); }
table.operability td.empty { background: #fff; color: #999; }
"""




def _cell(v: Any, digits: int = 4, cls: str = "num") -> str:
    try:
        f = float(v)
    except (TypeError, ValueError):
        return f"<td class='{cls}'>{escape(v)}</td>"
    return f"<td class='{cls}' data-value=\"{f!r}\">{cell_number(f, digits)}</td>"


@dataclass(frozen=True)
class Requirement:
    """What the study sections need of one requirement.

    Attributes
    ----------
    name : str
    metric : str
        The metric column.
    comparator : {"below", "above"}
    threshold : float
        In the metric's unit.
    probability : float
        Required probability of meeting it (NaN when unknown).
    unit : str
    """

    name: str
    metric: str
    comparator: str
    threshold: float
    probability: float
    unit: str = ""

    def text(self) -> str:
        """E.g. ``"xte_p95_m < 5 m"``."""
        return f"{self.metric} {_SYMBOL[self.comparator]} {cell_number(self.threshold)} {self.unit}".strip()


def requirements_of(spec: Any, verdicts: Sequence[dict[str, Any]] = ()) -> list[Requirement]:
    """The requirements of a loaded spec, or of a store's verdicts when the spec did not load.

    Parameters
    ----------
    spec : Spec or None
        Its ``requirements`` is a tuple of ``(name, RequirementSpec)``.
    verdicts : sequence of dict
        Objects of ``verdicts.json`` (used when ``spec`` is None).

    Returns
    -------
    list of Requirement
        Those with a known comparator and a finite threshold.

    Examples
    --------
    >>> requirements_of(None, [{"name": "r", "metric": "xte_p95_m", "comparator": "below", "threshold": 2.0,
    ...                         "probability": 0.9, "unit": "m"}])[0].text()
    'xte_p95_m < 2 m'
    """
    raw: list[tuple[Any, ...]] = []
    if spec is not None:
        for name, req in getattr(spec, "requirements", ()) or ():
            raw.append((name, req.metric, req.comparator, req.threshold, req.probability, getattr(req, "unit", "")))
    else:
        for v in verdicts:
            raw.append((v.get("name"), v.get("metric"), v.get("comparator"), v.get("threshold"),
                        v.get("probability"), v.get("unit", "")))  # fmt: skip
    out = []
    for name, metric, comparator, threshold, probability, unit in raw:
        try:
            t = float(threshold)
        except (TypeError, ValueError):
            continue
        try:
            p = float(probability)
        except (TypeError, ValueError):
            p = math.nan
        if comparator in _SYMBOL and math.isfinite(t) and metric:
            out.append(Requirement(str(name), str(metric), str(comparator), t, p, str(unit or "")))
    return out


def meets(values: Any, comparator: str, threshold: float) -> np.ndarray:
    """Whether each value meets ``comparator threshold`` (NaN never does), as in the verdicts.

    Examples
    --------
    >>> meets([1.0, 3.0, float("nan")], "below", 2.0).tolist()
    [True, False, False]
    """
    v = np.asarray(values, dtype=float)
    with np.errstate(invalid="ignore"):
        ok = v < threshold if comparator == "below" else v > threshold
    return ok & ~np.isnan(v)


def _param_columns(metrics: pd.DataFrame) -> list[str]:
    return [str(c) for c in metrics.columns if str(c).startswith(PARAM_PREFIX) and metrics[c].dtype.kind in "biuf"]


# ---------------------------------------------------------------------------
# what drives the results
# ---------------------------------------------------------------------------


def _short(param: str) -> str:
    return param[len(PARAM_PREFIX) :] if param.startswith(PARAM_PREFIX) else param


def _rho_figure(table: pd.DataFrame, title: str, caption: str) -> str:
    muted = [not (math.isfinite(r) and p <= SIGNIFICANCE) for r, p in zip(table["rho"], table["p_value"], strict=True)]
    svg = signed_bar_chart([_short(p) for p in table["parameter"]], table["rho"].to_numpy(dtype=float), muted=muted,
                           title=title, xlabel="Spearman rank correlation rho")  # fmt: skip
    return f"<figure>{svg}<figcaption>{escape(caption)}</figcaption></figure>"


def _drivers_section(metrics: pd.DataFrame, reqs: list[Requirement]) -> str:
    params = _param_columns(metrics)
    if not params or not reqs:
        return ""
    parts = [
        '<section id="drivers"><h2>What drives the results</h2>',
        "<p class='note'>Spearman rank correlation of each drawn input with each requirement's metric and with "
        "meeting the requirement (1 met, 0 not; a trial without a value counts as not met), over the trials with "
        "both values (Spearman 1904; scipy.stats.spearmanr). Inputs ranked by |rho|; pale bars: p &gt; "
        f"{SIGNIFICANCE:g} or rho undefined (a constant column). A screening measure: it sees monotonic effects "
        "only, and p-values are per pair, not corrected for the number of inputs tested.</p>",
    ]
    shown = 0
    for req in reqs:
        if req.metric not in metrics or metrics[req.metric].dtype.kind not in "biuf":
            parts.append(f"<h3>{escape(req.name)}</h3><p class='note'>The metric {escape(req.metric)} is not a numeric "
                         "column of metrics.parquet.</p>")  # fmt: skip
            continue
        by_metric = rank_sensitivity(metrics, metrics=[req.metric], parameters=params)
        by_req = requirement_sensitivity(metrics, metric=req.metric, comparator=req.comparator,
                                         threshold=req.threshold, parameters=params, name=req.name)  # fmt: skip
        figs = []
        if np.isfinite(by_metric["rho"].to_numpy(dtype=float)).any():
            figs.append(_rho_figure(by_metric, f"{req.metric}",
                                    f"rho of each input with {req.metric}: positive, trials that drew a larger value "
                                    f"had a larger {req.metric}."))  # fmt: skip
        if np.isfinite(by_req["rho"].to_numpy(dtype=float)).any():
            figs.append(_rho_figure(by_req, f"meets {req.text()}",
                                    f"rho of each input with meeting {req.text()}: positive, trials that drew a "
                                    "larger value met it more often."))  # fmt: skip
        if len(figs) < 2:
            figs.append(
                "<p class='note undefined'>No chart where every rho is undefined: the metric has fewer than 3 "
                "values, or is constant, or every trial met the requirement, or none did.</p>"
            )
        req_rows = {str(r.parameter): r for r in by_req.itertuples(index=False)}
        rows = []
        for r in by_metric.itertuples(index=False):
            q = req_rows[str(r.parameter)]
            faint = not (math.isfinite(r.rho) and r.p_value <= SIGNIFICANCE)
            rows.append(
                f"<tr class='driver-row{' muted' if faint else ''}' data-parameter=\"{escape(r.parameter)}\">"
                f"<td><code>{escape(_short(str(r.parameter)))}</code></td>" + _cell(r.rho, 3) + _cell(r.p_value, 2)
                + f"<td class='num'>{int(r.n)}</td>" + _cell(q.rho, 3) + _cell(q.p_value, 2)
                + f"<td class='num'>{int(q.n)}</td></tr>"
            )  # fmt: skip
        parts.append(
            f"<h3 data-requirement=\"{escape(req.name)}\">{escape(req.name)}: {escape(req.text())}</h3>"
            '<div class="figs">' + "".join(figs) + "</div>"
            f"<table class='drivers' data-requirement=\"{escape(req.name)}\"><tr><th>input</th>"
            f"<th class='num'>rho with {escape(req.metric)}</th><th class='num'>p</th><th class='num'>n</th>"
            "<th class='num'>rho with meeting it</th><th class='num'>p</th><th class='num'>n</th></tr>"
            + "".join(rows) + "</table>"
        )  # fmt: skip
        shown += 1
    if not shown:
        return ""
    parts.append("</section>")
    return "\n".join(parts)


# ---------------------------------------------------------------------------
# operability
# ---------------------------------------------------------------------------


def relative_heading_deg(wave_from_deg: Any, course_deg: Any) -> np.ndarray:
    """Relative wave heading of a craft on a course: 180 head seas, 0 following seas, 90/270 beam seas.

    Parameters
    ----------
    wave_from_deg : array_like of shape (n,)
        Direction the waves come FROM [deg], clockwise from north (the
        spec's ``sea.spreading.mean_dir_deg``, see
        :mod:`wavebench.sea.spreading`).
    course_deg : float or array_like of shape (n,)
        The craft's course [deg], clockwise from north.

    Returns
    -------
    ndarray of shape (n,)
        ``beta`` in [0, 360) [deg].

    Notes
    -----
    The encounter angle is the direction the waves travel TOWARD minus the
    craft's course [1]_:

    .. math::

        \\beta = (d_{from} + 180 - \\chi) \\bmod 360

    so a craft heading north in waves from the north meets them head on
    (180), and its encounter frequency
    :math:`\\omega_e = \\omega - k U \\cos\\beta` is raised. 90 is a beam
    sea travelling toward starboard (coming from port) and 270 one coming
    from starboard, the same ``beta`` as
    :func:`wavebench.sea.dispersion.encounter_frequency` and the RAO tables
    of :mod:`wavebench.sea.rao`.

    References
    ----------
    .. [1] T. I. Fossen, Handbook of Marine Craft Hydrodynamics and Motion
       Control, 2nd ed., Wiley, 2021: the encounter frequency and the wave
       encounter angle (180 deg head sea, 0 deg following sea).

    Examples
    --------
    >>> relative_heading_deg([0.0, 180.0, 90.0], 0.0).tolist()  # heading north: waves from N, S, E
    [180.0, 0.0, 270.0]
    """
    return np.mod(np.asarray(wave_from_deg, dtype=float) + 180.0 - np.asarray(course_deg, dtype=float), 360.0)


@dataclass(frozen=True)
class RouteCourse:
    """The course that a route's operability is shown against.

    Attributes
    ----------
    course_deg : float
        Course of the longest leg [deg], clockwise from north, in [0, 360),
        rounded to a whole degree (finer than a craft holds its course in a
        seaway, and it keeps the relative headings of whole-degree wave
        directions whole).
    leg : int
        That leg's number, from 1 (the first of equal longest legs).
    n_legs : int
    share : float
        Fraction of the route's length on legs within
        :data:`COURSE_TOLERANCE_DEG` of the course.
    reciprocal_share : float
        Fraction on legs within the tolerance of the reciprocal course.
    """

    course_deg: float
    leg: int
    n_legs: int
    share: float
    reciprocal_share: float

    @property
    def dominant(self) -> bool:
        """Whether most of the route's length runs on this course."""
        return self.share > 0.5

    def text(self) -> str:
        """How the course was chosen, for a caption."""
        c = f"{self.course_deg:03.0f}°"
        if self.dominant:
            out = (f"the route's course {c} (leg {self.leg} of {self.n_legs}; {self.share:.0%} of the route's length "
                   f"runs within ±{COURSE_TOLERANCE_DEG:g}° of it)")  # fmt: skip
        else:
            out = (f"the course of the route's longest leg, leg {self.leg} of {self.n_legs} ({c}): no single course "
                   f"covers most of the route (this one {self.share:.0%} of its length, within "
                   f"±{COURSE_TOLERANCE_DEG:g}°)")  # fmt: skip
        if self.reciprocal_share > 0:
            out += (f"; {self.reciprocal_share:.0%} runs on the reciprocal course, where the same sea meets the craft "
                    "from the opposite side (head seas on this course are following seas there)")
        return out


def route_course(waypoints_ne_m: Any) -> RouteCourse:
    """The course of a route's longest leg, and how much of the route runs on it.

    Parameters
    ----------
    waypoints_ne_m : array_like of shape (n_waypoints, 2)
        ``[north, east]`` [m]; at least two, consecutive ones distinct.

    Returns
    -------
    RouteCourse

    Examples
    --------
    >>> rc = route_course([[0.0, 0.0], [100.0, 0.0], [100.0, 10.0], [0.0, 10.0]])
    >>> rc.course_deg, rc.leg, round(rc.share, 3), round(rc.reciprocal_share, 3), rc.dominant
    (0.0, 1, 0.476, 0.476, False)
    """
    wp = np.asarray(waypoints_ne_m, dtype=float)
    if wp.ndim != 2 or wp.shape[0] < 2 or wp.shape[1] != 2 or not np.all(np.isfinite(wp)):
        raise ParameterError("waypoints_ne_m", wp.tolist(), "at least two finite [north_m, east_m] pairs")
    d = np.diff(wp, axis=0)
    length = np.hypot(d[:, 0], d[:, 1])
    if np.any(length == 0.0) or length.sum() == 0.0:
        raise ParameterError("waypoints_ne_m", wp.tolist(), "consecutive waypoints must differ (a leg of length 0)")
    course = np.mod(np.degrees(np.arctan2(d[:, 1], d[:, 0])), 360.0)
    k = int(np.argmax(length))
    off = np.abs(np.mod(course - course[k] + 180.0, 360.0) - 180.0)  # circular difference [0, 180]
    total = float(length.sum())
    share = float(length[off <= COURSE_TOLERANCE_DEG].sum()) / total
    recip = float(length[off >= 180.0 - COURSE_TOLERANCE_DEG].sum()) / total
    return RouteCourse(float(round(float(course[k])) % 360), k + 1, int(length.size), share, recip)


@dataclass(frozen=True)
class Operability:
    """Trials that met a requirement per relative-wave-heading sector and Hs bin.

    Attributes
    ----------
    course_deg : float
        The craft's course the headings are relative to [deg].
    heading_deg : ndarray of shape (nx,)
        Sector centres: relative wave heading [deg] in [0, 360), increasing
        (:func:`relative_heading_deg`; 180 head seas, 0 following seas).
    half_width_deg : float
        Each sector spans ``heading_deg +- half_width_deg``.
    heading_grid : bool
        The sectors are the levels of a grid axis (each trial sits exactly on
        its sector's centre), not bins of drawn values.
    hs_lo_m, hs_hi_m : ndarray of shape (ny,)
        Hs bins ``[lo, hi)`` (the last closed) [m], increasing; for a grid
        axis both equal the level.
    hs_grid : bool
        The Hs rows are the levels of a grid axis.
    met, count : ndarray of shape (ny, nx), int
        Trials that met the requirement, and all trials, per cell.
    n_left_out : int
        Trials without a finite direction or Hs, or off the grid's levels.
    """

    course_deg: float
    heading_deg: np.ndarray
    half_width_deg: float
    heading_grid: bool
    hs_lo_m: np.ndarray
    hs_hi_m: np.ndarray
    hs_grid: bool
    met: np.ndarray
    count: np.ndarray
    n_left_out: int

    @property
    def share(self) -> np.ndarray:
        """``met / count`` per cell, NaN where a cell has no trial; shape (ny, nx)."""
        with np.errstate(invalid="ignore", divide="ignore"):
            return np.where(self.count > 0, self.met / np.maximum(self.count, 1), np.nan)


def _hs_bin_count(n: int) -> int:
    """Hs bins: about 40 trials per bin, 2 to 5 bins (common practice, no source)."""
    return int(min(5, max(2, n // 40)))


def _bin_index(values: np.ndarray, edges: np.ndarray) -> np.ndarray:
    """Bins ``[lo, hi)``, the last closed on the right."""
    idx = np.searchsorted(edges, values, side="right") - 1
    idx[values == edges[-1]] = edges.size - 2
    return idx


def _level_index(values: np.ndarray, levels: np.ndarray, *, circular: bool) -> np.ndarray:
    """Index of the level each value equals (to rounding), -1 for none."""
    diff = values[:, None] - levels[None, :]
    if circular:
        diff = np.mod(diff + 180.0, 360.0) - 180.0
    hit = np.abs(diff) <= _LEVEL_TOL * np.maximum(1.0, np.abs(levels))[None, :]
    return np.where(hit.any(axis=1), np.argmax(hit, axis=1), -1)


def _grid_half_width(centres: np.ndarray, bin_deg: float) -> float:
    """Half the smallest circular gap between grid headings, at most 22.5 deg (a 45-degree sector).

    Eight or more evenly spaced headings tile the circle; a coarser grid
    leaves the headings it did not run blank (display choice, no source).
    """
    if centres.size < 2:
        return 0.5 * bin_deg
    gaps = np.diff(np.concatenate([centres, centres[:1] + 360.0]))
    return float(min(0.5 * gaps.min(), 22.5))


def operability(wave_from_deg: Any, hs_m: Any, met: Any, *, course_deg: float, bin_deg: float = HEADING_BIN_DEG,
                n_hs_bins: int | None = None, direction_levels_deg: Sequence[float] | None = None,
                hs_levels_m: Sequence[float] | None = None) -> Operability | None:  # fmt: skip
    """Count trials that met a requirement per relative wave heading and Hs.

    Parameters
    ----------
    wave_from_deg : array_like of shape (n_trials,)
        Mean wave direction of each trial [deg], the direction the waves come
        FROM, clockwise from north (``param.sea.spreading.mean_dir_deg``).
    hs_m : array_like of shape (n_trials,)
        Significant wave height of each trial [m].
    met : array_like of shape (n_trials,), bool
        Whether each trial met the requirement.
    course_deg : float
        The craft's course [deg], clockwise from north (:func:`route_course`);
        headings are :func:`relative_heading_deg` (180 head, 0 following).
    bin_deg : float
        Width of the relative-heading sectors [deg] for drawn directions; a
        divisor of 360. The sectors are centred on its multiples (so 180, head
        seas, is a sector's centre) and cover the whole circle.
    n_hs_bins : int, optional
        For drawn Hs: bins at the quantiles ``k / n_hs_bins`` of the drawn Hs
        (repeated edges merged); about one per 40 trials, 2 to 5, when
        omitted.
    direction_levels_deg : sequence of float, optional
        The levels of a grid axis on the wave direction (coming from); the
        sectors are then centred on their relative headings, one per level
        (width: the smallest gap between them, at most 45 deg).
    hs_levels_m : sequence of float, optional
        The levels of a grid axis on Hs; the rows are then the levels.

    Returns
    -------
    Operability or None
        None when fewer than 2 trials have both values, or a drawn (not grid)
        Hs is constant.

    Raises
    ------
    ParameterError
        When ``bin_deg`` does not divide 360 or ``course_deg`` is not finite.

    Examples
    --------
    A craft on course 090 (east): waves from the east are head seas (180),
    from the west following seas (0).

    >>> op = operability([90.0, 95.0, 270.0, 268.0], [1.0, 2.0, 1.0, 2.0], [True, False, True, True],
    ...                  course_deg=90.0, n_hs_bins=2)
    >>> op.heading_deg[[0, 6]].tolist(), op.hs_lo_m.tolist(), op.met[:, [0, 6]].tolist(), op.count[:, [0, 6]].tolist()
    ([0.0, 180.0], [1.0, 1.5], [[1, 1], [1, 0]], [[1, 1], [1, 1]])
    """
    b = float(bin_deg)
    n_sectors = 360.0 / b if b > 0 else math.nan
    if not (math.isfinite(n_sectors) and abs(n_sectors - round(n_sectors)) < 1e-9 and round(n_sectors) >= 1):
        raise ParameterError("bin_deg", bin_deg, "a divisor of 360 [deg] (e.g. 30, 45, 60)")
    if not math.isfinite(float(course_deg)):
        raise ParameterError("course_deg", course_deg, "a finite course [deg]")
    d = np.asarray(wave_from_deg, dtype=float).ravel()
    h = np.asarray(hs_m, dtype=float).ravel()
    ok = np.asarray(met, dtype=bool).ravel()
    keep = np.isfinite(d) & np.isfinite(h)
    rel = relative_heading_deg(np.where(keep, d, 0.0), float(course_deg))
    if direction_levels_deg is not None:
        centres = np.unique(relative_heading_deg(np.asarray(direction_levels_deg, dtype=float), float(course_deg)))
        half = _grid_half_width(centres, b)
        ix = _level_index(rel, centres, circular=True)
    else:
        k_sec = round(n_sectors)
        centres = np.arange(k_sec) * b
        half = 0.5 * b
        ix = np.minimum(np.floor(np.mod(rel + half, 360.0) / b).astype(np.int64), k_sec - 1)
    if hs_levels_m is not None:
        levels = np.unique(np.asarray(hs_levels_m, dtype=float))
        hs_lo = hs_hi = levels
        iy = _level_index(np.where(keep, h, np.nan), levels, circular=False)
        ny = levels.size
    else:
        hk = h[keep]
        if hk.size < 2 or np.all(hk == hk[0]):
            return None
        k = _hs_bin_count(hk.size) if n_hs_bins is None else int(n_hs_bins)
        edges = np.unique(np.quantile(hk, np.linspace(0.0, 1.0, k + 1)))
        hs_lo, hs_hi = edges[:-1], edges[1:]
        iy = np.full(h.size, -1, dtype=np.int64)
        iy[keep] = _bin_index(hk, edges)
        ny = edges.size - 1
    use = keep & (ix >= 0) & (iy >= 0)
    if np.count_nonzero(use) < 2:
        return None
    shape = (ny, centres.size)
    count = np.zeros(shape, dtype=np.int64)
    good = np.zeros(shape, dtype=np.int64)
    np.add.at(count, (iy[use], ix[use]), 1)
    np.add.at(good, (iy[use], ix[use]), ok[use].astype(np.int64))
    return Operability(float(course_deg) % 360.0, centres.astype(float), float(half), direction_levels_deg is not None,
                       np.asarray(hs_lo, dtype=float), np.asarray(hs_hi, dtype=float), hs_levels_m is not None,
                       good, count, int(np.count_nonzero(~use)))  # fmt: skip


# -- the colour scale -------------------------------------------------------


def share_fill(share: float) -> str:
    """Fill colour of a share in [0, 1] on the operability scale (:data:`SHARE_SCALE`).

    A sequential scale from pale cream (0) through green and teal to deep
    blue (1), linear between the stops in sRGB. Its CIE L* falls steadily
    from stop to stop, so the order of the colours reads from lightness
    alone, also for readers with a colour-vision deficiency or on a grey
    print (the advice of Crameri, Shephard & Heron, "The misuse of colour in
    science communication", Nature Communications 11, 5444, 2020).

    Examples
    --------
    >>> share_fill(0.0), share_fill(1.0)
    ('#fbf4dc', '#1f2a5c')
    """
    s = min(max(float(share), 0.0), 1.0) * (len(SHARE_SCALE) - 1)
    i = min(int(s), len(SHARE_SCALE) - 2)
    f = s - i
    a = [int(SHARE_SCALE[i][j : j + 2], 16) for j in (1, 3, 5)]
    c = [int(SHARE_SCALE[i + 1][j : j + 2], 16) for j in (1, 3, 5)]
    return "#" + "".join(f"{round(x + (y - x) * f):02x}" for x, y in zip(a, c, strict=True))


def _ink(share: float) -> str:
    """Text colour on a share's fill: white on the darker half of the scale."""
    return "#ffffff" if share >= 0.6 else "#222222"


def _deg(v: float) -> str:
    return f"{round(v, 1):g}°"


def _heading_word(beta: float) -> str:
    """Words for a relative heading (sector centres within 22.5 deg of the named headings)."""
    b = beta % 360.0
    for centre, word in ((0.0, "following"), (90.0, "beam, from port"), (180.0, "head"),
                         (270.0, "beam, from starboard"), (360.0, "following")):  # fmt: skip
        if abs(b - centre) < 22.5:
            return word
    return "quartering" if (b < 90.0 or b > 270.0) else "bow"


def _hs_text(op: Operability, j: int) -> str:
    if op.hs_grid:
        return f"Hs {op.hs_lo_m[j]:g} m"
    return f"Hs {op.hs_lo_m[j]:.3g}–{op.hs_hi_m[j]:.3g} m"


def _uid(*parts: object) -> str:
    h = hashlib.sha1()
    for p in parts:
        h.update(np.asarray(p).tobytes() if isinstance(p, np.ndarray) else repr(p).encode())
    return "op" + h.hexdigest()[:12]


def _polar(cx: float, cy: float, r: float, phi_deg: float) -> tuple[float, float]:
    """Screen point at ``r`` px from the centre, ``phi`` clockwise from straight up."""
    p = math.radians(phi_deg)
    return cx + r * math.sin(p), cy - r * math.cos(p)


def operability_polar_chart(op: Operability, *, min_count: int = MIN_CELL_TRIALS, title: str = "",
                            required: float | None = None, size: int = 460) -> Svg:  # fmt: skip
    """Polar chart of an :class:`Operability`: sectors of relative heading x rings of Hs.

    The craft sits at the centre with its bow up. Each sector is drawn on the
    side the waves come from, so head seas (180) are at the top, following
    seas (0) at the bottom, waves from port (90) on the left and from
    starboard (270) on the right; the rings go from the lowest Hs (inside)
    to the highest (outside). A cell's colour is the share of its trials that
    met the requirement (:func:`share_fill`); cells with fewer than
    ``min_count`` trials are hatched, cells without a trial left white.

    Parameters
    ----------
    op : Operability
    min_count : int
        Cells with fewer trials are hatched.
    title : str
    required : float, optional
        The required probability, marked on the colour legend.
    size : int
        Width [px] (the height adds the legend).

    Returns
    -------
    Svg
        Each cell is ``<path class="sector">`` with ``data-heading``
        (centre), ``data-h0``, ``data-h1`` (sector edges, relative heading
        [deg]), ``data-hs-lo``, ``data-hs-hi``, ``data-met``, ``data-count``
        and ``data-few``, and a ``<title>`` that says the same in words.

    Examples
    --------
    >>> op = operability([0.0, 0.0, 180.0], [1.0, 1.0, 1.0], [True, False, True], course_deg=0.0,
    ...                  direction_levels_deg=[0.0, 180.0], hs_levels_m=[1.0])
    >>> svg = operability_polar_chart(op)
    >>> svg.count('class="sector"'), svg.count('data-few="1"')
    (2, 2)
    """
    if not (isinstance(size, (int, np.integer)) and size >= 240):
        raise ParameterError("size", size, "an integer >= 240 [px]")
    ny = op.count.shape[0]
    top = 34 if title else 12
    r_out = 0.5 * size - 58
    r_in = 0.16 * r_out
    cx, cy = 0.5 * size, top + 30 + r_out
    legend_y = cy + r_out + 58
    height = int(legend_y + 58)
    hatch = _uid("hatch", op.count, op.met, op.heading_deg, op.hs_lo_m, title)
    out = [
        f'<svg xmlns="http://www.w3.org/2000/svg" width="{size}" height="{height}" viewBox="0 0 {size} {height}" '
        'font-family="sans-serif" font-size="11" class="operability-polar">',
        f'<defs><pattern id="{hatch}" width="6" height="6" patternUnits="userSpaceOnUse" '
        'patternTransform="rotate(45)"><rect width="6" height="6" fill="#efefe9"/>'
        '<line x1="0" y1="0" x2="0" y2="6" stroke="#b5b5ad" stroke-width="2"/></pattern></defs>',
        f'<circle cx="{cx:.1f}" cy="{cy:.1f}" r="{r_out:.1f}" fill="#fbfbf8" stroke="#999"/>',
    ]
    if title:
        out.append(f'<text x="8" y="18" font-size="13" font-weight="bold">{escape(title)}</text>')
    radii = [r_in + (r_out - r_in) * j / ny for j in range(ny + 1)]
    h = op.half_width_deg
    large = 1 if 2.0 * h > 180.0 else 0
    for i, beta in enumerate(op.heading_deg):
        a0, a1 = beta + 180.0 - h, beta + 180.0 + h  # screen angles: the side the waves come from
        for j in range(ny):
            ra, rb = radii[j], radii[j + 1]
            p1, p2 = _polar(cx, cy, rb, a0), _polar(cx, cy, rb, a1)
            p3, p4 = _polar(cx, cy, ra, a1), _polar(cx, cy, ra, a0)
            path = (f"M{p1[0]:.2f},{p1[1]:.2f} A{rb:.2f},{rb:.2f} 0 {large} 1 {p2[0]:.2f},{p2[1]:.2f} "
                    f"L{p3[0]:.2f},{p3[1]:.2f} A{ra:.2f},{ra:.2f} 0 {large} 0 {p4[0]:.2f},{p4[1]:.2f} Z")  # fmt: skip
            c, m = int(op.count[j, i]), int(op.met[j, i])
            few = c < min_count
            fill = "#ffffff" if c == 0 else (f"url(#{hatch})" if few else share_fill(m / c))
            what = (f"relative heading {_deg(float(beta))} ({_heading_word(float(beta))}), {_hs_text(op, j)}: "
                    + ("no trials" if c == 0 else f"{m} of {c} met ({m / c:.2f})")
                    + (" - too few trials" if 0 < c < min_count else ""))  # fmt: skip
            out.append(
                f'<path class="sector" d="{path}" fill="{fill}" stroke="#ffffff" stroke-width="1.2" '
                f'data-heading="{float(beta)!r}" data-h0="{float(beta - h)!r}" data-h1="{float(beta + h)!r}" '
                f'data-hs-lo="{float(op.hs_lo_m[j])!r}" data-hs-hi="{float(op.hs_hi_m[j])!r}" data-met="{m}" '
                f'data-count="{c}" data-few="{int(few)}"><title>{escape(what)}</title></path>'
            )
    for r in radii:  # ring outlines
        out.append(f'<circle cx="{cx:.1f}" cy="{cy:.1f}" r="{r:.2f}" fill="none" stroke="#d4d4cc" stroke-width="0.6"/>')
    # the craft: a hull outline pointing up (bow up), with the course
    s = r_in * 0.75
    out.append(f'<path d="M{cx:.1f},{cy - s:.1f} L{cx + 0.38 * s:.1f},{cy + 0.1 * s:.1f} '
               f'L{cx + 0.3 * s:.1f},{cy + 0.75 * s:.1f} L{cx - 0.3 * s:.1f},{cy + 0.75 * s:.1f} '
               f'L{cx - 0.38 * s:.1f},{cy + 0.1 * s:.1f} Z" fill="#4a4a4a"><title>the craft, bow up, on course '
               f'{op.course_deg:03.0f}°</title></path>')  # fmt: skip
    # heading labels around the rim: every sector centre (grid) or every 30 deg
    marks = op.heading_deg if op.heading_grid else np.arange(0.0, 360.0, 30.0)
    for beta in marks:
        x, y = _polar(cx, cy, r_out + 12, float(beta) + 180.0)
        anchor = "middle" if abs(x - cx) < 8 else ("start" if x > cx else "end")
        out.append(f'<text x="{x:.1f}" y="{y + 4:.1f}" text-anchor="{anchor}" fill="#333">{_deg(float(beta))}</text>')
    for beta, word in ((180.0, "head seas"), (0.0, "following seas")):
        x, y = _polar(cx, cy, r_out + 27, beta + 180.0)
        out.append(f'<text x="{x:.1f}" y="{y + 4:.1f}" text-anchor="middle" font-style="italic" fill="#555">{word}'
                   "</text>")  # fmt: skip
    out.append(f'<text x="{cx - r_out - 4:.1f}" y="{cy + r_out - 4:.1f}" text-anchor="middle" font-style="italic" '
               'fill="#555">from port</text>')  # fmt: skip
    out.append(f'<text x="{cx + r_out + 4:.1f}" y="{cy + r_out - 4:.1f}" text-anchor="middle" font-style="italic" '
               'fill="#555">from starboard</text>')  # fmt: skip
    # Hs of the rings, along the line to the lower right
    for j in range(ny):
        x, y = _polar(cx, cy, 0.5 * (radii[j] + radii[j + 1]), 135.0)
        label = f"{op.hs_lo_m[j]:g}" if op.hs_grid else f"{op.hs_lo_m[j]:.3g}–{op.hs_hi_m[j]:.3g}"
        out.append(f'<text x="{x:.1f}" y="{y + 4:.1f}" text-anchor="middle" font-size="10" fill="#111" '
                   f'stroke="#ffffff" stroke-width="2.5" paint-order="stroke">{label}</text>')  # fmt: skip
    out.append(f'<text x="{size - 8}" y="{top + 10}" text-anchor="end" fill="#555">rings: Hs [m], '
               "lowest inside</text>")  # fmt: skip
    # legend: the colour scale in ten steps, the required probability, hatched and empty cells
    x0, w = 16.0, min(260.0, size - 200.0)
    out.append(f'<text x="{x0:.1f}" y="{legend_y - 8:.1f}">share of trials meeting the requirement</text>')
    for k in range(10):
        out.append(f'<rect x="{x0 + w * k / 10:.2f}" y="{legend_y:.1f}" width="{w / 10 + 0.3:.2f}" height="12" '
                   f'fill="{share_fill((k + 0.5) / 10)}"/>')  # fmt: skip
    out.append(f'<rect x="{x0:.1f}" y="{legend_y:.1f}" width="{w:.1f}" height="12" fill="none" stroke="#999"/>')
    for v in (0.0, 0.5, 1.0):
        out.append(f'<text x="{x0 + w * v:.1f}" y="{legend_y + 24:.1f}" text-anchor="middle">{v:g}</text>')
    if required is not None and math.isfinite(required):
        X = x0 + w * min(max(required, 0.0), 1.0)
        out.append(f'<line class="required" x1="{X:.1f}" y1="{legend_y - 3:.1f}" x2="{X:.1f}" y2="{legend_y + 15:.1f}" '
                   f'stroke="#c0392b" stroke-width="2"/><text x="{X:.1f}" y="{legend_y + 36:.1f}" '
                   f'text-anchor="middle" fill="#c0392b">required {required:g}</text>')  # fmt: skip
    X = x0 + w + 18
    out.append(f'<rect x="{X:.1f}" y="{legend_y:.1f}" width="14" height="12" fill="url(#{hatch})" stroke="#999"/>'
               f'<text x="{X + 18:.1f}" y="{legend_y + 10:.1f}">fewer than {int(min_count)} trials</text>')
    out.append(f'<rect x="{X:.1f}" y="{legend_y + 18:.1f}" width="14" height="12" fill="#ffffff" stroke="#999"/>'
               f'<text x="{X + 18:.1f}" y="{legend_y + 28:.1f}">no trials</text>')
    out.append("</svg>")
    return Svg("\n".join(out))


def operability_table(op: Operability, *, min_count: int = MIN_CELL_TRIALS, requirement: str = "") -> str:
    """The matrix of an :class:`Operability` as an HTML table: Hs rows x relative-heading columns.

    Each cell shows the share that met the requirement and ``met/count``,
    coloured as in :func:`operability_polar_chart`; cells with fewer than
    ``min_count`` trials have class ``few`` (hatched by :data:`STUDY_CSS`)
    and say "too few". Columns without a single trial (drawn directions
    only) are left out.

    Returns
    -------
    str
        ``<table class='operability'>``; each cell ``<td>`` has class
        ``cell`` and the attributes ``data-heading``, ``data-hs-lo``,
        ``data-hs-hi``, ``data-met``, ``data-count`` and ``data-few``.
    """
    cols = [i for i in range(op.heading_deg.size) if op.heading_grid or op.count[:, i].any()]
    head = "".join(f"<th class='num'>{_deg(float(op.heading_deg[i]))}<br><small>"
                   f"{escape(_heading_word(float(op.heading_deg[i])))}</small></th>" for i in cols)  # fmt: skip
    rows = []
    for j in range(op.count.shape[0]):
        cells = []
        for i in cols:
            c, m = int(op.count[j, i]), int(op.met[j, i])
            few = c < min_count
            attrs = (f"data-heading=\"{float(op.heading_deg[i])!r}\" data-hs-lo=\"{float(op.hs_lo_m[j])!r}\" "
                     f"data-hs-hi=\"{float(op.hs_hi_m[j])!r}\" data-met='{m}' data-count='{c}' data-few='{int(few)}'")
            if c == 0:
                cells.append(f"<td class='cell few empty' {attrs}>–<br><small>no trials</small></td>")
            elif few:
                cells.append(f"<td class='cell few' {attrs}>({m / c:.2f})<br><small>{m}/{c}, too few</small></td>")
            else:
                sh = m / c
                cells.append(f"<td class='cell' {attrs} style='background:{share_fill(sh)};color:{_ink(sh)}'>"
                             f"<b>{sh:.2f}</b><br><small>{m}/{c}</small></td>")  # fmt: skip
        rows.append(f"<tr><th>{escape(_hs_text(op, j))}</th>{''.join(cells)}</tr>")
    return (f"<div class='scroll'><table class='operability' data-requirement=\"{escape(requirement)}\">"
            f"<tr><th>Hs \\ relative heading</th>{head}</tr>{''.join(rows)}</table></div>")  # fmt: skip


def _grid_levels(spec: Any) -> tuple[Sequence[float] | None, Sequence[float] | None]:
    """The grid levels of the spec's wave direction and Hs (None for a field that is not a grid axis)."""
    sea = getattr(spec, "sea", None)
    spreading = getattr(sea, "spreading", None)
    d = getattr(spreading, "mean_dir_deg", None)
    h = getattr(sea, "hs_m", None)
    return (tuple(d.levels) if isinstance(d, Grid) else None, tuple(h.levels) if isinstance(h, Grid) else None)


def _fixed_hs(spec: Any) -> float | None:
    """The spec's Hs when it is one fixed number (not drawn), else None."""
    h = getattr(getattr(spec, "sea", None), "hs_m", None)
    if isinstance(h, (int, float)) and not isinstance(h, bool) and math.isfinite(float(h)):
        return float(h)
    return None


def operability_of(metrics: pd.DataFrame, spec: Any, req: Requirement, *,
                   bin_deg: float = HEADING_BIN_DEG) -> Operability | None:  # fmt: skip
    """The operability of one requirement from a store's metrics and its spec.

    The course is the spec's route's (:func:`route_course`); grid axes on
    the wave direction or Hs give exact cells (their levels); a fixed Hs
    (not drawn) gives one ring.

    Parameters
    ----------
    metrics : pandas.DataFrame
        A store's metrics table: ``param.sea.spreading.mean_dir_deg``,
        ``param.sea.hs_m`` (unless Hs is fixed) and the requirement's metric.
    spec : Spec
        The campaign's spec (its ``mission`` and ``sea``).
    req : Requirement
    bin_deg : float
        Sector width for drawn directions [deg] (:func:`operability`).

    Returns
    -------
    Operability or None
        None when a column is missing, the spec has no route, or
        :func:`operability` has nothing to count.
    """
    mission = getattr(spec, "mission", None)
    if mission is None or DIRECTION_COLUMN not in metrics or req.metric not in metrics:
        return None
    dir_levels, hs_levels = _grid_levels(spec)
    if HS_COLUMN in metrics:
        h = pd.to_numeric(metrics[HS_COLUMN], errors="coerce").to_numpy(dtype=float)
    else:
        fixed = _fixed_hs(spec)
        if fixed is None:
            return None
        h, hs_levels = np.full(len(metrics), fixed), (fixed,)
    d = pd.to_numeric(metrics[DIRECTION_COLUMN], errors="coerce").to_numpy(dtype=float)
    values = pd.to_numeric(metrics[req.metric], errors="coerce").to_numpy(dtype=float)
    return operability(d, h, meets(values, req.comparator, req.threshold),
                       course_deg=route_course(mission.waypoints()).course_deg, bin_deg=bin_deg,
                       direction_levels_deg=dir_levels, hs_levels_m=hs_levels)  # fmt: skip


def _operability_section(metrics: pd.DataFrame, reqs: list[Requirement], spec: Any) -> str:
    mission = getattr(spec, "mission", None)
    if mission is None or DIRECTION_COLUMN not in metrics or not reqs:
        return ""  # without the spec's route the course, and so the relative heading, is unknown
    route = route_course(mission.waypoints())
    figs = []
    op = None
    for req in reqs:
        one = operability_of(metrics, spec, req)
        if one is None:
            continue
        op = one
        need = math.isfinite(req.probability)
        svg = operability_polar_chart(op, title=f"{req.name}: share meeting {req.text()}",
                                      required=req.probability if need else None)  # fmt: skip
        cap = (
            f"Share of the trials in each cell that met {req.text()} (a trial without a value counts as not met), by "
            "relative wave heading (sectors, drawn on the side the waves come from with the bow up: 180° head seas "
            "at the top, 0° following seas at the bottom, 90° beam seas from port, 270° from starboard) and Hs "
            f"(rings, lowest inside); hatched: fewer than {MIN_CELL_TRIALS} trials."
            + (f" The requirement asks for {cell_number(req.probability, 3)}." if need else "")
        )
        figs.append(f'<figure data-requirement="{escape(req.name)}">{svg}<figcaption>{escape(cap)}</figcaption>'
                    f"</figure>{operability_table(op, requirement=req.name)}")  # fmt: skip
    if not figs or op is None:
        return ""
    n_dir = op.heading_deg.size
    cols = (
        f"one sector per level of the grid on the wave direction ({n_dir} level{'s' if n_dir != 1 else ''}), each "
        "trial exactly on its sector's heading" if op.heading_grid
        else f"{HEADING_BIN_DEG:g}-degree sectors of the relative heading centred on multiples of {HEADING_BIN_DEG:g}°"
    )  # fmt: skip
    n_hs = op.hs_lo_m.size
    if HS_COLUMN not in metrics:
        rows = f"one ring, the spec's fixed Hs of {op.hs_lo_m[0]:g} m"
    elif op.hs_grid:
        rows = f"one ring per level of the grid on Hs ({n_hs} level{'s' if n_hs != 1 else ''})"
    else:
        rows = ("bins of the drawn Hs between its quantiles (each from its lower edge up to, not including, its upper "
                "one; the last includes both), so each ring holds about the same number of trials")
    note = (
        "Relative wave heading = direction the waves travel toward − the craft's course, 0–360°: 180° head seas, "
        "0° following seas, 90° and 270° beam seas (waves from port and from starboard); the encounter angle of "
        "Fossen (2021), Handbook of Marine Craft Hydrodynamics and Motion Control, where the encounter frequency "
        "is ω − k U cos β. The direction is the drawn mean wave direction (sea.spreading.mean_dir_deg, where the "
        f"waves come from); the course is {route.text()}. Sectors: {cols}. Rings: {rows}. The cells show only "
        "the conditions the trials ran; a share from a few trials is uncertain."
    )
    if op.n_left_out:
        note += (f" {op.n_left_out} trial{'s' if op.n_left_out != 1 else ''} without a drawn direction or Hs, or off "
                 "the grid's levels, left out.")  # fmt: skip
    return (
        '<section id="operability"><h2>Operability</h2><div class="figs">' + "".join(figs) + "</div>"
        f"<p class='note'>{escape(note)}</p></section>"
    )


# ---------------------------------------------------------------------------
# closest to failing
# ---------------------------------------------------------------------------


def closest_trials(metrics: pd.DataFrame, req: Requirement, k: int = N_CLOSEST) -> pd.DataFrame:
    """The ``k`` trials with the least margin to a requirement's threshold.

    Parameters
    ----------
    metrics : pandas.DataFrame
        A store's metrics table (``trial``, the metric, optionally ``failed``).
    req : Requirement
    k : int
        Rows returned (fewer when the table is shorter).

    Returns
    -------
    pandas.DataFrame
        The chosen rows of ``metrics``, in order, with a ``margin`` column:
        ``threshold - value`` for "below", ``value - threshold`` for "above"
        (positive: met with room to spare; NaN: no value). Trials without a
        value come first (those flagged ``failed`` before the others), then
        increasing margin (the worst misses, then the narrowest passes); ties
        by trial number.

    Examples
    --------
    >>> frame = pd.DataFrame({"trial": [0, 1, 2, 3], "x": [1.0, 2.5, np.nan, 1.9],
    ...                       "failed": [False, False, True, False]})
    >>> closest_trials(frame, Requirement("r", "x", "below", 2.0, 0.9), k=3)["trial"].tolist()
    [2, 1, 3]
    """
    values = pd.to_numeric(metrics[req.metric], errors="coerce").to_numpy(dtype=float)
    margin = req.threshold - values if req.comparator == "below" else values - req.threshold
    if "failed" in metrics:
        failed = metrics["failed"].fillna(False).astype(bool).to_numpy()
    else:
        failed = np.zeros(len(values), dtype=bool)
    trial = metrics["trial"].to_numpy() if "trial" in metrics else np.arange(len(values))
    no_value = np.isnan(margin)
    group = np.where(no_value & failed, 0, np.where(no_value, 1, 2))
    order = np.lexsort((trial, np.where(no_value, 0.0, margin), group))[: max(int(k), 0)]
    out = metrics.iloc[order].copy()
    out["margin"] = margin[order]
    return out


def replay_code(trial: int, metric: str) -> str:
    """Python lines that replay one trial alone from a store's ``spec.toml`` and print a metric.

    Run from the store folder. The trial draws only from its own random
    streams and the pilot is derived from the spec as in the campaign, so
    the metrics equal the trial's row of ``metrics.parquet``.

    Examples
    --------
    >>> print(replay_code(7, "xte_p95_m").splitlines()[-1])
    print(out.columns["xte_p95_m"][0])
    """
    return "\n".join([
        "import numpy as np",
        "from wavebench.campaign.executor import run_chunk",
        "from wavebench.spec.io import load_spec",
        "from wavebench.trial.setup import pilot_for",
        "",
        'spec = load_spec("spec.toml")  # run in the store folder',
        f"out = run_chunk(spec, np.array([{int(trial)}]), pilot=pilot_for(spec, spec.craft.build()))",
        f"print(out.columns[{json.dumps(str(metric))}][0])",
    ])  # fmt: skip


def _closest_section(metrics: pd.DataFrame, reqs: list[Requirement]) -> str:
    reqs = [r for r in reqs if r.metric in metrics]
    if not reqs or not len(metrics):
        return ""
    params = _param_columns(metrics)
    parts = [
        '<section id="closest"><h2>Closest to failing</h2>',
        f"<p class='note'>Per requirement, the {N_CLOSEST} trials with the least margin to the threshold: trials "
        "without a value first (those that failed, then those that never produced one, e.g. did not complete), "
        "then the trials that missed it by the most, then those that met it by the least. Margin: threshold − "
        "value for “below”, value − threshold for “above”; negative means missed.</p>",
    ]
    for req in reqs:
        rows = closest_trials(metrics, req)
        head = ("<tr><th class='num'>trial</th><th class='num'>" + escape(req.metric) + "</th><th class='num'>margin"
                "</th><th>ended</th><th>failure reason</th>"
                + "".join(f"<th class='num'>{escape(_short(p))}</th>" for p in params) + "</tr>")  # fmt: skip
        body = []
        for _, r in rows.iterrows():
            reason = r.get("failure_reason", "")
            reason = "" if reason is None or (isinstance(reason, float) and math.isnan(reason)) else str(reason)
            body.append(
                f"<tr class='closest-row' data-trial='{int(r['trial'])}'><td class='num'>{int(r['trial'])}</td>"
                + _cell(r[req.metric]) + _cell(r["margin"])
                + f"<td>{escape(r.get('ended', ''))}</td><td class='reason'>{escape(reason)}</td>"
                + "".join(_cell(r[p]) for p in params) + "</tr>"
            )  # fmt: skip
        first = int(rows["trial"].iloc[0])
        parts.append(
            f"<h3>{escape(req.name)}: {escape(req.text())}</h3>"
            f"<div class='scroll'><table class='closest' data-requirement=\"{escape(req.name)}\">{head}{''.join(body)}"
            "</table></div>"
            f"<p class='note'>Replay trial {first} alone: <code>wavebench replay STORE {first}</code> runs it and "
            "compares every metric with this store; or in Python, in the store folder (it prints its "
            f"{escape(req.metric)}, equal to the row above):</p>"
            f"<pre class='replay' data-trial='{first}' data-metric=\"{escape(req.metric)}\">"
            f"{escape(replay_code(first, req.metric))}</pre>"
        )
    parts.append(
        "<p class='note'>The replay runs the spec's own blocks; a campaign run with a user guide or pilot "
        "(guide_factory, pilot_factory) needs them passed to run_chunk as well. Change the trial number to replay "
        "another; out.columns holds all its metrics and draws.</p></section>"
    )
    return "\n".join(parts)


# ---------------------------------------------------------------------------
# public entry point
# ---------------------------------------------------------------------------


def study_sections(metrics: pd.DataFrame, spec: Any, verdicts: Sequence[dict[str, Any]] = ()
                   ) -> list[tuple[str, str, str]]:  # fmt: skip
    """The study sections of a campaign report.

    Parameters
    ----------
    metrics : pandas.DataFrame
        The store's per-trial metrics.
    spec : Spec or None
        The loaded spec (its requirements); None when it did not load.
    verdicts : sequence of dict
        The store's ``verdicts.json`` objects, used for the requirements when
        ``spec`` is None.

    Returns
    -------
    list of (str, str, str)
        ``(anchor id, link text, section HTML)`` in page order, only for the
        sections with something to show: "What drives the results" needs
        drawn inputs and requirements, "Operability" needs a drawn wave
        direction, a drawn or fixed Hs and the spec (its route gives the
        course the headings are relative to), "Closest to failing" needs a requirement
        whose metric is in the table.
    """
    reqs = requirements_of(spec, verdicts)
    out = []
    drivers = _drivers_section(metrics, reqs)
    if drivers:
        out.append(("drivers", "What drives the results", drivers))
    oper = _operability_section(metrics, reqs, spec)
    if oper:
        out.append(("operability", "Operability", oper))
    closest = _closest_section(metrics, reqs)
    if closest:
        out.append(("closest", "Closest to failing", closest))
    return out
