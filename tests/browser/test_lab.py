"""wavebench's JupyterLab extension in a real JupyterLab, driven by a headless chromium.

One JupyterLab server and one browser are shared by the whole file (see conftest.py);
every test gets a fresh page. What the page shows is checked against files the test
wrote itself and read back with reference readers (:mod:`tomllib`, :mod:`json`,
:mod:`nbformat`), not with the extension's own code. Waits are Playwright's
auto-retrying ``expect`` with explicit timeouts (and short polls of files on disk), never
fixed sleeps.
"""

from __future__ import annotations

import json
import re
import shutil
import subprocess
import sys
import time
from pathlib import Path

import nbformat
import pytest
from lab_actions import LONG, run_all_cells, run_first_cell, wait_kernel_idle
from playwright.sync_api import expect  # the test extra's `playwright`: a missing package fails, never skips

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover
    tomllib = pytest.importorskip("tomli")

CARDS = ["First trial", "Navigation study", "Pilot comparison", "Operability study"]


def _scenario_name(spec_file: Path) -> str:
    with open(spec_file, "rb") as fh:
        return str(tomllib.load(fh)["scenario"]["name"])


def _make_store(out: Path) -> None:
    from wavebench.cli import main

    rc = main(["run", "skerrow_sound", "--out", str(out), "--trials", "4",
               "--set", "scenario.duration_s=20.0", "--quiet"])  # fmt: skip
    assert rc in (0, None, 1)  # 1: a verdict may fail; the store is written either way
    assert (out / "manifest.json").is_file()


def _show_side_panel(page, panel_id: str):
    """Open a left side panel by its tab (a click on the current tab would close it)."""
    tab = page.locator(f'.lm-TabBar-tab[data-id="{panel_id}"]')
    expect(tab).to_be_visible()
    if "lm-mod-current" not in (tab.get_attribute("class") or ""):
        tab.click()
    panel = page.locator(f"#{panel_id}")
    expect(panel).to_be_visible()
    return panel


def _file_browser_item(page, name: str):
    """The entry ``name`` of the folder the file browser shows, once it is listed."""
    browser = _show_side_panel(page, "filebrowser")
    item = browser.locator(".jp-DirListing-item").filter(
        has=page.locator(".jp-DirListing-itemText", has_text=re.compile(f"^{re.escape(name)}$"))
    )
    expect(item).to_have_count(1, timeout=30_000)
    return item


# --- 1. launcher -------------------------------------------------------------------------------


def test_launcher_section_and_first_trial_notebook(page, lab) -> None:
    before = set(lab.root.glob("*.ipynb"))
    lab.open(page)
    section = page.locator(".jp-Launcher-section").filter(
        has=page.locator(".jp-Launcher-sectionTitle", has_text=re.compile(r"^wavebench$"))
    )
    expect(section).to_have_count(1)
    cards = section.locator(".jp-LauncherCard")
    expect(cards).to_have_count(4)
    expect(section.locator(".jp-LauncherCard-label")).to_have_text(CARDS)

    cards.filter(has_text="First trial").click()
    first_cell = page.locator(".jp-NotebookPanel:visible .jp-Notebook .jp-Cell").first
    expect(first_cell).to_contain_text("Caution", timeout=LONG)

    # the notebook is on disk too; read back with nbformat, its first cell is the caution
    deadline = time.monotonic() + 30
    new: set[Path] = set()
    while not new and time.monotonic() < deadline:
        new = set(lab.root.glob("*.ipynb")) - before
        time.sleep(0.2)
    assert len(new) == 1, new
    nb = None
    while time.monotonic() < deadline:  # the template is written after the untitled file is created
        nb = nbformat.read(next(iter(new)), as_version=4)
        if nb.cells:
            break
        time.sleep(0.2)
    assert nb is not None and nb.cells, "the new notebook stayed empty on disk"
    assert "Caution" in nb.cells[0].source


