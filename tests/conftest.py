"""Shared fixtures. Subfolders keep their own conftest.py for fixtures only they use."""

import pytest

from legbridge.robots import build_leg_model, load_robot
from legbridge.robots.library import library_path


@pytest.fixture(scope="session")
def example_robot():
    """The two-joint example leg from the foundation issue (invented values)."""
    return load_robot(library_path("example-leg.toml"))


@pytest.fixture(scope="session")
def example_leg_model(example_robot):
    return build_leg_model(example_robot)
