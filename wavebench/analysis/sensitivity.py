"""Which drawn inputs drive a campaign's metrics: rank-correlation sensitivity.

A campaign's metrics table holds one row per trial: the metrics and, in
``param.<toml path>`` columns, the values each trial drew for its dispersed
inputs. :func:`rank_sensitivity` ranks the inputs by Spearman's rank
correlation with each metric; :func:`requirement_sensitivity` does the same
against whether each trial met a requirement. Both return a tidy table with
columns ``metric, parameter, rho, p_value, n``, the strongest input first for
each metric.

Rank correlation picks up any monotonic dependence (not only a linear one)
and ignores the scale of both variables. It is a screening measure: it
misses an input whose effect is not monotonic (e.g. a heading that hurts on
either side of head seas) and, with inputs drawn independently, measures
each input's effect averaged over the others. The p-values are per pair,
not corrected for the number of pairs tested.

Examples
--------
>>> import numpy as np, pandas as pd
>>> rng = np.random.default_rng(0)
>>> hs = rng.uniform(0.5, 3.0, 200)
>>> frame = pd.DataFrame({"param.sea.hs_m": hs, "param.craft.mass_kg": rng.uniform(900, 1100, 200),
...                       "xte_p95_m": 0.4 * hs**2 + rng.normal(0, 0.1, 200)})
>>> table = rank_sensitivity(frame)
>>> print(table[["metric", "parameter", "n"]].to_string(index=False))
   metric           parameter   n
xte_p95_m      param.sea.hs_m 200
xte_p95_m param.craft.mass_kg 200
>>> bool(table.loc[0, "rho"] > 0.9)
True
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

import numpy as np
import pandas as pd
from scipy import stats

from wavebench.core.errors import ParameterError

__all__ = ["PARAM_PREFIX", "parameter_columns", "rank_sensitivity", "requirement_sensitivity"]

#: Prefix of the metrics-table columns that hold each trial's drawn inputs.
PARAM_PREFIX = "param."

#: Columns of the tables returned here.
_COLUMNS = ["metric", "parameter", "rho", "p_value", "n"]
#: Fewest trials with both values for which a correlation is reported (with 2 it is always +-1).
_MIN_N = 3


def parameter_columns(frame: pd.DataFrame) -> list[str]:
    """The ``param.<toml path>`` columns of a metrics table, in table order.

    Parameters
    ----------
    frame : pandas.DataFrame
        A campaign's metrics table.

    Returns
    -------
    list of str

    Examples
    --------
    >>> parameter_columns(pd.DataFrame({"trial": [0], "param.sea.hs_m": [1.0], "xte_rms_m": [0.2]}))
    ['param.sea.hs_m']
    """
    _check_frame(frame)
    return [str(c) for c in frame.columns if str(c).startswith(PARAM_PREFIX)]


def _check_frame(frame: Any) -> pd.DataFrame:
    if not isinstance(frame, pd.DataFrame):
        raise ParameterError("frame", frame, "must be a pandas DataFrame (a campaign's metrics table)")
    return frame


def _numeric_column(frame: pd.DataFrame, column: Any, field: str) -> np.ndarray:
    """A column as float64 (bool as 0/1), or ParameterError naming the column."""
    if column not in frame.columns:
        raise ParameterError(field, column, f"is not a column of the table (columns: {', '.join(map(str, frame))})")
    series = frame[column]
    if isinstance(series, pd.DataFrame):
        raise ParameterError(field, column, "names more than one column of the table")
    kind = series.dtype.kind
    if kind not in "biuf":
        raise ParameterError(field, column, f"must be a numeric or boolean column (dtype {series.dtype})")
    return series.to_numpy(dtype=np.float64, na_value=np.nan)


def _column_list(value: Any, field: str) -> list[str]:
    if isinstance(value, str) or not isinstance(value, Sequence) or not value:
        raise ParameterError(field, value, "must be a non-empty list of column names")
    return list(value)


def _default_parameters(frame: pd.DataFrame) -> list[str]:
    cols = parameter_columns(frame)
    if not cols:
        raise ParameterError(
            "parameters", None, f"none given and the table has no '{PARAM_PREFIX}*' columns (nothing was drawn)"
        )
    return cols


def _spearman(x: np.ndarray, y: np.ndarray) -> tuple[float, float, int]:
    """Spearman's rho and its two-sided p-value over the pairs where both are not NaN."""
    both = ~(np.isnan(x) | np.isnan(y))
    n = int(np.count_nonzero(both))
    if n < _MIN_N:
        return np.nan, np.nan, n
    xs, ys = x[both], y[both]
    # A constant input has no ranks to correlate: rho is undefined (scipy would warn).
    if np.all(xs == xs[0]) or np.all(ys == ys[0]):
        return np.nan, np.nan, n
    res = stats.spearmanr(xs, ys)
    return float(res.statistic), float(res.pvalue), n


