"""The navigation scenarios end to end: a GNSS outage under a bridge, terrain-aided navigation against dead reckoning."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from wavebench.campaign import run_campaign
from wavebench.cli import main
from wavebench.core.errors import ParameterError
from wavebench.spec import example_spec_names, example_spec_path, load_spec
from wavebench.spec.io import apply_settings

DR = ["stack.navigator=dead_reckoning", "stack.terrain="]


def test_the_navigation_scenarios_are_built_in() -> None:
    assert {"brannock_bridge", "carrick_deep"} <= set(example_spec_names())
    assert load_spec(example_spec_path("brannock_bridge")).stack.navigator == "ekf"
    spec = load_spec(example_spec_path("carrick_deep"))
    assert spec.stack.navigator == "terrain" and spec.mission.running_depth_m == 6.0
    assert load_spec(example_spec_path("carrick_deep"), DR).stack.navigator == "dead_reckoning"


@pytest.fixture(scope="module")
def transect():
    spec = load_spec(example_spec_path("carrick_deep"), ["scenario.duration_s=900.0"])
    tan = run_campaign(spec, trials=4, progress=False)
    dr = run_campaign(load_spec(example_spec_path("carrick_deep"), ["scenario.duration_s=900.0", *DR]), trials=4,
                      progress=False)  # fmt: skip
    return tan, dr


def test_terrain_aiding_bounds_what_dead_reckoning_lets_drift(transect) -> None:
    # The compass's residual bias (1 deg) and deviation, which neither navigator estimates, turn dead reckoning into
    # a drift across the track of about sin(1 deg) = 1.7 % of the distance run (plane geometry); the seabed match
    # must hold the position to a few metres instead.
    tan, dr = transect
    assert (tan.metrics["ended"] != "failed").all() and (dr.metrics["ended"] != "failed").all()
    run_m = dr.metrics["distance_m"].to_numpy()
    assert (dr.metrics["nav_err_max_m"].to_numpy() > 0.5 * np.sin(np.radians(1.0)) * run_m).all()
    assert (tan.metrics["nav_err_max_m"] < 0.5 * dr.metrics["nav_err_max_m"]).all()
    assert (tan.metrics["nav_err_rms_m"] < 10.0).all()
    assert tan.metrics["nis_mean"].isna().all()  # no GNSS under water


def test_terrain_navigation_same_bits_whatever_the_batch_and_engine() -> None:
    spec = load_spec(example_spec_path("carrick_deep"), ["scenario.duration_s=120.0"])
    a = run_campaign(spec, trials=3, batch_size=3, progress=False)
    b = run_campaign(spec, trials=3, batch_size=1, progress=False)
    pd.testing.assert_frame_equal(a.metrics, b.metrics, check_exact=True)
    assert a.timeseries.equals(b.timeseries)
    # the Python loop runs the same compiled navigator per trial; only the control arithmetic may round differently
    c = run_campaign(spec, trials=3, progress=False, engine="numpy")
    for col in ("nav_err_rms_m", "xte_rms_m", "nees_mean"):
        np.testing.assert_allclose(c.metrics[col], a.metrics[col], rtol=1e-7, err_msg=col)


def test_bridge_scenario_outage_shows_in_metrics_and_record() -> None:
    spec = load_spec(example_spec_path("brannock_bridge"), ["scenario.duration_s=300.0",
                                                            "campaign.record_interval_s=0.1"])  # fmt: skip
    res = run_campaign(spec, trials=4, progress=False)
    m = res.metrics
    assert (m["ended"] != "failed").all()
    (start, end), = dict(spec.sensors)["gps"].outages_s
    fix = res.timeseries["fix_ok"].sel(time=slice(start + 1.0, end - 1.0)).values
    assert (fix == 0.0).all()
    err = res.timeseries["nav_err_m"]
    last_inside = err.sel(time=end - 0.1, method="nearest").values  # the last control period before the fix
    before = err.sel(time=start).values
    assert (last_inside > before).all()
    np.testing.assert_allclose(m["nav_err_outage_end_m"].to_numpy(), last_inside, rtol=1e-6)
    # the first fix after the window pulls the estimate back
    assert (err.sel(time=end + 5.0, method="nearest").values < last_inside).all()


def test_settings_change_a_spec_and_refuse_nonsense() -> None:
    data = {"stack": {"navigator": "truth"}}
    apply_settings(data, ["stack.navigator=dead_reckoning", "sensors.gps.outages_s=[[1.0, 2.0]]"])
    assert data == {"stack": {"navigator": "dead_reckoning"}, "sensors": {"gps": {"outages_s": [[1.0, 2.0]]}}}
    with pytest.raises(ParameterError, match=r"dotted\.path=value"):
        apply_settings({}, ["stack.navigator"])
    with pytest.raises(ParameterError, match=r"'stack\.navigator' is a value, not a table"):
        apply_settings({"stack": {"navigator": "ekf"}}, ["stack.navigator.kind=x"])
    with pytest.raises(ParameterError, match=r"stack\.navigator"):
        load_spec(example_spec_path("skerrow_sound"), ["stack.navigator=kalman"])


def test_cli_runs_a_built_in_scenario_by_name_with_settings(tmp_path, capsys) -> None:
    out = tmp_path / "store"
    code = main(["run", "brannock_bridge", "--out", str(out), "--trials", "2", "--quiet",
                 "--set", "scenario.duration_s=60.0", "--set", "sensors.gps.outages_s=[[20.0, 40.0]]"])  # fmt: skip
    assert code == 0
    assert "duration_s = 60.0" in (out / "spec.toml").read_text(encoding="utf-8")
    assert main(["run", "brannock_bridge", "--out", str(out), "--set", "stack.navigator"]) == 2
    assert "dotted.path=value" in capsys.readouterr().err
