"""Finished chunks on disk as they arrive, so a killed campaign resumes where it stopped.

While a campaign runs into a store folder, every chunk that finishes is
written at once: its time series into the store's ``timeseries.zarr``
(:mod:`wavebench.campaign.series`: whole Zarr chunks of its own, with
checksums) and then its metrics and draws to
``DIR/chunks/metrics-<first>-<last>.parquet`` (written under a temporary
name and renamed into place, so a file under its final name is always
whole). The metrics file is the commit marker: a chunk is finished when it
exists (and, when the campaign records, its rows of the time series are on
disk and readable). ``DIR/chunks/plan.json`` records the spec hash, the
seed, the trial count, the batch size and whether the campaign records, and
a resume refuses a store planned differently.

:func:`finished_chunks` reads back the chunks that are finished and
readable; a chunk whose files cannot be read (cut short, corrupted, missing)
is left out with a warning and runs again. A chunk that failed as a whole
(its trials recorded as failed with the error) is finished like any other
and is not run again on resume, so a resumed store equals the uninterrupted
one even then; rerun such a campaign afresh if the failure was passing.
When the campaign completes, the
time series are already in place (nothing is consolidated or copied);
``metrics.parquet``, ``verdicts.json`` and ``manifest.json`` are written by
:func:`~wavebench.campaign.store.write_store` and the chunk folder removed.
"""

from __future__ import annotations

import dataclasses
import json
import os
import shutil
import warnings
from pathlib import Path
from typing import Any

import numpy as np

from ..core.errors import ParameterError, WavebenchWarning
from ..spec.io import dump_spec, spec_hash
from ..spec.schema import Spec

__all__ = [
    "CHUNKS_DIR",
    "chunk_name",
    "clear_chunks",
    "finished_chunks",
    "open_plan",
    "write_chunk",
]

#: Folder of the chunk files inside a store.
CHUNKS_DIR = "chunks"


def chunk_name(trials: np.ndarray) -> str:
    """``<first>-<last>`` of a chunk's trial indices, zero-padded so names sort."""
    return f"{int(trials[0]):09d}-{int(trials[-1]):09d}"


def _plan(spec: Spec, record: bool, until: Any) -> dict[str, Any]:
    c = spec.campaign
    sequential = None if until is None else {f.name: getattr(until, f.name) for f in dataclasses.fields(until)}
    return {"spec_hash": spec_hash(spec), "seed": c.seed, "trials": c.trials, "batch_size": c.batch_size,
            "record": bool(record), "until": sequential, "series_attrs": series_attrs(spec)}  # fmt: skip


def series_attrs(spec: Spec) -> dict[str, Any]:
    """Global attributes of a campaign's time series: spec hash, scenario, decimation interval [s]."""
    return {"spec_hash": spec_hash(spec), "scenario": spec.scenario.name,
            "decimation_s": float(spec.campaign.record_interval_s)}  # fmt: skip


def open_plan(store: Path, spec: Spec, record: bool, *, resume: bool, until: Any = None) -> Path:
    """Create (or, resuming, check) the chunk folder of a store; returns it.

    ``until`` is the campaign's sequential plan (or None); a resume must
    give the same one, so that it stops where the uninterrupted run would.

    Raises
    ------
    ParameterError
        A new campaign into a folder holding another campaign's chunks, or a
        resume whose spec, seed, trials, batch size or recording differ from
        the store's plan (the sequential plan included).
    """
    folder = store / CHUNKS_DIR
    plan_file = folder / "plan.json"
    want = _plan(spec, record, until)
    if plan_file.exists():
        have = json.loads(plan_file.read_text(encoding="utf-8"))
        if not resume:
            raise ParameterError("out", str(store), "holds an unfinished campaign: resume it with --resume, or "
                                 "choose another folder")  # fmt: skip
        if have != want:
            diff = ", ".join(f"{k}: store {have.get(k)!r}, now {want[k]!r}" for k in want if have.get(k) != want[k])
            raise ParameterError("resume", str(store), f"the store was planned differently ({diff})")
        return folder
    if resume:
        raise ParameterError("resume", str(store), "has no unfinished campaign to resume (no chunks/plan.json)")
    # a new campaign replaces a finished store in the folder: none of its files may mix with the new ones
    for name in ("timeseries.zarr", "timeseries.zarr.tmp"):
        shutil.rmtree(store / name, ignore_errors=True)
    for name in ("timeseries.nc", "metrics.parquet", "verdicts.json", "manifest.json", "report.html"):
        (store / name).unlink(missing_ok=True)
    folder.mkdir(parents=True, exist_ok=True)
    (store / "spec.toml").write_text(dump_spec(spec), encoding="utf-8")
    _atomic_write_text(plan_file, json.dumps(want, indent=1))
    return folder