def test_every_launcher_card_makes_a_notebook_that_runs(page, lab) -> None:
    """Each card's notebook, as written to disk by the front end, runs top to bottom in a real
    kernel (nbclient) and shows at least one campaign result card, with no error output."""
    from nbclient import NotebookClient

    folder = lab.root / "from_cards"
    folder.mkdir()
    made: dict[str, Path] = {}
    for card in CARDS:
        before = set(folder.glob("*.ipynb"))
        lab.open(page, "lab/tree/from_cards")  # the file browser in that folder: the card writes there
        page.locator(".jp-LauncherCard", has_text=card).click()
        expect(page.locator(".jp-NotebookPanel:visible .jp-Cell").first).to_contain_text("Caution", timeout=LONG)
        deadline = time.monotonic() + 30
        while time.monotonic() < deadline:
            new = set(folder.glob("*.ipynb")) - before
            if new and nbformat.read(next(iter(new)), as_version=4).cells:
                break
            time.sleep(0.2)
        assert len(new) == 1, (card, new)
        made[card] = next(iter(new))
    lab.server.shutdown_kernels()  # the notebooks' own kernels: not needed below

    for card, path in made.items():
        nb = nbformat.read(path, as_version=4)
        assert nb.cells[0].cell_type == "markdown" and "no substitute for sea trials" in nb.cells[0].source
        NotebookClient(nb, timeout=600, kernel_name="python3",
                       resources={"metadata": {"path": str(folder)}}).execute()  # fmt: skip
        outputs = [o for c in nb.cells if c.cell_type == "code" for o in c.outputs]
        errors = [o for o in outputs if o.output_type == "error"]
        assert not errors, f"{card}: {errors[0].ename}: {errors[0].evalue}"
        cards = [o for o in outputs if "data-result-hash=" in o.get("data", {}).get("text/html", "")]
        assert cards, f"{card}: no campaign result card in the outputs"


# --- 2. Campaigns panel ------------------------------------------------------------------------


def test_campaigns_panel_lists_stores_and_follows_a_campaign(page, lab) -> None:
    runs = lab.root / "runs"
    _make_store(runs / "a")
    scenario = _scenario_name(runs / "a" / "spec.toml")
    lab.open(page)
    panel = _show_side_panel(page, "wavebench-campaigns")
    stores = panel.locator(".wb-Store")
    expect(stores).to_have_count(1, timeout=30_000)
    expect(stores.first.locator(".wb-Store-path")).to_have_text("runs/a")
    expect(stores.first.locator(".wb-Store-scenario")).to_have_text(scenario)
    manifest = json.loads((runs / "a" / "manifest.json").read_text(encoding="utf-8"))
    assert manifest.get("trials") in (None, 4)
    expect(stores.first.locator(".wb-Store-count")).to_have_text("4 / 4 trials")

    # a second finished store appears while the panel is open: Refresh shows it
    _make_store(runs / "b")
    panel.locator(".wb-Campaigns-refresh").click()
    expect(panel.locator(".wb-Store-path")).to_have_text(["runs/a", "runs/b"], timeout=30_000)

    # a campaign in progress: a plan for 8 trials, trials 0-2 done just now
    c = runs / "c" / "chunks"
    c.mkdir(parents=True)
    plan = {"spec_hash": "0" * 64, "seed": 7, "trials": 8, "batch_size": 3, "record": False, "until": None,
            "series_attrs": {"spec_hash": "0" * 64, "scenario": "Invented leg in progress", "decimation_s": 1.0}}  # fmt: skip
    (c / "plan.json").write_text(json.dumps(plan), encoding="utf-8")
    (c / "metrics-000000000-000000002.parquet").write_bytes(b"")
    panel.locator(".wb-Campaigns-refresh").click()
    running = panel.locator(".wb-Store").filter(has=page.locator(".wb-Store-path", has_text=re.compile(r"^runs/c$")))
    expect(running.locator(".wb-Store-state")).to_have_text("running", timeout=30_000)
    expect(running.locator(".wb-Store-count")).to_have_text("3 / 8 trials")
    # the next chunk lands: the panel polls by itself, no click
    (c / "metrics-000000003-000000005.parquet").write_bytes(b"")
    expect(running.locator(".wb-Store-count")).to_have_text("6 / 8 trials", timeout=30_000)


