"""Gaps and listings: data.carry_forward and data.min_coverage, from the carry to the fit's names.

Every truth here is built by the test itself: invented prices with gaps placed by hand, and the
returns those prices give when worked out by hand (p[t] / p[t-1] - 1, common practice).
"""

from __future__ import annotations

import re
from dataclasses import replace

import numpy as np
import pytest

from trackfit.commands.mandate import build_limits
from trackfit.core.models import ModelSpec
from trackfit.data import load_tracking_data
from trackfit.data.gaps import carry_forward
from trackfit.errors import DataError, JobError
from trackfit.job import (
    Bounds,
    ConstituentSource,
    CVSpec,
    DataSpec,
    GridSpec,
    Job,
    LimitsSpec,
    OutputSpec,
    SeriesRef,
    WindowSpec,
    load_job,
)

N_DATES = 40
DATES = np.busday_offset("2031-03-03", np.arange(N_DATES), roll="forward")


def _walk(seed: int, n: int, k: int) -> np.ndarray:
    rng = np.random.default_rng(seed)
    levels = 50.0 * np.cumprod(1.0 + rng.normal(0.0005, 0.015, size=(n, k)), axis=0)
    return np.round(levels, 6)  # as written to the files, so hand-computed returns match


def _write(folder, name, header, values, dates=DATES):
    def cell(v):
        return "" if np.isnan(v) else repr(float(v))

    lines = [",".join(["date", *header])]
    lines += [f"{d}," + ",".join(cell(v) for v in row) for d, row in zip(dates, values)]
    (folder / name).write_text("\n".join(lines) + "\n")


def _job(folder, window=WindowSpec(), **data) -> Job:
    data.setdefault("values", "prices")
    return Job(
        path=folder / "job.yaml",
        name="gaps",
        benchmark=SeriesRef(folder / "index.csv", "idx"),
        constituents=(ConstituentSource(folder / "stocks.csv", None),),
        risk_free=None,
        data=DataSpec(**data),
        window=window,
        models=(ModelSpec("lasso", "lasso", (1.0,)),),
        hold="lasso",
        grid=GridSpec(),
        cv=CVSpec(),
        output=OutputSpec(directory=folder / "out"),
    )


@pytest.fixture
def prices(tmp_path):
    """index.csv (idx) and stocks.csv (a, b, c): complete invented prices; returns the arrays."""
    index, stocks = _walk(1, N_DATES, 1), _walk(2, N_DATES, 3)
    _write(tmp_path, "index.csv", ["idx"], index)
    _write(tmp_path, "stocks.csv", ["a", "b", "c"], stocks)
    return tmp_path, index[:, 0], stocks


def _with_gaps(folder, stocks, column, rows):
    gappy = stocks.copy()
    gappy[rows, column] = np.nan
    _write(folder, "stocks.csv", ["a", "b", "c"], gappy)


# --- carrying a price forward ----------------------------------------------------------------


@pytest.mark.parametrize(
    "limit, length", [(n, g) for n in (1, 2, 3) for g in range(1, n + 1)], ids=lambda v: str(v)
)
def test_a_gap_up_to_the_limit_gives_zero_returns_then_the_whole_move(prices, limit, length):
    folder, _, stocks = prices
    start = 10
    _with_gaps(folder, stocks, 1, list(range(start, start + length)))
    data = load_tracking_data(_job(folder, carry_forward=limit))  # missing: error, so all filled
    b = data.names.index("b")
    got = data.constituents[:, b]
    # By hand: return t (row t + 1 of the prices) is p[t + 1] / p[t] - 1.
    p = stocks[:, 1]
    expected = p[1:] / p[:-1] - 1.0
    expected[start - 1 : start - 1 + length] = 0.0  # the price is repeated over the gap
    expected[start - 1 + length] = p[start + length] / p[start - 1] - 1.0  # the move lands here
    np.testing.assert_allclose(got, expected, rtol=0, atol=1e-15)
    assert len(data.dates) == N_DATES - 1
    assert any(
        w.startswith(f"data.carry_forward is {limit}: {length} missing") for w in data.warnings
    )


