"""Inverse kinematics of a planar leg: closed form (vectorised) and damped least squares (Pinocchio).

Conventions: see mapping.kinematics. The foot relative to the hip is p = (px, pz); for two links
p = (-L1 sin q1 - L2 sin(q1+q2), -L1 cos q1 - L2 cos(q1+q2)).

Two joints, closed form. With u = -px, w = -pz the chain reads w = L1 cos q1 + L2 cos(q1+q2),
u = L1 sin q1 + L2 sin(q1+q2): the textbook planar two-link arm with its x axis pointing down and its
y axis pointing backward (Spong, Hutchinson, Vidyasagar, Robot Modeling and Control, planar
two-link inverse kinematics):

    D  = (u^2 + w^2 - L1^2 - L2^2) / (2 L1 L2),      q2 = atan2(+-sqrt(1 - D^2), D)
    q1 = atan2(u, w) - atan2(L2 sin q2, L1 + L2 cos q2)

Knee branch: robot.knee == 'backward' takes q2 < 0 (the knee sits behind the hip-foot line),
'forward' takes q2 > 0. A target out of reach (|D| > 1: too long or too short) is flagged
FLAG_UNREACHABLE and replaced by the closest reachable pose (D clipped to +-1: the leg straight, or
fully folded, along the target direction); it never raises.

Three joints. The redundancy is resolved by the rule that the last segment holds the world pitch
robot.foot_pitch_rad (theta_f, 0 = pointing straight down, positive about +y so its end swings
backward): q1 + q2 + q3 = theta_f. The ankle then sits at p - L3 (-sin theta_f, -cos theta_f), the
first two joints solve the two-link problem to the ankle, and q3 = theta_f - q1 - q2.

General legs (e.g. URDF geometry with offsets): damped least squares on Pinocchio's foot frame
Jacobian (LOCAL_WORLD_ALIGNED, rows x and z, plus the pitch row for three joints), warm-started from
the previous sample's solution so the trajectory stays on one continuous branch; the first sample
is seeded with the closed form on the link lengths.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pinocchio as pin

from legbridge.robots.leg_model import LegModel

from .joint_trajectory import FLAG_IK_NOT_CONVERGED, FLAG_SINGULAR, FLAG_UNREACHABLE

SINGULAR_TOL = 1e-3
"""A pose is flagged singular when |sin q2| (the normalised Jacobian determinant) is below this [-]."""


@dataclass(frozen=True, eq=False)
class IkSolution:
    """Joint angles q (n, j) [rad] and per-sample FLAG_* bits (n,)."""

    q: np.ndarray
    flags: np.ndarray


def knee_sign(knee: str) -> float:
    """-1 for the 'backward' knee (q2 < 0), +1 for 'forward' (q2 > 0)."""
    if knee == "backward":
        return -1.0
    if knee == "forward":
        return 1.0
    from legbridge.robots.errors import LegbridgeError

    raise LegbridgeError("unknown knee branch", key="knee", expected="'backward' or 'forward'", found=knee)


def two_link_ik(p, l1: float, l2: float, knee: str) -> IkSolution:
    """Closed-form two-link IK for foot positions p (n, 2) relative to the hip [m] -> q (n, 2) [rad]."""
    p = np.atleast_2d(np.asarray(p, dtype=float))
    u, w = -p[:, 0], -p[:, 1]
    d = (u**2 + w**2 - l1**2 - l2**2) / (2.0 * l1 * l2)
    flags = np.where(np.abs(d) > 1.0, FLAG_UNREACHABLE, 0)
    d = np.clip(d, -1.0, 1.0)
    s2 = knee_sign(knee) * np.sqrt(1.0 - d**2)
    q2 = np.arctan2(s2, d)
    q1 = np.arctan2(u, w) - np.arctan2(l2 * s2, l1 + l2 * d)
    flags = flags | np.where(np.abs(s2) < SINGULAR_TOL, FLAG_SINGULAR, 0)
    return IkSolution(np.stack([q1, q2], axis=-1), flags.astype(np.int64))


def chain_ik(p, lengths, knee: str, foot_pitch_rad: float = 0.0) -> IkSolution:
    """Closed-form IK of a straight serial chain of 2 or 3 links (see the module docstring)."""
    p = np.atleast_2d(np.asarray(p, dtype=float))
    if len(lengths) == 2:
        return two_link_ik(p, lengths[0], lengths[1], knee)
    if len(lengths) == 3:
        th = float(foot_pitch_rad)
        ankle = p - lengths[2] * np.array([-np.sin(th), -np.cos(th)])
        sol = two_link_ik(ankle, lengths[0], lengths[1], knee)
        q3 = th - sol.q.sum(axis=1)
        return IkSolution(np.column_stack([sol.q, q3]), sol.flags)
    from legbridge.robots.errors import LegbridgeError

    raise LegbridgeError("closed-form IK handles 2 or 3 joints", expected="2 or 3 link lengths", found=len(lengths))


def frame_pitch(rotation: np.ndarray) -> float:
    """Pitch about +y of a rotation matrix that turns about y only [rad]."""
    return float(np.arctan2(rotation[0, 2], rotation[0, 0]))


def dls_ik(leg: LegModel, hip_targets, *, knee: str, foot_pitch_rad: float = 0.0, q_seed=None,
           damping: float = 1e-4, tol_m: float = 1e-10, max_iter: int = 50) -> IkSolution:
    """Damped least-squares IK on the Pinocchio model, warm-started from the previous sample.

    hip_targets (n, 2): foot position relative to the hip frame, world-aligned (x, z) [m]; base pitch 0.
    Each step: dq = J^T (J J^T + damping^2 I)^-1 e, with J the foot frame Jacobian in
    LOCAL_WORLD_ALIGNED (rows x, z; for three joints also the pitch row, target foot_pitch_rad
    relative to the zero pose) after forward kinematics. Samples whose residual stays above
    ``tol_m`` after ``max_iter`` steps are flagged FLAG_IK_NOT_CONVERGED (FLAG_UNREACHABLE too when
    the distance is beyond the summed link lengths). Singular poses are flagged by the caller
    (mapping.translate, from the Jacobian determinant), not here.
    """
    model = leg.model
    data = model.createData()
    targets = np.atleast_2d(np.asarray(hip_targets, dtype=float))
    n, nj = targets.shape[0], leg.n_joints
    three = nj == 3
    rows = [0, 2, 4] if three else [0, 2]
    qfull = pin.neutral(model)
    pin.framesForwardKinematics(model, data, qfull)
    pitch0 = frame_pitch(data.oMf[leg.foot_frame_id].rotation)
    if q_seed is None:
        q_seed = chain_ik(targets[:1], leg.link_lengths_m, knee, foot_pitch_rad).q[0]
    qfull[leg.q_index] = q_seed
    out = np.empty((n, nj))
    flags = np.zeros(n, dtype=np.int64)
    reach = leg.max_reach_m
    eye = np.eye(len(rows))
    for i in range(n):
        converged = False
        for _ in range(max_iter):
            pin.framesForwardKinematics(model, data, qfull)
            hip = data.oMf[leg.hip_frame_id].translation
            foot = data.oMf[leg.foot_frame_id]
            err = targets[i] - (foot.translation[[0, 2]] - hip[[0, 2]])
            if three:
                err = np.append(err, foot_pitch_rad - (frame_pitch(foot.rotation) - pitch0))
            if np.max(np.abs(err)) < tol_m:
                converged = True
                break
            jac = pin.computeFrameJacobian(model, data, qfull, leg.foot_frame_id, pin.LOCAL_WORLD_ALIGNED)
            jl = jac[rows][:, leg.v_index]
            qfull[leg.q_index] += jl.T @ np.linalg.solve(jl @ jl.T + damping**2 * eye, err)
        out[i] = qfull[leg.q_index]
        if not converged:
            flags[i] |= FLAG_IK_NOT_CONVERGED
            if np.hypot(*targets[i]) > reach:
                flags[i] |= FLAG_UNREACHABLE
    return IkSolution(out, flags)


def solve_rates(a_mat: np.ndarray, rhs: np.ndarray, singular: np.ndarray, scale: float) -> np.ndarray:
    """Batched solve of A x = b for square A (n, m, m), damped where a sample is flagged singular.

    x = A^T (A A^T + lam^2 I)^-1 b with lam = SINGULAR_TOL * scale on singular samples and 0
    elsewhere (then x = A^-1 b exactly). Keeps velocities finite at a straight leg.
    """
    lam2 = np.where(singular, (SINGULAR_TOL * scale) ** 2, 0.0)[:, None, None]
    aat = a_mat @ np.swapaxes(a_mat, -1, -2) + lam2 * np.eye(a_mat.shape[-2])
    y = np.linalg.solve(aat, rhs[..., None])[..., 0]
    return np.einsum("nij,ni->nj", a_mat, y)
