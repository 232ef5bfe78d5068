"""Tests for wavebench.navigation.terrain_kernel: compiled per-trial terrain-aided PF and its counter-based RNG.

Statistical checks use fixed keys, so they are deterministic: a check that
passes passes every time; the thresholds say how unlikely a failure would
be for a correct generator (p > 1e-3).
"""

from __future__ import annotations

import numpy as np
import pytest
from filterpy.kalman import KalmanFilter
from scipy import special, stats

from wavebench.navigation import particle as oracle
from wavebench.navigation import terrain_kernel as tk
from wavebench.sea.seabed import SeabedGrid, depth_at

MASK64 = (1 << 64) - 1


def _splitmix64_reference(seed: int, n: int) -> list[int]:
    """Vigna's splitmix64.c transcribed to Python integers (Steele, Lea & Flood 2014)."""
    x = seed & MASK64
    out = []
    for _ in range(n):
        x = (x + 0x9E3779B97F4A7C15) & MASK64
        z = x
        z = ((z ^ (z >> 30)) * 0xBF58476D1CE4E5B9) & MASK64
        z = ((z ^ (z >> 27)) * 0x94D049BB133111EB) & MASK64
        out.append(z ^ (z >> 31))
    return out


def _uniforms(key: int, n: int, counter0: int = 0) -> np.ndarray:
    out = np.empty(n)
    tk.rng_fill_uniform(np.uint64(key), np.uint64(counter0), out)
    return out


def _normals(key: int, n: int, counter0: int = 0) -> np.ndarray:
    out = np.empty(n)
    tk.rng_fill_normal(np.uint64(key), np.uint64(counter0), out)
    return out


# ---------------------------------------------------------------------------
# the counter-based generator


def test_rng_u64_is_splitmix64() -> None:
    # First outputs of Vigna's splitmix64.c (prng.di.unimi.it) seeded with 0,
    # the test vector quoted by independent SplitMix64 implementations.
    published = [0xE220A8397B1DCDAF, 0x6E789E6AA1B965F4, 0x06C45D188009454F, 0xF88BB8A8724C81EC]
    assert [int(tk.rng_u64(np.uint64(0), np.uint64(c))) for c in range(4)] == published
    # Any key, any position: output c of the generator seeded with the key.
    for key in (1, 0x0123456789ABCDEF, MASK64):
        ref = _splitmix64_reference(key, 300)
        got = [int(tk.rng_u64(np.uint64(key), np.uint64(c))) for c in range(300)]
        assert got == ref


def test_uniforms_pass_ks_and_stay_inside_the_open_interval() -> None:
    # Kolmogorov-Smirnov test against U(0, 1) (scipy.stats.kstest), 10^5 draws
    # per fixed key; p > 1e-3.
    for key in (1, 0xDEADBEEFCAFEF00D):
        u = _uniforms(key, 100_000)
        assert np.all((u > 0.0) & (u < 1.0))
        assert stats.kstest(u, "uniform").pvalue > 1e-3
    # the scalar function and the fill agree
    u = _uniforms(5, 50, counter0=1000)
    assert [tk.rng_uniform(np.uint64(5), np.uint64(1000 + i)) for i in range(50)] == u.tolist()


def test_ziggurat_tables() -> None:
    # Marsaglia & Tsang (2000): every layer of the ziggurat has the same area
    # v = r f(r) + int_r^inf f, f(x) = exp(-x^2/2), with x_255 = r:
    # x_{i+1} (f(x_i) - f(x_{i+1})) = v for the rectangles, x_1 (1 - f(x_1)) = v
    # for the top one (this is what fixes r), and the base strip, of width
    # q = v / f(r), is w_0 * 2^52.
    r = tk._ZIG_R
    v = r * np.exp(-0.5 * r * r) + np.sqrt(np.pi / 2.0) * special.erfc(r / np.sqrt(2.0))
    x = tk._ZIG_W * 2.0**52  # x_i for i >= 1
    f = tk._ZIG_F
    assert x[255] == r and f[0] == 1.0
    np.testing.assert_allclose(f[1:], np.exp(-0.5 * x[1:] ** 2), rtol=1e-14)
    np.testing.assert_allclose(x[2:] * (f[1:-1] - f[2:]), v, rtol=1e-9)
    np.testing.assert_allclose(x[1] * (1.0 - f[1]), v, rtol=1e-9)
    np.testing.assert_allclose(x[0] * f[255], v, rtol=1e-14)
    # and they are numpy's (numpy/random/src/distributions/ziggurat_constants.h,
    # ki_double / wi_double / fi_double, the same 256-layer, 52-bit layout)
    for i, ki in ((0, 0x000EF33D8025EF6A), (1, 0), (2, 0x000C08BE98FBC6A8), (255, 0x000F1A5A4B331C4A)):
        assert abs(int(tk._ZIG_K[i]) - ki) <= 1e-13 * ki, i
    np.testing.assert_allclose(tk._ZIG_W[[0, 1, 255]], [8.68362706080130616677e-16, 4.77933017572773682428e-17,
                                                       8.11384933765648418565e-16], rtol=1e-13)  # fmt: skip
    np.testing.assert_allclose(tk._ZIG_F[[0, 1, 2]], [1.0, 9.77101701267671596263e-01, 9.59879091800106665211e-01],
                               rtol=1e-13)  # fmt: skip


