"""RAO tables: closed-form physics limits, interpolation, CSV and NetCDF I/O."""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
import xarray as xr

from wavebench.core.errors import ParameterError
from wavebench.sea.rao import (
    CSV_COLUMNS,
    DOFS,
    ClosedFormHull,
    RaoTable,
    closed_form_rao,
    rao_from_dataset,
    rao_to_dataset,
    read_rao_csv,
    read_rao_netcdf,
    write_rao_csv,
    write_rao_netcdf,
)

G = 9.81  # all tests here use g = 9.81 m/s^2
SURGE, SWAY, HEAVE, ROLL, PITCH, YAW = range(6)
HEAD, FOLLOWING, BEAM_FROM_PORT, BEAM_FROM_STBD = math.pi, 0.0, math.pi / 2, 3 * math.pi / 2
BETAS = np.radians(np.arange(0.0, 360.0, 15.0))


def _hull_rao(
    omega: np.ndarray,
    beta: np.ndarray = BETAS,
    *,
    speed: float = 0.0,
    length: float = 30.0,
    beam: float = 8.0,
    draft: float = 2.0,
    cb: float = 0.6,
    zeta: float = 0.1,
    gm: float = 1.0,
) -> RaoTable:
    return closed_form_rao(
        length_m=length, beam_m=beam, draft_m=draft, block_coefficient=cb, speed_mps=speed,
        omega_grid=omega, beta_grid=beta, roll_damping_ratio=zeta, gm_m=gm, g=G,
    )


def _col(beta: float) -> int:
    return int(np.argmin(np.abs(BETAS - beta)))


# ---------------------------------------------------------------------------
# Long-wave limits and symmetry (hold for any correct RAO of a free, symmetric hull)
# ---------------------------------------------------------------------------


@pytest.mark.parametrize("speed", [0.0, 4.0])
def test_long_wave_limits_heave_pitch_roll(speed: float) -> None:
    omega = np.array([0.01, 0.02, 0.05, 1.0])
    rao = _hull_rao(omega, speed=speed)
    k = omega[0] ** 2 / G
    # Faltinsen (1990), Sea Loads on Ships and Offshore Structures, ch. 3 (chapter from
    # memory): in waves much longer than the hull a free body follows the surface, so
    # |heave| -> 1 m/m and the hull lies on the wave slope: |pitch| -> k in head and
    # following seas, |roll| -> k in beam seas.
    for beta in BETAS:
        assert abs(rao.values[HEAVE, 0, _col(beta)]) == pytest.approx(1.0, abs=1e-5)
    for beta in (HEAD, FOLLOWING):
        assert abs(rao.values[PITCH, 0, _col(beta)]) / k == pytest.approx(1.0, abs=1e-5)
    for beta in (BEAM_FROM_PORT, BEAM_FROM_STBD):
        assert abs(rao.values[ROLL, 0, _col(beta)]) / k == pytest.approx(1.0, abs=1e-3)
    # the heave follows the crest: heave (positive down) in anti-phase with the elevation
    assert rao.values[HEAVE, 0, _col(HEAD)].real == pytest.approx(-1.0, abs=1e-5)


def test_long_wave_slope_signs_follow_the_surface() -> None:
    # Linear (Airy) kinematics, the wave zeta = a cos(omega t - k x_travel): the surface
    # slope along body x is -i k cos(beta) zeta; a bow-up pitch equals that slope, a
    # starboard-down roll equals minus the slope toward starboard (i k sin(beta) zeta).
    omega = np.array([0.002, 1.0])
    rao = _hull_rao(omega)
    k = omega[0] ** 2 / G
    beta = np.radians(45.0)
    h = rao.evaluate(omega[0], beta)
    assert h[PITCH] / k == pytest.approx(-1j * math.cos(beta), abs=1e-4)
    assert h[ROLL] / k == pytest.approx(1j * math.sin(beta), abs=1e-3)
    # horizontal particle displacement a sin(phase) along the travel direction
    # (Airy kinematics): surge -> -i cos(beta), sway -> -i sin(beta)
    assert h[SURGE] == pytest.approx(-1j * math.cos(beta), abs=1e-4)
    assert h[SWAY] == pytest.approx(-1j * math.sin(beta), abs=1e-4)


