"""Noise machinery shared by the sensors: timing, coloured noise, dropouts, outliers.

Every function here is batched over trials: outputs have a leading trial
axis ``n_trials`` (from the :class:`~wavebench.core.streams.TrialStreams`
passed in), then the sample axis ``n_samples``, then an optional axis of
``n_axes`` sensor axes. Noise for a whole run is drawn in one block per trial
from that trial's own stream, so trial ``i`` gets the same numbers alone or in
any batch. Each kind of draw has its own purpose name (``"imu.gyro.white"``,
``"gnss.dropout"``, ...): adding a sensor or a noise term does not change the
noise of any other.

Per-trial parameters
--------------------
A noise parameter (``sigma``, ``tau_s``, ``density``, ``p_drop`` ...) may be

* a scalar -- the same for every trial and axis;
* an array of shape (n_trials,) -- one value per trial (same on every axis);
* with ``n_axes`` given, an array of shape (n_trials, n_axes) -- per trial
  and axis; use shape (1, n_axes) for per-axis values shared by all trials.

Arrays align with the *leading* (trial) axis, as everywhere in wavebench.

Noise-density conventions (IEEE Std 952-1997)
---------------------------------------------
IEEE Std 952-1997 defines the random-walk coefficients by the Allan variance
of the sensor's *rate* output ``Omega``:

* angle random walk ``N`` (white rate noise): ``sigma_A^2(tau) = N^2 / tau``;
  its rate power spectral density in the standard's convention is
  ``S_Omega(f) = N^2``. ``N`` has units of rate/sqrt(Hz) = angle/sqrt(s),
  quoted for gyros in deg/sqrt(h) (1 deg/sqrt(h) = (pi/180)/60 rad/sqrt(s)).
  Sampled at interval ``dt`` as the average rate over the interval, the rate
  noise has per-sample standard deviation ``N / sqrt(dt)``
  (:func:`density_to_sd`, :func:`white_sequence`); the integrated angle is a
  random walk whose increments have standard deviation ``N sqrt(dt)`` and
  whose standard deviation after a time ``t`` is ``N sqrt(t)``
  (:func:`random_walk_sequence` with ``density = N``). The same holds for the
  velocity random walk of an accelerometer (m/s/sqrt(h) = (1/60) m/s^2/sqrt(Hz)).
* rate random walk ``K``: the rate itself is a random walk,
  ``sigma_A^2(tau) = K^2 tau / 3``, rate PSD ``(K / (2 pi f))^2``; per sample
  the rate changes by ``K sqrt(dt)`` standard deviations
  (:func:`random_walk_sequence` with ``density = K``).
* bias instability ``B`` (flicker rate noise): a flat Allan-deviation floor at
  ``B sqrt(2 ln 2 / pi) ~= 0.664 B``. wavebench approximates it with a
  first-order Gauss--Markov process (:func:`gauss_markov_sequence`), see
  :mod:`wavebench.sensors.imu`.

References
----------
.. [1] IEEE Std 952-1997, *IEEE Standard Specification Format Guide and Test
   Procedure for Single-Axis Interferometric Fiber Optic Gyros*, Allan
   variance annex: noise terms, their Allan-variance slopes and read-off
   points.
.. [2] R. G. Brown and P. Y. C. Hwang, *Introduction to Random Signals and
   Applied Kalman Filtering* (Wiley): first-order Gauss--Markov process and
   its exact discretisation ``phi = exp(-dt/T)``,
   ``Var w = sigma^2 (1 - phi^2)``; random constants and Wiener processes
   as limiting cases.
.. [3] J. G. Kemeny and J. L. Snell, *Finite Markov Chains* (Van Nostrand):
   stationary distribution of a two-state chain.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray
from scipy.signal import lfilter

from ..core.errors import ParameterError
from ..core.params import Bounds, Params, bounded, check_value
from ..core.streams import TrialStreams

__all__ = [
    "SensorTiming",
    "delay",
    "density_to_sd",
    "gauss_markov_sequence",
    "latency_steps",
    "markov_dropout_mask",
    "outage_mask",
    "outlier_sequence",
    "quantise",
    "random_constant",
    "random_walk_sequence",
    "sample_steps",
    "white_sequence",
]

#: Relative tolerance for "a whole number of simulation steps".
STEP_RTOL = 1e-9

_NONNEG = Bounds(ge=0.0)
_POSITIVE_OR_INF = Bounds(gt=0.0, finite=False)
_PROBABILITY = Bounds(ge=0.0, le=1.0)


# ---------------------------------------------------------------------------
# Timing
# ---------------------------------------------------------------------------


@dataclass(frozen=True, kw_only=True)
class SensorTiming(Params):
    """When a sensor samples and how late its samples arrive.

    Parameters
    ----------
    rate_hz : float
        Output rate [Hz], > 0. ``1 / rate_hz`` must be a whole number of
        simulation steps (checked by :func:`sample_steps`).
    latency_s : float
        Delay from the instant a sample describes to the instant it is
        delivered [s], >= 0; a whole number of simulation steps.

    Notes
    -----
    Per-trial arrays are accepted by the validation but every trial of a
    batch must share the same timing (the sample grid is shared), which
    :func:`sample_steps` and :func:`latency_steps` check.
    """

    rate_hz: float = bounded(gt=0.0, unit="Hz", doc="output rate")
    latency_s: float = bounded(0.0, ge=0.0, unit="s", doc="delivery latency")


def _check_dt(dt_s: Any, name: str = "dt_s") -> float:
    if isinstance(dt_s, (bool, np.bool_)) or not isinstance(dt_s, (int, float, np.integer, np.floating)):
        raise ParameterError(name, dt_s, "must be a finite number > 0")
    if not (math.isfinite(float(dt_s)) and dt_s > 0):
        raise ParameterError(name, dt_s, "must be a finite number > 0")
    return float(dt_s)


def _shared_value(name: str, value: Any) -> float:
    """One value for the whole batch from a scalar or a uniform per-trial array."""
    arr = np.asarray(value, dtype=float)
    if arr.ndim == 0:
        return float(arr)
    if arr.size == 0 or not np.all(arr == arr.flat[0]):
        raise ParameterError(name, value, "must be the same for every trial of a batch (the sample grid is shared)")
    return float(arr.flat[0])


def _whole_steps(name: str, value_s: float, dt_s: float, *, minimum: int) -> int:
    ratio = value_s / dt_s
    n = round(ratio)
    if n < minimum or abs(ratio - n) > STEP_RTOL * max(abs(ratio), 1.0):
        what = "step" if minimum == 0 else "sample interval"
        raise ParameterError(
            name,
            value_s,
            f"must be a whole number (>= {minimum}) of simulation steps of dt_s = {dt_s!r} s (it is {ratio:.9g} steps)",
            f"choose a {what} that is a multiple of dt_s, or a dt_s that divides it",
        )
    return int(n)


def sample_steps(timing: SensorTiming, dt_s: float) -> int:
    """Whole number of simulation steps per sensor sample.

    Parameters
    ----------
    timing : SensorTiming
        Rate and latency of the sensor.
    dt_s : float
        Simulation step [s], > 0.

    Returns
    -------
    int
        ``m = 1 / (rate_hz dt_s)``, >= 1.

    Raises
    ------
    ParameterError
        Naming ``rate_hz`` if ``1/rate_hz`` is not a whole multiple of
        ``dt_s`` (to a relative 1e-9), or ``latency_s`` if the latency is not
        a whole number of steps (see :func:`latency_steps`).

    Examples
    --------
    >>> sample_steps(SensorTiming(rate_hz=10.0, latency_s=0.05), 0.01)
    10
    """
    dt = _check_dt(dt_s)
    rate = _shared_value("rate_hz", timing.rate_hz)
    m = _whole_steps("rate_hz", 1.0 / rate, dt, minimum=1)
    latency_steps(timing, dt)
    return m


def latency_steps(timing: SensorTiming, dt_s: float) -> int:
    """Latency of a sensor as a whole number of simulation steps.

    Parameters
    ----------
    timing : SensorTiming
        Rate and latency of the sensor.
    dt_s : float
        Simulation step [s], > 0.

    Returns
    -------
    int
        ``latency_s / dt_s``, >= 0.

    Raises
    ------
    ParameterError
        Naming ``latency_s`` if it is not a whole number of steps (to a
        relative 1e-9).

    Examples
    --------
    >>> latency_steps(SensorTiming(rate_hz=1.0, latency_s=0.2), 0.05)
    4
    """
    dt = _check_dt(dt_s)
    lat = _shared_value("latency_s", timing.latency_s)
    return _whole_steps("latency_s", lat, dt, minimum=0)


# ---------------------------------------------------------------------------
# Argument helpers
# ---------------------------------------------------------------------------


def _check_count(name: str, n: Any, minimum: int = 1) -> int:
    if isinstance(n, (bool, np.bool_)) or not isinstance(n, (int, np.integer)) or n < minimum:
        raise ParameterError(name, n, f"must be a whole number >= {minimum}")
    return int(n)


def _check_axes(n_axes: Any) -> int | None:
    if n_axes is None:
        return None
    return _check_count("n_axes", n_axes)


def _per_trial(name: str, value: Any, n_trials: int, n_axes: int | None, bounds: Bounds) -> NDArray[np.float64]:
    """Broadcast a parameter to (n_trials,) or (n_trials, n_axes), checking its range."""
    checked = check_value(name, value, bounds)
    arr = np.asarray(checked, dtype=float)
    target = (n_trials,) if n_axes is None else (n_trials, n_axes)
    allowed = "a scalar or an array of shape (n_trials,)" + ("" if n_axes is None else " or (n_trials, n_axes)")
    if arr.ndim == 1:
        if arr.shape[0] != n_trials:
            raise ParameterError(name, value, f"must be {allowed} with n_trials = {n_trials}")
        if n_axes is not None:
            arr = arr[:, None]
    elif arr.ndim == 2 and n_axes is not None:
        if arr.shape[0] not in (1, n_trials) or arr.shape[1] not in (1, n_axes):
            raise ParameterError(name, value, f"must be {allowed} with n_trials = {n_trials}, n_axes = {n_axes}")
    elif arr.ndim != 0:
        raise ParameterError(name, value, f"must be {allowed}")
    return np.broadcast_to(arr, target)


def _sample_shape(n_samples: int, n_axes: int | None) -> tuple[int, ...]:
    return (n_samples,) if n_axes is None else (n_samples, n_axes)


def _normals(streams: TrialStreams, purpose: str, shape: tuple[int, ...]) -> NDArray[np.float64]:
    out = streams.draw(purpose, lambda rng: rng.standard_normal(shape))
    return out.reshape((streams.n_trials, *shape))


def density_to_sd(density: ArrayLike, dt_s: float) -> NDArray[np.float64] | float:
    """Per-sample standard deviation of white rate noise of a given density.

    Parameters
    ----------
    density : float or array_like
        Noise density ``N`` [unit/sqrt(Hz), e.g. rad/s/sqrt(Hz) = rad/sqrt(s)],
        >= 0.
    dt_s : float
        Sample interval [s], > 0.

    Returns
    -------
    float or ndarray
        ``N / sqrt(dt_s)`` [unit].

    Notes
    -----
    A rate sample that is the average of white noise of density ``N`` over
    ``dt`` has variance ``N^2 / dt``; the Allan variance of such samples at
    ``tau = m dt`` is ``N^2 / tau``, the IEEE Std 952-1997 definition of the
    angle (velocity) random walk coefficient.

    Examples
    --------
    >>> density_to_sd(0.1, 0.01)
    1.0
    """
    dens = check_value("density", density, _NONNEG)
    out = np.asarray(dens, dtype=float) / math.sqrt(_check_dt(dt_s))
    return float(out) if out.ndim == 0 else out


# ---------------------------------------------------------------------------
# Coloured and white noise
# ---------------------------------------------------------------------------


def random_constant(
    streams: TrialStreams, purpose: str, sigma: ArrayLike, *, n_axes: int | None = None
) -> NDArray[np.float64]:
    """One zero-mean normal constant per trial (and axis): a turn-on bias.

    Parameters
    ----------
    streams : TrialStreams
        Per-trial random streams.
    purpose : str
        Stream name.
    sigma : float or ndarray
        Standard deviation, >= 0 (scalar, (n_trials,) or (n_trials, n_axes)).
    n_axes : int, optional
        Number of axes; ``None`` for a single channel.

    Returns
    -------
    ndarray of shape (n_trials,) or (n_trials, n_axes)

    Examples
    --------
    >>> random_constant(TrialStreams(seed=1, trials=4), "demo.bias", 0.1, n_axes=3).shape
    (4, 3)
    """
    n_axes = _check_axes(n_axes)
    sig = _per_trial("sigma", sigma, streams.n_trials, n_axes, _NONNEG)
    shape = () if n_axes is None else (n_axes,)
    return sig * _normals(streams, purpose, shape)


def white_sequence(
    streams: TrialStreams, purpose: str, n_samples: int, sigma: ArrayLike, *, n_axes: int | None = None
) -> NDArray[np.float64]:
    """Zero-mean white Gaussian noise with per-sample standard deviation ``sigma``.

    Parameters
    ----------
    streams : TrialStreams
        Per-trial random streams.
    purpose : str
        Stream name.
    n_samples : int
        Number of samples, >= 1.
    sigma : float or ndarray
        Per-sample standard deviation, >= 0 (scalar, (n_trials,) or
        (n_trials, n_axes)). For a noise density ``N`` sampled at ``dt`` use
        ``sigma = density_to_sd(N, dt)``.
    n_axes : int, optional
        Number of axes; ``None`` for a single channel.

    Returns
    -------
    ndarray of shape (n_trials, n_samples) or (n_trials, n_samples, n_axes)

    Examples
    --------
    >>> white_sequence(TrialStreams(seed=1, trials=2), "demo.white", 5, 1.0).shape
    (2, 5)
    """
    n = _check_count("n_samples", n_samples)
    n_axes = _check_axes(n_axes)
    sig = _per_trial("sigma", sigma, streams.n_trials, n_axes, _NONNEG)
    return sig[:, None, ...] * _normals(streams, purpose, _sample_shape(n, n_axes))


def random_walk_sequence(
    streams: TrialStreams,
    purpose: str,
    n_samples: int,
    density: ArrayLike,
    dt_s: float,
    *,
    n_axes: int | None = None,
) -> NDArray[np.float64]:
    """Random walk (sampled Wiener process) starting at zero.

    Parameters
    ----------
    streams : TrialStreams
        Per-trial random streams.
    purpose : str
        Stream name.
    n_samples : int
        Number of samples, >= 1; sample ``k`` is at time ``k dt_s``.
    density : float or ndarray
        Density of the white noise that is integrated, >= 0
        [unit/sqrt(s)]: the angle random walk ``N`` for an angle error, the
        rate random walk ``K`` for a rate error (see the module notes).
        Scalar, (n_trials,) or (n_trials, n_axes).
    dt_s : float
        Sample interval [s], > 0.
    n_axes : int, optional
        Number of axes; ``None`` for a single channel.

    Returns
    -------
    ndarray of shape (n_trials, n_samples) or (n_trials, n_samples, n_axes)

    Notes
    -----
    ``x[0] = 0``, ``x[k] = x[k-1] + density sqrt(dt) w[k]`` with ``w``
    standard normal, so ``Var x[k] = density^2 k dt``: the exact samples of
    ``density`` times a standard Wiener process (Brown & Hwang). As a rate
    error with ``density = K`` its Allan variance is ``K^2 tau / 3`` (IEEE Std
    952-1997), up to a relative ``1/(2 m^2)`` from sampling at ``tau = m dt``.

    Examples
    --------
    >>> x = random_walk_sequence(TrialStreams(seed=1, trials=2), "demo.rw", 4, 1.0, 0.5, n_axes=3)
    >>> x.shape, float(abs(x[:, 0]).max())
    ((2, 4, 3), 0.0)
    """
    n = _check_count("n_samples", n_samples)
    n_axes = _check_axes(n_axes)
    dt = _check_dt(dt_s)
    dens = _per_trial("density", density, streams.n_trials, n_axes, _NONNEG)
    steps = _normals(streams, purpose, _sample_shape(n - 1, n_axes)) * (dens * math.sqrt(dt))[:, None, ...]
    out = np.zeros((streams.n_trials, *_sample_shape(n, n_axes)))
    np.cumsum(steps, axis=1, out=out[:, 1:])
    return out


def _ar1_filter(x: NDArray[np.float64], phi: NDArray[np.float64]) -> NDArray[np.float64]:
    """y[k] = phi y[k-1] + x[k], y[0] = x[0], along axis 1, phi per trial (and axis).

    Runs :func:`scipy.signal.lfilter` once per distinct ``phi`` (once in all
    for shared parameters); each row is filtered on its own, so a trial's
    result does not depend on the batch.
    """
    moved = np.moveaxis(x, 1, -1)
    rows = np.ascontiguousarray(moved).reshape(-1, moved.shape[-1])
    coeff = np.ascontiguousarray(phi).reshape(-1)
    out = np.empty_like(rows)
    values, inverse = np.unique(coeff, return_inverse=True)
    inverse = inverse.reshape(-1)
    for j, p in enumerate(values):
        sel = inverse == j
        out[sel] = lfilter([1.0], [1.0, -float(p)], rows[sel], axis=-1)
    return np.moveaxis(out.reshape(moved.shape), -1, 1)


def gauss_markov_sequence(
    streams: TrialStreams,
    purpose: str,
    n_samples: int,
    sigma: ArrayLike,
    tau_s: ArrayLike,
    dt_s: float,
    *,
    initial: str = "stationary",
    n_axes: int | None = None,
) -> NDArray[np.float64]:
    """First-order Gauss--Markov sequence with exact discretisation.

    Parameters
    ----------
    streams : TrialStreams
        Per-trial random streams.
    purpose : str
        Stream name; one block of standard normals of shape (n_samples[,
        n_axes]) is drawn per trial.
    n_samples : int
        Number of samples, >= 1; sample ``k`` is at time ``k dt_s``.
    sigma : float or ndarray
        Stationary standard deviation, >= 0 (scalar, (n_trials,) or
        (n_trials, n_axes)).
    tau_s : float or ndarray
        Correlation time ``T`` [s], > 0; ``inf`` gives a random constant
        (a bias drawn once with standard deviation ``sigma``).
    dt_s : float
        Sample interval [s], > 0.
    initial : {"stationary", "zero"}
        ``"stationary"``: ``b[0] ~ N(0, sigma^2)``; ``"zero"``: ``b[0] = 0``
        (the same normals are drawn either way).
    n_axes : int, optional
        Number of axes; ``None`` for a single channel.

    Returns
    -------
    ndarray of shape (n_trials, n_samples) or (n_trials, n_samples, n_axes)

    Notes
    -----
    The continuous process ``db/dt = -b/T + w`` sampled every ``dt`` is,
    exactly (Brown & Hwang),

    .. math::

        b_{k+1} = \\phi b_k + \\sigma \\sqrt{1 - \\phi^2}\\, w_k,
        \\qquad \\phi = e^{-\\Delta t / T},

    with ``w_k`` standard normal. Its stationary variance is ``sigma^2`` and
    its autocorrelation ``exp(-|lag| dt / T)`` whatever ``dt``; from
    ``b_0 = 0`` the variance at time ``t`` is ``sigma^2 (1 - exp(-2 t/T))``.
    ``1 - phi^2`` is evaluated as ``-expm1(-2 dt/T)`` to keep its precision
    when ``dt << T``. With ``T = inf``, ``phi = 1`` and the drive vanishes: a
    random constant. The recursion runs in :func:`scipy.signal.lfilter`,
    once per distinct ``phi`` in the batch.

    References
    ----------
    R. G. Brown and P. Y. C. Hwang, *Introduction to Random Signals and
    Applied Kalman Filtering*; P. S. Maybeck, *Stochastic Models, Estimation,
    and Control*, Vol. 1 (first-order Gauss--Markov shaping filter).

    Examples
    --------
    >>> s = TrialStreams(seed=3, trials=2)
    >>> b = gauss_markov_sequence(s, "demo.gm", 6, 0.5, 10.0, 1.0, n_axes=3)
    >>> b.shape
    (2, 6, 3)
    >>> c = gauss_markov_sequence(s, "demo.gm", 6, 0.5, float("inf"), 1.0)
    >>> bool((c == c[:, :1]).all())
    True
    """
    n = _check_count("n_samples", n_samples)
    n_axes = _check_axes(n_axes)
    dt = _check_dt(dt_s)
    if initial not in ("stationary", "zero"):
        raise ParameterError("initial", initial, "must be 'stationary' or 'zero'")
    sig = _per_trial("sigma", sigma, streams.n_trials, n_axes, _NONNEG)
    tau = _per_trial("tau_s", tau_s, streams.n_trials, n_axes, _POSITIVE_OR_INF)
    w = _normals(streams, purpose, _sample_shape(n, n_axes))
    phi = np.exp(-dt / tau)
    drive = sig * np.sqrt(-np.expm1(-2.0 * dt / tau))
    x = w * drive[:, None, ...]
    x[:, 0] = sig * w[:, 0] if initial == "stationary" else 0.0
    if streams.n_trials == 0:
        return x
    return _ar1_filter(x, phi)


# ---------------------------------------------------------------------------
# Availability: dropouts and scheduled outages
# ---------------------------------------------------------------------------

_RUN_CHUNK = 256


def _two_state_chain(
    rng: np.random.Generator, n: int, p_drop: float, p_recover: float, start_valid: bool
) -> NDArray[np.bool_]:
    """One trial's valid mask from alternating geometric sojourns."""
    parts: list[NDArray[np.int64]] = []
    covered = 0
    while covered < n:
        # a sojourn in a state left with per-sample probability p lasts
        # Geometric(p) samples (support 1, 2, ...); p = 0 never leaves
        up = rng.geometric(p_drop, _RUN_CHUNK) if p_drop > 0 else np.full(_RUN_CHUNK, n, dtype=np.int64)
        down = rng.geometric(p_recover, _RUN_CHUNK) if p_recover > 0 else np.full(_RUN_CHUNK, n, dtype=np.int64)
        first, second = (up, down) if start_valid else (down, up)
        pair = np.empty(2 * _RUN_CHUNK, dtype=np.int64)
        pair[0::2] = np.minimum(first, n)
        pair[1::2] = np.minimum(second, n)
        parts.append(pair)
        covered += int(pair.sum())
    lengths = np.concatenate(parts)
    states = np.zeros(lengths.size, dtype=bool)
    states[0 if start_valid else 1 :: 2] = True
    return np.repeat(states, lengths)[:n]


