"""Thermal keys of the actuator table: one-node and two-node winding models (robots.robot.ThermalModel).

Two-node lumped thermal network: winding -> housing -> ambient resistances in series, so the
steady-state winding rise is P (R_w + R_h) (Incropera et al., *Fundamentals of Heat and Mass
Transfer*, ch. 3, thermal resistances in series; from memory).
"""

import pytest

from legbridge.robots import load_robot
from legbridge.robots.errors import RobotFileError

from .conftest import DC_ACTUATOR, robot_text

TWO_NODE = DC_ACTUATOR + "housing_thermal_resistance_k_per_w = 0.9\nhousing_thermal_time_constant_s = 900.0\n"


def test_one_node_default(write_robot):
    th = load_robot(write_robot(robot_text())).joint("hip").actuator.thermal
    assert not th.two_node
    assert th.total_resistance_k_per_w == 1.8 and th.ambient_temp_c == 25.0


def test_resistance_temperature_keys(write_robot):
    # copper: 0.00393 /K near room temperature (common practice; handbook value from memory); the
    # resistance at 120 degC is then R_25 (1 + 0.00393 * 95) = 1.373 R_25
    th = load_robot(write_robot(robot_text())).joint("hip").actuator.thermal
    assert (th.resistance_temp_coefficient_per_k, th.resistance_reference_temp_c) == (0.00393, 25.0)
    assert th.resistance_factor(120.0) == pytest.approx(1.37335, rel=1e-12)
    alu = DC_ACTUATOR + "resistance_temp_coefficient_per_k = 0.0039\nresistance_reference_temp_c = 20.0\n"
    th2 = load_robot(write_robot(robot_text(hip_actuator=alu))).joint("hip").actuator.thermal
    assert th2.resistance_factor(20.0) == 1.0 and th2.resistance_factor(120.0) == pytest.approx(1.39, rel=1e-12)


def test_two_node(write_robot):
    th = load_robot(write_robot(robot_text(hip_actuator=TWO_NODE))).joint("hip").actuator.thermal
    assert th.two_node
    assert th.housing_resistance_k_per_w == 0.9 and th.housing_time_constant_s == 900.0
    # series resistances: steady winding rise at 10 W copper loss = 10 * (1.8 + 0.9) K
    assert 10.0 * th.total_resistance_k_per_w == pytest.approx(27.0)


@pytest.mark.parametrize(
    "act, match",
    [
        (DC_ACTUATOR + "housing_thermal_resistance_k_per_w = 0.9\n", "housing_thermal_time_constant_s'.*needs both housing keys"),
        (DC_ACTUATOR + "housing_thermal_time_constant_s = 900.0\n", "housing_thermal_resistance_k_per_w'.*needs both housing keys"),
        (TWO_NODE.replace("housing_thermal_resistance_k_per_w = 0.9", "housing_thermal_resistance_k_per_w = 0.0"), "housing_thermal_resistance_k_per_w'.*value > 0"),
        (DC_ACTUATOR.replace("max_winding_temp_c = 120.0", "max_winding_temp_c = 20.0"), "max_winding_temp_c'.*above ambient_temp_c"),
        (DC_ACTUATOR.replace("thermal_time_constant_s = 60.0\n", ""), "thermal_time_constant_s'.*missing key"),
        (DC_ACTUATOR + "resistance_temp_coefficient_per_k = -0.004\n", "resistance_temp_coefficient_per_k'"),
        (DC_ACTUATOR + "resistance_temp_coefficient_per_k = 0.4\n", "resistance_temp_coefficient_per_k'"),
    ],
)
def test_thermal_errors(write_robot, act, match):
    with pytest.raises(RobotFileError, match=match):
        load_robot(write_robot(robot_text(hip_actuator=act)))
