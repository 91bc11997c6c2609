"""Reviews for the report tests, made by the real check path (limits.checks.check_case and
limits.review.assemble_review) from small hand-built joint trajectories of the invented example leg.

The hip is held still (speed and acceleration zero, so the gearbox works in the motoring direction at
every sample) while its torque follows one hump tau = peak sin(pi t / T); the knee swings gently. The
ground force is a vertical hump with a small forward part (0.1 Fz, well inside the friction cone
0.7). Other test files load this module by path (``load()``).
"""

from __future__ import annotations

import importlib.util
import math
from pathlib import Path
from types import SimpleNamespace

import numpy as np

from legbridge.limits.checks.case import check_case
from legbridge.limits.checks.results import CheckSettings
from legbridge.limits.review.review import assemble_review
from legbridge.mapping.plan import Plan, ReducedTrajectory
from legbridge.robots.library import library_path
from legbridge.robots.toml_reader import load_robot

# 2 s of the 0.4 s plan repeated: enough to see the winding warm, short enough to stay far below its limit
SETTINGS = CheckSettings(rate_hz=200.0, duration_s=2.0, margin=0.1)


def load():
    """This module, importable from the test files (pytest runs with --import-mode=importlib)."""
    spec = importlib.util.spec_from_file_location("legbridge_report_fixtures", Path(__file__))
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


def _conftest():
    spec = importlib.util.spec_from_file_location("legbridge_limits_conftest", Path(__file__).with_name("conftest.py"))
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


def robot():
    return load_robot(library_path("example-leg.toml"))


def trajectory(rob, case: str, hip_torque_peak_nm: float, *, rate_hz: float = 200.0, duration_s: float = 0.4,
               ground_height_m: float = 0.0, flags=None):
    """The joint trajectory of one case (see the module docstring)."""
    conf = _conftest()
    n = int(round(duration_s * rate_hz)) + 1
    t = np.arange(n) / rate_hz
    w = 2 * math.pi / duration_s
    q = np.column_stack([np.full(n, 0.3), -1.0 + 0.4 * np.sin(w * t)])
    qd = np.column_stack([np.zeros(n), 0.4 * w * np.cos(w * t)])
    qdd = np.column_stack([np.zeros(n), -0.4 * w**2 * np.sin(w * t)])
    hump = np.sin(math.pi * t / duration_s)
    tau = np.column_stack([hip_torque_peak_nm * hump, -20.0 * hump])
    force = np.column_stack([40.0 * hump, 400.0 * hump])
    return conf.build_trajectory(rob, q, qd, qdd, tau, conf.leg_jacobian(rob, q), force, hump > 0.05, rate_hz=rate_hz,
                                 case=case, ground_height_m=ground_height_m, flags=flags)


def plan_for(trajs, path: str = "/tmp/invented-plan.json") -> Plan:
    """A Plan naming the cases of ``trajs`` (the report shows the plan's identity)."""
    cases = tuple(ReducedTrajectory(tr.case, tr.time_s, np.full(tr.n_samples, 0.8), np.zeros(tr.n_samples),
                                    tr.foot_force_n[:, 0], tr.foot_force_n[:, 1], tr.stance, tr.ground_height_m)
                  for tr in trajs)
    return Plan(path=path, sha256="0" * 64, cases=cases, metadata={"description": "invented test plan"})


def review_of(rob, trajs, settings: CheckSettings = SETTINGS, created: str = "2025-01-01T12:00:00+00:00"):
    """The Review of ``trajs`` through the real checker."""
    cases = [check_case(tr, rob, settings) for tr in trajs]
    return assemble_review(plan_for(trajs), rob, settings, cases, created=created)


def review_with_violation(rob):
    """Three cases: 'nominal' within (hip peak 30 N m), 'step' near (41 N m), 'bump' exceeds (50 N m)."""
    trajs = (trajectory(rob, "nominal", 30.0), trajectory(rob, "step", 41.0, ground_height_m=0.02),
             trajectory(rob, "bump", 50.0, ground_height_m=-0.03))
    return review_of(rob, trajs)


__all__ = ["SETTINGS", "load", "plan_for", "review_of", "review_with_violation", "robot", "trajectory", "SimpleNamespace"]
