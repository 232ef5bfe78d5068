"""Static reports: SVG charts and HTML pages that need no live kernel."""

from .html import CAUTION, html_page
from .svg import Series, line_chart

__all__ = ["CAUTION", "Series", "html_page", "line_chart"]
