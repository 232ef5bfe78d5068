"""Malformed specs: each is rejected with a ParameterError naming its TOML path and what is allowed.

Every case edits a copy of the built-in ``skerrow_sound.toml`` (parsed with
tomllib) in one or a few places. The expected texts are the schema's own
documented contract (``wavebench/spec/schema.py``, ``tables.py``,
``fields.py``): the message is ``"<toml.path> = <value> is not allowed:
<what is allowed>"``. No outside standard applies to an error message; the
geometric facts used to build inputs (a non-convex polygon, coincident
points) are checked in the test itself from their definitions.
"""

from __future__ import annotations

import copy
import re
import sys
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import pytest
import tomli_w

from wavebench.cli import main
from wavebench.core.errors import ParameterError
from wavebench.craft.catalogue import demo_craft
from wavebench.spec.fields import params_tree_to_data
from wavebench.spec.io import example_spec_path, load_spec
from wavebench.spec.schema import spec_from_data

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover
    import tomli as tomllib

BASE_TEXT = example_spec_path("skerrow_sound").read_text(encoding="utf-8")
BASE: dict[str, Any] = tomllib.loads(BASE_TEXT)

#: Marker for "delete this key".
DELETE = object()

# A valid inline hull (every HullParams field), used only as input.
HULL = params_tree_to_data(demo_craft("Tholepin").hull)

# A pentagon with a notch: vertex 2 (100, 200) is pushed inwards.
NOTCHED_POLYGON = [[0.0, 0.0], [0.0, 400.0], [100.0, 200.0], [400.0, 400.0], [400.0, 0.0]]


def edited(edits: list[tuple[str, Any]]) -> dict[str, Any]:
    """A deep copy of the base document with each dotted path set (or deleted with DELETE)."""
    data = copy.deepcopy(BASE)
    for path, value in edits:
        *parents, last = path.split(".")
        node = data
        for p in parents:
            node = node[p]
        if value is DELETE:
            del node[last]
        else:
            node[last] = value
    return data


@dataclass(frozen=True)
class Case:
    """One malformed spec: the edits (or raw text), the offending path, a fragment of the allowed text."""

    id: str
    path: str
    fragment: str
    edits: list[tuple[str, Any]] = field(default_factory=list)
    text: str | None = None

    def load(self) -> Any:
        if self.text is not None:
            return load_spec(self.text)
        return spec_from_data(edited(self.edits))

    def toml(self) -> str:
        return self.text if self.text is not None else tomli_w.dumps(edited(self.edits))


REQ = "requirements.track_keeping"

