"""Guide and pilot blocks: the batched protocols, the built-in blocks and the per-trial adapters.

A guide or pilot is any object with the methods of :class:`BatchGuide` or
:class:`BatchPilot`: ``needs`` (the signal names it reads, checked by the
wiring before a run), ``init`` and ``step``. Its evolving state is whatever
``init`` returns; the loop hands it back to ``step`` and never looks inside.
Every array has the trial axis first, and a block must treat trials
independently (trial ``i``'s outputs depend on trial ``i``'s inputs only),
so results do not depend on how trials are batched.

A block written for one trial at a time is wrapped by :class:`PerTrialGuide`
or :class:`PerTrialPilot`, which keep one instance per trial and call it
in a Python loop: the slow path, for prototypes and for checking a batched
rewrite against its per-trial original.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any, Protocol, runtime_checkable

import numpy as np
from numpy.typing import NDArray

from ..control.pid import PidParams, PidState, nomoto_feedforward, pid_init, pid_step
from ..control.reference import ReferenceParams, ReferenceState, reference_init, reference_step
from ..core.errors import ParameterError
from ..core.frames import wrap_pi
from ..guidance.los import LosParams, LosState, course_to_heading, los_init, los_step
from ..guidance.path import WaypointPath, along_track_and_cross_track
from .signals import GuideOutput, NavState, PilotOutput

__all__ = [
    "BatchGuide",
    "BatchPilot",
    "LosGuide",
    "NomotoPidPilot",
    "PerTrialGuide",
    "PerTrialPilot",
]

FloatArray = NDArray[np.float64]


@runtime_checkable
class BatchGuide(Protocol):
    """A guide for a batch of trials.

    Attributes
    ----------
    needs : frozenset of str
        :class:`NavState` fields it reads.
    """

    needs: frozenset[str]

    def init(self, nav: NavState) -> Any:
        """Initial state from the first navigation solution."""

    def step(self, state: Any, nav: NavState, dt_s: float) -> tuple[Any, GuideOutput]:
        """Advance one control period of ``dt_s`` seconds."""


@runtime_checkable
class BatchPilot(Protocol):
    """A pilot for a batch of trials.

    Attributes
    ----------
    needs : frozenset of str
        :class:`NavState` and :class:`GuideOutput` fields it reads.
    """

    needs: frozenset[str]

    def init(self, nav: NavState) -> Any:
        """Initial state from the first navigation solution."""

    def step(self, state: Any, nav: NavState, guide: GuideOutput, dt_s: float) -> tuple[Any, PilotOutput]:
        """Advance one control period of ``dt_s`` seconds."""


# ---------------------------------------------------------------------------
# built-in guide
# ---------------------------------------------------------------------------


@dataclass(frozen=True)
class LosGuide:
    """Waypoint following by lookahead-based LOS or integral LOS, with a speed schedule.

    Parameters
    ----------
    params : LosParams
        Lookahead, integral gain (0: plain LOS) and circle of acceptance;
        scalars or arrays of shape (n_trials,).
    path : WaypointPath
    leg_speed_mps : ndarray of shape (n_trials, n_legs)
        Desired surge speed over ground on each leg [m/s].

    Notes
    -----
    The course from :func:`~wavebench.guidance.los.los_step` becomes a
    heading by removing the measured sideslip over ground
    (:func:`~wavebench.guidance.los.course_to_heading`), which also takes
    out the current's set.
    """

    params: LosParams
    path: WaypointPath
    leg_speed_mps: FloatArray
    needs: frozenset[str] = frozenset({"north_m", "east_m", "surge_mps", "sway_mps"})

    def init(self, nav: NavState) -> LosState:
        return los_init(self.path)

    def step(self, state: LosState, nav: NavState, dt_s: float) -> tuple[LosState, GuideOutput]:
        state, chi_d, e, done = los_step(self.params, self.path, state, nav.north_m, nav.east_m, dt_s)
        psi_d = course_to_heading(chi_d, nav.surge_mps, nav.sway_mps)
        speed = np.take_along_axis(self.leg_speed_mps, state.leg[:, None], axis=1)[:, 0]
        s, _ = along_track_and_cross_track(self.path, state.leg, nav.north_m, nav.east_m)
        out = GuideOutput(heading_d_rad=psi_d, speed_d_mps=speed, cross_track_m=e, along_track_m=s, leg=state.leg,
                          done=done)  # fmt: skip
        return state, out


# ---------------------------------------------------------------------------
# built-in pilot
# ---------------------------------------------------------------------------


@dataclass(frozen=True)
class PilotState:
    """State of :class:`NomotoPidPilot`."""

    heading: PidState
    speed: PidState
    reference: ReferenceState | None


@dataclass(frozen=True)
class NomotoPidPilot:
    """Heading PID (on a Nomoto model) and surge-speed PI, with a heading reference model.

    Parameters
    ----------
    heading : PidParams
        Heading gains (rudder [rad] per heading error [rad]); see
        :func:`~wavebench.control.pid.heading_pid_gains`.
    speed : PidParams
        Surge-speed gains (force [N] per speed error [m/s]); see
        :func:`~wavebench.control.pid.speed_pi_gains`.
    nomoto_gain_per_s, nomoto_time_constant_s : float
        The Nomoto model the heading loop was placed on (for the reference
        feed-forward).
    reference : ReferenceParams or None
        Heading reference model; None feeds the guide's heading straight in.
    surge_x_u, surge_x_uu : float
        The hull's linear [kg/s] and quadratic [kg/m] surge damping
        (Fossen sign: <= 0), for the steady-thrust feed-forward
        ``X_ff = -(X_u u_d + X_|u|u |u_d| u_d)``.

    Notes
    -----
    Heading: ``delta = delta_ff - (kp e + kd (r - r_d) + ki int e)`` with
    ``e = wrap(psi - psi_d)`` and the Nomoto feed-forward
    ``delta_ff = (T a_d + r_d) / K`` (Fossen 2021, PID autopilot with
    reference feed-forward). The reference model is fed the guide's heading
    unwrapped about its own filter state, so a command crossing +-180 deg
    turns the short way.
    """

    heading: PidParams
    speed: PidParams
    nomoto_gain_per_s: float
    nomoto_time_constant_s: float
    reference: ReferenceParams | None
    surge_x_u: float
    surge_x_uu: float
    needs: frozenset[str] = frozenset({"heading_rad", "yaw_rate_rad_s", "surge_mps", "heading_d_rad", "speed_d_mps"})

    def init(self, nav: NavState) -> PilotState:
        n = nav.heading_rad.shape[0]
        ref = reference_init(nav.heading_rad) if self.reference is not None else None
        return PilotState(heading=pid_init(n), speed=pid_init(n), reference=ref)

    def step(self, state: PilotState, nav: NavState, guide: GuideOutput, dt_s: float) -> tuple[PilotState, PilotOutput]:
        if self.reference is not None:
            base = state.reference.x_f
            target = base + wrap_pi(guide.heading_d_rad - base)
            ref_state, ref = reference_step(self.reference, state.reference, target, dt_s)
            psi_d, r_d, a_d = ref.psi_d, ref.r_d, ref.a_d
        else:
            ref_state = None
            psi_d = guide.heading_d_rad
            r_d = a_d = np.zeros_like(psi_d)
        e = wrap_pi(nav.heading_rad - psi_d)
        ff = nomoto_feedforward(self.nomoto_gain_per_s, self.nomoto_time_constant_s, r_d, a_d)
        h_state, rudder = pid_step(self.heading, state.heading, e, nav.yaw_rate_rad_s - r_d, dt_s, feedforward=ff)
        u_d = guide.speed_d_mps
        x_ff = -(self.surge_x_u * u_d + self.surge_x_uu * np.abs(u_d) * u_d)
        zeros = np.zeros_like(u_d)
        s_state, force = pid_step(self.speed, state.speed, nav.surge_mps - u_d, zeros, dt_s, feedforward=x_ff)
        out = PilotOutput(surge_force_n=force, rudder_rad=rudder)
        return PilotState(heading=h_state, speed=s_state, reference=ref_state), out


# ---------------------------------------------------------------------------
# per-trial adapters (the slow path)
# ---------------------------------------------------------------------------


def _instances(factory: Callable[[int], Any], trials: Sequence[int]) -> list[Any]:
    return [factory(int(i)) for i in trials]


@dataclass(frozen=True)
class PerTrialGuide:
    """Run a per-trial guide object for every trial of a batch (slow path).

    Parameters
    ----------
    factory : callable
        ``factory(trial_index)`` returns a fresh object with
        ``step(nav: dict, dt_s: float) -> dict`` where ``nav`` holds one
        trial's :class:`NavState` values as floats and the result holds
        ``heading_d_rad``, ``speed_d_mps``, ``cross_track_m``, ``leg`` and
        ``done`` (and optionally ``along_track_m``, for the on-line metrics).
    trials : sequence of int
        Global indices of the batch's trials (passed to ``factory``, so a
        user block can seed itself per trial).
    needs : frozenset of str
        NavState fields the object reads.
    """

    factory: Callable[[int], Any]
    trials: Sequence[int]
    needs: frozenset[str] = frozenset({"north_m", "east_m", "heading_rad", "surge_mps", "sway_mps"})

    def init(self, nav: NavState) -> list[Any]:
        return _instances(self.factory, self.trials)

    def step(self, state: list[Any], nav: NavState, dt_s: float) -> tuple[list[Any], GuideOutput]:
        rows = [obj.step(nav.trial(i), dt_s) for i, obj in enumerate(state)]
        try:
            out = GuideOutput(
                heading_d_rad=np.array([r["heading_d_rad"] for r in rows], dtype=float),
                speed_d_mps=np.array([r["speed_d_mps"] for r in rows], dtype=float),
                cross_track_m=np.array([r["cross_track_m"] for r in rows], dtype=float),
                along_track_m=np.array([r.get("along_track_m", np.nan) for r in rows], dtype=float),
                leg=np.array([r["leg"] for r in rows], dtype=np.int64),
                done=np.array([r["done"] for r in rows], dtype=bool),
            )
        except (KeyError, TypeError) as exc:
            raise ParameterError("guide.step", rows[0] if rows else None,
                                 f"must return a dict with heading_d_rad, speed_d_mps, cross_track_m, leg, done ({exc})"
                                 ) from None  # fmt: skip
        return state, out


@dataclass(frozen=True)
class PerTrialPilot:
    """Run a per-trial pilot object for every trial of a batch (slow path).

    Parameters
    ----------
    factory : callable
        ``factory(trial_index)`` returns a fresh object with
        ``step(nav: dict, guide: dict, dt_s: float) -> (surge_force_n, rudder_rad)``
        taking one trial's :class:`NavState` and :class:`GuideOutput` values
        as plain numbers.
    trials : sequence of int
        Global indices of the batch's trials.
    needs : frozenset of str
        NavState and GuideOutput fields the object reads.
    """

    factory: Callable[[int], Any]
    trials: Sequence[int]
    needs: frozenset[str] = frozenset({"heading_rad", "yaw_rate_rad_s", "surge_mps", "heading_d_rad", "speed_d_mps"})

    def init(self, nav: NavState) -> list[Any]:
        return _instances(self.factory, self.trials)

    def step(self, state: list[Any], nav: NavState, guide: GuideOutput, dt_s: float) -> tuple[list[Any], PilotOutput]:
        rows = [obj.step(nav.trial(i), guide.trial(i), dt_s) for i, obj in enumerate(state)]
        arr = np.asarray(rows, dtype=float)
        if arr.shape != (len(state), 2):
            raise ParameterError("pilot.step", rows[0] if rows else None, "must return (surge_force_n, rudder_rad)")
        return state, PilotOutput(surge_force_n=arr[:, 0].copy(), rudder_rad=arr[:, 1].copy())
