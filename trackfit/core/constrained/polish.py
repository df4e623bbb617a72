"""Exact polish: from the interior-point solution to the exact solution of its active set.

The interior-point solution tells which weights sit at a bound, at 0 or at their current
holding, and which limits are tight. On that active set the problem is an equality-constrained
quadratic, solved exactly by one linear solve of its KKT system; pinned weights then take their
point's exact value (a zero is 0.0, a weight at its maximum is that maximum). The result is
checked: free weights must stay inside their segments and loose limits must hold (else the
step stops where the first weight or limit blocks, which is pinned or made tight), and the
multipliers must have their signs and every pinned weight its interval condition (else that
weight is freed toward where it wants to go, or the limit released). From the interior-point
start, one solve is usually enough; a few corrections otherwise.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from trackfit.core.constrained.interior import InteriorPoint
from trackfit.core.constrained.optimality import (
    clip_signs,
    row_matrix,
    settle_multipliers,
    stationarity,
)
from trackfit.core.constrained.problem import Problem
from trackfit.core.constrained.state import (
    AT_LOWER,
    AT_UPPER,
    INACTIVE,
    State,
    candidates,
    classify,
    row_values,
    segment,
    signs,
    turnover,
)

# From the interior-point solution: weights this close (relative) to a point, and limits this
# close to their bound, start pinned or tight.
PIN_TOL = 1e-8
ROW_TOL = 1e-8
# After a linear solve: a free weight this close to a segment end is at it (relative to max|b|),
# a limit this far past its bound is violated, a condition this far off (relative to max|c|)
# is violated.
_SNAP = 1e-13
_PRIMAL = 1e-12
_DUAL = 1e-11
# The interior-point multipliers are accurate to about this; good enough to certify a solution.
_DUAL_IPM = 1e-9
_MAX_STEPS = 30
_BULK_STEPS = 3  # after this many corrections, change one thing at a time


@dataclass(frozen=True, eq=False)
class Polished:
    """An exact solution of one active set: ``b`` of shape (m,), its multipliers, and whether
    every check passed (``converged``)."""

    state: State
    b: np.ndarray
    mu: np.ndarray
    mu_cap: float
    converged: bool


def _refined_solve(K: np.ndarray, rhs: np.ndarray) -> np.ndarray:
    from scipy import linalg  # scipy loads on the first fit, not at start-up

    lu = linalg.lu_factor(K, check_finite=False)
    x = linalg.lu_solve(lu, rhs, check_finite=False)
    return x + linalg.lu_solve(lu, rhs - K @ x, check_finite=False)


def solve_state(prob: Problem, state: State) -> tuple[np.ndarray, np.ndarray, float, bool]:
    """Exact minimizer on an active set.

    Returns
    -------
    b : ndarray of shape (m,)
    mu : ndarray of shape (n_rows,)
    mu_cap : float
    determined : bool
        False when the tight limits do not determine their multipliers (dependent limits, or
        limits whose members are all pinned); ``mu`` is then one choice, of least norm.
    """
    F = np.flatnonzero(~state.pinned)
    Pn = np.flatnonzero(state.pinned)
    b = np.where(state.pinned, state.value, 0.0)
    sig, rho = signs(prob, state, b)
    active = np.flatnonzero(state.rows != INACTIVE)
    mu = np.zeros(len(prob.rows))
    A_rows, targets = [], []
    if len(active):
        R = row_matrix(prob)
        for r in active:
            row = prob.rows[r]
            bound = row.lower if state.rows[r] == AT_LOWER else row.upper
            A_rows.append(R[r, F])
            targets.append(bound - R[r, Pn] @ b[Pn])
    if state.cap:
        half_d = 0.5 * prob.d
        A_rows.append(half_d[F] * rho[F])
        targets.append(
            prob.cap
            - float(half_d[Pn] @ np.abs(b[Pn] - prob.cur[Pn]))
            + float(half_d[F] @ (rho[F] * prob.cur[F]))
        )
    e = len(A_rows)
    if len(F) == 0:
        return b, mu, 0.0, e == 0
    q = prob.H[np.ix_(F, Pn)] @ b[Pn] - prob.c[F] + prob.l1 * sig[F] + prob.tau * rho[F]
    HF = prob.H[np.ix_(F, F)]
    keep = np.arange(e)
    determined = True
    if e:
        A = np.vstack(A_rows)
        if e > len(F) or np.linalg.matrix_rank(A) < e:
            # Dependent tight limits: solve with an independent subset of them.
            from scipy import linalg

            _, _, piv = linalg.qr(A.T, pivoting=True, mode="economic")
            keep = np.sort(piv[: np.linalg.matrix_rank(A)])
            determined = False
        A = A[keep]
        k = len(keep)
        K = np.block([[HF, A.T], [A, np.zeros((k, k))]])
        x = _refined_solve(K, np.concatenate([-q, np.asarray(targets)[keep]]))
        b[F], lam = x[: len(F)], x[len(F) :]
    else:
        b[F], lam = _refined_solve(HF, -q), np.zeros(0)
    if not determined:  # the minimum-norm multipliers that make the free columns stationary
        A = np.vstack(A_rows)
        lam = np.linalg.lstsq(A.T, -(HF @ b[F] + q), rcond=None)[0]
    n_lin = len(active)
    mu[active] = lam[:n_lin]
    mu_cap = float(lam[n_lin]) if state.cap else 0.0
    return b, mu, mu_cap, determined


def _line_search(
    prob: Problem, state: State, x: np.ndarray, target: np.ndarray, cand: np.ndarray
) -> tuple[np.ndarray, State] | None:
    """Step from the feasible ``x`` toward ``target`` until a weight or a limit blocks.

    Returns None when the whole step is feasible (no free weight reaches a segment end, no loose
    limit is broken); else the point where the first block occurs and the active set with the
    blocking weights pinned at their segment ends and the blocking limits made tight.
    """
    scale = max(1.0, float(np.max(np.abs(target), initial=0.0)))
    snap = _SNAP * scale
    dx = target - x
    lo_end, hi_end = segment(cand, state.rep)
    free = ~state.pinned
    t_var = np.full(prob.m, np.inf)
    with np.errstate(divide="ignore", invalid="ignore"):
        down = free & (target <= lo_end + snap)
        t_var[down] = np.where(dx[down] < 0, (lo_end[down] - x[down]) / dx[down], 0.0)
        up = free & ~down & (target >= hi_end - snap)
        t_var[up] = np.where(dx[up] > 0, (hi_end[up] - x[up]) / dx[up], 0.0)
    # A target within ``snap`` of a segment end reaches it, at the latest at the full step.
    t_var = np.clip(t_var, 0.0, 1.0, where=down | up, out=t_var)
    t_row = np.full(len(prob.rows), np.inf)
    side = np.zeros(len(prob.rows), dtype=state.rows.dtype)
    now, then = row_values(prob, x), row_values(prob, target)
    for r, row in enumerate(prob.rows):
        if state.rows[r] != INACTIVE:
            continue
        if then[r] > row.upper + _PRIMAL * max(1.0, abs(row.upper)):
            gap = then[r] - now[r]
            t_row[r] = max((row.upper - now[r]) / gap, 0.0) if gap > 0 else 0.0
            side[r] = AT_UPPER
        elif then[r] < row.lower - _PRIMAL * max(1.0, abs(row.lower)):
            gap = now[r] - then[r]
            t_row[r] = max((now[r] - row.lower) / gap, 0.0) if gap > 0 else 0.0
            side[r] = AT_LOWER
    t_cap = np.inf
    if prob.cap is not None and not state.cap:
        _, rho = signs(prob, state, x)
        t_now = turnover(prob, x)
        slope = 0.5 * float(prob.d @ (rho * dx))  # linear until a weight reaches b_cur
        if t_now + slope > prob.cap + _PRIMAL * max(1.0, prob.cap):
            t_cap = max((prob.cap - t_now) / slope, 0.0) if slope > 0 else 0.0
    t = min(float(np.min(t_var, initial=np.inf)), float(np.min(t_row, initial=np.inf)), t_cap)
    if not t <= 1.0:
        return None
    tie = t + 1e-14
    pin_lo, pin_hi = (t_var <= tie) & down, (t_var <= tie) & up
    rows = np.where(t_row <= tie, side, state.rows).astype(state.rows.dtype)
    x_new = x + t * dx
    x_new = np.where(pin_lo, lo_end, np.where(pin_hi, hi_end, x_new))
    value = np.where(pin_lo, lo_end, np.where(pin_hi, hi_end, state.value))
    new = replace(
        state,
        pinned=state.pinned | pin_lo | pin_hi,
        value=value,
        rows=rows,
        cap=state.cap or t_cap <= tie,
    )
    return np.where(new.pinned, new.value, x_new), new


def _dual_fixes(
    prob: Problem, state: State, b: np.ndarray, mu: np.ndarray, mu_cap: float, cand, bulk: bool
) -> State | None:
    """Free pinned weights whose condition fails; release limits whose multiplier has the
    wrong sign. With ``bulk`` False, only the worst one."""
    tol = _DUAL * (prob.cscale if prob.cscale > 0 else 1.0)
    clipped, cap_clipped = clip_signs(state, mu, mu_cap)
    viol, direction = stationarity(prob, state, b, clipped, cap_clipped)
    coef_size = np.array([np.max(np.abs(row.coef), initial=0.0) for row in prob.rows])
    wrong = np.abs(mu - clipped) * coef_size if len(mu) else np.zeros(0)
    wrong_cap = max(-mu_cap, 0.0) * 0.5 * float(np.max(prob.d, initial=0.0)) if state.cap else 0.0
    bad_vars = viol > tol
    bad_rows = wrong > tol
    bad_cap = wrong_cap > tol
    if not (bad_vars.any() or bad_rows.any() or bad_cap):
        return None
    if not bulk:  # keep only the single worst
        worst = max(float(np.max(viol, initial=0.0)), float(np.max(wrong, initial=0.0)), wrong_cap)
        bad_vars = bad_vars & (viol == worst) & (np.cumsum(viol == worst) == 1)
        if bad_vars.any():
            bad_rows, bad_cap = np.zeros_like(bad_rows), False
        else:
            bad_rows = bad_rows & (wrong == worst) & (np.cumsum(wrong == worst) == 1)
            bad_cap = bad_cap and not bad_rows.any()
    rows = np.where(bad_rows, INACTIVE, state.rows).astype(state.rows.dtype)
    pinned, rep = state.pinned.copy(), state.rep.copy()
    for j in np.flatnonzero(bad_vars & state.pinned):
        v, step = state.value[j], direction[j]
        beyond = cand[j][(cand[j] > v) if step > 0 else (cand[j] < v)]
        nxt = (np.min(beyond) if step > 0 else np.max(beyond)) if beyond.size else None
        rep[j] = 0.5 * (v + nxt) if nxt is not None else v + step * max(1.0, abs(v))
        pinned[j] = False
    return replace(state, pinned=pinned, rep=rep, rows=rows, cap=state.cap and not bad_cap)


def polish(prob: Problem, start: InteriorPoint) -> Polished | None:
    """Exact solution from an interior-point solution.

    Returns the solution of the last active set whose step was feasible, ``converged`` when its
    conditions all hold; None when no step was.

    A primal active-set method started on the active set the interior-point solution
    suggests: each step solves the current set exactly and moves toward that solution as far
    as every limit allows (pinning the weight, or making tight the limit, that blocks); at a
    solution of the set, weights or limits whose conditions fail are released.
    """
    cand = candidates(prob)
    state = classify(prob, start.b, PIN_TOL, ROW_TOL, cand)
    x = np.where(state.pinned, state.value, start.b)
    seen: set[bytes] = set()
    last = None
    for step in range(_MAX_STEPS):
        key = state.key(cand) + x.tobytes()
        if key in seen:
            break
        seen.add(key)
        try:
            b, mu, mu_cap, determined = solve_state(prob, state)
        except (np.linalg.LinAlgError, ValueError):  # scipy raises numpy's LinAlgError
            break
        if not np.all(np.isfinite(b)):
            break
        blocked = _line_search(prob, state, x, b, cand)
        if blocked is not None:
            x, state = blocked
            continue
        x = b = np.where(state.pinned, state.value, b)
        if not determined:
            guesses = [(mu, mu_cap, _DUAL), (start.mu, start.mu_cap, _DUAL_IPM)]
            mu, mu_cap = settle_multipliers(prob, state, b, guesses)
        last = Polished(state=state, b=b, mu=mu, mu_cap=mu_cap, converged=False)
        changed = _dual_fixes(prob, state, b, mu, mu_cap, cand, bulk=step < _BULK_STEPS)
        if changed is None:
            return replace(last, converged=True)
        state = changed
    return last
