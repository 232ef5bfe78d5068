"""Finished chunks on disk as they arrive, so a killed campaign resumes where it stopped.

While a campaign runs into a store folder, every chunk that finishes is
written to ``DIR/chunks/``: its time series (``ts-<first>-<last>.nc``) and
then its metrics and draws (``metrics-<first>-<last>.parquet``), each
written to a temporary name and renamed into place, so a file under its
final name is always whole. The metrics file is written last: a chunk is
finished when it exists (and, when the campaign records, its time series
does too). ``DIR/chunks/plan.json`` records the spec hash, the seed, the
trial count, the batch size and whether the campaign records, and a resume
refuses a store planned differently.

:func:`finished_chunks` reads back the chunks that are finished and
readable; a chunk whose file cannot be read (cut short, corrupted) is left
out with a warning and runs again. When the campaign completes, the store
is consolidated into its usual files: ``timeseries.nc`` streamed from the
chunk files one chunk at a time (:func:`consolidate_timeseries`, so a
campaign of any size never holds all its time series in memory), then
``metrics.parquet``, ``verdicts.json`` and ``manifest.json`` by
:func:`~wavebench.campaign.store.write_store`; the chunk files stay until
then and are removed after it.
"""

from __future__ import annotations

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
    "consolidate_timeseries",
    "finished_chunks",
    "open_plan",
    "write_chunk",
]

#: Folder of the chunk files inside a store.
CHUNKS_DIR = "chunks"


def chunk_name(trials: np.ndarray) -> str:
    """``<first>-<last>`` of a chunk's trial indices, zero-padded so names sort."""
    return f"{int(trials[0]):09d}-{int(trials[-1]):09d}"


def _plan(spec: Spec, record: bool) -> dict[str, Any]:
    c = spec.campaign
    return {"spec_hash": spec_hash(spec), "seed": c.seed, "trials": c.trials, "batch_size": c.batch_size,
            "record": bool(record)}  # fmt: skip


def open_plan(store: Path, spec: Spec, record: bool, *, resume: bool) -> Path:
    """Create (or, resuming, check) the chunk folder of a store; returns it.

    Raises
    ------
    ParameterError
        A new campaign into a folder holding another campaign's chunks, or a
        resume whose spec, seed, trials, batch size or recording differ from
        the store's plan.
    """
    folder = store / CHUNKS_DIR
    plan_file = folder / "plan.json"
    want = _plan(spec, record)
    if plan_file.exists():
        have = json.loads(plan_file.read_text(encoding="utf-8"))
        if have != want:
            diff = ", ".join(f"{k}: store {have.get(k)!r}, now {want[k]!r}" for k in want if have.get(k) != want[k])
            raise ParameterError("resume", str(store), f"the store was planned differently ({diff})")
        if not resume:
            raise ParameterError("out", str(store), "holds an unfinished campaign: resume it with --resume, or "
                                 "choose another folder")  # fmt: skip
        return folder
    if resume:
        raise ParameterError("resume", str(store), "has no unfinished campaign to resume (no chunks/plan.json)")
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

    name = chunk_name(out.trials)
    if out.record is not None:
        ts = folder / f"ts-{name}.nc"
        tmp = folder / f"ts-{name}.nc.tmp"
        out.record.to_netcdf(tmp, engine="h5netcdf")
        os.replace(tmp, ts)
    frame = pd.DataFrame({"trial": out.trials.astype(np.int64), **out.columns})
    tmp = folder / f"metrics-{name}.parquet.tmp"
    frame.to_parquet(tmp, index=False)
    os.replace(tmp, folder / f"metrics-{name}.parquet")


def finished_chunks(folder: Path, record: bool) -> dict[str, tuple[Any, Any]]:
    """The chunks already finished and readable: ``{name: (metrics frame, trials in its time series or None)}``."""
    import pandas as pd
    import xarray as xr

    done: dict[str, tuple[Any, Any]] = {}
    for path in sorted(folder.glob("metrics-*.parquet")):
        name = path.name[len("metrics-") : -len(".parquet")]
        try:
            frame = pd.read_parquet(path)
            ts = None
            whole_chunk_failed = bool(frame["failure_reason"].astype(str).str.startswith("error:").all())
            if record and not whole_chunk_failed:  # readable and whole; the values stay on disk until consolidation
                with xr.open_dataset(folder / f"ts-{name}.nc", engine="h5netcdf") as ds:
                    ts = int(ds.sizes["trial"])
                if ts != len(frame):
                    raise ValueError(f"{ts} trials in the time series, {len(frame)} in the metrics")
        except (OSError, ValueError, KeyError) as exc:
            warnings.warn(f"chunk {name} of {folder.parent} cannot be read ({type(exc).__name__}: {exc}); "
                          "it runs again", WavebenchWarning, stacklevel=2)  # fmt: skip
            continue
        done[name] = (frame, ts)
    return done


def clear_chunks(store: Path) -> None:
    """Remove the chunk folder once the store is consolidated."""
    shutil.rmtree(store / CHUNKS_DIR, ignore_errors=True)


def consolidate_timeseries(folder: Path, names: list[str], out_path: Path, attrs: dict[str, Any]) -> None:
    """Write the chunks' time series into one NetCDF file, one chunk in memory at a time.

    Parameters
    ----------
    folder : Path
        The chunk folder.
    names : list of str
        Chunk names in trial order (:func:`chunk_name`); a chunk that failed
        as a whole has no time series and is left out, as in memory.
    out_path : Path
        The store's ``timeseries.nc`` (written to a temporary name, then renamed into place).
    attrs : dict
        Global attributes (spec hash, scenario, decimation).
    """
    import h5netcdf
    import xarray as xr

    from ..trial.recorder import SIGNALS

    names = [name for name in names if (folder / f"ts-{name}.nc").exists()]  # a chunk that failed whole has none
    if not names:
        return
    sizes = []
    for name in names:
        with xr.open_dataset(folder / f"ts-{name}.nc", engine="h5netcdf") as ds:
            sizes.append(ds.sizes["trial"])
            if not sizes[1:]:
                time = ds["time"].values
                signals = [v for v in ds.data_vars]
    tmp = out_path.with_name(out_path.name + ".tmp")
    with h5netcdf.File(tmp, "w") as f:
        f.dimensions = {"trial": int(sum(sizes)), "time": int(time.size)}
        tr = f.create_variable("trial", ("trial",), "i8")
        tr.attrs["long_name"] = "trial index in the campaign"
        tm = f.create_variable("time", ("time",), "f8")
        tm[:] = time
        tm.attrs["units"], tm.attrs["long_name"] = "s", "time since start"
        out = {}
        for name in signals:
            var = f.create_variable(name, ("trial", "time"), "f4", fillvalue=np.float32(np.nan))
            units, long_name = SIGNALS.get(name, ("", name))
            var.attrs["units"], var.attrs["long_name"] = units, long_name
            out[name] = var
        for key, value in attrs.items():
            f.attrs[key] = value
        lo = 0
        for name, k in zip(names, sizes, strict=True):
            with xr.open_dataset(folder / f"ts-{name}.nc", engine="h5netcdf") as ds:
                tr[lo : lo + k] = ds["trial"].values
                for sig in signals:
                    out[sig][lo : lo + k, :] = ds[sig].values
            lo += k
    os.replace(tmp, out_path)
