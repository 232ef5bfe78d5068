"""The versioned spec schema: frozen tables and their validation.

A spec file (TOML) has ``spec_version = 1`` and these tables:

``[scenario]`` (required)
    ``name``, ``duration_s``, ``dt_s`` (``dt_s`` divides ``duration_s``) and
    ``[scenario.origin]`` with ``lat_deg``, ``lon_deg``, optional ``h_m``
    (a :class:`~wavebench.core.geodesy.GeodeticOrigin`).
``[craft]`` (required)
    ``demo`` = one of :data:`~wavebench.craft.catalogue.DEMO_CRAFT_NAMES`.
    Inline craft parameters are not part of schema version 1 yet.
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
``[campaign]`` (required)
    ``trials`` (>= 1), ``seed`` (>= 0).

Numeric fields marked distributable (the per-trial fields of sea, current and
wind) may hold a distribution (:mod:`wavebench.spec.distributions`). The
bounds of every numeric field are those of the target parameter class's
``bounded`` metadata, so the spec and the block agree; a distribution whose
support breaks the bound is rejected.

Each table class validates on construction (also when built in Python) and
raises :class:`~wavebench.core.errors.ParameterError` naming the field; the
loader (:func:`spec_from_data`) prefixes the TOML path.
"""

from __future__ import annotations

import dataclasses
import difflib
import math
import warnings
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..core.errors import ParameterError, WavebenchWarning
from ..core.geodesy import GeodeticOrigin
from ..core.params import Bounds, Params, check_value, params_from_dict, params_to_dict
from ..craft.catalogue import DEMO_CRAFT_NAMES
from ..sea.current import CurrentVariationParams, UniformCurrentParams
from ..sea.spectra import JONSWAP_GAMMA_RANGE, SeaSpectrum
from ..sea.spreading import DirectionalSpreading
from ..sea.wind import GUST_SPECTRA, WindParams
from .distributions import (
    Choice,
    LogNormal,
    Normal,
    TruncatedNormal,
    Uniform,
    check_support,
    distribution_to_data,
    parse_distribution,
)

__all__ = [
    "SPEC_VERSION",
    "CampaignSpec",
    "CraftSpec",
    "CurrentSpec",
    "CurrentVariationSpec",
    "ScenarioSpec",
    "SeaSpec",
    "Spec",
    "SpreadingSpec",
    "WindSpec",
    "distributed_fields",
    "spec_from_data",
    "spec_to_data",
]

#: The schema version this module reads and writes.
SPEC_VERSION = 1

_DIST_TYPES = (Uniform, Normal, TruncatedNormal, LogNormal, Choice)
_MISSING = dataclasses.MISSING


# ---------------------------------------------------------------------------
# field declarations
# ---------------------------------------------------------------------------


def _like(cls: type[Params], name: str, default: Any = _MISSING, *, dist: bool = True) -> Any:
    """A numeric spec field with the bounds, unit and doc of ``cls.name``."""
    src = next(f for f in dataclasses.fields(cls) if f.name == name)
    if default is _MISSING and src.default is not _MISSING:
        default = src.default
    meta = {"bounds": src.metadata["bounds"], "unit": src.metadata.get("unit", ""),
            "doc": src.metadata.get("doc", ""), "dist": dist}
    if default is _MISSING:
        return dataclasses.field(metadata=meta)
    return dataclasses.field(default=default, metadata=meta)


def _num(default: Any = _MISSING, *, bounds: Bounds, unit: str = "", doc: str = "", dist: bool = False) -> Any:
    meta = {"bounds": bounds, "unit": unit, "doc": doc, "dist": dist}
    if default is _MISSING:
        return dataclasses.field(metadata=meta)
    return dataclasses.field(default=default, metadata=meta)


def _text(default: Any = _MISSING, *, choices: tuple[str, ...] | None = None, doc: str = "") -> Any:
    meta = {"text": True, "choices": choices, "doc": doc}
    if default is _MISSING:
        return dataclasses.field(metadata=meta)
    return dataclasses.field(default=default, metadata=meta)


