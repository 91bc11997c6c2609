"""The invented demo scenario: a 25 kg lab biped hopping forward at about 1.5 m/s.

INVENTED NUMBERS, for demonstrations and tests only; they describe no real robot. Nominal leg length
0.70 m, five ground-height cases (-0.06, -0.03, 0, +0.03 and +0.06 m), one shared open-loop policy:
swing-leg retraction at 3 rad/s from 0.457 rad at the apex, and an actuator stroke of 0.062 m from
0.15 s after the apex that puts back the energy the damper takes. Step-ups of about +0.062 m and
more fall with this policy (the body is thrown backward), so the demo stops at +0.06 m; a
disturbance sweep shows the whole window.

The same plan also ships as a file, ``demo-hop-plan.json`` in this package (a byte-identical copy
of examples/demo-hop-plan.json, both written by examples/make_demo_plans.py): ``demo_plan()``
integrates an ODE, so its last digits depend on the installed SciPy/NumPy and CPU, whereas
``shipped_demo_plan_path()`` gives the same bytes on every machine.
"""

from __future__ import annotations

from importlib.resources import files
from pathlib import Path

from legbridge.mapping.plan import Plan
from legbridge.mapping.readers import read_plan
from legbridge.mapping.slip.params import SpringMassParams
from legbridge.mapping.slip.policy import linear_retraction, policy_from_functions, stroke_profile
from legbridge.mapping.slip.results import ApexState
from legbridge.mapping.slip.to_plan import simulate_cases
from legbridge.robots.errors import InputFileNotFound

DEMO_HEIGHTS_M = (-0.06, -0.03, 0.0, 0.03, 0.06)
LEFT_OUT_HEIGHTS_M = (0.08,)
DEMO_DURATION_S = 2.0
DEMO_RATE_HZ = 500.0
SHIPPED_DEMO_PLAN = "demo-hop-plan.json"
SHIPPED_DEMO_RUN_PLAN = "demo-run-plan.json"
DEMO_DESCRIPTION = (
    "INVENTED demo scenario (no real robot): 25 kg lab biped hopping forward at about 1.5 m/s on a "
    "0.70 m spring-mass leg, ground-height cases sharing one open-loop policy"
)


DEMO_RUN_DESCRIPTION = (
    "INVENTED demo scenario (no real robot): 25 kg lab biped running forward at about 1.5 m/s with "
    "alternating legs on a 0.70 m spring-mass leg, ground-height cases sharing one open-loop policy"
)


def demo_params() -> SpringMassParams:
    """Invented spring-mass parameters of the demo biped."""
    return SpringMassParams(
        mass_kg=25.0,
        stiffness_n_per_m=6000.0,
        damping_n_s_per_m=200.0,
        nominal_leg_length_m=0.70,
        min_leg_length_m=0.40,
        gravity_m_s2=9.81,
        max_time_between_apexes_s=2.0,
    )


def demo_policy():
    """Invented open-loop policy, sampled every 10 ms over 0.8 s after the apex."""
    return policy_from_functions(
        stroke_profile(rest_length_m=0.70, stroke_m=0.062, start_s=0.15, rise_s=0.08, hold_s=0.03, fall_s=0.10),
        linear_retraction(angle_at_apex_rad=0.457, retraction_rate_rad_s=3.0, min_angle_rad=-0.3),
        horizon_s=0.8,
        step_s=0.01,
    )


def demo_apex() -> ApexState:
    """Initial apex: hip 0.72 m above the nominal ground, 1.5 m/s forward."""
    return ApexState(x_m=0.0, z_m=0.72, vx_m_s=1.5)


def demo_plan(heights_m=DEMO_HEIGHTS_M) -> Plan:
    """The demo plan in memory (deterministic): one case per ground height, model and policy attached."""
    return _simulated(heights_m, {"description": DEMO_DESCRIPTION, "invented": "yes"}, "<legbridge demo plan>",
                      "whole-flight")


def demo_run_plan(heights_m=DEMO_HEIGHTS_M) -> Plan:
    """The demo plan for a biped running with alternating legs: the same cases with the flight leg angle
    written for the landing leg (simulate's flight_swing='policy') and metadata gait 'alternating'."""
    return _simulated(heights_m, {"description": DEMO_RUN_DESCRIPTION, "invented": "yes", "gait": "alternating"},
                      "<legbridge demo running plan>", "policy")


def _simulated(heights_m, metadata: dict, path: str, flight_swing: str) -> Plan:
    return simulate_cases(demo_params(), demo_policy(), demo_apex(), heights_m, duration_s=DEMO_DURATION_S,
                          rate_hz=DEMO_RATE_HZ, metadata=metadata, path=path, flight_swing=flight_swing)


def shipped_demo_plan_path(name: str = SHIPPED_DEMO_PLAN) -> Path:
    """Path of the demo plan file shipped inside the package (package data, same bytes everywhere).

    Found with importlib.resources, so it works from a checkout, an editable install and a regular
    wheel install. Raises InputFileNotFound when the file is missing from the installation, or when
    the package is not installed as plain files (e.g. imported from a zip archive).
    """
    res = files(__package__) / name
    if not isinstance(res, Path):
        raise InputFileNotFound("the shipped demo plan is not a plain file in this installation", path=str(res),
                                expected="legbridge installed as files (not zipped)", found=type(res).__name__)
    if not res.is_file():
        raise InputFileNotFound("the shipped demo plan is missing from this installation", path=str(res),
                                hint="reinstall legbridge; the file is package data of legbridge.mapping.slip")
    return res


def shipped_demo_run_plan() -> Plan:
    """The shipped biped running demo plan (``demo-run-plan.json``, written by examples/make_demo_plans.py)."""
    return read_plan(shipped_demo_plan_path(SHIPPED_DEMO_RUN_PLAN))


def shipped_demo_plan() -> Plan:
    """The shipped demo plan file read back as a Plan (legbridge.mapping.readers.read_plan).

    It equals ``demo_plan()`` to within the simulator's integration tolerance; use it (or its path)
    wherever the exact same numbers are wanted on every machine.
    """
    return read_plan(shipped_demo_plan_path())


__all__ = [
    "DEMO_HEIGHTS_M",
    "LEFT_OUT_HEIGHTS_M",
    "SHIPPED_DEMO_PLAN",
    "SHIPPED_DEMO_RUN_PLAN",
    "demo_apex",
    "demo_params",
    "demo_plan",
    "demo_policy",
    "demo_run_plan",
    "shipped_demo_plan",
    "shipped_demo_plan_path",
    "shipped_demo_run_plan",
]
