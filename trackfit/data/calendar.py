"""How often the data are sampled: spacing of dates and the periods per year they hold.

Periods per year are measured, not looked up from the spacing: a weekday calendar holds about
261 rows a year, an exchange calendar about 252, and annualizing one with the other's value
moves a tracking error by sqrt(261 / 252), 1.8 %. The measured rate is then rounded to the
usual value it is close to, so that a job's annualization does not change as its window rolls
across years of 260, 261 and 262 weekdays.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from trackfit.errors import DataError

#: The usual rates, periods per year -> calendar (common practice). Weekdays are 261 always,
#: not 260 or 262 by the year measured: 365.2425 * 5 / 7 = 260.87 weekdays in the long run, so
#: 261 is the nearest integer, and a rolling window keeps one value as it crosses years.
USUAL_RATES: tuple[tuple[int, str], ...] = (
    (4, "quarterly"),
    (12, "monthly"),
    (52, "weekly"),
    (252, "trading days"),
    (261, "weekdays"),
    (365, "calendar days"),
)

#: A measured rate within this fraction of a usual rate (plus the measurement's own slack, see
#: :func:`measure_periods_per_year`) is taken as that rate. 1.5 % of a rate is 0.75 % of a
#: tracking error; 252 and 261 are 3.5 % apart, so no rate is close to both at full slack.
RELATIVE_TOLERANCE = 0.015

#: Days per year when the window holds no full calendar year (the Julian year, common practice).
DAYS_PER_YEAR = 365.25

MIN_DATES = 3


@dataclass(frozen=True)
class CalendarRate:
    """Rows a year measured on a set of dates, and the periods per year that implies.

    Attributes
    ----------
    value : int
        The usual rate closest to ``measured`` (see :data:`USUAL_RATES`), or ``measured``
        rounded to an integer (at least 1) when none is close.
    measured : float
        Rows a year: rows in the full calendar years divided by their count, or, with no full
        year, ``(rows - 1)`` intervals per 365.25 days of the span.
    usual : str or None
        The calendar ``value`` stands for ("weekdays", ...); None when the rate is irregular.
    first, last : str
        ISO dates of the first and last date measured on.
    rows : int
        Rows counted: those in the full years, or all of them.
    first_year, last_year : int or None
        The full calendar years counted, inclusive; None when the span was used.
    """

    value: int
    measured: float
    usual: str | None
    first: str
    last: str
    rows: int
    first_year: int | None
    last_year: int | None

    @property
    def full_years(self) -> int:
        """Number of full calendar years counted (0 when the span was used)."""
        return 0 if self.first_year is None else self.last_year - self.first_year + 1


def median_spacing_days(dates: np.ndarray) -> float:
    """Median gap between consecutive dates, in calendar days.

    Parameters
    ----------
    dates : ndarray of datetime64[D], shape (n,)
        Strictly increasing dates, n >= 2.

    Returns
    -------
    float
    """
    gaps = np.diff(dates.astype("datetime64[D]")).astype(np.int64)
    return float(np.median(gaps))


def measure_periods_per_year(dates: np.ndarray) -> CalendarRate:
    """Measure rows a year over the dates and round to the usual rate when close.

    A calendar year counts as full when no date of it can be missing from the window: its
    first date lies no further after the year's start, and its last no further before the
    next year's start, than the longest gap between dates (so a weekday year ending on Friday
    the 29th, or quarter ends starting on 31 March, count). With no full year, the rate is
    ``(n - 1) * 365.25 / span_days``.

    A measured rate ``r`` is close to a usual rate ``v`` when ``|r - v| <= 1.5 % of v + s``,
    with ``s`` the measurement's slack: ``1 / full_years`` (a year can hold one row more or
    less: 52 or 53 Fridays), or with the span ``r * (longest - shortest gap) / span_days``
    (where the span's ends fall in the weekly or monthly cycle). The closest such ``v`` wins.

    Parameters
    ----------
    dates : ndarray of datetime64[D], shape (n,)
        Strictly increasing dates of the fit window.

    Returns
    -------
    CalendarRate

    Raises
    ------
    DataError
        Fewer than 3 dates.
    """
    if len(dates) < MIN_DATES:
        raise DataError(
            f"cannot infer periods per year from {len(dates)} return date(s) in the fit window; "
            f"it takes at least {MIN_DATES}; widen the window or set data.periods_per_year"
        )
    d = np.asarray(dates).astype("datetime64[D]")
    gaps = np.diff(d).astype(np.int64)
    longest = int(gaps.max())
    years = d.astype("datetime64[Y]").astype(np.int64) + 1970
    first_year, last_year = int(years[0]), int(years[-1])
    year_start = np.datetime64(f"{first_year}-01-01", "D")
    next_start = np.datetime64(f"{last_year + 1}-01-01", "D")
    if int((d[0] - (year_start - 1)).astype(np.int64)) > longest:
        first_year += 1
    if int((next_start - d[-1]).astype(np.int64)) > longest:
        last_year -= 1

    if first_year <= last_year:
        n_years = last_year - first_year + 1
        rows = int(((years >= first_year) & (years <= last_year)).sum())
        measured = rows / n_years
        slack = 1.0 / n_years
        full: tuple[int | None, int | None] = (first_year, last_year)
    else:
        span = int((d[-1] - d[0]).astype(np.int64))
        rows = len(d)
        measured = (rows - 1) * DAYS_PER_YEAR / span
        slack = measured * (longest - int(gaps.min())) / span
        full = (None, None)

    value, usual = max(1, round(measured)), None
    best = np.inf
    for rate, name in USUAL_RATES:
        off = abs(measured - rate)
        if off <= RELATIVE_TOLERANCE * rate + slack and off < best:
            value, usual, best = rate, name, off
    return CalendarRate(
        value=int(value),
        measured=float(measured),
        usual=usual,
        first=str(d[0]),
        last=str(d[-1]),
        rows=rows,
        first_year=full[0],
        last_year=full[1],
    )


def irregular_warning(rate: CalendarRate) -> str | None:
    """The warning for a measured rate close to no usual one, or None when it is usual."""
    if rate.usual is not None:
        return None
    usual = ", ".join(str(v) for v, _ in USUAL_RATES[:-1]) + f" or {USUAL_RATES[-1][0]}"
    return (
        f"the fit window's dates ({rate.first} to {rate.last}) come at an irregular rate: "
        f"{rate.measured:.1f} rows a year, close to none of {usual}; returns and tracking "
        f"errors are annualized with {rate.value} periods a year; set data.periods_per_year "
        "if another value is right"
    )
