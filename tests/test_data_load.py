"""load_tracking_data: a job in, aligned and cleaned returns over the fit window out."""

from __future__ import annotations

import re
from dataclasses import replace
from datetime import date
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

import trackfit.data.series as series_module
from trackfit.core.models import ModelSpec
from trackfit.data import load_tracking_data
from trackfit.errors import DataError
from trackfit.job import (
    ConstituentSource,
    CVSpec,
    DataSpec,
    GridSpec,
    Job,
    OutputSpec,
    RiskFreeSpec,
    SeriesRef,
    WindowSpec,
)

EXAMPLE = Path(__file__).resolve().parents[1] / "examples" / "lumen_bay"

# 12 weekly dates, Fridays
WEEKS = [d.strftime("%Y-%m-%d") for d in pd.date_range("2020-01-03", periods=12, freq="7D")]


def _csv(header, rows):
    def cell(v):
        return "" if v is None or (isinstance(v, float) and np.isnan(v)) else str(v)

    return ",".join(header) + "\n" + "".join(",".join(map(cell, r)) + "\n" for r in rows)


def _put(folder, name, *lines):
    (folder / name).write_text("\n".join(lines) + "\n")


def _walk(seed, n, k):
    rng = np.random.default_rng(seed)
    return 100.0 * np.cumprod(1.0 + rng.normal(0.001, 0.02, size=(n, k)), axis=0)


@pytest.fixture
def files(tmp_path):
    """Weekly prices: index.csv (idx), stocks.csv (a, b, c), rate.csv (rate, annual %)."""
    idx = _walk(1, len(WEEKS), 1)
    stocks = _walk(2, len(WEEKS), 3)
    texts = {
        "index.csv": _csv(["date", "idx"], [[d, f"{v:.6f}"] for d, v in zip(WEEKS, idx[:, 0])]),
        "stocks.csv": _csv(
            ["date", "a", "b", "c"],
            [[d, *(f"{v:.6f}" for v in row)] for d, row in zip(WEEKS, stocks)],
        ),
        "rate.csv": _csv(
            ["date", "rate"], [[d, f"{2 + 0.1 * i:.2f}"] for i, d in enumerate(WEEKS)]
        ),
    }
    for name, text in texts.items():
        (tmp_path / name).write_text(text)
    return tmp_path


def make_job(
    folder,
    *,
    benchmark=("index.csv", "idx"),
    constituents=(("stocks.csv", None),),
    risk_free=None,
    window=WindowSpec(),
    **data,
):
    """A Job built directly from the dataclasses; file names are relative to ``folder``."""
    data.setdefault("values", "prices")
    return Job(
        path=folder / "job.yaml",
        name="test",
        benchmark=SeriesRef(folder / benchmark[0], benchmark[1]),
        constituents=tuple(ConstituentSource(folder / f, c) for f, c in constituents),
        risk_free=None if risk_free is None else replace(risk_free, file=folder / risk_free.file),
        data=DataSpec(**data),
        window=window,
        models=(ModelSpec("lasso", "lasso", (1.0,)),),
        hold="lasso",
        grid=GridSpec(),
        cv=CVSpec(),
        output=OutputSpec(directory=folder / "out"),
    )


def _step_counts(result):
    return [(s.description, s.rows_before, s.rows_after) for s in result.steps]


def _d(text):
    return np.datetime64(text, "D")


# --- the happy path ------------------------------------------------------------------------


def test_prices_to_returns_by_hand(tmp_path):
    (tmp_path / "index.csv").write_text(
        "date,idx\n2020-01-03,100\n2020-01-10,110\n2020-01-17,99\n2020-01-24,99\n"
    )
    (tmp_path / "stocks.csv").write_text(
        "date,a,b\n2020-01-03,2,7\n2020-01-10,1,14\n2020-01-17,2,7\n2020-01-24,4,3.5\n"
    )
    result = load_tracking_data(make_job(tmp_path))
    np.testing.assert_array_equal(
        result.dates, np.array(["2020-01-10", "2020-01-17", "2020-01-24"], dtype="datetime64[D]")
    )
    # by hand: 110/100-1, 99/110-1, 99/99-1; 1/2-1, 2/1-1, 4/2-1; 14/7-1, 7/14-1, 3.5/7-1
    np.testing.assert_allclose(result.benchmark, [0.1, -0.1, 0.0], atol=1e-15)
    np.testing.assert_allclose(result.constituents, [[-0.5, 1.0], [1.0, -0.5], [1.0, -0.5]])
    assert result.names == ("a", "b")
    assert result.benchmark_name == "idx"
    assert result.risk_free is None
    assert (result.periods_per_year, result.periods_per_year_inferred) == (52, True)
    assert _step_counts(result) == [
        ("dates not in every file (index.csv)", 4, 4),
        ("dates not in every file (stocks.csv)", 4, 4),
        ("first price date (a return needs the price before it)", 4, 3),
        ("dates after the as-of date (none: no --as-of given)", 3, 3),
        ("dates before the fit window (none: the whole history is used)", 3, 3),
        ("dates with a missing value in the fit window", 3, 3),
    ]
    assert result.warnings == ()


