"""``wavebench verify NOTEBOOK``: does a saved notebook reproduce its campaign results bit for bit?

A result card (:func:`wavebench.campaign.fingerprint.result_card`) puts
``{"wavebench": {"spec_hash", "result_hash", "trials", "verdicts"}}`` into its
output's metadata. :func:`verify_notebook` reads the saved notebook, collects
every output carrying that metadata, re-executes a copy headlessly with
nbclient (in the notebook's folder, with a timeout; the file on disk is not
touched), collects again and compares, result by result:

- *same*: the spec hash, the result hash and the trial count are equal;
- *DIFFERS*: which hash (or count), the saved and the recomputed value, the cell;
- *missing*: the cell produced no result when run again.

It also checks that the verdict words shown in a saved result's HTML are the
verdicts of its own metadata and of the re-run, so a hand-edited table is
caught as well as hand-edited metadata.

nbclient and nbformat are imported only when a notebook is verified, so
importing this module (and ``wavebench.cli``) needs no Jupyter package.
"""

from __future__ import annotations

import os
import re
from collections.abc import Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

__all__ = ["SavedResult", "VerifyReport", "collect_results", "html_verdicts", "verify_notebook"]

#: A verdict badge of the result card: its visible word.
_BADGE = re.compile(r"<span\b[^>]*\bclass=['\"]verdict['\"][^>]*>(.*?)</span>", re.DOTALL)
#: Terminal colour codes in tracebacks.
_ANSI = re.compile(r"\x1b\[[0-9;]*m")
#: The requirement name of a row of the result card.
_ROW = re.compile(r"<tr\b[^>]*\bdata-requirement=['\"]([^'\"]*)['\"][^>]*>(.*?)</tr>", re.DOTALL)


@dataclass(frozen=True)
class SavedResult:
    """One result card found in a notebook's outputs.

    Parameters
    ----------
    cell : int
        Index of the cell among all cells (0-based, as in the .ipynb list).
    output : int
        Index of the output within the cell.
    spec_hash, result_hash : str
    trials : int or None
    verdicts : dict of str to str
        Requirement name to verdict word, from the metadata.
    parts : dict of str to str
        Hashes of the result's parts (metrics and verdicts, time series), when saved.
    shown : dict of str to str or None
        Requirement name to the verdict word visible in the output's
        ``text/html``; None when the output has no HTML.
    """

    cell: int
    output: int
    spec_hash: str
    result_hash: str
    trials: int | None
    verdicts: dict[str, str] = field(default_factory=dict)
    shown: dict[str, str] | None = None
    parts: dict[str, str] = field(default_factory=dict)

    @property
    def where(self) -> str:
        """E.g. ``"cell 4"`` (and the output when a cell holds more than one result)."""
        return f"cell {self.cell}" + (f" output {self.output}" if self.output else "")


def _unescape(s: str) -> str:
    import html

    return html.unescape(re.sub(r"<[^>]+>", "", s)).strip()


def html_verdicts(html_text: str) -> dict[str, str]:
    """The verdict word shown in each row of a result card's HTML.

    Examples
    --------
    >>> html_verdicts("<tr data-requirement='a'><td>a</td><td><span class='verdict' x='1'>pass</span></td></tr>")
    {'a': 'pass'}
    """
    out = {}
    for name, row in _ROW.findall(html_text):
        words = _BADGE.findall(row)
        out[_unescape(name)] = _unescape(words[0]) if words else ""
    return out


