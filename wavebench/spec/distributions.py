"""Distributions for numeric spec fields, in a small TOML syntax of our own.

Any numeric field of the sea, current and wind tables may hold a
distribution instead of a number. A distribution is an inline table with one
key naming the kind:

========================================================================  =====================================
TOML                                                                      meaning
========================================================================  =====================================
``hs_m = 1.5``                                                            fixed value (a plain number)
``hs_m = { uniform = [1.0, 2.5] }``                                       uniform on [low, high)
``hs_m = { normal = { mean = 1.5, sd = 0.2 } }``                          normal
``hs_m = { truncated_normal = { mean = 1.5, sd = 0.4, low = 0.5, high = 3.0 } }``  normal cut to [low, high]
``hs_m = { lognormal = { median = 1.5, sigma = 0.3 } }``                  ``median * exp(sigma * Z)``, Z ~ N(0, 1)
``hs_m = { choice = [1.0, 1.5, 2.0] }``                                   equally likely values
``hs_m = { choice = [1.0, 2.0], weights = [0.75, 0.25] }``                weighted values
``hs_m = { grid = [0.5, 1.0, 2.0] }``                                     each level in turn (a grid axis)
========================================================================  =====================================

The lognormal is given by its median and the standard deviation ``sigma``
of ``ln X``: ``ln X ~ N(ln median, sigma**2)``. In scipy.stats terms it is
``lognorm(s=sigma, scale=median)``; its mean is ``median * exp(sigma**2 / 2)``.

Every distribution is a frozen dataclass with ``support() -> (low, high)``
(the infimum and supremum of the values it can give) and
``sample(rng, size) -> ndarray of shape (size,)``, and ``ppf(u)``, the
inverse of its cumulative distribution function (the quantile function),
which maps points of a space-filling design in the unit cube onto the field
(:mod:`wavebench.spec.designs`). :func:`parse_distribution` reads the TOML
form and :func:`distribution_to_data` writes it back.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np
from scipy import special, stats

from ..core.errors import ParameterError
from ..core.params import Bounds

__all__ = [
    "DISTRIBUTION_KINDS",
    "Choice",
    "Distribution",
    "Grid",
    "LogNormal",
    "Normal",
    "TruncatedNormal",
    "Uniform",
    "check_support",
    "distribution_to_data",
    "parse_distribution",
]

#: Tolerance on the sum of ``choice`` weights.
WEIGHT_SUM_TOL = 1e-9


def _unit(u: Any) -> np.ndarray:
    """``u`` as a float array, checked to lie in [0, 1]."""
    arr = np.asarray(u, dtype=float)
    if not np.all((arr >= 0.0) & (arr <= 1.0)):
        bad = arr[~((arr >= 0.0) & (arr <= 1.0))].ravel()[0]
        raise ParameterError("u", float(bad), "probabilities must lie in [0, 1]")
    return arr


def _number(path: str, value: Any) -> float:
    """A finite float from a TOML number; ParameterError otherwise."""
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        raise ParameterError(path, value, "must be a finite number")
    return float(value)


@dataclass(frozen=True)
class Uniform:
    """Uniform distribution on [low, high) (numpy's ``Generator.uniform``).

    Parameters
    ----------
    low, high : float
        Limits, finite, low < high.
    """

    low: float
    high: float

    def __post_init__(self) -> None:
        if not self.low < self.high:
            raise ParameterError("uniform", [self.low, self.high], "needs low < high")

    def support(self) -> tuple[float, float]:
        """Infimum and supremum of the values."""
        return (self.low, self.high)

    def sample(self, rng: np.random.Generator, size: int) -> np.ndarray:
        """``size`` draws, ndarray of shape (size,)."""
        return rng.uniform(self.low, self.high, size)

    def ppf(self, u: Any) -> np.ndarray:
        """Quantile function ``low + u (high - low)``.

        Parameters
        ----------
        u : array_like
            Probabilities in [0, 1].

        Returns
        -------
        ndarray of the shape of ``u``
        """
        return self.low + _unit(u) * (self.high - self.low)


@dataclass(frozen=True)
class Normal:
    """Normal distribution N(mean, sd**2); support is the whole real line.

    Parameters
    ----------
    mean : float
    sd : float
        Standard deviation, > 0.
    """

    mean: float
    sd: float

    def __post_init__(self) -> None:
        if not self.sd > 0.0:
            raise ParameterError("normal.sd", self.sd, "must be > 0")

    def support(self) -> tuple[float, float]:
        """Infimum and supremum of the values."""
        return (-math.inf, math.inf)

    def sample(self, rng: np.random.Generator, size: int) -> np.ndarray:
        """``size`` draws, ndarray of shape (size,)."""
        return rng.normal(self.mean, self.sd, size)

    def ppf(self, u: Any) -> np.ndarray:
        """Quantile function ``mean + sd ndtri(u)`` (``-inf`` at 0, ``inf`` at 1).

        Parameters
        ----------
        u : array_like
            Probabilities in [0, 1].

        Returns
        -------
        ndarray of the shape of ``u``
        """
        return self.mean + self.sd * special.ndtri(_unit(u))


@dataclass(frozen=True)
class TruncatedNormal:
    """Normal N(mean, sd**2) conditioned on [low, high].

    Drawn by inverse transform of ``u = rng.random(size)``, uniform on
    [0, 1) (see :meth:`sample`).

    Parameters
    ----------
    mean, sd : float
        Mean and standard deviation of the parent normal, sd > 0.
    low, high : float
        Truncation limits, finite, low < high.
    """

    mean: float
    sd: float
    low: float
    high: float

    def __post_init__(self) -> None:
        if not self.sd > 0.0:
            raise ParameterError("truncated_normal.sd", self.sd, "must be > 0")
        if not self.low < self.high:
            raise ParameterError("truncated_normal.high", self.high, f"must be > low = {self.low}")

    def support(self) -> tuple[float, float]:
        """Infimum and supremum of the values."""
        return (self.low, self.high)

    def scipy(self) -> Any:
        """The same distribution as a frozen ``scipy.stats.truncnorm``."""
        a = (self.low - self.mean) / self.sd
        b = (self.high - self.mean) / self.sd
        return stats.truncnorm(a, b, loc=self.mean, scale=self.sd)

    def sample(self, rng: np.random.Generator, size: int) -> np.ndarray:
        """``size`` draws, ndarray of shape (size,), inside [low, high].

        Within five standard deviations of the mean the inverse transform of
        ``u = rng.random(size)`` is written out,
        ``mean + sd ndtri(Phi(a) + u (Phi(b) - Phi(a)))`` (a campaign draws
        one value per trial, so the cost of building a ``scipy.stats``
        object per draw would dominate); further out in a tail it is
        ``scipy.stats.truncnorm.ppf``, which keeps its precision there.
        These are the draws of plain Monte Carlo, kept bit for bit; the
        design path uses :meth:`ppf`, which is more precise near the upper
        limit.
        """
        u = rng.random(size)
        a = (self.low - self.mean) / self.sd
        b = (self.high - self.mean) / self.sd
        if -5.0 <= a and b <= 5.0:
            pa, pb = special.ndtr(a), special.ndtr(b)
            x = self.mean + self.sd * special.ndtri(pa + u * (pb - pa))
        else:
            x = self.scipy().ppf(u)
        return np.clip(x, self.low, self.high)

    def ppf(self, u: Any) -> np.ndarray:
        """Quantile function: the parent normal's inverse taken within its CDF range.

        Parameters
        ----------
        u : array_like
            Probabilities in [0, 1].

        Returns
        -------
        ndarray of the shape of ``u``, inside [low, high]

        Notes
        -----
        With ``a = (low - mean) / sd``, ``b = (high - mean) / sd`` and
        ``p = Phi(a) + u (Phi(b) - Phi(a))``, the value is
        ``mean + sd ndtri(p)`` where ``p <= 1/2`` and, by the symmetry of
        the normal, ``mean - sd ndtri(Phi(-b) + (1 - u) (Phi(-a) - Phi(-b)))``
        where ``p > 1/2`` (so neither branch takes ``ndtri`` of a number
        close to 1, where it loses relative precision), clipped to
        [low, high]. Where ``a < -5`` or ``b > 5`` it is
        ``scipy.stats.truncnorm.ppf``, as in :meth:`sample`.
        """
        u = _unit(u)
        a = (self.low - self.mean) / self.sd
        b = (self.high - self.mean) / self.sd
        if -5.0 <= a and b <= 5.0:
            pa, pb = special.ndtr(a), special.ndtr(b)
            p = pa + u * (pb - pa)
            qa, qb = special.ndtr(-a), special.ndtr(-b)
            q = qb + (1.0 - u) * (qa - qb)
            z = np.where(p <= 0.5, special.ndtri(np.minimum(p, 0.5)), -special.ndtri(np.minimum(q, 0.5)))
            x = self.mean + self.sd * z
        else:
            x = self.scipy().ppf(u)
        return np.clip(x, self.low, self.high)


@dataclass(frozen=True)
class LogNormal:
    """Lognormal distribution: ``median * exp(sigma * Z)``, Z ~ N(0, 1).

    Parameters
    ----------
    median : float
        Median [unit of the field], > 0.
    sigma : float
        Standard deviation of ``ln X``, > 0.

    Notes
    -----
    Equal to ``scipy.stats.lognorm(s=sigma, scale=median)``. Its support is
    (0, inf): zero is never reached.
    """

    median: float
    sigma: float

    def __post_init__(self) -> None:
        if not self.median > 0.0:
            raise ParameterError("lognormal.median", self.median, "must be > 0")
        if not self.sigma > 0.0:
            raise ParameterError("lognormal.sigma", self.sigma, "must be > 0")

    def support(self) -> tuple[float, float]:
        """Infimum and supremum of the values (0 itself is never drawn)."""
        return (0.0, math.inf)

    def sample(self, rng: np.random.Generator, size: int) -> np.ndarray:
        """``size`` draws, ndarray of shape (size,)."""
        return self.median * np.exp(self.sigma * rng.standard_normal(size))

    def ppf(self, u: Any) -> np.ndarray:
        """Quantile function ``median exp(sigma ndtri(u))`` (0 at 0, ``inf`` at 1).

        Parameters
        ----------
        u : array_like
            Probabilities in [0, 1].

        Returns
        -------
        ndarray of the shape of ``u``
        """
        return self.median * np.exp(self.sigma * special.ndtri(_unit(u)))


@dataclass(frozen=True)
class Choice:
    """One of a list of values, equally likely or with weights.

    Parameters
    ----------
    values : tuple of float
        At least one value.
    weights : tuple of float or None
        Probabilities, one per value, each >= 0, summing to 1 within 1e-9;
        None for equal weights.
    """

    values: tuple[float, ...]
    weights: tuple[float, ...] | None = None

    def __post_init__(self) -> None:
        if len(self.values) == 0:
            raise ParameterError("choice", [], "needs at least one value")
        if self.weights is not None:
            if len(self.weights) != len(self.values):
                raise ParameterError("weights", list(self.weights), f"needs one weight per value ({len(self.values)})")
            if any(w < 0.0 for w in self.weights):
                raise ParameterError("weights", list(self.weights), "weights must be >= 0")
            total = math.fsum(self.weights)
            if abs(total - 1.0) > WEIGHT_SUM_TOL:
                raise ParameterError(
                    "weights", list(self.weights), f"must sum to 1 within {WEIGHT_SUM_TOL:g} (sum is {total!r})"
                )

    def support(self) -> tuple[float, float]:
        """Smallest and largest value (those with weight 0 included)."""
        return (min(self.values), max(self.values))

    def sample(self, rng: np.random.Generator, size: int) -> np.ndarray:
        """``size`` draws, ndarray of shape (size,)."""
        p = None if self.weights is None else np.asarray(self.weights) / math.fsum(self.weights)
        return rng.choice(np.asarray(self.values, dtype=float), size=size, p=p)

    def ppf(self, u: Any) -> np.ndarray:
        """Quantile function ``min{x : F(x) >= u}`` over the values sorted ascending.

        Parameters
        ----------
        u : array_like
            Probabilities in [0, 1].

        Returns
        -------
        ndarray of the shape of ``u``

        Notes
        -----
        The values are sorted (ties keep their order) and ``F`` is the
        cumulative sum of their weights, divided by its last entry so it
        ends at exactly 1. ``u`` is mapped to the first value whose ``F``
        reaches ``u``, so a value of weight 0 is never given for ``u > 0``
        and the value ``x_k`` takes the probability interval
        ``(F(x_(k-1)), F(x_k)]``.

        Examples
        --------
        >>> Choice((3.0, 1.0, 2.0), (0.3, 0.2, 0.5)).ppf([0.1, 0.5, 0.9])
        array([1., 2., 3.])
        """
        u = _unit(u)
        values = np.asarray(self.values, dtype=float)
        weights = np.ones(values.size) if self.weights is None else np.asarray(self.weights, dtype=float)
        order = np.argsort(values, kind="stable")
        cdf = np.cumsum(weights[order])
        cdf /= cdf[-1]
        cdf[-1] = 1.0
        k = np.searchsorted(cdf, u, side="left")
        return values[order][np.minimum(k, values.size - 1)]


@dataclass(frozen=True)
class Grid:
    """Levels of a grid axis: the campaign visits every combination of its grid fields' levels.

    Not random: with grid fields ``A`` (levels a0, a1, ...) and ``B`` (b0,
    b1, ...) in document order, trial ``i`` takes combination
    ``i mod (n_A n_B ...)`` in mixed radix, the last grid field counting
    fastest; the other distributed fields are drawn as usual for every
    trial, so each combination is repeated with fresh random inputs
    (a full-factorial design mixed with random axes, e.g. an operability
    study over wave heading x Hs). A campaign of ``k`` times the number of
    combinations visits each ``k`` times.

    Parameters
    ----------
    levels : tuple of float
        At least one value.
    """

    levels: tuple[float, ...]

    def __post_init__(self) -> None:
        if len(self.levels) == 0:
            raise ParameterError("grid", [], "needs at least one level")

    def support(self) -> tuple[float, float]:
        """Smallest and largest level."""
        return (min(self.levels), max(self.levels))

    def sample(self, rng: np.random.Generator, size: int) -> np.ndarray:
        """Not defined: a grid axis is enumerated by the campaign, not drawn."""
        raise ParameterError("grid", list(self.levels), "is enumerated by the campaign (draw_trial_parameters), "
                             "not sampled")  # fmt: skip


Distribution = Uniform | Normal | TruncatedNormal | LogNormal | Choice | Grid

#: Distribution kinds as named in a spec.
DISTRIBUTION_KINDS: tuple[str, ...] = ("uniform", "normal", "truncated_normal", "lognormal", "choice", "grid")

_TABLE_KEYS = {
    "normal": ("mean", "sd"),
    "truncated_normal": ("mean", "sd", "low", "high"),
    "lognormal": ("median", "sigma"),
}
_CLASSES = {"normal": Normal, "truncated_normal": TruncatedNormal, "lognormal": LogNormal}


def _suggest(key: str, allowed: list[str]) -> str:
    import difflib

    close = difflib.get_close_matches(key, allowed, n=1)
    return f"did you mean '{close[0]}'?" if close else ""


def _numbers(path: str, value: Any) -> list[float]:
    if not isinstance(value, list):
        raise ParameterError(path, value, "must be an array of numbers")
    return [_number(f"{path}[{i}]", v) for i, v in enumerate(value)]


def _prefixed(path: str, kind: str, exc: ParameterError) -> ParameterError:
    # errors from the dataclasses name "kind.param" or a bare parameter name
    field = exc.field if exc.field.startswith(kind) or exc.field == "weights" else f"{kind}.{exc.field}"
    return ParameterError(f"{path}.{field}", exc.value, exc.allowed, exc.hint)


def parse_distribution(data: Mapping[str, Any], path: str) -> Distribution:
    """Read a distribution from its TOML inline table.

    Parameters
    ----------
    data : Mapping
        The inline table, e.g. ``{"uniform": [1.0, 2.5]}``.
    path : str
        Dotted TOML path of the field, used in error messages.

    Returns
    -------
    Distribution

    Raises
    ------
    ParameterError
        For an unknown kind (with the nearest kind), unknown or missing
        parameters, non-numbers and bad parameter values, naming
        ``path.kind.parameter``.

    Examples
    --------
    >>> parse_distribution({"uniform": [1.0, 2.5]}, "sea.hs_m")
    Uniform(low=1.0, high=2.5)
    >>> parse_distribution({"normal": {"mean": 1.0, "sd": 0.0}}, "sea.hs_m")
    Traceback (most recent call last):
    ...
    wavebench.core.errors.ParameterError: sea.hs_m.normal.sd = 0.0 is not allowed: must be > 0
    """
    keys = list(data)
    kinds = [k for k in keys if k in DISTRIBUTION_KINDS]
    if len(kinds) != 1:
        unknown = [k for k in keys if k not in DISTRIBUTION_KINDS and k != "weights"]
        if unknown:
            raise ParameterError(
                f"{path}.{unknown[0]}",
                data[unknown[0]],
                f"unknown distribution; use one of {list(DISTRIBUTION_KINDS)}",
                _suggest(unknown[0], list(DISTRIBUTION_KINDS)),
            )
        raise ParameterError(path, dict(data), f"a distribution names exactly one kind of {list(DISTRIBUTION_KINDS)}")
    kind = kinds[0]
    extra = [k for k in keys if k != kind and not (kind == "choice" and k == "weights")]
    if extra:
        allowed = ["weights"] if kind == "choice" else []
        raise ParameterError(
            f"{path}.{extra[0]}",
            data[extra[0]],
            f"unknown key beside '{kind}'" + (f"; allowed: {allowed}" if allowed else ""),
            _suggest(extra[0], allowed),
        )
    body = data[kind]
    where = f"{path}.{kind}"
    try:
        if kind == "uniform":
            nums = _numbers(where, body)
            if len(nums) != 2:
                raise ParameterError(where, body, "must be [low, high]")
            return Uniform(nums[0], nums[1])
        if kind == "grid":
            return Grid(tuple(_numbers(where, body)))
        if kind == "choice":
            values = tuple(_numbers(where, body))
            weights = None
            if "weights" in data:
                weights = tuple(_numbers(f"{path}.weights", data["weights"]))
            return Choice(values, weights)
        names = _TABLE_KEYS[kind]
        if not isinstance(body, Mapping):
            raise ParameterError(where, body, "must be a table { " + ", ".join(f"{n} = .." for n in names) + " }")
        for key in body:
            if key not in names:
                raise ParameterError(
                    f"{where}.{key}",
                    body[key],
                    f"unknown parameter; allowed: {list(names)}",
                    _suggest(key, list(names)),
                )
        for name in names:
            if name not in body:
                raise ParameterError(f"{where}.{name}", None, "is required but missing")
        return _CLASSES[kind](*(_number(f"{where}.{n}", body[n]) for n in names))
    except ParameterError as exc:
        if exc.field.startswith(path):
            raise
        raise _prefixed(path, kind, exc) from None


def distribution_to_data(dist: Distribution) -> dict[str, Any]:
    """The TOML inline-table form of a distribution (inverse of :func:`parse_distribution`).

    Examples
    --------
    >>> distribution_to_data(Choice((1.0, 2.0), (0.25, 0.75)))
    {'choice': [1.0, 2.0], 'weights': [0.25, 0.75]}
    """
    if isinstance(dist, Uniform):
        return {"uniform": [dist.low, dist.high]}
    if isinstance(dist, Grid):
        return {"grid": list(dist.levels)}
    if isinstance(dist, Choice):
        out: dict[str, Any] = {"choice": list(dist.values)}
        if dist.weights is not None:
            out["weights"] = list(dist.weights)
        return out
    for kind, cls in _CLASSES.items():
        if isinstance(dist, cls):
            return {kind: {name: getattr(dist, name) for name in _TABLE_KEYS[kind]}}
    raise TypeError(f"not a distribution: {dist!r}")


def _breaks(low: float, high: float, bounds: Bounds, open_low: bool) -> bool:
    if bounds.ge is not None and not low >= bounds.ge:
        return True
    if bounds.gt is not None and not (low > bounds.gt or (open_low and low >= bounds.gt)):
        return True
    if bounds.le is not None and not high <= bounds.le:
        return True
    if bounds.lt is not None and not high < bounds.lt:
        return True
    return False


def check_support(path: str, dist: Distribution, bounds: Bounds) -> None:
    """Reject a distribution whose values could break a field's bounds.

    Parameters
    ----------
    path : str
        Dotted TOML path of the field.
    dist : Distribution
    bounds : Bounds
        The target field's allowed range (from its ``bounded`` metadata).

    Raises
    ------
    ParameterError
        Naming ``path``, the distribution and its support, with a hint to
        use ``truncated_normal`` (or ``choice`` for whole-number fields).
    """
    if bounds.integer:
        if not isinstance(dist, Choice) or any(v != int(v) for v in dist.values):
            raise ParameterError(
                path, distribution_to_data(dist), bounds.describe(), "only a choice of whole numbers fits here"
            )
    if isinstance(dist, Choice):
        for v in dist.values:
            if bounds.violated(np.asarray(v)):
                raise ParameterError(path, distribution_to_data(dist), f"every choice {bounds.describe()}")
        return
    low, high = dist.support()
    if _breaks(low, high, bounds, open_low=isinstance(dist, LogNormal)):
        hint = "use truncated_normal with low/high inside the bound"
        if isinstance(dist, Normal):
            hint = (
                f"use truncated_normal = {{ mean = {dist.mean!r}, sd = {dist.sd!r}, low = .., high = .. }}"
                " inside the bound"
            )
        raise ParameterError(
            path,
            distribution_to_data(dist),
            f"{bounds.describe()}, but the distribution's support [{low!r}, {high!r}] breaks this bound",
            hint,
        )
