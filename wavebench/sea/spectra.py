"""Wave frequency spectra: Pierson–Moskowitz and JONSWAP in (Hs, Tp, gamma) form.

All spectra here are one-sided, in angular frequency: ``S(omega)`` in
m^2·s/rad with ``omega`` in rad/s, so that ``m0 = integral S domega`` is the
variance of the surface elevation and ``Hm0 = 4 sqrt(m0)``.

Shapes. Sea-state parameters (``hs_m``, ``tp_s``, ``gamma``) may be scalars
or per-trial columns of shape ``(n_trials, 1)``; ``omega`` may be
``(n_freq,)`` or ``(n_trials, n_freq)``. Results follow numpy broadcasting, so
per-trial columns with a shared frequency grid give ``(n_trials, n_freq)``.
:class:`SeaSpectrum` accepts per-trial parameters of shape ``(n_trials,)`` and
turns them into columns itself.

Examples
--------
>>> import numpy as np
>>> w = np.linspace(0.0, 4.0, 4001)
>>> s = jonswap(w, 4.0, 8.0, gamma=3.3)
>>> float(s[0])
0.0
>>> round(float(4.0 * np.sqrt(spectral_moment(w, s, 0))), 2)
4.0

References
----------
.. [1] DNV, "Environmental conditions and environmental loads",
   Recommended Practice DNV-RP-C205 (2010), section 3.5.5 (wave spectra).
.. [2] W. J. Pierson and L. Moskowitz, "A proposed spectral form for fully
   developed wind seas based on the similarity theory of S. A. Kitaigorodskii",
   J. Geophys. Res. 69(24), 5181–5190 (1964).
.. [3] K. Hasselmann et al., "Measurements of wind-wave growth and swell decay
   during the Joint North Sea Wave Project (JONSWAP)", Dtsch. Hydrogr. Z.,
   Ergänzungsheft A 12 (1973).
.. [4] R. H. Stewart, Introduction to Physical Oceanography, ch. 16
   (ocean-wave spectra).
"""

from __future__ import annotations

import dataclasses
import math
import warnings
from dataclasses import dataclass
from typing import Any, NamedTuple

import numpy as np
from numpy.typing import ArrayLike, NDArray
from scipy import integrate

from ..core.constants import G
from ..core.errors import ParameterError, WavebenchWarning
from ..core.params import Bounds, Params, bounded, check_value

__all__ = [
    "JONSWAP_GAMMA_RANGE",
    "JONSWAP_SIGMA_ABOVE",
    "JONSWAP_SIGMA_BELOW",
    "JONSWAP_VALID_TP_OVER_SQRT_HS",
    "PeriodRatios",
    "SeaSpectrum",
    "SpectralSummary",
    "dnv_gamma",
    "dnv_period_ratios",
    "jonswap",
    "jonswap_in_valid_range",
    "pierson_moskowitz",
    "pm_from_wind",
    "spectral_moment",
    "spectral_summary",
]

#: JONSWAP spectral width parameter for omega <= omega_p (DNV-RP-C205 sec. 3.5.5).
JONSWAP_SIGMA_BELOW = 0.07
#: JONSWAP spectral width parameter for omega > omega_p (DNV-RP-C205 sec. 3.5.5).
JONSWAP_SIGMA_ABOVE = 0.09
#: Range of Tp/sqrt(Hs) [s/sqrt(m)] in which DNV-RP-C205 considers JONSWAP a
#: reasonable model: 3.6 < Tp/sqrt(Hs) < 5.
JONSWAP_VALID_TP_OVER_SQRT_HS = (3.6, 5.0)

#: Range of the JONSWAP peak-enhancement factor gamma [-] accepted by
#: :func:`jonswap` and :class:`SeaSpectrum`: 1 <= gamma <= 7. DNV-RP-C205 (2010)
#: sec. 3.5.5 gives its period-ratio fits for 1 <= gamma < 7 (range from memory,
#: not re-checked), and its normalisation A_gamma = 1 - 0.287 ln(gamma) keeps
#: 4 sqrt(m0) within about 1 % of Hs only up to gamma ~ 7 (checked numerically in
#: the tests); above that the error grows (~3.5 % at gamma = 10, ~22 % at 20) and
#: A_gamma turns negative for gamma > exp(1/0.287) ~ 32.6.
JONSWAP_GAMMA_RANGE = (1.0, 7.0)

