"""The study sections of the campaign report (what drives the results, operability, closest to failing).

The store is written by the real writer from a small real campaign of the
built-in Skerrow Sound spec (60 s, 36 trials, a 14 m corridor so that some
trials fail); the sections are rendered from the store's files as the
campaign report reads them. The checks compare what they show with references
outside the project: scipy.stats.spearmanr for the rank correlations
(Spearman 1904), numpy.histogram2d for the operability cell counts,
pandas sorting for the trials closest to failing, a replay of the shown
Python lines for the replay recipe, and the stdlib XML parser for the SVG.
"""

from __future__ import annotations

import html
import json
import math
import re
import shutil
import xml.etree.ElementTree as ET
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from scipy import stats

from wavebench.campaign import run_campaign, write_store
from wavebench.report.charts import share_matrix_chart, signed_bar_chart
from wavebench.report.study import STUDY_CSS, Requirement, closest_trials, study_sections
from wavebench.spec.io import example_spec_path, load_spec

N_TRIALS = 36
SETTINGS = ["scenario.duration_s=60.0", f"campaign.trials={N_TRIALS}", f"campaign.batch_size={N_TRIALS}",
            "mission.abort_cross_track_m=14.0"]  # fmt: skip
#: Every distributed field of skerrow_sound.toml set to a fixed value.
FIXED = ["sea.hs_m=1.2", "sea.tp_s=6.0", "sea.spreading.exponent=10.0", "sea.spreading.mean_dir_deg=225.0",
         "current.speed_mps=0.4", "current.set_deg=95.0", "wind.speed_mps=8.0", "mission.start_north_m=0.0",
         "mission.start_east_m=-20.0"]  # fmt: skip


def _store(root: Path, settings: list[str]) -> Path:
    spec = load_spec(example_spec_path("skerrow_sound"), settings)
    return write_store(run_campaign(spec, progress=False), root)


@pytest.fixture(scope="module")
def store(tmp_path_factory: pytest.TempPathFactory) -> Path:
    return _store(tmp_path_factory.mktemp("study") / "store", SETTINGS)


def study_page(store: Path, *, with_spec: bool = True) -> str:
    """The study sections of a store, read as the campaign report reads it, joined in page order."""
    metrics = pd.read_parquet(store / "metrics.parquet")
    verdicts = json.loads((store / "verdicts.json").read_text(encoding="utf-8"))
    spec = load_spec(store / "spec.toml") if with_spec else None
    sections = study_sections(metrics, spec, verdicts)
    return "\n".join(f"<!-- {anchor} | {text} -->\n{body}" for anchor, text, body in sections)


@pytest.fixture(scope="module")
def page(store: Path) -> str:
    return study_page(store)


@pytest.fixture(scope="module")
def frame(store: Path) -> pd.DataFrame:
    return pd.read_parquet(store / "metrics.parquet")


@pytest.fixture(scope="module")
def requirements(store: Path) -> list[tuple[str, object]]:
    return list(load_spec(store / "spec.toml").requirements)


def _section(page: str, anchor: str) -> str:
    start = page.index(f'<section id="{anchor}">')
    return page[start : page.index("</section>", start)]


def _rows(section: str, requirement: str, cls: str) -> list[str]:
    start = section.index(f"<table class='{cls}' data-requirement=\"{html.escape(requirement)}\">")
    table = section[start : section.index("</table>", start)]
    return re.findall(r"<tr class='[^']*'.*?</tr>", table, flags=re.S)


def _values(row: str) -> list[float]:
    return [float(v) for v in re.findall(r'data-value="([^"]*)"', row)]


def _met(values: np.ndarray, comparator: str, threshold: float) -> np.ndarray:
    with np.errstate(invalid="ignore"):
        return np.where(np.isnan(values), False, values < threshold if comparator == "below" else values > threshold)


def test_store_has_failed_and_passing_trials(frame: pd.DataFrame) -> None:
    # the checks below need both kinds: failed trials (no value) and a metric on both sides of 5 m
    assert frame["failed"].any()
    assert (frame["xte_p95_m"] < 5.0).any() and (frame["xte_p95_m"] > 5.0).any()


