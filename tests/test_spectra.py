"""Checks of the PM / JONSWAP spectra against DNV-RP-C205 and closed forms.

All tests use g = 9.81 m/s^2 where g enters (only pm_from_wind).
"""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
from scipy import integrate

from wavebench.core.errors import ParameterError, WavebenchWarning
from wavebench.sea.spectra import (
    SeaSpectrum,
    dnv_gamma,
    dnv_period_ratios,
    jonswap,
    pierson_moskowitz,
    pm_from_wind,
    spectral_moment,
    spectral_summary,
)

G = 9.81


def dnv_jonswap_reference(w: float, hs: float, tp: float, gamma: float) -> float:
    """DNV-RP-C205 (2010) sec. 3.5.5 JONSWAP, written out independently, scalar."""
    wp = 2.0 * math.pi / tp
    s_pm = 5.0 / 16.0 * hs**2 * wp**4 * w**-5 * math.exp(-1.25 * (w / wp) ** -4)
    sigma = 0.07 if w <= wp else 0.09
    a_gamma = 1.0 - 0.287 * math.log(gamma)
    return a_gamma * s_pm * gamma ** math.exp(-0.5 * ((w - wp) / (sigma * wp)) ** 2)


def wide_grid(tp: float, n: int = 40001) -> np.ndarray:
    """0 plus a geometric grid from 0.2 wp to 200 wp (tails negligible for m_-1..m2)."""
    wp = 2.0 * math.pi / tp
    return np.concatenate([[0.0], wp * np.geomspace(0.2, 200.0, n)])


def pm_moment_closed_form(n: float, hs: float, tp: float) -> float:
    """m_n of the PM spectrum, derived from the DNV-RP-C205 PM formula.

    With S = (5/16) Hs^2 wp^4 w^-5 exp(-5/4 (wp/w)^4), substituting
    x = (5/4)(wp/w)^4 gives m_n = (Hs^2/16) (5/4)^(n/4) wp^n Gamma(1 - n/4).
    """
    wp = 2.0 * math.pi / tp
    return hs**2 / 16.0 * 1.25 ** (n / 4.0) * wp**n * math.gamma(1.0 - n / 4.0)


# ----------------------------------------------------------------- formula


@pytest.mark.parametrize("gamma", [1.0, 2.0, 3.3, 5.0, 7.0])
def test_jonswap_matches_dnv_formula_pointwise(gamma):
    # DNV-RP-C205 (2010) sec. 3.5.5: S_J = A_gamma S_PM gamma^exp(-0.5((w-wp)/(sigma wp))^2),
    # A_gamma = 1 - 0.287 ln(gamma), sigma = 0.07 (w <= wp) / 0.09 (w > wp).
    hs, tp = 4.0, 8.0  # Tp/sqrt(Hs) = 4: inside DNV's JONSWAP range
    w = np.array([0.3, 0.6, 0.7, 2 * math.pi / tp, 0.8, 0.9, 1.2, 3.0])
    ours = jonswap(w, hs, tp, gamma=gamma)
    ref = [dnv_jonswap_reference(x, hs, tp, gamma) for x in w]
    np.testing.assert_allclose(ours, ref, rtol=1e-12)


def test_pm_is_jonswap_with_gamma_one():
    # DNV-RP-C205 (2010) sec. 3.5.5: JONSWAP reduces to PM for gamma = 1.
    w = np.linspace(0.05, 4.0, 300)
    np.testing.assert_allclose(
        jonswap(w, 4.0, 8.0, gamma=1.0), pierson_moskowitz(w, 4.0, 8.0), rtol=1e-14
    )


@pytest.mark.parametrize("gamma", [1.5, 3.3, 7.0])
def test_peak_enhancement_is_ratio_to_pm_at_peak(gamma):
    # Hasselmann et al. (1973): gamma is the ratio of the JONSWAP peak to the PM peak
    # of the same (unnormalised) shape; with DNV's A_gamma: S_J(wp)/S_PM(wp) = A_gamma gamma.
    wp = 2 * math.pi / 8.0
    ratio = jonswap(wp, 4.0, 8.0, gamma=gamma) / pierson_moskowitz(wp, 4.0, 8.0)
    assert ratio == pytest.approx((1 - 0.287 * math.log(gamma)) * gamma, rel=1e-13)


