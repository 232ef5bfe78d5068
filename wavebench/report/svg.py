"""Static SVG charts with no plotting dependency.

Every result wavebench shows interactively also renders as static SVG, so a
report or a notebook shared without a live kernel still shows its plots.
This module draws the few chart kinds the reports need — line charts with
labelled axes and a legend, optionally with equal axis scales for tracks —
as plain SVG text.
"""

from __future__ import annotations

import hashlib
import html
import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

__all__ = ["PALETTE", "Series", "Svg", "line_chart", "nice_ticks"]

#: Series colours, in order of use.
PALETTE = ("#1b6f8a", "#c8553d", "#6a994e", "#8d6a9f", "#d4a017", "#4a4a4a")


class Svg(str):
    """SVG text that notebooks display as a picture (``_repr_svg_``).

    It is a plain ``str`` everywhere else, so it can be written to files or
    embedded in HTML as is.
    """

    def _repr_svg_(self) -> str:
        return str(self)

    def __repr__(self) -> str:
        return f"<Svg chart, {len(self)} characters>"


@dataclass(frozen=True)
class Series:
    """One line of a chart.

    Parameters
    ----------
    x, y : array_like of shape (n,)
        Coordinates in data units; NaN breaks the line.
    label : str
        Legend text ("" for none).
    color : str or None
        SVG colour; the palette's next colour when None.
    width : float
        Stroke width [px].
    dashed : bool
        Draw dashed.
    opacity : float
        Stroke opacity in [0, 1].
    """

    x: ArrayLike
    y: ArrayLike
    label: str = ""
    color: str | None = None
    width: float = 1.6
    dashed: bool = False
    opacity: float = 1.0


def nice_ticks(lo: float, hi: float, n: int = 5) -> list[float]:
    """Round tick positions covering [lo, hi] (1, 2, 5 x 10^k steps).

    Examples
    --------
    >>> nice_ticks(0.0, 1.0)
    [0.0, 0.2, 0.4, 0.6, 0.8, 1.0]
    """
    if not (math.isfinite(lo) and math.isfinite(hi)) or hi <= lo:
        return [lo]
    raw = (hi - lo) / max(n, 1)
    mag = 10.0 ** math.floor(math.log10(raw))
    step = next(m * mag for m in (1.0, 2.0, 5.0, 10.0) if m * mag >= raw)
    start = math.ceil(lo / step - 1e-9) * step
    ticks = []
    k = 0
    while start + k * step <= hi + 1e-9 * step:
        ticks.append(round(start + k * step, 12))
        k += 1
    return ticks


def _fmt(v: float) -> str:
    if v == 0:
        return "0"
    a = abs(v)
    if a >= 1e4 or a < 1e-3:
        return f"{v:.2g}"
    return f"{v:g}"


def padded_span(arrays: Sequence[ArrayLike], pad: float = 0.03) -> tuple[float, float]:
    """The range of the finite values of ``arrays``, widened by ``pad`` of its width at each end.

    Parameters
    ----------
    arrays : sequence of array_like
        Values in the axis' unit; NaN and inf are ignored.
    pad : float
        Fraction of the range added below and above.

    Returns
    -------
    (float, float)
        ``(0, 1)`` when nothing is finite; a single value ``v`` spans ``v +- 0.5`` before padding.

    Examples
    --------
    >>> padded_span([[0.0, 10.0, float("nan")]], pad=0.1)
    (-1.0, 11.0)
    """
    vals = [np.asarray(a, dtype=float).ravel() for a in arrays]
    v = np.concatenate([a[np.isfinite(a)] for a in vals]) if vals else np.array([])
    if v.size == 0:
        return 0.0, 1.0
    lo, hi = float(v.min()), float(v.max())
    if hi == lo:
        lo, hi = lo - 0.5, hi + 0.5
    margin = pad * (hi - lo)
    return lo - margin, hi + margin


def _content_id(*parts: object) -> str:
    """12 hex digits of a SHA-1 over ``parts`` (arrays by their bytes): stable for the same content."""
    h = hashlib.sha1()
    for p in parts:
        h.update(np.ascontiguousarray(p).tobytes() if isinstance(p, np.ndarray) else repr(p).encode())
    return h.hexdigest()[:12]


