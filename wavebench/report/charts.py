"""Static SVG charts for campaign reports and the static twins of the panels.

Chart kinds on top of :mod:`wavebench.report.svg`: a histogram of one
per-trial metric (with optional requirement markers), a band chart that
fills the area between percentile curves over time, signed horizontal bars,
a matrix of shares, a scatter of points in coloured groups, and a map (east
to the right, north up, equal scales) over a shaded depth raster. All return
:class:`~wavebench.report.svg.Svg` text with no script and no external
resource, so they can be inlined in a self-contained HTML page.

Each chart records its data ranges on the root element (``data-xlim``,
``data-ylim``) and its plotting area as ``<rect class="plot-area">``, so a
reader (or a test) can map pixel coordinates back to data units; histogram
bars carry their bin edges and count as ``data-lo``, ``data-hi`` and
``data-count``.
"""

from __future__ import annotations

import html
import math
from collections.abc import Callable, Sequence

import numpy as np
from numpy.typing import ArrayLike

from ..core.errors import ParameterError
from .svg import PALETTE, Series, Svg, _content_id, _fmt, nice_ticks, padded_span

__all__ = [
    "MAP_DEPTH_COLORS",
    "MAP_DEPTH_LEVELS",
    "SHARE_COLORS",
    "band_chart",
    "histogram_chart",
    "histogram_counts",
    "map_chart",
    "scatter_chart",
    "share_color",
    "share_matrix_chart",
    "signed_bar_chart",
]

_BG = "#fbfbf8"
_GRID = "#e2e2dc"
_FRAME = "#999"
_MARKER = "#b3261e"
_SHADE = "#5f5f5f"


def _uid(*parts: object) -> str:
    """A short id that is stable for the same content (for clip paths in one page)."""
    return "c" + _content_id(*parts)


def _text_width(text: str, size: float = 11.0) -> float:
    """Rough width of sans-serif text [px] (0.6 em per character; common practice, no source)."""
    return 0.6 * size * len(text)


class _Axes:
    """Frame, grid, ticks and labels of one chart; maps data to pixels."""

    def __init__(
        self,
        *,
        width: int,
        height: int,
        top: int,
        xlim: tuple[float, float],
        ylim: tuple[float, float],
        left: int = 62,
        right: int = 16,
        bottom: int = 44,
    ) -> None:
        self.width, self.height = width, height
        self.left, self.top = left, top
        self.pw, self.ph = width - left - right, height - top - bottom
        self.x0, self.x1 = xlim
        self.y0, self.y1 = ylim

    def px(self, x: np.ndarray | float) -> np.ndarray:
        return self.left + (np.asarray(x, dtype=float) - self.x0) / (self.x1 - self.x0) * self.pw

    def py(self, y: np.ndarray | float) -> np.ndarray:
        return self.top + self.ph - (np.asarray(y, dtype=float) - self.y0) / (self.y1 - self.y0) * self.ph

    def open(self, title: str, note: str = "") -> list[str]:
        w, h, left, top, pw, ph = self.width, self.height, self.left, self.top, self.pw, self.ph
        out = [
            f'<svg xmlns="http://www.w3.org/2000/svg" width="{w}" height="{h}" viewBox="0 0 {w} {h}" '
            f'font-family="sans-serif" font-size="11" data-xlim="{self.x0!r} {self.x1!r}" '
            f'data-ylim="{self.y0!r} {self.y1!r}">',
            f'<rect class="plot-area" x="{left}" y="{top}" width="{pw}" height="{ph}" fill="{_BG}" stroke="{_FRAME}"/>',
        ]
        if title:
            out.append(f'<text x="{left}" y="18" font-size="13" font-weight="bold">{html.escape(title)}</text>')
        if note:
            out.append(f'<text x="{left + pw}" y="18" text-anchor="end" fill="#555">{html.escape(note)}</text>')
        return out

    def grid(self, out: list[str], xlabel: str, ylabel: str, yticks: Sequence[float] | None = None) -> None:
        left, top, pw, ph = self.left, self.top, self.pw, self.ph
        for t in nice_ticks(self.x0, self.x1):
            X = float(self.px(t))
            out.append(f'<line x1="{X:.1f}" y1="{top}" x2="{X:.1f}" y2="{top + ph}" stroke="{_GRID}"/>')
            out.append(f'<text x="{X:.1f}" y="{top + ph + 14}" text-anchor="middle">{_fmt(t)}</text>')
        for t in nice_ticks(self.y0, self.y1) if yticks is None else yticks:
            Y = float(self.py(t))
            out.append(f'<line x1="{left}" y1="{Y:.1f}" x2="{left + pw}" y2="{Y:.1f}" stroke="{_GRID}"/>')
            out.append(f'<text x="{left - 6}" y="{Y + 4:.1f}" text-anchor="end">{_fmt(t)}</text>')
        out.append(
            f'<text x="{left + pw / 2:.1f}" y="{self.height - 8}" text-anchor="middle">{html.escape(xlabel)}</text>'
        )
        out.append(
            f'<text x="14" y="{top + ph / 2:.1f}" text-anchor="middle" '
            f'transform="rotate(-90 14 {top + ph / 2:.1f})">{html.escape(ylabel)}</text>'
        )


def _check_size(width: int, height: int) -> None:
    if not (isinstance(width, (int, np.integer)) and width >= 160):
        raise ParameterError("width", width, "an integer >= 160 [px]")
    if not (isinstance(height, (int, np.integer)) and height >= 120):
        raise ParameterError("height", height, "an integer >= 120 [px]")


