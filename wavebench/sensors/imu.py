"""Inertial measurement unit: gyro and accelerometer triads with grade presets.

Error model (per axis, per trial)
---------------------------------
For a true angular rate ``omega`` [rad/s] and specific force ``f`` [m/s^2]
sampled every ``dt``:

.. math::

    \\tilde\\omega_k = (1 + s_g)\\,\\omega_k + b_{g,0} + b_{g,GM}(t_k)
                     + b_{g,RW}(t_k) + n_{g,k}

and the same for the accelerometer, where

* ``s`` -- scale-factor error, a random constant ~ N(0, (ppm 1e-6)^2);
* ``b_0`` -- turn-on (switch-on to switch-on) bias, a random constant;
* ``b_GM`` -- in-run bias instability, a first-order Gauss--Markov process
  (stationary start) with correlation time ``T_c`` and standard deviation
  ``sigma_GM`` chosen so that its Allan-deviation peak equals the flicker
  floor of the stated bias instability ``B`` (below);
* ``b_RW`` -- rate random walk (accelerometer: bias random walk), a random
  walk from zero at the first sample;
* ``n`` -- white noise from the angle (velocity) random walk ``N``, per-sample
  standard deviation ``N / sqrt(dt)`` (IEEE Std 952-1997 convention; see
  :mod:`wavebench.sensors.noise`).

The white noise stands for the rate averaged over each interval ``dt``; the
biases are point samples at ``t_k``, which differs from interval averages by
``O(dt / T_c)`` -- negligible for ``T_c >> dt``. Misalignment,
g-sensitivity, non-linearity and quantisation are left out.

Bias instability as a Gauss--Markov process
-------------------------------------------
IEEE Std 952-1997 describes bias instability as flicker rate noise whose
Allan deviation is flat at ``sqrt(2 ln 2 / pi) B = 0.664 B``; ``B`` is the
*coefficient* (a data sheet that quotes the Allan minimum itself as "bias
instability" should be entered as that minimum / 0.664). A first-order
Gauss--Markov process with standard deviation ``sigma_GM`` and correlation
time ``T_c`` has the Allan deviation of El-Sheimy, Hou & Niu (2008), which
peaks at ``tau = 1.89 T_c`` with value ``0.617 sigma_GM``
(:func:`wavebench.sensors.allan.gauss_markov_allan_variance`). Setting the
peak on the floor gives

.. math::

    \\sigma_{GM} = \\frac{0.664}{0.617} B = 1.076\\, B,

so the simulated curve touches ``0.664 B`` at ``tau = 1.89 T_c`` and is
below it elsewhere (the single process has a hump, not a flat floor). The
correlation time ``T_c`` is a field of the grade: choose it so that
``1.89 T_c`` is where the sensor's Allan minimum lies. The presets use
``T_c`` = 100 s (consumer MEMS), 300 s (industrial MEMS), 600 s (tactical),
3600 s (navigation) -- common practice, no source: the hump then falls in
the range of averaging times (minutes for MEMS, about an hour for
navigation-grade sensors) where such sensors usually show their minimum.

Units at the boundary
---------------------
Gyro terms use the data-sheet units deg/sqrt(h), deg/h and deg/h/sqrt(h);
accelerometer random walk uses m/s/sqrt(h). Accelerometer biases are in SI,
m/s^2 (not mg, whose size depends on which g is meant); a figure in mg from
a data sheet converts with the standard g (``G_STANDARD``): 1 mg =
9.80665e-3 m/s^2. Inside, everything is rad/s, rad/sqrt(s), m/s^2 and
m/s^2/sqrt(Hz).

References
----------
.. [1] IEEE Std 952-1997, Allan variance annex (noise terms and read-off
   points).
.. [2] N. El-Sheimy, H. Hou and X. Niu, "Analysis and modeling of inertial
   sensors using Allan variance", *IEEE Trans. Instrum. Meas.* 57(1), 2008.
.. [3] N. El-Sheimy and A. Youssef, "Inertial sensors technologies for
   navigation applications: state of the art and future trends",
   *Satellite Navigation* 1:2 (2020), Table 1 (IMU classification by
   performance: gyro drift and accelerometer bias per grade).
.. [4] P. D. Groves, *Principles of GNSS, Inertial, and Multisensor
   Integrated Navigation Systems*, 2nd ed. (Artech House, 2013), ch. 4
   (inertial sensor grades and error characteristics).
"""

