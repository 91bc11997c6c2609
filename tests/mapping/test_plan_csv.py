"""CSV plan reader: good files read exactly, every bad file refused naming file, row and column.

Rows are file line numbers (header = row 1 when the file has no comment lines), as a spreadsheet
or an editor shows them; the bad files are small edits of one two-case table (see plan_files/)."""

from pathlib import Path

import numpy as np
import pytest

from legbridge.robots.errors import PlanFormatError
from legbridge.mapping.readers import read_plan

FILES = Path(__file__).parent / "plan_files"


def test_good_csv_values_as_written():
    plan = read_plan(FILES / "good.csv")
    assert plan.case_names == ("nominal", "step_up_3cm")  # order of first appearance
    nom, up = plan.cases
    # the numbers typed into good.csv
    np.testing.assert_array_equal(nom.time_s, [0.0, 0.05, 0.10, 0.15, 0.20])
    np.testing.assert_array_equal(up.force_z_n, [0.0, 350.0, 520.0, 350.0, 0.0])
    np.testing.assert_array_equal(up.force_x_n, [0.0, -50.0, 0.0, 50.0, 0.0])
    np.testing.assert_array_equal(nom.stance, [False, True, True, True, False])
    np.testing.assert_array_equal(up.body_x_m, [0.0, 0.05, 0.10, 0.15, 0.20])
    assert (nom.ground_height_m, up.ground_height_m) == (0.0, 0.03)
    assert plan.metadata["model"] == {"stiffness_n_per_m": 20000}
    assert plan.metadata["mass_kg"] == 25.0
    assert plan.metadata["scenario"] == "invented demo hop (not measured data)"
    assert plan.scaling is None


def test_single_case_without_case_column_is_named_nominal():
    plan = read_plan(FILES / "good_nondim.csv")
    assert plan.case_names == ("nominal",)


BAD = [
    ("bad_header.csv", r"row 1: 'time': unknown column 'time'; expected only known columns \['case', 'ground_height_m', 'time_s'"),
    ("bad_missing_column.csv", r"row 1: missing column 'leg_angle_rad'"),
    ("bad_duplicate_column.csv", r"row 1: 'time_s': column 'time_s' given twice"),
    ("bad_nan.csv", r"row 4: 'force_z_n': value is not a finite number.*found nan"),
    ("bad_text_cell.csv", r"row 3: 'leg_length_m': not a number; expected a number, found '0\.68 m'"),
    ("bad_empty_cell.csv", r"row 5: 'leg_angle_rad': not a number.*empty cell"),
    ("bad_decreasing_time.csv", r"row 5: 'time_s': time does not increase.*above .* 0\.1 s.*found 0\.09"),
    ("bad_units.csv", r"row 1: 'units': unknown unit system; expected one of \['si', 'nondimensional'\], found 'inches'"),
    ("bad_format_tag.csv", r"row 1: 'format'.*found 'otherplan/3'"),
    ("bad_mass_meta.csv", r"row 3: 'mass_kg': expected a positive number, found '-3'"),
    ("bad_ragged_row.csv", r"row 6: wrong number of cells; expected 7 cells.*found 6 cells"),
    ("bad_cases_interleaved.csv", r"row 10: 'case': rows of case 'a' are not together; expected rows grouped by case"),
    ("bad_phase.csv", r"row 3: 'phase': unknown phase; expected one of \['stance', 'flight'\], found 'contact'"),
    ("bad_flight_force.csv", r"row 6: 'force_z_n': ground force in a flight sample"),
    ("bad_pull_force.csv", r"row 9: 'force_z_n': the ground pulls on the foot.*found -25 N"),
    ("bad_leg_length.csv", r"row 4: 'leg_length_m': leg length is not positive.*found -0\.65"),
    ("bad_single_sample.csv", r"'time_s': case 'a' is too short; expected at least 2 samples"),
    ("bad_ground_changes.csv", r"row 3: 'ground_height_m': ground height changes within case 'a'.*found 0\.02"),
    ("bad_empty.csv", r"no header row"),
]


@pytest.mark.parametrize("name, match", BAD)
def test_bad_csv_refused_with_a_clear_message(name, match):
    with pytest.raises(PlanFormatError, match=match) as info:
        read_plan(FILES / name)
    assert str(info.value).startswith(str(FILES / name))  # the message starts with the file


def test_row_numbers_count_comment_lines(tmp_path):
    # good.csv has 6 comment lines: the header is line 7, the second data row line 9
    text = (FILES / "good.csv").read_text().replace("nominal,0.0,0.05,0.68,0.20,-40.0,300.0", "nominal,0.0,0.05,x,0.20,-40.0,300.0")
    p = tmp_path / "plan.csv"
    p.write_text(text)
    with pytest.raises(PlanFormatError, match=r"row 9: 'leg_length_m': not a number.*found 'x'"):
        read_plan(p)


def test_missing_file_and_unknown_extension(tmp_path):
    from legbridge.robots.errors import InputFileNotFound

    with pytest.raises(InputFileNotFound, match="plan file not found"):
        read_plan(tmp_path / "absent.csv")
    with pytest.raises(PlanFormatError, match=r"found '\.xlsx'"):
        read_plan(tmp_path / "plan.xlsx")
