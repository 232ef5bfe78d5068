"""Wave-frequency (first-order) motion of a craft in six DOFs from RAOs.

The two-time-scale model: the manoeuvring model carries the slow motion
(position, heading, speed); the wave-frequency motion computed here is
superposed on it so that sensors see heave, roll and pitch. For a sea made
of regular components (:class:`~wavebench.sea.realisation.WaveComponents`)
and an RAO table (:class:`~wavebench.sea.rao.RaoTable`), DOF ``i`` moves as

.. math::

    \\xi_i(t) = \\sum_j a_j |H_i(\\omega_j, \\beta_j - \\psi)|
    \\cos\\big(\\omega_j t - k_j (x_n \\cos\\beta_j + x_e \\sin\\beta_j)
    + \\varepsilon_j + \\arg H_i(\\omega_j, \\beta_j - \\psi)\\big),

evaluated at the craft's slowly varying position ``(x_n, x_e)`` and heading
``psi`` (``beta_j`` is the direction component ``j`` travels toward). When
the craft moves, the phase is taken at its moving position, so each
component is met at the encounter frequency
``omega_e = omega - k (v_n cos beta + v_e sin beta)`` without any explicit
encounter-frequency bookkeeping.

How forward speed enters
------------------------
Speed enters twice: (1) kinematically, through the moving evaluation point
(the Doppler shift above), for every table; (2) hydrodynamically, through
the RAO values, which hold at the table's ``speed_mps``. The RAO is looked
up at the absolute wave frequency omega and the relative direction; a table
computed at the craft's speed (e.g. :func:`~wavebench.sea.rao.closed_form_rao`
with ``speed_mps`` = service speed, which shifts resonances to the right
encounter frequencies) is the consistent choice; a zero-speed table used on
a moving craft gets the Doppler shift of the phases right but misplaces
resonances that depend on the encounter frequency. wavebench does not
switch tables with speed.

Units and axes of the (..., 6) arrays: [surge, sway, heave] in m along the
body axes (x forward, y starboard, z down: heave positive down), [roll,
pitch, yaw] in rad (roll starboard down, pitch bow up, yaw bow to
starboard), see :mod:`wavebench.sea.rao`.

References
----------
.. [1] M. St. Denis and W. J. Pierson, "On the motions of ships in confused
   seas", Trans. SNAME 61, 280–357 (1953) — linear superposition; response
   spectrum ``|H|^2 S``.
.. [2] O. M. Faltinsen, Sea Loads on Ships and Offshore Structures,
   Cambridge University Press (1990) — encounter frequency, response
   statistics.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ..core.errors import ParameterError
from .rao import DOFS, RaoTable
from .realisation import WaveComponents
from .spectra import SeaSpectrum, spectral_moment
from .spreading import DirectionalSpreading

__all__ = [
    "WaveMotion",
    "component_variance",
    "motion_at_point",
    "response_spectrum",
    "significant_amplitude",
    "wave_frequency_kinematics",
    "wave_frequency_motion",
]

# Upper bound on n_trials x n_points x n_components per evaluation chunk
# (the interpolated RAOs take 6 complex numbers per element: ~25 MB).
_CHUNK_ELEMENTS = 2**18


@dataclass(frozen=True)
class WaveMotion:
    """Wave-frequency displacement, velocity and acceleration in six DOFs.

    Attributes
    ----------
    displacement : ndarray of shape (n_trials, 6) or (n_trials, n_points, 6)
        [surge, sway, heave] [m] and [roll, pitch, yaw] [rad].
    velocity : ndarray, same shape
        Time derivatives [m/s, rad/s].
    acceleration : ndarray, same shape
        Second time derivatives [m/s^2, rad/s^2].
    """

    displacement: NDArray[np.float64]
    velocity: NDArray[np.float64]
    acceleration: NDArray[np.float64]


def _as_points(x: ArrayLike, n_trials: int, name: str) -> NDArray[np.float64]:
    a = np.asarray(x, dtype=float)
    if a.ndim == 0:
        return np.full((n_trials, 1), float(a))
    if a.ndim == 1:
        if a.shape[0] != n_trials:
            raise ParameterError(name, a, f"must have shape ({n_trials},) (one per trial)")
        return a[:, None]
    if a.ndim == 2 and a.shape[0] == n_trials:
        return a
    raise ParameterError(
        name, a, f"must be a scalar or of shape ({n_trials},) or ({n_trials}, n_points)"
    )


def _prepare(
    components: WaveComponents, inputs: dict[str, ArrayLike]
) -> tuple[dict[str, NDArray[np.float64]], bool]:
    if not isinstance(components, WaveComponents):
        raise ParameterError("components", type(components).__name__, "must be WaveComponents")
    n = components.n_trials
    arrays = {name: _as_points(value, n, name) for name, value in inputs.items()}
    two_d = any(np.ndim(v) == 2 for v in inputs.values())
    try:
        shape = np.broadcast_shapes(*(a.shape for a in arrays.values()))
    except ValueError:
        shapes = {k: a.shape for k, a in arrays.items()}
        raise ParameterError("inputs", shapes, "point axes must broadcast together") from None
    for finite_name, a in arrays.items():
        if not np.all(np.isfinite(a)):
            raise ParameterError(finite_name, a, "must be finite")
    return {k: np.broadcast_to(a, shape) for k, a in arrays.items()}, two_d


def _evaluate(
    components: WaveComponents,
    rao: RaoTable,
    p: dict[str, NDArray[np.float64]],
    derivatives: bool,
) -> tuple[NDArray[np.float64], ...]:
    """Sum over components; returns arrays of shape (6, n_trials, n_points)."""
    if not isinstance(rao, RaoTable):
        raise ParameterError("rao", type(rao).__name__, "must be a RaoTable")
    n, n_pts = p["north_m"].shape
    kc = max(components.n_components, 1)
    chunk = max(1, _CHUNK_ELEMENTS // max(n * kc, 1))
    a = components.amplitude_m[:, None, :]
    w = components.omega_radps[:, None, :]
    k = components.wavenumber_radpm[:, None, :]
    beta = components.direction_rad[:, None, :]
    eps = components.phase_rad[:, None, :]
    cb, sb = np.cos(beta), np.sin(beta)
    outs = [np.empty((len(DOFS), n, n_pts)) for _ in range(3 if derivatives else 1)]
    for start in range(0, n_pts, chunk):
        sl = slice(start, min(start + chunk, n_pts))
        xn = p["north_m"][:, sl, None]
        xe = p["east_m"][:, sl, None]
        t = p["t_s"][:, sl, None]
        # Same operations, in the same order, as WaveComponents.phase_at.
        phase = w * t - k * (xn * cb + xe * sb) + eps
        c, s = np.cos(phase), np.sin(phase)
        hr, hi = rao.evaluate_parts(w, beta - p["heading_rad"][:, sl, None])
        outs[0][:, :, sl] = np.sum(a * (hr * c - hi * s), axis=-1)
        if derivatives:
            vn = p["velocity_north_mps"][:, sl, None]
            ve = p["velocity_east_mps"][:, sl, None]
            we = w - k * (vn * cb + ve * sb)
            outs[1][:, :, sl] = np.sum(-a * we * (hr * s + hi * c), axis=-1)
            outs[2][:, :, sl] = np.sum(-a * we**2 * (hr * c - hi * s), axis=-1)
    return tuple(outs)


def _finish(x: NDArray[np.float64], two_d: bool) -> NDArray[np.float64]:
    out = np.moveaxis(x, 0, -1)
    return np.ascontiguousarray(out if two_d else out[:, 0, :])


def wave_frequency_motion(
    components: WaveComponents,
    rao: RaoTable,
    north_m: ArrayLike,
    east_m: ArrayLike,
    heading_rad: ArrayLike,
    t_s: ArrayLike,
) -> NDArray[np.float64]:
    """Wave-frequency displacement of each trial's craft in six DOFs.

    Parameters
    ----------
    components : WaveComponents
        The batch of seas, arrays of shape (n_trials, n_components).
    rao : RaoTable
        RAOs of the craft (one table for the batch).
    north_m, east_m : float or ndarray of shape (n_trials,) or (n_trials, n_points)
        Position of the craft's reference point in NED [m] (the slowly
        varying position from the manoeuvring model).
    heading_rad : float or ndarray, same shapes
        Craft heading (yaw of the slow model) [rad], clockwise from north.
    t_s : float or ndarray, same shapes
        Time [s].

    Returns
    -------
    ndarray of shape (n_trials, 6), or (n_trials, n_points, 6) if any input
    has a points axis
        [surge, sway, heave] [m], [roll, pitch, yaw] [rad] in the axes of
        :mod:`wavebench.sea.rao` (heave positive down).

    Notes
    -----
    See the module docstring for the sum and for how speed enters. No
    per-trial loop; long records are evaluated in chunks of points so that
    memory stays bounded.

    Examples
    --------
    >>> import numpy as np
    >>> from wavebench.core.streams import TrialStreams
    >>> from wavebench.sea.rao import closed_form_rao
    >>> from wavebench.sea.realisation import realise_sea
    >>> from wavebench.sea.spectra import SeaSpectrum
    >>> from wavebench.sea.spreading import DirectionalSpreading
    >>> sea = realise_sea(SeaSpectrum(kind="jonswap", hs_m=1.5, tp_s=7.0),
    ...     DirectionalSpreading(kind="cos2s", exponent=10.0, mean_dir_deg=0.0),
    ...     TrialStreams(seed=1, trials=range(3)), n_components=50)
    >>> table = closed_form_rao(length_m=25.0, beam_m=7.0, draft_m=1.8,
    ...     block_coefficient=0.55, speed_mps=3.0, omega_grid=np.linspace(0.1, 4.0, 80),
    ...     beta_grid=np.radians(np.arange(0.0, 360.0, 10.0)), roll_damping_ratio=0.1,
    ...     gm_m=1.2)
    >>> wave_frequency_motion(sea, table, 0.0, 0.0, 0.5, 10.0).shape
    (3, 6)
    """
    p, two_d = _prepare(
        components, {"north_m": north_m, "east_m": east_m, "heading_rad": heading_rad, "t_s": t_s}
    )
    (disp,) = _evaluate(components, rao, p, derivatives=False)
    return _finish(disp, two_d)


def wave_frequency_kinematics(
    components: WaveComponents,
    rao: RaoTable,
    north_m: ArrayLike,
    east_m: ArrayLike,
    heading_rad: ArrayLike,
    t_s: ArrayLike,
    *,
    velocity_north_mps: ArrayLike = 0.0,
    velocity_east_mps: ArrayLike = 0.0,
) -> WaveMotion:
    """Wave-frequency displacement, velocity and acceleration in six DOFs.

    Parameters
    ----------
    components, rao, north_m, east_m, heading_rad, t_s
        As for :func:`wave_frequency_motion`.
    velocity_north_mps, velocity_east_mps : float or ndarray, same shapes
        Velocity over ground of the reference point (slow motion) [m/s];
        sets the encounter frequencies.

    Returns
    -------
    WaveMotion
        Displacement, velocity and acceleration, each of the shape that
        :func:`wave_frequency_motion` returns.

    Notes
    -----
    With ``phi_j`` the total phase of component j at the moving point,
    ``d phi_j / dt = omega_e,j = omega_j - k_j (v_n cos beta_j + v_e sin beta_j)``:

    .. math::

        \\dot\\xi_i = -\\sum_j a_j \\omega_{e,j}\\,\\mathrm{Im}(H_{ij} e^{i\\phi_j}),
        \\qquad
        \\ddot\\xi_i = -\\sum_j a_j \\omega_{e,j}^2\\,\\mathrm{Re}(H_{ij} e^{i\\phi_j}).

    Approximations: the RAO is held fixed over the derivative (the change
    of ``beta_j - psi`` with the yaw rate of the slow motion is neglected),
    and so is the encounter frequency (the slow acceleration is
    neglected). Both are exact for a craft on a steady course at steady
    speed. The derivatives are those of the motion coordinates; for the
    small angles they equal the body angular rates and accelerations to
    first order. An IMU also senses gravity tilted by roll and pitch
    (``g * angle``, often larger than the translational acceleration at
    wave frequencies); that belongs to the sensor model.
    """
    p, two_d = _prepare(
        components,
        {
            "north_m": north_m,
            "east_m": east_m,
            "heading_rad": heading_rad,
            "t_s": t_s,
            "velocity_north_mps": velocity_north_mps,
            "velocity_east_mps": velocity_east_mps,
        },
    )
    disp, vel, acc = _evaluate(components, rao, p, derivatives=True)
    return WaveMotion(
        displacement=_finish(disp, two_d),
        velocity=_finish(vel, two_d),
        acceleration=_finish(acc, two_d),
    )


def motion_at_point(motion: ArrayLike, lever_arm_m: ArrayLike) -> NDArray[np.float64]:
    """Translation of a point on the hull from the six-DOF motion (small angles).

    Parameters
    ----------
    motion : ndarray of shape (..., 6)
        Six-DOF displacement (or velocity, or acceleration) of the
        reference point, e.g. from :func:`wave_frequency_motion`.
    lever_arm_m : ndarray of shape (3,) or broadcastable to (..., 3)
        Position of the point relative to the reference point in body axes
        (x forward, y starboard, z down) [m], e.g. a sensor's lever arm;
        ``(n_trials, 3)`` for per-trial arms with ``(n_trials, 6)`` motion.

    Returns
    -------
    ndarray of shape (..., 3)
        ``[x, y, z] + [roll, pitch, yaw] x r`` [m] (or m/s, m/s^2), in the
        body axes of the slow motion.

    Notes
    -----
    First order in the angles: the rotation matrix is ``I + [theta]_x``.
    Applied to velocities it gives ``v + omega x r``; applied to
    accelerations it gives ``a + alpha x r`` without the centripetal
    ``omega x (omega x r)``, which is second order in the wave amplitude.

    Examples
    --------
    >>> import numpy as np
    >>> motion = np.array([0.0, 0.0, 0.0, 0.1, 0.0, 0.0])  # 0.1 rad roll, starboard down
    >>> motion_at_point(motion, [0.0, 0.0, -10.0])  # mast top 10 m above: moves to starboard
    array([0., 1., 0.])
    """
    m = np.asarray(motion, dtype=float)
    r = np.asarray(lever_arm_m, dtype=float)
    if m.shape[-1:] != (6,):
        raise ParameterError("motion", m, "must have shape (..., 6)")
    if r.shape[-1:] != (3,):
        raise ParameterError("lever_arm_m", r, "must have shape (3,) or (..., 3)")
    return m[..., :3] + np.cross(m[..., 3:], r)


def component_variance(
    components: WaveComponents, rao: RaoTable, heading_rad: ArrayLike
) -> NDArray[np.float64]:
    """Variance of each DOF's wave-frequency motion over an infinitely long record.

    Parameters
    ----------
    components : WaveComponents
        The batch of seas.
    rao : RaoTable
        RAOs of the craft.
    heading_rad : float or ndarray of shape (n_trials,)
        Steady heading [rad].

    Returns
    -------
    ndarray of shape (n_trials, 6)
        ``sum_j a_j^2 |H_i(omega_j, beta_j - psi)|^2 / 2`` [m^2, rad^2].

    Notes
    -----
    The time average of the product of two components of different
    (encounter) frequencies vanishes over an infinite record, so the
    variance is the sum of the components' variances. This holds for a
    craft at rest and for a craft on a steady course at steady speed, as
    long as no two components share an encounter frequency and none has
    a zero encounter frequency.
    """
    psi = _as_points(heading_rad, components.n_trials, "heading_rad")[:, 0]
    h = rao.evaluate_by_dof(components.omega_radps, components.direction_rad - psi[:, None])
    var = 0.5 * np.sum(components.amplitude_m**2 * np.abs(h) ** 2, axis=-1)
    return np.ascontiguousarray(var.T)


def response_spectrum(
    rao: RaoTable,
    spectrum: SeaSpectrum,
    spreading: DirectionalSpreading,
    heading_rad: ArrayLike,
    omega_radps: ArrayLike,
    *,
    n_directions: int = 180,
) -> NDArray[np.float64]:
    """Response spectra of the six DOFs for a directional sea (linear theory).

    Parameters
    ----------
    rao : RaoTable
        RAOs of the craft.
    spectrum : SeaSpectrum
        Point spectrum S(omega); scalar or per-trial parameters.
    spreading : DirectionalSpreading
        Directional spreading D(theta); ``long_crested`` for a
        unidirectional sea.
    heading_rad : float or ndarray of shape (n_trials,)
        Craft heading [rad].
    omega_radps : ndarray of shape (n_freq,)
        Wave angular frequencies [rad/s], >= 0.
    n_directions : int
        Number of equally spaced directions over one turn for the
        directional integral (ignored for long-crested seas), >= 8.

    Returns
    -------
    ndarray of shape (n_trials, n_freq, 6)
        ``S_i(omega) = S(omega) integral |H_i(omega, theta - psi)|^2 D(theta) dtheta``
        [m^2 s/rad for translations, rad^2 s/rad for rotations]; n_trials is
        1 when every input is scalar.

    Notes
    -----
    The standard linear result of St. Denis & Pierson (1953): the response
    spectrum is the wave spectrum times the squared RAO modulus. It is given
    here on the absolute wave frequency; its integral (the variance) is the
    same on the encounter-frequency axis, higher moments are not. The
    directional integral uses the rectangle rule on a periodic grid (exact
    to high order for smooth spreading functions).

    References
    ----------
    St. Denis & Pierson (1953), Trans. SNAME 61.
    """
    w = np.asarray(omega_radps, dtype=float)
    if w.ndim != 1 or w.size < 1 or not np.all(np.isfinite(w)) or np.any(w < 0.0):
        raise ParameterError("omega_radps", w, "must be a 1-D array of finite frequencies >= 0")
    if (
        isinstance(n_directions, bool)
        or not isinstance(n_directions, (int, np.integer))
        or n_directions < 8
    ):
        raise ParameterError("n_directions", n_directions, "must be an integer >= 8")
    s = np.atleast_2d(spectrum.density(w))  # (n_s, n_freq)
    psi = np.atleast_1d(np.asarray(heading_rad, dtype=float))
    if psi.ndim != 1 or not np.all(np.isfinite(psi)):
        raise ParameterError("heading_rad", heading_rad, "must be a scalar or shape (n_trials,)")
    if spreading.kind == "long_crested":
        mean = np.atleast_1d(np.asarray(spreading.mean_toward_rad, dtype=float))
        n_tr = _common_trials(s.shape[0], psi.size, mean.size)
        rel = np.broadcast_to(mean, (n_tr,)) - np.broadcast_to(psi, (n_tr,))
        h2 = np.abs(rao.evaluate_by_dof(w[None, :], rel[:, None])) ** 2  # (6, n_tr, n_freq)
    else:
        theta = -np.pi + 2.0 * np.pi * (np.arange(n_directions) + 0.5) / n_directions
        d = np.atleast_2d(spreading.density(theta))  # (n_d, n_dir)
        n_tr = _common_trials(s.shape[0], psi.size, d.shape[0])
        rel = theta[None, :] - np.broadcast_to(psi, (n_tr,))[:, None]  # (n_tr, n_dir)
        dtheta = 2.0 * np.pi / n_directions
        weights = np.broadcast_to(d, (n_tr, n_directions))[:, None, :] * dtheta
        h2 = np.empty((len(DOFS), n_tr, w.size))
        chunk = max(1, _CHUNK_ELEMENTS // (n_tr * n_directions))
        for start in range(0, w.size, chunk):
            sl = slice(start, start + chunk)
            hc = rao.evaluate_by_dof(w[None, sl, None], rel[:, None, :])  # (6, n_tr, nf, n_dir)
            h2[:, :, sl] = np.sum(np.abs(hc) ** 2 * weights, axis=-1)
    out = h2 * np.broadcast_to(s, (n_tr, w.size))
    return np.ascontiguousarray(np.moveaxis(out, 0, -1))


def _common_trials(*sizes: int) -> int:
    n = {int(x) for x in sizes if int(x) != 1}
    if len(n) > 1:
        raise ParameterError(
            "n_trials", sorted(n), "per-trial spectrum, spreading and heading must agree in length"
        )
    return n.pop() if n else 1


def significant_amplitude(
    rao: RaoTable,
    spectrum: SeaSpectrum,
    spreading: DirectionalSpreading,
    heading_rad: ArrayLike,
    omega_radps: ArrayLike,
    *,
    n_directions: int = 180,
) -> NDArray[np.float64]:
    """Significant amplitude 2 sqrt(m0) of each DOF's response.

    Parameters
    ----------
    rao, spectrum, spreading, heading_rad, omega_radps, n_directions
        As for :func:`response_spectrum`; ``omega_radps`` must resolve the
        spectrum (it is the integration grid).

    Returns
    -------
    ndarray of shape (n_trials, 6)
        ``2 sqrt(m0_i)`` [m for translations, rad for rotations]: the
        response analogue of Hs/2 (Hs = 4 sqrt(m0)), i.e. the mean of the
        highest third of the response amplitudes for a narrow-banded
        Gaussian response.

    Notes
    -----
    ``m0_i`` is the integral of :func:`response_spectrum` over omega
    (Simpson's rule).
    """
    s = response_spectrum(
        rao, spectrum, spreading, heading_rad, omega_radps, n_directions=n_directions
    )
    w = np.asarray(omega_radps, dtype=float)
    m0 = np.asarray(spectral_moment(w, np.moveaxis(s, -1, 1), 0))  # (n_trials, 6)
    return 2.0 * np.sqrt(np.maximum(m0, 0.0))

