"""The stepping loop: environment -> craft -> navigator -> guide -> pilot -> actuators, for a batch.

Every control period (``stack.pilot.control_period_s``, a whole number of
time steps) the loop

1. forms the navigation solution (the truth navigator: the true state);
2. steps the guide (desired heading and speed, cross-track error);
3. steps the pilot (surge force and rudder);
4. turns the demand into actuator commands and moves the actuators over the
   period (lags and rate limits), holding their mean force;
5. adds the wind load at the start of the period (the wind speed tabulated
   on the control grid, :func:`~wavebench.sea.gust_table.wind_speed_table`)
   and the current there;
6. advances the craft through its sea with the compiled kernel
   (:func:`~wavebench.craft.kernel.advance`, RK4, wave drift inside).

Then it checks each trial: a non-finite state, a runaway (speed or yaw
rate beyond any the craft can reach), leaving the corridor or grounding
ends that trial with its reason while the others go on; a trial that
accepts its last waypoint is complete. The batch stops early once no trial
is still running; nothing a trial records or scores after it ended is
kept, so this does not change any result.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import NDArray

from ..analysis.metrics import MetricAccumulator
from ..core.errors import ParameterError
from ..craft.hull import relative_velocity
from ..craft.kernel import advance
from ..sea.current import current_velocity_ned
from ..sea.gust_table import wind_speed_table
from ..sea.seabed import depth_under_keel
from ..sea.wind import relative_wind, wind_loads
from ..spec.schema import Spec
from . import nav_kernel as nk
from .blocks import BatchGuide, BatchPilot
from .compiled import (
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
    compiled_tick,
)
from .fused import run_fused
from .navigator import NavRun
from .recorder import Recorder
from .setup import TrialSetup, truth_nav
from .signals import GuideOutput
from .wiring import check_wiring

__all__ = ["ENGINES", "RUNAWAY_SPEED_MPS", "RUNAWAY_YAW_RATE_RAD_S", "BatchResult", "run_batch"]

#: A trial whose speed over ground exceeds this has diverged (common practice, no source).
RUNAWAY_SPEED_MPS = 50.0
#: A trial whose yaw rate exceeds this has diverged [rad/s] (common practice, no source).
RUNAWAY_YAW_RATE_RAD_S = 5.0

FloatArray = NDArray[np.float64]

#: The ways :func:`run_batch` can step a batch.
ENGINES = ("fused", "tick", "numpy")


@dataclass(frozen=True)
class BatchResult:
    """What one batch produced.

    Parameters
    ----------
    trials : ndarray of int
        Global trial indices.
    metrics : dict of str to ndarray of shape (n_trials,)
        Metric columns (see :data:`~wavebench.analysis.metric_names.METRICS`).
    record : Recorder or None
        The decimated time series (None when recording was off).
    time_s : ndarray
        Times of the recorded samples [s].
    steps_run : int
        Time steps actually simulated (the batch may stop early).
    """

    trials: NDArray[np.int64]
    metrics: dict[str, np.ndarray]
    record: Recorder | None
    time_s: FloatArray
    steps_run: int


def control_grid(spec: Spec) -> tuple[int, float, int, int, int]:
    """Time steps per control period, the period [s], periods in the run, periods per record, records."""
    k = spec.control_steps
    n_ticks = spec.scenario.n_steps // k
    rec_every = max(spec.record_steps // k, 1)
    return k, k * spec.scenario.dt_s, n_ticks, rec_every, -(-n_ticks // rec_every)


def record_times(spec: Spec) -> FloatArray:
    """Times of the recorded samples [s]."""
    _, period, _, rec_every, n_rec = control_grid(spec)
    return np.arange(n_rec) * rec_every * period


def run_batch(
    spec: Spec,
    setup: TrialSetup,
    *,
    guide: BatchGuide | None = None,
    pilot: BatchPilot | None = None,
    record: bool = True,
    on_progress: Callable[[float], Any] | None = None,
    engine: str | None = None,
) -> BatchResult:
    """Run one batch of trials to the end of the scenario.

    Parameters
    ----------
    spec : Spec
    setup : TrialSetup
        From :func:`~wavebench.trial.setup.build_trial_setup` for this batch.
    guide, pilot : optional
        Blocks replacing the spec's built-in guide or pilot (any object
        following :class:`~wavebench.trial.blocks.BatchGuide` /
        :class:`~wavebench.trial.blocks.BatchPilot`, e.g. a per-trial
        adapter). Checked by the wiring before the first step.
    record : bool
        Keep the decimated time series.
    on_progress : callable, optional
        Called with the fraction of the batch's control periods just done.
    engine : {"fused", "tick", "numpy"}, optional
        How the trials are stepped. ``"fused"`` (the default with the
        spec's own guide and pilot): every control period of every trial in
        one compiled kernel (:mod:`wavebench.trial.fused`). ``"tick"``: this
        Python loop with the compiled control tick
        (:mod:`wavebench.trial.compiled`). ``"numpy"`` (the only choice, and
        the default, when a user block replaces the guide or pilot): this
        loop with the numpy blocks. For the built-in stack "tick" gives the
        numpy blocks' bits and "fused" agrees with them to about 1e-15
        relative (both tested); the numpy blocks are the others' oracle.

    Returns
    -------
    BatchResult
    """
    built_in = guide is None and pilot is None
    guide = guide or setup.guide
    pilot = pilot or setup.pilot
    check_wiring(guide, pilot)
    if engine is None:
        engine = "fused" if built_in else "numpy"
    if engine not in ENGINES:
        raise ParameterError("engine", engine, f"must be one of {list(ENGINES)}")
    if engine != "numpy" and not built_in:
        raise ParameterError(
            "engine", engine, "the compiled engines run the spec's own guide and pilot only"
        )
    if engine == "fused":
        acc_f, rec_f, steps = run_fused(spec, setup, record=record, on_progress=on_progress,
                                        runaway_speed_mps=RUNAWAY_SPEED_MPS,
                                        runaway_yaw_rate_rad_s=RUNAWAY_YAW_RATE_RAD_S)  # fmt: skip
        return BatchResult(
            trials=np.asarray(setup.env.trials.trials, dtype=np.int64), metrics=acc_f.finish(), record=rec_f,
            time_s=record_times(spec), steps_run=steps,
        )  # fmt: skip
    compiled = engine == "tick"
    env = setup.env
    n = env.n_trials
    dt = spec.scenario.dt_s
    k, period, n_ticks, rec_every, n_rec = control_grid(spec)
    rec = Recorder(n, n_rec, spec.campaign.record_signals) if record else None
    acc = MetricAccumulator(n, n_ticks, period)
    act = setup.actuation
    eta, nu, act_state = setup.eta0.copy(), setup.nu0.copy(), setup.act0.copy()
    psi_w = None
    workspace = env.plant.workspace()
    nav = truth_nav(0.0, eta, nu)
    navigator = NavRun(setup.nav, nu) if setup.nav is not None else None
    if navigator is not None:
        acc.enable_nav(n_ticks, outage_end_ticks(setup.nav.fix_outages_s, period, n_ticks))
    if compiled:
        stack = CompiledStack.pack(setup.guide, setup.pilot, act)
        tstate = stack.init_state(eta[:, 2], act_state)
        act_state = tstate.act
    else:
        g_state = guide.init(nav)
        p_state = pilot.init(nav)
    draft = float(np.max(env.craft.hull.draft_m))
    run_depth = np.zeros(n) if setup.running_depth_m is None else setup.running_depth_m
    cur_model = env.current
    steps_run = 0
    zero_cur = np.zeros((n, 2))
    rows = np.arange(n)
    # the wind speed on the control grid, once (the gust sum is the costliest environment term)
    wind_tab = wind_speed_table(env.wind.state, 0.0, period, n_ticks) if setup.windage is not None else None
    report_every = max(n_ticks // 100, 1)
    for tick in range(n_ticks):
        t = tick * period
        cur = None
        if cur_model is not None:
            cur = current_velocity_ned(cur_model.model, cur_model.state, eta[:, 0], eta[:, 1], 0.0, t)
        nav_eta = nav_nu = None
        if navigator is not None:
            navigator.update(tick, eta, nu, acc.active)
            nav = navigator.nav_state(t)
            nav_eta = np.stack([nav.north_m, nav.east_m, nav.heading_rad], axis=1)
            nav_nu = np.stack([nav.surge_mps, nav.sway_mps, nav.yaw_rate_rad_s], axis=1)
        if compiled:
            out = compiled_tick(stack, tstate, eta, nu, zero_cur if cur is None else cur, period, nav_eta, nav_nu)
            gout = GuideOutput(heading_d_rad=out[:, OUT_HEADING_D], speed_d_mps=out[:, OUT_SPEED_D],
                               cross_track_m=out[:, OUT_XTE], along_track_m=out[:, OUT_ALONG],
                               leg=out[:, OUT_LEG].astype(np.int64),
                               done=out[:, OUT_DONE] > 0.5)  # fmt: skip
            tau = out[:, OUT_TAU : OUT_TAU + 3].copy()
            power = out[:, OUT_POWER].copy()
            xte_true = out[:, OUT_XTE_TRUE] if navigator is not None else gout.cross_track_m
        else:
            if navigator is None:
                nav = truth_nav(t, eta, nu)
            g_state, gout = guide.step(g_state, nav, period)
            p_state, pout = pilot.step(p_state, nav, gout, period)
            nu_r = relative_velocity(eta, nu, cur)
            new_act = act.step(act_state, act.command(pout), period)
            mid_act = 0.5 * (act_state + new_act)
            act_state = new_act
            tau = act.tau(mid_act, nu_r)
            power = act.power_w(mid_act, nu_r)
            xte_true = gout.cross_track_m if navigator is None else true_cross_track(setup, gout.leg, eta)
        acc.complete(gout.done, t)
        active = acc.active
        if setup.abort_cross_track_m is not None:
            acc.fail(np.abs(xte_true) > setup.abort_cross_track_m,
                     f"left the corridor at t = {t:.1f} s")  # fmt: skip
        if setup.seabed is not None:
            dukc = depth_under_keel(setup.seabed, eta[:, 0], eta[:, 1], draft) - run_depth
            acc.depth(active, dukc)
            acc.fail(dukc < 0.0, f"grounded at t = {t:.1f} s", grounded=True)
        active = acc.active
        acc.sample(tick, active, xte_true, eta[:, 2], gout.heading_d_rad, nu[:, 0], gout.speed_d_mps)
        if navigator is not None:
            acc.sample_nav(tick, active, np.hypot(nav.north_m - eta[:, 0], nav.east_m - eta[:, 1]),
                           navigator.diag[:, nk.D_NEES])  # fmt: skip
        leg = np.clip(gout.leg, 0, setup.line_legs.shape[1] - 1)
        on_line = active & setup.line_legs[rows, leg] & (gout.along_track_m >= setup.line_run_in_m)
        acc.sample_line(tick, on_line, xte_true)
        act_tau = tau.copy()  # the actuators' share, before wind (recorded)
        if wind_tab is not None:
            v_rw, gamma = relative_wind(
                nu[:, 0], nu[:, 1], eta[:, 2], wind_tab[:, tick], env.wind.state.direction_from_rad
            )
            tau = tau + wind_loads(setup.windage, v_rw, gamma)
        bad_tau = ~np.all(np.isfinite(tau), axis=1)
        if np.any(bad_tau):
            acc.fail(bad_tau, f"non-finite actuator demand at t = {t:.1f} s")
            tau[bad_tau] = 0.0
            act_state[bad_tau] = 0.0
            power = np.where(bad_tau, 0.0, power)
            active = acc.active
        if rec is not None and tick % rec_every == 0:
            rec.record(tick // rec_every, active, {
                "north_m": eta[:, 0], "east_m": eta[:, 1], "heading_deg": np.degrees(eta[:, 2]),
                "surge_mps": nu[:, 0], "sway_mps": nu[:, 1], "yaw_rate_dps": np.degrees(nu[:, 2]),
                "xte_m": xte_true, "heading_cmd_deg": np.degrees(gout.heading_d_rad),
                "speed_cmd_mps": gout.speed_d_mps, "power_w": power, **_nav_record(navigator, eta),
                "act_surge_n": act_tau[:, 0], "act_yaw_nm": act_tau[:, 2],
            })  # fmt: skip
        prev = eta[:, :2].copy()
        eta_prev, nu_prev = eta, nu
        eta, nu, psi_w = advance(env.plant, eta, nu, tick * k, dt, k, tau_ext=tau, current_ned=cur,
                                 drift_heading_rad=psi_w, workspace=workspace)  # fmt: skip
        steps_run += k
        if navigator is not None:
            navigator.predict(tick, period, eta_prev, nu_prev, eta, nu, active)
        acc.motion(active, np.hypot(eta[:, 0] - prev[:, 0], eta[:, 1] - prev[:, 1]), power)
        bad = ~(np.all(np.isfinite(eta), axis=1) & np.all(np.isfinite(nu), axis=1))
        if np.any(bad):
            acc.fail(bad, f"non-finite state at t = {t + period:.1f} s")
        sog = np.hypot(nu[:, 0], nu[:, 1])
        runaway = ~bad & ((sog > RUNAWAY_SPEED_MPS) | (np.abs(nu[:, 2]) > RUNAWAY_YAW_RATE_RAD_S))
        if np.any(runaway):
            acc.fail(runaway, f"runaway (speed or yaw rate beyond any the craft can reach) at t = {t + period:.1f} s")
        dead = acc.failed
        if np.any(dead):
            # park failed trials in a harmless state so they cannot spoil the batch's arithmetic
            eta[dead] = 0.0
            nu[dead] = 0.0
            act_state[dead] = 0.0
            if psi_w is not None:
                psi_w[dead] = 0.0
        if on_progress is not None and (tick + 1) % report_every == 0:
            on_progress(report_every / n_ticks)
        if not np.any(acc.active):
            break
    if on_progress is not None:
        on_progress((n_ticks - (tick + 1) // report_every * report_every) / n_ticks)
    if navigator is not None:
        acc.nis_sum[:] = navigator.diag[:, nk.D_NIS_SUM]
        acc.nis_n[:] = navigator.diag[:, nk.D_NIS_N]
    return BatchResult(
        trials=np.asarray(env.trials.trials, dtype=np.int64), metrics=acc.finish(), record=rec,
        time_s=record_times(spec), steps_run=steps_run,
    )  # fmt: skip


def _nav_record(navigator: NavRun | None, eta: FloatArray) -> dict[str, FloatArray]:
    """The navigator's recorded signals (NaN with truth navigation)."""
    n = eta.shape[0]
    if navigator is None:
        nan = np.full(n, np.nan)
        return {"nav_north_m": nan, "nav_east_m": nan, "nav_err_m": nan, "nees": nan, "nis": nan, "fix_ok": nan,
                "nav_drms_m": nan}  # fmt: skip
    x, d, p = navigator.x, navigator.diag, navigator.P
    err = np.hypot(x[:, 0] - eta[:, 0], x[:, 1] - eta[:, 1])
    return {"nav_north_m": x[:, 0], "nav_east_m": x[:, 1], "nav_err_m": err, "nees": d[:, nk.D_NEES],
            "nis": d[:, nk.D_NIS], "fix_ok": d[:, nk.D_FIX_OK],
            "nav_drms_m": np.sqrt(p[:, 0, 0] + p[:, 1, 1])}  # fmt: skip


def outage_end_ticks(windows: tuple, period: float, n_ticks: int) -> NDArray[np.int64]:
    """The last control period inside each scheduled outage window (before the first fix after it), within the run."""
    ticks = [(math.ceil(start / period - 1e-9), math.ceil(end / period - 1e-9) - 1) for start, end in windows]
    return np.asarray(sorted({last for first, last in ticks if 0 <= last < n_ticks and last >= first}),
                      dtype=np.int64)  # fmt: skip


def true_cross_track(setup: TrialSetup, leg: NDArray[np.int64], eta: FloatArray) -> FloatArray:
    """Cross-track error [m] of the true position to each trial's active leg (positive to starboard)."""
    wp = setup.guide.path.waypoints
    rows = np.arange(eta.shape[0])
    k = np.clip(leg, 0, wp.shape[1] - 2)
    p0, p1 = wp[rows, k], wp[rows, k + 1]
    pi_p = np.arctan2(p1[:, 1] - p0[:, 1], p1[:, 0] - p0[:, 0])
    return -(eta[:, 0] - p0[:, 0]) * np.sin(pi_p) + (eta[:, 1] - p0[:, 1]) * np.cos(pi_p)
