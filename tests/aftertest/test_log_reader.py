"""Hardware log reader: good logs in three formats give the same SI arrays; bad logs and mappings
raise a LegbridgeError naming the file, and no input is ever changed."""

import hashlib
import sys
from pathlib import Path

import numpy as np
import pytest
import scipy.io

from legbridge.limits.aftertest.log_reader import read_log
from legbridge.robots.errors import InputFileNotFound, LegbridgeError, LogFormatError
from legbridge.robots.motor_constants import current_to_dc_equivalent

sys.path.insert(0, str(Path(__file__).parent))
import log_corpus  # noqa: E402

BIPED_JOINTS = ("left_hip", "left_knee", "right_hip", "right_knee")
BIPED_LEGS = ("left", "right")


def _columns(n=50, seed=3):
    """An INVENTED biped log in file units: time in ms at an irregular rate, positions in degrees,
    velocities in rpm, currents as phase-peak amperes, temperatures in kelvin."""
    rng = np.random.default_rng(seed)
    t_ms = np.cumsum(rng.uniform(0.8, 1.2, n))
    cols = {"t": t_ms}
    for j in BIPED_JOINTS:
        cols[f"{j}_q"] = rng.uniform(-90, 90, n)
        cols[f"{j}_qd"] = rng.uniform(-300, 300, n)
        cols[f"{j}_i"] = rng.uniform(-20, 20, n)
        cols[f"{j}_Tw"] = rng.uniform(290, 360, n)
    cols["lc"] = (np.arange(n) % 10 < 5).astype(float)
    cols["fz"] = rng.uniform(0, 600, n)
    cols["vbus"] = np.full(n, 48.0)
    cols["cpu"] = rng.uniform(0, 1, n)
    return cols


def _mapping_text():
    lines = ['[time]', 'column = "t"', 'unit = "ms"', 'ignore = ["cpu"]']
    for j in BIPED_JOINTS:
        lines += [f"[joints.{j}]",
                  f'position = {{ column = "{j}_q", unit = "deg" }}',
                  f'velocity = {{ column = "{j}_qd", unit = "rpm" }}',
                  f'current = {{ column = "{j}_i", unit = "A", convention = "phase_peak" }}',
                  f'winding_temp = {{ column = "{j}_Tw", unit = "K" }}']
    lines += ["[legs.left]", 'contact = { column = "lc" }', 'ground_force_z = { column = "fz", unit = "N" }',
              "[robot]", 'bus_voltage = { column = "vbus", unit = "V" }']
    return "\n".join(lines) + "\n"


def _write_csv(path, cols):
    names = list(cols)
    table = np.column_stack([cols[c] for c in names])
    np.savetxt(path, table, delimiter=",", header=",".join(names), comments="", fmt="%.17g")


def _write_all(tmp_path, cols):
    _write_csv(tmp_path / "log.csv", cols)
    np.savez(tmp_path / "log.npz", **cols)
    scipy.io.savemat(tmp_path / "log.mat", cols)
    scipy.io.savemat(tmp_path / "log_struct.mat", {"log": cols})
    (tmp_path / "map.toml").write_text(_mapping_text())
    return ["log.csv", "log.npz", "log.mat", "log_struct.mat"]


@pytest.mark.parametrize("name", ["log.csv", "log.npz", "log.mat", "log_struct.mat"])
def test_good_log_reads_back_to_si_in_every_format(tmp_path, name):
    cols = _columns()
    _write_all(tmp_path, cols)
    before = {p.name: p.read_bytes() for p in tmp_path.iterdir()}
    log = read_log(tmp_path / name, tmp_path / "map.toml", joints=BIPED_JOINTS, legs=BIPED_LEGS)
    # reference: ms -> s is the definition of the prefix milli (1e-3)
    np.testing.assert_allclose(log.time_s, cols["t"] * 1e-3, rtol=1e-15)
    for j in BIPED_JOINTS:
        # reference: numpy.deg2rad for degrees; rpm -> rad/s = 2 pi / 60 (one turn is 2 pi rad, a minute 60 s)
        np.testing.assert_allclose(log.get(j, "position"), np.deg2rad(cols[f"{j}_q"]), rtol=1e-14)
        np.testing.assert_allclose(log.get(j, "velocity"), cols[f"{j}_qd"] * 2 * np.pi / 60, rtol=1e-14)
        # reference: the project's motor-constant conventions, called directly
        np.testing.assert_allclose(log.get(j, "current"), current_to_dc_equivalent(cols[f"{j}_i"], "phase_peak"))
        # reference: degC = K - 273.15 (SI definition of the Celsius scale)
        np.testing.assert_allclose(log.get(j, "winding_temp"), cols[f"{j}_Tw"] - 273.15, rtol=1e-14)
    np.testing.assert_array_equal(log.get("left", "contact"), cols["lc"] == 1)
    assert log.get("left", "contact").dtype == bool
    np.testing.assert_array_equal(log.get("left", "ground_force_z"), cols["fz"])
    np.testing.assert_array_equal(log.get("robot", "bus_voltage"), cols["vbus"])
    assert log.get("right", "contact") is None and log.sync is None
    # reference: hashlib over the file's bytes
    assert log.sha256 == hashlib.sha256((tmp_path / name).read_bytes()).hexdigest()
    assert not log.time_s.flags.writeable
    assert {p.name: p.read_bytes() for p in tmp_path.iterdir()} == before


