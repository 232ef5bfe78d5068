"""The trial player on real stored campaigns, headless (real ipywidgets and bqplot objects, no browser).

Stores are written in a temporary folder by ``run_campaign`` + ``write_store``
from shortened copies of the built-in specs (60 s of simulated time). Checks:
the player's tracks are the trial's record replayed alone, and the store's
metrics and time series for that trial are the same bits (the reproducibility
contract: per-trial random streams from one root ``SeedSequence``, numpy's
"Parallel random number generation" guide); the slider puts the craft at the
recorded position; the outline follows the rotation R(psi) of the 3-DOF
model (Fossen 2021, ch. 2); the depth raster is the seabed grid's bilinear
interpolation (scipy's ``RegularGridInterpolator``, method "linear").
"""

from __future__ import annotations

import math
import re
import sys
from pathlib import Path

import numpy as np
import pytest
from twin_images import twin_svgs

from wavebench.campaign import read_store, run_campaign, write_store
from wavebench.campaign.replay import replay_trial
from wavebench.spec.io import example_spec_path
from wavebench.spec.schema import spec_from_data
from wavebench.ui.player import HULL_OUTLINE, TrialPlayer, hull_outline
from wavebench.ui.twin import TWIN_CLASS

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover
    import tomli as tomllib

TRIAL = 3


def _short_spec(name: str, **tables: dict) -> object:
    data = tomllib.loads(example_spec_path(name).read_text(encoding="utf-8"))
    data["scenario"]["duration_s"] = 60.0
    data["campaign"]["trials"] = 8
    data["campaign"]["batch_size"] = 4
    for key, table in tables.items():
        if isinstance(table, dict) and isinstance(data.get(key), dict):
            data[key].update(table)
        else:
            data[key] = table
    return spec_from_data(data)


def _store(spec: object, folder: Path) -> Path:
    write_store(run_campaign(spec, progress=False), folder)
    return folder


@pytest.fixture(scope="module")
def store(tmp_path_factory: pytest.TempPathFactory) -> Path:
    # an invented bay under the invented sound, its corner placed so the route lies over it
    spec = _short_spec("skerrow_sound", seabed={"kind": "synthetic_bay", "layout_seed": 3,
                                                 "corner_north_m": -600.0, "corner_east_m": -600.0})  # fmt: skip
    return _store(spec, tmp_path_factory.mktemp("ui_player") / "skerrow")


@pytest.fixture(scope="module")
def nav_store(tmp_path_factory: pytest.TempPathFactory) -> Path:
    data = tomllib.loads(example_spec_path("brannock_bridge").read_text(encoding="utf-8"))
    data["scenario"]["duration_s"] = 60.0
    data["campaign"].update(trials=4, batch_size=4)
    data["sensors"]["gps"]["outages_s"] = [[20.0, 35.0]]
    spec = spec_from_data(data)
    return _store(spec, tmp_path_factory.mktemp("ui_player") / "bridge")


@pytest.fixture(scope="module")
def player(store: Path) -> TrialPlayer:
    return TrialPlayer.from_store(store, TRIAL)


def _same_bits(a: object, b: object) -> bool:
    if isinstance(a, str) or isinstance(b, str):
        return str(a) == str(b)
    fa, fb = float(a), float(b)
    return (math.isnan(fa) and math.isnan(fb)) or fa == fb


def test_true_track_is_the_replayed_record_and_the_store_holds_the_same_bits(store: Path, player: TrialPlayer) -> None:
    stored = read_store(store)
    again = replay_trial(stored["spec"], TRIAL, record=True)  # an independent second replay
    rec = again.record
    # the map's true track is the record of the trial replayed alone (float32 record shown as float64)
    np.testing.assert_array_equal(player.marks["true_track"].x, rec["east_m"].values[0].astype(float))
    np.testing.assert_array_equal(player.marks["true_track"].y, rec["north_m"].values[0].astype(float))
    # reproducibility contract (numpy "Parallel random number generation": one SeedSequence, a child per
    # trial): the trial run alone gives the bits it had in its batch of 4 -- time series and every metric
    ts = stored["timeseries"].sel(trial=TRIAL)
    for name in ("north_m", "east_m", "heading_deg", "xte_m"):
        np.testing.assert_array_equal(np.asarray(ts[name].values), rec[name].values[0], err_msg=name)
    row = stored["metrics"].set_index("trial").loc[TRIAL]
    compared = [name for name in player.replay.metrics if name in row.index]
    assert len(compared) > 20
    for name in compared:
        assert _same_bits(player.replay.metrics[name], row[name]), name
    assert all(same for *_, same in player.reproduced())
    assert "NO</td>" not in player.static_html()


