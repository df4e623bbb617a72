"""What the data layer hands to the rest of trackfit."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from trackfit.data.calendar import CalendarRate
from trackfit.data.screen import Screen


@dataclass(frozen=True)
class DataStep:
    """One cleaning step and how many rows it removed.

    ``rows_before - rows_after`` rows were dropped by ``description``.
    """

    description: str
    rows_before: int
    rows_after: int

    @property
    def dropped(self) -> int:
        return self.rows_before - self.rows_after


@dataclass(frozen=True)
class TrackingData:
    """Aligned, cleaned returns over the fit window, ready for fitting.

    Attributes
    ----------
    dates : ndarray of datetime64[D], shape (n_periods,)
        Return dates, strictly increasing.
    benchmark : ndarray of shape (n_periods,)
        Benchmark returns (decimal; excess of the risk-free rate when one is given).
    constituents : ndarray of shape (n_periods, n_assets)
        Constituent returns, same units, in ``names`` order.
    names : tuple of str
        Constituent names in the job's order (zero-variance ones removed, see ``warnings``).
    benchmark_name : str
    risk_free : ndarray of shape (n_periods,) or None
        Per-period risk-free return (decimal) that was subtracted, if any.
    periods_per_year : int
    periods_per_year_inferred : bool
        True when measured on the window's dates, False when set in the job.
    steps : tuple of DataStep
        Every step that could drop rows, in order, with counts (zero counts included).
    warnings : tuple of str
    calendar : CalendarRate or None
        Rows a year measured on the window's dates (before dates with missing values are left
        out: those are gaps in the data, not in the calendar), also when the job sets the
        value; None only for data built by hand.
    screen : Screen or None
        What the data screen found and left out; None when it was not run (data built by hand).
    """

    dates: np.ndarray
    benchmark: np.ndarray
    constituents: np.ndarray
    names: tuple[str, ...]
    benchmark_name: str
    risk_free: np.ndarray | None
    periods_per_year: int
    periods_per_year_inferred: bool
    steps: tuple[DataStep, ...]
    warnings: tuple[str, ...]
    calendar: CalendarRate | None = None
    screen: Screen | None = None
