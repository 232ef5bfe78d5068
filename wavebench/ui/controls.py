"""Parameter controls generated from a spec table's own field metadata.

Nothing here knows the sea, the craft or the sensors by name: the controls
are built by walking :func:`dataclasses.fields` of a spec table
(:class:`~wavebench.spec.fields.SpecTable`) or a block parameter set
(:class:`~wavebench.core.params.Params`) and reading what each field declares
(:mod:`wavebench.spec.fields`), so a new table or block gets its controls
for free:

=====================================  ==============================================
field declaration                      control
=====================================  ==============================================
``number`` / ``like`` / ``bounded``    ``FloatText`` / ``IntText``, or a slider when
                                       both bounds are finite; the unit in the label,
                                       the doc and the allowed range as tooltip
``dist=True``                          also a distribution written as a TOML inline
                                       table, e.g. ``{ uniform = [1.0, 2.0] }``
``text(choices=...)``                  ``Dropdown``
``text()``                             ``Text``
``texts(choices=...)``                 ``SelectMultiple``
``points``, ``numbers``, ``intervals``  a TOML array in a ``Text`` box
``table``, ``params``                  a collapsible section (``Accordion``)
``named_tables``                       a section holding one section per name
=====================================  ==============================================

A field that may be absent (default ``None``) also offers "absent"; an
optional table offers "add" and "remove". Every table section, and the
whole spec, can also be edited as TOML text ("edit as TOML"): the way to
change several fields at once where one alone would be refused (a
``kind`` and the fields that kind needs). Sections are built when first
opened, so a large spec opens quickly.

Every change builds a *new* spec through the real loader: the spec's plain
data (:func:`~wavebench.spec.schema.spec_to_data`) with the changed value is
validated by :func:`~wavebench.spec.schema.spec_from_data` (and once more
from the new spec's own written form, so what the editor holds also saves
and loads). A value the
loader refuses leaves the last valid spec in place and shows the
:class:`~wavebench.core.errors.ParameterError` message (field, value and
what is allowed) beside the control; no exception reaches the notebook.

Numbers are typed into unclamped ``FloatText`` boxes rather than
``BoundedFloatText``: a bounded box silently clamps a value out of range,
where the user should see the validator's message instead. Each number
control keeps the field's :class:`~wavebench.core.params.Bounds` as
``control.bounds``; sliders take their ``min``/``max`` from them.
"""

from __future__ import annotations

import contextlib
import copy
import dataclasses
import functools
import math
import os
import sys
import typing
from collections.abc import Callable, Mapping
from pathlib import Path as _FilePath
from typing import Any

import ipywidgets as widgets
import tomli_w
import traitlets
from ipywidgets.widgets.widget_bool import CheckboxStyle
from ipywidgets.widgets.widget_description import DescriptionStyle
from ipywidgets.widgets.widget_int import SliderStyle
from ipywidgets.widgets.widget_string import LabelStyle, TextStyle

from ..core.errors import ParameterError
from ..core.params import Bounds, Params
from ..report.html import escape
from ..spec.distributions import DISTRIBUTION_KINDS, parse_distribution
from ..spec.fields import representative
from ..spec.io import dump_spec, load_spec, save_spec
from ..spec.schema import Spec, spec_from_data, spec_to_data
from .twin import Twinned

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover
    import tomli as tomllib

__all__ = [
    "FieldControl",
    "SpecEditor",
    "TableSection",
    "field_kinds",
    "parse_literal",
    "reachable_tables",
    "table_toml",
    "toml_literal",
]

Path = tuple[str, ...]
_MISSING = dataclasses.MISSING
_LABEL_WIDTH = "230px"
_ERROR_STYLE = {"text_color": "#b3261e"}
_ABSENT = "(absent)"


# ---------------------------------------------------------------------------
# shared layouts and styles (a big spec has hundreds of rows: one model each, not one per widget)
# ---------------------------------------------------------------------------

_SHARED: dict[Any, widgets.Widget] = {}


def _shared(cls: type, **kwargs: Any) -> Any:
    """One ``Layout`` or style model per (class, settings), shared by the widgets that never change it."""
    key = (cls, tuple(sorted(kwargs.items())))
    model = _SHARED.get(key)
    if model is None or model.comm is None:  # closed (e.g. Widget.close_all) -> make a new one
        model = _SHARED[key] = cls(**kwargs)
    return model


def _box(width: str) -> widgets.Layout:
    return _shared(widgets.Layout, width=width)


# ---------------------------------------------------------------------------
# TOML literals
# ---------------------------------------------------------------------------


def toml_literal(value: Any) -> str:
    """One TOML value on one line: numbers, strings, arrays and inline tables.

    Examples
    --------
    >>> toml_literal({"normal": {"mean": 1.5, "sd": 0.2}})
    '{ normal = { mean = 1.5, sd = 0.2 } }'
    >>> toml_literal([[0.0, 1.0], [2.0, 3.0]])
    '[[0.0, 1.0], [2.0, 3.0]]'
    """
    if isinstance(value, Mapping):
        return "{ " + ", ".join(f"{k} = {toml_literal(v)}" for k, v in value.items()) + " }"
    if isinstance(value, (list, tuple)):
        return "[" + ", ".join(toml_literal(v) for v in value) + "]"
    return tomli_w.dumps({"v": value})[len("v = ") :].rstrip("\n")


