"""The Stack panel and the loop diagram (headless: real ipywidgets / anywidget objects, no browser).

Most checks are behaviour checks of our own UI against our own loader and
schema (no outside source applies); the few that lean on something outside
the project say so beside the check: XML well-formedness (W3C XML 1.0, via
the standard library's parser) and the same drawing from the ES module run
by Node.js.
"""

from __future__ import annotations

import json
import re
import shutil
import subprocess
import xml.etree.ElementTree as ET
from pathlib import Path

import pytest
from twin_images import twin_svgs

from wavebench.spec import (
    NAVIGATOR_NEEDS,
    NAVIGATORS,
    SENSOR_KINDS,
    example_spec_names,
    example_spec_path,
    load_spec,
    spec_from_data,
    spec_hash,
)
from wavebench.ui.loop_diagram import NAVIGATOR_READS, ROLES, LoopDiagram, loop_layout, loop_svg
from wavebench.ui.stack_panel import StackPanel, check_stack, new_sensor_data
from wavebench.ui.twin import TWIN_CLASS

SVG_NS = "{http://www.w3.org/2000/svg}"
STATIC = Path(__file__).parents[1] / "wavebench" / "ui" / "static"


@pytest.fixture(scope="module")
def panels():
    """One panel per example spec (built once: the first stack build of a craft identifies its Nomoto model)."""
    return {name: (load_spec(example_spec_path(name)), StackPanel(load_spec(example_spec_path(name))))
            for name in example_spec_names()}  # fmt: skip


def _text(html: str) -> str:
    return re.sub(r"<[^>]+>", " ", html)


def _box_contains(node, p, tol=0.6):
    """Point p lies on the box's outline (inside the box grown by tol, outside it shrunk by tol)."""
    x, y = p
    grown = node["x"] - tol <= x <= node["x"] + node["w"] + tol and node["y"] - tol <= y <= node["y"] + node["h"] + tol
    inner = node["x"] + tol < x < node["x"] + node["w"] - tol and node["y"] + tol < y < node["y"] + node["h"] - tol
    return grown and not inner


# ---------------------------------------------------------------------------
# every example spec
# ---------------------------------------------------------------------------


@pytest.mark.parametrize("name", example_spec_names())
def test_panel_shows_every_example_spec_and_round_trips(panels, name):
    # behaviour check of our own UI against our own loader (no outside source)
    spec, panel = panels[name]
    assert panel.messages == []
    table = _text(panel.roles_table.value)
    assert spec.stack.navigator in table
    for _, sensor in spec.sensors:
        assert f"sensor: {sensor.kind}" in table
    roles = [r["role"] for r in panel.roles()]
    assert roles[: len(ROLES)] == list(ROLES)
    assert panel.navigator_choice.value == spec.stack.navigator
    assert panel.guide_choice.value == spec.stack.guide.kind
    # panel -> spec through the real loader gives the same content hash
    assert spec_hash(spec_from_data(panel.draft)) == spec_hash(spec)
    assert spec_hash(panel.spec) == spec_hash(spec)


@pytest.mark.parametrize("name", example_spec_names())
def test_choosing_away_and_back_restores_the_same_spec(name):
    # behaviour check: what a change removes (terrain table, inline craft, sensors) comes back on undo
    spec = load_spec(example_spec_path(name))
    panel = StackPanel(spec)
    original = spec.stack.navigator
    for nav in NAVIGATORS:
        if nav != original:
            panel.choose("navigator", nav)
            panel.choose("navigator", original)
            assert panel.messages == []
            assert spec_hash(panel.spec) == spec_hash(spec), nav
    craft_now = panel.craft_choice.value
    for _, value in panel.craft_choice.options:
        if value != craft_now:
            panel.choose("craft", value)
            panel.choose("craft", craft_now)
            assert spec_hash(panel.spec) == spec_hash(spec), value
    for _, s in spec.sensors:
        panel.remove_sensor(s.kind)
        panel.add_sensor(s.kind)
    assert panel.messages == []
    assert spec_hash(panel.spec) == spec_hash(spec)


# ---------------------------------------------------------------------------
# refusals shown inline, last valid spec kept
# ---------------------------------------------------------------------------


