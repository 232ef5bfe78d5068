"""The versioned spec schema: frozen tables and their validation.

A spec file (TOML) has ``spec_version = 1`` and these tables:

``[scenario]`` (required)
    ``name``, ``duration_s``, ``dt_s`` (``dt_s`` divides ``duration_s``) and
    ``[scenario.origin]`` with ``lat_deg``, ``lon_deg``, optional ``h_m``
    (a :class:`~wavebench.core.geodesy.GeodeticOrigin`).
``[craft]`` (required)
    ``demo`` = one of :data:`~wavebench.craft.catalogue.DEMO_CRAFT_NAMES`, or
    an inline craft (:class:`~wavebench.spec.tables.CraftSpec`).
``[sea]`` (optional)
    ``kind``, ``hs_m``, ``tp_s``, optional ``gamma`` (a
    :class:`~wavebench.sea.spectra.SeaSpectrum`), ``n_components``,
    ``depth_m`` (``inf`` for deep water), and ``[sea.spreading]`` with
    ``kind``, ``exponent``, ``mean_dir_deg`` (a
    :class:`~wavebench.sea.spreading.DirectionalSpreading`).
``[current]`` (optional)
    ``speed_mps``, ``set_deg`` (a :class:`~wavebench.sea.current.UniformCurrentParams`)
    and optional ``[current.variation]`` (a
    :class:`~wavebench.sea.current.CurrentVariationParams`).
``[wind]`` (optional)
    ``speed_mps``, ``direction_from_deg``, ``height_m``, ``gust_spectrum``,
    ``n_components``, ``f_min_hz``, ``f_max_hz`` (a
    :class:`~wavebench.sea.wind.WindParams`).
``[seabed]`` (optional)
    A flat bottom or the invented synthetic bay (:class:`~wavebench.spec.tables.SeabedSpec`).
``[mission]`` (required)
    Waypoints or a survey pattern, the speed schedule and the start
    (:class:`~wavebench.spec.tables.MissionSpec`).
``[stack]`` (optional)
    Navigator, ``[stack.guide]``, ``[stack.pilot]`` and, for the terrain
    navigator, ``[stack.terrain]`` (:class:`~wavebench.spec.tables.StackSpec`).
``[sensors.<name>]`` (optional, any number, one per kind)
    Kind, rate, latency, error model, outages and dropouts
    (:class:`~wavebench.spec.sensors.SensorSpec`); the navigator's needs are
    checked against them (:data:`~wavebench.spec.sensors.NAVIGATOR_NEEDS`).
``[requirements.<name>]`` (optional, any number)
    A metric threshold and the probability of meeting it
    (:class:`~wavebench.spec.tables.RequirementSpec`).
``[campaign]`` (required)
    ``trials`` (>= 1), ``seed`` (>= 0), ``design`` (monte_carlo,
    latin_hypercube or sobol), ``executor`` (inline, processes or dask),
    ``batch_size``, ``record_interval_s``.

Numeric fields marked distributable (the per-trial fields of sea, current,
wind, the mission's speed, start and running depth, the guide's lookahead
and gain) may hold a distribution (:mod:`wavebench.spec.distributions`);
sensor error models and filter settings are single numbers. The bounds of
every numeric field are those of the target parameter class's ``bounded``
metadata, so the spec and the block agree; a distribution whose support
breaks the bound is rejected.

Each table class validates on construction (also when built in Python) and
raises :class:`~wavebench.core.errors.ParameterError` naming the field; the
loader (:func:`spec_from_data`) prefixes the TOML path.
"""

from __future__ import annotations

import dataclasses
import difflib
import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

from ..core.errors import ParameterError
from ..core.geodesy import GeodeticOrigin
from ..core.params import Bounds, Params, params_to_dict
from ..sea.current import CurrentVariationParams, UniformCurrentParams
from ..sea.spectra import JONSWAP_GAMMA_RANGE, SeaSpectrum
from ..sea.spreading import DirectionalSpreading
from ..sea.wind import GUST_SPECTRA, WindParams
from .distributions import distribution_to_data, parse_distribution
from .fields import (
    DIST_TYPES,
    SpecTable,
    build_quietly,
    like,
    named_tables,
    number,
    params_tree_from_data,
    params_tree_to_data,
    table,
    text,
)
from .sensors import SensorSpec, check_navigator_needs
from .tables import (
    CampaignSpec,
    CraftSpec,
    GuideSpec,
    MissionSpec,
    PilotSpec,
    RequirementSpec,
    SeabedSpec,
    StackSpec,
)

