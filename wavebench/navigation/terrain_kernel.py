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
- :func:`rng_normal` is the ziggurat method of Marsaglia & Tsang (2000)
  [2]_ with 256 layers, in the 64-bit layout numpy uses: from the draw
  ``x = rng_u64(key, c)``, bits 0-7 pick the layer, bit 8 the sign and bits
  9-60 a 52-bit magnitude; 99.3 % of normals are accepted at once (one
  multiplication and a comparison, no transcendental function). The rest
  (the wedges and the tail beyond ``r = 3.6541528853610088``) need further
  uniforms: they come from the SplitMix64 stream keyed by ``x`` itself
  (``rng_u64(x, 0), rng_u64(x, 1), ...``), so a normal is still a function
  of ``(key, c)`` alone. The tables are computed at import from ``r`` by
  the paper's recursion, with the layer area
  ``v = r exp(-r^2/2) + sqrt(pi/2) erfc(r/sqrt(2))``.

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
``streams.draw("navigator.terrain.key", lambda g: g.integers(0, 2**63, dtype=np.uint64))`` (as the navigator does).
Two keys give overlapping streams only if their difference is a small
multiple of the odd constant 0x9E3779B97F4A7C15 (mod 2**64), which random
64-bit keys are not.

Seabed
------
The depth at a particle is the bilinear interpolation of a grid (``gn``
north axis, ``ge`` east axis, ``grid[i, j]`` depth at ``(gn[i], ge[j])``),
in the convention of :func:`wavebench.sea.seabed.depth_at` and of the fused
run's compiled lookup: the enclosing cell is the one
``searchsorted(side="right") - 1``, clipped to the last cell, would give,
and points outside the grid (or at NaN positions) get ``fill``. On a
uniform axis (every line within ``UNIFORM_AXIS_TOL`` spacings of
``axis[0] + i * spacing``; checked on each call, O(grid size)) the cell and
the fraction in it come from one multiplication, ``f = (x - axis[0]) /
spacing``, and agree with ``depth_at`` to rounding (~1e-15 relative); on
any other axis they come from ``searchsorted`` and the depths are
``depth_at``'s bits.

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
.. [2] G. Marsaglia and W. W. Tsang, "The ziggurat method for generating
   random variables", Journal of Statistical Software 5(8), 1-7 (2000).
.. [3] M. S. Arulampalam, S. Maskell, N. Gordon and T. Clapp, "A tutorial on
   particle filters for online nonlinear/non-Gaussian Bayesian tracking",
   IEEE Transactions on Signal Processing 50(2), 174-188 (2002).
.. [4] R. Douc and O. Cappé, "Comparison of resampling schemes for particle
   filtering", Proc. 4th International Symposium on Image and Signal
   Processing and Analysis (ISPA), 64-69 (2005).
"""

from __future__ import annotations

import math

import numba
import numpy as np

__all__ = [
    "MAX_PARTICLES",
    "N_PURPOSES",
    "PURPOSE_INIT",
    "PURPOSE_PREDICT",
    "PURPOSE_RESAMPLE",
    "UNIFORM_AXIS_TOL",
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
    "seabed_depths",
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

_S8 = np.uint64(8)
_S9 = np.uint64(9)
_LOW8 = np.uint64(0xFF)
_MANT52 = np.uint64(0x000FFFFFFFFFFFFF)


def _ziggurat_tables(r: float, n_layers: int = 256) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Ziggurat tables for the normal density ``f(x) = exp(-x^2/2)``, Marsaglia & Tsang (2000).

    Layer area ``v = r f(r) + int_r^inf f``; from the base up,
    ``x_{i-1} = f^-1(v / x_i + f(x_i))``. Returned, for 52-bit magnitudes
    ``m``: ``k[i]`` (accept ``m < k[i]`` at once), ``w[i]`` (``z = m w[i]``)
    and ``f[i] = f(x_i)``.
    """
    scale = 2.0**52
    v = r * math.exp(-0.5 * r * r) + math.sqrt(math.pi / 2.0) * math.erfc(r / math.sqrt(2.0))
    k = np.zeros(n_layers, dtype=np.uint64)
    w = np.zeros(n_layers)
    f = np.zeros(n_layers)
    dn = tn = r
    q = v / math.exp(-0.5 * dn * dn)
    k[0] = int((dn / q) * scale)
    w[0] = q / scale
    w[-1] = dn / scale
    f[0] = 1.0
    f[-1] = math.exp(-0.5 * dn * dn)
    for i in range(n_layers - 2, 0, -1):
        dn = math.sqrt(-2.0 * math.log(v / dn + math.exp(-0.5 * dn * dn)))
        k[i + 1] = int((dn / tn) * scale)
        tn = dn
        f[i] = math.exp(-0.5 * dn * dn)
        w[i] = dn / scale
    return k, w, f


