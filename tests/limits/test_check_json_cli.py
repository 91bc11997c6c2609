"""JSON review against its documented schema (limits/review/json_doc.py docstring), atomic writing, and
the `legbridge check` exit codes (README: 0 within, 1 exceeded, 2 bad input)."""

import json
import re
from dataclasses import replace
from types import SimpleNamespace

import numpy as np
import pytest

from legbridge.limits import cli
from legbridge.limits.cautions import CAUTIONS
from legbridge.limits.checks.case import check_plan
from legbridge.limits.checks.results import CheckSettings
from legbridge.limits.cli import check as check_cmd
from legbridge.limits.review.json_doc import SCHEMA_VERSION, review_to_json, write_json
from legbridge.limits.review.review import assemble_review
from legbridge.mapping.pipeline import Prepared
from legbridge.robots.errors import OutputExistsError

SEGMENT_KEYS = {"joint", "limit", "severity", "t_start_s", "t_end_s", "i_start", "i_end", "peak", "allowed", "unit", "utilisation"}


def _cases(robot, make_traj):
    n = 100
    q = np.tile([0.2, -1.0], (n, 1))
    good = make_traj(robot, q, force=[0.0, 100.0], case="nominal")
    bad = make_traj(robot, q, force=[0.0, 100.0], case="drop")
    qbad = q.copy()
    qbad[40:45, 1] = robot.joints[1].upper_rad + 0.01  # past the knee's hard stop
    bad = make_traj(robot, qbad, force=[0.0, 100.0], case="drop")
    return good, bad


def test_json_matches_documented_schema_and_is_written_atomically(example_robot, make_traj, tmp_path):
    reviews = check_plan(_cases(example_robot, make_traj), example_robot, CheckSettings(run_qps=True))
    plan = SimpleNamespace(path="plan.csv", sha256="ab" * 32)
    doc = review_to_json(assemble_review(plan, example_robot, CheckSettings(), reviews))
    assert doc["schema"] == SCHEMA_VERSION and doc["plan_sha256"] == "ab" * 32
    assert doc["robot_sha256"] == example_robot.sha256 and isinstance(doc["tool_version"], str)
    assert doc["cautions"] == list(CAUTIONS)
    names = [c["name"] for c in doc["cases"]]
    assert names == ["nominal", "drop"] and [r["case"] for r in doc["ranking"]] == ["drop", "nominal"]
    drop = doc["cases"][1]
    assert drop["passed"] is False and drop["verdict"] == "exceeds" and doc["cases"][0]["passed"] is True
    assert all(set(s) == SEGMENT_KEYS for c in doc["cases"] for s in c["segments"])
    ex = [s for s in drop["segments"] if s["severity"] == "exceeds"]
    assert [(s["joint"], s["limit"], s["i_start"], s["i_end"]) for s in ex] == [("knee", "joint_range", 40, 44)]
    assert ex[0]["t_start_s"] == pytest.approx(0.040) and ex[0]["t_end_s"] == pytest.approx(0.044)
    assert all(isinstance(v, float) for v in drop["worst"].values() if v is not None)
    assert drop["qp"]["force_feasibility"]["status"] == "optimal"
    out = tmp_path / "review.json"
    write_json(doc, out)
    assert json.loads(out.read_text()) == doc
    assert sorted(p.name for p in tmp_path.iterdir()) == ["review.json"]  # no temporary file left
    with pytest.raises(OutputExistsError, match="--force"):
        write_json(doc, out)
    write_json(doc, out, force=True)


def test_non_finite_numbers_become_null(example_robot, make_traj):
    traj = make_traj(example_robot, np.tile([0.0, -1.0], (3, 1)), force=[[10.0, 0.0]] * 3)  # friction util inf
    plan = SimpleNamespace(path="plan.csv", sha256="")
    doc = review_to_json(assemble_review(plan, example_robot, None, check_plan([traj], example_robot, CheckSettings(run_qps=False))))
    json.dumps(doc, allow_nan=False)
    assert doc["cases"][0]["worst"]["friction_cone"] is None


def _run(monkeypatch, capsys, trajs, robot, argv):
    plan = SimpleNamespace(path="plan.csv", sha256="00", scaling=None)
    monkeypatch.setattr(check_cmd, "prepare", lambda p, r, rate_hz, **kw: Prepared(plan, robot, tuple(trajs), rate_hz))
    monkeypatch.setattr("legbridge.robots.library.resolve_robot", lambda r: r)
    code = cli.main(["check", "plan.csv", "--robot", "robot.toml"] + argv)
    return code, capsys.readouterr()


def test_exit_codes_and_summary(monkeypatch, capsys, example_robot, make_traj, tmp_path):
    good, bad = _cases(example_robot, make_traj)
    code, cap = _run(monkeypatch, capsys, [good], example_robot, [])
    assert code == 0 and "within the modelled limits" in cap.out and "CAUTION:" in cap.out
    assert not re.search(r"\bsafe\b", cap.out, re.I)
    out = tmp_path / "r.json"
    code, cap = _run(monkeypatch, capsys, [good, bad], example_robot, ["--json", str(out)])
    assert code == 1 and "exceeds a modelled limit" in cap.out and "CAUTION:" in cap.out
    assert json.loads(out.read_text())["cases"][1]["passed"] is False
    code, cap = _run(monkeypatch, capsys, [good], example_robot, ["--json", str(out)])  # exists, no --force
    assert code == 2 and "--force" in cap.err
    code, cap = _run(monkeypatch, capsys, [good], example_robot, ["--margin", "1.5"])
    assert code == 2 and "margin" in cap.err


def test_missing_robot_file_exits_2(tmp_path, capsys):
    code = cli.main(["check", str(tmp_path / "p.csv"), "--robot", str(tmp_path / "missing.toml")])
    assert code == 2 and "missing.toml" in capsys.readouterr().err


def test_rank_cases_orders_worst_first(example_robot, make_traj):
    good, bad = _cases(example_robot, make_traj)
    review = assemble_review(SimpleNamespace(path="plan.csv", sha256=""), example_robot, None,
                             check_plan([good, bad], example_robot, CheckSettings(run_qps=False)))
    ranks = review.ranked
    assert [r.case for r in ranks] == ["drop", "nominal"]
    w = ranks[0].summary.worst
    assert w.limit == "joint_range" and w.joint == "knee" and w.utilisation > 1


def test_check_and_review_print_the_same_utilisation(example_robot, make_traj, monkeypatch, capsys):
    # one formatter (limits.verdict.utilisation_text) for every output: the check summary, the JSON
    # value and the report text agree on the worst finding's utilisation
    from legbridge.limits.review.report import render_report
    from legbridge.limits.verdict import utilisation_text

    good, bad = _cases(example_robot, make_traj)
    code, cap = _run(monkeypatch, capsys, [good, bad], example_robot, [])
    review = assemble_review(SimpleNamespace(path="plan.csv", sha256="00", scaling=None, cases=(), case_names=(),
                                             metadata={}), example_robot, CheckSettings(),
                             check_plan([good, bad], example_robot, CheckSettings()))
    text = utilisation_text(review.case("drop").summary.worst.utilisation)
    assert text in cap.out and text.replace(" %", "&nbsp;%") in render_report(review)
