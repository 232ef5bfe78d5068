"""Sampling designs over a spec's distributed fields.

A campaign's distributed fields (:func:`~wavebench.spec.schema.distributed_fields`)
are sampled by one of three designs, named by ``[campaign] design``:

``"monte_carlo"`` (default)
    Plain Monte Carlo: every field of trial ``i`` is drawn from trial
    ``i``'s own random stream (:mod:`wavebench.core.streams`), independently
    of every other trial and field.
``"latin_hypercube"``
    A Latin hypercube of ``n`` points in ``d`` dimensions (McKay, Beckman &
    Conover 1979): each dimension's ``n`` equal-probability bins hold exactly
    one point, placed uniformly within its bin, the bins paired at random
    between dimensions (``scipy.stats.qmc.LatinHypercube``, no optimisation).
``"sobol"``
    The first ``n`` points of a scrambled Sobol' sequence in ``d``
    dimensions (``scipy.stats.qmc.Sobol(scramble=True)``: linear matrix
    scrambling with a digital shift, Matousek 1998; Joe & Kuo direction
    numbers).

For the two space-filling designs the campaign draws ONE design of
``n = campaign.trials`` points in ``d`` = the number of distributed fields,
in document order; trial ``i`` takes row ``i`` and each field maps its
column through its distribution's quantile function (``ppf``). The design
depends only on the campaign seed, ``n`` and ``d``, never on how the trials
are batched, so trial ``i`` gets the same values alone or in any batch.

Seeding: the design's generator is PCG64 on the child
``SeedSequence(seed, spawn_key=(DESIGN_SPAWN_KEY,))`` of the campaign seed
(:func:`design_seed_sequence`). The per-trial streams use two-word spawn
keys ``(trial, purpose)``, so this one-word key never coincides with one of
them.

Points are kept inside ``[2**-53, 1 - 2**-53]`` before the quantile function
(a scrambled point can be exactly 0, where a normal's quantile is
``-inf``); this moves a point by at most ``2**-53``.

Notes
-----
* A Sobol' sequence has its balance properties (every elementary interval
  of the right volume holds the same number of points) when ``n`` is a
  power of two. Any ``n`` is accepted: the design takes the first ``n``
  points of the ``2**ceil(log2 n)`` generated (``random_base2``), so no
  warning is raised; with ``n`` not a power of two the design is still
  low-discrepancy but not exactly balanced.
* A Sobol' design's first ``k`` points do not depend on ``n`` (the
  scrambling is drawn before any point), so a Sobol' campaign stopped after
  ``k`` trials has the first ``k`` points of the sequence (balanced when
  ``k`` is a power of two). A Latin hypercube is stratified only as a whole:
  its first ``k`` rows are not a Latin hypercube of ``k`` points, and every
  row changes with ``n``.
* Unlike plain Monte Carlo, adding, removing or reordering a distributed
  field changes the design values of the other fields (the design is drawn
  jointly in ``d`` dimensions).
* Trial indices must be below the design size ``n``.

References
----------
McKay, M. D., Beckman, R. J. and Conover, W. J. (1979), "A comparison of
three methods for selecting values of input variables in the analysis of
output from a computer code", Technometrics 21(2), 239-245.
Sobol', I. M. (1967), "The distribution of points in a cube and the
accurate evaluation of integrals", Zh. Vychisl. Mat. i Mat. Fiz. 7, 784-802.
Matousek, J. (1998), "On the L2-discrepancy for anchored boxes",
J. Complexity 14, 527-556.
Joe, S. and Kuo, F. Y. (2008), "Constructing Sobol sequences with better
two-dimensional projections", SIAM J. Sci. Comput. 30(5), 2635-2654.
scipy.stats.qmc documentation (LatinHypercube, Sobol, discrepancy).
"""

from __future__ import annotations

import functools
import math

import numpy as np
from scipy.stats import qmc

