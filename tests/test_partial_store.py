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
campaign's first rows, and against an outside reference: the trials counted
and met, from those rows and the spec's thresholds, and the exact binomial
interval of ``scipy.stats.binomtest``; the time series against the
uninterrupted campaign's with ``xarray.Dataset.equals``. One campaign runs
in another process while this one reads its store over and over.
"""

from __future__ import annotations

import json
import re
import shutil
import subprocess
import sys
import textwrap
import time
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from scipy.stats import binomtest

from wavebench.campaign import evaluate_verdicts, read_store, run_campaign
from wavebench.core.errors import ParameterError, WavebenchWarning
from wavebench.spec import example_spec_path, load_spec
from wavebench.spec.io import spec_hash
from wavebench.ui.dashboard import _VERDICT_STYLE, CampaignDashboard

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


def test_the_partial_verdicts_against_scipys_exact_binomial_interval(interrupted: Path, spec, uninterrupted) -> None:
    got = read_store(interrupted, partial=True)
    rows = _first_rows(uninterrupted.metrics, STOP_AFTER)  # the finished trials, from the uninterrupted run
    assert len(got["verdicts"]) == len(spec.requirements) > 0
    for v, (name, req) in zip(got["verdicts"], spec.requirements, strict=True):
        values = rows[req.metric].to_numpy(dtype=float)
        # a trial meets it when strictly below / above the threshold; NaN (no value) compares False: not met
        met = values < req.threshold if req.comparator == "below" else values > req.threshold
        n, k = len(values), int(np.count_nonzero(met))
        assert (v.name, v.metric, v.n_trials, v.n_met) == (name, req.metric, n, k)
        assert v.confidence == req.confidence  # the spec's confidence, a two-sided level (verdicts.py)
        # Clopper & Pearson (1934), via scipy.stats.binomtest exact CI: two-sided (the default alternative), as
        # the verdict's interval is two-sided at the spec's confidence (evaluate_requirement's docstring)
        ci = binomtest(k, n).proportion_ci(confidence_level=req.confidence, method="exact")
        assert v.p_low == pytest.approx(ci.low, rel=1e-9, abs=1e-12), name
        assert v.p_high == pytest.approx(ci.high, rel=1e-9, abs=1e-12), name
        # the decision rule of evaluate_requirement's docstring, on scipy's bounds
        want = "pass" if ci.low >= req.probability else "fail" if ci.high < req.probability else "undecided"
        assert v.verdict == want, name


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
    for style in _VERDICT_STYLE.values():
        assert style not in html
    bundle = dash._repr_mimebundle_()
    assert note in json.dumps(bundle)
    # a clicked trial replays against its row of the unfinished store (no finished store to read yet)
    player = dash.open_trial(3)
    assert player is not None and int(player.stored_metrics["trial"]) == 3 and player.source == str(interrupted)
    reproduced = player.reproduced()
    assert len(reproduced) > 20 and all(same for *_, same in reproduced)
    # a trial the store does not hold yet replays too, with no stored row to compare against
    from wavebench.ui.player import TrialPlayer

    later = TrialPlayer.from_store(interrupted, STOP_AFTER + 1)
    assert later.trial == STOP_AFTER + 1 and later.stored_metrics is None


def test_a_partial_dashboard_refilled_with_the_finished_campaign_drops_its_partial_marks(interrupted: Path,
                                                                                         uninterrupted) -> None:  # fmt: skip
    finished = CampaignDashboard.from_result(uninterrupted)  # what a finished campaign's panel shows
    dash = CampaignDashboard.from_store(interrupted)
    assert dash.partial and dash.progress.bar_style == "warning"
    r = uninterrupted
    dash.fill(r.spec, r.metrics, r.timeseries, r.verdicts)
    assert not dash.partial and dash.partial_note() == ""
    assert dash.title == CampaignDashboard.title == finished.title
    assert dash.progress.bar_style == finished.progress.bar_style != "warning"
    assert dash.status.value == finished.status.value == f"{TRIALS} trials"
    assert (dash.progress.value, dash.progress.max) == (TRIALS, TRIALS)
    html = dash.static_html()
    assert "partial" not in html and "provisional" not in html and "so far</span>" not in html
    assert "partial" not in json.dumps(dash._repr_mimebundle_()["text/plain"])


def test_a_store_with_no_finished_chunk_yet_reads_cleanly(tmp_path: Path, interrupted: Path) -> None:
    store = tmp_path / "store"
    shutil.copytree(interrupted, store)
    for path in (store / "chunks").glob("metrics-*.parquet"):  # as just after planning: no chunk finished
        path.unlink()
    dash = CampaignDashboard.from_store(store)
    note = f"partial: no trial of {TRIALS} finished yet"
    assert dash.partial_note() == note and dash.status.value == note and len(dash.metrics) == 0
    assert dash.verdicts == [] and f"<b>{note}</b>.</p>" in dash.verdict_html.value
    html = dash.static_html()
    assert note in html and "0 of" not in html and "finished yet: no trial" not in html


def test_a_damaged_plan_gets_an_error_naming_the_file_and_field(tmp_path: Path, interrupted: Path) -> None:
    store = tmp_path / "store"
    shutil.copytree(interrupted, store)
    plan_path = store / "chunks" / "plan.json"
    plan = json.loads(plan_path.read_text(encoding="utf-8"))
    plan_path.write_text('{"spec_hash": "ab', encoding="utf-8")  # cut short
    with pytest.raises(ParameterError, match=re.escape("chunks/plan.json = '{\"spec_hash\": \"ab' is not allowed: "
                                                       "must be the JSON object written when the campaign was planned "
                                                       "(it is not JSON: ")):  # fmt: skip
        read_store(store, partial=True)
    plan_path.write_text("[1, 2]", encoding="utf-8")
    with pytest.raises(ParameterError, match=r"^chunks/plan\.json = \[1, 2\] is not allowed: must be a JSON object"):
        read_store(store, partial=True)
    for bad, shown in (("ten", "'ten'"), (0, "0"), (2.5, "2.5"), (True, "True")):
        plan_path.write_text(json.dumps({**plan, "trials": bad}), encoding="utf-8")
        with pytest.raises(ParameterError, match=rf"^chunks/plan\.json trials = {shown} is not allowed: must be a "
                                                 r"whole number >= 1"):  # fmt: skip
            read_store(store, partial=True)
    del plan["trials"]
    plan_path.write_text(json.dumps(plan), encoding="utf-8")
    with pytest.raises(ParameterError, match=r"^chunks/plan\.json trials = None is not allowed"):
        CampaignDashboard.from_store(store)


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


_RUN_IN_ANOTHER_PROCESS = textwrap.dedent("""
    import sys

    from wavebench.campaign import run_campaign
    from wavebench.spec import example_spec_path, load_spec

    settings = ["scenario.duration_s=10.0", "campaign.trials=20", "campaign.batch_size=1"]
    run_campaign(load_spec(example_spec_path("skerrow_sound"), settings), progress=False, store=sys.argv[1])
