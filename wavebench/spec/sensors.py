"""Spec tables for sensors and what each navigator needs of them.

``[sensors.<name>]`` declares one sensor: its ``kind``, its sampling rate,
its error model (the kind's parameter table, e.g. ``[sensors.gps.gnss]``,
defaults when absent), scheduled outage windows and random dropouts (a
two-state Markov chain per sample: ``p_drop`` from valid to lost,
``p_recover`` back). A navigator names the kinds it needs
(:data:`NAVIGATOR_NEEDS`); the spec is refused at load time when one is
missing.
"""

from __future__ import annotations

from dataclasses import dataclass

from ..core.errors import ParameterError
from ..core.params import Bounds
from ..sensors.gnss import GnssParams
from ..sensors.heading import CompassParams
from .fields import SpecTable, intervals, number, params, text

__all__ = ["NAVIGATORS", "NAVIGATOR_NEEDS", "SENSOR_KINDS", "SensorSpec", "check_navigator_needs"]

#: Sensor kinds a spec can declare.
SENSOR_KINDS = ("gnss", "compass")
#: Navigators a spec can choose.
NAVIGATORS = ("truth", "ekf")
#: For each navigator, groups of sensor kinds of which at least one must be present.
NAVIGATOR_NEEDS: dict[str, tuple[tuple[str, ...], ...]] = {
    "truth": (),
    "ekf": (("gnss",), ("compass",)),
}
_KIND_TABLE = {"gnss": "gnss", "compass": "compass"}


@dataclass(frozen=True, kw_only=True)
class SensorSpec(SpecTable):
    """``[sensors.<name>]``: one sensor.

    Parameters
    ----------
    kind : str
        One of :data:`SENSOR_KINDS`.
    rate_hz : float
        Samples per second; its period must be a whole number of control
        periods (checked against the spec).
    gnss, compass : optional
        The kind's error model (:class:`~wavebench.sensors.gnss.GnssParams`,
        :class:`~wavebench.sensors.heading.CompassParams`); only the table
        of the sensor's own kind may be given; defaults when absent.
    outages_s : list of [start_s, end_s]
        Scheduled outage windows (e.g. under a bridge).
    p_drop, p_recover : float
        Per-sample probabilities of losing and regaining the sensor (two-state
        Markov chain); ``p_drop = 0`` (default) for none.
    """

    kind: str = text(choices=SENSOR_KINDS, doc="sensor kind")
    rate_hz: float = number(bounds=Bounds(gt=0.0), unit="Hz", doc="sampling rate")
    gnss: GnssParams | None = params(GnssParams, None, doc="GNSS error model")
    compass: CompassParams | None = params(CompassParams, None, doc="compass error model")
    outages_s: tuple = intervals(doc="scheduled outage windows")
    p_drop: float = number(0.0, bounds=Bounds(ge=0.0, le=1.0), doc="per-sample probability of a dropout")
    p_recover: float = number(1.0, bounds=Bounds(gt=0.0, le=1.0), doc="per-sample probability of recovering")

    def _check(self) -> None:
        own = _KIND_TABLE[self.kind]
        for other in set(_KIND_TABLE.values()) - {own}:
            if getattr(self, other) is not None:
                raise ParameterError(other, "(given)", f"is the error model of kind '{other}', not '{self.kind}'")
        if getattr(self, own) is None:
            object.__setattr__(self, own, GnssParams() if own == "gnss" else CompassParams())

    @property
    def model(self) -> GnssParams | CompassParams:
        """The sensor's error model."""
        return getattr(self, _KIND_TABLE[self.kind])


def check_navigator_needs(navigator: str, sensors: tuple) -> None:
    """Refuse a navigator whose sensors are absent (the wiring check of the navigator role).

    Raises
    ------
    ParameterError
        Naming ``stack.navigator``, the kinds it needs and the sensors present.
    """
    kinds = {s.kind for _, s in sensors}
    for group in NAVIGATOR_NEEDS[navigator]:
        if not kinds.intersection(group):
            present = sorted(f"{name} ({s.kind})" for name, s in sensors) or ["none"]
            raise ParameterError(
                "stack.navigator", navigator,
                f"needs a sensor of kind {' or '.join(repr(g) for g in group)} "
                f"([sensors.<name>] kind = \"{group[0]}\"); sensors present: {', '.join(present)}",
            )  # fmt: skip
