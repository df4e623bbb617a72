"""Choosing a penalty by time-ordered cross-validation.

Inside every fold the scaling is refitted on that fold's training rows, so no validation row
leaks into training. Errors are measured in original units: the mean squared active return of
the fold's weights on its validation rows.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from trackfit.core.fit import check_accuracy
from trackfit.core.folds import ForwardChaining
from trackfit.core.gram import GramData, RowBlocks, gram_from_blocks, window_grams
from trackfit.core.grid import extend_grid, penalty_grid
from trackfit.core.limited_fit import CV_SEARCH, fit_limited_gram, needs_limited_engine
from trackfit.core.limits import NO_LIMITS, Limits
from trackfit.core.models import ModelSpec, model_kind
from trackfit.core.results import CVCurve, CVResult, Fold, Scaling
from trackfit.core.scaling import fit_scaling
from trackfit.core.solvers import PathSolver, default_solver
from trackfit.core.solvers.threads import single_threaded
from trackfit.errors import SolverError

RULES = ("min_error", "one_standard_error")


@dataclass(frozen=True)
class _FoldData:
    data: GramData
    scaling: Scaling
    X_val: np.ndarray
    y_val: np.ndarray
    limits: Limits = NO_LIMITS  # resolved on the fold's training rows (Limits.on_rows)


def _limited_fold_errors(folds: list[_FoldData], alphas: np.ndarray, l1_ratio: float) -> np.ndarray:
    """As :func:`_fold_errors`, each penalty fitted under the mandate limits."""
    errors = np.empty((len(alphas), len(folds)))
    for f, fold in enumerate(folds):
        start = None
        for i, alpha in enumerate(alphas):
            fit = fit_limited_gram(
                fold.data, fold.scaling, alpha, l1_ratio, fold.limits, search=CV_SEARCH, start=start
            )
            start = fit.weights != 0
            active = fold.X_val @ fit.weights - fold.y_val
            errors[i, f] = float(np.mean(active * active))
    return errors


def _fold_errors(
    folds: list[_FoldData],
    alphas: np.ndarray,
    l1_ratio: float,
    positive: bool,
    solver: PathSolver,
    label: str,
    limits: Limits = NO_LIMITS,
) -> np.ndarray:
    """Validation mean squared active return, shape (n_alphas, n_folds)."""
    if limits.any:
        if needs_limited_engine(limits, l1_ratio):
            return _limited_fold_errors(folds, alphas, l1_ratio)
        positive = True
    errors = np.empty((len(alphas), len(folds)))
    for f, fold in enumerate(folds):
        sol = solver.path(fold.data, alphas, l1_ratio, positive=positive)
        check_accuracy(float(np.max(sol.kkt_residuals, initial=0.0)), f"{label}, fold {f + 1}")
        cols = fold.data.columns
        weights = sol.coefs * (fold.scaling.y_scale / fold.scaling.x_scale[cols])
        X_val = fold.X_val if len(cols) == fold.X_val.shape[1] else fold.X_val[:, cols]
        with single_threaded():  # a few hundred rows: one BLAS thread is faster
            active = X_val @ weights.T - fold.y_val[:, None]
        errors[:, f] = np.mean(active * active, axis=0)
    return errors


def _curve(l1_ratio: float, alphas: np.ndarray, errors: np.ndarray) -> CVCurve:
    k = errors.shape[1]
    return CVCurve(
        l1_ratio=float(l1_ratio),
        alphas=alphas,
        mean_error=errors.mean(axis=1),
        std_error=errors.std(axis=1, ddof=1) / np.sqrt(k),
        fold_errors=errors,
    )


def _grid_statistics(X: np.ndarray, y: np.ndarray, scaling: Scaling) -> GramData:
    """What the lasso and elastic-net grids read of all rows: the standardized ``X'y / n``.

    The Gram field is empty (shape (0, 0)): only for :func:`penalty_grid` with
    ``l1_ratio > 0``, which never reads it.
    """
    columns = np.flatnonzero(scaling.usable)
    n = len(y)
    # The arithmetic of standardized_gram, so the grid is the one it gives to the last bit.
    Xs = X[:, columns] / scaling.x_scale[columns]
    ys = y / scaling.y_scale
    with single_threaded():
        xty = Xs.T @ ys / n
    yty = float(ys @ ys) / n
    return GramData(gram=np.zeros((0, 0)), xty=xty, yty=yty, n=n, columns=columns)


def _working_scaling(
    X: np.ndarray, y: np.ndarray, spec: ModelSpec, splitter: ForwardChaining
) -> tuple[Scaling, tuple[str, ...]]:
    """The scaling a fit of ``spec`` on these rows works in, and any notes of how it was
    chosen: :func:`fit_scaling`, reweighted by the kind's rule when it has one (the adaptive
    lasso's pilot, chosen on these rows alone)."""
    scaling = fit_scaling(X, y)
    reweight = model_kind(spec.kind).reweight
    if reweight is None:
        return scaling, ()
    done = reweight(X, y, spec, splitter, scaling)
    return done.scaling, done.notes


