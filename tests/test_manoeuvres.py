"""Tests of the standard manoeuvres and the IMO report (wavebench.craft.manoeuvres).

Sources:
* Nomoto, Taguchi, Honda & Hirano (1957): first-order steering model
  T r_dot + r = K delta; step response r = K delta (1 - exp(-t/T)), heading
  psi = K delta (t - T (1 - exp(-t/T))). Positions are integrated from it with
  scipy.integrate.quad and crossing times found with scipy.optimize.brentq;
  zig-zag references with scipy.integrate.solve_ivp and events.
* IMO Resolution MSC.137(76), Standards for ship manoeuvrability, Annex 5.3
  (criteria formulas written out below).
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest
from scipy.integrate import quad, solve_ivp
from scipy.optimize import brentq

from wavebench.core.errors import ParameterError
from wavebench.craft.catalogue import DEMO_CRAFT_NAMES, demo_craft
from wavebench.craft.manoeuvres import (
    NomotoParams,
    imo_criteria,
    imo_first_overshoot_limit_deg,
    imo_second_overshoot_limit_deg,
    manoeuvring_report,
    top_speed,
    turning_circle,
    zigzag,
)

K, T_NOMOTO, U, L = 0.2, 5.0, 5.0, 60.0


def nomoto(**kw: float) -> NomotoParams:
    base = dict(gain_per_s=K, time_constant_s=T_NOMOTO, speed_mps=U, length_m=L,
                rudder_rate_max_deg_per_s=1e6)  # fmt: skip
    base.update(kw)
    return NomotoParams(**base)


# --- IMO criteria ----------------------------------------------------------------------


def test_imo_criteria_formulas() -> None:
    # IMO MSC.137(76) Annex 5.3.3.1: 10 deg if L/V < 10 s, 20 deg if L/V >= 30 s,
    # 5 + 0.5 (L/V) deg in between; 5.3.3.2: 25 / 40 / 17.5 + 0.75 (L/V) deg
    lv = np.array([2.0, 9.999, 10.0, 20.0, 29.9, 30.0, 45.0])
    np.testing.assert_allclose(
        imo_first_overshoot_limit_deg(lv), [10.0, 10.0, 10.0, 15.0, 19.95, 20.0, 20.0]
    )
    np.testing.assert_allclose(
        imo_second_overshoot_limit_deg(lv), [25.0, 25.0, 25.0, 32.5, 39.925, 40.0, 40.0]
    )
    # 5.3.1: advance <= 4.5 L, tactical diameter <= 5 L; 5.3.2: 2.5 L; 5.3.3.3: 25 deg
    c = imo_criteria(120.0, 6.0)  # L/V = 20 s
    assert float(c.l_over_v_s[0]) == 20.0
    assert float(c.advance_max_m[0]) == 540.0
    assert float(c.tactical_diameter_max_m[0]) == 600.0
    assert float(c.initial_turning_max_m[0]) == 300.0
    assert float(c.first_overshoot_10_max_deg[0]) == 15.0
    assert float(c.second_overshoot_10_max_deg[0]) == 32.5
    assert float(c.first_overshoot_20_max_deg[0]) == 25.0
    with pytest.raises(ParameterError, match="speed_mps"):
        imo_criteria(100.0, 0.0)


# --- Nomoto references -----------------------------------------------------------------


def _nomoto_heading(t: float, r_ss: float) -> float:
    return r_ss * (t - T_NOMOTO * (1.0 - math.exp(-t / T_NOMOTO)))


def test_nomoto_turning_circle_against_analytic_step_response() -> None:
    delta = math.radians(20.0)
    dt = 0.01
    res = turning_circle(nomoto(), rudder_deg=20.0, dt=dt)
    r_ss = K * delta
    # Nomoto (1957): steady yaw rate K delta, steady diameter 2 U / (K delta)
    assert res.steady_yaw_rate_rad_s[0] == pytest.approx(r_ss, rel=1e-9)
    assert res.steady_diameter_m[0] == pytest.approx(2.0 * U / r_ss, rel=1e-9)

    # heading reached at t from the analytic step response; positions by quadrature
    def position(t: float) -> tuple[float, float]:
        n = quad(lambda s: U * math.cos(_nomoto_heading(s, r_ss)), 0.0, t, limit=200)[0]
        e = quad(lambda s: U * math.sin(_nomoto_heading(s, r_ss)), 0.0, t, limit=200)[0]
        return n, e

    t90 = brentq(lambda t: _nomoto_heading(t, r_ss) - math.pi / 2, 0.0, 500.0)
    t180 = brentq(lambda t: _nomoto_heading(t, r_ss) - math.pi, 0.0, 500.0)
    adv, tr = position(t90)
    _, tac = position(t180)
    # The simulated rudder reaches its angle within the first step, whose force uses the
    # mean rudder angle over the step: an effective delay of dt / 2, i.e. U dt / 2 of
    # straight track before the analytic turn starts (O(dt^2) remainder).
    assert res.advance_m[0] == pytest.approx(adv + U * dt / 2, abs=1e-4)
    assert res.transfer_m[0] == pytest.approx(tr, abs=1e-4)
    assert res.tactical_diameter_m[0] == pytest.approx(tac, abs=1e-4)


def _zigzag_reference(delta: float, psi_s: float) -> tuple[float, float]:
    """Overshoots of the Nomoto model with instantaneous rudder (solve_ivp + events)."""

    def rhs(t: float, y: np.ndarray, d: float) -> list[float]:
        return [y[1], (K * d - y[1]) / T_NOMOTO]

    def crossing(level: float):
        ev = lambda t, y, d: y[0] - level  # noqa: E731
        ev.terminal = True
        return ev

    def peak(t: float, y: np.ndarray, d: float) -> float:
        return y[1]

    peak.terminal = True
    kw = dict(rtol=1e-11, atol=1e-12, max_step=0.5)
    y = [0.0, 0.0]
    s1 = solve_ivp(rhs, (0, 1e3), y, args=(delta,), events=crossing(psi_s), **kw)
    s2 = solve_ivp(rhs, (0, 1e3), s1.y[:, -1], args=(-delta,), events=peak, **kw)
    psi_peak1 = s2.y[0, -1]
    s3 = solve_ivp(rhs, (0, 1e3), s2.y[:, -1], args=(-delta,), events=crossing(-psi_s), **kw)
    s4 = solve_ivp(rhs, (0, 1e3), s3.y[:, -1], args=(delta,), events=peak, **kw)
    psi_peak2 = s4.y[0, -1]
    return math.degrees(psi_peak1 - psi_s), math.degrees(-psi_peak2 - psi_s)


@pytest.mark.parametrize("angle", [10.0, 20.0])
def test_nomoto_zigzag_overshoots_against_solve_ivp(angle: float) -> None:
    dt = 0.01
    res = zigzag(nomoto(), rudder_deg=angle, dt=dt)
    ov1, ov2 = _zigzag_reference(math.radians(angle), math.radians(angle))
    # executes are late by at most dt: heading error <= r_max dt, r_max <= K delta
    tol = math.degrees(K * math.radians(angle) * dt) * 2.0
    assert res.first_overshoot_deg[0] == pytest.approx(ov1, abs=tol)
    assert res.second_overshoot_deg[0] == pytest.approx(ov2, abs=tol)
    assert ov1 > 0.5 and ov2 > 0.5  # the reference case does overshoot


def test_port_turn_mirrors_starboard_turn() -> None:
    stbd = turning_circle(nomoto(), side=1, dt=0.05)
    port = turning_circle(nomoto(), side=-1, dt=0.05)
    for name in ("advance_m", "transfer_m", "tactical_diameter_m", "steady_diameter_m"):
        np.testing.assert_allclose(getattr(port, name), getattr(stbd, name), rtol=1e-12)
    assert port.psi_rad[0, -1] < 0.0 < stbd.psi_rad[0, -1]


# --- demo craft --------------------------------------------------------------------------


@pytest.mark.parametrize("name", DEMO_CRAFT_NAMES)
def test_demo_craft_reported_against_imo_criteria(name: str) -> None:
    craft = demo_craft(name)
    rep = manoeuvring_report(craft)
    length = craft.hull.length_m
    v = float(rep.turning.approach_speed_mps[0])
    assert v == pytest.approx(0.9 * float(top_speed(craft)[0]))
    lv = length / v
    # criteria for this L and V, IMO MSC.137(76) Annex 5.3 written out
    first = 10.0 if lv < 10 else (20.0 if lv >= 30 else 5.0 + 0.5 * lv)
    second = 25.0 if lv < 10 else (40.0 if lv >= 30 else 17.5 + 0.75 * lv)
    limits = [4.5 * length, 5.0 * length, 2.5 * length, first, second, 25.0]
    rows = rep.rows()
    for (_, value, rel, limit, meets), expected in zip(rows, limits, strict=True):
        assert rel == "<="
        assert limit == pytest.approx(expected, rel=1e-12)
        assert np.isfinite(value)  # every manoeuvre completed
        assert meets == (value <= limit)
    text = rep.to_text()
    assert name in text and "orientation only" in text and "MSC.137(76)" in text
    # geometry sanity: the turn is to starboard and the craft has turned well past 180 deg
    assert rep.turning.transfer_m[0] > 0.0 and rep.turning.psi_rad[0, -1] > math.pi


def _assert_result_slice_equal(alone: object, batch: object, i: int) -> None:
    """Every field of trial ``i`` of ``batch`` equals trial 0 of ``alone``, bit for bit."""
    for f in dataclasses.fields(alone):
        a, b = getattr(alone, f.name), getattr(batch, f.name)
        if f.name == "t":
            # the batch may run longer (until its slowest trial is done): common prefix
            assert np.array_equal(a, b[: a.size]), f.name
        elif isinstance(a, np.ndarray) and a.ndim == 2:
            assert np.array_equal(a[0], b[i, : a.shape[1]], equal_nan=True), f.name
        elif isinstance(a, np.ndarray):
            assert a.shape == (1,) and b.ndim == 1, f.name
            # NaN (never reached) must match NaN; everything else bit for bit
            assert np.array_equal(a[0], b[i], equal_nan=True), (f.name, a[0], b[i])
        else:
            assert a == b, f.name


@pytest.mark.parametrize("name", DEMO_CRAFT_NAMES)
def test_trial_alone_equals_trial_in_batch(name: str) -> None:
    # Trials that differ (yaw inertia 1x and 3x, so they turn at different rates and
    # finish their manoeuvres at different steps): every result field of trial i in
    # the batch must equal the same trial run alone, steady values and overshoots included.
    craft = demo_craft(name)
    izz = craft.hull.izz_kgm2 * np.array([1.0, 3.0])
    batch_craft = dataclasses.replace(craft, hull=dataclasses.replace(craft.hull, izz_kgm2=izz))
    speed = 0.8 * float(top_speed(craft)[0])
    kw = dict(dt=0.1, approach_speed_mps=speed)
    runs = [
        lambda c: turning_circle(c, **kw),
        lambda c: zigzag(c, rudder_deg=10.0, **kw),
        lambda c: zigzag(c, rudder_deg=20.0, **kw),
    ]
    for run in runs:
        batch = run(batch_craft)
        finished_at = []
        for i in range(izz.size):
            alone_craft = dataclasses.replace(
                craft, hull=dataclasses.replace(craft.hull, izz_kgm2=float(izz[i]))
            )
            alone = run(alone_craft)
            _assert_result_slice_equal(alone, batch, i)
            finished_at.append(alone.t.size)
        # the check has teeth: the trials end at different steps, so at least one trial's
        # values are read before the batch run ends
        assert finished_at[0] != finished_at[1]
    # the steady values of the turning circle are finite and differ between the trials
    tc = turning_circle(batch_craft, **kw)
    assert np.all(np.isfinite(tc.steady_diameter_m))
    assert tc.steady_diameter_m[0] != tc.steady_diameter_m[1]


def test_bad_manoeuvre_input() -> None:
    craft = demo_craft("Dulse")
    with pytest.raises(ParameterError, match="side"):
        turning_circle(craft, side=0)
    with pytest.raises(ParameterError, match="dt"):
        zigzag(craft, dt=-0.1)
    with pytest.raises(ParameterError, match="approach_speed_mps"):
        turning_circle(craft, approach_speed_mps=3.0)  # above Dulse's top speed
    with pytest.raises(ParameterError, match="approach_speed_mps"):
        turning_circle(nomoto(), approach_speed_mps=3.0)
    with pytest.raises(ParameterError) as info:
        nomoto(gain_per_s=float("nan"))
    assert info.value.field == "gain_per_s"


@pytest.mark.parametrize("run", [turning_circle, zigzag])
@pytest.mark.parametrize(
    ("craft_name", "limit"),
    [("nomoto", 35.0), ("Dulse", 35.0), ("Tholepin", 35.0)],
)
def test_rudder_angle_validated(run, craft_name: str, limit: float) -> None:
    # Dulse has differential thrust: 35 deg maps to full differential thrust (our
    # convention); Tholepin and the Nomoto model have rudder_max_deg = 35.
    craft = nomoto() if craft_name == "nomoto" else demo_craft(craft_name)
    for bad in (float("nan"), float("inf"), 0.0, -10.0, 200.0, limit + 0.5, [10.0, 20.0]):
        with pytest.raises(ParameterError) as info:
            run(craft, rudder_deg=bad, max_duration_s=1.0)
        assert info.value.field == "rudder_deg"
    run(craft, rudder_deg=limit, max_duration_s=1.0)  # the limit itself is allowed


def test_rudder_limit_of_the_craft_is_used() -> None:
    # a Nomoto model with a 25 deg rudder limit: 30 deg is refused, 25 deg accepted
    small = nomoto(rudder_max_deg=25.0)
    with pytest.raises(ParameterError, match="rudder_deg"):
        turning_circle(small, rudder_deg=30.0, max_duration_s=1.0)
    turning_circle(small, rudder_deg=25.0, max_duration_s=1.0)
    # the report then turns with the craft's own limit instead of 35 deg
    rep = manoeuvring_report(small, dt=0.1)
    assert rep.turning.rudder_deg == 25.0
    # per-trial limits below 35 deg that differ cannot share one hard-over angle
    mixed = nomoto(rudder_max_deg=np.array([25.0, 30.0]))
    with pytest.raises(ParameterError) as info:
        manoeuvring_report(mixed, dt=0.1)
    assert info.value.field == "rudder_max_deg"
    # a per-trial limit: rudder_deg must be within every trial's limit
    with pytest.raises(ParameterError, match="rudder_deg"):
        zigzag(mixed, rudder_deg=28.0, max_duration_s=1.0)


def test_heading_changes_validated() -> None:
    craft = nomoto()
    for bad in (float("nan"), 0.0, -10.0, 180.0, 400.0):
        with pytest.raises(ParameterError) as info:
            zigzag(craft, rudder_deg=10.0, heading_deg=bad, max_duration_s=1.0)
        assert info.value.field == "heading_deg"
    for bad in (float("nan"), float("inf"), 90.0, -540.0):
        with pytest.raises(ParameterError) as info:
            turning_circle(craft, end_heading_change_deg=bad, max_duration_s=1.0)
        assert info.value.field == "end_heading_change_deg"