def _store_row(panel, path: str):
    return panel.locator(".wb-Store").filter(
        has=panel.page.locator(".wb-Store-path", has_text=re.compile(f"^{re.escape(path)}$"))
    )


def test_campaigns_panel_opens_a_report_and_a_notebook_that_loads_the_store(page, lab) -> None:
    import pandas as pd

    from wavebench.cli import main

    store = lab.root / "opened" / "leg"
    _make_store(store)
    assert main(["report", str(store)]) in (0, None)
    scenario = _scenario_name(store / "spec.toml")
    lab.open(page)
    panel = _show_side_panel(page, "wavebench-campaigns")
    row = _store_row(panel, "opened/leg")
    expect(row.locator(".wb-Store-report")).to_be_visible(timeout=30_000)

    # a store with a report: a click opens the report in a new browser tab, through the server
    with page.expect_popup() as popup_info:
        row.locator(".wb-Store-scenario").click()
    report = popup_info.value
    report.wait_for_load_state()
    assert report.url.split("?")[0].endswith("/files/opened/leg/report.html"), report.url
    expect(report.locator("body")).to_contain_text(scenario)
    report.close()

    # "notebook": a new notebook beside the store whose code loads it; run, it draws the dashboard
    before = set((lab.root / "opened").glob("*.ipynb"))
    row.locator(".wb-Store-notebook").click()
    code = page.locator(".jp-NotebookPanel:visible .jp-CodeCell").first
    expect(code).to_contain_text("CampaignDashboard.from_store(", timeout=LONG)
    new = set((lab.root / "opened").glob("*.ipynb")) - before
    assert len(new) == 1, new
    wait_kernel_idle(page)
    run_all_cells(page)
    # what the dashboard must show, read from the store with reference readers (json, pandas)
    verdicts = json.loads((store / "verdicts.json").read_text(encoding="utf-8"))
    metrics = pd.read_parquet(store / "metrics.parquet")
    output = code.locator(".jp-OutputArea-output").first
    for v in verdicts:
        expect(output).to_contain_text(v["name"], timeout=LONG)
    scatter = (
        output.locator(".bqplot.figure")
        .filter(has=page.locator("text.mainheading", has_text="Metric against a drawn input"))
        .first
    )
    expect(scatter.locator("path.dot")).to_have_count(len(metrics), timeout=LONG)
    expect(page.locator(".jp-NotebookPanel:visible [data-mime-type='application/vnd.jupyter.error']")).to_have_count(0)

    # an unfinished campaign (stopped after its first chunk, as Ctrl-C stops it): no report, so a
    # click on its row opens the notebook, which shows the trials finished so far, marked partial
    from wavebench.campaign import run_campaign
    from wavebench.core.errors import WavebenchWarning
    from wavebench.spec import example_spec_path, load_spec

    def stop(_output, done: int, _planned: int) -> None:
        if done > 0:  # called with 0 before the first chunk
            raise KeyboardInterrupt

    spec = load_spec(example_spec_path("skerrow_sound"),
                     ["scenario.duration_s=20.0", "campaign.trials=4", "campaign.batch_size=2"])  # fmt: skip
    with pytest.warns(WavebenchWarning, match="interrupted"):
        run_campaign(spec, progress=False, store=lab.root / "opened" / "cut", on_chunk=stop)
    panel = _show_side_panel(page, "wavebench-campaigns")
    panel.locator(".wb-Campaigns-refresh").click()
    row = _store_row(panel, "opened/cut")
    expect(row.locator(".wb-Store-count")).to_have_text("2 / 4 trials", timeout=30_000)
    row.locator(".wb-Store-scenario").click()
    code = page.locator(".jp-NotebookPanel:visible .jp-CodeCell").first
    expect(code).to_contain_text('CampaignDashboard.from_store("cut")', timeout=LONG)
    wait_kernel_idle(page)
    run_all_cells(page)
    expect(code.locator(".jp-OutputArea-output").first).to_contain_text("partial: 2 of 4 trials finished", timeout=LONG)


