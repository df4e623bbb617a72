"""The reporter: renders a FitOutcome to weights.csv, report.md and summary.json.

It formats, sorts and sums for display only; every number it shows was computed elsewhere.
"""

from __future__ import annotations

from pathlib import Path

from trackfit.outcome import FitOutcome
from trackfit.report.files import atomic_write_text
from trackfit.report.markdown import render_markdown
from trackfit.report.summary_json import render_summary_json
from trackfit.report.weights_csv import render_weights_csv

__all__ = [
    "atomic_write_text",
    "render_markdown",
    "render_summary_json",
    "render_weights_csv",
    "write_reports",
]


def write_reports(outcome: FitOutcome, out_dir: Path) -> list[Path]:
    """Render every report, then write each file atomically into ``out_dir``.

    All three texts are built before any file is touched, so a rendering error writes
    nothing and leaves earlier reports in place.

    Parameters
    ----------
    outcome : FitOutcome
    out_dir : Path
        Folder for the files; made if missing.

    Returns
    -------
    list of Path
        ``[out_dir / "weights.csv", out_dir / "report.md", out_dir / "summary.json"]``.
    """
    out_dir = Path(out_dir)
    texts = [
        (out_dir / "weights.csv", render_weights_csv(outcome)),
        (out_dir / "report.md", render_markdown(outcome)),
        (out_dir / "summary.json", render_summary_json(outcome)),
    ]
    for path, text in texts:
        atomic_write_text(path, text)
    return [path for path, _ in texts]
