"""The campaign dashboard on a real stored campaign, headless (real ipywidgets and bqplot objects, no browser).

The store is written in a temporary folder by ``run_campaign`` + ``write_store``
from a shortened copy of the built-in ``skerrow_sound`` spec (60 s of
simulated time, 8 trials). Checks against outside references: the bands
against ``numpy.nanpercentile`` (default method "linear", Hyndman and Fan's
definition 7), the histogram against ``numpy.histogram``, the ECDF against
``scipy.stats.ecdf``, the ranking against ``scipy.stats.spearmanr``, the
verdict table against ``verdicts.json`` read with ``json``; the click goes
through the message path bqplot's front end uses (a comm message
``{"event": "element_click", "data": {..., "index": i}}``).
"""

from __future__ import annotations

import json
import re
import sys
import warnings
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from twin_images import twin_svgs

from wavebench.campaign import read_store, run_campaign, write_store
from wavebench.spec.io import example_spec_path
from wavebench.spec.schema import spec_from_data
from wavebench.ui.dashboard import BAND_PERCENTILES, MAX_SAMPLE_TRIALS, CampaignDashboard
from wavebench.ui.twin import TWIN_CLASS

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover
    import tomli as tomllib

TRIALS = 8


def _short_spec(duration_s: float = 60.0) -> object:
    data = tomllib.loads(example_spec_path("skerrow_sound").read_text(encoding="utf-8"))
    data["scenario"]["duration_s"] = duration_s
    data["campaign"]["trials"] = TRIALS
    data["campaign"]["batch_size"] = 4
    # the 600 s route cannot finish in 60 s: a second requirement on a metric every trial has instead
    data["requirements"]["finishes_in_time"] = {"metric": "xte_max_m", "below": 40.0, "probability": 0.5}
    return spec_from_data(data)


@pytest.fixture(scope="module")
def store(tmp_path_factory: pytest.TempPathFactory) -> Path:
    folder = tmp_path_factory.mktemp("ui_dashboard") / "skerrow"
    write_store(run_campaign(_short_spec(), progress=False), folder)
    return folder


@pytest.fixture(scope="module")
def short_reference() -> object:
    """The 20 s campaign run plainly, without a panel."""
    return run_campaign(_short_spec(duration_s=20.0), progress=False)


@pytest.fixture(scope="module")
def dash(store: Path) -> CampaignDashboard:
    return CampaignDashboard.from_store(store)


def test_verdict_table_rows_match_the_stored_verdicts(store: Path, dash: CampaignDashboard) -> None:
    stored = json.loads((store / "verdicts.json").read_text(encoding="utf-8"))  # read with the json module
    rows = re.findall(r"<tr class='verdict-row' data-requirement=\"([^\"]*)\" data-verdict=\"([^\"]*)\">(.*?)</tr>",
                      dash.verdict_html.value)  # fmt: skip
    assert [(name, word) for name, word, _ in rows] == [(v["name"], v["verdict"]) for v in stored]
    for (_, _, cells), v in zip(rows, stored, strict=True):
        assert f"{v['n_met']} / {v['n_trials']}" in cells
        assert f"{v['p_low']:.3g}" in cells and f"{v['p_high']:.3g}" in cells
    assert {v["verdict"] for v in stored} <= {"pass", "fail", "undecided"}


def test_bands_are_numpy_nanpercentiles_of_the_stored_series(store: Path, dash: CampaignDashboard) -> None:
    ts = read_store(store)["timeseries"]
    values = np.asarray(ts["xte_m"].transpose("trial", "time").values, dtype=np.float64)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)  # all-NaN columns (none expected here) warn in numpy
        ref = np.nanpercentile(values, list(BAND_PERCENTILES), axis=0)  # numpy reference, method="linear"
    dash.signal_picker.value = "xte_m"
    band = dash.band("xte_m")
    np.testing.assert_allclose(np.vstack([band.low, band.median, band.high]), ref, rtol=1e-12, atol=1e-12)
    # what the live marks hold: the 5-95 % band and the median, one line each -- not one line per trial
    np.testing.assert_allclose(dash.marks["band"].y, ref[[0, 2]], rtol=1e-12, atol=1e-12)
    np.testing.assert_allclose(dash.marks["median"].y, ref[1], rtol=1e-12, atol=1e-12)
    samples = np.atleast_2d(dash.marks["samples"].y)
    assert 1 <= samples.shape[0] <= MAX_SAMPLE_TRIALS
    index = {int(t): i for i, t in enumerate(ts["trial"].values)}
    for row, trial in zip(samples, band.sample_trials, strict=True):
        np.testing.assert_array_equal(row, values[index[trial]])


