"""Spec tables for the craft, the seabed, the mission, the stack, the requirements and the campaign.

See :mod:`wavebench.spec.schema` for the whole document. Values left
absent (``None``) where a default depends on the craft (lookahead,
acceptance radius, autopilot bandwidths) are derived when the trial is
built (:mod:`wavebench.trial.setup`), and the derivation is documented there.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

from ..analysis.metric_names import METRICS, numeric_metric_names
from ..core.errors import ParameterError
from ..core.params import Bounds
from ..craft.actuators import DifferentialThrustParams, PropRudderParams
from ..craft.catalogue import DEMO_CRAFT_NAMES, CraftParams, demo_craft
from ..craft.hull import HullParams
from ..guidance.survey import SurveyParams, check_convex_polygon, survey_waypoints
from ..sea.seabed import SyntheticBayParams
from .designs import DESIGNS
from .fields import SpecTable, number, numbers, params, points, representative, table, text, texts
from .sensors import NAVIGATORS

__all__ = [
    "EXECUTORS",
    "MAX_SURVEY_LINES",
    "CampaignSpec",
    "CraftSpec",
    "GuideSpec",
    "MissionSpec",
    "PilotSpec",
    "RequirementSpec",
    "SeabedSpec",
    "StackSpec",
    "TerrainSpec",
]

_POS = Bounds(gt=0.0)
#: Signals the recorder can keep (mirrors wavebench.trial.recorder.SIGNALS, checked by a test).
SIGNAL_NAMES = (
    "north_m", "east_m", "heading_deg", "surge_mps", "sway_mps", "yaw_rate_dps",
    "xte_m", "heading_cmd_deg", "speed_cmd_mps", "power_w",
    "nav_north_m", "nav_east_m", "nav_err_m", "nees", "nis", "fix_ok", "nav_drms_m",
    "act_surge_n", "act_yaw_nm",
)  # fmt: skip
_ANGLE = Bounds(ge=-360.0, le=360.0)
_ANY = Bounds()

#: Campaign executors this version provides (see wavebench.campaign.executors).
EXECUTORS = ("inline", "processes", "dask")


@dataclass(frozen=True, kw_only=True)
class CraftSpec(SpecTable):
    """``[craft]``: a built-in demo craft, or one written inline.

    Either ``demo = "<name>"`` (one of ``DEMO_CRAFT_NAMES``) alone, or
    ``name``, ``[craft.hull]`` (every :class:`~wavebench.craft.hull.HullParams`
    field) and exactly one propulsion table: ``[craft.differential_thrust]``
    (with ``[craft.differential_thrust.port]`` and ``.starboard`` thrusters)
    or ``[craft.prop_rudder]`` (with ``[craft.prop_rudder.propeller]``).
    ``wavebench example --craft NAME`` prints a demo craft in this form.
    """

    demo: str | None = text(None, choices=DEMO_CRAFT_NAMES, doc="built-in demo craft")
    name: str | None = text(None, doc="display name of an inline craft")
    hull: HullParams | None = params(HullParams, None, doc="hull of an inline craft")
    differential_thrust: DifferentialThrustParams | None = params(DifferentialThrustParams, None,
                                                                  doc="twin thrusters")  # fmt: skip
    prop_rudder: PropRudderParams | None = params(PropRudderParams, None, doc="propeller and rudder")

    def _check(self) -> None:
        inline = {k: getattr(self, k) for k in ("name", "hull", "differential_thrust", "prop_rudder")}
        given = [k for k, v in inline.items() if v is not None]
        if self.demo is not None:
            if given:
                raise ParameterError(given[0], "(given)", "must be absent when 'demo' names a built-in craft")
            return
        if not given:
            raise ParameterError("demo", None, f"is required (one of {list(DEMO_CRAFT_NAMES)}) unless the craft is "
                                 "written inline with name, [craft.hull] and a propulsion table")  # fmt: skip
        for key in ("name", "hull"):
            if inline[key] is None:
                raise ParameterError(key, None, "is required for an inline craft")
        n_prop = (self.differential_thrust is not None) + (self.prop_rudder is not None)
        if n_prop != 1:
            raise ParameterError(
                "differential_thrust", "(both)" if n_prop == 2 else None,
                "an inline craft needs exactly one of [craft.differential_thrust] or [craft.prop_rudder]",
            )  # fmt: skip
        self.build()

    def build(self) -> CraftParams:
        """The craft's parameters: the demo craft, or the inline one."""
        if self.demo is not None:
            return demo_craft(self.demo)
        return CraftParams(name=self.name, hull=self.hull, propulsion=self.differential_thrust or self.prop_rudder)