def test_a_gap_longer_than_the_limit_keeps_its_later_cells_missing(prices):
    folder, _, stocks = prices
    _with_gaps(folder, stocks, 0, [10, 11, 12])  # three missing prices, limit 2
    with pytest.raises(DataError, match=re.escape("'a' (stocks.csv): 1 date (2031-03-19)")):
        load_tracking_data(_job(folder, carry_forward=2))
    data = load_tracking_data(_job(folder, carry_forward=2, missing="drop_dates"))
    # Rows 10 and 11 carry row 9's price; row 12 stays missing, so the returns ending on its
    # date and on the next one have no value and those two dates go.
    gone = DATES[[12, 13]]
    assert not np.isin(gone, data.dates).any() and len(data.dates) == N_DATES - 3
    a = data.constituents[:, data.names.index("a")]
    kept = data.dates.astype("datetime64[D]")
    assert a[np.flatnonzero(kept == DATES[10])[0]] == 0.0
    assert a[np.flatnonzero(kept == DATES[11])[0]] == 0.0


def test_a_leading_gap_is_not_filled(prices):
    folder, _, stocks = prices
    _with_gaps(folder, stocks, 2, list(range(0, 5)))  # 'c' is listed on the sixth date
    with pytest.raises(DataError, match=re.escape("'c' (stocks.csv): 5 dates (2031-03-03,")):
        load_tracking_data(_job(folder, carry_forward=3))


def test_carry_forward_reads_only_earlier_rows():
    values = np.array([[np.nan, 1.0], [2.0, np.nan], [np.nan, np.nan], [np.nan, 4.0], [5.0, 6.0]])
    filled, carried = carry_forward(values, 1)
    expected = np.array([[np.nan, 1.0], [2.0, 1.0], [2.0, np.nan], [np.nan, 4.0], [5.0, 6.0]])
    np.testing.assert_array_equal(filled, expected)
    np.testing.assert_array_equal(carried, ~np.isnan(filled) & np.isnan(values))
    # Cutting the rows after any point changes nothing before it (no look-ahead).
    for stop in range(1, len(values)):
        np.testing.assert_array_equal(carry_forward(values[:stop], 1)[0], filled[:stop])
    np.testing.assert_array_equal(carry_forward(values, 0)[0], values)


def test_a_window_that_starts_inside_a_gap_carries_the_price_before_it(prices):
    folder, _, stocks = prices
    _with_gaps(folder, stocks, 1, [20, 21])
    full = load_tracking_data(_job(folder, carry_forward=2))
    # The window's first return ends on row 22, so it needs the row-21 price, carried from 19.
    late = load_tracking_data(_job(folder, window=WindowSpec(lookback=18), carry_forward=2))
    assert late.dates[0] == DATES[22]
    np.testing.assert_array_equal(late.constituents, full.constituents[-18:])
    # And a window ending inside the gap fills what it has as the full history does.
    early = load_tracking_data(_job(folder, carry_forward=2), as_of=DATES[21].item())
    np.testing.assert_array_equal(early.constituents, full.constituents[:21])


def test_the_benchmark_is_carried_too(prices):
    folder, index, _ = prices
    gappy = index.copy()
    gappy[7] = np.nan
    _write(folder, "index.csv", ["idx"], gappy[:, None])
    data = load_tracking_data(_job(folder, carry_forward=1))
    assert data.benchmark[6] == 0.0
    assert data.benchmark[7] == pytest.approx(index[8] / index[6] - 1.0, abs=1e-15)


# --- leaving out names with too little history ------------------------------------------------


def test_a_late_listing_is_left_out_and_the_rest_keep_every_date(prices):
    folder, _, stocks = prices
    _with_gaps(folder, stocks, 1, list(range(0, 12)))  # 'b' lists on the 13th date
    data = load_tracking_data(_job(folder, min_coverage=0.9))
    assert data.names == ("a", "c")
    assert len(data.dates) == N_DATES - 1  # no date dropped for anyone
    assert data.warnings == (
        "constituent 'b' (stocks.csv) was left out: it has a return on 27 of the 39 return dates "
        "of the fit window (2031-03-04 to 2031-04-25), below data.min_coverage 0.9; its first "
        "return is on 2031-03-20 (listed late)",
    )
    # The same arrays as from files without that column.
    _write(folder, "stocks.csv", ["a", "c"], stocks[:, [0, 2]])
    alone = load_tracking_data(_job(folder))
    np.testing.assert_array_equal(data.constituents, alone.constituents)
    np.testing.assert_array_equal(data.benchmark, alone.benchmark)
    np.testing.assert_array_equal(data.dates, alone.dates)
    assert data.steps == alone.steps


