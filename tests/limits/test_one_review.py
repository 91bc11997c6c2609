"""One verdict, one review, one pipeline: the verdict rule on hand-made traces, a Review built from a
Robot made in code, a sweep over that Robot, provenance in every output, and a limit added as one
declaration reaching the terminal, the JSON and the report."""

from __future__ import annotations

import dataclasses
import json
import sys
from types import SimpleNamespace

import numpy as np
import pytest

from legbridge.limits import checks
from legbridge.limits.checks.base import PANEL_ANGLE, SCOPE_JOINT, Limit, ratio, trace
from legbridge.limits.checks.case import check_plan
from legbridge.limits.checks.results import CheckSettings, LimitSegment
from legbridge.limits.review.json_doc import review_to_json
from legbridge.limits.review.report import render_report
from legbridge.limits.review.review import assemble_review, build_review
from legbridge.limits.review.run import run_review
from legbridge.limits.review.text import review_lines
from legbridge.limits.verdict import Verdict, exit_status, rank, summarise, utilisation_text
from legbridge.mapping.slip.demo import demo_plan
from legbridge.robots import load_robot
from legbridge.robots.library import library_path

QUICK = CheckSettings(rate_hz=200.0, run_qps=False)


def _tr(limit, joint, u):
    u = np.asarray(u, dtype=float)
    return trace(limit, joint, "x", u, 1.0, u)


def _seg(sev):
    return LimitSegment("c", "hip", "peak_torque", sev, 0.0, 0.0, 0, 0, 1.0, 1.0, "N m", 1.0)


def test_verdict_rule_by_hand():
    # The rule of legbridge.limits.verdict: exceeds > not evaluated > near > within; within and near pass.
    assert [v.passes for v in Verdict] == [True, True, False, False]
    assert sorted(Verdict, key=lambda v: v.rank) == [Verdict.WITHIN, Verdict.NEAR, Verdict.NOT_EVALUATED, Verdict.EXCEEDS]
    traces = (_tr("peak_torque", "hip", [0.2, 0.7]), _tr("joint_speed", "knee", [0.1, np.nan]),
              _tr("voltage", "hip", [0.9, 0.95]))
    s = summarise("c", traces, (_seg(Verdict.NEAR),), ("a finding",))
    # a NaN sample counts as infinite (fail closed); a finding without an exceedance: not evaluated
    assert s.verdict == Verdict.NOT_EVALUATED and not s.passes
    assert s.worst.limit == "joint_speed" and s.worst.utilisation == np.inf
    assert s.per_limit == {"joint_speed": np.inf, "voltage": 0.95, "peak_torque": 0.7}
    assert summarise("c", traces, (_seg(Verdict.NEAR), _seg(Verdict.EXCEEDS)), ()).verdict == Verdict.EXCEEDS
    assert summarise("c", traces[:1], (_seg(Verdict.NEAR),), ()).verdict == Verdict.NEAR
    ok = summarise("c", traces[:1], (), ())
    assert ok.verdict == Verdict.WITHIN and ok.passes
    assert rank([ok, s, summarise("d", traces[:1], (_seg(Verdict.NEAR),), ())]) == (1, 2, 0)
    assert exit_status([ok]) == 0 and exit_status([ok, s]) == 1 and exit_status([]) == 1  # nothing reviewed fails


def test_utilisation_text_rounding():
    assert utilisation_text(1.025) == "102.5 %" and utilisation_text(1.00004) == "100.00 %"
    assert utilisation_text(float("inf")).startswith("not finite") and utilisation_text(float("nan")) == "not evaluated"


@pytest.fixture(scope="module")
def robot_in_code():
    """The lab demo robot as a program would build it: no file behind it (source and hash empty)."""
    return dataclasses.replace(load_robot("lab-biped-leg"), source="", sha256="")


def test_run_review_takes_a_robot_built_in_code(robot_in_code, tmp_path):
    plan = demo_plan((0.0,))
    run = run_review(plan, robot_in_code, CheckSettings(rate_hz=250.0), tmp_path / "out", sweep=None)
    doc = json.loads(run.paths["review"].read_text())
    assert doc["robot"] == "lab-biped-leg" and doc["robot_sha256"] is None
    assert [c["name"] for c in doc["cases"]] == ["nominal"] and run.exit_code in (0, 1)