@dataclass(frozen=True, kw_only=True)
class SeabedSpec(SpecTable):
    """``[seabed]``: the bottom under the mission area.

    ``kind = "flat"`` with ``depth_m``; or ``kind = "synthetic_bay"``: the
    invented demo terrain of :func:`~wavebench.sea.seabed.synthetic_bay`,
    parameters in ``[seabed.bay]`` (defaults if absent), its layout drawn
    from ``layout_seed`` (one bay per campaign), the grid's south-west corner
    placed at ``corner_north_m``, ``corner_east_m`` in the NED frame.
    """

    kind: str = text(choices=("flat", "synthetic_bay"), doc="seabed model")
    depth_m: float | None = number(None, bounds=_POS, unit="m", doc="depth of a flat seabed")
    bay: SyntheticBayParams | None = params(SyntheticBayParams, None, doc="synthetic bay parameters")
    layout_seed: int = number(0, bounds=Bounds(ge=0, integer=True), doc="seed of the bay layout")
    corner_north_m: float = number(0.0, bounds=_ANY, unit="m", doc="north of the grid's south-west corner")
    corner_east_m: float = number(0.0, bounds=_ANY, unit="m", doc="east of the grid's south-west corner")

    def _check(self) -> None:
        if self.kind == "flat" and self.depth_m is None:
            raise ParameterError("depth_m", None, "is required for kind 'flat'")
        if self.kind == "synthetic_bay":
            if self.depth_m is not None:
                raise ParameterError("depth_m", self.depth_m, "must be absent for kind 'synthetic_bay'")
            if self.bay is None:
                object.__setattr__(self, "bay", SyntheticBayParams())
        elif self.bay is not None:
            raise ParameterError("bay", "(given)", "is only for kind 'synthetic_bay'")


#: Most survey lines a ``kind = "survey"`` mission may have (a sanity limit,
#: common practice, no source: it keeps a typo in ``line_spacing_m`` from
#: building an enormous waypoint list when the spec is loaded).
MAX_SURVEY_LINES = 100_000


def _survey_line_count(polygon: tuple, spacing_m: float, heading_deg: float) -> float:
    """Number of survey lines the polygon's width across the lines holds (inf if it overflows)."""
    h = math.radians(heading_deg)
    across = [-n * math.sin(h) + e * math.cos(h) for n, e in polygon]  # Python floats: overflow gives inf
    if not all(math.isfinite(a) for a in across):
        return math.inf
    lines = (max(across) - min(across)) / spacing_m
    return lines if math.isfinite(lines) else math.inf


