"""Trials: the roles and their wiring, the stepping loop and the recorder."""

from .actuation import Actuation
from .blocks import BatchGuide, BatchPilot, LosGuide, NomotoPidPilot, PerTrialGuide, PerTrialPilot
from .loop import BatchResult, run_batch
from .recorder import SIGNALS, Recorder
from .setup import TrialSetup, build_trial_setup, check_spec_against_craft, pilot_for, truth_nav
from .signals import GuideOutput, NavState, PilotOutput
from .wiring import check_wiring

__all__ = [
    "SIGNALS",
    "Actuation",
    "BatchGuide",
    "BatchPilot",
    "BatchResult",
    "GuideOutput",
    "LosGuide",
    "NavState",
    "NomotoPidPilot",
    "PerTrialGuide",
    "PerTrialPilot",
    "PilotOutput",
    "Recorder",
    "TrialSetup",
    "build_trial_setup",
    "check_spec_against_craft",
    "check_wiring",
    "pilot_for",
    "run_batch",
    "truth_nav",
]
