"""The solver interface: standardized statistics and penalties in, weights and diagnostics out.

A solver never sees files, dates, names or original units. Anything that implements
:class:`PathSolver` can replace the default engine without touching the rest of trackfit.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Protocol

import numpy as np

from trackfit.core.gram import GramData


@dataclass(frozen=True)
class PathSolution:
    """Solutions along a penalty path.

    Attributes
    ----------
    coefs : ndarray of shape (n_alphas, k)
        Standardized weights over ``GramData.columns``, one row per penalty.
    kkt_residuals : ndarray of shape (n_alphas,)
        Relative KKT residual of each row (see :func:`trackfit.core.kkt.enet_kkt_residual`).
    iterations : ndarray of int, shape (n_alphas,)
        Solver steps spent on each penalty.
    """

    coefs: np.ndarray
    kkt_residuals: np.ndarray
    iterations: np.ndarray


class PathSolver(Protocol):
    """Solves ``min 0.5 w'Gw - c'w + alpha * (l1_ratio |w|_1 + 0.5 (1 - l1_ratio) |w|^2)``.

    This is scikit-learn's elastic-net objective (``1/(2n) |y - Xw|^2 + ...``) up to a constant.
    """

    def path(
        self, data: GramData, alphas: np.ndarray, l1_ratio: float, *, positive: bool = False
    ) -> PathSolution:
        """Solve for every penalty in ``alphas`` (decreasing), ``l1_ratio`` in [0, 1]."""
        ...
