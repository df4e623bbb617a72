"""Well-formed Markdown tables and cells."""

from __future__ import annotations

from collections.abc import Sequence


def cell(text: object) -> str:
    """One table cell: a single line with every ``|`` escaped."""
    return " ".join(str(text).split()).replace("|", "\\|")


def inline(text: object) -> str:
    """Free text on one line (for bullets and sentences)."""
    return " ".join(str(text).split())


def table(
    headers: Sequence[str], rows: Sequence[Sequence[object]], right: Sequence[bool]
) -> list[str]:
    """Lines of a Markdown table.

    Parameters
    ----------
    headers : sequence of str, length n_columns
    rows : sequence of sequences, each of length n_columns
    right : sequence of bool, length n_columns
        True to right-align a column (numbers), False to left-align it (text).
    """
    if len(right) != len(headers) or any(len(r) != len(headers) for r in rows):
        raise ValueError("Every table row and the alignment list must have one entry per header.")
    lines = ["| " + " | ".join(cell(h) for h in headers) + " |"]
    lines.append("|" + "|".join("---:" if r else ":---" for r in right) + "|")
    lines.extend("| " + " | ".join(cell(v) for v in row) + " |" for row in rows)
    return lines
