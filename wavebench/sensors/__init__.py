"""Sensors: noise machinery, IMU and Allan deviation (batched over trials, multi-rate).

Noise for a whole run is drawn in blocks per trial from that trial's own
stream (:class:`wavebench.core.streams.TrialStreams`), one purpose name per
kind of draw, so trial ``i`` is bit-identical alone or in any batch.
"""

from .allan import allan_deviation, allan_taus, gauss_markov_allan_variance
from .imu import IMU_GRADES, ImuGrade, ImuMeasurement, imu_grade, imu_measure
from .noise import (
    SensorTiming,
    delay,
    density_to_sd,
    gauss_markov_sequence,
    latency_steps,
    markov_dropout_mask,
    outage_mask,
    outlier_sequence,
    quantise,
    random_constant,
    random_walk_sequence,
    sample_steps,
    white_sequence,
)

__all__ = [
    "IMU_GRADES",
    "ImuGrade",
    "ImuMeasurement",
    "SensorTiming",
    "allan_deviation",
    "allan_taus",
    "delay",
    "density_to_sd",
    "gauss_markov_allan_variance",
    "gauss_markov_sequence",
    "imu_grade",
    "imu_measure",
    "latency_steps",
    "markov_dropout_mask",
    "outage_mask",
    "outlier_sequence",
    "quantise",
    "random_constant",
    "random_walk_sequence",
    "sample_steps",
    "white_sequence",
]
