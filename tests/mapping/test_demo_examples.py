"""The shipped demo plans are what the in-memory demo produces (the script in examples/ made them)."""

from pathlib import Path

import numpy as np

from legbridge.mapping.readers import read_plan
from legbridge.mapping.slip import demo_plan

EXAMPLES = Path(__file__).resolve().parents[2] / "examples"


def test_shipped_demo_plans_match_the_simulator():
    ref = demo_plan()
    for name in ("demo-hop-plan.json", "demo-hop-plan.csv"):
        shipped = read_plan(EXAMPLES / name)
        assert shipped.case_names == ref.case_names, name
        for a, b in zip(shipped.cases, ref.cases):
            assert a.ground_height_m == b.ground_height_m
            for col in ("time_s", "leg_length_m", "leg_angle_rad", "force_x_n", "force_z_n", "body_z_m"):
                np.testing.assert_allclose(getattr(a, col), getattr(b, col), rtol=0, atol=1e-9, err_msg=f"{name} {col}")
            np.testing.assert_array_equal(a.stance, b.stance)