_POSITIVE = Bounds(gt=0.0)
_GAMMA = Bounds(ge=1.0)  # period-ratio fits: warn above 7 rather than refuse
_GAMMA_SPECTRUM = Bounds(ge=JONSWAP_GAMMA_RANGE[0], le=JONSWAP_GAMMA_RANGE[1])
_KINDS = ("jonswap", "pierson_moskowitz")
# wp/omega above this gives exactly 0.0 in double precision (exp(-1.25 x^4)
# underflows long before x^5 overflows); clipping avoids inf * 0 at omega -> 0.
_X_CLIP = 100.0


def _as_omega(omega: ArrayLike) -> NDArray[np.float64]:
    """Validate an angular-frequency array (finite, >= 0)."""
    try:
        w = np.asarray(omega, dtype=float)
    except (TypeError, ValueError):
        raise ParameterError(
            "omega", omega, "must be finite angular frequencies >= 0 rad/s"
        ) from None
    if not np.all(np.isfinite(w)) or np.any(w < 0.0):
        raise ParameterError("omega", w, "must be finite angular frequencies >= 0 rad/s")
    return w


def _positive(name: str, value: Any) -> Any:
    return check_value(name, value, _POSITIVE)


def _pm_shape(omega: NDArray[np.float64], wp: Any) -> NDArray[np.float64]:
    """x^5 exp(-5/4 x^4) with x = wp/omega, equal to 0 at omega = 0."""
    with np.errstate(divide="ignore", under="ignore"):
        x = np.minimum(wp / omega, _X_CLIP)
        return x**5 * np.exp(-1.25 * x**4)


def _pm_unchecked(omega: NDArray[np.float64], hs: Any, tp: Any) -> NDArray[np.float64]:
    wp = 2.0 * np.pi / np.asarray(tp, dtype=float)
    # S = 5/16 Hs^2 wp^4 w^-5 exp(-5/4 (w/wp)^-4) = 5/16 Hs^2 / wp * x^5 exp(-5/4 x^4)
    return 0.3125 * np.asarray(hs, dtype=float) ** 2 / wp * _pm_shape(omega, wp)


def _jonswap_unchecked(
    omega: NDArray[np.float64], hs: Any, tp: Any, gamma: Any
) -> NDArray[np.float64]:
    tp = np.asarray(tp, dtype=float)
    gamma = np.asarray(gamma, dtype=float)
    wp = 2.0 * np.pi / tp
    sigma = np.where(omega <= wp, JONSWAP_SIGMA_BELOW, JONSWAP_SIGMA_ABOVE)
    with np.errstate(under="ignore"):
        r = np.exp(-0.5 * ((omega - wp) / (sigma * wp)) ** 2)
        a_gamma = 1.0 - 0.287 * np.log(gamma)
        return a_gamma * _pm_unchecked(omega, hs, tp) * gamma**r


