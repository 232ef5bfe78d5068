"""The built-in demo: a sea-state, seakeeping and manoeuvring report for a demo craft.

The scenario is invented: the demo workboat runs a survey line across
"Skerrow Sound", an imaginary sound with a short, steep wind sea from the
south-west and a uniform current setting south-south-east. The report

1. summarises the sea (spectral periods, the WMO sea-state code, the JONSWAP
   validity range) and checks a batch of realised seas against it;
2. gives the craft's significant wave-frequency motions and mean wave drift
   at head, beam and following seas from the closed-form RAOs;
3. runs a batch of closed-loop trials of the craft holding course and speed
   through independent realisations of that sea with the compiled kernel
   (course-keeping only: line-following guidance arrives with the trial
   runner) and reports how far the sea and the current set it off the line;
4. prints the manoeuvring report (turning circle, zig-zags) beside the IMO
   MSC.137(76) criteria.

Everything here is for demonstration: the numbers describe invented craft in
invented water.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from typing import Any

import numpy as np
from tqdm.auto import tqdm

from .core.errors import ParameterError
from .core.params import Params, bounded
from .core.streams import TrialStreams
from .craft.actuators import DifferentialThrustParams, max_thrust, min_thrust, prop_rudder_forces
from .craft.catalogue import CraftParams, demo_craft
from .craft.kernel import HoldPilot, Plant, advance
from .craft.manoeuvres import ManoeuvringReport, manoeuvring_report, top_speed
from .report import CAUTION, Series, html_page, line_chart
from .sea.drift import DriftModel
from .sea.rao import closed_form_rao
from .sea.realisation import WaveComponents, realise_sea
from .sea.seastate import sea_state_band, sea_state_code
from .sea.spectra import SeaSpectrum, dnv_period_ratios, jonswap_in_valid_range, spectral_summary
from .sea.spreading import DirectionalSpreading
from .sea.wave_motion import significant_amplitude

__all__ = ["DemoResult", "DemoScenario", "hold_pilot_for", "run_demo"]


@dataclass(frozen=True, kw_only=True)
class DemoScenario(Params):
    """Inputs of the demo (all invented), validated on construction.

    Parameters
    ----------
    craft_name : str
        A demo craft name (see :data:`wavebench.craft.DEMO_CRAFT_NAMES`).
    hs_m, tp_s : float
        Significant wave height [m] and peak period [s] of the JONSWAP sea.
    wave_from_deg : float
        Mean direction the waves come from [deg].
    spreading_s : float
        cos-2s spreading exponent [-].
    current_mps, current_set_deg : float
        Uniform current speed [m/s] and set (toward) [deg].
    line_heading_deg : float
        Heading of the survey line [deg].
    speed_mps : float or None
        Ordered surge speed [m/s]; at most the craft's top speed. None (the
        default) takes 80 % of the craft's calm-water top speed.
    duration_s : float
        Length of each closed-loop trial [s], a whole number of 10 s chunks.
    n_trials : int
        Number of trials, >= 1.
    seed : int
        Campaign seed, >= 0.
    """

    craft_name: str = "Tholepin"
    hs_m: float = bounded(1.2, gt=0.0, le=6.0, unit="m", doc="significant wave height")
    tp_s: float = bounded(5.0, gt=1.0, le=20.0, unit="s", doc="peak period")
    wave_from_deg: float = bounded(225.0, ge=-360.0, le=360.0, unit="deg", doc="waves come from")
    spreading_s: float = bounded(8.0, gt=0.0, unit="1", doc="cos-2s exponent")
    current_mps: float = bounded(0.4, ge=0.0, le=3.0, unit="m/s", doc="current speed")
    current_set_deg: float = bounded(160.0, ge=-360.0, le=360.0, unit="deg", doc="current set (toward)")
    line_heading_deg: float = bounded(70.0, ge=-360.0, le=360.0, unit="deg", doc="survey line heading")
    speed_mps: Any = dataclasses.field(default=None, metadata={"unit": "m/s", "doc": "ordered speed"})
    duration_s: float = bounded(600.0, gt=0.0, le=7200.0, unit="s", doc="trial length")
    n_trials: int = bounded(200, ge=1, le=100_000, integer=True, unit="1", doc="number of trials")
    seed: int = bounded(2026, ge=0, integer=True, unit="1", doc="campaign seed")

    def _check(self) -> None:
        try:
            craft = demo_craft(self.craft_name)
        except ParameterError as exc:
            raise ParameterError("craft_name", self.craft_name, exc.allowed) from None
        if abs(self.duration_s / _CHUNK_S - round(self.duration_s / _CHUNK_S)) > 1e-9:
            raise ParameterError("duration_s", self.duration_s, f"must be a whole multiple of {_CHUNK_S:g} s")
        if self.speed_mps is not None:
            v_max = float(top_speed(craft)[0])
            v = self.speed_mps
            if isinstance(v, bool) or not isinstance(v, (int, float)) or not 0.0 < v <= v_max:
                raise ParameterError(
                    "speed_mps", v, f"must be > 0 and at most {craft.name}'s calm-water top speed {v_max:.2f} m/s"
                )

    def ordered_speed(self, craft: CraftParams) -> float:
        """The ordered speed [m/s]: as given, or 80 % of the craft's top speed."""
        if self.speed_mps is not None:
            return float(self.speed_mps)
        return 0.8 * float(top_speed(craft)[0])


