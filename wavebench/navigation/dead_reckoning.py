"""Batched planar dead reckoning from heading and body velocity (or course and speed).

The horizontal velocity in NED is formed at each sample, from heading ``psi``
and body velocity (surge ``u``, sway ``v``) as ``R(psi) [u, v]``::

    v_north = u cos(psi) - v sin(psi)
    v_east  = u sin(psi) + v cos(psi)

or from course over ground ``chi`` and speed ``U`` as
``[U cos(chi), U sin(chi)]``, and integrated over time with one of two rules:

- ``"trapezoid"`` (default): ``p[k+1] = p[k] + dt/2 (v[k] + v[k+1])``,
  the trapezoidal rule on the sampled velocity. Second-order: over a
  duration ``T`` the error is at most ``T dt^2 max|v''| / 12`` per axis
  (composite trapezoidal rule error bound, e.g. Burden & Faires,
  Numerical Analysis, section on composite numerical integration).
- ``"euler"``: ``p[k+1] = p[k] + dt v[k]`` (forward rectangle rule, the
  velocity held from the start of the interval). First-order: error at most
  ``T dt max|v'| / 2``.

The heading is not unwrapped or interpolated: each sample's velocity is
rotated by its own heading, then the velocities are integrated, so a heading
crossing +-pi needs no special handling.

References
----------
.. [1] T. I. Fossen, Handbook of Marine Craft Hydrodynamics and Motion
   Control, 2nd ed., Wiley (2021): kinematics ``eta_dot = R(psi) nu`` in
   the horizontal plane.
.. [2] R. L. Burden and J. D. Faires, Numerical Analysis, Brooks/Cole:
   composite trapezoidal rule and its error term.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ..core.errors import ParameterError
from ..core.frames import body_to_ned
from .kalman import _float_array, _require_finite

__all__ = [
    "INTEGRATION_RULES",
    "body_to_ned_velocity",
    "course_speed_to_ned",
    "dead_reckon",
    "dead_reckon_body",
    "dead_reckon_step",
]

FloatArray = NDArray[np.float64]

INTEGRATION_RULES = ("trapezoid", "euler")


def body_to_ned_velocity(heading: ArrayLike, surge: ArrayLike, sway: ArrayLike) -> FloatArray:
    """NED horizontal velocity from heading and body velocity.

    Parameters
    ----------
    heading : array_like of shape (...)
        Heading (yaw) ``psi`` [rad], clockwise from north.
    surge, sway : array_like of shape (...)
        Body velocity ``u`` (forward), ``v`` (starboard) [m/s].

    Returns
    -------
    ndarray of shape (..., 2)
        ``[v_north, v_east]`` [m/s].

    Examples
    --------
    >>> body_to_ned_velocity(np.pi / 2, 2.0, 0.0).round(12)
    array([0., 2.])
    """
    psi = _float_array("heading", heading)
    u = _float_array("surge", surge)
    v = _float_array("sway", sway)
    shape = np.broadcast_shapes(psi.shape, u.shape, v.shape)
    body = np.stack(np.broadcast_arrays(u, v), axis=-1).reshape(*shape, 2)
    return body_to_ned(body, np.broadcast_to(psi, shape))


def course_speed_to_ned(course: ArrayLike, speed: ArrayLike) -> FloatArray:
    """NED horizontal velocity from course over ground and speed.

    Parameters
    ----------
    course : array_like of shape (...)
        Course ``chi`` [rad], clockwise from north.
    speed : array_like of shape (...)
        Speed over ground ``U`` [m/s].

    Returns
    -------
    ndarray of shape (..., 2)
        ``[U cos(chi), U sin(chi)]`` [m/s].

    Examples
    --------
    >>> course_speed_to_ned(0.0, 1.5)
    array([1.5, 0. ])
    """
    chi = _float_array("course", course)
    U = _float_array("speed", speed)
    chi, U = np.broadcast_arrays(chi, U)
    return np.stack([U * np.cos(chi), U * np.sin(chi)], axis=-1)


def _check_rule(rule: str) -> None:
    if rule not in INTEGRATION_RULES:
        raise ParameterError("rule", rule, f"must be one of {list(INTEGRATION_RULES)}")


def _check_dt(dt: ArrayLike, n: int) -> FloatArray:
    d = _float_array("dt", dt)
    if d.ndim == 0:
        d = np.full(n, float(d))
    if d.shape != (n,):
        raise ParameterError("dt", d, f"must be a scalar or have shape ({n},)")
    if not np.all(np.isfinite(d)) or np.any(d <= 0.0):
        raise ParameterError("dt", d, "must be a finite time step > 0 s")
    return d


def dead_reckon(start_ne: ArrayLike, velocity_ne: ArrayLike, dt: ArrayLike, *, rule: str = "trapezoid") -> FloatArray:
    """Integrate sampled NED velocity into positions for all trials.

    Parameters
    ----------
    start_ne : array_like of shape (n_trials, 2)
        Position ``[north, east]`` at the first sample [m].
    velocity_ne : array_like of shape (n_trials, n_steps, 2)
        Velocity ``[v_north, v_east]`` at each sample [m/s], samples ``dt`` apart.
    dt : float or array_like of shape (n_trials,)
        Sample interval [s] (> 0).
    rule : {"trapezoid", "euler"}
        Integration rule (see the module notes).

    Returns
    -------
    ndarray of shape (n_trials, n_steps, 2)
        Position at each sample [m]; the first equals ``start_ne``.

    Examples
    --------
    >>> dead_reckon([[0.0, 0.0]], [[[1.0, 0.0], [3.0, 0.0]]], 1.0)
    array([[[0., 0.],
            [2., 0.]]])
    """
    _check_rule(rule)
    p0 = _float_array("start_ne", start_ne)
    if p0.ndim != 2 or p0.shape[1] != 2:
        raise ParameterError("start_ne", p0, "must have shape (n_trials, 2)")
    _require_finite("start_ne", p0)
    n = p0.shape[0]
    vel = _float_array("velocity_ne", velocity_ne)
    if vel.ndim != 3 or vel.shape[0] != n or vel.shape[2] != 2 or vel.shape[1] < 1:
        raise ParameterError("velocity_ne", vel, f"must have shape ({n}, n_steps, 2)")
    _require_finite("velocity_ne", vel)
    d = _check_dt(dt, n)[:, None, None]
    if rule == "trapezoid":
        steps = 0.5 * d * (vel[:, :-1] + vel[:, 1:])
    else:
        steps = d * vel[:, :-1]
    # A running sum starting from p0, so each row equals stepping
    # dead_reckon_step along the same samples, bit for bit.
    return np.cumsum(np.concatenate([p0[:, None, :], steps], axis=1), axis=1)


def dead_reckon_body(
    start_ne: ArrayLike,
    heading: ArrayLike,
    surge: ArrayLike,
    sway: ArrayLike,
    dt: ArrayLike,
    *,
    rule: str = "trapezoid",
) -> FloatArray:
    """Dead reckoning from sampled heading and body velocity.

    Parameters
    ----------
    start_ne : array_like of shape (n_trials, 2)
        Position ``[north, east]`` at the first sample [m].
    heading : array_like of shape (n_trials, n_steps)
        Heading [rad].
    surge, sway : array_like of shape (n_trials, n_steps)
        Body velocity [m/s] (water- or bottom-referenced, as the caller's
        sensor gives; no current is added here).
    dt : float or array_like of shape (n_trials,)
        Sample interval [s].
    rule : {"trapezoid", "euler"}
        Integration rule.

    Returns
    -------
    ndarray of shape (n_trials, n_steps, 2)
        Position at each sample [m].
    """
    psi = _float_array("heading", heading)
    if psi.ndim != 2:
        raise ParameterError("heading", psi, "must have shape (n_trials, n_steps)")
    for name, arr in (("surge", surge), ("sway", sway)):
        if np.shape(arr) != psi.shape:
            raise ParameterError(name, np.asarray(arr), f"must have shape {psi.shape} like heading")
    return dead_reckon(start_ne, body_to_ned_velocity(psi, surge, sway), dt, rule=rule)


def dead_reckon_step(
    position_ne: ArrayLike,
    velocity_prev_ne: ArrayLike,
    velocity_ne: ArrayLike,
    dt: ArrayLike,
    *,
    rule: str = "trapezoid",
) -> FloatArray:
    """One dead-reckoning step for all trials (for a navigator that steps online).

    Parameters
    ----------
    position_ne : array_like of shape (n_trials, 2)
        Position at the previous sample [m].
    velocity_prev_ne : array_like of shape (n_trials, 2)
        Velocity at the previous sample [m/s].
    velocity_ne : array_like of shape (n_trials, 2)
        Velocity at the new sample [m/s] (unused by ``"euler"``).
    dt : float or array_like of shape (n_trials,)
        Interval between the samples [s].
    rule : {"trapezoid", "euler"}
        Integration rule.

    Returns
    -------
    ndarray of shape (n_trials, 2)
        Position at the new sample [m]; stepped along the same samples it
        gives the same numbers as :func:`dead_reckon`.
    """
    _check_rule(rule)
    p = _float_array("position_ne", position_ne)
    if p.ndim != 2 or p.shape[1] != 2:
        raise ParameterError("position_ne", p, "must have shape (n_trials, 2)")
    n = p.shape[0]
    v0 = _float_array("velocity_prev_ne", velocity_prev_ne)
    v1 = _float_array("velocity_ne", velocity_ne)
    for name, arr in (("velocity_prev_ne", v0), ("velocity_ne", v1)):
        if arr.shape != (n, 2):
            raise ParameterError(name, arr, f"must have shape ({n}, 2)")
    d = _check_dt(dt, n)[:, None]
    if rule == "trapezoid":
        return p + 0.5 * d * (v0 + v1)
    return p + d * v0
