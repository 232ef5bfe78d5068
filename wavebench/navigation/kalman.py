"""Batched linear and extended Kalman filter steps over a leading trial axis.

Every array carries the trial axis first: the state ``x`` has shape
``(n_trials, n_state)``, its covariance ``P`` ``(n_trials, n_state, n_state)``.
System matrices (``F``, ``Q``, ``H``, ``R``) may be shared by all trials
(shape ``(1, ., .)`` or plain 2-D) or given per trial (``(n_trials, ., .)``).
The functions are pure: they return new arrays and never modify their inputs.
All trials are advanced by the same stacked matrix products (:func:`numpy.matmul`,
:func:`numpy.linalg.solve`), with no per-trial Python loop; each trial's
result depends only on its own rows, so a trial gives the same numbers alone
or in a batch.

Equations (symbols as in the references)::

    predict   x- = F x + B u,            P- = F P F' + Q
    update    y  = z - H x-              (innovation)
              S  = H P- H' + R           (innovation covariance)
              K  = P- H' S^-1            (gain)
              x+ = x- + K y
              P+ = (I - K H) P- (I - K H)' + K R K'      (Joseph form)
              NIS = y' S^-1 y

The Joseph form keeps ``P+`` symmetric positive semi-definite under rounding
and is correct for any gain, not only the optimal one (Bar-Shalom et al.
2001, section on the covariance update; Simon 2006, section 5.1). Covariances
returned are symmetrised, ``(P + P') / 2``, to remove the rounding asymmetry
of the products.

Measurement gating: with ``gate = p`` a measurement whose NIS exceeds the
chi-square quantile ``chi2.ppf(p, m)`` (``m`` = measurement dimension) is
rejected and the prior is kept; under a consistent filter the NIS is
chi-square with ``m`` degrees of freedom, so a fraction ``1 - p`` of good
measurements is rejected too (Bar-Shalom et al. 2001, validation gate).

The extended filter (:func:`ekf_update`) linearises a nonlinear measurement
``z = h(x) + v`` about the prior: the innovation is ``z - h(x-)`` (wrapped to
[-pi, pi) for angle components) and ``H`` is the Jacobian of ``h`` at ``x-``.

References
----------
.. [1] Y. Bar-Shalom, X. R. Li and T. Kirubarajan, Estimation with
   Applications to Tracking and Navigation, Wiley (2001): the Kalman filter,
   Joseph-form covariance update, validation gate, NIS.
.. [2] D. Simon, Optimal State Estimation: Kalman, H-infinity and Nonlinear
   Approaches, Wiley (2006): discrete-time Kalman filter and its
   alternative covariance forms; the extended Kalman filter.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray
from scipy.stats import chi2

from ..core.errors import ParameterError
from ..core.frames import wrap_pi

__all__ = ["KalmanUpdate", "ekf_update", "gate_threshold", "kf_predict", "kf_update"]

FloatArray = NDArray[np.float64]
BoolArray = NDArray[np.bool_]

# Relative tolerance of the symmetry check on covariance inputs.
_SYM_RTOL = 1e-8


@dataclass(frozen=True)
class KalmanUpdate:
    """Result of a batched measurement update.

    Attributes
    ----------
    x : ndarray of shape (n_trials, n_state)
        Posterior state; the prior where no measurement was used.
    P : ndarray of shape (n_trials, n_state, n_state)
        Posterior covariance (Joseph form, symmetrised); the prior where no
        measurement was used.
    innovation : ndarray of shape (n_trials, n_meas)
        ``y = z - h(x-)``; NaN for trials without a measurement (``valid``
        False). Reported for gated-out trials too.
    S : ndarray of shape (n_trials, n_meas, n_meas)
        Innovation covariance ``H P- H' + R`` (every trial).
    nis : ndarray of shape (n_trials,)
        Normalised innovation squared ``y' S^-1 y``; NaN without a measurement.
    accepted : ndarray of shape (n_trials,), bool
        The measurement was used (valid and inside the gate).
    rejected : ndarray of shape (n_trials,), bool
        The measurement was valid but gated out as an outlier.
    """

    x: FloatArray
    P: FloatArray
    innovation: FloatArray
    S: FloatArray
    nis: FloatArray
    accepted: BoolArray
    rejected: BoolArray


# ---------------------------------------------------------------------------
# input checks (shared with the other navigation modules)


def _float_array(name: str, value: Any) -> FloatArray:
    """``value`` as a float64 array, or ParameterError naming ``name``."""
    if value is None or isinstance(value, (bool, np.bool_, str, bytes)):
        raise ParameterError(name, value, "must be a real numeric array")
    arr = np.asarray(value)
    if arr.dtype.kind not in "iuf":
        raise ParameterError(name, value, "must be a real numeric array")
    return arr.astype(np.float64, copy=False)


def _require_finite(name: str, arr: FloatArray) -> None:
    if not np.all(np.isfinite(arr)):
        raise ParameterError(name, arr, "must be finite (no NaN or infinity)")


def _state(x: ArrayLike) -> FloatArray:
    arr = _float_array("x", x)
    if arr.ndim != 2:
        raise ParameterError("x", arr, f"must have shape (n_trials, n_state); got shape {arr.shape}")
    _require_finite("x", arr)
    return arr


def _batch_matrix(name: str, value: ArrayLike, n: int, rows: int, cols: int) -> FloatArray:
    """A matrix shared by all trials (2-D or (1, r, c)) or per trial (n, r, c)."""
    arr = _float_array(name, value)
    if arr.ndim == 2:
        arr = arr[None]
    if arr.ndim != 3 or arr.shape[0] not in (1, n) or arr.shape[1:] != (rows, cols):
        raise ParameterError(
            name, arr, f"must have shape ({rows}, {cols}), (1, {rows}, {cols}) or ({n}, {rows}, {cols})"
        )
    _require_finite(name, arr)
    return arr


def _check_covariance(name: str, M: FloatArray) -> None:
    """Non-negative variances on the diagonal and symmetry (relative 1e-8)."""
    diag = np.diagonal(M, axis1=-2, axis2=-1)
    if np.any(diag < 0.0):
        raise ParameterError(name, M, "is a covariance: its diagonal (variances) must be >= 0")
    scale = np.max(np.abs(M), axis=(-2, -1), keepdims=True)
    if np.any(np.abs(M - np.swapaxes(M, -1, -2)) > _SYM_RTOL * scale):
        raise ParameterError(name, M, "is a covariance: it must be symmetric")


def _covariance(name: str, value: ArrayLike, n: int, dim: int) -> FloatArray:
    M = _batch_matrix(name, value, n, dim, dim)
    _check_covariance(name, M)
    return M


def _valid_mask(valid: ArrayLike | None, n: int) -> BoolArray:
    if valid is None:
        return np.ones(n, dtype=bool)
    arr = np.asarray(valid)
    if arr.dtype != np.bool_ or arr.shape != (n,):
        raise ParameterError("valid", valid, f"must be a boolean array of shape ({n},)")
    return arr


def gate_threshold(gate: float, n_meas: int) -> float:
    """Chi-square gate on the NIS for a gate probability.

    Parameters
    ----------
    gate : float
        Probability mass inside the gate, in (0, 1), e.g. 0.997.
    n_meas : int
        Measurement dimension (degrees of freedom).

    Returns
    -------
    float
        ``scipy.stats.chi2.ppf(gate, n_meas)``.

    Examples
    --------
    >>> round(gate_threshold(0.997, 1), 3)
    8.807
    """
    if isinstance(gate, (bool, np.bool_)) or not isinstance(gate, (int, float, np.integer, np.floating)):
        raise ParameterError("gate", gate, "must be a probability in (0, 1) or None")
    if not 0.0 < float(gate) < 1.0:
        raise ParameterError("gate", gate, "must be a probability in (0, 1) or None")
    return float(chi2.ppf(float(gate), int(n_meas)))


def _swap(a: FloatArray) -> FloatArray:
    return np.swapaxes(a, -1, -2)


def _symmetrise(a: FloatArray) -> FloatArray:
    return 0.5 * (a + _swap(a))


# ---------------------------------------------------------------------------
# predict


def kf_predict(
    x: ArrayLike,
    P: ArrayLike,
    F: ArrayLike,
    Q: ArrayLike,
    *,
    B: ArrayLike | None = None,
    u: ArrayLike | None = None,
) -> tuple[FloatArray, FloatArray]:
    """Kalman prediction ``x- = F x + B u``, ``P- = F P F' + Q`` for all trials.

    Parameters
    ----------
    x : array_like of shape (n_trials, n_state)
        State.
    P : array_like of shape (n_trials, n_state, n_state)
        State covariance.
    F : array_like of shape (n_state, n_state), (1, n_state, n_state) or (n_trials, n_state, n_state)
        State transition matrix.
    Q : array_like, shape as ``F``
        Process noise covariance of the step.
    B : array_like of shape (n_state, n_in), (1, n_state, n_in) or (n_trials, n_state, n_in), optional
        Input matrix; give together with ``u``.
    u : array_like of shape (n_trials, n_in), optional
        Known input of the step.

    Returns
    -------
    x : ndarray of shape (n_trials, n_state)
        Predicted state.
    P : ndarray of shape (n_trials, n_state, n_state)
        Predicted covariance (symmetrised).

    Raises
    ------
    ParameterError
        On shapes that do not fit, non-finite values, or a covariance with a
        negative variance or not symmetric; the message names the argument.

    Examples
    --------
    >>> x, P = kf_predict([[0.0, 1.0]], [np.eye(2)], [[1.0, 2.0], [0.0, 1.0]], 0.1 * np.eye(2))
    >>> x
    array([[2., 1.]])
    >>> P
    array([[[5.1, 2. ],
            [2. , 1.1]]])
    """
    xa = _state(x)
    n, s = xa.shape
    Pa = _float_array("P", P)
    if Pa.shape != (n, s, s):
        raise ParameterError("P", Pa, f"must have shape ({n}, {s}, {s}) to match x")
    _require_finite("P", Pa)
    _check_covariance("P", Pa)
    Fa = _batch_matrix("F", F, n, s, s)
    Qa = _covariance("Q", Q, n, s)
    x_new = (Fa @ xa[..., None])[..., 0]
    if (B is None) != (u is None):
        raise ParameterError("B" if B is None else "u", None, "B and u must be given together")
    if B is not None and u is not None:
        ua = _float_array("u", u)
        if ua.ndim != 2 or ua.shape[0] != n:
            raise ParameterError("u", ua, f"must have shape ({n}, n_in)")
        _require_finite("u", ua)
        Ba = _batch_matrix("B", B, n, s, ua.shape[1])
        x_new = x_new + (Ba @ ua[..., None])[..., 0]
    P_new = _symmetrise(Fa @ Pa @ _swap(Fa) + Qa)
    return x_new, P_new


# ---------------------------------------------------------------------------
# update


def _update_core(
    x: FloatArray,
    P: FloatArray,
    y: FloatArray,
    H: FloatArray,
    R: FloatArray,
    valid: BoolArray,
    gate: float | None,
) -> KalmanUpdate:
    """Joseph-form update from an innovation already formed (``y`` finite where valid)."""
    n, s = x.shape
    m = y.shape[1]
    y0 = np.where(valid[:, None], y, 0.0)
    PHt = P @ _swap(H)  # (n, s, m)
    S = _symmetrise(H @ PHt + R)  # (n, m, m)
    # Trials without a measurement solve with the identity so that a singular
    # S there cannot stop the batch; their S is still reported.
    S_solve = np.where(valid[:, None, None], S, np.eye(m))
    Sinv_y = np.linalg.solve(S_solve, y0[..., None])[..., 0]
    nis = np.sum(y0 * Sinv_y, axis=-1)
    # K = P H' S^-1 = (S^-1 H P)' because P and S are symmetric.
    K = _swap(np.linalg.solve(S_solve, _swap(PHt)))  # (n, s, m)
    if gate is None:
        rejected = np.zeros(n, dtype=bool)
    else:
        rejected = valid & (nis > gate_threshold(gate, m))
    accepted = valid & ~rejected
    x_post = x + (K @ y0[..., None])[..., 0]
    A = np.eye(s) - K @ H
    P_post = _symmetrise(A @ P @ _swap(A) + K @ R @ _swap(K))
    return KalmanUpdate(
        x=np.where(accepted[:, None], x_post, x),
        P=np.where(accepted[:, None, None], P_post, P),
        innovation=np.where(valid[:, None], y, np.nan),
        S=S,
        nis=np.where(valid, nis, np.nan),
        accepted=accepted,
        rejected=rejected,
    )


def _update_inputs(
    x: ArrayLike, P: ArrayLike, z: ArrayLike, R: ArrayLike, valid: ArrayLike | None, gate: float | None
) -> tuple[FloatArray, FloatArray, FloatArray, FloatArray, BoolArray]:
    xa = _state(x)
    n, s = xa.shape
    Pa = _float_array("P", P)
    if Pa.shape != (n, s, s):
        raise ParameterError("P", Pa, f"must have shape ({n}, {s}, {s}) to match x")
    _require_finite("P", Pa)
    _check_covariance("P", Pa)
    za = _float_array("z", z)
    if za.ndim != 2 or za.shape[0] != n or za.shape[1] < 1:
        raise ParameterError("z", za, f"must have shape ({n}, n_meas)")
    m = za.shape[1]
    va = _valid_mask(valid, n)
    _require_finite("z", za[va])
    Ra = _covariance("R", R, n, m)
    if gate is not None:
        gate_threshold(gate, m)  # validates early, before any arithmetic
    return xa, Pa, za, Ra, va


def kf_update(
    x: ArrayLike,
    P: ArrayLike,
    z: ArrayLike,
    H: ArrayLike,
    R: ArrayLike,
    *,
    valid: ArrayLike | None = None,
    gate: float | None = None,
) -> KalmanUpdate:
    """Linear Kalman measurement update (Joseph form) for all trials.

    Parameters
    ----------
    x : array_like of shape (n_trials, n_state)
        Prior state.
    P : array_like of shape (n_trials, n_state, n_state)
        Prior covariance.
    z : array_like of shape (n_trials, n_meas)
        Measurements; rows of trials with ``valid`` False are ignored (may be NaN).
    H : array_like of shape (n_meas, n_state), (1, n_meas, n_state) or (n_trials, n_meas, n_state)
        Measurement matrix.
    R : array_like of shape (n_meas, n_meas), (1, n_meas, n_meas) or (n_trials, n_meas, n_meas)
        Measurement noise covariance.
    valid : array_like of bool, shape (n_trials,), optional
        Which trials have a measurement this step (default: all).
    gate : float, optional
        Gate probability in (0, 1) (e.g. 0.997): reject a measurement whose
        NIS exceeds ``chi2.ppf(gate, n_meas)``. None (default) accepts all.

    Returns
    -------
    KalmanUpdate
        Posterior ``x``, ``P`` and the innovation, ``S``, NIS and the
        accepted / rejected masks.

    Raises
    ------
    ParameterError
        On shapes that do not fit, non-finite values (in ``z`` only where
        valid), a covariance with a negative variance or not symmetric, or a
        gate outside (0, 1); the message names the argument.

    Examples
    --------
    >>> r = kf_update([[0.0]], [[[4.0]]], [[1.0]], [[1.0]], [[1.0]])
    >>> r.x, r.P, r.nis
    (array([[0.8]]), array([[[0.8]]]), array([0.2]))
    """
    xa, Pa, za, Ra, va = _update_inputs(x, P, z, R, valid, gate)
    n, s = xa.shape
    Ha = _batch_matrix("H", H, n, za.shape[1], s)
    z_eff = np.where(va[:, None], za, 0.0)
    y = z_eff - (Ha @ xa[..., None])[..., 0]
    return _update_core(xa, Pa, y, Ha, Ra, va, gate)


def ekf_update(
    x: ArrayLike,
    P: ArrayLike,
    z: ArrayLike,
    h_fn: Callable[[FloatArray], ArrayLike],
    H_jac: Callable[[FloatArray], ArrayLike],
    R: ArrayLike,
    *,
    valid: ArrayLike | None = None,
    gate: float | None = None,
    angle_residuals: Sequence[int] = (),
) -> KalmanUpdate:
    """Extended Kalman measurement update for a nonlinear ``z = h(x) + v``.

    Parameters
    ----------
    x : array_like of shape (n_trials, n_state)
        Prior state.
    P : array_like of shape (n_trials, n_state, n_state)
        Prior covariance.
    z : array_like of shape (n_trials, n_meas)
        Measurements; rows with ``valid`` False are ignored (may be NaN).
    h_fn : callable
        ``h_fn(x) -> ndarray of shape (n_trials, n_meas)``: the predicted
        measurement, vectorised over trials.
    H_jac : callable
        ``H_jac(x) -> ndarray of shape (n_trials, n_meas, n_state)`` (or
        ``(n_meas, n_state)`` if the same for all): Jacobian of ``h`` at ``x``.
    R : array_like of shape (n_meas, n_meas), (1, n_meas, n_meas) or (n_trials, n_meas, n_meas)
        Measurement noise covariance.
    valid : array_like of bool, shape (n_trials,), optional
        Which trials have a measurement this step (default: all).
    gate : float, optional
        Gate probability in (0, 1), as in :func:`kf_update`.
    angle_residuals : sequence of int
        Measurement components that are angles [rad] (e.g. a heading): their
        residual ``z - h(x)`` is wrapped to [-pi, pi), so 179 deg against
        -179 deg is a 2 deg innovation. The state itself is not wrapped; wrap
        angle states after the update if needed.

    Returns
    -------
    KalmanUpdate
        As for :func:`kf_update`.

    Raises
    ------
    ParameterError
        As for :func:`kf_update`; also when ``h_fn`` or ``H_jac`` return the
        wrong shape or an angle index is out of range.

    Examples
    --------
    >>> heading = lambda x: x[:, :1]
    >>> jac = lambda x: np.array([[1.0]])
    >>> r = ekf_update([[np.pi - 0.01]], [[[1.0]]], [[-np.pi + 0.01]], heading, jac, [[1.0]], angle_residuals=[0])
    >>> round(float(r.innovation[0, 0]), 6)
    0.02
    """
    xa, Pa, za, Ra, va = _update_inputs(x, P, z, R, valid, gate)
    n, s = xa.shape
    m = za.shape[1]
    hx = _float_array("h_fn(x)", h_fn(xa.copy()))
    if hx.shape != (n, m):
        raise ParameterError("h_fn(x)", hx, f"must have shape ({n}, {m})")
    _require_finite("h_fn(x)", hx[va])
    Ha = _batch_matrix("H_jac(x)", H_jac(xa.copy()), n, m, s)
    y = np.where(va[:, None], za, hx) - hx
    idx = list(angle_residuals)
    for i in idx:
        if isinstance(i, (bool, np.bool_)) or not isinstance(i, (int, np.integer)) or not 0 <= i < m:
            raise ParameterError("angle_residuals", list(angle_residuals), f"must be indices in [0, {m})")
    if idx:
        y[:, idx] = wrap_pi(y[:, idx])
    return _update_core(xa, Pa, y, Ha, Ra, va, gate)
