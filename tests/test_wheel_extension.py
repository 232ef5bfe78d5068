"""The built wheel carries the prebuilt JupyterLab extension and the server-extension switch.

The wheel is built from this checkout (``pip wheel``, the project's own build
backend) and installed without dependencies into an empty prefix; JupyterLab's
own listing command, pointed at that prefix through ``JUPYTER_PATH``, must
then report the extension enabled and OK — what a user sees after
``pip install wavebench``, with no Node anywhere — and the installed config
must switch the server route on.
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
def prefix(tmp_path_factory: pytest.TempPathFactory) -> Path:
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
    subprocess.run([sys.executable, "-m", "pip", "install", "--no-deps", "-q", "--prefix", str(tmp / "prefix"),
                    str(wheel)], check=True, capture_output=True, text=True)  # fmt: skip
    return tmp / "prefix"


def _jupyter(args: list[str], env: dict[str, str]) -> str:
    out = subprocess.run([sys.executable, "-m", "jupyter", *args], capture_output=True, text=True, env=env,
                         check=True)  # fmt: skip
    return ANSI.sub("", out.stdout + out.stderr)


def test_labextension_list_shows_the_installed_extension_enabled_and_ok(prefix: Path, tmp_path: Path) -> None:
    env = {**os.environ, "JUPYTER_PATH": str(prefix / "share" / "jupyter"),
           "JUPYTER_CONFIG_DIR": str(tmp_path / "config")}  # fmt: skip
    text = _jupyter(["labextension", "list"], env)
    section = text.split(str(prefix / "share" / "jupyter" / "labextensions"), 1)[1].split("\n\n", 1)[0]
    assert re.search(r"@wavebench/labextension v\S+ enabled OK \(python, wavebench\)", section), text


def test_the_installed_config_switches_the_server_route_on(prefix: Path) -> None:
    # what `jupyter server extension list` reads from <prefix>/etc/jupyter, and its own validation of the module
    import json

    from jupyter_server.extension.utils import validate_extension

    conf = json.loads((prefix / "etc" / "jupyter" / "jupyter_server_config.d" / "wavebench.json").read_text())
    assert conf == {"ServerApp": {"jpserver_extensions": {"wavebench.labext": True}}}
    validate_extension("wavebench.labext")  # raises when the module has no extension points