def test_slider_puts_the_craft_at_the_recorded_position_and_moves_every_cursor(player: TrialPlayer) -> None:
    east, north = player.signals["east_m"], player.signals["north_m"]
    heading = player.signals["heading_deg"]
    for k in (17, 42, 0):
        player.slider.value = k
        assert player.index == k
        assert player.marks["craft_marker"].x.tolist() == [east[k]]
        assert player.marks["craft_marker"].y.tolist() == [north[k]]
        t = player.time_s[k]
        for key, mark in player.marks.items():
            if key.startswith("cursor."):
                assert mark.x.tolist() == [t, t], key
        # Fossen (2021) ch. 2, R(psi): the bow, L/2 ahead on the body x axis, lies at
        # (north, east) + L/2 (cos psi, sin psi); psi clockwise from north
        psi = math.radians(heading[k])
        bow_e, bow_n = player.marks["craft"].x[0], player.marks["craft"].y[0]
        assert bow_n == pytest.approx(north[k] + 0.5 * player.length_m * math.cos(psi), abs=1e-9)
        assert bow_e == pytest.approx(east[k] + 0.5 * player.length_m * math.sin(psi), abs=1e-9)
    assert len(player.time_figures) >= 3 and "xte" in player.time_figures


def test_hull_outline_is_a_rotation_that_keeps_the_hull_shape() -> None:
    n, e = hull_outline(5.0, -3.0, 30.0, 10.0, 3.0)
    body = np.asarray(HULL_OUTLINE) * [10.0, 3.0]
    # a rotation keeps every distance: compare pairwise distances with the body-frame polygon's
    d_ned = np.hypot(n[:, None] - n[None, :], e[:, None] - e[None, :])
    d_body = np.hypot(body[:, None, 0] - body[None, :, 0], body[:, None, 1] - body[None, :, 1])
    np.testing.assert_allclose(d_ned, d_body, atol=1e-12)
    # ... and, a proper rotation, the orientation: the shoelace signed area has the opposite sign in
    # (east, north) axes to (forward, starboard) axes, which are a left-handed pair as drawn on a map
    area_body = 0.5 * np.sum(body[:-1, 0] * body[1:, 1] - body[1:, 0] * body[:-1, 1])
    area_map = 0.5 * np.sum(e[:-1] * n[1:] - e[1:] * n[:-1])
    assert area_map == pytest.approx(-area_body, rel=1e-12)


def test_depth_raster_is_the_bilinear_interpolation_of_the_seabed_grid(player: TrialPlayer) -> None:
    from scipy.interpolate import RegularGridInterpolator

    heat = player.marks["depth"]
    grid = player.seabed
    north, east, depth = np.asarray(heat.y), np.asarray(heat.x), np.asarray(heat.color)
    assert depth.shape == (north.size, east.size)
    inside_n = (north >= grid.north_m[0]) & (north <= grid.north_m[-1])
    inside_e = (east >= grid.east_m[0]) & (east <= grid.east_m[-1])
    assert inside_n.sum() > 10 and inside_e.sum() > 10
    # scipy reference: linear interpolation on a regular grid is bilinear in 2-D
    ref = RegularGridInterpolator((grid.north_m, grid.east_m), grid.depth_m, method="linear")
    nn, ee = np.meshgrid(north[inside_n], east[inside_e], indexing="ij")
    np.testing.assert_allclose(depth[np.ix_(inside_n, inside_e)], ref(np.stack([nn, ee], axis=-1)), rtol=1e-12)


def test_a_navigator_run_shows_the_estimated_track_error_and_fix_validity(nav_store: Path) -> None:
    p = TrialPlayer.from_store(nav_store, 1)
    rec = p.replay.record
    assert p.has_navigator
    np.testing.assert_array_equal(p.marks["nav_track"].x, rec["nav_east_m"].values[0].astype(float))
    np.testing.assert_array_equal(p.marks["nav_track"].y, rec["nav_north_m"].values[0].astype(float))
    assert {"nav_err", "fix_ok"} <= set(p.time_figures)
    fix = np.asarray(p.marks["fix_ok.lines"].y, dtype=float)
    t = p.time_s
    # the spec's scheduled outage [20, 35] s: no accepted fix inside it (sampled at 1 s, the fix at 1 Hz)
    inside = (t > 21.0) & (t < 35.0)
    assert inside.any() and np.all(fix[inside] == 0.0)
    page = p.static_html()
    assert "nav_err_m" in page and "estimated track" in page
    # the 2DRMS band: 2 x the navigator's own DRMS = 2 sqrt(P_nn + P_ee), as recorded for this trial
    drms = rec["nav_drms_m"].values[0].astype(float)
    assert np.isfinite(drms).sum() > 0.9 * drms.size
    band = p.marks["nav_err.band"]
    np.testing.assert_array_equal(band.y, 2.0 * drms)
    np.testing.assert_array_equal(p.marks["nav_err.lines"].y, rec["nav_err_m"].values[0].astype(float))
    label = band.labels[0]
    assert "2DRMS" in label and "2DRMS" in page and 'class="band"' in page
    # the legend's "95-98 %": for a 2-D Gaussian error the circle of radius 2 DRMS holds P(chi2_2 <= 8) = 1 - e^-4
    # when circular and P(|N(0,1)| <= 2) when all the error lies on one axis (Kaplan & Hegarty, Understanding
    # GPS/GNSS, 3rd ed. 2017, accuracy measures: 2drms "95 to 98 %"; value from memory, not re-checked), here by scipy
    from scipy.stats import chi2, norm

    low, high = norm.cdf(2.0) - norm.cdf(-2.0), chi2.cdf(8.0, df=2)
    assert f"{math.floor(100 * low)}-{math.floor(100 * high)} %" in label
    assert 'class="depth"' not in page and "no seabed in the spec" in page


