"""A QP as an inspectable object, and its solve as a second step.

    minimise  0.5 x^T P x + c^T x   subject to   lower <= A x <= upper

P diagonal (stored as its diagonal ``p_diag``), A sparse (scipy CSR). Infinite entries of lower/upper
mean 'no bound'. ``solve`` builds the cvxpy problem once for the whole batch, solves it with Clarabel
or OSQP and computes the KKT residuals from the matrices (solver-independent). When P is positive
definite and the unconstrained minimum -c / p meets every constraint, that point is the solution
(KKT with zero multipliers; e.g. the nearest feasible motion of a plan that is already feasible is
the plan itself) and no solver is called; QPSolution.solver then says so. Residuals:

    primal_inf        max over rows of the bound violation of A x
    stationarity_inf  || P x + c + A^T y ||_inf   with y = y_upper - y_lower (cvxpy duals, >= 0)
    complementarity_inf  max |y_upper (A x - upper)|, |y_lower (A x - lower)|
"""

from __future__ import annotations

import time
import warnings
from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp

from legbridge.limits.checks.results import QPSolution

OK_STATUSES = ("optimal",)
NEAR_STATUSES = ("optimal_inaccurate",)
"""Statuses whose answer is taken only when our own KKT test passes (the solver met its reduced
tolerances; REL_TOL is what we require, whatever the solver says)."""
REL_TOL = 1e-4
"""A solution is accepted only when its status is optimal AND its KKT residuals, relative to the
problem's own scale, are below this: primal |viol| / (1 + max(|A x|, |bounds|)) and stationarity
|P x + c + A^T y| / (1 + max(|P x|, |c|, |A^T y|)) (a solver's status alone is not enough)."""


@dataclass(frozen=True, eq=False)
class QPProblem:
    """name; p_diag (n,), c (n,), A (m, n) sparse, lower/upper (m,); row_labels (m,) say what each
    constraint row is (for reading the problem); meta: anything the builder wants to pass on."""

    name: str
    p_diag: np.ndarray
    c: np.ndarray
    A: sp.csr_matrix
    lower: np.ndarray
    upper: np.ndarray
    row_labels: tuple[str, ...] = ()
    meta: dict | None = None

    @property
    def shape(self) -> tuple[int, int]:
        """(constraint rows, variables)."""
        return self.A.shape

    @property
    def n_variables(self) -> int:
        return int(self.p_diag.shape[0])

    def objective(self, x) -> float:
        x = np.asarray(x, dtype=float)
        return float(0.5 * np.sum(self.p_diag * x * x) + self.c @ x)


@dataclass(frozen=True, eq=False)
class _Compiled:
    """A cvxpy problem with the data that changes from case to case as parameters.

    The objective is written 0.5 sum (sqrt(p_i) x_i + d_i)^2 + c_lin . x_lin with d = c / sqrt(p) over
    the variables with p > 0 (equal to 0.5 x^T P x + c^T x up to a constant) and a constant c_lin over
    the others (slacks): the case-dependent parameter d then sits inside the squared term, an offset
    that cvxpy canonicalises into the constant of one sparse equality row per variable. Written as a
    parameter times x (c @ x), cvxpy's coefficient extraction builds a DENSE (parameters x variables)
    array: 3.2 GB for 20,000 variables instead of 0.17 GB (memory quadratic in the plan length).
    """

    problem: object
    x: object
    d: object
    pos: np.ndarray
    upper: object
    lower: object
    constraints: list


_CACHE: dict = {}
_CACHE_SIZE = 4
_REUSE = {"on": False}


def reuse_compiled_problems(on: bool = True) -> None:
    """Let equal-structure QPs share one compiled, parameterised cvxpy problem in this process.

    Compiling the parameterised form costs several plain solves (about 0.8 s against 0.17 s for a
    2 s case at 1 kHz), and each later solve then skips canonicalisation (about 0.07 s instead of
    0.17 s): worth it in a sweep worker that solves dozens of same-length cases, not in one check.
    The results are the same either way (tests/limits/test_qp_shortcuts.py).
    """
    _REUSE["on"] = bool(on)
    if not on:
        _CACHE.clear()


def _structure_key(A: sp.csr_matrix, p_diag, up_rows, lo_rows, c_lin) -> str:
    import hashlib

    h = hashlib.sha256()
    for arr in (np.asarray(A.shape), A.indptr, A.indices, A.data, np.asarray(p_diag, dtype=float), up_rows, lo_rows,
                np.asarray(c_lin, dtype=float)):
        h.update(np.ascontiguousarray(arr).tobytes())
    return h.hexdigest()