def pierson_moskowitz(omega: ArrayLike, hs_m: ArrayLike, tp_s: ArrayLike) -> NDArray[np.float64]:
    """Pierson–Moskowitz spectrum in (Hs, Tp) form.

    Parameters
    ----------
    omega : ndarray of shape (n_freq,) or (n_trials, n_freq)
        Angular frequency [rad/s], finite and >= 0.
    hs_m : float or ndarray of shape (n_trials, 1)
        Significant wave height Hs [m], > 0.
    tp_s : float or ndarray of shape (n_trials, 1)
        Spectral peak period Tp [s], > 0.

    Returns
    -------
    ndarray
        Spectral density S(omega) [m^2·s/rad], shape from broadcasting
        ``omega`` with the parameters; exactly 0 at omega = 0.

    Raises
    ------
    ParameterError
        If ``hs_m`` or ``tp_s`` is not a finite positive number, or ``omega``
        holds negative or non-finite values.

    Notes
    -----
    .. math::

        S_{PM}(\\omega) = \\frac{5}{16} H_s^2 \\omega_p^4 \\omega^{-5}
        \\exp\\left[-\\frac{5}{4}\\left(\\frac{\\omega}{\\omega_p}\\right)^{-4}\\right],
        \\qquad \\omega_p = 2\\pi/T_p .

    The cumulative fraction of m0 below omega is exactly
    ``exp(-5/4 (omega_p/omega)^4)``, and ``4 sqrt(m0) = Hs``.

    References
    ----------
    DNV-RP-C205 (2010), sec. 3.5.5; Pierson & Moskowitz (1964).
    """
    w = _as_omega(omega)
    hs = _positive("hs_m", hs_m)
    tp = _positive("tp_s", tp_s)
    return _pm_unchecked(w, hs, tp)


def dnv_gamma(hs_m: ArrayLike, tp_s: ArrayLike) -> Any:
    """JONSWAP peak-enhancement factor from the DNV-RP-C205 rule.

    Parameters
    ----------
    hs_m : float or ndarray
        Significant wave height [m], > 0.
    tp_s : float or ndarray
        Peak period [s], > 0 (broadcast against ``hs_m``).

    Returns
    -------
    float or ndarray
        gamma [-], in [1, 5]; a float when both inputs are scalars.

    Notes
    -----
    With :math:`r = T_p/\\sqrt{H_s}` (Tp in s, Hs in m):
    gamma = 5 for r <= 3.6; gamma = exp(5.75 - 1.15 r) for 3.6 < r < 5;
    gamma = 1 for r >= 5.

    References
    ----------
    DNV-RP-C205 (2010), sec. 3.5.5.

    Examples
    --------
    >>> dnv_gamma(4.0, 6.0)
    5.0
    >>> dnv_gamma(1.0, 6.0)
    1.0
    """
    hs = np.asarray(_positive("hs_m", hs_m), dtype=float)
    tp = np.asarray(_positive("tp_s", tp_s), dtype=float)
    r = tp / np.sqrt(hs)
    out = np.where(r <= 3.6, 5.0, np.where(r >= 5.0, 1.0, np.exp(5.75 - 1.15 * r)))
    return out if out.ndim else float(out)


def jonswap_in_valid_range(hs_m: ArrayLike, tp_s: ArrayLike) -> Any:
    """Whether Tp/sqrt(Hs) lies where DNV-RP-C205 considers JONSWAP reasonable.

    Parameters
    ----------
    hs_m, tp_s : float or ndarray
        Significant wave height [m] and peak period [s], > 0.

    Returns
    -------
    bool or ndarray of bool
        True where ``3.6 <= Tp/sqrt(Hs) <= 5`` (the end points themselves are
        treated as inside: the DNV gamma rule is continuous there).
    """
    hs = np.asarray(_positive("hs_m", hs_m), dtype=float)
    tp = np.asarray(_positive("tp_s", tp_s), dtype=float)
    r = tp / np.sqrt(hs)
    lo, hi = JONSWAP_VALID_TP_OVER_SQRT_HS
    ok = (r >= lo) & (r <= hi)
    return ok if ok.ndim else bool(ok)


def _warn_outside_range(hs: Any, tp: Any, stacklevel: int) -> None:
    ok = np.asarray(jonswap_in_valid_range(hs, tp))
    if not ok.all():
        r = np.asarray(tp, dtype=float) / np.sqrt(np.asarray(hs, dtype=float))
        bad = np.broadcast_to(r, ok.shape)[~ok] if ok.ndim else np.atleast_1d(r)
        warnings.warn(
            f"JONSWAP with an explicit gamma at Tp/sqrt(Hs) = {float(bad.flat[0]):.3g} "
            f"({int(bad.size)} value(s) outside 3.6..5 s/sqrt(m)): DNV-RP-C205 "
            "considers JONSWAP a reasonable model only for 3.6 < Tp/sqrt(Hs) < 5",
            WavebenchWarning,
            stacklevel=stacklevel,
        )


