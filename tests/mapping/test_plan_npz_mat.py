"""NPZ and MAT-file plan readers on files built by hand from the layouts in their module docstrings
(numpy.savez and scipy.io.savemat directly, not legbridge's writer), and their bad files."""

import numpy as np
import pytest
import scipy.io

from legbridge.robots.errors import PlanFormatError
from legbridge.mapping.readers import read_plan

T = [0.0, 0.05, 0.10, 0.15, 0.20]
L = [0.70, 0.68, 0.65, 0.68, 0.70]
A = [0.30, 0.20, 0.0, -0.20, -0.30]
FX = [0.0, -40.0, 0.0, 40.0, 0.0]
FZ = [0.0, 300.0, 500.0, 300.0, 0.0]
PH = ["flight", "stance", "stance", "stance", "flight"]


def npz_arrays(**changes):
    a = {
        "format": np.array("legbridge.plan/1"), "units": np.array("si"),
        "case_names": np.array(["nominal", "step_down_2cm"]),
        "meta/mass_kg": np.array(25.0), "metadata/scenario": np.array("invented"), "model/stiffness_n_per_m": np.array(2e4),
        "cases/0/time_s": np.array(T), "cases/0/leg_length_m": np.array(L), "cases/0/leg_angle_rad": np.array(A),
        "cases/0/force_x_n": np.array(FX), "cases/0/force_z_n": np.array(FZ), "cases/0/phase": np.array(PH),
        "cases/1/ground_height_m": np.array(-0.02),
        "cases/1/time_s": np.array(T), "cases/1/leg_length_m": np.array(L), "cases/1/leg_angle_rad": np.array(A),
        "cases/1/axial_force_n": np.array(FZ),
    }
    a.update(changes)
    return {k: v for k, v in a.items() if v is not None}


def test_good_npz(tmp_path):
    p = tmp_path / "plan.npz"
    np.savez(p, **npz_arrays())
    plan = read_plan(p)
    assert plan.case_names == ("nominal", "step_down_2cm")
    np.testing.assert_array_equal(plan.cases[0].force_z_n, FZ)
    np.testing.assert_array_equal(plan.cases[0].stance, [False, True, True, True, False])
    assert plan.cases[1].ground_height_m == -0.02
    # axial 300 N at 0.2 rad -> force_x = -300 sin 0.2 = -59.6008 N (hand arithmetic, README conventions)
    assert plan.cases[1].force_x_n[1] == pytest.approx(-59.6008, abs=1e-3)
    assert plan.metadata["scenario"] == "invented" and plan.metadata["model"] == {"stiffness_n_per_m": 2e4}
    assert plan.metadata["mass_kg"] == 25.0


def test_pickled_npz_is_refused(tmp_path):
    p = tmp_path / "plan.npz"
    np.savez(p, **npz_arrays(**{"cases/0/phase": np.array(PH, dtype=object)}))  # object array -> pickled
    with pytest.raises(PlanFormatError, match=r"'cases/0/phase': pickled \(object\) array refused.*allow_pickle=False"):
        read_plan(p)


NPZ_BAD = [
    ({"format": np.array("other/1")}, r"'format'.*expected 'legbridge\.plan/1'"),
    ({"units": np.array("cgs")}, r"'units'.*found 'cgs'"),
    ({"case_names": None}, r"missing array 'case_names'"),
    ({"extra": np.zeros(3)}, r"unknown array 'extra'"),
    ({"cases/2/time_s": np.array(T)}, r"'cases/2/time_s'.*i in 0\.\.1"),
    ({"cases/0/hip_q_rad": np.zeros(5)}, r"unknown column 'hip_q_rad' in case 'nominal'"),
    ({"cases/0/time_s": np.array([0.0, 0.05, 0.04, 0.15, 0.2])}, r"'cases/0/time_s\[2\]'.*strictly increasing"),
    ({"cases/0/leg_length_m": np.array([0.7, np.inf, 0.65, 0.68, 0.7])}, r"'cases/0/leg_length_m\[1\]'.*finite.*found inf"),
    ({"cases/0/time_s": np.array(["0", "1", "2", "3", "4"])}, r"'cases/0/time_s'.*array of numbers, found dtype <U1"),
    ({"cases/1/leg_angle_rad": None}, r"missing column 'leg_angle_rad' in case 'step_down_2cm'"),
    ({"meta/mass_kg": np.array(-1.0)}, r"'meta/mass_kg'.*positive"),
    ({"policy/time_s": np.array([0.0, 0.1])}, r"policy entry 'actuator_length_m' missing"),
]


@pytest.mark.parametrize("changes, match", NPZ_BAD)
def test_bad_npz(tmp_path, changes, match):
    p = tmp_path / "bad.npz"
    np.savez(p, **npz_arrays(**changes))
    with pytest.raises(PlanFormatError, match=match) as info:
        read_plan(p)
    assert str(info.value).startswith(str(p))


