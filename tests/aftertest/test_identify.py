"""Identification of the drive and thermal parameters from a log (limits/aftertest/identify.py).

Synthetic logs are made with a planted truth by a path other than the one under test: the drive
current by the project's forward model (robots.actuator_limits.current_a), temperatures by a closed
form or scipy.integrate.solve_ivp; the fits are held against the truth, against SciPy solving the same
problem another way, and against textbook closed forms. Every random draw has a fixed seed.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import integrate, optimize, signal

from legbridge.limits.aftertest.identify import (
    Estimate, identify_drive, identify_thermal, simulate_winding_c,
)
from legbridge.robots.actuator_limits import current_a as forward_current_a
from legbridge.robots.errors import IdentificationError
from legbridge.robots.robot import Actuator, ThermalModel

# ---------------------------------------------------------------------------------------------------
# drive

N_GEAR = 10.0
J_ROTOR = 5e-5          # kg m^2 (invented test value)
FILE_KT, FILE_ETA = 0.10, 0.90
TRUE_KT, TRUE_ETA = 0.9 * FILE_KT, 0.85


def _actuator(kt: float, eta: float) -> Actuator:
    th = ThermalModel(winding_resistance_k_per_w=2.0, winding_time_constant_s=60.0, max_winding_temp_c=120.0,
                      ambient_temp_c=25.0)
    return Actuator(gear_ratio=N_GEAR, gearbox_efficiency=eta, torque_constant_nm_per_a=kt, back_emf_v_s_per_rad=kt,
                    winding_resistance_ohm=0.2, bus_voltage_v=48.0, max_voltage_v=41.0, peak_current_a=60.0,
                    continuous_current_a=20.0, rotor_inertia_kgm2=J_ROTOR, max_motor_speed_rad_s=600.0, thermal=th)


def _gait(periods: float = 3.0, rate_hz: float = 500.0, torque_offset: float = 3.0):
    """A stride-like joint motion: speed and torque out of phase, so both power directions occur."""
    t = np.arange(0.0, periods, 1.0 / rate_hz)
    w = 2.0 * math.pi
    qd = 5.0 * np.cos(w * t)
    qdd = -5.0 * w * np.sin(w * t)
    tau = 20.0 * np.sin(w * t + 0.7) + torque_offset
    return t, tau, qd, qdd


def _current(kt, eta, tau, qd, qdd, c=0.0, b=0.0):
    """The project's forward model (robots.actuator_limits.current_a), friction added to the torque."""
    return forward_current_a(_actuator(kt, eta), tau + c * np.sign(qd) + b * qd, qd, qdd)


def test_estimate_relative_change_and_interval():
    e = Estimate("x", "-", 1.1, 1.0, 1.2, 1.0, 10, "test")
    assert e.relative_change == pytest.approx(0.1)    # (1.1 - 1.0) / 1.0, arithmetic
    assert e.within_ci(1.0) and e.within_ci(1.2) and not e.within_ci(1.21)
    assert Estimate("x", "-", 1.0, 0.9, 1.1, None, 10, "t").relative_change is None
    held = Estimate("x", "-", 0.9, math.nan, math.nan, 0.9, 0, "held")
    assert not held.identified and not held.within_ci(0.9)


