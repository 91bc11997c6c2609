"""A biped whose right leg is described on its own ([right] in the robot file).

References: planar statics by hand (a joint torque balances the moments about it of the gravity on
its subtree and the foot force), and the one-description biped (an explicit right leg equal to the
left must give the same numbers to the last bit)."""

import numpy as np
import pytest

from legbridge.mapping.pipeline import prepare
from legbridge.mapping.plan import Plan, ReducedTrajectory
from legbridge.mapping.slip.demo import demo_run_plan
from legbridge.robots.errors import RobotFileError
from legbridge.robots.library import library_path
from legbridge.robots.toml_reader import load_robot

G = 9.80665  # standard gravity, the value legbridge gives its Pinocchio model


def _right_leg(text: str, *, shank_mass: float) -> str:
    """The lab-biped file with a [right] leg: its own copy of the leg tables, the shank's mass changed."""
    body = text[text.index("[[segments]]"):]
    right = body.replace("[[segments]]", "[[right.segments]]").replace("[joints.", "[right.joints.")
    right = right.replace("mass_kg = 0.8", f"mass_kg = {shank_mass}")
    return text + "\n" + right


@pytest.fixture()
def files(tmp_path):
    base = library_path("lab-biped.toml").read_text()
    same, heavy = tmp_path / "same.toml", tmp_path / "heavy.toml"
    same.write_text(_right_leg(base, shank_mass=0.8))
    heavy.write_text(_right_leg(base, shank_mass=1.6))  # INVENTED: a right shank twice as heavy
    return same, heavy


def test_an_explicit_identical_right_leg_changes_nothing(files):
    same, _ = files
    plan = demo_run_plan((0.0,))
    a = prepare(plan, "lab-biped", rate_hz=500.0).trajectories[0]
    b = prepare(plan, str(same), rate_hz=500.0).trajectories[0]
    for name in ("q", "qd", "qdd", "tau", "current_a", "voltage_v", "base_residual"):
        np.testing.assert_array_equal(getattr(a, name), getattr(b, name), err_msg=name)


def test_a_heavier_right_shank_by_statics(files):
    _, heavy = files
    robot = load_robot(heavy)
    assert robot.total_mass_kg == pytest.approx(19.0 + 3.0 + 3.8)  # hand: body + left leg + right leg
    n = 51
    t = np.arange(n) * 0.002
    m = robot.total_mass_kg
    case = ReducedTrajectory(name="static", time_s=t, leg_length_m=np.full(n, 0.65), leg_angle_rad=np.zeros(n),
                             force_x_n=np.zeros(n), force_z_n=np.full(n, m * G), stance=np.ones(n, bool),
                             body_x_m=np.zeros(n), body_z_m=np.full(n, 1.0), body_vx_m_s=np.zeros(n),
                             body_vz_m_s=np.zeros(n))  # INVENTED: standing still on both feet
    traj = prepare(Plan("<static, invented>", "", (case,)), robot, rate_hz=500.0, gait="both").trajectories[0]
    i = n // 2
    fz = m * G / 2  # the gait 'both' shares the force equally
    for k, (m1, c1, l1, m2, c2, l2) in enumerate(((2.2, 0.14, 0.38, 0.8, 0.16, 0.40), (2.2, 0.14, 0.38, 1.6, 0.16, 0.40))):
        q1, q2 = traj.q[i, 2 * k], traj.q[i, 2 * k + 1]
        # hand statics: RY(q) takes -z to (-sin q, -cos q), so knee x_k = -l1 sin q1, coms x_1, x_2, foot x_f
        xk, x1 = -l1 * np.sin(q1), -c1 * np.sin(q1)
        x2, xf = xk - c2 * np.sin(q1 + q2), xk - l2 * np.sin(q1 + q2)
        hip = -G * (m1 * x1 + m2 * x2) + xf * fz
        knee = -G * m2 * (x2 - xk) + (xf - xk) * fz
        np.testing.assert_allclose(traj.tau[i, 2 * k:2 * k + 2], [hip, knee], rtol=1e-9, atol=1e-9, err_msg=f"leg {k}")
    assert abs(traj.tau[i, 3] - traj.tau[i, 1]) > 0.1  # the heavier shank shows at the right knee


def test_a_right_leg_with_other_joints_is_refused(tmp_path):
    base = library_path("lab-biped.toml").read_text()
    bad = tmp_path / "bad.toml"
    bad.write_text(_right_leg(base, shank_mass=0.8).replace("[right.joints.knee]", "[right.joints.elbow]"))
    with pytest.raises(RobotFileError, match="right.joints"):
        load_robot(bad)