def test_ekf_without_its_sensors_is_refused_then_accepted_as_they_are_added():
    # behaviour check against NAVIGATOR_NEEDS["ekf"] (our schema): IMU, a heading source, a position fix
    spec = load_spec(example_spec_path("skerrow_sound"))
    assert spec.stack.navigator == "truth" and spec.sensors == ()
    seen = []
    panel = StackPanel(spec, on_change=seen.append)
    panel.navigator_choice.value = "ekf"  # as the dropdown does
    assert len(panel.messages) == 1
    msg = panel.messages[0]
    assert msg.startswith("stack.navigator = 'ekf' is not allowed") and "'imu'" in msg
    assert "Traceback" not in panel.message_box.value and "imu" in panel.message_box.value
    assert spec_hash(panel.spec) == spec_hash(spec) and seen == []
    lay = panel.diagram.layout
    states = {n["id"]: n["state"] for n in lay["nodes"]}
    assert states["navigator"] == "missing" and states["sensor:imu"] == "missing"
    assert {"sensor:imu", "sensor:gnss", "sensor:compass"} <= {
        e["source"] for e in lay["edges"] if e["target"] == "navigator" and e["state"] == "missing"
    }
    assert panel.sensor_buttons["imu"].description == "add"
    panel.sensor_buttons["imu"].click()
    assert "'compass' or 'gyrocompass'" in panel.messages[0]
    assert spec_hash(panel.spec) == spec_hash(spec)
    panel.sensor_buttons["compass"].click()
    assert "'gnss' or 'acoustic'" in panel.messages[0]
    panel.sensor_buttons["gnss"].click()
    assert panel.messages == []
    assert "not accepted" not in panel.message_box.value
    assert panel.spec.stack.navigator == "ekf"
    assert sorted(s.kind for _, s in panel.spec.sensors) == ["compass", "gnss", "imu"]
    assert len(seen) == 1 and seen[0] is panel.spec
    assert panel.sensor_buttons["gnss"].description == "remove"
    # the same spec through the loader (round trip of the accepted draft)
    assert spec_hash(spec_from_data(panel.draft)) == spec_hash(panel.spec)


def test_removing_a_needed_sensor_is_refused_and_adding_it_back_clears_it():
    spec = load_spec(example_spec_path("carrick_deep"))  # terrain navigator, no GNSS
    panel = StackPanel(spec)
    assert not panel.remove_sensor("altimeter")
    assert "'altimeter'" in panel.messages[0]
    assert spec_hash(panel.spec) == spec_hash(spec)
    assert panel.add_sensor("altimeter")
    assert panel.messages == [] and spec_hash(panel.spec) == spec_hash(spec)
    assert not panel.choose("navigator", "ekf")
    assert "'gnss' or 'acoustic'" in panel.messages[0]
    assert panel.add_sensor("gnss")
    assert panel.spec.stack.navigator == "ekf" and panel.spec.stack.terrain is None


def test_refusals_from_building_the_stack_are_shown_too():
    # a craft too slow for the ordered speed (check_spec_against_craft) and two heading sources (build_nav_pack)
    spec = load_spec(example_spec_path("brannock_bridge"))
    panel = StackPanel(spec)
    assert spec.mission.speed_mps > 2.0  # Dulse's top speed is 2.0 m/s by construction (craft catalogue)
    assert not panel.choose("craft", "Dulse")
    assert panel.messages[0].startswith("mission.speed_mps") and "Dulse" in panel.messages[0]
    assert spec_hash(panel.spec) == spec_hash(spec)
    assert panel.choose("craft", "Tholepin")
    assert not panel.add_sensor("gyrocompass")
    assert "heading source" in panel.messages[0]
    assert panel.remove_sensor("compass")
    assert sorted(s.kind for _, s in panel.spec.sensors) == ["gnss", "gyrocompass", "imu"]


def test_set_spec_and_check_stack():
    a = load_spec(example_spec_path("skerrow_sound"))
    b = load_spec(example_spec_path("brannock_bridge"))
    panel = StackPanel(a)
    seen = []
    panel.on_change(seen.append)
    panel.choose("navigator", "ekf")  # refused draft
    panel.set_spec(b)
    assert panel.messages == [] and panel.spec is b and seen == [b]
    assert panel.navigator_choice.value == "ekf"
    found = check_stack({"spec_version": 1})
    assert found.spec is None and found.messages == ["scenario = None is not allowed: is required but missing"]
    with pytest.raises(ValueError, match="spec"):
        StackPanel({"not": "a spec"})


def test_new_sensor_rates_are_whole_control_periods():
    # behaviour check of our defaults against the schema's rate rule (loader accepts them)
    data = {"scenario": {"dt_s": 0.25}, "mission": {"waypoints_ne_m": [[0.0, 0.0], [10.0, 0.0]]}}
    for kind in SENSOR_KINDS:
        s = new_sensor_data(kind, data)
        k = 1.0 / (s["rate_hz"] * 0.25)
        assert abs(k - round(k)) < 1e-9 and round(k) >= 1
    assert new_sensor_data("acoustic", data)["beacons_ned_m"] == [[5.0, 0.0, 2.0]]