from __future__ import annotations

import dataclasses
import difflib
import math
from dataclasses import dataclass
from types import MappingProxyType
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from ..core.constants import G_STANDARD
from ..core.errors import ParameterError
from ..core.params import Params, bounded
from ..core.streams import TrialStreams
from .allan import FLICKER_FLOOR_FACTOR, GM_ADEV_PEAK_RATIO
from .noise import (
    _check_dt,
    density_to_sd,
    gauss_markov_sequence,
    random_constant,
    random_walk_sequence,
    white_sequence,
)

__all__ = [
    "DEG_PER_H",
    "GM_SIGMA_PER_BIAS_INSTABILITY",
    "IMU_GRADES",
    "ImuGrade",
    "ImuMeasurement",
    "imu_errors",
    "imu_grade",
    "imu_measure",
]

#: 1 deg/h in rad/s.
DEG_PER_H = math.pi / 180.0 / 3600.0
#: 1 deg/sqrt(h) in rad/sqrt(s) (= rad/s/sqrt(Hz)).
_DEG_PER_SQRT_H = math.pi / 180.0 / 60.0
#: 1 m/s/sqrt(h) in m/s^2/sqrt(Hz).
_MPS_PER_SQRT_H = 1.0 / 60.0
#: sigma_GM / B that puts the Gauss--Markov Allan peak on the flicker floor 0.664 B (1.076).
GM_SIGMA_PER_BIAS_INSTABILITY = FLICKER_FLOOR_FACTOR / GM_ADEV_PEAK_RATIO


@dataclass(frozen=True, kw_only=True)
class ImuGrade(Params):
    """Error figures of a gyro and accelerometer triad (the same on every axis).

    All terms default to zero (a perfect IMU). Any field may be a per-trial
    array of shape (n_trials,).

    Parameters
    ----------
    gyro_arw_deg_per_sqrt_h : float
        Angle random walk ``N`` [deg/sqrt(h)] (IEEE Std 952-1997).
    gyro_bias_instability_deg_per_h : float
        Bias-instability coefficient ``B`` [deg/h]; Allan floor ``0.664 B``.
    gyro_bias_corr_time_s : float
        Correlation time ``T_c`` of the Gauss--Markov bias [s], > 0.
    gyro_rrw_deg_per_h_per_sqrt_h : float
        Rate random walk ``K`` [deg/h/sqrt(h)].
    gyro_turn_on_bias_sd_deg_per_h : float
        Standard deviation of the turn-on bias [deg/h].
    gyro_scale_factor_sd_ppm : float
        Standard deviation of the scale-factor error [ppm].
    accel_vrw_mps_per_sqrt_h : float
        Velocity random walk [m/s/sqrt(h)].
    accel_bias_instability_mps2 : float
        Bias-instability coefficient [m/s^2]; Allan floor ``0.664 B``.
    accel_bias_corr_time_s : float
        Correlation time of the Gauss--Markov bias [s], > 0.
    accel_bias_rw_mps2_per_sqrt_h : float
        Bias (acceleration) random walk [m/s^2/sqrt(h)].
    accel_turn_on_bias_sd_mps2 : float
        Standard deviation of the turn-on bias [m/s^2].
    accel_scale_factor_sd_ppm : float
        Standard deviation of the scale-factor error [ppm].
    """

    gyro_arw_deg_per_sqrt_h: float = bounded(0.0, ge=0.0, unit="deg/sqrt(h)", doc="gyro angle random walk")
    gyro_bias_instability_deg_per_h: float = bounded(
        0.0, ge=0.0, unit="deg/h", doc="gyro bias-instability coefficient B (Allan floor 0.664 B)"
    )
    gyro_bias_corr_time_s: float = bounded(
        100.0, gt=0.0, unit="s", doc="correlation time of the Gauss-Markov gyro bias"
    )
    gyro_rrw_deg_per_h_per_sqrt_h: float = bounded(0.0, ge=0.0, unit="deg/h/sqrt(h)", doc="gyro rate random walk")
    gyro_turn_on_bias_sd_deg_per_h: float = bounded(0.0, ge=0.0, unit="deg/h", doc="gyro turn-on bias sd")
    gyro_scale_factor_sd_ppm: float = bounded(0.0, ge=0.0, unit="ppm", doc="gyro scale-factor error sd")
    accel_vrw_mps_per_sqrt_h: float = bounded(0.0, ge=0.0, unit="m/s/sqrt(h)", doc="velocity random walk")
    accel_bias_instability_mps2: float = bounded(
        0.0, ge=0.0, unit="m/s^2", doc="accelerometer bias-instability coefficient (Allan floor 0.664 B)"
    )
    accel_bias_corr_time_s: float = bounded(
        100.0, gt=0.0, unit="s", doc="correlation time of the Gauss-Markov accelerometer bias"
    )
    accel_bias_rw_mps2_per_sqrt_h: float = bounded(
        0.0, ge=0.0, unit="m/s^2/sqrt(h)", doc="accelerometer bias random walk"
    )
    accel_turn_on_bias_sd_mps2: float = bounded(0.0, ge=0.0, unit="m/s^2", doc="accelerometer turn-on bias sd")
    accel_scale_factor_sd_ppm: float = bounded(0.0, ge=0.0, unit="ppm", doc="accelerometer scale-factor error sd")