def test_zero_frequency_gives_zero_without_warnings():
    # DNV-RP-C205 PM/JONSWAP: S -> 0 as omega -> 0 (exp(-5/4 (wp/w)^4) vanishes).
    w = np.array([0.0, 1e-300, 1e-8, 0.05])
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        with np.errstate(all="raise"):
            s_pm = pierson_moskowitz(w, 2.0, 7.0)
            s_j = jonswap(w, 4.0, 8.0)
            s_sea = SeaSpectrum(kind="jonswap", hs_m=np.array([1.0, 4.0]), tp_s=8.0).density(w)
    assert s_pm[0] == 0.0 and s_j[0] == 0.0 and np.all(s_sea[:, 0] == 0.0)
    assert np.all(np.isfinite(s_pm)) and np.all(np.isfinite(s_j)) and np.all(np.isfinite(s_sea))
    assert s_pm[1] == 0.0 and s_pm[2] == 0.0


# ------------------------------------------------------------------ Hm0


@pytest.mark.parametrize(("hs", "tp"), [(0.5, 3.0), (2.0, 7.0), (6.0, 12.0), (14.0, 18.0)])
def test_pm_hm0_equals_hs(hs, tp):
    # DNV-RP-C205 (2010): Hm0 = 4 sqrt(m0); for PM the (Hs, Tp) form integrates exactly to
    # Hs^2/16 (closed form above), so the only error is the numerical integration: 0.5 %.
    w = wide_grid(tp)
    hm0 = 4.0 * math.sqrt(spectral_moment(w, pierson_moskowitz(w, hs, tp), 0))
    assert hm0 == pytest.approx(hs, rel=5e-3)
    assert 4.0 * math.sqrt(pm_moment_closed_form(0, hs, tp)) == pytest.approx(hs, rel=1e-15)


def exact_jonswap_normalisation(gamma: float, tp: float = 8.0) -> float:
    """A such that A * integral(S_PM gamma^r) = Hs^2/16, by scipy.integrate.quad."""
    hs = 1.0
    wp = 2 * math.pi / tp

    def f(w: float) -> float:
        return dnv_jonswap_reference(w, hs, tp, gamma) / (1.0 - 0.287 * math.log(gamma))

    lo = integrate.quad(f, 0.1 * wp, wp, limit=200, epsabs=0, epsrel=1e-12)[0]
    hi = integrate.quad(f, wp, 50 * wp, limit=200, epsabs=0, epsrel=1e-12)[0]
    # PM tails below 0.1 wp and above 50 wp in closed form (exp(-5/4 x^4) CDF):
    # the enhancement is 1 there to double precision.
    below = hs**2 / 16 * math.exp(-1.25 * 10.0**4)
    above = hs**2 / 16 * (1 - math.exp(-1.25 * (1 / 50.0) ** 4))
    return hs**2 / 16.0 / (lo + hi + below + above)


@pytest.mark.parametrize("gamma", [1.0, 1.5, 2.0, 3.3, 5.0, 7.0])
@pytest.mark.parametrize(("hs", "tp"), [(2.0, 6.0), (4.0, 8.0), (9.0, 14.0)])
def test_jonswap_hm0_within_a_gamma_fit_error(gamma, hs, tp):
    # DNV-RP-C205 (2010) sec. 3.5.5 gives A_gamma = 1 - 0.287 ln(gamma) as an approximate
    # normalisation. Its error, measured here against the exact normalisation from
    # scipy.integrate.quad, stays below 2 % in m0 for gamma in [1, 7] (largest near
    # gamma = 7), i.e. below 1 % in Hm0 = 4 sqrt(m0). So: |Hm0/Hs - 1| < 1 %, and the
    # integrated Hm0/Hs must equal sqrt(A_gamma / A_exact) up to integration error.
    a_fit = 1.0 - 0.287 * math.log(gamma)
    a_exact = exact_jonswap_normalisation(gamma)
    assert abs(a_fit / a_exact - 1.0) < 0.02
    w = wide_grid(tp)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", WavebenchWarning)  # (9, 14) is outside 3.6..5
        s = jonswap(w, hs, tp, gamma=gamma)
    hm0 = 4.0 * math.sqrt(spectral_moment(w, s, 0))
    assert abs(hm0 / hs - 1.0) < 0.01
    assert hm0 / hs == pytest.approx(math.sqrt(a_fit / a_exact), rel=2e-4)


