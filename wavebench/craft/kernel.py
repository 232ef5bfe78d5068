"""The hot loop: a batch of craft stepping through their seas, compiled and in numpy.

:func:`advance` moves every trial of a batch ``n_steps`` fixed RK4 steps
forward: the 3-DOF manoeuvring model of :mod:`wavebench.craft.hull` driven
by the held generalised force ``tau_ext`` (actuators, wind), the
slowly varying wave drift of :mod:`wavebench.sea.drift` evaluated at the
craft's position, a current held over the call, and
optionally the built-in :class:`HoldPilot` (a heading-and-speed hold used by
manoeuvres and the benchmark). It is a numba kernel with ``prange`` over
trials and a vectorisable inner loop over wave components.

:func:`advance_reference` is the same equations in plain numpy, written
with :func:`wavebench.craft.hull.derivative` and
:func:`wavebench.sea.drift.drift_force`; it is the kernel's test oracle
(agreement to 1e-9 m over 600 s is checked in ``tests/test_kernel.py``).

Reproducibility: the kernel gives the same bits for a trial alone, in any
batch and however a run is split into calls, on a given machine. It is
compiled without fast-math: with reassociated sums the last bits depended
on how the compiler inlined the kernel into its caller, so a run compiled
afresh and the same run loaded from numba's cache could differ (the
vectorised component loops were about 15 % faster). On another CPU the
transcendental functions of the C library may round differently, which is
why results record the machine they ran on.

Model choices shared by both
----------------------------
* RK4 with ``tau_ext``, the current and the pilot's output held over a step
  (zero-order hold); the pilot is evaluated at the start of each step.
* The slowly varying drift load is sampled once per step at the predicted
  midpoint and held over the stages (``drift_sampling="midpoint"``, the
  default) or evaluated in every stage (``"stages"``); see :class:`Plant`.
* Newman weights (which depend on the heading through the drift heading
  table) are held while the heading stays within ``drift_heading_tol_rad``
  of the heading they were computed at, the *drift heading*, which is part
  of the state; they are refreshed at the start of a step when the heading
  has moved further. The component phases (which carry the encounter
  frequency) are evaluated at every stage's time and position.
"""

from __future__ import annotations

import dataclasses
import functools
from dataclasses import dataclass

import numba
import numpy as np
from numpy.typing import ArrayLike, NDArray

from ..core.errors import ParameterError
from ..core.trig import sincos
from ..sea.drift import DriftModel, drift_force
from ..sea.realisation import WaveComponents
from .hull import HullCoefficients, HullParams, derivative, hull_coefficients, param_batch_size

__all__ = ["DRIFT_SAMPLINGS", "DriftWorkspace", "HoldPilot", "Plant", "advance", "advance_reference"]

#: Allowed values of :attr:`Plant.drift_sampling`.
DRIFT_SAMPLINGS = ("midpoint", "stages")

_COEF_NAMES = (
    "m11", "m22", "m23", "m33", "i11", "i22", "i23", "i33",
    "x_u", "y_v", "y_r", "n_v", "n_r", "x_uu", "y_vv", "n_rr",
)  # fmt: skip
_TWO_PI = 2.0 * np.pi
#: Component-axis padding of the packed wave constants (AVX2 width x unroll).
_COMPONENT_BLOCK = 16


