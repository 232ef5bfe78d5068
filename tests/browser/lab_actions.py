"""What a person does in JupyterLab, as Playwright steps shared by the browser tests.

Waits are Playwright's auto-retrying ``expect`` with explicit timeouts, never fixed
sleeps. See ``../shared/jupyter-testing.md`` for the kernel race these steps avoid.
"""

from __future__ import annotations

import re

from playwright.sync_api import expect

LONG = 60_000  # ms: kernel start and first widget render on a 2-core machine
QUEUED = re.compile(r"\[(\*|\d+)\]")  # an input prompt once the cell is queued ([*]) or has run ([n])
DONE = re.compile(r"^\s*\[\d+\]:?\s*$")  # an input prompt once the cell has run


def wait_kernel_idle(page, timeout_ms: float = LONG) -> None:
    """Wait until the status bar shows the kernel's display name and Idle.

    The notebook says idle before its kernel session exists; the status bar shows the
    kernel's display name and "Idle" only once the kernel is really there.
    """
    expect(page.locator("#jp-main-statusbar")).to_contain_text("(ipykernel) | Idle", timeout=timeout_ms)


def _until_queued(page, prompt, action, what: str) -> None:
    """Do ``action`` until ``prompt`` shows the cell queued or run; the kernel silently drops a
    request made before its session exists, so wait for it and try again (four tries)."""
    for _attempt in range(4):
        action()
        try:
            expect(prompt).to_have_text(QUEUED, timeout=10_000)
            return
        except AssertionError:
            wait_kernel_idle(page)
    raise AssertionError(f"{what} never queued: the prompt reads {prompt.inner_text()!r}")


def run_all_cells(page) -> None:
    """Run every cell of the visible notebook from the Run menu."""
    first = page.locator(".jp-NotebookPanel:visible .jp-CodeCell").first.locator(".jp-InputPrompt")

    def action() -> None:
        page.locator(".lm-MenuBar-item", has_text=re.compile(r"^Run$")).click()
        page.locator(".lm-Menu-item:visible", has_text=re.compile(r"^Run All Cells")).first.click()

    _until_queued(page, first, action, "the cells")


def run_first_cell(page) -> None:
    """Run the first code cell of the visible notebook (Ctrl+Enter in command mode)."""
    cell = page.locator(".jp-NotebookPanel:visible .jp-Notebook .jp-CodeCell").first

    def action() -> None:
        cell.locator(".jp-InputArea-editor").click()
        page.keyboard.press("Escape")  # command mode on that cell
        page.keyboard.press("Control+Enter")  # run it, stay on it

    _until_queued(page, cell.locator(".jp-InputPrompt"), action, "the cell")
