"""Reference frames, rotations and angle wrapping (batched, radians inside).

Conventions
-----------
* World frame: NED (x north, y east, z down) about a geodetic origin
  (see :mod:`wavebench.core.geodesy`).
* Body frame: x forward (surge), y starboard (sway), z down (heave).
* 3-DOF planar model: ``eta = [north, east, yaw]`` and
  ``nu = [surge, sway, yaw rate]``; ``eta_dot = R(psi) nu`` with
  ``R = rot_z(psi)``.
* Yaw ``psi`` is measured clockwise from north seen from above (positive
  about the down axis), so ``psi = pi/2`` points east. Inside wavebench yaw
  is in radians in ``[-pi, pi)``; at the spec boundary a compass heading in
  degrees in ``[0, 360)`` is used (:func:`heading_to_yaw`,
  :func:`yaw_to_heading`).
* Euler angles (roll ``phi``, pitch ``theta``, yaw ``psi``) follow the
  zyx convention: ``R = Rz(psi) Ry(theta) Rx(phi)`` maps body to NED.

All functions accept scalars or arrays; a leading trial axis (or any leading
axes) broadcasts. Rotation matrices are returned with shape ``(..., 3, 3)``
or ``(..., 2, 2)``. NaN inputs propagate to NaN outputs (no error is raised
in these hot-path functions).

References
----------
T. I. Fossen, *Handbook of Marine Craft Hydrodynamics and Motion Control*,
2nd ed., Wiley, 2021 (kinematics chapter: Euler-angle rotation matrix and
Euler-angle attitude transformation matrix).
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .errors import ParameterError

__all__ = [
    "angle_diff",
    "body_to_ned",
    "euler_rate_matrix",
    "heading_to_yaw",
    "ned_to_body",
    "rot_z",
    "rot_z2",
    "rot_zyx",
    "wrap_2pi",
    "wrap_pi",
    "yaw_to_heading",
]

_TWO_PI = 2.0 * np.pi


def _scalar_or_array(x: NDArray[np.float64]) -> NDArray[np.float64] | np.float64:
    """Return 0-d arrays as numpy scalars, other arrays unchanged."""
    return x[()] if x.ndim == 0 else x


def wrap_pi(angle: ArrayLike) -> NDArray[np.float64] | np.float64:
    """Wrap angles to the half-open interval [-pi, pi).

    Parameters
    ----------
    angle : float or array_like
        Angle(s) [rad], any shape.

    Returns
    -------
    float or ndarray
        Equivalent angle(s) in [-pi, pi) [rad], same shape as ``angle``.

    Examples
    --------
    >>> float(wrap_pi(np.pi))
    -3.141592653589793
    >>> float(wrap_pi(3 * np.pi / 2))
    -1.5707963267948966
    """
    a = np.asarray(angle, dtype=float)
    out = np.mod(a + np.pi, _TWO_PI) - np.pi
    # np.mod can round a tiny negative remainder up to exactly 2 pi, which
    # would give +pi; map that to the equivalent -pi.
    out = np.where(out >= np.pi, out - _TWO_PI, out)
    return _scalar_or_array(out)


def wrap_2pi(angle: ArrayLike) -> NDArray[np.float64] | np.float64:
    """Wrap angles to the half-open interval [0, 2 pi).

    Parameters
    ----------
    angle : float or array_like
        Angle(s) [rad], any shape.

    Returns
    -------
    float or ndarray
        Equivalent angle(s) in [0, 2 pi) [rad], same shape as ``angle``.

    Examples
    --------
    >>> float(wrap_2pi(-np.pi / 2))
    4.71238898038469
    >>> float(wrap_2pi(2 * np.pi))
    0.0
    """
    a = np.asarray(angle, dtype=float)
    out = np.mod(a, _TWO_PI)
    # A tiny negative angle can round to exactly 2 pi; 0 is the same angle.
    out = np.where(out >= _TWO_PI, 0.0, out)
    return _scalar_or_array(out)


def angle_diff(a: ArrayLike, b: ArrayLike) -> NDArray[np.float64] | np.float64:
    """Smallest signed difference ``a - b`` wrapped to [-pi, pi).

    Parameters
    ----------
    a, b : float or array_like
        Angles [rad]; broadcast against each other.

    Returns
    -------
    float or ndarray
        ``wrap_pi(a - b)`` [rad].

    Examples
    --------
    >>> round(float(angle_diff(np.radians(10.0), np.radians(350.0))), 10)
    0.3490658504
    """
    return wrap_pi(np.asarray(a, dtype=float) - np.asarray(b, dtype=float))


def heading_to_yaw(heading_deg: ArrayLike) -> NDArray[np.float64] | np.float64:
    """Compass heading in degrees (clockwise from north) to yaw in [-pi, pi).

    Parameters
    ----------
    heading_deg : float or array_like
        Heading [deg], clockwise from north (090 = east), any value.

    Returns
    -------
    float or ndarray
        Yaw angle [rad] in [-pi, pi).

    Examples
    --------
    >>> float(heading_to_yaw(270.0))
    -1.5707963267948966
    """
    return wrap_pi(np.radians(np.asarray(heading_deg, dtype=float)))


def yaw_to_heading(psi: ArrayLike) -> NDArray[np.float64] | np.float64:
    """Yaw in radians to a compass heading in degrees in [0, 360).

    Parameters
    ----------
    psi : float or array_like
        Yaw [rad], clockwise from north.

    Returns
    -------
    float or ndarray
        Heading [deg] in [0, 360).

    Examples
    --------
    >>> float(yaw_to_heading(-np.pi / 2))
    270.0
    """
    h = np.degrees(wrap_2pi(psi))
    # Rounding in the degree conversion can give exactly 360 for yaw just
    # below 2 pi; 0 is the same heading.
    h = np.where(h >= 360.0, 0.0, h)
    return _scalar_or_array(np.asarray(h, dtype=float))


def rot_z2(psi: ArrayLike) -> NDArray[np.float64]:
    """Planar rotation matrix from body to NED (2 x 2).

    Parameters
    ----------
    psi : float or array_like of shape (...)
        Yaw [rad].

    Returns
    -------
    ndarray of shape (..., 2, 2)
        ``[[cos psi, -sin psi], [sin psi, cos psi]]``, mapping a body-frame
        horizontal vector ``[x, y]`` to ``[north, east]``.
    """
    p = np.asarray(psi, dtype=float)
    c, s = np.cos(p), np.sin(p)
    out = np.empty((*p.shape, 2, 2))
    out[..., 0, 0] = c
    out[..., 0, 1] = -s
    out[..., 1, 0] = s
    out[..., 1, 1] = c
    return out


def rot_z(psi: ArrayLike) -> NDArray[np.float64]:
    """3-DOF rotation matrix R(psi) from body to NED for ``eta = [n, e, yaw]``.

    Parameters
    ----------
    psi : float or array_like of shape (...)
        Yaw [rad].

    Returns
    -------
    ndarray of shape (..., 3, 3)
        ``[[c, -s, 0], [s, c, 0], [0, 0, 1]]`` with ``c = cos psi``,
        ``s = sin psi``.

    Notes
    -----
    The planar kinematics are ``eta_dot = R(psi) nu`` with
    ``nu = [u, v, r]`` (Fossen 2021, 3-DOF manoeuvring model). The same
    matrix is the rotation about the z (down) axis, so it also maps a 3-D
    body vector to NED when roll and pitch are zero.
    """
    p = np.asarray(psi, dtype=float)
    c, s = np.cos(p), np.sin(p)
    out = np.zeros((*p.shape, 3, 3))
    out[..., 0, 0] = c
    out[..., 0, 1] = -s
    out[..., 1, 0] = s
    out[..., 1, 1] = c
    out[..., 2, 2] = 1.0
    return out


def rot_zyx(phi: ArrayLike, theta: ArrayLike, psi: ArrayLike) -> NDArray[np.float64]:
    """Body-to-NED rotation matrix for zyx Euler angles.

    Parameters
    ----------
    phi, theta, psi : float or array_like
        Roll, pitch and yaw [rad]; broadcast against each other.

    Returns
    -------
    ndarray of shape (..., 3, 3)
        ``R = Rz(psi) Ry(theta) Rx(phi)``, so that ``v_ned = R v_body``.

    Notes
    -----
    With ``c* = cos``, ``s* = sin``::

        R = [[cpsi cth, -spsi cphi + cpsi sth sphi,  spsi sphi + cpsi cphi sth],
             [spsi cth,  cpsi cphi + sphi sth spsi, -cpsi sphi + sth spsi cphi],
             [-sth,      cth sphi,                   cth cphi]]

    References
    ----------
    Fossen (2021), Handbook of Marine Craft Hydrodynamics and Motion Control,
    2nd ed., kinematics chapter (Euler-angle rotation matrix, zyx convention).
    """
    ph, th, ps = np.broadcast_arrays(
        np.asarray(phi, dtype=float), np.asarray(theta, dtype=float), np.asarray(psi, dtype=float)
    )
    cph, sph = np.cos(ph), np.sin(ph)
    cth, sth = np.cos(th), np.sin(th)
    cps, sps = np.cos(ps), np.sin(ps)
    out = np.empty((*ph.shape, 3, 3))
    out[..., 0, 0] = cps * cth
    out[..., 0, 1] = -sps * cph + cps * sth * sph
    out[..., 0, 2] = sps * sph + cps * cph * sth
    out[..., 1, 0] = sps * cth
    out[..., 1, 1] = cps * cph + sph * sth * sps
    out[..., 1, 2] = -cps * sph + sth * sps * cph
    out[..., 2, 0] = -sth
    out[..., 2, 1] = cth * sph
    out[..., 2, 2] = cth * cph
    return out


def euler_rate_matrix(phi: ArrayLike, theta: ArrayLike) -> NDArray[np.float64]:
    """Euler-angle attitude transformation matrix T(phi, theta).

    Maps the body angular velocity ``[p, q, r]`` to Euler-angle rates:
    ``[phi_dot, theta_dot, psi_dot] = T(phi, theta) [p, q, r]``.

    Parameters
    ----------
    phi, theta : float or array_like
        Roll and pitch [rad]; broadcast against each other. Pitch must
        satisfy ``|theta| < pi/2`` (T is singular at +-90 deg pitch).

    Returns
    -------
    ndarray of shape (..., 3, 3)
        ``[[1, sphi tth, cphi tth], [0, cphi, -sphi], [0, sphi/cth, cphi/cth]]``.

    Raises
    ------
    ParameterError
        If a finite pitch has ``|theta| >= pi/2`` (after wrapping to
        [-pi, pi)). NaN propagates.

    References
    ----------
    Fossen (2021), Handbook of Marine Craft Hydrodynamics and Motion Control,
    2nd ed., kinematics chapter (Euler-angle attitude transformation matrix).
    """
    ph, th = np.broadcast_arrays(np.asarray(phi, dtype=float), np.asarray(theta, dtype=float))
    with np.errstate(invalid="ignore"):
        singular = np.abs(np.asarray(wrap_pi(th))) >= np.pi / 2
    if np.any(singular):
        raise ParameterError(
            "theta",
            th,
            "pitch must satisfy |theta| < pi/2 rad (the Euler-angle rate matrix "
            "is singular at +-90 deg pitch)",
        )
    cph, sph = np.cos(ph), np.sin(ph)
    cth, tth = np.cos(th), np.tan(th)
    out = np.zeros((*ph.shape, 3, 3))
    out[..., 0, 0] = 1.0
    out[..., 0, 1] = sph * tth
    out[..., 0, 2] = cph * tth
    out[..., 1, 1] = cph
    out[..., 1, 2] = -sph
    out[..., 2, 1] = sph / cth
    out[..., 2, 2] = cph / cth
    return out


def _rotate_planar(v: ArrayLike, psi: ArrayLike, sign: float, name: str) -> NDArray[np.float64]:
    x = np.asarray(v, dtype=float)
    if x.ndim < 1 or x.shape[-1] not in (2, 3):
        raise ParameterError(name, x, "must have a last axis of length 2 or 3")
    p = np.asarray(psi, dtype=float)
    c = np.cos(p)
    s = sign * np.sin(p)
    out = np.array(np.broadcast_to(x, np.broadcast_shapes(x.shape, (*p.shape, x.shape[-1]))))
    out[..., 0] = c * x[..., 0] - s * x[..., 1]
    out[..., 1] = s * x[..., 0] + c * x[..., 1]
    return out


def body_to_ned(v_body: ArrayLike, psi: ArrayLike) -> NDArray[np.float64]:
    """Rotate planar body-frame vectors to NED by yaw.

    Parameters
    ----------
    v_body : array_like of shape (n_trials, 2) or (n_trials, 3)
        ``[x, y]`` or ``[x, y, z]`` in the body frame (e.g. ``nu = [u, v, r]``;
        the third component is left unchanged, as in ``R(psi) nu``).
    psi : float or array_like of shape (n_trials,)
        Yaw [rad].

    Returns
    -------
    ndarray of shape (n_trials, 2) or (n_trials, 3)
        The same vectors in NED: ``rot_z2(psi) @ v`` or ``rot_z(psi) @ v``.

    Examples
    --------
    >>> body_to_ned(np.array([[1.0, 0.0, 0.1]]), np.array([np.pi / 2])).round(12)
    array([[0. , 1. , 0.1]])
    """
    return _rotate_planar(v_body, psi, 1.0, "v_body")


def ned_to_body(v_ned: ArrayLike, psi: ArrayLike) -> NDArray[np.float64]:
    """Rotate NED vectors into the body frame by yaw (inverse of :func:`body_to_ned`).

    Parameters
    ----------
    v_ned : array_like of shape (n_trials, 2) or (n_trials, 3)
        ``[north, east]`` or ``[north, east, third]``; the third component is
        left unchanged.
    psi : float or array_like of shape (n_trials,)
        Yaw [rad].

    Returns
    -------
    ndarray of shape (n_trials, 2) or (n_trials, 3)
        ``R(psi)^T @ v``.
    """
    return _rotate_planar(v_ned, psi, -1.0, "v_ned")
