"""The navigator role: each trial's sensor errors drawn for the run, packed for the compiled filter.

:func:`build_nav_pack` turns the spec's ``[sensors.<name>]`` and
``stack.navigator`` into a :class:`NavPack`: the configuration, per-trial
parameters and pre-drawn errors that
:mod:`wavebench.trial.nav_kernel` reads while it samples the sensors from
the truth and runs the filter. :class:`NavRun` holds a batch's filter state
and steps it from the Python loop; the fused run steps the same state in
its compiled kernel.

Every error is drawn per trial under its own stream purpose
(``sensor.<name>.noise``, ``sensor.<name>.dropout``, ``sensor.<name>.imu.*``,
``sensor.<name>.settle``), so a trial's sensors are the same alone or in any
batch. Samples are taken every whole number of control periods (the spec
checks the rates); a sensor's validity combines its scheduled outage
windows and its Markov dropouts.

Modelling choices (ours unless a source is named): the GNSS position error
is white (1-sigma ``horizontal_sd_m`` per axis); the compass reading is the
truth plus bias, deviation and white noise; the gyrocompass adds a constant
settle-point error drawn uniformly within the IMO A.424(XI) limit at the
scenario's latitude plus white scatter of the standard's RMS figure; the DVL
noise is ``a + b |v|`` per axis times unit normals; acoustic ranges read
``r c_assumed / c_true``, the true sound speed from Mackenzie (1981) at
10 degC, 35 ppt and the beacons' mean depth (our choice of water).
The filter starts at the true initial pose and velocity with the standard
deviations of :data:`P0_SD`, its bias states at zero with the IMU grade's
turn-on and in-run bias spread.
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import NDArray

from ..core.errors import ParameterError
from ..core.streams import TrialStreams
from ..navigation.terrain_kernel import pf_init_batch
from ..sea.seabed import SeabedGrid
from ..sensors.imu import DEG_PER_H, GM_SIGMA_PER_BIAS_INSTABILITY, imu_errors
from ..sensors.noise import markov_dropout_mask, outage_mask, white_sequence
from ..sensors.ranging import mackenzie_sound_speed
from ..spec.schema import Spec
from . import nav_kernel as nk
from .signals import NavState

__all__ = ["NAVIGATING", "P0_SD", "NavPack", "NavRun", "build_nav_pack", "placeholder_nav"]

FloatArray = NDArray[np.float64]

#: Navigators that estimate (every one but "truth").
NAVIGATING = ("ekf", "dead_reckoning", "terrain")
#: Initial standard deviations of the filter's pose and velocity: north, east [m], heading [rad], surge, sway [m/s].
P0_SD = (2.0, 2.0, math.radians(2.0), 0.1, 0.1)
#: Water for the true sound speed of acoustic ranges: temperature [degC], salinity [ppt] (our choice).
WATER_T_C, WATER_S_PPT = 10.0, 35.0

_MODE = {"ekf": nk.MODE_EKF, "dead_reckoning": nk.MODE_DR, "terrain": nk.MODE_TERRAIN}
_HEAD_KINDS = ("compass", "gyrocompass")


@dataclass(frozen=True)
class NavPack:
    """Configuration and pre-drawn errors of a batch's navigator (see the module notes).

    Attributes
    ----------
    cfg : ndarray of int64, shape (N_CFG,)
        Mode, which sensors are present, their sample spacing and latency in control periods.
    par : ndarray of shape (n_trials, N_PAR)
        Per-trial error figures and filter noise.
    arrays : tuple of ndarray
        Beacons, pre-drawn noise and validity per sensor, seabed grid, in the
        order :func:`~wavebench.trial.nav_kernel.nav_update_one` takes them.
    imu_err : ndarray of shape (n_trials, n_imu_samples, 3)
        Gyro (yaw) and accelerometer (surge, sway) additive errors.
    x0 : ndarray of shape (n_trials, 8)
    p0 : ndarray of shape (n_trials, 8, 8)
    fix_outages_s : tuple of (start_s, end_s)
        The GNSS sensor's scheduled outage windows (for the outage-end metric).
    mode : str
    particles : int
        Particles per trial of the terrain navigator (1 otherwise).
    initial_sd_m : float
        Spread of the terrain navigator's initial cloud around the start [m].
    """

    cfg: NDArray[np.int64]
    par: FloatArray
    arrays: tuple
    imu_err: FloatArray
    x0: FloatArray
    p0: FloatArray
    fix_outages_s: tuple
    mode: str
    particles: int = 1
    initial_sd_m: float = 0.0


def _drawn(model: Any, draws: dict[str, FloatArray], prefix: str) -> Any:
    """The error model with its distributed fields replaced by the batch's draws."""
    given = {f.name: draws[prefix + f.name] for f in dataclasses.fields(model) if prefix + f.name in draws}
    return dataclasses.replace(model, **given) if given else model


