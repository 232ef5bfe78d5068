"""The worked notebooks run top to bottom (their code cells, without Jupyter)."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

NOTEBOOKS = sorted((Path(__file__).resolve().parent.parent / "notebooks").glob("*.ipynb"))


@pytest.mark.parametrize("path", NOTEBOOKS, ids=[p.name for p in NOTEBOOKS])
def test_notebook_code_cells_run(path: Path) -> None:
    nb = json.loads(path.read_text(encoding="utf-8"))
    assert nb["nbformat"] == 4
    namespace: dict[str, object] = {"__name__": "__notebook__"}
    for k, cell in enumerate(nb["cells"]):
        if cell["cell_type"] != "code":
            continue
        source = "".join(cell["source"])
        assert not source.lstrip().startswith(("%", "!")), f"cell {k} uses IPython syntax"
        exec(compile(source, f"{path.name}[{k}]", "exec"), namespace)


def test_there_is_a_notebook() -> None:
    assert NOTEBOOKS, "notebooks/ holds no notebook"
