"""Tests for wavebench.guidance: paths, LOS / ILOS, survey patterns."""

from __future__ import annotations

import numpy as np
import pytest
from scipy.integrate import solve_ivp
from scipy.optimize import brentq

from wavebench.core.errors import ParameterError
from wavebench.guidance import (
    LosParams,
    SurveyParams,
    along_track_and_cross_track,
    course_to_heading,
    los_init,
    los_step,
    make_path,
    survey_lines,
    survey_waypoints,
)

# ---------------------------------------------------------------- path geometry


def test_cross_track_sign_north_leg():
    # Hand geometry with Fossen (2021) path-following chapter convention:
    # e = -(x - x_k) sin(pi_p) + (y - y_k) cos(pi_p), + to starboard.
    # A north-going leg; a point 3 m east (starboard) has e = +3, 3 m west e = -3.
    path = make_path([[0.0, 0.0], [100.0, 0.0]], n_trials=2)
    s, e = along_track_and_cross_track(path, np.array([0, 0]), np.array([50.0, 20.0]), np.array([3.0, -3.0]))
    np.testing.assert_allclose(s, [50.0, 20.0])
    np.testing.assert_allclose(e, [3.0, -3.0])


def test_cross_track_diagonal_and_west_legs():
    # Hand geometry: distance from (n, e) = (0, 2) to the line n = e is |0 - 2| / sqrt(2)
    # = sqrt(2); the point is east of a north-east-going leg, i.e. to starboard -> +sqrt(2).
    # Along track: projection on (1, 1)/sqrt(2) is 2/sqrt(2) = sqrt(2).
    # West-going leg (pi_p = -90 deg): starboard is north, so a point 4 m north has e = +4.
    wps = np.array([[[0.0, 0.0], [10.0, 10.0]], [[0.0, 0.0], [0.0, -10.0]]])
    path = make_path(wps)
    s, e = along_track_and_cross_track(path, np.array([0, 0]), np.array([0.0, 4.0]), np.array([2.0, -7.0]))
    np.testing.assert_allclose(e, [np.sqrt(2.0), 4.0], atol=1e-12)
    np.testing.assert_allclose(s, [np.sqrt(2.0), 7.0], atol=1e-12)


def test_waypoint_switching_at_acceptance_radius():
    # Circle of acceptance (Fossen 2021, path-following chapter): switch when the
    # distance to the active leg's end waypoint is <= R. Hand geometry, R = 5 m.
    # Trial 0 has 3 waypoints, trial 1 only 2 (padded), so its only leg is the last.
    wps = np.array(
        [
            [[0.0, 0.0], [100.0, 0.0], [100.0, 100.0]],
            [[0.0, 0.0], [100.0, 0.0], [np.nan, np.nan]],
        ]
    )
    path = make_path(wps, counts=[3, 2])
    params = LosParams(lookahead_m=10.0, acceptance_radius_m=5.0)
    st = los_init(path)
    # 5.5 m short of waypoint 1: outside the circle, nobody switches.
    st, _, _, done = los_step(params, path, st, np.array([94.5, 94.5]), np.array([0.0, 0.0]), 0.1)
    assert st.leg.tolist() == [0, 0] and done.tolist() == [False, False]
    # 4 m short: inside. Trial 0 goes to leg 1; trial 1 has accepted its last waypoint.
    st, chi_d, e, done = los_step(params, path, st, np.array([96.0, 96.0]), np.array([0.0, 0.0]), 0.1)
    assert st.leg.tolist() == [1, 0]
    assert done.tolist() == [False, True]
    # New leg of trial 0 runs east (pi_p = +90 deg); the craft is 4 m south of its start,
    # i.e. to starboard of an east-going leg: e = +4 (hand geometry).
    assert e[0] == pytest.approx(4.0)
    # Last waypoint of trial 0, approached to 3 m: done; done stays set afterwards.
    st, _, _, done = los_step(params, path, st, np.array([100.0, 0.0]), np.array([97.0, 0.0]), 0.1)
    assert done.tolist() == [True, True] and st.leg.tolist() == [1, 0]
    st, _, _, done = los_step(params, path, st, np.array([0.0, 0.0]), np.array([0.0, 0.0]), 0.1)
    assert done.tolist() == [True, True]