# ---------------------------------------------------------------------------
# the diagram
# ---------------------------------------------------------------------------


@pytest.mark.parametrize("name", example_spec_names())
def test_diagram_has_one_node_per_role_and_edges_as_wired(panels, name):
    spec, panel = panels[name]
    lay = panel.diagram.layout
    assert lay == loop_layout(panel.draft)
    json.dumps(panel.diagram.get_state())  # the trait travels as JSON
    roles = [n["id"] for n in lay["nodes"] if n["kind"] == "role"]
    assert sorted(roles) == sorted(ROLES) and len(roles) == len(set(roles))
    assert sorted(n["id"] for n in lay["nodes"] if n["kind"] == "sensor") == sorted(f"sensor:{k}" for k in SENSOR_KINDS)
    nodes = {n["id"]: n for n in lay["nodes"]}
    nav = spec.stack.navigator
    fitted = {s.kind for _, s in spec.sensors}
    into_nav = {e["source"] for e in lay["edges"] if e["target"] == "navigator" and e["source"].startswith("sensor:")}
    assert into_nav == {f"sensor:{k}" for k in fitted & NAVIGATOR_READS[nav]}
    for group in NAVIGATOR_NEEDS[nav]:  # a valid spec meets every need, through a drawn edge
        assert into_nav & {f"sensor:{k}" for k in group}
    assert not [e for e in lay["edges"] if e["state"] == "missing"]
    for k in SENSOR_KINDS:
        state = nodes[f"sensor:{k}"]["state"]
        assert state == ("absent" if k not in fitted else "used" if k in NAVIGATOR_READS[nav] else "idle")
    for role in ("sea", "current", "wind", "seabed"):
        assert nodes[role]["state"] == ("used" if getattr(spec, role) is not None else "absent")
    loop = [("navigator", "guide"), ("guide", "pilot"), ("pilot", "actuators"), ("actuators", "craft")]
    ids = {(e["source"], e["target"]) for e in lay["edges"]}
    assert set(loop) <= ids
    for e in lay["edges"]:  # each edge leaves its source's outline and ends on its target's
        assert _box_contains(nodes[e["source"]], e["points"][0]), e["id"]
        assert _box_contains(nodes[e["target"]], e["points"][-1]), e["id"]


def test_loop_diagram_widget_redraws_on_a_new_layout():
    view = LoopDiagram()
    assert view.layout == {}
    lay = loop_layout({"craft": {"demo": "Dulse"}, "stack": {"navigator": "ekf"}})
    view.layout = lay
    assert view.get_state()["layout"]["nodes"] == lay["nodes"]
    assert "export default" in view.get_state()["_esm"]
    assert view.svg() == loop_svg(lay)


# ---------------------------------------------------------------------------
# the static twin
# ---------------------------------------------------------------------------


@pytest.mark.parametrize("name", example_spec_names())
def test_static_twin_has_svg_and_no_script(panels, name):
    spec, panel = panels[name]
    bundle = panel._repr_mimebundle_()
    assert "application/vnd.jupyter.widget-view+json" in bundle
    page = bundle["text/html"]
    assert TWIN_CLASS in page and "<svg" not in page  # the diagram is an <img> data URI (survives the sanitiser)
    assert not re.search(r"<\s*script", page, re.I)
    assert not re.search(r"\son[a-z]+\s*=", page, re.I)  # no inline event handlers either
    (svg,) = twin_svgs(page)
    root = ET.fromstring(svg)  # W3C XML 1.0 well-formedness (Python's xml.etree parser)
    assert root.tag == f"{SVG_NS}svg"
    shown = [g.get("data-id") for g in root.iter(f"{SVG_NS}g") if "wb-node" in (g.get("class") or "")]
    assert sorted(shown) == sorted(n["id"] for n in panel.diagram.layout["nodes"])
    assert spec.stack.navigator in _text(page)


def test_static_twin_shows_the_refusal():
    panel = StackPanel(load_spec(example_spec_path("skerrow_sound")))
    panel.choose("navigator", "dead_reckoning")
    html = panel.static_html()
    assert "not accepted" in html and "&#x27;imu&#x27;" in html
    assert "<script" not in html


# ---------------------------------------------------------------------------
# the ES module draws what the static twin draws
# ---------------------------------------------------------------------------

