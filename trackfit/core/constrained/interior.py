"""The constrained problem as a quadratic program, solved by Clarabel's interior-point method.

Why Clarabel: an interior-point method has no step size or penalty parameter to tune and
reaches a tight tolerance in about a dozen iterations whatever the data, where first-order
methods (ADMM, proximal gradient) need tuning and thousands of iterations to approach 1e-9
feasibility; its solution is then close enough that one exact active-set polish makes every
limit hold to rounding. Clarabel runs single-threaded and deterministically, so the same input
gives the same bytes; it is a maintained package with pip wheels for the common platforms; and
when the limits cannot all hold it returns a certificate of infeasibility, from which trackfit
names the limits that conflict.

Absolute values enter through auxiliary variables, and only where the sign is not already known
from the bounds: ``t_j >= |b_j|`` for the L1 penalty (none under long-only, where ``|b| = b``)
and ``u_j >= |b_j - b_cur_j|`` for the turnover penalty and cap. Fixed columns are constants.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from trackfit.core.constrained.problem import Problem
from trackfit.errors import InfeasibleError, SolverError

if TYPE_CHECKING:
    import clarabel
    from scipy import sparse

_TOL = 1e-12
_MAX_ITER = 200

# Statuses whose point is worth polishing (the polish and its checks decide whether it is good).
_SOLVED = {
    "Solved",
    "AlmostSolved",
    "MaxIterations",
    "InsufficientProgress",
    "NumericalError",
    "MaxTime",
}
_INFEASIBLE = {"PrimalInfeasible", "AlmostPrimalInfeasible"}


@dataclass(frozen=True)
class InteriorPoint:
    """Clarabel's solution: standardized weights ``b`` of shape (m,), its status, and its
    multipliers of the linear rows, shape (n_rows,), and of the turnover cap (signs as in
    :mod:`trackfit.core.constrained.optimality`)."""

    b: np.ndarray
    status: str
    iterations: int
    mu: np.ndarray
    mu_cap: float


def _settings() -> clarabel.DefaultSettings:
    import clarabel

    s = clarabel.DefaultSettings()
    s.verbose = False
    s.max_threads = 1  # one thread: the same bytes on every run
    s.max_iter = _MAX_ITER
    s.tol_gap_abs = _TOL
    s.tol_gap_rel = _TOL
    s.tol_feas = _TOL
    s.tol_ktratio = 1e-10
    return s


def _csc(M: np.ndarray) -> sparse.csc_matrix:
    """Dense to CSC without scipy's general-purpose conversion (this runs thousands of times)."""
    from scipy import sparse

    cols, rows = np.nonzero(M.T)  # column-major order, rows increasing within a column
    indptr = np.zeros(M.shape[1] + 1, dtype=np.int64)
    np.cumsum(np.bincount(cols, minlength=M.shape[1]), out=indptr[1:])
    return sparse.csc_matrix((M[rows, cols], rows.astype(np.int64), indptr), shape=M.shape)