def test_arrays_are_contiguous_float64_and_days(files):
    result = load_tracking_data(make_job(files))
    assert result.dates.dtype == np.dtype("datetime64[D]")
    assert np.all(np.diff(result.dates).astype(int) > 0)
    for array in (result.benchmark, result.constituents):
        assert array.dtype == np.float64 and array.flags.c_contiguous
    assert result.constituents.shape == (11, 3)
    assert result.benchmark.shape == (11,)


def test_percent_returns(tmp_path):
    _put(tmp_path, "index.csv", "date,idx", "2020-01-03,1.5", "2020-01-10,-2", "2020-01-17,0.25")
    _put(tmp_path, "stocks.csv", "date,a", "2020-01-03,10", "2020-01-10,-50", "2020-01-17,1")
    result = load_tracking_data(make_job(tmp_path, values="returns", returns_unit="percent"))
    np.testing.assert_allclose(result.benchmark, [0.015, -0.02, 0.0025])
    np.testing.assert_allclose(result.constituents[:, 0], [0.1, -0.5, 0.01])
    assert len(result.steps) == 5  # no "first price date" step for returns


def test_decimal_returns_are_taken_as_written(tmp_path):
    _put(
        tmp_path, "index.csv", "date,idx", "2020-01-03,0.01", "2020-01-10,-0.02", "2020-01-17,0.03"
    )
    _put(tmp_path, "stocks.csv", "date,a", "2020-01-03,0.1", "2020-01-10,0.2", "2020-01-17,-0.3")
    result = load_tracking_data(make_job(tmp_path, values="returns"))
    np.testing.assert_array_equal(result.benchmark, [0.01, -0.02, 0.03])
    np.testing.assert_array_equal(result.constituents[:, 0], [0.1, 0.2, -0.3])


def test_alignment_keeps_common_dates_and_counts_per_file(files):
    stocks = (files / "stocks.csv").read_text().splitlines(keepends=True)
    extra = "2019-12-27,1,1,1\n"  # a date only this file has
    (files / "stocks.csv").write_text(stocks[0] + extra + "".join(stocks[1:4] + stocks[6:]))
    rate = (files / "rate.csv").read_text().splitlines(keepends=True)
    (files / "rate.csv").write_text("".join(rate[:-1]))  # the last date is missing
    job = make_job(files, risk_free=RiskFreeSpec(Path("rate.csv"), None, "percent", "annual"))
    result = load_tracking_data(job)
    common = [w for i, w in enumerate(WEEKS) if i not in (3, 4, 11)]
    np.testing.assert_array_equal(result.dates, np.array(common[1:], dtype="datetime64[D]"))
    assert _step_counts(result)[:4] == [
        ("dates not in every file (index.csv)", 12, 9),
        ("dates not in every file (stocks.csv)", 11, 9),
        ("dates not in every file (rate.csv)", 11, 9),
        ("first price date (a return needs the price before it)", 9, 8),
    ]
    # returns span the same interval for every series: 2020-01-17 -> 2020-02-07 here
    idx = pd.read_csv(files / "index.csv", index_col=0)["idx"]
    expected = idx["2020-02-07"] / idx["2020-01-17"] - 1
    rate_0207 = 2 + 0.1 * WEEKS.index("2020-02-07")
    # The rate is measured on the aligned dates: 7 intervals over 63 days with a three-week
    # hole, 40.6 a year, close to no usual value, so 41 (it was 52 from the median spacing;
    # this value moved because periods per year are now measured).
    assert result.periods_per_year == 41 and result.calendar.usual is None
    rf = (1 + rate_0207 / 100) ** (1 / 41) - 1
    assert result.dates[2] == _d("2020-02-07")
    assert result.benchmark[2] == pytest.approx(expected - rf, rel=1e-12)


