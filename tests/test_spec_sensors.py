"""Sensors, navigators and the terrain filter in the spec: what loads, what round-trips, what is refused.

These are load-time checks of the spec layer only (no simulation). The
expected texts are the schema's own documented contract
(``wavebench/spec/sensors.py``, ``tables.py``, ``schema.py``): an error reads
``"<toml.path> = <value> is not allowed: <what is allowed>"``. No outside
standard applies to an error message or a table layout; where a sensor's
error model appears, it is compared with the library's own parameter class
(:mod:`wavebench.sensors`), which the spec must pass through unchanged.
"""

from __future__ import annotations

import dataclasses
import re
import sys

import pytest

from wavebench.core.errors import ParameterError
from wavebench.sensors.dvl import DvlParams
from wavebench.sensors.gnss import GnssParams
from wavebench.sensors.heading import CompassParams, GyrocompassParams
from wavebench.sensors.imu import IMU_GRADES, ImuGrade, imu_grade
from wavebench.sensors.ranging import AcousticRangeParams, AltimeterParams, DepthSensorParams
from wavebench.spec import distributed_fields, dump_spec, example_spec_names, example_spec_path, load_spec, spec_hash
from wavebench.spec.distributions import Uniform
from wavebench.spec.schema import spec_from_data, spec_to_data
from wavebench.spec.sensors import (
    DEFAULT_IMU_GRADE,
    NAVIGATOR_NEEDS,
    NAVIGATORS,
    SENSOR_KINDS,
    ImuOverridesSpec,
    SensorSpec,
)
from wavebench.spec.tables import StackSpec, TerrainSpec

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover
    import tomli as tomllib

HEAD = """
spec_version = 1

[scenario]
name = "Sensor bench"
duration_s = 60.0
dt_s = 0.1

[scenario.origin]
lat_deg = 47.5
lon_deg = -32.0

[craft]
demo = "Dulse"

[seabed]
kind = "synthetic_bay"
layout_seed = 3

[mission]
kind = "waypoints"
waypoints_ne_m = [[900.0, 700.0], [1000.0, 700.0]]
speed_mps = 1.5
running_depth_m = 2.0

[stack]
navigator = "NAVIGATOR"

[stack.pilot]
control_period_s = 0.1

[campaign]
trials = 4
seed = 1
"""

# One sensor of every kind; each name says its kind, so a test can drop one by name.
SENSORS = {
    "gps": """
[sensors.gps]
kind = "gnss"
rate_hz = 1.0
latency_s = 0.2
outages_s = [[20.0, 30.0]]

[sensors.gps.gnss]
horizontal_sd_m = 2.0
""",
    "mag": """
[sensors.mag]
kind = "compass"
rate_hz = 10.0

[sensors.mag.compass]
noise_sd_deg = 1.0
""",
    "gyro": """
[sensors.gyro]
kind = "gyrocompass"
rate_hz = 10.0
""",
    "imu1": """
[sensors.imu1]
kind = "imu"
rate_hz = 10.0
grade = "tactical"

[sensors.imu1.imu]
gyro_arw_deg_per_sqrt_h = 0.1
accel_bias_corr_time_s = 900.0
""",
    "dvl1": """
[sensors.dvl1]
kind = "dvl"
rate_hz = 5.0
latency_s = 0.1
p_drop = 0.01
p_recover = 0.5

[sensors.dvl1.dvl]
noise_floor_mps = 0.004
""",
    "press": """
[sensors.press]
kind = "depth"
rate_hz = 1.0

[sensors.press.depth]
full_scale_m = 50.0
""",
    "alt": """
[sensors.alt]
kind = "altimeter"
rate_hz = 1.0

[sensors.alt.altimeter]
noise_sd_m = 0.1
""",
    "usbl": """
[sensors.usbl]
kind = "acoustic"
rate_hz = 0.5
beacons_ned_m = [[950.0, 650.0, 10.0], [1000.0, 800.0, 12.0]]

[sensors.usbl.acoustic]
noise_sd_m = 0.3
""",
}
KIND_OF = {"gps": "gnss", "mag": "compass", "gyro": "gyrocompass", "imu1": "imu", "dvl1": "dvl",
           "press": "depth", "alt": "altimeter", "usbl": "acoustic"}  # fmt: skip


