"""What the commands do, without the command line: job + data -> study -> files.

Each function here is one command's work. They raise :class:`~trackfit.errors.TrackfitError`
for problems the user can fix and report progress through a callback; they never print.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from datetime import date
from pathlib import Path

import numpy as np

from trackfit.core.constrained import RIDGE_FOR_UNIQUENESS, check_feasible
from trackfit.core.folds import ForwardChaining
from trackfit.core.limits import Limits
from trackfit.core.results import Fold
from trackfit.data import TrackingData
from trackfit.data.load import load_tracking_data
from trackfit.errors import DataError, JobError, SolverError
from trackfit.evaluate.holdout import StudyDesign, run_holdout
from trackfit.evaluate.trades import trades
from trackfit.job import Job
from trackfit.mandate import CurrentHoldings, build_limits
from trackfit.outcome import FitOutcome
from trackfit.report import write_reports
from trackfit.report.limit_labels import linear_words, worded_linear

Progress = Callable[[str], None]

#: Share of the window kept as holdout when the job does not say.
DEFAULT_HOLDOUT_SHARE = 0.2


@dataclass(frozen=True)
class Plan:
    """What a fit of this job on this data would do, before any fitting."""

    data: TrackingData
    n_train: int
    n_holdout: int
    design: StudyDesign
    folds: tuple[Fold, ...]
    limits: Limits
    holdings: CurrentHoldings | None
    warnings: tuple[str, ...]
    notes: tuple[str, ...]


def _day(value: np.datetime64) -> date:
    return value.astype("datetime64[D]").item()


def plan_fit(job: Job, as_of: date | None = None) -> Plan:
    """Load the data and lay out the split and the folds; fit nothing.

    Raises
    ------
    TrackfitError
        For any problem with the job or the data, before any fitting starts.
    """
    data = load_tracking_data(job, as_of)
    n = len(data.dates)
    if job.window.holdout is None:
        n_holdout = int(n * DEFAULT_HOLDOUT_SHARE)
    else:
        n_holdout = job.window.holdout
    n_train = n - n_holdout
    if n_train < 2:
        raise DataError(
            f"{job.path.name}: 'window.holdout' is {n_holdout} rows but the window has only "
            f"{n} rows ({_day(data.dates[0])} to {_day(data.dates[-1])}); lower the holdout or "
            "lengthen the window"
        )
    splitter = ForwardChaining(
        n_folds=job.cv.folds,
        min_train=job.cv.min_train,
        gap=job.cv.gap,
        rolling=job.cv.scheme == "rolling",
    )
    try:
        folds = splitter.split(n_train)
    except SolverError as exc:
        raise DataError(
            f"{job.path.name}: {n_train} rows before the holdout "
            f"({_day(data.dates[0])} to {_day(data.dates[n_train - 1])}): {exc}"
        ) from None
    design = StudyDesign(
        splitter=splitter, rule=job.cv.rule, count=job.grid.count, min_ratio=job.grid.min_ratio
    )
    limits, holdings, limit_warnings = build_limits(job, data.names)
    try:
        check_feasible(limits, data.names)
    except SolverError as exc:  # conflicting limits are the job's to fix, not a fit failure
        raise JobError(f"{job.path.name}: the mandate limits conflict: {exc}") from None
    warnings, notes = _method_statements(job, limits, n_train, len(data.names))
    return Plan(
        data=data,
        n_train=n_train,
        n_holdout=n_holdout,
        design=design,
        folds=folds,
        limits=limits,
        holdings=holdings,
        warnings=(*limit_warnings, *warnings),
        notes=notes,
    )


def _method_statements(
    job: Job, limits: Limits, n_train: int, n_assets: int
) -> tuple[list[str], list[str]]:
    """Warnings and method notes that follow from the job's design alone."""
    warnings, notes = [], []
    fully_invested = limits.budget is not None and limits.budget == (1.0, 1.0)
    l1_models = [m.name for m in job.models if m.kind in ("lasso", "elastic_net")]
    if limits.long_only and fully_invested and l1_models:
        warnings.append(
            f"{', '.join(l1_models)}: under long-only and fully invested the weights always sum "
            "to 1 in absolute value, so an L1 penalty cannot make the portfolio sparse (it only "
            "tilts weight away from the more volatile names); to hold fewer names set "
            "limits.max_names"
        )
    if n_assets > n_train:
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
            f"There are more constituents ({n_assets}) than rows before the holdout ({n_train}), "
            f"so many weight vectors fit equally well; to pick one stably from month to month, {how}."
        )
    return warnings, notes


def _unique(messages) -> tuple[str, ...]:
    return tuple(dict.fromkeys(messages))