def test_drive_recovers_kt_and_eta_like_curve_fit_and_linear_form():
    _, tau, qd, qdd = _gait()
    rng = np.random.default_rng(1)
    cur = _current(TRUE_KT, TRUE_ETA, tau, qd, qdd) + rng.normal(0.0, 0.2, tau.size)
    fit = identify_drive(tau, qd, qdd, cur, gear_ratio=N_GEAR, rotor_inertia_kgm2=J_ROTOR,
                         file_kt=FILE_KT, file_eta=FILE_ETA)
    kt, eta = fit.torque_constant_nm_per_a, fit.gearbox_efficiency
    assert fit.eta_identified and fit.notes == ()
    assert fit.n_motoring > 100 and fit.n_generating > 100
    # planted truth inside the 95 % intervals, intervals narrower than 5 % of the value
    assert kt.within_ci(TRUE_KT) and eta.within_ci(TRUE_ETA)
    assert (kt.ci_high - kt.ci_low) < 0.05 * kt.value and (eta.ci_high - eta.ci_low) < 0.05 * eta.value
    assert kt.relative_change == pytest.approx(-0.1, abs=0.01)
    # residual RMS ~ the 0.2 A noise (least squares on Gaussian noise, s -> sigma)
    assert fit.residual_rms_a == pytest.approx(0.2, rel=0.1)

    # reference 1: scipy.optimize.curve_fit (Levenberg-Marquardt, finite-difference Jacobian) on the
    # project's forward model, a second call path to the same least-squares problem
    def model(_x, k, e):
        return _current(k, e, tau, qd, qdd)

    popt, pcov = optimize.curve_fit(model, None, cur, p0=[FILE_KT, FILE_ETA])
    assert kt.value == pytest.approx(popt[0], rel=1e-6) and eta.value == pytest.approx(popt[1], rel=1e-6)
    # the covariance before widening is curve_fit's s^2 (J^T J)^-1
    np.testing.assert_allclose(fit.covariance / fit.inflation, pcov, rtol=1e-3)

    # reference 2: numpy.linalg.lstsq on the linear form i = g_m tau_m + g_g tau_g + h qdd, with
    # g_m = 1 / (N eta Kt), g_g = eta / (N Kt), so Kt = 1 / (N sqrt(g_m g_g)), eta = sqrt(g_g / g_m)
    # (h = J_r N / Kt left free: a slightly different problem, so agreement within the interval)
    back = tau * qd < 0.0
    a = np.column_stack([np.where(back, 0.0, tau), np.where(back, tau, 0.0), qdd])
    (g_m, g_g, _), *_ = np.linalg.lstsq(a, cur, rcond=None)
    assert kt.within_ci(1.0 / (N_GEAR * math.sqrt(g_m * g_g)))
    assert eta.within_ci(math.sqrt(g_g / g_m))


def test_drive_interval_coverage_with_autocorrelated_noise():
    """AR(1) current noise (phi = 0.8): the widened 95 % intervals cover the truth about 95 % of the
    time, the unwidened ones far less. Reference: the variance of a mean of an AR(1) series is
    (1 + phi) / (1 - phi) times the independent one (effective sample size; time-series textbooks,
    e.g. von Storch and Zwiers, Statistical Analysis in Climate Research, from memory)."""
    _, tau, qd, qdd = _gait(periods=2.0)
    clean = _current(TRUE_KT, TRUE_ETA, tau, qd, qdd)
    hits = hits_unwidened = 0
    runs = 40
    rng = np.random.default_rng(7)
    for _ in range(runs):
        noise = signal.lfilter([1.0], [1.0, -0.8], rng.normal(0.0, 0.15, tau.size))
        fit = identify_drive(tau, qd, qdd, clean + noise, gear_ratio=N_GEAR, rotor_inertia_kgm2=J_ROTOR,
                             file_kt=FILE_KT, file_eta=FILE_ETA)
        e = fit.torque_constant_nm_per_a
        hits += e.within_ci(TRUE_KT)
        half = 0.5 * (e.ci_high - e.ci_low) / math.sqrt(fit.inflation)
        hits_unwidened += abs(e.value - TRUE_KT) <= half
        assert 4.0 < fit.inflation < 20.0          # (1 + 0.8) / (1 - 0.8) = 9 for the noise alone
    assert hits / runs >= 0.85                       # nominal 0.95 (binomial, 40 draws)
    assert hits_unwidened / runs <= 0.75             # +-1.96 sigma / 3 covers ~ 0.5 of a normal


