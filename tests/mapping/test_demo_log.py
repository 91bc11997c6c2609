"""The shipped INVENTED demo hardware log (examples/demo-log.csv, a simulation, not a measurement) and
the script that makes it (examples/make_demo_log.py).

References: the planted constants the script states (the script's TRUE_*, LAG_S, NOISE_*), the
files' own SHA-256 (hashlib), the DC motor model in closed form (Hughes and Drury, Electric Motors
and Drives, ch. 3, as in legbridge.robots.actuator_limits: I = (T_s + J_r N qdd) / Kt with
T_s = tau / (eta N) motoring, tau eta / N back-driven), numpy.correlate for the lag, and
limits.checks.thermal (a second implementation of the same thermal model) for the script's
temperature integration.
"""

import hashlib
import importlib.util
import re
from pathlib import Path

import numpy as np
import pytest

from legbridge.limits.aftertest.align import align_log
from legbridge.limits.aftertest.log_reader import read_log
from legbridge.limits.checks.thermal import rise_from_ambient_k
from legbridge.mapping.pipeline import prepare
from legbridge.robots.library import resolve_robot

ROOT = Path(__file__).resolve().parents[2]
EXAMPLES = ROOT / "examples"
LOG = EXAMPLES / "demo-log.csv"
MAP = EXAMPLES / "demo-log-map.toml"
PLAN = EXAMPLES / "demo-run-plan.json"
LEGS = ("left", "right")


def _load_script():
    spec = importlib.util.spec_from_file_location("legbridge_make_demo_log", EXAMPLES / "make_demo_log.py")
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


script = _load_script()


@pytest.fixture(scope="module")
def prepared():
    return prepare(PLAN, resolve_robot("lab-biped"), rate_hz=script.SIM_RATE_HZ, cases=[script.CASE])


@pytest.fixture(scope="module")
def traj(prepared):
    return prepared.trajectories[0]


@pytest.fixture(scope="module")
def log(traj):
    return read_log(LOG, MAP, joints=traj.joint_names, legs=LEGS)


def _plan_time(log_time_s):
    """Plan time of the hardware's motion at a log time: the standstill and the planted lag removed."""
    return np.asarray(log_time_s) - script.STANDSTILL_S - script.LAG_S


def _at(traj, values, plan_time):
    """Trajectory values at plan times, periodic with the case's duration (linear between samples; the
    last sample is the next repetition's first)."""
    return np.interp(plan_time, traj.time_s[:-1], values[:-1], period=traj.repetition_period_s)


def _true_current(traj, prepared, j):
    """Closed-form current of joint j at every trajectory sample with the planted true Kt and eta."""
    act = prepared.robot.joint(traj.joint_names[j]).actuator
    n_g = act.gear_ratio
    eta = script.TRUE_KNEE_EFFICIENCY if traj.joint_names[j].endswith("knee") else act.gearbox_efficiency
    kt = script.TRUE_KT_FACTOR * act.torque_constant_nm_per_a
    tau, qd, qdd = (np.asarray(a[:, j], dtype=float) for a in (traj.tau, traj.qd, traj.qdd))
    shaft = np.where(tau * qd < 0.0, tau * eta / n_g, tau / (eta * n_g))
    return (shaft + act.rotor_inertia_kgm2 * n_g * qdd) / kt


def test_log_reads_through_its_mapping(log, traj):
    names = {(c.owner, c.quantity) for c in log.channels}
    expected = {(j, q) for j in traj.joint_names for q in ("position", "velocity", "current", "winding_temp")}
    expected |= {("left_knee", "housing_temp"), ("right_knee", "housing_temp"), ("robot", "bus_voltage")}
    expected |= {(leg, "contact") for leg in LEGS}
    assert names == expected
    assert "ignored columns: cpu_load_pct" in log.notes
    steps = np.diff(log.time_s)
    # the planted logger clock: 5 ms +- 0.5 ms, microsecond resolution
    assert steps.min() >= script.LOG_STEP_S - script.LOG_JITTER_S - 1e-6
    assert steps.max() <= script.LOG_STEP_S + script.LOG_JITTER_S + 1e-6
    assert log.time_s[0] == 0.0
    assert log.time_s[-1] == pytest.approx(script.STANDSTILL_S + script.TEST_S, abs=script.LOG_STEP_S + script.LOG_JITTER_S)
    assert LOG.stat().st_size < 6e6


