"""Find and describe campaign stores under a root folder, reading only JSON, TOML and file names.

This is the data side of the ``/wavebench/stores`` routes of the Jupyter
server extension (:mod:`wavebench.labext`). It imports no engine module (no
numba, no numpy): a store is read as plain files, the layout written by
:mod:`wavebench.campaign.store` and :mod:`wavebench.campaign.chunks`:

* a finished store holds ``manifest.json`` (``format = "wavebench-store"``),
  ``spec.toml``, ``metrics.parquet`` (one row per trial), ``verdicts.json``
  and, once reported, ``report.html``;
* a campaign still running (or interrupted) holds ``chunks/plan.json`` (the
  planned trial count) and one ``chunks/metrics-<first>-<last>.parquet`` per
  finished chunk of trials ``first`` to ``last``.

Everything is confined to the root: paths are resolved with
:func:`os.path.realpath` and any file or folder that resolves outside the
root (through ``..`` or a symbolic link) is refused, never read. A store
whose files cannot be read or make no sense is still described, with an
``error`` saying what is wrong.
"""

from __future__ import annotations

import datetime as _dt
import json
import os
import re
import stat
import sys
import time
from collections.abc import Iterator
from typing import Any

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover - Python 3.10
    import tomli as tomllib

__all__ = [
    "RUNNING_WINDOW_S",
    "SKIPPED_FOLDERS",
    "STORE_FORMAT",
    "OutsideRoot",
    "describe_store",
    "find_stores",
    "resolve_store",
]

#: ``format`` of a finished store's manifest (the same string as
#: :data:`wavebench.campaign.store.STORE_FORMAT`, repeated here so that the
#: server does not import the engine).
STORE_FORMAT = "wavebench-store"
#: A campaign whose chunk folder changed within this many seconds is "running".
RUNNING_WINDOW_S = 120.0
#: Folder names never searched (besides every name starting with a dot).
SKIPPED_FOLDERS = frozenset({"node_modules", "__pycache__", "site-packages", "timeseries.zarr"})
#: Largest JSON or TOML file read [bytes]; a larger one is reported, not read.
MAX_TEXT_BYTES = 4_000_000
#: Most folders visited by one search, so that a huge tree cannot stall the server.
MAX_FOLDERS = 20_000
#: Most stores listed by one search.
MAX_STORES = 1_000

_CHUNK_RE = re.compile(r"^metrics-(\d+)-(\d+)\.parquet$")


class OutsideRoot(ValueError):
    """A path that is absolute, climbs with ``..`` or resolves outside the root."""


class _Unreadable(Exception):
    """A store file that is missing, too large, outside the root, or not what it should be."""


def _inside(root: str, path: str) -> str | None:
    """``realpath(path)`` when it lies within ``root`` (itself a realpath), else None."""
    real = os.path.realpath(path)
    try:
        if os.path.commonpath([root, real]) == root:
            return real
    except ValueError:  # different drives
        pass
    return None


def resolve_store(root: str | os.PathLike[str], relative: str) -> str:
    """The real path of ``root/relative``, refusing anything outside the root.

    Parameters
    ----------
    root : path-like
        The server's root folder.
    relative : str
        A POSIX path relative to the root, as sent by a client (already
        percent-decoded).

    Returns
    -------
    str
        The resolved folder (it may not exist).

    Raises
    ------
    OutsideRoot
        ``relative`` is empty, absolute, holds a ``..`` component, a NUL
        or a backslash, or resolves (through a symbolic link) outside the root.

    Examples
    --------
    >>> import tempfile
    >>> with tempfile.TemporaryDirectory() as tmp:
    ...     os.path.basename(resolve_store(tmp, "runs/a"))
    'a'
    >>> resolve_store("/srv/work", "../etc")
    Traceback (most recent call last):
    ...
    wavebench.labext.stores.OutsideRoot: '..' is not allowed in a store path
    """
    root_real = os.path.realpath(os.fspath(root))
    if not relative or "\x00" in relative or "\\" in relative:
        raise OutsideRoot("the store path must be a non-empty POSIX path relative to the server root")
    if relative.startswith("/") or os.path.isabs(relative):
        raise OutsideRoot("absolute paths are not allowed; give a path relative to the server root")
    parts = [p for p in relative.split("/") if p not in ("", ".")]
    if ".." in parts:
        raise OutsideRoot("'..' is not allowed in a store path")
    if not parts:
        raise OutsideRoot("the store path must name a folder below the server root")
    real = _inside(root_real, os.path.join(root_real, *parts))
    if real is None:
        raise OutsideRoot("the store path resolves outside the server root")
    return real