@pytest.mark.parametrize("speed", [0.0, 4.0])
def test_symmetry_zero_roll_head_following_zero_pitch_beam(speed: float) -> None:
    omega = np.linspace(0.1, 3.0, 40)
    rao = _hull_rao(omega, speed=speed)
    scale_rot = np.max(np.abs(rao.values[[ROLL, PITCH]]))
    # A hull symmetric about its centre plane does not roll, sway or yaw in head or
    # following seas; a fore-aft symmetric box does not pitch in beam seas (symmetry
    # argument, e.g. Faltinsen 1990 ch. 3).
    for beta in (HEAD, FOLLOWING):
        for dof in (SWAY, ROLL, YAW):
            assert np.max(np.abs(rao.values[dof, :, _col(beta)])) < 1e-12 * max(scale_rot, 1.0)
    for beta in (BEAM_FROM_PORT, BEAM_FROM_STBD):
        assert np.max(np.abs(rao.values[PITCH, :, _col(beta)])) < 1e-12 * scale_rot
    # port/starboard mirror: roll changes sign, heave does not (symmetric hull)
    np.testing.assert_allclose(
        rao.values[ROLL, :, _col(BEAM_FROM_PORT)], -rao.values[ROLL, :, _col(BEAM_FROM_STBD)],
        atol=1e-15,
    )
    np.testing.assert_allclose(
        rao.values[HEAVE, :, _col(np.radians(60))], rao.values[HEAVE, :, _col(np.radians(300))],
        atol=1e-15,
    )


def test_heave_is_small_for_waves_much_shorter_than_the_hull() -> None:
    length = 60.0
    lam = np.linspace(length / 10.0, length / 3.0, 200)  # wavelengths L/10 .. L/3
    omega = np.sort(np.sqrt(2.0 * np.pi * G / lam))
    rao = _hull_rao(omega, length=length, beam=10.0, draft=3.0)
    # Jensen et al. (2004); Faltinsen (1990) ch. 3: pressure cancellation along the hull
    # (sin(k L/2)/(k L/2)) and with depth (exp(-k T)) make heave small in short waves.
    # "Small" = below 0.1 m/m is our threshold.
    for beta in (HEAD, FOLLOWING, np.radians(150.0)):
        assert np.max(np.abs(rao.values[HEAVE, :, _col(beta)])) < 0.1


def test_jensen_amplitude_expressions_match_complex_form() -> None:
    # A consistency check, NOT a verification against the paper: the module's complex
    # heave and pitch RAOs against the amplitude expressions of Jensen, Mansour & Olsen
    # (2004) AS RECALLED (written from memory, not re-checked against the paper). Both
    # sides come from the same recollection, so an error in the recalled formulas would
    # pass here; what this catches is a slip between the complex form in the module and
    # the amplitude form below. Recalled expressions:
    #   Phi_w = |eta F|, Phi_theta = |eta G_v|, k_e = |k cos beta|, kappa = exp(-k T),
    #   alpha = 1 - Fn sqrt(k L) cos beta, A = 2 sin(k B alpha^2 / 2) exp(-k T alpha^2),
    #   eta = [(1 - 2 k T alpha^2)^2 + (A^2 / (k B alpha^2))^2]^(-1/2),
    #   f = [(1 - k T)^2 + (A^2 / (k B alpha^3))^2]^(1/2),
    #   F = kappa f (2 / (k_e L)) sin(k_e L / 2),
    #   G_v = kappa f 24 / ((k_e L)^2 L) [sin(k_e L/2) - (k_e L/2) cos(k_e L/2)].
    # Computed here without calling the module, with B -> Cb B.
    length, beam, draft, cb, speed = 50.0, 9.0, 3.0, 0.7, 5.0
    omega = np.linspace(0.2, 2.5, 60)
    betas = np.radians([0.0, 30.0, 120.0, 180.0])  # alpha < 0 at high omega in following seas
    rao = _hull_rao(omega, betas, speed=speed, length=length, beam=beam, draft=draft, cb=cb)
    w, b = omega[:, None], betas[None, :]
    bb = cb * beam
    k = w**2 / G
    ke = np.abs(k * np.cos(b))
    alpha = 1.0 - speed / np.sqrt(G * length) * np.sqrt(k * length) * np.cos(b)
    assert np.any(alpha < 0.0) and np.all(np.abs(alpha) > 1e-6)
    a = 2.0 * np.sin(0.5 * k * bb * alpha**2) * np.exp(-k * draft * alpha**2)
    eta = 1.0 / np.sqrt((1 - 2 * k * draft * alpha**2) ** 2 + (a**2 / (k * bb * alpha**2)) ** 2)
    f = np.sqrt((1 - k * draft) ** 2 + (a**2 / (k * bb * alpha**3)) ** 2)
    kappa = np.exp(-k * draft)
    x = 0.5 * ke * length
    heave = eta * kappa * f * np.sin(x) / x
    pitch = eta * kappa * f * 24.0 / ((ke * length) ** 2 * length) * (np.sin(x) - x * np.cos(x))
    np.testing.assert_allclose(np.abs(rao.values[HEAVE]), np.abs(heave), rtol=1e-10, atol=1e-14)
    np.testing.assert_allclose(np.abs(rao.values[PITCH]), np.abs(pitch), rtol=1e-8, atol=1e-14)