def spec_text(navigator: str = "terrain", drop: tuple[str, ...] = (), extra: str = "") -> str:
    """The base spec with the chosen navigator, every sensor but those in ``drop``, and ``extra`` appended."""
    body = "".join(text for name, text in SENSORS.items() if name not in drop)
    return HEAD.replace("NAVIGATOR", navigator) + body + extra


def refused(text: str) -> ParameterError:
    with pytest.raises(ParameterError) as info:
        load_spec(text)
    return info.value


def test_kind_names_cover_every_sensor_in_the_base_spec() -> None:
    assert sorted(KIND_OF.values()) == sorted(SENSOR_KINDS)
    assert set(NAVIGATOR_NEEDS) == set(NAVIGATORS)


# ---------------------------------------------------------------------------
# what loads
# ---------------------------------------------------------------------------


@pytest.mark.parametrize("navigator", NAVIGATORS)
def test_every_kind_round_trips_with_every_navigator(navigator: str) -> None:
    spec = load_spec(spec_text(navigator))
    assert [name for name, _ in spec.sensors] == list(SENSORS)
    again = load_spec(dump_spec(spec))
    assert again == spec
    assert spec_hash(again) == spec_hash(spec)
    assert dump_spec(again) == dump_spec(spec)  # the text is stable after one round


def test_each_kind_gets_its_own_error_model_with_the_values_written() -> None:
    sensors = dict(load_spec(spec_text()).sensors)
    expected = {
        "gps": GnssParams(horizontal_sd_m=2.0),
        "mag": CompassParams(noise_sd_deg=1.0),
        "gyro": GyrocompassParams(),
        "imu1": dataclasses.replace(IMU_GRADES["tactical"], gyro_arw_deg_per_sqrt_h=0.1, accel_bias_corr_time_s=900.0),
        "dvl1": DvlParams(noise_floor_mps=0.004),
        "press": DepthSensorParams(full_scale_m=50.0),
        "alt": AltimeterParams(noise_sd_m=0.1),
        "usbl": AcousticRangeParams(noise_sd_m=0.3),
    }
    for name, model in expected.items():
        assert sensors[name].kind == KIND_OF[name]
        assert type(sensors[name].model) is type(model)
        assert sensors[name].model == model, name
    assert sensors["gps"].latency_s == 0.2 and sensors["dvl1"].latency_s == 0.1 and sensors["mag"].latency_s == 0.0
    assert sensors["gps"].outages_s == ((20.0, 30.0),)
    assert sensors["usbl"].beacons_ned_m == ((950.0, 650.0, 10.0), (1000.0, 800.0, 12.0))
    assert all(sensors[n].beacons_ned_m is None for n in SENSORS if n != "usbl")


def test_imu_overrides_replace_only_the_keys_written_and_write_back_only_those() -> None:
    spec = load_spec(spec_text())
    imu = dict(spec.sensors)["imu1"]
    preset = IMU_GRADES["tactical"]
    assert imu.grade == "tactical"
    assert imu.imu_overrides == {"gyro_arw_deg_per_sqrt_h": 0.1, "accel_bias_corr_time_s": 900.0}
    model = imu.model
    assert isinstance(model, ImuGrade)
    for f in dataclasses.fields(ImuGrade):
        want = imu.imu_overrides.get(f.name, getattr(preset, f.name))
        assert getattr(model, f.name) == want, f.name
    section = tomllib.loads(dump_spec(spec))["sensors"]["imu1"]["imu"]
    assert section == {"gyro_arw_deg_per_sqrt_h": 0.1, "accel_bias_corr_time_s": 900.0}