def _walk(root: str, max_depth: int) -> Iterator[str]:
    """Folders below ``root`` (real, not symbolic links) to ``max_depth`` levels, stores not entered."""
    stack = [(root, 0)]
    visited = 0
    while stack:
        folder, depth = stack.pop()
        visited += 1
        if visited > MAX_FOLDERS:
            return
        if folder != root and _is_store(folder):
            yield folder
            continue
        if depth >= max_depth:
            continue
        try:
            with os.scandir(folder) as entries:
                subs = sorted(
                    e.path
                    for e in entries
                    if not e.name.startswith(".") and e.name not in SKIPPED_FOLDERS and e.is_dir(follow_symlinks=False)
                )
        except OSError:  # permission denied, vanished: not searched
            continue
        stack.extend((s, depth + 1) for s in reversed(subs))


def _is_store(folder: str) -> bool:
    return os.path.lexists(os.path.join(folder, "manifest.json")) or os.path.lexists(
        os.path.join(folder, "chunks", "plan.json")
    )


def find_stores(
    root: str | os.PathLike[str],
    *,
    max_depth: int = 3,
    running_window_s: float = RUNNING_WINDOW_S,
    now: float | None = None,
) -> list[dict[str, Any]]:
    """Every campaign store below ``root``, described by :func:`describe_store`.

    Parameters
    ----------
    root : path-like
        The folder searched (the Jupyter server's root).
    max_depth : int
        Folder levels searched below the root (``runs/a`` is level 2).
        Folders whose name starts with a dot and those of
        :data:`SKIPPED_FOLDERS` are not searched, symbolic links are not
        followed, and a store's own folder is not searched further.
    running_window_s : float
        See :func:`describe_store` [s].
    now : float, optional
        Current time, seconds since the epoch (default: the clock).

    Returns
    -------
    list of dict
        Sorted by ``path``; at most :data:`MAX_STORES`.
    """
    root_real = os.path.realpath(os.fspath(root))
    now = time.time() if now is None else now
    out = []
    for folder in _walk(root_real, max_depth):
        out.append(describe_store(root_real, folder, running_window_s=running_window_s, now=now))
        if len(out) >= MAX_STORES:
            break
    return sorted(out, key=lambda s: s["path"])


def _read_text(root: str, path: str, name: str) -> str:
    real = _inside(root, path)
    if real is None:
        raise _Unreadable(f"{name} points outside the server root (not read)")
    try:
        st = os.stat(real)
        if not stat.S_ISREG(st.st_mode):  # a FIFO or device would block or never end
            raise _Unreadable(f"{name} is not a regular file (not read)")
        size = st.st_size
        if size > MAX_TEXT_BYTES:
            raise _Unreadable(f"{name} is too large to read ({size} bytes)")
        with open(real, encoding="utf-8") as fh:
            return fh.read(MAX_TEXT_BYTES + 1)
    except FileNotFoundError:
        raise _Unreadable(f"{name} is missing") from None
    except PermissionError:
        raise _Unreadable(f"{name} cannot be read (permission denied)") from None
    except IsADirectoryError:
        raise _Unreadable(f"{name} is a folder, not a file") from None
    except UnicodeDecodeError:
        raise _Unreadable(f"{name} is not UTF-8 text") from None
    except OSError as exc:
        raise _Unreadable(f"{name} cannot be read ({exc.strerror or type(exc).__name__})") from None


def _no_constant(word: str) -> Any:
    raise ValueError(f"{word} is not a JSON number")


def _read_json(root: str, path: str, name: str) -> Any:
    text = _read_text(root, path, name)
    try:
        return json.loads(text, parse_constant=_no_constant)
    except ValueError as exc:
        if not isinstance(exc, json.JSONDecodeError):  # NaN / Infinity: not JSON, and not answerable as JSON
            raise _Unreadable(f"{name} is not valid JSON ({exc})") from None
        raise _Unreadable(f"{name} is not valid JSON ({exc.msg} at line {exc.lineno} column {exc.colno})") from None
    except RecursionError:
        raise _Unreadable(f"{name} is nested too deeply to read") from None


def _read_spec(root: str, folder: str) -> tuple[str, dict[str, Any]]:
    text = _read_text(root, os.path.join(folder, "spec.toml"), "spec.toml")
    try:
        return text, tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise _Unreadable(f"spec.toml is not valid TOML ({exc})") from None


def _whole(value: Any) -> int | None:
    return value if isinstance(value, int) and not isinstance(value, bool) and value >= 0 else None


def _spec_fields(spec: dict[str, Any]) -> tuple[str | None, int | None]:
    scenario = spec.get("scenario")
    campaign = spec.get("campaign")
    name = scenario.get("name") if isinstance(scenario, dict) else None
    trials = campaign.get("trials") if isinstance(campaign, dict) else None
    return (name if isinstance(name, str) else None), _whole(trials)


