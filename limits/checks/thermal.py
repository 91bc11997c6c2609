"""Winding thermal model over the real test: copper loss with a temperature-dependent resistance,
the plan repeated for as long as the test runs, vectorised.

One node:  C dT/dt = P - (T - T_amb) / R_th,  tau = R_th C
Two nodes (ThermalModel.two_node): winding w and housing h,
           C_w dT_w/dt = P - (T_w - T_h) / R_w
           C_h dT_h/dt = (T_w - T_h) / R_w - (T_h - T_amb) / R_h,   C_w = tau_w / R_w, C_h = tau_h / R_h
Loss:      P = R(T_w) I^2,  R(T) = R_ref (1 + alpha (T - T_ref))  (DC-equivalent R and I; for a
           three-phase motor this is the total copper loss).

With x the temperatures above ambient, each sample (current held constant over it, zero-order
hold) is an exact affine map x[k+1] = M_k x[k] + v_k: the loss term alpha R_ref I^2 T_w makes the
system matrix depend on the current, A_k = A_0 + alpha R_ref I_k^2 / C_w e_w e_w^T, and
[M_k v_k] comes from the matrix exponential of [[A_k, b_k], [0, 0]] dt (closed form for one node).
An associative scan composes the maps into the plan period's map x_end = Phi x_start + Gamma.
Starting at ambient, the state at the start of repetition j is x_j = (I - Phi^j)(I - Phi)^-1 Gamma,
and every temperature rises with j (the maps are nonnegative), so:

- a finite test (``duration_s``) covers exactly that time; each plan sample is judged at its last,
  hottest repetition within the test;
- by default the plan is repeated for as long as the test runs: each sample is judged at the
  periodic steady state x* = (I - Phi)^-1 Gamma;
- the time to the winding limit is the first repetition (found by bisection) and sample whose
  temperature reaches it; None when it is never reached (within the test);
- thermal runaway: when the spectral radius of Phi is >= 1 (one node: alpha R_ref mean(I^2) R_th >= 1,
  the loss grows faster with temperature than the cooling) no steady state exists and the winding
  heats without bound.

Times [s], temperatures [degC], currents [A], powers [W].
"""

from __future__ import annotations

import math

import numpy as np

from legbridge.robots.robot import ThermalModel

from .results import ThermalResult

DISPLAY_POINTS = 240  # points of the temperature-over-the-test trace (one per shown repetition)
RUNAWAY_TOL = 1e-12


def _system(th: ThermalModel) -> tuple[np.ndarray, float]:
    """(A_0 (d, d) [1/s], C_w [J/K]) of the network without the temperature-dependent loss."""
    rw, tw = th.winding_resistance_k_per_w, th.winding_time_constant_s
    cw = tw / rw
    if not th.two_node:
        return np.array([[-1.0 / tw]]), cw
    rh, thh = th.housing_resistance_k_per_w, th.housing_time_constant_s
    ch = thh / rh
    return np.array([[-1.0 / (rw * cw), 1.0 / (rw * cw)],
                     [1.0 / (rw * ch), -(1.0 / rw + 1.0 / rh) / ch]]), cw


def sample_maps(th: ThermalModel, resistance_ohm: float, current_a, dt_s: float) -> tuple[np.ndarray, np.ndarray]:
    """Exact zero-order-hold maps (M (n, d, d), v (n, d)) of x (temperatures above ambient) over one
    sample of each current [A]; resistance_ohm is R_ref, the winding resistance at T_ref."""
    i2 = np.square(np.asarray(current_a, dtype=float))
    a0, cw = _system(th)
    d = a0.shape[0]
    alpha = th.resistance_temp_coefficient_per_k
    gain = alpha * resistance_ohm * i2 / cw                                          # [1/s]
    drive = resistance_ohm * i2 * th.resistance_factor(th.ambient_temp_c) / cw        # [K/s]
    n = i2.shape[0]
    if d == 1:
        lam = a0[0, 0] + gain
        z = lam * dt_s
        m = np.exp(z)
        small = np.abs(z) < 1e-8
        safe = np.where(small, 1.0, z)
        phi = np.where(small, 1.0 + 0.5 * z, np.expm1(z) / safe)  # (e^z - 1) / z
        return m.reshape(n, 1, 1), (drive * dt_s * phi).reshape(n, 1)
    b = np.broadcast_to(a0, (n, 2, 2)).copy()
    b[:, 0, 0] += gain
    f_exp, f_phi = _two_by_two_functions(b, dt_s)
    forcing = np.zeros((n, 2))
    forcing[:, 0] = drive
    return f_exp, np.einsum("nij,nj->ni", f_phi, forcing) * dt_s


