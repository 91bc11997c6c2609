"""The ``legbridge`` command line (entry point legbridge.limits.cli:main)."""

from .entry import attach_range_values, build_parser, main

__all__ = ["attach_range_values", "build_parser", "main"]
