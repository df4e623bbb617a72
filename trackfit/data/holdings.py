"""Read the current holdings: the weights held now, one name per row.

The file is either the ``weights.csv`` that ``trackfit fit`` writes (header ``name,weight``, one
row per constituent, a last row ``(cash),<cash>``) or any two-column CSV with a header row:
names in the first column, decimal weights (0.05 = 5 %) in the second, header names free.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from datetime import date
from pathlib import Path

import numpy as np

from trackfit.data.csvrows import read_rows
from trackfit.errors import DataError

#: Name of the cash row in the weights.csv trackfit writes (see trackfit.report.held).
CASH_ROW = "(cash)"
#: Absolute weights adding up to more than this are taken for percentages.
PERCENT_SUSPECT = 5.0

_NUMBER = re.compile(r"[-+]?(\d+(\.\d*)?|\.\d+)([eE][-+]?\d+)?")
_NON_FINITE = re.compile(r"[-+]?(nan|inf|infinity)", re.IGNORECASE)


@dataclass(frozen=True, eq=False)
class HoldingsDrift:
    """How the file's weights were carried to the as-of date by the returns since their date.

    Attributes
    ----------
    date : date
        ``holdings.date``: the date the file's weights are as of.
    start : date
        The data date the drift starts from: ``date`` itself, or the last data date before it.
    end : date
        The as-of date the weights were drifted to.
    periods : int
        Return dates after ``start`` up to and including ``end``.
    file_weights : ndarray of shape (n_names,)
        The weights as the file gives them, aligned with ``CurrentHoldings.names``.
    file_cash : float
        ``1 - sum(file_weights)``.
    kept : tuple of str
        Held names with no return series in the data, kept at their weight (no growth).
    """

    date: date
    start: date
    end: date
    periods: int
    file_weights: np.ndarray
    file_cash: float
    kept: tuple[str, ...] = ()


@dataclass(frozen=True, eq=False)
class CurrentHoldings:
    """The weights held now, as the holdings file gives them.

    Attributes
    ----------
    names : tuple of str
        Names in file order, without the cash row.
    weights : ndarray of shape (n_names,)
        Decimal weights (0.05 = 5 %), aligned with ``names``.
    cash : float or None
        The ``(cash)`` row's weight, None when the file has no such row; once drifted,
        ``1 - sum(weights)``.
    drift : HoldingsDrift or None
        Set when ``weights`` are the file's weights drifted to the as-of date.
    """

    names: tuple[str, ...]
    weights: np.ndarray
    cash: float | None
    drift: HoldingsDrift | None = None


def read_holdings(
    path: Path,
    *,
    label: str | None = None,
    what: str = "holdings file",
    key: str | None = "holdings.file",
) -> CurrentHoldings:
    """Read a holdings file.

    Parameters
    ----------
    path : Path
        The CSV file (UTF-8, comma-separated, a header row, then one row per name).
    label : str or None
        How messages name the file; None = ``str(path)``.

    Returns
    -------
    CurrentHoldings

    Raises
    ------
    DataError
        The file is missing, unreadable or empty; a row has other than two fields; a name is
        blank or given twice; a weight is missing, not a number or not finite; or the weights
        are so large that they must be percentages.
    """
    label = str(path) if label is None else label
    rows = read_rows(path, label, what=what, key=key)
    if not rows:
        raise DataError(
            f"{label}: the {what} is empty; expected a header line "
            "(such as name,weight), then one line per name held"
        )
    (header_line, header), body = rows[0], rows[1:]
    _check_width(header_line, header, label, what)
    if _NUMBER.fullmatch(header[1]):
        raise DataError(
            f"{label}: line {header_line}: the first line ({','.join(header)}) looks "
            "like data, not a header; add a header line such as name,weight"
        )
    if not body:
        raise DataError(
            f"{label}: the {what} has a header but no rows; add one line per "
            f"name held (a portfolio all in cash is one row: {CASH_ROW},1)"
        )
    names: list[str] = []
    weights: list[float] = []
    first: dict[str, int] = {}
    cash = None
    for line, fields in body:
        _check_width(line, fields, label, what)
        name, text = fields
        if not name:
            raise DataError(f"{label}: line {line}: the name is blank; give every row a name")
        if name in first:
            raise DataError(
                f"{label}: {name!r} appears twice (lines {first[name]} and {line}); "
                "give each name one row"
            )
        first[name] = line
        weight = _weight(text, name, line, label)
        if name == CASH_ROW:
            cash = weight
        else:
            names.append(name)
            weights.append(weight)
    values = np.array(weights, dtype=np.float64)
    gross = float(np.abs(values).sum())
    if gross > PERCENT_SUSPECT:
        raise DataError(
            f"{label}: the weights add up to {gross:g} in absolute value; weights "
            "must be decimals (0.05 = 5 %), and these look like percentages; divide "
            "them by 100"
        )
    return CurrentHoldings(names=tuple(names), weights=values, cash=cash)


def _check_width(line: int, fields: list[str], label: str, what: str) -> None:
    if len(fields) != 2:
        raise DataError(
            f"{label}: line {line} has {len(fields)} field(s); a {what} has "
            "exactly two columns: the name, then its weight"
        )


def _weight(text: str, name: str, line: int, label: str) -> float:
    where = f"{label}: line {line}: the weight of {name!r}"
    if not text:
        raise DataError(f"{where} is missing; write 0 for a name not held, or remove the row")
    if _NON_FINITE.fullmatch(text):
        raise DataError(f"{where} is {text!r}, not a finite number; write the weight held")
    if not _NUMBER.fullmatch(text):
        hint = (
            " (weights are decimals: write 0.05 for 5 %)"
            if text.endswith("%")
            else "; write a plain number with '.' as the decimal separator"
        )
        raise DataError(f"{where} is {text!r}, not a number{hint}")
    value = float(text)
    if not math.isfinite(value):  # such as 1e999
        raise DataError(f"{where} is {text!r}, not a finite number; write the weight held")
    return value
