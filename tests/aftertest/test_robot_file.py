"""The corrected robot file (limits/aftertest/robot_file.py): identified values written into a copy of
the robot TOML, its text otherwise kept.

References: the written file is parsed by tomllib (the standard library's TOML reader, not the text
editor under test); converted constants are held against the conversion formulas of
robots.motor_constants computed here by hand (each formula named beside its check); the
inverse-variance mean against its closed form; hashes against hashlib; every other actuator value
against the original file's Actuator, field by field.
"""

from __future__ import annotations

import dataclasses
import hashlib
import math
import shutil
import tomllib

import pytest

from legbridge.limits.aftertest.robot_file import CorrectedRobot, ParameterChange, write_corrected_robot
from legbridge.robots import load_robot
from legbridge.robots.errors import LegbridgeError, OutputExistsError, RobotFileError, UsageError
from legbridge.robots.library import library_path

VERSION = "9.9.9-test"
UNITS = {"torque_constant_nm_per_a": "N m/A", "gearbox_efficiency": "-", "thermal_resistance_k_per_w": "K/W",
         "thermal_time_constant_s": "s", "housing_thermal_resistance_k_per_w": "K/W", "housing_thermal_time_constant_s": "s"}
# Actuator fields (flattened, thermal.*) each key changes; a torque constant also scales Ke
FIELDS = {"torque_constant_nm_per_a": {"torque_constant_nm_per_a", "back_emf_v_s_per_rad"},
          "gearbox_efficiency": {"gearbox_efficiency"},
          "thermal_resistance_k_per_w": {"thermal.winding_resistance_k_per_w"},
          "thermal_time_constant_s": {"thermal.winding_time_constant_s"},
          "housing_thermal_resistance_k_per_w": {"thermal.housing_resistance_k_per_w"},
          "housing_thermal_time_constant_s": {"thermal.housing_time_constant_s"}}


def change(joint, key, value, half, file_value=None, *, lo=None, hi=None, unit=None, note=""):
    return ParameterChange(joint=joint, key=key, value=value, ci_low=value - half if lo is None else lo,
                           ci_high=value + half if hi is None else hi, file_value=file_value,
                           unit=UNITS[key] if unit is None else unit, note=note)


@pytest.fixture
def log(tmp_path):
    """An INVENTED hardware log file and its SHA-256 (hashlib, the reference)."""
    p = tmp_path / "run-07.csv"
    p.write_text("time_s,left_knee_current_a\n0.0,1.0\n0.001,1.1\n")
    return p, hashlib.sha256(p.read_bytes()).hexdigest()


def write(robot, changes, log, out, **kw):
    return write_corrected_robot(robot, changes, log_path=log[0], log_sha256=log[1], out_path=out,
                                 tool_version=VERSION, **kw)


def flat(obj, prefix=""):
    """A dataclass's fields, nested dataclasses flattened ('thermal.winding_resistance_k_per_w')."""
    out = {}
    for f in dataclasses.fields(obj):
        v = getattr(obj, f.name)
        if dataclasses.is_dataclass(v):
            out.update(flat(v, prefix + f.name + "."))
        else:
            out[prefix + f.name] = v
    return out


def assert_others_unchanged(old_act, new_act, changed: set[str]):
    """Every Actuator field not in ``changed`` (and not the loader's notes) equal to the original's."""
    a, b = flat(old_act), flat(new_act)
    assert a.keys() == b.keys()
    for name in a:
        if name in changed or name == "notes":
            continue
        assert b[name] == a[name], name


def comments(text):
    return [line[line.index("#"):] for line in text.splitlines() if "#" in line]


def assert_text_kept(original: str, written: str, changed_keys: set[str]):
    """Every comment of the original still there, and every line whose key was not changed kept
    verbatim and in its original order."""
    for c in comments(original):
        assert c in written, c
    kept = [ln for ln in original.splitlines() if ln.split("=")[0].strip() not in changed_keys | {"name"}]
    out = iter(written.splitlines())
    for ln in kept:
        assert any(ln == o for o in out), ln       # consumes `out`: order is checked too