def parse_literal(text: str, path: str) -> Any:
    """Read one TOML value (``3.0``, ``inf``, ``[1, 2]``, ``{ uniform = [1.0, 2.0] }``).

    Raises
    ------
    ParameterError
        Naming ``path`` when the text is not a TOML value.

    Examples
    --------
    >>> parse_literal("{ uniform = [1.0, 2.0] }", "sea.hs_m")
    {'uniform': [1.0, 2.0]}
    """
    try:
        return tomllib.loads(f"v = {text.strip()}")["v"]
    except tomllib.TOMLDecodeError as exc:
        raise ParameterError(
            path, text, f"must be a TOML value, e.g. 1.5 or {{ uniform = [1.0, 2.0] }} ({exc})"
        ) from None


def _looks_like_distribution(value: Mapping[str, Any]) -> bool:
    return any(k in DISTRIBUTION_KINDS for k in value)


def table_toml(data: Mapping[str, Any], prefix: str = "") -> str:
    """TOML text of one table's plain data: values first (distributions inline), then sub-tables.

    Examples
    --------
    >>> print(table_toml({"kind": "cos2s", "mean_dir_deg": {"uniform": [160.0, 200.0]}, "bay": {"n_shoals": 2}}))
    kind = "cos2s"
    mean_dir_deg = { uniform = [160.0, 200.0] }
    <BLANKLINE>
    [bay]
    n_shoals = 2
    <BLANKLINE>
    """
    lines, subs = [], []
    for key, value in data.items():
        if isinstance(value, Mapping) and not _looks_like_distribution(value):
            subs.append((key, value))
        else:
            lines.append(f"{key} = {toml_literal(value)}")
    out = "\n".join(lines) + ("\n" if lines else "")
    for key, value in subs:
        name = f"{prefix}{key}"
        out += f"\n[{name}]\n" + table_toml(value, name + ".")
    return out


# ---------------------------------------------------------------------------
# what each field is
# ---------------------------------------------------------------------------


def _is_optional(f: dataclasses.Field) -> bool:
    return f.default is None


def _params_class(hint: Any) -> type[Params] | None:
    options = typing.get_args(hint) or (hint,)
    found = [o for o in options if isinstance(o, type) and issubclass(o, Params)]
    return found[0] if len(found) == 1 else None


@functools.cache
def field_kinds(cls: type) -> tuple[tuple[dataclasses.Field, str, Any], ...]:
    """How each init field of a spec table or parameter class is edited.

    Returns
    -------
    tuple of (field, kind, detail)
        ``kind`` is one of ``"number"`` (detail: :class:`Bounds`),
        ``"choice"`` (detail: the choices), ``"text"``, ``"texts"`` (detail:
        the choices), ``"flag"``, ``"literal"`` (a TOML value in a text box),
        ``"table"``, ``"params"`` (detail: the nested class) and
        ``"named_tables"`` (detail: the class of each named table), in
        declaration order.
    """
    hints = typing.get_type_hints(cls)
    out: list[tuple[dataclasses.Field, str, Any]] = []
    for f in dataclasses.fields(cls):
        if not f.init:
            continue
        meta = f.metadata
        if "bounds" in meta:
            out.append((f, "number", meta["bounds"]))
        elif meta.get("text"):
            choices = meta.get("choices")
            out.append((f, "choice", tuple(choices)) if choices is not None else (f, "text", None))
        elif "table" in meta:
            out.append((f, "table", meta["table"]))
        elif "params" in meta:
            out.append((f, "params", meta["params"]))
        elif "named_tables" in meta:
            out.append((f, "named_tables", meta["named_tables"]))
        elif "texts" in meta:
            out.append((f, "texts", tuple(meta["texts"])))
        elif issubclass(cls, Params) and _params_class(hints.get(f.name)) is not None:
            out.append((f, "params", _params_class(hints.get(f.name))))
        elif hints.get(f.name) is bool or isinstance(f.default, bool):
            out.append((f, "flag", None))
        else:
            out.append((f, "literal", None))
    return tuple(out)


def reachable_tables(cls: type = Spec) -> list[type]:
    """Every spec table and parameter class reachable from ``cls`` (itself first), each once."""
    seen: list[type] = []

    def walk(c: type) -> None:
        if c in seen:
            return
        seen.append(c)
        for _, kind, detail in field_kinds(c):
            if kind in ("table", "params", "named_tables"):
                walk(detail)

    walk(cls)
    return seen


def _dotted(path: Path) -> str:
    return ".".join(path)


def _get(data: Mapping[str, Any] | None, path: Path) -> Any:
    node: Any = data
    for key in path:
        if not isinstance(node, Mapping) or key not in node:
            return None
        node = node[key]
    return node


def _set(data: dict[str, Any], path: Path, value: Any) -> None:
    node = data
    for key in path[:-1]:
        nxt = node.get(key)
        if not isinstance(nxt, dict):
            nxt = node[key] = {}
        node = nxt
    if value is None:
        node.pop(path[-1], None)
    else:
        node[path[-1]] = value


def _representative_data(value: Mapping[str, Any], path: str) -> Any:
    """The representative value of a distribution given as plain data (None if it does not parse)."""
    try:
        return representative(parse_distribution(value, path))
    except ParameterError:
        return None


