"""Checks of the directional spreading functions and direction sampling."""

from __future__ import annotations

import itertools
import math

import numpy as np
import pytest
from scipy import integrate, stats

from wavebench.core.errors import ParameterError
from wavebench.core.streams import TrialStreams
from wavebench.sea.spreading import (
    DirectionalSpreading,
    cos2s,
    cos2s_norm,
    cosn,
    cosn_norm,
    nautical_from_deg_to_toward_rad,
)


def quad_full_turn(f, lo: float = -math.pi) -> float:
    """Integral of f over [lo, lo + 2 pi] by scipy.integrate.quad."""
    val, _ = integrate.quad(f, lo, lo + 2 * math.pi, limit=400, epsabs=1e-13, epsrel=1e-12)
    return val


@pytest.mark.parametrize("s", [0.5, 1.0, 2.0, 10.0, 75.0, 500.0])
@pytest.mark.parametrize("mean", [0.0, 1.0, -3.0, 3.1])
def test_cos2s_integrates_to_one(s, mean):
    # Longuet-Higgins et al. (1963): Gamma(s+1)/(2 sqrt(pi) Gamma(s+1/2)) normalises
    # cos^2s((theta - mean)/2) over a full turn; checked with scipy.integrate.quad,
    # with means near +-pi to exercise the wrapping.
    pts = [mean - 2 * math.pi, mean, mean + 2 * math.pi]
    val = integrate.quad(
        lambda t: float(cos2s(t, mean, s)),
        -math.pi,
        math.pi,
        points=[p for p in pts if -math.pi < p < math.pi],
        limit=400,
        epsabs=1e-13,
    )[0]
    assert val == pytest.approx(1.0, rel=1e-9)


@pytest.mark.parametrize("n", [1.0, 2.0, 4.0, 10.0, 100.0, 1000.0])
@pytest.mark.parametrize("mean", [0.0, 2.0, -3.0])
def test_cosn_integrates_to_one_and_is_zero_behind(n, mean):
    # DNV-RP-C205 cos^n spreading: Gamma(1+n/2)/(sqrt(pi) Gamma(1/2+n/2)) normalises
    # cos^n over |theta - mean| < pi/2 (quad over the half-turn in front of the mean).
    val = integrate.quad(
        lambda t: float(cosn(t, mean, n)),
        mean - math.pi / 2,
        mean + math.pi / 2,
        points=[mean],
        limit=400,
        epsabs=1e-13,
    )[0]
    assert val == pytest.approx(1.0, rel=1e-9)
    behind = mean + np.linspace(math.pi / 2 + 1e-9, 3 * math.pi / 2 - 1e-9, 50)
    assert np.all(cosn(behind, mean, n) == 0.0)


def test_normalising_constants_closed_values():
    # s = 1: Gamma(2)/(2 sqrt(pi) Gamma(3/2)) = 1/pi; n = 2: Gamma(2)/(sqrt(pi) Gamma(3/2)) = 2/pi
    # (Gamma(3/2) = sqrt(pi)/2).
    assert cos2s_norm(1.0) == pytest.approx(1 / math.pi, rel=1e-14)
    assert cosn_norm(2.0) == pytest.approx(2 / math.pi, rel=1e-14)
    # cos-2s with exponent s equals cos^n of the half angle: cos2s with s and cosn with
    # n = 2s share the constant up to the factor 1/2 of the angle change.
    assert cos2s_norm(3.0) == pytest.approx(0.5 * cosn_norm(6.0), rel=1e-14)


@pytest.mark.parametrize("s", [1e3, 1e4, 1e6])
def test_large_exponent_constant_matches_asymptotic(s):
    # DLMF 5.11.13: Gamma(s+1)/Gamma(s+1/2) ~ sqrt(s) (1 + 1/(8 s) + O(s^-2));
    # plain Gamma overflows here, gammaln must not.
    expected = math.sqrt(s) * (1 + 1 / (8 * s)) / (2 * math.sqrt(math.pi))
    assert cos2s_norm(s) == pytest.approx(expected, rel=1e-6 if s >= 1e4 else 1e-5)
    assert np.isfinite(cos2s(np.linspace(-math.pi, math.pi, 11), 0.0, s)).all()


def test_direction_convention():
    # Our documented convention (common practice, no source): mean_dir_deg is where waves
    # come FROM, clockwise from north; inside, theta is where they travel TOWARD.
    assert nautical_from_deg_to_toward_rad(270.0) == pytest.approx(math.pi / 2)  # from W -> E
    assert nautical_from_deg_to_toward_rad(90.0) == pytest.approx(-math.pi / 2)  # from E -> W
    assert nautical_from_deg_to_toward_rad(180.0) == pytest.approx(0.0)  # from S -> N
    assert abs(nautical_from_deg_to_toward_rad(0.0)) == pytest.approx(math.pi)  # from N -> S
    spread = DirectionalSpreading(kind="cos2s", exponent=4.0, mean_dir_deg=270.0)
    theta = np.linspace(-math.pi, math.pi, 721)
    assert theta[np.argmax(spread.density(theta))] == pytest.approx(math.pi / 2, abs=1e-9)


