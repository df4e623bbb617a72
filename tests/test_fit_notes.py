"""Notes apart from warnings: routine facts go in the report and change no exit code.

``fit_notes`` is checked on invented weights whose shorts and cash the test sets itself; the
command-line tests use the small invented job of tests/jobs.py with a groups file that lists a
name the job does not have (a note) and, apart, a constituent of zero variance (a warning).
"""

from __future__ import annotations

import json

import numpy as np
import pytest
from click.testing import CliRunner
from jobs import JOB, NAMES, write_small_job

from trackfit.cli import EXIT_WARNINGS, main
from trackfit.core.limits import NO_LIMITS, Limits
from trackfit.core.models import ModelSpec
from trackfit.evaluate.recipe import CASH_NOTE_SHARE, Model, fit_notes

LASSO = Model.of(ModelSpec(name="lasso", kind="lasso", l1_ratios=(1.0,)))
OLS = Model.baseline("ols")
GROUPS_NOTE = (
    "sectors.csv: 1 name(s) in the groups file are not constituents of this fit; their rows "
    "are ignored"
)


def test_no_note_for_long_fully_invested_weights():
    w = np.array([0.5, 0.3, 0.2])
    assert fit_notes(LASSO, w, NO_LIMITS) == []


def test_shorts_are_counted_and_point_to_long_only():
    w = np.array([0.6, -0.1, 0.5, -0.0])  # -0.0 is not a short
    notes = fit_notes(LASSO, w, NO_LIMITS)
    assert notes == [
        "lasso: the held weights include 1 short position(s) (negative weights); no limit "
        "forbids them; to hold none set limits.long_only: true"
    ]


def test_negative_cash_points_to_the_budget():
    w = np.array([0.7, 0.5])
    assert fit_notes(OLS, w, NO_LIMITS) == [
        "ols: the held weights sum to 1.2000, so cash is negative (-0.2000, borrowed); to bound "
        "the sum of weights set limits.budget"
    ]


def test_cash_above_the_share_in_a_penalized_fit_points_to_fully_invested():
    w = np.array([0.5, 0.47])  # 3 % cash
    assert fit_notes(LASSO, w, NO_LIMITS) == [
        "lasso: the held weights leave 3.00% in cash; penalized fits shrink the weights toward "
        "zero, so with no budget limit toward cash; to hold none set limits.budget: "
        "fully_invested"
    ]
    below = np.array([0.5, 0.484375])  # 1.5625 % cash, exact in binary
    assert 1.0 - below.sum() < CASH_NOTE_SHARE
    assert fit_notes(LASSO, below, NO_LIMITS) == []
    assert fit_notes(OLS, w, NO_LIMITS) == []  # no penalty, no shrinkage to explain


@pytest.mark.parametrize(
    "limits",
    [
        Limits(long_only=True),
        Limits(lower=np.array([0.0, 0.0, 0.0])),  # every name bounded at zero or above
    ],
)
def test_shorts_a_limit_forbids_get_no_note(limits):
    # The solver would not return these; the rule only reads what the limits say.
    w = np.array([0.6, -0.1, 0.5])
    assert not [n for n in fit_notes(LASSO, w, limits) if "short" in n]


def test_a_budget_silences_the_cash_notes():
    w = np.array([0.5, 0.3])
    assert fit_notes(LASSO, w, Limits(budget=(0.5, 1.0))) == []
    assert fit_notes(OLS, np.array([0.8, 0.5]), Limits(budget=(None, 1.5))) == []


def test_a_backtest_counts_rebalances():
    targets = np.array(
        [
            [0.6, -0.1, 0.5],  # a short (cash 0)
            [0.5, 0.45, 0.0],  # 5 % cash
            [0.5, -0.2, 0.6],  # a short, 10 % cash
            [0.4, 0.3, 0.3],
        ]
    )
    assert fit_notes(LASSO, targets, NO_LIMITS) == [
        "lasso: 2 of 4 rebalances held shorts (negative weights); no limit forbids them; to hold "
        "none set limits.long_only: true",
        "lasso: 2 of 4 rebalances held more than 2% cash; penalized fits shrink the weights "
        "toward zero, so with no budget limit toward cash; to hold none set limits.budget: "
        "fully_invested",
    ]


def _job_with_groups(tmp_path, flat: bool = False):
    # Ridge under long-only and fully invested: no design warning (that one is for L1 models)
    # and no note on shorts or cash, so the groups file's note is the only statement.
    text = JOB.replace("models: {lasso: {}}", "models: {ridge: {}}") + (
        "limits:\n  long_only: true\n  budget: fully_invested\n"
        "  groups:\n    file: sectors.csv\n    group_column: sector\n    each: {max: 0.8}\n"
    )
    job = write_small_job(tmp_path, text)
    rows = [f"{name},{'x' if name < 'd' else 'y'}" for name in NAMES] + ["gone,x"]
    (tmp_path / "sectors.csv").write_text("name,sector\n" + "\n".join(rows) + "\n")
    if flat:  # a constituent whose return never varies: left out, with a warning
        lines = (tmp_path / "members.csv").read_text().splitlines()
        lines = [lines[0] + ",flat"] + [line + ",0.0" for line in lines[1:]]
        (tmp_path / "members.csv").write_text("\n".join(lines) + "\n")
        (tmp_path / "sectors.csv").write_text((tmp_path / "sectors.csv").read_text() + "flat,y\n")
    return job


def _run(*args):
    return CliRunner().invoke(main, [str(a) for a in args])


def test_a_groups_note_is_reported_and_exits_0(tmp_path):
    job = _job_with_groups(tmp_path)
    result = _run("fit", job, "--out", tmp_path / "out", "--no-figures")
    assert result.exit_code == 0, result.output
    assert "warning:" not in result.stderr
    summary = json.loads((tmp_path / "out" / "summary.json").read_text())
    assert summary["notes"] == [GROUPS_NOTE] and summary["warnings"] == []
    report = (tmp_path / "out" / "report.md").read_text()
    assert f"### Method notes\n\n- {GROUPS_NOTE}\n" in report
    checked = _run("check", job)
    assert checked.exit_code == 0, checked.output
    assert f"note: {GROUPS_NOTE}" in checked.stdout.splitlines()


def test_a_real_warning_still_exits_1_beside_the_note(tmp_path):
    job = _job_with_groups(tmp_path, flat=True)
    result = _run("fit", job, "--out", tmp_path / "out", "--no-figures")
    assert result.exit_code == EXIT_WARNINGS, result.output
    assert "warning: constituent 'flat'" in result.stderr
    summary = json.loads((tmp_path / "out" / "summary.json").read_text())
    # The flat name is left out of the fit, so its groups row is one more ignored.
    assert summary["notes"] == [GROUPS_NOTE.replace("1 name(s)", "2 name(s)")]
    assert any("'flat'" in w for w in summary["warnings"])
    assert _run("check", job).exit_code == EXIT_WARNINGS


def test_a_backtest_carries_the_groups_note_and_exits_0(tmp_path):
    job = _job_with_groups(tmp_path)
    result = _run("backtest", job, "--out", tmp_path / "bt", "--no-figures", "-q")
    assert result.exit_code == 0, result.output
    summary = json.loads((tmp_path / "bt" / "summary.json").read_text())
    assert GROUPS_NOTE in summary["notes"] and summary["warnings"] == []
