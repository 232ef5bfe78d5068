"""The on-disk store of a campaign: one folder, plain open formats.

Layout of a store folder ``DIR``:

``spec.toml``
    The spec as run, canonical TOML (:func:`~wavebench.spec.io.dump_spec`).
``manifest.json``
    ``format = "wavebench-store"``, ``format_version``, ``spec_hash``,
    ``seed``, ``trials``, ``batch_size``, ``complete``, ``created_utc``,
    ``wall_time_s``, ``wavebench_version``, ``python``, ``platform``,
    ``packages`` (versions), ``scenario``, ``craft``.
``metrics.parquet``
    One row per trial: ``trial``, the metrics of
    :data:`~wavebench.analysis.metric_names.METRICS` and one
    ``param.<toml path>`` column per drawn spec field.
``timeseries.zarr``
    The recorded signals, dims (trial, time), units and long names, in a
    Zarr (format 3) store chunked along trials as the campaign was
    (:mod:`wavebench.campaign.series`); written chunk by chunk while the
    campaign runs; absent when recording was off. Stores of format
    version 1 hold ``timeseries.nc`` (NetCDF4) instead, still readable.
``verdicts.json``
    A list of verdicts (:meth:`~wavebench.analysis.verdicts.Verdict.to_dict`).
``report.html``
    Written by ``wavebench report DIR``.

While a campaign is still running into ``DIR`` (or was interrupted), the
folder holds ``spec.toml``, ``chunks/`` and the growing ``timeseries.zarr``
instead (:mod:`wavebench.campaign.chunks`); ``read_store(DIR, partial=True)``
reads the trials finished so far.
"""

from __future__ import annotations

import datetime as _dt
import json
import os
import platform
import shutil
import sys
import warnings
from importlib import metadata
from pathlib import Path
from typing import Any

import numpy as np

from ..analysis.verdicts import Verdict
from ..core.errors import ParameterError, WavebenchWarning
from ..spec.io import dump_spec, load_spec, spec_hash
from .chunks import CHUNKS_DIR, _atomic_write_text
from .executor import CampaignResult, evaluate_verdicts
from .series import LEGACY_NAME, SERIES_NAME, open_timeseries, write_series

__all__ = ["STORE_FORMAT", "STORE_FORMAT_VERSION", "export_netcdf", "package_versions", "read_store", "write_store"]

STORE_FORMAT = "wavebench-store"
STORE_FORMAT_VERSION = 2  # 2: time series in timeseries.zarr (1: timeseries.nc)
_PACKAGES = ("wavebench", "numpy", "scipy", "numba", "xarray", "pandas", "pyarrow", "h5netcdf", "zarr", "pymap3d")


def package_versions() -> dict[str, str]:
    """Installed versions of the packages that shape the numbers."""
    out = {}
    for name in _PACKAGES:
        try:
            out[name] = metadata.version(name)
        except metadata.PackageNotFoundError:
            out[name] = "not installed"
    return out


def write_store(result: CampaignResult, out_dir: str | os.PathLike[str], *, timeseries_written: bool = False) -> Path:
    """Write a campaign's results to a store folder (created if needed).

    Parameters
    ----------
    result : CampaignResult
    out_dir : path-like
        The folder; existing store files in it are replaced (the time series
        only when ``timeseries_written`` is False and no unfinished campaign's
        chunks are in the folder).
    timeseries_written : bool
        ``timeseries.zarr`` is already in place (written by a campaign's
        chunks as they finished); leave it as it is.

    Returns
    -------
    Path
        The folder.
    """
    out = Path(out_dir)
    if out.exists() and not out.is_dir():
        raise ParameterError("out", str(out), "must be a folder (it exists and is a file)")
    out.mkdir(parents=True, exist_ok=True)
    spec = result.spec
    # spec.toml, verdicts.json and manifest.json by a temporary name and a rename, so that a store read while
    # its campaign finishes (read_store(..., partial=True)) never sees one half written; manifest.json, the
    # finished-store marker, goes last
    _atomic_write_text(out / "spec.toml", dump_spec(spec))
    result.metrics.to_parquet(out / "metrics.parquet", index=False)
    series = out / SERIES_NAME
    if timeseries_written:
        pass
    elif result.timeseries is not None:
        write_series(result.timeseries, series, result.batch_size)
    elif series.exists() and not (out / "chunks" / "plan.json").exists():  # an unfinished campaign keeps its own
        shutil.rmtree(series)
    (out / LEGACY_NAME).unlink(missing_ok=True)
    verdicts = [v.to_dict() for v in result.verdicts]
    _atomic_write_text(out / "verdicts.json", json.dumps(verdicts, indent=1, allow_nan=False))
    versions = package_versions()
    manifest = {
        "format": STORE_FORMAT,
        "format_version": STORE_FORMAT_VERSION,
        "spec_hash": spec_hash(spec),
        "seed": spec.campaign.seed,
        "trials": len(result.metrics),
        "batch_size": result.batch_size,
        "complete": result.complete,
        "created_utc": _dt.datetime.now(_dt.timezone.utc).isoformat(timespec="seconds"),
        "wall_time_s": round(result.wall_time_s, 3),
        "wavebench_version": versions["wavebench"],
        "python": sys.version.split()[0],
        "platform": platform.platform(),
        "machine": platform.machine(),
        "packages": versions,
        "scenario": spec.scenario.name,
        "craft": spec.craft.build().name,
    }
    _atomic_write_text(out / "manifest.json", json.dumps(manifest, indent=1))
    return out