def _default_bins(n: int) -> int:
    """Square-root choice of the bin count, kept within 5..30 (common practice, no source)."""
    return int(min(30, max(5, math.ceil(math.sqrt(max(n, 1))))))


def histogram_counts(values: ArrayLike, bins: int | ArrayLike | None = None) -> tuple[np.ndarray, np.ndarray, int, int]:
    """Bin the finite values; count what was left out.

    Parameters
    ----------
    values : array_like
        Data (any shape; flattened). NaN and +-inf are not binned.
    bins : int or array_like of shape (n_bins + 1,), optional
        Number of equal-width bins spanning the finite data (the square-root
        choice, 5 to 30 bins, when None), or increasing bin edges.

    Returns
    -------
    counts : ndarray of shape (n_bins,), int64
        Values per bin; every bin is half-open ``[lo, hi)`` but the last,
        which also holds its upper edge.
    edges : ndarray of shape (n_bins + 1,)
        Bin edges in data units.
    n_nonfinite : int
        NaN and infinite values left out.
    n_outside : int
        Finite values outside the edges (only with explicit edges).

    Examples
    --------
    >>> counts, edges, n_nan, n_out = histogram_counts([0.0, 0.5, 1.0, float("nan")], bins=2)
    >>> counts.tolist(), edges.tolist(), n_nan, n_out
    ([1, 2], [0.0, 0.5, 1.0], 1, 0)
    """
    v = np.asarray(values, dtype=float).ravel()
    finite = np.isfinite(v)
    n_nonfinite = int(v.size - np.count_nonzero(finite))
    v = v[finite]
    if bins is None or np.ndim(bins) == 0:
        k = _default_bins(v.size) if bins is None else bins
        if isinstance(k, (bool, np.bool_)) or not isinstance(k, (int, np.integer)) or k < 1:
            raise ParameterError("bins", bins, "a bin count >= 1 or an increasing sequence of bin edges")
        if v.size:
            lo, hi = float(v.min()), float(v.max())
        else:
            lo, hi = 0.0, 1.0
        if hi == lo:
            lo, hi = lo - 0.5, hi + 0.5
        edges = np.linspace(lo, hi, int(k) + 1)
    else:
        edges = np.asarray(bins, dtype=float)
        if edges.ndim != 1 or edges.size < 2 or not np.all(np.isfinite(edges)) or np.any(np.diff(edges) <= 0):
            raise ParameterError("bins", bins, "a bin count >= 1 or an increasing sequence of bin edges")
    n_bins = edges.size - 1
    idx = np.searchsorted(edges, v, side="right") - 1
    idx[v == edges[-1]] = n_bins - 1  # the last bin is closed on the right
    inside = (idx >= 0) & (idx < n_bins)
    counts = np.bincount(idx[inside], minlength=n_bins).astype(np.int64)
    return counts, edges, n_nonfinite, int(np.count_nonzero(~inside))


def _as_list(x: object) -> list:
    if x is None:
        return []
    if isinstance(x, str):
        return [x]
    if isinstance(x, Sequence) or isinstance(x, np.ndarray):
        return list(x)
    return [x]


