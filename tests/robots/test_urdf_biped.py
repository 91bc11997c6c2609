"""URDF bipeds: robots/library/bolt-biped.toml (the ODRI Bolt URDF from example-robot-data) and refusals.

References outside the code under test: Pinocchio used directly on the shipped URDF file
(pin.buildModelFromUrdf, the hip abduction joints locked with pin.buildReducedModel, a fixed base:
with zero velocity and acceleration a held base makes the joint torques those of the fixed-base model
with the foot forces applied, the recursive Newton-Euler algorithm, Featherstone, *Rigid Body Dynamics
Algorithms*, 2008, ch. 5); masses summed by hand from the numbers in bolt-biped.urdf. The actuator
tables of bolt-biped.toml are INVENTED (the file says so); the refusal URDFs are edited copies.
"""

from __future__ import annotations

import numpy as np
import pinocchio as pin
import pytest

from legbridge.robots import build_leg_model, load_robot
from legbridge.robots.biped_model import build_biped_model
from legbridge.robots.errors import RobotFileError
from legbridge.robots.library import library_path, resolve_robot

G = 9.80665  # standard gravity (3rd CGPM, 1901), the value legbridge gives its Pinocchio models
URDF_PATH = library_path("bolt-biped.urdf")
URDF = URDF_PATH.read_text()
TOML = library_path("bolt-biped.toml").read_text()
CHAINS = {"left": ("FL_HFE", "FL_KFE", "FL_FOOT"), "right": ("FR_HFE", "FR_KFE", "FR_FOOT")}

# masses read off bolt-biped.urdf by hand: base_link, FL_SHOULDER, FR_SHOULDER (rigid with the base once
# the HAA joints are locked); upper and lower leg of one side (the feet are massless)
BODY_MASS = 0.61436936 + 0.14004265 + 0.14004412
LEG_MASS = 0.14853845 + 0.03117243


@pytest.fixture(scope="module")
def bolt():
    return load_robot("bolt-biped")


@pytest.fixture(scope="module")
def reference():
    """The shipped URDF read by Pinocchio directly: fixed base, FL_HAA and FR_HAA locked at 0."""
    full = pin.buildModelFromUrdf(str(URDF_PATH))
    lock = [full.getJointId("FL_HAA"), full.getJointId("FR_HAA")]
    model = pin.buildReducedModel(full, lock, pin.neutral(full))
    model.gravity = pin.Motion(np.array([0.0, 0.0, -G]), np.zeros(3))
    return model


@pytest.fixture
def edited(tmp_path):
    """edited(toml_changes=(), urdf_changes=()) -> path of an edited copy of bolt-biped.toml + .urdf."""

    def _make(toml_changes=(), urdf_changes=()):
        t, u = TOML, URDF
        for old, new in toml_changes:
            assert old in t, old
            t = t.replace(old, new)
        for old, new in urdf_changes:
            assert old in u, old
            u = u.replace(old, new)
        (tmp_path / "bolt-biped.urdf").write_text(u)
        (tmp_path / "biped.toml").write_text(t)
        return tmp_path / "biped.toml"

    return _make


def test_bolt_biped_loads(bolt):
    assert resolve_robot("bolt-biped") == library_path("bolt-biped.toml")
    assert bolt.legs == ("left", "right") and bolt.is_biped
    assert bolt.joint_names == ("hip", "knee")
    assert bolt.limb_joint_names == ("left_hip", "left_knee", "right_hip", "right_knee")
    assert bolt.joint("right_knee").upper_rad == -0.05
    assert bolt.urdf.leg_joints == ("FL_HFE", "FL_KFE") and bolt.urdf.foot_frame == "FL_FOOT"
    assert [c[:3] for c in bolt.urdf.leg_chains] == [("left", ("FL_HFE", "FL_KFE"), "FL_FOOT"),
                                                      ("right", ("FR_HFE", "FR_KFE"), "FR_FOOT")]
    # the body excludes both chains (hand sum above); the model carries everything
    assert bolt.body_mass_kg == pytest.approx(BODY_MASS, rel=1e-12)
    model = build_biped_model(bolt)
    assert pin.computeTotalMass(model.model) == pytest.approx(BODY_MASS + 2 * LEG_MASS, rel=1e-12)
    assert model.joint_names == bolt.limb_joint_names and model.legs == ("left", "right")
    assert model.columns("right") == slice(2, 4)
    assert model.leg.joint_names == ("hip", "knee")
    assert pin.computeTotalMass(model.leg.model) == pytest.approx(BODY_MASS + 2 * LEG_MASS, rel=1e-12)
    # the URDF <limit> values (+-10 rad, 1000 rad/s, 1000 N m) are looser than the table's: the table wins
    hip = bolt.joint("hip")
    assert (hip.lower_rad, hip.upper_rad) == (-1.5, 1.5) and hip.effort_limit_nm == 1000.0
    assert hip.effort_limit_source == "URDF joints 'FL_HFE', 'FR_HFE'"


