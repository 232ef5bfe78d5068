"""Study sections of the campaign HTML report: what drives the results, operability, closest to failing.

Three sections built from a store's metrics table (one row per trial, the
metrics and the ``param.<toml path>`` draws) and the spec's requirements:

- *What drives the results*: for each requirement, the Spearman rank
  correlation of every drawn input with the requirement's metric and with
  meeting the requirement (:func:`~wavebench.analysis.sensitivity.rank_sensitivity`,
  :func:`~wavebench.analysis.sensitivity.requirement_sensitivity`), as ranked
  signed bars with a table of rho, p-value and n. Inputs with p > 0.05 (or an
  undefined rho) are drawn pale.
- *Operability*: when the trials drew both the sea's mean wave direction
  (``param.sea.spreading.mean_dir_deg``) and its significant wave height
  (``param.sea.hs_m``), one matrix per requirement: 30-degree bins of the
  wave direction against quantile bins of Hs, each cell coloured by the share
  of its trials that met the requirement, with the count; cells with fewer
  than 5 trials are hatched and labelled as too few.
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
"""

from __future__ import annotations

import json
import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
import pandas as pd

from ..analysis.sensitivity import PARAM_PREFIX, rank_sensitivity, requirement_sensitivity
from .charts import share_matrix_chart, signed_bar_chart
from .html import cell_number, escape

__all__ = [
    "DIRECTION_COLUMN",
    "HS_COLUMN",
    "MIN_CELL_TRIALS",
    "N_CLOSEST",
    "SIGNIFICANCE",
    "STUDY_CSS",
    "Operability",
    "Requirement",
    "closest_trials",
    "meets",
    "operability",
    "replay_code",
    "requirements_of",
    "study_sections",
]

#: Drawn input used as the wave direction of the operability matrix [deg].
DIRECTION_COLUMN = "param.sea.spreading.mean_dir_deg"
#: Drawn input used as the sea state of the operability matrix [m].
HS_COLUMN = "param.sea.hs_m"
#: Width of the wave-direction bins [deg].
DIRECTION_BIN_DEG = 30.0
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


@dataclass(frozen=True)
class Operability:
    """Trials that met a requirement per wave-direction and Hs bin.

    Attributes
    ----------
    dir_edges : ndarray of shape (nx + 1,)
        Wave-direction bin edges [deg], multiples of the bin width.
    hs_edges : ndarray of shape (ny + 1,)
        Hs bin edges [m] (quantiles of the drawn Hs).
    met, count : ndarray of shape (ny, nx), int
        Trials that met the requirement, and all trials, per cell.
    n_left_out : int
        Trials without a finite direction or Hs.
    """

    dir_edges: np.ndarray
    hs_edges: np.ndarray
    met: np.ndarray
    count: np.ndarray
    n_left_out: int