def jonswap(
    omega: ArrayLike, hs_m: ArrayLike, tp_s: ArrayLike, gamma: ArrayLike | None = None
) -> NDArray[np.float64]:
    """JONSWAP spectrum in the (Hs, Tp, gamma) form of DNV-RP-C205.

    Parameters
    ----------
    omega : ndarray of shape (n_freq,) or (n_trials, n_freq)
        Angular frequency [rad/s], finite and >= 0.
    hs_m : float or ndarray of shape (n_trials, 1)
        Significant wave height Hs [m], > 0.
    tp_s : float or ndarray of shape (n_trials, 1)
        Peak period Tp [s], > 0.
    gamma : float or ndarray of shape (n_trials, 1), optional
        Peak-enhancement factor [-], 1 <= gamma <= 7 (see
        :data:`JONSWAP_GAMMA_RANGE`). ``None`` (default) applies the DNV rule
        :func:`dnv_gamma`.

    Returns
    -------
    ndarray
        S(omega) [m^2·s/rad], broadcast shape; exactly 0 at omega = 0.

    Raises
    ------
    ParameterError
        For non-positive or non-finite ``hs_m``/``tp_s``, ``gamma`` outside
        [1, 7], or bad ``omega``.

    Warns
    -----
    WavebenchWarning
        Only when ``gamma`` is given explicitly and Tp/sqrt(Hs) lies outside
        [3.6, 5] s/sqrt(m), where DNV-RP-C205 says JONSWAP should be used
        with caution. With ``gamma=None`` the DNV rule already covers every
        Tp/sqrt(Hs) (gamma = 5 below 3.6, PM above 5), so no warning is given.

    Notes
    -----
    .. math::

        S_J(\\omega) = A_\\gamma S_{PM}(\\omega)\\,
        \\gamma^{\\exp\\left(-\\frac{1}{2}\\left(\\frac{\\omega-\\omega_p}
        {\\sigma\\omega_p}\\right)^2\\right)},
        \\qquad A_\\gamma = 1 - 0.287\\ln\\gamma ,

    with sigma = 0.07 for omega <= omega_p and 0.09 above. A_gamma is an
    approximate normalisation, so ``4 sqrt(m0)`` differs from Hs by up to
    about one per cent for gamma in [1, 7]. Larger gamma is refused: the
    error grows quickly above 7 and A_gamma < 0 above gamma ~ 32.6.

    References
    ----------
    DNV-RP-C205 (2010), sec. 3.5.5; Hasselmann et al. (1973).
    """
    w = _as_omega(omega)
    hs = _positive("hs_m", hs_m)
    tp = _positive("tp_s", tp_s)
    if gamma is None:
        g_val = dnv_gamma(hs, tp)
    else:
        g_val = check_value("gamma", gamma, _GAMMA_SPECTRUM)
        _warn_outside_range(hs, tp, stacklevel=3)
    return _jonswap_unchecked(w, hs, tp, g_val)


