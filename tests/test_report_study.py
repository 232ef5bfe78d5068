"""The study sections of the campaign report (what drives the results, operability, closest to failing).

The store is written by the real writer from a small real campaign of the
built-in Skerrow Sound spec (60 s, 36 trials, a 14 m corridor so that some
trials fail); the sections are rendered from the store's files as the
campaign report reads them. The checks compare what they show with references
outside the project: scipy.stats.spearmanr for the rank correlations
(Spearman 1904), numpy.histogram2d and direct numpy counts for the
operability cells, the wave encounter angle of Fossen (2021) and the Doppler
shift of linear wave theory for the relative heading, plane geometry for the
route's course, the sRGB and CIE L* formulas for the colour scale, pandas
sorting for the trials closest to failing, a replay of the shown Python
lines for the replay recipe, and the stdlib XML parser for the SVG. The
built-in operability scenario (Mornaskel Roads) runs at one trial per grid
cell through the command line.
"""

from __future__ import annotations

import html
import itertools
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
from wavebench.cli import main as cli_main
from wavebench.core.errors import ParameterError
from wavebench.report.charts import share_matrix_chart, signed_bar_chart
from wavebench.report.study import (
    SHARE_SCALE,
    STUDY_CSS,
    Requirement,
    closest_trials,
    operability,
    operability_polar_chart,
    operability_table,
    relative_heading_deg,
    route_course,
    share_fill,
    study_sections,
)
from wavebench.sea.dispersion import encounter_frequency
from wavebench.spec.io import example_spec_names, example_spec_path, load_spec

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


SECTOR = re.compile(r'<path class="sector"[^>]*data-heading="([^"]*)" data-h0="([^"]*)" data-h1="([^"]*)" '
                    r'data-hs-lo="([^"]*)" data-hs-hi="([^"]*)" data-met="(\d+)" data-count="(\d+)" data-few="(\d)"')
TABLE_CELL = re.compile(r"<td class='cell[^']*' data-heading=\"([^\"]*)\" data-hs-lo=\"([^\"]*)\" "
                        r"data-hs-hi=\"([^\"]*)\" data-met='(\d+)' data-count='(\d+)' data-few='(\d)'")

#: The Skerrow Sound route (skerrow_sound.toml [mission]); its longest leg is the first, 0 -> 1 (tied with 2 -> 3).
SKERROW_ROUTE = [(0.0, 0.0), (200.0, 550.0), (350.0, 500.0), (150.0, -50.0)]


def _course(p: tuple[float, float], q: tuple[float, float]) -> float:
    # plane geometry: the azimuth of a leg in NED, clockwise from north
    return math.degrees(math.atan2(q[1] - p[1], q[0] - p[0])) % 360.0


def _relative_by_vectors(wave_from_deg: np.ndarray, course_deg: np.ndarray) -> np.ndarray:
    """Angle from the craft's course to the direction the waves travel, by vectors in NED (no modular arithmetic)."""
    toward = np.radians(wave_from_deg) + np.pi  # the waves travel away from where they come from
    k = np.stack([np.cos(toward), np.sin(toward)])  # [north, east] of the wave's travel
    u = np.stack([np.cos(np.radians(course_deg)), np.sin(np.radians(course_deg))])
    cross = u[0] * k[1] - u[1] * k[0]  # > 0: the waves travel toward starboard (clockwise from the course)
    return np.degrees(np.arctan2(cross, np.sum(u * k, axis=0))) % 360.0


def test_relative_heading_head_beam_following() -> None:
    # Fossen (2021), Handbook of Marine Craft Hydrodynamics and Motion Control, encounter frequency: the encounter
    # angle beta is 180 deg in head seas, 0 deg in following seas, 90 deg in beam seas (definition from memory, the
    # chapter number not re-checked). A craft heading north in waves coming FROM the north meets them head on.
    assert relative_heading_deg([0.0], 0.0).tolist() == [180.0]  # heading N, waves from N: head seas
    assert relative_heading_deg([180.0], 0.0).tolist() == [0.0]  # heading N, waves from S: following seas
    assert relative_heading_deg([70.0, 250.0], 70.0).tolist() == [180.0, 0.0]
    # beam seas: from the east on a northbound craft is from starboard (270), from the west from port (90)
    assert relative_heading_deg([90.0, 270.0], 0.0).tolist() == [270.0, 90.0]
    assert relative_heading_deg([180.0, 0.0], 90.0).tolist() == [270.0, 90.0]  # heading E: from S is starboard


