"""Tests for wavebench.navigation: Kalman filter steps, consistency statistics, dead reckoning."""

from __future__ import annotations

import numpy as np
import pytest
from filterpy.kalman import ExtendedKalmanFilter, KalmanFilter
from scipy.linalg import solve_discrete_are
from scipy.stats import chi2

from wavebench.core.errors import ParameterError
from wavebench.core.streams import TrialStreams
from wavebench.navigation import (
    body_to_ned_velocity,
    course_speed_to_ned,
    dead_reckon,
    dead_reckon_body,
    dead_reckon_step,
    ekf_update,
    ensemble_averaged_nees,
    gate_threshold,
    kf_predict,
    kf_update,
    nees,
    nees_bounds,
    nis,
    time_averaged_nees,
)

# ---------------------------------------------------------------------------
# helpers: planar constant-velocity model, state [north, east, v_north, v_east]


def _cv_matrices(dt: float, q: float) -> tuple[np.ndarray, np.ndarray]:
    # Continuous white-noise acceleration model discretised over dt
    # (Bar-Shalom, Li & Kirubarajan 2001, section on the CWNA model):
    # per axis F = [[1, dt], [0, 1]], Q = q [[dt^3/3, dt^2/2], [dt^2/2, dt]].
    F1 = np.array([[1.0, dt], [0.0, 1.0]])
    Q1 = q * np.array([[dt**3 / 3.0, dt**2 / 2.0], [dt**2 / 2.0, dt]])
    F = np.zeros((4, 4))
    Q = np.zeros((4, 4))
    for axis in (0, 1):
        idx = np.ix_([axis, axis + 2], [axis, axis + 2])
        F[idx] = F1
        Q[idx] = Q1
    return F, Q


H_POS = np.array([[1.0, 0.0, 0.0, 0.0], [0.0, 1.0, 0.0, 0.0]])


# ---------------------------------------------------------------------------
# linear Kalman filter against filterpy


def test_kf_matches_filterpy_step_for_step() -> None:
    # Reference library: filterpy.kalman.KalmanFilter (Labbe), predict() and
    # update() with its Joseph-form covariance; one filter per trial, each
    # with its own dt, q, R, prior and input, against one batched call.
    rng = np.random.default_rng(4021)
    n, n_steps = 4, 40
    dts = np.array([0.1, 0.5, 1.0, 2.0])
    qs = np.array([0.01, 0.2, 1.0, 0.05])
    Fs, Qs = zip(*(_cv_matrices(dt, q) for dt, q in zip(dts, qs, strict=True)), strict=True)
    F = np.stack(Fs)
    Q = np.stack(Qs)
    A = rng.normal(size=(n, 2, 2))
    R = A @ np.swapaxes(A, 1, 2) + 0.5 * np.eye(2)  # full, per-trial measurement covariance
    B = np.zeros((4, 2))
    B[2, 0] = B[3, 1] = 1.0  # input: a velocity increment
    x = rng.normal(scale=5.0, size=(n, 4))
    P = np.stack([np.diag(rng.uniform(1.0, 20.0, 4)) for _ in range(n)])
    z_all = rng.normal(scale=10.0, size=(n_steps, n, 2))
    u_all = rng.normal(scale=0.1, size=(n_steps, n, 2))
    valid_all = rng.random((n_steps, n)) > 0.2  # some trials miss some updates

    refs = []
    for i in range(n):
        kf = KalmanFilter(dim_x=4, dim_z=2)
        kf.x = x[i].reshape(4, 1).copy()
        kf.P = P[i].copy()
        kf.F = F[i]
        kf.Q = Q[i]
        kf.H = H_POS
        kf.R = R[i]
        kf.B = B
        refs.append(kf)

    for k in range(n_steps):
        x, P = kf_predict(x, P, F, Q, B=B, u=u_all[k])
        for i, kf in enumerate(refs):
            kf.predict(u=u_all[k, i].reshape(2, 1))
            np.testing.assert_allclose(x[i], kf.x[:, 0], rtol=0, atol=1e-10)
            np.testing.assert_allclose(P[i], kf.P, rtol=0, atol=1e-10)
        res = kf_update(x, P, z_all[k], H_POS, R, valid=valid_all[k])
        x, P = res.x, res.P
        for i, kf in enumerate(refs):
            if valid_all[k, i]:
                kf.update(z_all[k, i].reshape(2, 1))
                np.testing.assert_allclose(res.innovation[i], kf.y[:, 0], rtol=0, atol=1e-10)
                np.testing.assert_allclose(res.S[i], kf.S, rtol=0, atol=1e-10)
                # filterpy's mahalanobis is sqrt(y' S^-1 y)
                np.testing.assert_allclose(res.nis[i], kf.mahalanobis**2, rtol=1e-10)
                assert res.accepted[i]
            else:
                assert np.isnan(res.nis[i]) and not res.accepted[i]
            np.testing.assert_allclose(x[i], kf.x[:, 0], rtol=0, atol=1e-10)
            np.testing.assert_allclose(P[i], kf.P, rtol=0, atol=1e-10)
    assert valid_all.sum() < valid_all.size  # the skip path was exercised
    np.testing.assert_array_equal(P, np.swapaxes(P, 1, 2))  # symmetrised exactly


