"""A campaign's time series as one Zarr store, written chunk by chunk as trials finish.

``DIR/timeseries.zarr`` (Zarr format 3) holds one array per recorded signal,
dims ``(trial, time)``, float32 with NaN for "not recorded", chunked along
the trial axis exactly as the campaign is chunked (``campaign.batch_size``
trials per Zarr chunk, the whole time axis in it). Every campaign chunk
therefore writes whole Zarr chunks of its own and no two chunks share a
file: a process killed while writing can only leave the chunk it was
writing half done, and that chunk is not committed (its metrics file, the
commit marker of :mod:`wavebench.campaign.chunks`, is written after it) so
it runs again on resume. Each Zarr chunk carries a CRC-32C checksum, so a
file cut short or corrupted on disk is caught when the chunk is checked.

The store is created (its metadata, the ``trial`` and ``time`` coordinates)
under a temporary name and renamed into place when the first chunk with a
record arrives. A campaign that stops early (a sequential plan deciding)
shrinks the arrays to the trials run. Trials of a chunk that failed as a
whole keep NaN rows, so the time series' trial axis is always the metrics'
trial column.

Nothing here holds more than one chunk's time series in memory.
"""

from __future__ import annotations

import os
import shutil
from pathlib import Path
from typing import Any

import numpy as np

__all__ = [
    "LEGACY_NAME",
    "SERIES_NAME",
    "check_series_chunk",
    "create_series",
    "open_timeseries",
    "shrink_series",
    "write_series",
    "write_series_chunk",
]

#: The time-series store inside a campaign store folder.
SERIES_NAME = "timeseries.zarr"
#: The single-file time series of stores written before the Zarr layout (read only).
LEGACY_NAME = "timeseries.nc"

_COORDS = ("trial", "time")


def _codecs() -> list[Any]:
    from zarr.codecs import Crc32cCodec, ZstdCodec

    return [ZstdCodec(level=1), Crc32cCodec()]


def create_series(path: Path, sample: Any, n_trials: int, chunk_trials: int, attrs: dict[str, Any]) -> None:
    """Create an empty time-series store shaped after one chunk's record.

    Parameters
    ----------
    path : Path
        ``DIR/timeseries.zarr``; created under ``<path>.tmp`` and renamed into place.
    sample : xarray.Dataset
        One chunk's record (dims ``trial``, ``time``): gives the signals,
        their attributes and the time axis.
    n_trials : int
        Trials planned (the trial axis; ``trial`` holds 0 .. n_trials - 1).
    chunk_trials : int
        Trials per Zarr chunk: the campaign's batch size.
    attrs : dict
        Global attributes (spec hash, scenario, decimation).
    """
    import zarr

    tmp = path.with_name(path.name + ".tmp")
    shutil.rmtree(tmp, ignore_errors=True)
    group = zarr.open_group(tmp, mode="w", zarr_format=3, attributes=dict(attrs))
    n_time = int(sample.sizes["time"])
    trial = group.create_array("trial", shape=(n_trials,), chunks=(chunk_trials,), dtype="i8", fill_value=-1,
                               dimension_names=["trial"],
                               attributes={"long_name": "trial index in the campaign"})  # fmt: skip
    trial[:] = np.arange(n_trials, dtype=np.int64)
    time = group.create_array("time", shape=(n_time,), chunks=(max(n_time, 1),), dtype="f8", fill_value=0.0,
                              dimension_names=["time"],
                              attributes={"units": "s", "long_name": "time since start"})  # fmt: skip
    time[:] = np.asarray(sample["time"].values, dtype=np.float64)
    for name in sample.data_vars:
        group.create_array(name, shape=(n_trials, n_time), chunks=(chunk_trials, max(n_time, 1)), dtype="f4",
                           fill_value=np.float32(np.nan), compressors=_codecs(), dimension_names=list(_COORDS),
                           attributes=dict(sample[name].attrs))  # fmt: skip
    os.replace(tmp, path)


