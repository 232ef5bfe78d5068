"""Actuators: thrusters with lag, rate limit and saturation; two allocations.

Thruster law. A thruster turning at ``n`` rev/s gives a thrust along the body
x axis of ``T = k_fwd n|n|`` for ``n >= 0`` and ``T = k_rev n|n|`` for
``n < 0`` (the bollard-pull form of the open-water law ``T = rho D^4 K_T n|n|``
with ``K_T`` frozen; advance-ratio effects are left to the hull's surge
damping). Rev/s are limited to ``[-n_max, n_max]``.

Two propulsion layouts are provided, each with one uniform interface used by
the manoeuvres and by the trial loop:

* :class:`DifferentialThrustParams` — a twin-hull craft with a port and a
  starboard thruster (no rudder). Actuator state ``[n_port, n_stbd]`` [rev/s].
* :class:`PropRudderParams` — a single-screw craft with a rudder behind the
  propeller. Actuator state ``[n, delta]`` [rev/s, rad].

:func:`actuator_step` advances an actuator state towards a command (same
layout) and :func:`actuator_tau` gives the generalised force ``[X, Y, N]``.

Sign conventions (NED/body frame, x forward, y starboard, z down): a positive
yaw moment ``N`` turns the bow to starboard. A positive rudder angle
``delta`` gives a side force to port on a rudder aft of CO and hence a
positive yaw moment: positive rudder turns the craft to starboard. For the
differential layout, more port thrust than starboard thrust gives a positive
yaw moment.

References
----------
.. [1] T. I. Fossen, Handbook of Marine Craft Hydrodynamics and Motion
   Control, 2nd ed., Wiley, 2021 — propeller thrust ``T ~ n|n|``, thrust
   configuration matrix ``tau = B f`` (control allocation chapter).
.. [2] J. Carlton, Marine Propellers and Propulsion, Butterworth-Heinemann —
   actuator-disc (momentum) theory: far-wake velocity
   ``V_a sqrt(1 + C_T)``, ``C_T = T / (rho A_0 V_a^2 / 2)``.
.. [3] H. Yasukawa and Y. Yoshimura, "Introduction of MMG standard method
   for ship maneuvering predictions", J. Mar. Sci. Technol. 20, 37–52 (2015)
   — rudder normal force ``F_N = rho A_R U_R^2 f_alpha sin(alpha_R) / 2`` and its
   components ``X_R = -F_N sin delta``, ``Y_R = -F_N cos delta``,
   ``N_R = x_R Y_R`` (interaction coefficients a_H, t_R omitted here).
.. [4] J. D. Anderson, Fundamentals of Aerodynamics — Prandtl lifting-line
   lift slope of an elliptic wing ``a = 2 pi AR / (AR + 2)`` (used by the
   demo craft to choose a rudder lift slope).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ..core.constants import RHO_SEAWATER
from ..core.errors import ParameterError
from ..core.params import Params, bounded

__all__ = [
    "DifferentialThrustParams",
    "PropRudderParams",
    "ThrusterParams",
    "actuator_step",
    "actuator_tau",
    "allocate_differential",
    "differential_forces",
    "differential_matrix",
    "differential_rps_command",
    "max_thrust",
    "min_thrust",
    "prop_rudder_forces",
    "rps_for_thrust",
    "rudder_step",
    "thrust",
    "thruster_step",
]

FloatArray = NDArray[np.float64]


def _check_dt(dt: float) -> None:
    if not (np.isfinite(dt) and dt > 0.0):
        raise ParameterError("dt", dt, "must be a finite number > 0")


@dataclass(frozen=True, kw_only=True)
class ThrusterParams(Params):
    """A fixed-pitch thruster or propeller.

    Parameters
    ----------
    k_fwd_n_per_rps2 : float or ndarray of shape (n_trials,)
        Thrust coefficient ahead, ``T = k_fwd n^2`` for ``n >= 0`` [N/(rev/s)^2].
    k_rev_n_per_rps2 : float or ndarray
        Thrust coefficient astern, ``T = -k_rev n^2`` for ``n < 0`` [N/(rev/s)^2].
    n_max_rps : float or ndarray
        Maximum rev/s, ahead and astern [rev/s].
    n_rate_max_rps_per_s : float or ndarray
        Largest rate of change of rev/s [rev/s^2].
    time_constant_s : float or ndarray
        Motor time constant of the first-order lag [s] (0: no lag).
    x_m, y_m : float or ndarray
        Position of the thrust line in the body frame [m] (y to starboard).
    """

    k_fwd_n_per_rps2: float = bounded(gt=0.0, unit="N/(rev/s)^2", doc="thrust coefficient ahead")
    k_rev_n_per_rps2: float = bounded(gt=0.0, unit="N/(rev/s)^2", doc="thrust coefficient astern")
    n_max_rps: float = bounded(gt=0.0, unit="rev/s", doc="maximum rev/s ahead and astern")
    n_rate_max_rps_per_s: float = bounded(gt=0.0, unit="rev/s^2", doc="rev/s rate limit")
    time_constant_s: float = bounded(0.0, ge=0.0, unit="s", doc="motor first-order time constant")
    x_m: float = bounded(0.0, unit="m", doc="thrust line x position in body frame")
    y_m: float = bounded(0.0, unit="m", doc="thrust line y position in body frame (starboard +)")


def thrust(params: ThrusterParams, n: ArrayLike) -> FloatArray:
    """Thrust from rev/s, ``T = k n|n|`` with ``k = k_fwd`` (n >= 0) or ``k_rev``.

    Parameters
    ----------
    params : ThrusterParams
    n : ndarray of shape (n_trials,)
        Rev/s (signed).

    Returns
    -------
    ndarray of shape (n_trials,)
        Thrust along body x [N].

    Examples
    --------
    >>> p = ThrusterParams(k_fwd_n_per_rps2=2.0, k_rev_n_per_rps2=1.0, n_max_rps=10.0,
    ...                    n_rate_max_rps_per_s=5.0)
    >>> thrust(p, np.array([3.0, -3.0])).tolist()
    [18.0, -9.0]
    """
    n = np.asarray(n, dtype=float)
    k = np.where(n >= 0.0, params.k_fwd_n_per_rps2, params.k_rev_n_per_rps2)
    return k * n * np.abs(n)


def rps_for_thrust(params: ThrusterParams, force: ArrayLike) -> FloatArray:
    """Inverse thrust law: rev/s giving ``force`` (``sign(T) sqrt(|T| / k)``).

    Parameters
    ----------
    params : ThrusterParams
    force : ndarray of shape (n_trials,)
        Desired thrust [N].

    Returns
    -------
    ndarray of shape (n_trials,)
        Rev/s, not saturated.
    """
    f = np.asarray(force, dtype=float)
    k = np.where(f >= 0.0, params.k_fwd_n_per_rps2, params.k_rev_n_per_rps2)
    return np.sign(f) * np.sqrt(np.abs(f) / k)


def max_thrust(params: ThrusterParams) -> FloatArray:
    """Largest thrust ahead, ``k_fwd n_max^2`` [N]."""
    return np.asarray(params.k_fwd_n_per_rps2 * params.n_max_rps**2)


def min_thrust(params: ThrusterParams) -> FloatArray:
    """Largest thrust astern as a negative number, ``-k_rev n_max^2`` [N]."""
    return np.asarray(-params.k_rev_n_per_rps2 * params.n_max_rps**2)


def thruster_step(
    params: ThrusterParams, n_state: ArrayLike, n_cmd: ArrayLike, dt: float
) -> FloatArray:
    """Advance thruster rev/s over one step.

    Parameters
    ----------
    params : ThrusterParams
    n_state : ndarray of shape (n_trials,)
        Rev/s at the start of the step.
    n_cmd : ndarray of shape (n_trials,)
        Commanded rev/s, held over the step.
    dt : float
        Step [s].

    Returns
    -------
    ndarray of shape (n_trials,)
        Rev/s at the end of the step.

    Notes
    -----
    Applied in this order:

    1. the command is saturated to ``[-n_max, n_max]``;
    2. the first-order lag ``T n_dot = n_cmd - n`` is advanced exactly for a
       command held over the step: ``n_lag = n_cmd + (n - n_cmd) exp(-dt/T)``
       (``T = 0`` gives ``n_lag = n_cmd``);
    3. the change over the step is limited to ``|n_lag - n| <= rate_max dt``
       (the rate limit acts on the mean rate over the step);
    4. the result is saturated to ``[-n_max, n_max]`` again (a no-op unless
       the state started outside the limits).

    The lag's discretisation is the exact zero-order-hold equivalent of the
    first-order system (e.g. Franklin, Powell & Workman, Digital Control of
    Dynamic Systems, ZOH equivalent ``phi = exp(-dt/T)``); its step response
    is ``1 - exp(-t/T)`` at every sample.
    """
    _check_dt(dt)
    n = np.asarray(n_state, dtype=float)
    n_max = params.n_max_rps
    cmd = np.clip(np.asarray(n_cmd, dtype=float), -n_max, n_max)
    with np.errstate(divide="ignore"):
        phi = np.exp(-dt / np.asarray(params.time_constant_s, dtype=float))
    n_lag = cmd + (n - cmd) * phi
    dn_max = params.n_rate_max_rps_per_s * dt
    n_new = n + np.clip(n_lag - n, -dn_max, dn_max)
    return np.clip(n_new, -n_max, n_max)


# ---------------------------------------------------------------------------
# Differential thrust (twin-hull craft)


@dataclass(frozen=True, kw_only=True)
class DifferentialThrustParams(Params):
    """Two thrusters, one each side of the centreline, both thrusting along x.

    Parameters
    ----------
    port : ThrusterParams
        Port thruster (``y_m < 0``).
    starboard : ThrusterParams
        Starboard thruster (``y_m > 0``).
    """

    port: ThrusterParams
    starboard: ThrusterParams

    def _check(self) -> None:
        for name, p in (("port", self.port), ("starboard", self.starboard)):
            if not isinstance(p, ThrusterParams):
                raise ParameterError(name, p, "must be a ThrusterParams")
        if not np.all(np.asarray(self.port.y_m) < 0.0):
            raise ParameterError("port.y_m", self.port.y_m, "must be < 0 (port side)")
        if not np.all(np.asarray(self.starboard.y_m) > 0.0):
            raise ParameterError(
                "starboard.y_m", self.starboard.y_m, "must be > 0 (starboard side)"
            )


def differential_matrix(params: DifferentialThrustParams) -> FloatArray:
    """Thrust configuration matrix ``B`` with ``tau = B f``, ``f = [T_port, T_stbd]``.

    Returns
    -------
    ndarray of shape (n_trials, 3, 2), or (1, 3, 2) for scalar parameters

    Notes
    -----
    A force ``T`` along x at ``(x_i, y_i)`` gives ``X = T``, ``Y = 0`` and
    ``N = x_i * 0 - y_i T = -y_i T``, so ``B = [[1, 1], [0, 0], [-y_p, -y_s]]``
    (Fossen 2021, control allocation, thrust configuration matrix).
    """
    yp, ys = np.broadcast_arrays(
        np.atleast_1d(np.asarray(params.port.y_m, dtype=float)),
        np.atleast_1d(np.asarray(params.starboard.y_m, dtype=float)),
    )
    one = np.ones_like(yp)
    zero = np.zeros_like(yp)
    return np.stack([one, one, zero, zero, -yp, -ys], axis=-1).reshape((*yp.shape, 3, 2))


def differential_forces(params: DifferentialThrustParams, f: ArrayLike) -> FloatArray:
    """Forward map ``tau = B f`` for the differential layout.

    Parameters
    ----------
    params : DifferentialThrustParams
    f : ndarray of shape (n_trials, 2)
        Thrusts ``[T_port, T_stbd]`` [N].

    Returns
    -------
    ndarray of shape (n_trials, 3)
        ``[X, Y, N]`` [N, N, N·m].
    """
    f = np.asarray(f, dtype=float)
    fp = f[..., 0]
    fs = f[..., 1]
    x = fp + fs
    n = -params.port.y_m * fp - params.starboard.y_m * fs
    return np.stack(np.broadcast_arrays(x, np.zeros_like(x), n), axis=-1)


def allocate_differential(
    params: DifferentialThrustParams, surge_n: ArrayLike, yaw_nm: ArrayLike
) -> FloatArray:
    """Thrusts that realise a surge force and yaw moment, yaw moment first.

    Parameters
    ----------
    params : DifferentialThrustParams
    surge_n : ndarray of shape (n_trials,)
        Desired surge force X [N].
    yaw_nm : ndarray of shape (n_trials,)
        Desired yaw moment N [N·m].

    Returns
    -------
    ndarray of shape (n_trials, 2)
        Achievable thrusts ``[T_port, T_stbd]`` [N], each within
        ``[-k_rev n_max^2, k_fwd n_max^2]``.

    Notes
    -----
    Unsaturated, ``B f = [X, 0, N]`` has the unique solution (``d = y_s - y_p``)
    ``T_p = (N + y_s X) / d``, ``T_s = (-N - y_p X) / d``.

    Saturation handling (our choice: yaw priority, so that a heading
    controller keeps its authority when the speed demand is high):

    1. the yaw moment is clipped to the range the thrusters can give,
       ``[-y_p lo_p - y_s hi_s, -y_p hi_p - y_s lo_s]``;
    2. along the line of constant yaw moment, ``f = f_N + X w`` with
       ``w = [y_s, -y_p] / d`` (both components positive), the surge force is
       clipped to the interval that keeps both thrusts within their limits.

    The result is the feasible thrust pair nearest to the demand in surge
    force among those that give the (clipped) yaw moment exactly.
    """
    yp = np.asarray(params.port.y_m, dtype=float)
    ys = np.asarray(params.starboard.y_m, dtype=float)
    lo_p, hi_p = min_thrust(params.port), max_thrust(params.port)
    lo_s, hi_s = min_thrust(params.starboard), max_thrust(params.starboard)
    x = np.asarray(surge_n, dtype=float)
    n = np.asarray(yaw_nm, dtype=float)
    d = ys - yp
    n_hi = -yp * hi_p - ys * lo_s
    n_lo = -yp * lo_p - ys * hi_s
    n_c = np.clip(n, n_lo, n_hi)
    fp0 = n_c / d
    fs0 = -n_c / d
    wp = ys / d
    ws = -yp / d
    x_lo = np.maximum((lo_p - fp0) / wp, (lo_s - fs0) / ws)
    x_hi = np.minimum((hi_p - fp0) / wp, (hi_s - fs0) / ws)
    x_c = np.clip(x, x_lo, np.maximum(x_lo, x_hi))
    fp = np.clip(fp0 + x_c * wp, lo_p, hi_p)
    fs = np.clip(fs0 + x_c * ws, lo_s, hi_s)
    return np.stack(np.broadcast_arrays(fp, fs), axis=-1)


def differential_rps_command(
    params: DifferentialThrustParams, surge_n: ArrayLike, yaw_nm: ArrayLike
) -> FloatArray:
    """Rev/s commands ``[n_port, n_stbd]`` for a surge force and yaw moment.

    :func:`allocate_differential` (yaw priority) followed by the inverse
    thrust law :func:`rps_for_thrust`.

    Returns
    -------
    ndarray of shape (n_trials, 2)
        Rev/s commands, within ``[-n_max, n_max]``.
    """
    f = allocate_differential(params, surge_n, yaw_nm)
    n_p = np.clip(
        rps_for_thrust(params.port, f[..., 0]), -params.port.n_max_rps, params.port.n_max_rps
    )
    n_s = np.clip(
        rps_for_thrust(params.starboard, f[..., 1]),
        -params.starboard.n_max_rps,
        params.starboard.n_max_rps,
    )
    return np.stack(np.broadcast_arrays(n_p, n_s), axis=-1)


# ---------------------------------------------------------------------------
# Propeller and rudder (single-screw craft)


@dataclass(frozen=True, kw_only=True)
class PropRudderParams(Params):
    """A propeller on the centreline with a rudder behind it.

    Parameters
    ----------
    propeller : ThrusterParams
        Propeller thrust law and dynamics (its ``y_m`` is normally 0).
    prop_diameter_m : float or ndarray of shape (n_trials,)
        Propeller diameter D [m], for the actuator-disc slipstream.
    thrust_deduction : float or ndarray
        Thrust deduction fraction t: the hull feels ``(1 - t) T`` [-].
    wake_fraction : float or ndarray
        Taylor wake fraction w: inflow ``u_a = (1 - w) u_r`` [-].
    rudder_area_m2 : float or ndarray
        Rudder lateral area A_R [m^2].
    rudder_x_m : float or ndarray
        Longitudinal position of the rudder's centre of pressure [m] (< 0: aft).
    rudder_lift_slope_per_rad : float or ndarray
        Normal-force slope f_alpha of ``C_N = f_alpha sin(delta)`` [1/rad].
    slipstream_fraction : float or ndarray
        Share of the rudder area inside the propeller slipstream eta_s [-].
    rudder_max_deg : float or ndarray
        Largest rudder angle [deg].
    rudder_rate_max_deg_per_s : float or ndarray
        Steering-gear rate limit [deg/s].
    """

    propeller: ThrusterParams
    prop_diameter_m: float = bounded(gt=0.0, unit="m", doc="propeller diameter")
    thrust_deduction: float = bounded(0.0, ge=0.0, lt=1.0, unit="1", doc="thrust deduction t")
    wake_fraction: float = bounded(0.0, ge=0.0, lt=1.0, unit="1", doc="Taylor wake fraction w")
    rudder_area_m2: float = bounded(gt=0.0, unit="m^2", doc="rudder lateral area")
    rudder_x_m: float = bounded(lt=0.0, unit="m", doc="rudder x position (aft of CO, < 0)")
    rudder_lift_slope_per_rad: float = bounded(
        gt=0.0, unit="1/rad", doc="rudder normal-force slope"
    )
    slipstream_fraction: float = bounded(
        1.0, ge=0.0, le=1.0, unit="1", doc="share of rudder in slipstream"
    )
    rudder_max_deg: float = bounded(35.0, gt=0.0, le=90.0, unit="deg", doc="rudder angle limit")
    rudder_rate_max_deg_per_s: float = bounded(gt=0.0, unit="deg/s", doc="rudder rate limit")

    def _check(self) -> None:
        if not isinstance(self.propeller, ThrusterParams):
            raise ParameterError("propeller", self.propeller, "must be a ThrusterParams")


def rudder_step(
    params: PropRudderParams, delta: ArrayLike, delta_cmd: ArrayLike, dt: float
) -> FloatArray:
    """Advance the rudder angle over one step (rate limit and angle limit).

    Parameters
    ----------
    params : PropRudderParams
    delta : ndarray of shape (n_trials,)
        Rudder angle at the start of the step [rad].
    delta_cmd : ndarray of shape (n_trials,)
        Commanded angle, held over the step [rad].
    dt : float
        Step [s].

    Returns
    -------
    ndarray of shape (n_trials,)
        Rudder angle at the end of the step [rad].

    Notes
    -----
    The command is saturated to ``±delta_max``; the rudder then moves towards
    it at most ``rate_max dt`` per step (a steering gear moves at a constant
    rate, no lag); the result is saturated again.
    """
    _check_dt(dt)
    d_max = np.deg2rad(params.rudder_max_deg)
    rate = np.deg2rad(params.rudder_rate_max_deg_per_s) * dt
    delta = np.asarray(delta, dtype=float)
    cmd = np.clip(np.asarray(delta_cmd, dtype=float), -d_max, d_max)
    return np.clip(delta + np.clip(cmd - delta, -rate, rate), -d_max, d_max)


def prop_rudder_forces(
    params: PropRudderParams,
    n: ArrayLike,
    delta: ArrayLike,
    nu_r: ArrayLike,
    *,
    rho: float = RHO_SEAWATER,
) -> FloatArray:
    """Generalised force of a propeller and a rudder in its slipstream.

    Parameters
    ----------
    params : PropRudderParams
    n : ndarray of shape (n_trials,)
        Propeller rev/s.
    delta : ndarray of shape (n_trials,)
        Rudder angle [rad] (positive: turn to starboard).
    nu_r : ndarray of shape (n_trials, 3)
        Velocity relative to the water ``[u_r, v_r, r]``.
    rho : float, optional
        Water density [kg/m^3].

    Returns
    -------
    ndarray of shape (n_trials, 3)
        ``[X, Y, N]`` [N, N, N·m].

    Notes
    -----
    Propeller: ``X_P = (1 - t) T``, ``N_P = -y_P X_P``.

    Rudder inflow: the advance speed is ``u_a = (1 - w) u_r``. Actuator-disc
    (momentum) theory gives a fully developed slipstream speed ``V_s`` with
    ``V_s^2 = u_a^2 + 2 T / (rho A_0)``, ``A_0 = pi D^2 / 4`` (Carlton, Marine
    Propellers and Propulsion). With a share ``eta_s`` of the rudder in the
    slipstream, the (signed) squared inflow speed is

    ``q = u_a |u_a| + eta_s 2 max(T, 0) / (rho A_0)``

    which is ``V_R^2`` going ahead and ``-u_a^2`` going astern without thrust
    (the force then reverses, as it should for flow from behind).

    Rudder force (normal-force form as in the MMG standard method, Yasukawa &
    Yoshimura 2015, with the inflow angle taken equal to ``delta``: the
    cross-flow at the rudder from sway and yaw is neglected here and left in
    the hull's damping derivatives):

    ``F_N = rho A_R f_alpha sin(delta) q / 2``,
    ``X_R = -F_N sin(delta)``, ``Y_R = -F_N cos(delta)``, ``N_R = x_R Y_R``.

    With ``x_R < 0`` a positive ``delta`` gives ``Y_R < 0`` (to port) and
    ``N_R > 0``: the craft turns to starboard. ``X_R`` is always a drag.
    """
    prop = params.propeller
    n = np.asarray(n, dtype=float)
    delta = np.asarray(delta, dtype=float)
    nu_r = np.asarray(nu_r, dtype=float)
    t_prop = thrust(prop, n)
    x_p = (1.0 - params.thrust_deduction) * t_prop
    n_p = -prop.y_m * x_p
    u_a = (1.0 - params.wake_fraction) * nu_r[..., 0]
    disc_area = 0.25 * math.pi * np.square(params.prop_diameter_m)
    q = u_a * np.abs(u_a) + params.slipstream_fraction * 2.0 * np.maximum(t_prop, 0.0) / (
        rho * disc_area
    )
    sd = np.sin(delta)
    cd = np.cos(delta)
    f_n = 0.5 * rho * params.rudder_area_m2 * params.rudder_lift_slope_per_rad * sd * q
    x_r = -f_n * sd
    y_r = -f_n * cd
    n_r = params.rudder_x_m * y_r
    return np.stack(np.broadcast_arrays(x_p + x_r, y_r, n_p + n_r), axis=-1)


# ---------------------------------------------------------------------------
# Uniform interface


def actuator_step(
    params: DifferentialThrustParams | PropRudderParams,
    state: ArrayLike,
    command: ArrayLike,
    dt: float,
) -> FloatArray:
    """Advance an actuator state towards a command over one step.

    Parameters
    ----------
    params : DifferentialThrustParams or PropRudderParams
    state : ndarray of shape (n_trials, 2)
        ``[n_port, n_stbd]`` [rev/s] or ``[n, delta]`` [rev/s, rad].
    command : ndarray of shape (n_trials, 2)
        Same layout as ``state``, held over the step.
    dt : float
        Step [s].

    Returns
    -------
    ndarray of shape (n_trials, 2)
    """
    s = np.asarray(state, dtype=float)
    c = np.asarray(command, dtype=float)
    if isinstance(params, DifferentialThrustParams):
        a = thruster_step(params.port, s[..., 0], c[..., 0], dt)
        b = thruster_step(params.starboard, s[..., 1], c[..., 1], dt)
    elif isinstance(params, PropRudderParams):
        a = thruster_step(params.propeller, s[..., 0], c[..., 0], dt)
        b = rudder_step(params, s[..., 1], c[..., 1], dt)
    else:
        raise ParameterError(
            "propulsion", params, "must be a DifferentialThrustParams or a PropRudderParams"
        )
    return np.stack(np.broadcast_arrays(a, b), axis=-1)


def actuator_tau(
    params: DifferentialThrustParams | PropRudderParams,
    state: ArrayLike,
    nu_r: ArrayLike,
    *,
    rho: float = RHO_SEAWATER,
) -> FloatArray:
    """Generalised force ``[X, Y, N]`` of an actuator state.

    Parameters
    ----------
    params : DifferentialThrustParams or PropRudderParams
    state : ndarray of shape (n_trials, 2)
        As in :func:`actuator_step`.
    nu_r : ndarray of shape (n_trials, 3)
        Velocity relative to the water (used by the rudder).
    rho : float, optional
        Water density [kg/m^3].

    Returns
    -------
    ndarray of shape (n_trials, 3)
    """
    s = np.asarray(state, dtype=float)
    if isinstance(params, DifferentialThrustParams):
        f = np.stack(
            np.broadcast_arrays(
                thrust(params.port, s[..., 0]), thrust(params.starboard, s[..., 1])
            ),
            axis=-1,
        )
        return differential_forces(params, f)
    if isinstance(params, PropRudderParams):
        return prop_rudder_forces(params, s[..., 0], s[..., 1], nu_r, rho=rho)
    raise ParameterError(
        "propulsion", params, "must be a DifferentialThrustParams or a PropRudderParams"
    )
