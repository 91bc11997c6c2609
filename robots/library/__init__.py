"""Invented example legs shipped with legbridge (package data). No real robot is described here."""

from importlib import resources
from pathlib import Path


def library_path(name: str) -> Path:
    """Path of a bundled robot file, e.g. ``library_path('example-leg.toml')``."""
    p = resources.files(__name__) / name
    return Path(str(p))


def library_names() -> list[str]:
    return sorted(p.name for p in resources.files(__name__).iterdir() if p.name.endswith(".toml"))
