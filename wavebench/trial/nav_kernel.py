"""The navigator of one trial, compiled: sensor sampling from the truth and an IMU-driven EKF.

Both engines call these functions: the fused run once per trial inside its
``prange`` loop, the Python loop through :func:`nav_update_batch` and
:func:`nav_predict_batch` once per control period. So a trial's navigation
has the same bits in either engine, alone or in any batch.

The filter
----------
State ``x = [north, east, psi, u, v, b_g, b_x, b_y]``: position [m],
heading [rad], surge and sway over ground [m/s], gyro bias [rad/s] and the
two horizontal accelerometer biases [m/s^2]. The horizontal-plane mechanisation
over one control period ``T`` with the IMU's increments (rate ``w``,
specific force ``f_x, f_y``, held when the IMU samples slower than the
control period) is, with ``r = w - b_g``::

    psi'   = psi + T r
    u'     = u + T (f_x - b_x + r v)
    v'     = v + T (f_y - b_y - r u)
    north' = north + T/2 (u cos psi - v sin psi + u' cos psi' - v' sin psi')
    east'  = east  + T/2 (u sin psi + v cos psi + u' sin psi' + v' cos psi')
    b'     = b                (random walk)

(Euler steps for heading and velocity, the trapezoidal rule for position,
the Jacobian of the Euler form at the prior; the body-frame kinematics ``f = dnu/dt + omega x nu`` of e.g.
Fossen 2021, ch. 2 and 14, reduced to the horizontal plane.) Process noise
comes from the IMU's own figures: angle and velocity random walk densities
squared times ``T`` on heading and velocities; on the biases the drive of
the in-run Gauss-Markov part, ``sigma^2 (1 - phi^2)`` with
``phi = exp(-T / tau)``, plus the rate random walk. The bias states are
random walks, not decaying Gauss-Markov states, because most of a MEMS
bias is the turn-on constant, which a decaying state would pull towards
zero between fixes. Scale-factor errors are not estimated: they enter as
white noise on each period's increment, which understates them in long
turns.

Measurements, each a sequence of scalar updates (``P - P h h' P / s``,
which equals the Kalman vector update for a diagonal noise covariance): GNSS
antenna position (lever arm; the two axes linearised at the prior, so the
pair equals the vector update; gated on its 2-dof NIS), heading from a
compass or gyrocompass (wrapped residual), DVL body velocity over ground
(lever arm with the gyro rate; noise ``a + b |v|``), slant ranges to fixed
acoustic beacons. A sensor samples the truth every ``every`` control
periods and its reading arrives ``latency`` periods later, where the filter
applies it as if current (no delay compensation); its noise, outage windows
and dropouts are indexed by the time it measured, not the time it arrived.

Simplifications (ours): the DVL row leaves out the gyro-bias term of its
lever-arm correction; heading is re-wrapped after the heading and GNSS
updates only; position has no process noise of its own; an IMU slower than
the control period gives the rate over its first period, held.

Gating: a GNSS fix whose NIS exceeds :data:`GATE_NIS_2DOF` is rejected, but
never more than :data:`MAX_REJECTS` in a row, so a filter that drifted
through an outage cannot lock itself out (common practice, no source).

Dead reckoning (``navigator = "dead_reckoning"``) is the same filter with
the position updates switched off. Terrain-aided navigation
(``navigator = "terrain"``) is dead reckoning whose position comes from a
particle filter (:mod:`wavebench.navigation.terrain_kernel`): the cloud
moves by the filter's displacement over each period plus a random-walk
spread and is weighted by the measured seabed depth, the depth sensor's
reading plus the altimeter's range (point beam: the footprint is not
modelled here), against the seabed grid; its mean and covariance replace
the filter's position and position covariance (cross-covariances zeroed).
"""

from __future__ import annotations

import math

import numba
import numpy as np

from ..navigation.terrain_kernel import pf_step
from .compiled import wrap_scalar

__all__ = [
    "GATE_NIS_2DOF",
    "MAX_REJECTS",
    "NX",
    "depth_one",
    "nav_nees",
    "nav_predict_batch",
    "nav_predict_one",
    "nav_update_batch",
    "nav_update_one",
]

