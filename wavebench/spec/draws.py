"""Per-trial draws of the distributed fields of a spec.

How the fields are sampled over the trials is the campaign's ``design``
(:mod:`wavebench.spec.designs`): plain Monte Carlo from each trial's own
streams, or one Latin hypercube or scrambled Sobol' design over the
campaign, mapped through each field's quantile function.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from ..core.errors import ParameterError
from ..core.streams import TrialStreams
from .designs import SPACE_FILLING_DESIGNS, unit_design
from .distributions import Grid
from .schema import Spec, distributed_fields

__all__ = ["draw_from_design", "draw_monte_carlo", "draw_trial_parameters", "grid_levels"]


def draw_monte_carlo(fields: dict[str, Any], trials: TrialStreams) -> dict[str, np.ndarray]:
    """Plain Monte Carlo: each field of each trial from the trial's own stream.

    Each field at TOML path ``p`` draws one value per trial from the
    trial's stream of purpose ``"spec.<p>"`` (the distribution's
    ``sample``), so trial ``i`` gets the same value alone or in any batch,
    and adding a distribution to one field does not change the draws of
    another.

    Parameters
    ----------
    fields : dict of str to Distribution
        Distributed fields by dotted TOML path
        (:func:`~wavebench.spec.schema.distributed_fields`).
    trials : TrialStreams

    Returns
    -------
    dict of str to ndarray of shape (n_trials,)
    """
    return {path: trials.draw(f"spec.{path}", lambda rng, d=dist: d.sample(rng, 1)[0]) for path, dist in fields.items()}


def draw_from_design(fields: dict[str, Any], trials: TrialStreams, design: str, n_points: int) -> dict[str, np.ndarray]:
    """Values of a space-filling design for a batch of trials.

    Draws the campaign's design of ``n_points`` points in
    ``d = len(fields)`` dimensions from the campaign seed ``trials.seed``
    (:func:`~wavebench.spec.designs.unit_design`); trial ``i`` takes row
    ``i``, and the field in column ``j`` (document order) maps it through
    its distribution's ``ppf``.

    Parameters
    ----------
    fields : dict of str to Distribution
        Distributed fields by dotted TOML path, in document order.
    trials : TrialStreams
        The batch: campaign seed and global trial indices, each < ``n_points``.
    design : {"latin_hypercube", "sobol"}
    n_points : int
        Design size: the number of trials the campaign plans.

    Returns
    -------
    dict of str to ndarray of shape (n_trials,)

    Raises
    ------
    ParameterError
        For a trial index >= ``n_points``.
    """
    if not fields:
        return {}
    idx = np.asarray(trials.trials, dtype=np.int64)
    if idx.size and idx.max() >= n_points:
        raise ParameterError(
            "trials", int(idx.max()),
            f"must be < campaign.trials = {n_points} under design '{design}' (the design has one point per "
            "planned trial; plan more trials to run more)",
        )  # fmt: skip
    points = unit_design(design, n_points, len(fields), trials.seed)[idx]
    return {path: np.asarray(dist.ppf(points[:, j]), dtype=float) for j, (path, dist) in enumerate(fields.items())}


def draw_trial_parameters(
    spec: Spec, trials: TrialStreams, *, planned_trials: int | None = None
) -> dict[str, np.ndarray]:
    """Draw every distributed field of ``spec`` for a batch of trials.

    With ``[campaign] design = "monte_carlo"`` (the default) each field of
    each trial comes from the trial's own stream (:func:`draw_monte_carlo`).
    With ``"latin_hypercube"`` or ``"sobol"`` the campaign has one design of
    ``planned_trials`` points over all distributed fields and trial ``i``
    takes point ``i`` (:func:`draw_from_design`). Fields written as
    ``{ grid = [...] }`` are not drawn: trial ``i`` takes combination
    ``i mod n_combinations`` of their levels (:func:`grid_levels`), a
    full-factorial design mixed with the random fields. Either way trial
    ``i`` gets the same values alone or in any batch.

    Parameters
    ----------
    spec : Spec
    trials : TrialStreams
        Streams of the batch (campaign seed and global trial indices).
    planned_trials : int, optional
        Number of trials the campaign runs, the size of a space-filling
        design; default ``spec.campaign.trials``. Not used by Monte Carlo.

    Returns
    -------
    dict of str to ndarray of shape (n_trials,)
        Keyed by dotted TOML path (e.g. ``"sea.hs_m"``), in document order;
        empty when no field is distributed.

    Raises
    ------
    ParameterError
        Under a space-filling design, for a trial index >= ``planned_trials``.

    Examples
    --------
    >>> from wavebench.spec.io import example_spec_path, load_spec
    >>> spec = load_spec(example_spec_path("skerrow_sound"))
    >>> draws = draw_trial_parameters(spec, TrialStreams(seed=1, trials=range(5)))
    >>> draws["sea.hs_m"].shape
    (5,)
    >>> lhs = load_spec(example_spec_path("skerrow_sound"), ["campaign.design=latin_hypercube"])
    >>> draw_trial_parameters(lhs, TrialStreams(seed=1, trials=range(5)))["sea.hs_m"].shape
    (5,)
    """
    every = distributed_fields(spec)
    grid = {path: dist for path, dist in every.items() if isinstance(dist, Grid)}
    fields = {path: dist for path, dist in every.items() if not isinstance(dist, Grid)}
    design = spec.campaign.design
    if design not in SPACE_FILLING_DESIGNS:
        drawn = draw_monte_carlo(fields, trials)
    else:
        n = spec.campaign.trials if planned_trials is None else planned_trials
        if isinstance(n, bool) or not isinstance(n, (int, np.integer)) or n < 1:
            raise ParameterError("planned_trials", n, "must be an integer >= 1")
        drawn = draw_from_design(fields, trials, design, int(n))
    levels = grid_levels(grid, np.asarray(trials.trials, dtype=np.int64))
    return {path: levels[path] if path in levels else drawn[path] for path in every}


def grid_levels(grid: dict[str, Grid], trial_index: np.ndarray) -> dict[str, np.ndarray]:
    """Each grid field's level for the given trials: combination ``i mod n_combinations`` in mixed radix.

    The grid fields count like the digits of a number in document order,
    the last one fastest, so the first ``n_combinations`` trials visit every
    combination once.

    Examples
    --------
    >>> from wavebench.spec.distributions import Grid
    >>> g = grid_levels({"a": Grid((1.0, 2.0)), "b": Grid((10.0, 20.0, 30.0))}, np.arange(7))
    >>> g["a"].tolist(), g["b"].tolist()
    ([1.0, 1.0, 1.0, 2.0, 2.0, 2.0, 1.0], [10.0, 20.0, 30.0, 10.0, 20.0, 30.0, 10.0])
    """
    out: dict[str, np.ndarray] = {}
    stride = 1
    for path, dist in reversed(list(grid.items())):
        n = len(dist.levels)
        out[path] = np.asarray(dist.levels, dtype=float)[(trial_index // stride) % n]
        stride *= n
    return {path: out[path] for path in grid}
