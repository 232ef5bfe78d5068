"""A campaign that stops when every requirement is decided (sequential verdicts in the runner)."""

from __future__ import annotations

import pandas as pd
import pytest

from wavebench.analysis.sequential import SequentialPlan
from wavebench.campaign import run_campaign
from wavebench.core.errors import ParameterError
from wavebench.spec import example_spec_path, load_spec

BASE = ["scenario.duration_s=30.0", "campaign.batch_size=10", "requirements.track_keeping=",
        "requirements.finishes_in_time="]  # fmt: skip


def _spec(*reqs: str):
    return load_spec(example_spec_path("skerrow_sound"), [*BASE, *reqs])


def test_clear_requirements_stop_the_campaign_at_the_first_look() -> None:
    # 10 of 10 met: the Clopper-Pearson lower bound at the first look's confidence 1 - 6 alpha / pi^2 (union bound
    # over looks) is (alpha_1 / 2)^(1/10) = 0.66 > 0.5, so "pass"; 0 of 10 met: the upper bound 1 - 0.66 < 0.9, "fail".
    spec = _spec("requirements.easy.metric=xte_max_m", "requirements.easy.below=1000.0",
                 "requirements.easy.probability=0.5", "requirements.impossible.metric=xte_max_m",
                 "requirements.impossible.below=0.0001", "requirements.impossible.probability=0.9")  # fmt: skip
    plan = SequentialPlan(confidence=0.95, max_trials=60, first_look=10, look_every=10)
    res = run_campaign(spec, progress=False, until=plan)
    assert len(res.metrics) == 10 and res.spec.campaign.trials == 10
    assert {k: (s.decision, s.n_trials) for k, s in res.sequential.items()} == {
        "easy": ("pass", 10), "impossible": ("fail", 10)}
    # the trials run are exactly the first trials of the full campaign
    full = run_campaign(spec, trials=20, progress=False)
    pd.testing.assert_frame_equal(res.metrics, full.metrics.iloc[:10], check_exact=True)


def test_an_undecidable_requirement_runs_to_the_cap() -> None:
    # a requirement sitting at its own success rate cannot be decided: the campaign stops at max_trials
    spec = _spec("requirements.coin.metric=xte_max_m", "requirements.coin.below=1000.0",
                 "requirements.coin.probability=0.999")  # fmt: skip
    plan = SequentialPlan(confidence=0.95, max_trials=30, first_look=10, look_every=10)
    res = run_campaign(spec, progress=False, until=plan)
    assert len(res.metrics) == 30 and res.sequential["coin"].decision == "undecided"


def test_a_sequential_plan_needs_requirements() -> None:
    with pytest.raises(ParameterError, match="needs requirements"):
        run_campaign(_spec(), progress=False, until=SequentialPlan(max_trials=20, first_look=10, look_every=10))


def test_on_chunk_reports_each_finished_chunk_in_order() -> None:
    seen = []
    spec = _spec()
    res = run_campaign(spec, trials=25, progress=False,
                       on_chunk=lambda out, done, planned: seen.append(
                           (None if out is None else int(out.trials[0]), done, planned)))  # fmt: skip
    assert seen == [(None, 0, 25), (0, 10, 25), (10, 20, 25), (20, 25, 25)]
    assert len(res.metrics) == 25