from ..core.errors import ParameterError
from ..core.streams import purpose_key

__all__ = [
    "DESIGNS",
    "DESIGN_SPAWN_KEY",
    "SPACE_FILLING_DESIGNS",
    "design_seed_sequence",
    "unit_design",
]

#: Design names accepted by ``[campaign] design``.
DESIGNS: tuple[str, ...] = ("monte_carlo", "latin_hypercube", "sobol")
#: The designs drawn as one point set over the campaign.
SPACE_FILLING_DESIGNS: tuple[str, ...] = ("latin_hypercube", "sobol")
#: One-word spawn key of the design's child seed sequence (CRC-32 of ``"spec.design"``).
DESIGN_SPAWN_KEY: int = purpose_key("spec.design")

_U_MIN = 2.0**-53
_U_MAX = 1.0 - 2.0**-53


def design_seed_sequence(seed: int) -> np.random.SeedSequence:
    """The seed sequence a campaign's design is drawn from.

    Parameters
    ----------
    seed : int
        Campaign seed, >= 0.

    Returns
    -------
    numpy.random.SeedSequence
        ``SeedSequence(seed, spawn_key=(DESIGN_SPAWN_KEY,))``.
    """
    if isinstance(seed, bool) or not isinstance(seed, (int, np.integer)) or seed < 0:
        raise ParameterError("seed", seed, "must be a non-negative integer")
    return np.random.SeedSequence(int(seed), spawn_key=(DESIGN_SPAWN_KEY,))


@functools.lru_cache(maxsize=4)
def _cached(design: str, n: int, d: int, seed: int) -> np.ndarray:
    rng = np.random.Generator(np.random.PCG64(design_seed_sequence(seed)))
    if design == "latin_hypercube":
        points = qmc.LatinHypercube(d, scramble=True, optimization=None, rng=rng).random(n)
    else:
        # first n points of the 2**m generated: no balance warning, same points as random(n)
        m = max(0, math.ceil(math.log2(n)))
        points = qmc.Sobol(d, scramble=True, rng=rng).random_base2(m)[:n]
    points = np.clip(points, _U_MIN, _U_MAX)
    points.flags.writeable = False
    return points


def unit_design(design: str, n: int, d: int, seed: int) -> np.ndarray:
    """The points of a space-filling design in the open unit cube.

    Parameters
    ----------
    design : {"latin_hypercube", "sobol"}
        Design name (see :data:`SPACE_FILLING_DESIGNS`).
    n : int
        Number of points (the campaign's trial count), >= 1.
    d : int
        Number of dimensions (distributed fields), >= 1.
    seed : int
        Campaign seed, >= 0; the design is drawn from
        :func:`design_seed_sequence`.

    Returns
    -------
    ndarray of shape (n, d)
        Read-only; row ``i`` is trial ``i``'s point, every entry in
        ``[2**-53, 1 - 2**-53]``. The same arguments give the same points.

    Raises
    ------
    ParameterError
        For an unknown design or a bad ``n``, ``d`` or ``seed``.

    Examples
    --------
    >>> u = unit_design("latin_hypercube", 8, 2, seed=3)
    >>> u.shape
    (8, 2)
    >>> sorted((u[:, 0] * 8).astype(int).tolist())
    [0, 1, 2, 3, 4, 5, 6, 7]
    """
    if design not in SPACE_FILLING_DESIGNS:
        raise ParameterError("design", design, f"must be one of {list(SPACE_FILLING_DESIGNS)}")
    for name, value in (("n", n), ("d", d)):
        if isinstance(value, bool) or not isinstance(value, (int, np.integer)) or value < 1:
            raise ParameterError(name, value, "must be an integer >= 1")
    if isinstance(seed, bool) or not isinstance(seed, (int, np.integer)) or seed < 0:
        raise ParameterError("seed", seed, "must be a non-negative integer")
    return _cached(design, int(n), int(d), int(seed))