__all__ = [
    "SPEC_VERSION",
    "CampaignSpec",
    "CraftSpec",
    "CurrentSpec",
    "CurrentVariationSpec",
    "GuideSpec",
    "MissionSpec",
    "PilotSpec",
    "RequirementSpec",
    "ScenarioSpec",
    "SeaSpec",
    "SeabedSpec",
    "Spec",
    "SpreadingSpec",
    "StackSpec",
    "WindSpec",
    "distributed_fields",
    "spec_from_data",
    "spec_to_data",
]

#: The schema version this module reads and writes.
SPEC_VERSION = 1

_MISSING = dataclasses.MISSING

#: Most steps a duration or period may hold: below 2**53 every whole number is
#: a float64 (IEEE 754 binary64 has a 53-bit significand), so "a whole number
#: of steps" can still be told from "not quite"; beyond it the test means nothing.
MAX_STEPS = 2**53


def whole_steps(value: float, step: float) -> int | None:
    """``value / step`` as a whole number (to a relative 1e-9), or None.

    None when the quotient is not within 1e-9 (relative) of a whole number,
    is not finite (an overflow or a division by an underflowed step) or
    exceeds :data:`MAX_STEPS`; no exception and no warning for extreme
    but finite inputs.

    Examples
    --------
    >>> whole_steps(10.0, 0.1), whole_steps(1.0, 0.3), whole_steps(1e308, 1e-2)
    (100, None, None)
    """
    if step == 0.0:
        return None
    k = value / step  # Python floats: an overflow gives inf, no exception
    if not math.isfinite(k) or abs(k) > MAX_STEPS:
        return None
    n = round(k)
    if abs(k - n) > 1e-9 * max(abs(k), 1.0):
        return None
    return n


# ---------------------------------------------------------------------------
# tables
# ---------------------------------------------------------------------------


@dataclass(frozen=True, kw_only=True)
class ScenarioSpec(SpecTable):
    """``[scenario]``: where and how long.

    Parameters
    ----------
    name : str
        Scenario name.
    origin : GeodeticOrigin
        Geodetic origin of the NED world frame (``[scenario.origin]``).
    duration_s : float
        Simulated time [s], > 0.
    dt_s : float
        Time step [s], > 0, dividing ``duration_s`` into a whole number of
        steps (to a relative 1e-9).
    """

    name: str = text(doc="scenario name")
    origin: GeodeticOrigin = table(GeodeticOrigin, doc="geodetic origin of the NED frame")
    duration_s: float = number(bounds=Bounds(gt=0.0), unit="s", doc="simulated time")
    dt_s: float = number(bounds=Bounds(gt=0.0), unit="s", doc="time step")

    def _check(self) -> None:
        steps = self.duration_s / self.dt_s  # Python floats: an overflow gives inf, no exception
        if not steps <= MAX_STEPS:
            raise ParameterError("duration_s", self.duration_s,
                                 f"must be at most {MAX_STEPS} time steps of dt_s = {self.dt_s!r} "
                                 f"(this is {steps:.4g} steps)")  # fmt: skip
        n = whole_steps(self.duration_s, self.dt_s)
        if n is None or n < 1:
            raise ParameterError(
                "dt_s", self.dt_s, f"must divide duration_s = {self.duration_s!r} into a whole number of steps"
            )

    @property
    def n_steps(self) -> int:
        """Number of time steps, ``duration_s / dt_s``."""
        return round(self.duration_s / self.dt_s)


@dataclass(frozen=True, kw_only=True)
class SpreadingSpec(SpecTable):
    """``[sea.spreading]``: maps onto :class:`DirectionalSpreading`."""

    kind: str = text("cos2s", choices=("cos2s", "cosn", "long_crested"), doc="spreading function")
    exponent: Any = like(DirectionalSpreading, "exponent")
    mean_dir_deg: Any = like(DirectionalSpreading, "mean_dir_deg")

    def _check(self) -> None:
        build_quietly(DirectionalSpreading, kind=self.kind, exponent=self.exponent, mean_dir_deg=self.mean_dir_deg)


_GAMMA_BOUNDS = Bounds(ge=JONSWAP_GAMMA_RANGE[0], le=JONSWAP_GAMMA_RANGE[1])
_DEPTH_BOUNDS = Bounds(gt=0.0, finite=False)


