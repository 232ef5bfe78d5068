"""GNSS receiver: antenna geometry, geodetic output and an error budget.

The receiver reports the position and velocity of its **antenna**, not of
the craft's reference point. The antenna sits at a lever arm ``r = [x, y, z]``
in the body frame (x forward, y starboard, z down: an antenna on a mast has
``z < 0``). With the 3-DOF slow motion ``eta = [north, east, yaw]`` and an
optional wave-frequency displacement of the antenna ``xi`` (body axes of the
slow motion, see :func:`wavebench.sea.wave_motion.motion_at_point`):

.. math::

    p_{ant} = [n, e, d_{ref}] + R_z(\\psi)\\,(r + \\xi),

    v_{ant} = [v_n, v_e, 0] + R_z(\\psi)\\,(\\omega \\times r + \\dot\\xi),
    \\qquad \\omega = [0, 0, r_{yaw}].

The geodetic output goes through :mod:`wavebench.core.geodesy` (pymap3d,
WGS-84): the NED frame is the tangent plane at the scenario's origin.

Error budget
------------
The defaults are the GPS Standard Positioning Service figures: the GPS SPS
Performance Standard, 5th ed. (US DoD, April 2020), states a global-average
position accuracy of <= 8 m 95 % horizontal error and <= 13 m 95 % vertical
error (values from memory, not re-checked). They are converted to a 1-sigma
error per axis assuming zero-mean Gaussian errors, equal and independent in
north and east:

* horizontal: the radial error of a circular bivariate normal is Rayleigh
  distributed, ``P(r <= R) = 1 - exp(-R**2 / (2 sigma**2))``, so
  ``R95 = sigma sqrt(-2 ln 0.05) = 2.4477 sigma`` and
  ``sigma = 8 m / 2.4477 = 3.268 m`` per axis;
* vertical: a normal error, ``V95 = 1.95996 sigma``, so
  ``sigma = 13 m / 1.95996 = 6.633 m``.

Real SPS errors are correlated over minutes (satellite geometry, ionosphere,
multipath): feed this module a first-order Gauss–Markov sequence with these
standard deviations rather than white noise when the correlation matters.
The velocity error default (0.05 m/s per axis) is common practice, no source:
the SPS Performance Standard gives no user velocity accuracy.

Errors enter as arrays (``position_error_m``, ``velocity_error_mps``) so the
noise machinery of the sensor layer (white, Gauss–Markov, dropouts, latency)
can be composed with the geometry here; :attr:`GnssParams.position_sd_m`
gives the standard deviations to scale unit-variance sequences with.

References
----------
US Department of Defense, *Global Positioning System Standard Positioning
Service Performance Standard*, 5th ed., April 2020 (position accuracy
standards, 95 % horizontal and vertical error, global average).
P. D. Groves, *Principles of GNSS, Inertial, and Multisensor Integrated
Navigation Systems*, 2nd ed., Artech House, 2013 (lever arms; accuracy
measures for 2-D and 1-D Gaussian errors).
T. I. Fossen, *Handbook of Marine Craft Hydrodynamics and Motion Control*,
2nd ed., Wiley, 2021 (3-DOF kinematics, course over ground).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ..core.errors import ParameterError
from ..core.frames import wrap_pi
from ..core.geodesy import GeodeticOrigin, ned_to_geodetic
from ..core.params import Params, bounded
from ..sea.wave_motion import motion_at_point

__all__ = [
    "HORIZONTAL_95_PER_SIGMA",
    "SPS_HORIZONTAL_95_M",
    "SPS_VERTICAL_95_M",
    "VERTICAL_95_PER_SIGMA",
    "GnssFix",
    "GnssParams",
    "antenna_velocity_ned",
    "course_speed_over_ground",
    "gnss_fix",
    "gnss_geodetic",
    "gnss_position_ned",
    "sigma_from_horizontal_95",
    "sigma_from_vertical_95",
]

#: GPS SPS Performance Standard, 5th ed. (2020): global-average 95 % horizontal
#: position error [m] (value from memory, not re-checked).
SPS_HORIZONTAL_95_M = 8.0
#: GPS SPS Performance Standard, 5th ed. (2020): global-average 95 % vertical
#: position error [m] (value from memory, not re-checked).
SPS_VERTICAL_95_M = 13.0
#: Ratio of the 95 % radial error to the per-axis sigma of a circular
#: bivariate normal error (Rayleigh): sqrt(-2 ln 0.05) = 2.4477.
HORIZONTAL_95_PER_SIGMA = math.sqrt(-2.0 * math.log(0.05))
#: Ratio of the 95 % two-sided error to sigma of a normal error: 1.95996.
VERTICAL_95_PER_SIGMA = 1.959963984540054


def sigma_from_horizontal_95(r95_m: ArrayLike) -> NDArray[np.float64] | float:
    """Per-axis 1-sigma of a circular Gaussian error with a given 95 % radius.

    Parameters
    ----------
    r95_m : float or array_like
        Radius containing 95 % of horizontal fixes [m], >= 0.

    Returns
    -------
    float or ndarray
        ``r95 / sqrt(-2 ln 0.05)`` [m].

    Examples
    --------
    >>> round(sigma_from_horizontal_95(8.0), 3)
    3.268
    """
    r = _finite("r95_m", r95_m, ge=0.0)
    out = r / HORIZONTAL_95_PER_SIGMA
    return float(out) if out.ndim == 0 else out


def sigma_from_vertical_95(v95_m: ArrayLike) -> NDArray[np.float64] | float:
    """1-sigma of a Gaussian error whose two-sided 95 % bound is ``v95_m``.

    Parameters
    ----------
    v95_m : float or array_like
        Bound containing 95 % of vertical errors [m], >= 0.

    Returns
    -------
    float or ndarray
        ``v95 / 1.95996`` [m].

    Examples
    --------
    >>> round(sigma_from_vertical_95(13.0), 3)
    6.633
    """
    v = _finite("v95_m", v95_m, ge=0.0)
    out = v / VERTICAL_95_PER_SIGMA
    return float(out) if out.ndim == 0 else out


@dataclass(frozen=True, kw_only=True)
class GnssParams(Params):
    """Error budget and antenna placement of a GNSS receiver.

    Parameters
    ----------
    horizontal_sd_m : float
        1-sigma position error per horizontal axis (north, east) [m], >= 0.
        Default 3.268 m: the GPS SPS Performance Standard (2020) 8 m 95 %
        horizontal figure, converted as in the module docstring.
    vertical_sd_m : float
        1-sigma position error, down axis [m], >= 0. Default 6.633 m: the
        SPS 13 m 95 % vertical figure.
    velocity_sd_mps : float
        1-sigma velocity error per axis [m/s], >= 0. Default 0.05 m/s,
        common practice, no source.
    lever_x_m, lever_y_m, lever_z_m : float
        Antenna position relative to the craft's reference point in the body
        frame (x forward, y starboard, z down) [m]. Default 0 (antenna at
        the reference point).

    Notes
    -----
    Every field may hold a scalar or a per-trial array of shape (n_trials,).

    Examples
    --------
    >>> p = GnssParams(lever_x_m=2.0, lever_z_m=-3.0)
    >>> p.lever_arm_m.tolist()
    [2.0, 0.0, -3.0]
    >>> GnssParams(horizontal_sd_m=-1.0)  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    wavebench.core.errors.ParameterError: horizontal_sd_m = -1.0 is not allowed: ...
    """

    horizontal_sd_m: float = bounded(
        SPS_HORIZONTAL_95_M / HORIZONTAL_95_PER_SIGMA,
        ge=0.0,
        unit="m",
        doc="1-sigma position error per horizontal axis",
    )
    vertical_sd_m: float = bounded(
        SPS_VERTICAL_95_M / VERTICAL_95_PER_SIGMA, ge=0.0, unit="m", doc="1-sigma vertical position error"
    )
    velocity_sd_mps: float = bounded(0.05, ge=0.0, unit="m/s", doc="1-sigma velocity error per axis")
    lever_x_m: float = bounded(0.0, unit="m", doc="antenna lever arm, forward")
    lever_y_m: float = bounded(0.0, unit="m", doc="antenna lever arm, starboard")
    lever_z_m: float = bounded(0.0, unit="m", doc="antenna lever arm, down")

    @property
    def lever_arm_m(self) -> NDArray[np.float64]:
        """Antenna lever arm ``[x, y, z]`` [m], shape (3,) or (n_trials, 3)."""
        return _stack3(self.lever_x_m, self.lever_y_m, self.lever_z_m)

    @property
    def position_sd_m(self) -> NDArray[np.float64]:
        """Position 1-sigma per NED axis ``[h, h, v]`` [m], shape (3,) or (n_trials, 3)."""
        return _stack3(self.horizontal_sd_m, self.horizontal_sd_m, self.vertical_sd_m)


@dataclass(frozen=True)
class GnssFix:
    """One batch of GNSS outputs.

    Attributes
    ----------
    position_ned_m : ndarray of shape (n_trials, 3) or (n_trials, n_samples, 3)
        Measured antenna position [north, east, down] [m].
    velocity_ned_mps : ndarray, same shape
        Measured antenna velocity [m/s].
    course_rad : ndarray of shape (n_trials,) or (n_trials, n_samples)
        Course over ground from the measured velocity [rad] in [-pi, pi),
        clockwise from north; NaN where the measured speed is zero.
    speed_mps : ndarray, same shape as ``course_rad``
        Horizontal speed over ground [m/s].
    """

    position_ned_m: NDArray[np.float64]
    velocity_ned_mps: NDArray[np.float64]
    course_rad: NDArray[np.float64]
    speed_mps: NDArray[np.float64]


def _finite(name: str, value: ArrayLike, *, ge: float | None = None) -> NDArray[np.float64]:
    """Float array of ``value``; ParameterError naming ``name`` if not finite (or below ``ge``)."""
    if value is None or isinstance(value, (bool, str, bytes)):
        raise ParameterError(name, value, "must be a finite number or array")
    try:
        arr = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise ParameterError(name, value, "must be a finite number or array") from None
    if not np.all(np.isfinite(arr)):
        raise ParameterError(name, arr if arr.ndim else float(arr), "must be finite")
    if ge is not None and np.any(arr < ge):
        raise ParameterError(name, arr if arr.ndim else float(arr), f"must be finite and >= {ge}")
    return arr


def _stack3(x: ArrayLike, y: ArrayLike, z: ArrayLike) -> NDArray[np.float64]:
    a, b, c = np.broadcast_arrays(np.asarray(x, float), np.asarray(y, float), np.asarray(z, float))
    return np.stack([a, b, c], axis=-1)


def _vector(name: str, value: ArrayLike, ndim: int, n_trials: int | None) -> NDArray[np.float64]:
    """A body vector of shape (3,) or (n_trials, 3), shaped to broadcast against (..., 3) of rank ndim + 1."""
    v = _finite(name, value)
    if v.shape == (3,):
        return v
    if v.ndim == 2 and v.shape[1] == 3 and (n_trials is None or v.shape[0] == n_trials):
        return v.reshape((v.shape[0],) + (1,) * (ndim - 1) + (3,)) if ndim >= 1 else v
    raise ParameterError(name, v, f"must have shape (3,) or (n_trials, 3) with n_trials = {n_trials}")


def _trial_shape(*named: tuple[str, NDArray[np.float64]]) -> tuple[int, ...]:
    try:
        shape = np.broadcast_shapes(*(a.shape for _, a in named))
    except ValueError:
        shapes = {name: a.shape for name, a in named}
        raise ParameterError(named[-1][0], shapes, "inputs must broadcast to one shape") from None
    if len(shape) > 2:
        raise ParameterError(named[0][0], shape, "must be of shape (n_trials,) or (n_trials, n_samples)")
    return shape


def _rotate_yaw(v: NDArray[np.float64], psi: NDArray[np.float64]) -> NDArray[np.float64]:
    """Rotate body vectors (..., 3) to NED by yaw ``psi`` (...,); the third component is kept."""
    c, s = np.cos(psi), np.sin(psi)
    shape = np.broadcast_shapes(v.shape, (*psi.shape, 3))
    out = np.empty(shape)
    out[..., 0] = c * v[..., 0] - s * v[..., 1]
    out[..., 1] = s * v[..., 0] + c * v[..., 1]
    out[..., 2] = v[..., 2]
    return out


def _wave_term(
    name: str, value: ArrayLike | None, lever: NDArray[np.float64], shape: tuple[int, ...]
) -> NDArray[np.float64] | float:
    """Translation of the antenna from a (..., 6) motion or a (..., 3) translation."""
    if value is None:
        return 0.0
    w = _finite(name, value)
    if w.shape[-1:] == (6,):
        w = motion_at_point(w, lever)
    elif w.shape[-1:] != (3,):
        raise ParameterError(name, w, "must have a last axis of 6 (six-DOF motion) or 3 (translation)")
    try:
        np.broadcast_shapes(w.shape, (*shape, 3))
    except ValueError:
        raise ParameterError(name, w, f"must broadcast against {(*shape, 3)}") from None
    return w


def gnss_position_ned(
    north_m: ArrayLike,
    east_m: ArrayLike,
    heading_rad: ArrayLike,
    lever_arm_m: ArrayLike,
    wave_displacement: ArrayLike | None = None,
    *,
    down_m: ArrayLike = 0.0,
) -> NDArray[np.float64]:
    """True antenna position in NED from the craft's position, heading and lever arm.

    Parameters
    ----------
    north_m, east_m : float or ndarray of shape (n_trials,) or (n_trials, n_samples)
        Position of the craft's reference point [m].
    heading_rad : float or ndarray, same shapes
        Yaw of the slow motion [rad], clockwise from north.
    lever_arm_m : array_like of shape (3,) or (n_trials, 3)
        Antenna position in the body frame [x fwd, y stbd, z down] [m]
        (e.g. :attr:`GnssParams.lever_arm_m`).
    wave_displacement : ndarray of shape (..., 6) or (..., 3), optional
        Wave-frequency motion, in the body axes of the slow motion, with the
        leading shape of the positions: either the six-DOF displacement of
        the reference point ``[surge, sway, heave, roll, pitch, yaw]``
        (m, rad; from :func:`~wavebench.sea.wave_motion.wave_frequency_motion`),
        converted to the antenna with
        :func:`~wavebench.sea.wave_motion.motion_at_point`, or the antenna's
        translation ``[x, y, z]`` [m] directly.
    down_m : float or ndarray, same shapes as ``north_m``
        Down coordinate of the reference point [m] (0 for a surface craft's
        still-water reference; the depth for an underwater vehicle).

    Returns
    -------
    ndarray of shape (n_trials, 3) or (n_trials, n_samples, 3)
        Antenna ``[north, east, down]`` [m] (a scalar input gives shape (3,)).

    Raises
    ------
    ParameterError
        For non-finite input or shapes that do not fit.

    Examples
    --------
    >>> gnss_position_ned([0.0], [0.0], [np.pi / 2], [1.0, 0.0, -2.0]).round(12)
    array([[ 0.,  1., -2.]])
    """
    n = _finite("north_m", north_m)
    e = _finite("east_m", east_m)
    psi = _finite("heading_rad", heading_rad)
    d = _finite("down_m", down_m)
    shape = _trial_shape(("north_m", n), ("east_m", e), ("heading_rad", psi), ("down_m", d))
    n_trials = shape[0] if shape else None
    lever = _vector("lever_arm_m", lever_arm_m, len(shape), n_trials)
    wave = _wave_term("wave_displacement", wave_displacement, lever, shape)
    body = lever + wave
    body = np.broadcast_to(body, np.broadcast_shapes(np.shape(body), (*shape, 3)))
    out = _rotate_yaw(body, np.broadcast_to(psi, shape))
    out[..., 0] += n
    out[..., 1] += e
    out[..., 2] += d
    return out


def antenna_velocity_ned(
    velocity_north_mps: ArrayLike,
    velocity_east_mps: ArrayLike,
    heading_rad: ArrayLike,
    lever_arm_m: ArrayLike,
    *,
    yaw_rate_radps: ArrayLike = 0.0,
    wave_velocity: ArrayLike | None = None,
) -> NDArray[np.float64]:
    """True antenna velocity over ground in NED (rigid-body transport of the lever arm).

    Parameters
    ----------
    velocity_north_mps, velocity_east_mps : float or ndarray of shape (n_trials,) or (n_trials, n_samples)
        Velocity over ground of the reference point [m/s] (``R(psi) [u, v]``
        plus current drift, as the craft model gives it).
    heading_rad : float or ndarray, same shapes
        Yaw [rad].
    lever_arm_m : array_like of shape (3,) or (n_trials, 3)
        Antenna lever arm in the body frame [m].
    yaw_rate_radps : float or ndarray, same shapes
        Yaw rate r [rad/s].
    wave_velocity : ndarray of shape (..., 6) or (..., 3), optional
        Wave-frequency six-DOF velocity of the reference point (m/s, rad/s;
        from :func:`~wavebench.sea.wave_motion.wave_frequency_kinematics`)
        or the antenna's wave-frequency velocity [m/s], body axes.

    Returns
    -------
    ndarray of shape (..., 3)
        ``[v_n, v_e, v_d]`` of the antenna [m/s]:
        ``[v_n, v_e, 0] + R_z(psi) ([0, 0, r] x lever + wave)``.

    Examples
    --------
    >>> antenna_velocity_ned([0.0], [0.0], [0.0], [2.0, 0.0, 0.0], yaw_rate_radps=[0.1]).round(12)
    array([[0. , 0.2, 0. ]])
    """
    vn = _finite("velocity_north_mps", velocity_north_mps)
    ve = _finite("velocity_east_mps", velocity_east_mps)
    psi = _finite("heading_rad", heading_rad)
    r = _finite("yaw_rate_radps", yaw_rate_radps)
    shape = _trial_shape(
        ("velocity_north_mps", vn), ("velocity_east_mps", ve), ("heading_rad", psi), ("yaw_rate_radps", r)
    )
    n_trials = shape[0] if shape else None
    lever = _vector("lever_arm_m", lever_arm_m, len(shape), n_trials)
    wave = _wave_term("wave_velocity", wave_velocity, lever, shape)
    rb = np.broadcast_to(r, shape)[..., None]
    # [0, 0, r] x [x, y, z] = [-r y, r x, 0]
    transport = np.concatenate(
        [-rb * lever[..., 1:2], rb * lever[..., 0:1], np.zeros_like(rb * lever[..., 2:3])], axis=-1
    )
    body = transport + wave
    out = _rotate_yaw(np.broadcast_to(body, (*shape, 3)), np.broadcast_to(psi, shape))
    out[..., 0] += vn
    out[..., 1] += ve
    return out


def course_speed_over_ground(
    velocity_north_mps: ArrayLike, velocity_east_mps: ArrayLike
) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Course and speed over ground from a horizontal velocity.

    Parameters
    ----------
    velocity_north_mps, velocity_east_mps : float or ndarray, any broadcastable shapes
        Velocity over ground [m/s].

    Returns
    -------
    course_rad : ndarray
        ``atan2(v_e, v_n)`` wrapped to [-pi, pi) [rad], clockwise from north;
        NaN where the speed is exactly zero (the course is undefined).
    speed_mps : ndarray
        ``hypot(v_n, v_e)`` [m/s].

    Examples
    --------
    >>> c, s = course_speed_over_ground([1.0, 0.0], [1.0, -2.0])
    >>> np.degrees(c).round(9).tolist(), s.round(9).tolist()
    ([45.0, -90.0], [1.414213562, 2.0])
    """
    vn = _finite("velocity_north_mps", velocity_north_mps)
    ve = _finite("velocity_east_mps", velocity_east_mps)
    speed = np.hypot(vn, ve)
    course = np.asarray(wrap_pi(np.arctan2(ve, vn)), dtype=float)
    course = np.where(speed > 0.0, course, np.nan)
    return course, speed


