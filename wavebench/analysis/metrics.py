"""Per-trial metrics, accumulated while a batch runs.

:class:`MetricAccumulator` is fed once per control period with the state of
every trial and turns it into the columns of
:data:`~wavebench.analysis.metric_names.METRICS` when the batch ends. Only
the part of a trial before it completed its mission (or failed) counts:
after that its samples are ignored. Everything is batched; no trial reads
another's values, so a trial's metrics do not depend on its batch.

Definitions
-----------
* Cross-track statistics over the control-period samples of ``|e|`` while
  the trial is active: RMS ``sqrt(mean(e^2))``, the 95th percentile
  (``numpy.nanpercentile``, linear interpolation) and the maximum.
* On-line cross-track statistics (``xte_line_*``): the same over the
  samples on a survey line (every leg of a waypoint mission; the lines, not
  the connecting legs, of a survey pattern) once the craft is
  ``line_run_in_m`` along it, so the turn onto a line does not count.
* Heading error ``wrap(psi - psi_d)`` against the guide's desired heading,
  speed error ``u - u_d``: RMS over the same samples.
* Distance: the sum of straight segments between consecutive positions.
* Energy: shaft power (:mod:`wavebench.trial.actuation`) times the control
  period, summed, in kJ.
* Depth under keel: the least value seen (NaN without a seabed).
"""

from __future__ import annotations

import numpy as np
from numpy.typing import NDArray

from ..core.frames import wrap_pi

__all__ = ["MetricAccumulator"]

FloatArray = NDArray[np.float64]