_MG = 1e-3 * G_STANDARD
_UG = 1e-6 * G_STANDARD

# Sources of the preset values:
#   [ESY] El-Sheimy & Youssef (2020), Satellite Navigation 1:2, Table 1 (gyro
#         drift and accelerometer bias by grade; commercial = automotive grade).
#   [mem] value from memory, not re-checked (typical of the grade in Groves
#         (2013) ch. 4 and of data sheets of that class).
#   [cp]  correlation time: common practice, no source (see module notes).
IMU_GRADES: MappingProxyType[str, ImuGrade] = MappingProxyType(
    {
        "consumer_mems": ImuGrade(
            gyro_arw_deg_per_sqrt_h=0.5,  # [mem]
            gyro_bias_instability_deg_per_h=10.0,  # [mem]
            gyro_bias_corr_time_s=100.0,  # [cp]
            gyro_turn_on_bias_sd_deg_per_h=360.0,  # [ESY] commercial grade: gyro drift 0.1 deg/s
            gyro_scale_factor_sd_ppm=5000.0,  # [mem]
            accel_vrw_mps_per_sqrt_h=0.1,  # [mem]
            accel_bias_instability_mps2=100.0 * _UG,  # [mem]
            accel_bias_corr_time_s=100.0,  # [cp]
            accel_turn_on_bias_sd_mps2=1000.0 * _UG,  # [ESY] commercial grade: 100-1000 ug (upper end)
            accel_scale_factor_sd_ppm=5000.0,  # [mem]
        ),
        "industrial_mems": ImuGrade(
            gyro_arw_deg_per_sqrt_h=0.15,  # [mem]
            gyro_bias_instability_deg_per_h=2.0,  # [mem]
            gyro_bias_corr_time_s=300.0,  # [cp]
            gyro_turn_on_bias_sd_deg_per_h=20.0,  # [mem]
            gyro_scale_factor_sd_ppm=1000.0,  # [mem]
            accel_vrw_mps_per_sqrt_h=0.03,  # [mem]
            accel_bias_instability_mps2=20.0 * _UG,  # [mem]
            accel_bias_corr_time_s=300.0,  # [cp]
            accel_turn_on_bias_sd_mps2=2.0 * _MG,  # [mem]
            accel_scale_factor_sd_ppm=1000.0,  # [mem]
        ),
        "tactical": ImuGrade(
            gyro_arw_deg_per_sqrt_h=0.05,  # [mem]
            gyro_bias_instability_deg_per_h=1.0,  # [ESY] tactical: gyro drift 1-10 deg/h (lower end)
            gyro_bias_corr_time_s=600.0,  # [cp]
            gyro_turn_on_bias_sd_deg_per_h=10.0,  # [ESY] tactical: gyro drift 1-10 deg/h (upper end)
            gyro_scale_factor_sd_ppm=300.0,  # [mem]
            accel_vrw_mps_per_sqrt_h=0.03,  # [mem]
            accel_bias_instability_mps2=50.0 * _UG,  # [mem]
            accel_bias_corr_time_s=600.0,  # [cp]
            accel_turn_on_bias_sd_mps2=1.0 * _MG,  # [ESY] tactical: accelerometer bias 1-5 mg (lower end)
            accel_scale_factor_sd_ppm=300.0,  # [mem]
        ),
        "navigation": ImuGrade(
            gyro_arw_deg_per_sqrt_h=0.002,  # [mem]
            gyro_bias_instability_deg_per_h=0.003,  # [mem]
            gyro_bias_corr_time_s=3600.0,  # [cp]
            gyro_turn_on_bias_sd_deg_per_h=0.01,  # [ESY] navigation: gyro drift < 0.01 deg/h
            gyro_scale_factor_sd_ppm=5.0,  # [mem]
            accel_vrw_mps_per_sqrt_h=0.005,  # [mem]
            accel_bias_instability_mps2=10.0 * _UG,  # [mem]
            accel_bias_corr_time_s=3600.0,  # [cp]
            accel_turn_on_bias_sd_mps2=50.0 * _UG,  # [ESY] navigation: accelerometer bias < 100 ug
            accel_scale_factor_sd_ppm=100.0,  # [mem]
        ),
    }
)


