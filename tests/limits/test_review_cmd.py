"""``legbridge review``: outputs, exit codes, nothing written on bad input, no overwrite without --force.

Runs the real pipeline (plan reader, translation, checks, JSON, targets, report) on a short synthetic
SI plan for the invented example leg: one 0.3 s stance per case, the foot passing under the hip at
mid-stance with leg length 0.72 m and a vertical force hump of 150 N (nominal), 250 N (step-up) and
400 N (drop). Statics check (moment of a force about a joint, r x F; any statics text, e.g. Meriam and
Kraige, Engineering Mechanics: Statics, ch. 2): at mid-stance the knee torque is about F h, with h the
knee's distance from the hip-foot line: Heron's formula on the triangle (0.40 m thigh, 0.42 m shank,
0.72 m hip-foot) gives h = 0.1961 m, so 400 N needs about 78.4 N m against the knee's peak
0.9 * 12 * 0.12 N m/A * 40 A = 51.84 N m (the leg's own weight and inertia change this by < 2 %).
The reviews state a 1 s test (--duration 1): the cases are about peak torque, judged without the
heat of an endless repetition.
"""

from __future__ import annotations

import json
import math
import re
from pathlib import Path

import numpy as np
import pytest

from legbridge.limits.cautions import CAUTIONS
from legbridge.limits.verdict import Verdict
from legbridge.limits.cli import main
from legbridge.limits.review.report import SECTION_IDS
from legbridge.limits.checks.results import CheckSettings
from legbridge.limits.review.run import REPORT_HTML, REVIEW_JSON, TARGETS_FILE, run_review
from legbridge.robots.errors import OutputExistsError
from legbridge.robots.library import library_path

ROBOT = str(library_path("example-leg.toml"))
OUTPUTS = sorted([REVIEW_JSON, REPORT_HTML, TARGETS_FILE])

VERDICT_EXCEEDS = Verdict.EXCEEDS.words
VERDICT_NEAR = Verdict.NEAR.words
VERDICT_WITHIN = Verdict.WITHIN.words



def _case(name, peak_n, ground_height_m=0.0, n=61, stance_s=0.3):
    t = np.linspace(0.0, stance_s, n)
    s = np.sin(math.pi * t / stance_s)
    angle = 0.25 * np.cos(math.pi * t / stance_s)  # foot ahead at touchdown, under the hip at mid-stance
    fz = peak_n * s
    return {"name": name, "ground_height_m": ground_height_m, "columns": {
        "time_s": t.tolist(), "leg_length_m": (0.78 - 0.06 * s).tolist(), "leg_angle_rad": angle.tolist(),
        "force_x_n": (-fz * np.tan(angle)).tolist(), "force_z_n": fz.tolist(), "phase": ["stance"] * n}}


def _plan_file(path: Path, cases) -> str:
    doc = {"format": "legbridge.plan/1", "units": "si", "metadata": {"description": "invented test plan"},
           "cases": cases}
    path.write_text(json.dumps(doc))
    return str(path)


@pytest.fixture(scope="module")
def three_case_plan(tmp_path_factory):
    d = tmp_path_factory.mktemp("plan")
    return _plan_file(d / "plan.json", [_case("nominal", 150.0), _case("step-up", 250.0, 0.02), _case("drop", 400.0, -0.03)])


@pytest.fixture(scope="module")
def reviewed(three_case_plan, tmp_path_factory):
    out = tmp_path_factory.mktemp("review") / "out"
    import io
    from contextlib import redirect_stdout

    buf = io.StringIO()
    with redirect_stdout(buf):
        code = main(["review", three_case_plan, "--robot", ROBOT, "-o", str(out), "--rate", "200", "--duration", "1"])
    return code, out, buf.getvalue()


