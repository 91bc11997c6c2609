"""What the robot file gets wrong, identified from a hardware log: pure functions on NumPy arrays.

Drive (robots.actuator_limits, inverted). Per joint, with gear ratio N, gearbox efficiency eta, torque
constant Kt and rotor inertia J_r (motor side)::

    tau_e = tau + c sign(qd) + b qd                       (friction=True only: joint-side Coulomb c and
                                                           viscous b torque the motor also supplies)
    T     = tau_e / (eta N)  when tau_e (N qd) >= 0       (motoring, also at standstill)
            tau_e eta / N    when tau_e (N qd) <  0       (back-driven, generating)
    i     = (T + J_r N qdd) / Kt

The motoring samples fix eta Kt, the generating ones Kt / eta, so both need both power directions;
with fewer than MIN_DIRECTION_SAMPLES samples (or less than MIN_DIRECTION_SHARE of the torque's sum of
squares) in one direction, eta is held at the file's value and only Kt (and friction) is fitted.
Kt comes out relative to the logged torque: a torque the drive itself computes from the current with
the file's Kt returns the file's Kt; only a torque sensor makes Kt identifiable.

Thermal (robots.robot.ThermalModel and limits.checks.thermal, same equations and names)::

    C_w dT_w/dt = P - (T_w - T_b) / R_w,    tau_w = R_w C_w,   P = R_ref i^2 (1 + alpha (T_w - T_ref))

with T_b the ambient (one node) or the measured housing temperature (two nodes, winding to
housing). The housing node C_h dT_h/dt = q - (T_h - T_amb) / R_h, tau_h = R_h C_h is fed by the heat
q = (T_w - T_h) / R_w leaving the winding (the winding losses are the housing's only source),
computed from the measured temperatures and the fitted R_w. Over each log step the current is held
at its value at the step's start (zero-order hold) and a measured boundary (housing temperature, q) at
the mean of its two end values; each step is then an exact affine map T[k+1] = m_k T[k] + v_k (the
copper loss's R(T) uses the simulated winding temperature, so m_k depends on the current), composed
for the whole log by an associative scan (no loop over samples). Output error: the simulated
temperature is fitted to the measured one (scipy.optimize.least_squares), with the initial
temperature as a nuisance parameter.

Confidence intervals (95 %, every fit): covariance s^2 (J^T J)^-1 at the solution (s^2 = residual sum
of squares / (n - p)), widened by (1 + rho) / (1 - rho) with rho the lag-1 autocorrelation of the
residuals (clipped to [0, RHO_MAX]): log samples are not independent, and this is the variance
inflation of an AR(1) error on slowly varying regressors (the effective sample size n (1 - rho) /
(1 + rho)); the interval is value +- t_{0.975, n_eff - p} sigma (Student t). Intervals of bounded
parameters are clipped to their bounds (eta to (0, 1], resistances and time constants > 0).

Units SI: N m, rad/s, rad/s^2, A, N m/A, s, degC, K/W.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
from scipy import optimize, stats

from legbridge.robots.errors import Described, IdentificationError

CONFIDENCE = 0.95
MIN_SAMPLES = 20                 # fewer samples than this: nothing is identified
MIN_DIRECTION_SAMPLES = 20       # samples a power direction needs before eta is identified
MIN_DIRECTION_SHARE = 0.01       # share of sum(tau^2) a power direction needs before eta is identified
RHO_MAX = 0.99                   # lag-1 residual autocorrelation used at most (inflation <= 199)
SINGULAR_COND = 1e10             # condition number of the column-scaled Jacobian beyond which a fit is singular
MIN_RISE_K = 1.0                 # smallest temperature variation [K] a thermal fit accepts ...
RISE_NOISE_RATIO = 5.0           # ... and at least this many times the temperature noise
MIN_LOG_TAU_FRACTION = 0.1       # the log must last at least this fraction of the time constant guess

_DRIVE_METHOD = ("nonlinear least squares on the drive current (scipy.optimize.least_squares, analytic "
                 "Jacobian); 95 % CI from s^2 (J^T J)^-1, Student t, widened for lag-1 residual autocorrelation")
_THERMAL_METHOD = ("output-error least squares on the {what} temperature (zero-order-hold simulation, "
                   "scipy.optimize.least_squares); 95 % CI from s^2 (J^T J)^-1, Student t, widened for lag-1 "
                   "residual autocorrelation")


# --------------------------------------------------------------------------------------------------
# results


@dataclass(frozen=True)
class Estimate:
    """One identified (or held) parameter and its 95 % confidence interval.

    file_value: the robot file's value (None when the file has none, e.g. friction or a nuisance
    parameter); n_samples: log samples the fit used (0 for a value held, not identified); method: how it
    was obtained, or why it was held. A held value has NaN bounds.
    """

    name: str
    unit: str
    value: float
    ci_low: float
    ci_high: float
    file_value: float | None
    n_samples: int
    method: str

    @property
    def relative_change(self) -> float | None:
        """(value - file_value) / file_value; None without a (nonzero) file value."""
        if self.file_value is None or self.file_value == 0.0:
            return None
        return (self.value - self.file_value) / self.file_value

    @property
    def identified(self) -> bool:
        """True when the value comes from the log (finite interval), False when held."""
        return bool(np.isfinite(self.ci_low) and np.isfinite(self.ci_high))

    def within_ci(self, x: float) -> bool:
        """Whether x lies in the confidence interval (False for a held value)."""
        return bool(self.ci_low <= x <= self.ci_high)


@dataclass(frozen=True, eq=False)
class DriveFit:
    """Drive parameters of one joint identified from (tau, qd, qdd, i).

    friction_* are None unless friction=True. fitted_current_a: the model's current at each sample
    (read-only); residual_rms_a: RMS of measured - fitted current. n_motoring / n_generating: samples in
    each power direction at the fitted values. covariance: of the fitted parameters, in the order of
    parameter_names (eta absent when held). residual_lag1: rho used for the interval widening,
    inflation = (1 + rho) / (1 - rho).
    """

    torque_constant_nm_per_a: Estimate
    gearbox_efficiency: Estimate
    friction_coulomb_nm: Estimate | None
    friction_viscous_nms_per_rad: Estimate | None
    residual_rms_a: float
    fitted_current_a: np.ndarray
    n_motoring: int
    n_generating: int
    eta_identified: bool
    parameter_names: tuple[str, ...]
    covariance: np.ndarray
    residual_lag1: float
    inflation: float
    notes: tuple[str, ...] = field(default=())


@dataclass(frozen=True, eq=False)
class ThermalFit:
    """Winding (and housing) thermal parameters identified from a log.

    One node: winding_* are winding to ambient. Two nodes (housing temperature logged): winding_* are
    winding to housing, housing_* housing to ambient. initial_* are the fitted start temperatures
    (nuisance parameters). fitted_*_c: the simulated temperatures at the log's samples (read-only).
    """

    winding_resistance_k_per_w: Estimate
    winding_time_constant_s: Estimate
    winding_initial_c: Estimate
    fitted_winding_c: np.ndarray
    residual_rms_k: float
    housing_resistance_k_per_w: Estimate | None = None
    housing_time_constant_s: Estimate | None = None
    housing_initial_c: Estimate | None = None
    fitted_housing_c: np.ndarray | None = None
    housing_residual_rms_k: float | None = None
    notes: tuple[str, ...] = field(default=())

    @property
    def two_node(self) -> bool:
        return self.housing_resistance_k_per_w is not None

    @property
    def winding_capacitance_j_per_k(self) -> float:
        """C_w = tau_w / R_w [J/K]."""
        return self.winding_time_constant_s.value / self.winding_resistance_k_per_w.value


# --------------------------------------------------------------------------------------------------
# shared: input checks, covariance and intervals


def _vector(name: str, values, n: int | None = None, *, scalar_ok: bool = False) -> np.ndarray:
    try:
        a = np.asarray(values, dtype=float)
    except (TypeError, ValueError) as exc:
        raise IdentificationError("not numbers", key=name, expected="an array of numbers",
                                  found=Described(type(values).__name__)) from exc
    if scalar_ok and a.ndim == 0 and n is not None:
        a = np.full(n, float(a))
    if a.ndim != 1 or (n is not None and a.shape[0] != n):
        raise IdentificationError("wrong shape", key=name,
                                  expected=f"a 1-D array of {n} samples" if n is not None else "a 1-D array",
                                  found=Described(f"shape {a.shape}"))
    bad = ~np.isfinite(a)
    if np.any(bad):
        raise IdentificationError("non-finite samples", key=name, expected="finite values",
                                  found=Described(f"{int(bad.sum())} NaN or infinite "
                                                  f"(first at sample {int(np.flatnonzero(bad)[0])})"),
                                  hint="drop or interpolate the samples the log left empty before identifying")
    return a


def _scalar(name: str, value, *, positive: bool = False, upper: float | None = None) -> float:
    try:
        v = float(value)
    except (TypeError, ValueError) as exc:
        raise IdentificationError("not a number", key=name, expected="a number",
                                  found=Described(type(value).__name__)) from exc
    if not math.isfinite(v) or (positive and v <= 0.0) or (upper is not None and v > upper):
        exp = "a finite number" + (" > 0" if positive else "") + (f" <= {upper:g}" if upper is not None else "")
        raise IdentificationError("out of range", key=name, expected=exp, found=v)
    return v


def _lag1(residual: np.ndarray) -> float:
    """Lag-1 autocorrelation of the residuals, clipped to [0, RHO_MAX]."""
    r = residual - residual.mean()
    den = float(np.dot(r, r))
    if den <= 0.0 or r.size < 3:
        return 0.0
    return float(np.clip(np.dot(r[1:], r[:-1]) / den, 0.0, RHO_MAX))


def _covariance(jac: np.ndarray, residual: np.ndarray, names: tuple[str, ...], what: str):
    """(covariance, rho, inflation, degrees of freedom) of a least-squares solution; raises
    IdentificationError when J^T J is singular (names the worst-determined parameter)."""
    n, p = jac.shape
    scale = np.sqrt(np.sum(jac * jac, axis=0))
    if np.any(scale == 0.0) or not np.all(np.isfinite(scale)):
        k = int(np.flatnonzero(~(scale > 0.0))[0]) if np.any(~(scale > 0.0)) else 0
        raise IdentificationError(f"{what}: the log does not move the fit", key=names[k],
                                  expected="a parameter the data depend on", found=Described("no sensitivity"),
                                  hint="the log carries no excitation for it")
    js = jac / scale
    _, sv, vt = np.linalg.svd(js, full_matrices=False)
    if sv[-1] <= sv[0] / SINGULAR_COND:
        k = int(np.argmax(np.abs(vt[-1])))
        raise IdentificationError(f"{what}: singular fit", key=names[k],
                                  expected=f"a Jacobian condition number below {SINGULAR_COND:g}",
                                  found=float(sv[0] / max(sv[-1], 1e-300)),
                                  hint="the log cannot tell this parameter from the others; log more varied motion")
    inv_js = (vt.T / sv**2) @ vt                         # (Js^T Js)^-1
    dof_raw = max(n - p, 1)
    s2 = float(np.dot(residual, residual)) / dof_raw
    rho = _lag1(residual)
    inflation = (1.0 + rho) / (1.0 - rho)
    cov = inflation * s2 * inv_js / np.outer(scale, scale)
    dof = max(n / inflation - p, 1.0)
    return cov, rho, inflation, dof


def _interval(value: float, var: float, dof: float, lo_bound: float = -np.inf, hi_bound: float = np.inf):
    half = float(stats.t.ppf(0.5 + CONFIDENCE / 2.0, dof)) * math.sqrt(max(var, 0.0))
    return max(value - half, lo_bound), min(value + half, hi_bound)


def _readonly(a: np.ndarray) -> np.ndarray:
    a = np.array(a, dtype=float)
    a.setflags(write=False)
    return a


# --------------------------------------------------------------------------------------------------
# drive


def _drive_model(theta: np.ndarray, tau, qd, qdd, n_gear, j_rotor, fixed_eta, friction):
    """(current, Jacobian columns, back-driven mask) of the drive model at theta."""
    kt = theta[0]
    k = 1
    if fixed_eta is None:
        eta = theta[1]
        k = 2
    else:
        eta = fixed_eta
    c, b = (theta[k], theta[k + 1]) if friction else (0.0, 0.0)
    sgn = np.sign(qd)
    tau_e = tau + c * sgn + b * qd
    back = tau_e * (n_gear * qd) < 0.0                   # as robots.actuator_limits._shaft_from_joint
    gain = np.where(back, eta / n_gear, 1.0 / (eta * n_gear))  # dT/dtau_e
    shaft = gain * tau_e
    cur = (shaft + j_rotor * n_gear * qdd) / kt
    cols = [-cur / kt]
    if fixed_eta is None:
        cols.append(np.where(back, tau_e / n_gear, -tau_e / (eta * eta * n_gear)) / kt)
    if friction:
        cols.append(gain * sgn / kt)
        cols.append(gain * qd / kt)
    return cur, np.column_stack(cols), back


def identify_drive(tau_nm, qd_rad_s, qdd_rad_s2, current_a, *, gear_ratio: float, rotor_inertia_kgm2: float,
                   file_kt: float, file_eta: float, friction: bool = False) -> DriveFit:
    """Torque constant Kt [N m/A] and gearbox efficiency eta [-] of one joint (and with ``friction``
    a joint-side Coulomb torque [N m] and viscous coefficient [N m s/rad]) from logged joint torque,
    joint speed, joint acceleration and drive current (same samples, any rate).

    See the module docstring for the model. eta is held at ``file_eta`` (and a note says why) when one
    power direction lacks samples or torque. Raises IdentificationError on non-finite or mismatched
    input, too few samples, no torque or current, a current that contradicts the torque's sign, or a
    singular fit.
    """
    tau = _vector("tau_nm", tau_nm)
    n = tau.shape[0]
    qd = _vector("qd_rad_s", qd_rad_s, n)
    qdd = _vector("qdd_rad_s2", qdd_rad_s2, n, scalar_ok=True)
    cur = _vector("current_a", current_a, n)
    n_gear = _scalar("gear_ratio", gear_ratio, positive=True)
    j_rotor = _scalar("rotor_inertia_kgm2", rotor_inertia_kgm2)
    if j_rotor < 0.0:
        raise IdentificationError("out of range", key="rotor_inertia_kgm2", expected=">= 0", found=j_rotor)
    kt_file = _scalar("file_kt", file_kt, positive=True)
    eta_file = _scalar("file_eta", file_eta, positive=True, upper=1.0)
    friction = bool(friction)
    p_full = 2 + (2 if friction else 0)
    if n < MIN_SAMPLES + p_full:
        raise IdentificationError("too few samples to identify the drive", key="tau_nm",
                                  expected=f"at least {MIN_SAMPLES + p_full} samples", found=n)
    if not np.any(tau != 0.0):
        raise IdentificationError("no torque in the log", key="tau_nm", expected="a varying joint torque",
                                  found=Described("zero throughout"))
    if not np.any(cur != 0.0):
        raise IdentificationError("no current in the log", key="current_a",
                                  expected="a drive current that follows the torque",
                                  found=Described("zero throughout"),
                                  hint="check the current channel's mapping")

    notes: list[str] = []
    # power directions (on the logged torque, before friction is known) and their torque share
    back0 = tau * (n_gear * qd) < 0.0
    moto0 = ~back0
    tt = float(np.dot(tau, tau))
    counts = {"motoring": int(moto0.sum()), "generating": int(back0.sum())}
    shares = {"motoring": float(np.dot(tau[moto0], tau[moto0])) / tt,
              "generating": float(np.dot(tau[back0], tau[back0])) / tt}
    lacking = [d for d in counts if counts[d] < MIN_DIRECTION_SAMPLES or shares[d] < MIN_DIRECTION_SHARE]
    eta_free = not lacking
    if not eta_free:
        why = "; ".join(f"{d}: {counts[d]} samples, {100 * shares[d]:.2g} % of the torque's sum of squares"
                        for d in lacking)
        notes.append(f"gearbox efficiency held at the file's {eta_file:g}: one power direction lacks excitation "
                     f"({why}; "
                     f"eta needs >= {MIN_DIRECTION_SAMPLES} samples and >= {100 * MIN_DIRECTION_SHARE:g} % in each); "
                     "the torque constant is fitted with the file's efficiency")

    # starting point: linear least squares on the (g_m, g_g, J_r N / Kt) form
    inertial = n_gear * qdd
    if eta_free:
        a = np.column_stack([np.where(moto0, tau, 0.0), np.where(back0, tau, 0.0), inertial])
        (g_m, g_g, _), *_ = np.linalg.lstsq(a, cur, rcond=None)
        for d, g in (("motoring", g_m), ("generating", g_g)):
            if not g > 0.0:
                raise IdentificationError(f"the current does not follow the torque when {d}", key="current_a",
                                          expected="a current of the torque's sign",
                                          found=Described(f"gain {g:.3g} A/(N m)"),
                                          hint="check the sign conventions of the current, torque and speed channels")
        kt0 = 1.0 / (n_gear * math.sqrt(g_m * g_g))
        eta0 = float(np.clip(math.sqrt(g_g / g_m), 0.05, 1.0))
    else:
        shaft_file = np.where(back0, tau * eta_file / n_gear, tau / (eta_file * n_gear))
        a = np.column_stack([shaft_file, inertial])
        (g, _), *_ = np.linalg.lstsq(a, cur, rcond=None)
        if not g > 0.0:
            raise IdentificationError("the current does not follow the torque", key="current_a",
                                      expected="a current of the torque's sign",
                                      found=Described(f"gain {g:.3g} 1/(N m/A)"),
                                      hint="check the sign conventions of the current, torque and speed channels")
        kt0 = 1.0 / g
    names = ("torque_constant_nm_per_a",) + (("gearbox_efficiency",) if eta_free else ()) \
        + (("friction_coulomb_nm", "friction_viscous_nms_per_rad") if friction else ())
    x0 = [kt0] + ([eta0] if eta_free else []) + ([0.0, 0.0] if friction else [])
    lo = [0.0] + ([1e-6] if eta_free else []) + ([-np.inf, -np.inf] if friction else [])
    hi = [np.inf] + ([1.0] if eta_free else []) + ([np.inf, np.inf] if friction else [])
    fixed = None if eta_free else eta_file
    args = (tau, qd, qdd, n_gear, j_rotor, fixed, friction)

    def fun(th):
        return _drive_model(th, *args)[0] - cur

    def jac(th):
        return _drive_model(th, *args)[1]

    sol = optimize.least_squares(fun, np.array(x0), jac=jac, bounds=(lo, hi), x_scale="jac", method="trf",
                                 xtol=1e-12, ftol=1e-12, gtol=1e-12)
    if not np.all(np.isfinite(sol.x)):
        raise IdentificationError("the drive fit diverged", key="current_a", expected="a finite solution",
                                  found=Described("non-finite parameters"))
    fitted, jmat, back = _drive_model(sol.x, *args)
    resid = cur - fitted
    cov, rho, inflation, dof = _covariance(jmat, resid, names, "drive")
    est = {}
    bounds = {"torque_constant_nm_per_a": (0.0, np.inf), "gearbox_efficiency": (0.0, 1.0)}
    units = {"torque_constant_nm_per_a": "N m/A", "gearbox_efficiency": "-", "friction_coulomb_nm": "N m",
             "friction_viscous_nms_per_rad": "N m s/rad"}
    files = {"torque_constant_nm_per_a": kt_file, "gearbox_efficiency": eta_file}
    for k, name in enumerate(names):
        low, high = _interval(float(sol.x[k]), float(cov[k, k]), dof, *bounds.get(name, (-np.inf, np.inf)))
        est[name] = Estimate(name, units[name], float(sol.x[k]), low, high, files.get(name), n, _DRIVE_METHOD)
    if not eta_free:
        est["gearbox_efficiency"] = Estimate("gearbox_efficiency", "-", eta_file, math.nan, math.nan, eta_file, 0,
                                             "held at the robot file's value (not identifiable from this log)")
    elif sol.x[1] >= 1.0 - 1e-9:
        notes.append("gearbox efficiency at its bound 1: the log asks for more; check the torque channel's scale")
    if rho > 0.5:
        notes.append(f"residuals strongly autocorrelated (lag-1 {rho:.2f}): "
                     f"intervals widened {math.sqrt(inflation):.2g}x; "
                     "the model may miss an effect (friction, a torque offset, timing)")
    return DriveFit(
        torque_constant_nm_per_a=est["torque_constant_nm_per_a"],
        gearbox_efficiency=est["gearbox_efficiency"],
        friction_coulomb_nm=est.get("friction_coulomb_nm"),
        friction_viscous_nms_per_rad=est.get("friction_viscous_nms_per_rad"),
        residual_rms_a=float(np.sqrt(np.mean(resid * resid))),
        fitted_current_a=_readonly(fitted),
        n_motoring=int((~back).sum()), n_generating=int(back.sum()),
        eta_identified=eta_free, parameter_names=names, covariance=_readonly(cov),
        residual_lag1=rho, inflation=inflation, notes=tuple(notes))


# --------------------------------------------------------------------------------------------------
# thermal


def _phi1(z: np.ndarray) -> np.ndarray:
    """(e^z - 1) / z, 1 at z = 0."""
    small = np.abs(z) < 1e-8
    return np.where(small, 1.0 + 0.5 * z, np.expm1(z) / np.where(small, 1.0, z))


def _affine_scan(m: np.ndarray, v: np.ndarray, x0: float) -> np.ndarray:
    """x[0..n] with x[0] = x0, x[k+1] = m[k] x[k] + v[k]: Hillis-Steele scan of the affine maps (log2 n
    vectorised passes; limits.checks.thermal.prefix_maps for scalars)."""
    a, b = m.astype(float).copy(), v.astype(float).copy()
    n, step = a.shape[0], 1
    while step < n:  # entry k then composes maps max(0, k - 2 step + 1) .. k
        b[step:] = a[step:] * b[:-step] + b[step:]
        a[step:] = a[step:] * a[:-step]
        step *= 2
    out = np.empty(n + 1)
    out[0] = x0
    out[1:] = a * x0 + b
    return out


def _node_response(dt: np.ndarray, rate: np.ndarray, forcing: np.ndarray, x0: float) -> np.ndarray:
    """Exact solution of dT/dt = rate_k T + forcing_k, both held over step k of length dt_k, from T0."""
    z = rate * dt
    with np.errstate(over="ignore", invalid="ignore"):
        return _affine_scan(np.exp(z), dt * _phi1(z) * forcing, x0)


def _step_mean(a: np.ndarray) -> np.ndarray:
    return 0.5 * (a[1:] + a[:-1])


def simulate_winding_c(time_s, current_a, boundary_c, *, resistance_k_per_w: float, time_constant_s: float,
                       winding_resistance_ohm: float, alpha_per_k: float, ref_temp_c: float,
                       initial_c: float) -> np.ndarray:
    """Winding temperature [degC] at each sample time of a log: C dT/dt = R_ref i^2 (1 + alpha (T -
    T_ref)) - (T - T_b) / R, tau = R C, from ``initial_c`` at time_s[0].

    The current [A] is held at each step's start value (zero-order hold); ``boundary_c`` is the
    ambient (a number) or a boundary temperature per sample (housing), held at the mean of each step's
    two end values. Time steps may be irregular (strictly increasing times). Exact for such inputs."""
    t = np.asarray(time_s, dtype=float)
    i2 = np.square(np.asarray(current_a, dtype=float))[:-1]
    tb = np.asarray(boundary_c, dtype=float)
    tb = np.full(t.shape[0] - 1, float(tb)) if tb.ndim == 0 else _step_mean(tb)
    r, tau = float(resistance_k_per_w), float(time_constant_s)
    cap = tau / r
    rate = -1.0 / tau + alpha_per_k * winding_resistance_ohm * i2 / cap
    forcing = (winding_resistance_ohm * i2 * (1.0 - alpha_per_k * ref_temp_c) + tb / r) / cap
    return _node_response(np.diff(t), rate, forcing, float(initial_c))


def _housing_c(time_s, heat_w, ambient_c: float, r: float, tau: float, initial_c: float) -> np.ndarray:
    """Housing temperature [degC]: C_h dT/dt = q - (T - T_amb) / R_h with q [W] per sample, held at the
    mean of each step's two end values."""
    t = np.asarray(time_s, dtype=float)
    q = _step_mean(np.asarray(heat_w, dtype=float))
    rate = np.full(q.shape[0], -1.0 / tau)
    return _node_response(np.diff(t), rate, (q * r + ambient_c) / tau, float(initial_c))