def histogram_chart(
    values: ArrayLike,
    *,
    bins: int | ArrayLike | None = None,
    title: str = "",
    xlabel: str = "",
    ylabel: str = "trials",
    threshold: float | Sequence[float] | None = None,
    threshold_label: str | Sequence[str] = "",
    color: str | None = None,
    width: int = 540,
    height: int = 300,
) -> Svg:
    """Render a histogram of one quantity as SVG.

    Parameters
    ----------
    values : array_like
        Data (flattened); NaN and infinite values are left out and counted
        in a note above the plot.
    bins : int or array_like, optional
        Bin count or edges, as in :func:`histogram_counts`.
    title, xlabel, ylabel : str
        Texts (with units, e.g. ``"xte_p95_m [m]"``).
    threshold : float or sequence of float, optional
        Marker(s) drawn as dashed vertical lines (e.g. a requirement's
        threshold); the x range grows to show them.
    threshold_label : str or sequence of str
        Text beside each marker.
    color : str, optional
        Bar colour; the first palette colour when None.
    width, height : int
        Size [px].

    Returns
    -------
    Svg
        An ``<svg>`` element. Each bar is a ``<rect class="bar">`` with
        ``data-lo``, ``data-hi`` (bin edges, exact ``repr`` of the floats)
        and ``data-count``.

    Examples
    --------
    >>> svg = histogram_chart([1.0, 2.0, 2.5, float("nan")], bins=3, title="t", threshold=2.2)
    >>> svg.count('class="bar"'), "1 NaN/inf not shown" in svg
    (3, True)
    """
    _check_size(width, height)
    counts, edges, n_bad, n_out = histogram_counts(values, bins)
    marks = [float(t) for t in _as_list(threshold)]
    labels = [str(s) for s in _as_list(threshold_label)]
    labels += [""] * (len(marks) - len(labels))
    if any(not math.isfinite(t) for t in marks):
        raise ParameterError("threshold", threshold, "finite numbers")
    n_shown = int(counts.sum())
    empty = n_shown == 0

    lo, hi = float(edges[0]), float(edges[-1])
    for t in marks:
        lo, hi = min(lo, t), max(hi, t)
    pad = 0.03 * (hi - lo)
    xlim = (lo - pad, hi + pad)
    cmax = int(counts.max()) if counts.size else 0
    ticks = [t for t in nice_ticks(0.0, max(cmax, 1)) if float(t).is_integer()] or [0.0]
    ylim = (0.0, max(max(cmax, 1) * 1.1, ticks[-1]))
    ax = _Axes(width=width, height=height, top=30 if (title or n_bad or n_out) else 12, xlim=xlim, ylim=ylim)

    note = [f"n = {n_shown}"]
    if n_bad:
        note.append(f"{n_bad} NaN/inf not shown")
    if n_out:
        note.append(f"{n_out} outside the bins")
    out = ax.open(title, ", ".join(note))
    ax.grid(out, xlabel, ylabel, ticks)
    fill = color or PALETTE[0]
    y_base = float(ax.py(0.0))
    for c, a, b in zip(counts, edges[:-1], edges[1:], strict=True):
        xa, xb = float(ax.px(a)), float(ax.px(b))
        yc = float(ax.py(float(c)))
        out.append(
            f'<rect class="bar" x="{xa:.2f}" y="{yc:.2f}" width="{xb - xa:.2f}" height="{y_base - yc:.2f}" '
            f'fill="{fill}" fill-opacity="0.85" stroke="#fff" stroke-width="0.6" '
            f'data-lo="{float(a)!r}" data-hi="{float(b)!r}" data-count="{int(c)}">'
            f"<title>{html.escape(_fmt(float(a)))} to {html.escape(_fmt(float(b)))}: {int(c)}</title></rect>"
        )
    if empty:
        out.append(
            f'<text x="{ax.left + ax.pw / 2:.1f}" y="{ax.top + ax.ph / 2:.1f}" text-anchor="middle" '
            f'fill="#777">no finite values</text>'
        )
    for k, (t, label) in enumerate(zip(marks, labels, strict=True)):
        X = float(ax.px(t))
        out.append(
            f'<line class="threshold" x1="{X:.2f}" y1="{ax.top}" x2="{X:.2f}" y2="{ax.top + ax.ph}" '
            f'stroke="{_MARKER}" stroke-width="1.6" stroke-dasharray="6,3" data-value="{t!r}"/>'
        )
        if label:
            Y = ax.top + 13 + 13 * k
            room_right = ax.left + ax.pw - X - 4
            if _text_width(label) <= room_right:
                anchor, tx = "start", X + 4
            else:
                anchor, tx = "end", X - 4
            out.append(
                f'<text x="{tx:.1f}" y="{Y}" text-anchor="{anchor}" fill="{_MARKER}" '
                f'stroke="{_BG}" stroke-width="3" paint-order="stroke">{html.escape(label)}</text>'
            )
    out.append("</svg>")
    return Svg("\n".join(out))


def _runs(ok: np.ndarray) -> list[tuple[int, int]]:
    """Start/stop indices of the runs of True in a boolean vector."""
    d = np.diff(np.concatenate([[0], ok.astype(np.int8), [0]]))
    return list(zip(np.flatnonzero(d == 1).tolist(), np.flatnonzero(d == -1).tolist(), strict=True))


def _polyline(px: Callable, py: Callable, x: np.ndarray, y: np.ndarray) -> str:
    X, Y = px(x), py(y)
    parts, pen = [], False
    for a, b in zip(X, Y, strict=True):
        if math.isfinite(a) and math.isfinite(b):
            parts.append(f"{'L' if pen else 'M'}{a:.2f},{b:.2f}")
            pen = True
        else:
            pen = False
    return " ".join(parts)


