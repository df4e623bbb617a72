"""Tracking metrics of a portfolio against its benchmark.

STUB: the dataclass is the agreed interface; ``tracking_metrics`` is being written.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np


@dataclass(frozen=True)
class TrackingMetrics:
    """How a portfolio tracked its benchmark over some rows (all annualized where it says so)."""

    periods: int
    tracking_error: float  # std(active, ddof=1) * sqrt(periods_per_year)
    mean_active: float  # mean(active) * periods_per_year
    information_ratio: float  # mean_active / tracking_error (nan when tracking_error == 0)
    sum_sq_active: float  # sum(active ** 2)
    r_squared: float  # 1 - sum(active**2) / sum((b - mean(b))**2)
    correlation: float  # corr(portfolio, benchmark)
    beta: float  # cov(portfolio, benchmark) / var(benchmark)
    max_drawdown_active: float  # largest fall of the cumulative (summed) active return from its running peak (peak starts at 0)
    names_held: int  # count of weights != 0
    gross_exposure: float  # sum(|w|), cash excluded


def tracking_metrics(
    portfolio: np.ndarray, benchmark: np.ndarray, weights: np.ndarray, periods_per_year: int
) -> TrackingMetrics:
    raise NotImplementedError