def _palette(page, query: str):
    """Open the command palette, type ``query``; returns (palette, enabled labels, disabled labels)."""
    page.keyboard.press("Control+Shift+C")
    palette = page.locator("#command-palette")
    expect(palette).to_be_visible()
    palette.locator(".lm-CommandPalette-input").fill(query)
    enabled = palette.locator(".lm-CommandPalette-item:not(.lm-mod-disabled) .lm-CommandPalette-itemLabel")
    disabled = palette.locator(".lm-CommandPalette-item.lm-mod-disabled .lm-CommandPalette-itemLabel")
    return palette, enabled, disabled


STORE_COMMAND = "New notebook loading the selected campaign store"
SPEC_COMMANDS = ("Open spec summary", "New trial notebook from this spec")


def test_palette_commands_act_on_what_is_selected(page, lab) -> None:
    from wavebench.spec import example_spec_path

    spec = lab.root / "palette_spec.toml"
    shutil.copy(example_spec_path("skerrow_sound"), spec)
    scenario = _scenario_name(spec)
    _make_store(lab.root / "palette_runs" / "leg")
    lab.open(page)
    _show_side_panel(page, "filebrowser")

    # nothing selected, no spec open: the commands that need one are there but greyed out
    palette, enabled, disabled = _palette(page, "wavebench")
    expect(palette.locator(".lm-CommandPalette-header", has_text=re.compile(r"^wavebench$", re.I))).to_have_count(1)
    for card in CARDS:
        expect(enabled.filter(has_text=f"New trial notebook: {card}")).to_have_count(1)
    for label in ("Refresh campaigns", "Show campaigns panel"):
        expect(enabled.filter(has_text=label)).to_have_count(1)
    for label in (STORE_COMMAND, *SPEC_COMMANDS):
        expect(disabled.filter(has_text=label)).to_have_count(1)
    page.keyboard.press("Escape")

    # a spec selected in the file browser: its summary, then from that tab a trial notebook
    _file_browser_item(page, "palette_spec.toml").click()
    _, enabled, _ = _palette(page, "Open spec summary")
    enabled.filter(has_text="Open spec summary").first.click()
    summary = page.locator(".wb-SpecSummary:visible")
    expect(summary.locator("h2")).to_have_text(scenario, timeout=30_000)
    summary.click()  # the summary's tab is the current one
    _, enabled, _ = _palette(page, "New trial notebook from this spec")
    enabled.filter(has_text="New trial notebook from this spec").first.click()
    code = page.locator(".jp-NotebookPanel:visible .jp-CodeCell").first
    expect(code).to_contain_text('load_spec("palette_spec.toml")', timeout=LONG)

    # a store folder selected: a notebook beside it that loads it
    _file_browser_item(page, "palette_runs").dblclick()
    _file_browser_item(page, "leg").click()
    _, enabled, _ = _palette(page, STORE_COMMAND)
    enabled.filter(has_text=STORE_COMMAND).first.click()
    expect(code).to_contain_text('CampaignDashboard.from_store("leg")', timeout=LONG)
    assert len(list((lab.root / "palette_runs").glob("*.ipynb"))) == 1


# --- 3. spec view ------------------------------------------------------------------------------