def test_histogram_and_ecdf_against_numpy_and_scipy(dash: CampaignDashboard) -> None:
    from scipy.stats import ecdf

    col = dash.metric_picker.value
    v = dash.metrics[col].to_numpy(dtype=float)
    v = v[np.isfinite(v)]
    centres = np.asarray(dash.marks["hist"].x)
    width = centres[1] - centres[0]
    edges = np.concatenate([centres - 0.5 * width, [centres[-1] + 0.5 * width]])
    counts, _ = np.histogram(v, bins=edges)  # numpy reference: half-open bins, the last closed
    np.testing.assert_array_equal(dash.marks["hist"].y, counts)
    x, f = np.asarray(dash.marks["ecdf"].x), np.asarray(dash.marks["ecdf"].y)
    np.testing.assert_allclose(f, ecdf(v).cdf.evaluate(x), rtol=1e-12)  # scipy reference


def test_sensitivity_bars_are_spearman_rho(dash: CampaignDashboard) -> None:
    from scipy.stats import spearmanr

    col = dash.metric_picker.value
    bars = dict(zip(dash.marks["sensitivity"].x, dash.marks["sensitivity"].y, strict=True))
    y = dash.metrics[col].to_numpy(dtype=float)
    assert len(bars) == len(dash.input_names()) >= 5
    for param in dash.input_names():
        x = dash.metrics[param].to_numpy(dtype=float)
        ok = np.isfinite(x) & np.isfinite(y)
        rho = spearmanr(x[ok], y[ok]).statistic  # scipy reference
        assert bars[param[len("param.") :]] == pytest.approx(np.nan_to_num(rho), abs=1e-12), param


def test_clicking_a_scatter_point_opens_that_trial_in_the_player(store: Path, dash: CampaignDashboard) -> None:
    metrics = pd.read_parquet(store / "metrics.parquet")  # pyarrow reader
    stored = json.loads((store / "verdicts.json").read_text(encoding="utf-8"))
    req = stored[0]
    dash.requirement_picker.value = req["name"]
    dash.metric_picker.value = req["metric"]
    scatter = dash.marks["scatter"]
    xcol = dash.input_picker.value
    np.testing.assert_array_equal(scatter.x, metrics[xcol].to_numpy(dtype=float))
    np.testing.assert_array_equal(scatter.y, metrics[req["metric"]].to_numpy(dtype=float))
    # coloured met / not met: as many met as the stored verdict counts
    assert int(np.sum(scatter.color == 1.0)) == req["n_met"]
    k = 5
    event = {"event": "element_click", "data": {"x": float(scatter.x[k]), "y": float(scatter.y[k]), "index": k}}
    scatter._handle_custom_msgs(scatter, event, [])  # as a comm message from the front end arrives
    trial = int(metrics["trial"].iloc[k])
    assert dash.player is not None and dash.player.trial == trial
    assert dash.player_box.children == (dash.player.widget,)
    assert all(same for *_, same in dash.player.reproduced())


def test_static_twin_holds_the_verdicts_and_svg_charts_and_no_script(store: Path, dash: CampaignDashboard) -> None:
    stored = json.loads((store / "verdicts.json").read_text(encoding="utf-8"))
    page = dash._repr_mimebundle_()["text/html"]
    assert TWIN_CLASS in page
    # the charts travel as <img> data URIs (JupyterLab's sanitiser strips inline <svg> from untrusted notebooks);
    # decoded, they are the panel's own SVG charts, byte for byte and in order
    charts = twin_svgs(page)
    assert len(charts) >= 5 and "<svg" not in page
    assert charts == re.findall(r"<svg\b.*?</svg>", dash.static_html(), re.S)
    assert any('class="operability-polar"' in c for c in charts)  # report/study.py's operability chart
    # the panel shows the study module's chart of the picked requirement (operability_of on the store's metrics)
    from wavebench.report.study import operability_of, operability_polar_chart

    req = dash.requirement(dash.requirement_picker.value)
    op = operability_of(read_store(store)["metrics"], dash.spec, req)
    assert op is not None and int(op.count.sum()) + op.n_left_out == len(dash.metrics)
    assert operability_polar_chart(op, title=f"{req.name}: share meeting {req.text()}",
                                   required=req.probability) in dash.operability_html.value  # fmt: skip
    assert "<script" not in page.lower()
    for v in stored:
        assert f'data-requirement="{v["name"]}" data-verdict="{v["verdict"]}"' in page
        assert f">{v['verdict']}</span>" in page


def test_the_verdicts_carry_the_reports_caution_live_and_in_the_twin(dash: CampaignDashboard) -> None:
    from html import escape

    from wavebench.report.html import CAUTION

    # one wording: the reports' caution, below the verdict table of the live panel and of its static twin
    line = f"<b>Caution.</b> {escape(CAUTION)}</p>"
    live = dash.verdict_html.value
    assert line in live and live.index("</table>") < live.index(line)
    assert line in dash.static_html() and line in dash._repr_mimebundle_()["text/html"]
    for words in ("no substitute for sea trials", "certification", "Preventing Collisions at Sea", "local rules"):
        assert words in CAUTION


