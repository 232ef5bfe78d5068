"""Navigation: the estimation library the navigator blocks are built on.

Sensor-independent, batched over a leading trial axis, pure functions:

- :mod:`.kalman` — linear and extended Kalman filter steps (Joseph-form
  update, chi-square innovation gating, NIS);
- :mod:`.consistency` — NEES / NIS and their chi-square bounds for
  time- and ensemble-averaged tests;
- :mod:`.dead_reckoning` — planar dead reckoning from heading and body
  velocity or course and speed (trapezoidal or forward-Euler rule);
- :mod:`.particle` — a particle filter over trials x particles for
  terrain-aided horizontal position with systematic resampling;
- :mod:`.terrain_kernel` — the same filter compiled for one trial at a time
  (the navigator of a campaign calls it), with a counter-based generator.
"""

from . import terrain_kernel
from .consistency import ensemble_averaged_nees, nees, nees_bounds, nis, time_averaged_nees
from .dead_reckoning import (
    INTEGRATION_RULES,
    body_to_ned_velocity,
    course_speed_to_ned,
    dead_reckon,
    dead_reckon_body,
    dead_reckon_step,
)
from .kalman import KalmanUpdate, ekf_update, gate_threshold, kf_predict, kf_update
from .particle import (
    ParticleCloud,
    ParticleUpdate,
    effective_sample_size,
    normalise_log_weights,
    pf_estimate,
    pf_init,
    pf_predict,
    pf_update,
    systematic_counts,
    systematic_resample,
)

__all__ = [
    "INTEGRATION_RULES",
    "KalmanUpdate",
    "ParticleCloud",
    "ParticleUpdate",
    "body_to_ned_velocity",
    "course_speed_to_ned",
    "dead_reckon",
    "dead_reckon_body",
    "dead_reckon_step",
    "effective_sample_size",
    "ekf_update",
    "ensemble_averaged_nees",
    "gate_threshold",
    "kf_predict",
    "kf_update",
    "nees",
    "nees_bounds",
    "nis",
    "normalise_log_weights",
    "pf_estimate",
    "pf_init",
    "pf_predict",
    "pf_update",
    "systematic_counts",
    "systematic_resample",
    "terrain_kernel",
    "time_averaged_nees",
]