def _validity(trials: TrialStreams, name: str, s: object, n_samples: int, every_s: float) -> NDArray[np.bool_]:
    times = np.arange(n_samples) * every_s
    valid = np.broadcast_to(outage_mask(times, s.outages_s) if s.outages_s else True,
                            (trials.n_trials, n_samples)).copy()  # fmt: skip
    if s.p_drop > 0.0:
        valid &= markov_dropout_mask(trials, f"sensor.{name}.dropout", n_samples, s.p_drop, s.p_recover)
    return valid


def build_nav_pack(spec: Spec, trials: TrialStreams, draws: dict[str, FloatArray], eta0: FloatArray,
                   nu0: FloatArray, seabed: SeabedGrid | None) -> NavPack:  # fmt: skip
    """Pack the spec's navigator and sensors for a batch (errors drawn per trial for the whole run).

    Parameters
    ----------
    spec : Spec
        With ``stack.navigator`` one of :data:`NAVIGATING`.
    trials : TrialStreams
        The batch's streams.
    draws : dict of str to ndarray of shape (n_trials,)
        The batch's drawn spec fields by TOML path (sensor figures may be distributed).
    eta0, nu0 : ndarray of shape (n_trials, 3)
        True initial pose and body velocity (the filter's initial mean).
    seabed : SeabedGrid or None
        For the DVL's bottom lock and the altimeter.

    Returns
    -------
    NavPack
    """
    mode = spec.stack.navigator
    n = trials.n_trials
    k = spec.control_steps
    period = k * spec.scenario.dt_s
    n_ticks = spec.scenario.n_steps // k
    cfg = np.zeros(nk.N_CFG, dtype=np.int64)
    cfg[nk.C_MODE] = _MODE[mode]
    cfg[nk.C_GATE] = 1
    cfg[nk.C_BED] = 1 if seabed is not None else 0
    par = np.zeros((n, nk.N_PAR))
    par[:, nk.P_AC_SCALE] = 1.0
    depth = draws.get("mission.running_depth_m", spec.mission.running_depth_m)
    par[:, nk.P_RUN_DEPTH] = np.broadcast_to(np.asarray(depth, dtype=float), (n,))
    one = np.zeros((n, 1))
    one_b = np.ones((n, 1), dtype=bool)
    gnss_noise, gnss_valid = np.zeros((n, 1, 2)), one_b
    head_noise, head_valid = one, one_b
    dvl_noise, dvl_valid = np.zeros((n, 1, 2)), one_b
    ac_noise, ac_valid = np.zeros((n, 1, 1)), one_b
    alt_noise, alt_valid = one, one_b
    depth_noise, depth_valid = one, one_b
    beacons = np.zeros((1, 3))
    imu_err = np.zeros((n, 1, 3))
    fix_outages: tuple = ()
    max_lat = 0
    sd0_bias = np.zeros((n, 3))
    heading = [name for name, s in spec.sensors if s.kind in _HEAD_KINDS]
    if len(heading) > 1:
        raise ParameterError(f"sensors.{heading[1]}.kind", dict(spec.sensors)[heading[1]].kind,
                             f"one heading source per navigator in this version: sensors '{heading[0]}' and "
                             f"'{heading[1]}' are both heading sources (keep one for navigator '{mode}')")  # fmt: skip
    for name, s in spec.sensors:
        every = round(1.0 / (s.rate_hz * period))
        lat = round(s.latency_s / period)
        max_lat = max(max_lat, lat)
        n_samples = -(-n_ticks // every)
        m = _drawn(s.model, draws, f"sensors.{name}.{s.kind}.")
        purpose = f"sensor.{name}"
        if s.kind == "imu":
            cfg[nk.C_EV_IMU] = every
            e = imu_errors(trials, m, n_samples, every * period, purpose=f"{purpose}.imu")
            imu_err = np.concatenate([e.gyro_rad_s, e.accel_mps2], axis=2)
            par[:, nk.P_GSF] = e.gyro_scale_factor[:, 0]
            par[:, nk.P_ASF_X] = e.accel_scale_factor[:, 0]
            par[:, nk.P_ASF_Y] = e.accel_scale_factor[:, 1]
            arw = np.asarray(m.gyro_arw_deg_per_sqrt_h, dtype=float) * math.pi / 180.0 / 60.0
            vrw = np.asarray(m.accel_vrw_mps_per_sqrt_h, dtype=float) / 60.0
            par[:, nk.P_SF_SD_G] = np.asarray(m.gyro_scale_factor_sd_ppm, dtype=float) * 1e-6
            par[:, nk.P_SF_SD_A] = np.asarray(m.accel_scale_factor_sd_ppm, dtype=float) * 1e-6
            par[:, nk.P_Q_GYRO] = arw**2
            par[:, nk.P_Q_ACC] = vrw**2
            for kind, phi_i, q_i, col, bi, tc, rrw, ton in (
                ("gyro", nk.P_BG_PHI, nk.P_BG_Q, 0, np.asarray(m.gyro_bias_instability_deg_per_h) * DEG_PER_H,
                 m.gyro_bias_corr_time_s, np.asarray(m.gyro_rrw_deg_per_h_per_sqrt_h) * DEG_PER_H / 60.0,
                 np.asarray(m.gyro_turn_on_bias_sd_deg_per_h) * DEG_PER_H),
                ("accel", nk.P_BA_PHI, nk.P_BA_Q, 1, np.asarray(m.accel_bias_instability_mps2, dtype=float),
                 m.accel_bias_corr_time_s, np.asarray(m.accel_bias_rw_mps2_per_sqrt_h) / 60.0,
                 np.asarray(m.accel_turn_on_bias_sd_mps2, dtype=float)),
            ):  # fmt: skip
                sig = bi * GM_SIGMA_PER_BIAS_INSTABILITY
                tau = np.asarray(tc, dtype=float)
                phi = np.where(np.isfinite(tau), np.exp(-period / np.where(np.isfinite(tau), tau, 1.0)), 1.0)
                # the filter carries each bias as a random walk (phi = 1): the turn-on part is a constant that a
                # decaying Gauss-Markov state would pull towards zero; the in-run part's drive is its noise
                par[:, phi_i] = 1.0
                par[:, q_i] = sig**2 * (1.0 - phi**2) + rrw**2 * period
                spread = np.sqrt(ton**2 + sig**2)
                sd0_bias[:, col] = spread
                if kind == "accel":
                    sd0_bias[:, 2] = spread
        elif s.kind == "gnss":
            cfg[nk.C_GNSS], cfg[nk.C_EV_GNSS], cfg[nk.C_LAT_GNSS] = 1, every, lat
            sd = np.asarray(m.horizontal_sd_m, dtype=float)
            gnss_noise = white_sequence(trials, f"{purpose}.noise", n_samples, sd, n_axes=2)
            gnss_valid = _validity(trials, name, s, n_samples, every * period)
            par[:, nk.P_GNSS_LX] = m.lever_x_m
            par[:, nk.P_GNSS_LY] = m.lever_y_m
            par[:, nk.P_GNSS_SD] = sd
            fix_outages = tuple(s.outages_s)
        elif s.kind in _HEAD_KINDS:
            cfg[nk.C_HEAD], cfg[nk.C_EV_HEAD], cfg[nk.C_LAT_HEAD] = 1, every, lat
            if s.kind == "compass":
                sd = np.radians(np.asarray(m.noise_sd_deg, dtype=float))
                par[:, nk.P_HEAD_BIAS] = np.radians(m.bias_deg)
                dev_cols = (nk.P_DEV_A, nk.P_DEV_B, nk.P_DEV_C, nk.P_DEV_D, nk.P_DEV_E)
                for col, key in zip(dev_cols, "abcde", strict=True):
                    par[:, col] = np.radians(getattr(m, f"deviation_{key}_deg"))
            else:
                cfg[nk.C_HEAD_GYRO] = 1
                lat_deg = spec.scenario.origin.lat_deg
                sd = np.asarray(m.noise_sd_rad(lat_deg), dtype=float)
                limit = np.asarray(m.settle_error_limit_rad(lat_deg), dtype=float)
                par[:, nk.P_HEAD_BIAS] = trials.draw(f"{purpose}.settle", lambda g: g.uniform(-1.0, 1.0)) * limit
            head_noise = white_sequence(trials, f"{purpose}.noise", n_samples, sd)
            head_valid = _validity(trials, name, s, n_samples, every * period)
            par[:, nk.P_HEAD_SD] = sd
        elif s.kind == "dvl":
            cfg[nk.C_DVL], cfg[nk.C_EV_DVL], cfg[nk.C_LAT_DVL] = 1, every, lat
            dvl_noise = white_sequence(trials, f"{purpose}.noise", n_samples, 1.0, n_axes=2)
            dvl_valid = _validity(trials, name, s, n_samples, every * period)
            par[:, nk.P_DVL_A], par[:, nk.P_DVL_B] = m.noise_floor_mps, m.noise_speed_fraction
            par[:, nk.P_DVL_MIN], par[:, nk.P_DVL_MAX] = m.min_altitude_m, m.max_altitude_m
            par[:, nk.P_DVL_LX], par[:, nk.P_DVL_LY] = m.lever_x_m, m.lever_y_m
        elif s.kind == "altimeter":
            cfg[nk.C_ALT], cfg[nk.C_EV_ALT], cfg[nk.C_LAT_ALT] = 1, every, lat
            alt_noise = white_sequence(trials, f"{purpose}.noise", n_samples, 1.0)
            alt_valid = _validity(trials, name, s, n_samples, every * period)
            par[:, nk.P_ALT_SD], par[:, nk.P_ALT_MIN], par[:, nk.P_ALT_MAX] = m.noise_sd_m, m.min_range_m, m.max_range_m
        elif s.kind == "depth":
            cfg[nk.C_DEPTH], cfg[nk.C_EV_DEPTH], cfg[nk.C_LAT_DEPTH] = 1, every, lat
            depth_noise = white_sequence(trials, f"{purpose}.noise", n_samples, 1.0)
            depth_valid = _validity(trials, name, s, n_samples, every * period)
            par[:, nk.P_DEPTH_SD] = np.asarray(m.noise_fs_fraction) * np.asarray(m.full_scale_m)
        elif s.kind == "acoustic":
            cfg[nk.C_AC], cfg[nk.C_EV_AC], cfg[nk.C_LAT_AC] = 1, every, lat
            beacons = np.asarray(s.beacons_ned_m, dtype=float).reshape(-1, 3)
            ac_noise = white_sequence(trials, f"{purpose}.noise", n_samples, 1.0, n_axes=beacons.shape[0])
            ac_valid = _validity(trials, name, s, n_samples, every * period)
            c_true = mackenzie_sound_speed(WATER_T_C, WATER_S_PPT, float(np.mean(beacons[:, 2])))
            par[:, nk.P_AC_SD], par[:, nk.P_AC_MAX] = m.noise_sd_m, m.max_range_m
            # the receiver turns travel time into range with its assumed speed: r_read = r c_assumed / c_true
            par[:, nk.P_AC_SCALE] = np.asarray(m.assumed_sound_speed_mps, dtype=float) / float(c_true)
    for c_ev in (nk.C_EV_IMU, nk.C_EV_GNSS, nk.C_EV_HEAD, nk.C_EV_DVL, nk.C_EV_ALT, nk.C_EV_DEPTH, nk.C_EV_AC):
        cfg[c_ev] = max(cfg[c_ev], 1)
    cfg[nk.C_HIST] = max_lat + 1
    if ac_noise.ndim == 2:
        ac_noise = ac_noise[:, :, None]
    if mode == "terrain" and seabed is None:
        raise ParameterError("stack.navigator", mode, "needs a [seabed] to navigate against")
    x0 = np.zeros((n, nk.NX))
    x0[:, :3] = eta0
    x0[:, 3:5] = nu0[:, :2]
    sd0 = np.concatenate([np.broadcast_to(np.asarray(P0_SD), (n, 5)), np.maximum(sd0_bias, 1e-12)], axis=1)
    p0 = np.zeros((n, nk.NX, nk.NX))
    p0[:, np.arange(nk.NX), np.arange(nk.NX)] = sd0**2
    if seabed is not None:
        gn, ge, grid = (np.array(a, dtype=float) for a in (seabed.north_m, seabed.east_m, seabed.depth_m))  # writable
        fill = np.array(np.nan if seabed.fill_depth_m is None else float(seabed.fill_depth_m))
    else:
        gn, ge, grid, fill = np.zeros(2), np.zeros(2), np.zeros((2, 2)), np.array(np.nan)
    terrain = spec.stack.terrain
    keys = np.zeros(n, dtype=np.uint64)
    particles = 1
    if mode == "terrain":
        keys = trials.draw("navigator.terrain.key", lambda g: g.integers(0, 2**63, dtype=np.uint64))
        par[:, nk.P_PF_SD] = terrain.process_sd_m_per_sqrt_s * math.sqrt(period)
        par[:, nk.P_PF_RESAMPLE] = terrain.resample_below
        particles = int(terrain.particles)
    arrays = tuple(np.ascontiguousarray(a) for a in (
        beacons, gnss_noise, gnss_valid, head_noise, head_valid, dvl_noise, dvl_valid, ac_noise, ac_valid,
        alt_noise, alt_valid, depth_noise, depth_valid, keys, gn, ge, grid))  # fmt: skip
    return NavPack(cfg=cfg, par=par, arrays=(*arrays, float(fill)), imu_err=np.ascontiguousarray(imu_err),
                   x0=x0, p0=p0, fix_outages_s=fix_outages, mode=mode, particles=particles,
                   initial_sd_m=float(terrain.initial_sd_m) if mode == "terrain" else 0.0)  # fmt: skip


class NavRun:
    """A batch's filter state, stepped from the Python loop (the fused run steps the same arrays).

    Parameters
    ----------
    pack : NavPack
    nu0 : ndarray of shape (n_trials, 3)
        True initial body velocity (the yaw rate the pilot sees before the first IMU sample).
    """

    def __init__(self, pack: NavPack, nu0: FloatArray) -> None:
        self.pack = pack
        n = pack.par.shape[0]
        self.x = pack.x0.copy()
        self.P = pack.p0.copy()
        self.hist = np.zeros((n, int(pack.cfg[nk.C_HIST]), 6))
        self.diag = np.zeros((n, nk.N_DIAG))
        self.diag[:, nk.D_NIS] = np.nan
        self.diag[:, nk.D_FIX_OK] = np.nan
        self.diag[:, nk.D_NEES] = np.nan
        self.diag[:, nk.D_RATE] = nu0[:, 2]
        self.diag[:, nk.D_DEPTH] = np.nan
        m = pack.particles
        rows = n if pack.mode == "terrain" else 1
        self.particles = np.zeros((rows, m, 2))
        self.logw = np.zeros((rows, m))
        self.pf_mean = np.zeros((rows, 2))
        self.pf_cov = np.zeros((rows, 2, 2))
        if pack.mode == "terrain":
            keys = pack.arrays[13]
            pf_init_batch(keys, self.particles, self.logw, np.ascontiguousarray(pack.x0[:, 0]),
                          np.ascontiguousarray(pack.x0[:, 1]), np.full(n, pack.initial_sd_m))  # fmt: skip
            self.P[:, 0, 0] = self.P[:, 1, 1] = pack.initial_sd_m**2

    @property
    def state(self) -> tuple:
        """The mutable filter arrays in the order the kernels take them."""
        return (self.x, self.P, self.hist, self.diag, self.particles, self.logw, self.pf_mean, self.pf_cov)

    def update(self, tick: int, eta: FloatArray, nu: FloatArray, active: NDArray[np.bool_]) -> None:
        """Sample and fuse the sensors due at control period ``tick`` (truth ``eta``, ``nu``)."""
        p = self.pack
        nk.nav_update_batch(tick, np.ascontiguousarray(eta), np.ascontiguousarray(nu), active, *self.state, p.cfg,
                            p.par, *p.arrays)  # fmt: skip

    def predict(self, tick: int, period: float, eta0: FloatArray, nu0: FloatArray, eta1: FloatArray, nu1: FloatArray,
                active: NDArray[np.bool_]) -> None:  # fmt: skip
        """Propagate over control period ``tick`` with the IMU increments between truths 0 and 1."""
        p = self.pack
        nk.nav_predict_batch(tick, period, np.ascontiguousarray(eta0), np.ascontiguousarray(nu0),
                             np.ascontiguousarray(eta1), np.ascontiguousarray(nu1), active, self.x, self.P, self.diag,
                             p.cfg, p.par, p.imu_err)  # fmt: skip

    def nav_state(self, t_s: float) -> NavState:
        """The estimate as the navigation solution the guide and pilot see."""
        x = self.x
        c, s = np.cos(x[:, 2]), np.sin(x[:, 2])
        vn, ve = x[:, 3] * c - x[:, 4] * s, x[:, 3] * s + x[:, 4] * c
        return NavState(t_s=t_s, north_m=x[:, 0].copy(), east_m=x[:, 1].copy(), heading_rad=x[:, 2].copy(),
                        surge_mps=x[:, 3].copy(), sway_mps=x[:, 4].copy(),
                        yaw_rate_rad_s=self.diag[:, nk.D_RATE].copy(), course_rad=np.arctan2(ve, vn),
                        sog_mps=np.hypot(vn, ve))  # fmt: skip


def placeholder_nav(n_trials: int, nu0: FloatArray) -> tuple[NavPack, NavRun]:
    """A navigator pack and state of the right array types that no kernel reads (truth navigation).

    The fused kernel takes the navigator's arrays whether or not a navigator
    runs; passing these keeps one compiled specialisation for both cases.
    """
    one, ok = np.zeros((1, 1)), np.ones((1, 1), dtype=bool)
    arrays = (np.zeros((1, 3)), np.zeros((1, 1, 2)), ok, one, ok, np.zeros((1, 1, 2)), ok, np.zeros((1, 1, 1)), ok,
              one, ok, one, ok, np.zeros(1, dtype=np.uint64), np.zeros(2), np.zeros(2), np.zeros((2, 2)),
              math.nan)  # fmt: skip
    pack = NavPack(cfg=np.ones(nk.N_CFG, dtype=np.int64), par=np.zeros((1, nk.N_PAR)), arrays=arrays,
                   imu_err=np.zeros((1, 1, 3)), x0=np.zeros((1, nk.NX)), p0=np.zeros((1, nk.NX, nk.NX)),
                   fix_outages_s=(), mode="truth")  # fmt: skip
    return pack, NavRun(pack, nu0[:1])
