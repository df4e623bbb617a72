"""The job as trackfit sees it: frozen dataclasses, every path absolute, every collection a tuple.

:func:`trackfit.job.load_job` builds them from a job file; import them from :mod:`trackfit.job`.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date
from pathlib import Path

from trackfit.core.models import ModelSpec


@dataclass(frozen=True)
class FileLayout:
    """How one source file holds its series.

    ``kind`` "wide": a date column plus one column per series. ``kind`` "long": one row per
    (date, series) with the series' name in ``name_column`` and its value in ``value_column``;
    the names then play the part of column names. ``format`` is "csv" or "parquet", set from
    the job's ``format`` key or else the file suffix.
    """

    kind: str = "wide"  # "wide" | "long"
    format: str = "csv"  # "csv" | "parquet"
    name_column: str = "name"  # long files only
    value_column: str = "value"  # long files only


@dataclass(frozen=True)
class SeriesRef:
    """One column of one file. ``column`` None means: the file's only non-date column."""

    file: Path
    column: str | None
    layout: FileLayout = FileLayout()


@dataclass(frozen=True)
class ConstituentSource:
    """Columns of one file. ``columns`` None means: every column but the date column."""

    file: Path
    columns: tuple[str, ...] | None
    layout: FileLayout = FileLayout()


@dataclass(frozen=True)
class RiskFreeSpec:
    """A per-period or annual rate, subtracted from benchmark and constituent returns."""

    file: Path
    column: str | None
    unit: str = "decimal"  # "decimal" | "percent"
    quote: str = "per_period"  # "per_period" | "annual"
    layout: FileLayout = FileLayout()


@dataclass(frozen=True)
class DataSpec:
    """How to read the data files: date column and format, what the values are, gaps."""

    date_column: str = "date"
    date_format: str | None = None  # strftime-style format; None = ISO 8601 dates
    values: str = "returns"  # "returns" | "prices"
    returns_unit: str = "decimal"  # "decimal" | "percent" (only for values: returns)
    missing: str = "error"  # "error" | "drop_dates"
    periods_per_year: int | None = None  # None = inferred from date spacing
    carry_forward: int = 0  # most periods a missing price is repeated (prices only); 0 = off
    min_coverage: float | None = None  # least share of window dates with a return; None = off


@dataclass(frozen=True)
class WindowSpec:
    """Which return rows to fit on (``start`` or ``lookback``, never both) and the holdout."""

    start: date | None = None  # first return date of the fit window
    lookback: int | None = None  # or: number of return rows ending at the as-of date
    holdout: int | None = None  # rows at the end of the window; None = 20 % of the window


@dataclass(frozen=True)
class GridSpec:
    """Penalty grid for lasso and elastic net: ``count`` alphas, smallest/largest ``min_ratio``."""

    count: int = 100
    min_ratio: float = 1e-3  # smallest / largest penalty for lasso and elastic net


@dataclass(frozen=True)
class CVSpec:
    """Time-ordered cross-validation: fold count, layout and the rule that picks alpha."""

    folds: int = 5
    min_train: int = 1
    gap: int = 0
    scheme: str = "expanding"  # "expanding" | "rolling"
    rule: str = "min_error"  # "min_error" | "one_standard_error"


@dataclass(frozen=True)
class OutputSpec:
    """Where reports go and how many rows the largest-weights table has."""

    directory: Path  # absolute
    top_weights: int = 10


@dataclass(frozen=True)
class Bounds:
    """A lower and an upper bound on a weight or a sum of weights; None = no bound on that side."""

    min: float | None = None
    max: float | None = None


@dataclass(frozen=True)
class GroupsSpec:
    """Group limits: a file mapping each constituent to a group, and bounds on group totals."""

    file: Path  # absolute
    name_column: str = "name"
    group_column: str = "group"
    each: Bounds | None = None  # bounds for every group not listed in ``bounds``
    bounds: tuple[tuple[str, Bounds], ...] = ()  # (group label, bounds), in file order of the job


@dataclass(frozen=True)
class LimitsSpec:
    """Mandate limits as written in the job (names, not positions)."""

    long_only: bool = False
    budget: tuple[float, float] | None = None  # "fully_invested" -> (1.0, 1.0); {min, max}
    weight: Bounds | None = None  # bounds for every name
    names: tuple[tuple[str, Bounds], ...] = ()  # per-name overrides of ``weight``
    groups: GroupsSpec | None = None
    max_names: int | None = None
    min_position: float | None = None
    beta: Bounds | None = None  # bounds on beta to the benchmark over the fit rows


@dataclass(frozen=True)
class HoldingsSpec:
    """Current holdings and the turnover limits measured against them."""

    file: Path  # absolute
    turnover_penalty: float = 0.0
    max_turnover: float | None = None  # one-way: sum(|w - w_current|) / 2
    date: date | None = None  # the file's weights are as of this date; None = use them as given


@dataclass(frozen=True)
class ScreenSpec:
    """What the data screen does with each kind of finding, and its thresholds.

    Each action is "stop" (a DataError before any fit), "warn" (a data warning; fit anyway) or
    "leave_out" (drop the flagged dates from every fit and metric; not for ``units``).
    """

    units: str = "stop"
    spikes: str = "warn"
    jumps: str = "warn"
    benchmark: str = "warn"
    stale: str = "warn"
    jump_mads: float = 20.0  # robust spreads a one-period move must exceed to be a spike or jump
    benchmark_mads: float = 8.0  # robust spreads of the leave-one-out benchmark residual
    stale_periods: int = 5  # longest run of exactly unchanged prices that passes

    def action(self, kind: str) -> str:
        """The action for a finding kind ("units", "spike", "jump", "benchmark", "stale")."""
        return getattr(self, SCREEN_ACTION_KEYS[kind])


#: finding kind -> the ``screen`` key holding its action
SCREEN_ACTION_KEYS = {
    "units": "units",
    "spike": "spikes",
    "jump": "jumps",
    "benchmark": "benchmark",
    "stale": "stale",
}


@dataclass(frozen=True)
class Job:
    """One validated job file; every path absolute, every collection a tuple."""

    path: Path  # absolute path of the job file
    name: str
    benchmark: SeriesRef
    constituents: tuple[ConstituentSource, ...]
    risk_free: RiskFreeSpec | None
    data: DataSpec
    window: WindowSpec
    models: tuple[ModelSpec, ...]
    hold: str  # name of the model whose weights are the ones to hold
    grid: GridSpec
    cv: CVSpec
    output: OutputSpec
    limits: LimitsSpec = LimitsSpec()
    holdings: HoldingsSpec | None = None
    backtest: BacktestSpec | None = None
    screen: ScreenSpec = ScreenSpec()


@dataclass(frozen=True)
class BacktestSpec:
    """How ``trackfit backtest`` walks forward: schedule, window, holding mode and costs."""

    every: str = "month_end"  # "month_end" | "week_end" | "periods"
    periods: int | None = None  # rows between rebalances, with every: periods only
    start: date | None = None  # first rebalance date; None = first date with a full lookback
    end: date | None = None  # last rebalance date; None = the last date
    window: str = "rolling"  # "rolling" (window.lookback rows) | "expanding" (all rows)
    mode: str = "buy_and_hold"  # "buy_and_hold" | "constant_mix"
    cost_bps: float = 0.0  # flat cost per unit of value traded, in basis points
    cost_bps_names: tuple[tuple[str, float], ...] = ()  # per-name overrides of ``cost_bps``
    memory_mb: float = 1024.0  # cap on the row-block statistics shared by all rebalances
