"""Optimality conditions of the constrained problem at a point with a known active set.

With multipliers ``mu_r`` for the linear rows (``>= 0`` at an upper bound, ``<= 0`` at a lower
one, free for equalities) and ``mu_cap >= 0`` for the turnover cap, the Lagrangian's gradient
in ``b_j`` is ``g_j = (Hb - c)_j + sum_r mu_r a_rj`` plus the subgradients of
``l1 |b_j|`` and of ``kappa_j |b_j - b_cur_j|``, ``kappa_j = tau + mu_cap d_j / 2``. At the
optimum, 0 must lie in that subdifferential plus the normal cone of ``lo_j <= b_j <= hi_j``:
an equation for a free weight, an interval condition for a pinned one.
"""

from __future__ import annotations

import numpy as np

from trackfit.core.constrained.problem import Problem
from trackfit.core.constrained.state import AT_LOWER, AT_UPPER, EQUAL, INACTIVE, State, signs


def row_matrix(prob: Problem) -> np.ndarray:
    """Coefficients of the linear rows, shape (n_rows, m)."""
    if not prob.rows:
        return np.zeros((0, prob.m))
    return np.vstack([row.coef for row in prob.rows])


def clip_signs(state: State, mu: np.ndarray, mu_cap: float) -> tuple[np.ndarray, float]:
    """Multipliers with the sign each tight limit allows (0 for limits not tight)."""
    mu = np.where(state.rows == AT_UPPER, np.maximum(mu, 0.0), mu)
    mu = np.where(state.rows == AT_LOWER, np.minimum(mu, 0.0), mu)
    mu = np.where(state.rows == INACTIVE, 0.0, mu)
    return mu, max(mu_cap, 0.0) if state.cap else 0.0


def _pinned_parts(prob: Problem, state: State, b: np.ndarray):
    """Flags of each pinned point: at 0 (L1 kink), at b_cur (turnover kink), at lo, at hi."""
    at0 = (b == 0.0) if prob.l1 else np.zeros(prob.m, dtype=bool)
    atc = (b == prob.cur) if prob.turnover else np.zeros(prob.m, dtype=bool)
    return at0, atc, b == prob.lo, b == prob.hi


def stationarity(
    prob: Problem, state: State, b: np.ndarray, mu: np.ndarray, mu_cap: float
) -> tuple[np.ndarray, np.ndarray]:
    """Violation of each column's condition, shape (m,), and the way a pinned weight wants to go.

    Returns
    -------
    viol : ndarray of shape (m,)
        ``|g_j|`` for a free column; for a pinned one, the distance from 0 to the set its
        condition allows (0 when it holds). Fixed columns have none.
    direction : ndarray of int, shape (m,)
        +1 (or -1) where a pinned weight violates its condition because it should increase
        (decrease); 0 elsewhere.
    """
    grad = prob.H @ b - prob.c + row_matrix(prob).T @ mu
    kappa = prob.tau + mu_cap * 0.5 * prob.d if prob.turnover else np.zeros(prob.m)
    sig, rho = signs(prob, state, b)
    free_res = np.abs(grad + prob.l1 * sig + kappa * rho)
    at0, atc, atlo, athi = _pinned_parts(prob, state, b)
    base = grad + prob.l1 * np.sign(b) * ~at0 + kappa * np.sign(b - prob.cur) * ~atc
    width = prob.l1 * at0 + kappa * atc
    dec = np.where(atlo, 0.0, np.maximum(base - width, 0.0))
    inc = np.where(athi, 0.0, np.maximum(-(base + width), 0.0))
    pinned = state.pinned & ~prob.fixed
    viol = np.where(state.pinned, np.where(pinned, np.maximum(dec, inc), 0.0), free_res)
    direction = np.where(pinned & (inc > dec), 1, np.where(pinned & (dec > 0), -1, 0))
    return viol, direction