def _two_by_two_functions(b: np.ndarray, dt_s: float) -> tuple[np.ndarray, np.ndarray]:
    """(e^{B dt}, phi_1(B dt)) for a stack of real 2 x 2 matrices B (n, 2, 2), with
    phi_1(Z) = sum Z^k / (k + 1)! (so that the zero-order-hold input map is dt phi_1(B dt) u).

    Sylvester's formula (Higham, Functions of Matrices, ch. 1): for eigenvalues l1 != l2,
    f(B) = (f(l1) (B - l2 I) - f(l2) (B - l1 I)) / (l1 - l2); for l1 = l2 = l, f(B) = f(l) I +
    f'(l) (B - l I). A thermal network's matrix (C^-1 times a symmetric conductance matrix, the
    copper loss's gain on the diagonal) has real eigenvalues; vectorised over the stack, replacing a
    per-sample scipy.linalg.expm of the augmented 3 x 3 matrix (tested against it)."""
    tr = b[:, 0, 0] + b[:, 1, 1]
    det = b[:, 0, 0] * b[:, 1, 1] - b[:, 0, 1] * b[:, 1, 0]
    s = 0.5 * tr
    q = np.sqrt(np.maximum(s * s - det, 0.0))  # half the eigenvalue gap (real eigenvalues)
    l1, l2 = (s + q) * dt_s, (s - q) * dt_s     # eigenvalues of Z = B dt
    eye = np.eye(2)
    z = b * dt_s

    def phi1(x):
        small = np.abs(x) < 1e-8
        return np.where(small, 1.0 + 0.5 * x, np.expm1(x) / np.where(small, 1.0, x))

    def dphi1(x):  # d/dx (e^x - 1) / x = (x e^x - e^x + 1) / x^2
        small = np.abs(x) < 1e-4
        safe = np.where(small, 1.0, x)
        return np.where(small, 0.5 + x / 3.0, (x * np.exp(x) - np.expm1(x)) / (safe * safe))

    gap = l1 - l2
    close = gap < 1e-7
    safe_gap = np.where(close, 1.0, gap)[:, None, None]
    zl1 = z - l2[:, None, None] * eye
    zl2 = z - l1[:, None, None] * eye
    lm = 0.5 * (l1 + l2)
    zm = z - lm[:, None, None] * eye
    out = []
    for f, df in ((np.exp, np.exp), (phi1, dphi1)):
        distinct = (f(l1)[:, None, None] * zl1 - f(l2)[:, None, None] * zl2) / safe_gap
        merged = f(lm)[:, None, None] * eye + df(lm)[:, None, None] * zm
        out.append(np.where(close[:, None, None], merged, distinct))
    return out[0], out[1]


