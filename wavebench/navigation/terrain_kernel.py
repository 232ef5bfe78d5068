"""Compiled terrain-aided particle filter for one trial, with a counter-based random generator.

The functions here advance the particle cloud of **one** trial and are
compiled with numba (``@njit``, no fast-math), so that a compiled campaign
kernel can call them from inside its own ``prange`` over trials and a numpy
engine can call :func:`pf_step_batch` once per control period for all its
trials. They operate in place on contiguous float64 arrays: ``particles``
of shape ``(n_particles, 2)`` (``[north, east]``, m) and ``logw`` of shape
``(n_particles,)`` (natural-log weights). The batched numpy filter of
:mod:`wavebench.navigation.particle` is the library version and the oracle
for behaviour: same bootstrap (SIR) filter, same Gaussian depth likelihood,
same systematic resampling rule, same seabed interpolation.

Random numbers
--------------
Nothing here keeps a generator state. A draw is a pure function of a
per-trial ``key`` (uint64, drawn once per trial from the trial's streams
and dedicated to this filter) and a ``counter`` (uint64) built from what
the draw is for, so a trial's numbers do not depend on thread scheduling,
batch composition, the block of ticks a kernel runs, or the order of calls:

- :func:`rng_u64` ``(key, c)`` is output number ``c`` (0-based) of the
  SplitMix64 generator seeded with ``key``: the finaliser ``mix64`` applied
  to ``key + (c + 1) * 0x9E3779B97F4A7C15`` (mod 2**64), Steele, Lea &
  Flood (2014) [1]_, in the form of Vigna's reference ``splitmix64.c``
  (which is what makes ``rng_u64(0, 0) == 0xE220A8397B1DCDAF``);
- :func:`rng_uniform` takes its top 53 bits, ``u = (x >> 11) * 2**-53``,
  in (0, 1): the one value ``k = x >> 11 = 0`` (probability 2**-53) is
  replaced by ``2**-54`` so that 0 never occurs;
- :func:`rng_normal` is the inverse normal CDF of that uniform, by
  Wichura's algorithm AS 241 (PPND16, relative accuracy about 1e-16) [2]_:
  one uniform per normal and mostly no transcendental function (only the
  15 % of draws in the tails take a ``log`` and a ``sqrt``), which is why it
  is used here instead of Box-Muller. The normals are bounded by about
  8.3 in magnitude (the uniform's resolution).

Counter scheme (:func:`pf_counter`)::

    counter = (((tick * N_PURPOSES + purpose) * MAX_PARTICLES + particle) * 2 + axis)

with ``N_PURPOSES = 4``, ``MAX_PARTICLES = 2**20`` and ``axis`` 0 (north)
or 1 (east). Purposes: :data:`PURPOSE_INIT` (0, the prior draw of
:func:`pf_init`, at tick 0), :data:`PURPOSE_PREDICT` (1, process noise of
particle ``j`` at ``tick``), :data:`PURPOSE_RESAMPLE` (2, the single
systematic-resampling offset at ``tick``: particle 0, axis 0); purpose 3 is
reserved. ``tick`` is the control period's index (>= 0); the scheme uses
23 bits below the tick, so ticks up to 2**41 never reuse a counter. A
trial's cloud may have at most ``MAX_PARTICLES`` particles.

Key: give each trial its own uint64 key, drawn from its streams, e.g.
``streams.draw("nav.pf.key", lambda g: g.integers(0, 2**64, dtype=np.uint64))``.
Two keys give overlapping streams only if their difference is a small
multiple of the odd constant 0x9E3779B97F4A7C15 (mod 2**64), which random
64-bit keys are not.

Seabed
------
The depth at a particle is the bilinear interpolation of a grid (``gn``
north axis, ``ge`` east axis, ``grid[i, j]`` depth at ``(gn[i], ge[j])``),
bit for bit the convention of :func:`wavebench.sea.seabed.depth_at` and of
the fused run's compiled lookup: the enclosing cell is the one
``searchsorted(side="right") - 1``, clipped to the last cell, would give,
and points outside the grid (or at NaN positions) get ``fill``. A uniform
axis finds the cell by one multiplication (checked against the two
neighbouring grid lines, with ``searchsorted`` as the fallback), so the
result is the same for any strictly increasing axis.

A particle whose depth is NaN (outside the grid with ``fill`` NaN: no
information) gets zero weight (log weight ``-inf``), like the numpy filter.
If *every* particle would get zero weight the update leaves the weights
unchanged and returns 0 as its effective-sample-size fraction (a lost
filter; the numpy filter's ``no_support``). A finite ``fill`` (e.g. 0 m,
"off the chart is land") is used as the depth there.

References
----------
.. [1] G. L. Steele Jr., D. Lea and C. H. Flood, "Fast splittable
   pseudorandom number generators", OOPSLA 2014, ACM SIGPLAN Notices 49(10),
   453-472 (2014); S. Vigna, ``splitmix64.c`` (reference implementation).
.. [2] M. J. Wichura, "Algorithm AS 241: The percentage points of the normal
   distribution", Applied Statistics 37(3), 477-484 (1988).
.. [3] M. S. Arulampalam, S. Maskell, N. Gordon and T. Clapp, "A tutorial on
   particle filters for online nonlinear/non-Gaussian Bayesian tracking",
   IEEE Transactions on Signal Processing 50(2), 174-188 (2002).
.. [4] R. Douc and O. Cappé, "Comparison of resampling schemes for particle
   filtering", Proc. 4th International Symposium on Image and Signal
   Processing and Analysis (ISPA), 64-69 (2005).
"""

