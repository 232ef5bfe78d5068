"""Reading, writing and hashing spec files.

:func:`load_spec` parses TOML (``tomllib``, or ``tomli`` before Python 3.11)
and validates it into a frozen :class:`~wavebench.spec.schema.Spec`;
:func:`dump_spec` writes the canonical TOML text back (tables in schema
order, distributions as inline tables, literals formatted by ``tomli_w``).
Load -> dump -> load gives an equal object, and the text is stable after one
round. No code is ever evaluated: a spec is plain data.

:func:`spec_hash` identifies a spec by content.
"""

from __future__ import annotations

import dataclasses
import hashlib
import json
import os
import sys
from collections.abc import Sequence
from pathlib import Path
from typing import Any

import tomli_w

from ..core.errors import ParameterError
from ..core.params import Params
from .distributions import distribution_to_data
from .fields import DIST_TYPES, SpecTable, params_tree_to_data
from .schema import Spec, spec_from_data, spec_to_data

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover
    import tomli as tomllib

__all__ = [
    "apply_settings",
    "dump_spec",
    "example_spec_names",
    "example_spec_path",
    "load_spec",
    "save_spec",
    "spec_hash",
]

_SPECS_DIR = Path(__file__).resolve().parent.parent / "data" / "specs"


def example_spec_names() -> list[str]:
    """Names of the built-in example specs (files in ``wavebench/data/specs``)."""
    return sorted(p.stem for p in _SPECS_DIR.glob("*.toml"))


def example_spec_path(name: str) -> Path:
    """Path of a built-in example spec, e.g. ``example_spec_path("skerrow_sound")``."""
    names = example_spec_names()
    if name not in names:
        raise ParameterError("example", name, f"must be one of {names}")
    return _SPECS_DIR / f"{name}.toml"


def apply_settings(data: dict[str, Any], settings: Sequence[str]) -> dict[str, Any]:
    """Set fields of a spec's TOML data from ``"dotted.path=value"`` strings (a what-if from the command line).

    Parameters
    ----------
    data : dict
        The parsed TOML document (changed in place and returned).
    settings : sequence of str
        Each ``"table.sub.key=value"``; the value is read as a TOML value
        (``3.0``, ``"ekf"``, ``[[0.0, 10.0]]``, ``{ uniform = [1.0, 2.0] }``)
        or, if it is not one, as a bare string (``dead_reckoning``); an empty
        value removes the field or table (``stack.terrain=``). Missing tables
        are created; the schema checks the result as usual.

    Returns
    -------
    dict

    Raises
    ------
    ParameterError
        For a setting without ``=`` or with an empty path, or a path through a
        value that is not a table.

    Examples
    --------
    >>> apply_settings({"stack": {"navigator": "truth"}}, ["stack.navigator=ekf", "campaign.trials=20"])
    {'stack': {'navigator': 'ekf'}, 'campaign': {'trials': 20}}
    >>> apply_settings({"stack": {"navigator": "terrain", "terrain": {}}}, ["stack.navigator=dead_reckoning",
    ...                "stack.terrain="])
    {'stack': {'navigator': 'dead_reckoning'}}
    """
    for item in settings:
        path, sep, raw = item.partition("=")
        keys = [k.strip() for k in path.split(".")]
        if not sep or not all(keys):
            raise ParameterError("--set", item, "must be dotted.path=value, e.g. stack.navigator=ekf")
        node = data
        for depth, key in enumerate(keys[:-1]):
            node = node.setdefault(key, {})
            if not isinstance(node, dict):
                raise ParameterError("--set", item, f"'{'.'.join(keys[: depth + 1])}' is a value, not a table")
        if not raw.strip():
            node.pop(keys[-1], None)
            continue
        try:
            node[keys[-1]] = tomllib.loads(f"v = {raw.strip()}")["v"]
        except tomllib.TOMLDecodeError:
            node[keys[-1]] = raw.strip()
    return data


