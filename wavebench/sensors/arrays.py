"""Small input checks shared by the sensor models."""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ..core.errors import ParameterError

__all__ = ["finite_array", "per_trial"]


def finite_array(name: str, value: ArrayLike) -> NDArray[np.float64]:
    """``value`` as a float array, or a ParameterError naming ``name`` if it is not all finite numbers."""
    if value is None or isinstance(value, (bool, str, bytes)):
        raise ParameterError(name, value, "must be a finite number or array")
    try:
        arr = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise ParameterError(name, value, "must be a finite number or array") from None
    if not np.all(np.isfinite(arr)):
        raise ParameterError(name, arr if arr.ndim else float(arr), "must be finite")
    return arr


def per_trial(value: ArrayLike, ndim: int) -> NDArray[np.float64]:
    """Reshape a per-trial value of shape (n_trials,) to broadcast against arrays of rank ``ndim``."""
    v = np.asarray(value, dtype=float)
    if v.ndim == 1 and ndim > 1:
        return v.reshape((v.shape[0],) + (1,) * (ndim - 1))
    return v
