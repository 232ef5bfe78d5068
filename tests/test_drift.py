"""Second-order drift loads against Faltinsen's wall formula, Wiegel and Newman."""

from __future__ import annotations

import numpy as np
import pytest
from scipy import signal

from wavebench.core.constants import RHO_SEAWATER, G
from wavebench.core.errors import ParameterError
from wavebench.core.streams import TrialStreams
from wavebench.sea.drift import DriftModel, box_waterline, drift_force, heading_table, reflection_squared
from wavebench.sea.realisation import realise_sea
from wavebench.sea.spectra import SeaSpectrum
from wavebench.sea.spreading import DirectionalSpreading

RHO_G = RHO_SEAWATER * G  # g = 9.81 m/s^2 throughout


def test_box_heading_table_matches_wall_formula() -> None:
    length, beam = 20.0, 6.0
    table = heading_table(box_waterline(length, beam, bow_fraction=0.0))
    n = table.shape[0] - 1
    deg = lambda d: int(round(d * n / 360.0))  # noqa: E731
    # Faltinsen (1990) sec. 5.4: a totally reflecting vertical wall of length l in
    # normally incident short waves feels a mean force rho g a^2 l / 2 along the waves.
    assert table[deg(0), 0] == pytest.approx(0.5 * RHO_G * beam)  # following: on the transom
    assert table[deg(180), 0] == pytest.approx(-0.5 * RHO_G * beam)  # head: on the bow face
    assert table[deg(90), 1] == pytest.approx(0.5 * RHO_G * length)  # waves toward starboard
    # oblique incidence: force normal to each wall ~ sin^2 of the angle between the
    # wave direction and the wall (Faltinsen 1990, sec. 5.4)
    for b in (20.0, 45.0, 70.0):
        beta = np.radians(b)
        assert table[deg(b), 0] == pytest.approx(0.5 * RHO_G * beam * np.cos(beta) ** 2)
        assert table[deg(b), 1] == pytest.approx(0.5 * RHO_G * length * np.sin(beta) ** 2)
    # a box centred on the origin has no yaw moment (symmetry)
    np.testing.assert_allclose(table[:, 2], 0.0, atol=1e-9 * RHO_G * length**2)


def test_ship_waterline_symmetry() -> None:
    table = heading_table(box_waterline(7.0, 2.5, bow_fraction=0.25))
    n = table.shape[0] - 1
    # port/starboard mirror symmetry: G_x(beta) = G_x(-beta), G_y(beta) = -G_y(-beta),
    # G_n(beta) = -G_n(-beta) (symmetry of the hull about its centreline)
    i = np.arange(n + 1)
    j = (n - i) % n
    np.testing.assert_allclose(table[i, 0], table[j, 0], atol=1e-9)
    np.testing.assert_allclose(table[i, 1], -table[j, 1], atol=1e-9)
    np.testing.assert_allclose(table[i, 2], -table[j, 2], atol=1e-9)
    # head seas on a pointed bow: smaller mean surge load than on a flat transom
    assert abs(table[n // 2, 0]) < abs(table[0, 0])


def test_wiegel_reflection_limits() -> None:
    k = np.logspace(-3, 1, 50)
    # Wiegel (1960): deep water, transmitted energy share exp(-2 k d)
    np.testing.assert_allclose(reflection_squared(k, 2.0), 1.0 - np.exp(-2.0 * k * 2.0), rtol=1e-12)
    # a barrier reaching the seabed transmits nothing
    np.testing.assert_allclose(reflection_squared(k, 10.0, 10.0), 1.0, atol=1e-12)
    # finite depth tends to the deep-water form when kh is large
    kk = np.array([2.0, 5.0])
    np.testing.assert_allclose(reflection_squared(kk, 1.0, 15.0), 1.0 - np.exp(-2.0 * kk), rtol=1e-9)
    with pytest.raises(ParameterError, match="draft_m"):
        reflection_squared(k, -1.0)


def _sea(n_trials: int, seed: int = 3):
    spec = SeaSpectrum(kind="jonswap", hs_m=2.0, tp_s=6.0)
    spread = DirectionalSpreading(kind="cos2s", exponent=8.0, mean_dir_deg=200.0)
    return realise_sea(spec, spread, TrialStreams(seed, range(n_trials)), n_components=80)


def test_newman_mean_equals_mean_drift_over_long_record() -> None:
    comps = _sea(4)
    model = DriftModel.for_hull(comps, length_m=7.0, beam_m=2.5, draft_m=0.6)
    n = comps.n_trials
    zeros = np.zeros(n)
    t = np.arange(0.0, 6000.0, 0.5)
    f = np.stack([drift_force(model, comps, zeros, zeros, zeros, ti) for ti in t], axis=1)
    mean = model.mean_force(comps, zeros)
    # Newman (1974): the time mean of the slowly varying load is sum a_j^2 T_jj.
    # The record mean converges like the standard error of a process whose
    # correlation time is ~2 pi / (band width); allow 5 % of the mean magnitude.
    scale = np.abs(mean).max(axis=1, keepdims=True)
    assert np.all(np.abs(f.mean(axis=1) - mean) <= 0.05 * scale)


def test_newman_load_holds_only_difference_frequencies() -> None:
    comps = _sea(1, seed=8)
    model = DriftModel.for_hull(comps, length_m=7.0, beam_m=2.5, draft_m=0.6)
    z = np.zeros(1)
    fs = 4.0
    t = np.arange(0.0, 2048.0, 1.0 / fs)
    fx = np.array([drift_force(model, comps, z, z, z, ti)[0, 0] for ti in t])
    f, p = signal.welch(fx - fx.mean(), fs=fs, nperseg=1024)
    band = (comps.omega_radps.max() - comps.omega_radps.min()) / (2.0 * np.pi)
    # Newman's approximation keeps only omega_j - omega_k (Faltinsen 1990, sec. 5.5):
    # no power above the spectrum's bandwidth, in particular none near 2 omega_p.
    above = p[f > band * 1.05].sum()
    assert above < 1e-6 * p.sum()


def test_drift_force_batch_slicing() -> None:
    comps = _sea(12)
    model = DriftModel.for_hull(comps, length_m=7.0, beam_m=2.5, draft_m=0.6)
    rng = np.random.default_rng(0)
    xn, xe, psi = rng.normal(0, 50, 12), rng.normal(0, 50, 12), rng.uniform(-3, 3, 12)
    full = drift_force(model, comps, xn, xe, psi, 12.3)
    i = 5
    sub = comps.subset(slice(i, i + 1))
    alone = drift_force(
        DriftModel(model.table, model.reflection[i : i + 1]), sub, xn[i : i + 1], xe[i : i + 1], psi[i : i + 1], 12.3
    )
    assert np.array_equal(alone[0], full[i])