def test_kf_trial_alone_equals_trial_in_batch() -> None:
    # Batch property: each trial's numbers depend on its own rows only.
    rng = np.random.default_rng(77)
    n, n_steps = 6, 25
    F, Q = zip(
        *(_cv_matrices(dt, q) for dt, q in zip(rng.uniform(0.1, 2, n), rng.uniform(0.01, 1, n), strict=True)),
        strict=True,
    )
    F, Q = np.stack(F), np.stack(Q)
    R = np.stack([np.diag(rng.uniform(0.5, 4, 2)) for _ in range(n)])
    x0 = rng.normal(size=(n, 4))
    P0 = np.stack([np.eye(4) * 10.0] * n)
    z = rng.normal(size=(n_steps, n, 2))
    valid = rng.random((n_steps, n)) > 0.3

    def run(sel: list[int]) -> tuple[np.ndarray, np.ndarray]:
        x, P = x0[sel], P0[sel]
        for k in range(n_steps):
            x, P = kf_predict(x, P, F[sel], Q[sel])
            r = kf_update(x, P, z[k, sel], H_POS, R[sel], valid=valid[k, sel], gate=0.997)
            x, P = r.x, r.P
        return x, P

    xb, Pb = run(list(range(n)))
    for i in (0, 3, 5):
        xa, Pa = run([i])
        assert np.array_equal(xa[0], xb[i]) and np.array_equal(Pa[0], Pb[i])
    xr, Pr = run([5, 2])
    assert np.array_equal(xr[0], xb[5]) and np.array_equal(Pr[1], Pb[2])


# ---------------------------------------------------------------------------
# steady state of the scalar random walk


def test_scalar_random_walk_reaches_riccati_steady_state() -> None:
    # x_{k+1} = x_k + w (var Q), z_k = x_k + v (var R). With prior variance M
    # and posterior variance M R / (M + R) the prior recursion is
    #   M' = M R / (M + R) + Q.
    # At steady state M (M + R) = M R + Q (M + R)  =>  M^2 - Q M - Q R = 0, so
    #   M = (Q + sqrt(Q^2 + 4 Q R)) / 2   (positive root),  posterior = M - Q.
    # (Scalar algebraic Riccati equation; Simon 2006, steady-state Kalman
    # filtering.) Cross-checked with scipy.linalg.solve_discrete_are, whose
    # DARE with a = c = 1 is the same prior recursion.
    Qv = np.array([0.01, 1.0, 4.0, 1e-3])
    Rv = np.array([1.0, 1.0, 0.25, 10.0])
    n = Qv.size
    x = np.zeros((n, 1))
    P = np.full((n, 1, 1), 100.0)
    F = np.ones((1, 1, 1))
    Qm = Qv[:, None, None]
    Rm = Rv[:, None, None]
    z = np.random.default_rng(5).normal(size=(2000, n, 1))
    for k in range(2000):
        x, P = kf_predict(x, P, F, Qm)
        prior = P[:, 0, 0].copy()
        r = kf_update(x, P, z[k], np.ones((1, 1)), Rm)
        x, P = r.x, r.P
    M = (Qv + np.sqrt(Qv**2 + 4.0 * Qv * Rv)) / 2.0
    np.testing.assert_allclose(prior, M, rtol=1e-10)
    np.testing.assert_allclose(P[:, 0, 0], M - Qv, rtol=1e-9)
    dare = np.array([solve_discrete_are(1.0, 1.0, q, r)[0, 0] for q, r in zip(Qv, Rv, strict=True)])
    np.testing.assert_allclose(M, dare, rtol=1e-10)