def test_imu_without_grade_or_table_is_the_default_preset() -> None:
    text = spec_text().replace('grade = "tactical"\n', "")
    text = re.sub(r"\[sensors\.imu1\.imu\]\n(.+\n)+", "", text)
    imu = dict(load_spec(text).sensors)["imu1"]
    assert imu.grade == DEFAULT_IMU_GRADE and DEFAULT_IMU_GRADE in IMU_GRADES
    assert "mems" in DEFAULT_IMU_GRADE
    assert imu.imu is None and imu.imu_overrides == {}
    assert imu.model == IMU_GRADES[DEFAULT_IMU_GRADE]
    # The default grade is filled in: writing it out changes nothing, hash included.
    explicit = load_spec(text.replace('kind = "imu"\n', f'kind = "imu"\ngrade = "{DEFAULT_IMU_GRADE}"\n'))
    assert explicit == load_spec(text) and spec_hash(explicit) == spec_hash(load_spec(text))


def test_every_imu_grade_preset_loads_by_name() -> None:
    for name in IMU_GRADES:
        imu = dict(load_spec(spec_text().replace('grade = "tactical"', f'grade = "{name}"')).sensors)["imu1"]
        assert imu.model == imu_grade(name, gyro_arw_deg_per_sqrt_h=0.1, accel_bias_corr_time_s=900.0)


def test_imu_override_table_has_every_imu_grade_figure_and_no_distribution() -> None:
    names = {f.name for f in dataclasses.fields(ImuOverridesSpec)}
    assert names == {f.name for f in dataclasses.fields(ImuGrade)}
    err = refused(
        spec_text().replace("gyro_arw_deg_per_sqrt_h = 0.1", "gyro_arw_deg_per_sqrt_h = { uniform = [0.1, 0.2] }")
    )
    assert err.field == "sensors.imu1.imu.gyro_arw_deg_per_sqrt_h" and "no distribution" in err.allowed


def test_python_construction_is_validated_and_matches_the_loaded_table() -> None:
    s = SensorSpec(kind="imu", rate_hz=10.0, grade="navigation", imu=ImuOverridesSpec(gyro_scale_factor_sd_ppm=0.0))
    assert s.model == imu_grade("navigation", gyro_scale_factor_sd_ppm=0.0)
    with pytest.raises(
        ParameterError, match=r"^gyro_scale_factor_sd_ppm = -1\.0 is not allowed: must be a finite number >= 0"
    ):
        ImuOverridesSpec(gyro_scale_factor_sd_ppm=-1.0)
    with pytest.raises(ParameterError, match=r"^beacons_ned_m = None is not allowed: is required for kind 'acoustic'"):
        SensorSpec(kind="acoustic", rate_hz=1.0)


def test_latency_of_whole_control_periods_is_accepted() -> None:
    # 0.3 / 0.1 is 2.9999999999999996 in binary floating point: still three periods.
    spec = load_spec(spec_text().replace("latency_s = 0.1", "latency_s = 0.3"))
    assert dict(spec.sensors)["dvl1"].latency_s == 0.3


def test_terrain_table_defaults_exist_for_the_terrain_navigator_only() -> None:
    terrain = load_spec(spec_text("terrain")).stack.terrain
    assert terrain == TerrainSpec()
    assert (terrain.particles, terrain.initial_sd_m, terrain.process_sd_m_per_sqrt_s, terrain.resample_below) == (
        500, 20.0, 0.5, 0.5,
    )  # fmt: skip
    assert load_spec(spec_text("ekf")).stack.terrain is None
    assert StackSpec().terrain is None and StackSpec(navigator="terrain").terrain == TerrainSpec()
    given = load_spec(spec_text("terrain", extra="\n[stack.terrain]\nparticles = 2000\nresample_below = 1.0\n"))
    assert given.stack.terrain == TerrainSpec(particles=2000, resample_below=1.0)
    assert load_spec(dump_spec(given)) == given


