"""Sufficient statistics of a standardized least-squares problem.

Every penalized fit in trackfit needs the data only through ``G = X_s'X_s / n``,
``c = X_s'y_s / n`` and ``y_s'y_s / n``, where ``X_s`` and ``y_s`` are the uncentered,
scaled rows. Solvers take a :class:`GramData` so that the way the statistics are built
(from rows now, from sums of row blocks later) can change without touching them.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from trackfit.core.results import Scaling


@dataclass(frozen=True)
class GramData:
    """Standardized sufficient statistics over the usable columns.

    Attributes
    ----------
    gram : ndarray of shape (k, k)
        ``X_s'X_s / n`` over the ``k`` usable columns.
    xty : ndarray of shape (k,)
        ``X_s'y_s / n``.
    yty : float
        ``y_s'y_s / n``.
    n : int
        Number of rows.
    columns : ndarray of int, shape (k,)
        Positions of the usable columns among all constituents.
    """

    gram: np.ndarray
    xty: np.ndarray
    yty: float
    n: int
    columns: np.ndarray


def standardized_gram(X: np.ndarray, y: np.ndarray, scaling: Scaling) -> GramData:
    """Build :class:`GramData` from rows and a scaling fitted on the same rows.

    Parameters
    ----------
    X : ndarray of shape (n_periods, n_assets)
    y : ndarray of shape (n_periods,)
    scaling : Scaling
    """
    columns = np.flatnonzero(scaling.usable)
    Xs = X[:, columns] / scaling.x_scale[columns]
    ys = y / scaling.y_scale
    n = len(y)
    gram = Xs.T @ Xs / n
    gram = 0.5 * (gram + gram.T)  # exactly symmetric, so eigen and Cholesky solvers agree
    return GramData(gram=gram, xty=Xs.T @ ys / n, yty=float(ys @ ys) / n, n=n, columns=columns)
