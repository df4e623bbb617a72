"""How often the data are sampled: spacing of dates and the periods per year it implies."""

from __future__ import annotations

import numpy as np

from trackfit.errors import DataError

#: Median spacing in calendar days -> periods per year, as closed ranges (common practice:
#: business days, weeks, months and quarters; weekends and holidays only widen some gaps).
SPACING_RULES: tuple[tuple[float, float, int], ...] = (
    (0.0, 4.0, 252),
    (5.0, 10.0, 52),
    (25.0, 35.0, 12),
    (80.0, 100.0, 4),
)

MIN_DATES = 3


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


def infer_periods_per_year(dates: np.ndarray) -> int:
    """Periods per year implied by the median date spacing (see :data:`SPACING_RULES`).

    Parameters
    ----------
    dates : ndarray of datetime64[D], shape (n,)
        Strictly increasing dates of the fit window.

    Returns
    -------
    int
        252, 52, 12 or 4.

    Raises
    ------
    DataError
        Fewer than 3 dates, or a median spacing that matches no usual calendar.
    """
    if len(dates) < MIN_DATES:
        raise DataError(
            f"cannot infer periods per year from {len(dates)} return date(s) in the fit window; "
            f"it takes at least {MIN_DATES}; widen the window or set data.periods_per_year"
        )
    spacing = median_spacing_days(dates)
    for low, high, periods in SPACING_RULES:
        if low <= spacing <= high:
            return periods
    raise DataError(
        f"cannot infer periods per year: the median spacing of the fit window's dates "
        f"({dates[0]} to {dates[-1]}) is {spacing:g} calendar days, which matches no daily "
        "(<= 4), weekly (5-10), monthly (25-35) or quarterly (80-100) calendar; "
        "set data.periods_per_year"
    )
