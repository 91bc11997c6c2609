"""Nondimensional plans scaled to SI, checked against hand arithmetic.

Units of a nondimensional spring-mass plan (common practice for dimensionless SLIP models):
length l0, time sqrt(l0/g), force m g, velocity sqrt(g l0); angles unchanged.
"""

import dataclasses
from pathlib import Path

import numpy as np
import pytest

from legbridge.robots.errors import PlanScalingError
from legbridge.mapping.readers import read_plan

FILES = Path(__file__).parent / "plan_files"


def test_nondimensional_csv_against_hand_arithmetic():
    # good_nondim.csv: l0 = 0.64 m, m = 25 kg, g = 9.81 m/s^2 (from its metadata lines)
    # hand arithmetic: time unit sqrt(0.64 / 9.81) = 0.8 / 3.132092 = 0.2554203 s
    #                  force unit 25 * 9.81 = 245.25 N; velocity unit sqrt(9.81 * 0.64) = 2.505674 m/s
    plan = read_plan(FILES / "good_nondim.csv")
    sc = plan.scaling
    assert (sc.length_m, sc.mass_kg, sc.gravity_m_s2, sc.source) == (0.64, 25.0, 9.81, "plan metadata")
    assert sc.time_s == pytest.approx(0.2554203, rel=1e-6)
    assert sc.force_n == pytest.approx(245.25, rel=1e-12)
    c = plan.cases[0]
    # time 0.5 -> 0.5 * 0.2554203 = 0.1277102 s; 2.0 -> 0.5108407 s
    np.testing.assert_allclose(c.time_s[[1, 4]], [0.1277102, 0.5108407], rtol=1e-6)
    # leg length 0.95 -> 0.95 * 0.64 = 0.608 m; 0.9 -> 0.576 m
    np.testing.assert_allclose(c.leg_length_m[[1, 2]], [0.608, 0.576], rtol=1e-12)
    # angles are not scaled
    np.testing.assert_array_equal(c.leg_angle_rad, [0.25, 0.1, 0.0, -0.1, -0.25])
    # axial 2.0 body weights = 490.5 N at a = 0.1 rad (README conventions, F = axial (-sin a, cos a)):
    # sin 0.1 = 0.0998334, cos 0.1 = 0.9950042 -> (-48.96829, 488.04954) N
    assert c.force_x_n[1] == pytest.approx(-48.96829, rel=1e-6)
    assert c.force_z_n[1] == pytest.approx(488.04954, rel=1e-6)
    # axial 2.5 at a = 0 -> 613.125 N straight up
    assert (c.force_x_n[2], c.force_z_n[2]) == (0.0, pytest.approx(613.125, rel=1e-12))
    # velocity 0.45 -> 0.45 * 2.505674 = 1.127553 m/s
    assert c.body_vx_m_s[1] == pytest.approx(1.127553, rel=1e-6)


def test_l0_and_mass_from_the_robot(example_robot):
    # good_nondim_robot.csv gives neither l0 nor m: the robot does (example leg: 20 kg body + 2.0 + 0.8 kg
    # segments = 22.8 kg, from its TOML); l0 = 0.6 m set here; g = standard gravity 9.80665 m/s^2 (from memory)
    robot = dataclasses.replace(example_robot, nominal_leg_length_m=0.6)
    plan = read_plan(FILES / "good_nondim_robot.csv", robot=robot)
    sc = plan.scaling
    assert (sc.length_m, sc.mass_kg, sc.gravity_m_s2, sc.source) == (0.6, pytest.approx(22.8), 9.80665, "robot file")
    drop = plan.case("drop")
    # ground height -0.1 l0 = -0.06 m; time 1.0 -> sqrt(0.6 / 9.80665) = 0.2473519 s
    assert drop.ground_height_m == pytest.approx(-0.06, rel=1e-12)
    assert drop.time_s[1] == pytest.approx(0.2473519, rel=1e-6)
    # force 2.0 m g = 2 * 22.8 * 9.80665 = 447.1832 N
    assert drop.force_z_n[1] == pytest.approx(447.1832, rel=1e-6)
    # the file's second comment line contains '=' inside prose: a comment, not a metadata key
    assert set(plan.metadata) == {"phase_source"}


def test_plan_values_win_over_robot_and_sources_are_named(example_robot):
    robot = dataclasses.replace(example_robot, nominal_leg_length_m=0.9)
    plan = read_plan(FILES / "good_nondim.csv", robot=robot)
    assert plan.scaling.length_m == 0.64 and plan.scaling.source == "plan metadata"


def test_robot_without_nominal_length_is_refused(example_robot):
    # the example leg has no nominal_leg_length_m
    with pytest.raises(PlanScalingError, match=r"'nominal_leg_length_m'.*no value in the plan or the robot file"):
        read_plan(FILES / "good_nondim_robot.csv", robot=example_robot)
