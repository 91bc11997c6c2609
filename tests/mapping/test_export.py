"""Target export: the files parse with general-purpose readers (csv, json, numpy) and carry metadata."""

import csv
import hashlib
import json

import numpy as np
import pytest

from legbridge.mapping.plan import Plan, ReducedTrajectory, Scaling
from legbridge.mapping.targets_export import TargetsExportError, read_targets_metadata, write_targets
from legbridge.robots.errors import OutputFolderError
from legbridge.mapping.translate import translate_plan
from legbridge.robots.errors import OutputExistsError


def small_plan():
    t = np.linspace(0.0, 0.2, 41)
    stance = t < 0.12
    l = np.where(stance, 0.72 - 0.04 * np.sin(np.pi * t / 0.12), 0.72)
    a = np.linspace(0.25, -0.25, 41)
    fz = np.where(stance, 600 * np.sin(np.pi * t / 0.12), 0.0)
    cases = (ReducedTrajectory("nominal", t, l, a, 0 * t, fz, stance),
             ReducedTrajectory("step, down", t, np.where(t > 0.1, 0.9, l), a, 0 * t, fz, stance, ground_height_m=-0.02))
    sha = hashlib.sha256(b"invented plan").hexdigest()
    return Plan("invented-plan.json", sha, cases, scaling=Scaling(0.72, 22.8, 9.81, "robot file"))


@pytest.fixture(scope="module")
def translated(example_robot):
    plan = small_plan()
    return plan, translate_plan(plan, example_robot, rate_hz=500.0)


def test_csv_parses_with_the_csv_module(tmp_path, translated, example_robot):
    plan, trajs = translated
    out = write_targets(trajs, tmp_path / "t.csv", plan=plan, robot=example_robot, rate_hz=500.0)
    lines = out.read_text().splitlines()
    meta = json.loads(lines[0][len("# legbridge-targets "):])
    rows = list(csv.reader(lines[1:]))
    header, body = rows[0], rows[1:]
    assert header[:3] == ["case", "time_s", "hip_position_rad"]
    assert header[2:7] == ["hip_position_rad", "hip_velocity_rad_s", "hip_torque_nm", "hip_motor_position_rad", "hip_current_a"]
    assert header[-1] == "flags" and len(header) == 2 + 10 + 1
    assert len(body) == sum(t.n_samples for t in trajs)
    assert {r[0] for r in body} == {"nominal", "step, down"}  # the comma survives quoting
    first = [r for r in body if r[0] == "step, down"]
    np.testing.assert_allclose([float(r[2]) for r in first], trajs[1].q[:, 0], rtol=1e-11, atol=1e-12)
    assert meta["plan"]["sha256"] == plan.sha256 and meta["robot"]["sha256"] == example_robot.sha256
    assert meta["rate_hz"] == 500.0 and meta["cases"] == ["nominal", "step, down"]
    assert meta["units"]["knee_torque_nm"] == "N m"
    assert meta["flag_counts"]["step, down"]["pose out of reach"] > 0
    assert meta["flag_counts"]["nominal"]["any"] == 0
    assert meta["scaling"]["length_m"] == 0.72
    # the base residual summary is the largest |component| of the translation's residual wrench
    res = meta["base_residual"]["nominal"]
    assert res["max_force_z_n"] == pytest.approx(float(np.max(np.abs(trajs[0].base_residual[:, 1]))))
    assert res["max_moment_nm"] == pytest.approx(float(np.max(np.abs(trajs[0].base_residual[:, 2]))))
    assert read_targets_metadata(out) == meta


def test_npz_and_json_hold_the_same_numbers(tmp_path, translated, example_robot):
    plan, trajs = translated
    npz = write_targets(trajs, tmp_path / "t.npz", plan=plan, robot=example_robot, rate_hz=500.0)
    js = write_targets(trajs, tmp_path / "t.json", plan=plan, robot=example_robot, rate_hz=500.0)
    with np.load(npz, allow_pickle=False) as z:
        sel = z["case"] == "nominal"
        np.testing.assert_array_equal(z["knee_current_a"][sel], trajs[0].current_a[:, 1])
        np.testing.assert_array_equal(z["flags"][~sel], trajs[1].flags)
        meta = json.loads(str(z["metadata_json"]))
    doc = json.loads(js.read_text())
    assert doc["metadata"] == meta
    assert doc["cases"][1]["case"] == "step, down"
    np.testing.assert_array_equal(doc["cases"][0]["data"]["hip_motor_position_rad"], trajs[0].motor_position_rad[:, 0])
    assert meta["tool_version"]


def test_existing_file_is_kept_unless_forced(tmp_path, translated, example_robot):
    plan, trajs = translated
    p = tmp_path / "t.csv"
    p.write_text("keep me")
    with pytest.raises(OutputExistsError, match="exists"):
        write_targets(trajs, p, plan=plan, robot=example_robot, rate_hz=500.0)
    assert p.read_text() == "keep me"
    write_targets(trajs, p, plan=plan, robot=example_robot, rate_hz=500.0, force=True)
    assert p.read_text().startswith("# legbridge-targets ")
    assert [x.name for x in tmp_path.iterdir()] == ["t.csv"]  # no temporary file left behind


def test_bad_requests_are_refused(tmp_path, translated, example_robot):
    plan, trajs = translated
    with pytest.raises(TargetsExportError, match="extension"):
        write_targets(trajs, tmp_path / "t.txt", plan=plan, robot=example_robot, rate_hz=500.0)
    with pytest.raises(TargetsExportError, match="another rate"):
        write_targets(trajs, tmp_path / "t.csv", plan=plan, robot=example_robot, rate_hz=1000.0)
    with pytest.raises(OutputFolderError, match="folder"):
        write_targets(trajs, tmp_path / "nope" / "t.csv", plan=plan, robot=example_robot, rate_hz=500.0)
    assert list(tmp_path.iterdir()) == []
