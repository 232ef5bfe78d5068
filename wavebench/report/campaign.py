"""The self-contained HTML report of a campaign store.

:func:`campaign_report_html` reads a store folder written by
``wavebench run`` (``spec.toml``, ``manifest.json``, ``metrics.parquet``,
optionally ``timeseries.zarr`` and ``verdicts.json``) and returns one HTML page
with inline CSS and SVG: no script, no network resource. It shows the
caution, a run summary, the requirement verdicts with their confidence
intervals, how the trials ended and why some failed, histograms of the main
metrics, cross-track-error percentile bands over time, a tracks plot, the
navigation sections of :mod:`wavebench.report.navigation` when a navigator
ran, the ranges of the drawn parameters, and the study sections of
:mod:`wavebench.report.study` (what drives the results, operability, the
trials closest to failing). :func:`write_campaign_report`
writes it to ``DIR/report.html``.

An unfinished store (a campaign still running into the folder, or
interrupted: ``chunks/plan.json`` and no ``manifest.json``) gets an interim
report of the trials finished so far, read with
:func:`~wavebench.campaign.store.read_store` (``partial=True``): its title
says interim, a banner under the caution gives how many of the planned
trials had finished, and its verdicts, computed on those trials only, are
marked provisional.

Every text taken from the store is HTML-escaped.
"""

from __future__ import annotations

import html
import json
import math
import os
import re
from collections.abc import Sequence
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd
from numpy.typing import ArrayLike

from ..core.errors import ParameterError
from .charts import band_chart, histogram_chart
from .html import CAUTION
from .navigation import NAV_METRICS, navigation_sections
from .study import STUDY_CSS, study_sections
from .svg import PALETTE, Series, line_chart

__all__ = ["campaign_report_html", "nan_percentiles", "write_campaign_report"]

#: Metrics drawn as histograms, in order: (column, meaning, unit).
MAIN_METRICS: tuple[tuple[str, str, str], ...] = (
    ("xte_p95_m", "95th percentile of |cross-track error| per trial", "m"),
    ("xte_max_m", "largest |cross-track error| per trial", "m"),
    ("heading_err_rms_deg", "RMS heading error per trial", "deg"),
    ("energy_kj", "propulsion energy per trial", "kJ"),
    ("time_to_complete_s", "time to complete the route", "s"),
    ("min_depth_under_keel_m", "least depth under keel per trial", "m"),
)

#: Most tracks drawn in the tracks plot.
MAX_TRACKS = 30

_UNIT_SUFFIX = (("_mps", "m/s"), ("_dps", "deg/s"), ("_deg", "deg"), ("_kj", "kJ"), ("_m", "m"), ("_s", "s"),
                ("_w", "W"))  # fmt: skip

_VERDICT_CLASS = {"pass": "v-pass", "fail": "v-fail", "undecided": "v-undecided"}

_ENDED_COLOR = {"completed": PALETTE[0], "truncated": PALETTE[4], "failed": PALETTE[1]}

_CSS = """
*, *::before, *::after { box-sizing: border-box; }
body { font-family: system-ui, -apple-system, "Segoe UI", sans-serif; max-width: 72rem; margin: 1.5rem auto;
       padding: 0 1rem; color: #222; line-height: 1.45; }
h1 { font-size: 1.55rem; margin: 0 0 0.3rem 0; }
h2 { font-size: 1.15rem; margin-top: 2.2rem; border-bottom: 1px solid #ddd; padding-bottom: 0.2rem; }
h3 { font-size: 1rem; margin: 1.2rem 0 0.4rem 0; }
.caution { border: 1px solid #e4b7ab; border-left: 6px solid #c8553d; background: #fbf1ee;
           padding: 0.7rem 1rem; margin: 0.8rem 0 1rem 0; }
.caution strong { color: #8c2f1b; }
.sub { color: #555; margin: 0; }
.warn { border-left: 4px solid #d4a017; background: #fdf7e3; padding: 0.4rem 0.8rem; }
nav { font-size: 0.9rem; margin: 0.6rem 0; }
nav a { margin-right: 0.9rem; color: #1b6f8a; }
table { border-collapse: collapse; font-size: 0.9rem; margin: 0.4rem 0; max-width: 100%; }
table.wide { width: 100%; }
svg { max-width: 100%; height: auto; }
th, td { border-bottom: 1px solid #e4e4de; padding: 0.3rem 0.6rem; text-align: left; vertical-align: top; }
th { background: #f4f4ef; font-weight: 600; }
td.num, th.num { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
table.kv th { background: none; font-weight: normal; color: #555; }
code, .mono { font-family: ui-monospace, "DejaVu Sans Mono", monospace; font-size: 0.85rem; }
.verdict { font-weight: 700; padding: 0.1rem 0.55rem; border-radius: 0.25rem; white-space: nowrap; }
.v-pass { background: #2e7d32; color: #fff; }
.v-fail { background: #b3261e; color: #fff; }
.v-undecided { background: #f2c94c; color: #3d2e00; }
.v-other { background: #ddd; color: #222; }
.figs { display: flex; flex-wrap: wrap; gap: 1rem 1.5rem; }
figure { margin: 0; }
figcaption { font-size: 0.85rem; color: #555; max-width: 540px; }
pre { background: #f4f4ef; padding: 0.8rem; overflow-x: auto; font-size: 0.85rem; }
details { margin: 0.5rem 0; }
summary { cursor: pointer; color: #1b6f8a; }
.note { color: #555; font-size: 0.9rem; }
footer { margin-top: 3rem; font-size: 0.85rem; color: #666; border-top: 1px solid #ddd; padding-top: 0.6rem; }
"""


