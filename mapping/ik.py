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

General legs (URDF geometry with offsets): a planar chain with constant offsets, solved in closed
form (offset_chain_ik) and checked with Pinocchio; damped least squares (dls_ik) polishes that answer
or, for a model that is not such a chain, iterates from it. See dls_ik and planar_chain.

Planar chain with constant offsets. When every leg joint turns about the world +y axis, the foot
relative to the hip frame is

    p = c0 + sum_k R(phi_k) a_k,      R(phi) (x, z) = (x cos phi + z sin phi, -x sin phi + z cos phi)

with phi_k = q_1 + ... + q_k, c0 the first joint's axis relative to the hip frame and a_k the (x, z)
vector from joint k to the next joint (the last one: to the foot point), all read from the Pinocchio
model at q = 0 (planar_chain). The straight chain is the special case c0 = 0, a_k = (0, -L_k). Write
the pitch of a vector as ang(v) = atan2(-v_x, -v_z) (so ang(R(phi) v) = ang(v) + phi) and
t = p - c0. The triangle hip joint, knee joint, end of link 2 has sides |a1|, |a2|, |t|; the law of
cosines gives the angle beta between a1 and the rotated a2 (Spong et al. as above, with the link
vectors in place of the link lengths):

    cos beta = (|t|^2 - |a1|^2 - |a2|^2) / (2 |a1| |a2|),   beta = knee_sign(knee) * arccos(.)
    q2 = beta - ang(a2) + ang(a1),                           q1 = ang(t) - ang(a1 + R(q2) a2)

The knee joint lies behind the line hip joint -> end of link 2 exactly when sin beta < 0 (the 2-D
cross product of that line with the hip-to-knee vector is |a1| |a2| sin beta), so 'backward' is
beta < 0, as for the straight chain. Three joints: the pitch rule above makes R(theta_f) a3 a
constant, so the two-link problem is solved to t - R(theta_f) a3 and q3 = theta_f - q1 - q2.

