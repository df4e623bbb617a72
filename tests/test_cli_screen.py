"""The data screen through ``trackfit check`` and ``trackfit fit`` (click's CliRunner, tmp_path).

Invented daily prices of six names and an index that holds them, built here with seeded numpy;
each case writes one known flaw on a known date and checks the exit code and the message.
"""

from __future__ import annotations

import numpy as np
import pytest
from click.testing import CliRunner

from trackfit.cli import EXIT_INPUT, EXIT_WARNINGS, main

N, NAMES = 260, ("a", "b", "c", "d", "e", "f")
DATES = [str(d) for d in np.busday_offset("2033-03-01", np.arange(N + 1), roll="forward")]
JOB = """\
benchmark: {{file: index.csv, column: idx}}
constituents: {{file: members.csv}}
data: {{{data}}}
window: {{holdout: 40}}
models: {{lasso: {{}}}}
penalty_grid: {{count: 10}}
cross_validation: {{folds: 3}}
screen: {{{screen}}}
"""


def _levels(seed: int = 2) -> np.ndarray:
    rng = np.random.default_rng(seed)
    r = rng.normal(0.0003, 0.012, size=(N, len(NAMES)))
    bench = r @ np.array([0.3, 0.25, 0.2, 0.1, 0.1, 0.05]) + rng.normal(0, 0.0005, N)
    return 100.0 * np.vstack([np.ones(7), np.cumprod(1 + np.column_stack([bench, r]), axis=0)])


def _write(folder, table: np.ndarray, rows=None) -> None:
    rows = range(len(table)) if rows is None else rows
    head = "date," + ",".join(NAMES)
    body = [DATES[t] + "," + ",".join(f"{v:.10g}" for v in table[t, 1:]) for t in rows]
    (folder / "members.csv").write_text(head + "\n" + "\n".join(body) + "\n")
    body = [f"{DATES[t]},{table[t, 0]:.10g}" for t in rows]
    (folder / "index.csv").write_text("date,idx\n" + "\n".join(body) + "\n")


def _run(folder, command, data="values: prices", screen=""):
    (folder / "job.yaml").write_text(JOB.format(data=data, screen=screen))
    extra = ["--out", str(folder / "out"), "-q"] if command == "fit" else []
    return CliRunner().invoke(main, [command, str(folder / "job.yaml"), *extra])


def _returns(levels):
    r = np.vstack([np.zeros(7), levels[1:] / levels[:-1] - 1])
    return r


@pytest.mark.parametrize(
    "case, data, code, words",
    [
        ("prices as returns", "values: returns", EXIT_INPUT, "look like price levels"),
        ("percent as decimal", "values: returns", EXIT_INPUT, "look like percent"),
        (
            "decimal as percent",
            "values: returns, returns_unit: percent",
            EXIT_INPUT,
            "look like decimal",
        ),
    ],
)
@pytest.mark.parametrize("command", ["check", "fit"])
def test_units_stop(tmp_path, case, data, code, words, command):
    levels = _levels()
    if case == "prices as returns":
        table = levels
    elif case == "percent as decimal":
        table = _returns(levels) * 100
    else:
        table = _returns(levels)
    _write(tmp_path, table, range(1, N + 1) if case != "prices as returns" else None)
    result = _run(tmp_path, command, data)
    assert result.exit_code == code, result.output
    assert words in result.stderr and "index.csv: idx" in result.stderr
    assert "more finding(s) of the data screen" in result.stderr
    assert len(result.stderr.strip().splitlines()) == 1


def test_split_bad_print_and_stale_warn_with_series_and_date(tmp_path):
    levels = _levels()
    levels[150:, 3] /= 2  # 'c' splits 2-for-1 on row 150, unadjusted
    levels[90, 5] *= 10  # 'e' printed x10 for a day
    levels[200:208, 6] = levels[199, 6]  # 'f' unchanged for 8 days
    _write(tmp_path, levels)
    result = _run(tmp_path, "check")
    # check fits nothing, but exits 1 when the screen warns, as fit does
    assert result.exit_code == EXIT_WARNINGS, result.output
    out = result.stdout
    assert f"members.csv: c: a jump on {DATES[150]}" in out and "2-for-1 split" in out
    assert f"members.csv: e: a spike on {DATES[90]}" in out and DATES[91] in out
    assert "members.csv: f: the price is unchanged for 8 periods" in out
    assert DATES[200] in out and DATES[207] in out
    assert _run(tmp_path, "fit").exit_code == EXIT_WARNINGS
    stop = _run(tmp_path, "fit", screen="jumps: stop")
    assert stop.exit_code == EXIT_INPUT
    assert f"members.csv: c: a jump on {DATES[150]}" in stop.stderr


def test_leave_out_equals_a_fit_without_those_rows(tmp_path):
    r = _returns(_levels())
    r[120, 2], r[121, 2] = 9.0, 1 / 10 - 1  # 'b': a x10 print for one day, as returns
    flawed, clean = tmp_path / "flawed", tmp_path / "clean"
    flawed.mkdir(), clean.mkdir()
    _write(flawed, r, range(1, N + 1))
    _write(clean, r, [t for t in range(1, N + 1) if t not in (120, 121)])
    data = "values: returns, periods_per_year: 252"
    left = _run(flawed, "fit", data, "spikes: leave_out")
    assert left.exit_code == EXIT_WARNINGS, left.output
    ref = _run(clean, "fit", data)
    assert ref.exit_code == 0, ref.output
    assert (flawed / "out" / "weights.csv").read_bytes() == (
        clean / "out" / "weights.csv"
    ).read_bytes()
    report = (flawed / "out" / "report.md").read_text()
    assert f"left out {DATES[120]}, {DATES[121]} from every fit and metric" in report


def test_demo_job_has_no_finding():
    from pathlib import Path

    from trackfit.data import load_tracking_data
    from trackfit.job import load_job

    job = load_job(Path(__file__).resolve().parents[1] / "examples/lumen_bay/job.yaml")
    data = load_tracking_data(job)
    assert data.screen is not None and data.screen.findings == ()
    assert data.screen.rows_before == data.screen.rows_after == len(data.dates)
