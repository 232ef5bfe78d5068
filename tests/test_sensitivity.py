"""Tests of wavebench.analysis.sensitivity.

Checked against scipy.stats.spearmanr (Spearman 1904 rank correlation, ties
averaged, t-approximation p-value), run directly on the same columns, on
constructed data where one input drives a metric monotonically and the others
are independent noise; NaN handling against spearmanr(..., nan_policy="omit");
the indicator of a requirement against spearmanr on the 0/1 outcome and against
the Mann-Whitney U statistic (scipy.stats.mannwhitneyu), to which a rank
correlation with a binary variable is tied by an identity.
"""

from __future__ import annotations

import warnings

import numpy as np
import pandas as pd
import pytest
from scipy import stats

from wavebench.analysis.sensitivity import parameter_columns, rank_sensitivity, requirement_sensitivity
from wavebench.core.errors import ParameterError

N = 400


def _campaign(seed: int = 11) -> pd.DataFrame:
    """A made-up metrics table: hs drives xte (increasing), current drives energy (decreasing)."""
    rng = np.random.default_rng(seed)
    hs = rng.uniform(0.5, 3.0, N)
    current = rng.uniform(0.0, 1.5, N)
    mass = rng.uniform(900.0, 1100.0, N)
    heading = rng.uniform(0.0, 360.0, N)
    return pd.DataFrame(
        {
            "trial": np.arange(N),
            "param.sea.hs_m": hs,
            "param.current.speed_mps": current,
            "param.craft.mass_kg": mass,
            "param.sea.heading_deg": heading,
            "xte_p95_m": np.exp(hs) + rng.normal(0.0, 0.3, N),
            "energy_kj": 50.0 - 10.0 * current**3 + rng.normal(0.0, 1.0, N),
            "noise_m": rng.normal(0.0, 1.0, N),
            "completed": rng.random(N) < 0.9,
            "ended": np.where(rng.random(N) < 0.5, "completed", "truncated"),
        }
    )


PARAMS = ["param.sea.hs_m", "param.current.speed_mps", "param.craft.mass_kg", "param.sea.heading_deg"]


def test_default_columns():
    frame = _campaign()
    assert parameter_columns(frame) == PARAMS
    table = rank_sensitivity(frame)
    # Numeric metrics only: not trial, param.*, the bool "completed" or the text "ended".
    assert table["metric"].unique().tolist() == ["xte_p95_m", "energy_kj", "noise_m"]
    assert list(table.columns) == ["metric", "parameter", "rho", "p_value", "n"]
    assert len(table) == 3 * len(PARAMS)
    assert table["n"].dtype == np.int64 and (table["n"] == N).all()


def test_matches_scipy_spearmanr_and_driver_ranks_first():
    # Reference: scipy.stats.spearmanr(x, y) on the same columns.
    frame = _campaign()
    table = rank_sensitivity(frame, metrics=["xte_p95_m", "energy_kj", "noise_m"])
    for row in table.itertuples():
        ref = stats.spearmanr(frame[row.parameter], frame[row.metric])
        assert row.rho == pytest.approx(ref.statistic, abs=1e-12), (row.metric, row.parameter)
        assert row.p_value == pytest.approx(ref.pvalue, rel=1e-9, abs=1e-300), (row.metric, row.parameter)
    xte = table[table["metric"] == "xte_p95_m"]
    energy = table[table["metric"] == "energy_kj"]
    assert xte.iloc[0]["parameter"] == "param.sea.hs_m" and xte.iloc[0]["rho"] > 0.9
    assert energy.iloc[0]["parameter"] == "param.current.speed_mps" and energy.iloc[0]["rho"] < -0.9
    # Sorted by |rho| within each metric; the independent inputs stay small (|rho| of
    # independent samples has standard deviation ~ 1/sqrt(n - 1) = 0.05 here).
    for _, group in table.groupby("metric", sort=False):
        strength = group["rho"].abs().to_numpy()
        assert np.all(np.diff(strength) <= 0)
    assert (xte.iloc[1:]["rho"].abs() < 0.2).all()
    assert (table[table["metric"] == "noise_m"]["rho"].abs() < 0.2).all()


