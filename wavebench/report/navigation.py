"""Navigation sections of the campaign HTML report.

When a campaign ran a navigator (an estimator instead of truth navigation),
its store's time series hold finite values of the navigation signals
of :data:`wavebench.trial.recorder.SIGNALS` (``nav_err_m``, ``nees``,
``nis``, ``nav_north_m``/``nav_east_m``, ``fix_ok``). This module turns them
into report sections:

- *Navigation error*: 5/50/95 % bands of ``nav_err_m`` over time with the
  scheduled GNSS outage windows of the spec shaded; per window, the error
  across trials at the window's end and its growth over the window; the
  medians and 95th percentiles of the per-trial navigation metrics.
- *Filter consistency*: the ensemble-averaged NEES (and NIS) against the
  two-sided 95 % chi-square region for the number of runs averaged at each
  time, the share of time inside it, and the time average against its own
  region, worded as consistent / optimistic / pessimistic.
- *Navigation solution*: true and estimated tracks of a few trials.
- *GNSS availability*: the share of running trials whose latest fix was
  accepted, over time, with the outage windows shaded.

A truth-navigation campaign records NaN for all of these signals, and
:func:`navigation_sections` returns no section for it.

Every text taken from the store (sensor names, numbers) is HTML-escaped.

References
----------
.. [1] Y. Bar-Shalom, X. R. Li and T. Kirubarajan, Estimation with
   Applications to Tracking and Navigation, Wiley (2001), ch. 5.4: NEES and
   NIS tests, N-run averages and their chi-square regions.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
import pandas as pd
from numpy.typing import ArrayLike, NDArray

from ..core.errors import ParameterError
from ..navigation.consistency import ensemble_averaged_nees, nees_bounds
from ..trial.recorder import NEES_DOF, NIS_DOF
from .charts import band_chart
from .html import cell_number, escape
from .svg import PALETTE, Series, line_chart

__all__ = [
    "NAV_METRICS",
    "NAV_SIGNALS",
    "Consistency",
    "OutageError",
    "consistency_over_time",
    "gnss_outages",
    "has_navigation",
    "navigation_sections",
    "outage_end_errors",
]

FloatArray = NDArray[np.float64]

#: Per-trial navigation metrics drawn as histograms when they hold finite values: (column, meaning, unit).
NAV_METRICS: tuple[tuple[str, str, str], ...] = (
    ("nav_err_rms_m", "RMS horizontal navigation error per trial", "m"),
    ("nav_err_p95_m", "95th percentile of the horizontal navigation error per trial", "m"),
    ("nav_err_max_m", "largest horizontal navigation error per trial", "m"),
    ("nav_err_outage_end_m", "largest navigation error at the end of a scheduled GNSS outage, per trial", "m"),
    ("nees_mean", f"time-averaged NEES per trial ({NEES_DOF} dof)", ""),
    ("nis_mean", f"time-averaged NIS per trial ({NIS_DOF} dof)", ""),
)

#: Recorded signals whose finite values mean a navigator ran (NaN with truth navigation).
NAV_SIGNALS: tuple[str, ...] = ("nav_err_m", "nav_north_m", "nav_east_m", "nees", "nis")

#: Most trials drawn in the navigation-solution panel.
MAX_NAV_TRACKS = 10

#: Confidence of the chi-square regions drawn.
CONFIDENCE = 0.95

_VERDICT_TEXT = {
    "consistent": "consistent",
    "optimistic": "optimistic (error larger than the filter believes)",
    "pessimistic": "pessimistic (error smaller than the filter believes)",
    "no data": "no data",
}
_VERDICT_CLASS = {"consistent": "v-pass", "optimistic": "v-fail", "pessimistic": "v-undecided"}

_TRACK_COLORS = (*PALETTE, "#2a9d8f", "#e76f51", "#264653", "#9c6644")

_OUTAGE_LABEL = "scheduled GNSS outage"




def _cell(v: Any, digits: int = 4) -> str:
    """A numeric table cell carrying the exact value in ``data-value``."""
    try:
        f = float(v)
    except (TypeError, ValueError):
        return f"<td class='num'>{escape(v)}</td>"
    return f"<td class='num' data-value=\"{f!r}\">{cell_number(f, digits)}</td>"


def _pair(lo: float, hi: float) -> str:
    """A table cell holding a region ``lo – hi``, each bound's exact value in ``data-value``."""
    return (
        f"<td class='num'><span data-value=\"{float(lo)!r}\">{cell_number(lo)}</span> – "
        f'<span data-value="{float(hi)!r}">{cell_number(hi)}</span></td>'
    )


