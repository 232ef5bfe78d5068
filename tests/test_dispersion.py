"""Checks of the linear dispersion relation and wave speeds (g = 9.81 m/s^2 throughout)."""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
from scipy import optimize

from wavebench.core.errors import ParameterError
from wavebench.sea.dispersion import (
    encounter_frequency,
    fenton_mckee_wavelength,
    group_speed,
    phase_speed,
    wavelength,
    wavenumber,
)

G = 9.81


def test_residual_of_dispersion_relation():
    # Linear (Airy) theory: omega^2 = g k tanh(k h); relative residual at round-off level.
    w = np.geomspace(0.02, 8.0, 200)
    h = np.array([[0.3], [2.0], [15.0], [120.0], [3000.0]])
    k = wavenumber(w, h, g=G)
    assert k.shape == (5, 200)
    resid = (w**2 - G * k * np.tanh(k * h)) / w**2
    assert np.max(np.abs(resid)) < 1e-13


@pytest.mark.parametrize(("omega", "depth"), [(0.05, 4.0), (0.4, 10.0), (1.0, 3.0), (2.5, 80.0)])
def test_against_scipy_brentq(omega, depth):
    # Reference root finder (scipy.optimize.brentq) on omega^2 - g k tanh(k h).
    ref = optimize.brentq(
        lambda k: omega**2 - G * k * math.tanh(k * depth), 1e-12, 100.0, xtol=1e-16, rtol=1e-15
    )
    assert wavenumber(omega, depth, g=G) == pytest.approx(ref, rel=1e-13)


def test_deep_water_limit():
    # Airy theory, deep water (h = inf): k = omega^2/g and L = g T^2 / (2 pi)
    # (Coastal Engineering Manual EM 1110-2-1100, Part II-1).
    w = np.linspace(0.1, 5.0, 50)
    np.testing.assert_allclose(wavenumber(w, np.inf, g=G), w**2 / G, rtol=1e-15)
    t = np.array([2.0, 6.0, 12.0, 20.0])
    np.testing.assert_allclose(wavelength(t, np.inf, g=G), G * t**2 / (2 * math.pi), rtol=1e-15)
    # Finite but deep: for h >= L0/2, kh >= pi so 1 >= L/L0 = tanh(kh) >= tanh(pi) = 0.99627.
    l0 = G * t**2 / (2 * math.pi)
    for frac in (0.5, 1.0, 3.0):
        ratio = wavelength(t, frac * l0, g=G) / l0
        assert np.all(ratio <= 1.0) and np.all(ratio >= math.tanh(2 * math.pi * frac))


@pytest.mark.parametrize("h_over_l0", [1e-5, 1e-4, 1e-3])
def test_shallow_water_limit(h_over_l0):
    # Airy theory, kh << 1: omega = k sqrt(g h). From x tanh x = x^2 (1 - x^2/3 + ...),
    # 0 < 1 - omega/(k sqrt(g h)) < (kh)^2 / 6.
    t = np.array([5.0, 10.0, 30.0])
    h = h_over_l0 * G * t**2 / (2 * math.pi)
    w = 2 * math.pi / t
    k = wavenumber(w, h, g=G)
    x = k * h
    rel = 1.0 - w / (k * np.sqrt(G * h))
    assert np.all(x < 0.1)
    assert np.all(rel > 0.0) and np.all(rel < x**2 / 6.0)


def test_fenton_mckee_within_stated_error():
    # Fenton & McKee (1990), Coastal Engineering 14: explicit L within 1.7 % of the exact
    # linear-theory wavelength; checked for h/L0 from 0.01 to 1.
    t = np.array([3.0, 8.0, 15.0])[:, None]
    l0 = G * t**2 / (2 * math.pi)
    h = np.geomspace(0.01, 1.0, 400)[None, :] * l0
    exact = wavelength(t, h, g=G)
    approx = fenton_mckee_wavelength(t, h, g=G)
    assert np.max(np.abs(approx / exact - 1.0)) < 0.017
    # and it reduces to L0 in deep water
    np.testing.assert_allclose(fenton_mckee_wavelength(t[:, 0], np.inf, g=G), l0[:, 0], rtol=1e-15)


def test_group_speed_limits():
    # Coastal Engineering Manual EM 1110-2-1100 Part II-1: c_g = c/2 (1 + 2kh/sinh 2kh);
    # deep water c_g = c/2, shallow water c_g -> c = sqrt(g h).
    w = np.linspace(0.2, 3.0, 30)
    np.testing.assert_allclose(group_speed(w, g=G), 0.5 * phase_speed(w, g=G), rtol=1e-15)
    np.testing.assert_allclose(phase_speed(w, g=G), G / w, rtol=1e-15)
    l0 = G * (2 * math.pi / w) ** 2 / (2 * math.pi)
    # h = 2 L0: 2kh/sinh(2kh) < 1e-9
    ratio = group_speed(w, 2 * l0, g=G) / phase_speed(w, 2 * l0, g=G)
    np.testing.assert_allclose(ratio, 0.5, rtol=1e-9)
    # shallow: n = 1 - (kh)^2/3 + ..., so 0 < 1 - c_g/c < (kh)^2/3
    h = 1e-4 * l0
    x = wavenumber(w, h, g=G) * h
    rel = 1.0 - group_speed(w, h, g=G) / phase_speed(w, h, g=G)
    assert np.all(rel > 0.0) and np.all(rel < x**2 / 3.0)
    c = phase_speed(w, h, g=G)
    assert np.all(np.abs(c / np.sqrt(G * h) - 1.0) < x**2 / 6.0)