#: Length of one kernel call in the closed-loop demo [s].
_CHUNK_S = 10.0


def hold_pilot_for(craft: CraftParams, speed_mps: float, heading_rad: float, n_trials: int) -> HoldPilot:
    """A heading-and-speed hold sized from the craft's own inertia and actuators.

    The force and moment demands are limited to what the propulsion can give
    at the ordered speed: full ahead/astern thrust in surge; for a twin-hull,
    one thruster ahead and one astern in yaw; for a propeller-rudder craft,
    the moment of the rudder hard over in the slipstream at the ordered speed.
    The surge loop has a 5 s time constant (gain ``m11 / 5 s``). The heading
    gain uses the whole yaw moment at 10 deg of error
    (``k_psi = N_max / 10 deg``) and the yaw-rate gain brings the closed loop
    ``m33 r_dot = -(|N_r| + k_r) r - k_psi e`` to a damping ratio of 0.8
    (``k_r = max(0, 1.6 sqrt(k_psi m33) - |N_r|)``). Our own sizing rule, no
    source; integral action (and so zero steady error) comes with the
    product's autopilots.

    Parameters
    ----------
    craft : CraftParams
    speed_mps : float
        Ordered speed [m/s].
    heading_rad : float
        Heading to hold [rad].
    n_trials : int
        Batch size.

    Returns
    -------
    HoldPilot
    """
    hull, prop = craft.hull, craft.propulsion
    m11 = float(hull.mass_kg - hull.x_udot)
    m33 = float(hull.izz_kgm2 - hull.n_rdot)
    if isinstance(prop, DifferentialThrustParams):
        x_max = float(max_thrust(prop.port) + max_thrust(prop.starboard))
        n_max = float(
            abs(prop.port.y_m) * max(max_thrust(prop.port), -min_thrust(prop.port))
            + abs(prop.starboard.y_m) * max(max_thrust(prop.starboard), -min_thrust(prop.starboard))
        )
    else:
        x_max = float((1.0 - prop.thrust_deduction) * max_thrust(prop.propeller))
        n_rps = np.array([float(prop.propeller.n_max_rps)])
        nu_r = np.array([[speed_mps, 0.0, 0.0]])
        tau = prop_rudder_forces(prop, n_rps, np.radians([float(prop.rudder_max_deg)]), nu_r)
        n_max = float(abs(tau[0, 2]))
    k_psi = n_max / np.radians(10.0)
    k_r = max(0.0, 1.6 * np.sqrt(k_psi * m33) - abs(float(hull.n_r)))
    ones = np.ones(n_trials)
    return HoldPilot(
        u_ref_mps=speed_mps * ones, psi_ref_rad=heading_rad * ones, k_u=m11 / 5.0 * ones,
        k_psi=k_psi * ones, k_r=k_r * ones, x_max_n=x_max * ones, n_max_nm=n_max * ones,
    )  # fmt: skip


@dataclass(frozen=True)
class DemoResult:
    """What :func:`run_demo` computed; :meth:`text` and :meth:`html` render it."""

    scenario: DemoScenario
    craft: CraftParams
    sea_text: str
    motion_text: str
    loop_text: str
    manoeuvres: ManoeuvringReport
    figures: dict[str, str]

    def text(self) -> str:
        """The whole report as plain text."""
        return "\n\n".join(
            [
                "wavebench demo report (invented scenario: Skerrow Sound)",
                self.sea_text,
                self.motion_text,
                self.loop_text,
                self.manoeuvres.to_text(),
                "CAUTION: " + CAUTION,
            ]
        )

    def html(self) -> str:
        """The report as a self-contained HTML page with inline SVG charts."""
        f = self.figures
        return html_page(
            f"wavebench demo: {self.craft.name} in Skerrow Sound (invented)",
            [
                ("Sea state", self.sea_text, [f["spectrum"], f["elevation"]]),
                ("Wave-frequency motion and drift", self.motion_text, [f[k] for k in ("rao",) if k in f]),
                ("Closed-loop trials", self.loop_text, [f["tracks"], f["offset"]]),
                ("Manoeuvring", self.manoeuvres.to_text(), [f["turning"]]),
            ],
        )


