"""Choose the fit window: the return dates up to the as-of date, from the window's start."""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date

import numpy as np

from trackfit.data.calendar import median_spacing_days
from trackfit.data.dataset import DataStep
from trackfit.errors import DataError
from trackfit.job import WindowSpec

#: Data that end more than this many usual date spacings before --as-of are stale...
STALE_SPACINGS = 2
#: ...and more than this many calendar days: daily data from Friday serve a Monday --as-of,
#: or a holiday week (common practice: a weekend plus a few closed days).
STALE_MIN_DAYS = 7


@dataclass(frozen=True)
class WindowRows:
    """Rows ``[start, stop)`` of the return dates form the fit window.

    Attributes
    ----------
    start, stop : int
    steps : tuple of DataStep
        Dates after the as-of date, then dates before the window's start.
    """

    start: int
    stop: int
    steps: tuple[DataStep, ...]


def select_window(dates: np.ndarray, window: WindowSpec, as_of: date | None) -> WindowRows:
    """Find the fit window among the return dates.

    Parameters
    ----------
    dates : ndarray of datetime64[D], shape (n_dates,)
        All return dates common to every series, increasing.
    window : WindowSpec
        ``start`` (first row on or after it), ``lookback`` (last N rows) or neither (all rows).
    as_of : date or None
        The window ends on the last return date on or before it; None means the last date.

    Returns
    -------
    WindowRows

    Raises
    ------
    DataError
        No return dates; ``as_of`` before the first date or well after the data stop;
        ``window.start`` after the window's end; fewer rows than ``window.lookback``.
    """
    n = len(dates)
    if n == 0:
        raise DataError(
            "no return dates: the files share a single date, so there is no return to fit; "
            "add history"
        )
    if as_of is None:
        stop = n
        after = DataStep("dates after the as-of date (none: no --as-of given)", n, n)
    else:
        day = np.datetime64(as_of, "D")
        stop = _stop_at(dates, day)
        after = DataStep(f"dates after the as-of date {day}", n, stop)
    end = dates[stop - 1]

    if window.start is not None:
        first = np.datetime64(window.start, "D")
        start = int(np.searchsorted(dates, first, side="left"))
        if start >= stop:
            raise DataError(
                f"window.start {first} is after the last return date of "
                f"the window ({end}); set an earlier window.start or a later --as-of"
            )
        how = f"window.start {first}"
    elif window.lookback is not None:
        if stop < window.lookback:
            raise DataError(
                f"window.lookback asks for {window.lookback} return dates ending on {end}, but "
                f"only {stop} are available ({dates[0]} to {end}); lower window.lookback, "
                "add older data, or pass a later --as-of"
            )
        start = stop - window.lookback
        how = f"window.lookback: the last {window.lookback} return dates"
    else:
        start = 0
        how = "none: the whole history is used"
    before = DataStep(f"dates before the fit window ({how})", stop, stop - start)
    return WindowRows(start=start, stop=stop, steps=(after, before))


def _stop_at(dates: np.ndarray, as_of: np.datetime64) -> int:
    """One past the last date on or before ``as_of``, after checking the data reach it."""
    if as_of < dates[0]:
        raise DataError(
            f"--as-of {as_of} is before the first return date {dates[0]}; pass a later "
            "--as-of or add older data"
        )
    stop = int(np.searchsorted(dates, as_of, side="right"))
    last = dates[stop - 1]
    if len(dates) >= 2:
        gap = int((as_of - last).astype(np.int64))
        spacing = median_spacing_days(dates)
        if gap > max(STALE_SPACINGS * spacing, STALE_MIN_DAYS):
            if stop == len(dates):
                raise DataError(
                    f"data end on {last}, well before --as-of {as_of}; update the data or pass "
                    "an earlier --as-of"
                )
            raise DataError(
                f"the data have a gap from {last} to {dates[stop]}, and --as-of {as_of} falls "
                f"well inside it; fill the gap in the files or pass an --as-of on a data date"
            )
    return stop
