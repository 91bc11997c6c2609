"""The base in flight: no external wrench acts on the robot, so its motion follows from the joints'.

In flight the robot's centroidal momentum changes only by gravity (Newton-Euler for the whole
body): the linear momentum is m (v_G0 + g (t - t0)) and the angular momentum about the centre of
mass L_G stays L_G0, both taken at the start of the flight from the state the stance (or the plan)
left it in. With A_G(q) the centroidal momentum matrix (Pinocchio's computeCentroidalMap; planar
rows: linear x, linear z, angular y), the base velocity is what makes the momentum right,

    A_G,base v_base = h_G(t) - A_G,joints qd,

and the base acceleration what makes its rate of change right,

    A_G,base a_base = (m g, 0) - A_G,joints qdd - dA_G v      (computeCentroidalMapTimeVariation).

The base pitch is the integral of its rate (trapezoid on the export grid); it feeds the
configuration, so the pitch the joints' motion turns the body by is in the dynamics and is reported.
The joints follow the plan in the world frame as translated (the plan knows no body pitch); a large
pitch means the landing leg will not meet the ground as planned (limits: flight pitch).
"""

from __future__ import annotations

import numpy as np
import pinocchio as pin

from legbridge.robots.leg_model import LegModel

_ROWS = [0, 2, 4]  # planar rows of the centroidal quantities: linear x, linear z, angular about y


def _solve3(a, b) -> np.ndarray:
    """x with a x = b for one 3 x 3 system, by Cramer's rule on Python floats (a NumPy solve call costs
    more than the arithmetic for a system this small); a singular base block gives NaN (fail closed)."""
    (a00, a01, a02), (a10, a11, a12), (a20, a21, a22) = a.tolist()
    b0, b1, b2 = b.tolist()
    c0, c1, c2 = a11 * a22 - a12 * a21, a12 * a20 - a10 * a22, a10 * a21 - a11 * a20
    det = a00 * c0 + a01 * c1 + a02 * c2
    if det == 0.0:
        return np.full(3, np.nan)
    x0 = (b0 * c0 + a01 * (b2 * a12 - b1 * a22) + a02 * (b1 * a21 - b2 * a11)) / det
    x1 = (a00 * (b1 * a22 - b2 * a12) + b0 * c1 + a02 * (b2 * a10 - b1 * a20)) / det
    x2 = (a00 * (b2 * a11 - b1 * a21) + a01 * (b1 * a20 - b2 * a10) + b0 * c2) / det
    return np.array([x0, x1, x2])


def flight_runs(stance) -> list[tuple[int, int]]:
    """(first, last + 1) of every run of flight samples."""
    s = np.asarray(stance, dtype=bool)
    out, k, n = [], 0, s.size
    while k < n:
        if s[k]:
            k += 1
            continue
        a = k
        while k < n and not s[k]:
            k += 1
        out.append((a, k))
    return out


def free_flight_base(leg: LegModel, time_s, q, qd, qdd, base_q, base_v, base_a, stance):
    """Base (x, z, pitch) position, velocity and acceleration (each (n, 3)) with every flight sample
    replaced by the free-floating motion (module docstring); stance samples are returned as given.

    q, qd, qdd (n, j): the leg joints; base_q, base_v, base_a (n, 3): the base as the stance (or the
    plan) drives it, pitch 0. One flight starts from the state of its first sample.
    """
    model = leg.model
    data = model.createData()
    t = np.asarray(time_s, dtype=float)
    bq, bv, ba = (np.array(a, dtype=float, copy=True) for a in (base_q, base_v, base_a))
    mass = pin.computeTotalMass(model)
    g = np.asarray(model.gravity.linear, dtype=float)
    dh_target = np.array([mass * g[0], mass * g[2], 0.0])
    bidx, jidx = np.asarray(leg.base_v_index), np.asarray(leg.v_index)
    qfull = pin.neutral(model)
    vfull = np.zeros(model.nv)

    def load(k):
        qfull[leg.base_q_index] = bq[k]
        qfull[leg.q_index] = q[k]
        vfull[bidx] = bv[k]
        vfull[jidx] = qd[k]

    for a, b in flight_runs(stance):  # a per-sample loop inside each flight, as for the inverse dynamics
        load(a)
        ag = pin.computeCentroidalMap(model, data, qfull)[_ROWS]
        h0 = ag @ vfull
        for k in range(a, b):
            if k > a:  # integrate the pitch (and position) from the previous sample
                dt = t[k] - t[k - 1]
                bq[k] = bq[k - 1] + dt * bv[k - 1] + 0.5 * dt * dt * ba[k - 1]
            qfull[leg.base_q_index] = bq[k]
            qfull[leg.q_index] = q[k]
            ag = pin.computeCentroidalMap(model, data, qfull)[_ROWS]
            h = h0 + (t[k] - t[a]) * dh_target
            bv[k] = _solve3(ag[:, bidx], h - ag[:, jidx] @ qd[k])
            vfull[bidx], vfull[jidx] = bv[k], qd[k]
            pin.computeCentroidalMapTimeVariation(model, data, qfull, vfull)
            dag_v = (data.dAg @ vfull)[_ROWS]
            ba[k] = _solve3(ag[:, bidx], dh_target - ag[:, jidx] @ qdd[k] - dag_v)
    return bq, bv, ba


__all__ = ["flight_runs", "free_flight_base"]
