"""Nearest feasible joint motion QP, one sparse problem per case over all samples, written around the
plan (the variables are the changes dq = q - q_plan; no constant in the objective).

    minimise   sum_k ||dq_k||^2 + w sum s                                       [rad^2]
    subject to lower_i <= q_plan,k,i + dq_k,i <= upper_i                        (hard stops)
               |(q_k+1,i - q_k,i)| <= v_i dt                                    (speed, forward difference)
               |q_k+1,i - 2 q_k,i + q_k-1,i| <= a_k,i dt^2                      (acceleration, central difference)
               lo_k - s <= tau_plan,k + M(q_k) (D2 dq)_k / dt^2 <= hi_k + s     (torque, linearised about the plan)
               J_k dq_k = 0 on stance samples                                   (the stance foot stays on the ground)
               s >= 0

dt = 1 / export rate. v_i: robots.actuator_limits.max_joint_speed. a_k,i: settings.max_joint_accel_rad_s2
when given; otherwise the joint's static peak torque (max_joint_torque) over the joint-space inertia of
the unloaded leg about that joint at the planned pose, M_ii(q_k) + N^2 J_r (an estimate, kept as a
bound on the differences). The torque rows hold the joint torque the changed acceleration asks,
linearised about the plan with the joint-space mass matrix M(q_k) (pin.crba), inside the actuator's
envelope [lo, hi] at the planned motor-side speed (robots.actuator_limits.joint_torque_limits_nm, the
voltage envelope included); the slack s (weight w, an exact penalty) keeps the problem feasible where
no motion could meet them, and a sample with slack above SLACK_TOL_NM is reported. In stance the foot
point is held (first order: J dq = 0); a two-joint leg then keeps its stance motion exactly, so a
torque exceedance in stance is for the force QP to answer. The corrected motion is checked again with
every check (limits.checks.case), and what it still exceeds is reported beside it.

Deviation is reported per sample in joint space [rad] and at the foot, J dq [m]. The corrected
targets are returned as 'q_corrected_rad' and are MODIFIED targets, not the plan.
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
    nseg = len(robot.segments)
    if robot.legs and nseg and nj == nseg * len(robot.legs):  # a biped: each leg on its own (fixed hip)
        return np.hstack([joint_inertia_diag_kgm2(robot.leg_robot(leg), q[:, k * nseg:(k + 1) * nseg])
                          for k, leg in enumerate(robot.legs)])
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

    from legbridge.robots.leg_model import cached_leg_model

    lm = cached_leg_model(robot)
    data = lm.model.createData()
    out = np.empty((n, nj))
    for k in range(n):  # URDF legs only: CRBA has no batched form
        M = pin.crba(lm.model, data, lm.full_q(np.zeros(3), q[k]))
        out[k] = np.diag(M)[lm.v_index]
    return out


def accel_limits(traj, robot, settings, inertia_diag=None) -> np.ndarray:
    """Acceleration bound per sample and joint [rad/s^2], shape (n, j) (see module docstring);
    ``inertia_diag`` (n, j): M_ii(q) when the caller has the mass matrices already."""
    if settings.max_joint_accel_rad_s2 is not None:
        return np.full(traj.q.shape, float(settings.max_joint_accel_rad_s2))
    joints = [robot.joint(n) for n in traj.joint_names]
    diag = joint_inertia_diag_kgm2(robot, traj.q) if inertia_diag is None else np.asarray(inertia_diag, dtype=float)
    m = diag + np.array([reflected_inertia_kgm2(j.actuator) for j in joints])
    return np.array([max_joint_torque(j).value for j in joints]) / m


SLACK_TOL_NM = 1e-5
"""Torque slack [N m] above which a sample counts as beyond what any nearby motion could meet."""


def _torque_rows(mass, n: int, nj: int, dt: float):
    """(rows, cols, vals) of M_k (dq_k+1 - 2 dq_k + dq_k-1) / dt^2 for interior samples k = 1 .. n-2,
    row (k - 1) j + i, as COO triplets (vectorised over samples)."""
    k = np.arange(1, n - 1)
    rr, cc, vv = [], [], []
    for i in range(nj):  # joints, not samples
        for l in range(nj):
            m = np.asarray(mass[1:-1, i, l], dtype=float) / (dt * dt)
            row = (k - 1) * nj + i
            for shift, w in ((-1, 1.0), (0, -2.0), (1, 1.0)):
                rr.append(row)
                cc.append((k + shift) * nj + l)
                vv.append(w * m)
    return np.concatenate(rr), np.concatenate(cc), np.concatenate(vv)


def build(q_plan, lower, upper, vmax, amax, dt: float, *, torque=None, contact=None, slack_weight: float = 1e3) -> QPProblem:
    """The stacked QP around the plan: q_plan (n, j) [rad], lower/upper/vmax (j,), amax (n, j) [rad/s^2], dt [s].

    torque: None, or (mass (n, j, j) [kg m^2], tau_plan (n, j), lo (n, j), hi (n, j)) [N m] for the
    linearised torque rows; contact: None, or (jacobian (n, 2, j), stance (n,) bool). Without torque
    rows every row is hard and the variables are dq alone (x[k j + i] = dq_k,i): n j range rows,
    (n-1) j speed rows, (n-2) j acceleration rows. With them the range, speed and torque rows are
    soft where the plan itself is outside them (one slack per such row, s >= 0, weight ``slack_weight``:
    an exact penalty, so s = 0 wherever a motion meets them; the stance contact rows, hard, may leave
    none) and the acceleration estimate is left out (the torque rows bound the acceleration with the
    real inertia). Variables: [dq, slacks].
    """
    q0 = np.asarray(q_plan, dtype=float)
    n, nj = q0.shape
    nq = n * nj
    x0 = q0.ravel()
    I = sp.identity(nj, format="csr")
    soft = torque is not None and n >= 3
    rows: list[tuple] = []  # (matrix on dq, lo, hi, label)
    rows.append((sp.identity(nq, format="csr"), np.tile(lower, n) - x0, np.tile(upper, n) - x0, "range"))
    if n >= 2:
        d1 = sp.kron(sp.diags([-np.ones(n - 1), np.ones(n - 1)], [0, 1], shape=(n - 1, n)), I, format="csr")
        lim = np.tile(np.asarray(vmax, dtype=float) * dt, n - 1)
        rows.append((d1, -lim - d1 @ x0, lim - d1 @ x0, "speed"))
    if n >= 3 and not soft:
        d2 = sp.kron(sp.diags([np.ones(n - 2), -2 * np.ones(n - 2), np.ones(n - 2)], [0, 1, 2], shape=(n - 2, n)), I,
                     format="csr")
        lim = (np.asarray(amax, dtype=float)[1:-1] * dt * dt).ravel()
        rows.append((d2, -lim - d2 @ x0, lim - d2 @ x0, "acceleration"))
    if soft:
        mass, tau_plan, t_lo, t_hi = (np.asarray(a, dtype=float) for a in torque)
        r, c, v = _torque_rows(mass, n, nj, dt)
        mt = sp.csr_matrix((v, (r, c)), shape=((n - 2) * nj, nq))
        rows.append((mt, (t_lo - tau_plan)[1:-1].ravel(), (t_hi - tau_plan)[1:-1].ravel(), "torque"))
    # Slacks only where the plan itself is outside a row (dq = 0 then meets every other row, so the
    # problem stays feasible with the stance foot held): a few hundred columns, not one per row.
    need = [np.flatnonzero((l > 0.0) | (h < 0.0)) if soft else np.zeros(0, dtype=int) for _, l, h, _ in rows]
    ns = int(sum(k.size for k in need))
    blocks, lo, hi, labels, offsets = [], [], [], [], {}
    col = nq
    for (b, l, h, name), idx in zip(rows, need):
        blocks.append(b)
        lo.append(l); hi.append(h); labels.append(name)
        if idx.size:
            sub = b[idx]
            eye_s = sp.csr_matrix((np.ones(idx.size), (np.arange(idx.size), col + np.arange(idx.size))),
                                  shape=(idx.size, nq + ns))
            bb = sp.hstack([sub, sp.csr_matrix((idx.size, ns))]).tocsr()
            blocks[-1] = b[np.setdiff1d(np.arange(b.shape[0]), idx)]       # the rows the plan meets: hard
            lo[-1], hi[-1] = np.delete(l, idx), np.delete(h, idx)
            blocks += [bb - eye_s, bb + eye_s]                              # b dq - s <= hi ;  b dq + s >= lo
            lo += [np.full(idx.size, -np.inf), l[idx]]
            hi += [h[idx], np.full(idx.size, np.inf)]
            labels += [name + "_hi (soft)", name + "_lo (soft)"]
        offsets[name] = (col, idx)
        col += idx.size
    if contact is not None:
        jac, stance = contact
        idx = np.flatnonzero(np.asarray(stance, dtype=bool))
        if idx.size:
            jac = np.asarray(jac, dtype=float)[idx]
            r_ = np.repeat(np.arange(2 * idx.size), nj)
            c_ = (idx[:, None, None] * nj + np.arange(nj)[None, None, :]).repeat(2, axis=1).ravel()
            blocks.append(sp.csr_matrix((jac.ravel(), (r_, c_)), shape=(2 * idx.size, nq + ns)))
            lo.append(np.zeros(2 * idx.size)); hi.append(np.zeros(2 * idx.size)); labels.append("stance_contact")
    if ns:
        blocks.append(sp.hstack([sp.csr_matrix((ns, nq)), sp.identity(ns, format="csr")]).tocsr())
        lo.append(np.zeros(ns)); hi.append(np.full(ns, np.inf)); labels.append("slack")
    A = sp.vstack([b if b.shape[1] == nq + ns else sp.hstack([b, sp.csr_matrix((b.shape[0], ns))]) for b in blocks],
                  format="csr")
    p_diag = np.concatenate([np.full(nq, 2.0), np.zeros(ns)])
    c = np.concatenate([np.zeros(nq), np.full(ns, slack_weight)])
    return QPProblem("nearest_motion", p_diag, c, A, np.concatenate(lo), np.concatenate(hi),
                     tuple(labels), {"n_samples": n, "n_joints": nj, "dt_s": dt, "n_slacks": ns, "slacks": offsets})


def nearest_motion(traj, robot, settings, solver: str = "CLARABEL"):
    """Build and solve the motion QP of one case. Returns (QPProblem, QPSolution with values)."""
    from dataclasses import replace

    from legbridge.mapping.retarget import joint_mass_matrices
    from legbridge.robots.biped_model import dynamics_model

    from .force import torque_bounds

    joints = [robot.joint(n) for n in traj.joint_names]
    lower = np.array([j.lower_rad for j in joints])
    upper = np.array([j.upper_rad for j in joints])
    vmax = np.array([max_joint_speed(j).value for j in joints])
    dt = 1.0 / float(traj.rate_hz)
    q = np.asarray(traj.q, dtype=float)
    n, nj = q.shape
    leg = dynamics_model(robot)
    mass = joint_mass_matrices(leg, q, traj.base_pitch_rad)
    amax = accel_limits(traj, robot, settings, np.diagonal(mass, axis1=1, axis2=2))  # one CRBA pass, not two
    t_lo, t_hi = torque_bounds(traj, robot)
    torque = (mass, np.asarray(traj.tau, dtype=float), t_lo, t_hi)
    prob = build(q, lower, upper, vmax, amax, dt, torque=torque, contact=(traj.jacobian, traj.stance))
    x, sol = solve(prob, solver)
    dq = x[: n * nj].reshape(n, nj)
    qc = q + dq
    slack = np.zeros((n, nj))
    if "torque" in prob.meta["slacks"]:
        start, rows_ = prob.meta["slacks"]["torque"]
        inner = np.zeros((n - 2) * nj)
        inner[rows_] = x[start:start + rows_.size]
        slack[1:-1] = inner.reshape(n - 2, nj)
    others = [x[a:a + idx.size] for name, (a, idx) in prob.meta["slacks"].items() if name != "torque"]
    other_slack = float(max((np.max(o, initial=0.0) for o in others), default=0.0))
    foot = np.einsum("kri,ki->kr", np.asarray(traj.jacobian, dtype=float), dq)
    values = {"q_corrected_rad": qc, "deviation_rad": dq, "foot_deviation_m": foot,
              "foot_deviation_norm_m": np.linalg.norm(foot, axis=1), "accel_limit_rad_s2": amax,
              "torque_slack_nm": slack, "beyond_reach": np.max(slack, axis=1) > SLACK_TOL_NM,
              "max_range_speed_slack": np.array(other_slack)}
    for v in values.values():
        v.setflags(write=False)
    return prob, replace(sol, values=values)
