"""From a spec to the per-batch objects of a trial: draws substituted into the blocks.

:func:`build_environment` draws every distributed field of a
:class:`~wavebench.spec.schema.Spec` for a batch of trials
(:func:`~wavebench.spec.draws.draw_trial_parameters`), puts each trial's
values into the block parameters (a per-trial array of shape (n_trials,)
where the spec holds a distribution, the spec's number otherwise) and builds
the sea, current, wind, craft, wave drift and plant of the batch.

Every random object draws from the trials' own streams (``"spec.<path>"``,
``"sea.components"``, ``"current.gauss_markov"``, ``"wind.gust"``), so
trial ``i`` gets the same environment alone or in any batch.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..core.errors import ParameterError
from ..core.streams import TrialStreams
from ..craft.catalogue import CraftParams
from ..craft.kernel import Plant
from ..sea.current import (
    CurrentModel,
    CurrentState,
    CurrentVariationParams,
    UniformCurrentParams,
    init_current,
)
from ..sea.drift import DriftModel
from ..sea.realisation import WaveComponents, realise_sea
from ..sea.spectra import SeaSpectrum
from ..sea.spreading import DirectionalSpreading
from ..sea.wind import WindParams, WindState, init_wind
from .draws import draw_trial_parameters
from .schema import Spec

__all__ = ["TrialCurrent", "TrialEnvironment", "TrialWind", "build_environment"]

#: Default sample interval [s] of the current's Gauss--Markov record (linear
#: interpolation between samples; the correlation times are minutes).
CURRENT_RECORD_DT_S = 1.0


@dataclass(frozen=True)
class TrialCurrent:
    """The current of a batch: its parameters and its drawn state.

    Parameters
    ----------
    model : CurrentModel
        Uniform current (+ slow variation when the spec has
        ``[current.variation]``); per-trial fields of shape (n_trials,).
    state : CurrentState
        From :func:`~wavebench.sea.current.init_current`, covering the
        scenario's duration.
    """

    model: CurrentModel
    state: CurrentState


@dataclass(frozen=True)
class TrialWind:
    """The wind of a batch: its parameters and its drawn gust components.

    Parameters
    ----------
    params : WindParams
        Per-trial fields of shape (n_trials,) where the spec is distributed.
    state : WindState
        From :func:`~wavebench.sea.wind.init_wind`.
    """

    params: WindParams
    state: WindState


@dataclass(frozen=True)
class TrialEnvironment:
    """The per-batch objects built from a spec.

    Parameters
    ----------
    trials : TrialStreams
        The batch's streams (campaign seed and global trial indices).
    spectrum : SeaSpectrum or None
        Sea spectrum; ``hs_m``, ``tp_s``, ``gamma`` are arrays of shape
        (n_trials,) where the spec field is distributed, scalars otherwise.
        None when the spec has no ``[sea]``.
    spreading : DirectionalSpreading or None
        Directional spreading, per-trial fields as for ``spectrum``.
    components : WaveComponents or None
        The realised seas, arrays of shape (n_trials, n_components).
    current : TrialCurrent or None
        None when the spec has no ``[current]``.
    wind : TrialWind or None
        None when the spec has no ``[wind]``.
    craft : CraftParams
        The spec's craft (built-in or inline).
    drift : DriftModel or None
        Wave drift of the craft's hull in the batch's seas; None without a sea.
    plant : Plant
        Hull coefficients and wave drift, ready for
        :func:`~wavebench.craft.kernel.advance` (calm water without a sea).
    draws : dict of str to ndarray of shape (n_trials,)
        The drawn values by dotted TOML path, for reports.
    """

    trials: TrialStreams
    spectrum: SeaSpectrum | None
    spreading: DirectionalSpreading | None
    components: WaveComponents | None
    current: TrialCurrent | None
    wind: TrialWind | None
    craft: CraftParams
    drift: DriftModel | None
    plant: Plant
    draws: dict[str, np.ndarray]

    @property
    def n_trials(self) -> int:
        """Number of trials in the batch."""
        return self.trials.n_trials


def _values(table: Any, prefix: str, names: tuple[str, ...], draws: dict[str, np.ndarray]) -> dict[str, Any]:
    """Field values of a spec table with the drawn arrays put in place of distributions."""
    return {name: draws.get(f"{prefix}.{name}", getattr(table, name)) for name in names}


def build_environment(
    spec: Spec,
    trials: TrialStreams,
    *,
    current_record_dt_s: float = CURRENT_RECORD_DT_S,
) -> TrialEnvironment:
    """Draw a batch's parameters from ``spec`` and build its environment and plant.

    Parameters
    ----------
    spec : Spec
    trials : TrialStreams
        Streams of the batch (campaign seed and trial indices), at least one
        trial. Normally ``TrialStreams(spec.campaign.seed, indices)``.
    current_record_dt_s : float
        Sample interval [s] of the current-variation record, > 0.

    Returns
    -------
    TrialEnvironment

    Raises
    ------
    ParameterError
        For an empty batch or a bad ``current_record_dt_s``; from the blocks
        if a drawn value is invalid for them.

    Notes
    -----
    The wave realisation uses the spec's ``sea.n_components`` and
    ``sea.depth_m`` (per trial if distributed) and the default band, which
    leaves 0.1 % of m0 outside (see :meth:`SeaSpectrum.frequency_band`).
    The current record spans ``scenario.duration_s``.

    Examples
    --------
    >>> from wavebench.spec.io import example_spec_path, load_spec
    >>> spec = load_spec(example_spec_path("skerrow_sound"))
    >>> env = build_environment(spec, TrialStreams(spec.campaign.seed, range(4)))
    >>> env.spectrum.hs_m.shape, env.components.amplitude_m.shape
    ((4,), (4, 100))
    """
    n = trials.n_trials
    if n < 1:
        raise ParameterError("trials", trials.trials, "must hold at least one trial")
    if not (math.isfinite(current_record_dt_s) and current_record_dt_s > 0.0):
        raise ParameterError("current_record_dt_s", current_record_dt_s, "must be a finite number > 0")
    draws = draw_trial_parameters(spec, trials)
    craft = spec.craft.build()
    hull = craft.hull

    spectrum = spreading = components = drift = None
    if spec.sea is not None:
        sea = spec.sea
        spectrum = SeaSpectrum(kind=sea.kind, **_values(sea, "sea", ("hs_m", "tp_s", "gamma"), draws))
        spreading = DirectionalSpreading(
            kind=sea.spreading.kind,
            **_values(sea.spreading, "sea.spreading", ("exponent", "mean_dir_deg"), draws),
        )
        depth = draws.get("sea.depth_m", sea.depth_m)
        components = realise_sea(spectrum, spreading, trials, n_components=sea.n_components, depth_m=depth)
        drift = DriftModel.for_hull(
            components,
            length_m=float(hull.length_m),
            beam_m=float(hull.beam_m),
            draft_m=float(hull.draft_m),
            depth_m=depth,
        )

    current = None
    if spec.current is not None:
        uniform = UniformCurrentParams(**_values(spec.current, "current", ("speed_mps", "set_deg"), draws))
        variation = None
        if spec.current.variation is not None:
            names = ("speed_sigma_mps", "speed_tc_s", "set_sigma_deg", "set_tc_s")
            variation = CurrentVariationParams(**_values(spec.current.variation, "current.variation", names, draws))
        model = CurrentModel(uniform=uniform, variation=variation)
        state = init_current(model, trials, duration_s=spec.scenario.duration_s, dt_s=current_record_dt_s)
        current = TrialCurrent(model=model, state=state)

    wind = None
    if spec.wind is not None:
        w = spec.wind
        params = WindParams(
            gust_spectrum=w.gust_spectrum,
            n_components=w.n_components,
            f_min_hz=w.f_min_hz,
            f_max_hz=w.f_max_hz,
            **_values(w, "wind", ("speed_mps", "direction_from_deg", "height_m"), draws),
        )
        wind = TrialWind(params=params, state=init_wind(params, trials))

    plant = Plant.build(hull, n, components, drift)
    return TrialEnvironment(
        trials=trials,
        spectrum=spectrum,
        spreading=spreading,
        components=components,
        current=current,
        wind=wind,
        craft=craft,
        drift=drift,
        plant=plant,
        draws=draws,
    )