def markov_dropout_mask(
    streams: TrialStreams,
    purpose: str,
    n_samples: int,
    p_drop: ArrayLike,
    p_recover: ArrayLike,
    *,
    start_valid: bool = True,
) -> NDArray[np.bool_]:
    """Valid-sample mask from a two-state (valid / dropped) Markov chain.

    Parameters
    ----------
    streams : TrialStreams
        Per-trial random streams.
    purpose : str
        Stream name.
    n_samples : int
        Number of samples, >= 1.
    p_drop : float or ndarray of shape (n_trials,)
        Per-sample probability of going from valid to dropped, in [0, 1].
    p_recover : float or ndarray of shape (n_trials,)
        Per-sample probability of going from dropped to valid, in [0, 1].
    start_valid : bool
        State of the first sample.

    Returns
    -------
    ndarray of bool, shape (n_trials, n_samples)
        True where the sample is valid.

    Notes
    -----
    The chain stays valid for a Geometric(``p_drop``) number of samples
    (mean ``1/p_drop``), then dropped for a Geometric(``p_recover``) number
    (mean ``1/p_recover``), and so on -- the same law as drawing the
    transition at every sample, drawn as whole sojourns. Its stationary
    (long-run) availability is (Kemeny & Snell)

    .. math::

        A = \\frac{p_{recover}}{p_{drop} + p_{recover}},

    and consecutive states are correlated with
    ``lambda = 1 - p_drop - p_recover`` per sample.

    Examples
    --------
    >>> m = markov_dropout_mask(TrialStreams(seed=2, trials=3), "demo.dropout", 50, 0.1, 0.5)
    >>> m.shape, m.dtype.name, bool(m[:, 0].all())
    ((3, 50), 'bool', True)
    """
    n = _check_count("n_samples", n_samples)
    if not isinstance(start_valid, (bool, np.bool_)):
        raise ParameterError("start_valid", start_valid, "must be True or False")
    pd = _per_trial("p_drop", p_drop, streams.n_trials, None, _PROBABILITY)
    pr = _per_trial("p_recover", p_recover, streams.n_trials, None, _PROBABILITY)
    rows = [
        _two_state_chain(rng, n, float(a), float(b), bool(start_valid))
        for rng, a, b in zip(streams.generators(purpose), pd, pr, strict=True)
    ]
    if not rows:
        return np.empty((0, n), dtype=bool)
    return np.stack(rows)


