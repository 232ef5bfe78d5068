"""Third-order heading reference model with rate and acceleration limits, batched.

A first-order low-pass filter in cascade with a mass-damper-spring turns a
(possibly stepped) heading command ``psi_ref`` into a smooth desired heading
``psi_d`` with yaw rate ``r_d`` and yaw acceleration ``a_d``::

    x_f_dot = w_n (psi_ref - x_f)
    a_d     = sat_a( w_n^2 (x_f - psi_d) - 2 zeta w_n r_d )
    r_d_dot = a_d             (held at 0 while |r_d| = r_max and a_d pushes out)
    psi_d_dot = r_d,          |r_d| <= r_max

Without the limits the transfer function from ``psi_ref`` to ``psi_d`` is

    psi_d / psi_ref = w_n^3 / ((s + w_n)(s^2 + 2 zeta w_n s + w_n^2)).

Each step is one classical Runge-Kutta (RK4) step of this ODE with
``psi_ref`` held over the step, then ``r_d`` is clipped to its limit.
Angles are not wrapped here: the caller passes an unwrapped command
(e.g. ``psi_d + wrap(psi_ref - psi_d)``).

References
----------
.. [1] T. I. Fossen, Handbook of Marine Craft Hydrodynamics and Motion
   Control, 2nd ed., Wiley (2021), chapter on guidance systems: reference
   models (third-order model as a low-pass filter in cascade with a
   mass-damper-spring; velocity and acceleration saturation).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ..core.errors import ParameterError
from ..core.params import Params, bounded

__all__ = [
    "HeadingReference",
    "ReferenceParams",
    "ReferenceState",
    "reference_init",
    "reference_step",
]

FloatArray = NDArray[np.float64]


@dataclass(frozen=True, kw_only=True)
class ReferenceParams(Params):
    """Reference-model parameters (scalars or arrays of shape (n_trials,)).

    Parameters
    ----------
    natural_frequency_rad_s : float or ndarray
        ``w_n`` [rad/s], of the filter and the mass-damper-spring.
    damping_ratio : float or ndarray
        ``zeta`` [-] of the mass-damper-spring.
    rate_max_rad_s : float or ndarray
        Yaw-rate limit [rad/s]; ``inf`` for none.
    accel_max_rad_s2 : float or ndarray
        Yaw-acceleration limit [rad/s^2]; ``inf`` for none.
    """

    natural_frequency_rad_s: float = bounded(gt=0.0, unit="rad/s", doc="natural frequency w_n")
    damping_ratio: float = bounded(1.0, gt=0.0, unit="1", doc="damping ratio zeta")
    rate_max_rad_s: float = bounded(np.inf, gt=0.0, finite=False, unit="rad/s", doc="yaw-rate limit")
    accel_max_rad_s2: float = bounded(np.inf, gt=0.0, finite=False, unit="rad/s^2", doc="yaw-acceleration limit")


@dataclass(frozen=True)
class ReferenceState:
    """Reference-model state (arrays of shape (n_trials,)).

    Attributes
    ----------
    x_f : ndarray
        Low-pass filter output [rad].
    psi_d : ndarray
        Desired heading [rad].
    r_d : ndarray
        Desired yaw rate [rad/s].
    """

    x_f: FloatArray
    psi_d: FloatArray
    r_d: FloatArray


@dataclass(frozen=True)
class HeadingReference:
    """Desired motion (arrays of shape (n_trials,)): ``psi_d`` [rad], ``r_d`` [rad/s], ``a_d`` [rad/s^2]."""

    psi_d: FloatArray
    r_d: FloatArray
    a_d: FloatArray


def reference_init(psi0_rad: ArrayLike) -> ReferenceState:
    """State at rest on heading ``psi0_rad``, ndarray of shape (n_trials,).

    Examples
    --------
    >>> reference_init([0.0, 1.0]).x_f.tolist()
    [0.0, 1.0]
    """
    psi0 = np.atleast_1d(np.asarray(psi0_rad, dtype=float)).copy()
    if psi0.ndim != 1 or not np.all(np.isfinite(psi0)):
        raise ParameterError("psi0_rad", psi0_rad, "finite, of shape (n_trials,)")
    return ReferenceState(x_f=psi0.copy(), psi_d=psi0.copy(), r_d=np.zeros_like(psi0))


def _derivative(
    p: ReferenceParams, x_f: FloatArray, psi: FloatArray, r: FloatArray, ref: FloatArray
) -> tuple[FloatArray, FloatArray, FloatArray]:
    wn = p.natural_frequency_rad_s
    a = np.clip(
        wn**2 * (x_f - psi) - 2.0 * p.damping_ratio * wn * r,
        -p.accel_max_rad_s2,
        p.accel_max_rad_s2,
    )
    rmax = p.rate_max_rad_s
    outward = ((r >= rmax) & (a > 0.0)) | ((r <= -rmax) & (a < 0.0))
    a = np.where(outward, 0.0, a)
    return wn * (ref - x_f), np.clip(r, -rmax, rmax), a


def reference_step(
    params: ReferenceParams, state: ReferenceState, psi_ref_rad: ArrayLike, dt: float
) -> tuple[ReferenceState, HeadingReference]:
    """Advance the reference model one step.

    Parameters
    ----------
    params : ReferenceParams
    state : ReferenceState
    psi_ref_rad : ndarray of shape (n_trials,)
        Heading command [rad] (unwrapped), held over the step.
    dt : float
        Step [s], > 0.

    Returns
    -------
    new_state : ReferenceState
    out : HeadingReference
        ``psi_d``, ``r_d`` at the end of the step and ``a_d`` evaluated there.

    Examples
    --------
    >>> p = ReferenceParams(natural_frequency_rad_s=1.0)
    >>> s, out = reference_step(p, reference_init([0.0]), [1.0], 0.01)
    >>> bool(0.0 < out.psi_d[0] < 1e-6)
    True
    """
    if not (np.isfinite(dt) and dt > 0.0):
        raise ParameterError("dt", dt, "must be a finite number > 0")
    ref = np.asarray(psi_ref_rad, dtype=float)
    x0 = (state.x_f, state.psi_d, state.r_d)
    k1 = _derivative(params, *x0, ref)
    x1 = tuple(x + 0.5 * dt * k for x, k in zip(x0, k1, strict=True))
    k2 = _derivative(params, *x1, ref)
    x2 = tuple(x + 0.5 * dt * k for x, k in zip(x0, k2, strict=True))
    k3 = _derivative(params, *x2, ref)
    x3 = tuple(x + dt * k for x, k in zip(x0, k3, strict=True))
    k4 = _derivative(params, *x3, ref)
    new = [x + dt / 6.0 * (a + 2.0 * b + 2.0 * c + d) for x, a, b, c, d in zip(x0, k1, k2, k3, k4, strict=True)]
    rmax = params.rate_max_rad_s
    new[2] = np.clip(new[2], -rmax, rmax)
    new_state = ReferenceState(x_f=new[0], psi_d=new[1], r_d=new[2])
    a_d = _derivative(params, new[0], new[1], new[2], ref)[2]
    return new_state, HeadingReference(psi_d=new[1], r_d=new[2], a_d=a_d)