from __future__ import annotations

import numba
import numpy as np

__all__ = [
    "MAX_PARTICLES",
    "N_PURPOSES",
    "PURPOSE_INIT",
    "PURPOSE_PREDICT",
    "PURPOSE_RESAMPLE",
    "pf_counter",
    "pf_estimate",
    "pf_init",
    "pf_init_batch",
    "pf_predict",
    "pf_resample",
    "pf_step",
    "pf_step_batch",
    "pf_update",
    "rng_fill_normal",
    "rng_fill_uniform",
    "rng_normal",
    "rng_u64",
    "rng_uniform",
    "seabed_depth",
]

#: Purposes of the counter scheme (see the module notes).
N_PURPOSES = 4
PURPOSE_INIT = 0
PURPOSE_PREDICT = 1
PURPOSE_RESAMPLE = 2
#: Most particles a trial's cloud may hold (the counter scheme's particle field).
MAX_PARTICLES = 2**20

_GOLDEN = np.uint64(0x9E3779B97F4A7C15)
_MIX1 = np.uint64(0xBF58476D1CE4E5B9)
_MIX2 = np.uint64(0x94D049BB133111EB)
_ONE = np.uint64(1)
_TWO = np.uint64(2)
_S11 = np.uint64(11)
_S27 = np.uint64(27)
_S30 = np.uint64(30)
_S31 = np.uint64(31)
_U_PURPOSES = np.uint64(N_PURPOSES)
_U_MAXP = np.uint64(MAX_PARTICLES)
_TWO_M53 = 2.0**-53
_TWO_M54 = 2.0**-54

_JIT = {"cache": True, "error_model": "numpy"}

# exp for x <= 0 (weights relative to the largest): Cody-Waite reduction
# x = k ln2 + r, |r| <= ln2 / 2, degree-13 Taylor polynomial (remainder
# 0.347**14 / 14! < 5e-18), 2**k from a table.
_LOG2E = 1.4426950408889634
_LN2_HI = 6.93147180369123816490e-01
_LN2_LO = 1.90821492927058770002e-10
_POW2_NEG = 2.0 ** -np.arange(1024.0)


# ---------------------------------------------------------------------------
# counter-based random numbers


@numba.njit(**_JIT)
def rng_u64(key, counter):  # type: ignore[no-untyped-def]
    """Output ``counter`` of SplitMix64 seeded with ``key``.

    Parameters
    ----------
    key : uint64
        Stream key (a trial's key).
    counter : uint64 or int64
        Position in the stream (0-based).

    Returns
    -------
    uint64
        ``mix64(key + (counter + 1) * 0x9E3779B97F4A7C15)`` with
        ``mix64(z)``: ``z ^= z >> 30; z *= 0xBF58476D1CE4E5B9; z ^= z >> 27;
        z *= 0x94D049BB133111EB; z ^= z >> 31`` (all mod 2**64).

    Examples
    --------
    >>> hex(int(rng_u64(np.uint64(0), np.uint64(0))))
    '0xe220a8397b1dcdaf'
    """
    z = np.uint64(key) + (np.uint64(counter) + _ONE) * _GOLDEN
    z = (z ^ (z >> _S30)) * _MIX1
    z = (z ^ (z >> _S27)) * _MIX2
    return z ^ (z >> _S31)


@numba.njit(**_JIT)
def _top53(key, counter):  # type: ignore[no-untyped-def]
    """``(rng_u64 >> 11) * 2**-53`` in [0, 1): 0 is mapped to 2**-54 by the callers."""
    return float(rng_u64(key, counter) >> _S11) * _TWO_M53


