"""Fuzz of the spec loader: extreme and ill-typed values in every numeric field.

The loader must refuse bad input with a ParameterError (never another
exception, never a warning) and, when it accepts a value, write the spec back
(``dump_spec``) so that it loads again with the same ``spec_hash``. Below: an
exhaustive sweep of every numeric field of every example spec over a fixed
set of hostile values, a Hypothesis fuzz over all numeric leaves (list
elements and distribution parameters too) with free floats and integers, and
regression tests for the cases the fuzz found.

Outside facts the checks rest on:

* IEEE 754 binary64 (``float``): the largest finite value is
  ``(2 - 2**-52) * 2**1023 ~= 1.7977e308`` and every whole number up to
  ``2**53`` is exact; ``sys.float_info`` reports the same (Python docs, sys module).
* TOML v1.0.0 (toml.io/en/v1.0.0, "Integer"): "Arbitrary 64-bit signed
  integers (from -2^63 to 2^63 - 1) should be accepted and handled
  losslessly."
"""

from __future__ import annotations

import math
import sys
import warnings
from collections.abc import Iterator
from functools import cache
from typing import Any

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from wavebench.core.errors import ParameterError
from wavebench.core.params import Bounds, check_value
from wavebench.spec import (
    dump_spec,
    example_spec_names,
    example_spec_path,
    load_spec,
    spec_from_data,
    spec_hash,
    spec_to_data,
)
from wavebench.spec.distributions import DISTRIBUTION_KINDS

#: The hostile values of the sweep (TOML can spell every one of them).
HOSTILE = [1e300, -1e300, 1e308, math.nan, math.inf, [1], "x", True]

Path = tuple[Any, ...]  # keys and list indices from the document root


@cache
def _canonical(name: str) -> dict[str, Any]:
    """Plain data of a validated example spec (defaults filled in)."""
    return spec_to_data(load_spec(example_spec_path(name)))


def _copy(data: Any) -> Any:
    if isinstance(data, dict):
        return {k: _copy(v) for k, v in data.items()}
    if isinstance(data, list):
        return [_copy(v) for v in data]
    return data


def _numeric_leaves(data: Any, path: Path = ()) -> Iterator[Path]:
    """Paths of every number in the document, inside lists and inline tables too."""
    items = data.items() if isinstance(data, dict) else enumerate(data) if isinstance(data, list) else ()
    for key, value in items:
        if isinstance(value, (dict, list)):
            yield from _numeric_leaves(value, (*path, key))
        elif isinstance(value, (int, float)) and not isinstance(value, bool):
            yield (*path, key)


def _field_paths(data: dict[str, Any], path: Path = ()) -> Iterator[Path]:
    """Paths of every numeric field: a number, a list of numbers or a distribution (its inline table)."""
    for key, value in data.items():
        here = (*path, key)
        if isinstance(value, dict):
            if value and set(value) <= {*DISTRIBUTION_KINDS, "weights"}:
                yield here
            else:
                yield from _field_paths(value, here)
        elif (
            isinstance(value, (list, int, float)) and not isinstance(value, bool) and any(_numeric_leaves({key: value}))
        ):
            yield here


def _set(data: dict[str, Any], path: Path, value: Any) -> dict[str, Any]:
    out = _copy(data)
    node = out
    for key in path[:-1]:
        node = node[key]
    node[path[-1]] = value
    return out


def _get(data: Any, path: Path) -> Any:
    for key in path:
        data = data[key]
    return data


def _dotted(path: Path) -> str:
    """TOML path of the field a leaf belongs to (list indices dropped)."""
    return ".".join(str(k) for k in path if isinstance(k, str))


def _field_of(path: Path) -> str:
    """Dotted path up to the first list index (the field a list element belongs to)."""
    keys = []
    for k in path:
        if not isinstance(k, str):
            break
        keys.append(k)
    return ".".join(keys)


def _never_valid(value: Any) -> bool:
    """A value no numeric field may accept, whatever its bounds: NaN, a list, a string, a boolean."""
    return isinstance(value, (list, str, bool)) or (isinstance(value, float) and math.isnan(value))


def _check_one(name: str, path: Path, value: Any) -> None:
    """Load the example spec with ``path`` set to ``value``: refused cleanly, or accepted and round-tripping."""
    data = _set(_canonical(name), path, value)
    with warnings.catch_warnings():
        warnings.simplefilter("error")  # a RuntimeWarning (overflow) is a failure too
        try:
            spec = spec_from_data(data)
        except ParameterError as exc:
            assert exc.field, f"{name}: {_dotted(path)} = {value!r}: error names no field"
            if _never_valid(value) and not isinstance(value, float):
                # a wrong type is refused by the field's own check, naming its TOML path
                assert exc.field.startswith(_field_of(path)), (name, path, value, str(exc))
            return
        accepted_as = _get(spec_to_data(spec), path)
        assert not _never_valid(value), f"{name}: {_dotted(path)} = {value!r} was accepted (stored as {accepted_as!r})"
        # a whole number given for a float field is stored as the nearest float
        expected = float(value) if isinstance(value, int) and isinstance(accepted_as, float) else value
        assert accepted_as == expected, f"{name}: {_dotted(path)} = {value!r} stored as {accepted_as!r}"
        again = load_spec(dump_spec(spec))
        assert spec_hash(again) == spec_hash(spec), f"{name}: {_dotted(path)} = {value!r} does not round-trip"