def write_series_chunk(path: Path, record: Any, first_trial: int) -> None:
    """Write one chunk's record into its rows of the store (whole Zarr chunks).

    Parameters
    ----------
    path : Path
        The store (made by :func:`create_series`).
    record : xarray.Dataset
        The chunk's time series, dims (trial, time), trials ``first_trial ..``.
    first_trial : int
        Global index of the chunk's first trial (a multiple of the batch size).
    """
    import zarr

    group = zarr.open_group(path, mode="r+", zarr_format=3)
    lo, hi = int(first_trial), int(first_trial) + int(record.sizes["trial"])
    # an all-NaN chunk (a signal the stack does not produce) is still written, so a missing file means damage
    with zarr.config.set({"array.write_empty_chunks": True}):
        for name in record.data_vars:
            group[name][lo:hi, :] = np.asarray(record[name].values, dtype=np.float32)


def _chunk_file(path: Path, name: str, chunk_index: int) -> Path:
    # Zarr format 3's default chunk-key encoding: <array>/c/<i>/<j>; the time axis is one chunk (j = 0)
    return path / name / "c" / str(chunk_index) / "0"


def check_series_chunk(path: Path, first_trial: int, n_trials: int) -> None:
    """Confirm a committed chunk's rows are on disk and readable.

    Every signal's Zarr chunk file must exist (a missing one would read back
    as NaN without complaint) and decode with a matching checksum.

    Raises
    ------
    ValueError
        Naming what is missing or unreadable.
    """
    import zarr

    if not path.exists():
        raise ValueError(f"{path.name} is missing")
    group = zarr.open_group(path, mode="r", zarr_format=3)
    signals = [name for name in group.array_keys() if name not in _COORDS]
    chunk_trials = int(group[signals[0]].chunks[0]) if signals else 1
    index = int(first_trial) // chunk_trials
    for name in signals:
        if not _chunk_file(path, name, index).is_file():
            raise ValueError(f"{name} rows {first_trial}-{first_trial + n_trials - 1} are missing from {path.name}")
        group[name][first_trial : first_trial + n_trials, :]  # decodes; a bad checksum raises ValueError


def shrink_series(path: Path, n_trials: int) -> None:
    """Cut the store to its first ``n_trials`` trials (a campaign stopped early)."""
    import zarr

    if not path.exists():
        return
    group = zarr.open_group(path, mode="r+", zarr_format=3)
    for name in group.array_keys():
        arr = group[name]
        if name == "time" or arr.shape[0] <= n_trials:  # only ever cut, never grow
            continue
        arr.resize((n_trials, *arr.shape[1:]))


def write_series(ds: Any, path: Path, chunk_trials: int) -> None:
    """Write a whole in-memory time series (a campaign run without a store) in the same layout."""
    import zarr

    tmp = path.with_name(path.name + ".tmp")
    shutil.rmtree(tmp, ignore_errors=True)
    n_time = max(int(ds.sizes["time"]), 1)
    encoding = {name: {"chunks": (chunk_trials, n_time), "compressors": _codecs(),
                       "fill_value": np.float32(np.nan)} for name in ds.data_vars}  # fmt: skip
    out = ds.copy()
    for name in out.data_vars:
        out[name].encoding = {}
    with zarr.config.set({"array.write_empty_chunks": True}):
        out.to_zarr(tmp, mode="w", zarr_format=3, consolidated=False, encoding=encoding)
    shutil.rmtree(path, ignore_errors=True)
    os.replace(tmp, path)


def open_timeseries(store_dir: str | os.PathLike[str]) -> Any:
    """The store's time series, opened lazily (values are read when used), or None.

    Reads ``timeseries.zarr``; a store written before the Zarr layout has
    ``timeseries.nc`` instead, which is opened the same way.

    Returns
    -------
    xarray.Dataset or None
    """
    import xarray as xr

    d = Path(store_dir)
    if (d / SERIES_NAME).is_dir():
        return xr.open_zarr(d / SERIES_NAME, consolidated=False, chunks=None, zarr_format=3)
    if (d / LEGACY_NAME).is_file():
        return xr.open_dataset(d / LEGACY_NAME, engine="h5netcdf")
    return None
