"""An unfinished store (a campaign still running, or interrupted) reads back as the trials finished so far.

Real files on disk: small campaigns of the built-in ``skerrow_sound`` spec
(30 s of simulated time, 10 trials in chunks of 2) run into a temporary
store folder with ``run_campaign(..., store=...)``. A campaign is stopped
part way the way Ctrl-C stops it (a ``KeyboardInterrupt`` raised from its
``on_chunk`` hook after a chunk is stored: ``run_campaign`` keeps the chunks
that finished and writes no finished-store files), or read while it is
still running (from inside that hook). The reference is the same campaign
run uninterrupted, in memory: rows must be equal bit for bit. The verdicts
are checked against ``evaluate_verdicts`` applied to the uninterrupted
campaign's first rows; the time series against the uninterrupted campaign's
with ``xarray.Dataset.equals``.
"""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import pandas as pd
import pytest

from wavebench.campaign import evaluate_verdicts, read_store, run_campaign
from wavebench.core.errors import ParameterError, WavebenchWarning
from wavebench.spec import example_spec_path, load_spec
from wavebench.spec.io import spec_hash
from wavebench.ui.dashboard import CampaignDashboard

SETTINGS = ["scenario.duration_s=30.0", "campaign.trials=10", "campaign.batch_size=2"]
TRIALS, BATCH, STOP_AFTER = 10, 2, 6  # the interrupted campaign stops after its third chunk


@pytest.fixture(scope="module")
def spec():
    return load_spec(example_spec_path("skerrow_sound"), SETTINGS)


@pytest.fixture(scope="module")
def uninterrupted(spec):
    return run_campaign(spec, progress=False)


def _interrupt_after(n_trials: int):
    def on_chunk(_output, done: int, _planned: int) -> None:
        if done >= n_trials:
            raise KeyboardInterrupt  # as Ctrl-C would, between chunks

    return on_chunk


@pytest.fixture(scope="module")
def interrupted(tmp_path_factory: pytest.TempPathFactory, spec) -> Path:
    store = tmp_path_factory.mktemp("partial") / "store"
    with pytest.warns(WavebenchWarning, match="campaign interrupted"):
        result = run_campaign(spec, progress=False, store=store, on_chunk=_interrupt_after(STOP_AFTER))
    assert not result.complete
    return store


def _first_rows(frame: pd.DataFrame, n: int) -> pd.DataFrame:
    return frame.iloc[:n].reset_index(drop=True)


def test_the_partial_read_holds_exactly_the_finished_chunks(interrupted: Path, uninterrupted) -> None:
    assert not (interrupted / "manifest.json").exists() and (interrupted / "chunks" / "plan.json").is_file()
    chunk_files = sorted((interrupted / "chunks").glob("metrics-*.parquet"))
    assert [p.name for p in chunk_files] == [f"metrics-{lo:09d}-{lo + BATCH - 1:09d}.parquet"
                                             for lo in range(0, STOP_AFTER, BATCH)]  # fmt: skip
    got = read_store(interrupted, partial=True)
    assert got["partial"] is True
    man = got["manifest"]
    assert (man["state"], man["complete"], man["trials_done"], man["trials_planned"]) == ("partial", False,
                                                                                          STOP_AFTER, TRIALS)  # fmt: skip
    assert got["metrics"]["trial"].tolist() == list(range(STOP_AFTER))
    # bit for bit the same rows as the uninterrupted campaign's (values, columns and dtypes)
    pd.testing.assert_frame_equal(got["metrics"], _first_rows(uninterrupted.metrics, STOP_AFTER), check_exact=True)
    # the time series hold the finished trials only, equal to the uninterrupted campaign's rows
    ts = got["timeseries"]
    assert ts["trial"].values.tolist() == list(range(STOP_AFTER))
    assert ts.equals(uninterrupted.timeseries.isel(trial=slice(0, STOP_AFTER)))
    # verdicts on those trials alone: as evaluate_verdicts gives on the uninterrupted campaign's first rows
    want = evaluate_verdicts(uninterrupted.spec, _first_rows(uninterrupted.metrics, STOP_AFTER))
    assert [v.to_dict() for v in got["verdicts"]] == [v.to_dict() for v in want]
    assert all(v.n_trials == STOP_AFTER for v in got["verdicts"])
    # the spec kept on disk since the campaign was planned is the one run
    assert spec_hash(got["spec"]) == spec_hash(uninterrupted.spec) == man["spec_hash"]


def test_without_partial_an_unfinished_store_is_refused_by_name(interrupted: Path) -> None:
    with pytest.raises(ParameterError, match=r"store.*unfinished campaign.*partial=True"):
        read_store(interrupted)