@dataclass(frozen=True, kw_only=True)
class MissionSpec(SpecTable):
    """``[mission]``: the path to follow and the speed schedule.

    ``kind = "waypoints"`` with ``waypoints_ne_m`` (at least two
    ``[north_m, east_m]`` pairs), or ``kind = "survey"`` with
    ``polygon_ne_m`` (a convex polygon), ``line_spacing_m`` and
    ``line_heading_deg`` (parallel lines, :func:`~wavebench.guidance.survey.survey_waypoints`;
    at most :data:`MAX_SURVEY_LINES` lines).
    Positions are metres in the scenario's NED frame.

    ``speed_mps`` is the ordered speed through the water (a distribution
    allowed); ``leg_speeds_mps`` optionally gives one speed per leg instead
    (the speed schedule). The craft starts at ``start_north_m``,
    ``start_east_m`` (default the first waypoint) heading
    ``start_heading_deg`` (default along the first leg) at the first leg's
    speed; all three may be distributions. A trial whose absolute
    cross-track error exceeds ``abort_cross_track_m`` is failed ("left the
    corridor"). The on-line cross-track metrics count a line once the craft
    is ``line_run_in_m`` along it (default two lookahead distances).

    ``running_depth_m`` (>= 0, default 0 for a surface craft; a distribution
    allowed) is the depth below the surface [m] the craft runs at. The craft
    is a horizontal-plane model: this depth is held exactly (no heave,
    pitch or depth control), and it places the depth sensor's, the DVL's
    and the altimeter's readings. Above a flat seabed it must be less than
    the seabed's ``depth_m``.
    """

    kind: str = text(choices=("waypoints", "survey"), doc="mission kind")
    waypoints_ne_m: tuple | None = points(None, min_len=2, doc="waypoints [north_m, east_m]")
    polygon_ne_m: tuple | None = points(None, min_len=3, doc="survey polygon [north_m, east_m]")
    line_spacing_m: float | None = number(None, bounds=_POS, unit="m", doc="survey line spacing")
    line_heading_deg: float | None = number(None, bounds=_ANGLE, unit="deg", doc="survey line direction")
    speed_mps: Any = number(bounds=_POS, unit="m/s", doc="ordered speed", dist=True)
    leg_speeds_mps: tuple | None = numbers(None, bounds=_POS, unit="m/s", doc="speed of each leg")
    start_north_m: Any = number(None, bounds=_ANY, unit="m", doc="start position north", dist=True)
    start_east_m: Any = number(None, bounds=_ANY, unit="m", doc="start position east", dist=True)
    start_heading_deg: Any = number(None, bounds=_ANGLE, unit="deg", doc="start heading", dist=True)
    abort_cross_track_m: float | None = number(None, bounds=_POS, unit="m", doc="corridor half-width")
    line_run_in_m: float | None = number(None, bounds=Bounds(ge=0.0), unit="m", doc="run-in before on-line metrics")
    running_depth_m: Any = number(0.0, bounds=Bounds(ge=0.0), unit="m", doc="depth held below the surface", dist=True)

    def _check(self) -> None:
        if self.kind == "waypoints":
            if self.waypoints_ne_m is None:
                raise ParameterError("waypoints_ne_m", None, "is required for kind 'waypoints'")
            for key in ("polygon_ne_m", "line_spacing_m", "line_heading_deg"):
                if getattr(self, key) is not None:
                    raise ParameterError(key, getattr(self, key), "is only for kind 'survey'")
        else:
            for key in ("polygon_ne_m", "line_spacing_m", "line_heading_deg"):
                if getattr(self, key) is None:
                    raise ParameterError(key, None, "is required for kind 'survey'")
            if self.waypoints_ne_m is not None:
                raise ParameterError("waypoints_ne_m", "(given)", "is only for kind 'waypoints'")
            try:
                check_convex_polygon(self.polygon_ne_m)
            except ParameterError as exc:
                raise ParameterError("polygon_ne_m", list(self.polygon_ne_m), exc.allowed) from None
            n_lines = _survey_line_count(self.polygon_ne_m, self.line_spacing_m, self.line_heading_deg)
            if not n_lines <= MAX_SURVEY_LINES:
                raise ParameterError("line_spacing_m", self.line_spacing_m,
                                     f"gives {n_lines:.4g} survey lines across the polygon; at most "
                                     f"{MAX_SURVEY_LINES} allowed (widen the spacing)")  # fmt: skip
        wp = self.waypoints()
        for i in range(len(wp) - 1):
            if math.dist(wp[i], wp[i + 1]) == 0.0:
                raise ParameterError(
                    "waypoints_ne_m", [list(p) for p in wp], f"waypoints {i} and {i + 1} coincide (a leg of length 0)"
                )
        if self.leg_speeds_mps is not None and len(self.leg_speeds_mps) != len(wp) - 1:
            raise ParameterError("leg_speeds_mps", list(self.leg_speeds_mps),
                                 f"must give one speed per leg: {len(wp) - 1} values")  # fmt: skip

    def waypoints(self) -> tuple[tuple[float, float], ...]:
        """The mission's waypoints [m] (the survey pattern expanded)."""
        if self.kind == "waypoints":
            return self.waypoints_ne_m
        sp = SurveyParams(line_spacing_m=self.line_spacing_m, line_heading_deg=self.line_heading_deg)
        return tuple((float(n), float(e)) for n, e in survey_waypoints(self.polygon_ne_m, sp))


