"""Closed-loop trials and campaigns: reproducibility, user blocks, wiring, failures and the power model."""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pandas as pd
import pytest

from wavebench.campaign import run_campaign
from wavebench.core.errors import ParameterError
from wavebench.core.streams import TrialStreams
from wavebench.spec import build_environment, example_spec_path, load_spec
from wavebench.spec.tables import SeabedSpec
from wavebench.trial import PerTrialPilot, PilotOutput, build_trial_setup, run_batch
from wavebench.trial.actuation import POWER_EFFICIENCY


def short_spec(name: str = "skerrow_sound", duration_s: float = 30.0, trials: int = 9):
    spec = load_spec(example_spec_path(name))
    spec = dataclasses.replace(spec, scenario=dataclasses.replace(spec.scenario, duration_s=duration_s))
    return dataclasses.replace(spec, campaign=dataclasses.replace(spec.campaign, trials=trials))


@pytest.fixture(scope="module")
def spec():
    return short_spec()


@pytest.fixture(scope="module")
def by_batch(spec):
    return {b: run_campaign(spec, batch_size=b, progress=False) for b in (1, 7, 64)}


def test_same_bits_whatever_the_batch_size(by_batch) -> None:
    ref = by_batch[64]
    assert len(ref.metrics) == 9
    assert np.isfinite(ref.metrics["xte_rms_m"]).all()
    for b in (1, 7):
        pd.testing.assert_frame_equal(by_batch[b].metrics, ref.metrics, check_exact=True)
        for name in ref.timeseries.data_vars:
            np.testing.assert_array_equal(by_batch[b].timeseries[name].values, ref.timeseries[name].values)
    assert [v.to_dict() for v in by_batch[1].verdicts] == [v.to_dict() for v in ref.verdicts]


def test_a_trial_replayed_alone_equals_its_row(spec, by_batch) -> None:
    ref = by_batch[64]
    env = build_environment(spec, TrialStreams(spec.campaign.seed, [5]))
    alone = run_batch(spec, build_trial_setup(spec, env))
    row = ref.metrics.iloc[5]
    for name, col in alone.metrics.items():
        a, b = col[0], row[name]
        assert (a == b) or (isinstance(a, float) and math.isnan(a) and math.isnan(b)), name
    np.testing.assert_array_equal(alone.record.data["xte_m"][0], ref.timeseries["xte_m"].sel(trial=5).values)


def test_other_seed_other_results(spec, by_batch) -> None:
    other = run_campaign(spec, seed=spec.campaign.seed + 1, trials=3, progress=False)
    assert not np.array_equal(other.metrics["xte_rms_m"].to_numpy(), by_batch[64].metrics["xte_rms_m"][:3].to_numpy())


class ToyPilot:
    """A user's per-trial pilot: proportional heading and speed, plain floats (invented gains)."""

    def __init__(self, trial: int) -> None:
        self.trial = trial

    def step(self, nav: dict, guide: dict, dt_s: float) -> tuple[float, float]:
        err = (nav["heading_rad"] - guide["heading_d_rad"] + math.pi) % (2 * math.pi) - math.pi
        rudder = max(-0.6, min(0.6, -1.5 * err - 1.0 * nav["yaw_rate_rad_s"]))
        force = max(-4500.0, min(4500.0, 2000.0 * (guide["speed_d_mps"] - nav["surge_mps"]) + 1500.0))
        return force, rudder


@dataclasses.dataclass(frozen=True)
class ToyBatchPilot:
    """The same law as ToyPilot, batched (the fast path a user would write next)."""

    needs: frozenset = frozenset({"heading_rad", "yaw_rate_rad_s", "surge_mps", "heading_d_rad", "speed_d_mps"})

    def init(self, nav):
        return None

    def step(self, state, nav, guide, dt_s):
        err = np.mod(nav.heading_rad - guide.heading_d_rad + math.pi, 2 * math.pi) - math.pi
        rudder = np.clip(-1.5 * err - 1.0 * nav.yaw_rate_rad_s, -0.6, 0.6)
        force = np.clip(2000.0 * (guide.speed_d_mps - nav.surge_mps) + 1500.0, -4500.0, 4500.0)
        return None, PilotOutput(surge_force_n=force, rudder_rad=rudder)


