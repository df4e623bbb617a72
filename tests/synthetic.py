"""Seeded synthetic return histories for the core tests; each sample knows its true weights.

All data here is invented for ground-truth tests: the generators build the truth themselves.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np


@dataclass(frozen=True)
class Sample:
    """Constituent returns, a benchmark built from them, and the weights that built it.

    Attributes
    ----------
    X : ndarray of shape (n_periods, n_assets)
    y : ndarray of shape (n_periods,)
    weights : ndarray of shape (n_assets,)
        True weights: ``y = X @ weights + noise``; exactly 0 outside the support.
    """

    X: np.ndarray
    y: np.ndarray
    weights: np.ndarray


def _true_weights(rng: np.random.Generator, n_assets: int, n_held: int, n_short: int) -> np.ndarray:
    held = np.sort(rng.choice(n_assets, n_held, replace=False))
    w = np.zeros(n_assets)
    w[held] = rng.dirichlet(np.full(n_held, 2.0))
    # A few negative weights, so that a long-only fit must differ from an unconstrained one.
    w[held[:n_short]] *= -1.0
    return w


def factor_sample(
    seed: int,
    n_periods: int,
    n_assets: int,
    *,
    n_factors: int = 3,
    n_held: int | None = None,
    n_short: int = 0,
    noise: float = 0.003,
) -> Sample:
    """Correlated monthly-like returns from a factor model, with non-zero means.

    Parameters
    ----------
    seed : int
        Seed of :func:`numpy.random.default_rng`.
    n_held : int, optional
        Size of the true support (default a quarter of the constituents, at least 2).
    n_short : int
        How many of the held constituents get a negative true weight.
    noise : float
        Standard deviation of the benchmark's own noise (0 for an exact weighted sum).
    """
    rng = np.random.default_rng(seed)
    n_held = max(2, n_assets // 4) if n_held is None else n_held
    factors = rng.normal(0.005, 0.04, (n_periods, n_factors))
    loadings = rng.normal(1.0, 0.5, (n_assets, n_factors)) / n_factors
    X = 0.002 + factors @ loadings.T + rng.normal(0.0, 0.02, (n_periods, n_assets))
    w = _true_weights(rng, n_assets, n_held, n_short)
    y = X @ w + noise * rng.normal(size=n_periods)
    return Sample(X=X, y=y, weights=w)


def independent_sample(
    seed: int,
    n_periods: int,
    n_assets: int,
    *,
    n_held: int,
    noise: float = 0.0,
) -> Sample:
    """Nearly uncorrelated returns (mean 0.4%, sd 5%), so a lasso can find the true support."""
    rng = np.random.default_rng(seed)
    X = rng.normal(0.004, 0.05, (n_periods, n_assets))
    w = _true_weights(rng, n_assets, n_held, 0)
    y = X @ w + noise * rng.normal(size=n_periods)
    return Sample(X=X, y=y, weights=w)
