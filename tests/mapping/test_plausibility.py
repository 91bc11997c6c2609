"""Unit slips in a plan refused, milder plan/robot mismatches warned (mapping.readers.plausibility).

The slipped plans are the shipped demo (examples/demo-hop-plan.json) or the good plan files with a
column rewritten in another unit, using the unit definitions 1 mm = 1e-3 m, 1 cm = 1e-2 m and
1 deg = pi/180 rad; the bad_units_* files in plan_files/ were made that way from good.csv and
good.json (each says so in a comment or metadata entry).
"""

import dataclasses
import math
import re
from pathlib import Path

import numpy as np
import pytest

from legbridge.mapping.plan_writer import write_plan
from legbridge.mapping.readers import read_plan
from legbridge.mapping.readers.plausibility import (LEG_LENGTH_MISMATCH_FRACTION, LENGTH_SLIP_TRIGGER_FACTOR,
                                                     MASS_MISMATCH_FRACTION, check_units, robot_reach_m)
from legbridge.robots.errors import LegbridgeError, PlanFormatError
from legbridge.robots.library import as_robot

FILES = Path(__file__).parent / "plan_files"
EXAMPLES = Path(__file__).parents[2] / "examples"
DEMO = EXAMPLES / "demo-hop-plan.json"
BUNDLED = ("lab-biped-leg", "example-leg", "sea-three-joint-leg", "spatial-leg")


@pytest.fixture(scope="module")
def demo():
    return read_plan(DEMO)


@pytest.fixture(scope="module")
def lab():
    return as_robot("lab-biped-leg")


def scaled(plan, column, factor):
    """The plan with one column of every case multiplied by ``factor``."""
    return dataclasses.replace(plan, cases=tuple(
        dataclasses.replace(c, **{column: getattr(c, column) * factor}) for c in plan.cases))


def median_stance_length(plan):
    return float(np.median(np.concatenate([c.leg_length_m[c.stance] for c in plan.cases])))


# --- the reach the checks compare with --------------------------------------------------------------

@pytest.mark.parametrize("name, reach_m", [
    ("lab-biped-leg", 0.38 + 0.40),        # hand arithmetic: the two segment lengths in lab-biped-leg.toml
    ("example-leg", 0.40 + 0.42),          # example-leg.toml
    ("sea-three-joint-leg", 0.35 + 0.38 + 0.10),  # sea-three-joint-leg.toml
    ("spatial-leg", 0.38 + 0.38 + 0.02),   # spatial-leg.urdf: knee 0.38 below hip_pitch, foot link 0.38 below the
                                           # knee, sole 0.02 below the foot link (spatial-leg.toml foot_offset_m)
])
def test_reach_of_the_bundled_robots(name, reach_m):
    assert robot_reach_m(as_robot(name)) == pytest.approx(reach_m, abs=1e-12)


# --- refusals: the demo with one column in another unit ---------------------------------------------

def test_demo_in_millimetres_is_refused(demo, lab):
    mm = scaled(demo, "leg_length_m", 1000.0)  # unit definition: 1 m = 1000 mm
    with pytest.raises(PlanFormatError) as e:
        check_units(mm, lab)
    msg = str(e.value)
    assert msg.startswith(f"{DEMO}: case 'ground-0.06m', column 'leg_length_m': ")
    assert "look like millimetres" in msg and "1 mm = 1e-3 m" in msg
    assert "5 of 5 cases show it" in msg
    # what was expected: at most 10x the reach, 10 * (0.38 + 0.40) = 7.8 m (hand arithmetic)
    assert "i.e. <= 7.8 m" in msg
    # what was found, read back in metres: the stance median in mm times 1e-3 m/mm is the SI median
    case0 = demo.cases[0]
    assert f"it is {float(np.median(case0.leg_length_m[case0.stance])):.3g} m" in msg


def test_demo_in_millimetres_written_to_a_file_is_refused_naming_the_file(demo, lab, tmp_path):
    # the audit's case: a plan file in millimetres (CSV holds no policy, so the demo's is dropped)
    path = write_plan(dataclasses.replace(scaled(demo, "leg_length_m", 1000.0), policy=None, metadata={}),
                      tmp_path / "demo-mm.csv")
    with pytest.raises(PlanFormatError, match=r"demo-mm\.csv: case 'ground-0\.06m', column 'leg_length_m': "
                                              r"leg lengths look like millimetres"):
        check_units(read_plan(path), lab)


def test_demo_in_centimetres_is_refused_for_a_urdf_leg(demo):
    cm = scaled(demo, "leg_length_m", 100.0)  # unit definition: 1 m = 100 cm
    with pytest.raises(PlanFormatError, match=r"case 'ground-0\.06m', column 'leg_length_m': leg lengths look like "
                                              r"centimetres.*1 cm = 1e-2 m"):
        check_units(cm, as_robot("spatial-leg"))  # no segments: reach from the URDF leg model


