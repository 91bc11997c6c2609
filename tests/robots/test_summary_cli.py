"""Envelope corners by hand (standard DC motor model, Hughes and Drury, *Electric Motors and Drives*,
ch. 3: V = R I + Ke w, T = Kt I) and the ``legbridge robot`` command line.
"""

from __future__ import annotations

import subprocess
import sys

import pytest

from legbridge.limits.cli import main
from legbridge.robots import load_robot
from legbridge.robots.library import library_names, library_path, resolve_robot
from legbridge.robots.summary import envelope_corners, robot_summary


def test_envelope_corners_by_hand(example_robot):
    # example hip: Kt = Ke = 0.12, R = 0.25, V = 48, I_pk = 40, N = 10, eta = 0.9, w_max = 400 rad/s
    c = {(k.quadrant, k.label): k for k in envelope_corners(example_robot.joint("hip").actuator)}
    q1 = c[("Q1", "peak torque ends (voltage limit)")]
    assert q1.joint_speed_rad_s == pytest.approx((48 - 0.25 * 40) / 0.12 / 10)   # 31.67 rad/s
    assert q1.joint_torque_nm == pytest.approx(0.9 * 10 * 0.12 * 40)             # 43.2 N m
    nl = c[("Q1", "no-load speed")]
    assert nl.joint_speed_rad_s == pytest.approx(48 / 0.12 / 10) and nl.joint_torque_nm == pytest.approx(0, abs=1e-9)
    # braking (back-driven) torque = N Kt I_pk / eta, up to the 400 rad/s motor limit
    q2 = c[("Q2", "braking torque at the speed limit")]
    assert q2.joint_speed_rad_s == pytest.approx(-40.0) and q2.joint_torque_nm == pytest.approx(10 * 0.12 * 40 / 0.9)
    q3 = c[("Q3", "peak torque ends (voltage limit)")]
    assert (q3.joint_speed_rad_s, q3.joint_torque_nm) == pytest.approx((-q1.joint_speed_rad_s, -43.2))
    q4 = c[("Q4", "braking torque at the speed limit")]
    assert (q4.joint_speed_rad_s, q4.joint_torque_nm) == pytest.approx((40.0, -10 * 0.12 * 40 / 0.9))


def test_envelope_corner_when_voltage_cannot_drive_peak_current(example_robot):
    from dataclasses import replace

    # R I_pk = 0.25 * 400 = 100 V > 48 V: the torque at standstill is the stall torque eta N Kt V / R
    act = replace(example_robot.joint("hip").actuator, peak_current_a=400.0, continuous_current_a=12.0)
    q1 = envelope_corners(act)[0]
    assert q1.joint_speed_rad_s == 0.0 and q1.joint_torque_nm == pytest.approx(0.9 * 10 * 0.12 * 48 / 0.25)


def test_summary_mentions_derived_limits(example_robot):
    text = robot_summary(example_robot)
    for phrase in ("peak joint torque 43.2 N m", "no-load joint speed 40.00 rad/s", "reflected rotor inertia N^2 J 0.006",
                   "stall torque", "Q4", "thermal: one-node", "warnings: none"):
        assert phrase in text, phrase


def test_resolver():
    assert resolve_robot("lab-biped-leg") == library_path("lab-biped-leg.toml")
    assert resolve_robot("lab-biped-leg.toml") == library_path("lab-biped-leg.toml")
    with pytest.raises(FileNotFoundError, match="no such file or bundled robot.*lab-biped-leg"):
        resolve_robot("no-such-leg")


@pytest.mark.parametrize("name", library_names())
def test_cli_show_every_library_file(capsys, name):
    assert main(["robot", "show", name[:-5]]) == 0
    out = capsys.readouterr().out
    assert "max joint speed" in out and "peak joint torque" in out and "CAUTION:" in out
    assert " safe" not in out.replace("safety", "")


def test_cli_show_path(capsys):
    assert main(["robot", "show", str(library_path("example-leg.toml"))]) == 0
    assert "robot example-leg" in capsys.readouterr().out


def test_cli_bad_file_exits_2_with_one_line(tmp_path):
    bad = tmp_path / "bad.toml"
    bad.write_text("[robot]\nname = 3\n")
    res = subprocess.run([sys.executable, "-m", "legbridge.limits.cli", "robot", "show", str(bad)],
                         capture_output=True, text=True, timeout=60)
    assert res.returncode == 2
    assert res.stdout == ""
    lines = res.stderr.strip().splitlines()
    assert len(lines) == 1 and "robot.name" in lines[0] and "Traceback" not in res.stderr


def test_cli_export(tmp_path, capsys):
    out = tmp_path / "leg.urdf"
    assert main(["robot", "export-urdf", "lab-biped-leg", "-o", str(out)]) == 0
    first = out.read_text()
    assert first.startswith("<?xml") and 'joint name="knee"' in first
    # no overwrite without --force; nothing else written
    assert main(["robot", "export-urdf", "example-leg", "-o", str(out)]) == 2
    assert "pass --force" in capsys.readouterr().err
    assert out.read_text() == first
    assert main(["robot", "export-urdf", "example-leg", "-o", str(out), "--force"]) == 0
    assert "example-leg" in out.read_text()
    assert sorted(p.name for p in tmp_path.iterdir()) == ["leg.urdf"]  # no temp files left


def test_cli_export_refuses_input_and_missing_folder(tmp_path, capsys):
    src = tmp_path / "r.toml"
    src.write_text(library_path("example-leg.toml").read_text())
    assert main(["robot", "export-urdf", str(src), "-o", str(src), "--force"]) == 2
    assert "refusing to overwrite an input file" in capsys.readouterr().err
    assert load_robot(src).name == "example-leg"
    assert main(["robot", "export-urdf", str(src), "-o", str(tmp_path / "no" / "x.urdf")]) == 2
    assert "output folder does not exist" in capsys.readouterr().err
