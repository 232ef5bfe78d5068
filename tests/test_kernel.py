"""The compiled craft-in-the-sea kernel against its plain numpy twin and analytic results."""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

from wavebench.core.errors import ParameterError
from wavebench.core.streams import TrialStreams
from wavebench.craft.catalogue import demo_craft
from wavebench.craft.kernel import HoldPilot, Plant, advance, advance_reference
from wavebench.sea.drift import DriftModel
from wavebench.sea.realisation import realise_sea
from wavebench.sea.spectra import SeaSpectrum
from wavebench.sea.spreading import DirectionalSpreading

HULL = demo_craft("Tholepin").hull


def _plant(n: int, seed: int = 21, trials: list[int] | None = None, hull=HULL, sampling: str = "midpoint") -> Plant:
    idx = list(range(n)) if trials is None else trials
    sea = SeaSpectrum(kind="jonswap", hs_m=1.0, tp_s=4.5)
    spread = DirectionalSpreading(kind="cos2s", exponent=6.0, mean_dir_deg=60.0)
    comps = realise_sea(sea, spread, TrialStreams(seed, idx), n_components=100)
    drift = DriftModel.for_hull(comps, length_m=7.0, beam_m=2.5, draft_m=0.6)
    return Plant.build(hull, len(idx), comps, drift, drift_sampling=sampling)


def _pilot(n: int, headings: np.ndarray) -> HoldPilot:
    full = np.full(n, 1.0)
    return HoldPilot(
        u_ref_mps=3.0 * full,
        psi_ref_rad=headings,
        k_u=3000.0 * full,
        k_psi=8000.0 * full,
        k_r=5000.0 * full,
        x_max_n=4500.0 * full,
        n_max_nm=6000.0 * full,
    )


@pytest.mark.parametrize("sampling", ["midpoint", "stages"])
def test_kernel_agrees_with_numpy_oracle_over_600_s(sampling: str) -> None:
    n = 4
    plant = _plant(n, sampling=sampling)
    pilot = _pilot(n, np.array([0.0, 1.0, -2.0, 3.0]))
    cur = np.tile([0.4, -0.3], (n, 1))
    eta0, nu0 = np.zeros((n, 3)), np.zeros((n, 3))
    e1, v1, w1 = advance(plant, eta0, nu0, 0, 0.1, 6000, current_ned=cur, pilot=pilot)
    e2, v2, w2 = advance_reference(plant, eta0, nu0, 0, 0.1, 6000, current_ned=cur, pilot=pilot)
    # performance target of the project: kernel and numpy twin agree to 1e-9 m over 600 s
    assert np.max(np.abs(e1[:, :2] - e2[:, :2])) < 1e-9
    assert np.max(np.abs(e1[:, 2] - e2[:, 2])) < 1e-11
    assert np.max(np.abs(v1 - v2)) < 1e-11
    np.testing.assert_allclose(w1, w2, atol=1e-11)
    # the run is not trivial: the craft travelled and the sea pushed it about
    assert np.all(np.hypot(e1[:, 0], e1[:, 1]) > 1000.0)


def test_midpoint_sampling_tracks_stage_sampling() -> None:
    # Midpoint sampling of the slowly varying load is a second-order quadrature
    # of a load whose bandwidth (~ the spread of wave frequencies, < 3 rad/s
    # here) is far below 1/dt: over 60 s the two samplings stay within
    # millimetres while the craft travels ~180 m (measured 0.5 mm; the 5 mm
    # bound is our own engineering choice, no source).
    n = 4
    pilot = _pilot(n, np.array([0.0, 1.0, -2.0, 3.0]))
    eta0, nu0 = np.zeros((n, 3)), np.zeros((n, 3))
    e1, _, _ = advance(_plant(n, sampling="midpoint"), eta0, nu0, 0, 0.1, 600, pilot=pilot)
    e2, _, _ = advance(_plant(n, sampling="stages"), eta0, nu0, 0, 0.1, 600, pilot=pilot)
    assert np.max(np.abs(e1[:, :2] - e2[:, :2])) < 5e-3
    assert np.max(np.abs(e1[:, 2] - e2[:, 2])) < 1e-4


def test_split_calls_and_batch_slicing_are_bit_identical() -> None:
    n = 6
    plant = _plant(n)
    pilot = _pilot(n, np.linspace(-3.0, 3.0, n))
    eta0 = np.zeros((n, 3))
    nu0 = np.zeros((n, 3))
    e_one, v_one, _ = advance(plant, eta0, nu0, 0, 0.1, 600, pilot=pilot)
    e, v, w = eta0, nu0, None
    for k in range(6):
        e, v, w = advance(plant, e, v, k * 100, 0.1, 100, pilot=pilot, drift_heading_rad=w)
    assert np.array_equal(e, e_one) and np.array_equal(v, v_one)
    # trial 4 alone, with its own stream, equals trial 4 in the batch
    alone = _plant(1, trials=[4])
    p4 = _pilot(1, np.linspace(-3.0, 3.0, n)[4:5])
    e4, v4, _ = advance(alone, eta0[:1], nu0[:1], 0, 0.1, 600, pilot=p4)
    assert np.array_equal(e4[0], e_one[4]) and np.array_equal(v4[0], v_one[4])


