"""Sequential verdicts: stop a campaign as soon as every requirement is decided.

A campaign that runs in batches can look at its requirements after each
batch and stop when all of them are decided. Checking an ordinary
fixed-confidence interval at every look inflates the error rate: with many
looks, a random walk of the estimate crosses a fixed-level boundary far more
often than the level says. This module keeps the error rate at the chosen
confidence across all looks of a fixed schedule, by spending the error
probability over the looks (a union bound):

* :class:`SequentialPlan` fixes the schedule in advance: the first look, a
  look every so many trials, and a cap on the trials.
* :func:`sequential_interval` and :func:`sequential_decision` give the
  Clopper–Pearson interval and the "pass" / "fail" / "undecided" decision at
  the k-th look, at the look's corrected confidence.
* :class:`SequentialMonitor` takes batch results for several requirements,
  freezes each requirement's decision at the look where it was first made
  and says when the campaign may stop.
* :func:`zero_failure_upper_bound` is the exact form of the "rule of three"
  for a requirement no trial has missed yet.

Examples
--------
>>> plan = SequentialPlan(confidence=0.95, max_trials=1000, first_look=50, look_every=50)
>>> plan.n_looks, plan.trials_at(1), plan.trials_at(plan.n_looks)
(20, 50, 1000)
>>> round(plan.look_confidence(1), 4), round(plan.look_confidence(2), 4)
(0.9696, 0.9924)
>>> sequential_decision(50, 50, 0.9, 1, plan), sequential_decision(30, 50, 0.9, 1, plan)
('pass', 'fail')
>>> plan.min_trials_to_pass(0.95)  # no miss at all: passes at the third look, not after 72 trials
150
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np
import pandas as pd

from wavebench.core.errors import ParameterError
from wavebench.core.params import Params, bounded

from .stats import clopper_pearson, min_trials_to_pass

__all__ = [
    "SequentialMonitor",
    "SequentialPlan",
    "SequentialStatus",
    "sequential_decision",
    "sequential_interval",
    "zero_failure_upper_bound",
]

_DECISIONS = ("pass", "fail", "undecided")


@dataclass(frozen=True, kw_only=True)
class SequentialPlan(Params):
    """A fixed schedule of looks at a campaign's requirements.

    The looks come after ``first_look`` trials, then every ``look_every``
    trials, and a last one at ``max_trials`` (even when it is off that grid).
    The schedule must be fixed before the campaign runs: the error guarantee
    holds for a schedule that does not depend on the results.

    Parameters
    ----------
    confidence : float
        Two-sided confidence level, in (0, 1), that holds across all looks
        together (the same meaning as in
        :func:`~wavebench.analysis.verdicts.evaluate_requirement` for one look).
    max_trials : int
        Cap on the trials, >= 1; the last look is made there.
    first_look : int
        Trials before the first look, in [1, max_trials].
    look_every : int
        Trials between looks, >= 1.

    Notes
    -----
    With :math:`\\alpha = 1 - \\text{confidence}`, look :math:`k = 1, 2, \\dots`
    uses the Clopper–Pearson interval at confidence :math:`1 - \\alpha_k` with

    .. math::

        \\alpha_k = \\frac{6\\,\\alpha}{\\pi^2 k^2}, \\qquad
        \\sum_{k=1}^{\\infty} \\alpha_k = \\alpha

    (Euler's sum :math:`\\sum 1/k^2 = \\pi^2/6`). By the union bound (Boole's
    inequality), the probability that any look's interval misses the true
    probability is at most :math:`\\sum_k \\alpha_k = \\alpha`, whatever the
    number of looks, and each one-sided miss at most :math:`\\alpha/2`. The
    cap is not used in :math:`\\alpha_k`, so raising ``max_trials`` later
    keeps the earlier looks valid. The price is a wider interval than a single
    look at :math:`1 - \\alpha` would give: more trials before a decision.

    This is the elementary union-bound construction of a confidence sequence
    (intervals that hold at all looks at once, [2]_) over a fixed look
    schedule. Mixture-martingale confidence sequences [3]_ are narrower at
    large trial counts and allow a look after every trial; they are not
    used here.

    References
    ----------
    .. [1] C. J. Clopper and E. S. Pearson, "The use of confidence or fiducial
       limits illustrated in the case of the binomial", Biometrika 26(4),
       404-413, 1934.
    .. [2] D. A. Darling and H. Robbins, "Confidence sequences for mean,
       variance, and median", Proc. Natl. Acad. Sci. USA 58(1), 66-68, 1967.
    .. [3] S. R. Howard, A. Ramdas, J. McAuliffe and J. Sekhon, "Time-uniform,
       nonparametric, nonasymptotic confidence sequences", Annals of
       Statistics 49(2), 1055-1080, 2021.
    """

    confidence: float = bounded(0.95, gt=0.0, lt=1.0, doc="two-sided confidence across all looks")
    max_trials: int = bounded(1000, ge=1, integer=True, doc="cap on the trials; the last look")
    first_look: int = bounded(50, ge=1, integer=True, doc="trials before the first look")
    look_every: int = bounded(50, ge=1, integer=True, doc="trials between looks")

    def _check(self) -> None:
        for f in dataclasses.fields(self):
            value = getattr(self, f.name)
            if isinstance(value, np.ndarray):
                raise ParameterError(f.name, value, "must be a single number (a plan is not per trial)")
        if self.first_look > self.max_trials:
            raise ParameterError("first_look", self.first_look, f"must be <= max_trials = {self.max_trials}")

    @property
    def n_looks(self) -> int:
        """Number of looks in the schedule (the last one at ``max_trials``)."""
        return 1 + math.ceil((self.max_trials - self.first_look) / self.look_every)

    def _check_look(self, look_index: Any) -> int:
        if isinstance(look_index, (bool, np.bool_)) or not isinstance(look_index, (int, np.integer)):
            raise ParameterError("look_index", look_index, f"must be a whole number in [1, {self.n_looks}]")
        k = int(look_index)
        if not 1 <= k <= self.n_looks:
            raise ParameterError("look_index", look_index, f"must be a whole number in [1, {self.n_looks}]")
        return k

    def trials_at(self, look_index: int) -> int:
        """Trials seen at look ``look_index`` (1-based).

        Parameters
        ----------
        look_index : int
            Look number, in [1, ``n_looks``].

        Returns
        -------
        int
            ``min(first_look + (look_index - 1) * look_every, max_trials)``.
        """
        k = self._check_look(look_index)
        return min(self.first_look + (k - 1) * self.look_every, self.max_trials)

    def looks(self) -> np.ndarray:
        """Trials at every look, an int64 array of shape (n_looks,), increasing."""
        return np.array([self.trials_at(k) for k in range(1, self.n_looks + 1)], dtype=np.int64)

    def look_alpha(self, look_index: int) -> float:
        """Error probability spent at look ``look_index``: ``6 (1 - confidence) / (pi^2 k^2)``."""
        k = self._check_look(look_index)
        return 6.0 * (1.0 - self.confidence) / (math.pi**2 * k**2)

    def look_confidence(self, look_index: int) -> float:
        """Two-sided confidence of the Clopper–Pearson interval at look ``look_index``: ``1 - look_alpha``."""
        return 1.0 - self.look_alpha(look_index)

    def min_trials_to_pass(self, probability: float) -> int | None:
        """Fewest trials with which a requirement can pass on this schedule.

        Parameters
        ----------
        probability : float
            Required probability of meeting the requirement, in (0, 1).

        Returns
        -------
        int or None
            Trials at the first look at which a record without a single miss
            passes; None if no look up to ``max_trials`` can pass it.

        Notes
        -----
        With all :math:`n_k` trials met, look :math:`k` passes when
        :math:`n_k \\ge \\ln(\\alpha_k/2)/\\ln p`, which is
        :func:`wavebench.analysis.stats.min_trials_to_pass` at the look's
        confidence :math:`1 - \\alpha_k`. The bound grows with :math:`k`, so
        the first look that reaches it is searched for.
        """
        for k in range(1, self.n_looks + 1):
            n_k = self.trials_at(k)
            if n_k >= min_trials_to_pass(probability, self.look_confidence(k)):
                return n_k
        return None


def _check_probability(value: Any, field: str) -> float:
    if isinstance(value, (bool, np.bool_)) or not isinstance(value, (int, float, np.integer, np.floating)):
        raise ParameterError(field, value, "must be a number strictly between 0 and 1")
    out = float(value)
    if not 0.0 < out < 1.0:
        raise ParameterError(field, value, "must be a number strictly between 0 and 1")
    return out


def _check_plan(plan: Any) -> SequentialPlan:
    if not isinstance(plan, SequentialPlan):
        raise ParameterError("plan", plan, "must be a SequentialPlan")
    return plan


def sequential_interval(
    n_met: Any, n_trials: int, look_index: int, plan: SequentialPlan
) -> tuple[np.ndarray | float, np.ndarray | float]:
    """Clopper–Pearson interval for P(met) at a look, at the look's corrected confidence.

    Parameters
    ----------
    n_met : int or array_like of int
        Trials that met the requirement among the first ``n_trials``;
        an array gives one interval per entry (e.g. per simulated campaign).
    n_trials : int
        Trials seen; must equal ``plan.trials_at(look_index)``.
    look_index : int
        Look number, 1-based.
    plan : SequentialPlan
        The schedule.

    Returns
    -------
    low, high : float or ndarray of the shape of n_met
        The two-sided Clopper–Pearson interval at confidence
        ``plan.look_confidence(look_index)``.

    Raises
    ------
    ParameterError
        For a look outside the schedule, ``n_trials`` that is not the
        schedule's count at that look, or counts outside [0, n_trials].
    """
    plan = _check_plan(plan)
    expected = plan.trials_at(look_index)
    if isinstance(n_trials, (bool, np.bool_)) or not isinstance(n_trials, (int, np.integer)) or n_trials != expected:
        raise ParameterError(
            "n_trials", n_trials, f"must equal the plan's {expected} trials at look {look_index} (a fixed schedule)"
        )
    return clopper_pearson(n_met, int(n_trials), plan.look_confidence(look_index))


def sequential_decision(
    n_met: Any, n_trials: int, probability: float, look_index: int, plan: SequentialPlan
) -> str | np.ndarray:
    """Decide a requirement at a look of a sequential plan.

    Parameters
    ----------
    n_met : int or array_like of int
        Trials that met the requirement among the first ``n_trials``
        (a trial without a value counts as not met, as in
        :func:`~wavebench.analysis.verdicts.evaluate_requirement`).
    n_trials : int
        Trials seen; must equal ``plan.trials_at(look_index)``.
    probability : float
        Required probability of meeting the requirement, in (0, 1).
    look_index : int
        Look number, 1-based, in [1, ``plan.n_looks``].
    plan : SequentialPlan
        The schedule and the overall confidence.

    Returns
    -------
    str or ndarray of str
        "pass" if the look's lower bound is >= ``probability``, "fail" if its
        upper bound is < ``probability``, else "undecided"; an array of the
        shape of ``n_met`` when ``n_met`` is an array.

    Raises
    ------
    ParameterError
        As for :func:`sequential_interval`, and for a probability outside (0, 1).

    Notes
    -----
    The interval is that of :func:`sequential_interval`, at confidence
    :math:`1 - \\alpha_k` (:class:`SequentialPlan`). Once a look decides, the
    decision should be kept (:class:`SequentialMonitor` does): the chance that
    any look of the plan wrongly says "fail" when the true probability is at
    least ``probability`` is at most :math:`\\alpha/2`, and likewise for a
    wrong "pass", so the first decision is wrong at most that often.

    Examples
    --------
    >>> plan = SequentialPlan(confidence=0.95, max_trials=200, first_look=20, look_every=20)
    >>> sequential_decision([20, 15, 10], 20, 0.9, 1, plan)
    array(['undecided', 'undecided', 'fail'], dtype='<U9')
    """
    p_req = _check_probability(probability, "probability")
    low, high = sequential_interval(n_met, n_trials, look_index, plan)
    out = np.where(np.asarray(low) >= p_req, "pass", np.where(np.asarray(high) < p_req, "fail", "undecided"))
    return str(out) if out.ndim == 0 else out


def zero_failure_upper_bound(n_trials: Any, confidence: float = 0.95) -> np.ndarray | float:
    """One-sided upper bound on the miss probability after ``n_trials`` without a miss.

    Parameters
    ----------
    n_trials : int or array_like of int
        Trials, all of which met the requirement, >= 1.
    confidence : float, optional
        One-sided confidence level in (0, 1), default 0.95.

    Returns
    -------
    float or ndarray of the shape of n_trials
        :math:`1 - (1 - c)^{1/n}`.

    Raises
    ------
    ParameterError
        For ``n_trials`` that are not whole numbers >= 1, or a confidence
        outside (0, 1).

    Notes
    -----
    If a trial misses with probability :math:`q`, the chance of :math:`n`
    trials without a miss is :math:`(1 - q)^n`; the one-sided exact
    (Clopper–Pearson) upper bound is the :math:`q` at which that chance equals
    :math:`1 - c`:

    .. math::

        q_{up} = 1 - (1 - c)^{1/n} \\approx \\frac{-\\ln(1 - c)}{n},

    about :math:`3/n` at 95 % ("rule of three", since :math:`-\\ln 0.05 =
    2.996`). The approximation is a slight overestimate and good to a few per
    cent for :math:`n \\ge 30`. Turned round, a requirement "met with
    probability at least :math:`p`" needs :math:`n \\ge \\ln(1 - c)/\\ln p`
    trials without a miss at one-sided confidence :math:`c`;
    :func:`~wavebench.analysis.stats.min_trials_to_pass` gives the two-sided
    form used by verdicts (:math:`\\ln(\\alpha/2)/\\ln p`), and
    :meth:`SequentialPlan.min_trials_to_pass` the form for a sequential plan.

    References
    ----------
    .. [1] J. A. Hanley and A. Lippman-Hand, "If nothing goes wrong, is
       everything all right? Interpreting zero numerators", JAMA 249(13),
       1743-1745, 1983.
    .. [2] C. J. Clopper and E. S. Pearson, Biometrika 26(4), 404-413, 1934.

    Examples
    --------
    >>> round(zero_failure_upper_bound(100), 5), 3 / 100
    (0.02951, 0.03)
    """
    n = np.asarray(n_trials)
    if n.dtype.kind not in "iuf" or n.size == 0:
        raise ParameterError("n_trials", n_trials, "must be whole numbers >= 1")
    n = n.astype(np.float64)
    if not np.isfinite(n).all() or (n != np.floor(n)).any() or (n < 1).any():
        raise ParameterError("n_trials", n_trials, "must be whole numbers >= 1")
    conf = _check_probability(confidence, "confidence")
    # 1 - exp(ln(1-c)/n) without cancellation for large n.
    out = -np.expm1(np.log1p(-conf) / n)
    return float(out) if out.ndim == 0 else out


@dataclass(frozen=True)
class SequentialStatus:
    """Where one requirement stands in a sequential campaign.

    Parameters
    ----------
    name : str
        The requirement's name.
    probability : float
        Required probability of meeting it.
    decision : {"pass", "fail", "undecided"}
        The decision, frozen at the look that made it; "undecided" until then
        (and for good when the cap is reached without one).
    look_index : int
        The look that decided it, or the latest look so far if undecided
        (0 before the first look).
    n_trials : int
        Trials at that look: for a decided requirement, the trials it needed.
    n_met : int
        Trials among those that met it.
    p_low, p_high : float
        The look's Clopper–Pearson interval for P(met) at ``look_confidence``
        (NaN before the first look).
    look_confidence : float
        Two-sided confidence of that interval, ``1 - alpha_k`` (NaN before the
        first look).
    zero_failure_bound : float
        If no trial up to the look missed: the one-sided upper bound on the
        miss probability at level ``1 - alpha_k``
        (:func:`zero_failure_upper_bound`), which holds across all looks of
        the plan together at the plan's confidence — the rule of three for a
        sequential campaign. NaN if any trial missed or before the first look.
    min_trials_to_pass : int or None
        Trials at which the requirement would pass if no trial missed
        (:meth:`SequentialPlan.min_trials_to_pass`); None if the cap is too low.
    """

    name: str
    probability: float
    decision: str
    look_index: int
    n_trials: int
    n_met: int
    p_low: float
    p_high: float
    look_confidence: float
    zero_failure_bound: float
    min_trials_to_pass: int | None


class SequentialMonitor:
    """Follow several requirements over the batches of a campaign.

    Parameters
    ----------
    plan : SequentialPlan
        The look schedule and the confidence.
    requirements : mapping of str to float
        Requirement name -> required probability of meeting it, in (0, 1).

    Notes
    -----
    Feed :meth:`update` the per-trial "met" flags of each batch, in trial
    order (the flags of trial ``i`` for every requirement come from the same
    trial). Batches need not line up with the looks: a look is made at
    exactly the scheduled number of trials, from the flags of the first that
    many trials. A requirement's decision is kept from the first look that
    decides it. The campaign may stop when every requirement is decided or
    the cap is reached.

    The error guarantee of :class:`SequentialPlan` holds for each requirement
    on its own. For all requirements together, the chance that at least one
    decision is wrong can reach the sum over requirements; for a joint
    guarantee give the plan ``confidence = 1 - alpha / n_requirements``
    (Bonferroni).

    Examples
    --------
    >>> plan = SequentialPlan(confidence=0.95, max_trials=400, first_look=40, look_every=40)
    >>> mon = SequentialMonitor(plan, {"xte": 0.95, "arrival": 0.99})
    >>> for _ in range(4):
    ...     _ = mon.update({"xte": np.ones(40, bool), "arrival": np.ones(40, bool)})
    >>> s = mon.statuses["xte"]
    >>> s.decision, s.n_trials, mon.may_stop
    ('pass', 160, False)
    >>> mon.statuses["arrival"].min_trials_to_pass is None  # 0.99 cannot pass within 400 trials
    True
    """

    def __init__(self, plan: SequentialPlan, requirements: Mapping[str, float]) -> None:
        self._plan = _check_plan(plan)
        if not isinstance(requirements, Mapping) or not requirements:
            raise ParameterError("requirements", requirements, "must be a non-empty mapping of name to probability")
        self._required: dict[str, float] = {}
        for name, p in requirements.items():
            if not isinstance(name, str) or not name.strip():
                raise ParameterError("requirements", name, "names must be non-empty strings")
            self._required[name] = _check_probability(p, f"requirements[{name!r}]")
        self._n_trials = 0
        self._n_met = dict.fromkeys(self._required, 0)
        self._next_look = 1
        self._statuses = {
            name: SequentialStatus(
                name=name,
                probability=p,
                decision="undecided",
                look_index=0,
                n_trials=0,
                n_met=0,
                p_low=math.nan,
                p_high=math.nan,
                look_confidence=math.nan,
                zero_failure_bound=math.nan,
                min_trials_to_pass=plan.min_trials_to_pass(p),
            )
            for name, p in self._required.items()
        }

    @property
    def plan(self) -> SequentialPlan:
        """The schedule."""
        return self._plan

    @property
    def n_trials(self) -> int:
        """Trials received so far."""
        return self._n_trials

    @property
    def remaining(self) -> int:
        """Trials that may still be received before the cap."""
        return self._plan.max_trials - self._n_trials

    @property
    def statuses(self) -> dict[str, SequentialStatus]:
        """Each requirement's status, in the order given (a new dict)."""
        return dict(self._statuses)

    @property
    def all_decided(self) -> bool:
        """True when every requirement has a "pass" or "fail" decision."""
        return all(s.decision != "undecided" for s in self._statuses.values())

    @property
    def may_stop(self) -> bool:
        """True when every requirement is decided or the cap is reached."""
        return self.all_decided or self._n_trials >= self._plan.max_trials

    def update(self, met: Mapping[str, Any]) -> dict[str, SequentialStatus]:
        """Add one batch of trials and make the looks it reaches.

        Parameters
        ----------
        met : mapping of str to array_like of bool, each of shape (n_batch,)
            For every requirement (all of them, no others), whether each
            trial of the batch met it. The same ``n_batch`` for all.

        Returns
        -------
        dict of str to SequentialStatus
            :attr:`statuses` after the batch.

        Raises
        ------
        ParameterError
            For a missing or unknown requirement, flags that are not a 1-D
            boolean array, batches of different lengths, or a batch that
            would take the campaign past ``max_trials`` (send at most
            :attr:`remaining` trials).
        """
        if not isinstance(met, Mapping):
            raise ParameterError("met", met, "must be a mapping of requirement name to boolean flags")
        missing = [name for name in self._required if name not in met]
        if missing:
            raise ParameterError("met", missing[0], "a requirement without flags in this batch")
        unknown = [name for name in met if name not in self._required]
        if unknown:
            raise ParameterError("met", unknown[0], f"is not a requirement (known: {', '.join(self._required)})")
        flags: dict[str, np.ndarray] = {}
        size: int | None = None
        for name in self._required:
            arr = np.asarray(met[name])
            if arr.dtype.kind != "b" or arr.ndim != 1:
                raise ParameterError(f"met[{name!r}]", met[name], "must be a 1-D boolean array (one flag per trial)")
            if size is not None and arr.size != size:
                raise ParameterError(f"met[{name!r}]", met[name], f"must have the batch's {size} flags")
            size = arr.size
            flags[name] = arr
        assert size is not None
        if size > self.remaining:
            raise ParameterError(
                "met", f"{size} trials", f"must be at most the {self.remaining} trials left before max_trials"
            )
        start = self._n_trials
        end = start + size
        plan = self._plan
        while self._next_look <= plan.n_looks and plan.trials_at(self._next_look) <= end:
            k = self._next_look
            n_k = plan.trials_at(k)
            upto = n_k - start
            for name, arr in flags.items():
                status = self._statuses[name]
                if status.decision != "undecided":
                    continue
                n_met = self._n_met[name] + int(np.count_nonzero(arr[:upto]))
                low, high = sequential_interval(n_met, n_k, k, plan)
                decision = sequential_decision(n_met, n_k, status.probability, k, plan)
                zero = zero_failure_upper_bound(n_k, 1.0 - plan.look_alpha(k)) if n_met == n_k else math.nan
                self._statuses[name] = dataclasses.replace(
                    status,
                    decision=str(decision),
                    look_index=k,
                    n_trials=n_k,
                    n_met=n_met,
                    p_low=float(low),
                    p_high=float(high),
                    look_confidence=plan.look_confidence(k),
                    zero_failure_bound=float(zero),
                )
            self._next_look += 1
        for name, arr in flags.items():
            self._n_met[name] += int(np.count_nonzero(arr))
        self._n_trials = end
        return self.statuses

    def to_frame(self) -> pd.DataFrame:
        """The statuses as a table, one row per requirement, columns as :class:`SequentialStatus`."""
        rows = [dataclasses.asdict(s) for s in self._statuses.values()]
        return pd.DataFrame(rows, columns=[f.name for f in dataclasses.fields(SequentialStatus)])
