"""Sensors: noise machinery, IMU, Allan deviation and the aiding sensors (batched over trials, multi-rate).

Noise for a whole run is drawn in blocks per trial from that trial's own
stream (:class:`wavebench.core.streams.TrialStreams`), one purpose name per
kind of draw, so trial ``i`` is bit-identical alone or in any batch.
"""

from .allan import allan_deviation, allan_taus, gauss_markov_allan_variance
from .dvl import DvlParams, dvl_altitude_m, dvl_measurement, dvl_velocity_body
from .gnss import GnssParams, gnss_fix, gnss_geodetic, gnss_position_ned
from .heading import (
    CompassParams,
    GyrocompassParams,
    compass_heading,
    gyrocompass_error_bound_deg,
    gyrocompass_heading,
)
from .imu import IMU_GRADES, ImuGrade, ImuMeasurement, imu_errors, imu_grade, imu_measure
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
from .ranging import (
    AcousticRangeParams,
    AltimeterParams,
    DepthSensorParams,
    acoustic_range,
    altimeter_range,
    depth_sensor,
    mackenzie_sound_speed,
    slant_range_m,
    unesco_sound_speed,
)

__all__ = [
    "IMU_GRADES",
    "AcousticRangeParams",
    "AltimeterParams",
    "CompassParams",
    "DepthSensorParams",
    "DvlParams",
    "GnssParams",
    "GyrocompassParams",
    "ImuGrade",
    "ImuMeasurement",
    "SensorTiming",
    "acoustic_range",
    "allan_deviation",
    "allan_taus",
    "altimeter_range",
    "compass_heading",
    "delay",
    "density_to_sd",
    "depth_sensor",
    "dvl_altitude_m",
    "dvl_measurement",
    "dvl_velocity_body",
    "gauss_markov_allan_variance",
    "gauss_markov_sequence",
    "gnss_fix",
    "gnss_geodetic",
    "gnss_position_ned",
    "gyrocompass_error_bound_deg",
    "gyrocompass_heading",
    "imu_errors",
    "imu_grade",
    "imu_measure",
    "latency_steps",
    "mackenzie_sound_speed",
    "markov_dropout_mask",
    "outage_mask",
    "outlier_sequence",
    "quantise",
    "random_constant",
    "random_walk_sequence",
    "sample_steps",
    "slant_range_m",
    "unesco_sound_speed",
    "white_sequence",
]