def band_chart(
    x: ArrayLike,
    bands: Sequence[tuple[ArrayLike, ArrayLike, str] | tuple[ArrayLike, ArrayLike, str, str]],
    lines: Sequence[Series] = (),
    *,
    title: str = "",
    xlabel: str = "",
    ylabel: str = "",
    color: str | None = None,
    width: int = 540,
    height: int = 300,
    xlim: tuple[float, float] | None = None,
    ylim: tuple[float, float] | None = None,
    shade: Sequence[tuple[float, float]] = (),
    shade_label: str = "",
) -> Svg:
    """Render filled bands (e.g. percentile ranges over time) with lines on top.

    Parameters
    ----------
    x : array_like of shape (n,)
        Abscissa shared by all bands (e.g. time [s]).
    bands : sequence of (low, high, label) or (low, high, label, color)
        Each band is the area between ``low`` and ``high`` (array_like of
        shape (n,)), filled translucent; overlapping bands darken, so list
        the widest first. Where x, low or high is NaN the band has a gap.
    lines : sequence of Series
        Lines drawn over the bands (e.g. the median), with their own x.
    title, xlabel, ylabel : str
        Texts (with units).
    color : str, optional
        Fill colour of bands without their own; the first palette colour
        when None.
    width, height : int
        Size [px].
    xlim, ylim : (float, float), optional
        Axis ranges; from the data when omitted.
    shade : sequence of (float, float)
        Intervals of x shaded grey behind the bands (e.g. scheduled sensor
        outages), clipped to the x range; intervals outside it are skipped.
    shade_label : str
        Legend text of the shaded intervals ("" for none).

    Returns
    -------
    Svg
        An ``<svg>`` element; each band is drawn as ``<path class="band">``
        (low edge forward, then high edge backward, per gap-free run); each
        shaded interval as ``<rect class="shade">`` with its interval in
        ``data-x0`` and ``data-x1`` (exact ``repr`` of the floats).

    Examples
    --------
    >>> svg = band_chart([0, 1, 2], [([0, 1, 0], [2, 3, 2], "range")], [Series([0, 1, 2], [1, 2, 1], "mid")])
    >>> svg.count('class="band"')
    1
    >>> band_chart([0, 1, 2], [], [Series([0, 1, 2], [1, 2, 1], "mid")], shade=[(0.5, 1.5)]).count('class="shade"')
    1
    """
    _check_size(width, height)
    xv = np.asarray(x, dtype=float)
    if xv.ndim != 1:
        raise ParameterError("x", xv, "a 1-D array")
    parsed = []
    for k, band in enumerate(bands):
        if len(band) not in (3, 4):
            raise ParameterError(f"bands[{k}]", band, "a tuple (low, high, label) or (low, high, label, color)")
        low, high = np.asarray(band[0], dtype=float), np.asarray(band[1], dtype=float)
        if low.shape != xv.shape or high.shape != xv.shape:
            raise ParameterError(f"bands[{k}]", (low.shape, high.shape), f"low and high of shape {xv.shape}")
        parsed.append((low, high, str(band[2]), band[3] if len(band) == 4 else None))
    lxs = [np.asarray(s.x, dtype=float) for s in lines]
    lys = [np.asarray(s.y, dtype=float) for s in lines]

    xl = xlim if xlim else padded_span([xv, *lxs])
    yl = ylim if ylim else padded_span([a for b in parsed for a in b[:2]] + lys)

    spans = []
    for k, sp in enumerate(shade):
        try:
            a, b = float(sp[0]), float(sp[1])
        except (TypeError, ValueError, IndexError) as exc:
            raise ParameterError(f"shade[{k}]", sp, "a pair (x0, x1) of numbers") from exc
        if not (math.isfinite(a) and math.isfinite(b) and a <= b):
            raise ParameterError(f"shade[{k}]", sp, "a pair (x0, x1) of finite numbers with x0 <= x1")
        spans.append((a, b))

    legend: list[tuple[str, str, str]] = []  # (kind, label, colour)
    fill_default = color or PALETTE[0]
    if spans and shade_label:
        legend.append(("shade", shade_label, _SHADE))
    for _low, _high, label, c in parsed:
        if label:
            legend.append(("band", label, c or fill_default))
    for k, s in enumerate(lines):
        if s.label:
            legend.append(("line", s.label, s.color or PALETTE[k % len(PALETTE)]))
    top = (30 if title else 12) + (18 if legend else 0)
    ax = _Axes(width=width, height=height, top=top, xlim=(float(xl[0]), float(xl[1])),
               ylim=(float(yl[0]), float(yl[1])))  # fmt: skip
    out = ax.open(title)
    ax.grid(out, xlabel, ylabel)
    clip = _uid(title, xv, *[b[0] for b in parsed], *lys)
    out.append(f'<clipPath id="{clip}"><rect x="{ax.left}" y="{ax.top}" width="{ax.pw}" height="{ax.ph}"/></clipPath>')
    for a, b in spans:
        lo_x, hi_x = max(a, ax.x0), min(b, ax.x1)
        if hi_x < lo_x:
            continue
        xa, xb = float(ax.px(lo_x)), float(ax.px(hi_x))
        out.append(
            f'<rect class="shade" x="{xa:.2f}" y="{ax.top}" width="{xb - xa:.2f}" height="{ax.ph}" '
            f'fill="{_SHADE}" fill-opacity="0.18" stroke="none" data-x0="{a!r}" data-x1="{b!r}"/>'
        )
    for low, high, label, c in parsed:
        ok = np.isfinite(xv) & np.isfinite(low) & np.isfinite(high)
        segs = []
        for i0, i1 in _runs(ok):
            X, L, H = ax.px(xv[i0:i1]), ax.py(low[i0:i1]), ax.py(high[i0:i1])
            pts = [f"{a:.2f},{b:.2f}" for a, b in zip(X, L, strict=True)]
            pts += [f"{a:.2f},{b:.2f}" for a, b in zip(X[::-1], H[::-1], strict=True)]
            segs.append("M" + " L".join(pts) + " Z")
        out.append(
            f'<path class="band" d="{" ".join(segs)}" fill="{c or fill_default}" fill-opacity="0.2" '
            f'stroke="none" data-label="{html.escape(label)}" clip-path="url(#{clip})"/>'
        )
    for k, (s, lx, ly) in enumerate(zip(lines, lxs, lys, strict=True)):
        c = s.color or PALETTE[k % len(PALETTE)]
        dash = ' stroke-dasharray="5,3"' if s.dashed else ""
        out.append(
            f'<path class="line" d="{_polyline(ax.px, ax.py, lx, ly)}" fill="none" stroke="{c}" '
            f'stroke-width="{s.width}" stroke-opacity="{s.opacity}"{dash} data-label="{html.escape(s.label)}" '
            f'clip-path="url(#{clip})"/>'
        )
    # legend: one row between the title and the plot
    X = float(ax.left)
    Y = ax.top - 7
    n_band = 0
    for kind, label, c in legend:
        if kind == "shade":
            out.append(f'<rect x="{X:.1f}" y="{Y - 8}" width="16" height="10" fill="{c}" fill-opacity="0.18"/>')
        elif kind == "band":
            # nested bands (widest first) overlap: band k shows k + 1 layers of opacity 0.2
            n_band += 1
            op = 1.0 - 0.8**n_band
            out.append(f'<rect x="{X:.1f}" y="{Y - 8}" width="16" height="10" fill="{c}" fill-opacity="{op:.2f}"/>')
        else:
            out.append(
                f'<line x1="{X:.1f}" y1="{Y - 3}" x2="{X + 16:.1f}" y2="{Y - 3}" stroke="{c}" stroke-width="2"/>'
            )
        out.append(f'<text x="{X + 20:.1f}" y="{Y}">{html.escape(label)}</text>')
        X += 20 + _text_width(label) + 14
    out.append("</svg>")
    return Svg("\n".join(out))


