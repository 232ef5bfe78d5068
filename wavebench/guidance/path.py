"""Waypoint paths per trial: legs, along/cross-track errors, circle-of-acceptance switching.

A path is a polyline of waypoints in the local NED frame (north, east in
metres). Leg ``k`` runs from waypoint ``k`` to waypoint ``k + 1``. Trials in a
batch may share one path or each have their own, padded to a common length
``W`` with a per-trial waypoint count.

Sign convention (Fossen 2021): the cross-track error ``e`` is positive when
the craft is to the RIGHT (starboard side) of the path direction, e.g. a
point 3 m east of a north-going leg has ``e = +3``. The along-track distance
``s`` is measured from the leg's first waypoint along the leg.

Examples
--------
>>> import numpy as np
>>> path = make_path([[0.0, 0.0], [100.0, 0.0]], n_trials=1)
>>> s, e = along_track_and_cross_track(path, np.array([0]), np.array([50.0]), np.array([3.0]))
>>> float(s[0]), float(e[0])
(50.0, 3.0)
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from wavebench.core.errors import ParameterError

__all__ = [
    "WaypointPath",
    "along_track_and_cross_track",
    "leg_endpoints",
    "make_path",
    "path_tangential_angle",
    "switch_legs",
]


@dataclass(frozen=True)
class WaypointPath:
    """Waypoints of one path per trial.

    Parameters
    ----------
    waypoints : ndarray of shape (n_trials, W, 2)
        North, east of each waypoint, m (NED). Entries beyond a trial's
        ``count`` are padding and never read.
    count : ndarray of shape (n_trials,)
        Number of waypoints of each trial's path (>= 2).
    """

    waypoints: np.ndarray
    count: np.ndarray

    @property
    def n_trials(self) -> int:
        """Number of trials N."""
        return int(self.waypoints.shape[0])

    @property
    def last_leg(self) -> np.ndarray:
        """Index of each trial's last leg, ``count - 2``, shape (n_trials,)."""
        return self.count - 2


def make_path(waypoints: ArrayLike, counts: ArrayLike | None = None, *, n_trials: int | None = None) -> WaypointPath:
    """Build a :class:`WaypointPath` from a shared or per-trial waypoint array.

    Parameters
    ----------
    waypoints : array_like of shape (W, 2) or (n_trials, W, 2)
        North, east waypoints, m. A (W, 2) array is one path shared by all
        ``n_trials`` trials.
    counts : array_like of shape (n_trials,), optional
        Per-trial number of valid waypoints (default: all W).
    n_trials : int, optional
        Number of trials when ``waypoints`` is shared (default 1).

    Returns
    -------
    WaypointPath

    Raises
    ------
    ParameterError
        ``waypoints`` with a wrong shape, non-finite used entries or fewer
        than 2 waypoints on a trial; ``counts`` out of range.
    """
    wp = np.asarray(waypoints, dtype=float)
    if wp.ndim == 2:
        wp = np.broadcast_to(wp, (1 if n_trials is None else int(n_trials), *wp.shape))
    if wp.ndim != 3 or wp.shape[-1] != 2:
        raise ParameterError("waypoints", wp, "an array of shape (W, 2) or (n_trials, W, 2)")
    n, w = wp.shape[0], wp.shape[1]
    if counts is None:
        cnt = np.full(n, w, dtype=np.int64)
    else:
        raw = np.asarray(counts)
        if raw.dtype.kind not in "iu" or raw.shape not in ((), (n,)):
            raise ParameterError("counts", raw, f"whole numbers, a scalar or shape ({n},)")
        cnt = np.broadcast_to(raw, (n,)).astype(np.int64)
        if np.any(cnt > w):
            raise ParameterError("counts", raw, f"whole numbers <= the padded length W = {w}")
    if np.any(cnt < 2):
        raise ParameterError("waypoints", wp, "at least 2 waypoints per trial (one leg)")
    used = np.arange(w)[None, :] < cnt[:, None]
    if not np.all(np.isfinite(wp[used])):
        raise ParameterError("waypoints", wp, "finite north, east values for every used waypoint")
    wp = np.array(wp)  # own, contiguous copy
    wp.setflags(write=False)
    cnt.setflags(write=False)
    return WaypointPath(waypoints=wp, count=cnt)