@dataclass(frozen=True, kw_only=True)
class GuideSpec(SpecTable):
    """``[stack.guide]``: lookahead-based LOS (``kind = "los"``) or integral LOS (``"ilos"``).

    Absent values are derived from the craft when the trial is built:
    ``lookahead_m`` 2.5 hull lengths, ``acceptance_radius_m`` 2 hull lengths
    (common practice, no source), ``integral_gain`` (ILOS only) 0.3 m/s.
    ``switching = "circle"`` switches legs inside the circle of acceptance
    only; ``"circle_or_passed"`` (default) also once the craft has passed the
    waypoint, so a craft that misses the circle does not follow the leg's
    extension for ever.
    """

    kind: str = text("los", choices=("los", "ilos"), doc="guidance law")
    lookahead_m: Any = number(None, bounds=_POS, unit="m", doc="lookahead distance", dist=True)
    acceptance_radius_m: float | None = number(None, bounds=_POS, unit="m", doc="circle of acceptance")
    integral_gain: Any = number(None, bounds=Bounds(ge=0.0), unit="m/s", doc="ILOS integral gain", dist=True)
    switching: str = text("circle_or_passed", choices=("circle", "circle_or_passed"), doc="waypoint switching rule")

    def _check(self) -> None:
        if self.kind == "los" and self.integral_gain is not None and representative(self.integral_gain) != 0.0:
            raise ParameterError("integral_gain", self.integral_gain, "must be absent for kind 'los' (use 'ilos')")


@dataclass(frozen=True, kw_only=True)
class PilotSpec(SpecTable):
    """``[stack.pilot]``: heading PID and speed PI, gains by pole placement.

    The heading loop is placed on a first-order Nomoto model identified from
    the craft's own step response at the mission speed; the speed loop on
    the surge equation. Absent bandwidths are derived when the trial is
    built (:func:`wavebench.trial.setup.pilot_for`). ``control_period_s``
    (default the scenario's ``dt_s``) must be a whole number of time steps.
    """

    kind: str = text("pid", choices=("pid",), doc="autopilot")
    control_period_s: float | None = number(None, bounds=_POS, unit="s", doc="autopilot period")
    heading_natural_frequency_rad_s: float | None = number(None, bounds=_POS, unit="rad/s", doc="heading w_n")
    heading_damping_ratio: float = number(1.0, bounds=_POS, doc="heading zeta")
    speed_natural_frequency_rad_s: float | None = number(None, bounds=_POS, unit="rad/s", doc="speed w_n")
    speed_damping_ratio: float = number(1.0, bounds=_POS, doc="speed zeta")
    reference_model: bool = True
    yaw_rate_max_deg_s: float | None = number(None, bounds=_POS, unit="deg/s", doc="reference yaw-rate limit")

    def _check(self) -> None:
        if not isinstance(self.reference_model, bool):
            raise ParameterError("reference_model", self.reference_model, "must be true or false")


@dataclass(frozen=True, kw_only=True)
class TerrainSpec(SpecTable):
    """``[stack.terrain]``: the particle filter of the terrain-aided navigator.

    Only with ``navigator = "terrain"`` (defaults when the table is absent).
    ``particles`` particles start as a normal cloud of standard deviation
    ``initial_sd_m`` (per horizontal axis) around the start position; each
    particle takes a random-walk step of standard deviation
    ``process_sd_m_per_sqrt_s * sqrt(dt)`` per axis at every prediction of
    ``dt`` seconds; the cloud is resampled (systematic resampling) when the
    effective sample size ``1 / sum(w_i^2)`` falls below ``resample_below``
    times the number of particles.
    """

    particles: int = number(500, bounds=Bounds(ge=50, le=100_000, integer=True), doc="number of particles")
    initial_sd_m: float = number(20.0, bounds=_POS, unit="m", doc="sd of the initial cloud around the start")
    process_sd_m_per_sqrt_s: float = number(0.5, bounds=Bounds(ge=0.0), unit="m/sqrt(s)",
                                            doc="random-walk spread added to each particle")  # fmt: skip
    resample_below: float = number(0.5, bounds=Bounds(gt=0.0, le=1.0),
                                   doc="effective-sample-size fraction that triggers resampling")  # fmt: skip