# -------------------------------------------------------------- periods


def test_pm_moments_match_closed_forms():
    # Closed forms m_n = Hs^2/16 (5/4)^(n/4) wp^n Gamma(1 - n/4), derived from the
    # DNV-RP-C205 PM formula (see pm_moment_closed_form).
    hs, tp = 3.0, 9.0
    w = wide_grid(tp)
    s = pierson_moskowitz(w, hs, tp)
    for n in (-1, 0, 1, 2):
        assert spectral_moment(w, s, n) == pytest.approx(pm_moment_closed_form(n, hs, tp), rel=1e-4)


def test_pm_period_ratios_closed_form():
    # From the closed-form moments: Tz/Tp = (5/4)^(-1/4) pi^(-1/4),
    # T1/Tp = 1 / ((5/4)^(1/4) Gamma(3/4)), Te/Tp = (5/4)^(-1/4) Gamma(5/4).
    tz_tp = 1.25**-0.25 * math.pi**-0.25
    t1_tp = 1.0 / (1.25**0.25 * math.gamma(0.75))
    te_tp = 1.25**-0.25 * math.gamma(1.25)
    # The commonly quoted PM ratios Tz = 0.710 Tp and T1 = 0.772 Tp (values from memory).
    assert tz_tp == pytest.approx(0.7104, abs=5e-5)
    assert t1_tp == pytest.approx(0.772, abs=5e-4)
    tp = 9.0
    w = wide_grid(tp)
    summ = spectral_summary(w, pierson_moskowitz(w, 3.0, tp))
    assert summ.tz_s / tp == pytest.approx(tz_tp, rel=1e-4)
    assert summ.t1_s / tp == pytest.approx(t1_tp, rel=1e-4)
    assert summ.te_s / tp == pytest.approx(te_tp, rel=1e-4)
    assert summ.tp_s == pytest.approx(tp, rel=1e-4)  # DNV-RP-C205: wp = 2 pi / Tp
    assert summ.hm0_m == pytest.approx(3.0, rel=1e-4)


def test_dnv_polynomials_agree_with_pm_closed_form_at_gamma_one():
    # The DNV-RP-C205 fits at gamma = 1 against the exact PM ratios: this measures the fits'
    # own error (about 0.2 %), which sets the tolerance of the next test.
    r = dnv_period_ratios(1.0)
    assert r.tz_over_tp == pytest.approx(1.25**-0.25 * math.pi**-0.25, rel=3e-3)
    assert r.t1_over_tp == pytest.approx(1.0 / (1.25**0.25 * math.gamma(0.75)), rel=3e-3)


@pytest.mark.parametrize("gamma", [1.0, 1.5, 2.0, 3.3, 5.0, 6.9])
def test_jonswap_period_ratios_match_dnv_polynomials(gamma):
    # DNV-RP-C205 (2010) sec. 3.5.5 polynomial fits for 1 <= gamma < 7:
    #   Tz/Tp = 0.6673 + 0.05037 g - 0.006230 g^2 + 0.0003341 g^3   (coefficients from memory)
    #   T1/Tp = 0.7303 + 0.04936 g - 0.006556 g^2 + 0.0003610 g^3   (coefficients from memory)
    # Tolerance 0.5 %: the fits are off by ~0.2 % at gamma = 1 (previous test), and the
    # integration error here is below 1e-4.
    tz_poly = 0.6673 + 0.05037 * gamma - 0.006230 * gamma**2 + 0.0003341 * gamma**3
    t1_poly = 0.7303 + 0.04936 * gamma - 0.006556 * gamma**2 + 0.0003610 * gamma**3
    ours = dnv_period_ratios(gamma)
    assert ours.tz_over_tp == pytest.approx(tz_poly, rel=1e-12)
    assert ours.t1_over_tp == pytest.approx(t1_poly, rel=1e-12)
    tp = 8.0
    w = wide_grid(tp)
    summ = spectral_summary(w, jonswap(w, 4.0, tp, gamma=gamma))
    assert summ.tz_s / tp == pytest.approx(tz_poly, rel=5e-3)
    assert summ.t1_s / tp == pytest.approx(t1_poly, rel=5e-3)
    assert summ.tp_s == pytest.approx(tp, rel=1e-3)


