"""The whole run of the built-in stack, compiled: every control period of every trial in one kernel.

:func:`run_fused` does what :func:`wavebench.trial.loop.run_batch` does
with the built-in guide, pilot and actuators — current, control tick, the
checks that end a trial, metric sums, the decimated record, wind load and
the craft's steps through its sea — but for each trial (``prange``) over a
block of control periods in compiled code, so the trial's wave and weight
arrays stay in cache across the block instead of being streamed from memory
once per period. The Python loop stays as the oracle: both give the same
bits (``tests/test_fused.py``).

The arithmetic is shared where it matters: the control period is
:func:`~wavebench.trial.compiled.control_one`, the craft's steps are
:func:`~wavebench.craft.kernel.advance_trial` (the batch kernel's own
body and floating-point flags); the rest mirrors the numpy code line by line
(current, wind load, depth under keel, metric sums) and is compiled without
fast-math so that it rounds as numpy does.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

import numba
import numpy as np

from ..analysis.metrics import MetricAccumulator
from ..craft.kernel import advance_trial, weights_at
from ..spec.schema import Spec
from . import nav_kernel as nk
from .compiled import (
    N_OUT,
    OUT_ALONG,
    OUT_DONE,
    OUT_HEADING_D,
    OUT_LEG,
    OUT_POWER,
    OUT_SPEED_D,
    OUT_TAU,
    OUT_XTE,
    OUT_XTE_TRUE,
    CompiledStack,
    control_one,
    wrap_scalar,
)
from .nav_kernel import depth_one, nav_predict_one, nav_update_one
from .recorder import SIGNALS, Recorder
from .setup import TrialSetup

__all__ = ["FAILURE_TEXT", "run_fused"]

#: Failure codes of the fused run and their reasons (``{t}``: the time, s, to 0.1 s).
FAILURE_TEXT = {
    1: "left the corridor at t = {t:.1f} s",
    2: "grounded at t = {t:.1f} s",
    3: "non-finite actuator demand at t = {t:.1f} s",
    4: "non-finite state at t = {t:.1f} s",
    5: "runaway (speed or yaw rate beyond any the craft can reach) at t = {t:.1f} s",
}

#: Control periods per compiled call (progress is reported between calls).
BLOCK_TICKS = 200


@numba.njit(parallel=True, cache=True, error_model="numpy")
def _run_block(
    tick0, tick1, period, dt, k, rec_every,
    eta, nu, pw, alive, wbuf, hull, waves, roots, tol, midpoint,
    wp, count, los, legs, pil, ap, layout, leg, e_int, done, pid, ref, act, out,
    cur_on, cur_speed, cur_angle, var_on, var_values, var_dt,
    wind_on, wind_tab, wind_dir, windage,
    bed_on, gn, ge, grid, fill, draft,
    abort_on, abort_m, line_legs, run_in, run_speed, run_rate,
    count_s, sum_xte2, sum_head2, sum_speed2, distance, energy, min_dukc, done_time, fail_code, fail_time, grounded,
    xte_abs, line_abs, line_count, line_sum2, rec, run_depth,
    nav_on, nx, nP, hist, diag, particles, logw, pf_mean, pf_cov, cfg, par, beacons, gnss_noise, gnss_valid,
    head_noise, head_valid, dvl_noise, dvl_valid, ac_noise, ac_valid, alt_noise, alt_valid, depth_noise, depth_valid,
    keys, ngn, nge, ngrid, nfill, imu_err, nav_err_abs, nees_sum, nees_n, outage_end, outage_ticks,
):  # fmt: skip
    n = eta.shape[0]
    no_pilot = np.zeros(7)
    # scratch per trial allocated here, not in the prange body: an allocation there may be hoisted out of the
    # loop and shared between iterations (numba's allocation hoisting), which would race between threads
    works = np.empty((n, nk.WORK))
    n_legs = line_legs.shape[1]
    for i in numba.prange(n):
        if not alive[i]:
            continue
        x, y, psi = eta[i, 0], eta[i, 1], eta[i, 2]
        u, v, r = nu[i, 0], nu[i, 1], nu[i, 2]
        p_w = pw[i]
        work = works[i]
        w = wbuf[i, :6]
        cb = wbuf[i, 6]
        sb = wbuf[i, 7]
        for tick in range(tick0, tick1):
            t = tick * period
            cn = 0.0
            ce = 0.0
            if cur_on:
                sp = cur_speed[i]
                ang = cur_angle[i]
                if var_on:
                    ns = var_values.shape[1]
                    if ns == 1:
                        dv0, dv1 = var_values[i, 0, 0], var_values[i, 0, 1]
                    else:
                        xs = t / var_dt
                        i0 = min(int(np.floor(xs)), ns - 2)
                        ws = xs - i0
                        dv0 = (1.0 - ws) * var_values[i, i0, 0] + ws * var_values[i, i0 + 1, 0]
                        dv1 = (1.0 - ws) * var_values[i, i0, 1] + ws * var_values[i, i0 + 1, 1]
                    sp = max(sp + dv0, 0.0)
                    ang = ang + dv1
                cn = 0.0 + sp * np.cos(ang)
                ce = 0.0 + sp * np.sin(ang)
            en, ee, epsi, eu, ev, er = x, y, psi, u, v, r
            if nav_on:
                nav_update_one(i, tick, x, y, psi, u, v, r, nx, nP, hist, diag, particles, logw, pf_mean, pf_cov, cfg,
                               par, beacons, gnss_noise, gnss_valid, head_noise, head_valid, dvl_noise, dvl_valid,
                               ac_noise, ac_valid, alt_noise, alt_valid, depth_noise, depth_valid, keys, ngn, nge,
                               ngrid, nfill, work)  # fmt: skip
                en, ee, epsi, eu, ev, er = nx[i, 0], nx[i, 1], nx[i, 2], nx[i, 3], nx[i, 4], diag[i, nk.D_RATE]
            control_one(i, en, ee, epsi, eu, ev, er, x, y, psi, u, cn, ce, wp, count, los, legs, pil, ap, layout,
                        period, leg, e_int, done, pid, ref, act, out)  # fmt: skip
            xte = out[i, OUT_XTE_TRUE] if nav_on else out[i, OUT_XTE]
            if out[i, OUT_DONE] > 0.5:
                done_time[i] = t
                alive[i] = False
                break
            if abort_on and abs(xte) > abort_m:
                fail_code[i], fail_time[i] = 1, t
                alive[i] = False
                break
            if bed_on:
                dukc = depth_one(gn, ge, grid, fill, x, y) + 0.0 - draft - run_depth[i]
                if np.isfinite(dukc):
                    min_dukc[i] = min(min_dukc[i], dukc)
                if dukc < 0.0:
                    fail_code[i], fail_time[i] = 2, t
                    grounded[i] = True
                    alive[i] = False
                    break
            hd = out[i, OUT_HEADING_D]
            ud = out[i, OUT_SPEED_D]
            xte_abs[i, tick] = abs(xte)
            count_s[i] += 1.0
            sum_xte2[i] += xte * xte
            he = wrap_scalar(psi - hd)
            sum_head2[i] += he * he
            se = u - ud
            sum_speed2[i] += se * se
            kl = min(max(int(out[i, OUT_LEG]), 0), n_legs - 1)
            if line_legs[i, kl] and out[i, OUT_ALONG] >= run_in[i]:
                line_abs[i, tick] = abs(xte)
                line_count[i] += 1.0
                line_sum2[i] += xte * xte
            if nav_on:
                err = np.hypot(en - x, ee - y)
                nav_err_abs[i, tick] = err
                nees = diag[i, nk.D_NEES]
                if np.isfinite(nees):
                    nees_sum[i] += nees
                    nees_n[i] += 1.0
                for ot in outage_ticks:
                    if ot == tick and (np.isnan(outage_end[i]) or err > outage_end[i]):
                        outage_end[i] = err
            tx, ty, tn = out[i, OUT_TAU], out[i, OUT_TAU + 1], out[i, OUT_TAU + 2]
            if wind_on:
                speed = wind_tab[i, tick]
                rel = wind_dir[i] - psi
                u_w = -speed * np.cos(rel)
                v_w = -speed * np.sin(rel)
                u_rw = u - u_w
                v_rw = v - v_w
                v_rel = np.hypot(u_rw, v_rw)
                gam = -np.arctan2(v_rw, u_rw)
                q = 0.5 * windage[6] * (v_rel * v_rel)
                tx = tx + (-windage[3]) * np.cos(gam) * (q * windage[0])
                ty = ty + windage[4] * np.sin(gam) * (q * windage[1])
                tn = tn + windage[5] * np.sin(2.0 * gam) * (q * windage[1] * windage[2])
            power = out[i, OUT_POWER]
            if not (np.isfinite(tx) and np.isfinite(ty) and np.isfinite(tn)):
                fail_code[i], fail_time[i] = 3, t
                alive[i] = False
                break
            if tick % rec_every == 0:
                j = tick // rec_every
                rec[0, i, j] = x
                rec[1, i, j] = y
                rec[2, i, j] = np.degrees(psi)
                rec[3, i, j] = u
                rec[4, i, j] = v
                rec[5, i, j] = np.degrees(r)
                rec[6, i, j] = xte
                rec[7, i, j] = np.degrees(hd)
                rec[8, i, j] = ud
                rec[9, i, j] = power
                rec[17, i, j] = out[i, OUT_TAU]
                rec[18, i, j] = out[i, OUT_TAU + 2]
                if nav_on:
                    rec[10, i, j] = en
                    rec[11, i, j] = ee
                    rec[12, i, j] = np.hypot(en - x, ee - y)
                    rec[13, i, j] = diag[i, nk.D_NEES]
                    rec[14, i, j] = diag[i, nk.D_NIS]
                    rec[15, i, j] = diag[i, nk.D_FIX_OK]
                    rec[16, i, j] = np.sqrt(nP[i, 0, 0] + nP[i, 1, 1])
            px, py = x, y
            pu, pv, ppsi = u, v, psi
            x, y, psi, u, v, r, p_w = advance_trial(
                x, y, psi, u, v, r, p_w, hull[i], waves[i, 0], waves[i, 1], waves[i, 2], waves[i, 3], waves[i, 4],
                waves[i, 5], w, cb, sb, roots, tx, ty, tn, cn, ce, no_pilot, False, tick * k, dt, k, tol, midpoint,
            )  # fmt: skip
            if nav_on:
                nav_predict_one(i, tick, period, pu, pv, ppsi, u, v, psi, nx, nP, diag, cfg, par, imu_err, work)
            distance[i] += np.hypot(x - px, y - py)
            energy[i] += power * period
            if not (np.isfinite(x) and np.isfinite(y) and np.isfinite(psi) and np.isfinite(u) and np.isfinite(v)
                    and np.isfinite(r)):  # fmt: skip
                fail_code[i], fail_time[i] = 4, t + period
                alive[i] = False
                break
            if np.hypot(u, v) > run_speed or abs(r) > run_rate:
                fail_code[i], fail_time[i] = 5, t + period
                alive[i] = False
                break
        eta[i, 0], eta[i, 1], eta[i, 2] = x, y, psi
        nu[i, 0], nu[i, 1], nu[i, 2] = u, v, r
        pw[i] = p_w


def run_fused(
    spec: Spec,
    setup: TrialSetup,
    *,
    record: bool = True,
    on_progress: Callable[[float], Any] | None = None,
    runaway_speed_mps: float,
    runaway_yaw_rate_rad_s: float,
) -> tuple[MetricAccumulator, Recorder | None, int]:
    """Run one batch with the built-in stack in the fused kernel.

    Returns
    -------
    acc : MetricAccumulator
        Filled; call ``finish()`` for the metric columns.
    rec : Recorder or None
    steps_run : int
        Time steps of the longest-running trial.
    """
    from .loop import control_grid

    env = setup.env
    n = env.n_trials
    dt = spec.scenario.dt_s
    k, period, n_ticks, rec_every, n_rec = control_grid(spec)
    act = setup.actuation
    stack = CompiledStack.pack(setup.guide, setup.pilot, act)
    eta, nu = setup.eta0.copy(), setup.nu0.copy()
    tstate = stack.init_state(eta[:, 2], setup.act0.copy())
    plant = env.plant
    waves, roots = plant.packed_waves
    wbuf = plant.workspace().weights
    pw = eta[:, 2].copy()
    for i in range(n):
        if waves.shape[2] > 0:
            weights_at(wbuf[i, :6], waves[i, 5], waves[i, 4], roots, pw[i])
    acc = MetricAccumulator(n, n_ticks, period)
    out = np.zeros((n, N_OUT))
    # environment, as the loop builds it
    cur_on = var_on = False
    cur_speed = cur_angle = np.zeros(n)
    var_values, var_dt = np.zeros((n, 1, 2)), 1.0
    if env.current is not None:
        model, cstate = env.current.model, env.current.state
        if model.wind_driven is not None or model.tidal is not None or model.fields:
            raise NotImplementedError("the fused run supports uniform currents with slow variation only")
        if model.uniform is not None:
            cur_on = True
            cur_speed = np.broadcast_to(np.asarray(model.uniform.speed_mps, dtype=float), (n,)).copy()
            cur_angle = np.broadcast_to(np.deg2rad(np.asarray(model.uniform.set_deg, dtype=float)), (n,)).copy()
            if model.variation is not None:
                var_on = True
                var_values = np.ascontiguousarray(cstate.variation.values, dtype=float)
                var_dt = float(cstate.variation.dt_s)
    wind_on = setup.windage is not None
    wind_tab = np.zeros((n, 1))
    wind_dir = np.zeros(n)
    windage = np.zeros(7)
    if wind_on:
        from ..sea.gust_table import wind_speed_table

        wind_tab = wind_speed_table(env.wind.state, 0.0, period, n_ticks)
        wind_dir = np.broadcast_to(np.asarray(env.wind.state.direction_from_rad, dtype=float), (n,)).copy()
        wg = setup.windage
        windage = np.array([wg.frontal_area_m2, wg.lateral_area_m2, wg.length_oa_m, wg.c_x, wg.c_y, wg.c_n,
                            wg.rho_air_kg_m3], dtype=float)  # fmt: skip
    bed = setup.seabed
    bed_on = bed is not None
    gn = ge = np.zeros(2)
    grid = np.zeros((2, 2))
    fill = np.nan
    if bed_on:
        gn, ge, grid = (np.ascontiguousarray(a, dtype=float) for a in (bed.north_m, bed.east_m, bed.depth_m))
        fill = np.nan if bed.fill_depth_m is None else float(bed.fill_depth_m)
        acc.has_seabed = True
    draft = float(np.max(env.craft.hull.draft_m))
    abort_on = setup.abort_cross_track_m is not None
    rec_buf = np.full((len(SIGNALS), n, n_rec), np.nan, dtype=np.float32)
    alive = np.ones(n, dtype=bool)
    fail_code = np.zeros(n, dtype=np.int64)
    fail_time = np.zeros(n)
    line_legs = np.ascontiguousarray(setup.line_legs)
    run_depth = np.zeros(n) if setup.running_depth_m is None else np.ascontiguousarray(setup.running_depth_m, float)
    nav_on = setup.nav is not None
    if nav_on:
        from .loop import outage_end_ticks
        from .navigator import NavRun

        navrun = NavRun(setup.nav, nu)
        acc.enable_nav(n_ticks, outage_end_ticks(setup.nav.fix_outages_s, period, n_ticks))
        pack = setup.nav
    else:  # placeholders of the same types, so the kernel compiles once
        from .navigator import placeholder_nav

        pack, navrun = placeholder_nav(n, nu)
    nav_err_abs = acc.nav_err_abs if nav_on else np.zeros((1, 1))
    nav_args = (*navrun.state, pack.cfg, pack.par, *pack.arrays, pack.imu_err, nav_err_abs, acc.nees_sum,
                acc.nees_n, acc.outage_end, acc.outage_ticks)  # fmt: skip
    run_in = np.ascontiguousarray(setup.line_run_in_m, dtype=float)
    ticks_run = 0
    for tick0 in range(0, n_ticks, BLOCK_TICKS):
        if not alive.any():
            break
        tick1 = min(tick0 + BLOCK_TICKS, n_ticks)
        _run_block(
            tick0, tick1, period, dt, k, rec_every,
            eta, nu, pw, alive, wbuf, plant.packed_hull, waves, roots, plant.drift_heading_tol_rad,
            plant.drift_sampling == "midpoint",
            stack.waypoints, stack.count, stack.los, stack.legs, stack.pilot, stack.act_params, stack.layout,
            tstate.leg, tstate.e_int, tstate.done, tstate.pid, tstate.ref, tstate.act, out,
            cur_on, cur_speed, cur_angle, var_on, var_values, var_dt,
            wind_on, wind_tab, wind_dir, windage,
            bed_on, gn, ge, grid, fill, draft,
            abort_on, float(setup.abort_cross_track_m or 0.0), line_legs, run_in,
            float(runaway_speed_mps), float(runaway_yaw_rate_rad_s),
            acc.count, acc.sum_xte2, acc.sum_head2, acc.sum_speed2, acc.distance, acc.energy_j, acc.min_dukc,
            acc.done_time, fail_code, fail_time, acc.grounded, acc.xte_abs, acc.line_abs, acc.line_count,
            acc.line_sum2, rec_buf, run_depth, nav_on, *nav_args,
        )  # fmt: skip
        ticks_run = tick1
        if on_progress is not None:
            on_progress((tick1 - tick0) / n_ticks)
    if on_progress is not None and ticks_run < n_ticks:
        on_progress((n_ticks - ticks_run) / n_ticks)
    if nav_on:
        acc.nis_sum[:] = navrun.diag[:, nk.D_NIS_SUM]
        acc.nis_n[:] = navrun.diag[:, nk.D_NIS_N]
    failed = fail_code > 0
    acc.failed[:] = failed
    for i in np.flatnonzero(failed):
        acc.reason[i] = FAILURE_TEXT[int(fail_code[i])].format(t=fail_time[i])
    rec = None
    if record:
        rec = Recorder(n, n_rec, spec.campaign.record_signals)
        names = list(SIGNALS)
        for name in rec.data:
            rec.data[name] = rec_buf[names.index(name)]
    return acc, rec, ticks_run * k