def test_static_twin_holds_svg_and_the_metrics_and_no_script(player: TrialPlayer) -> None:
    bundle = player._repr_mimebundle_()
    assert "application/vnd.jupyter.widget-view+json" in bundle
    page = bundle["text/html"]
    assert TWIN_CLASS in page
    # the map, one chart per time plot, and a second for the actuator plot's right axis (yaw moment, another unit),
    # each an <img> data URI holding the panel's own SVG
    charts = twin_svgs(page)
    assert len(charts) == 1 + len(player.time_figures) + ("actuator" in player.time_figures) and "<svg" not in page
    assert charts == re.findall(r"<svg\b.*?</svg>", player.static_html(), re.S)
    assert "<script" not in page.lower() and not any("<script" in c.lower() for c in charts)
    shown = page + "".join(charts)  # the tables and the decoded charts
    assert "xte_p95_m" in shown and f"Trial {TRIAL}" in shown
    assert f"t = {player.time_s[player.last_index]:g} s" in shown
    # the depth under the map, shaded by level, with the range of depths in the view
    assert shown.count('class="depth"') > 10
    lo, hi = np.nanmin(player.marks["depth"].color), np.nanmax(player.marks["depth"].color)
    assert player.depth_note == f"depth {lo:.1f} to {hi:.1f} m" and player.depth_note in shown


def test_the_actuator_plot_is_the_recorded_surge_force_and_yaw_moment(store: Path, player: TrialPlayer) -> None:
    ts = read_store(store)["timeseries"].sel(trial=TRIAL)
    rec = player.replay.record
    surge, yaw = player.marks["actuator.lines"], player.marks["actuator.right"]
    for mark, name in ((surge, "act_surge_n"), (yaw, "act_yaw_nm")):
        y = np.asarray(mark.y, dtype=float)
        np.testing.assert_array_equal(y, rec[name].values[0].astype(float), err_msg=name)  # the replayed record
        np.testing.assert_array_equal(y, np.asarray(ts[name].values, dtype=float), err_msg=name)  # the stored bits
        assert np.isfinite(y).any()
    # each on its own axis, labelled with the unit the record carries (CF "units" attribute)
    axes = {a.side: a.label for a in player.time_figures["actuator"].axes if a.side in ("left", "right")}
    assert axes == {"left": f"act_surge_n [{ts['act_surge_n'].attrs['units']}]",
                    "right": f"act_yaw_nm [{ts['act_yaw_nm'].attrs['units']}]"}  # fmt: skip
    assert ts["act_surge_n"].attrs["units"] == "N" and ts["act_yaw_nm"].attrs["units"] == "N m"  # SI: force, moment
    assert "not recorded" not in player.widget.children[0].value


def test_follow_the_craft_centres_the_map_on_it(player: TrialPlayer) -> None:
    xs, ys = player.map_scales
    player.slider.value = 30
    player.follow.value = True
    e, n = player.signals["east_m"][30], player.signals["north_m"][30]
    assert 0.5 * (xs.min + xs.max) == pytest.approx(e, abs=1e-9)
    assert 0.5 * (ys.min + ys.max) == pytest.approx(n, abs=1e-9)
    assert xs.max - xs.min == pytest.approx(ys.max - ys.min)  # square box: equal scales in a square plot
    player.slider.value = 31  # the box moves with the craft
    assert 0.5 * (xs.min + xs.max) == pytest.approx(player.signals["east_m"][31], abs=1e-9)
    player.follow.value = False
    assert (xs.min, xs.max) == player.map_box[0] and (ys.min, ys.max) == player.map_box[1]
