"""Running a sweep: the work unit (one offset: simulate, translate, check), a local process pool and
Dask distributed.

    run_offset(task) -> OffsetResult
    run_tasks(tasks, jobs=None, scheduler=None, progress=None) -> tuple[OffsetResult, ...]   (task order)
    run_sweep(plans, robots, offsets=None, ...) -> tuple[SweepResult, ...]   (plans x robots)

Workers receive :class:`legbridge.limits.sweep.model.OffsetTask` (plain data and the Robot itself,
which may be built in code); each worker process builds the Pinocchio LegModel once per robot
(cached per process). On Dask, tasks carry the robot file's path and SHA-256 instead: every worker
loads the file (it must see it at the same path, on a shared file system, with legbridge installed)
and refuses it when the hash differs from the one the sweep started with. Each offset is simulated,
translated (legbridge.mapping.pipeline.prepare) and checked exactly as ``legbridge check`` does;
results are deterministic per offset, so they do not depend on the number of workers or where they ran.
"""

from __future__ import annotations
from legbridge.robots.errors import Described

import multiprocessing
import os
import time
import uuid
from concurrent.futures import FIRST_COMPLETED, ProcessPoolExecutor, wait
from dataclasses import replace
from functools import lru_cache
from pathlib import Path
from typing import Callable

from legbridge.limits.checks.case import check_case
from legbridge.limits.checks.results import CheckSettings
from legbridge.limits.verdict import Verdict
from legbridge.limits.sweep.model import (
    QP_MODES,
    QPS_ALL,
    OffsetResult,
    OffsetTask,
    SweepInputError,
    SweepResult,
    assemble,
    default_offsets,
    setup_from_plan,
)
from legbridge.mapping.plan import Plan
from legbridge.mapping.slip import case_name, simulate
from legbridge.robots.errors import LegbridgeError, SchedulerError, UsageError
from legbridge.robots.leg_model import cached_leg_model

Progress = Callable[[int, int], None]



@lru_cache(maxsize=16)
def _robot_from_file(path: str, sha256: str):
    """The Robot of a file, once per process (Dask workers); refuses a file whose hash changed."""
    from legbridge.robots import load_robot

    robot = load_robot(path)
    if robot.sha256 != sha256:
        raise SweepInputError("the robot file differs from the one the sweep started with", path=path,
                              expected=f"SHA-256 {sha256[:12]}...", found=Described(f"{robot.sha256[:12]}..."),
                              hint="on a cluster every worker must see the same file at the same path")
    return robot


def _apex_fields(sim) -> dict:
    a = sim.apex_states
    return {"apex_time_s": tuple(s.time_s for s in a), "apex_z_m": tuple(s.z_m for s in a),
            "apex_vx_m_s": tuple(s.vx_m_s for s in a)}


def simulated_result(sim, offset_m: float, name: str, *, keep_trajectory: bool = False) -> OffsetResult:
    """An unchecked OffsetResult from a SimulationResult (the reduced model only)."""
    o = sim.outcome
    return OffsetResult(offset_m=float(offset_m), case=name, status=o.status, fall_reason=o.reason,
                        end_time_s=float(o.time_s), trajectory=sim.trajectory if keep_trajectory else None,
                        **_apex_fields(sim))


def _checked_fields(review, qps_run: bool) -> dict:
    s = review.summary
    w = s.worst
    return {
        "verdict": s.verdict,
        "worst": tuple(sorted((k, float(v)) for k, v in s.per_limit.items())),
        "worst_limit": w.limit if w else "", "worst_joint": w.joint if w else "",
        "worst_utilisation": float(w.utilisation) if w else float("nan"),
        "n_exceeds": s.n_exceeds, "n_near": s.n_near,
        "findings": tuple(review.findings), "qps_run": qps_run,
    }