def prefix_maps(m: np.ndarray, v: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Inclusive scan of the affine maps: (P (n + 1, d, d), p (n + 1, d)) with x[k] = P_k x[0] + p_k.

    Hillis-Steele scan: log2(n) passes of batched compositions (x -> M2 (M1 x + v1) + v2), so the
    cost is O(n log n) in NumPy with O(n) memory and no loop over samples.
    """
    n, d, _ = m.shape
    big_p = np.empty((n + 1, d, d))
    big_p[0] = np.eye(d)
    big_p[1:] = m
    small_p = np.zeros((n + 1, d))
    small_p[1:] = v
    step = 1
    while step <= n:  # after this pass, entry k composes the maps of samples max(0, k - 2 step) .. k - 1
        later_p, later_v = big_p[step:], small_p[step:]
        earlier_p, earlier_v = big_p[:-step], small_p[:-step]
        new_v = np.einsum("kij,kj->ki", later_p, earlier_v) + later_v
        new_p = later_p @ earlier_p
        big_p[step:], small_p[step:] = new_p, new_v
        step *= 2
    return big_p, small_p


class _Period:
    """One joint's plan period as maps: the winding rise at repetition j and sample k."""

    def __init__(self, big_p, small_p):
        self.P, self.p = big_p, small_p
        self.phi, self.gamma = big_p[-1], small_p[-1]
        d = self.phi.shape[0]
        self.eye = np.eye(d)
        finite = bool(np.all(np.isfinite(self.phi)) and np.all(np.isfinite(self.gamma)))
        # an overflow (a current so large that the loss outgrows any cooling within one sample) is a runaway
        self.rho = float(np.max(np.abs(np.linalg.eigvals(self.phi)))) if finite else np.inf
        self.runaway = self.rho >= 1.0 - RUNAWAY_TOL
        self.x_steady = None if self.runaway else np.linalg.solve(self.eye - self.phi, self.gamma)

    def start(self, j: int) -> np.ndarray:
        """State at the start of repetition j (0-based) from ambient: sum_{i<j} Phi^i Gamma."""
        if j <= 0:
            return np.zeros_like(self.gamma)
        if not self.runaway:
            return (self.eye - np.linalg.matrix_power(self.phi, int(j))) @ self.x_steady
        # runaway: sum_{i<j} Phi^i Gamma by binary splitting, S(2a) = S(a) + Phi^a S(a) (powers of one
        # matrix commute, so the bits of j can be taken in any order); it grows without bound
        with np.errstate(over="ignore", invalid="ignore"):
            s_a, pw_a = self.eye.copy(), self.phi.copy()          # S(a), Phi^a for a = 1
            total, total_pw = np.zeros_like(self.eye), self.eye.copy()
            k = int(j)
            while k:
                if k & 1:
                    total = total + total_pw @ s_a
                    total_pw = total_pw @ pw_a
                s_a = s_a + pw_a @ s_a
                pw_a = pw_a @ pw_a
                k >>= 1
            return total @ self.gamma

    def starts(self, js) -> np.ndarray:
        """start(j) for many j at once, (len(js), d): Phi^j from its eigen-decomposition (real, distinct
        eigenvalues: a thermal network's), one start() each otherwise (runaway, or a defective Phi)."""
        js = np.asarray(js, dtype=int)
        if not self.runaway:
            w, v = np.linalg.eig(self.phi)
            if np.isrealobj(w) and np.linalg.cond(v) < 1e8:
                vi = np.linalg.inv(v)
                powers = np.einsum("ik,jk,kl->jil", v, np.power(w[None, :], js[:, None]), vi)  # Phi^j
                return (self.eye[None] - powers) @ self.x_steady
        return np.array([self.start(int(j)) for j in js])

    def rise(self, x_start) -> np.ndarray:
        """Winding rise [K] at every sample k = 0..n of a repetition starting at ``x_start``."""
        return np.einsum("kj,j->k", self.P[:, 0, :], x_start) + self.p[:, 0]

    def steady_rise(self) -> np.ndarray:
        return np.full(self.P.shape[0], np.inf) if self.runaway else self.rise(self.x_steady)


def _first_crossing(per: _Period, limit_rise: float, j_max: int | None) -> tuple[int, int] | None:
    """(repetition j, sample k) where the winding first reaches ``limit_rise`` [K], or None (not within
    j_max repetitions; j_max None: ever)."""
    def reached(j):
        return bool(np.any(~(per.rise(per.start(j)) < limit_rise)))  # NaN counts as reached (fail closed)

    if j_max is None:
        if not per.runaway and not np.any(~(per.steady_rise() < limit_rise)):
            return None
        hi = 1
        while not reached(hi):
            hi *= 2
            if hi > 2**62:
                return None
    else:
        if j_max < 0 or not reached(j_max):
            return None
        hi = j_max
    lo = -1  # reached(lo) is False by construction (before the test)
    while hi - lo > 1:
        mid = (lo + hi) // 2
        if reached(mid):
            hi = mid
        else:
            lo = mid
    r = per.rise(per.start(hi))
    k = int(np.flatnonzero(~(r < limit_rise))[0])
    return hi, k


def simulate(traj, robot, duration_s: float | None = None) -> ThermalResult:
    """Every joint's winding over the test: ``duration_s`` [s] of the plan repeated, or (None) the
    plan repeated for as long as the test runs (periodic steady state). See the module docstring."""
    n = traj.n_samples
    dt = 1.0 / float(traj.rate_hz)
    # one repetition is q = n - 1 steps: the last sample is where the next repetition starts, so the
    # period is the plan's duration at every export rate (JointTrajectory.repetition_period_s)
    q = n - 1 if n > 1 else max(n, 1)
    period = q * dt
    finite = duration_s is not None
    m = int(math.ceil(float(duration_s) / dt - 1e-9)) if finite else None  # samples the test runs
    joints = [robot.joint(name) for name in traj.joint_names]
    nj = len(joints)
    amb = np.array([j.actuator.thermal.ambient_temp_c for j in joints])
    tmax = np.array([j.actuator.thermal.max_winding_temp_c for j in joints])
    phase = np.empty((n, nj))
    ttl, runaway, steady_peak = {}, {}, {}
    rms = np.sqrt(np.mean(np.square(np.asarray(traj.current_a, dtype=float)[:q]), axis=0)) if n else np.zeros(nj)
    periods = []
    for k, joint in enumerate(joints):  # one scan per joint (coefficients differ), no loop over samples
        act = joint.actuator
        cur = np.asarray(traj.current_a[:, k], dtype=float)
        if not np.all(np.isfinite(cur)):  # an unknown current: the heat cannot be evaluated (fail closed)
            phase[:, k] = np.nan
            ttl[joint.name], runaway[joint.name], steady_peak[joint.name] = None, False, float("nan")
            periods.append(None)
            continue
        with np.errstate(over="ignore", invalid="ignore"):
            per = _Period(*prefix_maps(*sample_maps(act.thermal, act.winding_resistance_ohm, cur[:q], dt)))
        periods.append(per)
        runaway[joint.name] = per.runaway
        limit_rise = tmax[k] - amb[k]
        steady = per.steady_rise()
        steady_peak[joint.name] = float(amb[k] + np.max(steady, initial=-np.inf))
        if finite:
            # sample p of the plan (time p dt in its repetition) last runs in repetition
            # floor((m - 1 - p) / q), the hottest one; p = q is the next repetition's start
            p_idx = np.arange(n)
            last = (m - 1 - p_idx) // q
            rises = np.empty(n)
            for j in np.unique(last[last >= 0]):  # at most two repetitions: the last full one and the partial one
                sel = last == j
                rises[sel] = per.rise(per.start(int(j)))[:n][sel]  # at each sample's own time
            if np.any(last < 0):  # samples the test never reaches: the temperature at its end
                j_end, k_end = divmod(m, q)
                rises[last < 0] = per.rise(per.start(j_end))[k_end]
            phase[:, k] = amb[k] + rises
            hit = _first_crossing(per, limit_rise, (m - 1) // q if m > 0 else -1)
            t_hit = None if hit is None else hit[0] * period + hit[1] * dt
            ttl[joint.name] = t_hit if t_hit is not None and t_hit <= m * dt + 1e-12 else None
        else:
            phase[:, k] = amb[k] + steady[:n]
            hit = _first_crossing(per, limit_rise, None)
            ttl[joint.name] = None if hit is None else hit[0] * period + hit[1] * dt
    time, temps = _display(periods, amb, period, dt, m, ttl)
    for a in (time, temps, phase, amb, tmax, rms):
        a.setflags(write=False)
    return ThermalResult(tuple(traj.joint_names), time, temps, amb, tmax, phase,
                         float(duration_s) if finite else math.inf, ttl, runaway=runaway,
                         steady_peak_c=steady_peak, rms_current_a=rms, period_s=period)


def _hottest(per: _Period, x0: np.ndarray, block: int = 4_000_000) -> np.ndarray:
    """The hottest winding rise [K] of a repetition from each start state x0 (J, d): the samples'
    rises are affine in x0, evaluated in blocks of repetitions (memory bounded by ``block`` numbers)."""
    coef, off = per.P[:, 0, :], per.p[:, 0]                       # (n + 1, d), (n + 1,)
    out = np.empty(x0.shape[0])
    step = max(1, block // max(1, coef.shape[0]))
    with np.errstate(invalid="ignore", over="ignore"):             # runaway: inf and NaN count as reached
        for a in range(0, x0.shape[0], step):                      # a few blocks of repetitions
            out[a:a + step] = np.max(x0[a:a + step] @ coef.T + off[None, :], axis=1)
    return out


def _display(periods, amb, period: float, dt: float, m: int | None, ttl: dict):
    """(time (p,), winding temperature (p, j)) over the whole assumed test for the report: at most
    DISPLAY_POINTS repetitions, each drawn at its hottest sample (finite test: up to its end;
    otherwise until the steady state is reached or, with runaway, past the time to limit)."""
    if m is not None:
        j_end = max(1, int(math.ceil(m * dt / period - 1e-9)))
    else:
        horizon = 0.0
        for per in periods:
            if per is None or per.runaway:
                continue
            # repetitions until Phi^j has decayed to 1 % (spectral radius rho per repetition)
            horizon = max(horizon, math.log(0.01) / math.log(max(per.rho, 1e-300)) if per.rho > 0 else 1.0)
        hits = [t for t in ttl.values() if t is not None]
        horizon = max(horizon, 1.2 * max(hits) / period if hits else 0.0, 1.0)
        j_end = int(math.ceil(horizon))
    js = np.unique(np.linspace(0, j_end, min(DISPLAY_POINTS, j_end + 1)).round().astype(int))
    time = js * period if m is None else np.minimum(js * period, m * dt)  # a finite test ends with its last sample
    temps = np.empty((js.size, len(periods)))
    for c, per in enumerate(periods):
        if per is None:
            temps[:, c] = np.nan
            continue
        x0 = per.starts(np.maximum(js - 1, 0))                     # (J, d): every shown repetition at once
        peak = _hottest(per, x0)
        temps[:, c] = amb[c] + peak
        temps[js == 0, c] = amb[c]
        if m is not None:  # the last, partial repetition ends with the test
            for r in np.flatnonzero(js * period > m * dt):
                j = int(js[r])
                rise = per.rise(x0[r])[: m - (j - 1) * (per.P.shape[0] - 1) + 1]
                temps[r, c] = amb[c] + float(np.max(rise))
    return time.astype(float), temps


def rise_from_ambient_k(th: ThermalModel, resistance_ohm: float, current_a, dt_s: float) -> np.ndarray:
    """Winding rise above ambient [K] at times 0, dt, ..., n dt for one pass of a current sequence [A]
    (no repetition), starting at ambient; resistance_ohm is R_ref."""
    _, p = prefix_maps(*sample_maps(th, resistance_ohm, current_a, dt_s))
    return p[:, 0]