def _parquet_rows(root: str, path: str) -> int:
    real = _inside(root, path)
    if real is None:
        raise _Unreadable("metrics.parquet points outside the server root (not read)")
    if not os.path.isfile(real):
        raise _Unreadable("metrics.parquet is missing")
    try:
        import pyarrow.parquet as pq

        return int(pq.read_metadata(real).num_rows)
    except PermissionError:
        raise _Unreadable("metrics.parquet cannot be read (permission denied)") from None
    except Exception as exc:  # pyarrow raises its own types for a damaged file
        raise _Unreadable(f"metrics.parquet cannot be read ({type(exc).__name__})") from None


def _verdicts(data: Any) -> dict[str, str]:
    if not isinstance(data, list):
        raise _Unreadable("verdicts.json must hold a list of verdicts")
    out: dict[str, str] = {}
    for item in data:
        if not (isinstance(item, dict) and isinstance(item.get("name"), str)
                and item.get("verdict") in ("pass", "fail", "undecided")):  # fmt: skip
            raise _Unreadable("verdicts.json holds an entry without a name and a pass/fail/undecided verdict")
        out[item["name"]] = item["verdict"]
    return out


def _iso(t: float | None) -> str | None:
    if t is None:
        return None
    return _dt.datetime.fromtimestamp(t, _dt.timezone.utc).isoformat(timespec="seconds")


def _mtime(path: str) -> float | None:
    try:
        return os.stat(path, follow_symlinks=False).st_mtime
    except OSError:
        return None


def _chunks(root: str, folder: str) -> tuple[int, float | None, list[str]]:
    """Trials in finished chunk files (from their names), the newest change in the chunk folder, chunk names."""
    chunks = os.path.join(folder, "chunks")
    if _inside(root, chunks) is None:
        raise _Unreadable("chunks points outside the server root (not read)")
    done = 0
    names = []
    newest = _mtime(chunks)
    try:
        with os.scandir(chunks) as entries:
            for e in entries:
                t = _mtime(e.path)
                if t is not None and (newest is None or t > newest):
                    newest = t
                m = _CHUNK_RE.match(e.name)
                if m is not None:
                    first, last = int(m.group(1)), int(m.group(2))
                    if last >= first:
                        done += last - first + 1
                        names.append(e.name)
    except PermissionError:
        raise _Unreadable("the chunks folder cannot be listed (permission denied)") from None
    except OSError as exc:
        raise _Unreadable(f"the chunks folder cannot be listed ({exc.strerror or type(exc).__name__})") from None
    return done, newest, sorted(names)


def describe_store(
    root: str | os.PathLike[str],
    folder: str | os.PathLike[str],
    *,
    detail: bool = False,
    running_window_s: float = RUNNING_WINDOW_S,
    now: float | None = None,
) -> dict[str, Any]:
    """What a store folder holds, as a JSON-safe dict; never raises for a damaged store.

    Parameters
    ----------
    root : path-like
        The server root (paths are given relative to it; nothing outside it is read).
    folder : path-like
        The store folder, inside ``root``.
    detail : bool
        Add ``manifest`` (dict or None), ``spec`` (the text of
        ``spec.toml`` or None), ``plan`` (``chunks/plan.json`` or None) and
        ``chunk_files`` (names).
    running_window_s : float
        A campaign with ``chunks/plan.json`` is "running" when a file of its
        chunk folder changed within this many seconds, else "interrupted" [s].
    now : float, optional
        Current time, seconds since the epoch (default: the clock).

    Returns
    -------
    dict
        ``path`` (POSIX, relative to the root), ``name`` (folder name),
        ``scenario``, ``craft``, ``trials_done``, ``trials_planned``,
        ``state`` ("finished", "running", "interrupted" or "unknown"),
        ``verdicts`` ({requirement name: "pass" | "fail" | "undecided"}),
        ``has_report``, ``modified_utc`` (ISO 8601, newest change of the
        store's own files), ``error`` (None, or what is wrong, sentences
        joined by "; "). Unknown values are None.

    Notes
    -----
    Done trials of a finished store are the rows of ``metrics.parquet``
    (read from the Parquet footer only); planned trials are
    ``[campaign] trials`` of ``spec.toml`` (the manifest's ``trials`` when
    the spec cannot be read). A campaign in progress counts the trials of
    its finished chunk files from their names, ``last - first + 1`` each,
    and takes the planned count from ``chunks/plan.json``.
    """
    root_real = os.path.realpath(os.fspath(root))
    path = os.path.realpath(os.fspath(folder))
    now = time.time() if now is None else now
    rel = os.path.relpath(path, root_real).replace(os.sep, "/")
    info: dict[str, Any] = {
        "path": rel, "name": os.path.basename(path), "scenario": None, "craft": None,
        "trials_done": None, "trials_planned": None, "state": "unknown", "verdicts": {},
        "has_report": False, "modified_utc": None, "error": None,
    }  # fmt: skip
    extra: dict[str, Any] = {"manifest": None, "spec": None, "plan": None, "chunk_files": []}
    errors: list[str] = []
    try:
        _fill(root_real, path, info, extra, errors, running_window_s, now)
    except Exception as exc:  # a store is described even when something unforeseen breaks
        errors.append(f"the store cannot be read ({type(exc).__name__})")
    if errors:
        info["error"] = "; ".join(errors)
    if detail:
        info.update(extra)
    return info


