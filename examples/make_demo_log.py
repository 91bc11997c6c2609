"""Make the invented demo hardware log: examples/demo-log.csv and its column mapping examples/demo-log-map.toml.

INVENTED demo data: a simulation, not a measurement. No robot was run. The "true" robot below is the
bundled demo robot ``lab-biped`` with a few planted differences (the constants TRUE_* and LAG_S
below), so that a reader, or legbridge's after-test comparison (limits/aftertest), can check what it
finds against what was put in.

What is simulated, on the controller's 1 kHz grid (log time k ms, k = 0, 1, ...):

* the shipped demo plan examples/demo-run-plan.json, case ``nominal``, translated for lab-biped at
  1000 Hz (legbridge.mapping.pipeline.prepare): n = 2001 samples, repeated with the case's duration
  as period (JointTrajectory.repetition_period_s = 2.0 s, the same at every rate: the last sample's
  time is where the next repetition starts with the case's first sample);
* before it a standstill of STANDSTILL_S at the case's first sample (its position and joint torque,
  speed and acceleration zero), so the log starts before the motion; plan time 0 is log time
  STANDSTILL_S; the test runs TEST_S after it and the logger stops then;
* the hardware follows its targets with a pure delay LAG_S: measured position, speed, acceleration,
  joint torque and leg contact at log time t are the targets at plan time t - STANDSTILL_S - LAG_S;
* drive current (DC-equivalent, the file's convention): the project's forward model
  (legbridge.robots.actuator_limits.current_a) with the true actuator (Kt and Ke x TRUE_KT_FACTOR,
  knee efficiency TRUE_KNEE_EFFICIENCY); lab-biped's joints are rigid, so motor side = joint side;
* winding (and knee housing) temperature: the file's thermal model structure (robots/robot.py
  ThermalModel, limits/checks/thermal.py; one node for the hips, winding and housing for the knees;
  copper loss R_ref (1 + alpha (T - T_ref)) I^2) with the winding thermal resistance x
  TRUE_THERMAL_RESISTANCE_FACTOR (the time constants as the file), from ambient. Integration: an
  exact zero-order-hold step per 1 ms sample (current held over the step; the system is linear in
  the temperatures for a given current, so each step is the affine map read off
  scipy.linalg.expm of the augmented matrix [[A, b], [0, 0]] dt), composed sample by sample;
* bus voltage: BUS_NOMINAL_V - SUPPLY_RESISTANCE_OHM x the supply current, the supply current being
  the drives' total electrical power sum_j (R(T_j) I_j + Ke N qd_j) I_j over the bus voltage (drive
  losses neglected; solved exactly, a quadratic in the bus voltage);
* the logger samples at about 200 Hz, each interval 5 ms +- 0.5 ms (uniform), with times in
  microseconds; continuous values are interpolated linearly between the 1 kHz samples, contact
  is the last 1 kHz sample's; Gaussian sensor noise NOISE_* is added and values are rounded far
  below the noise (DECIMALS);
* cpu_load_pct: an invented extra column the mapping ignores.

Column names and units are the (invented) robot's own, so examples/demo-log-map.toml shows how a
mapping file brings them to legbridge's quantities. Deterministic: fixed seed (SEED), the same
bytes on every run on one machine (another NumPy release or CPU may change a last digit of the
translation or the random stream). Existing files are refused unless --force is given.

    python examples/make_demo_log.py [--force] [--out-dir DIR]
"""

from __future__ import annotations

import argparse
import dataclasses
import hashlib
import io
import sys
from pathlib import Path

import numpy as np
import scipy.linalg

from legbridge.mapping.pipeline import prepare
from legbridge.robots import load_robot
from legbridge.robots.actuator_limits import current_a
from legbridge.robots.errors import LegbridgeError
from legbridge.robots.files import refuse_existing, write_atomic
from legbridge.robots.library import resolve_robot

# ----------------------------------------------------------------------------------------------------
# INVENTED: the planted differences between the "true" robot and the robot file, and the test set-up.