@dataclass(frozen=True)
class HoldPilot:
    """A heading-and-speed hold applied inside the plant loop.

    Surge force ``X = sat(k_u (u_ref - u), x_max)`` and yaw moment
    ``N = sat(-k_psi wrap(psi - psi_ref) - k_r r, n_max)``, recomputed at
    the start of every step and added to ``tau_ext``. Each field is an
    ndarray of shape (n_trials,).

    Parameters
    ----------
    u_ref_mps : surge speed reference [m/s]
    psi_ref_rad : heading reference [rad]
    k_u : surge gain [N s/m]
    k_psi : heading gain [N m/rad]
    k_r : yaw-rate gain [N m s/rad]
    x_max_n : surge force limit [N]
    n_max_nm : yaw moment limit [N m]
    """

    u_ref_mps: NDArray[np.float64]
    psi_ref_rad: NDArray[np.float64]
    k_u: NDArray[np.float64]
    k_psi: NDArray[np.float64]
    k_r: NDArray[np.float64]
    x_max_n: NDArray[np.float64]
    n_max_nm: NDArray[np.float64]

    def __post_init__(self) -> None:
        for f in dataclasses.fields(self):
            a = np.asarray(getattr(self, f.name), dtype=float)
            if a.ndim > 1 or not np.all(np.isfinite(a)):
                raise ParameterError(f.name, a, "must be finite, a scalar or an array of shape (n_trials,)")
            if f.name not in ("u_ref_mps", "psi_ref_rad") and np.any(a < 0.0):
                raise ParameterError(f.name, a, "must be >= 0 (gains and limits are magnitudes)")

    def packed(self, n_trials: int) -> NDArray[np.float64]:
        """Pilot parameters as an array of shape (n_trials, 7)."""
        cols = [self.u_ref_mps, self.psi_ref_rad, self.k_u, self.k_psi, self.k_r, self.x_max_n, self.n_max_nm]
        return np.ascontiguousarray(
            np.stack([np.broadcast_to(np.asarray(c, dtype=float), (n_trials,)) for c in cols], axis=1)
        )

    def tau(self, eta: NDArray[np.float64], nu: NDArray[np.float64]) -> NDArray[np.float64]:
        """Pilot output ``[X, 0, N]`` for states of shape (n_trials, 3)."""
        err = np.mod(eta[:, 2] - self.psi_ref_rad + np.pi, _TWO_PI) - np.pi
        x = np.clip(self.k_u * (self.u_ref_mps - nu[:, 0]), -self.x_max_n, self.x_max_n)
        n = np.clip(-self.k_psi * err - self.k_r * nu[:, 2], -self.n_max_nm, self.n_max_nm)
        return np.stack([x, np.zeros_like(x), n], axis=1)


@dataclass(frozen=True)
class DriftWorkspace:
    """Newman weights kept between kernel calls (see :func:`advance`).

    Parameters
    ----------
    weights : ndarray of shape (n_trials, 8, K_padded)
        Rows 0-5: the weights, valid for ``heading_rad``; rows 6-7: scratch
        for the component phasors (so a call allocates nothing per trial).
    heading_rad : ndarray of shape (n_trials,)
        Drift heading the weights were computed at (NaN: not yet computed).
    """

    weights: NDArray[np.float64]
    heading_rad: NDArray[np.float64]