def test_normals_fine_bins_and_tail() -> None:
    # 4 x 10^6 draws (fixed key): Pearson chi-square over 200 equiprobable
    # N(0, 1) bins (scipy.stats.chisquare with scipy.stats.norm.ppf edges), the
    # count beyond the ziggurat's tail start r (scipy.stats.binomtest against
    # 2 Q(r)) and the shape of that tail (KS against the normal truncated to
    # |z| > r, scipy.stats.truncnorm); each p > 1e-3.
    z = _normals(0xC0FFEE, 4_000_000)
    edges = stats.norm.ppf(np.linspace(0.0, 1.0, 201))
    counts = np.histogram(z, edges)[0]
    assert stats.chisquare(counts).pvalue > 1e-3
    r = tk._ZIG_R
    tail = np.abs(z[np.abs(z) > r])
    assert stats.binomtest(tail.size, z.size, 2.0 * stats.norm.sf(r)).pvalue > 1e-3
    assert stats.kstest(tail, stats.truncnorm(r, np.inf).cdf).pvalue > 1e-3
    # the fill and the scalar function agree
    assert [tk.rng_normal(np.uint64(0xC0FFEE), np.uint64(i)) for i in range(3000)] == z[:3000].tolist()


def test_normals_pass_ks() -> None:
    # Kolmogorov-Smirnov test against N(0, 1) (scipy.stats.kstest), 10^5
    # draws per fixed key; p > 1e-3.
    for key in (2, 0x9E3779B97F4A7C15):
        z = _normals(key, 100_000)
        assert stats.kstest(z, "norm").pvalue > 1e-3


def test_different_keys_and_neighbouring_counters_are_uncorrelated() -> None:
    # Pearson correlation test (scipy.stats.pearsonr, H0: no correlation),
    # 10^5 pairs; p > 1e-3. Adjacent keys, a random pair, and lag 1 within a stream.
    n = 100_000
    for ka, kb in ((0, 1), (1, 2), (0x243F6A8885A308D3, 0x13198A2E03707344)):
        assert stats.pearsonr(_uniforms(ka, n), _uniforms(kb, n)).pvalue > 1e-3
        assert stats.pearsonr(_normals(ka, n), _normals(kb, n)).pvalue > 1e-3
    z = _normals(3, n + 1)
    assert stats.pearsonr(z[:-1], z[1:]).pvalue > 1e-3


def test_counter_scheme() -> None:
    # the documented layout, purposes disjoint
    assert int(tk.pf_counter(0, 0, 0, 0)) == 0
    assert int(tk.pf_counter(7, tk.PURPOSE_PREDICT, 12, 1)) == ((7 * 4 + 1) * 2**20 + 12) * 2 + 1
    assert int(tk.pf_counter(1, 0, 0, 0)) == int(tk.pf_counter(0, tk.N_PURPOSES - 1, tk.MAX_PARTICLES - 1, 1)) + 1
    # a prediction's noise depends on (key, tick, particle) only, not on what ran before
    key = np.uint64(0xABCDEF)

    def increments(tick: int, history: list[int]) -> np.ndarray:
        p = np.zeros((40, 2))
        for t in history:
            tk.pf_predict(key, t, p, 0.0, 0.0, 1.0)
        before = p.copy()
        tk.pf_predict(key, tick, p, 0.0, 0.0, 1.0)
        return p - before

    a = increments(9, [])
    b = increments(9, [3, 12, 0])
    np.testing.assert_allclose(a, b, rtol=0, atol=1e-12)
    c0 = tk.pf_counter(9, tk.PURPOSE_PREDICT, 0, 0)
    np.testing.assert_array_equal(a.ravel(), _normals(int(key), 80, int(c0)))
    assert not np.allclose(increments(10, []), a)


