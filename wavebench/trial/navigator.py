"""The navigator role: sensors sampled from the true motion, and an EKF that fuses them.

:class:`SensorSuite` turns the spec's ``[sensors.<name>]`` into each trial's
measurements, sampled every whole number of control periods from the true
state, with noise drawn per trial for the whole run (one stream purpose per
sensor), scheduled outages and Markov dropouts.

:class:`EkfNavigator` is the ``navigator = "ekf"`` of the spec: an extended
Kalman filter on the planar state ``x = [north, east, psi, u, v, r]`` with
body velocities and yaw rate as random walks, fed by GNSS antenna positions
(lever arm in the measurement model) and compass headings (angle residuals
wrapped). It runs in the numpy engine; the guide and pilot see its estimate.

Model choices (ours, no source): process noise densities
``q_uv = 0.3 m/s/sqrt(s)`` on surge and sway, ``q_r = 0.05 rad/s/sqrt(s)`` on
yaw rate; the filter starts at the true initial state with standard
deviations 5 m, 5 m, 5 deg, 0.5 m/s, 0.5 m/s, 0.1 rad/s. Measurements are
not gated: with a gate, a filter that drifted (after an outage, or with too
little process noise for the craft's turns) can reject every later fix and
never recover. Without a speed sensor the velocity is carried only by its
random walk, so position error grows quickly in a GNSS outage. The compass
bias and deviation are not estimated: a biased compass shows as an
inconsistent filter.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from ..core.frames import wrap_pi
from ..core.streams import TrialStreams
from ..navigation.kalman import ekf_update, kf_predict
from ..sensors.gnss import gnss_position_ned
from ..sensors.heading import compass_heading
from ..sensors.noise import markov_dropout_mask, outage_mask, white_sequence
from ..spec.schema import Spec
from .signals import NavState

__all__ = ["EkfNavigator", "SensorSuite"]

FloatArray = NDArray[np.float64]

#: Process noise densities of the EKF: surge/sway [m/s/sqrt(s)], yaw rate [rad/s/sqrt(s)] (our choice).
Q_UV = 0.3
Q_R = 0.05
#: Initial standard deviations of the EKF state (our choice).
P0_SD = (5.0, 5.0, math.radians(5.0), 0.5, 0.5, 0.1)
#: Innovation gate probability (None: no gating; see the module notes).
GATE = None


@dataclass(frozen=True)
class _Sensor:
    name: str
    kind: str
    every: int
    noise: FloatArray
    valid: NDArray[np.bool_]
    model: object


class SensorSuite:
    """The spec's sensors for a batch: sampling schedule, pre-drawn noise and validity.

    Parameters
    ----------
    spec : Spec
    trials : TrialStreams
        The batch's streams (noise purpose ``"sensor.<name>.noise"``,
        dropouts ``"sensor.<name>.dropout"``).
    """

    def __init__(self, spec: Spec, trials: TrialStreams) -> None:
        k = spec.control_steps
        period = k * spec.scenario.dt_s
        n_ticks = spec.scenario.n_steps // k
        self.sensors: list[_Sensor] = []
        for name, s in spec.sensors:
            every = round(1.0 / (s.rate_hz * period))
            n_samples = -(-n_ticks // every)
            times = np.arange(n_samples) * every * period
            if s.kind == "gnss":
                noise = white_sequence(trials, f"sensor.{name}.noise", n_samples, s.gnss.horizontal_sd_m, n_axes=2)
            else:
                noise = white_sequence(trials, f"sensor.{name}.noise", n_samples, math.radians(s.compass.noise_sd_deg))
            valid = np.broadcast_to(outage_mask(times, s.outages_s) if s.outages_s else True,
                                    (trials.n_trials, n_samples)).copy()  # fmt: skip
            if s.p_drop > 0.0:
                valid &= markov_dropout_mask(trials, f"sensor.{name}.dropout", n_samples, s.p_drop, s.p_recover)
            self.sensors.append(_Sensor(name, s.kind, every, noise, valid, s.model))

    def due(self, tick: int) -> list[tuple[_Sensor, int]]:
        """Sensors that sample at control period ``tick``, with their sample index."""
        return [(s, tick // s.every) for s in self.sensors if tick % s.every == 0]


class EkfNavigator:
    """Extended Kalman filter on GNSS and compass (see the module notes).

    Parameters
    ----------
    suite : SensorSuite
    eta0, nu0 : ndarray of shape (n_trials, 3)
        True initial pose and body velocity (the filter's initial mean).
    """

    needs = ("gnss", "compass")

    def __init__(self, suite: SensorSuite, eta0: FloatArray, nu0: FloatArray) -> None:
        self.suite = suite
        n = eta0.shape[0]
        self.x = np.concatenate([eta0, nu0], axis=1).astype(float)
        self.P = np.tile(np.diag(np.square(P0_SD)), (n, 1, 1))

    def update(self, tick: int, eta: FloatArray) -> None:
        """Fuse the measurements due at control period ``tick`` (sampled from the true pose ``eta``)."""
        for sensor, j in self.suite.due(tick):
            valid = sensor.valid[:, j]
            if sensor.kind == "gnss":
                lever = np.asarray(sensor.model.lever_arm_m, dtype=float)
                z = gnss_position_ned(eta[:, 0], eta[:, 1], eta[:, 2], lever)[:, :2] + sensor.noise[:, j]
                lx, ly = lever[..., 0], lever[..., 1]
                sd = np.asarray(sensor.model.horizontal_sd_m, dtype=float)
                r = np.eye(2) * (sd**2 if sd.ndim == 0 else (sd**2)[:, None, None])

                def h(x, lx=lx, ly=ly):
                    c, s = np.cos(x[:, 2]), np.sin(x[:, 2])
                    return np.stack([x[:, 0] + c * lx - s * ly, x[:, 1] + s * lx + c * ly], axis=1)

                def jac(x, lx=lx, ly=ly):
                    c, s = np.cos(x[:, 2]), np.sin(x[:, 2])
                    out = np.zeros((x.shape[0], 2, 6))
                    out[:, 0, 0] = 1.0
                    out[:, 1, 1] = 1.0
                    out[:, 0, 2] = -s * lx - c * ly
                    out[:, 1, 2] = c * lx - s * ly
                    return out

                up = ekf_update(self.x, self.P, np.where(valid[:, None], z, np.nan), h, jac, r, valid=valid, gate=GATE)
            else:
                z = compass_heading(eta[:, 2], sensor.model, noise_rad=sensor.noise[:, j])[:, None]
                sd = math.radians(float(np.max(sensor.model.noise_sd_deg)))
                up = ekf_update(self.x, self.P, np.where(valid[:, None], z, np.nan), lambda x: x[:, 2:3],
                                lambda x: _HEADING_JAC, np.array([[sd * sd]]), valid=valid, gate=GATE,
                                angle_residuals=(0,))  # fmt: skip
            self.x, self.P = np.array(up.x), np.array(up.P)
            self.x[:, 2] = wrap_pi(self.x[:, 2])

    def predict(self, dt: float) -> None:
        """Propagate the estimate over one control period of ``dt`` seconds."""
        x = self.x
        c, s = np.cos(x[:, 2]), np.sin(x[:, 2])
        u, v, r = x[:, 3], x[:, 4], x[:, 5]
        n = x.shape[0]
        f = np.tile(np.eye(6), (n, 1, 1))
        f[:, 0, 2] = -dt * (u * s + v * c)
        f[:, 0, 3] = dt * c
        f[:, 0, 4] = -dt * s
        f[:, 1, 2] = dt * (u * c - v * s)
        f[:, 1, 3] = dt * s
        f[:, 1, 4] = dt * c
        f[:, 2, 5] = dt
        q = np.diag([0.0, 0.0, 0.0, Q_UV**2 * dt, Q_UV**2 * dt, Q_R**2 * dt])
        _, self.P = kf_predict(x, self.P, f, q)
        new = x.copy()
        new[:, 0] += dt * (u * c - v * s)
        new[:, 1] += dt * (u * s + v * c)
        new[:, 2] = wrap_pi(x[:, 2] + dt * r)
        self.x = new

    def nav_state(self, t_s: float) -> NavState:
        """The estimate as the navigation solution the guide and pilot see."""
        x = self.x
        c, s = np.cos(x[:, 2]), np.sin(x[:, 2])
        vn, ve = x[:, 3] * c - x[:, 4] * s, x[:, 3] * s + x[:, 4] * c
        return NavState(t_s=t_s, north_m=x[:, 0].copy(), east_m=x[:, 1].copy(), heading_rad=x[:, 2].copy(),
                        surge_mps=x[:, 3].copy(), sway_mps=x[:, 4].copy(), yaw_rate_rad_s=x[:, 5].copy(),
                        course_rad=np.arctan2(ve, vn), sog_mps=np.hypot(vn, ve))  # fmt: skip


_HEADING_JAC = np.array([[0.0, 0.0, 1.0, 0.0, 0.0, 0.0]])
