"""Tests of wavebench.core.frames: rotations, Euler-rate matrix, angle wrapping.

Reference library: scipy.spatial.transform.Rotation (an independent
implementation of Euler-angle rotations). Conventions (NED, yaw clockwise
from north, zyx Euler angles body -> NED) are those of Fossen (2021),
Handbook of Marine Craft Hydrodynamics and Motion Control, 2nd ed.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st
from scipy.spatial.transform import Rotation

from wavebench.core.errors import ParameterError
from wavebench.core.frames import (
    angle_diff,
    body_to_ned,
    euler_rate_matrix,
    heading_to_yaw,
    ned_to_body,
    rot_z,
    rot_z2,
    rot_zyx,
    wrap_2pi,
    wrap_pi,
    yaw_to_heading,
)

PI = np.pi


@pytest.fixture
def rng() -> np.random.Generator:
    return np.random.default_rng(20240611)


def _random_euler(rng: np.random.Generator, n: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    phi = rng.uniform(-PI, PI, n)
    theta = rng.uniform(-PI / 2 + 1e-3, PI / 2 - 1e-3, n)
    psi = rng.uniform(-PI, PI, n)
    return phi, theta, psi


# --- rotation matrices -------------------------------------------------------


@pytest.mark.parametrize("make", ["rot_z", "rot_z2", "rot_zyx"])
def test_rotations_are_proper_orthonormal(rng, make):
    # Definition of a rotation matrix (SO(n)): R R^T = I and det R = +1.
    phi, theta, psi = _random_euler(rng, 500)
    R = {
        "rot_z": lambda: rot_z(psi),
        "rot_z2": lambda: rot_z2(psi),
        "rot_zyx": lambda: rot_zyx(phi, theta, psi),
    }[make]()
    k = R.shape[-1]
    assert R.shape == (500, k, k)
    eye = np.broadcast_to(np.eye(k), R.shape)
    np.testing.assert_allclose(R @ np.swapaxes(R, -1, -2), eye, atol=1e-14)
    np.testing.assert_allclose(np.linalg.det(R), 1.0, atol=1e-14)


def test_rot_zyx_matches_scipy(rng):
    # Reference library: scipy Rotation with intrinsic 'ZYX' = Rz(psi) Ry(theta) Rx(phi),
    # the body -> NED matrix of Fossen (2021), zyx convention.
    phi, theta, psi = _random_euler(rng, 1000)
    expected = Rotation.from_euler("ZYX", np.column_stack([psi, theta, phi])).as_matrix()
    np.testing.assert_allclose(rot_zyx(phi, theta, psi), expected, atol=1e-14)


def test_rot_zyx_scalar_and_broadcast():
    # Reference library: scipy Rotation (single rotation).
    expected = Rotation.from_euler("ZYX", [0.3, -0.2, 0.1]).as_matrix()
    np.testing.assert_allclose(rot_zyx(0.1, -0.2, 0.3), expected, atol=1e-15)
    # a shared roll/pitch broadcasts against per-trial yaw
    psi = np.array([0.0, 1.0, -2.0])
    R = rot_zyx(0.1, -0.2, psi)
    assert R.shape == (3, 3, 3)
    for i, p in enumerate(psi):
        expected = Rotation.from_euler("ZYX", [p, -0.2, 0.1]).as_matrix()
        np.testing.assert_allclose(R[i], expected, atol=1e-15)


def test_rot_z_matches_scipy_and_zyx(rng):
    # Reference library: scipy Rotation about z; the planar R(psi) of the 3-DOF model
    # is the zyx matrix with zero roll and pitch (Fossen 2021).
    psi = rng.uniform(-10, 10, 200)
    expected = Rotation.from_euler("z", psi[:, None]).as_matrix()
    np.testing.assert_allclose(rot_z(psi), expected, atol=1e-14)
    np.testing.assert_allclose(rot_z(psi), rot_zyx(0.0, 0.0, psi), atol=1e-15)
    np.testing.assert_allclose(rot_z2(psi), expected[:, :2, :2], atol=1e-14)


def test_yaw_convention_east_is_plus_90_degrees():
    # NED convention (Fossen 2021): yaw is positive clockwise seen from above, so a
    # craft with psi = +90 deg moving forward (surge) moves east.
    v = rot_z(PI / 2) @ np.array([1.0, 0.0, 0.0])
    np.testing.assert_allclose(v, [0.0, 1.0, 0.0], atol=1e-15)
    # and pitching the bow up (theta > 0) gives a velocity with negative down component
    v = rot_zyx(0.0, 0.1, 0.0) @ np.array([1.0, 0.0, 0.0])
    assert v[2] < 0.0


# --- Euler-angle rate matrix -------------------------------------------------


def test_euler_rate_matrix_matches_scipy_kinematics(rng):
    # Independent path through scipy: the body angular velocity w_b is read from
    # R(t-h)^T R(t+h) = exp(S(w_b) 2h) + O(h^3) using scipy's rotation vectors;
    # then Theta_dot = T(phi, theta) w_b must hold (Fossen 2021, Euler-angle
    # attitude transformation matrix). Central difference error O(h^2) ~ 1e-10.
    n, h = 300, 1e-5
    phi, theta, psi = _random_euler(rng, n)
    theta = np.clip(theta, -1.2, 1.2)
    rates = rng.uniform(-1.0, 1.0, (n, 3))  # [phi_dot, theta_dot, psi_dot]
    ang = np.column_stack([psi, theta, phi])
    rates_zyx = rates[:, ::-1]
    r_plus = Rotation.from_euler("ZYX", ang + h * rates_zyx)
    r_minus = Rotation.from_euler("ZYX", ang - h * rates_zyx)
    w_body = (r_minus.inv() * r_plus).as_rotvec() / (2 * h)
    T = euler_rate_matrix(phi, theta)
    assert T.shape == (n, 3, 3)
    np.testing.assert_allclose(np.einsum("nij,nj->ni", T, w_body), rates, atol=1e-8)


@pytest.mark.parametrize("theta", [PI / 2, -PI / 2, 2.0, np.array([0.1, PI / 2])])
def test_euler_rate_matrix_rejects_gimbal_lock(theta):
    # T(phi, theta) contains 1/cos(theta): singular at +-90 deg pitch (Fossen 2021).
    with pytest.raises(ParameterError, match="theta"):
        euler_rate_matrix(0.0, theta)


def test_euler_rate_matrix_level_is_identity():
    # At zero roll and pitch Euler rates equal body rates (T(0, 0) = I, Fossen 2021).
    np.testing.assert_array_equal(euler_rate_matrix(0.0, 0.0), np.eye(3))


# --- angle wrapping ----------------------------------------------------------


@pytest.mark.parametrize(
    ("angle", "expected"),
    [
        (PI, -PI),  # the half-open interval [-pi, pi) excludes +pi
        (-PI, -PI),
        (3 * PI, -PI),
        (-3 * PI, -PI),
        (2 * PI, 0.0),
        (-2 * PI, 0.0),
        (0.0, 0.0),
        (PI / 2, PI / 2),
        (3 * PI / 2, -PI / 2),
        (-3 * PI / 2, PI / 2),
    ],
)
def test_wrap_pi_edges(angle, expected):
    # Definition: the representative of angle modulo 2 pi in [-pi, pi).
    assert float(wrap_pi(angle)) == pytest.approx(expected, abs=1e-12)


@pytest.mark.parametrize(
    ("angle", "expected"),
    [
        (2 * PI, 0.0),
        (-2 * PI, 0.0),
        (4 * PI, 0.0),
        (PI, PI),
        (-PI, PI),
        (-PI / 2, 3 * PI / 2),
        (0.0, 0.0),
        (5 * PI / 2, PI / 2),
    ],
)
def test_wrap_2pi_edges(angle, expected):
    # Definition: the representative of angle modulo 2 pi in [0, 2 pi).
    assert float(wrap_2pi(angle)) == pytest.approx(expected, abs=1e-12)


@pytest.mark.parametrize("tiny", [-1e-300, -1e-17, -5e-324])
def test_wraps_stay_half_open_for_tiny_negative_angles(tiny):
    # np.mod(-tiny, 2 pi) rounds to 2 pi; the result must still lie in the interval.
    assert 0.0 <= float(wrap_2pi(tiny)) < 2 * PI
    assert -PI <= float(wrap_pi(tiny - PI)) < PI
    assert 0.0 <= float(yaw_to_heading(tiny)) < 360.0


@given(st.floats(min_value=-1e4, max_value=1e4, allow_nan=False))
def test_wrap_pi_agrees_with_complex_argument(x):
    # Independent path: numpy's complex argument angle(exp(i x)) lies in (-pi, pi]
    # and equals x modulo 2 pi; it differs from wrap_pi only at +pi.
    w = float(wrap_pi(x))
    assert -PI <= w < PI
    ref = float(np.angle(np.exp(1j * x)))
    # error budget: rounding of x + pi and of exp/angle for |x| <= 1e4 (~1e-12)
    assert abs(np.angle(np.exp(1j * (w - ref)))) < 1e-11
    assert 0.0 <= float(wrap_2pi(x)) < 2 * PI


def test_wrap_keeps_shape_and_nan():
    a = np.array([[0.0, 7.0], [np.nan, -7.0]])
    out = wrap_pi(a)
    assert out.shape == (2, 2)
    assert np.isnan(out[1, 0])
    assert np.isnan(wrap_2pi(np.nan))


def test_angle_diff_takes_the_short_way():
    # Definition: a - b wrapped to [-pi, pi) is the signed shortest turn from b to a.
    d = np.radians
    assert float(angle_diff(d(10.0), d(350.0))) == pytest.approx(d(20.0), abs=1e-12)
    assert float(angle_diff(d(350.0), d(10.0))) == pytest.approx(d(-20.0), abs=1e-12)
    assert float(angle_diff(PI, -PI)) == pytest.approx(0.0, abs=1e-12)
    out = angle_diff(np.array([0.0, 3.0]), np.array([[0.0], [-3.0]]))
    assert out.shape == (2, 2)


def test_heading_and_yaw_conversions():
    # Compass convention: heading clockwise from north, 090 = east, 270 = west.
    assert float(heading_to_yaw(90.0)) == pytest.approx(PI / 2)
    assert float(heading_to_yaw(270.0)) == pytest.approx(-PI / 2)
    assert float(heading_to_yaw(360.0)) == pytest.approx(0.0, abs=1e-15)
    assert float(yaw_to_heading(-PI / 2)) == pytest.approx(270.0)
    assert float(yaw_to_heading(PI)) == pytest.approx(180.0)
    h = np.linspace(0.0, 359.9, 3600)
    np.testing.assert_allclose(yaw_to_heading(heading_to_yaw(h)), h, atol=1e-10)


# --- body <-> NED ------------------------------------------------------------


@pytest.mark.parametrize("dim", [2, 3])
def test_body_ned_round_trip(rng, dim):
    n = 400
    v = rng.normal(size=(n, dim))
    psi = rng.uniform(-PI, PI, n)
    v_ned = body_to_ned(v, psi)
    assert v_ned.shape == (n, dim)
    np.testing.assert_allclose(ned_to_body(v_ned, psi), v, atol=1e-13)
    # rotation preserves the length of the horizontal part
    np.testing.assert_allclose(
        np.linalg.norm(v_ned[:, :2], axis=1), np.linalg.norm(v[:, :2], axis=1), rtol=1e-13
    )


def test_body_to_ned_matches_scipy_and_matrices(rng):
    # Reference library: scipy Rotation.apply about z; also equals rot_z(psi) @ nu.
    n = 300
    nu = rng.normal(size=(n, 3))
    psi = rng.uniform(-PI, PI, n)
    np.testing.assert_allclose(
        body_to_ned(nu, psi), Rotation.from_euler("z", psi[:, None]).apply(nu), atol=1e-13
    )
    np.testing.assert_allclose(
        body_to_ned(nu, psi), np.einsum("nij,nj->ni", rot_z(psi), nu), atol=1e-14
    )
    np.testing.assert_allclose(
        body_to_ned(nu[:, :2], psi), np.einsum("nij,nj->ni", rot_z2(psi), nu[:, :2]), atol=1e-14
    )


def test_body_to_ned_does_not_modify_input(rng):
    v = rng.normal(size=(5, 3))
    keep = v.copy()
    body_to_ned(v, 0.3)
    ned_to_body(v, np.full(5, 0.3))
    np.testing.assert_array_equal(v, keep)


@pytest.mark.parametrize("bad", [np.zeros((4, 4)), np.zeros(()), np.zeros((3, 1))])
def test_body_to_ned_rejects_bad_shapes(bad):
    with pytest.raises(ParameterError, match="v_body"):
        body_to_ned(bad, 0.0)
    with pytest.raises(ParameterError, match="v_ned"):
        ned_to_body(bad, 0.0)