def assert_header(text, log, original_path, n_changes):
    first = text.splitlines()[0]
    assert first.startswith("# Corrected robot file: identified from hardware log run-07.csv")
    assert f"(SHA-256 {log[1]})" in first
    assert f"by legbridge {VERSION} on " in first
    assert f"based on {original_path.name} (SHA-256 {hashlib.sha256(original_path.read_bytes()).hexdigest()})" in first
    # one comment line per changed key, before the original text
    assert all(ln.startswith("# ") and "95 % CI" in ln for ln in text.splitlines()[1:1 + n_changes])


# ---------------------------------------------------------------------------------------------------
# one leg


def test_one_leg_values_comments_and_header(tmp_path, log):
    src = library_path("lab-biped-leg.toml")
    before = src.read_bytes()
    old = load_robot(src)
    eta = 0.8712345678901234                       # 16 significant digits: written as repr, read back exactly
    changes = [change("knee", "torque_constant_nm_per_a", 0.185, 0.004, 0.20),
               change("knee", "gearbox_efficiency", eta, 0.02, 0.9, hi=0.9),
               change("knee", "housing_thermal_resistance_k_per_w", 0.9173, 0.05, 0.8),
               change("hip", "thermal_resistance_k_per_w", 1.3456789, 0.1, 1.2),
               change("hip", "thermal_time_constant_s", 101.25, 9.0, 90.0)]
    out = tmp_path / "lab-biped-leg-identified.toml"
    res = write(src, changes, log, out)

    assert isinstance(res, CorrectedRobot) and res.path == out
    assert res.sha256 == hashlib.sha256(out.read_bytes()).hexdigest()
    assert src.read_bytes() == before

    doc = tomllib.loads(out.read_text())           # reference: tomllib on the written text
    assert doc["robot"]["name"] == "lab-biped-leg-identified"
    assert doc["joints"]["knee"]["torque_constant_nm_per_a"] == 0.185   # "dc" convention: the value itself
    assert doc["joints"]["knee"]["gearbox_efficiency"] == eta
    assert doc["joints"]["hip"]["thermal_time_constant_s"] == 101.25

    new = load_robot(out)
    assert new.name == "lab-biped-leg-identified"
    hip0, knee0 = (j.actuator for j in old.joints)
    hip1, knee1 = (j.actuator for j in new.joints)
    assert knee1.torque_constant_nm_per_a == pytest.approx(0.185, rel=1e-9, abs=0)
    assert knee1.back_emf_v_s_per_rad == pytest.approx(0.185, rel=1e-9, abs=0)   # no Ke key: the loader takes Ke = Kt
    assert knee1.gearbox_efficiency == eta
    assert knee1.thermal.housing_resistance_k_per_w == 0.9173
    assert hip1.thermal.winding_resistance_k_per_w == 1.3456789
    assert hip1.thermal.winding_time_constant_s == 101.25
    assert_others_unchanged(knee0, knee1, FIELDS["torque_constant_nm_per_a"] | FIELDS["gearbox_efficiency"]
                            | FIELDS["housing_thermal_resistance_k_per_w"])
    assert_others_unchanged(hip0, hip1, FIELDS["thermal_resistance_k_per_w"] | FIELDS["thermal_time_constant_s"])
    assert new.segments == old.segments and new.body_mass_kg == old.body_mass_kg

    text, original = out.read_text(), src.read_text()
    assert_header(text, log, src, len(changes))
    assert_text_kept(original, text, {c.key for c in changes})
    assert "housing_thermal_resistance_k_per_w = 0.9173 # housing to ambient (two-node model)  " \
           "# identified: was 0.8 (run-07.csv)" in text
    assert "torque_constant_nm_per_a = 0.185  # identified: was 0.20 (run-07.csv)" in text
    assert {(a.table, a.key) for a in res.changes_applied} == {(f"joints.{c.joint}", c.key) for c in changes}


def test_existing_output_needs_force(tmp_path, log):
    out = tmp_path / "out.toml"
    ch = [change("knee", "gearbox_efficiency", 0.85, 0.02, 0.9)]
    write("lab-biped-leg", ch, log, out)
    first = out.read_bytes()
    with pytest.raises(OutputExistsError):
        write("lab-biped-leg", [change("knee", "gearbox_efficiency", 0.8, 0.02, 0.9)], log, out)
    assert out.read_bytes() == first
    write("lab-biped-leg", [change("knee", "gearbox_efficiency", 0.8, 0.02, 0.9)], log, out, force=True)
    assert load_robot(out).joints[1].actuator.gearbox_efficiency == 0.8