def signed_bar_chart(
    labels: Sequence[str],
    values: ArrayLike,
    *,
    muted: Sequence[bool] | None = None,
    title: str = "",
    xlabel: str = "",
    xlim: tuple[float, float] = (-1.0, 1.0),
    color_pos: str | None = None,
    color_neg: str | None = None,
    width: int = 540,
    bar_height: int = 18,
) -> Svg:
    """Render horizontal bars from zero, one row per label, in the order given.

    Parameters
    ----------
    labels : sequence of str
        Row labels, top to bottom.
    values : array_like of shape (n,)
        Signed bar lengths in data units (e.g. a rank correlation); NaN
        draws no bar and the text "undefined".
    muted : sequence of bool, optional
        Rows drawn pale (e.g. not significant).
    title, xlabel : str
        Texts.
    xlim : (float, float)
        Range of the value axis; must contain 0.
    color_pos, color_neg : str, optional
        Colours of positive and negative bars (palette colours by default).
    width : int
        Width [px]; the height follows the number of rows.
    bar_height : int
        Height of one row [px].

    Returns
    -------
    Svg
        An ``<svg>`` element; each bar is ``<rect class="hbar">`` with the
        row label in ``data-label``, the exact value in ``data-value`` and
        ``data-muted`` ("1" or "0").

    Examples
    --------
    >>> svg = signed_bar_chart(["a", "b"], [0.5, -0.25], muted=[False, True])
    >>> svg.count('class="hbar"'), 'data-muted="1"' in svg
    (2, True)
    """
    names = [str(s) for s in labels]
    v = np.asarray(values, dtype=float).ravel()
    if v.size != len(names):
        raise ParameterError("values", v.shape, f"one value per label ({len(names)})")
    dim = [False] * len(names) if muted is None else [bool(m) for m in muted]
    if len(dim) != len(names):
        raise ParameterError("muted", muted, f"one flag per label ({len(names)})")
    lo, hi = float(xlim[0]), float(xlim[1])
    if not (math.isfinite(lo) and math.isfinite(hi) and lo <= 0.0 <= hi and lo < hi):
        raise ParameterError("xlim", xlim, "finite (low, high) with low <= 0 <= high and low < high")
    rows = max(len(names), 1)
    left = int(min(max(_text_width(max(names, key=len, default="")) + 14, 80), 0.5 * width))
    top = 30 if title else 12
    height = top + rows * bar_height + 44
    _check_size(width, max(height, 120))
    height = max(height, 120)
    ax = _Axes(width=width, height=height, top=top, xlim=(lo, hi), ylim=(0.0, float(rows)), left=left,
               bottom=height - top - rows * bar_height)  # fmt: skip
    out = ax.open(title)
    for t in nice_ticks(lo, hi):
        X = float(ax.px(t))
        out.append(f'<line x1="{X:.1f}" y1="{ax.top}" x2="{X:.1f}" y2="{ax.top + ax.ph}" stroke="{_GRID}"/>')
        out.append(f'<text x="{X:.1f}" y="{ax.top + ax.ph + 14}" text-anchor="middle">{_fmt(t)}</text>')
    out.append(
        f'<text x="{ax.left + ax.pw / 2:.1f}" y="{height - 8}" text-anchor="middle">{html.escape(xlabel)}</text>'
    )
    X0 = float(ax.px(0.0))
    out.append(f'<line x1="{X0:.1f}" y1="{ax.top}" x2="{X0:.1f}" y2="{ax.top + ax.ph}" stroke="{_FRAME}"/>')
    pos, neg = color_pos or PALETTE[1], color_neg or PALETTE[0]
    for k, (name, val, m) in enumerate(zip(names, v, dim, strict=True)):
        y = ax.top + k * bar_height
        ink = ' fill="#999"' if m else ""
        Y = y + bar_height / 2 + 4
        out.append(f'<text x="{ax.left - 6}" y="{Y:.1f}" text-anchor="end"{ink}>{html.escape(name)}</text>')
        if not math.isfinite(val):
            out.append(f'<text x="{X0 + 4:.1f}" y="{y + bar_height / 2 + 4:.1f}" fill="#999">undefined</text>')
            continue
        Xv = float(ax.px(min(max(val, lo), hi)))
        xa, xb = min(X0, Xv), max(X0, Xv)
        out.append(
            f'<rect class="hbar" x="{xa:.2f}" y="{y + 3:.1f}" width="{xb - xa:.2f}" height="{bar_height - 6}" '
            f'fill="{pos if val > 0 else neg}" fill-opacity="{0.25 if m else 0.9}" '
            f'data-label="{html.escape(name)}" data-value="{float(val)!r}" data-muted="{int(m)}">'
            f"<title>{html.escape(name)}: {html.escape(_fmt(float(val)))}</title></rect>"
        )
    out.append("</svg>")
    return Svg("\n".join(out))


