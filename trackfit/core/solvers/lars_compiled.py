"""The compiled knot loop of the lasso path: see :mod:`trackfit.core.solvers.lars`, its only
caller, which checks and converts the inputs.

numba compiles these functions on their first call and caches the machine code beside this
file; the module is imported on the first lasso path, so commands that fit none do not load
numba.
"""

from __future__ import annotations

import numpy as np
from numba import njit

# A joining column whose distance from the active columns' span, squared and relative to its
# own squared norm, is below this is dependent on them to rounding.
_DEPENDENT = 1e-10
# Penalties this close below the path's start (relative) hold nothing, as in the active-set
# solver's stopping rule.
_TOP_RTOL = 1e-13
# Recompute the correlations from the weights this often, so that updates do not drift.
_REFRESH = 32
# solve_lower and gram_times are inlined into the knot loop (``inline="always"``): called as
# separate compiled functions they cost about 6% of a walk-forward's path time.


@njit(cache=True, error_model="numpy")
def lasso_path(G, c, alphas, positive, cap):  # pragma: no cover - compiled; tested via lars.py
    """:func:`trackfit.core.solvers.lars.lasso_path_gram` on C-contiguous float arrays, at most
    ``cap`` names held at once; returns ``(coefs, steps, solved)`` as that function does."""
    k, m = c.shape[0], alphas.shape[0]
    coefs = np.zeros((m, k))
    steps = np.zeros(m, dtype=np.int64)
    # The first name to join, and the penalty where it does: the top of the path.
    best, bj = -1.0, 0
    for j in range(k):
        v = c[j] if positive else abs(c[j])
        if v > best:
            best, bj = v, j
    bs = 1.0 if (positive or c[bj] >= 0.0) else -1.0
    lam = max(best, 0.0)
    if lam <= 0.0:
        return coefs, steps, m
    lam_end = alphas[m - 1]
    at = 0
    while at < m and alphas[at] >= lam * (1.0 - _TOP_RTOL):
        at += 1
    if at == m:
        return coefs, steps, m

    # The active names in the order of the factor, their signs and weights. The lower
    # Cholesky factor of their Gram block (G_AA = L L') is kept twice, so that every loop
    # over it runs along contiguous memory: by rows (``lrow[t, s] = L[t, s]``, for
    # d = L'^-1 u at every knot) and by columns (``col[t, s] = L[s, t]``, for L^-1 g when a
    # name joins and the rank-one update when one leaves). u = L^-1 s, d = G_AA^-1 s.
    act = np.empty(cap, dtype=np.int64)
    signs = np.empty(cap)
    w = np.zeros(cap)
    lrow = np.zeros((cap, cap))
    col = np.zeros((cap, cap))
    u = np.empty(cap)
    d = np.empty(cap)
    z = np.empty(cap)
    x = np.empty(cap)
    # The active names' Gram rows, in slots 0..q-1 in any order (a name leaving moves one row,
    # the last slot's into its own), so that G_{:,A} d is one matrix-vector product.
    slot = np.empty(cap, dtype=np.int64)
    rows = np.empty((cap, k))
    by_slot = np.empty(cap)
    is_active = np.zeros(k, dtype=np.bool_)
    r = c.copy()  # c - G w
    a = np.empty(k)  # G_{:,A} d: how fast each correlation falls per unit of penalty
    q = 0

    just_left = -1
    knots = 0
    since = 0
    limit = 50 * k + 1000
    joining = True
    while True:
        if joining:
            # Join bj with sign bs: L grows by the row [z', sqrt(G_jj - z'z)], L z = G_Aj.
            if q == cap:
                break
            for t in range(q):
                z[t] = G[act[t], bj]
            solve_lower(col, z, 0, q)
            d2 = G[bj, bj]
            zu = 0.0
            for t in range(q):
                d2 -= z[t] * z[t]
                zu += z[t] * u[t]
            if not d2 > _DEPENDENT * G[bj, bj]:
                break
            diag = np.sqrt(d2)
            for t in range(q):
                col[t, q] = z[t]
                lrow[q, t] = z[t]
            col[q, q] = diag
            lrow[q, q] = diag
            u[q] = (bs - zu) / diag
            act[q], signs[q], w[q], slot[q] = bj, bs, 0.0, q
            rows[q] = G[bj]
            is_active[bj] = True
            q += 1

        knots += 1
        since += 1
        if knots > limit or q == 0:
            break
        # d = L'^-1 u, from the last row of L up.
        for t in range(q):
            d[t] = u[t]
        for t in range(q - 1, -1, -1):
            d[t] /= lrow[t, t]
            dt = d[t]
            for s in range(t):
                d[s] -= dt * lrow[t, s]
        gram_times(rows, slot, d, q, by_slot, a)
        # Joins: |r_j - g a_j| = lam - g for an inactive j. A correlation past lam by rounding
        # gives a negative step: it joins at once (0). Ties go to the first name, + before -.
        g_join, bj, bs = np.inf, -1, 1.0
        for j in range(k):
            if is_active[j] or j == just_left:
                continue
            den = 1.0 - a[j]
            if den > 0.0:
                step = max((lam - r[j]) / den, 0.0)
                if step < g_join:
                    g_join, bj, bs = step, j, 1.0
            if not positive:
                den = 1.0 + a[j]
                if den > 0.0:
                    step = max((lam + r[j]) / den, 0.0)
                    if step < g_join:
                        g_join, bj, bs = step, j, -1.0
        # Drops: an active weight reaches zero.
        g_drop, bi = np.inf, -1
        for t in range(q):
            if d[t] * w[t] < 0.0:
                step = -w[t] / d[t]
                if step < g_drop:
                    g_drop, bi = step, t
        g = min(g_join, g_drop, lam - lam_end)
        # Every requested penalty on this segment [lam - g, lam] is read off the line.
        new_lam = lam - g
        while at < m and alphas[at] >= new_lam:
            for t in range(q):
                coefs[at, act[t]] = w[t] + (lam - alphas[at]) * d[t]
            steps[at] = since
            since = 0
            at += 1
        if at == m:
            break
        for t in range(q):
            w[t] += g * d[t]
        lam = new_lam
        if knots % _REFRESH == 0:
            gram_times(rows, slot, w, q, by_slot, a)  # a is G w here, until the next knot
            for j in range(k):
                r[j] = c[j] - a[j]
        else:
            for j in range(k):
                r[j] -= g * a[j]
        for t in range(q):
            r[act[t]] = lam * signs[t]
        just_left = -1
        joining = False
        if g == g_drop:
            w[bi] = 0.0
            just_left = act[bi]
            is_active[just_left] = False
            # The leaving name's slot takes the last slot's row; the names after it move up.
            freed = slot[bi]
            for t in range(q):
                if slot[t] == q - 1:
                    if t != bi:
                        rows[freed] = rows[q - 1]
                        slot[t] = freed
                    break
            for t in range(bi, q - 1):
                act[t], signs[t], w[t], slot[t] = act[t + 1], signs[t + 1], w[t + 1], slot[t + 1]
            q = remove_name(col, lrow, u, signs, x, q, bi)
        elif g == g_join:
            joining = True
    return coefs, steps, at


