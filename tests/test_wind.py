"""Tests of the wind block (wavebench.sea.wind)."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate import quad
from scipy.signal import welch
from scipy.special import beta as beta_fn

from wavebench.core.errors import ParameterError
from wavebench.core.params import params_from_dict
from wavebench.core.streams import TrialStreams
from wavebench.sea.wind import (
    WindageParams,
    WindCoefficientTable,
    WindParams,
    fossen_coefficients,
    gust_speed,
    init_wind,
    npd_mean_speed,
    npd_spectrum,
    relative_wind,
    table_coefficients,
    wind_loads,
    wind_loads_on_craft,
    wind_speed,
    wind_speed_series,
    wind_velocity_ned,
)

RHO_AIR_ISO2533 = 1.225  # ISO 2533 standard atmosphere, sea level [kg/m^3]


def npd_by_hand(f: float, u0: float, z: float) -> float:
    """NPD spectrum typed from DNV-RP-C205 (2010), wind section (formula from memory):

    S(f) = 320 (U0/10)^2 (z/10)^0.45 / (1 + f~^n)^(5/(3n)),
    f~ = 172 f (z/10)^(2/3) (U0/10)^(-0.75), n = 0.468.
    """
    n = 0.468
    f_tilde = 172.0 * f * (z / 10.0) ** (2.0 / 3.0) * (u0 / 10.0) ** -0.75
    return 320.0 * (u0 / 10.0) ** 2 * (z / 10.0) ** 0.45 / (1.0 + f_tilde**n) ** (5.0 / (3.0 * n))


# ---------------------------------------------------------------------------
# NPD spectrum and profile
# ---------------------------------------------------------------------------


def test_npd_spectrum_at_one_point_by_hand() -> None:
    # DNV-RP-C205 NPD spectrum, U0 = 20 m/s, z = 10 m, f = 0.01 Hz, step by step:
    #   (U0/10)^2 = 4, (z/10)^0.45 = 1
    #   f~ = 172 * 0.01 * 2^-0.75 = 1.72 * 0.5946035575 = 1.0227181
    #   f~^0.468 = exp(0.468 ln 1.0227181) = 1.0105688
    #   (1 + f~^n)^(5/(3*0.468)) = 2.0105688^3.5612536 = 12.0285
    #   S = 320 * 4 / 12.0285 = 106.41 m^2/s^2/Hz
    f_tilde = 1.72 * 2.0**-0.75
    denom = (1.0 + math.exp(0.468 * math.log(f_tilde))) ** (5.0 / (3.0 * 0.468))
    s_hand = 1280.0 / denom
    assert s_hand == pytest.approx(106.41, abs=0.01)  # the rounded hand result above
    assert float(npd_spectrum(0.01, 20.0, 10.0)) == pytest.approx(s_hand, rel=1e-13)
    # a second point exercising the height terms: U0 = 10 m/s, z = 40 m, f = 0.05 Hz
    assert float(npd_spectrum(0.05, 10.0, 40.0)) == pytest.approx(
        npd_by_hand(0.05, 10.0, 40.0), rel=1e-13
    )


def test_npd_spectrum_integral_has_its_closed_form() -> None:
    # Beta-function integral: int_0^inf (1 + x^n)^(-p) dx = (1/n) B(1/n, p - 1/n)
    # (substitute y = x^n / (1 + x^n)). With x = a f, a = 172 (z/10)^(2/3) (U0/10)^-0.75,
    # p = 5/(3n): int_0^inf S df = S(0) / a * (1/n) B(1/n, 2/(3n)).
    n = 0.468
    for u0, z in ((8.0, 10.0), (25.0, 30.0)):
        a = 172.0 * (z / 10.0) ** (2.0 / 3.0) * (u0 / 10.0) ** -0.75
        s0 = 320.0 * (u0 / 10.0) ** 2 * (z / 10.0) ** 0.45
        closed = s0 / a * beta_fn(1.0 / n, 2.0 / (3.0 * n)) / n
        head, _ = quad(lambda f, u0=u0, z=z: float(npd_spectrum(f, u0, z)), 0.0, 1.0, limit=400)
        tail, _ = quad(lambda f, u0=u0, z=z: float(npd_spectrum(f, u0, z)), 1.0, np.inf, limit=400)
        assert head + tail == pytest.approx(closed, rel=1e-6)


def test_npd_mean_profile() -> None:
    # DNV-RP-C205 NPD profile U(z) = U0 (1 + C ln(z/10)), C = 5.73e-2 sqrt(1 + 0.148 U0)
    # (formula from memory, not re-checked). At z = 10 m it returns U0 by definition of U0.
    # U0 = 20, z = 40: C = 0.0573 sqrt(3.96) = 0.11402528, U = 20 (1 + C ln 4) = 23.16146.
    assert float(npd_mean_speed(20.0, 10.0)) == 20.0
    assert float(npd_mean_speed(20.0, 40.0)) == pytest.approx(23.16146, abs=1e-5)


# ---------------------------------------------------------------------------
# Gust synthesis
# ---------------------------------------------------------------------------

U0, F_MIN, F_MAX = 20.0, 1.0 / 3600.0, 0.25


def _gust_params(**kw) -> WindParams:
    return WindParams(speed_mps=U0, direction_from_deg=200.0, f_max_hz=F_MAX, **kw)


def test_component_variance_equals_band_integral_of_spectrum() -> None:
    # Random-phase sum: Var = sum a_k^2 / 2; with a_k^2 = 2 * (integral of S over bin k)
    # it must equal the integral of the NPD spectrum over the band (hand formula, scipy quad).
    state = init_wind(_gust_params(), TrialStreams(seed=3, trials=4))
    band, _ = quad(npd_by_hand, F_MIN, F_MAX, args=(U0, 10.0), limit=400)
    np.testing.assert_allclose(np.sum(state.amplitudes_mps**2, axis=1) / 2.0, band, rtol=1e-6)


@pytest.fixture(scope="module")
def gust_records() -> tuple[np.ndarray, float]:
    n_trials, dt, duration = 16, 1.0, 3 * 3600.0
    state = init_wind(_gust_params(), TrialStreams(seed=21, trials=n_trials))
    t = np.arange(0.0, duration, dt)
    return wind_speed_series(state, t, include_mean=False), dt


def test_gust_record_variance_equals_spectrum_integral(gust_records) -> None:
    # The variance of a long gust record equals int S df over the simulated band
    # (DNV-RP-C205 NPD spectrum typed by hand, integrated with scipy quad).
    # Record-length tolerance: for a stationary Gaussian record of length T the mean
    # square has Var = (1/T) int S(f)^2 df (one-sided S; Bendat & Piersol, Random Data,
    # random error of mean-square estimates, general form, from memory); averaged over
    # independent trials, tolerance 5 standard errors.
    x, dt = gust_records
    n_trials, n_t = x.shape
    duration = n_t * dt
    band, _ = quad(npd_by_hand, F_MIN, F_MAX, args=(U0, 10.0), limit=400)
    sq, _ = quad(lambda f: npd_by_hand(f, U0, 10.0) ** 2, F_MIN, F_MAX, limit=400)
    std_err = math.sqrt(sq / duration / n_trials)
    mean_square = float(np.mean(x * x))  # the gust has zero mean by construction
    assert abs(mean_square - band) < 5 * std_err
    assert 5 * std_err < 0.2 * band  # the check is informative


def test_gust_record_psd_matches_spectrum(gust_records) -> None:
    # Reference library: scipy.signal.welch PSD of the records, band-integrated, against
    # the NPD spectrum (hand formula) integrated over the same bands. Each band holds
    # >= 15 frequency bins x ~20 segments x 16 trials: chi-square relative standard
    # error below 2 %; tolerance 10 %.
    x, dt = gust_records
    f, pxx = welch(x, fs=1.0 / dt, nperseg=1024, axis=-1)
    pxx = pxx.mean(axis=0)
    df = f[1] - f[0]
    for lo, hi in ((0.005, 0.02), (0.02, 0.08), (0.08, 0.2)):
        sel = (f >= lo) & (f < hi)
        measured = float(np.sum(pxx[sel]) * df)
        expected, _ = quad(npd_by_hand, f[sel][0] - df / 2, f[sel][-1] + df / 2, args=(U0, 10.0))
        assert measured == pytest.approx(expected, rel=0.10)


def test_gust_frequencies_are_jittered_within_bins() -> None:
    # Design requirement: frequencies are drawn inside geometric bins per trial, so the
    # record has no common period (no two trials, no two bins share a frequency grid).
    p = _gust_params(n_components=50)
    state = init_wind(p, TrialStreams(seed=8, trials=3))
    edges = np.geomspace(F_MIN, F_MAX, 51)
    assert np.all((state.freqs_hz >= edges[:-1]) & (state.freqs_hz < edges[1:]))
    assert not np.any(np.isclose(state.freqs_hz[0], state.freqs_hz[1], rtol=1e-12, atol=0))


def test_no_gust_spectrum_gives_steady_wind() -> None:
    state = init_wind(
        WindParams(speed_mps=9.0, gust_spectrum="none"), TrialStreams(seed=0, trials=2)
    )
    np.testing.assert_array_equal(wind_speed(state, [0.0, 500.0]), [9.0, 9.0])


def test_wind_from_convention() -> None:
    # Meteorological convention (WMO): the wind direction is where the wind blows FROM.
    # A westerly (from 270 deg) moves the air toward the east.
    state = init_wind(
        WindParams(speed_mps=10.0, direction_from_deg=270.0, gust_spectrum="none"),
        TrialStreams(seed=0, trials=1),
    )
    np.testing.assert_allclose(wind_velocity_ned(state, 0.0), [[0.0, 10.0]], atol=1e-12)


def test_trial_alone_equals_trial_in_batch_of_50() -> None:
    # Architecture principle 4: trial i is bit-identical alone or in a batch.
    p = WindParams(speed_mps=14.0, direction_from_deg=45.0, height_m=6.0)
    batch = init_wind(p, TrialStreams(seed=77, trials=50))
    t = np.linspace(0.0, 600.0, 50)
    w_batch = wind_speed(batch, t)
    series_batch = wind_speed_series(batch, np.arange(0.0, 60.0, 0.5))
    for i in (0, 23, 49):
        alone = init_wind(p, TrialStreams(seed=77, trials=[i]))
        for name in ("freqs_hz", "amplitudes_mps", "phases_rad"):
            assert np.array_equal(getattr(alone, name)[0], getattr(batch, name)[i])
        assert np.array_equal(wind_speed(alone, t[i : i + 1])[0], w_batch[i])
        assert np.array_equal(
            wind_speed_series(alone, np.arange(0.0, 60.0, 0.5))[0], series_batch[i]
        )


# ---------------------------------------------------------------------------
# Loads
# ---------------------------------------------------------------------------

WINDAGE = WindageParams(
    frontal_area_m2=10.0,
    lateral_area_m2=40.0,
    length_oa_m=20.0,
    c_x=0.7,
    c_y=0.8,
    c_n=0.1,
    rho_air_kg_m3=RHO_AIR_ISO2533,
)


def _loads(wind_from_deg, heading_deg, speed=12.0, u=0.0, v=0.0) -> np.ndarray:
    v_rw, g = relative_wind(
        np.atleast_1d(u),
        np.atleast_1d(v),
        np.deg2rad(np.atleast_1d(heading_deg)),
        np.atleast_1d(speed),
        np.deg2rad(np.atleast_1d(wind_from_deg)),
    )
    return wind_loads(WINDAGE, v_rw, g)


def test_head_and_following_wind() -> None:
    # Fossen (2021), wind forces: C_X = -c_x cos(gamma_rw), gamma_rw = 0 for a head wind,
    # so a head wind gives a NEGATIVE surge force; magnitude 0.5 rho V^2 c_x A_Fw
    # = 0.5 * 1.225 * 144 * 0.7 * 10 = 617.4 N (hand value).
    head = _loads(wind_from_deg=30.0, heading_deg=30.0)[0]
    assert head[0] == pytest.approx(-617.4, rel=1e-12)
    assert abs(head[1]) < 1e-9 and abs(head[2]) < 1e-9
    follow = _loads(wind_from_deg=210.0, heading_deg=30.0)[0]
    assert follow[0] == pytest.approx(617.4, rel=1e-12)


def test_beam_winds_push_to_leeward() -> None:
    # Physical sign: a wind from starboard pushes the craft to port (Y < 0, body y is
    # starboard); Fossen C_Y = c_y sin(gamma_rw) with gamma_rw = -90 deg from starboard.
    # |Y| = 0.5 * 1.225 * 144 * 0.8 * 40 = 2822.4 N (hand value); C_N = c_n sin(2 gamma) = 0.
    stbd = _loads(wind_from_deg=90.0, heading_deg=0.0)[0]
    port = _loads(wind_from_deg=270.0, heading_deg=0.0)[0]
    assert stbd[1] == pytest.approx(-2822.4, rel=1e-12)
    assert port[1] == pytest.approx(2822.4, rel=1e-12)
    assert abs(stbd[0]) < 1e-9 and abs(stbd[2]) < 1e-9


def test_bow_winds_mirror_and_magnitude() -> None:
    # Mirror symmetry of Fossen's curves: winds at +/-30 deg off the bow give equal surge
    # force and opposite sway force and yaw moment. Magnitude from the formula
    # tau = 0.5 rho V^2 [C_X A_Fw, C_Y A_Lw, C_N A_Lw L_oa] at gamma_rw = -30 deg
    # (wind 30 deg on the starboard bow), V = 10 m/s, computed by hand here.
    stbd = _loads(wind_from_deg=30.0, heading_deg=0.0, speed=10.0)[0]
    port = _loads(wind_from_deg=-30.0, heading_deg=0.0, speed=10.0)[0]
    q = 0.5 * 1.225 * 10.0**2
    g = math.radians(-30.0)
    expected = [
        q * (-0.7 * math.cos(g)) * 10.0,
        q * (0.8 * math.sin(g)) * 40.0,
        q * (0.1 * math.sin(2 * g)) * 40.0 * 20.0,
    ]
    np.testing.assert_allclose(stbd, expected, rtol=1e-12)
    np.testing.assert_allclose(port, [expected[0], -expected[1], -expected[2]], rtol=1e-12)
    # with c_n > 0 the bow is turned away from a wind on the bow (yaw to port here)
    assert stbd[2] < 0


def test_relative_wind_from_craft_motion_and_heading_invariance() -> None:
    # Relative wind (Fossen (2021) u_rw = u - u_w, v_rw = v - v_w): a craft making 12 m/s
    # through still air feels a 12 m/s head wind; rotating heading and wind direction
    # together leaves the body-frame loads unchanged.
    moving = _loads(wind_from_deg=0.0, heading_deg=0.0, speed=0.0, u=12.0)
    head = _loads(wind_from_deg=0.0, heading_deg=0.0, speed=12.0)
    np.testing.assert_allclose(moving, head, rtol=1e-12, atol=1e-9)
    rng = np.random.default_rng(1)
    beta, psi = rng.uniform(-180, 180, 20), rng.uniform(-180, 180, 20)
    u, v = rng.uniform(-3, 5, 20), rng.uniform(-1, 1, 20)
    a = _loads(beta, psi, 9.0, u, v)
    b = _loads(beta + 77.0, psi + 77.0, 9.0, u, v)
    np.testing.assert_allclose(a, b, rtol=1e-10, atol=1e-8)


def test_loads_on_craft_match_the_parts() -> None:
    state = init_wind(
        WindParams(speed_mps=11.0, direction_from_deg=120.0), TrialStreams(seed=4, trials=3)
    )
    u, v, psi, t = np.array([2.0, 0.0, 4.0]), np.array([0.1, 0.0, -0.3]), np.zeros(3), 33.0
    v_rw, g = relative_wind(u, v, psi, wind_speed(state, t), state.direction_from_rad)
    np.testing.assert_array_equal(
        wind_loads_on_craft(WINDAGE, state, t, u, v, psi), wind_loads(WINDAGE, v_rw, g)
    )
    np.testing.assert_array_equal(
        wind_speed(state, t), np.maximum(state.mean_speed_mps + gust_speed(state, t), 0.0)
    )


# ---------------------------------------------------------------------------
# Coefficient tables
# ---------------------------------------------------------------------------


def _fossen_table(step_deg: float = 10.0) -> WindCoefficientTable:
    ang = np.arange(-180.0, 180.0, step_deg)
    c = fossen_coefficients(WINDAGE, np.deg2rad(ang))
    return WindCoefficientTable(angles_deg=ang, c_x=c[:, 0], c_y=c[:, 1], c_n=c[:, 2])


def test_table_reproduces_nodes_and_interpolates_periodically() -> None:
    # Linear interpolation is exact at the nodes; across the +/-180 deg seam it is the
    # average of the two neighbouring nodes (170 deg and -180 deg) at 175 deg, as with
    # numpy.interp(period=360) on an explicitly wrapped table.
    table = _fossen_table()
    ang = np.arange(-180.0, 180.0, 10.0)
    np.testing.assert_allclose(
        table_coefficients(table, np.deg2rad(ang)),
        fossen_coefficients(WINDAGE, np.deg2rad(ang)),
        rtol=1e-12,
        atol=1e-15,
    )
    at_seam = table_coefficients(table, np.deg2rad([175.0, -185.0, 535.0]))
    mid = 0.5 * (
        fossen_coefficients(WINDAGE, np.deg2rad(170.0))
        + fossen_coefficients(WINDAGE, np.deg2rad(-180.0))
    )
    np.testing.assert_allclose(at_seam, np.tile(mid, (3, 1)), rtol=1e-12, atol=1e-15)
    xp = np.concatenate([ang, [180.0]])
    cy = np.concatenate([table.c_y, [table.c_y[0]]])
    q = np.array([-172.5, 3.0, 96.0, 178.0])
    np.testing.assert_allclose(
        table_coefficients(table, np.deg2rad(q))[:, 1], np.interp(q, xp, cy), rtol=1e-12
    )


def test_table_loads_use_the_table() -> None:
    table = _fossen_table(5.0)
    g = np.deg2rad(np.array([-90.0, 0.0, 45.0]))
    np.testing.assert_allclose(
        wind_loads(WINDAGE, 10.0, g, table=table),
        wind_loads(WINDAGE, 10.0, g),
        rtol=1e-12,
        atol=1e-9,
    )


def test_table_validation() -> None:
    # duplicate modulo 360 with equal values is accepted (a closed table), else rejected
    ok = WindCoefficientTable(
        angles_deg=[-180.0, 0.0, 180.0], c_x=[1.0, -1.0, 1.0], c_y=[0.0, 0.0, 0.0], c_n=[0, 0, 0]
    )
    assert ok.angles_deg.tolist() == [-180.0, 0.0]
    with pytest.raises(ParameterError) as exc:
        WindCoefficientTable(
            angles_deg=[-180.0, 0.0, 180.0], c_x=[1.0, -1.0, 0.5], c_y=[0, 0, 0], c_n=[0, 0, 0]
        )
    assert exc.value.field == "angles_deg"
    with pytest.raises(ParameterError) as exc:
        WindCoefficientTable(angles_deg=[0.0, 90.0], c_x=[1.0], c_y=[0, 0], c_n=[0, 0])
    assert exc.value.field == "c_x"
    with pytest.raises(ParameterError) as exc:
        WindCoefficientTable(angles_deg=[0.0, 90.0], c_x=[1.0, np.nan], c_y=[0, 0], c_n=[0, 0])
    assert exc.value.field == "c_x"


# ---------------------------------------------------------------------------
# Bad input
# ---------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("cls", "kwargs", "field"),
    [
        (WindParams, {"speed_mps": -1.0}, "speed_mps"),
        (WindParams, {"speed_mps": float("nan")}, "speed_mps"),
        (WindParams, {"height_m": 0.0}, "height_m"),
        (WindParams, {"n_components": 0}, "n_components"),
        (WindParams, {"n_components": 2.5}, "n_components"),
        (WindParams, {"f_min_hz": 0.1, "f_max_hz": 0.05}, "f_max_hz"),
        (WindParams, {"gust_spectrum": "kaimal"}, "gust_spectrum"),
        (WindParams, {"direction_from_deg": 720.0}, "direction_from_deg"),
        (
            WindageParams,
            {"frontal_area_m2": -1.0, "lateral_area_m2": 1.0, "length_oa_m": 1.0},
            "frontal_area_m2",
        ),
        (
            WindageParams,
            {"frontal_area_m2": 1.0, "lateral_area_m2": 1.0, "length_oa_m": 1.0, "c_y": -0.2},
            "c_y",
        ),
    ],
)
def test_bad_parameters_name_the_field(cls, kwargs, field) -> None:
    with pytest.raises(ParameterError) as exc:
        cls(**kwargs)
    assert exc.value.field == field
    assert field in str(exc.value)


def test_unknown_key_via_params_from_dict() -> None:
    with pytest.raises(ParameterError) as exc:
        params_from_dict(WindParams, {"speed_mps": 5.0, "direction_deg": 10.0}, "wind")
    assert exc.value.field == "wind.direction_deg"
    assert "direction_from_deg" in str(exc.value)


def test_bad_spectrum_arguments() -> None:
    with pytest.raises(ParameterError) as exc:
        npd_spectrum(0.1, -3.0)
    assert exc.value.field == "u10_mps"
    with pytest.raises(ParameterError) as exc:
        npd_spectrum(float("nan"), 10.0)
    assert exc.value.field == "f_hz"


# --- shapes of per-trial parameters --------------------------------------------------------
# ARCHITECTURE: numeric fields are scalars or per-trial arrays of shape (n_trials,); a shape
# error is a ParameterError naming the field at fault (common practice, no source).


@pytest.mark.parametrize(
    ("cls", "kwargs", "field"),
    [
        (WindParams, {"speed_mps": np.full((2, 1), 10.0)}, "speed_mps"),
        (WindParams, {"speed_mps": 10.0, "direction_from_deg": np.zeros((1, 2))}, "direction_from_deg"),
        (WindParams, {"speed_mps": np.full(2, 10.0), "height_m": np.full(3, 10.0)}, "height_m"),
        (
            WindageParams,
            {"frontal_area_m2": np.ones((2, 1)), "lateral_area_m2": 1.0, "length_oa_m": 1.0},
            "frontal_area_m2",
        ),
        (
            WindageParams,
            {"frontal_area_m2": np.ones(2), "lateral_area_m2": np.ones(3), "length_oa_m": 1.0},
            "lateral_area_m2",
        ),
    ],
)
def test_per_trial_shapes_name_the_field(cls, kwargs, field) -> None:
    with pytest.raises(ParameterError) as exc:
        cls(**kwargs)
    assert exc.value.field == field


def test_init_wind_checks_lengths_against_the_streams() -> None:
    params = WindParams(speed_mps=np.array([8.0, 12.0]), direction_from_deg=270.0, n_components=4)
    with pytest.raises(ParameterError) as exc:
        init_wind(params, TrialStreams(seed=0, trials=3))
    assert exc.value.field == "speed_mps"
    assert "(3,)" in str(exc.value)
    # the matching length is accepted: one mean speed per trial
    state = init_wind(params, TrialStreams(seed=0, trials=2))
    assert state.mean_speed_mps.shape == (2,)
