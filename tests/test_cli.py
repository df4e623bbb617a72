"""The command line end to end, through click's CliRunner, on the shipped demo and on broken jobs."""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import pytest
from click.testing import CliRunner

from trackfit.cli import EXIT_INPUT, EXIT_WARNINGS, main

DEMO = Path(__file__).resolve().parents[1] / "examples" / "lumen_bay"
FILES = ("weights.csv", "report.md", "summary.json")


def _run(*args):
    return CliRunner().invoke(main, [str(a) for a in args])


@pytest.fixture(scope="module")
def demo_runs(tmp_path_factory):
    """The demo job run twice into two folders."""
    outs = [tmp_path_factory.mktemp(f"run{i}") for i in range(2)]
    results = [_run("fit", DEMO / "job.yaml", "--out", out) for out in outs]
    return outs, results


FIGURES = (
    "top_weights.png",
    "ex_ante_contributions.png",
    "cv_lasso.png",
    "cv_elastic_net.png",
    "cv_ridge.png",
)


def test_fit_on_the_demo_writes_its_files_and_lists_them_on_stdout(demo_runs):
    outs, results = demo_runs
    result = results[0]
    assert result.exit_code == 0, result.stderr
    assert result.stdout.splitlines() == [str(outs[0] / name) for name in FILES + FIGURES]
    for name in FILES + FIGURES:
        assert (outs[0] / name).stat().st_size > 0
    report = (outs[0] / "report.md").read_text()
    for name in FIGURES:  # embedded with relative links
        assert f"]({name})" in report
    assert "constituents" in result.stderr  # progress goes to stderr


def test_fit_is_byte_identical_on_a_second_run(demo_runs):
    outs, _ = demo_runs
    for name in FILES + FIGURES:
        assert (outs[0] / name).read_bytes() == (outs[1] / name).read_bytes(), name


def test_demo_outputs_are_consistent(demo_runs):
    outs, _ = demo_runs
    lines = (outs[0] / "weights.csv").read_text().splitlines()
    assert lines[0] == "name,weight"
    assert lines[-1].startswith("(cash),")
    weights = [float(line.split(",")[1]) for line in lines[1:-1]]
    cash = float(lines[-1].split(",")[1])
    assert sum(weights) + cash == pytest.approx(1.0, abs=1e-8)
    summary = json.loads((outs[0] / "summary.json").read_text())
    text = (outs[0] / "summary.json").read_text() + (outs[0] / "report.md").read_text()
    assert str(outs[0]) not in text and str(DEMO) not in text
    assert "not investment advice" in (outs[0] / "report.md").read_text()
    assert summary  # parses


def test_check_describes_the_plan_and_writes_nothing(tmp_path):
    job = tmp_path / "demo"
    shutil.copytree(DEMO, job, ignore=shutil.ignore_patterns("out"))
    result = _run("check", job / "job.yaml")
    assert result.exit_code == 0, result.stderr
    assert "fold 5" in result.stdout and "holdout: 126 rows" in result.stdout
    assert not (job / "out").exists()


def _broken_job(tmp_path, text):
    job = tmp_path / "job.yaml"
    job.write_text(text)
    return job


MINIMAL = """\
benchmark: {file: index.csv, column: idx}
constituents: [{file: members.csv}]
cross_validation: {folds: 3}
"""


def _write_returns(tmp_path, dates, duplicate=False):
    rows = ["date,idx"] + [f"{d},{0.01 * ((i % 5) - 2):.4f}" for i, d in enumerate(dates)]
    members = ["date,a,b"] + [
        f"{d},{0.01 * ((i % 3) - 1):.4f},{0.01 * ((i % 7) - 3):.4f}" for i, d in enumerate(dates)
    ]
    if duplicate:
        rows.append(rows[-1])
    (tmp_path / "index.csv").write_text("\n".join(rows) + "\n")
    (tmp_path / "members.csv").write_text("\n".join(members) + "\n")


DATES = [f"2026-{m:02d}-{d:02d}" for m in range(1, 12) for d in (7, 14, 21, 28)]


@pytest.mark.parametrize(
    "case, setup, message",
    [
        ("missing data file", lambda p: None, "index.csv"),
        ("unknown key", lambda p: _write_returns(p, DATES), "cross_validation.fold"),
        ("duplicate date", lambda p: _write_returns(p, DATES, duplicate=True), "2026-11-28"),
    ],
)
def test_input_errors_exit_2_with_one_line_naming_the_problem(tmp_path, case, setup, message):
    text = MINIMAL.replace("folds: 3", "fold: 3") if case == "unknown key" else MINIMAL
    job = _broken_job(tmp_path, text)
    setup(tmp_path)
    result = _run("fit", job, "--out", tmp_path / "out")
    assert result.exit_code == EXIT_INPUT
    assert message in result.stderr
    assert "Traceback" not in result.stderr
    assert len(result.stderr.strip().splitlines()) == 1
    assert result.stdout == ""
    assert not (tmp_path / "out").exists()