def _noise_k(temp: np.ndarray) -> float:
    """Temperature noise [K] from the first differences (robust: MAD, 1.4826 for a normal
    distribution, common practice)."""
    d = np.diff(temp)
    return float(1.4826 * np.median(np.abs(d - np.median(d))) / math.sqrt(2.0))


def _check_rise(name: str, signal: np.ndarray):
    span = float(np.ptp(signal))
    need = max(MIN_RISE_K, RISE_NOISE_RATIO * _noise_k(signal))
    if not span >= need:
        raise IdentificationError("the temperature hardly changes: nothing thermal can be identified", key=name,
                                  expected=f"a variation of at least {need:.3g} K (the larger of {MIN_RISE_K:g} K and "
                                           f"{RISE_NOISE_RATIO:g} x the {_noise_k(signal):.2g} K noise)",
                                  found=Described(f"{span:.3g} K"),
                                  hint="log a longer or harder test, or one that starts cold")


def _check_duration(name: str, duration: float, tau_guess: float):
    if duration < MIN_LOG_TAU_FRACTION * tau_guess:
        raise IdentificationError("the log is too short for the thermal time constant", key=name,
                                  expected=f"a log of at least {MIN_LOG_TAU_FRACTION:g} x the {tau_guess:g} s "
                                           f"time constant guess ({MIN_LOG_TAU_FRACTION * tau_guess:g} s)",
                                  found=Described(f"{duration:g} s"))


