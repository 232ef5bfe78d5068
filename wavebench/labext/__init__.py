"""Jupyter server extension of wavebench: the campaign stores under the server root, for the JupyterLab panel.

Enabled by ``jupyter-config/jupyter_server_config.d/wavebench.json`` (installed
with the package) or by hand::

    jupyter server --ServerApp.jpserver_extensions='{"wavebench.labext": true}'

Routes (read-only, authenticated like every Jupyter API):
``GET <base_url>wavebench/stores`` and ``GET <base_url>wavebench/stores/<path>``
(:mod:`wavebench.labext.handlers`). Reading a store needs no engine module
(:mod:`wavebench.labext.stores`), so the server stays light.
"""

from __future__ import annotations

from typing import Any

__all__: list[str] = []


def _jupyter_server_extension_points() -> list[dict[str, str]]:
    """Where Jupyter finds the extension: this module."""
    return [{"module": "wavebench.labext"}]


def _load_jupyter_server_extension(serverapp: Any) -> None:
    """Add the ``wavebench/stores`` handlers to a running Jupyter server."""
    from .handlers import make_handlers

    web_app = serverapp.web_app
    root_dir = web_app.settings.get("server_root_dir") or serverapp.root_dir
    web_app.add_handlers(".*$", make_handlers(web_app.settings["base_url"], root_dir))
    serverapp.log.info("wavebench: campaign stores served under %swavebench/stores", web_app.settings["base_url"])