@numba.njit(**_JIT)
def rng_uniform(key, counter):  # type: ignore[no-untyped-def]
    """Uniform in (0, 1) from the top 53 bits of :func:`rng_u64`.

    Returns
    -------
    float
        ``(rng_u64(key, counter) >> 11) * 2**-53``, or ``2**-54`` where
        that would be 0.

    Examples
    --------
    >>> 0.0 < rng_uniform(np.uint64(7), np.uint64(3)) < 1.0
    True
    """
    u = _top53(key, counter)
    return u if u > 0.0 else _TWO_M54


@numba.njit(**_JIT)
def _ndtri_central(q):  # type: ignore[no-untyped-def]
    """AS 241 for |q| = |p - 0.5| <= 0.425 (branch-free, so loops over it vectorise)."""
    r = 0.180625 - q * q
    num = (((((((2.5090809287301226727e3 * r + 3.3430575583588128105e4) * r + 6.7265770927008700853e4) * r
               + 4.5921953931549871457e4) * r + 1.3731693765509461125e4) * r + 1.9715909503065514427e3) * r
            + 1.3314166789178437745e2) * r + 3.3871328727963666080e0)  # fmt: skip
    den = (((((((5.2264952788528545610e3 * r + 2.8729085735721942674e4) * r + 3.9307895800092710610e4) * r
               + 2.1213794301586595867e4) * r + 5.3941960214247511077e3) * r + 6.8718700749205790830e2) * r
            + 4.2313330701600911252e1) * r + 1.0)  # fmt: skip
    return q * num / den


@numba.njit(**_JIT)
def _ndtri(p):  # type: ignore[no-untyped-def]
    """Inverse standard normal CDF for p in (0, 1): Wichura (1988), AS 241 (PPND16)."""
    q = p - 0.5
    if abs(q) <= 0.425:
        return _ndtri_central(q)
    r = p if q < 0.0 else 1.0 - p
    r = np.sqrt(-np.log(r))
    if r <= 5.0:
        r -= 1.6
        num = (((((((7.74545014278341407640e-4 * r + 2.27238449892691845833e-2) * r + 2.41780725177450611770e-1) * r
                   + 1.27045825245236838258e0) * r + 3.64784832476320460504e0) * r + 5.76949722146069140550e0) * r
                + 4.63033784615654529590e0) * r + 1.42343711074968357734e0)  # fmt: skip
        den = (((((((1.05075007164441684324e-9 * r + 5.47593808499534494600e-4) * r + 1.51986665636164571966e-2) * r
                   + 1.48103976427480074590e-1) * r + 6.89767334985100004550e-1) * r + 1.67638483018380384940e0) * r
                + 2.05319162663775882187e0) * r + 1.0)  # fmt: skip
    else:
        r -= 5.0
        num = (((((((2.01033439929228813265e-7 * r + 2.71155556874348757815e-5) * r + 1.24266094738807843860e-3) * r
                   + 2.65321895265761230930e-2) * r + 2.96560571828504891230e-1) * r + 1.78482653991729133580e0) * r
                + 5.46378491116411436990e0) * r + 6.65790464350110377720e0)  # fmt: skip
        den = (((((((2.04426310338993978564e-15 * r + 1.42151175831644588870e-7) * r + 1.84631831751005468180e-5) * r
                   + 7.86869131145613259100e-4) * r + 1.48753612908506148525e-2) * r + 1.36929880922735805310e-1) * r
                + 5.99832206555887937690e-1) * r + 1.0)  # fmt: skip
    val = num / den
    return -val if q < 0.0 else val


@numba.njit(**_JIT)
def rng_normal(key, counter):  # type: ignore[no-untyped-def]
    """Standard normal: the inverse normal CDF (AS 241) of :func:`rng_uniform` at the same counter.

    Returns
    -------
    float
        ``Phi^-1(rng_uniform(key, counter))``; one uniform per normal.

    Examples
    --------
    >>> from scipy.special import ndtri
    >>> k, c = np.uint64(7), np.uint64(3)
    >>> bool(abs(rng_normal(k, c) - ndtri(rng_uniform(k, c))) < 1e-14)
    True
    """
    return _ndtri(rng_uniform(key, counter))


@numba.njit(**_JIT)
def rng_fill_uniform(key, counter0, out):  # type: ignore[no-untyped-def]
    """Fill ``out`` (1-D float64) with ``rng_uniform(key, counter0 + i)``."""
    c0 = np.uint64(counter0)
    for i in range(out.shape[0]):
        out[i] = rng_uniform(key, c0 + np.uint64(i))