@dataclass(frozen=True)
class Plant:
    """Hull coefficients and wave drift of one batch, ready for :func:`advance`.

    Parameters
    ----------
    hull : HullCoefficients
        From :func:`wavebench.craft.hull.hull_coefficients`.
    n_trials : int
        Batch size.
    components : WaveComponents or None
        The batch's seas; None for calm water.
    drift : DriftModel or None
        Drift coefficients of the hull in these seas; None for no drift.
    drift_heading_tol_rad : float
        Heading change [rad] after which the Newman weights are refreshed
        (default 0.25 deg, a quarter of the heading table's spacing).
    drift_sampling : {"midpoint", "stages"}
        ``midpoint`` (default): the slowly varying drift load is evaluated
        once per step, at the step's mid-time and the midpoint predicted from
        the start-of-step velocity, and held over the four RK4 stages — a
        second-order (midpoint-rule) sampling of a load whose bandwidth is
        the spread of the wave frequencies, far below 1/dt. ``stages``:
        evaluated at every RK4 stage's time and position (four times the
        trigonometry).
    """

    hull: HullCoefficients
    n_trials: int
    components: WaveComponents | None = None
    drift: DriftModel | None = None
    drift_heading_tol_rad: float = float(np.radians(0.25))
    drift_sampling: str = "midpoint"

    @classmethod
    def build(
        cls,
        hull: HullParams | HullCoefficients,
        n_trials: int,
        components: WaveComponents | None = None,
        drift: DriftModel | None = None,
        drift_heading_tol_rad: float = float(np.radians(0.25)),
        drift_sampling: str = "midpoint",
    ) -> Plant:
        """Check shapes and precompute the hull coefficients."""
        if isinstance(n_trials, bool) or not isinstance(n_trials, (int, np.integer)) or n_trials < 1:
            raise ParameterError("n_trials", n_trials, "must be an integer >= 1")
        if isinstance(hull, HullParams):
            size = param_batch_size(hull)
            if size is not None and size != n_trials:
                raise ParameterError("hull", size, f"per-trial hull parameters must have length n_trials = {n_trials}")
        if (components is None) != (drift is None):
            raise ParameterError("drift", drift, "give both components and drift, or neither")
        if components is not None and components.n_trials != n_trials:
            raise ParameterError("components", components.n_trials, f"must hold {n_trials} trials")
        if not 0.0 <= drift_heading_tol_rad < np.pi:
            raise ParameterError("drift_heading_tol_rad", drift_heading_tol_rad, "must be in [0, pi)")
        if drift_sampling not in DRIFT_SAMPLINGS:
            raise ParameterError("drift_sampling", drift_sampling, f"must be one of {DRIFT_SAMPLINGS}")
        return cls(
            hull=hull_coefficients(hull),
            n_trials=n_trials,
            components=components,
            drift=drift,
            drift_heading_tol_rad=float(drift_heading_tol_rad),
            drift_sampling=drift_sampling,
        )

    def workspace(self) -> DriftWorkspace:
        """A fresh :class:`DriftWorkspace` for this plant (one per run; not shared between runs)."""
        k = self.packed_waves[0].shape[2]
        return DriftWorkspace(weights=np.zeros((self.n_trials, 8, k)), heading_rad=np.full(self.n_trials, np.nan))

    @functools.cached_property
    def packed_hull(self) -> NDArray[np.float64]:
        """Hull coefficient columns as an array of shape (n_trials, 16) (computed once)."""
        cols = [np.broadcast_to(np.asarray(getattr(self.hull, k), dtype=float), (self.n_trials,)) for k in _COEF_NAMES]
        return np.ascontiguousarray(np.stack(cols, axis=1))

    @functools.cached_property
    def packed_waves(self) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
        """Per-component constants (n_trials, 6, K) and the root table (B+1, 6), computed once.

        Rows of the first array: omega, k cos(beta), k sin(beta), phase,
        a R (see :meth:`DriftModel.scale`), beta.
        """
        if self.components is None or self.drift is None:
            return np.zeros((self.n_trials, 6, 0)), np.zeros((2, 6))
        c = self.components
        rows = [
            c.omega_radps,
            c.wavenumber_radpm * np.cos(c.direction_rad),
            c.wavenumber_radpm * np.sin(c.direction_rad),
            c.phase_rad,
            self.drift.scale(c),
            c.direction_rad,
        ]
        packed = np.stack(rows, axis=1)
        # Pad the component axis to a multiple of the SIMD block with
        # zero-amplitude components (they add exact zeros), so the vectorised
        # loops need no scalar remainder.
        pad = -packed.shape[2] % _COMPONENT_BLOCK
        packed = np.pad(packed, ((0, 0), (0, 0), (0, pad)))
        return np.ascontiguousarray(packed), np.ascontiguousarray(self.drift.root_table())


def _as_state(x: ArrayLike, n: int, width: int, name: str) -> NDArray[np.float64]:
    a = np.asarray(x, dtype=float)
    if a.ndim == 1 and a.shape == (width,):
        a = np.broadcast_to(a, (n, width))
    if a.shape != (n, width):
        raise ParameterError(name, a, f"must have shape ({n}, {width})")
    return np.ascontiguousarray(a, dtype=float)


