"""Motor constants in datasheet conventions -> the internal DC-equivalent convention (robots.robot).

Pure, vectorised functions (scalars or NumPy arrays in, the same shape out). SI units inside:
torque constant Kt [N m/A], back-EMF constant Ke [V s/rad] (= V per rad/s of *mechanical*
shaft speed, pole pairs included), resistance [ohm], current [A], voltage [V].

The DC-equivalent motor (see robots.robot)::

    T = Kt_eq I_eq,   V_eq = R_eq I_eq + Ke_eq w,   |V_eq| <= V_max,   Kt_eq = Ke_eq (ideal motor)

**DC motor**: the datasheet values are already of that form (current_convention "dc",
back_emf_convention "dc", resistance_convention "terminal"); V_max = V_bus.

**Sinusoidal three-phase motor (PMSM / brushless AC) under field-oriented control, i_d = 0**, wye
equivalent (a delta winding has the same line-to-line values), amplitude-invariant Park transform.
Derivation (Hughes and Drury, *Electric Motors and Drives*, 4th ed., ch. 9 on synchronous motors
and ch. 10 on brushless drives; Krishnan, *Permanent Magnet Synchronous and Brushless DC Motor
Drives*, ch. 5, dq model; the steps below are standard and were re-derived here, the chapter
numbers are from memory):

* phase back-EMF e_a = Ke_ph,pk w sin(theta); the line-to-line EMF is the difference of two phases
  120 degrees apart, amplitude sqrt(3) times larger: Ke_line,pk = sqrt(3) Ke_ph,pk;
  rms values are peak / sqrt(2).
* with the phase current in phase with the EMF, amplitude I_pk, the air-gap power is
  P = 3 E_rms I_rms = (3/2) Ke_ph,pk w I_pk, so T = P / w = (3/2) Ke_ph,pk I_pk:
  Kt per phase-peak ampere = 1.5 Ke_ph,pk = (sqrt(3)/2) Ke_line,pk;
  per rms ampere Kt_rms = sqrt(2) Kt_pk = sqrt(3) Ke_line,rms.
* q-axis voltage (steady state, inductance drop neglected as in the DC model): v_q = R_ph I_pk +
  Ke_ph,pk w. Multiplying by 1.5 gives the DC-equivalent form with I_eq = I_pk (phase-peak q-axis
  current), Ke_eq = Kt_eq = 1.5 Ke_ph,pk, R_eq = 1.5 R_ph = 0.75 R_line-to-line, V_eq = 1.5 v_q;
  V_eq I_eq = 1.5 v_q i_q is the electrical power of the three phases and R_eq I_eq^2 =
  3 R_ph I_rms^2 the copper loss, so power and heat are preserved.
* space-vector PWM reaches a line-to-line peak equal to the bus voltage (phase peak V_bus/sqrt(3)),
  so V_max = 1.5 V_bus / sqrt(3) = (sqrt(3)/2) V_bus; sine-triangle PWM reaches phase peak V_bus/2,
  V_max = 0.75 V_bus. Check: no-load speed V_max / Ke_eq = V_bus / Ke_line,pk (common practice:
  the motor spins until its line-to-line EMF peak equals the bus).

Speed constant Kv [rpm/V] is the inverse back-EMF constant in rpm: Ke [V s/rad] = 60 / (2 pi Kv),
in whatever voltage convention Kv was stated in. Back-EMF in V per 1000 rpm:
Ke [V s/rad] = Ke_krpm * 60 / (2 pi 1000).
"""

from __future__ import annotations

import numpy as np

MOTOR_TYPES = ("dc", "three_phase")
CURRENT_CONVENTIONS = {"dc": ("dc",), "three_phase": ("phase_peak", "phase_rms")}
BACK_EMF_CONVENTIONS = {"dc": ("dc",), "three_phase": ("line_peak", "line_rms", "phase_peak", "phase_rms")}
RESISTANCE_CONVENTIONS = {"dc": ("terminal",), "three_phase": ("terminal", "line_to_line", "phase")}
PWM_MODULATIONS = ("svpwm", "sine")

#: Kt and Ke, both converted to the DC-equivalent convention, should agree; a relative difference
#: above this (|Kt - Ke| / Ke) is reported as a warning. 10 % covers datasheet rounding, magnet
#: temperature and the torque-constant drop near peak current (common practice, tolerance chosen by us).
KT_KE_TOLERANCE = 0.10

