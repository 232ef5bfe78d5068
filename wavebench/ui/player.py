"""The trial player: one trial of a campaign replayed alone, on a map and in time plots.

:class:`TrialPlayer` replays one trial with its time series
(:func:`~wavebench.campaign.replay.replay_trial`) and shows it as one panel:

- a map (east to the right, north up, equal scales) over the seabed depth,
  with the route, the true track, the navigator's estimated track (when a
  navigator ran) and the craft's outline at its heading at the chosen time;
  "follow the craft" zooms the map to a box of a few hull lengths around it;
- a time slider with a play control;
- time plots sharing the time axis and a time cursor: cross-track error,
  heading and heading command, surge speed and speed command, the
  actuators' surge force and yaw moment, the navigation error with the
  navigator's own 2DRMS radius, and whether the latest GNSS fix was accepted
  (the last two only when a navigator ran).

Moving the slider moves the craft and the cursors in one batch of updates;
arrays go to the browser as numpy arrays (binary buffers). The static twin
(:meth:`TrialPlayer.static_html`) draws the map and the time plots as SVG at
the trial's last recorded time, with the trial's metrics.

Examples
--------
In a notebook::

    from wavebench.ui.player import TrialPlayer
    TrialPlayer.from_store("runs/skerrow", 17)
"""

from __future__ import annotations

import contextlib
import math
import os
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ..core.errors import ParameterError
from ..report.charts import MAP_DEPTH_COLORS, map_chart
from ..report.html import cell_number, escape
from ..report.svg import PALETTE, Series, line_chart
from .twin import Twinned

__all__ = [
    "FOLLOW_LENGTHS", "HULL_OUTLINE", "TIME_PLOTS", "TimePlot", "TrialPlayer",
    "depth_grid", "hull_outline", "map_chart",
]  # fmt: skip

FloatArray = NDArray[np.float64]

#: The craft's outline in the body frame, as fractions of (length, beam): (forward, starboard) pairs,
#: closed (bow, starboard shoulder, starboard quarter, port quarter, port shoulder, bow).
HULL_OUTLINE: tuple[tuple[float, float], ...] = (
    (0.5, 0.0), (0.2, 0.5), (-0.5, 0.5), (-0.5, -0.5), (0.2, -0.5), (0.5, 0.0),
)  # fmt: skip

#: Side of the map box that follows the craft, in hull lengths.
FOLLOW_LENGTHS = 12.0

#: Cells per side of the depth raster drawn under the live map.
DEPTH_CELLS = 80
#: Cells per side of the depth raster of the static map (shaded in
#: :data:`~wavebench.report.charts.MAP_DEPTH_LEVELS` steps).
STATIC_DEPTH_CELLS = 60

_ROUTE_COLOR = "#7a7a7a"
_TRUE_COLOR = PALETTE[0]
_NAV_COLOR = PALETTE[1]
_CRAFT_COLOR = "#222222"
_CURSOR_COLOR = "#b3261e"
_BAND_COLOR = "#8fb7c9"


@dataclass(frozen=True)
class TimePlot:
    """One time plot of the player.

    Attributes
    ----------
    key : str
        Short name (also the key of :attr:`TrialPlayer.time_figures`).
    title : str
    ylabel : str
        With the unit.
    signals : tuple of (signal name, legend text)
        Recorded signals (:data:`wavebench.trial.recorder.SIGNALS`) drawn as lines.
    navigator_only : bool
        Shown only when a navigator ran (the signals are NaN with truth navigation).
    band : (signal name, factor, legend text), optional
        An area from 0 up to ``factor`` times a recorded signal, under the lines.
    right : tuple of (signal name, legend text)
        Recorded signals drawn against a second y axis on the right (another unit).
    right_ylabel : str
        That axis' label, with the unit.
    """

    key: str
    title: str
    ylabel: str
    signals: tuple[tuple[str, str], ...]
    navigator_only: bool = False
    band: tuple[str, float, str] | None = None
    right: tuple[tuple[str, str], ...] = ()
    right_ylabel: str = ""