def test_a_corrected_file_corrected_again_keeps_one_name_suffix(tmp_path, log):
    once, twice = tmp_path / "once.toml", tmp_path / "twice.toml"
    write("lab-biped-leg", [change("knee", "gearbox_efficiency", 0.85, 0.02, 0.9)], log, once)
    write(once, [change("knee", "gearbox_efficiency", 0.83, 0.02, 0.85)], log, twice)
    assert tomllib.loads(twice.read_text())["robot"]["name"] == "lab-biped-leg-identified"
    assert load_robot(twice).joints[1].actuator.gearbox_efficiency == 0.83
    assert twice.read_text().count("# Corrected robot file:") == 2     # both corrections named


# ---------------------------------------------------------------------------------------------------
# biped


def test_biped_both_legs_on_one_table_are_weighted(tmp_path, log):
    src = library_path("lab-biped.toml")
    before = src.read_bytes()
    old = load_robot(src)
    # half-widths 0.005 and 0.010: inverse-variance weights 1/h^2 in the ratio 4 : 1 (the 1.96 cancels)
    changes = [change("left_knee", "torque_constant_nm_per_a", 0.21, 0.005, 0.20),
               change("right_knee", "torque_constant_nm_per_a", 0.22, 0.010, 0.20),
               change("left_hip", "gearbox_efficiency", 0.86, 0.02, 0.9)]
    out = tmp_path / "biped.toml"
    res = write(src, changes, log, out)
    assert src.read_bytes() == before

    mean = (4 * 0.21 + 1 * 0.22) / 5               # closed form of the weighted mean: 0.212
    half = 0.005 * 0.010 / math.sqrt(0.005**2 + 0.010**2)   # 1.96 / sqrt(sum w) = h1 h2 / sqrt(h1^2 + h2^2)
    knee = next(a for a in res.changes_applied if a.key == "torque_constant_nm_per_a")
    assert knee.joints == ("left_knee", "right_knee") and knee.table == "joints.knee"
    assert knee.value == pytest.approx(mean, rel=1e-12)
    assert (knee.ci_low, knee.ci_high) == pytest.approx((mean - half, mean + half), rel=1e-12)
    assert "inverse-variance" in knee.note
    assert not any("disagree" in n for n in res.notes)     # the intervals overlap
    assert any("right_hip" in n for n in res.notes)        # one leg's hip value changes the other leg's too

    assert tomllib.loads(out.read_text())["joints"]["knee"]["torque_constant_nm_per_a"] == pytest.approx(mean, rel=1e-12)
    new = load_robot(out)
    for name in ("left_knee", "right_knee"):
        assert new.joint(name).actuator.torque_constant_nm_per_a == pytest.approx(mean, rel=1e-9, abs=0)
        assert_others_unchanged(old.joint(name).actuator, new.joint(name).actuator, FIELDS["torque_constant_nm_per_a"])
    for name in ("left_hip", "right_hip"):
        assert new.joint(name).actuator.gearbox_efficiency == 0.86
        assert_others_unchanged(old.joint(name).actuator, new.joint(name).actuator, FIELDS["gearbox_efficiency"])
    text = out.read_text()
    assert_header(text, log, src, 2)
    assert_text_kept(src.read_text(), text, {"torque_constant_nm_per_a", "gearbox_efficiency"})


def test_biped_legs_that_disagree_are_combined_with_a_warning(tmp_path, log):
    changes = [change("left_knee", "thermal_resistance_k_per_w", 0.55, 0.02, 0.6),
               change("right_knee", "thermal_resistance_k_per_w", 0.70, 0.02, 0.6)]     # intervals apart
    res = write("lab-biped", changes, log, tmp_path / "b.toml")
    assert any("disagree beyond their intervals" in n for n in res.notes)
    # equal widths: equal weights, the plain mean
    assert load_robot(tmp_path / "b.toml").joint("right_knee").actuator.thermal.winding_resistance_k_per_w == \
        pytest.approx(0.625, rel=1e-12)


