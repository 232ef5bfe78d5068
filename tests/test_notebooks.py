"""The worked notebooks run top to bottom in a real kernel, and those that run a campaign show its verdict table.

Every notebook in notebooks/ is executed with nbclient on the ipykernel of
the Python running the tests (kernel "python3", whose command jupyter_client
points at this interpreter), in the notebooks' folder, as a reader would run
it. A notebook that calls ``run_campaign`` must show at least one result
card: an output whose metadata carries the spec and result hashes and whose
HTML holds the verdict table. The saved copies must hold those outputs too,
so a notebook opened without a kernel still shows its verdicts.
"""

from __future__ import annotations

import json
import sys
import xml.etree.ElementTree as ET
from pathlib import Path

import pytest
from twin_images import twin_svgs

from wavebench.analysis.verdicts import VERDICTS
from wavebench.notebook_verify import collect_results

FOLDER = Path(__file__).resolve().parent.parent / "notebooks"
NOTEBOOKS = sorted(FOLDER.glob("*.ipynb"))
CAUTION_WORDS = ("no substitute for sea trials", "certification", "collision regulations", "local rules")


def _runs_a_campaign(nb: dict) -> bool:
    return any("run_campaign(" in "".join(c["source"]) for c in nb["cells"] if c["cell_type"] == "code")


def _check_cards(nb: dict, name: str) -> None:
    cards = collect_results(nb)
    assert cards, f"{name}: runs a campaign but shows no result card"
    for card in cards:
        assert len(card.spec_hash) == 64 and len(card.result_hash) == 64, f"{name} {card.where}"
        assert card.trials and card.trials > 0
        assert card.shown, f"{name} {card.where}: no verdict table in the HTML"
        assert card.shown == card.verdicts, f"{name} {card.where}: the table and the metadata disagree"
        assert set(card.shown.values()) <= set(VERDICTS)


def test_there_are_the_worked_notebooks() -> None:
    names = {p.name for p in NOTEBOOKS}
    assert {"01_first_trial.ipynb", "02_gnss_outage_navigation.ipynb", "03_pilot_comparison.ipynb",
            "04_operability_study.ipynb", "05_scaling_out.ipynb"} <= names  # fmt: skip


@pytest.mark.parametrize("path", NOTEBOOKS, ids=[p.name for p in NOTEBOOKS])
def test_saved_notebook_opens_with_the_caution_and_keeps_its_verdicts(path: Path) -> None:
    nb = json.loads(path.read_text(encoding="utf-8"))
    assert nb["nbformat"] == 4
    first = nb["cells"][0]
    assert first["cell_type"] == "markdown"
    text = " ".join("".join(first["source"]).split())
    for words in CAUTION_WORDS:
        assert words in text, f"{path.name}: the opening cell lacks '{words}'"
    if _runs_a_campaign(nb):
        _check_cards(nb, f"{path.name} (saved)")


@pytest.mark.filterwarnings("ignore:Jupyter is migrating its paths to use standard platformdirs:DeprecationWarning")
@pytest.mark.parametrize("path", NOTEBOOKS, ids=[p.name for p in NOTEBOOKS])
def test_notebook_executes_in_a_real_kernel(path: Path) -> None:
    import nbformat
    from nbclient import NotebookClient

    nb = nbformat.read(path, as_version=4)
    nb.cells.append(nbformat.v4.new_code_cell("import sys as _sys\nprint(_sys.executable)"))
    NotebookClient(nb, timeout=300, kernel_name="python3", resources={"metadata": {"path": str(FOLDER)}}).execute()
    errors = [o for c in nb.cells if c.cell_type == "code" for o in c.outputs if o.get("output_type") == "error"]
    assert not errors
    # the kernel ran on this interpreter (the venv's own ipykernel), not on some other Python
    assert nb.cells[-1].outputs[0]["text"].strip() == sys.executable
    if _runs_a_campaign(nb):
        _check_cards(nb, f"{path.name} (executed)")


@pytest.mark.parametrize("path", NOTEBOOKS, ids=[p.name for p in NOTEBOOKS])
def test_saved_notebook_converted_to_html_shows_every_panels_static_twin(path: Path) -> None:
    # nbconvert's HTML exporter renders a widget view only when the notebook carries that widget's saved state;
    # the committed notebooks carry none, so each panel output falls back to its text/html static twin (tables and
    # inline SVG, no script) -- what a reader without a kernel, or a plain HTML copy, sees.
    import nbformat
    from nbconvert import HTMLExporter

    from wavebench.ui.twin import TWIN_CLASS

    nb = nbformat.read(path, as_version=4)
    assert "widgets" not in nb.metadata, f"{path.name}: saved widget state would hide the static twins in HTML"
    panels = [o for c in nb.cells if c.cell_type == "code" for o in c.outputs
              if "application/vnd.jupyter.widget-view+json" in o.get("data", {})]  # fmt: skip
    for o in panels:
        assert TWIN_CLASS in o["data"].get("text/html", ""), f"{path.name}: a panel output without a static twin"
    body, _ = HTMLExporter().from_notebook_node(nb)
    assert body.count(f'class="{TWIN_CLASS}"') == len(panels)
    for o in panels:  # each twin's charts are <img> data URIs (kept by JupyterLab's sanitiser when untrusted)
        twin = o["data"]["text/html"]
        assert "<svg" not in twin, f"{path.name}: a twin with inline SVG (saved before twins used images?)"
        for svg in twin_svgs(twin):
            assert ET.fromstring(svg).tag == "{http://www.w3.org/2000/svg}svg"  # W3C XML 1.0 well-formed SVG root
    if panels:
        assert twin_svgs(body), f"{path.name}: no chart image in the HTML conversion"
