"""Motor-constant conversions against an independent per-phase computation and textbook relations.

Sources: Hughes and Drury, *Electric Motors and Drives*, 4th ed. (DC motor ch. 3; synchronous and
brushless drives ch. 9-10); Krishnan, *Permanent Magnet Synchronous and Brushless DC Motor Drives*,
ch. 5 (dq model); Holmes and Lipo, *Pulse Width Modulation for Power Converters*, ch. 5 (space-vector
PWM reaches a phase peak of V_bus / sqrt(3)). Chapter numbers from memory. The three-phase checks
below do not use the formulas under test: they sum the instantaneous power of three sinusoidal
phases (conservation of energy) and search the PWM limit numerically.
"""

from __future__ import annotations

import numpy as np
import pytest

from legbridge.robots import load_robot
from legbridge.robots import actuator_limits as al
from legbridge.robots import motor_constants as mc
from legbridge.robots.errors import RobotFileError
from legbridge.robots.library import library_path

from .conftest import DC_ACTUATOR, robot_text

THETA = np.linspace(0.0, 2 * np.pi, 721)
SHIFT = np.array([0.0, -2 * np.pi / 3, 2 * np.pi / 3])[:, None]


def phase_waves(amplitude):
    """Balanced three-phase sinusoids, shape (3, n_theta)."""
    return amplitude * np.sin(THETA[None, :] + SHIFT)


def test_torque_constant_from_power_balance():
    # Energy conservation: torque = sum_k e_k i_k / w with e_k = Ke_ph,pk w sin(.), i_k = I_pk sin(.)
    ke_ph_pk, i_pk, w = 0.05, 7.0, 100.0
    torque = np.sum(phase_waves(ke_ph_pk * w) * phase_waves(i_pk), axis=0) / w
    assert np.allclose(torque, torque[0], rtol=1e-12)  # constant torque, balanced sinusoids
    ke_line_pk = np.max(np.abs(phase_waves(ke_ph_pk)[0] - phase_waves(ke_ph_pk)[1]))
    assert ke_line_pk == pytest.approx(np.sqrt(3) * ke_ph_pk, rel=1e-5)
    kt_eq = torque[0] / i_pk
    assert mc.back_emf_to_dc_equivalent(ke_ph_pk, "phase_peak") == pytest.approx(kt_eq, rel=1e-12)
    assert mc.back_emf_to_dc_equivalent(ke_line_pk, "line_peak") == pytest.approx(kt_eq, rel=1e-5)
    assert mc.back_emf_to_dc_equivalent(ke_ph_pk / np.sqrt(2), "phase_rms") == pytest.approx(kt_eq, rel=1e-12)
    # Kt [N m / A_rms] = sqrt(3) Ke [V_rms line-to-line s/rad]; the rms Kt converts back to kt_eq
    kt_rms = torque[0] / (i_pk / np.sqrt(2))
    ke_line_rms = ke_line_pk / np.sqrt(2)
    assert kt_rms == pytest.approx(np.sqrt(3) * ke_line_rms, rel=1e-5)
    assert mc.torque_constant_to_dc_equivalent(kt_rms, "phase_rms") == pytest.approx(kt_eq, rel=1e-12)
    assert mc.back_emf_to_dc_equivalent(ke_line_rms, "line_rms") == pytest.approx(kt_eq, rel=1e-5)


def test_copper_loss_is_preserved():
    # R_eq I^2 = sum of the three phases' instantaneous copper loss = 3 R_ph I_rms^2
    r_ph, i_pk = 0.2, 9.0
    loss = np.sum(r_ph * phase_waves(i_pk) ** 2, axis=0)
    assert np.allclose(loss, 3 * r_ph * (i_pk / np.sqrt(2)) ** 2, rtol=1e-12)
    r_eq = mc.resistance_to_dc_equivalent(r_ph, "phase", "three_phase")
    assert r_eq * mc.current_to_dc_equivalent(i_pk, "phase_peak") ** 2 == pytest.approx(loss[0], rel=1e-12)
    # wye winding: line-to-line resistance is two phases in series (common practice)
    assert mc.resistance_to_dc_equivalent(2 * r_ph, "line_to_line", "three_phase") == pytest.approx(r_eq)
    i_rms = i_pk / np.sqrt(2)
    assert r_eq * mc.current_to_dc_equivalent(i_rms, "phase_rms") ** 2 == pytest.approx(loss[0], rel=1e-12)


