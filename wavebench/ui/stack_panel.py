"""The Stack panel: which craft, guide, pilot, navigator and sensors fill each role of the loop.

The panel shows a spec's stack as a roles table and a diagram of the loop as
wired (:mod:`wavebench.ui.loop_diagram`), with dropdowns for the roles the
spec offers a choice for — the craft (the demo craft, or the spec's own
inline craft), the navigator, the guidance law and the autopilot — and one
row per sensor kind with an add / remove button.

Every change edits a *draft* of the spec's plain data
(:func:`~wavebench.spec.schema.spec_to_data`) and checks it the way a run
would (:func:`check_stack`):

1. the real loader, :func:`~wavebench.spec.schema.spec_from_data` (which
   refuses a navigator whose sensors are missing,
   :func:`~wavebench.spec.sensors.check_navigator_needs`, and a terrain
   navigator without a seabed);
2. the craft's checks, :func:`~wavebench.trial.setup.check_spec_against_craft`
   (an ordered speed above the chosen craft's top speed);
3. building the stack for one trial, :func:`~wavebench.trial.setup.build_trial_setup`
   (the navigator's sensor pack refuses two heading sources,
   :func:`~wavebench.trial.navigator.build_nav_pack`) and the wiring check
   run before every batch, :func:`~wavebench.trial.wiring.check_wiring`.

A draft that passes becomes the panel's new :attr:`StackPanel.spec`; one
that is refused leaves the last valid spec in place and shows the
:class:`~wavebench.core.errors.ParameterError` message inline (never a
traceback), while the controls and the diagram keep showing the draft, so
the user can go on — e.g. choose ``ekf``, then add the IMU, the compass and
the GNSS receiver it asks for one by one.

A sensor added from the panel gets defaults: its kind's error model, a rate
of our choosing (:data:`DEFAULT_RATES_HZ`) moved to the nearest rate whose
period is a whole number of control periods, and for acoustic ranging one
invented beacon 2 m deep at the centre of the mission's waypoints. A sensor,
terrain table, integral gain or inline craft removed by a change is kept
aside and comes back when the change is undone. A sensor's own settings
(rate, latency, error model, outages) are edited in the "sensor settings"
section, the generated controls of :mod:`wavebench.ui.controls` on the
``[sensors]`` tables, built when the section is first opened and linked
both ways with the panel (the panel works without that module).
"""

from __future__ import annotations

import copy
import dataclasses
import warnings
from collections.abc import Callable, Mapping
from typing import Any, NamedTuple

import ipywidgets as widgets
import traitlets

from ..core.errors import ParameterError, WavebenchWarning
from ..core.streams import TrialStreams
from ..craft.catalogue import DEMO_CRAFT_NAMES
from ..report.html import escape
from ..spec.build import build_environment
from ..spec.io import spec_hash
from ..spec.schema import Spec, spec_from_data, spec_to_data
from ..spec.sensors import NAVIGATORS, SENSOR_KINDS
from ..spec.tables import GuideSpec, PilotSpec
from ..trial.setup import build_trial_setup, check_spec_against_craft
from ..trial.wiring import check_wiring
from .loop_diagram import (
    KIND_LABELS,
    NAVIGATOR_LABELS,
    NAVIGATOR_READS,
    STATE_STYLES,
    LoopDiagram,
    loop_layout,
    loop_svg,
    stack_roles,
    unmet_needs,
)
from .twin import Twinned

__all__ = ["DEFAULT_RATES_HZ", "StackCheck", "StackPanel", "check_stack", "new_sensor_data"]

#: Rate given to a sensor added from the panel [Hz] (our choice; moved to a whole number of control periods).
DEFAULT_RATES_HZ = {
    "gnss": 1.0,
    "compass": 10.0,
    "gyrocompass": 10.0,
    "imu": 10.0,
    "dvl": 5.0,
    "depth": 1.0,
    "altimeter": 1.0,
    "acoustic": 0.5,
}
#: Depth of the invented beacon given to an acoustic sensor added from the panel [m].
BEACON_DOWN_M = 2.0

_STATE_WORDS = {"used": "in the loop", "idle": "fitted, not read", "absent": "not in the spec",
                "missing": "needed, missing"}  # fmt: skip
_INLINE = "(inline)"