#: Number of filter states.
NX = 8
#: Gate on the 2-dof NIS of a GNSS fix: chi-square(2) at 0.9999 = -2 ln(1e-4).
GATE_NIS_2DOF = -2.0 * math.log(1e-4)
#: Most consecutive GNSS fixes the gate may reject (common practice, no source).
MAX_REJECTS = 3
#: Process-noise floors for what the filter does not model (discretisation, wave-frequency motion): heading
#: [rad^2/s] and body velocities [(m/s)^2/s]; our tuning, no source.
Q_HEAD_FLOOR = math.radians(0.01) ** 2
Q_VEL_FLOOR = 0.002**2

# --- configuration vector (int64) -------------------------------------------------------
C_MODE, C_GNSS, C_HEAD, C_DVL, C_ALT, C_DEPTH, C_AC = 0, 1, 2, 3, 4, 5, 6
C_EV_IMU, C_EV_GNSS, C_EV_HEAD, C_EV_DVL, C_EV_ALT, C_EV_DEPTH, C_EV_AC = 7, 8, 9, 10, 11, 12, 13
C_LAT_GNSS, C_LAT_HEAD, C_LAT_DVL, C_LAT_ALT, C_LAT_DEPTH, C_LAT_AC = 14, 15, 16, 17, 18, 19
C_HIST, C_GATE, C_BED, C_HEAD_GYRO = 20, 21, 22, 23
N_CFG = 24
#: Navigator modes.
MODE_EKF, MODE_DR, MODE_TERRAIN = 0, 1, 2

# --- per-trial parameters (float64, shape (n, N_PAR)) -------------------------------------
P_GNSS_LX, P_GNSS_LY, P_GNSS_SD = 0, 1, 2
P_HEAD_SD, P_HEAD_BIAS, P_DEV_A, P_DEV_B, P_DEV_C, P_DEV_D, P_DEV_E = 3, 4, 5, 6, 7, 8, 9
P_DVL_A, P_DVL_B, P_DVL_MIN, P_DVL_MAX, P_DVL_LX, P_DVL_LY = 10, 11, 12, 13, 14, 15
P_ALT_SD, P_ALT_MIN, P_ALT_MAX, P_DEPTH_SD, P_RUN_DEPTH = 16, 17, 18, 19, 20
P_AC_SD, P_AC_MAX, P_AC_SCALE = 21, 22, 23
P_Q_GYRO, P_Q_ACC, P_BG_PHI, P_BG_Q, P_BA_PHI, P_BA_Q = 24, 25, 26, 27, 28, 29
P_GSF, P_ASF_X, P_ASF_Y = 30, 31, 32
P_SF_SD_G, P_SF_SD_A = 33, 34
P_PF_SD, P_PF_RESAMPLE = 35, 36
N_PAR = 37

# --- per-trial diagnostics (float64, shape (n, N_DIAG)) -----------------------------------
D_NIS, D_FIX_OK, D_NEES, D_RATE, D_REJECTS, D_DN, D_DE, D_GYRO, D_FX, D_FY, D_NIS_SUM, D_NIS_N, D_DEPTH = range(13)
N_DIAG = 13

_jit = numba.njit(cache=True, error_model="numpy")


@_jit
def depth_one(gn, ge, grid, fill, n, e):
    """Bilinear seabed depth [m] at one point, as :func:`wavebench.sea.seabed.depth_at` (``fill`` outside)."""
    if not (n >= gn[0] and n <= gn[-1] and e >= ge[0] and e <= ge[-1]):
        return fill
    i0 = min(max(np.searchsorted(gn, n, side="right") - 1, 0), gn.size - 2)
    j0 = min(max(np.searchsorted(ge, e, side="right") - 1, 0), ge.size - 2)
    wn = (n - gn[i0]) / (gn[i0 + 1] - gn[i0])
    we = (e - ge[j0]) / (ge[j0 + 1] - ge[j0])
    low = (1.0 - we) * grid[i0, j0] + we * grid[i0, j0 + 1]
    high = (1.0 - we) * grid[i0 + 1, j0] + we * grid[i0 + 1, j0 + 1]
    return (1.0 - wn) * low + wn * high


