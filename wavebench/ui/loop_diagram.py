"""The guidance-navigation-control loop of a spec, as wired: roles, layout, SVG and a live view.

One picture, drawn twice from the same numbers. :func:`loop_layout` reads a
spec's plain data (:func:`~wavebench.spec.schema.spec_to_data`, or a draft
of it that the loader has not accepted yet) and places one box per role of
the loop — the surroundings (sea, current, wind, seabed), the craft, the
sensors (one row per sensor kind), the navigator, the guide, the pilot and
the actuators — with the edges between them, every coordinate computed
here. :func:`loop_svg` turns that layout into static SVG (for the static
twin); :class:`LoopDiagram` sends the same layout as a JSON trait to a small
ES module (``static/loop_diagram.js``) that draws exactly those boxes and
lines in the browser. Layout, wording and colours live only in this module.

Each box and edge has a state:

``"used"``
    In the loop.
``"idle"``
    Fitted but not read: a sensor the chosen navigator ignores (a GNSS
    receiver under dead reckoning, any sensor under the true-state
    navigator).
``"absent"``
    Not in the spec (calm water, no current, a sensor kind not fitted);
    drawn greyed.
``"missing"``
    Needed but not there: a sensor kind the navigator needs
    (:data:`~wavebench.spec.sensors.NAVIGATOR_NEEDS`) or the seabed map of
    the terrain navigator; drawn in the warning style with a dashed edge to
    the navigator.

Which sensor kinds each navigator reads (:data:`NAVIGATOR_READS`) follows
the compiled navigator (:func:`wavebench.trial.nav_kernel.nav_update_one`):
heading and DVL aid every estimator, position fixes (GNSS, acoustic
ranges) only the EKF, depth and altimeter only the terrain navigator.

Examples
--------
>>> from wavebench.spec import example_spec_path, load_spec, spec_to_data
>>> lay = loop_layout(spec_to_data(load_spec(example_spec_path("brannock_bridge"))))
>>> [n["id"] for n in lay["nodes"] if n["kind"] == "role"][:5]
['sea', 'current', 'wind', 'seabed', 'craft']
>>> sorted(e["source"] for e in lay["edges"] if e["target"] == "navigator" and e["state"] == "used")
['sensor:compass', 'sensor:gnss', 'sensor:imu']
>>> loop_svg(lay).startswith("<svg")
True
"""

from __future__ import annotations

import html
from collections.abc import Mapping, Sequence
from pathlib import Path
from typing import Any

import anywidget
import traitlets

from ..spec.sensors import NAVIGATOR_NEEDS, NAVIGATORS, SENSOR_KINDS

__all__ = [
    "ENVIRONMENT_ROLES",
    "NAVIGATOR_READS",
    "ROLES",
    "STATES",
    "STATE_STYLES",
    "LoopDiagram",
    "RoleFill",
    "loop_layout",
    "loop_svg",
    "stack_roles",
    "unmet_needs",
]

#: The roles of the loop, in the order they are listed and drawn.
ROLES = ("sea", "current", "wind", "seabed", "craft", "sensors", "navigator", "guide", "pilot", "actuators")
#: The roles of the surroundings (optional tables of the spec).
ENVIRONMENT_ROLES = ("sea", "current", "wind", "seabed")
#: Box and edge states, from "in the loop" to "needed but missing".
STATES = ("used", "idle", "absent", "missing")

#: Sensor kinds each navigator reads (see the module notes).
NAVIGATOR_READS: dict[str, frozenset[str]] = {
    "truth": frozenset(),
    "ekf": frozenset({"imu", "compass", "gyrocompass", "dvl", "gnss", "acoustic"}),
    "dead_reckoning": frozenset({"imu", "compass", "gyrocompass", "dvl"}),
    "terrain": frozenset({"imu", "compass", "gyrocompass", "dvl", "depth", "altimeter"}),
}