# ---------------------------------------------------------------------------
# consistency: NEES / NIS against chi-square regions


def _monte_carlo(q_true: float, q_filter: float, n_runs: int, n_steps: int, seed: int) -> tuple[np.ndarray, np.ndarray]:
    """NEES (n_runs, n_steps) and NIS of a 1-D constant-velocity filter."""
    dt, r_var = 1.0, 4.0
    F = np.array([[1.0, dt], [0.0, 1.0]])
    Q1 = np.array([[dt**3 / 3.0, dt**2 / 2.0], [dt**2 / 2.0, dt]])
    H = np.array([[1.0, 0.0]])
    P0 = np.diag([25.0, 4.0])
    streams = TrialStreams(seed, n_runs)
    # Per-trial noise, drawn in one block per trial (principle 4).
    w = streams.draw("truth.process", lambda g: g.multivariate_normal(np.zeros(2), q_true * Q1, size=n_steps))
    v = streams.draw("truth.meas", lambda g: g.normal(0.0, np.sqrt(r_var), size=n_steps))
    e0 = streams.draw("truth.init", lambda g: g.multivariate_normal(np.zeros(2), P0))
    truth = e0.copy()  # filter starts at zero with covariance P0
    x = np.zeros((n_runs, 2))
    P = np.broadcast_to(P0, (n_runs, 2, 2)).copy()
    out_nees = np.empty((n_runs, n_steps))
    out_nis = np.empty((n_runs, n_steps))
    for k in range(n_steps):
        truth = truth @ F.T + w[:, k]
        x, P = kf_predict(x, P, F, q_filter * Q1)
        z = truth[:, :1] + v[:, k : k + 1]
        res = kf_update(x, P, z, H, [[r_var]])
        x, P = res.x, res.P
        out_nees[:, k] = nees(truth - x, P)
        out_nis[:, k] = res.nis
    return out_nees, out_nis


def test_ensemble_nees_inside_region_with_true_noise_and_above_when_q_understated() -> None:
    # Bar-Shalom, Li & Kirubarajan (2001), filter consistency: with N
    # independent runs, N * (ensemble-average NEES) ~ chi2(N * n_x) at every
    # step for a consistent filter; two-sided 95 % region from scipy.stats.chi2.
    # Per step the region is missed with probability 0.05. Over 100 steps the
    # number of misses would be Binomial(100, 0.05) for independent steps, and
    # P(more than 15 misses) = 4e-5 (scipy.stats.binom.sf(15, 100, 0.05));
    # consecutive steps are positively correlated, which widens that spread
    # somewhat, hence the 85 % criterion with fixed seeds. NIS time average per
    # run: innovations of a consistent filter are white, so K * mean(NIS) ~
    # chi2(K * n_z) and a run misses its region with probability 0.05; the
    # runs are independent, so more than 7 misses out of 50 (below 85 %) has
    # probability 0.003 (binom.sf(7, 50, 0.05)).
    n_runs, n_steps = 50, 100
    lo, hi = nees_bounds(2, n_runs)
    e_nees, e_nis = _monte_carlo(1.0, 1.0, n_runs, n_steps, seed=2024)
    avg = ensemble_averaged_nees(e_nees)
    inside = (avg >= lo) & (avg <= hi)
    assert inside.mean() >= 0.85, inside.mean()
    lo1, hi1 = nees_bounds(1, n_steps)
    nis_avg = time_averaged_nees(e_nis)
    assert np.mean((nis_avg >= lo1) & (nis_avg <= hi1)) >= 0.85

    # Q understated tenfold: the filter is optimistic and its NEES leaves the
    # region above once the prior has been forgotten (first 10 steps skipped).
    o_nees, o_nis = _monte_carlo(1.0, 0.1, n_runs, n_steps, seed=2024)
    avg_o = ensemble_averaged_nees(o_nees)[10:]
    assert np.mean(avg_o > hi) >= 0.85, np.mean(avg_o > hi)
    assert np.mean(time_averaged_nees(o_nis) > hi1) >= 0.85


