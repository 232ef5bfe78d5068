"""Running a campaign: its trials in chunks, each a vectorised batch, on any executor.

:func:`run_campaign` cuts the trials into chunks of ``batch_size`` and maps
:func:`run_chunk` over them with an executor
(:mod:`wavebench.campaign.executors`: this process, local worker processes
or Dask). A chunk builds its environment and blocks from the spec and runs
them (:func:`~wavebench.trial.loop.run_batch`). Trial ``i`` draws only from
its own random streams, and the pilot's gains are derived once for the
whole campaign, so a trial's metrics and record are the same whatever the
batch size or executor. A chunk that raises is recorded as failed trials
with the error as their reason, and the campaign goes on.
"""

from __future__ import annotations

import dataclasses
import functools
import os
import time
import warnings
import zlib
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np
from tqdm.auto import tqdm

from ..analysis.metric_names import METRICS
from ..analysis.verdicts import Verdict, evaluate_requirement
from ..core.errors import ParameterError, WavebenchWarning
from ..core.streams import TrialStreams
from ..spec.build import build_environment
from ..spec.schema import Spec
from ..trial.loop import BatchResult, run_batch
from ..trial.recorder import SIGNALS
from ..trial.setup import build_trial_setup, check_spec_against_craft, pilot_for
from .chunks import series_attrs

__all__ = ["CampaignResult", "ChunkOutput", "evaluate_verdicts", "run_campaign", "run_chunk", "with_overrides"]


@dataclass(frozen=True)
class CampaignResult:
    """Everything a campaign produced.

    Parameters
    ----------
    spec : Spec
        The spec as run (with any overrides applied).
    metrics : pandas.DataFrame
        One row per trial: ``trial``, the metrics and ``param.<path>`` draws.
    timeseries : xarray.Dataset or None
        Recorded signals, dims (trial, time); None when recording was off.
    verdicts : list of Verdict
        One per requirement of the spec.
    wall_time_s : float
        Wall-clock time of the run [s].
    batch_size : int
    complete : bool
        False when the run was interrupted; the results then hold the
        batches that finished.
    sequential : dict of str to SequentialStatus, optional
        With ``until``: each requirement's sequential decision and the
        trials it needed.
    """

    spec: Spec
    metrics: Any
    timeseries: Any
    verdicts: list[Verdict]
    wall_time_s: float
    batch_size: int
    complete: bool = True
    sequential: dict[str, Any] | None = None


def with_overrides(spec: Spec, *, trials: int | None = None, seed: int | None = None,
                   batch_size: int | None = None) -> Spec:  # fmt: skip
    """A copy of ``spec`` with campaign fields replaced (validated)."""
    changes = {k: v for k, v in (("trials", trials), ("seed", seed), ("batch_size", batch_size)) if v is not None}
    if not changes:
        return spec
    try:
        campaign = dataclasses.replace(spec.campaign, **changes)
    except ParameterError as exc:
        raise exc.with_prefix("campaign") from None
    return dataclasses.replace(spec, campaign=campaign)


def _failed_batch(trials: np.ndarray, reason: str) -> dict[str, np.ndarray]:
    n = trials.size
    cols: dict[str, np.ndarray] = {}
    for name, info in METRICS.items():
        if info.kind == "float":
            cols[name] = np.full(n, np.nan)
        elif info.kind == "bool":
            cols[name] = np.zeros(n, dtype=bool)
    cols["ended"] = np.full(n, "failed", dtype=object)
    cols["failed"] = np.ones(n, dtype=bool)
    cols["failure_reason"] = np.full(n, reason, dtype=object)
    return cols


def evaluate_verdicts(spec: Spec, metrics: Any) -> list[Verdict]:
    """A verdict for each requirement of ``spec`` from a metrics table.

    The bootstrap of each requirement draws from its own generator, seeded
    by the campaign seed and the requirement's name, so verdicts are
    reproducible.
    """
    out = []
    for name, req in spec.requirements:
        rng = np.random.default_rng([spec.campaign.seed, zlib.crc32(f"verdict.{name}".encode())])
        values = metrics[req.metric].to_numpy(dtype=float)
        out.append(evaluate_requirement(
            name, values, metric=req.metric, comparator=req.comparator, threshold=req.threshold,
            probability=req.probability, confidence=req.confidence, unit=req.unit, rng=rng,
        ))  # fmt: skip
    return out