def test_running_depth_defaults_to_the_surface_and_may_be_distributed() -> None:
    no_depth = spec_text().replace("running_depth_m = 2.0\n", "")
    assert load_spec(no_depth).mission.running_depth_m == 0.0
    assert load_spec(spec_text()).mission.running_depth_m == 2.0
    spread = load_spec(spec_text().replace("running_depth_m = 2.0", "running_depth_m = { uniform = [1.0, 3.0] }"))
    assert distributed_fields(spread)["mission.running_depth_m"] == Uniform(1.0, 3.0)
    assert load_spec(dump_spec(spread)) == spread


def test_built_in_specs_still_load_and_round_trip() -> None:
    for name in example_spec_names():
        spec = load_spec(example_spec_path(name))
        assert (spec.stack.terrain is None) == (spec.stack.navigator != "terrain")
        assert (spec.sensors == ()) == (spec.stack.navigator == "truth")
        assert spec_from_data(spec_to_data(spec)) == spec


# ---------------------------------------------------------------------------
# what is refused: each error names the TOML path, the value and what is allowed
# ---------------------------------------------------------------------------

BAD = [
    # (id, text edit, path, value in the message, fragment of the allowed text)
    ("imu negative noise density",
     lambda t: t.replace("gyro_arw_deg_per_sqrt_h = 0.1", "gyro_arw_deg_per_sqrt_h = -0.1"),
     "sensors.imu1.imu.gyro_arw_deg_per_sqrt_h", "-0.1", "must be a finite number >= 0.0"),
    ("imu unknown figure",
     lambda t: t.replace("gyro_arw_deg_per_sqrt_h = 0.1", "gyro_arw_deg_per_sqr_h = 0.1"),
     "sensors.imu1.imu.gyro_arw_deg_per_sqr_h", "0.1", "did you mean 'gyro_arw_deg_per_sqrt_h'"),
    ("imu unknown grade",
     lambda t: t.replace('grade = "tactical"', 'grade = "tactcal"'),
     "sensors.imu1.grade", "'tactcal'", "did you mean 'tactical'"),
    ("grade on a non-imu kind",
     lambda t: t.replace('kind = "dvl"', 'kind = "dvl"\ngrade = "tactical"'),
     "sensors.dvl1.grade", "'tactical'", "is only for kind 'imu', not 'dvl'"),
    ("imu table on a non-imu kind",
     lambda t: t + "\n[sensors.dvl1.imu]\ngyro_arw_deg_per_sqrt_h = 0.1\n",
     "sensors.dvl1.imu", "'(given)'", "is the error model of kind 'imu', not 'dvl'"),
    ("another kind's table",
     lambda t: t + "\n[sensors.alt.dvl]\nnoise_floor_mps = 0.01\n",
     "sensors.alt.dvl", "'(given)'", "is the error model of kind 'dvl', not 'altimeter'"),
    ("kind's own table out of range",
     lambda t: t.replace("noise_floor_mps = 0.004", "noise_floor_mps = -0.004"),
     "sensors.dvl1.dvl.noise_floor_mps", "-0.004", "must be a finite number >= 0.0"),
    ("latency not whole control periods",
     lambda t: t.replace("latency_s = 0.1", "latency_s = 0.25"),
     "sensors.dvl1.latency_s", "0.25", "must be a whole number (>= 0) of control periods (0.1 s)"),
    ("latency negative",
     lambda t: t.replace("latency_s = 0.1", "latency_s = -0.1"),
     "sensors.dvl1.latency_s", "-0.1", "must be a finite number >= 0.0"),
    ("rate not dividing",
     lambda t: t.replace("rate_hz = 5.0", "rate_hz = 3.0"),
     "sensors.dvl1.rate_hz", "3.0", "must give a period that is a whole number (>= 1) of control periods (0.1 s)"),
    ("rate faster than control",
     lambda t: t.replace("rate_hz = 5.0", "rate_hz = 20.0"),
     "sensors.dvl1.rate_hz", "20.0", "whole number (>= 1) of control periods"),
    ("beacons missing for acoustic",
     lambda t: t.replace("beacons_ned_m = [[950.0, 650.0, 10.0], [1000.0, 800.0, 12.0]]\n", ""),
     "sensors.usbl.beacons_ned_m", "None", "is required for kind 'acoustic'"),
    ("beacons empty",
     lambda t: t.replace("[[950.0, 650.0, 10.0], [1000.0, 800.0, 12.0]]", "[]"),
     "sensors.usbl.beacons_ned_m", "[]", "at least one [north_m, east_m, down_m] point"),
    ("beacon without its depth",
     lambda t: t.replace("[1000.0, 800.0, 12.0]", "[1000.0, 800.0]"),
     "sensors.usbl.beacons_ned_m[1]", "[1000.0, 800.0]", "must be a [north_m, east_m, down_m] point"),
    ("beacons for gnss",
     lambda t: t.replace("latency_s = 0.2\n", "latency_s = 0.2\nbeacons_ned_m = [[0.0, 0.0, 5.0]]\n"),
     "sensors.gps.beacons_ned_m", "[[0.0, 0.0, 5.0]]", "is only for kind 'acoustic', not 'gnss'"),
    ("two sensors of one kind",
     lambda t: t + '\n[sensors.mag2]\nkind = "compass"\nrate_hz = 1.0\n',
     "sensors.mag2.kind", "'compass'", "one sensor per kind in this version: sensors 'mag' and 'mag2'"),
    ("terrain table with ekf",
     lambda t: t.replace('navigator = "terrain"', 'navigator = "ekf"') + "\n[stack.terrain]\nparticles = 1000\n",
     "stack.terrain", "'(given)'", 'is only for navigator = "terrain", not "ekf"'),
    ("too few particles",
     lambda t: t + "\n[stack.terrain]\nparticles = 10\n",
     "stack.terrain.particles", "10", "must be a finite whole number >= 50 and <= 100000"),
    ("fractional particles",
     lambda t: t + "\n[stack.terrain]\nparticles = 500.5\n",
     "stack.terrain.particles", "500.5", "whole number"),
    ("zero initial spread",
     lambda t: t + "\n[stack.terrain]\ninitial_sd_m = 0.0\n",
     "stack.terrain.initial_sd_m", "0.0", "must be a finite number > 0.0"),
    ("negative process noise",
     lambda t: t + "\n[stack.terrain]\nprocess_sd_m_per_sqrt_s = -0.5\n",
     "stack.terrain.process_sd_m_per_sqrt_s", "-0.5", "must be a finite number >= 0.0"),
    ("resampling threshold zero",
     lambda t: t + "\n[stack.terrain]\nresample_below = 0.0\n",
     "stack.terrain.resample_below", "0.0", "must be a finite number > 0.0 and <= 1.0"),
    ("resampling threshold above one",
     lambda t: t + "\n[stack.terrain]\nresample_below = 1.5\n",
     "stack.terrain.resample_below", "1.5", "> 0.0 and <= 1.0"),
    ("terrain filter setting as a distribution",
     lambda t: t + "\n[stack.terrain]\ninitial_sd_m = { uniform = [10.0, 30.0] }\n",
     "stack.terrain.initial_sd_m", "{'uniform': [10.0, 30.0]}", "no distribution allowed here"),
    ("unknown navigator",
     lambda t: t.replace('navigator = "terrain"', 'navigator = "dead_reckonning"'),
     "stack.navigator", "'dead_reckonning'", "did you mean 'dead_reckoning'"),
    ("terrain navigator without a seabed",
     lambda t: re.sub(r"\[seabed\]\n(.+\n)+", "", t),
     "stack.navigator", "'terrain'", "needs a [seabed]"),
    ("running depth negative",
     lambda t: t.replace("running_depth_m = 2.0", "running_depth_m = -1.0"),
     "mission.running_depth_m", "-1.0", "must be a finite number >= 0.0"),
    ("running depth below a flat seabed",
     lambda t: re.sub(r"\[seabed\]\n(.+\n)+", '[seabed]\nkind = "flat"\ndepth_m = 20.0\n', t)
     .replace('"terrain"', '"ekf"').replace("running_depth_m = 2.0", "running_depth_m = { uniform = [5.0, 25.0] }"),
     "mission.running_depth_m", "{'uniform': [5.0, 25.0]}", "must stay less than the flat seabed's depth_m = 20.0"),
]  # fmt: skip


