"""Sea and environment panels (wavebench.ui.sea_panel, wavebench.ui.environment_panel), headless.

The plotted arrays are read from the real bqplot marks and checked against
formulas from outside the project:

* the JONSWAP and Pierson-Moskowitz spectra written out here from
  DNV-RP-C205 (2010) sec. 3.5.5, evaluated independently at the plotted
  frequencies; the area under the plotted curve against m0 = (Hs/4)^2
  (Hm0 = 4 sqrt(m0), same section), integrated with scipy;
* the WMO sea-state code against WMO-No. 306 code table 3700;
* the contour tracer against plane geometry (a circle's radius and
  circumference; the two lines of x y = 0 through a saddle);
* current and wind arrows against the nautical conventions the package
  documents (set = direction the current flows toward; wind direction =
  where it comes from; Bowditch, The American Practical Navigator, glossary).
"""

from __future__ import annotations

import math
import warnings
from typing import Any

import numpy as np
import pytest
from scipy import integrate
from twin_images import twin_svgs

from wavebench.core.errors import WavebenchWarning
from wavebench.sea.spectra import SeaSpectrum
from wavebench.spec import example_spec_names, example_spec_path, load_spec, spec_from_data, spec_to_data
from wavebench.trial.setup import build_seabed
from wavebench.ui.environment_panel import EnvironmentPanel, contour_segments
from wavebench.ui.sea_panel import SeaPanel
from wavebench.ui.twin import TWIN_CLASS


def _spec(name: str = "skerrow_sound", **sea: Any) -> Any:
    data = spec_to_data(load_spec(example_spec_path(name)))
    data["sea"].update(sea)
    return spec_from_data(data)


def dnv_spectrum(w: np.ndarray, hs: float, tp: float, gamma: float) -> np.ndarray:
    """DNV-RP-C205 (2010) sec. 3.5.5, written out here (not from wavebench):

    S_PM = 5/16 Hs^2 wp^4 w^-5 exp(-5/4 (w/wp)^-4),
    S_J = (1 - 0.287 ln gamma) S_PM gamma^exp(-0.5 ((w - wp)/(sigma wp))^2),
    sigma = 0.07 for w <= wp, 0.09 above; gamma = 1 gives PM.
    """
    wp = 2.0 * math.pi / tp
    out = np.zeros_like(w)
    pos = w > 0
    ww = w[pos]
    s_pm = 5.0 / 16.0 * hs**2 * wp**4 * ww**-5 * np.exp(-1.25 * (ww / wp) ** -4)
    sigma = np.where(ww <= wp, 0.07, 0.09)
    out[pos] = (1.0 - 0.287 * math.log(gamma)) * s_pm * gamma ** np.exp(-0.5 * ((ww - wp) / (sigma * wp)) ** 2)
    return out


# ---------------------------------------------------------------- sea panel


def test_plotted_jonswap_equals_the_dnv_formula_and_its_area_gives_hs() -> None:
    panel = SeaPanel(_spec(hs_m=2.0, tp_s=8.0, gamma=3.3))
    w = np.asarray(panel.spectrum_line.x, dtype=float)
    s = np.asarray(panel.spectrum_line.y, dtype=float)
    # DNV-RP-C205 (2010) sec. 3.5.5, JONSWAP with gamma = 3.3, evaluated independently
    np.testing.assert_allclose(s, dnv_spectrum(w, 2.0, 8.0, 3.3), rtol=1e-12, atol=1e-15)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", WavebenchWarning)  # Tp/sqrt(Hs) = 5.66 is outside 3.6..5
        library = SeaSpectrum(kind="jonswap", hs_m=2.0, tp_s=8.0, gamma=3.3).density(w)
    np.testing.assert_array_equal(s, library)  # the plot shows the package's own spectrum, unaltered
    # DNV-RP-C205 (2010) sec. 3.5.5: Hm0 = 4 sqrt(m0), m0 = (Hs/4)^2. A_gamma = 1 - 0.287 ln(gamma)
    # is an approximate normalisation (within 2 % in m0 for gamma in [1, 7], i.e. 1 % in Hm0), and
    # the plot stops at 6 wp, leaving < 0.1 % of m0 (PM tail, exp(-5/4 6^-4)).
    m0 = integrate.trapezoid(s, w)
    assert 4.0 * math.sqrt(m0) == pytest.approx(2.0, rel=0.01)
    assert "sea state 4" in panel.static_html()  # WMO-No. 306 code table 3700: 1.25-2.5 m is code 4
    # Tp/sqrt(Hs) = 8/sqrt(2) = 5.66 lies outside DNV-RP-C205's 3.6..5 range for JONSWAP: the package's
    # validity warning is shown as a note, not raised into the notebook
    assert any("Tp/sqrt(Hs) = 5.66" in n for n in panel.view.notes)