#: Start of the tail of the 256-layer normal ziggurat (the value numpy's
#: generator uses; it makes the top layer close, see the tests).
_ZIG_R = 3.6541528853610088
_ZIG_INV_R = 1.0 / _ZIG_R
_ZIG_K, _ZIG_W, _ZIG_F = _ziggurat_tables(_ZIG_R)

_JIT = {"cache": True, "error_model": "numpy"}


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
def _zig_rest(x0, idx, rabs, z):  # type: ignore[no-untyped-def]
    """The ziggurat's slow paths (wedge test, tail, new tries), drawing from the stream keyed by ``x0``."""
    a = np.uint64(0)
    while True:
        if idx == 0:  # the base strip: the tail beyond r (Marsaglia 1964, as in the paper)
            while True:
                t = -_ZIG_INV_R * np.log1p(-_top53(x0, a))
                y = -np.log1p(-_top53(x0, a + _ONE))
                a += _TWO
                if y + y > t * t:
                    return -(_ZIG_R + t) if (rabs >> _S8) & _ONE else _ZIG_R + t
        else:  # a wedge: accept under the density
            if (_ZIG_F[idx - 1] - _ZIG_F[idx]) * _top53(x0, a) + _ZIG_F[idx] < np.exp(-0.5 * z * z):
                return z
            a += _ONE
        x = rng_u64(x0, a)  # try again
        a += _ONE
        idx = int(x & _LOW8)
        rabs = (x >> _S9) & _MANT52
        z = float(rabs) * _ZIG_W[idx]
        if (x >> _S8) & _ONE:
            z = -z
        if rabs < _ZIG_K[idx]:
            return z


@numba.njit(**_JIT)
def rng_normal(key, counter):  # type: ignore[no-untyped-def]
    """Standard normal by the ziggurat method from the draw ``rng_u64(key, counter)``.

    Returns
    -------
    float
        A N(0, 1) variate; see the module notes for the layout.

    Examples
    --------
    >>> z = np.array([rng_normal(np.uint64(7), np.uint64(c)) for c in range(20000)])
    >>> bool(abs(z.mean()) < 0.03 and abs(z.std() - 1.0) < 0.03)
    True
    """
    x = rng_u64(key, counter)
    idx = int(x & _LOW8)
    rabs = (x >> _S9) & _MANT52
    z = float(rabs) * _ZIG_W[idx]
    if (x >> _S8) & _ONE:
        z = -z
    if rabs < _ZIG_K[idx]:
        return z
    return _zig_rest(x, idx, rabs, z)


@numba.njit(**_JIT)
def rng_fill_uniform(key, counter0, out):  # type: ignore[no-untyped-def]
    """Fill ``out`` (1-D float64) with ``rng_uniform(key, counter0 + i)``."""
    c0 = np.uint64(counter0)
    for i in range(out.shape[0]):
        out[i] = rng_uniform(key, c0 + np.uint64(i))


@numba.njit(**_JIT)
def rng_fill_normal(key, counter0, out):  # type: ignore[no-untyped-def]
    """Fill ``out`` (1-D float64) with ``rng_normal(key, counter0 + i)``."""
    c0 = np.uint64(counter0)
    for i in range(out.shape[0]):
        out[i] = rng_normal(key, c0 + np.uint64(i))


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


_LOG2E = 1.4426950408889634
_LN2_HI = 6.93147180369123816490e-01  # ln 2 split so that k * _LN2_HI is exact for |k| < 2**11
_LN2_LO = 1.90821492927058770002e-10
_POW2_NEG = 2.0 ** -np.arange(1023.0)  # 2**-k, k = 0 .. 1022 (normal numbers only)