def multipliers_lp(prob: Problem, state: State, b: np.ndarray) -> tuple[np.ndarray, float]:
    """Multipliers that best satisfy every condition at ``b``, by a small linear program.

    Used when the tight limits do not determine their multipliers (dependent rows, or rows
    whose every member is pinned): minimize ``e`` such that every column's violation is at
    most ``e``, with each multiplier of its allowed sign.
    """
    from scipy.optimize import linprog  # only needed on degenerate active sets

    active = np.flatnonzero(state.rows != INACTIVE)
    A = row_matrix(prob)[active]  # (e, m)
    na = len(active)
    nz = na + (1 if state.cap else 0) + 1
    grad0 = prob.H @ b - prob.c
    sig, rho = signs(prob, state, b)
    half_d = 0.5 * prob.d
    at0, atc, atlo, athi = _pinned_parts(prob, state, b)
    ub_rows, ub_rhs = [], []

    def add(const: float, mu_coef: np.ndarray, cap_coef: float) -> None:
        # const + mu_coef @ mu + cap_coef * mu_cap <= e
        row = np.zeros(nz)
        row[:na] = mu_coef
        if state.cap:
            row[na] = cap_coef
        row[-1] = -1.0
        ub_rows.append(row)
        ub_rhs.append(-const)

    for j in range(prob.m):
        if prob.fixed[j]:
            continue
        a = A[:, j]
        if not state.pinned[j]:
            const = grad0[j] + prob.l1 * sig[j] + prob.tau * rho[j]
            add(const, a, half_d[j] * rho[j])
            add(-const, -a, -half_d[j] * rho[j])
            continue
        s1 = float(np.sign(b[j] - prob.cur[j])) * (not atc[j]) if prob.turnover else 0.0
        base = grad0[j] + prob.l1 * np.sign(b[j]) * (not at0[j]) + prob.tau * s1
        width = prob.l1 * at0[j] + prob.tau * atc[j]
        cap_base, cap_width = half_d[j] * s1, half_d[j] * atc[j]
        if not atlo[j]:
            add(base - width, a, cap_base - cap_width)
        if not athi[j]:
            add(-(base + width), -a, -(cap_base + cap_width))

    allowed = {AT_UPPER: (0, None), AT_LOWER: (None, 0), EQUAL: (None, None)}
    bounds = [allowed[state.rows[r]] for r in active]
    if state.cap:
        bounds.append((0, None))
    bounds.append((0, None))
    cost = np.zeros(nz)
    cost[-1] = 1.0
    mu = np.zeros(len(prob.rows))
    if not ub_rows:
        return mu, 0.0
    res = linprog(
        cost, A_ub=np.vstack(ub_rows), b_ub=np.array(ub_rhs), bounds=bounds, method="highs"
    )
    if res.status != 0:
        return mu, 0.0
    mu[active] = res.x[:na]
    return mu, float(res.x[na]) if state.cap else 0.0


def settle_multipliers(
    prob: Problem, state: State, b: np.ndarray, guesses
) -> tuple[np.ndarray, float]:
    """The first guess of the multipliers that satisfies every condition to its tolerance
    (relative to ``max |c|``), else the best multipliers by :func:`multipliers_lp`.

    Parameters
    ----------
    guesses : iterable of (mu, mu_cap, tol)
    """
    scale = prob.cscale if prob.cscale > 0 else 1.0
    for mu, mu_cap, tol in guesses:
        clipped, cap_clipped = clip_signs(state, mu, mu_cap)
        viol, _ = stationarity(prob, state, b, clipped, cap_clipped)
        if float(np.max(viol, initial=0.0)) <= tol * scale:
            return clipped, cap_clipped
    return multipliers_lp(prob, state, b)


def complementarity(
    prob: Problem, state: State, b: np.ndarray, mu: np.ndarray, mu_cap: float
) -> float:
    """Largest ``|multiplier * slack|`` over the tight limits."""
    worst = 0.0
    for r, row in enumerate(prob.rows):
        if state.rows[r] == INACTIVE or mu[r] == 0.0:
            continue
        value = float(row.coef @ b)
        bound = row.lower if state.rows[r] == AT_LOWER else row.upper
        worst = max(worst, abs(mu[r]) * abs(value - bound))
    if state.cap and mu_cap:
        worst = max(worst, mu_cap * abs(prob.cap - 0.5 * float(prob.d @ np.abs(b - prob.cur))))
    return worst


def kkt_residual(
    prob: Problem, state: State, b: np.ndarray, mu: np.ndarray, mu_cap: float, primal: float
) -> float:
    """Largest violation of the KKT conditions.

    Stationarity and complementary slackness relative to ``max |c|`` (as
    :func:`trackfit.core.kkt.enet_kkt_residual`); ``primal`` (the largest limit violation, in
    original units) as it is. Multipliers are first given their allowed signs.
    """
    mu, mu_cap = clip_signs(state, mu, mu_cap)
    viol, _ = stationarity(prob, state, b, mu, mu_cap)
    dual = max(float(np.max(viol, initial=0.0)), complementarity(prob, state, b, mu, mu_cap))
    if prob.cscale > 0:
        dual /= prob.cscale
    return max(dual, primal)