@pytest.mark.parametrize(("edit", "path", "value", "allowed"), [c[1:] for c in BAD], ids=[c[0] for c in BAD])
def test_bad_input_names_path_value_and_what_is_allowed(edit, path: str, value: str, allowed: str) -> None:
    err = refused(edit(spec_text()))
    assert err.field == path
    assert str(err).startswith(f"{path} = {value} is not allowed: ")
    assert allowed in str(err)
    assert "\n" not in str(err)


def test_latency_is_checked_against_the_control_period_not_the_time_step() -> None:
    # Control period 0.2 s (two time steps of 0.1 s): the DVL's 0.1 s latency is half a period.
    text = (
        spec_text()
        .replace("control_period_s = 0.1", "control_period_s = 0.2")
        .replace("rate_hz = 10.0", "rate_hz = 5.0")
    )
    err = refused(text)
    assert err.field == "sensors.dvl1.latency_s"
    assert str(err) == (
        "sensors.dvl1.latency_s = 0.1 is not allowed: must be a whole number (>= 0) of control periods (0.2 s): "
        "0, 0.2, 0.4, ..."
    )
    assert load_spec(text.replace("latency_s = 0.1", "latency_s = 0.4")).stack.pilot.control_period_s == 0.2


def test_two_sensors_of_one_kind_are_refused_even_when_the_first_is_unused() -> None:
    err = refused(spec_text("truth") + '\n[sensors.imu2]\nkind = "imu"\nrate_hz = 10.0\n')
    assert "'imu1'" in str(err) and "'imu2'" in str(err) and "one sensor per kind in this version" in str(err)