def advance(
    plant: Plant,
    eta: ArrayLike,
    nu: ArrayLike,
    step0: int,
    dt_s: float,
    n_steps: int,
    tau_ext: ArrayLike | None = None,
    current_ned: ArrayLike | None = None,
    pilot: HoldPilot | None = None,
    drift_heading_rad: ArrayLike | None = None,
    workspace: DriftWorkspace | None = None,
) -> tuple[NDArray[np.float64], NDArray[np.float64], NDArray[np.float64]]:
    """Advance every trial ``n_steps`` RK4 steps (compiled kernel).

    Parameters
    ----------
    plant : Plant
        Hull and seas of the batch.
    eta : ndarray of shape (n_trials, 3)
        ``[north, east, psi]`` at time ``step0 * dt_s`` [m, m, rad].
    nu : ndarray of shape (n_trials, 3)
        ``[u, v, r]`` over ground, body frame [m/s, m/s, rad/s].
    step0 : int
        Index of the first step; the time at step ``k`` is ``k * dt_s``
        (an integer count, so that splitting a run into calls cannot change
        the times by rounding).
    dt_s : float
        Step [s], > 0.
    n_steps : int
        Number of steps, >= 0.
    tau_ext : ndarray of shape (n_trials, 3), optional
        Generalised force held over the call [N, N, N m].
    current_ned : ndarray of shape (n_trials, 2), optional
        Current [m/s] held over the call.
    pilot : HoldPilot, optional
        Built-in heading-and-speed hold.
    drift_heading_rad : ndarray of shape (n_trials,), optional
        Heading at which the Newman weights were last computed [rad]
        (returned by the previous call); the current heading when omitted.
    workspace : DriftWorkspace, optional
        Newman weights kept between calls (:meth:`Plant.workspace`), so a
        loop that calls the kernel for one step at a time does not recompute
        them at every call. The results are the same bits with or without it.

    Returns
    -------
    eta, nu : ndarray of shape (n_trials, 3)
        States at time ``(step0 + n_steps) * dt_s``.
    drift_heading_rad : ndarray of shape (n_trials,)
        Drift heading to pass to the next call, so that splitting a run
        into calls does not change a bit of it.
    """
    n = plant.n_trials
    eta_a, nu_a, tau_a, cur_a, psi_w = _prepare(
        plant, eta, nu, step0, dt_s, n_steps, tau_ext, current_ned, drift_heading_rad
    )
    use_pilot = pilot is not None
    pil = pilot.packed(n) if pilot is not None else np.zeros((n, 7))
    waves, roots = plant.packed_waves
    if workspace is None:
        wbuf, wpsi, use_ws = np.zeros((1, 8, waves.shape[2])), np.zeros(1), False
    else:
        if workspace.weights.shape != (n, 8, waves.shape[2]):
            raise ParameterError("workspace", workspace.weights.shape, "must come from this plant's workspace()")
        wbuf, wpsi, use_ws = workspace.weights, workspace.heading_rad, True
    _advance_kernel(
        eta_a, nu_a, psi_w, tau_a, cur_a, plant.packed_hull, waves, roots, pil, use_pilot,
        int(step0), float(dt_s), int(n_steps), plant.drift_heading_tol_rad, plant.drift_sampling == "midpoint",
        wbuf, wpsi, use_ws,
    )  # fmt: skip
    return eta_a, nu_a, psi_w


