"""Tests of thrusters, rudder and allocations (wavebench.craft.actuators).

Sources of the checked properties:
* Exact solution of the first-order lag T n_dot + n = n_cmd for a held command:
  step response 1 - exp(-t/T) (ZOH equivalent, e.g. Franklin, Powell & Workman,
  Digital Control of Dynamic Systems).
* Fossen (2021), control allocation: tau = B f with the thrust configuration
  matrix; yaw moment of a force = (r x F)_z (checked with numpy.cross).
* Actuator-disc momentum theory (Carlton, Marine Propellers and Propulsion):
  T = 2 rho A_0 V_a^2 a (1 + a), far-wake speed V_a (1 + 2a) — solved here with
  scipy.optimize.brentq, independently of the closed form used in the code.
* scipy.optimize.linprog as the reference for the saturated allocation.
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest
from scipy.optimize import brentq, linprog

from wavebench.core.errors import ParameterError
from wavebench.craft.actuators import (
    DifferentialThrustParams,
    PropRudderParams,
    ThrusterParams,
    actuator_step,
    actuator_tau,
    allocate_differential,
    differential_forces,
    differential_matrix,
    differential_rps_command,
    max_thrust,
    min_thrust,
    prop_rudder_forces,
    rps_for_thrust,
    rudder_step,
    thrust,
    thruster_step,
)
from wavebench.craft.catalogue import demo_craft

RHO = 1025.0


def make_thruster(**kw: float) -> ThrusterParams:
    base = dict(
        k_fwd_n_per_rps2=2.0,
        k_rev_n_per_rps2=1.2,
        n_max_rps=20.0,
        n_rate_max_rps_per_s=1e6,
        time_constant_s=0.5,
    )
    base.update(kw)
    return ThrusterParams(**base)


# --- thruster law ----------------------------------------------------------------------


def test_thrust_law_and_inverse() -> None:
    p = make_thruster()
    n = np.linspace(-20.0, 20.0, 81)
    t = thrust(p, n)
    # T = k_fwd n^2 ahead, -k_rev n^2 astern
    np.testing.assert_allclose(t, np.where(n >= 0, 2.0 * n**2, -1.2 * n**2), rtol=1e-15)
    np.testing.assert_allclose(rps_for_thrust(p, t), n, rtol=1e-12, atol=1e-12)
    assert float(max_thrust(p)) == 2.0 * 400.0
    assert float(min_thrust(p)) == -1.2 * 400.0


def test_first_order_lag_is_exact_step_response() -> None:
    # T n_dot + n = n_cmd, n(0) = 0, n_cmd held: n(t) = n_cmd (1 - exp(-t/T))
    p = make_thruster(time_constant_s=0.7)
    dt = 0.1
    n = np.zeros(3)
    cmd = np.array([10.0, -5.0, 19.0])
    for k in range(1, 60):
        n = thruster_step(p, n, cmd, dt)
        np.testing.assert_allclose(n, cmd * (1.0 - np.exp(-k * dt / 0.7)), rtol=1e-12)


def test_rate_limit_and_saturation_hold() -> None:
    rng = np.random.default_rng(3)
    p = make_thruster(n_rate_max_rps_per_s=15.0, time_constant_s=0.2)
    dt = 0.05
    n = np.zeros(50)
    for _ in range(400):
        cmd = rng.uniform(-40.0, 40.0, 50)  # often beyond n_max = 20
        n_new = thruster_step(p, n, cmd, dt)
        assert np.all(np.abs(n_new - n) <= 15.0 * dt * (1 + 1e-12))
        assert np.all(np.abs(n_new) <= 20.0)
        n = n_new


def test_rate_limited_without_lag_is_a_ramp() -> None:
    # with T = 0 the response to a step is a ramp at the rate limit, ending at the command
    p = make_thruster(n_rate_max_rps_per_s=8.0, time_constant_s=0.0)
    n = np.array([0.0])
    for k in range(1, 40):
        n = thruster_step(p, n, np.array([12.0]), 0.1)
        np.testing.assert_allclose(n, min(8.0 * 0.1 * k, 12.0), rtol=1e-12)


def test_rudder_rate_and_angle_limits() -> None:
    prop = demo_craft("Tholepin").propulsion
    dt = 0.1
    rng = np.random.default_rng(5)
    d = np.zeros(30)
    d_max = math.radians(prop.rudder_max_deg)
    step_max = math.radians(prop.rudder_rate_max_deg_per_s) * dt
    for _ in range(300):
        d_new = rudder_step(prop, d, rng.uniform(-1.5, 1.5, 30), dt)
        assert np.all(np.abs(d_new - d) <= step_max * (1 + 1e-12))
        assert np.all(np.abs(d_new) <= d_max)
        d = d_new


# --- differential thrust ---------------------------------------------------------------


def twin(y_port: float = -0.45, y_stbd: float = 0.45) -> DifferentialThrustParams:
    return DifferentialThrustParams(
        port=make_thruster(y_m=y_port, x_m=-1.0),
        starboard=make_thruster(y_m=y_stbd, x_m=-1.0, k_fwd_n_per_rps2=2.5),
    )


def test_configuration_matrix_from_moment_arm() -> None:
    p = twin(-0.4, 0.6)
    b = differential_matrix(p)[0]
    for j, th in enumerate((p.port, p.starboard)):
        r = np.array([th.x_m, th.y_m, 0.0])
        f = np.array([1.0, 0.0, 0.0])
        m = np.cross(r, f)  # yaw moment of a unit thrust: (r x F)_z
        np.testing.assert_allclose(b[:, j], [1.0, 0.0, m[2]], rtol=1e-15)
    f = np.array([[100.0, -40.0], [3.0, 7.0]])
    np.testing.assert_allclose(differential_forces(p, f), f @ b.T, rtol=1e-15)


@pytest.mark.parametrize(("yp", "ys"), [(-0.45, 0.45), (-0.3, 0.7)])
def test_allocation_round_trip_when_unsaturated(yp: float, ys: float) -> None:
    p = twin(yp, ys)
    rng = np.random.default_rng(11)
    f_true = rng.uniform(0.6 * min_thrust(p.port), 0.6 * max_thrust(p.port), size=(200, 2))
    tau = differential_forces(p, f_true)
    f = allocate_differential(p, tau[:, 0], tau[:, 2])
    # B f(tau) = tau (Fossen 2021, unconstrained allocation is exact for 2 inputs, 2 DOF)
    np.testing.assert_allclose(differential_forces(p, f), tau, rtol=1e-12, atol=1e-9)
    n_cmd = differential_rps_command(p, tau[:, 0], tau[:, 2])
    f_from_n = np.column_stack([thrust(p.port, n_cmd[:, 0]), thrust(p.starboard, n_cmd[:, 1])])
    np.testing.assert_allclose(differential_forces(p, f_from_n), tau, rtol=1e-9, atol=1e-9)


def _linprog_reference(p: DifferentialThrustParams, x_d: float, n_d: float) -> tuple[float, float]:
    """Yaw-priority allocation as two linear programs (scipy.optimize.linprog)."""
    yp, ys = p.port.y_m, p.starboard.y_m
    bounds = [
        (float(min_thrust(p.port)), float(max_thrust(p.port))),
        (float(min_thrust(p.starboard)), float(max_thrust(p.starboard))),
    ]
    # 1) the reachable yaw moment closest to the demand
    n_max = -linprog([yp, ys], bounds=bounds).fun  # maximise -yp fp - ys fs
    n_min = linprog([-yp, -ys], bounds=bounds).fun
    n_c = min(max(n_d, n_min), n_max)
    # 2) with that yaw moment, minimise |X - X_d| (slack s >= |fp + fs - x_d|)
    res = linprog(
        [0.0, 0.0, 1.0],
        A_ub=[[1.0, 1.0, -1.0], [-1.0, -1.0, -1.0]],
        b_ub=[x_d, -x_d],
        A_eq=[[-yp, -ys, 0.0]],
        b_eq=[n_c],
        bounds=[*bounds, (0.0, None)],
    )
    return float(res.x[0] + res.x[1]), n_c


def test_saturated_allocation_keeps_yaw_priority() -> None:
    p = twin(-0.3, 0.7)
    rng = np.random.default_rng(13)
    x_d = rng.uniform(-1500.0, 2500.0, 60)
    n_d = rng.uniform(-800.0, 800.0, 60)
    f = allocate_differential(p, x_d, n_d)
    assert np.all((f[:, 0] >= min_thrust(p.port)) & (f[:, 0] <= max_thrust(p.port)))
    assert np.all((f[:, 1] >= min_thrust(p.starboard)) & (f[:, 1] <= max_thrust(p.starboard)))
    tau = differential_forces(p, f)
    for i in range(60):
        x_ref, n_ref = _linprog_reference(p, x_d[i], n_d[i])
        assert tau[i, 2] == pytest.approx(n_ref, rel=1e-9, abs=1e-6)
        assert tau[i, 0] == pytest.approx(x_ref, rel=1e-7, abs=1e-5)


# --- propeller and rudder --------------------------------------------------------------


def test_rudder_force_signs_turn_to_starboard() -> None:
    prop = demo_craft("Tholepin").propulsion
    nu_r = np.array([[3.0, 0.0, 0.0]] * 2)
    tau = prop_rudder_forces(prop, np.array([15.0, 15.0]), np.radians([20.0, -20.0]), nu_r)
    # positive rudder: side force to port on a rudder aft of CO, positive (starboard) yaw
    assert tau[0, 1] < 0.0 and tau[0, 2] > 0.0
    assert tau[1, 1] > 0.0 and tau[1, 2] < 0.0
    # yaw moment is (r x F)_z of the rudder force at (x_R, 0)
    thrust_x = (1 - prop.thrust_deduction) * thrust(prop.propeller, np.array([15.0]))[0]
    f_r = np.array([tau[0, 0] - thrust_x, tau[0, 1], 0.0])
    np.testing.assert_allclose(np.cross([prop.rudder_x_m, 0.0, 0.0], f_r)[2], tau[0, 2],
                               rtol=1e-12)  # fmt: skip
    # rudder drag reduces surge force for either rudder side
    assert tau[0, 0] < thrust_x and tau[1, 0] < thrust_x


def _rudder_only(prop: PropRudderParams, n: float, delta: float, u: float) -> np.ndarray:
    return prop_rudder_forces(prop, np.array([n]), np.array([delta]), np.array([[u, 0.0, 0.0]]))[0]


def test_rudder_inflow_from_actuator_disc_momentum_theory() -> None:
    prop = dataclasses.replace(demo_craft("Tholepin").propulsion, slipstream_fraction=1.0)
    d = prop.prop_diameter_m
    a0 = math.pi * d * d / 4.0
    delta = math.radians(25.0)
    coef = 0.5 * RHO * prop.rudder_area_m2 * prop.rudder_lift_slope_per_rad * math.sin(delta)
    for n, u in [(20.0, 3.0), (10.0, 1.0), (25.0, 0.5)]:
        t = float(thrust(prop.propeller, np.array([n]))[0])
        va = (1.0 - prop.wake_fraction) * u
        # momentum theory: T = 2 rho A0 Va^2 a (1 + a); far wake Va (1 + 2a)
        a = brentq(lambda a, va=va, t=t: 2.0 * RHO * a0 * va * va * a * (1.0 + a) - t, 0.0, 1e3)
        v_wake = va * (1.0 + 2.0 * a)
        f_n = coef * v_wake**2
        tau = _rudder_only(prop, n, delta, u)
        assert tau[1] == pytest.approx(-f_n * math.cos(delta), rel=1e-10)
    # bollard pull (Va = 0): disc velocity w with T = 2 rho A0 w^2, far wake 2 w
    t = float(thrust(prop.propeller, np.array([20.0]))[0])
    w = math.sqrt(t / (2.0 * RHO * a0))
    tau = _rudder_only(prop, 20.0, delta, 0.0)
    assert tau[1] == pytest.approx(-coef * (2.0 * w) ** 2 * math.cos(delta), rel=1e-12)


def test_rudder_without_slipstream_and_astern() -> None:
    prop = dataclasses.replace(demo_craft("Tholepin").propulsion, slipstream_fraction=0.0)
    delta = math.radians(15.0)
    coef = 0.5 * RHO * prop.rudder_area_m2 * prop.rudder_lift_slope_per_rad * math.sin(delta)
    va = (1.0 - prop.wake_fraction) * 2.0
    ahead = _rudder_only(prop, 20.0, delta, 2.0)
    assert ahead[1] == pytest.approx(-coef * va * va * math.cos(delta), rel=1e-12)
    # going astern without thrust the flow meets the rudder from behind: force reverses
    astern = _rudder_only(prop, 0.0, delta, -2.0)
    assert astern[1] == pytest.approx(-ahead[1], rel=1e-12)
    assert astern[0] > 0.0  # rudder drag opposes astern motion


def test_uniform_interface_matches_parts() -> None:
    craft = demo_craft("Dulse")
    p = craft.propulsion
    state = np.array([[30.0, -20.0], [50.0, 50.0]])
    tau = actuator_tau(p, state, np.zeros((2, 3)))
    f = np.column_stack([thrust(p.port, state[:, 0]), thrust(p.starboard, state[:, 1])])
    np.testing.assert_array_equal(tau, differential_forces(p, f))
    new = actuator_step(p, state, np.array([[0.0, 0.0], [-50.0, 60.0]]), 0.05)
    np.testing.assert_array_equal(new[:, 0], thruster_step(p.port, state[:, 0], [0.0, -50.0], 0.05))


# --- bad input -------------------------------------------------------------------------


def test_bad_input_names_field() -> None:
    with pytest.raises(ParameterError) as info:
        make_thruster(k_fwd_n_per_rps2=-1.0)
    assert info.value.field == "k_fwd_n_per_rps2"
    with pytest.raises(ParameterError) as info:
        make_thruster(time_constant_s=float("nan"))
    assert info.value.field == "time_constant_s"
    with pytest.raises(ParameterError, match="dt"):
        thruster_step(make_thruster(), np.zeros(2), np.ones(2), 0.0)
    with pytest.raises(ParameterError) as info:
        twin(0.45, 0.5)
    assert info.value.field == "port.y_m"
    prop = demo_craft("Tholepin").propulsion
    with pytest.raises(ParameterError) as info:
        dataclasses.replace(prop, rudder_x_m=2.0)
    assert info.value.field == "rudder_x_m"
    with pytest.raises(ParameterError) as info:
        dataclasses.replace(prop, rudder_max_deg=120.0)
    assert info.value.field == "rudder_max_deg"