def _verdict(verdict: str) -> str:
    """The consistency verdict as a coloured word, with what it means."""
    word, _, meaning = _VERDICT_TEXT.get(verdict, verdict).partition(" (")
    text = f'<span class="verdict {_VERDICT_CLASS.get(verdict, "v-other")}">{escape(word)}</span>'
    return text + (f" <span class='note'>{escape(meaning.rstrip(')'))}</span>" if meaning else "")


def _figure(svg: str, caption: str) -> str:
    return f"<figure>{svg}<figcaption>{caption}</figcaption></figure>"


# ---------------------------------------------------------------------------
# numbers
# ---------------------------------------------------------------------------


def _signal(ds: Any, name: str) -> FloatArray | None:
    """A recorded signal as a float (trial, time) array, or None when absent or all NaN."""
    if ds is None or name not in ds:
        return None
    v = np.asarray(ds[name].transpose("trial", "time").values, dtype=float)
    return v if np.isfinite(v).any() else None


def has_navigation(ds: Any) -> bool:
    """Whether a store's time series holds finite navigation signals.

    Parameters
    ----------
    ds : xarray.Dataset or None
        The store's time series (``timeseries.zarr``).

    Returns
    -------
    bool
        True when any of :data:`NAV_SIGNALS` has a finite value (a navigator
        ran); False for truth navigation or without a time series.
    """
    return any(_signal(ds, name) is not None for name in NAV_SIGNALS)


def gnss_outages(spec: Any) -> list[tuple[str, float, float]]:
    """Scheduled outage windows of the spec's GNSS sensors.

    Parameters
    ----------
    spec : Spec or None
        A loaded spec; its ``sensors`` is a tuple of ``(name, SensorSpec)``.

    Returns
    -------
    list of (str, float, float)
        ``(sensor name, start_s, end_s)``, sorted by start time; empty
        without a spec or without GNSS outage windows.

    Examples
    --------
    >>> gnss_outages(None)
    []
    """
    out = []
    for name, sensor in getattr(spec, "sensors", ()) or ():
        if getattr(sensor, "kind", None) != "gnss":
            continue
        for window in getattr(sensor, "outages_s", ()) or ():
            out.append((str(name), float(window[0]), float(window[1])))
    return sorted(out, key=lambda w: (w[1], w[2], w[0]))


@dataclass(frozen=True)
class OutageError:
    """Navigation error across trials at the end of one outage window.

    Attributes
    ----------
    sensor : str
        The GNSS sensor's name in the spec.
    start_s, end_s : float
        The scheduled window [s].
    sample_start_s, sample_end_s : float
        Recorded times nearest the window's start and end [s] (NaN when
        the window lies outside the record).
    n_trials : int
        Trials with a finite error at ``sample_end_s``.
    median_m, p95_m : float
        Median and 95th percentile of the error at ``sample_end_s`` across
        those trials [m].
    growth_median_mps : float
        Median across trials of ``(e(sample_end) - e(sample_start)) /
        (sample_end_s - sample_start_s)`` [m/s].
    """

    sensor: str
    start_s: float
    end_s: float
    sample_start_s: float
    sample_end_s: float
    n_trials: int
    median_m: float
    p95_m: float
    growth_median_mps: float


def _nearest(t: FloatArray, x: float) -> int | None:
    """Index of the recorded time nearest ``x``; None when ``x`` is more than half a step outside the record."""
    if t.size == 0:
        return None
    step = float(np.median(np.diff(t))) if t.size > 1 else 0.0
    if x < t[0] - 0.5 * step - 1e-9 or x > t[-1] + 0.5 * step + 1e-9:
        return None
    return int(np.argmin(np.abs(t - x)))


