"""Replay one trial of a campaign alone, with its time series.

A trial depends only on the spec, the campaign seed and its trial number, so
running it alone gives the bits it had inside its batch. The trial player and
``wavebench replay`` both use this.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from ..core.errors import ParameterError
from ..spec import Spec

__all__ = ["TrialReplay", "compare_with_store", "replay_trial"]


@dataclass(frozen=True)
class TrialReplay:
    """One trial run alone.

    Parameters
    ----------
    trial : int
        Global trial number in the campaign.
    metrics : dict of str to scalar
        The trial's metrics and ``param.<path>`` draws.
    record : xarray.Dataset or None
        Its time series, dims (trial, time) with one trial; None when not recorded.
    """

    trial: int
    metrics: dict[str, Any]
    record: Any


def replay_trial(spec: Spec, trial: int, *, record: bool = True) -> TrialReplay:
    """Run trial number ``trial`` of ``spec``'s campaign alone.

    Parameters
    ----------
    spec : Spec
        The campaign's spec (e.g. ``read_store(dir)["spec"]``).
    trial : int
        0 <= trial < spec.campaign.trials.
    record : bool
        Record the time series (for the trial player).

    Returns
    -------
    TrialReplay

    Raises
    ------
    ParameterError
        When ``trial`` is not a trial of the campaign.
    """
    from ..trial.setup import pilot_for
    from .executor import run_chunk

    n = int(spec.campaign.trials)
    if not isinstance(trial, int | np.integer) or not 0 <= int(trial) < n:
        raise ParameterError("trial", trial, f"must be a whole number from 0 to {n - 1} (the campaign's trials)")
    out = run_chunk(spec, np.array([int(trial)]), pilot=pilot_for(spec, spec.craft.build()), record=record)
    metrics = {name: (v[0].item() if hasattr(v[0], "item") else v[0]) for name, v in out.columns.items()}
    return TrialReplay(int(trial), metrics, out.record)


def compare_with_store(replay: TrialReplay, stored_row: Any) -> list[tuple[str, Any, Any, bool]]:
    """Compare a replayed trial's metrics with its stored row, field by field.

    Parameters
    ----------
    replay : TrialReplay
    stored_row : pandas.Series
        The trial's row of the store's metrics table.

    Returns
    -------
    list of (name, replayed, stored, equal)
        Equal means the same bits (NaN equals NaN); text fields compare as text.
    """
    rows = []
    for name, a in replay.metrics.items():
        if name not in stored_row.index:
            continue
        b = stored_row[name]
        if isinstance(b, str) or isinstance(a, str):
            equal = str(a) == str(b)
        else:
            fa, fb = float(a), float(b)
            equal = (np.isnan(fa) and np.isnan(fb)) or fa == fb
        rows.append((name, a, b, bool(equal)))
    return rows