CASES = [
    # unknown keys, with the nearest valid key
    Case("unknown top-level table", "requirement", "did you mean 'requirements'?",
         [("requirement", {"x": {"metric": "xte_p95_m", "below": 5.0, "probability": 0.9}})]),
    Case("unknown top-level table seabead", "seabead", "did you mean 'seabed'?",
         [("seabead", {"kind": "flat", "depth_m": 30.0})]),
    Case("typo in mission", "mission.speed_mp", "did you mean 'speed_mps'?",
         [("mission.speed_mp", 3.0)]),
    Case("typo in stack.guide", "stack.guide.lookahed_m", "did you mean 'lookahead_m'?",
         [("stack.guide.lookahed_m", 25.0)]),
    Case("typo in a requirement", f"{REQ}.probabilty", "did you mean 'probability'?",
         [(f"{REQ}.probabilty", 0.9)]),
    # missing required keys
    Case("missing duration_s", "scenario.duration_s", "is required but missing",
         [("scenario.duration_s", DELETE)]),
    Case("missing speed_mps", "mission.speed_mps", "is required but missing",
         [("mission.speed_mps", DELETE)]),
    Case("missing seed", "campaign.seed", "is required but missing",
         [("campaign.seed", DELETE)]),
    # wrong types
    Case("string for a number", "mission.speed_mps", "must be a finite number > 0",
         [("mission.speed_mps", "fast")]),
    Case("number for a string", "scenario.name", "must be a string",
         [("scenario.name", 3)]),
    Case("number for a choice string", "mission.kind", "must be a string",
         [("mission.kind", 2)]),
    Case("list for a number", "campaign.record_interval_s", "must be a number, not an array",
         [("campaign.record_interval_s", [1.0])]),
    Case("number for a table", "stack.guide", "must be a table",
         [("stack.guide", 5)]),
    Case("number for the origin table", "scenario.origin", "must be a table",
         [("scenario.origin", 47.5)]),
    # out of range
    Case("dt_s zero", "scenario.dt_s", "must be a finite number > 0",
         [("scenario.dt_s", 0.0)]),
    Case("dt_s negative", "scenario.dt_s", "must be a finite number > 0",
         [("scenario.dt_s", -0.1)]),
    Case("dt_s not dividing duration", "scenario.dt_s", "must divide duration_s = 600.0 into a whole number of steps",
         [("scenario.dt_s", 0.7)]),
    Case("negative trials", "campaign.trials", "must be a finite whole number >= 1",
         [("campaign.trials", -6)]),
    Case("probability 1.5", f"{REQ}.probability", "> 0.0 and < 1.0",
         [(f"{REQ}.probability", 1.5)]),
    Case("confidence 0.3", f"{REQ}.confidence", ">= 0.5 and < 1.0",
         [(f"{REQ}.confidence", 0.3)]),
    Case("spec_version 2", "spec_version", "<= 1",
         [("spec_version", 2)]),
    # distributions whose support breaks the field's bound
    Case("normal on a bounded angle", "sea.spreading.mean_dir_deg", "support [-inf, inf] breaks this bound",
         [("sea.spreading.mean_dir_deg", {"normal": {"mean": 225.0, "sd": 15.0}})]),
    Case("normal on the start heading", "mission.start_heading_deg", "use truncated_normal",
         [("mission.start_heading_deg", {"normal": {"mean": 60.0, "sd": 10.0}})]),
    Case("uniform below 0 for hs_m", "sea.hs_m", "support [-0.5, 1.0] breaks this bound",
         [("sea.hs_m", {"uniform": [-0.5, 1.0]})]),
    # bad distributions
    Case("uniform low > high", "sea.tp_s.uniform", "needs low < high",
         [("sea.tp_s", {"uniform": [7.5, 5.0]})]),
    Case("unknown distribution", "current.speed_mps.log_normal", "did you mean 'lognormal'?",
         [("current.speed_mps", {"log_normal": {"median": 0.4, "sigma": 0.25}})]),
    # mission geometry
    Case("survey without polygon", "mission.polygon_ne_m", "is required for kind 'survey'",
         [("mission.kind", "survey")]),
    Case("one waypoint", "mission.waypoints_ne_m", "at least 2 [north_m, east_m] pairs",
         [("mission.waypoints_ne_m", [[0.0, 0.0]])]),
    Case("waypoint not a pair", "mission.waypoints_ne_m[1]", "must be a [north_m, east_m] pair",
         [("mission.waypoints_ne_m", [[0.0, 0.0], [200.0, 550.0, 3.0]])]),
    Case("coincident waypoints", "mission.waypoints_ne_m", "waypoints 1 and 2 coincide",
         [("mission.waypoints_ne_m", [[0.0, 0.0], [200.0, 550.0], [200.0, 550.0], [150.0, -50.0]])]),
    Case("leg speeds wrong count", "mission.leg_speeds_mps", "one speed per leg: 3 values",
         [("mission.leg_speeds_mps", [3.0, 2.5])]),
    Case("non-convex survey polygon", "mission.polygon_ne_m", "convex polygon",
         [("mission.kind", "survey"), ("mission.waypoints_ne_m", DELETE), ("mission.polygon_ne_m", NOTCHED_POLYGON),
          ("mission.line_spacing_m", 30.0), ("mission.line_heading_deg", 0.0)]),
    # requirements
    Case("requirement with below and above", f"{REQ}.below", "exactly one of 'below' and 'above'",
         [(f"{REQ}.above", 1.0)]),
    Case("requirement with neither", f"{REQ}.below", "exactly one of 'below' and 'above'",
         [(f"{REQ}.below", DELETE)]),
    Case("requirement on an unknown metric", f"{REQ}.metric", "did you mean 'xte_p95_m'?",
         [(f"{REQ}.metric", "xte_p99_m")]),
    Case("requirement on a text metric", f"{REQ}.metric", "must be one of ['time_to_complete_s'",
         [(f"{REQ}.metric", "failure_reason")]),
    # cross-table timing
    Case("control period not a multiple of dt", "stack.pilot.control_period_s",
         "whole number (>= 1) of time steps dt_s = 0.1", [("stack.pilot.control_period_s", 0.15)]),
    Case("record interval longer than the run", "campaign.record_interval_s", "at most duration_s = 600.0",
         [("campaign.record_interval_s", 700.0)]),
    # craft, executor, seabed
    Case("demo craft with an inline hull", "craft.hull", "must be absent when 'demo' names a built-in craft",
         [("craft.hull", HULL)]),
    Case("inline craft without propulsion", "craft.differential_thrust",
         "exactly one of [craft.differential_thrust] or [craft.prop_rudder]",
         [("craft", {"name": "Skiff", "hull": HULL})]),
    Case("unknown executor", "campaign.executor", "must be one of ['inline', 'processes', 'dask']",
         [("campaign.executor", "cluster")]),
    Case("flat seabed without depth", "seabed.depth_m", "is required for kind 'flat'",
         [("seabed", {"kind": "flat"})]),
    # not TOML at all
    Case("text that is not TOML", "spec", "is not valid TOML",
         text="spec_version = 1\n[scenario\nname = 'x'\n"),
]  # fmt: skip

