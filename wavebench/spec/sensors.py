"""Spec tables for sensors and what each navigator needs of them.

``[sensors.<name>]`` declares one sensor: its ``kind``, its sampling rate,
its latency, its error model (the kind's parameter table, e.g.
``[sensors.gps.gnss]``, defaults when absent), scheduled outage windows and
random dropouts (a two-state Markov chain per sample: ``p_drop`` from valid
to lost, ``p_recover`` back). One sensor per kind in this version.

An IMU takes a ``grade`` (one of :data:`~wavebench.sensors.imu.IMU_GRADES`,
default ``"industrial_mems"``) and an optional ``[sensors.<name>.imu]``
table whose keys replace the preset's figures
(:func:`~wavebench.sensors.imu.imu_grade`); only the keys written are kept,
so a spec reads back as it was written. An acoustic ranging sensor needs the
beacons it ranges to, ``beacons_ned_m = [[north, east, down], ...]`` [m].

A navigator names the kinds it needs (:data:`NAVIGATOR_NEEDS`); the spec is
refused at load time when one is missing.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

from ..core.errors import ParameterError
from ..core.params import Bounds, Params
from ..sensors.dvl import DvlParams
from ..sensors.gnss import GnssParams
from ..sensors.heading import CompassParams, GyrocompassParams
from ..sensors.imu import IMU_GRADES, ImuGrade, imu_grade
from ..sensors.ranging import AcousticRangeParams, AltimeterParams, DepthSensorParams
from .fields import SpecTable, intervals, like, number, params, table, text

__all__ = [
    "DEFAULT_IMU_GRADE",
    "NAVIGATORS",
    "NAVIGATOR_NEEDS",
    "SENSOR_KINDS",
    "ImuOverridesSpec",
    "SensorSpec",
    "check_navigator_needs",
]

#: Sensor kinds a spec can declare.
SENSOR_KINDS = ("gnss", "compass", "gyrocompass", "imu", "dvl", "depth", "altimeter", "acoustic")
#: Navigators a spec can choose.
NAVIGATORS = ("truth", "ekf", "dead_reckoning", "terrain")
#: For each navigator, groups of sensor kinds of which at least one must be present.
NAVIGATOR_NEEDS: dict[str, tuple[tuple[str, ...], ...]] = {
    "truth": (),
    "ekf": (("imu",), ("compass", "gyrocompass"), ("gnss", "acoustic")),
    "dead_reckoning": (("imu",), ("compass", "gyrocompass"), ("dvl",)),
    "terrain": (("imu",), ("compass", "gyrocompass"), ("dvl",), ("altimeter",), ("depth",)),
}
#: IMU grade used when ``grade`` is absent (a MEMS unit of the class small vehicles carry).
DEFAULT_IMU_GRADE = "industrial_mems"

#: Error-model class of each kind with a Params table (the table is named as the kind).
_KIND_PARAMS: dict[str, type[Params]] = {
    "gnss": GnssParams,
    "compass": CompassParams,
    "gyrocompass": GyrocompassParams,
    "dvl": DvlParams,
    "depth": DepthSensorParams,
    "altimeter": AltimeterParams,
    "acoustic": AcousticRangeParams,
}
_BEACON_ALLOWED = "must be a list of at least one [north_m, east_m, down_m] point of finite numbers"


def _imu_overrides_class() -> type:
    """A spec table with one optional field per :class:`ImuGrade` figure (its bounds, unit and doc)."""
    names = [f.name for f in dataclasses.fields(ImuGrade) if "bounds" in f.metadata]
    cls = dataclasses.make_dataclass(
        "ImuOverridesSpec",
        [(name, Any, like(ImuGrade, name, None, dist=False)) for name in names],
        bases=(SpecTable,),
        frozen=True,
        kw_only=True,
    )
    cls.__module__ = __name__
    cls.__doc__ = (
        "``[sensors.<name>.imu]``: figures that replace those of the IMU's ``grade`` preset.\n\n"
        "Every key is optional and is a field of :class:`~wavebench.sensors.imu.ImuGrade` (same unit and "
        "bounds); keys left out keep the preset's value. A single number each (no distribution)."
    )
    return cls


#: ``[sensors.<name>.imu]``: optional replacements of the grade preset's figures.
ImuOverridesSpec = _imu_overrides_class()


def _check_beacons(value: Any) -> tuple[tuple[float, float, float], ...]:
    if isinstance(value, (str, bytes, Mapping)) or not isinstance(value, (list, tuple)) or len(value) < 1:
        raise ParameterError("beacons_ned_m", value, _BEACON_ALLOWED)
    out = []
    for i, p in enumerate(value):
        ok = isinstance(p, (list, tuple)) and len(p) == 3
        ok = ok and all(isinstance(x, (int, float)) and not isinstance(x, bool) and math.isfinite(x) for x in p)
        if not ok:
            raise ParameterError(
                f"beacons_ned_m[{i}]", p, "must be a [north_m, east_m, down_m] point of finite numbers"
            )
        out.append((float(p[0]), float(p[1]), float(p[2])))
    return tuple(out)


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
    latency_s : float
        Delay from the instant measured to the reading's arrival at the
        navigator [s], >= 0 (default 0); a whole number of control periods
        (checked against the spec).
    grade : str, optional
        IMU only: one of :data:`~wavebench.sensors.imu.IMU_GRADES`
        (default :data:`DEFAULT_IMU_GRADE`).
    beacons_ned_m : list of [north_m, east_m, down_m], optional
        Acoustic only (and required there): positions of the fixed beacons
        ranged to, in the scenario's NED frame [m].
    gnss, compass, gyrocompass, dvl, depth, altimeter, acoustic : optional
        The kind's error model (:class:`~wavebench.sensors.gnss.GnssParams`,
        :class:`~wavebench.sensors.heading.CompassParams`,
        :class:`~wavebench.sensors.heading.GyrocompassParams`,
        :class:`~wavebench.sensors.dvl.DvlParams`,
        :class:`~wavebench.sensors.ranging.DepthSensorParams`,
        :class:`~wavebench.sensors.ranging.AltimeterParams`,
        :class:`~wavebench.sensors.ranging.AcousticRangeParams`); only the
        table of the sensor's own kind may be given; defaults when absent.
    imu : ImuOverridesSpec, optional
        IMU only: figures replacing those of the ``grade`` preset.
    outages_s : list of [start_s, end_s]
        Scheduled outage windows (e.g. under a bridge).
    p_drop, p_recover : float
        Per-sample probabilities of losing and regaining the sensor (two-state
        Markov chain); ``p_drop = 0`` (default) for none.

    Notes
    -----
    :attr:`model` is the error model of every kind, for an IMU the
    :class:`~wavebench.sensors.imu.ImuGrade` of ``grade`` with the
    ``[sensors.<name>.imu]`` replacements applied.
    """

    kind: str = text(choices=SENSOR_KINDS, doc="sensor kind")
    rate_hz: float = number(bounds=Bounds(gt=0.0), unit="Hz", doc="sampling rate")
    latency_s: float = number(0.0, bounds=Bounds(ge=0.0), unit="s", doc="delay of each reading")
    grade: str | None = text(None, choices=tuple(IMU_GRADES), doc="IMU grade preset")
    beacons_ned_m: tuple | None = dataclasses.field(
        default=None, metadata={"doc": "acoustic beacons [north_m, east_m, down_m]"}
    )
    gnss: GnssParams | None = params(GnssParams, None, doc="GNSS error model")
    compass: CompassParams | None = params(CompassParams, None, doc="compass error model")
    gyrocompass: GyrocompassParams | None = params(GyrocompassParams, None, doc="gyrocompass error model")
    imu: Any = table(ImuOverridesSpec, None, doc="replacements of the IMU grade's figures")
    dvl: DvlParams | None = params(DvlParams, None, doc="DVL error model")
    depth: DepthSensorParams | None = params(DepthSensorParams, None, doc="depth sensor error model")
    altimeter: AltimeterParams | None = params(AltimeterParams, None, doc="altimeter error model")
    acoustic: AcousticRangeParams | None = params(AcousticRangeParams, None, doc="acoustic ranging error model")
    outages_s: tuple = intervals(doc="scheduled outage windows")
    p_drop: float = number(0.0, bounds=Bounds(ge=0.0, le=1.0), doc="per-sample probability of a dropout")
    p_recover: float = number(1.0, bounds=Bounds(gt=0.0, le=1.0), doc="per-sample probability of recovering")

    def _check(self) -> None:
        for other in SENSOR_KINDS:
            if other != self.kind and getattr(self, other) is not None:
                raise ParameterError(other, "(given)", f"is the error model of kind '{other}', not '{self.kind}'")
        if self.kind == "imu":
            if self.grade is None:
                object.__setattr__(self, "grade", DEFAULT_IMU_GRADE)
            try:
                self.model  # noqa: B018 -- builds the ImuGrade once to run its own checks
            except ParameterError as exc:
                raise exc.with_prefix("imu") from None
        else:
            if self.grade is not None:
                raise ParameterError("grade", self.grade, f"is only for kind 'imu', not '{self.kind}'")
            if getattr(self, self.kind) is None:
                object.__setattr__(self, self.kind, _KIND_PARAMS[self.kind]())
        if self.kind == "acoustic":
            if self.beacons_ned_m is None:
                raise ParameterError("beacons_ned_m", None,
                                     "is required for kind 'acoustic' (a list of at least one [north_m, east_m, "
                                     "down_m] point)")  # fmt: skip
            object.__setattr__(self, "beacons_ned_m", _check_beacons(self.beacons_ned_m))
        elif self.beacons_ned_m is not None:
            raise ParameterError("beacons_ned_m", self.beacons_ned_m, f"is only for kind 'acoustic', not '{self.kind}'")

    @property
    def imu_overrides(self) -> dict[str, float]:
        """The ``[sensors.<name>.imu]`` figures written in the spec (empty when none)."""
        if self.imu is None:
            return {}
        given = ((f.name, getattr(self.imu, f.name)) for f in dataclasses.fields(self.imu))
        return {name: value for name, value in given if value is not None}

    @property
    def model(self) -> Params:
        """The sensor's error model (for an IMU, its grade with the replacements applied)."""
        if self.kind == "imu":
            return imu_grade(self.grade, **self.imu_overrides)
        return getattr(self, self.kind)


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
