"""Frozen, validated parameter dataclasses with bounds in field metadata.

A block's parameters are a keyword-only frozen dataclass deriving from
:class:`Params`. Each numeric field is declared with :func:`bounded`, which
stores the allowed range and the unit in the field's metadata; validation
runs in ``__post_init__`` and raises :class:`~wavebench.core.errors.ParameterError`
naming the field, the value and the range.

A numeric field may hold a scalar or an array with a leading trial axis
(per-trial parameters, e.g. a dispersed mass); every element is checked.

A whole-number field (``integer=True``) also keeps to the 64-bit signed
range ``[-2**63, 2**63 - 1]`` (:data:`INT_MIN`, :data:`INT_MAX`), the range
a TOML file holds losslessly, so a value read from a spec writes back and
reads again as the same number; a Python ``int`` is kept exactly (not passed
through a float).

Examples
--------
>>> from dataclasses import dataclass
>>> @dataclass(frozen=True, kw_only=True)
... class Hull(Params):
...     mass_kg: float = bounded(gt=0.0, unit="kg", doc="displaced mass")
>>> Hull(mass_kg=-1.0)
Traceback (most recent call last):
...
wavebench.core.errors.ParameterError: mass_kg = -1.0 is not allowed: must be a finite number > 0.0
"""

from __future__ import annotations

import dataclasses
import difflib
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any, TypeVar

import numpy as np

from .errors import ParameterError

__all__ = [
    "INT_MAX",
    "INT_MIN",
    "Bounds",
    "Params",
    "bounded",
    "check_value",
    "params_from_dict",
    "params_to_dict",
]

_MISSING = dataclasses.MISSING

#: Smallest and largest whole number an ``integer=True`` field takes: the
#: 64-bit signed range that TOML v1.0.0 requires parsers to hold losslessly.
INT_MIN = -(2**63)
INT_MAX = 2**63 - 1


@dataclass(frozen=True)
class Bounds:
    """Allowed range of a numeric parameter.

    Parameters
    ----------
    ge, gt, le, lt : float or None
        Inclusive / exclusive lower and upper limits.
    finite : bool
        Whether NaN and infinities are rejected (default True).
    integer : bool
        Whether the value must be a whole number; whole numbers also keep to
        ``[INT_MIN, INT_MAX]``, the 64-bit range.
    """

    ge: float | None = None
    gt: float | None = None
    le: float | None = None
    lt: float | None = None
    finite: bool = True
    integer: bool = False

    def describe(self) -> str:
        """Human-readable statement of the range, e.g. ``a finite number > 0``."""
        parts = []
        if self.ge is not None:
            parts.append(f">= {self.ge}")
        if self.gt is not None:
            parts.append(f"> {self.gt}")
        if self.le is not None:
            parts.append(f"<= {self.le}")
        if self.lt is not None:
            parts.append(f"< {self.lt}")
        noun = "whole number" if self.integer else "number"
        text = f"must be a finite {noun}" if self.finite else f"must be a {noun}"
        if parts:
            text += " " + " and ".join(parts)
        return text

    def violated(self, value: np.ndarray) -> bool:
        """True where any element of ``value`` lies outside the range."""
        v = np.asarray(value, dtype=float)
        if self.finite and not np.all(np.isfinite(v)):
            return True
        # NaN compares False, so test the allowed condition and negate.
        with np.errstate(invalid="ignore"):
            if self.ge is not None and not np.all(v >= self.ge):
                return True
            if self.gt is not None and not np.all(v > self.gt):
                return True
            if self.le is not None and not np.all(v <= self.le):
                return True
            if self.lt is not None and not np.all(v < self.lt):
                return True
        if self.integer:
            with np.errstate(invalid="ignore"):
                if not np.all(np.mod(v, 1.0) == 0.0):
                    return True
            if self.outside_int_range(v):
                return True
        return False

    def outside_int_range(self, value: Any) -> bool:
        """True where a whole number lies outside ``[INT_MIN, INT_MAX]`` (the 64-bit range)."""
        if isinstance(value, (int, np.integer)):
            return not INT_MIN <= int(value) <= INT_MAX
        v = np.asarray(value, dtype=float)
        v = v[np.isfinite(v)]  # NaN and infinities are the finiteness check's business
        # float(INT_MAX) rounds up to 2**63, which is out of range: test < 2**63.
        return not (np.all(v >= float(INT_MIN)) and np.all(v < 2.0**63))

    def describe_int_range(self) -> str:
        """:meth:`describe` followed by the 64-bit range a whole-number field keeps to."""
        return f"{self.describe()}, between {INT_MIN} and {INT_MAX} (a 64-bit integer)"

    def violated_int(self, value: int) -> bool:
        """Exact check of a Python ``int`` against the range (no rounding through a float)."""
        if self.outside_int_range(value):
            return True
        # int-float comparisons in Python are exact.
        if self.ge is not None and not value >= self.ge:
            return True
        if self.gt is not None and not value > self.gt:
            return True
        if self.le is not None and not value <= self.le:
            return True
        if self.lt is not None and not value < self.lt:
            return True
        return False


