"""Bundled robots load by name everywhere a robot file is accepted."""

import pytest

from legbridge.robots import load_robot
from legbridge.robots.errors import InputFileNotFound
from legbridge.robots.library import library_path


@pytest.mark.parametrize("name", ["lab-biped-leg", "lab-biped-leg.toml"])
def test_load_robot_accepts_a_bundled_name(name):
    by_name = load_robot(name)
    by_path = load_robot(library_path("lab-biped-leg.toml"))
    assert by_name == by_path and by_name.sha256 == by_path.sha256


def test_unknown_name_lists_the_bundled_robots():
    with pytest.raises(InputFileNotFound, match=r"no such file or bundled robot.*'lab-biped-leg'"):
        load_robot("no-such-leg")
