"""Fixtures and helpers used only by the robots tests: small robot files written to tmp_path."""

from __future__ import annotations

import textwrap

import pytest

ROBOT_HEAD = """\
[robot]
name = "test-leg"               # invented test values
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
"""

DC_ACTUATOR = """\
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


def robot_text(hip_actuator: str = DC_ACTUATOR, knee_actuator: str = DC_ACTUATOR, head: str = ROBOT_HEAD,
               hip_extra: str = "", knee_extra: str = "") -> str:
    """A complete two-joint robot TOML with the given actuator blocks (dedented)."""
    return (
        textwrap.dedent(head)
        + "\n[joints.hip]\nlower_rad = -1.6\nupper_rad = 1.6\n" + textwrap.dedent(hip_extra) + textwrap.dedent(hip_actuator)
        + "\n[joints.knee]\nlower_rad = -2.6\nupper_rad = -0.05\n" + textwrap.dedent(knee_extra) + textwrap.dedent(knee_actuator)
    )


@pytest.fixture
def write_robot(tmp_path):
    """write_robot(text, name='robot.toml') -> path of a file holding ``text``."""

    def _write(text: str, name: str = "robot.toml"):
        p = tmp_path / name
        p.write_text(text)
        return p

    return _write