@_jit
def scalar_update(x, P, h, resid, var, ph):
    """Kalman update with one scalar measurement; returns its NIS ``resid^2 / s``.

    ``x`` (NX,) and ``P`` (NX, NX) are updated in place; ``h`` is the
    measurement row, ``var`` the measurement noise variance, ``ph`` scratch.
    """
    nx = x.shape[0]
    s = var
    for a in range(nx):
        acc = 0.0
        for b in range(nx):
            acc += P[a, b] * h[b]
        ph[a] = acc
    for a in range(nx):
        s += h[a] * ph[a]
    g = resid / s
    for a in range(nx):
        x[a] += ph[a] * g
    for a in range(nx):
        for b in range(nx):
            P[a, b] -= ph[a] * ph[b] / s
    return resid * resid / s


@_jit
def _fix_update(x, P, h1, h2, nu1, nu2, var, x0, ph, gate, rejects):
    """Two-axis position fix linearised at the prior; returns (NIS, accepted)."""
    nx = x.shape[0]
    # innovation covariance (2 x 2) at the prior, for the gate
    s11 = var
    s12 = 0.0
    s22 = var
    for a in range(nx):
        p1 = 0.0
        p2 = 0.0
        for b in range(nx):
            p1 += P[a, b] * h1[b]
            p2 += P[a, b] * h2[b]
        s11 += h1[a] * p1
        s12 += h2[a] * p1
        s22 += h2[a] * p2
    det = s11 * s22 - s12 * s12
    nis = (s22 * nu1 * nu1 - 2.0 * s12 * nu1 * nu2 + s11 * nu2 * nu2) / det
    if gate and nis > GATE_NIS_2DOF and rejects < MAX_REJECTS:
        return nis, False
    for a in range(nx):
        x0[a] = x[a]
    scalar_update(x, P, h1, nu1, var, ph)
    r2 = nu2
    for a in range(nx):
        r2 -= h2[a] * (x[a] - x0[a])
    scalar_update(x, P, h2, r2, var, ph)
    return nis, True


@_jit
def nav_nees(x, P, tn, te, tpsi, tu, tv, work):
    """NEES of ``[north, east, psi, u, v]`` against the truth (5 dof); NaN if the block is not positive definite."""
    m = 5
    L = work[: m * m].reshape((m, m))
    e = work[m * m : m * m + m]
    e[0], e[1], e[2], e[3], e[4] = x[0] - tn, x[1] - te, wrap_scalar(x[2] - tpsi), x[3] - tu, x[4] - tv
    for a in range(m):
        for b in range(a + 1):
            s = P[a, b]
            for c in range(b):
                s -= L[a, c] * L[b, c]
            if a == b:
                if s <= 0.0:
                    return np.nan
                L[a, a] = math.sqrt(s)
            else:
                L[a, b] = s / L[b, b]
    total = 0.0
    for a in range(m):
        s = e[a]
        for c in range(a):
            s -= L[a, c] * e[c]
        e[a] = s / L[a, a]
        total += e[a] * e[a]
    return total