def test_missing_job_file_exits_2(tmp_path):
    result = _run("fit", tmp_path / "nope.yaml")
    assert result.exit_code == EXIT_INPUT
    assert "nope.yaml" in result.stderr


def test_bad_as_of_is_a_usage_error(tmp_path):
    result = _run("fit", DEMO / "job.yaml", "--as-of", "30/11/2026")
    assert result.exit_code == 2
    assert "YYYY-MM-DD" in result.stderr


def test_small_job_runs_and_quiet_prints_only_paths(tmp_path):
    _write_returns(tmp_path, DATES)
    job = _broken_job(tmp_path, MINIMAL)
    result = _run("fit", job, "--out", tmp_path / "out", "--quiet")
    # The invented returns are unrelated, so the held lasso is all cash: files written, with a
    # warning, which cron sees as exit code 1 even when --quiet hides the warning itself.
    assert result.exit_code == EXIT_WARNINGS, result.stderr
    assert result.stderr == ""
    assert [Path(p).name for p in result.stdout.splitlines()][:3] == list(FILES)
    quiet_zero = _run("fit", job, "--out", tmp_path / "out", "--quiet", "--no-warnings-exit")
    assert quiet_zero.exit_code == 0


def test_help_lists_the_commands():
    result = _run("--help")
    assert result.exit_code == 0
    assert "fit" in result.stdout and "check" in result.stdout and "Exit codes" in result.stdout


def test_no_figures_writes_only_the_text_files(tmp_path):
    result = _run("fit", DEMO / "job.yaml", "--out", tmp_path, "--no-figures", "-q")
    assert result.exit_code == 0, result.stderr
    assert [Path(p).name for p in result.stdout.splitlines()] == list(FILES)
    assert not list(tmp_path.glob("*.png"))
    assert "## Figures" not in (tmp_path / "report.md").read_text()


def test_the_demo_reports_the_periods_per_year_it_measured(demo_runs, tmp_path):
    import pandas as pd

    # reference: pandas bdate_range counts the weekdays of 2025, the fit window's one full year
    weekdays_2025 = len(pd.bdate_range("2025-01-01", "2025-12-31"))
    assert weekdays_2025 == 261
    outs, _ = demo_runs
    report = (outs[0] / "report.md").read_text()
    assert (
        "| Periods per year | 261 (weekdays; measured: 261.0 rows a year over 2025, "
        "1 full calendar year) |" in report
    )
    assert "annualized with 261 periods a year" in report
    data = json.loads((outs[0] / "summary.json").read_text())["data"]
    assert data["periods_per_year"] == {
        "value": 261,
        "measured": float(weekdays_2025),
        "source": "measured",
        "calendar": "weekdays",
        "rows": weekdays_2025,
        "full_years": [2025, 2025],
        "first_date": "2024-01-08",
        "last_date": "2026-11-30",
    }
    job = tmp_path / "demo"
    shutil.copytree(DEMO, job, ignore=shutil.ignore_patterns("out*"))
    check = _run("check", job / "job.yaml")
    assert (
        "756 rows, periods per year 261 (weekdays; measured: 261.0 rows a year over 2025, "
        "1 full calendar year)" in check.stdout
    )


def test_a_periods_per_year_set_in_the_job_is_reported_with_the_measurement(tmp_path):
    _write_returns(tmp_path, DATES)
    job = _broken_job(tmp_path, MINIMAL + "data: {periods_per_year: 52}\n")
    result = _run("fit", job, "--out", tmp_path / "out", "--quiet", "--no-warnings-exit")
    assert result.exit_code == 0, result.stderr
    summary = json.loads((tmp_path / "out" / "summary.json").read_text())
    ppy = summary["data"]["periods_per_year"]
    # 43 intervals over the 325 days from 2026-01-07 to 2026-11-28, no full calendar year
    assert (ppy["value"], ppy["source"], ppy["full_years"]) == (52, "job", None)
    assert ppy["measured"] == pytest.approx(43 * 365.25 / 325, rel=1e-11)
    report = (tmp_path / "out" / "report.md").read_text()
    assert (
        "| Periods per year | 52 (set in the job; measured: 48.3 rows a year over 2026-01-07 "
        "to 2026-11-28, no full calendar year: rows per 365.25 days) |" in report
    )
