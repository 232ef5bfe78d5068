"""Per-trial draws of the distributed fields of a spec."""

from __future__ import annotations

import numpy as np

from ..core.streams import TrialStreams
from .schema import Spec, distributed_fields

__all__ = ["draw_trial_parameters"]


def draw_trial_parameters(spec: Spec, trials: TrialStreams) -> dict[str, np.ndarray]:
    """Draw every distributed field of ``spec`` for a batch of trials.

    Each field at TOML path ``p`` draws one value per trial from the
    trial's own stream of purpose ``"spec.<p>"``, so trial ``i`` gets the
    same value alone or in any batch, and adding a distribution to one field
    does not change the draws of another.

    Parameters
    ----------
    spec : Spec
    trials : TrialStreams
        Streams of the batch (campaign seed and trial indices).

    Returns
    -------
    dict of str to ndarray of shape (n_trials,)
        Keyed by dotted TOML path (e.g. ``"sea.hs_m"``), in document order;
        empty when no field is distributed.

    Examples
    --------
    >>> from wavebench.spec.io import example_spec_path, load_spec
    >>> spec = load_spec(example_spec_path("skerrow_sound"))
    >>> draws = draw_trial_parameters(spec, TrialStreams(seed=1, trials=range(5)))
    >>> draws["sea.hs_m"].shape
    (5,)
    """
    return {
        path: trials.draw(f"spec.{path}", lambda rng, d=dist: d.sample(rng, 1)[0])
        for path, dist in distributed_fields(spec).items()
    }