def test_switching_on_passing_a_missed_waypoint():
    # A craft that misses the circle of acceptance (passes waypoint 1 at 12 m abeam, R = 5 m):
    # with circle-only switching it keeps the first leg; with on_pass it switches once it is past
    # the line through the waypoint square to the leg (hand geometry: leg north, waypoint at 100 m).
    wps = np.array([[0.0, 0.0], [100.0, 0.0], [100.0, 100.0]])
    path = make_path(wps, n_trials=2)
    circle = LosParams(lookahead_m=10.0, acceptance_radius_m=5.0)
    passing = LosParams(lookahead_m=10.0, acceptance_radius_m=5.0, switch_on_pass=True)
    north, east = np.array([99.9, 100.1]), np.array([-12.0, -12.0])
    st, *_ = los_step(circle, path, los_init(path), north, east, 0.1)
    assert st.leg.tolist() == [0, 0]
    st, *_ = los_step(passing, path, los_init(path), north, east, 0.1)
    assert st.leg.tolist() == [0, 1]
    # passing the last waypoint completes the mission
    path2 = make_path(wps[:2], n_trials=1)
    st, _, _, done = los_step(passing, path2, los_init(path2), np.array([100.5]), np.array([30.0]), 0.1)
    assert done.tolist() == [True]


# ---------------------------------------------------------------- LOS / ILOS kinematics


def _simulate(params, path, north, east, speed, current_east, t_end, dt):
    """Kinematic particle: course over water = chi_d, plus a constant east drift (RK2)."""
    st = los_init(path)
    n_steps = int(round(t_end / dt))
    es = []
    for _ in range(n_steps):
        st_new, chi, e, _ = los_step(params, path, st, north, east, dt)
        es.append(e)
        # midpoint step of the position with the command held over the step
        _, chi_mid, _, _ = los_step(
            params,
            path,
            st,
            north + 0.5 * dt * speed * np.cos(chi),
            east + 0.5 * dt * (speed * np.sin(chi) + current_east),
            dt,
        )
        north = north + dt * speed * np.cos(chi_mid)
        east = east + dt * (speed * np.sin(chi_mid) + current_east)
        st = st_new
    _, _, e, _ = los_step(params, path, st, north, east, dt)
    es.append(e)
    return np.array(es), st


def test_los_converges_like_closed_form_kinematics():
    # Fossen (2021), path-following chapter: with course = chi_d on a straight path,
    # e_dot = U sin(chi - pi_p) = -U e / sqrt(e^2 + Delta^2); integrated here by
    # scipy.integrate.solve_ivp and compared with the batched guide + particle.
    speed, delta, dt, t_end = 2.0, 10.0, 0.05, 60.0
    e0 = np.array([25.0, -8.0, 3.0])
    path = make_path([[0.0, 0.0], [1.0e5, 0.0]], n_trials=3)
    params = LosParams(lookahead_m=delta, acceptance_radius_m=5.0)
    es, _ = _simulate(params, path, np.zeros(3), e0.copy(), speed, 0.0, t_end, dt)
    t = np.arange(es.shape[0]) * dt
    ref = solve_ivp(
        lambda _t, y: -speed * y / np.sqrt(y**2 + delta**2),
        (0.0, t[-1]),
        e0,
        t_eval=t,
        rtol=1e-10,
        atol=1e-10,
    )
    np.testing.assert_allclose(es, ref.y.T, atol=2e-3)
    # Near the path the decay is exponential with rate U / Delta (linearised law).
    k = int(40.0 / dt)
    rate = -np.log(np.abs(es[k + 100] / es[k])) / (100 * dt)
    np.testing.assert_allclose(rate, speed / delta, rtol=1e-2)