def _mix(c0: str, c1: str, f: float) -> str:
    a = [int(c0[i : i + 2], 16) for i in (1, 3, 5)]
    b = [int(c1[i : i + 2], 16) for i in (1, 3, 5)]
    return "#" + "".join(f"{round(x + (y - x) * f):02x}" for x, y in zip(a, b, strict=True))


#: Colours of a share 0, 0.5 and 1 in :func:`share_matrix_chart`.
SHARE_COLORS = ("#c8553d", "#f4f1e8", "#1b6f8a")


def share_color(share: float) -> str:
    """The fill colour of a share in [0, 1] (low: rust, middle: pale, high: teal).

    Examples
    --------
    >>> share_color(0.0), share_color(1.0)
    ('#c8553d', '#1b6f8a')
    """
    s = min(max(float(share), 0.0), 1.0)
    if s <= 0.5:
        return _mix(SHARE_COLORS[0], SHARE_COLORS[1], s / 0.5)
    return _mix(SHARE_COLORS[1], SHARE_COLORS[2], (s - 0.5) / 0.5)


def share_matrix_chart(
    x_edges: ArrayLike,
    y_edges: ArrayLike,
    met: ArrayLike,
    count: ArrayLike,
    *,
    min_count: int = 5,
    title: str = "",
    xlabel: str = "",
    ylabel: str = "",
    width: int = 540,
    height: int = 340,
) -> Svg:
    """Render a matrix of cells coloured by a share ``met / count``, with the count in each cell.

    Parameters
    ----------
    x_edges : array_like of shape (nx + 1,)
        Increasing column edges (e.g. wave direction [deg]).
    y_edges : array_like of shape (ny + 1,)
        Increasing row edges (e.g. Hs [m]); the lowest row is drawn at the bottom.
    met, count : array_like of shape (ny, nx), int
        Trials that met a requirement, and all trials, per cell.
    min_count : int
        Cells with fewer trials than this are hatched grey and labelled "too few".
    title, xlabel, ylabel : str
        Texts.
    width, height : int
        Size [px].

    Returns
    -------
    Svg
        An ``<svg>`` element; each cell is ``<rect class="cell">`` with its
        edges in ``data-x0``, ``data-x1``, ``data-y0``, ``data-y1``, its
        counts in ``data-met`` and ``data-count``, and ``data-few`` ("1" when
        hatched).

    Examples
    --------
    >>> svg = share_matrix_chart([0, 30, 60], [0.5, 1.0], [[3, 1]], [[6, 2]])
    >>> svg.count('class="cell"'), svg.count('data-few="1"')
    (2, 1)
    """
    _check_size(width, height)
    xe, ye = np.asarray(x_edges, dtype=float), np.asarray(y_edges, dtype=float)
    for name, e in (("x_edges", xe), ("y_edges", ye)):
        if e.ndim != 1 or e.size < 2 or not np.all(np.isfinite(e)) or np.any(np.diff(e) <= 0):
            raise ParameterError(name, e, "an increasing sequence of at least 2 finite edges")
    k = np.asarray(met, dtype=np.int64)
    n = np.asarray(count, dtype=np.int64)
    shape = (ye.size - 1, xe.size - 1)
    if k.shape != shape or n.shape != shape or np.any(k < 0) or np.any(k > n):
        raise ParameterError("met", (k.shape, n.shape), f"arrays of shape {shape} with 0 <= met <= count")
    top = 30 if title else 12
    ax = _Axes(width=width, height=height, top=top + 22, xlim=(0.0, float(shape[1])), ylim=(0.0, float(shape[0])),
               left=70)  # fmt: skip
    out = ax.open(title)
    hatch = _uid("hatch", xe, ye, n, k, title)
    out.append(
        f'<defs><pattern id="{hatch}" width="6" height="6" patternUnits="userSpaceOnUse" '
        f'patternTransform="rotate(45)"><rect width="6" height="6" fill="#eeeeea"/>'
        f'<line x1="0" y1="0" x2="0" y2="6" stroke="#bbb" stroke-width="2"/></pattern></defs>'
    )
    for j in range(shape[0]):
        for i in range(shape[1]):
            xa, xb = float(ax.px(i)), float(ax.px(i + 1))
            ya, yb = float(ax.py(j + 1)), float(ax.py(j))
            c, m = int(n[j, i]), int(k[j, i])
            few = c < min_count
            fill = f"url(#{hatch})" if few else share_color(m / c)
            out.append(
                f'<rect class="cell" x="{xa:.2f}" y="{ya:.2f}" width="{xb - xa:.2f}" height="{yb - ya:.2f}" '
                f'fill="{fill}" stroke="#fff" stroke-width="1.5" data-x0="{float(xe[i])!r}" '
                f'data-x1="{float(xe[i + 1])!r}" data-y0="{float(ye[j])!r}" data-y1="{float(ye[j + 1])!r}" '
                f'data-met="{m}" data-count="{c}" data-few="{int(few)}"/>'
            )
            cx, cy = 0.5 * (xa + xb), 0.5 * (ya + yb)
            if few:
                lines = [f"n = {c}", "too few"]
                ink = "#666"
            else:
                lines = [f"{m / c:.2f}", f"n = {c}"]
                ink = "#fff" if abs(m / c - 0.5) > 0.3 else "#222"
            out.append(
                f'<text x="{cx:.1f}" y="{cy - 2:.1f}" text-anchor="middle" fill="{ink}">{lines[0]}</text>'
                f'<text x="{cx:.1f}" y="{cy + 11:.1f}" text-anchor="middle" fill="{ink}" font-size="10">'
                f"{lines[1]}</text>"
            )
    for i in range(xe.size):
        X = float(ax.px(i))
        label = _fmt(float(xe[i]))
        out.append(f'<text x="{X:.1f}" y="{ax.top + ax.ph + 14}" text-anchor="middle">{label}</text>')
    for j in range(ye.size):
        Y = float(ax.py(j))
        out.append(f'<text x="{ax.left - 6}" y="{Y + 4:.1f}" text-anchor="end">{_fmt(round(float(ye[j]), 3))}</text>')
    out.append(
        f'<text x="{ax.left + ax.pw / 2:.1f}" y="{height - 8}" text-anchor="middle">{html.escape(xlabel)}</text>'
    )
    out.append(
        f'<text x="14" y="{ax.top + ax.ph / 2:.1f}" text-anchor="middle" '
        f'transform="rotate(-90 14 {ax.top + ax.ph / 2:.1f})">{html.escape(ylabel)}</text>'
    )
    # legend: share swatches between the title and the plot
    X = float(ax.left)
    Y = ax.top - 8
    out.append(f'<text x="{X:.1f}" y="{Y}">share met:</text>')
    X += 70
    for s in (0.0, 0.25, 0.5, 0.75, 1.0):
        out.append(f'<rect x="{X:.1f}" y="{Y - 9}" width="14" height="11" fill="{share_color(s)}" stroke="#ccc"/>')
        out.append(f'<text x="{X + 17:.1f}" y="{Y}">{s:g}</text>')
        X += 48
    out.append(f'<rect x="{X:.1f}" y="{Y - 9}" width="14" height="11" fill="url(#{hatch})" stroke="#ccc"/>')
    out.append(f'<text x="{X + 17:.1f}" y="{Y}">fewer than {int(min_count)} trials</text>')
    out.append("</svg>")
    return Svg("\n".join(out))


