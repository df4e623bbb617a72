"""The rebalance schedule: which rows of a date calendar are rebalance dates.

The schedule is read off the data's own dates, never a holiday calendar:

- ``"month_end"``: the last data date of each calendar month;
- ``"week_end"``: the last data date of each ISO week (Monday to Sunday);
- ``"periods"``: every ``periods`` rows, counting from the first row on or after ``start``.

A month (or week) whose last data date is the last row of the data counts as that month's
rebalance, so data that end mid-month rebalance on their last available date. Bounds are
applied to the rebalance dates after they are found: with ``end`` inside a month that has
data after ``end``, that month's rebalance date lies after ``end`` and is left out (the
schedule never invents a month end the data do not show).
"""

from __future__ import annotations

from datetime import date

import numpy as np

EVERY = ("month_end", "week_end", "periods")


def rebalance_rows(
    dates: np.ndarray,
    *,
    every: str,
    start: date | None,
    end: date | None,
    periods: int | None = None,
) -> np.ndarray:
    """Row positions of the rebalance dates, increasing.

    Parameters
    ----------
    dates : ndarray of datetime64, shape (n_periods,)
        Strictly increasing data dates (any datetime64 unit; compared as calendar days).
    every : {"month_end", "week_end", "periods"}
        How rebalance dates are chosen (see the module docstring).
    start, end : datetime.date or None
        Keep only rebalance dates in ``[start, end]``, both inclusive; None is no bound.
    periods : int or None
        Rows between rebalances; required with ``every="periods"`` and only allowed there.

    Returns
    -------
    ndarray of int64, shape (n_rebalances,)
        Positions into ``dates``, strictly increasing, at least one.

    Raises
    ------
    ValueError
        Unknown ``every``; ``periods`` missing, not an int or < 1 with ``every="periods"``, or
        given with another ``every``; ``dates`` not 1-d, empty or not strictly increasing;
        ``start`` after ``end``; no rebalance date in ``[start, end]``.
    """
    if every not in EVERY:
        raise ValueError(
            "The 'every' parameter of rebalance_rows must be one of "
            f"{', '.join(repr(e) for e in EVERY)}. Got {every!r}."
        )
    if every == "periods":
        if (
            periods is None
            or isinstance(periods, bool)
            or not isinstance(periods, (int, np.integer))
            or periods < 1
        ):
            raise ValueError(
                "The 'periods' parameter of rebalance_rows must be an int >= 1 when "
                f"every='periods'. Got {periods!r}."
            )
    elif periods is not None:
        raise ValueError(
            "The 'periods' parameter of rebalance_rows is only used with every='periods'. "
            f"Got periods={periods!r} with every={every!r}; drop it or set every='periods'."
        )
    days = _checked_days(dates)
    lo = None if start is None else np.datetime64(start, "D")
    hi = None if end is None else np.datetime64(end, "D")
    if lo is not None and hi is not None and lo > hi:
        raise ValueError(
            f"The rebalance range is empty: start {lo} is after end {hi}; swap or widen them."
        )

    if every == "periods":
        first = 0 if lo is None else int(np.searchsorted(days, lo, side="left"))
        rows = np.arange(first, len(days), int(periods), dtype=np.int64)
    else:
        # Group label of each date: its month, or the Monday that starts its ISO week.
        if every == "month_end":
            label = days.astype("datetime64[M]")
        else:
            label = days - _weekday(days).astype("timedelta64[D]")
        last_of_group = np.append(label[1:] != label[:-1], True)
        rows = np.flatnonzero(last_of_group).astype(np.int64)

    keep = np.ones(len(rows), dtype=bool)
    if lo is not None:
        keep &= days[rows] >= lo
    if hi is not None:
        keep &= days[rows] <= hi
    rows = rows[keep]
    if rows.size == 0:
        raise ValueError(
            f"No {every.replace('_', ' ')} rebalance date falls in "
            f"[{'any' if lo is None else lo}, {'any' if hi is None else hi}]: the data run "
            f"from {days[0]} to {days[-1]} ({len(days)} rows); widen the start/end bounds "
            "or choose a more frequent schedule."
        )
    return rows


def _checked_days(dates: np.ndarray) -> np.ndarray:
    arr = np.asarray(dates)
    if arr.ndim != 1 or arr.size == 0 or not np.issubdtype(arr.dtype, np.datetime64):
        raise ValueError(
            "The 'dates' parameter of rebalance_rows must be a non-empty 1-d datetime64 array. "
            f"Got dtype {arr.dtype} and shape {arr.shape}."
        )
    days = arr.astype("datetime64[D]")
    if np.isnat(days).any():
        raise ValueError(
            f"The 'dates' parameter of rebalance_rows has a missing date (NaT) at row "
            f"{int(np.flatnonzero(np.isnat(days))[0])}."
        )
    steps = np.diff(days).astype(np.int64)
    if (steps <= 0).any():
        i = int(np.flatnonzero(steps <= 0)[0])
        raise ValueError(
            "The 'dates' parameter of rebalance_rows must be strictly increasing. "
            f"Got {days[i]} at row {i} followed by {days[i + 1]} at row {i + 1}."
        )
    return days


def _weekday(days: np.ndarray) -> np.ndarray:
    """Monday = 0 ... Sunday = 6 for datetime64[D] values (1970-01-01 was a Thursday)."""
    return (days.astype(np.int64) + 3) % 7