def _prepare(plant, eta, nu, step0, dt_s, n_steps, tau_ext, current_ned, drift_heading_rad):
    n = plant.n_trials
    eta_a = _as_state(eta, n, 3, "eta").copy()
    nu_a = _as_state(nu, n, 3, "nu").copy()
    tau_a = np.zeros((n, 3)) if tau_ext is None else _as_state(tau_ext, n, 3, "tau_ext")
    cur_a = np.zeros((n, 2)) if current_ned is None else _as_state(current_ned, n, 2, "current_ned")
    if not dt_s > 0.0:
        raise ParameterError("dt_s", dt_s, "must be a finite number > 0")
    for name, value in (("n_steps", n_steps), ("step0", step0)):
        if isinstance(value, bool) or not isinstance(value, (int, np.integer)) or value < 0:
            raise ParameterError(name, value, "must be an integer >= 0")
    for name, arr in (("eta", eta_a), ("nu", nu_a), ("tau_ext", tau_a), ("current_ned", cur_a)):
        if not np.all(np.isfinite(arr)):
            raise ParameterError(name, arr, "must be finite")
    if drift_heading_rad is None:
        psi_w = eta_a[:, 2].copy()
    else:
        psi_w = np.array(np.broadcast_to(np.asarray(drift_heading_rad, dtype=float), (n,)))
    return eta_a, nu_a, tau_a, cur_a, psi_w


@numba.njit(inline="always", cache=True)
def _wrap(a: float) -> float:
    return a - _TWO_PI * np.floor((a + np.pi) / _TWO_PI)


@numba.njit(inline="always", cache=True)
def _drift_eval(
    x: float, y: float, t: float, om: np.ndarray, kc: np.ndarray, ks: np.ndarray, ep: np.ndarray,
    w: np.ndarray, cbuf: np.ndarray, sbuf: np.ndarray,
) -> tuple[float, float, float]:  # fmt: skip
    """Newman drift load at one point and time from held weights w (6, K).

    Two passes keep both loops vectorisable: the phasors of all components
    first (into the scratch arrays ``cbuf``, ``sbuf``), then the six complex
    sums, three at a time so that the accumulators stay in registers.
    """
    n_comp = om.shape[0]
    for j in range(n_comp):
        s, c = sincos(om[j] * t - (kc[j] * x + ks[j] * y) + ep[j])
        cbuf[j] = c
        sbuf[j] = s
    a0 = a1 = a2 = b0 = b1 = b2 = 0.0
    for j in range(n_comp):
        c = cbuf[j]
        s = sbuf[j]
        a0 += w[0, j] * c
        b0 += w[0, j] * s
        a1 += w[1, j] * c
        b1 += w[1, j] * s
        a2 += w[2, j] * c
        b2 += w[2, j] * s
    a3 = a4 = a5 = b3 = b4 = b5 = 0.0
    for j in range(n_comp):
        c = cbuf[j]
        s = sbuf[j]
        a3 += w[3, j] * c
        b3 += w[3, j] * s
        a4 += w[4, j] * c
        b4 += w[4, j] * s
        a5 += w[5, j] * c
        b5 += w[5, j] * s
    return (
        a0 * a0 + b0 * b0 - a1 * a1 - b1 * b1,
        a2 * a2 + b2 * b2 - a3 * a3 - b3 * b3,
        a4 * a4 + b4 * b4 - a5 * a5 - b5 * b5,
    )


@numba.njit(inline="always", cache=True)
def _hull_rhs(h: np.ndarray, psi: float, u: float, v: float, r: float, tx: float, ty: float, tn: float,
              vcn: float, vce: float) -> tuple[float, float, float, float, float, float]:  # fmt: skip
    """Scalar form of :func:`wavebench.craft.hull.derivative` (same arithmetic)."""
    cpsi = np.cos(psi)
    spsi = np.sin(psi)
    uc = cpsi * vcn + spsi * vce
    vc = -spsi * vcn + cpsi * vce
    ur = u - uc
    vr = v - vc
    m11, m22, m23 = h[0], h[1], h[2]
    cx = -(m22 * vr + m23 * r) * r
    cy = m11 * ur * r
    cn = (m22 - m11) * ur * vr + m23 * ur * r
    dx = -(h[8] + h[13] * abs(ur)) * ur
    dy = -(h[9] + h[14] * abs(vr)) * vr - h[10] * r
    dn = -h[11] * vr - (h[12] + h[15] * abs(r)) * r
    fx = tx - cx - dx
    fy = ty - cy - dy
    fn = tn - cn - dn
    urdot = h[4] * fx
    vrdot = h[5] * fy + h[6] * fn
    rdot = h[6] * fy + h[7] * fn
    return (cpsi * u - spsi * v, spsi * u + cpsi * v, r, urdot + r * vc, vrdot - r * uc, rdot)


