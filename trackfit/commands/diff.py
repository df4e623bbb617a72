"""``trackfit diff``: two weight files -> the trades between them.

Both files are read as holdings (:func:`trackfit.data.holdings.read_holdings`): the
``weights.csv`` that ``trackfit fit`` writes, or any two-column ``name,weight`` CSV.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from trackfit.data.holdings import read_holdings
from trackfit.evaluate.trades import trades
from trackfit.outcomes.diff import WeightsDiff
from trackfit.report.diff_render import RENDERERS
from trackfit.report.files import atomic_write_text

#: Output formats of ``trackfit diff``.
FORMATS = tuple(RENDERERS)


def diff_weights(old: Path, new: Path) -> WeightsDiff:
    """Read two weight files and list the trades from ``old`` to ``new``.

    Raises
    ------
    DataError
        A file is missing or malformed (the message names it).
    """
    before, after = (
        read_holdings(Path(f), label=str(f), what="weights file", key=None) for f in (old, new)
    )
    moves = trades(after.names, after.weights, before.names, before.weights)
    return WeightsDiff(
        old=str(old),
        new=str(new),
        trades=moves,
        old_names=int(np.count_nonzero(before.weights)),
        new_names=int(np.count_nonzero(after.weights)),
        old_cash=before.cash,
        new_cash=after.cash,
    )


def run_diff(old: Path, new: Path, *, fmt: str = "text", out_file: Path | None = None) -> str:
    """``trackfit diff``: the diff rendered as ``fmt``; also written atomically to ``out_file``."""
    text = RENDERERS[fmt](diff_weights(old, new))
    if out_file is not None:
        atomic_write_text(out_file, text)
    return text