def _windows_array(windows: Any) -> NDArray[np.float64]:
    arr = np.asarray(windows, dtype=float)
    if arr.size == 0:
        return np.empty((0, 2))
    if arr.ndim != 2 or arr.shape[1] != 2:
        raise ParameterError("windows", windows, "must be a sequence of (start_s, end_s) pairs")
    if not np.all(np.isfinite(arr)) or np.any(arr[:, 1] < arr[:, 0]):
        raise ParameterError("windows", windows, "each window must be finite with end_s >= start_s")
    return arr


def _is_shared(windows: Any) -> bool:
    """A flat sequence of pairs (or nothing) rather than one sequence per trial."""
    try:
        arr = np.asarray(windows, dtype=float)
    except (TypeError, ValueError):  # ragged: per-trial lists of different lengths
        return False
    return (arr.ndim == 1 and arr.size == 0) or (arr.ndim == 2 and arr.shape[1] == 2)


def _inside(times: NDArray[np.float64], win: NDArray[np.float64]) -> NDArray[np.bool_]:
    hit = np.zeros(times.shape, dtype=bool)
    for start, end in win:
        hit |= (times >= start) & (times < end)
    return hit


def outage_mask(
    times_s: ArrayLike,
    windows: Sequence[tuple[float, float]] | Sequence[Sequence[tuple[float, float]]],
) -> NDArray[np.bool_]:
    """Valid-sample mask for scheduled outage windows.

    Parameters
    ----------
    times_s : array_like of shape (n_samples,) or (n_trials, n_samples)
        Sample times [s].
    windows : sequence of (start_s, end_s), or one such sequence per trial
        Outage windows. A sample at time ``t`` is out if
        ``start_s <= t < end_s`` for some window (half-open: the sample at
        ``end_s`` is valid again). A sequence of pairs applies to every
        trial; a sequence of ``n_trials`` sequences of pairs gives each trial
        its own windows (possibly none).

    Returns
    -------
    ndarray of bool
        True where valid; the shape of ``times_s`` for shared windows,
        (n_trials, n_samples) for per-trial windows.

    Examples
    --------
    >>> outage_mask([0.0, 1.0, 2.0, 3.0], [(1.0, 3.0)]).tolist()
    [True, False, False, True]
    >>> outage_mask([0.0, 1.0, 2.0], [[(0.0, 1.0)], []]).tolist()
    [[False, True, True], [True, True, True]]
    """
    t = np.asarray(times_s, dtype=float)
    if t.ndim not in (1, 2) or not np.all(np.isfinite(t)):
        raise ParameterError("times_s", times_s, "must be finite, of shape (n_samples,) or (n_trials, n_samples)")
    if _is_shared(windows):
        return ~_inside(t, _windows_array(windows))
    per_trial = [_windows_array(w) for w in windows]
    if t.ndim == 2 and t.shape[0] != len(per_trial):
        raise ParameterError("windows", windows, f"per-trial windows must have one entry per trial ({t.shape[0]})")
    rows = [~_inside(t if t.ndim == 1 else t[i], w) for i, w in enumerate(per_trial)]
    if not rows:
        return np.empty((0, t.shape[-1]), dtype=bool)
    return np.stack(rows)