@numba.njit(inline="always", cache=True)
def _weights(w: np.ndarray, beta: np.ndarray, scale: np.ndarray, roots: np.ndarray, psi: float) -> None:
    """Newman weights (6, K) at heading psi from the root table (B+1, 6)."""
    n_tab = roots.shape[0] - 1
    tab_scale = n_tab / _TWO_PI
    for j in range(beta.shape[0]):
        b = beta[j] - psi
        xb = (b - _TWO_PI * np.floor(b / _TWO_PI)) * tab_scale
        k = min(int(xb), n_tab - 1)
        f = xb - k
        for d in range(6):
            w[d, j] = scale[j] * (roots[k, d] * (1.0 - f) + roots[k + 1, d] * f)


@numba.njit(inline="always", cache=True)
def advance_one(x, y, psi, u, v, r, pw, h, om, kc, ks, ep, scale, beta, w, cb, sb, roots, tx0, ty0, tn0, vcn, vce,
                pil_row, use_pilot, step0, dt, n_steps, tol, midpoint):  # fmt: skip
    """One trial's ``n_steps`` RK4 steps: the body of :func:`advance`'s kernel, shared with the fused run.

    ``w`` must hold the Newman weights at the drift heading ``pw`` (rows
    0-5), ``cb``, ``sb`` are scratch of length K. Returns the new
    ``x, y, psi, u, v, r, pw`` (``w`` is refreshed in place).
    """
    n_comp = om.shape[0]
    pil = pil_row
    for step in range(n_steps):
        t = (step0 + step) * dt
        tx, ty, tn = tx0, ty0, tn0
        if use_pilot:
            err = _wrap(psi - pil[1])
            xp = min(max(pil[2] * (pil[0] - u), -pil[5]), pil[5])
            npl = min(max(-pil[3] * err - pil[4] * r, -pil[6]), pil[6])
            tx += xp
            tn += npl
        if n_comp > 0 and abs(_wrap(psi - pw)) > tol:
            pw = psi
            _weights(w, beta, scale, roots, pw)
        # drift load: once per step at the predicted midpoint, or in every stage
        fxm = fym = fnm = 0.0
        if n_comp > 0 and midpoint:
            cp = np.cos(psi)
            sp = np.sin(psi)
            xm = x + 0.5 * dt * (cp * u - sp * v)
            ym = y + 0.5 * dt * (sp * u + cp * v)
            fxm, fym, fnm = _drift_eval(xm, ym, t + 0.5 * dt, om, kc, ks, ep, w, cb, sb)
        stages = n_comp > 0 and not midpoint
        fx1, fy1, fn1 = fxm, fym, fnm
        if stages:
            fx1, fy1, fn1 = _drift_eval(x, y, t, om, kc, ks, ep, w, cb, sb)
        k1 = _hull_rhs(h, psi, u, v, r, tx + fx1, ty + fy1, tn + fn1, vcn, vce)
        fx2, fy2, fn2 = fxm, fym, fnm
        if stages:
            fx2, fy2, fn2 = _drift_eval(x + 0.5 * dt * k1[0], y + 0.5 * dt * k1[1], t + 0.5 * dt,
                                        om, kc, ks, ep, w, cb, sb)  # fmt: skip
        k2 = _hull_rhs(h, psi + 0.5 * dt * k1[2], u + 0.5 * dt * k1[3], v + 0.5 * dt * k1[4],
                       r + 0.5 * dt * k1[5], tx + fx2, ty + fy2, tn + fn2, vcn, vce)  # fmt: skip
        fx3, fy3, fn3 = fxm, fym, fnm
        if stages:
            fx3, fy3, fn3 = _drift_eval(x + 0.5 * dt * k2[0], y + 0.5 * dt * k2[1], t + 0.5 * dt,
                                        om, kc, ks, ep, w, cb, sb)  # fmt: skip
        k3 = _hull_rhs(h, psi + 0.5 * dt * k2[2], u + 0.5 * dt * k2[3], v + 0.5 * dt * k2[4],
                       r + 0.5 * dt * k2[5], tx + fx3, ty + fy3, tn + fn3, vcn, vce)  # fmt: skip
        fx4, fy4, fn4 = fxm, fym, fnm
        if stages:
            fx4, fy4, fn4 = _drift_eval(x + dt * k3[0], y + dt * k3[1], t + dt, om, kc, ks, ep, w, cb, sb)
        k4 = _hull_rhs(h, psi + dt * k3[2], u + dt * k3[3], v + dt * k3[4],
                       r + dt * k3[5], tx + fx4, ty + fy4, tn + fn4, vcn, vce)  # fmt: skip
        c6 = dt / 6.0
        x += c6 * (k1[0] + 2.0 * k2[0] + 2.0 * k3[0] + k4[0])
        y += c6 * (k1[1] + 2.0 * k2[1] + 2.0 * k3[1] + k4[1])
        psi += c6 * (k1[2] + 2.0 * k2[2] + 2.0 * k3[2] + k4[2])
        u += c6 * (k1[3] + 2.0 * k2[3] + 2.0 * k3[3] + k4[3])
        v += c6 * (k1[4] + 2.0 * k2[4] + 2.0 * k3[4] + k4[4])
        r += c6 * (k1[5] + 2.0 * k2[5] + 2.0 * k3[5] + k4[5])
    return x, y, psi, u, v, r, pw


