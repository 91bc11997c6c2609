"""Joint-space targets of one case at the controller rate: what translate() produces.

Shapes: (n,) per sample, (n, j) per sample and leg joint (joint order = JointTrajectory.joint_names),
(n, 2) for planar vectors (x, z) and (n, 2, j) for the foot Jacobian. SI units; arrays read-only.
Sign conventions as in the README, "Units and conventions" (joint torque: applied by the actuator to the child segment, +y).
"""

from __future__ import annotations

from legbridge.robots.reprs import short_repr

from dataclasses import dataclass, fields, replace

import numpy as np

# Reasons a sample can be flagged by the mapping (bit flags in JointTrajectory.flags).
FLAG_UNREACHABLE = 1        # leg length beyond reach (too long or too short): IK has no solution
FLAG_IK_NOT_CONVERGED = 2   # numerical IK did not converge to tolerance
FLAG_SINGULAR = 4           # Jacobian (near) singular: velocities/accelerations unreliable
FLAG_NONFINITE = 8          # a computed value is NaN or infinite
FLAG_NAMES = {
    FLAG_UNREACHABLE: "pose out of reach",
    FLAG_IK_NOT_CONVERGED: "inverse kinematics did not converge",
    FLAG_SINGULAR: "leg (near) singular",
    FLAG_NONFINITE: "non-finite value",
}