# ---------------------------------------------------------------------------
# numbers
# ---------------------------------------------------------------------------


def nan_percentiles(values: ArrayLike, q: float | Sequence[float], *, axis: int = 0) -> np.ndarray:
    """Percentiles along one axis, ignoring NaN, without warnings for all-NaN slices.

    Parameters
    ----------
    values : array_like of shape (n_trials, ...)
        Data; NaN marks a missing value (e.g. after a trial failed).
    q : float or sequence of float
        Percentiles in [0, 100].
    axis : int
        Axis reduced (the trial axis by default).

    Returns
    -------
    ndarray of shape (len(q), ...) or the reduced shape for a scalar q
        Percentiles; NaN where a slice holds no value.

    Notes
    -----
    Linear interpolation between order statistics (Hyndman and Fan's
    definition 7, the default of ``numpy.percentile``): with the ``n``
    non-NaN values sorted as ``v_0 <= ... <= v_{n-1}`` and
    ``h = (n - 1) q / 100``, the percentile is
    ``v_floor(h) + (h - floor(h)) (v_ceil(h) - v_floor(h))``.

    References
    ----------
    R. J. Hyndman and Y. Fan, "Sample quantiles in statistical packages",
    The American Statistician 50(4), 361-365, 1996.

    Examples
    --------
    >>> nan_percentiles([[1.0, np.nan], [3.0, np.nan], [np.nan, np.nan]], [50.0]).tolist()
    [[2.0, nan]]
    """
    a = np.moveaxis(np.asarray(values, dtype=float), axis, 0)
    qs = np.atleast_1d(np.asarray(q, dtype=float))
    if qs.ndim != 1 or not np.all((qs >= 0.0) & (qs <= 100.0)):
        raise ParameterError("q", q, "percentiles in [0, 100]")
    s = np.sort(a, axis=0)  # NaN sorts last
    n = np.count_nonzero(~np.isnan(a), axis=0)
    out = np.full((qs.size, *a.shape[1:]), np.nan)
    has = n > 0
    for k, qk in enumerate(qs):
        h = (np.maximum(n, 1) - 1) * (qk / 100.0)
        lo = np.floor(h).astype(np.intp)
        hi = np.ceil(h).astype(np.intp)
        v_lo = np.take_along_axis(s, lo[None, ...], axis=0)[0]
        v_hi = np.take_along_axis(s, hi[None, ...], axis=0)[0]
        frac = h - lo
        with np.errstate(invalid="ignore"):
            val = np.where(hi == lo, v_lo, v_lo + frac * (v_hi - v_lo))
        out[k] = np.where(has, val, np.nan)
    return out if np.ndim(q) else out[0]


def _num(v: Any, digits: int = 3) -> str:
    """A number for a table cell ("–" for missing)."""
    if v is None:
        return "–"
    try:
        f = float(v)
    except (TypeError, ValueError):
        return html.escape(str(v))
    if not math.isfinite(f):
        return "–" if math.isnan(f) else ("∞" if f > 0 else "−∞")
    if f != 0 and (abs(f) >= 1e6 or abs(f) < 1e-3):
        return f"{f:.{digits}g}"
    return f"{f:.{digits}g}" if abs(f) < 10**digits else f"{f:.0f}"


def _unit_of(name: str) -> str:
    for suffix, unit in _UNIT_SUFFIX:
        if name.endswith(suffix):
            return unit
    return ""


def _esc(x: Any) -> str:
    return html.escape(str(x))


# ---------------------------------------------------------------------------
# reading the store
# ---------------------------------------------------------------------------