def test_spec_files_open_in_the_summary_view(page, lab) -> None:
    from wavebench.spec import example_spec_path

    spec = lab.root / "leg_spec.toml"
    shutil.copy(example_spec_path("skerrow_sound"), spec)
    other = lab.root / "settings.toml"  # a TOML file not named like a spec
    shutil.copy(spec, other)
    scenario = _scenario_name(spec)
    lab.open(page)
    summary = page.locator(".wb-SpecSummary:visible")

    # not named like a spec: a double click opens the text editor; Open With offers the summary
    item = _file_browser_item(page, "settings.toml")
    item.dblclick()
    expect(page.locator(".jp-FileEditor:visible")).to_be_visible(timeout=30_000)
    expect(summary).to_have_count(0)
    item.click(button="right")
    page.locator(".lm-Menu-item", has_text="Open With").hover()
    page.locator(".lm-Menu-item", has_text=re.compile(r"^\s*wavebench spec\s*$")).click()
    expect(summary.locator("h2")).to_have_text(scenario, timeout=30_000)

    # named like a spec (..._spec.toml): the summary is its default view
    lab.open(page)
    _file_browser_item(page, "leg_spec.toml").dblclick()
    expect(summary.locator("h2")).to_have_text(scenario, timeout=30_000)

    # its button: a trial notebook beside the spec that loads it; run there, its result card carries
    # the bits of the same campaign run in this process
    from wavebench.campaign import run_campaign
    from wavebench.campaign.fingerprint import result_card
    from wavebench.spec import load_spec

    summary.locator(".wb-SpecSummary-open").click()
    code = page.locator(".jp-NotebookPanel:visible .jp-CodeCell")
    expect(code.first).to_contain_text('load_spec("leg_spec.toml")', timeout=LONG)
    wait_kernel_idle(page)
    run_all_cells(page)
    card = code.last.locator(".wavebench-result")
    expect(card).to_be_visible(timeout=LONG)
    trials = int(re.search(r"trials=(\d+)", code.last.locator(".jp-InputArea").inner_text()).group(1))
    want = result_card(run_campaign(load_spec(spec), trials=trials, progress=False)).metadata()["wavebench"]
    assert (card.get_attribute("data-spec-hash"), card.get_attribute("data-result-hash")) == (
        want["spec_hash"],
        want["result_hash"],
    )


# --- 4. a live panel in a running notebook -----------------------------------------------------

SEA_NOTEBOOK_SOURCE = (
    "from wavebench.spec import load_spec\n"
    "from wavebench.ui import SeaPanel\n"
    "panel = SeaPanel(load_spec('sea_spec.toml', settings=['sea.hs_m=1.2']))\n"
    "panel"
)


def _write_notebook(path: Path, cells: list) -> None:
    nb = nbformat.v4.new_notebook(cells=cells)
    nb.metadata["kernelspec"] = {"name": "python3", "display_name": "Python 3 (ipykernel)", "language": "python"}
    nbformat.write(nb, path)


def _hs_input(page):
    row = page.locator(".widget-hbox").filter(has=page.locator("> .widget-label", has_text=re.compile(r"^hs_m \[m\]$")))
    return row.locator("input[type='number']").first


def test_sea_panel_renders_and_hs_redraws_spectrum(page, lab) -> None:
    from wavebench.spec import example_spec_path

    shutil.copy(example_spec_path("skerrow_sound"), lab.root / "sea_spec.toml")
    _write_notebook(lab.root / "sea_live.ipynb", [nbformat.v4.new_code_cell(SEA_NOTEBOOK_SOURCE)])
    lab.open(page, "lab/tree/sea_live.ipynb")
    expect(page.locator(".jp-NotebookPanel:visible .jp-CodeCell").first).to_be_visible(timeout=LONG)
    wait_kernel_idle(page)
    run_first_cell(page)

    figures = page.locator(".jp-OutputArea .bqplot.figure")
    expect(figures.first.locator("svg").first).to_be_visible(timeout=LONG)
    spectrum = figures.filter(has_text="wave spectrum").first
    line = spectrum.locator("path.line").first
    expect(line).to_have_attribute("d", re.compile(r"^M.+L"), timeout=30_000)  # SVG path data: moveto, lineto
    d_before = line.get_attribute("d")
    expect(spectrum).to_contain_text("Hs 1.2 m")

    # the [sea] controls sit in a collapsed accordion section: open it
    header = page.locator(".jp-OutputArea .jupyter-widget-Collapse-header", has_text=re.compile(r"^\s*sea\s*$"))
    header.first.click()
    hs = _hs_input(page)
    expect(hs).to_have_value(re.compile(r"^1\.2$"))
    hs.fill("2.5")
    hs.press("Enter")
    expect(spectrum).to_contain_text("Hs 2.5 m", timeout=30_000)
    expect(line).not_to_have_attribute("d", d_before or "", timeout=30_000)