def _foot_forces(model, data, feet, force_world):
    """External forces per joint: ``force_world`` at each foot frame's origin, as a spatial force in
    the frame of the joint that carries the foot (pure force at the foot point, moved by jMf)."""
    fext = [pin.Force.Zero() for _ in range(model.njoints)]
    for fid in feet:
        j = model.frames[fid].parentJoint
        at_foot = pin.SE3(np.eye(3), data.oMf[fid].translation)
        fext[j] += (data.oMi[j].inverse() * at_foot).act(pin.Force(force_world, np.zeros(3)))
    return fext


@pytest.mark.parametrize("q_hip, q_knee", [(0.6, -1.2), (0.785, -1.571), (0.2, -0.5)])
def test_static_double_stance_matches_pinocchio_on_the_urdf(bolt, reference, q_hip, q_knee):
    model = build_biped_model(bolt)
    weight = (BODY_MASS + 2 * LEG_MASS) * G
    half = np.array([0.0, 0.0, weight / 2.0])        # vertical, world frame, on each foot

    # ours: planar base held at (0.1, 0.3, pitch 0), both legs in the same bent posture
    m = model.model
    q = pin.neutral(m)
    q[model.base_q_index] = (0.1, 0.3, 0.0)
    q[model.q_index] = (q_hip, q_knee, q_hip, q_knee)
    d = m.createData()
    pin.framesForwardKinematics(m, d, q)
    feet = [model.foot_frame_ids["left"], model.foot_frame_ids["right"]]
    tau = pin.rnea(m, d, q, np.zeros(m.nv), np.zeros(m.nv), _foot_forces(m, d, feet, half))[model.v_index]

    # reference: Pinocchio on the URDF file, fixed base, the same angles and forces
    rq = pin.neutral(reference)
    for leg, (hfe, kfe, _) in CHAINS.items():
        rq[reference.joints[reference.getJointId(hfe)].idx_q] = q_hip
        rq[reference.joints[reference.getJointId(kfe)].idx_q] = q_knee
    rd = reference.createData()
    pin.framesForwardKinematics(reference, rd, rq)
    rfeet = [reference.getFrameId(CHAINS[leg][2]) for leg in ("left", "right")]
    rtau = pin.rnea(reference, rd, rq, np.zeros(reference.nv), np.zeros(reference.nv),
                    _foot_forces(reference, rd, rfeet, half))
    order = [reference.joints[reference.getJointId(n)].idx_v for leg in ("left", "right") for n in CHAINS[leg][:2]]
    ref = rtau[order]
    assert np.max(np.abs(ref)) > 0.05                  # a loaded posture, not a trivial zero
    np.testing.assert_allclose(tau, ref, rtol=1e-6, atol=1e-6 * np.max(np.abs(ref)))

    # the same posture puts each foot where the URDF does, relative to the hips (x and z)
    for leg in ("left", "right"):
        ours = d.oMf[model.foot_frame_ids[leg]].translation - d.oMf[model.hip_frame_id].translation
        hfe = reference.getJointId(CHAINS[leg][0])
        theirs = rd.oMf[reference.getFrameId(CHAINS[leg][2])].translation - rd.oMi[hfe].translation
        np.testing.assert_allclose(ours[[0, 2]], theirs[[0, 2]], atol=1e-12)


