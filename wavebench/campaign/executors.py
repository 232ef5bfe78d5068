"""Where a campaign's chunks run: this process, local worker processes, or a Dask cluster.

The campaign engine needs one thing of an executor: an order-preserving
``map(fn, items)`` that yields results as they are ready, in the order of
``items``. :func:`open_executor` gives one for a name, or wraps any object
with such a ``map`` (e.g. ``concurrent.futures.Executor``), as a context
manager that shuts down what it started. Dask is imported only here, only
when asked for (``pip install 'wavebench[dask]'``).

Workers get the chunk function and its arguments by pickling: the spec, the
pilot and any user block factories must be picklable (module-level
functions or classes). A worker that dies mid-chunk costs only that chunk's
time: Dask reschedules its task on another worker, and the local process
pool is started again for the chunks not yet returned. Each worker process runs the compiled kernels on one
thread, so that workers do not contend for the cores; a fresh worker
compiles (or loads from numba's cache) the kernels once.
"""

from __future__ import annotations

import concurrent.futures
import multiprocessing
import os
from collections.abc import Callable, Iterable, Iterator
from contextlib import contextmanager
from dataclasses import dataclass
from typing import Any

from ..core.errors import ParameterError

__all__ = ["EXECUTOR_NAMES", "ExecutorHandle", "open_executor"]

#: Executors known by name.
EXECUTOR_NAMES = ("inline", "processes", "dask")


@dataclass
class ExecutorHandle:
    """An order-preserving map and whether it runs in this process.

    Attributes
    ----------
    map : callable
        ``map(fn, items) -> iterator`` of ``fn(item)`` in the order of ``items``.
    in_process : bool
        True when ``fn`` runs in this process (closures and progress callbacks work).
    description : str
        For logs and the store's manifest.
    """

    map: Callable[[Callable[[Any], Any], Iterable[Any]], Iterator[Any]]
    in_process: bool
    description: str


def _inline_map(fn: Callable[[Any], Any], items: Iterable[Any]) -> Iterator[Any]:
    for item in items:
        yield fn(item)


def _worker_init() -> None:
    """Worker processes: one thread for the compiled kernels (set again per chunk) and for BLAS."""
    os.environ.setdefault("OMP_NUM_THREADS", "1")


class _RestartingPool:
    """Local worker processes whose pool is started again when a worker dies (killed, out of memory).

    A dead worker breaks a ``ProcessPoolExecutor`` and fails every pending
    task; the chunks not yet returned are then submitted to a fresh pool,
    at most :data:`MAX_POOL_RESTARTS` times per campaign, and each chunk
    gives the same bits wherever it runs.
    """

    def __init__(self, workers: int) -> None:
        self.workers = workers
        self.restarts = 0
        self.pool = self._start()

    def _start(self) -> concurrent.futures.ProcessPoolExecutor:
        ctx = multiprocessing.get_context("spawn")
        return concurrent.futures.ProcessPoolExecutor(max_workers=self.workers, mp_context=ctx,
                                                      initializer=_worker_init)  # fmt: skip

    def map(self, fn: Callable[[Any], Any], items: Iterable[Any]) -> Iterator[Any]:
        """Results in order, with at most ``2 * workers`` chunks in flight.

        The bound keeps the finished chunks waiting behind a slow one (each
        with its time series) from piling up in memory.
        """
        from collections import deque
        from concurrent.futures.process import BrokenProcessPool

        todo = list(items)
        window = 2 * self.workers
        start = 0  # chunks already yielded
        while start < len(todo):
            pending: deque[Any] = deque()
            nxt = start
            try:
                while start < len(todo):
                    while nxt < len(todo) and len(pending) < window:
                        pending.append(self.pool.submit(fn, todo[nxt]))
                        nxt += 1
                    result = pending.popleft().result()
                    start += 1
                    yield result
            except BrokenProcessPool:
                if self.restarts >= MAX_POOL_RESTARTS:
                    raise
                self.restarts += 1
                self.pool.shutdown(wait=False, cancel_futures=True)
                self.pool = self._start()
            finally:
                for fut in pending:
                    fut.cancel()

    def shutdown(self) -> None:
        self.pool.shutdown(wait=True, cancel_futures=True)


#: Times the local process pool may be started again in one campaign after a worker died.
MAX_POOL_RESTARTS = 3


def _dask_map(client: Any) -> Callable[..., Iterator[Any]]:
    def ordered(fn: Callable[[Any], Any], items: Iterable[Any]) -> Iterator[Any]:
        items = list(items)
        # pure=False: every chunk is its own task even if two look alike
        futures = client.map(fn, items, pure=False)
        try:
            for fut in futures:
                yield fut.result()
        finally:
            client.cancel(futures)

    return ordered


@contextmanager
def open_executor(executor: str | Any = "inline", *, workers: int | None = None,
                  scheduler: str | None = None) -> Iterator[ExecutorHandle]:  # fmt: skip
    """Open an executor for a campaign; close what was started on exit.

    Parameters
    ----------
    executor : {"inline", "processes", "dask"} or object
        A name, or an object with an order-preserving ``map(fn, items)``
        (used as given, not closed here).
    workers : int, optional
        Worker processes ("processes") or local Dask workers (default: the cores).
    scheduler : str, optional
        Address of a running Dask scheduler; without it a LocalCluster is
        started for the campaign and closed after it.

    Yields
    ------
    ExecutorHandle

    Raises
    ------
    ParameterError
        For an unknown name, a bad worker count, or Dask asked for but not installed.

    Examples
    --------
    >>> with open_executor("inline") as ex:
    ...     list(ex.map(lambda x: x * x, [1, 2, 3]))
    [1, 4, 9]
    """
    if workers is not None and (isinstance(workers, bool) or int(workers) != workers or workers < 1):
        raise ParameterError("workers", workers, "must be a whole number >= 1")
    n = int(workers) if workers is not None else (os.cpu_count() or 1)
    if not isinstance(executor, str):
        if not callable(getattr(executor, "map", None)):
            raise ParameterError("executor", type(executor).__name__, f"must be one of {list(EXECUTOR_NAMES)} or "
                                 "have an order-preserving map(fn, items)")  # fmt: skip
        yield ExecutorHandle(map=executor.map, in_process=False, description=type(executor).__name__)
        return
    if executor == "inline":
        yield ExecutorHandle(map=_inline_map, in_process=True, description="inline")
    elif executor == "processes":
        pool = _RestartingPool(n)
        try:
            yield ExecutorHandle(map=pool.map, in_process=False, description=f"processes x {n}")
        finally:
            pool.shutdown()
    elif executor == "dask":
        try:
            from dask.distributed import Client, LocalCluster
        except ImportError:
            raise ParameterError("executor", "dask", "needs Dask: pip install 'wavebench[dask]'") from None
        if scheduler:
            client = Client(scheduler)
            try:
                yield ExecutorHandle(map=_dask_map(client), in_process=False, description=f"dask at {scheduler}")
            finally:
                client.close()
        else:
            cluster = LocalCluster(n_workers=n, threads_per_worker=1, processes=True, dashboard_address=None)
            client = Client(cluster)
            try:
                yield ExecutorHandle(map=_dask_map(client), in_process=False,
                                     description=f"dask LocalCluster x {n}")  # fmt: skip
            finally:
                client.close()
                cluster.close()
    else:
        raise ParameterError("executor", executor, f"must be one of {list(EXECUTOR_NAMES)}")
