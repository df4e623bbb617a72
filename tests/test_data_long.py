"""Long and Parquet sources: read to exactly the table a wide CSV file of the same data gives.

Ground truth is built here: invented series written once as wide CSV (the reader the rest of
the suite checks) and again long and/or as Parquet; every reader must give the same dates,
column order and bits. Parquet tests skip when pyarrow is absent.
"""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from trackfit.data.csvfile import read_wide_csv
from trackfit.data.longfile import LongTable
from trackfit.data.series import read_table
from trackfit.errors import DataError, JobError
from trackfit.job import load_job
from trackfit.jobfile.specs import FileLayout

ROOT = Path(__file__).resolve().parents[1]
LONG = FileLayout(kind="long")
OPTS = {"date_column": "date", "date_format": None}


def invented_wide(n_dates: int = 40, names=("cove_a", "reef_b", "tide_c")) -> pd.DataFrame:
    """Returns with ten decimals, as a desk export might write them."""
    rng = np.random.default_rng(7)
    dates = pd.bdate_range("2021-03-01", periods=n_dates).strftime("%Y-%m-%d")
    frame = pd.DataFrame(rng.normal(0, 0.01, (n_dates, len(names))).round(10), columns=names)
    frame.insert(0, "date", dates)
    return frame


def to_long(wide: pd.DataFrame, name="name", value="value") -> pd.DataFrame:
    """Date by date, names in the wide file's column order (so first appearance = that order)."""
    long = wide.melt(id_vars="date", var_name=name, value_name=value)
    order = np.lexsort((np.arange(len(long)) // len(wide), long["date"].to_numpy()))
    return long.iloc[order].reset_index(drop=True)


def write_csv(frame: pd.DataFrame, path: Path) -> Path:
    frame.to_csv(path, index=False, float_format="%.10f", lineterminator="\n")
    return path


def same_table(a, b):
    assert a.columns == b.columns
    np.testing.assert_array_equal(a.dates, b.dates)
    for c in a.columns:
        x, y = a.numbers(c), b.numbers(c)
        assert x.tobytes() == y.tobytes(), c  # bit for bit, NaN where missing


def wide_reference(tmp_path, frame):
    path = write_csv(frame, tmp_path / "wide.csv")
    return read_wide_csv(path, label="wide.csv", **OPTS)


# -- long CSV ------------------------------------------------------------------------------


def test_long_csv_pivots_to_the_wide_table(tmp_path):
    wide = invented_wide()
    path = write_csv(to_long(wide), tmp_path / "long.csv")
    table = read_table(path, LONG, label="long.csv", **OPTS)
    assert isinstance(table, LongTable)
    same_table(table, wide_reference(tmp_path, wide))


def test_long_csv_rows_in_any_order_give_sorted_dates_and_first_appearance_names(tmp_path):
    wide = invented_wide()
    long = to_long(wide).iloc[::-1]  # last date first, names reversed
    path = write_csv(long, tmp_path / "long.csv")
    table = read_table(path, LONG, label="long.csv", **OPTS)
    assert table.columns == ("tide_c", "reef_b", "cove_a")
    assert np.all(np.diff(table.dates.astype(np.int64)) > 0)
    ref = wide_reference(tmp_path, wide)
    for c in ref.columns:
        assert table.numbers(c).tobytes() == ref.numbers(c).tobytes()


def test_missing_pairs_are_missing_values_like_empty_wide_cells(tmp_path):
    wide = invented_wide()
    long = to_long(wide)
    dropped = long.drop(index=[4, 10])  # two (date, name) pairs absent
    holed = wide.astype(object)
    for i in (4, 10):
        row = long.loc[i]
        holed.loc[holed["date"] == row["date"], row["name"]] = ""
    table = read_table(write_csv(dropped, tmp_path / "long.csv"), LONG, label="l", **OPTS)
    ref = read_wide_csv(write_csv(holed, tmp_path / "holed.csv"), label="h", **OPTS)
    same_table(table, ref)
    assert np.isnan(table.values).sum() == 2


def test_long_csv_with_own_column_names_and_extra_columns(tmp_path):
    wide = invented_wide()
    long = to_long(wide, name="ticker", value="ret")
    long["note"] = "x"
    path = write_csv(long, tmp_path / "long.csv")
    layout = FileLayout(kind="long", name_column="ticker", value_column="ret")
    same_table(read_table(path, layout, label="l", **OPTS), wide_reference(tmp_path, wide))


LONG_CSV_ERRORS = [
    ("", "the file is empty; expected a header line with the columns 'date', 'name'"),
    ("date,name,value\n", "header but no data rows"),
    ("date,series,value\n2021-01-04,a,0.1\n", "no column 'name' in this long file"),
    ("date,name,amount\n2021-01-04,a,0.1\n", "no column 'value' in this long file"),
    ("day,name,value\n2021-01-04,a,0.1\n", "no column 'date'.*data.date_column"),
    (
        "date,name,value\n2021-01-04,a,0.1\n2021-01-05,a,0.2\n2021-01-04,a,0.3\n",
        r"date 2021-01-04 and name 'a' appear on both line 2 and line 4; keep one line",
    ),
    (
        "date,name,value\n2021-01-04,a,0.1\n2021-01-05,a,1,5\n",
        "not a well-formed CSV file",
    ),
    (
        "date,name,value\n2021-01-04,a,0.1\n2021-01-05,a,abc\n",
        r"line 3 \(date 2021-01-05, name 'a'\): 'abc' in column 'value' is not a number",
    ),
    ("date,name,value\n2021-01-04,,0.1\n", r"line 2 \(date 2021-01-04\) has no name"),
    ("date,name,value\n04/01/2021,a,0.1\n", "line 2: cannot read date '04/01/2021'"),
    ("date,name,name\n2021-01-04,a,b\n", "appears more than once in the header"),
]


@pytest.mark.parametrize(("text", "match"), LONG_CSV_ERRORS)
def test_long_csv_errors(tmp_path, text, match):
    path = tmp_path / "long.csv"
    path.write_text(text)
    with pytest.raises(DataError, match=match) as err:
        read_table(path, LONG, label="long.csv", **OPTS)
    assert str(err.value).startswith("long.csv: ")
    assert "\n" not in str(err.value)


def test_missing_long_file_is_named(tmp_path):
    with pytest.raises(DataError, match="long.csv: the data file does not exist"):
        read_table(tmp_path / "long.csv", LONG, label="long.csv", **OPTS)


def test_unknown_name_suggests_close_ones(tmp_path):
    path = write_csv(to_long(invented_wide()), tmp_path / "long.csv")
    table = read_table(path, LONG, label="long.csv", **OPTS)
    with pytest.raises(DataError, match=r"no series named 'cove_b' in column 'name' \(named by "):
        table.require("cove_b", "benchmark.column")


# -- Parquet -------------------------------------------------------------------------------


def parquet_frame(wide: pd.DataFrame, tmp_path) -> pd.DataFrame:
    """The numbers a wide CSV read gives (pandas' own parser), to write as Parquet."""
    return pd.read_csv(write_csv(wide, tmp_path / "for_parquet.csv"), dtype={"date": str})


@pytest.mark.parametrize("dates", ["text", "date", "timestamp", "timestamp_tz"])
@pytest.mark.parametrize("kind", ["wide", "long"])
def test_parquet_gives_the_wide_csv_table(tmp_path, kind, dates):
    pytest.importorskip("pyarrow")
    wide = invented_wide()
    frame = parquet_frame(wide, tmp_path)
    if kind == "long":
        frame = to_long(frame)
    if dates == "date":
        frame["date"] = pd.to_datetime(frame["date"]).dt.date
    elif dates == "timestamp":
        frame["date"] = pd.to_datetime(frame["date"])
    elif dates == "timestamp_tz":  # late evening in the file's own zone: that calendar date
        frame["date"] = (pd.to_datetime(frame["date"]) + pd.Timedelta(hours=23)).dt.tz_localize(
            "America/New_York"
        )
    path = tmp_path / "data.parquet"
    frame.to_parquet(path, index=False)
    layout = FileLayout(kind=kind, format="parquet")
    same_table(
        read_table(path, layout, label="data.parquet", **OPTS), wide_reference(tmp_path, wide)
    )


def test_parquet_integer_values_and_nulls(tmp_path):
    pytest.importorskip("pyarrow")
    frame = pd.DataFrame(
        {
            "date": ["2021-01-05", "2021-01-04"],
            "a": pd.array([1, None], dtype="Int64"),
            "note": ["x", "y"],
        }
    )
    path = tmp_path / "w.parquet"
    frame.to_parquet(path, index=False)
    table = read_table(path, FileLayout(format="parquet"), label="w.parquet", **OPTS)
    assert table.columns == ("a", "note")
    np.testing.assert_array_equal(table.numbers("a"), [np.nan, 1.0])
    # a text column fails only when asked for, as a wide CSV's notes column does
    with pytest.raises(
        DataError, match="w.parquet: column 'note' is stored as (large_)?string, not as numbers"
    ):
        table.numbers("note")


def _parquet(tmp_path, frame: pd.DataFrame) -> Path:
    path = tmp_path / "bad.parquet"
    frame.to_parquet(path, index=False)
    return path


PARQUET_ERRORS = [
    ("long", {"date": [], "name": [], "value": []}, "the file has no rows"),
    ("long", {"date": ["2021-01-04"], "name": ["a"]}, "no column 'value'; columns found"),
    ("long", {"date": ["2021-01-04"], "value": [0.1]}, "no column 'name'"),
    ("wide", {"day": ["2021-01-04"], "a": [0.1]}, "no column 'date'.*data.date_column"),
    (
        "long",
        {"date": ["2021-01-04", "2021-01-04"], "name": ["a", "a"], "value": [0.1, 0.2]},
        "date 2021-01-04 and name 'a' appear on both row 1 and row 2; keep one row",
    ),
    (
        "long",
        {"date": ["2021-01-04"], "name": ["a"], "value": ["0.1"]},
        "column 'value' is stored as (large_)?string, not as numbers",
    ),
    (
        "long",
        {"date": ["2021-01-04"], "name": [3], "value": [0.1]},
        "stored as int64; store the series names as text",
    ),
    (
        "long",
        {"date": ["2021-01-04", None], "name": ["a", "b"], "value": [0.1, 0.2]},
        "row 2 has no date",
    ),
    (
        "long",
        {"date": ["2021-01-04", "2021-01-05"], "name": ["a", None], "value": [0.1, 0.2]},
        r"row 2 \(date 2021-01-05\) has no name",
    ),
    (
        "wide",
        {"date": ["2021-01-04", "2021-1-05"], "a": [0.1, 0.2]},
        "line 2: cannot read date '2021-1-05'",
    ),
    ("wide", {"date": [20210104], "a": [0.1]}, "date column 'date' is stored as int64"),
    (
        "wide",
        {"date": ["2021-01-04", "2021-01-04"], "a": [0.1, 0.2]},
        "1 date.s. appear more than once: 2021-01-04",
    ),
]


@pytest.mark.parametrize(("kind", "columns", "match"), PARQUET_ERRORS)
def test_parquet_errors(tmp_path, kind, columns, match):
    pytest.importorskip("pyarrow")
    path = _parquet(tmp_path, pd.DataFrame(columns))
    with pytest.raises(DataError, match=match) as err:
        read_table(path, FileLayout(kind=kind, format="parquet"), label="bad.parquet", **OPTS)
    assert str(err.value).startswith("bad.parquet: ")


def test_a_file_that_is_not_parquet(tmp_path):
    pytest.importorskip("pyarrow")
    path = tmp_path / "x.parquet"
    path.write_text("date,a\n2021-01-04,0.1\n")
    with pytest.raises(DataError, match=r"x.parquet: not a readable Parquet file \(.*format: csv"):
        read_table(path, FileLayout(format="parquet"), label="x.parquet", **OPTS)


def test_without_pyarrow_a_parquet_source_says_how_to_install_it(tmp_path, monkeypatch):
    # None in sys.modules makes `import pyarrow` raise ImportError, as when it is not installed.
    monkeypatch.setitem(sys.modules, "pyarrow", None)
    monkeypatch.setitem(sys.modules, "pyarrow.parquet", None)
    path = tmp_path / "x.parquet"
    path.write_bytes(b"PAR1")
    with pytest.raises(
        DataError,
        match=r"^x.parquet: reading Parquet files needs pyarrow.*pip install 'trackfit\[parquet\]'",
    ):
        read_table(path, FileLayout(format="parquet"), label="x.parquet", **OPTS)


def test_the_command_line_does_not_load_pyarrow():
    code = "import trackfit.cli, trackfit.data.load, sys; print('pyarrow' in sys.modules)"
    done = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True)
    assert done.stdout.strip() == "False", done.stderr


# -- job keys ------------------------------------------------------------------------------


def _job(tmp_path, text: str):
    path = tmp_path / "job.yaml"
    path.write_text(text)
    return load_job(path)


def test_layout_keys_and_format_from_the_suffix(tmp_path):
    job = _job(
        tmp_path,
        "benchmark: {file: b.csv, column: x, layout: long, name_column: ticker}\n"
        "constituents:\n"
        "  - {file: m.parquet}\n"
        "  - {file: n.PQ, layout: long, value_column: ret}\n"
        "  - {file: o.dat, format: parquet}\n"
        "risk_free: {file: r.txt, layout: long, format: csv}\n",
    )
    assert job.benchmark.layout == FileLayout("long", "csv", "ticker", "value")
    assert [s.layout for s in job.constituents] == [
        FileLayout("wide", "parquet"),
        FileLayout("long", "parquet", "name", "ret"),
        FileLayout("wide", "parquet"),
    ]
    assert job.risk_free.layout == FileLayout("long", "csv")


BC = "benchmark: {file: b.csv}\n"
JOB_ERRORS = [
    (
        "benchmark: {file: b.csv, layuot: long}\nconstituents: {file: m.csv}\n",
        "unknown key 'benchmark.layuot'; did you mean 'layout'?",
    ),
    (
        BC + "constituents: {file: m.csv, name_colum: t}\n",
        "unknown key 'constituents.name_colum'; did you mean 'name_column'?",
    ),
    (
        BC + "constituents: [{file: m.csv, layout: tall}]\n",
        "'constituents\\[0\\].layout' must be one of 'wide', 'long'; got 'tall'",
    ),
    (
        BC + "constituents: [{file: m.csv, format: xlsx}]\n",
        "'constituents\\[0\\].format' must be one of 'csv', 'parquet'; got 'xlsx'",
    ),
    (
        BC + "constituents: [{file: m.csv, name_column: t}]\n",
        "'constituents\\[0\\].name_column' applies only with 'constituents\\[0\\].layout: long'",
    ),
    (
        BC + "constituents: [{file: m.csv}]\nrisk_free: {file: r.csv, value_column: v}\n",
        "'risk_free.value_column' applies only with 'risk_free.layout: long'",
    ),
    (
        BC + "constituents: [{file: m.csv, layout: long, name_column: v, value_column: v}]\n",
        "are both 'v'",
    ),
    (
        BC + "constituents: [{file: m.csv, layout: long, name_column: 3}]\n",
        "'constituents\\[0\\].name_column' must be a non-empty string",
    ),
]


@pytest.mark.parametrize(("text", "match"), JOB_ERRORS)
def test_layout_key_errors(tmp_path, text, match):
    with pytest.raises(JobError, match=match):
        _job(tmp_path, text)
