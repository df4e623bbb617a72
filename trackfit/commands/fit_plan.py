"""The fit's plan: the holdout split and the folds, laid out before any fit (``fit``, ``check``)."""

from __future__ import annotations

from dataclasses import dataclass

from trackfit.commands.prepare import Prepared, day, design_statements
from trackfit.core.results import Fold
from trackfit.errors import DataError, SolverError

#: Share of the window kept as holdout when the job does not say.
DEFAULT_HOLDOUT_SHARE = 0.2


@dataclass(frozen=True)
class FitPlan:
    """What a fit of this job on this data would do, before any fitting.

    Attributes
    ----------
    prepared : Prepared
    n_train, n_holdout : int
        Rows ``[0, n_train)`` choose and fit; the ``n_holdout`` rows after them judge.
    folds : tuple of Fold
        The cross-validation folds over the ``n_train`` rows.
    warnings, notes : tuple of str
        Everything known before fitting: the data's and the limits' warnings, then the
        design's; the limits' notes (routine facts), then the design's statements about method,
        which the report must carry and which change no exit code.
    """

    prepared: Prepared
    n_train: int
    n_holdout: int
    folds: tuple[Fold, ...]
    warnings: tuple[str, ...]
    notes: tuple[str, ...]


def plan_fit(prepared: Prepared) -> FitPlan:
    """Lay out the holdout split and the folds; fit nothing.

    Raises
    ------
    DataError
        The holdout leaves too few rows, or the rows before it cannot hold the folds.
    """
    job, data = prepared.job, prepared.data
    n = len(data.dates)
    n_holdout = int(n * DEFAULT_HOLDOUT_SHARE) if job.window.holdout is None else job.window.holdout
    n_train = n - n_holdout
    if n_train < 2:
        raise DataError(
            f"{job.path.name}: 'window.holdout' is {n_holdout} rows but the window has only "
            f"{n} rows ({day(data.dates[0])} to {day(data.dates[-1])}); lower the holdout or "
            "lengthen the window"
        )
    try:
        folds = prepared.design.splitter.split(n_train)
    except SolverError as exc:
        raise DataError(
            f"{job.path.name}: {n_train} rows before the holdout "
            f"({day(data.dates[0])} to {day(data.dates[n_train - 1])}): {exc}"
        ) from None
    models = tuple(m.name for m in job.models)
    warnings, notes = design_statements(job, models, prepared.limits, n_train, len(data.names))
    return FitPlan(
        prepared=prepared,
        n_train=n_train,
        n_holdout=n_holdout,
        folds=folds,
        warnings=(*prepared.warnings, *warnings),
        notes=(*prepared.notes, *notes),
    )