# ---------------------------------------------------------------------------
# Outliers, quantisation, latency
# ---------------------------------------------------------------------------


def outlier_sequence(
    streams: TrialStreams,
    purpose: str,
    n_samples: int,
    probability: ArrayLike,
    scale: ArrayLike,
    *,
    n_axes: int | None = None,
) -> NDArray[np.float64]:
    """Sparse extra errors: Bernoulli events times a wide normal error.

    Parameters
    ----------
    streams : TrialStreams
        Per-trial random streams. Events are drawn from ``purpose + ".event"``
        and sizes from ``purpose + ".size"``.
    purpose : str
        Stream name prefix.
    n_samples : int
        Number of samples, >= 1.
    probability : float or ndarray of shape (n_trials,)
        Per-sample probability of an outlier, in [0, 1].
    scale : float or ndarray
        Standard deviation of the outlier error, >= 0 (scalar, (n_trials,)
        or (n_trials, n_axes)); choose it several times the ordinary noise.
    n_axes : int, optional
        Number of axes; one event hits every axis of a sample.

    Returns
    -------
    ndarray of shape (n_trials, n_samples) or (n_trials, n_samples, n_axes)
        Zero except at outlier events, where ``scale * N(0, 1)``.

    Notes
    -----
    Added to Gaussian noise of standard deviation ``s``, the result is the
    contaminated-normal mixture ``(1 - p) N(0, s^2) + p N(0, s^2 + scale^2)``
    (Tukey's gross-error model), heavier-tailed than the noise alone.

    Examples
    --------
    >>> e = outlier_sequence(TrialStreams(seed=1, trials=2), "demo.outlier", 1000, 0.05, 10.0)
    >>> e.shape, 0 < int((e != 0).sum()) < 200
    ((2, 1000), True)
    """
    n = _check_count("n_samples", n_samples)
    n_axes = _check_axes(n_axes)
    prob = _per_trial("probability", probability, streams.n_trials, None, _PROBABILITY)
    size = _per_trial("scale", scale, streams.n_trials, n_axes, _NONNEG)
    u = streams.draw(purpose + ".event", lambda rng: rng.random(n)).reshape(streams.n_trials, n)
    events = u < prob[:, None]
    z = _normals(streams, purpose + ".size", _sample_shape(n, n_axes)) * size[:, None, ...]
    if n_axes is not None:
        events = events[..., None]
    return np.where(events, z, 0.0)