@numba.njit(**_JIT)
def rng_fill_normal(key, counter0, out):  # type: ignore[no-untyped-def]
    """Fill ``out`` (1-D float64) with ``rng_normal(key, counter0 + i)``, bit for bit.

    Notes
    -----
    Two passes for speed: a branch-free pass (which the compiler vectorises)
    draws the uniforms and applies AS 241's central formula to all of them,
    then a scalar pass redoes the ~15 % in the tails (``|u - 0.5| > 0.425``)
    and the ``u = 0`` case. Every value is what :func:`rng_normal` gives.
    """
    n = out.shape[0]
    c0 = np.uint64(counter0)
    u = np.empty(n)
    for i in range(n):
        u[i] = _top53(key, c0 + np.uint64(i))
    for i in range(n):
        out[i] = _ndtri_central(u[i] - 0.5)
    for i in range(n):
        if abs(u[i] - 0.5) > 0.425:  # the tails (and u = 0): scalar
            out[i] = _ndtri(u[i] if u[i] > 0.0 else _TWO_M54)


@numba.njit(**_JIT)
def pf_counter(tick, purpose, particle, axis):  # type: ignore[no-untyped-def]
    """Counter of a draw: ``((tick * N_PURPOSES + purpose) * MAX_PARTICLES + particle) * 2 + axis``.

    Parameters
    ----------
    tick : int
        Control period index (>= 0).
    purpose : int
        One of the ``PURPOSE_*`` constants (0 <= purpose < N_PURPOSES).
    particle : int
        Particle index (0 <= particle < MAX_PARTICLES).
    axis : int
        0 north, 1 east.

    Returns
    -------
    uint64

    Examples
    --------
    >>> int(pf_counter(3, PURPOSE_PREDICT, 5, 1)) == ((3 * 4 + 1) * 2**20 + 5) * 2 + 1
    True
    """
    c = (np.uint64(tick) * _U_PURPOSES + np.uint64(purpose)) * _U_MAXP + np.uint64(particle)
    return c * _TWO + np.uint64(axis)


@numba.njit(**_JIT)
def _exp_le0(x):  # type: ignore[no-untyped-def]
    """``exp(x)`` for ``x <= 0`` (``-inf`` allowed), within 2 ulp; 0 below -708 (no subnormals).

    Branch-free with a table for ``2**k``, so loops over it vectorise,
    unlike the library ``exp``.
    """
    xc = max(x, -708.0)
    k = np.floor(xc * _LOG2E + 0.5)
    r = (xc - k * _LN2_HI) - k * _LN2_LO
    p = 1.6059043836821613e-10  # 1 / 13!
    p = p * r + 2.08767569878681e-09
    p = p * r + 2.505210838544172e-08
    p = p * r + 2.755731922398589e-07
    p = p * r + 2.7557319223985893e-06
    p = p * r + 2.48015873015873e-05
    p = p * r + 0.0001984126984126984
    p = p * r + 0.001388888888888889
    p = p * r + 0.008333333333333333
    p = p * r + 0.041666666666666664
    p = p * r + 0.16666666666666666
    p = p * r + 0.5
    p = p * r + 1.0
    p = p * r + 1.0
    e = p * _POW2_NEG[int(-k)]
    return e if x >= -708.0 else 0.0


# ---------------------------------------------------------------------------
# seabed


@numba.njit(**_JIT)
def _search(axis, x):  # type: ignore[no-untyped-def]
    return min(max(np.searchsorted(axis, x, side="right") - 1, 0), axis.shape[0] - 2)


