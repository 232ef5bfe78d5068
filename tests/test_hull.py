"""Tests of the 3-DOF hull model (wavebench.craft.hull) and RK4 (wavebench.craft.integrate).

Sources of the checked properties:
* Fossen, Handbook of Marine Craft Hydrodynamics and Motion Control, 2nd ed.
  (2021): M = M^T > 0; C(nu) skew-symmetric so nu^T C(nu) nu = 0; energy
  balance dE/dt = nu_r^T tau - nu_r^T D nu_r; linear + quadratic damping; the
  relative-velocity model for an irrotational constant current.
* Hairer, Nørsett & Wanner, Solving ODEs I, sec. II.1: classical RK4 has
  global error O(dt^4).
* scipy.spatial.transform.Rotation (reference library) for the kinematics,
  numpy.linalg.solve / eigvalsh for the matrix algebra.
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest
from scipy.spatial.transform import Rotation

from wavebench.core.errors import ParameterError
from wavebench.craft.catalogue import DEMO_CRAFT_NAMES, demo_craft
from wavebench.craft.hull import (
    HullParams,
    coriolis_added,
    coriolis_rb,
    damping_matrix,
    derivative,
    hull_coefficients,
    kinetic_energy,
    mass_matrix,
    relative_velocity,
)
from wavebench.craft.integrate import hull_state_derivative, rk4_step, simulate_hull

N_TRIALS = 20


def dispersed_hull(
    rng: np.random.Generator, n: int = N_TRIALS, base: str = "Tholepin", couple: bool = True
) -> HullParams:
    """Per-trial dispersed hull around a demo hull (lognormal factors, random couplings).

    Test data only: the properties checked hold for any admissible hull.
    """
    h = demo_craft(base).hull
    fields = {}
    for f in dataclasses.fields(h):
        v = getattr(h, f.name)
        fields[f.name] = v * np.exp(0.2 * rng.standard_normal(n))
    L = h.length_m
    fields["xg_m"] = 0.05 * L * rng.standard_normal(n)
    fields["izz_kgm2"] = fields["izz_kgm2"] + fields["mass_kg"] * fields["xg_m"] ** 2
    if couple:
        scale_a = 0.05 * h.mass_kg * L
        fields["y_rdot"] = scale_a * rng.standard_normal(n)
        fields["n_vdot"] = scale_a * rng.standard_normal(n)
        fields["y_r"] = 0.05 * abs(h.y_v) * L * rng.standard_normal(n)
        fields["n_v"] = 0.05 * abs(h.y_v) * L * rng.standard_normal(n)
    return HullParams(**fields)


def trial(params: HullParams, i: int) -> HullParams:
    """Trial i of a dispersed hull as a hull with scalar fields."""
    return dataclasses.replace(
        params,
        **{
            f.name: float(getattr(params, f.name)[i])
            for f in dataclasses.fields(params)
            if isinstance(getattr(params, f.name), np.ndarray)
        },
    )


def hulls_under_test() -> list[HullParams]:
    rng = np.random.default_rng(20240611)
    return [demo_craft(n).hull for n in DEMO_CRAFT_NAMES] + [
        dispersed_hull(rng, base="Tholepin"),
        dispersed_hull(rng, base="Dulse"),
    ]


# --- M, C, D structure ---------------------------------------------------------------


@pytest.mark.parametrize("hull", hulls_under_test())
def test_mass_matrix_symmetric_positive_definite(hull: HullParams) -> None:
    m = mass_matrix(hull)
    # Fossen (2021) ch. 6: M = M_RB + M_A = M^T > 0 (symmetric added-mass convention)
    np.testing.assert_array_equal(m, np.swapaxes(m, -1, -2))
    assert np.all(np.linalg.eigvalsh(m) > 0.0)
    # the precomputed closed-form inverse agrees with numpy.linalg.inv
    c = hull_coefficients(hull)
    inv = np.linalg.inv(m)
    np.testing.assert_allclose(np.broadcast_to(c.i22, inv.shape[:1]), inv[:, 1, 1], rtol=1e-12)
    np.testing.assert_allclose(np.broadcast_to(c.i23, inv.shape[:1]), inv[:, 1, 2], rtol=1e-12)
    np.testing.assert_allclose(np.broadcast_to(c.i33, inv.shape[:1]), inv[:, 2, 2], rtol=1e-12)


@pytest.mark.parametrize("hull", hulls_under_test())
def test_coriolis_matrices_skew_symmetric(hull: HullParams) -> None:
    rng = np.random.default_rng(7)
    nu = rng.normal(scale=[2.0, 0.5, 0.3], size=(N_TRIALS, 3))
    for cmat in (coriolis_rb(hull, nu), coriolis_added(hull, nu)):
        # Fossen (2021) ch. 6: C(nu) = -C(nu)^T, hence nu^T C(nu) nu = 0
        np.testing.assert_array_equal(cmat, -np.swapaxes(cmat, -1, -2))
        power = np.einsum("ni,nij,nj->n", nu, cmat, nu)
        scale = np.einsum("ni,nij,nj->n", np.abs(nu), np.abs(cmat), np.abs(nu))
        assert np.all(np.abs(power) <= 1e-14 * scale)


@pytest.mark.parametrize("hull", hulls_under_test())
def test_derivative_equals_matrix_form_with_current(hull: HullParams) -> None:
    rng = np.random.default_rng(11)
    eta = np.column_stack([rng.normal(size=(N_TRIALS, 2)), rng.uniform(-4, 4, N_TRIALS)])
    nu = rng.normal(scale=[2.0, 0.5, 0.3], size=(N_TRIALS, 3))
    tau = rng.normal(scale=[1e3, 5e2, 1e3], size=(N_TRIALS, 3))
    cur = rng.normal(scale=0.5, size=(N_TRIALS, 2))
    eta_dot, nu_dot = derivative(hull, eta, nu, tau, cur)

    # kinematics eta_dot = R(psi) nu, rotation from scipy
    rot = Rotation.from_euler("z", eta[:, 2:3])
    v_ned = rot.apply(np.column_stack([nu[:, 0], nu[:, 1], np.zeros(N_TRIALS)]))
    np.testing.assert_allclose(eta_dot[:, :2], v_ned[:, :2], rtol=1e-12, atol=1e-14)
    np.testing.assert_array_equal(eta_dot[:, 2], nu[:, 2])

    # Fossen (2021) ch. 10: nu_c = R^T [Vc, 0]; M nu_r_dot + C(nu_r) nu_r + D(nu_r) nu_r = tau;
    # nu_c_dot = -S(r) nu_c for a constant NED current
    nu_c = rot.inv().apply(np.column_stack([cur, np.zeros(N_TRIALS)]))
    nu_c[:, 2] = 0.0
    nu_r = nu - nu_c
    np.testing.assert_allclose(relative_velocity(eta, nu, cur), nu_r, rtol=1e-12, atol=1e-14)
    m = np.broadcast_to(mass_matrix(hull), (N_TRIALS, 3, 3))
    c_total = coriolis_rb(hull, nu_r) + coriolis_added(hull, nu_r)
    d = damping_matrix(hull, nu_r)
    rhs = tau - np.einsum("nij,nj->ni", c_total + d, nu_r)
    nu_r_dot = np.linalg.solve(m, rhs[..., None])[..., 0]
    r = nu[:, 2]
    nu_c_dot = np.column_stack([r * nu_c[:, 1], -r * nu_c[:, 0], np.zeros(N_TRIALS)])
    np.testing.assert_allclose(nu_dot, nu_r_dot + nu_c_dot, rtol=1e-9, atol=1e-12)


def test_relative_velocity_model_equals_ground_frame_rigid_body_form() -> None:
    # Fossen (2021) ch. 10 (irrotational constant current): M_RB nu_dot + C_RB(nu) nu
    # = M_RB nu_r_dot + C_RB(nu_r) nu_r, so the model can be written with the rigid-body
    # terms in ground velocity: M_RB nu_dot + C_RB(nu) nu + M_A nu_r_dot + C_A nu_r + D nu_r = tau
    rng = np.random.default_rng(3)
    hull = dispersed_hull(rng)
    eta = np.column_stack([np.zeros((N_TRIALS, 2)), rng.uniform(-4, 4, N_TRIALS)])
    nu = rng.normal(scale=[2.0, 0.5, 0.3], size=(N_TRIALS, 3))
    tau = rng.normal(scale=[1e3, 5e2, 1e3], size=(N_TRIALS, 3))
    cur = rng.normal(scale=0.5, size=(N_TRIALS, 2))
    _, nu_dot = derivative(hull, eta, nu, tau, cur)
    nu_r = relative_velocity(eta, nu, cur)
    r = nu[:, 2]
    nu_c = nu - nu_r
    nu_r_dot = nu_dot - np.column_stack([r * nu_c[:, 1], -r * nu_c[:, 0], np.zeros(N_TRIALS)])
    m = hull.mass_kg
    m_rb = np.zeros((N_TRIALS, 3, 3))
    m_rb[:, 0, 0] = m
    m_rb[:, 1, 1] = m
    m_rb[:, 1, 2] = m_rb[:, 2, 1] = m * hull.xg_m
    m_rb[:, 2, 2] = hull.izz_kgm2
    m_a = np.broadcast_to(mass_matrix(hull), (N_TRIALS, 3, 3)) - m_rb
    lhs = (
        np.einsum("nij,nj->ni", m_rb, nu_dot)
        + np.einsum("nij,nj->ni", coriolis_rb(hull, nu), nu)
        + np.einsum("nij,nj->ni", m_a, nu_r_dot)
        + np.einsum("nij,nj->ni", coriolis_added(hull, nu_r) + damping_matrix(hull, nu_r), nu_r)
    )
    np.testing.assert_allclose(lhs, tau, rtol=1e-9, atol=1e-9 * np.abs(tau).max())


@pytest.mark.parametrize("hull", hulls_under_test())
def test_munk_moment_in_pure_translation(hull: HullParams) -> None:
    # Munk moment, written out by hand (not from the code's matrices). For a hull moving
    # in pure translation through still water, nu = nu_r = (u, v, 0):
    # * Fossen (2021) ch. 6, 3-DOF C_A(nu_r) (skew-symmetric form): its yaw row is
    #   [-Y_vdot v_r - Ybar r, X_udot u_r, 0], so the yaw component of C_A nu_r at r = 0 is
    #   -Y_vdot v u + X_udot u v = (X_udot - Y_vdot) u v, the Munk moment;
    # * Fossen (2021) ch. 6, 3-DOF C_RB(nu): yaw row [m(x_g r + v), -m u, 0], so the yaw
    #   component of C_RB nu is m x_g r u, which is 0 at r = 0 whatever x_g.
    # The same moment follows from Kirchhoff's equations for a body in an ideal fluid with
    # added-mass energy T_A = (A11 u^2 + A22 v^2) / 2, A11 = -X_udot, A22 = -Y_vdot: the
    # fluid moment is -(U x dT_A/dU)_z = (A11 - A22) u v, i.e. minus the term above
    # (the Munk moment; Newman, Marine Hydrodynamics, MIT Press 1977, ch. 4 — chapter
    # from memory, section not re-checked). For a slender hull (A22 > A11) it turns the
    # hull broadside to its velocity: it is destabilising.
    rng = np.random.default_rng(31)
    n = N_TRIALS
    u = rng.uniform(0.5, 4.0, n)
    v = rng.uniform(-1.0, 1.0, n)
    nu = np.column_stack([u, v, np.zeros(n)])
    munk = (hull.x_udot - hull.y_vdot) * u * v  # Fossen's expression, by hand
    a11, a22 = -np.asarray(hull.x_udot), -np.asarray(hull.y_vdot)
    p_fluid = np.column_stack(np.broadcast_arrays(a11 * u, a22 * v, np.zeros(n)))
    kirchhoff_moment = -np.cross(nu, p_fluid)[:, 2]  # fluid moment on the hull
    np.testing.assert_allclose(kirchhoff_moment, -munk, rtol=1e-12)

    # the matrix functions give the same yaw terms
    yaw_a = np.einsum("nj,nj->n", coriolis_added(hull, nu)[:, 2, :], nu)
    yaw_rb = np.einsum("nj,nj->n", coriolis_rb(hull, nu)[:, 2, :], nu)
    np.testing.assert_allclose(yaw_a + yaw_rb, munk, rtol=1e-12, atol=1e-12 * np.abs(munk).max())
    # m v u - m u v: zero up to rounding of the two products
    np.testing.assert_allclose(yaw_rb, 0.0, atol=1e-14 * np.max(np.asarray(hull.mass_kg) * np.abs(u * v)))

    # and so does the column form of derivative(): with tau = 0 and r = 0, the sway and
    # yaw equations of M nu_dot + C nu + D nu = 0 (Fossen 2021 ch. 6), with M's entries
    # built here from the hull parameters, are
    #   (m - Y_vdot) v_dot + (m x_g - Ybar) r_dot = (Y_v + Y_|v|v |v|) v
    #   (m x_g - Ybar) v_dot + (I_z - N_rdot) r_dot = -(X_udot - Y_vdot) u v + N_v v
    m = np.asarray(hull.mass_kg)
    ybar = 0.5 * (np.asarray(hull.y_rdot) + np.asarray(hull.n_vdot))
    m22 = m - hull.y_vdot
    m23 = m * hull.xg_m - ybar
    m33 = hull.izz_kgm2 - hull.n_rdot
    f_sway = (hull.y_v + hull.y_vv * np.abs(v)) * v
    f_yaw = -munk + hull.n_v * v
    det = m22 * m33 - m23 * m23
    v_dot = (m33 * f_sway - m23 * f_yaw) / det
    r_dot = (m22 * f_yaw - m23 * f_sway) / det
    _, nu_dot = derivative(hull, np.zeros((n, 3)), nu, np.zeros((n, 3)), None)
    np.testing.assert_allclose(nu_dot[:, 1], v_dot, rtol=1e-10, atol=1e-12)
    np.testing.assert_allclose(nu_dot[:, 2], r_dot, rtol=1e-10, atol=1e-12)
    # sign of the Munk moment for slender hulls: with A22 > A11 and u v > 0 the fluid
    # moment is negative (bow turns away from the velocity, towards broadside)
    slender = (a22 > a11) & (u * v > 0)
    assert np.all(kirchhoff_moment[np.broadcast_to(slender, (n,))] < 0.0)


def test_kinetic_energy_is_half_nu_m_nu() -> None:
    rng = np.random.default_rng(5)
    hull = dispersed_hull(rng)
    nu = rng.normal(size=(N_TRIALS, 3))
    expected = 0.5 * np.einsum("ni,nij,nj->n", nu, mass_matrix(hull), nu)
    np.testing.assert_allclose(kinetic_energy(hull, nu), expected, rtol=1e-13)


# --- energy along RK4 trajectories ------------------------------------------------------


def _energies(hull: HullParams, nu0: np.ndarray, dt: float, n_steps: int) -> np.ndarray:
    traj = simulate_hull(hull, np.zeros(3), nu0, np.zeros(3), None, dt, n_steps)
    return np.stack([kinetic_energy(hull, traj.nu[:, k]) for k in range(traj.t.size)], axis=1)


@pytest.mark.parametrize("base", DEMO_CRAFT_NAMES)
def test_energy_never_increases_without_input(base: str) -> None:
    # Fossen (2021): dE/dt = -nu_r^T D(nu_r) nu_r <= 0 with tau = 0, no current and a
    # dissipative D (symmetric part of D_L positive semidefinite; here Y_r = N_v = 0)
    rng = np.random.default_rng(17)
    hull = dispersed_hull(rng, base=base, couple=False)
    nu0 = rng.normal(scale=[2.0, 0.8, 0.5], size=(N_TRIALS, 3))
    e = _energies(hull, nu0, dt=0.02, n_steps=1500)
    # tolerance for RK4's local error: 1e-10 of the initial energy per step
    assert np.all(np.diff(e, axis=1) <= 1e-10 * e[:, :1])
    assert np.all(e[:, -1] < 0.5 * e[:, 0])  # and the damping does remove energy


def test_energy_conserved_without_damping_to_integrator_order() -> None:
    # Fossen (2021): with D = 0 and tau = 0, dE/dt = nu^T C(nu) nu = 0 (skew-symmetric C),
    # so E is conserved and any drift is RK4 truncation error. RK4's global error is
    # O(dt^4) (Hairer et al., sec. II.1), so the drift over a fixed time falls at least
    # ~16x per halving of dt; for purely oscillatory linear modes it falls ~32x, since the
    # RK4 stability polynomial R(z) = 1 + z + z^2/2 + z^3/6 + z^4/24 gives
    # |R(i w dt)|^2 = 1 - (w dt)^6 / 72 + O(dt^8) per step (algebra on R). The observed
    # ratio must lie between those two orders (with 15 % margin).
    base = demo_craft("Tholepin").hull
    undamped = dataclasses.replace(
        base, x_u=0.0, y_v=0.0, y_r=0.0, n_v=0.0, n_r=0.0, x_uu=0.0, y_vv=0.0, n_rr=0.0,
        y_rdot=-800.0, n_vdot=-800.0,
    )  # fmt: skip
    nu0 = np.array([[3.0, 0.6, 0.4], [-1.0, 1.5, -0.8]])
    t_end = 20.0
    drifts = []
    for dt in (0.1, 0.05, 0.025):
        e = _energies(undamped, nu0, dt, round(t_end / dt))
        drifts.append(np.abs(e[:, -1] - e[:, 0]) / e[:, 0])
    drifts = np.array(drifts)
    # conserved to integrator tolerance: < 1e-7 relative over 20 s at dt = 0.05 s
    assert np.all(drifts[1] < 1e-7)
    ratios = drifts[:-1] / drifts[1:]
    assert np.all((ratios > 16.0 * 0.85) & (ratios < 32.0 * 1.15)), ratios


# --- analytic steady states and convergence ---------------------------------------------


@pytest.mark.parametrize("base", DEMO_CRAFT_NAMES)
def test_steady_surge_speed_is_root_of_damping_balance(base: str) -> None:
    rng = np.random.default_rng(23)
    hull = dispersed_hull(rng, n=5, base=base)
    thrust = np.abs(hull.x_u) * 1.5 + np.abs(hull.x_uu) * 2.0  # per-trial constant thrust [N]
    tau = np.column_stack([thrust, np.zeros(5), np.zeros(5)])
    traj = simulate_hull(hull, np.zeros(3), np.zeros(3), tau, None, 0.2, 2000, record_every=2000)
    # Fossen's damping model, surge: X_u u + X_|u|u u|u| + T = 0 -> quadratic formula, u > 0
    xu, xuu = hull.x_u, hull.x_uu
    u_exact = (-xu - np.sqrt(xu * xu - 4.0 * xuu * thrust)) / (2.0 * xuu)
    np.testing.assert_allclose(traj.nu[:, -1, 0], u_exact, rtol=1e-6)
    np.testing.assert_allclose(traj.nu[:, -1, 1:], 0.0, atol=1e-9)


def test_velocity_over_ground_tends_to_current() -> None:
    # Fossen (2021) ch. 10: damping acts on nu_r = nu - nu_c, so with tau = 0 the craft
    # drifts with the water: R(psi) nu -> [Vc_n, Vc_e], nu_r -> 0
    rng = np.random.default_rng(29)
    hull = dispersed_hull(rng, n=6, base="Dulse", couple=False)
    cur = rng.normal(scale=0.6, size=(6, 2))
    eta0 = np.column_stack([np.zeros((6, 2)), rng.uniform(-3, 3, 6)])
    nu0 = rng.normal(scale=[1.0, 0.3, 0.2], size=(6, 3))
    traj = simulate_hull(hull, eta0, nu0, np.zeros(3), cur, 0.1, 4000, record_every=4000)
    psi = traj.eta[:, -1, 2]
    u, v = traj.nu[:, -1, 0], traj.nu[:, -1, 1]
    vn = np.cos(psi) * u - np.sin(psi) * v
    ve = np.sin(psi) * u + np.cos(psi) * v
    np.testing.assert_allclose(np.column_stack([vn, ve]), cur, atol=1e-6)
    np.testing.assert_allclose(traj.nu[:, -1, 2], 0.0, atol=1e-6)


def test_steady_speed_through_water_independent_of_current() -> None:
    # Relative-velocity model (Fossen 2021, ch. 10): under a constant thrust the craft reaches
    # the still-water steady speed relative to the water; over ground the current is added
    hull = demo_craft("Tholepin").hull
    thrust = 3000.0
    xu, xuu = hull.x_u, hull.x_uu
    u_exact = (-xu - np.sqrt(xu * xu - 4.0 * xuu * thrust)) / (2.0 * xuu)
    psi0 = np.array([0.0, 0.7, 2.5, -2.0])
    cur = np.array([[0.5, 0.0], [0.3, -0.4], [-0.2, 0.6], [0.0, 0.0]])
    eta0 = np.column_stack([np.zeros((4, 2)), psi0])
    # start drifting with the water (nu_r = 0), so no sway relative to the water arises
    nu0 = np.column_stack(
        [np.cos(psi0) * cur[:, 0] + np.sin(psi0) * cur[:, 1],
         -np.sin(psi0) * cur[:, 0] + np.cos(psi0) * cur[:, 1], np.zeros(4)]
    )  # fmt: skip
    traj = simulate_hull(hull, eta0, nu0, [thrust, 0.0, 0.0], cur, 0.1, 3000, record_every=3000)
    nu_r = relative_velocity(traj.eta[:, -1], traj.nu[:, -1], cur)
    np.testing.assert_allclose(nu_r[:, 0], u_exact, rtol=1e-6)
    np.testing.assert_allclose(nu_r[:, 1:], 0.0, atol=1e-9)
    np.testing.assert_allclose(traj.eta[:, -1, 2], psi0, atol=1e-12)  # heading kept


def test_rk4_global_error_is_fourth_order_on_linear_surge() -> None:
    # m11 u_dot = X_u u has u(t) = u0 exp(X_u t / m11); RK4 global error O(dt^4)
    # (Hairer, Nørsett & Wanner, sec. II.1): halving dt divides the error by ~16
    hull = dataclasses.replace(demo_craft("Dulse").hull, x_uu=0.0, x_u=-60.0)
    c = hull_coefficients(hull)
    t_end = 4.0
    u0 = 2.0
    exact = u0 * np.exp(hull.x_u * t_end / c.m11)
    errors = []
    for dt in (0.2, 0.1, 0.05, 0.025):
        x = np.array([[0.0, 0.0, 0.0, u0, 0.0, 0.0]])
        for k in range(round(t_end / dt)):
            x = rk4_step(hull_state_derivative, k * dt, x, dt, c, np.zeros(3), None)
        errors.append(abs(x[0, 3] - exact))
    ratios = np.array(errors[:-1]) / np.array(errors[1:])
    np.testing.assert_allclose(ratios, 16.0, rtol=0.06)


# --- batch slicing ---------------------------------------------------------------------


def test_trial_alone_equals_trial_in_batch_bit_for_bit() -> None:
    rng = np.random.default_rng(31)
    hull = dispersed_hull(rng, n=N_TRIALS)
    eta0 = np.column_stack([rng.normal(size=(N_TRIALS, 2)), rng.uniform(-3, 3, N_TRIALS)])
    nu0 = rng.normal(scale=[1.0, 0.3, 0.2], size=(N_TRIALS, 3))
    cur = rng.normal(scale=0.4, size=(N_TRIALS, 2))

    def pilot(t: float, eta: np.ndarray, nu: np.ndarray) -> np.ndarray:
        # a state-dependent force so that every trial follows its own path
        return np.column_stack(
            [2000.0 - 300.0 * nu[:, 0], 50.0 * np.sin(0.3 * t) - 100.0 * nu[:, 1],
             -3000.0 * np.sin(eta[:, 2] - 0.5) - 2000.0 * nu[:, 2]]
        )  # fmt: skip

    batch = simulate_hull(hull, eta0, nu0, pilot, cur, 0.1, 300)
    for i in (0, 7, 19):
        alone = simulate_hull(trial(hull, i), eta0[i], nu0[i], pilot, cur[i], 0.1, 300)
        np.testing.assert_array_equal(alone.eta[0], batch.eta[i])
        np.testing.assert_array_equal(alone.nu[0], batch.nu[i])


# --- bad input -------------------------------------------------------------------------


def _base_kwargs() -> dict:
    h = demo_craft("Tholepin").hull
    return {f.name: getattr(h, f.name) for f in dataclasses.fields(h)}


@pytest.mark.parametrize(
    ("field", "value"),
    [
        ("mass_kg", -10.0),
        ("mass_kg", float("nan")),
        ("x_u", float("nan")),
        ("x_udot", 5.0),  # positive added-mass derivative: negative added mass
        ("n_rr", 1.0),
        ("length_m", 0.0),
        ("y_v", np.array([-1.0, np.inf])),
    ],
)
def test_bad_parameter_names_field(field: str, value: object) -> None:
    kw = _base_kwargs()
    kw[field] = value
    with pytest.raises(ParameterError) as info:
        HullParams(**kw)
    assert info.value.field == field


def test_cross_field_checks_name_a_field() -> None:
    kw = _base_kwargs()
    kw["xg_m"] = 3.0  # izz about CO below m xg^2
    with pytest.raises(ParameterError, match="izz_kgm2"):
        HullParams(**kw)
    kw = _base_kwargs()
    kw["mass_kg"] = np.array([4000.0, 5000.0])
    kw["x_u"] = np.array([-100.0, -200.0, -300.0])
    with pytest.raises(ParameterError, match="per-trial arrays must all have the same length"):
        HullParams(**kw)
    kw = _base_kwargs()
    kw["y_rdot"] = kw["n_vdot"] = -1e6  # huge coupling: M no longer positive definite
    with pytest.raises(ParameterError, match="n_vdot"):
        HullParams(**kw)


def test_simulate_rejects_bad_state() -> None:
    hull = demo_craft("Dulse").hull
    with pytest.raises(ParameterError, match="eta0"):
        simulate_hull(hull, [0.0, np.nan, 0.0], np.zeros(3), np.zeros(3), None, 0.1, 2)
    with pytest.raises(ParameterError, match="nu0"):
        simulate_hull(hull, np.zeros(3), np.zeros(2), np.zeros(3), None, 0.1, 2)
    with pytest.raises(ParameterError, match="dt"):
        simulate_hull(hull, np.zeros(3), np.zeros(3), np.zeros(3), None, 0.0, 2)
