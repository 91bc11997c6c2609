"""`legbridge translate` end to end: plan file in, targets file out, summary with caution text, exit codes."""

import json

import numpy as np

from legbridge.limits.cli import main
from legbridge.mapping.plan import Plan, ReducedTrajectory
from legbridge.mapping.plan_writer import write_plan
from legbridge.robots.library import library_path


def plan_file(tmp_path):
    t = np.linspace(0.0, 0.5, 101)
    stance = (t > 0.1) & (t < 0.3)
    s = np.clip((t - 0.1) / 0.2, 0, 1)
    l = np.where(stance, 0.72 - 0.05 * np.sin(np.pi * s), 0.72)
    a = 0.3 - 0.6 * t / 0.5
    fz = np.where(stance, 600 * np.sin(np.pi * s), 0.0)
    cases = (ReducedTrajectory("nominal", t, l, a, 0 * t, fz, stance),
             ReducedTrajectory("down", t, l, a, 0 * t, fz, stance, ground_height_m=-0.02))
    return write_plan(Plan("invented", "", cases), tmp_path / "plan.json")


def test_translate_command_writes_targets_and_cautions(tmp_path, capsys):
    plan = plan_file(tmp_path)
    out = tmp_path / "targets.csv"
    code = main(["translate", str(plan), "--robot", str(library_path("example-leg.toml")), "--rate", "500",
                 "--case", "down", "-o", str(out)])
    text = capsys.readouterr().out
    assert code == 0
    assert "1 case(s), 251 samples at 500 Hz, 0 flagged" in text
    assert "CAUTION:" in text and "safe" not in text.replace("safety", "")
    meta = json.loads(out.read_text().splitlines()[0][len("# legbridge-targets "):])
    assert meta["cases"] == ["down"] and meta["rate_hz"] == 500.0 and len(meta["plan"]["sha256"]) == 64


def test_translate_command_bad_input_exit_2_nothing_written(tmp_path, capsys):
    plan = plan_file(tmp_path)
    out = tmp_path / "targets.csv"
    robot = str(library_path("example-leg.toml"))
    assert main(["translate", str(plan), "--robot", robot, "--case", "nope", "-o", str(out)]) == 2
    assert "no case 'nope'" in capsys.readouterr().err
    assert main(["translate", str(tmp_path / "missing.json"), "--robot", robot, "-o", str(out)]) == 2
    assert main(["translate", str(plan), "--robot", robot, "--rate", "-5", "-o", str(out)]) == 2
    assert not out.exists()
    out.write_text("old")
    assert main(["translate", str(plan), "--robot", robot, "-o", str(out)]) == 2
    assert out.read_text() == "old"
    assert main(["translate", str(plan), "--robot", robot, "-o", str(out), "--force"]) == 0