def test_plotted_pierson_moskowitz_area_is_the_closed_form_m0() -> None:
    panel = SeaPanel(_spec(kind="pierson_moskowitz", hs_m=3.0, tp_s=9.0))
    w = np.asarray(panel.spectrum_line.x, dtype=float)
    s = np.asarray(panel.spectrum_line.y, dtype=float)
    np.testing.assert_allclose(s, dnv_spectrum(w, 3.0, 9.0, 1.0), rtol=1e-12, atol=1e-15)  # DNV-RP-C205 sec. 3.5.5
    # PM: integral of S_PM from 0 to W is (Hs/4)^2 exp(-5/4 (wp/W)^4) (closed form of the PM shape),
    # so the plotted area up to W = w[-1] is m0 = (Hs/4)^2 times that factor.
    wp = 2.0 * math.pi / 9.0
    expected = (3.0 / 4.0) ** 2 * math.exp(-1.25 * (wp / w[-1]) ** 4)
    assert integrate.simpson(s, x=w) == pytest.approx(expected, rel=1e-4)
    assert panel.view.code == 5  # WMO-No. 306 code table 3700: 2.5-4 m is code 5, "Rough"
    assert panel.view.description == "Rough"


def test_distribution_is_plotted_at_its_representative_value_and_said_so() -> None:
    spec = load_spec(example_spec_path("skerrow_sound"))  # hs_m truncated normal, mean 1.2 inside [0.5, 2]
    panel = SeaPanel(spec)
    assert panel.view.hs_m == 1.2 and panel.view.tp_s == 0.5 * (5.0 + 7.5)  # the spec's own mean and midpoint
    assert any("sea.hs_m is a distribution (truncated_normal)" in n and "representative" in n
               for n in panel.view.notes)  # fmt: skip
    assert panel.view.code == 3  # WMO-No. 306 code table 3700: 0.5-1.25 m is code 3, "Slight"
    html = panel._repr_mimebundle_()["text/html"]
    assert TWIN_CLASS in html and len(twin_svgs(html)) == 3 and "<svg" not in html and "<script" not in html
    assert "sea state 3" in html and "Slight" in html and "representative value" in html


def test_changing_hs_redraws_once_in_one_batched_message() -> None:
    panel = SeaPanel(_spec(hs_m=1.0, tp_s=8.0))
    messages: list[dict] = []
    panel.spectrum_line.comm.send = lambda data=None, buffers=None, **kw: messages.append(data)
    before = panel.redraws
    control = panel.editor.control("sea.hs_m")
    control.value_widget.value = 2.0
    assert panel.redraws == before + 1
    assert len(messages) == 1 and messages[0]["method"] == "update" and "y" in messages[0]["state"]
    w = np.asarray(panel.spectrum_line.x, dtype=float)
    # the DNV rule gives gamma = 1 for Tp/sqrt(Hs) >= 5 (8/sqrt(2) = 5.66): DNV-RP-C205 sec. 3.5.5
    np.testing.assert_allclose(panel.spectrum_line.y, dnv_spectrum(w, 2.0, 8.0, 1.0), rtol=1e-12, atol=1e-15)
    control.value_widget.value = -2.0  # refused: no redraw, no message, the plot stays
    assert panel.redraws == before + 1 and len(messages) == 1
    assert "sea.hs_m = -2.0 is not allowed" in control.error_label.value


