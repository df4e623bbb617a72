"""Gaps in the series: carry a missing price forward, leave out names with too little history."""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from trackfit.data.checks import missing_by_column
from trackfit.errors import DataError


def carry_forward(values: np.ndarray, limit: int) -> tuple[np.ndarray, np.ndarray]:
    """Repeat the last value into each missing cell at most ``limit`` rows after it.

    Only earlier rows are read, so a cell is filled or not whatever comes after it: a fit on
    a window ending at date d fills exactly as a backtest whose history runs past d does.
    A gap longer than ``limit`` keeps its later cells missing; cells before a column's first
    value (a late listing) are never filled.

    Parameters
    ----------
    values : ndarray of shape (n_rows, n_series)
        Price levels, NaN for missing.
    limit : int
        Most rows a value is carried over; 0 returns a copy unchanged.

    Returns
    -------
    filled : ndarray of shape (n_rows, n_series)
    carried : ndarray of bool, shape (n_rows, n_series)
        The cells that were filled.
    """
    values = np.asarray(values, dtype=np.float64)
    missing = np.isnan(values)
    rows = np.arange(values.shape[0])[:, None]
    last = np.maximum.accumulate(np.where(missing, -1, rows), axis=0)
    carried = missing & (last >= 0) & (rows - last <= limit)
    filled = values.copy()
    if carried.any():
        source = np.where(carried, last, rows)
        filled[carried] = np.take_along_axis(values, source, axis=0)[carried]
    return filled, carried


def has_return(raw: np.ndarray, *, prices: bool) -> np.ndarray:
    """Where each series has a return: both prices present, or the return itself present.

    Parameters
    ----------
    raw : ndarray of shape (n_dates + 1, n_series) with prices, else (n_dates, n_series)

    Returns
    -------
    ndarray of bool, shape (n_dates, n_series)
    """
    present = ~np.isnan(raw)
    return present[1:] & present[:-1] if prices else present


def short_history(
    present: np.ndarray,
    dates: np.ndarray,
    labels: Sequence[str],
    min_coverage: float,
    warnings: list[str],
) -> np.ndarray:
    """Constituents with a return on too few of the window's dates; warn about each.

    Parameters
    ----------
    present : ndarray of bool, shape (n_dates, 1 + n_assets)
        Where each series has a return (see :func:`has_return`), the benchmark first.
    dates : ndarray of datetime64[D], shape (n_dates,)
        The window's return dates.
    labels : sequence of str, length 1 + n_assets
    min_coverage : float
        Least share of ``dates`` a constituent must have a return on, in (0, 1].
    warnings : list of str
        One warning per constituent left out is appended.

    Returns
    -------
    ndarray of int
        Positions in ``1..n_assets`` (columns of ``present``) of the constituents left out.

    Raises
    ------
    DataError
        The benchmark is short of ``min_coverage`` (it cannot be left out), or every
        constituent is.
    """
    n = len(dates)
    counts = present.sum(axis=0)
    # Compared in counts, not shares, so 0.9 of 10 dates means 9 exactly, free of rounding.
    short = counts < min_coverage * n - 1e-9 * n
    span = f"{dates[0]} to {dates[-1]}"
    rule = f"data.min_coverage {min_coverage:g}"
    if short[0]:
        where = "; ".join(missing_by_column(~present[:, :1], dates, labels[:1]))
        raise DataError(
            f"benchmark {labels[0]} has a return on only {counts[0]} of the {n} return dates of "
            f"the fit window ({span}), below {rule}, and the benchmark cannot be left out "
            f"(missing: {where}); fill its gaps (data.carry_forward with prices) or move the "
            "window"
        )
    out = np.flatnonzero(short[1:]) + 1
    for j in out:
        warnings.append(
            f"constituent {labels[j]} was left out: it has a return on {counts[j]} of the {n} "
            f"return dates of the fit window ({span}), below {rule}" + _why(present[:, j], dates)
        )
    if out.size == len(labels) - 1:
        raise DataError(
            f"every constituent has a return on fewer return dates of the fit window ({span}) "
            f"than {rule} asks; lower data.min_coverage, move the window or fill the gaps"
        )
    return out


def _why(present: np.ndarray, dates: np.ndarray) -> str:
    rows = np.flatnonzero(present)
    if rows.size == 0:
        return "; it has no return in the window"
    reasons = []
    if rows[0] > 0:
        reasons.append(f"its first return is on {dates[rows[0]]} (listed late)")
    if rows[-1] < len(dates) - 1:
        reasons.append(f"its last return is on {dates[rows[-1]]} (delisted or not yet updated)")
    inside = rows[-1] - rows[0] + 1 - rows.size
    if inside:
        reasons.append(f"{inside} date(s) without a return in between")
    return "; " + ", ".join(reasons)
