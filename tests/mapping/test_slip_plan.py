"""The simulator's plans: demo outcomes and figures, plan round trip, input errors."""

import numpy as np
import pytest

from legbridge.mapping.plan_writer import write_plan
from legbridge.mapping.readers import read_plan
from legbridge.mapping.slip import (
    ApexState,
    SlipInputError,
    SpringMassParams,
    demo_plan,
    initial_apex_from_plan,
    make_policy,
    params_from_plan,
    plan_for_flat_formats,
    policy_from_plan,
    simulate,
)
from legbridge.mapping.slip.demo import demo_apex, demo_params, demo_policy


@pytest.fixture(scope="module")
def plan():
    return demo_plan()


def test_demo_cases_complete_with_invented_targets(plan):
    # The brief's invented targets: every case completes 2 s; peak stance force roughly 2.5-3 body
    # weights (checked loosely: 2.3-3.5); stance 0.15-0.27 s; forward speed about 1.5 m/s.
    params = params_from_plan(plan)
    assert plan.case_names == ("ground-0.06m", "ground-0.03m", "nominal", "ground+0.03m", "ground+0.06m")
    for c in plan.cases:
        assert plan.metadata["outcomes"][c.name]["status"] == "completed"
        assert c.duration_s == pytest.approx(2.0)
        peak = np.max(np.hypot(c.force_x_n, c.force_z_n)) / params.body_weight_n
        assert 2.3 < peak < 3.5
        edges = np.flatnonzero(np.diff(c.stance.astype(int)))
        runs = np.diff(edges)[0 if c.stance[edges[0] + 1] else 1 :: 2]  # stance runs [samples]
        assert runs.size >= 4
        assert np.all((runs / 500.0 > 0.15) & (runs / 500.0 < 0.27))
        # Ground force points away from the ground and along the leg (hip - foot): no pull.
        assert np.all(c.force_z_n >= 0.0)
    nominal = plan.case("nominal")
    assert np.mean(nominal.body_vx_m_s) == pytest.approx(1.5, abs=0.1)
    assert "INVENTED" in plan.metadata["description"]


def test_leg_length_and_angle_place_the_foot_on_the_ground_in_stance(plan):
    # Geometry of the convention foot = hip + l (sin a, -cos a): in stance the foot is on the ground.
    for c in plan.cases:
        foot_z = c.body_z_m - c.leg_length_m * np.cos(c.leg_angle_rad)
        np.testing.assert_allclose(foot_z[c.stance], c.ground_height_m, atol=1e-9)
        assert np.all(foot_z[~c.stance] > c.ground_height_m - 0.2)


def test_demo_is_deterministic(plan):
    assert demo_plan().sha256 == plan.sha256


def test_plan_round_trip_reproduces_cases(plan, tmp_path):
    # What a disturbance sweep does: read the plan back, rebuild model, policy and apex, re-simulate.
    path = write_plan(plan, tmp_path / "p.json")
    back = read_plan(path)
    params, policy, apex = params_from_plan(back), policy_from_plan(back), initial_apex_from_plan(back)
    assert params == demo_params() and apex == demo_apex()
    case = back.case("ground-0.03m")
    res = simulate(params, policy, apex, case.ground_height_m, 2.0, 500.0, name=case.name)
    np.testing.assert_allclose(res.trajectory.force_z_n, case.force_z_n, atol=1e-9)
    np.testing.assert_allclose(res.trajectory.leg_length_m, case.leg_length_m, atol=1e-12)
    csv = read_plan(write_plan(plan_for_flat_formats(plan), tmp_path / "p.csv"))
    assert csv.case_names == plan.case_names
    assert params_from_plan(csv) == params


def test_step_up_case_falls_and_is_reported():
    # Beyond the demo's range on purpose: with the demo policy a +0.08 m step-up falls.
    res = simulate(demo_params(), demo_policy(), demo_apex(), 0.08, 2.0, 500.0)
    assert res.outcome.status == "fell" and res.outcome.reason == "body moving backward"
    assert res.trajectory.time_s[-1] <= res.outcome.time_s < 2.0


def test_bad_inputs_are_refused_with_the_key():
    with pytest.raises(SlipInputError, match="stiffness_n_per_m.*> 0"):
        SpringMassParams(25.0, -1.0, 0.0, 0.7, 0.4)
    with pytest.raises(SlipInputError, match="min_leg_length_m"):
        SpringMassParams(25.0, 6000.0, 0.0, 0.7, 0.8)
    with pytest.raises(SlipInputError, match=r"policy.time_s\[2\]"):
        make_policy([0.0, 0.1, 0.1], [0.7] * 3, [0.2] * 3)
    with pytest.raises(SlipInputError, match="rate_hz"):
        simulate(demo_params(), demo_policy(), demo_apex(), 0.0, 1.0, 0.0)
    with pytest.raises(SlipInputError, match="vx_m_s"):
        simulate(demo_params(), demo_policy(), ApexState(0.0, 0.72, -1.0), 0.0, 1.0, 100.0)
    with pytest.raises(SlipInputError, match="model.spring_k.*one of"):
        SpringMassParams.from_dict({"spring_k": 1.0})
    with pytest.raises(ValueError, match="metadata.model"):
        params_from_plan(plan_without_model())


def plan_without_model():
    p = demo_plan(heights_m=(0.0,))
    return type(p)(path="x.json", sha256="", cases=p.cases, metadata={})
