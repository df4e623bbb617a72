"""The exact lasso path by least angle regression with the lasso modification, on a Gram matrix.

Between knots the lasso solution is linear in the penalty, so the path is followed knot to
knot and the solution at any penalty read by linear interpolation (Efron, Hastie, Johnstone and
Tibshirani, "Least angle regression", Ann. Statist. 2004). The Cholesky factor of the active
block is updated in O(k^2) when a name joins (one triangular solve) or leaves (a rank-one
update of the trailing block), never refactored. With ``positive`` only positive correlations
may join, which gives the positive lasso path (same paper, section 3.4).

The path never stops early: it runs to the smallest penalty asked for. When a joining name
would make the active block singular to rounding (duplicate or dependent columns), the path
stops there and reports where, so the caller can finish with the active-set solver.

The knot loop is compiled by numba. A path has hundreds of knots, each a few O(k) passes and
two triangular solves: written with numpy, the fixed cost of each of its twenty or so calls
(about a microsecond) outweighed the arithmetic at a few hundred names. Compiled, each knot
is the arithmetic alone (:mod:`trackfit.core.solvers.lars_compiled`, imported on the first
path, so commands that fit no lasso never load numba). The compiled code is cached beside that
file (or in numba's user cache when that is read-only), so only the first run on a machine
pays for compiling it.
"""

from __future__ import annotations

import numpy as np


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
    if k == 0 or m == 0:
        return np.zeros((m, k)), np.zeros(m, dtype=np.int64), m
    from trackfit.core.solvers.lars_compiled import lasso_path  # loads numba on first use

    cap = k if max_active is None else max(1, min(k, int(max_active)))
    coefs, steps, solved = lasso_path(
        np.ascontiguousarray(G, dtype=float),
        np.ascontiguousarray(c, dtype=float),
        np.ascontiguousarray(alphas, dtype=float),
        bool(positive),
        cap,
    )
    return coefs, steps, int(solved)
