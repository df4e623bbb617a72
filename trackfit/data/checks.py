"""Checks on the file values a fit window uses: finite, positive prices, nothing missing."""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from trackfit.errors import DataError

_FIRST_DATES = 3


def check_finite(values: np.ndarray, dates: np.ndarray, labels: Sequence[str]) -> None:
    """Raise DataError at the first infinite value.

    Parameters
    ----------
    values : ndarray of shape (n_dates, n_series)
        NaN (missing) is allowed here.
    dates : ndarray of datetime64[D], shape (n_dates,)
    labels : sequence of str, length n_series
    """
    for j, label in enumerate(labels):
        bad = np.flatnonzero(np.isinf(values[:, j]))
        if bad.size == 0:
            continue
        i = int(bad[0])
        raise DataError(
            f"{label}: the value on {dates[i]} is {values[i, j]:g}, not a finite number; "
            "fix the value or leave the cell empty"
        )


def check_positive_prices(prices: np.ndarray, dates: np.ndarray, labels: Sequence[str]) -> None:
    """Raise DataError at the first price <= 0 (missing prices are left for later).

    Parameters
    ----------
    prices : ndarray of shape (n_dates, n_series)
    dates : ndarray of datetime64[D], shape (n_dates,)
    labels : sequence of str, length n_series
    """
    for j, label in enumerate(labels):
        bad = np.flatnonzero(prices[:, j] <= 0)
        if bad.size:
            i = int(bad[0])
            more = f" ({bad.size} prices <= 0 in the window)" if bad.size > 1 else ""
            raise DataError(
                f"{label}: the price on {dates[i]} is {prices[i, j]:g}{more}; a price must be "
                "above zero to give a return; fix the file, or set data.values: returns if the "
                "file holds returns"
            )


def missing_by_column(missing: np.ndarray, dates: np.ndarray, labels: Sequence[str]) -> list[str]:
    """One line per column with missing values: how many, and the first few dates.

    Parameters
    ----------
    missing : ndarray of bool, shape (n_dates, n_series)
    dates : ndarray of datetime64[D], shape (n_dates,)
    labels : sequence of str, length n_series

    Returns
    -------
    list of str
        ``"'name' (file): 2 dates (2020-01-02, 2020-01-03)"``, in column order.
    """
    lines = []
    for j, label in enumerate(labels):
        rows = np.flatnonzero(missing[:, j])
        if rows.size:
            shown = ", ".join(str(d) for d in dates[rows[:_FIRST_DATES]])
            more = ", ..." if rows.size > _FIRST_DATES else ""
            noun = "date" if rows.size == 1 else "dates"
            lines.append(f"{label}: {rows.size} {noun} ({shown}{more})")
    return lines
