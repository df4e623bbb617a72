"""The one preparation step every command shares: job in, data and limits ready to fit.

Read and align every file once, select the window (the fit's, or the wider one a backtest's
rebalance windows need), build the cross-validation design and the mandate limits, and check
that the limits can hold, before anything is fitted. ``fit``, ``check`` and ``backtest`` all
start here, so they see the same data, the same limits, the same warnings and the same notes.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, replace
from datetime import date

import numpy as np

from trackfit.commands.mandate import CurrentHoldings, build_limits, read_job_groups
from trackfit.core.constrained import RIDGE_FOR_UNIQUENESS, check_feasible
from trackfit.core.folds import ForwardChaining
from trackfit.core.limits import Limits
from trackfit.core.models import model_kind
from trackfit.data import TrackingData
from trackfit.data.load import load_tracking_data
from trackfit.data.series import AlignedSeries, align_series
from trackfit.data.window import select_window
from trackfit.errors import DataError, JobError, SolverError
from trackfit.evaluate.recipe import BASELINES, Model, StudyDesign
from trackfit.job import BacktestSpec, Job, WindowSpec


@dataclass(frozen=True)
class Prepared:
    """A job with its data read, aligned and cut, and its limits built and checked.

    Attributes
    ----------
    job : Job
    data : TrackingData
        The fit window, or for a backtest every row any rebalance window uses.
    design : StudyDesign
        Folds, selection rule and penalty grid, from the job.
    limits : Limits
        The mandate limits over ``data.names``, known to be satisfiable.
    holdings : CurrentHoldings or None
        The holdings file as read, when the job names one.
    warnings : tuple of str
        From the data and the limits, in that order: what a person must look at.
    notes : tuple of str
        Routine facts from the limits the report carries; they change no exit code.
    groups : tuple of str or None
        Each constituent's group from the job's groups file, in ``data.names`` order; None
        when the job names no groups file.
    """

    job: Job
    data: TrackingData
    design: StudyDesign
    limits: Limits
    holdings: CurrentHoldings | None
    warnings: tuple[str, ...]
    notes: tuple[str, ...] = ()
    groups: tuple[str, ...] | None = None

    @property
    def as_of(self) -> date:
        """The last return date used."""
        return day(self.data.dates[-1])


def day(value: np.datetime64) -> date:
    """A numpy date as a :class:`datetime.date`."""
    return value.astype("datetime64[D]").item()


def splitter_of(job: Job) -> ForwardChaining:
    """The job's cross-validation folds."""
    cv = job.cv
    return ForwardChaining(
        n_folds=cv.folds, min_train=cv.min_train, gap=cv.gap, rolling=cv.scheme == "rolling"
    )


def design_of(job: Job) -> StudyDesign:
    """The job's folds, rule and penalty grid."""
    return StudyDesign(
        splitter=splitter_of(job),
        rule=job.cv.rule,
        count=job.grid.count,
        min_ratio=job.grid.min_ratio,
    )


def held_model(job: Job) -> Model:
    """The job's ``hold``: a listed model or a baseline."""
    if job.hold in BASELINES:
        return Model.baseline(job.hold)
    return Model.of(next(m for m in job.models if m.name == job.hold))


def prepare(
    job: Job, as_of: date | None = None, *, backtest: BacktestSpec | None = None
) -> Prepared:
    """Read, align, cut, build the limits and check them: everything before fitting.

    Parameters
    ----------
    job : Job
    as_of : date, optional
        Last date any fit may use; default the last date common to all inputs.
    backtest : BacktestSpec, optional
        Cut the rows every rebalance window of this schedule uses instead of the fit window.

    Raises
    ------
    TrackfitError
        For any problem with the job, the data or the limits, before any fit.
    """
    aligned = align_series(job)
    window = job.window if backtest is None else _backtest_window(job, backtest, aligned, as_of)
    data = load_tracking_data(replace(job, window=window), as_of, aligned=aligned)
    mapping = read_job_groups(job)
    limits, holdings, limit_warnings, limit_notes = _limits(job, data, aligned, backtest, mapping)
    try:
        check_feasible(limits, data.names)
    except SolverError as exc:  # conflicting limits are the job's to fix, not a fit failure
        raise JobError(f"{job.path.name}: the mandate limits conflict: {exc}") from None
    return Prepared(
        job=job,
        data=data,
        design=design_of(job),
        limits=limits,
        holdings=holdings,
        warnings=(*data.warnings, *limit_warnings),
        notes=limit_notes,
        # Every constituent has a group once the limits are built (a missing one is an error).
        groups=None if mapping is None else tuple(mapping[name] for name in data.names),
    )


