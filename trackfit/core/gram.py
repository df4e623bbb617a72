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


# Tile of the in-place symmetrization: a whole-matrix ``G + G.T`` walks one operand across
# rows, which for p in the thousands measured 10x slower than tiles that fit in cache.
_TILE = 256


def _symmetrize(gram: np.ndarray) -> None:
    """``gram <- (gram + gram.T) / 2`` in place, tile by tile, exactly symmetric afterwards."""
    p = len(gram)
    for i in range(0, p, _TILE):
        for j in range(i, p, _TILE):
            a = gram[i : i + _TILE, j : j + _TILE]
            if i == j:
                a += a.T.copy()  # a_ij + a_ji == a_ji + a_ij: symmetric as it stands
                a *= 0.5
            else:
                b = gram[j : j + _TILE, i : i + _TILE]
                a += b.T
                a *= 0.5
                b[...] = a.T


def _touched(shape) -> np.ndarray:
    """A new array written once in memory order: later scattered writes (BLAS filling the
    other triangle of a symmetric product) then do not each fault in a fresh page."""
    out = np.empty(shape)
    out.fill(0.0)
    return out


def standardized_gram(X: np.ndarray, y: np.ndarray, scaling: Scaling) -> GramData:
    """Build :class:`GramData` from rows and a scaling fitted on the same rows.

    Parameters
    ----------
    X : ndarray of shape (n_periods, n_assets)
    y : ndarray of shape (n_periods,)
    scaling : Scaling
    """
    # Imported here: the solvers package imports this module.
    from trackfit.core.solvers.threads import single_threaded

    columns = np.flatnonzero(scaling.usable)
    Xs = X[:, columns] / scaling.x_scale[columns]
    ys = y / scaling.y_scale
    n = len(y)
    with single_threaded():  # measured faster than two threads even at 2520 x 500
        gram = np.matmul(Xs.T, Xs, out=_touched((len(columns), len(columns))))
        xty = Xs.T @ ys
    gram /= n
    _symmetrize(gram)  # exactly symmetric, so eigen and Cholesky solvers agree
    return GramData(gram=gram, xty=xty / n, yty=float(ys @ ys) / n, n=n, columns=columns)


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
    cumulative : bool
        When True (built by :func:`prefix_blocks`), entry ``b`` of ``xtx``, ``xty`` and
        ``yty`` holds the sum over every row before ``bounds[b]`` instead (``n_blocks + 1``
        entries), so the statistics of any run of blocks are one difference.
    """

    bounds: np.ndarray
    xtx: np.ndarray
    xty: np.ndarray
    yty: np.ndarray
    cumulative: bool = False


def row_blocks(X: np.ndarray, y: np.ndarray, bounds) -> RowBlocks:
    """Statistics of the blocks of rows between consecutive ``bounds``.

    Parameters
    ----------
    X : ndarray of shape (n_periods, n_assets)
    y : ndarray of shape (n_periods,)
    bounds : sequence of int
        Increasing boundaries within ``[0, n_periods]``.
    """
    from trackfit.core.solvers.threads import single_threaded  # the solvers import this module

    bounds = np.asarray(bounds, dtype=int)
    p, nb = X.shape[1], len(bounds) - 1
    xtx = _touched((nb, p, p))
    xty = np.empty((nb, p))
    yty = np.empty(nb)
    with single_threaded():  # measured faster than two threads even at 2520 x 500
        for b in range(nb):
            Xb, yb = X[bounds[b] : bounds[b + 1]], y[bounds[b] : bounds[b + 1]]
            np.matmul(Xb.T, Xb, out=xtx[b])
            xty[b] = Xb.T @ yb
            yty[b] = float(yb @ yb)
    return RowBlocks(bounds=bounds, xtx=xtx, xty=xty, yty=yty)


def prefix_blocks(X: np.ndarray, y: np.ndarray, bounds) -> RowBlocks:
    """Running sums of the block statistics, for many overlapping windows of one series.

    A walk-forward cross-validates many trailing windows whose folds all start and stop on a
    few shared boundaries; with running sums the statistics of any run of blocks cost one
    subtraction of ``p x p`` arrays, whatever its length, instead of a sum over its blocks.
    The difference of two running sums rounds like a sum over all rows before the window, a
    few units of ``1e-16`` of the series' own statistics: far below the 1e-8 accuracy asked
    of every solution, which is checked on the statistics actually used.

    Parameters
    ----------
    X : ndarray of shape (n_periods, n_assets)
    y : ndarray of shape (n_periods,)
    bounds : sequence of int
        Increasing boundaries within ``[0, n_periods]``; see :func:`trackfit.core.cv.window_bounds`.

    Returns
    -------
    RowBlocks
        With ``cumulative=True``: arrays of ``len(bounds)`` entries, the first all zero.
    """
    from trackfit.core.solvers.threads import single_threaded

    bounds = np.asarray(bounds, dtype=int)
    p, nb = X.shape[1], len(bounds)
    xtx = _touched((nb, p, p))
    xty = np.zeros((nb, p))
    yty = np.zeros(nb)
    with single_threaded():
        for b in range(1, nb):
            Xb, yb = X[bounds[b - 1] : bounds[b]], y[bounds[b - 1] : bounds[b]]
            np.matmul(Xb.T, Xb, out=xtx[b])
            xtx[b] += xtx[b - 1]
            xty[b] = Xb.T @ yb + xty[b - 1]
            yty[b] = float(yb @ yb) + yty[b - 1]
    return RowBlocks(bounds=bounds, xtx=xtx, xty=xty, yty=yty, cumulative=True)


def gram_from_blocks(blocks: RowBlocks, start: int, stop: int, scaling: Scaling) -> GramData:
    """:class:`GramData` of rows ``[start, stop)``, which must be block boundaries.

    Equal to :func:`standardized_gram` on those rows up to rounding: with ``D = 1 / x_scale``,
    ``G = D (X'X / n) D`` and ``c = D X'y / (n y_scale)``.
    """
    first = int(np.searchsorted(blocks.bounds, start))
    last = int(np.searchsorted(blocks.bounds, stop))
    if (
        last >= len(blocks.bounds)
        or blocks.bounds[first] != start
        or blocks.bounds[last] != stop
        or last <= first
    ):
        raise ValueError(
            f"rows [{start}, {stop}) are not a run of whole blocks; build the blocks on "
            "bounds that include both ends (trackfit.core.cv.window_bounds gives them for "
            "cross-validation windows)"
        )
    n = stop - start
    if blocks.cumulative:
        gram = blocks.xtx[last] - blocks.xtx[first]
        xty_sum = blocks.xty[last] - blocks.xty[first]
        yty_sum = float(blocks.yty[last] - blocks.yty[first])
    else:
        gram = (
            np.sum(blocks.xtx[first:last], axis=0) if last - first > 1 else blocks.xtx[first].copy()
        )
        xty_sum = blocks.xty[first:last].sum(axis=0)
        yty_sum = float(blocks.yty[first:last].sum())
    return _standardize(gram, xty_sum, yty_sum, n, scaling)


def _standardize(gram, xty_sum, yty_sum, n, scaling) -> GramData:
    """:class:`GramData` from unscaled sums over ``n`` rows; ``gram`` may be overwritten."""
    columns = np.flatnonzero(scaling.usable)
    inv = 1.0 / scaling.x_scale[columns]
    if len(columns) != len(gram):
        gram = gram[np.ix_(columns, columns)]
    gram *= inv[:, None] * (1.0 / n)
    gram *= inv[None, :]
    _symmetrize(gram)  # exactly symmetric, so eigen and Cholesky solvers agree
    xty = xty_sum[columns] * inv / (n * scaling.y_scale)
    yty = yty_sum / (n * scaling.y_scale**2)
    return GramData(gram=gram, xty=xty, yty=yty, n=n, columns=columns)


def window_grams(X: np.ndarray, y: np.ndarray, spans, scalings) -> list[GramData]:
    """:class:`GramData` of several row ranges of one data set, in one pass over its rows.

    Each product of a block of rows between consecutive range ends is computed once, into
    one work array, and added to every range that holds it: besides one ``p x p`` array
    per range, only one more is allocated (on some machines a first write to fresh memory
    costs as much as the products themselves).

    Parameters
    ----------
    X : ndarray of shape (n_periods, n_assets)
    y : ndarray of shape (n_periods,)
    spans : sequence of (int, int)
        Half-open row ranges ``[start, stop)``, non-empty.
    scalings : sequence of Scaling
        One per range, fitted on (or chosen for) its rows.
    """
    from trackfit.core.solvers.threads import single_threaded

    p = X.shape[1]
    bounds = sorted({b for span in spans for b in span})
    sums = [(_touched((p, p)), np.zeros(p), [0.0]) for _ in spans]
    work = _touched((p, p)) if len(bounds) > 2 else None
    with single_threaded():
        for a, b in zip(bounds[:-1], bounds[1:]):
            inside = [w for w, (start, stop) in enumerate(spans) if start <= a and b <= stop]
            if not inside:
                continue
            Xb, yb = X[a:b], y[a:b]
            block = np.matmul(Xb.T, Xb, out=work if work is not None else sums[inside[0]][0])
            xty, yty = Xb.T @ yb, float(yb @ yb)
            for w in inside:
                gram, xty_sum, yty_sum = sums[w]
                if gram is not block:
                    gram += block
                xty_sum += xty
                yty_sum[0] += yty
    return [
        _standardize(gram, xty_sum, yty_sum[0], stop - start, scaling)
        for (gram, xty_sum, yty_sum), (start, stop), scaling in zip(sums, spans, scalings)
    ]