# ---------------------------------------------------------------------------
# seabed lookup


def _check_grid(gn: np.ndarray, ge: np.ndarray, grid: np.ndarray, fill: float | None, rng: np.random.Generator,
                exact: bool) -> None:  # fmt: skip
    bed = SeabedGrid(north_m=gn, east_m=ge, depth_m=grid, fill_depth_m=fill)
    n = np.concatenate([rng.uniform(gn[0] - 50, gn[-1] + 50, 3000), gn, gn, [np.nan, gn[-1], gn[0]]])
    e = np.concatenate([rng.uniform(ge[0] - 50, ge[-1] + 50, 3000), np.full(gn.size, ge[-1]), np.full(gn.size, ge[0]),
                        [0.0, ge[-1], np.nan]])  # fmt: skip
    want = depth_at(bed, n, e)
    f = np.nan if fill is None else fill
    got = np.empty(n.size)
    tk.seabed_depths(gn, ge, grid, f, np.column_stack([n, e]), got)
    one = [tk.seabed_depth(gn, ge, grid, f, a, b) for a, b in zip(n[:50], e[:50], strict=True)]
    np.testing.assert_array_equal(one, got[:50])
    if exact:
        np.testing.assert_array_equal(got, want)
    else:
        np.testing.assert_array_equal(np.isnan(got), np.isnan(want))
        np.testing.assert_allclose(got, want, rtol=1e-13)


def test_seabed_lookup_follows_depth_at() -> None:
    # Same convention as wavebench.sea.seabed.depth_at (searchsorted cell,
    # clipped; fill outside and at NaN): the same bits on non-uniform axes,
    # the same values to rounding on uniform ones (cell from one multiplication).
    rng = np.random.default_rng(3)
    gn = np.linspace(-300.0, 900.0, 61)
    ge = np.linspace(0.0, 500.0, 26)
    grid = rng.uniform(5.0, 80.0, (gn.size, ge.size))
    _check_grid(gn, ge, grid, None, rng, exact=False)
    _check_grid(gn, ge, grid, 0.0, rng, exact=False)
    gn2 = np.cumsum(rng.uniform(1.0, 40.0, 61)) - 200.0
    ge2 = np.cumsum(rng.uniform(0.5, 30.0, 26))
    _check_grid(gn2, ge2, grid, None, rng, exact=True)
    _check_grid(gn2, ge2, grid, 12.5, rng, exact=True)
    _check_grid(gn, ge2, grid, None, rng, exact=False)  # one axis of each kind
    # nearly uniform (a line moved by 1e-6 of a spacing): the general path, bit for bit
    gn3 = gn.copy()
    gn3[7] += 1e-6 * (gn[1] - gn[0])
    _check_grid(gn3, ge2, grid, None, rng, exact=True)


def test_bilinear_reproduces_a_bilinear_surface() -> None:
    # Bilinear interpolation is exact for f = a + b n + c e + d n e
    # (standard interpolation theory), on any grid.
    rng = np.random.default_rng(8)
    gn = np.cumsum(rng.uniform(5.0, 30.0, 40))
    ge = np.cumsum(rng.uniform(5.0, 30.0, 30))

    def f(n: np.ndarray, e: np.ndarray) -> np.ndarray:
        return 40.0 + 0.02 * n - 0.03 * e + 1e-4 * n * e

    grid = f(gn[:, None], ge[None, :])
    n = rng.uniform(gn[0], gn[-1], 500)
    e = rng.uniform(ge[0], ge[-1], 500)
    got = [tk.seabed_depth(gn, ge, grid, np.nan, a, b) for a, b in zip(n, e, strict=True)]
    np.testing.assert_allclose(got, f(n, e), rtol=1e-12)


# ---------------------------------------------------------------------------
# the filter's steps