def test_relative_heading_gives_the_doppler_shift_of_encounter() -> None:
    # Linear wave theory: a point moving with velocity V sees the phase k.x - w t change at w_e = w - k.V (the
    # Doppler shift, k the wave-number vector along the direction of travel). Fossen (2021) writes it
    # w_e = w - k U cos(beta), so cos(beta) must equal k.V / (k U); a flipped from/toward convention flips its sign.
    rng = np.random.default_rng(11)
    wave_from = rng.uniform(0.0, 360.0, 400)
    course = rng.uniform(0.0, 360.0, 400)
    w, g, speed = 0.9, 9.81, 3.0
    k = w**2 / g  # deep-water dispersion w^2 = g k
    toward = np.radians(wave_from) + np.pi
    k_vec = k * np.stack([np.cos(toward), np.sin(toward)])
    v_vec = speed * np.stack([np.cos(np.radians(course)), np.sin(np.radians(course))])
    w_e_doppler = w - np.sum(k_vec * v_vec, axis=0)
    beta = np.radians(relative_heading_deg(wave_from, course))
    np.testing.assert_allclose(w - k * speed * np.cos(beta), w_e_doppler, rtol=0, atol=1e-12)
    # the side as well as the cosine: the angle from the course to the travel direction, clockwise (vectors)
    np.testing.assert_allclose(np.cos(np.radians(relative_heading_deg(wave_from, course)
                                                   - _relative_by_vectors(wave_from, course))), 1.0, atol=1e-12)
    # the same beta as the project's encounter frequency (consistency, not an outside check)
    np.testing.assert_allclose(encounter_frequency(w, k, speed, beta), w_e_doppler, rtol=0, atol=1e-12)


def test_route_course_is_the_longest_leg_and_says_how_much_runs_on_it() -> None:
    legs = [math.dist(p, q) for p, q in zip(SKERROW_ROUTE[:-1], SKERROW_ROUTE[1:], strict=True)]
    rc = route_course(SKERROW_ROUTE)
    # plane geometry (math.atan2, math.dist): leg 1 runs at atan2(550, 200) = 70.02 deg; leg 3 is its reciprocal
    assert rc.course_deg == round(_course(SKERROW_ROUTE[0], SKERROW_ROUTE[1])) == 70.0
    assert (rc.leg, rc.n_legs) == (1, 3)
    assert rc.share == pytest.approx(legs[0] / sum(legs), rel=1e-12)
    assert rc.reciprocal_share == pytest.approx(legs[2] / sum(legs), rel=1e-12)
    assert not rc.dominant and "reciprocal" in rc.text() and "longest leg" in rc.text()
    one_way = route_course([(0.0, 0.0), (500.0, 0.0), (520.0, 10.0)])  # nearly all northbound
    assert one_way.course_deg == 0.0 and one_way.dominant and "route's course 000°" in one_way.text()
    assert "reciprocal" not in one_way.text()
    lines = [(0.0, 0.0), (100.0, 0.0), (100.0, 10.0), (0.0, 10.0), (0.0, 20.0), (100.0, 20.0)]  # survey lines N, S, N
    survey = route_course(lines)
    assert survey.dominant and survey.share == pytest.approx(200.0 / 320.0, rel=1e-12)
    assert survey.reciprocal_share == pytest.approx(100.0 / 320.0, rel=1e-12) and "reciprocal" in survey.text()
    with pytest.raises(ParameterError, match="waypoints_ne_m"):
        route_course([(0.0, 0.0), (0.0, 0.0)])