def test_each_file_is_read_once(files, monkeypatch):
    calls = []
    real = series_module.read_wide_csv

    def counting(path, **kw):
        calls.append(path.name)
        return real(path, **kw)

    monkeypatch.setattr(series_module, "read_wide_csv", counting)
    job = make_job(
        files,
        constituents=(("stocks.csv", ("c",)), ("stocks.csv", ("a", "b"))),
        risk_free=RiskFreeSpec(Path("rate.csv"), "rate"),
    )
    result = load_tracking_data(job)
    assert sorted(calls) == ["index.csv", "rate.csv", "stocks.csv"]
    assert result.names == ("c", "a", "b")  # sources in order, listed order within each


def test_shared_file_all_columns_leave_out_benchmark_and_rate(tmp_path):
    rows = [[d, 100 + i, 50 - i * (-1) ** i, 10 + i * i, 0.001] for i, d in enumerate(WEEKS[:6])]
    (tmp_path / "all.csv").write_text(_csv(["date", "x", "idx", "y", "rate"], rows))
    job = make_job(
        tmp_path,
        benchmark=("all.csv", "idx"),
        constituents=(("all.csv", None),),
        risk_free=RiskFreeSpec(Path("all.csv"), "rate"),
    )
    result = load_tracking_data(job)
    assert result.names == ("x", "y")
    np.testing.assert_array_equal(result.risk_free, np.full(5, 0.001))


# --- risk-free -------------------------------------------------------------------------------


def test_risk_free_annual_percent_by_hand(tmp_path):
    _put(tmp_path, "index.csv", "date,idx", "2020-03-31,0.2", "2020-06-30,0.05", "2020-09-30,0.3")
    _put(tmp_path, "stocks.csv", "date,a", "2020-03-31,0.1", "2020-06-30,0.3", "2020-09-30,0.0")
    _put(tmp_path, "rate.csv", "date,rate", "2020-03-31,46.41", "2020-06-30,0", "2020-09-30,-19")
    job = make_job(
        tmp_path,
        values="returns",
        risk_free=RiskFreeSpec(Path("rate.csv"), "rate", unit="percent", quote="annual"),
    )
    result = load_tracking_data(job)
    assert result.periods_per_year == 4  # quarter ends
    # by hand: 46.41 % a year is 0.1 a quarter (1.1 ** 4 = 1.4641); -19 % a year is
    # 0.81 ** (1 / 4) - 1 = 0.9 ** 0.5 - 1 a quarter
    rf = np.array([0.1, 0.0, 0.9**0.5 - 1])
    np.testing.assert_allclose(result.risk_free, rf, rtol=1e-12, atol=1e-15)
    np.testing.assert_allclose(result.benchmark, [0.2, 0.05, 0.3] - rf, rtol=1e-12)
    np.testing.assert_allclose(result.constituents[:, 0], [0.1, 0.3, 0.0] - rf, atol=1e-15)


def test_risk_free_with_prices_is_a_rate_on_each_return_date(tmp_path):
    (tmp_path / "index.csv").write_text(
        "date,idx\n2020-01-03,100\n2020-01-10,102\n2020-01-17,100\n2020-01-24,100\n"
    )
    (tmp_path / "stocks.csv").write_text(
        "date,a\n2020-01-03,10\n2020-01-10,11\n2020-01-17,12\n2020-01-24,15\n"
    )
    (tmp_path / "rate.csv").write_text(
        "date,rate\n2020-01-03,0.9\n2020-01-10,0.001\n2020-01-17,0.002\n2020-01-24,0.002\n"
    )
    job = make_job(tmp_path, risk_free=RiskFreeSpec(Path("rate.csv"), None))
    result = load_tracking_data(job)
    rf = np.array([0.001, 0.002, 0.002])  # the rate as written, not 0.001 / 0.9 - 1
    np.testing.assert_array_equal(result.risk_free, rf)
    np.testing.assert_allclose(result.benchmark, np.array([0.02, 100 / 102 - 1, 0.0]) - rf)
    np.testing.assert_allclose(result.constituents[:, 0], np.array([0.1, 12 / 11 - 1, 0.25]) - rf)


