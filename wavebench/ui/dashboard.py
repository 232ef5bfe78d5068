"""The campaign dashboard: verdicts, distributions, bands over time, inputs and drivers of a campaign.

:class:`CampaignDashboard` shows a finished campaign (a store folder or a
:class:`~wavebench.campaign.executor.CampaignResult`), the trials finished so
far of a store whose campaign is still running or was interrupted (marked
partial: its verdicts are provisional), or runs one with a progress bar fed
per finished chunk and fills in when it is done:

- the requirement verdicts with their intervals (a table);
- the histogram and the empirical distribution function (ECDF) of a chosen
  per-trial metric, with the requirement's threshold;
- percentile bands (5-95 % with the median) of a recorded signal over time,
  with a few sample trials;
- a chosen metric against a chosen drawn input, one point per trial coloured
  by whether it met the chosen requirement; clicking a point opens that
  trial in a :class:`~wavebench.ui.player.TrialPlayer` below;
- the drawn inputs ranked by their rank correlation with the requirement's
  metric (:mod:`wavebench.analysis.sensitivity`);
- the operability chart of :mod:`wavebench.report.study` (share meeting the
  requirement per wave heading relative to the route's course and Hs), when
  the trials drew the wave direction (and Hs, unless it is fixed).

The plots show statistics, never one line per trial: the bands are
percentiles computed in numpy, at most :data:`MAX_SAMPLE_TRIALS` trials are
drawn as lines, and the scatter is one mark however many trials there are.
The static twin (:meth:`CampaignDashboard.static_html`) holds the verdict
table and the same charts as SVG.
"""

from __future__ import annotations

import math
import os
import threading
from collections.abc import Iterable, Sequence
from typing import Any

import numpy as np
import pandas as pd
from numpy.typing import NDArray

from ..core.errors import ParameterError
from ..report.campaign import MAIN_METRICS, nan_percentiles
from ..report.charts import band_chart, histogram_chart, histogram_counts, scatter_chart, signed_bar_chart
from ..report.html import CAUTION, cell_number, escape
from ..report.navigation import NAV_METRICS
from ..report.study import DIRECTION_COLUMN, HS_COLUMN, MIN_CELL_TRIALS, Requirement, meets
from ..report.svg import PALETTE, Series, line_chart
from .twin import Twinned

__all__ = ["BAND_PERCENTILES", "MAX_SAMPLE_TRIALS", "Band", "CampaignDashboard", "ecdf", "scatter_chart"]

FloatArray = NDArray[np.float64]

#: Percentiles of the bands over time: low, middle, high.
BAND_PERCENTILES = (5.0, 50.0, 95.0)
#: Most trials drawn as lines over the bands.
MAX_SAMPLE_TRIALS = 5

_PASS = "#2e7d32"
_FAIL = "#b3261e"
_NONE = "#777777"
_VERDICT_STYLE = {
    "pass": "background:#2e7d32;color:#fff",
    "fail": "background:#b3261e;color:#fff",
    "undecided": "background:#f2c94c;color:#3d2e00",
}
#: Progress bar style of a filled panel that shows a finished campaign (as the bar starts).
_FINISHED_BAR = "info"
_SYMBOL = {"below": "<", "above": ">"}
#: Signals offered for the bands, in order (those with finite values).
_BAND_SIGNALS = ("xte_m", "nav_err_m", "heading_deg", "surge_mps", "sway_mps", "yaw_rate_dps", "power_w", "nees")


def ecdf(values: Any) -> tuple[FloatArray, FloatArray]:
    """The empirical distribution function of the finite values.

    Returns
    -------
    x : ndarray of shape (n,)
        The finite values, sorted.
    f : ndarray of shape (n,)
        ``(k + 1) / n``: the share of values <= ``x[k]``.

    Examples
    --------
    >>> x, f = ecdf([3.0, 1.0, float("nan"), 2.0])
    >>> x.tolist(), f.tolist()
    ([1.0, 2.0, 3.0], [0.3333333333333333, 0.6666666666666666, 1.0])
    """
    v = np.asarray(values, dtype=float).ravel()
    v = np.sort(v[np.isfinite(v)])
    return v, np.arange(1, v.size + 1, dtype=float) / max(v.size, 1)


def _steps(x: FloatArray, f: FloatArray) -> tuple[FloatArray, FloatArray]:
    """Corner points of a right-continuous step function through (x, f), starting at 0."""
    if x.size == 0:
        return x, f
    xs = np.repeat(x, 2)
    fs = np.concatenate([[0.0], np.repeat(f, 2)[:-1]])
    return xs, fs


class Band:
    """Percentile bands of one recorded signal across trials.

    Attributes
    ----------
    signal : str
    time_s : ndarray of shape (n_time,)
    low, median, high : ndarray of shape (n_time,)
        The :data:`BAND_PERCENTILES` across trials at each time (NaN where no trial has a value).
    sample_trials : list of int
        Trial numbers drawn as lines.
    samples : ndarray of shape (len(sample_trials), n_time)
    """

    def __init__(self, signal: str, time_s: FloatArray, values: FloatArray, trials: Sequence[int]) -> None:
        self.signal = signal
        self.time_s = time_s
        self.low, self.median, self.high = nan_percentiles(values, list(BAND_PERCENTILES), axis=0)
        n = values.shape[0]
        pick = np.unique(np.linspace(0, n - 1, min(MAX_SAMPLE_TRIALS, n)).round().astype(int)) if n else []
        self.sample_trials = [int(trials[i]) for i in pick]
        self.samples = values[pick] if n else np.zeros((0, time_s.size))