def collect_results(nb: Any) -> list[SavedResult]:
    """Every output of a notebook (a parsed nbformat dict) carrying ``metadata.wavebench``."""
    found = []
    for k, cell in enumerate(nb.get("cells", [])):
        if cell.get("cell_type") != "code":
            continue
        for j, out in enumerate(cell.get("outputs", [])):
            md = (out.get("metadata") or {}).get("wavebench")
            if not isinstance(md, dict):
                continue
            html_text = (out.get("data") or {}).get("text/html")
            if isinstance(html_text, list):
                html_text = "".join(html_text)
            verdicts = md.get("verdicts") or {}
            found.append(SavedResult(
                cell=k, output=j, spec_hash=str(md.get("spec_hash", "")), result_hash=str(md.get("result_hash", "")),
                trials=md.get("trials"), verdicts={str(a): str(b) for a, b in dict(verdicts).items()},
                shown=html_verdicts(html_text) if isinstance(html_text, str) else None,
                parts={str(a): str(b) for a, b in dict(md.get("parts") or {}).items()},
            ))  # fmt: skip
    return found


@dataclass
class VerifyReport:
    """What :func:`verify_notebook` found.

    Attributes
    ----------
    lines : list of str
        One line per result (and per problem), ready to print.
    saved : list of SavedResult
    recomputed : list of SavedResult
    ok : bool
        True only when there was at least one saved result and every one
        reproduced bit for bit, with matching visible verdicts.
    """

    lines: list[str]
    saved: list[SavedResult]
    recomputed: list[SavedResult]
    ok: bool

    def text(self) -> str:
        return "\n".join(self.lines)


def _short(h: Any) -> str:
    return str(h)[:16] if h else "(none)"


def _compare(saved: SavedResult, new: SavedResult | None) -> list[str]:
    """Problems with one saved result; empty when it reproduces."""
    if new is None:
        return [f"{saved.where}: missing — the re-run produced no result in this cell"]
    problems = []
    for label, a, b in (("spec hash", saved.spec_hash, new.spec_hash), ("result hash", saved.result_hash,
                                                                         new.result_hash)):  # fmt: skip
        if a != b:
            problems.append(f"{saved.where}: DIFFERS — {label} saved {_short(a)} recomputed {_short(b)}")
    if saved.result_hash != new.result_hash and saved.parts and new.parts:
        same = [k for k in saved.parts if k in new.parts and saved.parts[k] == new.parts[k]]
        differ = [k for k in saved.parts if k in new.parts and saved.parts[k] != new.parts[k]]
        if differ:
            problems.append(f"{saved.where}:   the parts that differ: {', '.join(differ)}"
                            + (f" (the same: {', '.join(same)})" if same else ""))  # fmt: skip
    if saved.trials != new.trials:
        problems.append(f"{saved.where}: DIFFERS — trials saved {saved.trials} recomputed {new.trials}")
    if saved.verdicts != new.verdicts:
        problems.append(f"{saved.where}: DIFFERS — verdicts saved {saved.verdicts} recomputed {new.verdicts}")
    if saved.shown is None:
        problems.append(f"{saved.where}: DIFFERS — the saved output has no HTML verdict table")
    else:
        if saved.shown != saved.verdicts:
            problems.append(f"{saved.where}: DIFFERS — the visible HTML table shows {saved.shown}, its own "
                            f"metadata says {saved.verdicts}")  # fmt: skip
        if saved.shown != new.verdicts:
            problems.append(f"{saved.where}: DIFFERS — the visible HTML table shows {saved.shown}, the re-run "
                            f"gives {new.verdicts}")  # fmt: skip
    return problems