# --- the window and the as-of date -----------------------------------------------------------


def test_as_of_default_is_the_last_common_date(files):
    result = load_tracking_data(make_job(files))
    assert result.dates[-1] == _d(WEEKS[-1])
    assert len(result.dates) == 11


def test_as_of_earlier_and_between_dates(files):
    on_date = load_tracking_data(make_job(files), as_of=date(2020, 2, 28))
    assert on_date.dates[-1] == _d("2020-02-28")
    assert _step_counts(on_date)[3] == ("dates after the as-of date 2020-02-28", 11, 8)
    between = load_tracking_data(make_job(files), as_of=date(2020, 3, 3))  # a Tuesday
    assert between.dates[-1] == _d("2020-02-28")
    np.testing.assert_array_equal(between.benchmark, on_date.benchmark)
    # two usual spacings (2 weeks) after the last date is still fresh; a day more is stale
    late = load_tracking_data(make_job(files), as_of=date(2020, 4, 3))
    assert late.dates[-1] == _d(WEEKS[-1])


def test_window_start_and_lookback(files):
    started = load_tracking_data(make_job(files, window=WindowSpec(start=date(2020, 2, 1))))
    assert started.dates[0] == _d("2020-02-07")
    assert _step_counts(started)[4] == (
        "dates before the fit window (window.start 2020-02-01)",
        11,
        7,
    )
    lookback = load_tracking_data(
        make_job(files, window=WindowSpec(lookback=5)), as_of=date(2020, 3, 6)
    )
    np.testing.assert_array_equal(lookback.dates, np.array(WEEKS[5:10], dtype="datetime64[D]"))
    assert _step_counts(lookback)[3:5] == [
        ("dates after the as-of date 2020-03-06", 11, 9),
        ("dates before the fit window (window.lookback: the last 5 return dates)", 9, 5),
    ]
    whole = load_tracking_data(make_job(files, window=WindowSpec(lookback=11)))
    assert len(whole.dates) == 11


def test_periods_per_year_from_the_job_is_not_inferred(files):
    result = load_tracking_data(make_job(files, periods_per_year=50))
    assert (result.periods_per_year, result.periods_per_year_inferred) == (50, False)


# --- missing values and flat series ----------------------------------------------------------


def _blank(folder, name, column, day):
    table = pd.read_csv(folder / name, dtype=str, keep_default_na=False)
    table.loc[table["date"] == day, column] = ""
    (folder / name).write_text(table.to_csv(index=False, lineterminator="\n"))


def test_missing_price_is_an_error_by_default(files):
    _blank(files, "stocks.csv", "b", "2020-02-14")
    _blank(files, "stocks.csv", "b", "2020-02-21")
    _blank(files, "index.csv", "idx", "2020-03-06")
    with pytest.raises(DataError) as info:
        load_tracking_data(make_job(files))
    message = str(info.value)
    assert message.startswith(
        "missing values on dates the fit window uses (2020-01-03 to 2020-03-20): "
    )
    assert "'idx' (index.csv): 1 date (2020-03-06)" in message
    assert "'b' (stocks.csv): 2 dates (2020-02-14, 2020-02-21)" in message
    assert message.endswith("or set data.missing: drop_dates to leave those dates out")


def test_missing_price_with_drop_dates(files):
    full = load_tracking_data(make_job(files))
    _blank(files, "stocks.csv", "b", "2020-02-14")
    result = load_tracking_data(make_job(files, missing="drop_dates"))
    # the missing price takes the returns ending on 2020-02-14 and on 2020-02-21
    gone = [_d("2020-02-14"), _d("2020-02-21")]
    assert not np.isin(gone, result.dates).any()
    assert len(result.dates) == 9
    assert _step_counts(result)[-1] == ("dates with a missing value in the fit window", 11, 9)
    keep = ~np.isin(full.dates, gone)
    np.testing.assert_array_equal(result.constituents, full.constituents[keep])
    assert result.warnings == (
        "data.missing is drop_dates: 2 of 11 return dates in the fit window were left out "
        "because of missing values ('b' (stocks.csv): 1 date (2020-02-14)); a missing price "
        "leaves the returns into and out of its date without a value",
    )