def trip_of(traj) -> dict:
    """A biped's trip, as OffsetResult fields: the first generated-swing sample whose foot is more than
    limits.checks.swing_clearance.GROUND_TOL_M below the case's ground (the swing foot reaching the
    ground before its touchdown): {'status': 'tripped', 'fall_reason': ...}; {} for none (or one leg)."""
    import numpy as np

    from legbridge.limits.checks.swing_clearance import GROUND_TOL_M

    legs = getattr(traj, "legs", ())
    if not legs or traj.foot_height_m is None or traj.leg_generated is None:
        return {}
    low = np.asarray(traj.leg_generated, dtype=bool) & (np.asarray(traj.foot_height_m, dtype=float) < -GROUND_TOL_M)
    if not low.any():
        return {}
    i, k = np.argwhere(low)[0]
    return {"status": "tripped", "fall_reason": f"{legs[k]} swing foot {1e3 * -float(traj.foot_height_m[i, k]):.3g} mm "
                                                f"below the ground at t = {float(traj.time_s[i]):.3f} s, before its touchdown"}


def run_offset(task: OffsetTask) -> OffsetResult:
    """The work unit: simulate one offset; if it completes, translate and check it like `legbridge check`;
    on a biped, a swing foot reaching the ground before its touchdown is a reduced-model outcome of its
    own, 'tripped' (trip_of), beside a fall, and the offset is still checked.

    A translation that fails on a completed case is a finding (verdict 'not_evaluated'), never a pass.
    """
    from legbridge.mapping.pipeline import prepare

    if task.reuse_compiled_qps:
        from legbridge.limits.qp.problem import reuse_compiled_problems

        reuse_compiled_problems(True)
    s = task.setup
    t0 = time.perf_counter()
    sim = simulate(s.params, s.policy, s.apex, task.offset_m, s.duration_s, s.rate_hz, name=task.name,
                   flight_swing=s.flight_swing)
    t1 = time.perf_counter()
    base = simulated_result(sim, task.offset_m, task.name, keep_trajectory=task.keep_trajectory)
    if not sim.outcome.completed:
        return replace(base, timing_s=(t1 - t0, 0.0, 0.0))
    robot = task.robot if task.robot is not None else _robot_from_file(task.robot_path, task.robot_sha256)
    try:
        one = Plan(path=f"<sweep offset {task.offset_m:+.4f} m>", sha256="", cases=(sim.trajectory,), metadata={})
        (traj,) = prepare(one, robot, rate_hz=task.settings.rate_hz, leg_model=cached_leg_model(robot),
                           gait=task.settings.gait or s.gait).trajectories
    except LegbridgeError as exc:
        t2 = time.perf_counter()
        return replace(base, verdict=Verdict.NOT_EVALUATED, findings=(f"translation failed: {exc}",),
                       timing_s=(t1 - t0, t2 - t1, 0.0))
    t2 = time.perf_counter()
    base = replace(base, **trip_of(traj))
    settings = task.settings
    if task.qps != QPS_ALL and settings.run_qps:
        review = check_case(traj, robot, replace(settings, run_qps=False))
        if review.verdict == Verdict.EXCEEDS:  # the QPs can only add findings: the verdict stands
            t3 = time.perf_counter()
            return replace(base, timing_s=(t1 - t0, t2 - t1, t3 - t2), **_checked_fields(review, False))
    review = check_case(traj, robot, settings)
    t3 = time.perf_counter()
    return replace(base, timing_s=(t1 - t0, t2 - t1, t3 - t2), **_checked_fields(review, settings.run_qps))


_BLAS_SETTERS = ("scipy_openblas_set_num_threads64_", "scipy_openblas_set_num_threads", "openblas_set_num_threads64_",
                 "openblas_set_num_threads", "MKL_Set_Num_Threads")


def single_threaded_blas() -> int:
    """Worker initializer: one BLAS thread per worker process (as Dask's nanny does through
    OPENBLAS_NUM_THREADS=1). The work unit's small dense algebra gains nothing from BLAS threads,
    which only compete with the other workers for the cores. Linux only (reads /proc/self/maps);
    returns the number of BLAS libraries set, 0 where none could be found."""
    import ctypes

    try:
        with open("/proc/self/maps", encoding="utf-8", errors="replace") as fh:
            libs = sorted({line.split()[-1] for line in fh if ("openblas" in line.lower() or "mkl_rt" in line.lower())
                           and line.split()[-1].startswith("/")})
    except OSError:
        return 0
    n = 0
    for path in libs:
        try:
            lib = ctypes.CDLL(path)
        except OSError:
            continue
        for name in _BLAS_SETTERS:
            fn = getattr(lib, name, None)
            if fn is not None:
                fn(ctypes.c_int(1))
                n += 1
                break
    return n