@short_repr('case', 'joint_names', 'rate_hz', 'time_s', 'q')
@dataclass(frozen=True, eq=False)
class JointTrajectory:
    """Targets for one case.

    time_s (n,) [s]; stance (n,) bool
    q, qd, qdd (n, j) [rad, rad/s, rad/s^2]; tau (n, j) joint torque [N m]
    tau_free (n, j): joint torque with the ground force removed, so tau = tau_free - J^T F [N m]
    jacobian (n, 2, j): foot point Jacobian (x, z rows) in the world-aligned frame [m/rad]
    foot_force_n (n, 2): ground force on the foot (x, z) used for tau [N]
    base_residual (n, 3): wrench (x force [N], z force [N], pitch moment [N m]) the base would need
        beyond what the leg provides: how far the plan's body motion is from the leg model
    motor_position_rad, motor_speed_rad_s, motor_torque_nm (n, j): motor side (gear ratio applied;
        motor position includes the series-spring deflection tau / k)
    current_a, voltage_v (n, j): DC-equivalent drive current [A] and terminal voltage [V]
    electrical_power_w, mechanical_power_w (n, j) [W]
    flags (n,) int: bit flags FLAG_* above (0 = nothing flagged)
    motor_accel_rad_s2 (n, j): motor shaft acceleration [rad/s^2] (gear ratio applied), or None for
        rigid joints built by hand (then N qdd)
    base_pitch_rad (n,), base_velocity, base_accel (n, 3): the base (body) pitch [rad] and its (x, z,
        pitch) velocity [m/s, m/s, rad/s] and acceleration; in flight from the free-floating equations
        (mapping.free_flight). None when built by hand.
    pieces (n,) int: the interpolation piece of each sample (mapping.resample.ResampledCase.pieces):
        rates of the spring torque are never taken across a change of piece. None when built by hand.
    plan_time_s (m,): the plan's own sample times, the knots of the spring torque's rates
        (mapping.motor_side.phase_rates); None when built by hand.
    phase_ends: a JointTrajectory (p samples) of the earlier phase's left limit at every phase change
        (mapping.resample, "Phase ends"), translated with the grid, or None. The checks judge each
        instantaneous limit at these instants too and fold the worse of the two into the grid
        sample before (phase_end_index (p,) int): peaks do not depend on the export rate. Never
        exported.
    legs: () for one leg; ('left', 'right') for a biped (mapping.biped), whose joints are then
        '<leg>_<joint>'; gait: the gait in words (mapping.gait.Gait.describe)
    leg_contact, leg_generated (n, legs) bool: the leg is a stance leg / its motion is a generated
        swing (mapping.swing); leg_swing_profile (n, legs): the unit clearance profile
        64 s^3 (1 - s)^3 over each generated swing (0 elsewhere); foot_height_m (n, legs): each foot above the case's ground [m], or None
        (the plan gives no body height). All None for one leg.
    """

    case: str
    ground_height_m: float
    joint_names: tuple[str, ...]
    rate_hz: float
    time_s: np.ndarray
    stance: np.ndarray
    q: np.ndarray
    qd: np.ndarray
    qdd: np.ndarray
    tau: np.ndarray
    tau_free: np.ndarray
    jacobian: np.ndarray
    foot_force_n: np.ndarray
    base_residual: np.ndarray
    motor_position_rad: np.ndarray
    motor_speed_rad_s: np.ndarray
    motor_torque_nm: np.ndarray
    current_a: np.ndarray
    voltage_v: np.ndarray
    electrical_power_w: np.ndarray
    mechanical_power_w: np.ndarray
    flags: np.ndarray
    motor_accel_rad_s2: np.ndarray | None = None
    base_pitch_rad: np.ndarray | None = None
    base_velocity: np.ndarray | None = None
    base_accel: np.ndarray | None = None
    pieces: np.ndarray | None = None
    plan_time_s: np.ndarray | None = None
    phase_ends: "JointTrajectory | None" = None
    phase_end_index: np.ndarray | None = None
    legs: tuple[str, ...] = ()
    gait: str = ""
    leg_contact: np.ndarray | None = None
    leg_generated: np.ndarray | None = None
    leg_swing_profile: np.ndarray | None = None
    foot_height_m: np.ndarray | None = None

    @property
    def repetition_period_s(self) -> float:
        """How long one repetition lasts when the plan is repeated [s]: the last sample time minus the
        first (the last sample is where the next repetition starts), the same at every export rate."""
        t = np.asarray(self.time_s, dtype=float)
        return float(t[-1] - t[0]) if t.size > 1 else 0.0

    @property
    def n_samples(self) -> int:
        return int(self.time_s.shape[0])

    @property
    def n_joints(self) -> int:
        return len(self.joint_names)

    def rows(self, keep) -> "JointTrajectory":
        """The trajectory at the samples ``keep`` (bool mask or indices), without phase ends."""
        n = self.n_samples
        out = {}
        for f in fields(self):
            v = getattr(self, f.name)
            if (isinstance(v, np.ndarray) and v.ndim >= 1 and v.shape[0] == n
                    and f.name not in ("phase_end_index", "plan_time_s")):
                v = np.array(v[keep], copy=True)
                v.setflags(write=False)
                out[f.name] = v
        return replace(self, phase_ends=None, phase_end_index=None, **out)

    def split_phase_ends(self, probe) -> "JointTrajectory":
        """This trajectory, translated with its phase ends (mapping.resample, marked in ``probe``),
        split into the grid trajectory carrying the phase ends (each folding into the grid sample
        before it)."""
        probe = np.asarray(probe, dtype=bool)
        if not probe.any():
            return self
        at = np.flatnonzero(probe)
        index = np.maximum(at - np.arange(at.size) - 1, 0)
        index.setflags(write=False)
        return replace(self.rows(~probe), phase_ends=self.rows(probe), phase_end_index=index)

    def motor_side_rates(self, i: int, gear_ratio: float) -> tuple[np.ndarray, np.ndarray]:
        """(speed [rad/s], acceleration [rad/s^2]) of joint i's motor side in joint units (the motor shaft
        divided by the gear ratio): for a series-elastic joint the gearbox output, not the joint."""
        speed = np.asarray(self.motor_speed_rad_s[:, i], dtype=float) / gear_ratio
        if self.motor_accel_rad_s2 is None:
            return speed, np.asarray(self.qdd[:, i], dtype=float)
        return speed, np.asarray(self.motor_accel_rad_s2[:, i], dtype=float) / gear_ratio

    def base_residual_summary(self) -> dict:
        """Largest base residual over the case: |x force| [N], |z force| [N], |pitch moment| [N m],
        and the time [s] of the largest force magnitude (how far the plan's body motion is from what
        this leg's masses imply)."""
        r = np.asarray(self.base_residual, dtype=float)
        if r.size == 0:
            return {"max_force_x_n": 0.0, "max_force_z_n": 0.0, "max_moment_nm": 0.0, "t_max_force_s": None}
        k = int(np.argmax(np.hypot(r[:, 0], r[:, 1])))
        return {"max_force_x_n": float(np.max(np.abs(r[:, 0]))), "max_force_z_n": float(np.max(np.abs(r[:, 1]))),
                "max_moment_nm": float(np.max(np.abs(r[:, 2]))), "t_max_force_s": float(self.time_s[k])}
