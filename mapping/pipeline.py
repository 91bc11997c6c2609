"""The one way from inputs to joint trajectories: read a plan against a robot and translate it.

    prepare(plan, robot, *, rate_hz, cases=None, leg_model=None, gait=None) -> Prepared

Every command, the review and every sweep worker go through :func:`prepare`. ``plan`` is a Plan or a
plan file path; ``robot`` a Robot (e.g. built in code), a robot description path or a bundled robot
name. Bad input raises a LegbridgeError subclass before anything is translated.
"""

from __future__ import annotations
from legbridge.robots.errors import Described

import math
import os
from dataclasses import dataclass

from legbridge.robots.errors import UsageError
from legbridge.robots.library import as_robot
from legbridge.robots.robot import Robot

from .joint_trajectory import JointTrajectory
from .plan import Plan


@dataclass(frozen=True, eq=False)
class Prepared:
    """A plan, the robot it was read against, and its cases translated at ``rate_hz`` [Hz]."""

    plan: Plan
    robot: Robot
    trajectories: tuple[JointTrajectory, ...]
    rate_hz: float
    warnings: tuple[str, ...] = ()

    def __repr__(self) -> str:
        return (f"Prepared(plan={self.plan.path!r}, robot={self.robot.name!r}, cases={len(self.trajectories)}, "
                f"rate_hz={self.rate_hz:g})")


def check_rate(rate_hz) -> float:
    """The controller rate [Hz] as a float; UsageError unless it is a finite positive number."""
    try:
        r = float(rate_hz)
    except (TypeError, ValueError):
        r = math.nan
    if isinstance(rate_hz, bool) or not (math.isfinite(r) and r > 0):
        raise UsageError("bad controller rate", key="rate_hz", expected="a positive rate in Hz", found=rate_hz)
    return r


def read_against(plan, robot: Robot) -> Plan:
    """A Plan as given, or the plan file read and scaled against ``robot``."""
    if isinstance(plan, Plan):
        return plan
    if isinstance(plan, (str, os.PathLike)):
        from .readers import read_plan

        return read_plan(plan, robot=robot)
    raise UsageError("not a plan", key="plan", expected="a Plan or a plan file path", found=type(plan).__name__)


ACTUATOR_JUMP_M = 1e-3
"""A step of the plan's actuator length above this [m] between two samples, and five times the steps
beside it (a ramp's steps are alike), is reported: an open-loop policy whose end does not meet its
start jumps at every restart."""


def actuator_jumps(plan) -> tuple[str, ...]:
    """Warnings for jumps in each case's actuator_length_m column (a discontinuous policy)."""
    import numpy as np

    out = []
    for c in plan.cases:
        a = getattr(c, "actuator_length_m", None)
        if a is None or len(a) < 3:
            continue
        step = np.abs(np.diff(np.asarray(a, dtype=float)))
        pad = np.pad(step, 1)
        beside = np.maximum(pad[:-2], pad[2:])
        big = np.flatnonzero((step > ACTUATOR_JUMP_M) & (step > 5.0 * beside))
        if big.size:
            k = int(big[np.argmax(step[big])])
            out.append(f"{plan.path}: case '{c.name}': the actuator length jumps {1e3 * step[k]:.3g} mm at "
                       f"t = {float(c.time_s[k + 1]):.4g} s ({big.size} jump(s) over {1e3 * ACTUATOR_JUMP_M:g} mm); an "
                       "open-loop policy that does not end where it starts jumps at every restart: the resampling "
                       "cuts there, but the hardware cannot follow a jump")
    return tuple(out)


BASE_MEMORY_B = 300e6
"""What a run holds before any sample: the interpreter, NumPy, SciPy, Pinocchio, cvxpy [bytes]."""
HELD_B_PER_SAMPLE_JOINT = 300.0
"""Each translated sample of every case, per joint (targets, motor side, phase ends) [bytes]."""
CHECK_B_PER_SAMPLE_JOINT = 1500.0
"""The case being checked, per sample and joint (traces, thermal scan, both QPs, the recheck) [bytes].
Both from tests/perf/bench_scale.py: 128,001 samples of the four-joint demo biped peaked at 1.02 GB."""
MEMORY_SHARE = 0.8
"""A request is refused when its estimate exceeds this share of the memory available."""