def test_monotone_but_nonlinear_driver_gives_rank_correlation_one():
    # Spearman (1904): a strictly increasing function of x has rank correlation exactly 1,
    # whatever its shape; checked with scipy too.
    x = np.linspace(0.1, 5.0, 50)
    frame = pd.DataFrame({"param.a": x, "param.b": x[::-1], "y": np.exp(3 * x)})
    table = rank_sensitivity(frame)
    assert table.loc[0, "rho"] == pytest.approx(1.0, abs=1e-12)
    assert table.loc[1, "rho"] == pytest.approx(-1.0, abs=1e-12)
    assert stats.spearmanr(frame["param.a"], frame["y"]).statistic == pytest.approx(1.0, abs=1e-12)


def test_nan_trials_are_dropped_pairwise():
    frame = _campaign()
    rng = np.random.default_rng(3)
    frame.loc[rng.random(N) < 0.1, "xte_p95_m"] = np.nan  # failed trials
    frame.loc[rng.random(N) < 0.05, "param.sea.hs_m"] = np.nan  # input not drawn
    table = rank_sensitivity(frame, metrics=["xte_p95_m", "energy_kj"])
    for row in table.itertuples():
        x = frame[row.parameter].to_numpy()
        y = frame[row.metric].to_numpy()
        both = ~(np.isnan(x) | np.isnan(y))
        assert row.n == int(both.sum())
        ref = stats.spearmanr(x[both], y[both])
        assert row.rho == pytest.approx(ref.statistic, abs=1e-12)
        assert row.p_value == pytest.approx(ref.pvalue, rel=1e-9, abs=1e-300)
        # Second reference: scipy's own NaN omission.
        omit = stats.spearmanr(x, y, nan_policy="omit")
        assert row.rho == pytest.approx(omit.statistic, abs=1e-12)
    hs_xte = table[(table["metric"] == "xte_p95_m") & (table["parameter"] == "param.sea.hs_m")].iloc[0]
    assert hs_xte["n"] < N - 20  # both kinds of NaN removed
    assert table[(table["metric"] == "energy_kj") & (table["parameter"] == "param.craft.mass_kg")].iloc[0]["n"] == N


def test_constant_column_gives_nan_without_warning():
    frame = _campaign()
    frame["param.craft.draft_m"] = 1.2  # not dispersed
    frame["flat_m"] = 0.0
    # Constant only over the trials that have a metric value.
    frame["param.partly"] = np.where(np.arange(N) < 10, np.arange(N, dtype=float), 5.0)
    frame["sparse_m"] = np.where(np.arange(N) < 10, np.nan, frame["xte_p95_m"])
    # Too few trials with both values.
    frame["two_m"] = np.where(np.arange(N) < 2, 1.0 * np.arange(N), np.nan)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        table = rank_sensitivity(
            frame,
            metrics=["xte_p95_m", "flat_m", "sparse_m", "two_m"],
            parameters=["param.craft.draft_m", "param.sea.hs_m", "param.partly"],
        )
    # scipy warns (ConstantInputWarning) and returns NaN for a constant input.
    with pytest.warns(stats.ConstantInputWarning):
        assert np.isnan(stats.spearmanr(frame["param.craft.draft_m"], frame["xte_p95_m"]).statistic)

    def get(m, p):
        return table[(table["metric"] == m) & (table["parameter"] == p)].iloc[0]

    assert np.isnan(get("xte_p95_m", "param.craft.draft_m")["rho"])
    assert np.isnan(get("xte_p95_m", "param.craft.draft_m")["p_value"])
    assert get("xte_p95_m", "param.craft.draft_m")["n"] == N
    assert np.isnan(get("flat_m", "param.sea.hs_m")["rho"])
    assert np.isnan(get("sparse_m", "param.partly")["rho"]) and get("sparse_m", "param.partly")["n"] == N - 10
    assert np.isnan(get("two_m", "param.sea.hs_m")["rho"]) and get("two_m", "param.sea.hs_m")["n"] == 2
    # Undefined correlations go last within their metric.
    xte = table[table["metric"] == "xte_p95_m"]
    assert xte.iloc[0]["parameter"] == "param.sea.hs_m" and np.isnan(xte.iloc[-1]["rho"])


