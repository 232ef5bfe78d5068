"""Craft: the 3-DOF manoeuvring model, actuators, demo craft, integration, manoeuvres
and the compiled batch kernel."""

from .actuators import DifferentialThrustParams, PropRudderParams, ThrusterParams
from .catalogue import DEMO_CRAFT_NAMES, CraftParams, demo_craft
from .hull import HullParams, derivative, hull_coefficients
from .integrate import rk4_step, simulate_hull
from .kernel import HoldPilot, Plant, advance, advance_reference
from .manoeuvres import manoeuvring_report, turning_circle, zigzag

__all__ = [
    "DEMO_CRAFT_NAMES",
    "CraftParams",
    "DifferentialThrustParams",
    "HoldPilot",
    "HullParams",
    "Plant",
    "PropRudderParams",
    "ThrusterParams",
    "advance",
    "advance_reference",
    "demo_craft",
    "derivative",
    "hull_coefficients",
    "manoeuvring_report",
    "rk4_step",
    "simulate_hull",
    "turning_circle",
    "zigzag",
]