def test_user_pilot_per_trial_adapter_matches_its_batched_twin() -> None:
    spec = short_spec(trials=3, duration_s=20.0)
    slow = run_campaign(spec, progress=False, pilot_factory=lambda s: PerTrialPilot(ToyPilot, s.env.trials.trials))
    fast = run_campaign(spec, progress=False, pilot_factory=lambda s: ToyBatchPilot())
    built_in = run_campaign(spec, progress=False)
    np.testing.assert_allclose(slow.metrics["xte_rms_m"], fast.metrics["xte_rms_m"], rtol=1e-12)
    np.testing.assert_allclose(slow.metrics["energy_kj"], fast.metrics["energy_kj"], rtol=1e-12)
    # the toy pilot is a different law: the run must show it
    assert not np.allclose(slow.metrics["energy_kj"], built_in.metrics["energy_kj"])


def test_wiring_is_checked_before_the_first_step() -> None:
    spec = short_spec(trials=2, duration_s=5.0)

    @dataclasses.dataclass(frozen=True)
    class NeedsSonar(ToyBatchPilot):
        needs: frozenset = frozenset({"heading_rad", "sonar_range_m"})

    with pytest.raises(ParameterError, match=r"stack\.pilot.*sonar_range_m"):
        run_campaign(spec, progress=False, pilot_factory=lambda s: NeedsSonar())


@dataclasses.dataclass(frozen=True)
class BreaksTrialOne(ToyBatchPilot):
    """Returns NaN for the batch's second trial after 3 s (a user bug in one trial)."""

    def step(self, state, nav, guide, dt_s):
        _, out = ToyBatchPilot.step(self, state, nav, guide, dt_s)
        if nav.t_s > 3.0 and out.rudder_rad.size > 1:
            out.rudder_rad[1] = np.nan
        return None, out


def test_a_failing_trial_is_recorded_and_the_others_go_on() -> None:
    spec = short_spec(trials=3, duration_s=10.0)
    broken = run_campaign(spec, batch_size=3, progress=False, pilot_factory=lambda s: BreaksTrialOne())
    clean = run_campaign(spec, batch_size=3, progress=False, pilot_factory=lambda s: ToyBatchPilot())
    m = broken.metrics
    assert m["failed"].tolist() == [False, True, False]
    assert m["ended"][1] == "failed" and "non-finite actuator demand at t = 3.1 s" in m["failure_reason"][1]
    assert math.isnan(m["xte_rms_m"][1])
    for i in (0, 2):  # the others are untouched by the failure, to the bit
        assert m["xte_rms_m"][i] == clean.metrics["xte_rms_m"][i]
    ts = broken.timeseries["north_m"].sel(trial=1).values
    assert np.isfinite(ts[:3]).all() and np.isnan(ts[5:]).all()


def test_grounding_ends_a_trial_with_its_reason() -> None:
    spec = short_spec(trials=2, duration_s=5.0)
    spec = dataclasses.replace(spec, seabed=SeabedSpec(kind="flat", depth_m=0.5))  # Tholepin draws more
    m = run_campaign(spec, progress=False).metrics
    assert m["grounded"].all() and m["failed"].all()
    assert m["failure_reason"][0].startswith("grounded at t = 0.0 s")


def test_truncated_when_time_runs_out_completed_when_the_path_ends() -> None:
    m = run_campaign(short_spec(trials=2, duration_s=30.0), progress=False).metrics
    assert (m["ended"] == "truncated").all() and m["time_to_complete_s"].isna().all()
    full = run_campaign(short_spec(trials=1, duration_s=600.0), progress=False).metrics
    assert full["ended"][0] == "completed"
    # 1330 m of legs at 3 m/s take 443 s in still water (the path geometry; the sea and current change it a little)
    assert 400.0 < full["time_to_complete_s"][0] < 520.0
    assert full["distance_m"][0] == pytest.approx(1330.0, rel=0.06)


