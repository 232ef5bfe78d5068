"""Filter consistency statistics: NEES, NIS and their chi-square bounds.

For a consistent filter the normalised estimation error squared

    NEES = e' P^-1 e,    e = x_true - x_hat   (n_state degrees of freedom)

and the normalised innovation squared ``NIS = y' S^-1 y`` (``n_meas``
degrees of freedom) are chi-square distributed. The average of ``N``
independent such values, multiplied by ``N``, is chi-square with
``N * dim`` degrees of freedom, so the two-sided ``confidence`` region of the
average is

    [chi2.ppf((1 - c)/2, N dim) / N,  chi2.ppf((1 + c)/2, N dim) / N]

(Bar-Shalom et al. 2001, chapter on filter consistency). The usual uses:

- ensemble average over ``N`` independent Monte Carlo runs at each time
  (:func:`ensemble_averaged_nees`): the runs are independent, so the bound
  holds as stated;
- time average over ``K`` steps of one run (:func:`time_averaged_nees`):
  exact for the NIS of an optimal filter (its innovations are white);
  approximate for the NEES, whose errors are correlated in time.

An average above the region means the filter is optimistic (its covariance
too small, e.g. process noise understated); below means pessimistic.

References
----------
.. [1] Y. Bar-Shalom, X. R. Li and T. Kirubarajan, Estimation with
   Applications to Tracking and Navigation, Wiley (2001): NEES and NIS
   tests, N-run averages and their chi-square regions.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray
from scipy.stats import chi2

from ..core.errors import ParameterError
from ..core.params import Bounds, check_value
from .kalman import _float_array

__all__ = ["ensemble_averaged_nees", "nees", "nees_bounds", "nis", "time_averaged_nees"]

FloatArray = NDArray[np.float64]


def _quadratic_form(err_name: str, err: ArrayLike, cov_name: str, cov: ArrayLike) -> FloatArray:
    e = _float_array(err_name, err)
    if e.ndim < 1 or e.shape[-1] < 1:
        raise ParameterError(err_name, e, "must have shape (..., dim)")
    C = _float_array(cov_name, cov)
    dim = e.shape[-1]
    if C.shape != (*e.shape, dim):
        raise ParameterError(cov_name, C, f"must have shape {(*e.shape, dim)} to match {err_name}")
    return np.sum(e * np.linalg.solve(C, e[..., None])[..., 0], axis=-1)


def nees(err: ArrayLike, P: ArrayLike) -> FloatArray:
    """Normalised estimation error squared ``e' P^-1 e``.

    Parameters
    ----------
    err : array_like of shape (..., n_state)
        Estimation error ``x_true - x_hat`` (e.g. ``(n_trials, n_state)`` or
        ``(n_trials, n_steps, n_state)``).
    P : array_like of shape (..., n_state, n_state)
        The filter's covariance at the same instants.

    Returns
    -------
    ndarray of shape (...)
        NEES per leading index; NaN where ``err`` holds NaN.

    Examples
    --------
    >>> nees([[1.0, 2.0]], [np.diag([1.0, 4.0])])
    array([2.])
    """
    return _quadratic_form("err", err, "P", P)


def nis(innovation: ArrayLike, S: ArrayLike) -> FloatArray:
    """Normalised innovation squared ``y' S^-1 y``.

    Parameters
    ----------
    innovation : array_like of shape (..., n_meas)
        Innovations; NaN rows (no measurement) give NaN.
    S : array_like of shape (..., n_meas, n_meas)
        Innovation covariances.

    Returns
    -------
    ndarray of shape (...)
        NIS per leading index.

    Examples
    --------
    >>> nis([[3.0]], [[[9.0]]])
    array([1.])
    """
    return _quadratic_form("innovation", innovation, "S", S)


_DIM = Bounds(ge=1, integer=True)
_CONF = Bounds(gt=0.0, lt=1.0)


def nees_bounds(dim: int, n_runs: int, confidence: float = 0.95) -> tuple[float, float]:
    """Two-sided chi-square region of an average of ``n_runs`` NEES (or NIS) values.

    Parameters
    ----------
    dim : int
        Degrees of freedom of one value (state dimension for the NEES,
        measurement dimension for the NIS).
    n_runs : int
        Number of independent values averaged (Monte Carlo runs, or time
        steps for a time average).
    confidence : float
        Probability inside the region, in (0, 1) (default 0.95).

    Returns
    -------
    (float, float)
        Lower and upper bound on the average,
        ``chi2.ppf((1 -/+ confidence)/2, n_runs*dim) / n_runs``.

    Examples
    --------
    >>> lo, hi = nees_bounds(2, 50)
    >>> round(lo, 3), round(hi, 3)
    (1.484, 2.591)
    """
    d = check_value("dim", dim, _DIM)
    n = check_value("n_runs", n_runs, _DIM)
    c = check_value("confidence", confidence, _CONF)
    df = int(n) * int(d)
    lo = float(chi2.ppf(0.5 * (1.0 - c), df)) / n
    hi = float(chi2.ppf(0.5 * (1.0 + c), df)) / n
    return lo, hi


def _nan_mean(values: ArrayLike, axis: int) -> FloatArray:
    v = _float_array("values", values)
    if v.ndim != 2:
        raise ParameterError("values", v, "must have shape (n_trials, n_steps)")
    ok = np.isfinite(v)
    count = ok.sum(axis=axis)
    total = np.where(ok, v, 0.0).sum(axis=axis)
    out = np.full(count.shape, np.nan)
    np.divide(total, count, out=out, where=count > 0)
    return out


def time_averaged_nees(values: ArrayLike) -> FloatArray:
    """Time average of NEES (or NIS) per trial, skipping NaN entries.

    Parameters
    ----------
    values : array_like of shape (n_trials, n_steps)
        NEES or NIS per trial and step; NaN marks steps without a value.

    Returns
    -------
    ndarray of shape (n_trials,)
        Mean over the finite entries of each row (NaN for a row with none).
        Compare with :func:`nees_bounds` with ``n_runs`` = number of finite
        entries of the row.

    Examples
    --------
    >>> time_averaged_nees([[1.0, 3.0, np.nan], [2.0, 2.0, 2.0]])
    array([2., 2.])
    """
    return _nan_mean(values, axis=1)


def ensemble_averaged_nees(values: ArrayLike) -> FloatArray:
    """Average of NEES (or NIS) over trials at each step, skipping NaN entries.

    Parameters
    ----------
    values : array_like of shape (n_trials, n_steps)
        NEES or NIS per trial and step from independent runs.

    Returns
    -------
    ndarray of shape (n_steps,)
        Mean over the finite entries of each column. Compare with
        :func:`nees_bounds` with ``n_runs`` = number of runs averaged.

    Examples
    --------
    >>> ensemble_averaged_nees([[1.0, 3.0], [3.0, np.nan]])
    array([2., 3.])
    """
    return _nan_mean(values, axis=0)
