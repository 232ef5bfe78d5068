"""The sea panel: the ``[sea]`` controls with live plots of what they mean.

:class:`SeaPanel` shows the sea table's generated controls
(:mod:`wavebench.ui.controls`) beside three bqplot figures, all computed by
the package's own sea functions:

* the wave spectrum S(omega) (:class:`~wavebench.sea.spectra.SeaSpectrum`)
  with its WMO sea-state code (:mod:`wavebench.sea.seastate`);
* the directional spreading density D against the direction waves come
  from (:class:`~wavebench.sea.spreading.DirectionalSpreading`);
* a sample elevation record at the origin
  (:func:`~wavebench.sea.realisation.realise_sea`), drawn from trial 0's
  stream of the campaign seed, so it is the same every time.

A field holding a distribution is plotted at its representative value
(:func:`~wavebench.spec.fields.representative`: the midpoint of a uniform,
the mean of a normal, the median of a lognormal, the first value of a
choice or grid) and the panel says so. Each accepted change redraws once,
with every figure's updates batched (``hold_sync``). The static twin draws
the same curves as inline SVG with a table of the values.
"""

from __future__ import annotations

import contextlib
import math
import warnings
from dataclasses import dataclass, field
from typing import Any

import bqplot
import ipywidgets as widgets
import numpy as np

from ..core.errors import WavebenchWarning
from ..core.streams import TrialStreams
from ..report.html import cell_number, escape
from ..report.svg import Series, line_chart
from ..sea.realisation import realise_sea
from ..sea.seastate import sea_state_band, sea_state_code
from ..sea.spectra import SeaSpectrum, spectral_moment
from ..sea.spreading import DirectionalSpreading, nautical_from_deg_to_toward_rad
from ..spec.distributions import distribution_to_data
from ..spec.fields import DIST_TYPES, representative
from ..spec.schema import Spec
from .controls import SpecEditor
from .twin import EditorPanel

__all__ = ["RECORD_DT_S", "RECORD_MAX_S", "SeaPanel", "SeaView", "sea_view"]

#: Sample interval of the elevation record [s].
RECORD_DT_S = 0.25
#: Longest elevation record drawn [s] (the scenario's duration if shorter).
RECORD_MAX_S = 300.0
#: Points of the spectrum curve.
N_OMEGA = 600
#: The spectrum is drawn up to this multiple of the peak frequency.
OMEGA_MAX_OVER_PEAK = 6.0


@dataclass
class SeaView:
    """What the sea panel plots, computed from a spec.

    Attributes
    ----------
    omega_radps, s_m2s : ndarray of shape (N_OMEGA,)
        Angular frequency [rad/s] and spectral density S(omega) [m^2 s/rad].
    hs_m, tp_s : float
        The values plotted [m], [s].
    gamma : float
        Peak enhancement in force (1 for PM, the DNV rule when absent).
    code : int
        WMO sea-state code (code table 3700) of ``hs_m``.
    description : str
        Its WMO description.
    from_deg, spreading_per_rad : ndarray
        Direction waves come from [deg] and the spreading density [1/rad]
        (a spike at the mean direction for a long-crested sea).
    t_s, elevation_m : ndarray of shape (n_t,)
        Time [s] and elevation [m] at the origin for trial 0.
    seed : int
        The campaign seed the record is drawn from.
    notes : list of str
        Which values are representative values of distributions, and any
        validity warnings.
    """

    omega_radps: np.ndarray
    s_m2s: np.ndarray
    hs_m: float
    tp_s: float
    gamma: float
    code: int
    description: str
    from_deg: np.ndarray
    spreading_per_rad: np.ndarray
    t_s: np.ndarray
    elevation_m: np.ndarray
    seed: int
    values: list[tuple[str, str]] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)


def _plotted(name: str, value: Any, unit: str, notes: list[str]) -> float:
    """The value plotted for a field, noting when it stands for a distribution."""
    if isinstance(value, DIST_TYPES):
        rep = float(representative(value))
        kind = next(iter(distribution_to_data(value)))
        notes.append(f"{name} is a distribution ({kind}); plotted at its representative value {rep:.4g}{unit}")
        return rep
    return float(value)