def test_plain_los_leaves_offset_ilos_removes_it():
    # Constant cross current V_c (east) on a north-going path, particle speed U through
    # water with course chi_d. Plain LOS equilibrium: U sin(-atan(e/Delta)) + V_c = 0,
    # solved with scipy.optimize.brentq; closed form e_ss = Delta (V_c/U) / sqrt(1 - (V_c/U)^2).
    # ILOS (Børhaug, Pavlov & Pettersen 2008) drives e to 0, with sigma e_int settling where
    # the course crabs against the drift: sigma e_int = Delta tan(asin(V_c / U)).
    speed, vc, delta, dt = 2.0, 0.5, 10.0, 0.05
    path = make_path([[0.0, 0.0], [1.0e5, 0.0]], n_trials=1)
    e_ss = brentq(lambda e: speed * np.sin(-np.arctan(e / delta)) + vc, -50.0, 50.0)
    assert e_ss == pytest.approx(delta * (vc / speed) / np.sqrt(1.0 - (vc / speed) ** 2), rel=1e-9)

    los = LosParams(lookahead_m=delta, acceptance_radius_m=5.0)
    es, _ = _simulate(los, path, np.zeros(1), np.zeros(1), speed, vc, 200.0, dt)
    assert es[-1, 0] == pytest.approx(e_ss, rel=1e-3)
    assert abs(es[-1, 0]) > 2.0  # a real offset, not numerical noise

    sigma = 1.0
    ilos = LosParams(lookahead_m=delta, integral_gain=sigma, acceptance_radius_m=5.0)
    es_i, st = _simulate(ilos, path, np.zeros(1), np.zeros(1), speed, vc, 400.0, dt)
    assert abs(es_i[-1, 0]) < 0.02
    assert sigma * st.e_int[0] == pytest.approx(delta * np.tan(np.arcsin(vc / speed)), rel=1e-2)


def test_course_to_heading_crab_angle():
    # chi = psi + beta, beta = atan2(v, u) (Fossen 2021, kinematics of course and sideslip):
    # u = v = 1 m/s gives beta = 45 deg, so to make good course 0 the bow points -45 deg.
    psi = course_to_heading(np.array([0.0, np.pi]), np.array([1.0, 2.0]), np.array([1.0, 0.0]))
    np.testing.assert_allclose(psi, [-np.pi / 4, -np.pi])


def test_batch_slicing_trial_alone_equals_trial_in_batch():
    # Determinism property of the block contract (ARCHITECTURE.md): trial i alone == trial i in a batch.
    rng = np.random.default_rng(7)
    n = 5
    wps = rng.uniform(-200.0, 200.0, size=(n, 4, 2))
    counts = np.array([2, 3, 4, 4, 3])
    path = make_path(wps, counts=counts)
    params = LosParams(
        lookahead_m=rng.uniform(5.0, 30.0, n),
        integral_gain=rng.uniform(0.0, 1.0, n),
        acceptance_radius_m=rng.uniform(5.0, 50.0, n),
    )
    north = rng.uniform(-200.0, 200.0, n)
    east = rng.uniform(-200.0, 200.0, n)
    st = los_init(path)
    for _ in range(3):
        st, chi_b, e_b, done_b = los_step(params, path, st, north, east, 0.1)
    for i in range(n):
        p_i = make_path(wps[i : i + 1], counts=counts[i : i + 1])
        par_i = LosParams(
            lookahead_m=params.lookahead_m[i : i + 1],
            integral_gain=params.integral_gain[i : i + 1],
            acceptance_radius_m=params.acceptance_radius_m[i : i + 1],
        )
        s_i = los_init(p_i)
        for _ in range(3):
            s_i, chi_i, e_i, done_i = los_step(par_i, p_i, s_i, north[i : i + 1], east[i : i + 1], 0.1)
        assert chi_i[0] == chi_b[i] and e_i[0] == e_b[i] and done_i[0] == done_b[i]
        assert s_i.e_int[0] == st.e_int[i] and s_i.leg[0] == st.leg[i]


