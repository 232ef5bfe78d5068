"""The HTML campaign report, rendered from a small synthetic store.

The store follows the store contract (schema v1) exactly, but its numbers
are invented, only to have something to render: they are never check
values. The checks compare with references outside the project: the
stdlib HTML and XML parsers for well-formedness, numpy.histogram for the
histogram bins and numpy.nanpercentile for the percentile bands.

The interim report of an unfinished store is rendered from a real
campaign (the built-in ``skerrow_sound`` spec, shortened) stopped part way
as Ctrl-C stops it; what it shows is checked against the chunk files read
independently with pandas, the spec's thresholds and the exact binomial
interval of ``scipy.stats.binomtest`` (Clopper & Pearson, 1934).
"""

from __future__ import annotations

import json
import re
import shutil
import xml.etree.ElementTree as ET
from html.parser import HTMLParser
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
import xarray as xr
from scipy import stats

from wavebench.campaign import run_campaign
from wavebench.cli import main
from wavebench.core.errors import ParameterError, WavebenchWarning
from wavebench.report.campaign import campaign_report_html, nan_percentiles, write_campaign_report
from wavebench.report.charts import band_chart, histogram_chart
from wavebench.report.html import CAUTION
from wavebench.report.svg import PALETTE, Series
from wavebench.spec.io import example_spec_path, load_spec, spec_hash

N_TRIALS = 40
FAILED = {3: "non-finite state at t=12.3 s", 17: "non-finite state at t=240.5 s",
          29: "runaway: surge 31.2 m/s > 20 m/s <limit>"}  # fmt: skip
FAIL_TIME_S = {3: 12.3, 17: 240.5, 29: 433.0}
TRUNCATED = {8, 21}
ROUTE_NE_M = [(0.0, 0.0), (200.0, 550.0), (350.0, 500.0), (150.0, -50.0)]  # invented route, (north, east)
VOID = {"area", "base", "br", "col", "embed", "hr", "img", "input", "link", "meta", "source", "track", "wbr"}


