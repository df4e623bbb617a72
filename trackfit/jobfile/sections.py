"""Parsers for the job's inputs and method: series, data, window, grid, folds, output."""

from __future__ import annotations

from datetime import datetime
from pathlib import Path
from typing import Any

from trackfit.jobfile.checks import Reader
from trackfit.jobfile.specs import (
    ConstituentSource,
    CVSpec,
    DataSpec,
    FileLayout,
    GridSpec,
    OutputSpec,
    RiskFreeSpec,
    SeriesRef,
    WindowSpec,
)

DEFAULT_OUTPUT_DIRECTORY = "out"
UNITS = ("decimal", "percent")
QUOTES = ("per_period", "annual")
VALUES = ("returns", "prices")
MISSING = ("error", "drop_dates")
SCHEMES = ("expanding", "rolling")
RULES = ("min_error", "one_standard_error")
LAYOUTS = ("wide", "long")
FORMATS = ("csv", "parquet")
#: File suffixes read as Parquet when a source names no ``format``; any other suffix is CSV.
PARQUET_SUFFIXES = (".parquet", ".pq")
#: Keys every source entry (benchmark, each constituents entry, risk_free) may hold.
LAYOUT_KEYS = ("layout", "format", "name_column", "value_column")


def _layout(r: Reader, key: str, s: dict, file: Path) -> FileLayout:
    """The layout keys of one source entry ``key`` (already checked for unknown keys)."""
    kind = r.choice(f"{key}.layout", s.get("layout"), LAYOUTS, FileLayout.kind)
    default_format = "parquet" if file.suffix.lower() in PARQUET_SUFFIXES else "csv"
    fmt = r.choice(f"{key}.format", s.get("format"), FORMATS, default_format)
    if kind == "wide":
        for name in ("name_column", "value_column"):
            if s.get(name) is not None:
                raise r.error(
                    f"'{key}.{name}' applies only with '{key}.layout: long', but the layout "
                    f"is wide; remove '{key}.{name}' or set '{key}.layout: long'"
                )
        return FileLayout(kind=kind, format=fmt)
    name_column = r.text(f"{key}.name_column", s.get("name_column"), FileLayout.name_column)
    value_column = r.text(f"{key}.value_column", s.get("value_column"), FileLayout.value_column)
    if name_column == value_column:
        raise r.error(
            f"'{key}.name_column' and '{key}.value_column' are both {name_column!r}; "
            "a long file needs one column for the series names and another for the values"
        )
    return FileLayout(kind, fmt, name_column, value_column)


def parse_benchmark(r: Reader, value: Any) -> tuple[SeriesRef, str]:
    r.required("benchmark", value, "a mapping with 'file' and optionally 'column'")
    s = r.section("benchmark", value, ("file", "column", *LAYOUT_KEYS))
    file = r.path("benchmark.file", s.get("file"))
    ref = SeriesRef(
        file, r.text("benchmark.column", s.get("column")), _layout(r, "benchmark", s, file)
    )
    return ref, s["file"]


def parse_constituents(
    r: Reader, value: Any, bench: SeriesRef, bench_file: str
) -> tuple[ConstituentSource, ...]:
    what = "a mapping with 'file' and 'columns', or a non-empty list of such mappings"
    r.required("constituents", value, what)
    if isinstance(value, dict):
        entries = [("constituents", value)]
    elif isinstance(value, list) and value:
        entries = [(f"constituents[{i}]", item) for i, item in enumerate(value)]
    else:
        raise r.bad("constituents", what, value)
    sources: list[ConstituentSource] = []
    taken: dict[tuple[Path, str | None], str] = {}  # (file, column; None = all) -> key path
    for key, item in entries:
        s = r.section(key, item, ("file", "columns", *LAYOUT_KEYS))
        file = r.path(f"{key}.file", s.get("file"))
        source = ConstituentSource(
            file, _columns(r, f"{key}.columns", s.get("columns")), _layout(r, key, s, file)
        )
        shown = s["file"]
        if source.file == bench.file:
            _check_benchmark_overlap(r, key, source, shown, bench, bench_file)
        for column in source.columns or (None,):
            if (source.file, column) in taken and column is not None:
                raise r.error(
                    f"column {column!r} of {shown!r} is listed in both "
                    f"'{taken[source.file, column]}.columns' and '{key}.columns'; "
                    "list each constituent once"
                )
            other = _clash(taken, source.file, column)
            if other is not None:
                raise r.error(
                    f"'{other}' and '{key}' both take columns of {shown!r} and one takes "
                    "them all ('columns: all'); list each constituent once"
                )
            taken[source.file, column] = key
        sources.append(source)
    return tuple(sources)