def _last_before(t: FloatArray, x: float) -> int | None:
    """Index of the last recorded time strictly before ``x`` (inside an outage window that ends at ``x``)."""
    idx = int(np.searchsorted(t, x, side="left")) - 1
    return idx if idx >= 0 else None


def outage_end_errors(
    time_s: ArrayLike, err_m: ArrayLike, windows: Sequence[tuple[str, float, float]]
) -> list[OutageError]:
    """The navigation error at the end of each outage window, across trials.

    Parameters
    ----------
    time_s : array_like of shape (n_times,)
        Recorded times [s], increasing.
    err_m : array_like of shape (n_trials, n_times)
        Horizontal navigation error [m]; NaN after a trial ended.
    windows : sequence of (str, float, float)
        ``(sensor name, start_s, end_s)`` as from :func:`gnss_outages`.

    Returns
    -------
    list of OutageError
        One per window, in the order given.

    Notes
    -----
    The error at a window's end is read at the last recorded sample before
    the end time, the last one inside the window (the sample at the end
    already has the first fix fused); the growth rate uses the samples
    nearest the start and that one.

    Examples
    --------
    >>> err = [[1.0, 1.0, 3.0, 5.0, 1.0], [1.0, 2.0, 5.0, 7.0, 2.0]]
    >>> rows = outage_end_errors([0.0, 1.0, 2.0, 3.0, 4.0], err, [("gps", 1.0, 4.0)])
    >>> rows[0].median_m, rows[0].growth_median_mps
    (6.0, 2.25)
    """
    t = np.asarray(time_s, dtype=float)
    e = np.asarray(err_m, dtype=float)
    if e.ndim != 2 or e.shape[1] != t.size:
        raise ParameterError("err_m", e.shape, f"an array of shape (n_trials, {t.size})")
    rows = []
    for sensor, start, end in windows:
        i0 = _nearest(t, float(start))
        i1 = _last_before(t, float(end)) if _nearest(t, float(end)) is not None else None
        if i1 is None or t[i1] < float(start):
            rows.append(OutageError(str(sensor), float(start), float(end), math.nan, math.nan, 0, math.nan,
                                    math.nan, math.nan))  # fmt: skip
            continue
        at_end = e[:, i1]
        n = int(np.count_nonzero(np.isfinite(at_end)))
        med, p95 = (float(x) for x in _nanpct(at_end, [50.0, 95.0]))
        growth = math.nan
        if i0 is not None and i1 > i0:
            rate = (e[:, i1] - e[:, i0]) / (t[i1] - t[i0])
            growth = float(_nanpct(rate, [50.0])[0])
        rows.append(OutageError(str(sensor), float(start), float(end), float(t[i0]) if i0 is not None else math.nan,
                                float(t[i1]), n, med, p95, growth))  # fmt: skip
    return rows


def _nanpct(values: ArrayLike, q: Sequence[float]) -> FloatArray:
    from .campaign import nan_percentiles

    return np.asarray(nan_percentiles(values, list(q)), dtype=float)


@dataclass(frozen=True)
class Consistency:
    """Ensemble-averaged NEES (or NIS) over time against its chi-square region.

    Attributes
    ----------
    dof : int
        Degrees of freedom of one value.
    average : ndarray of shape (n_times,)
        Mean over the trials with a finite value at each time (NaN where none).
    n_runs : ndarray of shape (n_times,), int
        Trials averaged at each time.
    low, high : ndarray of shape (n_times,)
        Two-sided region of the average for ``n_runs`` runs (NaN where none).
    fraction_inside : float
        Share of the times with a value at which ``low <= average <= high``.
    time_average : float
        Mean of all finite samples (trials and times).
    n_samples : int
        Number of those samples.
    time_low, time_high : float
        Region of ``time_average`` for ``n_samples`` independent values.
    verdict : str
        ``"consistent"`` (time average inside its region), ``"optimistic"``
        (above: the error is larger than the filter's covariance says),
        ``"pessimistic"`` (below) or ``"no data"``.
    """

    dof: int
    average: FloatArray
    n_runs: NDArray[np.int64]
    low: FloatArray
    high: FloatArray
    fraction_inside: float
    time_average: float
    n_samples: int
    time_low: float
    time_high: float
    verdict: str