def imu_grade(name: str, **overrides: Any) -> ImuGrade:
    """A preset :class:`ImuGrade`, optionally with some fields replaced.

    Parameters
    ----------
    name : str
        One of ``IMU_GRADES``: ``"consumer_mems"``, ``"industrial_mems"``,
        ``"tactical"``, ``"navigation"``.
    **overrides
        Field values to replace (validated).

    Returns
    -------
    ImuGrade

    Examples
    --------
    >>> imu_grade("tactical").gyro_turn_on_bias_sd_deg_per_h
    10.0
    >>> imu_grade("tactical", gyro_scale_factor_sd_ppm=0.0).gyro_scale_factor_sd_ppm
    0.0
    """
    if name not in IMU_GRADES:
        close = difflib.get_close_matches(str(name), list(IMU_GRADES), n=1)
        raise ParameterError(
            "grade", name, f"must be one of {sorted(IMU_GRADES)}", f"did you mean '{close[0]}'?" if close else ""
        )
    return dataclasses.replace(IMU_GRADES[name], **overrides)


@dataclass(frozen=True)
class ImuMeasurement:
    """IMU output for a batch of trials, with the true errors for analysis.

    Attributes
    ----------
    gyro_rad_s : ndarray of shape (n_trials, n_samples, n_axes)
        Measured angular rate [rad/s].
    accel_mps2 : ndarray of shape (n_trials, n_samples, n_axes)
        Measured specific force [m/s^2].
    gyro_bias_rad_s : ndarray of shape (n_trials, n_samples, n_axes)
        True gyro bias (turn-on + Gauss--Markov + rate random walk) [rad/s].
    accel_bias_mps2 : ndarray of shape (n_trials, n_samples, n_axes)
        True accelerometer bias [m/s^2].
    gyro_scale_factor : ndarray of shape (n_trials, n_axes)
        True gyro scale-factor error [-].
    accel_scale_factor : ndarray of shape (n_trials, n_axes)
        True accelerometer scale-factor error [-].
    """

    gyro_rad_s: NDArray[np.float64]
    accel_mps2: NDArray[np.float64]
    gyro_bias_rad_s: NDArray[np.float64]
    accel_bias_mps2: NDArray[np.float64]
    gyro_scale_factor: NDArray[np.float64]
    accel_scale_factor: NDArray[np.float64]


def _triad(
    streams: TrialStreams,
    prefix: str,
    truth: NDArray[np.float64],
    dt: float,
    *,
    white_density: Any,
    bias_gm_sigma: Any,
    bias_tc_s: Any,
    bias_rw_density: Any,
    turn_on_sd: Any,
    scale_sd: Any,
) -> tuple[NDArray[np.float64], NDArray[np.float64], NDArray[np.float64]]:
    """Measurement, total bias and scale factor of one sensor triad (SI inputs).

    A term that is zero for the whole batch is not drawn (its stream is left
    alone). Adding ``0.0`` at the end turns any ``-0.0`` into ``+0.0``, so a
    trial's bits do not depend on whether a batch-mate made a term draw.
    """
    n_trials, n, n_axes = truth.shape

    def off(value: Any) -> bool:
        return bool(np.all(np.asarray(value) == 0.0))

    zeros_axes = np.zeros((n_trials, n_axes))
    zeros_run = np.zeros((n_trials, n, n_axes))
    scale = zeros_axes if off(scale_sd) else random_constant(streams, f"{prefix}.scale_factor", scale_sd, n_axes=n_axes)
    turn_on = (
        zeros_axes if off(turn_on_sd) else random_constant(streams, f"{prefix}.turn_on_bias", turn_on_sd, n_axes=n_axes)
    )
    gm = (
        zeros_run
        if off(bias_gm_sigma)
        else gauss_markov_sequence(
            streams, f"{prefix}.bias_instability", n, bias_gm_sigma, bias_tc_s, dt, n_axes=n_axes
        )
    )
    walk = (
        zeros_run
        if off(bias_rw_density)
        else random_walk_sequence(streams, f"{prefix}.bias_random_walk", n, bias_rw_density, dt, n_axes=n_axes)
    )
    white = (
        zeros_run
        if off(white_density)
        else white_sequence(streams, f"{prefix}.white", n, density_to_sd(white_density, dt), n_axes=n_axes)
    )
    bias = turn_on[:, None, :] + gm + walk + 0.0
    measured = (1.0 + scale[:, None, :]) * truth + bias + white + 0.0
    return measured, bias, scale + 0.0


