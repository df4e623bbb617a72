"""Penalty grids, and their extension when the best penalty lands on an edge."""

from __future__ import annotations

import numpy as np

from trackfit.core.gram import GramData
from trackfit.core.penalties import EIGENVALUE_GRID, L1_GRID, Penalty

# Ridge grid: from 100x the largest eigenvalue of the standardized Gram (weights near zero) down
# to 1e-6 of it (weights near OLS).
_RIDGE_TOP = 1e2
_RIDGE_BOTTOM = 1e-6


def alpha_max(data: GramData, l1_ratio: float, *, positive: bool = False) -> float:
    """Smallest penalty at which every weight is zero: ``max|X_s'y_s| / (n l1_ratio)``.

    With ``positive`` only positive correlations matter. Returns 0 when no weight can
    enter (for example every correlation negative under ``positive``).
    """
    c = data.xty
    if len(c) == 0:
        return 0.0
    top = float(np.max(c)) if positive else float(np.max(np.abs(c)))
    return max(top, 0.0) / l1_ratio


def l1_grid(
    data: GramData, l1_ratio: float, count: int, min_ratio: float, *, positive: bool = False
) -> np.ndarray:
    """From :func:`alpha_max` down to ``min_ratio * alpha_max``, log-spaced, as
    scikit-learn's ``LassoCV`` builds its grid; empty when no weight can ever enter."""
    top = alpha_max(data, l1_ratio, positive=positive)
    if top == 0.0:
        return np.zeros(0)
    return np.logspace(np.log10(top), np.log10(top * min_ratio), count)


def eigenvalue_grid(
    data: GramData, l1_ratio: float, count: int, min_ratio: float, *, positive: bool = False
) -> np.ndarray:
    """A wide grid around the scale of the Gram matrix (``l1_ratio``, ``min_ratio`` and
    ``positive`` ignored): from 100x its largest eigenvalue down to 1e-6 of it."""
    lam = float(np.linalg.eigvalsh(data.gram)[-1]) if len(data.xty) else 1.0
    lam = lam if lam > 0 else 1.0
    return np.logspace(np.log10(lam * _RIDGE_TOP), np.log10(lam * _RIDGE_BOTTOM), count)


_GRIDS = {L1_GRID: l1_grid, EIGENVALUE_GRID: eigenvalue_grid}


def penalty_grid(
    data: GramData, l1_ratio: float, count: int, min_ratio: float, *, positive: bool = False
) -> np.ndarray:
    """Decreasing log-spaced penalties, by the grid rule of the mix's :class:`Penalty`.

    Lasso and elastic net (an L1 term): :func:`l1_grid`. Ridge: :func:`eigenvalue_grid`,
    which ignores ``min_ratio``.

    Returns
    -------
    ndarray of shape (count,)
        Empty when no weight can ever enter.
    """
    rule = _GRIDS[Penalty(l1_ratio).grid_rule]
    return rule(data, l1_ratio, count, min_ratio, positive=positive)


def extend_grid(alphas: np.ndarray, *, lower: bool, decades: float = 2.0) -> np.ndarray:
    """The grid continued past one edge with the same log spacing.

    Parameters
    ----------
    alphas : ndarray of shape (n,)
        Decreasing, log-spaced, n >= 2.
    lower : bool
        Extend below the smallest penalty (True) or above the largest (False).

    Returns
    -------
    ndarray
        The full, still decreasing grid.
    """
    step = np.log10(alphas[0]) - np.log10(alphas[1])
    extra = max(1, int(round(decades / step)))
    if lower:
        tail = np.log10(alphas[-1]) - step * np.arange(1, extra + 1)
        return np.concatenate([alphas, 10.0**tail])
    head = np.log10(alphas[0]) + step * np.arange(extra, 0, -1)
    return np.concatenate([10.0**head, alphas])