def sea_view(spec: Spec) -> SeaView | None:
    """Compute the sea panel's curves from ``spec`` (None without ``[sea]``).

    Parameters
    ----------
    spec : Spec

    Returns
    -------
    SeaView or None
    """
    sea = spec.sea
    if sea is None:
        return None
    notes: list[str] = []
    hs = _plotted("sea.hs_m", sea.hs_m, " m", notes)
    tp = _plotted("sea.tp_s", sea.tp_s, " s", notes)
    gamma = None if sea.gamma is None else _plotted("sea.gamma", sea.gamma, "", notes)
    depth = _plotted("sea.depth_m", sea.depth_m, " m", notes)
    sp = sea.spreading
    exponent = _plotted("sea.spreading.exponent", sp.exponent, "", notes)
    mean_dir = _plotted("sea.spreading.mean_dir_deg", sp.mean_dir_deg, " deg", notes)
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", WavebenchWarning)
        spectrum = SeaSpectrum(kind=sea.kind, hs_m=hs, tp_s=tp, gamma=gamma)
    notes.extend(str(w.message) for w in caught if issubclass(w.category, WavebenchWarning))
    spreading = DirectionalSpreading(kind=sp.kind, exponent=exponent, mean_dir_deg=mean_dir)

    wp = 2.0 * math.pi / tp
    omega = np.linspace(0.0, OMEGA_MAX_OVER_PEAK * wp, N_OMEGA)
    s = np.asarray(spectrum.density(omega), dtype=float)
    code = int(sea_state_code(hs))

    from_deg = np.linspace(0.0, 360.0, 721)
    if sp.kind == "long_crested":
        m = mean_dir % 360.0
        from_deg, dens = np.array([m, m]), np.array([0.0, 1.0])
        notes.append("long-crested sea: all energy comes from the mean direction (drawn as a spike of height 1)")
    else:
        dens = np.asarray(spreading.density(nautical_from_deg_to_toward_rad(from_deg)), dtype=float)

    duration = min(RECORD_MAX_S, spec.scenario.duration_s)
    t = np.arange(0.0, duration + 0.5 * RECORD_DT_S, RECORD_DT_S)
    streams = TrialStreams(seed=spec.campaign.seed, trials=(0,))
    comps = realise_sea(spectrum, spreading, streams, n_components=sea.n_components, depth_m=depth)
    zeros = np.zeros((1, t.size))
    eta = comps.elevation(zeros, zeros, t[None, :])[0]

    gamma_force = float(spectrum.gamma_value())
    m0 = float(spectral_moment(omega, s, 0))
    values = [
        ("spectral form", sea.kind),
        ("Hs [m]", cell_number(hs)),
        ("Tp [s]", cell_number(tp)),
        ("gamma", cell_number(gamma_force) + (" (DNV rule)" if sea.gamma is None and sea.kind == "jonswap" else "")),
        ("sea-state code (WMO 3700)", f"{code}: {sea_state_band(code).description}"),
        ("Hm0 = 4 sqrt(m0) of the plotted curve [m]", cell_number(4.0 * math.sqrt(m0))),
        ("components", str(sea.n_components)),
        ("water depth [m]", cell_number(depth)),
        ("spreading", f"{sp.kind}, exponent {exponent:.4g}"),
        ("mean direction, waves from [deg]", cell_number(mean_dir)),
        ("record seed (trial 0)", str(spec.campaign.seed)),
    ]
    return SeaView(
        omega_radps=omega, s_m2s=s, hs_m=hs, tp_s=tp, gamma=gamma_force, code=code,
        description=sea_state_band(code).description, from_deg=from_deg, spreading_per_rad=dens,
        t_s=t, elevation_m=np.asarray(eta, dtype=float), seed=int(spec.campaign.seed), values=values, notes=notes,
    )  # fmt: skip


def _line_figure(title: str, xlabel: str, ylabel: str, color: str) -> tuple[bqplot.Figure, bqplot.Lines]:
    sx, sy = bqplot.LinearScale(), bqplot.LinearScale()
    line = bqplot.Lines(x=np.zeros(2), y=np.zeros(2), scales={"x": sx, "y": sy}, colors=[color])
    ax = bqplot.Axis(scale=sx, label=xlabel)
    ay = bqplot.Axis(scale=sy, label=ylabel, side="left", tick_format=".3~g", label_offset="48px")
    fig = bqplot.Figure(marks=[line], axes=[ax, ay], title=title,
                        layout=widgets.Layout(width="440px", height="280px"),
                        fig_margin={"top": 40, "bottom": 45, "left": 68, "right": 15})  # fmt: skip
    return fig, line


