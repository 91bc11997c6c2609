"""Several ground-height cases as one :class:`Plan`, and reading the model back out of a plan."""

from __future__ import annotations
from legbridge.robots.errors import Described

import hashlib
import json

import numpy as np

from legbridge.mapping.plan import Plan, Policy
from legbridge.robots.errors import SlipInputError
from legbridge.mapping.slip.params import SpringMassParams
from legbridge.mapping.slip.policy import make_policy
from legbridge.mapping.slip.results import ApexState, SimulationResult
from legbridge.mapping.slip.simulate import simulate

SIMULATED_PATH = "<simulated spring-mass plan>"


def case_name(ground_height_m: float) -> str:
    """'nominal' for 0, else e.g. 'ground-0.08m' / 'ground+0.04m'."""
    if abs(ground_height_m) < 5e-13:
        return "nominal"
    return f"ground{ground_height_m:+.2f}m" if abs(round(ground_height_m, 2) - ground_height_m) < 1e-12 else f"ground{ground_height_m:+g}m"


def _digest(results) -> str:
    h = hashlib.sha256()
    for r in results:
        tr = r.trajectory
        h.update(tr.name.encode())
        for a in (tr.time_s, tr.leg_length_m, tr.leg_angle_rad, tr.force_x_n, tr.force_z_n):
            h.update(np.ascontiguousarray(a).tobytes())
    return h.hexdigest()


def simulate_heights(
    params: SpringMassParams,
    policy: Policy,
    apex: ApexState,
    heights,
    *,
    duration_s: float = 2.0,
    rate_hz: float = 500.0,
    names=None,
    flight_swing: str = "whole-flight",
) -> tuple[SimulationResult, ...]:
    """Simulate one case per ground height [m] with the same policy and initial apex.

    names: case names (default :func:`case_name` of each height)
    """
    heights = [float(h) for h in heights]
    if not heights:
        raise SlipInputError(key="heights", expected="at least one ground height", found=Described("none"))
    names = [case_name(h) for h in heights] if names is None else list(names)
    if len(names) != len(heights) or len(set(names)) != len(names):
        raise SlipInputError(key="names", expected=f"{len(heights)} distinct case names", found=names)
    return tuple(simulate(params, policy, apex, h, duration_s, rate_hz, name=n, flight_swing=flight_swing)
                 for h, n in zip(heights, names))


def plan_from_results(
    params: SpringMassParams,
    policy: Policy,
    apex: ApexState,
    results,
    *,
    metadata: dict | None = None,
    path: str = SIMULATED_PATH,
) -> Plan:
    """A :class:`Plan` holding the simulated cases.

    ``plan.metadata`` holds 'model' (the parameters), 'initial_apex' (x_m, z_m, vx_m_s),
    'duration_s', 'rate_hz', 'outcomes' (per case: status, reason, time_s) and ``metadata``'s own
    entries; ``plan.policy`` is the policy; ``plan.sha256`` hashes the sampled cases.
    """
    results = tuple(results)
    if not results:
        raise SlipInputError(key="results", expected="at least one simulated case", found=Described("none"))
    t0 = results[0].trajectory.time_s
    meta = {
        "source": "legbridge.mapping.slip: actuated spring-mass simulation",
        "model": params.to_dict(),
        "initial_apex": {k: v for k, v in apex.to_dict().items() if k != "time_s"},
        "duration_s": max(r.outcome.time_s for r in results),
        "rate_hz": float(1.0 / (t0[1] - t0[0])) if t0.shape[0] > 1 else None,
        "outcomes": {r.trajectory.name: r.outcome.to_dict() for r in results},
    }
    meta.update(metadata or {})
    return Plan(
        path=path,
        sha256=_digest(results),
        cases=tuple(r.trajectory for r in results),
        scaling=None,
        metadata=meta,
        policy=policy,
    )


def simulate_cases(
    params: SpringMassParams,
    policy: Policy,
    apex: ApexState,
    heights,
    *,
    duration_s: float = 2.0,
    rate_hz: float = 500.0,
    names=None,
    metadata: dict | None = None,
    path: str = SIMULATED_PATH,
    flight_swing: str = "whole-flight",
) -> Plan:
    """:func:`simulate_heights` then :func:`plan_from_results`: one plan, one case per ground height [m]
    (metadata 'flight_swing' records how the flight leg angle was written, so a sweep writes it alike)."""
    results = simulate_heights(params, policy, apex, heights, duration_s=duration_s, rate_hz=rate_hz, names=names,
                               flight_swing=flight_swing)
    meta = dict(metadata or {})
    if flight_swing != "whole-flight":
        meta["flight_swing"] = flight_swing
    return plan_from_results(params, policy, apex, results, metadata=meta, path=path)


def plan_for_flat_formats(plan: Plan) -> Plan:
    """The same cases without the policy and with nested metadata values as one-line JSON text,
    for the plan formats that hold flat metadata only (CSV). ``metadata['model']`` is kept as is."""
    meta = {}
    for k, v in plan.metadata.items():
        if k != "model" and (isinstance(v, (dict, list, tuple)) or v is None):
            v = json.dumps(v, sort_keys=True, separators=(",", ":"))
        meta[k] = v
    return Plan(path=plan.path, sha256=plan.sha256, cases=plan.cases, scaling=plan.scaling, metadata=meta, policy=None)


def params_from_plan(plan: Plan) -> SpringMassParams:
    """The spring-mass parameters stored in ``plan.metadata['model']``."""
    model = plan.metadata.get("model") if isinstance(plan.metadata, dict) else None
    if model is None:
        raise SlipInputError(path=plan.path, key="metadata.model", expected="the spring-mass parameters", found=Described("nothing"))
    try:
        return SpringMassParams.from_dict(dict(model), where="metadata.model")
    except SlipInputError as e:
        raise SlipInputError(str(e), path=plan.path) from e


def policy_from_plan(plan: Plan) -> Policy:
    """The plan's policy, validated (strictly increasing time from 0, equal lengths, finite)."""
    if plan.policy is None:
        raise SlipInputError(path=plan.path, key="policy", expected="a policy (time_s, actuator_length_m, touchdown_angle_rad)", found=Described("nothing"))
    try:
        return make_policy(plan.policy.time_s, plan.policy.actuator_length_m, plan.policy.touchdown_angle_rad)
    except SlipInputError as e:
        raise SlipInputError(str(e), path=plan.path) from e


def initial_apex_from_plan(plan: Plan) -> ApexState:
    """The initial apex state stored in ``plan.metadata['initial_apex']`` (x_m, z_m, vx_m_s)."""
    d = plan.metadata.get("initial_apex") if isinstance(plan.metadata, dict) else None
    if not isinstance(d, dict) or set(d) != {"x_m", "z_m", "vx_m_s"}:
        raise SlipInputError(
            path=plan.path, key="metadata.initial_apex", expected="a table with x_m, z_m, vx_m_s",
            found=json.dumps(d) if d is not None else "nothing",
        )
    return ApexState(d["x_m"], d["z_m"], d["vx_m_s"])


__all__ = [
    "case_name",
    "initial_apex_from_plan",
    "params_from_plan",
    "plan_for_flat_formats",
    "plan_from_results",
    "policy_from_plan",
    "simulate_cases",
    "simulate_heights",
]
