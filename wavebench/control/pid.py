"""PID heading autopilot and PI speed controller with anti-windup, batched.

The controller is a pure step: parameters (:class:`PidParams`) are separate
from the evolving state (:class:`PidState`, the error integral). Every array
has a leading trial axis ``N``; gains may be scalars or per-trial arrays.

Control law (heading: ``error = psi - psi_d`` [rad], ``rate = r - r_d``
[rad/s], command = rudder angle [rad] or rudder-equivalent)::

    u = -(kp * error + kd * rate + ki * z),    z = integral of error dt
    command = clip(u, -output_max, output_max)

Anti-windup: **conditional integration** (also called integrator clamping):
over a step the integral is frozen when the unsaturated output is beyond a
limit and integrating this step's error would push it further beyond
(Astrom & Murray [3], section on integrator windup). Otherwise the integral
is advanced by ``error * dt`` (forward Euler). ``anti_windup=False`` always
integrates (used to show the difference).

Gains by pole placement on the first-order Nomoto model
``T r_dot + r = K delta`` (Fossen [1], chapter on motion control, autopilot
design by pole placement): with the PD part, the closed loop
``T psi'' + (1 + K kd) psi' + K kp psi = 0`` has natural frequency
``w_n`` and damping ``zeta`` when

    kp = T w_n^2 / K,   kd = (2 zeta w_n T - 1) / K,

and the integral gain is put a decade below the bandwidth,
``ki = w_n kp / 10 = w_n^3 T / (10 K)`` (the "w_n/10" rule: common practice;
that [1] states it for this design is from memory, not re-checked; it is
not a closed-loop pole placement).

Feed-forward from the reference model, ``delta_ff = (T a_d + r_d) / K``
(:func:`nomoto_feedforward`), is added before saturation through the
``feedforward`` argument of :func:`pid_step`.

Speed PI: surge ``m u_dot + d u = tau`` (``m`` mass incl. added mass [kg],
``d`` linear damping [kg/s]) with ``tau = -(kp e + ki z)``, ``e = u - u_d``
(plus any feed-forward the caller adds) gives ``m s^2 + (d + kp) s + ki``;
``kp = 2 zeta w_n m - d``, ``ki = w_n^2 m`` place both poles. The command is
a surge force [N]; a caller that needs rev/s converts it through its
actuator model.

References
----------
.. [1] T. I. Fossen, Handbook of Marine Craft Hydrodynamics and Motion
   Control, 2nd ed., Wiley (2021), chapters on motion control / PID
   autopilots (pole placement on the Nomoto model).
.. [2] K. Nomoto, T. Taguchi, K. Honda and S. Hirano, "On the steering
   qualities of ships", International Shipbuilding Progress 4(35) (1957).
.. [3] K. J. Astrom and R. M. Murray, Feedback Systems, Princeton
   University Press (2008), chapter on PID control, integrator windup.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ..core.errors import ParameterError
from ..core.params import Params, bounded

__all__ = [
    "PidParams",
    "PidState",
    "heading_pid_gains",
    "nomoto_feedforward",
    "pid_init",
    "pid_step",
    "speed_pi_gains",
]

FloatArray = NDArray[np.float64]


@dataclass(frozen=True, kw_only=True)
class PidParams(Params):
    """Gains and limits of a PID controller (scalars or arrays of shape (n_trials,)).

    Parameters
    ----------
    kp : float or ndarray
        Proportional gain [command unit per error unit].
    ki : float or ndarray
        Integral gain [command unit per (error unit s)].
    kd : float or ndarray
        Gain on the rate signal [command unit per (error unit / s)].
    output_max : float or ndarray
        Output saturation, ``|command| <= output_max`` [command unit].
    anti_windup : bool
        Conditional integration on (default) or off.
    """

    kp: float = bounded(ge=0.0, doc="proportional gain")
    ki: float = bounded(0.0, ge=0.0, doc="integral gain")
    kd: float = bounded(0.0, ge=0.0, doc="derivative (rate) gain")
    output_max: float = bounded(gt=0.0, doc="output saturation limit")
    anti_windup: bool = True

    def _check(self) -> None:
        if not isinstance(self.anti_windup, (bool, np.bool_)):
            raise ParameterError("anti_windup", self.anti_windup, "must be true or false")


@dataclass(frozen=True)
class PidState:
    """Evolving controller state.

    Attributes
    ----------
    integral : ndarray of shape (n_trials,)
        Integral of the error [error unit s].
    """

    integral: FloatArray


def pid_init(n_trials: int) -> PidState:
    """Zero initial state for ``n_trials`` trials.

    Examples
    --------
    >>> pid_init(2).integral.tolist()
    [0.0, 0.0]
    """
    if int(n_trials) != n_trials or n_trials < 1:
        raise ParameterError("n_trials", n_trials, "must be a whole number >= 1")
    return PidState(integral=np.zeros(int(n_trials)))


def pid_step(
    params: PidParams,
    state: PidState,
    error: ArrayLike,
    rate: ArrayLike,
    dt: float,
    *,
    feedforward: ArrayLike = 0.0,
) -> tuple[PidState, FloatArray]:
    """Advance the controller one step.

    Parameters
    ----------
    params : PidParams
    state : PidState
        Integral of shape (n_trials,).
    error : ndarray of shape (n_trials,)
        Error, measured minus desired (e.g. ``psi - psi_d`` [rad], wrapped
        by the caller).
    rate : ndarray of shape (n_trials,)
        Rate of the measured minus desired signal (e.g. ``r - r_d`` [rad/s]);
        zeros for a PI controller.
    dt : float
        Step [s], > 0.
    feedforward : float or ndarray of shape (n_trials,), optional
        Term added before saturation (e.g. :func:`nomoto_feedforward`); the
        anti-windup logic sees the total.

    Returns
    -------
    new_state : PidState
    command : ndarray of shape (n_trials,)
        ``clip(u_ff - (kp e + kd rate + ki z), -output_max, output_max)`` with
        ``z`` the integral after this step.

    Examples
    --------
    >>> p = PidParams(kp=2.0, ki=0.0, kd=1.0, output_max=0.5)
    >>> s, u = pid_step(p, pid_init(2), [0.1, 1.0], [0.0, 0.0], 0.1)
    >>> u.tolist()
    [-0.2, -0.5]
    """
    if not (np.isfinite(dt) and dt > 0.0):
        raise ParameterError("dt", dt, "must be a finite number > 0")
    e = np.asarray(error, dtype=float)
    rd = np.asarray(rate, dtype=float)
    z = state.integral
    umax = params.output_max
    ff = np.asarray(feedforward, dtype=float)
    u_old = ff - (params.kp * e + params.kd * rd + params.ki * z)
    z_new = z + e * dt
    if params.anti_windup:
        # integrating e moves u by -ki e dt: deeper into the upper limit if e < 0
        deeper = ((u_old > umax) & (e < 0.0)) | ((u_old < -umax) & (e > 0.0))
        z_new = np.where(deeper, z, z_new)
    u = ff - (params.kp * e + params.kd * rd + params.ki * z_new)
    command = np.clip(u, -umax, umax)
    return PidState(integral=np.asarray(z_new, dtype=float)), np.asarray(command, dtype=float)


def nomoto_feedforward(gain_per_s: ArrayLike, time_constant_s: ArrayLike, r_d: ArrayLike, a_d: ArrayLike) -> FloatArray:
    """Rudder feed-forward that makes the Nomoto model follow ``r_d``, ``a_d``.

    Parameters
    ----------
    gain_per_s, time_constant_s : float or ndarray of shape (n_trials,)
        Nomoto K [1/s] and T [s].
    r_d, a_d : ndarray of shape (n_trials,)
        Desired yaw rate [rad/s] and acceleration [rad/s^2] (from the
        reference model).

    Returns
    -------
    ndarray of shape (n_trials,)
        ``delta_ff = (T a_d + r_d) / K`` [rad]: the inverse of
        ``T r_dot + r = K delta`` (Fossen 2021, PID autopilot with reference
        feed-forward).

    Examples
    --------
    >>> float(nomoto_feedforward(0.5, 2.0, 0.1, 0.05))
    0.4
    """
    k = _positive("gain_per_s", gain_per_s)
    tc = _positive("time_constant_s", time_constant_s)
    return (tc * np.asarray(a_d, dtype=float) + np.asarray(r_d, dtype=float)) / k


def heading_pid_gains(
    gain_per_s: ArrayLike,
    time_constant_s: ArrayLike,
    *,
    natural_frequency_rad_s: ArrayLike,
    damping_ratio: ArrayLike,
    output_max: ArrayLike,
    anti_windup: bool = True,
) -> PidParams:
    """PID heading gains by pole placement on the Nomoto model.

    Parameters
    ----------
    gain_per_s, time_constant_s : float or ndarray of shape (n_trials,)
        Nomoto K [1/s] (> 0) and T [s] (> 0).
    natural_frequency_rad_s, damping_ratio : float or ndarray
        Requested closed-loop ``w_n`` [rad/s] and ``zeta`` [-].
    output_max : float or ndarray
        Rudder (or rudder-equivalent) limit [rad].
    anti_windup : bool, optional

    Returns
    -------
    PidParams
        ``kp = T w_n^2 / K``, ``kd = (2 zeta w_n T - 1) / K``,
        ``ki = w_n^3 T / (10 K)`` (see the module notes).

    Raises
    ------
    ParameterError
        If an input is out of range, or ``2 zeta w_n T < 1`` (a negative
        ``kd``; raise ``w_n`` or ``zeta``).

    Examples
    --------
    >>> p = heading_pid_gains(0.5, 2.0, natural_frequency_rad_s=1.0, damping_ratio=1.0,
    ...                       output_max=0.6)
    >>> (p.kp, p.kd, p.ki)
    (4.0, 6.0, 0.4)
    """
    k = _positive("gain_per_s", gain_per_s)
    tc = _positive("time_constant_s", time_constant_s)
    wn = _positive("natural_frequency_rad_s", natural_frequency_rad_s)
    zeta = _positive("damping_ratio", damping_ratio)
    two_zwt = 2.0 * zeta * wn * tc
    if np.any(two_zwt < 1.0):
        raise ParameterError(
            "natural_frequency_rad_s", natural_frequency_rad_s, "must give 2 * damping_ratio * w_n * T >= 1 (kd >= 0)"
        )
    return PidParams(
        kp=_out(tc * wn**2 / k),
        kd=_out((two_zwt - 1.0) / k),
        ki=_out(wn**3 * tc / (10.0 * k)),
        output_max=output_max,
        anti_windup=anti_windup,
    )


def speed_pi_gains(
    mass_kg: ArrayLike,
    damping_kg_per_s: ArrayLike,
    *,
    natural_frequency_rad_s: ArrayLike,
    damping_ratio: ArrayLike,
    output_max_n: ArrayLike,
    anti_windup: bool = True,
) -> PidParams:
    """PI surge-speed gains by pole placement on ``m u_dot + d u = tau``.

    Parameters
    ----------
    mass_kg : float or ndarray
        Surge mass incl. added mass [kg].
    damping_kg_per_s : float or ndarray
        Linear surge damping ``d`` [kg/s] (>= 0).
    natural_frequency_rad_s, damping_ratio : float or ndarray
        Requested ``w_n`` [rad/s] and ``zeta``.
    output_max_n : float or ndarray
        Surge force limit [N].
    anti_windup : bool, optional

    Returns
    -------
    PidParams
        ``kp = 2 zeta w_n m - d`` [N s/m], ``ki = w_n^2 m`` [N/m], ``kd = 0``.

    Examples
    --------
    >>> p = speed_pi_gains(100.0, 20.0, natural_frequency_rad_s=0.5, damping_ratio=1.0,
    ...                    output_max_n=50.0)
    >>> (p.kp, p.ki, p.kd)
    (80.0, 25.0, 0.0)
    """
    m = _positive("mass_kg", mass_kg)
    d = np.asarray(damping_kg_per_s, dtype=float)
    if not np.all(np.isfinite(d)) or np.any(d < 0.0):
        raise ParameterError("damping_kg_per_s", damping_kg_per_s, "must be a finite number >= 0")
    wn = _positive("natural_frequency_rad_s", natural_frequency_rad_s)
    zeta = _positive("damping_ratio", damping_ratio)
    kp = 2.0 * zeta * wn * m - d
    if np.any(kp < 0.0):
        raise ParameterError(
            "natural_frequency_rad_s", natural_frequency_rad_s, "must give 2 * damping_ratio * w_n * m >= d (kp >= 0)"
        )
    return PidParams(kp=_out(kp), ki=_out(wn**2 * m), kd=0.0, output_max=output_max_n, anti_windup=anti_windup)


def _positive(name: str, value: ArrayLike) -> FloatArray:
    v = np.asarray(value, dtype=float)
    if not np.all(np.isfinite(v)) or np.any(v <= 0.0):
        raise ParameterError(name, value, "must be a finite number > 0")
    return v


def _out(v: FloatArray) -> float | FloatArray:
    return float(v) if np.ndim(v) == 0 else v
