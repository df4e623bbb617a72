"""``trackfit check`` exit codes through click's CliRunner: 0 clean, 1 fit would warn, 2 fix it.

The jobs are the small invented job of tests/jobs.py, changed one way each. Screens are
attached by hand (the interface dataclasses) to the data the preparation step returns.
"""

from __future__ import annotations

import dataclasses
import shutil
from datetime import date
from pathlib import Path

import pytest
from click.testing import CliRunner
from jobs import write_small_job

import trackfit.commands.check as check_command
from trackfit.cli import EXIT_INPUT, EXIT_WARNINGS, main
from trackfit.data.screen import Finding, Screen
from trackfit.errors import DataError

DEMO = Path(__file__).resolve().parents[1] / "examples" / "lumen_bay"


def _check(*args):
    return CliRunner().invoke(main, ["check", *(str(a) for a in args)])


def _with_constant_name(job: Path) -> None:
    """Add a constituent whose returns never change (zero variance: dropped with a warning)."""
    members = job.parent / "members.csv"
    lines = members.read_text().splitlines()
    lines = [lines[0] + ",g"] + [line + ",0.00100000" for line in lines[1:]]
    members.write_text("\n".join(lines) + "\n")


def _with_duplicate_date(job: Path) -> None:
    index = job.parent / "index.csv"
    lines = index.read_text().splitlines()
    index.write_text("\n".join(lines + [lines[-1]]) + "\n")


def test_a_clean_job_exits_0_and_prints_no_warning(tmp_path):
    result = _check(write_small_job(tmp_path))
    assert result.exit_code == 0, result.output
    assert "warning:" not in result.stdout and "finding:" not in result.stdout
    assert result.stdout.startswith("job: small backtest (job.yaml)")


def test_a_data_warning_exits_1_unless_told_not_to(tmp_path):
    job = write_small_job(tmp_path)
    _with_constant_name(job)
    result = _check(job)
    assert result.exit_code == EXIT_WARNINGS, result.output
    warnings = [line for line in result.stdout.splitlines() if line.startswith("warning: ")]
    assert len(warnings) == 1 and "'g'" in warnings[0], warnings
    quiet = _check(job, "--no-warnings-exit")
    assert quiet.exit_code == 0 and quiet.stdout == result.stdout


@pytest.mark.parametrize(
    "case, breaks, named",
    [
        ("duplicate date", _with_duplicate_date, "index.csv"),
        ("missing data file", lambda job: (job.parent / "members.csv").unlink(), "members.csv"),
    ],
)
def test_a_data_error_during_preparation_exits_2_with_one_line(tmp_path, case, breaks, named):
    job = write_small_job(tmp_path)
    breaks(job)
    result = _check(job)
    assert result.exit_code == EXIT_INPUT
    assert result.stdout == ""
    assert len(result.stderr.strip().splitlines()) == 1 and named in result.stderr
    assert "Traceback" not in result.stderr


def _screened(monkeypatch, screen=None, error=None):
    """Make the preparation step attach ``screen`` to the data, or raise ``error``."""
    real = check_command.prepare

    def prepare(job, as_of):
        if error is not None:
            raise error
        prepared = real(job, as_of)
        data = dataclasses.replace(prepared.data, screen=screen)
        return dataclasses.replace(prepared, data=data)

    monkeypatch.setattr(check_command, "prepare", prepare)


def test_a_screen_that_stops_exits_2(tmp_path, monkeypatch):
    # A stop is a DataError raised during preparation, like any other data error.
    message = "index.csv: idx on 2025-03-04: return 4512% cannot be a decimal return; fix it"
    _screened(monkeypatch, error=DataError(message))
    result = _check(write_small_job(tmp_path))
    assert result.exit_code == EXIT_INPUT
    assert result.stderr.strip() == f"Error: {message}"


SPIKE = Finding(
    kind="spike",
    series="members.csv: c",
    dates=(date(2025, 3, 4), date(2025, 3, 5)),
    value=0.45,
    action="leave_out",
    message="members.csv: c on 2025-03-04: a spike of 45% that reverses; dates left out",
)


@pytest.mark.parametrize(
    "case, screen, code, findings",
    [
        (
            "clean screen",
            Screen(findings=(), left_out=(), rows_before=300, rows_after=300, names_kept=6),
            0,
            [],
        ),
        (
            "a date left out",
            Screen(
                findings=(SPIKE,),
                left_out=SPIKE.dates,
                rows_before=300,
                rows_after=298,
                names_kept=6,
            ),
            EXIT_WARNINGS,
            [f"finding: {SPIKE.message}"],  # the screen's own words, which say what was done
        ),
        (
            "a warning",
            Screen(
                findings=(dataclasses.replace(SPIKE, action="warn"),),
                left_out=(),
                rows_before=300,
                rows_after=300,
                names_kept=6,
            ),
            EXIT_WARNINGS,
            [f"finding: {SPIKE.message}"],
        ),
    ],
)
def test_screen_findings_are_printed_and_warnings_exit_1(
    tmp_path, monkeypatch, case, screen, code, findings
):
    _screened(monkeypatch, screen=screen)
    result = _check(write_small_job(tmp_path))
    assert result.exit_code == code, result.output
    lines = result.stdout.splitlines()
    assert [line for line in lines if line.startswith("finding: ")] == findings
    left = len(screen.left_out)
    summary = (
        f"data quality: {len(screen.findings)} finding(s); 300 rows before, {left} left out, "
        f"{screen.rows_after} after; 6 names kept"
    )
    assert summary in lines
    assert ("  dates left out: 2025-03-04, 2025-03-05" in lines) == bool(left)
    assert _check(write_small_job(tmp_path), "--no-warnings-exit").exit_code == 0


def test_the_mandate_demo_check_exits_0_with_its_groups_note(tmp_path):
    # The mandate demo's sector file lists 12 names that are not constituents, a routine case
    # (a sector file covers more than the fund trades): a note, so check exits 0 as fit does.
    job = tmp_path / "demo"
    shutil.copytree(DEMO, job, ignore=shutil.ignore_patterns("out*"))
    result = _check(job / "job_mandate.yaml")
    assert result.exit_code == 0, result.output
    lines = result.stdout.splitlines()
    assert (
        "note: data/sectors.csv: 12 name(s) in the groups file are not constituents of this "
        "fit; their rows are ignored" in lines
    )
    assert not [line for line in lines if line.startswith("warning: ")], lines