def test_biped_with_its_own_right_leg_edits_the_right_table(tmp_path, log):
    base = library_path("lab-biped.toml").read_text()
    body = base[base.index("[[segments]]"):]
    src = tmp_path / "two-legs.toml"
    src.write_text(base + "\n" + body.replace("[[segments]]", "[[right.segments]]").replace("[joints.", "[right.joints."))
    old = load_robot(src)
    assert old.right_joints                        # the premise: a [right] leg of its own
    out = tmp_path / "two-legs-identified.toml"
    res = write(src, [change("right_knee", "gearbox_efficiency", 0.84, 0.02, 0.9)], log, out)
    assert res.changes_applied[0].table == "right.joints.knee" and res.notes == ()
    doc = tomllib.loads(out.read_text())
    assert doc["right"]["joints"]["knee"]["gearbox_efficiency"] == 0.84
    assert doc["joints"]["knee"]["gearbox_efficiency"] == 0.9
    new = load_robot(out)
    assert new.joint("right_knee").actuator.gearbox_efficiency == 0.84
    assert new.joint("left_knee").actuator == old.joint("left_knee").actuator


# ---------------------------------------------------------------------------------------------------
# conventions


def test_bundled_three_phase_conventions(tmp_path, log):
    src = library_path("sea-three-joint-leg.toml")
    old = load_robot(src)
    hip0, knee0 = old.joints[0].actuator, old.joints[1].actuator
    changes = [change("hip", "torque_constant_nm_per_a", 0.09, 0.003, hip0.torque_constant_nm_per_a),
               change("knee", "torque_constant_nm_per_a", 0.11, 0.003, knee0.torque_constant_nm_per_a)]
    out = tmp_path / "sea.toml"
    write(src, changes, log, out)
    doc = tomllib.loads(out.read_text())
    hip_t, knee_t = doc["joints"]["hip"], doc["joints"]["knee"]

    # hip: only a speed constant, stated per volt of line-to-line peak EMF; no Kt key is added
    assert "torque_constant_nm_per_a" not in hip_t and hip_t["back_emf_convention"] == "line_peak"
    kv = hip_t["speed_constant_rpm_per_v"]
    ke_line_pk = 60.0 / (2 * math.pi * kv)         # Kv [rpm/V] -> Ke [V s/rad]: 60 / (2 pi Kv)
    kt_dc = 1.5 * ke_line_pk / math.sqrt(3)        # line_peak -> DC-equivalent: 1.5 Ke_ph,pk, Ke_ph,pk = Ke_line,pk / sqrt(3)
    assert kt_dc == pytest.approx(0.09, rel=1e-9)
    assert kv == pytest.approx(100.0 * hip0.torque_constant_nm_per_a / 0.09, rel=1e-12)   # a speed constant goes as 1 / ratio

    # knee: Kt per rms phase ampere and Ke in line-to-line rms volts per 1000 rpm
    assert knee_t["current_convention"] == "phase_rms"
    assert knee_t["torque_constant_nm_per_a"] / math.sqrt(2) == pytest.approx(0.11, rel=1e-12)  # phase_rms -> DC-equivalent: Kt_rms / sqrt(2)
    ratio = 0.11 / (0.14 / math.sqrt(2))
    assert knee_t["back_emf_constant_v_per_krpm"] == pytest.approx(8.5 * ratio, rel=1e-12)     # Ke scaled by the same ratio
    ke_si = knee_t["back_emf_constant_v_per_krpm"] * 60 / (2 * math.pi * 1000)   # V/krpm -> V s/rad: x 60 / (2 pi 1000)
    ke_dc = 1.5 * ke_si * math.sqrt(2) / math.sqrt(3)   # line_rms -> DC-equivalent: 1.5 Ke_ph,pk, Ke_ph,pk = sqrt(2/3) Ke_line,rms

    new = load_robot(out)
    hip1, knee1 = new.joints[0].actuator, new.joints[1].actuator
    assert hip1.torque_constant_nm_per_a == pytest.approx(0.09, rel=1e-9, abs=0)
    assert hip1.back_emf_v_s_per_rad == pytest.approx(kt_dc, rel=1e-9)
    assert knee1.torque_constant_nm_per_a == pytest.approx(0.11, rel=1e-9, abs=0)
    assert knee1.back_emf_v_s_per_rad == pytest.approx(ke_dc, rel=1e-9)
    assert knee1.back_emf_v_s_per_rad == pytest.approx(knee0.back_emf_v_s_per_rad * ratio, rel=1e-9)
    assert_others_unchanged(hip0, hip1, FIELDS["torque_constant_nm_per_a"])
    assert_others_unchanged(knee0, knee1, FIELDS["torque_constant_nm_per_a"])
    assert new.joints[1].spring == old.joints[1].spring
    assert_text_kept(src.read_text(), out.read_text(),
                     {"torque_constant_nm_per_a", "speed_constant_rpm_per_v", "back_emf_constant_v_per_krpm"})


