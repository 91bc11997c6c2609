"""Force-feasibility QP, one sparse problem per case over all stance samples.

For every stance sample k find the ground force F_k (x, z) [N] closest to the planned one that the
leg can produce:

    minimise   sum_k ||F_k - F_plan,k||^2 + w sum_k,i s_k,i
    subject to lo_k,i - s_k,i <= tau_free_k,i - (J_k^T F_k)_i <= hi_k,i + s_k,i     (each joint i)
               |Fx_k| <= mu Fz_k,  Fz_k >= 0,  s_k,i >= 0

[lo, hi]: robots.actuator_limits.joint_torque_limits_nm(joint, qd, qdd) with the voltage envelope
(voltage=True) and the joint's effort limit. The slack s [N m] keeps the stacked problem
feasible when one sample is infeasible by itself (e.g. the speed is beyond the torque-speed
envelope, lo > hi, or tau_free alone is out of bounds): with the weight w well above the torque
constraints' multipliers the L1 penalty is exact, so s = 0 wherever a feasible force exists, and a
sample with s > SLACK_TOL_NM is reported as infeasible (a finding; its force is then the best
compromise, not a feasible force). Shortfall = ||F - F_plan|| [N] and in % of ||F_plan||.

The samples do not interact (the problem is block diagonal), so a sample whose planned force meets
every constraint is its own exact solution (the objective's minimum, s = 0, zero multipliers: KKT
holds) and is left out of the stacked problem; the QP holds the other stance samples only. On a
plan that is mostly within the limits this removes most of the solver's work without changing any
result.
"""

from __future__ import annotations

import numpy as np
import scipy.sparse as sp

from legbridge.robots.actuator_limits import joint_torque_limits_nm

from .problem import QPProblem, solve

SLACK_TOL_NM = 1e-5


def torque_bounds(traj, robot) -> tuple[np.ndarray, np.ndarray]:
    """(lo, hi) joint torque bounds [N m], shape (n, j), voltage envelope and effort limits applied."""
    lo = np.empty(traj.q.shape)
    hi = np.empty(traj.q.shape)
    for i, name in enumerate(traj.joint_names):
        joint = robot.joint(name)
        speed, accel = traj.motor_side_rates(i, joint.actuator.gear_ratio)  # series springs: the motor side
        lo[:, i], hi[:, i], _ = joint_torque_limits_nm(joint, speed, accel, voltage=True)
    return lo, hi


def build(jacobian, tau_free, force_plan, lo, hi, mu: float, slack_weight: float | None = None) -> QPProblem:
    """The stacked QP for m samples: jacobian (m, 2, j), tau_free, lo, hi (m, j), force_plan (m, 2).

    Written around the plan (no large constant in the objective): variables x = [dF_0x, dF_0z, dF_1x,
    ..., s_0,0 .. s_0,j-1, s_1,0, ...] (2m force changes F - F_plan, then j m slacks), objective
    ||dF||^2 + w sum s. Rows per sample: j upper torque rows, j lower torque rows, 2 cone rows, 1
    unilateral row, then j slack rows (s >= 0) at the end.
    """
    J = np.asarray(jacobian, dtype=float)
    m, _, nj = J.shape
    f0 = np.asarray(force_plan, dtype=float).reshape(m, 2)
    tf = np.asarray(tau_free, dtype=float).reshape(m, nj)
    if slack_weight is None:
        slack_weight = 1e3 * max(1.0, float(np.max(np.abs(f0), initial=0.0)))
    nf, ns = 2 * m, nj * m
    rows_per = 2 * nj + 3
    k = np.arange(m)
    fx, fz = 2 * k, 2 * k + 1
    r_list, c_list, v_list = [], [], []

    def add(r, c, v):
        r_list.append(np.broadcast_to(r, np.broadcast(r, c, v).shape).ravel())
        c_list.append(np.broadcast_to(c, np.broadcast(r, c, v).shape).ravel())
        v_list.append(np.broadcast_to(v, np.broadcast(r, c, v).shape).ravel())

    base = k * rows_per
    for i in range(nj):  # joints, not samples
        s_col = nf + k * nj + i
        ru, rl = base + i, base + nj + i
        # -J^T F - s <= hi - tau_free ; -J^T F + s >= lo - tau_free
        add(ru, fx, -J[:, 0, i]); add(ru, fz, -J[:, 1, i]); add(ru, s_col, -1.0)
        add(rl, fx, -J[:, 0, i]); add(rl, fz, -J[:, 1, i]); add(rl, s_col, 1.0)
    rc = base + 2 * nj
    add(rc, fx, 1.0); add(rc, fz, -mu)          # Fx - mu Fz <= 0
    add(rc + 1, fx, -1.0); add(rc + 1, fz, -mu)  # -Fx - mu Fz <= 0
    add(rc + 2, fz, 1.0)                         # Fz >= 0
    srow = m * rows_per + np.arange(ns)
    add(srow, nf + np.arange(ns), 1.0)           # s >= 0
    n_rows = m * rows_per + ns
    A = sp.csr_matrix((np.concatenate(v_list), (np.concatenate(r_list), np.concatenate(c_list))), shape=(n_rows, nf + ns))
    lower = np.full(n_rows, -np.inf)
    upper = np.full(n_rows, np.inf)
    blk_u = np.full((m, rows_per), np.inf)
    blk_l = np.full((m, rows_per), -np.inf)
    tau0 = tf - np.einsum("kri,kr->ki", J, f0)  # the plan's torque: the rows hold the change from it
    blk_u[:, :nj] = np.asarray(hi, dtype=float).reshape(m, nj) - tau0
    blk_l[:, nj:2 * nj] = np.asarray(lo, dtype=float).reshape(m, nj) - tau0
    blk_u[:, 2 * nj] = -(f0[:, 0] - mu * f0[:, 1])
    blk_u[:, 2 * nj + 1] = -(-f0[:, 0] - mu * f0[:, 1])
    blk_l[:, 2 * nj + 2] = -f0[:, 1]
    upper[:m * rows_per], lower[:m * rows_per] = blk_u.ravel(), blk_l.ravel()
    lower[m * rows_per:] = 0.0
    p_diag = np.concatenate([np.full(nf, 2.0), np.zeros(ns)])
    c = np.concatenate([np.zeros(nf), np.full(ns, slack_weight)])
    labels = tuple(f"torque_hi[{i}]" for i in range(nj)) + tuple(f"torque_lo[{i}]" for i in range(nj)) + ("cone+", "cone-", "unilateral")
    return QPProblem("force_feasibility", p_diag, c, A, lower, upper, labels,
                     {"n_samples": m, "n_joints": nj, "slack_weight": slack_weight, "rows_per_sample": rows_per})