def fold_scalings(
    X: np.ndarray, y: np.ndarray, spec: ModelSpec, splitter: ForwardChaining, folds=None
) -> list[Scaling]:
    """The scaling each fold's fit works in, each chosen on that fold's training rows only.

    Parameters
    ----------
    X : ndarray of shape (n_periods, n_assets)
    y : ndarray of shape (n_periods,)
    spec : ModelSpec
    splitter : ForwardChaining
        Gives the folds (unless ``folds`` is given) and, for kinds that reweight their
        columns, the pilot's folds inside each fold's training rows.
    folds : sequence of Fold, optional
        Default ``splitter.split(n_periods)``.

    Returns
    -------
    list of Scaling
        One per fold.
    """
    folds = splitter.split(len(y)) if folds is None else folds
    out = []
    for i, f in enumerate(folds, 1):
        rows = slice(f.train_start, f.train_stop)
        try:
            scaling, _ = _working_scaling(X[rows], y[rows], spec, splitter)
        except SolverError as exc:
            if model_kind(spec.kind).reweight is None:
                raise
            raise SolverError(
                f"{spec.name}, fold {i} (training rows {f.train_start} to {f.train_stop - 1}): {exc}"
            ) from None
        out.append(scaling)
    return out


def _fold_bounds(folds, n: int) -> set[int]:
    return {0, n} | {b for f in folds for b in (f.train_start, f.train_stop)}


def window_bounds(windows, splitter: ForwardChaining) -> np.ndarray:
    """Row boundaries that let one set of blocks serve the cross-validation of every window.

    Parameters
    ----------
    windows : sequence of (int, int)
        Half-open row ranges ``[start, stop)`` of one series, each to be cross-validated with
        ``splitter`` (for example the trailing windows of a walk-forward).
    splitter : ForwardChaining

    Returns
    -------
    ndarray of int
        Increasing boundaries: each window's ends and its folds' training ends.

    Examples
    --------
    One pass over the rows, then a cross-validation per window::

        bounds = window_bounds(windows, splitter)
        blocks = prefix_blocks(X, y, bounds)
        for start, stop in windows:
            cv = cross_validate(X[start:stop], y[start:stop], spec, splitter,
                                blocks=blocks, row_offset=start)
    """
    out: set[int] = set()
    for start, stop in windows:
        out |= {start + b for b in _fold_bounds(splitter.split(stop - start), stop - start)}
    return np.array(sorted(out), dtype=int)


