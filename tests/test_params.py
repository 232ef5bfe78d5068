"""Tests of wavebench.core.params: validated, frozen parameter dataclasses.

These are behavioural tests of the validation contract (field name, value and
allowed range in every message; elementwise checks of per-trial arrays;
read-only arrays; unknown keys with a suggestion; dict round trip). The toy
block below is defined here for the tests and stands for no real block.
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass

import numpy as np
import pytest

from wavebench.core.errors import ParameterError
from wavebench.core.params import Params, bounded, params_from_dict, params_to_dict


@dataclass(frozen=True, kw_only=True)
class Toy(Params):
    """A toy block: one field per kind of bound."""

    hs_m: float = bounded(1.0, gt=0.0, le=20.0, unit="m", doc="significant wave height")
    gamma: float = bounded(3.3, ge=1.0, le=7.0, doc="peak enhancement factor")
    heading_deg: float = bounded(0.0, ge=0.0, lt=360.0, unit="deg", doc="wave heading")
    n_blades: float = bounded(3, ge=2, integer=True, doc="propeller blades")
    min_depth_m: float = bounded(1.0, ge=0.0, unit="m", doc="shallowest depth")
    max_depth_m: float = bounded(50.0, ge=0.0, unit="m", doc="deepest depth")
    label: str = "toy"

    def _check(self) -> None:
        if np.any(np.asarray(self.min_depth_m) > np.asarray(self.max_depth_m)):
            raise ParameterError("min_depth_m", self.min_depth_m, "must not exceed max_depth_m")


@dataclass(frozen=True, kw_only=True)
class Required(Params):
    mass_kg: float = bounded(gt=0.0, unit="kg", doc="mass")


# --- scalar validation -------------------------------------------------------


def test_defaults_and_units():
    t = Toy()
    assert (t.hs_m, t.gamma, t.heading_deg, t.label) == (1.0, 3.3, 0.0, "toy")
    assert Toy.field_units()["hs_m"] == "m"
    assert Toy.field_units()["heading_deg"] == "deg"
    assert Toy.field_units()["gamma"] == ""


def test_frozen():
    t = Toy()
    with pytest.raises(dataclasses.FrozenInstanceError):
        t.hs_m = 2.0  # type: ignore[misc]


@pytest.mark.parametrize(
    ("field", "value", "bound"),
    [
        ("hs_m", 0.0, "> 0.0"),
        ("hs_m", -1.5, "> 0.0"),
        ("hs_m", 20.5, "<= 20.0"),
        ("gamma", 0.99, ">= 1.0"),
        ("gamma", 7.01, "<= 7.0"),
        ("heading_deg", 360.0, "< 360.0"),
        ("heading_deg", -0.1, ">= 0.0"),
        ("n_blades", 1, ">= 2"),
    ],
)
def test_out_of_range_message_names_field_value_and_bound(field, value, bound):
    with pytest.raises(ParameterError) as info:
        Toy(**{field: value})
    msg = str(info.value)
    assert info.value.field == field
    assert msg.startswith(f"{field} = ")
    assert f"{field} = {value!r} " in msg  # the value as received
    assert bound in msg


def test_boundary_values_accepted():
    t = Toy(hs_m=20.0, gamma=1.0, heading_deg=0.0, n_blades=2, min_depth_m=0.0)
    assert (t.hs_m, t.gamma, t.n_blades) == (20.0, 1.0, 2)
    assert Toy(heading_deg=math.nextafter(360.0, 0.0)).heading_deg < 360.0


@pytest.mark.parametrize("value", [math.nan, math.inf, -math.inf, np.float64("nan")])
def test_non_finite_rejected(value):
    with pytest.raises(ParameterError) as info:
        Toy(gamma=value)
    msg = str(info.value)
    assert info.value.field == "gamma"
    assert repr(float(value)) in msg  # 'nan', 'inf' or '-inf'
    assert "finite" in msg and ">= 1.0" in msg and "<= 7.0" in msg


@pytest.mark.parametrize("value", ["2.0", True, False, None, object(), {"a": 1}])
def test_non_numbers_rejected(value):
    with pytest.raises(ParameterError) as info:
        Toy(hs_m=value)
    msg = str(info.value)
    assert info.value.field == "hs_m"
    assert repr(value) in msg
    assert "> 0.0" in msg and "<= 20.0" in msg


def test_integer_field_rejects_fraction():
    with pytest.raises(ParameterError, match=r"n_blades = 2\.5 .*whole number"):
        Toy(n_blades=2.5)
    assert Toy(n_blades=4.0).n_blades == 4


def test_numpy_scalars_become_floats():
    t = Toy(hs_m=np.float32(2.5), gamma=np.int64(2))
    assert t.hs_m == 2.5 and isinstance(t.hs_m, float)
    assert t.gamma == 2.0 and isinstance(t.gamma, float)


def test_cross_field_check():
    with pytest.raises(ParameterError, match=r"min_depth_m .*max_depth_m"):
        Toy(min_depth_m=60.0, max_depth_m=50.0)


# --- per-trial arrays ---------------------------------------------------------


def test_per_trial_array_accepted_and_frozen():
    src = np.array([0.5, 1.0, 2.0, 4.0])
    t = Toy(hs_m=src)
    assert isinstance(t.hs_m, np.ndarray)
    assert t.hs_m.shape == (4,)
    assert not t.hs_m.flags.writeable
    with pytest.raises(ValueError, match="read-only"):
        t.hs_m[0] = 3.0
    # the stored array is a copy: changing the caller's array changes nothing
    src[0] = 19.0
    assert t.hs_m[0] == 0.5


def test_list_becomes_array():
    t = Toy(gamma=[1.0, 3.3, 7.0])
    np.testing.assert_array_equal(t.gamma, [1.0, 3.3, 7.0])
    assert not t.gamma.flags.writeable


@pytest.mark.parametrize(("bad", "shown"), [(-1.0, "-1.0"), (25.0, "25.0"), (np.nan, "nan")])
def test_one_bad_element_rejected(bad, shown):
    values = np.full(1000, 1.0)
    values[517] = bad
    with pytest.raises(ParameterError) as info:
        Toy(hs_m=values)
    msg = str(info.value)
    assert info.value.field == "hs_m"
    assert "(1000,)" in msg  # the array is described by its shape ...
    assert shown in msg  # ... and its offending extreme
    assert "> 0.0" in msg and "<= 20.0" in msg


def test_one_fractional_element_rejected_for_integer_field():
    with pytest.raises(ParameterError, match="n_blades"):
        Toy(n_blades=np.array([2, 3, 3.5, 4]))


def test_cross_field_check_is_elementwise():
    with pytest.raises(ParameterError, match="min_depth_m"):
        Toy(min_depth_m=np.array([1.0, 80.0]), max_depth_m=np.array([50.0, 50.0]))


# --- dict round trip -----------------------------------------------------------


def test_unknown_key_rejected_with_suggestion():
    with pytest.raises(ParameterError) as info:
        params_from_dict(Toy, {"hs_m": 1.0, "gama": 2.0})
    msg = str(info.value)
    assert info.value.field == "gama"
    assert "did you mean 'gamma'?" in msg
    assert "unknown key" in msg


def test_unknown_key_with_path_prefix():
    with pytest.raises(ParameterError) as info:
        params_from_dict(Toy, {"heading": 10.0}, path="sea")
    assert info.value.field == "sea.heading"
    assert "did you mean 'heading_deg'?" in str(info.value)


def test_unknown_key_without_close_match_has_no_suggestion():
    with pytest.raises(ParameterError) as info:
        params_from_dict(Toy, {"zzzzzz": 1.0})
    assert "did you mean" not in str(info.value)


def test_bad_value_from_dict_gets_path_prefix():
    with pytest.raises(ParameterError) as info:
        params_from_dict(Toy, {"hs_m": -2.0}, path="sea")
    assert info.value.field == "sea.hs_m"
    assert str(info.value).startswith("sea.hs_m = -2.0")


def test_missing_required_key_rejected():
    with pytest.raises(ParameterError, match="mass_kg"):
        params_from_dict(Required, {}, path="craft")


def test_round_trip_scalars():
    t = Toy(hs_m=2.5, gamma=1.5, heading_deg=45.0, n_blades=4, label="x")
    d = params_to_dict(t)
    assert d == {
        "hs_m": 2.5,
        "gamma": 1.5,
        "heading_deg": 45.0,
        "n_blades": 4.0,
        "min_depth_m": 1.0,
        "max_depth_m": 50.0,
        "label": "x",
    }
    assert params_from_dict(Toy, d) == t


def test_round_trip_arrays():
    t = Toy(hs_m=np.array([0.5, 1.0, 2.0]), gamma=2.0)
    d = params_to_dict(t)
    assert d["hs_m"] == [0.5, 1.0, 2.0]
    assert isinstance(d["hs_m"], list)
    back = params_from_dict(Toy, d)
    for f in dataclasses.fields(Toy):
        np.testing.assert_array_equal(getattr(back, f.name), getattr(t, f.name))


# --- defects found in review, fixed ------------------------------------------


def test_numpy_bool_rejected():
    with pytest.raises(ParameterError, match="hs_m"):
        Toy(hs_m=np.True_)


@pytest.mark.parametrize("value", [["1.0", "2.0"], b"2", np.array(["3"])])
def test_strings_in_any_form_rejected(value):
    with pytest.raises(ParameterError, match="hs_m"):
        Toy(hs_m=value)


def test_equal_array_valued_params_compare_equal():
    assert Toy(hs_m=[1.0, 2.0]) == Toy(hs_m=[1.0, 2.0])