def _watch_progress(monkeypatch: pytest.MonkeyPatch) -> list[int]:
    """Every value the progress bar of the next dashboard takes, in order."""
    seen: list[int] = []
    original = CampaignDashboard.__init__

    def watched(self: CampaignDashboard, *args: object, **kwargs: object) -> None:
        original(self, *args, **kwargs)
        self.progress.observe(lambda c: seen.append(int(c["new"])), names="value")

    monkeypatch.setattr(CampaignDashboard, "__init__", watched)
    return seen


def _changes(values: list[int], start: int = 0) -> list[int]:
    """The values that differ from the one before (a trait reports changes only)."""
    out, last = [], start
    for v in values:
        if v != last:
            out.append(v)
        last = v
    return out


def test_run_feeds_the_progress_bar_from_the_chunk_hook_and_gives_the_same_bits(
        monkeypatch: pytest.MonkeyPatch, short_reference: object) -> None:  # fmt: skip
    import numba

    spec = _short_spec(duration_s=20.0)
    reference = short_reference
    threads = numba.get_num_threads()
    seen = _watch_progress(monkeypatch)
    hook: list[tuple[bool, int, int]] = []
    # a lambda factory (not picklable) runs inline as in run_campaign itself; returning None keeps the spec's guide
    d = CampaignDashboard.run(spec, display=False, executor="inline", guide_factory=lambda setup: None,
                              on_chunk=lambda out, done, planned: hook.append((out is None, done, planned)))  # fmt: skip
    # run_campaign's on_chunk: once first with no output and nothing read back, then after each chunk of 4
    assert hook == [(True, 0, TRIALS), (False, 4, TRIALS), (False, 8, TRIALS)]
    # the bar took exactly the hook's values, in order (the finished panel keeps the last)
    assert seen == _changes([done for _, done, _ in hook])
    assert d.progress.value == d.progress.max == TRIALS
    assert numba.get_num_threads() == threads  # the inline chunks ran in this process with its numba threads
    pd.testing.assert_frame_equal(d.metrics, reference.metrics)
    assert [v["verdict"] for v in d.verdicts] == [v.verdict for v in reference.verdicts]
    assert "<svg" in d.static_html()


def test_a_resumed_store_run_starts_the_bar_at_the_trials_read_back(
        tmp_path: Path, monkeypatch: pytest.MonkeyPatch, short_reference: object) -> None:  # fmt: skip
    from wavebench.campaign import chunks as chunk_files

    spec = _short_spec(duration_s=20.0)
    folder = tmp_path / "resumed"
    real, calls = chunk_files.write_chunk, {"n": 0}

    def fail_second_write(where: object, out: object) -> None:
        calls["n"] += 1
        if calls["n"] == 2:
            raise OSError(28, "No space left on device")
        real(where, out)

    monkeypatch.setattr(chunk_files, "write_chunk", fail_second_write)
    with pytest.raises(OSError, match="No space left"):
        run_campaign(spec, progress=False, store=folder)
    monkeypatch.setattr(chunk_files, "write_chunk", real)
    kept = len(pd.read_parquet(sorted((folder / "chunks").glob("metrics-*.parquet"))[0]))  # pyarrow reader
    assert kept == 4  # the first chunk of batch_size = 4 was stored before the failing write

    seen = _watch_progress(monkeypatch)
    hook: list[tuple[bool, int, int]] = []
    d = CampaignDashboard.run(spec, display=False, store=folder, resume=True,
                              on_chunk=lambda out, done, planned: hook.append((out is None, done, planned)))  # fmt: skip
    assert hook[0] == (True, kept, TRIALS)  # read back from the store, before any chunk runs
    assert seen[0] == kept  # the bar's first value: the resumed trials counted at once
    assert seen == _changes([done for _, done, _ in hook])
    assert d.progress.value == TRIALS and d.progress.bar_style == "success"
    # resumed to the same bits as the uninterrupted run
    pd.testing.assert_frame_equal(d.metrics, short_reference.metrics, check_exact=True, check_dtype=False)


def test_the_panel_state_serialises_as_jupyter_widget_state(dash: CampaignDashboard) -> None:
    from ipywidgets.embed import embed_data

    if dash.player is None:
        dash.open_trial(int(dash.trials[0]))
    # ipywidgets' embedding (the widget-state JSON a saved notebook holds): every model's state must serialise
    data = embed_data(views=[dash.widget])
    text = json.dumps(data["manager_state"])
    models = {s["model_name"] for s in data["manager_state"]["state"].values()}
    assert {"ScatterModel", "LinesModel", "BarsModel", "IntProgressModel", "PlayModel"} <= models
    assert len(text) > 10_000


def test_background_run_returns_at_once_and_fills_in(store: Path) -> None:
    spec = _short_spec(duration_s=20.0)
    d = CampaignDashboard.run(spec, display=False, background=True, trials=4)
    d.wait(timeout=120)
    assert d.error is None and len(d.metrics) == 4 and d.progress.value == 4
    assert d.progress.bar_style == "success"
