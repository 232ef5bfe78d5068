"""A real Jupyter server in a subprocess, for tests: free port, isolated folders, start, wait, stop, API requests.

Shared by ``tests/test_labext_routes.py`` (``python -m jupyter_server``) and
``tests/browser/conftest.py`` (``python -m jupyterlab``). The server listens on
127.0.0.1 on a free port with a fixed token; its configuration, data, runtime,
IPython, lab settings and lab workspace folders are fresh folders of the test
(:func:`isolated_env`), so the developer's own Jupyter setup plays no part. Lab
extensions and kernels still come from ``sys.prefix/share/jupyter``, which is
always on Jupyter's data path. The server's output goes to a log file; a server
that exits or does not answer ``/api/status`` in time raises
:class:`ServerStartError` with the end of that log.

Test modules import it by name (``from jupyter_test_server import ...``):
pytest's default "prepend" import mode puts ``tests/`` on ``sys.path`` for the
modules in ``tests/``; ``tests/browser/conftest.py`` adds it for its folder.
(No ``tests/conftest.py``: with ``--doctest-modules`` two ``conftest.py`` files
outside packages clash as module ``conftest``.)
"""

from __future__ import annotations

import json
import os
import socket
import subprocess
import sys
import time
import urllib.error
import urllib.request
from collections.abc import Iterator, Mapping, Sequence
from contextlib import contextmanager
from pathlib import Path

__all__ = [
    "ISOLATED_DIRS",
    "JupyterServer",
    "ServerStartError",
    "api_request",
    "free_port",
    "isolated_env",
    "running_server",
]

#: Environment variables pointing at the folders Jupyter, IPython and JupyterLab read and write;
#: :func:`isolated_env` points each at a fresh folder named after it in lower case.
ISOLATED_DIRS = (
    "JUPYTER_CONFIG_DIR", "JUPYTER_DATA_DIR", "JUPYTER_RUNTIME_DIR", "IPYTHONDIR",
    "JUPYTERLAB_SETTINGS_DIR", "JUPYTERLAB_WORKSPACES_DIR",
)  # fmt: skip

HOST = "127.0.0.1"
#: Lines of the server log quoted in a :class:`ServerStartError`.
LOG_TAIL_LINES = 60


class ServerStartError(RuntimeError):
    """The server exited or did not answer ``/api/status`` in time; the message ends with its log tail."""


def free_port(host: str = HOST) -> int:
    """A TCP port that is free on ``host`` now (the OS picks it; another process may take it before use)."""
    with socket.socket() as s:
        s.bind((host, 0))
        return int(s.getsockname()[1])


def isolated_env(tmp: Path) -> dict[str, str]:
    """A copy of ``os.environ`` with every :data:`ISOLATED_DIRS` folder fresh under ``tmp``, and no ``JUPYTER_TOKEN``.

    Parameters
    ----------
    tmp : Path
        An existing folder; ``tmp / "jupyter_config_dir"`` and the others are created (they must not exist).

    Returns
    -------
    dict of str to str
        The environment for the server (and for anything the test runs beside it, e.g. ``jupyter trust``).
    """
    env = dict(os.environ)
    for var in ISOLATED_DIRS:
        (tmp / var.lower()).mkdir()
        env[var] = str(tmp / var.lower())
    env.pop("JUPYTER_TOKEN", None)
    return env


def api_request(url: str, *, token: str | None, method: str = "GET", timeout_s: float = 20.0) -> tuple[int, str]:
    """One HTTP request with an optional ``Authorization: token ...`` header.

    Returns
    -------
    status : int
        The HTTP status, error statuses included (no exception for 4xx / 5xx).
    body : str
        The body decoded as UTF-8 (undecodable bytes replaced in error bodies).

    Raises
    ------
    OSError
        When no HTTP answer came (connection refused, timeout).
    """
    req = urllib.request.Request(url, method=method)
    if token is not None:
        req.add_header("Authorization", f"token {token}")
    try:
        with urllib.request.urlopen(req, timeout=timeout_s) as resp:
            return resp.status, resp.read().decode("utf-8")
    except urllib.error.HTTPError as err:
        with err:
            return err.code, err.read().decode("utf-8", "replace")


