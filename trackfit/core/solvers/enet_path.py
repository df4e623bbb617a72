"""Elastic net along a decreasing penalty grid by warm-started active sets, guessed and verified.

scikit-learn's parametrization fixes ``l1_ratio`` and varies ``alpha``, so both penalties
``l1 = alpha l1_ratio`` and ``l2 = alpha (1 - l1_ratio)`` move together and the path is not
piecewise linear. At each penalty the active set and signs of the previous one are the guess:
solve ``(G_AA + l2 I) w_A = c_A - l1 s_A`` (positive definite, since ``l2 > 0``) by one
Cholesky factorization, drop names whose weight changed sign, add every name whose correlation
exceeds ``l1``, and repeat. A guess that passes both checks satisfies the optimality conditions
exactly (to rounding) and is the unique solution, since the objective is strictly convex. A
guess that does not settle in a few rounds is handed to the feature-sign solver, which always
ends.
"""

from __future__ import annotations

import numpy as np
from scipy import linalg
from scipy.linalg import lapack

from trackfit.core.solvers.active_set import solve_enet

# Correlations above l1 by more than this, relative to max|c|, are violations.
_TOL = 1e-13
_ROUNDS = 12


def _chol(A):
    """Upper Cholesky factor of the positive definite ``A`` (overwritten), None if not."""
    R, info = lapack.dpotrf(A, lower=0, clean=1, overwrite_a=1)
    return R if info == 0 else None


def _factor(G, active, l2):
    """Upper Cholesky factor ``R`` of ``G_AA + l2 I`` (``R'R``)."""
    GA = G[np.ix_(active, active)]
    GA.ravel()[:: len(active) + 1] += l2
    R = _chol(GA)
    if R is None:
        raise linalg.LinAlgError("the active block is not positive definite")
    return R


def _grow(G, R, active, joining, l2):
    """The factor of ``G_AA + l2 I`` with ``joining`` appended after ``active``, in O(k^2 v).

    ``[[R, Z], [0, S]]`` with ``R'Z = G_AV`` and ``S'S = G_VV + l2 I - Z'Z``; None when the
    new block is not positive definite to rounding (the caller refactors).
    """
    q, v = len(active), len(joining)
    if q == 0:
        return None
    Z = linalg.solve_triangular(R, G[np.ix_(active, joining)], trans="T", check_finite=False)
    B = G[np.ix_(joining, joining)] - Z.T @ Z
    B.ravel()[:: v + 1] += l2
    S = _chol(B)
    if S is None:
        return None
    grown = np.zeros((q + v, q + v), order="F")
    grown[:q, :q] = R
    grown[:q, q:] = Z
    grown[q:, q:] = S
    return grown


def _shrink(G, R, active, keep, l2):
    """The factor without the names where ``keep`` is False: the leading block of ``R`` up to
    the first name that leaves stays a factor; the kept names after it are appended again."""
    m = int(np.argmin(keep))
    tail = active[m + 1 :][keep[m + 1 :]]
    head = R[:m, :m]
    if len(tail) == 0:
        return np.array(head, order="F")
    return _grow(G, head, active[:m], tail, l2)


def _cho_solve(R, b):
    return lapack.dpotrs(R, b, lower=0)[0]


