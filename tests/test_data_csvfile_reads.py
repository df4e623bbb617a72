"""The quick read of a wide CSV file gives the careful read's table, bit for bit, or declines."""

from __future__ import annotations

import numpy as np
import pytest

from trackfit.data import csvfile
from trackfit.errors import DataError


def _write(tmp_path, text):
    path = tmp_path / "series.csv"
    path.write_text(text, encoding="utf-8")
    return path


def _both(path, date_format=None):
    """Both reads; where the careful read raises, the quick read must decline or raise the same."""
    args = (path, "date", date_format, path.name)
    try:
        careful = csvfile._read_texts(*args)
    except DataError as err:
        try:
            quick = csvfile._read_numbers(*args)
        except DataError as same:
            assert str(same) == str(err)
        else:
            assert quick is None
        return None, None
    return csvfile._read_numbers(*args), careful


def _outcome(table, column):
    try:
        return table.numbers(column).view(np.int64).tolist()  # the bits, NaN payload included
    except DataError as err:
        return str(err)


def _assert_same(quick, careful):
    assert quick.columns == careful.columns
    np.testing.assert_array_equal(quick.dates, careful.dates)
    np.testing.assert_array_equal(quick.lines, careful.lines)
    for column in careful.columns:
        got, want = _outcome(quick, column), _outcome(careful, column)
        if isinstance(
            want, list
        ):  # NaN bits may differ; where the careful read has NaN, so must we
            want_nan = np.isnan(careful.numbers(column))
            np.testing.assert_array_equal(np.isnan(quick.numbers(column)), want_nan)
            got = [g for g, nan in zip(got, want_nan) if not nan]
            want = [w for w, nan in zip(want, want_nan) if not nan]
        assert got == want, column


def test_plain_file_is_served_quickly_with_correctly_rounded_values(tmp_path):
    rng = np.random.default_rng(7)
    values = rng.normal(0, 1, (40, 6)) * 10.0 ** rng.integers(-9, 9, (40, 6))
    texts = [[f"{v:.{int(rng.integers(0, 18))}g}" for v in row] for row in values]
    rows = [f"2020-01-{(i % 28) + 1:02d}" if i < 28 else f"2020-02-{i - 27:02d}" for i in range(40)]
    lines = ["date," + ",".join(f"s{j}" for j in range(6))]
    lines += [d + "," + ",".join(t) for d, t in zip(rows, texts)]
    path = _write(tmp_path, "\n".join(lines) + "\n")
    quick, careful = _both(path)
    assert quick is not None and quick.cells is None and careful.values is None
    _assert_same(quick, careful)
    # Python's float() rounds correctly (Python docs, "float": IEEE 754 round-half-even);
    # pandas' converter agrees on these texts.
    for j in range(6):
        np.testing.assert_array_equal(quick.numbers(f"s{j}"), [float(t[j]) for t in texts])
    assert not quick.numbers("s0").flags.writeable  # the table is frozen, its numbers too


# Every cell text a file might hold next to plain numbers; "kind" says whether the quick read
# may serve such a file (True), must decline it (False) or either (None).
CELLS = [
    ("1.5", True),
    (" 2.5 ", True),
    ("+3", True),
    ("007", True),
    ("1e5", True),
    ("1.", True),
    (".5", True),
    ("", True),
    ("NA", True),
    ("N/A", True),
    ("#N/A", True),
    ("NaN", True),
    ("nan", True),
    ("0", None),
    ("0.0", None),
    ("-0.0", False),
    ("-0", None),
    ("-00", None),
    ("inf", False),
    ("-Infinity", False),
    ("1e400", False),
    ("9007199254740993", False),
    ("18446744073709551615", False),
    ("NAN", False),
    ("-nan", False),
    (" NA ", False),
    ("null", False),
    ("True", False),
    ("1,5", False),
    ('"1,5"', False),
    ("0x10", False),
    ("1_000", False),
    ("abc", False),
    ("\u00a01.5", False),
    ("1d5", False),
    ("-", False),
]


@pytest.mark.parametrize(("cell", "kind"), CELLS, ids=[repr(c[0]) for c in CELLS])
@pytest.mark.parametrize("other", ["1.25", "3", "NA", "-0"])
def test_every_cell_reads_as_the_careful_read_has_it(tmp_path, cell, kind, other):
    path = _write(tmp_path, f"date,a,b\n2020-01-02,{cell},4\n2020-01-01,{other},5\n")
    quick, careful = _both(path)
    if quick is not None:
        _assert_same(quick, careful)
    if other in ("1.25", "3") and kind is not None:
        assert (quick is not None) is kind


FILES = [
    ("blank line", "date,a\n2020-01-01,1\n\n2020-01-02,2\n", False),
    ("blank line at the end", "date,a\n2020-01-01,1\n2020-01-02,2\n\n", False),
    ("notes column", "date,a,notes\n2020-01-01,1,holiday\n2020-01-02,2,\n", False),
    ("short row", "date,a,b\n2020-01-01,1,2\n2020-01-02,3\n", True),
    ("short row without a date", "a,b,date\n1,2,2020-01-01\n3,4\n", False),
    ("whole numbers and a zero", "date,a\n2020-01-01,0\n2020-01-02,3\n", False),
    ("long row", "date,a\n2020-01-01,1,2\n2020-01-02,3,4\n", False),
    ("byte order mark", "\ufeffdate,a\n2020-01-01,NA\n2020-01-02,1.5e-2\n", True),
    ("spaces in the header", "date, zeta ,alpha\n2020-01-03,3,30\n2020-01-01,1,10\n", True),
    ("quoted header", '"date","a, b"\n2020-01-01,1\n', True),
    ("date last", "a,date\n1,2020-01-02\n2,2020-01-01\n", True),
    ("padded dates", "date,a\n 2020-01-02 ,1\n2020-01-01,2\n", True),
]


@pytest.mark.parametrize(("text", "served"), [f[1:] for f in FILES], ids=[f[0] for f in FILES])
def test_whole_files(tmp_path, text, served):
    quick, careful = _both(_write(tmp_path, text))
    assert (quick is not None) is served
    if quick is not None:
        _assert_same(quick, careful)


def test_dates_that_look_like_numbers(tmp_path):
    path = _write(tmp_path, "date,a\n20200102,1\n20191231,2\n")
    quick, careful = _both(path, "%Y%m%d")
    assert quick is not None
    _assert_same(quick, careful)


def test_errors_found_by_the_quick_read_are_the_careful_reads(tmp_path):
    for text in ("date,a\n2020-01-01,1\n2020-1-2,2\n", "date,a\n2020-01-01,1\n2020-01-01,2\n"):
        path = _write(tmp_path, text)
        with pytest.raises(DataError) as quick:
            csvfile._read_numbers(path, "date", None, "series.csv")
        with pytest.raises(DataError) as careful:
            csvfile._read_texts(path, "date", None, "series.csv")
        assert str(quick.value) == str(careful.value)
