"""The caution every report carries, kept in one place so all outputs say the same."""

from __future__ import annotations

#: Shown near the top of report.md and stored in summary.json.
CAUTION = (
    "These weights come from a statistical fit to past returns. They are not investment "
    "advice. Past tracking error does not promise future tracking error: after the as-of "
    "date the weights may track the benchmark worse, sometimes much worse. Before holding "
    "them, check them against the mandate's limits and local regulation with qualified "
    "professionals."
)
