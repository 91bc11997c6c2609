"""Physics checks of the spring-mass simulator against laws and results from outside the project."""

import math

import numpy as np
import pytest
from scipy.integrate import simpson, solve_ivp

from legbridge.mapping.slip import (
    ApexState,
    PolicyCurves,
    SpringMassParams,
    make_policy,
    policy_from_functions,
    simulate,
    stroke_profile,
)

M, K, L0, G = 80.0, 20000.0, 1.0, 9.81


def conservative(c=0.0):
    return SpringMassParams(
        mass_kg=M, stiffness_n_per_m=K, damping_n_s_per_m=c, nominal_leg_length_m=L0, min_leg_length_m=0.5, gravity_m_s2=G
    )


def constant_policy(angle_rad, length_m=L0):
    return make_policy([0.0, 1.0], [length_m, length_m], [angle_rad, angle_rad])


def symmetric_touchdown(r_mid=0.88, v_mid=3.5):
    """Touchdown state of a symmetric stance, found by SciPy integrating the spring-mass equations in
    polar coordinates (hip about the foot: r, phi from the vertical) backward from midstance (leg
    vertical, velocity horizontal) to r = l0. Lagrange's equations of T = m/2 (r'^2 + r^2 phi'^2),
    V = m g r cos(phi) + k/2 (l0 - r)^2 (e.g. Goldstein, Classical Mechanics, ch. 1): an independent
    formulation from the simulator's Cartesian one."""

    def rhs(t, s):
        r, phi, rd, phid = s
        return [rd, phid, r * phid**2 - G * math.cos(phi) + K / M * (L0 - r), (G * math.sin(phi) - 2 * rd * phid) / r]

    def at_rest_length(t, s):
        return s[0] - L0

    at_rest_length.terminal = True
    sol = solve_ivp(rhs, (0.0, -1.0), [r_mid, 0.0, 0.0, v_mid / r_mid], events=at_rest_length, rtol=1e-12, atol=1e-12)
    r, phi, rd, phid = sol.y_events[0][0]
    vx = rd * math.sin(phi) + r * math.cos(phi) * phid
    vz = rd * math.cos(phi) - r * math.sin(phi) * phid
    return -phi, vx, vz, r * math.cos(phi)  # leg angle a = -phi (foot ahead of the hip), vx, vz, hip z


@pytest.fixture(scope="module")
def symmetric_gait():
    a, vx, vz, z_td = symmetric_touchdown()
    assert vz < -0.5 and 0.1 < a < 0.6  # a real hop, not a graze (guards the fixture itself)
    apex = ApexState(0.0, z_td + vz**2 / (2 * G), vx)  # projectile motion back to the apex
    res = simulate(conservative(), constant_policy(a), apex, 0.0, 2.0, 1000.0)
    return a, vx, vz, res


def mechanical_energy(tr, params):
    v2 = tr.body_vx_m_s**2 + tr.body_vz_m_s**2
    return 0.5 * params.mass_kg * v2 + params.mass_kg * params.gravity_m_s2 * tr.body_z_m + 0.5 * params.stiffness_n_per_m * tr.spring_deflection_m**2


def test_symmetric_stance_mirrors_angle_and_velocity(symmetric_gait):
    # Known property of the conservative spring-mass model (time-reversal symmetry about midstance):
    # a stance that is symmetric ends at liftoff angle -a with vx kept and vz reversed.
    # Blickhan 1989, "The spring-mass model for running and hopping", J. Biomech. 22; Geyer, Seyfarth,
    # Blickhan 2005, J. Theor. Biol. 232 (from memory).
    a, vx, vz, res = symmetric_gait
    td, lo = res.events_of("touchdown"), res.events_of("liftoff")
    assert len(td) >= 3 and len(lo) >= 3
    assert td[0].leg_angle_rad == pytest.approx(a, abs=1e-9)
    assert td[0].vz_m_s == pytest.approx(vz, abs=1e-6)
    for e in lo:
        assert e.leg_angle_rad == pytest.approx(-a, abs=1e-5)
        assert e.vx_m_s == pytest.approx(vx, abs=1e-5)
        assert e.vz_m_s == pytest.approx(-vz, abs=1e-5)
    assert res.outcome.completed