def test_missing_values_outside_the_window_are_ignored(files):
    _blank(files, "stocks.csv", "a", WEEKS[1])
    result = load_tracking_data(make_job(files, window=WindowSpec(lookback=9)))
    assert result.dates[0] == _d(WEEKS[3])  # its price row (WEEKS[2]) is the window's first use
    assert result.warnings == ()


def test_missing_value_in_the_row_before_the_window_counts_for_prices(files):
    _blank(files, "stocks.csv", "a", WEEKS[2])
    with pytest.raises(DataError, match=re.escape("'a' (stocks.csv): 1 date (2020-01-17)")):
        load_tracking_data(make_job(files, window=WindowSpec(lookback=9)))


def test_missing_risk_free_with_drop_dates(files):
    _blank(files, "rate.csv", "rate", WEEKS[5])
    job = make_job(files, missing="drop_dates", risk_free=RiskFreeSpec(Path("rate.csv"), "rate"))
    result = load_tracking_data(job)
    assert len(result.dates) == 10 and _d(WEEKS[5]) not in result.dates  # a rate, one date only
    assert len(result.risk_free) == 10


def test_zero_variance_constituent_is_dropped_with_a_warning(files):
    table = pd.read_csv(files / "stocks.csv", dtype=str)
    table.loc[3:, "b"] = "42.000000"  # suspended from 2020-01-24 on
    (files / "stocks.csv").write_text(table.to_csv(index=False, lineterminator="\n"))
    result = load_tracking_data(make_job(files, window=WindowSpec(start=date(2020, 2, 1))))
    assert result.names == ("a", "c")
    assert result.constituents.shape == (7, 2)
    assert result.warnings == (
        "constituent 'b' (stocks.csv) was left out: its return is the same on every date of the "
        "fit window (2020-02-07 to 2020-03-20), as for a suspended stock, so it cannot help "
        "tracking",
    )
    # over the whole history it moved, so it stays
    assert load_tracking_data(make_job(files)).names == ("a", "b", "c")


def test_constituent_flat_in_excess_of_the_risk_free_rate_is_dropped(tmp_path):
    # 'deposit' earns exactly the risk-free rate, so its excess return is always 0
    days, rate = WEEKS[:4], [0.001, 0.002, 0.002, 0.003]
    index, stock = [0.01, -0.02, 0.03, 0.0], [0.1, 0.2, -0.1, 0.05]
    _put(tmp_path, "index.csv", "date,idx", *(f"{d},{v}" for d, v in zip(days, index)))
    _put(
        tmp_path,
        "stocks.csv",
        "date,a,deposit",
        *(f"{d},{a},{r}" for d, a, r in zip(days, stock, rate)),
    )
    _put(tmp_path, "rate.csv", "date,rate", *(f"{d},{r}" for d, r in zip(days, rate)))
    job = make_job(tmp_path, values="returns", risk_free=RiskFreeSpec(Path("rate.csv"), "rate"))
    result = load_tracking_data(job)
    assert result.names == ("a",)
    assert result.warnings == (
        "constituent 'deposit' (stocks.csv) was left out: its return in excess of the risk-free "
        "rate is the same on every date of the fit window (2020-01-03 to 2020-01-24), as for a "
        "suspended stock, so it cannot help tracking",
    )


# --- every error message ---------------------------------------------------------------------


def _edit(name, transform):
    def apply(folder):
        path = folder / name
        path.write_text(transform(path.read_text()))

    return apply


def _replace_line(name, index, line):
    def transform(text):
        lines = text.splitlines()
        lines[index] = line
        return "\n".join(lines) + "\n"

    return _edit(name, transform)


def _write(name, text):
    return lambda folder: (folder / name).write_text(text)


def _constant(name, column, value):
    def apply(folder):
        table = pd.read_csv(folder / name, dtype=str)
        table[column] = value
        (folder / name).write_text(table.to_csv(index=False, lineterminator="\n"))

    return apply


def _nothing(folder):
    return None


def _fortnightly(folder):
    days = pd.date_range("2020-01-03", periods=12, freq="14D").strftime("%Y-%m-%d")
    prices = _walk(3, len(days), 2)
    (folder / "index.csv").write_text(_csv(["date", "idx"], zip(days, prices[:, 0])))
    (folder / "stocks.csv").write_text(_csv(["date", "a"], zip(days, prices[:, 1])))


