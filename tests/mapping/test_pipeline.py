"""The one read-and-translate path: prepare() on a Plan, a file, a Robot built in code; warnings."""

import dataclasses

import numpy as np
import pytest

from legbridge.mapping.pipeline import actuator_jumps, check_rate, prepare
from legbridge.mapping.plan_writer import write_plan
from legbridge.mapping.slip.demo import demo_plan
from legbridge.robots.errors import UsageError
from legbridge.robots.library import as_robot


def test_a_plan_object_and_its_file_give_the_same_targets(tmp_path):
    plan = demo_plan((0.0,))
    path = write_plan(plan, tmp_path / "p.json")
    robot = dataclasses.replace(as_robot("lab-biped-leg"), source="", sha256="")  # built in code
    a = prepare(plan, robot, rate_hz=250.0).trajectories[0]
    b = prepare(path, "lab-biped-leg", rate_hz=250.0).trajectories[0]
    np.testing.assert_allclose(a.q, b.q, atol=1e-12)
    np.testing.assert_allclose(a.tau, b.tau, atol=1e-9)


def test_a_jumping_policy_is_a_warning():
    # the demo's -0.06 m case restarts its actuator stroke mid-swing: a 7.7 mm step between two
    # samples (its neighbours' steps are a few micrometres); the nominal case has none
    plan = demo_plan((-0.06, 0.0))
    warnings = actuator_jumps(plan)
    assert len(warnings) == 1 and "'ground-0.06m'" in warnings[0] and "7.68 mm" in warnings[0]


@pytest.mark.parametrize("bad", [0.0, -5.0, float("nan"), float("inf"), "fast", True])
def test_rate_is_checked_once(bad):
    with pytest.raises(UsageError, match="rate_hz"):
        check_rate(bad)


def test_a_request_that_would_not_fit_is_refused_before_any_work(monkeypatch):
    # The estimate by hand (mapping.pipeline constants): the invented demo, 5 cases x 2 s at 10 kHz
    # on the four-joint biped: 0.3 GB + 4 x (300 B x 5 x 20,001 + 1500 B x 20,001) = 0.540 GB.
    import pytest

    from legbridge.mapping.pipeline import estimate_memory_bytes, prepare
    from legbridge.mapping.slip.demo import shipped_demo_run_plan
    from legbridge.robots.errors import UsageError

    assert estimate_memory_bytes([20001] * 5, 4) == pytest.approx(0.3e9 + 4 * (300 * 5 * 20001 + 1500 * 20001))
    monkeypatch.setenv("LEGBRIDGE_MEMORY_LIMIT_MB", "500")
    with pytest.raises(UsageError) as err:
        prepare(shipped_demo_run_plan(), "lab-biped", rate_hz=10000.0)
    text = str(err.value)
    assert "2 s at 10000 Hz" in text and "20001 samples" in text and "lower --rate" in text
    monkeypatch.setenv("LEGBRIDGE_MEMORY_LIMIT_MB", "100000")
    assert prepare(shipped_demo_run_plan(), "lab-biped", rate_hz=200.0).trajectories