def test_drive_friction_recovered():
    _, tau, qd, qdd = _gait()
    c_true, b_true = 1.5, 0.3
    rng = np.random.default_rng(2)
    cur = _current(TRUE_KT, TRUE_ETA, tau, qd, qdd, c_true, b_true) + rng.normal(0.0, 0.2, tau.size)
    fit = identify_drive(tau, qd, qdd, cur, gear_ratio=N_GEAR, rotor_inertia_kgm2=J_ROTOR,
                         file_kt=FILE_KT, file_eta=FILE_ETA, friction=True)
    assert fit.friction_coulomb_nm.within_ci(c_true)
    assert fit.friction_viscous_nms_per_rad.within_ci(b_true)
    assert fit.torque_constant_nm_per_a.within_ci(TRUE_KT) and fit.gearbox_efficiency.within_ci(TRUE_ETA)
    assert fit.friction_coulomb_nm.file_value is None and fit.friction_coulomb_nm.relative_change is None

    # reference: scipy.optimize.curve_fit on the forward model with friction reaches the same minimum
    def model(_x, k, e, c, b):
        return _current(k, e, tau, qd, qdd, c, b)

    popt, _ = optimize.curve_fit(model, None, cur, p0=[FILE_KT, FILE_ETA, 0.0, 0.0])
    got = [fit.torque_constant_nm_per_a.value, fit.gearbox_efficiency.value,
           fit.friction_coulomb_nm.value, fit.friction_viscous_nms_per_rad.value]
    np.testing.assert_allclose(got, popt, rtol=1e-5)

    # without the friction terms the same log misfits: the residual is well above the 0.2 A noise
    plain = identify_drive(tau, qd, qdd, cur, gear_ratio=N_GEAR, rotor_inertia_kgm2=J_ROTOR,
                           file_kt=FILE_KT, file_eta=FILE_ETA)
    assert plain.residual_rms_a > 2.0 * fit.residual_rms_a


def test_drive_all_motoring_holds_eta_with_a_note():
    t = np.arange(0.0, 2.0, 0.002)
    qd = 3.0 + np.sin(2 * math.pi * t)             # always positive
    qdd = 2 * math.pi * np.cos(2 * math.pi * t)
    tau = 10.0 + 5.0 * np.sin(2 * math.pi * t + 1.0)  # always positive: motoring throughout
    rng = np.random.default_rng(3)
    cur = _current(TRUE_KT, FILE_ETA, tau, qd, qdd) + rng.normal(0.0, 0.1, t.size)
    fit = identify_drive(tau, qd, qdd, cur, gear_ratio=N_GEAR, rotor_inertia_kgm2=J_ROTOR,
                         file_kt=FILE_KT, file_eta=FILE_ETA)
    assert not fit.eta_identified and fit.n_generating == 0
    assert fit.gearbox_efficiency.value == FILE_ETA and not fit.gearbox_efficiency.identified
    assert any("held at the file's" in n for n in fit.notes)
    assert fit.torque_constant_nm_per_a.within_ci(TRUE_KT)   # truth made with the file's eta
    assert fit.parameter_names == ("torque_constant_nm_per_a",)


def test_drive_standstill_counts_as_motoring_like_the_forward_model():
    """Samples held still under load (qd = 0, tau != 0): robots.actuator_limits._shaft_from_joint
    treats them as motoring; noise-free, the fit must return the planted values exactly."""
    _, tau, qd, qdd = _gait()
    qd = np.where(np.abs(qd) < 1.5, 0.0, qd)        # ~20 % of the samples at standstill
    cur = _current(TRUE_KT, TRUE_ETA, tau, qd, qdd)
    fit = identify_drive(tau, qd, qdd, cur, gear_ratio=N_GEAR, rotor_inertia_kgm2=J_ROTOR,
                         file_kt=FILE_KT, file_eta=FILE_ETA)
    assert fit.torque_constant_nm_per_a.value == pytest.approx(TRUE_KT, rel=1e-9)
    assert fit.gearbox_efficiency.value == pytest.approx(TRUE_ETA, rel=1e-9)
    np.testing.assert_allclose(fit.fitted_current_a, cur, rtol=0.0, atol=1e-9)
    assert fit.n_motoring == int(np.sum(tau * qd >= 0.0))


