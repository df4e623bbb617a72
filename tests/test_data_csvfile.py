"""Reading one wide CSV file: header, dates, numbers and every error message."""

from __future__ import annotations

import re

import numpy as np
import pytest

from trackfit.data.csvfile import read_wide_csv
from trackfit.errors import DataError


def _write(tmp_path, text, name="prices.csv", encoding="utf-8"):
    path = tmp_path / name
    path.write_bytes(text.encode(encoding) if isinstance(text, str) else text)
    return path


def _read(path, date_column="date", date_format=None):
    return read_wide_csv(path, date_column=date_column, date_format=date_format, label=path.name)


def test_reads_sorts_and_keeps_file_order_of_columns(tmp_path):
    path = _write(
        tmp_path,
        "date, zeta ,alpha\n2020-01-03,3,30\n2020-01-01,1,10\n\n2020-01-02,,20\n",
    )
    table = _read(path)
    assert table.columns == ("zeta", "alpha")  # header names stripped, file order kept
    np.testing.assert_array_equal(
        table.dates, np.array(["2020-01-01", "2020-01-02", "2020-01-03"], dtype="datetime64[D]")
    )
    assert table.dates.dtype == np.dtype("datetime64[D]")
    np.testing.assert_array_equal(table.numbers("alpha"), [10.0, 20.0, 30.0])
    zeta = table.numbers("zeta")
    assert zeta.dtype == np.float64
    assert zeta[0] == 1.0 and np.isnan(zeta[1]) and zeta[2] == 3.0  # empty cell -> NaN
    # line numbers follow the file even across the blank line and the sort
    np.testing.assert_array_equal(table.lines, [3, 5, 2])


def test_missing_markers_and_byte_order_mark(tmp_path):
    path = _write(tmp_path, "\ufeffdate,a\n2020-01-01,NA\n2020-01-02,#N/A\n2020-01-03,1.5e-2\n")
    values = _read(path).numbers("a")
    assert np.isnan(values[:2]).all() and values[2] == 0.015


def test_date_format(tmp_path):
    path = _write(tmp_path, "day,a\n02/01/2020,1\n31/12/2019,2\n")
    table = _read(path, date_column="day", date_format="%d/%m/%Y")
    np.testing.assert_array_equal(
        table.dates, np.array(["2019-12-31", "2020-01-02"], dtype="datetime64[D]")
    )
    np.testing.assert_array_equal(table.numbers("a"), [2.0, 1.0])


def test_unused_text_column_is_not_an_error_until_asked_for(tmp_path):
    path = _write(tmp_path, "date,a,notes\n2020-01-01,1,holiday\n2020-01-02,2,\n")
    table = _read(path)
    np.testing.assert_array_equal(table.numbers("a"), [1.0, 2.0])
    with pytest.raises(DataError, match=re.escape("column 'notes', line 2 (date 2020-01-01)")):
        table.numbers("notes")


def test_close_matches_for_a_missing_column(tmp_path):
    table = _read(_write(tmp_path, "date,kestrel_minerals,tern_docks\n2020-01-01,1,2\n"))
    table.require("tern_docks", "constituents[0].columns")
    with pytest.raises(DataError, match=re.escape("close matches: 'kestrel_minerals'")):
        table.require("kestrel_mineral", "constituents[0].columns")
    with pytest.raises(DataError, match=re.escape("columns found: 'kestrel_minerals', 'tern")):
        table.require("zzz", "benchmark.column")


SEVEN_REPEATS = "date,a\n" + "".join(f"2020-01-0{d},1\n2020-01-0{d},2\n" for d in range(1, 8))