def load_spec(source: str | os.PathLike[str], settings: Sequence[str] = ()) -> Spec:
    """Load and validate a spec.

    Parameters
    ----------
    source : str or path-like
        A path (``os.PathLike``, or a one-line string ending in ``.toml``) or
        the TOML text itself.
    settings : sequence of str, optional
        ``"dotted.path=value"`` changes applied before validation (see
        :func:`apply_settings`).

    Returns
    -------
    Spec
        The frozen, validated spec.

    Raises
    ------
    ParameterError
        For text that is not TOML, and for every schema violation, naming the
        TOML path of the offending field (see
        :func:`~wavebench.spec.schema.spec_from_data`).
    """
    if isinstance(source, os.PathLike) or ("\n" not in source and source.strip().endswith(".toml")):
        path = Path(source)
        if not path.is_file():
            raise ParameterError("spec", str(path), "no such spec file")
        try:
            text = path.read_text(encoding="utf-8")
        except UnicodeDecodeError as exc:
            raise ParameterError(str(path), f"byte {exc.start}", "must be UTF-8 text (TOML files are UTF-8)") from None
        where = str(path)
    else:
        text, where = str(source), "spec"
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise ParameterError(where, "<text>", f"is not valid TOML: {exc}") from None
    return spec_from_data(apply_settings(data, settings))


def _literal(value: Any) -> str:
    """One TOML literal (number, string, one-line array), formatted by tomli_w."""
    if isinstance(value, (list, tuple)):
        return "[" + ", ".join(_literal(v) for v in value) + "]"
    line = tomli_w.dumps({"v": value})
    return line[len("v = ") :].rstrip("\n")


def _inline(data: dict[str, Any]) -> str:
    parts = [f"{k} = {_inline(v) if isinstance(v, dict) else _literal(v)}" for k, v in data.items()]
    return "{ " + ", ".join(parts) + " }"


def _items(obj: Any) -> list[tuple[str, Any, bool]]:
    """(key, value, is_table) of a spec table or a block parameter set, in declaration order."""
    if isinstance(obj, Params):
        out = []
        for key, value in params_tree_to_data(obj).items():
            out.append((key, getattr(obj, key) if isinstance(getattr(obj, key), Params) else value, False))
        return [(k, v, isinstance(v, Params)) for k, v, _ in out]
    items: list[tuple[str, Any, bool]] = []
    for f in dataclasses.fields(obj):
        value = getattr(obj, f.name)
        if value is None:
            continue
        if "named_tables" in f.metadata:
            items.extend((f"{f.name}.{name}", sub, True) for name, sub in value)
        else:
            items.append((f.name, value, isinstance(value, (Params, SpecTable))))
    return items


def _emit(obj: Any, name: str, out: list[str]) -> None:
    lines, tables = [], []
    for key, value, is_table in _items(obj):
        if is_table:
            tables.append((key, value))
        elif isinstance(value, DIST_TYPES):
            lines.append(f"{key} = {_inline(distribution_to_data(value))}")
        else:
            lines.append(f"{key} = {_literal(value)}")
    if name:
        out.append(f"[{name}]")
    out.extend(lines)
    for key, value in tables:
        out.append("")
        _emit(value, f"{name}.{key}" if name else key, out)


def dump_spec(spec: Spec) -> str:
    """Canonical TOML text of a spec.

    Tables and keys come in schema order, defaults are written out, absent
    optional values are left out and distributions are inline tables.

    Parameters
    ----------
    spec : Spec

    Returns
    -------
    str
        TOML text that :func:`load_spec` reads back to an equal spec.
    """
    out: list[str] = []
    _emit(spec, "", out)
    return "\n".join(out) + "\n"


def save_spec(spec: Spec, path: str | os.PathLike[str]) -> None:
    """Write :func:`dump_spec` text to ``path`` (UTF-8)."""
    Path(path).write_text(dump_spec(spec), encoding="utf-8")


def canonical_json(spec: Spec) -> str:
    """The canonical JSON serialisation hashed by :func:`spec_hash`."""
    return json.dumps(spec_to_data(spec), sort_keys=True, separators=(",", ":"), ensure_ascii=True)


def spec_hash(spec: Spec) -> str:
    """Content hash of a spec: hex SHA-256 of its canonical JSON.

    Notes
    -----
    The canonical JSON is ``json.dumps(data, sort_keys=True,
    separators=(",", ":"), ensure_ascii=True)`` of the validated spec's plain
    data (:func:`~wavebench.spec.schema.spec_to_data`), so:

    * key order, whitespace, comments and number spelling in the file do
      not matter (``2``, ``2.0`` and ``2e0`` for a float field are the same
      float; floats are written by ``float.__repr__``, the shortest text
      that reads back to the same double; infinity as ``Infinity``);
    * defaults are filled in before hashing, so writing a default
      explicitly or leaving it out gives the same hash;
    * every change of a value, a distribution or its parameters changes
      the hash.

    Returns
    -------
    str
        64 lowercase hex digits.
    """
    return hashlib.sha256(canonical_json(spec).encode("ascii")).hexdigest()