def spectral_moment(omega: ArrayLike, s: ArrayLike, n: float, *, method: str = "simpson") -> Any:
    """Spectral moment m_n = integral omega^n S(omega) domega over the last axis.

    Parameters
    ----------
    omega : ndarray of shape (n_freq,) or (..., n_freq)
        Angular frequency grid [rad/s], increasing, >= 0.
    s : ndarray of shape (..., n_freq)
        Spectral density [m^2·s/rad].
    n : float
        Order of the moment (may be negative, e.g. -1; the integrand is taken
        as 0 where omega = 0, which holds for spectra that vanish there).
    method : {"simpson", "trapezoid"}
        Integration rule.

    Returns
    -------
    float or ndarray of shape (...)
        m_n [m^2·(rad/s)^n].
    """
    w = _as_omega(omega)
    s_arr = np.asarray(s, dtype=float)
    if method not in ("simpson", "trapezoid"):
        raise ParameterError("method", method, "must be 'simpson' or 'trapezoid'")
    if w.ndim > 1:
        w = np.broadcast_to(w, np.broadcast_shapes(w.shape, s_arr.shape))
        s_arr = np.broadcast_to(s_arr, w.shape)
    if n == 0:
        y = s_arr
    else:
        safe = np.where(w > 0.0, w, 1.0)
        y = np.where(w > 0.0, safe**n, 0.0) * s_arr
    if method == "simpson":
        out = integrate.simpson(y, x=w, axis=-1)
    else:
        out = integrate.trapezoid(y, x=w, axis=-1)
    out = np.asarray(out, dtype=float)
    return out if out.ndim else float(out)


@dataclass(frozen=True)
class SpectralSummary:
    """Integral parameters of sampled spectra (one entry per spectrum).

    Attributes
    ----------
    hm0_m : float or ndarray of shape (...)
        Spectral significant wave height 4 sqrt(m0) [m].
    tp_s : float or ndarray
        Peak period 2 pi / omega_peak [s]; omega_peak from the largest
        sample refined by the vertex of the parabola through it and its two
        neighbours (no refinement at the grid ends).
    tz_s : float or ndarray
        Mean zero-up-crossing period Tm02 = 2 pi sqrt(m0/m2) [s].
    t1_s : float or ndarray
        Mean period Tm01 = 2 pi m0/m1 [s].
    te_s : float or ndarray
        Energy period Tm-10 = 2 pi m_-1/m0 [s].
    m0 : float or ndarray
        Zeroth moment [m^2].
    """

    hm0_m: Any
    tp_s: Any
    tz_s: Any
    t1_s: Any
    te_s: Any
    m0: Any


def _peak_frequency(w: NDArray[np.float64], s: NDArray[np.float64]) -> NDArray[np.float64]:
    w = np.broadcast_to(w, s.shape)
    k = np.argmax(s, axis=-1)[..., None]
    n = s.shape[-1]
    km = np.clip(k - 1, 0, n - 1)
    kp = np.clip(k + 1, 0, n - 1)
    x0, x1, x2 = (np.take_along_axis(w, i, -1)[..., 0] for i in (km, k, kp))
    y0, y1, y2 = (np.take_along_axis(s, i, -1)[..., 0] for i in (km, k, kp))
    interior = (k[..., 0] > 0) & (k[..., 0] < n - 1)
    with np.errstate(divide="ignore", invalid="ignore"):
        denom = (x0 - x1) * (x0 - x2) * (x1 - x2)
        a = (x2 * (y1 - y0) + x1 * (y0 - y2) + x0 * (y2 - y1)) / denom
        b = (x2**2 * (y0 - y1) + x1**2 * (y2 - y0) + x0**2 * (y1 - y2)) / denom
        xv = -b / (2.0 * a)
    good = interior & (a < 0.0) & (xv > x0) & (xv < x2)
    return np.where(good, xv, x1)


