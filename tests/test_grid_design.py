"""Grid axes: every combination of the grid fields' levels, mixed with the random fields."""

from __future__ import annotations

import itertools

import numpy as np
import pytest

from wavebench.campaign import run_campaign
from wavebench.core.errors import ParameterError
from wavebench.core.streams import TrialStreams
from wavebench.spec import dump_spec, example_spec_path, load_spec
from wavebench.spec.distributions import Grid
from wavebench.spec.draws import draw_trial_parameters

HS = [0.5, 1.0, 1.5]
DIR = [180.0, 225.0]
GRID = [f"sea.hs_m={{ grid = {HS} }}", f"sea.spreading.mean_dir_deg={{ grid = {DIR} }}"]


def test_the_first_trials_visit_every_combination_once_then_repeat() -> None:
    spec = load_spec(example_spec_path("skerrow_sound"), GRID)
    d = draw_trial_parameters(spec, TrialStreams(1, range(12)))
    got = list(zip(d["sea.hs_m"], d["sea.spreading.mean_dir_deg"], strict=True))
    # the full factorial in the fields' document order, the last field fastest (itertools.product's order)
    full = list(itertools.product(HS, DIR))
    assert got[:6] == full and got[6:] == full
    # the random fields are drawn afresh for every trial, so a repeated combination meets other conditions
    assert not np.array_equal(d["sea.tp_s"][:6], d["sea.tp_s"][6:])


def test_grid_trials_are_the_same_in_any_batch_and_with_a_design() -> None:
    spec = load_spec(example_spec_path("skerrow_sound"), GRID)
    whole = draw_trial_parameters(spec, TrialStreams(1, range(12)))
    for part in (range(0, 5), range(5, 12), [7]):
        some = draw_trial_parameters(spec, TrialStreams(1, part))
        for key, values in some.items():
            np.testing.assert_array_equal(values, whole[key][list(part)], err_msg=key)
    lhs = load_spec(example_spec_path("skerrow_sound"), [*GRID, "campaign.design=latin_hypercube", "campaign.trials=12"])
    d = draw_trial_parameters(lhs, TrialStreams(1, range(12)))
    assert list(d["sea.hs_m"][:6]) == [h for h in HS for _ in DIR]  # the grid is not part of the design's points


def test_grid_fields_round_trip_and_are_checked_at_load() -> None:
    spec = load_spec(example_spec_path("skerrow_sound"), GRID)
    assert spec.sea.hs_m == Grid(tuple(HS))
    assert load_spec(dump_spec(spec)) == spec
    with pytest.raises(ParameterError, match=r"sea\.hs_m"):
        load_spec(example_spec_path("skerrow_sound"), ["sea.hs_m={ grid = [-1.0, 1.0] }"])
    with pytest.raises(ParameterError, match="enumerated by the campaign"):
        Grid((1.0,)).sample(np.random.default_rng(0), 1)


def test_a_grid_campaign_records_its_levels() -> None:
    spec = load_spec(example_spec_path("skerrow_sound"), [*GRID, "scenario.duration_s=20.0"])
    m = run_campaign(spec, trials=6, batch_size=4, progress=False).metrics
    assert list(zip(m["param.sea.hs_m"], m["param.sea.spreading.mean_dir_deg"], strict=True)) == list(
        itertools.product(HS, DIR))
