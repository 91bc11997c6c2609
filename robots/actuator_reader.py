"""Read one joint's actuator table (TOML) into an :class:`~legbridge.robots.robot.Actuator`."""

from __future__ import annotations

from .fields import Table
from .robot import Actuator, ThermalModel


def read_thermal(t: Table) -> ThermalModel:
    """One-node thermal keys, or two-node ones when housing values are present."""
    max_c = t.number("max_winding_temp_c")
    amb_c = t.number("ambient_temp_c", 25.0)
    if max_c <= amb_c:
        from .errors import RobotFileError

        raise RobotFileError(
            path=t.path, key=t.key("max_winding_temp_c"), expected=f"a value above ambient_temp_c ({amb_c:g})", found=max_c
        )
    housing_r = t.number("housing_thermal_resistance_k_per_w", None, positive=True)
    housing_tau = t.number("housing_thermal_time_constant_s", None, positive=True)
    if (housing_r is None) != (housing_tau is None):
        from .errors import RobotFileError

        missing = "housing_thermal_time_constant_s" if housing_tau is None else "housing_thermal_resistance_k_per_w"
        raise RobotFileError("two-node thermal model needs both housing keys", path=t.path, key=t.key(missing))
    return ThermalModel(
        winding_resistance_k_per_w=t.number("thermal_resistance_k_per_w", positive=True),
        winding_time_constant_s=t.number("thermal_time_constant_s", positive=True),
        max_winding_temp_c=max_c,
        ambient_temp_c=amb_c,
        housing_resistance_k_per_w=housing_r,
        housing_time_constant_s=housing_tau,
    )


def read_actuator(t: Table) -> Actuator:
    """Actuator keys of a joint table, in the DC-equivalent convention (see robots.robot)."""
    kt = t.number("torque_constant_nm_per_a", positive=True)
    bus = t.number("bus_voltage_v", positive=True)
    peak = t.number("peak_current_a", positive=True)
    cont = t.number("continuous_current_a", positive=True)
    if cont > peak:
        from .errors import RobotFileError

        raise RobotFileError(
            path=t.path, key=t.key("continuous_current_a"), expected=f"a value <= peak_current_a ({peak:g})", found=cont
        )
    return Actuator(
        gear_ratio=t.number("gear_ratio", positive=True),
        gearbox_efficiency=t.number("gearbox_efficiency", lo=1e-3, hi=1.0),
        torque_constant_nm_per_a=kt,
        back_emf_v_s_per_rad=kt,
        winding_resistance_ohm=t.number("winding_resistance_ohm", positive=True),
        bus_voltage_v=bus,
        max_voltage_v=bus,
        peak_current_a=peak,
        continuous_current_a=cont,
        rotor_inertia_kgm2=t.number("rotor_inertia_kgm2", nonneg=True),
        max_motor_speed_rad_s=t.number("max_motor_speed_rad_s", positive=True),
        thermal=read_thermal(t),
    )