def _fill(root: str, path: str, info: dict[str, Any], extra: dict[str, Any], errors: list[str],
          running_window_s: float, now: float) -> None:  # fmt: skip
    if _inside(root, path) is None:
        errors.append("the store folder lies outside the server root (not read)")
        return
    newest = None
    try:
        with os.scandir(path) as entries:
            for e in entries:
                t = _mtime(e.path)
                if t is not None and (newest is None or t > newest):
                    newest = t
    except OSError:
        newest = _mtime(path)
    info["modified_utc"] = _iso(newest)
    report = os.path.join(path, "report.html")
    info["has_report"] = os.path.isfile(report) and _inside(root, report) is not None

    spec: dict[str, Any] | None = None
    try:
        extra["spec"], spec = _read_spec(root, path)
        info["scenario"], info["trials_planned"] = _spec_fields(spec)
    except _Unreadable as exc:
        spec_error = str(exc)
    else:
        spec_error = None

    in_progress = os.path.lexists(os.path.join(path, "chunks", "plan.json"))
    if in_progress:
        _fill_in_progress(root, path, info, extra, errors, running_window_s, now)
        if spec_error is not None and info["scenario"] is None:
            errors.append(spec_error)
        return
    info["state"] = "finished"
    manifest: Any = None
    try:
        manifest = _read_json(root, os.path.join(path, "manifest.json"), "manifest.json")
        if not isinstance(manifest, dict):
            raise _Unreadable("manifest.json must hold a JSON object")
        if manifest.get("format") != STORE_FORMAT:
            raise _Unreadable(
                f"manifest.json has format {manifest.get('format')!r}, not {STORE_FORMAT!r}: not a wavebench store"
            )
    except _Unreadable as exc:
        errors.append(str(exc))
        info["state"] = "unknown"
        extra["manifest"] = manifest if isinstance(manifest, dict) else None
        return
    extra["manifest"] = manifest
    if spec_error is not None:
        errors.append(spec_error)
    if info["scenario"] is None and isinstance(manifest.get("scenario"), str):
        info["scenario"] = manifest["scenario"]
    if isinstance(manifest.get("craft"), str):
        info["craft"] = manifest["craft"]
    if info["trials_planned"] is None:
        info["trials_planned"] = _whole(manifest.get("trials"))
    if manifest.get("complete") is False:
        errors.append("the manifest says the campaign did not complete")
    try:
        info["trials_done"] = _parquet_rows(root, os.path.join(path, "metrics.parquet"))
    except _Unreadable as exc:
        errors.append(str(exc))
    try:
        info["verdicts"] = _verdicts(_read_json(root, os.path.join(path, "verdicts.json"), "verdicts.json"))
    except _Unreadable as exc:
        errors.append(str(exc))


def _fill_in_progress(root: str, path: str, info: dict[str, Any], extra: dict[str, Any], errors: list[str],
                      running_window_s: float, now: float) -> None:  # fmt: skip
    try:
        plan = _read_json(root, os.path.join(path, "chunks", "plan.json"), "chunks/plan.json")
        if not isinstance(plan, dict):
            raise _Unreadable("chunks/plan.json must hold a JSON object")
        extra["plan"] = plan
        planned = _whole(plan.get("trials"))
        if planned is None:
            raise _Unreadable("chunks/plan.json has no whole-number 'trials'")
        info["trials_planned"] = planned
        attrs = plan.get("series_attrs")
        if isinstance(attrs, dict) and isinstance(attrs.get("scenario"), str) and info["scenario"] is None:
            info["scenario"] = attrs["scenario"]
    except _Unreadable as exc:
        errors.append(str(exc))
    try:
        done, newest, names = _chunks(root, path)
    except _Unreadable as exc:
        errors.append(str(exc))
        return
    info["trials_done"] = done
    extra["chunk_files"] = names
    recent = newest is not None and now - newest <= running_window_s
    info["state"] = "running" if recent else "interrupted"
