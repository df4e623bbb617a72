"""``trackfit check``: validate the job and its data and say what ``fit`` would do; write nothing."""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date
from pathlib import Path

from trackfit.commands.fit_plan import FitPlan, plan_fit
from trackfit.commands.prepare import day, prepare
from trackfit.core.limits import Limits
from trackfit.core.models import describe_model
from trackfit.job import load_job
from trackfit.report.data_quality import screen_lines
from trackfit.report.limit_labels import linear_words, worded_linear
from trackfit.report.periods import periods_words


@dataclass(frozen=True)
class Checked:
    """What ``trackfit check`` found.

    Attributes
    ----------
    lines : tuple of str
        What ``trackfit fit`` would do, one line each, findings and warnings last.
    warned : bool
        True when ``fit`` would warn: a warning of the data, the limits or the design, or a
        screen finding that warns or leaves dates out.
    """

    lines: tuple[str, ...]
    warned: bool


def run_check(job_file: Path, *, as_of: date | None = None) -> Checked:
    """``trackfit check``: say what ``trackfit fit`` would do, and whether it would warn.

    Raises
    ------
    JobError, DataError
        As ``fit`` would, during the one preparation step (a screen that stops is a DataError).
    """
    plan = plan_fit(prepare(load_job(job_file), as_of))
    screen = plan.prepared.data.screen
    warned = bool(plan.warnings) or (screen is not None and bool(screen.warnings))
    return Checked(lines=tuple(describe_plan(plan)), warned=warned)


def describe_plan(plan: FitPlan) -> list[str]:
    """Lines that say what ``trackfit fit`` would do with this job and data."""
    job, data = plan.prepared.job, plan.prepared.data
    limits, holdings = plan.prepared.limits, plan.prepared.holdings
    d = data.dates
    lines = [
        f"job: {job.name} ({job.path.name})",
        f"benchmark: {data.benchmark_name}"
        + (" (excess of the risk-free rate)" if data.risk_free is not None else ""),
        f"constituents: {len(data.names)}",
        f"window: {day(d[0])} to {day(d[-1])}, {len(d)} rows, "
        f"periods per year {periods_words(data)}",
    ]
    lines += [f"  {s.description}: {s.dropped} rows dropped" for s in data.steps]
    lines.append(
        f"choose and fit on {plan.n_train} rows ({day(d[0])} to {day(d[plan.n_train - 1])})"
    )
    if plan.n_holdout:
        lines.append(f"holdout: {plan.n_holdout} rows ({day(d[plan.n_train])} to {day(d[-1])})")
    else:
        lines.append("holdout: none")
    lines.append(
        f"cross-validation: {len(plan.folds)} {job.cv.scheme} folds, gap {job.cv.gap}, "
        f"rule {job.cv.rule}"
    )
    for i, f in enumerate(plan.folds, 1):
        lines.append(
            f"  fold {i}: train {day(d[f.train_start])} to {day(d[f.train_stop - 1])} "
            f"({f.train_stop - f.train_start} rows), validate {day(d[f.val_start])} to "
            f"{day(d[f.val_stop - 1])} ({f.val_stop - f.val_start} rows)"
        )
    models = ", ".join(describe_model(m) for m in job.models)
    lines.append(f"models: {models}; baselines: ols, equal_weight; hold: {job.hold}")
    lines.append(f"penalty grid: {job.grid.count} penalties, min ratio {job.grid.min_ratio:g}")
    lines.append(f"output: {job.output.directory}")
    lines += [f"limit: {line}" for line in _limit_lines(limits)]
    if holdings is not None:
        held = int((holdings.weights != 0).sum())
        lines.append(f"current holdings: {held} names held ({len(holdings.names)} listed)")
    lines += screen_lines(data.screen)
    lines += [f"note: {n}" for n in plan.notes]
    said = {f.message for f in data.screen.findings} if data.screen is not None else set()
    lines += [f"warning: {w}" for w in plan.warnings if w not in said]  # findings said above
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
        out.append(
            f"group {g.name}: [{g.lower if g.lower is not None else '-'}, "
            f"{g.upper if g.upper is not None else '-'}]"
        )
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
