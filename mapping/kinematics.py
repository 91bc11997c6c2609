"""Planar kinematics of a serial pitch chain and of the spring-mass leg vector, vectorised over samples.

Conventions (README, "Units and conventions"): x forward, z up; joint angles zero with every segment hanging straight down,
positive about +y (the foot swings backward, -x). Segment k's world pitch is phi_k = q_1 + ... + q_k
(base pitch 0), and the foot relative to the hip is

    p = sum_k L_k (-sin phi_k, -cos phi_k)                                              [m]

so for two links p = (-L1 sin q1 - L2 sin(q1+q2), -L1 cos q1 - L2 cos(q1+q2)). The spring-mass leg
vector (hip to foot) is r = l (sin a, -cos a) with a the leg angle (positive with the foot ahead).
Shapes: q (n, j); positions and velocities (n, 2) as (x, z); Jacobians (n, 2, j).
"""

from __future__ import annotations

import numpy as np


def leg_vector(l, a):
    """Hip-to-foot vector r = l (sin a, -cos a), shape (n, 2) [m]."""
    l = np.asarray(l, dtype=float)
    a = np.asarray(a, dtype=float)
    return np.stack([l * np.sin(a), -l * np.cos(a)], axis=-1)


def leg_vector_rates(l, ld, ldd, a, ad, add):
    """First and second time derivatives of r = l (sin a, -cos a), each (n, 2) [m/s], [m/s^2].

    r_dot  = ld (sin a, -cos a) + l ad (cos a, sin a)
    r_ddot = (ldd - l ad^2) (sin a, -cos a) + (2 ld ad + l add) (cos a, sin a)
    """
    s, c = np.sin(a), np.cos(a)
    radial = np.stack([s, -c], axis=-1)
    tangential = np.stack([c, s], axis=-1)
    rd = ld[:, None] * radial + (l * ad)[:, None] * tangential
    rdd = (ldd - l * ad**2)[:, None] * radial + (2.0 * ld * ad + l * add)[:, None] * tangential
    return rd, rdd


def segment_pitch(q):
    """World pitch of each segment, phi_k = q_1 + ... + q_k, shape (n, j) [rad]."""
    return np.cumsum(np.asarray(q, dtype=float), axis=-1)


def chain_foot(q, lengths):
    """Foot position relative to the hip, (n, 2) [m]."""
    phi = segment_pitch(q)
    L = np.asarray(lengths, dtype=float)
    return np.stack([-(L * np.sin(phi)).sum(-1), -(L * np.cos(phi)).sum(-1)], axis=-1)


def chain_jacobian(q, lengths):
    """Foot point Jacobian d p / d q, rows (x, z), (n, 2, j) [m/rad] (world-aligned, hip-fixed).

    Column i sums the contributions of segments k >= i: dp/dq_i = sum_{k>=i} L_k (-cos phi_k, sin phi_k).
    """
    phi = segment_pitch(q)
    L = np.asarray(lengths, dtype=float)
    cx = -L * np.cos(phi)
    cz = L * np.sin(phi)
    # reverse cumulative sum over segments: column i = sum over k >= i
    jx = np.flip(np.cumsum(np.flip(cx, -1), -1), -1)
    jz = np.flip(np.cumsum(np.flip(cz, -1), -1), -1)
    return np.stack([jx, jz], axis=-2)


def chain_jdot_qd(q, qd, lengths):
    """The velocity-product term J_dot qd of the foot acceleration, (n, 2) [m/s^2].

    With p = sum L_k (-sin phi_k, -cos phi_k), the foot acceleration at qdd = 0 is
    sum L_k phid_k^2 (sin phi_k, cos phi_k) (centripetal terms of each segment).
    """
    phi = segment_pitch(q)
    phid = segment_pitch(qd)
    L = np.asarray(lengths, dtype=float)
    w2 = L * phid**2
    return np.stack([(w2 * np.sin(phi)).sum(-1), (w2 * np.cos(phi)).sum(-1)], axis=-1)
