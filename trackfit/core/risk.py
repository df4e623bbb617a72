"""Ex-ante tracking error: a shrunk covariance of the window and the risk it puts on weights.

The covariance is the Ledoit-Wolf estimator (Ledoit and Wolf 2004, "A well-conditioned
estimator for large-dimensional covariance matrices", J. Multivariate Analysis 88:365-411):
the sample covariance of the centered rows (divided by n) shrunk towards ``mu * I`` with the
intensity of their Lemma 3.3 and Theorem 3.4. The sample covariance alone is singular when
there are more series than rows, so every tracking error it gave would be too small.

The tracking error of weights ``w`` is that of the active vector ``a = (w, -1)`` over
``[constituents, benchmark]``; cash has no excess return, so it has no term. Its Euler
allocation ``a_i (S a)_i / sqrt(a' S a)`` splits it into terms that add up to it exactly.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np


@dataclass(frozen=True)
class ShrunkCovariance:
    """A Ledoit-Wolf covariance.

    Attributes
    ----------
    covariance : ndarray of shape (n_series, n_series)
    sample : ndarray of shape (n_series, n_series)
        The sample covariance of the centered rows, divided by n, before shrinking.
    shrinkage : float
        Weight on the target ``mu * I``, in [0, 1].
    mu : float
        Mean variance of the sample covariance (its trace over ``n_series``).
    """

    covariance: np.ndarray
    sample: np.ndarray
    shrinkage: float
    mu: float


def ledoit_wolf(rows: np.ndarray) -> ShrunkCovariance:
    """The Ledoit-Wolf shrunk covariance of the columns of ``rows``.

    Parameters
    ----------
    rows : ndarray of shape (n_periods, n_series)
        One row per period; the column means are removed first.

    Returns
    -------
    ShrunkCovariance

    Raises
    ------
    ValueError
        If ``rows`` is not two-dimensional with at least one row and one column, or holds a
        value that is not finite.
    """
    x = np.asarray(rows, dtype=float)
    if x.ndim != 2 or x.shape[0] < 1 or x.shape[1] < 1:
        raise ValueError(f"ledoit_wolf needs a 2-D array with rows and columns; got {x.shape}.")
    if not np.all(np.isfinite(x)):
        raise ValueError("ledoit_wolf needs finite values only.")
    n, p = x.shape
    x = x - x.mean(axis=0)
    sample = (x.T @ x) / n
    mu = float(np.trace(sample)) / p
    if p == 1:  # the target is the sample variance itself: nothing to shrink
        return ShrunkCovariance(covariance=sample.copy(), sample=sample, shrinkage=0.0, mu=mu)
    # Frobenius norms are divided by p as in the paper; the common 1/p cancels in the ratio.
    norm2 = float(np.sum(sample * sample))
    d2 = (norm2 - p * mu * mu) / p  # ||S - mu I||^2
    # b-bar^2 = (1/n^2) sum_k ||x_k x_k' - S||^2, expanded so no p-by-p matrix per row is formed.
    fourth = float(np.sum(np.sum(x * x, axis=1) ** 2))
    b2_bar = (fourth - n * norm2) / (p * n * n)
    b2 = min(b2_bar, d2)
    shrinkage = 0.0 if b2 == 0.0 else b2 / d2
    covariance = (1.0 - shrinkage) * sample
    covariance[np.diag_indices(p)] += shrinkage * mu
    return ShrunkCovariance(covariance=covariance, sample=sample, shrinkage=float(shrinkage), mu=mu)


@dataclass(frozen=True)
class ExAnteRisk:
    """Annualized ex-ante tracking error of held weights and its Euler allocation.

    ``sum(by_name) + benchmark == tracking_error`` and, when groups were given,
    ``sum(by_group) + benchmark == tracking_error`` (up to rounding).

    Attributes
    ----------
    tracking_error : float
        ``sqrt(a' S a * periods_per_year)``, decimal.
    by_name : ndarray of shape (n_assets,)
        Each constituent's contribution (zero where its weight is zero).
    benchmark : float
        The benchmark's own term (its active weight is -1).
    groups : tuple of (str or None)
        Group labels in sorted order, then None for the names in no group when there are any;
        empty when no groups were given.
    by_group : ndarray of shape (n_groups,)
        Sum of the members' contributions, in ``groups`` order.
    group_index : ndarray of int, shape (n_assets,)
        Position in ``groups`` of each name's group; -1 for every name when no groups were
        given.
    sample_tracking_error : float
        The same from the unshrunk sample covariance: the standard deviation (divisor n) of
        the window's active returns, annualized. The target ``mu * I`` adds
        ``shrinkage * mu * a'a`` to the variance, which for a close tracker can be most of it.
    shrinkage : float
        Ledoit-Wolf intensity of the covariance used.
    n_periods : int
        Rows the covariance was estimated on.
    periods_per_year : int
    """

    tracking_error: float
    by_name: np.ndarray
    benchmark: float
    groups: tuple[str | None, ...]
    by_group: np.ndarray
    group_index: np.ndarray
    sample_tracking_error: float
    shrinkage: float
    n_periods: int
    periods_per_year: int


def ex_ante_risk(
    constituents: np.ndarray,
    benchmark: np.ndarray,
    weights: np.ndarray,
    *,
    periods_per_year: int,
    groups: Sequence[str | None] | None = None,
) -> ExAnteRisk:
    """Ex-ante tracking error of ``weights`` from the Ledoit-Wolf covariance of the rows.

    Parameters
    ----------
    constituents : ndarray of shape (n_periods, n_assets)
        Returns (excess of the risk-free rate when one is used).
    benchmark : ndarray of shape (n_periods,)
    weights : ndarray of shape (n_assets,)
        Weights held; what they leave in cash has no term.
    periods_per_year : int
        For annualizing.
    groups : sequence of (str or None), length n_assets, optional
        Each name's group label, None for a name in no group.

    Returns
    -------
    ExAnteRisk

    Raises
    ------
    ValueError
        If the shapes do not agree or ``periods_per_year`` is not positive.
    """
    X = np.asarray(constituents, dtype=float)
    y = np.asarray(benchmark, dtype=float)
    w = np.asarray(weights, dtype=float)
    if X.ndim != 2 or y.shape != (X.shape[0],) or w.shape != (X.shape[1],):
        raise ValueError(
            f"ex_ante_risk needs constituents (n, p), benchmark (n,) and weights (p,); got "
            f"{X.shape}, {y.shape} and {w.shape}."
        )
    if periods_per_year < 1:
        raise ValueError(f"periods_per_year must be positive; got {periods_per_year}.")
    if groups is not None and len(groups) != w.size:
        raise ValueError(f"groups has {len(groups)} labels for {w.size} weights.")
    shrunk = ledoit_wolf(np.column_stack([X, y]))
    a = np.append(w, -1.0)
    sa = shrunk.covariance @ a
    variance = float(a @ sa)
    scale = np.sqrt(periods_per_year)
    if variance > 0.0:
        te = np.sqrt(variance) * scale
        terms = a * sa / np.sqrt(variance) * scale
    else:  # only when every series is constant: no risk to allocate
        te, terms = 0.0, np.zeros_like(a)
    labels: tuple[str | None, ...] = ()
    sums = np.zeros(0)
    index = np.full(w.size, -1, dtype=int)
    if groups is not None:
        named = sorted({g for g in groups if g is not None})
        labels = (*named, None) if any(g is None for g in groups) else tuple(named)
        at = {g: k for k, g in enumerate(labels)}
        sums = np.zeros(len(labels))
        index = np.array([at[g] for g in groups], dtype=int)
        np.add.at(sums, index, terms[:-1])
    return ExAnteRisk(
        tracking_error=float(te),
        by_name=terms[:-1],
        benchmark=float(terms[-1]),
        groups=labels,
        by_group=sums,
        group_index=index,
        sample_tracking_error=float(np.sqrt(max(float(a @ shrunk.sample @ a), 0.0)) * scale),
        shrinkage=shrunk.shrinkage,
        n_periods=int(X.shape[0]),
        periods_per_year=int(periods_per_year),
    )
