"""Executors: inline, local processes and a real Dask LocalCluster give the same bits."""

from __future__ import annotations

import concurrent.futures

import pandas as pd
import pytest

from wavebench.campaign import run_campaign
from wavebench.campaign.executors import open_executor
from wavebench.core.errors import ParameterError
from wavebench.spec import example_spec_path, load_spec


@pytest.fixture(scope="module")
def spec():
    return load_spec(example_spec_path("skerrow_sound"), ["scenario.duration_s=30.0", "campaign.batch_size=2"])


@pytest.fixture(scope="module")
def inline(spec):
    return run_campaign(spec, trials=5, progress=False)


def _same(a, b) -> None:
    pd.testing.assert_frame_equal(a.metrics, b.metrics, check_exact=True)
    assert a.timeseries.equals(b.timeseries)
    assert [v.verdict for v in a.verdicts] == [v.verdict for v in b.verdicts]


def test_local_processes_give_the_inline_bits(spec, inline) -> None:
    _same(inline, run_campaign(spec, trials=5, progress=False, executor="processes", workers=2))


def test_a_dask_local_cluster_gives_the_inline_bits(spec, inline) -> None:
    pytest.importorskip("distributed", reason="the test extra installs dask.distributed")
    _same(inline, run_campaign(spec, trials=5, progress=False, executor="dask", workers=2))


def test_a_navigator_campaign_on_processes_gives_the_inline_bits() -> None:
    spec = load_spec(example_spec_path("brannock_bridge"), ["scenario.duration_s=40.0", "campaign.batch_size=2"])
    a = run_campaign(spec, trials=3, progress=False)
    _same(a, run_campaign(spec, trials=3, progress=False, executor="processes", workers=2))


def test_any_object_with_an_ordered_map_is_an_executor(spec, inline) -> None:
    with concurrent.futures.ThreadPoolExecutor(max_workers=2) as pool:
        _same(inline, run_campaign(spec, trials=5, progress=False, executor=pool))


def _not_picklable_factory():
    return lambda setup: None


def test_bad_executors_are_refused_before_anything_runs(spec) -> None:
    with pytest.raises(ParameterError, match=r"executor = 'cluster' .*'inline', 'processes', 'dask'"):
        run_campaign(spec, trials=2, progress=False, executor="cluster")
    with pytest.raises(ParameterError, match=r"workers = 0"):
        run_campaign(spec, trials=2, progress=False, executor="processes", workers=0)
    with pytest.raises(ParameterError, match="picklable"):
        run_campaign(spec, trials=2, progress=False, executor="processes", workers=1,
                     pilot_factory=_not_picklable_factory())  # fmt: skip
    with pytest.raises(ParameterError, match="map"), open_executor(object()):
        pass


def test_cli_runs_on_worker_processes(tmp_path, spec, inline) -> None:
    from wavebench.cli import main

    out = tmp_path / "store"
    assert main(["run", "skerrow_sound", "--out", str(out), "--trials", "5", "--quiet", "--executor", "processes",
                 "--workers", "2", "--set", "scenario.duration_s=30.0", "--set", "campaign.batch_size=2"]) == 0  # fmt: skip
    got = pd.read_parquet(out / "metrics.parquet")
    pd.testing.assert_frame_equal(got[inline.metrics.columns], inline.metrics, check_exact=True, check_dtype=False)


def test_the_spec_can_name_its_executor(spec, inline) -> None:
    on_processes = load_spec(example_spec_path("skerrow_sound"), ["scenario.duration_s=30.0", "campaign.batch_size=2",
                                                                  "campaign.executor=processes"])  # fmt: skip
    assert on_processes.campaign.executor == "processes"
    _same(inline, run_campaign(on_processes, trials=5, progress=False, workers=2))


def _dies_once(marker, fn, idx):
    """Run a chunk, but kill the worker process (hard) the first time it is given the chunk of trials 2-3."""
    import os
    from pathlib import Path

    if int(idx[0]) == 2 and not Path(marker).exists():
        Path(marker).write_text("died", encoding="utf-8")
        os._exit(1)  # the worker process dies mid-chunk, as if killed
    return fn(idx)


class _DaskWithDyingWorker:
    """An executor object: a Dask client whose map lets one worker die on its first try of one chunk."""

    def __init__(self, client, marker):
        self.client, self.marker = client, marker

    def map(self, fn, items):
        import functools

        futures = self.client.map(functools.partial(_dies_once, str(self.marker), fn), list(items), pure=False)
        for fut in futures:
            yield fut.result()


def test_a_dask_worker_killed_mid_chunk_is_replaced_and_nothing_changes(spec, inline, tmp_path) -> None:
    import sys

    import cloudpickle

    distributed = pytest.importorskip("distributed", reason="the test extra installs dask.distributed")
    cloudpickle.register_pickle_by_value(sys.modules[__name__])  # the workers cannot import this test module
    try:
        with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                      dashboard_address=None) as cl, distributed.Client(cl) as client:  # fmt: skip
            got = run_campaign(spec, trials=5, progress=False, executor=_DaskWithDyingWorker(client, tmp_path / "m"))
    finally:
        cloudpickle.unregister_pickle_by_value(sys.modules[__name__])
    assert (tmp_path / "m").exists()  # a worker did die once, mid-chunk
    _same(inline, got)


class DieOnceFactory:
    """A pilot factory that kills its worker process the first time it builds the batch of trials 2-3."""

    def __init__(self, marker: str) -> None:
        self.marker = marker

    def __call__(self, setup):
        import os
        from pathlib import Path

        if 2 in list(setup.env.trials.trials) and not Path(self.marker).exists():
            Path(self.marker).write_text("died", encoding="utf-8")
            os._exit(1)  # the worker dies mid-chunk, as if killed
        return None  # the spec's own pilot


def test_a_local_worker_killed_mid_chunk_is_replaced_and_nothing_changes(spec, inline, tmp_path) -> None:
    got = run_campaign(spec, trials=5, progress=False, executor="processes", workers=2,
                       pilot_factory=DieOnceFactory(str(tmp_path / "m")))  # fmt: skip
    assert (tmp_path / "m").exists()  # a worker did die once
    _same(inline, got)
