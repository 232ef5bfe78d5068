"""Trial-steps per second of the compiled terrain-aided particle filter against the numpy one.

N trials x P particles over the invented synthetic bay
(:func:`wavebench.sea.seabed.synthetic_bay`); one step = predict + depth
update (+ systematic resampling when ESS < P/2) + estimate, a sounding every
step. Compiled: :func:`wavebench.navigation.terrain_kernel.pf_step_batch`
once per step for all N trials (numba ``prange`` over trials). Reference, in
the same process: the numpy filter of :mod:`wavebench.navigation.particle`
run on one trial at a time (a per-trial loop), and optionally the same numpy
filter batched over all N trials (``--numpy-batch``).

Prints milliseconds per step, trial-steps per second and the ratios::

    python benchmarks/bench_terrain_kernel.py                     # N = 1000, P = 500
    python benchmarks/bench_terrain_kernel.py --numpy-batch --steps 10
    python benchmarks/bench_terrain_kernel.py --threads 1

Speed is measured here, never asserted in unit tests. Times are medians over
steps after a warm-up (the first call compiles or loads numba's cache).
"""

from __future__ import annotations

import argparse
import os
import platform
import time

import numba
import numpy as np

from wavebench.navigation import terrain_kernel as tk
from wavebench.navigation.particle import pf_estimate, pf_init, pf_predict, pf_update
from wavebench.sea.seabed import SyntheticBayParams, depth_at, synthetic_bay

START = (1500.0, 1000.0)
VEL = (1.5, 0.0)  # m/s, dt = 1 s
PRIOR_SD, PROCESS_SD, DEPTH_SD = 20.0, 0.5, 0.5


def _kernel(n: int, p: int, steps: int, bay, seed: int) -> list[float]:  # type: ignore[no-untyped-def]
    gn, ge, grid = (np.ascontiguousarray(a, dtype=float) for a in (bay.north_m, bay.east_m, bay.depth_m))
    fill = np.nan if bay.fill_depth_m is None else float(bay.fill_depth_m)
    keys = np.random.default_rng(seed).integers(0, 2**64, n, dtype=np.uint64)
    particles = np.empty((n, p, 2))
    logw = np.empty((n, p))
    tk.pf_init_batch(keys, particles, logw, np.full(n, START[0] + 20.0), np.full(n, START[1] + 20.0),
                     np.full(n, PRIOR_SD))  # fmt: skip
    mean, cov, ess = np.empty((n, 2)), np.empty((n, 2, 2)), np.empty(n)
    d_n, d_e = np.full(n, VEL[0]), np.full(n, VEL[1])
    q, r = np.full(n, PROCESS_SD), np.full(n, DEPTH_SD)
    has, active = np.ones(n, dtype=bool), np.ones(n, dtype=bool)
    truth = np.array(START)
    times = []
    for t in range(steps):
        truth = truth + VEL
        z = np.full(n, depth_at(bay, truth[:1], truth[1:])[0])
        t0 = time.perf_counter()
        tk.pf_step_batch(keys, t, particles, logw, d_n, d_e, q, z, r, has, 0.5, gn, ge, grid, fill, active, mean,
                         cov, ess)  # fmt: skip
        times.append(time.perf_counter() - t0)
    return times


def _numpy(n: int, p: int, steps: int, bay, seed: int) -> list[float]:  # type: ignore[no-untyped-def]
    rngs = [np.random.default_rng([seed, i]) for i in range(n)]
    truth = np.tile(START, (n, 1))
    cloud = pf_init(truth + 20.0, np.diag([PRIOR_SD**2] * 2), p, rngs=rngs)

    def depth_fn(north, east):  # type: ignore[no-untyped-def]
        return depth_at(bay, north.ravel(), east.ravel()).reshape(north.shape)

    vel = np.tile(VEL, (n, 1))
    times = []
    for _ in range(steps):
        truth = truth + vel
        measured = depth_at(bay, truth[:, 0], truth[:, 1])
        t0 = time.perf_counter()
        cloud = pf_predict(cloud, vel, 1.0, PROCESS_SD, rngs=rngs)
        cloud = pf_update(cloud, measured, depth_fn, DEPTH_SD, resample_threshold=0.5, rngs=rngs).cloud
        pf_estimate(cloud)
        times.append(time.perf_counter() - t0)
    return times


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--trials", type=int, default=1000)
    ap.add_argument("--particles", type=int, default=500)
    ap.add_argument("--steps", type=int, default=30)
    ap.add_argument("--reference-trials", type=int, default=20, help="trials run one at a time by the numpy filter")
    ap.add_argument("--numpy-batch", action="store_true", help="also time the numpy filter batched over all trials")
    ap.add_argument("--threads", type=int, default=None, help="numba threads (default: all)")
    args = ap.parse_args()
    if args.threads:
        numba.set_num_threads(args.threads)
    n, p = args.trials, args.particles
    print(f"{platform.processor() or platform.machine()}, {os.cpu_count()} cores, numba {numba.__version__} "
          f"with {numba.get_num_threads()} threads ({numba.config.THREADING_LAYER} layer); "
          f"load average {os.getloadavg()[0]:.2f}")  # fmt: skip
    bay = synthetic_bay(SyntheticBayParams(), np.random.default_rng(11))
    _kernel(2, p, 3, bay, 0)  # warm-up: compile or load the cache
    kern = float(np.median(_kernel(n, p, args.steps, bay, 1)[1:]))
    one = float(np.median([np.median(_numpy(1, p, args.steps, bay, 100 + i)[1:])
                           for i in range(args.reference_trials)]))  # fmt: skip
    print(f"{p} particles, a sounding every step, resampling at ESS < P/2")
    print(f"compiled pf_step_batch, N = {n}: {kern * 1e3:.2f} ms per step, {n / kern:,.0f} trial-steps/s")
    print(f"numpy filter, per-trial loop: {one * 1e3:.3f} ms per trial-step, {1 / one:,.0f} trial-steps/s; "
          f"compiled batch is {one * n / kern:.0f}x faster")  # fmt: skip
    if args.numpy_batch:
        batch = float(np.median(_numpy(n, p, min(args.steps, 10), bay, 1)[1:]))
        print(f"numpy filter, batched N = {n}: {batch * 1e3:.1f} ms per step, {n / batch:,.0f} trial-steps/s; "
              f"compiled batch is {batch / kern:.1f}x faster")  # fmt: skip


if __name__ == "__main__":
    main()