def spectral_summary(omega: ArrayLike, s: ArrayLike, *, method: str = "simpson") -> SpectralSummary:
    """Hm0, Tp, Tz, T1 and Te of sampled spectra.

    Parameters
    ----------
    omega : ndarray of shape (n_freq,) or (..., n_freq)
        Angular frequency grid [rad/s], increasing, >= 0; must resolve the
        peak and reach far enough into the tail for m2.
    s : ndarray of shape (..., n_freq)
        Spectral density [m^2·s/rad].
    method : {"simpson", "trapezoid"}
        Integration rule for the moments.

    Returns
    -------
    SpectralSummary

    Notes
    -----
    Hm0 = 4 sqrt(m0); Tz = 2 pi sqrt(m0/m2); T1 = 2 pi m0/m1;
    Te = 2 pi m_-1/m0 (DNV-RP-C205 (2010), sec. 3.5 definitions).
    """
    w = _as_omega(omega)
    s_arr = np.asarray(s, dtype=float)
    m0 = np.asarray(spectral_moment(w, s_arr, 0, method=method))
    m1 = np.asarray(spectral_moment(w, s_arr, 1, method=method))
    m2 = np.asarray(spectral_moment(w, s_arr, 2, method=method))
    mm1 = np.asarray(spectral_moment(w, s_arr, -1, method=method))
    wp = _peak_frequency(w, s_arr)

    def out(x: NDArray[np.float64]) -> Any:
        return x if x.ndim else float(x)

    return SpectralSummary(
        hm0_m=out(4.0 * np.sqrt(m0)),
        tp_s=out(2.0 * np.pi / wp),
        tz_s=out(2.0 * np.pi * np.sqrt(m0 / m2)),
        t1_s=out(2.0 * np.pi * m0 / m1),
        te_s=out(2.0 * np.pi * mm1 / m0),
        m0=out(m0),
    )


class PeriodRatios(NamedTuple):
    """Ratios of characteristic periods to the peak period for JONSWAP."""

    tz_over_tp: Any
    """Tz/Tp = Tm02/Tp [-]."""
    t1_over_tp: Any
    """T1/Tp = Tm01/Tp [-]."""


# DNV-RP-C205 (2010) sec. 3.5.5 polynomial fits, valid for 1 <= gamma < 7.
# Coefficients from memory; they agree with several independent public
# implementations of the standard, but the standard's text was not re-checked.
_TZ_TP_COEFFS = (0.6673, 0.05037, -0.006230, 0.0003341)  # from memory
_T1_TP_COEFFS = (0.7303, 0.04936, -0.006556, 0.0003610)  # from memory


def dnv_period_ratios(gamma: ArrayLike) -> PeriodRatios:
    """Tz/Tp and T1/Tp of a JONSWAP spectrum from the DNV-RP-C205 fits.

    Parameters
    ----------
    gamma : float or ndarray
        Peak-enhancement factor [-], >= 1.

    Returns
    -------
    PeriodRatios
        ``(tz_over_tp, t1_over_tp)``, floats for a scalar ``gamma``.

    Warns
    -----
    WavebenchWarning
        For gamma > 7, outside the range 1 <= gamma < 7 of the fits.

    Notes
    -----
    .. math::

        T_z/T_p = 0.6673 + 0.05037\\gamma - 0.006230\\gamma^2 + 0.0003341\\gamma^3

        T_1/T_p = 0.7303 + 0.04936\\gamma - 0.006556\\gamma^2 + 0.0003610\\gamma^3

    The matching fit for the energy period Te/Tp is left out: its
    coefficients could not be confirmed.

    References
    ----------
    DNV-RP-C205 (2010), sec. 3.5.5.

    Examples
    --------
    >>> r = dnv_period_ratios(1.0)
    >>> round(r.tz_over_tp, 4), round(r.t1_over_tp, 4)
    (0.7118, 0.7735)
    """
    g = np.asarray(check_value("gamma", gamma, _GAMMA), dtype=float)
    if np.any(g > 7.0):
        warnings.warn(
            "DNV-RP-C205 period-ratio fits are given for 1 <= gamma < 7; "
            f"got gamma up to {float(g.max()):.3g}",
            WavebenchWarning,
            stacklevel=2,
        )

    def poly(c: tuple[float, ...]) -> Any:
        v = c[0] + g * (c[1] + g * (c[2] + g * c[3]))
        return v if v.ndim else float(v)

    return PeriodRatios(poly(_TZ_TP_COEFFS), poly(_T1_TP_COEFFS))