def _table(rows: list[tuple[str, str, float, float, int]], order: list[str]) -> pd.DataFrame:
    out = pd.DataFrame(rows, columns=_COLUMNS)
    out["n"] = out["n"].astype(np.int64)
    out["rho"] = out["rho"].astype(np.float64)
    out["p_value"] = out["p_value"].astype(np.float64)
    # Per metric (in the order asked), strongest |rho| first, undefined last; ties keep input order.
    out["_metric_order"] = out["metric"].map({m: i for i, m in enumerate(order)})
    out["_strength"] = -out["rho"].abs()
    out = out.sort_values(["_metric_order", "_strength"], kind="mergesort", na_position="last")
    return out.drop(columns=["_metric_order", "_strength"]).reset_index(drop=True)


def rank_sensitivity(
    frame: pd.DataFrame,
    *,
    metrics: Sequence[str] | None = None,
    parameters: Sequence[str] | None = None,
) -> pd.DataFrame:
    """Rank the drawn inputs by their Spearman correlation with each metric.

    Parameters
    ----------
    frame : pandas.DataFrame
        A campaign's metrics table: one row per trial, the metrics and the
        drawn inputs (``param.<toml path>`` columns).
    metrics : sequence of str, optional
        Metric columns to explain (numeric or boolean). Default: every
        numeric, non-boolean column except ``trial`` and the ``param.*``
        columns.
    parameters : sequence of str, optional
        Input columns (numeric or boolean). Default: every ``param.*`` column.

    Returns
    -------
    pandas.DataFrame
        One row per (metric, parameter) with columns ``metric`` (str),
        ``parameter`` (the column name, e.g. ``"param.sea.hs_m"``), ``rho``
        (Spearman's rank correlation, in [-1, 1]), ``p_value`` (two-sided,
        for the hypothesis of no correlation) and ``n`` (trials used). Rows
        are grouped by metric in the order asked and, within a metric, sorted
        by ``|rho|`` from strongest to weakest; undefined correlations last.

    Raises
    ------
    ParameterError
        For a frame that is not a DataFrame, a named column that is missing
        or not numeric, an empty list of names, or no parameter columns.

    Notes
    -----
    For each pair, the trials where either value is NaN are dropped (a
    failed trial has no metric value; an input not drawn in a trial has
    none) and ``n`` counts the rest. Over those, with :math:`R` the ranks
    (ties get the average rank),

    .. math::

        \\rho = \\operatorname{corr}(R(x), R(y)),

    computed with ``scipy.stats.spearmanr``, whose p-value uses
    :math:`t = \\rho\\sqrt{(n - 2)/(1 - \\rho^2)}` with :math:`n - 2` degrees of
    freedom (an approximation for small :math:`n`). ``rho`` and ``p_value``
    are NaN, without a warning, when fewer than 3 trials remain or either
    column is constant over them (e.g. an input that was not dispersed).

    References
    ----------
    .. [1] C. Spearman, "The proof and measurement of association between two
       things", American Journal of Psychology 15(1), 72-101, 1904.
    .. [2] A. Saltelli et al., Global Sensitivity Analysis: The Primer,
       Wiley, 2008 (screening and correlation-based measures).
    """
    frame = _check_frame(frame)
    params = _default_parameters(frame) if parameters is None else _column_list(parameters, "parameters")
    if metrics is None:
        names = [
            str(c)
            for c in frame.columns
            if c != "trial" and not str(c).startswith(PARAM_PREFIX) and frame[c].dtype.kind in "iuf"
        ]
        if not names:
            raise ParameterError("metrics", None, "none given and the table has no numeric metric columns")
    else:
        names = _column_list(metrics, "metrics")
    x_cols = {p: _numeric_column(frame, p, "parameters") for p in params}
    rows = []
    for m in names:
        y = _numeric_column(frame, m, "metrics")
        for p in params:
            rho, p_value, n = _spearman(x_cols[p], y)
            rows.append((str(m), str(p), rho, p_value, n))
    return _table(rows, [str(m) for m in names])


