"""Disturbance sweeps end to end (limits.sweep.runner, limits.cli.sweep): simulate, translate and
check per offset; determinism across worker counts and on Dask; falls closing the window; exit codes.

Plans here are the invented demo scenario (legbridge.mapping.slip.demo) cut to 0.8 s (two hops) to
keep the tests short; the robot is the bundled lab-biped leg, or a copy with ample drive limits so
that only the reduced model can close the window.
"""

import json
import math
import re

import numpy as np
import pytest

from legbridge.limits import cli
from legbridge.limits.checks.results import CheckSettings
from legbridge.limits.sweep.model import END_FALL, NOT_CHECKED
from legbridge.limits.sweep.runner import run_sweep
from legbridge.mapping.plan_writer import write_plan
from legbridge.mapping.slip import simulate_cases
from legbridge.mapping.slip.demo import demo_apex, demo_params, demo_policy
from legbridge.robots.library import library_path

DURATION_S = 0.8  # two hops of the demo gait (apexes at 0.37 s and 0.74 s)
G = 9.81


@pytest.fixture(scope="module")
def short_plan():
    """The demo policy on the nominal ground for 0.8 s, as the simulator wrote it (invented data)."""
    return simulate_cases(demo_params(), demo_policy(), demo_apex(), [0.0, -0.04], duration_s=DURATION_S, rate_hz=500.0,
                          path="<short demo plan>")


@pytest.fixture(scope="module")
def short_plan_file(short_plan, tmp_path_factory):
    p = tmp_path_factory.mktemp("sweep") / "short-plan.json"
    write_plan(short_plan, p)
    return p


@pytest.fixture(scope="module")
def ample_robot(tmp_path_factory):
    """The lab-biped leg with drive currents, bus voltage, cooling and ranges far above what the gait asks
    (so the hardware check passes and only the reduced model can close the window)."""
    text = library_path("lab-biped-leg.toml").read_text()
    text = re.sub(r"peak_current_a = [0-9.]+", "peak_current_a = 2000.0", text)
    text = re.sub(r"continuous_current_a = [0-9.]+", "continuous_current_a = 1000.0", text)
    text = re.sub(r"bus_voltage_v = [0-9.]+", "bus_voltage_v = 2000.0", text)
    text = re.sub(r"(?m)^(housing_)?thermal_resistance_k_per_w = [0-9.]+", r"\1thermal_resistance_k_per_w = 0.001", text)  # cold
    text = text.replace('name = "lab-biped-leg"', 'name = "ample-leg"').replace("ground_friction = 0.7", "ground_friction = 5.0")
    p = tmp_path_factory.mktemp("robot") / "ample-leg.toml"
    p.write_text(text)
    return p


SETTINGS = CheckSettings(rate_hz=500.0)


def test_zero_offset_reproduces_the_plans_nominal_case(short_plan_file):
    """Reference: the plan file itself. Its 'nominal' case, read back from JSON, must be reproduced
    sample for sample by the sweep's zero offset (same model, policy and initial apex; the simulator
    is deterministic). Independent check of the apex height: in ballistic flight z + vz^2 / (2 g) is
    constant and equals the apex height (energy conservation; any mechanics text, e.g. Halliday,
    Resnick & Walker, Fundamentals of Physics, projectile motion; from memory)."""
    from legbridge.mapping.readers import read_plan

    plan = read_plan(short_plan_file)
    ref = plan.case("nominal")
    (sw,) = run_sweep([short_plan_file], ["lab-biped-leg"], [0.0], settings=SETTINGS, jobs=1, keep_trajectories=True)
    (r,) = sw.offsets
    assert r.offset_m == 0.0 and r.completed and r.checked
    tr = r.trajectory
    assert tr.n_samples == ref.n_samples
    for name in ("time_s", "leg_length_m", "leg_angle_rad", "force_x_n", "force_z_n", "body_z_m", "body_vx_m_s"):
        np.testing.assert_allclose(getattr(tr, name), getattr(ref, name), rtol=0, atol=1e-9, err_msg=name)
    np.testing.assert_array_equal(tr.stance, ref.stance)
    # apexes reached after the initial one: each equals z + vz^2/(2g) of the plan's flight samples just before it
    z, vz, t = np.asarray(ref.body_z_m), np.asarray(ref.body_vz_m_s), np.asarray(ref.time_s)
    flight_up = ~np.asarray(ref.stance) & (vz > 0)
    for t_ap, z_ap in zip(r.apex_time_s[1:], r.apex_z_m[1:]):
        k = np.flatnonzero(flight_up & (t < t_ap) & (t > t_ap - 0.03))
        assert k.size > 3
        np.testing.assert_allclose(z[k] + vz[k] ** 2 / (2 * G), z_ap, atol=1e-6)
    assert len(r.apex_z_m) == 3  # initial + apexes at about 0.37 s and 0.74 s
    e = sw.apex_errors[0]
    assert e.n_paired == 2 and e.rms_dz_m == 0.0 and e.rms_dvx_m_s == 0.0