PHASE_PEAK_LEG = """\
# INVENTED test robot: a three-phase hip given by Kt per phase-peak ampere and a speed constant
[robot]
name = "pp-leg"                 # invented test values
body_mass_kg = 20.0
body_pitch_inertia_kgm2 = 0.8
knee = "backward"
ground_friction = 0.7

[[segments]]
name = "thigh"
length_m = 0.40
mass_kg = 2.0
com_m = 0.16
inertia_kgm2 = 0.03

[[segments]]
name = "shank"
length_m = 0.42
mass_kg = 0.8
com_m = 0.15
inertia_kgm2 = 0.012

[joints.hip]
lower_rad = -1.6
upper_rad = 1.6
motor_type = "three_phase"
current_convention = "phase_peak"       # Kt per phase-peak ampere
torque_constant_nm_per_a = 0.12
speed_constant_rpm_per_v = 68.9         # rpm per volt of line-to-line peak EMF
back_emf_convention = "line_peak"
winding_resistance_ohm = 0.2
resistance_convention = "line_to_line"
gear_ratio = 10.0
gearbox_efficiency = 0.9
bus_voltage_v = 48.0
peak_current_a = 40.0
continuous_current_a = 12.0
rotor_inertia_kgm2 = 6.0e-5
max_motor_speed_rad_s = 400.0
thermal_resistance_k_per_w = 1.8
thermal_time_constant_s = 60.0
max_winding_temp_c = 120.0

[joints.knee]
lower_rad = -2.6
upper_rad = -0.05
gear_ratio = 10.0
gearbox_efficiency = 0.9
torque_constant_nm_per_a = 0.12
winding_resistance_ohm = 0.25
bus_voltage_v = 48.0
peak_current_a = 40.0
continuous_current_a = 12.0
rotor_inertia_kgm2 = 6.0e-5
max_motor_speed_rad_s = 400.0
thermal_resistance_k_per_w = 1.8
thermal_time_constant_s = 60.0
max_winding_temp_c = 120.0
"""


def test_phase_peak_torque_constant_and_speed_constant(tmp_path, log):
    src = tmp_path / "pp-leg.toml"
    src.write_text(PHASE_PEAK_LEG)
    before = src.read_bytes()
    old = load_robot(src)
    out = tmp_path / "pp-leg-identified.toml"
    write(src, [change("hip", "torque_constant_nm_per_a", 0.1312, 0.004, 0.12)], log, out)
    assert src.read_bytes() == before
    hip = tomllib.loads(out.read_text())["joints"]["hip"]
    assert hip["torque_constant_nm_per_a"] == 0.1312    # phase_peak -> DC-equivalent: the same number (I_eq = I_pk)
    assert hip["speed_constant_rpm_per_v"] == pytest.approx(68.9 * 0.12 / 0.1312, rel=1e-12)   # Kv / ratio
    new = load_robot(out)
    a0, a1 = old.joints[0].actuator, new.joints[0].actuator
    assert a1.torque_constant_nm_per_a == 0.1312
    # Kv -> Ke_line,pk = 60 / (2 pi Kv); line_peak -> DC-equivalent (sqrt(3)/2) Ke_line,pk
    assert a1.back_emf_v_s_per_rad == pytest.approx(math.sqrt(3) / 2 * 60 / (2 * math.pi * hip["speed_constant_rpm_per_v"]),
                                                    rel=1e-12)
    assert a1.back_emf_v_s_per_rad / a1.torque_constant_nm_per_a == pytest.approx(
        a0.back_emf_v_s_per_rad / a0.torque_constant_nm_per_a, rel=1e-9)    # the file's Kt : Ke kept
    assert_others_unchanged(a0, a1, FIELDS["torque_constant_nm_per_a"])
    assert new.joints[1].actuator == old.joints[1].actuator
    text = out.read_text()
    assert "# Kt per phase-peak ampere" in text and "# INVENTED test robot" in text
    assert_text_kept(PHASE_PEAK_LEG, text, {"torque_constant_nm_per_a", "speed_constant_rpm_per_v"})