@dataclass(frozen=True, kw_only=True)
class SeaSpec(SpecTable):
    """``[sea]``: wave spectrum, spreading and realisation size.

    ``kind``, ``hs_m``, ``tp_s`` and ``gamma`` map onto :class:`SeaSpectrum`
    (``gamma`` absent = the DNV rule); ``n_components`` and ``depth_m``
    are the arguments of :func:`~wavebench.sea.realisation.realise_sea`
    (``depth_m = inf`` for deep water).
    """

    kind: str = text("jonswap", choices=("jonswap", "pierson_moskowitz"), doc="spectral form")
    hs_m: Any = like(SeaSpectrum, "hs_m")
    tp_s: Any = like(SeaSpectrum, "tp_s")
    gamma: Any = number(None, bounds=_GAMMA_BOUNDS, doc="JONSWAP peak enhancement; absent for the DNV rule", dist=True)
    n_components: int = number(100, bounds=Bounds(ge=1, integer=True), doc="number of regular wave components")
    depth_m: Any = number(math.inf, bounds=_DEPTH_BOUNDS, unit="m", doc="water depth, inf for deep water", dist=True)
    spreading: SpreadingSpec = table(SpreadingSpec, None, doc="directional spreading")

    def __post_init__(self) -> None:
        if self.spreading is None:
            object.__setattr__(self, "spreading", SpreadingSpec())
        super().__post_init__()

    def _check(self) -> None:
        if self.kind == "pierson_moskowitz" and isinstance(self.gamma, DIST_TYPES):
            raise ParameterError(
                "gamma", distribution_to_data(self.gamma), "must be absent (or 1) for kind 'pierson_moskowitz'"
            )
        build_quietly(SeaSpectrum, kind=self.kind, hs_m=self.hs_m, tp_s=self.tp_s, gamma=self.gamma)


@dataclass(frozen=True, kw_only=True)
class CurrentVariationSpec(SpecTable):
    """``[current.variation]``: maps onto :class:`CurrentVariationParams`."""

    speed_sigma_mps: Any = like(CurrentVariationParams, "speed_sigma_mps")
    speed_tc_s: Any = like(CurrentVariationParams, "speed_tc_s")
    set_sigma_deg: Any = like(CurrentVariationParams, "set_sigma_deg")
    set_tc_s: Any = like(CurrentVariationParams, "set_tc_s")


@dataclass(frozen=True, kw_only=True)
class CurrentSpec(SpecTable):
    """``[current]``: maps onto :class:`UniformCurrentParams` (+ optional variation)."""

    speed_mps: Any = like(UniformCurrentParams, "speed_mps")
    set_deg: Any = like(UniformCurrentParams, "set_deg")
    variation: CurrentVariationSpec | None = table(CurrentVariationSpec, None, doc="slow variation")


@dataclass(frozen=True, kw_only=True)
class WindSpec(SpecTable):
    """``[wind]``: maps onto :class:`WindParams`."""

    speed_mps: Any = like(WindParams, "speed_mps")
    direction_from_deg: Any = like(WindParams, "direction_from_deg")
    height_m: Any = like(WindParams, "height_m")
    gust_spectrum: str = text("npd", choices=GUST_SPECTRA, doc="gust spectrum")
    n_components: int = like(WindParams, "n_components", dist=False)
    f_min_hz: float = like(WindParams, "f_min_hz", dist=False)
    f_max_hz: float = like(WindParams, "f_max_hz", dist=False)

    def _check(self) -> None:
        build_quietly(
            WindParams,
            **{f.name: getattr(self, f.name) for f in dataclasses.fields(self)},
        )