def _limits(
    job: Job,
    data: TrackingData,
    aligned: AlignedSeries,
    backtest: BacktestSpec | None,
    groups: Mapping[str, str] | None,
) -> tuple[Limits, CurrentHoldings | None, tuple[str, ...], tuple[str, ...]]:
    """The mandate limits; dated holdings are drifted to the as-of date of a fit."""
    if backtest is None:
        return build_limits(
            job,
            data.names,
            aligned=aligned,
            as_of=day(data.dates[-1]),
            periods_per_year=data.periods_per_year,
            groups=groups,
        )
    limits, holdings, warnings, notes = build_limits(job, data.names, groups=groups)
    if job.holdings is not None and job.holdings.date is not None:
        warnings = (
            *warnings,
            "backtest: 'holdings.date' is not used; the first rebalance trades from the "
            "holdings file's weights as given, not drifted to its date",
        )
    return limits, holdings, warnings, notes


def _backtest_window(
    job: Job, spec: BacktestSpec, aligned: AlignedSeries, as_of: date | None
) -> WindowSpec:
    """The window holding every row a rebalance window of ``spec`` uses, through ``as_of``."""
    dates = aligned.dates[1:] if job.data.values == "prices" else aligned.dates
    stop = select_window(dates, WindowSpec(), as_of).stop
    lo = 0
    if spec.window == "expanding" and job.window.start is not None:
        lo = int(np.searchsorted(dates, np.datetime64(job.window.start, "D")))
    elif spec.window == "rolling" and spec.start is not None:
        first = int(np.searchsorted(dates[:stop], np.datetime64(spec.start, "D")))
        lo = max(0, first - job.window.lookback + 1)
    if lo >= stop:
        raise DataError(
            f"{job.path.name}: no return date between the backtest's first date and the as-of "
            f"date {dates[stop - 1]}; move 'backtest.start' or 'window.start' earlier, or pass "
            "a later --as-of"
        )
    return WindowSpec(start=day(dates[lo]))


def design_statements(
    job: Job,
    models: tuple[str, ...],
    limits: Limits,
    n_rows: int,
    n_assets: int,
    rows: str = "rows before the holdout",
) -> tuple[list[str], list[str]]:
    """Warnings and method notes that follow from the job's design alone.

    Parameters
    ----------
    models : tuple of str
        The models that will be fitted (every model for ``fit``, the held one for a backtest).
    n_rows : int
        Rows the penalty is chosen on (before the holdout; a backtest's shortest window).
    rows : str
        What those rows are, for the note.
    """
    warnings, notes = [], []
    fully_invested = limits.budget is not None and limits.budget == (1.0, 1.0)
    l1_models = [m.name for m in job.models if m.name in models and model_kind(m.kind).has_l1]
    if limits.long_only and fully_invested and l1_models:
        warnings.append(
            f"{', '.join(l1_models)}: under long-only and fully invested the weights always sum "
            "to 1 in absolute value, so an L1 penalty cannot make the portfolio sparse (it only "
            "tilts weight away from the more volatile names); to hold fewer names set "
            "limits.max_names"
        )
    if n_assets > n_rows:
        how = (
            f"constrained fits with no L2 penalty of their own (lasso, OLS) get a ridge term of "
            f"{RIDGE_FOR_UNIQUENESS:g} times the mean diagonal of the standardized Gram matrix "
            "whenever the names they may hold outnumber the rows or are linearly dependent; "
            "ridge and elastic net are unique already"
            if limits.needs_qp or limits.max_names is not None
            else "the exact lasso and elastic-net solvers return a solution with at most as many "
            "names as rows; ridge and elastic net are unique; OLS is the minimum-norm solution"
        )
        notes.append(
            f"There are more constituents ({n_assets}) than {rows} ({n_rows}), "
            f"so many weight vectors fit equally well; to pick one stably from month to month, {how}."
        )
    return warnings, notes
