"""The per-trial metrics a campaign computes: names, units and meanings.

This catalogue is plain data, importable without the rest of the engine, so
the spec loader can check a requirement's metric name at load time.
"""

from __future__ import annotations

from dataclasses import dataclass

__all__ = ["METRICS", "MetricInfo", "numeric_metric_names"]


@dataclass(frozen=True)
class MetricInfo:
    """What one per-trial metric means.

    Parameters
    ----------
    unit : str
        Unit of the value ("1" for a count or ratio, "" for text).
    long_name : str
        One-line meaning.
    kind : str
        ``"float"``, ``"bool"`` or ``"text"``; requirements apply to floats.
    """

    unit: str
    long_name: str
    kind: str = "float"


#: Every column of a campaign's metrics table besides ``trial`` and the
#: drawn parameters (``param.<toml path>``), in table order.
METRICS: dict[str, MetricInfo] = {
    "ended": MetricInfo("", "how the trial ended: completed, truncated (time ran out) or failed", "text"),
    "completed": MetricInfo("", "the last waypoint was accepted before the end of the run", "bool"),
    "time_to_complete_s": MetricInfo("s", "time at which the last waypoint was accepted (NaN if never)"),
    "xte_rms_m": MetricInfo("m", "root-mean-square cross-track error"),
    "xte_p95_m": MetricInfo("m", "95th percentile of the absolute cross-track error"),
    "xte_max_m": MetricInfo("m", "largest absolute cross-track error"),
    "xte_line_rms_m": MetricInfo("m", "RMS cross-track error on the lines, past each line's run-in"),
    "xte_line_p95_m": MetricInfo("m", "95th percentile of |cross-track error| on the lines, past each line's run-in"),
    "xte_line_max_m": MetricInfo("m", "largest |cross-track error| on the lines, past each line's run-in"),
    "nav_err_rms_m": MetricInfo(
        "m", "RMS horizontal navigation error, estimate minus truth (NaN for truth navigation)"
    ),
    "nav_err_p95_m": MetricInfo("m", "95th percentile of the horizontal navigation error"),
    "nav_err_max_m": MetricInfo("m", "largest horizontal navigation error"),
    "nav_err_outage_end_m": MetricInfo(
        "m", "largest horizontal navigation error at the end of a scheduled GNSS outage window (its last control "
        "period, before the first fix; NaN if none)"
    ),
    "nees_mean": MetricInfo("1", "time-averaged NEES of [north, east, heading, surge, sway] (5 dof; 5 if consistent)"),
    "nis_mean": MetricInfo("1", "time-averaged NIS of the GNSS fixes (2 dof; 2 if consistent)"),
    "heading_err_rms_deg": MetricInfo("deg", "root-mean-square heading error against the guide's desired heading"),
    "speed_err_rms_mps": MetricInfo("m/s", "root-mean-square surge speed error against the speed schedule"),
    "distance_m": MetricInfo("m", "distance sailed over ground"),
    "energy_kj": MetricInfo("kJ", "propulsion energy (shaft power from the thruster model, integrated)"),
    "min_depth_under_keel_m": MetricInfo("m", "least water under the keel (NaN without a seabed)"),
    "grounded": MetricInfo("", "the keel touched the seabed", "bool"),
    "failed": MetricInfo("", "the trial stopped early (non-finite state, runaway or grounding)", "bool"),
    "failure_reason": MetricInfo("", "why the trial failed, empty if it did not", "text"),
}


def numeric_metric_names() -> tuple[str, ...]:
    """Names of the float metrics (the ones a requirement may constrain).

    Examples
    --------
    >>> "xte_p95_m" in numeric_metric_names()
    True
    """
    return tuple(name for name, info in METRICS.items() if info.kind == "float")
