"""Statistical verdicts on campaign requirements.

A requirement says that a per-trial metric stays below (or above) a threshold
with at least a given probability, e.g. "the 95th-percentile cross-track
error of a survey line is under 2 m in at least 90 % of trials".
:func:`evaluate_requirement` turns the metric's values over the trials of a
campaign into a :class:`Verdict`: the count of trials that met it, an exact
confidence interval for the probability of meeting it, "pass" / "fail" /
"undecided", and a bootstrap interval for the metric's matching quantile.
:meth:`Verdict.to_dict` gives one object of a store's ``verdicts.json``.

Examples
--------
>>> import numpy as np
>>> values = np.linspace(0.5, 1.5, 50)  # every trial below 2 m
>>> v = evaluate_requirement("xte within 2 m", values, metric="xte_p95_m", comparator="below",
...                          threshold=2.0, probability=0.9, unit="m", rng=np.random.default_rng(0))
>>> v.verdict, v.n_met, round(v.p_low, 4)
('pass', 50, 0.9289)
>>> print(v.text())
xte within 2 m: PASS  P(xte_p95_m < 2 m) = 1.000 [0.929, 1.000] >= 0.90 required (n = 50)
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np

from wavebench.core.errors import ParameterError

from .stats import bootstrap_quantile, clopper_pearson

__all__ = ["COMPARATORS", "VERDICTS", "Verdict", "evaluate_requirement", "verdicts_table_text"]

#: Allowed comparators: a trial meets "below" when value < threshold, "above" when value > threshold.
COMPARATORS = ("below", "above")
#: Possible outcomes of a verdict.
VERDICTS = ("pass", "fail", "undecided")

_SYMBOL = {"below": "<", "above": ">"}
_STR_FIELDS = ("name", "metric", "comparator", "verdict", "unit")
_INT_FIELDS = ("n_trials", "n_met", "n_failed")
#: Float fields that are NaN when fewer than 2 trials produced a value (null in JSON).
_NULLABLE_FIELDS = ("quantile_value", "quantile_low", "quantile_high")


@dataclass(frozen=True)
class Verdict:
    """Outcome of one requirement over a campaign (one object of ``verdicts.json``).

    Parameters
    ----------
    name : str
        The requirement's name, e.g. ``"xte within 2 m"``.
    metric : str
        The per-trial metric (a column of the store's metrics table).
    comparator : {"below", "above"}
        A trial meets the requirement when its value is below (``<``) or
        above (``>``) ``threshold``.
    threshold : float
        Threshold in the metric's unit.
    probability : float
        Required probability of meeting the requirement, in (0, 1).
    confidence : float
        Two-sided confidence level of both intervals, in (0, 1).
    n_trials : int
        Trials evaluated, including failed ones.
    n_met : int
        Trials that met the requirement.
    n_failed : int
        Trials without a value (NaN: failed trials), counted as not met.
    p_hat : float
        ``n_met / n_trials``.
    p_low, p_high : float
        Two-sided Clopper–Pearson interval for the probability of meeting it.
    verdict : {"pass", "fail", "undecided"}
        "pass" if ``p_low >= probability``, "fail" if ``p_high < probability``,
        otherwise "undecided".
    quantile_level : float
        Quantile of the metric reported: ``probability`` for "below",
        ``1 - probability`` for "above".
    quantile_value, quantile_low, quantile_high : float
        That quantile over the trials with a value, with its percentile-bootstrap
        interval; NaN when fewer than 2 trials have a value.
    unit : str
        Unit of the metric and threshold ("" if none).
    """

    name: str
    metric: str
    comparator: str
    threshold: float
    probability: float
    confidence: float
    n_trials: int
    n_met: int
    n_failed: int
    p_hat: float
    p_low: float
    p_high: float
    verdict: str
    quantile_level: float
    quantile_value: float
    quantile_low: float
    quantile_high: float
    unit: str

    def __post_init__(self) -> None:
        if self.comparator not in COMPARATORS:
            raise ParameterError("comparator", self.comparator, f"must be one of {COMPARATORS}")
        if self.verdict not in VERDICTS:
            raise ParameterError("verdict", self.verdict, f"must be one of {VERDICTS}")
        if self.n_trials < 1:
            raise ParameterError("n_trials", self.n_trials, "must be a whole number >= 1")
        if not 0 <= self.n_failed <= self.n_trials:
            raise ParameterError("n_failed", self.n_failed, f"must be between 0 and n_trials = {self.n_trials}")
        if not 0 <= self.n_met <= self.n_trials - self.n_failed:
            raise ParameterError(
                "n_met", self.n_met, f"must be between 0 and n_trials - n_failed = {self.n_trials - self.n_failed}"
            )

    def to_dict(self) -> dict[str, Any]:
        """The verdict as a JSON-safe dict (plain str, int and float; NaN as None).

        Returns
        -------
        dict
            Keys in ``verdicts.json`` order. The quantile fields, NaN when
            fewer than 2 trials had a value, become ``None`` (JSON ``null``)
            so that the file stays strict JSON.
        """
        out: dict[str, Any] = {}
        for f in dataclasses.fields(self):
            value = getattr(self, f.name)
            if f.name in _STR_FIELDS:
                out[f.name] = str(value)
            elif f.name in _INT_FIELDS:
                out[f.name] = int(value)
            else:
                x = float(value)
                out[f.name] = None if math.isnan(x) else x
        return out

    @classmethod
    def from_dict(cls, data: Mapping[str, Any]) -> Verdict:
        """Rebuild a verdict from :meth:`to_dict` output (or a parsed ``verdicts.json`` object).

        Parameters
        ----------
        data : mapping
            Exactly the verdict's fields; ``None`` is accepted for the
            quantile fields and read as NaN.

        Raises
        ------
        ParameterError
            For a missing or unknown key, or a value of the wrong type.
        """
        names = [f.name for f in dataclasses.fields(cls)]
        missing = [k for k in names if k not in data]
        if missing:
            raise ParameterError(missing[0], None, "a value is required (missing from the verdict)")
        unknown = sorted(set(data) - set(names))
        if unknown:
            raise ParameterError(unknown[0], data[unknown[0]], f"is not a verdict field (fields: {', '.join(names)})")
        kwargs: dict[str, Any] = {}
        for key in names:
            value = data[key]
            if key in _STR_FIELDS:
                if not isinstance(value, str):
                    raise ParameterError(key, value, "must be a string")
                kwargs[key] = value
            elif key in _INT_FIELDS:
                if isinstance(value, bool) or not isinstance(value, (int, np.integer)):
                    raise ParameterError(key, value, "must be a whole number")
                kwargs[key] = int(value)
            elif value is None and key in _NULLABLE_FIELDS:
                kwargs[key] = math.nan
            else:
                if isinstance(value, bool) or not isinstance(value, (int, float, np.integer, np.floating)):
                    raise ParameterError(key, value, "must be a number")
                kwargs[key] = float(value)
        return cls(**kwargs)

    def text(self) -> str:
        """One-line human summary.

        Returns
        -------
        str
            e.g. ``"xte within 2 m: PASS  P(xte_p95_m < 2 m) = 0.943 [0.921, 0.960] >= 0.90 required
            (n = 1000, 3 trials without a value counted as not met)"``. A trial
            without a value failed, or (for a metric such as the time to
            complete) never reached the event. The relation shown
            compares the interval with the requirement: ``>=`` (lower bound
            reaches it: pass), ``<`` (upper bound below it: fail) or
            ``includes`` (undecided).
        """
        relation = {"pass": ">=", "fail": "<", "undecided": "includes"}[self.verdict]
        failed = ""
        if self.n_failed:
            trials = "trial" if self.n_failed == 1 else "trials"
            failed = f", {self.n_failed} {trials} without a value counted as not met"
        return (
            f"{self.name}: {self.verdict.upper()}  P({self.metric} {_SYMBOL[self.comparator]} "
            f"{_with_unit(_fmt_number(self.threshold), self.unit)}) = {self.p_hat:.3f} "
            f"[{self.p_low:.3f}, {self.p_high:.3f}] {relation} {_fmt_probability(self.probability)} required "
            f"(n = {self.n_trials}{failed})"
        )


def _fmt_number(x: float) -> str:
    """Shortest plain rendering of a threshold: 2.0 -> '2', 0.5 -> '0.5'."""
    return np.format_float_positional(float(x), trim="-")


def _fmt_probability(p: float) -> str:
    """A probability with at least 2 and at most 6 decimals, e.g. 0.9 -> '0.90', 0.995 -> '0.995'."""
    for digits in range(2, 7):
        s = f"{p:.{digits}f}"
        if abs(float(s) - p) <= 1e-12:
            return s
    return f"{p:.6f}"


def _with_unit(text: str, unit: str) -> str:
    return f"{text} {unit}" if unit else text


def _check_name(value: Any, field: str) -> str:
    if not isinstance(value, str) or not value.strip():
        raise ParameterError(field, value, "must be a non-empty string")
    return value


def _check_unit_interval(value: Any, field: str) -> float:
    if isinstance(value, (bool, np.bool_)) or not isinstance(value, (int, float, np.integer, np.floating)):
        raise ParameterError(field, value, "must be a number strictly between 0 and 1")
    out = float(value)
    if not 0.0 < out < 1.0:
        raise ParameterError(field, value, "must be a number strictly between 0 and 1")
    return out


def evaluate_requirement(
    name: str,
    values: Any,
    *,
    metric: str,
    comparator: str,
    threshold: float,
    probability: float,
    confidence: float = 0.95,
    unit: str = "",
    rng: np.random.Generator,
    n_resamples: int = 2000,
) -> Verdict:
    """Judge one requirement from a metric's per-trial values.

    Parameters
    ----------
    name : str
        The requirement's name (non-empty).
    values : array_like of shape (n_trials,)
        The metric for each trial, in ``unit``. NaN marks a trial without a
        value (a failed trial; for ``time_to_complete_s`` also one that never
        completed): it counts as NOT meeting the requirement and is counted in
        ``n_failed``. Infinities are not allowed.
    metric : str
        Name of the metric (a column of the store's metrics table).
    comparator : {"below", "above"}
        A trial meets the requirement when ``value < threshold`` ("below") or
        ``value > threshold`` ("above"); equality does not meet it.
    threshold : float
        Finite threshold in ``unit``.
    probability : float
        Required probability of meeting the requirement, in (0, 1).
    confidence : float, optional
        Two-sided confidence level in (0, 1) of the probability interval and
        of the quantile interval, default 0.95.
    unit : str, optional
        Unit of the metric, for display only.
    rng : numpy.random.Generator
        Source of the bootstrap draws for the quantile interval.
    n_resamples : int, optional
        Bootstrap resamples, default 2000.

    Returns
    -------
    Verdict

    Raises
    ------
    ParameterError
        For an empty name or metric, an unknown comparator, a non-finite
        threshold, a probability or confidence outside (0, 1), values that
        are not a non-empty 1-D numeric array or contain infinities, a bad
        ``n_resamples`` or ``rng``.

    Notes
    -----
    With :math:`k` = ``n_met`` of :math:`n` = ``n_trials`` and
    :math:`[p_{low}, p_{high}]` the two-sided Clopper–Pearson interval at
    ``confidence`` (see :func:`~wavebench.analysis.stats.clopper_pearson`),
    the verdict for a required probability :math:`p_{req}` is

    * "pass" if :math:`p_{low} \\ge p_{req}`: the data show, at that
      confidence, that the requirement is met;
    * "fail" if :math:`p_{high} < p_{req}`: the data show it is not;
    * "undecided" otherwise: more trials are needed to tell.

    Each one-sided statement holds at level :math:`(1 - \\text{confidence})/2`
    (e.g. 97.5 % for a 0.95 interval). Counting failed trials as not met
    makes the verdict conservative: a "pass" is never helped by a crash.
    Even with every trial meeting it, "pass" needs
    :math:`n \\ge \\ln(\\alpha/2)/\\ln p_{req}` trials
    (:func:`~wavebench.analysis.stats.min_trials_to_pass`).

    The reported quantile is the value the metric stays below with
    probability :math:`p_{req}` (level :math:`p_{req}` for "below",
    :math:`1 - p_{req}` for "above"), estimated by ``np.quantile`` over the
    trials with a value, with a percentile-bootstrap interval
    (:func:`~wavebench.analysis.stats.bootstrap_quantile`); it shows by how
    much the threshold is met or missed. It is NaN when fewer than 2 trials
    have a value. Because it leaves out failed trials, it describes the trials
    that produced a value; the pass/fail verdict is the probability test alone.

    References
    ----------
    .. [1] C. J. Clopper and E. S. Pearson, Biometrika 26(4), 404-413, 1934.
    .. [2] B. Efron and R. J. Tibshirani, An Introduction to the Bootstrap,
       Chapman & Hall, 1993.

    Examples
    --------
    >>> v = evaluate_requirement("clearance", [3.0, 2.5, float("nan"), 0.4], metric="min_depth_under_keel_m",
    ...                          comparator="above", threshold=1.0, probability=0.9, unit="m",
    ...                          rng=np.random.default_rng(0))
    >>> v.n_met, v.n_failed, v.verdict
    (2, 1, 'undecided')
    """
    name = _check_name(name, "name")
    metric = _check_name(metric, "metric")
    if comparator not in COMPARATORS:
        raise ParameterError("comparator", comparator, f"must be one of {COMPARATORS}")
    if (
        isinstance(threshold, (bool, np.bool_))
        or not isinstance(threshold, (int, float, np.integer, np.floating))
        or not math.isfinite(float(threshold))
    ):
        raise ParameterError("threshold", threshold, "must be a finite number")
    threshold_f = float(threshold)
    p_req = _check_unit_interval(probability, "probability")
    conf = _check_unit_interval(confidence, "confidence")
    if not isinstance(unit, str):
        raise ParameterError("unit", unit, "must be a string")
    if isinstance(n_resamples, (bool, np.bool_)) or not isinstance(n_resamples, (int, np.integer)) or n_resamples < 1:
        raise ParameterError("n_resamples", n_resamples, "must be a whole number >= 1")
    if not isinstance(rng, np.random.Generator):
        raise ParameterError("rng", rng, "must be a numpy.random.Generator (e.g. np.random.default_rng(seed))")

    arr = np.asarray(values)
    if arr.dtype.kind not in "iuf":
        raise ParameterError("values", values, "must be an array of numbers (NaN for failed trials)")
    arr = arr.astype(np.float64)
    if arr.ndim != 1 or arr.size == 0:
        raise ParameterError("values", arr, "must be a non-empty 1-D array of shape (n_trials,)")
    if np.isinf(arr).any():
        raise ParameterError("values", arr, "must be finite numbers, or NaN for failed trials")

    has_value = ~np.isnan(arr)
    n_trials = int(arr.size)
    n_failed = int(n_trials - np.count_nonzero(has_value))
    valid = arr[has_value]
    met = valid < threshold_f if comparator == "below" else valid > threshold_f
    n_met = int(np.count_nonzero(met))

    p_low, p_high = clopper_pearson(n_met, n_trials, conf)
    if p_low >= p_req:
        outcome = "pass"
    elif p_high < p_req:
        outcome = "fail"
    else:
        outcome = "undecided"

    level = p_req if comparator == "below" else 1.0 - p_req
    if valid.size >= 2:
        q_value, q_low, q_high = bootstrap_quantile(valid, level, confidence=conf, n_resamples=n_resamples, rng=rng)
    else:
        q_value = q_low = q_high = math.nan

    return Verdict(
        name=name,
        metric=metric,
        comparator=comparator,
        threshold=threshold_f,
        probability=p_req,
        confidence=conf,
        n_trials=n_trials,
        n_met=n_met,
        n_failed=n_failed,
        p_hat=n_met / n_trials,
        p_low=float(p_low),
        p_high=float(p_high),
        verdict=outcome,
        quantile_level=level,
        quantile_value=q_value,
        quantile_low=q_low,
        quantile_high=q_high,
        unit=unit,
    )


def verdicts_table_text(verdicts: Iterable[Verdict]) -> str:
    """A fixed-width text table of verdicts for terminals and plain-text reports.

    Parameters
    ----------
    verdicts : iterable of Verdict

    Returns
    -------
    str
        A header line, a rule, one line per verdict and a closing line naming
        the intervals (no trailing newline). Columns: requirement, condition
        (metric, comparator, threshold), required probability, trials, trials
        met, trials without a value ("no value": failed, or the event never
        came), estimated probability with its Clopper–Pearson
        interval, the metric's quantile with its bootstrap interval (in the
        metric's unit), verdict. When the verdicts use different confidence
        levels each interval is followed by its level.

    Examples
    --------
    >>> v = Verdict(name="xte", metric="xte_p95_m", comparator="below", threshold=2.0, probability=0.9,
    ...             confidence=0.95, n_trials=40, n_met=38, n_failed=1, p_hat=0.95, p_low=0.831, p_high=0.994,
    ...             verdict="undecided", quantile_level=0.9, quantile_value=1.4, quantile_low=1.3, quantile_high=1.6,
    ...             unit="m")
    >>> print(verdicts_table_text([v]))
    requirement  condition        P req   n  met  no value  P met  interval        quantile                verdict
    -----------  ---------------  -----  --  ---  --------  -----  --------------  ----------------------  ---------
    xte          xte_p95_m < 2 m   0.90  40   38         1  0.950  [0.831, 0.994]  q0.90 = 1.4 [1.3, 1.6]  UNDECIDED
    intervals: 95% two-sided (Clopper-Pearson for P met, percentile bootstrap for the quantile)
    """
    verdicts = list(verdicts)
    header = ("requirement", "condition", "P req", "n", "met", "no value", "P met", "interval", "quantile", "verdict")
    right = {2, 3, 4, 5, 6}
    levels = sorted({v.confidence for v in verdicts})
    mixed = len(levels) > 1
    rows = [header]
    for v in verdicts:
        suffix = f" ({v.confidence * 100:g}%)" if mixed else ""
        level = f"q{_fmt_probability(v.quantile_level)}"
        if math.isnan(v.quantile_value):
            quantile = f"{level} = n/a"
        else:
            quantile = f"{level} = {v.quantile_value:.4g} [{v.quantile_low:.4g}, {v.quantile_high:.4g}]{suffix}"
        rows.append(
            (
                v.name,
                f"{v.metric} {_SYMBOL[v.comparator]} {_with_unit(_fmt_number(v.threshold), v.unit)}",
                _fmt_probability(v.probability),
                str(v.n_trials),
                str(v.n_met),
                str(v.n_failed),
                f"{v.p_hat:.3f}",
                f"[{v.p_low:.3f}, {v.p_high:.3f}]{suffix}",
                quantile,
                v.verdict.upper(),
            )
        )
    widths = [max(len(row[i]) for row in rows) for i in range(len(header))]
    lines = []
    for j, row in enumerate(rows):
        cells = [
            cell.rjust(w) if i in right else cell.ljust(w) for i, (cell, w) in enumerate(zip(row, widths, strict=True))
        ]
        lines.append("  ".join(cells).rstrip())
        if j == 0:
            lines.append("  ".join("-" * w for w in widths))
    level_text = "at each row's confidence" if mixed else (f"{levels[0] * 100:g}%" if levels else "")
    lines.append(
        f"intervals: {level_text} two-sided (Clopper-Pearson for P met, percentile bootstrap for the quantile)"
    )
    return "\n".join(lines)