def test_energy_conserved_undamped_unactuated(symmetric_gait):
    # Conservation of mechanical energy (kinetic + gravity + spring) for a conservative system,
    # through stance and flight, to 1e-6 relative.
    *_, res = symmetric_gait
    tr = res.trajectory
    e = mechanical_energy(tr, conservative())
    assert tr.stance.any() and (~tr.stance).any()
    assert np.max(np.abs(e - e[0])) / e[0] < 1e-6


def test_flight_apex_rise_is_vz_squared_over_2g(symmetric_gait):
    # Projectile motion: from liftoff at vertical speed vz the body rises vz^2 / (2 g) to the apex
    # (e.g. Halliday, Resnick, Walker, Fundamentals of Physics, ch. 4, projectile motion).
    *_, res = symmetric_gait
    lo = res.events_of("liftoff")
    ap = res.events_of("apex")[1:]
    for e_lo, e_ap in zip(lo, ap):
        assert e_ap.time_s > e_lo.time_s
        assert e_ap.z_m - e_lo.z_m == pytest.approx(e_lo.vz_m_s**2 / (2 * G), rel=1e-7)
        assert e_ap.time_s - e_lo.time_s == pytest.approx(e_lo.vz_m_s / G, rel=1e-7)


def damped_actuated():
    params = SpringMassParams(25.0, 6000.0, 60.0, 0.7, 0.4)
    policy = policy_from_functions(stroke_profile(0.7, 0.03, 0.10, 0.08, 0.02, 0.10), lambda t: 0.3 - 1.0 * t, 0.8, 0.01)
    return params, policy


def test_ballistic_flight_matches_closed_form():
    # Projectile motion between liftoff and the next touchdown: x = x0 + vx t, z = z0 + vz t - g t^2 / 2,
    # vz = vz0 - g t (same textbook as above); zero ground force in flight.
    params, policy = damped_actuated()
    res = simulate(params, policy, ApexState(0.0, 0.72, 1.5), 0.0, 1.0, 2000.0)
    tr = res.trajectory
    lo = res.events_of("liftoff")[0]
    td_next = [e for e in res.events_of("touchdown") if e.time_s > lo.time_s][0]
    sel = (tr.time_s > lo.time_s) & (tr.time_s < td_next.time_s)
    assert sel.sum() > 50 and not tr.stance[sel].any()
    dt = tr.time_s[sel] - lo.time_s
    np.testing.assert_allclose(tr.body_x_m[sel], lo.x_m + lo.vx_m_s * dt, atol=1e-7)
    np.testing.assert_allclose(tr.body_z_m[sel], lo.z_m + lo.vz_m_s * dt - 0.5 * params.gravity_m_s2 * dt**2, atol=1e-7)
    np.testing.assert_allclose(tr.body_vz_m_s[sel], lo.vz_m_s - params.gravity_m_s2 * dt, atol=1e-7)
    assert np.all(tr.force_x_n[sel] == 0.0) and np.all(tr.force_z_n[sel] == 0.0)