def consistency_over_time(values: ArrayLike, dof: int, confidence: float = CONFIDENCE) -> Consistency:
    """Ensemble-averaged NEES/NIS over time with its chi-square regions.

    Parameters
    ----------
    values : array_like of shape (n_trials, n_times)
        NEES (or NIS) per trial and recorded time; NaN where a trial has no
        value (ended, or no fix yet).
    dof : int
        Degrees of freedom of one value (``NEES_DOF``, ``NIS_DOF``).
    confidence : float
        Probability inside the two-sided region (0.95 by default).

    Returns
    -------
    Consistency

    Notes
    -----
    With ``N`` independent runs, ``N * ANEES ~ chi2(N * dof)`` for a
    consistent filter, so the region of ``ANEES`` is
    ``[chi2.ppf((1 - c)/2, N dof) / N, chi2.ppf((1 + c)/2, N dof) / N]``
    (:func:`~wavebench.navigation.consistency.nees_bounds`), with ``N`` the
    number of finite values at that time. The time average pools the
    ``N K`` finite samples and is compared with the region for ``N K``
    values; the samples of one run are correlated in time, so that region
    is narrower than the true one (optimistic).

    References
    ----------
    Bar-Shalom, Li and Kirubarajan (2001), ch. 5.4.

    Examples
    --------
    >>> c = consistency_over_time([[4.0, 6.0], [6.0, np.nan]], 5)
    >>> c.average.tolist(), c.n_runs.tolist(), c.time_average, c.verdict
    ([5.0, 6.0], [2, 1], 5.333333333333333, 'consistent')
    """
    v = np.asarray(values, dtype=float)
    if v.ndim != 2:
        raise ParameterError("values", v.shape, "an array of shape (n_trials, n_times)")
    finite = np.isfinite(v)
    n_runs = np.count_nonzero(finite, axis=0).astype(np.int64)
    average = ensemble_averaged_nees(v) if v.size else np.full(v.shape[1], np.nan)
    low = np.full(n_runs.shape, np.nan)
    high = np.full(n_runs.shape, np.nan)
    for n in np.unique(n_runs[n_runs > 0]):
        lo, hi = nees_bounds(int(dof), int(n), confidence)
        low[n_runs == n], high[n_runs == n] = lo, hi
    has = n_runs > 0
    inside = (average >= low) & (average <= high)
    fraction = float(np.count_nonzero(inside[has]) / np.count_nonzero(has)) if has.any() else math.nan
    n_samples = int(np.count_nonzero(finite))
    if n_samples:
        time_average = float(np.sum(v[finite]) / n_samples)
        time_low, time_high = nees_bounds(int(dof), n_samples, confidence)
        if time_average > time_high:
            verdict = "optimistic"
        elif time_average < time_low:
            verdict = "pessimistic"
        else:
            verdict = "consistent"
    else:
        time_average = time_low = time_high = math.nan
        verdict = "no data"
    return Consistency(int(dof), average, n_runs, low, high, fraction, time_average, n_samples, time_low,
                       time_high, verdict)  # fmt: skip


# ---------------------------------------------------------------------------
# sections
# ---------------------------------------------------------------------------


def _time(ds: Any) -> FloatArray:
    return np.asarray(ds["time"].values, dtype=float)


def _windows_note(windows: Sequence[tuple[str, float, float]], spec: Any) -> str:
    if spec is None:
        return " No outage windows shown: spec.toml did not load."
    if not windows:
        return " The spec schedules no GNSS outage."
    return f" Grey: {len(windows)} scheduled GNSS outage window{'s' if len(windows) != 1 else ''}."


