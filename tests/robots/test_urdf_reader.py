"""URDF input: chain extraction, locking, limits (tighter wins), body inertia, and every refusal.

Hand references: body mass and centre of mass as sums over the locked links (statics), body pitch
inertia by the parallel-axis theorem (Meriam and Kraige, *Engineering Mechanics: Dynamics*,
ch. 7, from memory); the spatial-leg.urdf numbers are invented and read off the file.
"""

from __future__ import annotations

import shutil

import numpy as np
import pinocchio as pin
import pytest

from legbridge.robots import actuator_limits as al
from legbridge.robots import build_leg_model, load_robot
from legbridge.robots.errors import InputFileNotFound, RobotFileError
from legbridge.robots.library import library_path

URDF = library_path("spatial-leg.urdf").read_text()
TOML = library_path("spatial-leg.toml").read_text()


@pytest.fixture
def spatial(tmp_path):
    """spatial(toml_changes=(), urdf_changes=()) -> path of an edited copy of the spatial-leg example."""

    def _make(toml_changes=(), urdf_changes=()):
        t, u = TOML, URDF
        for old, new in toml_changes:
            assert old in t, old
            t = t.replace(old, new)
        for old, new in urdf_changes:
            assert old in u, old
            u = u.replace(old, new)
        (tmp_path / "spatial-leg.urdf").write_text(u)
        (tmp_path / "leg.toml").write_text(t)
        return tmp_path / "leg.toml"

    return _make


def test_spatial_leg_loads():
    robot = load_robot(library_path("spatial-leg.toml"))
    assert robot.joint_names == ("hip_pitch", "knee")
    assert robot.segments == () and robot.urdf.base_link == "pelvis"
    # body = pelvis + locked hip yaw and roll links: 20 + 0.8 + 1.0 kg
    assert robot.body_mass_kg == pytest.approx(21.8, rel=1e-12)
    m = np.array([20.0, 0.8, 1.0])
    z = np.array([0.05, -0.10, -0.15])      # link COMs in the pelvis frame at the locked pose
    zc = m @ z / m.sum()
    iyy = np.array([0.40, 0.002, 0.003]) + m * (z - zc) ** 2    # parallel axes (x offsets are 0)
    assert robot.body_pitch_inertia_kgm2 == pytest.approx(iyy.sum(), rel=1e-12)
    assert robot.hip_offset_m == pytest.approx((0.0, -0.17 - zc), abs=1e-12)
    # URDF <limit>: range as hard stops; velocity 14 rad/s is tighter than the motor's 420/9 rad/s
    hip = robot.joint("hip_pitch")
    assert (hip.lower_rad, hip.upper_rad) == (-1.4, 1.4)
    assert al.max_joint_speed(hip).value == 14.0 and "URDF" in al.max_joint_speed(hip).source
    # effort 90 N m is looser than the drive's 0.9 * 9 * 0.11 * 90 = 80.19 N m: the drive wins
    assert al.max_joint_torque(hip).value == pytest.approx(80.19) and al.max_joint_torque(hip).source == "drive peak current"
    knee = robot.joint("knee")
    assert knee.effort_limit_nm == 130.0 and al.max_joint_torque(knee).value == pytest.approx(118.8)


def test_spatial_leg_model_geometry():
    robot = load_robot(library_path("spatial-leg.toml"))
    leg = build_leg_model(robot)
    assert leg.link_lengths_m == pytest.approx((0.38, 0.40), abs=1e-12)   # 0.38 + sole 0.02 below the foot link
    d = leg.model.createData()
    q1, q2 = 0.3, -1.0
    pin.framesForwardKinematics(leg.model, d, leg.full_q([0, 0, 0], [q1, q2]))
    rel = d.oMf[leg.foot_frame_id].translation - d.oMf[leg.hip_frame_id].translation
    # Spong et al., planar two-link forward kinematics, our convention (see test_leg_model_reference)
    assert rel[[0, 2]] == pytest.approx([-0.38 * np.sin(q1) - 0.40 * np.sin(q1 + q2), -0.38 * np.cos(q1) - 0.40 * np.cos(q1 + q2)])
    assert pin.computeTotalMass(leg.model) == pytest.approx(21.8 + 3.0 + 0.9)
    assert robot.warnings == ()