def test_operability_cells_are_numpy_counts(page: str, frame: pd.DataFrame, requirements: list) -> None:
    """Drawn (not grid) directions: 30-degree sectors of the relative heading x Hs quantile bins."""
    section = _section(page, "operability")
    course = round(_course(SKERROW_ROUTE[0], SKERROW_ROUTE[1]))
    rel = _relative_by_vectors(frame["param.sea.spreading.mean_dir_deg"].to_numpy(dtype=float), np.full(len(frame), course))
    hs = frame["param.sea.hs_m"].to_numpy(dtype=float)
    # sectors centred on multiples of 30 deg (head seas, 180, a centre): shift by half a sector, histogram over 0-360
    shifted = np.mod(rel + 15.0, 360.0)
    d_edges = np.arange(0.0, 361.0, 30.0)
    hs_edges = np.quantile(hs, [0.0, 0.5, 1.0])  # 2 Hs bins for fewer than 80 trials
    count, _, _ = np.histogram2d(hs, shifted, bins=[hs_edges, d_edges])
    figures = re.findall(r'<figure data-requirement="([^"]*)">(.*?)</figure>', section, flags=re.S)
    assert [f[0] for f in figures] == [name for name, _ in requirements]
    seen_few = set()
    for (name, req), (_, fig) in zip(requirements, figures, strict=True):
        met = _met(frame[req.metric].to_numpy(dtype=float), req.comparator, req.threshold)
        good, _, _ = np.histogram2d(hs, shifted, bins=[hs_edges, d_edges], weights=met.astype(float))
        cells = SECTOR.findall(fig)
        assert len(cells) == count.size  # every sector of the circle x every Hs bin
        for heading, h0, h1, lo, hi, m, c, few in cells:
            i = int(round(float(heading) / 30.0))
            j = int(np.flatnonzero(hs_edges == float(lo))[0])
            assert (float(h0), float(h1), float(hi)) == (30.0 * i - 15.0, 30.0 * i + 15.0, hs_edges[j + 1])
            assert (int(c), int(m)) == (int(count[j, i]), int(good[j, i]))
            assert few == ("1" if int(c) < 5 else "0")
            seen_few.add(few)
        start = section.index(f"<table class='operability' data-requirement=\"{name}\">")
        table = section[start : section.index("</table>", start)]
        shown = TABLE_CELL.findall(table)
        occupied = np.flatnonzero(count.sum(axis=0))  # the table leaves out headings no trial ran
        assert len(shown) == count.shape[0] * occupied.size
        for heading, lo, _hi, m, c, few in shown:
            i, j = int(round(float(heading) / 30.0)), int(np.flatnonzero(hs_edges == float(lo))[0])
            assert (int(c), int(m), few) == (int(count[j, i]), int(good[j, i]), "1" if count[j, i] < 5 else "0")
            if count[j, i] >= 5:
                assert f"<b>{good[j, i] / count[j, i]:.2f}</b>" in table
    assert int(count.sum()) == N_TRIALS
    assert seen_few == {"0", "1"}
    assert html.escape("the course of the route's longest leg, leg 1 of 3 (070°)") in section
    assert "180° head seas" in section


def test_grid_cells_are_a_direct_count_on_synthetic_metrics() -> None:
    rng = np.random.default_rng(5)
    dirs = np.arange(10.0, 360.0, 30.0)  # 12 directions, coming from
    hs_levels = np.array([0.5, 1.0, 1.5, 2.0])
    n = 300
    d = rng.choice(dirs, n)
    h = rng.choice(hs_levels, n)
    met = rng.random(n) < 0.7
    d[:3] = [np.nan, 25.0, 40.0]  # no value; off the grid's levels
    h[2] = 1.25  # off the grid's levels
    op = operability(d, h, met, course_deg=70.0, direction_levels_deg=dirs, hs_levels_m=hs_levels)
    assert op.heading_grid and op.hs_grid and op.n_left_out == 3
    # one sector per direction level, centred on its relative heading: waves from 70 deg are head seas (180)
    want_headings = np.sort(np.mod(dirs + 180.0 - 70.0, 360.0))
    np.testing.assert_array_equal(op.heading_deg, want_headings)
    assert op.half_width_deg == 15.0  # twelve 30-degree sectors tile the circle
    np.testing.assert_array_equal(op.hs_lo_m, hs_levels)
    for i, beta in enumerate(want_headings):
        level = (beta - 180.0 + 70.0) % 360.0
        for j, hl in enumerate(hs_levels):
            cell = (d == level) & (h == hl)  # numpy: a direct count of the trials on this combination
            assert op.count[j, i] == np.count_nonzero(cell)
            assert op.met[j, i] == np.count_nonzero(cell & met)
    assert int(op.count.sum()) == n - 3
    np.testing.assert_array_equal(np.isnan(op.share), op.count == 0)


