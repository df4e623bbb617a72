"""Reader for the OR-Library index tracking files kept beside the repository.

The files (``shared/data/orlib-indtrack``, see its SOURCE.md) are whitespace-separated tokens:
N, T, then the index and then each of the N stocks as T + 1 price levels. Plain helpers, no
pytest, so any test can reuse them.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

#: The repository sits in <root>/main (or a CI clone), the shared data in <root>/shared.
DATA_DIR = Path(__file__).resolve().parents[2] / "shared" / "data" / "orlib-indtrack"


def orlib_path(name: str) -> Path | None:
    """Path of ``name`` (``"indtrack1"`` or ``"indtrack1.txt"``), or None when absent."""
    path = DATA_DIR / (name if name.endswith(".txt") else f"{name}.txt")
    return path if path.is_file() else None


def read_orlib(path: str | Path) -> tuple[np.ndarray, np.ndarray]:
    """Read one OR-Library index tracking file.

    Parameters
    ----------
    path : str or Path

    Returns
    -------
    index : ndarray of shape (T + 1,)
        Index levels.
    stocks : ndarray of shape (T + 1, N)
        Stock price levels, one column per stock in file order.
    """
    tokens = Path(path).read_text(encoding="ascii").split()
    n_stocks, n_periods = int(tokens[0]), int(tokens[1])
    values = np.array(tokens[2:], dtype=np.float64)
    expected = (n_stocks + 1) * (n_periods + 1)
    if values.size != expected:
        raise ValueError(
            f"{path}: expected {expected} values for N={n_stocks}, T={n_periods}; "
            f"found {values.size}"
        )
    series = values.reshape(n_stocks + 1, n_periods + 1)
    return series[0].copy(), np.ascontiguousarray(series[1:].T)
