"""The data screen's shared interface: what a screen found and what it did.

INTERFACE ONLY. This module holds exactly the two dataclasses and FINDING_KINDS that the
screen and its reporters agree on; it detects nothing. The screen itself (the detection and
the load step that runs it) replaces this module when it lands.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date


@dataclass(frozen=True)
class Finding:
    kind: str  # one of FINDING_KINDS
    series: str  # the series as messages name it, e.g. "constituents.csv: kestrel_quays"
    dates: tuple[date, ...]  # the date(s) concerned, sorted
    value: float | None  # the offending number (a return, a median size, a run length)
    action: str  # "stop" | "warn" | "leave_out"
    message: str  # one line naming file/series, date(s), value, what trackfit did


#: kind -> what it is, in the words reports use
FINDING_KINDS = {
    "units": "values that cannot be what the job says they are",
    "spike": "a one-period spike that reverses (a bad print)",
    "jump": "a one-period jump that stays (an unadjusted split or consolidation)",
    "benchmark": "a benchmark return the constituents cannot explain",
    "stale": "a run of unchanged prices",
}


@dataclass(frozen=True)
class Screen:
    findings: tuple[Finding, ...]  # in a stable order: by kind order above, then series, then date
    left_out: tuple[date, ...]  # dates removed from every fit and metric (sorted, unique)
    rows_before: int  # rows in the window before any were left out
    rows_after: int
    names_kept: int  # constituents kept in the fit

    @property
    def warnings(self) -> tuple[Finding, ...]:
        """Findings with action "warn" or "leave_out"."""
        return tuple(f for f in self.findings if f.action in ("warn", "leave_out"))
