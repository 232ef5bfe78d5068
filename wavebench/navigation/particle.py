"""Batched particle filter for terrain-aided horizontal position, trials x particles.

The cloud of each trial is ``n_particles`` horizontal positions
``[north, east]`` [m] with log-weights; all trials are stored together as
arrays of shape ``(n_trials, n_particles, 2)`` and ``(n_trials, n_particles)``
and advanced by the same array operations (no per-trial Python loop in the
arithmetic). The filter is the sampling-importance-resampling (bootstrap)
filter of Arulampalam et al. (2002, algorithm "generic particle filter"
with the transition prior as proposal):

- **predict** (:func:`pf_predict`): ``p <- p + v dt + sigma w``, with the
  velocity input ``v`` (e.g. from dead reckoning) and ``w`` standard normal,
  drawn per particle;
- **weight** (:func:`pf_update`): ``log w <- log w - (z - d(p))^2 / (2 s^2)``
  for a measured depth ``z`` [m], a seabed model ``d(north, east)`` and the
  depth noise ``s`` [m], then normalised with log-sum-exp so that the
  largest weight never underflows;
- **resample** when the effective sample size ``ESS = 1 / sum(w^2)`` falls
  below ``threshold * n_particles``, by **systematic resampling**: one
  uniform ``u`` in [0, 1) per trial, positions ``(u + k) / P`` for
  ``k = 0 .. P-1``, particle ``j`` copied once per position that falls in
  ``[c_{j-1}, c_j)`` of the cumulative weights. Particle ``j`` then gets
  ``floor(P w_j)`` or ``ceil(P w_j)`` copies, ``P w_j`` on average
  (Douc & Cappé 2005).

The copy counts are computed per trial as ``ceil(P c_j - u) - ceil(P c_{j-1} - u)``
(the number of integers ``k`` with ``P c_{j-1} - u <= k < P c_j - u``) and
expanded with one flat :func:`numpy.repeat` over all the trials that
resample; no quantity mixes rows, so a trial's cloud is bit-identical alone
or in any batch.

Randomness. Functions that draw take ``rngs``, a sequence of one
:class:`numpy.random.Generator` per trial, kept by the caller across steps
(e.g. ``rngs = streams.generators("nav.pf")`` once per run from
:class:`~wavebench.core.streams.TrialStreams`; note that ``generators``
returns fresh generators on each call, so call it once, not per step). Each
trial draws only from its own generator: the ``n_particles x 2`` normals of
a prediction, and one uniform per update (drawn every update, resampled or
not, so the stream position does not depend on the data). Drawing is the
only loop over trials (one generator call per trial); callers that prefer
can pre-draw blocks and pass ``noise`` / ``u`` instead.

References
----------
.. [1] M. S. Arulampalam, S. Maskell, N. Gordon and T. Clapp, "A tutorial on
   particle filters for online nonlinear/non-Gaussian Bayesian tracking",
   IEEE Transactions on Signal Processing 50(2), 174-188 (2002): SIR filter,
   effective sample size, systematic resampling (their resampling algorithm).
.. [2] R. Douc and O. Cappé, "Comparison of resampling schemes for particle
   filtering", Proc. 4th International Symposium on Image and Signal
   Processing and Analysis (ISPA), 64-69 (2005).
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ..core.errors import ParameterError
from ..core.params import Bounds, check_value
from .kalman import _batch_matrix, _check_covariance, _float_array, _require_finite, _valid_mask

__all__ = [
    "ParticleCloud",
    "ParticleUpdate",
    "effective_sample_size",
    "normalise_log_weights",
    "pf_estimate",
    "pf_init",
    "pf_predict",
    "pf_update",
    "systematic_counts",
    "systematic_resample",
]

FloatArray = NDArray[np.float64]
BoolArray = NDArray[np.bool_]
IntArray = NDArray[np.int64]

DepthFn = Callable[[FloatArray, FloatArray], ArrayLike]


@dataclass(frozen=True)
class ParticleCloud:
    """Particles and normalised log-weights of every trial.

    Attributes
    ----------
    particles : ndarray of shape (n_trials, n_particles, 2)
        Positions ``[north, east]`` [m].
    log_weights : ndarray of shape (n_trials, n_particles)
        Natural-log weights, normalised per trial (``logsumexp = 0``).
    """

    particles: FloatArray
    log_weights: FloatArray

    @property
    def n_trials(self) -> int:
        """Number of trials."""
        return int(self.particles.shape[0])

    @property
    def n_particles(self) -> int:
        """Number of particles per trial."""
        return int(self.particles.shape[1])


@dataclass(frozen=True)
class ParticleUpdate:
    """Result of :func:`pf_update`.

    Attributes
    ----------
    cloud : ParticleCloud
        Weighted (and, where ``resampled``, resampled) cloud.
    ess : ndarray of shape (n_trials,)
        Effective sample size after weighting, before resampling.
    resampled : ndarray of shape (n_trials,), bool
        Trials whose cloud was resampled.
    no_support : ndarray of shape (n_trials,), bool
        Trials with a measurement where every particle had zero likelihood
        (``depth_fn`` NaN everywhere, e.g. off the map): their weights were
        left unchanged. A symptom of a lost filter.
    """

    cloud: ParticleCloud
    ess: FloatArray
    resampled: BoolArray
    no_support: BoolArray


# ---------------------------------------------------------------------------
# checks and draws


def _check_cloud(cloud: ParticleCloud) -> tuple[FloatArray, FloatArray]:
    if not isinstance(cloud, ParticleCloud):
        raise ParameterError("cloud", cloud, "must be a ParticleCloud")
    x = _float_array("cloud.particles", cloud.particles)
    lw = _float_array("cloud.log_weights", cloud.log_weights)
    if x.ndim != 3 or x.shape[2] != 2 or x.shape[1] < 1:
        raise ParameterError("cloud.particles", x, "must have shape (n_trials, n_particles, 2)")
    if lw.shape != x.shape[:2]:
        raise ParameterError("cloud.log_weights", lw, f"must have shape {x.shape[:2]}")
    return x, lw


def _per_trial(name: str, value: ArrayLike, n: int, bounds: Bounds) -> FloatArray:
    """A scalar or (n,) parameter checked against ``bounds``, as shape (n,)."""
    v = check_value(name, value, bounds)
    arr = np.asarray(v, dtype=np.float64)
    if arr.ndim == 0:
        return np.full(n, float(arr))
    if arr.shape != (n,):
        raise ParameterError(name, arr, f"must be a scalar or have shape ({n},)")
    return arr


def _generators(rngs: Sequence[np.random.Generator], n: int) -> Sequence[np.random.Generator]:
    if isinstance(rngs, np.random.Generator) or len(rngs) != n:
        raise ParameterError("rngs", rngs, f"must be a sequence of {n} numpy Generators, one per trial")
    for g in rngs:
        if not isinstance(g, np.random.Generator):
            raise ParameterError("rngs", g, "must hold numpy.random.Generator objects")
    return rngs


def _normals(
    rngs: Sequence[np.random.Generator] | None, noise: ArrayLike | None, n: int, shape: tuple[int, ...]
) -> FloatArray:
    if (rngs is None) == (noise is None):
        raise ParameterError("rngs", rngs, "give exactly one of rngs (per-trial generators) or noise (pre-drawn)")
    if noise is not None:
        w = _float_array("noise", noise)
        if w.shape != (n, *shape):
            raise ParameterError("noise", w, f"must have shape {(n, *shape)}")
        _require_finite("noise", w)
        return w
    gens = _generators(rngs, n)  # type: ignore[arg-type]
    return np.stack([g.standard_normal(shape) for g in gens]) if n else np.empty((0, *shape))


def _uniforms(rngs: Sequence[np.random.Generator] | None, u: ArrayLike | None, n: int) -> FloatArray:
    if (rngs is None) == (u is None):
        raise ParameterError("rngs", rngs, "give exactly one of rngs (per-trial generators) or u (pre-drawn)")
    if u is not None:
        ua = _float_array("u", u)
        if ua.shape != (n,) or not np.all((ua >= 0.0) & (ua < 1.0)):
            raise ParameterError("u", ua, f"must have shape ({n},) with values in [0, 1)")
        return ua
    gens = _generators(rngs, n)  # type: ignore[arg-type]
    return np.array([g.random() for g in gens], dtype=np.float64)


# ---------------------------------------------------------------------------
# weights


def _check_log_weights(log_weights: ArrayLike) -> FloatArray:
    lw = _float_array("log_weights", log_weights)
    if lw.ndim != 2 or lw.shape[1] < 1:
        raise ParameterError("log_weights", lw, "must have shape (n_trials, n_particles)")
    if np.any(np.isnan(lw)) or np.any(lw == np.inf):
        raise ParameterError("log_weights", lw, "must be finite or -inf")
    return lw


def _normalise(lw: FloatArray) -> tuple[FloatArray, FloatArray, FloatArray]:
    """Log-sum-exp normalisation with one ``exp``: (log w, w, log_sum) per row.

    A row that is all ``-inf`` keeps its log-weights, gets zero weights and
    ``log_sum = -inf``.
    """
    top = np.max(lw, axis=1)
    support = np.isfinite(top)
    shift = np.where(support, top, 0.0)
    e = lw - shift[:, None]
    np.exp(e, out=e)  # largest entry of a supported row is exp(0) = 1
    total = np.sum(e, axis=1)
    safe_total = np.where(support, total, 1.0)
    log_sum = np.where(support, shift + np.log(safe_total), 0.0)
    e /= safe_total[:, None]
    return lw - log_sum[:, None], e, np.where(support, log_sum, -np.inf)


def normalise_log_weights(log_weights: ArrayLike) -> tuple[FloatArray, FloatArray]:
    """Normalise log-weights per trial with log-sum-exp.

    Parameters
    ----------
    log_weights : array_like of shape (n_trials, n_particles)
        Unnormalised natural-log weights; ``-inf`` for zero weight.

    Returns
    -------
    log_weights : ndarray of shape (n_trials, n_particles)
        ``log w - log(sum(exp(log w)))``, computed as
        ``log w - m - log(sum(exp(log w - m)))`` with ``m`` the row maximum so
        that nothing underflows; a row that is all ``-inf`` is returned unchanged.
    log_sum : ndarray of shape (n_trials,)
        ``log(sum(exp(log w)))`` per trial (``-inf`` for an all ``-inf`` row).

    Examples
    --------
    >>> lw, s = normalise_log_weights(np.log([[1.0, 3.0]]))
    >>> np.exp(lw).round(12), s.round(6)
    (array([[0.25, 0.75]]), array([1.386294]))
    """
    out, _, log_sum = _normalise(_check_log_weights(log_weights))
    return out, log_sum


def _ess(w: FloatArray) -> FloatArray:
    """``1 / sum(w^2)`` of normalised weights; NaN for an all-zero row."""
    total = np.sum(w * w, axis=1)
    out = np.full(total.shape, np.nan)
    np.divide(1.0, total, out=out, where=total > 0.0)
    return out


def effective_sample_size(log_weights: ArrayLike) -> FloatArray:
    """Effective sample size ``1 / sum(w^2)`` of each trial's normalised weights.

    Parameters
    ----------
    log_weights : array_like of shape (n_trials, n_particles)
        Natural-log weights (normalised here first).

    Returns
    -------
    ndarray of shape (n_trials,)
        ESS in [1, n_particles] (Arulampalam et al. 2002, the estimate
        ``N_eff = 1 / sum_i (w_i)^2``); NaN for a row with no support.

    Examples
    --------
    >>> effective_sample_size(np.log([[0.5, 0.25, 0.25]])).round(6)
    array([2.666667])
    """
    return _ess(_normalise(_check_log_weights(log_weights))[1])


# ---------------------------------------------------------------------------
# systematic resampling


def systematic_counts(weights: ArrayLike, u: ArrayLike) -> IntArray:
    """Number of copies of each particle under systematic resampling.

    Parameters
    ----------
    weights : array_like of shape (n_trials, n_particles)
        Normalised weights (each row non-negative, summing to 1 to rounding;
        the cumulative sum is clipped to 1 and its last entry set to 1).
    u : array_like of shape (n_trials,)
        One uniform offset in [0, 1) per trial.

    Returns
    -------
    ndarray of int64, shape (n_trials, n_particles)
        Copies of particle ``j``: ``ceil(P c_j - u) - ceil(P c_{j-1} - u)``
        with ``c`` the cumulative weights, ``c_0 = 0``; each row sums to
        ``n_particles``.

    Examples
    --------
    >>> systematic_counts([[0.5, 0.25, 0.25, 0.0]], [0.5])
    array([[2, 1, 1, 0]])
    """
    w = _float_array("weights", weights)
    if w.ndim != 2 or w.shape[1] < 1:
        raise ParameterError("weights", w, "must have shape (n_trials, n_particles)")
    if not np.all(np.isfinite(w)) or np.any(w < 0.0):
        raise ParameterError("weights", w, "must be finite and >= 0")
    n = w.shape[0]
    ua = _float_array("u", u)
    if ua.shape != (n,) or not np.all((ua >= 0.0) & (ua < 1.0)):
        raise ParameterError("u", ua, f"must have shape ({n},) with values in [0, 1)")
    return _counts(w, ua)


def _counts(w: FloatArray, u: FloatArray) -> IntArray:
    p = w.shape[1]
    c = np.cumsum(w, axis=1)
    np.minimum(c, 1.0, out=c)
    c[:, -1] = 1.0
    c *= p
    c -= u[:, None]
    edges = np.ceil(c, out=c)  # ceil(P c_j - u); last column: ceil(P - u) = P
    counts = np.diff(edges, axis=1, prepend=0.0)  # ceil(0 - u) = 0 for u in [0, 1)
    return counts.astype(np.int64)


def _gather(x: FloatArray, counts: IntArray) -> FloatArray:
    """Rows of ``x`` (m, p, 2) with particle j repeated counts[row, j] times."""
    m, p = counts.shape
    flat = np.repeat(np.arange(m * p, dtype=np.int64), counts.ravel())
    # Each [north, east] pair viewed as one complex128 so that a single 1-D
    # take moves both coordinates (a byte copy: values are unchanged).
    packed = np.ascontiguousarray(x).reshape(m * p * 2).view(np.complex128)
    return np.take(packed, flat).view(np.float64).reshape(m, p, 2)


def systematic_resample(weights: ArrayLike, u: ArrayLike) -> IntArray:
    """Indices of the particles kept by systematic resampling.

    Parameters
    ----------
    weights : array_like of shape (n_trials, n_particles)
        Normalised weights.
    u : array_like of shape (n_trials,)
        One uniform offset in [0, 1) per trial.

    Returns
    -------
    ndarray of int64, shape (n_trials, n_particles)
        Row ``i`` holds the (sorted) indices, within trial ``i``, of the
        particles drawn; particle ``j`` appears :func:`systematic_counts` times.

    Examples
    --------
    >>> systematic_resample([[0.5, 0.25, 0.25, 0.0]], [0.5])
    array([[0, 0, 1, 2]])
    """
    counts = systematic_counts(weights, u)
    n, p = counts.shape
    flat = np.repeat(np.arange(n * p, dtype=np.int64), counts.ravel())
    return flat.reshape(n, p) - (np.arange(n, dtype=np.int64) * p)[:, None]


# ---------------------------------------------------------------------------
# the filter


_POSITIVE_INT = Bounds(ge=1, integer=True)
_NON_NEGATIVE = Bounds(ge=0.0)
_POSITIVE = Bounds(gt=0.0)
_FRACTION = Bounds(ge=0.0, le=1.0)


def pf_init(
    mean_ne: ArrayLike,
    cov_ne: ArrayLike,
    n_particles: int,
    *,
    rngs: Sequence[np.random.Generator] | None = None,
    noise: ArrayLike | None = None,
) -> ParticleCloud:
    """Draw an initial cloud from a Gaussian prior per trial, equal weights.

    Parameters
    ----------
    mean_ne : array_like of shape (n_trials, 2)
        Prior mean ``[north, east]`` [m].
    cov_ne : array_like of shape (2, 2), (1, 2, 2) or (n_trials, 2, 2)
        Prior covariance [m^2] (positive definite).
    n_particles : int
        Particles per trial (>= 1).
    rngs : sequence of numpy.random.Generator, optional
        One generator per trial; draws ``standard_normal((n_particles, 2))``.
    noise : array_like of shape (n_trials, n_particles, 2), optional
        Pre-drawn standard normals instead of ``rngs``.

    Returns
    -------
    ParticleCloud
        ``mean + L w`` with ``L`` the Cholesky factor of ``cov_ne``; log
        weights ``-log(n_particles)``.
    """
    mean = _float_array("mean_ne", mean_ne)
    if mean.ndim != 2 or mean.shape[1] != 2:
        raise ParameterError("mean_ne", mean, "must have shape (n_trials, 2)")
    _require_finite("mean_ne", mean)
    n = mean.shape[0]
    cov = _batch_matrix("cov_ne", cov_ne, n, 2, 2)
    _check_covariance("cov_ne", cov)
    try:
        L = np.linalg.cholesky(cov)
    except np.linalg.LinAlgError:
        raise ParameterError("cov_ne", cov, "must be positive definite") from None
    p = int(check_value("n_particles", n_particles, _POSITIVE_INT))
    w = _normals(rngs, noise, n, (p, 2))
    particles = mean[:, None, :] + w @ np.swapaxes(L, -1, -2)
    log_w = np.full((n, p), -np.log(p))
    return ParticleCloud(particles=particles, log_weights=log_w)


def pf_predict(
    cloud: ParticleCloud,
    velocity_ne: ArrayLike,
    dt: ArrayLike,
    noise_std_m: ArrayLike,
    *,
    rngs: Sequence[np.random.Generator] | None = None,
    noise: ArrayLike | None = None,
) -> ParticleCloud:
    """Move every particle by the velocity input plus process noise.

    Parameters
    ----------
    cloud : ParticleCloud
        Current cloud.
    velocity_ne : array_like of shape (n_trials, 2)
        Velocity input ``[v_north, v_east]`` [m/s] over the step.
    dt : float or array_like of shape (n_trials,)
        Step [s] (> 0).
    noise_std_m : float or array_like of shape (n_trials,)
        Standard deviation of the position noise added per step and axis [m]
        (>= 0). For a random walk of density ``q`` [m/sqrt(s)] pass
        ``q * sqrt(dt)``.
    rngs : sequence of numpy.random.Generator, optional
        One generator per trial; draws ``standard_normal((n_particles, 2))``.
    noise : array_like of shape (n_trials, n_particles, 2), optional
        Pre-drawn standard normals instead of ``rngs``.

    Returns
    -------
    ParticleCloud
        ``p + v dt + noise_std_m * w``; weights unchanged.
    """
    x, lw = _check_cloud(cloud)
    n, p, _ = x.shape
    v = _float_array("velocity_ne", velocity_ne)
    if v.shape != (n, 2):
        raise ParameterError("velocity_ne", v, f"must have shape ({n}, 2)")
    _require_finite("velocity_ne", v)
    d = _per_trial("dt", dt, n, _POSITIVE)
    sigma = _per_trial("noise_std_m", noise_std_m, n, _NON_NEGATIVE)
    w = _normals(rngs, noise, n, (p, 2))
    moved = x + (v * d[:, None])[:, None, :] + sigma[:, None, None] * w
    return ParticleCloud(particles=moved, log_weights=lw)


def pf_update(
    cloud: ParticleCloud,
    depth_m: ArrayLike,
    depth_fn: DepthFn,
    depth_std_m: ArrayLike,
    *,
    valid: ArrayLike | None = None,
    resample_threshold: float = 0.5,
    rngs: Sequence[np.random.Generator] | None = None,
    u: ArrayLike | None = None,
) -> ParticleUpdate:
    """Weight by a measured depth and resample systematically where the ESS is low.

    Parameters
    ----------
    cloud : ParticleCloud
        Predicted cloud.
    depth_m : array_like of shape (n_trials,)
        Measured water depth [m] (NaN allowed where ``valid`` is False).
    depth_fn : callable
        ``depth_fn(north, east) -> depth`` with ``north``, ``east`` of shape
        ``(n_trials, n_particles)`` [m], returning depths of the same shape
        [m]; NaN where the model has no depth (the particle gets zero weight).
    depth_std_m : float or array_like of shape (n_trials,)
        Standard deviation of the depth measurement error [m] (> 0),
        including seabed-model error.
    valid : array_like of bool, shape (n_trials,), optional
        Trials with a depth measurement this step (default: all).
    resample_threshold : float
        Resample a trial when ``ESS < resample_threshold * n_particles``; in
        [0, 1] (0 never resamples). Default 0.5.
    rngs : sequence of numpy.random.Generator, optional
        One generator per trial; one ``random()`` drawn per trial per call.
    u : array_like of shape (n_trials,), optional
        Pre-drawn uniforms in [0, 1) instead of ``rngs``.

    Returns
    -------
    ParticleUpdate
        The new cloud, the ESS after weighting, and the resampled and
        no-support masks.

    Notes
    -----
    Gaussian likelihood, log form without its constant (removed by the
    normalisation): ``log w_j += -0.5 ((z - d(p_j)) / s)^2``.
    """
    x, lw = _check_cloud(cloud)
    n, p, _ = x.shape
    z = _float_array("depth_m", depth_m)
    if z.shape != (n,):
        raise ParameterError("depth_m", z, f"must have shape ({n},)")
    va = _valid_mask(valid, n)
    _require_finite("depth_m", z[va])
    sigma = _per_trial("depth_std_m", depth_std_m, n, _POSITIVE)
    threshold = float(check_value("resample_threshold", resample_threshold, _FRACTION))
    offsets = _uniforms(rngs, u, n)

    predicted = _float_array("depth_fn(north, east)", depth_fn(x[:, :, 0].copy(), x[:, :, 1].copy()))
    if predicted.shape != (n, p):
        raise ParameterError("depth_fn(north, east)", predicted, f"must have shape ({n}, {p})")
    z_eff = np.where(va, z, 0.0)
    loglik = z_eff[:, None] - predicted
    loglik /= sigma[:, None]
    loglik *= loglik
    loglik *= -0.5  # -0.5 ((z - d) / s)^2
    off_map = np.isnan(predicted)
    if off_map.any():
        loglik[off_map] = -np.inf
    loglik += lw
    lw_out, w, log_sum = _normalise(loglik)
    no_support = va & ~np.isfinite(log_sum)
    keep = ~(va & ~no_support)  # rows whose weights stay as they were
    if keep.any():
        lw_out[keep] = lw[keep]
        w[keep] = _normalise(lw[keep])[1]

    ess = _ess(w)
    resampled = ess < threshold * p
    x_out = x
    lw_final = lw_out
    rows = np.flatnonzero(resampled)
    if rows.size:
        x_out = x.copy()
        x_out[rows] = _gather(x[rows], _counts(w[rows], offsets[rows]))
        lw_final[rows] = -np.log(p)
    return ParticleUpdate(
        cloud=ParticleCloud(particles=x_out, log_weights=lw_final),
        ess=ess,
        resampled=resampled,
        no_support=no_support,
    )


def pf_estimate(cloud: ParticleCloud) -> tuple[FloatArray, FloatArray]:
    """Weighted mean and covariance of each trial's cloud.

    Parameters
    ----------
    cloud : ParticleCloud
        The cloud.

    Returns
    -------
    mean : ndarray of shape (n_trials, 2)
        ``sum_j w_j p_j`` [m].
    cov : ndarray of shape (n_trials, 2, 2)
        ``sum_j w_j (p_j - mean)(p_j - mean)'`` [m^2] (the weighted
        population covariance, no small-sample correction), symmetrised.

    Examples
    --------
    >>> c = ParticleCloud(np.array([[[0.0, 0.0], [2.0, 4.0]]]), np.log([[0.5, 0.5]]))
    >>> mean, cov = pf_estimate(c)
    >>> mean, cov
    (array([[1., 2.]]), array([[[1., 2.],
            [2., 4.]]]))
    """
    x, lw = _check_cloud(cloud)
    w = _normalise(lw)[1]
    mean = (w[:, None, :] @ x)[:, 0, :]
    d = x - mean[:, None, :]
    cov = np.swapaxes(d * w[:, :, None], -1, -2) @ d
    return mean, 0.5 * (cov + np.swapaxes(cov, -1, -2))