def test_power_is_the_actuator_disc_figure_in_calm_water() -> None:
    # Rankine-Froude momentum theory: P = T (V_a + v_i), v_i = (-V_a + sqrt(V_a^2 + 2T/(rho A))) / 2, divided by
    # the stated efficiency. In calm water on a straight leg the thrust balances the hull's resistance.
    spec = short_spec(trials=1, duration_s=60.0)
    spec = dataclasses.replace(spec, sea=None, current=None, wind=None)
    mission = dataclasses.replace(spec.mission, waypoints_ne_m=((0.0, 0.0), (2000.0, 0.0)), start_north_m=None,
                                  start_east_m=None)  # fmt: skip
    spec = dataclasses.replace(spec, mission=mission)
    res = run_campaign(spec, progress=False)
    craft = spec.craft.build()
    h, p = craft.hull, craft.propulsion
    u = 3.0
    thrust = -(h.x_u * u + h.x_uu * u * u) / (1.0 - p.thrust_deduction)
    v_a = (1.0 - p.wake_fraction) * u
    area = math.pi * p.prop_diameter_m**2 / 4.0
    v_i = 0.5 * (-v_a + math.sqrt(v_a**2 + 2.0 * thrust / (1025.0 * area)))
    power = thrust * (v_a + v_i) / POWER_EFFICIENCY
    recorded = res.timeseries["power_w"].sel(trial=0).values[-10:]
    np.testing.assert_allclose(recorded, power, rtol=0.01)
    # steady surge: the actuators' surge force balances the hull resistance, tau_X = -(X_u u + X_uu u|u|)
    # (Fossen 2021, the surge equation at constant speed); yaw moment ~0 on a straight leg in calm water
    act = res.timeseries["act_surge_n"].sel(trial=0).values[-10:]
    np.testing.assert_allclose(act, -(h.x_u * u + h.x_uu * u * u), rtol=0.01)
    assert np.all(np.abs(res.timeseries["act_yaw_nm"].sel(trial=0).values[-10:]) < 0.01 * act.mean())
    assert res.metrics["speed_err_rms_mps"][0] < 0.01
    assert res.metrics["xte_max_m"][0] < 1e-6


def test_record_signals_choose_what_is_kept() -> None:
    from wavebench.spec.tables import SIGNAL_NAMES
    from wavebench.trial.recorder import SIGNALS

    assert tuple(SIGNALS) == SIGNAL_NAMES
    spec = short_spec(trials=2, duration_s=5.0)
    spec = dataclasses.replace(spec, campaign=dataclasses.replace(spec.campaign, record_signals=["xte_m", "power_w"]))
    ts = run_campaign(spec, progress=False).timeseries
    assert sorted(ts.data_vars) == ["power_w", "xte_m"]
    with pytest.raises(ParameterError, match=r"record_signals\[0\] = 'xte' .*did you mean 'xte_m'"):
        dataclasses.replace(spec.campaign, record_signals=["xte"])


def test_on_line_metrics_leave_out_the_turns_of_a_survey() -> None:
    spec = short_spec("dulse_bay", trials=2, duration_s=400.0)
    spec = dataclasses.replace(spec, sea=None, current=None, wind=None)  # calm water: only the turns set it off
    m = run_campaign(spec, progress=False).metrics
    assert (m["xte_max_m"] > 3.0).all()  # the turns between lines swing wide
    assert (m["xte_line_max_m"] < 0.25 * m["xte_max_m"]).all()  # on the lines, past the run-in, it tracks
    assert (m["xte_line_rms_m"] <= m["xte_rms_m"]).all()
    bad = dataclasses.replace(spec.mission, line_run_in_m=1e9)  # no sample ever counts
    m2 = run_campaign(dataclasses.replace(spec, mission=bad), progress=False).metrics
    assert m2["xte_line_p95_m"].isna().all() and m2["xte_p95_m"].notna().all()
