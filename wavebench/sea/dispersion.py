"""Linear (Airy) wave dispersion: wavenumber, wavelength, phase and group speed.

The dispersion relation of linear waves on water of depth h is

.. math::

    \\omega^2 = g k \\tanh(k h).

:func:`wavenumber` solves it exactly (to a relative 1e-14) for arrays of
frequencies and depths; :func:`fenton_mckee_wavelength` is the explicit
approximation of Fenton & McKee (1990), useful where a closed form is
wanted. Depths may be ``numpy.inf`` (deep water) and may be per trial, as an
``(n_trials, 1)`` column broadcast against ``(n_freq,)`` frequencies.

Heading convention for :func:`encounter_frequency`: ``beta`` is the
direction the waves travel toward minus the craft heading (both clockwise
from north), so beta = 0 is a following sea, pi/2 waves from port (travelling
to starboard), and pi a head sea.

References
----------
.. [1] J. D. Fenton and W. D. McKee, "On calculating the lengths of water
   waves", Coastal Engineering 14, 499–513 (1990).
.. [2] U.S. Army Corps of Engineers, Coastal Engineering Manual,
   EM 1110-2-1100, Part II, Chapter 1 (water wave mechanics).
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ..core.constants import G
from ..core.errors import ParameterError

__all__ = [
    "DEEP_WATER_KH",
    "encounter_frequency",
    "fenton_mckee_wavelength",
    "group_speed",
    "phase_speed",
    "wavelength",
    "wavenumber",
]

#: Above this omega^2 h / g the water is treated as deep: then k h > 20 and
#: tanh(k h) equals 1 in double precision, so k = omega^2 / g exactly.
DEEP_WATER_KH = 20.0
_REL_TOL = 1e-14
_MAX_ITER = 50


def _out(x: NDArray[np.float64]) -> Any:
    return x if x.ndim else float(x)


def _check_g(g: float) -> float:
    if not (isinstance(g, (int, float, np.floating)) and math.isfinite(g) and g > 0):
        raise ParameterError("g", g, "must be a finite number > 0 (m/s^2)")
    return float(g)


def _check_omega(omega: ArrayLike, name: str = "omega") -> NDArray[np.float64]:
    w = np.asarray(omega, dtype=float)
    if not np.all(np.isfinite(w)) or np.any(w < 0.0):
        raise ParameterError(name, w if w.ndim else float(w), "must be finite and >= 0")
    return w


def _check_depth(depth_m: ArrayLike) -> NDArray[np.float64]:
    h = np.asarray(depth_m, dtype=float)
    if np.any(np.isnan(h)) or np.any(h <= 0.0):
        raise ParameterError(
            "depth_m", h if h.ndim else float(h), "must be > 0 (numpy.inf for deep water)"
        )
    return h


def wavenumber(omega: ArrayLike, depth_m: ArrayLike = np.inf, g: float = G) -> Any:
    """Wavenumber k solving omega^2 = g k tanh(k h).

    Parameters
    ----------
    omega : float or ndarray of shape (n_freq,) or (n_trials, n_freq)
        Angular frequency [rad/s], >= 0.
    depth_m : float or ndarray of shape (n_trials, 1)
        Water depth h [m], > 0; ``numpy.inf`` for deep water.
    g : float
        Acceleration of gravity [m/s^2].

    Returns
    -------
    float or ndarray
        k [rad/m], shape of ``omega`` broadcast with ``depth_m``.

    Notes
    -----
    With x = k h and y = omega^2 h / g the relation is x tanh x = y. Newton
    iterations on x start from the Fenton & McKee (1990) explicit value
    ``x0 = y / tanh(y^(3/4))^(2/3)`` (within 1.7 %); each element stops when
    its own step is below 1e-14 relative, so a value never depends on the
    other elements it is computed with. For y >= 20 (then x > 20, tanh x = 1 in
    double precision) and for h = inf the deep-water value k = omega^2/g is
    exact. omega = 0 gives k = 0.

    Examples
    --------
    >>> round(wavenumber(1.0, g=9.81), 6)  # deep water: omega^2 / g
    0.101937
    """
    g = _check_g(g)
    w = _check_omega(omega)
    h = _check_depth(depth_m)
    w, h = np.broadcast_arrays(w, h)
    shape = w.shape
    w, h = w.ravel(), h.ravel()
    k = w**2 / g
    with np.errstate(invalid="ignore", over="ignore"):
        y = k * h  # nan for omega = 0 in deep water, inf for omega > 0 there
    solve = np.isfinite(y) & (y > 0.0) & (y < DEEP_WATER_KH)
    if np.any(solve):
        ys = y[solve]
        x = ys / np.tanh(ys**0.75) ** (2.0 / 3.0)
        # Each element stops at its own convergence, so its value does not
        # depend on the other elements of the batch (bit for bit).
        active = np.arange(x.size)
        for _ in range(_MAX_ITER):
            xa = x[active]
            t = np.tanh(xa)
            dx = (xa * t - ys[active]) / (t + xa * (1.0 - t * t))
            xa = xa - dx
            x[active] = xa
            active = active[np.abs(dx) > _REL_TOL * xa]
            if active.size == 0:
                break
        k[solve] = x / h[solve]
    return _out(k.reshape(shape))


def wavelength(period_s: ArrayLike, depth_m: ArrayLike = np.inf, g: float = G) -> Any:
    """Exact linear-theory wavelength L = 2 pi / k [m] for a wave period [s].

    Parameters
    ----------
    period_s : float or ndarray
        Wave period T [s], > 0.
    depth_m : float or ndarray
        Water depth [m], > 0 (``numpy.inf`` for deep water).
    g : float
        Acceleration of gravity [m/s^2].

    Returns
    -------
    float or ndarray
        Wavelength [m].
    """
    t = np.asarray(period_s, dtype=float)
    if not np.all(np.isfinite(t)) or np.any(t <= 0.0):
        raise ParameterError("period_s", t if t.ndim else float(t), "must be finite and > 0")
    return _out(2.0 * np.pi / np.asarray(wavenumber(2.0 * np.pi / t, depth_m, g)))


def fenton_mckee_wavelength(period_s: ArrayLike, depth_m: ArrayLike, g: float = G) -> Any:
    """Explicit wavelength approximation of Fenton & McKee (1990).

    Parameters
    ----------
    period_s : float or ndarray
        Wave period T [s], > 0.
    depth_m : float or ndarray
        Water depth h [m], > 0 (``numpy.inf`` gives L0).
    g : float
        Acceleration of gravity [m/s^2].

    Returns
    -------
    float or ndarray
        Wavelength [m]; the stated error is below 1.7 % at all depths.

    Notes
    -----
    .. math::

        L = L_0 \\tanh^{2/3}\\left[\\left(\\frac{2\\pi\\sqrt{h/g}}{T}\\right)^{3/2}\\right],
        \\qquad L_0 = \\frac{g T^2}{2\\pi}.
    """
    g = _check_g(g)
    t = np.asarray(period_s, dtype=float)
    if not np.all(np.isfinite(t)) or np.any(t <= 0.0):
        raise ParameterError("period_s", t if t.ndim else float(t), "must be finite and > 0")
    h = _check_depth(depth_m)
    l0 = g * t**2 / (2.0 * np.pi)
    arg = (2.0 * np.pi * np.sqrt(h / g) / t) ** 1.5
    return _out(l0 * np.tanh(arg) ** (2.0 / 3.0))


def phase_speed(omega: ArrayLike, depth_m: ArrayLike = np.inf, g: float = G) -> Any:
    """Phase speed c = omega / k [m/s].

    Parameters
    ----------
    omega : float or ndarray
        Angular frequency [rad/s], >= 0.
    depth_m : float or ndarray
        Water depth [m], > 0 (``numpy.inf`` for deep water).
    g : float
        Acceleration of gravity [m/s^2].

    Returns
    -------
    float or ndarray
        c [m/s]; at omega = 0 the long-wave limit sqrt(g h) (inf in deep
        water).
    """
    w = _check_omega(omega)
    h = _check_depth(depth_m)
    k = np.asarray(wavenumber(w, h, g))
    w, h = np.broadcast_arrays(w, h)
    pos = w > 0.0
    c = np.where(pos, w / np.where(pos, k, 1.0), np.sqrt(_check_g(g) * h))
    return _out(c)


def group_speed(omega: ArrayLike, depth_m: ArrayLike = np.inf, g: float = G) -> Any:
    """Group speed c_g = c/2 (1 + 2kh / sinh 2kh) [m/s].

    Parameters
    ----------
    omega : float or ndarray
        Angular frequency [rad/s], >= 0.
    depth_m : float or ndarray
        Water depth [m], > 0 (``numpy.inf`` for deep water).
    g : float
        Acceleration of gravity [m/s^2].

    Returns
    -------
    float or ndarray
        c_g [m/s]; c/2 in deep water, tending to c = sqrt(g h) in shallow
        water.

    References
    ----------
    Coastal Engineering Manual, EM 1110-2-1100, Part II-1.
    """
    w = _check_omega(omega)
    h = _check_depth(depth_m)
    k = np.asarray(wavenumber(w, h, g))
    c = np.asarray(phase_speed(w, h, g))
    w, h = np.broadcast_arrays(w, h)
    with np.errstate(invalid="ignore"):
        kh = k * h  # nan only where omega = 0 and h = inf
    mid = np.isfinite(kh) & (kh > 0.0) & (kh < DEEP_WATER_KH)
    two = 2.0 * np.where(mid, kh, 1.0)
    n = np.where(mid, 0.5 * (1.0 + two / np.sinh(two)), 0.5)
    n = np.where(w > 0.0, n, 1.0)  # long-wave limit at omega = 0
    return _out(n * c)


def encounter_frequency(
    omega: ArrayLike, k: ArrayLike, speed_mps: ArrayLike, rel_heading_rad: ArrayLike
) -> Any:
    """Frequency of encounter omega_e = omega - k U cos(beta) [rad/s].

    Parameters
    ----------
    omega : float or ndarray
        Wave angular frequency [rad/s].
    k : float or ndarray
        Wavenumber [rad/m] (from :func:`wavenumber`).
    speed_mps : float or ndarray
        Craft speed over ground U [m/s].
    rel_heading_rad : float or ndarray
        beta = direction the waves travel toward minus craft heading [rad]:
        0 following sea, pi/2 beam sea from port, pi head sea.

    Returns
    -------
    float or ndarray
        omega_e [rad/s], signed: negative when the craft overtakes the waves
        in a following sea (the observed frequency is then |omega_e|).

    Examples
    --------
    >>> encounter_frequency(0.5, 0.1, 2.0, math.pi)  # head sea: 0.5 + 0.1 * 2
    0.7
    """
    out = np.asarray(omega, dtype=float) - np.asarray(k, dtype=float) * np.asarray(
        speed_mps, dtype=float
    ) * np.cos(np.asarray(rel_heading_rad, dtype=float))
    return _out(out)