def _sea_section(sc: DemoScenario, spec: SeaSpectrum, comps: WaveComponents) -> tuple[str, dict[str, str]]:
    w = np.linspace(0.05, 6.0, 4000)
    s = spec.density(w)
    summ = spectral_summary(w, s)
    gamma = float(spec.gamma_value())
    ratios = dnv_period_ratios(gamma)
    code = int(sea_state_code(sc.hs_m))
    band = sea_state_band(code)
    hm0 = 4.0 * np.sqrt(comps.variance_m2())
    valid = bool(jonswap_in_valid_range(sc.hs_m, sc.tp_s))
    lines = [
        f"JONSWAP sea: Hs = {sc.hs_m:.2f} m, Tp = {sc.tp_s:.2f} s, gamma = {gamma:.2f} "
        "(DNV-RP-C205 rule from Tp/sqrt(Hs))",
        f"  Tp/sqrt(Hs) = {sc.tp_s / np.sqrt(sc.hs_m):.2f} s/m^0.5: "
        + ("inside" if valid else "OUTSIDE")
        + " the 3.6-5 range where DNV-RP-C205 considers JONSWAP reasonable",
        f"  from the integrated spectrum: Hm0 = {summ.hm0_m:.3f} m, Tz = {summ.tz_s:.2f} s, "
        f"T1 = {summ.t1_s:.2f} s, Te = {summ.te_s:.2f} s",
        f"  DNV-RP-C205 fits: Tz = {ratios.tz_over_tp * sc.tp_s:.2f} s, T1 = {ratios.t1_over_tp * sc.tp_s:.2f} s",
        f"  WMO code table 3700: sea state {code}, '{band.description}' "
        f"({band.lower_m:g}-{band.upper_m:g} m)",
        f"  waves from {sc.wave_from_deg:.0f} deg, cos-2s spreading s = {sc.spreading_s:g}",
        f"Realised seas: {comps.n_trials} trials x {comps.n_components} components, "
        f"Hm0 = 4 sqrt(sum a^2/2): mean {hm0.mean():.3f} m, range {hm0.min():.3f}-{hm0.max():.3f} m",
    ]
    pm = SeaSpectrum(kind="pierson_moskowitz", hs_m=sc.hs_m, tp_s=sc.tp_s)
    fig_spec = line_chart(
        [Series(w, s, f"JONSWAP gamma={gamma:.1f}"), Series(w, pm.density(w), "Pierson-Moskowitz", dashed=True)],
        title="Wave spectrum", xlabel="omega [rad/s]", ylabel="S [m^2 s/rad]", xlim=(0.0, 4.0),
    )  # fmt: skip
    t = np.arange(0.0, 180.0, 0.25)
    zeta = comps.subset(slice(0, 1)).elevation(np.zeros((1, t.size)), np.zeros((1, t.size)), t[None, :])[0]
    fig_elev = line_chart(
        [Series(t, zeta, "trial 0 at the origin")],
        title="Surface elevation (one realisation)", xlabel="time [s]", ylabel="elevation [m]",
    )  # fmt: skip
    return "\n".join(lines), {"spectrum": fig_spec, "elevation": fig_elev}


#: Assumed demo values for the closed-form RAOs of a monohull demo craft:
#: block coefficient (as used to derive the demo hull) and transverse GM [m].
_RAO_BLOCK_COEFFICIENT = 0.45
_RAO_GM_M = 0.6