def test_heave_resonance_at_hydrostatic_natural_frequency() -> None:
    # Undamped natural frequency omega_n = sqrt(C33 / (M + A33)) (single-DOF oscillator,
    # any seakeeping text, e.g. Faltinsen 1990 ch. 3). For a box C33 = rho g B L,
    # M = rho B T L; the closed form takes A33 = M (added-mass ratio 1, Jensen et al. 2004,
    # from memory), so omega_n = sqrt(g / (2 T)). A narrow deep box (B/T = 0.5) is
    # lightly damped, so |H| peaks close to omega_n; a short one (L = 4 m) avoids length
    # cancellation.
    draft = 2.0
    wn = math.sqrt(G / (draft * (1.0 + 1.0)))
    omega = np.linspace(0.3, 4.0, 3701)
    rao = _hull_rao(omega, np.array([BEAM_FROM_PORT, HEAD]), length=4.0, beam=1.0,
                    draft=draft, cb=1.0)
    for j in range(2):
        peak = omega[np.argmax(np.abs(rao.values[HEAVE, :, j]))]
        assert peak == pytest.approx(wn, rel=0.01)
    # at omega_n the motion lags the excitation by 90 degrees (single-DOF oscillator):
    # the denominator is purely imaginary, so |H| there is the excitation over damping
    # and greatly exceeds the long-wave value 1.
    assert abs(rao.evaluate(wn, BEAM_FROM_PORT)[HEAVE]) > 3.0
    assert ClosedFormHull(length_m=4.0, beam_m=1.0, draft_m=draft, block_coefficient=1.0,
                          gm_m=0.5, roll_damping_ratio=0.1).heave_natural_frequency(G) == (
        pytest.approx(wn, rel=1e-15))


def test_heave_resonance_moves_with_encounter_frequency() -> None:
    # Doppler shift of the encounter frequency, omega_e = omega - k U cos(beta) (any
    # seakeeping text, e.g. Faltinsen 1990): at speed U in head seas the resonance
    # omega_e = omega_n is met at omega(1 + omega U / g) = omega_n.
    draft, speed = 2.0, 3.0
    wn = math.sqrt(G / (2.0 * draft))
    expected = (-1.0 + math.sqrt(1.0 + 4.0 * speed * wn / G)) / (2.0 * speed / G)
    omega = np.linspace(0.3, 3.0, 2701)
    rao = _hull_rao(omega, np.array([HEAD]), speed=speed, length=4.0, beam=1.0,
                    draft=draft, cb=1.0)
    peak = omega[np.argmax(np.abs(rao.values[HEAVE, :, 0]))]
    assert peak == pytest.approx(expected, rel=0.01)
    assert expected < wn * 0.8  # the shift is large compared with the tolerance


