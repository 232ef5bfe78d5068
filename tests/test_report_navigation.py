"""Navigation sections of the campaign HTML report.

Stores are written with the real store writer. The truth-navigation store
comes from a tiny real campaign; the navigation stores carry a time series
built here with numpy (invented numbers, only to have something to
render: never check values). NEES samples are drawn from a chi-square(5)
distribution to emulate a consistent filter, 3 x chi-square(5) for an
optimistic one and chi-square(5) / 3 for a pessimistic one. The checks
compare the page with references outside the project: scipy.stats.chi2 for
the chi-square regions (Bar-Shalom, Li and Kirubarajan 2001, ch. 5.4),
numpy.nanpercentile / nanmean / nanmedian for the bands and tables, the
stdlib HTML and XML parsers for well-formedness.
"""

from __future__ import annotations

import re
import xml.etree.ElementTree as ET
from html.parser import HTMLParser
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
import xarray as xr
from scipy import stats

from wavebench.campaign import run_campaign
from wavebench.campaign.executor import CampaignResult
from wavebench.campaign.series import open_timeseries
from wavebench.campaign.store import write_store
from wavebench.report.campaign import campaign_report_html
from wavebench.report.navigation import consistency_over_time, gnss_outages
from wavebench.spec import example_spec_path, load_spec
from wavebench.trial.recorder import NEES_DOF, NIS_DOF, SIGNALS

SCENARIO = "Skerrow <script>alert(1)</script> & nav leg"
N_TRIALS = 40
T_END_S = 300.0
GNSS_WINDOWS = [(60.0, 90.0), (200.0, 260.5)]  # 260.5: between two samples; the last one inside is 260
COMPASS_WINDOW = (120.0, 140.0)  # not a GNSS window: never shaded
ENDED_AT_S = {5: 150.0, 11: 249.0}  # trials that stop early (NaN after)
NAV_IDS = ("nav-error", "nav-consistency", "nav-tracks", "nav-availability")
VOID = {"area", "base", "br", "col", "embed", "hr", "img", "input", "link", "meta", "source", "track", "wbr"}


def _windows_toml(windows: list[tuple[float, float]]) -> str:
    return "[" + ", ".join(f"[{a}, {b}]" for a, b in windows) + "]"


def spec_text(duration_s: float, gnss_windows: list[tuple[float, float]]) -> str:
    """Skerrow Sound with truth navigation and a GNSS and a compass declared (the section keys off the values)."""
    base = example_spec_path("skerrow_sound").read_text(encoding="utf-8")
    base = base.replace('name = "Skerrow Sound survey leg"', f'name = "{SCENARIO}"')
    base = base.replace("duration_s = 600.0", f"duration_s = {duration_s}")
    assert SCENARIO in base and f"duration_s = {duration_s}" in base
    return base + (
        f'\n[sensors.gps]\nkind = "gnss"\nrate_hz = 1.0\noutages_s = {_windows_toml(gnss_windows)}\n'
        f'\n[sensors.mag]\nkind = "compass"\nrate_hz = 10.0\noutages_s = {_windows_toml([COMPASS_WINDOW])}\n'
    )


# ---------------------------------------------------------------------------
# stores
# ---------------------------------------------------------------------------


@pytest.fixture(scope="module")
def truth_store(tmp_path_factory: pytest.TempPathFactory) -> Path:
    spec = load_spec(spec_text(30.0, [(10.0, 20.0)]))
    result = run_campaign(spec, trials=3, batch_size=3, progress=False)
    return write_store(result, tmp_path_factory.mktemp("truth") / "store")