def _check_input(name: str, value: ArrayLike, n_trials: int) -> NDArray[np.float64]:
    arr = np.asarray(value, dtype=float)
    if arr.ndim != 3 or arr.shape[0] != n_trials or arr.shape[1] < 1 or arr.shape[2] < 1:
        raise ParameterError(
            name, value, f"must be an array of shape (n_trials, n_samples, n_axes) with n_trials = {n_trials}"
        )
    if not np.all(np.isfinite(arr)):
        raise ParameterError(name, value, "must be finite")
    return arr


def _measure(streams: TrialStreams, grade: ImuGrade, rate: NDArray[np.float64], force: NDArray[np.float64], dt: float,
             purpose: str) -> ImuMeasurement:  # fmt: skip
    """Both triads of :func:`imu_measure` (inputs checked by the callers; SI at the boundary)."""
    n_trials = streams.n_trials
    for f in dataclasses.fields(grade):
        value = np.asarray(getattr(grade, f.name))
        if value.ndim > 1 or (value.ndim == 1 and value.shape[0] != n_trials):
            raise ParameterError(
                f.name, getattr(grade, f.name), f"must be a scalar or an array of shape (n_trials,) = ({n_trials},)"
            )

    def arr(value: Any, factor: float) -> Any:
        return np.asarray(value, dtype=float) * factor

    gyro, gyro_bias, gyro_sf = _triad(
        streams,
        f"{purpose}.gyro",
        rate,
        dt,
        white_density=arr(grade.gyro_arw_deg_per_sqrt_h, _DEG_PER_SQRT_H),
        bias_gm_sigma=arr(grade.gyro_bias_instability_deg_per_h, DEG_PER_H * GM_SIGMA_PER_BIAS_INSTABILITY),
        bias_tc_s=grade.gyro_bias_corr_time_s,
        bias_rw_density=arr(grade.gyro_rrw_deg_per_h_per_sqrt_h, DEG_PER_H / 60.0),
        turn_on_sd=arr(grade.gyro_turn_on_bias_sd_deg_per_h, DEG_PER_H),
        scale_sd=arr(grade.gyro_scale_factor_sd_ppm, 1e-6),
    )
    accel, accel_bias, accel_sf = _triad(
        streams,
        f"{purpose}.accel",
        force,
        dt,
        white_density=arr(grade.accel_vrw_mps_per_sqrt_h, _MPS_PER_SQRT_H),
        bias_gm_sigma=arr(grade.accel_bias_instability_mps2, GM_SIGMA_PER_BIAS_INSTABILITY),
        bias_tc_s=grade.accel_bias_corr_time_s,
        bias_rw_density=arr(grade.accel_bias_rw_mps2_per_sqrt_h, 1.0 / 60.0),
        turn_on_sd=arr(grade.accel_turn_on_bias_sd_mps2, 1.0),
        scale_sd=arr(grade.accel_scale_factor_sd_ppm, 1e-6),
    )
    return ImuMeasurement(
        gyro_rad_s=gyro,
        accel_mps2=accel,
        gyro_bias_rad_s=gyro_bias,
        accel_bias_mps2=accel_bias,
        gyro_scale_factor=gyro_sf,
        accel_scale_factor=accel_sf,
    )