def solve_interior(prob: Problem) -> InteriorPoint:
    """Solve the QP over the columns that are not fixed.

    Raises
    ------
    SolverError
        When the limits cannot all hold (the message names those in Clarabel's certificate),
        or Clarabel returns no usable point.
    """
    import clarabel  # here, not at the top: commands that solve nothing never load it

    V = np.flatnonzero(~prob.fixed)
    nv = len(V)
    bF = prob.fixed_b()
    if nv == 0:
        no_rows = np.zeros(len(prob.rows))
        return InteriorPoint(b=bF, status="Fixed", iterations=0, mu=no_rows, mu_cap=0.0)
    Fx = np.flatnonzero(prob.fixed)
    lo, hi, cur, d = prob.lo[V], prob.hi[V], prob.cur[V], prob.d[V]

    # Sign of b_j (for the L1 term) and of b_j - b_cur_j (turnover) when the bounds decide it.
    s0 = np.where(lo >= 0, 1.0, np.where(hi <= 0, -1.0, 0.0)) if prob.l1 else np.zeros(nv)
    T = np.flatnonzero(s0 == 0) if prob.l1 else np.zeros(0, dtype=int)
    if prob.turnover:
        s1 = np.where(lo >= cur, 1.0, np.where(hi <= cur, -1.0, 0.0))
        U = np.flatnonzero(s1 == 0)
    else:
        s1, U = np.zeros(nv), np.zeros(0, dtype=int)
    nt, nu = len(T), len(U)
    t_at, u_at = nv, nv + nt
    n = nv + nt + nu

    q = np.zeros(n)
    q[:nv] = -prob.c[V] + prob.H[np.ix_(V, Fx)] @ bF[Fx] + prob.l1 * s0 + prob.tau * s1
    q[t_at:u_at] = prob.l1
    q[u_at:] = prob.tau
    P = np.zeros((n, n))
    P[:nv, :nv] = np.triu(prob.H[np.ix_(V, V)])

    eq_rows, eq_rhs, eq_labels = [], [], []
    lin_rows, lin_rhs, lin_labels = [], [], []
    # Where each linear row's multiplier is in Clarabel's z: (equality, upper side, lower side).
    where: list[tuple[int, int, int]] = []
    for row in prob.rows:
        a = np.zeros(n)
        a[:nv] = row.coef[V]
        fp = float(row.coef[Fx] @ bF[Fx])
        if row.lower == row.upper:
            where.append((len(eq_rows), -1, -1))
            eq_rows.append(a)
            eq_rhs.append(row.upper - fp)
            eq_labels.append(f"{row.what} of {row.upper:.6g}")
            continue
        at_up = at_lo = -1
        if np.isfinite(row.upper):
            at_up = len(lin_rows)
            lin_rows.append(a)
            lin_rhs.append(row.upper - fp)
            lin_labels.append(f"{row.what} maximum {row.upper:.6g}")
        if np.isfinite(row.lower):
            at_lo = len(lin_rows)
            lin_rows.append(-a)
            lin_rhs.append(fp - row.lower)
            lin_labels.append(f"{row.what} minimum {row.lower:.6g}")
        where.append((-1, at_up, at_lo))
    if prob.cap is not None:
        # sum_j d_j |b_j - b_cur_j| / 2 <= cap: u where the sign is open, linear where known.
        a = np.zeros(n)
        a[:nv] = 0.5 * d * s1
        a[u_at:] = 0.5 * d[U]
        lin_rows.append(a)
        lin_rhs.append(
            prob.cap
            - 0.5 * float(prob.d[Fx] @ np.abs(bF[Fx] - prob.cur[Fx]))
            + 0.5 * float(d @ (s1 * cur))
        )
        lin_labels.append(_cap_label(prob))

    up = np.flatnonzero(np.isfinite(hi))
    dn = np.flatnonzero(np.isfinite(lo))
    n_in = len(lin_rows) + len(up) + len(dn) + 2 * nt + 2 * nu
    A_in = np.zeros((n_in, n))
    rhs_in = np.zeros(n_in)
    k = len(lin_rows)
    if k:
        A_in[:k] = np.vstack(lin_rows)
        rhs_in[:k] = lin_rhs
    A_in[k + np.arange(len(up)), up] = 1.0
    rhs_in[k : k + len(up)] = hi[up]
    k += len(up)
    A_in[k + np.arange(len(dn)), dn] = -1.0
    rhs_in[k : k + len(dn)] = -lo[dn]
    k += len(dn)
    # t_j >= b_j, t_j >= -b_j; u_j >= b_j - b_cur_j, u_j >= b_cur_j - b_j.
    for aux, at, centre in ((T, t_at, np.zeros(nv)), (U, u_at, cur)):
        r = k + np.arange(len(aux))
        own = at + np.arange(len(aux))
        A_in[r, aux], A_in[r, own], rhs_in[r] = 1.0, -1.0, centre[aux]
        r = r + len(aux)
        A_in[r, aux], A_in[r, own], rhs_in[r] = -1.0, -1.0, -centre[aux]
        k += 2 * len(aux)

    def labels() -> list[str | None]:  # only needed for messages
        return (
            eq_labels
            + lin_labels
            + [_bound_label(prob, V[i], "maximum") for i in up]
            + [_bound_label(prob, V[i], "minimum") for i in dn]
            + [None] * (2 * nt)
            + [_cap_label(prob) if prob.cap is not None else None] * (2 * nu)
        )

    cones = []
    if eq_rows:
        cones.append(clarabel.ZeroConeT(len(eq_rows)))
    if n_in:
        cones.append(clarabel.NonnegativeConeT(n_in))
    A = np.vstack([np.array(eq_rows).reshape(-1, n), A_in])
    rhs = np.concatenate([np.asarray(eq_rhs, dtype=float), rhs_in])
    if not cones:  # nothing but the objective: one harmless row keeps Clarabel's input valid
        A, rhs = np.zeros((1, n)), np.zeros(1)
        cones = [clarabel.NonnegativeConeT(1)]
    solution = clarabel.DefaultSolver(_csc(P), q, _csc(A), rhs, cones, _settings()).solve()
    status = str(solution.status).split(".")[-1]
    if status in _INFEASIBLE:
        raise InfeasibleError(_infeasible_message(np.asarray(solution.z), labels(), prob))
    x = np.asarray(solution.x, dtype=float)
    if status not in _SOLVED or x.shape != (n,) or not np.all(np.isfinite(x)):
        raise SolverError(
            f"the interior-point solver stopped with status {status}; the limits in force: "
            f"{', '.join(sorted({lab for lab in labels() if lab}))}"
        )
    b = bF.copy()
    b[V] = x[:nv]
    z = np.asarray(solution.z, dtype=float)
    n_eq = len(eq_rows)
    mu = np.zeros(len(prob.rows))
    for r, (e, u, l) in enumerate(where):
        if e >= 0:
            mu[r] = z[e]
        else:
            mu[r] = (z[n_eq + u] if u >= 0 else 0.0) - (z[n_eq + l] if l >= 0 else 0.0)
    mu_cap = float(z[n_eq + len(lin_rows) - 1]) if prob.cap is not None else 0.0
    return InteriorPoint(
        b=b, status=status, iterations=int(solution.iterations), mu=mu, mu_cap=mu_cap
    )