def _cloud(m: int, seed: int) -> tuple[np.ndarray, np.ndarray]:
    rng = np.random.default_rng(seed)
    p = rng.normal(0.0, 20.0, (m, 2)) + np.array([100.0, 50.0])
    lw = np.log(rng.dirichlet(np.ones(m)))
    return np.ascontiguousarray(p), lw


def test_init_and_predict_equal_the_numpy_filter_fed_the_same_normals() -> None:
    # Oracle: wavebench.navigation.particle (pf_init / pf_predict with pre-drawn noise).
    key, m = np.uint64(77), 400
    p = np.empty((m, 2))
    lw = np.empty(m)
    tk.pf_init(key, p, lw, 120.0, -40.0, 15.0)
    w0 = _normals(77, 2 * m, int(tk.pf_counter(0, tk.PURPOSE_INIT, 0, 0))).reshape(1, m, 2)
    ref = oracle.pf_init(np.array([[120.0, -40.0]]), np.diag([15.0**2, 15.0**2]), m, noise=w0)
    np.testing.assert_allclose(p, ref.particles[0], rtol=1e-15, atol=1e-12)
    np.testing.assert_array_equal(lw, ref.log_weights[0])
    cloud = oracle.ParticleCloud(p[None].copy(), lw[None].copy())
    tk.pf_predict(key, 5, p, 1.25, -0.5, 0.3)
    w1 = _normals(77, 2 * m, int(tk.pf_counter(5, tk.PURPOSE_PREDICT, 0, 0))).reshape(1, m, 2)
    ref1 = oracle.pf_predict(cloud, np.array([[1.25, -0.5]]), 1.0, 0.3, noise=w1)
    np.testing.assert_array_equal(p, ref1.particles[0])
    # no spread: a pure shift
    before = p.copy()
    tk.pf_predict(key, 6, p, 2.0, 3.0, 0.0)
    np.testing.assert_array_equal(p, before + np.array([2.0, 3.0]))


def test_update_equals_the_numpy_filter() -> None:
    # Oracle: wavebench.navigation.particle.pf_update (no resampling) and
    # effective_sample_size; ESS = 1 / sum w^2 (Arulampalam et al. 2002).
    rng = np.random.default_rng(1)
    gn = np.linspace(0.0, 300.0, 31)
    ge = np.linspace(0.0, 200.0, 21)
    grid = rng.uniform(20.0, 60.0, (31, 21))
    bed = SeabedGrid(north_m=gn, east_m=ge, depth_m=grid)
    p, lw = _cloud(500, 2)  # partly off the grid (east < 0)
    assert np.any(p[:, 1] < 0.0)
    cloud = oracle.ParticleCloud(p[None].copy(), lw[None].copy())
    res = oracle.pf_update(
        cloud, np.array([41.0]), lambda n, e: depth_at(bed, n.ravel(), e.ravel()).reshape(n.shape), 2.0,
        resample_threshold=0.0, u=np.array([0.5]),
    )  # fmt: skip
    ess = tk.pf_update(p, lw, 41.0, 2.0, gn, ge, grid, np.nan)
    want = res.cloud.log_weights[0]
    off = ~np.isfinite(want)
    assert off.any() and np.array_equal(off, ~np.isfinite(lw))  # off-map particles get zero weight
    np.testing.assert_allclose(lw[~off], want[~off], rtol=1e-12, atol=1e-12)
    np.testing.assert_allclose(ess, res.ess[0] / 500, rtol=1e-12)
    # normalised: logsumexp = 0
    assert abs(np.logaddexp.reduce(lw)) < 1e-12


def test_update_without_support_or_measurement_leaves_weights() -> None:
    gn = np.linspace(0.0, 100.0, 11)
    grid = np.full((11, 11), 30.0)
    p, lw = _cloud(50, 3)
    p += 1000.0  # all off the grid
    before = lw.copy()
    assert tk.pf_update(p, lw, 30.0, 1.0, gn, gn, grid, np.nan) == 0.0
    np.testing.assert_array_equal(lw, before)
    assert np.isnan(tk.pf_update(p, lw, np.nan, 1.0, gn, gn, grid, np.nan))
    np.testing.assert_array_equal(lw, before)
    # with a finite fill the off-grid depth is used: all equal, weights unchanged up to rounding
    ess = tk.pf_update(p, lw, 30.0, 1.0, gn, gn, grid, 0.0)
    np.testing.assert_allclose(lw, before, atol=1e-12)
    np.testing.assert_allclose(ess, 1.0 / np.sum(np.exp(2 * before)) / 50, rtol=1e-12)