@numba.njit(**_JIT)
def _fill_depths(gn, ge, grid, fill, points, out):  # type: ignore[no-untyped-def]
    """Bilinear depth at each row ``[north, east]`` of ``points`` into ``out``.

    The cell index is guessed from the axis' mean spacing and kept when the
    two grid lines around it bracket the point; otherwise (non-uniform axis)
    it comes from ``searchsorted``. Either way it is
    ``clip(searchsorted(axis, x, "right") - 1, 0, size - 2)``, as in
    :func:`wavebench.sea.seabed.depth_at`, and the interpolation is written
    as there, so the depths are the same bits.
    """
    n0 = gn[0]
    n1 = gn[-1]
    e0 = ge[0]
    e1 = ge[-1]
    last_n = gn.shape[0] - 2
    last_e = ge.shape[0] - 2
    inv_n = (last_n + 1) / (n1 - n0)
    inv_e = (last_e + 1) / (e1 - e0)
    for k in range(points.shape[0]):
        n = points[k, 0]
        e = points[k, 1]
        if not (n >= n0 and n <= n1 and e >= e0 and e <= e1):  # outside, or NaN
            out[k] = fill
            continue
        i0 = min(max(int((n - n0) * inv_n), 0), last_n)
        if not (gn[i0] <= n and (i0 == last_n or n < gn[i0 + 1])):
            i0 = _search(gn, n)
        j0 = min(max(int((e - e0) * inv_e), 0), last_e)
        if not (ge[j0] <= e and (j0 == last_e or e < ge[j0 + 1])):
            j0 = _search(ge, e)
        wn = (n - gn[i0]) / (gn[i0 + 1] - gn[i0])
        we = (e - ge[j0]) / (ge[j0 + 1] - ge[j0])
        low = (1.0 - we) * grid[i0, j0] + we * grid[i0, j0 + 1]
        high = (1.0 - we) * grid[i0 + 1, j0] + we * grid[i0 + 1, j0 + 1]
        out[k] = (1.0 - wn) * low + wn * high


@numba.njit(**_JIT)
def seabed_depth(gn, ge, grid, fill, north_m, east_m):  # type: ignore[no-untyped-def]
    """Bilinear seabed depth at one point, as :func:`wavebench.sea.seabed.depth_at`.

    Parameters
    ----------
    gn : ndarray of shape (n_north,)
        Strictly increasing north axis [m].
    ge : ndarray of shape (n_east,)
        Strictly increasing east axis [m].
    grid : ndarray of shape (n_north, n_east)
        Depth [m], positive down.
    fill : float
        Depth returned outside the grid or at a NaN position [m] (NaN: unknown).
    north_m, east_m : float
        Query position [m].

    Returns
    -------
    float
        ``(1 - w_n)((1 - w_e) d00 + w_e d01) + w_n((1 - w_e) d10 + w_e d11)``
        with ``w_n, w_e`` the fractional position in the enclosing cell.

    Examples
    --------
    >>> axis = np.array([0.0, 10.0, 20.0])
    >>> grid = np.add.outer(axis, 2.0 * axis)  # depth = north + 2 east
    >>> float(seabed_depth(axis, axis, grid, np.nan, 5.0, 12.5))
    30.0
    """
    pt = np.empty((1, 2))
    pt[0, 0] = north_m
    pt[0, 1] = east_m
    out = np.empty(1)
    _fill_depths(gn, ge, grid, fill, pt, out)
    return out[0]


# ---------------------------------------------------------------------------
# the filter, one trial


@numba.njit(**_JIT)
def _check_size(m):  # type: ignore[no-untyped-def]
    if m < 1 or m > MAX_PARTICLES:
        raise ValueError("n_particles must be in [1, MAX_PARTICLES]")


@numba.njit(**_JIT)
def _jitter(key, tick, purpose, particles, sd_m, d_north, d_east):  # type: ignore[no-untyped-def]
    """``p_j <- (p_j + d) + sd_m * w_j`` with ``w_j`` at ``pf_counter(tick, purpose, j, axis)``."""
    m = particles.shape[0]
    w = np.empty(2 * m)
    rng_fill_normal(key, pf_counter(tick, purpose, 0, 0), w)
    for j in range(m):
        particles[j, 0] = particles[j, 0] + d_north + sd_m * w[2 * j]
        particles[j, 1] = particles[j, 1] + d_east + sd_m * w[2 * j + 1]


@numba.njit(**_JIT)
def pf_init(key, particles, logw, north0, east0, sd_m):  # type: ignore[no-untyped-def]
    """Draw the prior cloud: ``particles[j] = [north0, east0] + sd_m * w_j``, equal weights.

    Parameters
    ----------
    key : uint64
        The trial's key.
    particles : ndarray of shape (n_particles, 2)
        Written in place [m]; 1 <= n_particles <= MAX_PARTICLES.
    logw : ndarray of shape (n_particles,)
        Written in place with ``-log(n_particles)``.
    north0, east0 : float
        Prior mean [m].
    sd_m : float
        Prior standard deviation per axis [m] (>= 0).

    Notes
    -----
    ``w_j`` are standard normals at ``pf_counter(0, PURPOSE_INIT, j, axis)``.
    """
    m = particles.shape[0]
    _check_size(m)
    for j in range(m):
        particles[j, 0] = 0.0
        particles[j, 1] = 0.0
    _jitter(key, 0, PURPOSE_INIT, particles, sd_m, north0, east0)
    lw = -np.log(m)
    for j in range(m):
        logw[j] = lw


