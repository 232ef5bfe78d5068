"""Result fingerprints: one hash that says two campaign results are the same bits, and a card that shows it.

:func:`result_hash` is a SHA-256 over a canonical byte serialisation of a
campaign's per-trial metrics, its verdicts and, when given, its time series.
Two results have the same hash exactly when their values are the same bits,
whatever the batch size, the executor, the column order of the table or the
integer / string dtypes pandas happened to pick.

:func:`result_card` wraps a :class:`~wavebench.campaign.executor.CampaignResult`
in a small display object. In a notebook it shows the verdict table (HTML
with inline styles, no script) and carries, in the output's metadata,
``{"wavebench": {"spec_hash": ..., "result_hash": ..., "trials": n, ...}}``,
which ``wavebench verify NOTEBOOK`` reads to check that a saved notebook
reproduces bit for bit. This module imports no Jupyter package: the
notebook calls ``_repr_mimebundle_`` itself.

Examples
--------
>>> import pandas as pd
>>> a = pd.DataFrame({"trial": [0, 1], "xte_p95_m": [1.5, float("nan")]})
>>> b = a[["xte_p95_m", "trial"]].astype({"trial": "int32"})  # other column order and int width
>>> result_hash(a, []) == result_hash(b, [])
True
>>> result_hash(a, []) == result_hash(a.assign(xte_p95_m=[1.5, 2.0]), [])
False
"""

from __future__ import annotations

import hashlib
import struct
from collections.abc import Iterable, Iterator, Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

__all__ = [
    "CANONICAL_NAN_BITS",
    "HASH_FORMAT",
    "ResultCard",
    "canonical_chunks",
    "part_hashes",
    "result_card",
    "result_hash",
]

#: Version tag hashed first: a change of the serialisation changes every hash.
HASH_FORMAT = b"wavebench-result-hash/1\n"
#: The one NaN every float NaN is written as: the IEEE 754 quiet NaN with a zero payload.
CANONICAL_NAN_BITS = 0x7FF8000000000000

#: Verdict colours, as in the campaign report (:mod:`wavebench.report.campaign`).
_VERDICT_STYLE = {
    "pass": "background:#2e7d32;color:#fff",
    "fail": "background:#b3261e;color:#fff",
    "undecided": "background:#f2c94c;color:#3d2e00",
}
_SYMBOL = {"below": "<", "above": ">"}


# ---------------------------------------------------------------------------
# canonical bytes
# ---------------------------------------------------------------------------


def _tag(kind: bytes, payload: bytes) -> bytes:
    """A one-byte kind and an 8-byte little-endian length before the payload (no two inputs share bytes)."""
    return kind + struct.pack("<Q", len(payload)) + payload


def _text(s: str) -> bytes:
    return _tag(b"s", s.encode("utf-8"))


def _float_bytes(a: np.ndarray) -> bytes:
    """float64 little-endian bytes, every NaN written as :data:`CANONICAL_NAN_BITS`."""
    x = np.ascontiguousarray(a, dtype="<f8")
    bits = x.view("<u8").copy()
    bits[np.isnan(x)] = CANONICAL_NAN_BITS
    return bits.tobytes()


def _is_missing(v: Any) -> bool:
    if v is None:
        return True
    try:
        import pandas as pd

        return bool(pd.isna(v)) if np.ndim(v) == 0 else False
    except (TypeError, ValueError):
        return False


def _array_chunks(values: Any) -> Iterator[bytes]:
    """The canonical bytes of one column or variable (any shape), by kind.

    bool -> ``b`` + uint8; integers -> ``i`` + int64 LE; floats -> ``f`` +
    float64 LE with one NaN; text -> ``t`` + each value as UTF-8 (a missing
    value as ``n``). Nullable pandas columns holding a missing value are
    written value by value as text-like items, so NA is kept apart from any
    number.
    """
    import pandas as pd

    if isinstance(values, (pd.Series, pd.Index)):
        dtype = values.dtype
        if isinstance(dtype, pd.CategoricalDtype):
            values = values.astype(object)
        elif pd.api.types.is_extension_array_dtype(dtype) and not isinstance(dtype, pd.StringDtype):
            if values.isna().any():
                values = values.astype(object)
            else:
                values = values.to_numpy(dtype=dtype.numpy_dtype)
        if isinstance(values, (pd.Series, pd.Index)):
            values = values.to_numpy(dtype=object if isinstance(values.dtype, pd.StringDtype) else None)
    a = np.asarray(values)
    yield struct.pack("<Q", a.ndim) + struct.pack(f"<{a.ndim}Q", *a.shape)
    if a.dtype == np.bool_:
        yield _tag(b"b", a.astype(np.uint8).tobytes())
    elif np.issubdtype(a.dtype, np.integer):
        yield _tag(b"i", np.ascontiguousarray(a, dtype="<i8").tobytes())
    elif np.issubdtype(a.dtype, np.floating):
        yield _tag(b"f", _float_bytes(a))
    elif np.issubdtype(a.dtype, np.datetime64) or np.issubdtype(a.dtype, np.timedelta64):
        yield _tag(b"d", np.ascontiguousarray(a.astype("datetime64[ns]" if a.dtype.kind == "M" else
                                                          "timedelta64[ns]")).view("<i8").tobytes())  # fmt: skip
    else:
        yield b"t"
        for v in a.ravel(order="C"):
            yield _value(v)


