"""summary.json: everything the run decided, for machines, in a fixed key order."""

from __future__ import annotations

import dataclasses
import json
from datetime import date
from typing import Any

import numpy as np

import trackfit
from trackfit.core.results import CVResult, FittedWeights, Fold
from trackfit.data.dataset import TrackingData
from trackfit.evaluate.holdout import ModelOutcome
from trackfit.evaluate.metrics import TrackingMetrics
from trackfit.job import Job
from trackfit.outcomes.fit import FitOutcome
from trackfit.report.caution import CAUTION
from trackfit.report.data_quality import quality_json
from trackfit.report.ex_ante import ex_ante_json
from trackfit.report.held import held_weights
from trackfit.report.numbers import iso_date, json_number, row_dates
from trackfit.report.paths import relative_path
from trackfit.report.periods import periods_json
from trackfit.report.summary_limits import (
    job_holdings,
    job_limits,
    limits_summary,
    trades_summary,
)


def render_summary_json(outcome: FitOutcome) -> str:
    """The text of summary.json.

    Keys come in the order built here (not sorted); floats are rounded to 12 significant
    digits, nan and infinities are written as null, dates as ``YYYY-MM-DD``. Data files
    are named relative to the job file's folder; no absolute path is written.

    Parameters
    ----------
    outcome : FitOutcome

    Returns
    -------
    str
        Two-space indented JSON ending in ``"\\n"``.
    """
    held_weights(outcome)  # same checks as weights.csv, so the two files never disagree
    data = outcome.data
    study = outcome.study
    train_first, train_last = row_dates(data.dates, 0, study.n_train)
    hold_first, hold_last = row_dates(data.dates, study.n_train, study.n_train + study.n_holdout)
    tree = {
        "trackfit_version": trackfit.__version__,
        "caution": CAUTION,
        "job": _job(outcome.job),
        "as_of": outcome.as_of,
        "data": _data(data),
        **screen_tree(data),
        "split": {
            "n_train": study.n_train,
            "n_holdout": study.n_holdout,
            "train_first_date": train_first,
            "train_last_date": train_last,
            "holdout_first_date": hold_first,
            "holdout_last_date": hold_last,
        },
        "held": outcome.held,
        "limits": limits_summary(outcome),
        "models": [_model(m, data) for m in study.models],
        **ex_ante_json(outcome),
        "trades": trades_summary(outcome.trades, outcome.holdings),
        "notes": list(outcome.notes),
        "warnings": list(outcome.warnings),
    }
    return dump_json(tree)


def screen_tree(data: TrackingData) -> dict[str, Any]:
    """``{"data_quality": ...}`` when a screen ran, else empty, so summaries without one keep
    their bytes."""
    return {} if data.screen is None else {"data_quality": quality_json(data.screen)}


def _job(job: Job) -> dict[str, Any]:
    folder = job.path.parent
    risk_free = None
    if job.risk_free is not None:
        risk_free = {
            "file": relative_path(job.risk_free.file, folder),
            "column": job.risk_free.column,
            "unit": job.risk_free.unit,
            "quote": job.risk_free.quote,
        }
    return {
        "name": job.name,
        "file": job.path.name,
        "benchmark": {
            "file": relative_path(job.benchmark.file, folder),
            "column": job.benchmark.column,
        },
        "constituents": [
            {"file": relative_path(c.file, folder), "columns": c.columns} for c in job.constituents
        ],
        "risk_free": risk_free,
        "data": _data_spec(job),
        "window": dataclasses.asdict(job.window),
        "models": [_model_spec(m) for m in job.models],
        "hold": job.hold,
        "grid": dataclasses.asdict(job.grid),
        "cv": dataclasses.asdict(job.cv),
        "top_weights": job.output.top_weights,
        "limits": job_limits(job.limits, folder),
        "holdings": job_holdings(job.holdings, folder),
    }


def _data_spec(job: Job) -> dict[str, Any]:
    # The gap keys appear only when set, so summaries of jobs without them keep their bytes.
    spec = dataclasses.asdict(job.data)
    if spec["carry_forward"] == 0:
        del spec["carry_forward"]
    if spec["min_coverage"] is None:
        del spec["min_coverage"]
    return spec


def _model_spec(model) -> dict[str, Any]:
    # Options beyond the mixes appear only for kinds that take them, so summaries of jobs
    # without such options keep their bytes.
    spec = dataclasses.asdict(model)
    params = spec.pop("params")
    if params:
        spec["options"] = dict(params)
    return spec


