"""The words and JSON for the periods per year a command used and what the dates measured."""

from __future__ import annotations

from typing import Any

from trackfit.data.dataset import TrackingData


def periods_words(data: TrackingData) -> str:
    """The value used, where it came from and what was measured, on one line.

    For example ``261 (weekdays; measured: 260.9 rows a year over 2023-2025, 3 full calendar
    years)``.
    """
    rate = data.calendar
    if rate is None:  # built by hand, not measured
        source = "inferred from the date spacing" if data.periods_per_year_inferred else None
        return f"{data.periods_per_year} ({source or 'set in the job'})"
    if not data.periods_per_year_inferred:
        source = "set in the job"
    elif rate.usual is None:
        source = "irregular calendar: the measured rate rounded"
    else:
        source = rate.usual
    return f"{data.periods_per_year} ({source}; measured: {measured_words(data)})"


def measured_words(data: TrackingData) -> str:
    """``260.9 rows a year over 2023-2025, 3 full calendar years`` or the span's wording."""
    rate = data.calendar
    if rate.first_year is None:
        over = f"{rate.first} to {rate.last}, no full calendar year: rows per 365.25 days"
    else:
        years = f"{rate.first_year}" + (
            f"-{rate.last_year}" if rate.last_year != rate.first_year else ""
        )
        n = rate.full_years
        over = f"{years}, {n} full calendar year{'s' if n != 1 else ''}"
    return f"{rate.measured:.1f} rows a year over {over}"


def periods_json(data: TrackingData) -> dict[str, Any]:
    """The ``periods_per_year`` object of a summary: value, measured, source and the basis."""
    rate = data.calendar
    return {
        "value": data.periods_per_year,
        "measured": None if rate is None else rate.measured,
        "source": "measured" if data.periods_per_year_inferred else "job",
        "calendar": None if rate is None else rate.usual,
        "rows": None if rate is None else rate.rows,
        "full_years": None
        if rate is None or rate.first_year is None
        else [rate.first_year, rate.last_year],
        "first_date": None if rate is None else rate.first,
        "last_date": None if rate is None else rate.last,
    }
