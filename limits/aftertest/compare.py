"""A hardware log held against the reviewed case: tracking, current, temperature, every measured sample
against every modelled limit, the margin the hardware used, and what the robot file gets wrong.

The reviewed targets are the review's own: the plan and robot named in its review.json are read again
(their SHA-256 must match what was reviewed) and the case is translated and checked at the review's
settings (mapping.pipeline.prepare, limits.checks.check_case). The log's clock is put on the plan's by
align.align_log; the test repeats the case with its period T (JointTrajectory.repetition_period_s: the
case's duration, whatever the review's rate), so a log sample at time t belongs to plan
time (t - offset) mod T, and only samples at or after the offset (the motion had started) are compared.

Predicted quantities at a log sample come from the reviewed trajectory at that plan time (linear
interpolation on the review's grid). The drive identification takes the joint torque the review
predicts, delayed by the joint's own tracking lag (joint_lags), as the torque the hardware made: with no
torque sensor in the log, the torque constant found is the current-to-torque gain relative to the
robot file's inverse dynamics (masses and inertias are taken as right). A logged joint torque, when
present, is used instead.

Measured limits (each a LimitTrace over the log's samples, judged with the review's margin): joint range
(measured angle), joint speed (measured speed), peak current (measured current), peak torque (a logged
torque only), voltage (R_hot I + Ke N qd from the measured current and speed, against the drive voltage
scaled by the measured bus voltage when logged), winding temperature (measured rise above ambient
against the limit's), continuous current (RMS of the measured current over the last plan period before
each sample), and, for a logged ground force, unilateral contact and the friction cone in the leg's
logged stance (limits.checks.ground.ground_utilisation). Share of the margin used, per joint and limit:
(u_measured - u_reviewed) / (1 - u_reviewed): 0 when the hardware did what the review predicted, 100 %
when it reached the limit the review left room for, negative when it stayed below the prediction.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from legbridge.robots.reprs import short_repr

from .align import Alignment
from .log import HardwareLog


@dataclass(frozen=True)
class Tracking:
    """Measured minus target, one joint (targets at the aligned plan time, lag not removed).

    position_*: [rad]; velocity_*: [rad/s]; *_at_s: log time of the peak; lag_s: the joint's tracking
    lag beyond the common offset [s]
    """

    joint: str
    position_rms: float
    position_peak: float
    position_peak_at_s: float
    velocity_rms: float
    velocity_peak: float
    velocity_peak_at_s: float
    lag_s: float


@dataclass(frozen=True)
class CurrentComparison:
    """Measured against predicted drive current of one joint [A] over the compared samples.

    gain: least-squares slope of measured on predicted (1 when the file's current model is right)
    """

    joint: str
    measured_rms: float
    predicted_rms: float
    measured_peak: float
    predicted_peak: float
    gain: float
    difference_rms: float


@dataclass(frozen=True)
class TemperatureComparison:
    """Measured against predicted winding temperature of one joint [degC] over the log (the file's
    thermal model driven by the predicted current from ambient at the motion's start)."""

    joint: str
    measured_peak_c: float
    predicted_peak_c: float
    measured_end_c: float
    predicted_end_c: float
    limit_c: float


@dataclass(frozen=True)
class MarginUse:
    """The reviewed and the measured utilisation of one limit on one joint, and the share of the
    reviewed margin used ((u_measured - u_reviewed) / (1 - u_reviewed); None when either is missing
    or the review left no margin)."""

    joint: str
    limit: str
    reviewed: float | None
    measured: float
    share_used: float | None


@short_repr("case", "log", "alignment", "summary")
@dataclass(frozen=True, eq=False)
class AfterTest:
    """Everything the comparison found (rendered by aftertest.text, aftertest.json_doc, aftertest.report)."""

    review_path: str
    review_sha256: str
    plan_path: str
    plan_sha256: str
    robot: object                       # legbridge.robots.Robot (the file reviewed)
    settings: object                    # the review's CheckSettings
    case: str
    reviewed: object                    # the case's CaseReview as checked again now
    log: HardwareLog
    alignment: Alignment
    lags_s: dict
    compared: np.ndarray                # bool (n_log,): samples at or after the motion's start
    plan_time_s: np.ndarray             # (n_log,) plan time of each log sample (mod T; NaN before the start)
    tracking: tuple[Tracking, ...]
    currents: tuple[CurrentComparison, ...]
    temperatures: tuple[TemperatureComparison, ...]
    traces: tuple                       # measured LimitTraces
    segments: tuple                     # measured LimitSegments, worst first
    summary: object                     # CaseSummary of the measured traces (limits.verdict.summarise)
    margin: tuple[MarginUse, ...]
    drive_fits: dict                    # joint -> identify.DriveFit
    thermal_fits: dict                  # joint -> identify.ThermalFit
    predicted: dict = field(default_factory=dict)   # joint -> {"current_a", "winding_c", "position_rad", "velocity_rad_s",
                                                    # "identified_winding_c"} at the log samples
    notes: tuple[str, ...] = ()

    @property
    def exit_code(self) -> int:
        """0 when no measured sample exceeds a modelled limit, 1 otherwise (as `legbridge check`)."""
        from legbridge.limits.verdict import exit_status

        return exit_status([self.summary])


# --------------------------------------------------------------------------------------- plan times


def periodic_at(traj_time_s: np.ndarray, values: np.ndarray, plan_time_s: np.ndarray, period_s: float) -> np.ndarray:
    """``values`` (n,) or (n, j) on the trajectory grid, at plan times taken modulo the period (linear
    interpolation; the period closes the curve back on its first sample). NaN plan times give NaN."""
    t = np.asarray(traj_time_s, dtype=float)
    v = np.asarray(values, dtype=float)
    keep = t < t[0] + period_s - 1e-12  # a sample at the period's end is the next repetition's first
    t, v = t[keep], v[keep]
    x = np.mod(np.asarray(plan_time_s, dtype=float), period_s)
    tt = np.concatenate([t, [t[0] + period_s]])
    vv = np.concatenate([v, v[:1]], axis=0)
    if v.ndim == 1:
        out = np.interp(x, tt, vv)
    else:
        out = np.stack([np.interp(x, tt, vv[:, j]) for j in range(v.shape[1])], axis=1)
    bad = ~np.isfinite(np.asarray(plan_time_s, dtype=float))
    out[bad] = np.nan
    return out


def _peak(err: np.ndarray, t: np.ndarray) -> tuple[float, float, float]:
    """RMS, signed peak and its time of an error over the finite samples."""
    ok = np.isfinite(err)
    if not ok.any():
        return np.nan, np.nan, np.nan
    e, tt = err[ok], t[ok]
    k = int(np.argmax(np.abs(e)))
    return float(np.sqrt(np.mean(e * e))), float(e[k]), float(tt[k])


def _moving_rms(t: np.ndarray, x: np.ndarray, window_s: float) -> np.ndarray:
    """RMS of x over the last ``window_s`` before each sample (trapezoid on the irregular grid); shorter
    at the start. NaN samples count as zero current."""
    x2 = np.where(np.isfinite(x), x, 0.0) ** 2
    cum = np.concatenate([[0.0], np.cumsum(0.5 * (x2[1:] + x2[:-1]) * np.diff(t))])
    start = np.searchsorted(t, t - window_s)
    span = t - t[start]
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(span > 0, np.sqrt((cum - cum[start]) / np.where(span > 0, span, 1.0)), np.abs(np.nan_to_num(x)))


# --------------------------------------------------------------------------------------- the steps


def phase_edges_s(traj) -> np.ndarray:
    """Plan times [s] where the reviewed motion changes phase or interpolation piece (a touchdown, a
    liftoff, a kink): the torque may step there, so a log sample near one has no single predicted value."""
    t = np.asarray(traj.time_s, dtype=float)
    marks = [np.asarray(traj.stance)]
    if getattr(traj, "leg_contact", None) is not None:
        marks += list(np.asarray(traj.leg_contact).T)
    if getattr(traj, "pieces", None) is not None:
        marks.append(np.asarray(traj.pieces))
    idx = np.unique(np.concatenate([np.flatnonzero(m[1:] != m[:-1]) for m in marks]))
    return 0.5 * (t[idx] + t[idx + 1])


def near_edges(plan_time_s: np.ndarray, edges_s: np.ndarray, period: float, width_s: float) -> np.ndarray:
    """True where a plan time lies within ``width_s`` of a phase edge (modulo the period)."""
    pt = np.asarray(plan_time_s, dtype=float)
    if edges_s.size == 0:
        return np.zeros(pt.shape, bool)
    e = np.sort(np.concatenate([edges_s - period, edges_s, edges_s + period]))
    k = np.clip(np.searchsorted(e, np.nan_to_num(np.mod(pt, period))), 1, e.size - 1)
    x = np.mod(np.nan_to_num(pt), period)
    return np.minimum(np.abs(x - e[k - 1]), np.abs(e[k] - x)) <= width_s


LAG_SEARCH_S = 0.01      # the drive's timing is searched within +- this of the position lag [s] ...
LAG_TOLERANCE_S = 5e-5   # ... to this resolution
EDGE_SAMPLES = 1.5       # log samples within this many review steps of a phase edge or of a change of power
                         # direction (where the current steps by 1/eta^2) are left out of the drive fit


def drive_fit_at_best_lag(traj, j: int, act, rel: np.ndarray, period: float, measured: np.ndarray, start_lag: float):
    """(DriveFit, lag): the drive identification at the delay [s] of the reviewed motion that best explains
    the measured current (least residual of the fit, bounded scalar search around the position's tracking
    lag): the timing the current model needs, which the position lag gives only to about a sample."""
    from scipy.optimize import minimize_scalar

    from . import identify

    speed, accel = traj.motor_side_rates(j, act.gear_ratio)
    t = np.asarray(traj.time_s, dtype=float)
    motoring = np.asarray(traj.tau[:, j]) * np.asarray(speed) >= 0.0    # power direction at each review sample
    flips = np.flatnonzero(motoring[1:] != motoring[:-1])                # the gearbox efficiency switches there
    edges = np.sort(np.concatenate([phase_edges_s(traj), 0.5 * (t[flips] + t[flips + 1])]))
    width = EDGE_SAMPLES / float(traj.rate_hz)
    finite_rel = np.isfinite(rel)

    def fit(lag: float):
        pt = np.full(rel.shape, np.nan)
        live = finite_rel & (rel - lag >= 0)
        pt[live] = np.mod(rel[live] - lag, period)
        tau = periodic_at(traj.time_s, traj.tau[:, j], pt, period)
        qd, qdd = periodic_at(traj.time_s, speed, pt, period), periodic_at(traj.time_s, accel, pt, period)
        ok = (np.isfinite(tau) & np.isfinite(qd) & np.isfinite(qdd) & np.isfinite(measured)
              & ~near_edges(pt, edges, period, width))
        return identify.identify_drive(tau[ok], qd[ok], qdd[ok], measured[ok], gear_ratio=act.gear_ratio,
                                       rotor_inertia_kgm2=act.rotor_inertia_kgm2, file_kt=act.torque_constant_nm_per_a,
                                       file_eta=act.gearbox_efficiency)

    best = minimize_scalar(lambda lag: fit(lag).residual_rms_a, bounds=(start_lag - LAG_SEARCH_S, start_lag + LAG_SEARCH_S),
                           method="bounded", options={"xatol": LAG_TOLERANCE_S})
    return fit(float(best.x)), float(best.x)


def measured_traces(log: HardwareLog, robot, joints, compared: np.ndarray, period_s: float, *, legs=(),
                    friction: float | None = None) -> tuple:
    """Every modelled limit a log quantity can be held against, as LimitTraces over the log samples
    (samples before the motion's start carry NaN value and utilisation 0)."""
    from legbridge.limits.checks.base import ratio, signed_ratio, trace
    from legbridge.limits.checks.joint_range import range_utilisation
    from legbridge.robots.actuator_limits import (hot_winding_resistance_ohm, joint_torque_limits_nm,
                                                  max_joint_speed)

    t = log.time_s

    def masked(v):
        v = np.asarray(v, dtype=float)
        return np.where(compared, v, np.nan)

    def util(u):
        return np.where(compared & np.isfinite(u), u, 0.0)

    out = []
    for name in joints:
        joint = robot.joint(name)
        act = joint.actuator
        q, qd, cur = log.get(name, "position"), log.get(name, "velocity"), log.get(name, "current")
        tau, tw = log.get(name, "torque"), log.get(name, "winding_temp")
        if q is not None:
            u, allowed = range_utilisation(q, joint.lower_rad, joint.upper_rad)
            out.append(trace("joint_range", name, "rad", masked(q), allowed, util(u), source="hard stops; measured angle"))
        if qd is not None:
            vmax = max_joint_speed(joint).value
            out.append(trace("joint_speed", name, "rad/s", masked(qd), np.full(t.shape, vmax), util(ratio(np.abs(qd), vmax)),
                             source="measured speed"))
        if cur is not None:
            ipk = act.peak_current_a
            out.append(trace("peak_current", name, "A", masked(cur), np.full(t.shape, ipk), util(ratio(np.abs(cur), ipk)),
                             source="drive peak current; measured current"))
            rms = _moving_rms(t, np.where(compared, cur, 0.0), period_s)
            out.append(trace("continuous_current", name, "A", masked(rms), np.full(t.shape, act.continuous_current_a),
                             util(ratio(rms, act.continuous_current_a)),
                             source="RMS of the measured current over the last plan period"))
            if qd is not None:
                v = hot_winding_resistance_ohm(act) * cur + act.back_emf_v_s_per_rad * act.gear_ratio * qd
                bus = log.get("robot", "bus_voltage")
                vmax = (np.full(t.shape, act.max_voltage_v) if bus is None
                        else act.max_voltage_v * np.nan_to_num(bus, nan=act.bus_voltage_v) / act.bus_voltage_v)
                out.append(trace("voltage", name, "V", masked(v), vmax, util(ratio(np.abs(v), vmax)),
                                 source="R_hot I + Ke N qd from the measured current and speed, against "
                                        + ("the drive voltage" if bus is None else "the drive voltage at the measured bus")))
        if tau is not None:
            lo, hi, source = joint_torque_limits_nm(joint, np.nan_to_num(qd) if qd is not None else np.zeros_like(t),
                                                    voltage=False)
            allowed = np.where(tau >= 0, hi, lo)
            out.append(trace("peak_torque", name, "N m", masked(tau), allowed, util(signed_ratio(tau, lo, hi)),
                             source=source + "; measured torque"))
        if tw is not None:
            th = act.thermal
            rise, allowed = tw - th.ambient_temp_c, th.max_winding_temp_c - th.ambient_temp_c
            out.append(trace("winding_temperature", name, "K", masked(rise), np.full(t.shape, allowed),
                             util(ratio(rise, allowed)), source="measured winding temperature"))
    from legbridge.limits.checks.ground import ground_utilisation

    mu = float(friction if friction is not None else robot.ground_friction)
    for leg in legs:  # a logged ground force against the contact limits, in the leg's logged stance
        fx, fz = log.get(leg, "ground_force_x"), log.get(leg, "ground_force_z")
        if fz is None:
            continue
        fx = np.zeros_like(fz) if fx is None else fx
        contact = log.get(leg, "contact")
        stance = (np.asarray(contact, dtype=bool) if contact is not None else np.nan_to_num(fz) > 0.0) & compared
        uni, allowed, cone = ground_utilisation(fx, fz, mu, stance)
        out.append(trace("unilateral_force", leg, "N", masked(fz), 0.0, util(uni), source="measured ground force"))
        out.append(trace("friction_cone", leg, "N", masked(np.abs(fx)), allowed, util(cone),
                         source=f"measured ground force, friction coefficient {mu:g}"))
    return tuple(out)


def _margin(reviewed, traces, temps=(), robot=None) -> tuple[MarginUse, ...]:
    """Reviewed against measured utilisation. The winding temperature is judged over the same time as the
    log (the robot file's model driven by the reviewed current from ambient), not over the whole
    assumed test of the review, which a short log does not reach."""
    from legbridge.limits.verdict import trace_worst

    before = {(w.joint, w.limit): w.utilisation for w in reviewed.summary.by_limit}
    for x in temps:
        th = robot.joint(x.joint).actuator.thermal
        before[(x.joint, "winding_temperature")] = (x.predicted_peak_c - th.ambient_temp_c) / (x.limit_c - th.ambient_temp_c)
    out = []
    for tr in traces:
        u_m = trace_worst(tr.utilisation)
        u_r = before.get((tr.joint, tr.limit))
        share = None
        if u_r is not None and np.isfinite(u_r) and u_r < 1.0 and np.isfinite(u_m):
            share = (u_m - u_r) / (1.0 - u_r)
        out.append(MarginUse(tr.joint, tr.limit, u_r, float(u_m), share))
    return tuple(sorted(out, key=lambda m: -m.measured))


def predicted_winding_c(robot, joint: str, time_s: np.ndarray, current_a: np.ndarray, dt_s: float = 1e-3) -> np.ndarray:
    """The robot file's winding temperature [degC] at ``time_s`` for a current (zero-order hold) from
    ambient at time_s[0]: limits.checks.thermal.rise_from_ambient_k on a uniform grid of dt_s."""
    from legbridge.limits.checks.thermal import rise_from_ambient_k

    act = robot.joint(joint).actuator
    grid = np.arange(time_s[0], time_s[-1] + dt_s, dt_s)
    idx = np.clip(np.searchsorted(time_s, grid, side="right") - 1, 0, time_s.size - 1)
    cur = np.nan_to_num(np.asarray(current_a, dtype=float)[idx])
    rise = rise_from_ambient_k(act.thermal, act.winding_resistance_ohm, cur, dt_s)  # at grid[0] + k dt, k = 0..n
    return act.thermal.ambient_temp_c + np.interp(time_s, grid[0] + dt_s * np.arange(rise.size), rise)


def compare_log(log: HardwareLog, reviewed, robot, settings, *, review_path: str = "", review_sha256: str = "",
                plan_path: str = "", plan_sha256: str = "", say=lambda msg: None) -> AfterTest:
    """Align, compare and identify (module docstring). ``reviewed``: the case's CaseReview."""
    from legbridge.limits.checks.segments import trace_segments
    from legbridge.limits.verdict import Verdict, summarise
    from legbridge.mapping.readers.phases import stance_events
    from legbridge.robots.errors import LegbridgeError

    from . import identify
    from .align import align_log, joint_lags

    traj = reviewed.trajectory
    period = traj.repetition_period_s
    names = tuple(traj.joint_names)
    tt = np.asarray(traj.time_s, dtype=float)
    tg_time = tt[tt < tt[0] + period - 1e-12]
    tg_pos = {n: np.asarray(traj.q[: tg_time.size, j], dtype=float) for j, n in enumerate(names)}
    touchdowns = None
    legs = getattr(traj, "legs", ()) or ()
    if legs and getattr(traj, "leg_contact", None) is not None:
        touchdowns = {leg: stance_events(tt, np.asarray(traj.leg_contact)[:, k]).touchdown_s for k, leg in enumerate(legs)}
    say("aligning the log with the reviewed targets")
    al = align_log(log, target_time_s=tg_time, target_position=tg_pos, period_s=period, touchdown_times=touchdowns)
    lags = joint_lags(log, al, tg_time, tg_pos, period)
    t = log.time_s
    rel = t - al.offset_s
    compared = rel >= 0.0
    plan_t = np.where(compared, np.mod(rel, period), np.nan)
    notes = []
    if compared.sum() < 20:
        raise LegbridgeError("the log ends before the motion starts", path=log.path, expected="samples after the aligned start",
                             found=int(compared.sum()))
    say("comparing tracking, current and temperature")
    tracking, currents, temps, predicted = [], [], [], {}
    qd_pred = periodic_at(tt, traj.qd, plan_t, period)
    q_pred = periodic_at(tt, traj.q, plan_t, period)
    i_pred_now = periodic_at(tt, traj.current_a, plan_t, period)
    for j, n in enumerate(names):
        lag = float(lags.get(n, 0.0))
        pt_lag = np.where(compared & (rel - lag >= 0), np.mod(rel - lag, period), np.nan)
        i_pred = periodic_at(tt, traj.current_a[:, j], pt_lag, period)
        q_m, qd_m, i_m = log.get(n, "position"), log.get(n, "velocity"), log.get(n, "current")
        pq = _peak(q_m - q_pred[:, j], t) if q_m is not None else (np.nan,) * 3
        pv = _peak(qd_m - qd_pred[:, j], t) if qd_m is not None else (np.nan,) * 3
        tracking.append(Tracking(n, *pq, *pv, lag))
        pred = {"position_rad": q_pred[:, j], "velocity_rad_s": qd_pred[:, j], "current_a": i_pred}
        if i_m is not None:
            ok = compared & np.isfinite(i_m) & np.isfinite(i_pred)
            a, b = i_m[ok], i_pred[ok]
            gain = float(np.dot(a, b) / np.dot(b, b)) if np.dot(b, b) > 0 else np.nan
            currents.append(CurrentComparison(n, float(np.sqrt(np.mean(a * a))), float(np.sqrt(np.mean(b * b))),
                                              float(np.max(np.abs(a))), float(np.max(np.abs(b))), gain,
                                              float(np.sqrt(np.mean((a - b) ** 2)))))
        tw = log.get(n, "winding_temp")
        joint = robot.joint(n)
        if tw is not None:
            i_for_heat = np.where(compared, np.nan_to_num(i_pred_now[:, j]), 0.0)
            w_pred = predicted_winding_c(robot, n, t, i_for_heat)
            pred["winding_c"] = w_pred
            okw = np.isfinite(tw)
            temps.append(TemperatureComparison(n, float(np.nanmax(tw)), float(np.max(w_pred)), float(tw[okw][-1]),
                                               float(w_pred[okw][-1]), joint.actuator.thermal.max_winding_temp_c))
        predicted[n] = pred
    say("checking every measured sample against the modelled limits")
    traces = measured_traces(log, robot, names, compared, period, legs=tuple(robot.legs) or ("leg",),
                             friction=settings.friction)
    segs = tuple(s for tr in traces for s in trace_segments(reviewed.case, tr, t, settings.margin))
    segs = tuple(sorted(segs, key=lambda s: (s.severity != Verdict.EXCEEDS, -s.utilisation, s.t_start_s)))
    summary = summarise(reviewed.case, traces, segs, ())
    say("identifying drive and thermal parameters")
    drive, thermal = {}, {}
    for j, n in enumerate(names):
        act = robot.joint(n).actuator
        i_m = log.get(n, "current")
        if i_m is None:
            continue
        try:
            tau = log.get(n, "torque")
            if tau is None:
                drive[n], lag = drive_fit_at_best_lag(traj, j, act, np.where(compared, rel, np.nan), period,
                                                      np.where(compared, i_m, np.nan), float(lags.get(n, 0.0)))
                notes.append(f"{n}: drive identified against the review's inverse dynamics delayed by {1e3 * lag:.2f} ms "
                             "after the aligned start (the delay whose fit leaves the least current residual; no torque "
                             "was logged, so the torque constant is the current-to-torque gain relative to the robot "
                             "file's masses)")
            else:
                lag = float(lags.get(n, 0.0))
                pt = np.where(compared & (rel - lag >= 0), np.mod(rel - lag, period), np.nan)
                speed, accel = traj.motor_side_rates(j, act.gear_ratio)
                qd_l, qdd_l = periodic_at(tt, speed, pt, period), periodic_at(tt, accel, pt, period)
                ok = np.isfinite(tau) & np.isfinite(qd_l) & np.isfinite(qdd_l) & np.isfinite(i_m)
                drive[n] = identify.identify_drive(tau[ok], qd_l[ok], qdd_l[ok], i_m[ok], gear_ratio=act.gear_ratio,
                                                   rotor_inertia_kgm2=act.rotor_inertia_kgm2,
                                                   file_kt=act.torque_constant_nm_per_a, file_eta=act.gearbox_efficiency)
                notes.append(f"{n}: drive identified against the logged torque")
        except LegbridgeError as exc:
            notes.append(f"{n}: drive not identified: {exc}")
        tw = log.get(n, "winding_temp")
        if tw is None:
            continue
        th = act.thermal
        okt = np.isfinite(tw) & np.isfinite(i_m)
        th_h = log.get(n, "housing_temp")
        two = th.housing_resistance_k_per_w is not None and th_h is not None
        if two:
            okt &= np.isfinite(th_h)
        # the copper loss goes with E[i_measured^2] = i^2 + sigma^2: the current sensor's noise (sigma, taken as
        # the drive fit's residual) would read as heat; it is removed before the thermal fit
        sigma = drive[n].residual_rms_a if n in drive else 0.0
        i_heat = np.sign(i_m) * np.sqrt(np.maximum(i_m * i_m - sigma * sigma, 0.0))
        try:
            thermal[n] = identify.identify_thermal(
                t[okt], i_heat[okt], tw[okt], ambient_c=th.ambient_temp_c, winding_resistance_ohm=act.winding_resistance_ohm,
                alpha_per_k=th.resistance_temp_coefficient_per_k, ref_temp_c=th.resistance_reference_temp_c,
                file_r=th.winding_resistance_k_per_w, file_tau=th.winding_time_constant_s,
                housing_temp_c=th_h[okt] if two else None,
                file_housing_r=th.housing_resistance_k_per_w, file_housing_tau=th.housing_time_constant_s)
            fitted = np.full(t.shape, np.nan)
            fitted[okt] = thermal[n].fitted_winding_c  # on the log's samples (NaN where the fit had none)
            predicted[n]["identified_winding_c"] = fitted
        except LegbridgeError as exc:
            notes.append(f"{n}: thermal model not identified: {exc}")
    return AfterTest(review_path, review_sha256, plan_path, plan_sha256, robot, settings, reviewed.case, reviewed, log, al,
                     dict(lags), compared, plan_t, tuple(tracking), tuple(currents), tuple(temps), traces, segs, summary,
                     _margin(reviewed, traces, temps, robot), drive, thermal, predicted, tuple(notes))