def _stance_energy_balance(params, policy, apex):
    """Per stance: change of mechanical energy, and the integrals of damper and actuator power."""
    res = simulate(params, policy, apex, 0.0, 0.8, 20000.0)
    tr = res.trajectory
    curves = PolicyCurves(policy)
    e = mechanical_energy(tr, params)
    out = []
    apexes = res.events_of("apex")
    lo_times = [e.time_s for e in res.events_of("liftoff")]
    for td in res.events_of("touchdown"):
        if not any(t > td.time_s for t in lo_times):
            continue  # stance cut by the end of the run
        t_apex = max(a.time_s for a in apexes if a.time_s < td.time_s)
        idx = np.flatnonzero(tr.stance & (tr.time_s > td.time_s))
        idx = idx[: np.flatnonzero(np.diff(idx) > 1)[0] + 1] if np.any(np.diff(idx) > 1) else idx
        rx, rz = tr.body_x_m[idx] - td.foot_x_m, tr.body_z_m[idx]
        l = np.hypot(rx, rz)
        ldot = (rx * tr.body_vx_m_s[idx] + rz * tr.body_vz_m_s[idx]) / l
        spring_force = params.stiffness_n_per_m * tr.spring_deflection_m[idx]
        t = tr.time_s[idx]
        damper = simpson(params.damping_n_s_per_m * ldot**2, x=t)
        actuator = simpson(spring_force * curves.actuator_rate(t - t_apex), x=t)
        out.append((e[idx[-1]] - e[idx[0]], damper, actuator))
    return out


def test_damping_dissipates_c_ldot_squared():
    # Work-energy theorem: with a constant actuator length the only non-conservative force is the
    # damper, whose power is -c (dl/dt)^2; the energy lost over a stance equals its integral.
    params = conservative(c=300.0)
    a, vx, vz, z_td = symmetric_touchdown()
    balance = _stance_energy_balance(params, constant_policy(a), ApexState(0.0, z_td + vz**2 / (2 * G), vx))
    assert balance
    for d_e, damper, actuator in balance:
        assert damper > 1.0  # joules: the damper did work
        assert actuator == 0.0
        assert d_e == pytest.approx(-damper, rel=1e-5)


def test_actuator_work_and_damping_balance_energy():
    # Work-energy theorem with the actuator moving the spring's rest length: the actuator pushes on
    # the spring (force k (l_act - l)) at speed dl_act/dt, the damper (on the leg length rate, as in
    # F_axial = k (l_act - l) - c dl/dt) takes c (dl/dt)^2: dE/dt = k (l_act - l) dl_act/dt - c (dl/dt)^2.
    params, policy = damped_actuated()
    balance = _stance_energy_balance(params, policy, ApexState(0.0, 0.72, 1.5))
    assert len(balance) >= 2 and max(b[2] for b in balance) > 5.0  # joules: the actuator did work
    for d_e, damper, actuator in balance:
        assert d_e == pytest.approx(actuator - damper, rel=1e-4, abs=1e-3)


def test_soft_leg_falls_compressed():
    # A leg whose static compression m g / k (80 kg * 9.81 / 1500 N/m = 0.52 m) exceeds the allowed
    # stroke l0 - l_min = 0.5 m cannot hold the body: the simulator must report a fall.
    params = SpringMassParams(M, 1500.0, 0.0, L0, 0.5)
    res = simulate(params, constant_policy(0.1), ApexState(0.0, 1.1, 1.0), 0.0, 2.0, 500.0)
    assert res.outcome.status == "fell"
    assert res.outcome.reason == "leg compressed below minimum length"
    assert res.trajectory.time_s[-1] <= res.outcome.time_s
    assert res.events[-1].kind == "fall"


def test_leg_planted_far_ahead_at_low_speed_throws_body_back():
    # A slow body landing on a leg placed far ahead is pushed backward (the spring's horizontal force
    # opposes the motion throughout while the hip is behind the foot): reported as moving backward.
    res = simulate(conservative(), constant_policy(0.5), ApexState(0.0, 1.0, 0.3), 0.0, 2.0, 500.0)
    assert res.outcome.reason == "body moving backward"


def test_ground_above_the_foot_at_apex_is_a_fall():
    # Geometry: the foot at the apex is at z - l cos(a) = 1.0 - 0.995 = 0.005 m; ground at +0.05 m.
    res = simulate(conservative(), constant_policy(0.1), ApexState(0.0, 1.0, 1.0), 0.05, 2.0, 500.0)
    assert res.outcome.reason == "no foot clearance at apex" and res.outcome.time_s == 0.0
    assert res.trajectory.n_samples == 1