class StackCheck(NamedTuple):
    """What :func:`check_stack` found: the spec (None if refused), the refusals and the notes."""

    spec: Spec | None
    messages: list[str]
    notes: list[str]


def check_stack(data: Mapping[str, Any]) -> StackCheck:
    """Load a spec's plain data and build its stack for one trial, as a run would (see the module notes).

    Parameters
    ----------
    data : Mapping
        The spec as plain data (a draft of :func:`~wavebench.spec.schema.spec_to_data`).

    Returns
    -------
    StackCheck
        ``spec`` the validated spec, or None when refused; ``messages`` the
        refusal (the :class:`~wavebench.core.errors.ParameterError` text,
        naming the field, the value and what is allowed), empty when
        accepted; ``notes`` the text of any
        :class:`~wavebench.core.errors.WavebenchWarning` raised on the way.

    Examples
    --------
    >>> from wavebench.spec import example_spec_path, load_spec, spec_to_data
    >>> data = spec_to_data(load_spec(example_spec_path("skerrow_sound")))
    >>> data["stack"]["navigator"] = "dead_reckoning"
    >>> found = check_stack(data)
    >>> found.spec is None, found.messages[0][:60]
    (True, "stack.navigator = 'dead_reckoning' is not allowed: needs a s")
    """
    notes: list[str] = []
    spec: Spec | None = None
    messages: list[str] = []
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        try:
            spec = spec_from_data(data)
            check_spec_against_craft(spec)
            env = build_environment(spec, TrialStreams(spec.campaign.seed, [0]))
            setup = build_trial_setup(spec, env)
            check_wiring(setup.guide, setup.pilot)
        except ParameterError as exc:
            spec, messages = None, [str(exc)]
        except Exception as exc:  # a panel shows a message, never a traceback
            spec, messages = None, [f"the stack could not be built: {type(exc).__name__}: {exc}"]
    for w in caught:
        if issubclass(w.category, WavebenchWarning):
            notes.append(str(w.message))
        else:
            warnings.warn_explicit(w.message, w.category, w.filename, w.lineno)
    return StackCheck(spec, messages, notes)


def _control_period_s(data: Mapping[str, Any]) -> float:
    pilot = (data.get("stack") or {}).get("pilot") or {}
    period = pilot.get("control_period_s")
    if isinstance(period, (int, float)) and period > 0:
        return float(period)
    dt = (data.get("scenario") or {}).get("dt_s", 0.1)
    return float(dt) if isinstance(dt, (int, float)) and dt > 0 else 0.1


def _mission_centre(data: Mapping[str, Any]) -> tuple[float, float]:
    mission = data.get("mission") or {}
    pts = mission.get("waypoints_ne_m") or mission.get("polygon_ne_m") or [[0.0, 0.0]]
    n = len(pts)
    return (sum(float(p[0]) for p in pts) / n, sum(float(p[1]) for p in pts) / n)


def new_sensor_data(kind: str, data: Mapping[str, Any]) -> dict[str, Any]:
    """Plain data of a sensor of ``kind`` with the panel's defaults, fitted to the spec ``data``.

    The rate is :data:`DEFAULT_RATES_HZ` moved to the nearest rate whose
    period is a whole number (>= 1) of the spec's control periods; an
    acoustic sensor gets one invented beacon :data:`BEACON_DOWN_M` deep at
    the centre of the mission's waypoints (or polygon).

    Examples
    --------
    >>> new_sensor_data("imu", {"scenario": {"dt_s": 0.25}})
    {'kind': 'imu', 'rate_hz': 4.0}
    >>> new_sensor_data("acoustic", {"mission": {"waypoints_ne_m": [[0, 0], [100, 40]]}})["beacons_ned_m"]
    [[50.0, 20.0, 2.0]]
    """
    if kind not in SENSOR_KINDS:
        raise ParameterError("kind", kind, f"must be one of {list(SENSOR_KINDS)}")
    period = _control_period_s(data)
    every = max(1, round(1.0 / (DEFAULT_RATES_HZ[kind] * period)))
    out: dict[str, Any] = {"kind": kind, "rate_hz": 1.0 / (every * period)}
    if kind == "acoustic":
        north, east = _mission_centre(data)
        out["beacons_ned_m"] = [[north, east, BEACON_DOWN_M]]
    return out