def _nav_dataset(nees_scale: float, seed: int) -> tuple[xr.Dataset, pd.DataFrame]:
    """A navigation time series and its metrics, invented (for rendering only)."""
    rng = np.random.default_rng(seed)
    t = np.arange(0.0, T_END_S + 0.5, 1.0)
    n, k = N_TRIALS, t.size
    err = rng.rayleigh(1.0, (n, k))
    rate = rng.uniform(0.05, 0.25, n)
    fix = (rng.random((n, k)) > 0.05).astype(float)  # random dropouts
    for a, b in GNSS_WINDOWS:
        inside = (t >= a) & (t <= b)
        err[:, inside] += rate[:, None] * (t[inside] - a)[None, :]
        fix[:, inside] = 0.0
    heading = rng.uniform(0.0, 2.0 * np.pi, n)
    north = 1.5 * t[None, :] * np.cos(heading)[:, None] + rng.normal(0.0, 0.2, (n, k))
    east = 1.5 * t[None, :] * np.sin(heading)[:, None] + rng.normal(0.0, 0.2, (n, k))
    bearing = rng.uniform(0.0, 2.0 * np.pi, (n, k))
    nav_north, nav_east = north + err * np.cos(bearing), east + err * np.sin(bearing)
    # a consistent filter's NEES is chi-square with 5 dof, its NIS with 2 (Bar-Shalom et al. 2001, ch. 5.4)
    nees = nees_scale * rng.chisquare(NEES_DOF, (n, k))
    nis = nees_scale * rng.chisquare(NIS_DOF, (n, k))
    nis[:, 0] = np.nan  # no fix yet
    xte = rng.normal(0.0, 1.0, (n, k))
    arrays = {"north_m": north, "east_m": east, "xte_m": xte, "nav_north_m": nav_north, "nav_east_m": nav_east,
              "nav_err_m": err, "nees": nees, "nis": nis, "fix_ok": fix}  # fmt: skip
    for i, end in ENDED_AT_S.items():
        for a in arrays.values():
            a[i, t > end] = np.nan
    ds = xr.Dataset(
        {
            name: xr.Variable(("trial", "time"), a.astype(np.float32), attrs={"units": SIGNALS[name][0]})
            for name, a in arrays.items()
        },
        coords={"trial": ("trial", np.arange(n, dtype=np.int64)), "time": ("time", t, {"units": "s"})},
        attrs={"decimation_s": 1.0},
    )
    e = ds["nav_err_m"].values.astype(float)
    ended = np.array(["failed" if i in ENDED_AT_S else "completed" for i in range(n)])
    metrics = pd.DataFrame(
        {
            "trial": np.arange(n, dtype=np.int64),
            "ended": ended,
            "completed": ended == "completed",
            "failed": ended == "failed",
            "failure_reason": ["non-finite state" if i in ENDED_AT_S else "" for i in range(n)],
            "xte_p95_m": np.nanpercentile(np.abs(xte), 95.0, axis=1),
            "nav_err_rms_m": np.sqrt(np.nanmean(e**2, axis=1)),
            "nav_err_p95_m": np.nanpercentile(e, 95.0, axis=1),
            "nav_err_max_m": np.nanmax(e, axis=1),
            "nav_err_outage_end_m": np.nanmax(e[:, [60 + 30, 260]], axis=1),
            "nees_mean": np.nanmean(ds["nees"].values.astype(float), axis=1),
            "nis_mean": np.nanmean(ds["nis"].values.astype(float), axis=1),
        }
    )
    return ds, metrics


def _nav_store(root: Path, nees_scale: float, seed: int) -> Path:
    spec = load_spec(spec_text(T_END_S, GNSS_WINDOWS))
    ds, metrics = _nav_dataset(nees_scale, seed)
    result = CampaignResult(spec=spec, metrics=metrics, timeseries=ds, verdicts=[], wall_time_s=1.0,
                            batch_size=N_TRIALS)  # fmt: skip
    return write_store(result, root)


@pytest.fixture(scope="module")
def nav_store(tmp_path_factory: pytest.TempPathFactory) -> Path:
    return _nav_store(tmp_path_factory.mktemp("nav") / "store", 1.0, 7)


@pytest.fixture(scope="module")
def nav_page(nav_store: Path) -> str:
    return campaign_report_html(nav_store)


def _read(store: Path, name: str) -> tuple[np.ndarray, np.ndarray]:
    with open_timeseries(store) as ds:
        return ds["time"].values.astype(float), ds[name].transpose("trial", "time").values.astype(float)


