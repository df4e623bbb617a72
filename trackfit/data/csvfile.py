"""Read one wide CSV file: a date column plus one column per series.

Dates are parsed and checked at once; a column's numbers are checked only when a job asks for
it (so a notes column nobody uses cannot break a run). Two reads give the same table:

- the quick read parses every series cell straight to float64 in pandas' C reader. It serves a
  file only when every cell is a plain finite number or a missing marker and every row has a
  date, and declines (returns None) at anything else;
- the careful read keeps every cell as stripped text and converts a column when asked; it
  serves the files the quick read declines and words every error.

Both turn text into numbers with the same converter (pandas' ``precise_xstrtod``, behind
``read_csv`` and ``to_numeric`` alike), so a file the quick read takes gives the same bits
either way (``tests/test_data_csvfile_reads.py`` checks the two on the same files). The careful
read alone took 15-20 times as long as ``pandas.read_csv`` on wide files, most of it in
stripping and converting cells one column at a time (benchmarks/README.md).
"""

from __future__ import annotations

import csv
import difflib
import re
from collections import Counter
from dataclasses import dataclass
from functools import cached_property
from pathlib import Path
from typing import TYPE_CHECKING

import numpy as np

from trackfit.errors import DataError

if TYPE_CHECKING:  # pandas loads on the first read, so commands that read nothing start fast
    import pandas as pd

#: Cell texts read as a missing value. Anything else that is not a number is an error.
MISSING_TOKENS = frozenset({"", "NA", "N/A", "#N/A", "NaN", "nan"})

_ISO_DATE = re.compile(r"\d{4}-\d{2}-\d{2}")
_MAX_LISTED = 5

# Both readers take a column of integer texts as int64 first, each by its own rules (pandas'
# C reader even with missing markers among them, to_numeric only without); where the choice
# could change a value (integers from 2**53 up round differently; "-0" keeps its sign only as a
# float) the quick read declines, as it does for infinities.
_EXACT_INTEGERS = 2.0**53

_READ_OPTIONS = {"skip_blank_lines": False, "encoding": "utf-8-sig"}


@dataclass(frozen=True, eq=False)
class WideTable:
    """One wide CSV file, rows sorted by date: its numbers (quick read) or its texts (careful).

    Attributes
    ----------
    path : Path
        Absolute path of the file.
    label : str
        How messages name the file.
    dates : ndarray of datetime64[D], shape (n_rows,)
        Strictly increasing dates.
    columns : tuple of str
        The non-date column names, in file order.
    lines : ndarray of int, shape (n_rows,)
        Line number in the file of each row (the header is line 1).
    values : ndarray of shape (n_rows, n_columns) or None
        Read-only float64 cell values (NaN where missing), rows in ``dates`` order, columns as
        ``columns``, from the quick read; None after the careful read.
    cells : DataFrame of shape (n_rows, n_columns) or None
        Stripped cell texts, laid out as ``values``, from the careful read; None after the
        quick read.
    """

    path: Path
    label: str
    dates: np.ndarray
    columns: tuple[str, ...]
    lines: np.ndarray
    values: np.ndarray | None = None
    cells: pd.DataFrame | None = None

    @cached_property
    def _positions(self) -> dict[str, int]:
        # tuple.index on every call made reading 2,000 columns quadratic (46 ms)
        return {name: j for j, name in enumerate(self.columns)}

    def require(self, column: str, key: str) -> None:
        """Raise DataError unless ``column`` is in the file; ``key`` is the job key naming it."""
        if column in self.columns:
            return
        close = difflib.get_close_matches(column, self.columns, n=3, cutoff=0.6)
        missing, found, where = self._words(column)
        hint = (
            f"close matches: {quoted(close)}"
            if close
            else f"{found} found: {quoted(self.columns, limit=12)}"
        )
        raise DataError(
            f"{self.label}: {missing} (named by {key}); {hint}; "
            f"fix the name in the job file or {where}"
        )

    def _words(self, column: str) -> tuple[str, str, str]:
        """For :meth:`require`: the missing series in words, what the file's series are called,
        and where the file writes their names."""
        return f"no column {column!r}", "columns", "the file's header"

    def numbers(self, column: str) -> np.ndarray:
        """Column ``column`` as float64 of shape (n_rows,), NaN where a cell is missing.

        After the quick read this is a read-only view of ``values``; after the careful read a
        new array, and a cell that is neither a number nor a missing marker raises DataError.
        """
        if self.values is not None:
            return self.values[:, self._positions[column]]
        text = self.cells[column]
        values, bad = cells_to_numbers(text)
        if bad.size:
            i = bad[0]
            more = f" ({bad.size} such cells in the column)" if bad.size > 1 else ""
            raise DataError(
                f"{self.label}: column {column!r}, line {self.lines[i]} (date "
                f"{self.dates[i]}): {text.iloc[i]!r} is not a number{more}; write plain numbers "
                "with '.' as the decimal separator, or leave the cell empty for a missing value"
            )
        return values


