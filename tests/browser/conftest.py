"""Fixtures for the browser tests: one real JupyterLab server and one headless chromium per session.

The server is ``python -m jupyterlab`` in a subprocess on 127.0.0.1, a free port and a
token, with its configuration, runtime, IPython, settings and workspace folders in a
temporary folder; the lab extensions and kernels still come from the environment's
``sys.prefix/share/jupyter`` (always on Jupyter's data path), and the wavebench server
extension is switched on in the test's own config folder. Starting, waiting and stopping
are ``tests/jupyter_test_server.py``'s, shared with ``tests/test_labext_routes.py``.

On a failed test the page is saved as a screenshot and the server log is copied, both
under ``tests/browser/artifacts/<test name>/``; their paths are printed in the report.
"""

from __future__ import annotations

import json
import os
import re
import shutil
import sys
from collections.abc import Iterator
from pathlib import Path

import pytest

# the server helpers in tests/ are shared with tests/test_labext_routes.py; pytest's default "prepend" import mode
# puts tests/ on sys.path only when it imports a module from there, not when only tests/browser runs
_TESTS_DIR = str(Path(__file__).resolve().parents[1])
if _TESTS_DIR not in sys.path:
    sys.path.insert(0, _TESTS_DIR)
from jupyter_test_server import JupyterServer, isolated_env, running_server  # noqa: E402

CHROMIUM = Path(os.environ.get("WAVEBENCH_CHROMIUM", "/usr/bin/chromium"))  # the variable: for a check of the message
CHROMIUM_ARGS = [
    "--no-sandbox", "--disable-gpu", "--disable-quic", "--disable-background-networking",
    "--disable-component-update", "--disable-sync", "--no-first-run",
]  # fmt: skip
TOKEN = "wavebench-browser-test-9c3a"
ARTIFACTS = Path(__file__).resolve().parent / "artifacts"
START_TIMEOUT_S = 60.0


class Lab:
    """A running JupyterLab: base URL, server root folder, log file and the environment it runs in."""

    def __init__(self, server: JupyterServer, root: Path) -> None:
        self.server, self.root = server, root
        self.base, self.log, self.env = server.base, server.log, server.env

    def url(self, path: str = "lab") -> str:
        sep = "&" if "?" in path else "?"
        return f"{self.base}{path}{sep}token={TOKEN}"

    def open(self, page, path: str = "lab") -> None:
        """Load JupyterLab at ``path`` in ``page`` (workspace reset) and wait for its main area."""
        page.goto(self.url(path + ("&" if "?" in path else "?") + "reset"))
        page.locator("#jp-main-dock-panel").wait_for(state="visible", timeout=60_000)
        page.locator("#jp-main-dock-panel .lm-DockPanel-widget").first.wait_for(state="visible", timeout=60_000)

    def api(self, path: str, method: str = "GET") -> tuple[int, str]:
        return self.server.request(path, method=method)


@pytest.fixture(scope="session")
def lab(tmp_path_factory: pytest.TempPathFactory) -> Iterator[Lab]:
    tmp = tmp_path_factory.mktemp("lab")
    root = tmp / "root"
    root.mkdir()
    env = isolated_env(tmp)
    settings = tmp / "jupyterlab_settings_dir"
    # no news / update toasts over the page (JupyterLab's notification settings)
    notif = settings / "@jupyterlab" / "apputils-extension"
    notif.mkdir(parents=True)
    (notif / "notification.jupyterlab-settings").write_text(
        json.dumps({"fetchNews": "false", "checkForUpdates": False}), encoding="utf-8"
    )
    # the wavebench server extension switched on in the test's own config folder (besides any
    # jupyter_server_config.d file of the environment, which Jupyter reads from sys.prefix/etc/jupyter)
    (tmp / "jupyter_config_dir" / "jupyter_server_config.json").write_text(
        json.dumps({"ServerApp": {"jpserver_extensions": {"wavebench.labext": True}}}), encoding="utf-8"
    )
    args = [f"--LabApp.user_settings_dir={settings}", f"--LabApp.workspaces_dir={tmp / 'jupyterlab_workspaces_dir'}",
            "--LabApp.news_url=None"]  # fmt: skip
    with running_server("jupyterlab", tmp=tmp, env=env, root=root, token=TOKEN, args=args,
                        start_timeout_s=START_TIMEOUT_S) as server:  # fmt: skip
        yield Lab(server, root)


@pytest.fixture(scope="session")
def browser() -> Iterator[object]:
    if not CHROMIUM.is_file():
        pytest.fail(f"the browser tests need a chromium at {CHROMIUM} (Debian: apt-get install -y chromium); "
                    "it is missing", pytrace=False)  # fmt: skip
    try:
        from playwright.sync_api import sync_playwright
    except ImportError:
        pytest.fail("the browser tests need the 'playwright' Python package (pip install playwright; "
                    "no 'playwright install': the system chromium is used)", pytrace=False)  # fmt: skip
    pw = sync_playwright().start()
    try:
        b = pw.chromium.launch(executable_path=str(CHROMIUM), headless=True, args=CHROMIUM_ARGS)
        try:
            yield b
        finally:
            b.close()
    finally:
        pw.stop()


@pytest.fixture
def page(browser, lab: Lab) -> Iterator[object]:
    """A fresh browser context and page per test (blank: the test opens JupyterLab when its files are ready)."""
    context = browser.new_context(viewport={"width": 1400, "height": 900})
    context.set_default_timeout(30_000)
    pg = context.new_page()
    try:
        yield pg
    finally:
        context.close()


def _artifact_name(nodeid: str) -> str:
    return re.sub(r"[^A-Za-z0-9_.-]+", "_", nodeid.split("::", 1)[-1])[:120]


@pytest.hookimpl(hookwrapper=True)
def pytest_runtest_makereport(item: pytest.Item, call: pytest.CallInfo) -> Iterator[None]:
    outcome = yield
    rep = outcome.get_result()
    if rep.when not in ("setup", "call") or not rep.failed or hasattr(rep, "wasxfail"):
        return
    folder = ARTIFACTS / _artifact_name(item.nodeid)
    folder.mkdir(parents=True, exist_ok=True)
    lines = []
    pg = item.funcargs.get("page") if hasattr(item, "funcargs") else None
    if pg is not None:
        shot = folder / "screenshot.png"
        try:
            pg.screenshot(path=str(shot), full_page=True, timeout=15_000)
            lines.append(f"screenshot: {shot}")
        except Exception as err:  # the page may be gone; report it, keep the test's own failure
            lines.append(f"screenshot failed: {err!r}")
    srv = item.funcargs.get("lab") if hasattr(item, "funcargs") else None
    if srv is not None and srv.log.is_file():
        log = folder / "server.log"
        shutil.copy(srv.log, log)
        lines.append(f"server log: {log}")
    if lines:
        text = "\n".join(lines)
        rep.sections.append(("browser artifacts", text))
        sys.stderr.write("\n" + text + "\n")