TRUE_KT_FACTOR = 0.88                  # torque constant (and back-EMF constant) of every joint x file's
TRUE_KNEE_EFFICIENCY = 0.85            # knee gearbox efficiency (file: 0.9); hips as the file
TRUE_THERMAL_RESISTANCE_FACTOR = 1.6   # winding thermal resistance x file's (knees: winding to housing)
LAG_S = 0.025                          # tracking lag of every joint: measured = target delayed [s]

NOISE_POSITION_RAD = 2e-4              # Gaussian sensor noise, one standard deviation
NOISE_VELOCITY_RAD_S = 0.02
NOISE_CURRENT_A = 0.3
NOISE_TEMPERATURE_K = 0.15
NOISE_BUS_V = 0.05

BUS_NOMINAL_V = 48.0                   # supply voltage at no load [V]
SUPPLY_RESISTANCE_OHM = 0.05           # supply and cabling resistance [ohm]

STANDSTILL_S = 1.5                     # logging before the motion starts [s] (plan time 0 = this log time)
TEST_S = 150.0                         # the case repeated for this long [s]; the log ends then
LOG_STEP_S = 0.005                     # logger interval [s] ...
LOG_JITTER_S = 0.0005                  # ... +- this, uniform [s]
SIM_RATE_HZ = 1000.0                   # controller rate: the plan is translated and simulated at it
SEED = 20250611

# ----------------------------------------------------------------------------------------------------

ROOT = Path(__file__).resolve().parents[1]
PLAN = ROOT / "examples" / "demo-run-plan.json"
PLAN_LABEL = "examples/demo-run-plan.json"
ROBOT_NAME = "lab-biped"
ROBOT_LABEL = "robots/library/lab-biped.toml"
CASE = "nominal"
CSV_NAME = "demo-log.csv"
MAP_NAME = "demo-log-map.toml"
LEGS = ("left", "right")
PREFIX = {"left_hip": "lh", "left_knee": "lk", "right_hip": "rh", "right_knee": "rk"}
DECIMALS = {"t_ms": 3, "q_deg": 3, "qd_rpm": 2, "iq_a": 2, "temp_c": 2, "case_c": 2, "vbus_v": 2, "cpu": 1}
RAD_S_TO_RPM = 60.0 / (2.0 * np.pi)

MAPPING_TOML = '''\
# Column mapping of examples/demo-log.csv (INVENTED demo data: a simulation, not a measurement).
# Made by examples/make_demo_log.py. Format: legbridge.limits.aftertest.log_reader (module docstring).
# The (invented) robot logs in its own names and units: milliseconds, degrees, rpm. Its drives report
# the DC-equivalent current, the convention lab-biped's file states its motors in (no convention keys
# there), so the current columns are "dc" although the drive calls them iq.

[time]
column = "t_ms"
unit = "ms"
ignore = ["cpu_load_pct"]         # logger CPU load: not a quantity legbridge compares

[joints.left_hip]
position = { column = "lh_q_deg", unit = "deg" }
velocity = { column = "lh_qd_rpm", unit = "rpm" }
current = { column = "lh_iq_a", unit = "A", convention = "dc" }
winding_temp = { column = "lh_temp_c", unit = "degC" }

[joints.left_knee]
position = { column = "lk_q_deg", unit = "deg" }
velocity = { column = "lk_qd_rpm", unit = "rpm" }
current = { column = "lk_iq_a", unit = "A", convention = "dc" }
winding_temp = { column = "lk_temp_c", unit = "degC" }
housing_temp = { column = "lk_case_c", unit = "degC" }

[joints.right_hip]
position = { column = "rh_q_deg", unit = "deg" }
velocity = { column = "rh_qd_rpm", unit = "rpm" }
current = { column = "rh_iq_a", unit = "A", convention = "dc" }
winding_temp = { column = "rh_temp_c", unit = "degC" }

[joints.right_knee]
position = { column = "rk_q_deg", unit = "deg" }
velocity = { column = "rk_qd_rpm", unit = "rpm" }
current = { column = "rk_iq_a", unit = "A", convention = "dc" }
winding_temp = { column = "rk_temp_c", unit = "degC" }
housing_temp = { column = "rk_case_c", unit = "degC" }

[legs.left]
contact = { column = "contact_l" }

[legs.right]
contact = { column = "contact_r" }

[robot]
bus_voltage = { column = "vbus_v", unit = "V" }
'''