@_jit
def nav_update_one(i, tick, tn, te, tpsi, tu, tv, tr, x, P, hist, diag, particles, logw, pf_mean, pf_cov, cfg, par,
                   beacons, gnss_noise, gnss_valid, head_noise, head_valid, dvl_noise, dvl_valid, ac_noise, ac_valid,
                   alt_noise, alt_valid, depth_noise, depth_valid, keys, gn, ge, grid, fill, work):  # fmt: skip
    """Sample the sensors due at control period ``tick`` from trial ``i``'s truth and fuse them.

    ``tn .. tr`` is the true pose and velocity now; it is stored in the
    trial's history ring ``hist[i]`` so a sensor with latency ``L`` reads
    the truth of ``tick - L``. Updates ``x[i]``, ``P[i]`` and ``diag[i]``
    (latest GNSS NIS and acceptance, NEES after the updates).
    """
    nx = NX
    xi = x[i]
    Pi = P[i]
    H = cfg[C_HIST]
    slot = tick % H
    hist[i, slot, 0], hist[i, slot, 1], hist[i, slot, 2] = tn, te, tpsi
    hist[i, slot, 3], hist[i, slot, 4], hist[i, slot, 5] = tu, tv, tr
    h1 = work[0:nx]
    h2 = work[nx : 2 * nx]
    x0 = work[2 * nx : 3 * nx]
    ph = work[3 * nx : 4 * nx]
    scratch = work[4 * nx :]
    mode = cfg[C_MODE]
    fixes = mode == MODE_EKF
    # --- heading
    ev = cfg[C_EV_HEAD]
    lat = cfg[C_LAT_HEAD]
    if cfg[C_HEAD] and tick >= lat and (tick - lat) % ev == 0:
        j = (tick - lat) // ev
        if head_valid[i, j]:
            s = (tick - lat) % H
            psi_t = hist[i, s, 2]
            if cfg[C_HEAD_GYRO]:
                z = psi_t + par[i, P_HEAD_BIAS] + head_noise[i, j]
            else:
                z = (psi_t + par[i, P_HEAD_BIAS] + par[i, P_DEV_A] + par[i, P_DEV_B] * np.sin(psi_t)
                     + par[i, P_DEV_C] * np.cos(psi_t) + par[i, P_DEV_D] * np.sin(2.0 * psi_t)
                     + par[i, P_DEV_E] * np.cos(2.0 * psi_t) + head_noise[i, j])  # fmt: skip
            z = wrap_scalar(z)
            for a in range(nx):
                h1[a] = 0.0
            h1[2] = 1.0
            sd = par[i, P_HEAD_SD]
            scalar_update(xi, Pi, h1, wrap_scalar(z - xi[2]), sd * sd, ph)
            xi[2] = wrap_scalar(xi[2])
    # --- DVL (bottom track: valid within the bottom-lock altitude window)
    ev = cfg[C_EV_DVL]
    lat = cfg[C_LAT_DVL]
    if cfg[C_DVL] and tick >= lat and (tick - lat) % ev == 0:
        j = (tick - lat) // ev
        s = (tick - lat) % H
        ok = dvl_valid[i, j]
        if ok and cfg[C_BED]:
            alt = depth_one(gn, ge, grid, fill, hist[i, s, 0], hist[i, s, 1]) - par[i, P_RUN_DEPTH]
            ok = alt >= par[i, P_DVL_MIN] and alt <= par[i, P_DVL_MAX]
        if ok:
            u_t, v_t, r_t = hist[i, s, 3], hist[i, s, 4], hist[i, s, 5]
            sd_t = par[i, P_DVL_A] + par[i, P_DVL_B] * math.hypot(u_t, v_t)
            zu = u_t - r_t * par[i, P_DVL_LY] + sd_t * dvl_noise[i, j, 0]
            zv = v_t + r_t * par[i, P_DVL_LX] + sd_t * dvl_noise[i, j, 1]
            rate = diag[i, D_RATE]
            sd = par[i, P_DVL_A] + par[i, P_DVL_B] * math.hypot(xi[3], xi[4])
            for a in range(nx):
                h1[a] = 0.0
            h1[3] = 1.0
            scalar_update(xi, Pi, h1, zu - (xi[3] - rate * par[i, P_DVL_LY]), sd * sd, ph)
            h1[3] = 0.0
            h1[4] = 1.0
            scalar_update(xi, Pi, h1, zv - (xi[4] + rate * par[i, P_DVL_LX]), sd * sd, ph)
    # --- GNSS fix
    ev = cfg[C_EV_GNSS]
    lat = cfg[C_LAT_GNSS]
    if fixes and cfg[C_GNSS] and tick >= lat and (tick - lat) % ev == 0:
        j = (tick - lat) // ev
        if gnss_valid[i, j]:
            s = (tick - lat) % H
            lx, ly = par[i, P_GNSS_LX], par[i, P_GNSS_LY]
            c, sn = np.cos(hist[i, s, 2]), np.sin(hist[i, s, 2])
            z1 = hist[i, s, 0] + c * lx - sn * ly + gnss_noise[i, j, 0]
            z2 = hist[i, s, 1] + sn * lx + c * ly + gnss_noise[i, j, 1]
            c, sn = np.cos(xi[2]), np.sin(xi[2])
            for a in range(nx):
                h1[a] = 0.0
                h2[a] = 0.0
            h1[0] = 1.0
            h1[2] = -sn * lx - c * ly
            h2[1] = 1.0
            h2[2] = c * lx - sn * ly
            nu1 = z1 - (xi[0] + c * lx - sn * ly)
            nu2 = z2 - (xi[1] + sn * lx + c * ly)
            sd = par[i, P_GNSS_SD]
            nis, accepted = _fix_update(xi, Pi, h1, h2, nu1, nu2, sd * sd, x0, ph, cfg[C_GATE] != 0,
                                        diag[i, D_REJECTS])  # fmt: skip
            diag[i, D_NIS] = nis
            diag[i, D_NIS_SUM] += nis
            diag[i, D_NIS_N] += 1.0
            diag[i, D_FIX_OK] = 1.0 if accepted else 0.0
            diag[i, D_REJECTS] = 0.0 if accepted else diag[i, D_REJECTS] + 1.0
            xi[2] = wrap_scalar(xi[2])
        else:
            diag[i, D_FIX_OK] = 0.0
    # --- acoustic ranges to fixed beacons
    ev = cfg[C_EV_AC]
    lat = cfg[C_LAT_AC]
    if fixes and cfg[C_AC] and tick >= lat and (tick - lat) % ev == 0:
        j = (tick - lat) // ev
        if ac_valid[i, j]:
            s = (tick - lat) % H
            depth = par[i, P_RUN_DEPTH]
            sd = par[i, P_AC_SD]
            for b in range(beacons.shape[0]):
                dn_t = hist[i, s, 0] - beacons[b, 0]
                de_t = hist[i, s, 1] - beacons[b, 1]
                dd = depth - beacons[b, 2]
                rng_t = math.sqrt(dn_t * dn_t + de_t * de_t + dd * dd)
                if rng_t > par[i, P_AC_MAX]:
                    continue
                z = rng_t * par[i, P_AC_SCALE] + sd * ac_noise[i, j, b]
                dn = xi[0] - beacons[b, 0]
                de = xi[1] - beacons[b, 1]
                rho = math.sqrt(dn * dn + de * de + dd * dd)
                if rho < 1e-6:
                    continue
                for a in range(nx):
                    h1[a] = 0.0
                h1[0] = dn / rho
                h1[1] = de / rho
                scalar_update(xi, Pi, h1, z - rho, sd * sd, ph)
    # --- terrain-aided position: the particle cloud moved by the filter's dead-reckoned displacement, weighted
    # by the measured seabed depth (depth sensor + altimeter); its mean and covariance replace the position
    if mode == MODE_TERRAIN:
        ev = cfg[C_EV_DEPTH]
        lat = cfg[C_LAT_DEPTH]
        if cfg[C_DEPTH] and tick >= lat and (tick - lat) % ev == 0:
            j = (tick - lat) // ev
            if depth_valid[i, j]:
                diag[i, D_DEPTH] = par[i, P_RUN_DEPTH] + par[i, P_DEPTH_SD] * depth_noise[i, j]
        ev = cfg[C_EV_ALT]
        lat = cfg[C_LAT_ALT]
        has = False
        z = 0.0
        if cfg[C_ALT] and tick >= lat and (tick - lat) % ev == 0 and np.isfinite(diag[i, D_DEPTH]):
            j = (tick - lat) // ev
            if alt_valid[i, j]:
                s = (tick - lat) % H
                alt_t = depth_one(gn, ge, grid, fill, hist[i, s, 0], hist[i, s, 1]) - par[i, P_RUN_DEPTH]
                if alt_t >= par[i, P_ALT_MIN] and alt_t <= par[i, P_ALT_MAX]:
                    has = True
                    z = diag[i, D_DEPTH] + alt_t + par[i, P_ALT_SD] * alt_noise[i, j]
        sd_z = math.sqrt(par[i, P_ALT_SD] ** 2 + par[i, P_DEPTH_SD] ** 2)
        dn = diag[i, D_DN] if tick > 0 else 0.0
        de = diag[i, D_DE] if tick > 0 else 0.0
        pf_step(keys[i], tick, particles[i], logw[i], dn, de, par[i, P_PF_SD], z, max(sd_z, 1e-3), has,
                par[i, P_PF_RESAMPLE], gn, ge, grid, fill, pf_mean[i], pf_cov[i])  # fmt: skip
        xi[0], xi[1] = pf_mean[i, 0], pf_mean[i, 1]
        for a in range(nx):
            Pi[0, a] = 0.0
            Pi[1, a] = 0.0
            Pi[a, 0] = 0.0
            Pi[a, 1] = 0.0
        Pi[0, 0], Pi[0, 1], Pi[1, 0], Pi[1, 1] = pf_cov[i, 0, 0], pf_cov[i, 0, 1], pf_cov[i, 1, 0], pf_cov[i, 1, 1]
    diag[i, D_NEES] = nav_nees(xi, Pi, tn, te, tpsi, tu, tv, scratch)