def test_long_crested_sampling_returns_mean():
    spread = DirectionalSpreading(kind="long_crested", mean_dir_deg=30.0)
    theta = spread.sample_directions(np.random.default_rng(3), 100)
    expected = math.radians(210.0) - 2 * math.pi  # toward 210 deg, wrapped to [-pi, pi)
    assert theta.shape == (100,)
    assert np.all(theta == pytest.approx(expected, abs=1e-15))
    with pytest.raises(ParameterError, match="kind"):
        spread.density(np.zeros(3))


def expected_bin_probabilities(spread: DirectionalSpreading, edges: np.ndarray) -> np.ndarray:
    """Probability of each bin by scipy.integrate.quad of the density."""

    def f(t: float) -> float:
        return float(spread.density(np.array([t]))[0])

    return np.array(
        [integrate.quad(f, a, b, epsabs=1e-14)[0] for a, b in itertools.pairwise(edges)]
    )


@pytest.mark.parametrize(
    ("kind", "exponent", "mean_dir_deg"),
    [("cos2s", 5.0, 150.0), ("cos2s", 1.0, 0.0), ("cosn", 4.0, 10.0), ("cosn", 2.0, 300.0)],
)
def test_sampled_directions_match_density(kind, exponent, mean_dir_deg):
    # Pearson chi-square goodness of fit (scipy.stats.chisquare) of 20 000 draws against bin
    # probabilities integrated from the density; fixed seed, so the outcome is deterministic;
    # alpha = 1e-3. Means near north put the distribution across the +-pi seam.
    spread = DirectionalSpreading(kind=kind, exponent=exponent, mean_dir_deg=mean_dir_deg)
    n = 20_000
    theta = spread.sample_directions(np.random.default_rng(20240611), n)
    assert np.all((theta >= -math.pi) & (theta < math.pi))
    edges = np.linspace(-math.pi, math.pi, 49)
    p = expected_bin_probabilities(spread, edges)
    assert p.sum() == pytest.approx(1.0, abs=1e-9)
    counts = np.histogram(theta, edges)[0]
    expected = n * p
    keep = expected >= 5.0  # usual chi-square rule of thumb (common practice, no source)
    # Bins the density gives no mass (cos^n behind the mean) must get no draws.
    assert counts[p == 0.0].sum() == 0
    # Sparse bins are lumped into one extra bin so that observed and expected totals agree.
    obs = np.append(counts[keep], counts[~keep].sum())
    exp = np.append(expected[keep], expected[~keep].sum())
    if exp[-1] == 0.0:
        obs, exp = obs[:-1], exp[:-1]
    result = stats.chisquare(obs, exp * obs.sum() / exp.sum())
    assert result.pvalue > 1e-3


def test_draw_directions_per_trial_reproducible():
    # ARCHITECTURE principle 4: trial i draws the same numbers alone or in a batch.
    spread = DirectionalSpreading(
        kind="cos2s", exponent=np.array([2.0, 8.0, 30.0]), mean_dir_deg=45.0
    )
    batch = spread.draw_directions(TrialStreams(11, (0, 1, 2)), 64)
    assert batch.shape == (3, 64)
    alone = DirectionalSpreading(kind="cos2s", exponent=30.0, mean_dir_deg=45.0).draw_directions(
        TrialStreams(11, (2,)), 64
    )
    np.testing.assert_array_equal(alone[0], batch[2])


def test_per_trial_density_shape_and_rows():
    # Per-trial mean directions (N,) give (N, K) densities; row i is cos2s about its own mean
    # (Longuet-Higgins et al. 1963 form written out here).
    means_from = np.array([0.0, 90.0, 200.0])
    spread = DirectionalSpreading(kind="cos2s", exponent=3.0, mean_dir_deg=means_from)
    theta = np.linspace(-math.pi, math.pi, 73)
    d = spread.density(theta)
    assert d.shape == (3, 73)
    for i, m in enumerate(np.radians(means_from) + math.pi):
        c = math.gamma(4.0) / (2 * math.sqrt(math.pi) * math.gamma(3.5))
        ref = c * np.abs(np.cos((theta - m) / 2)) ** 6
        np.testing.assert_allclose(d[i], ref, rtol=1e-12, atol=1e-15)