@numba.njit(cache=True)
def advance_trial(x, y, psi, u, v, r, pw, h, om, kc, ks, ep, scale, beta, w, cb, sb, roots, tx0, ty0, tn0, vcn, vce,
                  pil_row, use_pilot, step0, dt, n_steps, tol, midpoint):  # fmt: skip
    """:func:`advance_one` compiled with the batch kernel's floating-point flags, to call from other kernels."""
    return advance_one(x, y, psi, u, v, r, pw, h, om, kc, ks, ep, scale, beta, w, cb, sb, roots, tx0, ty0, tn0, vcn,
                       vce, pil_row, use_pilot, step0, dt, n_steps, tol, midpoint)  # fmt: skip


@numba.njit(cache=True)
def weights_at(w: np.ndarray, beta: np.ndarray, scale: np.ndarray, roots: np.ndarray, psi: float) -> None:
    """Newman weights at heading ``psi`` into ``w`` (6, K), with the batch kernel's floating-point flags."""
    _weights(w, beta, scale, roots, psi)


@numba.njit(parallel=True, cache=True)
def _advance_kernel(eta, nu, psi_w, tau, cur, hull, waves, roots, pil, use_pilot, step0, dt, n_steps, tol, midpoint,
                    wbuf, wpsi, use_ws):  # fmt: skip
    n = eta.shape[0]
    n_comp = waves.shape[2]
    # scratch per trial allocated before the parallel loop: an allocation inside a prange body may be hoisted
    # and shared between iterations
    tmp = wbuf if use_ws else np.zeros((n, 8, n_comp))
    for i in numba.prange(n):
        beta = waves[i, 5]
        scale = waves[i, 4]
        w = tmp[i, :6]
        cb = tmp[i, 6]
        sb = tmp[i, 7]
        pw = psi_w[i]
        if n_comp > 0 and not (use_ws and wpsi[i] == pw):
            _weights(w, beta, scale, roots, pw)
        x, y, psi, u, v, r, pw = advance_one(
            eta[i, 0], eta[i, 1], eta[i, 2], nu[i, 0], nu[i, 1], nu[i, 2], pw, hull[i], waves[i, 0], waves[i, 1],
            waves[i, 2], waves[i, 3], scale, beta, w, cb, sb, roots, tau[i, 0], tau[i, 1], tau[i, 2], cur[i, 0],
            cur[i, 1], pil[i], use_pilot, step0, dt, n_steps, tol, midpoint,
        )  # fmt: skip
        eta[i, 0], eta[i, 1], eta[i, 2] = x, y, psi
        nu[i, 0], nu[i, 1], nu[i, 2] = u, v, r
        psi_w[i] = pw
        if use_ws:
            wpsi[i] = pw


