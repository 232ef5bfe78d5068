"""Vessel-steps per second of the craft + sea + current + pilot loop.

Steps a batch of N trials of the demo workboat through irregular seas
(K wave components and their second-order drift load) with a
uniform current and the built-in heading-and-speed hold, at dt = 0.1 s, with
three implementations of the same equations:

The slowly varying drift load is sampled once per step at the predicted
midpoint (``--sampling midpoint``, the library default) or in every RK4 stage
(``--sampling stages``, four times the trigonometry).

* ``kernel``     — the compiled kernel (:func:`wavebench.craft.kernel.advance`);
* ``numpy``      — the batched numpy twin (:func:`advance_reference`);
* ``per-trial``  — a plain per-trial Python loop with small numpy arrays,
  the reference that batching is measured against.

Prints vessel-steps/s (trials x steps / wall seconds, median of repeats after
a warm-up) and the ratio to the per-trial loop measured in the same process.
Run each configuration in a fresh process for clean numbers::

    python benchmarks/bench_plant.py                 # N = 10, 100, 1000, 10000
    python benchmarks/bench_plant.py --trials 1000 --repeats 7

Speed is measured here, never asserted in unit tests.
"""

from __future__ import annotations

import argparse
import math
import os
import platform
import statistics
import time

import numba
import numpy as np

from wavebench.core.streams import TrialStreams
from wavebench.craft.catalogue import demo_craft
from wavebench.craft.kernel import DRIFT_SAMPLINGS, HoldPilot, Plant, advance, advance_reference
from wavebench.sea.drift import DriftModel
from wavebench.sea.realisation import realise_sea
from wavebench.sea.spectra import SeaSpectrum
from wavebench.sea.spreading import DirectionalSpreading

DT = 0.1


def build(n: int, k: int, sampling: str, seed: int = 1) -> tuple[Plant, HoldPilot, np.ndarray]:
    """A batch of the demo workboat in a JONSWAP sea with a cross current."""
    craft = demo_craft("Tholepin")
    sea = SeaSpectrum(kind="jonswap", hs_m=1.0, tp_s=4.5)
    spread = DirectionalSpreading(kind="cos2s", exponent=6.0, mean_dir_deg=60.0)
    comps = realise_sea(sea, spread, TrialStreams(seed, range(n)), n_components=k)
    drift = DriftModel.for_hull(comps, length_m=7.0, beam_m=2.5, draft_m=0.6)
    plant = Plant.build(craft.hull, n, comps, drift, drift_sampling=sampling)
    ones = np.ones(n)
    headings = np.linspace(-np.pi, np.pi, n, endpoint=False)
    pilot = HoldPilot(
        u_ref_mps=3.0 * ones, psi_ref_rad=headings, k_u=3000.0 * ones, k_psi=8000.0 * ones,
        k_r=5000.0 * ones, x_max_n=4500.0 * ones, n_max_nm=6000.0 * ones,
    )  # fmt: skip
    current = np.tile([0.4, -0.3], (n, 1))
    return plant, pilot, current


def per_trial_loop(plant: Plant, pilot: HoldPilot, current: np.ndarray, i: int, n_steps: int) -> np.ndarray:
    """The same model for trial ``i`` as a plain Python loop (the slow reference)."""
    h = plant.packed_hull[i]
    waves, roots = plant.packed_waves
    om, kc, ks, ep, scale, beta = (waves[i, r] for r in range(6))
    p = pilot.packed(plant.n_trials)[i]
    tol = plant.drift_heading_tol_rad
    vcn, vce = current[i]
    x = y = psi = u = v = r = 0.0
    n_tab = roots.shape[0] - 1

    def weights(pw: float) -> np.ndarray:
        b = beta - pw
        xb = (b - 2 * np.pi * np.floor(b / (2 * np.pi))) * (n_tab / (2 * np.pi))
        k = np.minimum(xb.astype(int), n_tab - 1)
        f = (xb - k)[:, None]
        return (scale[:, None] * (roots[k] * (1 - f) + roots[k + 1] * f)).T

    def drift(x: float, y: float, t: float, w: np.ndarray) -> tuple[float, float, float]:
        ph = om * t - (kc * x + ks * y) + ep
        c, s = np.cos(ph), np.sin(ph)
        z = (w @ c) ** 2 + (w @ s) ** 2
        return z[0] - z[1], z[2] - z[3], z[4] - z[5]

    midpoint = plant.drift_sampling == "midpoint"

    def rhs(x: float, y: float, psi: float, u: float, v: float, r: float, t: float, tx: float, tn: float, w, held):
        fx, fy, fn = held if midpoint else drift(x, y, t, w)
        cp, sp = math.cos(psi), math.sin(psi)
        uc, vc = cp * vcn + sp * vce, -sp * vcn + cp * vce
        ur, vr = u - uc, v - vc
        cx = -(h[1] * vr + h[2] * r) * r
        cy = h[0] * ur * r
        cn = (h[1] - h[0]) * ur * vr + h[2] * ur * r
        dx = -(h[8] + h[13] * abs(ur)) * ur
        dy = -(h[9] + h[14] * abs(vr)) * vr - h[10] * r
        dn = -h[11] * vr - (h[12] + h[15] * abs(r)) * r
        gx, gy, gn = tx + fx - cx - dx, fy - cy - dy, tn + fn - cn - dn
        return (cp * u - sp * v, sp * u + cp * v, r,
                h[4] * gx + r * vc, h[5] * gy + h[6] * gn - r * uc, h[6] * gy + h[7] * gn)  # fmt: skip

    pw = psi
    w = weights(pw)
    for step in range(n_steps):
        t = step * DT
        err = (psi - p[1] + np.pi) % (2 * np.pi) - np.pi
        tx = min(max(p[2] * (p[0] - u), -p[5]), p[5])
        tn = min(max(-p[3] * err - p[4] * r, -p[6]), p[6])
        if abs((psi - pw + np.pi) % (2 * np.pi) - np.pi) > tol:
            pw = psi
            w = weights(pw)
        s0 = (x, y, psi, u, v, r)
        held = None
        if midpoint:
            cp, sp = math.cos(psi), math.sin(psi)
            held = drift(x + 0.5 * DT * (cp * u - sp * v), y + 0.5 * DT * (sp * u + cp * v), t + 0.5 * DT, w)
        k1 = rhs(*s0, t, tx, tn, w, held)
        k2 = rhs(*[a + 0.5 * DT * b for a, b in zip(s0, k1, strict=True)], t + 0.5 * DT, tx, tn, w, held)
        k3 = rhs(*[a + 0.5 * DT * b for a, b in zip(s0, k2, strict=True)], t + 0.5 * DT, tx, tn, w, held)
        k4 = rhs(*[a + DT * b for a, b in zip(s0, k3, strict=True)], t + DT, tx, tn, w, held)
        x, y, psi, u, v, r = (
            a + DT / 6 * (b1 + 2 * b2 + 2 * b3 + b4) for a, b1, b2, b3, b4 in zip(s0, k1, k2, k3, k4, strict=True)
        )
    return np.array([x, y, psi, u, v, r])


