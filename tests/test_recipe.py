"""One recipe: a backtest rebalance and `trackfit fit --as-of` of the same window hold the same bytes."""

from __future__ import annotations

import numpy as np
import pytest
from jobs import write_small_job

from trackfit.commands.backtest import run_backtest_job
from trackfit.commands.fit import fit_plan
from trackfit.commands.fit_plan import plan_fit
from trackfit.commands.prepare import day, prepare
from trackfit.core.fit import fit_ols
from trackfit.evaluate.recipe import Model, fit_warnings
from trackfit.job import load_job

LIMITS = {
    "none": "",
    "long_only_invested": "limits: {long_only: true, budget: fully_invested, weight: {max: 0.5}}\n",
}

JOB = """\
name: same bytes
benchmark: {{file: index.csv, column: idx}}
constituents: [{{file: members.csv}}]
window: {{lookback: 120, holdout: 0}}
models: {{lasso: {{}}, ridge: {{}}, elastic_net: {{l1_ratio: [0.5]}}, adaptive_lasso: {{gamma: 1}}}}
hold: {hold}
penalty_grid: {{count: 10}}
cross_validation: {{folds: 3}}
backtest: {{every: month_end, start: 2025-07-31}}
{limits}"""


@pytest.mark.parametrize("limits", sorted(LIMITS))
@pytest.mark.parametrize(
    "hold", ["lasso", "ridge", "elastic_net", "adaptive_lasso", "ols", "equal_weight"]
)
def test_a_backtest_rebalance_holds_what_fit_as_of_that_date_holds(tmp_path, hold, limits):
    job = load_job(write_small_job(tmp_path, JOB.format(hold=hold, limits=LIMITS[limits])))
    backtest = run_backtest_job(job)
    for i in (0, len(backtest.dates) // 2, len(backtest.dates) - 1):
        as_of = day(backtest.dates[i])
        outcome = fit_plan(plan_fit(prepare(job, as_of)))
        assert outcome.as_of == as_of
        held = next(m for m in outcome.study.models if m.name == hold)
        assert len(outcome.data.dates) == 120
        # The same rows, the same penalty, the same weights, to the last byte.
        assert held.final_fit.weights.tobytes() == backtest.fits[i].weights.tobytes()
        if held.cv is not None:
            assert held.cv.alpha == backtest.fits[i].alpha


def test_the_backtest_falls_back_to_per_date_statistics_under_a_small_memory_cap(tmp_path):
    text = JOB.format(hold="lasso", limits="").replace(
        "start: 2025-07-31}", "start: 2025-07-31, memory_mb: 0}"
    )
    job = load_job(write_small_job(tmp_path, text))
    small = run_backtest_job(job)
    assert any("above the cap of 0 MiB ('backtest.memory_mb')" in n for n in small.notes)
    shared = run_backtest_job(
        load_job(write_small_job(tmp_path, JOB.format(hold="lasso", limits="")))
    )
    assert not any("backtest.memory_mb" in n for n in shared.notes)
    for a, b in zip(small.fits, shared.fits):
        assert a.alpha == b.alpha
        np.testing.assert_allclose(a.weights, b.weights, rtol=0, atol=1e-12)


def test_the_ols_collinearity_warning_names_the_rows_and_reaches_every_caller():
    rng = np.random.default_rng(3)
    X = rng.normal(size=(50, 3))
    X = np.column_stack([X, X[:, 0] + X[:, 1] * 1e-9])  # a near-copy: collinear
    y = X[:, :3] @ np.array([0.3, 0.3, 0.4])
    fit = fit_ols(X, y)
    words = fit_warnings(
        Model.baseline("ols"), fit, ("a", "b", "c", "d"), "the fit window", held=True
    )
    if fit.kkt_residual > 1e-8:
        assert any(
            w.startswith("ols: the normal equations hold only to") and "on the fit window" in w
            for w in words
        )
    else:  # this machine's LAPACK solved it exactly: then nothing is said
        assert words == []


@pytest.mark.parametrize(
    "value,match",
    [
        ("-1", r"'backtest.memory_mb' must be a number of MiB >= 0.*got -1"),
        ("lots", r"'backtest.memory_mb' must be a number of MiB >= 0.*got 'lots'"),
        ("true", r"'backtest.memory_mb' must be a number of MiB >= 0"),
    ],
)
def test_memory_mb_must_be_a_number_of_mib(tmp_path, value, match):
    from trackfit.errors import JobError

    text = JOB.format(hold="lasso", limits="").replace(
        "start: 2025-07-31}", f"start: 2025-07-31, memory_mb: {value}}}"
    )
    with pytest.raises(JobError, match=match):
        load_job(write_small_job(tmp_path, text))
