"""The ``wavebench`` command end to end on small campaigns: run, report, demo --list, example.

Runs use a shortened copy of the built-in ``skerrow_sound`` spec (60 s of
simulated time). The checks are against the store layout documented in
``wavebench/campaign/store.py``, against file formats read back with their
reference readers (pandas/pyarrow for Parquet, xarray/h5netcdf for NetCDF4,
json), and against CF conventions for variable attributes.
"""

from __future__ import annotations

import contextlib
import importlib.resources
import io
import json
import math
import sys
from pathlib import Path

import pandas as pd
import pytest
import xarray as xr

from wavebench.analysis.metric_names import METRICS
from wavebench.campaign.series import open_timeseries
from wavebench.cli import main
from wavebench.craft.catalogue import demo_craft
from wavebench.report.html import CAUTION
from wavebench.spec.io import example_spec_path, load_spec, save_spec, spec_hash
from wavebench.spec.schema import distributed_fields, spec_from_data

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover
    import tomli as tomllib

FILE_TRIALS = 10  # in the spec file; the command line overrides it
TRIALS = 6
SEED = 11
OTHER_SEED = 12
STORE_FILES = ("spec.toml", "manifest.json", "metrics.parquet", "timeseries.zarr", "verdicts.json")


def shortened(name: str, tmp: Path, **stack_pilot: float) -> Path:
    """A copy of a built-in spec with a short run, written to ``tmp`` (canonical TOML)."""
    data = tomllib.loads(example_spec_path(name).read_text(encoding="utf-8"))
    data["scenario"]["duration_s"] = 60.0
    data["campaign"]["trials"] = FILE_TRIALS
    if stack_pilot:
        data.setdefault("stack", {}).setdefault("pilot", {}).update(stack_pilot)
    path = tmp / f"{name}_short.toml"
    save_spec(spec_from_data(data), path)
    return path


def run_cli(argv: list[str]) -> tuple[int, str]:
    """``main(argv)`` with standard output captured (for module-scoped fixtures, where capsys is not available)."""
    buf = io.StringIO()
    with contextlib.redirect_stdout(buf):
        status = main(argv)
    return status, buf.getvalue()


@pytest.fixture(scope="module")
def small_spec(tmp_path_factory: pytest.TempPathFactory) -> Path:
    return shortened("skerrow_sound", tmp_path_factory.mktemp("spec"))


@pytest.fixture(scope="module")
def store(small_spec: Path, tmp_path_factory: pytest.TempPathFactory) -> Path:
    out = tmp_path_factory.mktemp("run") / "store"
    status, stdout = run_cli(["run", str(small_spec), "--out", str(out), "--trials", str(TRIALS),
                              "--seed", str(SEED), "--batch-size", "4", "--quiet"])  # fmt: skip
    assert status == 0, stdout
    assert f"{TRIALS} trials of " in stdout
    return out


@pytest.fixture(scope="module")
def store_same_seed(small_spec: Path, tmp_path_factory: pytest.TempPathFactory) -> Path:
    # same seed, one batch of 6 instead of 4 + 2: the documented contract is that batch_size changes nothing
    out = tmp_path_factory.mktemp("run_same") / "store"
    status, stdout = run_cli(["run", str(small_spec), "--out", str(out), "--trials", str(TRIALS),
                              "--seed", str(SEED), "--batch-size", str(TRIALS), "--quiet"])  # fmt: skip
    assert status == 0, stdout
    return out


# ---------------------------------------------------------------------------
# wavebench run: the store folder
# ---------------------------------------------------------------------------


def test_run_writes_every_store_file(store: Path) -> None:
    for name in STORE_FILES:
        assert (store / name).exists(), name


def test_manifest_records_hash_overrides_and_seed(store: Path) -> None:
    manifest = json.loads((store / "manifest.json").read_text(encoding="utf-8"))
    as_run = load_spec(store / "spec.toml")
    assert manifest["format"] == "wavebench-store"
    assert manifest["spec_hash"] == spec_hash(as_run)
    assert manifest["trials"] == TRIALS != FILE_TRIALS
    assert manifest["seed"] == SEED
    assert manifest["batch_size"] == 4
    assert manifest["complete"] is True
    # the stored spec is the spec as run, overrides included
    assert (as_run.campaign.trials, as_run.campaign.seed, as_run.campaign.batch_size) == (TRIALS, SEED, 4)