def test_results_do_not_depend_on_the_number_of_jobs(short_plan):
    """Determinism (issue 6): 1 job in this process and 2 worker processes give equal results, sorted by offset."""
    hs = [0.02, -0.03, 0.0]
    (a,) = run_sweep([short_plan], ["lab-biped-leg"], hs, settings=SETTINGS, jobs=1)
    (b,) = run_sweep([short_plan], ["lab-biped-leg"], hs, settings=SETTINGS, jobs=2)
    assert a.offsets_m == (-0.03, 0.0, 0.02)
    assert a.offsets == b.offsets and a.window == b.window and a.apex_errors == b.apex_errors
    assert all(r.checked and r.worst_limit for r in a.offsets)


def test_dask_local_cluster_gives_the_local_results(short_plan):
    """The same sweep on a real dask.distributed LocalCluster (2 worker processes) equals the local run."""
    distributed = pytest.importorskip("dask.distributed")
    hs = [-0.02, 0.0, 0.03]
    (local,) = run_sweep([short_plan], ["lab-biped-leg"], hs, settings=SETTINGS, jobs=1)
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None) as cluster:
        (remote,) = run_sweep([short_plan], ["lab-biped-leg"], hs, settings=SETTINGS, scheduler=cluster.scheduler_address)
    assert remote.offsets == local.offsets and remote.window == local.window


def test_a_case_that_must_fall_is_reported_and_closes_the_window(short_plan, ample_robot):
    """Geometry: at the initial apex (hip at z = 0.72 m) the foot, held at the policy's apex leg angle
    a0 = 0.457 rad with the actuator at l0 = 0.70 m, is at z - l0 cos(a0) = 0.092 m. Ground at +0.15 m
    is above the foot, so the run must end at t = 0 ('no foot clearance at apex'): a fall. Ground at
    -0.02 m and 0 are flat hops of the demo gait that complete (checked on a leg with ample limits)."""
    assert 0.72 - 0.70 * math.cos(0.457) < 0.15
    (sw,) = run_sweep([short_plan], [str(ample_robot)], [-0.02, 0.0, 0.15], settings=SETTINGS, jobs=1)
    low, nom, high = sw.offsets
    assert low.within and nom.within, (low, nom)
    assert not high.completed and high.verdict == NOT_CHECKED and high.end_time_s == 0.0
    assert high.fall_reason == "no foot clearance at apex"
    w = sw.window
    assert (w.lo_m, w.hi_m) == (-0.02, 0.0)
    assert w.above.kind == END_FALL and w.above.first_out_m == 0.15 and "fell" in w.above.text
    assert w.below.first_out_m is None  # open below within the swept range
    assert not sw.all_within


def test_several_plans_and_robots_sweep_the_cross_product(short_plan, ample_robot):
    """Issue 6: PLAN and --robot may be repeated; one sweep per (plan, robot), plans outer."""
    other = simulate_cases(demo_params(), demo_policy(), demo_apex(), [0.0], duration_s=0.5, rate_hz=500.0, path="<other>")
    out = run_sweep([short_plan, other], ["lab-biped-leg", str(ample_robot)], [0.0], settings=SETTINGS, jobs=1)
    assert [(s.plan_path, s.robot_name) for s in out] == [("<short demo plan>", "lab-biped-leg"), ("<short demo plan>", "ample-leg"),
                                                           ("<other>", "lab-biped-leg"), ("<other>", "ample-leg")]
    assert [s.duration_s for s in out] == [DURATION_S, DURATION_S, 0.5, 0.5]
    # same plan, same offset: the reduced model does not depend on the robot
    assert out[0].offsets[0].apex_z_m == out[1].offsets[0].apex_z_m


def _main(argv, capsys):
    code = cli.main(["sweep"] + [str(a) for a in argv])
    return code, capsys.readouterr()