@dataclass(frozen=True, kw_only=True)
class Spec(SpecTable):
    """A whole spec, schema version :data:`SPEC_VERSION`.

    Build it with :func:`~wavebench.spec.io.load_spec` or
    :func:`spec_from_data`; every table is frozen and validated.
    """

    spec_version: int = number(SPEC_VERSION, bounds=Bounds(ge=SPEC_VERSION, le=SPEC_VERSION, integer=True),
                               doc="schema version")  # fmt: skip
    scenario: ScenarioSpec = table(ScenarioSpec)
    craft: CraftSpec = table(CraftSpec)
    sea: SeaSpec | None = table(SeaSpec, None)
    current: CurrentSpec | None = table(CurrentSpec, None)
    wind: WindSpec | None = table(WindSpec, None)
    seabed: SeabedSpec | None = table(SeabedSpec, None)
    mission: MissionSpec = table(MissionSpec)
    stack: StackSpec = table(StackSpec, None)
    sensors: tuple = named_tables(SensorSpec, doc="sensors by name")
    requirements: tuple = named_tables(RequirementSpec, doc="requirements by name")
    campaign: CampaignSpec = table(CampaignSpec)

    def __post_init__(self) -> None:
        if self.stack is None:
            object.__setattr__(self, "stack", StackSpec())
        super().__post_init__()

    def _check(self) -> None:
        dt = self.scenario.dt_s
        for path, value in (
            ("stack.pilot.control_period_s", self.stack.pilot.control_period_s),
            ("campaign.record_interval_s", self.campaign.record_interval_s),
        ):
            if value is None:
                continue
            k = whole_steps(value, dt)
            if k is None or k < 1:
                raise ParameterError(path, value, f"must be a whole number (>= 1) of time steps dt_s = {dt!r}")
            if value > self.scenario.duration_s:
                raise ParameterError(path, value, f"must be at most duration_s = {self.scenario.duration_s!r}")
        self._check_sensors()
        self._check_running_depth()

    def _check_sensors(self) -> None:
        """One sensor per kind; rate and latency in whole control periods; the navigator's needs."""
        period = self.control_steps * self.scenario.dt_s
        first_of_kind: dict[str, str] = {}
        for name, sensor in self.sensors:
            if sensor.kind in first_of_kind:
                raise ParameterError(f"sensors.{name}.kind", sensor.kind,
                                     f"one sensor per kind in this version: sensors '{first_of_kind[sensor.kind]}' "
                                     f"and '{name}' are both of kind '{sensor.kind}'")  # fmt: skip
            first_of_kind[sensor.kind] = name
            if sensor.kind in ("imu", "depth") and sensor.latency_s != 0.0:
                raise ParameterError(f"sensors.{name}.latency_s", sensor.latency_s,
                                     f"must be 0 for kind '{sensor.kind}' in this version (its latency is not "
                                     "modelled)")  # fmt: skip
            k = whole_steps(1.0 / sensor.rate_hz, period)  # rate_hz > 0; 1 / tiny overflows to inf
            if k is None or k < 1:
                raise ParameterError(f"sensors.{name}.rate_hz", sensor.rate_hz,
                                     f"must give a period that is a whole number (>= 1) of control periods "
                                     f"({period!r} s)")  # fmt: skip
            if whole_steps(sensor.latency_s, period) is None:
                raise ParameterError(f"sensors.{name}.latency_s", sensor.latency_s,
                                     f"must be a whole number (>= 0) of control periods ({period!r} s): "
                                     f"0, {period!r}, {2 * period!r}, ...")  # fmt: skip
        check_navigator_needs(self.stack.navigator, self.sensors)
        if self.stack.navigator == "terrain" and self.seabed is None:
            raise ParameterError("stack.navigator", "terrain", "needs a [seabed] to match the altimeter readings to")

    def _check_running_depth(self) -> None:
        """The running depth stays above a flat seabed (over its whole support when distributed)."""
        depth = self.mission.running_depth_m
        if self.seabed is None or self.seabed.kind != "flat":
            return
        deepest = depth.support()[1] if isinstance(depth, DIST_TYPES) else depth
        if deepest >= self.seabed.depth_m:
            raise ParameterError(
                "mission.running_depth_m", distribution_to_data(depth) if isinstance(depth, DIST_TYPES) else depth,
                f"must stay less than the flat seabed's depth_m = {self.seabed.depth_m!r}",
            )  # fmt: skip

    @property
    def control_steps(self) -> int:
        """Time steps per autopilot period."""
        period = self.stack.pilot.control_period_s or self.scenario.dt_s
        return round(period / self.scenario.dt_s)

    @property
    def record_steps(self) -> int:
        """Time steps per recorded sample."""
        return round(self.campaign.record_interval_s / self.scenario.dt_s)

    def requirement(self, name: str) -> RequirementSpec:
        """The requirement called ``name``."""
        for key, req in self.requirements:
            if key == name:
                return req
        raise ParameterError("requirements", name, f"must be one of {[k for k, _ in self.requirements]}")


# ---------------------------------------------------------------------------
# plain data <-> spec
# ---------------------------------------------------------------------------


def _is_required(f: dataclasses.Field) -> bool:
    return f.default is _MISSING and f.default_factory is _MISSING


