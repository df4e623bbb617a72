"""``trackfit diff`` output: a terminal table, CSV or JSON of the trades between two weight files.

Only names whose weight changed are listed, largest change first (ties by name).
"""

from __future__ import annotations

import csv
import io
import json

from trackfit.outcomes.diff import WeightsDiff
from trackfit.report.numbers import fixed, json_number

#: Weights and changes in CSV and JSON: as many decimals as weights.csv.
DIFF_FORMAT = ".10f"
# One vocabulary for trades in every file trackfit writes: the report's trades table and this
# diff say buy, sell, new, dropped and hold alike.
_ACTIONS = {"new": "new", "dropped": "dropped", "buy": "buy", "sell": "sell"}


def _counts(d: WeightsDiff) -> dict[str, int]:
    return {
        action: len(d.with_action(action)) for action in ("new", "dropped", "buy", "sell", "hold")
    }


def _cash(value: float | None) -> str:
    return "no cash row" if value is None else f"cash {fixed(value, '.6f')}"


def render_diff_text(d: WeightsDiff) -> str:
    """A summary and an aligned table for a terminal; weights with 6 decimals."""
    c = _counts(d)
    lines = [
        f"old: {d.old} ({d.old_names} names held, {_cash(d.old_cash)})",
        f"new: {d.new} ({d.new_names} names held, {_cash(d.new_cash)})",
        ", ".join(f"{action} {n}" for action, n in c.items())
        + f"; one-way turnover {fixed(d.trades.one_way_turnover, '.6f')}",
    ]
    moves = d.moves
    if not moves:
        return "\n".join(lines + ["no weight changed"]) + "\n"
    rows = [("name", "old", "new", "change", "action")]
    for t in moves:
        change = fixed(t.change, "+.6f")
        change = change if change[0] in "+-" else "+" + change  # rounded to zero
        rows.append(
            (t.name, fixed(t.current, ".6f"), fixed(t.target, ".6f"), change, _ACTIONS[t.action])
        )
    width = [max(len(r[i]) for r in rows) for i in range(5)]
    lines.append("")
    for r in rows:
        cells = [r[0].ljust(width[0])] + [r[i].rjust(width[i]) for i in (1, 2, 3)] + [r[4]]
        lines.append("  ".join(cells))
    return "\n".join(lines) + "\n"


def render_diff_csv(d: WeightsDiff) -> str:
    """``name,old,new,change,action``, one row per changed name; ``"\\n"`` line endings."""
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow(["name", "old", "new", "change", "action"])
    for t in d.moves:
        writer.writerow(
            [
                t.name,
                fixed(t.current, DIFF_FORMAT),
                fixed(t.target, DIFF_FORMAT),
                fixed(t.change, DIFF_FORMAT),
                _ACTIONS[t.action],
            ]
        )
    return buffer.getvalue()


def render_diff_json(d: WeightsDiff) -> str:
    """The summary and the changed names as JSON (12 significant digits), ending in ``"\\n"``."""

    def num(x: float | None) -> float | None:
        return None if x is None else json_number(x)

    cash_change = None if d.old_cash is None or d.new_cash is None else num(d.new_cash - d.old_cash)
    tree = {
        "old": d.old,
        "new": d.new,
        "names_held": {"old": d.old_names, "new": d.new_names},
        "cash": {"old": num(d.old_cash), "new": num(d.new_cash), "change": cash_change},
        "one_way_turnover": num(d.trades.one_way_turnover),
        "counts": _counts(d),
        "changes": [
            {
                "name": t.name,
                "old": num(t.current),
                "new": num(t.target),
                "change": num(t.change),
                "action": _ACTIONS[t.action],
            }
            for t in d.moves
        ],
    }
    return json.dumps(tree, indent=2, ensure_ascii=False, allow_nan=False) + "\n"


RENDERERS = {"text": render_diff_text, "csv": render_diff_csv, "json": render_diff_json}