def test_weight_exponential() -> None:
    # The filter's own exp for x <= 0 against numpy.exp: within 4 ulp down to
    # -708, 0 below (where exp(x) < 3.3e-308, nothing against a largest weight of 1).
    x = np.concatenate([-np.linspace(0.0, 708.0, 200_001), -np.geomspace(1e-300, 1.0, 1000), [-0.0]])
    got = np.array([tk._exp_le0(v) for v in x[::7]])
    np.testing.assert_allclose(got, np.exp(x[::7]), rtol=4 * 2.0**-52, atol=0)
    assert [tk._exp_le0(v) for v in (-708.5, -1e4, -np.inf, np.nan)] == [0.0, 0.0, 0.0, 0.0]


def _published_systematic(w: np.ndarray, u: float) -> np.ndarray:
    # Arulampalam et al. (2002), systematic resampling algorithm as published:
    # CDF c, u_j = (u + j) / N, advance i while u_j > c_i.
    n = w.size
    c = np.cumsum(w)
    c[-1] = 1.0
    out = np.empty(n, dtype=int)
    i = 0
    for j in range(n):
        while (u + j) / n > c[i]:
            i += 1
        out[j] = i
    return out


def test_systematic_resampling_counts_are_floor_or_ceil() -> None:
    # Douc & Cappé (2005): under systematic resampling particle j gets
    # floor(N w_j) or ceil(N w_j) copies; and the indices are those of the
    # published algorithm with the offset drawn at the documented counter.
    key, m = np.uint64(4242), 256
    rng = np.random.default_rng(5)
    for tick in range(40):
        w = rng.dirichlet(np.full(m, 0.3))
        lw = np.log(w)
        p = np.column_stack([np.arange(m, dtype=float), -np.arange(m, dtype=float)])
        tk.pf_resample(key, tick, p, lw)
        idx = p[:, 0].astype(int)
        counts = np.bincount(idx, minlength=m)
        nw = m * w
        assert np.all((counts == np.floor(nw)) | (counts == np.ceil(nw)))
        assert counts.sum() == m
        np.testing.assert_array_equal(p[:, 1], -p[:, 0])  # rows moved whole
        np.testing.assert_array_equal(lw, np.full(m, -np.log(m)))
        u = tk.rng_uniform(key, tk.pf_counter(tick, tk.PURPOSE_RESAMPLE, 0, 0))
        np.testing.assert_array_equal(idx, _published_systematic(w, u))


def test_estimate_is_the_weighted_mean_and_covariance() -> None:
    # Reference: numpy.average and numpy.cov(aweights=w, bias=True).
    p, lw = _cloud(300, 6)
    mean = np.empty(2)
    cov = np.empty((2, 2))
    tk.pf_estimate(p, lw - 700.0, mean, cov)  # unnormalised log weights are fine
    w = np.exp(lw)
    np.testing.assert_allclose(mean, np.average(p, axis=0, weights=w), rtol=1e-12)
    np.testing.assert_allclose(cov, np.cov(p.T, aweights=w, bias=True), rtol=1e-10, atol=1e-12)
    assert cov[0, 1] == cov[1, 0]


def test_too_many_particles_is_refused() -> None:
    p = np.zeros((tk.MAX_PARTICLES + 1, 2))
    with pytest.raises(ValueError, match="MAX_PARTICLES"):
        tk.pf_predict(np.uint64(1), 0, p, 0.0, 0.0, 1.0)


# ---------------------------------------------------------------------------
# the filter against the exact posterior of a linear-Gaussian problem

# Test fixture (invented): depth grows linearly to the north, depth = A + B north,
# so only north is observable. Bilinear interpolation of a linear surface is exact.
A_M, B_M_PER_M = 40.0, 0.1
AXIS = np.linspace(-2000.0, 2000.0, 401)
LINEAR_GRID = np.ascontiguousarray(np.broadcast_to((A_M + B_M_PER_M * AXIS)[:, None], (AXIS.size, AXIS.size)))