def test_roll_resonance_at_roll_natural_frequency() -> None:
    # Single-DOF oscillator: |1/D| peaks at omega_phi sqrt(1 - 2 zeta^2), with the
    # natural frequency omega_phi = sqrt(g GM) / r44 (rigid-body roll period
    # T = 2 pi r44 / sqrt(g GM), any stability text).
    beam, gm, zeta = 8.0, 1.0, 0.05
    w_phi = math.sqrt(G * gm) / (0.4 * beam)
    omega = np.linspace(0.3, 2.0, 3401)
    rao = _hull_rao(omega, np.array([BEAM_FROM_PORT]), beam=beam, gm=gm, zeta=zeta)
    peak = omega[np.argmax(np.abs(rao.values[ROLL, :, 0]))]
    assert peak == pytest.approx(w_phi * math.sqrt(1 - 2 * zeta**2), rel=0.02)
    # at resonance the amplification over the wave slope is about 1/(2 zeta) = 10
    k = w_phi**2 / G
    assert 5.0 < abs(rao.evaluate(w_phi, BEAM_FROM_PORT)[ROLL]) / k < 11.0


def test_closed_form_rejects_bad_particulars() -> None:
    with pytest.raises(ParameterError, match="length_m"):
        _hull_rao(np.array([0.1, 1.0]), length=-3.0)
    with pytest.raises(ParameterError, match="block_coefficient"):
        _hull_rao(np.array([0.1, 1.0]), cb=1.5)
    with pytest.raises(ParameterError, match="omega_grid"):
        _hull_rao(np.array([0.0, 1.0]))
    with pytest.raises(ParameterError, match="omega_grid"):
        _hull_rao(np.array([1.0, 0.5]))


# ---------------------------------------------------------------------------
# Interpolation
# ---------------------------------------------------------------------------


def _random_table(seed: int = 0, n_w: int = 7, n_b: int = 9) -> RaoTable:
    rng = np.random.default_rng(seed)
    omega = np.sort(rng.uniform(0.1, 3.0, n_w))
    beta = np.sort(rng.uniform(0.0, 2 * np.pi, n_b))
    values = rng.normal(size=(6, n_w, n_b)) + 1j * rng.normal(size=(6, n_w, n_b))
    return RaoTable(omega_radps=omega, beta_rad=beta, values=values, speed_mps=2.5,
                    description="random test table")


def test_interpolation_reproduces_grid_values_exactly() -> None:
    table = _random_table()
    w, b = np.meshgrid(table.omega_radps, table.beta_rad, indexing="ij")
    out = table.evaluate_by_dof(w, b)
    assert np.array_equal(out, table.values)
    # also on uniform grids, where the cell index is computed arithmetically
    uniform = _hull_rao(np.linspace(0.1, 3.0, 30))
    wu, bu = np.meshgrid(uniform.omega_radps, uniform.beta_rad, indexing="ij")
    assert np.array_equal(uniform.evaluate_by_dof(wu, bu), uniform.values)
    # the same directions one turn on
    out2 = table.evaluate_by_dof(w, b + 2 * np.pi)
    np.testing.assert_allclose(out2, table.values, rtol=1e-9, atol=1e-9)  # b + 2 pi rounds


def test_interpolation_is_bilinear_and_periodic() -> None:
    table = _random_table(1)
    w0, w1 = table.omega_radps[2], table.omega_radps[3]
    # midway in omega at a grid direction: mean of the two neighbours
    mid = table.evaluate(0.5 * (w0 + w1), table.beta_rad[4])
    np.testing.assert_allclose(mid, 0.5 * (table.values[:, 2, 4] + table.values[:, 3, 4]),
                               rtol=1e-12)
    # across the seam between the last and the first direction (wrap-around)
    b_last, b_first = table.beta_rad[-1], table.beta_rad[0] + 2 * np.pi
    seam = table.evaluate(w0, 0.5 * (b_last + b_first))
    np.testing.assert_allclose(seam, 0.5 * (table.values[:, 2, -1] + table.values[:, 2, 0]),
                               rtol=1e-12)
    # vectorised over (n_trials, n_components)
    rng = np.random.default_rng(2)
    w = rng.uniform(0.0, 4.0, (5, 11))
    b = rng.uniform(-10.0, 10.0, (5, 11))
    out = table.evaluate(w, b)
    assert out.shape == (5, 11, 6)
    assert np.array_equal(out[3, 7], table.evaluate(w[3, 7], b[3, 7]))


