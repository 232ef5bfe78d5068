"""Static reports: SVG charts and HTML pages that need no live kernel."""

from .html import CAUTION, html_page
from .svg import Series, Svg, line_chart

__all__ = ["CAUTION", "Series", "Svg", "html_page", "line_chart"]