def test_nees_bounds_against_chi_square_table() -> None:
    # Chi-square table quantiles (standard printed tables; values from memory,
    # not re-checked against a printed copy): df = 1: chi2_0.025 = 0.000982,
    # chi2_0.975 = 5.024; df = 100: 74.222 and 129.561. The df = 100 case is
    # N = 50 runs of a 2-state filter, the setting of Bar-Shalom et al. (2001)'s
    # NEES example (region about [1.5, 2.6]; also from memory).
    lo, hi = nees_bounds(1, 1)
    assert lo == pytest.approx(0.000982, abs=1e-6) and hi == pytest.approx(5.024, abs=1e-3)
    lo, hi = nees_bounds(2, 50)
    assert lo == pytest.approx(74.222 / 50, abs=1e-4) and hi == pytest.approx(129.561 / 50, abs=1e-4)
    lo99, hi99 = nees_bounds(2, 50, confidence=0.99)
    assert lo99 < lo and hi99 > hi


def test_nees_and_nis_quadratic_forms() -> None:
    # e' P^-1 e with P = L L' is |L^-1 e|^2 (definition of the NEES, Bar-Shalom
    # et al. 2001); computed here through scipy's triangular solve.
    from scipy.linalg import solve_triangular

    rng = np.random.default_rng(11)
    A = rng.normal(size=(5, 7, 3, 3))
    P = A @ np.swapaxes(A, -1, -2) + np.eye(3)
    e = rng.normal(size=(5, 7, 3))
    got = nees(e, P)
    L = np.linalg.cholesky(P)
    ref = np.array([[np.sum(solve_triangular(L[i, j], e[i, j], lower=True) ** 2) for j in range(7)] for i in range(5)])
    np.testing.assert_allclose(got, ref, rtol=1e-12)
    assert np.isnan(nis([[3.0, np.nan]], [[[9.0, 0.0], [0.0, 1.0]]])[0])  # no measurement -> NaN
    np.testing.assert_allclose(nis([[3.0, 0.0]], [[[9.0, 0.0], [0.0, 1.0]]]), [1.0])


# ---------------------------------------------------------------------------
# gating


def test_gate_rejects_outlier_and_accepts_normal_measurement() -> None:
    # Validation gate (Bar-Shalom et al. 2001): accept if NIS <= chi2.ppf(p, m).
    # For m = 2 the chi-square quantile has the closed form -2 ln(1 - p).
    assert gate_threshold(0.997, 2) == pytest.approx(-2.0 * np.log(0.003), rel=1e-12)
    g1 = chi2.ppf(0.997, 1)
    # prior x = 0, P = 1, R = 1 -> S = 2; z = y gives NIS = y^2 / 2
    ys = np.array([1.0, 10.0 * np.sqrt(2.0), np.sqrt(2.0 * g1 * 0.999), np.sqrt(2.0 * g1 * 1.001), 0.0])
    n = ys.size
    res = kf_update(np.zeros((n, 1)), np.ones((n, 1, 1)), ys[:, None], [[1.0]], [[1.0]], gate=0.997)
    np.testing.assert_array_equal(res.rejected, [False, True, False, True, False])
    np.testing.assert_array_equal(res.accepted, ~res.rejected)
    np.testing.assert_allclose(res.nis, ys**2 / 2.0, rtol=1e-14)
    # the outlier leaves the prior untouched; the normal one moves x halfway (K = 1/2)
    assert res.x[1, 0] == 0.0 and res.P[1, 0, 0] == 1.0
    assert res.x[0, 0] == pytest.approx(0.5) and res.P[0, 0, 0] == pytest.approx(0.5)
    # the innovation of the rejected measurement is still reported
    assert res.innovation[1, 0] == pytest.approx(10.0 * np.sqrt(2.0))


