"""Core: errors, validated parameters, random streams, frames and geodesy."""

from .errors import ParameterError, WavebenchWarning
from .params import Bounds, Params, bounded, params_from_dict, params_to_dict
from .streams import TrialStreams, purpose_key

__all__ = [
    "Bounds",
    "ParameterError",
    "Params",
    "TrialStreams",
    "WavebenchWarning",
    "bounded",
    "params_from_dict",
    "params_to_dict",
    "purpose_key",
]