def test_demo_in_degrees_is_refused(demo, lab):
    deg = scaled(demo, "leg_angle_rad", 180.0 / math.pi)  # unit definition: 1 rad = 180/pi deg
    with pytest.raises(PlanFormatError) as e:
        check_units(deg, lab)
    msg = str(e.value)
    assert msg.startswith(f"{DEMO}: case 'ground-0.06m', column 'leg_angle_rad': leg angles look like degrees")
    # the demo's first sample, 0.457 rad (first row of examples/demo-hop-plan.csv), is
    # 0.457 * 180 / pi = 26.18 deg (hand arithmetic), found at t = 0
    assert "|angle| up to 26.18 at t = 0 s" in msg
    assert "1 deg = pi/180 rad" in msg


# --- refusals: the bad_units_* files -------------------------------------------------------------------

BAD = [
    # good.csv lengths x 1000: stance median of case 'nominal' 0.68 m -> 680 (1 mm = 1e-3 m)
    ("bad_units_millimetres.csv", r"bad_units_millimetres\.csv: case 'nominal', column 'leg_length_m': leg lengths look "
                                  r"like millimetres.*found 'median 680 over 3 stance samples.*it is 0\.68 m"),
    # good.json lengths x 100: stance median of case 'nominal' 0.68 m -> 68 (1 cm = 1e-2 m)
    ("bad_units_centimetres.json", r"bad_units_centimetres\.json: case 'nominal', column 'leg_length_m': leg lengths "
                                   r"look like centimetres.*found 'median 68 over 3 stance samples.*it is 0\.68 m"),
    # good.csv angles x 180/pi: 0.30 rad -> 17.19 deg (hand arithmetic: 0.3 * 57.29578 = 17.1887)
    ("bad_units_degrees.csv", r"bad_units_degrees\.csv: case 'nominal', column 'leg_angle_rad': leg angles look like "
                              r"degrees.*\|angle\| up to 17\.19 at t = 0 s, 4 of 5 samples beyond pi/2"),
]


@pytest.mark.parametrize("name, pattern", BAD, ids=[b[0] for b in BAD])
@pytest.mark.parametrize("robot", BUNDLED)
def test_bad_units_files_read_but_are_refused_for_every_bundled_robot(name, pattern, robot):
    if "degrees" in name:  # angles need no robot: the reader names them before they turn a force
        with pytest.raises(PlanFormatError, match=pattern):
            read_plan(FILES / name)
        return
    plan = read_plan(FILES / name)  # a well-formed file: lengths need the robot to be judged
    with pytest.raises(PlanFormatError, match=pattern):
        check_units(plan, robot)


def test_a_file_path_is_read_against_the_robot():
    with pytest.raises(PlanFormatError, match="millimetres"):
        check_units(FILES / "bad_units_millimetres.csv", "lab-biped-leg")
    assert check_units(FILES / "good.csv", "lab-biped-leg") == ()


def test_nondimensional_plan_with_l0_in_millimetres_names_the_scaling(tmp_path):
    # good_nondim.csv with l0 written as 640 (mm) instead of 0.64 (m)
    text = (FILES / "good_nondim.csv").read_text().replace("nominal_leg_length_m = 0.64", "nominal_leg_length_m = 640")
    (tmp_path / "nondim-mm.csv").write_text(text)
    plan = read_plan(tmp_path / "nondim-mm.csv")
    # stance median 0.95 l0 (good_nondim.csv, stance samples 0.95, 0.9, 0.95) -> 0.95 * 640 = 608
    with pytest.raises(PlanFormatError, match=r"millimetres.*median 608 .*l0 = 640 m \(from the plan metadata\)"):
        check_units(plan, "lab-biped-leg")


# --- thresholds at their edges (hand arithmetic) -------------------------------------------------------

def one_case_plan(leg_length_m, leg_angle_rad=0.0, metadata=None):
    """Two stance samples, invented; the values under test set by hand."""
    from legbridge.mapping.plan import Plan, ReducedTrajectory, frozen_array

    n = 2
    case = ReducedTrajectory("edge", frozen_array([0.0, 0.01]), frozen_array(np.full(n, leg_length_m)),
                             frozen_array(np.full(n, leg_angle_rad)), frozen_array(np.zeros(n)),
                             frozen_array(np.full(n, 200.0)), frozen_array(np.ones(n, bool), dtype=bool))
    return Plan(path="edge.json", sha256="0" * 64, cases=(case,), metadata=metadata or {})


def test_length_edges(lab):
    reach = 0.78  # lab-biped-leg: 0.38 + 0.40 m
    # exactly 10x the reach is not refused (the rule is "more than"); it is a warning (7.8 vs 0.7 m)
    w = check_units(one_case_plan(LENGTH_SLIP_TRIGGER_FACTOR * reach), lab)
    assert len(w) == 1 and "7.8 m" in w[0]
    # 30x the reach, 23.4: read as mm 0.0234 m, below 0.2 * 0.78 = 0.156 m; read as cm 0.234 m, which fits
    with pytest.raises(PlanFormatError, match="centimetres"):
        check_units(one_case_plan(30 * reach), lab)
    # 15x the reach, 11.7: as mm 0.0117 m, as cm 0.117 m, both below 0.156 m: no slip explains it,
    # so it is a warning, not a refusal
    (w,) = check_units(one_case_plan(15 * reach), lab)
    assert "11.7 m" in w and "+1571%" in w  # (11.7 - 0.7) / 0.7 = 15.71 (hand arithmetic)


