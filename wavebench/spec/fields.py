"""Field declarations of spec tables and their validation.

A spec table is a frozen dataclass mixing in :class:`SpecTable`; each field
is declared with one of the helpers below, which record in the field's
metadata what the loader and the validator accept:

``like(cls, name)``, ``number(...)``
    A number within bounds (optionally a distribution, ``dist=True``).
``text(...)``
    A string, optionally one of fixed choices ("did you mean" on a typo).
``table(cls)``
    A nested spec table.
``points(...)``
    A list of ``[north_m, east_m]`` pairs, stored as a tuple of tuples
    (each coordinate within :data:`MAX_NED_M` of the origin).
``numbers(...)``
    A list of bounded numbers, stored as a tuple.
``named_tables(cls)``
    A table of named sub-tables (e.g. ``[requirements.<name>]``), stored as
    a tuple of ``(name, table)`` pairs in document order.
``params(cls)``
    A nested block parameter set (:class:`~wavebench.core.params.Params`),
    with nested parameter sets loaded recursively.
"""

from __future__ import annotations

import dataclasses
import difflib
import math
import re
import typing
import warnings
from collections.abc import Mapping
from typing import Any

import numpy as np

from ..core.errors import ParameterError, WavebenchWarning
from ..core.params import Bounds, Params, check_value
from .distributions import (
    Choice,
    Grid,
    LogNormal,
    Normal,
    TruncatedNormal,
    Uniform,
    check_support,
    distribution_to_data,
)

__all__ = [
    "DIST_TYPES",
    "SpecTable",
    "intervals",
    "like",
    "named_tables",
    "number",
    "numbers",
    "params",
    "points",
    "representative",
    "table",
    "text",
    "texts",
]

DIST_TYPES = (Uniform, Normal, TruncatedNormal, LogNormal, Choice, Grid)
_MISSING = dataclasses.MISSING
_BARE_KEY = re.compile(r"[A-Za-z0-9_-]+")


def _field(default: Any, meta: dict[str, Any]) -> Any:
    if default is _MISSING:
        return dataclasses.field(metadata=meta)
    return dataclasses.field(default=default, metadata=meta)


def like(cls: type[Params], name: str, default: Any = _MISSING, *, dist: bool = True) -> Any:
    """A numeric spec field with the bounds, unit and doc of ``cls.name``."""
    src = next(f for f in dataclasses.fields(cls) if f.name == name)
    if default is _MISSING and src.default is not _MISSING:
        default = src.default
    meta = {"bounds": src.metadata["bounds"], "unit": src.metadata.get("unit", ""),
            "doc": src.metadata.get("doc", ""), "dist": dist}  # fmt: skip
    return _field(default, meta)


def number(default: Any = _MISSING, *, bounds: Bounds, unit: str = "", doc: str = "", dist: bool = False) -> Any:
    """A bounded number (a distribution too when ``dist``)."""
    return _field(default, {"bounds": bounds, "unit": unit, "doc": doc, "dist": dist})


def text(default: Any = _MISSING, *, choices: tuple[str, ...] | None = None, doc: str = "") -> Any:
    """A string, optionally one of ``choices``."""
    return _field(default, {"text": True, "choices": choices, "doc": doc})


def table(cls: type, default: Any = _MISSING, *, doc: str = "") -> Any:
    """A nested spec table of class ``cls``."""
    return _field(default, {"table": cls, "doc": doc})


def points(default: Any = _MISSING, *, min_len: int = 1, doc: str = "") -> Any:
    """A list of ``[north_m, east_m]`` pairs [m] (at least ``min_len``, each within :data:`MAX_NED_M`)."""
    return _field(default, {"points": True, "min_len": min_len, "doc": doc})


def numbers(default: Any = _MISSING, *, bounds: Bounds, min_len: int = 1, unit: str = "", doc: str = "") -> Any:
    """A list of bounded numbers (at least ``min_len``)."""
    return _field(default, {"numbers": bounds, "min_len": min_len, "unit": unit, "doc": doc})


def texts(default: Any = _MISSING, *, choices: tuple[str, ...], doc: str = "") -> Any:
    """A list of distinct strings, each one of ``choices``, stored as a tuple."""
    return _field(default, {"texts": choices, "doc": doc})


