"""Trial-steps per second of the navigation primitives: the terrain-aided particle filter and the Kalman update.

Particle filter: N trials x P particles over the invented synthetic bay
(:func:`wavebench.sea.seabed.synthetic_bay`), one predict + depth update +
estimate per step, batched (:mod:`wavebench.navigation.particle`) against a
plain per-trial reference loop (the same functions called with one trial at
a time) in the same process. Kalman filter: a 6-state update with a 3-row
measurement, batched over N trials against the same per-trial loop.

Prints time per step and trial-steps per second, and the ratio::

    python benchmarks/bench_navigation.py                    # N = 1000, P = 500
    python benchmarks/bench_navigation.py --trials 200 --particles 200

Speed is measured here, never asserted in unit tests.
"""

from __future__ import annotations

import argparse
import os
import platform
import time

import numpy as np

from wavebench.navigation import kf_predict, kf_update
from wavebench.navigation.particle import pf_estimate, pf_init, pf_predict, pf_update
from wavebench.sea.seabed import SyntheticBayParams, depth_at, synthetic_bay


def _pf_steps(n: int, p: int, steps: int, bay, seed: int) -> float:
    rng = [np.random.default_rng([seed, i]) for i in range(n)]
    truth = np.column_stack([np.full(n, 1500.0), np.full(n, 1000.0)])
    cloud = pf_init(truth + 20.0, np.diag([400.0, 400.0]), p, rngs=rng)

    def depth_fn(north, east):
        return depth_at(bay, north.ravel(), east.ravel()).reshape(north.shape)

    vel = np.column_stack([np.full(n, 1.5), np.zeros(n)])
    t0 = time.perf_counter()
    for _ in range(steps):
        truth = truth + vel
        cloud = pf_predict(cloud, vel, 1.0, 0.5, rngs=rng)
        measured = depth_at(bay, truth[:, 0], truth[:, 1])
        cloud = pf_update(cloud, measured, depth_fn, 0.5, rngs=rng).cloud
        pf_estimate(cloud)
    return (time.perf_counter() - t0) / steps


def _kf_steps(n: int, steps: int, seed: int) -> float:
    rng = np.random.default_rng(seed)
    s, m = 6, 3
    x, p = np.zeros((n, s)), np.tile(np.eye(s), (n, 1, 1))
    f, q = np.eye(s) + np.diag(np.full(s - 1, 0.1), 1), 0.01 * np.eye(s)
    h, r = np.eye(m, s), 0.5 * np.eye(m)
    t0 = time.perf_counter()
    for _ in range(steps):
        x, p = kf_predict(x, p, f, q)
        up = kf_update(x, p, rng.normal(size=(n, m)), h, r, gate=0.997)
        x, p = up.x, up.P
    return (time.perf_counter() - t0) / steps


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--trials", type=int, default=1000)
    ap.add_argument("--particles", type=int, default=500)
    ap.add_argument("--steps", type=int, default=20)
    ap.add_argument("--reference-trials", type=int, default=20, help="trials run one at a time for the ratio")
    args = ap.parse_args()
    print(f"{platform.processor() or platform.machine()}, {os.cpu_count()} cores")
    bay = synthetic_bay(SyntheticBayParams(), np.random.default_rng(11))
    n, p = args.trials, args.particles
    _pf_steps(2, p, 2, bay, 1)  # warm-up
    batched = _pf_steps(n, p, args.steps, bay, 1)
    one = np.mean([_pf_steps(1, p, args.steps, bay, 100 + i) for i in range(args.reference_trials)])
    print(f"particle filter, {p} particles: batched N = {n}: {batched * 1e3:.1f} ms per step, "
          f"{n / batched:,.0f} trial-steps/s; per-trial loop: {one * 1e3:.2f} ms per trial-step, "
          f"{1 / one:,.0f} trial-steps/s; ratio {one * n / batched:.1f}x")  # fmt: skip
    batched = _kf_steps(n, args.steps * 10, 2)
    one = _kf_steps(1, args.steps * 10, 3)
    print(f"Kalman predict + gated update (6 states, 3 measurements): batched N = {n}: {batched * 1e3:.2f} ms per "
          f"step, {n / batched:,.0f} trial-steps/s; per-trial loop {1 / one:,.0f} trial-steps/s; "
          f"ratio {one * n / batched:.1f}x")  # fmt: skip


if __name__ == "__main__":
    main()