def test_not_an_npz(tmp_path):
    p = tmp_path / "plan.npz"
    p.write_text("time_s,leg_length_m\n")
    with pytest.raises(PlanFormatError, match="not an NPZ archive") as info:
        read_plan(p)
    assert "allow_pickle" not in str(info.value) and "never loads pickled data" in str(info.value)


def mat_vars(case_changes=None, **changes):
    c1 = {"name": "nominal", "ground_height_m": 0.0, "time_s": np.array(T), "leg_length_m": np.array(L),
          "leg_angle_rad": np.array(A), "force_x_n": np.array(FX), "force_z_n": np.array(FZ),
          "phase": np.array(PH, dtype=object)}
    c1.update(case_changes or {})
    c1 = {k: v for k, v in c1.items() if v is not None}
    c2 = {"name": "step_up_1cm", "ground_height_m": 0.01, "time_s": np.array(T), "leg_length_m": np.array(L),
          "leg_angle_rad": np.array(A), "axial_force_n": np.array(FZ)}
    cells = np.empty((1, 2), dtype=object)
    cells[0, 0], cells[0, 1] = c1, c2
    v = {"format": "legbridge.plan/1", "units": "si", "mass_kg": 25.0, "cases": cells,
         "model": {"damping_n_s_per_m": 40.0},
         "policy": {"time_s": np.array([0.0, 0.1]), "actuator_length_m": np.array([0.7, 0.71]),
                    "touchdown_angle_rad": np.array([0.25, 0.3])}}
    v.update(changes)
    return {k: x for k, x in v.items() if x is not None}


def test_good_mat(tmp_path):
    p = tmp_path / "plan.mat"
    scipy.io.savemat(p, mat_vars())
    plan = read_plan(p)
    assert plan.case_names == ("nominal", "step_up_1cm")
    np.testing.assert_array_equal(plan.cases[0].stance, [False, True, True, True, False])
    # axial 500 N at a = 0 -> (0, 500) N
    assert (plan.cases[1].force_x_n[2], plan.cases[1].force_z_n[2]) == (0.0, 500.0)
    assert plan.cases[1].ground_height_m == 0.01
    np.testing.assert_array_equal(plan.policy.actuator_length_m, [0.7, 0.71])
    assert plan.metadata["model"] == {"damping_n_s_per_m": 40.0}


def test_single_case_mat_and_char_matrix_phase(tmp_path):
    # a 1x1 cell comes back unwrapped from loadmat, and phase may be a (space-padded) char matrix
    p = tmp_path / "plan.mat"
    v = mat_vars({"phase": np.array(PH)})
    v["cases"] = v["cases"][:, :1]
    scipy.io.savemat(p, v)
    plan = read_plan(p)
    assert plan.case_names == ("nominal",)
    np.testing.assert_array_equal(plan.cases[0].stance, [False, True, True, True, False])


MAT_BAD = [
    ({}, {"units": "furlongs"}, r"'units'.*found 'furlongs'"),
    ({}, {"format": "x"}, r"'format'.*legbridge\.plan/1"),
    ({}, {"extra_var": 1.0}, r"unknown variable 'extra_var'"),
    ({"force_z_n": np.array([0.0, 300.0, np.nan, 300.0, 0.0])}, {}, r"'cases\{1\}\.force_z_n\(3\)'.*finite.*found nan"),
    ({"time_s": np.array([0.0, 0.05, 0.05, 0.15, 0.2])}, {}, r"'cases\{1\}\.time_s\(3\)'.*strictly increasing"),
    ({"hip_torque_nm": np.zeros(5)}, {}, r"'cases\{1\}\.hip_torque_nm'.*unknown field"),
    ({"name": None}, {}, r"'cases\{1\}\.name'.*case without a name"),
    ({"phase": np.array(["flight", "stance", "swing", "stance", "flight"], dtype=object)}, {}, r"'cases\{1\}\.phase\(3\)'.*found 'swing'"),
]


@pytest.mark.parametrize("case_changes, changes, match", MAT_BAD)
def test_bad_mat(tmp_path, case_changes, changes, match):
    p = tmp_path / "bad.mat"
    scipy.io.savemat(p, mat_vars(case_changes, **changes))
    with pytest.raises(PlanFormatError, match=match) as info:
        read_plan(p)
    assert str(info.value).startswith(str(p))


def test_not_a_mat_file(tmp_path):
    p = tmp_path / "plan.mat"
    p.write_bytes(b"\x00" * 200)
    with pytest.raises(PlanFormatError, match="not a readable MAT-file"):
        read_plan(p)
