"""Winding thermal model against closed forms and SciPy.

Sources: step response of a first-order system, T(t) = P R (1 - exp(-t / tau)), steady state P R and
63.2 % of it after one time constant (Ogata, Modern Control Engineering, 5th ed., sec. 5-2,
first-order systems); with a resistance that rises linearly with temperature, R(T) = R_ref (1 +
alpha (T - T_ref)), a constant current gives the first-order system
    C dtheta/dt = P0 (1 + alpha theta) - theta / R_th      (theta: rise above T_ref = T_amb)
    theta(t) = theta_ss (1 - exp(-t (1 - alpha P0 R_th) / tau)),  theta_ss = P0 R_th / (1 - alpha P0 R_th)
and runs away when alpha P0 R_th >= 1 (the same first-order solution with a rate that changes sign);
the networks integrated by scipy.integrate.solve_ivp (a general-purpose ODE solver solving the same
equations another way). Copper's coefficient 0.00393 /K (common practice; handbook value from memory).
"""

import math
from dataclasses import replace

import numpy as np
import pytest
from scipy.integrate import solve_ivp

from legbridge.limits.checks.results import CheckSettings
from legbridge.limits.checks.thermal import rise_from_ambient_k, simulate
from legbridge.robots.robot import ThermalModel

ONE = ThermalModel(winding_resistance_k_per_w=1.8, winding_time_constant_s=60.0, max_winding_temp_c=120.0, ambient_temp_c=25.0,
                   resistance_temp_coefficient_per_k=0.0)
TWO = ThermalModel(winding_resistance_k_per_w=0.8, winding_time_constant_s=20.0, max_winding_temp_c=120.0, ambient_temp_c=25.0,
                   housing_resistance_k_per_w=1.5, housing_time_constant_s=400.0, resistance_temp_coefficient_per_k=0.0)


def test_first_order_step_63_percent_after_one_time_constant_and_steady_state():
    dt, p = 0.01, 30.0  # R = 1 ohm, I = sqrt(30) A: P = 30 W
    n = int(round(10 * ONE.winding_time_constant_s / dt))
    rise = rise_from_ambient_k(ONE, 1.0, np.full(n, math.sqrt(p)), dt)
    k_tau = int(round(ONE.winding_time_constant_s / dt))
    # Ogata sec. 5-2: 63.2 % of the final value after one time constant (exact: 1 - e^-1)
    assert rise[k_tau] == pytest.approx((1 - math.exp(-1)) * p * ONE.winding_resistance_k_per_w, rel=1e-9)
    assert rise[k_tau] / (p * 1.8) == pytest.approx(0.632, abs=5e-4)
    # steady-state rise = P R_th (after 10 tau the residual is e^-10 ~ 4.5e-5)
    assert rise[-1] == pytest.approx(p * 1.8, rel=1e-4)
    assert rise[0] == 0.0


@pytest.mark.parametrize("alpha", [0.0, 0.00393])
def test_two_node_matches_solve_ivp_and_steady_state(alpha):
    dt, i, r_ref = 0.5, 4.0, 1.25  # P0 = 20 W at T_ref = T_amb
    th = replace(TWO, resistance_temp_coefficient_per_k=alpha)
    n = 4000
    rise = rise_from_ambient_k(th, r_ref, np.full(n, i), dt)
    rw, rh = 0.8, 1.5
    cw, ch = 20.0 / rw, 400.0 / rh

    def f(t, x):
        tw, th_ = x
        loss = r_ref * (1 + alpha * tw) * i * i
        return [(loss - (tw - th_) / rw) / cw, ((tw - th_) / rw - th_ / rh) / ch]

    sol = solve_ivp(f, (0, n * dt), [0.0, 0.0], t_eval=np.arange(n + 1) * dt, rtol=1e-10, atol=1e-10, method="LSODA")
    np.testing.assert_allclose(rise, sol.y[0], atol=1e-6)
    long = rise_from_ambient_k(th, r_ref, np.full(40000, i), dt)  # 50 housing time constants
    p0, r_th = r_ref * i * i, rw + rh
    assert long[-1] == pytest.approx(p0 * r_th / (1 - alpha * p0 * r_th), rel=1e-6)  # steady state


def _constant_current(example_robot, make_traj, current, n=1000):
    """The knee at standstill drawing ``current`` over a plan of n steps at 1 kHz (n + 1 samples: the
    last is where the next repetition starts)."""
    act = example_robot.joints[1].actuator
    tau_knee = current * act.torque_constant_nm_per_a * act.gear_ratio * act.gearbox_efficiency  # motoring, standstill
    traj = make_traj(example_robot, np.tile([0.2, -1.0], (n + 1, 1)), tau=np.tile([0.0, tau_knee], (n + 1, 1)))
    np.testing.assert_allclose(traj.current_a[:, 1], current)
    return traj, act