# ---------------------------------------------------------------------------
# extended Kalman filter


def _range_bearing(x: np.ndarray, beacon: np.ndarray) -> np.ndarray:
    d = beacon[None, :] - x[:, :2]
    return np.stack([np.hypot(d[:, 0], d[:, 1]), np.arctan2(d[:, 1], d[:, 0])], axis=1)


def _range_bearing_jac(x: np.ndarray, beacon: np.ndarray) -> np.ndarray:
    d = beacon[None, :] - x[:, :2]
    r2 = d[:, 0] ** 2 + d[:, 1] ** 2
    r = np.sqrt(r2)
    J = np.zeros((x.shape[0], 2, x.shape[1]))
    J[:, 0, 0] = -d[:, 0] / r
    J[:, 0, 1] = -d[:, 1] / r
    J[:, 1, 0] = d[:, 1] / r2
    J[:, 1, 1] = -d[:, 0] / r2
    return J


def test_ekf_matches_filterpy_range_bearing_with_wrap() -> None:
    # Reference library: filterpy.kalman.ExtendedKalmanFilter.update with a
    # residual function that wraps the bearing. The craft sits north of the
    # beacon, so predicted and measured bearings straddle +-pi.
    beacon = np.array([0.0, 0.0])
    x = np.array([[100.0, 0.5, 1.0, 0.0], [100.0, -0.5, 0.0, 1.0], [40.0, 30.0, 0.0, 0.0]])
    n = x.shape[0]
    P = np.stack([np.diag([4.0, 9.0, 1.0, 1.0]), np.diag([25.0, 1.0, 2.0, 2.0]), np.diag([1.0, 1.0, 1.0, 1.0])])
    P[2, 0, 1] = P[2, 1, 0] = 0.3
    R = np.diag([1.0, np.deg2rad(1.0) ** 2])
    z = np.array([[101.0, np.pi - 0.004], [99.0, -np.pi + 0.006], [50.5, np.arctan2(-30.0, -40.0) + 0.01]])

    def wrap(a: float) -> float:
        return (a + np.pi) % (2.0 * np.pi) - np.pi

    def residual(a: np.ndarray, b: np.ndarray) -> np.ndarray:
        y = a - b
        y[1] = wrap(y[1])
        return y

    res = ekf_update(
        x, P, z, lambda s: _range_bearing(s, beacon), lambda s: _range_bearing_jac(s, beacon), R, angle_residuals=[1]
    )
    for i in range(n):
        ekf = ExtendedKalmanFilter(dim_x=4, dim_z=2)
        ekf.x = x[i].copy()
        ekf.P = P[i].copy()
        ekf.update(
            z[i],
            lambda s: _range_bearing_jac(s[None, :], beacon)[0],
            lambda s: _range_bearing(s[None, :], beacon)[0],
            R=R,
            residual=residual,
        )
        np.testing.assert_allclose(res.x[i], ekf.x, rtol=0, atol=1e-10)
        np.testing.assert_allclose(res.P[i], ekf.P, rtol=0, atol=1e-10)
        np.testing.assert_allclose(res.innovation[i], ekf.y, rtol=0, atol=1e-12)
    # the wrapped bearing innovations are small, not ~2 pi
    assert np.all(np.abs(res.innovation[:, 1]) < 0.05)