class SeaPanel(EditorPanel):
    """The ``[sea]`` controls with the spectrum, spreading and a sample record.

    Parameters
    ----------
    spec : Spec
        The starting spec; the panel edits its ``[sea]`` table.

    Attributes
    ----------
    editor : SpecEditor
        The generated controls of ``[sea]``; its file row saves and loads the whole spec;
        ``editor.spec`` is the current valid spec.
    view : SeaView or None
        What is plotted now.
    spectrum_line, spreading_line, elevation_line : bqplot.Lines
        The live curves.
    redraws : int
        How many times the figures were redrawn (once per accepted change).
    widget : ipywidgets.VBox
        The panel.

    Examples
    --------
    >>> from wavebench.spec import example_spec_path, load_spec
    >>> panel = SeaPanel(load_spec(example_spec_path("skerrow_sound")))
    >>> panel.view.code, panel.view.description
    (3, 'Slight')
    """

    title = "sea"

    def __init__(self, spec: Spec) -> None:
        self.editor = SpecEditor(spec, tables=("sea",))
        self.redraws = 0
        palette = ("#1b6f8a", "#6a994e", "#8d6a9f")
        self.spectrum_fig, self.spectrum_line = _line_figure("wave spectrum", "omega [rad/s]", "S [m² s/rad]",
                                                             palette[0])  # fmt: skip
        self.spreading_fig, self.spreading_line = _line_figure("directional spreading", "waves from [deg]",
                                                               "D [1/rad]", palette[1])  # fmt: skip
        self.elevation_fig, self.elevation_line = _line_figure("elevation at the origin", "t [s]",
                                                               "elevation [m]", palette[2])  # fmt: skip
        self.code_label = widgets.HTML()
        self.notes = widgets.HTML()
        figs = widgets.HBox([self.spectrum_fig, self.spreading_fig, self.elevation_fig],
                            layout=widgets.Layout(flex_flow="row wrap"))  # fmt: skip
        self.widget = widgets.VBox([self.editor.widget, self.code_label, figs, self.notes])
        self._follow_editor()

    def _redraw(self, spec: Spec) -> None:
        key = (spec.sea, spec.campaign.seed, spec.scenario.duration_s)
        if key == self._key:
            return
        self._key = key
        view = sea_view(spec)
        self.view = view
        self.redraws += 1
        lines = (self.spectrum_line, self.spreading_line, self.elevation_line)
        figs = (self.spectrum_fig, self.spreading_fig, self.elevation_fig)
        with contextlib.ExitStack() as stack:
            for w in (*lines, *figs):
                stack.enter_context(w.hold_sync())
            if view is None:
                for line in lines:
                    line.x, line.y = np.zeros(0), np.zeros(0)
                self.code_label.value = "<b>no [sea] table: calm water</b>"
                self.notes.value = ""
                return
            self.spectrum_line.x, self.spectrum_line.y = view.omega_radps, view.s_m2s
            self.spreading_line.x, self.spreading_line.y = view.from_deg, view.spreading_per_rad
            self.elevation_line.x, self.elevation_line.y = view.t_s, view.elevation_m
            self.spectrum_fig.title = f"wave spectrum, Hs {view.hs_m:.3g} m, Tp {view.tp_s:.3g} s"
            self.elevation_fig.title = f"elevation at the origin, trial 0 (seed {view.seed})"
            self.code_label.value = f"<b>sea state {view.code}</b> (WMO code table 3700): {escape(view.description)}"
            self.notes.value = "".join(f"<div>{escape(n)}</div>" for n in view.notes)

    def static_html(self) -> str:
        """The three plots as inline SVG and a table of the values."""
        view = self.view
        if view is None:
            return "<p>No [sea] table: calm water.</p>"
        svgs = [
            line_chart([Series(view.omega_radps, view.s_m2s)], title=f"wave spectrum, sea state {view.code}",
                       xlabel="omega [rad/s]", ylabel="S [m² s/rad]", width=420, height=260),
            line_chart([Series(view.from_deg, view.spreading_per_rad, color="#6a994e")],
                       title="directional spreading", xlabel="waves from [deg]", ylabel="D [1/rad]",
                       width=420, height=260),
            line_chart([Series(view.t_s, view.elevation_m, color="#8d6a9f", width=1.0)],
                       title=f"sample elevation (seed {view.seed}, trial 0)", xlabel="t [s]",
                       ylabel="elevation [m]", width=420, height=260),
        ]  # fmt: skip
        rows = "".join(f"<tr><th style='text-align:left'>{escape(k)}</th><td>{escape(v)}</td></tr>"
                       for k, v in view.values)  # fmt: skip
        notes = "".join(f"<li>{escape(n)}</li>" for n in view.notes)
        return (
            f"<p><b>sea state {view.code}</b> (WMO code table 3700): {escape(view.description)}</p>"
            f"<table>{rows}</table>" + (f"<ul>{notes}</ul>" if notes else "")
            + '<div style="display:flex;flex-wrap:wrap;gap:8px">' + "".join(svgs) + "</div>"
        )  # fmt: skip
