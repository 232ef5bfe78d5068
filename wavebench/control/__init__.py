"""Pilot blocks: Nomoto identification, PID autopilots, heading reference model.

All functions are batched over a leading trial axis and pure: parameters are
frozen :class:`~wavebench.core.params.Params`, state is passed in and returned.
"""

from .nomoto import NomotoFit, fit_nomoto, identify_nomoto, nomoto_step_response
from .pid import (
    PidParams,
    PidState,
    heading_pid_gains,
    nomoto_feedforward,
    pid_init,
    pid_step,
    speed_pi_gains,
)
from .reference import (
    HeadingReference,
    ReferenceParams,
    ReferenceState,
    reference_init,
    reference_step,
)

__all__ = [
    "HeadingReference",
    "NomotoFit",
    "PidParams",
    "PidState",
    "ReferenceParams",
    "ReferenceState",
    "fit_nomoto",
    "heading_pid_gains",
    "identify_nomoto",
    "nomoto_feedforward",
    "nomoto_step_response",
    "pid_init",
    "pid_step",
    "reference_init",
    "reference_step",
    "speed_pi_gains",
]