def _table(cls: type, default: Any = _MISSING, *, doc: str = "") -> Any:
    meta = {"table": cls, "doc": doc}
    if default is _MISSING:
        return dataclasses.field(metadata=meta)
    return dataclasses.field(default=default, metadata=meta)


def _validate_fields(obj: Any) -> None:
    """Check and normalise every declared field of a spec table in place."""
    for f in dataclasses.fields(obj):
        value = getattr(obj, f.name)
        meta = f.metadata
        if "bounds" in meta:
            if value is None and f.default is None:
                continue
            if isinstance(value, _DIST_TYPES):
                if not meta["dist"]:
                    raise ParameterError(
                        f.name, distribution_to_data(value), "must be a number (no distribution allowed here)"
                    )
                check_support(f.name, value, meta["bounds"])
            elif isinstance(value, Mapping):
                raise ParameterError(
                    f.name, dict(value),
                    "must be a number" + (" or a distribution" if meta["dist"] else " (no distribution allowed here)"),
                )
            else:
                checked = check_value(f.name, value, meta["bounds"])
                if isinstance(checked, np.ndarray):
                    raise ParameterError(f.name, value, "must be a single number, not an array")
                object.__setattr__(obj, f.name, checked)
        elif meta.get("text"):
            if not isinstance(value, str):
                raise ParameterError(f.name, value, "must be a string")
            choices = meta.get("choices")
            if choices is not None and value not in choices:
                close = difflib.get_close_matches(value, list(choices), n=1)
                raise ParameterError(
                    f.name, value, f"must be one of {list(choices)}", f"did you mean '{close[0]}'?" if close else ""
                )
        elif "table" in meta:
            if value is None and f.default is None:
                continue
            if not isinstance(value, meta["table"]):
                raise ParameterError(f.name, value, f"must be a {meta['table'].__name__} table")


def _representative(value: Any) -> Any:
    """A value inside a distribution's support, for cross-field checks only."""
    if isinstance(value, Uniform):
        return 0.5 * (value.low + value.high)
    if isinstance(value, Normal):
        return value.mean
    if isinstance(value, TruncatedNormal):
        return min(max(value.mean, value.low), value.high)
    if isinstance(value, LogNormal):
        return value.median
    if isinstance(value, Choice):
        return value.values[0]
    return value