Workspace boundary. The end of link 2 reaches distances |t| in [| |a1| - |a2| |, |a1| + |a2|] from
the hip joint. A target outside is flagged FLAG_UNREACHABLE and moved radially (from the hip joint,
along the target direction; straight down for t = 0) onto the nearer boundary before any solve, so
the pose returned is the closest reachable one along that direction (leg straight, or folded).
"""

from __future__ import annotations
from legbridge.robots.errors import Described

import math
from dataclasses import dataclass

import numpy as np
import pinocchio as pin

from legbridge.robots.leg_model import LegModel

from .joint_trajectory import FLAG_IK_NOT_CONVERGED, FLAG_NONFINITE, FLAG_SINGULAR, FLAG_UNREACHABLE

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


def wrap_angle(q):
    """Angles wrapped to (-pi, pi] [rad] (elementwise)."""
    return np.pi - np.mod(np.pi - np.asarray(q, dtype=float), 2.0 * np.pi)


def vector_pitch(v) -> np.ndarray:
    """ang(v) = atan2(-v_x, -v_z) of (x, z) vectors (..., 2): 0 pointing down, positive swung backward [rad]."""
    v = np.asarray(v, dtype=float)
    return np.arctan2(-v[..., 0], -v[..., 1])


def rotate_xz(phi, v) -> np.ndarray:
    """R(phi) v for (x, z) vectors: rotation by phi about +y (broadcast over leading axes)."""
    phi = np.asarray(phi, dtype=float)[..., None]
    v = np.asarray(v, dtype=float)
    c, s = np.cos(phi), np.sin(phi)
    return np.concatenate([c * v[..., :1] + s * v[..., 1:2], -s * v[..., :1] + c * v[..., 1:2]], axis=-1)


# configurations (rad) at which planar_chain compares Pinocchio with the planar formula (invented,
# generic values: no two rows share a joint angle, none is a multiple of pi/2)
_PROBES = np.array([[0.3, -0.7, 0.4], [-0.9, -1.9, 1.2], [1.7, 0.6, -2.1], [-2.6, 2.3, 0.8]])


@dataclass(frozen=True, eq=False)
class PlanarChain:
    """A leg as a planar chain with constant offsets (module docstring), read from its Pinocchio model.

    hip_joint_m (2,): c0, the first joint's axis relative to the hip frame, (x, z) [m]
    links_m (j, 2): a_k, joint k to joint k+1 (last row: to the foot point), (x, z) at q = 0 [m]
    foot_rotation0 (3, 3): the foot frame's world rotation at q = 0
    exact: True when the Pinocchio model is this chain (checked at a few configurations to 1e-12
        relative: joint and foot positions, y offsets constant, foot frame rotation
        Ry(q1 + ... + qj) foot_rotation0); then offset_chain_ik is the model's exact inverse kinematics.
    """

    hip_joint_m: np.ndarray
    links_m: np.ndarray
    foot_rotation0: np.ndarray
    exact: bool

    @property
    def n_joints(self) -> int:
        return self.links_m.shape[0]

    @property
    def lengths_m(self) -> np.ndarray:
        """|a_k| in the sagittal plane [m]."""
        return np.hypot(self.links_m[:, 0], self.links_m[:, 1])

    @property
    def reach_m(self) -> tuple[float, float]:
        """(min, max) distance from the hip joint to the end of link 2 [m]."""
        a, b = self.lengths_m[:2]
        return float(abs(a - b)), float(a + b)

    def joints(self, q) -> np.ndarray:
        """Positions of joints 1..j and the foot relative to the hip frame, (n, j + 1, 2) [m]."""
        q = np.atleast_2d(np.asarray(q, dtype=float))
        seg = rotate_xz(np.cumsum(q, axis=-1), self.links_m)            # (n, j, 2)
        return self.hip_joint_m + np.concatenate([np.zeros_like(seg[:, :1]), np.cumsum(seg, axis=1)], axis=1)

    def foot(self, q) -> np.ndarray:
        """Foot position relative to the hip frame, (n, 2) [m]."""
        return self.joints(q)[:, -1]

    def jacobian(self, q) -> np.ndarray:
        """Foot point Jacobian d p / d q (n, 2, j) [m/rad]: column i = sum_{k>=i} d R(phi)/d phi a_k.

        d/dphi R(phi) v = (w_z, -w_x) with w = R(phi) v.
        """
        q = np.atleast_2d(np.asarray(q, dtype=float))
        w = rotate_xz(np.cumsum(q, axis=-1), self.links_m)
        tail = np.flip(np.cumsum(np.flip(w, 1), 1), 1)                   # sum over k >= i
        return np.stack([tail[..., 1], -tail[..., 0]], axis=-2)

    def jdot_qd(self, q, qd) -> np.ndarray:
        """J_dot qd of the foot point, (n, 2) [m/s^2]: -sum_k phid_k^2 R(phi_k) a_k (d^2/dphi^2 R v = -R v)."""
        q = np.atleast_2d(np.asarray(q, dtype=float))
        phid = np.cumsum(np.atleast_2d(np.asarray(qd, dtype=float)), axis=-1)
        w = rotate_xz(np.cumsum(q, axis=-1), self.links_m)
        return -(phid[..., None] ** 2 * w).sum(axis=1)


def _leg_joint_ids(leg: LegModel) -> list[int]:
    return [leg.model.getJointId(name) for name in leg.joint_names]


def planar_chain(leg: LegModel) -> PlanarChain:
    """Read c0, the link vectors a_k and the foot pitch at q = 0 from the Pinocchio model (base at 0).

    Raises UsageError (a LegbridgeError) for a leg without 2 or 3 joints, one whose first two links
    have no length in the sagittal plane, or whose hip frame moves with a leg joint.
    """
    from legbridge.robots.errors import UsageError

    nj = leg.n_joints
    if nj not in (2, 3):
        raise UsageError("planar leg inverse kinematics handles 2 or 3 joints", expected="2 or 3 leg joints", found=nj)
    model = leg.model
    data = model.createData()
    ids = _leg_joint_ids(leg)
    if model.frames[leg.hip_frame_id].parentJoint >= ids[0]:
        raise UsageError("the hip frame must be fixed to the body", expected="a hip frame above the first leg joint",
                         found=Described(f"frame on joint '{model.names[model.frames[leg.hip_frame_id].parentJoint]}'"))

    def positions(q):
        qf = pin.neutral(model)
        qf[leg.q_index] = q
        pin.framesForwardKinematics(model, data, qf)
        hip = data.oMf[leg.hip_frame_id].translation
        pts = np.array([data.oMi[j].translation - hip for j in ids] + [data.oMf[leg.foot_frame_id].translation - hip])
        return pts, data.oMf[leg.foot_frame_id].rotation.copy()

    pts0, rot0 = positions(np.zeros(nj))
    links = np.diff(pts0[:, [0, 2]], axis=0)
    lengths = np.hypot(links[:, 0], links[:, 1])
    if np.any(lengths[:2] < 1e-9):
        raise UsageError("a leg link has no length in the sagittal plane", expected="links 1 and 2 longer than 1e-9 m",
                         found=np.round(lengths, 12).tolist())
    chain = PlanarChain(pts0[0, [0, 2]].copy(), links, rot0, False)
    tol = 1e-12 * (1.0 + lengths.sum() + np.linalg.norm(chain.hip_joint_m))
    exact = True
    for q in _PROBES[:, :nj]:
        pts, rot = positions(q)
        c, s = np.cos(q.sum()), np.sin(q.sum())
        ry = np.array([[c, 0.0, s], [0.0, 1.0, 0.0], [-s, 0.0, c]])
        exact &= bool(np.max(np.abs(pts[:, [0, 2]] - chain.joints(q)[0])) < tol
                      and np.max(np.abs(pts[:, 1] - pts0[:, 1])) < tol and np.max(np.abs(rot - ry @ rot0)) < 1e-12)
    return PlanarChain(chain.hip_joint_m, links, rot0, exact)


def _closed_form(chain: PlanarChain, p, sign: float, foot_pitch_rad: float):
    """offset_chain_ik's work -> (q (n, j), flags (n,), the foot target actually solved for (n, 2))."""
    p = np.atleast_2d(np.asarray(p, dtype=float))
    a = chain.links_m
    la, lb = chain.lengths_m[:2]
    rmin, rmax = chain.reach_m
    tip = np.zeros(2) if chain.n_joints == 2 else rotate_xz(foot_pitch_rad, a[2])   # constant last link
    t = p - chain.hip_joint_m - tip
    r = np.hypot(t[:, 0], t[:, 1])
    unreachable = (r > rmax) | (r < rmin)
    safe = np.where(r > 0.0, r, 1.0)
    direction = np.where((r > 0.0)[:, None], t / safe[:, None], np.array([0.0, -1.0]))
    rc = np.clip(r, rmin, rmax)
    tc = direction * rc[:, None]
    cos_beta = np.clip((rc**2 - la**2 - lb**2) / (2.0 * la * lb), -1.0, 1.0)
    beta = sign * np.arccos(cos_beta)
    q2 = beta - vector_pitch(a[1]) + vector_pitch(a[0])
    q1 = vector_pitch(tc) - vector_pitch(a[0] + rotate_xz(q2, a[1]))
    q1, q2 = wrap_angle(q1), wrap_angle(q2)
    cols = [q1, q2] if chain.n_joints == 2 else [q1, q2, wrap_angle(foot_pitch_rad - q1 - q2)]
    q = np.stack(cols, axis=-1)
    finite = np.isfinite(p).all(axis=1)
    flags = (np.where(unreachable, FLAG_UNREACHABLE, 0) | np.where(np.abs(np.sin(beta)) < SINGULAR_TOL, FLAG_SINGULAR, 0)
             | np.where(finite, 0, FLAG_NONFINITE))
    return q, flags.astype(np.int64), chain.hip_joint_m + tc + tip


