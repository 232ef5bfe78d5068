"""The actuator role: pilot demands to actuator commands, actuator dynamics, forces and power.

:class:`Actuation` turns a :class:`~wavebench.trial.signals.PilotOutput`
(surge force and rudder or rudder-equivalent) into the commands of the
craft's propulsion, moves the actuator state toward them (lags, rate limits,
saturation of :mod:`wavebench.craft.actuators`) and gives the generalised
force the hull feels and the shaft power drawn.

Power model
-----------
Each propulsor is an ideal actuator disc (Rankine–Froude momentum theory):
a thrust ``T`` at advance speed ``V_a >= 0`` through a disc of area ``A``
needs the power ``P_ideal = |T| (V_a + v_i)`` with the induced velocity
``v_i = (-V_a + sqrt(V_a^2 + 2 |T| / (rho A))) / 2``; the shaft power is
``P_ideal / eta`` with ``eta = 0.7`` for the losses momentum theory
leaves out (profile drag, swirl; common practice, no source). For a
propeller-and-rudder craft ``A`` is from its ``prop_diameter_m``; a
thruster without a diameter gets ``D = (k_fwd / (K_T rho))^(1/4)`` with a
bollard thrust coefficient ``K_T = 0.3`` (a typical value for a small
fixed-pitch propeller; value from memory, not re-checked). Momentum
theory: e.g. Carlton, *Marine Propellers and Propulsion* (actuator disc
chapter).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from ..core.constants import RHO_SEAWATER
from ..craft.actuators import (
    DifferentialThrustParams,
    actuator_step,
    actuator_tau,
    differential_rps_command,
    max_thrust,
    min_thrust,
    rps_for_thrust,
    thrust,
)
from ..craft.catalogue import CraftParams
from ..craft.manoeuvres import HARD_OVER_DEG
from .signals import PilotOutput

__all__ = ["POWER_EFFICIENCY", "THRUSTER_BOLLARD_KT", "Actuation"]

#: Shaft power = ideal actuator-disc power / this (common practice, no source).
POWER_EFFICIENCY = 0.7
#: Bollard thrust coefficient used to size a thruster's disc (value from memory).
THRUSTER_BOLLARD_KT = 0.3

FloatArray = NDArray[np.float64]


def _disc_power(t: FloatArray, v_a: FloatArray, area: float, rho: float) -> FloatArray:
    t_abs = np.abs(t)
    va = np.maximum(v_a, 0.0)
    v_i = 0.5 * (-va + np.sqrt(va * va + 2.0 * t_abs / (rho * area)))
    return t_abs * (va + v_i) / POWER_EFFICIENCY


@dataclass(frozen=True)
class Actuation:
    """The actuator role for one craft.

    Parameters
    ----------
    craft : CraftParams
    rho : float
        Water density [kg/m^3].
    """

    craft: CraftParams
    rho: float = RHO_SEAWATER

    @property
    def is_differential(self) -> bool:
        """True for a twin-thruster craft."""
        return isinstance(self.craft.propulsion, DifferentialThrustParams)

    def initial_state(self, surge_mps: FloatArray) -> FloatArray:
        """Actuator state holding a steady surge speed straight ahead, shape (n_trials, 2)."""
        h = self.craft.hull
        x_hold = -(h.x_u * surge_mps + h.x_uu * np.abs(surge_mps) * surge_mps)
        return self.command(PilotOutput(surge_force_n=x_hold, rudder_rad=np.zeros_like(surge_mps)))

    def command(self, demand: PilotOutput) -> FloatArray:
        """Actuator commands for a pilot demand, shape (n_trials, 2).

        Twin thrusters: ``[n_port, n_stbd]`` [rev/s] from the surge force
        and a yaw moment ``rudder / 35 deg`` of the largest one (yaw
        priority allocation). Propeller and rudder: ``[n, delta]`` with
        ``n`` giving ``X / (1 - t)`` of thrust, both saturated.
        """
        p = self.craft.propulsion
        x = demand.surge_force_n
        if isinstance(p, DifferentialThrustParams):
            frac = np.clip(demand.rudder_rad / math.radians(HARD_OVER_DEG), -1.0, 1.0)
            yp, ys = p.port.y_m, p.starboard.y_m
            n_max = -yp * max_thrust(p.port) - ys * min_thrust(p.starboard)
            n_min = -yp * min_thrust(p.port) - ys * max_thrust(p.starboard)
            yaw = np.where(frac >= 0.0, frac * n_max, -frac * n_min)
            return differential_rps_command(p, x, yaw)
        n_cmd = np.clip(rps_for_thrust(p.propeller, x / (1.0 - p.thrust_deduction)),
                        -p.propeller.n_max_rps, p.propeller.n_max_rps)  # fmt: skip
        lim = math.radians(float(np.max(p.rudder_max_deg)))
        return np.stack([n_cmd, np.clip(demand.rudder_rad, -lim, lim)], axis=-1)

    def step(self, state: FloatArray, command: FloatArray, dt_s: float) -> FloatArray:
        """Actuator state after ``dt_s`` seconds toward ``command``."""
        return actuator_step(self.craft.propulsion, state, command, dt_s)

    def tau(self, state: FloatArray, nu_r: FloatArray) -> FloatArray:
        """Generalised force ``[X, Y, N]`` of an actuator state, shape (n_trials, 3)."""
        return actuator_tau(self.craft.propulsion, state, nu_r, rho=self.rho)

    def power_w(self, state: FloatArray, nu_r: FloatArray) -> FloatArray:
        """Shaft power drawn [W], shape (n_trials,) (see the module notes)."""
        p = self.craft.propulsion
        u_r = nu_r[:, 0]
        if isinstance(p, DifferentialThrustParams):
            total = np.zeros(state.shape[0])
            for side, col in ((p.port, 0), (p.starboard, 1)):
                d = (float(np.max(side.k_fwd_n_per_rps2)) / (THRUSTER_BOLLARD_KT * self.rho)) ** 0.25
                t = thrust(side, state[:, col])
                total = total + _disc_power(t, np.where(t >= 0.0, u_r, -u_r), 0.25 * math.pi * d * d, self.rho)
            return total
        t = thrust(p.propeller, state[:, 0])
        v_a = (1.0 - p.wake_fraction) * np.where(t >= 0.0, u_r, -u_r)
        return _disc_power(t, v_a, 0.25 * math.pi * float(np.max(p.prop_diameter_m)) ** 2, self.rho)
