"""From a spec and a batch's environment to the blocks of the loop.

:func:`build_trial_setup` resolves everything the spec leaves to the craft
and puts each trial's draws in place: the path and speed schedule, the
start state, the guide, the pilot (gains by pole placement on a Nomoto
model identified from the craft's own step response), the actuators, the
seabed and the windage.

Derived defaults (each our choice unless a source is named):

* LOS lookahead 2.5 hull lengths, circle of acceptance 2 hull lengths, ILOS
  integral gain 0.3 m/s (common practice, no source).
* Heading loop: ``w_n = 1 / T`` of the identified Nomoto model, the gains of
  :func:`~wavebench.control.pid.heading_pid_gains` (Fossen 2021), limited
  to the rudder (35 deg rudder-equivalent for twin thrusters). The model is
  identified once per campaign, at the mission's nominal speed (the mean of
  ``leg_speeds_mps`` or the central value of ``speed_mps``), so every trial
  gets the same gains whatever batch it runs in.
* Heading reference: third order with the loop's ``w_n`` and damping ratio 1,
  yaw rate limited to half the Nomoto steady turn rate at full rudder
  ``K delta_max / 2``.
* Speed loop: PI on ``m11 u_dot + d u = X`` with ``d`` the surge damping
  linearised at the nominal speed, ``w_n = max(0.3 rad/s, d / (zeta m11))``
  (so that ``kp >= d > 0``), limited to the
  full-ahead surge force; plus the steady-thrust feed-forward.
* On-line metrics: a line counts from two lookahead distances along it
  (the LOS law has then taken out most of an initial offset; common
  practice, no source).
* Windage (when the spec has wind): an above-water profile of height
  ``0.4 B`` over the hull's length and beam (an assumed demo value, no
  source), Fossen's coefficient curves.
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from ..control.nomoto import NomotoFit, identify_nomoto
from ..control.pid import heading_pid_gains, speed_pi_gains
from ..control.reference import ReferenceParams
from ..core.errors import ParameterError
from ..craft.actuators import DifferentialThrustParams, max_thrust
from ..craft.catalogue import CraftParams
from ..craft.manoeuvres import HARD_OVER_DEG, top_speed
from ..guidance.los import LosParams
from ..guidance.path import make_path
from ..sea.seabed import SeabedGrid, synthetic_bay
from ..sea.wind import WindageParams
from ..spec.build import TrialEnvironment
from ..spec.fields import representative
from ..spec.schema import Spec
from .actuation import Actuation
from .blocks import LosGuide, NomotoPidPilot
from .navigator import NavPack, build_nav_pack
from .signals import NavState

__all__ = ["TrialSetup", "build_seabed", "build_trial_setup", "check_spec_against_craft", "nominal_speed", "pilot_for"]

FloatArray = NDArray[np.float64]

#: Above-water profile height as a fraction of the beam (assumed demo value).
WINDAGE_HEIGHT_PER_BEAM = 0.4
#: Default speed-loop natural frequency [rad/s] (our choice).
SPEED_LOOP_WN_RAD_S = 0.3


@dataclass(frozen=True)
class TrialSetup:
    """The blocks and initial state of one batch.

    Parameters
    ----------
    env : TrialEnvironment
        Sea, current, wind, craft and plant of the batch.
    guide : LosGuide
    pilot : NomotoPidPilot
    actuation : Actuation
    eta0, nu0 : ndarray of shape (n_trials, 3)
        Initial pose ``[north, east, psi]`` and body velocity over ground.
    act0 : ndarray of shape (n_trials, 2)
        Initial actuator state (holding the start speed).
    seabed : SeabedGrid or None
    windage : WindageParams or None
        None without wind.
    abort_cross_track_m : float or None
    line_legs : ndarray of bool, shape (n_trials, n_legs)
        Legs that are lines for the on-line metrics (every leg of a waypoint
        mission; the even legs, not the connectors, of a survey pattern).
    line_run_in_m : ndarray of shape (n_trials,)
        Distance along a line before its samples count [m].
    navigator : str
        The spec's navigator (``stack.navigator``).
    nav : NavPack or None
        The navigator's configuration and pre-drawn sensor errors (None for truth navigation).
    running_depth_m : ndarray of shape (n_trials,)
        Depth the craft holds [m] (0 for a surface craft).
    """

    env: TrialEnvironment
    guide: LosGuide
    pilot: NomotoPidPilot
    actuation: Actuation
    eta0: FloatArray
    nu0: FloatArray
    act0: FloatArray
    seabed: SeabedGrid | None
    windage: WindageParams | None
    abort_cross_track_m: float | None
    line_legs: NDArray[np.bool_]
    line_run_in_m: FloatArray
    navigator: str = "truth"
    nav: NavPack | None = None
    running_depth_m: FloatArray | None = None

    @property
    def n_trials(self) -> int:
        """Number of trials in the batch."""
        return self.env.n_trials


def nominal_speed(spec: Spec) -> float:
    """The mission's nominal speed [m/s]: mean of the leg speeds, or the central ``speed_mps``."""
    m = spec.mission
    if m.leg_speeds_mps is not None:
        return float(np.mean(m.leg_speeds_mps))
    return float(representative(m.speed_mps))