def test_svpwm_voltage_limit_by_search():
    # Largest phase amplitude whose phase voltages, with min-max zero-sequence injection (SVPWM),
    # stay inside +-V_bus/2 for every angle; Holmes and Lipo: V_bus / sqrt(3) (from memory).
    vbus = 48.0
    amps = np.linspace(0.5 * vbus / np.sqrt(3), 1.5 * vbus / np.sqrt(3), 20001)
    waves = amps[:, None, None] * np.sin(THETA[None, None, :] + SHIFT[None])
    offset = -(waves.max(axis=1) + waves.min(axis=1)) / 2
    ok = np.all(np.abs(waves + offset[:, None, :]) <= vbus / 2 + 1e-12, axis=(1, 2))
    v_ph_max = amps[ok].max()
    assert v_ph_max == pytest.approx(vbus / np.sqrt(3), rel=1e-4)
    # DC-equivalent voltage is 1.5 times the phase-peak q voltage
    assert mc.max_voltage_dc_equivalent(vbus, "three_phase", "svpwm") == pytest.approx(1.5 * v_ph_max, rel=1e-4)
    # sine-triangle PWM without injection: phase peak V_bus / 2
    assert mc.max_voltage_dc_equivalent(vbus, "three_phase", "sine") == pytest.approx(1.5 * vbus / 2)
    assert mc.max_voltage_dc_equivalent(vbus, "dc") == vbus


def test_no_load_speed_of_converted_three_phase_motor():
    # No-load: the line-to-line EMF peak equals the bus voltage (common practice), w0 = V_bus / Ke_line_pk
    vbus, ke_line_pk = 48.0, 0.08
    ke_eq = mc.back_emf_to_dc_equivalent(ke_line_pk, "line_peak")
    w0 = mc.max_voltage_dc_equivalent(vbus, "three_phase") / ke_eq
    assert w0 == pytest.approx(vbus / ke_line_pk, rel=1e-12)


def test_speed_constant_and_krpm_units():
    # A 100 rpm/V DC motor at 1 V runs at 100 rpm = 100 * 2 pi / 60 rad/s, so Ke = 1 V / that speed
    assert mc.rpm_per_v_to_v_s_per_rad(100.0) == pytest.approx(1.0 / (100 * 2 * np.pi / 60), rel=1e-12)
    # 10 V per 1000 rpm = 10 V / (1000 * 2 pi / 60 rad/s)
    assert mc.v_per_krpm_to_v_s_per_rad(10.0) == pytest.approx(10.0 / (1000 * 2 * np.pi / 60), rel=1e-12)
    # vectorised
    out = mc.rpm_per_v_to_v_s_per_rad(np.array([50.0, 100.0, 200.0]))
    assert out.shape == (3,) and out[0] == pytest.approx(2 * out[1])


def test_unknown_conventions_refused():
    with pytest.raises(ValueError, match="current convention"):
        mc.current_to_dc_equivalent(1.0, "line_rms")
    with pytest.raises(ValueError, match="back-EMF convention"):
        mc.back_emf_to_phase_peak(1.0, "dc")
    with pytest.raises(ValueError, match="terminal resistance"):
        mc.resistance_to_dc_equivalent(1.0, "phase", "dc")
    with pytest.raises(ValueError, match="modulation"):
        mc.max_voltage_dc_equivalent(1.0, "three_phase", "foo")


def test_example_file_means_dc():
    robot = load_robot(library_path("example-leg.toml"))
    for j in robot.joints:
        a = j.actuator
        assert a.motor_type == "dc"
        assert a.torque_constant_nm_per_a == 0.12 and a.back_emf_v_s_per_rad == 0.12
        assert a.max_voltage_v == a.bus_voltage_v == 48.0
        assert a.winding_resistance_ohm == 0.25
    assert robot.warnings == ()