def test_metrics_table_has_trials_metrics_and_drawn_parameters(store: Path, small_spec: Path) -> None:
    m = pd.read_parquet(store / "metrics.parquet")
    assert len(m) == TRIALS
    assert m["trial"].tolist() == list(range(TRIALS))
    for name in METRICS:
        assert name in m.columns, name
    dists = distributed_fields(load_spec(small_spec))
    assert dists  # the example spec draws its sea, current, wind and start
    for path, dist in dists.items():
        col = f"param.{path}"
        assert col in m.columns, col
        low, high = dist.support()
        values = m[col].to_numpy(dtype=float)
        assert ((values >= low) & (values <= high)).all(), col
    assert set(m["ended"]) <= {"completed", "truncated", "failed"}
    # no seabed in this spec: the depth metric is documented as NaN without one
    assert m["min_depth_under_keel_m"].isna().all()


def test_timeseries_has_trial_and_time_dims_with_cf_attributes(store: Path) -> None:
    with open_timeseries(store) as ds:
        assert ds.sizes["trial"] == TRIALS
        assert ds["trial"].values.tolist() == list(range(TRIALS))
        assert ds.data_vars
        for name, var in ds.data_vars.items():
            assert var.dims == ("trial", "time"), name
            # CF conventions 1.x sec. 3.1 (units) and 3.2 (long_name): string attributes on each variable
            assert isinstance(var.attrs.get("units"), str), name
            assert isinstance(var.attrs.get("long_name"), str) and var.attrs["long_name"], name
        times = ds["time"].values
        assert (times[1:] > times[:-1]).all()
        assert times[-1] <= 60.0


def test_verdicts_one_per_requirement(store: Path) -> None:
    verdicts = json.loads((store / "verdicts.json").read_text(encoding="utf-8"))
    names = [name for name, _ in load_spec(store / "spec.toml").requirements]
    assert [v["name"] for v in verdicts] == names == ["track_keeping", "finishes_in_time"]
    for v in verdicts:
        assert v["verdict"] in ("pass", "fail", "undecided")
        assert v["n_trials"] == TRIALS


def test_same_seed_reproduces_metrics_bit_for_bit(store: Path, store_same_seed: Path) -> None:
    a = pd.read_parquet(store / "metrics.parquet")
    b = pd.read_parquet(store_same_seed / "metrics.parquet")
    pd.testing.assert_frame_equal(a, b, check_exact=True)
    with (
        open_timeseries(store) as ta,
        open_timeseries(store_same_seed) as tb,
    ):
        xr.testing.assert_equal(ta, tb)


def test_other_seed_changes_the_metrics(store: Path, small_spec: Path, tmp_path: Path) -> None:
    out = tmp_path / "store"
    status, stdout = run_cli(["run", str(small_spec), "--out", str(out), "--trials", str(TRIALS),
                              "--seed", str(OTHER_SEED), "--batch-size", str(TRIALS), "--no-record", "--quiet"])  # fmt: skip
    assert status == 0, stdout
    manifest = json.loads((out / "manifest.json").read_text(encoding="utf-8"))
    assert manifest["seed"] == OTHER_SEED and manifest["trials"] == TRIALS
    assert not (out / "timeseries.zarr").exists()  # --no-record: metrics only
    a = pd.read_parquet(store / "metrics.parquet")
    b = pd.read_parquet(out / "metrics.parquet")
    assert a["trial"].tolist() == b["trial"].tolist()
    for col in ("param.sea.hs_m", "param.current.speed_mps", "xte_rms_m", "distance_m"):
        assert not a[col].equals(b[col]), col


# ---------------------------------------------------------------------------
# wavebench report
# ---------------------------------------------------------------------------