READ_ERRORS = [
    ("empty", "", "the file is empty"),
    ("header only", "date,a\n", "the file has a header but no data rows"),
    ("no date column", "day,a\n2020-01-01,1\n", "no date column 'date'; columns found: 'day', 'a'"),
    ("blank header", "date,,b\n2020-01-01,1,2\n", "column 2 of the header has no name"),
    ("repeated header", "date,a,a\n2020-01-01,1,2\n", "column name 'a' appears more than once"),
    ("ragged", "date,a\n2020-01-01,1\n2020-01-02,1,2\n", "not a well-formed CSV file"),
    ("slashes", "date,a\n2020-01-01,1\n2020/01/02,2\n", "line 3: cannot read date '2020/01/02'"),
    ("no padding", "date,a\n2020-1-2,1\n", "line 2: cannot read date '2020-1-2'"),
    ("no such day", "date,a\n2020-02-30,1\n", "cannot read date '2020-02-30' in column 'date'"),
    ("blank date", "date,a\n2020-01-01,1\n,2\n", "line 3: cannot read date ''"),
    ("count", "date,a\nx,1\ny,2\n", "(2 unreadable dates in all); expected ISO 8601"),
    (
        "repeats",
        "date,a\n2020-01-02,1\n2020-01-01,1\n2020-01-02,2\n",
        "1 date(s) appear more than once: 2020-01-02; keep one row per date",
    ),
    (
        "many repeats",
        SEVEN_REPEATS,
        "7 date(s) appear more than once: 2020-01-01, 2020-01-02, 2020-01-03, 2020-01-04, "
        "2020-01-05, ...;",
    ),
]


@pytest.mark.parametrize(
    ("text", "match"), [c[1:] for c in READ_ERRORS], ids=[c[0] for c in READ_ERRORS]
)
def test_read_errors(tmp_path, text, match):
    path = _write(tmp_path, text)
    with pytest.raises(DataError, match=re.escape(match)) as info:
        _read(path)
    assert str(info.value).startswith("prices.csv: ")  # every message names the file


def test_date_format_mismatch(tmp_path):
    path = _write(tmp_path, "date,a\n2020-01-02,1\n")
    with pytest.raises(DataError, match=re.escape("expected dates in data.date_format '%d/%m/%Y'")):
        _read(path, date_format="%d/%m/%Y")
    with pytest.raises(DataError, match=re.escape("data.date_format '%Q' is not a usable")):
        _read(path, date_format="%Q")


def test_date_format_with_time_zone_keeps_the_local_date(tmp_path):
    path = _write(tmp_path, "date,a\n2020-01-02 23:30 +0100,1\n2020-01-03 00:30 +0100,2\n")
    table = _read(path, date_format="%Y-%m-%d %H:%M %z")
    np.testing.assert_array_equal(
        table.dates, np.array(["2020-01-02", "2020-01-03"], dtype="datetime64[D]")
    )


NUMBER_ERRORS = [
    (
        "word",
        "date,a\n2020-01-01,1\n2020-01-02,abc\n",
        "column 'a', line 3 (date 2020-01-02): 'abc' is not a number;",
    ),
    ("comma decimal", 'date,a\n2020-01-01,"1,5"\n', "'1,5' is not a number"),
    ("count", "date,a\n2020-01-01,x\n2020-01-02,y\n", "(2 such cells in the column)"),
]


@pytest.mark.parametrize(
    ("text", "match"), [c[1:] for c in NUMBER_ERRORS], ids=[c[0] for c in NUMBER_ERRORS]
)
def test_number_errors(tmp_path, text, match):
    table = _read(_write(tmp_path, text))
    with pytest.raises(DataError, match=re.escape(match)):
        table.numbers("a")


def test_file_errors(tmp_path):
    with pytest.raises(DataError, match=r"nope\.csv: the data file does not exist \(.*nope\.csv\)"):
        _read(tmp_path / "nope.csv")
    (tmp_path / "folder.csv").mkdir()
    with pytest.raises(DataError, match=re.escape("folder.csv: the data file is a folder")):
        _read(tmp_path / "folder.csv")
    latin = _write(tmp_path, "date,caf\xe9\n2020-01-01,1\n", encoding="latin-1")
    with pytest.raises(DataError, match=re.escape("prices.csv: not UTF-8 text")):
        _read(latin)