#: Display names of the sensor kinds.
KIND_LABELS = {
    "gnss": "GNSS",
    "compass": "compass",
    "gyrocompass": "gyrocompass",
    "imu": "IMU",
    "dvl": "DVL",
    "depth": "depth",
    "altimeter": "altimeter",
    "acoustic": "acoustic range",
}
#: Display names of the navigators.
NAVIGATOR_LABELS = {
    "truth": "true state (no estimator)",
    "ekf": "extended Kalman filter",
    "dead_reckoning": "dead reckoning",
    "terrain": "terrain-aided particle filter",
}
_GUIDE_LABELS = {"los": "line of sight", "ilos": "integral line of sight"}
_PILOT_LABELS = {"pid": "PID heading, PI speed"}
_SEA_LABELS = {"jonswap": "JONSWAP sea", "pierson_moskowitz": "Pierson-Moskowitz sea"}
_STATUS_WORDS = {"used": "read", "idle": "not read", "absent": "not fitted", "missing": "needed"}

#: Colours of each state: box fill, box outline, text, edge, dash pattern ("" for solid).
STATE_STYLES: dict[str, dict[str, str]] = {
    "used": {"fill": "#eef5f1", "stroke": "#2b6a55", "text": "#16352b", "edge": "#2b6a55", "dash": ""},
    "idle": {"fill": "#fbfcfb", "stroke": "#93a69e", "text": "#55655f", "edge": "#a9b8b2", "dash": "4 2"},
    "absent": {"fill": "#f4f3ef", "stroke": "#d2d0c8", "text": "#a7a59c", "edge": "#d8d6cf", "dash": "2 3"},
    "missing": {"fill": "#fcefe1", "stroke": "#b9570f", "text": "#7f3a06", "edge": "#b9570f", "dash": "6 3"},
}
_GROUP_STYLE = {"fill": "#f7f9f8", "stroke": "#7d958b", "text": "#2f4a41"}
_FONT = "ui-sans-serif, system-ui, sans-serif"
_CHAR_W = 6.2  # rough width of an 11 px sans-serif character [px] (common practice, no source)

_WIDTH, _HEIGHT = 760, 436


# ---------------------------------------------------------------------------
# what fills each role
# ---------------------------------------------------------------------------


class RoleFill(dict):
    """One row of the roles table (a plain dict).

    Keys ``role``, ``filled_by``, ``detail``, ``state`` (one of
    :data:`STATES`) and ``short`` (the few words the diagram's box shows).
    """


def _fmt(value: Any) -> str:
    """A spec value in a few characters: numbers by ``%g``, distributions by name and parameters."""
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, (int, float)):
        return f"{value:g}"
    if isinstance(value, Mapping) and len(value) == 1:
        ((name, args),) = value.items()
        if isinstance(args, Mapping):
            inner = ", ".join(f"{k} {_fmt(v)}" for k, v in args.items())
        elif isinstance(args, (list, tuple)):
            inner = ", ".join(_fmt(v) for v in args)
        else:
            inner = _fmt(args)
        return f"{name.replace('_', ' ')}({inner})"
    if isinstance(value, (list, tuple)):
        return "[" + ", ".join(_fmt(v) for v in value) + "]"
    return str(value)


def _sensors(data: Mapping[str, Any]) -> dict[str, str]:
    """Sensor name by kind (the first of each kind, as the schema allows one per kind)."""
    out: dict[str, str] = {}
    for name, table in (data.get("sensors") or {}).items():
        kind = table.get("kind") if isinstance(table, Mapping) else None
        if isinstance(kind, str):
            out.setdefault(kind, name)
    return out


def _navigator(data: Mapping[str, Any]) -> str:
    return str((data.get("stack") or {}).get("navigator", "truth"))


def unmet_needs(data: Mapping[str, Any]) -> list[tuple[str, ...]]:
    """The groups of :data:`~wavebench.spec.sensors.NAVIGATOR_NEEDS` no fitted sensor satisfies.

    Parameters
    ----------
    data : Mapping
        A spec's plain data (or a draft of it).

    Returns
    -------
    list of tuple of str
        Each unmet group of sensor kinds (one of them is needed), in the
        navigator's order; empty when every need is met or the navigator is
        unknown.

    Examples
    --------
    >>> unmet_needs({"stack": {"navigator": "ekf"}, "sensors": {"u": {"kind": "imu"}}})
    [('compass', 'gyrocompass'), ('gnss', 'acoustic')]
    """
    kinds = set(_sensors(data))
    return [g for g in NAVIGATOR_NEEDS.get(_navigator(data), ()) if not kinds.intersection(g)]