def test_angle_edges(lab):
    assert check_units(one_case_plan(0.65, math.pi / 2), lab) == ()  # on the horizontal: not beyond
    # 90 (deg) is pi/2 rad read as degrees (1 deg = pi/180 rad): the largest value that fits
    with pytest.raises(PlanFormatError, match="degrees"):
        check_units(one_case_plan(0.65, 90.0), lab)
    # 91 read as degrees is still above the horizontal: no unit slip explains it, a warning
    (w,) = check_units(one_case_plan(0.65, 91.0), lab)
    assert "leaves +-pi/2" in w and "no unit slip explains it" in w


# --- warnings ------------------------------------------------------------------------------------------

def test_robot_with_twice_the_plans_leg_length_gives_a_warning_naming_both(demo, lab):
    plan_l = median_stance_length(demo)
    big = dataclasses.replace(lab, nominal_leg_length_m=2 * plan_l)
    (w,) = check_units(demo, big)
    # (l - 2 l) / (2 l) = -50 % (hand arithmetic), beyond the 25 % allowed
    assert f"median stance leg length {plan_l:.3g} m" in w and f"{2 * plan_l:.3g} m" in w
    assert "by -50%" in w and "nominal_leg_length_m" in w and str(DEMO) in w


def test_leg_length_warning_threshold(lab):
    # nominal 0.70 m (lab-biped-leg.toml); 0.70 * 1.25 = 0.875 m is the limit (in floating point 0.875 / 0.7 - 1
    # lands a hair above 0.25, so the sample inside is 0.874 m, +24.9 %); 0.70 * 1.26 = 0.882 m is beyond
    assert LEG_LENGTH_MISMATCH_FRACTION == 0.25
    assert check_units(one_case_plan(0.874), lab) == ()
    (w,) = check_units(one_case_plan(0.882), lab)
    assert "+26%" in w


def test_robot_without_nominal_length_is_compared_by_its_reach():
    (w,) = check_units(one_case_plan(0.5), "example-leg")  # no nominal_leg_length_m; reach 0.40 + 0.42 = 0.82 m
    # (0.5 - 0.82) / 0.82 = -39 % (hand arithmetic)
    assert "reach" in w and "0.82 m" in w and "-39%" in w


def test_mass_mismatch_warning(demo, lab):
    heavy = dataclasses.replace(lab, body_mass_kg=47.0)  # total 47 + 2.2 + 0.8 = 50 kg (lab-biped-leg.toml segments)
    (w,) = check_units(demo, heavy)
    # the demo's model.mass_kg is 25 kg: (25 - 50) / 50 = -50 % (hand arithmetic), beyond 25 %
    assert MASS_MISMATCH_FRACTION == 0.25
    assert "model.mass_kg 25 kg" in w and "50 kg" in w and "-50%" in w
    # a plan mass_kg entry wins over model.mass_kg: good.csv states mass_kg = 25
    (w,) = check_units(read_plan(FILES / "good.csv"), heavy)
    assert "the plan's mass_kg 25 kg" in w


# --- nothing the project ships or tests with is refused ---------------------------------------------

@pytest.mark.parametrize("robot", BUNDLED)
@pytest.mark.parametrize("name", ["demo-hop-plan.json", "demo-hop-plan.csv"])
def test_shipped_demo_passes_without_warning_on_every_bundled_robot(name, robot):
    assert check_units(read_plan(EXAMPLES / name), robot) == ()


def test_unmodified_demo_on_lab_biped_leg_passes_silently(demo, lab):
    assert check_units(demo, lab) == ()


# every good file with every bundled robot, except good_nondim_robot.csv with example-leg: that robot
# gives no nominal_leg_length_m, so the reader cannot scale the plan (PlanScalingError, tested elsewhere)
GOOD = [(name, robot) for name in ("good.csv", "good.json", "good_nondim.csv", "good_nondim_robot.csv")
        for robot in BUNDLED if (name, robot) != ("good_nondim_robot.csv", "example-leg")]


@pytest.mark.parametrize("name, robot", GOOD)
def test_good_plan_files_are_not_refused(name, robot):
    rob = as_robot(robot)
    warnings = check_units(read_plan(FILES / name, robot=rob), rob)
    # good_nondim.csv is made for l0 = 0.64 m; on example-leg (reach 0.82 m, no nominal length) its
    # stance median 0.95 * 0.64 = 0.608 m is (0.608 - 0.82) / 0.82 = -26 % off: the one warning
    expected = 1 if (name, robot) == ("good_nondim.csv", "example-leg") else 0
    assert len(warnings) == expected, warnings


def test_errors_are_legbridge_errors_and_value_errors(demo, lab):
    with pytest.raises(LegbridgeError) as e:
        check_units(scaled(demo, "leg_length_m", 1000.0), lab)
    assert isinstance(e.value, ValueError)
    assert re.search(r"expected .*, found ", str(e.value))