# ---------------------------------------------------------------------------------------------- model

def true_actuator(act, knee: bool):
    """The planted true actuator of one joint (INVENTED differences from the file's ``act``)."""
    thermal = dataclasses.replace(
        act.thermal, winding_resistance_k_per_w=act.thermal.winding_resistance_k_per_w * TRUE_THERMAL_RESISTANCE_FACTOR)
    return dataclasses.replace(
        act,
        torque_constant_nm_per_a=act.torque_constant_nm_per_a * TRUE_KT_FACTOR,
        back_emf_v_s_per_rad=act.back_emf_v_s_per_rad * TRUE_KT_FACTOR,
        gearbox_efficiency=TRUE_KNEE_EFFICIENCY if knee else act.gearbox_efficiency,
        thermal=thermal)


def thermal_step_maps(th, resistance_ohm: float, current, dt_s: float) -> tuple[np.ndarray, np.ndarray]:
    """Exact zero-order-hold maps of one step per current value: (M (m, d, d), v (m, d)) with
    x[k+1] = M x[k] + v, x the temperatures above ambient (winding first; the housing second for a
    two-node model), the current held over the step.

    C_w dx_w/dt = R_ref I^2 (1 + alpha (T_amb + x_w - T_ref)) - (x_w - x_b) / R_w   (x_b = 0 or x_h)
    C_h dx_h/dt = (x_w - x_h) / R_w - x_h / R_h,    C = time constant / resistance.
    Affine in x for a fixed current: x' = A x + b, and [[M, v], [0, 1]] = expm([[A, b], [0, 0]] dt)
    (scipy.linalg.expm, batched over the current values).
    """
    i2 = np.square(np.asarray(current, dtype=float))
    rw, cw = th.winding_resistance_k_per_w, th.winding_time_constant_s / th.winding_resistance_k_per_w
    alpha, t_ref, amb = th.resistance_temp_coefficient_per_k, th.resistance_reference_temp_c, th.ambient_temp_c
    d = 2 if th.two_node else 1
    aug = np.zeros((i2.size, d + 1, d + 1))
    aug[:, 0, 0] = -1.0 / (rw * cw) + alpha * resistance_ohm * i2 / cw
    aug[:, 0, d] = resistance_ohm * i2 * (1.0 + alpha * (amb - t_ref)) / cw
    if th.two_node:
        rh = th.housing_resistance_k_per_w
        ch = th.housing_time_constant_s / rh
        aug[:, 0, 1] = 1.0 / (rw * cw)
        aug[:, 1, 0] = 1.0 / (rw * ch)
        aug[:, 1, 1] = -(1.0 / rw + 1.0 / rh) / ch
    e = scipy.linalg.expm(aug * dt_s)
    return e[:, :d, :d], e[:, :d, d]


def thermal_simulate(th, resistance_ohm: float, current, dt_s: float, index=None) -> np.ndarray:
    """Temperatures [degC] (len(index) + 1, d) from ambient at times 0, dt, ... for the current
    sequence ``current[index]`` (``index`` None: all of ``current``): the maps of the distinct
    current values are computed once (scipy.linalg.expm of the augmented matrix), then composed by
    the associative scan limits.checks.thermal.prefix_maps."""
    from legbridge.limits.checks.thermal import prefix_maps

    m, v = thermal_step_maps(th, resistance_ohm, current, dt_s)
    index = np.arange(len(m)) if index is None else np.asarray(index)
    _, out = prefix_maps(m[index], v[index])  # x[k] from x[0] = 0 (ambient): the composed maps, no loop
    return out + th.ambient_temp_c


# ------------------------------------------------------------------------------------------ simulate

