"""Fixed-step fourth-order Runge–Kutta integration over batched states.

The product runs craft models with a fixed step and the pilot's command held
over the step (zero-order hold); there is no adaptive solver here on purpose
(adaptive steps would make trial ``i`` depend on the other trials of a batch).

References
----------
.. [1] E. Hairer, S. P. Nørsett and G. Wanner, Solving Ordinary Differential
   Equations I, 2nd ed., Springer (1993), sec. II.1 — the classical
   four-stage Runge–Kutta method (global error O(dt^4)).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ..core.errors import ParameterError
from .hull import HullCoefficients, HullParams, derivative, hull_coefficients, param_batch_size

__all__ = ["HullTrajectory", "hull_state_derivative", "rk4_step", "simulate_hull"]

FloatArray = NDArray[np.float64]


def rk4_step(f: Callable[..., Any], t: float, x: Any, dt: float, *args: Any) -> Any:
    """Advance ``x' = f(t, x, *args)`` by one classical RK4 step.

    Parameters
    ----------
    f : callable
        ``f(t, x, *args) -> x_dot`` with ``x_dot`` of the shape of ``x``.
    t : float
        Time at the start of the step [s].
    x : ndarray of shape (n_trials, ...)
        State at ``t``; every operation is elementwise, so trial ``i`` is
        computed exactly as it would be alone.
    dt : float
        Step [s].
    *args
        Extra arguments passed to ``f`` unchanged (held over the step).

    Returns
    -------
    ndarray
        State at ``t + dt``.

    Notes
    -----
    ``k1 = f(t, x)``, ``k2 = f(t + dt/2, x + dt/2 k1)``,
    ``k3 = f(t + dt/2, x + dt/2 k2)``, ``k4 = f(t + dt, x + dt k3)``,
    ``x(t + dt) = x + dt/6 (k1 + 2 k2 + 2 k3 + k4)``.

    Examples
    --------
    >>> import numpy as np
    >>> x1 = rk4_step(lambda t, x: -x, 0.0, np.array([1.0]), 0.1)
    >>> bool(abs(x1[0] - np.exp(-0.1)) < 1e-6)
    True
    """
    half = 0.5 * dt
    k1 = f(t, x, *args)
    k2 = f(t + half, x + half * k1, *args)
    k3 = f(t + half, x + half * k2, *args)
    k4 = f(t + dt, x + dt * k3, *args)
    return x + (dt / 6.0) * (k1 + 2.0 * k2 + 2.0 * k3 + k4)


def hull_state_derivative(
    t: float,
    x: FloatArray,
    hull: HullParams | HullCoefficients,
    tau: ArrayLike,
    current_ned: ArrayLike | None = None,
) -> FloatArray:
    """Derivative of the stacked hull state ``x = [eta, nu]`` for :func:`rk4_step`.

    Parameters
    ----------
    t : float
        Time [s] (unused: the model is autonomous given ``tau``).
    x : ndarray of shape (n_trials, 6)
        ``[north, east, psi, u, v, r]``.
    hull : HullParams or HullCoefficients
    tau : ndarray of shape (n_trials, 3) or (3,)
        Generalised force held over the step [N, N, N·m].
    current_ned : ndarray of shape (n_trials, 2) or (2,), optional
        Current velocity [m/s].

    Returns
    -------
    ndarray of shape (n_trials, 6)
    """
    eta_dot, nu_dot = derivative(hull, x[..., :3], x[..., 3:], tau, current_ned)
    return np.concatenate([eta_dot, nu_dot], axis=-1)


@dataclass(frozen=True)
class HullTrajectory:
    """Recorded hull motion.

    Attributes
    ----------
    t : ndarray of shape (n_records,)
        Times [s].
    eta : ndarray of shape (n_trials, n_records, 3)
        ``[north, east, psi]`` [m, m, rad] (psi unwrapped).
    nu : ndarray of shape (n_trials, n_records, 3)
        ``[u, v, r]`` over ground [m/s, m/s, rad/s].
    tau : ndarray of shape (n_trials, n_records, 3)
        Force held over the step that starts at each record; the last record
        repeats the previous one.
    """

    t: FloatArray
    eta: FloatArray
    nu: FloatArray
    tau: FloatArray


def _state(name: str, value: ArrayLike, width: int, n: int | None) -> FloatArray:
    arr = np.asarray(value, dtype=float)
    if arr.ndim == 1:
        arr = arr[np.newaxis, :]
    if arr.ndim != 2 or arr.shape[1] != width:
        raise ParameterError(name, arr, f"must have shape (n_trials, {width}) or ({width},)")
    if not np.all(np.isfinite(arr)):
        raise ParameterError(name, arr, "must be finite")
    if n is not None and arr.shape[0] not in (1, n):
        raise ParameterError(name, arr, f"must have {n} rows (one per trial) or 1")
    return arr


def simulate_hull(
    hull: HullParams,
    eta0: ArrayLike,
    nu0: ArrayLike,
    tau_fn: Callable[[float, FloatArray, FloatArray], ArrayLike] | ArrayLike,
    current_ned: ArrayLike | None,
    dt: float,
    n_steps: int,
    *,
    record_every: int = 1,
) -> HullTrajectory:
    """Integrate the hull alone with RK4 and a zero-order-hold force.

    Parameters
    ----------
    hull : HullParams
        Scalars or per-trial arrays of shape (n_trials,).
    eta0, nu0 : ndarray of shape (n_trials, 3) or (3,)
        Initial position/heading and velocity over ground.
    tau_fn : callable or array_like
        ``tau_fn(t, eta, nu) -> (n_trials, 3)`` evaluated once at the start of
        every step and held over it (zero-order hold); or a constant array of
        shape (n_trials, 3) or (3,).
    current_ned : ndarray of shape (n_trials, 2) or (2,), or None
        Constant current over ground [m/s].
    dt : float
        Fixed step [s] (> 0).
    n_steps : int
        Number of steps (>= 0).
    record_every : int, optional
        Keep every ``record_every``-th step (the initial state is always kept).

    Returns
    -------
    HullTrajectory
    """
    if not (np.isfinite(dt) and dt > 0.0):
        raise ParameterError("dt", dt, "must be a finite number > 0")
    if int(n_steps) != n_steps or n_steps < 0:
        raise ParameterError("n_steps", n_steps, "must be a whole number >= 0")
    if int(record_every) != record_every or record_every < 1:
        raise ParameterError("record_every", record_every, "must be a whole number >= 1")
    n_par = param_batch_size(hull)
    eta = _state("eta0", eta0, 3, n_par)
    nu = _state("nu0", nu0, 3, n_par)
    n = max(eta.shape[0], nu.shape[0], n_par or 1)
    x = np.concatenate([np.broadcast_to(eta, (n, 3)), np.broadcast_to(nu, (n, 3))], axis=-1).copy()
    cur = None if current_ned is None else _state("current_ned", current_ned, 2, n)
    coeffs = hull_coefficients(hull)
    if callable(tau_fn):
        fn = tau_fn
    else:
        tau_const = np.broadcast_to(_state("tau", tau_fn, 3, n), (n, 3))

        def fn(t: float, eta: FloatArray, nu: FloatArray) -> FloatArray:
            return tau_const

    n_rec = n_steps // record_every + 1
    t_rec = np.empty(n_rec)
    x_rec = np.empty((n, n_rec, 6))
    tau_rec = np.empty((n, n_rec, 3))
    t_rec[0] = 0.0
    x_rec[:, 0] = x
    j = 1
    tau = np.zeros((n, 3))
    for k in range(n_steps):
        t = k * dt
        tau = np.broadcast_to(np.asarray(fn(t, x[:, :3], x[:, 3:]), dtype=float), (n, 3))
        if k % record_every == 0:
            tau_rec[:, (k // record_every)] = tau
        x = rk4_step(hull_state_derivative, t, x, dt, coeffs, tau, cur)
        if (k + 1) % record_every == 0:
            t_rec[j] = (k + 1) * dt
            x_rec[:, j] = x
            j += 1
    if n_steps % record_every == 0:
        tau_rec[:, -1] = tau
    return HullTrajectory(t=t_rec, eta=x_rec[..., :3], nu=x_rec[..., 3:], tau=tau_rec)