def _motion_section(sc: DemoScenario, craft: CraftParams, speed: float, spec: SeaSpectrum,
                    spread: DirectionalSpreading, comps: WaveComponents) -> tuple[str, dict[str, str]]:  # fmt: skip
    hull = craft.hull
    toward = np.radians(sc.wave_from_deg) + np.pi
    # craft headings putting the mean sea ahead, abeam (from port) and astern
    cases = {"head sea": toward + np.pi, "beam sea": toward - 0.5 * np.pi, "following sea": toward}
    drift = DriftModel.for_hull(comps, length_m=float(hull.length_m), beam_m=float(hull.beam_m),
                                draft_m=float(hull.draft_m))  # fmt: skip
    twin = isinstance(craft.propulsion, DifferentialThrustParams)
    figs: dict[str, str] = {}
    if twin:
        lines = [
            f"{craft.name} is a twin hull: the closed-form RAOs are for box-like monohulls, so no "
            "wave-frequency motion is shown; supply an RAO table (CSV or NetCDF) for it.",
            "Mean wave drift (waterline envelope of both hulls, Faltinsen's wall formula with Wiegel's "
            "reflection), averaged over the trials' seas:",
            f"{'':<15}{'mean drift X, Y [N]':>24}",
        ]
        for name, psi in cases.items():
            mean = drift.mean_force(comps, np.full(comps.n_trials, psi)).mean(axis=0)
            lines.append(f"{name:<15}{mean[0]:>13.1f},{mean[1]:>9.1f}")
        return "\n".join(lines), figs
    omega_grid = np.linspace(0.1, 6.0, 120)
    beta_grid = np.radians(np.arange(0.0, 360.0, 5.0))
    rao = closed_form_rao(
        length_m=float(hull.length_m), beam_m=float(hull.beam_m), draft_m=float(hull.draft_m),
        block_coefficient=_RAO_BLOCK_COEFFICIENT, speed_mps=speed, omega_grid=omega_grid, beta_grid=beta_grid,
        roll_damping_ratio=0.1, gm_m=_RAO_GM_M,
    )  # fmt: skip
    heads = np.array(list(cases.values()))
    sig = significant_amplitude(rao, spec, spread, heads, np.linspace(0.05, 6.0, 600))
    lines = [
        f"{craft.name}: significant wave-frequency motion (2 sqrt(m0)) at {speed:.1f} m/s, closed-form RAOs "
        "(Jensen, Mansour & Olsen 2004 heave/pitch; roll model of our own; assumed demo values "
        f"Cb = {_RAO_BLOCK_COEFFICIENT}, GM = {_RAO_GM_M} m, roll damping 10 % of critical)",
        f"{'':<15}{'heave [m]':>11}{'roll [deg]':>12}{'pitch [deg]':>13}{'mean drift X, Y [N]':>24}",
    ]
    for (name, psi), amp in zip(cases.items(), sig, strict=True):
        mean = drift.mean_force(comps, np.full(comps.n_trials, psi)).mean(axis=0)
        lines.append(
            f"{name:<15}{amp[2]:>11.3f}{np.degrees(amp[3]):>12.2f}{np.degrees(amp[4]):>13.2f}"
            f"{mean[0]:>13.0f},{mean[1]:>9.0f}"
        )
    head = rao.evaluate(omega_grid, np.full(omega_grid.shape, np.pi))
    beam = rao.evaluate(omega_grid, np.full(omega_grid.shape, 0.5 * np.pi))
    figs["rao"] = line_chart(
        [Series(omega_grid, np.abs(head[:, 2]), "heave, head sea [m/m]"),
         Series(omega_grid, np.abs(head[:, 4]), "pitch, head sea [rad/m]"),
         Series(omega_grid, np.abs(beam[:, 3]), "roll, beam sea [rad/m]")],
        title=f"RAO amplitudes at {speed:.1f} m/s", xlabel="wave frequency omega [rad/s]",
        ylabel="|RAO|",
    )  # fmt: skip
    return "\n".join(lines), figs


