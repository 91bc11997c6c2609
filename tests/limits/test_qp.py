"""The batched QPs against SciPy solving the same problems another way (scipy.optimize.minimize
with SLSQP, one small problem at a time), plus KKT residuals of the batched solutions."""

import numpy as np
import pytest
from scipy.optimize import minimize

from legbridge.limits.qp import force as fqp
from legbridge.limits.qp import motion as mqp
from legbridge.limits.qp.problem import solve


def _random_force_problem(rng, m=12, nj=2):
    J = rng.normal(0, 0.3, (m, 2, nj))
    f0 = np.column_stack([rng.normal(0, 150, m), rng.uniform(-50, 600, m)])
    tf = rng.normal(0, 5, (m, nj))
    hi = rng.uniform(20, 80, (m, nj))
    lo = -rng.uniform(20, 80, (m, nj))
    return J, tf, f0, lo, hi


def _slsqp_force(J, tf, f0, lo, hi, mu, scale=100.0):
    # SLSQP on the scaled force y = F / scale (N) for conditioning; start at F = 0 (feasible here).
    def tau(y):
        return tf - J.T @ (scale * y)

    cons = [{"type": "ineq", "fun": lambda y: hi - tau(y)}, {"type": "ineq", "fun": lambda y: tau(y) - lo},
            {"type": "ineq", "fun": lambda y: np.array([mu * y[1] - y[0], mu * y[1] + y[0], y[1]])}]
    g0 = f0 / scale
    res = minimize(lambda y: np.sum((y - g0) ** 2), x0=np.zeros(2), jac=lambda y: 2 * (y - g0),
                   constraints=cons, method="SLSQP", options={"ftol": 1e-10, "maxiter": 500})
    assert res.success, res.message
    return scale * res.x


@pytest.mark.parametrize("seed", [0, 1, 2])
def test_force_qp_matches_slsqp_per_sample(seed):
    rng = np.random.default_rng(seed)
    J, tf, f0, lo, hi = _random_force_problem(rng)
    mu = 0.6
    prob = fqp.build(J, tf, f0, lo, hi, mu)
    assert prob.shape == (12 * (2 * 2 + 3) + 12 * 2, 12 * 2 + 12 * 2)
    x, sol = solve(prob, "CLARABEL")
    assert sol.ok, sol.status
    df, s = fqp.unpack(x, 12, 2)  # the QP is written around the plan: F = F_plan + dF
    f = f0 + df
    ref = np.array([_slsqp_force(J[k], tf[k], f0[k], lo[k], hi[k], mu) for k in range(12)])
    np.testing.assert_allclose(f, ref, atol=1e-4 * np.abs(f0).max())
    assert np.max(s) < fqp.SLACK_TOL_NM  # F = 0 is feasible here (|tau_free| < bounds): exact penalty
    scale = np.abs(prob.c).max()
    assert sol.residuals["primal_inf"] < 1e-6
    assert sol.residuals["stationarity_inf"] < 1e-7 * scale
    assert sol.residuals["complementarity_inf"] < 1e-6 * scale


def test_force_qp_osqp_agrees_with_clarabel():
    rng = np.random.default_rng(5)
    J, tf, f0, lo, hi = _random_force_problem(rng)
    prob = fqp.build(J, tf, f0, lo, hi, 0.6)
    xc, _ = solve(prob, "CLARABEL")
    xo, so = solve(prob, "OSQP")
    assert so.ok
    np.testing.assert_allclose(xo[:24], xc[:24], atol=0.5)  # OSQP: first-order method (run to 1e-9 here)


def test_force_qp_empty_envelope_sample_is_reported_infeasible_and_others_unaffected():
    rng = np.random.default_rng(3)
    J, tf, f0, lo, hi = _random_force_problem(rng, m=4)
    lo[2, 0], hi[2, 0] = 10.0, 5.0  # speed beyond the envelope: lo > hi, nothing achievable
    x, sol = solve(fqp.build(J, tf, f0, lo, hi, 0.6))
    assert sol.ok
    df, s = fqp.unpack(x, 4, 2)
    f = f0 + df
    assert s[2, 0] >= 2.5 - 1e-6  # slack covers at least half the gap (lo - s <= tau <= hi + s)
    for k in (0, 1, 3):
        np.testing.assert_allclose(f[k], _slsqp_force(J[k], tf[k], f0[k], lo[k], hi[k], 0.6), atol=1e-3)


def _slsqp_motion(q0, lower, upper, vmax, amax, dt):
    n, nj = q0.shape

    def unflat(x):
        return x.reshape(n, nj)

    cons = [{"type": "ineq", "fun": lambda x: (vmax * dt - np.abs(np.diff(unflat(x), axis=0))).ravel()},
            {"type": "ineq", "fun": lambda x: (amax[1:-1] * dt**2 - np.abs(np.diff(unflat(x), 2, axis=0))).ravel()}]
    bounds = [(lower[i], upper[i]) for _ in range(n) for i in range(nj)]
    res = minimize(lambda x: np.sum((x - q0.ravel()) ** 2), np.clip(q0, lower, upper).ravel() * 0, jac=lambda x: 2 * (x - q0.ravel()),
                   bounds=bounds, constraints=cons, method="SLSQP", options={"ftol": 1e-14, "maxiter": 1000})
    assert res.success, res.message
    return unflat(res.x)


def test_motion_qp_matches_slsqp():
    rng = np.random.default_rng(7)
    n, nj, dt = 10, 2, 0.01
    q0 = np.cumsum(rng.normal(0, 0.08, (n, nj)), axis=0)
    lower, upper = np.array([-0.2, -0.3]), np.array([0.25, 0.1])
    vmax = np.array([5.0, 4.0])
    amax = rng.uniform(300, 900, (n, nj))
    prob = mqp.build(q0, lower, upper, vmax, amax, dt)
    assert prob.shape == (n * nj + (n - 1) * nj + (n - 2) * nj, n * nj)
    x, sol = solve(prob)
    assert sol.ok
    ref = _slsqp_motion(q0, lower, upper, vmax, amax, dt)
    np.testing.assert_allclose(q0 + x.reshape(n, nj), ref, atol=2e-5)  # around the plan: q = q_plan + dq
    assert sol.residuals["primal_inf"] < 1e-8 and sol.residuals["stationarity_inf"] < 1e-6


def test_motion_qp_leaves_a_feasible_plan_alone(example_robot, make_traj):
    t = np.arange(200) / 1000
    q = np.column_stack([0.1 * np.sin(2 * np.pi * t), -1.0 + 0.1 * np.cos(2 * np.pi * t)])
    traj = make_traj(example_robot, q)
    from legbridge.limits.checks.results import CheckSettings

    _, sol = mqp.nearest_motion(traj, example_robot, CheckSettings())
    assert sol.ok and np.max(np.abs(sol.values["deviation_rad"])) < 1e-6  # interior-point tolerance


def test_inertia_diagonal_matches_pinocchio_crba(example_robot, example_leg_model):
    # Reference: Pinocchio's composite rigid body algorithm on the robot's own model.
    import pinocchio as pin

    q = np.array([[0.3, -1.1], [-0.5, -0.2], [1.2, -2.0]])
    ours = mqp.joint_inertia_diag_kgm2(example_robot, q)
    lm = example_leg_model
    data = lm.model.createData()
    for k in range(3):
        M = pin.crba(lm.model, data, lm.full_q(np.zeros(3), q[k]))
        np.testing.assert_allclose(ours[k], np.diag(M)[lm.v_index], rtol=1e-9)
