"""Heading sensors: magnetic compass / AHRS and gyrocompass, with error budgets.

Both sensors report a heading in [-pi, pi) (radians inside wavebench;
:func:`wavebench.core.frames.yaw_to_heading` gives degrees in [0, 360)). All
sums of heading and error are wrapped, so a craft heading 359 deg with a
+2 deg error reads 1 deg.

Magnetic compass / AHRS
-----------------------
Measured minus true heading is modelled as

.. math::

    \\delta\\psi = b + A + B\\sin\\psi + C\\cos\\psi + D\\sin 2\\psi + E\\cos 2\\psi
    + w_{slow}(t) + w(t),

with ``b`` a constant bias (per trial), the heading-dependent deviation in
the classical five-coefficient form (A constant, B and C semicircular, D and
E quadrantal), ``w_slow`` a slowly varying disturbance (e.g. a Gauss–Markov
sequence for magnetic disturbances or AHRS drift) and ``w`` white noise.
The disturbance and noise enter as input arrays. Sign: the coefficients here
give the **reading error** (compass minus true). Navigators' deviation,
east positive, is magnetic minus compass heading, i.e. minus this error; the
deviation is evaluated at the true heading here rather than at the compass
heading, which differs only in second order of the deviation.

Gyrocompass
-----------
IMO Resolution A.424(XI) (performance standards for gyro-compasses) bounds
the settle-point error by ``0.75 deg x sec(latitude)`` and the RMS scatter of
individual readings about the settle-point heading by
``0.25 deg x sec(latitude)``, at any heading and at latitudes up to 60 deg.
The two ``x sec(latitude)`` figures were seen in a stored copy of the
closely related high-speed-craft standard (A.821(19), which extends them to
70 deg); the 60 deg range of A.424(XI) is a value from memory, not
re-checked. Beyond the range the bound is still computed by the same
formula but :class:`~wavebench.core.errors.WavebenchWarning` is issued (or
:class:`~wavebench.core.errors.ParameterError` with ``strict=True``); at the
poles ``sec`` diverges and a latitude with ``|lat| >= 90`` is refused.

The gyrocompass model here is ``psi + e_settle + w`` with ``e_settle`` a
constant per trial (drawn, e.g., uniform within the bound: a modelling
choice, no source) and ``w`` white noise of standard deviation equal to the
RMS figure. Speed error and dynamic (manoeuvre) errors are not modelled.

References
----------
IMO Resolution A.424(XI), *Performance standards for gyro-compasses*,
adopted 15 November 1979.
IMO Resolution A.821(19), *Performance standards for gyro-compasses for
high-speed craft*, 1995.
N. Bowditch, *The American Practical Navigator*, NGA Pub. No. 9, chapter on
magnetic compass adjustment (deviation as A + B sin Z + C cos Z + D sin 2Z +
E cos 2Z; value from memory, not re-checked).
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ..core.errors import ParameterError, WavebenchWarning
from ..core.frames import wrap_pi
from ..core.params import Params, bounded
from .arrays import finite_array, per_trial

__all__ = [
    "A424_MAX_LATITUDE_DEG",
    "A424_RMS_ERROR_DEG",
    "A424_SETTLE_POINT_ERROR_DEG",
    "CompassParams",
    "GyrocompassParams",
    "compass_deviation_rad",
    "compass_heading",
    "gyrocompass_error_bound_deg",
    "gyrocompass_heading",
]

#: IMO A.424(XI): settle-point error limit at the equator [deg] (x sec latitude).
A424_SETTLE_POINT_ERROR_DEG = 0.75
#: IMO A.424(XI): RMS of readings about the settle-point heading [deg] (x sec latitude).
A424_RMS_ERROR_DEG = 0.25
#: IMO A.424(XI): highest latitude the accuracy figures apply to [deg]
#: (value from memory, not re-checked).
A424_MAX_LATITUDE_DEG = 60.0


def _sum_wrapped(heading: NDArray[np.float64], *terms: tuple[str, NDArray[np.float64]]) -> NDArray[np.float64]:
    """``wrap_pi(heading + sum(terms))``, broadcast; ParameterError naming a term that does not fit."""
    total = heading
    for name, t in terms:
        try:
            total = total + t
        except ValueError:
            raise ParameterError(name, t, f"must broadcast against the heading of shape {heading.shape}") from None
    return np.asarray(wrap_pi(total), dtype=float)


# ---------------------------------------------------------------------------
# Magnetic compass / AHRS
# ---------------------------------------------------------------------------


@dataclass(frozen=True, kw_only=True)
class CompassParams(Params):
    """Error budget of a magnetic compass or AHRS heading output.

    Parameters
    ----------
    bias_deg : float
        Constant heading bias (reading minus true) [deg], in [-180, 180].
        Default 0: no bias unless one is stated (disperse it per trial with
        an array of shape (n_trials,)).
    noise_sd_deg : float
        1-sigma white heading noise [deg], >= 0. Default 0.5 deg, common
        practice, no source.
    deviation_a_deg, deviation_b_deg, deviation_c_deg, deviation_d_deg, deviation_e_deg : float
        Five-coefficient deviation of the reading [deg] (constant,
        semicircular sin/cos, quadrantal sin 2/cos 2), reading-error sign
        convention of the module docstring. Default 0 (a compensated
        compass).

    Examples
    --------
    >>> CompassParams(noise_sd_deg=-0.1)  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    wavebench.core.errors.ParameterError: noise_sd_deg = -0.1 is not allowed: ...
    """

    bias_deg: float = bounded(0.0, ge=-180.0, le=180.0, unit="deg", doc="constant heading bias")
    noise_sd_deg: float = bounded(0.5, ge=0.0, unit="deg", doc="1-sigma white heading noise")
    deviation_a_deg: float = bounded(0.0, ge=-180.0, le=180.0, unit="deg", doc="constant deviation")
    deviation_b_deg: float = bounded(0.0, ge=-180.0, le=180.0, unit="deg", doc="semicircular deviation, sin")
    deviation_c_deg: float = bounded(0.0, ge=-180.0, le=180.0, unit="deg", doc="semicircular deviation, cos")
    deviation_d_deg: float = bounded(0.0, ge=-180.0, le=180.0, unit="deg", doc="quadrantal deviation, sin 2")
    deviation_e_deg: float = bounded(0.0, ge=-180.0, le=180.0, unit="deg", doc="quadrantal deviation, cos 2")

    @property
    def noise_sd_rad(self) -> float | NDArray[np.float64]:
        """1-sigma white noise [rad], scalar or shape (n_trials,)."""
        return np.radians(self.noise_sd_deg)


def compass_deviation_rad(heading_rad: ArrayLike, params: CompassParams) -> NDArray[np.float64]:
    """Heading-dependent reading error ``A + B sin psi + C cos psi + D sin 2psi + E cos 2psi``.

    Parameters
    ----------
    heading_rad : float or ndarray of shape (n_trials,) or (n_trials, n_samples)
        True heading [rad].
    params : CompassParams
        Deviation coefficients (scalars or per-trial arrays).

    Returns
    -------
    ndarray, shape of ``heading_rad``
        Reading error [rad] (not wrapped).
    """
    psi = finite_array("heading_rad", heading_rad)
    nd = psi.ndim
    a, b, c, d, e = (np.radians(per_trial(getattr(params, f"deviation_{k}_deg"), nd)) for k in "abcde")
    return a + b * np.sin(psi) + c * np.cos(psi) + d * np.sin(2.0 * psi) + e * np.cos(2.0 * psi)


def compass_heading(
    heading_rad: ArrayLike,
    params: CompassParams,
    *,
    disturbance_rad: ArrayLike = 0.0,
    noise_rad: ArrayLike = 0.0,
) -> NDArray[np.float64]:
    """Magnetic compass / AHRS reading.

    Parameters
    ----------
    heading_rad : float or ndarray of shape (n_trials,) or (n_trials, n_samples)
        True heading [rad].
    params : CompassParams
        Bias and deviation (scalars or per-trial arrays of shape (n_trials,)).
    disturbance_rad : float or ndarray, broadcastable to ``heading_rad``
        Slowly varying disturbance [rad] (e.g. ``params``-independent
        Gauss–Markov sequence from the noise layer).
    noise_rad : float or ndarray, broadcastable to ``heading_rad``
        White noise [rad], e.g. ``params.noise_sd_rad`` times unit normal draws.

    Returns
    -------
    ndarray, shape of ``heading_rad``
        ``wrap_pi(psi + bias + deviation(psi) + disturbance + noise)`` [rad].

    Examples
    --------
    >>> p = CompassParams(bias_deg=2.0)
    >>> float(np.degrees(compass_heading(np.radians(359.0), p)).round(9))
    1.0
    """
    psi = finite_array("heading_rad", heading_rad)
    if not isinstance(params, CompassParams):
        raise ParameterError("params", type(params).__name__, "must be CompassParams")
    bias = np.radians(per_trial(params.bias_deg, psi.ndim))
    dev = compass_deviation_rad(psi, params)
    return _sum_wrapped(
        psi,
        ("bias_deg", bias + dev),
        ("disturbance_rad", finite_array("disturbance_rad", disturbance_rad)),
        ("noise_rad", finite_array("noise_rad", noise_rad)),
    )


# ---------------------------------------------------------------------------
# Gyrocompass
# ---------------------------------------------------------------------------


def gyrocompass_error_bound_deg(
    latitude_deg: ArrayLike,
    *,
    limit_deg: float = A424_SETTLE_POINT_ERROR_DEG,
    max_latitude_deg: float = A424_MAX_LATITUDE_DEG,
    strict: bool = False,
) -> NDArray[np.float64] | float:
    """Latitude-scaled gyrocompass error bound ``limit x sec(latitude)``.

    Parameters
    ----------
    latitude_deg : float or array_like
        Geodetic latitude [deg]; ``|lat| < 90``.
    limit_deg : float
        Bound at the equator [deg], > 0: 0.75 for the settle-point error
        (IMO A.424(XI)); 0.25 gives the RMS scatter bound.
    max_latitude_deg : float
        Highest latitude the standard covers [deg] (60 for A.424(XI), value
        from memory, not re-checked; 70 for the high-speed-craft A.821(19)).
    strict : bool
        Raise :class:`ParameterError` beyond ``max_latitude_deg`` instead of
        warning.

    Returns
    -------
    float or ndarray
        Bound [deg] at each latitude.

    Raises
    ------
    ParameterError
        For non-finite latitudes, ``|lat| >= 90`` (sec diverges), a
        non-positive ``limit_deg``, or (with ``strict``) ``|lat| >
        max_latitude_deg``.

    Warns
    -----
    WavebenchWarning
        For ``max_latitude_deg < |lat| < 90`` (outside the standard's range).

    Examples
    --------
    >>> gyrocompass_error_bound_deg(0.0)
    0.75
    >>> round(gyrocompass_error_bound_deg(60.0), 12)
    1.5
    """
    lat = finite_array("latitude_deg", latitude_deg)
    if not (isinstance(limit_deg, (int, float)) and not isinstance(limit_deg, bool)) or not (
        math.isfinite(limit_deg) and limit_deg > 0.0
    ):
        raise ParameterError("limit_deg", limit_deg, "must be a finite number > 0")
    if not (isinstance(max_latitude_deg, (int, float)) and 0.0 < max_latitude_deg < 90.0):
        raise ParameterError("max_latitude_deg", max_latitude_deg, "must be a number in (0, 90)")
    a = np.abs(lat)
    if np.any(a >= 90.0):
        raise ParameterError(
            "latitude_deg", lat if lat.ndim else float(lat), "must satisfy |lat| < 90 (sec(lat) diverges at a pole)"
        )
    if np.any(a > max_latitude_deg):
        message = (
            f"latitude beyond {max_latitude_deg} deg: outside the range of the gyro-compass "
            "performance standard; the bound is extrapolated by the same sec(latitude) formula"
        )
        if strict:
            raise ParameterError(
                "latitude_deg", lat if lat.ndim else float(lat), f"must satisfy |lat| <= {max_latitude_deg}"
            )
        warnings.warn(message, WavebenchWarning, stacklevel=2)
    out = limit_deg / np.cos(np.radians(lat))
    return float(out) if out.ndim == 0 else out


@dataclass(frozen=True, kw_only=True)
class GyrocompassParams(Params):
    """Error budget of a gyrocompass per IMO Resolution A.424(XI).

    Parameters
    ----------
    settle_error_limit_deg : float
        Settle-point error limit at the equator [deg], > 0; scaled by
        ``sec(latitude)``. Default 0.75 (A.424(XI)).
    rms_error_deg : float
        RMS of readings about the settle-point heading at the equator
        [deg], >= 0; scaled by ``sec(latitude)``. Default 0.25 (A.424(XI)).
    max_latitude_deg : float
        Highest latitude of the standard [deg], in (0, 90). Default 60
        (A.424(XI), value from memory, not re-checked).

    Examples
    --------
    >>> p = GyrocompassParams()
    >>> round(float(np.degrees(p.settle_error_limit_rad(60.0))), 12)
    1.5
    """

    settle_error_limit_deg: float = bounded(
        A424_SETTLE_POINT_ERROR_DEG, gt=0.0, unit="deg", doc="settle-point error limit at the equator"
    )
    rms_error_deg: float = bounded(
        A424_RMS_ERROR_DEG, ge=0.0, unit="deg", doc="RMS scatter about the settle point at the equator"
    )
    max_latitude_deg: float = bounded(
        A424_MAX_LATITUDE_DEG, gt=0.0, lt=90.0, unit="deg", doc="highest latitude of the standard"
    )

    def _check(self) -> None:
        if np.ndim(self.max_latitude_deg) != 0:
            raise ParameterError("max_latitude_deg", self.max_latitude_deg, "must be a scalar")

    def _scale(self, latitude_deg: ArrayLike, strict: bool) -> NDArray[np.float64] | float:
        # sec(lat) with the standard's range check; 1.0 is the equator value.
        return gyrocompass_error_bound_deg(
            latitude_deg, limit_deg=1.0, max_latitude_deg=float(self.max_latitude_deg), strict=strict
        )

    def settle_error_limit_rad(self, latitude_deg: ArrayLike, *, strict: bool = False) -> NDArray[np.float64] | float:
        """Settle-point error limit [rad] at ``latitude_deg`` (scalar or shape (n_trials,))."""
        return np.radians(self.settle_error_limit_deg * self._scale(latitude_deg, strict))

    def noise_sd_rad(self, latitude_deg: ArrayLike, *, strict: bool = False) -> NDArray[np.float64] | float:
        """1-sigma scatter about the settle point [rad] at ``latitude_deg``."""
        return np.radians(self.rms_error_deg * self._scale(latitude_deg, strict))


def gyrocompass_heading(
    heading_rad: ArrayLike,
    *,
    settle_error_rad: ArrayLike = 0.0,
    noise_rad: ArrayLike = 0.0,
) -> NDArray[np.float64]:
    """Gyrocompass reading: true heading plus settle-point error plus scatter, wrapped.

    Parameters
    ----------
    heading_rad : float or ndarray of shape (n_trials,) or (n_trials, n_samples)
        True heading [rad].
    settle_error_rad : float or ndarray of shape (n_trials,)
        Constant settle-point error per trial [rad] (e.g. uniform within
        ``GyrocompassParams.settle_error_limit_rad(lat)``).
    noise_rad : float or ndarray, broadcastable to ``heading_rad``
        Scatter about the settle point [rad] (e.g.
        ``noise_sd_rad(lat)`` times unit normal draws).

    Returns
    -------
    ndarray, shape of ``heading_rad``
        ``wrap_pi(psi + settle_error + noise)`` [rad].

    Examples
    --------
    >>> float(np.degrees(gyrocompass_heading(np.radians(-179.5), settle_error_rad=np.radians(-1.0))).round(9))
    179.5
    """
    psi = finite_array("heading_rad", heading_rad)
    settle = per_trial(finite_array("settle_error_rad", settle_error_rad), psi.ndim)
    return _sum_wrapped(psi, ("settle_error_rad", settle), ("noise_rad", finite_array("noise_rad", noise_rad)))