def bounded(
    default: Any = _MISSING,
    *,
    ge: float | None = None,
    gt: float | None = None,
    le: float | None = None,
    lt: float | None = None,
    finite: bool = True,
    integer: bool = False,
    unit: str = "",
    doc: str = "",
) -> Any:
    """Declare a numeric dataclass field with an allowed range.

    Parameters
    ----------
    default : float, optional
        Default value; omit for a required field.
    ge, gt, le, lt : float, optional
        Inclusive / exclusive bounds.
    finite : bool
        Reject NaN and infinities (default True).
    integer : bool
        Require a whole number.
    unit : str
        SI unit of the field, for documentation and recorded attributes.
    doc : str
        One-line description.

    Returns
    -------
    dataclasses.Field
        A field whose metadata holds ``bounds``, ``unit`` and ``doc``.
    """
    metadata = {
        "bounds": Bounds(ge=ge, gt=gt, le=le, lt=lt, finite=finite, integer=integer),
        "unit": unit,
        "doc": doc,
    }
    if default is _MISSING:
        return dataclasses.field(metadata=metadata)
    return dataclasses.field(default=default, metadata=metadata)


def _allowed(value: Any, bounds: Bounds) -> str:
    """What is allowed, naming the 64-bit range only when that is what ``value`` breaks."""
    if bounds.integer and bounds.outside_int_range(value):
        return bounds.describe_int_range()
    return bounds.describe()


def check_value(name: str, value: Any, bounds: Bounds) -> Any:
    """Check one value (scalar or array) against ``bounds``.

    Parameters
    ----------
    name : str
        Field name used in the error message.
    value : float or array_like
        Value to check.
    bounds : Bounds
        Allowed range.

    Returns
    -------
    float or ndarray
        The value, as a float for scalars or a read-only float array.

    Raises
    ------
    ParameterError
        If the value is not numeric or lies outside the range (for a
        whole-number field, also outside the 64-bit range).
    """
    if value is None or isinstance(value, (bool, np.bool_, str, bytes)):
        raise ParameterError(name, value, bounds.describe())
    if bounds.integer and isinstance(value, (int, np.integer)):
        # Keep whole numbers exact: a float holds every integer only up to 2**53.
        if bounds.violated_int(int(value)):
            raise ParameterError(name, value, _allowed(value, bounds))
        return int(value)
    if isinstance(value, int):
        try:
            value = float(value)  # an int for a float field; beyond ~1.8e308 it has no float
        except OverflowError:
            raise ParameterError(name, value, bounds.describe()) from None
    try:
        raw = np.asarray(value)
    except (TypeError, ValueError, OverflowError):  # ragged nested lists and the like
        raise ParameterError(name, value, bounds.describe()) from None
    if raw.dtype.kind not in "iuf":
        # e.g. an int beyond 64 bits inside a list becomes an object array
        raise ParameterError(name, value, bounds.describe_int_range() if bounds.integer else bounds.describe())
    arr = raw.astype(float)
    if bounds.violated(arr):
        raise ParameterError(name, value, _allowed(arr, bounds))
    if arr.ndim == 0:
        return int(arr) if bounds.integer else float(arr)
    arr.setflags(write=False)
    return arr


