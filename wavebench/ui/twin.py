"""Static twins: what a panel shows when no kernel or widget manager is there.

A panel is displayed as one output whose mime bundle holds both the live
widget view and a ``text/html`` rendering of the same content (tables and
inline SVG, no script). JupyterLab with a kernel renders the widget; a
notebook opened without its widget state, converted by nbconvert (which skips
a widget view whose state is not saved) or shown by a plain viewer falls back
to the HTML.

Panels subclass :class:`Twinned` and implement :meth:`Twinned.static_html`.
"""

from __future__ import annotations

from typing import Any

__all__ = ["TWIN_CLASS", "EditorPanel", "Twinned", "twin_bundle"]

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
        The static rendering (tables, inline SVG); no script.
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
    bundle["text/html"] = f'<div class="{TWIN_CLASS}">{head}{html}</div>'
    if title:
        bundle["text/plain"] = title
    return bundle


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
