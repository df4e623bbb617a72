"""The data-quality section of report.md, the backtest report and both summary.json files.

Screens are built by hand from the interface dataclasses (trackfit/data/screen.py), so every
line the reporters write about them is known to the test. A run without a screen
(``TrackingData.screen`` None) must give the same bytes as before the section existed.
"""

from __future__ import annotations

import dataclasses
import json
from datetime import date

import pytest
from builders import make_outcome
from jobs import write_small_job

from trackfit.commands.backtest import run_backtest_job
from trackfit.data.screen import FINDING_KINDS, Finding, Screen
from trackfit.job import load_job
from trackfit.report import render_markdown, render_summary_json
from trackfit.report.backtest_json import render_backtest_json
from trackfit.report.backtest_markdown import render_backtest_markdown
from trackfit.report.data_quality import finding_line, quality_section

KESTREL = "constituents.csv: kestrel_quays"
INDEX = "index.csv: lbx"
D = date

INTRO = (
    "Before fitting, every return series was screened for values that cannot be right: "
    "wrong units, one-period spikes that reverse, jumps that stay, benchmark returns the "
    "constituents cannot explain, and runs of unchanged prices."
)


def _counts(before, left, after, kept):
    return [
        "| Item | Value |",
        "|:---|---:|",
        f"| Rows before the screen | {before} |",
        f"| Rows left out | {left} |",
        f"| Rows after the screen | {after} |",
        f"| Constituents kept | {kept} |",
    ]


FINDINGS_HEAD = [
    "| Finding | Series | Dates | Value | What was done |",
    "|:---|:---|:---|---:|:---|",
]

CLEAN = Screen(findings=(), left_out=(), rows_before=24, rows_after=24, names_kept=5)

SPIKE = Finding(
    kind="spike",
    series=KESTREL,
    dates=(D(2025, 3, 31), D(2025, 4, 30)),
    value=0.4512,
    action="leave_out",
    message="constituents.csv: kestrel_quays on 2025-03-31: return 45.12% reverses; left out",
)
STALE = Finding(
    kind="stale",
    series="constituents.csv: harbour|glass",  # a pipe must not break the table
    dates=tuple(D(2025, m, 28) for m in range(5, 10)),
    value=5.0,
    action="warn",
    message="constituents.csv: harbour|glass: 5 unchanged prices from 2025-05-28; check it",
)
UNITS = Finding(
    kind="units",
    series=INDEX,
    dates=(D(2026, 1, 31),),
    value=None,
    action="warn",
    message="index.csv: lbx: values cannot be decimal returns",
)
ODD = Finding(
    kind="something_new",  # a kind the reporter has no words for is shown as it is
    series=INDEX,
    dates=(),
    value=-0.0,
    action="audit",
    message="index.csv: lbx: odd",
)

# (case, screen, expected lines after the intro and the counts table, expected check lines)
CASES = [
    (
        "clean",
        CLEAN,
        ["No date was left out.", "", "No findings."],
        [],
    ),
    (
        "spike left out, stale warned",
        Screen(
            findings=(SPIKE, STALE),
            left_out=(D(2025, 3, 31), D(2025, 4, 30)),
            rows_before=24,
            rows_after=22,
            names_kept=5,
        ),
        [
            "Dates left out of every fit and metric: 2025-03-31, 2025-04-30.",
            "",
            *FINDINGS_HEAD,
            f"| {FINDING_KINDS['spike']} | {KESTREL} | 2025-03-31, 2025-04-30 | 0.4512 | "
            "date(s) left out of every fit and metric |",
            f"| {FINDING_KINDS['stale']} | constituents.csv: harbour\\|glass | "
            "2025-05-28 to 2025-09-28 (5 dates) | 5 | kept, with a warning |",
        ],
        [
            f"{KESTREL}: {FINDING_KINDS['spike']}; 2025-03-31, 2025-04-30; value 0.4512; "
            "date(s) left out of every fit and metric",
            f"constituents.csv: harbour|glass: {FINDING_KINDS['stale']}; "
            "2025-05-28 to 2025-09-28 (5 dates); value 5; kept, with a warning",
        ],
    ),
    (
        "no value, unknown kind and action",
        Screen(findings=(UNITS, ODD), left_out=(), rows_before=24, rows_after=24, names_kept=4),
        [
            "No date was left out.",
            "",
            *FINDINGS_HEAD,
            f"| {FINDING_KINDS['units']} | {INDEX} | 2026-01-31 | n/a | kept, with a warning |",
            f"| something_new | {INDEX} | n/a | 0 | audit |",
        ],
        [
            f"{INDEX}: {FINDING_KINDS['units']}; 2026-01-31; value n/a; kept, with a warning",
            f"{INDEX}: something_new; n/a; value 0; audit",
        ],
    ),
]
IDS = [c[0] for c in CASES]