def intervals(default: Any = (), *, doc: str = "") -> Any:
    """A list of ``[start_s, end_s]`` time windows, 0 <= start < end, stored as a tuple of pairs."""
    return _field(default, {"intervals": True, "doc": doc})


def named_tables(cls: type, default: Any = (), *, doc: str = "") -> Any:
    """A table of named sub-tables of class ``cls``."""
    return _field(default, {"named_tables": cls, "doc": doc})


def params(cls: type[Params], default: Any = _MISSING, *, doc: str = "") -> Any:
    """A nested block parameter set of class ``cls``."""
    return _field(default, {"params": cls, "doc": doc})


#: Largest |north| or |east| of a point in the local NED frame [m]: a little
#: over half the WGS-84 equatorial circumference (pi * 6 378 137 m = 20 037.5 km),
#: farther than any place on Earth lies from the origin. It also keeps the
#: squares and products of coordinates in the geometry checks far from
#: float64 overflow.
MAX_NED_M = 2.1e7


def _check_points(name: str, value: Any, min_len: int) -> tuple[tuple[float, float], ...]:
    allowed = f"must be a list of at least {min_len} [north_m, east_m] pairs of finite numbers"
    if isinstance(value, (str, bytes, Mapping)) or not isinstance(value, (list, tuple)) or len(value) < min_len:
        raise ParameterError(name, value, allowed)
    out = []
    for i, p in enumerate(value):
        ok = isinstance(p, (list, tuple)) and len(p) == 2
        ok = ok and all(isinstance(x, (int, float)) and not isinstance(x, bool) and math.isfinite(x) for x in p)
        if not ok:
            raise ParameterError(f"{name}[{i}]", p, "must be a [north_m, east_m] pair of finite numbers")
        if not all(abs(x) <= MAX_NED_M for x in p):
            raise ParameterError(
                f"{name}[{i}]",
                p,
                f"must be a [north_m, east_m] pair within {MAX_NED_M / 1e3:,.0f} km of the NED origin",
            )
        out.append((float(p[0]), float(p[1])))
    return tuple(out)


def _check_numbers(name: str, value: Any, bounds: Bounds, min_len: int) -> tuple[float, ...]:
    if isinstance(value, (str, bytes, Mapping)) or not isinstance(value, (list, tuple)) or len(value) < min_len:
        raise ParameterError(name, value, f"must be a list of at least {min_len} numbers")
    out = []
    for i, x in enumerate(value):
        checked = check_value(f"{name}[{i}]", x, bounds)
        if isinstance(checked, np.ndarray):
            raise ParameterError(f"{name}[{i}]", x, "must be a single number")
        out.append(float(checked))
    return tuple(out)