def _require(store: Path, name: str) -> Path:
    path = store / name
    if not path.is_file():
        raise ParameterError("store_dir", str(store), f"a campaign store folder holding {name} (not found)")
    return path


def _read_manifest(store: Path) -> dict[str, Any]:
    path = _require(store, "manifest.json")
    try:
        manifest = json.loads(path.read_text(encoding="utf-8"))
    except json.JSONDecodeError as exc:
        raise ParameterError("manifest.json", str(path), f"a JSON object ({exc})") from exc
    if not isinstance(manifest, dict):
        raise ParameterError("manifest.json", type(manifest).__name__, "a JSON object")
    if manifest.get("format") != "wavebench-store":
        raise ParameterError("manifest.json format", manifest.get("format"), "'wavebench-store'")
    if manifest.get("format_version") not in (1, 2):
        raise ParameterError("manifest.json format_version", manifest.get("format_version"),
                             "1 or 2 (this wavebench reads store formats 1 and 2)")  # fmt: skip
    return manifest


def _read_verdicts(store: Path) -> list[dict[str, Any]]:
    path = store / "verdicts.json"
    if not path.is_file():
        return []
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
    except json.JSONDecodeError as exc:
        raise ParameterError("verdicts.json", str(path), f"a JSON list ({exc})") from exc
    if not isinstance(data, list) or not all(isinstance(v, dict) for v in data):
        raise ParameterError("verdicts.json", type(data).__name__, "a JSON list of objects")
    return data


def _read_spec(store: Path) -> tuple[str, Any, str]:
    """spec.toml text, the loaded spec (None if it does not validate) and a problem note."""
    path = store / "spec.toml"
    if not path.is_file():
        return "", None, "spec.toml is missing from the store."
    text = path.read_text(encoding="utf-8")
    from ..spec.io import load_spec  # the spec package is only needed here

    try:
        return text, load_spec(path), ""
    except ParameterError as exc:
        return text, None, f"spec.toml does not load with this wavebench: {exc}"


def _read_timeseries(store: Path) -> Any:
    from ..campaign.series import open_timeseries

    return open_timeseries(store)  # lazily: each section reads the signals it draws


# ---------------------------------------------------------------------------
# sections
# ---------------------------------------------------------------------------


def _kv_table(rows: Sequence[tuple[str, str]]) -> str:
    body = "".join(f"<tr><th>{_esc(k)}</th><td>{v}</td></tr>" for k, v in rows)
    return f'<table class="kv">{body}</table>'


def _wall_time(manifest: dict[str, Any]) -> str:
    w = manifest.get("wall_time_s")
    try:
        w = float(w)
    except (TypeError, ValueError):
        return "–"
    if not math.isfinite(w):
        return "–"
    text = f"{w:.1f} s"
    if w >= 60:
        text += f" ({int(w // 60)} min {w % 60:.0f} s)"
    n = manifest.get("trials")
    if isinstance(n, int) and n > 0:
        text += f"; {w / n:.3g} s per trial"
    return text


def _summary_section(store: Path, manifest: dict[str, Any], spec_text: str, spec: Any, spec_note: str, ds: Any) -> str:
    spec_line = _esc(manifest.get("spec_hash", "–"))
    if spec is not None:
        from ..spec.io import spec_hash

        h = spec_hash(spec)
        if manifest.get("spec_hash") not in (None, h):
            spec_line += f' <span class="warn">spec.toml hashes to {_esc(h)}, not to the manifest\'s hash</span>'
    scenario = _esc(manifest.get("scenario", "–"))
    if spec is not None and spec.scenario.name != manifest.get("scenario"):
        scenario += f" (spec.toml: {_esc(spec.scenario.name)})"
    rows = [
        ("scenario", scenario),
        ("craft", _esc(manifest.get("craft", "–"))),
        ("trials", _esc(manifest.get("trials", "–")) + f" (batches of {_esc(manifest.get('batch_size', '–'))})"),
        ("seed", f'<span class="mono">{_esc(manifest.get("seed", "–"))}</span>'),
        ("spec hash", f'<span class="mono">{spec_line}</span>'),
        ("created (UTC)", _esc(manifest.get("created_utc", "–"))),
        ("wall time", _esc(_wall_time(manifest))),
        ("wavebench", _esc(manifest.get("wavebench_version", "–"))),
        ("Python", _esc(manifest.get("python", "–"))),
        ("platform", _esc(manifest.get("platform", "–"))),
        ("store", f'<span class="mono">{_esc(store)}</span>'),
    ]
    if ds is not None and "decimation_s" in ds.attrs:
        rows.append(("time series", f"recorded every {_esc(ds.attrs['decimation_s'])} s"))
    parts = ['<section id="summary"><h2>Run summary</h2>', _kv_table(rows)]
    if spec_note:
        parts.append(f'<p class="warn">{_esc(spec_note)}</p>')
    packages = manifest.get("packages")
    if isinstance(packages, dict) and packages:
        body = "".join(f"<tr><td>{_esc(k)}</td><td>{_esc(v)}</td></tr>" for k, v in sorted(packages.items()))
        parts.append(
            f"<details><summary>package versions ({len(packages)})</summary>"
            f"<table><tr><th>package</th><th>version</th></tr>{body}</table></details>"
        )
    if spec_text:
        parts.append(f"<details><summary>spec.toml as run</summary><pre>{_esc(spec_text)}</pre></details>")
    parts.append("</section>")
    return "\n".join(parts)


