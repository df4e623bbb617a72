"""A small job on disk: six invented names, a benchmark that holds known weights of them.

Shared by the backtest run-layer tests and the backtest command-line tests.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

NAMES = ("a", "b", "c", "d", "e", "f")
#: The benchmark the seeded data are built from: these weights plus small noise.
TRUE_WEIGHTS = np.array([0.4, 0.3, 0.2, 0.0, 0.0, 0.1])

JOB = """\
name: small backtest
benchmark: {file: index.csv, column: idx}
constituents: [{file: members.csv}]
window: {lookback: 120}
models: {lasso: {}}
penalty_grid: {count: 10}
cross_validation: {folds: 3}
backtest: {every: month_end, start: 2025-07-31, cost_bps: 5}
"""


def write_small_job(
    folder: Path, job_text: str = JOB, n: int = 300, seed: int = 7, shift_after: str | None = None
) -> Path:
    """Daily returns of six names and a benchmark that holds TRUE_WEIGHTS of them.

    ``shift_after``: returns on dates after it are replaced by other seeded values.
    """
    rng = np.random.default_rng(seed)
    dates = np.busday_offset("2025-01-01", np.arange(n), roll="forward")
    X = rng.normal(0.0, 0.01, size=(n, len(NAMES)))
    y = X @ TRUE_WEIGHTS + rng.normal(0.0, 0.001, size=n)
    if shift_after is not None:
        later = dates > np.datetime64(shift_after)
        other = np.random.default_rng(seed + 1)
        X[later] = other.normal(0.0, 0.02, size=(int(later.sum()), len(NAMES)))
        y[later] = other.normal(0.0, 0.02, size=int(later.sum()))
    index = ["date,idx"] + [f"{d},{v:.8f}" for d, v in zip(dates, y)]
    members = ["date," + ",".join(NAMES)] + [
        f"{d}," + ",".join(f"{v:.8f}" for v in row) for d, row in zip(dates, X)
    ]
    (folder / "index.csv").write_text("\n".join(index) + "\n")
    (folder / "members.csv").write_text("\n".join(members) + "\n")
    job = folder / "job.yaml"
    job.write_text(job_text)
    return job
