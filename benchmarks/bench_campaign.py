"""Trials x steps per second of a whole campaign: sea, craft, truth navigation, LOS guide, PID pilot, recording.

Runs the built-in ``skerrow_sound`` scenario (600 s at dt = 0.1 s, 10 Hz
control, K = 100 wave components, wind gusts, current) through the inline
executor in vectorised batches, with recording on, and the same trials one
at a time through the plain numpy blocks (batch size 1, ``engine="numpy"``:
a per-trial Python loop), the reference batching and compiling are measured
against, in the same process.

Prints wall time, trials x steps per second (scenario steps; trials that
complete their mission early stop early, as in a real campaign, and the
figure counts the steps actually simulated) and the ratio::

    python benchmarks/bench_campaign.py                      # 1000 trials, batch 1000
    python benchmarks/bench_campaign.py --trials 200 --batch-size 100
    python benchmarks/bench_campaign.py --ekf                # + GNSS, compass, IMU and the EKF navigator

With ``--ekf`` the per-trial reference is the Python loop with the numpy
blocks for guide and pilot and the navigator's compiled per-trial step
(there is no numpy twin of the navigator in the loop).

Speed is measured here, never asserted in unit tests.
"""

from __future__ import annotations

import argparse
import os
import platform
import time

import numba

from wavebench.campaign import run_campaign
from wavebench.spec import example_spec_path, load_spec
from wavebench.trial.setup import pilot_for


def _steps(result) -> int:
    """Time steps simulated: until completion or failure, else the whole run."""
    spec = result.spec
    dt = spec.scenario.dt_s
    t_end = result.metrics["time_to_complete_s"].fillna(spec.scenario.duration_s)
    return int((t_end / dt).round().sum())


#: Sensors and navigator added by ``--ekf`` (a single-frequency GNSS, a compass, an industrial MEMS IMU).
EKF_SETTINGS = [
    "stack.navigator=ekf",
    "sensors.gps.kind=gnss", "sensors.gps.rate_hz=1.0",
    "sensors.ahrs.kind=compass", "sensors.ahrs.rate_hz=10.0",
    "sensors.imu.kind=imu", "sensors.imu.rate_hz=10.0", "sensors.imu.grade=industrial_mems",
]  # fmt: skip


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--trials", type=int, default=1000)
    ap.add_argument("--batch-size", type=int, default=1000)
    ap.add_argument("--reference-trials", type=int, default=3, help="trials run one at a time for the ratio")
    ap.add_argument("--scenario", default="skerrow_sound")
    ap.add_argument("--ekf", action="store_true", help="add GNSS, compass and IMU sensors and the EKF navigator")
    ap.add_argument("--set", action="append", default=[], metavar="PATH=VALUE", help="change a spec field")
    ap.add_argument("--executor", default="inline", choices=("inline", "processes", "dask"))
    ap.add_argument("--workers", type=int, default=None, help="worker processes for processes / dask")
    args = ap.parse_args()
    settings = (EKF_SETTINGS if args.ekf else []) + args.set
    spec = load_spec(example_spec_path(args.scenario), settings)
    if settings:
        print("spec changes:", " ".join(settings))
    print(f"{platform.processor() or platform.machine()}, {os.cpu_count()} cores, numba threads "
          f"{numba.get_num_threads()} ({numba.threading_layer() if numba.get_num_threads() else '-'})")  # fmt: skip
    # warm-up: compile kernels, identify the craft's Nomoto model (cached for the campaign)
    pilot_for(spec, spec.craft.build())
    run_campaign(spec, trials=2, batch_size=2, progress=False)
    run_campaign(spec, trials=1, batch_size=1, progress=False, engine="numpy")
    t0 = time.perf_counter()
    ref = run_campaign(spec, trials=args.reference_trials, batch_size=1, progress=False, engine="numpy")
    t_ref = time.perf_counter() - t0
    rate_ref = _steps(ref) / t_ref
    t0 = time.perf_counter()
    res = run_campaign(spec, trials=args.trials, batch_size=args.batch_size, progress=False, executor=args.executor,
                       workers=args.workers)  # fmt: skip
    t_run = time.perf_counter() - t0
    steps = _steps(res)
    rate = steps / t_run
    n_steps = spec.scenario.n_steps
    print(f"scenario {args.scenario}: {spec.scenario.duration_s:.0f} s at dt = {spec.scenario.dt_s} s "
          f"({n_steps} steps), K = {spec.sea.n_components}, recording every {spec.campaign.record_interval_s} s")  # fmt: skip
    print(f"per-trial reference: {args.reference_trials} trials one at a time, {t_ref:.2f} s, "
          f"{rate_ref:,.0f} trial-steps/s")  # fmt: skip
    print(f"campaign ({args.executor}{f' x {args.workers}' if args.workers else ''}): {args.trials} trials, "
          f"batch {args.batch_size}: {t_run:.2f} s wall, {steps:,} trial-steps "
          f"simulated ({steps / (args.trials * n_steps):.0%} of trials x steps), {rate:,.0f} trial-steps/s, "
          f"ratio {rate / rate_ref:.1f}x the per-trial loop")  # fmt: skip
    print("ended:", res.metrics["ended"].value_counts().to_dict())


if __name__ == "__main__":
    main()