def _hs_bin_count(n: int) -> int:
    """Hs bins: about 40 trials per bin, 2 to 5 bins (common practice, no source)."""
    return int(min(5, max(2, n // 40)))


def _bin_index(values: np.ndarray, edges: np.ndarray) -> np.ndarray:
    """Bins ``[lo, hi)``, the last closed on the right."""
    idx = np.searchsorted(edges, values, side="right") - 1
    idx[values == edges[-1]] = edges.size - 2
    return idx


def operability(direction_deg: Any, hs_m: Any, met: Any, *, bin_deg: float = DIRECTION_BIN_DEG,
                n_hs_bins: int | None = None) -> Operability | None:  # fmt: skip
    """Count trials that met a requirement per wave-direction and Hs bin.

    Parameters
    ----------
    direction_deg : array_like of shape (n_trials,)
        Drawn mean wave direction [deg]; taken modulo 360.
    hs_m : array_like of shape (n_trials,)
        Drawn significant wave height [m].
    met : array_like of shape (n_trials,), bool
        Whether each trial met the requirement.
    bin_deg : float
        Width of the direction bins [deg]; edges are multiples of it from the
        lowest to the highest occupied bin.
    n_hs_bins : int, optional
        Hs bins at the quantiles ``k / n_hs_bins`` of the drawn Hs (repeated
        edges merged); about one per 40 trials, 2 to 5, when omitted.

    Returns
    -------
    Operability or None
        None when fewer than 2 trials have both values or Hs is constant.

    Examples
    --------
    >>> op = operability([190.0, 200.0, 250.0, 260.0], [1.0, 2.0, 1.0, 2.0], [True, False, True, True], n_hs_bins=2)
    >>> op.dir_edges.tolist(), op.hs_edges.tolist(), op.met.tolist(), op.count.tolist()
    ([180.0, 210.0, 240.0, 270.0], [1.0, 1.5, 2.0], [[1, 0, 1], [0, 0, 1]], [[1, 0, 1], [1, 0, 1]])
    """
    d = np.mod(np.asarray(direction_deg, dtype=float), 360.0)
    h = np.asarray(hs_m, dtype=float)
    ok = np.asarray(met, dtype=bool)
    keep = np.isfinite(d) & np.isfinite(h)
    d, h, ok = d[keep], h[keep], ok[keep]
    if d.size < 2 or np.all(h == h[0]):
        return None
    lo = math.floor(float(d.min()) / bin_deg) * bin_deg
    hi = (math.floor(float(d.max()) / bin_deg) + 1) * bin_deg
    dir_edges = np.arange(lo, hi + 0.5 * bin_deg, bin_deg)
    k = _hs_bin_count(d.size) if n_hs_bins is None else int(n_hs_bins)
    hs_edges = np.unique(np.quantile(h, np.linspace(0.0, 1.0, k + 1)))
    ix, iy = _bin_index(d, dir_edges), _bin_index(h, hs_edges)
    shape = (hs_edges.size - 1, dir_edges.size - 1)
    count = np.zeros(shape, dtype=np.int64)
    good = np.zeros(shape, dtype=np.int64)
    np.add.at(count, (iy, ix), 1)
    np.add.at(good, (iy, ix), ok.astype(np.int64))
    return Operability(dir_edges, hs_edges, good, count, int(np.count_nonzero(~keep)))


def _operability_section(metrics: pd.DataFrame, reqs: list[Requirement]) -> str:
    if DIRECTION_COLUMN not in metrics or HS_COLUMN not in metrics or not reqs:
        return ""
    d = pd.to_numeric(metrics[DIRECTION_COLUMN], errors="coerce").to_numpy(dtype=float)
    h = pd.to_numeric(metrics[HS_COLUMN], errors="coerce").to_numpy(dtype=float)
    figs = []
    left_out = 0
    for req in reqs:
        if req.metric not in metrics:
            continue
        values = pd.to_numeric(metrics[req.metric], errors="coerce").to_numpy(dtype=float)
        op = operability(d, h, meets(values, req.comparator, req.threshold))
        if op is None:
            continue
        left_out = op.n_left_out
        svg = share_matrix_chart(op.dir_edges, op.hs_edges, op.met, op.count, min_count=MIN_CELL_TRIALS,
                                 title=f"{req.name}: share meeting {req.text()}",
                                 xlabel="drawn mean wave direction [deg] (sea.spreading.mean_dir_deg)",
                                 ylabel="drawn Hs [m] (sea.hs_m)")  # fmt: skip
        need = f" The requirement asks for {cell_number(req.probability, 3)}." if math.isfinite(req.probability) else ""
        cap = (
            f"Share of the trials in each cell that met {req.text()} (a trial without a value counts as not met), "
            f"and the number of trials in the cell; hatched: fewer than {MIN_CELL_TRIALS} trials.{need}"
        )
        figs.append(f'<figure data-requirement="{escape(req.name)}">{svg}'
                    f"<figcaption>{escape(cap)}</figcaption></figure>")
    if not figs:
        return ""
    note = (
        f"Columns: {DIRECTION_BIN_DEG:g}-degree bins of the drawn mean wave direction (the direction of the sea "
        "state's spreading function, not relative to the craft's heading, which is not recorded per trial). Rows: "
        "bins of the drawn Hs between its quantiles, so each row holds about the same number of trials. The cells "
        "show only the conditions the trials happened to draw; a cell's share from a few trials is uncertain."
    )
    if left_out:
        note += f" {left_out} trial{'s' if left_out != 1 else ''} without a drawn direction or Hs left out."
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
        direction and Hs, "Closest to failing" needs a requirement whose
        metric is in the table.
    """
    reqs = requirements_of(spec, verdicts)
    out = []
    drivers = _drivers_section(metrics, reqs)
    if drivers:
        out.append(("drivers", "What drives the results", drivers))
    oper = _operability_section(metrics, reqs)
    if oper:
        out.append(("operability", "Operability", oper))
    closest = _closest_section(metrics, reqs)
    if closest:
        out.append(("closest", "Closest to failing", closest))
    return out
