"""Winding thermal model against first-order / two-node reference responses.

Sources: step response of a first-order system, T(t) = P R (1 - exp(-t / tau)), steady state P R and
63.2 % of it after one time constant (Ogata, Modern Control Engineering, 5th ed., sec. 5-2,
first-order systems); the two-node network integrated by scipy.integrate.solve_ivp (a general-purpose
ODE solver solving the same equations another way).
"""

import math
from dataclasses import replace

import numpy as np
import pytest
from scipy.integrate import solve_ivp

from legbridge.limits.checks.thermal import simulate, temperature_rise_k
from legbridge.robots.robot import ThermalModel

ONE = ThermalModel(winding_resistance_k_per_w=1.8, winding_time_constant_s=60.0, max_winding_temp_c=120.0, ambient_temp_c=25.0)
TWO = ThermalModel(winding_resistance_k_per_w=0.8, winding_time_constant_s=20.0, max_winding_temp_c=120.0, ambient_temp_c=25.0,
                   housing_resistance_k_per_w=1.5, housing_time_constant_s=400.0)


def test_first_order_step_63_percent_after_one_time_constant_and_steady_state():
    dt, p = 0.01, 30.0
    n = int(round(10 * ONE.winding_time_constant_s / dt))
    rise = temperature_rise_k(ONE, np.full(n, p), dt)
    k_tau = int(round(ONE.winding_time_constant_s / dt))
    # Ogata sec. 5-2: 63.2 % of the final value after one time constant (exact: 1 - e^-1)
    assert rise[k_tau] == pytest.approx((1 - math.exp(-1)) * p * ONE.winding_resistance_k_per_w, rel=1e-9)
    assert rise[k_tau] / (p * 1.8) == pytest.approx(0.632, abs=5e-4)
    # steady-state rise = P R_th (after 10 tau the residual is e^-10 ~ 4.5e-5)
    assert rise[-1] == pytest.approx(p * 1.8, rel=1e-4)
    assert rise[0] == 0.0


def test_two_node_matches_solve_ivp_and_steady_state():
    dt, p = 0.5, 20.0
    n = 4000
    rise = temperature_rise_k(TWO, np.full(n, p), dt)
    rw, rh = 0.8, 1.5
    cw, ch = 20.0 / rw, 400.0 / rh

    def f(t, x):
        tw, th = x
        return [(p - (tw - th) / rw) / cw, ((tw - th) / rw - th / rh) / ch]

    sol = solve_ivp(f, (0, n * dt), [0.0, 0.0], t_eval=np.arange(n + 1) * dt, rtol=1e-10, atol=1e-10, method="LSODA")
    np.testing.assert_allclose(rise, sol.y[0], atol=1e-6)
    long = temperature_rise_k(TWO, np.full(40000, p), dt)  # 50 housing time constants
    assert long[-1] == pytest.approx(p * (rw + rh), rel=1e-6)  # steady state P (R_w + R_h)


def test_simulate_periodic_plan_and_time_to_limit(example_robot, make_traj):
    # Constant current I: loss R I^2, rise R_th R I^2 (1 - exp(-t/tau)); the limit is reached at
    # t = -tau ln(1 - dT_max / (R_th P)) (first-order step response, Ogata sec. 5-2).
    act = example_robot.joints[1].actuator
    cur = 30.0
    kt, n_g, eta = act.torque_constant_nm_per_a, act.gear_ratio, act.gearbox_efficiency
    tau_knee = cur * kt * n_g * eta  # motoring at standstill (actuator_limits model)
    traj = make_traj(example_robot, np.tile([0.2, -1.0], (1000, 1)), tau=np.tile([0.0, tau_knee], (1000, 1)))
    np.testing.assert_allclose(traj.current_a[:, 1], cur)
    th = simulate(traj, example_robot, duration_s=200.0)
    p = act.winding_resistance_ohm * cur**2
    t_hit = -60.0 * math.log(1 - (120.0 - 25.0) / (1.8 * p))
    assert th.time_to_limit_s["knee"] == pytest.approx(t_hit, abs=2e-3)
    assert th.time_to_limit_s["hip"] is None
    # the phase trace is the last repetition: its last sample is the temperature at t = 199.999 s
    assert th.phase_temp_c[-1, 1] == pytest.approx(25 + 1.8 * p * (1 - math.exp(-199.999 / 60.0)), rel=1e-9)
    assert th.duration_s == 200.0
    one = simulate(traj, example_robot, None)
    assert one.duration_s == pytest.approx(1.0)
