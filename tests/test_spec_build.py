"""Tests of building a batch's environment and plant from a spec."""

from __future__ import annotations

import numpy as np
import pytest

from wavebench.core.constants import G
from wavebench.core.errors import ParameterError
from wavebench.core.streams import TrialStreams
from wavebench.spec import (
    TrialEnvironment,
    build_environment,
    example_spec_path,
    load_spec,
    spec_from_data,
    spec_to_data,
)

N = 10


@pytest.fixture(scope="module")
def spec():
    return load_spec(example_spec_path("skerrow_sound"))


@pytest.fixture(scope="module")
def env(spec):
    return build_environment(spec, TrialStreams(spec.campaign.seed, range(N)))


def _variant(spec, **changes):
    """The example spec as data with tables replaced (None drops a table)."""
    data = spec_to_data(spec)
    for key, value in changes.items():
        if value is None:
            data.pop(key, None)
        else:
            data[key] = value
    return spec_from_data(data)


def test_example_builds_with_every_block(spec, env):
    assert isinstance(env, TrialEnvironment)
    assert env.n_trials == N
    assert env.components.amplitude_m.shape == (N, spec.sea.n_components)
    assert env.current is not None and env.wind is not None
    assert env.craft.name == spec.craft.demo
    assert env.plant.n_trials == N
    assert env.plant.components is env.components and env.plant.drift is env.drift
    assert env.drift.reflection.shape == (N, spec.sea.n_components)
    assert env.wind.state.amplitudes_mps.shape == (N, spec.wind.n_components)


def test_distributed_fields_are_per_trial_and_fixed_fields_scalar(env):
    placed = {
        "sea.hs_m": env.spectrum.hs_m,
        "sea.tp_s": env.spectrum.tp_s,
        "sea.spreading.exponent": env.spreading.exponent,
        "sea.spreading.mean_dir_deg": env.spreading.mean_dir_deg,
        "current.speed_mps": env.current.model.uniform.speed_mps,
        "current.set_deg": env.current.model.uniform.set_deg,
        "wind.speed_mps": env.wind.params.speed_mps,
    }
    assert {k for k in env.draws if not k.startswith("mission.")} == set(placed)  # mission draws: trial setup
    for path, value in placed.items():
        assert np.shape(value) == (N,), path
        np.testing.assert_array_equal(value, env.draws[path], err_msg=path)
    # fixed in the spec: scalars (gamma absent = the DNV rule)
    assert env.spectrum.gamma is None
    for value in (env.wind.params.direction_from_deg, env.wind.params.height_m):
        assert np.ndim(value) == 0
    # the draws differ between trials (a distribution is not collapsed to one value)
    assert np.unique(env.draws["sea.hs_m"]).size == N


def test_realised_hm0_tracks_each_trials_drawn_hs(env):
    # DNV-RP-C205: Hm0 = 4 sqrt(m0); the realised variance is sum a_j^2 / 2.
    # The simulated band leaves out 0.1 % of m0 (Hm0 low by ~0.05 %); the rest
    # is the frequency sampling of 100 components. 2 % is common practice, no source.
    hm0 = 4.0 * np.sqrt(env.components.variance_m2())
    np.testing.assert_allclose(hm0, env.draws["sea.hs_m"], rtol=0.02)


def test_distributed_depth_reaches_the_dispersion_relation(spec):
    # Linear (Airy) wave theory, DNV-RP-C205 sec. 3.2: omega^2 = g k tanh(k h), per trial's depth.
    sea = spec_to_data(spec)["sea"] | {"depth_m": {"uniform": [8.0, 40.0]}, "n_components": 40}
    env = build_environment(_variant(spec, sea=sea), TrialStreams(3, range(6)))
    h = env.draws["sea.depth_m"]
    assert h.shape == (6,) and np.unique(h).size == 6
    w, k = env.components.omega_radps, env.components.wavenumber_radpm
    np.testing.assert_allclose(w**2, G * k * np.tanh(k * h[:, None]), rtol=1e-10)


def _current_variation_spec(spec):
    variation = {"speed_sigma_mps": {"uniform": [0.05, 0.15]}, "speed_tc_s": 300.0,
                 "set_sigma_deg": 10.0, "set_tc_s": 600.0}  # fmt: skip
    current = spec_to_data(spec)["current"] | {"variation": variation}
    return _variant(spec, current=current)


def test_trial_alone_equals_its_row_in_a_batch(spec):
    spec = _current_variation_spec(spec)
    batch = build_environment(spec, TrialStreams(spec.campaign.seed, range(N)))
    alone = build_environment(spec, TrialStreams(spec.campaign.seed, [3]))
    assert batch.draws.keys() == alone.draws.keys()
    for path, values in batch.draws.items():
        assert alone.draws[path].shape == (1,)
        assert alone.draws[path][0] == values[3], path
    for name in ("amplitude_m", "omega_radps", "wavenumber_radpm", "direction_rad", "phase_rad", "d_omega_radps"):
        np.testing.assert_array_equal(getattr(alone.components, name)[0], getattr(batch.components, name)[3])
    np.testing.assert_array_equal(alone.drift.reflection[0], batch.drift.reflection[3])
    rec_b, rec_a = batch.current.state.variation.values, alone.current.state.variation.values
    assert rec_a.shape[0] == 1 and rec_b.shape[0] == N
    np.testing.assert_array_equal(rec_a[0], rec_b[3])
    for name in ("mean_speed_mps", "direction_from_rad", "freqs_hz", "amplitudes_mps", "phases_rad"):
        np.testing.assert_array_equal(getattr(alone.wind.state, name)[0], getattr(batch.wind.state, name)[3])
    np.testing.assert_array_equal(alone.plant.packed_waves[0][0], batch.plant.packed_waves[0][3])


def test_current_record_spans_the_scenario(spec):
    spec = _current_variation_spec(spec)
    env = build_environment(spec, TrialStreams(1, range(2)), current_record_dt_s=2.0)
    record = env.current.state.variation
    assert record.dt_s == 2.0
    assert record.duration_s >= spec.scenario.duration_s
    assert np.shape(env.current.model.variation.speed_sigma_mps) == (2,)


def test_spec_without_current_or_wind_builds_with_none(spec):
    env = build_environment(_variant(spec, current=None, wind=None), TrialStreams(5, range(4)))
    assert env.current is None and env.wind is None
    assert env.components.n_trials == 4
    assert {k for k in env.draws if not k.startswith("mission.")} == {
        "sea.hs_m", "sea.tp_s", "sea.spreading.exponent", "sea.spreading.mean_dir_deg"
    }  # fmt: skip


def test_spec_without_sea_builds_a_calm_plant(spec):
    env = build_environment(_variant(spec, sea=None), TrialStreams(5, range(3)))
    assert env.spectrum is None and env.spreading is None and env.components is None and env.drift is None
    assert env.plant.components is None and env.plant.n_trials == 3
    assert env.current is not None and env.wind is not None


def test_bad_inputs_are_rejected(spec):
    with pytest.raises(ParameterError, match="trials"):
        build_environment(spec, TrialStreams(1, []))
    with pytest.raises(ParameterError, match="current_record_dt_s"):
        build_environment(spec, TrialStreams(1, [0]), current_record_dt_s=0.0)