def _propulsion(craft: Mapping[str, Any]) -> str | None:
    if "differential_thrust" in craft:
        return "differential_thrust"
    if "prop_rudder" in craft:
        return "prop_rudder"
    demo = craft.get("demo")
    if isinstance(demo, str):
        from ..craft.actuators import DifferentialThrustParams
        from ..craft.catalogue import DEMO_CRAFT_NAMES, demo_craft

        if demo.lower() in (n.lower() for n in DEMO_CRAFT_NAMES):
            p = demo_craft(demo).propulsion
            return "differential_thrust" if isinstance(p, DifferentialThrustParams) else "prop_rudder"
    return None


def stack_roles(data: Mapping[str, Any]) -> list[RoleFill]:
    """What fills each role of the loop, one row per role of :data:`ROLES` then one per sensor kind fitted.

    Parameters
    ----------
    data : Mapping
        A spec's plain data (:func:`~wavebench.spec.schema.spec_to_data`)
        or a draft of it.

    Returns
    -------
    list of RoleFill
        Rows with ``role``, ``filled_by``, ``detail`` and ``state`` (one of
        :data:`STATES`); the sensor rows have role ``"sensor: <kind>"``.

    Examples
    --------
    >>> rows = stack_roles({"craft": {"demo": "Dulse"}, "stack": {"navigator": "truth"}})
    >>> [(r["role"], r["filled_by"]) for r in rows][4:7]
    [('craft', 'Dulse (demo craft)'), ('sensors', 'none fitted'), ('navigator', 'truth')]
    """
    rows: list[RoleFill] = []

    def add(role: str, filled_by: str, detail: str, state: str, short: str | None = None) -> None:
        rows.append(RoleFill(role=role, filled_by=filled_by, detail=detail, state=state, short=short or filled_by))

    sea = data.get("sea")
    if isinstance(sea, Mapping):
        kind = str(sea.get("kind", "jonswap"))
        detail = f"Hs {_fmt(sea.get('hs_m'))} m, Tp {_fmt(sea.get('tp_s'))} s"
        add("sea", _SEA_LABELS.get(kind, kind), detail, "used")
    else:
        add("sea", "calm water", "no [sea] table", "absent")
    cur = data.get("current")
    if isinstance(cur, Mapping):
        detail = f"{_fmt(cur.get('speed_mps'))} m/s setting {_fmt(cur.get('set_deg'))} deg"
        add(
            "current",
            "slowly varying current" if cur.get("variation") else "uniform current",
            detail,
            "used",
            "varying current" if cur.get("variation") else "uniform current",
        )
    else:
        add("current", "no current", "no [current] table", "absent")
    wind = data.get("wind")
    if isinstance(wind, Mapping):
        gusts = wind.get("gust_spectrum", "npd")
        detail = f"{_fmt(wind.get('speed_mps'))} m/s from {_fmt(wind.get('direction_from_deg'))} deg"
        steady = gusts == "none"
        add(
            "wind",
            "steady wind" if steady else f"gusting wind ({gusts} spectrum)",
            detail,
            "used",
            "steady wind" if steady else "gusting wind",
        )
    else:
        add("wind", "no wind", "no [wind] table", "absent")
    bed = data.get("seabed")
    nav = _navigator(data)
    if isinstance(bed, Mapping):
        if bed.get("kind") == "flat":
            add("seabed", "flat seabed", f"depth {_fmt(bed.get('depth_m'))} m", "used")
        else:
            add("seabed", "synthetic bay", f"layout seed {_fmt(bed.get('layout_seed', 0))}", "used")
    elif nav == "terrain":
        add("seabed", "none", "the terrain navigator needs a [seabed] map", "missing")
    else:
        add("seabed", "none", "no [seabed] table", "absent")

    craft = data.get("craft") or {}
    prop = _propulsion(craft)
    if craft.get("demo"):
        add("craft", f"{craft['demo']} (demo craft)", "built-in hull and propulsion", "used", str(craft["demo"]))
    else:
        name = craft.get("name", "unnamed")
        hull = craft.get("hull") or {}
        add(
            "craft",
            f"{name} (written in the spec)",
            f"hull length {_fmt(hull.get('length_m', '?'))} m",
            "used",
            str(name),
        )

    fitted = _sensors(data)
    reads = NAVIGATOR_READS.get(nav, frozenset())
    missing = {k for g in unmet_needs(data) for k in g}
    names = ", ".join(f"{name} ({kind})" for kind, name in fitted.items()) or "none fitted"
    add(
        "sensors",
        names,
        f"{len(fitted)} of {len(SENSOR_KINDS)} kinds",
        "used" if fitted else "absent",
        f"{len(fitted)} fitted",
    )
    needs = NAVIGATOR_NEEDS.get(nav)
    if needs is None:
        add("navigator", nav, f"unknown navigator (one of {', '.join(NAVIGATORS)})", "missing")
    else:
        gaps = unmet_needs(data)
        if gaps:
            detail = "needs " + "; ".join(" or ".join(KIND_LABELS[k] for k in g) for g in gaps)
            add("navigator", nav, f"{NAVIGATOR_LABELS[nav]}; {detail}", "missing")
        else:
            add("navigator", nav, NAVIGATOR_LABELS[nav], "used")
    guide = (data.get("stack") or {}).get("guide") or {}
    gkind = str(guide.get("kind", "los"))
    gdetail = (
        f"lookahead {_fmt(guide['lookahead_m'])} m" if "lookahead_m" in guide else "lookahead from the hull length"
    )
    add("guide", gkind, f"{_GUIDE_LABELS.get(gkind, gkind)}; {gdetail}", "used")
    pilot = (data.get("stack") or {}).get("pilot") or {}
    pkind = str(pilot.get("kind", "pid"))
    period = pilot.get("control_period_s")
    pdetail = f"every {_fmt(period)} s" if period is not None else "every time step"
    add("pilot", pkind, f"{_PILOT_LABELS.get(pkind, pkind)}; {pdetail}", "used")
    if prop == "differential_thrust":
        add("actuators", "twin thrusters", "differential thrust steers", "used")
    elif prop == "prop_rudder":
        add("actuators", "propeller and rudder", "the rudder steers in the slipstream", "used", "prop and rudder")
    else:
        add("actuators", "unknown", "the craft names no propulsion", "missing")
    for kind in SENSOR_KINDS:
        if kind in fitted:
            state = "used" if kind in reads else "idle"
            why = f"read by the {nav} navigator" if state == "used" else f"not read by the {nav} navigator"
            add(f"sensor: {kind}", fitted[kind], why, state)
        elif kind in missing:
            add(f"sensor: {kind}", "none", f"the {nav} navigator needs it (or another of its group)", "missing")
    return rows


