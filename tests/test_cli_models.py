"""Every model kind end to end through the command line: job file, fit, report, JSON, backtest."""

from __future__ import annotations

import json

import pytest
from click.testing import CliRunner
from jobs import write_small_job

from trackfit.cli import main
from trackfit.core.models import KINDS

JOB = """\
name: every kind
benchmark: {{file: index.csv, column: idx}}
constituents: [{{file: members.csv}}]
window: {{lookback: 120, holdout: 30}}
models: {{{kind}: {{}}}}
penalty_grid: {{count: 10}}
cross_validation: {{folds: 3}}
backtest: {{every: month_end, start: 2025-10-31}}
"""


@pytest.mark.parametrize("kind", KINDS)
def test_every_kind_fits_reports_and_backtests(tmp_path, kind):
    job = write_small_job(tmp_path, JOB.format(kind=kind))
    runner = CliRunner()
    fit = runner.invoke(main, ["fit", str(job), "--out", str(tmp_path / "fit"), "--no-figures"])
    assert fit.exit_code == 0, fit.stderr
    report = (tmp_path / "fit" / "report.md").read_text()
    assert f"| {kind} (held) |" in report
    summary = json.loads((tmp_path / "fit" / "summary.json").read_text())
    assert [m["name"] for m in summary["models"]][0] == kind
    # The judged fit (before the holdout) and the held weights (whole window) are told apart.
    assert f"| {kind} (held model, judged fit) |" in report
    assert f"| {kind} (held weights, whole window) | 120 |" in report
    first = summary["models"][0]
    assert set(first["judged_weights"]["weights"]) == set(first["final_weights"]["weights"])
    assert first["final_in_sample"]["periods"] == 120
    check = runner.invoke(main, ["check", str(job)])
    assert check.exit_code == 0 and f"models: {kind}" in check.stdout
    back = runner.invoke(
        main, ["backtest", str(job), "--out", str(tmp_path / "bt"), "--no-figures"]
    )
    assert back.exit_code == 0, back.stderr
    assert kind in (tmp_path / "bt" / "report.md").read_text()
