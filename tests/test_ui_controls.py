"""Generated parameter controls (wavebench.ui.controls), headless with real ipywidgets objects.

What the controls must do is the spec schema's own contract: the bounds,
choices and units a field declares in its metadata (``wavebench/spec/fields.py``,
``wavebench/core/params.py``) and the loader's verdict on a value
(``wavebench.spec.spec_from_data``). No outside standard applies to a user
interface; the checks compare the widgets against that contract — the
bounds read from the field declarations, the message raised by the real
loader for the same change, the content hash of the spec — never against
values copied from the controls' own output.
"""

from __future__ import annotations

import copy
import dataclasses
import math
import typing
from typing import Any

import ipywidgets as widgets
import pytest
import tomllib
import traitlets

from wavebench.core.errors import ParameterError
from wavebench.core.params import Params
from wavebench.spec import (
    CraftSpec,
    SeaSpec,
    Spec,
    StackSpec,
    example_spec_names,
    example_spec_path,
    load_spec,
    spec_from_data,
    spec_hash,
    spec_to_data,
)
from wavebench.spec.sensors import SensorSpec
from wavebench.ui.controls import SpecEditor, TableSection, field_kinds, reachable_tables
from wavebench.ui.twin import TWIN_CLASS

NAMES = example_spec_names()


def _walk_classes(cls: type, seen: list[type]) -> None:
    """Every table/parameter class reachable from ``cls`` by its field declarations (the test's own walk)."""
    if cls in seen:
        return
    seen.append(cls)
    hints = typing.get_type_hints(cls)
    for f in dataclasses.fields(cls):
        meta = f.metadata
        nested = meta.get("table") or meta.get("params") or meta.get("named_tables")
        if nested is None and issubclass(cls, Params):
            options = typing.get_args(hints[f.name]) or (hints[f.name],)
            found = [o for o in options if isinstance(o, type) and issubclass(o, Params)]
            nested = found[0] if found else None
        if nested is not None:
            _walk_classes(nested, seen)


def _flatten(data: Any, prefix: str = "") -> dict[str, Any]:
    """Leaf values of plain spec data by dotted path (a distribution is one leaf)."""
    from wavebench.spec.distributions import DISTRIBUTION_KINDS

    out: dict[str, Any] = {}
    for key, value in data.items():
        path = f"{prefix}{key}"
        if isinstance(value, dict) and not any(k in DISTRIBUTION_KINDS for k in value):
            out.update(_flatten(value, path + "."))
        else:
            out[path] = value
    return out


def _check_number_control(control: Any, f: dataclasses.Field) -> None:
    bounds = f.metadata["bounds"]
    assert control.bounds == bounds
    w = control.value_widget
    if isinstance(w, (widgets.FloatSlider, widgets.IntSlider)):
        lo = bounds.ge if bounds.ge is not None else bounds.gt
        hi = bounds.le if bounds.le is not None else bounds.lt
        assert (w.min, w.max) == (pytest.approx(lo), pytest.approx(hi))
    else:
        # a box that does not clamp, so the validator (not the widget) judges the value
        assert isinstance(w, (widgets.FloatText, widgets.IntText, widgets.Text))
    if f.metadata.get("unit") and f.metadata["unit"] != "1":
        assert f"[{f.metadata['unit']}]" in control.label.value
    assert bounds.describe() in control.label.tooltip


def test_controls_for_every_table_class_reachable_from_spec() -> None:
    seen: list[type] = []
    _walk_classes(Spec, seen)
    assert set(reachable_tables(Spec)) == set(seen)
    for cls in (SeaSpec, CraftSpec, StackSpec, SensorSpec):
        assert cls in seen
    for cls in seen:
        section = TableSection((cls.__name__,), cls, {})
        for f, kind, _ in field_kinds(cls):
            path = f"{cls.__name__}.{f.name}"
            if kind in ("table", "params", "named_tables"):
                assert path not in section.controls
                continue
            control = section.controls[path]
            if "bounds" in f.metadata:
                assert kind == "number"
                _check_number_control(control, f)
                assert (control.dist_widget is not None) == bool(f.metadata.get("dist"))
            elif f.metadata.get("choices"):
                values = [v for _, v in control.value_widget.options if v != ""]
                assert values == list(f.metadata["choices"])
            elif "texts" in f.metadata:
                assert list(control.value_widget.options) == list(f.metadata["texts"])


@pytest.mark.parametrize("name", NAMES)
def test_every_example_spec_round_trips_through_its_controls(name: str) -> None:
    spec = load_spec(example_spec_path(name))
    editor = SpecEditor(spec)
    leaves = _flatten(spec_to_data(spec))
    assert set(leaves) <= set(editor.controls)  # a control for every field written in the spec ...
    for path in set(editor.controls) - set(leaves):  # ... and one showing "absent" for every optional field left out
        assert editor.controls[path].read() in (None, False, "")
    for control in editor.controls.values():
        if control.kind == "number":
            _check_number_control(control, control.field)
    # spec -> panel -> spec: rebuilt from what the widgets show, through the loader
    assert spec_hash(editor.read_controls()) == spec_hash(spec)
    assert spec_hash(editor.spec) == spec_hash(spec)


