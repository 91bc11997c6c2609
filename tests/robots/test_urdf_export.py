"""URDF export round trip: loading the exported URDF with the same actuator tables gives the same
model. Reference: the mass matrix, gravity torques and foot position of the original model, computed
by Pinocchio's CRBA / RNEA / forward kinematics (Featherstone, *Rigid Body Dynamics Algorithms*,
ch. 5-6), compared at random configurations to 1e-9.
"""

from __future__ import annotations

import numpy as np
import pinocchio as pin
import pytest

from legbridge.robots import build_leg_model, load_robot
from legbridge.robots.library import library_path
from legbridge.robots.urdf_export import export_urdf


def reload_toml(robot, original_toml: str, urdf_name: str) -> str:
    """A [urdf] robot TOML for an exported URDF, with the original file's actuator tables."""
    joints = original_toml[original_toml.index("[joints."):]
    return (
        f'[robot]\nname = "{robot.name}-export"\nknee = "{robot.knee}"\nground_friction = {robot.ground_friction}\n\n'
        f'[urdf]\nfile = "{urdf_name}"\nhip_link = "body"\nfoot_link = "foot"\n'
        f"leg_joints = {list(robot.joint_names)}\n\n" + joints
    ).replace("'", '"')


def model_quantities(leg, q):
    m, d = leg.model, leg.model.createData()
    mass = pin.crba(m, d, q)
    mass = np.triu(mass) + np.triu(mass, 1).T
    grav = pin.computeGeneralizedGravity(m, d, q)
    pin.framesForwardKinematics(m, d, q)
    return mass, grav, d.oMf[leg.foot_frame_id].translation.copy(), d.oMf[leg.hip_frame_id].translation.copy()


@pytest.mark.parametrize("name", ["example-leg.toml", "spatial-leg.toml", "sea-three-joint-leg.toml", "lab-biped-leg.toml"])
def test_round_trip(tmp_path, name):
    src = library_path(name)
    robot = load_robot(src)
    leg = build_leg_model(robot)
    text = export_urdf(robot, leg)
    (tmp_path / "export.urdf").write_text(text)
    (tmp_path / "export.toml").write_text(reload_toml(robot, src.read_text(), "export.urdf"))
    robot2 = load_robot(tmp_path / "export.toml")
    leg2 = build_leg_model(robot2)
    assert leg2.joint_names == leg.joint_names
    assert robot2.body_mass_kg == pytest.approx(robot.body_mass_kg, rel=1e-12)
    assert robot2.hip_offset_m == pytest.approx(robot.hip_offset_m, abs=1e-12)
    rng = np.random.default_rng(7)
    for _ in range(20):
        base = rng.uniform([-1, -1, -np.pi], [1, 1, np.pi])
        qj = [rng.uniform(j.lower_rad, j.upper_rad) for j in robot.joints]
        a = model_quantities(leg, leg.full_q(base, qj))
        b = model_quantities(leg2, leg2.full_q(base, qj))
        for x, y in zip(a, b):
            np.testing.assert_allclose(x, y, rtol=0, atol=1e-9)
    # limits survive: ranges, and the URDF velocity/effort written are the tightest static bounds
    for j, j2 in zip(robot.joints, robot2.joints):
        assert (j2.lower_rad, j2.upper_rad) == (j.lower_rad, j.upper_rad)
        assert j2.actuator == j.actuator


def test_export_is_valid_urdf_text(example_robot):
    import xml.etree.ElementTree as ET

    root = ET.fromstring(export_urdf(example_robot))
    assert root.tag == "robot"
    assert [j.get("name") for j in root.findall("joint")] == ["hip", "knee", "foot_fixed"]
    limit = root.find("joint/limit")
    # hip: 1.6 rad stops, effort = eta N Kt I_pk = 0.9 * 10 * 0.12 * 40 = 43.2 N m
    assert float(limit.get("upper")) == 1.6 and float(limit.get("effort")) == pytest.approx(43.2)