def test_toml_range_and_limits_tighter_wins(spatial):
    p = spatial(toml_changes=[("[joints.knee]\n", "[joints.knee]\nupper_rad = -0.3\nlower_rad = -3.0\nvelocity_limit_rad_s = 9.0\neffort_limit_nm = 200.0\n")])
    knee = load_robot(p).joint("knee")
    assert (knee.lower_rad, knee.upper_rad) == (-2.6, -0.3)
    assert knee.velocity_limit_rad_s == 9.0 and knee.effort_limit_nm == 130.0


def test_body_from_toml(spatial):
    p = spatial(toml_changes=[('knee = "backward"\n', 'knee = "backward"\nbody_mass_kg = 30.0\nbody_pitch_inertia_kgm2 = 1.1\n')])
    robot = load_robot(p)
    assert robot.body_mass_kg == 30.0 and robot.body_pitch_inertia_kgm2 == pytest.approx(1.1)
    assert pin.computeTotalMass(build_leg_model(robot).model) == pytest.approx(30.0 + 3.9)


def test_leg_joints_optional_and_continuous_joint_lockable(spatial):
    p = spatial(toml_changes=[('leg_joints = ["hip_pitch", "knee"]     # checked against the chain found from hip_link to foot_link\n', "")],
                urdf_changes=[('<joint name="hip_yaw" type="revolute">', '<joint name="hip_yaw" type="continuous">')])
    robot = load_robot(p)
    assert robot.joint_names == ("hip_pitch", "knee")
    assert build_leg_model(robot).model.nq == 5


def test_zero_pose_warning(spatial):
    p = spatial(urdf_changes=[('<origin xyz="0 0 -0.38"/>\n    <axis xyz="0 1 0"/>', '<origin xyz="0.05 0 -0.38"/>\n    <axis xyz="0 1 0"/>')])
    assert any("hang straight down" in w for w in load_robot(p).warnings)


def test_changed_urdf_refused_at_build(spatial, tmp_path):
    robot = load_robot(spatial())
    (tmp_path / "spatial-leg.urdf").write_text(URDF.replace('value="20.0"', 'value="21.0"'))
    with pytest.raises(RobotFileError, match="URDF changed since the robot was loaded"):
        build_leg_model(robot)