def scatter_chart(
    x: ArrayLike,
    y: ArrayLike,
    groups: Sequence[tuple[ArrayLike, str, str]],
    *,
    title: str = "",
    xlabel: str = "",
    ylabel: str = "",
    hline: float | None = None,
    hline_label: str = "",
    width: int = 540,
    height: int = 320,
) -> Svg:
    """Render points as SVG, one colour per group.

    Parameters
    ----------
    x, y : array_like of shape (n,)
        Coordinates; points with a NaN are not drawn.
    groups : sequence of (mask, label, colour)
        ``mask`` (bool, shape (n,)) picks the group's points.
    title, xlabel, ylabel : str
    hline : float, optional
        A dashed horizontal line (e.g. a requirement's threshold).
    hline_label : str
    width, height : int
        Size [px].

    Returns
    -------
    Svg
        Each point is ``<circle class="point">`` with its group in ``data-group``.

    Examples
    --------
    >>> svg = scatter_chart([0, 1, 2], [1, 2, 3], [([True, False, True], "met", "#2e7d32"),
    ...                                             ([False, True, False], "not met", "#b3261e")])
    >>> svg.count('class="point"'), svg.count('data-group="met"')
    (3, 2)
    """
    xv, yv = np.asarray(x, dtype=float), np.asarray(y, dtype=float)
    ok = np.isfinite(xv) & np.isfinite(yv)

    ax = _Axes(
        width=width,
        height=height,
        top=48 if title else 30,
        xlim=padded_span([xv[ok]], pad=0.05),
        ylim=padded_span([yv[ok], [hline] if hline is not None and math.isfinite(hline) else []], pad=0.05),
    )
    out = ax.open(title, f"n = {int(ok.sum())}")
    ax.grid(out, xlabel, ylabel)
    if hline is not None and math.isfinite(hline):
        Y = float(ax.py(hline))
        out.append(
            f'<line class="threshold" x1="{ax.left}" y1="{Y:.2f}" x2="{ax.left + ax.pw}" y2="{Y:.2f}" '
            f'stroke="{_MARKER}" stroke-dasharray="6,3" stroke-width="1.4"/>'
        )
        if hline_label:
            out.append(
                f'<text x="{ax.left + ax.pw - 4}" y="{Y - 4:.1f}" text-anchor="end" fill="{_MARKER}">'
                f"{html.escape(hline_label)}</text>"
            )
    X = float(ax.left)
    for mask, label, color in groups:
        m = np.asarray(mask, dtype=bool) & ok
        for a, b in zip(ax.px(xv[m]), ax.py(yv[m]), strict=True):
            out.append(
                f'<circle class="point" cx="{a:.1f}" cy="{b:.1f}" r="3" fill="{color}" fill-opacity="0.75" '
                f'data-group="{html.escape(label)}"/>'
            )
        out.append(
            f'<circle cx="{X + 5:.1f}" cy="{ax.top - 10}" r="4" fill="{color}"/>'
            f'<text x="{X + 13:.1f}" y="{ax.top - 6}">{html.escape(label)} ({int(m.sum())})</text>'
        )
        X += 30 + 6.6 * len(label) + 20
    out.append("</svg>")
    return Svg("\n".join(out))


#: Colours of the shallowest and the deepest level of :func:`map_chart`'s depth shading.
MAP_DEPTH_COLORS = ("#f4f1e6", "#9dbccb")
#: Depth shading steps of :func:`map_chart`.
MAP_DEPTH_LEVELS = 8


def _map_depth_color(f: float) -> str:
    """Colour of a depth level, ``f`` in [0, 1] from shallow to deep."""
    return _mix(MAP_DEPTH_COLORS[0], MAP_DEPTH_COLORS[1], f)


