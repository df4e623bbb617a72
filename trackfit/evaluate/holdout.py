"""Holdout study: choose and fit on the rows before the holdout, judge on the holdout, refit on all.

Nothing after the first holdout row is used to choose a penalty or fit the weights that are
judged on the holdout. The weights to hold are then refitted on the whole window with the
penalty chosen before the holdout.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass, replace

import numpy as np

from trackfit.core.limited_fit import WARM_SEARCH
from trackfit.core.limits import NO_LIMITS, Limits
from trackfit.core.models import ModelSpec
from trackfit.core.results import CVResult, FittedWeights
from trackfit.core.solvers import PathSolver
from trackfit.evaluate.metrics import TrackingMetrics, tracking_metrics
from trackfit.evaluate.recipe import (
    BASELINES,
    Model,
    StudyDesign,
    choose_penalty,
    fit_model,
    fit_warnings,
    held_support,
)

__all__ = ["HoldoutStudy", "ModelOutcome", "StudyDesign", "run_holdout"]


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
    final_in_sample : TrackingMetrics or None
        ``final_fit`` (the weights to hold) on the whole window it was fitted on.
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
    final_in_sample: TrackingMetrics | None = None


@dataclass(frozen=True)
class HoldoutStudy:
    """All models, with the row split used.

    ``n_train`` rows [0, n_train) choose and fit; ``n_holdout`` rows after them judge.
    """

    n_train: int
    n_holdout: int
    models: tuple[ModelOutcome, ...]
    warnings: tuple[str, ...]


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

    def study(model: Model) -> ModelOutcome:
        cv = choose_penalty(Xt, yt, model, design, limits, solver=solver)
        train_fit = fit_model(Xt, yt, model, cv, design, limits)
        final_fit = (
            fit_model(
                X, y, model, cv, design, limits, start=held_support(train_fit), search=WARM_SEARCH
            )
            if n_holdout
            else train_fit
        )
        warnings.extend(
            fit_warnings(model, train_fit, names, "the rows before the holdout", held=False)
        )
        warnings.extend(fit_warnings(model, final_fit, names, "the whole window", held=True))
        extra = {}
        if limits.max_names is not None and model.kind != "equal_weight":
            # The same model at the same penalty without the name cap: what the cap costs.
            free = fit_model(Xt, yt, model, cv, design, uncapped_limits)
            extra = {
                "uncapped_in_sample": on_rows(free, Xt, yt),
                "uncapped_holdout": on_rows(free, Xh, yh) if n_holdout else None,
            }
        return ModelOutcome(
            name=model.name,
            kind=model.kind,
            cv=cv,
            train_fit=train_fit,
            in_sample=on_rows(train_fit, Xt, yt),
            holdout=on_rows(train_fit, Xh, yh) if n_holdout else None,
            final_fit=final_fit,
            final_in_sample=on_rows(final_fit, X, y),
            **extra,
        )

    outcomes = []
    for spec in specs:
        say(f"cross-validating {spec.name} over {design.splitter.n_folds} folds")
        outcomes.append(study(Model.of(spec)))
    say("fitting the OLS and equal-weight baselines")
    outcomes.extend(study(Model.baseline(name)) for name in BASELINES)
    return HoldoutStudy(
        n_train=n_train,
        n_holdout=n_holdout,
        models=tuple(outcomes),
        warnings=tuple(dict.fromkeys(warnings)),
    )