def test_sample_record_is_seeded_from_the_spec() -> None:
    spec = _spec(hs_m=1.0, tp_s=6.0)
    a, b = SeaPanel(spec), SeaPanel(spec)
    np.testing.assert_array_equal(a.elevation_line.y, b.elevation_line.y)
    data = spec_to_data(spec)
    data["campaign"]["seed"] += 1
    c = SeaPanel(spec_from_data(data))
    assert not np.array_equal(a.elevation_line.y, c.elevation_line.y)


def test_spreading_density_integrates_to_one() -> None:
    panel = SeaPanel(_spec(hs_m=1.0, tp_s=6.0))
    deg = np.asarray(panel.spreading_line.x, dtype=float)
    dens = np.asarray(panel.spreading_line.y, dtype=float)
    # Longuet-Higgins et al. (1963): the cos-2s density is normalised over a full turn (1/rad)
    assert integrate.trapezoid(dens, np.radians(deg)) == pytest.approx(1.0, rel=1e-6)
    # its peak lies at the mean direction waves come from (225 deg in this spec's mean)
    assert deg[np.argmax(dens)] == pytest.approx(225.0, abs=0.5)


def test_spec_without_sea_shows_calm_water() -> None:
    panel = SeaPanel(load_spec(example_spec_path("carrick_deep")))
    assert panel.view is None and "no [sea]" in panel.code_label.value.lower()
    assert "No [sea] table" in panel.static_html()


# ---------------------------------------------------------------- contours


def test_contour_of_a_paraboloid_is_a_circle() -> None:
    x = np.linspace(-2.0, 2.0, 81)
    xx, yy = np.meshgrid(x, x)
    seg = contour_segments(x, x, xx**2 + yy**2, 1.0)
    r = np.hypot(seg[..., 0], seg[..., 1])
    h = x[1] - x[0]
    # plane geometry: x^2 + y^2 = 1 is the unit circle; linear interpolation of the quadratic
    # along a cell edge of length h misplaces a point by at most about h^2 / 4.
    assert np.max(np.abs(r - 1.0)) < h**2 / 4
    length = np.sum(np.hypot(*(seg[:, 1] - seg[:, 0]).T))
    assert length == pytest.approx(2.0 * math.pi, rel=2e-3)  # circumference 2 pi r


def test_contour_through_a_saddle_gives_the_two_axes() -> None:
    x = np.linspace(-1.05, 0.95, 21)  # no grid node on an axis
    xx, yy = np.meshgrid(x, x)
    seg = contour_segments(x, x, xx * yy, 0.0)
    # x y = 0 is the union of the two axes; x y is linear along each cell edge, so every crossing
    # lies exactly on an axis, and every segment lies along one of them.
    pts = seg.reshape(-1, 2)
    assert np.all(np.minimum(np.abs(pts[:, 0]), np.abs(pts[:, 1])) < 1e-12)
    along_x = np.all(np.abs(seg[:, :, 1]) < 1e-12, axis=1)
    along_y = np.all(np.abs(seg[:, :, 0]) < 1e-12, axis=1)
    # every segment lies along an axis except in the cell holding the crossing (the saddle,
    # corners at +-0.05), where marching squares joins the axes by two corner cuts
    cut = ~(along_x | along_y)
    assert cut.sum() == 2
    assert np.all(np.abs(seg[cut]) <= 0.05 + 1e-12)
    total = np.sum(np.hypot(*(seg[~cut, 1] - seg[~cut, 0]).T))
    # outside the saddle cell each axis is traced over the grid's width less that cell's 0.1
    assert total == pytest.approx(2 * (x[-1] - x[0] - 0.1), rel=1e-12)


# ---------------------------------------------------------------- environment panel