def verify_notebook(path: str | os.PathLike[str], *, timeout: float = 600.0, kernel_name: str | None = None
                    ) -> VerifyReport:  # fmt: skip
    """Re-execute a copy of a saved notebook and compare its result cards with the saved ones.

    Parameters
    ----------
    path : path-like
        The ``.ipynb`` file (read only; never written).
    timeout : float
        Longest time one cell may run [s].
    kernel_name : str, optional
        Kernel to run; default the notebook's kernelspec name, else
        ``"python3"`` (the ipykernel of the running Python).

    Returns
    -------
    VerifyReport
    """
    import nbformat
    from nbclient import NotebookClient
    from nbclient.exceptions import CellExecutionError, CellTimeoutError

    nb_path = Path(path)
    if not nb_path.is_file():
        return VerifyReport([f"{nb_path}: no such notebook"], [], [], False)
    try:
        nb = nbformat.read(nb_path, as_version=4)
    except Exception as exc:  # nbformat raises several types for a file that is not a notebook
        return VerifyReport([f"{nb_path}: not a readable notebook ({type(exc).__name__}: {exc})"], [], [], False)
    saved = collect_results(nb)
    if not saved:
        return VerifyReport([f"{nb_path}: no saved wavebench result (no output carries metadata.wavebench): "
                             "nothing to verify — run the notebook and save it with its outputs"], [], [],
                            False)  # fmt: skip
    lines = [f"{nb_path}: {len(saved)} saved result{'s' if len(saved) != 1 else ''}; re-executing a copy ..."]
    run = nbformat.from_dict(nb)
    name = kernel_name or (nb.get("metadata", {}).get("kernelspec", {}) or {}).get("name") or "python3"
    if kernel_name is None and name != "python3":
        from jupyter_client.kernelspec import KernelSpecManager

        if name not in KernelSpecManager().find_kernel_specs():
            lines.append(f"kernel '{name}' of the notebook is not installed here: using python3 (this Python)")
            name = "python3"
    client = NotebookClient(run, timeout=timeout, kernel_name=name,
                            resources={"metadata": {"path": str(nb_path.resolve().parent)}})  # fmt: skip
    try:
        client.execute()
    except CellTimeoutError as exc:
        lines.append(f"re-execution timed out (a cell ran longer than {timeout:g} s): {str(exc).splitlines()[0]}")
        return VerifyReport(lines, saved, [], False)
    except CellExecutionError as exc:
        failed = [(k, o) for k, c in enumerate(run.cells) for o in c.get("outputs", [])
                  if o.get("output_type") == "error"]  # fmt: skip
        if failed:
            k, err = failed[0]
            lines.append(f"re-execution failed in cell {k}: {err.get('ename', 'Error')}: {err.get('evalue', '')}")
        else:
            text = _ANSI.sub("", str(exc)).strip()
            lines.append(f"re-execution failed: {text.splitlines()[-1] if text else type(exc).__name__}")
        return VerifyReport(lines, saved, collect_results(run), False)
    recomputed = collect_results(run)
    by_place = {(r.cell, r.output): r for r in recomputed}
    by_cell: dict[int, list[SavedResult]] = {}
    for r in recomputed:
        by_cell.setdefault(r.cell, []).append(r)
    ok = True
    used = set()
    for s in saved:
        new = by_place.get((s.cell, s.output))
        if new is None:  # outputs may shift within a cell (e.g. a progress message): match by order in the cell
            rank = [x.output for x in saved if x.cell == s.cell].index(s.output)
            in_cell = by_cell.get(s.cell, [])
            new = in_cell[rank] if rank < len(in_cell) else None
        problems = _compare(s, new)
        if new is not None:
            used.add((new.cell, new.output))
        if problems:
            ok = False
            lines += problems
        else:
            lines.append(f"{s.where}: same — spec {_short(s.spec_hash)}, result {_short(s.result_hash)}, "
                         f"{s.trials} trials")  # fmt: skip
    extra = [r for r in recomputed if (r.cell, r.output) not in used]
    for r in extra:
        lines.append(f"cell {r.cell}: note — the re-run shows a result the saved notebook does not hold")
    n_same = sum(1 for ln in lines if ": same — " in ln)
    lines.append(f"verified: all {len(saved)} saved results reproduce bit for bit" if ok else
                 f"NOT verified: {n_same} of {len(saved)} saved results reproduce")  # fmt: skip
    return VerifyReport(lines, saved, recomputed, ok)


def main(paths: Sequence[str], *, timeout: float = 600.0) -> int:
    """Verify notebooks, print the report; 0 when every one verifies, else 1."""
    status = 0
    for p in paths:
        report = verify_notebook(p, timeout=timeout)
        print(report.text())
        status |= 0 if report.ok else 1
    return status