_FAKE_DOM = r"""
class El {
  constructor(tag) { this.tag = tag; this.attrs = {}; this.children = []; this._text = ""; }
  setAttribute(k, v) { this.attrs[k] = String(v); }
  appendChild(c) { this.children.push(c); return c; }
  removeChild(c) { this.children = this.children.filter((x) => x !== c); }
  get firstChild() { return this.children[0] || null; }
  set textContent(t) { this._text = String(t); }
  get textContent() { return this._text; }
}
globalThis.document = { createElementNS: (ns, tag) => new El(tag), createElement: (tag) => new El(tag) };
const mod = await import(process.argv[2]);
const layout = JSON.parse(await new Promise((ok) => { let s = ""; process.stdin.on("data", (d) => s += d); process.stdin.on("end", () => ok(s)); }));
const host = new El("div");
const model = { get: () => layout, on: () => {}, off: () => {} };
mod.default.render({ model, el: host });
const flat = [];
(function walk(e) { flat.push({ tag: e.tag, attrs: e.attrs, text: e._text }); e.children.forEach(walk); })(host.children[0].children[0]);
process.stdout.write(JSON.stringify(flat));
"""


def _same_value(a: str, b: str) -> bool:
    nums_a, nums_b = re.split(r"[ ,]+", a.strip()), re.split(r"[ ,]+", b.strip())
    try:
        return len(nums_a) == len(nums_b) and all(
            abs(float(x) - float(y)) < 1e-6 for x, y in zip(nums_a, nums_b, strict=True)
        )
    except ValueError:
        return a == b


@pytest.mark.skipif(shutil.which("node") is None, reason="Node.js not installed")
def test_es_module_draws_the_same_elements_as_the_static_svg(tmp_path):
    # the browser half, run by Node.js with a minimal stand-in for the DOM
    module = tmp_path / "loop_diagram.mjs"
    module.write_text((STATIC / "loop_diagram.js").read_text(encoding="utf-8"), encoding="utf-8")
    script = tmp_path / "run.mjs"
    script.write_text(_FAKE_DOM, encoding="utf-8")
    data = {"craft": {"demo": "Tholepin"}, "stack": {"navigator": "terrain"}, "sea": {"hs_m": 1.0, "tp_s": 5.0},
            "sensors": {"u": {"kind": "imu"}, "g": {"kind": "gnss"}, "d": {"kind": "dvl"}}}  # fmt: skip
    lay = loop_layout(data)
    out = subprocess.run(["node", str(script), module.as_uri()], input=json.dumps(lay), capture_output=True,
                         text=True, timeout=30, check=True)  # fmt: skip
    drawn = json.loads(out.stdout)
    root = ET.fromstring(loop_svg(lay))
    static = [{"tag": e.tag.removeprefix(SVG_NS), "attrs": dict(e.attrib), "text": e.text or ""} for e in root.iter()]
    assert [d["tag"] for d in drawn] == [s["tag"] for s in static]
    for d, s in zip(drawn, static, strict=True):
        assert d["text"] == s["text"]
        assert set(d["attrs"]) == set(s["attrs"]), (d, s)
        for key, value in s["attrs"].items():
            assert _same_value(d["attrs"][key], value), (key, d["attrs"][key], value)


def test_sensor_settings_editor_is_linked_both_ways():
    # behaviour check: the generated controls (wavebench.ui.controls) and the panel share one valid spec
    panel = StackPanel(load_spec(example_spec_path("brannock_bridge")))
    assert panel.editor is None  # built when the section is opened
    panel.settings.selected_index = 0
    editor = panel.editor
    if editor is None:
        pytest.skip("wavebench.ui.controls not available")
    assert editor.set_value("sensors.gps.rate_hz", 2.0)
    assert dict(panel.spec.sensors)["gps"].rate_hz == 2.0
    assert "2 Hz" in panel.sensor_status["gnss"].value
    assert not editor.set_value("sensors.gps.rate_hz", -1.0)  # refused there, nothing changes here
    assert dict(panel.spec.sensors)["gps"].rate_hz == 2.0
    assert panel.remove_sensor("compass") is False  # ekf needs a heading source
    assert panel.choose("navigator", "truth")
    assert panel.remove_sensor("compass")
    assert "sensors.ahrs.rate_hz" not in editor.controls
    assert editor.spec is panel.spec
    assert panel.add_sensor("compass")  # the removed sensor comes back as it was
    assert "sensors.ahrs.rate_hz" in editor.controls and dict(panel.spec.sensors)["ahrs"].compass.noise_sd_deg == 1.0


def test_navigator_reads_cover_its_needs():
    # consistency of the diagram's table with the schema's NAVIGATOR_NEEDS (our own; no outside source)
    assert set(NAVIGATOR_READS) == set(NAVIGATORS)
    for nav, groups in NAVIGATOR_NEEDS.items():
        for group in groups:
            assert set(group) <= NAVIGATOR_READS[nav], (nav, group)
        assert NAVIGATOR_READS[nav] <= set(SENSOR_KINDS)
