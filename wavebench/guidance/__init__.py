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
from .survey import SurveyParams, check_convex_polygon, survey_lines, survey_waypoints

__all__ = [
    "LosParams",
    "LosState",
    "SurveyParams",
    "WaypointPath",
    "along_track_and_cross_track",
    "check_convex_polygon",
    "course_to_heading",
    "leg_endpoints",
    "los_init",
    "los_step",
    "make_path",
    "path_tangential_angle",
    "survey_lines",
    "survey_waypoints",
    "switch_legs",
    "wrap_angle",
]
