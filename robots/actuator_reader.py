"""Read one joint's actuator table (TOML) into an :class:`~legbridge.robots.robot.Actuator`."""

from __future__ import annotations

from . import motor_constants as mc
from .errors import RobotFileError
from .fields import Table
from .robot import Actuator, ThermalModel


# Temperature coefficient of the resistance of annealed copper near room temperature [1/K] (common
# practice; 0.00393 /K at 20 degC is the handbook value, from memory).
COPPER_ALPHA_PER_K = 0.00393


def read_thermal(t: Table) -> ThermalModel:
    """One-node thermal keys, or two-node ones when housing values are present."""
    max_c = t.number("max_winding_temp_c")
    amb_c = t.number("ambient_temp_c", 25.0)
    if max_c <= amb_c:
        raise RobotFileError(
            path=t.path, key=t.key("max_winding_temp_c"), expected=f"a value above ambient_temp_c ({amb_c:g})", found=max_c
        )
    housing_r = t.number("housing_thermal_resistance_k_per_w", None, positive=True)
    housing_tau = t.number("housing_thermal_time_constant_s", None, positive=True)
    if (housing_r is None) != (housing_tau is None):
        missing = "housing_thermal_time_constant_s" if housing_tau is None else "housing_thermal_resistance_k_per_w"
        raise RobotFileError("two-node thermal model needs both housing keys", path=t.path, key=t.key(missing))
    return ThermalModel(
        winding_resistance_k_per_w=t.number("thermal_resistance_k_per_w", positive=True),
        winding_time_constant_s=t.number("thermal_time_constant_s", positive=True),
        max_winding_temp_c=max_c,
        ambient_temp_c=amb_c,
        housing_resistance_k_per_w=housing_r,
        housing_time_constant_s=housing_tau,
        resistance_temp_coefficient_per_k=t.number("resistance_temp_coefficient_per_k", COPPER_ALPHA_PER_K, nonneg=True, hi=0.05),
        resistance_reference_temp_c=t.number("resistance_reference_temp_c", 25.0, lo=-100.0, hi=300.0),
    )