def _loop_section(sc: DemoScenario, craft: CraftParams, speed: float, comps: WaveComponents,
                  progress: bool) -> tuple[str, dict[str, str]]:  # fmt: skip
    hull = craft.hull
    n = comps.n_trials
    drift = DriftModel.for_hull(comps, length_m=float(hull.length_m), beam_m=float(hull.beam_m),
                                draft_m=float(hull.draft_m))  # fmt: skip
    plant = Plant.build(hull, n, comps, drift)
    line = np.radians(sc.line_heading_deg)
    pilot = hold_pilot_for(craft, speed, line, n)
    cur_dir = np.radians(sc.current_set_deg)
    current = np.tile([sc.current_mps * np.cos(cur_dir), sc.current_mps * np.sin(cur_dir)], (n, 1))
    dt = 0.1
    chunk = round(_CHUNK_S / dt)
    n_chunks = round(sc.duration_s / _CHUNK_S)
    eta = np.zeros((n, 3))
    eta[:, 2] = line
    nu = np.zeros((n, 3))
    nu[:, 0] = speed
    psi_w = None
    track_n, track_e, offset = [eta[:, 0].copy()], [eta[:, 1].copy()], []
    cl, sl = np.cos(line), np.sin(line)
    for k in tqdm(range(n_chunks), desc="closed-loop trials", unit="chunk", disable=not progress):
        eta, nu, psi_w = advance(plant, eta, nu, k * chunk, dt, chunk, current_ned=current, pilot=pilot,
                                 drift_heading_rad=psi_w)  # fmt: skip
        track_n.append(eta[:, 0].copy())
        track_e.append(eta[:, 1].copy())
    tn, te = np.stack(track_n, axis=1), np.stack(track_e, axis=1)
    offset = -sl * tn + cl * te  # cross-line distance, positive to starboard of the line
    along = cl * tn + sl * te
    final = offset[:, -1]
    heading_err = np.degrees((eta[:, 2] - line + np.pi) % (2 * np.pi) - np.pi)
    lines = [
        f"{n} trials x {sc.duration_s:.0f} s of {craft.name} holding {sc.line_heading_deg:.0f} deg at "
        f"{speed:.2f} m/s surge (heading-and-speed hold sized from the craft; no cross-track correction)",
        f"  uniform current {sc.current_mps:.1f} m/s setting {sc.current_set_deg:.0f} deg; each trial its own sea",
        f"  distance along the line after {sc.duration_s:.0f} s: mean {along[:, -1].mean():.0f} m",
        f"  set off the line after {sc.duration_s:.0f} s: mean {final.mean():.1f} m, "
        f"5-95 % range {np.percentile(final, 5):.1f} to {np.percentile(final, 95):.1f} m",
        f"  final heading error: mean {heading_err.mean():.2f} deg, sd {heading_err.std():.2f} deg",
        "  (a line-following guide that removes this offset comes with the trial runner)",
    ]
    if np.mean(np.abs(heading_err)) > 20.0:
        lines.append(
            f"  WARNING: {craft.name} cannot hold its heading here: the wave drift and the current "
            "exceed what its propulsion can counter (the hold saturates); this sea is beyond the craft."
        )
    t = np.arange(tn.shape[1]) * dt * chunk
    shown = range(min(n, 25))
    fig_tracks = line_chart(
        [Series(te[i], tn[i], color="#1b6f8a", width=0.8, opacity=0.5) for i in shown]
        + [Series([0.0, sl * along.max()], [0.0, cl * along.max()], "survey line", color="#c8553d", dashed=True)],
        title="Tracks (first 25 trials)", xlabel="east [m]", ylabel="north [m]", equal_axes=True,
    )  # fmt: skip
    pct = np.percentile(offset, [5, 50, 95], axis=0)
    fig_off = line_chart(
        [Series(t, pct[1], "median"), Series(t, pct[0], "5 %", dashed=True, color="#1b6f8a"),
         Series(t, pct[2], "95 %", dashed=True, color="#1b6f8a")],
        title="Set off the line across trials", xlabel="time [s]", ylabel="cross-line offset [m]",
    )  # fmt: skip
    return "\n".join(lines), {"tracks": fig_tracks, "offset": fig_off}


def run_demo(scenario: DemoScenario | None = None, *, progress: bool = True) -> DemoResult:
    """Compute the demo report.

    Parameters
    ----------
    scenario : DemoScenario, optional
        Inputs; the invented defaults when omitted.
    progress : bool
        Show a progress bar for the closed-loop trials.

    Returns
    -------
    DemoResult
    """
    sc = scenario or DemoScenario()
    craft = demo_craft(sc.craft_name)
    spec = SeaSpectrum(kind="jonswap", hs_m=sc.hs_m, tp_s=sc.tp_s)
    spread = DirectionalSpreading(kind="cos2s", exponent=sc.spreading_s, mean_dir_deg=sc.wave_from_deg)
    comps = realise_sea(spec, spread, TrialStreams(sc.seed, range(sc.n_trials)), n_components=100)
    speed = sc.ordered_speed(craft)
    sea_text, f1 = _sea_section(sc, spec, comps)
    motion_text, f2 = _motion_section(sc, craft, speed, spec, spread, comps)
    loop_text, f3 = _loop_section(sc, craft, speed, comps, progress)
    report = manoeuvring_report(craft)
    tc = report.turning
    fig_turn = line_chart(
        [Series(tc.east_m[0], tc.north_m[0], "35 deg rudder to starboard")],
        title="Turning circle", xlabel="east [m]", ylabel="north [m]", equal_axes=True,
    )  # fmt: skip
    return DemoResult(
        scenario=sc, craft=craft, sea_text=sea_text, motion_text=motion_text, loop_text=loop_text,
        manoeuvres=report, figures={**f1, **f2, **f3, "turning": fig_turn},
    )  # fmt: skip
