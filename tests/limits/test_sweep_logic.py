"""Pure sweep logic (limits.sweep.model, limits.sweep.table, limits.sweep.plot) on hand-built results:
the window definition of issue 6, offset grids against numpy.linspace, apex errors against hand
arithmetic, the results table and the figure."""

import csv
import io
import json
import math

import numpy as np
import pytest

from legbridge.limits.checks.results import CheckSettings
from legbridge.limits.verdict import Verdict

CASE_EXCEEDS, CASE_NEAR, CASE_NOT_EVALUATED, CASE_WITHIN = Verdict.EXCEEDS, Verdict.NEAR, Verdict.NOT_EVALUATED, Verdict.WITHIN
from legbridge.limits.sweep.model import (
    END_FALL,
    END_LIMIT,
    END_NOT_EVALUATED,
    END_OPEN,
    NOT_CHECKED,
    OffsetResult,
    SweepInputError,
    apex_error,
    assemble,
    default_offsets,
    parse_offsets,
    setup_from_plan,
    sweep_window,
)

APEX = {"apex_time_s": (0.0, 0.37), "apex_z_m": (0.72, 0.72), "apex_vx_m_s": (1.5, 1.5)}


def res(h, verdict=CASE_WITHIN, *, fell=None, limit="peak_torque", joint="knee", u=0.5, findings=(), **kw):
    """A hand-built OffsetResult: fell='reason' for a fall (then not checked)."""
    if fell:
        return OffsetResult(h, f"c{h}", "fell", fell, 1.25, **{**APEX, **kw})
    return OffsetResult(h, f"c{h}", "completed", None, 2.0, verdict=verdict, worst=((limit, u),), worst_limit=limit,
                        worst_joint=joint, worst_utilisation=u, findings=tuple(findings), **{**APEX, **kw})


def test_window_is_the_contiguous_run_containing_zero_and_names_what_closes_it():
    """Issue 6 definition: the contiguous window of offsets containing 0 that complete within the
    modelled limits ('near' counts as within), closed by a fall or by the limit exceeded next to it."""
    rs = [res(0.04, fell="body moving backward"), res(-0.04, CASE_EXCEEDS, u=1.3, joint="hip"), res(-0.02, CASE_NEAR, u=0.95),
          res(0.0), res(0.02), res(-0.06, fell="leg compressed below minimum length")]
    w = sweep_window(rs)  # any input order
    assert (w.lo_m, w.hi_m, w.n_within) == (-0.02, 0.02, 3)
    assert w.below.kind == END_LIMIT and w.below.first_out_m == -0.04 and w.below.limit == "peak_torque"
    assert w.below.joint == "hip" and w.below.utilisation == 1.3 and "130.0 %" in w.below.text
    assert w.above.kind == END_FALL and w.above.first_out_m == 0.04 and "body moving backward" in w.above.text
    # a within offset beyond a failing one does not join the window (contiguity)
    w2 = sweep_window([res(-0.02), res(0.0), res(0.02, CASE_EXCEEDS, u=1.1), res(0.04)])
    assert (w2.lo_m, w2.hi_m) == (-0.02, 0.0) and w2.below.kind == END_OPEN and w2.below.first_out_m is None


def test_window_fails_closed():
    """Fail closed: an unevaluated offset closes the window; a failing nominal empties it."""
    w = sweep_window([res(0.0), res(0.01, CASE_NOT_EVALUATED, findings=("QP motion: solver status 'infeasible'",))])
    assert w.above.kind == END_NOT_EVALUATED and "infeasible" in w.above.text and (w.lo_m, w.hi_m) == (0.0, 0.0)
    # findings on a case whose samples are 'within' still mean not evaluated
    assert not res(0.0, CASE_WITHIN, findings=("mapping: unreachable (1 samples)",)).within
    e = sweep_window([res(-0.01), res(0.0, CASE_EXCEEDS, u=math.inf, limit="friction_cone", joint=""), res(0.01)])
    assert e.empty and e.n_within == 0 and "not finite" in e.below.text
    # no zero in the grid: the offset nearest 0 anchors the window
    n = sweep_window([res(-0.03, CASE_EXCEEDS, u=2.0), res(0.01), res(0.03)])
    assert (n.lo_m, n.hi_m) == (0.01, 0.03) and n.above.kind == END_OPEN
    with pytest.raises(SweepInputError):
        sweep_window([])


def test_offset_grids_match_numpy_linspace():
    """Reference: numpy.linspace (N evenly spaced values, both ends included); default grid 11
    offsets over +-0.1 l0 (issue 6, common practice)."""
    np.testing.assert_allclose(parse_offsets("-0.05:0.05:5"), np.linspace(-0.05, 0.05, 5), atol=1e-15)
    assert parse_offsets("-0.05:0.05:5")[2] == 0.0 and parse_offsets("0.02:0.02:1") == (0.02,)
    d = default_offsets(0.70)
    np.testing.assert_allclose(d, np.linspace(-0.07, 0.07, 11), atol=1e-15)
    assert len(d) == 11 and d[5] == 0.0
    for bad in ("0.1:-0.1:3", "a:b:3", "0:1", "0:1:0", "0:1:1", "0:1:2.5", "nan:1:3"):
        with pytest.raises(SweepInputError, match="LO:HI:N"):
            parse_offsets(bad)