def _verdict_dicts(verdicts: Iterable[Any]) -> list[dict[str, Any]]:
    return [dict(v.to_dict()) if hasattr(v, "to_dict") else dict(v) for v in verdicts]


def _num(v: Any, digits: int = 3) -> str:
    return "–" if v is None else cell_number(v, digits)


def _in_kernel() -> bool:
    try:
        from IPython import get_ipython
    except ImportError:  # pragma: no cover
        return False
    shell = get_ipython()
    return shell is not None and getattr(shell, "kernel", None) is not None


class CampaignDashboard(Twinned):
    """A campaign's verdicts and statistics as one panel; click a trial to replay it.

    Parameters
    ----------
    spec : Spec, optional
        The campaign's spec (needed to replay a clicked trial).
    metrics : pandas.DataFrame, optional
        One row per trial (a store's ``metrics.parquet``).
    timeseries : xarray.Dataset, optional
        Recorded signals, dims (trial, time).
    verdicts : sequence of Verdict or dict
        One per requirement.
    store_dir : path-like, optional
        The store folder, when there is one (a clicked trial is then
        compared with its stored row).
    trials_planned : int, optional
        For an unfinished campaign (a store still running or interrupted):
        the trials planned. The panel then says it is partial, and that its
        verdicts cover the finished trials only.

    Without ``metrics`` the panel shows only its progress bar, until
    :meth:`fill` is called (as :meth:`run` does).

    Attributes
    ----------
    widget : ipywidgets.VBox
    progress : ipywidgets.IntProgress
        Trials finished (fed per chunk by :meth:`run`).
    verdicts : list of dict
        As in ``verdicts.json``.
    marks : dict of str to bqplot.Mark
        ``hist``, ``ecdf``, ``band``, ``median``, ``samples``, ``scatter``, ``sensitivity``, ...
    player : TrialPlayer or None
        The trial opened from the scatter.
    """

    title = "Campaign dashboard"

    def __init__(self, spec: Any = None, metrics: Any = None, timeseries: Any = None, verdicts: Iterable[Any] = (),
                 *, store_dir: str | os.PathLike[str] | None = None,
                 trials_planned: int | None = None) -> None:  # fmt: skip
        import ipywidgets as w

        self.progress = w.IntProgress(value=0, min=0, max=1, description="trials", bar_style=_FINISHED_BAR)
        self.status = w.Label("")
        self.body = w.VBox([])
        self.widget = w.VBox([w.HBox([self.progress, self.status]), self.body])
        self.spec = spec
        self.metrics: pd.DataFrame | None = None
        self.timeseries = None
        self.verdicts: list[dict[str, Any]] = []
        self.store_dir = store_dir
        self.trials_planned: int | None = None
        self.player: Any = None
        self.marks: dict[str, Any] = {}
        self.error: BaseException | None = None
        self._thread: threading.Thread | None = None
        if metrics is not None:
            self.fill(spec, metrics, timeseries, verdicts, store_dir=store_dir, trials_planned=trials_planned)

    # ------------------------------------------------------------------ construction

    @classmethod
    def from_store(cls, store_dir: str | os.PathLike[str]) -> CampaignDashboard:
        """The dashboard of a store folder written by ``wavebench run``, finished or not.

        A store whose campaign is still running (or was interrupted) shows
        the trials of its finished chunks so far, marked partial
        (``read_store(store_dir, partial=True)``); open it again to see more.
        """
        from ..campaign import read_store

        store = read_store(store_dir, partial=True)
        planned = int(store["manifest"]["trials_planned"]) if store["partial"] else None
        return cls(store["spec"], store["metrics"], store["timeseries"], store["verdicts"], store_dir=store_dir,
                   trials_planned=planned)  # fmt: skip

    @classmethod
    def from_result(cls, result: Any, *, store_dir: str | os.PathLike[str] | None = None) -> CampaignDashboard:
        """The dashboard of a :class:`~wavebench.campaign.executor.CampaignResult`."""
        return cls(result.spec, result.metrics, result.timeseries, result.verdicts, store_dir=store_dir)

    @classmethod
    def run(cls, spec: Any, *, display: bool = True, background: bool = False,
            **run_campaign_kwargs: Any) -> CampaignDashboard:  # fmt: skip
        """Run a campaign with a progress bar, and fill the dashboard in when it is done.

        Parameters
        ----------
        spec : Spec
        display : bool
            In a notebook, show the panel as the run starts, so that the
            progress bar moves (assign the result, ``dash = ...``, so that the
            cell does not show it a second time).
        background : bool
            Run in a thread and return at once; :meth:`wait` joins it.
        **run_campaign_kwargs
            Passed to :func:`~wavebench.campaign.executor.run_campaign`
            (``trials``, ``seed``, ``batch_size``, ``executor``, ``workers``,
            ``scheduler``, ``store``, ``until``, ...). ``progress`` (the text
            bar) is off unless asked for.

        Returns
        -------
        CampaignDashboard

        Notes
        -----
        The progress bar follows ``run_campaign``'s ``on_chunk`` hook: it
        starts at the trials read back from a store (``resume=True``) and
        moves after each finished (and stored) chunk, in this process. The
        chunks run in the chosen executor untouched, so results are the same
        bits as without the panel. An ``on_chunk`` passed here is called
        after the panel's.
        """
        from ..campaign.executor import run_campaign

        kw = dict(run_campaign_kwargs)
        dash = cls(spec, store_dir=kw.get("store"))
        dash.status.value = "starting"
        chained = kw.pop("on_chunk", None)

        def on_chunk(output: Any, done: int, planned: int) -> None:
            with dash.progress.hold_sync():
                dash.progress.max = max(int(planned), 1)
                dash.progress.value = min(int(done), dash.progress.max)
            dash.status.value = f"{int(done)} of {int(planned)} trials"
            if chained is not None:
                chained(output, done, planned)

        kw["on_chunk"] = on_chunk
        kw.setdefault("progress", False)

        def job() -> None:
            try:
                result = run_campaign(spec, **kw)
            except BaseException as exc:  # reported in the panel and re-raised by wait()
                dash.error = exc
                dash.progress.bar_style = "danger"
                dash.status.value = f"stopped: {type(exc).__name__}: {exc}"
                if not background:
                    raise
                return
            dash.progress.value = len(result.metrics)
            dash.progress.bar_style = "success" if result.complete else "warning"
            dash.status.value = f"{len(result.metrics)} trials" + ("" if result.complete else " (interrupted)")
            dash.fill(result.spec, result.metrics, result.timeseries, result.verdicts, store_dir=kw.get("store"))

        if display and _in_kernel():
            from IPython.display import display as show

            show(dash)
        if background:
            dash._thread = threading.Thread(target=job, name="wavebench-campaign", daemon=True)
            dash._thread.start()
        else:
            job()
        return dash

    def wait(self, timeout: float | None = None) -> CampaignDashboard:
        """Wait for a background run; re-raise its error if it failed."""
        if self._thread is not None:
            self._thread.join(timeout)
        if self.error is not None:
            raise self.error
        return self

    # ------------------------------------------------------------------ data

    def fill(self, spec: Any, metrics: Any, timeseries: Any, verdicts: Iterable[Any], *,
             store_dir: str | os.PathLike[str] | None = None, trials_planned: int | None = None) -> None:  # fmt: skip
        """Show a campaign's trials (replaces what the panel showed).

        ``trials_planned`` is given for an unfinished campaign: the panel is
        then marked partial (see :meth:`partial_note`). Without it a panel
        that showed a partial campaign loses its partial title, note and bar
        style.
        """
        was_partial = self.partial
        self.spec = spec
        self.metrics = metrics.reset_index(drop=True)
        self.timeseries = timeseries
        self.verdicts = _verdict_dicts(verdicts)
        self.store_dir = store_dir
        self.trials_planned = None if trials_planned is None else int(trials_planned)
        self.trials = self.metrics["trial"].to_numpy(dtype=np.int64) if "trial" in self.metrics else np.arange(
            len(self.metrics))  # fmt: skip
        self.requirements = [
            Requirement(str(v["name"]), str(v["metric"]), str(v["comparator"]), float(v["threshold"]),
                        float(v["probability"]) if v.get("probability") is not None else math.nan,
                        str(v.get("unit") or ""))
            for v in self.verdicts
            if v.get("comparator") in _SYMBOL and v.get("threshold") is not None and v.get("metric") in self.metrics
        ]  # fmt: skip
        self.progress.max = max(len(self.metrics), 1)
        self.progress.value = len(self.metrics)
        if self.partial:
            self.title = f"{type(self).title} (partial: {len(self.metrics)} of {self.trials_planned} trials)"
            self.progress.max = max(int(self.trials_planned or 0), len(self.metrics), 1)
            self.progress.bar_style = "warning"
            self.status.value = self.partial_note()
        else:
            self.title = type(self).title
            if was_partial:  # the campaign shown before was unfinished: drop its bar style and note
                self.progress.bar_style = _FINISHED_BAR
                self.status.value = ""
            if not self.status.value:
                self.status.value = f"{len(self.metrics)} trials"
        self._bands: dict[str, Band] = {}
        self._build()

    @property
    def partial(self) -> bool:
        """Whether the panel shows an unfinished campaign (its trials finished so far)."""
        return self.trials_planned is not None

    def partial_note(self) -> str:
        """``"partial: <done> of <planned> trials finished; the verdicts cover those only"`` ("" when finished).

        With no trial finished yet: ``"partial: no trial of <planned> finished yet"``.
        """
        if not self.partial or self.metrics is None:
            return ""
        if len(self.metrics) == 0:
            return f"partial: no trial of {self.trials_planned} finished yet"
        return f"partial: {len(self.metrics)} of {self.trials_planned} trials finished; the verdicts cover those only"

    def metric_names(self) -> list[str]:
        """Numeric per-trial metrics with finite values: the requirements' first, then the report's main ones."""
        m = self.metrics
        names = [r.metric for r in self.requirements]
        names += [c for c, _, _ in MAIN_METRICS] + [c for c, _, _ in NAV_METRICS]
        names += [str(c) for c in m.columns if not str(c).startswith("param.")]
        out = []
        for c in names:
            if c in out or c not in m or c == "trial" or m[c].dtype.kind not in "iuf":
                continue
            if np.isfinite(m[c].to_numpy(dtype=float)).any():
                out.append(c)
        return out

    def input_names(self) -> list[str]:
        """The drawn inputs (``param.<path>`` columns) with finite values."""
        m = self.metrics
        return [str(c) for c in m.columns if str(c).startswith("param.") and m[c].dtype.kind in "biuf"
                and np.isfinite(m[c].to_numpy(dtype=float)).any()]  # fmt: skip

    def signal_names(self) -> list[str]:
        """Recorded signals offered for the bands (those with finite values)."""
        ds = self.timeseries
        if ds is None:
            return []
        return [s for s in _BAND_SIGNALS if s in ds and np.isfinite(np.asarray(ds[s].values, dtype=float)).any()]

    def band(self, signal: str) -> Band:
        """The percentile bands of a recorded signal (computed once, in numpy)."""
        if signal not in self._bands:
            ds = self.timeseries
            if ds is None or signal not in ds:
                raise ParameterError("signal", signal, f"a recorded signal of the campaign: {self.signal_names()}")
            values = np.asarray(ds[signal].transpose("trial", "time").values, dtype=float)
            trials = [int(t) for t in np.asarray(ds["trial"].values)]
            self._bands[signal] = Band(signal, np.asarray(ds["time"].values, dtype=float), values, trials)
        return self._bands[signal]

    def requirement(self, name: str | None) -> Requirement | None:
        """The requirement called ``name`` (None when there is none)."""
        return next((r for r in self.requirements if r.name == name), None)

    def met(self, req: Requirement | None) -> NDArray[np.bool_] | None:
        """Which trials met a requirement (a NaN metric does not), or None without one."""
        if req is None:
            return None
        return meets(pd.to_numeric(self.metrics[req.metric], errors="coerce").to_numpy(dtype=float), req.comparator,
                     req.threshold)  # fmt: skip

    def _values(self, column: str) -> FloatArray:
        return pd.to_numeric(self.metrics[column], errors="coerce").to_numpy(dtype=float)

    # ------------------------------------------------------------------ tables

    def verdict_table(self) -> str:
        """The requirement verdicts with their intervals, as an HTML table (one ``verdict-row`` per requirement).

        Below the table, the caution the reports carry
        (:data:`~wavebench.report.html.CAUTION`, in a ``wavebench-caution`` paragraph).
        """
        if not self.verdicts:
            if self.partial and self.spec is not None and len(self.spec.requirements):
                return f"<p class='wavebench-partial'><b>{escape(self.partial_note())}</b>.</p>"
            return "<p>No requirements in the spec: nothing to pass or fail.</p>"
        head = ("<tr><th>requirement</th><th>condition</th><th>met / trials</th>"
                "<th>P(met) [Clopper–Pearson interval]</th><th>quantile [bootstrap interval]</th>"
                "<th>verdict</th></tr>")  # fmt: skip
        rows = []
        for v in self.verdicts:
            unit = f" {escape(v.get('unit') or '')}" if v.get("unit") else ""
            word = str(v.get("verdict", "?"))
            style = _VERDICT_STYLE.get(word, "background:#ddd;color:#222")
            shown = escape(word)
            if self.partial:  # provisional: outlined, not filled, and said so
                style = "background:#fff;color:#222;border:2px dashed #777"
                shown = f"{shown} so far"
            symbol = _SYMBOL.get(str(v.get("comparator")), "?")
            cond = (f"<code>{escape(v.get('metric', '?'))}</code> {symbol} {_num(v.get('threshold'), 4)}{unit} "
                    f"with probability ≥ {_num(v.get('probability'), 4)}")  # fmt: skip
            failed = f" ({escape(v.get('n_failed'))} without a value)" if v.get("n_failed") else ""
            rows.append(
                f"<tr class='verdict-row' data-requirement=\"{escape(v.get('name', '?'))}\" "
                f"data-verdict=\"{escape(word)}\"><td>{escape(v.get('name', '?'))}</td><td>{cond}</td>"
                f"<td>{escape(v.get('n_met', '–'))} / {escape(v.get('n_trials', '–'))}{failed}</td>"
                f"<td>{_num(v.get('p_hat'))} [{_num(v.get('p_low'))}, {_num(v.get('p_high'))}] at "
                f"{_num(100.0 * float(v['confidence']) if v.get('confidence') is not None else None)} % confidence</td>"
                f"<td>q<sub>{_num(v.get('quantile_level'))}</sub> = {_num(v.get('quantile_value'), 4)}{unit} "
                f"[{_num(v.get('quantile_low'), 4)}, {_num(v.get('quantile_high'), 4)}]</td>"
                f"<td><span class='verdict' style='{style};font-weight:bold;padding:0 0.4em;border-radius:3px'>"
                f"{shown}</span></td></tr>"
            )  # fmt: skip
        note = ""
        if self.partial:
            note = (f"<p class='wavebench-partial'><b>{escape(self.partial_note())}</b>. The campaign is unfinished "
                    "(still running or interrupted): these verdicts are provisional, not final; open the store "
                    "again to see more trials.</p>")  # fmt: skip
        caution = ("<p class='wavebench-caution' role='note' style='border-left:4px solid #c8553d;"
                   f"padding:0.2em 0.6em;max-width:48em'><b>Caution.</b> {escape(CAUTION)}</p>")  # fmt: skip
        return (note + "<table class='wavebench-verdicts' style='border-collapse:collapse'>" + head + "".join(rows)
                + "</table>" + caution)  # fmt: skip

    # ------------------------------------------------------------------ live panel

    def _build(self) -> None:
        import bqplot as bq
        import ipywidgets as w

        metrics = self.metric_names()
        inputs = self.input_names()
        signals = self.signal_names()
        req_names = [r.name for r in self.requirements]
        self.verdict_html = w.HTML(self.verdict_table())
        self.requirement_picker = w.Dropdown(options=req_names or ["(none)"], description="requirement")
        first = self.requirements[0].metric if self.requirements else (metrics[0] if metrics else None)
        self.metric_picker = w.Dropdown(options=metrics, value=first if first in metrics else None,
                                        description="metric")  # fmt: skip
        start = self.strongest_input(first) if inputs and first in metrics else (inputs[0] if inputs else None)
        self.input_picker = w.Dropdown(options=inputs, value=start, description="input")
        self.signal_picker = w.Dropdown(options=signals, value=signals[0] if signals else None, description="signal")

        # distribution: histogram and ECDF
        hx, hy = bq.LinearScale(), bq.LinearScale(min=0.0)
        self.marks["hist"] = bq.Bars(x=np.zeros(1), y=np.zeros(1), scales={"x": hx, "y": hy}, colors=[PALETTE[0]],
                                     padding=0.0, opacities=[0.85])  # fmt: skip
        unit = bq.LinearScale(min=0.0, max=1.0)
        self.marks["hist_threshold"] = bq.Lines(x=np.zeros(2), y=np.array([0.0, 1.0]), scales={"x": hx, "y": unit},
                                                colors=[_FAIL], line_style="dashed", visible=False)  # fmt: skip
        self.hist_figure = bq.Figure(marks=[self.marks["hist"], self.marks["hist_threshold"]], title="Histogram",
                                     axes=[bq.Axis(scale=hx, label="value"),
                                           bq.Axis(scale=hy, label="trials", side="left")],
                                     fig_margin=dict(top=40, bottom=45, left=55, right=15),
                                     layout=w.Layout(width="420px", height="280px"))  # fmt: skip
        ex, ey = bq.LinearScale(), bq.LinearScale(min=0.0, max=1.0)
        self.marks["ecdf"] = bq.Lines(x=np.zeros(1), y=np.zeros(1), scales={"x": ex, "y": ey}, colors=[PALETTE[0]],
                                      interpolation="step-after")  # fmt: skip
        self.marks["ecdf_threshold"] = bq.Lines(x=np.zeros(2), y=np.array([0.0, 1.0]), scales={"x": ex, "y": ey},
                                                colors=[_FAIL], line_style="dashed", visible=False)  # fmt: skip
        self.ecdf_figure = bq.Figure(marks=[self.marks["ecdf"], self.marks["ecdf_threshold"]], title="ECDF",
                                     axes=[bq.Axis(scale=ex, label="value"),
                                           bq.Axis(scale=ey, label="share of trials <= value", side="left")],
                                     fig_margin=dict(top=40, bottom=45, left=55, right=15),
                                     layout=w.Layout(width="420px", height="280px"))  # fmt: skip

        # bands over time
        tx, ty = bq.LinearScale(), bq.LinearScale()
        self.marks["band"] = bq.Lines(x=np.zeros(2), y=np.zeros((2, 2)), scales={"x": tx, "y": ty}, fill="between",
                                      colors=[PALETTE[0], PALETTE[0]], fill_colors=[PALETTE[0]],
                                      fill_opacities=[0.2], stroke_width=0.5,
                                      labels=[f"{BAND_PERCENTILES[0]:g} %", f"{BAND_PERCENTILES[2]:g} %"])  # fmt: skip
        self.marks["samples"] = bq.Lines(x=np.zeros(2), y=np.zeros((1, 2)), scales={"x": tx, "y": ty},
                                         colors=list(PALETTE[1:]), stroke_width=0.8, opacities=[0.7])  # fmt: skip
        self.marks["median"] = bq.Lines(x=np.zeros(1), y=np.zeros(1), scales={"x": tx, "y": ty}, colors=["#0d4557"],
                                        stroke_width=2.0, labels=["median"])  # fmt: skip
        self.band_figure = bq.Figure(marks=[self.marks["band"], self.marks["samples"], self.marks["median"]],
                                     title="Across trials over time",
                                     axes=[bq.Axis(scale=tx, label="time [s]"),
                                           bq.Axis(scale=ty, label="value", side="left")],
                                     fig_margin=dict(top=40, bottom=45, left=60, right=15),
                                     layout=w.Layout(width="640px", height="300px"))  # fmt: skip

        # metric against input, coloured by the requirement; click opens a trial
        sx, sy = bq.LinearScale(), bq.LinearScale()
        cs = bq.ColorScale(colors=[_FAIL, _PASS], min=0.0, max=1.0)
        self.marks["scatter"] = bq.Scatter(x=np.zeros(1), y=np.zeros(1), color=np.zeros(1),
                                           scales={"x": sx, "y": sy, "color": cs}, default_size=20,
                                           opacities=[0.8], stroke="#ffffff")  # fmt: skip
        self.marks["scatter"].on_element_click(self._on_scatter_click)
        self.marks["scatter_threshold"] = bq.Lines(x=np.zeros(2), y=np.zeros(2), scales={"x": sx, "y": sy},
                                                   colors=[_FAIL], line_style="dashed", visible=False)  # fmt: skip
        self.scatter_figure = bq.Figure(marks=[self.marks["scatter"], self.marks["scatter_threshold"]],
                                        title="Metric against a drawn input (green: met, red: not met)",
                                        axes=[bq.Axis(scale=sx, label="input"),
                                              bq.Axis(scale=sy, label="metric", side="left")],
                                        fig_margin=dict(top=40, bottom=45, left=60, right=15),
                                        layout=w.Layout(width="520px", height="340px"))  # fmt: skip

        # sensitivity ranking
        rx, ry = bq.OrdinalScale(), bq.LinearScale(min=-1.0, max=1.0)
        self.marks["sensitivity"] = bq.Bars(x=["-"], y=np.zeros(1), scales={"x": rx, "y": ry},
                                            orientation="horizontal", colors=[PALETTE[1]], padding=0.2)  # fmt: skip
        self.sensitivity_figure = bq.Figure(marks=[self.marks["sensitivity"]], title="Drawn inputs by Spearman rho",
                                            axes=[bq.Axis(scale=rx, side="left"),
                                                  bq.Axis(scale=ry, label="rank correlation rho with the metric")],
                                            fig_margin=dict(top=40, bottom=45, left=190, right=15),
                                            layout=w.Layout(width="520px", height="340px"))  # fmt: skip
        self.sensitivity_note = w.HTML("")
        self.operability_html = w.HTML(self._operability_html())
        self.player_box = w.VBox([w.HTML("<i>Click a point of the scatter to replay that trial here.</i>")])

        for picker in (self.requirement_picker, self.metric_picker):
            picker.observe(lambda _c: (self._update_distribution(), self._update_scatter()), names="value")
        self.requirement_picker.observe(lambda _c: self._update_operability(), names="value")
        self.input_picker.observe(lambda _c: self._update_scatter(), names="value")
        self.signal_picker.observe(lambda _c: self._update_band(), names="value")

        def head(text: str) -> Any:
            return w.HTML(f"<h4 style='margin:0.8em 0 0.2em 0'>{escape(text)}</h4>")

        verdicts_head = "Requirement verdicts" + (" (provisional: partial campaign)" if self.partial else "")
        sections = [head(verdicts_head), self.verdict_html,
                    w.HBox([self.requirement_picker, self.metric_picker, self.input_picker])]  # fmt: skip
        if metrics:
            sections += [head("Per-trial metric"), w.HBox([self.hist_figure, self.ecdf_figure])]
        if signals:
            sections += [head("Over time"), self.signal_picker, self.band_figure]
        if metrics and inputs:
            sections += [head("Inputs and drivers"), w.HBox([self.scatter_figure, self.sensitivity_figure]),
                         self.sensitivity_note]  # fmt: skip
        sections += [head("Operability"), self.operability_html, head("Trial"), self.player_box]
        self.body.children = sections
        self._update_distribution()
        self._update_band()
        self._update_scatter()

    def _threshold(self, column: str | None) -> Requirement | None:
        req = self.requirement(self.requirement_picker.value)
        return req if req is not None and req.metric == column else None

    def _update_distribution(self) -> None:
        col = self.metric_picker.value
        if col is None:
            return
        v = self._values(col)
        counts, edges, _, _ = histogram_counts(v)
        x, f = ecdf(v)
        req = self._threshold(col)
        with self.marks["hist"].hold_sync(), self.marks["ecdf"].hold_sync():
            self.marks["hist"].x = 0.5 * (edges[:-1] + edges[1:])
            self.marks["hist"].y = counts.astype(float)
            self.marks["ecdf"].x, self.marks["ecdf"].y = x, f
        for key in ("hist_threshold", "ecdf_threshold"):
            m = self.marks[key]
            with m.hold_sync():
                m.visible = req is not None
                if req is not None:
                    m.x = np.array([req.threshold, req.threshold])
        self.hist_figure.axes[0].label = col
        self.ecdf_figure.axes[0].label = col

    def _update_band(self) -> None:
        sig = self.signal_picker.value
        if sig is None:
            return
        b = self.band(sig)
        with self.marks["band"].hold_sync(), self.marks["median"].hold_sync(), self.marks["samples"].hold_sync():
            self.marks["band"].x = b.time_s
            self.marks["band"].y = np.vstack([b.low, b.high])
            self.marks["median"].x, self.marks["median"].y = b.time_s, b.median
            self.marks["samples"].x = b.time_s
            self.marks["samples"].y = b.samples if b.samples.size else np.full((1, b.time_s.size), np.nan)
            self.marks["samples"].labels = [f"trial {t}" for t in b.sample_trials]
        unit = self.timeseries[sig].attrs.get("units", "")
        self.band_figure.axes[1].label = f"{sig} [{unit}]" if unit else sig
        self.band_figure.title = (f"{sig}: {BAND_PERCENTILES[0]:g}-{BAND_PERCENTILES[2]:g} % band and median across "
                                  f"{len(self.metrics)} trials; {len(b.sample_trials)} sample trials")  # fmt: skip

    def _update_scatter(self) -> None:
        xcol, ycol = self.input_picker.value, self.metric_picker.value
        if xcol is None or ycol is None:
            return
        x, y = self._values(xcol), self._values(ycol)
        req = self.requirement(self.requirement_picker.value)
        met = self.met(req)
        keep = np.isfinite(x) & np.isfinite(y)
        self._scatter_trials = self.trials[keep]
        m = self.marks["scatter"]
        with m.hold_sync():
            m.x, m.y = x[keep], y[keep]
            m.color = (met[keep] if met is not None else np.ones(int(keep.sum()), dtype=bool)).astype(float)
        t = self._threshold(ycol)
        line = self.marks["scatter_threshold"]
        show = t is not None and bool(keep.any())
        with line.hold_sync():
            line.visible = show
            if show:
                line.x = np.array([np.min(x[keep]), np.max(x[keep])])
                line.y = np.array([t.threshold, t.threshold])
        self.scatter_figure.axes[0].label = xcol[len("param.") :]
        self.scatter_figure.axes[1].label = ycol
        self._update_sensitivity(ycol)

    def sensitivity(self, metric: str) -> pd.DataFrame:
        """The drawn inputs ranked by Spearman rho with ``metric``.

        See :func:`~wavebench.analysis.sensitivity.rank_sensitivity`.
        """
        from ..analysis.sensitivity import rank_sensitivity

        return rank_sensitivity(self.metrics, metrics=[metric], parameters=self.input_names())

    def strongest_input(self, metric: str) -> str:
        """The drawn input with the largest |Spearman rho| with ``metric`` (the first input when none is defined)."""
        table = self.sensitivity(metric)
        return str(table["parameter"].iloc[0]) if len(table) else self.input_names()[0]

    def _update_sensitivity(self, metric: str) -> None:
        table = self.sensitivity(metric)
        rho = table["rho"].to_numpy(dtype=float)
        labels = [str(p)[len("param.") :] for p in table["parameter"]]
        order = np.arange(len(labels))[::-1]  # strongest at the top
        m = self.marks["sensitivity"]
        with m.hold_sync():
            m.x = [labels[i] for i in order]
            m.y = np.nan_to_num(rho[order], nan=0.0)
            m.colors = [PALETTE[1] if r > 0 else PALETTE[0] for r in np.nan_to_num(rho[order])]
        self.sensitivity_figure.title = f"Drawn inputs by Spearman rho with {metric}"
        n_undef = int(np.count_nonzero(~np.isfinite(rho)))
        self.sensitivity_note.value = (
            "<span style='color:#555'>Spearman rank correlation over the trials with both values "
            "(scipy.stats.spearmanr); a screening measure for monotonic effects."
            + (f" {n_undef} undefined (drawn as 0)." if n_undef else "")
            + "</span>"
        )

    def _operability_figures(self, req: Requirement) -> str:
        """The operability chart of :mod:`wavebench.report.study` for one requirement ("" when there is none).

        See :func:`~wavebench.report.study.operability_of`: share meeting the
        requirement per relative wave heading (against the spec's route) and Hs.
        """
        from ..report.study import operability_of, operability_polar_chart, route_course

        if self.spec is None:
            return ""  # the course, and so the relative wave heading, comes from the spec's route
        op = operability_of(self.metrics, self.spec, req)
        if op is None:
            return ""
        need = math.isfinite(req.probability)
        svg = operability_polar_chart(op, min_count=MIN_CELL_TRIALS, title=f"{req.name}: share meeting {req.text()}",
                                      required=req.probability if need else None)  # fmt: skip
        course = route_course(self.spec.mission.waypoints())
        return (f"<div>{svg}<p style='color:#555;max-width:40em'>Relative wave heading against "
                f"{escape(course.text())}.</p></div>")  # fmt: skip

    def _operability_html(self) -> str:
        req = self.requirement(self.requirement_picker.value)
        svg = self._operability_figures(req) if req is not None else ""
        if not svg:
            return ("<p style='color:#555'>No operability chart: it needs a requirement, the spec's route and trials "
                    f"that drew <code>{escape(DIRECTION_COLUMN)}</code> (and <code>{escape(HS_COLUMN)}</code>, unless "
                    "Hs is fixed).</p>")  # fmt: skip
        return svg

    def _update_operability(self) -> None:
        self.operability_html.value = self._operability_html()

    # ------------------------------------------------------------------ opening a trial

    def _on_scatter_click(self, _mark: Any, event: dict[str, Any]) -> None:
        data = event.get("data") or {}
        index = data.get("index")
        if index is None:
            return
        self.open_trial(int(self._scatter_trials[int(index)]))

    def open_trial(self, trial: int) -> Any:
        """Replay ``trial`` in a :class:`~wavebench.ui.player.TrialPlayer` below the charts and return it.

        When the trial cannot be replayed with its time series (a chunk that
        failed as a whole), the panel says why and None is returned.
        """
        import ipywidgets as w

        from .player import TrialPlayer

        if self.spec is None:
            raise ParameterError("spec", None, "the campaign's spec, to replay a trial")
        try:
            if self.store_dir is not None:  # finished or not: the store's row beside the replay
                player = TrialPlayer.from_store(self.store_dir, int(trial))
            else:
                player = TrialPlayer(self.spec, int(trial))
        except ParameterError as exc:  # e.g. a trial whose whole chunk failed has no time series
            self.player = None
            self.player_box.children = [w.HTML(f"<p>Trial {int(trial)} cannot be replayed here: {escape(exc)}</p>")]
            return None
        self.player = player
        self.player_box.children = [player.widget]
        return player

    # ------------------------------------------------------------------ static twin

    def static_svgs(self) -> list[str]:
        """The charts as SVG: per requirement its metric's histogram and ECDF, the scatter and the drivers;
        the bands of each recorded signal offered; the operability matrices."""
        out: list[str] = []
        if self.metrics is None:
            return out
        shown = []
        reqs = self.requirements or [None]
        inputs = self.input_names()
        for req in reqs:
            col = req.metric if req is not None else (self.metric_picker.value if self.metric_names() else None)
            if col is None:
                continue
            v = self._values(col)
            t = [req.threshold] if req is not None else None
            label = f"{req.name}: {req.text()}" if req is not None else ""
            finite = bool(np.isfinite(v).any())
            if col not in shown:
                out.append(histogram_chart(v, title=col, xlabel=col, threshold=t, threshold_label=label))
                shown.append(col)
                if finite:
                    x, f = ecdf(v)
                    xs, fs = _steps(x, f)
                    series = [Series(xs, fs, "ECDF")]
                    if req is not None:
                        series.append(Series([req.threshold] * 2, [0.0, 1.0], req.text(), color=_FAIL, dashed=True))
                    out.append(line_chart(series, title=f"{col}: ECDF", xlabel=col, ylabel="share of trials <= value",
                                          width=540, height=300, ylim=(0.0, 1.05)))  # fmt: skip
            if inputs and finite:
                table = self.sensitivity(col)
                xcol = self.strongest_input(col)
                met = self.met(req)
                groups = ([(met, "met", _PASS), (~met, "not met", _FAIL)] if met is not None
                          else [(np.ones(len(v), dtype=bool), "trials", _NONE)])  # fmt: skip
                out.append(scatter_chart(self._values(xcol), v, groups, title=f"{col} against {xcol[len('param.'):]}",
                                         xlabel=xcol[len("param."):], ylabel=col,
                                         hline=req.threshold if req is not None else None,
                                         hline_label=req.text() if req is not None else ""))  # fmt: skip
                rho = table["rho"].to_numpy(dtype=float)
                muted = [not (math.isfinite(r) and p <= 0.05) for r, p in zip(rho, table["p_value"], strict=True)]
                out.append(signed_bar_chart([str(p)[len("param."):] for p in table["parameter"]], rho, muted=muted,
                                            title=f"Drawn inputs by Spearman rho with {col}",
                                            xlabel="Spearman rank correlation rho"))  # fmt: skip
            if req is not None:
                svg = self._operability_figures(req)
                if svg:
                    out.append(svg)
        for sig in self.signal_names()[:2]:
            b = self.band(sig)
            lines = [Series(b.time_s, b.samples[k], f"trial {t}", color=PALETTE[1 + k % (len(PALETTE) - 1)],
                            width=0.8, opacity=0.7) for k, t in enumerate(b.sample_trials)]  # fmt: skip
            lines.append(Series(b.time_s, b.median, "median", color="#0d4557", width=1.8))
            unit = self.timeseries[sig].attrs.get("units", "")
            out.append(band_chart(b.time_s, [(b.low, b.high, f"{BAND_PERCENTILES[0]:g}–{BAND_PERCENTILES[2]:g} %")],
                                  lines, title=f"{sig} across {len(self.metrics)} trials", xlabel="time [s]",
                                  ylabel=f"{sig} [{unit}]" if unit else sig, width=640))  # fmt: skip
        return out

    def static_html(self) -> str:
        """The verdict table and the charts as SVG (no script)."""
        if self.metrics is None:
            return f"<p>Campaign running: {self.progress.value} of {self.progress.max} trials.</p>"
        src = f" from <code>{escape(self.store_dir)}</code>" if self.store_dir is not None else ""
        head = f"<p>{len(self.metrics)} trials{src}.</p>"
        if self.partial:
            head = f"<p><b>{escape(self.partial_note())}</b>{src}.</p>"
        verdicts_head = "Requirement verdicts" + (" (provisional: partial campaign)" if self.partial else "")
        figs = "".join(f"<figure style='margin:0'>{s}</figure>" for s in self.static_svgs())
        return (f"{head}<h5>{verdicts_head}</h5>{self.verdict_table()}"
                f"<div style='display:flex;flex-wrap:wrap;gap:8px'>{figs}</div>")  # fmt: skip
