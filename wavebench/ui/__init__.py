"""Notebook panels for wavebench (ipywidgets + bqplot).

This is the only part of wavebench that imports Jupyter packages; the engine
runs headless without it. Every panel also carries a static twin (HTML with
inline SVG, see :mod:`wavebench.ui.twin`) so a notebook opened without a
kernel, or converted to HTML, still shows its verdicts and plots.
"""