def test_apex_error_by_hand():
    """Hand arithmetic: apexes after the initial one are paired k-th with k-th; RMS of (0.03, -0.04) m
    is sqrt((0.03^2 + 0.04^2) / 2) = 0.035355 m; the final difference is the last paired one."""
    nom = res(0.0, apex_time_s=(0, 0.37, 0.74, 1.11), apex_z_m=(0.72, 0.72, 0.72, 0.72), apex_vx_m_s=(1.5, 1.5, 1.5, 1.5))
    case = res(0.02, apex_time_s=(0, 0.36, 0.72), apex_z_m=(0.72, 0.75, 0.68), apex_vx_m_s=(1.5, 1.4, 1.7))
    e = apex_error(case, nom)
    assert e.n_paired == 2 and e.n_apex == 2 and e.n_apex_nominal == 3
    np.testing.assert_allclose(e.dz_m, (0.03, -0.04), atol=1e-15)
    assert e.rms_dz_m == pytest.approx(0.0353553, abs=1e-7) and e.final_dz_m == pytest.approx(-0.04)
    assert e.rms_dvx_m_s == pytest.approx(math.sqrt((0.01 + 0.04) / 2)) and e.final_dvx_m_s == pytest.approx(0.2)
    fell0 = res(0.2, fell="no foot clearance at apex", apex_time_s=(0.0,), apex_z_m=(0.72,), apex_vx_m_s=(1.5,))
    e0 = apex_error(fell0, nom)
    assert e0.n_paired == 0 and math.isnan(e0.rms_dz_m)


def _sweep(rs):
    from legbridge.mapping.slip import demo_plan

    setup = setup_from_plan(demo_plan(heights_m=(0.0,)))
    info = {"plan_path": "p.json", "plan_sha256": "ab" * 32, "robot_name": "leg", "robot_path": "/r.toml",
            "robot_sha256": "cd" * 32, "nominal_leg_length_m": 0.7}
    return assemble(info, CheckSettings(), setup, rs, [r for r in rs if r.offset_m == 0.0][0])


def test_table_and_json_round_trip(tmp_path):
    """CSV read back with the csv module and JSON with json: the same offsets, in order, non-finite as empty / null."""
    from legbridge.limits.sweep.table import to_csv_text, to_json_doc, write_csv

    sw = _sweep([res(0.02, fell="body moving backward"), res(0.0), res(-0.02, CASE_EXCEEDS, u=math.inf, limit="friction_cone", joint="")])
    rows = list(csv.DictReader(io.StringIO(to_csv_text([sw]))))
    assert [float(r["offset_m"]) for r in rows] == [-0.02, 0.0, 0.02]
    assert [r["in_window"] for r in rows] == ["0", "1", "0"] and rows[2]["verdict"] == NOT_CHECKED
    assert rows[0]["worst_utilisation"] == "inf" and rows[2]["worst_utilisation"] == ""
    assert rows[1]["utilisation_peak_torque"] == "0.5"
    doc = json.loads(json.dumps(to_json_doc([sw]), allow_nan=False))
    s = doc["sweeps"][0]
    assert s["window"]["lo_m"] == 0.0 and s["window"]["above"]["kind"] == "fall" and s["offsets"][0]["worst_utilisation"] is None
    out = write_csv([sw], tmp_path / "t.csv")
    from legbridge.robots.errors import OutputExistsError

    with pytest.raises(OutputExistsError, match="--force"):
        write_csv([sw], out)
    write_csv([sw], out, force=True)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["t.csv"]


def test_plot_marks_window_falls_and_limit_line():
    """The figure: one series per limit, the 100 % line, the window span, the fallen offsets, axis units."""
    from legbridge.limits.sweep.plot import plot_sweep

    rs = [res(-0.02, CASE_EXCEEDS, u=1.4), res(0.0, u=0.8), res(0.02, u=0.9), res(0.04, fell="body moving backward")]
    fig = plot_sweep(_sweep(rs))
    ax = fig.axes[0]
    assert ax.get_xlabel() == "ground offset [m]" and "%" in ax.get_ylabel()
    labels = [line.get_label() for line in ax.get_lines()]
    assert "peak torque" in labels and "100 % of the limit" in labels and "reduced model fell" in labels
    torque = [line for line in ax.get_lines() if line.get_label() == "peak torque"][0]
    np.testing.assert_allclose(torque.get_ydata(), [140.0, 80.0, 90.0, np.nan])
    spans = [p for p in ax.patches if p.get_label().startswith("window")]
    assert len(spans) == 1 and spans[0].get_label() == "window +0.000 to +0.020 m"