def _finite_range(bounds: Bounds) -> tuple[float, float] | None:
    lo = bounds.ge if bounds.ge is not None else bounds.gt
    hi = bounds.le if bounds.le is not None else bounds.lt
    if lo is None or hi is None or not (math.isfinite(lo) and math.isfinite(hi)) or not lo < hi:
        return None
    return float(lo), float(hi)


# ---------------------------------------------------------------------------
# one field
# ---------------------------------------------------------------------------


class FieldControl:
    """The row of one field: a label, the value widget(s) and an error label.

    Parameters
    ----------
    path : tuple of str
        Keys from the document root to the field, e.g. ``("sea", "hs_m")``.
    field : dataclasses.Field
        The field's declaration (its metadata gives unit, doc and bounds).
    kind, detail
        From :func:`field_kinds`.
    value : object
        The field's current value in plain-data form (``None`` when absent).
    on_change : callable, optional
        ``on_change(control, raw)`` with the new plain-data value (``None``
        to remove the field), or a :class:`ParameterError` when the text
        typed cannot even be read.

    Attributes
    ----------
    widget : ipywidgets.HBox
        The row.
    value_widget : ipywidgets.Widget
        The main widget (number box, slider, dropdown, text box, ...).
    dist_widget : ipywidgets.Text or None
        The distribution editor of a field declared ``dist=True``.
    mode_widget : ipywidgets.Dropdown or None
        "value" / "distribution" / "absent" where more than one applies.
    error_label : ipywidgets.Label
        The validator's message after a refused change ("" otherwise).
    bounds : Bounds or None
        The field's declared range (number fields).
    """

    def __init__(
        self,
        path: Path,
        field: dataclasses.Field,
        kind: str,
        detail: Any,
        value: Any,
        on_change: Callable[[FieldControl, Any], None] | None = None,
    ) -> None:
        self.path = path
        self.name = _dotted(path)
        self.field = field
        self.kind = kind
        self.detail = detail
        self.optional = _is_optional(field)
        self._on_change = on_change
        self._updating = False
        meta = field.metadata
        self.unit = meta.get("unit", "") or ""
        self.doc = meta.get("doc", "") or ""
        self.bounds: Bounds | None = detail if kind == "number" else None
        self.dist_allowed = bool(meta.get("dist")) if kind == "number" else False
        self.mode_widget: widgets.Dropdown | None = None
        self.dist_widget: widgets.Text | None = None

        label_text = path[-1] + (f" [{self.unit}]" if self.unit and self.unit != "1" else "")
        tooltip = self.doc
        if self.bounds is not None:
            tooltip = f"{self.doc} ({self.bounds.describe()})".strip()
        self.label = widgets.Label(label_text, tooltip=tooltip, layout=_box(_LABEL_WIDTH),
                                   style=_shared(LabelStyle))  # fmt: skip
        self._error_label: widgets.Label | None = None
        modes = ["value"]
        if self.dist_allowed:
            modes.append("distribution")
        if self.optional and kind == "number":
            modes.append("absent")
        # widgets hidden and shown by the mode need layouts of their own
        self.value_widget = self._make_value_widget(tooltip, own_layout=len(modes) > 1)
        parts: list[widgets.Widget] = [self.label]
        if self.dist_allowed:
            self.dist_widget = widgets.Text(
                placeholder="{ uniform = [1.0, 2.0] }", continuous_update=False, tooltip=tooltip,
                layout=widgets.Layout(width="300px"), style=_shared(TextStyle),
            )  # fmt: skip
            self.dist_widget.observe(self._dist_changed, "value")
        if len(modes) > 1:
            self.mode_widget = widgets.Dropdown(options=modes, value="value", layout=_box("120px"),
                                                style=_shared(DescriptionStyle))  # fmt: skip
            self.mode_widget.observe(self._mode_changed, "value")
            parts.append(self.mode_widget)
        parts.append(self.value_widget)
        if self.dist_widget is not None:
            parts.append(self.dist_widget)
        self.widget = widgets.HBox(parts, layout=_shared(widgets.Layout))
        self.show(value)
        self.value_widget.observe(self._value_changed, "value")

    # -- widgets ------------------------------------------------------------

    def _make_value_widget(self, tooltip: str, *, own_layout: bool) -> widgets.Widget:
        kind, detail = self.kind, self.detail

        def lay(width: str | None = None) -> widgets.Layout:
            if own_layout:
                return widgets.Layout(width=width) if width else widgets.Layout()
            return _box(width) if width else _shared(widgets.Layout)

        text_style = _shared(TextStyle)
        desc_style = _shared(DescriptionStyle)
        if kind == "number":
            b: Bounds = detail
            rng = _finite_range(b)
            if not b.finite:
                # inf is a legal value here (e.g. deep water): typed as text, read as TOML ("inf").
                return widgets.Text(continuous_update=False, tooltip=tooltip, layout=lay("160px"), style=text_style)
            if b.integer:
                if rng is not None and rng[1] - rng[0] >= 1:
                    return widgets.IntSlider(min=math.ceil(rng[0]), max=math.floor(rng[1]), continuous_update=False,
                                             tooltip=tooltip, layout=lay(),
                                             style=_shared(SliderStyle))  # fmt: skip
                return widgets.IntText(tooltip=tooltip, layout=lay("160px"), style=desc_style,
                                       disabled=b.ge is not None and b.ge == b.le)  # fmt: skip
            if rng is not None:
                return widgets.FloatSlider(min=rng[0], max=rng[1], step=(rng[1] - rng[0]) / 1000.0,
                                           readout_format=".4g", continuous_update=False, tooltip=tooltip,
                                           layout=lay(), style=_shared(SliderStyle))  # fmt: skip
            return widgets.FloatText(tooltip=tooltip, layout=lay("160px"), style=desc_style)
        if kind == "choice":
            options = [(c, c) for c in detail]
            if self.optional:
                options.insert(0, (_ABSENT, ""))
            return widgets.Dropdown(options=options, tooltip=tooltip, layout=lay(), style=desc_style)
        if kind == "texts":
            return widgets.SelectMultiple(options=list(detail), rows=min(6, len(detail)), tooltip=tooltip,
                                          layout=lay(), style=desc_style)  # fmt: skip
        if kind == "flag":
            return widgets.Checkbox(indent=False, tooltip=tooltip, layout=lay(), style=_shared(CheckboxStyle))
        if kind == "text":
            return widgets.Text(continuous_update=False, tooltip=tooltip, layout=lay(), style=text_style)
        return widgets.Text(continuous_update=False, tooltip=tooltip or "a TOML value", layout=lay("420px"),
                            style=text_style)  # fmt: skip

    # -- showing a value ------------------------------------------------------

    @property
    def mode(self) -> str:
        """``"value"``, ``"distribution"`` or ``"absent"``."""
        return self.mode_widget.value if self.mode_widget is not None else "value"

    def show(self, value: Any) -> None:
        """Display ``value`` (plain data; ``None`` when absent) without applying it."""
        self._updating = True
        try:
            self._shown = copy.deepcopy(value)
            if self.kind == "number":
                if isinstance(value, Mapping):
                    if self.dist_widget is None:
                        return  # not a value this control can show (a refused set_value)
                    mode = "distribution"
                    self.dist_widget.value = toml_literal(value)
                    self._show_number(_representative_data(value, self.name))
                elif value is None:
                    mode = "absent" if self.optional else "value"
                else:
                    mode = "value"
                    self._show_number(value)
                if self.mode_widget is not None and mode in self.mode_widget.options:
                    self.mode_widget.value = mode
                self._layout_mode()
            elif self.kind == "choice":
                blank = "" if self.optional else None
                self.value_widget.value = blank if value is None else value
            elif self.kind == "texts":
                self.value_widget.value = tuple(value or ())
            elif self.kind == "flag":
                self.value_widget.value = bool(value)
            elif self.kind == "text":
                self.value_widget.value = "" if value is None else str(value)
            else:
                self.value_widget.value = "" if value is None else toml_literal(value)
        finally:
            self._updating = False

    def _show_number(self, value: Any) -> None:
        if value is None:
            return
        if isinstance(self.value_widget, widgets.Text):
            self.value_widget.value = toml_literal(value)
        else:
            self.value_widget.value = value

    def _layout_mode(self) -> None:
        if self.mode_widget is None:
            return
        mode = self.mode
        self.value_widget.layout.display = None if mode == "value" else "none"
        if self.dist_widget is not None:
            self.dist_widget.layout.display = None if mode == "distribution" else "none"

    @property
    def error_label(self) -> widgets.Label:
        """The label beside the control holding the validator's message (made on first use)."""
        if self._error_label is None:
            self._error_label = widgets.Label("", style=_ERROR_STYLE)
            self.widget.children = (*self.widget.children, self._error_label)
        return self._error_label

    def set_error(self, message: str) -> None:
        """Show (or clear, with ``""``) the validator's message beside the control."""
        if message or self._error_label is not None:
            self.error_label.value = message

    # -- reading the widgets ------------------------------------------------------

    def _read_value(self) -> Any:
        w = self.value_widget
        if self.kind == "number":
            if isinstance(w, widgets.Text):
                if not w.value.strip():
                    return None
                return parse_literal(w.value, self.name)
            return w.value
        if self.kind == "choice":
            return w.value or None
        if self.kind == "texts":
            return list(w.value)
        if self.kind == "flag":
            return bool(w.value)
        if self.kind == "text":
            return w.value if (w.value or not self.optional) else None
        if not w.value.strip():
            return None
        return parse_literal(w.value, self.name)

    def _read_dist(self) -> Any:
        assert self.dist_widget is not None
        text = self.dist_widget.value
        if not text.strip():
            raise ParameterError(self.name, text, "a distribution is needed, e.g. { uniform = [1.0, 2.0] }")
        return parse_literal(text, self.name)

    def read(self) -> Any:
        """The value the widgets show, as plain data (``None`` when absent).

        Raises
        ------
        ParameterError
            When the text typed is not a TOML value.
        """
        mode = self.mode
        if mode == "absent":
            return None
        if mode == "distribution":
            return self._read_dist()
        return self._read_value()

    def _emit(self, read: Callable[[], Any]) -> None:
        if self._on_change is None:
            return
        try:
            raw = read()
        except ParameterError as exc:
            self._on_change(self, exc)
            return
        self._on_change(self, raw)

    def _value_changed(self, _change: dict[str, Any]) -> None:
        if not self._updating:
            self._emit(self._read_value)

    def _dist_changed(self, _change: dict[str, Any]) -> None:
        if not self._updating and self.mode == "distribution":
            self._emit(self._read_dist)

    def _mode_changed(self, _change: dict[str, Any]) -> None:
        if self._updating:
            return
        self._layout_mode()
        mode = self.mode
        if mode == "absent":
            self._emit(lambda: None)
        elif mode == "distribution":
            assert self.dist_widget is not None
            if not self.dist_widget.value.strip():
                current = self._shown if isinstance(self._shown, (int, float)) else None
                if current is not None and math.isfinite(current):
                    self._updating = True
                    self.dist_widget.value = toml_literal({"choice": [current]})
                    self._updating = False
            self._emit(self._read_dist)
        else:
            self._emit(self._read_value)


