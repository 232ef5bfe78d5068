"""The first-trial notebook, run cell by cell in a real JupyterLab by a headless chromium.

The worked notebook ``notebooks/01_first_trial.ipynb`` (its outputs cleared) is opened
in the test server and run from the Run menu, as a user would. The page must then show
every panel and plot live — the sea panels' spectra, the result cards, the campaign
dashboard's figures, the histogram — and no error. The result hash on each card must
equal that of the same campaign run here, in the test's own process: the kernel behind
the browser gets the same bits (the reproducibility the card advertises).
"""

from __future__ import annotations

import dataclasses
import re
import sys
from pathlib import Path

import nbformat
import pytest
from lab_actions import DONE, LONG, run_all_cells, wait_kernel_idle
from playwright.sync_api import expect

NOTEBOOK = Path(__file__).resolve().parents[2] / "notebooks" / "01_first_trial.ipynb"
RUN_TIMEOUT = 600_000  # ms: two campaigns of 200 trials and a first kernel compile on a 2-core machine


@pytest.fixture(scope="module")
def reference() -> list:
    """The notebook's two campaigns (as planned, rougher sea), run in this process."""
    from wavebench.campaign import run_campaign
    from wavebench.spec import TruncatedNormal, example_spec_path, load_spec

    spec = load_spec(example_spec_path("skerrow_sound"))
    rough = dataclasses.replace(spec, sea=dataclasses.replace(spec.sea, hs_m=TruncatedNormal(mean=1.8, sd=0.3,
                                                                                           low=1.0, high=2.6)))  # fmt: skip
    return [run_campaign(s, progress=False) for s in (spec, rough)]


@pytest.fixture(scope="module")
def _ran(lab, browser):
    """The notebook opened and run once; every test of this module looks at the same page."""
    nb = nbformat.read(NOTEBOOK, as_version=4)
    cells = [c for c in nb.cells if c.cell_type == "code"]
    assert "rough" in cells[4].source and "SeaPanel" in cells[1].source  # the layout the checks below assume
    for c in cells:
        c.outputs, c.execution_count = [], None
    nbformat.write(nb, lab.root / "first_trial.ipynb")
    context = browser.new_context(viewport={"width": 1400, "height": 1000})
    try:
        page = context.new_page()
        code = page.locator(".jp-NotebookPanel:visible .jp-CodeCell")
        try:
            lab.open(page, "lab/tree/first_trial.ipynb")
            expect(code.first).to_be_visible(timeout=LONG)
            wait_kernel_idle(page)
            run_all_cells(page)
            expect(code).to_have_count(len(cells))
            for i in range(len(cells)):
                expect(code.nth(i).locator(".jp-InputPrompt")).to_have_text(DONE, timeout=RUN_TIMEOUT)
        except Exception:
            _save_screenshot(page)
            raise
        yield page, code
    finally:
        context.close()


def _save_screenshot(page) -> None:
    """The page of a failed run, saved beside conftest's artifacts (this page is no test's `page`
    argument yet, so conftest cannot save it); a failing screenshot does not hide the run's error."""
    folder = Path(__file__).resolve().parent / "artifacts" / "first_trial_run"
    try:
        folder.mkdir(parents=True, exist_ok=True)
        page.screenshot(path=str(folder / "screenshot.png"), full_page=True, timeout=15_000)
        sys.stderr.write(f"\nscreenshot of the failed run: {folder / 'screenshot.png'}\n")
    except Exception as err:  # the page may be gone
        sys.stderr.write(f"\nno screenshot of the failed run: {err!r}\n")


@pytest.fixture
def page(_ran):
    """The page the notebook ran in (this name lets conftest save its screenshot when a test fails)."""
    return _ran[0]


@pytest.fixture
def code(_ran):
    """The notebook's code cells on that page, in order."""
    return _ran[1]


def test_every_cell_ran_without_error(page, code) -> None:
    nb_errors = page.locator(
        ".jp-NotebookPanel:visible .jp-OutputArea-output[data-mime-type='application/vnd.jupyter.stderr']"
    )
    texts = [t for t in nb_errors.all_inner_texts() if "Traceback" in t or "Error" in t]
    assert not texts, texts
    expect(page.locator(".jp-NotebookPanel:visible")).not_to_contain_text("Error displaying widget")
    expect(code.nth(0)).to_contain_text("scenario: ")


def test_sea_panels_draw_their_spectra(code) -> None:
    for i, hs in ((1, "1.2"), (4, "1.8")):  # the spec's mean Hs, then the rougher sea's
        spectrum = code.nth(i).locator(".bqplot.figure").filter(has_text="wave spectrum").first
        expect(spectrum).to_contain_text(f"Hs {hs} m", timeout=LONG)
        expect(spectrum.locator("path.line").first).to_have_attribute("d", re.compile(r"^M.+L"))  # SVG path data


def test_result_cards_show_the_bits_of_the_same_campaign_run_here(code, reference) -> None:
    from wavebench.campaign.fingerprint import result_card

    for i, result in ((2, reference[0]), (5, reference[1])):
        want = result_card(result).metadata()["wavebench"]
        card = code.nth(i).locator(".wavebench-result")
        expect(card).to_be_visible()
        assert card.get_attribute("data-result-hash") == want["result_hash"]
        assert card.get_attribute("data-spec-hash") == want["spec_hash"]
        for name, verdict in want["verdicts"].items():
            row = card.locator(f"tr[data-requirement='{name}']")
            expect(row).to_contain_text(verdict)
    expect(code.nth(2)).to_contain_text("200 trials in")


def test_the_dashboard_draws_its_figures(code, reference) -> None:
    metrics = reference[0].metrics
    inputs = [c for c in metrics.columns if c.startswith("param.")]
    dash = code.nth(3)
    expect(dash).to_contain_text("track_keeping")

    def figure(title: str):
        fig = dash.locator(".bqplot.figure").filter(has=dash.page.locator("text.mainheading", has_text=title)).first
        expect(fig).to_be_visible(timeout=LONG)
        return fig

    expect(figure("Histogram").locator("rect.bar").first).to_be_visible()
    expect(figure("ECDF").locator("path.line").first).to_have_attribute("d", re.compile(r"^M.+L"))
    # the 5 % and 95 % lines (filled between), the sample trials, the median
    from wavebench.ui.dashboard import MAX_SAMPLE_TRIALS

    band = figure("5-95 % band")
    expect(band.locator("path.line").first).to_have_attribute("d", re.compile(r"^M.+L"))
    expect(band.locator("path.line")).to_have_count(2 + min(MAX_SAMPLE_TRIALS, len(metrics)) + 1)
    # the scatter: one dot per trial of the campaign
    expect(figure("Metric against a drawn input").locator("path.dot")).to_have_count(len(metrics))
    # the drivers: one bar per drawn input
    expect(figure("Spearman rho").locator("rect.bar")).to_have_count(len(inputs))


def test_the_histogram_is_shown_as_a_picture(code) -> None:
    image = code.nth(6).locator(".jp-RenderedSVG svg, .jp-RenderedImage img, img").first
    expect(image).to_be_visible(timeout=LONG)
    expect(code.nth(6)).to_contain_text("current speeds drawn alike in both campaigns: True")