def _cap_label(prob: Problem) -> str:
    label = f"max_turnover {prob.cap + prob.forced:.6g}"
    if prob.forced:
        label += f" ({prob.forced:.6g} of it used by selling holdings that cannot be held)"
    return label


def _bound_label(prob: Problem, i: int, side: str) -> str:
    j = int(prob.cols[i])
    value = prob.hi_w[i] if side == "maximum" else prob.lo_w[i]
    if side == "minimum" and value == 0.0:
        return f"long-only or minimum weight 0 of constituent {j}"
    return f"{side} weight {value:.6g} of constituent {j}"


def _infeasible_message(z: np.ndarray, labels: list[str | None], prob: Problem) -> str:
    """Name the limits whose rows carry weight in the certificate of infeasibility."""
    involved: list[str] = []
    if len(labels) < z.size:  # the placeholder row of a problem with no rows
        labels = labels + [None] * (z.size - len(labels))
    if z.size == len(labels) and np.all(np.isfinite(z)) and np.max(np.abs(z), initial=0.0) > 0:
        big = np.abs(z) > 1e-6 * np.max(np.abs(z))
        for lab, on in zip(labels, big):
            if on and lab and lab not in involved:
                involved.append(lab)
    if not involved:
        involved = sorted({lab for lab in labels if lab})
    if prob.fixed.any():
        involved.append(f"{int(prob.fixed.sum())} weight(s) fixed by equal bounds or no turnover")
    return (
        "no weights satisfy these limits together: "
        + "; ".join(involved)
        + "; loosen at least one of them"
    )