def _compiled(A: sp.csr_matrix, p_diag, up_rows, lo_rows, c) -> _Compiled:
    """The parameterised cvxpy problem for this constraint matrix and quadratic term.

    Problems whose matrices are equal (every case of the same length and joint count gives the same
    nearest-motion matrix, only its bounds and target change) share one compiled problem: cvxpy
    then re-solves with new parameter values instead of canonicalising again (its DPP path). The
    memo holds a few structures per process; results do not depend on it.
    """
    import cvxpy as cp

    p_diag = np.asarray(p_diag, dtype=float)
    pos = p_diag > 0.0
    lin = np.flatnonzero(~pos)
    c_lin = np.asarray(c, dtype=float)[lin]
    key = _structure_key(A, p_diag, up_rows, lo_rows, c_lin) if _REUSE["on"] else None
    hit = _CACHE.get(key) if key is not None else None
    if hit is not None:
        return hit
    n = A.shape[1]
    x = cp.Variable(n)
    upper = cp.Parameter(up_rows.size) if up_rows.size else None
    lower = cp.Parameter(lo_rows.size) if lo_rows.size else None
    d = cp.Parameter(n) if pos.any() else None  # d_i = c_i / sqrt(p_i) where p_i > 0, else 0
    obj = 0
    if d is not None:  # whole-vector forms: indexing x (x[idx]) brings the dense extraction back
        obj = 0.5 * cp.sum_squares(cp.multiply(np.sqrt(np.where(pos, p_diag, 0.0)), x) + d)
    extra = []
    if lin.size and np.any(c_lin != 0.0):  # the slacks' linear cost through one scalar: c_lin . x in the
        total = cp.Variable()             # objective itself, beside the constraints, sends cvxpy's
        obj = obj + total                 # extraction dense again (62 GB at 32,000 variables)
        extra.append(total == np.where(pos, 0.0, np.asarray(c, dtype=float)) @ x)
    cons = []
    if upper is not None:
        cons.append(A[up_rows] @ x <= upper)
    if lower is not None:
        cons.append(A[lo_rows] @ x >= lower)
    compiled = _Compiled(cp.Problem(cp.Minimize(obj), cons + extra), x, d, pos, upper, lower, cons)
    if key is None:
        return compiled
    if len(_CACHE) >= _CACHE_SIZE:
        _CACHE.pop(next(iter(_CACHE)))
    _CACHE[key] = compiled
    return compiled


def _separable_minimum(problem: QPProblem, A: sp.csr_matrix):
    """(x, QPSolution) when the objective's separable minimum meets every constraint, else None.

    The minimum over each variable alone: -c / p where p > 0; 0 for a variable without a quadratic
    term whose cost c >= 0 and which a row bounds below at 0 (a slack). When that point is feasible
    it minimises the objective over a superset of the feasible set, so it is the solution (KKT with
    zero multipliers on every row but the slacks' own): no solver needed.
    """
    t0 = time.perf_counter()
    p, c = problem.p_diag, problem.c
    lin = p <= 0.0
    if np.any(lin):
        if np.any(c[lin] < 0.0):
            return None
        single = np.diff(A.indptr) == 1  # rows with one entry
        rows = np.flatnonzero(single & (problem.lower == 0.0))
        bounded = np.zeros(p.shape[0], dtype=bool)
        cols = A.indices[A.indptr[rows]]
        bounded[cols[A.data[A.indptr[rows]] > 0]] = True
        if not np.all(bounded[lin]):
            return None
    x0 = np.where(lin, 0.0, -c / np.where(lin, 1.0, p))
    ax = A @ x0
    if not (np.all(ax <= problem.upper) and np.all(ax >= problem.lower)):
        return None
    res = {"primal_inf": 0.0, "stationarity_inf": float(np.max(np.abs(np.where(lin, 0.0, p * x0 + c)), initial=0.0)),
           "complementarity_inf": 0.0, "objective": problem.objective(x0), "solver_time_s": 0.0,
           "primal_rel": 0.0, "stationarity_rel": 0.0}
    return x0, QPSolution(problem.name, "optimal", True, time.perf_counter() - t0,
                          "none (the separable minimum is feasible)", {}, res)