@dataclass(frozen=True, kw_only=True)
class StackSpec(SpecTable):
    """``[stack]``: which block fills each role.

    ``navigator`` is one of :data:`~wavebench.spec.sensors.NAVIGATORS`:
    ``"truth"`` (the true state), ``"ekf"`` (an extended Kalman filter with
    IMU-driven prediction and heading, GNSS or acoustic-range fixes),
    ``"dead_reckoning"`` (the same filter on IMU, heading and DVL, without
    position fixes) or ``"terrain"`` (a particle filter matching the
    altimeter and depth readings to the seabed, ``[stack.terrain]``); the
    sensor kinds each needs are :data:`~wavebench.spec.sensors.NAVIGATOR_NEEDS`.
    ``[stack.guide]`` and ``[stack.pilot]`` (defaults if absent).
    """

    navigator: str = text("truth", choices=NAVIGATORS, doc="navigator")
    guide: GuideSpec = table(GuideSpec, None)
    pilot: PilotSpec = table(PilotSpec, None)
    terrain: TerrainSpec | None = table(TerrainSpec, None, doc="terrain-aided navigator's particle filter")

    def __post_init__(self) -> None:
        if self.guide is None:
            object.__setattr__(self, "guide", GuideSpec())
        if self.pilot is None:
            object.__setattr__(self, "pilot", PilotSpec())
        if self.terrain is None and self.navigator == "terrain":
            object.__setattr__(self, "terrain", TerrainSpec())
        super().__post_init__()

    def _check(self) -> None:
        if self.terrain is not None and self.navigator != "terrain":
            raise ParameterError("terrain", "(given)", f'is only for navigator = "terrain", not "{self.navigator}"')


@dataclass(frozen=True, kw_only=True)
class RequirementSpec(SpecTable):
    """``[requirements.<name>]``: a metric must stay below (or above) a threshold with a probability.

    Exactly one of ``below`` and ``above``. ``probability`` in (0, 1) is the
    required fraction of trials meeting it; ``confidence`` the two-sided
    level of the Clopper–Pearson interval the verdict is drawn from.
    """

    metric: str = text(choices=numeric_metric_names(), doc="metric name")
    below: float | None = number(None, bounds=_ANY, doc="threshold the metric must stay below")
    above: float | None = number(None, bounds=_ANY, doc="threshold the metric must stay above")
    probability: float = number(bounds=Bounds(gt=0.0, lt=1.0), doc="required probability")
    confidence: float = number(0.95, bounds=Bounds(ge=0.5, lt=1.0), doc="confidence level of the verdict")

    def _check(self) -> None:
        if (self.below is None) == (self.above is None):
            raise ParameterError("below", self.below, "exactly one of 'below' and 'above' must be given")

    @property
    def comparator(self) -> str:
        """``"below"`` or ``"above"``."""
        return "below" if self.below is not None else "above"

    @property
    def threshold(self) -> float:
        """The threshold, in the metric's unit."""
        return float(self.below if self.below is not None else self.above)

    @property
    def unit(self) -> str:
        """The metric's unit."""
        return METRICS[self.metric].unit


@dataclass(frozen=True, kw_only=True)
class CampaignSpec(SpecTable):
    """``[campaign]``: trials, seed, sampling design, executor, batch size and recording interval.

    ``design`` says how the distributed fields are sampled over the
    trials: ``"monte_carlo"`` (default; each trial draws from its own
    streams), ``"latin_hypercube"`` or ``"sobol"`` (one space-filling design
    of ``trials`` points over the campaign, see
    :mod:`wavebench.spec.designs`).

    Results do not depend on ``batch_size`` or ``executor``: they only
    change how the work is cut up. ``record_interval_s`` (a whole number of
    time steps) decimates the recorded time series; metrics use every
    control period. ``record_signals`` chooses which signals are kept (all of
    :data:`~wavebench.trial.recorder.SIGNALS` by default).
    """

    trials: int = number(bounds=Bounds(ge=1, integer=True), doc="number of trials")
    seed: int = number(bounds=Bounds(ge=0, integer=True), doc="campaign seed (root of the SeedSequence)")
    design: str = text("monte_carlo", choices=DESIGNS, doc="how the distributed fields are sampled over the trials")
    executor: str = text("inline", choices=EXECUTORS, doc="how trials are run")
    batch_size: int = number(100, bounds=Bounds(ge=1, integer=True), doc="trials per vectorised batch")
    record_interval_s: float = number(1.0, bounds=_POS, unit="s", doc="time-series recording interval")
    record_signals: tuple = texts(SIGNAL_NAMES, choices=SIGNAL_NAMES, doc="signals to record")