def planned_force_feasible(jacobian, tau_free, force_plan, lo, hi, mu: float) -> np.ndarray:
    """Per sample (m,) bool: the planned force meets the torque bounds and the friction cone."""
    f = np.asarray(force_plan, dtype=float)
    tau = np.asarray(tau_free, dtype=float) - np.einsum("kri,kr->ki", np.asarray(jacobian, dtype=float), f)
    torque_ok = np.all((tau >= lo) & (tau <= hi), axis=1)
    cone_ok = (np.abs(f[:, 0]) <= mu * f[:, 1]) & (f[:, 1] >= 0.0)
    return torque_ok & cone_ok


def unpack(x, m: int, nj: int) -> tuple[np.ndarray, np.ndarray]:
    """(force change F - F_plan (m, 2) [N], slack (m, j) [N m]) from the solution vector."""
    return x[:2 * m].reshape(m, 2), x[2 * m:].reshape(m, nj)


def force_feasibility(traj, robot, mu: float, solver: str = "CLARABEL"):
    """Build and solve the force QP of one case. Returns (QPProblem, QPSolution with values)."""
    from dataclasses import replace

    stance = np.asarray(traj.stance, dtype=bool)
    idx = np.flatnonzero(stance)
    lo, hi = torque_bounds(traj, robot)
    plan = np.asarray(traj.foot_force_n, dtype=float)
    own = planned_force_feasible(traj.jacobian[idx], traj.tau_free[idx], plan[idx], lo[idx], hi[idx], mu)
    sub = idx[~own]
    prob = build(traj.jacobian[sub], traj.tau_free[sub], plan[sub], lo[sub], hi[sub], mu)
    x, sol = solve(prob, solver)
    if sub.size == 0:
        sol = replace(sol, solver="none (the planned force is feasible at every stance sample)")
    n, nj = traj.n_samples, traj.n_joints
    f_sub, s_sub = unpack(x, sub.size, nj)
    force = np.full((n, 2), np.nan)
    force[idx] = plan[idx]
    force[sub] = plan[sub] + f_sub
    f_opt = force[idx]
    s_all = np.zeros((n, nj))
    s_all[sub] = s_sub
    slack = s_all[idx]
    short = np.zeros(n)
    short[idx] = np.linalg.norm(f_opt - plan[idx], axis=1)
    mag = np.linalg.norm(plan, axis=1)
    pct = np.zeros(n)
    nz = mag > 0
    np.divide(100.0 * short, mag, out=pct, where=nz)
    pct = np.where(~nz & (short > 0), np.inf, pct)
    infeasible = np.zeros(n, dtype=bool)
    infeasible[idx] = ~(np.max(slack, axis=1, initial=0.0) <= SLACK_TOL_NM)
    tau_opt = np.full((n, nj), np.nan)
    tau_opt[idx] = traj.tau_free[idx] - np.einsum("kri,kr->ki", traj.jacobian[idx], f_opt)
    values = {"force_n": force, "shortfall_n": short, "shortfall_pct": pct, "torque_slack_nm": s_all,
              "infeasible": infeasible, "tau_nm": tau_opt, "torque_lo_nm": lo, "torque_hi_nm": hi}
    for v in values.values():
        v.setflags(write=False)
    return prob, replace(sol, values=values)