LOAD_ERRORS = [
    # (id, change to the files, job options, as_of, message)
    (
        "no file",
        _nothing,
        {"benchmark": ("nope.csv", None)},
        None,
        "nope.csv: the data file does not exist (",
    ),
    (
        "no date column",
        _nothing,
        {"date_column": "day"},
        None,
        "index.csv: no date column 'day'; columns found: 'date', 'idx'; set data.date_column",
    ),
    (
        "benchmark column",
        _nothing,
        {"benchmark": ("index.csv", "ixd")},
        None,
        "index.csv: no column 'ixd' (named by benchmark.column); close matches: 'idx'; fix the name",
    ),
    (
        "constituent column",
        _nothing,
        {"constituents": (("stocks.csv", ("a", "kestrel")),)},
        None,
        "stocks.csv: no column 'kestrel' (named by constituents[0].columns); "
        "columns found: 'a', 'b', 'c'",
    ),
    (
        "risk-free column",
        _nothing,
        {"risk_free": RiskFreeSpec(Path("rate.csv"), "rates")},
        None,
        "rate.csv: no column 'rates' (named by risk_free.column); close matches: 'rate'",
    ),
    (
        "several benchmark columns",
        _nothing,
        {"benchmark": ("stocks.csv", None)},
        None,
        "stocks.csv: benchmark.column is not set, so the file must hold exactly one series besides "
        "the date column, but it has 3 ('a', 'b', 'c'); set benchmark.column to one of them",
    ),
    (
        "no constituent columns",
        _nothing,
        {"constituents": (("index.csv", None),)},
        None,
        "index.csv: constituents[0] takes every column but the date column, and the file has no "
        "other series column",
    ),
    (
        "bad date",
        _replace_line("stocks.csv", 3, "2020/01/17,1,2,3"),
        {},
        None,
        "stocks.csv: line 4: cannot read date '2020/01/17' in column 'date'; expected ISO 8601",
    ),
    (
        "date format",
        _nothing,
        {"date_format": "%d.%m.%Y"},
        None,
        "index.csv: line 2: cannot read date '2020-01-03' in column 'date' (12 unreadable dates in "
        "all); expected dates in data.date_format '%d.%m.%Y'",
    ),
    (
        "not a number",
        _replace_line("stocks.csv", 5, f"{WEEKS[4]},1,n/a,3"),
        {},
        None,
        "stocks.csv: column 'b', line 6 (date 2020-01-31): 'n/a' is not a number",
    ),
    (
        "repeated date",
        _replace_line("index.csv", 2, f"{WEEKS[0]},5"),
        {},
        None,
        "index.csv: 1 date(s) appear more than once: 2020-01-03; keep one row per date",
    ),
    ("empty file", _write("stocks.csv", ""), {}, None, "stocks.csv: the file is empty"),
    (
        "header only",
        _write("stocks.csv", "date,a\n"),
        {},
        None,
        "stocks.csv: the file has a header but no data rows",
    ),
    (
        "twice",
        _nothing,
        {"constituents": (("stocks.csv", ("a", "b")), ("other.csv", None))},
        None,
        "constituent 'b' appears in both stocks.csv and other.csv; every constituent needs a unique",
    ),
    (
        "twice in one file",
        _nothing,
        {"constituents": (("stocks.csv", ("a", "b")), ("stocks.csv", ("b",)))},
        None,
        "constituent 'b' appears twice among the columns taken from stocks.csv",
    ),
    (
        "benchmark name",
        _nothing,
        {"constituents": (("stocks.csv", None), ("index2.csv", None))},
        None,
        "index2.csv: constituent 'idx' has the same name as the benchmark column in index.csv",
    ),
    (
        "cash",
        _write("cash.csv", f"date,(cash)\n{WEEKS[0]},1\n"),
        {"constituents": (("cash.csv", None),)},
        None,
        "cash.csv: constituent column '(cash)' uses a name trackfit reserves",
    ),
    (
        "no common date",
        _write("other.csv", "date,z\n2021-01-01,1\n2021-01-08,2\n"),
        {"constituents": (("other.csv", None),)},
        None,
        "no date appears in every data file (index.csv: 2020-01-03 to 2020-03-20; other.csv: "
        "2021-01-01 to 2021-01-08)",
    ),
    (
        "one common date",
        _write("other.csv", f"date,z\n{WEEKS[0]},1\n"),
        {"constituents": (("other.csv", None),)},
        None,
        "no return dates",
    ),
    (
        "zero price",
        _replace_line("stocks.csv", 4, f"{WEEKS[3]},1,0,3"),
        {},
        None,
        "'b' (stocks.csv): the price on 2020-01-24 is 0; a price must be above zero",
    ),
    (
        "negative prices",
        _constant("stocks.csv", "b", "-3"),
        {},
        None,
        "'b' (stocks.csv): the price on 2020-01-03 is -3 (12 prices <= 0 in the window)",
    ),
    (
        "infinite",
        _replace_line("index.csv", 2, f"{WEEKS[1]},inf"),
        {},
        None,
        "'idx' (index.csv): the value on 2020-01-10 is inf, not a finite number",
    ),
    (
        "infinite rate",
        _replace_line("rate.csv", 2, f"{WEEKS[1]},-inf"),
        {"risk_free": RiskFreeSpec(Path("rate.csv"), "rate")},
        None,
        "'rate' (rate.csv): the value on 2020-01-10 is -inf, not a finite number",
    ),
    (
        "missing",
        _replace_line("stocks.csv", 2, f"{WEEKS[1]},1,,3"),
        {},
        None,
        "missing values on dates the fit window uses (2020-01-03 to 2020-03-20): 'b' (stocks.csv): "
        "1 date (2020-01-10); fill the gaps in the files, or set data.missing: drop_dates",
    ),
    (
        "as-of too early",
        _nothing,
        {},
        date(2020, 1, 9),
        "--as-of 2020-01-09 is before the first return date 2020-01-10; pass a later --as-of",
    ),
    (
        "stale",
        _nothing,
        {},
        date(2020, 4, 4),
        "data end on 2020-03-20, well before --as-of 2020-04-04; update the data or pass an "
        "earlier --as-of",
    ),
    (
        "gap",
        _edit("index.csv", lambda t: "".join(t.splitlines(True)[:6] + t.splitlines(True)[9:])),
        {},
        date(2020, 2, 21),
        "the data have a gap from 2020-01-31 to 2020-02-28, and --as-of 2020-02-21 falls well "
        "inside it",
    ),
    (
        "start too late",
        _nothing,
        {"window": WindowSpec(start=date(2020, 3, 1))},
        date(2020, 2, 28),
        "window.start 2020-03-01 is after the last return date of the window (2020-02-28)",
    ),
    (
        "lookback too long",
        _nothing,
        {"window": WindowSpec(lookback=12)},
        None,
        "window.lookback asks for 12 return dates ending on 2020-03-20, but only 11 are available "
        "(2020-01-10 to 2020-03-20); lower window.lookback",
    ),
    (
        "too few to infer",
        _nothing,
        {"window": WindowSpec(lookback=2)},
        None,
        "cannot infer periods per year from 2 return date(s) in the fit window; it takes at least 3",
    ),
    (
        "too few",
        _nothing,
        {"window": WindowSpec(lookback=2), "periods_per_year": 52},
        None,
        "only 2 return date(s) are left in the fit window; fitting needs at least 3",
    ),
    (
        "flat benchmark",
        _constant("index.csv", "idx", "100"),
        {},
        None,
        "benchmark 'idx' (index.csv) has the same return on every date of the fit window "
        "(2020-01-10 to 2020-03-20); there is nothing to track",
    ),
    (
        "all flat",
        _constant("stocks.csv", "a", "5"),
        {"constituents": (("stocks.csv", ("a",)),)},
        None,
        "every constituent has the same return on every date of the fit window",
    ),
    (
        "rate at -100 %",
        _constant("rate.csv", "rate", "-100"),
        {"risk_free": RiskFreeSpec(Path("rate.csv"), "rate", "percent", "annual")},
        None,
        "an annual risk-free rate of -100 % is at or below -100 %",
    ),
]


