"""trackfit backtest (and the unattended-run options of fit) through click's CliRunner."""

from __future__ import annotations

import json
import os

import numpy as np
import pytest
from click.testing import CliRunner
from jobs import JOB, write_small_job

from trackfit.cli import EXIT_LOCKED, EXIT_WARNINGS, main
from trackfit.commands.lock import LOCK_NAME, lock_text

FILES = ("weights_history.csv", "returns.csv", "report.md", "summary.json")
FIGURES = ("cumulative.png", "rolling_tracking_error.png", "names_turnover.png")


def _run(*args):
    return CliRunner().invoke(main, [str(a) for a in args])


def _bytes(folder):
    return {name: (folder / name).read_bytes() for name in FILES + FIGURES}


@pytest.fixture(scope="module")
def runs(tmp_path_factory):
    """The small job backtested three times: serial, serial again, and with --jobs 2."""
    folder = tmp_path_factory.mktemp("job")
    job = write_small_job(folder)
    outs = [folder / name for name in ("one", "two", "par")]
    results = [
        _run("backtest", job, "--out", outs[0]),
        _run("backtest", job, "--out", outs[1]),
        _run("backtest", job, "--out", outs[2], "--jobs", "2"),
    ]
    return job, outs, results


def test_backtest_writes_the_four_files_and_lists_them(runs):
    _, outs, results = runs
    result = results[0]
    assert result.exit_code == 0, result.stderr
    assert result.stdout.splitlines() == [str(outs[0] / name) for name in FILES + FIGURES]
    assert result.stderr == ""  # no progress when stderr is not a terminal, no warnings
    assert not (outs[0] / LOCK_NAME).exists()


def test_backtest_is_byte_identical_on_rerun_and_with_two_jobs(runs):
    _, outs, results = runs
    assert all(r.exit_code == 0 for r in results)
    assert _bytes(outs[0]) == _bytes(outs[1])
    assert _bytes(outs[0]) == _bytes(outs[2])


def test_the_files_agree_with_each_other(runs):
    _, outs, _ = runs
    weights = (outs[0] / "weights_history.csv").read_text().splitlines()
    assert weights[0] == "date,name,weight"
    by_date: dict[str, float] = {}
    for line in weights[1:]:
        day, _name, w = line.split(",")
        by_date[day] = by_date.get(day, 0.0) + float(w)
    assert all(abs(total - 1.0) < 1e-8 for total in by_date.values())  # names + cash
    returns = np.loadtxt(outs[0] / "returns.csv", delimiter=",", skiprows=1, usecols=(1, 2, 3))
    np.testing.assert_allclose(returns[:, 0] - returns[:, 1], returns[:, 2], atol=2e-10)
    summary = json.loads((outs[0] / "summary.json").read_text())
    assert summary["schedule"]["rebalances"] == len(by_date)
    assert summary["out_of_sample"]["periods"] == len(returns)
    assert [r["date"] for r in summary["rebalances"]] == sorted(by_date)
    report = (outs[0] / "report.md").read_text()
    assert report.index("not investment advice") < report.index("## Schedule")
    for heading in ("## Out-of-sample tracking", "## Rebalances", "## Names held over time"):
        assert heading in report
    text = report + (outs[0] / "summary.json").read_text()
    assert str(outs[0]) not in text and str(outs[0].parent) not in text


def test_dated_layout_writes_into_a_folder_named_by_the_as_of_date(tmp_path):
    job = write_small_job(tmp_path)
    result = _run(
        "backtest",
        job,
        "--out",
        tmp_path / "out",
        "--layout",
        "dated",
        "--as-of",
        "2025-12-15",
        "--quiet",
    )
    assert result.exit_code == 0, result.stderr
    folder = tmp_path / "out" / "2025-12-15"
    assert result.stdout.splitlines() == [str(folder / name) for name in FILES + FIGURES]
    summary = json.loads((folder / "summary.json").read_text())
    assert summary["as_of"] <= "2025-12-15" and summary["schedule"]["last"] <= "2025-12-15"


def test_fit_dated_layout_uses_the_last_common_date(tmp_path):
    job = write_small_job(tmp_path)
    result = _run("fit", job, "--out", tmp_path / "out", "--layout", "dated", "--quiet")
    assert result.exit_code == 0, result.stderr
    folder = tmp_path / "out" / "2026-02-24"  # 300 business days from 2025-01-01
    assert (folder / "weights.csv").exists()