@numba.njit(**_JIT)
def _exp_le0(x):  # type: ignore[no-untyped-def]
    """``exp(x)`` for ``x <= 0`` (``-inf`` included), within a few ulp; 0 below -708 and for NaN.

    Weights relative to the largest need no more, and unlike the library
    ``exp`` this is branch-free, so loops over it vectorise. Cody & Waite
    reduction ``x = k ln2 + r``, ``|r| <= ln2 / 2`` (``ln2`` in two parts),
    the Taylor polynomial of ``exp(r)`` to degree 13 (remainder
    ``0.35**14 / 14! < 5e-18``) and ``2**k`` from a table.
    """
    xc = x if x >= -708.0 else -708.0  # also for NaN, which gives 0
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


#: An axis counts as uniform when every line is within this fraction of a
#: spacing of ``axis[0] + i * spacing``.
UNIFORM_AXIS_TOL = 1e-9


@numba.njit(**_JIT)
def _is_uniform(axis):  # type: ignore[no-untyped-def]
    n = axis.shape[0]
    h = (axis[-1] - axis[0]) / (n - 1)
    for i in range(n):
        if abs(axis[i] - (axis[0] + i * h)) > UNIFORM_AXIS_TOL * h:
            return False
    return True


@numba.njit(**_JIT)
def _search(axis, x):  # type: ignore[no-untyped-def]
    return min(max(np.searchsorted(axis, x, side="right") - 1, 0), axis.shape[0] - 2)


@numba.njit(**_JIT)
def seabed_depths(gn, ge, grid, fill, points, out):  # type: ignore[no-untyped-def]
    """Bilinear seabed depth at each row ``[north, east]`` of ``points``, as :func:`seabed_depth`.

    Parameters
    ----------
    gn, ge, grid, fill
        The seabed, as in :func:`seabed_depth`.
    points : ndarray of shape (n_points, 2)
        Positions ``[north, east]`` [m].
    out : ndarray of shape (n_points,)
        Written: depths [m].

    Notes
    -----
    The enclosing cell and the fractional position in it: on a uniform axis
    ``f = (x - axis[0]) / spacing``, cell ``min(floor(f), size - 2)``,
    fraction ``f - cell``; otherwise the cell is
    ``clip(searchsorted(axis, x, "right") - 1, 0, size - 2)`` and the
    fraction ``(x - axis[i]) / (axis[i + 1] - axis[i])``, as in
    :func:`wavebench.sea.seabed.depth_at` (the same bits there; on a uniform
    axis the same value to rounding, ~1e-15 relative).
    """
    n0 = gn[0]
    n1 = gn[-1]
    e0 = ge[0]
    e1 = ge[-1]
    last_n = gn.shape[0] - 2
    last_e = ge.shape[0] - 2
    inv_n = (last_n + 1) / (n1 - n0)
    inv_e = (last_e + 1) / (e1 - e0)
    uniform_n = _is_uniform(gn)
    uniform_e = _is_uniform(ge)
    for k in range(points.shape[0]):
        n = points[k, 0]
        e = points[k, 1]
        if not (n >= n0 and n <= n1 and e >= e0 and e <= e1):  # outside, or NaN
            out[k] = fill
            continue
        if uniform_n:
            fn = (n - n0) * inv_n
            i0 = min(int(fn), last_n)
            wn = fn - i0
        else:
            i0 = _search(gn, n)
            wn = (n - gn[i0]) / (gn[i0 + 1] - gn[i0])
        if uniform_e:
            fe = (e - e0) * inv_e
            j0 = min(int(fe), last_e)
            we = fe - j0
        else:
            j0 = _search(ge, e)
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
    seabed_depths(gn, ge, grid, fill, pt, out)
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
    c = pf_counter(tick, purpose, 0, 0)
    for j in range(particles.shape[0]):
        particles[j, 0] = particles[j, 0] + d_north + sd_m * rng_normal(key, c)
        particles[j, 1] = particles[j, 1] + d_east + sd_m * rng_normal(key, c + _ONE)
        c += _TWO


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
    seabed_depths(gn, ge, grid, fill, particles, w)
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
    for j in range(m):  # a loop of its own so that it vectorises
        v = w[j]
        logw[j] = v
        w[j] = _exp_le0(v - top)
    s = 0.0
    s2 = 0.0
    for j in range(m):
        e = w[j]
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
    """``w_j = exp(log w_j - max)``; returns their sum."""
    m = logw.shape[0]
    top = -np.inf
    for j in range(m):
        if logw[j] > top:
            top = logw[j]
    for j in range(m):
        w[j] = _exp_le0(logw[j] - top)
    s = 0.0
    for j in range(m):
        s += w[j]
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
