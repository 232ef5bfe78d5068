"""Lookahead-based line-of-sight (LOS) and integral LOS (ILOS) course guidance.

The guidance law produces a desired COURSE ``chi_d`` (direction of the
velocity over ground). A heading autopilot needs a desired HEADING; with a
measured sideslip (crab) angle ``beta = atan2(v, u)`` the two are related by
``psi_d = chi_d - beta`` (:func:`course_to_heading`).

Cross-track sign: ``e > 0`` to starboard of the path (see
:mod:`wavebench.guidance.path`), so a positive ``e`` gives a course command
turned to port of the path, back toward it.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from wavebench.core.errors import ParameterError
from wavebench.core.frames import wrap_pi
from wavebench.core.params import Params, bounded

from .path import WaypointPath, along_track_and_cross_track, path_tangential_angle, switch_legs

__all__ = ["LosParams", "LosState", "course_to_heading", "los_init", "los_step", "wrap_angle"]


def wrap_angle(a: np.ndarray) -> np.ndarray:
    """Wrap angles to [-pi, pi), rad (:func:`wavebench.core.frames.wrap_pi`)."""
    return np.asarray(wrap_pi(a), dtype=float)


@dataclass(frozen=True, kw_only=True)
class LosParams(Params):
    """Parameters of the LOS / ILOS guide.

    Parameters
    ----------
    lookahead_m : float or ndarray of shape (n_trials,)
        Lookahead distance Delta, m (> 0).
    integral_gain : float or ndarray of shape (n_trials,)
        ILOS integral gain sigma, m/s (>= 0); 0 gives plain LOS.
    acceptance_radius_m : float or ndarray of shape (n_trials,)
        Circle-of-acceptance radius R, m (> 0).
    switch_on_pass : bool
        Also switch legs once the craft has passed the end waypoint (see
        :func:`~wavebench.guidance.path.switch_legs`).
    """

    lookahead_m: float = bounded(20.0, gt=0.0, unit="m", doc="lookahead distance Delta")
    integral_gain: float = bounded(0.0, ge=0.0, unit="m/s", doc="ILOS integral gain sigma (0: plain LOS)")
    acceptance_radius_m: float = bounded(10.0, gt=0.0, unit="m", doc="circle-of-acceptance radius")
    switch_on_pass: bool = False

    def _check(self) -> None:
        if not isinstance(self.switch_on_pass, (bool, np.bool_)):
            raise ParameterError("switch_on_pass", self.switch_on_pass, "must be true or false")


@dataclass(frozen=True)
class LosState:
    """State of the LOS guide.

    Parameters
    ----------
    leg : ndarray of shape (n_trials,), int
        Active leg index.
    e_int : ndarray of shape (n_trials,)
        ILOS integral state, s (``sigma * e_int`` is in metres).
    done : ndarray of shape (n_trials,), bool
        Mission completed (last waypoint accepted).
    """

    leg: np.ndarray
    e_int: np.ndarray
    done: np.ndarray


def los_init(path: WaypointPath) -> LosState:
    """Initial state: first leg active, zero integral, not done."""
    n = path.n_trials
    return LosState(leg=np.zeros(n, dtype=np.int64), e_int=np.zeros(n), done=np.zeros(n, dtype=bool))


def los_step(
    params: LosParams,
    path: WaypointPath,
    state: LosState,
    north: np.ndarray,
    east: np.ndarray,
    dt: float,
) -> tuple[LosState, np.ndarray, np.ndarray, np.ndarray]:
    """Advance the LOS / ILOS guide one step for all trials.

    Parameters
    ----------
    params : LosParams
    path : WaypointPath
    state : LosState
    north, east : ndarray of shape (n_trials,)
        Craft position, m (NED).
    dt : float
        Step, s (used to integrate ``e_int`` by forward Euler).

    Returns
    -------
    new_state : LosState
    chi_d : ndarray of shape (n_trials,)
        Desired course, rad in [-pi, pi).
    e : ndarray of shape (n_trials,)
        Cross-track error to the (new) active leg, m, + to starboard.
    done : ndarray of shape (n_trials,), bool
        Mission completed.

    Notes
    -----
    Waypoint switching is applied first (circle of acceptance), then::

        chi_d     = pi_p - atan((e + sigma e_int) / Delta)
        e_int_dot = Delta e / ((e + sigma e_int)^2 + Delta^2)

    With ``sigma = 0`` this is the lookahead-based LOS law of Fossen (2021);
    with ``sigma > 0`` the integral LOS of Børhaug, Pavlov & Pettersen (2008),
    which removes the steady cross-track offset under a constant current.
    ``e_int`` is reset to zero when the active leg changes (common practice,
    no source). ``e_int`` is integrated only for ``sigma > 0``. Once ``done``
    is set the guide keeps steering along the extension of the last leg; the
    caller decides what a finished trial does.

    References
    ----------
    Fossen, T. I. (2021). Handbook of Marine Craft Hydrodynamics and Motion
    Control, 2nd ed., Wiley — path-following chapter (lookahead-based LOS).
    Børhaug, E., Pavlov, A. & Pettersen, K. Y. (2008). Integral LOS control for
    path following of underactuated marine surface vessels in the presence of
    constant ocean currents. Proc. 47th IEEE Conference on Decision and Control.
    """
    north = np.asarray(north, dtype=float)
    east = np.asarray(east, dtype=float)
    leg, done, switched = switch_legs(path, state.leg, state.done, north, east, params.acceptance_radius_m,
                                      on_pass=bool(params.switch_on_pass))  # fmt: skip
    e_int = np.where(switched, 0.0, np.asarray(state.e_int, dtype=float))
    _, e = along_track_and_cross_track(path, leg, north, east)
    pi_p = path_tangential_angle(path, leg)
    delta = np.asarray(params.lookahead_m, dtype=float)
    sigma = np.asarray(params.integral_gain, dtype=float)
    eff = e + sigma * e_int
    chi_d = wrap_angle(pi_p - np.arctan(eff / delta))
    e_int_dot = np.where(sigma > 0.0, delta * e / (eff**2 + delta**2), 0.0)
    new_state = LosState(leg=leg, e_int=e_int + dt * e_int_dot, done=done)
    return new_state, chi_d, e, done


def course_to_heading(chi_d: np.ndarray, u: np.ndarray, v: np.ndarray) -> np.ndarray:
    """Desired heading from a desired course and the measured sideslip.

    Parameters
    ----------
    chi_d : ndarray of shape (n_trials,)
        Desired course over ground, rad.
    u, v : ndarray of shape (n_trials,)
        Measured surge and sway velocity, m/s (body frame; over ground to
        compensate current drift as well, through water for the hull's own
        sideslip only).

    Returns
    -------
    ndarray of shape (n_trials,)
        Desired heading ``psi_d = chi_d - beta`` with ``beta = atan2(v, u)``,
        rad in [-pi, pi).

    Notes
    -----
    Course = heading + sideslip, ``chi = psi + beta`` (Fossen 2021), so a
    craft crabbing with ``beta > 0`` (drifting to starboard) must point its
    bow ``beta`` to port of the course it wants to make good.
    """
    beta = np.arctan2(np.asarray(v, dtype=float), np.asarray(u, dtype=float))
    return wrap_angle(np.asarray(chi_d, dtype=float) - beta)