# --- 5. a shared notebook without widget state -------------------------------------------------
#
# The panel's output is a bundle of a widget view and its static twin (text/html). A notebook
# saved without widget state can show only the twin. JupyterLab picks, among the output's MIME
# types, the richest one it may render: in an untrusted notebook only "safe" renderers count
# (the widget renderer is not one, sanitised HTML is), in a trusted one the widget view wins.

TWIN_ROW = re.compile(r"Hs \[m\]\s*1\.2")  # the twin's value table (Hs set to 1.2 m in the notebook)


def _shared_notebook(lab, name: str, *, trusted: bool) -> None:
    from wavebench.spec import example_spec_path, load_spec
    from wavebench.ui import SeaPanel

    # the output as a kernel would have sent it (widget view + static twin), saved without widget state
    bundle = SeaPanel(load_spec(example_spec_path("skerrow_sound"), settings=["sea.hs_m=1.2"]))._repr_mimebundle_()
    assert "application/vnd.jupyter.widget-view+json" in bundle and "text/html" in bundle
    cell = nbformat.v4.new_code_cell(SEA_NOTEBOOK_SOURCE, execution_count=1)
    cell.outputs = [nbformat.v4.new_output("display_data", data=bundle)]
    path = lab.root / name
    _write_notebook(path, [cell])
    assert "widgets" not in nbformat.read(path, as_version=4).metadata
    if trusted:  # signed with the server's own notebook secret (its JUPYTER_DATA_DIR), as `jupyter trust` does
        trust = Path(sys.executable).with_name("jupyter-trust")
        subprocess.run([str(trust), str(path)], env=lab.env, check=True, capture_output=True, timeout=60)


def _open_output(page, lab, name: str):
    lab.open(page, f"lab/tree/{name}")
    output = page.locator(".jp-NotebookPanel:visible .jp-OutputArea-output").first
    expect(output).to_be_visible(timeout=LONG)
    wait_kernel_idle(page)  # the widget manager has connected: whatever it will draw is drawn
    return output


@pytest.mark.filterwarnings(
    "ignore:metadata .* was set from the constructor:DeprecationWarning"
)  # traitlets, about a dependency
def test_untrusted_notebook_without_widget_state_shows_twin_table(page, lab) -> None:
    _shared_notebook(lab, "shared_untrusted.ipynb", trusted=False)
    output = _open_output(page, lab, "shared_untrusted.ipynb")
    expect(output).to_contain_text(TWIN_ROW, timeout=30_000)
    expect(output).to_contain_text("sea state 3")
    expect(output).not_to_contain_text("model not found")


@pytest.mark.filterwarnings(
    "ignore:metadata .* was set from the constructor:DeprecationWarning"
)  # traitlets, about a dependency
def test_untrusted_notebook_without_widget_state_shows_twin_plots(page, lab) -> None:
    _shared_notebook(lab, "shared_plots.ipynb", trusted=False)
    output = _open_output(page, lab, "shared_plots.ipynb")
    expect(output).to_contain_text(TWIN_ROW, timeout=30_000)
    # the charts are <img> data URIs, which the sanitiser keeps (it strips inline <svg>)
    chart = output.locator("img.wavebench-twin-chart").first
    expect(chart).to_be_visible(timeout=10_000)
    assert chart.evaluate("img => img.complete && img.naturalWidth > 0"), "the chart image did not decode"