@pytest.mark.parametrize("depth", [1.5, 10.0, 60.0])
def test_group_speed_is_d_omega_dk(depth):
    # Definition c_g = d omega / d k (CEM II-1), by a central difference of
    # omega(k) = sqrt(g k tanh(k h)).
    w = np.array([0.3, 0.8, 1.5, 3.0])
    k = wavenumber(w, depth, g=G)
    dk = 1e-6 * k

    def om(kk):
        return np.sqrt(G * kk * np.tanh(kk * depth))

    cg_num = (om(k + dk) - om(k - dk)) / (2 * dk)
    np.testing.assert_allclose(group_speed(w, depth, g=G), cg_num, rtol=1e-8)


def test_per_trial_depth_column():
    # Per-trial depths (N, 1) against a shared grid (K,) give (N, K), row i = depth i.
    w = np.linspace(0.1, 2.0, 25)
    h = np.array([[2.0], [20.0], [np.inf]])
    k = wavenumber(w, h, g=G)
    assert k.shape == (3, 25)
    for i in range(3):
        np.testing.assert_array_equal(k[i], wavenumber(w, h[i, 0], g=G))
    assert group_speed(w, h, g=G).shape == (3, 25)


def test_zero_frequency_without_warnings():
    # omega = 0: k = 0; long-wave limit c = c_g = sqrt(g h) (Airy theory, h finite).
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        assert wavenumber(0.0, 10.0, g=G) == 0.0
        assert wavenumber(0.0, np.inf, g=G) == 0.0
        assert phase_speed(0.0, 10.0, g=G) == pytest.approx(math.sqrt(G * 10.0))
        assert group_speed(0.0, 10.0, g=G) == pytest.approx(math.sqrt(G * 10.0))


def test_encounter_frequency():
    # Encounter frequency omega_e = omega - k U cos(beta), beta = wave travel direction minus
    # heading (0 following, pi head sea); in deep water k = omega^2/g gives the form
    # omega - omega^2 U cos(beta) / g of Fossen, Handbook of Marine Craft Hydrodynamics
    # (2021) (formula from memory).
    w = np.array([0.4, 0.8, 1.2])
    k = wavenumber(w, np.inf, g=G)
    u = 5.0
    np.testing.assert_allclose(encounter_frequency(w, k, u, math.pi), w + w**2 * u / G, rtol=1e-15)
    np.testing.assert_allclose(encounter_frequency(w, k, u, 0.0), w - w**2 * u / G, rtol=1e-15)
    np.testing.assert_allclose(encounter_frequency(w, k, u, math.pi / 2), w, rtol=1e-15)
    beta = np.array([0.3, 2.0, -2.5])
    np.testing.assert_allclose(
        encounter_frequency(w, k, u, beta), w - w**2 * u * np.cos(beta) / G, rtol=1e-15
    )


@pytest.mark.parametrize("depth", [0.0, -5.0, float("nan")])
def test_rejects_bad_depth(depth):
    with pytest.raises(ParameterError, match="depth_m"):
        wavenumber(1.0, depth)
    with pytest.raises(ParameterError, match="depth_m"):
        fenton_mckee_wavelength(8.0, depth)


def test_rejects_bad_frequency_and_period():
    with pytest.raises(ParameterError, match="omega"):
        wavenumber(np.array([0.5, -0.1]), 10.0)
    with pytest.raises(ParameterError, match="omega"):
        wavenumber(float("nan"), 10.0)
    with pytest.raises(ParameterError, match="period_s"):
        wavelength(0.0, 10.0)
    with pytest.raises(ParameterError, match="g ="):
        wavenumber(1.0, 10.0, g=-9.81)


def test_each_wavenumber_is_independent_of_its_batch():
    # reproducibility rule of the project: trial i alone equals trial i in a batch,
    # so an element's Newton iterations must not depend on its neighbours
    rng = np.random.default_rng(5)
    omega = rng.uniform(0.05, 4.0, 400)
    depth = rng.uniform(0.5, 200.0, 400)
    batch = wavenumber(omega, depth)
    alone = np.array([wavenumber(omega[i : i + 1], depth[i : i + 1])[0] for i in range(400)])
    assert np.array_equal(batch, alone)
