"""The navigator role: sensors in the spec, the wiring check, and the EKF in closed loop."""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pandas as pd
import pytest

from wavebench.campaign import run_campaign
from wavebench.core.errors import ParameterError
from wavebench.core.streams import TrialStreams
from wavebench.spec import build_environment, dump_spec, example_spec_path, load_spec
from wavebench.trial import build_trial_setup, run_batch

GNSS_SD_M = 1.5

SENSORS = f"""
[sensors.gps]
kind = "gnss"
rate_hz = 1.0
outages_s = OUTAGES

[sensors.gps.gnss]
horizontal_sd_m = {GNSS_SD_M}

[sensors.mag]
kind = "compass"
rate_hz = 10.0
"""


def spec_text(outages: str = "[]", navigator: str = "ekf", duration_s: float = 200.0) -> str:
    base = example_spec_path("skerrow_sound").read_text(encoding="utf-8")
    base = base.replace('navigator = "truth"', f'navigator = "{navigator}"')
    base = base.replace("duration_s = 600.0", f"duration_s = {duration_s}")
    return base + SENSORS.replace("OUTAGES", outages)


def test_sensors_round_trip_and_defaults() -> None:
    spec = load_spec(spec_text("[[50.0, 80.0]]"))
    assert [name for name, _ in spec.sensors] == ["gps", "mag"]
    gps = dict(spec.sensors)["gps"]
    assert gps.outages_s == ((50.0, 80.0),) and gps.gnss.horizontal_sd_m == GNSS_SD_M
    assert dict(spec.sensors)["mag"].compass is not None  # the kind's default error model
    assert load_spec(dump_spec(spec)) == spec


@pytest.mark.parametrize(
    ("edit", "match"),
    [
        (lambda t: t.replace('kind = "compass"', 'kind = "gnss"'), r"^stack\.navigator = 'ekf' .*needs a sensor of kind 'compass'"),
        (lambda t: t.replace("rate_hz = 1.0", "rate_hz = 3.0"), r"^sensors\.gps\.rate_hz = 3\.0 .*whole number"),
        (lambda t: t.replace("outages_s = []", "outages_s = [[80.0, 50.0]]"), r"^sensors\.gps\.outages_s\[0\]"),
        (lambda t: t.replace('kind = "compass"', 'kind = "compas"'), r"did you mean 'compass'"),
        (lambda t: t + '\n[sensors.mag.gnss]\nhorizontal_sd_m = 1.0\n', r"^sensors\.mag\.gnss .*error model of kind 'gnss'"),
    ],
)  # fmt: skip
def test_bad_sensor_specs_are_refused_at_load_time(edit, match) -> None:
    with pytest.raises(ParameterError, match=match):
        load_spec(edit(spec_text()))


def test_compiled_engines_refuse_a_navigator() -> None:
    spec = load_spec(spec_text(duration_s=5.0))
    setup = build_trial_setup(spec, build_environment(spec, TrialStreams(1, range(2))))
    with pytest.raises(ParameterError, match="engine"):
        run_batch(spec, setup, engine="fused")


@pytest.fixture(scope="module")
def runs():
    clear = run_campaign(load_spec(spec_text()), trials=6, batch_size=4, progress=False)
    outage = run_campaign(load_spec(spec_text("[[60.0, 90.0]]")), trials=6, batch_size=6, progress=False)
    return clear, outage


def test_ekf_beats_the_raw_fixes(runs) -> None:
    clear, _ = runs
    m = clear.metrics
    assert (m["ended"] != "failed").all()
    # A raw fix with independent N(0, sd^2) errors per axis has RMS horizontal error sqrt(2) sd (chi distribution,
    # 2 degrees of freedom): filtering the fixes with the motion model must do better.
    assert (m["nav_err_rms_m"] < math.sqrt(2.0) * GNSS_SD_M).all()
    assert (m["nav_err_rms_m"] > 0.0).all()


def test_an_outage_grows_the_navigation_error(runs) -> None:
    clear, outage = runs
    assert (outage.metrics["ended"] != "failed").all()
    assert (outage.metrics["nav_err_max_m"] > 2.0 * clear.metrics["nav_err_max_m"]).all()


def test_truth_navigation_has_no_navigation_error() -> None:
    m = run_campaign(load_spec(spec_text(navigator="truth", duration_s=20.0)), trials=2, progress=False).metrics
    assert m["nav_err_rms_m"].isna().all()


def test_ekf_campaign_same_bits_whatever_the_batch_size() -> None:
    spec = load_spec(spec_text("[[20.0, 40.0]]", duration_s=60.0))
    a = run_campaign(spec, trials=5, batch_size=5, progress=False).metrics
    b = run_campaign(spec, trials=5, batch_size=2, progress=False).metrics
    pd.testing.assert_frame_equal(a, b, check_exact=True)
    assert np.isfinite(a["nav_err_rms_m"]).all()
    assert dataclasses.replace(spec.campaign, trials=1).trials == 1
