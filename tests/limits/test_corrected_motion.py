"""The nearest feasible motion (motion QP) is feasible for what it claims, keeps the stance foot on the
ground, and is checked again with every check.

References: forward kinematics by Pinocchio (framesForwardKinematics) for the foot; the joint torque a
changed motion asks, recomputed by inverse dynamics (pin.rnea through mapping.retarget), against the
same actuator envelope the QP used; speed by forward differences on the export grid (the QP's rows).
"""

import numpy as np
import pinocchio as pin
import pytest

from legbridge.limits.checks.case import check_case
from legbridge.limits.checks.results import CheckSettings
from legbridge.limits.qp.force import torque_bounds
from legbridge.mapping.pipeline import prepare
from legbridge.mapping.retarget import with_joint_motion
from legbridge.mapping.slip.demo import demo_plan
from legbridge.robots.actuator_limits import max_joint_speed
from legbridge.robots.leg_model import build_leg_model
from legbridge.robots.library import as_robot

SETTINGS = CheckSettings(rate_hz=500.0, duration_s=2.0)


@pytest.fixture(scope="module")
def corrected():
    robot = as_robot("lab-biped-leg")
    leg = build_leg_model(robot)
    traj = prepare(demo_plan((-0.06,)), robot, rate_hz=500.0, leg_model=leg).trajectories[0]
    review = check_case(traj, robot, SETTINGS)
    return robot, leg, traj, review


def _foot(leg, q):
    data = leg.model.createData()
    out = np.empty((q.shape[0], 2))
    qf = pin.neutral(leg.model)
    for k in range(q.shape[0]):
        qf[leg.q_index] = q[k]
        pin.framesForwardKinematics(leg.model, data, qf)
        out[k] = (data.oMf[leg.foot_frame_id].translation - data.oMf[leg.hip_frame_id].translation)[[0, 2]]
    return out


def test_the_stance_foot_stays_on_the_ground(corrected):
    _, leg, traj, review = corrected
    sol = review.motion_qp
    assert sol.ok, sol.status
    qc = sol.values["q_corrected_rad"]
    st = np.asarray(traj.stance)
    moved = np.linalg.norm(_foot(leg, qc[st]) - _foot(leg, np.asarray(traj.q)[st]), axis=1)
    assert moved.max() < 1e-3  # less than 1 mm (first-order contact rows, exact for the two-joint leg)
    assert sol.residuals["primal_rel"] < 1e-4 and sol.residuals["stationarity_rel"] < 1e-4  # accepted on KKT


def test_what_the_qp_claims_holds_on_the_corrected_targets(corrected):
    robot, leg, traj, review = corrected
    sol = review.motion_qp
    qc = np.asarray(sol.values["q_corrected_rad"])
    joints = [robot.joint(n) for n in traj.joint_names]
    # range and speed: hard where the plan allows (no slack needed on this case)
    assert float(sol.values["max_range_speed_slack"]) < 1e-6
    lo = np.array([j.lower_rad for j in joints]); hi = np.array([j.upper_rad for j in joints])
    assert np.all(qc >= lo - 1e-9) and np.all(qc <= hi + 1e-9)
    v = np.diff(qc, axis=0) * traj.rate_hz
    assert np.all(np.abs(v) <= np.array([max_joint_speed(j).value for j in joints]) * (1 + 1e-6) + 1e-9)
    # torque: the recomputed torque meets the envelope wherever the QP needed no slack, to the
    # linearisation's accuracy (1 % of the bound)
    moved = with_joint_motion(traj, robot, qc, leg)
    t_lo, t_hi = torque_bounds(traj, robot)
    free = ~sol.values["beyond_reach"]
    over = np.maximum(moved.tau - t_hi, t_lo - moved.tau)[free]
    assert over.max() < 0.01 * np.abs(t_hi).max()
    # and the recheck reports what remains: the stance knee (the foot is held) and the body pitch
    still = {(w.limit, w.joint) for w in review.corrected.by_limit if w.utilisation > 1.0}
    assert ("peak_torque", "hip") not in still  # the flight exceedance is answered by the new motion
    assert review.summary.per_limit["peak_torque"] > 1.2 and review.corrected is not None


def test_the_force_objective_carries_no_constant(corrected):
    # written around the plan: a feasible plan's objective is 0, and any objective is >= 0
    _, _, _, review = corrected
    assert review.force_qp.residuals["objective"] >= -1e-9
    assert review.motion_qp.residuals["objective"] >= -1e-9