def _verdict_word(v: Any) -> str:
    word = str(v)
    return f'<span class="verdict {_VERDICT_CLASS.get(word, "v-other")}">{_esc(word)}</span>'


def _pct(v: Any) -> str:
    try:
        return f"{100.0 * float(v):g} %"
    except (TypeError, ValueError):
        return "–"


def _verdicts_section(verdicts: list[dict[str, Any]], *, interim: bool = False) -> str:
    heading = "Requirement verdicts (provisional)" if interim else "Requirement verdicts"
    parts = [f'<section id="verdicts"><h2>{heading}</h2>']
    if not verdicts:
        parts.append("<p>No requirements in the spec: nothing to pass or fail.</p></section>")
        return "\n".join(parts)
    tally = {w: sum(1 for v in verdicts if v.get("verdict") == w) for w in ("pass", "fail", "undecided")}
    parts.append(
        f"<p>{len(verdicts)} requirement{'s' if len(verdicts) != 1 else ''}: "
        + ", ".join(f"{n} {_verdict_word(w)}" for w, n in tally.items())
        + "</p>"
    )
    head = (
        "<tr><th>requirement</th><th>condition</th><th class='num'>met / trials</th>"
        "<th class='num'>P(met) [Clopper–Pearson]</th>"
        "<th class='num'>quantile [bootstrap]</th><th>verdict</th></tr>"
    )
    rows = []
    for v in verdicts:
        unit = str(v.get("unit", ""))
        u = f" {_esc(unit)}" if unit else ""
        cond = (
            f"<code>{_esc(v.get('metric', '?'))}</code> {_esc(v.get('comparator', '?'))} "
            f"{_num(v.get('threshold'), 4)}{u}<br>with probability ≥ {_num(v.get('probability'), 4)}"
        )
        met = f"{_esc(v.get('n_met', '–'))} / {_esc(v.get('n_trials', '–'))}"
        if v.get("n_failed"):
            met += f"<br><span class='note'>{_esc(v.get('n_failed'))} without a value, counted as not met</span>"
        p = (
            f"{_num(v.get('p_hat'), 3)} [{_num(v.get('p_low'), 3)}, {_num(v.get('p_high'), 3)}]"
            f"<br><span class='note'>{_pct(v.get('confidence'))} confidence</span>"
        )
        qv = (
            f"q<sub>{_num(v.get('quantile_level'), 3)}</sub> = {_num(v.get('quantile_value'), 4)}{u}"
            f"<br>[{_num(v.get('quantile_low'), 4)}, {_num(v.get('quantile_high'), 4)}]{u}"
        )
        rows.append(
            f"<tr class='verdict-row'><td>{_esc(v.get('name', '?'))}</td><td>{cond}</td><td class='num'>{met}</td>"
            f"<td class='num'>{p}</td><td class='num'>{qv}</td><td>{_verdict_word(v.get('verdict', '?'))}</td></tr>"
        )
    parts.append(f"<table class='wide'>{head}{''.join(rows)}</table>")
    parts.append(
        "<p class='note'>P(met) is the share of trials meeting the requirement, with its two-sided "
        "Clopper–Pearson (exact binomial) interval at the stated confidence. The quantile column gives the "
        "metric's value at the stated probability level across trials, with a bootstrap percentile interval. "
        + (
            "Provisional: computed on the trials finished so far, not on the whole campaign.</p></section>"
            if interim
            else "Verdicts are as the run computed them (verdicts.json).</p></section>"
        )
    )
    return "\n".join(parts)


_NUMBER = re.compile(r"[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?")


def _reason_pattern(reason: str) -> str:
    """A failure reason with its numbers blanked, so similar failures group together."""
    return _NUMBER.sub("…", reason.strip())


def _flags(col: pd.Series) -> np.ndarray:
    """A bool column as a numpy mask (missing counts as False)."""
    return col.astype("boolean").fillna(False).to_numpy(dtype=bool)