# ---------------------------------------------------------------------------
# the sweep: every numeric field of every example spec, every hostile value
# ---------------------------------------------------------------------------


def test_the_sweep_sees_the_fields_of_every_example() -> None:
    """The field walker finds fields of every kind (guards the sweep against testing nothing)."""
    found = {name: {_dotted(p) for p in _field_paths(_canonical(name))} for name in example_spec_names()}
    assert len(found) >= 5
    every = set().union(*found.values())
    for path in ("scenario.duration_s", "scenario.origin.lat_deg", "campaign.trials", "campaign.record_interval_s",
                 "sea.n_components", "craft.hull.xg_m", "mission.waypoints_ne_m"):  # fmt: skip
        assert path in every, path


@pytest.mark.parametrize("name", example_spec_names())
@pytest.mark.parametrize("value", HOSTILE, ids=repr)
def test_every_numeric_field_refuses_or_round_trips(name: str, value: Any) -> None:
    for path in _field_paths(_canonical(name)):
        _check_one(name, path, value)


# ---------------------------------------------------------------------------
# Hypothesis: any numeric leaf (list elements, distribution parameters) and free values
# ---------------------------------------------------------------------------

_LEAVES = [(name, path) for name in example_spec_names() for path in _numeric_leaves(_canonical(name))]

_VALUES = st.one_of(
    st.sampled_from(HOSTILE),
    # IEEE 754 binary64 extremes: smallest subnormal, largest finite, 2**53 (last exact whole number)
    st.sampled_from([5e-324, -5e-324, sys.float_info.max, -sys.float_info.max, 2.0**53 + 2.0, -math.inf, 0.5]),
    # TOML v1.0.0: 64-bit signed integers, and just beyond
    st.sampled_from([2**63 - 1, 2**63, -(2**63), -(2**63) - 1, 0, -1]),
    st.floats(allow_nan=True, allow_infinity=True),
    st.integers(min_value=-(2**70), max_value=2**70),
)


@settings(max_examples=250, deadline=None, derandomize=True, database=None,
          suppress_health_check=[HealthCheck.too_slow])  # fmt: skip
@given(leaf=st.sampled_from(_LEAVES), value=_VALUES)
def test_any_numeric_leaf_refuses_or_round_trips(leaf: tuple[str, Path], value: Any) -> None:
    name, path = leaf
    _check_one(name, path, value)


# ---------------------------------------------------------------------------
# regressions: the cases the fuzz found
# ---------------------------------------------------------------------------


def _spec_with_field(path: str) -> str:
    """An example spec that has ``path`` (a TOML path, after defaults are filled in)."""
    for name in example_spec_names():
        try:
            _get(_canonical(name), tuple(path.split(".")))
        except (KeyError, TypeError):
            continue
        return name
    raise AssertionError(f"no example spec has {path}")


def _load(path: str, setting: str) -> Any:
    return load_spec(example_spec_path(_spec_with_field(path)), [setting])


@pytest.mark.parametrize("literal", ["1e300", "1e308", "9.3e18", "2.5"])
def test_integer_field_refuses_huge_or_fractional_floats(literal: str) -> None:
    # 1e300 used to be stored as a 301-digit int that the loader refused when the written spec was read again.
    with pytest.raises(ParameterError, match=r"^sea\.n_components = .*whole number") as info:
        _load("sea.n_components", f"sea.n_components={literal}")
    assert info.value.field == "sea.n_components"


def test_integer_field_keeps_to_the_toml_range_and_stays_exact() -> None:
    # TOML v1.0.0, "Integer": 64-bit signed integers, -2**63 .. 2**63 - 1, handled losslessly.
    top = 2**63 - 1
    spec = _load("campaign.seed", f"campaign.seed={top}")
    assert spec.campaign.seed == top
    assert load_spec(dump_spec(spec)).campaign.seed == top
    # IEEE 754 binary64 has a 53-bit significand: 2**62 + 1 has no float, so it must not pass through one.
    spec = _load("campaign.seed", f"campaign.seed={2**62 + 1}")
    assert spec.campaign.seed == 2**62 + 1
    # 2**63 is one past the 64-bit range: refused (tomllib itself reads it as a Python int)
    with pytest.raises(ParameterError, match="64-bit"):
        _load("campaign.seed", f"campaign.seed={2**63}")
    with pytest.raises(ParameterError, match="64-bit"):
        check_value("n", 2.0**63, Bounds(ge=0, integer=True))
    assert check_value("n", 2.0**62, Bounds(ge=0, integer=True)) == 2**62


