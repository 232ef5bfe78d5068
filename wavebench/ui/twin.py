"""Static twins: what a panel shows when no kernel or widget manager is there.

A panel is displayed as one output whose mime bundle holds both the live
widget view and a ``text/html`` rendering of the same content (tables and
charts, no script). JupyterLab with a kernel renders the widget; a
notebook opened without its widget state, converted by nbconvert (which skips
a widget view whose state is not saved) or shown by a plain viewer falls back
to the HTML.

The charts go into the twin as ``<img>`` elements whose source is the SVG
document as a ``data:`` URI: JupyterLab sanitises the HTML of an untrusted
notebook and removes inline ``<svg>`` elements, but keeps images with
``data:`` sources (its sanitiser does not check the ``src`` scheme). The
panels' own ``static_html`` keeps inline SVG; only the bundle is converted.

Panels subclass :class:`Twinned` and implement :meth:`Twinned.static_html`.
"""

from __future__ import annotations

import base64
import html as _html
import re
from typing import Any

__all__ = ["TWIN_CLASS", "EditorPanel", "Twinned", "svg_as_images", "twin_bundle"]

#: CSS class on the outer element of every static twin, so tests and the
#: ``verify`` command can find them in saved outputs.
TWIN_CLASS = "wavebench-twin"


def twin_bundle(widget: Any, html: str, *, title: str = "") -> dict[str, Any]:
    """The mime bundle of ``widget`` with its static twin added as ``text/html``.

    Parameters
    ----------
    widget : ipywidgets.Widget
        The live view.
    html : str
        The static rendering (tables, inline SVG charts, which become
        ``<img>`` data URIs, see :func:`svg_as_images`); no script.
    title : str, optional
        Shown as a heading above the static rendering.

    Returns
    -------
    dict
        ``application/vnd.jupyter.widget-view+json``, ``text/plain`` and
        ``text/html`` entries.
    """
    bundle = dict(widget._repr_mimebundle_() or {})
    head = f"<h4>{_escape(title)}</h4>" if title else ""
    bundle["text/html"] = f'<div class="{TWIN_CLASS}">{head}{svg_as_images(html)}</div>'
    if title:
        bundle["text/plain"] = title
    return bundle


_SVG_TAG = re.compile(r"<(/?)svg\b[^>]*>", re.IGNORECASE)
_ARIA = re.compile(r'aria-label="([^"]*)"')
_TEXT = re.compile(r"<text\b[^>]*>([^<]*)</text>")


def svg_as_images(html: str) -> str:
    """Replace every outermost ``<svg>`` element of ``html`` by an ``<img>`` holding it as a data URI.

    Parameters
    ----------
    html : str
        HTML with inline SVG charts (each ``<svg>`` carries its own attributes and
        styles; nested ``<svg>`` elements stay inside their outermost one).

    Returns
    -------
    str
        The same HTML with each chart as ``<img src="data:image/svg+xml;base64,...">``,
        its ``alt`` text taken from the chart's ``aria-label`` or its first text
        (the title), its ``width``/``height`` kept. The SVG bytes are unchanged
        (UTF-8; an ``xmlns`` is added when missing), so decoding the URI gives
        the chart back.

    Raises
    ------
    ValueError
        When an ``<svg>`` element is not closed.
    """
    out: list[str] = []
    pos = 0
    depth = 0
    start = 0
    for m in _SVG_TAG.finditer(html):
        closing = m.group(1) == "/"
        if not closing and m.group(0).endswith("/>"):
            continue  # an empty <svg/>: nothing to draw, nothing nested
        if not closing:
            if depth == 0:
                out.append(html[pos : m.start()])
                start = m.start()
            depth += 1
        elif depth > 0:
            depth -= 1
            if depth == 0:
                out.append(_svg_img(html[start : m.end()]))
                pos = m.end()
    if depth:
        raise ValueError(f"static twin: an <svg> element opened at character {start} is not closed")
    out.append(html[pos:])
    return "".join(out)


def _svg_img(svg: str) -> str:
    head = svg[: svg.index(">") + 1]
    if "xmlns=" not in head:  # a standalone SVG document needs its namespace
        svg = svg.replace("<svg", '<svg xmlns="http://www.w3.org/2000/svg"', 1)
        head = svg[: svg.index(">") + 1]
    label = _ARIA.search(head)
    text = _TEXT.search(svg)
    alt = _html.unescape(label.group(1) if label else text.group(1) if text else "chart").strip() or "chart"
    size = "".join(f' {k}="{v}"' for k, v in re.findall(r'\b(width|height)="([0-9.]+)(?:px)?"', head)[:2])
    data = base64.b64encode(svg.encode("utf-8")).decode("ascii")
    return f'<img class="{TWIN_CLASS}-chart" alt="{_escape(alt)}"{size} src="data:image/svg+xml;base64,{data}">'


def _escape(text: str) -> str:
    from ..report.html import escape

    return escape(text)


class Twinned:
    """Mixin for panels: display the live widget together with its static twin.

    Subclasses set ``self.widget`` (the top-level ipywidgets container) and
    implement :meth:`static_html`; ``title`` names the panel.
    """

    widget: Any
    title: str = ""

    def static_html(self) -> str:
        """The panel's current content as HTML with inline SVG (no script)."""
        raise NotImplementedError

    def _repr_mimebundle_(self, include: Any = None, exclude: Any = None) -> dict[str, Any]:
        return twin_bundle(self.widget, self.static_html(), title=self.title)


class EditorPanel(Twinned):
    """A panel made of a :class:`~wavebench.ui.controls.SpecEditor` and figures redrawn from its spec.

    Subclasses set ``self.editor`` and their widgets, implement
    ``_redraw(spec)``, and call :meth:`_follow_editor` last in ``__init__``.
    """

    editor: Any

    @property
    def spec(self) -> Any:
        """The current valid spec."""
        return self.editor.spec

    def set_spec(self, spec: Any) -> None:
        """Show another spec (controls and figures)."""
        self.editor.set_spec(spec)

    def _redraw(self, spec: Any) -> None:
        raise NotImplementedError

    def _follow_editor(self) -> None:
        """Draw the editor's spec now and again after every accepted change."""
        self._key: Any = None
        self.view: Any = None
        self._redraw(self.editor.spec)
        self.editor.observe(lambda change: self._redraw(change["new"]), "spec")
