"""Confidence intervals for campaign statistics: binomial proportions and quantiles.

A campaign verdict asks two questions of the per-trial metrics:

* With what probability does a trial meet a requirement? The count of trials
  that met it is binomial, so :func:`clopper_pearson` (exact) and
  :func:`wilson` (score) give intervals for the probability, and
  :func:`min_trials_to_pass` says how many all-met trials are needed before
  such a requirement can pass at all.
* What value does the metric stay below with a given probability? That is a
  quantile of the metric, bracketed by :func:`bootstrap_quantile`.

All functions are pure numpy/scipy; the interval functions take scalars or
arrays (broadcast together) and the bootstrap draws only from the explicit
``rng`` it is given.

Examples
--------
>>> low, high = clopper_pearson(0, 10)
>>> low, round(high, 4)
(0.0, 0.3085)
>>> min_trials_to_pass(0.9)
36
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np
from scipy import stats

from wavebench.core.errors import ParameterError

__all__ = ["bootstrap_quantile", "clopper_pearson", "min_trials_to_pass", "wilson"]

#: Largest number of resample indices drawn at once by :func:`bootstrap_quantile`
#: (2**22 int64 indices = 32 MiB). A constant, so the draws for given inputs never
#: depend on the machine.
_CHUNK_ELEMENTS = 2**22


def _check_open_unit(value: Any, field: str) -> float:
    """A real number strictly between 0 and 1, as a float."""
    if isinstance(value, (bool, np.bool_)) or not isinstance(value, (int, float, np.integer, np.floating)):
        raise ParameterError(field, value, "must be a number strictly between 0 and 1")
    out = float(value)
    if not (0.0 < out < 1.0):
        raise ParameterError(field, value, "must be a number strictly between 0 and 1")
    return out


def _whole_array(value: Any, field: str) -> np.ndarray:
    """A numeric array of finite whole numbers (as float64), or ParameterError."""
    arr = np.asarray(value)
    if arr.dtype.kind not in "iuf":
        raise ParameterError(field, value, "must be a whole number or an array of whole numbers")
    arr = arr.astype(np.float64)
    if arr.size and (not np.isfinite(arr).all() or (arr != np.floor(arr)).any()):
        raise ParameterError(field, value, "must be finite whole numbers")
    return arr


def _check_counts(k: Any, n: Any) -> tuple[np.ndarray, np.ndarray]:
    """Validate success counts ``k`` out of ``n`` trials; broadcast them together."""
    k_arr = _whole_array(k, "k")
    n_arr = _whole_array(n, "n")
    if (n_arr < 1).any():
        raise ParameterError("n", n, "must be whole numbers >= 1")
    if (k_arr < 0).any():
        raise ParameterError("k", k, "must be whole numbers >= 0")
    try:
        k_b, n_b = np.broadcast_arrays(k_arr, n_arr)
    except ValueError:
        raise ParameterError("k", k, f"must broadcast against n of shape {n_arr.shape}") from None
    if (k_b > n_b).any():
        raise ParameterError("k", k, "must not exceed n (the number of trials)")
    return k_b, n_b


def _scalar_or_array(x: np.ndarray) -> np.ndarray | float:
    return float(x) if x.ndim == 0 else x


def clopper_pearson(k: Any, n: Any, confidence: float = 0.95) -> tuple[np.ndarray | float, np.ndarray | float]:
    """Exact two-sided confidence interval for a binomial probability.

    Parameters
    ----------
    k : int or array_like of int
        Number of successes (here: trials that met a requirement), ``0 <= k <= n``.
    n : int or array_like of int
        Number of trials, ``n >= 1``. Broadcast against ``k``.
    confidence : float, optional
        Two-sided confidence level in (0, 1), default 0.95.

    Returns
    -------
    low, high : float or ndarray of the broadcast shape of k and n
        Interval bounds for the success probability, in [0, 1]. Floats when
        both ``k`` and ``n`` are scalars.

    Raises
    ------
    ParameterError
        If ``k`` or ``n`` are not whole numbers with ``0 <= k <= n`` and
        ``n >= 1``, or ``confidence`` is outside (0, 1).

    Notes
    -----
    With :math:`\\alpha = 1 - \\text{confidence}`, the Clopper–Pearson
    interval is the set of probabilities not rejected by either one-sided
    binomial test at level :math:`\\alpha/2`. Its bounds are beta quantiles:

    .. math::

        p_{low} = B^{-1}(\\alpha/2;\\ k,\\ n - k + 1), \\qquad
        p_{high} = B^{-1}(1 - \\alpha/2;\\ k + 1,\\ n - k),

    with :math:`p_{low} = 0` when :math:`k = 0` and :math:`p_{high} = 1` when
    :math:`k = n`. For :math:`k = n` this gives
    :math:`p_{low} = (\\alpha/2)^{1/n}`. The interval is conservative: its
    coverage is at least the nominal confidence for every true probability.

    References
    ----------
    .. [1] C. J. Clopper and E. S. Pearson, "The use of confidence or fiducial
       limits illustrated in the case of the binomial", Biometrika 26(4),
       404-413, 1934.

    Examples
    --------
    >>> low, high = clopper_pearson(50, 50)
    >>> round(low, 4), high
    (0.9289, 1.0)
    >>> low, high = clopper_pearson([0, 5], 10)
    >>> low.shape
    (2,)
    """
    k_arr, n_arr = _check_counts(k, n)
    conf = _check_open_unit(confidence, "confidence")
    alpha = 1.0 - conf
    # Safe shape parameters where the closed-form edge value is used instead.
    a_low = np.where(k_arr > 0, k_arr, 1.0)
    b_high = np.where(k_arr < n_arr, n_arr - k_arr, 1.0)
    low = np.where(k_arr > 0, stats.beta.ppf(alpha / 2.0, a_low, n_arr - k_arr + 1.0), 0.0)
    high = np.where(k_arr < n_arr, stats.beta.ppf(1.0 - alpha / 2.0, k_arr + 1.0, b_high), 1.0)
    return _scalar_or_array(np.asarray(low, dtype=np.float64)), _scalar_or_array(np.asarray(high, dtype=np.float64))


def wilson(k: Any, n: Any, confidence: float = 0.95) -> tuple[np.ndarray | float, np.ndarray | float]:
    """Wilson score interval for a binomial probability (no continuity correction).

    Parameters
    ----------
    k : int or array_like of int
        Number of successes, ``0 <= k <= n``.
    n : int or array_like of int
        Number of trials, ``n >= 1``. Broadcast against ``k``.
    confidence : float, optional
        Two-sided confidence level in (0, 1), default 0.95.

    Returns
    -------
    low, high : float or ndarray of the broadcast shape of k and n
        Interval bounds in [0, 1]; floats when both inputs are scalars.

    Raises
    ------
    ParameterError
        As for :func:`clopper_pearson`.

    Notes
    -----
    With :math:`\\hat p = k/n` and :math:`z = \\Phi^{-1}(1 - \\alpha/2)`, the
    interval is the set of :math:`p` with
    :math:`|\\hat p - p| \\le z \\sqrt{p(1-p)/n}`:

    .. math::

        \\frac{\\hat p + \\frac{z^2}{2n} \\pm z\\sqrt{\\frac{\\hat p(1-\\hat p)}{n}
        + \\frac{z^2}{4n^2}}}{1 + \\frac{z^2}{n}}.

    The lower bound is exactly 0 at :math:`k = 0` and the upper bound exactly
    1 at :math:`k = n`; those two values are set directly to avoid rounding.
    Its coverage is close to nominal on average but can dip below it, unlike
    :func:`clopper_pearson`; verdicts use Clopper–Pearson.

    References
    ----------
    .. [1] E. B. Wilson, "Probable inference, the law of succession, and
       statistical inference", J. Am. Stat. Assoc. 22(158), 209-212, 1927.
    .. [2] R. G. Newcombe, "Two-sided confidence intervals for the single
       proportion: comparison of seven methods", Statistics in Medicine 17,
       857-872, 1998.

    Examples
    --------
    >>> low, high = wilson(5, 10)
    >>> round(low, 4), round(high, 4)
    (0.2366, 0.7634)
    """
    k_arr, n_arr = _check_counts(k, n)
    conf = _check_open_unit(confidence, "confidence")
    z = stats.norm.ppf(0.5 + 0.5 * conf)
    p_hat = k_arr / n_arr
    denom = 1.0 + z**2 / n_arr
    centre = (p_hat + z**2 / (2.0 * n_arr)) / denom
    half = z / denom * np.sqrt(p_hat * (1.0 - p_hat) / n_arr + z**2 / (4.0 * n_arr**2))
    low = np.where(k_arr > 0, np.clip(centre - half, 0.0, 1.0), 0.0)
    high = np.where(k_arr < n_arr, np.clip(centre + half, 0.0, 1.0), 1.0)
    return _scalar_or_array(np.asarray(low, dtype=np.float64)), _scalar_or_array(np.asarray(high, dtype=np.float64))


def min_trials_to_pass(probability: float, confidence: float = 0.95) -> int:
    """Fewest trials with which a requirement can pass, if every trial meets it.

    Parameters
    ----------
    probability : float
        Required probability of meeting the requirement, in (0, 1).
    confidence : float, optional
        Two-sided confidence level of the Clopper–Pearson interval, default 0.95.

    Returns
    -------
    int
        Smallest ``n`` for which ``clopper_pearson(n, n, confidence)[0] >= probability``.
        With fewer trials (or any trial not meeting it at this ``n``) the
        verdict cannot be "pass".

    Raises
    ------
    ParameterError
        If ``probability`` or ``confidence`` is outside (0, 1).

    Notes
    -----
    With all ``n`` trials meeting the requirement the lower Clopper–Pearson
    bound is :math:`(\\alpha/2)^{1/n}`, so the condition is

    .. math::

        n \\ge \\frac{\\ln(\\alpha/2)}{\\ln p}.

    This is the two-sided form of the zero-failure bound: after :math:`N`
    trials without a miss, the probability of a miss is below
    :math:`1 - \\alpha^{1/N}` (one-sided, level :math:`\\alpha`).

    References
    ----------
    .. [1] C. J. Clopper and E. S. Pearson, Biometrika 26(4), 404-413, 1934.

    Examples
    --------
    >>> min_trials_to_pass(0.95), min_trials_to_pass(0.99)
    (72, 368)
    """
    p = _check_open_unit(probability, "probability")
    conf = _check_open_unit(confidence, "confidence")
    half_alpha = (1.0 - conf) / 2.0
    n = max(1, math.ceil(math.log(half_alpha) / math.log(p)))
    # Guard the ceiling against rounding right at the boundary.
    while n > 1 and half_alpha ** (1.0 / (n - 1)) >= p:
        n -= 1
    while half_alpha ** (1.0 / n) < p:
        n += 1
    return n


def bootstrap_quantile(
    values: Any,
    q: float,
    *,
    confidence: float = 0.95,
    n_resamples: int = 2000,
    rng: np.random.Generator,
) -> tuple[float, float, float]:
    """Quantile of a sample with a percentile-bootstrap confidence interval.

    Parameters
    ----------
    values : array_like of shape (n_values,)
        The sample, e.g. one metric over the trials of a campaign, with
        ``n_values >= 2``. All values must be finite: remove NaN entries
        (failed trials) before calling — the quantile of the trials that
        produced a value is then what is estimated.
    q : float
        Quantile level in [0, 1] (0.95 for the 95th percentile).
    confidence : float, optional
        Two-sided confidence level in (0, 1), default 0.95.
    n_resamples : int, optional
        Number of bootstrap resamples, default 2000.
    rng : numpy.random.Generator
        Source of the resampling draws. The result is a deterministic
        function of the inputs and the generator's state.

    Returns
    -------
    estimate : float
        ``np.quantile(values, q)`` (numpy's default "linear" method, type 7
        of Hyndman & Fan).
    low, high : float
        Percentile-bootstrap interval for the quantile at ``confidence``.

    Raises
    ------
    ParameterError
        For a sample that is not 1-D, has fewer than 2 values or contains
        NaN or infinities; ``q`` outside [0, 1]; ``confidence`` outside (0, 1);
        ``n_resamples`` not a whole number >= 1; ``rng`` not a Generator.

    Notes
    -----
    Each of :math:`B` resamples draws :math:`n` values from the sample with
    replacement and computes the same quantile, giving
    :math:`\\hat\\theta^*_1, \\dots, \\hat\\theta^*_B`. With
    :math:`\\alpha = 1 - \\text{confidence}`, the percentile interval is

    .. math::

        [\\hat\\theta^*_{(\\alpha/2)},\\ \\hat\\theta^*_{(1-\\alpha/2)}],

    the :math:`\\alpha/2` and :math:`1-\\alpha/2` quantiles (numpy "linear"
    method) of the bootstrap replicates. The resample indices are drawn as
    ``(rows, n)`` integer arrays in chunks of at most 2**22 entries, so memory
    stays bounded for large campaigns. Near q = 0 or 1 the bootstrap interval
    of an extreme quantile is narrow and optimistic: it cannot reach beyond
    the sample's own minimum or maximum.

    References
    ----------
    .. [1] B. Efron, "Bootstrap methods: another look at the jackknife",
       Annals of Statistics 7(1), 1-26, 1979.
    .. [2] B. Efron and R. J. Tibshirani, An Introduction to the Bootstrap,
       Chapman & Hall, 1993, ch. 13 (percentile intervals).
    .. [3] R. J. Hyndman and Y. Fan, "Sample quantiles in statistical
       packages", The American Statistician 50(4), 361-365, 1996.

    Examples
    --------
    >>> rng = np.random.default_rng(1)
    >>> est, low, high = bootstrap_quantile(np.arange(101.0), 0.5, rng=rng)
    >>> est
    50.0
    >>> low < est < high
    True
    """
    arr = np.asarray(values)
    if arr.dtype.kind not in "iuf":
        raise ParameterError("values", values, "must be an array of numbers")
    arr = arr.astype(np.float64)
    if arr.ndim != 1:
        raise ParameterError("values", arr, f"must be 1-D (got {arr.ndim} dimensions)")
    if arr.size < 2:
        raise ParameterError("values", arr, "must hold at least 2 values")
    if not np.isfinite(arr).all():
        raise ParameterError("values", arr, "must be finite (remove NaN entries for failed trials first)")
    if isinstance(q, (bool, np.bool_)) or not isinstance(q, (int, float, np.integer, np.floating)):
        raise ParameterError("q", q, "must be a number in [0, 1]")
    q_f = float(q)
    if not (0.0 <= q_f <= 1.0):
        raise ParameterError("q", q, "must be a number in [0, 1]")
    conf = _check_open_unit(confidence, "confidence")
    if isinstance(n_resamples, (bool, np.bool_)) or not isinstance(n_resamples, (int, np.integer)) or n_resamples < 1:
        raise ParameterError("n_resamples", n_resamples, "must be a whole number >= 1")
    if not isinstance(rng, np.random.Generator):
        raise ParameterError("rng", rng, "must be a numpy.random.Generator (e.g. np.random.default_rng(seed))")

    estimate = float(np.quantile(arr, q_f))
    n = arr.size
    b = int(n_resamples)
    rows = max(1, _CHUNK_ELEMENTS // n)
    replicates = np.empty(b, dtype=np.float64)
    for start in range(0, b, rows):
        m = min(rows, b - start)
        idx = rng.integers(0, n, size=(m, n))
        replicates[start : start + m] = np.quantile(arr[idx], q_f, axis=1)
    alpha = 1.0 - conf
    low, high = np.quantile(replicates, [alpha / 2.0, 1.0 - alpha / 2.0])
    return estimate, float(low), float(high)