def quantise(x: ArrayLike, lsb: ArrayLike) -> NDArray[np.float64]:
    """Round to the nearest multiple of a least-significant bit.

    Parameters
    ----------
    x : array_like of shape (n_trials, ...)
        Values.
    lsb : float or ndarray of shape (n_trials,)
        Resolution, >= 0; 0 leaves the values unchanged. A 1-D array aligns
        with the leading (trial) axis of ``x``.

    Returns
    -------
    ndarray
        ``lsb * round(x / lsb)``; exact halves round to the even multiple
        (numpy's round-half-to-even).

    Examples
    --------
    >>> quantise([0.26, -0.74, 1.0, 0.3], 0.5).tolist()
    [0.5, -0.5, 1.0, 0.5]
    >>> quantise([0.26], 0.0).tolist()
    [0.26]
    """
    arr = np.asarray(x, dtype=float)
    q = np.asarray(check_value("lsb", lsb, _NONNEG), dtype=float)
    if q.ndim == 1 and arr.ndim >= 1:
        if q.shape[0] != arr.shape[0]:
            raise ParameterError("lsb", lsb, f"a per-trial lsb must have shape ({arr.shape[0]},)")
        q = q.reshape((-1,) + (1,) * (arr.ndim - 1))
    elif q.ndim > 0:
        raise ParameterError("lsb", lsb, "must be a scalar or an array of shape (n_trials,)")
    safe = np.where(q > 0, q, 1.0)
    return np.where(q > 0, safe * np.round(arr / safe), arr)