# ---------------------------------------------------------------------------
# a table
# ---------------------------------------------------------------------------


class _Registry:
    """Every control and section of one tree, by dotted path (filled as sections are built)."""

    def __init__(self) -> None:
        self.controls: dict[str, FieldControl] = {}
        self.sections: dict[str, TableSection] = {}


class TableSection:
    """A collapsible section for one table (spec table or parameter set).

    A section's rows are built when it is first opened (or when a control
    in it is asked for), so a large spec opens quickly.

    Parameters
    ----------
    path : tuple of str
        Keys of the table from the document root (``()`` for the document).
    cls : type
        Its class (a :class:`SpecTable` or :class:`Params` subclass).
    data : Mapping or None
        The table's plain data; ``None`` when the (optional) table is absent.
    optional : bool
        Whether the table may be absent (then it offers "add" / "remove").
    on_change : callable
        Receives ``(control_or_section, raw)`` as for :class:`FieldControl`.
    only : collection of str, optional
        At the root, the top-level keys to show.
    data_of : callable, optional
        ``data_of(path)`` gives the current plain data at a path when a
        section is built; by default read from ``data``.

    Attributes
    ----------
    widget : ipywidgets.Widget
        An ``Accordion`` with one item, collapsed (a ``VBox`` at the root).
    controls : dict of str to FieldControl
        Every field control in the section and its subsections, by dotted
        path (building every subsection).
    sections : dict of str to TableSection
        This section and every subsection, by dotted path (building them all).
    """

    def __init__(
        self,
        path: Path,
        cls: type,
        data: Mapping[str, Any] | None,
        *,
        optional: bool = False,
        on_change: Callable[[Any, Any], None] | None = None,
        only: Any = None,
        title: str | None = None,
        data_of: Callable[[Path], Any] | None = None,
        registry: _Registry | None = None,
    ) -> None:
        self.path, self.cls, self.optional, self.only = path, cls, optional, only
        self.name = _dotted(path)
        self.present = data is not None or not path
        self._on_change = on_change
        if data_of is None:
            root: dict[str, Any] = {}
            if path:
                _set(root, path, copy.deepcopy(dict(data)) if data is not None else None)
            else:
                root = copy.deepcopy(dict(data or {}))
            data_of = lambda p: _get(root, p)  # noqa: E731
        self._data_of = data_of
        self._registry = registry or _Registry()
        self._registry.sections[self.name] = self
        self._subsections: list[TableSection] = []
        self.toml_box: widgets.VBox | None = None
        self.built = False
        self.error_label = widgets.Label("", style=_ERROR_STYLE)
        self._body = widgets.VBox()
        if not path:
            self.widget: widgets.Widget = self._body
            self.build()
        else:
            label = (title or path[-1]) + ("" if self.present else " (absent)")
            self.widget = widgets.Accordion(children=[self._body], titles=(label,), selected_index=None)
            self.widget.observe(self._opened, "selected_index")

    @property
    def is_open(self) -> bool:
        """Whether the section is expanded (the root always is)."""
        return not self.path or self.widget.selected_index is not None

    def open(self) -> None:
        """Expand the section (building it)."""
        if self.path:
            self.widget.selected_index = 0
        self.build()

    def _opened(self, change: dict[str, Any]) -> None:
        if change["new"] is not None:
            self.build()

    def _emit(self, raw: Any) -> None:
        if self._on_change is not None:
            self._on_change(self, raw)

    def set_error(self, message: str) -> None:
        """Show (or clear) a message for the table as a whole."""
        self.error_label.value = message

    def build(self) -> None:
        """Make the section's rows (once)."""
        if self.built:
            return
        self.built = True
        rows: list[widgets.Widget] = []
        if self.path:
            head: list[widgets.Widget] = []
            if not self.present:
                self.add_button = widgets.Button(description=f"add [{self.name}]", tooltip="add with its defaults")
                self.add_button.on_click(lambda _b: self._emit({}))
                head += [widgets.Label("absent"), self.add_button]
            elif self.optional:
                self.remove_button = widgets.Button(description="remove", tooltip=f"leave [{self.name}] out")
                self.remove_button.on_click(lambda _b: self._emit(None))
                head.append(self.remove_button)
            tip = "edit the whole table as TOML text (to change several fields at once, e.g. a kind and its fields)"
            self.toml_button = widgets.Button(description="edit as TOML", tooltip=tip)
            self.toml_button.on_click(lambda _b: self.toggle_toml())
            head += [self.toml_button, self.error_label]
            rows.append(widgets.HBox(head))
        if self.present:
            rows.extend(self._rows(self._data_of(self.path) or {}))
        self._body.children = rows

    def toggle_toml(self) -> None:
        """Show (filled with the table's current TOML) or hide the table's text editor."""
        self.build()
        if self.toml_box is None:
            self.toml_text = widgets.Textarea(layout=widgets.Layout(width="640px", height="180px"))
            self.toml_apply = widgets.Button(description="apply", tooltip="validate and use this table")
            self.toml_apply.on_click(lambda _b: self.apply_toml(self.toml_text.value))
            self.toml_box = widgets.VBox([self.toml_text, self.toml_apply])
            children = list(self._body.children)
            self._body.children = [children[0], self.toml_box, *children[1:]]
        elif self.toml_box.layout.display != "none":
            self.toml_box.layout.display = "none"
            return
        self.toml_box.layout.display = None
        self.toml_text.value = table_toml(self._data_of(self.path) or {})

    def apply_toml(self, text: str) -> None:
        """Replace the whole table by TOML ``text`` (validated by the loader like any change)."""
        try:
            data = tomllib.loads(text)
        except tomllib.TOMLDecodeError as exc:
            self._emit(ParameterError(self.name, "<text>", f"is not valid TOML: {exc}"))
            return
        self._emit(data)

    def build_all(self) -> None:
        """Build this section and every subsection."""
        self.build()
        for sub in self._subsections:
            sub.build_all()

    @property
    def controls(self) -> dict[str, FieldControl]:
        self.build_all()
        prefix = f"{self.name}." if self.name else ""
        return {k: c for k, c in self._registry.controls.items() if k.startswith(prefix)}

    @property
    def sections(self) -> dict[str, TableSection]:
        self.build_all()
        prefix = f"{self.name}." if self.name else ""
        return {k: s for k, s in self._registry.sections.items() if k == self.name or k.startswith(prefix)}

    def _child(self, path: Path, cls: type, optional: bool, title: str | None = None) -> TableSection:
        sub = TableSection(path, cls, self._data_of(path), optional=optional, on_change=self._on_change,
                           title=title, data_of=self._data_of, registry=self._registry)  # fmt: skip
        self._subsections.append(sub)
        return sub

    def _rows(self, data: Mapping[str, Any]) -> list[widgets.Widget]:
        rows: list[widgets.Widget] = []
        subsections: list[widgets.Widget] = []
        for f, kind, detail in field_kinds(self.cls):
            if self.only is not None and f.name not in self.only:
                continue
            path = (*self.path, f.name)
            value = data.get(f.name)
            if kind in ("table", "params"):
                sub = self._child(path, detail, _is_optional(f) or value is None)
                subsections.append(sub.widget)
            elif kind == "named_tables":
                items = [self._child((*path, key), detail, False).widget for key in (value or {})]
                if not items:
                    items.append(widgets.Label("none (add them in the TOML text)"))
                box = widgets.Accordion(children=[widgets.VBox(items)], titles=(f.name,), selected_index=None)
                subsections.append(box)
            else:
                control = FieldControl(path, f, kind, detail, value, on_change=self._on_change)
                self._registry.controls[control.name] = control
                rows.append(control.widget)
        return rows + subsections


