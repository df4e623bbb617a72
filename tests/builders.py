"""A hand-built FitOutcome for the reporter tests: every number the reporter shows is known.

The run is built from the interface dataclasses with invented constituents; nothing is fitted.
"""

from __future__ import annotations

import dataclasses
from datetime import date
from pathlib import Path

import numpy as np

from trackfit.core.models import ModelSpec
from trackfit.core.results import CVCurve, CVResult, FittedWeights, Fold, Scaling
from trackfit.data.calendar import measure_periods_per_year
from trackfit.data.dataset import DataStep, TrackingData
from trackfit.evaluate.holdout import HoldoutStudy, ModelOutcome
from trackfit.evaluate.metrics import TrackingMetrics
from trackfit.job import (
    ConstituentSource,
    CVSpec,
    DataSpec,
    GridSpec,
    Job,
    OutputSpec,
    RiskFreeSpec,
    SeriesRef,
    WindowSpec,
)
from trackfit.outcomes.fit import FitOutcome

NAMES = ("Alder Mills", "Brightwater Foods", "Cobalt Rail", "Dunmore Textiles", "Eastfield Power")
N_ROWS, N_TRAIN, N_HOLDOUT = 24, 18, 6

# Lasso final weights: a plain value, an exact zero, a negative zero, a tiny negative that
# rounds to zero at 10 decimals, and a negative weight.
LASSO_FINAL = np.array([0.4125, 0.0, -0.0, -4e-12, -0.0375])
LASSO_CASH = 1.0 - float(LASSO_FINAL.sum())


def tracking_metrics(
    te: float, *, ir: float = 0.5, names_held: int = 3, periods: int = N_TRAIN
) -> TrackingMetrics:
    """Tracking metrics with the given tracking error; the other numbers are fixed."""
    return TrackingMetrics(
        periods=periods,
        tracking_error=te,
        mean_active=0.0012,
        information_ratio=ir,
        sum_sq_active=1.25e-5,
        r_squared=0.987654321,
        correlation=0.99381,
        beta=0.9721,
        max_drawdown_active=0.00875,
        names_held=names_held,
        gross_exposure=0.45,
    )


def _fit(weights, alpha=None, l1_ratio=None, kkt=3.2e-9) -> FittedWeights:
    weights = np.asarray(weights, dtype=float)
    return FittedWeights(
        weights=weights,
        cash=1.0 - float(weights.sum()),
        coef_std=weights * 2.0,
        alpha=alpha,
        l1_ratio=l1_ratio,
        kkt_residual=kkt,
        scaling=Scaling(np.ones(len(weights)), 0.04, np.ones(len(weights), dtype=bool)),
    )


def _curve(l1_ratio: float, n: int = 30) -> CVCurve:
    alphas = np.geomspace(1e-1, 1e-4, n)
    mean_error = 1e-4 * (1.0 + (np.log10(alphas) + 2.5) ** 2)
    std_error = np.full(n, 1.5e-5)
    return CVCurve(l1_ratio, alphas, mean_error, std_error, np.tile(mean_error[:, None], (1, 3)))


FOLDS = (Fold(0, 9, 9, 12), Fold(0, 12, 12, 15), Fold(0, 15, 15, 18))


def _cv(curves: tuple[CVCurve, ...], chosen: int, best: int, rule: str, notes=()) -> CVResult:
    c = curves[0]
    return CVResult(
        curves=curves,
        rule=rule,
        alpha=float(c.alphas[chosen]),
        l1_ratio=c.l1_ratio,
        best_alpha=float(c.alphas[best]),
        best_l1_ratio=c.l1_ratio,
        folds=FOLDS,
        notes=tuple(notes),
    )