def _kkt(problem: QPProblem, A: sp.csr_matrix, x: np.ndarray, y: np.ndarray, y_up, y_lo) -> dict:
    """KKT residuals of (x, y) for the whole problem (module docstring), absolute and relative;
    y = y_upper - y_lower per row, y_up / y_lo the two parts (>= 0)."""
    ax = A @ x
    viol = np.maximum(np.maximum(ax - problem.upper, problem.lower - ax), 0.0)
    with np.errstate(invalid="ignore"):
        comp_u = np.where(np.isfinite(problem.upper), y_up * (ax - problem.upper), 0.0)
        comp_l = np.where(np.isfinite(problem.lower), y_lo * (ax - problem.lower), 0.0)
    px, aty = problem.p_diag * x, A.T @ y
    grad = px + problem.c + aty
    res = {"primal_inf": float(np.max(viol)) if viol.size else 0.0,
           "stationarity_inf": float(np.max(np.abs(grad), initial=0.0)),
           "complementarity_inf": float(max(np.max(np.abs(comp_u), initial=0.0), np.max(np.abs(comp_l), initial=0.0))),
           "objective": problem.objective(x)}
    bounds = np.concatenate([problem.upper[np.isfinite(problem.upper)], problem.lower[np.isfinite(problem.lower)]])
    scale_p = 1.0 + max(float(np.max(np.abs(ax), initial=0.0)), float(np.max(np.abs(bounds), initial=0.0)))
    scale_d = 1.0 + max(float(np.max(np.abs(px), initial=0.0)), float(np.max(np.abs(problem.c), initial=0.0)),
                        float(np.max(np.abs(aty), initial=0.0)))
    res["primal_rel"] = res["primal_inf"] / scale_p
    res["stationarity_rel"] = res["stationarity_inf"] / scale_d
    return res


def _kkt_ok(res: dict) -> bool:
    return res["primal_rel"] <= REL_TOL and res["stationarity_rel"] <= REL_TOL


def _solve_full(problem: QPProblem, A: sp.csr_matrix, solver: str):
    """One cvxpy call on the whole problem: (x, y_up, y_lo, status, elapsed, solver_time); x None
    when the solver gives no solution."""
    import cvxpy as cp

    up_rows = np.flatnonzero(np.isfinite(problem.upper))
    lo_rows = np.flatnonzero(np.isfinite(problem.lower))
    compiled = _compiled(A, problem.p_diag, up_rows, lo_rows, problem.c)
    prob, x, cons = compiled.problem, compiled.x, compiled.constraints
    if compiled.d is not None:
        pos = compiled.pos
        compiled.d.value = np.where(pos, problem.c / np.sqrt(np.where(pos, problem.p_diag, 1.0)), 0.0)
    if compiled.upper is not None:
        compiled.upper.value = problem.upper[up_rows]
    if compiled.lower is not None:
        compiled.lower.value = problem.lower[lo_rows]
    t0 = time.perf_counter()
    # OSQP (first order) is run to tight tolerances so that its answer can pass REL_TOL; Clarabel's own
    # defaults (1e-8) already do
    opts = {"eps_abs": 1e-9, "eps_rel": 1e-9, "polishing": True, "max_iter": 200000} if solver.upper() == "OSQP" else {}
    try:
        with warnings.catch_warnings():  # an inaccurate solution is judged below (status and KKT), not warned of
            warnings.simplefilter("ignore", UserWarning)
            prob.solve(solver=solver.upper(), **opts)
        status = str(prob.status)
    except cp.error.SolverError as exc:
        status = f"solver error: {exc}"
    elapsed = time.perf_counter() - t0
    solver_time = float(getattr(prob.solver_stats, "solve_time", None) or np.nan) if prob.solver_stats else np.nan
    m = A.shape[0]
    y_up, y_lo = np.zeros(m), np.zeros(m)
    if x.value is None:
        return None, y_up, y_lo, status, elapsed, solver_time
    i = 0
    if up_rows.size:
        y_up[up_rows] = np.asarray(cons[i].dual_value, dtype=float).ravel()
        i += 1
    if lo_rows.size:
        y_lo[lo_rows] = np.asarray(cons[i].dual_value, dtype=float).ravel()
    return np.asarray(x.value, dtype=float), y_up, y_lo, status, elapsed, solver_time


WINDOW_HOPS = (16, 64, 256)
"""Window margins tried, in steps of the constraint graph (a row links its variables; a difference
row spans a few samples), before the whole problem is solved at once."""
WINDOW_MAX_SHARE = 0.3
"""A window larger than this share of the variables is not worth it: the whole problem is solved."""


