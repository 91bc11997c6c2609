"""Every refusal path of the native TOML reader: one clear error naming file and key.

Reference: the reader's contract in robots.toml_reader and the README ("bad input is refused with
one clear message: file, row or key, what was expected, what was found").
"""

from __future__ import annotations

import pytest

from legbridge.robots import load_robot
from legbridge.robots.errors import InputFileNotFound, RobotFileError

from .conftest import robot_text

BASE = robot_text()


@pytest.mark.parametrize(
    "old, new, match",
    [
        ('name = "test-leg"               # invented test values\n', "", r"robot.name'.*missing key"),
        ("body_mass_kg = 20.0", 'body_mass_kg = "20"', r"robot.body_mass_kg'.*expected a number, found '20'"),
        ("body_mass_kg = 20.0", "body_mass_kg = true", r"robot.body_mass_kg'.*expected a number, found True"),
        ("body_mass_kg = 20.0", "body_mass_kg = 0.0", r"robot.body_mass_kg'.*expected a value > 0, found 0"),
        ("body_mass_kg = 20.0", "body_mass_kg = nan", r"robot.body_mass_kg'.*expected a finite number"),
        ("mass_kg = 2.0", "mass_kg = -2.0", r"segments\[0\].mass_kg'.*expected a value > 0"),
        ("length_m = 0.42", "length_m = 0.0", r"segments\[1\].length_m'.*expected a value > 0"),
        ("com_m = 0.16", "com_m = 0.5", r"segments\[0\].com_m'.*expected a value in \[0, length_m = 0.4\]"),
        ('name = "shank"', 'name = "thigh"', r"'segments'.*expected unique segment names"),
        ('name = "shank"', 'name = "foot"', r"segments\[1\].name'.*taken by a model frame"),
        ("upper_rad = 1.6", "upper_rad = -1.6", r"joints.hip.upper_rad'.*expected a value above lower_rad \(-1.6\), found -1.6"),
        ('knee = "backward"', 'knee = "sideways"', r"robot.knee'.*expected one of \['backward', 'forward'\], found 'sideways'"),
        ("ground_friction = 0.7", "ground_friction = 0.7\ncolour = 1", r"'robot'.*unknown key 'colour'"),
        ("[joints.hip]\n", "[joints.hip]\nbacklash_rad = 0.01\n", r"joints.hip'.*unknown key 'backlash_rad'"),
        ("[robot]\n", "extra = 1\n[robot]\n", r"top level.*unknown key 'extra'"),
        ("gearbox_efficiency = 0.9", "gearbox_efficiency = 1.2", r"gearbox_efficiency'.*value in \[0.001, 1.0\]"),
        ("[joints.knee]\n", "[joints.knee]\nspring_damping_nms_per_rad = 1.0\n", r"joints.knee.spring_stiffness_nm_per_rad'.*damping given without stiffness"),
        ("[joints.knee]\n", "[joints.knee]\nspring_stiffness_nm_per_rad = -5.0\n", r"joints.knee.spring_stiffness_nm_per_rad'.*value > 0"),
    ],
)
def test_native_errors(write_robot, old, new, match):
    assert old in BASE, old
    with pytest.raises(RobotFileError, match=match):
        load_robot(write_robot(BASE.replace(old, new, 1)))


def test_joint_count(write_robot):
    text = BASE + "\n[joints.ankle]\nlower_rad = 0.0\nupper_rad = 1.0\n"
    with pytest.raises(RobotFileError, match=r"'joints'.*expected 2 joint tables \(one per segment\), found 3 \(\['hip', 'knee', 'ankle'\]\)"):
        load_robot(write_robot(text))


def test_segment_count(write_robot):
    one = BASE[: BASE.index("[[segments]]", BASE.index("[[segments]]") + 1)] + BASE[BASE.index("[joints.hip]"):]
    with pytest.raises(RobotFileError, match=r"'segments'.*expected 2 or 3 \[\[segments\]\] tables.*found 1"):
        load_robot(write_robot(one))


def test_section_not_a_table(write_robot):
    with pytest.raises(RobotFileError, match=r"'robot'.*expected a table, found 'str'"):
        load_robot(write_robot('robot = "x"\n'))


def test_not_toml(write_robot):
    with pytest.raises(RobotFileError, match=r"robot.toml: not valid TOML"):
        load_robot(write_robot("[robot\nname = 1"))


def test_not_utf8(tmp_path):
    p = tmp_path / "bin.toml"
    p.write_bytes(b"\xff\xfe\x00")
    with pytest.raises(RobotFileError, match="not UTF-8 text"):
        load_robot(p)


def test_missing_file(tmp_path):
    with pytest.raises(InputFileNotFound, match=r"nothing.toml: file not found"):
        load_robot(tmp_path / "nothing.toml")


def test_reference_file_loads(write_robot):
    robot = load_robot(write_robot(BASE))
    assert robot.joint_names == ("hip", "knee") and len(robot.sha256) == 64


def test_missing_segments(write_robot):
    text = BASE[: BASE.index("[[segments]]")] + BASE[BASE.index("[joints.hip]"):]
    with pytest.raises(RobotFileError, match=r"'segments'.*missing key"):
        load_robot(write_robot(text))
