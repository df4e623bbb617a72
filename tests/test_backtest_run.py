"""The backtest run layer: schedule and window from the job, no look-ahead, parallel = serial."""

from __future__ import annotations

from dataclasses import replace
from datetime import date
from pathlib import Path

import numpy as np
import pytest
from jobs import JOB, TRUE_WEIGHTS, write_small_job

from trackfit.commands.backtest import run_backtest_job
from trackfit.commands.output import output_folder
from trackfit.errors import DataError, JobError
from trackfit.job import load_job


@pytest.fixture(scope="module")
def small(tmp_path_factory):
    folder = tmp_path_factory.mktemp("small")
    job = load_job(write_small_job(folder))
    return job, run_backtest_job(job)


def test_schedule_is_the_month_ends_from_start_with_full_rolling_windows(small):
    job, outcome = small
    days = [str(d) for d in outcome.dates]
    assert days[0] == "2025-07-31" and days[-1] == str(outcome.data.dates[-1])
    assert all(d[:7] != e[:7] for d, e in zip(days, days[1:]))  # one per month
    rows = outcome.result.rebalance
    for row, fit in zip(rows, outcome.fits):
        assert row - fit.window_start + 1 == 120
    assert outcome.period_dates[0] > outcome.dates[0]


def test_lasso_finds_the_names_the_benchmark_holds(small):
    # Ground truth built by the test: d and e are not in the benchmark.
    _, outcome = small
    last = outcome.result.targets[-1]
    assert np.abs(last - TRUE_WEIGHTS).max() < 0.05
    # The noise floor is the benchmark's own noise: 0.001 a day, 0.001 * sqrt(252) = 1.6 % a year;
    # drift between month ends adds a little.
    assert outcome.result.metrics.tracking_error < 1.25 * 0.001 * np.sqrt(252)


def test_costs_follow_turnover(small):
    _, outcome = small
    r = outcome.result
    # Flat bps: cost = bps / 1e4 * 2 * one-way turnover (evaluate/backtest.py docstring).
    np.testing.assert_allclose(r.costs, 5e-4 * 2 * r.turnover, rtol=1e-12)


def test_no_look_ahead_data_after_a_rebalance_never_change_its_weights(tmp_path):
    cut = "2025-09-30"
    a, b = tmp_path / "a", tmp_path / "b"
    a.mkdir(), b.mkdir()
    base = run_backtest_job(load_job(write_small_job(a)))
    changed = run_backtest_job(load_job(write_small_job(b, shift_after=cut)))
    keep = base.dates <= np.datetime64(cut)
    assert keep.sum() >= 3
    np.testing.assert_array_equal(base.result.targets[keep], changed.result.targets[keep])
    np.testing.assert_array_equal(base.result.alphas[keep], changed.result.alphas[keep])
    assert not np.array_equal(base.result.targets[~keep], changed.result.targets[~keep])


def test_parallel_equals_serial(small):
    job, serial = small
    parallel = run_backtest_job(job, n_jobs=2)
    np.testing.assert_array_equal(serial.result.targets, parallel.result.targets)
    np.testing.assert_array_equal(serial.result.portfolio, parallel.result.portfolio)


def test_turnover_cap_couples_the_rebalances(tmp_path):
    (tmp_path / "held.csv").write_text("name,weight\na,0.4\nb,0.3\nc,0.2\nf,0.1\n")
    text = JOB + "holdings: {file: held.csv, max_turnover: 0.02}\n"
    job = load_job(write_small_job(tmp_path, text))
    outcome = run_backtest_job(job, n_jobs=2)
    assert outcome.coupled
    r = outcome.result
    # Every rebalance after the first trades from the drifted holdings, within the cap.
    assert (r.turnover[1:] <= 0.02 + 1e-7).all()


@pytest.mark.parametrize(
    "section, error, match",
    [
        ("backtest: {start: 2025-02-28}", DataError, "on or after"),
        ("backtest: {start: 2027-01-29}", DataError, "rebalance date"),
        ("backtest: {cost_bps: {default: 5, zz: 3}}", JobError, "'zz'"),
    ],
)
def test_bad_schedules_are_explained(tmp_path, section, error, match):
    text = JOB.replace("backtest: {every: month_end, start: 2025-07-31, cost_bps: 5}", section)
    job = load_job(write_small_job(tmp_path, text))
    with pytest.raises(error, match=match):
        run_backtest_job(job)


def test_a_rolling_default_without_lookback_is_a_job_error(tmp_path):
    text = JOB.replace("window: {lookback: 120}\n", "").replace(
        "backtest: {every: month_end, start: 2025-07-31, cost_bps: 5}\n", ""
    )
    job = load_job(write_small_job(tmp_path, text))
    with pytest.raises(JobError, match="window.lookback"):
        run_backtest_job(job)


def test_expanding_window_starts_at_the_first_row(tmp_path):
    text = JOB.replace("cost_bps: 5}", "cost_bps: 5, window: expanding}")
    job = load_job(write_small_job(tmp_path, text))
    outcome = run_backtest_job(job)
    assert all(f.window_start == 0 for f in outcome.fits)
    assert outcome.lookback is None


def test_output_folder_layouts():
    assert output_folder(Path("out"), "fixed", date(2026, 11, 30)) == Path("out")
    assert output_folder(Path("out"), "dated", date(2026, 11, 30)) == Path("out/2026-11-30")


def test_the_job_section_is_parsed(tmp_path):
    job = load_job(write_small_job(tmp_path))
    assert job.backtest == replace(
        job.backtest,
        every="month_end",
        start=date(2025, 7, 31),
        cost_bps=5.0,
        window="rolling",
        mode="buy_and_hold",
    )