def test_sections_in_order_with_their_links(page: str, store: Path) -> None:
    metrics = pd.read_parquet(store / "metrics.parquet")
    sections = study_sections(metrics, load_spec(store / "spec.toml"))
    assert [(a, t) for a, t, _ in sections] == [
        ("drivers", "What drives the results"),
        ("operability", "Operability"),
        ("closest", "Closest to failing"),
    ]
    for anchor, _, body in sections:
        assert body.startswith(f'<section id="{anchor}">') and body.endswith("</section>")
    assert "tr.muted" in STUDY_CSS and "td.reason" in STUDY_CSS  # the classes the sections use


def test_driver_values_are_scipy_spearman(page: str, frame: pd.DataFrame, requirements: list) -> None:
    section = _section(page, "drivers")
    params = [c for c in frame.columns if c.startswith("param.")]
    checked = 0
    for name, req in requirements:
        rows = _rows(section, name, "drivers")
        assert sorted(re.search(r'data-parameter="([^"]*)"', r).group(1) for r in rows) == sorted(params)
        y = frame[req.metric].to_numpy(dtype=float)
        met = _met(y, req.comparator, req.threshold).astype(float)
        strengths = []
        for row in rows:
            p = re.search(r'data-parameter="([^"]*)"', row).group(1)
            x = frame[p].to_numpy(dtype=float)
            vals = _values(row)
            ns = [int(n) for n in re.findall(r"<td class='num'>(\d+)</td>", row)]
            both = ~(np.isnan(x) | np.isnan(y))
            assert ns[0] == int(both.sum())
            assert ns[1] == len(x)  # meeting the requirement: a trial without a value counts as not met
            if both.sum() >= 3 and np.ptp(y[both]) > 0:
                # Spearman (1904), as computed by scipy.stats.spearmanr
                ref = stats.spearmanr(x[both], y[both])
                assert vals[0] == pytest.approx(ref.statistic, rel=1e-12, abs=1e-15)
                assert vals[1] == pytest.approx(ref.pvalue, rel=1e-9)
                strengths.append(abs(vals[0]))
                checked += 1
            if np.ptp(met) > 0:
                ref = stats.spearmanr(x, met)
                assert vals[-2] == pytest.approx(ref.statistic, rel=1e-12, abs=1e-15)
                assert vals[-1] == pytest.approx(ref.pvalue, rel=1e-9)
                checked += 1
            else:  # every trial met it or none did: undefined, shown as a dash
                assert np.isnan(vals[-2:]).all()
                assert row.endswith(
                    "<td class='num' data-value=\"nan\">–</td><td class='num' data-value=\"nan\">–</td>"
                    f"<td class='num'>{len(x)}</td></tr>"
                )
        assert strengths == sorted(strengths, reverse=True)  # ranked by |rho|
    assert checked >= len(params)


def test_driver_bars_are_signed_and_muted_when_not_significant(page: str, frame: pd.DataFrame,
                                                               requirements: list) -> None:  # fmt: skip
    section = _section(page, "drivers")
    name, req = requirements[0]
    y = frame[req.metric].to_numpy(dtype=float)
    bars = re.findall(r'<rect class="hbar"[^>]*data-label="([^"]*)" data-value="([^"]*)" data-muted="(\d)"', section)
    first = bars[: len([c for c in frame.columns if c.startswith("param.")])]  # the metric chart comes first
    muted = set()
    for label, value, flag in first:
        x = frame["param." + label].to_numpy(dtype=float)
        both = ~(np.isnan(x) | np.isnan(y))
        ref = stats.spearmanr(x[both], y[both])
        assert float(value) == pytest.approx(ref.statistic, rel=1e-12)
        assert flag == ("1" if ref.pvalue > 0.05 else "0")
        muted.add(flag)
    assert muted == {"0", "1"}  # both kinds drawn, so the check above can fail either way