# ---------------------------------------------------------------- gamma rule


@pytest.mark.parametrize(
    ("ratio", "expected"),
    [
        (3.0, 5.0),  # DNV-RP-C205: gamma = 5 for Tp/sqrt(Hs) <= 3.6
        (3.6, 5.0),
        (4.3, math.exp(5.75 - 1.15 * 4.3)),  # exp(5.75 - 1.15 Tp/sqrt(Hs)) for 3.6 < r < 5
        (5.0, 1.0),  # gamma = 1 for Tp/sqrt(Hs) >= 5
        (6.0, 1.0),
    ],
)
def test_dnv_gamma_rule(ratio, expected):
    # DNV-RP-C205 (2010) sec. 3.5.5 gamma rule, with Hs = 4 m so Tp = 2 * ratio.
    assert dnv_gamma(4.0, 2.0 * ratio) == pytest.approx(expected, rel=1e-12)


def test_dnv_gamma_rule_vectorised_and_continuous():
    # DNV-RP-C205 gamma rule on arrays; exp(5.75 - 1.15*5) = 1 exactly and
    # exp(5.75 - 1.15*3.6) = e^1.61 = 5.003, so the rule is (nearly) continuous.
    r = np.array([3.0, 3.6, 4.3, 5.0, 6.0])
    got = dnv_gamma(np.full(5, 1.0), r)
    np.testing.assert_allclose(got, [5.0, 5.0, math.exp(5.75 - 1.15 * 4.3), 1.0, 1.0], rtol=1e-12)
    assert dnv_gamma(1.0, 3.6 + 1e-9) == pytest.approx(5.0, rel=1e-3)
    assert dnv_gamma(1.0, 5.0 - 1e-9) == pytest.approx(1.0, rel=1e-8)
    # SeaSpectrum with gamma=None uses the same rule.
    sea = SeaSpectrum(kind="jonswap", hs_m=np.full(5, 1.0), tp_s=r)
    np.testing.assert_allclose(sea.gamma_value(), got, rtol=0)


# -------------------------------------------------------------- PM from wind


@pytest.mark.parametrize("u", [5.0, 10.0, 20.0, 30.0])
def test_pm_from_wind(u):
    # Pierson & Moskowitz (1964); Stewart, Introduction to Physical Oceanography ch. 16:
    # Hs = 0.21 U19.5^2 / g, omega_p = 0.877 g / U19.5.
    hs, tp = pm_from_wind(u, g=G)
    assert hs == pytest.approx(0.21 * u**2 / G, rel=1e-14)
    assert 2 * math.pi / tp == pytest.approx(0.877 * G / u, rel=1e-14)
    # Consistency with the alpha-beta form of the same spectrum (Stewart ch. 16):
    # S(w) = alpha g^2 w^-5 exp(-beta (w0/w)^4), w0 = g/U19.5, alpha = 8.1e-3, beta = 0.74
    # (values from memory). Its peak is w0 (4 beta/5)^(1/4) and its Hs = 2 sqrt(alpha/beta) U^2/g;
    # 0.877 and 0.21 are these rounded to three and two digits.
    alpha, beta = 8.1e-3, 0.74
    assert 2 * math.pi / tp == pytest.approx((G / u) * (0.8 * beta) ** 0.25, rel=5e-4)
    assert hs == pytest.approx(2 * math.sqrt(alpha / beta) * u**2 / G, rel=5e-3)