def fit_job(
    job: Job,
    *,
    as_of: date | None = None,
    out_dir: Path | None = None,
    progress: Progress | None = None,
    figures: bool = False,
) -> tuple[FitOutcome, list[Path]]:
    """Run one rebalance: plan, study every model, write the weights and reports.

    Parameters
    ----------
    out_dir : Path, optional
        Where to write; default the job's ``output.directory``.
    figures : bool
        Also draw the PNG figures (when matplotlib is installed).

    Returns
    -------
    outcome : FitOutcome
    paths : list of Path
        Files written, in the order weights, report, summary.
    """
    say = progress or (lambda _msg: None)
    plan = plan_fit(job, as_of)
    data = plan.data
    say(
        f"{len(data.names)} constituents, {len(data.dates)} rows "
        f"({_day(data.dates[0])} to {_day(data.dates[-1])}), "
        f"{plan.n_holdout} held out"
    )
    study = run_holdout(
        data.constituents,
        data.benchmark,
        data.names,
        job.models,
        plan.design,
        n_holdout=plan.n_holdout,
        periods_per_year=data.periods_per_year,
        progress=say,
        limits=plan.limits,
    )
    held = next(m for m in study.models if m.name == job.hold)
    trade_list = None
    if plan.holdings is not None:
        trade_list = trades(
            data.names, held.final_fit.weights, plan.holdings.names, plan.holdings.weights
        )
    outcome = FitOutcome(
        job=job,
        data=data,
        as_of=_day(data.dates[-1]),
        study=study,
        held=job.hold,
        warnings=_unique([*data.warnings, *plan.warnings, *study.warnings]),
        limits=plan.limits,
        trades=trade_list,
        notes=tuple(plan.notes),
    )
    paths = write_reports(outcome, out_dir or job.output.directory, figures=figures)
    return outcome, paths


def describe_plan(job: Job, plan: Plan) -> list[str]:
    """Lines that say what ``trackfit fit`` would do with this job and data."""
    data = plan.data
    d = data.dates
    lines = [
        f"job: {job.name} ({job.path.name})",
        f"benchmark: {data.benchmark_name}"
        + (" (excess of the risk-free rate)" if data.risk_free is not None else ""),
        f"constituents: {len(data.names)}",
        f"window: {_day(d[0])} to {_day(d[-1])}, {len(d)} rows, "
        f"{data.periods_per_year} periods per year"
        + (" (inferred from the dates)" if data.periods_per_year_inferred else ""),
    ]
    lines += [f"  {s.description}: {s.dropped} rows dropped" for s in data.steps]
    lines.append(
        f"choose and fit on {plan.n_train} rows ({_day(d[0])} to {_day(d[plan.n_train - 1])})"
    )
    if plan.n_holdout:
        lines.append(
            f"holdout: {plan.n_holdout} rows ({_day(d[plan.n_train])} to {_day(d[-1])})"
        )
    else:
        lines.append("holdout: none")
    lines.append(
        f"cross-validation: {len(plan.folds)} {job.cv.scheme} folds, gap {job.cv.gap}, "
        f"rule {job.cv.rule}"
    )
    for i, f in enumerate(plan.folds, 1):
        lines.append(
            f"  fold {i}: train {_day(d[f.train_start])} to {_day(d[f.train_stop - 1])} "
            f"({f.train_stop - f.train_start} rows), validate {_day(d[f.val_start])} to "
            f"{_day(d[f.val_stop - 1])} ({f.val_stop - f.val_start} rows)"
        )
    models = ", ".join(
        m.name + (f" (l1_ratio {', '.join(f'{r:g}' for r in m.l1_ratios)})" if m.kind == "elastic_net" else "")
        for m in job.models
    )
    lines.append(f"models: {models}; baselines: ols, equal_weight; hold: {job.hold}")
    lines.append(f"penalty grid: {job.grid.count} penalties, min ratio {job.grid.min_ratio:g}")
    lines.append(f"output: {job.output.directory}")
    lines += [f"limit: {line}" for line in _limit_lines(plan.limits)]
    if plan.holdings is not None:
        held = int((plan.holdings.weights != 0).sum())
        lines.append(
            f"current holdings: {held} names held ({len(plan.holdings.names)} listed)"
        )
    lines += [f"note: {n}" for n in plan.notes]
    lines += [f"warning: {w}" for w in (*data.warnings, *plan.warnings)]
    return lines


def _limit_lines(limits: Limits) -> list[str]:
    out = []
    if limits.long_only:
        out.append("long-only")
    if limits.budget is not None:
        lo, hi = limits.budget
        out.append("fully invested" if lo == hi == 1.0 else f"sum of weights in [{lo:g}, {hi:g}]")
    if limits.lower is not None or limits.upper is not None:
        out.append("per-name bounds")
    for g in limits.groups:
        out.append(f"group {g.name}: [{g.lower if g.lower is not None else '-'}, "
                   f"{g.upper if g.upper is not None else '-'}]")
    out += [linear_words(item) for item in worded_linear(limits)]
    if limits.max_names is not None:
        out.append(f"at most {limits.max_names} names")
    if limits.min_position is not None:
        out.append(f"no position below {limits.min_position:g}")
    if limits.turnover_penalty:
        out.append(f"turnover penalty {limits.turnover_penalty:g}")
    if limits.max_turnover is not None:
        out.append(f"one-way turnover at most {limits.max_turnover:g}")
    return out