def _square_wave(example_robot, make_traj, amps, on=300, n=1000):
    """The knee at standstill drawing ``amps`` for the first ``on`` of ``n`` steps at 1 kHz, then 0 (n + 1
    samples: the last, where the next repetition starts, is the first again)."""
    cur = np.where(np.arange(n + 1) % n < on, amps, 0.0)
    act = example_robot.joints[1].actuator
    tau_knee = cur * act.torque_constant_nm_per_a * act.gear_ratio * act.gearbox_efficiency
    return make_traj(example_robot, np.tile([0.2, -1.0], (n + 1, 1)), tau=np.column_stack([np.zeros(n + 1), tau_knee]))


def test_time_to_limit_with_a_resistance_that_rises_with_temperature(example_robot, make_traj):
    # example knee: R_ref 0.25 ohm at 25 degC = ambient, R_th 1.8 K/W, tau 60 s, limit 120 degC;
    # copper alpha 0.00393 /K by default. 30 A: P0 = 225 W, alpha P0 R_th = 1.59 >= 1: runaway.
    # 15 A: P0 = 56.25 W, alpha P0 R_th = 0.398; theta_ss = 101.25 / 0.602 = 168.2 K > 95 K allowed.
    traj, act = _constant_current(example_robot, make_traj, 15.0)
    assert act.thermal.resistance_temp_coefficient_per_k == 0.00393
    p0, r_th, tau, a = 0.25 * 15.0**2, 1.8, 60.0, 0.00393
    k = 1 - a * p0 * r_th
    theta_ss = p0 * r_th / k
    t_hit = -tau / k * math.log(1 - 95.0 / theta_ss)
    th = simulate(traj, example_robot, duration_s=200.0)
    assert th.time_to_limit_s["knee"] == pytest.approx(t_hit, rel=1e-3)  # within 1 % asked; sample-exact here
    # the constant-alpha = 0 model would have been late: -tau ln(1 - 95 / (P0 R_th))
    assert -tau * math.log(1 - 95.0 / (p0 * r_th)) > 1.05 * t_hit
    assert th.time_to_limit_s["hip"] is None and not th.runaway["knee"]
    # the hottest repetition of a finite test: the plan's sample at 0.999 s is last run at t = 199.999 s
    assert th.phase_temp_c[-2, 1] == pytest.approx(25 + theta_ss * (1 - math.exp(-199.999 * k / tau)), rel=1e-9)
    assert th.duration_s == 200.0
    steady = simulate(traj, example_robot, None)  # default: repeated for as long as the test runs
    assert steady.periodic and steady.phase_temp_c[0, 1] == pytest.approx(25 + theta_ss, rel=1e-9)
    assert steady.time_to_limit_s["knee"] == pytest.approx(t_hit, rel=1e-3)


def test_thermal_runaway_is_detected(example_robot, make_traj):
    # alpha P0 R_th >= 1 <=> I^2 >= 1 / (alpha R_ref R_th) = 1 / (0.00393 * 0.25 * 1.8): I >= 23.78 A
    i_crit = math.sqrt(1 / (0.00393 * 0.25 * 1.8))
    below, _ = _constant_current(example_robot, make_traj, 0.99 * i_crit)
    above, _ = _constant_current(example_robot, make_traj, 1.01 * i_crit)
    assert not simulate(below, example_robot).runaway["knee"]
    th = simulate(above, example_robot)
    assert th.runaway["knee"] and math.isinf(th.steady_peak_c["knee"]) and np.all(np.isinf(th.phase_temp_c[:, 1]))
    assert th.time_to_limit_s["knee"] is not None and th.time_to_limit_s["knee"] > 0


def test_periodic_steady_state_matches_scipy_over_many_periods(example_robot, make_traj):
    # square-wave current, 1 s period (0.3 s at 20 A, then 0): the periodic steady state against
    # SciPy: the fixed point of the period map (solve_ivp over one period, brentq for the fixed point)
    th = simulate(_square_wave(example_robot, make_traj, 20.0), example_robot)
    c, a, r = 60.0 / 1.8, 0.00393, 0.25

    def f(t, x, i):
        return [(r * (1 + a * x[0]) * i * i - x[0] / 1.8) / c]

    from scipy.optimize import brentq

    def period_map(x0):
        x = solve_ivp(f, (0, 0.3), [x0], args=(20.0,), rtol=1e-12, atol=1e-12).y[:, -1]
        return solve_ivp(f, (0, 0.7), x, args=(0.0,), rtol=1e-12, atol=1e-12).y[0, -1]

    x_star = brentq(lambda x0: period_map(x0) - x0, 0.0, 500.0, xtol=1e-12)
    assert th.phase_temp_c[0, 1] == pytest.approx(25 + x_star, rel=1e-8)  # the start of the period
    # RMS current over the period by hand: 20 A * sqrt(0.3) = 10.954 A
    assert th.rms_current_a[1] == pytest.approx(20 * math.sqrt(0.3), rel=1e-12)