#: The time plots, top to bottom.
TIME_PLOTS: tuple[TimePlot, ...] = (
    TimePlot("xte", "Cross-track error", "xte_m [m], + starboard", (("xte_m", "cross-track error"),)),
    TimePlot("heading", "Heading", "[deg]", (("heading_deg", "heading"), ("heading_cmd_deg", "heading command"))),
    TimePlot("speed", "Surge speed", "[m/s]", (("surge_mps", "surge"), ("speed_cmd_mps", "speed command"))),
    TimePlot("actuator", "Actuators (without wind)", "act_surge_n [N]", (("act_surge_n", "surge force"),),
             right=(("act_yaw_nm", "yaw moment"),), right_ylabel="act_yaw_nm [N m]"),
    TimePlot("nav_err", "Navigation error and the navigator's 2DRMS", "nav_err_m [m]",
             (("nav_err_m", "|estimate - truth|"),), navigator_only=True,
             band=("nav_drms_m", 2.0, "2DRMS: navigator's own 95-98 % radius")),
    TimePlot("fix_ok", "GNSS fix accepted", "fix_ok [1 / 0]", (("fix_ok", "latest fix accepted"),),
             navigator_only=True),
)  # fmt: skip


def hull_outline(north_m: float, east_m: float, heading_deg: float, length_m: float,
                 beam_m: float) -> tuple[FloatArray, FloatArray]:  # fmt: skip
    """The craft's outline (:data:`HULL_OUTLINE`) placed at a position and heading.

    Parameters
    ----------
    north_m, east_m : float
        Position of the hull's midpoint in the NED frame [m].
    heading_deg : float
        Heading, clockwise from north [deg].
    length_m, beam_m : float
        Hull length and beam [m].

    Returns
    -------
    north, east : ndarray of shape (len(HULL_OUTLINE),)
        The outline's corners [m], closed (the last equals the first).

    Notes
    -----
    A body-frame point ``(x forward, y starboard)`` maps to
    ``north = n + x cos(psi) - y sin(psi)``, ``east = e + x sin(psi) + y cos(psi)``:
    the rotation about the down axis from body to NED.

    References
    ----------
    T. I. Fossen, Handbook of Marine Craft Hydrodynamics and Motion Control,
    2nd ed., Wiley (2021), ch. 2: the rotation matrix R(psi) of the 3-DOF model.

    Examples
    --------
    >>> n, e = hull_outline(10.0, 20.0, 90.0, 8.0, 2.0)
    >>> round(float(n[0]), 9), round(float(e[0]), 9)  # the bow points east
    (10.0, 24.0)
    """
    body = np.asarray(HULL_OUTLINE, dtype=float) * np.array([length_m, beam_m])
    psi = math.radians(heading_deg)
    c, s = math.cos(psi), math.sin(psi)
    north = north_m + c * body[:, 0] - s * body[:, 1]
    east = east_m + s * body[:, 0] + c * body[:, 1]
    return north, east


def depth_grid(seabed: Any, north_lim: tuple[float, float], east_lim: tuple[float, float],
               cells: int = DEPTH_CELLS) -> tuple[FloatArray, FloatArray, FloatArray]:  # fmt: skip
    """The seabed depth sampled on a regular grid over a map box.

    Parameters
    ----------
    seabed : SeabedGrid
        From :func:`wavebench.trial.setup.build_seabed`.
    north_lim, east_lim : (float, float)
        The box [m].
    cells : int
        Samples per side.

    Returns
    -------
    north : ndarray of shape (cells,)
    east : ndarray of shape (cells,)
    depth : ndarray of shape (cells, cells)
        Depth [m], positive down, rows along north; NaN outside a grid without fill depth.
    """
    from ..sea.seabed import depth_at

    north = np.linspace(north_lim[0], north_lim[1], cells)
    east = np.linspace(east_lim[0], east_lim[1], cells)
    nn, ee = np.meshgrid(north, east, indexing="ij")
    depth = depth_at(seabed, nn.ravel(), ee.ravel()).reshape(nn.shape)
    return north, east, depth


def _finite(a: ArrayLike) -> bool:
    return bool(np.isfinite(np.asarray(a, dtype=float)).any())


def _unwrap_deg(a: FloatArray) -> FloatArray:
    """Angles [deg] unwrapped along their finite samples (NaN kept), so a plot does not jump at 0/360."""
    out = np.array(a, dtype=float)
    ok = np.isfinite(out)
    if ok.any():
        out[ok] = np.degrees(np.unwrap(np.radians(out[ok])))
    return out


