"""MODIFIED targets from the nearest-motion QP: marked as modified, the QP's positions, velocities
within the speed limit by construction, and refused when a QP did not solve (fail closed)."""

import csv
import dataclasses
import json

import numpy as np
import pytest

from legbridge.limits.checks.case import check_plan
from legbridge.limits.review.corrected_targets import CSV_PREFIX, CorrectedTargetsError, write_corrected_targets
from legbridge.limits.checks.results import CheckSettings
from legbridge.limits.review.review import assemble_review
from legbridge.mapping.slip.demo import demo_plan
from legbridge.mapping.translate import translate_plan
from legbridge.robots import load_robot
from legbridge.robots.actuator_limits import max_joint_speed


@pytest.fixture(scope="module")
def reviewed():
    robot = load_robot("lab-biped-leg")
    plan = demo_plan((-0.06,))
    settings = CheckSettings(rate_hz=500.0)
    review = assemble_review(plan, robot, settings, check_plan(translate_plan(plan, robot, rate_hz=500.0), robot, settings))
    return plan, robot, review


def test_file_is_marked_and_holds_the_qp_motion(tmp_path, reviewed):
    plan, robot, review = reviewed
    reviews = review.cases
    out = write_corrected_targets(review, tmp_path / "targets-modified.csv")
    lines = out.read_text().splitlines()
    assert lines[0].startswith(CSV_PREFIX)
    meta = json.loads(lines[0][len(CSV_PREFIX):])
    assert "MODIFIED" in meta["content"] and "NOT the reviewed plan" in meta["content"]
    assert meta["derived_from"]["plan"]["sha256"] == plan.sha256
    rows = list(csv.DictReader(lines[1:]))
    q = np.array([float(r["hip_position_rad"]) for r in rows])
    np.testing.assert_allclose(q, reviews[0].motion_qp.values["q_corrected_rad"][:, 0], rtol=1e-11, atol=1e-12)
    # forward differences at the export rate: within the joint speed limit (the QP's own constraint,
    # to its solver tolerance)
    for j, name in enumerate(robot.joint_names):
        v = np.array([float(r[f"{name}_velocity_rad_s"]) for r in rows])
        assert np.max(np.abs(v)) <= max_joint_speed(robot.joint(name)).value * (1 + 1e-6)


def test_unmarked_name_and_failed_qp_are_refused(tmp_path, reviewed):
    plan, robot, review = reviewed
    reviews = review.cases
    with pytest.raises(CorrectedTargetsError, match="containing 'modified'"):
        write_corrected_targets(review, tmp_path / "targets.csv")
    failed = dataclasses.replace(reviews[0], motion_qp=dataclasses.replace(reviews[0].motion_qp, ok=False, status="infeasible"))
    with pytest.raises(CorrectedTargetsError, match="did not solve.*infeasible"):
        write_corrected_targets(dataclasses.replace(review, cases=(failed,)), tmp_path / "x-modified.csv")
    assert not (tmp_path / "x-modified.csv").exists()