def test_header_is_labelled_and_names_the_inputs_by_hash():
    head = [line[2:] for line in LOG.read_text().splitlines()[:40] if line.startswith("# ")]
    text = "\n".join(head)
    assert "INVENTED demo data: a simulation, not a measurement" in head[0]
    assert "made by examples/make_demo_log.py" in text
    plan_sha = re.search(r"^plan: examples/demo-run-plan\.json sha256=([0-9a-f]{64})$", text, re.M).group(1)
    robot_sha = re.search(r"^robot: robots/library/lab-biped\.toml sha256=([0-9a-f]{64})$", text, re.M).group(1)
    assert plan_sha == hashlib.sha256(PLAN.read_bytes()).hexdigest()
    assert robot_sha == hashlib.sha256(resolve_robot("lab-biped").read_bytes()).hexdigest()
    # the planted values are written out for a reader
    assert f"{script.TRUE_KT_FACTOR:g} x the file's" in text
    assert f"knee gearbox efficiency: {script.TRUE_KNEE_EFFICIENCY:g}" in text
    assert f"winding thermal resistance: {script.TRUE_THERMAL_RESISTANCE_FACTOR:g} x" in text
    assert f"tracking lag: {1e3 * script.LAG_S:g} ms" in text
    assert f"seed: {script.SEED}" in text


def test_script_reproduces_the_shipped_files(tmp_path, capsys):
    assert script.main([], out_dir=tmp_path) == 0
    assert (tmp_path / "demo-log-map.toml").read_bytes() == MAP.read_bytes()
    # the same numbers to their printed precision (not byte for byte: another NumPy release or CPU may
    # change a last digit of the translation; that must not fail a fresh install)
    import numpy as np

    def table(path):
        lines = [ln for ln in path.read_text().splitlines() if not ln.startswith("#")]
        return lines[0], np.genfromtxt(lines[1:], delimiter=",")

    head_new, new = table(tmp_path / "demo-log.csv")
    head_old, old = table(LOG)
    assert head_new == head_old and new.shape == old.shape
    assert np.allclose(new, old, rtol=1e-3, atol=1e-3, equal_nan=True)
    # an existing file is refused without --force, and nothing is changed
    before = (tmp_path / "demo-log.csv").stat().st_mtime_ns
    assert script.main([], out_dir=tmp_path) == 2
    assert (tmp_path / "demo-log.csv").stat().st_mtime_ns == before


def test_hip_current_is_file_current_over_kt_factor(log, traj):
    # Closed form: I = tau / (eta N Kt) + J_r N qdd / Kt; the hips' only planted change is Kt, so
    # I_true / I_file = Kt_file / Kt_true = 1 / 0.88 at every sample. Estimated as the least-squares
    # slope through the origin of logged on file current, in stance and over the whole motion; its
    # standard error with noise sigma is sigma / sqrt(sum I_file^2) (ordinary least squares), and
    # the check allows 4 of them. (This plan's hips carry little current in stance, RMS about 0.6 A,
    # so the stance estimate is the looser one.)
    s = _plan_time(log.time_s)
    moving = s >= 0.0
    for j, name in enumerate(traj.joint_names):
        if not name.endswith("hip"):
            continue
        leg = LEGS.index(name.split("_")[0])
        stance = moving & (_at(traj, traj.leg_contact[:, leg].astype(float), s) == 1.0)
        for part in (stance, moving):
            predicted = _at(traj, traj.current_a[:, j], s[part])
            logged = log.get(name, "current")[part]
            slope = float(logged @ predicted / (predicted @ predicted))
            se = script.NOISE_CURRENT_A / float(np.sqrt(predicted @ predicted))
            assert abs(slope - 1.0 / script.TRUE_KT_FACTOR) < 4 * se, (name, slope, se)
            assert abs(slope - 1.0) > 2 * 4 * se  # the file's Kt lies beyond twice the allowed band


