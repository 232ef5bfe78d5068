"""Peak memory of a campaign written to a store folder against the same campaign held in memory.

Each case runs in a fresh Python process (``resource.getrusage`` peak RSS of
that process), so the figures do not mix::

    python benchmarks/bench_store_memory.py --trials 10000
    python benchmarks/bench_store_memory.py --trials 100000 --batch-size 1000

With a store, finished chunks go to disk as they arrive and the time series
are consolidated one chunk at a time; in memory, every chunk's time series
is kept until the end. Speed and memory are measured here, never asserted in
unit tests.
"""

from __future__ import annotations

import argparse
import json
import subprocess
import sys
import tempfile

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


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--trials", type=int, default=10000)
    ap.add_argument("--batch-size", type=int, default=500)
    ap.add_argument("--scenario", default="skerrow_sound")
    ap.add_argument("--skip-memory-case", action="store_true", help="only the store case (for very large runs)")
    args = ap.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        stored = _run(args.scenario, args.trials, args.batch_size, f"{tmp}/store")
    print(f"{args.scenario}, {args.trials} trials, batch {args.batch_size}")
    print(f"  store folder : peak RSS {stored['peak_rss_mb']:,.0f} MB, {stored['wall_s']:.1f} s wall")
    if not args.skip_memory_case:
        held = _run(args.scenario, args.trials, args.batch_size, None)
        print(f"  in memory    : peak RSS {held['peak_rss_mb']:,.0f} MB, {held['wall_s']:.1f} s wall")


if __name__ == "__main__":
    main()