def _error_section(ds: Any, metrics: pd.DataFrame, windows: list[tuple[str, float, float]], spec: Any) -> str:
    head = '<section id="nav-error"><h2>Navigation error</h2>'
    err = _signal(ds, "nav_err_m")
    if err is None:
        return head + "<p>The time series hold no finite nav_err_m: no error bands.</p></section>"
    t = _time(ds)
    p5, p50, p95 = _nanpct(err, [5.0, 50.0, 95.0])
    svg = band_chart(
        t,
        [(p5, p95, "5–95 %")],
        [Series(t, p50, "median", color="#0d4557", width=1.8)],
        title="Navigation error across trials",
        xlabel="time since start [s]",
        ylabel="nav_err_m [m]",
        shade=[(a, b) for _, a, b in windows],
        shade_label=_OUTAGE_LABEL if windows else "",
    )
    n = err.shape[0]
    alive = np.count_nonzero(np.isfinite(err), axis=0)
    cap = (
        f"Horizontal position error of the navigator's estimate (estimate minus truth), across the {n} trials "
        "at each recorded time: the band spans the 5th to 95th percentile, the line is the median (trials that "
        "have ended are left out)."
    )
    if alive.size and int(alive[-1]) < n:
        cap += f" At the end {int(alive[-1])} of {n} trials still have a value."
    cap += _windows_note(windows, spec)
    parts = [head, '<div class="figs">' + _figure(svg, escape(cap)) + "</div>"]
    if windows:
        rows = []
        for r in outage_end_errors(t, err, windows):
            rows.append(
                f"<tr class='outage-row'><td>{escape(r.sensor)}</td>"
                f"<td class='num'>{cell_number(r.start_s)}–{cell_number(r.end_s)}"
                f"</td><td class='num'>{cell_number(r.sample_end_s)}</td><td class='num'>{r.n_trials}</td>"
                + _cell(r.median_m)
                + _cell(r.p95_m)
                + _cell(r.growth_median_mps)
                + "</tr>"
            )
        parts.append(
            "<h3>Error at the end of each GNSS outage</h3><table><tr><th>sensor</th><th class='num'>window [s]</th>"
            "<th class='num'>sample used [s]</th><th class='num'>trials</th><th class='num'>median [m]</th>"
            "<th class='num'>95 % [m]</th><th class='num'>growth, median [m/s]</th></tr>" + "".join(rows) + "</table>"
            "<p class='note'>Error across trials at the last recorded time inside each window (before the first "
            "fix); growth: "
            "(error at the end − error at the start) / duration, per trial, median across trials. A window "
            "outside the record shows no value.</p>"
        )
    summary = []
    for col, meaning, unit in NAV_METRICS[:4]:
        if col not in metrics:
            continue
        vals = pd.to_numeric(metrics[col], errors="coerce").to_numpy(dtype=float)
        finite = vals[np.isfinite(vals)]
        if not finite.size:
            continue
        med, p95v = _nanpct(finite, [50.0, 95.0])
        summary.append(
            f"<tr class='nav-metric-row'><td><code>{escape(col)}</code></td><td>{escape(meaning)}</td>"
            f"<td class='num'>{finite.size}</td>" + _cell(med) + _cell(p95v) + f"<td>{escape(unit)}</td></tr>"
        )
    if summary:
        parts.append(
            "<h3>Per-trial navigation metrics</h3><table><tr><th>metric</th><th>meaning</th><th class='num'>trials"
            "</th><th class='num'>median</th><th class='num'>95 %</th><th>unit</th></tr>"
            + "".join(summary)
            + "</table><p class='note'>Across the trials with a finite value (metrics.parquet).</p>"
        )
    parts.append("</section>")
    return "\n".join(parts)