def leg_endpoints(path: WaypointPath, leg: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Start and end waypoint of each trial's active leg.

    Parameters
    ----------
    path : WaypointPath
    leg : ndarray of shape (n_trials,)
        Active leg index per trial.

    Returns
    -------
    start, end : ndarray of shape (n_trials, 2)
        North, east, m.
    """
    leg = np.asarray(leg, dtype=np.int64)
    rows = np.arange(path.n_trials)
    return path.waypoints[rows, leg], path.waypoints[rows, leg + 1]


def path_tangential_angle(path: WaypointPath, leg: np.ndarray) -> np.ndarray:
    """Path-tangential angle ``pi_p`` of each active leg, rad from north (clockwise).

    Returns
    -------
    ndarray of shape (n_trials,)
        ``atan2(east_{k+1} - east_k, north_{k+1} - north_k)``.
    """
    start, end = leg_endpoints(path, leg)
    d = end - start
    return np.arctan2(d[:, 1], d[:, 0])


def along_track_and_cross_track(
    path: WaypointPath, leg: np.ndarray, north: np.ndarray, east: np.ndarray
) -> tuple[np.ndarray, np.ndarray]:
    """Along-track distance ``s`` and cross-track error ``e`` to the active leg.

    Parameters
    ----------
    path : WaypointPath
    leg : ndarray of shape (n_trials,)
        Active leg index.
    north, east : ndarray of shape (n_trials,)
        Craft position, m (NED).

    Returns
    -------
    s : ndarray of shape (n_trials,)
        Along-track distance from the leg's first waypoint, m.
    e : ndarray of shape (n_trials,)
        Cross-track error, m, positive to starboard (right) of the path
        direction.

    Notes
    -----
    Rotating the position error into the path-tangential frame (Fossen 2021)::

        s =  (x - x_k) cos(pi_p) + (y - y_k) sin(pi_p)
        e = -(x - x_k) sin(pi_p) + (y - y_k) cos(pi_p)

    with ``x`` north, ``y`` east and ``pi_p`` the leg's angle from north.

    References
    ----------
    Fossen, T. I. (2021). Handbook of Marine Craft Hydrodynamics and Motion
    Control, 2nd ed., Wiley — chapter on path-following control (LOS guidance).
    """
    start, _ = leg_endpoints(path, leg)
    pi_p = path_tangential_angle(path, leg)
    dx = np.asarray(north, dtype=float) - start[:, 0]
    dy = np.asarray(east, dtype=float) - start[:, 1]
    c, s_ = np.cos(pi_p), np.sin(pi_p)
    return dx * c + dy * s_, -dx * s_ + dy * c


def switch_legs(
    path: WaypointPath,
    leg: np.ndarray,
    done: np.ndarray,
    north: np.ndarray,
    east: np.ndarray,
    radius_m: float | np.ndarray,
    *,
    on_pass: bool = False,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Circle-of-acceptance waypoint switching, optionally also on passing the waypoint.

    When the craft is within ``radius_m`` of the active leg's end waypoint,
    the next leg becomes active; if that waypoint is the path's last one the
    mission is complete (``done``, which stays set) and the leg is kept.
    At most one switch per call.

    Parameters
    ----------
    path : WaypointPath
    leg : ndarray of shape (n_trials,)
        Active leg index.
    done : ndarray of shape (n_trials,), bool
        Mission-completed flags so far.
    north, east : ndarray of shape (n_trials,)
        Craft position, m.
    radius_m : float or ndarray of shape (n_trials,)
        Radius of the circle of acceptance, m.
    on_pass : bool, optional
        Also switch once the craft has passed the end waypoint, i.e. its
        along-track distance reaches the leg's length (it crossed the line
        through the waypoint square to the leg). This catches a craft that
        misses the circle (set off by current or sea, or turning wide), which
        would otherwise follow the leg's extension for ever.

    Returns
    -------
    leg : ndarray of shape (n_trials,), int
        New active leg.
    done : ndarray of shape (n_trials,), bool
        Mission completed.
    switched : ndarray of shape (n_trials,), bool
        True where the active leg changed in this call.

    Notes
    -----
    Switch when ``(x_{k+1} - x)^2 + (y_{k+1} - y)^2 <= R^2`` (Fossen 2021,
    path-following chapter, circle of acceptance); with ``on_pass`` also when
    ``(p - p_{k+1}) . (p_{k+1} - p_k) >= 0`` (the craft is past the end
    waypoint along the leg; a common companion rule, no source).
    """
    leg = np.asarray(leg, dtype=np.int64)
    done = np.asarray(done, dtype=bool)
    start, end = leg_endpoints(path, leg)
    d2 = (end[:, 0] - np.asarray(north, dtype=float)) ** 2 + (end[:, 1] - np.asarray(east, dtype=float)) ** 2
    accepted = d2 <= np.asarray(radius_m, dtype=float) ** 2
    if on_pass:
        dn, de = end[:, 0] - start[:, 0], end[:, 1] - start[:, 1]
        # along-track distance past the end waypoint: (p - end) . (end - start) >= 0
        passed = (np.asarray(north, dtype=float) - end[:, 0]) * dn + (np.asarray(east, dtype=float) - end[:, 1]) * de
        accepted = accepted | (passed >= 0.0)
    accepted = accepted & ~done
    at_last = leg >= path.last_leg
    switched = accepted & ~at_last
    new_leg = np.where(switched, leg + 1, leg)
    new_done = done | (accepted & at_last)
    return new_leg, new_done, switched