def _comparable(value: Any) -> Any:
    """A hashable, ``==``-safe stand-in for a field value."""
    if isinstance(value, np.ndarray):
        return ("ndarray", value.dtype.str, value.shape, value.tobytes())
    if isinstance(value, (list, tuple)):
        return tuple(_comparable(v) for v in value)
    if isinstance(value, dict):
        return tuple(sorted((k, _comparable(v)) for k, v in value.items()))
    return value


@dataclass(frozen=True, kw_only=True)
class Params:
    """Base class for frozen, validated block parameters.

    Subclasses are declared ``@dataclass(frozen=True, kw_only=True)`` and use
    :func:`bounded` for numeric fields. Validation happens on construction;
    a subclass may add cross-field checks in ``_check`` (raise
    :class:`ParameterError`).
    """

    def __init_subclass__(cls, **kwargs: Any) -> None:
        # Array-valued fields break the dataclass-generated __eq__ (the truth
        # value of an array is ambiguous) and __hash__; put array-aware ones in
        # every subclass's own namespace, where @dataclass leaves them alone.
        super().__init_subclass__(**kwargs)
        if "__eq__" not in cls.__dict__:
            cls.__eq__ = Params.__eq__  # type: ignore[method-assign]
        if "__hash__" not in cls.__dict__ or cls.__dict__["__hash__"] is None:
            cls.__hash__ = Params.__hash__  # type: ignore[method-assign]

    def _key(self) -> tuple[Any, ...]:
        return tuple(_comparable(getattr(self, f.name)) for f in dataclasses.fields(self))

    def __eq__(self, other: object) -> bool:
        if other.__class__ is not self.__class__:
            return NotImplemented
        return self._key() == other._key()  # type: ignore[attr-defined]

    def __hash__(self) -> int:
        return hash((self.__class__.__qualname__, self._key()))

    def __post_init__(self) -> None:
        for f in dataclasses.fields(self):
            bounds = f.metadata.get("bounds")
            if bounds is None:
                continue
            checked = check_value(f.name, getattr(self, f.name), bounds)
            object.__setattr__(self, f.name, checked)
        self._check()

    def _check(self) -> None:
        """Cross-field checks; override in subclasses."""

    @classmethod
    def field_units(cls) -> dict[str, str]:
        """Map of field name to SI unit, for fields declared with a unit."""
        return {f.name: f.metadata.get("unit", "") for f in dataclasses.fields(cls)}


P = TypeVar("P", bound=Params)


def params_from_dict(cls: type[P], data: Mapping[str, Any], path: str = "") -> P:
    """Build ``cls`` from a mapping, rejecting unknown keys with a suggestion.

    Parameters
    ----------
    cls : type
        A :class:`Params` subclass.
    data : Mapping
        Field values keyed by field name (e.g. a TOML table).
    path : str
        Dotted path of the table, used as a prefix in error messages.

    Returns
    -------
    Params
        The validated instance.

    Raises
    ------
    ParameterError
        For unknown or missing keys and out-of-range values.
    """
    names = [f.name for f in dataclasses.fields(cls) if f.init]
    prefix = f"{path}." if path else ""
    for key in data:
        if key not in names:
            close = difflib.get_close_matches(key, names, n=1)
            hint = f"did you mean '{close[0]}'?" if close else ""
            raise ParameterError(
                f"{prefix}{key}", data[key], f"unknown key; allowed keys are {sorted(names)}", hint
            )
    required = [
        f.name
        for f in dataclasses.fields(cls)
        if f.init and f.default is _MISSING and f.default_factory is _MISSING
    ]
    missing = [name for name in required if name not in data]
    if missing:
        raise ParameterError(f"{prefix}{missing[0]}", None, "is required but missing")
    try:
        return cls(**dict(data))
    except ParameterError as exc:
        raise (exc.with_prefix(path) if path else exc) from None


def params_to_dict(params: Params) -> dict[str, Any]:
    """Plain-data view of a :class:`Params` (arrays as nested lists)."""
    out: dict[str, Any] = {}
    for f in dataclasses.fields(params):
        value = getattr(params, f.name)
        if isinstance(value, np.ndarray):
            value = value.tolist()
        elif isinstance(value, Params):
            value = params_to_dict(value)
        out[f.name] = value
    return out
