"""Free flight: no external wrench acts on the robot in flight.

References: Newton-Euler for the whole body (the rate of change of the centroidal momentum equals
the external wrench about the centre of mass: here gravity alone, so the linear momentum follows
m (v0 + g t) and the angular momentum about the centre of mass is conserved; Orin and Goswami,
"Centroidal momentum matrix of a humanoid robot", Autonomous Robots 2008 (from memory)), checked with
Pinocchio's centroidal functions; the recursive Newton-Euler algorithm (pin.rnea, a different
algorithm) must then find no wrench on the base; and the centre of mass, from positions alone
(pin.centerOfMass), falls as a projectile (second difference = g).
"""

import numpy as np
import pinocchio as pin
import pytest

from legbridge.mapping.free_flight import flight_runs
from legbridge.mapping.pipeline import prepare
from legbridge.mapping.slip.demo import demo_plan
from legbridge.robots.leg_model import build_leg_model
from legbridge.robots.library import as_robot


@pytest.fixture(scope="module")
def flight():
    robot = as_robot("lab-biped-leg")
    leg = build_leg_model(robot)
    tr = prepare(demo_plan((-0.06,)), robot, rate_hz=1000.0, leg_model=leg).trajectories[0]
    return robot, leg, tr


def _full(leg, tr, k):
    model = leg.model
    q, v = pin.neutral(model), np.zeros(model.nv)
    q[leg.base_q_index] = [0.0, 0.0, tr.base_pitch_rad[k]]
    v[leg.base_v_index] = tr.base_velocity[k]
    q[leg.q_index], v[leg.v_index] = tr.q[k], tr.qd[k]
    return q, v


def test_centroidal_momentum_is_ballistic_in_flight(flight):
    robot, leg, tr = flight
    model, data = leg.model, leg.model.createData()
    mass, g = pin.computeTotalMass(model), model.gravity.linear
    runs = [r for r in flight_runs(tr.stance) if r[1] - r[0] > 20]
    assert runs
    for a, b in runs:
        h = np.array([pin.computeCentroidalMomentum(model, data, *_full(leg, tr, k)).vector for k in range(a, b)])
        t = tr.time_s[a:b] - tr.time_s[a]
        np.testing.assert_allclose(h[:, 0], h[0, 0] + mass * g[0] * t, atol=1e-6 * mass)
        np.testing.assert_allclose(h[:, 2], h[0, 2] + mass * g[2] * t, atol=1e-6 * mass)
        np.testing.assert_allclose(h[:, 4], h[0, 4], atol=1e-6)  # angular momentum about the CoM


def test_no_wrench_on_the_base_in_flight_and_the_body_turns(flight):
    _, _, tr = flight
    fl = ~np.asarray(tr.stance)
    assert np.abs(tr.base_residual[fl]).max() < 1e-6  # rnea: nothing holds the body in flight
    assert np.abs(tr.base_pitch_rad[fl]).max() > 0.01  # the swinging leg turns the body
    assert np.all(tr.base_pitch_rad[~fl] == 0.0)  # stance: the plan's body motion holds it level


def test_centre_of_mass_falls_as_a_projectile(flight):
    _, leg, tr = flight
    model, data = leg.model, leg.model.createData()
    (a, b) = max(flight_runs(tr.stance), key=lambda r: r[1] - r[0])
    dt = 1.0 / tr.rate_hz
    com = []
    x, z = 0.0, 0.0  # base position integrated on the grid (trapezoid on the velocities)
    for k in range(a, b):
        if k > a:
            x += 0.5 * dt * (tr.base_velocity[k - 1, 0] + tr.base_velocity[k, 0])
            z += 0.5 * dt * (tr.base_velocity[k - 1, 1] + tr.base_velocity[k, 1])
        q, _ = _full(leg, tr, k)
        q[leg.base_q_index[:2]] = [x, z]
        com.append(pin.centerOfMass(model, data, q).copy())
    acc = np.diff(np.array(com), 2, axis=0) / dt**2
    g = model.gravity.linear
    np.testing.assert_allclose(np.median(acc[:, 2]), g[2], rtol=2e-2)
    np.testing.assert_allclose(np.median(acc[:, 0]), 0.0, atol=0.2)