def check_spec_against_craft(spec: Spec) -> None:
    """Checks that need the craft: the ordered speeds against its top speed.

    Raises
    ------
    ParameterError
        Naming ``mission.speed_mps`` or ``mission.leg_speeds_mps``.
    """
    craft = spec.craft.build()
    v_max = float(np.min(top_speed(craft)))
    m = spec.mission
    if m.leg_speeds_mps is not None:
        worst = max(m.leg_speeds_mps)
        if worst > v_max:
            raise ParameterError("mission.leg_speeds_mps", list(m.leg_speeds_mps),
                                 f"must be at most {craft.name}'s calm-water top speed {v_max:.2f} m/s")  # fmt: skip
    else:
        hi = m.speed_mps.support()[1] if hasattr(m.speed_mps, "support") else representative(m.speed_mps)
        if hi > v_max:
            raise ParameterError("mission.speed_mps", m.speed_mps if not hasattr(m.speed_mps, "support") else hi,
                                 f"must be at most {craft.name}'s calm-water top speed {v_max:.2f} m/s")  # fmt: skip


@functools.lru_cache(maxsize=16)
def _nomoto(craft: CraftParams, speed_mps: float) -> NomotoFit:
    return identify_nomoto(craft, approach_speed_mps=speed_mps)


def _rudder_limit_rad(craft: CraftParams) -> float:
    p = craft.propulsion
    if isinstance(p, DifferentialThrustParams):
        return math.radians(HARD_OVER_DEG)
    return math.radians(float(np.min(p.rudder_max_deg)))


def _full_ahead_n(craft: CraftParams) -> float:
    p = craft.propulsion
    if isinstance(p, DifferentialThrustParams):
        return float(max_thrust(p.port) + max_thrust(p.starboard))
    return float((1.0 - p.thrust_deduction) * max_thrust(p.propeller))


def pilot_for(spec: Spec, craft: CraftParams) -> NomotoPidPilot:
    """The spec's pilot for ``craft``, with the derived defaults of the module notes.

    Raises
    ------
    ParameterError
        If the requested heading bandwidth gives a negative derivative gain
        (``2 zeta w_n T < 1``), naming ``stack.pilot.heading_natural_frequency_rad_s``.
    """
    ps = spec.stack.pilot
    u0 = nominal_speed(spec)
    fit = _nomoto(craft, u0)
    k, tc = float(fit.gain_per_s[0]), float(fit.time_constant_s[0])
    wn = ps.heading_natural_frequency_rad_s or 1.0 / tc
    zeta = ps.heading_damping_ratio
    delta_max = _rudder_limit_rad(craft)
    try:
        heading = heading_pid_gains(k, tc, natural_frequency_rad_s=wn, damping_ratio=zeta, output_max=delta_max)
    except ParameterError as exc:
        raise ParameterError("stack.pilot.heading_natural_frequency_rad_s", wn,
                             f"{exc.allowed} (identified Nomoto T = {tc:.2f} s)") from None  # fmt: skip
    h = craft.hull
    m11 = float(h.mass_kg - h.x_udot)
    d_lin = float(-h.x_u - 2.0 * h.x_uu * u0)
    zeta_u = ps.speed_damping_ratio
    wn_u = ps.speed_natural_frequency_rad_s or max(SPEED_LOOP_WN_RAD_S, d_lin / (zeta_u * m11))
    try:
        speed = speed_pi_gains(m11, d_lin, natural_frequency_rad_s=wn_u, damping_ratio=zeta_u,
                               output_max_n=_full_ahead_n(craft))  # fmt: skip
    except ParameterError as exc:
        raise ParameterError("stack.pilot.speed_natural_frequency_rad_s", wn_u,
                             f"{exc.allowed} (surge m = {m11:.1f} kg, d = {d_lin:.1f} kg/s)") from None  # fmt: skip
    reference = None
    if ps.reference_model:
        r_max = math.radians(ps.yaw_rate_max_deg_s) if ps.yaw_rate_max_deg_s else 0.5 * k * delta_max
        reference = ReferenceParams(natural_frequency_rad_s=wn, damping_ratio=1.0, rate_max_rad_s=r_max)
    return NomotoPidPilot(
        heading=heading, speed=speed, nomoto_gain_per_s=k, nomoto_time_constant_s=tc, reference=reference,
        surge_x_u=float(h.x_u), surge_x_uu=float(h.x_uu),
    )  # fmt: skip


def build_seabed(spec: Spec) -> SeabedGrid | None:
    """The spec's seabed grid (None without ``[seabed]``)."""
    sb = spec.seabed
    if sb is None:
        return None
    if sb.kind == "flat":
        far = 1e7
        return SeabedGrid(north_m=[-far, far], east_m=[-far, far], depth_m=np.full((2, 2), sb.depth_m))
    bay = synthetic_bay(sb.bay, np.random.default_rng(sb.layout_seed))
    return SeabedGrid(north_m=bay.north_m + sb.corner_north_m, east_m=bay.east_m + sb.corner_east_m,
                      depth_m=bay.depth_m, fill_depth_m=bay.fill_depth_m)  # fmt: skip