def line_chart(
    series: Sequence[Series],
    *,
    title: str = "",
    xlabel: str = "",
    ylabel: str = "",
    width: int = 560,
    height: int = 320,
    equal_axes: bool = False,
    xlim: tuple[float, float] | None = None,
    ylim: tuple[float, float] | None = None,
) -> Svg:
    """Render line series as an SVG document fragment.

    Parameters
    ----------
    series : sequence of Series
        Lines to draw, in order.
    title, xlabel, ylabel : str
        Texts (with units, e.g. ``"east [m]"``).
    width, height : int
        Size [px].
    equal_axes : bool
        One data unit has the same length on both axes (for tracks).
    xlim, ylim : (float, float), optional
        Axis ranges; from the data when omitted.

    Returns
    -------
    Svg
        An ``<svg>`` element (a ``str`` that notebooks display as a picture).
    """
    left, right, top, bottom = 62, 16, 30 if title else 12, 44
    pw, ph = width - left - right, height - top - bottom
    xs = [np.asarray(s.x, dtype=float) for s in series]
    ys = [np.asarray(s.y, dtype=float) for s in series]

    x0, x1 = xlim if xlim else padded_span(xs)
    y0, y1 = ylim if ylim else padded_span(ys)
    if equal_axes:
        sx, sy = pw / (x1 - x0), ph / (y1 - y0)
        s = min(sx, sy)
        cx, cy = 0.5 * (x0 + x1), 0.5 * (y0 + y1)
        x0, x1 = cx - 0.5 * pw / s, cx + 0.5 * pw / s
        y0, y1 = cy - 0.5 * ph / s, cy + 0.5 * ph / s

    def px(x: np.ndarray) -> np.ndarray:
        return left + (x - x0) / (x1 - x0) * pw

    def py(y: np.ndarray) -> np.ndarray:
        return top + ph - (y - y0) / (y1 - y0) * ph

    out = [
        f'<svg xmlns="http://www.w3.org/2000/svg" width="{width}" height="{height}" '
        f'viewBox="0 0 {width} {height}" font-family="sans-serif" font-size="11">',
        f'<rect x="{left}" y="{top}" width="{pw}" height="{ph}" fill="#fbfbf8" stroke="#999"/>',
    ]
    if title:
        out.append(f'<text x="{left}" y="18" font-size="13" font-weight="bold">{html.escape(title)}</text>')
    for t in nice_ticks(x0, x1):
        X = float(px(np.array(t)))
        out.append(f'<line x1="{X:.1f}" y1="{top}" x2="{X:.1f}" y2="{top + ph}" stroke="#e2e2dc"/>')
        out.append(f'<text x="{X:.1f}" y="{top + ph + 14}" text-anchor="middle">{_fmt(t)}</text>')
    for t in nice_ticks(y0, y1):
        Y = float(py(np.array(t)))
        out.append(f'<line x1="{left}" y1="{Y:.1f}" x2="{left + pw}" y2="{Y:.1f}" stroke="#e2e2dc"/>')
        out.append(f'<text x="{left - 6}" y="{Y + 4:.1f}" text-anchor="end">{_fmt(t)}</text>')
    out.append(f'<text x="{left + pw / 2}" y="{height - 8}" text-anchor="middle">{html.escape(xlabel)}</text>')
    out.append(
        f'<text x="14" y="{top + ph / 2}" text-anchor="middle" '
        f'transform="rotate(-90 14 {top + ph / 2})">{html.escape(ylabel)}</text>'
    )
    # the clip id follows the content (the same chart gives the same bytes on every run; two different charts
    # in one page get different ids)
    clip = "plot" + _content_id(title, xlabel, ylabel, width, height, x0, x1, y0, y1, *xs, *ys)
    out.append(f'<clipPath id="{clip}"><rect x="{left}" y="{top}" width="{pw}" height="{ph}"/></clipPath>')
    legend = []
    for k, (s, x, y) in enumerate(zip(series, xs, ys, strict=True)):
        color = s.color or PALETTE[k % len(PALETTE)]
        X, Y = px(x), py(y)
        parts, pen = [], False
        for a, b in zip(X, Y, strict=True):
            if math.isfinite(a) and math.isfinite(b):
                parts.append(f"{'L' if pen else 'M'}{a:.1f},{b:.1f}")
                pen = True
            else:
                pen = False
        dash = ' stroke-dasharray="5,3"' if s.dashed else ""
        out.append(
            f'<path d="{" ".join(parts)}" fill="none" stroke="{color}" stroke-width="{s.width}" '
            f'stroke-opacity="{s.opacity}"{dash} clip-path="url(#{clip})"/>'
        )
        if s.label:
            legend.append((s.label, color, s.dashed))
    for k, (label, color, dashed) in enumerate(legend):
        Y = top + 14 + 14 * k
        dash = ' stroke-dasharray="5,3"' if dashed else ""
        out.append(f'<line x1="{left + pw - 150}" y1="{Y - 4}" x2="{left + pw - 130}" y2="{Y - 4}" '
                   f'stroke="{color}" stroke-width="2"{dash}/>')  # fmt: skip
        out.append(f'<text x="{left + pw - 125}" y="{Y}">{html.escape(label)}</text>')
    out.append("</svg>")
    return Svg("\n".join(out))