def test_ekf_heading_wrap_innovation() -> None:
    # A heading of 179 deg measured as -179 deg is 2 deg ahead, not 358 deg behind.
    h = lambda s: s[:, :1]  # noqa: E731
    jac = lambda s: np.array([[1.0, 0.0]])  # noqa: E731
    x = np.array([[np.deg2rad(179.0), 0.0]])
    P = np.diag([1e-2, 1e-4])[None]
    z = np.array([[np.deg2rad(-179.0)]])
    wrapped = ekf_update(x, P, z, h, jac, [[1e-2]], angle_residuals=[0])
    assert wrapped.innovation[0, 0] == pytest.approx(np.deg2rad(2.0), abs=1e-12)
    assert wrapped.x[0, 0] == pytest.approx(np.deg2rad(180.0), abs=1e-12)  # K = 1/2
    raw = ekf_update(x, P, z, h, jac, [[1e-2]])
    assert raw.innovation[0, 0] == pytest.approx(np.deg2rad(-358.0), abs=1e-12)


# ---------------------------------------------------------------------------
# dead reckoning


def _turn(n_steps: int, dt: float) -> tuple[np.ndarray, ...]:
    t = np.arange(n_steps) * dt
    u = np.array([2.0, 1.0, 3.0])[:, None]
    v = np.array([0.0, 0.3, -0.5])[:, None]
    r = np.array([0.02, -0.05, 0.1])[:, None]
    psi0 = np.array([0.3, 3.0, -2.0])[:, None]
    psi = psi0 + r * t  # constant turn rate; heading crosses +-pi for trial 1
    # Closed form of eta_dot = R(psi) nu with constant u, v, r (Fossen 2021,
    # planar kinematics), integrated analytically:
    #   N = (u/r)(sin psi - sin psi0) + (v/r)(cos psi - cos psi0)
    #   E = -(u/r)(cos psi - cos psi0) + (v/r)(sin psi - sin psi0)
    north = (u / r) * (np.sin(psi) - np.sin(psi0)) + (v / r) * (np.cos(psi) - np.cos(psi0))
    east = -(u / r) * (np.cos(psi) - np.cos(psi0)) + (v / r) * (np.sin(psi) - np.sin(psi0))
    exact = np.stack([north, east], axis=-1) + np.array([10.0, -5.0])
    return t, u, v, r, psi, exact


def test_dead_reckoning_constant_turn_against_circle() -> None:
    dt, duration = 1.0, 120.0
    n_steps = int(duration / dt) + 1
    t, u, v, r, psi, exact = _turn(n_steps, dt)
    start = np.tile([10.0, -5.0], (3, 1))
    shape = psi.shape
    est = dead_reckon_body(start, psi, np.broadcast_to(u, shape), np.broadcast_to(v, shape), dt)
    err = np.abs(est - exact).max(axis=(1, 2))
    # Composite trapezoidal rule error bound (Burden & Faires): |E| <= T h^2 max|f''| / 12,
    # with |d^2/dt^2 of the velocity| = sqrt(u^2 + v^2) r^2 here.
    speed = np.hypot(u, v)[:, 0]
    bound_trap = duration * dt**2 * speed * r[:, 0] ** 2 / 12.0
    assert np.all(err <= bound_trap), (err, bound_trap)
    # Second order: halving dt quarters the error (ratio 4 within 5 %).
    t2, *_, psi2, exact2 = _turn(2 * n_steps - 1, dt / 2)
    est2 = dead_reckon_body(start, psi2, np.broadcast_to(u, psi2.shape), np.broadcast_to(v, psi2.shape), dt / 2)
    err2 = np.abs(est2 - exact2).max(axis=(1, 2))
    np.testing.assert_allclose(err / err2, 4.0, rtol=0.05)
    # Forward-Euler (rectangle) rule: |E| <= T h max|f'| / 2 with |f'| = speed |r|.
    est_e = dead_reckon_body(start, psi, np.broadcast_to(u, shape), np.broadcast_to(v, shape), dt, rule="euler")
    err_e = np.abs(est_e - exact).max(axis=(1, 2))
    assert np.all(err_e <= duration * dt * speed * np.abs(r[:, 0]) / 2.0)
    assert np.all(err_e > err)


