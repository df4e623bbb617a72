"""One fit of one model at its chosen penalty: the step every command takes after choosing."""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from trackfit.core.folds import ForwardChaining
from trackfit.core.gram import standardized_gram
from trackfit.core.limited_fit import (
    FULL_SEARCH,
    SearchOptions,
    fit_limited,
    fit_limited_gram,
)
from trackfit.core.limits import Limits
from trackfit.core.models import ModelSpec, model_kind
from trackfit.core.results import FittedWeights
from trackfit.core.scaling import fit_scaling


def fit_model(
    X: np.ndarray,
    y: np.ndarray,
    spec: ModelSpec,
    alpha: float,
    l1_ratio: float,
    limits: Limits,
    *,
    splitter: ForwardChaining,
    start: np.ndarray | None = None,
    search: SearchOptions = FULL_SEARCH,
) -> FittedWeights:
    """Fit ``spec`` on these rows at one penalty under ``limits``.

    Lasso, ridge and elastic net: exactly :func:`trackfit.core.limited_fit.fit_limited`.
    Kinds that reweight their columns (the adaptive lasso): the weighting is chosen on these
    rows (its pilot cross-validated with ``splitter``), then the same engines fit the
    reweighted columns.

    Parameters
    ----------
    X : ndarray of shape (n_periods, n_assets)
    y : ndarray of shape (n_periods,)
    spec : ModelSpec
    alpha : float
        Penalty in the kind's standardized units (for the adaptive lasso, those of the
        reweighted columns, as its cross-validation grid is).
    l1_ratio : float
    limits : Limits
    splitter : ForwardChaining
        The cross-validation splitter of the job, for a pilot's own penalty.
    start : ndarray of bool, shape (n_assets,), optional
        An extra starting support for the max-names search.
    search : SearchOptions

    Returns
    -------
    FittedWeights
        ``weights`` in original units; ``coef_std`` and ``scaling`` in the true standardized
        units of these rows, so that ``weights == coef_std * y_scale / x_scale`` up to
        rounding whatever the kind; ``kkt_residual`` that of the problem solved.
    """
    reweight = model_kind(spec.kind).reweight
    if reweight is None:
        return fit_limited(X, y, alpha, l1_ratio, limits, start=start, search=search)
    scaling = fit_scaling(X, y)
    done = reweight(X, y, spec, splitter, scaling)
    fit = fit_limited_gram(
        standardized_gram(X, y, done.scaling),
        done.scaling,
        alpha,
        l1_ratio,
        limits,
        search=search,
        start=start,
    )
    # The engine's standardized weights are in reweighted units; back to the true ones.
    coef_std = fit.coef_std * done.factor
    coef_std[coef_std == 0.0] = 0.0
    return replace(fit, coef_std=coef_std, scaling=scaling)


__all__ = ["fit_model"]