def _value(v: Any) -> bytes:
    """One scalar, typed: missing, bool, int, float (NaN canonical) or text."""
    if _is_missing(v) and not isinstance(v, (float, np.floating)):
        return b"n"
    if isinstance(v, (bool, np.bool_)):
        return b"B" + (b"\x01" if v else b"\x00")
    if isinstance(v, (int, np.integer)):
        return b"I" + struct.pack("<q", int(v))
    if isinstance(v, (float, np.floating)):
        return b"F" + _float_bytes(np.array([v], dtype=float))
    return _text(str(v))


def _verdict_dicts(verdicts: Iterable[Any]) -> list[dict[str, Any]]:
    """Verdicts as normalised dicts (a Verdict or a parsed ``verdicts.json`` object)."""
    from ..analysis.verdicts import Verdict

    out = []
    for v in verdicts:
        if isinstance(v, Verdict):
            out.append(v.to_dict())
        elif isinstance(v, Mapping):
            out.append(Verdict.from_dict(v).to_dict())
        else:
            raise TypeError(f"a verdict must be a Verdict or a mapping, not {type(v).__name__}")
    return out


def canonical_chunks(metrics_frame: Any, verdicts: Sequence[Any], timeseries: Any = None) -> Iterator[bytes]:
    """The canonical serialisation hashed by :func:`result_hash`, piece by piece.

    Parameters
    ----------
    metrics_frame : pandas.DataFrame
        One row per trial (the row order counts; the index does not).
    verdicts : sequence of Verdict or dict
        In order.
    timeseries : xarray.Dataset, optional
        Every data variable and coordinate.

    Yields
    ------
    bytes
        The format tag, then the table, the verdicts and the time series.

    Notes
    -----
    Table: the number of rows, then the columns sorted by name, each as its
    name (UTF-8) and its values: ``bool`` as one byte, any integer as
    int64 little-endian, any float as IEEE 754 binary64 little-endian with
    every NaN written as the quiet NaN ``0x7FF8000000000000``, text as
    UTF-8 (a missing value marked apart). Verdicts: in order, each field in
    sorted name order as a typed value. Time series: variables and
    coordinates sorted by name, each with its dims, shape and values as
    above. Every variable-length piece carries its length, so no two
    different inputs give the same bytes.
    """
    yield HASH_FORMAT
    columns = sorted(str(c) for c in metrics_frame.columns)
    if len(columns) != len(metrics_frame.columns):
        raise ValueError("the metrics table has duplicate column names")
    yield b"M" + struct.pack("<QQ", len(metrics_frame), len(columns))
    by_name = {str(c): c for c in metrics_frame.columns}
    for name in columns:
        yield _text(name)
        yield from _array_chunks(metrics_frame[by_name[name]].reset_index(drop=True))
    dicts = _verdict_dicts(verdicts)
    yield b"V" + struct.pack("<Q", len(dicts))
    for d in dicts:
        yield struct.pack("<Q", len(d))
        for key in sorted(d):
            yield _text(key) + _value(d[key])
    yield from _series_chunks(timeseries)


def _series_chunks(timeseries: Any) -> Iterator[bytes]:
    """The time-series part of :func:`canonical_chunks`."""
    if timeseries is None:
        yield b"T0"
        return
    names = sorted({str(k) for k in timeseries.variables})
    yield b"T1" + struct.pack("<Q", len(names))
    for name in names:
        var = timeseries[name] if name in timeseries.variables else timeseries.variables[name]
        yield _text(name)
        yield struct.pack("<Q", len(var.dims)) + b"".join(_text(str(d)) for d in var.dims)
        yield from _array_chunks(var.values)


