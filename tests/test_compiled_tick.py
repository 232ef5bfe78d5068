"""The compiled control tick against the numpy guide, pilot and actuator blocks it replaces."""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

from wavebench.core.errors import ParameterError
from wavebench.core.streams import TrialStreams
from wavebench.spec import build_environment, example_spec_path, load_spec
from wavebench.trial import build_trial_setup, run_batch
from wavebench.trial.blocks import LosGuide


@pytest.mark.parametrize("name", ["skerrow_sound", "dulse_bay"])  # propeller + rudder, and twin thrusters
def test_compiled_tick_gives_the_numpy_blocks_bits(name: str) -> None:
    spec = load_spec(example_spec_path(name))
    spec = dataclasses.replace(spec, scenario=dataclasses.replace(spec.scenario, duration_s=90.0))
    env = build_environment(spec, TrialStreams(spec.campaign.seed, range(5)))
    setup = build_trial_setup(spec, env)
    fast = run_batch(spec, setup, engine="tick")
    slow = run_batch(spec, setup, engine="numpy")
    for key, col in fast.metrics.items():
        np.testing.assert_array_equal(col, slow.metrics[key], err_msg=key)
    for key, arr in fast.record.data.items():
        np.testing.assert_array_equal(arr, slow.record.data[key], err_msg=key)
    # the run did something worth comparing: the craft sailed and steered
    assert np.all(fast.metrics["distance_m"] > 50.0) and np.all(fast.metrics["energy_kj"] > 0.0)
    assert np.nanmax(np.abs(fast.record.data["yaw_rate_dps"])) > 0.5


def test_compiled_path_refuses_user_blocks() -> None:
    spec = load_spec(example_spec_path("skerrow_sound"))
    spec = dataclasses.replace(spec, scenario=dataclasses.replace(spec.scenario, duration_s=1.0))
    env = build_environment(spec, TrialStreams(1, range(2)))
    setup = build_trial_setup(spec, env)
    mine = dataclasses.replace(setup.guide)
    assert isinstance(mine, LosGuide)
    with pytest.raises(ParameterError, match="engine"):
        run_batch(spec, setup, guide=mine, engine="tick")
