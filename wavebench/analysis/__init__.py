"""Per-trial metrics, statistics and verdicts."""

from .metric_names import METRICS, MetricInfo, numeric_metric_names
from .metrics import MetricAccumulator
from .stats import bootstrap_quantile, clopper_pearson, min_trials_to_pass, wilson
from .verdicts import COMPARATORS, VERDICTS, Verdict, evaluate_requirement, verdicts_table_text

__all__ = [
    "COMPARATORS",
    "METRICS",
    "VERDICTS",
    "MetricAccumulator",
    "MetricInfo",
    "Verdict",
    "bootstrap_quantile",
    "clopper_pearson",
    "evaluate_requirement",
    "min_trials_to_pass",
    "numeric_metric_names",
    "verdicts_table_text",
    "wilson",
]
