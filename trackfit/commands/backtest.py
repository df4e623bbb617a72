"""``trackfit backtest``: walk the job forward, refit at every rebalance, hold, measure.

At each rebalance date the held model goes through the same recipe as ``trackfit fit``
(:mod:`trackfit.evaluate.recipe`: time-ordered cross-validation with the job's folds, rule and
grid, then the fit at the chosen penalty, under the mandate limits) on the rows of its window up
to that date, with no holdout: the returns after the date are the out-of-sample test. The
weights are then held (:func:`trackfit.evaluate.backtest.run_backtest`) until the next
rebalance. The statistics of the row blocks that all rebalance windows and their folds are made
of are computed once and shared, within a memory cap.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass, replace
from datetime import date
from pathlib import Path

import numpy as np

from trackfit.commands.output import Notify, Written, output_folder, with_lock
from trackfit.commands.prepare import day, design_statements, held_model, prepare
from trackfit.core.cv import window_bounds
from trackfit.core.folds import ForwardChaining
from trackfit.core.gram import RowBlocks, prefix_blocks
from trackfit.core.limits import Limits
from trackfit.data import TrackingData
from trackfit.errors import DataError, JobError, SolverError, TrackfitError
from trackfit.evaluate.backtest import run_backtest
from trackfit.evaluate.recipe import (
    Model,
    StudyDesign,
    choose_penalty,
    fit_model,
    fit_notes,
    fit_warnings,
)
from trackfit.evaluate.schedule import rebalance_rows
from trackfit.job import BacktestSpec, Job, load_job
from trackfit.outcomes.backtest import BacktestOutcome, DatedFit, NameHistory
from trackfit.report.backtest_files import write_backtest_reports

Progress = Callable[[str], None]
BACKENDS = ("loky", "dask")
#: Sub-folder of ``output.directory`` a backtest writes to when no --out is given, so it never
#: overwrites the report.md of ``trackfit fit``.
BACKTEST_FOLDER = "backtest"


@dataclass(frozen=True, eq=False)
class RebalanceFitter:
    """``fit_at(row, current)`` for :func:`run_backtest`: the held model on the window to ``row``.

    Module level and made of arrays and small dataclasses, so process pools can pickle it.
    """

    X: np.ndarray
    y: np.ndarray
    dates: np.ndarray
    names: tuple[str, ...]
    model: Model
    design: StudyDesign
    limits: Limits
    lookback: int | None
    blocks: RowBlocks | None = None

    def __call__(self, row: int, current: np.ndarray | None = None) -> DatedFit:
        lo = 0 if self.lookback is None else row - self.lookback + 1
        X, y = self.X[lo : row + 1], self.y[lo : row + 1]
        limits = self.limits
        if current is not None:  # coupled: later rebalances trade from the drifted holdings
            limits = replace(limits, current=current, outside_turnover=0.0)
        when = str(self.dates[row])
        try:
            cv = choose_penalty(
                X, y, self.model, self.design, limits, blocks=self.blocks, row_offset=lo
            )
            fit = fit_model(X, y, self.model, cv, self.design, limits)
        except SolverError as exc:
            raise SolverError(f"rebalance {when}: {exc}") from None
        warnings = fit_warnings(self.model, fit, self.names, "the fit window", held=True)
        return DatedFit(
            weights=fit.weights,
            alpha=fit.alpha,
            l1_ratio=fit.l1_ratio,
            kkt_residual=fit.kkt_residual,
            window_start=lo,
            notes=tuple(f"rebalance {when}: {n}" for n in (cv.notes if cv else ())),
            warnings=tuple(f"rebalance {when}: {w}" for w in warnings),
        )


def default_backtest_folder(job: Job) -> Path:
    return job.output.directory / BACKTEST_FOLDER


def _spec(job: Job) -> BacktestSpec:
    spec = job.backtest or BacktestSpec()
    if spec.window == "rolling" and job.window.lookback is None:
        raise JobError(
            f"{job.path.name}: the job has no 'backtest' section, so the backtest "
            "uses a rolling window of 'window.lookback' rows, but 'window.lookback' is "
            "not set; set it, or add 'backtest: {window: expanding}'"
        )
    return spec


def _min_rows(job: Job, splitter: ForwardChaining, lookback: int | None, n: int) -> int:
    """Fewest rows a fit window may have: the lookback, or what the folds need."""
    if lookback is not None:
        return lookback
    for rows in range(2, n + 1):
        try:
            splitter.split(rows)
        except SolverError:
            continue
        return rows
    return n + 1


def _schedule(job: Job, spec: BacktestSpec, data: TrackingData, least: int) -> np.ndarray:
    d = data.dates
    try:
        rows = rebalance_rows(
            d, every=spec.every, start=spec.start, end=spec.end, periods=spec.periods
        )
    except ValueError as exc:
        raise DataError(f"{job.path.name}: backtest schedule: {exc}") from None
    need = f"{least} rows of history (the " + (
        "window.lookback)" if spec.window == "rolling" else "rows the cross-validation folds need)"
    )
    if spec.start is None:
        rows = rows[rows >= least - 1]
        if rows.size == 0:
            raise DataError(
                f"{job.path.name}: no rebalance date has {need}; the data run from "
                f"{d[0]} to {d[-1]} ({len(d)} rows); add history or shorten the "
                "window"
            )
    elif rows[0] < least - 1:
        raise DataError(
            f"{job.path.name}: the first rebalance date {d[rows[0]]} (from "
            f"'backtest.start' {spec.start}) has {rows[0] + 1} rows of history, but "
            f"each fit needs {need}; set 'backtest.start' on or after "
            f"{d[least - 1]}, or add older data"
        )
    if rows[0] >= len(d) - 1:
        raise DataError(
            f"{job.path.name}: the first rebalance date {d[rows[0]]} is the last "
            "data date, so no period is held out of sample; move 'backtest.start' "
            "earlier or pass a later --as-of"
        )
    return rows


def _costs(job: Job, spec: BacktestSpec, names: Sequence[str]) -> np.ndarray:
    index = {n: i for i, n in enumerate(names)}
    bps = np.full(len(names), spec.cost_bps)
    for name, value in spec.cost_bps_names:
        if name not in index:
            raise JobError(
                f"{job.path.name}: 'backtest.cost_bps' lists {name!r}, which is not a "
                "constituent of this backtest; fix the name or remove it "
                "(constituents whose return never varies are left out; see the "
                "warnings)"
            )
        bps[index[name]] = value
    return bps


def _parallel(n_jobs: int, backend: str, scheduler: str | None):
    """A ``(fn, rows) -> list`` map over joblib, or None to run in order in this process."""
    if backend not in BACKENDS:
        raise ValueError(f"backend must be one of {BACKENDS}; got {backend!r}")
    if backend == "loky" and n_jobs == 1:
        return None
    from joblib import Parallel, delayed, parallel_config

    if backend == "loky":

        def run(fn, rows):
            return Parallel(n_jobs=n_jobs, backend="loky")(delayed(fn)(r) for r in rows)

        return run
    try:
        from dask.distributed import Client, LocalCluster
    except ImportError:
        raise JobError(
            "--backend dask needs dask.distributed; install it with "
            "pip install 'trackfit[dask]', or use the default loky backend"
        ) from None

    def run_dask(fn, rows):
        if scheduler is not None:
            client, cluster = Client(scheduler), None
        else:
            cluster = LocalCluster(
                n_workers=n_jobs,
                threads_per_worker=1,
                host="127.0.0.1",
                dashboard_address=None,
                processes=True,
            )
            client = Client(cluster)
        try:
            with parallel_config(backend="dask"):
                return Parallel()(delayed(fn)(r) for r in rows)
        finally:
            client.close()
            if cluster is not None:
                cluster.close()

    return run_dask


def _history(names, dates, targets) -> tuple[np.ndarray, np.ndarray, tuple[NameHistory, ...]]:
    held = targets != 0
    before = np.vstack([np.zeros((1, held.shape[1]), dtype=bool), held[:-1]])
    added = (held & ~before).sum(axis=1)
    dropped = (~held & before).sum(axis=1)
    out = []
    for j, name in enumerate(names):
        at = np.flatnonzero(held[:, j])
        if at.size == 0:
            continue
        out.append(
            NameHistory(
                name=name,
                rebalances=int(at.size),
                first=day(dates[at[0]]),
                last=day(dates[at[-1]]),
                mean_weight=float(targets[:, j].mean()),
                last_weight=float(targets[-1, j]),
            )
        )
    out.sort(key=lambda h: (-h.rebalances, h.name))
    return added, dropped, tuple(out)


def shared_blocks(
    X: np.ndarray,
    y: np.ndarray,
    rows: np.ndarray,
    lookback: int | None,
    splitter: ForwardChaining,
    cap_mb: float,
) -> tuple[RowBlocks | None, str | None]:
    """Row-block statistics every rebalance window and its folds are runs of, within the cap.

    Parameters
    ----------
    X : ndarray of shape (n_periods, n_assets)
    y : ndarray of shape (n_periods,)
    rows : ndarray of int
        Rebalance rows; the window of row ``r`` is ``[r - lookback + 1, r]`` (or from 0).
    cap_mb : float
        Largest size of the statistics, in MiB.

    Returns
    -------
    blocks : RowBlocks or None
    note : str or None
        Why each rebalance builds its own statistics, when ``blocks`` is None.
    """
    windows = [(0 if lookback is None else r - lookback + 1, r + 1) for r in rows.tolist()]
    bounds = window_bounds(windows, splitter)
    p = X.shape[1]
    need = len(bounds) * (p * p + p + 1) * 8 / 2**20
    if need > cap_mb:
        return None, (
            f"the statistics shared by every rebalance window would take {need:,.0f} MiB "
            f"({len(bounds)} row blocks of {p} names), above the cap of {cap_mb:g} MiB "
            "('backtest.memory_mb'), so each rebalance built its own (slower, same results up "
            "to rounding)"
        )
    return prefix_blocks(X, y, bounds), None


def run_backtest_job(
    job: Job,
    *,
    as_of: date | None = None,
    n_jobs: int = 1,
    backend: str = "loky",
    scheduler: str | None = None,
    progress: Progress | None = None,
) -> BacktestOutcome:
    """Walk the job forward over its rebalance schedule; write nothing.

    Parameters
    ----------
    as_of : date, optional
        Last date the backtest may use; default the last date common to all inputs.
    n_jobs : int
        Parallel workers for independent rebalances (ignored when the fits are coupled by a
        turnover limit, which makes them sequential). The result does not depend on it.
    backend : {"loky", "dask"}
    scheduler : str, optional
        Address of a dask scheduler; None starts a local cluster on 127.0.0.1.

    Raises
    ------
    TrackfitError
        For problems with the job or the data (before any fit), or a fit that fails.
    """
    say = progress or (lambda _msg: None)
    spec = _spec(job)
    prepared = prepare(job, as_of, backtest=spec)
    data, limits, design = prepared.data, prepared.limits, prepared.design
    lookback = job.window.lookback if spec.window == "rolling" else None
    least = _min_rows(job, design.splitter, lookback, len(data.dates))
    rows = _schedule(job, spec, data, least)
    coupled = bool(limits.turnover_penalty) or limits.max_turnover is not None
    bps = _costs(job, spec, data.names)
    model = held_model(job)
    blocks, block_note = (None, None)
    if model.penalized:
        blocks, block_note = shared_blocks(
            data.constituents, data.benchmark, rows, lookback, design.splitter, spec.memory_mb
        )
    fitter = RebalanceFitter(
        X=data.constituents,
        y=data.benchmark,
        dates=data.dates,
        names=data.names,
        model=model,
        design=design,
        limits=limits,
        lookback=lookback,
        blocks=blocks,
    )
    d = data.dates
    say(
        f"{len(data.names)} constituents, {len(rows)} rebalances ({d[rows[0]]} to "
        f"{d[rows[-1]]}), {spec.window} window, {job.hold} held"
    )

    fits: dict[int, DatedFit] = {}
    parallel = None if coupled else _parallel(n_jobs, backend, scheduler)
    if parallel is not None:
        say(f"fitting {len(rows)} rebalances with {n_jobs} {backend} workers")
        for row, fit in zip(rows.tolist(), parallel(fitter, rows.tolist())):
            fits[row] = fit

    def fit_at(row: int, current: np.ndarray | None) -> DatedFit:
        if row not in fits:
            say(f"rebalance {len(fits) + 1}/{len(rows)}: {d[row]}")
            fits[row] = fitter(row, current)
        return fits[row]

    rf = data.risk_free
    total = data.constituents if rf is None else data.constituents + rf[:, None]
    bench = data.benchmark if rf is None else data.benchmark + rf
    try:
        result = run_backtest(
            total,
            bench,
            rf,
            rows,
            fit_at,
            mode=spec.mode,
            cost_bps=bps,
            periods_per_year=data.periods_per_year,
            coupled=coupled,
        )
    except TrackfitError:
        raise
    except ValueError as exc:  # the portfolio's value fell to zero: the data's to explain
        raise DataError(f"{job.path.name}: backtest: {exc}") from None
    ordered = tuple(fits[r] for r in rows.tolist())
    added, dropped, history = _history(data.names, d[rows], result.targets)
    shortest = lookback if lookback is not None else int(rows[0]) + 1
    design_warnings, notes = design_statements(
        job, (job.hold,), limits, shortest, len(data.names), rows="rows in the shortest window"
    )
    if block_note is not None:
        notes.append(block_note)
    if job.window.holdout:
        notes.append(
            "'window.holdout' is not used: every backtest fit uses all rows of its "
            "window up to the rebalance date, and the periods after it are the test"
        )
    warnings = [*prepared.warnings, *design_warnings]
    notes = [*prepared.notes, *notes]
    for f in ordered:
        warnings.extend(f.warnings)
        notes.extend(f.notes)
    notes.extend(fit_notes(model, np.array([f.weights for f in ordered]), limits))
    return BacktestOutcome(
        job=job,
        spec=spec,
        data=data,
        as_of=day(d[-1]),
        model=job.hold,
        result=result,
        fits=ordered,
        dates=d[rows],
        period_dates=d[result.first_row + 1 :],
        added=added,
        dropped=dropped,
        names=history,
        cost_bps=bps,
        coupled=coupled,
        lookback=lookback,
        warnings=tuple(dict.fromkeys(warnings)),
        notes=tuple(dict.fromkeys(notes)),
    )


def run_backtest_command(
    job_file: Path,
    *,
    as_of: date | None = None,
    out_dir: Path | None = None,
    layout: str = "fixed",
    n_jobs: int = 1,
    backend: str = "loky",
    scheduler: str | None = None,
    figures: bool = True,
    progress: Progress | None = None,
    notify: Notify | None = None,
) -> Written:
    """``trackfit backtest``: read the job, hold the output root's lock, walk forward, write.

    ``out_dir`` defaults to ``<output.directory>/backtest``; with ``layout="dated"`` the files
    go into ``<out_dir>/<as-of date>/``.
    """
    job = load_job(job_file)
    root = out_dir or default_backtest_folder(job)

    def work() -> Written:
        outcome = run_backtest_job(
            job,
            as_of=as_of,
            n_jobs=n_jobs,
            backend=backend,
            scheduler=scheduler,
            progress=progress,
        )
        folder = output_folder(root, layout, as_of or outcome.as_of)
        paths = write_backtest_reports(outcome, folder, figures=figures)
        return Written(paths=tuple(paths), warnings=outcome.warnings)

    return with_lock(root, work, notify)