def test_operability_cells_are_numpy_counts(page: str, frame: pd.DataFrame, requirements: list) -> None:
    section = _section(page, "operability")
    d = np.mod(frame["param.sea.spreading.mean_dir_deg"].to_numpy(dtype=float), 360.0)
    hs = frame["param.sea.hs_m"].to_numpy(dtype=float)
    # 30-degree direction bins covering the draws; Hs bins at quantiles (2 for fewer than 80 trials)
    d_edges = np.arange(np.floor(d.min() / 30) * 30, (np.floor(d.max() / 30) + 1) * 30 + 1e-9, 30.0)
    hs_edges = np.quantile(hs, [0.0, 0.5, 1.0])
    count, _, _ = np.histogram2d(hs, d, bins=[hs_edges, d_edges])
    figures = re.findall(r'<figure data-requirement="([^"]*)">(.*?)</figure>', section, flags=re.S)
    assert [f[0] for f in figures] == [name for name, _ in requirements]
    seen_few = set()
    for (_name, req), (_, fig) in zip(requirements, figures, strict=True):
        met = _met(frame[req.metric].to_numpy(dtype=float), req.comparator, req.threshold)
        good, _, _ = np.histogram2d(hs, d, bins=[hs_edges, d_edges], weights=met.astype(float))
        cells = re.findall(r'<rect class="cell"[^>]*data-x0="([^"]*)" data-x1="([^"]*)" data-y0="([^"]*)" '
                           r'data-y1="([^"]*)" data-met="(\d+)" data-count="(\d+)" data-few="(\d)"', fig)  # fmt: skip
        assert len(cells) == count.size
        for x0, x1, y0, y1, m, c, few in cells:
            i = int(np.flatnonzero(d_edges == float(x0))[0])
            j = int(np.flatnonzero(hs_edges == float(y0))[0])
            assert (float(x1), float(y1)) == (d_edges[i + 1], hs_edges[j + 1])
            assert (int(c), int(m)) == (int(count[j, i]), int(good[j, i]))
            assert few == ("1" if int(c) < 5 else "0")
            seen_few.add(few)
        for j in range(count.shape[0]):
            for i in range(count.shape[1]):
                if count[j, i] >= 5:
                    assert f">{good[j, i] / count[j, i]:.2f}</text>" in fig
    assert int(count.sum()) == N_TRIALS
    assert seen_few == {"0", "1"}


def _closest_by_pandas(frame: pd.DataFrame, metric: str, comparator: str, threshold: float) -> list[int]:
    df = frame.copy()
    df["margin"] = threshold - df[metric] if comparator == "below" else df[metric] - threshold
    failed = df[df["margin"].isna() & df["failed"]].sort_values("trial")
    no_value = df[df["margin"].isna() & ~df["failed"]].sort_values("trial")
    rest = df[df["margin"].notna()].sort_values(["margin", "trial"])
    return pd.concat([failed, no_value, rest])["trial"].head(5).astype(int).tolist()


def test_closest_rows_are_the_pandas_selection(page: str, frame: pd.DataFrame, requirements: list) -> None:
    section = _section(page, "closest")
    params = [c for c in frame.columns if c.startswith("param.")]
    for name, req in requirements:
        want = _closest_by_pandas(frame, req.metric, req.comparator, req.threshold)
        rows = _rows(section, name, "closest")
        assert [int(re.search(r"data-trial='(\d+)'", r).group(1)) for r in rows] == want
        got = closest_trials(frame, Requirement(name, req.metric, req.comparator, req.threshold, req.probability))
        assert got["trial"].tolist() == want
        for row, k in zip(rows, want, strict=True):
            ref = frame.set_index("trial").loc[k]
            vals = _values(row)
            np.testing.assert_array_equal(vals[2:], ref[params].to_numpy(dtype=float))  # the drawn inputs
            assert f"<td class='reason'>{html.escape(str(ref['failure_reason']))}</td>" in row
            assert f"<td>{ref['ended']}</td>" in row
    first = _rows(section, requirements[0][0], "closest")[0]
    assert "left the corridor" in first  # failed trials come first, with their reason


def _replay(code: str, store: Path, monkeypatch: pytest.MonkeyPatch) -> dict:
    monkeypatch.chdir(store)
    namespace: dict = {}
    exec(compile(code, "replay", "exec"), namespace)  # the lines exactly as the page shows them
    return namespace["out"].columns


