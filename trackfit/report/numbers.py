"""Fixed formats for numbers and dates in every report file."""

from __future__ import annotations

import math
from datetime import date, datetime

import numpy as np

#: What a table shows for a value that is missing or not finite.
NOT_AVAILABLE = "n/a"


def fixed(value: float | None, spec: str) -> str:
    """Format ``value`` with the format ``spec`` (e.g. ``".4f"``), never as negative zero.

    None, nan and infinities give :data:`NOT_AVAILABLE`.
    """
    if value is None:
        return NOT_AVAILABLE
    x = float(value)
    if not math.isfinite(x):
        return NOT_AVAILABLE
    text = format(x, spec)
    # "-0.00" after rounding would make identical weights diff as changed.
    if text.startswith("-") and float(text) == 0.0:
        text = text[1:]
    return text


def percent(value: float | None, decimals: int = 2) -> str:
    """Format a decimal fraction as a percentage: 0.01234 -> ``"1.23%"``."""
    if value is None or not math.isfinite(float(value)):
        return NOT_AVAILABLE
    return fixed(float(value) * 100.0, f".{decimals}f") + "%"


def percent_short(value: float | None, least: int = 2, most: int = 4) -> str:
    """A percentage with between ``least`` and ``most`` decimals, as few as show the value.

    For numbers the user wrote, so they read back as written: 0.05 -> ``"5.00%"``,
    0.00125 -> ``"0.125%"``, 1/3 -> ``"33.3333%"``.
    """
    text = percent(value, most)
    if text == NOT_AVAILABLE:
        return text
    digits = text[:-1]
    keep = len(digits) - (most - least)
    while len(digits) > keep and digits.endswith("0"):
        digits = digits[:-1]
    return digits + "%"


def json_number(value: float) -> float | None:
    """Round to 12 significant digits for JSON; nan and infinities become None (null)."""
    x = float(value)
    if not math.isfinite(x):
        return None
    rounded = float(f"{x:.12g}")
    return 0.0 if rounded == 0.0 else rounded


def iso_date(value: np.datetime64 | date) -> str:
    """``YYYY-MM-DD`` for a numpy datetime64 (any unit) or a :class:`datetime.date`."""
    if isinstance(value, datetime):
        return value.date().isoformat()
    if isinstance(value, date):
        return value.isoformat()
    return str(np.datetime64(value, "D"))


def row_dates(dates: np.ndarray, start: int, stop: int) -> tuple[str | None, str | None]:
    """First and last date of rows ``[start, stop)`` of ``dates``, or (None, None) if empty.

    Parameters
    ----------
    dates : ndarray of datetime64, shape (n_periods,)
    start, stop : int
        Half-open row range.
    """
    first, last = max(int(start), 0), min(int(stop), len(dates)) - 1
    if last < first:
        return None, None
    return iso_date(dates[first]), iso_date(dates[last])
