"""The pre-test review report: a self-contained HTML document with embedded plots."""

from .html import render_report, write_report
from .sections import SECTION_IDS
from .summary import exit_code, ranked, verdict_words, worst_of

__all__ = ["SECTION_IDS", "exit_code", "ranked", "render_report", "verdict_words", "worst_of", "write_report"]
