"""Allan deviation of rate signals, and the Allan curve of a Gauss--Markov process.

The overlapping Allan deviation characterises the noise of a gyro or an
accelerometer from a record of its rate output: white rate noise (angle /
velocity random walk) falls as ``tau^-1/2``, bias instability (flicker)
gives a flat floor, rate random walk rises as ``tau^1/2``
(IEEE Std 952-1997, Allan variance annex).

References
----------
.. [1] IEEE Std 952-1997, *IEEE Standard Specification Format Guide and Test
   Procedure for Single-Axis Interferometric Fiber Optic Gyros*, Allan
   variance annex: definition from the integrated rate (angle) samples,
   ``sigma^2(tau) = 1/(2 tau^2 (N - 2m)) sum_k (theta_{k+2m} - 2 theta_{k+m}
   + theta_k)^2``, and the noise terms' slopes: ``N^2/tau`` (angle random
   walk), ``(2 ln 2/pi) B^2`` (bias instability), ``K^2 tau/3`` (rate random
   walk).
.. [2] W. J. Riley, *Handbook of Frequency Stability Analysis*, NIST Special
   Publication 1065 (2008): the overlapping Allan variance from phase data.
.. [3] N. El-Sheimy, H. Hou and X. Niu, "Analysis and modeling of inertial
   sensors using Allan variance", *IEEE Trans. Instrum. Meas.* 57(1), 2008:
   Allan variance of a first-order Gauss--Markov process,
   ``sigma^2(tau) = (q_c T_c)^2/tau [1 - T_c/(2 tau) (3 - 4 e^{-tau/T_c} +
   e^{-2 tau/T_c})]`` with driving-noise density ``q_c``, i.e.
   ``(q_c T_c)^2 = 2 sigma_GM^2 T_c`` for stationary standard deviation
   ``sigma_GM``.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ..core.errors import ParameterError

__all__ = [
    "FLICKER_FLOOR_FACTOR",
    "GM_ADEV_PEAK_RATIO",
    "GM_ADEV_PEAK_TAU_RATIO",
    "allan_deviation",
    "allan_taus",
    "gauss_markov_allan_variance",
]

#: Allan-deviation floor of flicker rate noise per unit bias-instability
#: coefficient ``B``: ``sqrt(2 ln 2 / pi) = 0.6643`` (IEEE Std 952-1997).
FLICKER_FLOOR_FACTOR = math.sqrt(2.0 * math.log(2.0) / math.pi)

#: ``tau / T_c`` at the maximum of a first-order Gauss--Markov process's Allan
#: deviation: the maximiser of the El-Sheimy et al. (2008) closed form
#: (:func:`gauss_markov_allan_variance`), found numerically (1.8926).
GM_ADEV_PEAK_TAU_RATIO = 1.8926178354517893

#: That maximum Allan deviation per unit stationary standard deviation
#: ``sigma_GM`` (0.6174).
GM_ADEV_PEAK_RATIO = 0.6173642831444415

_TAU_RTOL = 1e-9


def _check_dt(dt_s: Any) -> float:
    if isinstance(dt_s, (bool, np.bool_)) or not isinstance(dt_s, (int, float, np.integer, np.floating)):
        raise ParameterError("dt_s", dt_s, "must be a finite number > 0")
    if not (math.isfinite(float(dt_s)) and dt_s > 0):
        raise ParameterError("dt_s", dt_s, "must be a finite number > 0")
    return float(dt_s)


def allan_taus(n_samples: int, dt_s: float, *, per_decade: int = 10) -> NDArray[np.float64]:
    """Log-spaced averaging times usable with :func:`allan_deviation`.

    Parameters
    ----------
    n_samples : int
        Length of the rate record, >= 3.
    dt_s : float
        Sample interval [s], > 0.
    per_decade : int
        Approximate number of averaging times per decade, >= 1.

    Returns
    -------
    ndarray of shape (n_taus,)
        Distinct ``tau = m dt_s`` [s] with whole ``m`` from 1 to
        ``(n_samples - 1) // 2`` (so that every estimate averages at least
        two second differences), increasing.

    Examples
    --------
    >>> allan_taus(100, 0.5, per_decade=2).tolist()
    [0.5, 2.0, 6.5, 24.5]
    """
    dt = _check_dt(dt_s)
    if isinstance(n_samples, (bool, np.bool_)) or not isinstance(n_samples, (int, np.integer)) or n_samples < 3:
        raise ParameterError("n_samples", n_samples, "must be a whole number >= 3")
    if isinstance(per_decade, (bool, np.bool_)) or not isinstance(per_decade, (int, np.integer)) or per_decade < 1:
        raise ParameterError("per_decade", per_decade, "must be a whole number >= 1")
    m_max = max((int(n_samples) - 1) // 2, 1)
    count = math.floor(per_decade * math.log10(m_max)) + 1
    m = np.unique(np.rint(np.logspace(0.0, math.log10(m_max), count)).astype(np.int64))
    return m * dt


def allan_deviation(x: ArrayLike, dt_s: float, taus_s: ArrayLike, *, axis: int = -1) -> NDArray[np.float64]:
    """Overlapping Allan deviation of a rate signal (IEEE Std 952-1997).

    Parameters
    ----------
    x : array_like of shape (..., n_samples)
        Rate samples (e.g. rad/s or m/s^2), uniformly spaced by ``dt_s``;
        time along ``axis`` (the last by default), any leading trial axes.
    dt_s : float
        Sample interval [s], > 0.
    taus_s : array_like of shape (n_taus,)
        Averaging times [s]: whole multiples ``m dt_s`` (to a relative 1e-9)
        with ``1 <= m <= n_samples // 2``; see :func:`allan_taus`.
    axis : int
        Time axis of ``x``.

    Returns
    -------
    ndarray
        Allan deviation [unit of ``x``], shape of ``x`` with the time axis
        replaced by one of length n_taus.

    Notes
    -----
    With the angle ``theta_0 = 0``, ``theta_k = dt sum_{j<k} x_j``
    (``N = n_samples + 1`` points) and ``tau = m dt``,

    .. math::

        \\sigma^2(\\tau) = \\frac{1}{2 \\tau^2 (N - 2m)}
        \\sum_{k=0}^{N-2m-1} (\\theta_{k+2m} - 2\\theta_{k+m} + \\theta_k)^2 .

    The mean of ``x`` is removed before integrating; the Allan variance does
    not depend on it, and the second differences keep their precision on a
    large bias. White rate noise of density ``N`` gives ``N / sqrt(tau)``
    (read the angle random walk at ``tau = 1 s``); a rate random walk ``K``
    gives ``K sqrt(tau / 3)``.

    Examples
    --------
    >>> import numpy as np
    >>> x = np.array([[1.0, -1.0] * 50])
    >>> allan_deviation(x, 1.0, [1.0, 2.0]).round(6).tolist()
    [[1.414214, 0.0]]
    """
    dt = _check_dt(dt_s)
    arr = np.asarray(x, dtype=float)
    if arr.ndim == 0:
        raise ParameterError("x", x, "must have a time axis")
    if not -arr.ndim <= axis < arr.ndim:
        raise ParameterError("axis", axis, f"must be a valid axis of an array with {arr.ndim} dimensions")
    arr = np.moveaxis(arr, axis, -1)
    n = arr.shape[-1]
    taus = np.asarray(taus_s, dtype=float)
    if taus.ndim == 0:
        taus = taus.reshape(1)
    if taus.ndim != 1 or taus.size == 0 or not np.all(np.isfinite(taus)) or np.any(taus <= 0):
        raise ParameterError("taus_s", taus_s, "must be a non-empty 1-D array of finite averaging times > 0")
    ratio = taus / dt
    m = np.rint(ratio).astype(np.int64)
    bad = (np.abs(ratio - m) > _TAU_RTOL * np.maximum(ratio, 1.0)) | (m < 1) | (m > n // 2)
    if np.any(bad):
        raise ParameterError(
            "taus_s",
            taus_s,
            f"every averaging time must be a whole multiple m of dt_s = {dt!r} s with 1 <= m <= "
            f"n_samples // 2 = {n // 2}",
            "allan_taus() gives usable ones",
        )
    theta = np.zeros((*arr.shape[:-1], n + 1))
    np.cumsum(arr - arr.mean(axis=-1, keepdims=True), axis=-1, out=theta[..., 1:])
    theta *= dt
    out = np.empty((*arr.shape[:-1], m.size))
    for j, mj in enumerate(m.tolist()):
        d = theta[..., 2 * mj :] - 2.0 * theta[..., mj : n + 1 - mj] + theta[..., : n + 1 - 2 * mj]
        out[..., j] = np.sqrt(np.mean(d * d, axis=-1) / (2.0 * (mj * dt) ** 2))
    return np.moveaxis(out, -1, axis)


def gauss_markov_allan_variance(tau_s: ArrayLike, sigma: ArrayLike, tc_s: ArrayLike) -> NDArray[np.float64]:
    """Allan variance of a first-order Gauss--Markov rate process (closed form).

    Parameters
    ----------
    tau_s : array_like
        Averaging times [s], > 0.
    sigma : array_like
        Stationary standard deviation of the process [unit], >= 0.
    tc_s : array_like
        Correlation time [s], > 0.

    Returns
    -------
    ndarray
        Allan variance [unit^2], broadcast shape of the inputs.

    Notes
    -----
    El-Sheimy, Hou & Niu (2008), with ``(q_c T_c)^2 = 2 sigma^2 T_c`` and
    ``x = tau / T_c``:

    .. math::

        \\sigma_A^2(\\tau) = \\frac{2 \\sigma^2}{x}
        \\left[1 - \\frac{3 - 4 e^{-x} + e^{-2x}}{2x}\\right].

    It rises as ``sigma^2 (2x/3)`` for ``tau << T_c`` (like a rate random
    walk), falls as ``2 sigma^2 / x`` for ``tau >> T_c`` (like white noise),
    and peaks at ``tau = 1.8926 T_c`` with Allan deviation
    ``0.6174 sigma`` (:data:`GM_ADEV_PEAK_TAU_RATIO`,
    :data:`GM_ADEV_PEAK_RATIO`).

    Examples
    --------
    >>> round(float(gauss_markov_allan_variance(1.8926178354517893, 1.0, 1.0)) ** 0.5, 4)
    0.6174
    """
    tau = np.asarray(tau_s, dtype=float)
    sig = np.asarray(sigma, dtype=float)
    tc = np.asarray(tc_s, dtype=float)
    if not np.all(np.isfinite(tau)) or np.any(tau <= 0):
        raise ParameterError("tau_s", tau_s, "must be finite and > 0")
    if not np.all(np.isfinite(sig)) or np.any(sig < 0):
        raise ParameterError("sigma", sigma, "must be finite and >= 0")
    if not np.all(np.isfinite(tc)) or np.any(tc <= 0):
        raise ParameterError("tc_s", tc_s, "must be finite and > 0")
    xr = tau / tc
    # for small x the bracket cancels; use its Taylor series there
    # (x^2/3 - x^3/4 + 7 x^4/60 - x^5/24 + O(x^6)), good to ~1e-10 at the switch
    small = xr < 1e-2
    xs = np.where(small, 1.0, xr)
    bracket_big = 1.0 - (3.0 - 4.0 * np.exp(-xs) + np.exp(-2.0 * xs)) / (2.0 * xs)
    bracket_small = xr**2 / 3.0 - xr**3 / 4.0 + 7.0 * xr**4 / 60.0 - xr**5 / 24.0
    bracket = np.where(small, bracket_small, bracket_big)
    with np.errstate(divide="ignore", invalid="ignore"):
        out = 2.0 * sig**2 / xr * bracket
    return np.asarray(out)