def _editor(name: str = "skerrow_sound", **kw: Any) -> SpecEditor:
    return SpecEditor(load_spec(example_spec_path(name)), **kw)


def _loader_message(spec: Spec, path: str, value: Any) -> str:
    """The message the real loader gives for the same change."""
    data = copy.deepcopy(spec_to_data(spec))
    node = data
    keys = path.split(".")
    for k in keys[:-1]:
        node = node.setdefault(k, {})
    node[keys[-1]] = value
    with pytest.raises(ParameterError) as err:
        spec_from_data(data)
    return str(err.value)


def test_negative_hs_shows_the_validators_message_and_keeps_the_spec() -> None:
    editor = _editor()
    before = spec_hash(editor.spec)
    control = editor.control("sea.hs_m")
    control.mode_widget.value = "value"  # hs_m holds a distribution in this spec
    assert not editor.errors
    after_mode = editor.spec
    control.value_widget.value = -1.0
    expected = _loader_message(after_mode, "sea.hs_m", -1.0)
    assert control.error_label.value == expected == editor.errors["sea.hs_m"]
    assert "sea.hs_m" in expected and "-1.0" in expected and "> 0" in expected
    assert editor.spec is after_mode and spec_hash(after_mode) != before
    control.value_widget.value = 1.5  # a valid value clears the message
    assert control.error_label.value == "" and "sea.hs_m" not in editor.errors
    assert editor.spec.sea.hs_m == 1.5


def test_choice_not_in_the_list_is_refused_with_the_allowed_choices() -> None:
    editor = _editor()
    before = spec_hash(editor.spec)
    assert editor.set_value("sea.kind", "jonswapp") is False
    message = editor.errors["sea.kind"]
    assert message == _loader_message(editor.spec, "sea.kind", "jonswapp")
    assert "must be one of ['jonswap', 'pierson_moskowitz']" in message and "did you mean 'jonswap'" in message
    assert editor.control("sea.kind").error_label.value == message
    assert spec_hash(editor.spec) == before
    # a Dropdown cannot even hold a value outside its options
    with pytest.raises(traitlets.TraitError):
        editor.control("sea.kind").value_widget.value = "jonswapp"


@pytest.mark.parametrize(
    ("text", "needle"),
    [
        ("{ normal = [2.0, 0.3] }", "sea.tp_s.normal"),  # the right kind in the wrong form
        ("{ uniform = [6.0, 5.0] }", "low < high"),
        ("{ uniform = [0.0, 5.0] }", "sea.tp_s"),  # support breaks the bound tp_s > 0
        ("{ gaussian = { mean = 6.0, sd = 1.0 } }", "unknown distribution"),
        ("{ uniform = [5.0, 7.5]", "must be a TOML value"),  # not TOML at all
    ],
)
def test_malformed_distribution_shows_a_message_next_to_the_control(text: str, needle: str) -> None:
    editor = _editor()
    before = spec_hash(editor.spec)
    control = editor.control("sea.tp_s")
    assert control.mode == "distribution"
    control.dist_widget.value = text
    message = editor.errors["sea.tp_s"]
    assert control.error_label.value == message and needle in message
    if needle != "must be a TOML value":
        from wavebench.ui.controls import parse_literal

        assert message == _loader_message(editor.spec, "sea.tp_s", parse_literal(text, "sea.tp_s"))
    assert spec_hash(editor.spec) == before


@pytest.mark.parametrize(
    ("path", "new"),
    [
        ("sea.n_components", 64),  # IntText
        ("scenario.origin.lat_deg", 47.25),  # slider (both bounds finite: -90..90)
        ("stack.guide.kind", "los"),  # Dropdown
        ("stack.pilot.reference_model", False),  # Checkbox
        ("scenario.name", "renamed"),  # Text
        ("sea.depth_m", math.inf),  # may be inf: typed as TOML text
        ("mission.waypoints_ne_m", [[0.0, 0.0], [100.0, 0.0]]),  # a list as TOML
    ],
)
def test_changing_one_control_changes_exactly_that_field(path: str, new: Any) -> None:
    editor = _editor()
    before = _flatten(spec_to_data(editor.spec))
    control = editor.control(path)
    w = control.value_widget
    if isinstance(w, widgets.Text) and control.kind in ("number", "literal"):
        from wavebench.ui.controls import toml_literal

        w.value = toml_literal(new)
    else:
        w.value = new
    assert not editor.errors, editor.errors
    after = _flatten(spec_to_data(editor.spec))
    changed = {k for k in set(before) | set(after) if before.get(k) != after.get(k)}
    assert changed == {path}
    assert after[path] == new


def test_distribution_mode_and_absent_mode() -> None:
    editor = _editor()
    control = editor.control("sea.gamma")  # optional: absent means the DNV rule
    assert control.mode == "absent"
    control.mode_widget.value = "value"
    control.value_widget.value = 3.3
    assert editor.spec.sea.gamma == 3.3
    control.mode_widget.value = "distribution"
    control.dist_widget.value = "{ uniform = [2.0, 4.0] }"
    assert editor.spec.sea.gamma.low == 2.0 and editor.spec.sea.gamma.high == 4.0
    control.mode_widget.value = "absent"
    assert editor.spec.sea.gamma is None and not editor.errors


