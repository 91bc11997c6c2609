"""The shipped demo plans are what the in-memory demo produces (the script in examples/ made them).

``demo_plan()`` integrates an ODE (SciPy ``solve_ivp``), so a fresh install on another machine or
with other SciPy/NumPy releases reproduces the shipped numbers only to the integrator's tolerance,
not bit for bit; the comparison below allows exactly that much (see ``column_tolerance``).
"""

from pathlib import Path

import numpy as np

from legbridge.mapping.readers import read_plan
from legbridge.mapping.slip import demo_plan, shipped_demo_plan, shipped_demo_plan_path
from legbridge.mapping.slip.simulate import ATOL, RTOL

ROOT = Path(__file__).resolve().parents[2]
EXAMPLES = ROOT / "examples"

# Integrated columns: compared at the solver's tolerance.
INTEGRATED = ("leg_length_m", "leg_angle_rad", "force_x_n", "force_z_n", "body_z_m")

# SciPy solve_ivp tolerance semantics (solve_ivp documentation, "rtol, atol"): each step's estimated
# local error in a state component y is kept below atol + rtol * |y|. That bounds one step, not the
# run: over 2 s, about 500 adaptive steps and 10-11 touchdown/liftoff events per case the errors add
# up, and a difference in the last bit anywhere (another SciPy/NumPy release, another CPU's
# floating-point kernels) changes which steps are accepted, so two correct runs differ by about the
# global error. Measured on this demo (RK45, RTOL 1e-8, ATOL 1e-9), in units of the per-step bound
# RTOL * max|column| + ATOL: against a reference run at rtol 1e-12 the shipped columns are off by up
# to 110x for lengths and heights (9e-7 m), 450x for the leg angle (2.5e-6 rad) and 840x for the
# forces (4.7e-3 N; a force is stiffness times a small spring deflection, so it carries the length
# error amplified); reruns with rtol scaled by 1 + 1e-9 or 1 + 1e-7, which only change the step
# sequence as another platform would, differ by the same amounts (at most 1130x, force_x).
# SAFETY_FACTOR = 1e4 leaves about 10x margin over the worst of these. The resulting allowances
# (at most about 8e-5 m, 6e-5 rad, 0.08 N) are still far below what a change to the model, the
# policy or the sampling moves (millimetres, newtons). (SciPy 1.11.4 with NumPy 1.26.4 reproduced the
# shipped files to 6e-17, so the releases themselves are not the only source of the spread.)
SAFETY_FACTOR = 1e4


def column_tolerance(reference: np.ndarray) -> float:
    """Allowed absolute difference for one integrated column: SAFETY_FACTOR * (RTOL * max|column| + ATOL)."""
    return SAFETY_FACTOR * (RTOL * float(np.max(np.abs(reference))) + ATOL)


def assert_same_plan_at_solver_tolerance(shipped, ref, label: str) -> None:
    """``shipped`` holds the same cases as ``ref``, equal up to the integrator's tolerance."""
    assert shipped.case_names == ref.case_names, label
    for a, b in zip(shipped.cases, ref.cases):
        where = f"{label} {b.name}"
        assert a.ground_height_m == b.ground_height_m, where
        # The sample times are i / rate, not integrated: they must agree to round-off.
        np.testing.assert_allclose(a.time_s, b.time_s, rtol=0, atol=1e-9, err_msg=f"{where} time_s")
        for col in INTEGRATED:
            ref_col = getattr(b, col)
            np.testing.assert_allclose(getattr(a, col), ref_col, rtol=0, atol=column_tolerance(ref_col),
                                       err_msg=f"{where} {col}")
        # Stance flags could only flip at a sample lying right on a touchdown or liftoff instant;
        # none of this demo's samples does (checked against the rtol 1e-12 reference and the
        # perturbed-tolerance runs above: identical flags), so they must match exactly.
        np.testing.assert_array_equal(a.stance, b.stance, err_msg=f"{where} stance")


def test_shipped_demo_plans_match_the_simulator():
    ref = demo_plan()
    for name in ("demo-hop-plan.json", "demo-hop-plan.csv"):
        assert_same_plan_at_solver_tolerance(read_plan(EXAMPLES / name), ref, name)


def test_package_copy_is_byte_identical_to_the_examples_file():
    path = shipped_demo_plan_path()
    assert path.name == "demo-hop-plan.json"
    assert path.read_bytes() == (EXAMPLES / "demo-hop-plan.json").read_bytes()


def test_shipped_demo_plan_equals_the_simulator_at_solver_tolerance():
    shipped = shipped_demo_plan()
    assert Path(shipped.path) == shipped_demo_plan_path()
    assert_same_plan_at_solver_tolerance(shipped, demo_plan(), "shipped_demo_plan()")


def test_shipped_running_plan_matches_the_simulator_and_its_package_copy():
    from legbridge.mapping.slip.demo import SHIPPED_DEMO_RUN_PLAN, demo_run_plan, shipped_demo_run_plan

    path = shipped_demo_plan_path(SHIPPED_DEMO_RUN_PLAN)
    assert path.read_bytes() == (EXAMPLES / "demo-run-plan.json").read_bytes()
    shipped = shipped_demo_run_plan()
    assert shipped.metadata["gait"] == "alternating" and shipped.metadata["flight_swing"] == "policy"
    assert_same_plan_at_solver_tolerance(shipped, demo_run_plan(), "shipped_demo_run_plan()")


def test_running_plan_flights_follow_the_policy_line():
    # The demo policy retracts the leg at 3 rad/s from 0.457 rad at the apex, down to -0.3 rad
    # (legbridge.mapping.slip.demo.demo_policy). With flight_swing='policy' the flight leg angle is that
    # policy after the apex and its tangent line before it: for a linear policy one straight line, slope
    # -3 rad/s, through 0.457 rad at the apex (hand arithmetic), in every flight of every case.
    from legbridge.mapping.slip.demo import demo_run_plan

    plan = demo_run_plan((0.0, 0.03))
    for c in plan.cases:
        t, a, st = np.asarray(c.time_s), np.asarray(c.leg_angle_rad), np.asarray(c.stance)
        flight_pairs = ~st[1:] & ~st[:-1] & (a[1:] > -0.3 + 1e-9) & (a[:-1] > -0.3 + 1e-9)
        slope = np.diff(a) / np.diff(t)
        assert flight_pairs.sum() > 100
        np.testing.assert_allclose(slope[flight_pairs], -3.0, rtol=0, atol=1e-6, err_msg=c.name)
        apex = np.argmax(np.where(~st, np.asarray(c.body_z_m), -np.inf))  # the highest flight sample
        assert abs(a[apex] - 0.457) <= 3.0 * float(t[1] - t[0]) + 1e-9
