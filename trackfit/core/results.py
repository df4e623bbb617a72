"""Values the fitting core returns: plain arrays in small frozen dataclasses."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from trackfit.core.limits import LimitStatus


@dataclass(frozen=True)
class Scaling:
    """Uncentered scaling fitted on training rows.

    Attributes
    ----------
    x_scale : ndarray of shape (n_assets,)
        ddof=0 standard deviation of each constituent (1.0 where unusable).
    y_scale : float
        ddof=0 standard deviation of the benchmark.
    usable : ndarray of bool, shape (n_assets,)
        False for constituents with zero variance on the training rows; they get weight 0.
    """

    x_scale: np.ndarray
    y_scale: float
    usable: np.ndarray


@dataclass(frozen=True)
class FittedWeights:
    """One fit on one set of rows.

    Attributes
    ----------
    weights : ndarray of shape (n_assets,)
        Weights in original units, ``w = w_std * y_scale / x_scale``; exactly 0 where unused.
    cash : float
        ``1 - weights.sum()``.
    coef_std : ndarray of shape (n_assets,)
        Weights in standardized units.
    alpha : float or None
        Penalty in standardized units (None for OLS and fixed baselines).
    l1_ratio : float or None
    kkt_residual : float
        Largest violation of the optimality conditions, relative to max|X'y|/n on the
        standardized data (0 for fixed baselines).
    scaling : Scaling or None
    limits : tuple of LimitStatus
        Every limit in force at this solution, with its slack (empty when none).
    search : SupportSearch or None
        How the names were chosen, when a maximum number of names is in force.
    """

    weights: np.ndarray
    cash: float
    coef_std: np.ndarray
    alpha: float | None
    l1_ratio: float | None
    kkt_residual: float
    scaling: Scaling | None
    limits: tuple[LimitStatus, ...] = ()
    search: SupportSearch | None = None


@dataclass(frozen=True)
class SupportSearch:
    """How the names held were chosen under a maximum number of names.

    Attributes
    ----------
    chosen : tuple of int
        Positions of the names held, increasing.
    start : str
        Which starting support won: ``"lasso path"`` or ``"forward selection"``.
    objective : float
        Standardized objective of the refit on ``chosen`` (under every other limit).
    uncapped_objective : float
        The same objective without the maximum-names limit (the cost of the cap is the
        difference).
    evaluations : int
        Refits tried during the search.
    swaps : int
        Swaps accepted (one name out, one in).
    removed_small : tuple of int
        Positions removed because their weight fell below the minimum position size.
    """

    chosen: tuple[int, ...]
    start: str
    objective: float
    uncapped_objective: float
    evaluations: int
    swaps: int
    removed_small: tuple[int, ...] = ()


@dataclass(frozen=True)
class CVCurve:
    """Cross-validation error along one penalty grid (one l1_ratio).

    Attributes
    ----------
    l1_ratio : float
    alphas : ndarray of shape (n_penalties,)
        Decreasing penalties, standardized units.
    mean_error : ndarray of shape (n_penalties,)
        Mean over folds of the validation mean squared active return (original units).
    std_error : ndarray of shape (n_penalties,)
        Standard error of that mean: std over folds (ddof=1) / sqrt(n_folds).
    fold_errors : ndarray of shape (n_penalties, n_folds)
    """

    l1_ratio: float
    alphas: np.ndarray
    mean_error: np.ndarray
    std_error: np.ndarray
    fold_errors: np.ndarray


@dataclass(frozen=True)
class Fold:
    """Row ranges of one fold, half-open: train [train_start, train_stop), validation likewise."""

    train_start: int
    train_stop: int
    val_start: int
    val_stop: int


@dataclass(frozen=True)
class CVResult:
    """Outcome of choosing a penalty by time-ordered cross-validation.

    Attributes
    ----------
    curves : tuple of CVCurve
        One per l1_ratio searched.
    rule : {"min_error", "one_standard_error"}
    alpha, l1_ratio : float
        The chosen penalty and mix.
    best_alpha, best_l1_ratio : float
        The penalty and mix with the smallest mean CV error.
    folds : tuple of Fold
    notes : tuple of str
        Grid extensions and other facts worth a line in the report.
    """

    curves: tuple[CVCurve, ...]
    rule: str
    alpha: float
    l1_ratio: float
    best_alpha: float
    best_l1_ratio: float
    folds: tuple[Fold, ...]
    notes: tuple[str, ...]