def gnss_fix(
    antenna_position_ned_m: ArrayLike,
    antenna_velocity_ned_mps: ArrayLike,
    *,
    position_error_m: ArrayLike = 0.0,
    velocity_error_mps: ArrayLike = 0.0,
) -> GnssFix:
    """GNSS output: true antenna state plus the given errors.

    Parameters
    ----------
    antenna_position_ned_m : ndarray of shape (n_trials, 3) or (n_trials, n_samples, 3)
        True antenna position (:func:`gnss_position_ned`) [m].
    antenna_velocity_ned_mps : ndarray, same shape
        True antenna velocity (:func:`antenna_velocity_ned`) [m/s].
    position_error_m : float or ndarray broadcastable to the same shape
        Position error per NED axis [m], e.g. ``params.position_sd_m`` times
        a unit-variance Gauss–Markov sequence.
    velocity_error_mps : float or ndarray broadcastable to the same shape
        Velocity error per axis [m/s].

    Returns
    -------
    GnssFix
        Measured position and velocity; course and speed over ground from
        the measured velocity (so velocity noise makes the course noisy at
        low speed, as in a receiver).
    """
    p = _finite("antenna_position_ned_m", antenna_position_ned_m)
    v = _finite("antenna_velocity_ned_mps", antenna_velocity_ned_mps)
    if p.shape[-1:] != (3,):
        raise ParameterError("antenna_position_ned_m", p, "must have shape (..., 3)")
    if v.shape != p.shape:
        raise ParameterError("antenna_velocity_ned_mps", v, f"must have the shape of the position {p.shape}")
    ep = _finite("position_error_m", position_error_m)
    ev = _finite("velocity_error_mps", velocity_error_mps)
    try:
        pos = p + np.broadcast_to(ep, p.shape)
    except ValueError:
        raise ParameterError("position_error_m", ep, f"must broadcast to {p.shape}") from None
    try:
        vel = v + np.broadcast_to(ev, v.shape)
    except ValueError:
        raise ParameterError("velocity_error_mps", ev, f"must broadcast to {v.shape}") from None
    course, speed = course_speed_over_ground(vel[..., 0], vel[..., 1])
    return GnssFix(position_ned_m=pos, velocity_ned_mps=vel, course_rad=course, speed_mps=speed)


