"""The built-in demo: a sea-state, seakeeping and manoeuvring report for a demo craft.

The scenario is invented: the demo workboat runs a survey line across
"Skerrow Sound", an imaginary sound with a short, steep wind sea from the
south-west and a tidal stream setting south-south-east. The report

1. summarises the sea (spectral periods, the WMO sea-state code, the JONSWAP
   validity range) and checks a batch of realised seas against it;
2. gives the craft's significant wave-frequency motions and mean wave drift
   at head, beam and following seas from the closed-form RAOs;
3. runs a batch of closed-loop trials of the craft holding course and speed
   through independent realisations of that sea with the compiled kernel
   (course-keeping only: line-following guidance arrives with the trial
   runner) and reports how far the sea and the stream set it off the line;
4. prints the manoeuvring report (turning circle, zig-zags) beside the IMO
   MSC.137(76) criteria.

Everything here is for demonstration: the numbers describe invented craft in
invented water.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from tqdm.auto import tqdm

from .core.streams import TrialStreams
from .craft.catalogue import CraftParams, demo_craft
from .craft.kernel import HoldPilot, Plant, advance
from .craft.manoeuvres import ManoeuvringReport, manoeuvring_report
from .report import CAUTION, Series, html_page, line_chart
from .sea.drift import DriftModel
from .sea.rao import closed_form_rao
from .sea.realisation import WaveComponents, realise_sea
from .sea.seastate import sea_state_band, sea_state_code
from .sea.spectra import SeaSpectrum, dnv_period_ratios, jonswap_in_valid_range, spectral_summary
from .sea.spreading import DirectionalSpreading
from .sea.wave_motion import significant_amplitude

__all__ = ["DemoResult", "DemoScenario", "run_demo"]


@dataclass(frozen=True)
class DemoScenario:
    """Inputs of the demo (all invented).

    Parameters
    ----------
    craft_name : str
        A demo craft name.
    hs_m, tp_s : float
        Significant wave height [m] and peak period [s] of the JONSWAP sea.
    wave_from_deg : float
        Mean direction the waves come from [deg].
    spreading_s : float
        cos-2s spreading exponent [-].
    current_mps, current_set_deg : float
        Tidal stream speed [m/s] and set (toward) [deg].
    line_heading_deg : float
        Heading of the survey line [deg].
    speed_mps : float
        Ordered speed through the water [m/s].
    duration_s : float
        Length of each closed-loop trial [s].
    n_trials : int
        Number of trials.
    seed : int
        Campaign seed.
    """

    craft_name: str = "Tholepin"
    hs_m: float = 1.2
    tp_s: float = 5.0
    wave_from_deg: float = 225.0
    spreading_s: float = 8.0
    current_mps: float = 0.4
    current_set_deg: float = 160.0
    line_heading_deg: float = 70.0
    speed_mps: float = 3.0
    duration_s: float = 600.0
    n_trials: int = 200
    seed: int = 2026


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
                ("Wave-frequency motion and drift", self.motion_text, [f["rao"]]),
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


def _motion_section(sc: DemoScenario, craft: CraftParams, spec: SeaSpectrum,
                    spread: DirectionalSpreading, comps: WaveComponents) -> tuple[str, dict[str, str]]:  # fmt: skip
    hull = craft.hull
    omega_grid = np.linspace(0.1, 6.0, 120)
    beta_grid = np.radians(np.arange(0.0, 360.0, 5.0))
    rao = closed_form_rao(
        length_m=float(hull.length_m), beam_m=float(hull.beam_m), draft_m=float(hull.draft_m),
        block_coefficient=0.45, speed_mps=sc.speed_mps, omega_grid=omega_grid, beta_grid=beta_grid,
        roll_damping_ratio=0.1, gm_m=0.6,
    )  # fmt: skip
    toward = np.radians(sc.wave_from_deg) + np.pi
    # craft headings putting the mean sea ahead, abeam (from port) and astern
    cases = {"head sea": toward + np.pi, "beam sea": toward - 0.5 * np.pi, "following sea": toward}
    heads = np.array(list(cases.values()))
    sig = significant_amplitude(rao, spec, spread, heads, np.linspace(0.05, 6.0, 600))
    drift = DriftModel.for_hull(comps, length_m=float(hull.length_m), beam_m=float(hull.beam_m),
                                draft_m=float(hull.draft_m))  # fmt: skip
    lines = [
        f"{craft.name}: significant wave-frequency motion (2 sqrt(m0)) at {sc.speed_mps:.1f} m/s, "
        "closed-form RAOs (Jensen, Mansour & Olsen 2004 heave/pitch; roll model of our own)",
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
    fig = line_chart(
        [Series(omega_grid, np.abs(head[:, 2]), "heave, head sea [m/m]"),
         Series(omega_grid, np.abs(head[:, 4]), "pitch, head sea [rad/m]"),
         Series(omega_grid, np.abs(beam[:, 3]), "roll, beam sea [rad/m]")],
        title=f"RAO amplitudes at {sc.speed_mps:.1f} m/s", xlabel="wave frequency omega [rad/s]",
        ylabel="|RAO|",
    )  # fmt: skip
    return "\n".join(lines), {"rao": fig}


def _loop_section(sc: DemoScenario, craft: CraftParams, comps: WaveComponents,
                  progress: bool) -> tuple[str, dict[str, str]]:  # fmt: skip
    hull = craft.hull
    n = comps.n_trials
    drift = DriftModel.for_hull(comps, length_m=float(hull.length_m), beam_m=float(hull.beam_m),
                                draft_m=float(hull.draft_m))  # fmt: skip
    plant = Plant.build(hull, n, comps, drift)
    line = np.radians(sc.line_heading_deg)
    ones = np.ones(n)
    m33 = float(hull.izz_kgm2 - hull.n_rdot)
    pilot = HoldPilot(
        u_ref_mps=sc.speed_mps * ones, psi_ref_rad=line * ones, k_u=3000.0 * ones,
        k_psi=0.25 * m33 * ones, k_r=0.15 * m33 * ones, x_max_n=4500.0 * ones, n_max_nm=6000.0 * ones,
    )  # fmt: skip
    cur_dir = np.radians(sc.current_set_deg)
    current = np.tile([sc.current_mps * np.cos(cur_dir), sc.current_mps * np.sin(cur_dir)], (n, 1))
    dt, chunk = 0.1, 100
    n_chunks = round(sc.duration_s / (dt * chunk))
    eta = np.zeros((n, 3))
    eta[:, 2] = line
    nu = np.zeros((n, 3))
    nu[:, 0] = sc.speed_mps
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
        f"{sc.speed_mps:.1f} m/s (heading-and-speed hold, no cross-track correction)",
        f"  stream {sc.current_mps:.1f} m/s setting {sc.current_set_deg:.0f} deg; each trial its own sea",
        f"  distance along the line after {sc.duration_s:.0f} s: mean {along[:, -1].mean():.0f} m",
        f"  set off the line after {sc.duration_s:.0f} s: mean {final.mean():.1f} m, "
        f"5-95 % range {np.percentile(final, 5):.1f} to {np.percentile(final, 95):.1f} m",
        f"  final heading error: mean {heading_err.mean():.2f} deg, sd {heading_err.std():.2f} deg",
        "  (a line-following guide that removes this offset comes with the trial runner)",
    ]
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
    sea_text, f1 = _sea_section(sc, spec, comps)
    motion_text, f2 = _motion_section(sc, craft, spec, spread, comps)
    loop_text, f3 = _loop_section(sc, craft, comps, progress)
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
