"""Invented factor-model returns shared by the benchmark scripts (seeded, so every run sees the
same data)."""

from __future__ import annotations

import numpy as np


def factor_returns(n: int, p: int, seed: int) -> tuple[np.ndarray, np.ndarray]:
    """Invented daily returns: a market factor, 10 sector factors and idiosyncratic noise.

    The benchmark is the cap-weighted sum of a random 30% of the constituents plus 1e-3 daily
    noise, which puts the CV minimum inside the default grid for all three sizes.

    Returns
    -------
    X : ndarray of shape (n, p)
    y : ndarray of shape (n,)
    """
    rng = np.random.default_rng(seed)
    n_sectors = 10
    market = rng.normal(3e-4, 0.01, n)
    sectors = rng.normal(0.0, 0.006, (n, n_sectors))
    sector_of = rng.integers(0, n_sectors, p)
    beta = rng.normal(1.0, 0.3, p)
    loading = rng.normal(1.0, 0.3, p)
    idio = rng.normal(0.0, 1.0, (n, p)) * rng.uniform(0.008, 0.025, p)
    X = market[:, None] * beta + sectors[:, sector_of] * loading + idio
    caps = rng.lognormal(0.0, 1.0, p)
    members = rng.choice(p, max(5, int(0.3 * p)), replace=False)
    w = np.zeros(p)
    w[members] = caps[members] / caps[members].sum()
    return X, X @ w + rng.normal(0.0, 1e-3, n)
