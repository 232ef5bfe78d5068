"""Second-order wave drift loads: mean drift and slowly varying drift.

The manoeuvring model feels the waves only through their second-order
loads (the first-order, wave-frequency motion is superposed kinematically,
see :mod:`wavebench.sea.wave_motion`). wavebench computes them from a
*drift coefficient* per component — the mean load per unit amplitude
squared, ``T_i(omega, beta)`` — and Newman's approximation for the
slowly varying part.

Drift coefficients
------------------
For a wall-sided hull in short waves, the mean drift load is the momentum
of the waves reflected by the lit side of the waterline (Faltinsen 1990,
sec. 5.4): for each waterline segment of length ``l`` and outward normal
``n`` facing the waves (``khat . n < 0``)

.. math::

    F = -\\frac{\\rho g}{2} a^2 R^2(k) (\\hat k \\cdot n)^2 \\, l \\, n,

where ``(khat . n)^2`` is ``sin^2`` of the angle between the wave direction
and the segment. The short-wave result (``R = 1``) overestimates the load
in waves long against the draft, where much of the wave energy passes
under the hull; wavebench uses the reflected share of the energy flux from
Wiegel's (1960) power-transmission theory for a thin vertical barrier of
draft ``d`` in depth ``h``:

.. math::

    R^2 = 1 - \\frac{2k(h-d) + \\sinh 2k(h-d)}{2kh + \\sinh 2kh}
    \\;\\to\\; 1 - e^{-2kd} \\quad (h \\to \\infty).

The drift coefficient therefore separates into ``R^2(k_j)`` per component
and a heading function ``G_i(beta)`` of the waterline shape, tabulated once
per hull on a one-degree grid.

Slowly varying drift (Newman's approximation)
---------------------------------------------
With ``T_jk ~ sign(T_jj) sqrt(T_jj T_kk)`` for pairs of like sign (and 0
otherwise), the difference-frequency load is a squared modulus:

.. math::

    F_i(t) = |z_i^+(t)|^2 - |z_i^-(t)|^2, \\qquad
    z_i^\\pm = \\sum_j a_j \\sqrt{\\max(\\pm T_{i,j}, 0)}\\, e^{\\mathrm i \\phi_j(t)},

with ``phi_j`` the phase of component ``j`` at the craft's position. Its time
mean is ``sum_j a_j^2 T_jj``, the mean drift load, and it contains only
difference frequencies (no sum-frequency terms to filter out).

References
----------
Faltinsen, O. M. (1990). Sea Loads on Ships and Offshore Structures.
Cambridge University Press, sec. 5.4 (mean wave drift forces) and 5.5
(Newman's approximation). Newman, J. N. (1974). Second-order,
slowly-varying forces on vessels in irregular waves. Proc. Int. Symp.
Dynamics of Marine Vehicles and Structures in Waves, London. Wiegel, R. L.
(1960). Transmission of waves past a rigid vertical thin barrier. J.
Waterways and Harbors Div., ASCE 86(WW1).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ..core.constants import RHO_SEAWATER, G
from ..core.errors import ParameterError
from .realisation import WaveComponents

__all__ = [
    "DriftModel",
    "box_waterline",
    "drift_force",
    "heading_table",
    "reflection_squared",
    "root_table",
]

#: Number of heading-table intervals over one turn (one-degree grid).
N_HEADINGS = 360


def reflection_squared(k_radpm: ArrayLike, draft_m: float, depth_m: ArrayLike = np.inf) -> NDArray[np.float64]:
    """Share of the incident wave-energy flux a vertical hull side reflects.

    Parameters
    ----------
    k_radpm : ndarray
        Wave numbers [rad/m].
    draft_m : float
        Draft of the wall-sided hull [m], > 0.
    depth_m : float or ndarray broadcastable to ``k_radpm``
        Water depth [m]; ``inf`` for deep water.

    Returns
    -------
    ndarray
        ``R^2`` in [0, 1] (Wiegel 1960 power-transmission theory).
    """
    k = np.asarray(k_radpm, dtype=float)
    h = np.broadcast_to(np.asarray(depth_m, dtype=float), k.shape)
    if not draft_m > 0.0:
        raise ParameterError("draft_m", draft_m, "must be a finite number > 0")
    d = np.minimum(draft_m, h)
    deep = ~np.isfinite(h) | (k * h > 20.0)
    out = np.empty_like(k)
    out[deep] = -np.expm1(-2.0 * k[deep] * d[deep])
    sh = ~deep
    if np.any(sh):
        kh, kg = k[sh] * h[sh], k[sh] * (h[sh] - d[sh])
        transmitted = (2.0 * kg + np.sinh(2.0 * kg)) / (2.0 * kh + np.sinh(2.0 * kh))
        out[sh] = 1.0 - transmitted
    return np.clip(out, 0.0, 1.0)


def box_waterline(length_m: float, beam_m: float, bow_fraction: float = 0.2) -> NDArray[np.float64]:
    """Vertices of a simple ship-like waterline: a rectangle with a pointed bow.

    Parameters
    ----------
    length_m, beam_m : float
        Waterline length and beam [m].
    bow_fraction : float
        Share of the length taken by the triangular bow, in [0, 0.5]; 0
        gives a rectangle (a box barge).

    Returns
    -------
    ndarray of shape (n_vertices, 2)
        Vertices in the body plane, x forward and y to starboard [m],
        origin at mid-length, in counter-clockwise order of the (x, y)
        plane (positive shoelace area).
    """
    if not (0.0 <= bow_fraction <= 0.5):
        raise ParameterError("bow_fraction", bow_fraction, "must be in [0, 0.5]")
    half_l, half_b = 0.5 * length_m, 0.5 * beam_m
    x_shoulder = half_l - bow_fraction * length_m
    pts = [(-half_l, -half_b), (x_shoulder, -half_b)]
    if bow_fraction > 0.0:
        pts.append((half_l, 0.0))
    else:
        pts.append((half_l, -half_b))
        pts.append((half_l, half_b))
    pts += [(x_shoulder, half_b), (-half_l, half_b)]
    # de-duplicate (the rectangle case repeats the shoulder corner)
    out = [pts[0]]
    for p in pts[1:]:
        if p != out[-1]:
            out.append(p)
    return np.asarray(out, dtype=float)


def heading_table(
    waterline: ArrayLike, *, rho: float = RHO_SEAWATER, g: float = G, n_headings: int = N_HEADINGS
) -> NDArray[np.float64]:
    """Short-wave drift loads of a waterline per unit amplitude squared.

    Parameters
    ----------
    waterline : ndarray of shape (n_vertices, 2)
        Closed polygon in the body frame (x forward, y starboard) [m],
        in either order (the orientation is detected from its signed area).
    rho : float
        Water density [kg/m^3].
    g : float
        Acceleration of gravity [m/s^2].
    n_headings : int
        Table intervals over one turn.

    Returns
    -------
    ndarray of shape (n_headings + 1, 3)
        ``G(beta)`` for beta = 2 pi i / n_headings, i = 0..n_headings (the
        last row repeats the first for interpolation): surge force [N/m^2],
        sway force [N/m^2] and yaw moment about the origin [N m/m^2], with
        ``beta`` the direction waves travel toward relative to the bow.
    """
    p = np.asarray(waterline, dtype=float)
    if p.ndim != 2 or p.shape[1] != 2 or p.shape[0] < 3:
        raise ParameterError("waterline", waterline, "must be an array of shape (n_vertices >= 3, 2)")
    q = np.roll(p, -1, axis=0)
    edge = q - p
    # Shoelace area: positive for counter-clockwise order in (x, y).
    area = 0.5 * np.sum(p[:, 0] * q[:, 1] - q[:, 0] * p[:, 1])
    length = np.hypot(edge[:, 0], edge[:, 1])
    tangent = edge / length[:, None]
    # Outward normal: tangent rotated by -90 deg for counter-clockwise order.
    normal = np.stack([tangent[:, 1], -tangent[:, 0]], axis=1) * np.sign(area)
    mid = 0.5 * (p + q)
    beta = np.linspace(0.0, 2.0 * np.pi, n_headings + 1)
    khat = np.stack([np.cos(beta), np.sin(beta)], axis=1)  # (B, 2)
    cosang = khat @ normal.T  # (B, E)
    lit = cosang < 0.0
    w = 0.5 * rho * g * np.where(lit, cosang**2, 0.0) * length[None, :]  # (B, E)
    fx = -(w * normal[None, :, 0]).sum(axis=1)
    fy = -(w * normal[None, :, 1]).sum(axis=1)
    mz = -(w * (mid[None, :, 0] * normal[None, :, 1] - mid[None, :, 1] * normal[None, :, 0])).sum(axis=1)
    table = np.stack([fx, fy, mz], axis=1)
    table[-1] = table[0]
    return table


def root_table(table: NDArray[np.float64]) -> NDArray[np.float64]:
    """Square roots of the positive and negative parts of a heading table.

    Parameters
    ----------
    table : ndarray of shape (n_headings + 1, 3)
        ``G(beta)`` from :func:`heading_table`.

    Returns
    -------
    ndarray of shape (n_headings + 1, 6)
        Columns ``sqrt(max(G_x, 0)), sqrt(max(-G_x, 0))``, then the same for
        sway and yaw. Newman's weights interpolate these roots, so the
        weights need no square root per component at run time.
    """
    t = np.asarray(table, dtype=float)
    cols = []
    for d in range(3):
        cols += [np.sqrt(np.maximum(t[:, d], 0.0)), np.sqrt(np.maximum(-t[:, d], 0.0))]
    return np.stack(cols, axis=1)


def _interp_rows(table: NDArray[np.float64], beta_rel: NDArray[np.float64]) -> NDArray[np.float64]:
    """Periodic linear interpolation of a heading table, shape (..., n_cols)."""
    n = table.shape[0] - 1
    two_pi = 2.0 * np.pi
    x = (beta_rel - two_pi * np.floor(beta_rel / two_pi)) * (n / two_pi)
    i = np.minimum(x.astype(np.int64), n - 1)
    f = (x - i)[..., None]
    return table[i] * (1.0 - f) + table[i + 1] * f


@dataclass(frozen=True)
class DriftModel:
    """Drift coefficients of one hull in one batch of seas.

    Parameters
    ----------
    table : ndarray of shape (n_headings + 1, 3)
        Heading table ``G(beta)`` from :func:`heading_table`.
    reflection : ndarray of shape (n_trials, n_components)
        ``R^2(k_j)`` of each component.

    Notes
    -----
    The drift coefficient of component ``j`` in degree of freedom ``i`` is
    ``T_ij = R^2(k_j) G_i(beta_j - psi)``. Newman's weights are
    ``w_ij^+- = a_j R(k_j) sqrt(max(+-G_i, 0))``, with the square roots
    interpolated linearly on the one-degree heading grid (:func:`root_table`),
    so that ``T_ij = (w_ij^+)^2 - (w_ij^-)^2`` up to that interpolation.
    """

    table: NDArray[np.float64]
    reflection: NDArray[np.float64]

    @classmethod
    def for_hull(
        cls,
        components: WaveComponents,
        *,
        length_m: float,
        beam_m: float,
        draft_m: float,
        depth_m: ArrayLike = np.inf,
        bow_fraction: float = 0.2,
        rho: float = RHO_SEAWATER,
        g: float = G,
    ) -> DriftModel:
        """Drift model of a ship-like waterline (see :func:`box_waterline`)."""
        table = heading_table(box_waterline(length_m, beam_m, bow_fraction), rho=rho, g=g)
        depth = np.asarray(depth_m, dtype=float)
        if depth.ndim == 1:
            depth = depth[:, None]
        return cls(table=table, reflection=reflection_squared(components.wavenumber_radpm, draft_m, depth))

    def subset(self, positions: Any) -> DriftModel:
        """Drift model of a sub-batch, selected by position along the trial axis."""
        return DriftModel(table=self.table, reflection=self.reflection[positions])

    def root_table(self) -> NDArray[np.float64]:
        """See :func:`root_table`; shape (n_headings + 1, 6)."""
        return root_table(self.table)

    def scale(self, components: WaveComponents) -> NDArray[np.float64]:
        """Per-component factor ``a_j R(k_j)`` [m], shape (n_trials, n_components)."""
        return components.amplitude_m * np.sqrt(self.reflection)

    def weights(self, components: WaveComponents, heading_rad: ArrayLike) -> NDArray[np.float64]:
        """Newman weights at the craft's heading.

        Parameters
        ----------
        components : WaveComponents
            The seas, shape (n_trials, n_components).
        heading_rad : ndarray of shape (n_trials,)
            Craft heading [rad].

        Returns
        -------
        ndarray of shape (n_trials, n_components, 6)
            ``w^+`` and ``w^-`` for surge, sway and yaw [sqrt(N), sqrt(N),
            sqrt(N m)] (see the class notes).
        """
        psi = np.asarray(heading_rad, dtype=float).reshape(-1, 1)
        roots = _interp_rows(self.root_table(), components.direction_rad - psi)
        return roots * self.scale(components)[..., None]

    def mean_force(self, components: WaveComponents, heading_rad: ArrayLike) -> NDArray[np.float64]:
        """Mean drift load ``sum_j a_j^2 T_jj`` [N, N, N m], shape (n_trials, 3)."""
        w2 = self.weights(components, heading_rad) ** 2
        return (w2[..., 0::2] - w2[..., 1::2]).sum(axis=1)


def drift_force(
    model: DriftModel,
    components: WaveComponents,
    north_m: ArrayLike,
    east_m: ArrayLike,
    heading_rad: ArrayLike,
    t_s: float,
    weights: NDArray[np.float64] | None = None,
) -> NDArray[np.float64]:
    """Slowly varying drift load by Newman's approximation (numpy reference).

    Parameters
    ----------
    model : DriftModel
        Drift coefficients of the hull in these seas.
    components : WaveComponents
        The seas, shape (n_trials, n_components).
    north_m, east_m, heading_rad : ndarray of shape (n_trials,)
        Craft position [m] and heading [rad].
    t_s : float
        Time [s].
    weights : ndarray of shape (n_trials, n_components, 6), optional
        Newman weights from :meth:`DriftModel.weights`, when they are held
        over a step (evaluated at another heading than ``heading_rad``);
        computed at ``heading_rad`` when omitted.

    Returns
    -------
    ndarray of shape (n_trials, 3)
        Surge force [N], sway force [N] and yaw moment [N m] in the body
        frame; its time mean is :meth:`DriftModel.mean_force`.

    Notes
    -----
    This is the plain numpy twin of the compiled kernel in
    :mod:`wavebench.craft.kernel` and serves as its test oracle.
    """
    phase = components.phase_at(north_m, east_m, t_s)[:, 0, :]
    c, s = np.cos(phase), np.sin(phase)
    w = model.weights(components, heading_rad) if weights is None else weights
    z = np.einsum("nk,nki->ni", c, w) ** 2 + np.einsum("nk,nki->ni", s, w) ** 2
    return z[:, 0::2] - z[:, 1::2]