def test_report_is_written_with_caution_and_no_remote_resources(
    store: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    assert main(["report", str(store)]) == 0
    assert "report.html" in capsys.readouterr().out
    text = (store / "report.html").read_text(encoding="utf-8")
    assert CAUTION in text
    # The only URL allowed is the SVG namespace name, an identifier that is never fetched
    # (W3C "Namespaces in XML 1.0": a namespace name is not meant to be retrieved).
    stripped = text.replace('xmlns="http://www.w3.org/2000/svg"', "")
    assert "http://" not in stripped
    assert "https://" not in stripped
    assert 'src="//' not in stripped and 'href="//' not in stripped


def test_report_on_a_folder_that_is_not_a_store(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    folder = tmp_path / "not_a_store"
    folder.mkdir()
    (folder / "notes.txt").write_text("nothing here\n", encoding="utf-8")
    assert main(["report", str(folder)]) == 2
    captured = capsys.readouterr()
    lines = captured.err.splitlines()
    assert len(lines) == 1 and lines[0].startswith("wavebench: error:")
    assert str(folder) in lines[0]
    assert "Traceback" not in captured.err
    assert not (folder / "report.html").exists()


# ---------------------------------------------------------------------------
# wavebench demo --list, wavebench example
# ---------------------------------------------------------------------------


def test_demo_list_names_both_scenarios(capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["demo", "--list"]) == 0
    first_words = [line.split()[0] for line in capsys.readouterr().out.splitlines() if line.strip()]
    assert "skerrow_sound" in first_words
    assert "dulse_bay" in first_words


def test_example_prints_the_packaged_spec(capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["example", "skerrow_sound"]) == 0
    out = capsys.readouterr().out
    packaged = (importlib.resources.files("wavebench") / "data" / "specs" / "skerrow_sound.toml").read_text(
        encoding="utf-8"
    )
    assert out == packaged
    assert load_spec(out).craft.demo == "Tholepin"


def test_example_craft_pasted_in_place_of_craft_gives_the_same_craft(capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["example", "--craft", "Dulse"]) == 0
    craft_text = capsys.readouterr().out
    assert "[craft]" in craft_text and "demo" not in craft_text
    spec_text = example_spec_path("dulse_bay").read_text(encoding="utf-8")
    demo_table = '[craft]\ndemo = "Dulse"\n'
    assert spec_text.count(demo_table) == 1
    spec = load_spec(spec_text.replace(demo_table, craft_text))
    assert spec.craft.demo is None
    assert spec.craft.build() == demo_craft("Dulse")


# ---------------------------------------------------------------------------
# the second built-in scenario (survey over the synthetic bay), shortened
# ---------------------------------------------------------------------------
# `wavebench demo dulse_bay --trials 2` is not run here: its full 900 s run would be
# too long for this file; a shortened copy runs below.


def test_dulse_bay_runs_with_its_default_pilot(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    spec = shortened("dulse_bay", tmp_path)
    status = main(["run", str(spec), "--out", str(tmp_path / "store"), "--trials", "2", "--no-record", "--quiet"])
    assert status == 0, capsys.readouterr().err


def test_dulse_bay_survey_over_the_bay_runs_with_a_faster_speed_loop(tmp_path: Path) -> None:
    # a speed-loop bandwidth given in the spec (kp = 2 zeta w_n m - d >= 0)
    spec = shortened("dulse_bay", tmp_path, speed_natural_frequency_rad_s=0.5)
    out = tmp_path / "store"
    status, stdout = run_cli(["run", str(spec), "--out", str(out), "--trials", "2", "--no-record", "--quiet"])
    assert status == 0, stdout
    m = pd.read_parquet(out / "metrics.parquet")
    assert m["trial"].tolist() == [0, 1]
    # with a seabed the depth under the keel is defined (finite, positive for trials that did not ground)
    depth = m["min_depth_under_keel_m"].to_numpy(dtype=float)
    assert all(math.isfinite(d) for d in depth)
    assert all(d > 0.0 for d, g in zip(depth, m["grounded"], strict=True) if not g)
    verdicts = json.loads((out / "verdicts.json").read_text(encoding="utf-8"))
    assert [v["name"] for v in verdicts] == ["line_keeping", "battery", "water_under_keel"]