def pm_from_wind(u19_5_mps: ArrayLike, g: float = G) -> tuple[Any, Any]:
    """Fully developed Pierson–Moskowitz sea from the wind speed at 19.5 m.

    Parameters
    ----------
    u19_5_mps : float or ndarray
        Mean wind speed 19.5 m above the sea surface [m/s], > 0.
    g : float
        Acceleration of gravity [m/s^2].

    Returns
    -------
    hs_m : float or ndarray
        Significant wave height [m], Hs = 0.21 U^2/g.
    tp_s : float or ndarray
        Peak period [s], Tp = 2 pi / omega_p with omega_p = 0.877 g/U.

    References
    ----------
    Pierson & Moskowitz (1964); Stewart, Introduction to Physical
    Oceanography, ch. 16.
    """
    u = np.asarray(_positive("u19_5_mps", u19_5_mps), dtype=float)
    g = float(_positive("g", g))
    hs = 0.21 * u**2 / g
    tp = 2.0 * np.pi / (0.877 * g / u)
    if hs.ndim == 0:
        return float(hs), float(tp)
    return hs, tp


def _column(x: Any) -> Any:
    """Per-trial (n_trials,) array as an (n_trials, 1) column; scalars unchanged."""
    a = np.asarray(x, dtype=float)
    return a[:, None] if a.ndim == 1 else a