def cells_to_numbers(text) -> tuple[np.ndarray, np.ndarray]:
    """Cells of text as float64 (missing markers as NaN), and the positions of the cells that
    are neither a number nor a missing marker.

    Parameters
    ----------
    text : pandas.Series of str

    Returns
    -------
    values : ndarray of shape (n_cells,)
    bad : ndarray of int
    """
    import pandas as pd

    values = pd.to_numeric(text, errors="coerce").to_numpy(dtype=np.float64)
    missing = text.isin(MISSING_TOKENS).to_numpy()
    bad = np.flatnonzero(np.isnan(values) & ~missing)
    return np.where(missing, np.nan, values), bad


def read_wide_csv(
    path: Path, *, date_column: str, date_format: str | None, label: str
) -> WideTable:
    """Read a wide CSV file and check its header and dates.

    Parameters
    ----------
    path : Path
        File to read (UTF-8, comma-separated, header on the first line).
    date_column : str
        Name of the date column.
    date_format : str or None
        strptime-style format of the dates; None means ISO 8601 ``YYYY-MM-DD``.
    label : str
        How messages name the file.

    Returns
    -------
    WideTable

    Raises
    ------
    DataError
        File missing or unreadable, empty, malformed, no date column, blank or repeated
        column names, an unreadable date, or a date given twice.
    """
    check_file(path, label)
    quick = _read_numbers(path, date_column, date_format, label)
    return quick if quick is not None else _read_texts(path, date_column, date_format, label)


def check_file(path: Path, label: str) -> None:
    if not path.is_file():
        what = "is a folder, not a file" if path.is_dir() else "does not exist"
        raise DataError(
            f"{label}: the data file {what} ({path}); check the file path in the job file "
            "(relative paths start from the job file's folder)"
        )


def _read_numbers(
    path: Path, date_column: str, date_format: str | None, label: str
) -> WideTable | None:
    """The quick read (see the module docstring), or None where the careful read must serve."""
    import pandas as pd

    try:
        with open(path, encoding=_READ_OPTIONS["encoding"], newline="") as f:
            raw = next(csv.reader(f), [])
        header = [name.strip() for name in raw]
        if date_column not in header or not all(header) or len(set(header)) < len(header):
            return None
        date_name = raw[header.index(date_column)]
        # Left to infer, a series column comes out int64 or float64 when every cell is a number
        # or a marker: naming any dtype made pandas take 1.3-1.7 times as long. Dates read as
        # text, unless they look like numbers (20200102): then the date column is named.
        body = _read_inferred(pd, path, None)
        if body[date_name].dtype.kind != "O":
            body = _read_inferred(pd, path, {date_name: object})
    except (ValueError, TypeError, OSError, csv.Error):  # not plain numbers, or unreadable
        return None
    # The names must be the header the careful read sees, and a row with one field too many
    # must not have been taken as an index column.
    if list(body.columns) != raw or not isinstance(body.index, pd.RangeIndex) or body.empty:
        return None
    text = body.pop(date_name).to_numpy()
    if not all(dtype.kind in "if" for dtype in body.dtypes):  # text, or True/False read as bool
        return None
    if not all(isinstance(t, str) for t in text):  # a blank line, or a row with no date cell
        return None
    text = [t.strip() for t in text]
    if not all(text):
        return None
    values = body.to_numpy(dtype=np.float64)
    if np.any(np.abs(values) >= _EXACT_INTEGERS):
        return None  # also infinities, which the two readers spell differently
    if _zero_sign_unsure(values):
        return None
    lines = np.arange(2, len(text) + 2)
    dates = parse_dates(pd.Series(text, dtype=str), lines, date_format, label, date_column)
    check_unique(dates, label)
    order = np.argsort(dates, kind="stable")
    if np.any(order != np.arange(len(order))):
        values, lines = values[order], lines[order]
        dates = dates[order]
    values = np.asfortranarray(values)  # column-major: each series is contiguous
    values.flags.writeable = False
    return WideTable(
        path=path,
        label=label,
        dates=dates,
        columns=tuple(name for name in header if name != date_column),
        lines=lines,
        values=values,
    )


def _zero_sign_unsure(values: np.ndarray) -> bool:
    """True when a zero of ``values`` (n_rows, n_columns) might have another sign in the careful
    read: a negative zero, or a zero in a column of whole numbers, which either reader may have
    taken as int64 (where "-0" is 0) and the other as float64 (where it is -0.0)."""
    zeros = values == 0.0
    if not zeros.any():
        return False
    if np.signbit(values[zeros]).any():
        return True
    suspect = values[:, zeros.any(axis=0)]
    whole = (suspect == np.floor(suspect)) | np.isnan(suspect)
    return bool(whole.all(axis=0).any())


def _read_inferred(pd, path: Path, dtype: dict | None) -> pd.DataFrame:
    return pd.read_csv(
        path,
        header=0,
        dtype=dtype,
        na_values=sorted(MISSING_TOKENS),
        keep_default_na=False,
        **_READ_OPTIONS,
    )