def build_store(root: Path, *, timeseries: bool = True, verdicts: bool = True) -> Path:
    """A store folder per the contract, filled with invented numbers (for rendering only)."""
    root.mkdir(parents=True, exist_ok=True)
    spec_path = example_spec_path("skerrow_sound")
    shutil.copyfile(spec_path, root / "spec.toml")
    spec = load_spec(root / "spec.toml")
    rng = np.random.default_rng(20240611)  # invented data; any seed would do
    trial = np.arange(N_TRIALS, dtype=np.int64)
    ended = np.array(["completed"] * N_TRIALS, dtype=object)
    ended[list(TRUNCATED)] = "truncated"
    ended[list(FAILED)] = "failed"
    failed = ended == "failed"
    completed = ended == "completed"

    def metric(values: np.ndarray) -> np.ndarray:
        return np.where(failed, np.nan, values)

    xte_p95 = rng.gamma(4.0, 0.8, N_TRIALS)
    m = pd.DataFrame(
        {
            "trial": trial,
            "ended": ended.astype(str),
            "completed": completed,
            "time_to_complete_s": np.where(completed, rng.uniform(420.0, 590.0, N_TRIALS), np.nan),
            "xte_rms_m": metric(0.5 * xte_p95),
            "xte_p95_m": metric(xte_p95),
            "xte_max_m": metric(xte_p95 * rng.uniform(1.2, 2.0, N_TRIALS)),
            "heading_err_rms_deg": metric(rng.uniform(1.0, 6.0, N_TRIALS)),
            "speed_err_rms_mps": metric(rng.uniform(0.05, 0.3, N_TRIALS)),
            "distance_m": metric(rng.uniform(1400.0, 1600.0, N_TRIALS)),
            "energy_kj": metric(rng.normal(900.0, 80.0, N_TRIALS)),
            "min_depth_under_keel_m": np.full(N_TRIALS, np.nan),  # the spec has no seabed
            "grounded": np.zeros(N_TRIALS, dtype=bool),
            "failed": failed,
            "failure_reason": [FAILED.get(int(i), "") for i in trial],
            "param.sea.hs_m": rng.uniform(0.5, 2.0, N_TRIALS),
            "param.sea.tp_s": rng.uniform(5.0, 7.5, N_TRIALS),
            "param.current.speed_mps": rng.uniform(0.2, 0.7, N_TRIALS),
        }
    )
    m.to_parquet(root / "metrics.parquet")

    manifest = {
        "format": "wavebench-store", "format_version": 1, "spec_hash": spec_hash(spec), "seed": 20240611,
        "trials": N_TRIALS, "batch_size": 20, "created_utc": "2024-06-11T09:30:00+00:00",
        "wavebench_version": "0.0.test", "python": "3.11.9", "platform": "Linux-x86_64",
        "packages": {"numpy": np.__version__, "pandas": pd.__version__, "xarray": xr.__version__},
        "wall_time_s": 75.5, "scenario": spec.scenario.name, "craft": "Tholepin",
    }  # fmt: skip
    (root / "manifest.json").write_text(json.dumps(manifest), encoding="utf-8")

    if verdicts:
        rows = []
        for name, metric_name, thr, verdict in [
            ("track_keeping", "xte_p95_m", 5.0, "pass"),
            ("finishes_in_time", "time_to_complete_s", 600.0, "fail"),
            ("energy & budget", "energy_kj", 950.0, "undecided"),
        ]:
            vals = m[metric_name].to_numpy()
            k = int(np.sum(vals < thr))
            ci = stats.binomtest(k, N_TRIALS).proportion_ci(confidence_level=0.95, method="exact")
            q = float(np.nanquantile(vals, 0.9))
            rows.append({
                "name": name, "metric": metric_name, "comparator": "below", "threshold": thr,
                "probability": 0.9, "confidence": 0.95, "n_trials": N_TRIALS, "n_met": k,
                "n_failed": len(FAILED), "p_hat": k / N_TRIALS, "p_low": ci.low, "p_high": ci.high,
                "verdict": verdict, "quantile_level": 0.9, "quantile_value": q,
                "quantile_low": 0.95 * q, "quantile_high": 1.05 * q, "unit": "m" if "xte" in metric_name else "",
            })  # fmt: skip
        (root / "verdicts.json").write_text(json.dumps(rows), encoding="utf-8")

    if timeseries:
        t = np.arange(0.0, 600.0 + 1e-9, 5.0)
        drift = np.cumsum(rng.normal(0.0, 0.4, (N_TRIALS, t.size)), axis=1)
        xte = drift + rng.normal(0.0, 0.3, (N_TRIALS, t.size))
        # along an out-and-back route at 2.5 m/s, offset to starboard by the cross-track error
        wp = np.array(ROUTE_NE_M)
        leg = np.diff(wp, axis=0)
        s_wp = np.concatenate([[0.0], np.cumsum(np.hypot(leg[:, 0], leg[:, 1]))])
        s = np.minimum(2.5 * t, s_wp[-1])
        k = np.clip(np.searchsorted(s_wp, s, side="right") - 1, 0, len(leg) - 1)
        starboard = np.stack([-leg[:, 1], leg[:, 0]], axis=1) / np.hypot(leg[:, 0], leg[:, 1])[:, None]
        north = np.interp(s, s_wp, wp[:, 0])[None, :] + xte * starboard[k, 0][None, :]
        east = np.interp(s, s_wp, wp[:, 1])[None, :] + xte * starboard[k, 1][None, :]
        for i, tf in FAIL_TIME_S.items():
            after = t > tf
            for a in (xte, north, east):
                a[i, after] = np.nan
        n_t = (N_TRIALS, t.size)

        def var(a: np.ndarray, units: str, long_name: str) -> xr.Variable:
            return xr.Variable(("trial", "time"), a, attrs={"units": units, "long_name": long_name})

        ds = xr.Dataset(
            {
                "north_m": var(north, "m", "north of the origin"),
                "east_m": var(east, "m", "east of the origin"),
                "heading_deg": var(np.full(n_t, 20.0, dtype=np.float32), "deg", "heading"),
                "surge_mps": var(np.full(n_t, 2.5, dtype=np.float32), "m/s", "surge speed"),
                "sway_mps": var(np.zeros(n_t, dtype=np.float32), "m/s", "sway speed"),
                "yaw_rate_dps": var(np.zeros(n_t, dtype=np.float32), "deg/s", "yaw rate"),
                "xte_m": var(xte, "m", "cross-track error, + to starboard"),
                "heading_cmd_deg": var(np.full(n_t, 20.0), "deg", "commanded heading"),
                "speed_cmd_mps": var(np.full(n_t, 2.5), "m/s", "commanded speed"),
                "power_w": var(np.full(n_t, 1500.0, dtype=np.float32), "W", "shaft power"),
            },
            coords={
                "trial": ("trial", trial),
                "time": ("time", t, {"units": "s", "long_name": "time since start"}),
            },
            attrs={"spec_hash": manifest["spec_hash"], "scenario": manifest["scenario"], "decimation_s": 5.0},
        )
        ds.to_netcdf(root / "timeseries.nc", engine="h5netcdf")
    return root


