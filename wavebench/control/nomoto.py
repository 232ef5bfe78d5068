"""Identify a first-order Nomoto steering model from a recorded step response.

A rudder (or yaw-moment) step ``delta0`` given at ``t = 0`` to a craft
steady on a straight course makes the yaw rate of the first-order model
``T r_dot + r = K delta`` rise as

    r(t) = K delta0 (1 - exp(-t / T)).

:func:`fit_nomoto` fits ``K`` and ``T`` to a recorded ``r(t)`` by nonlinear
least squares (:func:`scipy.optimize.curve_fit`). :func:`identify_nomoto`
records the response of a craft by the public turning-circle manoeuvre
(:func:`wavebench.craft.manoeuvres.turning_circle`) and fits it.

Identification is an offline design step, not a hot path: the fit runs one
trial at a time (a loop over the trial axis).

References
----------
.. [1] K. Nomoto, T. Taguchi, K. Honda and S. Hirano, "On the steering
   qualities of ships", International Shipbuilding Progress 4(35) (1957) —
   first-order model ``T r_dot + r = K delta``.
.. [2] T. I. Fossen, Handbook of Marine Craft Hydrodynamics and Motion
   Control, 2nd ed., Wiley (2021), chapter on manoeuvring models (Nomoto's
   first-order model and its step response).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray
from scipy.optimize import curve_fit

from ..core.errors import ParameterError

__all__ = ["NomotoFit", "fit_nomoto", "identify_nomoto", "nomoto_step_response"]

FloatArray = NDArray[np.float64]


@dataclass(frozen=True)
class NomotoFit:
    """Fitted first-order Nomoto model (arrays of shape (n_trials,)).

    Attributes
    ----------
    gain_per_s : ndarray of shape (n_trials,)
        Nomoto gain K [1/s] (steady yaw rate per radian of rudder).
    time_constant_s : ndarray of shape (n_trials,)
        Nomoto time constant T [s].
    rms_residual_rad_s : ndarray of shape (n_trials,)
        RMS of the fit residual [rad/s].
    """

    gain_per_s: FloatArray
    time_constant_s: FloatArray
    rms_residual_rad_s: FloatArray


def nomoto_step_response(
    t: ArrayLike, gain_per_s: ArrayLike, time_constant_s: ArrayLike, delta0_rad: ArrayLike
) -> FloatArray:
    """Yaw rate of the first-order Nomoto model after a step ``delta0``.

    Parameters
    ----------
    t : ndarray of shape (n_samples,)
        Time since the step [s].
    gain_per_s, time_constant_s, delta0_rad : float or ndarray of shape (n_trials,)
        K [1/s], T [s] and the step size [rad].

    Returns
    -------
    ndarray of shape (n_trials, n_samples)
        ``K delta0 (1 - exp(-t / T))`` [rad/s].

    Examples
    --------
    >>> r = nomoto_step_response([0.0, 1e9], 0.5, 2.0, 0.1)
    >>> [round(float(v), 12) for v in r[0]]
    [0.0, 0.05]
    """
    tt = np.asarray(t, dtype=float)[None, :]
    k = np.atleast_1d(np.asarray(gain_per_s, dtype=float))[:, None]
    tc = np.atleast_1d(np.asarray(time_constant_s, dtype=float))[:, None]
    d0 = np.atleast_1d(np.asarray(delta0_rad, dtype=float))[:, None]
    return k * d0 * (1.0 - np.exp(-tt / tc))


def fit_nomoto(t: ArrayLike, r: ArrayLike, delta0_rad: ArrayLike) -> NomotoFit:
    """Least-squares fit of ``r(t) = K delta0 (1 - exp(-t/T))``.

    Parameters
    ----------
    t : ndarray of shape (n_samples,)
        Time since the step [s], increasing, starting at or after 0.
    r : ndarray of shape (n_samples,) or (n_trials, n_samples)
        Recorded yaw rate [rad/s].
    delta0_rad : float or ndarray of shape (n_trials,)
        Step size [rad], non-zero (a rudder angle, or the rudder-equivalent
        of a yaw-moment step).

    Returns
    -------
    NomotoFit

    Raises
    ------
    ParameterError
        If shapes disagree, ``delta0_rad`` is zero or the data are not finite.

    Notes
    -----
    Start values: ``K0 = r_end / delta0``; ``T0`` the time where ``r``
    first reaches 63.2 % of ``r_end`` (``1 - exp(-1)``). Each trial is
    fitted on its own, so a trial's result does not depend on the batch.
    """
    tt = np.asarray(t, dtype=float)
    rr = np.atleast_2d(np.asarray(r, dtype=float))
    if tt.ndim != 1 or tt.size < 3 or rr.shape[1] != tt.size:
        raise ParameterError("t", tt.shape, f"1-D with >= 3 samples matching r of shape {rr.shape}")
    if not (np.all(np.isfinite(tt)) and np.all(np.isfinite(rr))):
        raise ParameterError("r", "non-finite data", "finite t and r")
    n = rr.shape[0]
    d0 = np.broadcast_to(np.asarray(delta0_rad, dtype=float), (n,))
    if np.any(d0 == 0.0) or not np.all(np.isfinite(d0)):
        raise ParameterError("delta0_rad", delta0_rad, "must be finite and non-zero")
    k_out = np.empty(n)
    t_out = np.empty(n)
    rms = np.empty(n)
    for i in range(n):  # offline identification, one trial at a time
        ri = rr[i]
        r_end = float(np.mean(ri[-max(1, tt.size // 20) :]))
        k0 = r_end / d0[i]
        reached = np.nonzero(np.abs(ri) >= (1.0 - math.exp(-1.0)) * abs(r_end))[0]
        t0 = float(tt[reached[0]]) if reached.size and tt[reached[0]] > 0 else 0.2 * float(tt[-1])

        def model(x: FloatArray, k: float, tc: float, d: float = float(d0[i])) -> FloatArray:
            return k * d * (1.0 - np.exp(-x / tc))

        popt, _ = curve_fit(model, tt, ri, p0=(k0, max(t0, 1e-6)), bounds=([-np.inf, 1e-9], [np.inf, np.inf]))
        k_out[i], t_out[i] = popt
        rms[i] = float(np.sqrt(np.mean((model(tt, *popt) - ri) ** 2)))
    return NomotoFit(gain_per_s=k_out, time_constant_s=t_out, rms_residual_rad_s=rms)


def identify_nomoto(
    craft: object,
    *,
    rudder_deg: float = 10.0,
    duration_s: float = 60.0,
    dt: float = 0.05,
    approach_speed_mps: ArrayLike | None = None,
) -> NomotoFit:
    """Identify K and T of a craft from its own step response.

    Runs :func:`wavebench.craft.manoeuvres.turning_circle` with a small
    rudder (rudder-equivalent yaw moment for a differential-thrust craft),
    differentiates the recorded heading to a yaw rate and fits it with
    :func:`fit_nomoto`.

    Parameters
    ----------
    craft : CraftParams or NomotoParams
        The craft (a batch of dispersed trials allowed).
    rudder_deg : float, optional
        Step size [deg].
    duration_s : float, optional
        Length of the record used for the fit [s].
    dt : float, optional
        Manoeuvre step [s].
    approach_speed_mps : float or ndarray of shape (n_trials,), optional
        Approach speed; see ``turning_circle``.

    Returns
    -------
    NomotoFit

    Notes
    -----
    The rudder is not an ideal step: it moves at its rate limit, and the
    craft slows in the turn. The fit is therefore the best first-order
    description of this record, not an exact model; ``rms_residual_rad_s``
    says how good it is. For a differential-thrust craft ``delta`` is the
    rudder-equivalent of :mod:`wavebench.craft.manoeuvres` (a fraction
    ``delta / 35 deg`` of the largest yaw moment), so ``K`` is per radian of
    that equivalent. The record runs until every trial has turned
    ``end_heading_change_deg = 180`` or ``duration_s``; trials keep their
    own samples (``psi`` recorded for all trials to the end of the run).
    """
    from ..craft.manoeuvres import turning_circle

    res = turning_circle(
        craft,
        rudder_deg=rudder_deg,
        side=1,
        dt=dt,  # type: ignore[arg-type]
        approach_speed_mps=approach_speed_mps,
        max_duration_s=duration_s,
        end_heading_change_deg=1e6,
    )
    t = np.asarray(res.t, dtype=float)
    psi = np.asarray(res.psi_rad, dtype=float)
    r = np.gradient(psi, t, axis=-1)
    return fit_nomoto(t, r, math.radians(rudder_deg))