def _consistency_figure(t: FloatArray, c: Consistency, name: str) -> str:
    label = "ANEES" if name == "nees" else "ANIS"
    svg = band_chart(
        t,
        [(c.low, c.high, f"{100 * CONFIDENCE:g} % region for N runs", PALETTE[2])],
        [
            Series(t, c.average, f"{label} (mean over trials)", color="#0d4557", width=1.6),
            Series([t[0], t[-1]], [c.dof, c.dof], f"expected value {c.dof}", color="#777", width=1.0, dashed=True),
        ],
        title=f"Average {name.upper()} across trials",
        xlabel="time since start [s]",
        ylabel=f"{label} [-], {c.dof} dof",
    )
    n_max = int(c.n_runs.max()) if c.n_runs.size else 0
    cap = (
        f"{label}(t): mean {name.upper()} over the N trials with a value at each recorded time (N up to {n_max}), "
        f"against the two-sided {100 * CONFIDENCE:g} % chi-square region for N runs of a {c.dof}-dof "
        f"{name.upper()}: chi2.ppf(0.025, {c.dof}N)/N to chi2.ppf(0.975, {c.dof}N)/N (Bar-Shalom, Li and "
        f"Kirubarajan 2001, ch. 5.4); the region follows N as trials end. Inside "
        f"{cell_number(100 * c.fraction_inside, 3)} % of the time."
    )
    if name == "nis":
        cap += " NIS of the latest GNSS fix, so repeated between fixes."
    return _figure(svg, escape(cap))


def _consistency_section(ds: Any) -> str:
    t = _time(ds)
    results = []
    for name, dof in (("nees", NEES_DOF), ("nis", NIS_DOF)):
        v = _signal(ds, name)
        if v is not None:
            results.append((name, consistency_over_time(v, dof)))
    if not results:
        return ""
    figs, rows = [], []
    for name, c in results:
        figs.append(_consistency_figure(t, c, name))
        full = int(c.n_runs.max())
        lo_full, hi_full = nees_bounds(c.dof, full, CONFIDENCE)
        rows.append(
            f"<tr class='consistency-row' data-signal='{name}' data-verdict='{c.verdict}'><td>{name.upper()}</td>"
            f"<td class='num'>{c.dof}</td><td class='num'>{full}</td>" + _pair(lo_full, hi_full)
            + _cell(100.0 * c.fraction_inside, 3) + _cell(c.time_average) + f"<td class='num'>{c.n_samples}</td>"
            + _pair(c.time_low, c.time_high) + f"<td>{_verdict(c.verdict)}</td></tr>"
        )  # fmt: skip
    table = (
        "<table><tr><th>signal</th><th class='num'>dof n</th><th class='num'>runs N</th>"
        "<th class='num'>region, N runs</th><th class='num'>time inside [%]</th><th class='num'>time average</th>"
        "<th class='num'>samples N·K</th><th class='num'>region, N·K samples</th><th>filter</th></tr>"
        + "".join(rows)
        + "</table>"
    )
    note = (
        f"Two-sided {100 * CONFIDENCE:g} % chi-square regions (Bar-Shalom, Li and Kirubarajan 2001, ch. 5.4): "
        "for the average of N runs, N·ANEES ~ chi2(N n), so the region is chi2.ppf(0.025, N n)/N to "
        "chi2.ppf(0.975, N n)/N (shown for all N runs). The time average pools the N·K finite samples and is "
        "compared with chi2(N K n)/(N K); samples of one run are correlated in time, so this region treats them "
        "as independent and is optimistic (too narrow). Time average inside its region: consistent; above: "
        "optimistic (error larger than the filter believes); below: pessimistic (error smaller than the filter "
        "believes)."
    )
    return (
        '<section id="nav-consistency"><h2>Filter consistency</h2><div class="figs">' + "".join(figs) + "</div>"
        + table + f"<p class='note'>{escape(note)}</p></section>"
    )  # fmt: skip