def test_review_with_a_violation_exits_1_and_writes_everything(reviewed):
    code, out, stdout = reviewed
    assert code == 1
    assert sorted(p.name for p in out.iterdir()) == OUTPUTS  # no staging or temporary file left
    doc = json.loads((out / REVIEW_JSON).read_text())
    verdicts = {c["name"]: c["verdict"] for c in doc["cases"]}
    assert verdicts == {"nominal": "within", "step-up": "near", "drop": "exceeds"}
    # statics at mid-stance (module docstring): knee torque about F h = 400 N * 0.1961 m = 78.4 N m
    drop = next(c for c in doc["cases"] if c["name"] == "drop")
    knee = [s for s in drop["segments"] if s["limit"] == "peak_torque" and s["joint"] == "knee" and s["severity"] == "exceeds"]
    assert len(knee) == 1
    s_, a_, b_ = (0.40 + 0.42 + 0.72) / 2, 0.40, 0.42
    h = 2 * math.sqrt(s_ * (s_ - a_) * (s_ - b_) * (s_ - 0.72)) / 0.72
    assert knee[0]["peak"] == pytest.approx(400.0 * h, rel=0.02)
    # peak torque 0.9 * 12 * 0.12 * 40 = 51.84 N m less the rotor-inertia torque J_r N qdd (a few per cent)
    assert 0.97 * 51.84 < knee[0]["allowed"] <= 51.84 + 1e-9


def test_report_sections_cases_and_verdicts_agree_with_the_json(reviewed, parse_html):
    _, out, _ = reviewed
    html = (out / REPORT_HTML).read_text()
    p = parse_html(html)
    assert [i for i in p.ids if i in SECTION_IDS] == list(SECTION_IDS)
    for case in ("nominal", "step-up", "drop"):
        assert f"case-{case}" in p.ids
    rows = p.tables["verdicts"]
    col = {n: i for i, n in enumerate(rows[0])}
    table = {r[0]: r[col["Verdict"]] for r in rows[1:]}
    assert table == {"nominal": VERDICT_WITHIN, "step-up": VERDICT_NEAR, "drop": VERDICT_EXCEEDS}
    sha = json.loads((out / REVIEW_JSON).read_text())["plan_sha256"]
    assert sha in html


def test_terminal_summary(reviewed):
    _, out, stdout = reviewed
    for line in ("nominal", "step-up", "drop"):
        assert re.search(rf"^\s+{re.escape(line)}\s", stdout, re.M)
    assert VERDICT_EXCEEDS in stdout and VERDICT_NEAR in stdout and VERDICT_WITHIN in stdout
    assert str(out / REPORT_HTML) in stdout
    assert "Worst findings" in stdout and "drop / knee / peak torque: exceeds" in stdout
    assert " ".join(CAUTIONS[0].split()[:6]) in " ".join(stdout.split())
    assert not re.search(r"\bsafe\b", stdout, re.I)


def test_within_plan_exits_0(tmp_path, capsys):
    plan = _plan_file(tmp_path / "easy.json", [_case("nominal", 150.0, n=31)])
    assert main(["review", plan, "--robot", ROBOT, "-o", str(tmp_path / "out"), "--rate", "100", "--duration", "1"]) == 0
    assert VERDICT_WITHIN in capsys.readouterr().out
    assert sorted(p.name for p in (tmp_path / "out").iterdir()) == OUTPUTS


@pytest.mark.parametrize("bad", ["broken-json", "missing-plan", "missing-robot", "margin", "rate", "both-demo-and-plan"])
def test_bad_input_exits_2_and_writes_nothing(tmp_path, capsys, three_case_plan, bad):
    out = tmp_path / "out"
    broken = tmp_path / "broken.json"
    broken.write_text('{"format": "legbridge.plan/1", "units": "si", "cases": [')
    args = {
        "broken-json": ["review", str(broken), "--robot", ROBOT],
        "missing-plan": ["review", str(tmp_path / "nope.json"), "--robot", ROBOT],
        "missing-robot": ["review", three_case_plan, "--robot", str(tmp_path / "nope.toml")],
        "margin": ["review", three_case_plan, "--robot", ROBOT, "--margin", "1.5"],
        "rate": ["review", three_case_plan, "--robot", ROBOT, "--rate", "-5"],
        "both-demo-and-plan": ["review", three_case_plan, "--demo", "--robot", ROBOT],
    }[bad]
    assert main(args + ["-o", str(out)]) == 2
    err = capsys.readouterr().err
    # progress lines may come first (plain lines: stderr is not a terminal here); the error is one line, last
    assert err.strip().splitlines()[-1].startswith("legbridge: error:") and "Traceback" not in err
    assert not out.exists()