# ---------------------------------------------------------------------------------------------------
# URDF


def test_urdf_biped_written_into_another_folder_still_loads(tmp_path, log):
    src = library_path("bolt-biped.toml")
    before = src.read_bytes()
    old = load_robot(src)
    folder = tmp_path / "reviews" / "after"
    folder.mkdir(parents=True)
    out = folder / "bolt-identified.toml"
    write(src, [change("left_knee", "thermal_resistance_k_per_w", 7.25, 0.5, 8.0)], log, out)
    assert src.read_bytes() == before
    rel = tomllib.loads(out.read_text())["urdf"]["file"]
    assert not rel.startswith("/")                 # relative to the new file
    assert (out.parent / rel).resolve() == library_path("bolt-biped.urdf").resolve()
    new = load_robot(out)
    assert new.urdf.urdf_path == old.urdf.urdf_path and new.urdf.sha256 == old.urdf.sha256
    for name in ("left_knee", "right_knee"):
        assert new.joint(name).actuator.thermal.winding_resistance_k_per_w == 7.25
        assert_others_unchanged(old.joint(name).actuator, new.joint(name).actuator, FIELDS["thermal_resistance_k_per_w"])
    assert new.joint("left_hip").actuator == old.joint("left_hip").actuator
    assert_header(out.read_text(), log, src, 1)
    assert_text_kept(src.read_text(), out.read_text(), {"thermal_resistance_k_per_w", "file"})


def test_urdf_output_beside_the_original_keeps_the_path_and_never_replaces_the_urdf(tmp_path, log):
    for name in ("bolt-biped.toml", "bolt-biped.urdf"):
        shutil.copy(library_path(name), tmp_path / name)
    src, urdf = tmp_path / "bolt-biped.toml", tmp_path / "bolt-biped.urdf"
    urdf_bytes = urdf.read_bytes()
    ch = [change("right_hip", "gearbox_efficiency", 0.87, 0.02, 0.9)]
    write(src, ch, log, tmp_path / "bolt-identified.toml")
    assert tomllib.loads((tmp_path / "bolt-identified.toml").read_text())["urdf"]["file"] == "bolt-biped.urdf"
    assert load_robot(tmp_path / "bolt-identified.toml").joint("left_hip").actuator.gearbox_efficiency == 0.87
    for target in (urdf, src):
        with pytest.raises(OutputExistsError):
            write(src, ch, log, target, force=True)
    assert urdf.read_bytes() == urdf_bytes


# ---------------------------------------------------------------------------------------------------
# refusals