def test_replay_recipe_reproduces_the_row(page: str, store: Path, frame: pd.DataFrame, requirements: list,
                                          monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture) -> None:  # fmt: skip
    section = _section(page, "closest")
    name, req = requirements[0]
    m = re.search(r"<pre class='replay' data-trial='(\d+)' data-metric=\"([^\"]*)\">(.*?)</pre>", section, re.S)
    assert m.group(2) == req.metric
    code = html.unescape(m.group(3))
    trials = [int(re.search(r"data-trial='(\d+)'", r).group(1)) for r in _rows(section, name, "closest")]
    # the trial shown (a failed one) and, with the number changed as the note says, one with a value
    finite = next(k for k in trials if math.isfinite(frame.set_index("trial").loc[k, req.metric]))
    for k in (int(m.group(1)), finite):
        cols = _replay(code.replace(f"np.array([{m.group(1)}])", f"np.array([{k}])"), store, monkeypatch)
        printed = capsys.readouterr().out.strip()
        row = frame.set_index("trial").loc[k]
        for col in ("xte_p95_m", "xte_rms_m", "energy_kj", "time_to_complete_s", "param.sea.hs_m"):
            a, b = float(cols[col][0]), float(row[col])
            assert a == b or (math.isnan(a) and math.isnan(b)), col
        assert str(cols["failure_reason"][0]) == str(row["failure_reason"])
        value = float(row[req.metric])
        assert float(printed) == value or (math.isnan(value) and printed == "nan")
    assert math.isfinite(float(frame.set_index("trial").loc[finite, req.metric]))


def test_every_store_text_is_escaped(store: Path, tmp_path: Path) -> None:
    copy = tmp_path / "store"
    shutil.copytree(store, copy)
    verdicts = json.loads((copy / "verdicts.json").read_text(encoding="utf-8"))
    verdicts[0]["name"] = 'track <b>"keeping"</b> & co'
    (copy / "verdicts.json").write_text(json.dumps(verdicts), encoding="utf-8")
    df = pd.read_parquet(copy / "metrics.parquet")
    df.loc[df["failed"], "failure_reason"] = "<script>alert('x')</script> & more"
    df.to_parquet(copy / "metrics.parquet", index=False)
    page = study_page(copy, with_spec=False)  # as when spec.toml does not load: requirements from verdicts.json
    for anchor in ("drivers", "operability", "closest"):
        assert f'<section id="{anchor}">' in page
    assert "<b>" not in page and "<script" not in page
    assert "track &lt;b&gt;&quot;keeping&quot;&lt;/b&gt; &amp; co" in _section(page, "drivers")
    assert "&lt;script&gt;alert(&#x27;x&#x27;)&lt;/script&gt; &amp; more" in _section(page, "closest")


def test_page_is_self_contained_and_svg_well_formed(page: str) -> None:
    assert "<script" not in page.lower()
    for url in re.findall(r"https?://[^\s\"'<>]*", page):
        assert url == "http://www.w3.org/2000/svg"  # the SVG namespace name only, never fetched
    body = "".join(_section(page, a) for a in ("drivers", "operability", "closest"))
    svgs = re.findall(r"<svg.*?</svg>", body, flags=re.S)
    assert len(svgs) >= 4
    for svg in svgs:
        ET.fromstring(svg)  # stdlib XML parser: well-formed


def test_sections_absent_without_their_inputs(tmp_path: Path) -> None:
    base = ["scenario.duration_s=30.0", "campaign.trials=6", "campaign.batch_size=6"]
    fixed = study_page(_store(tmp_path / "fixed", base + FIXED))
    assert '<section id="drivers">' not in fixed and '<section id="operability">' not in fixed
    assert '<section id="closest">' in fixed  # the requirements still have trials to list
    no_dir = study_page(_store(tmp_path / "no_dir", [*base, "sea.spreading.mean_dir_deg=225.0"]))
    assert '<section id="drivers">' in no_dir and '<section id="operability">' not in no_dir
    assert study_sections(pd.DataFrame({"trial": [0, 1]}), None, ()) == []


def test_chart_helpers_refuse_bad_shapes() -> None:
    from wavebench.core.errors import ParameterError

    with pytest.raises(ParameterError, match="values"):
        signed_bar_chart(["a", "b"], [0.1])
    with pytest.raises(ParameterError, match="met"):
        share_matrix_chart([0, 30], [0.5, 1.0], [[3]], [[2]])  # more met than trials
