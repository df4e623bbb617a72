"""Turn the numbers in the files into per-period decimal returns."""

from __future__ import annotations

import numpy as np

from trackfit.errors import DataError


def simple_returns(prices: np.ndarray) -> np.ndarray:
    """Simple returns ``p[t] / p[t-1] - 1``.

    Parameters
    ----------
    prices : ndarray of shape (n_dates + 1, n_series)
        Price levels on aligned dates; NaN for missing.

    Returns
    -------
    ndarray of shape (n_dates, n_series)
        Return over each interval; NaN where either end is missing.
    """
    prices = np.asarray(prices, dtype=np.float64)
    return prices[1:] / prices[:-1] - 1.0


def percent_to_decimal(values: np.ndarray) -> np.ndarray:
    """Divide by 100: ``1.5`` (percent) becomes ``0.015``."""
    return np.asarray(values, dtype=np.float64) / 100.0


def per_period_rate(
    rate: np.ndarray, *, unit: str, quote: str, periods_per_year: int
) -> np.ndarray:
    """Risk-free rate as a decimal return per period.

    Parameters
    ----------
    rate : ndarray of shape (n_dates,)
        Rate as found in the file.
    unit : {"decimal", "percent"}
    quote : {"per_period", "annual"}
        ``"annual"`` rates are compounded down: ``(1 + r) ** (1 / periods_per_year) - 1``.
    periods_per_year : int

    Returns
    -------
    ndarray of shape (n_dates,)

    Raises
    ------
    DataError
        An annual rate at or below -100 %, which has no per-period equivalent.
    """
    if unit not in ("decimal", "percent"):
        raise ValueError(f"unit must be 'decimal' or 'percent'; got {unit!r}")
    r = percent_to_decimal(rate) if unit == "percent" else np.asarray(rate, dtype=np.float64)
    if quote == "per_period":
        return r
    if quote != "annual":
        raise ValueError(f"quote must be 'per_period' or 'annual'; got {quote!r}")
    if np.any(r <= -1.0):
        raise DataError(
            f"an annual risk-free rate of {np.min(r) * 100:g} % is at or below -100 % and has "
            "no per-period equivalent; check risk_free.unit (percent or decimal) and the file"
        )
    return (1.0 + r) ** (1.0 / periods_per_year) - 1.0
