"""``trackfit fit`` on prices with a late listing and scattered gaps, through click's CliRunner.

The truth is built here: a benchmark that holds known weights of six invented names, priced
daily; one more name lists late. Leaving it out must give the weights of a fit on files that
never had it, to the byte.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
from click.testing import CliRunner

from trackfit.cli import EXIT_INPUT, EXIT_WARNINGS, main

NAMES = ("a", "b", "c", "d", "e", "f")
WEIGHTS = np.array([0.4, 0.3, 0.2, 0.0, 0.0, 0.1])
N = 160
LATE_FROM = 100  # the late name's first price is on this row

JOB = """\
name: gaps
benchmark: {{file: index.csv, column: idx}}
constituents: [{{file: {members}}}]
data: {{values: prices{data}}}
window: {{holdout: 20}}
models: {{lasso: {{}}}}
penalty_grid: {{count: 10}}
cross_validation: {{folds: 3}}
"""


def _write(folder: Path, with_late: bool, gaps: bool) -> None:
    rng = np.random.default_rng(5)
    dates = np.busday_offset("2029-02-01", np.arange(N), roll="forward")
    returns = rng.normal(0.0, 0.01, size=(N, len(NAMES) + 1))
    bench = returns[:, :6] @ WEIGHTS + rng.normal(0.0, 0.001, size=N)
    levels = 100.0 * np.cumprod(1.0 + np.column_stack([bench, returns]), axis=0)
    levels[:LATE_FROM, -1] = np.nan
    if gaps:
        levels[[30, 31, 77], 2] = np.nan  # name 'b': gaps of two days and one day
    cols = ["idx", *NAMES, "late"] if with_late else ["idx", *NAMES]
    keep = slice(None) if with_late else slice(0, -1)

    def cell(v):
        return "" if np.isnan(v) else f"{v:.6f}"

    lines = ["date," + ",".join(cols[1:])]
    lines += [
        f"{d}," + ",".join(cell(v) for v in row[1:]) for d, row in zip(dates, levels[:, keep])
    ]
    (folder / "members.csv").write_text("\n".join(lines) + "\n")
    index = ["date,idx"] + [f"{d},{v:.6f}" for d, v in zip(dates, levels[:, 0])]
    (folder / "index.csv").write_text("\n".join(index) + "\n")


def _fit(folder: Path, data: str, *extra: str):
    (folder / "job.yaml").write_text(JOB.format(members="members.csv", data=data))
    return CliRunner().invoke(
        main,
        ["fit", str(folder / "job.yaml"), "--out", str(folder / "out"), "--no-figures", *extra],
    )


def test_a_late_listing_is_left_out_and_the_others_get_the_weights_of_a_fit_without_it(tmp_path):
    with_late, without = tmp_path / "with", tmp_path / "without"
    with_late.mkdir(), without.mkdir()
    _write(with_late, with_late=True, gaps=True)
    _write(without, with_late=False, gaps=True)
    left = _fit(with_late, ", carry_forward: 2, min_coverage: 0.9")
    alone = _fit(without, ", carry_forward: 2")
    assert left.exit_code == EXIT_WARNINGS, left.stderr
    assert alone.exit_code == EXIT_WARNINGS, alone.stderr  # the carried prices are a warning
    weights = (with_late / "out" / "weights.csv").read_bytes()
    assert weights == (without / "out" / "weights.csv").read_bytes()
    assert b"late" not in weights
    assert (
        "constituent 'late' (members.csv) was left out: it has a return on 59 of the 159 return "
        "dates of the fit window" in left.stderr
    )
    assert "(listed late)" in left.stderr
    assert "data.carry_forward is 2: 3 missing price(s) were filled" in left.stderr
    report = (with_late / "out" / "report.md").read_text()
    assert "'late' (members.csv) was left out" in report


def test_without_the_new_keys_the_same_files_stop_with_todays_error(tmp_path):
    _write(tmp_path, with_late=True, gaps=False)
    result = _fit(tmp_path, "")
    assert result.exit_code == EXIT_INPUT
    assert "'late' (members.csv): 100 dates" in result.stderr
    assert "or set data.missing: drop_dates to leave those dates out" in result.stderr
    assert not (tmp_path / "out").exists()