def imu_measure(
    streams: TrialStreams,
    grade: ImuGrade,
    true_rate_rad_s: ArrayLike,
    true_specific_force_mps2: ArrayLike,
    dt_s: float,
    *,
    purpose: str = "imu",
) -> ImuMeasurement:
    """Gyro and accelerometer measurements for a batch of trials and a whole run.

    Parameters
    ----------
    streams : TrialStreams
        Per-trial random streams. Each error term draws from its own purpose,
        ``f"{purpose}.gyro.white"``, ``f"{purpose}.accel.bias_instability"``,
        ... (``scale_factor``, ``turn_on_bias``, ``bias_instability``,
        ``bias_random_walk``, ``white``).
    grade : ImuGrade
        Error figures (scalars or per-trial arrays of shape (n_trials,)).
    true_rate_rad_s : array_like of shape (n_trials, n_samples, n_axes)
        True angular rate in the sensor frame [rad/s] at the IMU samples.
    true_specific_force_mps2 : array_like of shape (n_trials, n_samples, n_axes)
        True specific force in the sensor frame [m/s^2], same shape. Any
        number of axes (3 for a full triad; fewer for a planar subset).
    dt_s : float
        IMU sample interval [s], > 0.
    purpose : str
        Prefix of the stream names; give each IMU of a vehicle its own.

    Returns
    -------
    ImuMeasurement

    Notes
    -----
    See the module notes for the error model and the unit conversions:
    ``N [rad/sqrt(s)] = N [deg/sqrt(h)] (pi/180)/60``,
    ``B [rad/s] = B [deg/h] (pi/180)/3600``,
    ``K [rad/s/sqrt(s)] = K [deg/h/sqrt(h)] (pi/180)/3600/60``,
    ``VRW [m/s^2/sqrt(Hz)] = VRW [m/s/sqrt(h)]/60``, Gauss--Markov
    ``sigma_GM = 1.076 B``.

    Examples
    --------
    >>> import numpy as np
    >>> s = TrialStreams(seed=5, trials=2)
    >>> zero = np.zeros((2, 100, 3))
    >>> m = imu_measure(s, imu_grade("tactical"), zero, zero, 0.01)
    >>> m.gyro_rad_s.shape, m.gyro_scale_factor.shape
    ((2, 100, 3), (2, 3))
    """
    if not isinstance(grade, ImuGrade):
        raise ParameterError("grade", grade, "must be an ImuGrade (see imu_grade())")
    dt = _check_dt(dt_s)
    n_trials = streams.n_trials
    rate = _check_input("true_rate_rad_s", true_rate_rad_s, n_trials)
    force = _check_input("true_specific_force_mps2", true_specific_force_mps2, n_trials)
    if force.shape != rate.shape:
        raise ParameterError(
            "true_specific_force_mps2",
            true_specific_force_mps2,
            f"must have the shape of true_rate_rad_s {rate.shape}",
        )

    return _measure(streams, grade, rate, force, dt, purpose)


def imu_errors(
    streams: TrialStreams, grade: ImuGrade, n_samples: int, dt_s: float, *, purpose: str = "imu",
    gyro_axes: int = 1, accel_axes: int = 2,
) -> ImuMeasurement:  # fmt: skip
    """The IMU's additive errors for a whole run, without the true signal.

    :func:`imu_measure` with zero true rate and specific force: ``gyro_rad_s``
    and ``accel_mps2`` are then bias plus white noise (the scale factors are
    returned apart, to multiply the truth when it is known later, e.g. inside
    a compiled run). The draws are the same streams as :func:`imu_measure`'s
    for the same ``purpose`` and axes.

    Parameters
    ----------
    streams : TrialStreams
    grade : ImuGrade
    n_samples : int
        Samples in the run, >= 1.
    dt_s : float
        Sample interval [s], > 0.
    purpose : str
    gyro_axes, accel_axes : int
        Axes drawn for each triad (1 and 2 for the horizontal plane: yaw rate, surge and sway force).

    Returns
    -------
    ImuMeasurement
        Errors of shape (n_trials, n_samples, axes) and scale factors (n_trials, axes).

    Examples
    --------
    >>> s = TrialStreams(seed=5, trials=2)
    >>> e = imu_errors(s, imu_grade("tactical"), 50, 0.1)
    >>> e.gyro_rad_s.shape, e.accel_mps2.shape
    ((2, 50, 1), (2, 50, 2))
    """
    if not isinstance(grade, ImuGrade):
        raise ParameterError("grade", grade, "must be an ImuGrade (see imu_grade())")
    dt = _check_dt(dt_s)
    n = streams.n_trials
    zero_g = np.zeros((n, int(n_samples), gyro_axes))
    zero_a = np.zeros((n, int(n_samples), accel_axes))
    return _measure(streams, grade, zero_g, zero_a, dt, purpose)