def cross_validate(
    X: np.ndarray,
    y: np.ndarray,
    spec: ModelSpec,
    splitter: ForwardChaining,
    *,
    rule: str = "min_error",
    count: int = 100,
    min_ratio: float = 1e-3,
    positive: bool = False,
    solver: PathSolver | None = None,
    max_extensions: int = 3,
    refit_scaling: bool = True,
    limits: Limits = NO_LIMITS,
    blocks: RowBlocks | None = None,
    row_offset: int = 0,
) -> CVResult:
    """Cross-validate one model over its penalty grid(s) and choose a penalty.

    The grid of each l1_ratio is built from all rows given (as scikit-learn's ``LassoCV`` does)
    and shared by the folds. When the smallest mean CV error of a grid lies on its edge, the
    grid is extended past that edge (two decades at a time, at most ``max_extensions`` times)
    and the extension is noted; for lasso and elastic net only the small-penalty edge can move,
    since every larger penalty holds no names.

    Kinds that reweight their columns (the adaptive lasso) choose the weighting on the rows
    each fit sees: the grid's from all rows given, each fold's from that fold's training rows
    only (:func:`fold_scalings`); ``blocks`` serve the outer folds, the pilot reads its rows.

    Parameters
    ----------
    X : ndarray of shape (n_periods, n_assets)
    y : ndarray of shape (n_periods,)
    spec : ModelSpec
    splitter : ForwardChaining
    rule : {"min_error", "one_standard_error"}
        ``min_error`` takes the penalty with the smallest mean CV error over all l1_ratios.
        ``one_standard_error`` keeps the l1_ratio of that minimum and takes the largest penalty
        whose mean CV error is within one standard error of it.
    refit_scaling : bool
        Refit the scaling inside each fold (the default, and the honest choice). False scales
        every fold with the scaling of all rows given: only for comparison with references
        that take pre-scaled data.
    limits : Limits
        Mandate limits every fold's fit obeys, as the final fit will (a screened max-names
        search inside folds, see :data:`trackfit.core.limited_fit.CV_SEARCH`).
    blocks : RowBlocks, optional
        Statistics of row blocks of a longer series that ``X`` and ``y`` are rows
        ``[row_offset, row_offset + n_periods)`` of, shared by many windows (a walk-forward):
        build them once with :func:`trackfit.core.gram.prefix_blocks` on the bounds of
        :func:`window_bounds`. The results equal those without ``blocks`` up to rounding.
        Default: built here from ``X`` and ``y``.
    row_offset : int
        Position of the first row of ``X`` in the series of ``blocks``.

    Returns
    -------
    CVResult
    """
    if rule not in RULES:
        raise ValueError(f"rule must be one of {RULES}; got {rule!r}")
    solver = solver or default_solver()
    positive = positive or limits.long_only
    folds = splitter.split(len(y))
    if blocks is not None and blocks.xtx.shape[1] != X.shape[1]:
        raise ValueError(
            f"blocks hold {blocks.xtx.shape[1]} constituents but X has {X.shape[1]}; build "
            "them on the same columns"
        )
    penalties = model_kind(spec.kind).penalties(spec)
    whole_scaling, pilot_notes = _working_scaling(X, y, spec, splitter)
    scalings = (
        fold_scalings(X, y, spec, splitter, folds)
        if refit_scaling
        else [whole_scaling] * len(folds)
    )
    spans = [(f.train_start, f.train_stop) for f in folds]
    # The grids need the Gram matrix of all rows only for ridge; otherwise X'y alone.
    whole_gram = any(p.grid_needs_gram for p in penalties)
    if whole_gram:
        spans.insert(0, (0, len(y)))
        # The ridge grid is read off the Gram of all rows: built from shared blocks it would
        # round differently from one fit of the same window, and the chosen penalty (so the
        # weights) would differ in the last bits between a backtest and that fit. Ridge CV
        # costs its eigendecompositions, not these products, so nothing is lost.
        blocks = None
    if blocks is None:
        # One pass over the rows: every training window is a run of whole blocks.
        grams = window_grams(X, y, spans, [whole_scaling] * whole_gram + scalings)
    else:
        o = int(row_offset)
        grams = [
            gram_from_blocks(blocks, o + start, o + stop, scaling)
            for (start, stop), scaling in zip(spans, [whole_scaling] * whole_gram + scalings)
        ]
    whole = grams.pop(0) if whole_gram else _grid_statistics(X, y, whole_scaling)
    fold_data = [
        _FoldData(
            data=data,
            scaling=scaling,
            X_val=X[fold.val_start : fold.val_stop],
            y_val=y[fold.val_start : fold.val_stop],
            limits=limits.on_rows(
                X[fold.train_start : fold.train_stop], y[fold.train_start : fold.train_stop]
            ),
        )
        for fold, scaling, data in zip(folds, scalings, grams)
    ]
    del grams

    curves, notes = [], [f"{spec.name}: {n}" for n in pilot_notes]
    for l1_ratio, penalty in zip(spec.l1_ratios, penalties):
        label = f"{spec.name} (l1_ratio={l1_ratio:g})"
        alphas = penalty_grid(whole, l1_ratio, count, min_ratio, positive=positive)
        if len(alphas) == 0:
            raise SolverError(
                f"{label}: no constituent is positively related to the benchmark on the "
                "training rows, so every penalty gives an empty portfolio"
            )
        errors = _fold_errors(fold_data, alphas, l1_ratio, positive, solver, label, limits)
        for _ in range(max_extensions + 1):
            at = int(np.argmin(errors.mean(axis=1)))
            lower = at == len(alphas) - 1
            upper = at == 0 and not penalty.top_holds_nothing
            if not (lower or upper):
                break
            if _ == max_extensions:
                notes.append(
                    f"{label}: the smallest CV error is still on the edge of the grid "
                    f"(alpha={alphas[at]:.4g}) after {max_extensions} extensions"
                )
                break
            old = len(alphas)
            alphas = extend_grid(alphas, lower=lower)
            errors = _fold_errors(fold_data, alphas, l1_ratio, positive, solver, label, limits)
            side = "below" if lower else "above"
            notes.append(
                f"{label}: the smallest CV error was on the edge of the grid; extended the grid "
                f"{side} to {alphas[-1] if lower else alphas[0]:.4g} ({len(alphas) - old} penalties added)"
            )
        curves.append(_curve(l1_ratio, alphas, errors))

    means = [c.mean_error for c in curves]
    ci = int(np.argmin([m.min() for m in means]))  # first curve wins ties, as in ElasticNetCV
    ai = int(np.argmin(means[ci]))
    best = curves[ci]
    chosen = ai
    if rule == "one_standard_error":
        limit = best.mean_error[ai] + best.std_error[ai]
        chosen = int(np.flatnonzero(best.mean_error <= limit)[0])
    if penalties[ci].top_holds_nothing and chosen == 0:
        why = (
            "had the smallest CV error" if ai == 0 else "was chosen by the one-standard-error rule"
        )
        notes.append(f"{spec.name}: the largest penalty, which holds no names, {why}")
    return CVResult(
        curves=tuple(curves),
        rule=rule,
        alpha=float(best.alphas[chosen]),
        l1_ratio=float(best.l1_ratio),
        best_alpha=float(best.alphas[ai]),
        best_l1_ratio=float(best.l1_ratio),
        folds=tuple(folds),
        notes=tuple(notes),
    )


__all__ = ["RULES", "Fold", "cross_validate", "fold_scalings", "window_bounds"]
