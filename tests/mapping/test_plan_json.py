"""JSON plan reader: the good file read exactly, every bad file refused with a message that names
the file, the key and what was wrong (bad input is refused with one clear message)."""

import math
from pathlib import Path

import numpy as np
import pytest

from legbridge.robots.errors import PlanFormatError, PlanScalingError
from legbridge.mapping.readers import events, read_plan

FILES = Path(__file__).parent / "plan_files"


def test_good_json_values_as_written():
    plan = read_plan(FILES / "good.json")
    assert plan.case_names == ("nominal", "step_down_5cm")
    nom, step = plan.cases
    # the numbers typed into good.json
    np.testing.assert_array_equal(nom.time_s, [0.0, 0.05, 0.10, 0.15, 0.20, 0.25])
    np.testing.assert_array_equal(nom.force_z_n, [0.0, 300.0, 500.0, 300.0, 0.0, 0.0])
    np.testing.assert_array_equal(nom.stance, [False, True, True, True, False, False])
    np.testing.assert_array_equal(nom.body_z_m, [0.72, 0.66, 0.65, 0.66, 0.70, 0.74])
    assert nom.body_x_m is None and nom.actuator_length_m is None
    assert step.ground_height_m == -0.05 and nom.ground_height_m == 0.0
    assert plan.scaling is None
    assert plan.metadata["model"] == {"mass_kg": 25.0, "stiffness_n_per_m": 20000.0, "damping_n_s_per_m": 40.0}
    assert plan.metadata["scenario"].startswith("invented")
    np.testing.assert_array_equal(plan.policy.touchdown_angle_rad, [0.25, 0.28, 0.30])
    assert not nom.time_s.flags.writeable and not nom.stance.flags.writeable
    assert len(plan.sha256) == 64


def test_axial_force_converted_by_the_leg_angle():
    # README conventions: hip-to-foot = l (sin a, -cos a); the ground pushes the foot towards the
    # hip, so F = axial (-sin a, cos a). Hand arithmetic, sample 1: a = 0.2 rad, axial = 300 N:
    # sin 0.2 = 0.198669, cos 0.2 = 0.980067 -> F = (-59.6008, 294.0200) N (foot ahead -> braking).
    step = read_plan(FILES / "good.json").case("step_down_5cm")
    assert step.force_x_n[1] == pytest.approx(-59.6008, abs=1e-3)
    assert step.force_z_n[1] == pytest.approx(294.0200, abs=1e-3)
    # sample 3: a = -0.2 rad (foot behind) -> F = (+59.6008, 294.0200) N (propulsive)
    assert step.force_x_n[3] == pytest.approx(59.6008, abs=1e-3)
    # sample 2: a = 0 -> purely vertical, 500 N
    assert (step.force_x_n[2], step.force_z_n[2]) == (0.0, 500.0)
    # magnitude is preserved (|(-sin, cos)| = 1)
    np.testing.assert_allclose(np.hypot(step.force_x_n, step.force_z_n), [0, 300, 500, 300, 0, 0], atol=1e-12)


def test_phases_from_force_threshold_default_one_percent_of_weight():
    # no phase column in step_down_5cm: stance when force_z > 1 % of m g = 0.01 * 25 * 9.80665 = 2.4517 N
    plan = read_plan(FILES / "good.json")
    step = plan.case("step_down_5cm")
    np.testing.assert_array_equal(step.stance, [False, True, True, True, False, False])
    assert "2.452 N" in plan.metadata["phase_source"]["step_down_5cm"]
    ev = events(step)
    np.testing.assert_array_equal(ev.touchdown_s, [0.05])
    np.testing.assert_array_equal(ev.liftoff_s, [0.20])
    # an explicit threshold above 294 N leaves only the 500 N sample in stance
    high = read_plan(FILES / "good.json", force_threshold_n=400.0).case("step_down_5cm")
    np.testing.assert_array_equal(high.stance, [False, False, True, False, False, False])


BAD = [
    ("bad_format_tag.json", r"bad_format_tag\.json: 'format'.*expected 'legbridge\.plan/1', found 'someplan/2'"),
    ("bad_units.json", r"'units'.*expected one of \['si', 'nondimensional'\], found 'imperial'"),
    ("bad_unknown_key.json", r"unknown key 'sample_rate_hz'.*expected only \[.*'cases'\]"),
    ("bad_unknown_column.json", r"'cases\[0\]\.columns\.hip_torque_nm'.*unknown column.*known columns \[.*'time_s'"),
    ("bad_missing_column.json", r"missing column 'leg_angle_rad' in case 'nominal'"),
    ("bad_missing_force.json", r"missing column 'force_x_n'"),
    ("bad_both_forces.json", r"ground force given twice.*not both"),
    ("bad_decreasing_time.json", r"'cases\[0\]\.columns\.time_s\[3\]'.*strictly increasing.*found 0\.09"),
    ("bad_null_value.json", r"'cases\[0\]\.columns\.leg_length_m\[2\]'.*not a number.*found None"),
    ("bad_text_value.json", r"'cases\[0\]\.columns\.force_z_n\[2\]'.*expected a number, found '500'"),
    ("bad_nan.json", r"'cases\[0\]\.columns\.force_z_n\[2\]'.*finite.*found nan"),
    ("bad_pull_force.json", r"'cases\[0\]\.columns\.force_z_n\[2\]'.*ground pulls.*found -20 N"),
    ("bad_flight_force.json", r"'cases\[0\]\.columns\.force_z_n\[4\]'.*flight.*zero force"),
    ("bad_phase_value.json", r"'cases\[0\]\.columns\.phase\[1\]'.*\['stance', 'flight'\], found 'contact'"),
    ("bad_negative_leg.json", r"'cases\[0\]\.columns\.leg_length_m\[2\]'.*leg length > 0, found 0"),
    ("bad_length_mismatch.json", r"'cases\[0\]\.columns\.body_z_m'.*expected 6 samples.*found 5 samples"),
    ("bad_duplicate_case.json", r"case 'nominal' appears twice"),
    ("bad_policy_time.json", r"'policy\.time_s\[2\]'.*strictly increasing"),
    # a policy must start at the apex (t = 0), as the simulator a sweep runs requires
    ("bad_policy_late_start.json", r"'policy\.time_s\[0\]'.*cannot be simulated.*expected 0"),
    ("bad_mass_text.json", r"'mass_kg'.*expected a positive number, found 'heavy'"),
    ("bad_syntax.json", r"not valid JSON.*line 4"),
]


@pytest.mark.parametrize("name, match", BAD)
def test_bad_json_refused_with_a_clear_message(name, match):
    with pytest.raises(PlanFormatError, match=match) as info:
        read_plan(FILES / name)
    assert name in str(info.value)  # the message names the file
    assert isinstance(info.value, ValueError)


def test_nondimensional_without_l0_or_robot_is_a_scaling_error():
    with pytest.raises(PlanScalingError, match=r"nominal_leg_length_m.*robot"):
        read_plan(FILES / "bad_nondim_without_l0.json")


def test_bad_threshold_argument():
    with pytest.raises(PlanFormatError, match="force_threshold_n"):
        read_plan(FILES / "good.json", force_threshold_n=-1.0)
    assert math.isfinite(read_plan(FILES / "good.json", force_threshold_n=1.0).cases[0].time_s[0])
