"""Reduced-order simulator: the actuated spring-mass (SLIP) model in the sagittal plane.

Point-mass body at the hip; massless leg = length actuator in series with a damped linear spring.
``simulate`` runs one ground-height case from an apex through flight, stance and liftoff events
(scipy ``solve_ivp``); ``simulate_cases`` runs several with one shared open-loop policy and returns
a :class:`legbridge.mapping.plan.Plan`. Conventions and units: see legbridge.mapping.plan.
"""

from legbridge.mapping.slip.demo import demo_plan, shipped_demo_plan, shipped_demo_plan_path
from legbridge.robots.errors import SlipInputError
from legbridge.mapping.slip.params import SpringMassParams
from legbridge.mapping.slip.policy import (
    PolicyCurves,
    linear_retraction,
    make_policy,
    policy_from_functions,
    stroke_profile,
)
from legbridge.mapping.slip.results import ApexState, Event, Outcome, SimulationResult
from legbridge.mapping.slip.simulate import simulate
from legbridge.mapping.slip.to_plan import (
    case_name,
    initial_apex_from_plan,
    params_from_plan,
    plan_for_flat_formats,
    plan_from_results,
    policy_from_plan,
    simulate_cases,
    simulate_heights,
)

__all__ = [
    "ApexState",
    "Event",
    "Outcome",
    "PolicyCurves",
    "SimulationResult",
    "SlipInputError",
    "SpringMassParams",
    "case_name",
    "demo_plan",
    "initial_apex_from_plan",
    "linear_retraction",
    "make_policy",
    "params_from_plan",
    "plan_for_flat_formats",
    "plan_from_results",
    "policy_from_functions",
    "policy_from_plan",
    "shipped_demo_plan",
    "shipped_demo_plan_path",
    "simulate",
    "simulate_cases",
    "simulate_heights",
    "stroke_profile",
]