def _clash(taken: dict[tuple[Path, str | None], str], file: Path, column: str | None) -> str | None:
    """Key path of an earlier source that already takes ``column`` (None = all) of ``file``."""
    for (f, c), key in taken.items():
        if f == file and (c is None or column is None or c == column):
            return key
    return None


def _check_benchmark_overlap(
    r: Reader, key: str, source: ConstituentSource, shown: str, bench: SeriesRef, bench_file: str
) -> None:
    if source.columns is None:
        raise r.error(
            f"'{key}' takes every column of {shown!r} ('columns: all'), but that file "
            f"also holds the benchmark ('benchmark.file' is {bench_file!r}); list the "
            f"constituent columns in '{key}.columns'"
        )
    if bench.column is None:
        raise r.error(
            f"'{key}' takes columns of {shown!r}, which also holds the benchmark, so the "
            "benchmark is not that file's only column; set 'benchmark.column'"
        )
    if bench.column in source.columns:
        raise r.error(
            f"'{key}.columns' lists {bench.column!r}, the benchmark column of the same "
            "file; remove it from the constituents"
        )


def _columns(r: Reader, key: str, value: Any) -> tuple[str, ...] | None:
    if value is None or value == "all":
        return None
    must = "'all' or a non-empty list of column names"
    if isinstance(value, str):
        raise r.error(f"'{key}' must be {must}; got {value!r} (for one column write [{value}])")
    if not isinstance(value, list) or not value:
        raise r.bad(key, must, value)
    for i, column in enumerate(value):
        r.text(f"{key}[{i}]", column)
        if column in value[:i]:
            raise r.error(f"'{key}' lists {column!r} twice; list each column once")
    return tuple(value)


def parse_risk_free(r: Reader, value: Any) -> RiskFreeSpec | None:
    if value is None:
        return None
    s = r.section("risk_free", value, ("file", "column", "unit", "quote", *LAYOUT_KEYS))
    file = r.path("risk_free.file", s.get("file"))
    return RiskFreeSpec(
        file=file,
        column=r.text("risk_free.column", s.get("column")),
        unit=r.choice("risk_free.unit", s.get("unit"), UNITS, RiskFreeSpec.unit),
        quote=r.choice("risk_free.quote", s.get("quote"), QUOTES, RiskFreeSpec.quote),
        layout=_layout(r, "risk_free", s, file),
    )


def parse_data(r: Reader, value: Any) -> DataSpec:
    s = r.section(
        "data",
        value,
        (
            "date_column",
            "date_format",
            "values",
            "returns_unit",
            "missing",
            "periods_per_year",
            "carry_forward",
            "min_coverage",
        ),
    )
    values = r.choice("data.values", s.get("values"), VALUES, DataSpec.values)
    if values == "prices" and s.get("returns_unit") is not None:
        raise r.error(
            "'data.returns_unit' applies only with 'data.values: returns', but "
            "'data.values' is 'prices'; remove 'data.returns_unit'"
        )
    carry = r.integer("data.carry_forward", s.get("carry_forward"), 0, DataSpec.carry_forward)
    if carry and values != "prices":
        raise r.error(
            "'data.carry_forward' applies only with 'data.values: prices': repeating a price "
            "makes the return over the gap 0 and puts the move on the next price, but a missing "
            "return is a move nobody knows, and filling it would invent one; remove "
            "'data.carry_forward' (data.min_coverage and data.missing handle the gaps)"
        )
    ppy = s.get("periods_per_year")
    return DataSpec(
        date_column=r.text("data.date_column", s.get("date_column"), DataSpec.date_column),
        date_format=_date_format(r, s.get("date_format")),
        values=values,
        returns_unit=r.choice(
            "data.returns_unit", s.get("returns_unit"), UNITS, DataSpec.returns_unit
        ),
        missing=r.choice("data.missing", s.get("missing"), MISSING, DataSpec.missing),
        periods_per_year=None
        if ppy == "auto"
        else r.integer(
            "data.periods_per_year", ppy, 1, None, "'auto' or an integer >= 1 (252, 52, 12, 4)"
        ),
        carry_forward=carry,
        min_coverage=_coverage(r, s.get("min_coverage")),
    )