def test_outside_the_frequency_range() -> None:
    table = _random_table(3)
    wmin, wmax = table.omega_radps[0], table.omega_radps[-1]
    b = 0.7
    at_min = table.evaluate(wmin, b)
    below = table.evaluate(0.5 * wmin, b)
    # zero above the table
    assert np.all(table.evaluate(wmax * 1.01, b) == 0.0)
    # long-wave limit below: translations held, rotations scale as k ~ omega^2
    np.testing.assert_array_equal(below[:3], at_min[:3])
    np.testing.assert_allclose(below[3:], 0.25 * at_min[3:], rtol=1e-15)


def test_axis_conversion_and_symmetric_completion() -> None:
    omega = np.linspace(0.1, 2.0, 12)
    full = _hull_rao(omega, np.radians(np.arange(0.0, 360.0, 30.0)))
    half = _hull_rao(omega, np.radians(np.arange(0.0, 181.0, 30.0)))
    completed = half.complete_by_symmetry()
    np.testing.assert_allclose(completed.beta_rad, full.beta_rad, rtol=1e-15)
    np.testing.assert_allclose(completed.values, full.values, rtol=1e-10, atol=1e-15)
    # x fwd, y port, z up differs from x fwd, y stbd, z down by a half turn about x:
    # y, z and the rotations about them change sign (right-handed frames).
    flipped = full.from_z_up_axes()
    for n, sign in enumerate([1, -1, -1, 1, -1, -1]):
        np.testing.assert_array_equal(flipped.values[n], sign * full.values[n])


def test_table_validation() -> None:
    ok = _random_table()
    with pytest.raises(ParameterError, match="values"):
        RaoTable(omega_radps=ok.omega_radps, beta_rad=ok.beta_rad, values=ok.values[:3])
    with pytest.raises(ParameterError, match="beta_rad"):
        RaoTable(omega_radps=ok.omega_radps, beta_rad=np.array([0.0, 7.0]),
                 values=np.zeros((6, ok.n_omega, 2)))
    with pytest.raises(ParameterError, match="omega_radps"):
        RaoTable(omega_radps=np.array([1.0]), beta_rad=np.array([0.0]),
                 values=np.zeros((6, 1, 1)))
    bad = ok.values.copy()
    bad[0, 0, 0] = np.nan
    with pytest.raises(ParameterError, match="values"):
        RaoTable(omega_radps=ok.omega_radps, beta_rad=ok.beta_rad, values=bad)


# ---------------------------------------------------------------------------
# Files
# ---------------------------------------------------------------------------


def _assert_same_table(a: RaoTable, b: RaoTable) -> None:
    np.testing.assert_allclose(b.omega_radps, a.omega_radps, rtol=1e-15)
    np.testing.assert_allclose(b.beta_rad, a.beta_rad, rtol=1e-14)
    np.testing.assert_allclose(b.values, a.values, rtol=1e-13, atol=1e-15)
    assert b.speed_mps == a.speed_mps
    assert b.description == a.description


def test_csv_round_trip(tmp_path: Path) -> None:
    table = _hull_rao(np.linspace(0.1, 2.5, 15), speed=3.0)
    path = tmp_path / "hull.csv"
    write_rao_csv(table, path)
    back = read_rao_csv(path)
    _assert_same_table(table, back)
    assert back.description.startswith("closed form")


@pytest.mark.parametrize("form", ["real_imag", "amplitude_phase"])
def test_netcdf_round_trip(tmp_path: Path, form: str) -> None:
    table = _random_table(4)
    path = tmp_path / "hull.nc"
    write_rao_netcdf(table, path, form=form)
    back = read_rao_netcdf(path)
    _assert_same_table(table, back)
    if form == "real_imag":
        assert np.array_equal(back.values, table.values)  # lossless form