def _nav_tracks_section(ds: Any) -> str:
    sig = {k: _signal(ds, k) for k in ("north_m", "east_m", "nav_north_m", "nav_east_m")}
    if any(v is None for v in sig.values()):
        return ""
    north, east, nn, ne = (sig[k] for k in ("north_m", "east_m", "nav_north_m", "nav_east_m"))
    both = (np.isfinite(north) & np.isfinite(east)).any(axis=1) & (np.isfinite(nn) & np.isfinite(ne)).any(axis=1)
    rows = np.flatnonzero(both)[:MAX_NAV_TRACKS]
    if rows.size == 0:
        return ""
    trials = np.asarray(ds["trial"].values)
    series = []
    for k, i in enumerate(rows):
        c = _TRACK_COLORS[k % len(_TRACK_COLORS)]
        series.append(Series(east[i], north[i], "true track (solid)" if k == 0 else "", color=c, width=1.2))
        series.append(Series(ne[i], nn[i], "estimate (dashed)" if k == 0 else "", color=c, width=1.2, dashed=True))
    width, height = 720, 480
    ys = np.concatenate([np.asarray(s.y)[np.isfinite(s.y)] for s in series])
    y0, y1 = float(ys.min()), float(ys.max())
    span = max(y1 - y0, 1.0)
    y0, y1 = y0 - 0.03 * span, y1 + 0.03 * span
    frac = min(38.0 / (height - 30 - 44), 0.5)  # room for the two legend lines in the top right corner
    svg = line_chart(series, title=f"Navigation solution of {rows.size} trials", xlabel="east [m]",
                     ylabel="north [m]", equal_axes=True, width=width, height=height,
                     ylim=(y0, y1 + frac / (1.0 - frac) * (y1 - y0)))  # fmt: skip
    shown = ", ".join(str(int(trials[i])) for i in rows)
    cap = (
        f"East against north, equal scales: true track (solid) and the navigator's estimate (dashed, same colour) "
        f"of trials {shown} ({rows.size} of {len(trials)})."
    )
    return (
        '<section id="nav-tracks"><h2>Navigation solution</h2><div class="figs">' + _figure(svg, escape(cap))
        + "</div></section>"
    )  # fmt: skip


def _availability_section(ds: Any, windows: list[tuple[str, float, float]], spec: Any) -> str:
    fix = _signal(ds, "fix_ok")
    if fix is None:
        return ""
    t = _time(ds)
    running = np.count_nonzero(np.isfinite(fix), axis=0)
    ok = np.count_nonzero(fix == 1.0, axis=0)
    share = np.full(t.shape, np.nan)
    np.divide(ok, running, out=share, where=running > 0)
    svg = band_chart(
        t,
        [],
        [Series(t, share, "share with fix_ok = 1", color=PALETTE[0], width=1.6)],
        title="GNSS availability across trials",
        xlabel="time since start [s]",
        ylabel="share of running trials",
        ylim=(-0.03, 1.03),
        shade=[(a, b) for _, a, b in windows],
        shade_label=_OUTAGE_LABEL if windows else "",
    )
    cap = (
        "Share of the trials still running whose latest GNSS fix was accepted by the navigator (fix_ok = 1), at "
        "each recorded time; lost fixes (scheduled outages, random dropouts) and fixes gated out count as 0."
        + _windows_note(windows, spec)
    )
    return (
        '<section id="nav-availability"><h2>GNSS availability</h2><div class="figs">' + _figure(svg, escape(cap))
        + "</div></section>"
    )  # fmt: skip


def navigation_sections(ds: Any, metrics: pd.DataFrame, spec: Any) -> list[tuple[str, str, str]]:
    """The navigation sections of a campaign report.

    Parameters
    ----------
    ds : xarray.Dataset or None
        The store's time series (dims trial, time).
    metrics : pandas.DataFrame
        The store's per-trial metrics.
    spec : Spec or None
        The loaded spec (for the GNSS outage windows); None when it did not
        load.

    Returns
    -------
    list of (str, str, str)
        ``(anchor id, link text, section HTML)`` in page order; empty when
        the time series holds no finite navigation signal (truth
        navigation).
    """
    if not has_navigation(ds):
        return []
    windows = gnss_outages(spec)
    out = [("nav-error", "Navigation error", _error_section(ds, metrics, windows, spec))]
    consistency = _consistency_section(ds)
    if consistency:
        out.append(("nav-consistency", "Filter consistency", consistency))
    tracks = _nav_tracks_section(ds)
    if tracks:
        out.append(("nav-tracks", "Navigation solution", tracks))
    availability = _availability_section(ds, windows, spec)
    if availability:
        out.append(("nav-availability", "GNSS availability", availability))
    return out