def _coverage(r: Reader, value: Any) -> float | None:
    if value is None:
        return None
    must = "a number above 0 and at most 1 (the share of the window's dates), or null for off"
    share = r.number("data.min_coverage", value, 0.0, 1.0, must)
    if share == 0.0:
        raise r.bad("data.min_coverage", must, value)
    return share


def _date_format(r: Reader, value: Any) -> str | None:
    fmt = r.text("data.date_format", value)
    if fmt is None:
        return None
    # A round trip through a sample date catches bad directives and formats with none.
    sample = datetime(2001, 2, 3)
    try:
        ok = "%" in fmt and datetime.strptime(sample.strftime(fmt), fmt) is not None
    except ValueError:
        ok = False
    if not ok:
        raise r.bad(
            "data.date_format",
            "a strptime format such as '%d/%m/%Y' (or null for YYYY-MM-DD)",
            value,
        )
    return fmt


def parse_window(r: Reader, value: Any) -> WindowSpec:
    s = r.section("window", value, ("start", "lookback", "holdout"))
    start = r.day("window.start", s.get("start"))
    lookback = r.integer("window.lookback", s.get("lookback"), 2, None)
    holdout = r.integer("window.holdout", s.get("holdout"), 0, None)
    if start is not None and lookback is not None:
        raise r.error(
            "'window.start' and 'window.lookback' cannot both be set; keep 'start' "
            "(first return date) or 'lookback' (rows ending at the as-of date)"
        )
    if lookback is not None and holdout is not None and holdout >= lookback:
        raise r.error(
            f"'window.holdout' ({holdout}) must be smaller than 'window.lookback' "
            f"({lookback}) so rows are left for choosing the penalty"
        )
    return WindowSpec(start=start, lookback=lookback, holdout=holdout)


def parse_grid(r: Reader, value: Any) -> GridSpec:
    s = r.section("penalty_grid", value, ("count", "min_ratio"))
    ratio = s.get("min_ratio")
    return GridSpec(
        count=r.integer("penalty_grid.count", s.get("count"), 2, GridSpec.count),
        min_ratio=(
            GridSpec.min_ratio if ratio is None else r.fraction("penalty_grid.min_ratio", ratio)
        ),
    )


def parse_cv(r: Reader, value: Any) -> CVSpec:
    s = r.section("cross_validation", value, ("folds", "min_train", "gap", "scheme", "rule"))
    return CVSpec(
        folds=r.integer("cross_validation.folds", s.get("folds"), 2, CVSpec.folds),
        min_train=r.integer("cross_validation.min_train", s.get("min_train"), 1, CVSpec.min_train),
        gap=r.integer("cross_validation.gap", s.get("gap"), 0, CVSpec.gap),
        scheme=r.choice("cross_validation.scheme", s.get("scheme"), SCHEMES, CVSpec.scheme),
        rule=r.choice("cross_validation.rule", s.get("rule"), RULES, CVSpec.rule),
    )


def parse_output(r: Reader, value: Any) -> OutputSpec:
    s = r.section("output", value, ("directory", "top_weights"))
    return OutputSpec(
        directory=r.path("output.directory", s.get("directory"), DEFAULT_OUTPUT_DIRECTORY),
        top_weights=r.integer(
            "output.top_weights", s.get("top_weights"), 1, OutputSpec.top_weights
        ),
    )