def test_dc_motor_relations(example_robot):
    # Standard DC motor model (Hughes and Drury, ch. 3): no-load speed V/Ke, stall torque Kt V/R, Kt = Ke in SI
    a = example_robot.joint("hip").actuator
    assert al.no_load_motor_speed_rad_s(a) == pytest.approx(48.0 / 0.12)
    assert al.stall_motor_torque_nm(a) == pytest.approx(0.12 * 48.0 / 0.25)
    # at the no-load joint speed the voltage leaves no motoring torque
    lo, hi = al.joint_torque_bounds_nm(a, 48.0 / 0.12 / 10.0)
    assert hi == pytest.approx(0.0, abs=1e-9)
    # peak joint torque: eta N Kt I_pk = 0.9 * 10 * 0.12 * 40
    assert al.peak_joint_torque_nm(a) == pytest.approx(43.2)
    assert al.reflected_inertia_kgm2(a) == pytest.approx(100 * 6e-5)


THREE_PHASE = """\
motor_type = "three_phase"
current_convention = "phase_rms"
torque_constant_nm_per_a = {kt}
back_emf_constant_v_per_krpm = {ke}
back_emf_convention = "line_rms"
winding_resistance_ohm = 0.30
resistance_convention = "line_to_line"
gear_ratio = 9.0
gearbox_efficiency = 0.9
bus_voltage_v = 48.0
peak_current_a = 20.0
continuous_current_a = 7.0
rotor_inertia_kgm2 = 5.0e-5
max_motor_speed_rad_s = 500.0
thermal_resistance_k_per_w = 1.5
thermal_time_constant_s = 40.0
max_winding_temp_c = 110.0
"""


def _consistent_three_phase():
    # Kt_rms = sqrt(3) Ke_line_rms (SI); Ke_line_rms = 0.06 V s/rad = 0.06 * 1000 * 2 pi / 60 V/krpm
    ke_si = 0.06
    return np.sqrt(3) * ke_si, ke_si * 1000 * 2 * np.pi / 60


def test_three_phase_file_is_converted(write_robot):
    kt, ke = _consistent_three_phase()
    robot = load_robot(write_robot(robot_text(knee_actuator=THREE_PHASE.format(kt=kt, ke=ke))))
    a = robot.joint("knee").actuator
    assert a.motor_type == "three_phase"
    assert a.torque_constant_nm_per_a == pytest.approx(kt / np.sqrt(2))
    assert a.back_emf_v_s_per_rad == pytest.approx(a.torque_constant_nm_per_a, rel=1e-12)
    assert a.peak_current_a == pytest.approx(20.0 * np.sqrt(2))
    assert a.winding_resistance_ohm == pytest.approx(0.75 * 0.30)
    assert a.max_voltage_v == pytest.approx(48.0 * np.sqrt(3) / 2)
    # torque at the rms datasheet current is unchanged by the conversion
    assert a.torque_constant_nm_per_a * a.peak_current_a == pytest.approx(kt * 20.0)
    # no-load speed = V_bus / Ke_line_peak
    assert al.no_load_motor_speed_rad_s(a) == pytest.approx(48.0 / (0.06 * np.sqrt(2)))
    assert robot.warnings == ()


def test_kt_ke_disagreement_warns(write_robot):
    kt, ke = _consistent_three_phase()
    # the classic slip: Kt per rms ampere read as per peak ampere -> factor sqrt(2), far over 10 %
    text = robot_text(knee_actuator=THREE_PHASE.format(kt=kt, ke=ke).replace('"phase_rms"', '"phase_peak"'))
    robot = load_robot(write_robot(text))
    assert len(robot.warnings) == 1
    assert "joints.knee" in robot.warnings[0] and "41 %" in robot.warnings[0] and "tolerance 10 %" in robot.warnings[0]
    # within the tolerance: 8 % off gives no warning
    robot = load_robot(write_robot(robot_text(knee_actuator=THREE_PHASE.format(kt=1.08 * kt, ke=ke))))
    assert robot.warnings == ()


def test_speed_constant_only(write_robot):
    act = DC_ACTUATOR.replace("torque_constant_nm_per_a = 0.12", "speed_constant_rpm_per_v = 80.0")
    a = load_robot(write_robot(robot_text(hip_actuator=act))).joint("hip").actuator
    assert a.back_emf_v_s_per_rad == pytest.approx(60 / (2 * np.pi * 80.0))
    assert a.torque_constant_nm_per_a == a.back_emf_v_s_per_rad