def gnss_geodetic(
    origin: GeodeticOrigin, north_m: ArrayLike, east_m: ArrayLike, down_m: ArrayLike
) -> tuple[NDArray[np.float64], NDArray[np.float64], NDArray[np.float64]]:
    """Geodetic (WGS-84) coordinates of NED positions, as a receiver reports them.

    Parameters
    ----------
    origin : GeodeticOrigin
        Origin of the scenario's NED frame.
    north_m, east_m, down_m : float or ndarray, broadcastable shapes
        NED positions [m], e.g. the columns of :attr:`GnssFix.position_ned_m`.

    Returns
    -------
    lat_deg, lon_deg, h_m : ndarray of the broadcast shape
        Geodetic latitude, longitude [deg] and height above the ellipsoid [m]
        (through pymap3d, see :func:`wavebench.core.geodesy.ned_to_geodetic`).

    Examples
    --------
    >>> o = GeodeticOrigin(lat_deg=0.0, lon_deg=0.0)
    >>> lat, lon, h = gnss_geodetic(o, 0.0, 0.0, -10.0)
    >>> float(lat), float(lon), round(float(h), 9)
    (0.0, 0.0, 10.0)
    """
    if not isinstance(origin, GeodeticOrigin):
        raise ParameterError("origin", type(origin).__name__, "must be a GeodeticOrigin")
    return ned_to_geodetic(north_m, east_m, down_m, origin)