def test_depth_map_is_the_trial_seabed_with_contours() -> None:
    spec = load_spec(example_spec_path("dulse_bay"))
    panel = EnvironmentPanel(spec)
    bed = build_seabed(spec)
    np.testing.assert_array_equal(panel.heatmap.color, bed.depth_m)
    np.testing.assert_array_equal(panel.heatmap.x, bed.east_m)
    np.testing.assert_array_equal(panel.heatmap.y, bed.north_m)
    assert panel.heatmap.visible
    levels = panel.view.levels_m
    assert levels.size >= 3
    # every contour point lies where the bilinear surface through the grid has the level's depth
    for lv, xs, ys in zip(levels, panel.view.contour_x, panel.view.contour_y, strict=True):
        ok = np.isfinite(xs)
        e, n = xs[ok], ys[ok]
        j = np.clip(np.searchsorted(bed.east_m, e) - 1, 0, bed.east_m.size - 2)
        i = np.clip(np.searchsorted(bed.north_m, n) - 1, 0, bed.north_m.size - 2)
        fe = (e - bed.east_m[j]) / (bed.east_m[j + 1] - bed.east_m[j])
        fn = (n - bed.north_m[i]) / (bed.north_m[i + 1] - bed.north_m[i])
        d = bed.depth_m
        value = ((1 - fe) * (1 - fn) * d[i, j] + fe * (1 - fn) * d[i, j + 1]
                 + (1 - fe) * fn * d[i + 1, j] + fe * fn * d[i + 1, j + 1])  # fmt: skip
        np.testing.assert_allclose(value, lv, atol=1e-9)  # on a cell edge the bilinear surface is linear
    html = panel.static_html()
    assert html.count("<svg") == 2 and "<script" not in html and "contours [m]" in html


def _arrow_bearing(xs: np.ndarray, ys: np.ndarray) -> float:
    """Bearing (deg clockwise from north) of the first arrow's shaft: points 0 -> 1."""
    return math.degrees(math.atan2(xs[1] - xs[0], ys[1] - ys[0])) % 360.0


def test_arrows_follow_the_nautical_conventions_and_update_once() -> None:
    spec = load_spec(example_spec_path("brannock_bridge"))  # set uniform [10, 30]; wind from 200
    panel = EnvironmentPanel(spec)
    # set is the direction the current flows toward (Bowditch, glossary "set"): drawn at the
    # representative value, the uniform's midpoint 20 deg
    assert _arrow_bearing(panel.current_arrows.x, panel.current_arrows.y) == pytest.approx(20.0, abs=1e-9)
    # a wind "from 200 deg" blows toward 20 deg (meteorological convention)
    assert _arrow_bearing(panel.wind_arrow.x, panel.wind_arrow.y) == pytest.approx(20.0, abs=1e-9)
    assert panel.heatmap.visible is False  # no [seabed] in this spec
    before = panel.redraws
    messages: list[dict] = []
    panel.current_arrows.comm.send = lambda data=None, buffers=None, **kw: messages.append(data)
    control = panel.editor.control("current.set_deg")
    control.mode_widget.value = "value"
    control.value_widget.value = 90.0
    assert panel.redraws == before + 2  # two accepted changes: the mode, then the value
    assert _arrow_bearing(panel.current_arrows.x, panel.current_arrows.y) == pytest.approx(90.0, abs=1e-9)
    assert all(sorted(m["state"]) == ["x", "y"] for m in messages) and len(messages) <= 2


def test_flat_seabed_and_no_current_or_wind() -> None:
    data = spec_to_data(load_spec(example_spec_path("skerrow_sound")))
    data["seabed"] = {"kind": "flat", "depth_m": 30.0}
    del data["current"], data["wind"]
    panel = EnvironmentPanel(spec_from_data(data))
    assert panel.heatmap.visible and np.all(np.asarray(panel.heatmap.color) == 30.0)
    assert panel.view.levels_m.size == 0 and panel.view.current_ne_mps is None
    html = panel._repr_mimebundle_()["text/html"]
    assert TWIN_CLASS in html and "none (no [current] table)" in html and "none (no [wind] table)" in html


@pytest.mark.parametrize("name", example_spec_names())
def test_panels_build_for_every_example(name: str) -> None:
    spec = load_spec(example_spec_path(name))
    for panel in (SeaPanel(spec), EnvironmentPanel(spec)):
        html = panel.static_html()
        assert "<script" not in html
        assert ("<svg" in html) or (spec.sea is None and isinstance(panel, SeaPanel))
