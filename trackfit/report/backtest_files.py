"""Write a backtest's files: weights_history.csv, returns.csv, report.md, summary.json."""

from __future__ import annotations

from pathlib import Path
from typing import TYPE_CHECKING

from trackfit.report.backtest_csv import render_returns_csv, render_weights_history_csv
from trackfit.report.backtest_json import render_backtest_json
from trackfit.report.backtest_markdown import render_backtest_markdown
from trackfit.report.files import atomic_write_text

if TYPE_CHECKING:
    from trackfit.backtest_run import BacktestOutcome

#: The files a backtest writes, in the order they are listed on stdout.
BACKTEST_FILES = ("weights_history.csv", "returns.csv", "report.md", "summary.json")


def write_backtest_reports(outcome: BacktestOutcome, out_dir: Path) -> list[Path]:
    """Render every file first, then write each atomically into ``out_dir`` (made if missing).

    Returns
    -------
    list of Path
        The files written, in the order of :data:`BACKTEST_FILES`.
    """
    out_dir = Path(out_dir)
    renderers = (render_weights_history_csv, render_returns_csv, render_backtest_markdown,
                 render_backtest_json)
    texts = [(out_dir / name, render(outcome)) for name, render in zip(BACKTEST_FILES, renderers)]
    for path, text in texts:
        atomic_write_text(path, text)
    return [path for path, _ in texts]