def test_drive_refusals():
    _, tau, qd, qdd = _gait()
    cur = _current(TRUE_KT, TRUE_ETA, tau, qd, qdd)
    kw = dict(gear_ratio=N_GEAR, rotor_inertia_kgm2=J_ROTOR, file_kt=FILE_KT, file_eta=FILE_ETA)
    with pytest.raises(IdentificationError, match="no current"):
        identify_drive(tau, qd, qdd, np.zeros_like(cur), **kw)
    bad = tau.copy()
    bad[10] = np.nan
    with pytest.raises(IdentificationError, match="non-finite"):
        identify_drive(bad, qd, qdd, cur, **kw)
    with pytest.raises(IdentificationError, match="too few samples"):
        identify_drive(tau[:15], qd[:15], qdd[:15], cur[:15], **kw)
    with pytest.raises(IdentificationError, match="does not follow the torque"):
        identify_drive(tau, qd, qdd, -cur, **kw)       # a flipped current sign
    with pytest.raises(IdentificationError, match="wrong shape"):
        identify_drive(tau, qd[:-1], qdd, cur, **kw)
    with pytest.raises(ValueError):                     # IdentificationError is a ValueError too
        identify_drive(tau, qd, qdd, cur, **{**kw, "file_eta": 1.2})


# ---------------------------------------------------------------------------------------------------
# thermal

R_OHM = 0.2           # winding resistance at T_ref [ohm] (invented test value)
T_AMB, T_REF = 25.0, 25.0
ALPHA_CU = 0.00393    # copper, 1/K near 20-25 degC (common practice)


def test_simulator_matches_the_first_order_step_response_on_an_irregular_grid():
    """First-order system, step input from rest: T = T_amb + P R (1 - exp(-t / tau)) (textbook, e.g.
    Ogata, Modern Control Engineering, first-order systems)."""
    rng = np.random.default_rng(4)
    t = np.concatenate([[0.0], np.sort(rng.uniform(0.0, 300.0, 400))])
    r, tau, i = 1.7, 45.0, 6.0
    sim = simulate_winding_c(t, np.full(t.size, i), T_AMB, resistance_k_per_w=r, time_constant_s=tau,
                             winding_resistance_ohm=R_OHM, alpha_per_k=0.0, ref_temp_c=T_REF, initial_c=T_AMB)
    closed = T_AMB + i * i * R_OHM * r * (1.0 - np.exp(-t / tau))
    np.testing.assert_allclose(sim, closed, rtol=0.0, atol=1e-9)


def test_simulator_uses_the_checkers_equations_with_alpha():
    """Consistency with the thermal check (limits.checks.thermal.rise_from_ambient_k, one node, copper
    alpha, regular steps): the identified model is the one the checks run. Not an outside reference."""
    from legbridge.limits.checks.thermal import rise_from_ambient_k

    th = ThermalModel(winding_resistance_k_per_w=1.8, winding_time_constant_s=70.0, max_winding_temp_c=120.0,
                      ambient_temp_c=T_AMB, resistance_temp_coefficient_per_k=ALPHA_CU,
                      resistance_reference_temp_c=20.0)
    dt = 0.05
    t = np.arange(0.0, 200.0 + dt / 2, dt)
    cur = 8.0 * np.abs(np.sin(2 * math.pi * t / 0.7))
    rise = rise_from_ambient_k(th, R_OHM, cur[:-1], dt)
    sim = simulate_winding_c(t, cur, T_AMB, resistance_k_per_w=1.8, time_constant_s=70.0,
                             winding_resistance_ohm=R_OHM, alpha_per_k=ALPHA_CU, ref_temp_c=20.0, initial_c=T_AMB)
    np.testing.assert_allclose(sim - T_AMB, rise, rtol=1e-9, atol=1e-9)


def _thermal_kw(**extra):
    return dict(ambient_c=T_AMB, winding_resistance_ohm=R_OHM, ref_temp_c=T_REF, **extra)