def read_actuator(t: Table) -> Actuator:
    """Actuator keys of a joint table, converted to the DC-equivalent convention (see robots.robot).

    Keys (units in the names; conventions in robots.motor_constants)::

        motor_type = "dc" | "three_phase"                       (default "dc")
        torque_constant_nm_per_a, current_convention = "dc" | "phase_peak" | "phase_rms"
        back_emf_constant_v_s_per_rad | back_emf_constant_v_per_krpm | speed_constant_rpm_per_v
            (at most one), back_emf_convention = "dc" | "line_peak" | "line_rms" | "phase_peak" | "phase_rms"
        winding_resistance_ohm, resistance_convention = "terminal" | "line_to_line" | "phase"
        pwm_modulation = "svpwm" | "sine"                       (three-phase only, default "svpwm")
        bus_voltage_v, peak_current_a, continuous_current_a     (currents in current_convention)
        gear_ratio, gearbox_efficiency, rotor_inertia_kgm2, max_motor_speed_rad_s, thermal keys

    A DC motor's conventions default to "dc"/"terminal"; a three-phase motor must state its current
    and back-EMF conventions (no silent guess). At least one of Kt or the back-EMF/speed constant is
    needed; the missing one is taken equal to the other (ideal motor). When both are given and they
    differ by more than ``KT_KE_TOLERANCE`` after conversion, a warning goes to ``Actuator.notes``.
    """
    motor = t.string("motor_type", "dc", choices=mc.MOTOR_TYPES)
    three = motor == "three_phase"

    def convention(key, table, dc_default):
        if three and not t.has(key):
            raise RobotFileError("missing key", path=t.path, key=t.key(key),
                                 hint=f"a three-phase motor must state it: one of {list(table[motor])}")
        return t.string(key, dc_default, choices=table[motor])

    ke_keys = [k for k in ("back_emf_constant_v_s_per_rad", "back_emf_constant_v_per_krpm", "speed_constant_rpm_per_v") if t.has(k)]
    if len(ke_keys) > 1:
        raise RobotFileError("give one back-EMF or speed constant", path=t.path, key=t.key(ke_keys[1]),
                             expected="at most one of back_emf_constant_v_s_per_rad, back_emf_constant_v_per_krpm, speed_constant_rpm_per_v",
                             found=ke_keys)
    if not ke_keys and not t.has("torque_constant_nm_per_a"):
        raise RobotFileError("missing key", path=t.path, key=t.key("torque_constant_nm_per_a"),
                             hint="give the torque constant, or a back-EMF or speed constant")

    cur_conv = convention("current_convention", mc.CURRENT_CONVENTIONS, "dc")
    kt_eq = ke_eq = None
    if t.has("torque_constant_nm_per_a"):
        kt_eq = float(mc.torque_constant_to_dc_equivalent(t.number("torque_constant_nm_per_a", positive=True), cur_conv))
    if ke_keys:
        emf_conv = convention("back_emf_convention", mc.BACK_EMF_CONVENTIONS, "dc")
        key = ke_keys[0]
        val = t.number(key, positive=True)
        if key == "back_emf_constant_v_s_per_rad":
            ke_si = val
        elif key == "back_emf_constant_v_per_krpm":
            ke_si = float(mc.v_per_krpm_to_v_s_per_rad(val))
        else:
            ke_si = float(mc.rpm_per_v_to_v_s_per_rad(val))
        ke_eq = float(mc.back_emf_to_dc_equivalent(ke_si, emf_conv))
    elif t.has("back_emf_convention"):
        raise RobotFileError("back_emf_convention given without a back-EMF or speed constant", path=t.path,
                             key=t.key("back_emf_convention"))

    notes: list[str] = []
    if kt_eq is None:
        kt_eq = ke_eq
    elif ke_eq is None:
        ke_eq = kt_eq
    else:
        rel = float(mc.relative_disagreement(kt_eq, ke_eq))
        if rel > mc.KT_KE_TOLERANCE:
            notes.append(
                f"{t.path}: {t.prefix}: torque constant ({kt_eq:.4g} N m/A) and back-EMF constant ({ke_eq:.4g} V s/rad) "
                f"differ by {100 * rel:.0f} % after conversion to the DC-equivalent convention "
                f"(tolerance {100 * mc.KT_KE_TOLERANCE:.0f} %); check the conventions; Kt is used for torque, Ke for voltage"
            )

    r_conv = convention("resistance_convention", mc.RESISTANCE_CONVENTIONS, "terminal")
    r_eq = float(mc.resistance_to_dc_equivalent(t.number("winding_resistance_ohm", positive=True), r_conv, motor))
    if three:
        modulation = t.string("pwm_modulation", "svpwm", choices=mc.PWM_MODULATIONS)
    elif t.has("pwm_modulation"):
        raise RobotFileError("pwm_modulation applies to three-phase motors only", path=t.path, key=t.key("pwm_modulation"),
                             expected='motor_type = "three_phase"', found=motor)
    else:
        modulation = "svpwm"
    bus = t.number("bus_voltage_v", positive=True)
    peak = t.number("peak_current_a", positive=True)
    cont = t.number("continuous_current_a", positive=True)
    if cont > peak:
        raise RobotFileError(
            path=t.path, key=t.key("continuous_current_a"), expected=f"a value <= peak_current_a ({peak:g})", found=cont
        )
    return Actuator(
        gear_ratio=t.number("gear_ratio", positive=True),
        gearbox_efficiency=t.number("gearbox_efficiency", lo=1e-3, hi=1.0),
        torque_constant_nm_per_a=kt_eq,
        back_emf_v_s_per_rad=ke_eq,
        winding_resistance_ohm=r_eq,
        bus_voltage_v=bus,
        max_voltage_v=float(mc.max_voltage_dc_equivalent(bus, motor, modulation)),
        peak_current_a=float(mc.current_to_dc_equivalent(peak, cur_conv)),
        continuous_current_a=float(mc.current_to_dc_equivalent(cont, cur_conv)),
        rotor_inertia_kgm2=t.number("rotor_inertia_kgm2", nonneg=True),
        max_motor_speed_rad_s=t.number("max_motor_speed_rad_s", positive=True),
        thermal=read_thermal(t),
        motor_type=motor,
        notes=tuple(notes),
    )
