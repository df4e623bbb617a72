"""The reporter: renders a FitOutcome to weights.csv, report.md, summary.json and figures.

It formats, sorts and sums for display only; every number it shows was computed elsewhere.
"""

from __future__ import annotations

import re
from collections.abc import Callable
from functools import partial
from pathlib import Path

from trackfit.outcomes.fit import FitOutcome
from trackfit.report import ex_ante, plots
from trackfit.report.files import atomic_write_bytes, atomic_write_text
from trackfit.report.markdown import render_markdown
from trackfit.report.summary_json import render_summary_json
from trackfit.report.weights_csv import render_weights_csv

__all__ = [
    "atomic_write_bytes",
    "atomic_write_text",
    "figure_files",
    "render_markdown",
    "render_summary_json",
    "render_weights_csv",
    "write_reports",
]

#: File of the held model's largest weights.
TOP_WEIGHTS_FILE = "top_weights.png"


def figure_files(outcome: FitOutcome) -> list[tuple[str, str]]:
    """The fit's figures, in the order they are written and listed: ``(caption, file name)``.

    ``top_weights.png``, ``ex_ante_contributions.png`` when the outcome carries an ex-ante
    tracking error, then ``cv_<model>.png`` for each cross-validated model in study order
    (characters other than letters, digits, ``_`` and ``-`` in the model name become ``_``).
    """
    return [(caption, name) for caption, name, _ in _figures(outcome)]


def write_reports(outcome: FitOutcome, out_dir: Path, *, figures: bool = False) -> list[Path]:
    """Render every report, then write each file atomically into ``out_dir``.

    Everything (figures included) is rendered before any file is touched, so a rendering
    error writes nothing and leaves earlier reports in place.

    Parameters
    ----------
    outcome : FitOutcome
    out_dir : Path
        Folder for the files; made if missing.
    figures : bool, default False
        Also draw the PNG figures of :func:`figure_files` beside report.md and list them at
        the end of it. When matplotlib is not installed no PNG is written and report.md says
        the figures were skipped.

    Returns
    -------
    list of Path
        ``[out_dir / "weights.csv", out_dir / "report.md", out_dir / "summary.json"]``, then
        the PNG files written, in the order of :func:`figure_files`.
    """
    out_dir = Path(out_dir)
    listed: list[tuple[str, str]] = []
    pngs: list[tuple[Path, bytes]] = []
    skipped = figures and not plots.plots_available()
    if figures and not skipped:
        for caption, name, draw in _figures(outcome):
            listed.append((caption, name))
            pngs.append((out_dir / name, draw()))
    texts = [
        (out_dir / "weights.csv", render_weights_csv(outcome)),
        (out_dir / "report.md", render_markdown(outcome, figures=listed, figures_skipped=skipped)),
        (out_dir / "summary.json", render_summary_json(outcome)),
    ]
    for path, text in texts:
        atomic_write_text(path, text)
    for path, data in pngs:
        atomic_write_bytes(path, data)
    return [path for path, _ in texts] + [path for path, _ in pngs]


def _figures(outcome: FitOutcome) -> list[tuple[str, str, Callable[[], bytes]]]:
    """``(caption, file name, draw)`` of every fit figure; ``draw()`` gives the PNG bytes."""
    found = [
        (
            f"Largest weights held, {outcome.held}",
            TOP_WEIGHTS_FILE,
            partial(plots.top_weights_png, outcome),
        )
    ]
    if outcome.risk is not None:
        found.append(
            (
                f"Contributions to the expected tracking error, {outcome.held}",
                ex_ante.FIGURE_FILE,
                partial(ex_ante.ex_ante_png, outcome),
            )
        )
    for model in outcome.study.models:
        if model.cv is not None:
            stem = re.sub(r"[^A-Za-z0-9_-]", "_", model.name)
            found.append(
                (
                    f"Cross-validation error, {model.name}",
                    f"cv_{stem}.png",
                    partial(plots.cv_curve_png, model),
                )
            )
    return found