""")


def test_a_store_read_over_and_over_while_another_process_runs_its_campaign(tmp_path: Path) -> None:
    store = tmp_path / "store"
    planned = 20  # one trial per chunk
    proc = subprocess.Popen([sys.executable, "-c", _RUN_IN_ANOTHER_PROCESS, str(store)], stderr=subprocess.PIPE)
    reads: list[tuple[bool, list[int]]] = []
    try:
        while not (store / "chunks" / "plan.json").is_file() and not (store / "manifest.json").is_file():
            if proc.poll() is not None:
                pytest.fail(f"the campaign process stopped before planning: {proc.stderr.read().decode()}")
            time.sleep(0.02)
        while True:
            running = proc.poll() is None  # looked at before the read: a finished process left a finished store
            got = read_store(store, partial=True)  # every read must succeed (warnings are errors in this suite)
            trials = got["metrics"]["trial"].tolist()
            if got["timeseries"] is not None:
                assert got["timeseries"]["trial"].values.tolist() == trials
            reads.append((got["partial"], trials))
            if not got["partial"] or not running:
                break
    finally:
        _, err = proc.communicate(timeout=120)
    assert proc.returncode == 0, err.decode(errors="replace")
    assert reads[-1] == (False, list(range(planned))), "the last read is the finished store"
    assert any(partial for partial, _ in reads), "no read while the campaign ran"
    counts = [len(trials) for _, trials in reads]
    assert all(trials == list(range(len(trials))) for _, trials in reads)  # trials 0..k-1, sorted
    assert counts == sorted(counts)  # k never goes back