@njit(cache=True, error_model="numpy", inline="always")
def solve_lower(col, x, lo, hi):  # pragma: no cover - compiled
    """Forward substitution in place: rows ``lo..hi-1`` of ``L x = b``, where ``x`` holds ``b``
    less the contributions of the columns before ``lo``; ``col[t, s] = L[s, t]``."""
    for t in range(lo, hi):
        x[t] /= col[t, t]
        xt = x[t]
        for s in range(t + 1, hi):
            x[s] -= xt * col[t, s]


@njit(cache=True, error_model="numpy", inline="always")
def gram_times(rows, slot, v, q, by_slot, out):  # pragma: no cover - compiled
    """``out = G_{A,:}' v``: ``v`` in the factor's order, the Gram rows in their slots."""
    for t in range(q):
        by_slot[slot[t]] = v[t]
    np.dot(by_slot[:q], rows[:q], out)


@njit(cache=True, error_model="numpy")
def remove_name(col, lrow, u, signs, x, q, i):  # pragma: no cover - compiled
    """Drop active position ``i`` from the factor: delete row and column ``i`` of L and restore
    the trailing block by the rank-one update L22 L22' + x x' (x the deleted column below the
    diagonal), by plane rotations (the classic LINPACK update, which needs no subtraction).
    ``signs`` are already those of the remaining names, in order. Returns q - 1."""
    m = q - 1 - i
    for s in range(m):
        x[s] = col[i, i + 1 + s]
    # Columns before i lose their row i; columns after i move one place left and up.
    for t in range(i):
        for s in range(i, q - 1):
            col[t, s] = col[t, s + 1]
    for t in range(i, q - 1):
        for s in range(t, q - 1):
            col[t, s] = col[t + 1, s + 1]
    for p in range(m):
        t = i + p
        lt = col[t, t]
        rt = np.hypot(lt, x[p])
        cs, sn = rt / lt, x[p] / lt
        col[t, t] = rt
        for v in range(p + 1, m):
            s = i + v
            col[t, s] = (col[t, s] + sn * x[v]) / cs
            x[v] = cs * x[v] - sn * col[t, s]
    q -= 1
    # Rows i.. of L changed (rows before i did not): copy them from the columns.
    for t in range(i, q):
        for s in range(t + 1):
            lrow[t, s] = col[s, t]
    # u = L^-1 s: its leading i entries are unchanged; the rest by forward substitution.
    for s in range(i, q):
        x[s] = signs[s]
    for t in range(i):
        ut = u[t]
        for s in range(i, q):
            x[s] -= ut * col[t, s]
    solve_lower(col, x, i, q)
    for t in range(i, q):
        u[t] = x[t]
    return q