# ---------------------------------------------------------------- bad parameters


@pytest.mark.parametrize(
    ("kwargs", "field"),
    [
        ({"lookahead_m": 0.0}, "lookahead_m"),
        ({"lookahead_m": -3.0}, "lookahead_m"),
        ({"integral_gain": -0.1}, "integral_gain"),
        ({"acceptance_radius_m": 0.0}, "acceptance_radius_m"),
    ],
)
def test_bad_los_params_name_the_field(kwargs, field):
    with pytest.raises(ParameterError, match=field):
        LosParams(**kwargs)


def test_fewer_than_two_waypoints_rejected():
    with pytest.raises(ParameterError, match="waypoints"):
        make_path([[0.0, 0.0]])
    with pytest.raises(ParameterError, match="waypoints"):
        make_path(np.zeros((2, 3, 2)), counts=[3, 1])
    with pytest.raises(ParameterError, match="waypoints"):
        make_path(np.zeros((2, 3)))
    with pytest.raises(ParameterError, match="counts"):
        make_path(np.zeros((2, 3, 2)), counts=[3, 4])
    with pytest.raises(ParameterError, match="counts"):
        make_path(np.zeros((2, 3, 2)), counts=[3, 3, 3])


# ---------------------------------------------------------------- survey pattern


def _inside_convex(poly, pts, tol=1e-9):
    """Hand geometry: a point is inside a CCW convex polygon when it is left of every edge."""
    a = poly
    b = np.roll(poly, -1, axis=0)
    ab = b - a
    ap = pts[:, None, :] - a[None, :, :]
    cross = ab[None, :, 0] * ap[:, :, 1] - ab[None, :, 1] * ap[:, :, 0]
    return np.all(cross >= -tol, axis=1)


def test_survey_square_hand_geometry():
    # Hand geometry: a 100 m x 100 m square, north-going lines 10 m apart, centred across
    # the width -> lines at east = 5, 15, ..., 95, each from north 0 to north 100,
    # alternately north-going and south-going.
    sq = [[0.0, 0.0], [100.0, 0.0], [100.0, 100.0], [0.0, 100.0]]
    lines = survey_lines(sq, SurveyParams(line_spacing_m=10.0, line_heading_deg=0.0))
    assert lines.shape == (10, 2, 2)
    np.testing.assert_allclose(lines[:, 0, 1], np.arange(5.0, 100.0, 10.0), atol=1e-9)
    np.testing.assert_allclose(lines[:, 1, 1], np.arange(5.0, 100.0, 10.0), atol=1e-9)
    starts = np.where(np.arange(10) % 2 == 0, 0.0, 100.0)
    np.testing.assert_allclose(lines[:, 0, 0], starts, atol=1e-9)
    np.testing.assert_allclose(lines[:, 1, 0], 100.0 - starts, atol=1e-9)


def test_survey_triangle_ends_on_hypotenuse():
    # Hand geometry: triangle (0,0), (100,0), (0,100) in (north, east). A north-going line at
    # east = c enters at north 0 and leaves on the hypotenuse north + east = 100, at north = 100 - c.
    tri = [[0.0, 0.0], [100.0, 0.0], [0.0, 100.0]]
    lines = survey_lines(tri, SurveyParams(line_spacing_m=20.0, line_heading_deg=0.0))
    c = lines[:, 0, 1]
    np.testing.assert_allclose(c, [10.0, 30.0, 50.0, 70.0, 90.0], atol=1e-9)
    far = np.max(lines[:, :, 0], axis=1)
    near = np.min(lines[:, :, 0], axis=1)
    np.testing.assert_allclose(far, 100.0 - c, atol=1e-9)
    np.testing.assert_allclose(near, 0.0, atol=1e-9)