def _outcomes_section(metrics: pd.DataFrame) -> str:
    n = len(metrics)
    ended = metrics["ended"].astype(str) if "ended" in metrics else pd.Series(["?"] * n)
    order = ["completed", "truncated", "failed"]
    kinds = order + sorted(set(ended) - set(order))
    rows = []
    for k in kinds:
        c = int((ended == k).sum())
        if c or k in order:
            share = f"{100.0 * c / n:.1f} %" if n else "–"
            rows.append(f"<tr><td>{_esc(k)}</td><td class='num'>{c}</td><td class='num'>{share}</td></tr>")
    parts = [
        '<section id="outcomes"><h2>How the trials ended</h2>',
        "<table><tr><th>ended</th><th class='num'>trials</th><th class='num'>share</th></tr>"
        + "".join(rows)
        + f"<tr><th>all</th><th class='num'>{n}</th><th></th></tr></table>",
    ]
    if "grounded" in metrics:
        g = int(_flags(metrics["grounded"]).sum())
        parts.append(f"<p>{g} trial{'s' if g != 1 else ''} grounded.</p>")
    failed = metrics[_flags(metrics["failed"])] if "failed" in metrics else metrics.iloc[:0]
    if len(failed):
        reasons = failed["failure_reason"].fillna("").astype(str) if "failure_reason" in failed else None
        groups: dict[str, list[tuple[int, str]]] = {}
        for i, (_, row) in enumerate(failed.iterrows()):
            reason = reasons.iloc[i] if reasons is not None else ""
            key = _reason_pattern(reason) or "(no reason given)"
            trial = row["trial"] if "trial" in failed else i
            groups.setdefault(key, []).append((int(trial), reason))
        body = []
        for key, items in sorted(groups.items(), key=lambda kv: (-len(kv[1]), kv[0])):
            trials = ", ".join(str(t) for t, _ in items[:8]) + (", …" if len(items) > 8 else "")
            body.append(
                f"<tr class='reason-row'><td>{_esc(key)}</td><td class='num'>{len(items)}</td>"
                f"<td>{_esc(trials)}</td><td class='note'>trial {items[0][0]}: {_esc(items[0][1])}</td></tr>"
            )
        parts.append(
            "<h3>Failure reasons</h3><table><tr><th>reason (numbers blanked)</th><th class='num'>trials</th>"
            "<th>example trials</th><th>example message</th></tr>" + "".join(body) + "</table>"
        )
    else:
        parts.append("<p>No trial failed.</p>")
    parts.append("</section>")
    return "\n".join(parts)


def _figure(svg: str, caption: str = "") -> str:
    cap = f"<figcaption>{caption}</figcaption>" if caption else ""
    return f"<figure>{svg}{cap}</figure>"


def _histograms_section(metrics: pd.DataFrame, verdicts: list[dict[str, Any]]) -> str:
    wanted = list(MAIN_METRICS)
    for col, meaning, unit in NAV_METRICS:  # only when a navigator ran (NaN with truth navigation)
        if col in metrics and np.isfinite(pd.to_numeric(metrics[col], errors="coerce").to_numpy(dtype=float)).any():
            wanted.append((col, meaning, unit))
    known = {m for m, _, _ in wanted}
    for v in verdicts:
        m = str(v.get("metric", ""))
        if m and m not in known and m in metrics and pd.api.types.is_numeric_dtype(metrics[m]):
            wanted.append((m, m, str(v.get("unit", "")) or _unit_of(m)))
            known.add(m)
    figs, skipped = [], []
    for col, meaning, unit in wanted:
        if col not in metrics:
            skipped.append(f"{col} (not in the table)")
            continue
        vals = pd.to_numeric(metrics[col], errors="coerce").to_numpy(dtype=float)
        if not np.isfinite(vals).any():
            skipped.append(f"{col} (no finite value)")
            continue
        marks, labels = [], []
        for v in verdicts:
            if v.get("metric") == col:
                try:
                    t = float(v.get("threshold"))
                except (TypeError, ValueError):
                    continue
                if math.isfinite(t):
                    marks.append(t)
                    labels.append(f"{v.get('name', '')}: {v.get('comparator', '')} {_num(t, 4)} {unit}".strip())
        svg = histogram_chart(vals, title=col, xlabel=f"{meaning} [{unit}]" if unit else meaning,
                              threshold=marks or None, threshold_label=labels)  # fmt: skip
        n_nan = int(np.count_nonzero(~np.isfinite(vals)))
        cap = f"{_esc(meaning)}."
        if n_nan:
            why = {
                "time_to_complete_s": "failed trials and trials that did not complete",
                "nav_err_outage_end_m": "failed trials and trials without an outage window",
            }.get(col, "failed trials")
            cap += f" {n_nan} value{'s' if n_nan != 1 else ''} missing (NaN: {why})."
        if marks:
            cap += " Dashed: requirement threshold."
        figs.append(_figure(svg, cap))
    parts = ['<section id="metrics"><h2>Per-trial metrics</h2>', '<div class="figs">' + "".join(figs) + "</div>"]
    if skipped:
        parts.append(f"<p class='note'>Not drawn: {_esc(', '.join(skipped))}.</p>")
    parts.append("</section>")
    return "\n".join(parts)