IDS = [c.id for c in CASES]


def test_enough_distinct_cases() -> None:
    assert len(CASES) >= 25
    assert len(set(IDS)) == len(IDS)


def test_the_base_document_is_valid() -> None:
    # every case is one edit away from this document, so a rejection comes from the edit
    spec = spec_from_data(edited([]))
    assert spec.scenario.duration_s == 600.0


def test_notched_polygon_is_not_convex() -> None:
    # definition: a polygon is convex iff the cross products of consecutive edges all share a sign
    p = NOTCHED_POLYGON
    n = len(p)
    cross = []
    for i in range(n):
        (a, b), (c, d), (e, f) = p[i], p[(i + 1) % n], p[(i + 2) % n]
        cross.append((c - a) * (f - d) - (d - b) * (e - c))
    assert any(x > 0 for x in cross) and any(x < 0 for x in cross)


@pytest.mark.parametrize("case", CASES, ids=IDS)
def test_malformed_spec_is_rejected_with_path_and_allowed_text(case: Case) -> None:
    pattern = rf"^{re.escape(case.path)} = .* is not allowed: .*{re.escape(case.fragment)}"
    with pytest.raises(ParameterError, match=pattern):
        case.load()


def test_every_error_names_its_offending_path_on_one_line() -> None:
    # property over the whole table: field attribute == path, the path leads the message, one line
    for case in CASES:
        with pytest.raises(ParameterError) as info:
            case.load()
        err = info.value
        message = str(err)
        assert err.field == case.path, case.id
        assert case.path in message, case.id
        assert message.startswith(f"{case.path} = "), case.id
        assert "\n" not in message, case.id
        assert case.fragment in message, case.id


def test_did_you_mean_only_where_a_close_key_exists() -> None:
    # a key far from every allowed one gets the list of allowed keys and no guess
    with pytest.raises(ParameterError) as info:
        spec_from_data(edited([("mission.zzz", 1.0)]))
    message = str(info.value)
    assert message.startswith("mission.zzz = 1.0 is not allowed: unknown key; allowed keys are [")
    assert "did you mean" not in message
    assert "'speed_mps'" in message


CLI_CASES = [c for c in CASES if c.id in ("typo in mission", "dt_s not dividing duration", "text that is not TOML")]


@pytest.mark.parametrize("case", CLI_CASES, ids=[c.id for c in CLI_CASES])
def test_cli_run_reports_one_line_and_exit_status_2(
    case: Case, tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    spec_file = tmp_path / "bad.toml"
    spec_file.write_text(case.toml(), encoding="utf-8")
    out_dir = tmp_path / "store"
    status = main(["run", str(spec_file), "--out", str(out_dir), "--quiet"])
    captured = capsys.readouterr()
    assert status == 2
    lines = captured.err.splitlines()
    assert len(lines) == 1, captured.err
    assert lines[0].startswith("wavebench: error:")
    # load_spec names a file that is not TOML by its path
    where = str(spec_file) if case.text is not None else case.path
    assert f"wavebench: error: {where} = " in lines[0]
    assert case.fragment in lines[0]
    assert "Traceback" not in captured.err
    assert not out_dir.exists()


def test_cli_run_on_a_file_that_is_not_utf8(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    # TOML v1.0.0: "A TOML file must be a valid UTF-8 encoded Unicode document." A Latin-1 byte breaks that.
    spec_file = tmp_path / "latin1.toml"
    spec_file.write_bytes(BASE_TEXT.replace('"Skerrow Sound survey leg"', '"Skerrow caf\xe9"').encode("latin-1"))
    status = main(["run", str(spec_file), "--out", str(tmp_path / "store"), "--quiet"])
    err = capsys.readouterr().err
    assert status == 2
    assert len(err.splitlines()) == 1 and err.startswith("wavebench: error:")
    assert str(spec_file) in err