# ---------------------------------------------------------------------------
# layout
# ---------------------------------------------------------------------------


def _clip(text: str, width: float) -> str:
    n = max(int(width / _CHAR_W), 3)
    return text if len(text) <= n else text[: n - 1] + "…"


def _arrow(p0: Sequence[float], p1: Sequence[float], size: float = 7.0) -> list[list[float]]:
    """Triangle of an arrowhead at ``p1`` pointing from ``p0`` (axis-aligned or diagonal segments)."""
    dx, dy = p1[0] - p0[0], p1[1] - p0[1]
    norm = max((dx * dx + dy * dy) ** 0.5, 1e-9)
    ux, uy = dx / norm, dy / norm
    bx, by = p1[0] - ux * size, p1[1] - uy * size
    half = size * 0.45
    return [[round(p1[0], 1), round(p1[1], 1)], [round(bx - uy * half, 1), round(by + ux * half, 1)],
            [round(bx + uy * half, 1), round(by - ux * half, 1)]]  # fmt: skip


def loop_layout(data: Mapping[str, Any]) -> dict[str, Any]:
    """Boxes, edges and labels of the loop of ``data``, with every coordinate (JSON-ready).

    Parameters
    ----------
    data : Mapping
        A spec's plain data or a draft of it.

    Returns
    -------
    dict
        ``width``, ``height`` [px]; ``nodes``: one per role of :data:`ROLES`
        (``kind = "role"``) and one per sensor kind (``kind = "sensor"``,
        ``id = "sensor:<kind>"``), each with ``id``, ``role``, ``label``,
        ``detail`` (the text drawn), ``title`` (the full text, a tooltip),
        ``x``, ``y``, ``w``, ``h`` and ``state``; ``edges``, each with
        ``id``, ``source``, ``target``, ``state``, ``points`` (the
        polyline), ``arrow`` (the arrowhead triangle) and optional
        ``label`` at ``label_xy``; ``texts`` (free captions); ``legend``;
        ``styles`` (the colours of each state) and ``font``.

    Notes
    -----
    The craft feeds the sensors; a fitted sensor the navigator reads feeds
    it ("used" edge); a kind it needs but lacks gets a "missing" edge; the
    navigator feeds the guide, the guide the pilot, the pilot the
    actuators and the actuators the craft. The surroundings act on the
    craft; the seabed also reaches the DVL (bottom lock) and the altimeter,
    and is the terrain navigator's map.
    """
    rows = {r["role"]: r for r in stack_roles(data)}
    fitted = _sensors(data)
    nav = _navigator(data)
    reads = NAVIGATOR_READS.get(nav, frozenset())
    missing_kinds = {k for g in unmet_needs(data) for k in g}
    nodes: list[dict[str, Any]] = []
    edges: list[dict[str, Any]] = []

    def node(nid: str, role: str, kind: str, label: str, detail: str, title: str, x: float, y: float, w: float,
             h: float, state: str) -> dict[str, Any]:  # fmt: skip
        box = {"id": nid, "role": role, "kind": kind, "label": _clip(label, w - 12), "detail": _clip(detail, w - 12),
               "title": title, "x": x, "y": y, "w": w, "h": h, "state": state}  # fmt: skip
        nodes.append(box)
        return box

    def edge(source: str, target: str, state: str, points: list[list[float]], label: str = "",
             label_xy: tuple[float, float] | None = None, anchor: str = "start") -> None:  # fmt: skip
        e: dict[str, Any] = {"id": f"{source}->{target}", "source": source, "target": target, "state": state,
                             "points": points, "arrow": _arrow(points[-2], points[-1])}  # fmt: skip
        if label:
            e["label"], e["label_xy"], e["label_anchor"] = label, list(label_xy or points[0]), anchor
        edges.append(e)

    def role_node(role: str, x: float, y: float, w: float, h: float, label: str) -> dict[str, Any]:
        r = rows[role]
        return node(role, role, "role", label, r["short"], f"{label}: {r['filled_by']} — {r['detail']}",
                    x, y, w, h, r["state"])  # fmt: skip

    # surroundings, in a column on the left
    env_x, env_w, env_h = 16.0, 128.0, 36.0
    env_y = {"sea": 34.0, "current": 80.0, "wind": 126.0, "seabed": 214.0}
    for role in ENVIRONMENT_ROLES:
        role_node(role, env_x, env_y[role], env_w, env_h, role)
    craft = role_node("craft", 190.0, 92.0, 124.0, 52.0, "craft")
    grp_x, grp_y, grp_w = 354.0, 16.0, 196.0
    row_x, row_w, row_h, row_step, row_top = grp_x + 10.0, grp_w - 20.0, 21.0, 25.0, grp_y + 30.0
    sensors = role_node("sensors", grp_x, grp_y, grp_w, row_top - grp_y + row_step * len(SENSOR_KINDS) + 4.0,
                        "sensors")  # fmt: skip
    navigator = role_node("navigator", 598.0, 92.0, 146.0, 52.0, "navigator")
    bottom_y, bottom_h = 326.0, 52.0
    guide = role_node("guide", 598.0, bottom_y, 146.0, bottom_h, "guide")
    pilot = role_node("pilot", 384.0, bottom_y, 146.0, bottom_h, "pilot")
    actuators = role_node("actuators", 190.0, bottom_y, 124.0, bottom_h, "actuators")

    # one row per sensor kind inside the sensors box
    for i, kind in enumerate(SENSOR_KINDS):
        if kind in fitted:
            state = "used" if kind in reads else "idle"
        else:
            state = "missing" if kind in missing_kinds else "absent"
        name = fitted.get(kind, "")
        label = KIND_LABELS[kind]
        title = f"{label}: " + (f"sensor '{name}', " if name else "") + _STATUS_WORDS[state]
        node(f"sensor:{kind}", "sensors", "sensor", label, _STATUS_WORDS[state], title, row_x,
             row_top + i * row_step, row_w, row_h, state)  # fmt: skip

    cy = craft["y"] + craft["h"] / 2
    # surroundings act on the craft
    for k, role in enumerate(("sea", "current", "wind")):
        y0 = env_y[role] + env_h / 2
        edge(role, "craft", rows[role]["state"] if rows[role]["state"] == "used" else "absent",
             [[env_x + env_w, y0], [craft["x"], craft["y"] + 14.0 + 12.0 * k]])  # fmt: skip
    # the craft's motion is what the sensors measure
    edge("craft", "sensors", "used" if fitted else "absent", [[craft["x"] + craft["w"], cy], [grp_x, cy]],
         "motion", (craft["x"] + craft["w"] + 4.0, cy - 5.0))  # fmt: skip
    # sensor rows to the navigator, fanned along its left side
    feeding = [k for k in SENSOR_KINDS if (k in fitted and k in reads) or k in missing_kinds]
    ny0, ny1 = navigator["y"] + 8.0, navigator["y"] + navigator["h"] - 8.0
    for j, kind in enumerate(feeding):
        i = SENSOR_KINDS.index(kind)
        y = row_top + i * row_step + row_h / 2
        ty = ny0 + (ny1 - ny0) * (j / (len(feeding) - 1) if len(feeding) > 1 else 0.5)
        edge(f"sensor:{kind}", "navigator", "used" if kind in fitted else "missing",
             [[row_x + row_w, y], [navigator["x"], round(ty, 1)]])  # fmt: skip
    # the seabed: bottom lock and altimeter returns, and the terrain navigator's map
    bed_state = rows["seabed"]["state"]
    bus_x = grp_x - 14.0
    sb_y = env_y["seabed"] + env_h / 2
    if bed_state == "used":
        for kind in ("dvl", "altimeter"):
            if kind in fitted:
                y = row_top + SENSOR_KINDS.index(kind) * row_step + row_h / 2
                edge("seabed", f"sensor:{kind}", "used", [[env_x + env_w, sb_y - 6.0], [bus_x, sb_y - 6.0],
                                                          [bus_x, y], [row_x, y]])  # fmt: skip
    if nav == "terrain":
        lane_y = sensors["y"] + sensors["h"] + 18.0
        edge("seabed", "navigator", "used" if bed_state == "used" else "missing",
             [[env_x + env_w, sb_y + 8.0], [170.0, sb_y + 8.0], [170.0, lane_y], [navigator["x"] - 20.0, lane_y],
              [navigator["x"] - 20.0, navigator["y"] + navigator["h"] - 6.0],
              [navigator["x"], navigator["y"] + navigator["h"] - 6.0]],
             "map", (180.0, lane_y - 4.0))  # fmt: skip
    if nav == "truth":
        # the true-state navigator reads the craft's state directly, past the sensors
        tx = craft["x"] + craft["w"] - 24.0
        nx = navigator["x"] + navigator["w"] - 28.0
        edge("craft", "navigator", "used", [[tx, craft["y"]], [tx, 6.0], [nx, 6.0], [nx, navigator["y"]]],
             "true state", (grp_x + grp_w + 8.0, 20.0))  # fmt: skip
    # the loop closes through the autonomy stack
    gx = guide["x"] + guide["w"] / 2
    edge(
        "navigator",
        "guide",
        "used",
        [[gx, navigator["y"] + navigator["h"]], [gx, guide["y"]]],
        "estimate",
        (gx + 5.0, (navigator["y"] + navigator["h"] + guide["y"]) / 2),
    )
    by = bottom_y + bottom_h / 2
    edge(
        "guide",
        "pilot",
        "used",
        [[guide["x"], by], [pilot["x"] + pilot["w"], by]],
        "setpoints",
        ((guide["x"] + pilot["x"] + pilot["w"]) / 2, by - 5.0),
        "middle",
    )
    edge(
        "pilot",
        "actuators",
        "used",
        [[pilot["x"], by], [actuators["x"] + actuators["w"], by]],
        "commands",
        ((pilot["x"] + actuators["x"] + actuators["w"]) / 2, by - 5.0),
        "middle",
    )
    ax = actuators["x"] + actuators["w"] / 2
    edge(
        "actuators",
        "craft",
        "used" if rows["actuators"]["state"] == "used" else "missing",
        [[ax, actuators["y"]], [ax, craft["y"] + craft["h"]]],
        "forces",
        (ax + 5.0, craft["y"] + craft["h"] + 22.0),
    )

    texts = [
        {"x": env_x, "y": 22.0, "text": "surroundings", "anchor": "start"},
        {"x": 598.0, "y": 82.0, "text": "autonomy stack", "anchor": "start"},
    ]
    legend = []
    lx = 16.0
    for state, words in (("used", "in the loop"), ("idle", "fitted, not read"), ("absent", "not in the spec"),
                         ("missing", "needed, missing")):  # fmt: skip
        legend.append({"x": lx, "y": _HEIGHT - 30.0, "state": state, "text": words})
        lx += 36.0 + _CHAR_W * len(words)
    return {
        "width": _WIDTH,
        "height": _HEIGHT,
        "nodes": nodes,
        "edges": edges,
        "texts": texts,
        "legend": legend,
        "styles": {s: dict(v) for s, v in STATE_STYLES.items()},
        "group_style": dict(_GROUP_STYLE),
        "font": _FONT,
    }


