"""Everything one ``trackfit backtest`` run produced, handed to the reporter as one value."""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date

import numpy as np

from trackfit.data import TrackingData
from trackfit.evaluate.backtest import BacktestResult, RebalanceFit
from trackfit.job import BacktestSpec, Job


@dataclass(frozen=True)
class DatedFit(RebalanceFit):
    """A rebalance fit with what the report says about it.

    Attributes
    ----------
    window_start : int
        First row of the fit window (the window is ``[window_start, row]``).
    notes, warnings : tuple of str
        Cross-validation notes, and warnings (an all-cash choice, names left out).
    """

    window_start: int = 0
    notes: tuple[str, ...] = ()
    warnings: tuple[str, ...] = ()


@dataclass(frozen=True)
class NameHistory:
    """How one constituent was held over the backtest.

    Attributes
    ----------
    name : str
    rebalances : int
        Rebalances whose target weight is nonzero.
    first, last : date or None
        First and last rebalance dates with a nonzero target (None if never held).
    mean_weight : float
        Mean target weight over all rebalances (zeros included).
    last_weight : float
        Target weight at the last rebalance.
    """

    name: str
    rebalances: int
    first: date | None
    last: date | None
    mean_weight: float
    last_weight: float


@dataclass(frozen=True)
class BacktestOutcome:
    """Everything one ``trackfit backtest`` run produced, handed to the reporter as one value.

    Attributes
    ----------
    job : Job
    spec : BacktestSpec
        The schedule used (the job's ``backtest`` section or the defaults).
    data : TrackingData
        Excess returns over every row the backtest uses.
    as_of : date
        Last return date used.
    model : str
        The job's ``hold``: the model fitted at each rebalance.
    result : BacktestResult
        Rows index ``data.dates``.
    fits : tuple of DatedFit
        One per rebalance, in order.
    dates : ndarray of datetime64[D], shape (n_rebalances,)
        Rebalance dates.
    period_dates : ndarray of datetime64[D], shape (m,)
        Date of each out-of-sample period (``data.dates[first_row + 1:]``).
    added, dropped : ndarray of int, shape (n_rebalances,)
        Names whose target became nonzero / became zero at each rebalance (the first: all held
        / 0).
    names : tuple of NameHistory
        Every constituent ever held, most rebalances first, ties by name.
    cost_bps : ndarray of shape (n_assets,)
        Cost per unit traded of each name, in basis points.
    coupled : bool
        True when each fit started from the previous rebalance's drifted holdings (a turnover
        penalty or cap).
    lookback : int or None
        Rows of a rolling window; None for an expanding one.
    warnings, notes : tuple of str
    """

    job: Job
    spec: BacktestSpec
    data: TrackingData
    as_of: date
    model: str
    result: BacktestResult
    fits: tuple[DatedFit, ...]
    dates: np.ndarray
    period_dates: np.ndarray
    added: np.ndarray
    dropped: np.ndarray
    names: tuple[NameHistory, ...]
    cost_bps: np.ndarray
    coupled: bool
    lookback: int | None
    warnings: tuple[str, ...]
    notes: tuple[str, ...]