def test_continuous_current_check_and_duration_shorter_than_the_plan(example_robot, make_traj):
    # RMS over the period against the continuous rating (12 A in the example file): a square wave of
    # 30 A for 30 % of the time has RMS 30 sqrt(0.3) = 16.43 A -> 136.9 %
    from legbridge.limits.checks.case import check_case

    traj = _square_wave(example_robot, make_traj, 30.0)
    r = check_case(traj, example_robot, CheckSettings(run_qps=False))  # repeated without end (default)
    assert r.trace("continuous_current", "knee").utilisation[0] == pytest.approx(30 * math.sqrt(0.3) / 12.0, rel=1e-12)
    short = check_case(traj, example_robot, CheckSettings(run_qps=False, duration_s=0.5))
    assert short.thermal.duration_s == 0.5  # a 0.5 s test of a 1 s plan stays 0.5 s (no longer raised)
    assert not any(t.limit == "continuous_current" for t in short.traces)  # a finite test: the temperature judges


def test_an_unknown_or_enormous_current_fails_closed(example_robot, make_traj):
    # fail closed: a current that is not a number cannot be heated (not evaluated); one so large that
    # the loss outgrows any cooling within a sample (1e6 A) is a thermal runaway (counted as exceeding)
    from legbridge.limits.checks.case import check_case

    traj, _ = _constant_current(example_robot, make_traj, 5.0, n=50)
    cur = np.array(traj.current_a, copy=True)
    cur[10, 1] = np.nan
    th = simulate(replace(traj, current_a=cur), example_robot)
    assert np.all(np.isnan(th.phase_temp_c[:, 1])) and th.time_to_limit_s["knee"] is None
    r = check_case(replace(traj, current_a=cur), example_robot, CheckSettings(run_qps=False))
    assert any(f.startswith("winding_temperature of knee: value not finite") for f in r.findings) and not r.passed
    cur[10, 1] = 1e6
    th = simulate(replace(traj, current_a=cur), example_robot)
    assert th.runaway["knee"] and np.all(np.isinf(th.phase_temp_c[:, 1]))


def test_two_node_sample_maps_equal_scipy_expm_of_the_augmented_matrix():
    # Reference: scipy.linalg.expm of the augmented matrix [[B dt, u dt], [0, 0]] (Van Loan's block
    # form of the zero-order-hold discretisation). The closed form (Sylvester's formula) must agree to
    # 1e-12 relative for currents from zero to near runaway and for steps from 1e-5 s to 10 s.
    import scipy.linalg

    from legbridge.limits.checks.thermal import _system, sample_maps
    from legbridge.robots.robot import ThermalModel

    th = ThermalModel(winding_resistance_k_per_w=0.6, winding_time_constant_s=90.0, max_winding_temp_c=130.0,
                      ambient_temp_c=25.0, housing_resistance_k_per_w=0.45, housing_time_constant_s=1200.0)
    current = np.array([0.0, 1.0, 10.0, 28.0, 60.0, 120.0, 250.0])
    for dt in (1e-5, 1e-3, 0.1, 10.0):
        m, v = sample_maps(th, 0.09, current, dt)
        a0, cw = _system(th)
        for k, i in enumerate(current):
            aug = np.zeros((3, 3))
            aug[:2, :2] = a0 * dt
            aug[0, 0] += th.resistance_temp_coefficient_per_k * 0.09 * i * i / cw * dt
            aug[0, 2] = 0.09 * i * i * th.resistance_factor(th.ambient_temp_c) / cw * dt
            e = scipy.linalg.expm(aug)
            np.testing.assert_allclose(m[k], e[:2, :2], rtol=1e-12, atol=1e-15, err_msg=f"dt {dt}, {i} A")
            np.testing.assert_allclose(v[k], e[:2, 2], rtol=1e-11, atol=1e-15, err_msg=f"dt {dt}, {i} A")


def test_repetition_starts_at_once_equal_the_one_by_one_powers():
    # Reference: numpy.linalg.matrix_power one repetition at a time (start()), against the
    # eigen-decomposition used for many repetitions at once (starts()), to 1e-9 relative.
    from legbridge.limits.checks import thermal as th
    from legbridge.robots.robot import ThermalModel

    tm = ThermalModel(winding_resistance_k_per_w=0.6, winding_time_constant_s=90.0, max_winding_temp_c=130.0,
                      ambient_temp_c=25.0, housing_resistance_k_per_w=0.45, housing_time_constant_s=1200.0)
    current = 20.0 + 10.0 * np.sin(np.linspace(0.0, 20.0, 2001))
    per = th._Period(*th.prefix_maps(*th.sample_maps(tm, 0.09, current, 1e-3)))
    js = np.array([0, 1, 2, 5, 17, 100, 1000, 5000])
    one = np.array([per.start(int(j)) for j in js])
    np.testing.assert_allclose(per.starts(js), one, rtol=1e-9, atol=1e-12)
    np.testing.assert_allclose(th._hottest(per, one), [np.max(per.rise(x)) for x in one], rtol=1e-12)
