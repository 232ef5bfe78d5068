"""The built wheel carries the prebuilt JupyterLab extension and the server-extension switch.

The wheel is built from this checkout (``pip wheel``: the project's build
backend, whose hatch-jupyter-builder hook builds widgets/ with npm when the
built extension is not there yet). It is then installed, with its
dependencies and JupyterLab, into a fresh virtual environment whose ``PATH``
holds that environment's own scripts and nothing else, so no Node can take
part — what a user sees after ``pip install wavebench``. JupyterLab's own
listing commands, run from that environment, must report the front-end
extension enabled and OK and the server extension enabled, and the installed
config must switch the server route on.
"""

from __future__ import annotations

import os
import re
import subprocess
import sys
import zipfile
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
ANSI = re.compile(r"\x1b\[[0-9;]*m")


@pytest.fixture(scope="module")
def fresh_venv(tmp_path_factory: pytest.TempPathFactory) -> Path:
    tmp = tmp_path_factory.mktemp("wheel")
    subprocess.run([sys.executable, "-m", "pip", "wheel", "--no-deps", "-q", "-w", str(tmp / "dist"), str(ROOT)],
                   check=True, capture_output=True, text=True)  # fmt: skip
    (wheel,) = (tmp / "dist").glob("wavebench-*.whl")
    names = zipfile.ZipFile(wheel).namelist()
    data = "wavebench-" + wheel.name.split("-")[1] + ".data/data/"
    for member in ("share/jupyter/labextensions/@wavebench/labextension/package.json",
                   "share/jupyter/labextensions/@wavebench/labextension/install.json",
                   "etc/jupyter/jupyter_server_config.d/wavebench.json"):  # fmt: skip
        assert data + member in names, member
    static = data + "share/jupyter/labextensions/@wavebench/labextension/static/"
    assert any(n.startswith(static + "remoteEntry.") and n.endswith(".js") for n in names), "no remoteEntry*.js"
    assert static + "style.js" in names
    venv = tmp / "fresh"
    subprocess.run([sys.executable, "-m", "venv", str(venv)], check=True, capture_output=True, text=True)
    subprocess.run([str(venv / "bin" / "python"), "-m", "pip", "install", "-q", str(wheel), "jupyterlab"],
                   check=True, capture_output=True, text=True, env=_bare_env(venv))  # fmt: skip
    return venv


def _bare_env(venv: Path) -> dict[str, str]:
    """The environment of a shell in ``venv`` with nothing else on PATH (so no Node)."""
    keep = {k: v for k, v in os.environ.items() if k in ("HOME", "LANG", "LC_ALL", "TMPDIR") or k.startswith("PIP_")}
    return {**keep, "PATH": str(venv / "bin"), "VIRTUAL_ENV": str(venv)}


def _jupyter(venv: Path, args: list[str], tmp_path: Path) -> str:
    env = {**_bare_env(venv), "JUPYTER_CONFIG_DIR": str(tmp_path / "config"), "JUPYTER_DATA_DIR": str(tmp_path / "data")}
    out = subprocess.run([str(venv / "bin" / "jupyter"), *args], capture_output=True, text=True, env=env,
                         check=True)  # fmt: skip
    return ANSI.sub("", out.stdout + out.stderr)


def test_labextension_list_shows_the_installed_extension_enabled_and_ok(fresh_venv: Path, tmp_path: Path) -> None:
    text = _jupyter(fresh_venv, ["labextension", "list"], tmp_path)
    section = text.split(str(fresh_venv / "share" / "jupyter" / "labextensions"), 1)[1].split("\n\n", 1)[0]
    assert re.search(r"@wavebench/labextension v\S+ enabled OK \(python, wavebench\)", section), text


def test_server_extension_list_shows_the_route_enabled(fresh_venv: Path, tmp_path: Path) -> None:
    text = _jupyter(fresh_venv, ["server", "extension", "list"], tmp_path)
    assert re.search(r"wavebench\.labext enabled", text), text
    assert re.search(r"wavebench\.labext\s+OK", text), text


def test_the_installed_config_switches_the_server_route_on(fresh_venv: Path) -> None:
    # what `jupyter server extension list` reads from <venv>/etc/jupyter, and jupyter_server's own validation of
    # the installed module, run in the fresh environment
    import json

    conf = json.loads((fresh_venv / "etc" / "jupyter" / "jupyter_server_config.d" / "wavebench.json").read_text())
    assert conf == {"ServerApp": {"jpserver_extensions": {"wavebench.labext": True}}}
    check = "from jupyter_server.extension.utils import validate_extension as v; v('wavebench.labext')"
    subprocess.run([str(fresh_venv / "bin" / "python"), "-c", check], check=True, capture_output=True, text=True,
                   env=_bare_env(fresh_venv))  # fmt: skip
