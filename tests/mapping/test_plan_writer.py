"""write_plan: round trips through every format, overwrite refusal, atomic writes, refusals."""

from pathlib import Path

import numpy as np
import pytest

from legbridge.robots.errors import PlanFormatError
from legbridge.mapping.plan_writer import write_plan
from legbridge.mapping.readers import read_plan
from legbridge.robots.errors import OutputExistsError

FILES = Path(__file__).parent / "plan_files"
CASE_ARRAYS = ("time_s", "leg_length_m", "leg_angle_rad", "force_x_n", "force_z_n", "stance",
               "body_x_m", "body_z_m", "body_vx_m_s", "body_vz_m_s", "actuator_length_m", "spring_deflection_m")


def assert_same_plan(a, b, policy=True):
    """Same cases, values bit for bit (the writers store shortest-repr / binary doubles), metadata, policy."""
    assert a.case_names == b.case_names
    for ca, cb in zip(a.cases, b.cases):
        assert ca.ground_height_m == cb.ground_height_m
        for k in CASE_ARRAYS:
            va, vb = getattr(ca, k), getattr(cb, k)
            assert (va is None) == (vb is None), k
            if va is not None:
                np.testing.assert_array_equal(va, vb, err_msg=k)
    drop = ("phase_source",)
    assert {k: v for k, v in a.metadata.items() if k not in drop} == {k: v for k, v in b.metadata.items() if k not in drop}
    if policy and a.policy is not None:
        for k in ("time_s", "actuator_length_m", "touchdown_angle_rad"):
            np.testing.assert_array_equal(getattr(a.policy, k), getattr(b.policy, k))


@pytest.mark.parametrize("ext", [".json", ".npz", ".mat"])
def test_round_trip_with_policy(tmp_path, ext):
    plan = read_plan(FILES / "good.json")
    out = write_plan(plan, tmp_path / f"plan{ext}")
    back = read_plan(out)
    assert_same_plan(plan, back)
    assert back.policy is not None
    # the stance mask came back from the written phase column
    assert set(back.metadata["phase_source"].values()) == {"phase column"}


def test_refuses_to_overwrite_unless_forced(tmp_path):
    plan = read_plan(FILES / "good.json")
    target = tmp_path / "plan.json"
    target.write_text("keep me")
    with pytest.raises(OutputExistsError, match=r"plan\.json.*exists.*force"):
        write_plan(plan, target)
    assert target.read_text() == "keep me"
    write_plan(plan, target, force=True)
    assert read_plan(target).case_names == plan.case_names
    assert [p.name for p in tmp_path.iterdir()] == ["plan.json"]  # no temporary file left


def test_failed_write_leaves_nothing(tmp_path):
    # a plan with a policy cannot be stored as CSV: refused, and neither the target nor a temp file exists
    plan = read_plan(FILES / "good.json")
    with pytest.raises(PlanFormatError, match="policy"):
        write_plan(plan, tmp_path / "plan.csv")
    assert list(tmp_path.iterdir()) == []


def test_unknown_extension(tmp_path):
    plan = read_plan(FILES / "good.json")
    with pytest.raises(PlanFormatError, match=r"extension in \['\.csv', '\.json', '\.npz', '\.mat'\], found '\.txt'"):
        write_plan(plan, tmp_path / "plan.txt")


@pytest.mark.parametrize("ext", [".csv", ".json", ".npz", ".mat"])
@pytest.mark.parametrize("source", ["good.csv", "good_nondim.csv"])
def test_round_trip_without_policy(tmp_path, ext, source):
    plan = read_plan(FILES / source)
    back = read_plan(write_plan(plan, tmp_path / f"plan{ext}"))
    if plan.scaling is None:
        assert_same_plan(plan, back)
    else:
        # written in SI: the scaling is kept as the plan-level values, the samples are unchanged
        assert back.scaling is None
        assert back.metadata["nominal_leg_length_m"] == plan.scaling.length_m == 0.64
        assert back.metadata["mass_kg"] == 25.0 and back.metadata["gravity_m_s2"] == 9.81
        for k in ("time_s", "leg_length_m", "force_x_n", "force_z_n", "body_vx_m_s", "stance"):
            np.testing.assert_array_equal(getattr(plan.cases[0], k), getattr(back.cases[0], k), err_msg=k)


def test_csv_refuses_cases_with_different_columns(tmp_path):
    # good.json: the second case has no body_z_m; one CSV header cannot hold both without empty cells
    import dataclasses

    plan = dataclasses.replace(read_plan(FILES / "good.json"), policy=None)
    with pytest.raises(PlanFormatError, match="same columns"):
        write_plan(plan, tmp_path / "plan.csv")


def test_nested_metadata_kept_except_in_csv(tmp_path):
    # tables, lists, true/false and null survive JSON, NPZ and MAT (as JSON text there); CSV refuses them
    import dataclasses

    plan = read_plan(FILES / "good.csv")
    extra = {"rig": {"treadmill": True, "reason": None}, "heights_m": [0.0, -0.03]}
    nested = dataclasses.replace(plan, metadata={**plan.metadata, **extra})
    with pytest.raises(PlanFormatError, match=r"'metadata\.rig'.*text or a number"):
        write_plan(nested, tmp_path / "plan.csv")
    for ext in (".json", ".npz", ".mat"):
        back = read_plan(write_plan(nested, tmp_path / f"plan{ext}"))
        assert back.metadata["rig"] == {"treadmill": True, "reason": None}, ext
        assert back.metadata["heights_m"] == [0.0, -0.03], ext
        assert back.metadata["scenario"] == plan.metadata["scenario"], ext