@pytest.mark.parametrize(
    "toml_changes, urdf_changes, match",
    [
        ([('hip_link = "pelvis"', 'hip_link = "torso"')], [], "urdf.hip_link'.*no link 'torso'"),
        ([('foot_link = "foot"', 'foot_link = "hip_roll_link"'), ('hip_link = "pelvis"', 'hip_link = "thigh"')], [],
         "urdf.foot_link'.*'hip_roll_link' is not below hip link 'thigh'"),
        ([("locked = { hip_yaw = 0.0, hip_roll = 0.0 }", "locked = { hip_yaw = 0.0 }"),
          ('leg_joints = ["hip_pitch", "knee"]', 'leg_joints = ["hip_roll", "hip_pitch", "knee"]'),
          ("[joints.hip_pitch]", "[joints.hip_roll]\nx = 1\n[joints.hip_pitch]")], [],
         "joint 'hip_roll'.*not a pitch joint.*RX"),
        ([("locked = { hip_yaw = 0.0, hip_roll = 0.0 }", "locked = { hip_yaw = 0.0, hip_roll = 0.2 }")], [],
         "joint 'hip_pitch'.*not a pitch joint.*world axis"),
        ([("locked = { hip_yaw = 0.0, hip_roll = 0.0 }", "locked = { hip_yaw = 0.0, hip_roll = 0.9 }")], [],
         r"urdf.locked.hip_roll'.*within the URDF limits \[-0.4, 0.5\]"),
        ([("locked = { hip_yaw = 0.0, hip_roll = 0.0 }", "locked = { hip_yaw = 0.0, hip_roll = 0.0, ankle = 0.0 }")], [],
         "urdf.locked.ankle'.*no joint 'ankle'"),
        ([("locked = { hip_yaw = 0.0, hip_roll = 0.0 }", "locked = { hip_yaw = 0.0, hip_roll = 0.0, foot_fixed = 0.0 }")], [],
         "urdf.locked.foot_fixed'.*cannot be locked.*fixed"),
        ([('leg_joints = ["hip_pitch", "knee"]', 'leg_joints = ["knee", "hip_pitch"]')], [], "urdf.leg_joints'.*do not match the chain"),
        ([('leg_joints = ["hip_pitch", "knee"]', 'leg_joints = "knee"')], [], "urdf.leg_joints'.*list of joint names"),
        ([("foot_offset_m = [0.0, 0.0, -0.02]", "foot_offset_m = [0.0, -0.02]")], [], "urdf.foot_offset_m'.*3 numbers"),
        ([], [('<joint name="knee" type="revolute">', '<joint name="knee" type="continuous">')], "joint 'knee'.*continuous.*nq = 2"),
        ([], [('<joint name="knee" type="revolute">', '<joint name="knee" type="prismatic">')], "joint 'knee'.*not a pitch joint.*prismatic"),
        ([], [('<origin xyz="0 0 -0.38"/>\n    <axis xyz="0 1 0"/>', '<origin xyz="0 0 -0.38"/>\n    <axis xyz="0 -1 0"/>')],
         "joint 'knee'.*not a pitch joint.*axis is -y"),
        ([], [('<link name="foot"/>', '<link name="foot"/>\n  <link name="arm"/>\n  <joint name="arm_j" type="revolute"><parent link="pelvis"/>'
                                       '<child link="arm"/><axis xyz="0 1 0"/><limit lower="-1" upper="1" effort="1" velocity="1"/></joint>')],
         r"urdf.locked'.*must be locked.*\['arm_j'\]"),
        ([], [("<robot name", "<robbot name")], "not valid XML"),
        ([], [('<robot name="spatial-leg">', '<model name="spatial-leg">'), ("</robot>", "</model>")], "not a URDF.*<robot>"),
        ([("[joints.knee]\n", "[spare.knee]\n")], [], "joints.knee'.*missing actuator table"),
        ([("[joints.hip_pitch]", "[joints.ankle]\ngear_ratio = 1.0\n[joints.hip_pitch]")], [], "joints.ankle'.*not in the leg chain"),
        ([('knee = "backward"\n', 'knee = "backward"\nbody_mass_kg = 30.0\n')], [], "robot.body_pitch_inertia_kgm2'.*both body keys"),
        ([("[joints.knee]\n", "[joints.knee]\nupper_rad = -2.7\n")], [], "joints.knee.upper_rad'.*empty joint range"),
        ([("[joints.knee]\n", "[joints.knee]\nstiffness = 3.0\n")], [], "joints.knee'.*unknown key 'stiffness'"),
        ([('file = "spatial-leg.urdf"', "file = 3")], [], "urdf.file'.*expected a string"),
        ([('ground_friction = 0.7', 'ground_friction = 0.7\nhip_offset_x_m = 0.1')], [], "robot'.*unknown key 'hip_offset_x_m'"),
    ],
)
def test_urdf_errors(spatial, toml_changes, urdf_changes, match):
    with pytest.raises(RobotFileError, match=match):
        load_robot(spatial(toml_changes, urdf_changes))


def test_urdf_without_limits_needs_toml_range(spatial):
    p = spatial(urdf_changes=[('<limit lower="-2.6" upper="-0.1" effort="130" velocity="12"/>', '<limit effort="130" velocity="12"/>')])
    # urdfdom reads absent lower/upper as 0, so the range is empty until the TOML gives one
    with pytest.raises(RobotFileError, match="joints.knee.upper_rad'.*empty joint range"):
        load_robot(p)


def test_bare_urdf_refused():
    with pytest.raises(RobotFileError, match="a URDF alone does not describe the actuators"):
        load_robot(library_path("spatial-leg.urdf"))


def test_missing_urdf_is_file_not_found(spatial):
    with pytest.raises(InputFileNotFound, match="urdf.file'.*URDF file not found.*gone.urdf") as info:
        load_robot(spatial([('file = "spatial-leg.urdf"', 'file = "gone.urdf"')]))
    assert isinstance(info.value, FileNotFoundError)