@_jit
def nav_predict_one(i, tick, period, u0, v0, psi0, u1, v1, psi1, x, P, diag, cfg, par, imu_err, work):
    """Propagate trial ``i``'s filter over control period ``tick`` with the IMU's increments.

    The true increments come from the truth before (``u0, v0, psi0``) and
    after (``u1, v1, psi1``) the period: rate ``wrap(psi1 - psi0) / T`` and
    specific force ``du/T - r v``, ``dv/T + r u`` at the period's means; the
    IMU adds its scale factor and the pre-drawn error of the sample.
    """
    nx = NX
    T = period
    ev = cfg[C_EV_IMU]
    if tick % ev == 0:
        j = tick // ev
        w_t = wrap_scalar(psi1 - psi0) / T
        um = 0.5 * (u0 + u1)
        vm = 0.5 * (v0 + v1)
        fx_t = (u1 - u0) / T - w_t * vm
        fy_t = (v1 - v0) / T + w_t * um
        diag[i, D_GYRO] = (1.0 + par[i, P_GSF]) * w_t + imu_err[i, j, 0]
        diag[i, D_FX] = (1.0 + par[i, P_ASF_X]) * fx_t + imu_err[i, j, 1]
        diag[i, D_FY] = (1.0 + par[i, P_ASF_Y]) * fy_t + imu_err[i, j, 2]
    w, fx, fy = diag[i, D_GYRO], diag[i, D_FX], diag[i, D_FY]
    xi = x[i]
    Pi = P[i]
    psi, u, v, bg, bx, by = xi[2], xi[3], xi[4], xi[5], xi[6], xi[7]
    r = w - bg
    c, s = np.cos(psi), np.sin(psi)
    u1 = u + T * (fx - bx + r * v)
    v1 = v + T * (fy - by - r * u)
    psi1 = psi + T * r
    c1, s1 = np.cos(psi1), np.sin(psi1)
    # position by the trapezoidal rule over the period (the velocities are known at both ends)
    dn = 0.5 * T * ((u * c - v * s) + (u1 * c1 - v1 * s1))
    de = 0.5 * T * ((u * s + v * c) + (u1 * s1 + v1 * c1))
    diag[i, D_DN], diag[i, D_DE] = dn, de
    diag[i, D_RATE] = r
    xi[0] += dn
    xi[1] += de
    xi[2] = wrap_scalar(psi1)
    xi[3] = u1
    xi[4] = v1
    xi[5] = par[i, P_BG_PHI] * bg
    xi[6] = par[i, P_BA_PHI] * bx
    xi[7] = par[i, P_BA_PHI] * by
    # F = I + T A (A at the prior); P <- F P F' + Q
    F = work[: nx * nx].reshape((nx, nx))
    FP = work[nx * nx : 2 * nx * nx].reshape((nx, nx))
    for a in range(nx):
        for b in range(nx):
            F[a, b] = 0.0
        F[a, a] = 1.0
    F[0, 2] = -T * (u * s + v * c)
    F[0, 3] = T * c
    F[0, 4] = -T * s
    F[1, 2] = T * (u * c - v * s)
    F[1, 3] = T * s
    F[1, 4] = T * c
    F[2, 5] = -T
    F[3, 4] = T * r
    F[3, 5] = -T * v
    F[3, 6] = -T
    F[4, 3] = -T * r
    F[4, 5] = T * u
    F[4, 7] = -T
    F[5, 5] = par[i, P_BG_PHI]
    F[6, 6] = par[i, P_BA_PHI]
    F[7, 7] = par[i, P_BA_PHI]
    for a in range(nx):
        for b in range(nx):
            acc = 0.0
            for k in range(nx):
                acc += F[a, k] * Pi[k, b]
            FP[a, b] = acc
    for a in range(nx):
        for b in range(a + 1):
            acc = 0.0
            for k in range(nx):
                acc += FP[a, k] * F[b, k]
            Pi[a, b] = acc
            Pi[b, a] = acc
    # IMU white noise, the scale-factor error the filter does not estimate (as white noise on this period's
    # increment) and a small floor for the rest it does not model
    sg = par[i, P_SF_SD_G] * w
    sx = par[i, P_SF_SD_A] * fx
    sy = par[i, P_SF_SD_A] * fy
    Pi[2, 2] += (par[i, P_Q_GYRO] + Q_HEAD_FLOOR) * T + sg * sg * T * T
    Pi[3, 3] += (par[i, P_Q_ACC] + Q_VEL_FLOOR) * T + sx * sx * T * T
    Pi[4, 4] += (par[i, P_Q_ACC] + Q_VEL_FLOOR) * T + sy * sy * T * T
    Pi[5, 5] += par[i, P_BG_Q]
    Pi[6, 6] += par[i, P_BA_Q]
    Pi[7, 7] += par[i, P_BA_Q]