def test_spec_to_code_and_back_stays_in_sync() -> None:
    editor = _editor("skerrow_sound")
    seen: list[str] = []
    editor.on_change(lambda spec: seen.append(spec_hash(spec)))
    other = load_spec(example_spec_path("dulse_bay"))
    editor.set_spec(other)  # code -> panel
    assert spec_hash(editor.read_controls()) == spec_hash(other)
    assert seen == [spec_hash(other)]
    editor.control("campaign.trials").value_widget.value = 7  # panel -> code
    assert editor.spec.campaign.trials == 7 and seen[-1] == spec_hash(editor.spec)


def test_optional_table_remove_and_add() -> None:
    editor = _editor("dulse_bay")
    editor.section("current.variation").remove_button.click()
    assert editor.spec.current.variation is None
    assert "current.variation.speed_tc_s" not in editor.controls
    editor.section("current.variation").add_button.click()
    assert editor.spec.current.variation is not None and not editor.errors
    assert "current.variation.speed_tc_s" in editor.controls


def test_toml_save_and_load_through_a_real_file(tmp_path: Any) -> None:
    editor = _editor("brannock_bridge")
    editor.control("campaign.seed").value_widget.value = 12345
    target = tmp_path / "edited.toml"
    editor.path_text.value = str(target)
    editor.save_button.click()
    assert target.is_file() and "saved" in editor.status.value
    assert spec_hash(load_spec(target)) == spec_hash(editor.spec)
    assert load_spec(editor.to_toml()).campaign.seed == 12345

    fresh = _editor("skerrow_sound")
    fresh.path_text.value = str(target)
    fresh.load_button.click()
    assert spec_hash(fresh.spec) == spec_hash(editor.spec)
    assert fresh.control("campaign.seed").value_widget.value == 12345

    bad = tmp_path / "bad.toml"
    bad.write_text(target.read_text(encoding="utf-8").replace("seed = 12345", "seed = -4"), encoding="utf-8")
    fresh.path_text.value = str(bad)
    fresh.load_button.click()  # refused: the message is shown, the spec kept
    assert "campaign.seed = -4 is not allowed" in fresh.status.value
    assert spec_hash(fresh.spec) == spec_hash(editor.spec)
    fresh.path_text.value = str(tmp_path / "missing.toml")
    fresh.load_button.click()
    assert "no such spec file" in fresh.status.value
    assert spec_hash(fresh.load_toml(target)) == spec_hash(editor.spec)


def test_restricted_editor_and_static_twin() -> None:
    editor = _editor("skerrow_sound", tables=("sea",))
    assert editor.controls and all(p.startswith("sea.") for p in editor.controls)
    editor.set_value("sea.n_components", 0)
    html = editor._repr_mimebundle_()["text/html"]
    assert TWIN_CLASS in html and "[sea]" in html and "[campaign]" not in html
    assert "sea.n_components = 0 is not allowed" in html and "<script" not in html


def test_kind_switch_needing_several_fields_goes_through_the_tables_toml() -> None:
    editor = _editor("dulse_bay")
    # one control at a time cannot do it: flat needs depth_m, which synthetic_bay refuses
    assert editor.set_value("seabed.kind", "flat") is False
    assert editor.errors["seabed.kind"] == _loader_message(editor.spec, "seabed.kind", "flat")
    section = editor.section("seabed")
    section.toggle_toml()
    assert tomllib.loads(section.toml_text.value) == spec_to_data(editor.spec)["seabed"]  # shows the table
    section.toml_text.value = 'kind = "flat"\ndepth_m = 15.0\n'
    section.toml_apply.click()
    assert editor.spec.seabed.kind == "flat" and editor.spec.seabed.depth_m == 15.0
    assert "seabed.bay.n_shoals" not in editor.controls and "seabed" not in editor.errors
    before = spec_hash(editor.spec)
    editor.section("seabed").apply_toml('kind = "flat"\ndepth_m = -1.0\n')
    message = editor.errors["seabed"]
    assert message == _loader_message(editor.spec, "seabed.depth_m", -1.0)
    assert editor.section("seabed").error_label.value == message and spec_hash(editor.spec) == before


@pytest.mark.parametrize("value", [None, -1, "x", True, [1.0], [[1, 2], "x"], {"a": 1}, {"choice": []}, {}, [], 1e300])
def test_no_exception_escapes_for_odd_values(value: Any) -> None:
    editor = _editor("brannock_bridge", tables=("scenario", "sea", "campaign"))
    for path in list(editor.controls):
        before = spec_hash(editor.spec)
        if editor.set_value(path, value):  # accepted: the loader's own verdict on the same change
            spec_from_data(spec_to_data(editor.spec))
            editor.set_spec(load_spec(example_spec_path("brannock_bridge")))
        else:  # refused: the message is beside the control and the spec is unchanged
            assert editor.errors[path].startswith(path)
            assert spec_hash(editor.spec) == before