def test_dataset_in_other_dim_order_and_radians() -> None:
    table = _random_table(5)
    ds = rao_to_dataset(table).transpose("beta", "dof", "omega")
    ds = ds.assign_coords(beta=("beta", table.beta_rad, {"units": "rad"}))
    back = rao_from_dataset(ds)
    np.testing.assert_allclose(back.values, table.values, rtol=1e-15)
    with pytest.raises(ParameterError, match="beta"):
        rao_from_dataset(ds.assign_coords(beta=("beta", table.beta_rad)))  # no units
    with pytest.raises(ParameterError, match="amplitude"):
        rao_from_dataset(ds.drop_vars("imag"))
    renamed = xr.Dataset(
        {"real": ds["real"], "imag": ds["imag"]}
    ).assign_coords(dof=("dof", ["surge", "sway", "heave", "roll", "pitch", "spin"]))
    with pytest.raises(ParameterError, match="spin"):
        rao_from_dataset(renamed)


def _write_lines(path: Path, lines: list[str]) -> Path:
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def _small_csv_lines() -> list[str]:
    lines = ["# speed_mps = 1.5", ",".join(CSV_COLUMNS)]
    for w in (0.5, 1.0):
        for b in (0.0, 180.0):
            lines.append(f"{w},{b},heave,1.0,180.0")
    return lines


def test_csv_partial_dofs_and_metadata(tmp_path: Path) -> None:
    path = _write_lines(tmp_path / "ok.csv", _small_csv_lines())
    table = read_rao_csv(path)
    assert table.speed_mps == 1.5
    np.testing.assert_allclose(table.values[HEAVE], -1.0 + 0j, atol=1e-15)
    assert np.all(table.values[[SURGE, SWAY, ROLL, PITCH, YAW]] == 0.0)
    with pytest.raises(ParameterError, match="speed_mps"):
        read_rao_csv(path, speed_mps=3.0)


@pytest.mark.parametrize(
    ("edit", "match"),
    [
        (lambda ls: [ls[0], "omega_radps,beta_deg,dof,amplitude", *[",".join(r.split(",")[:4])
                                                                    for r in ls[2:]]],
         "phase_deg"),
        (lambda ls: [*ls[:3], ls[3].replace("heave", "heaving"), *ls[4:]], "heaving"),
        (lambda ls: [*ls[:4], ls[4].replace(",1.0,180.0", ",nan,180.0"), *ls[5:]],
         "amplitude"),
        (lambda ls: [*ls[:4], ls[4].replace(",1.0,180.0", ",-1.0,180.0"), *ls[5:]],
         "amplitude"),
        (lambda ls: ls[:-1], "missing"),
        (lambda ls: [*ls, ls[-1]], "once"),
        (lambda ls: [*ls[:2], ls[2].replace("0.5,", "x,"), *ls[3:]], "omega_radps"),
    ],
)
def test_bad_csv_names_column_and_value(tmp_path: Path, edit, match: str) -> None:
    path = _write_lines(tmp_path / "bad.csv", edit(_small_csv_lines()))
    with pytest.raises(ParameterError, match=match) as info:
        read_rao_csv(path)
    assert "bad.csv" in str(info.value)


def test_bad_csv_messages_name_line_and_column(tmp_path: Path) -> None:
    lines = _small_csv_lines()
    lines[3] = lines[3].replace(",1.0,180.0", ",nan,180.0")
    path = _write_lines(tmp_path / "nan.csv", lines)
    with pytest.raises(ParameterError) as info:
        read_rao_csv(path)
    msg = str(info.value)
    assert "line 4" in msg and "'amplitude'" in msg and "nan" in msg
    lines = _small_csv_lines()
    lines[2] = lines[2].replace("heave", "Heav")
    path = _write_lines(tmp_path / "dof.csv", lines)
    with pytest.raises(ParameterError) as info:
        read_rao_csv(path)
    msg = str(info.value)
    assert "line 3" in msg and "'dof'" in msg and "'Heav'" in msg
    assert all(d in msg for d in DOFS)