def _sha256(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def simulate(rng: np.random.Generator):
    """(log columns name -> values (unrounded, noise added), header facts): see the module docstring."""
    robot_path = resolve_robot(ROBOT_NAME)
    robot = load_robot(robot_path)
    traj = prepare(PLAN, robot, rate_hz=SIM_RATE_HZ, cases=[CASE]).trajectories[0]
    n = traj.n_samples
    dt = 1.0 / SIM_RATE_HZ
    period = traj.repetition_period_s                                # n - 1 steps: the last sample starts the next
    n_rep = int(round(period * SIM_RATE_HZ))
    start_steps = int(round(STANDSTILL_S * SIM_RATE_HZ))
    lag_steps = int(round(LAG_S * SIM_RATE_HZ))
    end_s = STANDSTILL_S + TEST_S

    # logger clock: intervals LOG_STEP_S +- LOG_JITTER_S, microsecond resolution, up to the end
    count = int(np.ceil(end_s / (LOG_STEP_S - LOG_JITTER_S))) + 2
    t_ms = np.concatenate(([0.0], np.cumsum(rng.uniform(LOG_STEP_S - LOG_JITTER_S, LOG_STEP_S + LOG_JITTER_S, count))))
    t_ms = np.round(1e3 * t_ms, DECIMALS["t_ms"])
    t_ms = t_ms[t_ms <= 1e3 * end_s + 1e-9]
    t = t_ms / 1e3

    # the 1 kHz grid: step k (log time k dt) shows trajectory sample idx[k]; -1 = the standstill
    steps = int(np.ceil(t[-1] * SIM_RATE_HZ)) + 2
    k = np.arange(steps)
    s = k - start_steps - lag_steps
    idx = np.where(s < 0, -1, np.mod(s, n_rep))

    def on_grid(values, still):                                     # trajectory samples, standstill appended
        return np.concatenate((np.asarray(values, dtype=float), [still]))[idx]

    def at_log(grid_values):                                        # linear between the 1 kHz samples
        return np.interp(t, k * dt, grid_values)

    cols: dict[str, np.ndarray] = {"t_ms": t_ms}
    grid_current, grid_speed, grid_temp = [], [], []
    facts = {}
    for j, name in enumerate(traj.joint_names):
        joint = robot.joint(name)
        knee = name.endswith("knee")
        act = true_actuator(joint.actuator, knee)
        speed, accel = traj.motor_side_rates(j, act.gear_ratio)     # rigid joint: = qd, qdd
        q = on_grid(traj.q[:, j], traj.q[0, j])
        qd = on_grid(speed, 0.0)
        tau_n = np.asarray(traj.tau[:, j], dtype=float)
        # current of every trajectory sample (and of the standstill), then laid on the grid
        per_sample = current_a(act, np.append(tau_n, tau_n[0]), np.append(speed, 0.0), np.append(accel, 0.0))
        current = per_sample[np.where(idx < 0, n, idx)]
        # thermal: maps of the n + 1 distinct currents, composed along the grid (exact ZOH per step)
        temps = thermal_simulate(act.thermal, act.winding_resistance_ohm, per_sample, dt,
                                 index=np.where(idx < 0, n, idx)[:-1])
        grid_current.append(current)
        grid_speed.append(qd)
        grid_temp.append(temps[:, 0])
        p = PREFIX[name]
        cols[f"{p}_q_deg"] = np.degrees(at_log(q) + rng.normal(0.0, NOISE_POSITION_RAD, t.size))
        cols[f"{p}_qd_rpm"] = RAD_S_TO_RPM * (at_log(qd) + rng.normal(0.0, NOISE_VELOCITY_RAD_S, t.size))
        cols[f"{p}_iq_a"] = at_log(current) + rng.normal(0.0, NOISE_CURRENT_A, t.size)
        cols[f"{p}_temp_c"] = at_log(temps[:, 0]) + rng.normal(0.0, NOISE_TEMPERATURE_K, t.size)
        if act.thermal.two_node:
            cols[f"{p}_case_c"] = at_log(temps[:, 1]) + rng.normal(0.0, NOISE_TEMPERATURE_K, t.size)
        facts[name] = (joint.actuator, act)

    # bus: V = V0 - R_s P / V  ->  V = (V0 + sqrt(V0^2 - 4 R_s P)) / 2, P the drives' electrical power
    power = np.zeros(steps)
    for (_, act), cur, w, temp in zip(facts.values(), grid_current, grid_speed, grid_temp):
        r_hot = act.winding_resistance_ohm * act.thermal.resistance_factor(temp)
        power += (r_hot * cur + act.back_emf_v_s_per_rad * act.gear_ratio * w) * cur
    vbus = 0.5 * (BUS_NOMINAL_V + np.sqrt(BUS_NOMINAL_V ** 2 - 4.0 * SUPPLY_RESISTANCE_OHM * power))
    cols["vbus_v"] = at_log(vbus) + rng.normal(0.0, NOISE_BUS_V, t.size)

    last = np.minimum(np.floor(t * SIM_RATE_HZ + 1e-9).astype(int), steps - 1)   # last 1 kHz sample
    for i, leg in enumerate(LEGS):
        contact = np.append(np.asarray(traj.leg_contact[:, i], dtype=bool), bool(traj.leg_contact[0, i]))
        cols[f"contact_{leg[0]}"] = contact[np.where(idx < 0, n, idx)][last].astype(float)
    cols["cpu_load_pct"] = np.clip(31.0 + 4.0 * np.sin(2.0 * np.pi * t / 7.3) + rng.normal(0.0, 1.5, t.size), 0.0, 100.0)

    facts = {"period_s": period, "n": n, "facts": facts, "robot_path": robot_path,
             "peak_current": {nm: float(np.max(np.abs(c))) for nm, c in zip(traj.joint_names, grid_current)},
             "max_temp": {nm: float(np.max(tc)) for nm, tc in zip(traj.joint_names, grid_temp)},
             "min_vbus": float(vbus.min())}
    return cols, facts


# ---------------------------------------------------------------------------------------------- write

ORDER = ["t_ms"] + [f"{p}_{q}" for p in ("lh", "lk", "rh", "rk") for q in ("q_deg", "qd_rpm", "iq_a", "temp_c")] + \
        ["lk_case_c", "rk_case_c", "vbus_v", "contact_l", "contact_r", "cpu_load_pct"]


def _decimals(column: str) -> int:
    if column.startswith("contact_"):
        return 0
    if column == "cpu_load_pct":
        return DECIMALS["cpu"]
    return DECIMALS[column if column in DECIMALS else column.split("_", 1)[1]]


def header_lines(facts) -> list[str]:
    file_eff = {nm: a.gearbox_efficiency for nm, (a, _) in facts["facts"].items()}
    knee_eff = sorted({v for nm, v in file_eff.items() if nm.endswith("knee")})
    return [
        "INVENTED demo data: a simulation, not a measurement. No robot was run; every number here is made up.",
        f"What: a hardware log of the demo robot {ROBOT_NAME} running case '{CASE}' of the demo plan, repeated, "
        "simulated with planted differences from the robot file (below).",
        f"plan: {PLAN_LABEL} sha256={_sha256(PLAN)}",
        f"robot: {ROBOT_LABEL} sha256={_sha256(Path(facts['robot_path']))}",
        f"case: {CASE}, translated at {SIM_RATE_HZ:g} Hz ({facts['n']} samples), repeated with period "
        f"{facts['period_s']:.6g} s (the case's duration); each repetition restarts at the case's first sample",
        f"timeline: logger starts at t_ms = 0; standstill at the case's first sample (speeds zero) until plan time 0 "
        f"at t_ms = {1e3 * STANDSTILL_S:g}; then {TEST_S:g} s of the case repeated; the log ends at t_ms = "
        f"{1e3 * (STANDSTILL_S + TEST_S):g}",
        "planted differences (true robot vs robot file), all INVENTED:",
        f"  torque constant and back-EMF constant: {TRUE_KT_FACTOR:g} x the file's, every joint",
        f"  knee gearbox efficiency: {TRUE_KNEE_EFFICIENCY:g} (file {', '.join(f'{v:g}' for v in knee_eff)}); hips as the file",
        f"  winding thermal resistance: {TRUE_THERMAL_RESISTANCE_FACTOR:g} x the file's, every joint (knees: winding "
        "to housing); time constants and the knees' housing values as the file",
        f"  tracking lag: {1e3 * LAG_S:g} ms, every joint: position, speed, torque and contact are the targets delayed",
        f"  sensor noise (Gaussian, 1 sigma): position {NOISE_POSITION_RAD:g} rad, velocity {NOISE_VELOCITY_RAD_S:g} rad/s, "
        f"current {NOISE_CURRENT_A:g} A, temperature {NOISE_TEMPERATURE_K:g} K, bus voltage {NOISE_BUS_V:g} V",
        f"  bus voltage: {BUS_NOMINAL_V:g} V - {SUPPLY_RESISTANCE_OHM:g} ohm x supply current (the drives' total "
        "electrical power / bus voltage)",
        "current: DC-equivalent (the file's convention), from legbridge.robots.actuator_limits.current_a with the true actuator",
        "temperature: the file's thermal model structure with the true values from ambient, exact zero-order-hold "
        f"steps of {1e3 / SIM_RATE_HZ:g} ms (scipy.linalg.expm)",
        f"sampling: about {1.0 / LOG_STEP_S:g} Hz, intervals {1e3 * LOG_STEP_S:g} ms +- {1e3 * LOG_JITTER_S:g} ms "
        f"(uniform); linear between the {SIM_RATE_HZ:g} Hz simulation samples, contact the last one's",
        "columns: robot's own names and units, mapped by examples/demo-log-map.toml; cpu_load_pct is invented and ignored",
        f"seed: {SEED} (numpy.random.default_rng)",
        "made by examples/make_demo_log.py",
    ]


def render_csv(cols, facts) -> bytes:
    buf = io.StringIO()
    for line in header_lines(facts):
        buf.write(f"# {line}\n")
    buf.write(",".join(ORDER) + "\n")
    table = np.column_stack([np.round(cols[c], _decimals(c)) + 0.0 for c in ORDER])   # + 0.0: no "-0.00"
    fmt = ",".join(f"%.{_decimals(c)}f" for c in ORDER)
    np.savetxt(buf, table, fmt=fmt, delimiter=",", newline="\n")
    return buf.getvalue().encode("ascii")


def main(argv: list[str] | None = None, *, out_dir: Path | str | None = None) -> int:
    parser = argparse.ArgumentParser(description="Make the INVENTED demo hardware log (a simulation, not a measurement).")
    parser.add_argument("--force", action="store_true", help="overwrite existing files")
    parser.add_argument("--out-dir", default=None, help="folder to write into (default: examples/)")
    args = parser.parse_args(sys.argv[1:] if argv is None else argv)
    folder = Path(out_dir if out_dir is not None else args.out_dir or ROOT / "examples")
    csv_path, map_path = folder / CSV_NAME, folder / MAP_NAME
    try:
        for p in (csv_path, map_path):  # refuse before writing any
            refuse_existing(p, args.force)
        cols, facts = simulate(np.random.default_rng(SEED))
        print(write_atomic(csv_path, render_csv(cols, facts), force=args.force))
        print(write_atomic(map_path, MAPPING_TOML, force=args.force))
    except LegbridgeError as exc:
        print(exc, file=sys.stderr)
        return 2
    print(f"{cols['t_ms'].size} samples over {cols['t_ms'][-1] / 1e3:.3f} s; peak true current "
          + ", ".join(f"{k} {v:.1f} A" for k, v in facts["peak_current"].items())
          + "; hottest winding " + ", ".join(f"{k} {v:.1f} degC" for k, v in facts["max_temp"].items())
          + f"; lowest bus {facts['min_vbus']:.2f} V")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