def test_requirement_sensitivity_matches_spearman_on_the_indicator():
    frame = _campaign()
    frame.loc[::17, "xte_p95_m"] = np.nan  # failed trials: not met, as in the verdicts
    threshold = 6.0
    table = requirement_sensitivity(frame, metric="xte_p95_m", comparator="below", threshold=threshold)
    assert table["metric"].unique().tolist() == ["xte_p95_m < 6"]
    y = frame["xte_p95_m"].to_numpy()
    met = (~np.isnan(y)) & (np.nan_to_num(y, nan=np.inf) < threshold)
    for row in table.itertuples():
        # Reference: scipy.stats.spearmanr(input, 0/1 outcome).
        ref = stats.spearmanr(frame[row.parameter], met.astype(float))
        assert row.rho == pytest.approx(ref.statistic, abs=1e-12)
        assert row.p_value == pytest.approx(ref.pvalue, rel=1e-9, abs=1e-300)
        assert row.n == N
    first = table.iloc[0]
    assert first["parameter"] == "param.sea.hs_m" and first["rho"] < -0.5  # higher seas: fewer met

    # Identity for a binary variable (n1 met, n0 not, no ties in x): Spearman's rho is the
    # Pearson correlation of the x-ranks with the indicator, which equals
    # (2U/(n0 n1) - 1) * sqrt(3 n0 n1 / (n^2 - 1)) with U the Mann-Whitney statistic of the met
    # group's x (scipy.stats.mannwhitneyu) and average ranks for the indicator's ties.
    x = frame["param.sea.hs_m"].to_numpy()
    n1, n0 = int(met.sum()), int((~met).sum())
    u = stats.mannwhitneyu(x[met], x[~met]).statistic
    rho_from_u = (2 * u / (n0 * n1) - 1) * np.sqrt(3 * n0 * n1 / (N**2 - 1))
    assert first["rho"] == pytest.approx(rho_from_u, rel=1e-10)

    above = requirement_sensitivity(frame, metric="xte_p95_m", comparator="above", threshold=threshold, name="xte high")
    met_above = np.nan_to_num(y, nan=-np.inf) > threshold
    ref = stats.spearmanr(frame["param.sea.hs_m"], met_above.astype(float))
    row = above[above["parameter"] == "param.sea.hs_m"].iloc[0]
    assert row["metric"] == "xte high" and row["rho"] == pytest.approx(ref.statistic, abs=1e-12)


def test_requirement_sensitivity_drops_nan_inputs_and_handles_all_met():
    frame = _campaign()
    frame.loc[:39, "param.sea.hs_m"] = np.nan
    table = requirement_sensitivity(frame, metric="xte_p95_m", comparator="below", threshold=6.0)
    assert table[table["parameter"] == "param.sea.hs_m"].iloc[0]["n"] == N - 40
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        every = requirement_sensitivity(frame, metric="xte_p95_m", comparator="below", threshold=1e9)
    assert every["rho"].isna().all() and every["p_value"].isna().all()


def test_refusals_name_the_field():
    frame = _campaign()
    with pytest.raises(ParameterError, match="frame"):
        rank_sensitivity(frame.to_dict())
    with pytest.raises(ParameterError, match="missing_m"):
        rank_sensitivity(frame, metrics=["missing_m"])
    with pytest.raises(ParameterError, match="ended"):
        rank_sensitivity(frame, metrics=["ended"])
    with pytest.raises(ParameterError, match="parameters"):
        rank_sensitivity(frame, parameters="param.sea.hs_m")
    with pytest.raises(ParameterError, match="parameters"):
        rank_sensitivity(frame.drop(columns=PARAMS))
    with pytest.raises(ParameterError, match="comparator"):
        requirement_sensitivity(frame, metric="xte_p95_m", comparator="under", threshold=1.0)
    with pytest.raises(ParameterError, match="threshold"):
        requirement_sensitivity(frame, metric="xte_p95_m", comparator="below", threshold=np.nan)
    # A boolean column may be named explicitly (read as 0/1).
    table = rank_sensitivity(frame, metrics=["completed"], parameters=["param.sea.hs_m"])
    ref = stats.spearmanr(frame["param.sea.hs_m"], frame["completed"].astype(float))
    assert table.loc[0, "rho"] == pytest.approx(ref.statistic, abs=1e-12)