class _TagChecker(HTMLParser):
    """Checks that every element closes in order and collects attributes (stdlib html.parser)."""

    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.stack: list[str] = []
        self.errors: list[str] = []
        self.attrs: list[tuple[str, str, str]] = []
        self.tags: list[str] = []

    def handle_starttag(self, tag: str, attrs: list[tuple[str, str | None]]) -> None:
        self.tags.append(tag)
        self.attrs += [(tag, k, v or "") for k, v in attrs]
        if tag not in VOID:
            self.stack.append(tag)

    def handle_startendtag(self, tag: str, attrs: list[tuple[str, str | None]]) -> None:
        self.tags.append(tag)
        self.attrs += [(tag, k, v or "") for k, v in attrs]

    def handle_endtag(self, tag: str) -> None:
        if not self.stack or self.stack[-1] != tag:
            self.errors.append(f"</{tag}> closes {self.stack[-1:] or 'nothing'}")
        else:
            self.stack.pop()


def _check_html(page: str) -> _TagChecker:
    p = _TagChecker()
    p.feed(page)
    p.close()
    assert p.errors == [] and p.stack == [], (p.errors[:5], p.stack)
    return p


def _svgs(page: str) -> list[ET.Element]:
    # every inline chart must also be well-formed XML (stdlib XML 1.0 parser)
    return [ET.fromstring(s) for s in re.findall(r"<svg\b.*?</svg>", page, flags=re.S)]


def _title(svg: ET.Element) -> str:
    texts = [el for el in svg.iter() if el.tag.endswith("text") and el.get("font-weight") == "bold"]
    return texts[0].text if texts else ""


def _assert_offline(p: _TagChecker, page: str) -> None:
    assert "script" not in p.tags and "link" not in p.tags and "iframe" not in p.tags
    for tag, k, v in p.attrs:
        if k in ("src", "href", "xlink:href", "srcset", "action", "poster", "data"):
            assert not re.match(r"\s*(https?:)?//", v, flags=re.I), (tag, k, v)
    assert not re.search(r"""(src|href)\s*=\s*["']?\s*(https?:)?//""", page, flags=re.I)
    assert "@import" not in page and not re.search(r"url\(\s*['\"]?\s*(https?:)?//", page)


