"""What the plan means: plan files -> reduced trajectories -> joint trajectories; target export.

Public API (SI units; conventions in the README, "Units and conventions"):

    read_plan(path, *, robot=None) -> Plan                                  (mapping.readers)
    write_plan(plan, path, *, force=False) -> Path                          (mapping.plan_writer)
    translate(case, robot, *, rate_hz=1000.0, leg_model=None) -> JointTrajectory
    translate_plan(plan, robot, *, rate_hz=1000.0, cases=None) -> tuple[JointTrajectory, ...]
    write_targets(trajs, path, *, plan, robot, rate_hz, force=False) -> Path
"""

from .plan import Plan, Policy, ReducedTrajectory, Scaling  # noqa: I001 (plan first)
from .joint_trajectory import (FLAG_IK_NOT_CONVERGED, FLAG_NAMES, FLAG_NONFINITE, FLAG_SINGULAR, FLAG_UNREACHABLE,
                               JointTrajectory)
from .resample import ResampledCase, ResampleError, resample_case
from .targets_export import TargetsExportError, read_targets_metadata, write_targets
from .translate import translate, translate_plan

from .readers import read_plan
from .plan_writer import write_plan

__all__ = [
    "FLAG_IK_NOT_CONVERGED", "FLAG_NAMES", "FLAG_NONFINITE", "FLAG_SINGULAR", "FLAG_UNREACHABLE", "JointTrajectory",
    "Plan", "Policy", "ReducedTrajectory", "ResampleError", "ResampledCase", "Scaling", "TargetsExportError",
    "read_plan", "read_targets_metadata", "resample_case", "translate", "translate_plan", "write_plan", "write_targets",
]