SQRT2 = np.sqrt(2.0)
SQRT3 = np.sqrt(3.0)


def rpm_per_v_to_v_s_per_rad(kv_rpm_per_v):
    """Speed constant Kv [rpm/V] -> back-EMF constant Ke [V s/rad]: 60 / (2 pi Kv)."""
    return 60.0 / (2.0 * np.pi * np.asarray(kv_rpm_per_v, dtype=float))


def v_per_krpm_to_v_s_per_rad(ke_v_per_krpm):
    """Back-EMF constant in V per 1000 rpm -> V s/rad."""
    return np.asarray(ke_v_per_krpm, dtype=float) * 60.0 / (2.0 * np.pi * 1000.0)


def current_to_dc_equivalent(current_a, convention: str):
    """A current in the datasheet convention -> the DC-equivalent current [A] (phase peak for 3-phase)."""
    i = np.asarray(current_a, dtype=float)
    if convention in ("dc", "phase_peak"):
        return i
    if convention == "phase_rms":
        return i * SQRT2
    raise ValueError(f"unknown current convention {convention!r}")


def torque_constant_to_dc_equivalent(kt_nm_per_a, convention: str):
    """Kt per ampere of the given current convention -> Kt per DC-equivalent ampere [N m/A].

    Torque is preserved: Kt_rms I_rms = Kt_pk I_pk with I_pk = sqrt(2) I_rms.
    """
    kt = np.asarray(kt_nm_per_a, dtype=float)
    if convention in ("dc", "phase_peak"):
        return kt
    if convention == "phase_rms":
        return kt / SQRT2
    raise ValueError(f"unknown current convention {convention!r}")


def back_emf_to_phase_peak(ke_v_s_per_rad, convention: str):
    """Three-phase back-EMF constant in a voltage convention -> phase-peak Ke [V s/rad]."""
    ke = np.asarray(ke_v_s_per_rad, dtype=float)
    factor = {"phase_peak": 1.0, "phase_rms": SQRT2, "line_peak": 1.0 / SQRT3, "line_rms": SQRT2 / SQRT3}
    if convention not in factor:
        raise ValueError(f"unknown three-phase back-EMF convention {convention!r}")
    return ke * factor[convention]


def back_emf_to_dc_equivalent(ke_v_s_per_rad, convention: str):
    """Back-EMF constant [V s/rad] in a convention -> DC-equivalent Ke [V s/rad] (1.5 Ke_ph,pk for 3-phase)."""
    if convention == "dc":
        return np.asarray(ke_v_s_per_rad, dtype=float)
    return 1.5 * back_emf_to_phase_peak(ke_v_s_per_rad, convention)


def resistance_to_dc_equivalent(r_ohm, convention: str, motor_type: str = "dc"):
    """Winding resistance [ohm] -> DC-equivalent resistance [ohm].

    DC: the terminal resistance. Three-phase: 1.5 R_phase = 0.75 R_line-to-line; "terminal" means
    line-to-line for a three-phase motor (the value an ohmmeter reads between two motor leads).
    """
    r = np.asarray(r_ohm, dtype=float)
    if motor_type == "dc":
        if convention != "terminal":
            raise ValueError(f"a DC motor has only a terminal resistance, not {convention!r}")
        return r
    if convention in ("terminal", "line_to_line"):
        return 0.75 * r
    if convention == "phase":
        return 1.5 * r
    raise ValueError(f"unknown resistance convention {convention!r}")


def max_voltage_dc_equivalent(bus_voltage_v, motor_type: str = "dc", modulation: str = "svpwm"):
    """Largest DC-equivalent winding voltage [V] from the bus voltage.

    DC motor (H-bridge): V_bus. Three-phase: (sqrt(3)/2) V_bus with space-vector PWM,
    0.75 V_bus with sine-triangle PWM.
    """
    v = np.asarray(bus_voltage_v, dtype=float)
    if motor_type == "dc":
        return v
    if modulation == "svpwm":
        return v * SQRT3 / 2.0
    if modulation == "sine":
        return v * 0.75
    raise ValueError(f"unknown PWM modulation {modulation!r}")


def relative_disagreement(kt_eq, ke_eq):
    """|Kt - Ke| / Ke of DC-equivalent constants [-] (0 for an ideal motor)."""
    kt = np.asarray(kt_eq, dtype=float)
    ke = np.asarray(ke_eq, dtype=float)
    return np.abs(kt - ke) / ke