def _build_quietly(cls: type[Params], **kwargs: Any) -> Params:
    """Build a target Params from representative values (validity-range warnings off)."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", WavebenchWarning)
        return cls(**{k: _representative(v) for k, v in kwargs.items()})


class _Table:
    """Mixin: validate on construction."""

    def __post_init__(self) -> None:
        _validate_fields(self)
        self._check()

    def _check(self) -> None:
        """Cross-field checks; override."""


# ---------------------------------------------------------------------------
# tables
# ---------------------------------------------------------------------------


@dataclass(frozen=True, kw_only=True)
class ScenarioSpec(_Table):
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

    name: str = _text(doc="scenario name")
    origin: GeodeticOrigin = _table(GeodeticOrigin, doc="geodetic origin of the NED frame")
    duration_s: float = _num(bounds=Bounds(gt=0.0), unit="s", doc="simulated time")
    dt_s: float = _num(bounds=Bounds(gt=0.0), unit="s", doc="time step")

    def _check(self) -> None:
        n = self.duration_s / self.dt_s
        if abs(n - round(n)) > 1e-9 * max(n, 1.0) or round(n) < 1:
            raise ParameterError(
                "dt_s", self.dt_s, f"must divide duration_s = {self.duration_s!r} into a whole number of steps"
            )

    @property
    def n_steps(self) -> int:
        """Number of time steps, ``duration_s / dt_s``."""
        return round(self.duration_s / self.dt_s)


@dataclass(frozen=True, kw_only=True)
class CraftSpec(_Table):
    """``[craft]``: which craft.

    Parameters
    ----------
    demo : str
        A built-in demo craft, one of ``DEMO_CRAFT_NAMES``. (Inline craft
        parameters are planned, not yet in schema version 1.)
    """

    demo: str = _text(choices=DEMO_CRAFT_NAMES, doc="built-in demo craft")


@dataclass(frozen=True, kw_only=True)
class SpreadingSpec(_Table):
    """``[sea.spreading]``: maps onto :class:`DirectionalSpreading`."""

    kind: str = _text("cos2s", choices=("cos2s", "cosn", "long_crested"), doc="spreading function")
    exponent: Any = _like(DirectionalSpreading, "exponent")
    mean_dir_deg: Any = _like(DirectionalSpreading, "mean_dir_deg")

    def _check(self) -> None:
        _build_quietly(DirectionalSpreading, kind=self.kind, exponent=self.exponent, mean_dir_deg=self.mean_dir_deg)


_GAMMA_BOUNDS = Bounds(ge=JONSWAP_GAMMA_RANGE[0], le=JONSWAP_GAMMA_RANGE[1])
_DEPTH_BOUNDS = Bounds(gt=0.0, finite=False)


@dataclass(frozen=True, kw_only=True)
class SeaSpec(_Table):
    """``[sea]``: wave spectrum, spreading and realisation size.

    ``kind``, ``hs_m``, ``tp_s`` and ``gamma`` map onto :class:`SeaSpectrum`
    (``gamma`` absent = the DNV rule); ``n_components`` and ``depth_m``
    are the arguments of :func:`~wavebench.sea.realisation.realise_sea`
    (``depth_m = inf`` for deep water).
    """

    kind: str = _text("jonswap", choices=("jonswap", "pierson_moskowitz"), doc="spectral form")
    hs_m: Any = _like(SeaSpectrum, "hs_m")
    tp_s: Any = _like(SeaSpectrum, "tp_s")
    gamma: Any = _num(None, bounds=_GAMMA_BOUNDS, doc="JONSWAP peak enhancement; absent for the DNV rule", dist=True)
    n_components: int = _num(100, bounds=Bounds(ge=1, integer=True), doc="number of regular wave components")
    depth_m: Any = _num(math.inf, bounds=_DEPTH_BOUNDS, unit="m", doc="water depth, inf for deep water", dist=True)
    spreading: SpreadingSpec = _table(SpreadingSpec, None, doc="directional spreading")

    def __post_init__(self) -> None:
        if self.spreading is None:
            object.__setattr__(self, "spreading", SpreadingSpec())
        super().__post_init__()

    def _check(self) -> None:
        if self.kind == "pierson_moskowitz" and isinstance(self.gamma, _DIST_TYPES):
            raise ParameterError(
                "gamma", distribution_to_data(self.gamma), "must be absent (or 1) for kind 'pierson_moskowitz'"
            )
        _build_quietly(SeaSpectrum, kind=self.kind, hs_m=self.hs_m, tp_s=self.tp_s, gamma=self.gamma)


@dataclass(frozen=True, kw_only=True)
class CurrentVariationSpec(_Table):
    """``[current.variation]``: maps onto :class:`CurrentVariationParams`."""

    speed_sigma_mps: Any = _like(CurrentVariationParams, "speed_sigma_mps")
    speed_tc_s: Any = _like(CurrentVariationParams, "speed_tc_s")
    set_sigma_deg: Any = _like(CurrentVariationParams, "set_sigma_deg")
    set_tc_s: Any = _like(CurrentVariationParams, "set_tc_s")


@dataclass(frozen=True, kw_only=True)
class CurrentSpec(_Table):
    """``[current]``: maps onto :class:`UniformCurrentParams` (+ optional variation)."""

    speed_mps: Any = _like(UniformCurrentParams, "speed_mps")
    set_deg: Any = _like(UniformCurrentParams, "set_deg")
    variation: CurrentVariationSpec | None = _table(CurrentVariationSpec, None, doc="slow variation")


@dataclass(frozen=True, kw_only=True)
class WindSpec(_Table):
    """``[wind]``: maps onto :class:`WindParams`."""

    speed_mps: Any = _like(WindParams, "speed_mps")
    direction_from_deg: Any = _like(WindParams, "direction_from_deg")
    height_m: Any = _like(WindParams, "height_m")
    gust_spectrum: str = _text("npd", choices=GUST_SPECTRA, doc="gust spectrum")
    n_components: int = _like(WindParams, "n_components", dist=False)
    f_min_hz: float = _like(WindParams, "f_min_hz", dist=False)
    f_max_hz: float = _like(WindParams, "f_max_hz", dist=False)

    def _check(self) -> None:
        _build_quietly(
            WindParams,
            **{f.name: getattr(self, f.name) for f in dataclasses.fields(self)},
        )


@dataclass(frozen=True, kw_only=True)
class CampaignSpec(_Table):
    """``[campaign]``: how many trials and the root seed."""

    trials: int = _num(bounds=Bounds(ge=1, integer=True), doc="number of trials")
    seed: int = _num(bounds=Bounds(ge=0, integer=True), doc="campaign seed (root of the SeedSequence)")


@dataclass(frozen=True, kw_only=True)
class Spec(_Table):
    """A whole spec, schema version :data:`SPEC_VERSION`.

    Build it with :func:`~wavebench.spec.io.load_spec` or
    :func:`spec_from_data`; every table is frozen and validated.
    """

    spec_version: int = _num(SPEC_VERSION, bounds=Bounds(ge=SPEC_VERSION, le=SPEC_VERSION, integer=True),
                             doc="schema version")
    scenario: ScenarioSpec = _table(ScenarioSpec)
    craft: CraftSpec = _table(CraftSpec)
    sea: SeaSpec | None = _table(SeaSpec, None)
    current: CurrentSpec | None = _table(CurrentSpec, None)
    wind: WindSpec | None = _table(WindSpec, None)
    campaign: CampaignSpec = _table(CampaignSpec)


# ---------------------------------------------------------------------------
# plain data <-> spec
# ---------------------------------------------------------------------------


def _is_required(f: dataclasses.Field) -> bool:
    return f.default is _MISSING and f.default_factory is _MISSING


def _from_data(cls: type, data: Any, path: str) -> Any:
    if not isinstance(data, Mapping):
        raise ParameterError(path, data, "must be a table")
    if issubclass(cls, Params):
        return params_from_dict(cls, data, path)
    fields = {f.name: f for f in dataclasses.fields(cls) if f.init}
    prefix = f"{path}." if path else ""
    for key in data:
        if key not in fields:
            close = difflib.get_close_matches(key, list(fields), n=1)
            raise ParameterError(
                f"{prefix}{key}", data[key], f"unknown key; allowed keys are {sorted(fields)}",
                f"did you mean '{close[0]}'?" if close else "",
            )
    for name, f in fields.items():
        if _is_required(f) and name not in data:
            raise ParameterError(f"{prefix}{name}", None, "is required but missing")
    kwargs: dict[str, Any] = {}
    for key, value in data.items():
        f = fields[key]
        if "table" in f.metadata:
            kwargs[key] = _from_data(f.metadata["table"], value, f"{prefix}{key}")
        elif "bounds" in f.metadata and isinstance(value, Mapping):
            if not f.metadata["dist"]:
                raise ParameterError(f"{prefix}{key}", dict(value), "must be a number (no distribution allowed here)")
            kwargs[key] = parse_distribution(value, f"{prefix}{key}")
        elif "bounds" in f.metadata and isinstance(value, list):
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

    Absent optional values (``None``) are left out; distributions become
    their inline-table form; fields keep their declaration order.
    """
    out: dict[str, Any] = {}
    for f in dataclasses.fields(obj):
        value = getattr(obj, f.name)
        if value is None:
            continue
        if isinstance(value, _DIST_TYPES):
            out[f.name] = distribution_to_data(value)
        elif isinstance(value, Params):
            out[f.name] = params_to_dict(value)
        elif isinstance(value, _Table):
            out[f.name] = spec_to_data(value)
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
            if isinstance(value, _DIST_TYPES):
                found[f"{prefix}{f.name}"] = value
            elif isinstance(value, _Table):
                walk(value, f"{prefix}{f.name}.")

    walk(spec, "")
    return found