def _windowed(problem: QPProblem, A: sp.csr_matrix, solver: str):
    """Solve only where the plan needs it, exactly: (x, QPSolution) or None.

    x0, the separable minimum (the plan itself for a QP written around it), meets every row but a few.
    The variables within ``hops`` steps of the constraint graph from those rows are solved for, every
    other variable held at x0 (rows that reach outside take x0's share into their bounds). The
    result, with the window's multipliers and zero elsewhere, is then checked against the KKT
    conditions of the WHOLE problem (primal feasibility and stationarity, relative REL_TOL): for a
    convex QP these are sufficient, so a window that passes gives the whole problem's solution;
    one that does not (a correction that would reach past the window) is widened, and after the
    last margin the whole problem is solved at once. Cost: proportional to the samples near the
    plan's violations, not to the plan's length.
    """
    p, c = problem.p_diag, problem.c
    lin = p <= 0.0
    x0 = np.where(lin, 0.0, -c / np.where(lin, 1.0, p))
    ax0 = A @ x0
    bad_rows = (ax0 > problem.upper) | (ax0 < problem.lower)
    if not bad_rows.any():
        return None
    pattern = A.copy()
    pattern.data = np.ones_like(pattern.data)
    pattern_t = pattern.T.tocsr()
    cols = (pattern_t @ bad_rows.astype(float)) > 0
    hops_done = 0
    n = p.shape[0]
    t0 = time.perf_counter()
    for hops in WINDOW_HOPS:
        for _ in range(hops - hops_done):
            rows = (pattern @ cols.astype(float)) > 0
            cols = (pattern_t @ rows.astype(float)) > 0
        hops_done = hops
        if cols.sum() > WINDOW_MAX_SHARE * n:
            return None
        rows = (pattern @ cols.astype(float)) > 0
        w_cols, w_rows = np.flatnonzero(cols), np.flatnonzero(rows)
        a_sub = A[w_rows][:, w_cols].tocsr()
        outside = A[w_rows][:, np.flatnonzero(~cols)] @ x0[~cols]
        sub = QPProblem(problem.name, p[w_cols], c[w_cols], a_sub, problem.lower[w_rows] - outside,
                        problem.upper[w_rows] - outside)
        xs, yu, yl, status, _, solver_time = _solve_full(sub, a_sub, solver)
        if xs is None or status not in OK_STATUSES + NEAR_STATUSES:
            return None  # an inaccurate window still faces the whole problem's KKT test below
        x = x0.copy()
        x[w_cols] = xs
        y_up, y_lo = np.zeros(A.shape[0]), np.zeros(A.shape[0])
        y_up[w_rows], y_lo[w_rows] = yu, yl
        res = _kkt(problem, A, x, y_up - y_lo, y_up, y_lo)
        if _kkt_ok(res):
            res["solver_time_s"] = solver_time
            res["window_variables"] = int(w_cols.size)
            res["window_hops"] = int(hops)
            if status in NEAR_STATUSES:
                status = f"optimal: the solver said {status} on the window, and the whole problem's KKT residuals are within {REL_TOL:g}"
            return x, QPSolution(problem.name, status, True, time.perf_counter() - t0,
                                 f"{solver.upper()} (on {w_cols.size} of {n} variables near the plan's "
                                 "violations; optimal for the whole problem by its KKT conditions)", {}, res)
    return None


def solve(problem: QPProblem, solver: str = "CLARABEL") -> tuple[np.ndarray, QPSolution]:
    """Solve ``problem``. Returns (x (n,), QPSolution without values); x is NaN when the solver gives
    no solution. A non-optimal status is reported in QPSolution.ok = False.

    In order: the separable minimum when it is feasible (no solver); a solve on windows around the
    rows that minimum violates, accepted only when it meets the whole problem's KKT conditions
    (:func:`_windowed`); the whole problem in one cvxpy call."""
    n = problem.n_variables
    if n == 0:
        return np.zeros(0), QPSolution(problem.name, "optimal", True, 0.0, solver, {}, {
            "primal_inf": 0.0, "stationarity_inf": 0.0, "complementarity_inf": 0.0, "objective": 0.0})
    A = sp.csr_matrix(problem.A)
    shortcut = _separable_minimum(problem, A)
    if shortcut is not None:
        return shortcut
    windowed = _windowed(problem, A, solver)
    if windowed is not None:
        return windowed
    xv, y_up, y_lo, status, elapsed, solver_time = _solve_full(problem, A, solver)
    ok = status in OK_STATUSES + NEAR_STATUSES
    if xv is None:
        return np.full(n, np.nan), QPSolution(problem.name, status, False, elapsed, solver.upper(), {},
                                              {"solver_time_s": solver_time})
    res = _kkt(problem, A, xv, y_up - y_lo, y_up, y_lo)
    res["solver_time_s"] = solver_time
    if ok and not _kkt_ok(res):
        ok = False
        status = (f"{status} by the solver's status, but KKT residuals too large (primal {res['primal_rel']:.1e}, "
                  f"stationarity {res['stationarity_rel']:.1e} relative; accepted <= {REL_TOL:g})")
    elif ok and status in NEAR_STATUSES:
        status = (f"optimal: the solver said {status}, and the KKT residuals (primal {res['primal_rel']:.1e}, "
                  f"stationarity {res['stationarity_rel']:.1e} relative) are within {REL_TOL:g}")
    return xv, QPSolution(problem.name, status, ok, elapsed, solver.upper(), {}, res)