# ---------------------------------------------------------------------------
# static SVG (the twin); static/loop_diagram.js draws the same elements
# ---------------------------------------------------------------------------


def _a(value: Any) -> str:
    return html.escape(str(value), quote=True)


def _pts(points: Sequence[Sequence[float]]) -> str:
    return " ".join(f"{x:g},{y:g}" for x, y in points)


def _svg_node(n: Mapping[str, Any], layout: Mapping[str, Any]) -> str:
    st = layout["styles"][n["state"]]
    group = n["kind"] == "role" and n["role"] == "sensors"
    fill = layout["group_style"]["fill"] if group and n["state"] == "used" else st["fill"]
    dash = f' stroke-dasharray="{st["dash"]}"' if st["dash"] else ""
    out = [f'<g class="wb-node wb-{_a(n["state"])}" data-id="{_a(n["id"])}"><title>{_a(n["title"])}</title>',
           f'<rect x="{n["x"]:g}" y="{n["y"]:g}" width="{n["w"]:g}" height="{n["h"]:g}" rx="5" fill="{fill}" '
           f'stroke="{st["stroke"]}" stroke-width="1.3"{dash}/>']  # fmt: skip
    if n["kind"] == "sensor":
        ty = n["y"] + n["h"] / 2 + 4
        out.append(f'<text x="{n["x"] + 7:g}" y="{ty:g}" font-size="11" fill="{st["text"]}">{_a(n["label"])}</text>')
        out.append(f'<text x="{n["x"] + n["w"] - 7:g}" y="{ty:g}" font-size="10" text-anchor="end" '
                   f'fill="{st["text"]}" font-style="italic">{_a(n["detail"])}</text>')  # fmt: skip
    elif group:
        out.append(f'<text x="{n["x"] + 10:g}" y="{n["y"] + 19:g}" font-size="12" font-weight="600" '
                   f'fill="{layout["group_style"]["text"]}">{_a(n["label"])}</text>')  # fmt: skip
    else:
        cx = n["x"] + n["w"] / 2
        top = n["y"] + n["h"] / 2 - (3 if n["h"] < 40 else 5)
        out.append(f'<text x="{cx:g}" y="{top:g}" font-size="12" font-weight="600" text-anchor="middle" '
                   f'fill="{st["text"]}">{_a(n["label"])}</text>')  # fmt: skip
        out.append(f'<text x="{cx:g}" y="{top + 14:g}" font-size="10.5" text-anchor="middle" '
                   f'fill="{st["text"]}">{_a(n["detail"])}</text>')  # fmt: skip
    out.append("</g>")
    return "".join(out)