def offset_chain_ik(chain: PlanarChain, p, knee: str, foot_pitch_rad: float = 0.0) -> IkSolution:
    """Closed-form IK of a planar chain with constant offsets (module docstring), vectorised.

    p (n, 2): foot relative to the hip frame [m]. Flags: FLAG_UNREACHABLE (target moved onto the
    workspace boundary), FLAG_SINGULAR (|sin beta| < SINGULAR_TOL: links 1 and 2 (nearly) aligned),
    FLAG_NONFINITE (target not finite; q is NaN there). Angles wrapped to (-pi, pi].
    """
    q, flags, _ = _closed_form(chain, p, knee_sign(knee), float(foot_pitch_rad))
    return IkSolution(q, flags)


class _LegSolver:
    """Per-sample damped least squares on one leg's Pinocchio model (see dls_ik); holds one Data."""

    def __init__(self, leg: LegModel, chain: PlanarChain, foot_pitch_rad: float, damping: float, tol_m: float,
                 max_step_rad: float):
        self.model, self.data = leg.model, leg.model.createData()
        self.qf = pin.neutral(leg.model)
        self.q_index, self.v_index, self.fid = leg.q_index, leg.v_index, leg.foot_frame_id
        ids = _leg_joint_ids(leg)
        self.j_hip, self.j_knee = ids[0], ids[1]
        self.j_end = ids[2] if len(ids) == 3 else None
        self.three = len(ids) == 3
        self.rows = [0, 2, 4] if self.three else [0, 2]
        pin.framesForwardKinematics(self.model, self.data, self.qf)
        hip = self.data.oMf[leg.hip_frame_id].translation
        self.hip = (float(hip[0]), float(hip[2]))      # fixed to the body (planar_chain checks it)
        self.rot0_t = chain.foot_rotation0.T    # pitch of the foot = frame_pitch(R(q) R(0)^T)
        self.pitch_target = foot_pitch_rad
        self.scale = float(chain.lengths_m.sum())    # [m/rad]: weight of the pitch row, so e is in metres
        self.d0 = damping**2
        self.tol, self.max_step = tol_m, max_step_rad
        self.eye = np.eye(len(self.rows))

    def solve(self, target, q, iters: int):
        """-> (q, converged). At most ``iters`` steps from q; self.data then holds the returned q's kinematics."""
        model, data, qf, fid = self.model, self.data, self.qf, self.fid
        q = np.array(q, dtype=float)
        for it in range(iters + 1):
            qf[self.q_index] = q
            pin.forwardKinematics(model, data, qf)
            foot = pin.updateFramePlacement(model, data, fid)
            x, _, z = foot.translation.tolist()
            e = [target[0] - (x - self.hip[0]), target[1] - (z - self.hip[1])]
            if self.three:
                e.append(self.scale * float(wrap_angle(self.pitch_target - frame_pitch(foot.rotation @ self.rot0_t))))
            if max(abs(v) for v in e) < self.tol:
                return q, True
            e = np.array(e)
            if it == iters:
                break
            pin.computeJointJacobians(model, data)
            jl = pin.getFrameJacobian(model, data, fid, pin.LOCAL_WORLD_ALIGNED)[self.rows][:, self.v_index]
            if self.three:
                jl[2] *= self.scale
            lam2 = self.d0 + float(e @ e)                 # error-scaled (Levenberg-Marquardt) damping
            dq = jl.T @ np.linalg.solve(jl @ jl.T + lam2 * self.eye, e)
            step = np.max(np.abs(dq))
            if not np.isfinite(step):
                break
            if step > self.max_step:
                dq *= self.max_step / step
            q = wrap_angle(q + dq)
        return q, False

    def knee_side_m(self) -> float:
        """Signed distance [m] of the knee joint from the line hip joint -> end of link 2 (foot, or
        ankle joint for three joints) for the pose last solved: < 0 behind (the 'backward' side)."""
        o = self.data.oMi
        hx, _, hz = o[self.j_hip].translation.tolist()
        kx, _, kz = o[self.j_knee].translation.tolist()
        ex, _, ez = (o[self.j_end] if self.three else self.data.oMf[self.fid]).translation.tolist()
        tx, tz, kx, kz = ex - hx, ez - hz, kx - hx, kz - hz
        return (tx * kz - tz * kx) / max(math.hypot(tx, tz), 1e-300)