# ---------------------------------------------------------------------------
# page helpers (stdlib parsers)
# ---------------------------------------------------------------------------


class _TagChecker(HTMLParser):
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


def _check_page(page: str) -> None:
    p = _TagChecker()
    p.feed(page)
    p.close()
    assert p.errors == [] and p.stack == [], (p.errors[:5], p.stack)
    assert "script" not in p.tags and "link" not in p.tags and "iframe" not in p.tags
    for tag, k, v in p.attrs:
        if k in ("src", "href", "xlink:href", "srcset", "action", "poster", "data"):
            assert not re.match(r"\s*(https?:)?//", v, flags=re.I), (tag, k, v)
    assert not re.search(r"""(src|href)\s*=\s*["']?\s*(https?:)?//""", page, flags=re.I)
    assert "@import" not in page and not re.search(r"url\(\s*['\"]?\s*(https?:)?//", page)
    # the scenario name from the store is escaped
    assert "<script" not in page.lower()
    assert "Skerrow &lt;script&gt;alert(1)&lt;/script&gt; &amp; nav leg" in page
    assert "no substitute for sea trials" in page  # the caution stays


def _section(page: str, anchor: str) -> str:
    m = re.search(rf'<section id="{anchor}">.*?</section>', page, flags=re.S)
    assert m, anchor
    return m.group(0)


def _svgs(html_text: str) -> list[ET.Element]:
    return [ET.fromstring(s) for s in re.findall(r"<svg\b.*?</svg>", html_text, flags=re.S)]


def _title(svg: ET.Element) -> str:
    texts = [el for el in svg.iter() if el.tag.endswith("text") and el.get("font-weight") == "bold"]
    return texts[0].text if texts else ""


def _svg(page: str, title: str) -> ET.Element:
    return next(s for s in _svgs(page) if _title(s) == title)


def _inverse(svg: ET.Element) -> tuple:
    area = next(el for el in svg.iter() if el.get("class") == "plot-area")
    left, top = float(area.get("x")), float(area.get("y"))
    pw, ph = float(area.get("width")), float(area.get("height"))
    x0, x1 = map(float, svg.get("data-xlim").split())
    y0, y1 = map(float, svg.get("data-ylim").split())
    return (
        (lambda X: x0 + (X - left) / pw * (x1 - x0)),
        (lambda Y: y0 + (top + ph - Y) / ph * (y1 - y0)),
        (x1 - x0) / pw,
        (y1 - y0) / ph,
    )


def _points(d: str) -> list[np.ndarray]:
    """Pixel points of each sub-path of an SVG path."""
    return [np.array([[float(a) for a in p.split(",")] for p in re.findall(r"[-\d.]+,[-\d.]+", seg)])
            for seg in re.split(r"(?=M)", d) if seg.strip()]  # fmt: skip


def _band(svg: ET.Element, label: str) -> ET.Element:
    return next(el for el in svg.iter() if el.get("class") == "band" and el.get("data-label") == label)


def _line(svg: ET.Element, label: str) -> ET.Element:
    return next(el for el in svg.iter() if el.get("class") == "line" and el.get("data-label") == label)


def _values(row: str) -> list[float]:
    return [float(v) for v in re.findall(r'data-value="([^"]*)"', row)]


# ---------------------------------------------------------------------------
# tests
# ---------------------------------------------------------------------------


def test_truth_navigation_report_has_no_navigation_sections(truth_store: Path) -> None:
    _, err = _read(truth_store, "nav_err_m")
    assert np.isnan(err).all()  # truth navigation records NaN (nav contract)
    page = campaign_report_html(truth_store)
    _check_page(page)
    for anchor in NAV_IDS:
        assert f'id="{anchor}"' not in page and f'href="#{anchor}"' not in page
    titles = [_title(s) for s in _svgs(page)]
    assert not any(t.startswith(("nav_", "nees", "nis", "Navigation", "Average N", "GNSS")) for t in titles), titles
    assert "nav_err" not in _section(page, "metrics")  # not even listed as "not drawn"
    assert "Cross-track error across trials" in titles  # the rest of the report is unchanged