@dataclass(frozen=True)
class ChunkOutput:
    """What one chunk of trials produced (picklable, so it can come back from another process).

    Parameters
    ----------
    trials : ndarray of int
        Global trial indices of the chunk.
    columns : dict of str to ndarray
        Metric columns and ``param.<path>`` draws, one entry per trial.
    record : xarray.Dataset or None
        The chunk's time series (None when recording was off or the chunk failed).
    error : str or None
        The error that failed the whole chunk (its trials are then recorded as failed).
    """

    trials: np.ndarray
    columns: dict[str, np.ndarray]
    record: Any
    error: str | None = None


def run_chunk(
    spec: Spec,
    trials: np.ndarray,
    *,
    pilot: Any,
    record: bool = True,
    engine: str | None = None,
    guide_factory: Callable[[Any], Any] | None = None,
    pilot_factory: Callable[[Any], Any] | None = None,
    on_progress: Callable[[float], Any] | None = None,
    numba_threads: int | None = None,
) -> ChunkOutput:
    """Run one chunk of a campaign's trials as one vectorised batch.

    The unit of work every executor maps: it depends only on its arguments,
    so a chunk gives the same bits in this process, in a worker process or
    on a Dask worker.

    Parameters
    ----------
    spec : Spec
    trials : ndarray of int
        Global trial indices.
    pilot : NomotoPidPilot
        The campaign's pilot (gains identified once per campaign).
    record, engine, guide_factory, pilot_factory
        As for :func:`run_campaign`.
    on_progress : callable, optional
        Called with the fraction of the chunk's control periods just done.
    numba_threads : int, optional
        Threads for the compiled kernels in this process (1 in worker
        processes, so that workers do not contend for the cores).

    Returns
    -------
    ChunkOutput
    """
    if numba_threads is not None:
        import numba

        numba.set_num_threads(max(1, min(int(numba_threads), numba.config.NUMBA_NUM_THREADS)))
    idx = np.asarray(trials, dtype=np.int64)
    env = build_environment(spec, TrialStreams(spec.campaign.seed, idx))
    params = {f"param.{k}": np.asarray(v, dtype=float) for k, v in env.draws.items()}
    try:
        setup = build_trial_setup(spec, env, pilot=pilot)
        res: BatchResult = run_batch(
            spec, setup, record=record,
            guide=guide_factory(setup) if guide_factory else None,
            pilot=pilot_factory(setup) if pilot_factory else None,
            on_progress=on_progress, engine=engine,
        )  # fmt: skip
    except ParameterError:
        raise  # a configuration error (e.g. the wiring): no trial can run
    except (ArithmeticError, ValueError, FloatingPointError, RuntimeError) as exc:
        reason = f"error: {type(exc).__name__}: {exc}"
        return ChunkOutput(idx, {**_failed_batch(idx, reason), **params}, None, str(exc))
    rec = res.record.to_dataset(idx, res.time_s, {}) if record and res.record is not None else None
    return ChunkOutput(idx, {**res.metrics, **params}, rec)


def _check_picklable(work: Any, where: str) -> None:
    """Refuse, before any chunk runs, arguments that cannot travel to another process."""
    import pickle

    try:
        pickle.dumps(work)
    except (pickle.PicklingError, AttributeError, TypeError) as exc:
        raise ParameterError("executor", where, "needs picklable arguments: give guide_factory / pilot_factory as "
                             f"module-level functions or classes, not lambdas or closures ({exc})") from None