def _square_box(easts: Sequence[FloatArray], norths: Sequence[FloatArray], pad: float = 0.08
                ) -> tuple[tuple[float, float], tuple[float, float]]:  # fmt: skip
    """A square (east, north) box around the finite points, so equal scales fill a square plot."""
    e = np.concatenate([np.asarray(x, dtype=float).ravel() for x in easts])
    n = np.concatenate([np.asarray(x, dtype=float).ravel() for x in norths])
    ok = np.isfinite(e) & np.isfinite(n)
    if not ok.any():
        return (-1.0, 1.0), (-1.0, 1.0)
    e, n = e[ok], n[ok]
    ce, cn = 0.5 * (e.min() + e.max()), 0.5 * (n.min() + n.max())
    half = 0.5 * max(e.max() - e.min(), n.max() - n.min(), 10.0) * (1.0 + 2.0 * pad)
    return (float(ce - half), float(ce + half)), (float(cn - half), float(cn + half))


class TrialPlayer(Twinned):
    """One trial of a campaign replayed alone, on a map and in synchronised time plots.

    Parameters
    ----------
    spec : Spec
        The campaign's spec.
    trial : int
        The trial number in the campaign.
    replay : TrialReplay, optional
        An existing replay of that trial with its record; replayed here when omitted.
    stored_metrics : pandas.Series, optional
        The trial's row of a store's metrics table: the metrics table then
        compares the replay with it, metric by metric.
    source : str
        Where the trial comes from (e.g. the store folder), for the title.

    Attributes
    ----------
    widget : ipywidgets.VBox
        The live panel.
    replay : TrialReplay
        The replayed trial: ``metrics`` and ``record`` (dims trial, time; one trial).
    time_s : ndarray of shape (n_samples,)
        Recorded times [s].
    slider : ipywidgets.IntSlider
        The sample shown; ``play`` (ipywidgets.Play) drives it.
    map_figure : bqplot.Figure
    time_figures : dict of str to bqplot.Figure
        One per shown :data:`TIME_PLOTS` entry.
    marks : dict of str to bqplot.Mark
        ``depth``, ``route``, ``true_track``, ``nav_track``, ``craft``
        (outline), ``craft_marker`` (the position), ``cursor.<plot key>``,
        ``<plot key>.lines``, ``<plot key>.right`` (lines on a right axis,
        e.g. ``actuator.right``: the yaw moment) and ``<plot key>.band``
        (e.g. ``nav_err.band``: the 2DRMS radius); only those drawn.
    """

    def __init__(self, spec: Any, trial: int, *, replay: Any = None, stored_metrics: Any = None,
                 source: str = "") -> None:  # fmt: skip
        from ..campaign.replay import replay_trial

        self.spec = spec
        self.trial = int(trial)
        self.replay = replay if replay is not None else replay_trial(spec, int(trial), record=True)
        if self.replay.record is None:
            raise ParameterError("replay", "without a record", "a replay with its time series (record=True)")
        self.stored_metrics = stored_metrics
        self.source = source
        self.title = f"Trial {self.trial} of {spec.scenario.name}" + (f" ({source})" if source else "")
        rec = self.replay.record
        self.time_s = np.asarray(rec["time"].values, dtype=float)
        self.signals: dict[str, FloatArray] = {
            name: np.asarray(rec[name].values[0], dtype=float) for name in rec.data_vars
        }
        craft = spec.craft.build()
        self.length_m = float(np.max(craft.hull.length_m))
        self.beam_m = float(np.max(craft.hull.beam_m))
        self.route_ne = np.asarray(spec.mission.waypoints(), dtype=float)
        self.has_navigator = _finite(self.signals.get("nav_north_m", np.nan))
        alive = np.flatnonzero(np.isfinite(self.signals["north_m"]) & np.isfinite(self.signals["east_m"]))
        self.last_index = int(alive[-1]) if alive.size else 0
        from ..trial.setup import build_seabed

        self.seabed = build_seabed(spec)
        self.marks: dict[str, Any] = {}
        self.time_figures: dict[str, Any] = {}
        self._build()

    # ------------------------------------------------------------------ construction

    @classmethod
    def from_store(cls, store_dir: str | os.PathLike[str], trial: int) -> TrialPlayer:
        """Replay trial ``trial`` of a stored campaign alone.

        Parameters
        ----------
        store_dir : path-like
            A store folder written by ``wavebench run``, finished or not (a
            campaign still running or interrupted: the rows of its finished
            trials so far).
        trial : int
            The trial number.

        Returns
        -------
        TrialPlayer
            With the store's metrics row beside the replay's in the metrics
            table (none for a trial the store does not hold yet).
        """
        from ..campaign import read_store

        store = read_store(store_dir, partial=True)
        metrics = store["metrics"]
        rows = metrics[metrics["trial"] == int(trial)]
        row = rows.iloc[0] if len(rows) else None
        return cls(store["spec"], int(trial), stored_metrics=row, source=str(store_dir))

    @classmethod
    def from_spec(cls, spec: Any, trial: int) -> TrialPlayer:
        """Replay trial ``trial`` of ``spec``'s campaign alone."""
        return cls(spec, int(trial))

    @property
    def map_box(self) -> tuple[tuple[float, float], tuple[float, float]]:
        """The map's (east, north) limits [m]: a square around the route and the tracks."""
        easts = [self.route_ne[:, 1], self.signals["east_m"]]
        norths = [self.route_ne[:, 0], self.signals["north_m"]]
        if self.has_navigator:
            easts.append(self.signals["nav_east_m"])
            norths.append(self.signals["nav_north_m"])
        return _square_box(easts, norths)

    def craft_outline(self, index: int) -> tuple[FloatArray, FloatArray]:
        """The craft's outline (north, east) [m] at recorded sample ``index`` (NaN when not recorded)."""
        n, e, h = (float(self.signals[k][index]) for k in ("north_m", "east_m", "heading_deg"))
        return hull_outline(n, e, h, self.length_m, self.beam_m)

    def _plots(self) -> list[TimePlot]:
        return [p for p in TIME_PLOTS if (self.has_navigator or not p.navigator_only)
                and any(_finite(self.signals.get(s, np.nan)) for s, _ in p.signals)]  # fmt: skip

    def _series(self, plot: TimePlot, *, right: bool = False) -> list[tuple[str, FloatArray]]:
        """The plot's recorded lines (those with finite values) as (legend, values); ``right``: its right axis'."""
        out = []
        for name, label in plot.right if right else plot.signals:
            if name not in self.signals or not _finite(self.signals[name]):
                continue
            y = self.signals[name]
            out.append((label, _unwrap_deg(y) if name.endswith("_deg") else y))
        return out

    def band(self, key: str) -> FloatArray | None:
        """The upper edge of a time plot's band (``factor`` x its signal, e.g. the 2DRMS radius [m]), or None."""
        plot = next((p for p in TIME_PLOTS if p.key == key), None)
        if plot is None or plot.band is None:
            return None
        name, factor, _ = plot.band
        y = self.signals.get(name)
        return factor * y if y is not None and _finite(y) else None

    def _build(self) -> None:
        import bqplot as bq
        import ipywidgets as w

        (e0, e1), (n0, n1) = self.map_box
        xs = bq.LinearScale(min=e0, max=e1)
        ys = bq.LinearScale(min=n0, max=n1)
        self.map_scales = (xs, ys)
        marks = []
        depth_note = "no seabed in the spec"
        if self.seabed is not None:
            north, east, depth = depth_grid(self.seabed, (n0, n1), (e0, e1))
            if _finite(depth):
                lo, hi = float(np.nanmin(depth)), float(np.nanmax(depth))
                cs = bq.ColorScale(colors=list(MAP_DEPTH_COLORS), min=lo, max=hi if hi > lo else lo + 1.0)
                self.marks["depth"] = bq.HeatMap(x=east, y=north, color=depth, scales={"x": xs, "y": ys, "color": cs},
                                                 null_color="#ffffff")  # fmt: skip
                marks.append(self.marks["depth"])
                depth_note = f"depth {lo:.1f} to {hi:.1f} m"
        self.depth_note = depth_note
        sc = {"x": xs, "y": ys}
        self.marks["route"] = bq.Lines(x=self.route_ne[:, 1], y=self.route_ne[:, 0], scales=sc,
                                       colors=[_ROUTE_COLOR], line_style="dashed", labels=["route"],
                                       marker="circle", marker_size=24)  # fmt: skip
        self.marks["true_track"] = bq.Lines(x=self.signals["east_m"], y=self.signals["north_m"], scales=sc,
                                            colors=[_TRUE_COLOR], stroke_width=1.6, labels=["true track"])  # fmt: skip
        marks += [self.marks["route"], self.marks["true_track"]]
        if self.has_navigator:
            self.marks["nav_track"] = bq.Lines(x=self.signals["nav_east_m"], y=self.signals["nav_north_m"],
                                               scales=sc, colors=[_NAV_COLOR], stroke_width=1.2,
                                               labels=["estimated track"])  # fmt: skip
            marks.append(self.marks["nav_track"])
        on, oe = self.craft_outline(0)
        self.marks["craft"] = bq.Lines(x=oe, y=on, scales=sc, colors=[_CRAFT_COLOR], fill="inside",
                                       fill_colors=["#f2c94c"], stroke_width=1.2, labels=["craft"])  # fmt: skip
        self.marks["craft_marker"] = bq.Scatter(x=self.signals["east_m"][:1], y=self.signals["north_m"][:1], scales=sc,
                                                colors=[_CRAFT_COLOR], default_size=24)  # fmt: skip
        marks += [self.marks["craft"], self.marks["craft_marker"]]
        axes = [bq.Axis(scale=xs, label="east [m]"), bq.Axis(scale=ys, label="north [m]", side="left")]
        margin = dict(top=30, bottom=50, left=60, right=60)  # equal totals: the plot area stays square
        self.map_figure = bq.Figure(marks=marks, axes=axes, title=f"Trial {self.trial}: map ({depth_note})",
                                    fig_margin={**margin, "top": 40, "bottom": 40},
                                    min_aspect_ratio=1.0, max_aspect_ratio=1.0,
                                    layout=w.Layout(width="460px", height="460px"))  # fmt: skip

        t = self.time_s
        ts = bq.LinearScale(min=float(t[0]), max=float(t[-1]) if t[-1] > t[0] else float(t[0]) + 1.0)
        unit = bq.LinearScale(min=0.0, max=1.0)
        for k, plot in enumerate(self._plots()):
            series, right = self._series(plot), self._series(plot, right=True)
            band = self.band(plot.key)
            ysc = bq.LinearScale(min=0.0) if band is not None else bq.LinearScale()
            if plot.key == "fix_ok":
                ysc = bq.LinearScale(min=-0.1, max=1.1)
            colors = [PALETTE[(k + j) % len(PALETTE)] for j in range(len(series) + len(right))]
            legend = len(series) + len(right) + (band is not None) > 1
            lines = bq.Lines(x=t, y=np.vstack([y for _, y in series]), scales={"x": ts, "y": ysc},
                             colors=colors[: len(series)], labels=[label for label, _ in series],
                             display_legend=legend,
                             interpolation="step-after" if plot.key == "fix_ok" else "linear")  # fmt: skip
            cursor = bq.Lines(x=np.array([t[0], t[0]]), y=np.array([0.0, 1.0]), scales={"x": ts, "y": unit},
                              colors=[_CURSOR_COLOR], stroke_width=1.5)  # fmt: skip
            marks, axes = [lines, cursor], [bq.Axis(scale=ts, label="time [s]"),
                                            bq.Axis(scale=ysc, label=plot.ylabel, side="left")]  # fmt: skip
            if band is not None and plot.band is not None:  # filled from the line down to the axis' 0
                self.marks[f"{plot.key}.band"] = bq.Lines(x=t, y=band, scales={"x": ts, "y": ysc}, fill="bottom",
                                                          colors=[_BAND_COLOR], fill_colors=[_BAND_COLOR],
                                                          fill_opacities=[0.25], stroke_width=0.8,
                                                          labels=[plot.band[2]], display_legend=True)  # fmt: skip
                marks.insert(0, self.marks[f"{plot.key}.band"])
            if right:
                rsc = bq.LinearScale()
                self.marks[f"{plot.key}.right"] = bq.Lines(x=t, y=np.vstack([y for _, y in right]),
                                                           scales={"x": ts, "y": rsc}, colors=colors[len(series):],
                                                           labels=[label for label, _ in right],
                                                           display_legend=True)  # fmt: skip
                marks.insert(-1, self.marks[f"{plot.key}.right"])
                axes.append(bq.Axis(scale=rsc, label=plot.right_ylabel, side="right", label_offset="45px"))
            self.marks[f"{plot.key}.lines"] = lines
            self.marks[f"cursor.{plot.key}"] = cursor
            fig = bq.Figure(marks=marks, title=plot.title, axes=axes,
                            fig_margin=dict(top=30, bottom=40, left=60, right=70 if right else 20),
                            layout=w.Layout(width="560px", height="170px"))  # fmt: skip
            self.time_figures[plot.key] = fig
        n = t.size
        self.slider = w.IntSlider(value=0, min=0, max=max(n - 1, 0), step=1, description="sample",
                                  continuous_update=True, layout=w.Layout(width="420px"))  # fmt: skip
        self.play = w.Play(value=0, min=0, max=max(n - 1, 0), step=1, interval=100, description="play")
        w.jslink((self.play, "value"), (self.slider, "value"))
        self.time_label = w.Label()
        self.follow = w.Checkbox(value=False, description="follow the craft", indent=False)
        self.follow.observe(lambda _c: self.show(self.index), names="value")
        self.slider.observe(self._on_slider, names="value")
        note = ("" if self.has_navigator else "<br><span style='color:#555'>truth navigation: no estimated track, "
                "navigation error or fix validity.</span>")  # fmt: skip
        header = w.HTML(f"<b>{escape(self.title)}</b>{note}")
        self.metrics_html = w.HTML(self._metrics_table())
        controls = w.HBox([self.play, self.slider, self.time_label, self.follow])
        self.widget = w.VBox([
            header, controls,
            w.HBox([self.map_figure, w.VBox(list(self.time_figures.values()))]),
            w.Accordion(children=[self.metrics_html], titles=("metrics",)),
        ])  # fmt: skip
        self.show(0)

    # ------------------------------------------------------------------ interaction

    def _on_slider(self, change: dict[str, Any]) -> None:
        self.show(int(change["new"]))

    def show(self, index: int) -> None:
        """Move the craft, its marker and every time cursor to recorded sample ``index``.

        All marks change inside one ``hold_sync`` block each, so the browser
        gets one batch of updates.
        """
        i = int(np.clip(index, 0, self.time_s.size - 1))
        self.index = i
        on, oe = self.craft_outline(i)
        t = float(self.time_s[i])
        cursors = [m for k, m in self.marks.items() if k.startswith("cursor.")]
        with contextlib.ExitStack() as stack:
            for m in (self.marks["craft"], self.marks["craft_marker"], *cursors, *self.map_scales):
                stack.enter_context(m.hold_sync())
            (e0, e1), (n0, n1) = self.follow_box(i) if self.follow.value else self.map_box
            self.map_scales[0].min, self.map_scales[0].max = e0, e1
            self.map_scales[1].min, self.map_scales[1].max = n0, n1
            self.marks["craft"].x, self.marks["craft"].y = oe, on
            self.marks["craft_marker"].x = self.signals["east_m"][i : i + 1]
            self.marks["craft_marker"].y = self.signals["north_m"][i : i + 1]
            for m in cursors:
                m.x = np.array([t, t])
        self.time_label.value = f"t = {t:g} s" + ("" if np.isfinite(self.signals["north_m"][i]) else " (trial ended)")
        if self.slider.value != i:
            self.slider.value = i

    def follow_box(self, index: int) -> tuple[tuple[float, float], tuple[float, float]]:
        """A square (east, north) box of :data:`FOLLOW_LENGTHS` hull lengths centred on the craft at ``index``.

        The full map box when the craft has no recorded position there.
        """
        n, e = float(self.signals["north_m"][index]), float(self.signals["east_m"][index])
        if not (math.isfinite(n) and math.isfinite(e)):
            return self.map_box
        half = 0.5 * FOLLOW_LENGTHS * self.length_m
        return (e - half, e + half), (n - half, n + half)

    @property
    def time(self) -> float:
        """The time shown [s]."""
        return float(self.time_s[self.index])

    # ------------------------------------------------------------------ tables and static twin

    def reproduced(self) -> list[tuple[str, Any, Any, bool]]:
        """The replay's metrics against the stored row (:func:`~wavebench.campaign.replay.compare_with_store`).

        Returns an empty list when the player was not built from a store.
        """
        if self.stored_metrics is None:
            return []
        from ..campaign.replay import compare_with_store

        return compare_with_store(self.replay, self.stored_metrics)

    def _metrics_table(self) -> str:
        rows = []
        if self.stored_metrics is not None:
            head = "<tr><th>metric</th><th>replayed</th><th>stored</th><th>same bits</th></tr>"
            for name, a, b, same in self.reproduced():
                rows.append(f"<tr class='metric-row'><td><code>{escape(name)}</code></td><td>{cell_number(a, 6)}</td>"
                            f"<td>{cell_number(b, 6)}</td><td>{'yes' if same else 'NO'}</td></tr>")  # fmt: skip
        else:
            head = "<tr><th>metric</th><th>value</th></tr>"
            for name, a in self.replay.metrics.items():
                rows.append(f"<tr class='metric-row'><td><code>{escape(name)}</code></td>"
                            f"<td>{cell_number(a, 6)}</td></tr>")  # fmt: skip
        return f"<table class='wavebench-metrics'>{head}{''.join(rows)}</table>"

    def map_svg(self, index: int | None = None) -> str:
        """The map as SVG: depth, route, tracks, craft outline at sample ``index`` (by default the last recorded)."""
        i = self.last_index if index is None else int(index)
        (e0, e1), (n0, n1) = self.map_box
        series = [Series(self.route_ne[:, 1], self.route_ne[:, 0], "route", color=_ROUTE_COLOR, dashed=True),
                  Series(self.signals["east_m"], self.signals["north_m"], "true track", color=_TRUE_COLOR)]  # fmt: skip
        if self.has_navigator:
            series.append(Series(self.signals["nav_east_m"], self.signals["nav_north_m"], "estimated track",
                                 color=_NAV_COLOR, width=1.2))  # fmt: skip
        on, oe = self.craft_outline(i)
        series.append(Series(oe, on, f"craft at t = {self.time_s[i]:g} s", color=_CRAFT_COLOR, width=2.0))
        depth = None
        if self.seabed is not None:
            north, east, d = depth_grid(self.seabed, (n0, n1), (e0, e1), cells=STATIC_DEPTH_CELLS)
            depth = (north, east, d) if _finite(d) else None
        return map_chart(series, depth=depth, xlim=(e0, e1), ylim=(n0, n1), title=f"Trial {self.trial}: map")

    def time_svgs(self, index: int | None = None) -> list[str]:
        """The time plots as SVG, with the cursor at sample ``index`` (the last recorded one by default).

        A plot with a right axis is drawn as two charts, one per unit; a band
        is filled from 0 up to its edge under the lines.
        """
        from ..report.charts import band_chart

        i = self.last_index if index is None else int(index)
        t_now = float(self.time_s[i])
        out = []
        for k, plot in enumerate(self._plots()):
            left, right = self._series(plot), self._series(plot, right=True)
            colors = [PALETTE[(k + j) % len(PALETTE)] for j in range(len(left) + len(right))]
            parts = [(plot.ylabel, left, colors[: len(left)])]
            if right:
                parts.append((plot.right_ylabel, right, colors[len(left):]))
            band = self.band(plot.key)
            for ylabel, lines, cols in parts:
                series = [Series(self.time_s, y, label, color=c) for (label, y), c in zip(lines, cols, strict=True)]
                vals = np.concatenate([np.asarray(s.y)[np.isfinite(s.y)] for s in series]
                                      + ([band[np.isfinite(band)], [0.0]] if band is not None else []))  # fmt: skip
                lo, hi = (float(vals.min()), float(vals.max())) if vals.size else (0.0, 1.0)
                if plot.key == "fix_ok":
                    lo, hi = -0.1, 1.1
                pad = 0.05 * (hi - lo) if hi > lo else 0.5
                ylim = (0.0 if band is not None else lo - pad, hi + pad)
                series.append(Series([t_now, t_now], list(ylim), "", color=_CURSOR_COLOR, width=1.2))
                title = plot.title if not right else f"{plot.title}: {', '.join(label for label, _ in lines)}"
                if band is not None and plot.band is not None:
                    out.append(band_chart(self.time_s, [(np.zeros_like(band), band, plot.band[2], _BAND_COLOR)],
                                          series, title=title, xlabel="time [s]", ylabel=ylabel, width=560,
                                          height=200, ylim=ylim))  # fmt: skip
                else:
                    out.append(line_chart(series, title=title, xlabel="time [s]", ylabel=ylabel, width=560,
                                          height=200, ylim=ylim))  # fmt: skip
        return out

    def static_html(self) -> str:
        """The map and time plots as SVG at the last recorded time, and the trial's metrics."""
        notes = [self.depth_note]
        if not self.has_navigator:
            notes.append("truth navigation")
        return (
            f"<p>{escape('; '.join(notes))}. Shown at t = {self.time_s[self.last_index]:g} s, the last recorded "
            "time.</p>"
            f"<div style='display:flex;flex-wrap:wrap;gap:8px'><div>{self.map_svg()}</div>"
            f"<div>{''.join(self.time_svgs())}</div></div>"
            f"<h5>Metrics of trial {self.trial}</h5>{self._metrics_table()}"
        )