def timed(fn, repeats: int) -> float:
    """Median wall time of ``repeats`` calls after one warm-up call [s]."""
    fn()
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return statistics.median(times)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--trials", type=int, nargs="*", default=[10, 100, 1000, 10000])
    ap.add_argument("--components", type=int, default=100)
    ap.add_argument("--steps", type=int, default=600, help="steps per timed call (default 60 s)")
    ap.add_argument("--repeats", type=int, default=5)
    ap.add_argument("--numpy", action="store_true", help="also time the batched numpy twin")
    ap.add_argument(
        "--sampling", choices=DRIFT_SAMPLINGS, default="midpoint",
        help="drift load once per step at the midpoint (default) or in every RK4 stage",
    )  # fmt: skip
    args = ap.parse_args()

    print(f"python {platform.python_version()}, numpy {np.__version__}, numba {numba.__version__}")
    print(f"cpus {os.cpu_count()}, numba threads {numba.get_num_threads()}")
    try:
        from threadpoolctl import threadpool_info

        for lib in threadpool_info():
            print(f"  {lib.get('internal_api')}: {lib.get('num_threads')} threads ({lib.get('filepath')})")
    except ImportError:
        print("  (threadpoolctl not installed: BLAS thread pools not listed)")
    print(
        f"K = {args.components} components, dt = {DT} s, drift sampling '{args.sampling}', "
        f"{args.steps} steps per call, median of {args.repeats}"
    )

    # per-trial reference: a few trials, a shorter run (it is slow)
    ref_plant, ref_pilot, ref_cur = build(4, args.components, args.sampling)
    ref_steps = 200
    t_ref = timed(lambda: [per_trial_loop(ref_plant, ref_pilot, ref_cur, i, ref_steps) for i in range(4)], 3)
    ref_rate = 4 * ref_steps / t_ref
    loop = np.array([per_trial_loop(ref_plant, ref_pilot, ref_cur, i, ref_steps) for i in range(4)])
    e, v, _ = advance(ref_plant, np.zeros((4, 3)), np.zeros((4, 3)), 0, DT, ref_steps, current_ned=ref_cur, pilot=ref_pilot)
    print(f"per-trial loop vs kernel after {ref_steps} steps: max |d position| = "
          f"{np.abs(loop[:, :2] - e[:, :2]).max():.1e} m")  # fmt: skip
    print(f"{'per-trial loop':>16}: {ref_rate:12,.0f} vessel-steps/s   (1.0x)")

    for n in args.trials:
        plant, pilot, cur = build(n, args.components, args.sampling)
        eta0, nu0 = np.zeros((n, 3)), np.zeros((n, 3))
        reps = args.repeats if n <= 1000 else max(3, args.repeats // 2)
        t_k = timed(lambda: advance(plant, eta0, nu0, 0, DT, args.steps, current_ned=cur, pilot=pilot), reps)
        rate = n * args.steps / t_k
        print(f"{'kernel N=' + str(n):>16}: {rate:12,.0f} vessel-steps/s   ({rate / ref_rate:,.0f}x)")
        if args.numpy and n <= 1000:
            steps = max(10, args.steps // 20)
            t_np = timed(lambda: advance_reference(plant, eta0, nu0, 0, DT, steps, current_ned=cur, pilot=pilot), 3)
            rate_np = n * steps / t_np
            print(f"{'numpy N=' + str(n):>16}: {rate_np:12,.0f} vessel-steps/s   ({rate_np / ref_rate:,.0f}x)")


if __name__ == "__main__":
    main()
