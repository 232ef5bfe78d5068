"""Per-trial metrics, statistics, verdicts, sequential verdicts and sensitivity ranking."""

from .metric_names import METRICS, MetricInfo, numeric_metric_names
from .metrics import MetricAccumulator
from .sensitivity import PARAM_PREFIX, parameter_columns, rank_sensitivity, requirement_sensitivity
from .sequential import (
    SequentialMonitor,
    SequentialPlan,
    SequentialStatus,
    sequential_decision,
    sequential_interval,
    zero_failure_upper_bound,
)
from .stats import bootstrap_quantile, clopper_pearson, min_trials_to_pass, wilson
from .verdicts import COMPARATORS, VERDICTS, Verdict, evaluate_requirement, verdicts_table_text

__all__ = [
    "COMPARATORS",
    "METRICS",
    "PARAM_PREFIX",
    "VERDICTS",
    "MetricAccumulator",
    "MetricInfo",
    "SequentialMonitor",
    "SequentialPlan",
    "SequentialStatus",
    "Verdict",
    "bootstrap_quantile",
    "clopper_pearson",
    "evaluate_requirement",
    "min_trials_to_pass",
    "numeric_metric_names",
    "parameter_columns",
    "rank_sensitivity",
    "requirement_sensitivity",
    "sequential_decision",
    "sequential_interval",
    "verdicts_table_text",
    "wilson",
    "zero_failure_upper_bound",
]
