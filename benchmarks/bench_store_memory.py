"""Peak memory of a campaign written to a store folder against the same campaign held in memory; resume cost.

Each case runs in a fresh Python process (``resource.getrusage`` peak RSS of
that process), so the figures do not mix::

    python benchmarks/bench_store_memory.py --trials 10000
    python benchmarks/bench_store_memory.py --trials 100000 --batch-size 1000 --skip-memory-case
    python benchmarks/bench_store_memory.py --trials 10000 --resume-case

With a store, finished chunks go to disk as they arrive (time series into
``timeseries.zarr``, whole Zarr chunks per campaign chunk); in memory, every
chunk's time series is kept until the end. ``--resume-case`` kills a store
campaign (SIGKILL) once about half its chunks are written, resumes it in a
fresh process and prints the time spent checking the finished chunks and
the total against an uninterrupted run. Speed and memory are measured here,
never asserted in unit tests.
"""

from __future__ import annotations

import argparse
import json
import os
import signal
import subprocess
import sys
import tempfile
import time
from pathlib import Path

CASE = """
import json, resource, sys, time
from wavebench.campaign import run_campaign
from wavebench.spec import example_spec_path, load_spec
spec = load_spec(example_spec_path({scenario!r}))
t = time.perf_counter()
res = run_campaign(spec, trials={trials}, batch_size={batch}, progress=False, store={store!r})
wall = time.perf_counter() - t
print(json.dumps({{"wall_s": wall, "peak_rss_mb": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024,
                   "trials": len(res.metrics)}}))
"""


def _run(scenario: str, trials: int, batch: int, store: str | None) -> dict:
    code = CASE.format(scenario=scenario, trials=trials, batch=batch, store=store)
    out = subprocess.run([sys.executable, "-c", code], check=True, capture_output=True, text=True).stdout
    return json.loads(out.strip().splitlines()[-1])


RESUME = """
import json, resource, time, warnings
from pathlib import Path
from wavebench.campaign import chunks, run_campaign
from wavebench.spec import load_spec
store = Path({store!r})
t = time.perf_counter()
n_done = len(chunks.finished_chunks(store / "chunks", True))
check = time.perf_counter() - t
res = run_campaign(load_spec(store / "spec.toml"), progress=False, store=store, resume=True)
wall = time.perf_counter() - t
print(json.dumps({{"wall_s": wall, "check_s": check, "chunks_kept": n_done, "trials": len(res.metrics),
                   "peak_rss_mb": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024}}))
"""


def _resume_case(scenario: str, trials: int, batch: int, tmp: str, whole_s: float) -> None:
    store = f"{tmp}/killed"
    code = CASE.format(scenario=scenario, trials=trials, batch=batch, store=store)
    n_chunks = -(-trials // batch)
    proc = subprocess.Popen([sys.executable, "-c", code], stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    start = time.perf_counter()
    chunk_dir = Path(store) / "chunks"
    while proc.poll() is None and len(list(chunk_dir.glob("metrics-*.parquet"))) < n_chunks // 2:
        time.sleep(0.2)
    os.kill(proc.pid, signal.SIGKILL)
    proc.wait()
    killed_after = time.perf_counter() - start
    out = subprocess.run([sys.executable, "-c", RESUME.format(store=store)], check=True, capture_output=True,
                         text=True).stdout  # fmt: skip
    r = json.loads(out.strip().splitlines()[-1])
    print(f"  killed after : {killed_after:.1f} s with {r['chunks_kept']} of {n_chunks} chunks written")
    print(f"  resumed      : {r['wall_s']:.1f} s wall ({r['check_s']:.2f} s checking the finished chunks), "
          f"peak RSS {r['peak_rss_mb']:,.0f} MB")
    print(f"  overhead     : {killed_after + r['wall_s'] - whole_s:+.1f} s against the uninterrupted run "
          "(the chunk in flight at the kill, process start and compilation, the check)")


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--trials", type=int, default=10000)
    ap.add_argument("--batch-size", type=int, default=500)
    ap.add_argument("--scenario", default="skerrow_sound")
    ap.add_argument("--skip-memory-case", action="store_true", help="only the store case (for very large runs)")
    ap.add_argument("--resume-case", action="store_true", help="also kill a store campaign half way and resume it")
    args = ap.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        stored = _run(args.scenario, args.trials, args.batch_size, f"{tmp}/store")
        print(f"{args.scenario}, {args.trials} trials, batch {args.batch_size}")
        print(f"  store folder : peak RSS {stored['peak_rss_mb']:,.0f} MB, {stored['wall_s']:.1f} s wall")
        if args.resume_case:
            _resume_case(args.scenario, args.trials, args.batch_size, tmp, stored["wall_s"])
    if not args.skip_memory_case:
        held = _run(args.scenario, args.trials, args.batch_size, None)
        print(f"  in memory    : peak RSS {held['peak_rss_mb']:,.0f} MB, {held['wall_s']:.1f} s wall")


if __name__ == "__main__":
    main()
