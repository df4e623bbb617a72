"""Penalty grids, and their extension when the best penalty lands on an edge."""

from __future__ import annotations

import numpy as np

from trackfit.core.gram import GramData

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


def penalty_grid(
    data: GramData, l1_ratio: float, count: int, min_ratio: float, *, positive: bool = False
) -> np.ndarray:
    """Decreasing log-spaced penalties.

    Lasso and elastic net (``l1_ratio > 0``): from :func:`alpha_max` down to
    ``min_ratio * alpha_max``, as scikit-learn's ``LassoCV`` builds its grid. Ridge
    (``l1_ratio == 0``): a wide grid around the scale of the Gram matrix, ignoring
    ``min_ratio``.

    Returns
    -------
    ndarray of shape (count,)
        Empty when no weight can ever enter.
    """
    if l1_ratio > 0:
        top = alpha_max(data, l1_ratio, positive=positive)
        if top == 0.0:
            return np.zeros(0)
        return np.logspace(np.log10(top), np.log10(top * min_ratio), count)
    lam = float(np.linalg.eigvalsh(data.gram)[-1]) if len(data.xty) else 1.0
    lam = lam if lam > 0 else 1.0
    return np.logspace(np.log10(lam * _RIDGE_TOP), np.log10(lam * _RIDGE_BOTTOM), count)


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
