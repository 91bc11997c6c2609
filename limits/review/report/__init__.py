"""The pre-test review report: a self-contained HTML document with embedded plots, rendered from a
limits.review.Review."""

from .html import render_report, write_report
from .sections import SECTION_IDS

__all__ = ["SECTION_IDS", "render_report", "write_report"]