def test_navigation_sections_appear_in_order(nav_page: str) -> None:
    _check_page(nav_page)
    starts = [nav_page.index(f'<section id="{a}">') for a in ("tracks", *NAV_IDS, "parameters")]
    assert starts == sorted(starts)
    for anchor in NAV_IDS:
        assert f'href="#{anchor}"' in nav_page
    titles = [_title(s) for s in _svgs(nav_page)]
    for name in ("nav_err_rms_m", "nav_err_p95_m", "nav_err_max_m", "nav_err_outage_end_m", "nees_mean", "nis_mean"):
        assert name in titles  # histograms of the navigation metrics
    for title in ("Navigation error across trials", "Average NEES across trials", "Average NIS across trials",
                  f"Navigation solution of {10} trials", "GNSS availability across trials"):  # fmt: skip
        assert title in titles


def test_error_bands_are_nan_percentiles(nav_store: Path, nav_page: str) -> None:
    t, err = _read(nav_store, "nav_err_m")
    ref = np.nanpercentile(err, [5.0, 50.0, 95.0], axis=0)  # reference: numpy.nanpercentile
    svg = _svg(nav_page, "Navigation error across trials")
    ix, iy, _, per_py = _inverse(svg)
    tol = 0.01 * per_py  # coordinates are written to 0.01 px
    (pts,) = _points(_band(svg, "5–95 %").get("d"))
    k = len(pts) // 2
    np.testing.assert_allclose(ix(pts[:k, 0]), t, atol=10 * tol)
    np.testing.assert_allclose(iy(pts[:k, 1]), ref[0], atol=tol)
    np.testing.assert_allclose(iy(pts[k:, 1][::-1]), ref[2], atol=tol)
    (med,) = _points(_line(svg, "median").get("d"))
    np.testing.assert_allclose(iy(med[:, 1]), ref[1], atol=tol)
    cap = _section(nav_page, "nav-error")
    assert f"across the {N_TRIALS} trials" in cap and "5th to 95th percentile" in cap
    assert f"At the end {N_TRIALS - len(ENDED_AT_S)} of {N_TRIALS} trials" in cap


def test_outage_windows_are_shaded(nav_store: Path, nav_page: str) -> None:
    assert [(a, b) for _, a, b in gnss_outages(load_spec(nav_store / "spec.toml"))] == GNSS_WINDOWS
    for title in ("Navigation error across trials", "GNSS availability across trials"):
        svg = _svg(nav_page, title)
        ix, _, per_px, _ = _inverse(svg)
        rects = [el for el in svg.iter() if el.get("class") == "shade"]
        assert len(rects) == len(GNSS_WINDOWS)  # the compass window is not a GNSS outage
        for r, (a, b) in zip(rects, GNSS_WINDOWS, strict=True):
            x = float(r.get("x"))
            assert ix(x) == pytest.approx(a, abs=0.01 * per_px)
            assert ix(x + float(r.get("width"))) == pytest.approx(b, abs=0.02 * per_px)
            assert (float(r.get("data-x0")), float(r.get("data-x1"))) == (a, b)


def test_outage_end_table(nav_store: Path, nav_page: str) -> None:
    t, err = _read(nav_store, "nav_err_m")
    rows = re.findall(r"<tr class='outage-row'>.*?</tr>", _section(nav_page, "nav-error"), flags=re.S)
    assert len(rows) == len(GNSS_WINDOWS)
    for row, (a, b) in zip(rows, GNSS_WINDOWS, strict=True):
        # the sample nearest the start, and the last one before the end (inside the window, before the first fix)
        i0, i1 = int(np.argmin(np.abs(t - a))), int(np.flatnonzero(t < b)[-1])
        med, p95 = np.nanpercentile(err[:, i1], [50.0, 95.0])  # reference: numpy.nanpercentile
        growth = np.nanmedian((err[:, i1] - err[:, i0]) / (t[i1] - t[i0]))
        np.testing.assert_allclose(_values(row), [med, p95, growth], rtol=1e-12)
        assert f"<td class='num'>{np.count_nonzero(np.isfinite(err[:, i1]))}</td>" in row
    assert ">260<" in rows[1]  # the window ends at 260.5 s: the last sample inside it is at 260 s