@pytest.mark.parametrize(
    ("kwargs", "field"),
    [
        ({"kind": "cos4s"}, "kind"),
        ({"kind": "cos2s", "exponent": 0.0}, "exponent"),
        ({"kind": "cosn", "exponent": -2.0}, "exponent"),
        ({"kind": "cosn", "exponent": float("nan")}, "exponent"),
        ({"kind": "cos2s", "mean_dir_deg": float("nan")}, "mean_dir_deg"),
        ({"kind": "cos2s", "mean_dir_deg": 720.0}, "mean_dir_deg"),
    ],
)
def test_rejects_bad_parameters(kwargs, field):
    # ARCHITECTURE: ParameterError names the field (common practice, no source).
    with pytest.raises(ParameterError, match=field):
        DirectionalSpreading(**kwargs)


@pytest.mark.parametrize(
    ("kwargs", "field"),
    [
        ({"exponent": np.full((2, 2), 4.0)}, "exponent"),
        ({"mean_dir_deg": np.zeros((3, 1))}, "mean_dir_deg"),
        ({"exponent": 4.0, "mean_dir_deg": np.zeros((2, 1))}, "mean_dir_deg"),
        ({"exponent": np.array([4.0, 6.0]), "mean_dir_deg": np.zeros(3)}, "mean_dir_deg"),
    ],
)
def test_shape_errors_name_the_offending_field(kwargs, field):
    # ARCHITECTURE: ParameterError names the field at fault (common practice, no source).
    with pytest.raises(ParameterError) as err:
        DirectionalSpreading(kind="cos2s", **kwargs)
    assert err.value.field == field


def test_functions_reject_bad_exponent():
    with pytest.raises(ParameterError, match="s ="):
        cos2s(0.0, 0.0, 0.0)
    with pytest.raises(ParameterError, match="n ="):
        cosn(0.0, 0.0, -1.0)


@pytest.mark.parametrize(
    ("kind", "exponent", "mean_dir_deg"),
    [
        ("cos2s", 1.0, 0.0),
        ("cos2s", 5.0, 150.0),
        ("cos2s", 40.0, 359.0),
        ("cosn", 4.0, 10.0),
        ("cosn", 2.0, 300.0),
    ],
)
def test_sampled_circular_moments(kind, exponent, mean_dir_deg):
    # First circular moment of the spreading about its mean:
    #  cos-2s: E[cos(theta - mean)] = s/(s+1) (Longuet-Higgins et al. 1963 Fourier coefficient
    #          Gamma(s+1)^2 / (Gamma(s) Gamma(s+2)));
    #  cos^n:  E[cos(theta - mean)] = c_n / c_(n+1) with c_n the DNV-RP-C205 normaliser.
    # Also E[sin(theta - mean)] = 0 by symmetry. Sample means of 50 000 draws (fixed seed)
    # must lie within 4 standard errors.
    spread = DirectionalSpreading(kind=kind, exponent=exponent, mean_dir_deg=mean_dir_deg)
    if kind == "cos2s":
        s = exponent
        m1 = math.gamma(s + 1) ** 2 / (math.gamma(s) * math.gamma(s + 2))
        assert m1 == pytest.approx(s / (s + 1), rel=1e-12)
    else:
        n = exponent
        c = lambda e: math.gamma(1 + e / 2) / (math.sqrt(math.pi) * math.gamma(0.5 + e / 2))  # noqa: E731
        m1 = c(n) / c(n + 1)
    # Cross-check the moment by quadrature of the density itself.
    mean = spread.mean_toward_rad
    m1_quad = integrate.quad(
        lambda t: math.cos(t) * float(spread.density(np.array([mean + t]))[0]),
        -math.pi,
        math.pi,
        points=[0.0],
        epsabs=1e-13,
    )[0]
    assert m1_quad == pytest.approx(m1, rel=1e-9)
    theta = spread.sample_directions(np.random.default_rng(7), 50_000)
    dc, ds = np.cos(theta - mean), np.sin(theta - mean)
    se_c, se_s = dc.std() / math.sqrt(dc.size), ds.std() / math.sqrt(ds.size)
    assert abs(dc.mean() - m1) < 4 * se_c
    assert abs(ds.mean()) < 4 * se_s


def test_median_direction_is_the_mean():
    # Symmetric spreading: the inverse CDF at u = 1/2 is the mean direction.
    for kind in ("cos2s", "cosn"):
        spread = DirectionalSpreading(kind=kind, exponent=3.0, mean_dir_deg=123.0)
        got = spread.directions_from_uniform(np.array([0.5]))[0]
        assert got == pytest.approx(spread.mean_toward_rad, abs=1e-12)