def test_dead_reckoning_forms_agree() -> None:
    # course/speed with zero sway equals heading/surge; stepping equals the batch.
    rng = np.random.default_rng(3)
    psi = rng.uniform(-np.pi, np.pi, (4, 30))
    U = rng.uniform(0.0, 3.0, (4, 30))
    np.testing.assert_allclose(course_speed_to_ned(psi, U), body_to_ned_velocity(psi, U, 0.0), atol=1e-15)
    vel = course_speed_to_ned(psi, U)
    dts = np.array([0.1, 0.2, 0.5, 1.0])
    start = rng.normal(size=(4, 2))
    batch = dead_reckon(start, vel, dts)
    p = start
    for k in range(1, 30):
        p = dead_reckon_step(p, vel[:, k - 1], vel[:, k], dts)
        assert np.array_equal(p, batch[:, k])


# ---------------------------------------------------------------------------
# bad inputs


def _fields(fn, *args, **kwargs) -> str:  # type: ignore[no-untyped-def]
    with pytest.raises(ParameterError) as info:
        fn(*args, **kwargs)
    return info.value.field


def test_bad_inputs_name_the_field() -> None:
    x = np.zeros((3, 2))
    P = np.broadcast_to(np.eye(2), (3, 2, 2))
    F = np.eye(2)
    H = np.array([[1.0, 0.0]])
    z = np.zeros((3, 1))
    assert _fields(kf_predict, np.zeros(2), P, F, F) == "x"
    assert _fields(kf_predict, x, np.zeros((2, 2, 2)), F, F) == "P"
    assert _fields(kf_predict, x, P, np.eye(3), F) == "F"
    assert _fields(kf_predict, x, P, F, np.diag([1.0, -1.0])) == "Q"
    assert _fields(kf_predict, x, P, F, np.array([[1.0, 0.5], [0.0, 1.0]])) == "Q"  # not symmetric
    assert _fields(kf_predict, x, P, F, F, B=np.eye(2)) == "u"
    assert _fields(kf_update, x, P, z, H, [[-1.0]]) == "R"
    assert _fields(kf_update, x, P, z, np.eye(2), [[1.0]]) == "H"
    assert _fields(kf_update, x, P, np.zeros((2, 1)), H, [[1.0]]) == "z"
    assert _fields(kf_update, x, P, np.full((3, 1), np.nan), H, [[1.0]]) == "z"
    assert _fields(kf_update, x, P, z, H, [[1.0]], valid=[1, 0, 1]) == "valid"
    assert _fields(kf_update, x, P, z, H, [[1.0]], gate=1.5) == "gate"
    assert _fields(kf_update, x, P, z, H, [[1.0]], gate=0.0) == "gate"
    assert _fields(kf_update, x, -P, z, H, [[1.0]]) == "P"
    assert _fields(ekf_update, x, P, z, lambda s: s, lambda s: H, [[1.0]]) == "h_fn(x)"
    assert _fields(ekf_update, x, P, z, lambda s: s[:, :1], lambda s: F, [[1.0]]) == "H_jac(x)"
    assert (
        _fields(ekf_update, x, P, z, lambda s: s[:, :1], lambda s: H, [[1.0]], angle_residuals=[1]) == "angle_residuals"
    )
    assert _fields(nees_bounds, 2, 10, confidence=1.2) == "confidence"
    assert _fields(nees_bounds, 0, 10) == "dim"
    assert _fields(nees_bounds, 2, 2.5) == "n_runs"
    assert _fields(nees, np.zeros((3, 2)), np.zeros((3, 3, 3))) == "P"
    assert _fields(dead_reckon, np.zeros((3, 2)), np.zeros((3, 5, 2)), 0.0) == "dt"
    assert _fields(dead_reckon, np.zeros((3, 2)), np.zeros((3, 5, 2)), 1.0, rule="rk4") == "rule"
    assert _fields(dead_reckon, np.zeros((3, 2)), np.zeros((2, 5, 2)), 1.0) == "velocity_ne"
    # invalid trials may carry NaN measurements; no error, no update there
    res = kf_update(x, P, np.array([[np.nan], [1.0], [np.nan]]), H, [[1.0]], valid=np.array([False, True, False]))
    assert np.array_equal(res.x[[0, 2]], x[[0, 2]]) and res.x[1, 0] == pytest.approx(0.5)