def test_navigation_metrics_summary(nav_store: Path, nav_page: str) -> None:
    m = pd.read_parquet(nav_store / "metrics.parquet")
    rows = re.findall(r"<tr class='nav-metric-row'>.*?</tr>", _section(nav_page, "nav-error"), flags=re.S)
    cols = ["nav_err_rms_m", "nav_err_p95_m", "nav_err_max_m", "nav_err_outage_end_m"]
    assert [re.search(r"<code>(.*?)</code>", r).group(1) for r in rows] == cols
    for row, col in zip(rows, cols, strict=True):
        ref = np.nanpercentile(m[col].to_numpy(dtype=float), [50.0, 95.0])  # reference: numpy.nanpercentile
        np.testing.assert_allclose(_values(row), ref, rtol=1e-12)


def _consistency_rows(page: str) -> dict[str, str]:
    rows = re.findall(r"<tr class='consistency-row'.*?</tr>", _section(page, "nav-consistency"), flags=re.S)
    return {re.search(r"data-signal='(\w+)'", r).group(1): r for r in rows}


def test_anees_bounds_are_chi_square_quantiles(nav_store: Path, nav_page: str) -> None:
    rows = _consistency_rows(nav_page)
    assert set(rows) == {"nees", "nis"}
    for name, dof in (("nees", NEES_DOF), ("nis", NIS_DOF)):
        t, v = _read(nav_store, name)
        n_t = np.count_nonzero(np.isfinite(v), axis=0)
        n_all, nk = int(n_t.max()), int(np.count_nonzero(np.isfinite(v)))
        # Bar-Shalom, Li and Kirubarajan (2001), ch. 5.4: N * ANEES ~ chi2(N n), two-sided 95 % region
        chi = stats.chi2
        lo, hi = chi.ppf(0.025, n_all * dof) / n_all, chi.ppf(0.975, n_all * dof) / n_all
        lo_k, hi_k = chi.ppf(0.025, nk * dof) / nk, chi.ppf(0.975, nk * dof) / nk
        lo_t, hi_t = chi.ppf(0.025, n_t * dof) / n_t, chi.ppf(0.975, n_t * dof) / n_t
        ok = n_t > 0
        with np.errstate(invalid="ignore"):
            avg_t = np.where(ok, np.nansum(v, axis=0) / np.maximum(n_t, 1), np.nan)
        inside = float(np.mean((avg_t[ok] >= lo_t[ok]) & (avg_t[ok] <= hi_t[ok])))
        vals = _values(rows[name])
        np.testing.assert_allclose(vals, [lo, hi, 100.0 * inside, np.nanmean(v), lo_k, hi_k], rtol=1e-12)
        assert f"<td class='num'>{n_all}</td>" in rows[name] and f"<td class='num'>{nk}</td>" in rows[name]

        # the chart draws ANEES(t) and the region for the N runs at each time (N drops as trials end)
        svg = _svg(nav_page, f"Average {name.upper()} across trials")
        ix, iy, _, per_py = _inverse(svg)
        tol = 0.01 * per_py
        segs = _points(_band(svg, "95 % region for N runs").get("d"))
        pts = np.concatenate([s[: len(s) // 2] for s in segs])  # low edges of each gap-free run
        tops = np.concatenate([s[len(s) // 2 :][::-1] for s in segs])
        np.testing.assert_allclose(iy(pts[:, 1]), lo_t[ok], atol=tol)
        np.testing.assert_allclose(iy(tops[:, 1]), hi_t[ok], atol=tol)
        assert len(np.unique(n_t[ok])) == 3  # 40 runs, then 39, then 38: three different regions drawn
        (line,) = _points(_line(svg, f"{'ANEES' if name == 'nees' else 'ANIS'} (mean over trials)").get("d"))
        np.testing.assert_allclose(iy(line[:, 1]), avg_t[ok], atol=tol)


@pytest.mark.parametrize(("scale", "verdict"), [(1.0, "consistent"), (3.0, "optimistic"), (1.0 / 3.0, "pessimistic")])
def test_consistency_verdict(tmp_path: Path, scale: float, verdict: str) -> None:
    store = _nav_store(tmp_path / "store", scale, 7)
    page = campaign_report_html(store)
    _check_page(page)
    rows = _consistency_rows(page)
    for name, dof in (("nees", NEES_DOF), ("nis", NIS_DOF)):
        _, v = _read(store, name)
        nk = int(np.count_nonzero(np.isfinite(v)))
        # Bar-Shalom et al. (2001) ch. 5.4: the pooled average against chi2(N K n)/(N K), independent samples here
        lo, hi = stats.chi2.ppf([0.025, 0.975], nk * dof) / nk
        mean = np.nanmean(v)
        expect = "optimistic" if mean > hi else "pessimistic" if mean < lo else "consistent"
        assert expect == verdict  # the drawn samples behave as their distribution says (seed 7)
        assert f"data-verdict='{verdict}'" in rows[name]
    meaning = {"consistent": "", "optimistic": "error larger than the filter believes",
               "pessimistic": "error smaller than the filter believes"}[verdict]  # fmt: skip
    assert f">{verdict}</span>" in rows["nees"] and meaning in rows["nees"]
    assert "optimistic (too narrow)" in page  # the caution on the time-averaged region


def test_consistency_over_time_without_values() -> None:
    c = consistency_over_time(np.full((3, 4), np.nan), NEES_DOF)
    assert c.verdict == "no data" and c.n_samples == 0 and (c.n_runs == 0).all() and np.isnan(c.low).all()


def test_navigation_solution_tracks(nav_store: Path, nav_page: str) -> None:
    svg = _svg(_section(nav_page, "nav-tracks"), "Navigation solution of 10 trials")
    paths = [el for el in svg.iter() if el.tag.endswith("path")]
    assert len(paths) == 20
    true, est = paths[0::2], paths[1::2]
    assert all(p.get("stroke-dasharray") is None for p in true)
    assert all(p.get("stroke-dasharray") for p in est)
    assert [p.get("stroke") for p in true] == [p.get("stroke") for p in est]
    assert len({p.get("stroke") for p in true}) == 10
    assert "trials 0, 1, 2, 3, 4, 5, 6, 7, 8, 9 (10 of 40)" in _section(nav_page, "nav-tracks")


def test_gnss_availability(nav_store: Path, nav_page: str) -> None:
    t, fix = _read(nav_store, "fix_ok")
    running = np.count_nonzero(np.isfinite(fix), axis=0)
    share = np.count_nonzero(fix == 1.0, axis=0) / running  # every time has running trials here
    svg = _svg(nav_page, "GNSS availability across trials")
    _, iy, _, per_py = _inverse(svg)
    (line,) = _points(_line(svg, "share with fix_ok = 1").get("d"))
    np.testing.assert_allclose(iy(line[:, 1]), share, atol=0.01 * per_py)
    inside = np.zeros(t.shape, dtype=bool)
    for a, b in GNSS_WINDOWS:
        inside |= (t >= a) & (t <= b)
    assert (share[inside] == 0.0).all() and (share[~inside] > 0.8).all()


def test_section_needs_only_the_values_it_draws(tmp_path: Path) -> None:
    """A navigator without NEES/NIS/fix_ok (NaN) still gets the error section, and nothing that would be empty."""
    spec = load_spec(spec_text(T_END_S, GNSS_WINDOWS))
    ds, metrics = _nav_dataset(1.0, 3)
    for name in ("nees", "nis", "fix_ok"):
        ds[name] = ds[name] * np.nan
    result = CampaignResult(spec=spec, metrics=metrics, timeseries=ds, verdicts=[], wall_time_s=1.0, batch_size=40)
    page = campaign_report_html(write_store(result, tmp_path / "store"))
    _check_page(page)
    assert 'id="nav-error"' in page and 'id="nav-tracks"' in page
    assert 'id="nav-consistency"' not in page and 'id="nav-availability"' not in page