def test_conventional_names_with_comments_empty_cells_and_sync(tmp_path):
    g = log_corpus.good_columns()
    g["knee_current_a"][6] = ""
    (tmp_path / "log.csv").write_bytes(log_corpus.csv_bytes(g, comments="# robot: invented\n# rate 500 Hz\n\n"))
    log = read_log(tmp_path / "log.csv", joints=log_corpus.JOINTS, legs=log_corpus.LEGS)
    np.testing.assert_array_equal(log.time_s, g["time_s"])
    cur = log.get("knee", "current")
    assert np.isnan(cur[6]) and np.count_nonzero(np.isnan(cur)) == 1
    np.testing.assert_array_equal(log.sync, g["sync"])
    assert any("empty" in n for n in log.notes)
    assert set(log.joints()) == {"hip", "knee"}


def test_phase_rms_current_and_motor_side_position(tmp_path):
    g = log_corpus.mapped_columns()
    (tmp_path / "log.csv").write_bytes(log_corpus.csv_bytes(g))
    text = log_corpus.MAPPING.replace('{ column = "kq", unit = "rad" }',
                                      '{ column = "kq", unit = "rev", side = "motor", gear_ratio = 9 }')
    (tmp_path / "map.toml").write_text(text)
    log = read_log(tmp_path / "log.csv", tmp_path / "map.toml", joints=log_corpus.JOINTS, legs=log_corpus.LEGS)
    # reference: robots.motor_constants (phase rms -> DC-equivalent is x sqrt 2, Hughes and Drury via that module)
    np.testing.assert_allclose(log.get("knee", "current"), current_to_dc_equivalent(np.array(g["ki"]), "phase_rms"))
    np.testing.assert_allclose(log.get("knee", "current"), np.array(g["ki"]) * np.sqrt(2))
    # reference: one turn = 2 pi rad, a motor-side angle divided by the gear ratio is the joint's
    np.testing.assert_allclose(log.get("knee", "position"), np.array(g["kq"]) * 2 * np.pi / 9)


def test_error_names_the_csv_line_of_the_bad_sample(tmp_path):
    # hand-worked: two comment lines and a blank line put the header on line 4, so sample 9 (0-based) is line 14
    g = log_corpus.good_columns()
    g["time_s"][9] = 0.001
    (tmp_path / "log.csv").write_bytes(log_corpus.csv_bytes(g, comments="# a\n# b\n\n"))
    with pytest.raises(LogFormatError) as err:
        read_log(tmp_path / "log.csv", joints=log_corpus.JOINTS, legs=log_corpus.LEGS)
    msg = str(err.value)
    assert "row 14" in msg and "'time_s'" in msg and "expected" in msg and "found 0.001" in msg


def test_unknown_column_lists_what_is_accepted(tmp_path):
    g = log_corpus.good_columns()
    g["cpu_load"] = [0.1] * log_corpus.N
    (tmp_path / "log.csv").write_bytes(log_corpus.csv_bytes(g))
    with pytest.raises(LogFormatError) as err:
        read_log(tmp_path / "log.csv", joints=log_corpus.JOINTS, legs=log_corpus.LEGS)
    msg = str(err.value)
    assert "'cpu_load'" in msg and "knee_housing_temp_c" in msg and "leg_ground_force_x_n" in msg and "mapping" in msg