def test_full_store_report(tmp_path: Path) -> None:
    store = build_store(tmp_path / "store")
    out = write_campaign_report(store)
    assert out == store / "report.html"
    page = out.read_text(encoding="utf-8")
    p = _check_html(page)
    _assert_offline(p, page)

    # the caution, near the top (before the first section)
    assert page.index("no substitute for sea trials") < page.index('<section id="summary"')
    assert CAUTION.replace("'", "&#x27;") in page or CAUTION in page

    # summary: manifest fields shown
    for text in ("Skerrow Sound survey leg", "Tholepin", "20240611", "2024-06-11T09:30:00+00:00", "75.5 s"):
        assert text in page, text

    # one verdict row per requirement, each with its verdict word in its colour class
    rows = re.findall(r"<tr class='verdict-row'>.*?</tr>", page, flags=re.S)
    assert len(rows) == 3
    for row, (name, word) in zip(rows, [("track_keeping", "pass"), ("finishes_in_time", "fail"),
                                        ("energy &amp; budget", "undecided")], strict=True):  # fmt: skip
        assert name in row and f'class="verdict v-{word}">{word}</span>' in row
    verdicts = json.loads((store / "verdicts.json").read_text())
    assert f"{verdicts[0]['p_low']:.3g}" in rows[0] and f"{verdicts[0]['p_high']:.3g}" in rows[0]
    # trials without a value are counted as not met, and the row says so (not "failed": a truncated
    # trial has no time to complete either)
    for row, v in zip(rows, verdicts, strict=True):
        assert (f"{v['n_failed']} without a value, counted as not met" in row) == bool(v["n_failed"])

    # failure reasons grouped with counts and example trials; text from files is escaped
    reasons = re.findall(r"<tr class='reason-row'>(.*?)</tr>", page, flags=re.S)
    cells = [re.findall(r"<td[^>]*>(.*?)</td>", r) for r in reasons]
    assert [(c[0], c[1], c[2]) for c in cells] == [
        ("non-finite state at t=… s", "2", "3, 17"),
        ("runaway: surge … m/s &gt; … m/s &lt;limit&gt;", "1", "29"),
    ]
    assert "<limit>" not in page

    # charts before the parameters (the study sections after them have their own tests in test_report_study.py):
    # 5 histograms (min_depth_under_keel_m is all NaN), the band chart, the tracks
    head = page[: page.index('<section id="parameters">')]
    svgs = _svgs(head)
    titles = [_title(s) for s in svgs]
    assert titles == ["xte_p95_m", "xte_max_m", "heading_err_rms_deg", "energy_kj", "time_to_complete_s",
                      "Cross-track error across trials", f"Tracks of {30} trials"]  # fmt: skip
    assert head.count("<svg") == len(svgs)
    # the requirement threshold is drawn on the histograms of the metrics that have one
    marks = {_title(s): [float(el.get("data-value")) for el in s.iter() if el.get("class") == "threshold"]
             for s in svgs[:5]}  # fmt: skip
    assert marks == {"xte_p95_m": [5.0], "xte_max_m": [], "heading_err_rms_deg": [], "energy_kj": [950.0],
                     "time_to_complete_s": [600.0]}  # fmt: skip
    # 30 tracks, the failed trials among them, drawn in their own colour
    track_paths = [el for el in svgs[6].iter() if el.tag.endswith("path")]
    assert len(track_paths) == 30
    strokes = [el.get("stroke") for el in track_paths]
    assert strokes.count(PALETTE[1]) == len(FAILED) and strokes.count(PALETTE[4]) == len(TRUNCATED)

    # parameter table: one row per param.* column, with the min and max drawn
    m = pd.read_parquet(store / "metrics.parquet")
    section = page[page.index('<section id="parameters"') :]
    for col in ("sea.hs_m", "sea.tp_s", "current.speed_mps"):
        row = re.search(rf"<tr><td><code>{re.escape(col)}</code>.*?</tr>", section, flags=re.S).group(0)
        assert f"{m['param.' + col].min():.4g}" in row and f"{m['param.' + col].max():.4g}" in row


def test_store_without_timeseries_and_verdicts(tmp_path: Path) -> None:
    store = build_store(tmp_path / "store", timeseries=False, verdicts=False)
    page = campaign_report_html(store)
    p = _check_html(page)
    _assert_offline(p, page)
    assert "no substitute for sea trials" in page
    assert "No requirements in the spec" in page and "verdict-row" not in page
    assert "The store holds no time series" in page
    titles = [_title(s) for s in _svgs(page[: page.index('<section id="parameters">')])]
    assert titles == ["xte_p95_m", "xte_max_m", "heading_err_rms_deg", "energy_kj", "time_to_complete_s"]
    # an empty verdicts.json says the same
    (store / "verdicts.json").write_text("[]", encoding="utf-8")
    assert "No requirements in the spec" in campaign_report_html(store)
    # written elsewhere on request
    out = write_campaign_report(store, tmp_path / "elsewhere.html")
    assert out.read_text(encoding="utf-8") == page