def test_pm_from_wind_spectrum_matches_alpha_beta_form():
    # Stewart ch. 16 alpha-beta PM form (alpha = 8.1e-3, beta = 0.74, values from memory)
    # against our (Hs, Tp) PM built from pm_from_wind: equal within the rounding of
    # 0.21 and 0.877 (about 1 % in S over the energetic band).
    u = 15.0
    hs, tp = pm_from_wind(u, g=G)
    w0 = G / u
    w = np.linspace(0.6, 3.0, 50) * (2 * math.pi / tp)
    ref = 8.1e-3 * G**2 * w**-5 * np.exp(-0.74 * (w0 / w) ** 4)
    np.testing.assert_allclose(pierson_moskowitz(w, hs, tp), ref, rtol=1.5e-2)


# ------------------------------------------------------------ SeaSpectrum


def test_sea_spectrum_per_trial_broadcast():
    # Per-trial Hs of shape (N,) gives (N, K); each row is the DNV formula for its Hs.
    hs = np.array([1.0, 2.25, 4.0])
    tp = np.array([4.0, 6.0, 9.0])  # Tp/sqrt(Hs) = 4, 4, 4.5
    sea = SeaSpectrum(kind="jonswap", hs_m=hs, tp_s=tp, gamma=2.0)
    w = np.linspace(0.2, 3.0, 40)
    s = sea.density(w)
    assert s.shape == (3, 40)
    for i in range(3):
        ref = [dnv_jonswap_reference(x, hs[i], tp[i], 2.0) for x in w]
        np.testing.assert_allclose(s[i], ref, rtol=1e-12)
    # A per-trial frequency grid of shape (N, K) works too.
    assert sea.density(np.tile(w, (3, 1))).shape == (3, 40)
    pm = SeaSpectrum(kind="pierson_moskowitz", hs_m=hs, tp_s=8.0)
    assert pm.density(w).shape == (3, 40)
    assert pm.gamma_value() == 1.0


@pytest.mark.parametrize(
    ("kind", "gamma", "fraction"),
    [
        ("pierson_moskowitz", None, 1e-3),
        ("jonswap", 3.3, 1e-3),
        ("jonswap", 7.0, 0.05),
        ("pierson_moskowitz", None, 0.1),
    ],
)
def test_frequency_band_leaves_out_at_most_the_fraction(kind, gamma, fraction):
    # PM closed-form CDF F(w) = exp(-5/4 (wp/w)^4) (from the DNV-RP-C205 PM formula) sets
    # the band; check with scipy.integrate.quad that at most `fraction` of m0 lies outside,
    # and for PM that the share outside is the fraction itself.
    sea = SeaSpectrum(kind=kind, hs_m=4.0, tp_s=8.0, gamma=gamma)
    lo, hi = sea.frequency_band(fraction)
    wp = 2 * math.pi / 8.0

    def f(w: float) -> float:
        return float(sea.density(np.array([w]))[0])

    def q(a: float, b: float) -> float:
        return integrate.quad(f, a, b, limit=400, epsabs=0, epsrel=1e-11)[0]

    inside = q(lo, wp) + q(wp, hi)
    # Above 200 wp PM holds 1 - exp(-5/4 / 200^4) < 1e-9 of m0: negligible here.
    total = q(1e-3, wp) + q(wp, 200 * wp)
    outside = 1.0 - inside / total
    assert outside <= fraction * (1 + 1e-6)
    if kind == "pierson_moskowitz":
        assert outside == pytest.approx(fraction, rel=1e-4)


# ------------------------------------------------------------- bad input