def _validate_fields(obj: Any) -> None:
    """Check and normalise every declared field of a spec table in place."""
    for f in dataclasses.fields(obj):
        value = getattr(obj, f.name)
        meta = f.metadata
        if value is None and f.default is None:
            continue
        if "bounds" in meta:
            if isinstance(value, DIST_TYPES):
                if not meta["dist"]:
                    raise ParameterError(
                        f.name, distribution_to_data(value), "must be a number (no distribution allowed here)"
                    )
                check_support(f.name, value, meta["bounds"])
            elif isinstance(value, Mapping):
                raise ParameterError(
                    f.name, dict(value),
                    "must be a number" + (" or a distribution" if meta["dist"] else " (no distribution allowed here)"),
                )  # fmt: skip
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
            if not isinstance(value, meta["table"]):
                raise ParameterError(f.name, value, f"must be a {meta['table'].__name__} table")
        elif meta.get("points"):
            object.__setattr__(obj, f.name, _check_points(f.name, value, meta["min_len"]))
        elif "numbers" in meta:
            object.__setattr__(obj, f.name, _check_numbers(f.name, value, meta["numbers"], meta["min_len"]))
        elif meta.get("intervals"):
            allowed = "must be a list of [start_s, end_s] windows with 0 <= start_s < end_s"
            if isinstance(value, (str, bytes, Mapping)) or not isinstance(value, (list, tuple)):
                raise ParameterError(f.name, value, allowed)
            windows = []
            for i, w in enumerate(value):
                ok = isinstance(w, (list, tuple)) and len(w) == 2
                ok = ok and all(isinstance(x, (int, float)) and not isinstance(x, bool) and math.isfinite(x) for x in w)
                if not ok or not 0.0 <= w[0] < w[1]:
                    raise ParameterError(f"{f.name}[{i}]", w, allowed)
                windows.append((float(w[0]), float(w[1])))
            object.__setattr__(obj, f.name, tuple(windows))
        elif "texts" in meta:
            choices = meta["texts"]
            if isinstance(value, (str, bytes, Mapping)) or not isinstance(value, (list, tuple)):
                raise ParameterError(f.name, value, f"must be a list of names from {list(choices)}")
            for i, item in enumerate(value):
                if item not in choices:
                    close = difflib.get_close_matches(str(item), list(choices), n=1)
                    raise ParameterError(f"{f.name}[{i}]", item, f"must be one of {list(choices)}",
                                         f"did you mean '{close[0]}'?" if close else "")  # fmt: skip
            if len(set(value)) != len(value):
                raise ParameterError(f.name, list(value), "must not name a signal twice")
            object.__setattr__(obj, f.name, tuple(value))
        elif "named_tables" in meta:
            cls = meta["named_tables"]
            items = tuple(value.items()) if isinstance(value, Mapping) else value
            if not isinstance(items, tuple) or not all(
                isinstance(it, tuple) and len(it) == 2 and isinstance(it[0], str) and isinstance(it[1], cls)
                for it in items
            ):
                raise ParameterError(f.name, value, f"must be a table of named {cls.__name__} tables")
            for name, _ in items:
                if not _BARE_KEY.fullmatch(name):
                    raise ParameterError(f"{f.name}.{name}", name, "names must use only letters, digits, '_' and '-'")
            object.__setattr__(obj, f.name, items)
        elif "params" in meta:
            if not isinstance(value, meta["params"]):
                raise ParameterError(f.name, value, f"must be a {meta['params'].__name__} table")


def representative(value: Any) -> Any:
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
    if isinstance(value, Grid):
        return value.levels[0]
    return value


def build_quietly(cls: type[Params], **kwargs: Any) -> Params:
    """Build a target Params from representative values (validity-range warnings off)."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", WavebenchWarning)
        return cls(**{k: representative(v) for k, v in kwargs.items()})


class SpecTable:
    """Mixin: validate on construction."""

    def __post_init__(self) -> None:
        _validate_fields(self)
        self._check()

    def _check(self) -> None:
        """Cross-field checks; override."""


# ---------------------------------------------------------------------------
# nested block parameters
# ---------------------------------------------------------------------------


def _params_field_types(cls: type[Params]) -> dict[str, type[Params] | tuple[type[Params], ...]]:
    """Fields of ``cls`` whose annotation is a Params class (or a union of them)."""
    hints = typing.get_type_hints(cls)
    out: dict[str, Any] = {}
    for f in dataclasses.fields(cls):
        hint = hints.get(f.name)
        options = typing.get_args(hint) if typing.get_args(hint) else (hint,)
        found = tuple(o for o in options if isinstance(o, type) and issubclass(o, Params))
        if found:
            out[f.name] = found[0] if len(found) == 1 else found
    return out


def params_tree_from_data(cls: type[Params], data: Any, path: str) -> Params:
    """Build a Params (with nested Params fields) from plain data, naming the path on errors."""
    from ..core.params import params_from_dict

    if not isinstance(data, Mapping):
        raise ParameterError(path, data, "must be a table")
    nested = _params_field_types(cls)
    values = dict(data)
    for name, sub in nested.items():
        if name in values and isinstance(sub, type):
            values[name] = params_tree_from_data(sub, values[name], f"{path}.{name}")
    for key, value in values.items():
        if isinstance(value, list):
            raise ParameterError(f"{path}.{key}", value, "must be a single value, not an array")
    return params_from_dict(cls, values, path)


def params_tree_to_data(p: Params) -> dict[str, Any]:
    """Plain data of a Params with nested Params fields (inverse of :func:`params_tree_from_data`)."""
    out: dict[str, Any] = {}
    for f in dataclasses.fields(p):
        if not f.init:
            continue
        value = getattr(p, f.name)
        if isinstance(value, Params):
            out[f.name] = params_tree_to_data(value)
        elif isinstance(value, np.ndarray):
            out[f.name] = value.tolist()
        elif isinstance(value, (np.floating, np.integer, np.bool_)):
            out[f.name] = value.item()
        else:
            out[f.name] = value
    return out