def test_thermal_one_node_step_recovered():
    rng = np.random.default_rng(5)
    t = np.concatenate([[0.0], np.sort(rng.uniform(0.0, 400.0, 1500))])
    r, tau, i = 2.0, 80.0, 7.0
    # closed-form step response (first-order system, textbook) plus 0.05 K sensor noise
    meas = T_AMB + i * i * R_OHM * r * (1.0 - np.exp(-t / tau)) + rng.normal(0.0, 0.05, t.size)
    fit = identify_thermal(t, np.full(t.size, i), meas, **_thermal_kw(alpha_per_k=0.0, file_r=1.5, file_tau=60.0))
    assert not fit.two_node
    assert fit.winding_resistance_k_per_w.within_ci(r) and fit.winding_time_constant_s.within_ci(tau)
    assert fit.winding_initial_c.within_ci(T_AMB)
    assert fit.winding_resistance_k_per_w.relative_change == pytest.approx(r / 1.5 - 1.0, abs=0.01)
    assert fit.residual_rms_k == pytest.approx(0.05, rel=0.1)
    assert fit.winding_capacitance_j_per_k == pytest.approx(tau / r, rel=0.02)


def _one_node_rhs(current, r, tau, alpha):
    cap = tau / r

    def rhs(t, y):
        loss = R_OHM * current(t) ** 2 * (1.0 + alpha * (y[0] - T_REF))
        return [(loss - (y[0] - T_AMB) / r) / cap]
    return rhs


def test_thermal_periodic_current_with_alpha_recovers_twice_the_file_resistance():
    """A running test: a periodic stride current for 300 s, then rest; copper's alpha; 0.1 K noise.
    Reference: scipy.integrate.solve_ivp of C dT/dt = R_ref i^2 (1 + alpha (T - T_ref)) - (T - T_amb) / R
    with the continuous current (the fit sees it sampled at 20 Hz, 16 samples a stride)."""
    file_r, file_tau = 1.0, 100.0
    r, tau = 2.0 * file_r, 130.0
    stride = 0.8

    def running(t):
        return 6.0 * (0.6 + 0.5 * np.sin(2 * math.pi * t / stride) + 0.3 * np.sin(4 * math.pi * t / stride + 1.0))

    t = np.arange(0.0, 400.0 + 1e-9, 0.05)
    stop = 300.0
    y0 = [T_AMB]
    truth = np.empty(t.size)
    for (a, b), cur in (((0.0, stop), running), ((stop, t[-1]), lambda _t: 0.0)):
        sel = (t >= a) & ((t < b) if b < t[-1] else (t <= b))
        sol = integrate.solve_ivp(_one_node_rhs(cur, r, tau, ALPHA_CU), (a, b), y0, method="DOP853",
                                  dense_output=True, rtol=1e-10, atol=1e-10, max_step=stride / 8)
        truth[sel] = sol.sol(t[sel])[0]
        y0 = sol.y[:, -1]
    current = np.where(t < stop, running(t), 0.0)
    rng = np.random.default_rng(6)
    meas = truth + rng.normal(0.0, 0.1, t.size)
    fit = identify_thermal(t, current, meas, **_thermal_kw(alpha_per_k=ALPHA_CU, file_r=file_r, file_tau=file_tau))
    assert fit.winding_resistance_k_per_w.within_ci(r) and fit.winding_time_constant_s.within_ci(tau)
    assert fit.winding_resistance_k_per_w.relative_change == pytest.approx(1.0, abs=0.05)
    w = fit.winding_resistance_k_per_w
    assert (w.ci_high - w.ci_low) < 0.05 * w.value