# In a trusted notebook the widget view wins, and without saved widget state ipywidgets can only
# put a line of text there. The wavebench extension's fallback (widgets/src/twinfallback.ts) keeps
# ipywidgets' renderer but shows the twin beside it, hidden again once a live view is drawn.


def _fallback(output):
    """The live (ipywidgets) part and the twin part of an output drawn by the extension's fallback
    renderer (the output's own node is the fallback's)."""
    expect(output).to_have_class(re.compile(r"(^|\s)wb-TwinFallback(\s|$)"))
    return output.locator("> .wb-TwinFallback-live"), output.locator("> .wb-TwinFallback-twin")


@pytest.mark.filterwarnings(
    "ignore:metadata .* was set from the constructor:DeprecationWarning"
)  # traitlets, about a dependency
def test_trusted_notebook_without_widget_state_shows_twin(page, lab) -> None:
    _shared_notebook(lab, "shared_trusted.ipynb", trusted=True)
    output = _open_output(page, lab, "shared_trusted.ipynb")
    live, twin = _fallback(output)
    # ipywidgets has given up on the view (its wording, read here only to know it is done) ...
    expect(live).to_contain_text("model not found", timeout=30_000)
    # ... and the twin is what shows: its value table and its charts, not the error line
    expect(live).to_be_hidden()
    expect(twin.locator(".wavebench-twin")).to_be_visible()
    expect(twin).to_contain_text(TWIN_ROW)
    expect(twin.locator("img, svg").first).to_be_visible()
    assert "model not found" not in output.inner_text()  # inner_text: only what is displayed


def _executed_notebook(lab, name: str, source: str, *, trusted: bool) -> dict:
    """Run a one-cell notebook in a real kernel (nbclient) with the widget state saved, write it
    under the server root, trust it if asked; returns the saved widget state's model table."""
    from nbclient import NotebookClient

    nb = nbformat.v4.new_notebook(cells=[nbformat.v4.new_code_cell(source)])
    nb.metadata["kernelspec"] = {"name": "python3", "display_name": "Python 3 (ipykernel)", "language": "python"}
    NotebookClient(nb, timeout=120, kernel_name="python3", store_widget_state=True,
                   resources={"metadata": {"path": str(lab.root)}}).execute()  # fmt: skip
    path = lab.root / name
    nbformat.write(nb, path)
    if trusted:
        trust = Path(sys.executable).with_name("jupyter-trust")
        subprocess.run([str(trust), str(path)], env=lab.env, check=True, capture_output=True, timeout=60)
    saved = nbformat.read(path, as_version=4)
    return dict(saved.metadata["widgets"]["application/vnd.jupyter.widget-state+json"]["state"])