def test_not_a_store_is_refused(tmp_path: Path) -> None:
    with pytest.raises(ParameterError, match=r"manifest\.json"):
        campaign_report_html(tmp_path)
    store = build_store(tmp_path / "store", timeseries=False)
    (store / "metrics.parquet").unlink()
    with pytest.raises(ParameterError, match=r"metrics\.parquet"):
        campaign_report_html(store)


# ---------------------------------------------------------------------------
# the interim report of an unfinished store
# ---------------------------------------------------------------------------

PARTIAL_SETTINGS = ["scenario.duration_s=30.0", "campaign.trials=10", "campaign.batch_size=2"]
PARTIAL_PLANNED = 10


def _stop_after_first_chunk(_output, done: int, _planned: int) -> None:
    if done > 0:
        raise KeyboardInterrupt  # as Ctrl-C would, between chunks


@pytest.fixture(scope="module")
def unfinished(tmp_path_factory: pytest.TempPathFactory) -> Path:
    """A real campaign stopped after its first chunk: chunks/plan.json, spec.toml, no manifest.json."""
    spec = load_spec(example_spec_path("skerrow_sound"), PARTIAL_SETTINGS)
    store = tmp_path_factory.mktemp("unfinished") / "store"
    with pytest.warns(WavebenchWarning, match="interrupted"):
        result = run_campaign(spec, progress=False, store=store, on_chunk=_stop_after_first_chunk)
    assert not result.complete
    assert (store / "chunks" / "plan.json").is_file() and not (store / "manifest.json").exists()
    return store


def _chunk_rows(store: Path) -> pd.DataFrame:
    """The finished trials, read straight from the chunk metrics files with pandas."""
    files = sorted((store / "chunks").glob("metrics-*.parquet"))
    assert files
    return pd.concat([pd.read_parquet(f) for f in files], ignore_index=True)


def test_interim_report_of_an_unfinished_store(unfinished: Path, tmp_path: Path) -> None:
    rows = _chunk_rows(unfinished)
    n = len(rows)
    planned = json.loads((unfinished / "chunks" / "plan.json").read_text(encoding="utf-8"))["trials"]
    assert planned == PARTIAL_PLANNED and 0 < n < planned

    out = write_campaign_report(unfinished, tmp_path / "interim.html")
    page = out.read_text(encoding="utf-8")
    p = _check_html(page)
    _assert_offline(p, page)

    # marked interim in the title and heading, with a banner under the caution giving n of N
    assert re.search(r"<title>[^<]*interim[^<]*</title>", page)
    assert re.search(r"<h1>[^<]*interim[^<]*</h1>", page)
    caution = page.index('<p class="caution"')
    banner = page.index('<p class="warn interim"')
    assert caution < banner < page.index('<section id="summary"')
    banner_text = page[banner : page.index("</p>", banner)]
    assert f"{n} of {planned} planned trials had finished" in banner_text and "provisional" in banner_text
    # the caution stays at the top and at the bottom
    assert page.count("no substitute for sea trials") == 2
    assert page.rindex("no substitute for sea trials") > page.index("<footer>")
    # the verdicts section says provisional
    assert "<h2>Requirement verdicts (provisional)</h2>" in page

    # how the trials ended: the counts of the finished rows, nothing else
    section = page[page.index('<section id="outcomes"') : page.index('<section id="metrics"')]
    shown = {k: int(c) for k, c in re.findall(r"<tr><td>([a-z]+)</td><td class='num'>(\d+)</td>", section)}
    counts = rows["ended"].astype(str).value_counts()
    assert {k: c for k, c in shown.items() if c} == {str(k): int(c) for k, c in counts.items()}
    assert f"<tr><th>all</th><th class='num'>{n}</th>" in section
    # the tracks and the bands cover the finished trials only
    assert f"Tracks of {n} trials" in page
    assert f"percentiles across the {n} trials" in page

    # the verdicts: trials counted and met from the chunk rows and the spec's thresholds, and the exact
    # binomial interval of scipy.stats.binomtest (Clopper & Pearson, 1934)
    spec = load_spec(unfinished / "spec.toml")
    vrows = re.findall(r"<tr class='verdict-row'>(.*?)</tr>", page, flags=re.S)
    assert len(vrows) == len(spec.requirements) > 0
    for row, (name, req) in zip(vrows, spec.requirements, strict=True):
        values = rows[req.metric].to_numpy(dtype=float)
        met = values < req.threshold if req.comparator == "below" else values > req.threshold  # NaN: not met
        k = int(np.count_nonzero(met))
        ci = stats.binomtest(k, n).proportion_ci(confidence_level=req.confidence, method="exact")
        assert f"<td>{name}</td>" in row and f"<td class='num'>{k} / {n}" in row
        assert f"[{ci.low:.3g}, {ci.high:.3g}]" in row, (name, row)


