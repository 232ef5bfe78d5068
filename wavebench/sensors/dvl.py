"""Doppler velocity log (DVL) in bottom-track mode.

A bottom-tracking DVL measures the velocity of its transducer over the
seabed, in the body (instrument) frame, while the seabed is within its
bottom-lock range. With the craft's velocity over ground ``v_ned`` at the
reference point, attitude ``R = R_zyx(phi, theta, psi)`` (body to NED) and
the transducer at lever arm ``l`` (body frame, x forward, y starboard,
z down):

.. math::

    v_{dvl} = R^T v_{ned} + \\omega \\times l, \\qquad \\omega = [0, 0, r],

with ``r`` the yaw rate of the slow 3-DOF motion (roll and pitch rates of
the wave-frequency motion can be added through the ``wave_velocity_body``
input). The altitude is the water between the transducer and the seabed
grid straight below it, ``depth(n, e) + water_level - transducer_depth``.

Error budget
------------
White noise with a standard deviation that grows with speed,
``sd = a + b |v|`` per axis, the form in which DVL accuracy is commonly
specified ("+-x % of speed +-y mm/s"). Defaults ``a = 0.002 m/s`` and
``b = 0.002`` (0.2 % of speed) are common practice, no source; so are the
bottom-lock limits 0.5 m .. 80 m (a few-hundred-kHz instrument). A scale
factor error (e.g. from the sound speed at the transducer) may be given as
an input. Outside bottom lock, off the seabed grid or with the transducer
below the bed, the reading is invalid (NaN, ``valid = False``).

References
----------
T. I. Fossen, *Handbook of Marine Craft Hydrodynamics and Motion Control*,
2nd ed., Wiley, 2021 (Euler-angle rotation matrix, body-frame velocity).
P. D. Groves, *Principles of GNSS, Inertial, and Multisensor Integrated
Navigation Systems*, 2nd ed., Artech House, 2013 (Doppler velocity log,
lever-arm transport of velocity).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ..core.errors import ParameterError
from ..core.frames import rot_zyx
from ..core.params import Params, bounded
from ..sea.seabed import SeabedGrid
from .arrays import finite_array, per_trial
from .ranging import seabed_depth_below

__all__ = [
    "DvlParams",
    "DvlReading",
    "dvl_altitude_m",
    "dvl_measurement",
    "dvl_noise_sd_mps",
    "dvl_velocity_body",
]


@dataclass(frozen=True, kw_only=True)
class DvlParams(Params):
    """Bottom-track DVL: bottom-lock range, noise budget and mounting.

    Parameters
    ----------
    noise_floor_mps : float
        Speed-independent part ``a`` of the 1-sigma noise per axis [m/s],
        >= 0. Default 0.002 m/s, common practice, no source.
    noise_speed_fraction : float
        Speed-proportional part ``b`` of the 1-sigma noise (fraction of
        speed), >= 0. Default 0.002 (0.2 %), common practice, no source.
    min_altitude_m : float
        Lowest altitude with bottom lock [m], >= 0. Default 0.5 m, common
        practice, no source.
    max_altitude_m : float
        Highest altitude with bottom lock [m], > ``min_altitude_m``.
        Default 80 m, common practice, no source.
    lever_x_m, lever_y_m, lever_z_m : float
        Transducer position in the body frame [m] (x forward, y starboard,
        z down). Default 0.

    Examples
    --------
    >>> DvlParams(min_altitude_m=10.0, max_altitude_m=5.0)  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    wavebench.core.errors.ParameterError: min_altitude_m = 10.0 is not allowed: must be < max_altitude_m ...
    """

    noise_floor_mps: float = bounded(0.002, ge=0.0, unit="m/s", doc="1-sigma noise floor per axis")
    noise_speed_fraction: float = bounded(0.002, ge=0.0, unit="1", doc="1-sigma noise per unit speed")
    min_altitude_m: float = bounded(0.5, ge=0.0, unit="m", doc="lowest bottom-lock altitude")
    max_altitude_m: float = bounded(80.0, gt=0.0, unit="m", doc="highest bottom-lock altitude")
    lever_x_m: float = bounded(0.0, unit="m", doc="transducer lever arm, forward")
    lever_y_m: float = bounded(0.0, unit="m", doc="transducer lever arm, starboard")
    lever_z_m: float = bounded(0.0, unit="m", doc="transducer lever arm, down")

    def _check(self) -> None:
        if np.any(np.asarray(self.min_altitude_m) >= np.asarray(self.max_altitude_m)):
            raise ParameterError(
                "min_altitude_m", self.min_altitude_m, f"must be < max_altitude_m ({self.max_altitude_m})"
            )

    @property
    def lever_arm_m(self) -> NDArray[np.float64]:
        """Transducer lever arm ``[x, y, z]`` [m], shape (3,) or (n_trials, 3)."""
        a, b, c = np.broadcast_arrays(
            np.asarray(self.lever_x_m, float), np.asarray(self.lever_y_m, float), np.asarray(self.lever_z_m, float)
        )
        return np.stack([a, b, c], axis=-1)


@dataclass(frozen=True)
class DvlReading:
    """A batch of DVL bottom-track readings.

    Attributes
    ----------
    velocity_body_mps : ndarray of shape (n_trials, 3) or (n_trials, n_samples, 3)
        Measured velocity over ground of the transducer, body frame [m/s];
        NaN where not valid.
    valid : ndarray of bool, shape (n_trials,) or (n_trials, n_samples)
        Bottom lock.
    """

    velocity_body_mps: NDArray[np.float64]
    valid: NDArray[np.bool_]


def dvl_altitude_m(
    seabed: SeabedGrid,
    north_m: ArrayLike,
    east_m: ArrayLike,
    transducer_depth_m: ArrayLike,
    *,
    water_level_m: ArrayLike = 0.0,
) -> NDArray[np.float64]:
    """Altitude of the transducer above the seabed grid straight below it.

    Parameters
    ----------
    seabed : SeabedGrid
    north_m, east_m : ndarray of shape (n_trials,) or (n_trials, n_samples)
        Horizontal position of the transducer [m].
    transducer_depth_m : float or ndarray, same shapes
        Depth of the transducer below the grid's datum [m].
    water_level_m : float or ndarray, same shapes
        Water level above the datum [m].

    Returns
    -------
    ndarray of the broadcast shape
        ``depth(n, e) + water_level - transducer_depth`` [m]; NaN off a grid
        without fill depth.
    """
    n = finite_array("north_m", north_m)
    e = finite_array("east_m", east_m)
    z = finite_array("transducer_depth_m", transducer_depth_m)
    wl = finite_array("water_level_m", water_level_m)
    try:
        shape = np.broadcast_shapes(n.shape, e.shape, z.shape, wl.shape)
    except ValueError:
        raise ParameterError("transducer_depth_m", z, f"must broadcast against north_m of shape {n.shape}") from None
    return np.broadcast_to(seabed_depth_below(seabed, n, e) + wl - z, shape).copy()


def dvl_velocity_body(
    velocity_north_mps: ArrayLike,
    velocity_east_mps: ArrayLike,
    heading_rad: ArrayLike,
    *,
    velocity_down_mps: ArrayLike = 0.0,
    roll_rad: ArrayLike = 0.0,
    pitch_rad: ArrayLike = 0.0,
    yaw_rate_radps: ArrayLike = 0.0,
    lever_arm_m: ArrayLike = (0.0, 0.0, 0.0),
    wave_velocity_body_mps: ArrayLike = 0.0,
) -> NDArray[np.float64]:
    """True velocity over ground of the DVL transducer in the body frame.

    Parameters
    ----------
    velocity_north_mps, velocity_east_mps : float or ndarray of shape (n_trials,) or (n_trials, n_samples)
        Velocity over ground of the reference point, NED [m/s].
    heading_rad : float or ndarray, same shapes
        Yaw [rad].
    velocity_down_mps : float or ndarray, same shapes
        Vertical velocity, positive down [m/s].
    roll_rad, pitch_rad : float or ndarray, same shapes
        Roll and pitch [rad] (zyx Euler angles; 0 for the 3-DOF model).
    yaw_rate_radps : float or ndarray, same shapes
        Yaw rate [rad/s], for the lever-arm transport ``[0, 0, r] x l``.
    lever_arm_m : array_like of shape (3,) or (n_trials, 3)
        Transducer lever arm in the body frame [m].
    wave_velocity_body_mps : float or ndarray of shape (..., 3)
        Extra body-frame velocity of the transducer [m/s], e.g. the
        wave-frequency velocity from
        :func:`~wavebench.sea.wave_motion.motion_at_point`.

    Returns
    -------
    ndarray of shape (..., 3)
        ``R_zyx(phi, theta, psi)^T [v_n, v_e, v_d] + [0, 0, r] x l + wave`` [m/s].

    Examples
    --------
    >>> dvl_velocity_body([0.0], [2.0], [np.pi / 2]).round(12)  # heading east, moving east
    array([[2., 0., 0.]])
    """
    vn = finite_array("velocity_north_mps", velocity_north_mps)
    ve = finite_array("velocity_east_mps", velocity_east_mps)
    vd = finite_array("velocity_down_mps", velocity_down_mps)
    psi = finite_array("heading_rad", heading_rad)
    phi = finite_array("roll_rad", roll_rad)
    theta = finite_array("pitch_rad", pitch_rad)
    r = finite_array("yaw_rate_radps", yaw_rate_radps)
    arrays = {
        "velocity_north_mps": vn,
        "velocity_east_mps": ve,
        "velocity_down_mps": vd,
        "heading_rad": psi,
        "roll_rad": phi,
        "pitch_rad": theta,
        "yaw_rate_radps": r,
    }
    try:
        shape = np.broadcast_shapes(*(a.shape for a in arrays.values()))
    except ValueError:
        shapes = {k: a.shape for k, a in arrays.items()}
        raise ParameterError("velocity_east_mps", shapes, "inputs must broadcast to one shape") from None
    if len(shape) > 2:
        raise ParameterError("velocity_north_mps", shape, "must be of shape (n_trials,) or (n_trials, n_samples)")
    lever = finite_array("lever_arm_m", lever_arm_m)
    if lever.shape == (3,):
        pass
    elif lever.ndim == 2 and lever.shape[1] == 3 and len(shape) >= 1 and lever.shape[0] == shape[0]:
        lever = lever.reshape((lever.shape[0],) + (1,) * (len(shape) - 1) + (3,))
    else:
        raise ParameterError("lever_arm_m", lever, "must have shape (3,) or (n_trials, 3)")
    rot = rot_zyx(np.broadcast_to(phi, shape), np.broadcast_to(theta, shape), np.broadcast_to(psi, shape))
    v_ned = np.stack([np.broadcast_to(vn, shape), np.broadcast_to(ve, shape), np.broadcast_to(vd, shape)], axis=-1)
    v_body = np.einsum("...ji,...j->...i", rot, v_ned)
    rb = np.broadcast_to(r, shape)
    v_body[..., 0] -= rb * lever[..., 1]
    v_body[..., 1] += rb * lever[..., 0]
    wave = finite_array("wave_velocity_body_mps", wave_velocity_body_mps)
    try:
        out = v_body + wave
    except ValueError:
        raise ParameterError("wave_velocity_body_mps", wave, f"must broadcast to {v_body.shape}") from None
    if out.shape != v_body.shape:
        raise ParameterError("wave_velocity_body_mps", wave, f"must broadcast to {v_body.shape}")
    return out


def dvl_noise_sd_mps(speed_mps: ArrayLike, params: DvlParams) -> NDArray[np.float64]:
    """1-sigma DVL noise per axis ``a + b |v|``.

    Parameters
    ----------
    speed_mps : float or ndarray of shape (n_trials,) or (n_trials, n_samples)
        Speed over ground of the transducer [m/s].
    params : DvlParams

    Returns
    -------
    ndarray, shape of ``speed_mps``
        Standard deviation [m/s].

    Examples
    --------
    >>> float(dvl_noise_sd_mps(2.0, DvlParams(noise_floor_mps=0.001, noise_speed_fraction=0.01)))
    0.021
    """
    v = finite_array("speed_mps", speed_mps)
    nd = v.ndim
    return per_trial(params.noise_floor_mps, nd) + per_trial(params.noise_speed_fraction, nd) * np.abs(v)


def dvl_measurement(
    velocity_body_mps: ArrayLike,
    altitude_m: ArrayLike,
    params: DvlParams,
    *,
    unit_noise: ArrayLike = 0.0,
    scale_factor_error: ArrayLike = 0.0,
) -> DvlReading:
    """DVL bottom-track reading with speed-scaled noise and bottom-lock validity.

    Parameters
    ----------
    velocity_body_mps : ndarray of shape (n_trials, 3) or (n_trials, n_samples, 3)
        True transducer velocity over ground, body frame
        (:func:`dvl_velocity_body`) [m/s].
    altitude_m : ndarray of shape (n_trials,) or (n_trials, n_samples)
        Altitude above the seabed (:func:`dvl_altitude_m`) [m]; NaN counts
        as no bottom lock.
    params : DvlParams
    unit_noise : float or ndarray broadcastable to the velocity shape
        Unit-variance noise (e.g. standard normal draws), scaled here by
        ``a + b |v|`` with ``|v|`` the true speed of the transducer.
    scale_factor_error : float or ndarray of shape (n_trials,)
        Relative scale-factor error (e.g. 0.001 for +0.1 %), per trial.

    Returns
    -------
    DvlReading
        ``(1 + k) v + (a + b |v|) n``; NaN and not valid where the altitude
        is outside ``[min_altitude_m, max_altitude_m]`` or not finite.
    """
    if not isinstance(params, DvlParams):
        raise ParameterError("params", type(params).__name__, "must be DvlParams")
    v = finite_array("velocity_body_mps", velocity_body_mps)
    if v.ndim not in (2, 3) or v.shape[-1] != 3:
        raise ParameterError("velocity_body_mps", v, "must have shape (n_trials, 3) or (n_trials, n_samples, 3)")
    h = np.asarray(altitude_m, dtype=float)
    if h.shape != v.shape[:-1]:
        raise ParameterError("altitude_m", h, f"must have shape {v.shape[:-1]}")
    nd = h.ndim
    with np.errstate(invalid="ignore"):
        valid = (
            np.isfinite(h) & (h >= per_trial(params.min_altitude_m, nd)) & (h <= per_trial(params.max_altitude_m, nd))
        )
    sd = dvl_noise_sd_mps(np.linalg.norm(v, axis=-1), params)[..., None]
    k = per_trial(finite_array("scale_factor_error", scale_factor_error), nd + 1)
    z = finite_array("unit_noise", unit_noise)
    try:
        out = (1.0 + k) * v + sd * z
    except ValueError:
        raise ParameterError("unit_noise", z, f"must broadcast to {v.shape}") from None
    if out.shape != v.shape:
        raise ParameterError("unit_noise", z, f"must broadcast to {v.shape}")
    return DvlReading(velocity_body_mps=np.where(valid[..., None], out, np.nan), valid=valid)
