"""Nearest feasible joint motion QP, one sparse problem per case over all samples.

    minimise   sum_k ||q_k - q_plan,k||^2                                     [rad^2]
    subject to lower_i <= q_k,i <= upper_i                                    (hard stops)
               |q_k+1,i - q_k,i| <= v_i dt                                    (speed, forward difference)
               |q_k+1,i - 2 q_k,i + q_k-1,i| <= a_k,i dt^2                     (acceleration, central difference)

dt = 1 / export rate. v_i: robots.actuator_limits.max_joint_speed. a_k,i: settings.max_joint_accel_rad_s2
when given; otherwise derived per sample as the joint's static peak torque (max_joint_torque) over
the joint-space inertia of the unloaded leg about that joint at the planned pose, M_ii(q_k) + N^2 J_r
(the acceleration the actuator alone could give that joint if nothing else loaded it: an estimate,
not a bound from the full dynamics). A constant trajectory inside the stops satisfies every row,
so the problem is feasible whenever the stops are. Deviation is reported per sample in joint space
[rad] and at the foot, J dq [m]. The corrected targets are returned as 'q_corrected_rad' and are
MODIFIED targets, not the plan.
"""

from __future__ import annotations

import numpy as np
import scipy.sparse as sp

from legbridge.robots.actuator_limits import max_joint_speed, max_joint_torque, reflected_inertia_kgm2

from .problem import QPProblem, solve


def joint_inertia_diag_kgm2(robot, q) -> np.ndarray:
    """Diagonal of the fixed-hip joint-space mass matrix M_ii(q) [kg m^2], shape (n, j).

    Native legs (segments): M_ii = sum over segments k >= i of I_k + m_k |c_k - p_i|^2 (planar chain,
    c_k the segment's centre of mass, p_i joint i), vectorised. URDF legs: Pinocchio CRBA per sample.
    """
    q = np.atleast_2d(np.asarray(q, dtype=float))
    n, nj = q.shape
    if robot.segments:
        ang = np.cumsum(q, axis=1)
        dirs = np.stack([-np.sin(ang), -np.cos(ang)], axis=-1)  # (n, j, 2): segment i hangs along R_y(-z)
        lengths = np.array([s.length_m for s in robot.segments])
        joints = np.concatenate([np.zeros((n, 1, 2)), np.cumsum(dirs * lengths[None, :, None], axis=1)[:, :-1]], axis=1)
        coms = joints + dirs * np.array([s.com_m for s in robot.segments])[None, :, None]
        out = np.zeros((n, nj))
        for i in range(nj):
            for k in range(i, nj):
                seg = robot.segments[k]
                d2 = np.sum((coms[:, k] - joints[:, i]) ** 2, axis=1)
                out[:, i] += seg.inertia_kgm2 + seg.mass_kg * d2
        return out
    import pinocchio as pin

    from legbridge.robots.leg_model import build_leg_model

    lm = build_leg_model(robot)
    data = lm.model.createData()
    out = np.empty((n, nj))
    for k in range(n):  # URDF legs only: CRBA has no batched form
        M = pin.crba(lm.model, data, lm.full_q(np.zeros(3), q[k]))
        out[k] = np.diag(M)[lm.v_index]
    return out


def accel_limits(traj, robot, settings) -> np.ndarray:
    """Acceleration bound per sample and joint [rad/s^2], shape (n, j) (see module docstring)."""
    if settings.max_joint_accel_rad_s2 is not None:
        return np.full(traj.q.shape, float(settings.max_joint_accel_rad_s2))
    joints = [robot.joint(n) for n in traj.joint_names]
    m = joint_inertia_diag_kgm2(robot, traj.q) + np.array([reflected_inertia_kgm2(j.actuator) for j in joints])
    return np.array([max_joint_torque(j).value for j in joints]) / m


def build(q_plan, lower, upper, vmax, amax, dt: float) -> QPProblem:
    """The stacked QP: q_plan (n, j) [rad], lower/upper/vmax (j,), amax (n, j) [rad/s^2], dt [s].

    Variables x = q flattened sample-major (x[k j + i] = q_k,i). Rows: n j range rows, (n-1) j speed
    rows, (n-2) j acceleration rows (row of the difference centred on sample k uses amax[k]).
    """
    q0 = np.asarray(q_plan, dtype=float)
    n, nj = q0.shape
    I = sp.identity(nj, format="csr")
    blocks = [sp.identity(n * nj, format="csr")]
    lo = [np.tile(lower, n)]
    hi = [np.tile(upper, n)]
    labels = ["range"]
    if n >= 2:
        d1 = sp.diags([-np.ones(n - 1), np.ones(n - 1)], [0, 1], shape=(n - 1, n))
        blocks.append(sp.kron(d1, I, format="csr"))
        lim = np.tile(np.asarray(vmax, dtype=float) * dt, n - 1)
        lo.append(-lim); hi.append(lim); labels.append("speed")
    if n >= 3:
        d2 = sp.diags([np.ones(n - 2), -2 * np.ones(n - 2), np.ones(n - 2)], [0, 1, 2], shape=(n - 2, n))
        blocks.append(sp.kron(d2, I, format="csr"))
        lim = (np.asarray(amax, dtype=float)[1:-1] * dt * dt).ravel()
        lo.append(-lim); hi.append(lim); labels.append("acceleration")
    A = sp.vstack(blocks, format="csr")
    x0 = q0.ravel()
    return QPProblem("nearest_motion", np.full(n * nj, 2.0), -2.0 * x0, A, np.concatenate(lo), np.concatenate(hi),
                     tuple(labels), {"n_samples": n, "n_joints": nj, "dt_s": dt})


def nearest_motion(traj, robot, settings, solver: str = "CLARABEL"):
    """Build and solve the motion QP of one case. Returns (QPProblem, QPSolution with values)."""
    from dataclasses import replace

    joints = [robot.joint(n) for n in traj.joint_names]
    lower = np.array([j.lower_rad for j in joints])
    upper = np.array([j.upper_rad for j in joints])
    vmax = np.array([max_joint_speed(j).value for j in joints])
    amax = accel_limits(traj, robot, settings)
    dt = 1.0 / float(traj.rate_hz)
    prob = build(traj.q, lower, upper, vmax, amax, dt)
    x, sol = solve(prob, solver)
    n, nj = traj.q.shape
    qc = x.reshape(n, nj)
    dq = qc - np.asarray(traj.q, dtype=float)
    foot = np.einsum("kri,ki->kr", np.asarray(traj.jacobian, dtype=float), dq)
    values = {"q_corrected_rad": qc, "deviation_rad": dq, "foot_deviation_m": foot,
              "foot_deviation_norm_m": np.linalg.norm(foot, axis=1), "accel_limit_rad_s2": amax}
    for v in values.values():
        v.setflags(write=False)
    return prob, replace(sol, values=values)