def _choices(cls: type, name: str) -> tuple[str, ...]:
    """The ``choices`` a spec table declares for a text field."""
    field = {f.name: f for f in dataclasses.fields(cls)}[name]
    return tuple(field.metadata.get("choices") or ())


def _sensor_names(data: Mapping[str, Any]) -> dict[str, str]:
    out: dict[str, str] = {}
    for name, table in (data.get("sensors") or {}).items():
        if isinstance(table, Mapping) and isinstance(table.get("kind"), str):
            out.setdefault(table["kind"], name)
    return out


class StackPanel(Twinned, traitlets.HasTraits):
    """The roles of a spec's stack, with choices per role, a sensor list and a diagram of the loop.

    Parameters
    ----------
    spec : Spec
        The starting spec.
    on_change : callable, optional
        Called with the new spec after every accepted change (same as
        :meth:`on_change`).

    Attributes
    ----------
    spec : Spec
        The last valid spec (a trait: ``panel.observe(handler, "spec")``).
    messages : list of str
        Why the current choices are refused (empty when they are accepted).
    notes : list of str
        Warnings raised while checking the current choices.
    craft_choice, navigator_choice, guide_choice, pilot_choice : ipywidgets.Dropdown
        The role choices.
    sensor_buttons : dict of str to ipywidgets.Button
        The add / remove button of each sensor kind.
    sensor_status : dict of str to ipywidgets.HTML
        What each sensor row says (name, rate, whether the navigator reads it).
    diagram : LoopDiagram
        The loop as wired (draws :meth:`layout`).
    settings : ipywidgets.Accordion
        A closed section holding :meth:`sensor_editor` once opened.
    editor : SpecEditor or None
        The sensor settings' controls, once built.
    widget : ipywidgets.VBox
        The panel.

    Examples
    --------
    >>> from wavebench.spec import example_spec_path, load_spec
    >>> panel = StackPanel(load_spec(example_spec_path("skerrow_sound")))
    >>> panel.navigator_choice.value = "ekf"
    >>> panel.messages[0][:47]
    "stack.navigator = 'ekf' is not allowed: needs a"
    >>> panel.spec.stack.navigator
    'truth'
    """

    spec = traitlets.Instance(Spec, allow_none=True)
    messages = traitlets.List(traitlets.Unicode())
    notes = traitlets.List(traitlets.Unicode())
    title = "stack"

    def __init__(self, spec: Spec, *, on_change: Callable[[Spec], None] | None = None) -> None:
        super().__init__()
        if not isinstance(spec, Spec):
            raise ParameterError("spec", spec, "must be a wavebench.spec.Spec (load one with load_spec)")
        self._syncing = False
        self._aside: dict[str, Any] = {}
        self._draft: dict[str, Any] = {}
        self.craft_choice = widgets.Dropdown(description="craft")
        self.navigator_choice = widgets.Dropdown(
            description="navigator", options=[(f"{n}: {NAVIGATOR_LABELS[n]}", n) for n in NAVIGATORS]
        )
        guides = {"los": "line of sight", "ilos": "integral line of sight"}
        self.guide_choice = widgets.Dropdown(
            description="guide", options=[(f"{k}: {guides.get(k, k)}", k) for k in _choices(GuideSpec, "kind")]
        )
        pilots = _choices(PilotSpec, "kind")
        self.pilot_choice = widgets.Dropdown(description="pilot", options=list(pilots), disabled=len(pilots) < 2)
        for box in (self.craft_choice, self.navigator_choice, self.guide_choice, self.pilot_choice):
            box.layout = widgets.Layout(width="340px")
            box.style = {"description_width": "72px"}
        self.craft_choice.observe(lambda c: self._chosen("craft", c["new"]), "value")
        self.navigator_choice.observe(lambda c: self._chosen("navigator", c["new"]), "value")
        self.guide_choice.observe(lambda c: self._chosen("guide", c["new"]), "value")
        self.pilot_choice.observe(lambda c: self._chosen("pilot", c["new"]), "value")
        self.sensor_buttons: dict[str, widgets.Button] = {}
        self.sensor_status: dict[str, widgets.HTML] = {}
        rows = []
        for kind in SENSOR_KINDS:
            button = widgets.Button(layout=widgets.Layout(width="84px"))
            button.on_click(lambda _b, kind=kind: self.toggle_sensor(kind))
            status = widgets.HTML()
            self.sensor_buttons[kind], self.sensor_status[kind] = button, status
            name = widgets.HTML(f"<b>{escape(KIND_LABELS[kind])}</b>", layout=widgets.Layout(width="120px"))
            rows.append(widgets.HBox([name, button, status], layout=widgets.Layout(align_items="center")))
        self.message_box = widgets.HTML()
        self.editor: Any = None
        self.settings = widgets.Accordion(children=[widgets.VBox()], selected_index=None)
        self.settings.set_title(0, "sensor settings: rates, latencies, error models, outages")
        self.settings.observe(lambda c: c["new"] is not None and self.sensor_editor(), "selected_index")
        self.diagram = LoopDiagram()
        self.roles_table = widgets.HTML()
        choices = widgets.HBox([self.craft_choice, self.navigator_choice, self.guide_choice, self.pilot_choice],
                               layout=widgets.Layout(flex_flow="row wrap"))  # fmt: skip
        sensors = widgets.VBox([widgets.HTML("<b>sensors</b> (one per kind)"), *rows, self.settings])
        self.widget = widgets.VBox([choices, self.message_box, sensors, self.diagram, self.roles_table])
        self.set_spec(spec)
        if on_change is not None:
            self.on_change(on_change)

    # -- state ----------------------------------------------------------------------

    @property
    def draft(self) -> dict[str, Any]:
        """A copy of the plain data the controls show now (the spec's, or a refused variant of it)."""
        return copy.deepcopy(self._draft)

    def set_spec(self, spec: Spec) -> None:
        """Show ``spec`` (code -> panel): its data becomes the draft, and the stack is checked.

        The observers of :attr:`spec` (and :meth:`on_change` callbacks) are
        called when ``spec`` differs from the current one. A spec whose stack
        cannot be built is still shown and kept (the loader accepted it), with
        the refusal in :attr:`messages`.
        """
        if not isinstance(spec, Spec):
            raise ParameterError("spec", spec, "must be a wavebench.spec.Spec (load one with load_spec)")
        if not self.messages and self.spec is not None and spec_hash(spec) == spec_hash(self.spec):
            return  # already shown (e.g. echoed back by a linked editor): keep what was set aside
        self._aside = {}
        self._draft = spec_to_data(spec)
        found = check_stack(self._draft)
        self.messages, self.notes = found.messages, found.notes
        self.spec = spec
        self._refresh()

    def on_change(self, callback: Callable[[Spec], None]) -> None:
        """Call ``callback(spec)`` after every accepted change."""
        self.observe(lambda change: callback(change["new"]), "spec")

    def sensor_editor(self) -> Any:
        """The generated controls of the ``[sensors]`` tables, linked both ways with this panel.

        Built on first use (opening the "sensor settings" section calls it)
        from :class:`~wavebench.ui.controls.SpecEditor`; None when that
        module is not available. An accepted edit there becomes this
        panel's spec, and this panel's accepted changes are shown there.
        """
        if self.editor is None:
            try:
                from .controls import SpecEditor
            except ImportError:  # the panel works without the generated controls
                return None
            self.editor = SpecEditor(self.spec, tables=("sensors",))
            self.editor.on_change(self.set_spec)
            self.observe(lambda change: self.editor.set_spec(change["new"]), "spec")
            self.settings.children[0].children = [self.editor.widget]
        return self.editor

    def roles(self) -> list[dict[str, str]]:
        """The roles table of the draft (:func:`~wavebench.ui.loop_diagram.stack_roles`)."""
        return [dict(r) for r in stack_roles(self._draft)]

    def layout(self) -> dict[str, Any]:
        """The loop diagram's layout of the draft (:func:`~wavebench.ui.loop_diagram.loop_layout`)."""
        return loop_layout(self._draft)

    # -- changes ----------------------------------------------------------------------

    def choose(self, role: str, value: str) -> bool:
        """Fill ``role`` (``"craft"``, ``"navigator"``, ``"guide"``, ``"pilot"``) with ``value`` as its dropdown does.

        Returns
        -------
        bool
            Whether the resulting spec was accepted (else :attr:`messages` says why).
        """
        boxes = {"craft": self.craft_choice, "navigator": self.navigator_choice, "guide": self.guide_choice,
                 "pilot": self.pilot_choice}  # fmt: skip
        if role not in boxes:
            raise ParameterError("role", role, f"must be one of {list(boxes)}")
        allowed = [v for _, v in boxes[role].options] if role != "pilot" else list(boxes[role].options)
        if value not in allowed:
            raise ParameterError(role, value, f"must be one of {allowed}")
        if boxes[role].value == value:
            self._chosen(role, value)
        else:
            boxes[role].value = value
        return not self.messages

    def add_sensor(self, kind: str) -> bool:
        """Fit a sensor of ``kind`` (the one removed earlier, or :func:`new_sensor_data`); returns acceptance."""
        if kind not in SENSOR_KINDS:
            raise ParameterError("kind", kind, f"must be one of {list(SENSOR_KINDS)}")
        fitted = _sensor_names(self._draft)
        if kind not in fitted:
            name, table = self._aside.pop(f"sensor:{kind}", (None, None))
            if table is None:
                table = new_sensor_data(kind, self._draft)
            sensors = self._draft.setdefault("sensors", {})
            name = name if name is not None and name not in sensors else kind
            base, i = name, 2
            while name in sensors:
                name, i = f"{base}_{i}", i + 1
            sensors[name] = table
        return self._check()

    def remove_sensor(self, kind: str) -> bool:
        """Remove the sensor of ``kind`` (kept aside for :meth:`add_sensor`); returns acceptance."""
        if kind not in SENSOR_KINDS:
            raise ParameterError("kind", kind, f"must be one of {list(SENSOR_KINDS)}")
        name = _sensor_names(self._draft).get(kind)
        if name is not None:
            sensors = self._draft["sensors"]
            self._aside[f"sensor:{kind}"] = (name, sensors.pop(name))
            if not sensors:
                del self._draft["sensors"]
        return self._check()

    def toggle_sensor(self, kind: str) -> bool:
        """Add the sensor of ``kind`` if absent, else remove it (the row's button)."""
        if kind in _sensor_names(self._draft):
            return self.remove_sensor(kind)
        return self.add_sensor(kind)

    def _chosen(self, role: str, value: Any) -> None:
        if self._syncing or value is None:
            return
        d = self._draft
        stack = d.setdefault("stack", {})
        if role == "craft":
            craft = d.get("craft") or {}
            current = _INLINE if "demo" not in craft else craft["demo"]
            if value == current:
                return self._refresh()
            if current == _INLINE:
                self._aside["craft"] = craft
            if value == _INLINE:
                d["craft"] = self._aside.get("craft", craft)
            else:
                d["craft"] = {"demo": value}
        elif role == "navigator":
            if stack.get("navigator", "truth") == value:
                return self._refresh()
            if "terrain" in stack:
                self._aside["terrain"] = stack.pop("terrain")
            stack["navigator"] = value
            if value == "terrain" and "terrain" in self._aside:
                stack["terrain"] = self._aside.pop("terrain")
        elif role == "guide":
            guide = stack.setdefault("guide", {})
            if guide.get("kind", "los") == value:
                return self._refresh()
            guide["kind"] = value
            if value == "los" and "integral_gain" in guide:
                self._aside["integral_gain"] = guide.pop("integral_gain")
            elif value == "ilos" and "integral_gain" in self._aside:
                guide["integral_gain"] = self._aside.pop("integral_gain")
        elif role == "pilot":
            pilot = stack.setdefault("pilot", {})
            if pilot.get("kind", "pid") == value:
                return self._refresh()
            pilot["kind"] = value
        self._check()

    def _check(self) -> bool:
        found = check_stack(self._draft)
        self.messages, self.notes = found.messages, found.notes
        if found.spec is not None:
            self._draft = spec_to_data(found.spec)
            if self.spec is None or spec_hash(found.spec) != spec_hash(self.spec):
                self.spec = found.spec
        self._refresh()
        return found.spec is not None

    # -- showing ----------------------------------------------------------------------

    def _refresh(self) -> None:
        d = self._draft
        stack = d.get("stack") or {}
        craft = d.get("craft") or {}
        options = [(f"{n} (demo craft)", n) for n in DEMO_CRAFT_NAMES]
        inline = craft if "demo" not in craft else self._aside.get("craft")
        if inline is not None:
            options.insert(0, (f"{inline.get('name', 'unnamed')} (written in the spec)", _INLINE))
        self._syncing = True
        try:
            if tuple(self.craft_choice.options) != tuple(options):
                self.craft_choice.options = options
            self.craft_choice.value = _INLINE if "demo" not in craft else craft["demo"]
            self.navigator_choice.value = stack.get("navigator", "truth")
            self.guide_choice.value = (stack.get("guide") or {}).get("kind", "los")
            self.pilot_choice.value = (stack.get("pilot") or {}).get("kind", "pid")
        finally:
            self._syncing = False
        nav = stack.get("navigator", "truth")
        reads = NAVIGATOR_READS.get(nav, frozenset())
        needed = {k for g in unmet_needs(d) for k in g}
        fitted = _sensor_names(d)
        for kind in SENSOR_KINDS:
            button, status = self.sensor_buttons[kind], self.sensor_status[kind]
            if kind in fitted:
                name = fitted[kind]
                table = d["sensors"][name]
                button.description, button.button_style = "remove", ""
                button.tooltip = f"remove sensor '{name}' from the spec"
                use = f"read by {nav}" if kind in reads else f"not read by {nav}"
                status.value = f"'{escape(name)}' at {table.get('rate_hz', 0):g} Hz, {escape(use)}"
            else:
                button.description, button.button_style = "add", "warning" if kind in needed else ""
                button.tooltip = f"fit a {KIND_LABELS[kind]} sensor with default settings"
                status.value = (f"<span style='color:{STATE_STYLES['missing']['text']}'>needed by {escape(nav)}</span>"
                                if kind in needed else "<span style='color:#8a8a82'>not fitted</span>")  # fmt: skip
        self.message_box.value = self._messages_html()
        self.diagram.layout = loop_layout(d)
        self.roles_table.value = self._table_html()

    def _messages_html(self) -> str:
        st = STATE_STYLES["missing"]
        parts = []
        if self.messages:
            parts.append(f"<div style='border-left:4px solid {st['stroke']};background:{st['fill']};"
                         f"color:{st['text']};padding:4px 8px;margin:4px 0'>"
                         "<b>not accepted, the last valid spec is kept:</b><ul style='margin:2px 0'>"
                         + "".join(f"<li>{escape(m)}</li>" for m in self.messages) + "</ul></div>")  # fmt: skip
        else:
            parts.append(f"<div style='color:{STATE_STYLES['used']['text']};margin:4px 0'>the stack is wired: every "
                         "role is filled and the navigator has the sensors it needs</div>")  # fmt: skip
        if self.notes:
            parts.append("<div style='color:#6b5a1e;margin:2px 0'>"
                         + "".join(f"<div>note: {escape(n)}</div>" for n in self.notes) + "</div>")  # fmt: skip
        return "".join(parts)

    def _table_html(self) -> str:
        cells = []
        for r in stack_roles(self._draft):
            st = STATE_STYLES[r["state"]]
            cells.append(
                f"<tr><th style='text-align:left;padding:2px 8px;border-left:4px solid {st['stroke']}'>"
                f"{escape(r['role'])}</th><td style='padding:2px 8px'>{escape(r['filled_by'])}</td>"
                f"<td style='padding:2px 8px;color:#55605c'>{escape(r['detail'])}</td>"
                f"<td style='padding:2px 8px;color:{st['text']}'>{escape(_STATE_WORDS[r['state']])}</td></tr>"
            )
        return ("<table class='wb-roles' style='border-collapse:collapse;font-size:12px'>"
                "<thead><tr><th style='text-align:left;padding:2px 8px'>role</th>"
                "<th style='text-align:left;padding:2px 8px'>filled by</th>"
                "<th style='text-align:left;padding:2px 8px'>detail</th>"
                "<th style='text-align:left;padding:2px 8px'>state</th></tr></thead>"
                "<tbody>" + "".join(cells) + "</tbody></table>")  # fmt: skip

    def static_html(self) -> str:
        """The refusals (if any), the roles table and the loop diagram as inline SVG (no script)."""
        return self._messages_html() + self._table_html() + f"<div>{loop_svg(loop_layout(self._draft))}</div>"