def read_store(store_dir: str | os.PathLike[str], *, partial: bool = False) -> dict[str, Any]:
    """Read a store folder back.

    Parameters
    ----------
    store_dir : path-like
        A store folder written by ``wavebench run`` (or ``run_campaign(..., store=...)``).
    partial : bool
        Also read an unfinished store (a campaign still running into the
        folder, or interrupted): the trials of its finished chunks so far.
        Without it, only a finished store is read.

    Returns
    -------
    dict
        ``spec`` (Spec), ``manifest`` (dict), ``metrics`` (DataFrame, sorted
        by trial), ``timeseries`` (Dataset opened lazily, or None),
        ``verdicts`` (list of Verdict) and ``partial`` (bool). For an
        unfinished store the manifest is built from ``chunks/plan.json``:
        ``state = "partial"``, ``complete = False``, ``trials_done``,
        ``trials_planned``; the time series hold the finished trials only
        and the verdicts are computed on them
        (:func:`~wavebench.campaign.executor.evaluate_verdicts`).

    Raises
    ------
    ParameterError
        When the folder is not a wavebench store (or, without ``partial``,
        is an unfinished one).
    """
    import pandas as pd

    d = Path(store_dir)
    man_path = d / "manifest.json"
    plan_path = d / CHUNKS_DIR / "plan.json"
    if not man_path.is_file() and plan_path.is_file():
        if not partial:
            raise ParameterError("store", str(d), "must be a finished store; it holds an unfinished campaign "
                                 "(chunks/plan.json, no manifest.json): finish it with 'wavebench run --resume', "
                                 "or read the trials finished so far with read_store(..., partial=True)")  # fmt: skip
        try:
            return _read_unfinished(d)
        except FileNotFoundError:
            if not man_path.is_file():  # not a campaign that finished while it was read
                raise
    if not man_path.is_file():
        found = "neither manifest.json nor chunks/plan.json" if partial else "no manifest.json"
        raise ParameterError("store", str(d), f"must be a folder written by 'wavebench run' ({found})")
    manifest = json.loads(man_path.read_text(encoding="utf-8"))
    if manifest.get("format") != STORE_FORMAT:
        raise ParameterError("store", str(d), f"manifest.json must have format '{STORE_FORMAT}'")
    ts = open_timeseries(d)  # lazily: a large campaign's series are read when used
    verdicts = [Verdict.from_dict(v) for v in json.loads((d / "verdicts.json").read_text(encoding="utf-8"))]
    return {
        "spec": load_spec(d / "spec.toml"),
        "manifest": manifest,
        "metrics": pd.read_parquet(d / "metrics.parquet"),
        "timeseries": ts,
        "verdicts": verdicts,
        "partial": False,
    }