def _guess(G, c, l1, l2, w, positive, thresh, predicted=None):
    """Verified solution from the warm start ``w``, or None when the guess does not settle.

    ``l2`` differs at every penalty, so the first solve factors ``G_AA + l2 I`` afresh; names
    that join within the penalty extend that factor instead of refactoring it (their
    order in the active set is the order they joined, which only moves rounding).
    ``predicted`` (names, signs) join the warm start before the first solve; a wrong
    prediction costs a round, never exactness, since every guess is verified.

    Returns
    -------
    (coef, rounds, r) or None
        ``r = c - G coef - l2 coef``, the correlations at the solution.
    """
    k = len(c)
    active = np.flatnonzero(w)
    signs = np.sign(w[active])
    if predicted is not None and len(predicted[0]):
        active = np.concatenate([active, predicted[0]])
        signs = np.concatenate([signs, predicted[1]])
    x = w[active]
    R = None  # factor of the current active block, None when it must be rebuilt
    solved = False
    for rounds in range(1, _ROUNDS + 1):
        if solved:
            full = _embed(x, active, k)
            # Reading the active rows beats a full product only when they are few.
            fitted = x @ G[active] if 2 * len(active) < k else G @ full
            r = c - fitted - l2 * full
            room = r - l1 if positive else np.abs(r) - l1
            room[active] = -np.inf
            viol = np.flatnonzero(room > thresh)
            if len(viol) == 0:
                return full, rounds, r
            new_signs = np.ones(len(viol)) if positive else np.sign(r[viol])
            R = _grow(G, R, active, viol, l2) if R is not None else None
            active = np.concatenate([active, viol])
            signs = np.concatenate([signs, new_signs])
        if len(active) == 0:
            x, solved = np.zeros(0), True
            continue
        if R is None:
            R = _factor(G, active, l2)
        x = _cho_solve(R, c[active] - l1 * signs)
        keep = np.sign(x) == signs
        solved = bool(keep.all())
        if not solved:
            # Names whose weight changed sign leave; the others are refitted without them.
            R = _shrink(G, R, active, keep, l2)
            active, signs = active[keep], signs[keep]
    return None


def _embed(x, active, k):
    out = np.zeros(k)
    out[active] = x
    return out


def enet_path_gram(
    G: np.ndarray,
    c: np.ndarray,
    alphas: np.ndarray,
    l1_ratio: float,
    *,
    positive: bool = False,
) -> tuple[np.ndarray, np.ndarray]:
    """Elastic-net solutions of ``min 0.5 w'Gw - c'w + l1 |w|_1 + 0.5 l2 |w|^2`` on a grid.

    Parameters
    ----------
    G : ndarray of shape (k, k)
        Symmetric positive semidefinite.
    c : ndarray of shape (k,)
    alphas : ndarray of shape (n_alphas,)
        Positive and decreasing.
    l1_ratio : float
        In (0, 1): ``l1 = alpha l1_ratio``, ``l2 = alpha (1 - l1_ratio)``.
    positive : bool
        Constrain ``w >= 0``.

    Returns
    -------
    coefs : ndarray of shape (n_alphas, k)
    steps : ndarray of int, shape (n_alphas,)
        Guess rounds, or feature-sign steps where the guess was handed over.
    """
    k = len(c)
    coefs = np.zeros((len(alphas), k))
    steps = np.zeros(len(alphas), dtype=int)
    scale = float(np.max(np.abs(c))) if k else 0.0
    if scale == 0.0:
        return coefs, steps
    thresh = _TOL * scale
    w = np.zeros(k)
    history: list = []  # (alpha, correlations at its solution), the last two penalties
    for i, alpha in enumerate(alphas):
        l1, l2 = alpha * l1_ratio, alpha * (1.0 - l1_ratio)
        found = _guess(G, c, l1, l2, w, positive, thresh, _predict(history, alpha, l1, w, positive))
        if found is None:
            w, steps[i] = solve_enet(G, c, l1, l2, positive=positive, start=w)
            history = []
        else:
            w, steps[i], r = found
            history = (history + [(alpha, r)])[-2:]
        coefs[i] = w
    return coefs, steps


def _predict(history, alpha, l1, w, positive):
    """Names expected to join at ``alpha``: the correlations of the last two solutions,
    continued linearly in the penalty, past ``l1`` (the joins of one step are found in one
    solve instead of two)."""
    if len(history) < 2:
        return None
    (a2, r2), (a1, r1) = history
    r = r1 + (r1 - r2) * ((alpha - a1) / (a1 - a2))
    room = r - l1 if positive else np.abs(r) - l1
    room[w != 0] = -np.inf
    names = np.flatnonzero(room > 0.0)
    return names, (np.ones(len(names)) if positive else np.sign(r[names]))