def _data(data: TrackingData) -> dict[str, Any]:
    first, last = row_dates(data.dates, 0, len(data.dates))
    return {
        "benchmark": data.benchmark_name,
        "constituents": len(data.names),
        "periods_per_year": periods_json(data),
        "first_date": first,
        "last_date": last,
        "rows": len(data.dates),
        "excess_of_risk_free": data.risk_free is not None,
        "steps": [
            {
                "description": s.description,
                "rows_before": s.rows_before,
                "rows_after": s.rows_after,
                "dropped": s.dropped,
            }
            for s in data.steps
        ],
    }


def _model(model: ModelOutcome, data: TrackingData) -> dict[str, Any]:
    cv: CVResult | None = model.cv
    return {
        "name": model.name,
        "kind": model.kind,
        "alpha": cv.alpha if cv else model.final_fit.alpha,
        "l1_ratio": cv.l1_ratio if cv else model.final_fit.l1_ratio,
        "best_alpha": cv.best_alpha if cv else None,
        "best_l1_ratio": cv.best_l1_ratio if cv else None,
        "rule": cv.rule if cv else None,
        "notes": list(cv.notes) if cv else [],
        "curves": [
            {
                "l1_ratio": c.l1_ratio,
                "alphas": c.alphas,
                "mean_error": c.mean_error,
                "std_error": c.std_error,
            }
            for c in (cv.curves if cv else ())
        ],
        "folds": [_fold(f, data.dates) for f in (cv.folds if cv else ())],
        "kkt_residual": {
            "train_fit": model.train_fit.kkt_residual,
            "final_fit": model.final_fit.kkt_residual,
        },
        "in_sample": _metrics(model.in_sample),
        "holdout": _optional_metrics(model.holdout),
        "uncapped_in_sample": _optional_metrics(model.uncapped_in_sample),
        "uncapped_holdout": _optional_metrics(model.uncapped_holdout),
        "final_weights": _weights(model.final_fit, data.names),
        "final_in_sample": _optional_metrics(model.final_in_sample),
        "judged_weights": _weights(model.train_fit, data.names),
    }


def _fold(fold: Fold, dates: np.ndarray) -> dict[str, Any]:
    train_first, train_last = row_dates(dates, fold.train_start, fold.train_stop)
    val_first, val_last = row_dates(dates, fold.val_start, fold.val_stop)
    return {
        "train_start": fold.train_start,
        "train_stop": fold.train_stop,
        "val_start": fold.val_start,
        "val_stop": fold.val_stop,
        "train_first_date": train_first,
        "train_last_date": train_last,
        "val_first_date": val_first,
        "val_last_date": val_last,
    }


def _metrics(metrics: TrackingMetrics) -> dict[str, Any]:
    return {f.name: getattr(metrics, f.name) for f in dataclasses.fields(TrackingMetrics)}


def _optional_metrics(metrics: TrackingMetrics | None) -> dict[str, Any] | None:
    return None if metrics is None else _metrics(metrics)


def _weights(fit: FittedWeights, names: tuple[str, ...]) -> dict[str, Any]:
    weights = np.asarray(fit.weights, dtype=float)
    return {"weights": dict(zip(names, weights)), "cash": fit.cash}


def dump_json(tree: Any) -> str:
    """The fixed JSON text of a summary tree: indent 2, rounded floats, nan as null, one "\\n"."""
    return json.dumps(_plain(tree), indent=2, ensure_ascii=False, allow_nan=False) + "\n"


def _plain(value: Any) -> Any:
    """Turn the tree into JSON-ready values: rounded floats, lists, ISO dates."""
    if value is None or isinstance(value, (bool, np.bool_)):
        return None if value is None else bool(value)
    if isinstance(value, (int, np.integer)):
        return int(value)
    if isinstance(value, (float, np.floating)):
        return json_number(value)
    if isinstance(value, str):
        return value
    if isinstance(value, (date, np.datetime64)):
        return iso_date(value)
    if isinstance(value, dict):
        return {str(k): _plain(v) for k, v in value.items()}
    if isinstance(value, (list, tuple, np.ndarray)):
        return [_plain(v) for v in value]
    raise TypeError(f"summary.json cannot hold a value of type {type(value).__name__}.")
