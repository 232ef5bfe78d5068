"""HTTP handlers of the wavebench Jupyter server extension: read-only views of the campaign stores.

``GET <base_url>wavebench/stores``
    ``{"stores": [...], "max_depth": 3}``: every store found below the
    server's root folder (:func:`wavebench.labext.stores.find_stores`).
``GET <base_url>wavebench/stores/<path>``
    One store, ``<path>`` relative to the root, with its manifest, spec text,
    plan and chunk file names
    (:func:`wavebench.labext.stores.describe_store` with ``detail=True``).

Both need an authenticated user allowed to read "contents" (the Jupyter
server's own token or login, and its authorizer). Errors are JSON
``{"message": ...}``: 403 for a path outside the root, 404 for a folder that
is not a store. Nothing outside the root is ever read.

The handler classes are made by :func:`make_handlers` so that this module
imports without Jupyter installed (the engine and its doctests run headless).
"""

from __future__ import annotations

import asyncio
import json
import os
from typing import Any

from .stores import OutsideRoot, describe_store, find_stores, resolve_store

__all__ = ["MAX_DEPTH", "make_handlers"]

#: Folder levels searched below the server root.
MAX_DEPTH = 3


def make_handlers(base_url: str, root_dir: str) -> list[tuple[str, type, dict[str, Any]]]:
    """The extension's URL rules for a Tornado application.

    Parameters
    ----------
    base_url : str
        The server's base URL (``ServerApp.base_url``), e.g. ``"/"``.
    root_dir : str
        The server's root folder; nothing outside it is read.

    Returns
    -------
    list of (pattern, handler class, init kwargs)
    """
    import tornado.web
    from jupyter_server.auth.decorator import authorized
    from jupyter_server.base.handlers import APIHandler
    from jupyter_server.utils import url_path_join

    root = os.path.realpath(root_dir)

    class _StoresBase(APIHandler):  # type: ignore[misc]
        auth_resource = "contents"

        def initialize(self, root_dir: str) -> None:
            self.store_root = root_dir

        def _reply(self, body: dict[str, Any]) -> None:
            self.set_header("Content-Type", "application/json")
            self.set_header("Cache-Control", "no-store")
            self.finish(json.dumps(body, allow_nan=False, default=str))

    class StoresHandler(_StoresBase):
        """``GET wavebench/stores``: the stores below the server root."""

        @tornado.web.authenticated
        @authorized
        async def get(self) -> None:
            loop = asyncio.get_running_loop()
            stores = await loop.run_in_executor(None, lambda: find_stores(self.store_root, max_depth=MAX_DEPTH))
            self._reply({"stores": stores, "max_depth": MAX_DEPTH})

    class StoreHandler(_StoresBase):
        """``GET wavebench/stores/<path>``: one store in detail."""

        @tornado.web.authenticated
        @authorized
        async def get(self, relative: str) -> None:
            try:
                folder = resolve_store(self.store_root, relative)
            except OutsideRoot as exc:
                raise tornado.web.HTTPError(403, str(exc)) from None
            inside = os.path.relpath(folder, os.path.realpath(self.store_root)).replace(os.sep, "/")
            parts = [*relative.split("/"), *inside.split("/")]  # as asked and as resolved (a link to a hidden folder)
            if any(part.startswith(".") for part in parts if part not in ("", ".")):
                raise tornado.web.HTTPError(404, "no campaign store at this path (hidden folders are not served)")
            is_store = os.path.isdir(folder) and (
                os.path.lexists(os.path.join(folder, "manifest.json"))
                or os.path.lexists(os.path.join(folder, "chunks", "plan.json"))
            )
            if not is_store:
                raise tornado.web.HTTPError(404, "no campaign store at this path")
            loop = asyncio.get_running_loop()
            info = await loop.run_in_executor(None, lambda: describe_store(self.store_root, folder, detail=True))
            self._reply(info)

    prefix = url_path_join(base_url, "wavebench", "stores")
    kwargs = {"root_dir": root}
    return [
        (prefix + "/?", StoresHandler, kwargs),
        (prefix + "/(.+)", StoreHandler, kwargs),
    ]