def _pool_context():
    methods = multiprocessing.get_all_start_methods()
    return multiprocessing.get_context("fork" if "fork" in methods else "spawn")


def _run_local(tasks, jobs: int, progress: Progress | None):
    total = len(tasks)
    if jobs <= 1 or total <= 1:
        out = []
        for k, t in enumerate(tasks):
            out.append(run_offset(t))
            if progress:
                progress(k + 1, total)
        return out
    results = [None] * total
    pool = ProcessPoolExecutor(max_workers=min(jobs, total), mp_context=_pool_context(), initializer=_worker_start)
    try:
        futs = {pool.submit(run_offset, t): k for k, t in enumerate(tasks)}
        pending, done_n = set(futs), 0
        while pending:
            done, pending = wait(pending, return_when=FIRST_COMPLETED)
            for f in done:
                exc = f.exception()
                if exc is not None:
                    raise exc
                results[futs[f]] = f.result()
                done_n += 1
                if progress:
                    progress(done_n, total)
    except BaseException:
        _stop(pool)  # an error or an interrupt (SIGINT, SIGTERM): no worker outlives the sweep
        raise
    pool.shutdown(wait=True)
    return results


def _worker_start() -> None:
    """Worker initializer: interrupts are the parent's to handle (it stops the workers), one BLAS thread."""
    import signal

    signal.signal(signal.SIGINT, signal.SIG_IGN)
    signal.signal(signal.SIGTERM, signal.SIG_DFL)  # a fork inherits the command's handler; the parent ends us
    single_threaded_blas()


def _stop(pool: ProcessPoolExecutor) -> None:
    """Cancel what has not started and end the worker processes now (the work in them is abandoned)."""
    procs = list((getattr(pool, "_processes", None) or {}).values())
    pool.shutdown(wait=False, cancel_futures=True)
    for p in procs:
        if p.is_alive():
            p.terminate()
    for p in procs:
        p.join(timeout=5)


def _run_dask(tasks, scheduler, progress: Progress | None):
    try:
        from dask.distributed import Client, as_completed
    except ImportError as exc:
        raise SchedulerError("Dask distributed is not installed", key="--scheduler",
                             hint="install the 'cluster' extra: pip install 'legbridge[cluster]'") from exc
    own = not isinstance(scheduler, Client)
    try:
        client = Client(scheduler, timeout=10, set_as_default=False) if own else scheduler
    except (OSError, TimeoutError, ValueError) as exc:
        raise SchedulerError("cannot reach the Dask scheduler", key="--scheduler", expected="a running scheduler address",
                             found=str(scheduler), hint=f"({exc})") from exc
    try:
        run = uuid.uuid4().hex[:12]
        with client.as_current():
            futs = client.map(run_offset, list(tasks), key=[f"legbridge-sweep-{run}-{t.index}" for t in tasks], pure=False)
            for k, _ in enumerate(as_completed(futs), start=1):
                if progress:
                    progress(k, len(futs))
            return client.gather(futs)
    finally:
        if own:
            client.close()


# A compiled, parameterised QP costs about five plain solves and saves about 0.1 s on every later
# same-length case (limits.qp.problem.reuse_compiled_problems): reuse it from this many tasks a worker.
REUSE_FROM_TASKS_PER_WORKER = 12


def run_tasks(tasks, *, jobs: int | None = None, scheduler=None, progress: Progress | None = None) -> tuple[OffsetResult, ...]:
    """Run work units, results in task order. jobs: local worker processes (default os.cpu_count(),
    1 = in this process); scheduler: a Dask scheduler address or a dask.distributed.Client (then jobs
    is ignored); progress(done, total) after every finished unit."""
    tasks = list(tasks)
    jobs = check_jobs(jobs)
    if not tasks:
        return ()
    workers = 2 if scheduler is not None else max(1, min(jobs or os.cpu_count() or 1, len(tasks)))
    if len(tasks) >= REUSE_FROM_TASKS_PER_WORKER * workers:
        tasks = [replace(t, reuse_compiled_qps=True) for t in tasks]
    if scheduler is not None:  # workers load the robot from its file (checked against its SHA-256)
        tasks = [replace(t, robot=None) for t in tasks]
        return tuple(_run_dask(tasks, scheduler, progress))
    return tuple(_run_local(tasks, jobs or os.cpu_count() or 1, progress))