def run_campaign(
    spec: Spec,
    *,
    trials: int | None = None,
    seed: int | None = None,
    batch_size: int | None = None,
    record: bool = True,
    progress: bool = True,
    guide_factory: Callable[[Any], Any] | None = None,
    pilot_factory: Callable[[Any], Any] | None = None,
    engine: str | None = None,
    executor: str | Any | None = None,
    workers: int | None = None,
    scheduler: str | None = None,
    until: Any | None = None,
    store: str | os.PathLike[str] | None = None,
    resume: bool = False,
    on_chunk: Callable[[ChunkOutput | None, int, int], Any] | None = None,
) -> CampaignResult:
    """Run a campaign in chunks of ``batch_size`` trials, inline, in local processes or on Dask.

    Parameters
    ----------
    spec : Spec
    trials, seed, batch_size : int, optional
        Override the spec's ``[campaign]`` values.
    record : bool
        Keep the decimated time series.
    progress : bool
        Show a progress bar (tqdm; in a terminal or a notebook).
    guide_factory, pilot_factory : callable, optional
        ``factory(setup)`` returns a guide / pilot replacing the spec's
        built-in one for a batch (e.g. a user block or a per-trial adapter
        built from ``setup.env.trials.trials``). With another process's
        executor they must be picklable (module-level functions or classes).
    engine : {"fused", "tick", "numpy"}, optional
        How batches are stepped (see :func:`~wavebench.trial.loop.run_batch`);
        the default is the fastest that runs the blocks in use.
    executor : {"inline", "processes", "dask"} or object, optional
        Where the chunks run (:mod:`wavebench.campaign.executors`): this
        process, a pool of local worker processes, or a Dask cluster; or any
        object with an order-preserving ``map(fn, items)``. Default: the
        spec's ``campaign.executor``. Results are the same bits whichever is
        used.
    workers : int, optional
        Worker processes for "processes", or workers of the local Dask
        cluster started when no ``scheduler`` is given (default: the cores).
    scheduler : str, optional
        Address of a running Dask scheduler (``"tcp://host:8786"``).
    until : SequentialPlan, optional
        Run until every requirement is decided under this plan
        (:mod:`wavebench.analysis.sequential`: a Clopper-Pearson look at
        each of the plan's trial counts, valid under repeated looks) or
        its ``max_trials`` cap, which replaces the campaign's trial count.
        Chunks already sent to workers when the campaign stops are dropped.
        Under a Latin-hypercube design an early stop leaves a prefix that is
        not itself stratified (a Sobol' prefix is).
    store : path-like, optional
        A store folder to write as the campaign runs: every finished chunk is
        kept on disk (time series into ``timeseries.zarr``, metrics into
        ``chunks/``; :mod:`wavebench.campaign.chunks`) and the store's other
        files are written (:func:`~wavebench.campaign.store.write_store`) when
        the campaign completes. The time series then never sit in memory all
        at once: the result's ``timeseries`` is the Zarr store, opened lazily.
        A finished store already in the folder is replaced.
    resume : bool
        Continue the unfinished campaign in ``store``: the chunks it holds
        are read back, only the missing ones run, and the result is the same
        bits as an uninterrupted run. With ``until``, give the same plan: the
        chunks read back are looked at in trial order, as they were, so the
        campaign stops where the uninterrupted one would.
    on_chunk : callable, optional
        ``on_chunk(output, done, planned)`` in this process after each chunk
        is finished (and stored): the :class:`ChunkOutput`, the trials done
        so far (resumed ones included) and the trials planned. Called once
        first with ``output=None`` and the trials read back from the store
        (0 for a new campaign). For progress displays (e.g. a notebook
        dashboard); it must not change the output.

    Returns
    -------
    CampaignResult

    Raises
    ------
    ParameterError
        For a spec the craft cannot sail (checked before any trial runs), or
        an unknown executor.
    """
    import pandas as pd
    import xarray as xr

    from .executors import open_executor

    monitor = None
    if until is not None:
        from ..analysis.sequential import SequentialMonitor

        if not spec.requirements:
            raise ParameterError("until", "a sequential plan", "needs requirements in the spec to decide")
        trials = until.max_trials
        monitor = SequentialMonitor(until, {name: req.probability for name, req in spec.requirements})
    spec = with_overrides(spec, trials=trials, seed=seed, batch_size=batch_size)
    check_spec_against_craft(spec)
    c = spec.campaign
    if resume and store is None:
        raise ParameterError("resume", resume, "needs the store folder of the unfinished campaign")
    chunks = [np.arange(lo, min(lo + c.batch_size, c.trials)) for lo in range(0, c.trials, c.batch_size)]
    folder = None
    stored: dict[str, tuple[Any, Any]] = {}
    if store is not None:
        from .chunks import chunk_name, finished_chunks, open_plan

        folder = open_plan(Path(store), spec, record, resume=resume, until=until)
        stored = finished_chunks(folder, record) if resume else {}
    missing = [idx for idx in chunks if folder is None or chunk_name(idx) not in stored]
    pilot = pilot_for(spec, spec.craft.build())
    start = time.perf_counter()
    frames = []
    records = []  # with a store, time series go to disk as chunks finish
    complete = False
    bar = tqdm(total=c.trials, desc="campaign", unit="trial", disable=not progress, smoothing=0.1,
               bar_format="{l_bar}{bar}| {n:.0f}/{total_fmt} [{elapsed}<{remaining}, {rate_fmt}]")  # fmt: skip
    done = sum(len(frame) for frame, _ in stored.values())
    bar.n = done
    if on_chunk is not None:
        on_chunk(None, done, c.trials)
    try:
        with open_executor(c.executor if executor is None else executor, workers=workers,
                           scheduler=scheduler) as ex:  # fmt: skip
            if ex.in_process:
                def work(idx: np.ndarray) -> ChunkOutput:
                    return run_chunk(spec, idx, pilot=pilot, record=record, engine=engine,
                                     guide_factory=guide_factory, pilot_factory=pilot_factory,
                                     on_progress=lambda f, n=idx.size: bar.update(f * n))  # fmt: skip
            else:
                work = functools.partial(run_chunk, spec, pilot=pilot, record=record, engine=engine,
                                         guide_factory=guide_factory, pilot_factory=pilot_factory,
                                         numba_threads=1)  # fmt: skip
                _check_picklable(work, ex.description)
            outputs = ex.map(work, missing) if missing else iter(())
            try:
                for idx in chunks:  # in trial order: chunks read back from the store, the others as they come
                    if folder is not None and chunk_name(idx) in stored:
                        frames.append(stored[chunk_name(idx)][0])
                    else:
                        out = next(outputs)
                        if folder is not None:
                            _write_chunk(folder, out, store)
                        if out.error is not None:
                            warnings.warn(f"trials {out.trials[0]}-{out.trials[-1]} failed: {out.error}",
                                          WavebenchWarning, stacklevel=2)  # fmt: skip
                        frames.append(pd.DataFrame({"trial": out.trials.astype(np.int64), **out.columns}))
                        if out.record is not None and folder is None:
                            records.append(out.record)
                        done += out.trials.size
                        bar.n = done
                        bar.refresh()
                        if on_chunk is not None:
                            on_chunk(out, done, c.trials)
                    if monitor is not None:
                        monitor.update({name: _met(frames[-1], req) for name, req in spec.requirements})
                        if monitor.may_stop:
                            break
            finally:  # a map left part way (a sequential stop) is closed while its executor is open
                close = getattr(outputs, "close", None)
                if close is not None:
                    close()
        complete = True
    except KeyboardInterrupt:
        warnings.warn("campaign interrupted: keeping the batches that finished", WavebenchWarning, stacklevel=2)
    finally:
        bar.close()
    wall = time.perf_counter() - start
    metrics = pd.concat(frames, ignore_index=True) if frames else pd.DataFrame({"trial": []})
    for name, info in METRICS.items():
        if info.kind == "text" and name in metrics:
            metrics[name] = metrics[name].astype(str)
    timeseries = None
    if folder is not None and record and complete:
        from .series import SERIES_NAME, open_timeseries, shrink_series

        shrink_series(Path(store) / SERIES_NAME, len(metrics))  # a sequential plan may stop early
        timeseries = open_timeseries(store)  # read lazily
    elif record and records:
        timeseries = xr.concat(records, dim="trial")
        # a chunk that failed as a whole has no record: its trials keep NaN rows, as in a store
        timeseries = timeseries.reindex(trial=metrics["trial"].to_numpy())
        timeseries.attrs.update(series_attrs(spec))
        for name, (units, long_name) in SIGNALS.items():
            if name in timeseries:
                timeseries[name].attrs.update(units=units, long_name=long_name)
    if monitor is not None and len(metrics) < c.trials:
        spec = with_overrides(spec, trials=len(metrics))  # the trials actually run
    verdicts = evaluate_verdicts(spec, metrics) if len(metrics) else []
    result = CampaignResult(spec=spec, metrics=metrics, timeseries=timeseries, verdicts=verdicts, wall_time_s=wall,
                            batch_size=c.batch_size, complete=complete,
                            sequential=monitor.statuses if monitor is not None else None)  # fmt: skip
    if store is not None and complete:
        from .chunks import clear_chunks
        from .store import write_store

        write_store(result, store, timeseries_written=True)
        clear_chunks(Path(store))
    return result


def _write_chunk(folder: Path, out: ChunkOutput, store: Any) -> None:
    from . import chunks as chunk_files  # looked up at call time, so tests can make a write fail

    try:
        chunk_files.write_chunk(folder, out)
    except OSError as exc:
        raise OSError(f"writing trials {out.trials[0]}-{out.trials[-1]} to {folder.parent} failed ({exc}); the "
                      f"chunks written before are kept: free space and resume with 'wavebench run --resume "
                      f"{store}'") from exc  # fmt: skip


def _met(frame: Any, req: Any) -> np.ndarray:
    """Which trials of a chunk meet a requirement (a NaN metric, e.g. a failed trial, does not)."""
    values = frame[req.metric].to_numpy(dtype=float)
    with np.errstate(invalid="ignore"):
        return np.where(np.isnan(values), False, values < req.threshold if req.comparator == "below"
                        else values > req.threshold)  # fmt: skip