@pytest.mark.parametrize(
    ("kwargs", "field"),
    [
        ({"hs_m": -1.0, "tp_s": 8.0}, "hs_m"),
        ({"hs_m": float("nan"), "tp_s": 8.0}, "hs_m"),
        ({"hs_m": np.array([1.0, np.nan]), "tp_s": 8.0}, "hs_m"),
        ({"hs_m": 2.0, "tp_s": 0.0}, "tp_s"),
        ({"hs_m": 2.0, "tp_s": -3.0}, "tp_s"),
        ({"hs_m": 4.0, "tp_s": 8.0, "gamma": 0.9}, "gamma"),
        ({"hs_m": 4.0, "tp_s": 8.0, "kind": "bretschneider"}, "kind"),
        ({"hs_m": 4.0, "tp_s": 8.0, "kind": "pierson_moskowitz", "gamma": 3.3}, "gamma"),
    ],
)
def test_sea_spectrum_rejects_bad_parameters(kwargs, field):
    # ARCHITECTURE: validation raises ParameterError naming the field (common practice, no source).
    with pytest.raises(ParameterError, match=field):
        SeaSpectrum(**kwargs)


@pytest.mark.parametrize("gamma", [7.0 + 1e-9, 10.0, 33.0, 40.0, float("inf")])
def test_gamma_above_seven_is_refused(gamma):
    # DNV-RP-C205 (2010) sec. 3.5.5 gives its JONSWAP period-ratio fits for 1 <= gamma < 7
    # (range from memory, not re-checked); A_gamma = 1 - 0.287 ln(gamma) is < 0 above
    # gamma = exp(1/0.287) ~ 32.6, where the spectrum (and realised amplitudes) would be
    # negative / NaN. Both entry points refuse gamma > 7 naming 'gamma'.
    w = np.linspace(0.1, 3.0, 10)
    with pytest.raises(ParameterError) as err:
        SeaSpectrum(kind="jonswap", hs_m=4.0, tp_s=8.0, gamma=gamma)
    assert err.value.field == "gamma"
    with pytest.raises(ParameterError) as err:
        SeaSpectrum(kind="jonswap", hs_m=np.array([4.0, 4.0]), tp_s=8.0, gamma=np.array([3.3, gamma]))
    assert err.value.field == "gamma"
    with pytest.raises(ParameterError) as err:
        jonswap(w, 4.0, 8.0, gamma=gamma)
    assert err.value.field == "gamma"


def test_gamma_bound_is_where_the_a_gamma_normalisation_stops_holding():
    # Why 7: the exact normalisation (scipy.integrate.quad, exact_jonswap_normalisation)
    # against DNV-RP-C205's A_gamma = 1 - 0.287 ln(gamma). At the bound gamma = 7 the
    # Hm0 error sqrt(A_gamma / A_exact) - 1 is within 1 %; at gamma = 10 it exceeds 3 %
    # (so gamma above 7 would silently give the wrong Hs), and A_gamma < 0 at 33.
    def hm0_error(gamma: float) -> float:
        return math.sqrt((1.0 - 0.287 * math.log(gamma)) / exact_jonswap_normalisation(gamma)) - 1.0

    assert abs(hm0_error(7.0)) < 0.01
    assert abs(hm0_error(10.0)) > 0.03
    assert 1.0 - 0.287 * math.log(33.0) < 0.0
    # the bound itself and the lower bound 1 (PM) are accepted
    w = np.linspace(0.1, 3.0, 10)
    assert np.all(jonswap(w, 4.0, 8.0, gamma=7.0) >= 0.0)
    assert np.all(SeaSpectrum(kind="jonswap", hs_m=4.0, tp_s=8.0, gamma=1.0).density(w) >= 0.0)


@pytest.mark.parametrize(
    ("kwargs", "field"),
    [
        # a 2-D array names the field that holds it
        ({"hs_m": 4.0, "tp_s": np.full((2, 1), 8.0)}, "tp_s"),
        ({"hs_m": 4.0, "tp_s": 8.0, "gamma": np.full((2, 2), 3.3)}, "gamma"),
        ({"hs_m": np.full((2, 1), 4.0), "tp_s": 8.0}, "hs_m"),
        # per-trial lengths that disagree name the field that disagrees with the first
        ({"hs_m": np.array([4.0, 4.0]), "tp_s": np.array([8.0, 8.0, 8.0])}, "tp_s"),
        ({"hs_m": np.array([4.0, 4.0]), "tp_s": 8.0, "gamma": np.array([2.0, 2.0, 2.0])}, "gamma"),
        ({"hs_m": 4.0, "tp_s": np.array([8.0, 8.0]), "gamma": np.array([2.0, 2.0, 2.0])}, "gamma"),
    ],
)
def test_shape_errors_name_the_offending_field(kwargs, field):
    # ARCHITECTURE: ParameterError names the field at fault (common practice, no source).
    with pytest.raises(ParameterError) as err:
        SeaSpectrum(kind="jonswap", **kwargs)
    assert err.value.field == field