@pytest.mark.parametrize(
    ("change", "options", "as_of", "match"),
    [c[1:] for c in LOAD_ERRORS],
    ids=[c[0] for c in LOAD_ERRORS],
)
def test_load_errors(files, change, options, as_of, match):
    other = [[d, 1 + i, 2 + i * i] for i, d in enumerate(WEEKS)]
    (files / "other.csv").write_text(_csv(["date", "b", "z"], other))
    (files / "index2.csv").write_text((files / "index.csv").read_text())
    change(files)
    with pytest.raises(DataError, match=re.escape(match)):
        load_tracking_data(make_job(files, **options), as_of=as_of)


def test_an_irregular_calendar_is_measured_and_warned(files):
    # Fortnightly dates raised a DataError when the value was looked up from the median
    # spacing; the rate is now measured (10 intervals over 140 days: 26.1 a year), close to no
    # usual value, used rounded and warned about.
    _fortnightly(files)
    result = load_tracking_data(make_job(files))
    assert (result.periods_per_year, result.periods_per_year_inferred) == (26, True)
    assert result.calendar.measured == pytest.approx(10 * 365.25 / 140, rel=1e-12)
    assert result.warnings == (
        "the fit window's dates (2020-01-17 to 2020-06-05) come at an irregular rate: 26.1 rows "
        "a year, close to none of 4, 12, 52, 252, 261 or 365; returns and tracking errors are "
        "annualized with 26 periods a year; set data.periods_per_year if another value is right",
    )


