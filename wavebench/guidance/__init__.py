"""Guidance: waypoint paths, LOS / integral LOS course guidance and survey patterns."""

from .los import LosParams, LosState, course_to_heading, los_init, los_step, wrap_angle
from .path import (
    WaypointPath,
    along_track_and_cross_track,
    leg_endpoints,
    make_path,
    path_tangential_angle,
    switch_legs,
)

__all__ = [
    "LosParams",
    "LosState",
    "WaypointPath",
    "along_track_and_cross_track",
    "course_to_heading",
    "leg_endpoints",
    "los_init",
    "los_step",
    "make_path",
    "path_tangential_angle",
    "switch_legs",
    "wrap_angle",
]
