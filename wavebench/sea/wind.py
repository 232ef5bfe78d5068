"""Wind: mean speed plus NPD (Frøya) gusts, and wind loads on a craft.

Conventions
-----------
* The wind direction at the spec boundary is the direction the wind comes
  **from**, degrees clockwise from north (meteorological and nautical
  usage): ``direction_from_deg = 270`` is a westerly wind, blowing toward
  the east. Angles are radians inside the functions.
* ``speed_mps`` is the 1-hour mean wind speed ``U0`` at 10 m above sea
  level, the reference of the NPD wind model. The mean at the craft's
  windage height follows the NPD logarithmic profile.
* Gusts are longitudinal (along the mean direction): the speed is
  ``U(z) + u(t)`` with ``u`` a sum of ``n_components`` cosines whose
  amplitudes come from the NPD spectrum integrated over logarithmically
  spaced frequency bins, whose frequencies are drawn uniformly inside each
  bin per trial and whose phases are uniform per trial. With jittered
  frequencies the record does not repeat within a run.
* Outputs are batched over a leading trial axis N.

Wind loads use Fossen's approximate coefficient curves (or a user table)
in the body frame (x forward, y starboard, z down; yaw positive to
starboard)::

    tau_wind = 0.5 rho_air V_rw**2 [C_X A_Fw, C_Y A_Lw, C_N A_Lw L_oa]
    C_X = -c_x cos(gamma_rw),  C_Y = c_y sin(gamma_rw),  C_N = c_n sin(2 gamma_rw)

with the relative wind ``u_rw = u - u_w``, ``v_rw = v - v_w`` (craft
velocity over ground minus air velocity, body axes),
``V_rw = sqrt(u_rw**2 + v_rw**2)`` and the angle of attack
``gamma_rw = -atan2(v_rw, u_rw)`` (Fossen's definitions as remembered, not
re-checked; the signs below are what the load tests check): 0 for a
relative wind from dead ahead,
-90 deg from the starboard beam, +90 deg from the port beam, 180 deg from
astern. A head wind gives a negative surge force; a wind from starboard
pushes the craft to port.

References
----------
.. [1] DNV-RP-C205, *Environmental conditions and environmental loads*
   (2010), wind section: the NPD (Frøya) wind spectrum
   ``S(f) = 320 (U0/10)**2 (z/10)**0.45 / (1 + f~**n)**(5/(3n))``,
   ``f~ = 172 f (z/10)**(2/3) (U0/10)**(-3/4)``, ``n = 0.468``, with ``S``
   in m^2/s^2/Hz and ``f`` in Hz; mean profile
   ``U(z) = U0 (1 + C ln(z/10))``, ``C = 5.73e-2 sqrt(1 + 0.148 U0)``.
   (Formulas from memory; the spectrum was cross-read against a
   third-party implementation, the profile was not re-checked.)
.. [2] T. I. Fossen, *Handbook of Marine Craft Hydrodynamics and Motion
   Control*, 2nd ed., Wiley 2021, wind forces chapter: approximate
   coefficients ``C_X = -c_x cos(gamma_rw)``, ``C_Y = c_y sin(gamma_rw)``,
   ``C_N = c_n sin(2 gamma_rw)`` with typical ``c_x`` 0.50-0.90,
   ``c_y`` 0.70-0.95, ``c_n`` 0.05-0.20 (from memory, not re-checked).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..core.constants import RHO_AIR
from ..core.errors import ParameterError
from ..core.frames import wrap_pi
from ..core.params import Params, bounded
from ..core.streams import TrialStreams

__all__ = [
    "GUST_SPECTRA",
    "NPD_EXPONENT",
    "WindCoefficientTable",
    "WindParams",
    "WindState",
    "WindageParams",
    "fossen_coefficients",
    "gust_speed",
    "init_wind",
    "npd_mean_speed",
    "npd_spectrum",
    "relative_wind",
    "table_coefficients",
    "wind_loads",
    "wind_loads_on_craft",
    "wind_speed",
    "wind_speed_series",
    "wind_velocity_ned",
]

#: Gust spectra known to :class:`WindParams`.
GUST_SPECTRA = ("npd", "none")
#: Exponent ``n`` of the NPD spectrum (DNV-RP-C205; value from memory).
NPD_EXPONENT = 0.468

_TWO_PI = 2.0 * math.pi


# ---------------------------------------------------------------------------
# NPD wind model
# ---------------------------------------------------------------------------


def npd_spectrum(f_hz: Any, u10_mps: Any, z_m: Any = 10.0) -> np.ndarray:
    """NPD (Frøya) spectrum of the longitudinal wind speed.

    Parameters
    ----------
    f_hz : float or ndarray
        Frequency [Hz], >= 0.
    u10_mps : float or ndarray
        1-hour mean wind speed at 10 m, ``U0`` [m/s], >= 0.
    z_m : float or ndarray
        Height above sea level [m], > 0.

    Returns
    -------
    ndarray
        One-sided spectral density [m^2/s^2 per Hz], broadcast over the
        inputs; zero where ``U0 = 0``.

    Notes
    -----
    DNV-RP-C205 (2010), wind section:
    ``S(f) = 320 (U0/10)**2 (z/10)**0.45 / (1 + f~**n)**(5/(3n))``,
    ``f~ = 172 f (z/10)**(2/3) (U0/10)**(-0.75)``, ``n = 0.468``.

    Examples
    --------
    >>> round(float(npd_spectrum(0.0, 10.0)), 12)  # S(0) = 320 at U0 = 10 m/s, z = 10 m
    320.0
    """
    f = np.asarray(f_hz, dtype=float)
    u0 = np.asarray(u10_mps, dtype=float)
    z = np.asarray(z_m, dtype=float)
    if np.any(~(f >= 0)):
        raise ParameterError("f_hz", f, "must be >= 0 (and not NaN)")
    if np.any(~(u0 >= 0)):
        raise ParameterError("u10_mps", u0, "must be >= 0 (and not NaN)")
    if np.any(~(z > 0)):
        raise ParameterError("z_m", z, "must be > 0 (and not NaN)")
    n = NPD_EXPONENT
    ratio = np.where(u0 > 0, u0, 1.0) / 10.0  # avoid 0**-0.75; masked below
    f_tilde = 172.0 * f * (z / 10.0) ** (2.0 / 3.0) * ratio**-0.75
    s = 320.0 * ratio**2 * (z / 10.0) ** 0.45 / (1.0 + f_tilde**n) ** (5.0 / (3.0 * n))
    return np.where(u0 > 0, s, 0.0)


def npd_mean_speed(u10_mps: Any, z_m: Any) -> np.ndarray:
    """1-hour mean wind speed at height ``z`` from the NPD logarithmic profile.

    Parameters
    ----------
    u10_mps : float or ndarray
        1-hour mean speed at 10 m ``U0`` [m/s], >= 0.
    z_m : float or ndarray
        Height above sea level [m], > 0.

    Returns
    -------
    ndarray
        ``U0 (1 + C ln(z/10))`` with ``C = 5.73e-2 sqrt(1 + 0.148 U0)``
        [m/s], clipped at zero very close to the surface.

    Examples
    --------
    >>> float(npd_mean_speed(15.0, 10.0))
    15.0
    """
    u0 = np.asarray(u10_mps, dtype=float)
    z = np.asarray(z_m, dtype=float)
    if np.any(~(z > 0)):
        raise ParameterError("z_m", z, "must be > 0 (and not NaN)")
    c = 5.73e-2 * np.sqrt(1.0 + 0.148 * u0)
    return np.maximum(u0 * (1.0 + c * np.log(z / 10.0)), 0.0)


# ---------------------------------------------------------------------------
# Parameters and state
# ---------------------------------------------------------------------------


def _check_per_trial(params: Params, names: tuple[str, ...]) -> int | None:
    """Fields ``names`` of ``params`` are scalars or arrays of one shape (n_trials,).

    Returns the common length, or None if all are scalars. The error names the
    field at fault: a field with more than one dimension, or the first whose
    length differs from the first per-trial field's.
    """
    ref: tuple[str, int] | None = None
    for name in names:
        value = getattr(params, name)
        if np.ndim(value) > 1:
            raise ParameterError(
                name, value, f"must be a scalar or an array of shape (n_trials,), got shape {np.shape(value)}"
            )
        if np.ndim(value) == 0:
            continue
        n = np.shape(value)[0]
        if ref is None:
            ref = (name, n)
        elif n != ref[1]:
            raise ParameterError(
                name, value, f"must have one entry per trial like {ref[0]} ({ref[1]} trials), got {n}"
            )
    return None if ref is None else ref[1]


_WIND_PER_TRIAL = ("speed_mps", "direction_from_deg", "height_m")


@dataclass(frozen=True, kw_only=True)
class WindParams(Params):
    """Mean wind and gust model.

    Parameters
    ----------
    speed_mps : float or ndarray of shape (n_trials,)
        1-hour mean wind speed at 10 m above sea level ``U0`` [m/s], >= 0.
    direction_from_deg : float or ndarray of shape (n_trials,)
        Direction the wind comes FROM, clockwise from north [deg].
    height_m : float or ndarray of shape (n_trials,)
        Height above sea level of the craft's centre of windage [m], > 0;
        the mean and the gust spectrum are taken at this height.
    gust_spectrum : {"npd", "none"}
        Gust spectrum; ``"none"`` gives a steady wind.
    n_components : int
        Number of gust components (frequency bins), >= 1.
    f_min_hz, f_max_hz : float
        Frequency band of the gusts [Hz]. The default lower limit 1/3600 Hz
        matches the 1-hour averaging of ``U0``; variance below it is part of
        the mean.

    Raises
    ------
    ParameterError
        Naming the field, when ``speed_mps``, ``direction_from_deg`` or
        ``height_m`` is neither a scalar nor of shape (n_trials,), or two of
        them differ in length.

    Examples
    --------
    >>> WindParams(speed_mps=12.0, direction_from_deg=270.0).n_components
    200
    """

    speed_mps: float = bounded(0.0, ge=0.0, unit="m/s", doc="1-hour mean speed at 10 m")
    direction_from_deg: float = bounded(
        0.0, ge=-360.0, le=360.0, unit="deg", doc="direction the wind comes from"
    )
    height_m: float = bounded(10.0, gt=0.0, unit="m", doc="height of the centre of windage")
    gust_spectrum: str = "npd"
    n_components: int = bounded(200, ge=1, integer=True, doc="number of gust components")
    f_min_hz: float = bounded(1.0 / 3600.0, gt=0.0, unit="Hz", doc="lowest gust frequency")
    f_max_hz: float = bounded(0.5, gt=0.0, unit="Hz", doc="highest gust frequency")

    def _check(self) -> None:
        if self.gust_spectrum not in GUST_SPECTRA:
            raise ParameterError(
                "gust_spectrum", self.gust_spectrum, f"must be one of {GUST_SPECTRA}"
            )
        for name in ("n_components", "f_min_hz", "f_max_hz"):
            if np.ndim(getattr(self, name)) != 0:
                raise ParameterError(
                    name, getattr(self, name), "must be a scalar (shared by trials)"
                )
        object.__setattr__(self, "n_components", int(self.n_components))
        if not self.f_max_hz > self.f_min_hz:
            raise ParameterError("f_max_hz", self.f_max_hz, f"must be > f_min_hz = {self.f_min_hz}")
        _check_per_trial(self, _WIND_PER_TRIAL)


@dataclass(frozen=True)
class WindState:
    """Per-trial wind realisation (drawn once per trial by :func:`init_wind`).

    Parameters
    ----------
    mean_speed_mps : ndarray of shape (n_trials,)
        Mean speed at the windage height [m/s].
    direction_from_rad : ndarray of shape (n_trials,)
        Direction the wind comes from [rad].
    freqs_hz, amplitudes_mps, phases_rad : ndarray of shape (n_trials, n_components)
        Gust components ``a cos(2 pi f t + phase)``.
    """

    mean_speed_mps: np.ndarray
    direction_from_rad: np.ndarray
    freqs_hz: np.ndarray
    amplitudes_mps: np.ndarray
    phases_rad: np.ndarray

    @property
    def n_trials(self) -> int:
        """Number of trials."""
        return int(self.mean_speed_mps.shape[0])


# 8-point Gauss-Legendre rule on [-1, 1] for the bin integrals of the spectrum.
_GL_NODES, _GL_WEIGHTS = np.polynomial.legendre.leggauss(8)


def init_wind(params: WindParams, streams: TrialStreams) -> WindState:
    """Draw the per-trial gust components (one block per trial).

    Parameters
    ----------
    params : WindParams
    streams : TrialStreams
        Per-trial streams; draws a (2, n_components) block of uniforms per
        trial from ``"wind.gust"`` (frequency jitter and phase). The draws do
        not depend on the wind speed, so sweeps over speed keep common
        random numbers.

    Returns
    -------
    WindState

    Raises
    ------
    ParameterError
        Naming the field, when a per-trial parameter does not have shape
        ``(streams.n_trials,)``.

    Notes
    -----
    Bin ``k`` spans ``[f_k, f_(k+1)]`` of a geometric grid from ``f_min_hz``
    to ``f_max_hz``; its component has frequency ``f_k + U (f_(k+1) - f_k)``
    with ``U`` uniform on [0, 1), a uniform random phase, and amplitude
    ``sqrt(2 * integral of S over the bin)`` (8-point Gauss--Legendre), so the
    variance of the gust record equals the integral of the spectrum over the
    band.
    """
    n = streams.n_trials
    for name in _WIND_PER_TRIAL:
        value = getattr(params, name)
        if np.ndim(value) != 0 and np.shape(value) != (n,):
            raise ParameterError(
                name,
                value,
                f"must be a scalar or an array of shape ({n},), one per trial of streams "
                f"(streams.n_trials = {n}); got shape {np.shape(value)}",
            )
    u0 = np.broadcast_to(np.asarray(params.speed_mps, dtype=float), (n,)).copy()
    z = np.broadcast_to(np.asarray(params.height_m, dtype=float), (n,)).copy()
    beta = np.broadcast_to(np.deg2rad(params.direction_from_deg), (n,)).copy()
    mean = npd_mean_speed(u0, z)
    if params.gust_spectrum == "none":
        empty = np.zeros((n, 0))
        return WindState(mean, beta, empty, empty.copy(), empty.copy())
    k = params.n_components
    edges = np.geomspace(params.f_min_hz, params.f_max_hz, k + 1)
    lo, width = edges[:-1], np.diff(edges)
    draws = streams.draw("wind.gust", lambda rng: rng.random((2, k)))
    if draws.ndim != 3:  # empty batch
        draws = np.zeros((0, 2, k))
    freqs = lo + draws[:, 0] * width
    phases = _TWO_PI * draws[:, 1]
    nodes = lo[:, None] + 0.5 * width[:, None] * (_GL_NODES + 1.0)  # (k, 8)
    dens = npd_spectrum(nodes, u0[:, None, None], z[:, None, None])  # (n, k, 8)
    integrals = 0.5 * width * np.sum(dens * _GL_WEIGHTS, axis=-1)
    amps = np.sqrt(2.0 * integrals)
    return WindState(mean, beta, freqs, amps, phases)


# ---------------------------------------------------------------------------
# Evaluation
# ---------------------------------------------------------------------------


def gust_speed(state: WindState, t_s: Any) -> np.ndarray:
    """Gust (zero-mean) part of the wind speed at time ``t_s``.

    Parameters
    ----------
    state : WindState
    t_s : float or ndarray of shape (n_trials,)
        Time [s].

    Returns
    -------
    ndarray of shape (n_trials,)
        ``sum_k a_k cos(2 pi f_k t + phase_k)`` [m/s].
    """
    n = state.n_trials
    try:
        t = np.broadcast_to(np.asarray(t_s, dtype=float), (n,))
    except ValueError:
        raise ParameterError(
            "t_s", np.asarray(t_s), f"must be a scalar or have shape ({n},)"
        ) from None
    arg = _TWO_PI * state.freqs_hz * t[:, None] + state.phases_rad
    return np.sum(state.amplitudes_mps * np.cos(arg), axis=-1)


def wind_speed(state: WindState, t_s: Any) -> np.ndarray:
    """Wind speed at the windage height at time ``t_s``: mean plus gust, >= 0.

    Parameters
    ----------
    state : WindState
    t_s : float or ndarray of shape (n_trials,)
        Time [s].

    Returns
    -------
    ndarray of shape (n_trials,)
        Speed [m/s], clipped at zero (a gust cannot reverse the wind).
    """
    return np.maximum(state.mean_speed_mps + gust_speed(state, t_s), 0.0)


def wind_speed_series(state: WindState, t_s: Any, *, include_mean: bool = True) -> np.ndarray:
    """Wind speed (or the gust part alone) on a common time grid.

    Parameters
    ----------
    state : WindState
    t_s : ndarray of shape (n_times,)
        Times [s].
    include_mean : bool
        Add the mean and clip at zero (as :func:`wind_speed`) when True;
        return the zero-mean gust when False.

    Returns
    -------
    ndarray of shape (n_trials, n_times)
        Speeds [m/s], computed in time chunks to bound memory.
    """
    t = np.atleast_1d(np.asarray(t_s, dtype=float))
    if t.ndim != 1:
        raise ParameterError("t_s", t, "must be a 1-D array of times")
    n, k = state.amplitudes_mps.shape
    out = np.empty((n, t.size))
    chunk = max(1, (1 << 21) // max(1, n * k))
    for start in range(0, t.size, chunk):
        tc = t[start : start + chunk]
        arg = (
            _TWO_PI * state.freqs_hz[:, None, :] * tc[None, :, None] + state.phases_rad[:, None, :]
        )
        out[:, start : start + chunk] = np.sum(
            state.amplitudes_mps[:, None, :] * np.cos(arg), axis=-1
        )
    if include_mean:
        out = np.maximum(out + state.mean_speed_mps[:, None], 0.0)
    return out


def wind_velocity_ned(state: WindState, t_s: Any) -> np.ndarray:
    """Velocity of the air over the ground in NED at time ``t_s``.

    Parameters
    ----------
    state : WindState
    t_s : float or ndarray of shape (n_trials,)
        Time [s].

    Returns
    -------
    ndarray of shape (n_trials, 2)
        [north, east] air velocity [m/s]: the air moves toward
        ``direction_from + 180 deg``.
    """
    speed = wind_speed(state, t_s)
    beta = state.direction_from_rad
    return -speed[:, None] * np.stack([np.cos(beta), np.sin(beta)], axis=-1)


# ---------------------------------------------------------------------------
# Loads
# ---------------------------------------------------------------------------


@dataclass(frozen=True, kw_only=True)
class WindageParams(Params):
    """Above-water geometry and wind coefficients of a craft.

    Parameters
    ----------
    frontal_area_m2 : float or ndarray of shape (n_trials,)
        Frontal projected area above water ``A_Fw`` [m^2], > 0.
    lateral_area_m2 : float or ndarray of shape (n_trials,)
        Lateral projected area above water ``A_Lw`` [m^2], > 0.
    length_oa_m : float or ndarray of shape (n_trials,)
        Length overall ``L_oa`` [m], > 0.
    c_x, c_y, c_n : float or ndarray of shape (n_trials,)
        Coefficients of Fossen's approximate curves, >= 0. Defaults are the
        middles of the typical ranges he gives (0.50-0.90, 0.70-0.95,
        0.05-0.20; ranges from memory, not re-checked).
    rho_air_kg_m3 : float
        Air density [kg/m^3] (ISO 2533 sea-level value by default).
    """

    frontal_area_m2: float = bounded(gt=0.0, unit="m^2", doc="frontal projected area")
    lateral_area_m2: float = bounded(gt=0.0, unit="m^2", doc="lateral projected area")
    length_oa_m: float = bounded(gt=0.0, unit="m", doc="length overall")
    c_x: float = bounded(0.70, ge=0.0, doc="surge coefficient amplitude")
    c_y: float = bounded(0.825, ge=0.0, doc="sway coefficient amplitude")
    c_n: float = bounded(0.125, ge=0.0, doc="yaw coefficient amplitude")
    rho_air_kg_m3: float = bounded(RHO_AIR, gt=0.0, unit="kg/m^3", doc="air density")

    def _check(self) -> None:
        _check_per_trial(
            self,
            ("frontal_area_m2", "lateral_area_m2", "length_oa_m", "c_x", "c_y", "c_n", "rho_air_kg_m3"),
        )


@dataclass(frozen=True)
class WindCoefficientTable:
    """User table of wind coefficients against the relative wind angle.

    Interpolated linearly and periodically (period 360 deg).

    Parameters
    ----------
    angles_deg : ndarray of shape (n_points,)
        Relative wind angle ``gamma_rw`` [deg] in the convention of this
        module (0 = from ahead, -90 = from starboard, +90 = from port). A
        table given against the angle "off the bow, positive to starboard"
        ``theta`` converts with ``gamma_rw = -theta``. Angles are wrapped to
        [-180, 180); duplicates modulo 360 must carry equal values.
    c_x, c_y, c_n : ndarray of shape (n_points,)
        Coefficients ``C_X``, ``C_Y``, ``C_N`` (signed).

    Raises
    ------
    ParameterError
        For fewer than 2 distinct angles, mismatched lengths, non-finite
        values or conflicting duplicates.
    """

    angles_deg: np.ndarray
    c_x: np.ndarray
    c_y: np.ndarray
    c_n: np.ndarray

    def __post_init__(self) -> None:
        arrays = {}
        for name in ("angles_deg", "c_x", "c_y", "c_n"):
            a = np.asarray(getattr(self, name), dtype=float)
            if a.ndim != 1:
                raise ParameterError(name, a, "must be a 1-D array")
            if not np.all(np.isfinite(a)):
                raise ParameterError(name, a, "must be finite")
            arrays[name] = a
        size = arrays["angles_deg"].size
        for name in ("c_x", "c_y", "c_n"):
            if arrays[name].size != size:
                raise ParameterError(
                    name, arrays[name], f"must have {size} entries like angles_deg"
                )
        wrapped = np.mod(arrays["angles_deg"] + 180.0, 360.0) - 180.0
        order = np.argsort(wrapped, kind="stable")
        wrapped = wrapped[order]
        values = np.stack([arrays[n][order] for n in ("c_x", "c_y", "c_n")])
        keep = np.ones(size, dtype=bool)
        same = np.isclose(np.diff(wrapped), 0.0, rtol=0.0, atol=1e-9)
        for i in np.flatnonzero(same):
            if not np.allclose(values[:, i], values[:, i + 1], rtol=0.0, atol=1e-12):
                raise ParameterError(
                    "angles_deg",
                    arrays["angles_deg"],
                    f"angle {wrapped[i]} deg appears twice (modulo 360) with other values",
                )
            keep[i + 1] = False
        if keep.sum() < 2:
            raise ParameterError(
                "angles_deg", arrays["angles_deg"], "needs at least 2 distinct angles"
            )
        out = {"angles_deg": wrapped[keep]}
        for j, name in enumerate(("c_x", "c_y", "c_n")):
            out[name] = values[j, keep]
        for name, a in out.items():
            a = a.copy()
            a.setflags(write=False)
            object.__setattr__(self, name, a)


def fossen_coefficients(windage: WindageParams, gamma_rw_rad: Any) -> np.ndarray:
    """Fossen's approximate wind coefficients.

    Parameters
    ----------
    windage : WindageParams
    gamma_rw_rad : ndarray of shape (n_trials,)
        Relative wind angle (angle of attack) [rad].

    Returns
    -------
    ndarray of shape (n_trials, 3)
        ``[C_X, C_Y, C_N] = [-c_x cos(g), c_y sin(g), c_n sin(2 g)]``.
    """
    g = np.asarray(gamma_rw_rad, dtype=float)
    cx = -np.asarray(windage.c_x) * np.cos(g)
    cy = np.asarray(windage.c_y) * np.sin(g)
    cn = np.asarray(windage.c_n) * np.sin(2.0 * g)
    return np.stack(np.broadcast_arrays(cx, cy, cn), axis=-1)


def table_coefficients(table: WindCoefficientTable, gamma_rw_rad: Any) -> np.ndarray:
    """Coefficients from a :class:`WindCoefficientTable`, periodic linear interpolation.

    Parameters
    ----------
    table : WindCoefficientTable
    gamma_rw_rad : ndarray of shape (n_trials,)
        Relative wind angle [rad].

    Returns
    -------
    ndarray of shape (n_trials, 3)
        ``[C_X, C_Y, C_N]``.
    """
    g = np.rad2deg(wrap_pi(gamma_rw_rad))
    cols = [
        np.interp(g, table.angles_deg, getattr(table, n), period=360.0)
        for n in ("c_x", "c_y", "c_n")
    ]
    return np.stack(cols, axis=-1)


def relative_wind(
    u_mps: Any, v_mps: Any, psi_rad: Any, wind_speed_mps: Any, wind_from_rad: Any
) -> tuple[np.ndarray, np.ndarray]:
    """Relative wind speed and angle seen by a moving craft.

    Parameters
    ----------
    u_mps, v_mps : ndarray of shape (n_trials,)
        Craft surge and sway velocity over ground [m/s] (body axes).
    psi_rad : ndarray of shape (n_trials,)
        Heading [rad], clockwise from north.
    wind_speed_mps : ndarray of shape (n_trials,)
        Wind speed [m/s].
    wind_from_rad : ndarray of shape (n_trials,)
        Direction the wind comes from [rad], clockwise from north.

    Returns
    -------
    V_rw : ndarray of shape (n_trials,)
        Relative wind speed [m/s].
    gamma_rw : ndarray of shape (n_trials,)
        Relative wind angle ``-atan2(v_rw, u_rw)`` [rad] in (-pi, pi].

    Notes
    -----
    The air moves toward ``beta + pi``; in body axes
    ``u_w = -V cos(beta - psi)``, ``v_w = -V sin(beta - psi)``;
    ``u_rw = u - u_w``, ``v_rw = v - v_w``.

    Examples
    --------
    >>> v, g = relative_wind(0.0, 0.0, 0.0, 10.0, np.pi / 2)  # wind from the east, heading north
    >>> round(float(v), 12), round(float(np.degrees(g)), 12)
    (10.0, -90.0)
    """
    speed = np.asarray(wind_speed_mps, dtype=float)
    rel = np.asarray(wind_from_rad, dtype=float) - np.asarray(psi_rad, dtype=float)
    u_w = -speed * np.cos(rel)
    v_w = -speed * np.sin(rel)
    u_rw = np.asarray(u_mps, dtype=float) - u_w
    v_rw = np.asarray(v_mps, dtype=float) - v_w
    return np.hypot(u_rw, v_rw), -np.arctan2(v_rw, u_rw)


def wind_loads(
    windage: WindageParams,
    v_rw_mps: Any,
    gamma_rw_rad: Any,
    *,
    table: WindCoefficientTable | None = None,
) -> np.ndarray:
    """Wind force and moment in the body frame.

    Parameters
    ----------
    windage : WindageParams
    v_rw_mps : ndarray of shape (n_trials,)
        Relative wind speed [m/s].
    gamma_rw_rad : ndarray of shape (n_trials,)
        Relative wind angle [rad].
    table : WindCoefficientTable, optional
        Use these coefficients instead of Fossen's approximate curves.

    Returns
    -------
    ndarray of shape (n_trials, 3)
        ``[X (N), Y (N), N (N m)]``:
        ``0.5 rho V_rw**2 [C_X A_Fw, C_Y A_Lw, C_N A_Lw L_oa]``.
    """
    if table is None:
        coef = fossen_coefficients(windage, gamma_rw_rad)
    else:
        coef = table_coefficients(table, gamma_rw_rad)
    q = 0.5 * np.asarray(windage.rho_air_kg_m3) * np.asarray(v_rw_mps, dtype=float) ** 2
    a_f = np.asarray(windage.frontal_area_m2)
    a_l = np.asarray(windage.lateral_area_m2)
    scale = np.stack(
        np.broadcast_arrays(q * a_f, q * a_l, q * a_l * np.asarray(windage.length_oa_m)), axis=-1
    )
    return coef * scale


def wind_loads_on_craft(
    windage: WindageParams,
    state: WindState,
    t_s: Any,
    u_mps: Any,
    v_mps: Any,
    psi_rad: Any,
    *,
    table: WindCoefficientTable | None = None,
) -> np.ndarray:
    """Wind loads on a craft at time ``t_s`` from its velocity and heading.

    Parameters
    ----------
    windage : WindageParams
    state : WindState
    t_s : float or ndarray of shape (n_trials,)
        Time [s].
    u_mps, v_mps : ndarray of shape (n_trials,)
        Surge and sway velocity over ground [m/s].
    psi_rad : ndarray of shape (n_trials,)
        Heading [rad].
    table : WindCoefficientTable, optional
        Coefficient table instead of Fossen's curves.

    Returns
    -------
    ndarray of shape (n_trials, 3)
        Body-frame ``[X, Y, N]`` [N, N, N m].
    """
    v_rw, gamma = relative_wind(
        u_mps, v_mps, psi_rad, wind_speed(state, t_s), state.direction_from_rad
    )
    return wind_loads(windage, v_rw, gamma, table=table)