def test_static_pf_matches_the_bayes_update_of_a_linear_gaussian_model() -> None:
    # Prior N(mu0, s0^2) per axis, k soundings z_i = A + B n + v_i, v_i ~ N(0, r^2):
    # the exact posterior of n is Gaussian with 1/P = 1/s0^2 + k B^2 / r^2 and
    # mean P (mu0 / s0^2 + B sum(z_i - A) / r^2) (Bayes' rule for a linear-
    # Gaussian model, i.e. the Kalman update; e.g. Bar-Shalom, Li & Kirubarajan
    # 2001, ch. 5). Static vehicle, no process noise, no resampling: the cloud
    # is an importance sample from the prior.
    # Monte Carlo tolerance: with ESS the effective sample size (returned by the
    # filter), a weighted mean has standard error ~ sd / sqrt(ESS) and a
    # weighted variance ~ var * sqrt(2 / ESS) (Kong's ESS approximation for
    # Gaussian posteriors; common practice, no exact source); we allow 5 of them.
    # (Over 10 other key/noise seeds the largest deviation seen was 3.2 of them, the east mean.)
    # For east, which the weights ignore, the weighted mean's error is exactly
    # N(0, s0^2 sum w^2) = N(0, s0^2 / ESS).
    m, s0, r, k = 20_000, 20.0, 0.5, 4
    truth = np.array([130.0, -70.0])
    mu0 = truth + np.array([15.0, -10.0])
    z = A_M + B_M_PER_M * truth[0] + np.random.default_rng(12).normal(0.0, r, k)
    key = np.uint64(0x5EED)
    p = np.empty((m, 2))
    lw = np.empty(m)
    tk.pf_init(key, p, lw, mu0[0], mu0[1], s0)
    mean = np.empty(2)
    cov = np.empty((2, 2))
    for i in range(k):
        ess = tk.pf_step(key, i, p, lw, 0.0, 0.0, 0.0, z[i], r, True, 0.0, AXIS, AXIS, LINEAR_GRID, np.nan,
                         mean, cov)  # fmt: skip
    P = 1.0 / (1.0 / s0**2 + k * B_M_PER_M**2 / r**2)
    post = P * (mu0[0] / s0**2 + B_M_PER_M * np.sum(z - A_M) / r**2)
    n_eff = ess * m
    assert 1000 < n_eff < m  # the weights did concentrate
    assert abs(mean[0] - post) < 5.0 * np.sqrt(P / n_eff)
    assert abs(cov[0, 0] / P - 1.0) < 5.0 * np.sqrt(2.0 / n_eff)
    assert abs(mean[0] - mu0[0]) > 10.0  # and moved far from the prior
    assert abs(mean[1] - mu0[1]) < 4.0 * s0 / np.sqrt(n_eff)
    assert abs(cov[1, 1] / s0**2 - 1.0) < 5.0 * np.sqrt(2.0 / n_eff)


def test_moving_pf_with_resampling_tracks_the_kalman_filter() -> None:
    # Linear-Gaussian random walk: truth n_k = n_{k-1} + v + w_k, w ~ N(0, q^2 I),
    # depth soundings as above; the exact posterior is filterpy.kalman.KalmanFilter's
    # (F = I, B u = v, Q = q^2 I, H = [B, 0], R = r^2). Our tolerances, no source:
    # after 20 steps the PF mean within 0.5 KF standard deviations and the
    # standard deviation within 30 % (1000 particles, resampled at ESS < N/2).
    # Over 10 other key/noise seeds the worst seen were 0.14 sd and 7 %.
    n_steps, m, q, r, s0 = 60, 1000, 0.3, 0.5, 20.0
    rng = np.random.default_rng(31)
    vel = np.array([1.2, -0.7])
    truth = np.cumsum(vel + rng.normal(0.0, q, (n_steps, 2)), axis=0)
    depth = A_M + B_M_PER_M * truth[:, 0] + rng.normal(0.0, r, n_steps)
    prior = np.array([30.0, -15.0])  # the truth starts at the origin
    kf = KalmanFilter(dim_x=2, dim_z=1)
    kf.x = prior.reshape(2, 1).copy()
    kf.P = np.eye(2) * s0**2
    kf.F = np.eye(2)
    kf.B = np.eye(2)
    kf.Q = q**2 * np.eye(2)
    kf.H = np.array([[B_M_PER_M, 0.0]])
    kf.R = np.array([[r**2]])
    key = np.uint64(2718)
    p = np.empty((m, 2))
    lw = np.empty(m)
    tk.pf_init(key, p, lw, prior[0], prior[1], s0)
    mean = np.empty(2)
    cov = np.empty((2, 2))
    resampled = 0
    for i in range(n_steps):
        ess = tk.pf_step(key, i, p, lw, vel[0], vel[1], q, depth[i], r, True, 0.5, AXIS, AXIS, LINEAR_GRID, np.nan,
                         mean, cov)  # fmt: skip
        resampled += ess < 0.5
        kf.predict(u=vel.reshape(2, 1))
        kf.update(np.array([[depth[i] - A_M]]))
        if i >= 20:
            sd = np.sqrt(kf.P[0, 0])
            assert abs(mean[0] - kf.x[0, 0]) < 0.5 * sd, i
            assert abs(np.sqrt(cov[0, 0]) / sd - 1.0) < 0.3, i
    assert resampled > 0