def map_chart(
    series: Sequence[Series],
    *,
    xlim: tuple[float, float],
    ylim: tuple[float, float],
    depth: tuple[np.ndarray, np.ndarray, np.ndarray] | None = None,
    title: str = "",
    size: int = 420,
    levels: int = MAP_DEPTH_LEVELS,
) -> Svg:
    """A map as SVG: east to the right, north up, equal scales, over an optional depth raster.

    Parameters
    ----------
    series : sequence of Series
        Lines in (east, north) [m], drawn in order, with a legend.
    xlim, ylim : (float, float)
        East and north limits [m]; give a square box for equal scales (the plot area is square).
    depth : (north, east, depth), optional
        From :func:`wavebench.ui.player.depth_grid`: sample coordinates [m] and depth [m] of shape (n_north, n_east),
        drawn as cells shaded in ``levels`` steps (shallow pale, deep dark; NaN left blank),
        with a colour key.
    title : str
    size : int
        Side of the square plot area [px].
    levels : int
        Depth shading steps.

    Returns
    -------
    Svg
        Depth cells are ``<rect class="depth">`` (runs of equal level along a row merged) with the
        level's range in ``data-lo`` and ``data-hi`` [m].
    """
    key = 26 if depth is not None else 0
    ax = _Axes(
        width=62 + size + 16,
        height=(30 if title else 12) + key + size + 44,
        top=(30 if title else 12) + key,
        xlim=xlim,
        ylim=ylim,
    )
    out = ax.open(title)
    if depth is not None:
        north, east, d = depth
        lo, hi = float(np.nanmin(d)), float(np.nanmax(d))
        span = hi - lo if hi > lo else 1.0
        level = np.clip(np.floor((d - lo) / span * levels), 0, levels - 1)

        # cell edges halfway between samples (the outer ones half a step out), clipped to the plot
        def edges(c: np.ndarray) -> np.ndarray:
            mid = 0.5 * (c[1:] + c[:-1])
            return np.concatenate([[c[0] - (mid[0] - c[0])], mid, [c[-1] + (c[-1] - mid[-1])]])

        en, ee = edges(north), edges(east)
        X = np.clip(ax.px(ee), ax.left, ax.left + ax.pw)
        Y = np.clip(ax.py(en), ax.top, ax.top + ax.ph)
        for r in range(north.size):
            c = 0
            while c < east.size:
                lv = level[r, c]
                c2 = c + 1
                while c2 < east.size and (level[r, c2] == lv or (np.isnan(lv) and np.isnan(level[r, c2]))):
                    c2 += 1
                if not np.isnan(lv):
                    k = int(lv)
                    out.append(
                        f'<rect class="depth" x="{X[c]:.1f}" y="{Y[r + 1]:.1f}" width="{X[c2] - X[c]:.1f}" '
                        f'height="{Y[r] - Y[r + 1] + 0.5:.1f}" fill="{_map_depth_color((k + 0.5) / levels)}" '
                        f'shape-rendering="crispEdges" '
                        f'data-lo="{lo + k * span / levels!r}" data-hi="{lo + (k + 1) * span / levels!r}"/>'
                    )
                c = c2
        # colour key between the title and the plot
        kx, ky = float(ax.left), ax.top - key + 4
        out.append(f'<text x="{kx:.1f}" y="{ky + 10}">depth [m]</text>')
        for k in range(levels):
            out.append(
                f'<rect x="{kx + 62 + 18 * k:.1f}" y="{ky}" width="18" height="11" '
                f'fill="{_map_depth_color((k + 0.5) / levels)}" stroke="#ccc" stroke-width="0.5"/>'
            )
        out.append(f'<text x="{kx + 66 + 18 * levels:.1f}" y="{ky + 10}">{lo:.3g} (pale) to {hi:.3g} (dark)</text>')
    ax.grid(out, "east [m]", "north [m]")
    clip = _uid("map", title, xlim, ylim, *[np.asarray(s.x, dtype=float) for s in series])
    out.append(f'<clipPath id="{clip}"><rect x="{ax.left}" y="{ax.top}" width="{ax.pw}" height="{ax.ph}"/></clipPath>')
    legend = []
    for k, s in enumerate(series):
        color = s.color or PALETTE[k % len(PALETTE)]
        dash = ' stroke-dasharray="5,3"' if s.dashed else ""
        d = _polyline(ax.px, ax.py, np.asarray(s.x, dtype=float), np.asarray(s.y, dtype=float))
        out.append(
            f'<path class="line" d="{d}" fill="none" stroke="{color}" stroke-width="{s.width}" '
            f'stroke-opacity="{s.opacity}"{dash} '
            f'data-label="{html.escape(s.label)}" clip-path="url(#{clip})"/>'
        )
        if s.label:
            legend.append((s.label, color, dash))
    for k, (label, color, dash) in enumerate(legend):
        Y = ax.top + 14 + 14 * k
        X = ax.left + ax.pw - 150
        out.append(
            f'<rect x="{X - 4}" y="{Y - 11}" width="152" height="14" fill="#ffffff" fill-opacity="0.7"/>'
            f'<line x1="{X}" y1="{Y - 4}" x2="{X + 20}" y2="{Y - 4}" stroke="{color}" stroke-width="2"{dash}/>'
            f'<text x="{X + 25}" y="{Y}">{html.escape(label)}</text>'
        )
    out.append("</svg>")
    return Svg("\n".join(out))
