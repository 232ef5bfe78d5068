"""The built-in stack's control tick, compiled: LOS / ILOS guide, PID pilot, actuators.

:func:`compiled_tick` does for every trial of a batch, in one compiled call
(``prange`` over trials), what :class:`~wavebench.trial.blocks.LosGuide`,
:class:`~wavebench.trial.blocks.NomotoPidPilot` and
:class:`~wavebench.trial.actuation.Actuation` do in numpy: waypoint
switching and the LOS / ILOS course, the course-to-heading correction, the
heading reference model, the heading PID and speed PI with conditional
anti-windup, the actuator commands (yaw-priority allocation for twin
thrusters, propeller and rudder otherwise), the actuator lags and rate
limits, the mean actuator force over the period and the shaft power. The
numpy blocks are its test oracle (``tests/test_compiled_tick.py``); the loop
uses this path whenever the spec's own guide and pilot are in use, and the
numpy blocks when a user block replaces one of them.

Each trial is computed on its own in scalar arithmetic, so a trial's
numbers do not depend on its batch.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numba
import numpy as np
from numpy.typing import NDArray

from ..craft.actuators import DifferentialThrustParams
from ..craft.manoeuvres import HARD_OVER_DEG
from .actuation import POWER_EFFICIENCY, THRUSTER_BOLLARD_KT, Actuation
from .blocks import LosGuide, NomotoPidPilot

__all__ = ["OUT_XTE_TRUE", "CompiledStack", "TickState", "compiled_tick", "control_one", "wrap_scalar"]

FloatArray = NDArray[np.float64]

_TWO_PI = 2.0 * math.pi
# columns of the output array
OUT_HEADING_D, OUT_SPEED_D, OUT_XTE, OUT_DONE, OUT_LEG = 0, 1, 2, 3, 4
OUT_TAU = 5  # 5, 6, 7
OUT_POWER = 8
OUT_SURGE_CMD, OUT_RUDDER_CMD = 9, 10
OUT_ALONG = 11
OUT_XTE_TRUE = 12
N_OUT = 13


@dataclass
class TickState:
    """Evolving state of the compiled stack (arrays of shape (n_trials, ...), updated in place).

    Parameters
    ----------
    leg : ndarray of int, (n_trials,)
    e_int : ndarray (n_trials,)
        ILOS integral state [s].
    done : ndarray of bool (n_trials,)
    pid : ndarray (n_trials, 2)
        Heading and speed integrals.
    ref : ndarray (n_trials, 3)
        Reference model ``x_f, psi_d, r_d``.
    act : ndarray (n_trials, 2)
        Actuator state.
    """

    leg: NDArray[np.int64]
    e_int: FloatArray
    done: NDArray[np.bool_]
    pid: FloatArray
    ref: FloatArray
    act: FloatArray


@dataclass(frozen=True)
class CompiledStack:
    """The built-in guide, pilot and actuators packed into arrays for :func:`compiled_tick`."""

    waypoints: FloatArray
    count: NDArray[np.int64]
    los: FloatArray
    legs: FloatArray
    pilot: FloatArray
    act_params: FloatArray
    layout: int

    @classmethod
    def pack(cls, guide: LosGuide, pilot: NomotoPidPilot, actuation: Actuation) -> CompiledStack:
        """Pack the built-in blocks of a batch."""
        n = guide.path.n_trials
        p = guide.params
        los = np.stack([np.broadcast_to(np.asarray(v, dtype=float), (n,)) for v in
                        (p.lookahead_m, p.integral_gain, p.acceptance_radius_m, float(p.switch_on_pass))],
                       axis=1)  # fmt: skip
        h, s, ref = pilot.heading, pilot.speed, pilot.reference
        pil = np.array([
            h.kp, h.ki, h.kd, h.output_max, float(h.anti_windup),
            s.kp, s.ki, s.kd, s.output_max, float(s.anti_windup),
            pilot.nomoto_gain_per_s, pilot.nomoto_time_constant_s,
            float(ref is not None),
            ref.natural_frequency_rad_s if ref is not None else 1.0,
            ref.damping_ratio if ref is not None else 1.0,
            ref.rate_max_rad_s if ref is not None else np.inf,
            ref.accel_max_rad_s2 if ref is not None else np.inf,
            pilot.surge_x_u, pilot.surge_x_uu,
        ], dtype=float)  # fmt: skip
        prop = actuation.craft.propulsion
        rho = actuation.rho
        if isinstance(prop, DifferentialThrustParams):
            layout = 0
            vals = []
            for side in (prop.port, prop.starboard):
                d = (float(side.k_fwd_n_per_rps2) / (THRUSTER_BOLLARD_KT * rho)) ** 0.25
                vals += [side.y_m, side.k_fwd_n_per_rps2, side.k_rev_n_per_rps2, side.n_max_rps,
                         side.n_rate_max_rps_per_s, side.time_constant_s, 0.25 * math.pi * d * d]  # fmt: skip
            act = np.array([*vals, rho, math.radians(HARD_OVER_DEG)], dtype=float)
        else:
            layout = 1
            pr = prop.propeller
            act = np.array([
                pr.k_fwd_n_per_rps2, pr.k_rev_n_per_rps2, pr.n_max_rps, pr.n_rate_max_rps_per_s, pr.time_constant_s,
                pr.y_m, prop.thrust_deduction, prop.wake_fraction, 0.25 * math.pi * float(prop.prop_diameter_m) ** 2,
                prop.rudder_area_m2, prop.rudder_lift_slope_per_rad, prop.slipstream_fraction, prop.rudder_x_m,
                math.radians(float(prop.rudder_max_deg)), math.radians(float(prop.rudder_rate_max_deg_per_s)), rho,
            ], dtype=float)  # fmt: skip
        return cls(
            waypoints=np.ascontiguousarray(guide.path.waypoints, dtype=float),
            count=np.ascontiguousarray(guide.path.count, dtype=np.int64), los=np.ascontiguousarray(los),
            legs=np.ascontiguousarray(guide.leg_speed_mps, dtype=float), pilot=pil, act_params=act, layout=layout,
        )  # fmt: skip

    def init_state(self, heading_rad: FloatArray, act0: FloatArray) -> TickState:
        """Initial state: first leg, zero integrals, reference at the current heading."""
        n = heading_rad.shape[0]
        ref = np.zeros((n, 3))
        ref[:, 0] = heading_rad
        ref[:, 1] = heading_rad
        return TickState(leg=np.zeros(n, dtype=np.int64), e_int=np.zeros(n), done=np.zeros(n, dtype=bool),
                         pid=np.zeros((n, 2)), ref=ref, act=np.array(act0, dtype=float))  # fmt: skip


_jit = numba.njit(cache=True, error_model="numpy", inline="always")


@_jit
def wrap_scalar(a: float) -> float:
    """An angle wrapped to [-pi, pi) [rad], as :func:`wavebench.core.frames.wrap_pi` (compiled, scalar)."""
    out = np.mod(a + np.pi, _TWO_PI) - np.pi
    if out >= np.pi:
        out -= _TWO_PI
    return out


@_jit
def _clip(x: float, lo: float, hi: float) -> float:
    return min(max(x, lo), hi)


@_jit
def _pid(kp, ki, kd, umax, aw, z, e, rate, dt, ff):
    u_old = ff - (kp * e + kd * rate + ki * z)
    z_new = z + e * dt
    if aw > 0.5 and ((u_old > umax and e < 0.0) or (u_old < -umax and e > 0.0)):
        z_new = z
    u = ff - (kp * e + kd * rate + ki * z_new)
    return z_new, _clip(u, -umax, umax)


@_jit
def _ref_deriv(wn, zeta, rmax, amax, xf, psi, r, target):
    a = _clip(wn * wn * (xf - psi) - 2.0 * zeta * wn * r, -amax, amax)
    if (r >= rmax and a > 0.0) or (r <= -rmax and a < 0.0):
        a = 0.0
    return wn * (target - xf), _clip(r, -rmax, rmax), a


@_jit
def _thrust(kf, kr, n):
    k = kf if n >= 0.0 else kr
    return k * n * abs(n)


@_jit
def _rps(kf, kr, f):
    k = kf if f >= 0.0 else kr
    return np.sign(f) * np.sqrt(abs(f) / k)


@_jit
def _thruster_step(nmax, rate, tc, n, cmd, dt):
    c = _clip(cmd, -nmax, nmax)
    phi = np.exp(-dt / tc)
    n_lag = c + (n - c) * phi
    dn = rate * dt
    return _clip(n + _clip(n_lag - n, -dn, dn), -nmax, nmax)


@_jit
def _disc_power(t, v_a, area, rho):
    t_abs = abs(t)
    va = max(v_a, 0.0)
    v_i = 0.5 * (-va + np.sqrt(va * va + 2.0 * t_abs / (rho * area)))
    return t_abs * (va + v_i) / POWER_EFFICIENCY


@numba.njit(cache=True, error_model="numpy")
def control_one(i, north, east, psi, u, v, r, n_t, e_t, psi_t, u_t, cn, ce, wp, count, los, legs, pil, ap, layout, dt,
                leg, e_int, done, pid, ref, act, out):  # fmt: skip
    """One trial's control period (row ``i`` of the state arrays and of ``out``); see :func:`compiled_tick`.

    ``north .. r`` is the navigation solution the guide and pilot see;
    ``n_t, e_t, psi_t, u_t`` the true position, heading and surge, for the
    actuators' inflow and the true cross-track error.
    """
    # --- guide: circle of acceptance, then LOS / ILOS
    k = leg[i]
    delta, sigma, radius = los[i, 0], los[i, 1], los[i, 2]
    xe, ye = wp[i, k + 1, 0], wp[i, k + 1, 1]
    d2 = (xe - north) ** 2 + (ye - east) ** 2
    accepted = d2 <= radius * radius
    if los[i, 3] > 0.5:
        passed = (north - xe) * (xe - wp[i, k, 0]) + (east - ye) * (ye - wp[i, k, 1])
        accepted = accepted or passed >= 0.0
    accepted = accepted and not done[i]
    at_last = k >= count[i] - 2
    switched = accepted and not at_last
    if switched:
        k += 1
        e_int[i] = 0.0
    if accepted and at_last:
        done[i] = True
    leg[i] = k
    x0, y0 = wp[i, k, 0], wp[i, k, 1]
    pi_p = np.arctan2(wp[i, k + 1, 1] - y0, wp[i, k + 1, 0] - x0)
    dx, dy = north - x0, east - y0
    e = -dx * np.sin(pi_p) + dy * np.cos(pi_p)
    s_along = dx * np.cos(pi_p) + dy * np.sin(pi_p)
    eff = e + sigma * e_int[i]
    chi_d = wrap_scalar(pi_p - np.arctan(eff / delta))
    if sigma > 0.0:
        e_int[i] += dt * (delta * e / (eff * eff + delta * delta))
    psi_g = wrap_scalar(chi_d - np.arctan2(v, u))
    u_d = legs[i, k]
    # --- pilot: reference model, heading PID, speed PI
    if pil[12] > 0.5:
        wn, zeta, rmax, amax = pil[13], pil[14], pil[15], pil[16]
        xf, pd, rd = ref[i, 0], ref[i, 1], ref[i, 2]
        target = xf + wrap_scalar(psi_g - xf)
        a1, b1, c1 = _ref_deriv(wn, zeta, rmax, amax, xf, pd, rd, target)
        a2, b2, c2 = _ref_deriv(wn, zeta, rmax, amax, xf + 0.5 * dt * a1, pd + 0.5 * dt * b1, rd + 0.5 * dt * c1,
                                target)  # fmt: skip
        a3, b3, c3 = _ref_deriv(wn, zeta, rmax, amax, xf + 0.5 * dt * a2, pd + 0.5 * dt * b2, rd + 0.5 * dt * c2,
                                target)  # fmt: skip
        a4, b4, c4 = _ref_deriv(wn, zeta, rmax, amax, xf + dt * a3, pd + dt * b3, rd + dt * c3, target)
        xf = xf + dt / 6.0 * (a1 + 2.0 * a2 + 2.0 * a3 + a4)
        pd = pd + dt / 6.0 * (b1 + 2.0 * b2 + 2.0 * b3 + b4)
        rd = _clip(rd + dt / 6.0 * (c1 + 2.0 * c2 + 2.0 * c3 + c4), -rmax, rmax)
        ref[i, 0], ref[i, 1], ref[i, 2] = xf, pd, rd
        ad = _ref_deriv(wn, zeta, rmax, amax, xf, pd, rd, target)[2]
        psi_d = pd
    else:
        psi_d, rd, ad = psi_g, 0.0, 0.0
    eh = wrap_scalar(psi - psi_d)
    ff = (pil[11] * ad + rd) / pil[10]
    pid[i, 0], rudder = _pid(pil[0], pil[1], pil[2], pil[3], pil[4], pid[i, 0], eh, r - rd, dt, ff)
    x_ff = -(pil[17] * u_d + pil[18] * abs(u_d) * u_d)
    pid[i, 1], force = _pid(pil[5], pil[6], pil[7], pil[8], pil[9], pid[i, 1], u - u_d, 0.0, dt, x_ff)
    # --- actuators: command, dynamics, mean force, power
    cpsi, spsi = np.cos(psi_t), np.sin(psi_t)
    u_r = u_t - (cpsi * cn + spsi * ce)
    a0, a1_ = act[i, 0], act[i, 1]
    if layout == 0:
        yp, kfp, krp, nmp, rtp, tcp, arp = ap[0], ap[1], ap[2], ap[3], ap[4], ap[5], ap[6]
        ys, kfs, krs, nms, rts, tcs, ars = ap[7], ap[8], ap[9], ap[10], ap[11], ap[12], ap[13]
        rho, hard = ap[14], ap[15]
        hi_p, lo_p = kfp * nmp * nmp, -krp * nmp * nmp
        hi_s, lo_s = kfs * nms * nms, -krs * nms * nms
        frac = _clip(rudder / hard, -1.0, 1.0)
        n_hi = -yp * hi_p - ys * lo_s
        n_lo = -yp * lo_p - ys * hi_s
        yaw = frac * n_hi if frac >= 0.0 else -frac * n_lo
        d = ys - yp
        n_c = _clip(yaw, n_lo, n_hi)
        fp0, fs0 = n_c / d, -n_c / d
        wpw, wsw = ys / d, -yp / d
        x_lo = max((lo_p - fp0) / wpw, (lo_s - fs0) / wsw)
        x_hi = min((hi_p - fp0) / wpw, (hi_s - fs0) / wsw)
        x_c = _clip(force, x_lo, max(x_lo, x_hi))
        fp = _clip(fp0 + x_c * wpw, lo_p, hi_p)
        fs = _clip(fs0 + x_c * wsw, lo_s, hi_s)
        cmd0 = _clip(_rps(kfp, krp, fp), -nmp, nmp)
        cmd1 = _clip(_rps(kfs, krs, fs), -nms, nms)
        b0 = _thruster_step(nmp, rtp, tcp, a0, cmd0, dt)
        b1 = _thruster_step(nms, rts, tcs, a1_, cmd1, dt)
        m0, m1 = 0.5 * (a0 + b0), 0.5 * (a1_ + b1)
        tp, ts = _thrust(kfp, krp, m0), _thrust(kfs, krs, m1)
        tx, ty, tn = tp + ts, 0.0, -yp * tp - ys * ts
        pw = _disc_power(tp, u_r if tp >= 0.0 else -u_r, arp, rho)
        pw += _disc_power(ts, u_r if ts >= 0.0 else -u_r, ars, rho)
    else:
        kf, kr, nmax, rate, tc, yprop = ap[0], ap[1], ap[2], ap[3], ap[4], ap[5]
        t_ded, w_frac, area, a_r, slope, eta_s, x_r = ap[6], ap[7], ap[8], ap[9], ap[10], ap[11], ap[12]
        dmax, drate, rho = ap[13], ap[14], ap[15]
        cmd0 = _clip(_rps(kf, kr, force / (1.0 - t_ded)), -nmax, nmax)
        cmd1 = _clip(rudder, -dmax, dmax)
        b0 = _thruster_step(nmax, rate, tc, a0, cmd0, dt)
        step = drate * dt
        b1 = _clip(a1_ + _clip(_clip(cmd1, -dmax, dmax) - a1_, -step, step), -dmax, dmax)
        m0, m1 = 0.5 * (a0 + b0), 0.5 * (a1_ + b1)
        t_prop = _thrust(kf, kr, m0)
        x_p = (1.0 - t_ded) * t_prop
        u_a = (1.0 - w_frac) * u_r
        q = u_a * abs(u_a) + eta_s * 2.0 * max(t_prop, 0.0) / (rho * area)
        sd, cd = np.sin(m1), np.cos(m1)
        f_n = 0.5 * rho * a_r * slope * sd * q
        tx, ty = x_p - f_n * sd, -f_n * cd
        tn = -yprop * x_p + x_r * ty
        va = (1.0 - w_frac) * (u_r if t_prop >= 0.0 else -u_r)
        pw = _disc_power(t_prop, va, area, rho)
    act[i, 0], act[i, 1] = b0, b1
    out[i, OUT_HEADING_D] = psi_g
    out[i, OUT_SPEED_D] = u_d
    out[i, OUT_XTE] = e
    out[i, OUT_DONE] = 1.0 if done[i] else 0.0
    out[i, OUT_LEG] = k
    out[i, OUT_TAU], out[i, OUT_TAU + 1], out[i, OUT_TAU + 2] = tx, ty, tn
    out[i, OUT_POWER] = pw
    out[i, OUT_SURGE_CMD], out[i, OUT_RUDDER_CMD] = force, rudder
    out[i, OUT_ALONG] = s_along
    out[i, OUT_XTE_TRUE] = -(n_t - x0) * np.sin(pi_p) + (e_t - y0) * np.cos(pi_p)


@numba.njit(parallel=True, cache=True, error_model="numpy")
def _tick(nav_eta, nav_nu, eta, nu, cur, wp, count, los, legs, pil, ap, layout, dt, leg, e_int, done, pid, ref, act,
          out):  # fmt: skip
    n = eta.shape[0]
    for i in numba.prange(n):
        control_one(i, nav_eta[i, 0], nav_eta[i, 1], nav_eta[i, 2], nav_nu[i, 0], nav_nu[i, 1], nav_nu[i, 2],
                    eta[i, 0], eta[i, 1], eta[i, 2], nu[i, 0], cur[i, 0], cur[i, 1], wp, count, los, legs, pil, ap,
                    layout, dt, leg, e_int, done, pid, ref, act, out)  # fmt: skip


def compiled_tick(stack: CompiledStack, state: TickState, eta: FloatArray, nu: FloatArray, current_ned: FloatArray,
                  dt_s: float, nav_eta: FloatArray | None = None,
                  nav_nu: FloatArray | None = None) -> FloatArray:  # fmt: skip
    """One control period of the built-in stack for every trial; updates ``state`` in place.

    Parameters
    ----------
    stack : CompiledStack
    state : TickState
    eta, nu : ndarray of shape (n_trials, 3)
        True pose and body velocity over ground (the truth navigator).
    current_ned : ndarray of shape (n_trials, 2)
        Current at the craft [m/s] (zeros for none).
    dt_s : float
        Control period [s].
    nav_eta, nav_nu : ndarray of shape (n_trials, 3), optional
        The navigation solution the guide and pilot see (the truth when absent).

    Returns
    -------
    ndarray of shape (n_trials, 13)
        Columns: desired heading [rad], desired speed [m/s], cross-track
        error [m], done (0/1), active leg, mean actuator force X, Y, N over
        the period, shaft power [W] at the period's mean actuator state,
        surge-force demand [N], rudder demand [rad], along-track distance [m],
        true cross-track error [m] (the true position to the active leg).
    """
    n = eta.shape[0]
    out = np.empty((n, N_OUT))
    nav_eta = eta if nav_eta is None else nav_eta
    nav_nu = nu if nav_nu is None else nav_nu
    _tick(np.ascontiguousarray(nav_eta), np.ascontiguousarray(nav_nu), np.ascontiguousarray(eta),
          np.ascontiguousarray(nu), np.ascontiguousarray(current_ned), stack.waypoints, stack.count, stack.los,
          stack.legs, stack.pilot, stack.act_params, stack.layout, float(dt_s), state.leg,
          state.e_int, state.done, state.pid, state.ref, state.act, out)  # fmt: skip
    return out