def _read_texts(path: Path, date_column: str, date_format: str | None, label: str) -> WideTable:
    """The careful read: every cell kept as stripped text."""
    raw = read_text_table(path, label).fillna("").astype(str)
    header = [name.strip() for name in raw.iloc[0]]
    body = raw.iloc[1:].apply(lambda col: col.str.strip())
    lines = np.arange(2, len(raw) + 1)
    keep = (body != "").any(axis=1).to_numpy()  # blank lines are not rows
    body, lines = body[keep], lines[keep]
    check_header(header, label)
    if date_column not in header:
        raise DataError(
            f"{label}: no date column {date_column!r}; columns found: "
            f"{quoted(header, limit=12)}; set data.date_column to the name of the date column"
        )
    if body.empty:
        raise DataError(f"{label}: the file has a header but no data rows; add one row per date")
    body.columns = header
    dates = parse_dates(body[date_column], lines, date_format, label, date_column)
    check_unique(dates, label)
    order = np.argsort(dates, kind="stable")
    columns = tuple(name for name in header if name != date_column)
    cells = body[list(columns)].iloc[order].reset_index(drop=True)
    return WideTable(
        path=path,
        label=label,
        dates=dates[order],
        columns=columns,
        cells=cells,
        lines=lines[order],
    )


def read_text_table(path: Path, label: str) -> pd.DataFrame:
    import pandas as pd

    try:
        return pd.read_csv(path, header=None, dtype=str, na_filter=False, **_READ_OPTIONS)
    except pd.errors.EmptyDataError:
        raise DataError(
            f"{label}: the file is empty; expected a header line with a date column "
            "and one column per series, then one line per date"
        ) from None
    except pd.errors.ParserError as err:
        raise DataError(
            f"{label}: not a well-formed CSV file ({str(err).strip()}); every line needs "
            "as many comma-separated fields as the header"
        ) from None
    except UnicodeDecodeError as err:
        raise DataError(f"{label}: not UTF-8 text ({err.reason}); save it as UTF-8 CSV") from None
    except OSError as err:
        raise DataError(f"{label}: cannot read the file ({err.strerror})") from None


def check_header(header: list[str], label: str) -> None:
    blank = [i + 1 for i, name in enumerate(header) if not name]
    if blank:
        raise DataError(
            f"{label}: column {blank[0]} of the header has no name; give every column a name"
        )
    twice = sorted(name for name, count in Counter(header).items() if count > 1)
    if twice:
        raise DataError(
            f"{label}: column name {quoted(twice)} appears more than once in the header; "
            "column names must be unique"
        )


def parse_dates(
    text: pd.Series, lines: np.ndarray, date_format: str | None, label: str, column: str
) -> np.ndarray:
    import pandas as pd

    if date_format is None:
        parsed = pd.to_datetime(text, format="%Y-%m-%d", errors="coerce")
        # strptime also takes 2020-1-5; ISO 8601 wants two digits, so check the shape too
        bad = parsed.isna().to_numpy() | ~text.str.fullmatch(_ISO_DATE.pattern).to_numpy()
        expected = "ISO 8601 dates YYYY-MM-DD"
        fix = "write the date as YYYY-MM-DD, or set data.date_format to the format used"
    else:
        try:
            parsed = pd.to_datetime(text, format=date_format, errors="coerce")
        except ValueError as err:
            raise DataError(
                f"{label}: data.date_format {date_format!r} is not a usable date format ({err})"
            ) from None
        bad = parsed.isna().to_numpy()
        expected = f"dates in data.date_format {date_format!r}"
        fix = "fix the date, or change data.date_format"
    if bad.any():
        i = int(np.flatnonzero(bad)[0])
        count = int(bad.sum())
        more = f" ({count} unreadable dates in all)" if count > 1 else ""
        raise DataError(
            f"{label}: line {lines[i]}: cannot read date {text.iloc[i]!r} in column "
            f"{column!r}{more}; expected {expected}; {fix}"
        )
    if parsed.dt.tz is not None:  # a %z format: keep the local calendar date
        parsed = parsed.dt.tz_localize(None)
    return parsed.to_numpy().astype("datetime64[D]")


def check_unique(dates: np.ndarray, label: str) -> None:
    values, counts = np.unique(dates, return_counts=True)
    repeated = values[counts > 1]
    if repeated.size:
        shown = ", ".join(str(d) for d in repeated[:_MAX_LISTED])
        more = ", ..." if repeated.size > _MAX_LISTED else ""
        raise DataError(
            f"{label}: {repeated.size} date(s) appear more than once: {shown}{more}; "
            "keep one row per date"
        )


def quoted(names, limit: int | None = None) -> str:
    names = list(names)
    shown = ", ".join(repr(n) for n in names[:limit])
    if limit is not None and len(names) > limit:
        shown += f", ... ({len(names)} in all)"
    return shown