def _read_unfinished(d: Path) -> dict[str, Any]:
    """The finished chunks of a campaign still running into ``d`` (or interrupted); see :func:`read_store`.

    Read only: nothing in the folder is changed (a resume is what repairs
    or reruns chunks). A chunk's metrics file is its commit marker
    (:mod:`wavebench.campaign.chunks`), written after its time series, so
    every trial read here has its rows of the time series on disk.
    """
    import pandas as pd

    from ..analysis.metric_names import METRICS

    plan, planned = _read_plan(d / CHUNKS_DIR / "plan.json")
    spec_path = d / "spec.toml"
    if not spec_path.is_file():
        raise ParameterError("store", str(d), "must hold spec.toml beside chunks/plan.json (written when the "
                             "campaign was planned)")  # fmt: skip
    spec = load_spec(spec_path)
    if spec_hash(spec) != plan.get("spec_hash"):
        raise ParameterError("store", str(d), f"spec.toml must be the planned spec (spec hash {spec_hash(spec)}, "
                             f"chunks/plan.json says {plan.get('spec_hash')})")  # fmt: skip
    frames = []
    for path in sorted((d / CHUNKS_DIR).glob("metrics-*.parquet")):
        try:
            frames.append(pd.read_parquet(path))
        except FileNotFoundError:
            raise
        except (OSError, ValueError) as exc:  # cut short or damaged: a resume runs it again
            warnings.warn(f"chunk {path.name} of {d} cannot be read ({type(exc).__name__}: {exc}); its trials are "
                          "left out", WavebenchWarning, stacklevel=3)  # fmt: skip
    if frames:
        metrics = pd.concat(frames, ignore_index=True).sort_values("trial", kind="stable", ignore_index=True)
    else:
        metrics = pd.DataFrame({"trial": pd.Series([], dtype="int64")})
    for name, info in METRICS.items():  # as run_campaign builds its table
        if info.kind == "text" and name in metrics:
            metrics[name] = metrics[name].astype(str)
    trials = metrics["trial"].to_numpy(dtype=np.int64)
    ts = open_timeseries(d) if plan.get("record") else None
    if ts is not None:
        ts = ts.sel(trial=trials)  # lazily; rows of chunks not finished are not shown
    verdicts = evaluate_verdicts(spec, metrics) if len(metrics) else []
    manifest = {
        "format": STORE_FORMAT,
        "format_version": STORE_FORMAT_VERSION,
        "state": "partial",
        "complete": False,
        "spec_hash": plan.get("spec_hash"),
        "seed": plan.get("seed"),
        "trials": len(metrics),
        "trials_done": len(metrics),
        "trials_planned": planned,
        "batch_size": plan.get("batch_size"),
        "scenario": spec.scenario.name,
        "craft": spec.craft.build().name,
    }
    return {"spec": spec, "manifest": manifest, "metrics": metrics, "timeseries": ts, "verdicts": verdicts,
            "partial": True}  # fmt: skip


def _read_plan(path: Path) -> tuple[dict[str, Any], int]:
    """``chunks/plan.json`` of an unfinished store and its planned trials.

    Raises
    ------
    ParameterError
        When the file is not a JSON object, or its ``trials`` is not a whole number >= 1.
    """
    text = path.read_text(encoding="utf-8")
    try:
        plan = json.loads(text)
    except json.JSONDecodeError as exc:
        raise ParameterError("chunks/plan.json", text[:80], "must be the JSON object written when the campaign "
                             f"was planned (it is not JSON: {exc})") from exc  # fmt: skip
    if not isinstance(plan, dict):
        raise ParameterError("chunks/plan.json", plan, "must be a JSON object (spec_hash, seed, trials, "
                             "batch_size, record, ...) as written when the campaign was planned")  # fmt: skip
    trials = plan.get("trials")
    if isinstance(trials, bool) or not isinstance(trials, int) or trials < 1:
        raise ParameterError("chunks/plan.json trials", trials, "must be a whole number >= 1 (the trials "
                             "planned)")  # fmt: skip
    return plan, trials


def export_netcdf(store_dir: str | os.PathLike[str], out_path: str | os.PathLike[str]) -> Path:
    """One NetCDF file holding a whole store, for sharing: time series, per-trial metrics, spec and verdicts.

    The metrics and drawn parameters become variables along ``trial`` (a
    trial without a recorded time series keeps its metrics); the spec
    (TOML), the verdicts and the manifest (JSON) are global attributes
    ``wavebench_spec``, ``wavebench_verdicts`` and ``wavebench_manifest``.

    Parameters
    ----------
    store_dir : path-like
        A store folder written by ``wavebench run``.
    out_path : path-like
        The file to write (``.nc``).

    Returns
    -------
    Path
    """
    import xarray as xr

    store = read_store(store_dir)
    metrics = store["metrics"].set_index("trial")
    table = xr.Dataset.from_dataframe(metrics)
    for name in table.data_vars:
        if table[name].dtype == object:
            table[name] = table[name].astype(str)
    ds = table if store["timeseries"] is None else xr.merge([store["timeseries"], table], join="outer",
                                                               combine_attrs="override")  # fmt: skip
    d = Path(store_dir)
    ds.attrs.update(
        wavebench_spec=(d / "spec.toml").read_text(encoding="utf-8"),
        wavebench_verdicts=(d / "verdicts.json").read_text(encoding="utf-8"),
        wavebench_manifest=(d / "manifest.json").read_text(encoding="utf-8"),
    )
    out = Path(out_path)
    ds.to_netcdf(out, engine="h5netcdf")
    return out
