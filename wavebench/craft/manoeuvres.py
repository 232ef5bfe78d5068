"""Standard manoeuvres: turning circle and zig-zag, with the IMO criteria beside them.

The manoeuvres run on a :class:`~wavebench.craft.catalogue.CraftParams`
(hull + actuators, fixed-step RK4) or on a first-order Nomoto steering model
(:class:`NomotoParams`, useful as an analytic reference). All trials of a
batch (per-trial dispersed parameters) run together; every result field is
an ndarray of shape (n_trials,).

Conventions
-----------
* The craft starts at the origin heading north (psi = 0) at a steady approach
  speed ``V`` in still water; the rudder order is given at t = 0.
* ``side = +1`` turns to starboard (positive rudder), ``-1`` to port.
  Lateral distances are reported positive towards the turn.
* Single-screw craft: propeller rev/s are held at the approach value (the
  engine setting is not changed during a manoeuvre); the rudder moves at its
  rate limit.
* Differential-thrust craft have no rudder. A rudder angle ``delta`` is
  emulated as a yaw-moment demand of ``(delta / 35 deg)`` times the largest
  yaw moment the thrusters can give, with the surge force demand held at its
  approach value; allocation gives the yaw moment priority
  (:func:`~wavebench.craft.actuators.allocate_differential`). "Hard over"
  (35 deg) is therefore full differential thrust: one thruster full ahead,
  the other full astern. This mapping is our convention, not a standard.
* Actuator states are advanced first over each step; the force on the hull
  is computed from the mean of the start- and end-of-step actuator states
  (exact for a rate-limited ramp) and the velocity at the start of the step,
  and held over the RK4 step (zero-order hold).

Definitions (IMO Resolution MSC.137(76), Annex, definitions section; wording
from memory): *advance* is the distance along the original course from the
position at the rudder order to the position where the heading has changed
by 90 deg; *transfer* is the lateral distance at that point; *tactical
diameter* is the lateral distance where the heading has changed by 180 deg.
The *first overshoot* of a zig-zag is the additional heading change after the
first counter-rudder; the *second overshoot* the one after the second.

References
----------
.. [1] IMO Resolution MSC.137(76), Standards for ship manoeuvrability
   (adopted 4 December 2002), Annex, section 5.3 (criteria): advance
   <= 4.5 L, tactical diameter <= 5 L; initial turning: no more than 2.5 L
   travelled by 10 deg heading change with 10 deg rudder; 10/10 zig-zag first
   overshoot <= 10 deg if L/V < 10 s, <= 20 deg if L/V >= 30 s,
   <= 5 + 0.5 L/V deg in between; second overshoot <= 25 deg, 40 deg,
   17.5 + 0.75 L/V deg for the same ranges; 20/20 first overshoot <= 25 deg.
   The Standards apply to ships of 100 m in length and over (and chemical
   and gas carriers of any length); for small craft they are shown for
   orientation only. The test speed (at least 90 % of the speed at 85 % of
   the maximum engine output) is quoted from memory, not re-checked.
.. [2] K. Nomoto, T. Taguchi, K. Honda and S. Hirano, "On the steering
   qualities of ships", International Shipbuilding Progress 4(35) (1957) —
   first-order model ``T r_dot + r = K delta``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ..core.constants import RHO_SEAWATER
from ..core.errors import ParameterError
from ..core.params import Params, bounded
from .actuators import (
    DifferentialThrustParams,
    PropRudderParams,
    actuator_step,
    actuator_tau,
    differential_rps_command,
    max_thrust,
    min_thrust,
    rps_for_thrust,
)
from .catalogue import CraftParams
from .hull import hull_coefficients, param_batch_size
from .integrate import hull_state_derivative, rk4_step

__all__ = [
    "ImoCriteria",
    "ManoeuvringReport",
    "NomotoParams",
    "TurningCircleResult",
    "ZigzagResult",
    "imo_criteria",
    "imo_first_overshoot_limit_deg",
    "imo_second_overshoot_limit_deg",
    "manoeuvring_report",
    "top_speed",
    "turning_circle",
    "zigzag",
]

FloatArray = NDArray[np.float64]

#: Rudder angle [deg] that a differential-thrust craft maps to its full yaw moment.
HARD_OVER_DEG = 35.0


# ---------------------------------------------------------------------------
# IMO criteria


def imo_first_overshoot_limit_deg(l_over_v_s: ArrayLike) -> FloatArray:
    """IMO MSC.137(76) 5.3.3.1 limit on the first overshoot of a 10/10 zig-zag.

    Parameters
    ----------
    l_over_v_s : float or ndarray
        Ship length over test speed, L/V [s].

    Returns
    -------
    ndarray
        10 deg if L/V < 10 s, 20 deg if L/V >= 30 s, ``5 + 0.5 L/V`` deg between.

    Examples
    --------
    >>> imo_first_overshoot_limit_deg([5.0, 20.0, 40.0]).tolist()
    [10.0, 15.0, 20.0]
    """
    lv = np.asarray(l_over_v_s, dtype=float)
    return np.where(lv < 10.0, 10.0, np.where(lv >= 30.0, 20.0, 5.0 + 0.5 * lv))


def imo_second_overshoot_limit_deg(l_over_v_s: ArrayLike) -> FloatArray:
    """IMO MSC.137(76) 5.3.3.2 limit on the second overshoot of a 10/10 zig-zag.

    Parameters
    ----------
    l_over_v_s : float or ndarray
        L/V [s].

    Returns
    -------
    ndarray
        25 deg if L/V < 10 s, 40 deg if L/V >= 30 s, ``17.5 + 0.75 L/V`` deg between.
    """
    lv = np.asarray(l_over_v_s, dtype=float)
    return np.where(lv < 10.0, 25.0, np.where(lv >= 30.0, 40.0, 17.5 + 0.75 * lv))


@dataclass(frozen=True)
class ImoCriteria:
    """IMO MSC.137(76) section 5.3 limits for a length and a test speed.

    Attributes
    ----------
    length_m, speed_mps, l_over_v_s : ndarray of shape (n_trials,)
    advance_max_m : ndarray
        4.5 L.
    tactical_diameter_max_m : ndarray
        5 L.
    initial_turning_max_m : ndarray
        2.5 L.
    first_overshoot_10_max_deg, second_overshoot_10_max_deg : ndarray
        10/10 zig-zag limits (functions of L/V).
    first_overshoot_20_max_deg : ndarray
        25 deg.
    """

    length_m: FloatArray
    speed_mps: FloatArray
    l_over_v_s: FloatArray
    advance_max_m: FloatArray
    tactical_diameter_max_m: FloatArray
    initial_turning_max_m: FloatArray
    first_overshoot_10_max_deg: FloatArray
    second_overshoot_10_max_deg: FloatArray
    first_overshoot_20_max_deg: FloatArray


def imo_criteria(length_m: ArrayLike, speed_mps: ArrayLike) -> ImoCriteria:
    """IMO MSC.137(76) section 5.3 criteria for a length L and test speed V.

    Parameters
    ----------
    length_m : float or ndarray
        Length L [m].
    speed_mps : float or ndarray
        Test (approach) speed V [m/s], > 0.

    Returns
    -------
    ImoCriteria
    """
    L = np.atleast_1d(np.asarray(length_m, dtype=float))
    V = np.atleast_1d(np.asarray(speed_mps, dtype=float))
    if not np.all(np.isfinite(L) & (L > 0.0)):
        raise ParameterError("length_m", length_m, "must be a finite number > 0")
    if not np.all(np.isfinite(V) & (V > 0.0)):
        raise ParameterError("speed_mps", speed_mps, "must be a finite number > 0")
    L, V = np.broadcast_arrays(L, V)
    lv = L / V
    return ImoCriteria(
        length_m=L,
        speed_mps=V,
        l_over_v_s=lv,
        advance_max_m=4.5 * L,
        tactical_diameter_max_m=5.0 * L,
        initial_turning_max_m=2.5 * L,
        first_overshoot_10_max_deg=imo_first_overshoot_limit_deg(lv),
        second_overshoot_10_max_deg=imo_second_overshoot_limit_deg(lv),
        first_overshoot_20_max_deg=np.full_like(lv, 25.0),
    )


# ---------------------------------------------------------------------------
# Nomoto reference model


@dataclass(frozen=True, kw_only=True)
class NomotoParams(Params):
    """First-order Nomoto steering model at constant speed.

    ``T r_dot + r = K delta``, ``psi_dot = r``, ``north_dot = U cos psi``,
    ``east_dot = U sin psi``.

    Parameters
    ----------
    gain_per_s : float or ndarray of shape (n_trials,)
        Steering gain K [1/s] (yaw rate per radian of rudder).
    time_constant_s : float or ndarray
        Time constant T [s].
    speed_mps : float or ndarray
        Constant speed U [m/s].
    length_m : float or ndarray
        Length used by the criteria [m].
    rudder_max_deg, rudder_rate_max_deg_per_s : float or ndarray
        Rudder angle and rate limits.
    """

    gain_per_s: float = bounded(gt=0.0, unit="1/s", doc="Nomoto gain K")
    time_constant_s: float = bounded(gt=0.0, unit="s", doc="Nomoto time constant T")
    speed_mps: float = bounded(gt=0.0, unit="m/s", doc="constant speed")
    length_m: float = bounded(gt=0.0, unit="m", doc="length for the criteria")
    rudder_max_deg: float = bounded(35.0, gt=0.0, le=90.0, unit="deg", doc="rudder limit")
    rudder_rate_max_deg_per_s: float = bounded(gt=0.0, unit="deg/s", doc="rudder rate limit")


def top_speed(craft: CraftParams) -> FloatArray:
    """Steady straight-line speed at full ahead in still water.

    Parameters
    ----------
    craft : CraftParams

    Returns
    -------
    ndarray of shape (n_trials,)
        Root of ``X_u U + X_uu U^2 + X_full = 0`` [m/s], written in the
        cancellation-free form ``U = 2 X_full / (b + sqrt(b^2 + 4 a X_full))``
        with ``a = -X_uu``, ``b = -X_u``.
    """
    x_full = _full_ahead_surge_force(craft.propulsion)
    a = -np.asarray(craft.hull.x_uu, dtype=float)
    b = -np.asarray(craft.hull.x_u, dtype=float)
    return np.atleast_1d(2.0 * x_full / (b + np.sqrt(b * b + 4.0 * a * x_full)))


def _full_ahead_surge_force(p: DifferentialThrustParams | PropRudderParams) -> FloatArray:
    if isinstance(p, DifferentialThrustParams):
        return np.asarray(max_thrust(p.port) + max_thrust(p.starboard), dtype=float)
    return np.asarray((1.0 - p.thrust_deduction) * max_thrust(p.propeller), dtype=float)


# ---------------------------------------------------------------------------
# Plants: one step of a craft or of the Nomoto model


def _rate_limited(
    delta: FloatArray, cmd: FloatArray, d_max: Any, rate: Any, dt: float
) -> FloatArray:
    cmd = np.clip(cmd, -d_max, d_max)
    return np.clip(delta + np.clip(cmd - delta, -rate * dt, rate * dt), -d_max, d_max)


class _CraftPlant:
    """Hull + actuators; state ``x = [north, east, psi, u, v, r]`` and actuator state."""

    def __init__(self, craft: CraftParams, n: int, speed: FloatArray, rho: float) -> None:
        self.craft = craft
        self.p = craft.propulsion
        self.rho = rho
        self.coeffs = hull_coefficients(craft.hull)
        h = craft.hull
        # hull-felt surge force that holds the approach speed
        self.x_app = -(h.x_u * speed + h.x_uu * speed * np.abs(speed))
        if isinstance(self.p, PropRudderParams):
            t_req = self.x_app / (1.0 - self.p.thrust_deduction)
            n_app = rps_for_thrust(self.p.propeller, t_req)
            if not np.all(n_app <= self.p.propeller.n_max_rps * (1.0 + 1e-12)):
                raise ParameterError(
                    "approach_speed_mps", speed, "must not exceed the craft's top speed"
                )
            self.n_app = np.broadcast_to(n_app, (n,)).astype(float)
        else:
            p = self.p
            if not np.all(
                0.5 * self.x_app
                <= np.minimum(max_thrust(p.port), max_thrust(p.starboard)) * (1 + 1e-12)
            ):
                raise ParameterError(
                    "approach_speed_mps", speed, "must not exceed the craft's top speed"
                )
            yp, ys = p.port.y_m, p.starboard.y_m
            self.n_yaw_max = -yp * max_thrust(p.port) - ys * min_thrust(p.starboard)
            self.n_yaw_min = -yp * min_thrust(p.port) - ys * max_thrust(p.starboard)
        self.n = n
        self.x = np.zeros((n, 6))
        self.x[:, 3] = speed
        self.act = np.array(self.command(np.zeros(n)))

    def command(self, delta: FloatArray) -> FloatArray:
        if isinstance(self.p, PropRudderParams):
            return np.stack([self.n_app, delta], axis=-1)
        frac = np.clip(delta / math.radians(HARD_OVER_DEG), -1.0, 1.0)
        yaw = np.where(frac >= 0.0, frac * self.n_yaw_max, -frac * self.n_yaw_min)
        return np.broadcast_to(differential_rps_command(self.p, self.x_app, yaw), (self.n, 2))

    def step(self, cmd: FloatArray, dt: float, t: float) -> None:
        act_new = actuator_step(self.p, self.act, cmd, dt)
        tau = actuator_tau(self.p, 0.5 * (self.act + act_new), self.x[:, 3:], rho=self.rho)
        self.x = rk4_step(hull_state_derivative, t, self.x, dt, self.coeffs, tau, None)
        self.act = act_new

    def pose(self) -> tuple[FloatArray, FloatArray, FloatArray]:
        return self.x[:, 0], self.x[:, 1], self.x[:, 2]

    def speed_and_rate(self) -> tuple[FloatArray, FloatArray]:
        return np.hypot(self.x[:, 3], self.x[:, 4]), self.x[:, 5]


def _nomoto_rhs(t: float, x: FloatArray, k: Any, tc: Any, u: Any, delta: FloatArray) -> FloatArray:
    psi = x[:, 2]
    r = x[:, 3]
    return np.stack(
        np.broadcast_arrays(u * np.cos(psi), u * np.sin(psi), r, (k * delta - r) / tc), axis=-1
    )


class _NomotoPlant:
    """First-order Nomoto model; state ``x = [north, east, psi, r]`` and rudder angle."""

    def __init__(self, p: NomotoParams, n: int) -> None:
        self.p = p
        self.n = n
        self.x = np.zeros((n, 4))
        self.act = np.zeros(n)

    def command(self, delta: FloatArray) -> FloatArray:
        return delta

    def step(self, cmd: FloatArray, dt: float, t: float) -> None:
        p = self.p
        d_new = _rate_limited(
            self.act, cmd, np.deg2rad(p.rudder_max_deg), np.deg2rad(p.rudder_rate_max_deg_per_s), dt
        )
        mid = 0.5 * (self.act + d_new)
        self.x = rk4_step(
            _nomoto_rhs, t, self.x, dt, p.gain_per_s, p.time_constant_s, p.speed_mps, mid
        )
        self.act = d_new

    def pose(self) -> tuple[FloatArray, FloatArray, FloatArray]:
        return self.x[:, 0], self.x[:, 1], self.x[:, 2]

    def speed_and_rate(self) -> tuple[FloatArray, FloatArray]:
        return np.broadcast_to(np.asarray(self.p.speed_mps, dtype=float), (self.n,)), self.x[:, 3]


def _setup(
    craft: CraftParams | NomotoParams, approach_speed_mps: ArrayLike | None, rho: float
) -> tuple[Any, FloatArray, FloatArray, str]:
    """Plant, approach speed (N,), length (N,) and display name."""
    n = param_batch_size(craft) or 1
    if isinstance(craft, NomotoParams):
        if approach_speed_mps is not None:
            raise ParameterError(
                "approach_speed_mps",
                approach_speed_mps,
                "must be None for a Nomoto model (its speed_mps is used)",
            )
        speed = np.broadcast_to(np.asarray(craft.speed_mps, dtype=float), (n,)).copy()
        length = np.broadcast_to(np.asarray(craft.length_m, dtype=float), (n,)).copy()
        return _NomotoPlant(craft, n), speed, length, "Nomoto model"
    if not isinstance(craft, CraftParams):
        raise ParameterError("craft", craft, "must be a CraftParams or a NomotoParams")
    if approach_speed_mps is None:
        speed = 0.9 * top_speed(craft)
    else:
        speed = np.atleast_1d(np.asarray(approach_speed_mps, dtype=float))
        if not np.all(np.isfinite(speed) & (speed > 0.0)):
            raise ParameterError(
                "approach_speed_mps", approach_speed_mps, "must be a finite number > 0"
            )
    speed = np.broadcast_to(speed, (n,)).copy()
    length = np.broadcast_to(np.asarray(craft.hull.length_m, dtype=float), (n,)).copy()
    return _CraftPlant(craft, n, speed, rho), speed, length, craft.name


def _check_run_args(dt: float, max_duration_s: float, side: int) -> None:
    if not (np.isfinite(dt) and dt > 0.0):
        raise ParameterError("dt", dt, "must be a finite number > 0")
    if not (np.isfinite(max_duration_s) and max_duration_s >= dt):
        raise ParameterError("max_duration_s", max_duration_s, "must be a finite number >= dt")
    if side not in (1, -1):
        raise ParameterError("side", side, "must be +1 (starboard) or -1 (port)")


def _rudder_limit_deg(craft: CraftParams | NomotoParams) -> FloatArray:
    """Largest rudder angle ``rudder_deg`` may ask for, per trial [deg].

    The rudder limit of a Nomoto model or a propeller-rudder craft; for a
    differential-thrust craft :data:`HARD_OVER_DEG` (full differential thrust).
    """
    if isinstance(craft, NomotoParams):
        lim: Any = craft.rudder_max_deg
    elif isinstance(craft, CraftParams) and isinstance(craft.propulsion, PropRudderParams):
        lim = craft.propulsion.rudder_max_deg
    else:
        lim = HARD_OVER_DEG
    return np.atleast_1d(np.asarray(lim, dtype=float))


def _check_rudder(craft: CraftParams | NomotoParams, rudder_deg: float) -> None:
    """``0 < rudder_deg <= `` the rudder limit of every trial (see :func:`_rudder_limit_deg`)."""
    if not isinstance(craft, (CraftParams, NomotoParams)):
        return  # _setup names the bad craft
    lim = _rudder_limit_deg(craft)
    lim_min = float(np.min(lim))
    what = (
        "the craft's rudder_max_deg"
        if isinstance(craft, NomotoParams) or isinstance(craft.propulsion, PropRudderParams)
        else "the hard-over angle that maps to full differential thrust"
    )
    allowed = f"must be a finite number with 0 < rudder_deg <= {lim_min:g} ({what})"
    if np.ndim(rudder_deg) != 0:
        raise ParameterError("rudder_deg", rudder_deg, allowed)
    try:
        value = float(rudder_deg)
    except (TypeError, ValueError):
        raise ParameterError("rudder_deg", rudder_deg, allowed) from None
    if not (math.isfinite(value) and 0.0 < value <= lim_min):
        raise ParameterError("rudder_deg", rudder_deg, allowed)


def _check_heading_change(name: str, value: float, lo: float, hi: float) -> None:
    """A heading change [deg] in ``(0, hi)`` with ``lo <= value`` (``lo`` > 0)."""
    parts = []
    if lo > 0.0:
        parts.append(f"{lo:g} <= {name}")
    else:
        parts.append(f"0 < {name}")
    if math.isfinite(hi):
        parts.append(f"{name} < {hi:g}")
    allowed = "must be a finite number with " + " and ".join(parts)
    try:
        x = float(value)
    except (TypeError, ValueError):
        raise ParameterError(name, value, allowed) from None
    if not (math.isfinite(x) and x > 0.0 and x >= lo and x < hi):
        raise ParameterError(name, value, allowed)


def _first_crossing(
    t: FloatArray, h: FloatArray, level: float, *others: FloatArray
) -> tuple[FloatArray, ...]:
    """Linear interpolation of time and ``others`` where ``h`` first reaches ``level``.

    ``h`` and ``others`` have shape (n_trials, n_records); NaN where never reached.
    """
    reached = h >= level
    any_reached = reached.any(axis=1)
    k = np.argmax(reached, axis=1)
    k = np.where(any_reached & (k == 0), 1, k)  # level reached at t = 0: take first interval
    km = np.maximum(k - 1, 0)
    rows = np.arange(h.shape[0])
    h0, h1 = h[rows, km], h[rows, k]
    with np.errstate(divide="ignore", invalid="ignore"):
        w = np.where(h1 > h0, (level - h0) / (h1 - h0), 1.0)
    w = np.clip(w, 0.0, 1.0)
    out = []
    for arr in (np.broadcast_to(t, h.shape), *others):
        val = arr[rows, km] + w * (arr[rows, k] - arr[rows, km])
        out.append(np.where(any_reached, val, np.nan))
    return tuple(out)


# ---------------------------------------------------------------------------
# Turning circle


@dataclass(frozen=True)
class TurningCircleResult:
    """Result of a turning-circle manoeuvre (arrays of shape (n_trials,)).

    Attributes
    ----------
    name : str
        Craft name.
    side : int
        +1 starboard, -1 port.
    rudder_deg : float
        Rudder angle ordered (rudder-equivalent for differential thrust).
    length_m, approach_speed_mps : ndarray
    advance_m, transfer_m, tactical_diameter_m : ndarray
        NaN where the heading change was not reached.
    steady_diameter_m : ndarray
        ``2 U / |r|`` from the steady speed and yaw rate.
    steady_speed_mps, steady_yaw_rate_rad_s : ndarray
        Speed over ground and yaw rate of each trial at the end of the first
        step where that trial has turned ``end_heading_change_deg`` (at the
        end of the run for a trial that never does), so a trial's values do
        not depend on the other trials of the batch.
    t : ndarray of shape (n_records,)
    north_m, east_m, psi_rad : ndarray of shape (n_trials, n_records)
        Recorded track (psi unwrapped).
    """

    name: str
    side: int
    rudder_deg: float
    length_m: FloatArray
    approach_speed_mps: FloatArray
    advance_m: FloatArray
    transfer_m: FloatArray
    tactical_diameter_m: FloatArray
    steady_diameter_m: FloatArray
    steady_speed_mps: FloatArray
    steady_yaw_rate_rad_s: FloatArray
    t: FloatArray = field(repr=False)
    north_m: FloatArray = field(repr=False)
    east_m: FloatArray = field(repr=False)
    psi_rad: FloatArray = field(repr=False)


def _run(
    plant: Any, n_steps: int, dt: float, controller: Any, done: Any
) -> tuple[FloatArray, FloatArray, FloatArray, FloatArray]:
    """Step ``plant`` with ``controller(k, psi) -> delta`` until ``done()``."""
    ts, norths, easts, psis = [0.0], [], [], []
    nn, ee, pp = plant.pose()
    norths.append(nn.copy())
    easts.append(ee.copy())
    psis.append(pp.copy())
    for k in range(n_steps):
        delta = controller(pp)
        plant.step(plant.command(delta), dt, k * dt)
        nn, ee, pp = plant.pose()
        ts.append((k + 1) * dt)
        norths.append(nn.copy())
        easts.append(ee.copy())
        psis.append(pp.copy())
        if done(pp):
            break
    return (
        np.asarray(ts),
        np.stack(norths, axis=1),
        np.stack(easts, axis=1),
        np.stack(psis, axis=1),
    )


def turning_circle(
    craft: CraftParams | NomotoParams,
    *,
    rudder_deg: float = 35.0,
    side: int = 1,
    approach_speed_mps: ArrayLike | None = None,
    dt: float = 0.05,
    max_duration_s: float = 600.0,
    end_heading_change_deg: float = 540.0,
    rho: float = RHO_SEAWATER,
) -> TurningCircleResult:
    """Turning circle: rudder (or full differential thrust) ordered at t = 0.

    Parameters
    ----------
    craft : CraftParams or NomotoParams
    rudder_deg : float, optional
        Rudder angle ordered [deg] (hard over: 35); ``0 < rudder_deg <=`` the
        craft's ``rudder_max_deg`` (every trial's), or <= 35 (full
        differential thrust) for a differential-thrust craft.
    side : {1, -1}, optional
        Turn to starboard (+1) or port (-1).
    approach_speed_mps : float or ndarray of shape (n_trials,), optional
        Steady approach speed; default 90 % of the top speed (the craft's
        rev/s are set to hold it). Not used for a Nomoto model.
    dt : float, optional
        Fixed step [s].
    max_duration_s : float, optional
        Upper bound on the simulated time [s].
    end_heading_change_deg : float, optional
        Heading change [deg], >= 180 (so the tactical diameter is reached).
        Each trial's steady values are read at the step where it has turned
        this far; the run ends when every trial has (or at ``max_duration_s``).
    rho : float, optional
        Water density [kg/m^3].

    Returns
    -------
    TurningCircleResult
    """
    _check_run_args(dt, max_duration_s, side)
    _check_heading_change("end_heading_change_deg", end_heading_change_deg, 180.0, math.inf)
    _check_rudder(craft, rudder_deg)
    plant, speed, length, name = _setup(craft, approach_speed_mps, rho)
    n = plant.n
    delta = np.full(n, side * math.radians(rudder_deg))
    end = math.radians(end_heading_change_deg)
    n_steps = math.ceil(max_duration_s / dt)
    # Steady values are frozen per trial at the first step where that trial has
    # turned ``end``, so trial i's result does not depend on the other trials.
    reached = np.zeros(n, dtype=bool)
    u_ss = np.full(n, np.nan)
    r_ss = np.full(n, np.nan)

    def done(p: FloatArray) -> bool:
        newly = ~reached & (side * p >= end)
        if newly.any():
            u_now, r_now = plant.speed_and_rate()
            u_ss[newly] = u_now[newly]
            r_ss[newly] = r_now[newly]
            reached[newly] = True
        return bool(reached.all())

    t, north, east, psi = _run(plant, n_steps, dt, lambda p: delta, done)
    h = side * psi
    _, adv, tr = _first_crossing(t, h, math.pi / 2, north, side * east)
    _, _, tac = _first_crossing(t, h, math.pi, north, side * east)
    u_end, r_end = plant.speed_and_rate()
    u = np.where(reached, u_ss, u_end)  # trials that never turned ``end``: end of the run
    r = np.where(reached, r_ss, r_end)
    with np.errstate(divide="ignore"):
        d_ss = 2.0 * u / np.abs(r)
    return TurningCircleResult(
        name=name,
        side=side,
        rudder_deg=float(rudder_deg),
        length_m=length,
        approach_speed_mps=speed,
        advance_m=adv,
        transfer_m=tr,
        tactical_diameter_m=tac,
        steady_diameter_m=d_ss,
        steady_speed_mps=np.asarray(u, dtype=float),
        steady_yaw_rate_rad_s=np.asarray(r, dtype=float),
        t=t,
        north_m=north,
        east_m=east,
        psi_rad=psi,
    )


# ---------------------------------------------------------------------------
# Zig-zag


@dataclass(frozen=True)
class ZigzagResult:
    """Result of a zig-zag manoeuvre (arrays of shape (n_trials,)).

    Attributes
    ----------
    name : str
    side : int
        Side of the first rudder order (+1 starboard).
    rudder_deg, heading_deg : float
        Rudder angle and heading-change trigger (10/10, 20/20 ...).
    length_m, approach_speed_mps : ndarray
    first_overshoot_deg, second_overshoot_deg : ndarray
        NaN where the run ended before the overshoot was complete.
    initial_turning_m : ndarray
        Distance travelled over ground from the rudder order until the
        heading had changed by ``heading_deg`` (IMO initial turning ability
        when the rudder is 10 deg).
    first_execute_s : ndarray
        Time of the first counter-rudder order [s].
    t : ndarray of shape (n_records,)
    north_m, east_m, psi_rad : ndarray of shape (n_trials, n_records)
    """

    name: str
    side: int
    rudder_deg: float
    heading_deg: float
    length_m: FloatArray
    approach_speed_mps: FloatArray
    first_overshoot_deg: FloatArray
    second_overshoot_deg: FloatArray
    initial_turning_m: FloatArray
    first_execute_s: FloatArray
    t: FloatArray = field(repr=False)
    north_m: FloatArray = field(repr=False)
    east_m: FloatArray = field(repr=False)
    psi_rad: FloatArray = field(repr=False)


def zigzag(
    craft: CraftParams | NomotoParams,
    *,
    rudder_deg: float = 10.0,
    heading_deg: float | None = None,
    side: int = 1,
    approach_speed_mps: ArrayLike | None = None,
    dt: float = 0.05,
    max_duration_s: float = 600.0,
    rho: float = RHO_SEAWATER,
) -> ZigzagResult:
    """Zig-zag manoeuvre (``rudder_deg`` / ``heading_deg``, e.g. 10/10 or 20/20).

    Parameters
    ----------
    craft : CraftParams or NomotoParams
    rudder_deg : float, optional
        Rudder angle [deg]; limits as for :func:`turning_circle`.
    heading_deg : float, optional
        Heading change that triggers each counter-rudder [deg],
        ``0 < heading_deg < 180``; default ``rudder_deg``.
    side : {1, -1}, optional
        Side of the first rudder order.
    approach_speed_mps, dt, max_duration_s, rho
        As for :func:`turning_circle`.

    Returns
    -------
    ZigzagResult

    Notes
    -----
    Rudder ``+delta`` is ordered at t = 0; when the heading change reaches
    ``+psi_s`` the rudder is reversed to ``-delta`` (first execute); when it
    reaches ``-psi_s`` it is reversed again (second execute), and so on. The
    first overshoot is the largest heading change after the first execute
    minus ``psi_s``; the second overshoot is the largest heading change to the
    other side after the second execute minus ``psi_s``. The heading is
    checked at the end of each step, so an execute is late by at most ``dt``.
    """
    _check_run_args(dt, max_duration_s, side)
    _check_rudder(craft, rudder_deg)
    if heading_deg is not None:
        _check_heading_change("heading_deg", heading_deg, 0.0, 180.0)
    psi_s = math.radians(rudder_deg if heading_deg is None else heading_deg)
    plant, speed, length, name = _setup(craft, approach_speed_mps, rho)
    n = plant.n
    d = math.radians(rudder_deg)
    phase = np.zeros(n, dtype=int)
    peak1 = np.full(n, -np.inf)
    peak2 = np.full(n, -np.inf)
    t_exec = np.full(n, np.nan)
    step_count = [0]

    def controller(psi: FloatArray) -> FloatArray:
        h = side * psi
        # phase transitions on the heading at the end of the previous step
        up = (phase % 2 == 0) & (h >= psi_s)
        down = (phase % 2 == 1) & (h <= -psi_s)
        first = up & (phase == 0)
        t_exec[first] = step_count[0] * dt
        phase[up | down] += 1
        np.maximum(peak1, np.where(phase == 1, h, -np.inf), out=peak1)
        np.maximum(peak2, np.where(phase == 2, -h, -np.inf), out=peak2)
        step_count[0] += 1
        sign = np.where(phase % 2 == 0, 1.0, -1.0)
        return side * sign * d

    n_steps = math.ceil(max_duration_s / dt)
    t, north, east, psi = _run(plant, n_steps, dt, controller, lambda p: bool(np.all(phase >= 3)))
    h = side * psi
    step_len = np.hypot(np.diff(north, axis=1), np.diff(east, axis=1))
    path = np.concatenate([np.zeros((n, 1)), np.cumsum(step_len, axis=1)], axis=1)
    _, init_turn = _first_crossing(t, h, psi_s, path)
    ov1 = np.where(phase >= 2, np.degrees(peak1 - psi_s), np.nan)
    ov2 = np.where(phase >= 3, np.degrees(peak2 - psi_s), np.nan)
    return ZigzagResult(
        name=name,
        side=side,
        rudder_deg=float(rudder_deg),
        heading_deg=math.degrees(psi_s),
        length_m=length,
        approach_speed_mps=speed,
        first_overshoot_deg=ov1,
        second_overshoot_deg=ov2,
        initial_turning_m=init_turn,
        first_execute_s=t_exec,
        t=t,
        north_m=north,
        east_m=east,
        psi_rad=psi,
    )


# ---------------------------------------------------------------------------
# Report


@dataclass(frozen=True)
class ManoeuvringReport:
    """Turning circle, 10/10 and 20/20 zig-zags, with the IMO criteria.

    Attributes
    ----------
    turning : TurningCircleResult
    zigzag_10 : ZigzagResult
    zigzag_20 : ZigzagResult
    criteria : ImoCriteria
        For the craft's length and the approach speed.
    """

    turning: TurningCircleResult
    zigzag_10: ZigzagResult
    zigzag_20: ZigzagResult
    criteria: ImoCriteria

    def rows(self, trial: int = 0) -> list[tuple[str, float, str, float, bool]]:
        """Rows ``(quantity, result, relation, limit, meets)`` for one trial."""
        c = self.criteria
        tc, z10, z20 = self.turning, self.zigzag_10, self.zigzag_20
        i = trial
        spec = [
            ("advance [m]", tc.advance_m[i], c.advance_max_m[i]),
            ("tactical diameter [m]", tc.tactical_diameter_m[i], c.tactical_diameter_max_m[i]),
            (
                "initial turning, 10 deg rudder [m]",
                z10.initial_turning_m[i],
                c.initial_turning_max_m[i],
            ),
            (
                "10/10 first overshoot [deg]",
                z10.first_overshoot_deg[i],
                c.first_overshoot_10_max_deg[i],
            ),
            (
                "10/10 second overshoot [deg]",
                z10.second_overshoot_deg[i],
                c.second_overshoot_10_max_deg[i],
            ),
            (
                "20/20 first overshoot [deg]",
                z20.first_overshoot_deg[i],
                c.first_overshoot_20_max_deg[i],
            ),
        ]
        return [(q, float(v), "<=", float(lim), bool(v <= lim)) for q, v, lim in spec]

    def to_text(self, trial: int = 0) -> str:
        """Small text table: results beside the IMO MSC.137(76) 5.3 criteria."""
        c = self.criteria
        tc = self.turning
        i = trial
        lines = [
            f"Manoeuvring report: {tc.name} (trial {i})",
            f"L = {c.length_m[i]:.2f} m, approach V = {c.speed_mps[i]:.2f} m/s, "
            f"L/V = {c.l_over_v_s[i]:.2f} s",
            "Criteria: IMO Resolution MSC.137(76), Annex 5.3. The Standards are written for",
            "ships of 100 m and over; for small craft they are shown for orientation only.",
            "",
            f"{'quantity':<38}{'result':>10}  {'criterion':>12}  meets",
        ]
        for q, v, rel, lim, ok in self.rows(i):
            res = "n/a" if not np.isfinite(v) else f"{v:.2f}"
            meets = "-" if not np.isfinite(v) else ("yes" if ok else "no")
            lines.append(f"{q:<38}{res:>10}  {rel} {lim:>9.2f}  {meets}")
        lines += [
            "",
            f"{'steady turning diameter [m]':<38}{tc.steady_diameter_m[i]:>10.2f}",
            f"{'transfer [m]':<38}{tc.transfer_m[i]:>10.2f}",
            f"{'steady turning speed [m/s]':<38}{tc.steady_speed_mps[i]:>10.2f}",
            f"(turning circle: {tc.rudder_deg:g} deg rudder to "
            f"{'starboard' if tc.side > 0 else 'port'})",
        ]
        return "\n".join(lines)


def _hard_over_deg(craft: CraftParams | NomotoParams) -> float:
    """35 deg, or the craft's rudder limit where that is smaller (one value for the batch)."""
    if not isinstance(craft, (CraftParams, NomotoParams)):
        return HARD_OVER_DEG  # turning_circle names the bad craft
    lim = _rudder_limit_deg(craft)
    if np.all(lim >= HARD_OVER_DEG):
        return HARD_OVER_DEG
    if np.all(lim == lim[0]):
        return float(lim[0])
    raise ParameterError(
        "rudder_max_deg",
        lim,
        f"must be >= {HARD_OVER_DEG:g} deg for every trial, or the same for all trials, "
        "for a manoeuvring report (one hard-over angle serves the batch)",
    )