@pytest.mark.parametrize("path", ["campaign.record_interval_s", "scenario.duration_s", "stack.pilot.control_period_s"])
def test_timing_field_at_1e308_is_refused_not_overflowing(path: str) -> None:
    # 1e308 / dt_s overflows to inf; round(inf) used to raise OverflowError in Spec._check
    with pytest.raises(ParameterError) as info:
        _load("scenario.duration_s", f"{path}=1e308")
    assert info.value.field.startswith(("scenario.", "campaign.", "stack.pilot."))


@pytest.mark.parametrize(
    ("setting", "field", "message"),
    [
        ("sensors.gps.rate_hz=5e-324", "sensors.gps.rate_hz", "whole number"),
        ("sensors.gps.latency_s=1e308", "sensors.gps.latency_s", "whole number"),
        ("scenario.dt_s=5e-324", "scenario.duration_s", "at most 9007199254740992 time steps"),
        ("scenario.duration_s=1e300", "scenario.duration_s", "at most 9007199254740992 time steps"),
    ],
)
def test_extreme_steps_rates_and_latencies_are_refused(setting: str, field: str, message: str) -> None:
    # 5e-324 is the smallest subnormal double (IEEE 754): 1 / 5e-324 overflows, x * 5e-324 underflows to 0.
    # IEEE 754 binary64 holds every whole number only up to 2**53 = 9007199254740992: beyond it "a whole
    # number of steps" cannot be told from "not quite", so a scenario is at most 2**53 steps.
    with pytest.raises(ParameterError, match=message) as info:
        _load("sensors.gps.rate_hz", setting)
    assert info.value.field == field


@pytest.mark.parametrize("key", ["lat_deg", "lon_deg", "h_m"])
def test_origin_refuses_a_list_like_every_other_parameter_table(key: str) -> None:
    with pytest.raises(ParameterError, match="not an array") as info:
        _load("scenario.origin.lat_deg", f"scenario.origin.{key}=[1]")
    assert info.value.field == f"scenario.origin.{key}"
    with pytest.raises(ParameterError) as info:
        _load("scenario.origin.lat_deg", f'scenario.origin.{key}="x"')
    assert info.value.field == f"scenario.origin.{key}"


@pytest.mark.parametrize("literal", ["1e300", "-1e300", "1e308"])
def test_hull_overflow_is_a_parameter_error_not_a_warning(literal: str) -> None:
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        with pytest.raises(ParameterError, match="overflow") as info:
            _load("craft.hull.xg_m", f"craft.hull.xg_m={literal}")
    assert info.value.field == "craft.hull.xg_m"


def test_hull_overflow_in_per_trial_arrays_is_refused_quietly() -> None:
    from wavebench.craft.catalogue import DEMO_CRAFT_NAMES, demo_craft
    from wavebench.craft.hull import HullParams

    hull = demo_craft(DEMO_CRAFT_NAMES[0]).hull
    fields = {k: getattr(hull, k) for k in HullParams.__dataclass_fields__}
    fields["mass_kg"] = [1.0e3, sys.float_info.max]  # IEEE 754: the largest finite double
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        with pytest.raises(ParameterError, match="overflow") as info:
            HullParams(**fields)
    assert info.value.field == "mass_kg"


@pytest.mark.parametrize("literal", ["1e-300", "1e-9"])
def test_survey_line_spacing_that_would_build_too_many_lines_is_refused(literal: str) -> None:
    # a near-zero spacing used to try to allocate ~1e9+ survey lines (MemoryError) at load time
    with pytest.raises(ParameterError, match="survey lines") as info:
        _load("mission.line_spacing_m", f"mission.line_spacing_m={literal}")
    assert info.value.field == "mission.line_spacing_m"


def test_ned_point_bound_lies_beyond_every_place_on_earth() -> None:
    # geographiclib's WGS-84 ellipsoid: semi-major axis a = 6 378 137 m (NIMA TR8350.2, WGS 84 defining
    # parameters); half the equatorial circumference, pi * a, is as far as any place lies from the origin
    # along the surface, so the bound on NED points refuses no real place
    from geographiclib.geodesic import Geodesic

    from wavebench.spec.fields import MAX_NED_M

    assert MAX_NED_M >= math.pi * Geodesic.WGS84.a
    assert MAX_NED_M < 1e150  # its square is still far inside float64 (IEEE 754 max ~1.8e308)


@pytest.mark.parametrize("vertex", ["[1e300, 0.0]", "[0.0, -2.5e7]"])
def test_survey_polygon_far_outside_the_earth_is_refused_quietly(vertex: str) -> None:
    # 1e300 squared overflowed float64 in the convexity check (a RuntimeWarning, not a ParameterError)
    setting = f"mission.polygon_ne_m=[{vertex}, [0.0, 100.0], [-100.0, 0.0]]"
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        with pytest.raises(ParameterError, match="km of the NED origin") as info:
            _load("mission.polygon_ne_m", setting)
    assert info.value.field == "mission.polygon_ne_m[0]"