def result_hash(metrics_frame: Any, verdicts: Sequence[Any], timeseries: Any = None) -> str:
    """SHA-256 of a campaign result's canonical bytes.

    Parameters
    ----------
    metrics_frame : pandas.DataFrame
        Per-trial metrics and draws (``CampaignResult.metrics``).
    verdicts : sequence of Verdict or dict
        ``CampaignResult.verdicts`` or a store's ``verdicts.json`` objects.
    timeseries : xarray.Dataset, optional
        Include the recorded time series in the hash.

    Returns
    -------
    str
        64 lowercase hex digits.

    Notes
    -----
    See :func:`canonical_chunks` for what is hashed. Column order, the
    table's index, the integer width, a string column's pandas dtype and
    the bits of a NaN do not change the hash; any change of a value does.

    References
    ----------
    NIST FIPS 180-4, Secure Hash Standard (SHS), 2015 (SHA-256).
    IEEE 754-2019, Standard for Floating-Point Arithmetic (binary64).
    """
    h = hashlib.sha256()
    for chunk in canonical_chunks(metrics_frame, verdicts, timeseries):
        h.update(chunk)
    return h.hexdigest()


def part_hashes(metrics_frame: Any, verdicts: Sequence[Any], timeseries: Any = None) -> dict[str, str | None]:
    """Separate hashes of a result's parts, so a difference can be traced to one of them.

    Returns
    -------
    dict
        ``"metrics_verdicts"``: :func:`result_hash` without the time series;
        ``"timeseries"``: SHA-256 of the format tag and the time-series part
        of :func:`canonical_chunks` (None when there is no time series).
    """
    series = None
    if timeseries is not None:
        h = hashlib.sha256(HASH_FORMAT)
        for chunk in _series_chunks(timeseries):
            h.update(chunk)
        series = h.hexdigest()
    return {"metrics_verdicts": result_hash(metrics_frame, verdicts), "timeseries": series}


# ---------------------------------------------------------------------------
# the card
# ---------------------------------------------------------------------------


def _num(v: Any, digits: int = 4) -> str:
    from ..report.html import cell_number

    return "–" if v is None else cell_number(v, digits)


def _pct(v: Any) -> str:
    try:
        return f"{100.0 * float(v):g} %"
    except (TypeError, ValueError):
        return "–"


