"""Recording chosen signals of a batch, decimated, into an xarray Dataset.

The recorder holds one (n_trials, n_samples) array per signal; the loop
writes a sample every ``record_interval_s``. A trial's samples after it
completed its mission or failed are NaN, so a record does not depend on
how long its batch kept running.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np
from numpy.typing import NDArray

__all__ = ["NEES_DOF", "NIS_DOF", "SIGNALS", "Recorder"]

#: Recorded signals: name -> (units, long name).
SIGNALS: dict[str, tuple[str, str]] = {
    "north_m": ("m", "north position in the scenario's NED frame"),
    "east_m": ("m", "east position in the scenario's NED frame"),
    "heading_deg": ("deg", "heading"),
    "surge_mps": ("m/s", "surge velocity over ground"),
    "sway_mps": ("m/s", "sway velocity over ground"),
    "yaw_rate_dps": ("deg/s", "yaw rate"),
    "xte_m": ("m", "cross-track error to the active leg, positive to starboard"),
    "heading_cmd_deg": ("deg", "desired heading from the guide"),
    "speed_cmd_mps": ("m/s", "desired surge speed from the guide"),
    "power_w": ("W", "propulsion shaft power"),
    "nav_north_m": ("m", "navigator's estimate of the north position (NaN with truth navigation)"),
    "nav_east_m": ("m", "navigator's estimate of the east position (NaN with truth navigation)"),
    "nav_err_m": ("m", "horizontal navigation error, estimate minus truth (NaN with truth navigation)"),
    "nees": ("1", "normalised estimation error squared of [north, east, heading, surge, sway] (5 dof)"),
    "nis": ("1", "normalised innovation squared of the latest GNSS fix (2 dof; NaN before the first)"),
    "fix_ok": ("1", "1 when the latest GNSS fix was accepted by the navigator, 0 when lost or rejected"),
    "nav_drms_m": ("m", "navigator's own horizontal accuracy, DRMS = sqrt(P_nn + P_ee) (NaN with truth navigation)"),
    "act_surge_n": ("N", "surge force from the actuators (without wind)"),
    "act_yaw_nm": ("N m", "yaw moment from the actuators (without wind)"),
}

#: Degrees of freedom of the recorded ``nees`` and ``nis`` signals.
NEES_DOF = 5
NIS_DOF = 2


class Recorder:
    """Decimated time series of a batch.

    Parameters
    ----------
    n_trials : int
    n_samples : int
        Number of recorded samples.
    signals : sequence of str, optional
        Which of :data:`SIGNALS` to keep (all by default).
    """

    def __init__(self, n_trials: int, n_samples: int, signals: Sequence[str] | None = None) -> None:
        names = list(SIGNALS) if signals is None else list(signals)
        unknown = [s for s in names if s not in SIGNALS]
        if unknown:
            from ..core.errors import ParameterError

            raise ParameterError("signals", unknown, f"must be among {list(SIGNALS)}")
        self.data = {name: np.full((n_trials, n_samples), np.nan, dtype=np.float32) for name in names}

    def record(self, index: int, keep: NDArray[np.bool_], values: Mapping[str, NDArray[np.float64]]) -> None:
        """Store sample ``index`` for the trials in ``keep`` (others stay NaN)."""
        for name, arr in self.data.items():
            arr[:, index] = np.where(keep, values[name], np.nan)

    def to_dataset(self, trials: Sequence[int], time_s: NDArray[np.float64], attrs: Mapping[str, Any]) -> Any:
        """The record as an ``xarray.Dataset`` with dims (trial, time), units and long names."""
        import xarray as xr

        data_vars = {
            name: (("trial", "time"), arr, {"units": SIGNALS[name][0], "long_name": SIGNALS[name][1]})
            for name, arr in self.data.items()
        }
        coords = {
            "trial": ("trial", np.asarray(trials, dtype=np.int64), {"long_name": "trial index in the campaign"}),
            "time": ("time", np.asarray(time_s, dtype=float), {"units": "s", "long_name": "time since start"}),
        }
        return xr.Dataset(data_vars, coords=coords, attrs=dict(attrs))