@pytest.mark.parametrize(
    "change, match",
    [
        (("torque_constant_nm_per_a = 0.12", ""), "torque_constant_nm_per_a'.*missing key.*back-EMF or speed"),
        (("torque_constant_nm_per_a = 0.12", "torque_constant_nm_per_a = 0.12\nspeed_constant_rpm_per_v = 80.0\nback_emf_constant_v_s_per_rad = 0.1"),
         "give one back-EMF or speed constant"),
        (("torque_constant_nm_per_a = 0.12", 'torque_constant_nm_per_a = 0.12\nmotor_type = "three_phase"'),
         "current_convention'.*missing key.*three-phase motor must state"),
        (("torque_constant_nm_per_a = 0.12", 'torque_constant_nm_per_a = 0.12\ncurrent_convention = "phase_rms"'),
         r"current_convention'.*expected one of \['dc'\]"),
        (("torque_constant_nm_per_a = 0.12", 'torque_constant_nm_per_a = 0.12\nmotor_type = "ac"'),
         "motor_type'.*expected one of"),
        (("torque_constant_nm_per_a = 0.12", 'torque_constant_nm_per_a = 0.12\nback_emf_convention = "dc"'),
         "back_emf_convention given without"),
        (("torque_constant_nm_per_a = 0.12", 'torque_constant_nm_per_a = 0.12\npwm_modulation = "svpwm"'),
         "pwm_modulation applies to three-phase"),
        (("continuous_current_a = 12.0", "continuous_current_a = 50.0"), "continuous_current_a'.*<= peak_current_a"),
        (("torque_constant_nm_per_a = 0.12", "torque_constant_nm_per_a = -0.12"), "torque_constant_nm_per_a'.*value > 0"),
    ],
)
def test_actuator_errors(write_robot, change, match):
    act = DC_ACTUATOR.replace(*change)
    with pytest.raises(RobotFileError, match=match):
        load_robot(write_robot(robot_text(hip_actuator=act)))


def test_three_phase_requires_back_emf_convention(write_robot):
    kt, ke = _consistent_three_phase()
    act = THREE_PHASE.format(kt=kt, ke=ke).replace('back_emf_convention = "line_rms"\n', "")
    with pytest.raises(RobotFileError, match="back_emf_convention'.*missing key"):
        load_robot(write_robot(robot_text(knee_actuator=act)))


def test_the_peak_torque_bound_is_explained_by_power_direction_and_rotor_share():
    # lab-biped knee: N = 12, Kt = 0.20 N m/A, I_peak = 80 A, eta = 0.9, J_r = 1.2e-4 kg m^2 (the file).
    # Hand-worked from the standard DC-motor and gearbox relations (Hughes and Drury, Electric Motors
    # and Drives, ch. 3): motoring tau = eta N (Kt I - J_r N qdd_m) ; back-driven tau = N (Kt I - J_r N qdd_m) / eta.
    knee = load_robot(library_path("lab-biped.toml")).joint("left_knee")
    assert al.peak_joint_torque_nm(knee.actuator) == pytest.approx(0.9 * 12 * 0.20 * 80)            # 172.8 N m
    assert al.back_driven_joint_torque_nm(knee.actuator) == pytest.approx(12 * 0.20 * 80 / 0.9)     # 213.33 N m
    # motoring at +1 rad/s, motor side accelerating at 100 rad/s^2 (joint units): rotor share
    # eta N * J_r N * 100 = 0.9 * 12 * 1.2e-4 * 12 * 100 = 1.5552 N m
    text = al.explain_torque_bound(knee, 150.0, 1.0, 100.0)
    assert "172.8 N m = 12 x 0.2 N m/A x 80 A x efficiency 0.9 (the motor drives the joint)" in text
    assert "less 1.56 N m for the rotor's acceleration" in text
    lo, hi = al.joint_torque_bounds_nm(knee.actuator, 1.0, 100.0, voltage=False)
    assert float(hi) == pytest.approx(172.8 - 1.5552)
    # back-driven: positive torque while the joint turns backwards; no acceleration, no rotor share
    text = al.explain_torque_bound(knee, 150.0, -1.0, 0.0)
    assert "213.3 N m = 12 x 0.2 N m/A x 80 A / efficiency 0.9 (the joint back-drives the motor)" in text
    assert "rotor" not in text
