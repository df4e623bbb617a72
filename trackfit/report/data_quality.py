"""The data screen in words: one wording for report.md, the backtest report, summary.json and check.

Every renderer takes ``TrackingData.screen``; None (no screen ran) gives nothing at all, so
reports of runs without a screen keep their bytes.
"""

from __future__ import annotations

from datetime import date
from typing import Any

from trackfit.data.screen import FINDING_KINDS, Finding, Screen
from trackfit.report.numbers import NOT_AVAILABLE, fixed, iso_date
from trackfit.report.tables import inline, table

#: Title of the section (a "##" section in the backtest report, "###" under "What was done").
TITLE = "Data quality"

#: What the screen did about a finding, by action.
ACTION_WORDS = {
    "stop": "stopped the run",
    "warn": "kept, with a warning",
    "leave_out": "date(s) left out of every fit and metric",
}

#: A finding's dates are listed one by one up to this many, then as a range with a count.
DATES_LISTED = 3

NO_FINDINGS = "No findings."


def kind_words(kind: str) -> str:
    """What a finding kind is, in the words reports use (the kind itself if unknown)."""
    return FINDING_KINDS.get(kind, kind)


def action_words(action: str) -> str:
    """What the screen did, in words (the action itself if unknown)."""
    return ACTION_WORDS.get(action, action)


def dates_words(dates: tuple[date, ...]) -> str:
    """A finding's dates: ``"2025-03-04"``, ``"2025-03-04, 2025-03-05"`` or a range with a count."""
    if not dates:
        return NOT_AVAILABLE
    if len(dates) <= DATES_LISTED:
        return ", ".join(iso_date(d) for d in dates)
    return f"{iso_date(dates[0])} to {iso_date(dates[-1])} ({len(dates)} dates)"


def value_words(value: float | None) -> str:
    """The offending number, with six significant digits (a return, a size or a run length)."""
    return fixed(value, ".6g")


def finding_line(finding: Finding) -> str:
    """One finding on one line (``trackfit check`` prints it after ``finding: ``)."""
    return inline(
        f"{finding.series}: {kind_words(finding.kind)}; {dates_words(finding.dates)}; "
        f"value {value_words(finding.value)}; {action_words(finding.action)}"
    )


def screen_lines(screen: Screen | None) -> list[str]:
    """What ``trackfit check`` prints about the screen: counts, then one line per finding."""
    if screen is None:
        return []
    left = len(screen.left_out)
    lines = [
        f"data quality: {len(screen.findings)} finding(s); {screen.rows_before} rows before, "
        f"{left} left out, {screen.rows_after} after; {screen.names_kept} names kept"
    ]
    if screen.left_out:
        lines.append("  dates left out: " + ", ".join(iso_date(d) for d in screen.left_out))
    # The finding's own message: it says by how much and what the move looks like.
    lines += [f"finding: {f.message or finding_line(f)}" for f in screen.findings]
    return lines


def quality_section(screen: Screen | None, level: int = 2) -> list[str]:
    """Lines of the "Data quality" section, or none when no screen ran.

    Parameters
    ----------
    screen : Screen or None
    level : int
        Heading level: 2 for a section of its own, 3 under another section.
    """
    if screen is None:
        return []
    left = len(screen.left_out)
    lines = [f"{'#' * level} {TITLE}", ""]
    lines.append(
        "Before fitting, every return series was screened for values that cannot be right: "
        "wrong units, one-period spikes that reverse, jumps that stay, benchmark returns the "
        "constituents cannot explain, and runs of unchanged prices."
    )
    lines.append("")
    lines += table(
        ["Item", "Value"],
        [
            ["Rows before the screen", str(screen.rows_before)],
            ["Rows left out", str(left)],
            ["Rows after the screen", str(screen.rows_after)],
            ["Constituents kept", str(screen.names_kept)],
        ],
        [False, True],
    )
    lines.append("")
    if screen.left_out:
        lines.append(
            "Dates left out of every fit and metric: "
            + ", ".join(iso_date(d) for d in screen.left_out)
            + "."
        )
    else:
        lines.append("No date was left out.")
    lines.append("")
    if not screen.findings:
        lines.append(NO_FINDINGS)
        return lines
    lines += table(
        ["Finding", "Series", "Dates", "Value", "What was done"],
        [
            [
                kind_words(f.kind),
                f.series,
                dates_words(f.dates),
                value_words(f.value),
                action_words(f.action),
            ]
            for f in screen.findings
        ],
        [False, False, False, True, False],
    )
    return lines


def quality_json(screen: Screen) -> dict[str, Any]:
    """The ``data_quality`` object of summary.json (callers add it only when a screen ran)."""
    return {
        "rows_before": screen.rows_before,
        "rows_after": screen.rows_after,
        "left_out": list(screen.left_out),
        "names_kept": screen.names_kept,
        "findings": [
            {
                "kind": f.kind,
                "what": kind_words(f.kind),
                "series": f.series,
                "dates": list(f.dates),
                "value": f.value,
                "action": f.action,
                "message": f.message,
            }
            for f in screen.findings
        ],
    }
