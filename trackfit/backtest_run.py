"""``trackfit backtest`` without the command line: job + data -> walk-forward fits -> files.

At each rebalance date the held model is fitted exactly as ``trackfit fit`` chooses it
(time-ordered cross-validation with the job's folds, rule and grid, then the fit at the chosen
penalty, under the mandate limits) on the rows of the backtest window up to that date, with no
holdout: the returns after the date are the out-of-sample test. The weights are then held
(:func:`trackfit.evaluate.backtest.run_backtest`) until the next rebalance.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass, replace
from datetime import date
from pathlib import Path

import numpy as np

from trackfit.core.constrained import check_feasible
from trackfit.core.cv import cross_validate
from trackfit.core.fit import equal_weights, fit_ols
from trackfit.core.folds import ForwardChaining
from trackfit.core.limited_fit import fit_limited
from trackfit.core.limits import Limits
from trackfit.core.models import ModelSpec
from trackfit.data import TrackingData
from trackfit.data.load import load_tracking_data
from trackfit.data.series import align_series
from trackfit.data.window import select_window
from trackfit.errors import DataError, JobError, SolverError, TrackfitError
from trackfit.evaluate.backtest import BacktestResult, RebalanceFit, run_backtest
from trackfit.evaluate.schedule import rebalance_rows
from trackfit.job import BacktestSpec, Job, WindowSpec
from trackfit.mandate import build_limits

Progress = Callable[[str], None]
BACKENDS = ("loky", "dask")
LAYOUTS = ("fixed", "dated")
#: Sub-folder of ``output.directory`` a backtest writes to when no --out is given, so it never
#: overwrites the report.md of ``trackfit fit``.
BACKTEST_FOLDER = "backtest"


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


def _day(value: np.datetime64) -> date:
    return value.astype("datetime64[D]").item()


@dataclass(frozen=True, eq=False)
class _Fitter:
    """``fit_at(row, current)`` for :func:`run_backtest`: the held model on the window to ``row``.

    Module level and made of arrays and small dataclasses, so process pools can pickle it.
    """

    X: np.ndarray
    y: np.ndarray
    dates: np.ndarray
    names: tuple[str, ...]
    model: ModelSpec | None  # None for the ols and equal_weight baselines
    hold: str
    splitter: ForwardChaining
    rule: str
    count: int
    min_ratio: float
    limits: Limits
    lookback: int | None

    def __call__(self, row: int, current: np.ndarray | None = None) -> DatedFit:
        lo = 0 if self.lookback is None else row - self.lookback + 1
        X, y = self.X[lo : row + 1], self.y[lo : row + 1]
        limits = self.limits
        if current is not None:  # coupled: later rebalances trade from the drifted holdings
            limits = replace(limits, current=current, outside_turnover=0.0)
        when = str(self.dates[row])
        try:
            fit, notes = self._fit(X, y, limits)
        except SolverError as exc:
            raise SolverError(f"rebalance {when}: {exc}") from None
        warnings = []
        if fit.scaling is not None and not fit.scaling.usable.all():
            left = [self.names[j] for j in np.flatnonzero(~fit.scaling.usable)]
            warnings.append(f"rebalance {when}: left out {', '.join(left)}: zero variance on "
                            "the fit window")
        if self.model is not None and not np.any(fit.weights):
            warnings.append(f"rebalance {when}: {self.hold}: the chosen penalty holds no names "
                            "(all cash)")
        return DatedFit(
            weights=fit.weights,
            alpha=fit.alpha,
            l1_ratio=fit.l1_ratio,
            kkt_residual=fit.kkt_residual,
            window_start=lo,
            notes=tuple(f"rebalance {when}: {n}" for n in notes),
            warnings=tuple(warnings),
        )

    def _fit(self, X, y, limits):
        if self.model is None:
            if self.hold == "equal_weight":
                return equal_weights(X.shape[1]), ()
            return (fit_limited(X, y, 0.0, 0.0, limits) if limits.any else fit_ols(X, y)), ()
        cv = cross_validate(X, y, self.model, self.splitter, rule=self.rule, count=self.count,
                            min_ratio=self.min_ratio, limits=limits)
        return fit_limited(X, y, cv.alpha, cv.l1_ratio, limits), cv.notes


def resolve_as_of(job: Job, as_of: date | None) -> date:
    """The as-of date of a run: ``as_of`` when given, else the last date of the fit window."""
    if as_of is not None:
        return as_of
    return _day(load_tracking_data(job, None).dates[-1])


def output_folder(root: Path, layout: str, as_of: date) -> Path:
    """``root`` for the fixed layout, ``root/<YYYY-MM-DD>`` for the dated one."""
    if layout not in LAYOUTS:
        raise ValueError(f"layout must be one of {LAYOUTS}; got {layout!r}")
    return Path(root) if layout == "fixed" else Path(root) / as_of.isoformat()


def default_backtest_folder(job: Job) -> Path:
    return job.output.directory / BACKTEST_FOLDER


def _spec(job: Job) -> BacktestSpec:
    spec = job.backtest or BacktestSpec()
    if spec.window == "rolling" and job.window.lookback is None:
        raise JobError(f"{job.path.name}: the job has no 'backtest' section, so the backtest "
                       "uses a rolling window of 'window.lookback' rows, but 'window.lookback' is "
                       "not set; set it, or add 'backtest: {window: expanding}'")
    return spec


def _load(job: Job, spec: BacktestSpec, as_of: date | None) -> TrackingData:
    """Excess returns over every row any rebalance window uses, through ``as_of``."""
    aligned = align_series(job)
    dates = aligned.dates[1:] if job.data.values == "prices" else aligned.dates
    stop = select_window(dates, WindowSpec(), as_of).stop
    lo = 0
    if spec.window == "expanding" and job.window.start is not None:
        lo = int(np.searchsorted(dates, np.datetime64(job.window.start, "D")))
    elif spec.window == "rolling" and spec.start is not None:
        first = int(np.searchsorted(dates[:stop], np.datetime64(spec.start, "D")))
        lo = max(0, first - job.window.lookback + 1)
    if lo >= stop:
        raise DataError(f"{job.path.name}: no return date between the backtest's first date "
                        f"and the as-of date {dates[stop - 1]}; move 'backtest.start' or "
                        "'window.start' earlier, or pass a later --as-of")
    window = WindowSpec(start=_day(dates[lo]))
    return load_tracking_data(replace(job, window=window), as_of)


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
        rows = rebalance_rows(d, every=spec.every, start=spec.start, end=spec.end,
                              periods=spec.periods)
    except ValueError as exc:
        raise DataError(f"{job.path.name}: backtest schedule: {exc}") from None
    need = f"{least} rows of history (the " + (
        "window.lookback)" if spec.window == "rolling" else "rows the cross-validation folds need)")
    if spec.start is None:
        rows = rows[rows >= least - 1]
        if rows.size == 0:
            raise DataError(f"{job.path.name}: no rebalance date has {need}; the data run from "
                            f"{d[0]} to {d[-1]} ({len(d)} rows); add history or shorten the "
                            "window")
    elif rows[0] < least - 1:
        raise DataError(f"{job.path.name}: the first rebalance date {d[rows[0]]} (from "
                        f"'backtest.start' {spec.start}) has {rows[0] + 1} rows of history, but "
                        f"each fit needs {need}; set 'backtest.start' on or after "
                        f"{d[least - 1]}, or add older data")
    if rows[0] >= len(d) - 1:
        raise DataError(f"{job.path.name}: the first rebalance date {d[rows[0]]} is the last "
                        "data date, so no period is held out of sample; move 'backtest.start' "
                        "earlier or pass a later --as-of")
    return rows


def _costs(job: Job, spec: BacktestSpec, names: Sequence[str]) -> np.ndarray:
    index = {n: i for i, n in enumerate(names)}
    bps = np.full(len(names), spec.cost_bps)
    for name, value in spec.cost_bps_names:
        if name not in index:
            raise JobError(f"{job.path.name}: 'backtest.cost_bps' lists {name!r}, which is not a "
                           "constituent of this backtest; fix the name or remove it "
                           "(constituents whose return never varies are left out; see the "
                           "warnings)")
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
        raise JobError("--backend dask needs dask.distributed; install it with "
                       "pip install 'trackfit[dask]', or use the default loky backend") from None

    def run_dask(fn, rows):
        if scheduler is not None:
            client, cluster = Client(scheduler), None
        else:
            cluster = LocalCluster(n_workers=n_jobs, threads_per_worker=1, host="127.0.0.1",
                                   dashboard_address=None, processes=True)
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
        out.append(NameHistory(name=name, rebalances=int(at.size), first=_day(dates[at[0]]),
                               last=_day(dates[at[-1]]), mean_weight=float(targets[:, j].mean()),
                               last_weight=float(targets[-1, j])))
    out.sort(key=lambda h: (-h.rebalances, h.name))
    return added, dropped, tuple(out)


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
    data = _load(job, spec, as_of)
    splitter = ForwardChaining(n_folds=job.cv.folds, min_train=job.cv.min_train, gap=job.cv.gap,
                               rolling=job.cv.scheme == "rolling")
    lookback = job.window.lookback if spec.window == "rolling" else None
    rows = _schedule(job, spec, data, _min_rows(job, splitter, lookback, len(data.dates)))
    limits, _holdings, limit_warnings = build_limits(job, data.names)
    try:
        check_feasible(limits, data.names)
    except SolverError as exc:
        raise JobError(f"{job.path.name}: the mandate limits conflict: {exc}") from None
    coupled = bool(limits.turnover_penalty) or limits.max_turnover is not None
    bps = _costs(job, spec, data.names)
    model = next((m for m in job.models if m.name == job.hold), None)
    fitter = _Fitter(X=data.constituents, y=data.benchmark, dates=data.dates, names=data.names,
                     model=model, hold=job.hold, splitter=splitter, rule=job.cv.rule,
                     count=job.grid.count, min_ratio=job.grid.min_ratio, limits=limits,
                     lookback=lookback)
    d = data.dates
    say(f"{len(data.names)} constituents, {len(rows)} rebalances ({d[rows[0]]} to "
        f"{d[rows[-1]]}), {spec.window} window, {job.hold} held")

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
        result = run_backtest(total, bench, rf, rows, fit_at, mode=spec.mode, cost_bps=bps,
                              periods_per_year=data.periods_per_year, coupled=coupled)
    except TrackfitError:
        raise
    except ValueError as exc:  # the portfolio's value fell to zero: the data's to explain
        raise DataError(f"{job.path.name}: backtest: {exc}") from None
    ordered = tuple(fits[r] for r in rows.tolist())
    added, dropped, history = _history(data.names, d[rows], result.targets)
    notes = []
    if job.window.holdout:
        notes.append("'window.holdout' is not used: every backtest fit uses all rows of its "
                     "window up to the rebalance date, and the periods after it are the test")
    warnings = [*data.warnings, *limit_warnings]
    for f in ordered:
        warnings.extend(f.warnings)
        notes.extend(f.notes)
    return BacktestOutcome(
        job=job, spec=spec, data=data, as_of=_day(d[-1]), model=job.hold, result=result,
        fits=ordered, dates=d[rows], period_dates=d[result.first_row + 1:], added=added,
        dropped=dropped, names=history, cost_bps=bps, coupled=coupled, lookback=lookback,
        warnings=tuple(dict.fromkeys(warnings)), notes=tuple(dict.fromkeys(notes)),
    )
