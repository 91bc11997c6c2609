"""The installed legbridge version, recorded in every output file."""

from __future__ import annotations


def tool_version() -> str:
    """The legbridge version from the installed package metadata ('0+unknown' in a bare source tree)."""
    from importlib.metadata import PackageNotFoundError, version

    try:
        return version("legbridge")
    except PackageNotFoundError:
        return "0+unknown"
