"""Self-contained HTML pages for reports (inline SVG, no scripts, no network)."""

from __future__ import annotations

import html
import math
from collections.abc import Sequence
from typing import Any

__all__ = ["CAUTION", "cell_number", "escape", "html_page"]

#: The caution every report carries.
CAUTION = (
    "wavebench results come from models. A simulation is no substitute for sea trials, "
    "for certification by a competent authority, or for the International Regulations "
    "for Preventing Collisions at Sea; defer to local rules and licensed practice. "
    "Demo craft, seas and places are invented."
)

_STYLE = """
body { font-family: sans-serif; max-width: 60rem; margin: 2rem auto; color: #222; }
h1 { font-size: 1.5rem; } h2 { font-size: 1.15rem; margin-top: 2rem; }
pre { background: #f4f4ef; padding: 0.8rem; overflow-x: auto; font-size: 0.85rem; }
.caution { border-left: 4px solid #c8553d; background: #fbf1ee; padding: 0.6rem 0.9rem; }
.figs { display: flex; flex-wrap: wrap; gap: 1rem; }
"""


def html_page(title: str, sections: Sequence[tuple[str, str, Sequence[str]]]) -> str:
    """Assemble a report page.

    Parameters
    ----------
    title : str
        Page title.
    sections : sequence of (heading, text, svgs)
        Each section: a heading, preformatted text (may be empty) and a list
        of SVG fragments drawn side by side.

    Returns
    -------
    str
        A complete HTML document; the caution is printed at the top.
    """
    parts = [
        "<!DOCTYPE html>",
        '<html lang="en"><head><meta charset="utf-8">',
        f"<title>{html.escape(title)}</title><style>{_STYLE}</style></head><body>",
        f"<h1>{html.escape(title)}</h1>",
        f'<p class="caution">{html.escape(CAUTION)}</p>',
    ]
    for heading, text, svgs in sections:
        parts.append(f"<h2>{html.escape(heading)}</h2>")
        if text:
            parts.append(f"<pre>{html.escape(text)}</pre>")
        if svgs:
            parts.append('<div class="figs">' + "".join(svgs) + "</div>")
    parts.append("</body></html>")
    return "\n".join(parts)


def escape(x: Any) -> str:
    """Any value as HTML-escaped text."""
    return html.escape(str(x))


def cell_number(v: Any, digits: int = 4) -> str:
    """A number for a table cell: ``digits`` significant digits, "–" for NaN, "∞" / "−∞"; other values escaped.

    Examples
    --------
    >>> cell_number(3.14159), cell_number(float("nan")), cell_number("<b>")
    ('3.142', '–', '&lt;b&gt;')
    """
    try:
        f = float(v)
    except (TypeError, ValueError):
        return escape(v)
    if not math.isfinite(f):
        return "–" if math.isnan(f) else ("∞" if f > 0 else "−∞")
    return f"{f:.{digits}g}"