@dataclass(frozen=True)
class ResultCard:
    """A campaign result's verdicts, spec hash and result hash, for display in a notebook.

    Parameters
    ----------
    scenario : str
        The scenario's name.
    spec_hash : str
        :func:`~wavebench.spec.io.spec_hash` of the spec as run.
    result_hash : str
        :func:`result_hash` of the metrics, verdicts and time series.
    trials : int
        Trials in the result.
    verdicts : tuple of dict
        The verdicts (``Verdict.to_dict()``), in requirement order.
    complete : bool
        False when the campaign was interrupted.
    parts : dict, optional
        :func:`part_hashes` of the result, so ``wavebench verify`` can say
        whether the metrics and verdicts or the time series differ.
    """

    scenario: str
    spec_hash: str
    result_hash: str
    trials: int
    verdicts: tuple[dict[str, Any], ...]
    complete: bool = True
    parts: dict[str, str | None] | None = None

    def metadata(self) -> dict[str, Any]:
        """The ``{"wavebench": {...}}`` output metadata that ``wavebench verify`` reads."""
        return {
            "wavebench": {
                "spec_hash": self.spec_hash,
                "result_hash": self.result_hash,
                "trials": int(self.trials),
                "verdicts": {str(v["name"]): str(v["verdict"]) for v in self.verdicts},
                **({"parts": dict(self.parts)} if self.parts is not None else {}),
            }
        }

    def text(self) -> str:
        """Plain-text form: title, verdict table, hashes."""
        from ..analysis.verdicts import Verdict, verdicts_table_text

        lines = [f"{self.scenario}: {self.trials} trials{'' if self.complete else ' (INTERRUPTED)'}"]
        if self.verdicts:
            lines.append(verdicts_table_text([Verdict.from_dict(v) for v in self.verdicts]))
        else:
            lines.append("no requirements in the spec")
        lines.append(f"spec {self.spec_hash[:16]}  result {self.result_hash[:16]}")
        return "\n".join(lines)

    def html(self) -> str:
        """The verdict table as HTML with inline styles (no script, no style sheet)."""
        from ..report.html import escape

        cell = "padding:0.25rem 0.6rem;border-bottom:1px solid #e4e4de;text-align:left;vertical-align:top"
        num = cell + ";text-align:right;font-variant-numeric:tabular-nums;white-space:nowrap"
        head = "".join(
            f"<th style='{num if right else cell};background:#f4f4ef'>{h}</th>"
            for h, right in (("requirement", False), ("condition", False), ("met / trials", True),
                             ("P(met) [Clopper–Pearson]", True), ("quantile [bootstrap]", True), ("verdict", False))
        )  # fmt: skip
        rows = []
        for v in self.verdicts:
            unit = f" {escape(v['unit'])}" if v.get("unit") else ""
            word = str(v["verdict"])
            badge = (
                f"<span class='verdict' data-verdict='{escape(word)}' style='font-weight:700;padding:0.1rem 0.5rem;"
                f"border-radius:0.25rem;{_VERDICT_STYLE.get(word, 'background:#ddd')}'>{escape(word)}</span>"
            )
            cond = (
                f"<code>{escape(v['metric'])}</code> {escape(_SYMBOL.get(v['comparator'], '?'))} "
                f"{_num(v['threshold'])}{unit} with probability ≥ {_num(v['probability'])}"
            )
            met = f"{int(v['n_met'])} / {int(v['n_trials'])}"
            if v.get("n_failed"):
                met += f" ({int(v['n_failed'])} without a value)"
            p = f"{_num(v['p_hat'], 3)} [{_num(v['p_low'], 3)}, {_num(v['p_high'], 3)}] at {_pct(v['confidence'])}"
            q = (
                f"q<sub>{_num(v['quantile_level'], 3)}</sub> = {_num(v['quantile_value'])}{unit} "
                f"[{_num(v['quantile_low'])}, {_num(v['quantile_high'])}]"
            )
            rows.append(
                f"<tr data-requirement='{escape(v['name'])}'><td style='{cell}'>{escape(v['name'])}</td>"
                f"<td style='{cell}'>{cond}</td><td style='{num}'>{met}</td><td style='{num}'>{p}</td>"
                f"<td style='{num}'>{q}</td><td style='{cell}'>{badge}</td></tr>"
            )
        table = (
            f"<table style='border-collapse:collapse;font-size:0.9em'><tr>{head}</tr>{''.join(rows)}</table>"
            if rows else "<p>No requirements in the spec: nothing to pass or fail.</p>"
        )  # fmt: skip
        warn = "<p style='color:#b3261e'>Interrupted: the result holds the finished trials.</p>"
        warn = "" if self.complete else warn
        return (
            f"<div class='wavebench-result' data-spec-hash='{escape(self.spec_hash)}' "
            f"data-result-hash='{escape(self.result_hash)}' style='margin:0.3rem 0'>"
            f"<div style='font-weight:600;margin-bottom:0.3rem'>{escape(self.scenario)}: {self.trials} trials</div>"
            f"{warn}{table}"
            f"<div style='font-size:0.8em;color:#555;margin-top:0.3rem;font-family:monospace'>"
            f"spec {escape(self.spec_hash[:16])} · result {escape(self.result_hash[:16])}</div></div>"
        )

    def _repr_mimebundle_(self, include: Any = None, exclude: Any = None) -> tuple[dict[str, str], dict[str, Any]]:
        """``(data, metadata)``: text/html and text/plain, with the hashes in the output's metadata."""
        return {"text/html": self.html(), "text/plain": self.text()}, self.metadata()

    def __repr__(self) -> str:
        return self.text()


def result_card(result: Any, *, timeseries: bool = True) -> ResultCard:
    """The display card of a campaign result.

    Parameters
    ----------
    result : CampaignResult
    timeseries : bool
        Include the recorded time series (when the result has them) in the
        result hash.

    Returns
    -------
    ResultCard
        Shows the verdict table in a notebook, and puts the spec hash, the
        result hash and the trial count in the output's metadata.
    """
    from ..spec.io import spec_hash

    ts = result.timeseries if timeseries else None
    return ResultCard(
        scenario=str(result.spec.scenario.name),
        spec_hash=spec_hash(result.spec),
        result_hash=result_hash(result.metrics, result.verdicts, ts),
        trials=len(result.metrics),
        verdicts=tuple(_verdict_dicts(result.verdicts)),
        complete=bool(result.complete),
        parts=part_hashes(result.metrics, result.verdicts, ts),
    )