class JupyterServer:
    """A started Jupyter server subprocess.

    Attributes
    ----------
    base : str
        Its URL including the base URL, ending in ``/`` (e.g. ``http://127.0.0.1:8888/wb/``).
    token : str
    log : Path
        Its standard output and error.
    env : dict of str to str
        The environment it runs in.
    proc : subprocess.Popen
    """

    def __init__(self, base: str, token: str, log: Path, env: dict[str, str], proc: subprocess.Popen[bytes]) -> None:
        self.base, self.token, self.log, self.env, self.proc = base, token, log, env, proc

    def request(self, path: str, method: str = "GET") -> tuple[int, str]:
        """An authenticated request to ``base + path`` (see :func:`api_request`)."""
        return api_request(self.base + path, token=self.token, method=method)

    def get(self, path: str) -> tuple[int, str]:
        """An authenticated GET of ``base + path``: (HTTP status, body)."""
        return self.request(path)

    def log_tail(self, lines: int = LOG_TAIL_LINES) -> str:
        """The last ``lines`` lines of the server log ("" when there is none yet)."""
        if not self.log.is_file():
            return ""
        return "\n".join(self.log.read_text(encoding="utf-8", errors="replace").splitlines()[-lines:])

    def wait_ready(self, timeout_s: float, poll_s: float = 0.25) -> None:
        """Poll ``api/status`` until it answers 200.

        Raises
        ------
        ServerStartError
            When the process exits first, or after ``timeout_s`` [s]; with the log's path and tail.
        """
        deadline = time.monotonic() + timeout_s
        while True:
            if self.proc.poll() is not None:
                self._fail(f"exited with code {self.proc.returncode} before answering")
            try:
                if self.get("api/status")[0] == 200:
                    return
            except OSError:
                pass  # not listening yet
            if time.monotonic() > deadline:
                self._fail(f"did not answer {self.base}api/status within {timeout_s:g} s")
            time.sleep(poll_s)

    def _fail(self, what: str) -> None:
        cmd = " ".join(str(a) for a in self.proc.args) if isinstance(self.proc.args, list) else str(self.proc.args)
        raise ServerStartError(
            f"the Jupyter server {what}.\ncommand: {cmd}\nlast lines of its log {self.log}:\n{self.log_tail()}"
        )

    def shutdown_kernels(self) -> None:
        """Shut down every kernel through the REST API (best effort; nothing when the server is gone)."""
        try:
            status, body = self.get("api/kernels")
            if status == 200:
                for k in json.loads(body):
                    self.request(f"api/kernels/{k['id']}", method="DELETE")
        except (OSError, ValueError, KeyError, TypeError):
            pass

    def stop(self, timeout_s: float = 15.0) -> None:
        """Shut the kernels down (so none outlives the server), then terminate the process, killing it if need be."""
        if self.proc.poll() is None:
            self.shutdown_kernels()
            self.proc.terminate()
        try:
            self.proc.wait(timeout=timeout_s)
        except subprocess.TimeoutExpired:
            self.proc.kill()
            self.proc.wait(timeout=10)


@contextmanager
def running_server(
    app_module: str,
    *,
    tmp: Path,
    env: Mapping[str, str],
    root: Path,
    token: str,
    base_url: str = "/",
    args: Sequence[str] = (),
    start_timeout_s: float = 60.0,
) -> Iterator[JupyterServer]:
    """Start ``python -m <app_module>`` as a server, wait until it answers, and stop it on exit.

    Parameters
    ----------
    app_module : str
        ``"jupyter_server"`` or ``"jupyterlab"`` (any module taking Jupyter Server's options).
    tmp : Path
        The test's folder: the working directory, and where ``server.log`` is written.
    env : mapping of str to str
        The environment (usually from :func:`isolated_env`).
    root : Path
        The server's root folder (``--ServerApp.root_dir``).
    token : str
        The token (``--IdentityProvider.token``).
    base_url : str
        ``--ServerApp.base_url``, starting and ending with ``/``.
    args : sequence of str
        Further command-line options.
    start_timeout_s : float
        How long to wait for ``/api/status`` [s].

    Yields
    ------
    JupyterServer
        Listening on 127.0.0.1 on a free port; stopped (kernels shut down, process terminated, log closed)
        when the ``with`` block ends, however it ends.

    Raises
    ------
    ServerStartError
        When the server exits or does not answer in time.
    """
    if not (base_url.startswith("/") and base_url.endswith("/")):
        raise ValueError(f"base_url: got {base_url!r}; allowed: a path starting and ending with '/'")
    port = free_port()
    cmd = [sys.executable, "-m", app_module, "--no-browser", f"--ip={HOST}", f"--port={port}",
           "--ServerApp.port_retries=0", f"--IdentityProvider.token={token}", f"--ServerApp.root_dir={root}"]  # fmt: skip
    if base_url != "/":
        cmd.append(f"--ServerApp.base_url={base_url}")
    cmd.extend(args)
    if hasattr(os, "geteuid") and os.geteuid() == 0:
        cmd.append("--allow-root")
    log = tmp / "server.log"
    with open(log, "wb") as fh:
        proc = subprocess.Popen(cmd, stdout=fh, stderr=subprocess.STDOUT, env=dict(env), cwd=tmp)
        server = JupyterServer(f"http://{HOST}:{port}{base_url}", token, log, dict(env), proc)
        try:
            server.wait_ready(start_timeout_s)
            yield server
        finally:
            server.stop()
