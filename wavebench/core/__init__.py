"""Core: errors, validated parameters, random streams, frames and geodesy."""

from .errors import ParameterError, WavebenchWarning
from .frames import angle_diff, body_to_ned, ned_to_body, rot_z, rot_zyx, wrap_2pi, wrap_pi
from .geodesy import GeodeticOrigin, geodesic_distance_m, geodetic_to_ned, ned_to_geodetic
from .params import Bounds, Params, bounded, params_from_dict, params_to_dict
from .streams import TrialStreams, purpose_key

__all__ = [
    "Bounds",
    "GeodeticOrigin",
    "ParameterError",
    "Params",
    "TrialStreams",
    "WavebenchWarning",
    "angle_diff",
    "body_to_ned",
    "bounded",
    "geodesic_distance_m",
    "geodetic_to_ned",
    "ned_to_body",
    "ned_to_geodetic",
    "params_from_dict",
    "params_to_dict",
    "purpose_key",
    "rot_z",
    "rot_zyx",
    "wrap_2pi",
    "wrap_pi",
]
