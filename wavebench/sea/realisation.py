"""Batches of independent irregular sea surfaces as sums of regular components.

Each trial gets its own sea: ``n_components`` regular waves whose
frequencies are drawn uniformly *within* equal-width bins of the spectrum's
band, so that no two components are commensurate and the record does not
repeat within a run (an equal-spacing sum repeats after ``2 pi / d_omega``).
Directions are drawn from the spreading function (one direction per
component, the "single direction per frequency" scheme), phases are uniform.
Everything for trial ``i`` is drawn in one block from its own stream, so a
trial's sea is bit-identical alone or in a batch of any size.

The elevation of the sea at a point ``(x_n, x_e)`` and time ``t`` is

.. math::

    \\zeta(x, t) = \\sum_j a_j \\cos(\\omega_j t - k_j (x_n \\cos\\beta_j
    + x_e \\sin\\beta_j) + \\varepsilon_j)

with ``beta_j`` the direction component ``j`` travels toward (clockwise from
north) and ``a_j = sqrt(2 S(omega_j) d_omega)``.

References
----------
Tucker, M. J., Challenor, P. G. & Carter, D. J. T. (1984). Numerical
simulation of a random sea: a common error and its effect upon wave group
statistics. Applied Ocean Research 6(2) — deterministic vs random
amplitudes. Faltinsen, O. M. (1990). Sea Loads on Ships and Offshore
Structures, ch. 2 — the component sum and its repetition period.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ..core.constants import G
from ..core.errors import ParameterError
from ..core.streams import TrialStreams
from .dispersion import wavenumber
from .spectra import SeaSpectrum
from .spreading import DirectionalSpreading

__all__ = ["AMPLITUDE_MODES", "WaveComponents", "realise_sea"]

#: Allowed values of ``amplitudes`` in :func:`realise_sea`.
AMPLITUDE_MODES = ("deterministic", "rayleigh")


@dataclass(frozen=True)
class WaveComponents:
    """The regular components of a batch of irregular seas.

    Parameters
    ----------
    amplitude_m : ndarray of shape (n_trials, n_components)
        Component amplitudes a_j [m].
    omega_radps : ndarray of shape (n_trials, n_components)
        Angular frequencies omega_j [rad/s].
    wavenumber_radpm : ndarray of shape (n_trials, n_components)
        Wave numbers k_j [rad/m] from the finite-depth dispersion relation.
    direction_rad : ndarray of shape (n_trials, n_components)
        Direction each component travels toward, beta_j [rad], clockwise
        from north.
    phase_rad : ndarray of shape (n_trials, n_components)
        Phases epsilon_j [rad].
    d_omega_radps : ndarray of shape (n_trials,)
        Bin width [rad/s] of each trial's frequency grid.
    """

    amplitude_m: NDArray[np.float64]
    omega_radps: NDArray[np.float64]
    wavenumber_radpm: NDArray[np.float64]
    direction_rad: NDArray[np.float64]
    phase_rad: NDArray[np.float64]
    d_omega_radps: NDArray[np.float64]

    def __post_init__(self) -> None:
        shape = np.shape(self.amplitude_m)
        for name in ("omega_radps", "wavenumber_radpm", "direction_rad", "phase_rad"):
            if np.shape(getattr(self, name)) != shape or len(shape) != 2:
                raise ParameterError(
                    name, getattr(self, name), f"must be an array of shape {shape} (n_trials, n_components)"
                )

    @property
    def n_trials(self) -> int:
        """Number of trials (seas) in the batch."""
        return int(self.amplitude_m.shape[0])

    @property
    def n_components(self) -> int:
        """Number of regular components per sea."""
        return int(self.amplitude_m.shape[1])

    def variance_m2(self) -> NDArray[np.float64]:
        """Variance of each trial's elevation record over infinite time [m^2].

        Returns
        -------
        ndarray of shape (n_trials,)
            ``sum_j a_j^2 / 2``; equals the spectrum's m0 on average over seas.
        """
        return 0.5 * np.sum(self.amplitude_m**2, axis=-1)

    def phase_at(self, north_m: ArrayLike, east_m: ArrayLike, t_s: ArrayLike) -> NDArray[np.float64]:
        """Total phase of each component at points and times [rad].

        Parameters
        ----------
        north_m, east_m : ndarray of shape (n_trials,) or (n_trials, n_points)
            Positions in the NED frame [m].
        t_s : float or ndarray broadcastable to the positions
            Times [s].

        Returns
        -------
        ndarray of shape (n_trials, n_points, n_components)
        """
        xn = _points(north_m, self.n_trials)
        xe = _points(east_m, self.n_trials)
        t = _points(t_s, self.n_trials) if np.ndim(t_s) else np.asarray(t_s, dtype=float)
        k = self.wavenumber_radpm[:, None, :]
        beta = self.direction_rad[:, None, :]
        kx = k * (xn[..., None] * np.cos(beta) + xe[..., None] * np.sin(beta))
        return self.omega_radps[:, None, :] * np.asarray(t)[..., None] - kx + self.phase_rad[:, None, :]

    def elevation(self, north_m: ArrayLike, east_m: ArrayLike, t_s: ArrayLike) -> NDArray[np.float64]:
        """Sea-surface elevation at points and times [m], positive up.

        Parameters
        ----------
        north_m, east_m : ndarray of shape (n_trials,) or (n_trials, n_points)
            Positions in the NED frame [m].
        t_s : float or ndarray broadcastable to (n_trials, n_points)
            Times [s].

        Returns
        -------
        ndarray of shape (n_trials, n_points)

        Notes
        -----
        Memory grows as n_trials x n_points x n_components; evaluate long
        records in chunks of time.
        """
        phase = self.phase_at(north_m, east_m, t_s)
        return np.einsum("nk,npk->np", self.amplitude_m, np.cos(phase))

    def encounter_omega(self, speed_mps: ArrayLike, heading_rad: ArrayLike) -> NDArray[np.float64]:
        """Encounter frequencies of the components for craft moving steadily.

        Parameters
        ----------
        speed_mps : float or ndarray of shape (n_trials,)
            Speed over ground [m/s].
        heading_rad : float or ndarray of shape (n_trials,)
            Course over ground [rad], clockwise from north.

        Returns
        -------
        ndarray of shape (n_trials, n_components)
            ``omega_e = omega - k U cos(beta - chi)`` [rad/s]; negative values
            mean the craft overtakes the component (following seas).
        """
        u = np.asarray(speed_mps, dtype=float).reshape(-1, 1)
        chi = np.asarray(heading_rad, dtype=float).reshape(-1, 1)
        return self.omega_radps - self.wavenumber_radpm * u * np.cos(self.direction_rad - chi)

    def subset(self, positions: Any) -> WaveComponents:
        """Components of a sub-batch, selected by position along the trial axis."""
        return WaveComponents(
            amplitude_m=self.amplitude_m[positions],
            omega_radps=self.omega_radps[positions],
            wavenumber_radpm=self.wavenumber_radpm[positions],
            direction_rad=self.direction_rad[positions],
            phase_rad=self.phase_rad[positions],
            d_omega_radps=self.d_omega_radps[positions],
        )


def _points(x: ArrayLike, n_trials: int) -> NDArray[np.float64]:
    a = np.asarray(x, dtype=float)
    if a.ndim == 0:
        return np.full((n_trials, 1), float(a))
    if a.ndim == 1:
        return a[:, None]
    return a


def _per_trial(x: Any, n_trials: int, name: str) -> NDArray[np.float64]:
    a = np.asarray(x, dtype=float)
    if a.ndim == 0:
        return np.full(n_trials, float(a))
    if a.shape != (n_trials,):
        raise ParameterError(name, x, f"must be a scalar or an array of shape ({n_trials},), one per trial")
    return a


def _check_trial_lengths(spectrum: SeaSpectrum, spreading: DirectionalSpreading, n_trials: int) -> None:
    """Per-trial parameters of ``spectrum`` and ``spreading`` must have shape (n_trials,)."""
    fields = [
        ("spectrum.hs_m", spectrum.hs_m),
        ("spectrum.tp_s", spectrum.tp_s),
        ("spectrum.gamma", spectrum.gamma),
        ("spreading.exponent", spreading.exponent),
        ("spreading.mean_dir_deg", spreading.mean_dir_deg),
    ]
    for name, value in fields:
        if value is None or np.ndim(value) == 0:
            continue
        if np.shape(value) != (n_trials,):
            raise ParameterError(
                name,
                value,
                f"must be a scalar or an array of shape ({n_trials},), one per trial of streams "
                f"(streams.n_trials = {n_trials}); got shape {np.shape(value)}",
            )


def realise_sea(
    spectrum: SeaSpectrum,
    spreading: DirectionalSpreading,
    streams: TrialStreams,
    *,
    n_components: int = 100,
    depth_m: ArrayLike = np.inf,
    band_fraction: float = 1e-3,
    amplitudes: str = "deterministic",
    g: float = G,
) -> WaveComponents:
    """Draw one irregular sea per trial of the batch.

    Parameters
    ----------
    spectrum : SeaSpectrum
        Point spectrum; per-trial parameters must have shape (n_trials,) in
        the order of ``streams.trials``.
    spreading : DirectionalSpreading
        Directional spreading (``long_crested`` for a unidirectional sea).
    streams : TrialStreams
        Per-trial random streams; the purpose ``"sea.components"`` is used.
    n_components : int
        Number of regular components per sea, >= 1.
    depth_m : float or ndarray of shape (n_trials,)
        Water depth for the dispersion relation [m]; ``inf`` for deep water.
    band_fraction : float
        Share of m0 left outside the simulated band (see
        :meth:`SeaSpectrum.frequency_band`).
    amplitudes : {"deterministic", "rayleigh"}
        ``deterministic``: a_j = sqrt(2 S d_omega); ``rayleigh``: a_j^2 is
        exponentially distributed with that mean (Tucker et al. 1984).
    g : float
        Acceleration of gravity [m/s^2].

    Returns
    -------
    WaveComponents
        Arrays of shape (n_trials, n_components).

    Raises
    ------
    ParameterError
        Naming the field (e.g. ``spectrum.hs_m``) when a per-trial parameter
        of ``spectrum`` or ``spreading`` does not have shape
        ``(streams.n_trials,)``; for a bad ``n_components``, ``amplitudes``
        or ``depth_m``.

    Examples
    --------
    >>> from wavebench.core.streams import TrialStreams
    >>> sea = SeaSpectrum(kind="jonswap", hs_m=2.0, tp_s=8.0)
    >>> spread = DirectionalSpreading(kind="cos2s", exponent=8.0, mean_dir_deg=270.0)
    >>> comps = realise_sea(sea, spread, TrialStreams(seed=3, trials=range(4)), n_components=50)
    >>> comps.amplitude_m.shape
    (4, 50)
    """
    if isinstance(n_components, bool) or not isinstance(n_components, (int, np.integer)) or n_components < 1:
        raise ParameterError("n_components", n_components, "must be an integer >= 1")
    if amplitudes not in AMPLITUDE_MODES:
        raise ParameterError("amplitudes", amplitudes, f"must be one of {AMPLITUDE_MODES}")
    n = streams.n_trials
    _check_trial_lengths(spectrum, spreading, n)
    k_count = int(n_components)
    lo, hi = spectrum.frequency_band(band_fraction)
    lo = _per_trial(lo, n, "spectrum.tp_s")
    hi = _per_trial(hi, n, "spectrum.tp_s")
    d_omega = (hi - lo) / k_count

    # One block per trial: rows are (frequency jitter, phase, direction, amplitude).
    u = streams.draw("sea.components", lambda rng: rng.random((4, k_count)))
    u = u.reshape(n, 4, k_count)
    omega = lo[:, None] + (np.arange(k_count)[None, :] + u[:, 0, :]) * d_omega[:, None]
    phase = 2.0 * np.pi * u[:, 1, :]
    direction = spreading.directions_from_uniform(u[:, 2, :])
    direction = np.broadcast_to(direction, (n, k_count)).copy()

    density = spectrum.density(omega)
    variance = np.broadcast_to(density * d_omega[:, None], (n, k_count))
    if amplitudes == "deterministic":
        amp = np.sqrt(2.0 * variance)
    else:
        # -log(1 - u) is Exp(1); 1 - u lies in (0, 1], so the log is finite.
        amp = np.sqrt(2.0 * variance * -np.log1p(-u[:, 3, :]))

    depth = _per_trial(depth_m, n, "depth_m")
    if np.any(~(depth > 0.0)):
        raise ParameterError("depth_m", depth_m, "must be > 0 (inf for deep water)")
    k = wavenumber(omega, depth[:, None], g=g)
    return WaveComponents(
        amplitude_m=amp,
        omega_radps=omega,
        wavenumber_radpm=np.asarray(k, dtype=float),
        direction_rad=direction,
        phase_rad=phase,
        d_omega_radps=d_omega,
    )