def test_no_overwrite_without_force(reviewed, three_case_plan, capsys):
    _, out, _ = reviewed
    before = {p.name: p.read_bytes() for p in out.iterdir()}
    assert main(["review", three_case_plan, "--robot", ROBOT, "-o", str(out), "--rate", "200", "--duration", "1"]) == 2
    assert "--force" in capsys.readouterr().err
    assert {p.name: p.read_bytes() for p in out.iterdir()} == before


def test_force_overwrites_and_api_outcome(three_case_plan, tmp_path):
    out = tmp_path / "out"
    out.mkdir()
    (out / REPORT_HTML).write_text("old")
    (out / "notes.txt").write_text("the user's own file")
    with pytest.raises(OutputExistsError, match="report.html"):
        run_review(three_case_plan, ROBOT, CheckSettings(rate_hz=100.0, duration_s=1.0), out)
    seen = []
    res = run_review(three_case_plan, ROBOT, CheckSettings(rate_hz=100.0, duration_s=1.0), out, force=True, progress=seen.append)
    assert res.exit_code == 1 and [r.case for r in res.review.cases] == ["nominal", "step-up", "drop"]
    assert [r.verdict.words for r in res.review.cases] == [VERDICT_WITHIN, VERDICT_NEAR, VERDICT_EXCEEDS]
    assert (out / REPORT_HTML).read_text() != "old" and (out / "notes.txt").read_text() == "the user's own file"
    assert set(res.paths) == {"review", "targets", "report"} and all(p.is_file() for p in res.paths.values())
    assert any("checking case drop" in m for m in seen)


def test_demo_review(tmp_path, capsys):
    pytest.importorskip("legbridge.mapping.slip.demo")
    out = tmp_path / "demo"
    code = main(["review", "--demo", "-o", str(out), "--rate", "200"])
    assert code in (0, 1)
    names = sorted(p.name for p in out.iterdir())
    # the demo plan carries its open-loop policy, so the review sweeps the ground height as well
    assert names == sorted(OUTPUTS + ["demo-plan.json", "sweep.csv", "sweep.json"])
    assert 'id="sweep"' in (out / "report.html").read_text()
    assert json.loads((out / "sweep.json").read_text())["schema"].startswith("legbridge.sweep/")
    doc = json.loads((out / REVIEW_JSON).read_text())
    import hashlib

    assert doc["plan_sha256"] == hashlib.sha256((out / "demo-plan.json").read_bytes()).hexdigest()
    # the review reviews exactly the shipped example plan's bytes, whatever SciPy the machine has
    examples = Path(__file__).resolve().parents[2] / "examples" / "demo-run-plan.json"
    assert doc["plan_sha256"] == hashlib.sha256(examples.read_bytes()).hexdigest()
    # the demo is a biped running with alternating legs: both legs' joints are reviewed and the gait is shown
    assert doc["legs"] == ["left", "right"] and doc["gait"] == "alternating legs, left first"
    header = (out / "targets.csv").read_text().splitlines()[1].split(",")
    for name in ("left_hip", "left_knee", "right_hip", "right_knee"):
        assert f"{name}_position_rad" in header and f"{name}_current_a" in header
    assert "left_phase" in header and "right_phase" in header
    printed = capsys.readouterr().out
    assert "invented" in printed and "alternating legs, left first" in printed


