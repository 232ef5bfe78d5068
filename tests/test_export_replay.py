"""Sharing a store: one NetCDF file with everything, and any trial replayed alone by its number."""

from __future__ import annotations

import json

import numpy as np
import pytest
import xarray as xr

from wavebench.campaign import read_store
from wavebench.cli import main


@pytest.fixture(scope="module")
def store(tmp_path_factory):
    out = tmp_path_factory.mktemp("stores") / "bridge"
    assert main(["run", "brannock_bridge", "--out", str(out), "--trials", "4", "--quiet",
                 "--set", "scenario.duration_s=40.0", "--set", "sensors.gps.outages_s=[[10.0, 20.0]]"]) == 0  # fmt: skip
    return out


def test_export_holds_time_series_metrics_spec_and_verdicts(store, tmp_path) -> None:
    path = tmp_path / "share.nc"
    assert main(["export", str(store), str(path)]) == 0
    ds = xr.load_dataset(path, engine="h5netcdf")
    ref = read_store(store)
    np.testing.assert_array_equal(ds["nav_err_m"].values, ref["timeseries"]["nav_err_m"].values)
    np.testing.assert_array_equal(ds["xte_rms_m"].values, ref["metrics"]["xte_rms_m"].to_numpy())
    assert list(ds["ended"].values) == list(ref["metrics"]["ended"])
    assert ds.attrs["wavebench_spec"] == (store / "spec.toml").read_text(encoding="utf-8")
    assert json.loads(ds.attrs["wavebench_verdicts"])[0]["name"] == ref["verdicts"][0].name


def test_a_trial_replays_alone_to_the_stored_bits(store, capsys) -> None:
    assert main(["replay", str(store), "2"]) == 0
    assert "trial 2 replayed alone: the same bits as the store" in capsys.readouterr().out
    # a tampered store row is caught
    import pandas as pd

    m = pd.read_parquet(store / "metrics.parquet")
    m.loc[m["trial"] == 3, "xte_rms_m"] += 1e-12
    m.to_parquet(store / "metrics.parquet", index=False)
    assert main(["replay", str(store), "3"]) == 1
    out = capsys.readouterr().out
    assert "xte_rms_m" in out and "DIFFERS" in out
    assert main(["replay", str(store), "99"]) == 2
