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


def test_a_windowed_solve_is_the_whole_problems_optimum():
    # The nearest-motion QP of the invented running demo's ground-0.06m case at 4 kHz: the plan
    # violates rows near a few touchdowns only. The windowed answer must (1) meet the whole problem's
    # KKT conditions (sufficient for a convex QP: Nocedal & Wright, Numerical Optimization, 2nd ed.,
    # Thm 16.4) and (2) reach the objective of the whole problem solved at once (the reference) to 1e-7
    # relative, while (3) every variable outside the window stays at the plan.
    import scipy.sparse as sp

    import legbridge.limits.qp.motion as mo
    import legbridge.limits.qp.problem as pr
    from legbridge.limits.checks.results import CheckSettings
    from legbridge.mapping.pipeline import prepare
    from legbridge.mapping.slip.demo import demo_run_plan
    from legbridge.robots.library import as_robot

    (traj,) = prepare(demo_run_plan((-0.03,)), "lab-biped", rate_hz=4000.0).trajectories
    captured = {}

    def keep(problem, solver="CLARABEL"):
        captured["p"] = problem
        return pr.solve(problem, solver)

    orig = mo.solve
    mo.solve = keep
    try:
        mo.nearest_motion(traj, as_robot("lab-biped"), CheckSettings(rate_hz=4000.0), "CLARABEL")
    finally:
        mo.solve = orig
    q = captured["p"]
    A = sp.csr_matrix(q.A)
    out = pr._windowed(q, A, "CLARABEL")
    assert out is not None, "the demo's violations are local: a window must do"
    x, sol = out
    assert sol.ok and sol.residuals["window_variables"] < 0.3 * q.n_variables
    assert sol.residuals["primal_rel"] <= pr.REL_TOL and sol.residuals["stationarity_rel"] <= pr.REL_TOL
    xf, *_ = pr._solve_full(q, A, "CLARABEL")
    assert q.objective(x) == pytest.approx(q.objective(xf), rel=1e-6)
    x0 = np.where(q.p_diag > 0, -q.c / np.where(q.p_diag > 0, q.p_diag, 1.0), 0.0)
    assert np.count_nonzero(x != x0) <= sol.residuals["window_variables"]