def _svg_edge(e: Mapping[str, Any], layout: Mapping[str, Any]) -> str:
    st = layout["styles"][e["state"]]
    dash = f' stroke-dasharray="{st["dash"]}"' if st["dash"] else ""
    out = [f'<g class="wb-edge wb-{_a(e["state"])}" data-id="{_a(e["id"])}">',
           f'<polyline points="{_pts(e["points"])}" fill="none" stroke="{st["edge"]}" stroke-width="1.4"{dash}/>',
           f'<polygon points="{_pts(e["arrow"])}" fill="{st["edge"]}"/>']  # fmt: skip
    if e.get("label"):
        x, y = e["label_xy"]
        out.append(f'<text x="{x:g}" y="{y:g}" font-size="10" text-anchor="{_a(e.get("label_anchor", "start"))}" '
                   f'fill="{st["edge"]}">{_a(e["label"])}</text>')  # fmt: skip
    out.append("</g>")
    return "".join(out)


def loop_svg(layout: Mapping[str, Any]) -> str:
    """Static SVG of a :func:`loop_layout` (no script; the same elements the live view draws).

    Parameters
    ----------
    layout : Mapping
        From :func:`loop_layout`.

    Returns
    -------
    str
        One ``<svg>`` element.
    """
    w, h = layout["width"], layout["height"]
    parts = [f'<svg xmlns="http://www.w3.org/2000/svg" class="wb-loop" width="{w}" height="{h}" '
             f'viewBox="0 0 {w} {h}" font-family="{_a(layout["font"])}" role="img" '
             f'aria-label="the loop as wired">']  # fmt: skip
    parts.append(f'<rect x="0" y="0" width="{w}" height="{h}" fill="#ffffff"/>')
    for t in layout["texts"]:
        parts.append(f'<text x="{t["x"]:g}" y="{t["y"]:g}" font-size="11" text-anchor="{t["anchor"]}" '
                     f'fill="#5d6b66" letter-spacing="0.4">{_a(t["text"])}</text>')  # fmt: skip
    roles = [n for n in layout["nodes"] if n["kind"] == "role"]
    rest = [n for n in layout["nodes"] if n["kind"] != "role"]
    parts.extend(_svg_node(n, layout) for n in roles)
    parts.extend(_svg_edge(e, layout) for e in layout["edges"])
    parts.extend(_svg_node(n, layout) for n in rest)
    for item in layout["legend"]:
        st = layout["styles"][item["state"]]
        dash = f' stroke-dasharray="{st["dash"]}"' if st["dash"] else ""
        parts.append(f'<rect x="{item["x"]:g}" y="{item["y"]:g}" width="22" height="13" rx="3" fill="{st["fill"]}" '
                     f'stroke="{st["stroke"]}"{dash}/>'
                     f'<text x="{item["x"] + 28:g}" y="{item["y"] + 10.5:g}" font-size="10.5" '
                     f'fill="#4a5753">{_a(item["text"])}</text>')  # fmt: skip
    parts.append("</svg>")
    return "".join(parts)


# ---------------------------------------------------------------------------
# the live view
# ---------------------------------------------------------------------------

_STATIC = Path(__file__).with_name("static")


class LoopDiagram(anywidget.AnyWidget):
    """The loop diagram as a live widget: a :func:`loop_layout` drawn by ``static/loop_diagram.js``.

    Parameters
    ----------
    layout : dict, optional
        From :func:`loop_layout`; set :attr:`layout` again to redraw.

    Examples
    --------
    >>> view = LoopDiagram(layout=loop_layout({"craft": {"demo": "Dulse"}}))
    >>> len([n for n in view.layout["nodes"] if n["kind"] == "role"])
    10
    """

    _esm = (_STATIC / "loop_diagram.js").read_text(encoding="utf-8")
    _css = (_STATIC / "loop_diagram.css").read_text(encoding="utf-8")
    layout = traitlets.Dict().tag(sync=True)

    def svg(self) -> str:
        """The static SVG of the current layout (:func:`loop_svg`)."""
        return loop_svg(self.layout)