# ---------------------------------------------------------------------------
# terrain-aided navigation over a seabed with features


def _bumpy_seabed() -> tuple[np.ndarray, np.ndarray, np.ndarray, object]:
    """Invented test terrain: 50 m plus 400 gaussian bumps and hollows, one per 100 m square (fixed seed)."""
    rng = np.random.default_rng(2024)
    lattice = np.arange(50.0, 2000.0, 100.0)
    cn = (lattice[:, None] + rng.uniform(-30.0, 30.0, (20, 20))).ravel()
    ce = (lattice[None, :] + rng.uniform(-30.0, 30.0, (20, 20))).ravel()
    amp = rng.choice([-1.0, 1.0], 400) * rng.uniform(2.0, 6.0, 400)
    width = rng.uniform(30.0, 60.0, 400)

    def depth(n: np.ndarray, e: np.ndarray) -> np.ndarray:
        n = np.asarray(n, dtype=float)[..., None]
        e = np.asarray(e, dtype=float)[..., None]
        return 50.0 + np.sum(amp * np.exp(-((n - cn) ** 2 + (e - ce) ** 2) / (2.0 * width**2)), axis=-1)

    axis = np.linspace(0.0, 2000.0, 201)
    grid = np.ascontiguousarray(depth(axis[:, None], axis[None, :]))
    return axis, axis, grid, depth


def test_terrain_aided_error_falls_below_the_prior_and_beats_dead_reckoning() -> None:
    # Check (not a reference value): starting 32 m off with a 30 m prior, the
    # filter's error drops well below the prior spread and stays there while
    # dead reckoning with a biased velocity log drifts away (~37 m after 600 s).
    # Over 8 other key/noise seeds the worst values seen were: max error after
    # 100 s 9.2 m, mean over the last 300 s 5.0 m.
    gn, ge, grid, depth = _bumpy_seabed()
    rng = np.random.default_rng(99)
    n_steps, m, s0 = 600, 1000, 30.0
    vel = np.array([1.0, 0.8])
    truth = np.array([600.0, 500.0]) + np.cumsum(np.tile(vel, (n_steps, 1)), axis=0)
    vel_meas = vel + np.array([0.05, -0.04]) + rng.normal(0.0, 0.05, (n_steps, 2))  # biased log
    dr = np.array([600.0, 500.0]) + np.cumsum(vel_meas, axis=0)
    z = depth(truth[:, 0], truth[:, 1]) + rng.normal(0.0, 0.3, n_steps)
    key = np.uint64(31337)
    p = np.empty((m, 2))
    lw = np.empty(m)
    tk.pf_init(key, p, lw, 600.0 + 25.0, 500.0 - 20.0, s0)
    mean = np.empty(2)
    cov = np.empty((2, 2))
    err = np.empty(n_steps)
    for i in range(n_steps):
        tk.pf_step(key, i, p, lw, vel_meas[i, 0], vel_meas[i, 1], 0.3, z[i], 0.5, True, 0.5, gn, ge, grid, np.nan,
                   mean, cov)  # fmt: skip
        err[i] = np.hypot(*(mean - truth[i]))
    dr_err = np.hypot(*(dr - truth).T)
    assert err[100:].max() < 0.5 * s0
    assert err[-300:].mean() < 0.25 * s0
    assert dr_err[-1] > 30.0
    assert dr_err[-1] > 4.0 * err[-300:].mean()