def test_sweep_over_a_robot_built_in_code_does_not_depend_on_the_workers(robot_in_code):
    from legbridge.limits.sweep.runner import run_sweep

    plan = demo_plan((0.0,))
    settings = CheckSettings(rate_hz=250.0)
    (one,) = run_sweep([plan], [robot_in_code], (-0.02, 0.0), settings=settings, jobs=1)
    (two,) = run_sweep([plan], [robot_in_code], (-0.02, 0.0), settings=settings, jobs=2)
    assert one.offsets == two.offsets and one.window == two.window
    assert all(r.checked for r in one.offsets)


def test_provenance_in_the_review_and_the_targets(tmp_path):
    import cvxpy
    import numpy
    import scipy

    from legbridge.mapping.targets_export import read_targets_metadata

    plan_path = tmp_path / "plan.json"
    from legbridge.mapping.plan_writer import write_plan

    write_plan(demo_plan((0.0,)), plan_path)
    run = run_review(plan_path, "lab-biped-leg", CheckSettings(rate_hz=250.0), tmp_path / "out", sweep=None)
    doc = json.loads(run.paths["review"].read_text())
    prov = doc["provenance"]
    # reference: each package's own version attribute
    assert (prov["numpy"], prov["scipy"], prov["cvxpy"]) == (numpy.__version__, scipy.__version__, cvxpy.__version__)
    assert prov["python"] == "%d.%d.%d" % sys.version_info[:3]
    assert prov["qp_solver"].startswith("CLARABEL ") and prov["legbridge"] == doc["tool_version"]
    assert read_targets_metadata(run.paths["targets"])["provenance"] == prov


def _dummy_limit():
    """A made-up limit, as a new module of limits/checks would declare it: the hip and knee angles
    against +-0.5 rad (utilisation |q| / 0.5)."""
    def evaluate(ctx):
        return tuple(trace("dummy_stroke", j.name, "rad", np.abs(ctx.traj.q[:, i]), 0.5, ratio(np.abs(ctx.traj.q[:, i]), 0.5))
                     for i, j in ctx.joints())

    return Limit("dummy_stroke", "dummy stroke", "rad", SCOPE_JOINT, PANEL_ANGLE, 5, evaluate, caution="dummy stroke")


def test_a_declared_limit_reaches_every_output(monkeypatch, example_robot, make_traj):
    # Adding a limit is one declaration: the checker, the summary, the JSON and the report take it from
    # limits.checks.all_limits(). Knee at -1.0 rad: |q| / 0.5 = 200 % by hand.
    extended = checks.all_limits() + (_dummy_limit(),)
    monkeypatch.setattr(checks, "all_limits", lambda: extended)
    traj = make_traj(example_robot, np.tile([0.2, -1.0], (20, 1)), force=[0.0, 100.0], case="nominal")
    review = assemble_review(SimpleNamespace(path="plan.csv", sha256="", scaling=None, cases=(), case_names=(),
                                             metadata={}), example_robot, QUICK, check_plan([traj], example_robot, QUICK))
    c = review.cases[0]
    assert c.summary.worst.limit == "dummy_stroke" and c.summary.worst.utilisation == pytest.approx(2.0)
    assert "worst dummy stroke (knee) 200.0 %" in "\n".join(review_lines(review))
    doc = review_to_json(review)
    assert doc["cases"][0]["worst"]["dummy_stroke"] == pytest.approx(2.0)
    assert "dummy_stroke" in [x["name"] for x in doc["limits"]]
    assert "dummy stroke" in render_report(review)


def test_build_review_notes_a_plan_without_policy(tmp_path):
    from legbridge.mapping.slip import plan_for_flat_formats

    review = build_review(plan_for_flat_formats(demo_plan((0.0,))), str(library_path("lab-biped-leg.toml")),
                          CheckSettings(rate_hz=250.0, run_qps=False))
    assert review.sweep is None and "no open-loop policy" in review.sweep_note
    assert "no open-loop policy" in "\n".join(review_lines(review))


def test_every_verdict_has_a_report_style():
    # the report marks verdicts by CSS class (Verdict.css_class); each needs a rule in the stylesheet
    from importlib import resources

    css = (resources.files("legbridge.limits.review.report") / "style.css").read_text(encoding="utf-8")
    for v in Verdict:
        assert f".{v.css_class} " in css, v
