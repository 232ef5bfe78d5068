"""The charts of a static twin, read back the way a browser would: each ``<img>`` data URI decoded.

A twin's bundle HTML carries its charts as ``<img src="data:image/svg+xml;base64,...">``
(RFC 2397 data URIs, RFC 4648 base64); this decodes them with the standard library
only, independent of the code that wrote them.
"""

from __future__ import annotations

import base64
import re

_IMG = re.compile(r'<img\b[^>]*?\bsrc="data:image/svg\+xml;base64,([A-Za-z0-9+/=]+)"[^>]*>')


def twin_svgs(html: str) -> list[str]:
    """The SVG documents of every chart image in ``html``, in order."""
    return [base64.b64decode(data, validate=True).decode("utf-8") for data in _IMG.findall(html)]