@pytest.mark.parametrize("command", ["fit", "backtest"])
def test_a_live_lock_refuses_the_run_with_exit_5(tmp_path, command):
    job = write_small_job(tmp_path)
    out = tmp_path / "out"
    out.mkdir()
    (out / LOCK_NAME).write_text(lock_text(os.getpid(), "2026-11-30T06:00:00+00:00"))
    result = _run(command, job, "--out", out)
    assert result.exit_code == EXIT_LOCKED
    assert "another trackfit run" in result.stderr and str(os.getpid()) in result.stderr
    assert result.stdout == ""
    assert sorted(p.name for p in out.iterdir()) == [LOCK_NAME]


def test_a_stale_lock_is_taken_over_with_a_warning(tmp_path):
    import subprocess
    import sys

    proc = subprocess.Popen([sys.executable, "-c", "pass"])
    proc.wait()
    job = write_small_job(tmp_path)
    out = tmp_path / "out"
    out.mkdir()
    (out / LOCK_NAME).write_text(lock_text(proc.pid, "2026-11-30T06:00:00+00:00"))
    result = _run("backtest", job, "--out", out)
    assert result.exit_code == 0, result.stderr
    assert "no longer running" in result.stderr and f"pid {proc.pid}" in result.stderr
    assert not (out / LOCK_NAME).exists() and (out / "report.md").exists()


def _flat_job(tmp_path):
    """The small job plus a constituent whose return never varies: a data warning."""
    job = write_small_job(tmp_path)
    lines = (tmp_path / "members.csv").read_text().splitlines()
    lines = [lines[0] + ",flat"] + [line + ",0.0" for line in lines[1:]]
    (tmp_path / "members.csv").write_text("\n".join(lines) + "\n")
    return job


def test_warnings_give_exit_1_even_when_quiet(tmp_path):
    job = _flat_job(tmp_path)
    loud = _run("backtest", job, "--out", tmp_path / "a")
    assert loud.exit_code == EXIT_WARNINGS
    assert "warning: constituent 'flat'" in loud.stderr
    quiet = _run("backtest", job, "--out", tmp_path / "b", "--quiet")
    assert quiet.exit_code == EXIT_WARNINGS and quiet.stderr == ""
    assert len(quiet.stdout.splitlines()) == len(FILES + FIGURES)
    assert "flat" in (tmp_path / "b" / "report.md").read_text()
    off = _run("backtest", job, "--out", tmp_path / "c", "--quiet", "--no-warnings-exit")
    assert off.exit_code == 0


def test_fit_exits_1_on_warnings_unless_told_not_to(tmp_path):
    job = _flat_job(tmp_path)
    assert _run("fit", job, "--out", tmp_path / "a", "-q").exit_code == 1
    assert _run("fit", job, "--out", tmp_path / "b", "-q", "--no-warnings-exit").exit_code == 0


def test_input_errors_leave_no_output_folder(tmp_path):
    job = write_small_job(tmp_path, JOB.replace("start: 2025-07-31", "start: 2025-02-28"))
    result = _run("backtest", job, "--out", tmp_path / "out")
    assert result.exit_code == 2
    assert "backtest.start" in result.stderr and len(result.stderr.strip().splitlines()) == 1
    assert not (tmp_path / "out").exists()


def test_help_documents_the_exit_codes():
    result = _run("--help")
    assert "1 success with warnings" in result.stdout and "5 another run" in result.stdout
    assert "backtest" in result.stdout and "diff" in result.stdout


def test_dask_backend_equals_serial(runs, tmp_path):
    pytest.importorskip("dask.distributed")
    from dask.distributed import LocalCluster

    job, outs, _ = runs
    with LocalCluster(
        n_workers=2, threads_per_worker=1, host="127.0.0.1", dashboard_address=None, processes=True
    ) as cluster:
        result = _run(
            "backtest",
            job,
            "--out",
            tmp_path / "dask",
            "--backend",
            "dask",
            "--scheduler",
            cluster.scheduler_address,
        )
    assert result.exit_code == 0, result.stderr
    assert _bytes(tmp_path / "dask") == _bytes(outs[0])