def test_coverage_counts_returns_after_the_carry(prices):
    folder, _, stocks = prices
    rows = [5, 6, 15, 16, 25, 26]  # three gaps of two prices
    _with_gaps(folder, stocks, 0, rows)
    # Without the carry each gap takes 3 returns: 30 of 39 (0.77) is short of 0.8.
    short = load_tracking_data(_job(folder, min_coverage=0.8, missing="drop_dates"))
    assert short.names == ("b", "c")
    assert "30 of the 39 return dates" in short.warnings[0]
    assert "6 date(s) without a return in between" not in short.warnings[0]
    assert "9 date(s) without a return in between" in short.warnings[0]
    # With it every return is there.
    full = load_tracking_data(_job(folder, min_coverage=0.8, carry_forward=2))
    assert full.names == ("a", "b", "c") and len(full.dates) == N_DATES - 1


def test_coverage_exactly_at_the_threshold_is_kept(prices):
    folder, _, stocks = prices
    _with_gaps(folder, stocks, 2, list(range(0, 10)))  # 'c': 29 returns of 39
    kept = load_tracking_data(_job(folder, min_coverage=29 / 39, missing="drop_dates"))
    assert kept.names == ("a", "b", "c") and len(kept.dates) == 29
    out = load_tracking_data(_job(folder, min_coverage=29.5 / 39))
    assert out.names == ("a", "b")


def test_a_name_above_the_threshold_still_follows_data_missing(prices):
    folder, _, stocks = prices
    _with_gaps(folder, stocks, 0, [8])
    with pytest.raises(DataError, match="or set data.missing: drop_dates"):
        load_tracking_data(_job(folder, min_coverage=0.5))
    data = load_tracking_data(_job(folder, min_coverage=0.5, missing="drop_dates"))
    assert data.names == ("a", "b", "c") and len(data.dates) == N_DATES - 3


def test_delisted_name_is_left_out_with_its_last_date(prices):
    folder, _, stocks = prices
    _with_gaps(folder, stocks, 0, list(range(30, N_DATES)))
    data = load_tracking_data(_job(folder, min_coverage=0.9, carry_forward=2))
    assert data.names == ("b", "c")
    assert data.warnings[-1].endswith(
        "its last return is on 2031-04-15 (delisted or not yet updated)"
    )


def test_the_benchmark_is_never_left_out(prices):
    folder, index, _ = prices
    gappy = index.copy()
    gappy[:10] = np.nan
    _write(folder, "index.csv", ["idx"], gappy[:, None])
    with pytest.raises(DataError) as info:
        load_tracking_data(_job(folder, min_coverage=0.9, carry_forward=3))
    assert str(info.value) == (
        "benchmark 'idx' (index.csv) has a return on only 29 of the 39 return dates of the fit "
        "window (2031-03-04 to 2031-04-25), below data.min_coverage 0.9, and the benchmark "
        "cannot be left out (missing: 'idx' (index.csv): 10 dates (2031-03-04, 2031-03-05, "
        "2031-03-06, ...)); fill its gaps (data.carry_forward with prices) or move the window"
    )


def test_every_constituent_short_is_an_error(prices):
    folder, _, stocks = prices
    gappy = stocks.copy()
    gappy[:20] = np.nan
    _write(folder, "stocks.csv", ["a", "b", "c"], gappy)
    with pytest.raises(DataError, match="every constituent has a return on fewer return dates"):
        load_tracking_data(_job(folder, min_coverage=0.9))


def test_scattered_gaps_in_80_names_keep_every_row_with_the_carry(tmp_path):
    n, k = 750, 80
    rng = np.random.default_rng(11)
    stocks = _walk(3, n, k)
    index = stocks.mean(axis=1, keepdims=True)
    gaps = rng.random((n, k)) < 0.002
    gaps[0] = False  # a gap on the first date would be a late listing
    stocks[gaps] = np.nan
    dates = np.busday_offset("2028-01-03", np.arange(n), roll="forward")
    _write(tmp_path, "index.csv", ["idx"], index, dates)
    _write(tmp_path, "stocks.csv", [f"n{j:02d}" for j in range(k)], stocks, dates)
    dropped = load_tracking_data(_job(tmp_path, missing="drop_dates"))
    lost = 1 - len(dropped.dates) / (n - 1)
    assert lost > 0.2  # each missing price takes two return dates for every name
    carried = load_tracking_data(_job(tmp_path, carry_forward=3))  # missing: error
    assert len(carried.dates) == n - 1 and len(carried.names) == k
    assert carried.warnings[0].startswith(f"data.carry_forward is 3: {int(gaps.sum())} missing")


