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


@dataclass(frozen=True)
class RowBlocks:
    """Unscaled sufficient statistics of consecutive row blocks.

    The statistics of any run of whole blocks are sums of these, so the Gram matrices of many
    training windows (cross-validation folds, or the windows of a walk-forward) cost one pass
    over the rows, and a scaling is applied afterwards as a diagonal rescaling.

    Attributes
    ----------
    bounds : ndarray of int, shape (n_blocks + 1,)
        Increasing row boundaries; block ``b`` holds rows ``[bounds[b], bounds[b + 1])``.
    xtx : ndarray of shape (n_blocks, n_assets, n_assets)
        ``X_b'X_b`` of each block.
    xty : ndarray of shape (n_blocks, n_assets)
        ``X_b'y_b``.
    yty : ndarray of shape (n_blocks,)
        ``y_b'y_b``.
    """

    bounds: np.ndarray
    xtx: np.ndarray
    xty: np.ndarray
    yty: np.ndarray


def row_blocks(X: np.ndarray, y: np.ndarray, bounds) -> RowBlocks:
    """Statistics of the blocks of rows between consecutive ``bounds``.

    Parameters
    ----------
    X : ndarray of shape (n_periods, n_assets)
    y : ndarray of shape (n_periods,)
    bounds : sequence of int
        Increasing boundaries within ``[0, n_periods]``.
    """
    bounds = np.asarray(bounds, dtype=int)
    p, nb = X.shape[1], len(bounds) - 1
    xtx = np.empty((nb, p, p))
    xty = np.empty((nb, p))
    yty = np.empty(nb)
    for b in range(nb):
        Xb, yb = X[bounds[b] : bounds[b + 1]], y[bounds[b] : bounds[b + 1]]
        np.matmul(Xb.T, Xb, out=xtx[b])
        xty[b] = Xb.T @ yb
        yty[b] = float(yb @ yb)
    return RowBlocks(bounds=bounds, xtx=xtx, xty=xty, yty=yty)


def gram_from_blocks(blocks: RowBlocks, start: int, stop: int, scaling: Scaling) -> GramData:
    """:class:`GramData` of rows ``[start, stop)``, which must be block boundaries.

    Equal to :func:`standardized_gram` on those rows up to rounding: with ``D = 1 / x_scale``,
    ``G = D (X'X / n) D`` and ``c = D X'y / (n y_scale)``.
    """
    first = int(np.searchsorted(blocks.bounds, start))
    last = int(np.searchsorted(blocks.bounds, stop))
    if blocks.bounds[first] != start or blocks.bounds[last] != stop or last <= first:
        raise ValueError(f"rows [{start}, {stop}) are not a run of whole blocks")
    n = stop - start
    columns = np.flatnonzero(scaling.usable)
    inv = 1.0 / scaling.x_scale[columns]
    full = len(columns) == blocks.xtx.shape[1]
    gram = np.sum(blocks.xtx[first:last], axis=0) if last - first > 1 else blocks.xtx[first].copy()
    if not full:
        gram = gram[np.ix_(columns, columns)]
    gram *= inv[:, None] * (1.0 / n)
    gram *= inv[None, :]
    gram += gram.T
    gram *= 0.5  # exactly symmetric, so eigen and Cholesky solvers agree
    xty = blocks.xty[first:last].sum(axis=0)[columns] * inv / (n * scaling.y_scale)
    yty = float(blocks.yty[first:last].sum()) / (n * scaling.y_scale**2)
    return GramData(gram=gram, xty=xty, yty=yty, n=n, columns=columns)