def test_kind_error_lists_allowed_values():
    with pytest.raises(ParameterError) as err:
        SeaSpectrum(kind="ochi", hs_m=1.0, tp_s=5.0)
    assert "jonswap" in str(err.value) and "pierson_moskowitz" in str(err.value)


def test_functions_reject_bad_input():
    w = np.linspace(0.1, 2.0, 10)
    with pytest.raises(ParameterError, match="hs_m"):
        pierson_moskowitz(w, -1.0, 8.0)
    with pytest.raises(ParameterError, match="tp_s"):
        jonswap(w, 4.0, 0.0)
    with pytest.raises(ParameterError, match="gamma"):
        jonswap(w, 4.0, 8.0, gamma=0.5)
    with pytest.raises(ParameterError, match="omega"):
        jonswap(np.array([-0.1, 0.2]), 4.0, 8.0)
    with pytest.raises(ParameterError, match="gamma"):
        dnv_period_ratios(0.5)


# -------------------------------------------------------------- warnings


def test_warns_for_explicit_gamma_outside_dnv_range():
    # DNV-RP-C205 (2010) sec. 3.5.5: JONSWAP is a reasonable model for 3.6 < Tp/sqrt(Hs) < 5.
    w = np.linspace(0.1, 3.0, 30)
    with pytest.warns(WavebenchWarning, match="3.6"):
        jonswap(w, 1.0, 8.0, gamma=3.3)  # Tp/sqrt(Hs) = 8
    with pytest.warns(WavebenchWarning):
        jonswap(w, 9.0, 9.0, gamma=3.3)  # Tp/sqrt(Hs) = 3
    with pytest.warns(WavebenchWarning):
        SeaSpectrum(kind="jonswap", hs_m=np.array([4.0, 1.0]), tp_s=8.0, gamma=2.0)


def test_no_warning_inside_range_or_with_dnv_rule():
    # DNV rule (gamma=None) covers every Tp/sqrt(Hs); PM has no gamma; 4 is inside 3.6..5.
    w = np.linspace(0.1, 3.0, 30)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        jonswap(w, 1.0, 8.0)
        jonswap(w, 4.0, 8.0, gamma=3.3)
        pierson_moskowitz(w, 1.0, 8.0)
        SeaSpectrum(kind="jonswap", hs_m=1.0, tp_s=8.0).density(w)
        SeaSpectrum(kind="pierson_moskowitz", hs_m=1.0, tp_s=8.0).density(w)


def test_batch_summary_and_band_per_trial():
    # Per-trial PM sea states on per-trial grids (N, K): Hm0 = Hs per row (DNV-RP-C205,
    # Hm0 = 4 sqrt(m0)) and the PM closed-form Tz = (5/4)^(-1/4) pi^(-1/4) Tp per row.
    hs = np.array([0.5, 2.0, 7.0])
    tp = np.array([3.0, 8.0, 15.0])
    sea = SeaSpectrum(kind="pierson_moskowitz", hs_m=hs, tp_s=tp)
    lo, hi = sea.frequency_band(1e-3)
    assert lo.shape == hi.shape == (3,)
    w = np.stack([wide_grid(t) for t in tp])
    summ = spectral_summary(w, sea.density(w))
    np.testing.assert_allclose(summ.hm0_m, hs, rtol=1e-4)
    np.testing.assert_allclose(summ.tz_s, 1.25**-0.25 * math.pi**-0.25 * tp, rtol=1e-4)
    np.testing.assert_allclose(summ.tp_s, tp, rtol=1e-4)