@pytest.mark.filterwarnings(
    "ignore:metadata .* was set from the constructor:DeprecationWarning"
)  # traitlets, about a dependency
def test_trusted_notebook_with_widget_state_live_view_or_twin(page, lab) -> None:
    from wavebench.spec import example_spec_path

    shutil.copy(example_spec_path("skerrow_sound"), lab.root / "sea_spec.toml")
    state = _executed_notebook(lab, "saved_state.ipynb", SEA_NOTEBOOK_SOURCE, trusted=True)
    assert any(m.get("model_module") == "bqplot" for m in state.values()), "no bqplot model in the saved state"

    # 1. opened with a fresh kernel that never ran the cell: ipywidgets rebuilds the views from the
    # saved state, so the live view (bqplot figures) shows and the twin is hidden again. The kernel
    # has no such models: ipywidgets marks the restored views disconnected (its CSS class).
    output = _open_output(page, lab, "saved_state.ipynb")
    live, twin = _fallback(output)
    spectrum = live.locator(".bqplot.figure").filter(has_text="wave spectrum").first
    expect(spectrum.locator("svg").first).to_be_visible(timeout=LONG)
    expect(spectrum).to_contain_text("Hs 1.2 m")
    expect(twin).to_be_hidden()
    expect(live.locator(".jupyter-widgets-disconnected").first).to_be_attached()

    # 2. the same notebook opened with no kernel at all ("No Kernel" in JupyterLab's kernel dialog,
    # which asks because the file names no kernel): ipywidgets (jupyterlab_widgets 3.0) makes a
    # notebook's widget manager only once a kernel is there, so the saved state is never read and
    # its renderer stays at its loading line; the twin shows.
    nb = nbformat.read(lab.root / "saved_state.ipynb", as_version=4)
    del nb.metadata["kernelspec"]
    nb.metadata.pop("language_info", None)  # else JupyterLab picks the Python kernel by language
    path = lab.root / "saved_state_no_kernel.ipynb"
    nbformat.write(nb, path)
    trust = Path(sys.executable).with_name("jupyter-trust")
    subprocess.run([str(trust), str(path)], env=lab.env, check=True, capture_output=True, timeout=60)
    lab.open(page, f"lab/tree/{path.name}")
    page.locator(".jp-Dialog button", has_text=re.compile(r"^\s*No Kernel\s*$")).click(timeout=LONG)
    expect(page.locator("#jp-main-statusbar")).to_contain_text("No Kernel")
    output = page.locator(".jp-NotebookPanel:visible .jp-OutputArea-output").first
    live, twin = _fallback(output)
    expect(twin).to_contain_text(TWIN_ROW, timeout=30_000)
    deadline = time.monotonic() + 5.0  # a short watch: nothing replaces the twin
    while time.monotonic() < deadline:
        expect(twin.locator(".wavebench-twin")).to_be_visible()
        expect(live).to_be_hidden()
        assert live.locator(".bqplot").count() == 0
        time.sleep(0.25)


INT_SLIDER_SOURCE = "import ipywidgets\nipywidgets.IntSlider(value=7, min=0, max=10, description='knots')"


@pytest.mark.filterwarnings(
    "ignore:metadata .* was set from the constructor:DeprecationWarning"
)  # traitlets, about a dependency
def test_plain_widget_without_twin_behaves_as_before(page, lab) -> None:
    # live: the slider drawn by ipywidgets when a kernel runs the cell
    _write_notebook(lab.root / "slider_live.ipynb", [nbformat.v4.new_code_cell(INT_SLIDER_SOURCE)])
    lab.open(page, "lab/tree/slider_live.ipynb")
    expect(page.locator(".jp-NotebookPanel:visible .jp-CodeCell").first).to_be_visible(timeout=LONG)
    wait_kernel_idle(page)
    run_first_cell(page)
    output = page.locator(".jp-NotebookPanel:visible .jp-OutputArea-output").first
    slider = output.locator(".widget-hslider")
    expect(slider).to_be_visible(timeout=LONG)
    expect(slider.locator(".widget-readout")).to_have_text("7")
    expect(slider).to_contain_text("knots")
    expect(output.locator(".wb-TwinFallback-twin, .wb-TwinFallback-note")).to_have_count(0)

    # no kernel state for it: ipywidgets' own message shows, as without the extension
    bundle = {"application/vnd.jupyter.widget-view+json": {"version_major": 2, "version_minor": 0,
                                                           "model_id": "0123456789abcdef0123456789abcdef"},
              "text/plain": "IntSlider(value=7, description='knots', max=10)"}  # fmt: skip
    cell = nbformat.v4.new_code_cell(INT_SLIDER_SOURCE, execution_count=1)
    cell.outputs = [nbformat.v4.new_output("display_data", data=bundle)]
    path = lab.root / "slider_shared.ipynb"
    _write_notebook(path, [cell])
    trust = Path(sys.executable).with_name("jupyter-trust")
    subprocess.run([str(trust), str(path)], env=lab.env, check=True, capture_output=True, timeout=60)
    output = _open_output(page, lab, "slider_shared.ipynb")
    expect(output).to_contain_text("model not found", timeout=30_000)
    assert "model not found" in output.inner_text()  # displayed, not hidden
    expect(output.locator(".wb-TwinFallback-twin, .wb-TwinFallback-note")).to_have_count(0)