def check_jobs(jobs) -> int | None:
    """The number of worker processes: None (all cores) or a whole number >= 1 (UsageError otherwise)."""
    if jobs is not None and (isinstance(jobs, bool) or not isinstance(jobs, int) or jobs < 1):
        raise UsageError("bad number of worker processes", key="jobs", expected="a whole number >= 1", found=jobs)
    return jobs


def run_sweep(plans, robots, offsets=None, *, settings: CheckSettings | None = None, jobs: int | None = None,
              scheduler=None, progress: Progress | None = None, qps: str = QPS_ALL,
              keep_trajectories: bool = False) -> tuple[SweepResult, ...]:
    """Sweep every plan on every robot (the cross product, plans outer), one SweepResult per pair.

    plans: plan file paths or Plan objects; robots: Robot objects (e.g. built in code), robot file
    paths or bundled robot names (a Dask scheduler needs robots read from files)
    offsets: ground heights [m]; None = per pair default_offsets(l0), l0 from the plan's model (else the robot)
    settings: check settings (default CheckSettings()); qps: 'all' (as `check`) or 'verdict'
    All inputs are read and validated before any work unit runs (bad input raises, nothing is run).
    """
    from legbridge.mapping.pipeline import read_against
    from legbridge.robots.library import as_robot

    settings = settings or CheckSettings()
    jobs = check_jobs(jobs)
    if qps not in QP_MODES:
        raise SweepInputError(key="--qps", expected=f"one of {list(QP_MODES)}", found=qps)
    plans, robots = list(plans), list(robots)
    if not plans or not robots:
        raise SweepInputError(key="plans/robots", expected="at least one plan and one robot", found=Described(f"{len(plans)}/{len(robots)}"))
    if offsets is not None:
        offsets = tuple(sorted(float(h) for h in offsets))
        if not offsets:
            raise SweepInputError(key="offsets", expected="at least one ground height", found=Described("none"))
        if len(set(offsets)) != len(offsets):
            raise SweepInputError(key="offsets", expected="distinct ground heights", found=list(offsets))
    loaded = [as_robot(r) for r in robots]
    if scheduler is not None:
        for robot in loaded:
            if not (robot.source and Path(robot.source).is_file()):
                raise SweepInputError(f"robot '{robot.name}' was not read from a file", key="--scheduler",
                                      expected="robots read from description files (Dask workers load them by path)",
                                      found=Described("a robot built in code"))
    pairs, tasks = [], []
    for p in plans:
        for robot in loaded:
            rpath = str(Path(robot.source).resolve()) if robot.source else ""
            plan = read_against(p, robot)
            setup = setup_from_plan(plan)
            l0 = setup.params.nominal_leg_length_m or robot.nominal_leg_length_m
            hs = offsets if offsets is not None else default_offsets(l0)
            k = len(pairs)
            info = {"plan_path": str(plan.path), "plan_sha256": plan.sha256, "robot_name": robot.name,
                    "robot_path": rpath, "robot_sha256": robot.sha256, "nominal_leg_length_m": float(l0)}
            pairs.append((info, setup))
            for h in hs:
                tasks.append(OffsetTask(index=len(tasks), pair=k, offset_m=h, name=case_name(h), setup=setup,
                                        robot=robot, robot_path=rpath, robot_sha256=robot.sha256, settings=settings,
                                        qps=qps, keep_trajectory=keep_trajectories))
    results = run_tasks(tasks, jobs=jobs, scheduler=scheduler, progress=progress)
    out = []
    for k, (info, setup) in enumerate(pairs):
        mine = [r for t, r in zip(tasks, results) if t.pair == k]
        nominal = next((r for r in mine if r.offset_m == 0.0), None)
        if nominal is None:  # the reference is simulated anyway (reduced model only)
            s = setup
            nominal = simulated_result(simulate(s.params, s.policy, s.apex, 0.0, s.duration_s, s.rate_hz,
                                                name=case_name(0.0), flight_swing=s.flight_swing),
                                       0.0, case_name(0.0))
        out.append(assemble(info, settings, setup, mine, nominal, qps))
    return tuple(out)


__all__ = ["Progress", "check_jobs", "run_offset", "run_sweep", "run_tasks", "simulated_result", "single_threaded_blas"]