NEEDS = [(nav, group) for nav, groups in NAVIGATOR_NEEDS.items() for group in groups]


@pytest.mark.parametrize(("navigator", "group"), NEEDS, ids=[f"{n}-{'|'.join(g)}" for n, g in NEEDS])
def test_navigator_missing_a_needed_kind_is_refused(navigator: str, group: tuple[str, ...]) -> None:
    drop = tuple(name for name, kind in KIND_OF.items() if kind in group)
    err = refused(spec_text(navigator, drop=drop))
    assert err.field == "stack.navigator" and err.value == navigator
    assert f"needs a sensor of kind {' or '.join(repr(k) for k in group)}" in err.allowed
    kept = [f"{name} ({kind})" for name, kind in sorted(KIND_OF.items()) if name not in drop]
    assert err.allowed.endswith("sensors present: " + ", ".join(kept))


def test_navigator_needs_are_as_documented() -> None:
    # The groups of the navigation contract: heading from a compass or a gyrocompass in each filter.
    assert NAVIGATOR_NEEDS == {
        "truth": (),
        "ekf": (("imu",), ("compass", "gyrocompass"), ("gnss", "acoustic")),
        "dead_reckoning": (("imu",), ("compass", "gyrocompass"), ("dvl",)),
        "terrain": (("imu",), ("compass", "gyrocompass"), ("dvl",), ("altimeter",), ("depth",)),
    }


@pytest.mark.parametrize(
    ("navigator", "drop"),
    [
        ("ekf", ("gps", "mag", "dvl1", "press", "alt")),  # imu + gyrocompass + acoustic fixes
        ("ekf", ("usbl", "gyro")),  # gnss instead of acoustic, compass instead of gyrocompass
        ("dead_reckoning", ("gps", "usbl", "mag", "press", "alt")),
        ("terrain", ("gps", "usbl", "gyro")),
    ],
)
def test_navigator_with_one_of_each_group_loads(navigator: str, drop: tuple[str, ...]) -> None:
    spec = load_spec(spec_text(navigator, drop=drop))
    assert spec.stack.navigator == navigator
    assert load_spec(dump_spec(spec)) == spec


def test_truth_needs_no_sensor() -> None:
    spec = load_spec(spec_text("truth", drop=tuple(SENSORS)))
    assert spec.sensors == ()