@numba.njit(**_JIT)
def pf_predict(key, tick, particles, d_north, d_east, sd_m):  # type: ignore[no-untyped-def]
    """Move every particle by the dead-reckoned displacement plus independent normal spread.

    Parameters
    ----------
    key : uint64
        The trial's key.
    tick : int
        Control period index (>= 0), for the counters.
    particles : ndarray of shape (n_particles, 2)
        Updated in place [m].
    d_north, d_east : float
        Displacement over the step [m] (e.g. dead-reckoned velocity times dt).
    sd_m : float
        Standard deviation of the spread per axis and step [m] (>= 0; with
        0 nothing is drawn).

    Notes
    -----
    ``p_j <- (p_j + d) + sd_m * w_j`` (the numpy filter's order of
    operations), ``w_j`` at ``pf_counter(tick, PURPOSE_PREDICT, j, axis)``.
    """
    m = particles.shape[0]
    _check_size(m)
    if sd_m == 0.0:
        for j in range(m):
            particles[j, 0] = particles[j, 0] + d_north
            particles[j, 1] = particles[j, 1] + d_east
        return
    _jitter(key, tick, PURPOSE_PREDICT, particles, sd_m, d_north, d_east)


@numba.njit(**_JIT)
def _weigh(particles, logw, z_depth_m, sd_m, gn, ge, grid, fill, w):  # type: ignore[no-untyped-def]
    """:func:`pf_update`, leaving ``exp(log w_j - max)`` in ``w``; returns (ESS fraction, sum of w)."""
    m = logw.shape[0]
    if not np.isfinite(z_depth_m):
        return np.nan, 0.0
    _fill_depths(gn, ge, grid, fill, particles, w)
    top = -np.inf
    for j in range(m):
        d = w[j]
        if np.isnan(d):
            v = -np.inf
        else:
            r = (z_depth_m - d) / sd_m
            v = logw[j] + r * r * -0.5
        w[j] = v
        if v > top:
            top = v
    if not top > -np.inf:  # no particle has support: leave the weights alone
        return 0.0, 0.0
    s = 0.0
    s2 = 0.0
    for j in range(m):
        v = w[j]
        logw[j] = v
        e = _exp_le0(v - top)
        w[j] = e
        s += e
        s2 += e * e
    shift = top + np.log(s)
    for j in range(m):
        logw[j] = logw[j] - shift
    return (s * s / s2) / m, s


@numba.njit(**_JIT)
def pf_update(particles, logw, z_depth_m, sd_m, gn, ge, grid, fill):  # type: ignore[no-untyped-def]
    """Weight by a measured seabed depth and normalise; return the ESS fraction.

    Parameters
    ----------
    particles : ndarray of shape (n_particles, 2)
        Positions [m] (not changed).
    logw : ndarray of shape (n_particles,)
        Log weights, updated in place and normalised (``logsumexp = 0``).
    z_depth_m : float
        Measured seabed depth [m] (depth sensor + altimeter range).
    sd_m : float
        Standard deviation of the depth error, sensor and map [m] (> 0).
    gn, ge, grid, fill
        The seabed, as in :func:`seabed_depth`.

    Returns
    -------
    float
        ``ESS / n_particles`` after the update, ``ESS = 1 / sum(w^2)``
        (Arulampalam et al. 2002). 0 when no particle has a depth (all off a
        NaN-filled grid): the weights are then left unchanged. NaN when
        ``z_depth_m`` is not finite (weights unchanged).

    Notes
    -----
    ``log w_j <- log w_j - 0.5 ((z - d(p_j)) / s)^2`` (NaN ``d``: ``-inf``,
    zero weight), then ``log w_j -= M + log(sum_k exp(log w_k - M))`` with
    ``M`` the largest log weight (log-sum-exp; nothing underflows).
    """
    w = np.empty(logw.shape[0])
    return _weigh(particles, logw, z_depth_m, sd_m, gn, ge, grid, fill, w)[0]


@numba.njit(**_JIT)
def _systematic(key, tick, particles, logw, w, s):  # type: ignore[no-untyped-def]
    """Resample from weights ``w / s`` (``w`` >= 0, ``s`` their sum); set ``logw`` uniform and ``w`` to 1."""
    m = logw.shape[0]
    u = rng_uniform(key, pf_counter(tick, PURPOSE_RESAMPLE, 0, 0))
    src = particles.copy()
    c = 0.0
    prev = 0
    k = 0
    for j in range(m):
        c += w[j] / s
        cj = 1.0 if j == m - 1 else min(c, 1.0)
        edge = int(np.ceil(cj * m - u))
        for _ in range(edge - prev):
            particles[k, 0] = src[j, 0]
            particles[k, 1] = src[j, 1]
            k += 1
        prev = edge
    lw = -np.log(m)
    for j in range(m):
        logw[j] = lw
        w[j] = 1.0


