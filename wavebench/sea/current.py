"""Sea current: uniform, depth-sheared, slowly varying, tidal and spatially varying.

Conventions
-----------
* World frame NED; positions are ``north_m``, ``east_m`` arrays of shape
  (n_trials,); depth is positive down in metres; time ``t_s`` is seconds
  since the start of the trial.
* Every direction at the spec boundary is a **set**: the direction the
  current flows *toward*, in degrees clockwise from north (nautical usage,
  e.g. Bowditch, *The American Practical Navigator*, glossary "set").
  A current with ``set_deg = 90`` flows toward the east. Angles are radians
  inside the functions.
* Every output is batched over a leading trial axis: velocities have shape
  (n_trials, 2) holding [north, east] components in m/s.

Components (all optional, summed by :func:`current_velocity_ned`)
-----------------------------------------------------------------
* :class:`UniformCurrentParams` -- same speed and set at every depth, with an
  optional slowly varying speed and direction (:class:`CurrentVariationParams`,
  first-order Gauss--Markov processes pre-computed per trial by
  :func:`init_current`).
* :class:`WindDrivenCurrentParams` -- linear decay from the surface to zero
  at a reference depth (DNV-RP-C205 wind-generated current profile).
* :class:`TidalCurrentParams` -- along a flood/ebb axis: a steady part plus
  a sum of harmonic constituents, with the DNV-RP-C205 power-law depth
  profile (exponent 1/7 by default).
* :class:`JetCurrentParams`, :class:`EddyCurrentParams` -- analytic
  spatially varying fields (our own simple designs, documented below).
* :class:`GriddedCurrent` -- a field gridded in (time, north, east), e.g.
  from an ocean model through :func:`gridded_current_from_dataset`.

References
----------
.. [1] DNV-RP-C205, *Environmental conditions and environmental loads*
   (2010), current section: wind-generated current
   ``v(z) = v_wind(0) (d0 - z)/d0`` for ``0 <= z <= d0`` (zero below) and
   tidal current ``v(z) = v_tide(0) ((d - z)/d)**alpha`` with
   ``alpha = 1/7`` (``z`` positive down, ``d`` the water depth).
.. [2] R. G. Brown and P. Y. C. Hwang, *Introduction to Random Signals and
   Applied Kalman Filtering*: first-order Gauss--Markov process, exact
   discretisation ``x[k+1] = phi x[k] + w[k]`` with ``phi = exp(-dt/Tc)``
   and ``Var w = sigma**2 (1 - phi**2)``.
.. [3] IHO Tides, Water Level and Currents Working Group, standard list of
   tidal constituents (angular speeds in degrees per hour).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..core.errors import ParameterError
from ..core.params import Params, bounded
from ..core.streams import TrialStreams

__all__ = [
    "K1_PERIOD_H",
    "M2_PERIOD_H",
    "N2_PERIOD_H",
    "O1_PERIOD_H",
    "S2_PERIOD_H",
    "TIDAL_SPEEDS_DEG_PER_H",
    "CurrentModel",
    "CurrentState",
    "CurrentVariationParams",
    "EddyCurrentParams",
    "GaussMarkovRecord",
    "GriddedCurrent",
    "JetCurrentParams",
    "TidalCurrentParams",
    "UniformCurrentParams",
    "WindDrivenCurrentParams",
    "current_velocity_ned",
    "eddy_velocity_ned",
    "gauss_markov_record",
    "gridded_current_from_dataset",
    "gridded_velocity_ned",
    "init_current",
    "jet_velocity_ned",
    "linear_profile",
    "power_law_profile",
    "tidal_along_axis_speed",
]

# ---------------------------------------------------------------------------
# Tidal constituents
# ---------------------------------------------------------------------------

#: Angular speeds of the main tidal constituents [deg/h], IHO standard
#: constituent list (values from memory, cross-read against a third-party
#: copy of the standard list, not re-checked against the IHO document).
TIDAL_SPEEDS_DEG_PER_H: dict[str, float] = {
    "M2": 28.9841042,  # principal lunar semidiurnal
    "S2": 30.0,  # principal solar semidiurnal
    "N2": 28.4397295,  # larger lunar elliptic semidiurnal
    "K1": 15.0410686,  # lunisolar diurnal
    "O1": 13.9430356,  # principal lunar diurnal
}

#: Period of the M2 constituent [h] = 360 / 28.9841042 = 12.4206012 h.
M2_PERIOD_H = 360.0 / TIDAL_SPEEDS_DEG_PER_H["M2"]
#: Period of the S2 constituent [h] (exactly 12 h: half a mean solar day).
S2_PERIOD_H = 360.0 / TIDAL_SPEEDS_DEG_PER_H["S2"]
#: Period of the N2 constituent [h].
N2_PERIOD_H = 360.0 / TIDAL_SPEEDS_DEG_PER_H["N2"]
#: Period of the K1 constituent [h].
K1_PERIOD_H = 360.0 / TIDAL_SPEEDS_DEG_PER_H["K1"]
#: Period of the O1 constituent [h].
O1_PERIOD_H = 360.0 / TIDAL_SPEEDS_DEG_PER_H["O1"]


# ---------------------------------------------------------------------------
# Small private helpers
# ---------------------------------------------------------------------------


def _heading_vector(angle_rad: Any) -> np.ndarray:
    """Unit vector [north, east] of a direction clockwise from north; shape (..., 2)."""
    a = np.asarray(angle_rad, dtype=float)
    return np.stack([np.cos(a), np.sin(a)], axis=-1)


def _column(x: Any) -> np.ndarray:
    """Scalar or (N,) array as float array ready to broadcast against (N,)."""
    return np.asarray(x, dtype=float)


def _positions(north_m: Any, east_m: Any) -> tuple[np.ndarray, np.ndarray]:
    """Validate and broadcast query positions to 1-D float arrays of length N."""
    n = np.atleast_1d(np.asarray(north_m, dtype=float))
    e = np.atleast_1d(np.asarray(east_m, dtype=float))
    if n.ndim != 1:
        raise ParameterError("north_m", n, "must be a scalar or a 1-D array of shape (n_trials,)")
    if e.ndim != 1:
        raise ParameterError("east_m", e, "must be a scalar or a 1-D array of shape (n_trials,)")
    try:
        n, e = np.broadcast_arrays(n, e)
    except ValueError:
        raise ParameterError(
            "east_m", e, f"must have the same length as north_m ({n.shape[0]})"
        ) from None
    return n, e


# ---------------------------------------------------------------------------
# Depth profiles (DNV-RP-C205)
# ---------------------------------------------------------------------------


def power_law_profile(depth_m: Any, water_depth_m: Any, exponent: Any = 1.0 / 7.0) -> np.ndarray:
    """Depth factor of a tidal current, ``((d - z)/d)**alpha``.

    Parameters
    ----------
    depth_m : float or ndarray of shape (n_trials,)
        Depth below the still water level ``z`` [m], positive down. Clipped
        to ``[0, d]``: above the surface the surface value applies, below the
        seabed the factor is zero.
    water_depth_m : float or ndarray of shape (n_trials,)
        Water depth ``d`` [m], > 0.
    exponent : float or ndarray of shape (n_trials,)
        Exponent ``alpha`` (1/7 in DNV-RP-C205).

    Returns
    -------
    ndarray
        Factor in [0, 1] multiplying the surface speed.

    Notes
    -----
    DNV-RP-C205 (2010), current section:
    ``v_tide(z) = v_tide(0) ((d - z)/d)**alpha``, ``alpha = 1/7``.

    Examples
    --------
    >>> float(power_law_profile(25.0, 50.0))  # 0.5**(1/7)
    0.9057236642639067
    """
    d = np.asarray(water_depth_m, dtype=float)
    if np.any(~(d > 0)):
        raise ParameterError("water_depth_m", d, "must be > 0 (and not NaN)")
    z = np.clip(np.asarray(depth_m, dtype=float), 0.0, d)
    return ((d - z) / d) ** np.asarray(exponent, dtype=float)


def linear_profile(depth_m: Any, reference_depth_m: Any) -> np.ndarray:
    """Depth factor of a wind-generated current, ``(d0 - z)/d0`` above ``d0``, else 0.

    Parameters
    ----------
    depth_m : float or ndarray of shape (n_trials,)
        Depth ``z`` [m], positive down; negative values are treated as 0.
    reference_depth_m : float or ndarray of shape (n_trials,)
        Reference depth ``d0`` [m] where the current vanishes, > 0.

    Returns
    -------
    ndarray
        Factor in [0, 1].

    Notes
    -----
    DNV-RP-C205 (2010), current section:
    ``v_wind(z) = v_wind(0) (d0 - z)/d0`` for ``0 <= z <= d0``, zero below.

    Examples
    --------
    >>> float(linear_profile(10.0, 50.0))
    0.8
    """
    d0 = np.asarray(reference_depth_m, dtype=float)
    if np.any(~(d0 > 0)):
        raise ParameterError("reference_depth_m", d0, "must be > 0 (and not NaN)")
    z = np.clip(np.asarray(depth_m, dtype=float), 0.0, d0)
    return (d0 - z) / d0


# ---------------------------------------------------------------------------
# Parameter blocks
# ---------------------------------------------------------------------------


def _check_per_trial(params: Params, names: tuple[str, ...], tables: tuple[str, ...] = ()) -> None:
    """Per-trial fields of ``params`` share one trial axis.

    Each field in ``names`` must be a scalar or of shape (n_trials,); each in
    ``tables`` of shape (n_columns,) (shared by the trials) or
    (n_trials, n_columns). All per-trial lengths must agree; the error names
    the first field that disagrees with the first per-trial field (in the
    order given by ``names`` then ``tables``).
    """
    ref: tuple[str, int] | None = None
    for name in names + tables:
        value = getattr(params, name)
        nd = np.ndim(value)
        if name in tables:
            n = np.shape(value)[0] if nd == 2 else None
        else:
            if nd > 1:
                raise ParameterError(
                    name, value, f"must be a scalar or an array of shape (n_trials,), got shape {np.shape(value)}"
                )
            n = np.shape(value)[0] if nd == 1 else None
        if n is None:
            continue
        if ref is None:
            ref = (name, n)
        elif n != ref[1]:
            raise ParameterError(
                name,
                value,
                f"must have one entry per trial like {ref[0]} ({ref[1]} trials), got {n}",
            )


def _direction_field(name: str) -> Any:
    return bounded(
        0.0,
        ge=-360.0,
        le=360.0,
        unit="deg",
        doc=f"{name}: direction the current flows toward, clockwise from north",
    )


@dataclass(frozen=True, kw_only=True)
class UniformCurrentParams(Params):
    """Uniform current, the same at every position and depth.

    Parameters
    ----------
    speed_mps : float or ndarray of shape (n_trials,)
        Mean speed [m/s], >= 0.
    set_deg : float or ndarray of shape (n_trials,)
        Set: direction the current flows toward, degrees clockwise from
        north, in [-360, 360].

    Examples
    --------
    >>> UniformCurrentParams(speed_mps=0.5, set_deg=90.0).speed_mps
    0.5
    """

    speed_mps: float = bounded(0.0, ge=0.0, unit="m/s", doc="current speed")
    set_deg: float = _direction_field("set")

    def _check(self) -> None:
        _check_per_trial(self, ("speed_mps", "set_deg"))


@dataclass(frozen=True, kw_only=True)
class CurrentVariationParams(Params):
    """Slow variation of the uniform current's speed and set.

    The speed and the set of :class:`UniformCurrentParams` are perturbed by
    two independent zero-mean first-order Gauss--Markov processes with
    standard deviations ``speed_sigma_mps`` / ``set_sigma_deg`` and
    correlation times ``speed_tc_s`` / ``set_tc_s``. The speed is clipped at
    zero. Each process starts from its stationary distribution.

    Parameters
    ----------
    speed_sigma_mps : float or ndarray of shape (n_trials,)
        Standard deviation of the speed perturbation [m/s], >= 0.
    speed_tc_s : float or ndarray of shape (n_trials,)
        Correlation time of the speed perturbation [s], > 0.
    set_sigma_deg : float or ndarray of shape (n_trials,)
        Standard deviation of the set perturbation [deg], >= 0.
    set_tc_s : float or ndarray of shape (n_trials,)
        Correlation time of the set perturbation [s], > 0.
    """

    speed_sigma_mps: float = bounded(0.0, ge=0.0, unit="m/s", doc="speed std deviation")
    speed_tc_s: float = bounded(600.0, gt=0.0, unit="s", doc="speed correlation time")
    set_sigma_deg: float = bounded(0.0, ge=0.0, le=180.0, unit="deg", doc="set std deviation")
    set_tc_s: float = bounded(600.0, gt=0.0, unit="s", doc="set correlation time")

    def _check(self) -> None:
        _check_per_trial(self, ("speed_sigma_mps", "speed_tc_s", "set_sigma_deg", "set_tc_s"))


@dataclass(frozen=True, kw_only=True)
class WindDrivenCurrentParams(Params):
    """Wind-generated current decaying linearly to zero at a reference depth.

    Parameters
    ----------
    surface_speed_mps : float or ndarray of shape (n_trials,)
        Speed at the surface [m/s], >= 0. DNV-RP-C205 relates it to the
        1-hour mean wind at 10 m as ``k U10`` with ``k`` about 0.015-0.03
        (value from memory, not re-checked).
    set_deg : float or ndarray of shape (n_trials,)
        Direction the current flows toward [deg]; usually the direction the
        wind blows toward.
    reference_depth_m : float or ndarray of shape (n_trials,)
        Depth ``d0`` where the current reaches zero [m], > 0. DNV-RP-C205
        suggests 50 m where no site data exist (value from memory, not
        re-checked).

    Notes
    -----
    ``v(z) = v(0) (d0 - z)/d0`` for ``0 <= z <= d0`` and 0 below
    (DNV-RP-C205 (2010), current section).
    """

    surface_speed_mps: float = bounded(0.0, ge=0.0, unit="m/s", doc="surface speed")
    set_deg: float = _direction_field("set")
    reference_depth_m: float = bounded(50.0, gt=0.0, unit="m", doc="depth where v reaches 0")

    def _check(self) -> None:
        _check_per_trial(self, ("surface_speed_mps", "set_deg", "reference_depth_m"))


@dataclass(frozen=True, kw_only=True)
class TidalCurrentParams(Params):
    """Tidal current along a flood/ebb axis with the power-law depth profile.

    The along-axis surface speed (positive toward ``flood_set_deg``,
    negative on the ebb) is

    ``u(t) = mean_speed_mps + sum_k A_k cos(2 pi t / T_k - phi_k)``

    and the velocity at depth ``z`` is
    ``u(t) ((d - z)/d)**exponent [cos(flood), sin(flood)]``.

    Parameters
    ----------
    flood_set_deg : float or ndarray of shape (n_trials,)
        Direction the flood stream flows toward [deg].
    water_depth_m : float or ndarray of shape (n_trials,)
        Water depth ``d`` [m], > 0; may be overridden per query (e.g. from a
        seabed) in :func:`current_velocity_ned`.
    mean_speed_mps : float or ndarray of shape (n_trials,)
        Steady along-axis surface speed [m/s] (either sign; a steady tidal
        current is this term alone).
    amplitudes_mps : ndarray of shape (n_constituents,) or (n_trials, n_constituents)
        Constituent amplitudes ``A_k`` [m/s], >= 0.
    periods_h : ndarray of shape (n_constituents,) or (n_trials, n_constituents)
        Constituent periods ``T_k`` [h], > 0, e.g. :data:`M2_PERIOD_H`.
    phases_deg : ndarray of shape (n_constituents,) or (n_trials, n_constituents)
        Phase lags ``phi_k`` [deg] relative to ``t = 0``.
    exponent : float or ndarray of shape (n_trials,)
        Power-law exponent, 1/7 in DNV-RP-C205.

    Raises
    ------
    ParameterError
        Naming the field, when the three constituent tables differ in their
        number of constituents, or any per-trial field (the scalars' length,
        the tables' rows) differs in its number of trials from the others.

    Examples
    --------
    >>> p = TidalCurrentParams(flood_set_deg=45.0, water_depth_m=30.0,
    ...                        amplitudes_mps=[1.0], periods_h=[M2_PERIOD_H], phases_deg=[0.0])
    >>> float(tidal_along_axis_speed(p, 0.0)[0])
    1.0
    """

    flood_set_deg: float = _direction_field("flood set")
    water_depth_m: float = bounded(gt=0.0, unit="m", doc="water depth")
    mean_speed_mps: float = bounded(0.0, unit="m/s", doc="steady along-axis surface speed")
    amplitudes_mps: tuple[float, ...] = bounded(
        (), ge=0.0, unit="m/s", doc="constituent amplitudes"
    )
    periods_h: tuple[float, ...] = bounded((), gt=0.0, unit="h", doc="constituent periods")
    phases_deg: tuple[float, ...] = bounded((), unit="deg", doc="constituent phase lags")
    exponent: float = bounded(1.0 / 7.0, gt=0.0, le=1.0, doc="power-law exponent")

    def _check(self) -> None:
        tables = ("amplitudes_mps", "periods_h", "phases_deg")
        n_const: dict[str, int] = {}
        for name in tables:
            value = np.atleast_1d(getattr(self, name))
            if value.ndim > 2:
                raise ParameterError(
                    name, value, "must have shape (n_constituents,) or (n_trials, n_constituents)"
                )
            object.__setattr__(self, name, value)
            n_const[name] = value.shape[-1]
        for name in tables[1:]:
            if n_const[name] != n_const["amplitudes_mps"]:
                raise ParameterError(
                    name,
                    getattr(self, name),
                    f"must have the same number of constituents as amplitudes_mps "
                    f"({n_const['amplitudes_mps']}), got {n_const[name]}",
                )
        # per-trial rows of the constituent tables agree with each other and with
        # the per-trial scalars
        _check_per_trial(
            self, ("flood_set_deg", "water_depth_m", "mean_speed_mps", "exponent"), tables
        )


@dataclass(frozen=True, kw_only=True)
class JetCurrentParams(Params):
    """A straight current jet with a Gaussian cross-stream profile (our own design).

    The flow runs along the jet axis (through ``axis_north_m``,
    ``axis_east_m``, pointing toward ``set_deg``); its speed falls off across
    the axis as ``peak_speed_mps * exp(-(s/half_width_m)**2)`` where ``s`` is
    the distance from the axis. The field is divergence-free (the speed
    varies only across the flow). It is the same at every depth.

    Parameters
    ----------
    peak_speed_mps : float or ndarray of shape (n_trials,)
        Speed on the axis [m/s], >= 0.
    set_deg : float or ndarray of shape (n_trials,)
        Direction the jet flows toward [deg].
    axis_north_m, axis_east_m : float or ndarray of shape (n_trials,)
        A point on the jet axis [m].
    half_width_m : float or ndarray of shape (n_trials,)
        e-folding half-width [m], > 0.
    """

    peak_speed_mps: float = bounded(0.0, ge=0.0, unit="m/s", doc="speed on the axis")
    set_deg: float = _direction_field("set")
    axis_north_m: float = bounded(0.0, unit="m", doc="north of a point on the axis")
    axis_east_m: float = bounded(0.0, unit="m", doc="east of a point on the axis")
    half_width_m: float = bounded(100.0, gt=0.0, unit="m", doc="e-folding half-width")

    def _check(self) -> None:
        _check_per_trial(
            self, ("peak_speed_mps", "set_deg", "axis_north_m", "axis_east_m", "half_width_m")
        )


@dataclass(frozen=True, kw_only=True)
class EddyCurrentParams(Params):
    """A circular eddy (gyre) with a smooth swirl profile (our own design).

    The azimuthal speed at radius ``r`` from the centre is
    ``v(r) = peak_speed_mps (r/R) exp((1 - (r/R)**2) / 2)``: solid-body
    rotation near the centre, the peak speed at ``r = R``, Gaussian decay
    outside. The flow is tangential, hence divergence-free, and the same at
    every depth. ``clockwise=True`` means clockwise seen from above (the
    positive sense about the NED down axis).

    Parameters
    ----------
    peak_speed_mps : float or ndarray of shape (n_trials,)
        Largest azimuthal speed [m/s], reached at ``r = radius_m``, >= 0.
    centre_north_m, centre_east_m : float or ndarray of shape (n_trials,)
        Centre [m].
    radius_m : float or ndarray of shape (n_trials,)
        Radius of the peak speed [m], > 0.
    clockwise : bool
        Sense of rotation seen from above.
    """

    peak_speed_mps: float = bounded(0.0, ge=0.0, unit="m/s", doc="peak azimuthal speed")
    centre_north_m: float = bounded(0.0, unit="m", doc="north of the centre")
    centre_east_m: float = bounded(0.0, unit="m", doc="east of the centre")
    radius_m: float = bounded(200.0, gt=0.0, unit="m", doc="radius of the peak speed")
    clockwise: bool = True

    def _check(self) -> None:
        if not isinstance(self.clockwise, (bool, np.bool_)):
            raise ParameterError("clockwise", self.clockwise, "must be True or False")
        _check_per_trial(
            self, ("peak_speed_mps", "centre_north_m", "centre_east_m", "radius_m")
        )


# ---------------------------------------------------------------------------
# Gridded field
# ---------------------------------------------------------------------------

_OUTSIDE_POLICIES = ("error", "clamp")


def _check_axis(name: str, values: Any, min_len: int) -> np.ndarray:
    arr = np.asarray(values, dtype=float)
    if arr.ndim != 1 or arr.size < min_len:
        raise ParameterError(name, arr, f"must be a 1-D array with at least {min_len} points")
    if not np.all(np.isfinite(arr)):
        raise ParameterError(name, arr, "must be finite")
    if arr.size > 1 and not np.all(np.diff(arr) > 0):
        raise ParameterError(name, arr, "must be strictly increasing")
    arr = arr.copy()
    arr.setflags(write=False)
    return arr


@dataclass(frozen=True)
class GriddedCurrent:
    """A current field on a regular (time, north, east) grid.

    Interpolated bilinearly in space and linearly in time; the same at every
    depth (a surface or depth-averaged field).

    Parameters
    ----------
    time_s : ndarray of shape (n_time,)
        Strictly increasing times [s] since the trial start; one entry for a
        steady field (then valid at any time).
    north_m : ndarray of shape (n_north,)
        Strictly increasing north coordinates [m], at least 2.
    east_m : ndarray of shape (n_east,)
        Strictly increasing east coordinates [m], at least 2.
    v_north_mps, v_east_mps : ndarray of shape (n_time, n_north, n_east)
        Velocity components [m/s]; finite (fill land cells before loading).
    outside : {"error", "clamp"}
        Policy for queries outside the grid (in space or time): ``"error"``
        raises :class:`ParameterError`; ``"clamp"`` uses the nearest edge
        value (the query is clipped to the grid box).

    Raises
    ------
    ParameterError
        For malformed axes, mismatched shapes or non-finite velocities.
    """

    time_s: np.ndarray
    north_m: np.ndarray
    east_m: np.ndarray
    v_north_mps: np.ndarray
    v_east_mps: np.ndarray
    outside: str = "error"

    def __post_init__(self) -> None:
        t = _check_axis("time_s", self.time_s, 1)
        n = _check_axis("north_m", self.north_m, 2)
        e = _check_axis("east_m", self.east_m, 2)
        shape = (t.size, n.size, e.size)
        for name in ("v_north_mps", "v_east_mps"):
            v = np.asarray(getattr(self, name), dtype=float)
            if v.shape != shape:
                raise ParameterError(
                    name, v, f"must have shape (n_time, n_north, n_east) = {shape}"
                )
            if not np.all(np.isfinite(v)):
                raise ParameterError(
                    name, v, "must be finite", "fill land cells first, e.g. ds.fillna(0.0)"
                )
            v = v.copy()
            v.setflags(write=False)
            object.__setattr__(self, name, v)
        if self.outside not in _OUTSIDE_POLICIES:
            raise ParameterError("outside", self.outside, f"must be one of {_OUTSIDE_POLICIES}")
        object.__setattr__(self, "time_s", t)
        object.__setattr__(self, "north_m", n)
        object.__setattr__(self, "east_m", e)


def _locate(
    axis: np.ndarray, q: np.ndarray, name: str, clamp: bool
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Lower index, upper index and weight of ``q`` on a strictly increasing axis."""
    if not np.all(np.isfinite(q)):
        raise ParameterError(name, q, "query must be finite")
    if axis.size == 1:  # a steady field: the time of the query does not matter
        zero = np.zeros(q.shape, dtype=np.intp)
        return zero, zero, np.zeros(q.shape)
    lo, hi = axis[0], axis[-1]
    if clamp:
        q = np.clip(q, lo, hi)
    elif np.any((q < lo) | (q > hi)):
        raise ParameterError(
            name,
            q,
            f"query outside the grid [{lo}, {hi}]",
            "extend the grid or build the field with outside='clamp'",
        )
    i0 = np.clip(np.searchsorted(axis, q, side="right") - 1, 0, axis.size - 2)
    i1 = i0 + 1
    w = (q - axis[i0]) / (axis[i1] - axis[i0])
    return i0, i1, w


def gridded_velocity_ned(
    field: GriddedCurrent, north_m: Any, east_m: Any, t_s: Any = 0.0
) -> np.ndarray:
    """Velocity of a gridded field at query points: bilinear in space, linear in time.

    Parameters
    ----------
    field : GriddedCurrent
        The field.
    north_m, east_m : ndarray of shape (n_trials,)
        Query positions [m].
    t_s : float or ndarray of shape (n_trials,)
        Query times [s].

    Returns
    -------
    ndarray of shape (n_trials, 2)
        [north, east] velocity [m/s].

    Raises
    ------
    ParameterError
        For a query outside the grid when ``field.outside == "error"``.

    Notes
    -----
    Trilinear interpolation: with weights ``w_t, w_n, w_e`` in [0, 1] on the
    enclosing cell, ``v = sum over the 8 corners of
    prod((1 - w) or w) * v_corner``. It reproduces any field of the form
    ``a + b t + c n + d e`` exactly (up to rounding).
    """
    n, e = _positions(north_m, east_m)
    t = np.broadcast_to(np.asarray(t_s, dtype=float), n.shape)
    clamp = field.outside == "clamp"
    t0, t1, wt = _locate(field.time_s, t, "t_s", clamp)
    n0, n1, wn = _locate(field.north_m, n, "north_m", clamp)
    e0, e1, we = _locate(field.east_m, e, "east_m", clamp)
    out = np.empty((*n.shape, 2))
    for k, grid in enumerate((field.v_north_mps, field.v_east_mps)):

        def bilinear(ti: np.ndarray, g: np.ndarray = grid) -> np.ndarray:
            low = (1.0 - we) * g[ti, n0, e0] + we * g[ti, n0, e1]
            high = (1.0 - we) * g[ti, n1, e0] + we * g[ti, n1, e1]
            return (1.0 - wn) * low + wn * high

        out[:, k] = (1.0 - wt) * bilinear(t0) + wt * bilinear(t1)
    return out


_SPATIAL_DIM_PAIRS = (("north", "east"), ("y", "x"))
_CF_NAMES = {
    "north": "northward_sea_water_velocity",
    "east": "eastward_sea_water_velocity",
}


def _find_velocity_var(ds: Any, name: str, which: str, arg: str) -> Any:
    if name in ds.data_vars:
        return ds[name]
    for var in ds.data_vars.values():
        if var.attrs.get("standard_name") == _CF_NAMES[which]:
            return var
    raise ParameterError(
        arg,
        name,
        f"variable not in the dataset (nor one with standard_name '{_CF_NAMES[which]}'); "
        f"data variables are {sorted(map(str, ds.data_vars))}",
    )


def _coordinate(ds: Any, dim: str) -> np.ndarray:
    if dim not in ds.coords:
        raise ParameterError(
            f"coords.{dim}",
            None,
            f"dimension '{dim}' needs a coordinate variable (metres or times)",
        )
    return np.asarray(ds[dim].values)


def _time_seconds(values: np.ndarray, time_origin: Any) -> np.ndarray:
    if np.issubdtype(values.dtype, np.datetime64):
        origin = values[0] if time_origin is None else np.datetime64(time_origin)
        return (values - origin) / np.timedelta64(1, "s")
    if np.issubdtype(values.dtype, np.timedelta64):
        return values / np.timedelta64(1, "s")
    if time_origin is not None:
        raise ParameterError(
            "time_origin", time_origin, "only meaningful for a datetime64 time coordinate"
        )
    return np.asarray(values, dtype=float)


def gridded_current_from_dataset(
    ds: Any,
    *,
    north_var: str = "v_north",
    east_var: str = "v_east",
    outside: str = "error",
    time_origin: Any = None,
) -> GriddedCurrent:
    """Build a :class:`GriddedCurrent` from an :class:`xarray.Dataset`.

    Parameters
    ----------
    ds : xarray.Dataset
        Holds two velocity variables [m/s] on dims ``(time, north, east)`` or
        ``(time, y, x)`` in any order (``time`` optional: a steady field).
        ``north``/``y`` and ``east``/``x`` coordinates are metres in the NED
        world frame. A numeric ``time`` coordinate is seconds since the trial
        start; a datetime64 one is converted to seconds since
        ``time_origin`` (default: its first entry); timedelta64 is taken as is.
        Coordinates may be increasing or decreasing.
    north_var, east_var : str
        Names of the north and east velocity variables. If a name is absent,
        a variable with the CF standard name ``northward_sea_water_velocity``
        (``eastward_sea_water_velocity``) is used.
    outside : {"error", "clamp"}
        Policy for queries outside the grid, see :class:`GriddedCurrent`.
    time_origin : datetime-like, optional
        Trial start for a datetime64 time coordinate.

    Returns
    -------
    GriddedCurrent

    Raises
    ------
    ParameterError
        For a missing variable, missing or extra dimensions, missing
        coordinates, non-monotonic coordinates or non-finite values.

    Examples
    --------
    >>> import xarray as xr
    >>> ds = xr.Dataset(
    ...     {"v_north": (("north", "east"), np.zeros((2, 3))),
    ...      "v_east": (("north", "east"), np.ones((2, 3)))},
    ...     coords={"north": [0.0, 100.0], "east": [0.0, 50.0, 100.0]})
    >>> f = gridded_current_from_dataset(ds)
    >>> gridded_velocity_ned(f, [50.0], [25.0]).tolist()
    [[0.0, 1.0]]
    """
    vn = _find_velocity_var(ds, north_var, "north", "north_var")
    ve = _find_velocity_var(ds, east_var, "east", "east_var")
    dims = set(map(str, vn.dims))
    if set(map(str, ve.dims)) != dims:
        raise ParameterError(
            "east_var", ve.dims, f"must have the same dimensions as the north velocity {vn.dims}"
        )
    pair = next((p for p in _SPATIAL_DIM_PAIRS if set(p) <= dims), None)
    if pair is None:
        raise ParameterError(
            "dims",
            tuple(vn.dims),
            "velocity variables need spatial dims ('north', 'east') or ('y', 'x')",
        )
    order = (("time",) if "time" in dims else ()) + pair
    extra = dims - set(order)
    if extra:
        raise ParameterError(
            "dims",
            tuple(vn.dims),
            f"unexpected dimensions {sorted(extra)}; allowed are time and {pair}",
            "select one level first, e.g. ds.isel(depth=0)",
        )
    coords = {d: _coordinate(ds, d) for d in order}
    time = _time_seconds(coords["time"], time_origin) if "time" in coords else np.zeros(1)
    arrays = []
    for var in (vn, ve):
        a = np.asarray(var.transpose(*order).values, dtype=float)
        if "time" not in coords:
            a = a[np.newaxis]
        arrays.append(a)
    axes = [
        time,
        np.asarray(coords[pair[0]], dtype=float),
        np.asarray(coords[pair[1]], dtype=float),
    ]
    for k, ax in enumerate(axes):
        if ax.size > 1 and np.all(np.diff(ax) < 0):  # decreasing: flip
            axes[k] = ax[::-1]
            arrays = [np.flip(a, axis=k) for a in arrays]
    names = ("time_s", "north_m", "east_m")
    for name, ax in zip(names, axes, strict=True):
        _check_axis(name, ax, 1 if name == "time_s" else 2)
    return GriddedCurrent(
        time_s=axes[0],
        north_m=axes[1],
        east_m=axes[2],
        v_north_mps=arrays[0],
        v_east_mps=arrays[1],
        outside=outside,
    )


# ---------------------------------------------------------------------------
# Gauss--Markov records
# ---------------------------------------------------------------------------


@dataclass(frozen=True)
class GaussMarkovRecord:
    """Pre-computed per-trial samples of first-order Gauss--Markov processes.

    Parameters
    ----------
    dt_s : float
        Sample interval [s]; sample ``k`` is at ``t = k dt_s``.
    values : ndarray of shape (n_trials, n_samples, n_channels)
        Samples.
    """

    dt_s: float
    values: np.ndarray

    @property
    def n_trials(self) -> int:
        """Number of trials."""
        return int(self.values.shape[0])

    @property
    def duration_s(self) -> float:
        """Time of the last sample [s]."""
        return (self.values.shape[1] - 1) * self.dt_s

    def at(self, t_s: Any) -> np.ndarray:
        """Values at time ``t_s``, linearly interpolated between samples.

        Parameters
        ----------
        t_s : float or ndarray of shape (n_trials,)
            Time [s] in ``[0, duration_s]``.

        Returns
        -------
        ndarray of shape (n_trials, n_channels)

        Raises
        ------
        ParameterError
            If a time lies outside the record.
        """
        n_trials, n_samples, _ = self.values.shape
        try:
            t = np.broadcast_to(np.asarray(t_s, dtype=float), (n_trials,))
        except ValueError:
            raise ParameterError(
                "t_s", np.asarray(t_s), f"must be a scalar or have shape ({n_trials},)"
            ) from None
        if not np.all((t >= 0.0) & (t <= self.duration_s)):
            raise ParameterError(
                "t_s",
                np.asarray(t_s),
                f"must lie in the pre-computed record [0, {self.duration_s}] s",
                "initialise the state with a longer duration_s",
            )
        if n_samples == 1:
            return self.values[:, 0].copy()
        x = t / self.dt_s
        i0 = np.minimum(np.floor(x).astype(np.intp), n_samples - 2)
        i1 = i0 + 1
        w = (x - i0)[:, None]
        rows = np.arange(n_trials)
        return (1.0 - w) * self.values[rows, i0] + w * self.values[rows, i1]


def gauss_markov_record(
    streams: TrialStreams,
    purpose: str,
    sigma: Any,
    tc_s: Any,
    *,
    dt_s: float,
    n_samples: int,
) -> np.ndarray:
    """Draw per-trial records of first-order Gauss--Markov processes.

    Parameters
    ----------
    streams : TrialStreams
        Per-trial random streams; one block of standard normals of shape
        (n_samples, n_channels) is drawn per trial from ``purpose``.
    purpose : str
        Stream name, e.g. ``"current.gauss_markov"``.
    sigma : ndarray of shape (n_channels,) or (n_trials, n_channels)
        Stationary standard deviations, >= 0.
    tc_s : ndarray of shape (n_channels,) or (n_trials, n_channels)
        Correlation times [s], > 0.
    dt_s : float
        Sample interval [s], > 0.
    n_samples : int
        Number of samples, >= 1.

    Returns
    -------
    ndarray of shape (n_trials, n_samples, n_channels)

    Notes
    -----
    Exact discretisation of ``dx/dt = -x/Tc + w`` (Brown & Hwang):
    ``x[k+1] = phi x[k] + sigma sqrt(1 - phi**2) n[k+1]``,
    ``phi = exp(-dt/Tc)``, stationary start ``x[0] = sigma n[0]``, with
    ``n`` standard normal. The stationary variance is ``sigma**2`` and the
    lag-``m`` autocorrelation ``exp(-m dt/Tc)`` for any ``dt``.

    Examples
    --------
    >>> s = TrialStreams(seed=1, trials=3)
    >>> gauss_markov_record(s, "demo.gm", [1.0], [10.0], dt_s=1.0, n_samples=5).shape
    (3, 5, 1)
    """
    if not (
        isinstance(dt_s, (int, float, np.floating, np.integer)) and dt_s > 0 and math.isfinite(dt_s)
    ):
        raise ParameterError("dt_s", dt_s, "must be a finite number > 0")
    if isinstance(n_samples, bool) or not isinstance(n_samples, (int, np.integer)) or n_samples < 1:
        raise ParameterError("n_samples", n_samples, "must be a whole number >= 1")
    sig = np.atleast_1d(np.asarray(sigma, dtype=float))
    tc = np.atleast_1d(np.asarray(tc_s, dtype=float))
    if np.any(~(sig >= 0)) or not np.all(np.isfinite(sig)):
        raise ParameterError("sigma", sig, "must be finite and >= 0")
    if np.any(~(tc > 0)) or not np.all(np.isfinite(tc)):
        raise ParameterError("tc_s", tc, "must be finite and > 0")
    n_channels = max(sig.shape[-1], tc.shape[-1])
    sig, tc = np.broadcast_arrays(sig, tc)
    phi = np.exp(-float(dt_s) / tc)
    drive = sig * np.sqrt(1.0 - phi * phi)
    noise = streams.draw(purpose, lambda rng: rng.standard_normal((n_samples, n_channels)))
    if noise.ndim != 3:  # empty batch
        return np.empty((0, n_samples, n_channels))
    n_trials = noise.shape[0]
    phi = np.broadcast_to(phi, (n_trials, n_channels))
    drive = np.broadcast_to(drive, (n_trials, n_channels))
    out = np.empty_like(noise)
    out[:, 0] = np.broadcast_to(sig, (n_trials, n_channels)) * noise[:, 0]
    for k in range(1, n_samples):  # loop over time, vectorised over trials
        out[:, k] = phi * out[:, k - 1] + drive * noise[:, k]
    return out


# ---------------------------------------------------------------------------
# Analytic fields and tidal speed
# ---------------------------------------------------------------------------


def jet_velocity_ned(params: JetCurrentParams, north_m: Any, east_m: Any) -> np.ndarray:
    """Velocity of a :class:`JetCurrentParams` field.

    Parameters
    ----------
    params : JetCurrentParams
    north_m, east_m : ndarray of shape (n_trials,)
        Query positions [m].

    Returns
    -------
    ndarray of shape (n_trials, 2)
        [north, east] velocity [m/s].

    Notes
    -----
    With the axis direction ``theta`` and the signed cross-axis distance
    ``s = -(n - n0) sin(theta) + (e - e0) cos(theta)``:
    ``v = U exp(-(s/w)**2) [cos(theta), sin(theta)]``.
    """
    n, e = _positions(north_m, east_m)
    theta = np.deg2rad(_column(params.set_deg))
    s = -(n - _column(params.axis_north_m)) * np.sin(theta) + (
        e - _column(params.axis_east_m)
    ) * np.cos(theta)
    speed = _column(params.peak_speed_mps) * np.exp(-((s / _column(params.half_width_m)) ** 2))
    return speed[..., None] * _heading_vector(np.broadcast_to(theta, speed.shape))


def eddy_velocity_ned(params: EddyCurrentParams, north_m: Any, east_m: Any) -> np.ndarray:
    """Velocity of an :class:`EddyCurrentParams` field.

    Parameters
    ----------
    params : EddyCurrentParams
    north_m, east_m : ndarray of shape (n_trials,)
        Query positions [m].

    Returns
    -------
    ndarray of shape (n_trials, 2)
        [north, east] velocity [m/s].

    Notes
    -----
    With ``(dn, de)`` the offset from the centre and ``rho = r/R``:
    ``v = sense (U/R) exp((1 - rho**2)/2) [-de, dn]`` whose magnitude is
    ``U rho exp((1 - rho**2)/2)``; ``sense = +1`` is clockwise seen from
    above (rotation about the NED down axis).
    """
    n, e = _positions(north_m, east_m)
    dn = n - _column(params.centre_north_m)
    de = e - _column(params.centre_east_m)
    r_ref = _column(params.radius_m)
    rho2 = (dn * dn + de * de) / (r_ref * r_ref)
    sense = 1.0 if params.clockwise else -1.0
    gain = sense * _column(params.peak_speed_mps) / r_ref * np.exp(0.5 * (1.0 - rho2))
    return np.stack([-gain * de, gain * dn], axis=-1)


def tidal_along_axis_speed(params: TidalCurrentParams, t_s: Any) -> np.ndarray:
    """Along-axis surface speed of a tidal current (positive = flood).

    Parameters
    ----------
    params : TidalCurrentParams
    t_s : float or ndarray of shape (n_trials,)
        Time [s].

    Returns
    -------
    ndarray of shape (n_trials,) (or (1,) for scalar inputs)
        ``mean + sum_k A_k cos(2 pi t / T_k - phi_k)`` [m/s].
    """
    t = np.atleast_1d(np.asarray(t_s, dtype=float))
    amps = params.amplitudes_mps
    periods_s = params.periods_h * 3600.0
    phases = np.deg2rad(params.phases_deg)
    arg = 2.0 * np.pi * t[:, None] / periods_s - phases
    waves = np.sum(amps * np.cos(arg), axis=-1)
    return _column(params.mean_speed_mps) + waves


# ---------------------------------------------------------------------------
# The combined model
# ---------------------------------------------------------------------------


@dataclass(frozen=True, kw_only=True)
class CurrentModel(Params):
    """Which current components are present; all optional and summed.

    Parameters
    ----------
    uniform : UniformCurrentParams, optional
        Depth-uniform mean current.
    variation : CurrentVariationParams, optional
        Slow Gauss--Markov variation of ``uniform`` (needs ``uniform``).
    wind_driven : WindDrivenCurrentParams, optional
        Linearly decaying wind-generated current.
    tidal : TidalCurrentParams, optional
        Tidal current (steady and/or harmonic) with the power-law profile.
    fields : tuple
        Spatially varying fields: :class:`JetCurrentParams`,
        :class:`EddyCurrentParams` or :class:`GriddedCurrent` (depth-uniform).

    Examples
    --------
    >>> m = CurrentModel(uniform=UniformCurrentParams(speed_mps=1.0, set_deg=90.0))
    >>> s = init_current(m, TrialStreams(seed=0, trials=2), duration_s=10.0)
    >>> np.round(current_velocity_ned(m, s, [0.0, 0.0], [0.0, 0.0]), 12).tolist()
    [[0.0, 1.0], [0.0, 1.0]]
    """

    uniform: UniformCurrentParams | None = None
    variation: CurrentVariationParams | None = None
    wind_driven: WindDrivenCurrentParams | None = None
    tidal: TidalCurrentParams | None = None
    fields: tuple[Any, ...] = field(default=())

    def _check(self) -> None:
        kinds = {
            "uniform": UniformCurrentParams,
            "variation": CurrentVariationParams,
            "wind_driven": WindDrivenCurrentParams,
            "tidal": TidalCurrentParams,
        }
        for name, cls in kinds.items():
            value = getattr(self, name)
            if value is not None and not isinstance(value, cls):
                raise ParameterError(name, value, f"must be a {cls.__name__} or None")
        if self.variation is not None and self.uniform is None:
            raise ParameterError(
                "variation", self.variation, "needs a uniform component to vary (set uniform=...)"
            )
        fields_ = tuple(self.fields)
        for k, f in enumerate(fields_):
            if not isinstance(f, (JetCurrentParams, EddyCurrentParams, GriddedCurrent)):
                raise ParameterError(
                    f"fields[{k}]",
                    f,
                    "must be JetCurrentParams, EddyCurrentParams or GriddedCurrent",
                )
        object.__setattr__(self, "fields", fields_)


@dataclass(frozen=True)
class CurrentState:
    """Evolving (pre-computed) state of a current model for a batch.

    Parameters
    ----------
    n_trials : int
        Batch size.
    variation : GaussMarkovRecord or None
        Channels ``[speed perturbation (m/s), set perturbation (rad)]``.
    """

    n_trials: int
    variation: GaussMarkovRecord | None = None


def init_current(
    model: CurrentModel,
    streams: TrialStreams,
    *,
    duration_s: float,
    dt_s: float = 1.0,
) -> CurrentState:
    """Draw the per-trial state of a current model (the whole record at once).

    Parameters
    ----------
    model : CurrentModel
    streams : TrialStreams
        Per-trial streams; the variation draws from ``"current.gauss_markov"``.
    duration_s : float
        Length of the record [s], >= 0; queries must stay within it.
    dt_s : float
        Record sample interval [s], > 0 (between samples the record is
        interpolated linearly; keep ``dt_s`` well below the correlation
        times).

    Returns
    -------
    CurrentState
    """
    if not (np.isfinite(duration_s) and duration_s >= 0):
        raise ParameterError("duration_s", duration_s, "must be a finite number >= 0")
    if not (np.isfinite(dt_s) and dt_s > 0):
        raise ParameterError("dt_s", dt_s, "must be a finite number > 0")
    variation = None
    if model.variation is not None:
        v = model.variation
        n_samples = max(2, math.ceil(duration_s / dt_s - 1e-9) + 1)
        sig = np.stack(
            np.broadcast_arrays(_column(v.speed_sigma_mps), np.deg2rad(_column(v.set_sigma_deg))),
            axis=-1,
        )
        tc = np.stack(np.broadcast_arrays(_column(v.speed_tc_s), _column(v.set_tc_s)), axis=-1)
        values = gauss_markov_record(
            streams, "current.gauss_markov", sig, tc, dt_s=float(dt_s), n_samples=n_samples
        )
        variation = GaussMarkovRecord(dt_s=float(dt_s), values=values)
    return CurrentState(n_trials=streams.n_trials, variation=variation)


def current_velocity_ned(
    model: CurrentModel,
    state: CurrentState,
    north_m: Any,
    east_m: Any,
    depth_m: Any = 0.0,
    t_s: Any = 0.0,
    *,
    water_depth_m: Any = None,
) -> np.ndarray:
    """Total current velocity at given positions, depths and time.

    Parameters
    ----------
    model : CurrentModel
    state : CurrentState
        From :func:`init_current` for the same batch.
    north_m, east_m : ndarray of shape (n_trials,)
        Positions [m] (NED).
    depth_m : float or ndarray of shape (n_trials,)
        Depth [m], positive down (0 at the surface).
    t_s : float or ndarray of shape (n_trials,)
        Time since the trial start [s].
    water_depth_m : float or ndarray of shape (n_trials,), optional
        Local water depth for the tidal power-law profile (e.g. from a
        seabed); defaults to ``model.tidal.water_depth_m``.

    Returns
    -------
    ndarray of shape (n_trials, 2)
        [north, east] current velocity [m/s].

    Notes
    -----
    ``v = U_u(t) e(beta(t)) + U_w (d0 - z)/d0 e(beta_w)
    + u_tide(t) ((d - z)/d)**alpha e(beta_f) + sum of fields``, with
    ``e(beta) = [cos(beta), sin(beta)]`` and ``U_u(t) = max(U + dU(t), 0)``,
    ``beta(t) = beta + dbeta(t)`` the Gauss--Markov-varied uniform current.
    """
    n, e = _positions(north_m, east_m)
    shape = n.shape
    out = np.zeros((*shape, 2))
    if model.uniform is not None:
        speed = np.broadcast_to(_column(model.uniform.speed_mps), shape)
        angle = np.broadcast_to(np.deg2rad(_column(model.uniform.set_deg)), shape)
        if model.variation is not None:
            if state.variation is None:
                raise ParameterError(
                    "state.variation",
                    None,
                    "model has a variation; build the state with init_current",
                )
            if state.n_trials != shape[0]:
                raise ParameterError(
                    "north_m", n, f"must have one entry per trial of the state ({state.n_trials})"
                )
            dv = state.variation.at(t_s)
            speed = np.maximum(speed + dv[:, 0], 0.0)
            angle = angle + dv[:, 1]
        out += speed[..., None] * _heading_vector(angle)
    if model.wind_driven is not None:
        w = model.wind_driven
        factor = linear_profile(depth_m, w.reference_depth_m)
        speed = np.broadcast_to(_column(w.surface_speed_mps) * factor, shape)
        out += speed[..., None] * _heading_vector(
            np.broadcast_to(np.deg2rad(_column(w.set_deg)), shape)
        )
    if model.tidal is not None:
        tp = model.tidal
        d = tp.water_depth_m if water_depth_m is None else water_depth_m
        u = tidal_along_axis_speed(tp, np.broadcast_to(np.asarray(t_s, dtype=float), shape))
        u = u * power_law_profile(depth_m, d, tp.exponent)
        out += np.broadcast_to(u, shape)[..., None] * _heading_vector(
            np.broadcast_to(np.deg2rad(_column(tp.flood_set_deg)), shape)
        )
    for f in model.fields:
        if isinstance(f, JetCurrentParams):
            out += jet_velocity_ned(f, n, e)
        elif isinstance(f, EddyCurrentParams):
            out += eddy_velocity_ned(f, n, e)
        else:
            out += gridded_velocity_ned(f, n, e, t_s)
    return out
