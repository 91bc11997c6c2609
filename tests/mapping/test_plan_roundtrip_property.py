"""Property: any valid plan written by write_plan reads back identically, in every format
(a conservation check on the file layouts: nothing lost, nothing changed, bit for bit)."""

import tempfile
from pathlib import Path

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from legbridge.mapping.plan import Plan, ReducedTrajectory, frozen_array
from legbridge.mapping.plan_writer import write_plan
from legbridge.mapping.readers import read_plan

finite = st.floats(min_value=-1e6, max_value=1e6, allow_nan=False, allow_infinity=False)


@st.composite
def plans(draw):
    n_cases = draw(st.integers(1, 3))
    cases = []
    with_body = draw(st.booleans())
    for k in range(n_cases):
        n = draw(st.integers(2, 12))
        dt = np.array(draw(st.lists(st.floats(1e-4, 0.5), min_size=n, max_size=n)))
        t = np.cumsum(dt) - dt[0]
        stance = np.array(draw(st.lists(st.booleans(), min_size=n, max_size=n)))
        fz = np.where(stance, np.array(draw(st.lists(st.floats(0.0, 2e3), min_size=n, max_size=n))), 0.0)
        fx = np.where(stance, np.array(draw(st.lists(st.floats(-5e2, 5e2), min_size=n, max_size=n))), 0.0)
        body = np.array(draw(st.lists(finite, min_size=n, max_size=n))) if with_body else None
        cases.append(ReducedTrajectory(
            name=draw(st.sampled_from(["nominal", "step up", "drop,2cm", "ü-case"])) + f"-{k}",
            time_s=frozen_array(t),
            leg_length_m=frozen_array(draw(st.lists(st.floats(1e-3, 2.0), min_size=n, max_size=n))),
            leg_angle_rad=frozen_array(draw(st.lists(st.floats(-1.5, 1.5), min_size=n, max_size=n))),
            force_x_n=frozen_array(fx), force_z_n=frozen_array(fz), stance=frozen_array(stance, dtype=bool),
            ground_height_m=draw(st.floats(-0.2, 0.2)), body_z_m=None if body is None else frozen_array(body),
        ))
    return Plan(path="", sha256="", cases=tuple(cases), metadata={"note": "invented", "seed": draw(st.integers(0, 99))})


@settings(max_examples=20, deadline=None)
@given(plan=plans())
def test_written_plans_read_back_identically(plan):
    with tempfile.TemporaryDirectory() as d:
        for ext in (".csv", ".json", ".npz", ".mat"):
            back = read_plan(write_plan(plan, Path(d) / f"p{ext}"))
            assert back.case_names == plan.case_names, ext
            assert {k: v for k, v in back.metadata.items() if k != "phase_source"} == plan.metadata, ext
            for a, b in zip(plan.cases, back.cases):
                assert a.ground_height_m == b.ground_height_m, ext
                for k in ("time_s", "leg_length_m", "leg_angle_rad", "force_x_n", "force_z_n", "stance", "body_z_m"):
                    va, vb = getattr(a, k), getattr(b, k)
                    assert (va is None) == (vb is None), (ext, k)
                    if va is not None:
                        np.testing.assert_array_equal(va, vb, err_msg=f"{ext} {k}")
