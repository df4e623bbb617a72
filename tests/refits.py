"""The reference refit of the max-names tests, exact and independent of trackfit's solvers.

min (1/2n)|y - Xw|^2 subject to w >= 0, sum(w) = 1, w = 0 off the mask.
"""

from __future__ import annotations

import numpy as np


def budget_ls(X: np.ndarray, y: np.ndarray, mask: np.ndarray) -> tuple[float, np.ndarray]:
    """Exact long-only, fully invested least squares on the columns in ``mask``.

    A primal active-set method: Lawson and Hanson's NNLS ("Solving Least Squares Problems",
    1974, ch. 23) with the budget row kept in every equality-constrained solve. It starts at
    the best single name (a vertex of the simplex), so every iterate is feasible.
    """
    n, p = X.shape
    idx = np.flatnonzero(mask)
    w = np.zeros(p)
    if len(idx) == 0:
        return np.inf, w  # nothing can be fully invested
    Q = X[:, idx].T @ X[:, idx] / n
    q = X[:, idx].T @ y / n
    scale = float(np.max(np.abs(Q)))
    free = [int(np.argmin(0.5 * np.diag(Q) - q))]
    v = np.array([1.0])
    for _ in range(20 * len(idx) + 50):
        while True:
            m = len(free)
            kkt = np.zeros((m + 1, m + 1))
            kkt[:m, :m] = Q[np.ix_(free, free)]
            kkt[:m, m] = kkt[m, :m] = 1.0
            sol = np.linalg.solve(kkt, np.append(q[free], 1.0))
            z, nu = sol[:m], sol[m]
            if np.all(z > 0):
                break
            neg = np.flatnonzero(z <= 0)
            ratios = v[neg] / (v[neg] - z[neg])
            v = v + ratios.min() * (z - v)
            keep = v > 0
            keep[neg[np.argmin(ratios)]] = False  # the blocking weight leaves, exactly
            free = [free[i] for i in range(m) if keep[i]]
            v = v[keep]
        v = z
        out = [i for i in range(len(idx)) if i not in free]
        if not out:
            break
        mult = Q[np.ix_(out, free)] @ v - q[out] + nu  # multipliers of w_j >= 0
        k = int(np.argmin(mult))
        if mult[k] >= -1e-14 * scale:
            break
        free.append(out[k])
        v = np.append(v, 0.0)
    w[idx[free]] = v
    r = y - X @ w
    return 0.5 * float(r @ r) / n, w


def budget_refit(X: np.ndarray, y: np.ndarray):
    """The refit of one support mask, as the max-names search calls it."""
    return lambda mask: budget_ls(X, y, mask)