def test_few_and_empty_cells_are_marked() -> None:
    # 2 directions x 2 Hs levels; the cells hold 7, 3, 0 and 5 trials
    d = [0.0] * 7 + [0.0] * 3 + [180.0] * 5
    h = [1.0] * 7 + [2.0] * 3 + [2.0] * 5
    met = [True] * 6 + [False] + [True] * 3 + [False] * 5
    op = operability(d, h, met, course_deg=0.0, direction_levels_deg=[0.0, 180.0], hs_levels_m=[1.0, 2.0])
    assert op.count.tolist() == [[0, 7], [5, 3]]  # headings 0 (waves from S) and 180 (from N), Hs rows 1 and 2
    svg = operability_polar_chart(op, min_count=5, required=0.9)
    cells = {(float(c[0]), float(c[3])): c for c in SECTOR.findall(svg)}
    assert {k: (v[6], v[7]) for k, v in cells.items()} == {
        (0.0, 1.0): ("0", "1"), (180.0, 1.0): ("7", "0"), (0.0, 2.0): ("5", "0"), (180.0, 2.0): ("3", "1")}
    paths = re.findall(r'<path class="sector"[^>]*fill="([^"]*)"[^>]*data-count="(\d+)"', svg)
    fills = {c: f for f, c in paths}
    assert fills["3"].startswith("url(#") and fills["0"] == "#ffffff"  # hatched; empty left white
    assert fills["7"] == share_fill(6 / 7) and fills["5"] == share_fill(0.0)
    assert "too few trials" in svg and "no trials" in svg and 'class="required"' in svg
    table = operability_table(op, min_count=5)
    tds = TABLE_CELL.findall(table)
    assert sorted((t[4], t[5]) for t in tds) == [("0", "1"), ("3", "1"), ("5", "0"), ("7", "0")]
    assert "3/3, too few" in table and "no trials" in table and "<b>0.86</b>" in table
    ET.fromstring(svg)  # stdlib XML parser: well-formed


def _srgb_lstar(color: str) -> float:
    # IEC 61966-2-1 (sRGB) transfer function and luminance weights, then CIE 1976 L* of the relative luminance Y
    c = np.array([int(color[i : i + 2], 16) / 255.0 for i in (1, 3, 5)])
    lin = np.where(c <= 0.04045, c / 12.92, ((c + 0.055) / 1.055) ** 2.4)
    y = float(lin @ [0.2126, 0.7152, 0.0722])
    return 116.0 * y ** (1.0 / 3.0) - 16.0 if y > (6.0 / 29.0) ** 3 else y * (29.0 / 3.0) ** 3


def test_share_scale_is_sequential_in_lightness() -> None:
    # Crameri, Shephard & Heron (2020), Nature Communications 11, 5444: a sequential scale should change
    # monotonically in lightness, so its order reads without hue (colour-vision deficiency, grey print).
    lstar = np.array([_srgb_lstar(share_fill(s)) for s in np.linspace(0.0, 1.0, 101)])
    assert np.all(np.diff(lstar) < 0)
    assert lstar[0] - lstar[-1] > 60.0  # a wide range, pale to dark
    assert [_srgb_lstar(c) for c in SHARE_SCALE] == sorted((_srgb_lstar(c) for c in SHARE_SCALE), reverse=True)