def _fit_node(simulate, measured: np.ndarray, r0: float, tau0: float, names: tuple[str, str, str], what: str):
    """Output-error fit of (R, tau, T0) of one node; returns (theta, cov, dof, fitted, residual, rho)."""
    t0 = float(np.median(measured[: min(5, measured.shape[0])]))

    def fun(th):
        sim = simulate(th[0], th[1], th[2])
        res = sim - measured
        return np.where(np.isfinite(res), res, 1e6)

    x0 = np.array([r0, tau0, t0])
    lo = np.array([r0 * 1e-4, tau0 * 1e-4, -np.inf])
    sol = optimize.least_squares(fun, x0, bounds=(lo, np.inf), x_scale=np.array([r0, tau0, 1.0]), method="trf",
                                 jac="3-point", xtol=1e-12, ftol=1e-12, gtol=1e-12)
    fitted = simulate(*sol.x)
    if not np.all(np.isfinite(fitted)):
        raise IdentificationError(f"the {what} fit diverged", key=names[0], expected="a finite simulated temperature",
                                  found=Described("non-finite values"))
    resid = measured - fitted
    cov, rho, _, dof = _covariance(sol.jac, resid, names, what)
    return sol.x, cov, dof, fitted, resid, rho


def identify_thermal(time_s, current_a, winding_temp_c, *, ambient_c: float, winding_resistance_ohm: float,
                     alpha_per_k: float, ref_temp_c: float, file_r: float, file_tau: float, housing_temp_c=None,
                     file_housing_r: float | None = None, file_housing_tau: float | None = None) -> ThermalFit:
    """Winding thermal resistance [K/W] and time constant [s] (and with ``housing_temp_c`` the housing's
    too) from a log of drive current [A] and winding temperature [degC] at times ``time_s`` [s]
    (strictly increasing, possibly irregular).

    One node: winding to ambient, the file's values ``file_r`` and ``file_tau`` as the starting guess.
    With the housing temperature: winding to housing (``file_r``, ``file_tau``: the file's winding-to-
    housing values) with the measured housing temperature as the boundary, then housing to ambient
    (``file_housing_r``, ``file_housing_tau``; without them the start is guessed from the log) fed by
    the heat leaving the winding; the housing resistance's interval includes the winding resistance's
    uncertainty (it scales that heat). ``winding_resistance_ohm`` is R_ref at ``ref_temp_c``, alpha
    the resistance's temperature coefficient [1/K]. See the module docstring for the model.

    Raises IdentificationError on non-finite or mismatched input, too few samples, a temperature
    that varies by less than max(MIN_RISE_K, RISE_NOISE_RATIO x noise), a log shorter than
    MIN_LOG_TAU_FRACTION of the time constant guess, or a singular fit.
    """
    t = _vector("time_s", time_s)
    n = t.shape[0]
    cur = _vector("current_a", current_a, n)
    tw = _vector("winding_temp_c", winding_temp_c, n)
    amb = _scalar("ambient_c", ambient_c)
    r_ohm = _scalar("winding_resistance_ohm", winding_resistance_ohm, positive=True)
    alpha = _scalar("alpha_per_k", alpha_per_k)
    t_ref = _scalar("ref_temp_c", ref_temp_c)
    r_file = _scalar("file_r", file_r, positive=True)
    tau_file = _scalar("file_tau", file_tau, positive=True)
    if n < MIN_SAMPLES:
        raise IdentificationError("too few samples to identify the thermal model", key="time_s",
                                  expected=f"at least {MIN_SAMPLES} samples", found=n)
    dt = np.diff(t)
    if not np.all(dt > 0.0):
        k = int(np.flatnonzero(~(dt > 0.0))[0])
        raise IdentificationError("time does not increase", key="time_s", row=k + 1,
                                  expected="strictly increasing times", found=float(t[k + 1]))
    if not np.any(cur != 0.0):
        raise IdentificationError("no current in the log: no losses heat the winding", key="current_a",
                                  expected="a nonzero current", found=Described("zero throughout"),
                                  hint="the thermal resistance needs losses; log a test that loads the joint")
    duration = float(t[-1] - t[0])
    _check_duration("time_s", duration, tau_file)
    th = None if housing_temp_c is None else _vector("housing_temp_c", housing_temp_c, n)
    notes: list[str] = []

    boundary = amb if th is None else th
    _check_rise("winding_temp_c", tw if th is None else tw - th)

    def sim_w(r, tau, t0):
        return simulate_winding_c(t, cur, boundary, resistance_k_per_w=r, time_constant_s=tau,
                                  winding_resistance_ohm=r_ohm, alpha_per_k=alpha, ref_temp_c=t_ref, initial_c=t0)

    node = "winding-to-ambient" if th is None else "winding-to-housing"
    names_w = ("winding_resistance_k_per_w", "winding_time_constant_s", "winding_initial_c")
    x, cov, dof, fitted, resid, rho = _fit_node(sim_w, tw, r_file, tau_file, names_w, "winding")
    method = _THERMAL_METHOD.format(what=f"winding ({node})")
    w_est = [Estimate(nm, u, float(x[k]), *_interval(float(x[k]), float(cov[k, k]), dof, *b), f, n, method)
             for k, (nm, u, b, f) in enumerate(zip(names_w, ("K/W", "s", "degC"),
                                                   ((0.0, np.inf), (0.0, np.inf), (-np.inf, np.inf)),
                                                   (r_file, tau_file, None)))]
    _thermal_notes(notes, "winding", x[1], duration, rho)
    out = dict(winding_resistance_k_per_w=w_est[0], winding_time_constant_s=w_est[1], winding_initial_c=w_est[2],
               fitted_winding_c=_readonly(fitted), residual_rms_k=float(np.sqrt(np.mean(resid * resid))))
    if th is not None:
        rw, var_rw = float(x[0]), float(cov[0, 0])
        heat = (tw - th) / rw                                      # W, winding to housing
        rh_file = None if file_housing_r is None else _scalar("file_housing_r", file_housing_r, positive=True)
        tauh_file = None if file_housing_tau is None else _scalar("file_housing_tau", file_housing_tau, positive=True)
        _check_rise("housing_temp_c", th)
        mean_heat = float(np.mean(heat))
        rh0 = rh_file if rh_file is not None else max(float(np.ptp(th)) / max(abs(mean_heat), 1e-9), 1e-3)
        tauh0 = tauh_file if tauh_file is not None else duration / 3.0
        if tauh_file is not None:
            _check_duration("time_s", duration, tauh_file)

        def sim_h(r, tau, t0):
            return _housing_c(t, heat, amb, r, tau, t0)

        names_h = ("housing_resistance_k_per_w", "housing_time_constant_s", "housing_initial_c")
        xh, covh, dofh, fit_h, res_h, rho_h = _fit_node(sim_h, th, rh0, tauh0, names_h, "housing")
        var_rh = float(covh[0, 0]) + (xh[0] / rw) ** 2 * var_rw   # R_h scales with the heat, i.e. with 1 / R_w
        vars_h = (var_rh, float(covh[1, 1]), float(covh[2, 2]))
        method_h = _THERMAL_METHOD.format(what="housing (housing-to-ambient, fed by the heat leaving the winding)")
        h_est = [Estimate(nm, u, float(xh[k]), *_interval(float(xh[k]), vars_h[k], dofh, *b), f, n, method_h)
                 for k, (nm, u, b, f) in enumerate(zip(names_h, ("K/W", "s", "degC"),
                                                       ((0.0, np.inf), (0.0, np.inf), (-np.inf, np.inf)),
                                                       (rh_file, tauh_file, None)))]
        _thermal_notes(notes, "housing", xh[1], duration, rho_h)
        out.update(housing_resistance_k_per_w=h_est[0], housing_time_constant_s=h_est[1], housing_initial_c=h_est[2],
                   fitted_housing_c=_readonly(fit_h), housing_residual_rms_k=float(np.sqrt(np.mean(res_h * res_h))))
    return ThermalFit(**out, notes=tuple(notes))


def _thermal_notes(notes: list[str], node: str, tau: float, duration: float, rho: float):
    if tau > 3.0 * duration:
        notes.append(f"{node} time constant {tau:.3g} s exceeds 3x the {duration:.3g} s log: poorly determined, "
                     "see its interval")
    if rho > 0.5:
        notes.append(f"{node} residuals strongly autocorrelated (lag-1 {rho:.2f}): the one-node model may miss "
                     "a slower or faster path; intervals widened accordingly")