def _xte_section(ds: Any) -> str:
    head = '<section id="xte"><h2>Cross-track error over time</h2>'
    if "xte_m" not in ds:
        return head + "<p>The time series hold no xte_m: no cross-track-error bands.</p></section>"
    xte = ds["xte_m"].transpose("trial", "time")
    t = np.asarray(ds["time"].values, dtype=float)
    v = np.asarray(xte.values, dtype=float)
    p5, p25, p50, p75, p95 = nan_percentiles(v, [5.0, 25.0, 50.0, 75.0, 95.0])
    alive = np.count_nonzero(np.isfinite(v), axis=0)
    svg = band_chart(
        t,
        [(p5, p95, "5–95 %"), (p25, p75, "25–75 %")],
        [Series(t, p50, "median", color="#0d4557", width=1.8)],
        title="Cross-track error across trials",
        xlabel="time since start [s]",
        ylabel="xte_m [m], + starboard",
    )
    cap = (
        f"Signed cross-track error (positive to starboard of the active leg), percentiles across the "
        f"{v.shape[0]} trials at each recorded time."
    )
    if alive.size and alive.min() < v.shape[0]:
        cap += (
            f" Trials that stopped early drop out: at the end {int(alive[-1])} of {v.shape[0]} trials "
            "still have a value."
        )
    return head + '<div class="figs">' + _figure(svg, cap) + "</div></section>"


