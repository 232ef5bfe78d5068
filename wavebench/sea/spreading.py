"""Directional spreading of wave energy: cos-2s, cos^n and long-crested seas.

Direction conventions
---------------------
At the spec boundary the mean wave direction is given the nautical way, as
the direction the waves come FROM, in degrees clockwise from north
(``mean_dir_deg``; 270 = waves from the west). Inside wavebench every wave
direction is the direction the waves travel TOWARD, in radians clockwise
from north (the NED azimuth, same sense as a craft's heading), wrapped to
[-pi, pi):

.. math::

    \\theta_{toward} = \\mathrm{wrap}(\\pi d_{from} / 180 + \\pi)

with :math:`d_{from}` = ``mean_dir_deg``.

So waves from the west (270 deg) travel toward the east, theta = pi/2.
The encounter angle of :func:`wavebench.sea.dispersion.encounter_frequency`
is ``beta = theta_toward - craft heading`` (0 = following sea, pi = head sea).

All densities D(theta) are in 1/rad and integrate to one over a full turn.

References
----------
.. [1] M. S. Longuet-Higgins, D. E. Cartwright and N. D. Smith,
   "Observations of the directional spectrum of sea waves using the motions
   of a floating buoy", in Ocean Wave Spectra, Prentice-Hall, 111–136 (1963).
.. [2] H. Mitsuyasu et al., "Observations of the directional spectrum of
   ocean waves using a cloverleaf buoy", J. Phys. Oceanogr. 5, 750–760 (1975).
.. [3] DNV, Recommended Practice DNV-RP-C205 (2010), directional
   distribution of wave energy (cos^n form).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray
from scipy import special

from ..core.errors import ParameterError
from ..core.frames import wrap_pi
from ..core.params import Params, bounded
from ..core.streams import TrialStreams

__all__ = [
    "DirectionalSpreading",
    "cos2s",
    "cos2s_norm",
    "cosn",
    "cosn_norm",
    "nautical_from_deg_to_toward_rad",
    "wrap_angle",
]

_KINDS = ("cos2s", "cosn", "long_crested")


def wrap_angle(angle_rad: ArrayLike) -> NDArray[np.float64] | float:
    """Wrap angles to [-pi, pi) (:func:`wavebench.core.frames.wrap_pi`).

    Examples
    --------
    >>> round(wrap_angle(3 * math.pi / 2), 6)
    -1.570796
    """
    out = wrap_pi(angle_rad)
    return out if np.ndim(out) else float(out)


def nautical_from_deg_to_toward_rad(from_deg: ArrayLike) -> NDArray[np.float64] | float:
    """Nautical "coming from" direction [deg] to "going toward" azimuth [rad].

    Parameters
    ----------
    from_deg : float or ndarray
        Direction waves come from, degrees clockwise from north.

    Returns
    -------
    float or ndarray
        Direction waves travel toward, radians clockwise from north, in
        [-pi, pi).

    Examples
    --------
    >>> round(nautical_from_deg_to_toward_rad(270.0), 6)
    1.570796
    """
    return wrap_angle(np.deg2rad(np.asarray(from_deg, dtype=float)) + np.pi)


def cos2s_norm(s: ArrayLike) -> Any:
    """Normalising constant Gamma(s+1) / (2 sqrt(pi) Gamma(s+1/2)) of cos-2s [1/rad].

    Computed with ``scipy.special.gammaln`` so that large ``s`` does not
    overflow.
    """
    s = np.asarray(s, dtype=float)
    c = np.exp(special.gammaln(s + 1.0) - special.gammaln(s + 0.5)) / (2.0 * math.sqrt(math.pi))
    return c if c.ndim else float(c)


def cosn_norm(n: ArrayLike) -> Any:
    """Normalising constant Gamma(1+n/2) / (sqrt(pi) Gamma(1/2+n/2)) of cos^n [1/rad]."""
    n = np.asarray(n, dtype=float)
    c = np.exp(special.gammaln(1.0 + 0.5 * n) - special.gammaln(0.5 + 0.5 * n)) / math.sqrt(math.pi)
    return c if c.ndim else float(c)


def _check_exponent(name: str, value: ArrayLike) -> NDArray[np.float64]:
    v = np.asarray(value, dtype=float)
    if not np.all(np.isfinite(v)) or np.any(v <= 0.0):
        raise ParameterError(name, value, "must be a finite number > 0")
    return v


def cos2s(theta_rad: ArrayLike, mean_rad: ArrayLike, s: ArrayLike) -> NDArray[np.float64]:
    """Cos-2s directional spreading function (Longuet-Higgins et al. 1963).

    Parameters
    ----------
    theta_rad : ndarray
        Wave directions [rad] (any range; wrapped internally).
    mean_rad : float or ndarray
        Mean direction [rad], broadcast against ``theta_rad`` (use an
        ``(n_trials, 1)`` column for per-trial means).
    s : float or ndarray
        Spreading exponent [-], > 0; larger is narrower.

    Returns
    -------
    ndarray
        D(theta) [1/rad], broadcast shape; integrates to one over any
        interval of length 2 pi.

    Notes
    -----
    .. math::

        D(\\theta) = \\frac{\\Gamma(s+1)}{2\\sqrt{\\pi}\\,\\Gamma(s+\\tfrac12)}
        \\cos^{2s}\\left(\\frac{\\theta-\\bar\\theta}{2}\\right),
        \\qquad |\\theta-\\bar\\theta| \\le \\pi

    with the difference wrapped to [-pi, pi).

    Examples
    --------
    >>> round(float(cos2s(0.0, 0.0, 1.0)), 6)  # Gamma(2)/(2 sqrt(pi) Gamma(3/2)) = 1/pi
    0.31831
    """
    s = _check_exponent("s", s)
    d = np.asarray(
        wrap_angle(np.asarray(theta_rad, dtype=float) - np.asarray(mean_rad, dtype=float))
    )
    c = np.cos(0.5 * d)  # >= 0 because |d| <= pi
    return cos2s_norm(s) * c ** (2.0 * s)


def cosn(theta_rad: ArrayLike, mean_rad: ArrayLike, n: ArrayLike) -> NDArray[np.float64]:
    """Cos^n directional spreading function (DNV-RP-C205 form).

    Parameters
    ----------
    theta_rad : ndarray
        Wave directions [rad] (any range; wrapped internally).
    mean_rad : float or ndarray
        Mean direction [rad], broadcast against ``theta_rad``.
    n : float or ndarray
        Spreading exponent [-], > 0 (DNV-RP-C205 suggests 2 to 4 for wind
        sea and 6 or more for swell).

    Returns
    -------
    ndarray
        D(theta) [1/rad]; zero for |theta - mean| >= pi/2.

    Notes
    -----
    .. math::

        D(\\theta) = \\frac{\\Gamma(1+n/2)}{\\sqrt{\\pi}\\,\\Gamma(1/2+n/2)}
        \\cos^{n}(\\theta-\\bar\\theta), \\qquad |\\theta-\\bar\\theta| < \\pi/2 .

    Examples
    --------
    >>> round(float(cosn(0.0, 0.0, 2.0)), 6)  # Gamma(2)/(sqrt(pi) Gamma(3/2)) = 2/pi
    0.63662
    """
    n = _check_exponent("n", n)
    d = np.asarray(
        wrap_angle(np.asarray(theta_rad, dtype=float) - np.asarray(mean_rad, dtype=float))
    )
    inside = np.abs(d) < 0.5 * np.pi
    c = np.where(inside, np.cos(d), 0.0)
    return np.where(inside, cosn_norm(n) * np.abs(c) ** n, 0.0)


@dataclass(frozen=True, kw_only=True)
class DirectionalSpreading(Params):
    """How wave energy spreads about a mean direction.

    Parameters
    ----------
    kind : {"cos2s", "cosn", "long_crested"}
        Spreading function: :func:`cos2s`, :func:`cosn`, or all energy at the
        mean direction.
    exponent : float or ndarray of shape (n_trials,)
        ``s`` for cos2s, ``n`` for cosn [-], > 0; ignored for long_crested.
        The default 10 is a frequency-independent ``s`` equal to the s_max
        that Goda recommends for wind waves (value from memory, not
        re-checked); a rule of thumb, not a measured value.
    mean_dir_deg : float or ndarray of shape (n_trials,)
        Mean direction the waves come FROM [deg], clockwise from north,
        in [-360, 360].

    Notes
    -----
    Internally the mean direction is :attr:`mean_toward_rad`, the direction
    waves travel toward in radians clockwise from north,
    ``wrap(radians(mean_dir_deg) + pi)``. :meth:`density` and the sampling
    methods work in that internal convention.

    Examples
    --------
    >>> import numpy as np
    >>> spread = DirectionalSpreading(kind="cos2s", exponent=4.0, mean_dir_deg=180.0)
    >>> round(spread.mean_toward_rad, 6)  # waves from the south travel north
    0.0
    >>> theta = spread.sample_directions(np.random.default_rng(1), 5)
    >>> theta.shape
    (5,)
    """

    kind: str = "cos2s"
    exponent: Any = bounded(
        10.0, gt=0.0, unit="1", doc="spreading exponent (s for cos2s, n for cosn)"
    )
    mean_dir_deg: Any = bounded(
        0.0,
        ge=-360.0,
        le=360.0,
        unit="deg",
        doc="mean direction waves come from, clockwise from north",
    )

    def _check(self) -> None:
        if self.kind not in _KINDS:
            raise ParameterError(
                "kind", self.kind, "must be one of 'cos2s', 'cosn', 'long_crested'"
            )
        named = [("exponent", self.exponent), ("mean_dir_deg", self.mean_dir_deg)]
        for k, v in named:
            if np.ndim(v) > 1:
                raise ParameterError(
                    k, v, f"must be a scalar or an array of shape (n_trials,), got shape {np.shape(v)}"
                )
        # per-trial lengths must agree (numpy broadcasting: a length-1 array goes with any)
        per_trial = [(k, np.shape(v)[0]) for k, v in named if np.ndim(v) == 1 and np.shape(v)[0] != 1]
        if len(per_trial) == 2 and per_trial[0][1] != per_trial[1][1]:
            (first, n0), (k, n) = per_trial
            raise ParameterError(
                k, getattr(self, k), f"must have the same length as {first} ({n0} trials), got length {n}"
            )

    @property
    def mean_toward_rad(self) -> Any:
        """Mean direction waves travel toward [rad], clockwise from north, in [-pi, pi)."""
        return nautical_from_deg_to_toward_rad(self.mean_dir_deg)

    def _col(self, x: Any) -> Any:
        a = np.asarray(x, dtype=float)
        return a[:, None] if a.ndim == 1 else a

    def density(self, theta_rad: ArrayLike) -> NDArray[np.float64]:
        """Spreading density D(theta) [1/rad] at travel-toward directions.

        Parameters
        ----------
        theta_rad : ndarray of shape (n_dir,) or (n_trials, n_dir)
            Directions waves travel toward [rad], clockwise from north.

        Returns
        -------
        ndarray of shape (n_dir,) or (n_trials, n_dir)

        Raises
        ------
        ParameterError
            For ``kind="long_crested"``, whose density is a Dirac delta.
        """
        mean = self._col(self.mean_toward_rad)
        expo = self._col(self.exponent)
        if self.kind == "cos2s":
            return cos2s(theta_rad, mean, expo)
        if self.kind == "cosn":
            return cosn(theta_rad, mean, expo)
        raise ParameterError(
            "kind",
            self.kind,
            "density() needs 'cos2s' or 'cosn': a long-crested sea has all energy at the "
            "mean direction (a Dirac delta)",
        )

    def directions_from_uniform(self, u: ArrayLike) -> NDArray[np.float64]:
        """Map uniform numbers in [0, 1) to directions by the exact inverse CDF.

        Parameters
        ----------
        u : ndarray of shape (...) or (n_trials, ...)
            Uniform numbers; with per-trial parameters the leading axis is
            the trial axis.

        Returns
        -------
        ndarray, same shape as ``u``
            Travel-toward directions [rad] in [-pi, pi).

        Notes
        -----
        For cos^n about the mean, ``x = sin(theta - mean)`` has density
        proportional to ``(1 - x^2)^((n-1)/2)``, so ``(1 + x)/2`` follows a
        Beta((n+1)/2, (n+1)/2) law; for cos-2s the same holds for
        ``sin((theta - mean)/2)`` with n = 2s. The inverse CDF is therefore
        ``theta = mean + arcsin(2 B^-1(u) - 1)`` (times 2 for cos-2s) with
        ``B^-1`` from ``scipy.special.betaincinv``.
        """
        u = np.asarray(u, dtype=float)
        lead = (slice(None),) + (None,) * max(u.ndim - 1, 0)
        mean = np.asarray(self.mean_toward_rad, dtype=float)
        expo = np.asarray(self.exponent, dtype=float)
        if mean.ndim == 1:
            mean = mean[lead]
        if expo.ndim == 1:
            expo = expo[lead]
        if self.kind == "long_crested":
            return np.array(np.broadcast_to(np.asarray(wrap_angle(mean)), u.shape), dtype=float)
        a = 0.5 * (expo + 1.0) if self.kind == "cosn" else expo + 0.5
        x = 2.0 * special.betaincinv(a, a, u) - 1.0
        dev = np.arcsin(np.clip(x, -1.0, 1.0))
        if self.kind == "cos2s":
            dev = 2.0 * dev
        return np.asarray(wrap_angle(mean + dev), dtype=float)

    def sample_directions(
        self, rng: np.random.Generator, size: int | tuple[int, ...]
    ) -> NDArray[np.float64]:
        """Draw travel-toward directions [rad] from one generator.

        Parameters
        ----------
        rng : numpy.random.Generator
            Source of randomness.
        size : int or tuple of int
            Number (shape) of directions. With per-trial parameters of
            shape (n_trials,), ``size`` must start with n_trials; all trials
            then share ``rng`` — use :meth:`draw_directions` for per-trial
            reproducible streams.

        Returns
        -------
        ndarray of shape ``size``
            Directions in [-pi, pi); all equal to the mean for long_crested.
        """
        return self.directions_from_uniform(rng.random(size))

    def draw_directions(
        self, streams: TrialStreams, n_dir: int, purpose: str = "sea.directions"
    ) -> NDArray[np.float64]:
        """Draw ``n_dir`` directions per trial from the trials' own streams.

        Parameters
        ----------
        streams : TrialStreams
            Per-trial random streams of the batch.
        n_dir : int
            Number of directions per trial.
        purpose : str
            Stream name.

        Returns
        -------
        ndarray of shape (n_trials, n_dir)
            Travel-toward directions [rad]; trial i gets the same values alone
            or in a batch.
        """
        u = streams.draw(purpose, lambda rng: rng.random(n_dir))
        if u.ndim == 1:  # empty batch
            u = u.reshape(0, n_dir)
        return self.directions_from_uniform(u)