class MetricAccumulator:
    """Running per-trial sums for the metrics of one batch.

    Parameters
    ----------
    n_trials : int
    n_ticks : int
        Number of control periods in the run (for the cross-track buffer).
    control_period_s : float
        Length of one control period [s].
    """

    def __init__(self, n_trials: int, n_ticks: int, control_period_s: float) -> None:
        self.n = n_trials
        self.period = control_period_s
        self.xte_abs = np.full((n_trials, n_ticks), np.nan)
        self.line_abs = np.full((n_trials, n_ticks), np.nan)
        self.line_count = np.zeros(n_trials)
        self.line_sum2 = np.zeros(n_trials)
        self.nav_err_abs: FloatArray | None = None
        self.nees_sum = np.zeros(n_trials)
        self.nees_n = np.zeros(n_trials)
        self.nis_sum = np.zeros(n_trials)
        self.nis_n = np.zeros(n_trials)
        self.outage_end = np.full(n_trials, np.nan)
        self.outage_ticks = np.zeros(0, dtype=np.int64)
        self.count = np.zeros(n_trials)
        self.sum_xte2 = np.zeros(n_trials)
        self.sum_head2 = np.zeros(n_trials)
        self.sum_speed2 = np.zeros(n_trials)
        self.distance = np.zeros(n_trials)
        self.energy_j = np.zeros(n_trials)
        self.min_dukc = np.full(n_trials, np.inf)
        self.has_seabed = False
        self.done_time = np.full(n_trials, np.nan)
        self.failed = np.zeros(n_trials, dtype=bool)
        self.grounded = np.zeros(n_trials, dtype=bool)
        self.reason = np.full(n_trials, "", dtype=object)

    @property
    def active(self) -> NDArray[np.bool_]:
        """Trials still running their mission (neither completed nor failed)."""
        return ~self.failed & np.isnan(self.done_time)

    def sample(self, tick: int, active: NDArray[np.bool_], xte_m: FloatArray, heading_rad: FloatArray,
               heading_d_rad: FloatArray, surge_mps: FloatArray, speed_d_mps: FloatArray) -> None:  # fmt: skip
        """Add the samples of control period ``tick`` for the ``active`` trials."""
        a = active
        self.xte_abs[a, tick] = np.abs(xte_m[a])
        self.count += a
        self.sum_xte2 += np.where(a, xte_m * xte_m, 0.0)
        he = wrap_pi(heading_rad - heading_d_rad)
        self.sum_head2 += np.where(a, he * he, 0.0)
        se = surge_mps - speed_d_mps
        self.sum_speed2 += np.where(a, se * se, 0.0)

    def sample_line(self, tick: int, on_line: NDArray[np.bool_], xte_m: FloatArray) -> None:
        """Add the cross-track samples of trials that are on a line (past the run-in of a survey line)."""
        self.line_abs[on_line, tick] = np.abs(xte_m[on_line])
        self.line_count += on_line
        self.line_sum2 += np.where(on_line, xte_m * xte_m, 0.0)

    def enable_nav(self, n_ticks: int, outage_ticks: NDArray[np.int64]) -> None:
        """Keep navigation metrics; ``outage_ticks`` are the control periods that end a scheduled GNSS outage."""
        self.nav_err_abs = np.full((self.n, n_ticks), np.nan)
        self.outage_ticks = np.asarray(outage_ticks, dtype=np.int64)

    def sample_nav(self, tick: int, active: NDArray[np.bool_], error_m: FloatArray, nees: FloatArray) -> None:
        """Add control period ``tick``'s horizontal navigation error [m] and NEES of the active trials."""
        self.nav_err_abs[active, tick] = error_m[active]
        ok = active & np.isfinite(nees)
        self.nees_sum += np.where(ok, nees, 0.0)
        self.nees_n += ok
        if np.any(self.outage_ticks == tick):
            self.outage_end = np.where(active, np.fmax(self.outage_end, error_m), self.outage_end)

    def motion(self, active: NDArray[np.bool_], step_m: FloatArray, power_w: FloatArray) -> None:
        """Add one control period's distance [m] and energy for the ``active`` trials."""
        self.distance += np.where(active, step_m, 0.0)
        self.energy_j += np.where(active, power_w * self.period, 0.0)

    def depth(self, active: NDArray[np.bool_], dukc_m: FloatArray) -> None:
        """Track the least depth under keel [m] (NaN samples, outside the grid, are skipped)."""
        self.has_seabed = True
        ok = active & np.isfinite(dukc_m)
        self.min_dukc = np.where(ok, np.minimum(self.min_dukc, dukc_m), self.min_dukc)

    def complete(self, newly_done: NDArray[np.bool_], t_s: float) -> None:
        """Mark trials that accepted their last waypoint at time ``t_s``."""
        self.done_time = np.where(newly_done & self.active, t_s, self.done_time)

    def fail(self, mask: NDArray[np.bool_], reason: str, *, grounded: bool = False) -> None:
        """Mark active trials in ``mask`` as failed with ``reason`` (first reason wins)."""
        new = mask & self.active
        self.reason[new] = reason
        self.failed |= new
        if grounded:
            self.grounded |= new

    def finish(self) -> dict[str, np.ndarray]:
        """The metric columns, keyed as in :data:`~wavebench.analysis.metric_names.METRICS`."""
        count = np.maximum(self.count, 1.0)
        with np.errstate(invalid="ignore"):
            rms = lambda s: np.where(self.count > 0, np.sqrt(s / count), np.nan)  # noqa: E731
            any_sample = self.count > 0
            p95 = np.full(self.n, np.nan)
            xmax = np.full(self.n, np.nan)
            if np.any(any_sample):
                rows = self.xte_abs[any_sample]
                p95[any_sample] = np.nanpercentile(rows, 95.0, axis=1)
                xmax[any_sample] = np.nanmax(rows, axis=1)
        line_rms = np.where(self.line_count > 0, np.sqrt(self.line_sum2 / np.maximum(self.line_count, 1.0)), np.nan)
        line_p95 = np.full(self.n, np.nan)
        line_max = np.full(self.n, np.nan)
        has_line = self.line_count > 0
        if np.any(has_line):
            rows = self.line_abs[has_line]
            line_p95[has_line] = np.nanpercentile(rows, 95.0, axis=1)
            line_max[has_line] = np.nanmax(rows, axis=1)
        nav_rms = np.full(self.n, np.nan)
        nav_p95 = np.full(self.n, np.nan)
        nav_max = np.full(self.n, np.nan)
        if self.nav_err_abs is not None:
            errs = self.nav_err_abs
            has_nav = np.any(np.isfinite(errs), axis=1)
            if np.any(has_nav):
                e = errs[has_nav]
                nav_rms[has_nav] = np.sqrt(np.nanmean(e * e, axis=1))
                nav_p95[has_nav] = np.nanpercentile(e, 95.0, axis=1)
                nav_max[has_nav] = np.nanmax(e, axis=1)
        completed = ~np.isnan(self.done_time) & ~self.failed
        ended = np.where(self.failed, "failed", np.where(completed, "completed", "truncated")).astype(object)
        dukc = np.full(self.n, np.nan)
        if self.has_seabed:
            dukc = np.where(np.isfinite(self.min_dukc), self.min_dukc, np.nan)
        out = {
            "ended": ended,
            "completed": completed,
            "time_to_complete_s": np.where(completed, self.done_time, np.nan),
            "xte_rms_m": rms(self.sum_xte2),
            "xte_p95_m": p95,
            "xte_max_m": xmax,
            "xte_line_rms_m": line_rms,
            "xte_line_p95_m": line_p95,
            "xte_line_max_m": line_max,
            "nav_err_rms_m": nav_rms,
            "nav_err_p95_m": nav_p95,
            "nav_err_max_m": nav_max,
            "nav_err_outage_end_m": self.outage_end.copy(),
            "nees_mean": np.where(self.nees_n > 0, self.nees_sum / np.maximum(self.nees_n, 1.0), np.nan),
            "nis_mean": np.where(self.nis_n > 0, self.nis_sum / np.maximum(self.nis_n, 1.0), np.nan),
            "heading_err_rms_deg": np.degrees(rms(self.sum_head2)),
            "speed_err_rms_mps": rms(self.sum_speed2),
            "distance_m": self.distance.copy(),
            "energy_kj": self.energy_j / 1000.0,
            "min_depth_under_keel_m": dukc,
            "grounded": self.grounded.copy(),
            "failed": self.failed.copy(),
            "failure_reason": self.reason.copy(),
        }
        for name in ("xte_rms_m", "xte_p95_m", "xte_max_m", "xte_line_rms_m", "xte_line_p95_m", "xte_line_max_m",
                     "nav_err_rms_m", "nav_err_p95_m", "nav_err_max_m", "nav_err_outage_end_m", "nees_mean",
                     "nis_mean", "heading_err_rms_deg", "speed_err_rms_mps",
                     "distance_m", "energy_kj", "min_depth_under_keel_m"):  # fmt: skip
            out[name] = np.where(self.failed, np.nan, out[name])
        return out
