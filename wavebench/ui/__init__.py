"""Notebook panels for wavebench (ipywidgets + bqplot).

This is the only part of wavebench that imports Jupyter packages; the engine
runs headless without it. Every panel also carries a static twin (HTML
tables, the charts as SVG images, see :mod:`wavebench.ui.twin`) so a notebook
opened without a kernel, untrusted, or converted to HTML, still shows its
verdicts and plots.

Panels
------
SpecEditor
    Controls generated from the spec's own field metadata; the last valid
    spec, refusals shown beside their control, TOML save/load.
SeaPanel, EnvironmentPanel, StackPanel
    The sea (spectrum, spreading, an elevation record), the current, wind
    and seabed, and the stack's roles with its loop diagram.
TrialPlayer
    One trial of a campaign replayed alone, on a map with time plots.
CampaignDashboard
    A stored or running campaign: verdicts, distributions, bands, scatter
    (click a point to play that trial), drivers and operability.
"""

from .controls import SpecEditor
from .dashboard import CampaignDashboard
from .environment_panel import EnvironmentPanel
from .player import TrialPlayer
from .sea_panel import SeaPanel
from .stack_panel import StackPanel

__all__ = ["CampaignDashboard", "EnvironmentPanel", "SeaPanel", "SpecEditor", "StackPanel", "TrialPlayer"]
