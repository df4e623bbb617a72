"""The exact lasso path by least angle regression with the lasso modification, on a Gram matrix.

Between knots the lasso solution is linear in the penalty, so the path is followed knot to
knot and the solution at any penalty read by linear interpolation (Efron, Hastie, Johnstone and
Tibshirani, "Least angle regression", Ann. Statist. 2004). The Cholesky factor of the active
block is updated in O(k^2) when a name joins (one triangular solve) or leaves (Givens
rotations), never refactored. With ``positive`` only positive correlations may join, which
gives the positive lasso path (same paper, section 3.4).

The path never stops early: it runs to the smallest penalty asked for. When a joining name
would make the active block singular to rounding (duplicate or dependent columns), the path
stops there and reports where, so the caller can finish with the active-set solver.
"""

from __future__ import annotations

import numpy as np
from scipy import linalg
from scipy.linalg import blas

# A joining column whose distance from the active columns' span, squared and relative to its
# own squared norm, is below this is dependent on them to rounding.
_DEPENDENT = 1e-10
# Penalties this close below the path's start (relative) hold nothing, as in the active-set
# solver's stopping rule.
_TOP_RTOL = 1e-13
# Recompute the correlations from the weights this often, so that updates do not drift.
_REFRESH = 32


def lasso_path_gram(
    G: np.ndarray,
    c: np.ndarray,
    alphas: np.ndarray,
    *,
    positive: bool = False,
    max_active: int | None = None,
) -> tuple[np.ndarray, np.ndarray, int]:
    """Lasso solutions of ``min 0.5 w'Gw - c'w + alpha |w|_1`` at every penalty.

    Parameters
    ----------
    G : ndarray of shape (k, k)
        Symmetric positive semidefinite.
    c : ndarray of shape (k,)
    alphas : ndarray of shape (n_alphas,)
        Positive and decreasing.
    positive : bool
        Constrain ``w >= 0``.
    max_active : int, optional
        Most names the path may hold at once (the number of rows: more columns than rows
        are dependent); sizes the work arrays. Default ``k``.

    Returns
    -------
    coefs : ndarray of shape (n_alphas, k)
        Exact zeros outside the active set.
    steps : ndarray of int, shape (n_alphas,)
        Knots passed to reach each penalty from the previous one.
    solved : int
        How many leading penalties were solved; less than ``n_alphas`` only when the path
        met dependent columns (the remaining rows of ``coefs`` are zero).
    """
    k, m = len(c), len(alphas)
    coefs = np.zeros((m, k))
    steps = np.zeros(m, dtype=int)
    if k == 0 or m == 0:
        return coefs, steps, m
    r = c.astype(float).copy()
    lam = float(np.max(r)) if positive else float(np.max(np.abs(r)))
    if lam <= 0.0:
        return coefs, steps, m
    lam_end = float(alphas[-1])
    at = 0
    while at < m and alphas[at] >= lam * (1.0 - _TOP_RTOL):
        at += 1
    if at == m:
        return coefs, steps, m

    cap = k if max_active is None else max(1, min(k, int(max_active)))
    rows = np.empty((cap, k))  # G[A[i], :] for the active names, in order
    # Upper triangular, G_AA = R'R; kept Fortran-ordered at its exact size so BLAS's
    # triangular solve takes it without a copy.
    state = {"R": np.zeros((0, 0), order="F"), "u": np.zeros(0)}  # u = R'^-1 signs
    active: list[int] = []
    signs = np.empty(cap)
    w_a = np.empty(cap)
    is_active = np.zeros(k, dtype=bool)
    act = np.empty(cap, dtype=np.intp)  # act[:q] == active, as an index array
    diag = np.diag(G).copy()

    def join(j: int, sign: float) -> bool:
        q, R = len(active), state["R"]
        if q == cap:
            return False
        g = rows[:q, j]
        z = blas.dtrsv(R, g, lower=0, trans=1) if q else g
        d2 = diag[j] - float(z @ z)
        if not d2 > _DEPENDENT * diag[j]:
            return False
        grown = np.zeros((q + 1, q + 1), order="F")
        grown[:q, :q] = R
        grown[:q, q] = z
        grown[q, q] = np.sqrt(d2)
        state["R"] = grown
        # R'u = s grows by one entry: the last row of R' is [z', sqrt(d2)].
        u = state["u"]
        state["u"] = np.append(u, (sign - float(z @ u)) / grown[q, q]) if q else np.array(
            [sign / grown[0, 0]]
        )
        rows[q] = G[j]
        active.append(j)
        act[q] = j
        signs[q] = sign
        w_a[q] = 0.0
        is_active[j] = True
        return True

    def leave(i: int) -> None:
        q, R = len(active), state["R"]
        j = active.pop(i)
        is_active[j] = False
        rows[i : q - 1] = rows[i + 1 : q]
        act[i : q - 1] = act[i + 1 : q]
        signs[i : q - 1] = signs[i + 1 : q]
        w_a[i : q - 1] = w_a[i + 1 : q]
        # Without column i, rows i.. of R are upper Hessenberg; a QR of that block makes
        # them triangular again (G_AA = R'R is unchanged by the orthogonal factor).
        shrunk = np.empty((q - 1, q - 1), order="F")
        shrunk[:i, :i] = R[:i, :i]
        shrunk[:i, i:] = R[:i, i + 1 :]
        shrunk[i:, :i] = 0.0
        m = q - 1 - i
        if m:
            # Givens rotations on the trailing block, O(m^2) in compiled code; qr_delete also
            # rotates a Q, which here is a zero stand-in (only R is kept).
            _, tail = linalg.qr_delete(
                np.zeros((m + 1, m + 1), order="F"), np.array(R[i:, i:], order="F"), 0, 1,
                "col", overwrite_qr=True, check_finite=False,
            )
            tail = tail[:m]
            tail *= np.where(np.diag(tail) < 0, -1.0, 1.0)[:, None]
            shrunk[i:, i:] = tail
        state["R"] = shrunk
        state["u"] = blas.dtrsv(shrunk, signs[: q - 1], lower=0, trans=1) if q > 1 else np.zeros(0)

    first = int(np.argmax(r)) if positive else int(np.argmax(np.abs(r)))
    join(first, 1.0 if positive else float(np.sign(r[first])))
    just_left = -1
    knots = since = 0
    limit = 50 * k + 1000
    inf = np.inf
    plus, minus, work = np.empty(k), np.empty(k), np.empty(k)
    # Per knot only O(k) vector work and two triangular solves: written with preallocated
    # outputs, since at a few hundred names the temporaries cost more than the arithmetic.
    with np.errstate(divide="ignore", invalid="ignore"):
        while at < m:
            knots += 1
            since += 1
            q = len(active)
            if knots > limit or q == 0:
                break
            s = signs[:q]
            idx = act[:q]
            R = state["R"]
            d = blas.dtrsv(R, state["u"], lower=0, trans=0)  # G_AA^-1 s
            a = d @ rows[:q]  # how fast each correlation falls per unit of penalty
            # Joins: |r_j - g a_j| = lam - g for an inactive j.
            # A correlation past lam by rounding gives a negative step: it joins at once (0).
            np.subtract(1.0, a, out=plus)
            blocked = plus <= 0.0
            np.divide(np.subtract(lam, r, out=work), plus, out=plus)
            np.copyto(plus, inf, where=blocked)
            if positive:
                cand = np.maximum(plus, 0.0, out=work)
            else:
                np.add(1.0, a, out=minus)
                blocked = minus <= 0.0
                np.divide(np.add(lam, r, out=work), minus, out=minus)
                np.copyto(minus, inf, where=blocked)
                cand = np.maximum(np.minimum(plus, minus, out=work), 0.0, out=work)
            cand[idx] = np.inf
            if just_left >= 0:
                cand[just_left] = np.inf
            j = int(cand.argmin())
            g_join = float(cand[j])
            # Drops: an active weight reaches zero.
            wq = w_a[:q]
            to_zero = np.where(d * wq < 0.0, -wq / d, np.inf)
            i = int(to_zero.argmin())
            g_drop = float(to_zero[i])
            g_end = lam - lam_end
            g = min(g_join, g_drop, g_end)
            # Every requested penalty on this segment [lam - g, lam] is read off the line.
            new_lam = lam - g
            while at < m and alphas[at] >= new_lam:
                coefs[at, idx] = wq + (lam - alphas[at]) * d
                steps[at] = since
                since = 0
                at += 1
            if at == m:
                break
            w_a[:q] = wq + g * d
            lam = new_lam
            if knots % _REFRESH == 0:
                r = c - w_a[:q] @ rows[:q]
            else:
                r -= g * a
            r[idx] = lam * s
            just_left = -1
            if g == g_drop:
                w_a[i] = 0.0
                just_left = active[i]
                leave(i)
            elif g == g_join:
                sign = 1.0 if positive else (1.0 if plus[j] <= minus[j] else -1.0)
                if not join(j, sign):
                    break
    return coefs, steps, at