def delay(
    x: ArrayLike, n_steps: int, *, axis: int = 1, fill: float | bool | None = None
) -> tuple[NDArray[Any], NDArray[np.bool_]]:
    """Shift a sampled sequence later by a whole number of samples (latency).

    Parameters
    ----------
    x : array_like
        Sequence, time along ``axis`` (``(n_trials, n_samples, ...)`` by
        default; pass ``axis=0`` for one unbatched sequence).
    n_steps : int
        Delay in samples, >= 0 (see :func:`latency_steps`).
    axis : int
        Time axis of ``x``.
    fill : scalar, optional
        Value of the leading samples that have no data yet; NaN for floating
        ``x`` and zero/False otherwise when omitted.

    Returns
    -------
    y : ndarray
        Same shape as ``x``: ``y[k] = x[k - n_steps]`` along ``axis`` for
        ``k >= n_steps``, ``fill`` before.
    valid : ndarray of bool, shape (n_samples,)
        False for the leading ``n_steps`` samples.

    Examples
    --------
    >>> y, ok = delay([1.0, 2.0, 3.0, 4.0], 1, axis=0)
    >>> y.tolist(), ok.tolist()
    ([nan, 1.0, 2.0, 3.0], [False, True, True, True])
    """
    arr = np.asarray(x)
    if arr.ndim == 0:
        raise ParameterError("x", x, "must have a time axis")
    k = _check_count("n_steps", n_steps, minimum=0)
    if not -arr.ndim <= axis < arr.ndim:
        raise ParameterError("axis", axis, f"must be a valid axis of an array with {arr.ndim} dimensions")
    if fill is None:
        fill = np.nan if arr.dtype.kind in "fc" else 0
    n = arr.shape[axis]
    moved = np.moveaxis(arr, axis, 0)
    out = np.empty_like(moved)
    out[: min(k, n)] = fill
    if k < n:
        out[k:] = moved[: n - k]
    valid = np.arange(n) >= k
    return np.moveaxis(out, 0, axis), valid