@pytest.mark.parametrize("heading_deg", [0.0, 30.0, 135.0, -75.0])
def test_survey_spacing_inside_and_alternating(heading_deg):
    # Hand geometry on an invented convex hexagon (vertices given clockwise):
    # consecutive lines are `spacing` apart measured along the across-track normal
    # n = (-sin h, cos h); every waypoint lies in the polygon (left of every CCW edge);
    # the direction of consecutive lines alternates (unit directions sum to zero).
    hexagon = np.array([[0.0, 0.0], [-40.0, 80.0], [30.0, 190.0], [160.0, 170.0], [210.0, 60.0], [120.0, -20.0]])
    spacing = 17.0
    params = SurveyParams(line_spacing_m=spacing, line_heading_deg=heading_deg)
    lines = survey_lines(hexagon, params)
    wps = survey_waypoints(hexagon, params)
    assert wps.shape == (2 * lines.shape[0], 2)
    assert lines.shape[0] >= 5
    h = np.deg2rad(heading_deg)
    d = np.array([np.cos(h), np.sin(h)])
    n = np.array([-np.sin(h), np.cos(h)])
    mids = lines.mean(axis=1)
    np.testing.assert_allclose(np.diff(mids @ n), spacing, rtol=1e-12)
    # each line is parallel to d: both ends have the same across-track coordinate
    np.testing.assert_allclose(lines[:, 0] @ n, lines[:, 1] @ n, atol=1e-9)
    ccw = hexagon[::-1]
    assert np.all(_inside_convex(ccw, wps, tol=1e-6))
    # ends lie ON the boundary: the minimum distance to an edge line is ~0
    a, b = ccw, np.roll(ccw, -1, axis=0)
    ab = b - a
    ap = wps[:, None, :] - a[None]
    dist = np.abs(ab[None, :, 0] * ap[:, :, 1] - ab[None, :, 1] * ap[:, :, 0]) / np.linalg.norm(ab, axis=1)
    np.testing.assert_allclose(dist.min(axis=1), 0.0, atol=1e-6)
    run = (lines[:, 1] - lines[:, 0]) @ d
    assert np.all(run[0::2] > 0.0) and np.all(run[1::2] < 0.0)


def test_survey_waypoints_feed_a_path():
    sq = [[0.0, 0.0], [100.0, 0.0], [100.0, 100.0], [0.0, 100.0]]
    wps = survey_waypoints(sq, SurveyParams(line_spacing_m=25.0, line_heading_deg=90.0))
    path = make_path(wps, n_trials=3)
    assert path.waypoints.shape == (3, 8, 2) and path.count.tolist() == [8, 8, 8]


@pytest.mark.parametrize(
    ("kwargs", "field"),
    [
        ({"line_spacing_m": 0.0}, "line_spacing_m"),
        ({"line_spacing_m": -5.0}, "line_spacing_m"),
        ({"line_heading_deg": float("nan")}, "line_heading_deg"),
    ],
)
def test_bad_survey_params_name_the_field(kwargs, field):
    with pytest.raises(ParameterError, match=field):
        SurveyParams(**kwargs)


def test_non_convex_or_degenerate_polygon_rejected():
    dart = [[0.0, 0.0], [100.0, 50.0], [0.0, 100.0], [30.0, 50.0]]
    with pytest.raises(ParameterError, match="polygon"):
        survey_lines(dart, SurveyParams(line_spacing_m=10.0))
    with pytest.raises(ParameterError, match="polygon"):
        survey_lines([[0.0, 0.0], [1.0, 1.0]], SurveyParams(line_spacing_m=10.0))
    # Pentagram: every turn is the same way, but it winds twice (self-intersecting).
    ang = np.deg2rad(np.arange(0, 720, 144))
    star = np.stack([np.cos(ang), np.sin(ang)], axis=1) * 100.0
    with pytest.raises(ParameterError, match="polygon"):
        survey_lines(star, SurveyParams(line_spacing_m=10.0))
    with pytest.raises(ParameterError, match="polygon"):
        survey_lines([[0.0, 0.0], [1.0, 1.0], [2.0, 2.0]], SurveyParams(line_spacing_m=10.0))