def test_wavebench_report_on_an_unfinished_store(unfinished: Path, tmp_path: Path,
                                                 capsys: pytest.CaptureFixture[str]) -> None:  # fmt: skip
    out = tmp_path / "cli.html"
    assert main(["report", str(unfinished), "--html", str(out)]) == 0
    assert str(out) in capsys.readouterr().out
    page = out.read_text(encoding="utf-8")
    n = len(_chunk_rows(unfinished))
    assert f"{n} of {PARTIAL_PLANNED} planned trials had finished" in page
    # nothing written into the store but what the campaign wrote
    assert not (unfinished / "manifest.json").exists() and not (unfinished / "report.html").exists()


def test_unfinished_store_without_a_finished_trial_is_refused(unfinished: Path, tmp_path: Path) -> None:
    store = tmp_path / "store"
    shutil.copytree(unfinished, store)
    for f in (store / "chunks").glob("metrics-*.parquet"):
        f.unlink()
    with pytest.raises(ParameterError, match=rf"none of its {PARTIAL_PLANNED} planned trials has finished"):
        campaign_report_html(store)


def test_folder_with_only_a_spec_is_not_a_store(tmp_path: Path) -> None:
    shutil.copyfile(example_spec_path("skerrow_sound"), tmp_path / "spec.toml")
    with pytest.raises(ParameterError, match=r"manifest\.json"):
        campaign_report_html(tmp_path)


def _bars(svg: ET.Element) -> list[ET.Element]:
    return [el for el in svg.iter() if el.get("class") == "bar"]


@pytest.mark.parametrize("bins", [7, 1, [-3.0, -1.0, 0.0, 0.5, 2.5]])
def test_histogram_bins_match_numpy(bins: int | list[float]) -> None:
    rng = np.random.default_rng(3)
    data = rng.normal(0.0, 1.0, 500)
    data[::37] = np.nan
    data[5] = np.inf
    svg = ET.fromstring(histogram_chart(data, bins=bins, title="x", threshold=1.5, threshold_label="limit"))
    bars = _bars(svg)
    counts = np.array([int(b.get("data-count")) for b in bars])
    edges = np.array([float(b.get("data-lo")) for b in bars] + [float(bars[-1].get("data-hi"))])
    finite = data[np.isfinite(data)]
    # reference: numpy.histogram on the same finite data (its edges for a bin count, ours for explicit edges)
    ref_counts, ref_edges = np.histogram(finite, bins=bins)
    np.testing.assert_array_equal(edges, ref_edges)
    np.testing.assert_array_equal(counts, ref_counts)
    # the note counts the values left out
    n_bad = int(np.count_nonzero(~np.isfinite(data)))
    n_out = finite.size - int(ref_counts.sum())
    note = " ".join(el.text or "" for el in svg.iter() if el.tag.endswith("text"))
    assert f"{n_bad} NaN/inf not shown" in note
    assert (f"{n_out} outside the bins" in note) == (n_out > 0)
    # bar heights are proportional to the counts (same pixels per trial)
    heights = np.array([float(b.get("height")) for b in bars])
    big = counts > 0
    np.testing.assert_allclose(heights[big] / counts[big], (heights[big] / counts[big])[0], rtol=1e-3)