def _atomic_write_text(path: Path, text: str) -> None:
    tmp = path.with_name(path.name + ".tmp")
    tmp.write_text(text, encoding="utf-8")
    os.replace(tmp, path)


def write_chunk(folder: Path, out: Any) -> None:
    """Write one finished chunk (a :class:`~wavebench.campaign.executor.ChunkOutput`): time series, then metrics.

    Raises
    ------
    OSError
        When the disk refuses the write (full, read-only): the campaign
        stops and says so; chunks already written stay.
    """
    import pandas as pd

    from .series import SERIES_NAME, create_series, write_series_chunk

    name = chunk_name(out.trials)
    if out.record is not None:
        series = folder.parent / SERIES_NAME
        if not series.exists():
            plan = json.loads((folder / "plan.json").read_text(encoding="utf-8"))
            create_series(series, out.record, plan["trials"], plan["batch_size"], plan["series_attrs"])
        write_series_chunk(series, out.record, int(out.trials[0]))
    frame = pd.DataFrame({"trial": out.trials.astype(np.int64), **out.columns})
    tmp = folder / f"metrics-{name}.parquet.tmp"
    frame.to_parquet(tmp, index=False)
    os.replace(tmp, folder / f"metrics-{name}.parquet")


def _series_readable(series: Path) -> bool:
    """Whether the time-series store's own metadata reads; an unreadable one is removed (its chunks rerun)."""
    import zarr

    if not series.exists():
        return True
    try:
        group = zarr.open_group(series, mode="r", zarr_format=3)
        list(group.array_keys())
        group["trial"].shape  # noqa: B018 - reads the array metadata
    except (OSError, ValueError, KeyError) as exc:
        aside = series.with_name(f"{series.name}.unreadable-{os.getpid()}")
        warnings.warn(f"{series} cannot be read ({type(exc).__name__}: {exc}); it is moved aside to {aside.name} "
                      "and every recorded chunk runs again", WavebenchWarning, stacklevel=3)  # fmt: skip
        os.replace(series, aside)
        return False
    return True


def finished_chunks(folder: Path, record: bool) -> dict[str, tuple[Any, Any]]:
    """The chunks already finished and readable: ``{name: (metrics frame, trials in its time series or None)}``."""
    import pandas as pd

    from .series import SERIES_NAME, check_series_chunk

    series = folder.parent / SERIES_NAME
    series_ok = _series_readable(series) if record else True
    done: dict[str, tuple[Any, Any]] = {}
    for path in sorted(folder.glob("metrics-*.parquet")):
        name = path.name[len("metrics-") : -len(".parquet")]
        try:
            frame = pd.read_parquet(path)
            ts = None
            whole_chunk_failed = bool(frame["failure_reason"].astype(str).str.startswith("error:").all())
            if record and not whole_chunk_failed:  # its rows must be whole on disk
                if not series_ok:
                    raise ValueError("its time series were in the unreadable store")
                first = int(frame["trial"].iloc[0])
                check_series_chunk(series, first, len(frame))
                ts = len(frame)
        except (OSError, ValueError, KeyError) as exc:
            warnings.warn(f"chunk {name} of {folder.parent} cannot be read ({type(exc).__name__}: {exc}); "
                          "it runs again", WavebenchWarning, stacklevel=2)  # fmt: skip
            continue
        done[name] = (frame, ts)
    return done


def clear_chunks(store: Path) -> None:
    """Remove the chunk folder once the campaign is complete and its store files are written."""
    shutil.rmtree(store / CHUNKS_DIR, ignore_errors=True)