def test_one_leg_model_is_the_left_chain(bolt, reference):
    leg = build_leg_model(bolt)
    q = (0.785, -1.571)
    d = leg.model.createData()
    pin.framesForwardKinematics(leg.model, d, leg.full_q((0.0, 0.0, 0.0), q))
    ours = d.oMf[leg.foot_frame_id].translation - d.oMf[leg.hip_frame_id].translation
    rq = pin.neutral(reference)
    rq[reference.joints[reference.getJointId("FL_HFE")].idx_q] = q[0]
    rq[reference.joints[reference.getJointId("FL_KFE")].idx_q] = q[1]
    rd = reference.createData()
    pin.framesForwardKinematics(reference, rd, rq)
    theirs = rd.oMf[reference.getFrameId("FL_FOOT")].translation - rd.oMi[reference.getJointId("FL_HFE")].translation
    np.testing.assert_allclose(ours, theirs, atol=1e-12)
    # Bolt's standing pose (HFE > 0, KFE < 0): the knee is behind the hip-foot line, our 'backward'
    knee = rd.oMi[reference.getJointId("FL_KFE")].translation
    hip = rd.oMi[reference.getJointId("FL_HFE")].translation
    assert knee[0] < hip[0] and bolt.knee == "backward"


def _refused(path, match):
    with pytest.raises(RobotFileError, match=match) as exc:
        load_robot(path)
    assert str(path) in str(exc.value)
    return str(exc.value)


def test_refuses_a_longer_right_shank(edited):
    # FR_ANKLE: the foot 0.21 m below the right knee instead of 0.2 m
    p = edited(urdf_changes=[('<origin rpy="0 0 0" xyz="0 -0.008 -0.2"/>', '<origin rpy="0 0 0" xyz="0 -0.008 -0.21"/>')])
    msg = _refused(p, r"'urdf\.legs\.right'.*two different leg descriptions are not supported yet.*foot point")
    assert "-0.41" in msg and "-0.4)" in msg


def test_refuses_a_heavier_right_thigh(edited):
    p = edited(urdf_changes=[('<mass value="0.14853845"/>\n      <inertia ixx="0.00041107" ixy="0.00000000" ixz="-0.00000009"',
                              '<mass value="0.15"/>\n      <inertia ixx="0.00041107" ixy="0.00000000" ixz="-0.00000009"')])
    _refused(p, r"'urdf\.legs\.right'.*two different leg descriptions are not supported yet.*joint 'hip'.*mass")


def test_y_offsets_are_allowed(edited, bolt):
    # the right hip 5 mm further out sideways: the sagittal model is unchanged
    p = edited(urdf_changes=[('xyz="0.0 -0.0636 0"', 'xyz="0.0 -0.0686 0"')])
    robot = load_robot(p)
    assert robot.hip_offset_m == pytest.approx(bolt.hip_offset_m, abs=1e-12)


def test_refuses_a_missing_right_chain(edited):
    p = edited(toml_changes=[('[urdf.legs.right]\nfoot_link = "FR_FOOT"\nleg_joints = ["FR_HFE", "FR_KFE"]\n', "")])
    _refused(p, r"'urdf\.legs\.right'.*missing leg chain")


NECK = ('  <!-- END BASE LINK -->', '  <!-- END BASE LINK -->\n  <link name="head"/>\n'
        '  <joint name="neck" type="revolute"><parent link="base_link"/><child link="head"/>'
        '<axis xyz="0 0 1"/><limit effort="1" lower="-1" upper="1" velocity="1"/></joint>')


def test_refuses_an_unlocked_extra_joint(edited):
    # a joint on the body outside both chains, not in [urdf] locked
    msg = _refused(edited(urdf_changes=[NECK]), r"'urdf\.locked'.*movable joints outside the leg chains must be locked")
    assert "['neck']" in msg
    # locking it is enough
    assert load_robot(edited(toml_changes=[("FR_HAA = 0.0 }", "FR_HAA = 0.0, neck = 0.0 }")], urdf_changes=[NECK])).is_biped


def test_an_unlocked_abduction_joint_joins_its_chain(edited):
    # FR_HAA not locked: it is in the right chain, which leg_joints then contradicts; without
    # leg_joints the chains differ in length
    msg = _refused(edited(toml_changes=[("FL_HAA = 0.0, FR_HAA = 0.0", "FL_HAA = 0.0")]),
                   r"'urdf\.legs\.right\.leg_joints'.*do not match")
    assert "['FR_HAA', 'FR_HFE', 'FR_KFE']" in msg
    _refused(edited(toml_changes=[("FL_HAA = 0.0, FR_HAA = 0.0", "FL_HAA = 0.0"), ('leg_joints = ["FR_HFE", "FR_KFE"]', "")]),
             r"'urdf\.legs\.right'.*two different leg descriptions are not supported yet.*right chain 3")