@numba.njit(**_JIT)
def _unnormalised(logw, w):  # type: ignore[no-untyped-def]
    """``w_j = exp(log w_j - max)`` (1 without an ``exp`` where equal to the max); returns the sum."""
    m = logw.shape[0]
    top = -np.inf
    for j in range(m):
        if logw[j] > top:
            top = logw[j]
    s = 0.0
    for j in range(m):
        d = logw[j] - top
        e = 1.0 if d == 0.0 else _exp_le0(d)
        w[j] = e
        s += e
    return s


@numba.njit(**_JIT)
def pf_resample(key, tick, particles, logw):  # type: ignore[no-untyped-def]
    """Systematic resampling (Douc & Cappé 2005) with one uniform offset; then equal weights.

    Parameters
    ----------
    key : uint64
        The trial's key.
    tick : int
        Control period index (>= 0); the offset ``u`` is
        ``rng_uniform(key, pf_counter(tick, PURPOSE_RESAMPLE, 0, 0))``.
    particles : ndarray of shape (n_particles, 2)
        Replaced in place by the resampled cloud (ordered by source index).
    logw : ndarray of shape (n_particles,)
        Read, then set to ``-log(n_particles)``.

    Notes
    -----
    Copies of particle ``j``: ``ceil(P c_j - u) - ceil(P c_{j-1} - u)`` with
    ``c`` the cumulative normalised weights (clipped to 1, the last set to
    1), i.e. the number of positions ``(u + k) / P`` in ``[c_{j-1}, c_j)``;
    so ``floor(P w_j)`` or ``ceil(P w_j)`` copies. The same arithmetic as
    :func:`wavebench.navigation.particle.systematic_counts`. A cloud
    without support (all ``-inf``) is left unchanged.
    """
    w = np.empty(logw.shape[0])
    s = _unnormalised(logw, w)
    if not s > 0.0:
        return
    _systematic(key, tick, particles, logw, w, s)


@numba.njit(**_JIT)
def _moments(particles, w, s, mean_out, cov_out):  # type: ignore[no-untyped-def]
    m = w.shape[0]
    sn = 0.0
    se = 0.0
    for j in range(m):
        sn += w[j] * particles[j, 0]
        se += w[j] * particles[j, 1]
    mn = sn / s
    me = se / s
    cnn = 0.0
    cne = 0.0
    cee = 0.0
    for j in range(m):
        dn = particles[j, 0] - mn
        de = particles[j, 1] - me
        cnn += w[j] * dn * dn
        cne += w[j] * dn * de
        cee += w[j] * de * de
    mean_out[0] = mn
    mean_out[1] = me
    cov_out[0, 0] = cnn / s
    cov_out[0, 1] = cne / s
    cov_out[1, 0] = cne / s
    cov_out[1, 1] = cee / s


@numba.njit(**_JIT)
def pf_estimate(particles, logw, mean_out, cov_out):  # type: ignore[no-untyped-def]
    """Weighted mean and covariance of the cloud.

    Parameters
    ----------
    particles : ndarray of shape (n_particles, 2)
        Positions [m].
    logw : ndarray of shape (n_particles,)
        Log weights (normalised here).
    mean_out : ndarray of shape (2,)
        Written: ``sum_j w_j p_j`` [m].
    cov_out : ndarray of shape (2, 2)
        Written: ``sum_j w_j (p_j - mean)(p_j - mean)'`` [m^2], the weighted
        population covariance (symmetric by construction).
    """
    w = np.empty(logw.shape[0])
    s = _unnormalised(logw, w)
    _moments(particles, w, s, mean_out, cov_out)