def _two_node_truth(t, current, rw, tauw, rh, tauh, switches):
    """scipy.integrate.solve_ivp of the two-node network (limits/checks/thermal.py's equations),
    piecewise over the current's switching times."""
    cw, ch = tauw / rw, tauh / rh

    def rhs(_t, y, i):
        tw, th = y
        loss = R_OHM * i * i * (1.0 + ALPHA_CU * (tw - T_REF))
        return [(loss - (tw - th) / rw) / cw, ((tw - th) / rw - (th - T_AMB) / rh) / ch]

    edges = np.concatenate([[t[0]], switches, [t[-1]]])
    y0 = np.array([T_AMB, T_AMB])
    out = np.empty((2, t.size))
    for a, b in zip(edges[:-1], edges[1:]):
        i = current(a)
        sel = (t >= a) & ((t < b) if b < t[-1] else (t <= b))
        sol = integrate.solve_ivp(rhs, (a, b), y0, method="DOP853", args=(i,), dense_output=True,
                                  rtol=1e-10, atol=1e-10)
        out[:, sel] = sol.sol(t[sel])
        y0 = sol.y[:, -1]
    return out


def test_thermal_two_node_recovers_all_four_parameters():
    rw, tauw, rh, tauh = 1.2, 40.0, 2.0, 300.0
    switches = np.array([60.0, 100.0, 160.0, 200.0, 260.0, 300.0, 360.0, 400.0])

    def current(t):
        return 8.0 if (t < 400.0 and (t % 100.0) < 60.0) else 0.0

    rng = np.random.default_rng(8)
    # an irregular grid that holds the switching times
    t = np.unique(np.concatenate([[0.0, 800.0], switches, rng.uniform(0.0, 800.0, 1600)]))
    truth = _two_node_truth(t, current, rw, tauw, rh, tauh, switches)
    tw = truth[0] + rng.normal(0.0, 0.05, t.size)
    th = truth[1] + rng.normal(0.0, 0.05, t.size)
    cur = np.array([current(x) for x in t])
    fit = identify_thermal(t, cur, tw, housing_temp_c=th,
                           **_thermal_kw(alpha_per_k=ALPHA_CU, file_r=1.0, file_tau=30.0,
                                         file_housing_r=1.5, file_housing_tau=400.0))
    assert fit.two_node
    assert fit.winding_resistance_k_per_w.within_ci(rw) and fit.winding_time_constant_s.within_ci(tauw)
    assert fit.housing_resistance_k_per_w.within_ci(rh) and fit.housing_time_constant_s.within_ci(tauh)
    for e in (fit.winding_resistance_k_per_w, fit.winding_time_constant_s,
              fit.housing_resistance_k_per_w, fit.housing_time_constant_s):
        assert (e.ci_high - e.ci_low) < 0.1 * e.value, e
    assert fit.housing_time_constant_s.relative_change == pytest.approx(tauh / 400.0 - 1.0, abs=0.05)


def test_thermal_refusals():
    t = np.linspace(0.0, 300.0, 600)
    cur = np.full(t.size, 5.0)
    kw = _thermal_kw(alpha_per_k=0.0, file_r=2.0, file_tau=60.0)
    rng = np.random.default_rng(9)
    flat = T_AMB + rng.normal(0.0, 0.05, t.size)            # a temperature that does not move
    with pytest.raises(IdentificationError, match="hardly changes"):
        identify_thermal(t, cur, flat, **kw)
    with pytest.raises(IdentificationError, match="hardly changes"):
        identify_thermal(t, cur, np.full(t.size, 40.0), **kw)
    rising = T_AMB + 50.0 * R_OHM * 2.0 * (1.0 - np.exp(-t / 60.0))
    with pytest.raises(IdentificationError, match="no current"):
        identify_thermal(t, np.zeros(t.size), rising, **kw)
    bad = rising.copy()
    bad[3] = np.nan
    with pytest.raises(IdentificationError, match="non-finite"):
        identify_thermal(t, cur, bad, **kw)
    with pytest.raises(IdentificationError, match="too short"):
        identify_thermal(t, cur, rising, **{**kw, "file_tau": 5000.0})   # 300 s < 0.1 x 5000 s
    with pytest.raises(IdentificationError, match="too few samples"):
        identify_thermal(t[:10], cur[:10], rising[:10], **kw)
    back = t.copy()
    back[5] = back[4]
    with pytest.raises(IdentificationError, match="time does not increase"):
        identify_thermal(back, cur, rising, **kw)
