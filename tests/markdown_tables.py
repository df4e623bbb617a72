"""Read the Markdown tables of a rendered report back into lines and cells."""

from __future__ import annotations

import re


def table_blocks(text: str) -> list[list[str]]:
    blocks, current = [], []
    for line in text.split("\n"):
        if line.startswith("|"):
            current.append(line)
        elif current:
            blocks.append(current)
            current = []
    return blocks + ([current] if current else [])


def cells(line: str) -> list[str]:
    assert line.startswith("| ") or line.startswith("|:") or line.startswith("|-"), line
    assert line.endswith("|"), line
    return re.split(r"(?<!\\)\|", line)[1:-1]
