"""Tracking metrics of a portfolio against its benchmark."""

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
    """Measure how closely ``portfolio`` followed ``benchmark``.

    With ``a = portfolio - benchmark`` (the active return), ``b = benchmark``,
    ``p = portfolio``, ``n = len(a)`` and ``k = periods_per_year``:

    - ``tracking_error = std(a, ddof=1) * sqrt(k)``; exactly 0 when ``a`` is constant;
    - ``mean_active = mean(a) * k``;
    - ``information_ratio = mean_active / tracking_error``; nan when ``tracking_error == 0``;
    - ``sum_sq_active = sum(a ** 2)``;
    - ``r_squared = 1 - sum(a ** 2) / sum((b - mean(b)) ** 2)``; nan when ``b`` is constant;
    - ``correlation`` = Pearson correlation of ``p`` and ``b``; nan when either is constant;
    - ``beta = cov(p, b) / var(b)``, both with ddof=1; nan when ``b`` is constant;
    - ``max_drawdown_active = max_t (peak_t - A_t)`` with ``A_t = a_1 + ... + a_t`` and
      ``peak_t = max(0, A_1, ..., A_t)`` (the peak starts at 0, before the first period);
      always >= 0, and 0 for no rows;
    - ``names_held = count(weights != 0)``, exactly, with no display threshold;
    - ``gross_exposure = sum(|weights|)``, cash excluded.

    With fewer than two rows the statistics that need two (tracking error, information
    ratio, r_squared, correlation, beta) are nan; ``mean_active`` is nan for no rows.

    Parameters
    ----------
    portfolio : ndarray of shape (n_periods,)
        Per-period portfolio returns (decimal).
    benchmark : ndarray of shape (n_periods,)
        Per-period benchmark returns, same rows and units.
    weights : ndarray of shape (n_assets,)
        Weights held, cash excluded.
    periods_per_year : int
        Periods in a year, for annualizing (12 for monthly rows, for example).

    Returns
    -------
    TrackingMetrics

    Raises
    ------
    ValueError
        If the arrays are not one-dimensional, ``portfolio`` and ``benchmark`` differ in
        length, or ``periods_per_year`` is not a positive integer.
    """
    p = np.asarray(portfolio, dtype=float)
    b = np.asarray(benchmark, dtype=float)
    w = np.asarray(weights, dtype=float)
    for label, arr in (("portfolio", p), ("benchmark", b), ("weights", w)):
        if arr.ndim != 1:
            raise ValueError(
                f"The '{label}' parameter of tracking_metrics must be a 1-d array. "
                f"Got shape {arr.shape}."
            )
    if p.shape != b.shape:
        raise ValueError(
            "The 'portfolio' and 'benchmark' parameters of tracking_metrics must have the "
            f"same length. Got {p.shape[0]} and {b.shape[0]}."
        )
    if (
        isinstance(periods_per_year, bool)
        or not isinstance(periods_per_year, (int, np.integer))
        or periods_per_year < 1
    ):
        raise ValueError(
            "The 'periods_per_year' parameter of tracking_metrics must be an int >= 1. "
            f"Got {periods_per_year!r}."
        )

    n = p.shape[0]
    k = int(periods_per_year)
    active = p - b
    nan = float("nan")

    mean_active = float(np.mean(active)) * k if n >= 1 else nan
    sum_sq_active = float(np.sum(active**2))

    tracking_error = information_ratio = r_squared = correlation = beta = nan
    if n >= 2:
        # A constant active return has no tracking error; rounding in the mean would
        # otherwise leave a tiny positive std and an absurd information ratio.
        tracking_error = 0.0 if _constant(active) else float(np.std(active, ddof=1)) * np.sqrt(k)
        if tracking_error > 0.0:
            information_ratio = mean_active / tracking_error
        if not _constant(b):
            b_dev = b - np.mean(b)
            p_dev = p - np.mean(p)
            ss_b = float(np.sum(b_dev**2))
            r_squared = 1.0 - sum_sq_active / ss_b
            # cov/var with the same ddof: the (n - 1) factors cancel.
            beta = float(np.sum(p_dev * b_dev)) / ss_b
            if not _constant(p):
                ss_p = float(np.sum(p_dev**2))
                correlation = float(np.sum(p_dev * b_dev)) / np.sqrt(ss_b * ss_p)
                # Rounding can push a perfect fit a hair past +-1.
                correlation = float(np.clip(correlation, -1.0, 1.0))

    max_drawdown_active = 0.0
    if n >= 1:
        cumulative = np.cumsum(active)
        peak = np.maximum.accumulate(np.maximum(cumulative, 0.0))
        max_drawdown_active = float(np.max(peak - cumulative))

    return TrackingMetrics(
        periods=n,
        tracking_error=float(tracking_error),
        mean_active=float(mean_active),
        information_ratio=float(information_ratio),
        sum_sq_active=sum_sq_active,
        r_squared=float(r_squared),
        correlation=float(correlation),
        beta=float(beta),
        max_drawdown_active=max_drawdown_active,
        names_held=int(np.count_nonzero(w)),
        gross_exposure=float(np.sum(np.abs(w))),
    )


def _constant(x: np.ndarray) -> bool:
    """True when every element of the non-empty 1-d array ``x`` equals the first."""
    return bool(np.all(x == x[0]))
