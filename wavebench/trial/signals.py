"""The signals that pass between the roles of the loop.

Every block of the stack reads and writes batched arrays of shape
(n_trials,). The navigator publishes a :class:`NavState`, the guide a
:class:`GuideOutput`, the pilot a :class:`PilotOutput`; the wiring check
(:mod:`wavebench.trial.wiring`) compares the names a block says it needs
with the names the roles before it provide.
"""

from __future__ import annotations

from dataclasses import dataclass, fields

import numpy as np
from numpy.typing import NDArray

__all__ = ["GuideOutput", "NavState", "PilotOutput", "signal_names"]

FloatArray = NDArray[np.float64]


@dataclass(frozen=True)
class NavState:
    """What the navigator believes about the craft (arrays of shape (n_trials,)).

    Parameters
    ----------
    t_s : float
        Time since the trial start [s].
    north_m, east_m : ndarray
        Position in the scenario's NED frame [m].
    heading_rad : ndarray
        Heading [rad].
    surge_mps, sway_mps : ndarray
        Body-frame velocity over ground [m/s].
    yaw_rate_rad_s : ndarray
        Yaw rate [rad/s].
    course_rad : ndarray
        Course over ground [rad].
    sog_mps : ndarray
        Speed over ground [m/s].
    """

    t_s: float
    north_m: FloatArray
    east_m: FloatArray
    heading_rad: FloatArray
    surge_mps: FloatArray
    sway_mps: FloatArray
    yaw_rate_rad_s: FloatArray
    course_rad: FloatArray
    sog_mps: FloatArray

    def trial(self, i: int) -> dict[str, float]:
        """One trial's values as plain floats (for per-trial user blocks)."""
        return {f.name: (self.t_s if f.name == "t_s" else float(getattr(self, f.name)[i])) for f in fields(self)}


@dataclass(frozen=True)
class GuideOutput:
    """What the guide asks of the pilot, and where it stands (arrays of shape (n_trials,)).

    Parameters
    ----------
    heading_d_rad : ndarray
        Desired heading [rad].
    speed_d_mps : ndarray
        Desired surge speed over ground [m/s].
    cross_track_m : ndarray
        Cross-track error to the active leg [m], + to starboard.
    along_track_m : ndarray
        Distance along the active leg from its first waypoint [m] (NaN if
        the guide does not say).
    leg : ndarray of int
        Active leg index.
    done : ndarray of bool
        The last waypoint has been accepted.
    """

    heading_d_rad: FloatArray
    speed_d_mps: FloatArray
    cross_track_m: FloatArray
    along_track_m: FloatArray
    leg: NDArray[np.int64]
    done: NDArray[np.bool_]

    def trial(self, i: int) -> dict[str, float]:
        """One trial's values as plain Python numbers."""
        return {f.name: getattr(self, f.name)[i].item() for f in fields(self)}


@dataclass(frozen=True)
class PilotOutput:
    """The pilot's demand on the actuators (arrays of shape (n_trials,)).

    Parameters
    ----------
    surge_force_n : ndarray
        Surge force the hull should feel [N].
    rudder_rad : ndarray
        Rudder angle [rad], + turning to starboard; for a twin-thruster
        craft a rudder-equivalent: ``rudder / 35 deg`` of the largest yaw
        moment (the convention of :mod:`wavebench.craft.manoeuvres`).
    """

    surge_force_n: FloatArray
    rudder_rad: FloatArray


def signal_names(cls: type) -> frozenset[str]:
    """Names of the signals a signal class carries.

    Examples
    --------
    >>> "heading_rad" in signal_names(NavState)
    True
    """
    return frozenset(f.name for f in fields(cls))