def test_operability_scenario_runs_small_and_reports_one_cell_per_combination(tmp_path: Path) -> None:
    assert "mornaskel_roads" in example_spec_names()
    spec = load_spec(example_spec_path("mornaskel_roads"))
    dirs, hs_levels = spec.sea.spreading.mean_dir_deg.levels, spec.sea.hs_m.levels
    n_cells = len(dirs) * len(hs_levels)
    assert spec.campaign.trials % n_cells == 0
    out = tmp_path / "store"
    # as in CI: one trial per grid combination, a short run, through the command line
    assert cli_main(["run", "mornaskel_roads", "--out", str(out), "--trials", str(n_cells), "--quiet", "--no-record",
                     "--set", "scenario.duration_s=30.0", "--report"]) == 0  # fmt: skip
    report = (out / "report.html").read_text(encoding="utf-8")
    section = _section(report, "operability")
    metrics = pd.read_parquet(out / "metrics.parquet")
    course = round(_course(SKERROW_ROUTE[0], SKERROW_ROUTE[1]))
    want = np.sort(_relative_by_vectors(np.asarray(dirs), np.full(len(dirs), course)))
    np.testing.assert_allclose(want, np.arange(0.0, 360.0, 30.0), atol=1e-9)  # the grid is aligned on the course
    figures = re.findall(r'<figure data-requirement="([^"]*)">(.*?)</figure>', section, flags=re.S)
    assert len(figures) == len(spec.requirements)
    for name, fig in figures:
        cells = SECTOR.findall(fig)
        assert len(cells) == n_cells
        got = sorted((float(c[0]), float(c[3])) for c in cells)
        combos = sorted(itertools.product(want.tolist(), [float(x) for x in hs_levels]))
        assert np.array(got) == pytest.approx(np.array(combos), abs=1e-9)
        assert all(c[6] == "1" and c[7] == "1" for c in cells)  # one trial each: all marked too few
        req = dict(spec.requirements)[name]
        met = _met(metrics[req.metric].to_numpy(dtype=float), req.comparator, req.threshold)
        assert sum(int(c[5]) for c in cells) == int(met.sum())
        start = section.index(f"<table class='operability' data-requirement=\"{name}\">")
        assert len(TABLE_CELL.findall(section[start : section.index("</table>", start)])) == n_cells
    assert "one sector per level of the grid on the wave direction (12 levels)" in section
    assert "one ring per level of the grid on Hs (4 levels)" in section


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
    for anchor in ("drivers", "closest"):
        assert f'<section id="{anchor}">' in page
    assert '<section id="operability">' not in page  # without the spec's route the course is unknown
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
    ids = re.findall(r'\sid="([^"]*)"', body)
    assert len(ids) == len(set(ids))  # HTML: an id is unique in its page (the hatch patterns of the charts)
    refs = set(re.findall(r"url\(#([^)]*)\)", body))
    assert refs and refs <= set(ids)  # every pattern a chart fills with is defined on the page


def test_sections_absent_without_their_inputs(tmp_path: Path) -> None:
    base = ["scenario.duration_s=30.0", "campaign.trials=6", "campaign.batch_size=6"]
    fixed = study_page(_store(tmp_path / "fixed", base + FIXED))
    assert '<section id="drivers">' not in fixed and '<section id="operability">' not in fixed
    assert '<section id="closest">' in fixed  # the requirements still have trials to list
    no_dir = study_page(_store(tmp_path / "no_dir", [*base, "sea.spreading.mean_dir_deg=225.0"]))
    assert '<section id="drivers">' in no_dir and '<section id="operability">' not in no_dir
    assert study_sections(pd.DataFrame({"trial": [0, 1]}), None, ()) == []


def test_fixed_hs_gives_one_ring(tmp_path: Path) -> None:
    store = _store(tmp_path / "fixed_hs", ["scenario.duration_s=30.0", "campaign.trials=12", "sea.hs_m=1.2"])
    frame = pd.read_parquet(store / "metrics.parquet")
    assert "param.sea.hs_m" not in frame  # Hs not drawn
    section = _section(study_page(store), "operability")
    cells = SECTOR.findall(section)
    assert {(c[3], c[4]) for c in cells} == {("1.2", "1.2")}
    assert sum(int(c[6]) for c in cells) == 2 * 12  # every trial in the one ring, in each of the 2 requirements' charts
    assert "one ring, the spec&#x27;s fixed Hs of 1.2 m" in section


def test_chart_helpers_refuse_bad_shapes() -> None:
    with pytest.raises(ParameterError, match="bin_deg"):
        operability([0.0, 10.0], [1.0, 2.0], [True, False], course_deg=0.0, bin_deg=35.0)
    with pytest.raises(ParameterError, match="values"):
        signed_bar_chart(["a", "b"], [0.1])
    with pytest.raises(ParameterError, match="met"):
        share_matrix_chart([0, 30], [0.5, 1.0], [[3]], [[2]])  # more met than trials