def requirement_sensitivity(
    frame: pd.DataFrame,
    *,
    metric: str,
    comparator: str,
    threshold: float,
    parameters: Sequence[str] | None = None,
    name: str | None = None,
) -> pd.DataFrame:
    """Rank the drawn inputs by their rank correlation with meeting a requirement.

    Parameters
    ----------
    frame : pandas.DataFrame
        A campaign's metrics table.
    metric : str
        The requirement's metric column.
    comparator : {"below", "above"}
        A trial meets the requirement when ``value < threshold`` ("below") or
        ``value > threshold`` ("above"), as in
        :func:`~wavebench.analysis.verdicts.evaluate_requirement`.
    threshold : float
        Finite threshold in the metric's unit.
    parameters : sequence of str, optional
        Input columns. Default: every ``param.*`` column.
    name : str, optional
        Label for the ``metric`` column of the result; default e.g.
        ``"xte_p95_m < 2"``.

    Returns
    -------
    pandas.DataFrame
        Columns ``metric`` (the label), ``parameter``, ``rho``, ``p_value``,
        ``n``, sorted by ``|rho|`` as in :func:`rank_sensitivity`. A positive
        ``rho`` means trials with a larger input met the requirement more often.

    Raises
    ------
    ParameterError
        As for :func:`rank_sensitivity`; also for an unknown comparator or a
        non-finite threshold.

    Notes
    -----
    The outcome is the indicator :math:`y_i = 1` if trial :math:`i` met the
    requirement, else 0. A trial without a metric value (NaN: it failed, or
    never reached the event) counts as not met, as in the verdicts, so it is
    kept; only trials whose input is NaN are dropped. ``rho`` is Spearman's
    correlation of the input with :math:`y` (``scipy.stats.spearmanr``, ties
    averaged): a rank-biserial-type measure that compares where the trials
    that met it and those that did not sit among the input's ranks. It is NaN
    when every remaining trial met the requirement or none did.

    References
    ----------
    .. [1] C. Spearman, American Journal of Psychology 15(1), 72-101, 1904.

    Examples
    --------
    >>> frame = pd.DataFrame({"param.sea.hs_m": [0.5, 1.0, 1.5, 2.0, 2.5, 3.0],
    ...                       "xte_p95_m": [0.4, 0.6, np.nan, 1.9, 2.4, 3.1]})
    >>> t = requirement_sensitivity(frame, metric="xte_p95_m", comparator="below", threshold=2.0)
    >>> t.loc[0, "metric"], round(float(t.loc[0, "rho"]), 3), int(t.loc[0, "n"])
    ('xte_p95_m < 2', -0.683, 6)
    """
    frame = _check_frame(frame)
    if comparator not in ("below", "above"):
        raise ParameterError("comparator", comparator, "must be one of ('below', 'above')")
    if isinstance(threshold, (bool, np.bool_)) or not isinstance(threshold, (int, float, np.integer, np.floating)):
        raise ParameterError("threshold", threshold, "must be a finite number")
    limit = float(threshold)
    if not np.isfinite(limit):
        raise ParameterError("threshold", threshold, "must be a finite number")
    params = _default_parameters(frame) if parameters is None else _column_list(parameters, "parameters")
    values = _numeric_column(frame, metric, "metric")
    with np.errstate(invalid="ignore"):
        met = values < limit if comparator == "below" else values > limit
    met = met & ~np.isnan(values)
    y = met.astype(np.float64)
    symbol = "<" if comparator == "below" else ">"
    label = name if name is not None else f"{metric} {symbol} {np.format_float_positional(limit, trim='-')}"
    if not isinstance(label, str) or not label.strip():
        raise ParameterError("name", name, "must be a non-empty string")
    rows = []
    for p in params:
        rho, p_value, n = _spearman(_numeric_column(frame, p, "parameters"), y)
        rows.append((label, str(p), rho, p_value, n))
    return _table(rows, [label])
