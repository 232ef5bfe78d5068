"""The fused run (every control period of every trial in one kernel) against the Python loop it replaces."""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

from wavebench.core.streams import TrialStreams
from wavebench.spec import build_environment, example_spec_path, load_spec
from wavebench.spec.tables import SeabedSpec
from wavebench.trial import build_trial_setup, run_batch


def _setup(name: str, duration_s: float, trials: int, **changes):
    spec = load_spec(example_spec_path(name))
    spec = dataclasses.replace(spec, scenario=dataclasses.replace(spec.scenario, duration_s=duration_s), **changes)
    env = build_environment(spec, TrialStreams(spec.campaign.seed, range(trials)))
    return spec, build_trial_setup(spec, env)


def _same(a, b, rtol: float) -> None:
    for key, col in b.metrics.items():
        x, y = np.asarray(a.metrics[key]), np.asarray(col)
        if x.dtype.kind in "bOU":
            np.testing.assert_array_equal(x, y, err_msg=key)
        else:
            np.testing.assert_allclose(x, y, rtol=rtol, atol=1e-9, err_msg=key)
    for key, arr in b.record.data.items():
        np.testing.assert_allclose(a.record.data[key], arr, rtol=1e-6, atol=1e-4, err_msg=key)  # float32 records


@pytest.mark.parametrize("name", ["skerrow_sound", "dulse_bay"])  # propeller + rudder with wind; twins over a seabed
def test_fused_run_agrees_with_the_loop(name: str) -> None:
    spec, setup = _setup(name, 120.0, 4)
    fused = run_batch(spec, setup, engine="fused")
    loop = run_batch(spec, setup, engine="tick")
    # The same equations, the same compiled craft steps and control period; the loop's numpy arithmetic around them
    # may round differently in the last bits: agreement to 1e-9 relative over the run (common practice, no source).
    _same(fused, loop, rtol=1e-9)
    assert np.all(fused.metrics["distance_m"] > 100.0)


def test_fused_run_ends_trials_like_the_loop() -> None:
    # a seabed shallower than the draft grounds every trial at once; a run long enough to complete
    spec, setup = _setup("skerrow_sound", 5.0, 2, seabed=SeabedSpec(kind="flat", depth_m=0.5))
    a, b = run_batch(spec, setup, engine="fused"), run_batch(spec, setup, engine="tick")
    assert list(a.metrics["failure_reason"]) == list(b.metrics["failure_reason"]) == ["grounded at t = 0.0 s"] * 2
    spec, setup = _setup("skerrow_sound", 600.0, 2)
    a, b = run_batch(spec, setup, engine="fused"), run_batch(spec, setup, engine="tick")
    assert list(a.metrics["ended"]) == list(b.metrics["ended"]) == ["completed", "completed"]
    np.testing.assert_array_equal(a.metrics["time_to_complete_s"], b.metrics["time_to_complete_s"])


def test_fused_trial_alone_equals_its_row() -> None:
    spec, setup = _setup("dulse_bay", 60.0, 5)
    batch = run_batch(spec, setup)
    env = build_environment(spec, TrialStreams(spec.campaign.seed, [3]))
    alone = run_batch(spec, build_trial_setup(spec, env))
    for key, col in alone.metrics.items():
        x, y = col[0], batch.metrics[key][3]
        assert x == y or (np.isnan(x) and np.isnan(y)), key