def test_refuses_a_right_knee_about_minus_y(edited):
    # FR_KFE turned about -y: refused with the hint to flip the axis, nothing faked
    p = edited(urdf_changes=[('<child link="FR_LOWER_LEG"/>\n    <limit effort="1000" lower="-10" upper="10" velocity="1000"/>\n'
                              '    <!-- joints rotates around the y-axis -->\n    <axis xyz="0 1 0"/>',
                              '<child link="FR_LOWER_LEG"/>\n    <limit effort="1000" lower="-10" upper="10" velocity="1000"/>\n'
                              '    <!-- joints rotates around the y-axis -->\n    <axis xyz="0 -1 0"/>')])
    with pytest.raises(RobotFileError, match=r"joint 'FR_KFE' is not a pitch joint.*axis is -y"):
        load_robot(p)


@pytest.mark.parametrize("changes, match", [
    ([('legs = ["left", "right"]', "")], r"'urdf\.legs'.*per-leg chains describe a biped"),
    ([('hip_link = "base_link"', 'hip_link = "base_link"\nfoot_link = "FL_FOOT"')], r"'urdf\.foot_link'.*per leg"),
    ([("[joints.hip]", "[joints.FL_HFE]")], r"'joints\.FL_HFE'.*named by chain position"),
    ([('ground_friction = 0.7', 'ground_friction = 0.7\nbody_mass_kg = 1.0\nbody_pitch_inertia_kgm2 = 0.02')],
     r"'robot\.body_mass_kg'.*not supported for a URDF biped"),
    ([('foot_link = "FR_FOOT"', 'foot_link = "FL_FOOT"'), ('leg_joints = ["FR_HFE", "FR_KFE"]', "")],
     r"'urdf\.legs\.right\.foot_link'.*share joints"),
    ([('leg_joints = ["FR_HFE", "FR_KFE"]', 'leg_joints = ["FR_KFE", "FR_HFE"]')], r"'urdf\.legs\.right\.leg_joints'"),
])
def test_refuses_layout_mistakes(edited, changes, match):
    _refused(edited(toml_changes=changes), match)


def test_limits_are_the_tighter_of_the_table_and_both_urdf_joints(edited):
    # the right hip's URDF effort 2 N m is tighter than the left's 1000 and the table's (none)
    p = edited(urdf_changes=[('<child link="FR_UPPER_LEG"/>\n    <limit effort="1000"', '<child link="FR_UPPER_LEG"/>\n    <limit effort="2.0"')])
    hip = load_robot(p).joint("hip")
    assert hip.effort_limit_nm == 2.0 and hip.effort_limit_source == "URDF joint 'FR_HFE'"
    # the right knee's URDF lower limit -0.01 leaves the table's upper -0.05 an empty range: the message says where from
    p = edited(urdf_changes=[('<child link="FR_LOWER_LEG"/>\n    <limit effort="1000" lower="-10"',
                              '<child link="FR_LOWER_LEG"/>\n    <limit effort="1000" lower="-0.01"')])
    msg = _refused(p, r"'joints\.knee\.upper_rad'.*empty joint range")
    assert "lower -0.01 from URDF joint 'FR_KFE'" in msg and "upper -0.05 from the robot file" in msg


def test_the_native_biped_still_builds():
    robot = load_robot("lab-biped")
    model = build_biped_model(robot)
    assert robot.urdf is None and model.joint_names == robot.limb_joint_names


def test_urdf_robot_mass_counts_its_legs():
    # Reference: the URDF's <inertial> masses summed with Pinocchio (every link of the full model,
    # the universe excluded) for the whole robot; both legs are part of it.
    import pinocchio as pin

    from legbridge.robots.library import library_path
    from legbridge.robots.toml_reader import load_robot

    robot = load_robot("bolt-biped")
    full = pin.buildModelFromUrdf(str(library_path("bolt-biped.urdf")))
    assert robot.total_mass_kg == pytest.approx(sum(i.mass for i in full.inertias[1:]) + full.inertias[0].mass, rel=1e-9)