def manoeuvring_report(
    craft: CraftParams | NomotoParams,
    *,
    approach_speed_mps: ArrayLike | None = None,
    side: int = 1,
    dt: float = 0.05,
    max_duration_s: float = 600.0,
    rho: float = RHO_SEAWATER,
) -> ManoeuvringReport:
    """Run a hard-over turning circle, a 10/10 and a 20/20 zig-zag; attach the IMO criteria.

    Parameters
    ----------
    craft : CraftParams or NomotoParams
        Its rudder limit must be at least 20 deg (for the 20/20 zig-zag).
    approach_speed_mps, side, dt, max_duration_s, rho
        As for :func:`turning_circle`.

    Returns
    -------
    ManoeuvringReport

    Notes
    -----
    The turning circle uses 35 deg of rudder, or the craft's ``rudder_max_deg``
    where that is smaller (MSC.137(76) asks for 35 deg or the largest rudder
    angle permissible at the test speed; wording from memory). Per-trial
    rudder limits below 35 deg must be equal, since one rudder angle serves
    the whole batch.
    """
    kw: dict[str, Any] = dict(
        approach_speed_mps=approach_speed_mps,
        side=side,
        dt=dt,
        max_duration_s=max_duration_s,
        rho=rho,
    )
    tc = turning_circle(craft, rudder_deg=_hard_over_deg(craft), **kw)
    z10 = zigzag(craft, rudder_deg=10.0, **kw)
    z20 = zigzag(craft, rudder_deg=20.0, **kw)
    crit = imo_criteria(tc.length_m, tc.approach_speed_mps)
    return ManoeuvringReport(turning=tc, zigzag_10=z10, zigzag_20=z20, criteria=crit)