def test_workspace_keeps_weights_between_one_step_calls_without_changing_a_bit() -> None:
    n = 5
    plant = _plant(n)
    pilot = _pilot(n, np.linspace(-2.0, 2.0, n))
    eta0, nu0 = np.zeros((n, 3)), np.zeros((n, 3))
    e_one, v_one, w_one = advance(plant, eta0, nu0, 0, 0.1, 300, pilot=pilot)
    ws = plant.workspace()
    e, v, w = eta0, nu0, None
    for k in range(300):
        e, v, w = advance(plant, e, v, k, 0.1, 1, pilot=pilot, drift_heading_rad=w, workspace=ws)
    assert np.array_equal(e, e_one) and np.array_equal(v, v_one) and np.array_equal(w, w_one)
    assert np.array_equal(ws.heading_rad, w)
    with pytest.raises(ParameterError, match="workspace"):
        advance(plant, e, v, 0, 0.1, 1, workspace=_plant(2).workspace())


def test_calm_water_steady_speed_is_the_damping_root() -> None:
    # Fossen (2021) ch. 6 damping model: at steady straight motion
    # X_u u + X_|u|u u|u| + T = 0, so u = (-X_u - sqrt(X_u^2 - 4 X_uu T)) / (2 X_uu).
    n = 3
    thrust = np.array([500.0, 1500.0, 3000.0])
    hull = dataclasses.replace(HULL)
    plant = Plant.build(hull, n)
    tau = np.stack([thrust, np.zeros(n), np.zeros(n)], axis=1)
    e, v, _ = advance(plant, np.zeros((n, 3)), np.zeros((n, 3)), 0, 0.1, 3000, tau_ext=tau)
    xu, xuu = HULL.x_u, HULL.x_uu
    u_root = (-xu - np.sqrt(xu**2 - 4.0 * xuu * thrust)) / (2.0 * xuu)
    np.testing.assert_allclose(v[:, 0], u_root, rtol=1e-9)
    np.testing.assert_allclose(v[:, 1:], 0.0, atol=1e-12)


def test_uniform_current_carries_an_unpowered_craft() -> None:
    # relative-velocity model (Fossen 2021, ch. 10): with no thrust the craft's
    # velocity over ground tends to the current
    n = 2
    plant = Plant.build(HULL, n)
    cur = np.array([[0.5, 0.2], [-0.3, 0.4]])
    eta0 = np.array([[0.0, 0.0, 0.3], [0.0, 0.0, -1.2]])
    e, v, _ = advance(plant, eta0, np.zeros((n, 3)), 0, 0.1, 6000, current_ned=cur)
    psi = e[:, 2]
    vn = np.cos(psi) * v[:, 0] - np.sin(psi) * v[:, 1]
    ve = np.sin(psi) * v[:, 0] + np.cos(psi) * v[:, 1]
    np.testing.assert_allclose(np.stack([vn, ve], axis=1), cur, atol=1e-6)


def test_per_trial_dispersed_hull() -> None:
    n = 3
    mass = HULL.mass_kg * np.array([0.9, 1.0, 1.1])
    hull = dataclasses.replace(HULL, mass_kg=mass, izz_kgm2=HULL.izz_kgm2 * mass / HULL.mass_kg)
    plant = Plant.build(hull, n)
    tau = np.tile([2000.0, 0.0, 0.0], (n, 1))
    e, v, _ = advance(plant, np.zeros((n, 3)), np.zeros((n, 3)), 0, 0.1, 50, tau_ext=tau)
    e2, v2, _ = advance_reference(plant, np.zeros((n, 3)), np.zeros((n, 3)), 0, 0.1, 50, tau_ext=tau)
    np.testing.assert_allclose(v, v2, rtol=1e-13)
    # heavier craft accelerate more slowly (Newton), all else equal
    assert v[0, 0] > v[1, 0] > v[2, 0]


def test_bad_arguments_name_the_field() -> None:
    plant = Plant.build(HULL, 2)
    with pytest.raises(ParameterError, match="eta"):
        advance(plant, np.zeros((3, 3)), np.zeros((2, 3)), 0, 0.1, 1)
    with pytest.raises(ParameterError, match="dt_s"):
        advance(plant, np.zeros((2, 3)), np.zeros((2, 3)), 0, 0.0, 1)
    with pytest.raises(ParameterError, match="drift"):
        Plant.build(HULL, 2, components=_plant(2).components)
    with pytest.raises(ParameterError, match="drift_sampling"):
        _plant(2, sampling="sometimes")
    with pytest.raises(ParameterError, match="n_trials"):
        Plant.build(HULL, 0)
    dispersed = dataclasses.replace(HULL, mass_kg=HULL.mass_kg * np.ones(3))
    with pytest.raises(ParameterError, match="hull"):
        Plant.build(dispersed, 2)
    with pytest.raises(ParameterError, match="n_steps"):
        advance(plant, np.zeros((2, 3)), np.zeros((2, 3)), 0, 0.1, 2.5)
    with pytest.raises(ParameterError, match="nu"):
        advance(plant, np.zeros((2, 3)), np.full((2, 3), np.nan), 0, 0.1, 1)
    with pytest.raises(ParameterError, match="x_max_n"):
        dataclasses.replace(_pilot(2, np.zeros(2)), x_max_n=-np.ones(2))
