"""Ranging sensors: depth (pressure) sensor, single-beam altimeter, acoustic slant range.

Depth sensor
------------
Reads the depth of the sensor plus bias and noise, optionally quantised to a
resolution; a sensor above the surface reads the surface (its true depth is
clipped at 0); beyond the full-scale depth the reading is invalid. The
noise is stated, as in pressure-sensor specifications, as a fraction of the
full scale. :func:`unesco_depth_from_pressure` converts a pressure to depth
with the UNESCO formula (Fofonoff & Millard 1983), for sensors that output
pressure.

Single-beam altimeter
---------------------
Range from the transducer to the seabed grid (:class:`~wavebench.sea.seabed.SeabedGrid`)
straight below it: ``depth(n, e) + water_level - transducer_depth``. With a
beam of full cone angle ``beta`` the footprint on a flat bottom has radius
``R = h tan(beta / 2)``; the range is then the mean depth over that disc,
approximated by the mean over ``n >= 3`` equally spaced points on the circle
of radius ``R / sqrt(2)``, which is exact for any quadratic surface (the disc
mean of ``x**2`` is ``R**2 / 4``, the ring mean ``rho**2 / 2``) and hence for
the bilinear grid within a cell. A real echo sounder reports the first
return (the shallowest point of the footprint); the mean is the smoother
model, chosen here on purpose. Ranges below the blanking range, above the
maximum range, off the grid or negative (transducer below the bed) are
invalid.

Acoustic slant range
--------------------
Range between the vehicle's transducer and fixed beacons from their 3-D NED
positions; the one-way travel time ``t = r / c`` with ``c`` the true sound
speed; the reported range is ``c_assumed t`` (the receiver converts with the
sound speed it assumes), plus noise and an outlier input (e.g. multipath:
mostly zero, occasionally a positive offset). Ranges above the maximum
range are invalid. The motion of the vehicle during the travel time is not
modelled; for two-way (interrogated) ranging the delay is ``2 r / c``.

Sound speed in seawater:

* :func:`mackenzie_sound_speed` — Mackenzie (1981) nine-term equation in
  temperature, salinity and depth; stated validity 2–30 degC, 25–40 ppt,
  0–8000 m; standard error 0.070 m/s (value from memory, not re-checked).
* :func:`unesco_sound_speed` — Chen & Millero (1977) in the form of the
  UNESCO algorithms (Fofonoff & Millard 1983), in temperature (IPTS-68),
  practical salinity and pressure; validity 0–40 degC, 0–40, 0–10 000 dbar.
  (The Wong & Zhu (1995) refit to ITS-90 is not implemented; convert ITS-90
  temperatures with ``T68 = 1.00024 T90`` instead, Saunders 1990.)

Outside their validity ranges both warn with
:class:`~wavebench.core.errors.WavebenchWarning` (``strict=True`` raises
:class:`~wavebench.core.errors.ParameterError`).

Invalid readings are NaN, and each reading comes with a boolean ``valid``
mask of the same shape.

References
----------
K. V. Mackenzie, "Nine-term equation for sound speed in the oceans",
J. Acoust. Soc. Am. 70(3), 807–812 (1981).
C.-T. Chen and F. J. Millero, "Speed of sound in seawater at high
pressures", J. Acoust. Soc. Am. 62(5), 1129–1135 (1977).
N. P. Fofonoff and R. C. Millard Jr, *Algorithms for computation of
fundamental properties of seawater*, UNESCO Technical Papers in Marine
Science 44 (1983) — sound speed (Chen & Millero) and depth from pressure,
with check values.
P. M. Saunders, "The International Temperature Scale of 1990, ITS-90",
WOCE Newsletter 10 (1990) — T68 = 1.00024 T90.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ..core.errors import ParameterError, WavebenchWarning
from ..core.params import Params, bounded
from ..sea.seabed import SeabedGrid, depth_at
from .arrays import finite_array, per_trial

__all__ = [
    "MACKENZIE_VALIDITY",
    "UNESCO_SOUND_SPEED_VALIDITY",
    "AcousticRangeParams",
    "AcousticRangeReading",
    "AltimeterParams",
    "DepthSensorParams",
    "Reading",
    "acoustic_range",
    "altimeter_range",
    "depth_sensor",
    "mackenzie_sound_speed",
    "seabed_depth_below",
    "slant_range_m",
    "unesco_depth_from_pressure",
    "unesco_sound_speed",
]

#: Mackenzie (1981) stated validity: name -> (low, high).
MACKENZIE_VALIDITY = {"temperature_c": (2.0, 30.0), "salinity_ppt": (25.0, 40.0), "depth_m": (0.0, 8000.0)}
#: UNESCO (Chen & Millero 1977; Fofonoff & Millard 1983) validity: name -> (low, high).
UNESCO_SOUND_SPEED_VALIDITY = {
    "temperature_c": (0.0, 40.0),
    "salinity_psu": (0.0, 40.0),
    "pressure_dbar": (0.0, 10000.0),
}


# ---------------------------------------------------------------------------
# helpers
# ---------------------------------------------------------------------------


def _add(name: str, base: NDArray[np.float64], term: ArrayLike, ndim: int | None = None) -> NDArray[np.float64]:
    t = finite_array(name, term)
    if ndim is not None:
        t = per_trial(t, ndim)
    try:
        out = base + t
    except ValueError:
        raise ParameterError(name, t, f"must broadcast against shape {base.shape}") from None
    if out.shape != base.shape:
        raise ParameterError(name, t, f"must broadcast to shape {base.shape}")
    return out


def _validity(
    function: str, ranges: dict[str, tuple[float, float]], values: dict[str, NDArray[np.float64]], strict: bool
) -> None:
    for name, (lo, hi) in ranges.items():
        v = values[name]
        if np.any((v < lo) | (v > hi)):
            if strict:
                raise ParameterError(name, v if v.ndim else float(v), f"must lie in [{lo}, {hi}] for {function}")
            warnings.warn(
                f"{name} outside [{lo}, {hi}], the validity range of {function}; result extrapolated",
                WavebenchWarning,
                stacklevel=3,
            )


@dataclass(frozen=True)
class Reading:
    """A batch of scalar sensor readings with their validity.

    Attributes
    ----------
    value : ndarray of shape (n_trials,) or (n_trials, n_samples)
        Reading [m]; NaN where not valid.
    valid : ndarray of bool, same shape
        Whether the sensor returned a reading.
    """

    value: NDArray[np.float64]
    valid: NDArray[np.bool_]


def seabed_depth_below(seabed: SeabedGrid, north_m: ArrayLike, east_m: ArrayLike) -> NDArray[np.float64]:
    """Seabed depth (bilinear, :func:`wavebench.sea.seabed.depth_at`) at points of any shape.

    Parameters
    ----------
    seabed : SeabedGrid
    north_m, east_m : float or ndarray, broadcastable shapes, e.g. (n_trials, n_samples)
        Query positions [m].

    Returns
    -------
    ndarray of the broadcast shape
        Depth below the grid's datum [m]; the grid's fill depth (NaN by
        default) off the grid.
    """
    if not isinstance(seabed, SeabedGrid):
        raise ParameterError("seabed", type(seabed).__name__, "must be a SeabedGrid")
    n = np.asarray(north_m, dtype=float)
    e = np.asarray(east_m, dtype=float)
    try:
        n, e = np.broadcast_arrays(n, e)
    except ValueError:
        raise ParameterError("east_m", e, f"must broadcast against north_m of shape {n.shape}") from None
    if n.size == 0:
        return np.zeros(n.shape)
    return depth_at(seabed, n.ravel(), e.ravel()).reshape(n.shape)


# ---------------------------------------------------------------------------
# Sound speed and pressure-to-depth
# ---------------------------------------------------------------------------


def mackenzie_sound_speed(
    temperature_c: ArrayLike, salinity_ppt: ArrayLike, depth_m: ArrayLike, *, strict: bool = False
) -> NDArray[np.float64] | float:
    """Sound speed in seawater, Mackenzie (1981) nine-term equation.

    Parameters
    ----------
    temperature_c : float or array_like
        Temperature [degC].
    salinity_ppt : float or array_like
        Salinity [parts per thousand].
    depth_m : float or array_like
        Depth [m].
    strict : bool
        Raise instead of warning outside the validity range.

    Returns
    -------
    float or ndarray of the broadcast shape
        Sound speed [m/s].

    Warns
    -----
    WavebenchWarning
        Outside 2–30 degC, 25–40 ppt or 0–8000 m (the paper's range).

    Notes
    -----
    .. math::

        c = 1448.96 + 4.591 T - 5.304\\times10^{-2} T^2 + 2.374\\times10^{-4} T^3
        + 1.340 (S - 35) + 1.630\\times10^{-2} D + 1.675\\times10^{-7} D^2
        - 1.025\\times10^{-2} T (S - 35) - 7.139\\times10^{-13} T D^3

    Examples
    --------
    >>> round(mackenzie_sound_speed(25.0, 35.0, 1000.0), 3)
    1550.744
    """
    t = finite_array("temperature_c", temperature_c)
    s = finite_array("salinity_ppt", salinity_ppt)
    d = finite_array("depth_m", depth_m)
    _validity("Mackenzie (1981)", MACKENZIE_VALIDITY, {"temperature_c": t, "salinity_ppt": s, "depth_m": d}, strict)
    ds = s - 35.0
    c = (
        1448.96
        + 4.591 * t
        - 5.304e-2 * t**2
        + 2.374e-4 * t**3
        + 1.340 * ds
        + 1.630e-2 * d
        + 1.675e-7 * d**2
        - 1.025e-2 * t * ds
        - 7.139e-13 * t * d**3
    )
    return float(c) if np.ndim(c) == 0 else c


def unesco_sound_speed(
    temperature_c: ArrayLike, salinity_psu: ArrayLike, pressure_dbar: ArrayLike, *, strict: bool = False
) -> NDArray[np.float64] | float:
    """Sound speed in seawater, Chen & Millero (1977) as in the UNESCO algorithms.

    Parameters
    ----------
    temperature_c : float or array_like
        Temperature [degC] on the IPTS-68 scale (``T68 = 1.00024 T90``).
    salinity_psu : float or array_like
        Practical salinity (PSS-78).
    pressure_dbar : float or array_like
        Sea pressure [dbar] (0 at the surface).
    strict : bool
        Raise instead of warning outside the validity range.

    Returns
    -------
    float or ndarray of the broadcast shape
        Sound speed [m/s].

    Warns
    -----
    WavebenchWarning
        Outside 0–40 degC, 0–40 or 0–10 000 dbar.

    Notes
    -----
    ``c = C(T, P) + A(T, P) S + B(T, P) S**1.5 + D(P) S**2`` with ``P`` in bar
    and the polynomial coefficients of Fofonoff & Millard (1983), sec. on
    the speed of sound.

    Examples
    --------
    >>> round(unesco_sound_speed(40.0, 40.0, 10000.0), 3)
    1731.995
    """
    t = finite_array("temperature_c", temperature_c)
    s = finite_array("salinity_psu", salinity_psu)
    p0 = finite_array("pressure_dbar", pressure_dbar)
    _validity(
        "Chen & Millero (1977)",
        UNESCO_SOUND_SPEED_VALIDITY,
        {"temperature_c": t, "salinity_psu": s, "pressure_dbar": p0},
        strict,
    )
    p = p0 / 10.0  # bar
    sr = np.sqrt(np.abs(s))
    d = 1.727e-3 - 7.9836e-6 * p
    b1 = 7.3637e-5 + 1.7945e-7 * t
    b0 = -1.922e-2 - 4.42e-5 * t
    b = b0 + b1 * p
    a3 = (-3.389e-13 * t + 6.649e-12) * t + 1.100e-10
    a2 = ((7.988e-12 * t - 1.6002e-10) * t + 9.1041e-9) * t - 3.9064e-7
    a1 = (((-2.0122e-10 * t + 1.0507e-8) * t - 6.4885e-8) * t - 1.2580e-5) * t + 9.4742e-5
    a0 = (((-3.21e-8 * t + 2.006e-6) * t + 7.164e-5) * t - 1.262e-2) * t + 1.389
    a = ((a3 * p + a2) * p + a1) * p + a0
    c3 = (-2.3643e-12 * t + 3.8504e-10) * t - 9.7729e-9
    c2 = (((1.0405e-12 * t - 2.5335e-10) * t + 2.5974e-8) * t - 1.7107e-6) * t + 3.1260e-5
    c1 = (((-6.1185e-10 * t + 1.3621e-7) * t - 8.1788e-6) * t + 6.8982e-4) * t + 0.153563
    c0 = ((((3.1464e-9 * t - 1.47800e-6) * t + 3.3420e-4) * t - 5.80852e-2) * t + 5.03711) * t + 1402.388
    c = ((c3 * p + c2) * p + c1) * p + c0
    out = c + (a + b * sr + d * s) * s
    return float(out) if np.ndim(out) == 0 else out


def unesco_depth_from_pressure(pressure_dbar: ArrayLike, latitude_deg: ArrayLike) -> NDArray[np.float64] | float:
    """Depth from sea pressure, UNESCO formula (Fofonoff & Millard 1983).

    Parameters
    ----------
    pressure_dbar : float or array_like
        Sea pressure [dbar], >= 0.
    latitude_deg : float or array_like
        Latitude [deg], in [-90, 90].

    Returns
    -------
    float or ndarray
        Depth [m] for a standard ocean (S = 35, T = 0 degC).

    Notes
    -----
    ``x = sin^2(lat)``, ``g = 9.780318 (1 + (5.2788e-3 + 2.36e-5 x) x) + 1.092e-6 p``,
    ``z = (((-1.82e-15 p + 2.279e-10) p - 2.2512e-5) p + 9.72659) p / g``.

    Examples
    --------
    >>> round(unesco_depth_from_pressure(10000.0, 30.0), 3)
    9712.653
    """
    p = finite_array("pressure_dbar", pressure_dbar)
    lat = finite_array("latitude_deg", latitude_deg)
    if np.any(p < 0.0):
        raise ParameterError("pressure_dbar", p if p.ndim else float(p), "must be >= 0")
    if np.any(np.abs(lat) > 90.0):
        raise ParameterError("latitude_deg", lat if lat.ndim else float(lat), "must lie in [-90, 90]")
    x = np.sin(np.radians(lat)) ** 2
    g = 9.780318 * (1.0 + (5.2788e-3 + 2.36e-5 * x) * x) + 1.092e-6 * p
    z = (((-1.82e-15 * p + 2.279e-10) * p - 2.2512e-5) * p + 9.72659) * p / g
    return float(z) if np.ndim(z) == 0 else z


# ---------------------------------------------------------------------------
# Depth sensor
# ---------------------------------------------------------------------------


@dataclass(frozen=True, kw_only=True)
class DepthSensorParams(Params):
    """Error budget of a depth (pressure) sensor.

    Parameters
    ----------
    full_scale_m : float
        Full-scale depth [m], > 0; deeper readings are invalid. Default
        100 m, common practice, no source.
    noise_fs_fraction : float
        1-sigma noise as a fraction of full scale, >= 0. Default 0.001
        (0.1 % FS), common practice, no source.
    resolution_m : float
        Quantisation step of the output [m], >= 0; 0 for no quantisation
        (default).
    """

    full_scale_m: float = bounded(100.0, gt=0.0, unit="m", doc="full-scale depth")
    noise_fs_fraction: float = bounded(0.001, ge=0.0, lt=1.0, unit="1", doc="1-sigma noise / full scale")
    resolution_m: float = bounded(0.0, ge=0.0, unit="m", doc="output quantisation step (0: none)")

    @property
    def noise_sd_m(self) -> float | NDArray[np.float64]:
        """1-sigma noise [m], scalar or shape (n_trials,)."""
        return self.noise_fs_fraction * self.full_scale_m


def _quantise(x: NDArray[np.float64], step: NDArray[np.float64]) -> NDArray[np.float64]:
    safe = np.where(step > 0.0, step, 1.0)
    return np.where(step > 0.0, np.round(x / safe) * safe, x)


def depth_sensor(
    depth_m: ArrayLike, params: DepthSensorParams, *, noise_m: ArrayLike = 0.0, bias_m: ArrayLike = 0.0
) -> Reading:
    """Depth-sensor reading.

    Parameters
    ----------
    depth_m : ndarray of shape (n_trials,) or (n_trials, n_samples)
        True depth of the sensor [m] (negative above the surface).
    params : DepthSensorParams
    noise_m : float or ndarray broadcastable to ``depth_m``
        Noise [m] (e.g. ``params.noise_sd_m`` times unit normal draws).
    bias_m : float or ndarray of shape (n_trials,)
        Constant offset per trial [m] (e.g. a Gauss–Markov or fixed bias).

    Returns
    -------
    Reading
        ``quantise(max(depth, 0) + bias + noise)`` [m]; NaN and not valid
        where the true depth exceeds the full scale.

    Examples
    --------
    >>> r = depth_sensor([3.14159, 120.0], DepthSensorParams(resolution_m=0.01))
    >>> r.value.tolist(), r.valid.tolist()
    ([3.14, nan], [True, False])
    """
    if not isinstance(params, DepthSensorParams):
        raise ParameterError("params", type(params).__name__, "must be DepthSensorParams")
    d = finite_array("depth_m", depth_m)
    nd = d.ndim
    x = np.maximum(d, 0.0)
    x = _add("bias_m", x, bias_m, nd)
    x = _add("noise_m", x, noise_m)
    x = _quantise(x, per_trial(params.resolution_m, nd))
    valid = np.broadcast_to(d <= per_trial(params.full_scale_m, nd), d.shape).copy()
    return Reading(value=np.where(valid, x, np.nan), valid=valid)


# ---------------------------------------------------------------------------
# Single-beam altimeter
# ---------------------------------------------------------------------------


@dataclass(frozen=True, kw_only=True)
class AltimeterParams(Params):
    """Single-beam altimeter (echo sounder) geometry and error budget.

    Parameters
    ----------
    max_range_m : float
        Largest range returned [m], > 0. Default 100 m, common practice, no
        source.
    min_range_m : float
        Blanking range [m], >= 0; shorter ranges are invalid. Default
        0.3 m, common practice, no source.
    beam_width_deg : float
        Full cone angle of the beam [deg], in [0, 60); 0 samples the point
        straight below (default).
    n_footprint_points : int
        Points on the footprint circle when ``beam_width_deg > 0``, >= 3.
        Default 8.
    noise_sd_m : float
        1-sigma range noise [m], >= 0. Default 0.05 m, common practice, no
        source.
    """

    max_range_m: float = bounded(100.0, gt=0.0, unit="m", doc="maximum range")
    min_range_m: float = bounded(0.3, ge=0.0, unit="m", doc="blanking range")
    beam_width_deg: float = bounded(0.0, ge=0.0, lt=60.0, unit="deg", doc="full beam cone angle")
    n_footprint_points: int = bounded(8, ge=3, integer=True, doc="points on the footprint circle")
    noise_sd_m: float = bounded(0.05, ge=0.0, unit="m", doc="1-sigma range noise")

    def _check(self) -> None:
        if np.any(np.asarray(self.min_range_m) >= np.asarray(self.max_range_m)):
            raise ParameterError("min_range_m", self.min_range_m, "must be < max_range_m")
        for name in ("beam_width_deg", "n_footprint_points"):
            if np.ndim(getattr(self, name)) != 0:
                raise ParameterError(name, getattr(self, name), "must be a scalar")
        object.__setattr__(self, "n_footprint_points", int(self.n_footprint_points))


def altimeter_range(
    seabed: SeabedGrid,
    north_m: ArrayLike,
    east_m: ArrayLike,
    transducer_depth_m: ArrayLike,
    params: AltimeterParams,
    *,
    water_level_m: ArrayLike = 0.0,
    noise_m: ArrayLike = 0.0,
) -> Reading:
    """Altimeter reading: range from the transducer down to the seabed grid.

    Parameters
    ----------
    seabed : SeabedGrid
    north_m, east_m : ndarray of shape (n_trials,) or (n_trials, n_samples)
        Horizontal position of the transducer [m].
    transducer_depth_m : float or ndarray, same shapes
        Depth of the transducer below the grid's datum [m] (for a surface
        craft: draft plus wave heave at the transducer; for an underwater
        vehicle: its depth).
    params : AltimeterParams
    water_level_m : float or ndarray, same shapes
        Water level above the datum [m] (tide).
    noise_m : float or ndarray broadcastable to the positions
        Range noise [m].

    Returns
    -------
    Reading
        Range [m] (see the module docstring); NaN and not valid off the grid,
        below the blanking range, above the maximum range, or where the
        transducer is below the seabed.
    """
    if not isinstance(params, AltimeterParams):
        raise ParameterError("params", type(params).__name__, "must be AltimeterParams")
    n = finite_array("north_m", north_m)
    e = finite_array("east_m", east_m)
    zt = finite_array("transducer_depth_m", transducer_depth_m)
    wl = finite_array("water_level_m", water_level_m)
    try:
        shape = np.broadcast_shapes(n.shape, e.shape, zt.shape, wl.shape)
    except ValueError:
        raise ParameterError("east_m", e, f"must broadcast against north_m of shape {n.shape}") from None
    offset = wl - zt
    vertical = np.broadcast_to(seabed_depth_below(seabed, n, e) + offset, shape)
    if params.beam_width_deg > 0.0:
        rho = np.abs(vertical) * math.tan(math.radians(params.beam_width_deg) / 2.0) / math.sqrt(2.0)
        rho = np.where(np.isfinite(rho), rho, 0.0)
        k = params.n_footprint_points
        ang = 2.0 * np.pi * np.arange(k) / k
        nb = np.broadcast_to(n, shape)[..., None] + rho[..., None] * np.cos(ang)
        eb = np.broadcast_to(e, shape)[..., None] + rho[..., None] * np.sin(ang)
        ring = seabed_depth_below(seabed, nb, eb).mean(axis=-1)
        beam_range = np.where(np.isfinite(vertical), ring + np.broadcast_to(offset, shape), np.nan)
    else:
        beam_range = np.array(vertical, dtype=float)
    nd = len(shape)
    with np.errstate(invalid="ignore"):
        valid = (
            np.isfinite(beam_range)
            & (beam_range >= per_trial(params.min_range_m, nd))
            & (beam_range <= per_trial(params.max_range_m, nd))
        )
    valid = np.broadcast_to(valid, shape).copy()
    value = _add("noise_m", np.where(valid, beam_range, 0.0), noise_m)
    return Reading(value=np.where(valid, value, np.nan), valid=valid)


# ---------------------------------------------------------------------------
# Acoustic slant range
# ---------------------------------------------------------------------------


@dataclass(frozen=True, kw_only=True)
class AcousticRangeParams(Params):
    """Acoustic ranging to fixed beacons: limits and error budget.

    Parameters
    ----------
    max_range_m : float
        Largest usable slant range [m], > 0. Default 1000 m, common
        practice, no source.
    noise_sd_m : float
        1-sigma range noise [m], >= 0. Default 0.1 m, common practice, no
        source.
    assumed_sound_speed_mps : float
        Sound speed the receiver uses to turn travel time into range [m/s],
        > 0. Default 1500 m/s, common practice, no source.
    """

    max_range_m: float = bounded(1000.0, gt=0.0, unit="m", doc="maximum slant range")
    noise_sd_m: float = bounded(0.1, ge=0.0, unit="m", doc="1-sigma range noise")
    assumed_sound_speed_mps: float = bounded(1500.0, gt=0.0, unit="m/s", doc="sound speed used by the receiver")


@dataclass(frozen=True)
class AcousticRangeReading:
    """A batch of acoustic ranges.

    Attributes
    ----------
    range_m : ndarray of shape (..., n_beacons)
        Reported slant range [m]; NaN where not valid.
    travel_time_s : ndarray, same shape
        One-way travel time ``r / c`` [s] (the latency of the reading).
    valid : ndarray of bool, same shape
        Whether the beacon is within the maximum range.
    """

    range_m: NDArray[np.float64]
    travel_time_s: NDArray[np.float64]
    valid: NDArray[np.bool_]


def slant_range_m(position_ned_m: ArrayLike, beacon_ned_m: ArrayLike) -> NDArray[np.float64]:
    """Euclidean slant ranges from positions to beacons.

    Parameters
    ----------
    position_ned_m : ndarray of shape (n_trials, 3) or (n_trials, n_samples, 3)
        Transducer position [north, east, down] [m].
    beacon_ned_m : ndarray of shape (n_beacons, 3) or (n_trials, n_beacons, 3)
        Beacon positions [m] (shared by all trials, or per trial).

    Returns
    -------
    ndarray of shape (n_trials, n_beacons) or (n_trials, n_samples, n_beacons)
        ``|p - b|`` [m].

    Examples
    --------
    >>> slant_range_m([[0.0, 0.0, 0.0]], [[3.0, 4.0, 0.0], [0.0, 0.0, 12.0]]).tolist()
    [[5.0, 12.0]]
    """
    p = finite_array("position_ned_m", position_ned_m)
    b = finite_array("beacon_ned_m", beacon_ned_m)
    if p.ndim not in (1, 2, 3) or p.shape[-1] != 3:
        raise ParameterError("position_ned_m", p, "must have shape (n_trials, 3) or (n_trials, n_samples, 3)")
    if b.ndim == 1 and b.shape == (3,):
        b = b[None, :]
    if b.ndim == 2 and b.shape[-1] == 3:
        diff = p[..., None, :] - b
    elif b.ndim == 3 and b.shape[-1] == 3 and p.ndim >= 2 and b.shape[0] == p.shape[0]:
        bb = b.reshape((b.shape[0],) + (1,) * (p.ndim - 2) + b.shape[1:])
        diff = p[..., None, :] - bb
    else:
        raise ParameterError(
            "beacon_ned_m", b, "must have shape (n_beacons, 3) or (n_trials, n_beacons, 3) matching the positions"
        )
    return np.sqrt(np.sum(diff * diff, axis=-1))


def acoustic_range(
    position_ned_m: ArrayLike,
    beacon_ned_m: ArrayLike,
    params: AcousticRangeParams,
    *,
    sound_speed_mps: ArrayLike,
    noise_m: ArrayLike = 0.0,
    outlier_m: ArrayLike = 0.0,
) -> AcousticRangeReading:
    """Acoustic slant-range reading to fixed beacons.

    Parameters
    ----------
    position_ned_m : ndarray of shape (n_trials, 3) or (n_trials, n_samples, 3)
        Transducer position [m].
    beacon_ned_m : ndarray of shape (n_beacons, 3) or (n_trials, n_beacons, 3)
        Beacon positions [m].
    params : AcousticRangeParams
    sound_speed_mps : float or ndarray of shape (n_trials,) or of the range shape
        True (harmonic-mean) sound speed along the path [m/s], > 0, e.g.
        from :func:`mackenzie_sound_speed`.
    noise_m : float or ndarray broadcastable to the range shape
        Range noise [m].
    outlier_m : float or ndarray broadcastable to the range shape
        Outlier offsets [m] (zero for a clean reading).

    Returns
    -------
    AcousticRangeReading
        ``range = c_assumed * r / c + noise + outlier`` (NaN where
        ``r > max_range``) and ``travel_time = r / c``.

    Examples
    --------
    >>> out = acoustic_range([[0.0, 0.0, 0.0]], [[300.0, 400.0, 0.0]],
    ...                      AcousticRangeParams(), sound_speed_mps=1500.0)
    >>> out.range_m.tolist(), out.travel_time_s.tolist()
    ([[500.0]], [[0.3333333333333333]])
    """
    if not isinstance(params, AcousticRangeParams):
        raise ParameterError("params", type(params).__name__, "must be AcousticRangeParams")
    r = slant_range_m(position_ned_m, beacon_ned_m)
    nd = r.ndim
    c = per_trial(finite_array("sound_speed_mps", sound_speed_mps), nd)
    if np.any(c <= 0.0):
        raise ParameterError("sound_speed_mps", c if c.ndim else float(c), "must be > 0")
    try:
        t = r / c
    except ValueError:
        raise ParameterError("sound_speed_mps", c, f"must be a scalar, (n_trials,) or broadcast to {r.shape}") from None
    if t.shape != r.shape:
        raise ParameterError("sound_speed_mps", c, f"must broadcast to the range shape {r.shape}")
    reported = per_trial(params.assumed_sound_speed_mps, nd) * t
    reported = _add("noise_m", reported, noise_m)
    reported = _add("outlier_m", reported, outlier_m)
    valid = np.broadcast_to(r <= per_trial(params.max_range_m, nd), r.shape).copy()
    return AcousticRangeReading(range_m=np.where(valid, reported, np.nan), travel_time_s=t, valid=valid)