def _from_data(cls: type, data: Any, path: str) -> Any:
    if not isinstance(data, Mapping):
        raise ParameterError(path, data, "must be a table")
    if issubclass(cls, Params):
        # the same loader as every other parameter table: single values only (no arrays)
        return params_tree_from_data(cls, data, path)
    fields = {f.name: f for f in dataclasses.fields(cls) if f.init}
    prefix = f"{path}." if path else ""
    for key in data:
        if key not in fields:
            close = difflib.get_close_matches(key, list(fields), n=1)
            raise ParameterError(
                f"{prefix}{key}", data[key], f"unknown key; allowed keys are {sorted(fields)}",
                f"did you mean '{close[0]}'?" if close else "",
            )  # fmt: skip
    for name, f in fields.items():
        if _is_required(f) and name not in data:
            raise ParameterError(f"{prefix}{name}", None, "is required but missing")
    kwargs: dict[str, Any] = {}
    for key, value in data.items():
        f = fields[key]
        meta = f.metadata
        if "table" in meta:
            kwargs[key] = _from_data(meta["table"], value, f"{prefix}{key}")
        elif "params" in meta:
            kwargs[key] = params_tree_from_data(meta["params"], value, f"{prefix}{key}")
        elif "named_tables" in meta:
            if not isinstance(value, Mapping):
                raise ParameterError(f"{prefix}{key}", value, "must be a table of named tables")
            kwargs[key] = tuple(
                (name, _from_data(meta["named_tables"], sub, f"{prefix}{key}.{name}")) for name, sub in value.items()
            )
        elif "bounds" in meta and isinstance(value, Mapping):
            if not meta["dist"]:
                raise ParameterError(f"{prefix}{key}", dict(value), "must be a number (no distribution allowed here)")
            kwargs[key] = parse_distribution(value, f"{prefix}{key}")
        elif "bounds" in meta and isinstance(value, list):
            raise ParameterError(f"{prefix}{key}", value, "must be a number, not an array")
        else:
            kwargs[key] = value
    try:
        return cls(**kwargs)
    except ParameterError as exc:
        if path and not exc.field.startswith(prefix):
            raise exc.with_prefix(path) from None
        raise


def spec_from_data(data: Mapping[str, Any]) -> Spec:
    """Validate a parsed TOML document into a :class:`Spec`.

    Parameters
    ----------
    data : Mapping
        The document as plain data (``tomllib.loads`` output).

    Returns
    -------
    Spec

    Raises
    ------
    ParameterError
        Naming the TOML path of the first offending field: unknown keys
        (with the nearest valid key), missing required keys, wrong types,
        out-of-range values, bad distribution parameters and distributions
        whose support breaks the field's bound.
    """
    if not isinstance(data, Mapping):
        raise ParameterError("spec", data, "must be a TOML document (a table)")
    if "spec_version" not in data:
        raise ParameterError("spec_version", None, f"is required but missing (this wavebench reads {SPEC_VERSION})")
    return _from_data(Spec, data, "")


def spec_to_data(obj: Any) -> dict[str, Any]:
    """Plain data of a spec (or one table): the TOML document as dicts.

    Absent optional values (``None``) and empty requirement tables are left
    out; distributions become their inline-table form; point lists become
    lists of pairs; fields keep their declaration order.
    """
    out: dict[str, Any] = {}
    for f in dataclasses.fields(obj):
        value = getattr(obj, f.name)
        if value is None:
            continue
        if isinstance(value, DIST_TYPES):
            out[f.name] = distribution_to_data(value)
        elif "named_tables" in f.metadata:
            if value:
                out[f.name] = {name: spec_to_data(sub) for name, sub in value}
        elif "params" in f.metadata:
            out[f.name] = params_tree_to_data(value)
        elif isinstance(value, Params):
            out[f.name] = params_to_dict(value)
        elif isinstance(value, SpecTable):
            out[f.name] = spec_to_data(value)
        elif isinstance(value, tuple):
            out[f.name] = [list(v) if isinstance(v, tuple) else v for v in value]
        else:
            out[f.name] = value
    return out


def distributed_fields(spec: Spec) -> dict[str, Any]:
    """Every field holding a distribution, by dotted TOML path, in document order.

    Examples
    --------
    >>> from wavebench.spec.io import example_spec_path, load_spec
    >>> spec = load_spec(example_spec_path("skerrow_sound"))
    >>> sorted(distributed_fields(spec))[:2]
    ['current.set_deg', 'current.speed_mps']
    """
    found: dict[str, Any] = {}

    def walk(obj: Any, prefix: str) -> None:
        for f in dataclasses.fields(obj):
            value = getattr(obj, f.name)
            if isinstance(value, DIST_TYPES):
                found[f"{prefix}{f.name}"] = value
            elif isinstance(value, SpecTable):
                walk(value, f"{prefix}{f.name}.")

    walk(spec, "")
    return found
