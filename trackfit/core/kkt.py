"""Optimality residuals: how far a solution is from satisfying its KKT conditions."""

from __future__ import annotations

import numpy as np

from trackfit.core.gram import GramData


def enet_kkt_residual(
    data: GramData, coef: np.ndarray, l1: float, l2: float, *, positive: bool = False
) -> float:
    """Largest KKT violation of an elastic-net solution, relative to ``max|X_s'y_s| / n``.

    The problem is ``min 0.5 w'Gw - c'w + l1 |w|_1 + 0.5 l2 |w|^2`` (optionally ``w >= 0``),
    scikit-learn's elastic-net objective divided through, with ``l1 = alpha * l1_ratio`` and
    ``l2 = alpha * (1 - l1_ratio)``. With ``r = c - Gw - l2 w`` the conditions are
    ``r_j = l1 sign(w_j)`` where ``w_j != 0`` and ``|r_j| <= l1`` (``r_j <= l1`` when
    positive) where ``w_j == 0``.

    Parameters
    ----------
    data : GramData
    coef : ndarray of shape (k,)
        Standardized weights over ``data.columns``.

    Returns
    -------
    float
        0 for an exact solution; 0 as well when ``c == 0`` and ``coef == 0``.
    """
    r = data.xty - data.gram @ coef - l2 * coef
    active = coef != 0
    viol = np.zeros_like(r)
    viol[active] = np.abs(r[active] - l1 * np.sign(coef[active]))
    inactive = ~active
    excess = r[inactive] - l1 if positive else np.abs(r[inactive]) - l1
    viol[inactive] = np.maximum(excess, 0.0)
    if positive:
        viol = np.maximum(viol, np.maximum(-coef, 0.0))
    scale = float(np.max(np.abs(data.xty))) if len(r) else 0.0
    worst = float(np.max(viol)) if len(r) else 0.0
    if scale == 0.0:
        return worst
    return worst / scale