def available_memory_bytes() -> float:
    """Memory available to this process [bytes]: LEGBRIDGE_MEMORY_LIMIT_MB when set, else the
    system's available memory (/proc/meminfo MemAvailable, else free physical pages), else inf."""
    env = os.environ.get("LEGBRIDGE_MEMORY_LIMIT_MB")
    if env:
        try:
            return float(env) * 1e6
        except ValueError:
            raise UsageError("bad LEGBRIDGE_MEMORY_LIMIT_MB", key="LEGBRIDGE_MEMORY_LIMIT_MB",
                             expected="a number of megabytes", found=env) from None
    try:
        with open("/proc/meminfo", encoding="ascii") as fh:
            for line in fh:
                if line.startswith("MemAvailable:"):
                    return float(line.split()[1]) * 1024.0
    except OSError:
        pass
    try:
        return float(os.sysconf("SC_PAGE_SIZE") * os.sysconf("SC_AVPHYS_PAGES"))
    except (ValueError, OSError, AttributeError):
        return math.inf


def estimate_memory_bytes(samples_per_case, n_joints: int) -> float:
    """Peak memory [bytes] of translating every case and checking them one after another."""
    n = [float(k) for k in samples_per_case]
    if not n:
        return BASE_MEMORY_B
    return BASE_MEMORY_B + n_joints * (HELD_B_PER_SAMPLE_JOINT * sum(n) + CHECK_B_PER_SAMPLE_JOINT * max(n))


def check_memory(plan: Plan, robot: Robot, rate_hz: float, cases=None) -> None:
    """Refuse (UsageError, exit 2) a request whose estimated memory would not fit, before any work,
    naming the plan length, the rate and what to change."""
    chosen = plan.cases if cases is None else tuple(plan.case(c) for c in cases)
    durations = [float(c.time_s[-1] - c.time_s[0]) if len(c.time_s) else 0.0 for c in chosen]
    samples = [math.floor(d * rate_hz + 1e-9) + 1 for d in durations]
    need = estimate_memory_bytes(samples, len(robot.limb_joints))
    have = available_memory_bytes()
    if need > MEMORY_SHARE * have:
        longest = max(durations, default=0.0)
        raise UsageError(
            f"{len(chosen)} case(s) of up to {longest:g} s at {rate_hz:g} Hz ({max(samples, default=0)} samples per case) "
            f"need about {need / 1e9:.2f} GB, {have / 1e9:.2f} GB available", key="--rate",
            expected=f"a request within {MEMORY_SHARE:.0%} of the available memory",
            found=Described(f"{need / 1e9:.2f} GB"),
            hint="lower --rate, check fewer cases (translate --case), or split the plan into shorter parts")


def prepare(plan, robot, *, rate_hz: float, cases=None, leg_model=None, gait=None) -> Prepared:
    """Read ``plan`` against ``robot``, refuse it when its units cannot be the robot's (a probable
    unit slip: millimetres, centimetres, degrees; mapping.readers.plausibility), and translate its
    cases (or the named ``cases``) at ``rate_hz``. Milder mismatches (leg length or mass far from the
    robot's) come back as ``warnings``. ``gait``: for a biped robot, which leg takes each stance
    (mapping.translate.resolve_gait)."""
    rate = check_rate(rate_hz)
    robot = as_robot(robot)
    plan = read_against(plan, robot)
    from legbridge.robots.leg_model import cached_leg_model

    from .readers.plausibility import check_units
    from .translate import translate_plan

    check_memory(plan, robot, rate, cases)
    leg = leg_model if leg_model is not None else cached_leg_model(robot)
    warnings = tuple(check_units(plan, robot, leg_model=leg)) + actuator_jumps(plan)
    trajs = translate_plan(plan, robot, rate_hz=rate, cases=cases, leg_model=leg, gait=gait)
    return Prepared(plan, robot, tuple(trajs), rate, tuple(warnings))


__all__ = ["Prepared", "check_rate", "prepare", "read_against"]