REFUSED = [
    ("unknown joint", [change("left_ankle", "gearbox_efficiency", 0.8, 0.02, 0.9)], "left_ankle"),
    ("bare name on a biped", [change("knee", "gearbox_efficiency", 0.8, 0.02, 0.9)], "knee"),
    ("unknown key", [dataclasses.replace(change("left_knee", "gearbox_efficiency", 0.8, 0.02, 0.9),
                                      key="winding_resistance_ohm")],
     "joints.knee.winding_resistance_ohm"),
    ("efficiency above 1", [change("left_knee", "gearbox_efficiency", 1.2, 0.02, 0.9)], "joints.knee.gearbox_efficiency"),
    ("efficiency 0", [change("left_knee", "gearbox_efficiency", 0.0, 0.0, 0.9)], "joints.knee.gearbox_efficiency"),
    ("negative resistance", [change("left_hip", "thermal_resistance_k_per_w", -1.0, 0.1, 1.2)],
     "joints.hip.thermal_resistance_k_per_w"),
    ("zero time constant", [change("left_hip", "thermal_time_constant_s", 0.0, 0.0, 90.0)],
     "joints.hip.thermal_time_constant_s"),
    ("zero torque constant", [change("left_hip", "torque_constant_nm_per_a", 0.0, 0.0, 0.2)],
     "joints.hip.torque_constant_nm_per_a"),
    ("held value (NaN interval)", [change("left_hip", "gearbox_efficiency", 0.9, 0.0, 0.9, lo=math.nan, hi=math.nan)],
     "joints.hip.gearbox_efficiency"),
    ("value outside its interval", [change("left_hip", "gearbox_efficiency", 0.8, 0.0, 0.9, lo=0.85, hi=0.9)],
     "joints.hip.gearbox_efficiency"),
    ("wrong unit", [change("left_hip", "torque_constant_nm_per_a", 0.21, 0.01, 0.2, unit="mN m/A")],
     "joints.hip.torque_constant_nm_per_a"),
    ("identified against another file", [change("left_hip", "torque_constant_nm_per_a", 0.21, 0.01, 0.15)],
     "joints.hip.torque_constant_nm_per_a"),
    ("one housing key", [change("left_hip", "housing_thermal_resistance_k_per_w", 0.5, 0.05)],
     "joints.hip.housing_thermal_time_constant_s"),
    ("one joint twice", [change("left_hip", "gearbox_efficiency", 0.8, 0.02, 0.9),
                         change("left_hip", "gearbox_efficiency", 0.85, 0.02, 0.9)], "joints.hip.gearbox_efficiency"),
    ("nothing", [], "changes"),
]


@pytest.mark.parametrize("what, changes, key", REFUSED, ids=[r[0] for r in REFUSED])
def test_refusals_name_the_key_and_write_nothing(tmp_path, log, what, changes, key):
    out = tmp_path / "out.toml"
    with pytest.raises(LegbridgeError) as exc:
        write("lab-biped", changes, log, out)
    assert isinstance(exc.value, (RobotFileError, UsageError))
    assert exc.value.key == key
    assert key in str(exc.value)
    assert not out.exists()


def test_refuses_the_robot_file_and_the_log_as_output(tmp_path, log):
    src = tmp_path / "leg.toml"
    shutil.copy(library_path("lab-biped-leg.toml"), src)
    before = src.read_bytes()
    ch = [change("knee", "gearbox_efficiency", 0.85, 0.02, 0.9)]
    with pytest.raises(OutputExistsError):
        write(src, ch, log, src, force=True)
    with pytest.raises(OutputExistsError):
        write(src, ch, log, log[0], force=True)
    assert src.read_bytes() == before


def test_refuses_a_log_that_is_not_the_one_identified_from(tmp_path, log):
    out = tmp_path / "out.toml"
    ch = [change("knee", "gearbox_efficiency", 0.85, 0.02, 0.9)]
    with pytest.raises(UsageError) as exc:
        write_corrected_robot("lab-biped-leg", ch, log_path=log[0], log_sha256="0" * 64, out_path=out)
    assert exc.value.key == "log_sha256" and not out.exists()


def test_refuses_a_table_it_cannot_edit_line_by_line(tmp_path, log):
    # the knee table written as dotted keys under [joints]: valid TOML the loader reads, but no [joints.knee] line
    head, knee = PHASE_PEAK_LEG.split("[joints.knee]\n")
    src = tmp_path / "dotted.toml"
    src.write_text(head + "[joints]\n" + "".join(f"knee.{ln}\n" for ln in knee.splitlines() if ln.strip()))
    assert load_robot(src).joints[1].name == "knee"     # the premise: the loader reads it
    out = tmp_path / "out.toml"
    with pytest.raises(RobotFileError) as exc:
        write(src, [change("knee", "gearbox_efficiency", 0.85, 0.02, 0.9)], log, out)
    assert exc.value.key == "joints.knee" and not out.exists()
