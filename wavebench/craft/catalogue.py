"""Two invented demo craft: "Dulse" (twin-hull survey boat) and "Tholepin" (workboat).

Both craft are invented for wavebench. Their parameters are not taken from
any existing program or vessel file: they are computed in this module from a
few chosen principal dimensions by the method below, so that the numbers and
their derivation cannot drift apart. Values marked "chosen" are design
choices for the demo; "common practice, no source" marks rules of thumb;
"from memory" marks published values not re-checked.

Derivation (both craft)
-----------------------
Water density ``rho = 1025 kg/m^3`` (:data:`wavebench.core.constants.RHO_SEAWATER`).

1. Mass from displaced volume: ``m = rho n_h C_B L b T`` with ``n_h`` hulls of
   waterline length ``L``, hull beam ``b``, draft ``T`` and block coefficient
   ``C_B`` (chosen).
2. Yaw inertia: radius of gyration about the centre of gravity ``0.25 L``
   (common practice for ships, no source), ``I_z,CG = m (0.25 L)^2``, moved
   to CO by the parallel-axis theorem: ``izz = I_z,CG + m x_g^2``.
3. Surge added mass: ``X_udot = -k_x m`` with ``k_x`` a stated fraction
   (5-10 % is common practice, no source).
4. Sway and yaw added mass by strip (slender-body) theory with a uniform
   draft: the two-dimensional added mass of a section moving sideways is
   that of an ellipse moving along one axis, ``rho pi T^2`` for the double
   body with vertical semi-axis ``T``, halved for the half below the free
   surface (rigid-wall, high-frequency limit), ``a_22 = rho pi T^2 / 2``
   per metre (Newman, Marine Hydrodynamics, 1977, added mass of an
   ellipse). Integrating over ``x in [-L/2, L/2]`` per hull:
   ``Y_vdot = -a_22 L``, ``Y_rdot = N_vdot = -integral x a_22 dx = 0``
   (fore-aft symmetric strips), ``N_rdot = -a_22 L^3 / 12``. For a twin hull
   with hull centrelines at ``y = ±s/2`` the yaw added inertia also gets the
   surge added mass of each hull at its lateral offset, ``X_udot (s/2)^2``
   in total. Clarke, Gedling & Hine (1983) regressions were not used: the
   workboat's B/L = 0.36 lies outside the range of ship forms they fit.
5. Linear damping from chosen time constants: ``X_u = -m11 / T_u``,
   ``Y_v = -m22 / T_v``, ``N_r = -m33 / T_r`` (``m11, m22, m33`` the
   diagonal of ``M = M_RB + M_A``); ``Y_r = N_v = 0``. The sway and yaw time
   constants are chosen short enough that the linearised sway–yaw motion is
   straight-line stable at top speed despite the Munk moment
   ``(X_udot - Y_vdot) u v`` of ``C_A`` (checked in the tests by the
   eigenvalues of the linearised model).
6. Quadratic surge damping from the top speed ``U`` reached at full ahead,
   where the surge balance ``X_u U + X_uu U^2 + X_prop = 0`` gives
   ``X_uu = -(X_prop + X_u U) / U^2`` (Fossen's linear + quadratic damping;
   ``X_prop`` is the hull-felt thrust at full ahead).
7. Quadratic sway and yaw damping by the cross-flow drag principle (Fossen
   2021, ch. 6; Faltinsen, Sea Loads on Ships and Offshore Structures):
   strips of draft ``T`` with a 2-D drag coefficient ``C_D`` give, per hull,
   ``Y_vv = -rho C_D T L / 2`` and
   ``N_rr = -rho C_D T / 2 * integral |x|^3 dx = -rho C_D T L^4 / 64``.
   ``C_D = 1.0`` is chosen (Hoerner's 2-D cross-flow drag of hull-like
   sections is of order 1, from memory, not re-checked).

Dulse — a 2.5 m twin-hull survey boat
    Two demihulls ``L = 2.5 m``, ``b = 0.25 m``, ``T = 0.15 m``,
    ``C_B = 0.45`` (slender round-bilge demihulls, chosen), centrelines
    0.9 m apart (overall beam 1.15 m); ``x_g = 0``; ``k_x = 0.05`` (slender
    hulls). Time constants ``T_u = 8 s``, ``T_v = 0.6 s``, ``T_r = 0.5 s``;
    top speed 2.0 m/s (chosen). Two electric thrusters at ``x = -1.15 m``,
    ``y = ±0.45 m``: 50 N ahead at 50 rev/s (``k_fwd = 0.02 N/(rev/s)^2``),
    astern coefficient 60 % of ahead (fixed-pitch propellers give less thrust
    astern; common practice, no source), rate limit 100 rev/s^2, motor time
    constant 0.2 s (chosen).

Tholepin — a 7 m single-screw workboat
    ``L = 7.0 m``, ``B = 2.5 m``, ``T = 0.6 m``, ``C_B = 0.45`` (chosen);
    ``x_g = -0.1 m`` (centre of gravity slightly aft of CO at midships,
    chosen); ``k_x = 0.10`` (beamy hull: the top of the common-practice
    range). Time constants ``T_u = 20 s``, ``T_v = 1.0 s``, ``T_r = 0.6 s``;
    top speed 4.0 m/s (chosen). Propeller: diameter 0.45 m, 5 kN ahead at
    25 rev/s (``k_fwd = 8 N/(rev/s)^2``, an effective ``K_T = k / (rho D^4)``
    of about 0.19 frozen at cruise), astern 60 % of ahead, rate limit
    12.5 rev/s^2, time constant 0.5 s; thrust deduction 0.10 and wake
    fraction 0.10 (common practice for small single-screw craft, no source).
    Rudder: area ``0.025 L T`` (rudder area of a few per cent of ``L T`` is
    common practice, no source), span 0.40 m (aspect ratio ``span^2 / A_R``),
    at ``x_R = -L/2``, fully in the slipstream (span below the propeller
    diameter), normal-force slope from Prandtl's lifting-line value
    ``2 pi AR / (AR + 2)`` (Anderson, Fundamentals of Aerodynamics); 35 deg
    limit, 10 deg/s steering-gear rate (chosen).

Examples
--------
>>> DEMO_CRAFT_NAMES
('Dulse', 'Tholepin')
>>> demo_craft("dulse").name
'Dulse'
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ..core.constants import RHO_SEAWATER
from ..core.errors import ParameterError
from ..core.params import Params
from .actuators import (
    DifferentialThrustParams,
    PropRudderParams,
    ThrusterParams,
    max_thrust,
)
from .hull import HullParams

__all__ = ["DEMO_CRAFT_NAMES", "CraftParams", "demo_craft", "derive_hull"]

#: Names accepted by :func:`demo_craft`.
DEMO_CRAFT_NAMES: tuple[str, ...] = ("Dulse", "Tholepin")


@dataclass(frozen=True, kw_only=True)
class CraftParams(Params):
    """A craft: hull plus propulsion layout.

    Parameters
    ----------
    name : str
        Display name.
    hull : HullParams
    propulsion : DifferentialThrustParams or PropRudderParams
    """

    name: str
    hull: HullParams
    propulsion: DifferentialThrustParams | PropRudderParams

    def _check(self) -> None:
        if not isinstance(self.name, str) or not self.name:
            raise ParameterError("name", self.name, "must be a non-empty string")
        if not isinstance(self.hull, HullParams):
            raise ParameterError("hull", self.hull, "must be a HullParams")
        if not isinstance(self.propulsion, (DifferentialThrustParams, PropRudderParams)):
            raise ParameterError(
                "propulsion",
                self.propulsion,
                "must be a DifferentialThrustParams or a PropRudderParams",
            )


def derive_hull(
    *,
    length_m: float,
    hull_beam_m: float,
    draft_m: float,
    block_coefficient: float,
    n_hulls: int = 1,
    hull_spacing_m: float = 0.0,
    xg_m: float = 0.0,
    surge_added_mass_fraction: float,
    surge_time_constant_s: float,
    sway_time_constant_s: float,
    yaw_time_constant_s: float,
    top_speed_mps: float,
    full_thrust_n: float,
    crossflow_drag_coefficient: float = 1.0,
    gyradius_fraction: float = 0.25,
    rho: float = RHO_SEAWATER,
) -> HullParams:
    """Hull parameters from principal dimensions by the module's stated method.

    Parameters
    ----------
    length_m, hull_beam_m, draft_m : float
        Waterline length, beam of one hull and draft [m].
    block_coefficient : float
        Block coefficient C_B of one hull [-].
    n_hulls : int
        1 (monohull) or 2 (twin hull).
    hull_spacing_m : float
        Distance between the hull centrelines of a twin hull [m].
    xg_m : float
        Centre of gravity ahead of CO [m].
    surge_added_mass_fraction : float
        ``-X_udot / m`` [-].
    surge_time_constant_s, sway_time_constant_s, yaw_time_constant_s : float
        Time constants defining ``X_u, Y_v, N_r`` [s].
    top_speed_mps : float
        Steady speed at full ahead [m/s].
    full_thrust_n : float
        Surge force felt by the hull at full ahead [N].
    crossflow_drag_coefficient : float
        2-D cross-flow drag coefficient C_D [-].
    gyradius_fraction : float
        Yaw radius of gyration about the CG as a fraction of L [-].
    rho : float
        Water density [kg/m^3].

    Returns
    -------
    HullParams
    """
    L, b, T = length_m, hull_beam_m, draft_m
    m = rho * n_hulls * block_coefficient * L * b * T
    izz = m * (gyradius_fraction * L) ** 2 + m * xg_m**2
    x_udot = -surge_added_mass_fraction * m
    a22 = 0.5 * rho * math.pi * T**2  # strip sway added mass per metre, one hull
    y_vdot = -n_hulls * a22 * L
    n_rdot = -n_hulls * a22 * L**3 / 12.0
    if n_hulls == 2:
        n_rdot += x_udot * (0.5 * hull_spacing_m) ** 2
    m11 = m - x_udot
    m22 = m - y_vdot
    m33 = izz - n_rdot
    x_u = -m11 / surge_time_constant_s
    y_v = -m22 / sway_time_constant_s
    n_r = -m33 / yaw_time_constant_s
    x_uu = -(full_thrust_n + x_u * top_speed_mps) / top_speed_mps**2
    y_vv = -n_hulls * 0.5 * rho * crossflow_drag_coefficient * T * L
    n_rr = -n_hulls * rho * crossflow_drag_coefficient * T * L**4 / 64.0
    beam = hull_spacing_m + b if n_hulls == 2 else b
    return HullParams(
        length_m=L,
        beam_m=beam,
        draft_m=T,
        mass_kg=m,
        izz_kgm2=izz,
        xg_m=xg_m,
        x_udot=x_udot,
        y_vdot=y_vdot,
        y_rdot=0.0,
        n_vdot=0.0,
        n_rdot=n_rdot,
        x_u=x_u,
        y_v=y_v,
        y_r=0.0,
        n_v=0.0,
        n_r=n_r,
        x_uu=x_uu,
        y_vv=y_vv,
        n_rr=n_rr,
    )


def _dulse() -> CraftParams:
    def thruster(y: float) -> ThrusterParams:
        return ThrusterParams(
            k_fwd_n_per_rps2=50.0 / 50.0**2,
            k_rev_n_per_rps2=0.6 * 50.0 / 50.0**2,
            n_max_rps=50.0,
            n_rate_max_rps_per_s=100.0,
            time_constant_s=0.2,
            x_m=-1.15,
            y_m=y,
        )

    propulsion = DifferentialThrustParams(port=thruster(-0.45), starboard=thruster(0.45))
    full = float(max_thrust(propulsion.port) + max_thrust(propulsion.starboard))
    hull = derive_hull(
        length_m=2.5,
        hull_beam_m=0.25,
        draft_m=0.15,
        block_coefficient=0.45,
        n_hulls=2,
        hull_spacing_m=0.9,
        surge_added_mass_fraction=0.05,
        surge_time_constant_s=8.0,
        sway_time_constant_s=0.6,
        yaw_time_constant_s=0.5,
        top_speed_mps=2.0,
        full_thrust_n=full,
    )
    return CraftParams(name="Dulse", hull=hull, propulsion=propulsion)


def _tholepin() -> CraftParams:
    L, T = 7.0, 0.6
    n_max = 25.0
    propeller = ThrusterParams(
        k_fwd_n_per_rps2=5000.0 / n_max**2,
        k_rev_n_per_rps2=0.6 * 5000.0 / n_max**2,
        n_max_rps=n_max,
        n_rate_max_rps_per_s=12.5,
        time_constant_s=0.5,
        x_m=-3.2,
        y_m=0.0,
    )
    area = 0.025 * L * T
    span = 0.40
    aspect = span**2 / area
    propulsion = PropRudderParams(
        propeller=propeller,
        prop_diameter_m=0.45,
        thrust_deduction=0.10,
        wake_fraction=0.10,
        rudder_area_m2=area,
        rudder_x_m=-0.5 * L,
        rudder_lift_slope_per_rad=2.0 * math.pi * aspect / (aspect + 2.0),
        slipstream_fraction=1.0,
        rudder_max_deg=35.0,
        rudder_rate_max_deg_per_s=10.0,
    )
    full = float((1.0 - propulsion.thrust_deduction) * max_thrust(propeller))
    hull = derive_hull(
        length_m=L,
        hull_beam_m=2.5,
        draft_m=T,
        block_coefficient=0.45,
        xg_m=-0.1,
        surge_added_mass_fraction=0.10,
        surge_time_constant_s=20.0,
        sway_time_constant_s=1.0,
        yaw_time_constant_s=0.6,
        top_speed_mps=4.0,
        full_thrust_n=full,
    )
    return CraftParams(name="Tholepin", hull=hull, propulsion=propulsion)


_BUILDERS = {"dulse": _dulse, "tholepin": _tholepin}


def demo_craft(name: str) -> CraftParams:
    """One of the invented demo craft, by name (case-insensitive).

    Parameters
    ----------
    name : str
        One of :data:`DEMO_CRAFT_NAMES`.

    Returns
    -------
    CraftParams

    Raises
    ------
    ParameterError
        For an unknown name; the message lists the allowed names.
    """
    key = name.lower() if isinstance(name, str) else None
    if key not in _BUILDERS:
        raise ParameterError("name", name, f"must be one of {list(DEMO_CRAFT_NAMES)}")
    return _BUILDERS[key]()