# --- the mandate names a name left out ---------------------------------------------------------


def test_limits_naming_a_name_left_for_coverage_say_so(prices):
    folder, _, stocks = prices
    _with_gaps(folder, stocks, 1, list(range(0, 12)))
    job = _job(folder, min_coverage=0.9)
    job = replace(job, limits=LimitsSpec(names=(("b", Bounds(max=0.1)),)))
    data = load_tracking_data(job)
    with pytest.raises(JobError) as info:
        build_limits(job, data.names)
    assert str(info.value).endswith(
        "'limits.names' lists 'b', which is not a constituent of this fit; fix the name or "
        "remove it (constituents whose return never varies in the window, or that have a return "
        "on fewer than 90% of its dates (data.min_coverage: 0.9; listed late, delisted or with "
        "long gaps), are left out of the fit; see the warnings)"
    )


# --- the job keys -------------------------------------------------------------------------------

HEAD = "benchmark: {file: index.csv}\nconstituents: {file: stocks.csv}\n"


def test_defaults_keep_todays_behaviour(tmp_path):
    (tmp_path / "job.yaml").write_text(HEAD)
    data = load_job(tmp_path / "job.yaml").data
    assert data.carry_forward == 0 and data.min_coverage is None
    (tmp_path / "job.yaml").write_text(
        HEAD + "data: {values: prices, carry_forward: 3, min_coverage: 1}\n"
    )
    data = load_job(tmp_path / "job.yaml").data
    assert data.carry_forward == 3 and data.min_coverage == 1.0
    (tmp_path / "job.yaml").write_text(HEAD + "data: {carry_forward: 0, min_coverage: 0.75}\n")
    assert load_job(tmp_path / "job.yaml").data.min_coverage == 0.75


COVERAGE = "a number above 0 and at most 1 (the share of the window's dates), or null for off"

# (data section, expected message after "<file>: ")
KEY_ERRORS = [
    (
        "{carry_forward: 2}",
        "'data.carry_forward' applies only with 'data.values: prices': repeating a price makes "
        "the return over the gap 0 and puts the move on the next price, but a missing return is "
        "a move nobody knows, and filling it would invent one; remove 'data.carry_forward'",
    ),
    (
        "{values: prices, carry_forward: -1}",
        "'data.carry_forward' must be an integer >= 0; got -1.",
    ),
    (
        "{values: prices, carry_forward: 1.5}",
        "'data.carry_forward' must be an integer >= 0; got 1.5.",
    ),
    (
        "{values: prices, carry_forward: true}",
        "'data.carry_forward' must be an integer >= 0; got True.",
    ),
    (
        "{values: prices, carry_forward: '3'}",
        "'data.carry_forward' must be an integer >= 0; got '3' (text, not a number; remove the "
        "quotes).",
    ),
    ("{min_coverage: 0}", f"'data.min_coverage' must be {COVERAGE}; got 0."),
    ("{min_coverage: 1.5}", f"'data.min_coverage' must be {COVERAGE}; got 1.5."),
    ("{min_coverage: -0.1}", f"'data.min_coverage' must be {COVERAGE}; got -0.1."),
    ("{min_coverage: '0.9'}", f"'data.min_coverage' must be {COVERAGE}; got '0.9' (text"),
    ("{min_coverage: true}", f"'data.min_coverage' must be {COVERAGE}; got True."),
    ("{min_coverge: 0.9}", "unknown key 'data.min_coverge'; did you mean 'min_coverage'?"),
    ("{carry: 3}", "unknown key 'data.carry'"),
]


@pytest.mark.parametrize("section, message", KEY_ERRORS, ids=[s for s, _ in KEY_ERRORS])
def test_key_validation(tmp_path, section, message):
    path = tmp_path / "job.yaml"
    path.write_text(HEAD + f"data: {section}\n")
    with pytest.raises(JobError, match=re.escape(message)) as info:
        load_job(path)
    assert str(info.value).startswith(f"{path}: ")
