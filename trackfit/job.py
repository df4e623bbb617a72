"""The job file: YAML in, one validated, immutable :class:`Job` out.

STUB: the dataclasses below are the agreed interface; ``load_job`` is being written.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date
from pathlib import Path

from trackfit.core.models import ModelSpec


@dataclass(frozen=True)
class SeriesRef:
    """One column of one file. ``column`` None means: the file's only non-date column."""

    file: Path
    column: str | None


@dataclass(frozen=True)
class ConstituentSource:
    """Columns of one file. ``columns`` None means: every column but the date column."""

    file: Path
    columns: tuple[str, ...] | None


@dataclass(frozen=True)
class RiskFreeSpec:
    file: Path
    column: str | None
    unit: str = "decimal"  # "decimal" | "percent"
    quote: str = "per_period"  # "per_period" | "annual"


@dataclass(frozen=True)
class DataSpec:
    date_column: str = "date"
    date_format: str | None = None  # strftime-style format; None = ISO 8601 dates
    values: str = "returns"  # "returns" | "prices"
    returns_unit: str = "decimal"  # "decimal" | "percent" (only for values: returns)
    missing: str = "error"  # "error" | "drop_dates"
    periods_per_year: int | None = None  # None = inferred from date spacing


@dataclass(frozen=True)
class WindowSpec:
    start: date | None = None  # first return date of the fit window
    lookback: int | None = None  # or: number of return rows ending at the as-of date
    holdout: int | None = None  # rows at the end of the window; None = 20 % of the window


@dataclass(frozen=True)
class GridSpec:
    count: int = 100
    min_ratio: float = 1e-3  # smallest / largest penalty for lasso and elastic net


@dataclass(frozen=True)
class CVSpec:
    folds: int = 5
    min_train: int = 1
    gap: int = 0
    scheme: str = "expanding"  # "expanding" | "rolling"
    rule: str = "min_error"  # "min_error" | "one_standard_error"


@dataclass(frozen=True)
class OutputSpec:
    directory: Path  # absolute
    top_weights: int = 10


@dataclass(frozen=True)
class Job:
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


def load_job(path: str | Path) -> Job:
    raise NotImplementedError