def test_a_store_read_while_its_campaign_runs_shows_the_chunks_stored_so_far(tmp_path: Path, spec,
                                                                             uninterrupted) -> None:  # fmt: skip
    store = tmp_path / "store"
    seen = {}

    def look(_output, done: int, _planned: int) -> None:
        if done == 4 and not seen:  # the campaign is running: its fifth trial has not started
            seen.update(read_store(store, partial=True))

    result = run_campaign(spec, progress=False, store=store, on_chunk=look)
    assert result.complete and (store / "manifest.json").is_file()
    assert seen["manifest"]["trials_done"] == 4 and seen["metrics"]["trial"].tolist() == [0, 1, 2, 3]
    pd.testing.assert_frame_equal(seen["metrics"], _first_rows(uninterrupted.metrics, 4), check_exact=True)
    finished = read_store(store, partial=True)  # a finished store reads as before, not partial
    assert finished["partial"] is False and finished["manifest"]["complete"]
    pd.testing.assert_frame_equal(finished["metrics"], uninterrupted.metrics, check_exact=True, check_dtype=False)


def test_a_damaged_chunk_is_left_out_with_a_warning(tmp_path: Path, interrupted: Path, uninterrupted) -> None:
    store = tmp_path / "store"
    shutil.copytree(interrupted, store)
    damaged = store / "chunks" / f"metrics-{2:09d}-{3:09d}.parquet"
    damaged.write_bytes(damaged.read_bytes()[:40])  # cut short
    with pytest.warns(WavebenchWarning, match=r"metrics-000000002-000000003\.parquet.*cannot be read"):
        got = read_store(store, partial=True)
    assert got["metrics"]["trial"].tolist() == [0, 1, 4, 5]
    assert got["timeseries"]["trial"].values.tolist() == [0, 1, 4, 5]
    ref = uninterrupted.metrics.iloc[[0, 1, 4, 5]].reset_index(drop=True)
    pd.testing.assert_frame_equal(got["metrics"], ref, check_exact=True)
    assert got["manifest"]["trials_done"] == 4


def test_the_dashboard_opens_an_unfinished_store_and_says_partial(interrupted: Path) -> None:
    dash = CampaignDashboard.from_store(interrupted)
    note = f"partial: {STOP_AFTER} of {TRIALS} trials finished; the verdicts cover those only"
    assert dash.partial and dash.partial_note() == note
    assert dash.status.value == note
    assert f"partial: {STOP_AFTER} of {TRIALS} trials" in dash.title
    assert (dash.progress.value, dash.progress.max, dash.progress.bar_style) == (STOP_AFTER, TRIALS, "warning")
    assert len(dash.metrics) == STOP_AFTER and dash.timeseries.sizes["trial"] == STOP_AFTER
    band = dash.band(dash.signal_names()[0])  # the bands are over the finished trials only
    assert set(band.sample_trials) <= set(range(STOP_AFTER))
    html = dash.static_html()
    assert note in html and "provisional" in html and note in dash.verdict_html.value
    # the verdicts read as provisional, never in the filled pass/fail badge of a finished campaign
    words = [v["verdict"] for v in dash.verdicts]
    for word in words:
        assert f">{word} so far</span>" in html
    assert "background:#2e7d32;color:#fff" not in html and "background:#b3261e;color:#fff" not in html
    bundle = dash._repr_mimebundle_()
    assert note in json.dumps(bundle)
    # a clicked trial replays against its row of the unfinished store (no finished store to read yet)
    player = dash.open_trial(3)
    assert player is not None and int(player.stored_metrics["trial"]) == 3 and player.source == str(interrupted)
    reproduced = player.reproduced()
    assert len(reproduced) > 20 and all(same for *_, same in reproduced)


def test_a_finished_store_dashboard_is_not_marked_partial(tmp_path: Path, spec) -> None:
    store = tmp_path / "store"
    run_campaign(spec, progress=False, store=store, trials=4)
    dash = CampaignDashboard.from_store(store)
    assert not dash.partial and dash.partial_note() == ""
    assert "partial" not in dash.static_html() and "provisional" not in dash.static_html()


def test_a_folder_that_is_not_a_store_gets_a_clear_error(tmp_path: Path) -> None:
    (tmp_path / "notes.txt").write_text("not a campaign", encoding="utf-8")
    with pytest.raises(ParameterError, match=r"store.*neither manifest\.json nor chunks/plan\.json"):
        read_store(tmp_path, partial=True)
    with pytest.raises(ParameterError, match=r"store.*neither manifest\.json nor chunks/plan\.json"):
        CampaignDashboard.from_store(tmp_path)