#: Scratch floats per trial for the update and predict functions.
WORK = 2 * NX * NX + 64


@numba.njit(parallel=True, cache=True, error_model="numpy")
def nav_update_batch(tick, eta, nu, active, x, P, hist, diag, particles, logw, pf_mean, pf_cov, cfg, par, beacons,
                     gnss_noise, gnss_valid, head_noise, head_valid, dvl_noise, dvl_valid, ac_noise, ac_valid,
                     alt_noise, alt_valid, depth_noise, depth_valid, keys, gn, ge, grid, fill):  # fmt: skip
    """:func:`nav_update_one` for every active trial (the Python loop's call)."""
    work = np.empty((eta.shape[0], WORK))  # per trial, outside the parallel loop (see fused.py)
    for i in numba.prange(eta.shape[0]):
        if not active[i]:
            continue
        nav_update_one(i, tick, eta[i, 0], eta[i, 1], eta[i, 2], nu[i, 0], nu[i, 1], nu[i, 2], x, P, hist, diag,
                       particles, logw, pf_mean, pf_cov, cfg, par, beacons, gnss_noise, gnss_valid, head_noise,
                       head_valid, dvl_noise, dvl_valid, ac_noise, ac_valid, alt_noise, alt_valid, depth_noise,
                       depth_valid, keys, gn, ge, grid, fill, work[i])  # fmt: skip


@numba.njit(parallel=True, cache=True, error_model="numpy")
def nav_predict_batch(tick, period, eta0, nu0, eta1, nu1, active, x, P, diag, cfg, par, imu_err):
    """:func:`nav_predict_one` for every active trial (the Python loop's call)."""
    work = np.empty((eta0.shape[0], WORK))
    for i in numba.prange(eta0.shape[0]):
        if not active[i]:
            continue
        nav_predict_one(i, tick, period, nu0[i, 0], nu0[i, 1], eta0[i, 2], nu1[i, 0], nu1[i, 1], eta1[i, 2], x, P,
                        diag, cfg, par, imu_err, work[i])  # fmt: skip