def test_quiet_prints_no_progress_and_plain_lines_otherwise(tmp_path, capsys, three_case_plan, monkeypatch):
    # stderr is not a terminal under pytest: one plain line per step, no carriage returns (shown from
    # the start here; by default the first half second is silent, so a refusal prints one line only)
    monkeypatch.setattr("legbridge.limits.cli.progress.QUIET_START_S", 0.0)
    main(["review", three_case_plan, "--robot", ROBOT, "-o", str(tmp_path / "a"), "--no-sweep"])
    err = capsys.readouterr().err
    lines = err.strip().splitlines()
    assert any("checking case" in line for line in lines) and "\r" not in err
    assert all(line.startswith("legbridge: [") for line in lines)
    main(["review", three_case_plan, "--robot", ROBOT, "-o", str(tmp_path / "b"), "--no-sweep", "--quiet"])
    assert capsys.readouterr().err == ""


def test_sigterm_leaves_nothing_behind(tmp_path):
    # A review terminated (SIGTERM, as a process manager stops a job) in the middle of its work: exit
    # 130, one line, no output folder, no copy of the demo plan, no temporary file, no worker left.
    import signal
    import subprocess
    import sys
    import time

    out = tmp_path / "out"
    proc = subprocess.Popen([sys.executable, "-m", "legbridge.limits.cli", "review", "--demo", "-o", str(out)],
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    deadline = time.time() + 60
    while time.time() < deadline and not out.exists():  # wait until it has started writing its folder
        time.sleep(0.05)
    time.sleep(0.5)
    proc.send_signal(signal.SIGTERM)
    _, err = proc.communicate(timeout=60)
    assert proc.returncode == 130, err
    assert err.strip().splitlines()[-1] == "legbridge: interrupted; no output was written"
    assert not out.exists() and list(tmp_path.iterdir()) == []


def test_two_reviews_into_one_folder_do_not_both_claim_success(tmp_path):
    # Two processes reviewing into the same folder at once: one writes its outputs, the other is
    # refused with one line (exit 2) instead of replacing them; no lock or staging file is left.
    import subprocess
    import sys

    out = tmp_path / "out"
    cmd = [sys.executable, "-m", "legbridge.limits.cli", "review", "--demo", "-o", str(out), "--no-sweep", "--force", "--quiet"]
    procs = [subprocess.Popen(cmd, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True) for _ in range(2)]
    results = [p.communicate(timeout=120) + (p.returncode,) for p in procs]
    codes = sorted(r[2] for r in results)
    refused = [r for r in results if r[2] == 2]
    assert codes in ([1, 2], [1, 1]), codes  # [1, 1]: the second started after the first had finished
    for _, err, _ in refused:
        assert "another legbridge run is writing this folder" in err and len(err.strip().splitlines()) == 1
    names = sorted(p.name for p in out.iterdir())
    assert names == sorted(OUTPUTS + ["demo-plan.json"]), names


def test_a_full_disk_leaves_the_previous_review_whole(tmp_path, capsys, monkeypatch, three_case_plan):
    # A first review, then a second (--force) whose writing fails with ENOSPC on its third file: exit 2,
    # one line, and the folder holds the first review exactly (byte for byte), no staging left.
    import errno
    import hashlib

    out = tmp_path / "out"
    assert main(["review", three_case_plan, "--robot", ROBOT, "-o", str(out), "--no-sweep", "--quiet"]) in (0, 1)
    before = {p.name: hashlib.sha256(p.read_bytes()).hexdigest() for p in out.iterdir()}
    capsys.readouterr()
    real = Path.write_bytes
    calls = {"n": 0}

    def failing(self, data):
        calls["n"] += 1
        if calls["n"] == 3:
            raise OSError(errno.ENOSPC, "No space left on device", str(self))
        return real(self, data)

    monkeypatch.setattr(Path, "write_bytes", failing)
    code = main(["review", three_case_plan, "--robot", ROBOT, "-o", str(out), "--no-sweep", "--quiet", "--force",
                 "--margin", "0.2"])
    err = capsys.readouterr().err
    assert code == 2 and "No space left on device" in err and len(err.strip().splitlines()) == 1
    assert {p.name: hashlib.sha256(p.read_bytes()).hexdigest() for p in out.iterdir()} == before
