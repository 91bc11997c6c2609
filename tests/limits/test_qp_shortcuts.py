"""The QP shortcuts change no result: samples whose planned force is feasible are their own solution,
and a feasible plan is its own nearest feasible motion (KKT with zero multipliers; Boyd and
Vandenberghe, Convex Optimization, sec. 5.5.3). Reference: the full stacked problem solved by
Clarabel through cvxpy on the same data."""

import numpy as np
import pytest

from legbridge.limits.qp import force as fqp
from legbridge.limits.qp import motion as mqp
from legbridge.limits.qp.problem import solve
from legbridge.limits.checks.results import CheckSettings
from legbridge.mapping.slip.demo import demo_plan
from legbridge.mapping.translate import translate_plan
from legbridge.robots import load_robot


@pytest.fixture(scope="module")
def demo_case():
    robot = load_robot("lab-biped-leg")
    (traj,) = translate_plan(demo_plan((-0.06,)), robot, rate_hz=500.0)  # a case with violations
    return robot, traj


def test_force_qp_with_feasible_samples_left_out_equals_the_full_problem(demo_case):
    robot, traj = demo_case
    prob, sol = fqp.force_feasibility(traj, robot, robot.ground_friction)
    idx = np.flatnonzero(traj.stance)
    assert 0 < prob.meta["n_samples"] < idx.size  # some, not all, samples needed the solver
    lo, hi = fqp.torque_bounds(traj, robot)
    full = fqp.build(traj.jacobian[idx], traj.tau_free[idx], traj.foot_force_n[idx], lo[idx], hi[idx], robot.ground_friction)
    x, full_sol = solve(full)
    assert sol.ok and full_sol.ok
    df_full, _ = fqp.unpack(x, idx.size, traj.n_joints)
    f_full = traj.foot_force_n[idx] + df_full
    np.testing.assert_allclose(sol.values["force_n"][idx], f_full, atol=1e-4 * np.abs(f_full).max())


def test_feasible_plan_needs_no_solver_and_is_returned_exactly(example_robot, make_traj):
    t = np.arange(200) / 1000
    q = np.column_stack([0.1 * np.sin(2 * np.pi * t), -1.0 + 0.1 * np.cos(2 * np.pi * t)])
    traj = make_traj(example_robot, q)
    _, sol = mqp.nearest_motion(traj, example_robot, CheckSettings())
    assert sol.ok and sol.solver.startswith("none")
    np.testing.assert_array_equal(sol.values["deviation_rad"], 0.0)
    _, fsol = fqp.force_feasibility(traj, example_robot, 0.7)  # zero planned force: feasible everywhere
    assert fsol.ok and np.all(fsol.values["shortfall_n"] == 0.0)


def test_reusing_a_compiled_problem_gives_the_same_motion(demo_case):
    # Reference: the same QP compiled afresh (cvxpy's plain path) for each case.
    from legbridge.limits.qp.problem import reuse_compiled_problems

    robot, _ = demo_case
    trajs = translate_plan(demo_plan((-0.06, 0.06)), robot, rate_hz=250.0)
    fresh = [mqp.nearest_motion(t, robot, CheckSettings(rate_hz=250.0))[1] for t in trajs]
    reuse_compiled_problems(True)
    try:
        reused = [mqp.nearest_motion(t, robot, CheckSettings(rate_hz=250.0))[1] for t in trajs]
    finally:
        reuse_compiled_problems(False)
    for a, b in zip(fresh, reused):
        assert a.ok and b.ok
        # both are interior-point solutions to Clarabel's default tolerances: the same optimum to
        # within 1e-5 rad (far below a joint encoder's resolution), the same objective to 1e-9
        np.testing.assert_allclose(b.values["q_corrected_rad"], a.values["q_corrected_rad"], atol=1e-5)
        assert b.residuals["objective"] == pytest.approx(a.residuals["objective"], rel=1e-9)
