"""The 3-DOF manoeuvring model of a surface craft in Fossen's vectorial form.

States (leading trial axis ``N``):

* ``eta = [north, east, psi]`` : ndarray of shape (n_trials, 3) — position in
  the local NED frame [m] and heading (yaw) [rad], clockwise from north seen
  from above; kept unwrapped while integrating.
* ``nu = [u, v, r]`` : ndarray of shape (n_trials, 3) — surge and sway
  velocity *over ground* expressed in the body frame [m/s] (x forward,
  y to starboard) and yaw rate [rad/s] (positive turning to starboard).
* ``tau = [X, Y, N]`` : ndarray of shape (n_trials, 3) — total generalised
  force in the body frame [N, N, N·m] (actuators + wind + wave drift).
* ``current_ned = [Vc_north, Vc_east]`` : ndarray of shape (n_trials, 2) —
  current velocity over ground [m/s], taken constant in space and time over a
  step and irrotational.

The body origin CO is the point about which ``izz_kgm2`` is given; the centre
of gravity lies ``xg_m`` ahead of CO on the centreline (yg = 0).

Sign convention of the hydrodynamic coefficients
------------------------------------------------
All added-mass and damping coefficients are hydrodynamic *derivatives* in
Fossen's (SNAME 1950) notation and sign: the hydrodynamic force is the
coefficient times the motion variable, e.g. the surge added-mass force is
``x_udot * u_dot``. Hence, for a passive hull,

* ``x_udot, y_vdot, n_rdot <= 0`` (added mass/inertia is ``-x_udot`` etc.);
* ``x_u, y_v, n_r <= 0`` (linear damping), ``x_uu, y_vv, n_rr <= 0``
  (quadratic damping, force ``x_uu * |u| u``);
* ``y_rdot, n_vdot, y_r, n_v`` may have either sign.

Units: ``x_udot, y_vdot`` [kg]; ``y_rdot, n_vdot`` [kg·m]; ``n_rdot``
[kg·m^2]; ``x_u, y_v`` [kg/s] (N per m/s); ``y_r, n_v`` [kg·m/s] (N per
rad/s and N·m per m/s); ``n_r`` [kg·m^2/s] (N·m per rad/s); ``x_uu, y_vv``
[kg/m] (N per (m/s)^2); ``n_rr`` [kg·m^2] (N·m per (rad/s)^2).

Symmetric added mass. Potential theory gives a symmetric added-mass matrix
for a body in an ideal fluid at rest, and Fossen's skew-symmetric ``C_A``
assumes it. This module uses the symmetric part: the off-diagonal added
mass entering ``M_A``, ``C_A`` and the kinetic energy is
``-(y_rdot + n_vdot) / 2``. Give ``y_rdot == n_vdot`` to make this exact.

Every numeric parameter may be a per-trial array of shape (n_trials,); all
functions broadcast parameters over the leading trial axis. The arithmetic of
:func:`derivative` is written column by column (one (N,) array per scalar
quantity) so that it reads like scalar code and can be carried over into a
compiled per-trial kernel; this numpy version is the oracle for such a kernel.

References
----------
.. [1] T. I. Fossen, Handbook of Marine Craft Hydrodynamics and Motion
   Control, 2nd ed., Wiley, 2021 — ch. 6 (3-DOF manoeuvring models: rigid-body
   and added-mass inertia, skew-symmetric Coriolis–centripetal matrices,
   linear plus quadratic damping) and ch. 10 (ocean currents, the
   relative-velocity model for an irrotational constant current).
   Equation numbers are not quoted here because they were not re-checked.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ..core.errors import ParameterError
from ..core.params import Params, bounded

__all__ = [
    "HullCoefficients",
    "HullParams",
    "coriolis_added",
    "coriolis_rb",
    "damping_matrix",
    "derivative",
    "getattr_path",
    "hull_coefficients",
    "kinetic_energy",
    "mass_matrix",
    "param_batch_size",
    "relative_velocity",
]

FloatArray = NDArray[np.float64]


def param_batch_size(params: Params) -> int | None:
    """Length of the per-trial arrays held by ``params`` (searching nested Params).

    Parameters
    ----------
    params : Params
        Any parameter dataclass.

    Returns
    -------
    int or None
        The common length N of its array-valued numeric fields, or None when
        every field is a scalar.

    Raises
    ------
    ParameterError
        If two array-valued fields have different lengths, or one is not 1-D.
    """
    sizes: dict[str, int] = {}
    _collect_sizes(params, "", sizes)
    if not sizes:
        return None
    first_name, n = next(iter(sizes.items()))
    for name, size in sizes.items():
        if size != n:
            raise ParameterError(
                name,
                getattr_path(params, name),
                f"per-trial arrays must all have the same length; {first_name} has length {n}",
            )
    return n


def getattr_path(obj: Any, path: str) -> Any:
    """Value of a dotted attribute path, e.g. ``getattr_path(craft, "hull.mass_kg")``."""
    for part in path.split("."):
        obj = getattr(obj, part)
    return obj


def _collect_sizes(params: Params, prefix: str, sizes: dict[str, int]) -> None:
    for f in dataclasses.fields(params):
        value = getattr(params, f.name)
        name = prefix + f.name
        if isinstance(value, Params):
            _collect_sizes(value, name + ".", sizes)
        elif isinstance(value, np.ndarray):
            if value.ndim != 1:
                raise ParameterError(
                    name, value, "must be a scalar or a per-trial array of shape (n_trials,)"
                )
            sizes[name] = value.shape[0]


@dataclass(frozen=True, kw_only=True)
class HullParams(Params):
    """Rigid-body and hydrodynamic parameters of the 3-DOF manoeuvring model.

    Parameters
    ----------
    length_m, beam_m, draft_m : float or ndarray of shape (n_trials,)
        Principal dimensions [m]; ``length_m`` is the length used by the
        manoeuvring criteria.
    mass_kg : float or ndarray
        Rigid-body mass [kg] (> 0).
    izz_kgm2 : float or ndarray
        Yaw moment of inertia about the body origin CO [kg·m^2]; must exceed
        ``mass_kg * xg_m**2`` (parallel-axis theorem).
    xg_m : float or ndarray
        Longitudinal position of the centre of gravity ahead of CO [m].
    x_udot, y_vdot, y_rdot, n_vdot, n_rdot : float or ndarray
        Added-mass derivatives in Fossen's sign (see the module notes).
    x_u, y_v, y_r, n_v, n_r : float or ndarray
        Linear damping derivatives in Fossen's sign.
    x_uu, y_vv, n_rr : float or ndarray
        Quadratic damping derivatives ``X_|u|u, Y_|v|v, N_|r|r`` in Fossen's sign.

    Notes
    -----
    Cross-field checks: array-valued fields share one length; the rigid-body
    inertia satisfies ``izz_kgm2 > mass_kg xg_m^2``; ``M = M_RB + M_A`` is
    positive definite; ``mass_kg xg_m^2``, the entries of ``M`` and its
    determinant are finite (extreme values that overflow float64 are refused
    with a :class:`~wavebench.core.errors.ParameterError`, not a warning).
    """

    length_m: float = bounded(gt=0.0, unit="m", doc="length (used by manoeuvring criteria)")
    beam_m: float = bounded(gt=0.0, unit="m", doc="overall beam")
    draft_m: float = bounded(gt=0.0, unit="m", doc="draft")
    mass_kg: float = bounded(gt=0.0, unit="kg", doc="rigid-body mass")
    izz_kgm2: float = bounded(gt=0.0, unit="kg m^2", doc="yaw inertia about the body origin CO")
    xg_m: float = bounded(0.0, unit="m", doc="centre of gravity ahead of CO")
    x_udot: float = bounded(le=0.0, unit="kg", doc="surge added mass derivative X_udot")
    y_vdot: float = bounded(le=0.0, unit="kg", doc="sway added mass derivative Y_vdot")
    y_rdot: float = bounded(0.0, unit="kg m", doc="sway-yaw added mass derivative Y_rdot")
    n_vdot: float = bounded(0.0, unit="kg m", doc="yaw-sway added mass derivative N_vdot")
    n_rdot: float = bounded(le=0.0, unit="kg m^2", doc="yaw added inertia derivative N_rdot")
    x_u: float = bounded(le=0.0, unit="kg/s", doc="linear surge damping X_u")
    y_v: float = bounded(le=0.0, unit="kg/s", doc="linear sway damping Y_v")
    y_r: float = bounded(0.0, unit="kg m/s", doc="linear sway-from-yaw damping Y_r")
    n_v: float = bounded(0.0, unit="kg m/s", doc="linear yaw-from-sway damping N_v")
    n_r: float = bounded(le=0.0, unit="kg m^2/s", doc="linear yaw damping N_r")
    x_uu: float = bounded(0.0, le=0.0, unit="kg/m", doc="quadratic surge damping X_|u|u")
    y_vv: float = bounded(0.0, le=0.0, unit="kg/m", doc="quadratic sway damping Y_|v|v")
    n_rr: float = bounded(0.0, le=0.0, unit="kg m^2", doc="quadratic yaw damping N_|r|r")

    def _check(self) -> None:
        param_batch_size(self)
        # Each field is finite on its own, but products of extreme values can
        # overflow float64: compute quietly, then refuse non-finite results.
        with np.errstate(over="ignore", invalid="ignore"):
            m = np.asarray(self.mass_kg, dtype=float)
            cg_inertia = m * np.square(self.xg_m)
            c = hull_coefficients(self)
            det = c.m22 * c.m33 - c.m23 * c.m23
        if not all(np.all(np.isfinite(x)) for x in (cg_inertia, c.m11, c.m22, c.m23, c.m33, det)):
            name = self._largest_field()
            raise ParameterError(
                name,
                getattr(self, name),
                "with the other hull values this makes mass_kg * xg_m**2, the mass matrix or its "
                "determinant overflow (they must be finite float64 numbers, below about 1.8e308)",
            )
        if not np.all(self.izz_kgm2 > cg_inertia):
            raise ParameterError(
                "izz_kgm2",
                self.izz_kgm2,
                "must exceed mass_kg * xg_m**2 (inertia about CO, parallel-axis theorem)",
            )
        if not np.all(det > 0.0):
            raise ParameterError(
                "n_vdot",
                self.n_vdot,
                "with y_rdot, xg_m and the diagonal terms this gives a mass matrix that is "
                "not positive definite: need (mass_kg - y_vdot)(izz_kgm2 - n_rdot) > "
                "(mass_kg xg_m - (y_rdot + n_vdot)/2)^2",
            )

    def _largest_field(self) -> str:
        """Name of the field with the largest magnitude (the likely culprit of an overflow)."""
        sizes = {f.name: float(np.max(np.abs(getattr(self, f.name)))) for f in dataclasses.fields(self)}
        return max(sizes, key=sizes.__getitem__)


@dataclass(frozen=True)
class HullCoefficients:
    """Per-trial coefficient columns of the model, precomputed once per run.

    Each attribute is a float or an ndarray of shape (n_trials,).

    Attributes
    ----------
    m11, m22, m23, m33 : float or ndarray
        Entries of the symmetric mass matrix ``M = M_RB + M_A`` [kg, kg·m, kg·m^2].
    i11, i22, i23, i33 : float or ndarray
        Entries of ``M^-1`` (closed form; ``M^-1`` has the same sparsity).
    x_u, y_v, y_r, n_v, n_r, x_uu, y_vv, n_rr : float or ndarray
        Damping derivatives copied from the hull (Fossen's sign).
    """

    m11: Any
    m22: Any
    m23: Any
    m33: Any
    i11: Any
    i22: Any
    i23: Any
    i33: Any
    x_u: Any
    y_v: Any
    y_r: Any
    n_v: Any
    n_r: Any
    x_uu: Any
    y_vv: Any
    n_rr: Any


def hull_coefficients(hull: HullParams | HullCoefficients) -> HullCoefficients:
    """Precompute the mass matrix, its inverse and the damping columns.

    Parameters
    ----------
    hull : HullParams or HullCoefficients
        Hull parameters (a HullCoefficients is returned unchanged).

    Returns
    -------
    HullCoefficients

    Notes
    -----
    With the symmetric added-mass convention (module notes),

    .. math::

        M = \\begin{bmatrix} m - X_{\\dot u} & 0 & 0 \\\\
            0 & m - Y_{\\dot v} & m x_g - \\bar Y \\\\
            0 & m x_g - \\bar Y & I_z - N_{\\dot r} \\end{bmatrix},
        \\qquad \\bar Y = (Y_{\\dot r} + N_{\\dot v}) / 2

    and, with ``det = m22 m33 - m23^2``, ``M^-1 = [[1/m11, 0, 0],
    [0, m33/det, -m23/det], [0, -m23/det, m22/det]]``.
    """
    if isinstance(hull, HullCoefficients):
        return hull
    m = hull.mass_kg
    m11 = m - hull.x_udot
    m22 = m - hull.y_vdot
    m23 = m * hull.xg_m - 0.5 * (hull.y_rdot + hull.n_vdot)
    m33 = hull.izz_kgm2 - hull.n_rdot
    det = m22 * m33 - m23 * m23
    with np.errstate(divide="ignore", invalid="ignore"):  # bad hulls are rejected by _check
        i11 = 1.0 / m11
        i22 = m33 / det
        i23 = -m23 / det
        i33 = m22 / det
    return HullCoefficients(
        m11=m11,
        m22=m22,
        m23=m23,
        m33=m33,
        i11=i11,
        i22=i22,
        i23=i23,
        i33=i33,
        x_u=hull.x_u,
        y_v=hull.y_v,
        y_r=hull.y_r,
        n_v=hull.n_v,
        n_r=hull.n_r,
        x_uu=hull.x_uu,
        y_vv=hull.y_vv,
        n_rr=hull.n_rr,
    )


def _matrix(rows: list[list[Any]]) -> FloatArray:
    """Stack a 3x3 nested list of scalars / (N,) columns into (N or 1, 3, 3)."""
    flat = np.broadcast_arrays(*[np.asarray(x, dtype=float) for row in rows for x in row])
    out = np.stack(flat, axis=-1).reshape((*np.shape(flat[0]), 3, 3))
    return out[np.newaxis] if out.ndim == 2 else out


def _cols(x: ArrayLike, n: int, name: str) -> tuple[FloatArray, ...]:
    arr = np.asarray(x, dtype=float)
    if arr.shape[-1:] != (n,):
        raise ParameterError(name, arr, f"must have shape (n_trials, {n}) or ({n},)")
    return tuple(arr[..., k] for k in range(n))


def mass_matrix(hull: HullParams) -> FloatArray:
    """System inertia matrix ``M = M_RB + M_A`` (symmetric added mass).

    Parameters
    ----------
    hull : HullParams

    Returns
    -------
    ndarray of shape (n_trials, 3, 3), or (1, 3, 3) for scalar parameters
        ``M`` [kg, kg·m, kg·m^2].

    Notes
    -----
    ``M_RB = [[m, 0, 0], [0, m, m x_g], [0, m x_g, I_z]]`` (Fossen 2021, ch. 6,
    3-DOF rigid-body inertia about CO) and
    ``M_A = -[[X_udot, 0, 0], [0, Y_vdot, Ybar], [0, Ybar, N_rdot]]`` with
    ``Ybar = (Y_rdot + N_vdot) / 2``.
    """
    c = hull_coefficients(hull)
    return _matrix([[c.m11, 0.0, 0.0], [0.0, c.m22, c.m23], [0.0, c.m23, c.m33]])


def coriolis_rb(hull: HullParams, nu: ArrayLike) -> FloatArray:
    """Rigid-body Coriolis–centripetal matrix ``C_RB(nu)`` (skew-symmetric form).

    Parameters
    ----------
    hull : HullParams
    nu : ndarray of shape (n_trials, 3)
        ``[u, v, r]`` [m/s, m/s, rad/s].

    Returns
    -------
    ndarray of shape (n_trials, 3, 3)

    Notes
    -----
    Fossen (2021), ch. 6, 3-DOF manoeuvring model:

    .. math::

        C_{RB}(\\nu) = \\begin{bmatrix} 0 & 0 & -m(x_g r + v) \\\\
            0 & 0 & m u \\\\ m(x_g r + v) & -m u & 0 \\end{bmatrix}
    """
    u, v, r = _cols(nu, 3, "nu")
    m = hull.mass_kg
    a = m * (hull.xg_m * r + v)
    b = m * u
    z = np.zeros_like(a * b)
    return _matrix([[z, z, -a], [z, z, b], [a, -b, z]])


def coriolis_added(hull: HullParams, nu_r: ArrayLike) -> FloatArray:
    """Added-mass Coriolis–centripetal matrix ``C_A(nu_r)`` (skew-symmetric form).

    Parameters
    ----------
    hull : HullParams
    nu_r : ndarray of shape (n_trials, 3)
        Velocity relative to the water ``[u_r, v_r, r]``.

    Returns
    -------
    ndarray of shape (n_trials, 3, 3)

    Notes
    -----
    Fossen (2021), ch. 6, with the symmetric off-diagonal added mass
    ``Ybar = (Y_rdot + N_vdot) / 2``:

    .. math::

        C_A(\\nu_r) = \\begin{bmatrix} 0 & 0 & Y_{\\dot v} v_r + \\bar Y r \\\\
            0 & 0 & -X_{\\dot u} u_r \\\\
            -Y_{\\dot v} v_r - \\bar Y r & X_{\\dot u} u_r & 0 \\end{bmatrix}

    Its product with ``nu_r`` contains the Munk moment ``(X_udot - Y_vdot) u_r v_r``.
    """
    u, v, r = _cols(nu_r, 3, "nu_r")
    ybar = 0.5 * (hull.y_rdot + hull.n_vdot)
    a = hull.y_vdot * v + ybar * r
    b = -hull.x_udot * u
    z = np.zeros_like(a * b)
    return _matrix([[z, z, a], [z, z, b], [-a, -b, z]])


def damping_matrix(hull: HullParams, nu_r: ArrayLike) -> FloatArray:
    """Damping matrix ``D(nu_r) = D_L + D_NL(nu_r)``.

    Parameters
    ----------
    hull : HullParams
    nu_r : ndarray of shape (n_trials, 3)
        Velocity relative to the water.

    Returns
    -------
    ndarray of shape (n_trials, 3, 3)

    Notes
    -----
    Fossen (2021), ch. 6 (linear plus quadratic, "modulus") damping:

    .. math::

        D(\\nu_r) = -\\begin{bmatrix} X_u + X_{|u|u}|u_r| & 0 & 0 \\\\
            0 & Y_v + Y_{|v|v}|v_r| & Y_r \\\\
            0 & N_v & N_r + N_{|r|r}|r| \\end{bmatrix}

    The damping force on the hull is ``-D(nu_r) nu_r``.
    """
    u, v, r = _cols(nu_r, 3, "nu_r")
    d11 = -(hull.x_u + hull.x_uu * np.abs(u))
    d22 = -(hull.y_v + hull.y_vv * np.abs(v))
    d33 = -(hull.n_r + hull.n_rr * np.abs(r))
    z = np.zeros_like(d11 * d22 * d33)
    return _matrix([[d11, z, z], [z, d22, z - hull.y_r], [z, z - hull.n_v, d33]])


def kinetic_energy(hull: HullParams | HullCoefficients, nu_r: ArrayLike) -> FloatArray:
    """Kinetic energy of hull plus added mass, ``E = nu_r^T M nu_r / 2``.

    Parameters
    ----------
    hull : HullParams or HullCoefficients
    nu_r : ndarray of shape (n_trials, 3)
        Velocity relative to the water.

    Returns
    -------
    ndarray of shape (n_trials,)
        Energy [J].
    """
    c = hull_coefficients(hull)
    u, v, r = _cols(nu_r, 3, "nu_r")
    return 0.5 * (c.m11 * u * u + c.m22 * v * v + 2.0 * c.m23 * v * r + c.m33 * r * r)


def derivative(
    hull: HullParams | HullCoefficients,
    eta: ArrayLike,
    nu: ArrayLike,
    tau: ArrayLike,
    current_ned: ArrayLike | None = None,
) -> tuple[FloatArray, FloatArray]:
    """Time derivatives of position/heading and of velocity over ground.

    Parameters
    ----------
    hull : HullParams or HullCoefficients
        Pass :func:`hull_coefficients` once per run to avoid recomputing
        ``M^-1`` at every call.
    eta : ndarray of shape (n_trials, 3)
        ``[north, east, psi]`` [m, m, rad].
    nu : ndarray of shape (n_trials, 3)
        ``[u, v, r]``, velocity over ground in the body frame [m/s, m/s, rad/s].
    tau : ndarray of shape (n_trials, 3) or (3,)
        ``[X, Y, N]`` total generalised force [N, N, N·m].
    current_ned : ndarray of shape (n_trials, 2) or (2,), optional
        ``[Vc_north, Vc_east]`` [m/s]; None or zeros for still water.

    Returns
    -------
    eta_dot : ndarray of shape (n_trials, 3)
        ``[north_dot, east_dot, psi_dot]`` [m/s, m/s, rad/s].
    nu_dot : ndarray of shape (n_trials, 3)
        ``[u_dot, v_dot, r_dot]`` [m/s^2, m/s^2, rad/s^2].

    Notes
    -----
    Kinematics: ``eta_dot = R(psi) nu`` with
    ``R = [[cos psi, -sin psi, 0], [sin psi, cos psi, 0], [0, 0, 1]]``.

    Current (Fossen 2021, ch. 10, relative-velocity model): the current
    velocity in the body frame is ``nu_c = R(psi)^T [Vc_n, Vc_e, 0]^T``, i.e.
    ``u_c = cos psi Vc_n + sin psi Vc_e``, ``v_c = -sin psi Vc_n + cos psi Vc_e``,
    ``r_c = 0``; the relative velocity is ``nu_r = nu - nu_c``. Kinetics:

    .. math:: M \\dot\\nu_r + C(\\nu_r)\\nu_r + D(\\nu_r)\\nu_r = \\tau,
              \\qquad C = C_{RB} + C_A

    Assumption: the current is irrotational and constant in NED over the
    step. Then ``M_RB nu_dot + C_RB(nu) nu = M_RB nu_r_dot + C_RB(nu_r) nu_r``
    (Fossen, ch. 10); in 3 DOF this can be verified directly, since
    ``C_RB(nu) nu = [-m r v - m x_g r^2, m r u, m x_g r u]`` is linear in
    ``(u, v)`` at fixed ``r`` and ``M_RB nu_c_dot`` below cancels the difference.

    Derivation of ``nu_c_dot`` for a constant NED current: ``R_dot = R S(r)``
    with ``S(r) = [[0, -r, 0], [r, 0, 0], [0, 0, 0]]``, so
    ``nu_c_dot = R_dot^T v_n = S(r)^T R^T v_n = -S(r) nu_c``, i.e.
    ``u_c_dot = r v_c``, ``v_c_dot = -r u_c``. Finally
    ``nu_dot = nu_r_dot + nu_c_dot``.

    In column form, with ``m11 ... m33`` the entries of ``M``:

    ``C(nu_r) nu_r = [-(m22 v_r + m23 r) r, m11 u_r r, (m22 - m11) u_r v_r + m23 u_r r]``

    ``D(nu_r) nu_r = [-(X_u + X_|u|u |u_r|) u_r, -(Y_v + Y_|v|v |v_r|) v_r - Y_r r,
    -N_v v_r - (N_r + N_|r|r |r|) r]``

    and ``nu_r_dot = M^-1 (tau - C nu_r - D nu_r)`` with the precomputed
    closed-form inverse.
    """
    c = hull_coefficients(hull)
    psi = np.asarray(eta, dtype=float)[..., 2]
    nu = np.asarray(nu, dtype=float)
    u = nu[..., 0]
    v = nu[..., 1]
    r = nu[..., 2]
    tau = np.asarray(tau, dtype=float)
    tx = tau[..., 0]
    ty = tau[..., 1]
    tn = tau[..., 2]
    cpsi = np.cos(psi)
    spsi = np.sin(psi)

    # current in the body frame: nu_c = R(psi)^T [Vc_n, Vc_e, 0]
    if current_ned is None:
        uc = 0.0
        vc = 0.0
    else:
        cur = np.asarray(current_ned, dtype=float)
        vcn = cur[..., 0]
        vce = cur[..., 1]
        uc = cpsi * vcn + spsi * vce
        vc = -spsi * vcn + cpsi * vce
    ur = u - uc
    vr = v - vc

    # Coriolis-centripetal force C(nu_r) nu_r (rigid body + added mass)
    cx = -(c.m22 * vr + c.m23 * r) * r
    cy = c.m11 * ur * r
    cn = (c.m22 - c.m11) * ur * vr + c.m23 * ur * r
    # damping force D(nu_r) nu_r
    dx = -(c.x_u + c.x_uu * np.abs(ur)) * ur
    dy = -(c.y_v + c.y_vv * np.abs(vr)) * vr - c.y_r * r
    dn = -c.n_v * vr - (c.n_r + c.n_rr * np.abs(r)) * r
    # right-hand side and M^-1
    fx = tx - cx - dx
    fy = ty - cy - dy
    fn = tn - cn - dn
    urdot = c.i11 * fx
    vrdot = c.i22 * fy + c.i23 * fn
    rdot = c.i23 * fy + c.i33 * fn
    # nu_dot = nu_r_dot + nu_c_dot, nu_c_dot = -S(r) nu_c = [r v_c, -r u_c, 0]
    udot = urdot + r * vc
    vdot = vrdot - r * uc

    ndot = cpsi * u - spsi * v
    edot = spsi * u + cpsi * v
    eta_dot = np.stack(np.broadcast_arrays(ndot, edot, r), axis=-1)
    nu_dot = np.stack(np.broadcast_arrays(udot, vdot, rdot), axis=-1)
    return eta_dot, nu_dot


def relative_velocity(eta: ArrayLike, nu: ArrayLike, current_ned: ArrayLike | None) -> FloatArray:
    """Velocity relative to the water ``nu_r = nu - R(psi)^T [Vc_n, Vc_e, 0]``.

    Parameters
    ----------
    eta : ndarray of shape (n_trials, 3)
    nu : ndarray of shape (n_trials, 3)
    current_ned : ndarray of shape (n_trials, 2) or (2,), or None

    Returns
    -------
    ndarray of shape (n_trials, 3)
    """
    nu = np.asarray(nu, dtype=float)
    if current_ned is None:
        return nu.copy()
    psi = np.asarray(eta, dtype=float)[..., 2]
    cur = np.asarray(current_ned, dtype=float)
    cpsi = np.cos(psi)
    spsi = np.sin(psi)
    uc = cpsi * cur[..., 0] + spsi * cur[..., 1]
    vc = -spsi * cur[..., 0] + cpsi * cur[..., 1]
    return np.stack(np.broadcast_arrays(nu[..., 0] - uc, nu[..., 1] - vc, nu[..., 2]), axis=-1)