def test_npz_error_names_the_sample_index(tmp_path):
    g = {k: np.asarray(v, dtype=float) for k, v in log_corpus.good_columns().items()}
    g["leg_contact"][11] = 0.5
    np.savez(tmp_path / "log.npz", **g)
    with pytest.raises(LogFormatError, match=r"leg_contact\[11\]'.*expected 0 or 1"):
        read_log(tmp_path / "log.npz", joints=log_corpus.JOINTS, legs=log_corpus.LEGS)


@pytest.mark.parametrize("case", log_corpus.cases(), ids=lambda c: c.name)
def test_bad_input_corpus(tmp_path, case):
    for name, data in case.files.items():
        if data is None:
            (tmp_path / name).mkdir()
        else:
            (tmp_path / name).write_bytes(data)
    before = {p.name: (p.read_bytes() if p.is_file() else None) for p in tmp_path.iterdir()}
    mapping = None if case.mapping is None else tmp_path / case.mapping
    try:
        read_log(tmp_path / case.log, mapping, joints=log_corpus.JOINTS, legs=log_corpus.LEGS)
    except LegbridgeError as exc:
        msg = str(exc)
    else:
        pytest.fail(f"{case.name}: no error")
    blamed = case.log if case.blame == "log" else case.mapping
    assert blamed in msg, msg
    assert "\n" not in msg
    assert {p.name: (p.read_bytes() if p.is_file() else None) for p in tmp_path.iterdir()} == before


def test_corpus_is_large_and_its_base_files_are_valid(tmp_path):
    cases = log_corpus.cases()
    assert len(cases) >= 30 and len({c.name for c in cases}) == len(cases)
    (tmp_path / "good.csv").write_bytes(log_corpus.csv_bytes(log_corpus.good_columns()))
    (tmp_path / "mapped.csv").write_bytes(log_corpus.csv_bytes(log_corpus.mapped_columns()))
    (tmp_path / "map.toml").write_text(log_corpus.MAPPING)
    a = read_log(tmp_path / "good.csv", joints=log_corpus.JOINTS, legs=log_corpus.LEGS)
    b = read_log(tmp_path / "mapped.csv", tmp_path / "map.toml", joints=log_corpus.JOINTS, legs=log_corpus.LEGS)
    np.testing.assert_allclose(b.time_s, a.time_s, rtol=1e-12)
    np.testing.assert_allclose(b.get("hip", "position"), a.get("hip", "position"), atol=1e-6)
    np.testing.assert_allclose(b.get("knee", "winding_temp"), a.get("knee", "winding_temp"), atol=1e-9)


def test_missing_file_and_folder_are_input_errors(tmp_path):
    with pytest.raises(InputFileNotFound, match="nothing"):
        read_log(tmp_path / "none.csv", joints=("hip",), legs=("leg",))
    (tmp_path / "d.csv").mkdir()
    with pytest.raises(InputFileNotFound, match="folder"):
        read_log(tmp_path / "d.csv", joints=("hip",), legs=("leg",))


def test_both_csv_parsers_agree(tmp_path):
    # an all-number file takes NumPy's parser, one quoted cell sends it to the csv module's: same values,
    # and the same line numbers in messages (hand-worked: the header is line 2 after one comment line)
    g = log_corpus.good_columns()
    (tmp_path / "a.csv").write_bytes(log_corpus.csv_bytes(g))
    q = log_corpus.good_columns()
    q["bus_voltage_v"][0] = '"48.0"'
    (tmp_path / "b.csv").write_bytes(log_corpus.csv_bytes(q))
    a, b = (read_log(tmp_path / n, joints=log_corpus.JOINTS, legs=log_corpus.LEGS) for n in ("a.csv", "b.csv"))
    for ca, cb in zip(a.channels, b.channels):
        assert (ca.owner, ca.quantity) == (cb.owner, cb.quantity)
        np.testing.assert_array_equal(ca.values, cb.values)
    np.testing.assert_array_equal(a.time_s, b.time_s)
    for name, cols in (("c.csv", g), ("d.csv", q)):
        bad = {k: list(v) for k, v in cols.items()}
        bad["hip_position_rad"][4] = 2e6
        (tmp_path / name).write_bytes(log_corpus.csv_bytes(bad))
        with pytest.raises(LogFormatError, match=r"row 7: 'hip_position_rad'"):
            read_log(tmp_path / name, joints=log_corpus.JOINTS, legs=log_corpus.LEGS)