def _inverse(svg: ET.Element) -> tuple:
    area = next(el for el in svg.iter() if el.get("class") == "plot-area")
    left, top = float(area.get("x")), float(area.get("y"))
    pw, ph = float(area.get("width")), float(area.get("height"))
    x0, x1 = map(float, svg.get("data-xlim").split())
    y0, y1 = map(float, svg.get("data-ylim").split())
    return (
        (lambda X: x0 + (X - left) / pw * (x1 - x0)),
        (lambda Y: y0 + (top + ph - Y) / ph * (y1 - y0)),
        (y1 - y0) / ph,
    )


def _band_edges(path: ET.Element, ix, iy) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    d = path.get("d")
    assert d.count("M") == 1  # no gaps expected here
    pts = np.array([[float(a) for a in p.split(",")] for p in re.findall(r"[-\d.]+,[-\d.]+", d)])
    n = len(pts) // 2
    return ix(pts[:n, 0]), iy(pts[:n, 1]), iy(pts[n:, 1][::-1])


def test_percentile_bands_match_numpy(tmp_path: Path) -> None:
    rng = np.random.default_rng(11)
    v = rng.normal(0.0, 2.0, (25, 60))
    v[rng.random(v.shape) < 0.2] = np.nan
    v[:, 7] = np.nan  # a time where every trial is missing
    q = [5.0, 25.0, 50.0, 75.0, 95.0]
    ours = nan_percentiles(v, q)
    # reference: numpy.nanpercentile (default linear method); it warns on the all-NaN column
    with pytest.warns(RuntimeWarning, match="All-NaN"):
        ref = np.nanpercentile(v, q, axis=0)
    np.testing.assert_allclose(ours, ref, rtol=1e-13, atol=1e-13, equal_nan=True)
    assert np.isnan(ours[:, 7]).all()
    assert nan_percentiles(np.array([3.0, np.nan, 1.0]), 50.0) == 2.0  # scalar q: scalar result

    # the band chart in the report draws those percentiles of the stored xte_m
    store = build_store(tmp_path / "store", verdicts=False)
    page = campaign_report_html(store)
    svg = next(s for s in _svgs(page) if _title(s) == "Cross-track error across trials")
    ix, iy, per_px = _inverse(svg)
    with xr.open_dataset(store / "timeseries.nc", engine="h5netcdf") as ds:
        xte = ds["xte_m"].transpose("trial", "time").values
        t = ds["time"].values
    ref = np.nanpercentile(xte, q, axis=0)  # reference: numpy.nanpercentile
    bands = {el.get("data-label"): el for el in svg.iter() if el.get("class") == "band"}
    tol = 0.01 * per_px  # coordinates are written to 0.01 px
    for label, lo_k, hi_k in (("5–95 %", 0, 4), ("25–75 %", 1, 3)):
        x, lo, hi = _band_edges(bands[label], ix, iy)
        np.testing.assert_allclose(x, t, atol=tol * 10)
        np.testing.assert_allclose(lo, ref[lo_k], atol=tol)
        np.testing.assert_allclose(hi, ref[hi_k], atol=tol)
    median = next(el for el in svg.iter() if el.get("class") == "line" and el.get("data-label") == "median")
    pts = np.array([[float(a) for a in p.split(",")] for p in re.findall(r"[-\d.]+,[-\d.]+", median.get("d"))])
    np.testing.assert_allclose(iy(pts[:, 1]), ref[2], atol=tol)


def test_band_chart_leaves_gaps_where_data_are_missing() -> None:
    x = np.arange(6.0)
    low = np.array([0.0, 0.0, np.nan, 0.0, 0.0, 0.0])
    svg = ET.fromstring(band_chart(x, [(low, low + 1.0, "b")], [Series(x, low + 0.5, "m")], title="g"))
    band = next(el for el in svg.iter() if el.get("class") == "band")
    assert band.get("d").count("M") == 2 and band.get("d").count("Z") == 2
    with pytest.raises(ParameterError, match="bands"):
        band_chart(x, [(low[:3], low[:3], "short")])