def make_outcome(root: Path, **changes) -> FitOutcome:
    """A whole run: job files under ``root``, four models, lasso held."""
    job_dir = root / "jobs"
    job = Job(
        path=job_dir / "northwind.yaml",
        name="Northwind Broad Index",
        benchmark=SeriesRef(job_dir / "data" / "benchmark.csv", "NWBI"),
        constituents=(ConstituentSource(job_dir / "data" / "members.csv", None),),
        risk_free=RiskFreeSpec(Path("data/cash_rate.csv"), None, "percent", "annual"),
        data=DataSpec(),
        window=WindowSpec(start=date(2024, 12, 1), holdout=N_HOLDOUT),
        models=(
            ModelSpec("lasso", "lasso", (1.0,)),
            ModelSpec("elastic_net", "elastic_net", (0.5, 0.9)),
        ),
        hold="lasso",
        grid=GridSpec(),
        cv=CVSpec(folds=3, rule="one_standard_error"),
        output=OutputSpec(directory=root / "out", top_weights=2),
    )
    months = np.arange(np.datetime64("2024-12"), np.datetime64("2026-12"))
    dates = (months + 1).astype("datetime64[D]") - 1  # month ends, 2024-12-31 .. 2026-11-30
    rng = np.random.default_rng(7)
    data = TrackingData(
        dates=dates,
        benchmark=rng.normal(0.005, 0.03, N_ROWS),
        constituents=rng.normal(0.005, 0.04, (N_ROWS, len(NAMES))),
        names=NAMES,
        benchmark_name="NWBI",
        risk_free=np.full(N_ROWS, 0.002),
        periods_per_year=12,
        periods_per_year_inferred=True,
        steps=(
            DataStep("align benchmark and constituent dates", 26, 25),
            DataStep("drop dates with missing values", 25, 25),
            DataStep("keep the fit window", 25, N_ROWS),
        ),
        warnings=(),
        calendar=measure_periods_per_year(dates),
    )
    lasso_cv = _cv(
        (_curve(1.0),),
        chosen=12,
        best=15,
        rule="one_standard_error",
        notes=("grid extended by 10 smaller penalties",),
    )
    enet_cv = _cv((_curve(0.5, 20), _curve(0.9, 20)), chosen=8, best=10, rule="one_standard_error")
    lasso = ModelOutcome(
        name="lasso",
        kind="lasso",
        cv=lasso_cv,
        train_fit=_fit([0.40, 0.0, 0.0, 0.01, -0.03], lasso_cv.alpha, 1.0, kkt=2.5e-9),
        in_sample=tracking_metrics(0.0123456),
        holdout=tracking_metrics(0.0234567, ir=float("nan"), periods=N_HOLDOUT),
        final_fit=dataclasses.replace(
            _fit(LASSO_FINAL, lasso_cv.alpha, 1.0, kkt=7.25e-10), cash=LASSO_CASH
        ),
    )
    enet = ModelOutcome(
        name="elastic_net",
        kind="elastic_net",
        cv=enet_cv,
        train_fit=_fit([0.3, 0.1, 0.0, 0.05, 0.0], enet_cv.alpha, 0.5),
        in_sample=tracking_metrics(0.0131, names_held=3),
        holdout=tracking_metrics(0.0222, periods=N_HOLDOUT, names_held=3),
        final_fit=_fit([0.31, 0.09, 0.0, 0.06, 0.0], enet_cv.alpha, 0.5),
    )
    ols = ModelOutcome(
        name="ols",
        kind="ols",
        cv=None,
        train_fit=_fit([0.5, 0.2, -0.1, 0.3, 0.1], kkt=1e-14),
        in_sample=tracking_metrics(0.0098, names_held=5),
        holdout=tracking_metrics(0.0412, periods=N_HOLDOUT, names_held=5),
        final_fit=_fit([0.45, 0.25, -0.05, 0.25, 0.1], kkt=1e-14),
    )
    equal = ModelOutcome(
        name="equal_weight",
        kind="equal_weight",
        cv=None,
        train_fit=_fit(np.full(5, 0.2), kkt=0.0),
        in_sample=tracking_metrics(0.0301, names_held=5),
        holdout=tracking_metrics(0.0333, periods=N_HOLDOUT, names_held=5),
        final_fit=_fit(np.full(5, 0.2), kkt=0.0),
    )
    study = HoldoutStudy(
        n_train=N_TRAIN, n_holdout=N_HOLDOUT, models=(lasso, enet, ols, equal), warnings=()
    )
    fields = dict(
        job=job,
        data=data,
        as_of=date(2026, 11, 30),
        study=study,
        held="lasso",
        warnings=("Cobalt Rail had 2 returns above 50 %; check its prices.",),
    )
    fields.update(changes)
    return FitOutcome(**fields)
