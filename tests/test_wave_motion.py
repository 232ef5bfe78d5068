"""Wave-frequency motion: superposition, encounter frequency, derivatives, batch slicing."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import integrate
from scipy.spatial.transform import Rotation

from wavebench.core.errors import ParameterError
from wavebench.core.streams import TrialStreams
from wavebench.sea.rao import RaoTable, closed_form_rao
from wavebench.sea.realisation import WaveComponents, realise_sea
from wavebench.sea.spectra import SeaSpectrum
from wavebench.sea.spreading import DirectionalSpreading
from wavebench.sea.wave_motion import (
    component_variance,
    motion_at_point,
    response_spectrum,
    significant_amplitude,
    wave_frequency_kinematics,
    wave_frequency_motion,
)

G = 9.81  # all tests here use g = 9.81 m/s^2
HEAVE = 2
LONG = DirectionalSpreading(kind="long_crested", mean_dir_deg=0.0)  # waves travel south
SHORT = DirectionalSpreading(kind="cos2s", exponent=6.0, mean_dir_deg=200.0)


def _hull(speed: float = 0.0) -> RaoTable:
    return closed_form_rao(
        length_m=30.0, beam_m=8.0, draft_m=2.0, block_coefficient=0.6, speed_mps=speed,
        omega_grid=np.linspace(0.05, 4.0, 400), beta_grid=np.radians(np.arange(0.0, 360.0, 5.0)),
        roll_damping_ratio=0.1, gm_m=1.0, g=G,
    )


def _unit_heave_table() -> RaoTable:
    values = np.zeros((6, 2, 1), dtype=complex)
    values[HEAVE] = 1.0
    return RaoTable(omega_radps=np.array([0.0, 100.0]), beta_rad=np.array([0.0]), values=values)


def _single_component(omega: float, direction: float, amplitude: float = 1.0) -> WaveComponents:
    one = np.ones((1, 1))
    return WaveComponents(
        amplitude_m=amplitude * one,
        omega_radps=omega * one,
        wavenumber_radpm=omega**2 / G * one,  # deep water: omega^2 = g k
        direction_rad=direction * one,
        phase_rad=0.3 * one,
        d_omega_radps=np.array([0.01]),
    )


def test_unit_heave_rao_gives_the_surface_elevation() -> None:
    # Definition of the RAO: with H = 1 (zero phase) the response is the elevation
    # itself, at the same point and time (exact identity of the superposition).
    comps = realise_sea(SeaSpectrum(kind="jonswap", hs_m=2.0, tp_s=7.0), SHORT,
                        TrialStreams(seed=4, trials=range(3)), n_components=60)
    rng = np.random.default_rng(0)
    north = rng.uniform(-500, 500, (3, 40))
    east = rng.uniform(-500, 500, (3, 40))
    heading = rng.uniform(-np.pi, np.pi, (3, 40))
    t = rng.uniform(0, 3600, (3, 40))
    xi = wave_frequency_motion(comps, _unit_heave_table(), north, east, heading, t)
    assert xi.shape == (3, 40, 6)
    np.testing.assert_allclose(xi[..., HEAVE], comps.elevation(north, east, t),
                               rtol=1e-12, atol=1e-12)
    assert np.all(xi[..., [0, 1, 3, 4, 5]] == 0.0)


def _dirichlet_bound(freq_diff: np.ndarray, n: int, dt: float) -> np.ndarray:
    """Bound on |mean_m cos(Omega m dt + c)| over n samples: 1/(n |sin(Omega dt / 2)|)."""
    s = np.abs(np.sin(0.5 * freq_diff * dt))
    with np.errstate(divide="ignore"):
        return np.minimum(1.0, 1.0 / (n * s))


def test_record_variance_equals_sum_over_components_and_spectral_integral() -> None:
    spec = SeaSpectrum(kind="pierson_moskowitz", hs_m=2.0, tp_s=8.0)
    comps = realise_sea(spec, LONG, TrialStreams(seed=11, trials=[0]), n_components=100)
    table = _hull()
    heading = math.radians(150.0)  # waves 30 deg off the bow
    dt, n = 0.5, 4 * 3600 * 2  # a 4-hour record
    t = np.arange(n) * dt
    xi = wave_frequency_motion(comps, table, 0.0, 0.0, heading, t[None, :])[0]  # (n, 6)
    mean_square = np.mean(xi**2, axis=0)
    var = component_variance(comps, table, heading)[0]

    # St. Denis & Pierson (1953): the response is a sum of independent sinusoids, its
    # variance the sum of a_j^2 |H_j|^2 / 2. Over a finite record of n samples the
    # cross terms are bounded by the Dirichlet kernel (exact trigonometric identity):
    #   |mean(x^2) - sum A_j^2/2| <= 1/2 sum_{j != l} A_j A_l K(w_j - w_l)
    #                                + 1/2 sum_{j, l} A_j A_l K(w_j + w_l).
    w = comps.omega_radps[0]
    h = table.evaluate(w, comps.direction_rad[0] - heading)  # (K, 6)
    amp = comps.amplitude_m[0][:, None] * np.abs(h)  # (K, 6)
    k_diff = _dirichlet_bound(w[:, None] - w[None, :], n, dt)
    np.fill_diagonal(k_diff, 0.0)
    k_sum = _dirichlet_bound(w[:, None] + w[None, :], n, dt)
    bound = 0.5 * np.einsum("jd,jl,ld->d", amp, k_diff + k_sum, amp)
    assert np.all(bound < 0.03 * var)  # the check is informative
    assert np.all(np.abs(mean_square - var) <= bound)

    # ... and the sum approximates the integral of |H|^2 S over the simulated band.
    # With a_j^2 = 2 S(w_j) dw and w_j uniform in its bin (stratified sampling), the
    # estimator is unbiased with variance sum_bins dw^2 Var_bin(|H|^2 S); allow 5 sigma.
    lo, hi = spec.frequency_band()
    edges = np.linspace(lo, hi, comps.n_components + 1)
    fine = np.linspace(0.0, 1.0, 401)
    band_w = edges[:-1, None] + fine[None, :] * np.diff(edges)[:, None]  # (K, 401)
    s_resp = response_spectrum(table, spec, LONG, heading, band_w.ravel())[0]
    s_resp = s_resp.reshape(comps.n_components, fine.size, 6)
    d_w = np.diff(edges)[0]
    per_bin = integrate.simpson(s_resp, x=fine, axis=1) * d_w  # (K, 6)
    integral = per_bin.sum(axis=0)
    bin_var = d_w**2 * (integrate.simpson(s_resp**2, x=fine, axis=1) - (per_bin / d_w) ** 2)
    sigma = np.sqrt(np.maximum(bin_var, 0.0).sum(axis=0))
    assert np.all(np.abs(var - integral) <= 5.0 * sigma + 1e-12 * integral)
    assert np.all(sigma < 0.05 * integral)


def test_significant_amplitude_of_a_surface_follower_is_half_hs() -> None:
    # DNV-RP-C205 (2010) sec. 3.5.5: for Pierson-Moskowitz Hs = 4 sqrt(m0) exactly, so
    # a craft with |H_heave| = 1 has significant heave amplitude 2 sqrt(m0) = Hs / 2,
    # whatever the spreading (D integrates to one, Longuet-Higgins et al. 1963).
    spec = SeaSpectrum(kind="pierson_moskowitz", hs_m=np.array([1.0, 3.0]), tp_s=8.0)
    omega = np.linspace(0.0, 10.0, 2001)  # PM leaves < 5e-5 of m0 above 10 rad/s
    for spreading in (LONG, SHORT):
        sig = significant_amplitude(_unit_heave_table(), spec, spreading,
                                    np.array([0.0, 2.0]), omega)
        assert sig.shape == (2, 6)
        np.testing.assert_allclose(sig[:, HEAVE], [0.5, 1.5], rtol=1e-4)


def test_directional_integral_against_scipy_quad() -> None:
    # The response spectrum at one frequency is S(w) * int |H(w, theta - psi)|^2 D dtheta;
    # check the periodic rectangle rule against scipy.integrate.quad (reference library).
    table = _hull()
    spec = SeaSpectrum(kind="jonswap", hs_m=2.0, tp_s=7.0)
    w0, psi = 0.9, 0.4
    s = response_spectrum(table, spec, SHORT, psi, np.array([w0]))[0, 0]
    for dof in (2, 3, 4):
        def integrand(theta: float, dof: int = dof) -> float:
            h = table.evaluate(w0, theta - psi)[dof]
            return float(abs(h) ** 2 * SHORT.density(np.array([theta]))[0])

        # the interpolated RAO has kinks at the table's directions: tell quad where
        kinks = np.mod(table.beta_rad + psi + np.pi, 2 * np.pi) - np.pi
        ref, _ = integrate.quad(integrand, -np.pi, np.pi, points=kinks, limit=400)
        assert s[dof] == pytest.approx(ref * float(spec.density(np.array([w0]))[0]), rel=1e-3)


@pytest.mark.parametrize(("direction", "sign"), [(math.pi, 1.0), (0.0, -1.0)])
def test_encounter_period_of_a_regular_wave(direction: float, sign: float) -> None:
    # Doppler shift (any seakeeping text, e.g. Faltinsen 1990): a craft at speed U meets
    # a regular wave at omega_e = omega - k U cos(beta); head sea (beta = pi): omega + k U,
    # following sea (beta = 0): omega - k U. The craft heads north at U; the wave
    # travels south (head sea) or north (following sea).
    omega, speed = 0.8, 5.0
    k = omega**2 / G
    comps = _single_component(omega, direction)
    table = _hull(speed)
    dt = 0.01
    t = np.arange(0.0, 400.0, dt)
    heave = wave_frequency_motion(comps, table, speed * t[None, :], 0.0, 0.0, t[None, :])[0, :, 2]
    up = np.nonzero((heave[:-1] < 0.0) & (heave[1:] >= 0.0))[0]
    t_up = t[up] - heave[up] * dt / (heave[up + 1] - heave[up])  # linear interpolation
    period = (t_up[-1] - t_up[0]) / (up.size - 1)
    expected = 2.0 * math.pi / (omega + sign * k * speed)
    assert period == pytest.approx(expected, rel=1e-5)
    assert abs(expected - 2.0 * math.pi / omega) > 0.2 * expected  # the shift is visible


def test_velocity_and_acceleration_are_time_derivatives() -> None:
    # Central differences (error O(h^2)) of the displacement along a steady course at
    # steady speed, where the returned derivatives are exact.
    comps = realise_sea(SeaSpectrum(kind="jonswap", hs_m=2.0, tp_s=7.0), SHORT,
                        TrialStreams(seed=8, trials=range(2)), n_components=80)
    table = _hull(3.0)
    v = np.array([[2.0, -1.0], [0.5, 3.0]])  # (trial, north/east) velocity over ground
    heading = np.array([0.3, -2.0])
    t0, h = 123.4, 1e-3

    def disp(t: float) -> np.ndarray:
        return wave_frequency_motion(comps, table, 10 + v[:, 0] * t, -5 + v[:, 1] * t,
                                     heading, t)

    kin = wave_frequency_kinematics(comps, table, 10 + v[:, 0] * t0, -5 + v[:, 1] * t0,
                                    heading, t0, velocity_north_mps=v[:, 0],
                                    velocity_east_mps=v[:, 1])
    np.testing.assert_array_equal(kin.displacement, disp(t0))
    d1 = (disp(t0 + h) - disp(t0 - h)) / (2 * h)
    d2 = (disp(t0 + h) - 2 * disp(t0) + disp(t0 - h)) / h**2
    scale_v = np.max(np.abs(kin.velocity), axis=0)
    scale_a = np.max(np.abs(kin.acceleration), axis=0)
    assert np.all(np.abs(d1 - kin.velocity) <= 1e-6 * scale_v)
    assert np.all(np.abs(d2 - kin.acceleration) <= 1e-3 * scale_a)


def test_trial_alone_equals_trial_in_batch() -> None:
    spec = SeaSpectrum(kind="jonswap", hs_m=np.array([1.0, 2.0, 1.5, 3.0, 2.5]), tp_s=7.0)
    streams = TrialStreams(seed=21, trials=range(5))
    batch = realise_sea(spec, SHORT, streams, n_components=50)
    table = _hull(2.0)
    rng = np.random.default_rng(3)
    north, east = rng.uniform(-100, 100, (2, 5))
    heading, t = rng.uniform(-3, 3, 5), rng.uniform(0, 600, 5)
    vn, ve = rng.uniform(-3, 3, (2, 5))
    xi = wave_frequency_motion(batch, table, north, east, heading, t)
    kin = wave_frequency_kinematics(batch, table, north, east, heading, t,
                                    velocity_north_mps=vn, velocity_east_mps=ve)
    var = component_variance(batch, table, heading)
    for i in (0, 3):
        alone_spec = SeaSpectrum(kind="jonswap", hs_m=spec.hs_m[i : i + 1], tp_s=7.0)
        alone = realise_sea(alone_spec, SHORT, streams.subset([i]), n_components=50)
        s = slice(i, i + 1)
        assert np.array_equal(
            wave_frequency_motion(alone, table, north[s], east[s], heading[s], t[s]), xi[s]
        )
        k1 = wave_frequency_kinematics(alone, table, north[s], east[s], heading[s], t[s],
                                       velocity_north_mps=vn[s], velocity_east_mps=ve[s])
        assert np.array_equal(k1.velocity, kin.velocity[s])
        assert np.array_equal(k1.acceleration, kin.acceleration[s])
        assert np.array_equal(component_variance(alone, table, heading[s]), var[s])


def test_motion_at_point_matches_exact_rotation_for_small_angles() -> None:
    # Reference: scipy.spatial.transform.Rotation with the zyx Euler convention
    # R = Rz(yaw) Ry(pitch) Rx(roll) (Fossen 2021, kinematics chapter); for small
    # angles R r - r = theta x r + O(theta^2 |r|).
    rng = np.random.default_rng(5)
    motion = np.concatenate([rng.normal(0, 0.5, (4, 3)), rng.normal(0, 1e-4, (4, 3))], axis=1)
    arms = rng.normal(0, 10.0, (4, 3))
    exact = np.array([
        m[:3] + Rotation.from_euler("ZYX", [m[5], m[4], m[3]]).apply(r) - r
        for m, r in zip(motion, arms, strict=True)
    ])
    got = motion_at_point(motion, arms)
    assert got.shape == (4, 3)
    second_order = np.max(np.abs(motion[:, 3:])) ** 2 * np.max(np.abs(arms))
    assert np.max(np.abs(got - exact)) < 2 * second_order
    assert np.max(np.abs(got - motion[:, :3])) > 1e3 * second_order  # rotation part matters
    with pytest.raises(ParameterError, match="lever_arm_m"):
        motion_at_point(motion, np.zeros(2))


def test_bad_inputs_raise_parameter_error() -> None:
    comps = realise_sea(SeaSpectrum(kind="jonswap", hs_m=2.0, tp_s=7.0), LONG,
                        TrialStreams(seed=1, trials=range(3)), n_components=10)
    table = _hull()
    with pytest.raises(ParameterError, match="north_m"):
        wave_frequency_motion(comps, table, np.zeros(2), 0.0, 0.0, 0.0)
    with pytest.raises(ParameterError, match="t_s"):
        wave_frequency_motion(comps, table, 0.0, 0.0, 0.0, np.nan)
    with pytest.raises(ParameterError, match="rao"):
        wave_frequency_motion(comps, "table", 0.0, 0.0, 0.0, 0.0)  # type: ignore[arg-type]
    with pytest.raises(ParameterError, match="n_directions"):
        response_spectrum(table, SeaSpectrum(kind="jonswap", hs_m=2.0, tp_s=7.0), SHORT, 0.0,
                          np.linspace(0.1, 2.0, 5), n_directions=3)