def advance_reference(
    plant: Plant,
    eta: ArrayLike,
    nu: ArrayLike,
    step0: int,
    dt_s: float,
    n_steps: int,
    tau_ext: ArrayLike | None = None,
    current_ned: ArrayLike | None = None,
    pilot: HoldPilot | None = None,
    drift_heading_rad: ArrayLike | None = None,
) -> tuple[NDArray[np.float64], NDArray[np.float64], NDArray[np.float64]]:
    """Plain-numpy twin of :func:`advance`: the same equations, batched over trials.

    Parameters and returns are those of :func:`advance`. This is the test
    oracle for the compiled kernel and the fallback where numba is not
    wanted; it runs at numpy float64 speed.
    """
    eta, nu, tau0, cur, psi_w = _prepare(plant, eta, nu, step0, dt_s, n_steps, tau_ext, current_ned, drift_heading_rad)
    comps, model = plant.components, plant.drift
    waves = comps is not None and model is not None

    def rhs(e, v, t, tau, w):
        load = tau
        if waves:
            load = tau + drift_force(model, comps, e[:, 0], e[:, 1], e[:, 2], t, weights=w)
        return derivative(plant.hull, e, v, load, cur)

    w = model.weights(comps, psi_w) if waves else None
    for step in range(int(n_steps)):
        t = (int(step0) + step) * dt_s
        tau = tau0 + (pilot.tau(eta, nu) if pilot is not None else 0.0)
        moved = np.abs(np.mod(eta[:, 2] - psi_w + np.pi, _TWO_PI) - np.pi) > plant.drift_heading_tol_rad
        if waves and np.any(moved):
            psi_w = np.where(moved, eta[:, 2], psi_w)
            idx = np.flatnonzero(moved)
            w[idx] = model.subset(idx).weights(comps.subset(idx), psi_w[idx])
        if waves and plant.drift_sampling == "midpoint":
            cp, sp = np.cos(eta[:, 2]), np.sin(eta[:, 2])
            xm = eta[:, 0] + 0.5 * dt_s * (cp * nu[:, 0] - sp * nu[:, 1])
            ym = eta[:, 1] + 0.5 * dt_s * (sp * nu[:, 0] + cp * nu[:, 1])
            held = tau + drift_force(model, comps, xm, ym, eta[:, 2], t + 0.5 * dt_s, weights=w)
            k1 = derivative(plant.hull, eta, nu, held, cur)
            k2 = derivative(plant.hull, eta + 0.5 * dt_s * k1[0], nu + 0.5 * dt_s * k1[1], held, cur)
            k3 = derivative(plant.hull, eta + 0.5 * dt_s * k2[0], nu + 0.5 * dt_s * k2[1], held, cur)
            k4 = derivative(plant.hull, eta + dt_s * k3[0], nu + dt_s * k3[1], held, cur)
        else:
            k1 = rhs(eta, nu, t, tau, w)
            k2 = rhs(eta + 0.5 * dt_s * k1[0], nu + 0.5 * dt_s * k1[1], t + 0.5 * dt_s, tau, w)
            k3 = rhs(eta + 0.5 * dt_s * k2[0], nu + 0.5 * dt_s * k2[1], t + 0.5 * dt_s, tau, w)
            k4 = rhs(eta + dt_s * k3[0], nu + dt_s * k3[1], t + dt_s, tau, w)
        eta = eta + dt_s / 6.0 * (k1[0] + 2.0 * k2[0] + 2.0 * k3[0] + k4[0])
        nu = nu + dt_s / 6.0 * (k1[1] + 2.0 * k2[1] + 2.0 * k3[1] + k4[1])
    return eta, nu, psi_w