def _with_screen(outcome, screen):
    return dataclasses.replace(outcome, data=dataclasses.replace(outcome.data, screen=screen))


@pytest.fixture(scope="module")
def fit_outcome(tmp_path_factory):
    return make_outcome(tmp_path_factory.mktemp("quality"))


@pytest.fixture(scope="module")
def backtest_outcome(tmp_path_factory):
    # A real backtest screens its data; the tests here start from one whose screen did not run
    # and attach hand-built screens to it.
    folder = tmp_path_factory.mktemp("quality_backtest")
    return _with_screen(run_backtest_job(load_job(write_small_job(folder))), None)


@pytest.mark.parametrize("case, screen, tail, check_lines", CASES, ids=IDS)
def test_section_lines(case, screen, tail, check_lines):
    body = [
        "",
        INTRO,
        "",
        *_counts(screen.rows_before, len(screen.left_out), screen.rows_after, screen.names_kept),
        "",
        *tail,
    ]
    assert quality_section(screen, level=3) == ["### Data quality", *body]
    assert quality_section(screen) == ["## Data quality", *body]
    assert [finding_line(f) for f in screen.findings] == check_lines


def test_no_screen_no_section():
    assert quality_section(None) == []


@pytest.mark.parametrize("case, screen, tail, check_lines", CASES, ids=IDS)
def test_fit_report_holds_the_section_after_the_cleaning_steps(
    fit_outcome, case, screen, tail, check_lines
):
    plain = render_markdown(fit_outcome)
    text = render_markdown(_with_screen(fit_outcome, screen))
    section = "\n".join(quality_section(screen, level=3))
    # The screen adds its section right after the cleaning steps and changes nothing else.
    before, after = plain.split("\n\n### Split\n")
    assert text == f"{before}\n\n{section}\n\n### Split\n{after}"
    assert before.rsplit("### ", 1)[1].startswith("Cleaning steps")


@pytest.mark.parametrize("case, screen, tail, check_lines", CASES, ids=IDS)
def test_fit_summary_holds_data_quality_after_data(fit_outcome, case, screen, tail, check_lines):
    plain = json.loads(render_summary_json(fit_outcome))
    tree = json.loads(render_summary_json(_with_screen(fit_outcome, screen)))
    assert list(tree) == [*list(plain)[:5], "data_quality", *list(plain)[5:]]
    assert list(plain)[4] == "data"
    quality = tree.pop("data_quality")
    assert tree == plain
    assert quality == _expected_json(screen)


def _expected_json(screen):
    return {
        "rows_before": screen.rows_before,
        "rows_after": screen.rows_after,
        "left_out": [d.isoformat() for d in screen.left_out],
        "names_kept": screen.names_kept,
        "findings": [
            {
                "kind": f.kind,
                "what": FINDING_KINDS.get(f.kind, f.kind),
                "series": f.series,
                "dates": [d.isoformat() for d in f.dates],
                "value": f.value,
                "action": f.action,
                "message": f.message,
            }
            for f in screen.findings
        ],
    }


@pytest.mark.parametrize("case, screen, tail, check_lines", CASES, ids=IDS)
def test_backtest_report_and_summary_hold_the_same_section(
    backtest_outcome, case, screen, tail, check_lines
):
    plain = render_backtest_markdown(backtest_outcome)
    text = render_backtest_markdown(_with_screen(backtest_outcome, screen))
    section = "\n".join(quality_section(screen, level=2))
    before, after = plain.split("\n\n## Out-of-sample tracking\n")
    assert text == f"{before}\n\n{section}\n\n## Out-of-sample tracking\n{after}"

    plain_tree = json.loads(render_backtest_json(backtest_outcome))
    tree = json.loads(render_backtest_json(_with_screen(backtest_outcome, screen)))
    keys = list(plain_tree)
    at = keys.index("schedule") + 1
    assert list(tree) == [*keys[:at], "data_quality", *keys[at:]]
    assert tree.pop("data_quality") == _expected_json(screen)
    assert tree == plain_tree


def test_without_a_screen_nothing_is_said_about_one(fit_outcome, backtest_outcome):
    assert fit_outcome.data.screen is None and backtest_outcome.data.screen is None
    for text in (render_markdown(fit_outcome), render_backtest_markdown(backtest_outcome)):
        assert "Data quality" not in text and "screen" not in text
    for text in (render_summary_json(fit_outcome), render_backtest_json(backtest_outcome)):
        assert "data_quality" not in json.loads(text)