def _tracks_section(ds: Any, metrics: pd.DataFrame) -> str:
    head = '<section id="tracks"><h2>Tracks</h2>'
    if "north_m" not in ds or "east_m" not in ds:
        return head + "<p>The time series hold no north_m/east_m: no tracks.</p></section>"
    trials = [int(x) for x in np.asarray(ds["trial"].values)]
    ended: dict[int, str] = {}
    if "trial" in metrics and "ended" in metrics:
        ended = {int(a): str(b) for a, b in zip(metrics["trial"], metrics["ended"], strict=True)}
    failed_first = [k for k in trials if ended.get(k) == "failed"][: MAX_TRACKS // 3]
    chosen = set(failed_first)
    for k in trials:
        if len(chosen) >= MAX_TRACKS:
            break
        chosen.add(k)
    rank = {"completed": 0, "truncated": 1, "failed": 2}
    pick = sorted(chosen, key=lambda k: (rank.get(ended.get(k, ""), 3), k))
    north = ds["north_m"].transpose("trial", "time")
    east = ds["east_m"].transpose("trial", "time")
    index = {k: i for i, k in enumerate(trials)}
    series, seen = [], set()
    for k in pick:
        kind = ended.get(k, "unknown")
        label = "" if kind in seen else kind
        seen.add(kind)
        i = index[k]
        series.append(Series(np.asarray(east.values[i], dtype=float), np.asarray(north.values[i], dtype=float),
                             label, color=_ENDED_COLOR.get(kind, "#777"), width=1.1, opacity=0.7))  # fmt: skip
    # leave room above the tracks for the legend line_chart draws in the top right corner
    width, height = 720, 480
    ys = np.concatenate([np.asarray(s.y)[np.isfinite(s.y)] for s in series] + [np.zeros(0)])
    ylim = None
    if ys.size:
        y0, y1 = float(ys.min()), float(ys.max())
        span = max(y1 - y0, 1.0)
        y0, y1 = y0 - 0.03 * span, y1 + 0.03 * span
        frac = min((14.0 * len(seen) + 10.0) / (height - 30 - 44), 0.5)
        ylim = (y0, y1 + frac / (1.0 - frac) * (y1 - y0))
    svg = line_chart(series, title=f"Tracks of {len(pick)} trials", xlabel="east [m]", ylabel="north [m]",
                     equal_axes=True, width=width, height=height, ylim=ylim)  # fmt: skip
    cap = f"East against north, equal scales; {len(pick)} of {len(trials)} trials"
    if len(pick) < len(trials):
        cap += " (failed trials first, then in trial order)"
    cap += ". Colour: how the trial ended."
    return head + '<div class="figs">' + _figure(svg, _esc(cap)) + "</div></section>"


def _dist_text(dist: Any) -> str:
    from ..spec.distributions import distribution_to_data

    data = distribution_to_data(dist)
    kind = next(iter(data))
    body = data[kind]
    if isinstance(body, dict):
        args = ", ".join(f"{k}={_num(x, 4)}" for k, x in body.items())
    else:
        args = ", ".join(_num(x, 4) for x in body)
    text = f"{kind}({args})"
    if "weights" in data:
        text += " weights " + ", ".join(_num(x, 3) for x in data["weights"])
    return text


def _parameters_section(metrics: pd.DataFrame, spec: Any) -> str:
    head = '<section id="parameters"><h2>Drawn parameters</h2>'
    cols = [c for c in metrics.columns if str(c).startswith("param.")]
    if not cols:
        return head + "<p>No parameter was drawn: every trial ran the same conditions.</p></section>"
    declared: dict[str, str] = {}
    if spec is not None:
        from ..spec.schema import distributed_fields

        try:
            declared = {k: _dist_text(d) for k, d in distributed_fields(spec).items()}
        except (TypeError, ParameterError):
            declared = {}
    rows = []
    for c in cols:
        path = str(c)[len("param.") :]
        vals = pd.to_numeric(metrics[c], errors="coerce").to_numpy(dtype=float)
        finite = vals[np.isfinite(vals)]
        if finite.size:
            p5, p50, p95 = nan_percentiles(finite, [5.0, 50.0, 95.0])
            lo, hi = finite.min(), finite.max()
        else:
            p5 = p50 = p95 = lo = hi = float("nan")
        rows.append(
            f"<tr><td><code>{_esc(path)}</code></td><td>{_esc(_unit_of(path))}</td>"
            f"<td class='mono'>{_esc(declared.get(path, '–'))}</td><td class='num'>{finite.size}</td>"
            + "".join(f"<td class='num'>{_num(x, 4)}</td>" for x in (lo, p5, p50, p95, hi))
            + "</tr>"
        )
    table = (
        "<table><tr><th>parameter</th><th>unit</th><th>declared in spec</th><th class='num'>n</th>"
        "<th class='num'>min</th><th class='num'>5 %</th><th class='num'>median</th><th class='num'>95 %</th>"
        "<th class='num'>max</th></tr>" + "".join(rows) + "</table>"
    )
    return head + table + "<p class='note'>Values each trial drew (metrics.parquet param.* columns).</p></section>"


# ---------------------------------------------------------------------------
# public API
# ---------------------------------------------------------------------------


def campaign_report_html(store_dir: str | os.PathLike[str]) -> str:
    """The HTML report of a campaign store.

    Parameters
    ----------
    store_dir : str or path-like
        A store folder written by ``wavebench run`` (store format 1):
        ``manifest.json`` and ``metrics.parquet`` are required;
        ``spec.toml``, ``timeseries.zarr`` and ``verdicts.json`` are used when
        present (without time series the time-series sections are left
        out; without verdicts the page says there are no requirements).
        Or an unfinished store (``chunks/plan.json``, ``spec.toml`` and the
        finished chunks' metrics files, no ``manifest.json``): the page is
        then an interim report of the trials finished so far, with
        provisional verdicts computed on them.

    Returns
    -------
    str
        A complete, self-contained HTML document (inline CSS and SVG, no
        script, no network resource). The caution stands at the top.

    Raises
    ------
    ParameterError
        When the folder is not a store: a required file is missing, or the
        manifest is not a wavebench store manifest of format 1 (or, for an
        unfinished store, when :func:`~wavebench.campaign.store.read_store`
        refuses it or none of its trials has finished yet).
    """
    store = Path(store_dir)
    if not store.is_dir():
        raise ParameterError("store_dir", str(store), "an existing campaign store folder")
    from ..campaign.chunks import CHUNKS_DIR

    interim = False
    if not (store / "manifest.json").is_file() and (store / CHUNKS_DIR / "plan.json").is_file():
        from ..campaign.store import read_store

        data = read_store(store, partial=True)  # an unfinished store: the trials finished so far
        interim = bool(data["partial"])  # False when the campaign finished while it was read
        if interim and len(data["metrics"]) == 0:
            raise ParameterError("store_dir", str(store), "a campaign store with at least one finished trial (it "
                                 f"is unfinished and none of its {data['manifest'].get('trials_planned')} planned "
                                 "trials has finished yet: write the report once a chunk has finished)")  # fmt: skip
        manifest, metrics, spec, ds = data["manifest"], data["metrics"], data["spec"], data["timeseries"]
        verdicts = [v.to_dict() for v in data["verdicts"]]
        spec_text, spec_note = (store / "spec.toml").read_text(encoding="utf-8"), ""
    else:
        manifest = _read_manifest(store)
        metrics = pd.read_parquet(_require(store, "metrics.parquet"))
        verdicts = _read_verdicts(store)
        spec_text, spec, spec_note = _read_spec(store)
        ds = _read_timeseries(store)

    scenario = str(manifest.get("scenario") or (spec.scenario.name if spec is not None else "campaign"))
    title = f"wavebench interim campaign report: {scenario}" if interim else f"wavebench campaign: {scenario}"
    tally = ", ".join(f"{sum(1 for v in verdicts if v.get('verdict') == w)} {w}" for w in ("pass", "fail", "undecided"))
    headline = f"{_esc(manifest.get('trials', len(metrics)))} trials of {_esc(manifest.get('craft', '?'))}; " + (
        f"{len(verdicts)} requirements: {tally}." if verdicts else "no requirements in the spec."
    )
    banner: list[str] = []
    if interim:
        done, planned = manifest.get("trials_done", len(metrics)), manifest.get("trials_planned", "?")
        headline = f"{_esc(done)} of {_esc(planned)} planned trials of {_esc(manifest.get('craft', '?'))}; " + (
            f"{len(verdicts)} requirements (provisional): {tally}." if verdicts else "no requirements in the spec."
        )
        manifest = {**manifest, "trials": f"{done} finished of {planned} planned"}  # for the run summary
        banner.append(
            f'<p class="warn interim" role="note"><strong>Interim report.</strong> {_esc(done)} of '
            f"{_esc(planned)} planned trials had finished when this report was written (the campaign was still "
            "running or was interrupted). Every section covers those trials only; the verdicts are provisional "
            "and can change when the other trials finish. Write the report again once the campaign has "
            "finished (resume an interrupted one with <code>wavebench run --resume DIR</code>).</p>"
        )
    sections = [("summary", "Run summary"), ("verdicts", "Verdicts"), ("outcomes", "Outcomes"),
                ("metrics", "Metrics")]  # fmt: skip
    nav_sections = navigation_sections(ds, metrics, spec) if ds is not None else []
    if ds is not None:
        sections += [("xte", "Cross-track error"), ("tracks", "Tracks")]
    sections += [(anchor, text) for anchor, text, _ in nav_sections]
    sections.append(("parameters", "Parameters"))
    extra = study_sections(metrics, spec, verdicts)
    sections += [(anchor, text) for anchor, text, _ in extra]
    nav = "<nav>" + "".join(f'<a href="#{a}">{_esc(b)}</a>' for a, b in sections) + "</nav>"

    body = [
        "<header>",
        f"<h1>{_esc(title)}</h1>",
        f'<p class="caution" role="note"><strong>Caution.</strong> {_esc(CAUTION)}</p>',
        *banner,
        f'<p class="sub">{headline}</p>',
        nav,
        "</header>",
        _summary_section(store, manifest, spec_text, spec, spec_note, ds),
        _verdicts_section(verdicts, interim=interim),
        _outcomes_section(metrics),
        _histograms_section(metrics, verdicts),
    ]
    if ds is not None:
        body += [_xte_section(ds), _tracks_section(ds, metrics)]
        body += [section for _, _, section in nav_sections]
    else:
        body.append(
            '<section id="timeseries"><h2>Time series</h2><p>The store holds no time series: '
            "no cross-track-error bands and no tracks.</p></section>"
        )
    body.append(_parameters_section(metrics, spec))
    body += [section for _, _, section in extra]
    body.append(
        f"<footer>Written by wavebench from the store files; self-contained (no script, no network). "
        f"{_esc(CAUTION)}</footer>"
    )
    return "\n".join(
        [
            "<!DOCTYPE html>",
            '<html lang="en"><head><meta charset="utf-8">',
            '<meta name="viewport" content="width=device-width, initial-scale=1">',
            f"<title>{_esc(title)}</title><style>{_CSS}{STUDY_CSS}</style></head><body>",
            *body,
            "</body></html>",
        ]
    )


def write_campaign_report(store_dir: str | os.PathLike[str], out_path: str | os.PathLike[str] | None = None) -> Path:
    """Write :func:`campaign_report_html` to a file.

    Parameters
    ----------
    store_dir : str or path-like
        The campaign store folder.
    out_path : str or path-like, optional
        Where to write; ``store_dir / "report.html"`` when omitted.

    Returns
    -------
    Path
        The file written (UTF-8).
    """
    page = campaign_report_html(store_dir)
    path = Path(store_dir) / "report.html" if out_path is None else Path(out_path)
    path.write_text(page, encoding="utf-8")
    return path