def _signature(cls: type, data: Any, path: Path = ()) -> tuple:
    """Which tables are present (the shape of the control tree) for ``data``."""
    out: list[Any] = []
    for f, kind, detail in field_kinds(cls):
        value = data.get(f.name) if isinstance(data, Mapping) else None
        if kind in ("table", "params"):
            out.append((f.name, value is not None, _signature(detail, value) if value is not None else ()))
        elif kind == "named_tables":
            out.append((f.name, tuple((k, _signature(detail, v)) for k, v in (value or {}).items())))
    return tuple(out)


# ---------------------------------------------------------------------------
# the editor
# ---------------------------------------------------------------------------


class SpecEditor(Twinned, traitlets.HasTraits):
    """Controls for a whole spec (or some of its tables), kept valid by the loader.

    Parameters
    ----------
    spec : Spec
        The starting spec.
    tables : sequence of str, optional
        Top-level keys to show (e.g. ``("sea",)``); all when omitted.
        Validation always covers the whole spec.

    Attributes
    ----------
    spec : Spec
        The current valid spec (a trait: ``editor.observe(handler, "spec")``).
    errors : dict of str to str
        The validator's message for each control whose last change was
        refused, by dotted path.
    controls : dict of str to FieldControl
        Every field control by dotted path (``"sea.hs_m"``).
    widget : ipywidgets.VBox
        The panel: the save/load row and the generated sections.

    Examples
    --------
    >>> from wavebench.spec import example_spec_path, load_spec
    >>> editor = SpecEditor(load_spec(example_spec_path("dulse_bay")), tables=("sea",))
    >>> editor.set_value("sea.n_components", -3)
    False
    >>> editor.errors["sea.n_components"]
    'sea.n_components = -3 is not allowed: must be a finite whole number >= 1'
    >>> editor.spec.sea.n_components
    80
    """

    spec = traitlets.Instance(Spec)
    errors = traitlets.Dict()
    title = "spec"

    def __init__(self, spec: Spec, *, tables: Any = None) -> None:
        super().__init__()
        if not isinstance(spec, Spec):
            raise ParameterError("spec", spec, "must be a wavebench.spec.Spec (load one with load_spec)")
        self.tables = tuple(tables) if tables is not None else None
        self._data = spec_to_data(spec)
        self.spec = spec
        self.path_text = widgets.Text(placeholder="path/to/spec.toml", description="file",
                                      layout=widgets.Layout(width="360px"))  # fmt: skip
        self.save_button = widgets.Button(description="save", tooltip="write the current spec as TOML to the file")
        self.load_button = widgets.Button(description="load", tooltip="read a spec from the file")
        self.status = widgets.Label("")
        self.save_button.on_click(lambda _b: self._save_clicked())
        self.load_button.on_click(lambda _b: self._load_clicked())
        self.toml_button = widgets.Button(description="edit as TOML", tooltip="edit the whole spec as TOML text")
        self.toml_button.on_click(lambda _b: self.toggle_toml())
        self.toml_box: widgets.VBox | None = None
        self._io_row = widgets.HBox([self.path_text, self.save_button, self.load_button, self.toml_button,
                                     self.status])  # fmt: skip
        self.widget = widgets.VBox()
        self._build()

    # -- building -------------------------------------------------------------------

    def _build(self) -> None:
        was_open = [name for name, sec in getattr(self, "_registry", _Registry()).sections.items() if sec.is_open]
        self._registry = _Registry()
        self.root = TableSection((), Spec, self._data, on_change=self._changed, only=self.tables,
                                 data_of=lambda p: _get(self._data, p), registry=self._registry)  # fmt: skip
        self._sig = _signature(Spec, self._data)
        self.widget.children = [self._io_row, *([self.toml_box] if self.toml_box else []), self.root.widget]
        for name in was_open:  # keep the sections the user had open
            if name in self._registry.sections:
                self._registry.sections[name].open()

    @property
    def controls(self) -> dict[str, FieldControl]:
        """Every field control by dotted path (builds every section)."""
        return self.root.controls

    @property
    def sections(self) -> dict[str, TableSection]:
        """Every table section by dotted path (builds every section)."""
        return self.root.sections

    def _find(self, path: str) -> FieldControl | TableSection | None:
        """The control or section at ``path``, building only the sections on the way."""
        keys = path.split(".")
        for k in range(1, len(keys) + 1):
            sec = self._registry.sections.get(".".join(keys[:k]))
            if sec is not None:
                sec.build()
        return self._registry.controls.get(path) or self._registry.sections.get(path)

    def section(self, path: str) -> TableSection:
        """The section of a table by dotted path, e.g. ``"current.variation"``."""
        found = self._find(path)
        if not isinstance(found, TableSection):
            raise ParameterError("path", path, f"must name a table shown here, e.g. {sorted(self.sections)[:3]}")
        return found

    def control(self, path: str) -> FieldControl:
        """The control of a field by dotted path, e.g. ``"sea.hs_m"``."""
        found = self._find(path)
        if not isinstance(found, FieldControl):
            raise ParameterError("path", path, f"must name a field shown here, e.g. {sorted(self.controls)[:3]}")
        return found

    # -- changes --------------------------------------------------------------------

    def _changed(self, source: Any, raw: Any) -> None:
        self._apply(source.path, raw, source)

    def _apply(self, path: Path, raw: Any, source: Any = None) -> bool:
        name = _dotted(path)
        if isinstance(raw, ParameterError):
            self._refuse(name, str(raw), source)
            return False
        control = self._registry.controls.get(name)
        if control is not None and control.kind == "number" and isinstance(raw, (list, tuple)):
            # a spec holds one number or a distribution here (per-trial arrays are drawn, not written)
            self._refuse(name, str(ParameterError(name, raw, "must be a number or a distribution table")), source)
            return False
        data = copy.deepcopy(self._data)
        _set(data, path, raw)
        try:
            spec = spec_from_data(data)
            # the spec held must survive save and load: validate its own written form once more
            spec_from_data(spec_to_data(spec))
        except ParameterError as exc:
            self._refuse(name, str(exc), source)
            return False
        except (ValueError, TypeError, ArithmeticError) as exc:  # a value the schema's checks did not foresee
            self._refuse(name, f"{name} = {raw!r} is not allowed: {type(exc).__name__}: {exc}", source)
            return False
        self._accept(spec)
        errors = dict(self.errors)
        errors.pop(name, None)
        self.errors = errors
        if source is not None and self._registry.controls.get(name) is source:
            source.set_error("")
        return True

    def _refuse(self, name: str, message: str, source: Any) -> None:
        self.errors = {**self.errors, name: message}
        target = source if source is not None else self._find(name)
        if target is not None:
            target.set_error(message)

    def _accept(self, spec: Spec) -> None:
        data = spec_to_data(spec)
        self._data = data
        if _signature(Spec, data) != self._sig:
            self._build()
        else:
            for control in self._registry.controls.values():
                value = _get(data, control.path)
                if value != control._shown:
                    with contextlib.suppress(traitlets.TraitError, TypeError, ValueError):
                        control.show(value)
        self.spec = spec

    def read_controls(self) -> Spec:
        """A spec built from what the controls show (panel -> spec), through the loader.

        Tables not shown (see ``tables``) keep the current spec's values.

        Raises
        ------
        ParameterError
            When the values shown do not make a valid spec (e.g. after a
            refused change).
        """
        data = copy.deepcopy(self._data)
        for key in list(data):
            if self.tables is None or key in self.tables:
                if isinstance(data[key], dict):
                    data[key] = _strip_values(data[key])
                else:
                    del data[key]
        for control in self.controls.values():
            _set(data, control.path, control.read())
        return spec_from_data(data)

    def set_value(self, path: str, value: Any) -> bool:
        """Change one field by dotted path (``None`` removes it), as its control would.

        Returns
        -------
        bool
            Whether the loader accepted the change; if not, the message is
            in :attr:`errors` and beside the control, and :attr:`spec` is
            unchanged.
        """
        keys = tuple(path.split("."))
        target = self._find(path)
        ok = self._apply(keys, value, target)
        if not ok and isinstance(target, FieldControl):
            with contextlib.suppress(traitlets.TraitError, TypeError, ValueError):
                target.show(value)  # a widget that cannot hold the value keeps its last one
            target.set_error(self.errors[path])
        return ok

    def set_spec(self, spec: Spec) -> None:
        """Show ``spec`` in every control (code -> panel); clears the errors."""
        if not isinstance(spec, Spec):
            raise ParameterError("spec", spec, "must be a wavebench.spec.Spec (load one with load_spec)")
        for target in (*self._registry.controls.values(), *self._registry.sections.values()):
            target.set_error("")
        self.errors = {}
        self._accept(spec)

    def on_change(self, callback: Callable[[Spec], None]) -> None:
        """Call ``callback(spec)`` after every accepted change."""
        self.observe(lambda change: callback(change["new"]), "spec")

    # -- TOML ----------------------------------------------------------------------

    def to_toml(self) -> str:
        """The current spec as canonical TOML text (:func:`~wavebench.spec.io.dump_spec`)."""
        return dump_spec(self.spec)

    def load_toml(self, source: str | os.PathLike[str]) -> Spec:
        """Load a spec from TOML text or a file path and show it.

        Raises
        ------
        ParameterError
            From :func:`~wavebench.spec.io.load_spec`; the editor keeps its spec.
        """
        spec = load_spec(source)
        self.set_spec(spec)
        return spec

    def save_toml(self, path: str | os.PathLike[str]) -> None:
        """Write the current spec to ``path`` (:func:`~wavebench.spec.io.save_spec`)."""
        save_spec(self.spec, path)

    def toggle_toml(self) -> None:
        """Show (filled with the current spec's TOML) or hide the whole-spec text editor."""
        if self.toml_box is None:
            self.toml_text = widgets.Textarea(layout=widgets.Layout(width="720px", height="320px"))
            self.toml_apply = widgets.Button(description="apply", tooltip="load this text as the spec")
            self.toml_apply.on_click(lambda _b: self._apply_text())
            self.toml_box = widgets.VBox([self.toml_text, self.toml_apply])
            self.widget.children = [self._io_row, self.toml_box, self.root.widget]
        elif self.toml_box.layout.display != "none":
            self.toml_box.layout.display = "none"
            return
        self.toml_box.layout.display = None
        self.toml_text.value = self.to_toml()

    def _apply_text(self) -> None:
        try:
            self.load_toml(self.toml_text.value)
        except ParameterError as exc:
            self.status.value = str(exc)
            return
        self.status.value = "applied the TOML text"

    def _file(self) -> str | None:
        path = self.path_text.value.strip()
        if not path:
            self.status.value = "type a file path first"
            return None
        return path

    def _save_clicked(self) -> None:
        path = self._file()
        if path is None:
            return
        try:
            self.save_toml(path)
        except OSError as exc:
            self.status.value = f"could not write {path}: {exc.strerror or exc}"
            return
        self.status.value = f"saved to {path}"

    def _load_clicked(self) -> None:
        path = self._file()
        if path is None:
            return
        try:
            self.load_toml(_FilePath(path))
        except ParameterError as exc:
            self.status.value = str(exc)
            return
        self.status.value = f"loaded {path}"

    # -- static twin ---------------------------------------------------------------

    def static_html(self) -> str:
        """The spec's TOML text (the shown tables) and any refused changes, as HTML."""
        text = self.to_toml() if self.tables is None else _tables_toml(self.spec, self.tables)
        parts = [f"<pre>{escape(text)}</pre>"]
        if self.errors:
            items = "".join(f"<li>{escape(msg)}</li>" for msg in self.errors.values())
            parts.append(f"<p>Refused changes (the spec above is the last valid one):</p><ul>{items}</ul>")
        return "".join(parts)


def _strip_values(table: dict[str, Any]) -> dict[str, Any]:
    """The nested tables of ``table`` with every value left out (the skeleton the controls fill in)."""
    out: dict[str, Any] = {}
    for key, value in table.items():
        if isinstance(value, dict) and not _looks_like_distribution(value):
            out[key] = _strip_values(value)
    return out


def _tables_toml(spec: Spec, tables: tuple[str, ...]) -> str:
    """The TOML text of some top-level tables of ``spec``."""
    out, keep = [], False
    for line in dump_spec(spec).splitlines():
        if line.startswith("["):
            head = line.strip("[]").split(".")[0]
            keep = head in tables
        if keep:
            out.append(line)
    return "\n".join(out) + "\n"