# ---------------------------------------------------------------------------
# batch wrapper: same bits per trial in any batch


def _batch_inputs(n: int, n_ticks: int) -> dict[str, np.ndarray]:
    rng = np.random.default_rng(17)
    return {
        "keys": rng.integers(0, 2**64, n, dtype=np.uint64),
        "d_north": rng.normal(1.0, 0.3, (n_ticks, n)),
        "d_east": rng.normal(-0.5, 0.3, (n_ticks, n)),
        "q": rng.uniform(0.1, 0.5, n),
        "z": A_M + B_M_PER_M * rng.normal(0.0, 10.0, (n_ticks, n)),
        "r": rng.uniform(0.3, 1.0, n),
        "has": rng.random((n_ticks, n)) < 0.6,
        "active": rng.random((n_ticks, n)) < 0.9,
    }


def _run_batch(inp: dict[str, np.ndarray], trials: list[int], m: int, n_ticks: int):  # type: ignore[no-untyped-def]
    n = len(trials)
    sel = np.array(trials)
    p = np.empty((n, m, 2))
    lw = np.empty((n, m))
    tk.pf_init_batch(inp["keys"][sel], p, lw, np.zeros(n), np.zeros(n), np.full(n, 20.0))
    mean = np.full((n_ticks, n, 2), np.nan)
    cov = np.full((n_ticks, n, 2, 2), np.nan)
    ess = np.full((n_ticks, n), -1.0)
    for t in range(n_ticks):
        tk.pf_step_batch(inp["keys"][sel], t, p, lw, inp["d_north"][t, sel], inp["d_east"][t, sel], inp["q"][sel],
                         inp["z"][t, sel], inp["r"][sel], inp["has"][t, sel], 0.5, AXIS, AXIS, LINEAR_GRID, np.nan,
                         inp["active"][t, sel], mean[t], cov[t], ess[t])  # fmt: skip
    return p, lw, mean, cov, ess


def test_batch_equals_single_trial_calls_and_other_batches() -> None:
    n, m, n_ticks = 7, 300, 25
    inp = _batch_inputs(n, n_ticks)
    full = _run_batch(inp, list(range(n)), m, n_ticks)
    p_full, lw_full, mean_full, cov_full, ess_full = full
    # both paths of the resampling rule and of the measurement/activity masks were taken
    assert np.any((ess_full > 0) & (ess_full < 0.5)) and np.any(ess_full >= 0.5)
    assert np.any(ess_full == -1.0) and np.any(np.isnan(ess_full))
    # one trial at a time through pf_step
    for i in range(n):
        p = np.empty((m, 2))
        lw = np.empty(m)
        tk.pf_init(inp["keys"][i], p, lw, 0.0, 0.0, 20.0)
        for t in range(n_ticks):
            if not inp["active"][t, i]:
                continue
            mean = np.empty(2)
            cov = np.empty((2, 2))
            e = tk.pf_step(inp["keys"][i], t, p, lw, inp["d_north"][t, i], inp["d_east"][t, i], inp["q"][i],
                           inp["z"][t, i], inp["r"][i], inp["has"][t, i], 0.5, AXIS, AXIS, LINEAR_GRID, np.nan,
                           mean, cov)  # fmt: skip
            np.testing.assert_array_equal(mean, mean_full[t, i])
            np.testing.assert_array_equal(cov, cov_full[t, i])
            np.testing.assert_array_equal(e, ess_full[t, i])
        np.testing.assert_array_equal(p, p_full[i])
        np.testing.assert_array_equal(lw, lw_full[i])
    # a different batch, in another order
    trials = [5, 1, 3]
    p_part, lw_part, mean_part, cov_part, ess_part = _run_batch(inp, trials, m, n_ticks)
    for j, i in enumerate(trials):
        np.testing.assert_array_equal(p_part[j], p_full[i])
        np.testing.assert_array_equal(lw_part[j], lw_full[i])
        np.testing.assert_array_equal(mean_part[:, j], mean_full[:, i])
        np.testing.assert_array_equal(cov_part[:, j], cov_full[:, i])
        np.testing.assert_array_equal(ess_part[:, j], ess_full[:, i])
    # inactive trials' outputs are not touched
    assert np.all(np.isnan(mean_full[~inp["active"]]))