def test_a_value_set_in_the_job_wins_and_the_rate_is_still_measured(files):
    _fortnightly(files)
    result = load_tracking_data(make_job(files, periods_per_year=24))
    assert (result.periods_per_year, result.periods_per_year_inferred) == (24, False)
    assert (result.calendar.value, result.calendar.usual) == (26, None)
    assert result.warnings == ()  # the job said what it wants


def test_too_few_dates_after_dropping_names_the_cause(files):
    for day in WEEKS[1:10]:
        _blank(files, "stocks.csv", "c", day)
    with pytest.raises(
        DataError,
        match=re.escape(
            "only 1 return date(s) are left in the fit window after leaving out dates with missing "
            "values ('c' (stocks.csv): 9 dates (2020-01-10, 2020-01-17, 2020-01-24, ...))"
        ),
    ):
        load_tracking_data(make_job(files, missing="drop_dates", periods_per_year=52))


# --- the demo scenario -----------------------------------------------------------------------


@pytest.mark.skipif(
    not (EXAMPLE / "data" / "index.csv").is_file(), reason="demo data not generated"
)
def test_demo_scenario_loads():
    job = make_job(
        EXAMPLE,
        benchmark=("data/index.csv", "lb60"),
        constituents=(("data/constituents.csv", None),),
        risk_free=RiskFreeSpec(Path("data/deposit_rate.csv"), "rate", "percent", "annual"),
        window=WindowSpec(lookback=756, holdout=126),
    )
    result = load_tracking_data(job, as_of=date(2026, 11, 30))
    assert len(result.dates) == 756 and result.dates[-1] == _d("2026-11-30")
    assert len(result.names) == 48
    # The demo calendar holds every weekday: 261 rows in 2025, the one full year of the
    # window. This was 252 when the value was looked up from the median spacing.
    assert (result.periods_per_year, result.periods_per_year_inferred) == (261, True)
    assert (result.calendar.measured, result.calendar.first_year) == (261.0, 2025)
    assert result.risk_free.min() > 0.5 / 100 / 252 and result.risk_free.max() < 4 / 100 / 252
    assert result.warnings == ()
    # the late listing reaches back into 2019 only, so the whole history needs drop_dates
    with pytest.raises(DataError, match="missing values on dates the fit window uses"):
        load_tracking_data(replace(job, window=WindowSpec()), as_of=date(2026, 11, 30))


def test_daily_data_from_friday_serve_a_monday_as_of_but_not_a_week_later(tmp_path):
    days = [d.strftime("%Y-%m-%d") for d in pd.bdate_range("2026-10-01", "2026-11-27")]
    prices = _walk(5, len(days), 3)
    _put(tmp_path, "index.csv", "date,idx", *(f"{d},{p:.6f}" for d, p in zip(days, prices[:, 0])))
    _put(
        tmp_path,
        "stocks.csv",
        "date,a,b",
        *(f"{d},{a:.6f},{b:.6f}" for d, a, b in zip(days, prices[:, 1], prices[:, 2])),
    )
    job = make_job(tmp_path)
    monday = load_tracking_data(job, as_of=date(2026, 11, 30))  # data end Friday 2026-11-27
    assert monday.dates[-1] == _d("2026-11-27")
    with pytest.raises(DataError, match="data end on 2026-11-27, well before --as-of 2026-12-05"):
        load_tracking_data(job, as_of=date(2026, 12, 5))