def test_every_current_is_the_true_model_plus_noise(log, traj, prepared):
    # Closed-form current with the planted Kt and knee efficiency at the lag-shifted plan time: what
    # remains is the sensor noise (sample standard deviation within about 3 / sqrt(2 n) of it).
    s = _plan_time(log.time_s)
    moving = s >= 0.0
    for j, name in enumerate(traj.joint_names):
        ref = _at(traj, _true_current(traj, prepared, j), s[moving])
        resid = log.get(name, "current")[moving] - ref
        assert np.sqrt(np.mean(resid ** 2)) == pytest.approx(script.NOISE_CURRENT_A, rel=0.03), name
    # and the knee's planted efficiency matters: with the file's 0.9 the stance residual is far larger
    j = traj.joint_names.index("left_knee")
    act = prepared.robot.joint("left_knee").actuator
    file_eta_with_true_kt = np.asarray(traj.current_a[:, j]) / script.TRUE_KT_FACTOR
    resid = log.get("left_knee", "current")[moving] - _at(traj, file_eta_with_true_kt, s[moving])
    assert act.gearbox_efficiency != script.TRUE_KNEE_EFFICIENCY
    assert np.sqrt(np.mean(resid ** 2)) > 3 * script.NOISE_CURRENT_A


def test_logged_position_lags_the_target_by_the_planted_lag(log, traj):
    # numpy.correlate of the logged position (on a uniform 1 ms grid) with the target at shifts of
    # -100..+100 ms, the peak refined by a parabola through its neighbours.
    dt, window = 1e-3, 100
    t = np.arange(5.0, 65.0, dt)
    t_ext = np.arange(5.0 - window * dt, 65.0 + (window + 0.5) * dt, dt)
    for j, name in enumerate(traj.joint_names):
        x = np.interp(t, log.time_s, log.get(name, "position"))
        y = _at(traj, traj.q[:, j], t_ext - script.STANDSTILL_S)
        c = np.correlate(y - y.mean(), x - x.mean(), mode="valid")   # c[k]: y at t - (window - k) dt
        k = int(np.argmax(c))
        a, b, d = c[k - 1], c[k], c[k + 1]
        peak = k + 0.5 * (a - d) / (a - 2 * b + d)
        lag = (window - peak) * dt
        assert lag == pytest.approx(script.LAG_S, abs=5e-4), name


def test_cross_correlation_alignment_finds_the_planted_start(log, traj):
    period = traj.repetition_period_s                         # the case's duration
    a = align_log(log, target_time_s=traj.time_s, period_s=period,
                  target_position={j: traj.q[:, i] for i, j in enumerate(traj.joint_names)})
    assert a.method == "cross-correlation"
    assert a.offset_s == pytest.approx(script.STANDSTILL_S + script.LAG_S, abs=2e-3)
    assert a.confidence >= 0.95


def test_thermal_integration_agrees_with_the_review_model(prepared, traj):
    # The script's expm steps, composed one by one, against limits.checks.thermal's closed-form /
    # Sylvester steps composed by a scan: one node (hip) and two nodes (knee).
    for j, name in enumerate(traj.joint_names[:2]):
        act = script.true_actuator(prepared.robot.joint(name).actuator, name.endswith("knee"))
        per_sample = np.asarray(traj.current_a[:, j]) / script.TRUE_KT_FACTOR
        index = np.tile(np.arange(traj.n_samples), 10)                                  # 20 s of the case
        current = per_sample[index]
        mine = script.thermal_simulate(act.thermal, act.winding_resistance_ohm, per_sample, 1e-3, index=index)[:, 0]
        ref = act.thermal.ambient_temp_c + rise_from_ambient_k(act.thermal, act.winding_resistance_ohm, current, 1e-3)
        assert ref[-1] - ref[0] > 0.5
        np.testing.assert_allclose(mine, ref, rtol=0, atol=1e-9)


def test_logged_temperatures_start_at_ambient_and_knees_heat(log):
    first = log.time_s < 0.5
    for name in ("left_hip", "left_knee", "right_hip", "right_knee"):
        w = log.get(name, "winding_temp")
        assert abs(float(np.mean(w[first])) - 25.0) < 0.05, name  # 100 samples of 0.15 K noise: sigma 0.015 K
    assert np.mean(log.get("left_knee", "winding_temp")[-200:]) > np.mean(log.get("left_knee", "housing_temp")[-200:]) + 20
