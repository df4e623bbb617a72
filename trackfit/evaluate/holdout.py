"""Holdout study: choose and fit on the rows before the holdout, judge on the holdout, refit on all.

Nothing after the first holdout row is used to choose a penalty or fit the weights that are
judged on the holdout. The weights to hold are then refitted on the whole window with the
penalty chosen before the holdout.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass, replace

import numpy as np

from trackfit.core.cv import cross_validate
from trackfit.core.fit import KKT_LIMIT, equal_weights, fit_ols
from trackfit.core.folds import ForwardChaining
from trackfit.core.limited_fit import WARM_SEARCH, fit_limited
from trackfit.core.limits import NO_LIMITS, Limits
from trackfit.core.models import ModelSpec
from trackfit.core.results import CVResult, FittedWeights
from trackfit.core.solvers import PathSolver
from trackfit.evaluate.metrics import TrackingMetrics, tracking_metrics


@dataclass(frozen=True)
class ModelOutcome:
    """One model through the whole study.

    Attributes
    ----------
    name : str
        ``"lasso"``, ``"ridge"``, ``"elastic_net"``, ``"ols"`` or ``"equal_weight"``.
    kind : str
        Penalty family, or ``"ols"`` / ``"equal_weight"`` for the baselines.
    cv : CVResult or None
        None for the baselines.
    train_fit : FittedWeights
        Fitted on the training rows (before the holdout) with the chosen penalty.
    in_sample : TrackingMetrics
        ``train_fit`` on the training rows.
    holdout : TrackingMetrics or None
        ``train_fit`` applied unchanged to the holdout rows (None when there is no holdout).
    final_fit : FittedWeights
        Refitted on the whole window with the chosen penalty: the weights to hold.
    uncapped_in_sample, uncapped_holdout : TrackingMetrics or None
        Under a maximum number of names: the same model fitted at the same penalty without
        that cap (every other limit kept), so the report can show the cost of the cap.
    """

    name: str
    kind: str
    cv: CVResult | None
    train_fit: FittedWeights
    in_sample: TrackingMetrics
    holdout: TrackingMetrics | None
    final_fit: FittedWeights
    uncapped_in_sample: TrackingMetrics | None = None
    uncapped_holdout: TrackingMetrics | None = None


@dataclass(frozen=True)
class HoldoutStudy:
    """All models, with the row split used.

    ``n_train`` rows [0, n_train) choose and fit; ``n_holdout`` rows after them judge.
    """

    n_train: int
    n_holdout: int
    models: tuple[ModelOutcome, ...]
    warnings: tuple[str, ...]


@dataclass(frozen=True)
class StudyDesign:
    """How penalties are chosen: the folds, the selection rule and the grid."""

    splitter: ForwardChaining
    rule: str = "min_error"
    count: int = 100
    min_ratio: float = 1e-3


def _held(fit: FittedWeights) -> np.ndarray | None:
    """The names a capped fit chose, as a start for the next search (None when uncapped)."""
    return fit.weights != 0 if fit.search is not None else None


def _dropped_names(fit: FittedWeights, names: Sequence[str]) -> list[str]:
    if fit.scaling is None:
        return []
    return [names[i] for i in np.flatnonzero(~fit.scaling.usable)]


def run_holdout(
    X: np.ndarray,
    y: np.ndarray,
    names: Sequence[str],
    specs: Sequence[ModelSpec],
    design: StudyDesign,
    *,
    n_holdout: int,
    periods_per_year: int,
    solver: PathSolver | None = None,
    progress: Callable[[str], None] | None = None,
    limits: Limits = NO_LIMITS,
) -> HoldoutStudy:
    """Run every model, OLS and the equal-weight baseline through the holdout study.

    Parameters
    ----------
    X : ndarray of shape (n_periods, n_assets)
        Constituent returns over the whole window.
    y : ndarray of shape (n_periods,)
        Benchmark returns.
    names : sequence of str, length n_assets
        Used only in warnings.
    n_holdout : int
        Rows at the end of the window kept out of choosing and fitting; 0 for none.
    limits : Limits
        Mandate limits every penalized model and OLS obey, in cross-validation and in every
        fit (equal weights stay the naive baseline). Under a maximum number of names each model
        is also fitted without that cap, to show its cost.
    """
    n = len(y)
    n_train = n - n_holdout
    Xt, yt, Xh, yh = X[:n_train], y[:n_train], X[n_train:], y[n_train:]
    say = progress or (lambda _msg: None)
    warnings: list[str] = []

    def on_rows(fit, Xr, yr):
        return tracking_metrics(Xr @ fit.weights, yr, fit.weights, periods_per_year)

    uncapped_limits = replace(limits, max_names=None)

    def uncapped(alpha, l1_ratio):
        """In-sample and holdout metrics of the same model without the name cap."""
        if limits.max_names is None:
            return {}
        fit = fit_limited(Xt, yt, alpha, l1_ratio, uncapped_limits)
        return {
            "uncapped_in_sample": on_rows(fit, Xt, yt),
            "uncapped_holdout": on_rows(fit, Xh, yh) if n_holdout else None,
        }

    def judge(name, kind, cv, train_fit, final_fit, extra=None):
        w = train_fit.weights
        holdout = on_rows(train_fit, Xh, yh) if n_holdout else None
        for fit, rows in ((train_fit, "the rows before the holdout"), (final_fit, "the whole window")):
            dropped = _dropped_names(fit, names)
            if dropped:
                warnings.append(
                    f"{name}: left out {', '.join(dropped)}: zero variance on {rows}"
                )
        if kind not in ("ols", "equal_weight") and not np.any(final_fit.weights):
            warnings.append(
                f"{name}: the chosen penalty holds no names (all cash); the benchmark may be "
                "unrelated to the constituents over this window"
            )
        return ModelOutcome(
            name=name,
            kind=kind,
            cv=cv,
            train_fit=train_fit,
            in_sample=on_rows(train_fit, Xt, yt),
            holdout=holdout,
            final_fit=final_fit,
            **(extra or {}),
        )

    outcomes = []
    for spec in specs:
        say(f"cross-validating {spec.name} over {design.splitter.n_folds} folds")
        cv = cross_validate(
            Xt,
            yt,
            spec,
            design.splitter,
            rule=design.rule,
            count=design.count,
            min_ratio=design.min_ratio,
            solver=solver,
            limits=limits,
        )
        train_fit = fit_limited(Xt, yt, cv.alpha, cv.l1_ratio, limits)
        final_fit = (
            fit_limited(X, y, cv.alpha, cv.l1_ratio, limits, start=_held(train_fit), search=WARM_SEARCH)
            if n_holdout
            else train_fit
        )
        extra = uncapped(cv.alpha, cv.l1_ratio)
        outcomes.append(judge(spec.name, spec.kind, cv, train_fit, final_fit, extra))

    say("fitting the OLS and equal-weight baselines")
    if limits.any:  # least squares under the limits: alpha = 0
        ols_train = fit_limited(Xt, yt, 0.0, 0.0, limits)
        ols_final = (
            fit_limited(X, y, 0.0, 0.0, limits, start=_held(ols_train), search=WARM_SEARCH)
            if n_holdout
            else ols_train
        )
    else:
        ols_train = fit_ols(Xt, yt)
        ols_final = fit_ols(X, y) if n_holdout else ols_train
    for fit in (ols_train, ols_final):
        if fit.kkt_residual > KKT_LIMIT:
            warnings.append(
                f"ols: the normal equations hold only to {fit.kkt_residual:.1e}; the "
                "constituents are nearly collinear, so the OLS weights are unreliable"
            )
            break
    outcomes.append(judge("ols", "ols", None, ols_train, ols_final, uncapped(0.0, 0.0)))
    equal = equal_weights(X.shape[1])
    outcomes.append(judge("equal_weight", "equal_weight", None, equal, equal))
    return HoldoutStudy(
        n_train=n_train, n_holdout=n_holdout, models=tuple(outcomes), warnings=tuple(warnings)
    )