def _per_trial(draws: dict[str, FloatArray], path: str, fallback: float | None, n: int) -> FloatArray | None:
    if path in draws:
        return np.asarray(draws[path], dtype=float)
    return None if fallback is None else np.full(n, float(fallback))


def build_trial_setup(spec: Spec, env: TrialEnvironment, *, pilot: NomotoPidPilot | None = None) -> TrialSetup:
    """The blocks and initial state of a batch.

    Parameters
    ----------
    spec : Spec
    env : TrialEnvironment
        From :func:`~wavebench.spec.build.build_environment` for the batch.
    pilot : NomotoPidPilot, optional
        A pilot already derived for this spec (:func:`pilot_for`); derived here when omitted.

    Returns
    -------
    TrialSetup
    """
    n = env.n_trials
    craft = env.craft
    hull_len = float(np.max(craft.hull.length_m))
    m, g = spec.mission, spec.stack.guide
    wp = np.asarray(m.waypoints(), dtype=float)
    n_legs = wp.shape[0] - 1
    path = make_path(wp, n_trials=n)
    draws = env.draws
    if m.leg_speeds_mps is not None:
        legs = np.broadcast_to(np.asarray(m.leg_speeds_mps, dtype=float), (n, n_legs)).copy()
    else:
        legs = np.repeat(_per_trial(draws, "mission.speed_mps", m.speed_mps, n)[:, None], n_legs, axis=1)
    lookahead = _per_trial(draws, "stack.guide.lookahead_m", g.lookahead_m, n)
    sigma = _per_trial(draws, "stack.guide.integral_gain", g.integral_gain, n)
    los = LosParams(
        lookahead_m=lookahead if lookahead is not None else 2.5 * hull_len,
        integral_gain=(sigma if sigma is not None else 0.3) if g.kind == "ilos" else 0.0,
        acceptance_radius_m=g.acceptance_radius_m or 2.0 * hull_len,
        switch_on_pass=g.switching == "circle_or_passed",
    )
    guide = LosGuide(params=los, path=path, leg_speed_mps=legs)
    first_leg = math.atan2(wp[1, 1] - wp[0, 1], wp[1, 0] - wp[0, 0])
    north0 = _per_trial(draws, "mission.start_north_m", m.start_north_m, n)
    east0 = _per_trial(draws, "mission.start_east_m", m.start_east_m, n)
    psi0 = _per_trial(draws, "mission.start_heading_deg", m.start_heading_deg, n)
    eta0 = np.stack([
        north0 if north0 is not None else np.full(n, wp[0, 0]),
        east0 if east0 is not None else np.full(n, wp[0, 1]),
        np.radians(psi0) if psi0 is not None else np.full(n, first_leg),
    ], axis=1)  # fmt: skip
    nu0 = np.zeros((n, 3))
    nu0[:, 0] = legs[:, 0]
    actuation = Actuation(craft)
    windage = None
    if env.wind is not None:
        h = craft.hull
        height = WINDAGE_HEIGHT_PER_BEAM * float(np.max(h.beam_m))
        windage = WindageParams(frontal_area_m2=float(np.max(h.beam_m)) * height,
                                lateral_area_m2=hull_len * height, length_oa_m=hull_len)  # fmt: skip
    seabed = build_seabed(spec)
    depth = draws.get("mission.running_depth_m", m.running_depth_m)
    nav = None
    if spec.stack.navigator != "truth":
        nav = build_nav_pack(spec, env.trials, draws, eta0, nu0, seabed)
    return TrialSetup(
        env=env, guide=guide, pilot=pilot or pilot_for(spec, craft), actuation=actuation, eta0=eta0, nu0=nu0,
        act0=actuation.initial_state(nu0[:, 0]), seabed=seabed, windage=windage,
        abort_cross_track_m=m.abort_cross_track_m,
        line_legs=np.broadcast_to(np.arange(n_legs) % 2 == 0 if m.kind == "survey" else np.ones(n_legs, dtype=bool),
                                  (n, n_legs)),
        navigator=spec.stack.navigator, nav=nav,
        running_depth_m=np.broadcast_to(np.asarray(depth, dtype=float), (n,)).copy(),
        line_run_in_m=np.broadcast_to(
            m.line_run_in_m if m.line_run_in_m is not None else 2.0 * np.asarray(los.lookahead_m, dtype=float), (n,)
        ),
    )  # fmt: skip


def truth_nav(t_s: float, eta: FloatArray, nu: FloatArray) -> NavState:
    """The truth navigator: the true state as the navigation solution."""
    psi = eta[:, 2]
    u, v = nu[:, 0], nu[:, 1]
    c, s = np.cos(psi), np.sin(psi)
    vn, ve = c * u - s * v, s * u + c * v
    return NavState(
        t_s=t_s, north_m=eta[:, 0], east_m=eta[:, 1], heading_rad=psi, surge_mps=u, sway_mps=v,
        yaw_rate_rad_s=nu[:, 2], course_rad=np.arctan2(ve, vn), sog_mps=np.hypot(vn, ve),
    )  # fmt: skip