@numba.njit(**_JIT)
def pf_step(
    key, tick, particles, logw, d_north, d_east, process_sd_m, z_depth_m, meas_sd_m, has_meas, resample_below,
    gn, ge, grid, fill, mean_out, cov_out,
):  # type: ignore[no-untyped-def]  # fmt: skip
    """One control period of one trial: predict, update and resample if measured, estimate.

    Parameters
    ----------
    key : uint64
        The trial's key.
    tick : int
        Control period index (>= 0).
    particles : ndarray of shape (n_particles, 2)
        Cloud [m], advanced in place.
    logw : ndarray of shape (n_particles,)
        Log weights, advanced in place.
    d_north, d_east : float
        Dead-reckoned displacement over the period [m].
    process_sd_m : float
        Spread added per axis in the prediction [m] (>= 0).
    z_depth_m : float
        Measured seabed depth [m] (used when ``has_meas``).
    meas_sd_m : float
        Depth error standard deviation [m] (> 0).
    has_meas : bool
        A depth measurement arrived this period.
    resample_below : float
        Resample when ``0 < ESS / n_particles < resample_below`` (0: never).
    gn, ge, grid, fill
        The seabed, as in :func:`seabed_depth`.
    mean_out : ndarray of shape (2,)
        Written: estimate [m].
    cov_out : ndarray of shape (2, 2)
        Written: its covariance [m^2].

    Returns
    -------
    float
        The ESS fraction after the update (before resampling), as returned
        by :func:`pf_update`; NaN without a measurement.

    Notes
    -----
    The same as :func:`pf_predict`, then :func:`pf_update`, then
    :func:`pf_resample` when ``0 < ess < resample_below``, then
    :func:`pf_estimate`, except that the resampling and the estimate use the
    update's own exponentials (``exp(log w - max)`` before normalisation)
    instead of recomputing them from the normalised log weights, so their
    last bits may differ from that sequence of calls.
    """
    pf_predict(key, tick, particles, d_north, d_east, process_sd_m)
    m = logw.shape[0]
    w = np.empty(m)
    ess = np.nan
    s = 0.0
    if has_meas:
        ess, s = _weigh(particles, logw, z_depth_m, meas_sd_m, gn, ge, grid, fill, w)
        if ess > 0.0 and ess < resample_below:
            _systematic(key, tick, particles, logw, w, s)
            s = float(m)
    if not s > 0.0:
        s = _unnormalised(logw, w)
    _moments(particles, w, s, mean_out, cov_out)
    return ess


# ---------------------------------------------------------------------------
# batch wrappers (numpy engine): one prange over trials, same bits per trial


@numba.njit(parallel=True, **_JIT)
def pf_init_batch(keys, particles, logw, north0, east0, sd_m):  # type: ignore[no-untyped-def]
    """:func:`pf_init` for every trial, in parallel over trials.

    Parameters
    ----------
    keys : ndarray of uint64, shape (n_trials,)
    particles : ndarray of shape (n_trials, n_particles, 2)
    logw : ndarray of shape (n_trials, n_particles)
    north0, east0, sd_m : ndarray of shape (n_trials,)
        Prior mean [m] and standard deviation per axis [m].
    """
    n = keys.shape[0]
    _check_size(particles.shape[1])
    for i in numba.prange(n):
        pf_init(keys[i], particles[i], logw[i], north0[i], east0[i], sd_m[i])


@numba.njit(parallel=True, **_JIT)
def pf_step_batch(
    keys, tick, particles, logw, d_north, d_east, process_sd_m, z_depth_m, meas_sd_m, has_meas, resample_below,
    gn, ge, grid, fill, active, mean_out, cov_out, ess_out,
):  # type: ignore[no-untyped-def]  # fmt: skip
    """:func:`pf_step` for every active trial, in parallel over trials.

    Parameters
    ----------
    keys : ndarray of uint64, shape (n_trials,)
    tick : int
    particles : ndarray of shape (n_trials, n_particles, 2)
    logw : ndarray of shape (n_trials, n_particles)
    d_north, d_east, process_sd_m, z_depth_m, meas_sd_m : ndarray of shape (n_trials,)
    has_meas : ndarray of bool, shape (n_trials,)
    resample_below : float
    gn, ge, grid, fill
        The seabed, shared by all trials.
    active : ndarray of bool, shape (n_trials,)
        Trials to step; the others are not touched (nor their outputs).
    mean_out : ndarray of shape (n_trials, 2)
    cov_out : ndarray of shape (n_trials, 2, 2)
    ess_out : ndarray of shape (n_trials,)
        Written for active trials: :func:`pf_step`'s return value.

    Notes
    -----
    Trial ``i`` gets exactly the bits of ``pf_step`` called on its own
    slices: nothing is shared between trials but the read-only seabed.
    """
    n = keys.shape[0]
    _check_size(particles.shape[1])
    for i in numba.prange(n):
        if not active[i]:
            continue
        ess_out[i] = pf_step(
            keys[i], tick, particles[i], logw[i], d_north[i], d_east[i], process_sd_m[i], z_depth_m[i],
            meas_sd_m[i], has_meas[i], resample_below, gn, ge, grid, fill, mean_out[i], cov_out[i],
        )  # fmt: skip
