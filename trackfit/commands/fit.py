"""``trackfit fit``: one rebalance, from a job file to weights, report and summary.

Prepare (:mod:`trackfit.commands.prepare`), plan the holdout split, run the holdout study on the
model recipe (:mod:`trackfit.evaluate.recipe`), list the trades from the current holdings, and
write the files.
"""

from __future__ import annotations

from collections.abc import Callable
from datetime import date
from pathlib import Path

from trackfit.commands.fit_plan import FitPlan, plan_fit
from trackfit.commands.output import Notify, Written, output_folder, with_lock
from trackfit.commands.prepare import Prepared, day, held_model, prepare
from trackfit.core.risk import ExAnteRisk, ex_ante_risk
from trackfit.evaluate.holdout import run_holdout
from trackfit.evaluate.recipe import fit_notes
from trackfit.evaluate.trades import trades
from trackfit.job import Job, load_job
from trackfit.outcomes.fit import FitOutcome
from trackfit.report import write_reports

Progress = Callable[[str], None]


def fit_plan(plan: FitPlan, *, progress: Progress | None = None) -> FitOutcome:
    """Study every model of a planned fit and pick the held weights; write nothing."""
    say = progress or (lambda _msg: None)
    prepared = plan.prepared
    job, data = prepared.job, prepared.data
    say(
        f"{len(data.names)} constituents, {len(data.dates)} rows "
        f"({day(data.dates[0])} to {day(data.dates[-1])}), "
        f"{plan.n_holdout} held out"
    )
    study = run_holdout(
        data.constituents,
        data.benchmark,
        data.names,
        job.models,
        prepared.design,
        n_holdout=plan.n_holdout,
        periods_per_year=data.periods_per_year,
        progress=say,
        limits=prepared.limits,
    )
    held = next(m for m in study.models if m.name == job.hold)
    trade_list = None
    if prepared.holdings is not None:
        h = prepared.holdings
        trade_list = trades(data.names, held.final_fit.weights, h.names, h.weights)
    return FitOutcome(
        job=job,
        data=data,
        as_of=prepared.as_of,
        study=study,
        held=job.hold,
        warnings=tuple(dict.fromkeys([*plan.warnings, *study.warnings])),
        limits=prepared.limits,
        trades=trade_list,
        notes=tuple(
            dict.fromkeys(
                [*plan.notes, *fit_notes(held_model(job), held.final_fit.weights, prepared.limits)]
            )
        ),
        holdings=prepared.holdings,
        risk=held_risk(prepared, held.final_fit.weights),
    )


def held_risk(prepared: Prepared, weights) -> ExAnteRisk:
    """Ex-ante tracking error of ``weights`` (the final fit's) over the whole window.

    Groups come from the job's groups file when it names one (read once, by the preparation
    step).
    """
    data = prepared.data
    return ex_ante_risk(
        data.constituents,
        data.benchmark,
        weights,
        periods_per_year=data.periods_per_year,
        groups=prepared.groups,
    )


def fit_job(
    job: Job,
    *,
    as_of: date | None = None,
    out_dir: Path | None = None,
    layout: str = "fixed",
    progress: Progress | None = None,
    figures: bool = False,
) -> tuple[FitOutcome, list[Path]]:
    """Prepare, plan, study and write one rebalance (no lock: see :func:`run_fit`).

    Parameters
    ----------
    out_dir : Path, optional
        Output root; default the job's ``output.directory``. With ``layout="dated"`` the files
        go into ``<out_dir>/<as-of date>/``.
    figures : bool
        Also draw the PNG figures (when matplotlib is installed).

    Returns
    -------
    outcome : FitOutcome
    paths : list of Path
        Files written, in the order weights, report, summary, figures.
    """
    plan = plan_fit(prepare(job, as_of))
    outcome = fit_plan(plan, progress=progress)
    root = out_dir or job.output.directory
    folder = output_folder(root, layout, as_of or outcome.as_of)
    return outcome, write_reports(outcome, folder, figures=figures)


def run_fit(
    job_file: Path,
    *,
    as_of: date | None = None,
    out_dir: Path | None = None,
    layout: str = "fixed",
    figures: bool = True,
    progress: Progress | None = None,
    notify: Notify | None = None,
) -> Written:
    """``trackfit fit``: read the job, hold the output root's lock, fit and write."""
    job = load_job(job_file)
    root = out_dir or job.output.directory

    def work() -> Written:
        outcome, paths = fit_job(
            job, as_of=as_of, out_dir=root, layout=layout, progress=progress, figures=figures
        )
        return Written(paths=tuple(paths), warnings=outcome.warnings)

    return with_lock(root, work, notify)