@dataclass(frozen=True, kw_only=True)
class SeaSpectrum(Params):
    """Parameters of a one-dimensional sea spectrum (PM or JONSWAP).

    Parameters
    ----------
    kind : {"jonswap", "pierson_moskowitz"}
        Spectral form.
    hs_m : float or ndarray of shape (n_trials,)
        Significant wave height Hs [m], > 0.
    tp_s : float or ndarray of shape (n_trials,)
        Peak period Tp [s], > 0.
    gamma : float, ndarray of shape (n_trials,) or None
        JONSWAP peak-enhancement factor [-], 1 <= gamma <= 7 (see
        :data:`JONSWAP_GAMMA_RANGE`); ``None`` applies the
        DNV-RP-C205 rule (:func:`dnv_gamma`). Must be ``None`` or 1 for
        ``kind="pierson_moskowitz"``.

    Warns
    -----
    WavebenchWarning
        On construction, for ``kind="jonswap"`` with an explicit ``gamma``
        when Tp/sqrt(Hs) lies outside [3.6, 5] (see :func:`jonswap`).

    Examples
    --------
    >>> import numpy as np
    >>> sea = SeaSpectrum(kind="jonswap", hs_m=np.array([1.0, 2.0]), tp_s=6.0)
    >>> sea.density(np.linspace(0.1, 3.0, 50)).shape
    (2, 50)
    >>> try:
    ...     SeaSpectrum(kind="bretschneider", hs_m=1.0, tp_s=6.0)
    ... except ParameterError as err:
    ...     print(err)
    kind = 'bretschneider' is not allowed: must be one of 'jonswap', 'pierson_moskowitz'
    """

    kind: str = "jonswap"
    hs_m: Any = bounded(gt=0.0, unit="m", doc="significant wave height Hs = Hm0")
    tp_s: Any = bounded(gt=0.0, unit="s", doc="spectral peak period Tp")
    gamma: Any = dataclasses.field(
        default=None,
        metadata={
            "unit": "",
            "doc": "JONSWAP peak-enhancement factor (1 to 7), None for the DNV rule",
        },
    )

    def _check(self) -> None:
        if self.kind not in _KINDS:
            raise ParameterError("kind", self.kind, "must be one of 'jonswap', 'pierson_moskowitz'")
        if self.gamma is not None:
            object.__setattr__(self, "gamma", check_value("gamma", self.gamma, _GAMMA_SPECTRUM))
            if self.kind == "pierson_moskowitz" and np.any(np.asarray(self.gamma) != 1.0):
                raise ParameterError(
                    "gamma", self.gamma, "must be None (or 1) for kind 'pierson_moskowitz'"
                )
        named = [(k, getattr(self, k)) for k in ("hs_m", "tp_s", "gamma")]
        named = [(k, v) for k, v in named if v is not None]
        for k, v in named:
            if np.ndim(v) > 1:
                raise ParameterError(
                    k, v, f"must be a scalar or an array of shape (n_trials,), got shape {np.shape(v)}"
                )
        # per-trial lengths must agree (numpy broadcasting: a length-1 array goes with any)
        per_trial = [(k, np.shape(v)[0]) for k, v in named if np.ndim(v) == 1 and np.shape(v)[0] != 1]
        for k, n in per_trial[1:]:
            first, n0 = per_trial[0]
            if n != n0:
                raise ParameterError(
                    k,
                    getattr(self, k),
                    f"must have the same length as {first} ({n0} trials), got length {n}",
                )
        if self.kind == "jonswap" and self.gamma is not None:
            _warn_outside_range(self.hs_m, self.tp_s, stacklevel=5)

    @property
    def n_trials(self) -> int | None:
        """Number of trials of per-trial parameters, or None if all are scalars."""
        shapes = [np.shape(v) for v in (self.hs_m, self.tp_s, self.gamma) if v is not None]
        shape = np.broadcast_shapes(*shapes)
        return shape[0] if shape else None

    def gamma_value(self) -> Any:
        """Peak-enhancement factor in force [-]: 1 for PM, the DNV rule if None.

        Returns
        -------
        float or ndarray of shape (n_trials,)
        """
        if self.kind == "pierson_moskowitz":
            return 1.0
        if self.gamma is None:
            return dnv_gamma(self.hs_m, self.tp_s)
        return self.gamma

    def density(self, omega: ArrayLike) -> NDArray[np.float64]:
        """Spectral density S(omega) [m^2·s/rad].

        Parameters
        ----------
        omega : ndarray of shape (n_freq,) or (n_trials, n_freq)
            Angular frequency [rad/s], >= 0.

        Returns
        -------
        ndarray of shape (n_freq,) or (n_trials, n_freq)
            ``(n_trials, n_freq)`` when any parameter is per trial or
            ``omega`` is 2-D.
        """
        w = _as_omega(omega)
        hs, tp = _column(self.hs_m), _column(self.tp_s)
        if self.kind == "pierson_moskowitz":
            return _pm_unchecked(w, hs, tp)
        return _jonswap_unchecked(w, hs, tp, _column(self.gamma_value()))

    def peak_frequency(self) -> Any:
        """Angular peak frequency omega_p = 2 pi / Tp [rad/s]."""
        return 2.0 * math.pi / self.tp_s

    def frequency_band(self, fraction: float = 1e-3) -> tuple[Any, Any]:
        """Frequency band holding all but ``fraction`` of m0.

        Parameters
        ----------
        fraction : float
            Total share of m0 left outside the band, half below and half
            above, 0 < fraction <= 0.1. Default 1e-3 (0.1 % of the variance,
            i.e. about 0.05 % of Hm0).

        Returns
        -------
        omega_min, omega_max : float or ndarray of shape (n_trials,)
            Band limits [rad/s].

        Notes
        -----
        For PM the share of m0 below omega is exactly
        ``F(omega) = exp(-5/4 (omega_p/omega)^4)``, so the limits are

        .. math::

            \\omega_{min} = \\omega_p \\left(\\frac{5/4}{\\ln(2/\\epsilon)}\\right)^{1/4},
            \\qquad
            \\omega_{max} = \\omega_p \\left(\\frac{5/4}{-\\ln(1-\\epsilon/2)}\\right)^{1/4}.

        For JONSWAP the same limits are used. For fraction <= 0.1 they lie
        at omega_min <= 0.81 omega_p and omega_max >= 2.2 omega_p, where the
        enhancement exponent r is below 0.02, so the enhancement multiplies
        the tails by at most gamma^0.02 (< 1.04 for gamma <= 7) while it
        multiplies m0 by a larger factor: the share left outside is no
        larger than for PM.
        """
        eps = float(check_value("fraction", fraction, Bounds(gt=0.0, le=0.1)))
        wp = self.peak_frequency()
        lo = wp * (1.25 / math.log(2.0 / eps)) ** 0.25
        hi = wp * (1.25 / -math.log1p(-eps / 2.0)) ** 0.25
        return lo, hi