def test_cli_exit_codes_outputs_and_caution(short_plan_file, ample_robot, tmp_path, capsys):
    """Exit codes (README, "Exit status"): 0 every offset within the modelled limits, 1 otherwise, 2 bad input."""
    csv_out, json_out, png = tmp_path / "s.csv", tmp_path / "s.json", tmp_path / "s.png"
    code, cap = _main([short_plan_file, "--robot", ample_robot, "--heights=0:0:1", "--rate", "500", "--jobs", "1",
                       "--csv", csv_out, "--json", json_out, "--plot", png], capsys)
    assert code == 0, cap.err
    assert "sweep: 1 offset(s) in" in cap.err  # the count on stderr (step lines only after the first half second)
    assert "within the modelled limits" in cap.out and "CAUTION:" in cap.out
    assert not re.search(r"\bsafe\b", cap.out + cap.err, re.I)
    doc = json.loads(json_out.read_text())
    assert doc["schema"] == "legbridge.sweep/1" and doc["sweeps"][0]["window"]["lo_m"] == 0.0
    lines = csv_out.read_text().splitlines()
    assert len(lines) == 2 and lines[0].startswith("plan,plan_sha256,robot")
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["s.csv", "s.json", "s.png"]  # no temporary files left

    # an offset that falls: exit 1, the fall named
    code, cap = _main([short_plan_file, "--robot", ample_robot, "--heights", "0:0.15:2", "--rate", "500", "--jobs", "1"], capsys)
    assert code == 1 and "no foot clearance at apex" in cap.out and "CAUTION:" in cap.out

    # bad input: exit 2, one line, nothing written
    code, cap = _main([short_plan_file, "--robot", ample_robot, "--heights=0:0:1", "--csv", csv_out], capsys)
    assert code == 2 and "--force" in cap.err and cap.out == ""
    code, cap = _main([short_plan_file, "--robot", ample_robot, "--heights", "0.1:-0.1:3"], capsys)
    assert code == 2 and "LO:HI:N" in cap.err
    # a missing output folder is refused as such (OutputFolderError), before any work, and the
    # canonical option name works as the 0.1 one does
    from legbridge.robots.errors import OutputFolderError

    code, cap = _main([short_plan_file, "--robot", ample_robot, "--ground-offsets=0:0:1",
                       "--csv", tmp_path / "no" / "s.csv"], capsys)
    assert code == 2 and "output folder does not exist" in cap.err and cap.out == ""
    assert issubclass(OutputFolderError, NotADirectoryError)
    flat = tmp_path / "flat.csv"
    from legbridge.mapping.readers import read_plan
    from legbridge.mapping.slip import plan_for_flat_formats

    write_plan(plan_for_flat_formats(read_plan(short_plan_file)), flat)
    code, cap = _main([flat, "--robot", ample_robot, "--json", tmp_path / "never.json"], capsys)
    assert code == 2 and "'policy'" in cap.err and len(cap.err.strip().splitlines()) == 1
    assert not (tmp_path / "never.json").exists()


def test_sigterm_during_a_sweep_ends_every_worker(tmp_path):
    # SIGTERM while the pool works: exit 130, one line, no results file, and none of the worker
    # processes (found with psutil while they run) outlives the command.
    import signal
    import subprocess
    import sys
    import time

    psutil = pytest.importorskip("psutil")
    from legbridge.mapping.slip.demo import shipped_demo_plan_path

    csv_path = tmp_path / "s.csv"
    proc = subprocess.Popen([sys.executable, "-m", "legbridge.limits.cli", "sweep", str(shipped_demo_plan_path()),
                             "--robot", "lab-biped-leg", "--ground-offsets", "-0.05:0.05:101", "--jobs", "2",
                             "--csv", str(csv_path), "--quiet"], stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    workers = []
    deadline = time.time() + 60
    while time.time() < deadline and len(workers) < 2:
        workers = psutil.Process(proc.pid).children(recursive=True)
        time.sleep(0.05)
    assert len(workers) >= 2, "the pool did not start"
    time.sleep(0.5)
    proc.send_signal(signal.SIGTERM)
    _, err = proc.communicate(timeout=60)
    assert proc.returncode == 130 and err.strip().splitlines()[-1] == "legbridge: interrupted; no output was written", err
    time.sleep(0.5)
    alive = [w.pid for w in workers if w.is_running() and w.status() != psutil.STATUS_ZOMBIE]
    assert alive == [] and not csv_path.exists()