BRANCH_TOL_M = 1e-9
"""Knee on the wrong side of the hip-to-end line by more than this [m] fails the branch check."""


def dls_ik(leg: LegModel, hip_targets, *, knee: str, foot_pitch_rad: float = 0.0, q_seed=None,
           damping: float = 1e-4, tol_m: float = 1e-10, max_iter: int = 50, max_step_rad: float = 0.2,
           polish_iter: int = 3, closed_form: bool | None = None) -> IkSolution:
    """IK on the Pinocchio model that cannot diverge: closed form where exact, guarded damped least squares.

    hip_targets (n, 2): foot position relative to the hip frame, world-aligned (x, z) [m]; base pitch 0.
    Three joints also hold the foot pitch (q1 + q2 + q3 = foot_pitch_rad, relative to the zero pose).

    1. Projection: targets beyond the workspace of planar_chain(leg) (the end of link 2, i.e. the
       foot, or for three joints the ankle = target - R(foot_pitch_rad) a3, farther than |a1| + |a2|
       from the hip joint or closer than | |a1| - |a2| |) are flagged FLAG_UNREACHABLE and moved onto
       the boundary along the target direction; every solve below aims at the moved target.
    2. Start: offset_chain_ik on the link vectors read from the model. When the model is that chain
       (planar_chain(leg).exact, e.g. every URDF leg the reader accepts; ``closed_form`` overrides the
       test), the closed form is the answer: Pinocchio forward kinematics checks it and at most
       ``polish_iter`` steps below polish it. Otherwise each sample iterates up to ``max_iter`` steps,
       warm-started from the previous sample when that one passed (or from ``q_seed`` for the first),
       and again from the closed-form guess when that attempt fails.
    3. Step: dq = J^T (J J^T + lam^2 I)^-1 e on the foot Jacobian in LOCAL_WORLD_ALIGNED (rows x, z;
       for three joints the pitch row and pitch error times sum |a_k|, so e is in metres), with
       lam^2 = damping^2 + |e|^2 [m^2]: Levenberg-Marquardt damping scaled by the squared error
       (Sugihara, "Solvability-unconcerned inverse kinematics by the Levenberg-Marquardt method",
       IEEE T-RO 27(5), 2011, from memory). Why: with a large error (a bad seed, a target that cannot
       be met) the damping dominates J J^T and the step tends to the short gradient step
       J^T e / |e|^2 rather than the Gauss-Newton step, which near a straight or folded leg is huge
       and, with the old fixed damping, walked off to thousands of radians; as the error falls the
       damping falls to ``damping``^2 and the iteration becomes Gauss-Newton again (fast final
       convergence, no bias at the solution). Then the step is scaled down so that
       max |dq| <= ``max_step_rad`` (what remains of a near-singular step with a small error) and q
       is wrapped to (-pi, pi].
    4. Checks per sample: residual below ``tol_m`` (max over the rows), q finite, and the knee on
       ``knee``'s side of the line hip joint -> end of link 2 ('backward': behind it; by more than
       BRANCH_TOL_M on the wrong side fails). The branch check is skipped for FLAG_UNREACHABLE samples
       (on the workspace boundary both branches meet). A sample that fails is flagged
       FLAG_IK_NOT_CONVERGED and holds the closed-form guess (or its own iterate when that is finite and
       on the right branch); a flagged sample never seeds the next one, which starts from its own
       closed-form guess. A non-finite target gives q = NaN and FLAG_NONFINITE | FLAG_IK_NOT_CONVERGED.

    Singular poses are flagged by the caller (mapping.translate, from the Jacobian determinant), not here.
    ``q_seed`` only matters on the iterative path. Raises LegbridgeError for an unknown ``knee`` and
    UsageError for a leg planar_chain refuses.
    """
    sign = knee_sign(knee)
    chain = planar_chain(leg)
    targets = np.atleast_2d(np.asarray(hip_targets, dtype=float))
    n = targets.shape[0]
    foot_pitch_rad = float(foot_pitch_rad)
    guess, cf_flags, aim = _closed_form(chain, targets, sign, foot_pitch_rad)
    flags = cf_flags & (FLAG_UNREACHABLE | FLAG_NONFINITE)
    flags |= np.where(cf_flags & FLAG_NONFINITE, FLAG_IK_NOT_CONVERGED, 0)
    q = guess.copy()
    solver = _LegSolver(leg, chain, foot_pitch_rad, damping, tol_m, max_step_rad)
    exact = chain.exact if closed_form is None else bool(closed_form)
    warm = None if q_seed is None else np.asarray(q_seed, dtype=float)
    failed = np.zeros(n, dtype=bool)
    aim_list, flag_list = aim.tolist(), flags.tolist()
    for i in range(n):
        if flag_list[i] & FLAG_NONFINITE:
            warm = None
            continue
        boundary = bool(flag_list[i] & FLAG_UNREACHABLE)
        if exact:
            starts = ((guess[i], polish_iter),)
        else:
            starts = ((guess[i], max_iter),) if warm is None else ((warm, max_iter), (guess[i], max_iter))
        for start, iters in starts:
            qi, converged = solver.solve(aim_list[i], start, iters)
            finite = all(math.isfinite(v) for v in qi.tolist())
            right_branch = finite and (boundary or sign * solver.knee_side_m() >= -BRANCH_TOL_M)
            if converged and right_branch:
                break
        if converged and right_branch:
            q[i] = qi
        else:
            failed[i] = True
            if right_branch:
                q[i] = qi
        warm = q[i] if not (boundary or failed[i]) else None
    flags |= np.where(failed, FLAG_IK_NOT_CONVERGED, 0)
    return IkSolution(q, flags)


def solve_rates(a_mat: np.ndarray, rhs: np.ndarray, singular: np.ndarray, scale: float) -> np.ndarray:
    """Batched solve of A x = b for square A (n, m, m), damped where a sample is flagged singular.

    x = A^T (A A^T + lam^2 I)^-1 b with lam = SINGULAR_TOL * scale on singular samples and 0
    elsewhere (then x = A^-1 b exactly). Keeps velocities finite at a straight leg.
    """
    lam2 = np.where(singular, (SINGULAR_TOL * scale) ** 2, 0.0)[:, None, None]
    aat = a_mat @ np.swapaxes(a_mat, -1, -2) + lam2 * np.eye(a_mat.shape[-2])
    y = np.linalg.solve(aat, rhs[..., None])[..., 0]
    return np.einsum("nij,ni->nj", a_mat, y)
