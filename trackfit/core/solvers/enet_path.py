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

from trackfit.core.solvers.active_set import solve_enet

# Correlations above l1 by more than this, relative to max|c|, are violations.
_TOL = 1e-13
_ROUNDS = 12


def _guess(G, c, l1, l2, w, positive, thresh):
    """Verified solution from the warm start ``w``, or None when the guess does not settle."""
    k = len(c)
    active = np.flatnonzero(w)
    signs = np.sign(w[active])
    x = w[active]
    # Check the warm start first: the names that enter at this penalty join before any solve.
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
                return _embed(x, active, k), rounds
            order = np.argsort(np.concatenate([active, viol]), kind="stable")
            new_signs = np.ones(len(viol)) if positive else np.sign(r[viol])
            active = np.concatenate([active, viol])[order]
            signs = np.concatenate([signs, new_signs])[order]
        if len(active) == 0:
            x, solved = np.zeros(0), True
            continue
        GA = G[np.ix_(active, active)]
        GA.ravel()[:: len(active) + 1] += l2
        x = linalg.cho_solve(
            linalg.cho_factor(GA, check_finite=False), c[active] - l1 * signs, check_finite=False
        )
        keep = np.sign(x) == signs
        solved = bool(keep.all())
        if not solved:
            # Names whose weight changed sign leave; the others are refitted without them.
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
    for i, alpha in enumerate(alphas):
        l1, l2 = alpha * l1_ratio, alpha * (1.0 - l1_ratio)
        found = _guess(G, c, l1, l2, w, positive, thresh)
        if found is None:
            w, steps[i] = solve_enet(G, c, l1, l2, positive=positive, start=w)
        else:
            w, steps[i] = found
        coefs[i] = w
    return coefs, steps
