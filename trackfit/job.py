"""The job file: YAML in, one validated, immutable :class:`Job` out.

:func:`load_job` reads the file with ``yaml.safe_load``, rejects unknown keys (suggesting the
closest known one), checks every value, resolves paths against the job file's folder and fills
in defaults. Every problem is a :class:`~trackfit.errors.JobError` whose message names the job
file, the key path (``cross_validation.folds``, ``constituents[1].columns``; list indices count
from 0), the value found and what is allowed. Whether data files exist is the data layer's
business, not this module's.

A key written with no value (YAML null) means the same as leaving the key out.
"""

from __future__ import annotations

import difflib
import re
from dataclasses import dataclass
from datetime import date, datetime
from pathlib import Path
from typing import Any

import yaml

from trackfit.core.models import KINDS, ModelSpec
from trackfit.errors import JobError


@dataclass(frozen=True)
class SeriesRef:
    """One column of one file. ``column`` None means: the file's only non-date column."""

    file: Path
    column: str | None


@dataclass(frozen=True)
class ConstituentSource:
    """Columns of one file. ``columns`` None means: every column but the date column."""

    file: Path
    columns: tuple[str, ...] | None


@dataclass(frozen=True)
class RiskFreeSpec:
    """A per-period or annual rate, subtracted from benchmark and constituent returns."""

    file: Path
    column: str | None
    unit: str = "decimal"  # "decimal" | "percent"
    quote: str = "per_period"  # "per_period" | "annual"


@dataclass(frozen=True)
class DataSpec:
    """How to read the data files: date column and format, what the values are, gaps."""

    date_column: str = "date"
    date_format: str | None = None  # strftime-style format; None = ISO 8601 dates
    values: str = "returns"  # "returns" | "prices"
    returns_unit: str = "decimal"  # "decimal" | "percent" (only for values: returns)
    missing: str = "error"  # "error" | "drop_dates"
    periods_per_year: int | None = None  # None = inferred from date spacing


@dataclass(frozen=True)
class WindowSpec:
    """Which return rows to fit on (``start`` or ``lookback``, never both) and the holdout."""

    start: date | None = None  # first return date of the fit window
    lookback: int | None = None  # or: number of return rows ending at the as-of date
    holdout: int | None = None  # rows at the end of the window; None = 20 % of the window


@dataclass(frozen=True)
class GridSpec:
    """Penalty grid for lasso and elastic net: ``count`` alphas, smallest/largest ``min_ratio``."""

    count: int = 100
    min_ratio: float = 1e-3  # smallest / largest penalty for lasso and elastic net


@dataclass(frozen=True)
class CVSpec:
    """Time-ordered cross-validation: fold count, layout and the rule that picks alpha."""

    folds: int = 5
    min_train: int = 1
    gap: int = 0
    scheme: str = "expanding"  # "expanding" | "rolling"
    rule: str = "min_error"  # "min_error" | "one_standard_error"


@dataclass(frozen=True)
class OutputSpec:
    """Where reports go and how many rows the largest-weights table has."""

    directory: Path  # absolute
    top_weights: int = 10


@dataclass(frozen=True)
class Bounds:
    """A lower and an upper bound on a weight or a sum of weights; None = no bound on that side."""

    min: float | None = None
    max: float | None = None


@dataclass(frozen=True)
class GroupsSpec:
    """Group limits: a file mapping each constituent to a group, and bounds on group totals."""

    file: Path  # absolute
    name_column: str = "name"
    group_column: str = "group"
    each: Bounds | None = None  # bounds for every group not listed in ``bounds``
    bounds: tuple[tuple[str, Bounds], ...] = ()  # (group label, bounds), in file order of the job


@dataclass(frozen=True)
class LimitsSpec:
    """Mandate limits as written in the job (names, not positions)."""

    long_only: bool = False
    budget: tuple[float, float] | None = None  # "fully_invested" -> (1.0, 1.0); {min, max}
    weight: Bounds | None = None  # bounds for every name
    names: tuple[tuple[str, Bounds], ...] = ()  # per-name overrides of ``weight``
    groups: GroupsSpec | None = None
    max_names: int | None = None
    min_position: float | None = None


@dataclass(frozen=True)
class HoldingsSpec:
    """Current holdings and the turnover limits measured against them."""

    file: Path  # absolute
    turnover_penalty: float = 0.0
    max_turnover: float | None = None  # one-way: sum(|w - w_current|) / 2


@dataclass(frozen=True)
class Job:
    """One validated job file; every path absolute, every collection a tuple."""

    path: Path  # absolute path of the job file
    name: str
    benchmark: SeriesRef
    constituents: tuple[ConstituentSource, ...]
    risk_free: RiskFreeSpec | None
    data: DataSpec
    window: WindowSpec
    models: tuple[ModelSpec, ...]
    hold: str  # name of the model whose weights are the ones to hold
    grid: GridSpec
    cv: CVSpec
    output: OutputSpec
    limits: LimitsSpec = LimitsSpec()
    holdings: HoldingsSpec | None = None


#: Always computed for comparison; may be held, never listed under ``models``.
BASELINES = ("ols", "equal_weight")
DEFAULT_L1_RATIOS = (0.25, 0.5, 0.75)
DEFAULT_MODELS = (
    ModelSpec("lasso", "lasso", (1.0,)),
    ModelSpec("elastic_net", "elastic_net", DEFAULT_L1_RATIOS),
    ModelSpec("ridge", "ridge", (0.0,)),
)
DEFAULT_OUTPUT_DIRECTORY = "out"

UNITS = ("decimal", "percent")
QUOTES = ("per_period", "annual")
VALUES = ("returns", "prices")
MISSING = ("error", "drop_dates")
SCHEMES = ("expanding", "rolling")
RULES = ("min_error", "one_standard_error")

_TOP_KEYS = (
    "name", "benchmark", "constituents", "risk_free", "data", "window", "models", "hold",
    "penalty_grid", "cross_validation", "output",
)
_ISO_DATE = re.compile(r"\d{4}-\d{2}-\d{2}")


def load_job(path: str | Path) -> Job:
    """Read, validate and resolve one job file.

    Parameters
    ----------
    path : str or Path
        The YAML job file. Relative paths inside it are taken from its folder.

    Returns
    -------
    Job
        Immutable; every path in it is absolute.

    Raises
    ------
    JobError
        The file is missing, unreadable or not valid YAML, or a key is unknown, missing or
        has a bad value. The message names the file and the key path.
    """
    src = str(path)
    raw = _read_yaml(Path(path), src)
    job_path = Path(path).expanduser().resolve()
    return _build(_Reader(src, job_path.parent), raw, job_path)


# -- reading ------------------------------------------------------------------------------------


def _read_yaml(path: Path, src: str) -> dict:
    try:
        text = path.read_text(encoding="utf-8-sig")
    except FileNotFoundError:
        raise JobError(f"{src}: job file not found; check the path") from None
    except IsADirectoryError:
        raise JobError(f"{src}: is a folder, not a job file; give the path of the YAML "
                       "file") from None
    except UnicodeDecodeError as exc:
        raise JobError(f"{src}: job file is not UTF-8 text ({exc.reason} at byte offset "
                       f"{exc.start}); save it as UTF-8") from None
    except OSError as exc:
        raise JobError(f"{src}: cannot read the job file ({exc.strerror or exc}); "
                       "check its permissions") from None
    try:
        # Composing first gives line numbers for problems safe_load would hide or lose.
        _check_nodes(yaml.compose(text, Loader=yaml.SafeLoader), src)
        raw = yaml.safe_load(text)
    except yaml.YAMLError as exc:
        raise JobError(f"{src}: {_describe_yaml_error(exc)}; fix the YAML syntax") from None
    except (ValueError, TypeError, AttributeError) as exc:  # a value YAML cannot construct
        raise JobError(f"{src}: a value cannot be read ({exc}); check the dates and any value "
                       "with an explicit YAML tag such as !!int") from None
    if raw is None:
        raise JobError(f"{src}: job file is empty; it needs at least 'benchmark' and "
                       "'constituents'")
    if not isinstance(raw, dict):
        raise JobError(f"{src}: the top level must be a mapping of keys such as 'benchmark:' and "
                       f"'constituents:'; got a {_yaml_kind(raw)}")
    return raw


def _describe_yaml_error(exc: yaml.YAMLError) -> str:
    mark = getattr(exc, "problem_mark", None)
    problem = getattr(exc, "problem", None) or str(exc)
    context = getattr(exc, "context", None)
    where = f"line {mark.line + 1}, column {mark.column + 1}: " if mark is not None else ""
    return f"YAML error at {where}" + (f"{context}, " if context else "") + problem


def _check_nodes(root: yaml.Node | None, src: str) -> None:
    """Reject duplicate keys (YAML would silently keep the last) and impossible dates."""
    constructor = yaml.SafeLoader("")
    stack, seen = [root], set()
    while stack:
        node = stack.pop()
        if node is None or id(node) in seen:
            continue
        seen.add(id(node))
        if isinstance(node, yaml.MappingNode):
            first: dict[tuple[str, str], int] = {}
            for key, value in node.value:
                if isinstance(key, yaml.ScalarNode) and key.tag != "tag:yaml.org,2002:merge":
                    line = key.start_mark.line + 1
                    if (key.tag, key.value) in first:
                        raise JobError(f"{src}: key '{key.value}' appears twice in one mapping "
                                       f"(lines {first[key.tag, key.value]} and {line}); keep one")
                    first[key.tag, key.value] = line
                stack.extend((key, value))
        elif isinstance(node, yaml.SequenceNode):
            stack.extend(node.value)
        elif node.tag == "tag:yaml.org,2002:timestamp":
            try:
                constructor.construct_yaml_timestamp(node)
            except (ValueError, AttributeError) as exc:  # AttributeError: '!!timestamp' on text
                where = f"line {node.start_mark.line + 1}, column {node.start_mark.column + 1}"
                reason = f" ({exc})" if isinstance(exc, ValueError) else ""
                raise JobError(f"{src}: {node.value!r} at {where} is not a real date{reason}; "
                               "write a calendar date as YYYY-MM-DD") from None


# -- values -------------------------------------------------------------------------------------


def _yaml_kind(value: Any) -> str:
    if isinstance(value, bool):
        return "boolean"
    if isinstance(value, (datetime, date)):
        return "date"
    return {int: "number", float: "number", str: "string", list: "list", dict: "mapping"}.get(
        type(value), type(value).__name__)


def _got(value: Any, want: str = "") -> str:
    """``repr(value)``, shortened, with a hint when YAML probably read it differently than meant."""
    text = repr(value)
    if len(text) > 80:
        text = text[:77] + "..."
    if want == "text" and isinstance(value, (bool, int, float, date)):
        return f"{text} (YAML read this as a {_yaml_kind(value)}; put it in quotes)"
    if want == "number" and isinstance(value, str):
        try:
            float(value)
        except ValueError:
            return text
        if re.fullmatch(r"[-+]?[0-9.]+[eE][-+]?[0-9]+", value.strip()):
            return f"{text} (YAML reads this exponent form as text; write it as 0.001 or 1.0e-3)"
        return f"{text} (text, not a number; remove the quotes)"
    return text


def _closest(value: Any, allowed: tuple[str, ...]) -> str | None:
    """The allowed word nearest to ``value`` (ignoring case), if any is near enough."""
    if not isinstance(value, str):
        return None
    lowered = {a.lower(): a for a in allowed}
    close = difflib.get_close_matches(value.lower(), list(lowered), n=1)
    return lowered[close[0]] if close else None


class _Reader:
    """Typed, path-aware accessors that raise JobError naming the job file and the key path."""

    def __init__(self, src: str, base: Path) -> None:
        self.src = src
        self.base = base

    def error(self, message: str) -> JobError:
        return JobError(f"{self.src}: {message}")

    def bad(self, key: str, must: str, value: Any, want: str = "",
            suggest: str | None = None) -> JobError:
        """The one template: "'<key>' must be <must>; got <value>." (plus a suggestion)."""
        end = f"; did you mean '{suggest}'?" if suggest else "."
        return self.error(f"'{key}' must be {must}; got {_got(value, want)}{end}")

    def section(self, key: str, value: Any, allowed: tuple[str, ...]) -> dict:
        """A mapping (null = empty) whose keys are all in ``allowed``."""
        if value is None:
            return {}
        if not isinstance(value, dict):
            names = ", ".join(f"'{k}'" for k in allowed)
            raise self.bad(key, f"a mapping with keys among {names}", value)
        for name in value:
            if name not in allowed:
                raise self.unknown(key, name, allowed)
        return value

    def unknown(self, prefix: str, name: Any, allowed: tuple[str, ...],
                what: str = "key") -> JobError:
        full = f"{prefix}.{name}" if prefix else str(name)
        message = f"unknown {what} '{full}'"
        if not isinstance(name, str):
            return self.error(f"{message} (YAML read it as a {_yaml_kind(name)}); "
                              f"allowed: {', '.join(allowed)}")
        close = _closest(name, allowed)
        return self.error(f"{message}; did you mean '{close}'?" if close else
                          f"{message}; allowed: {', '.join(allowed)}")

    def text(self, key: str, value: Any, default: str | None = None) -> str | None:
        if value is None:
            return default
        if not isinstance(value, str) or not value.strip():
            raise self.bad(key, "a non-empty string", value, "text")
        return value

    def choice(self, key: str, value: Any, allowed: tuple[str, ...], default: str) -> str:
        if value is None:
            return default
        if not isinstance(value, str) or value not in allowed:
            raise self.bad(key, "one of " + ", ".join(f"'{a}'" for a in allowed), value,
                           suggest=_closest(value, allowed))
        return value

    def integer(self, key: str, value: Any, minimum: int, default: int | None,
                must: str | None = None) -> int | None:
        """An int >= ``minimum``; bools, floats such as 5.0 and strings such as '5' are rejected."""
        if value is None:
            return default
        if type(value) is not int or value < minimum:
            raise self.bad(key, must or f"an integer >= {minimum}", value, "number")
        return value

    def fraction(self, key: str, value: Any) -> float:
        """A number strictly between 0 and 1 (bools and strings rejected)."""
        if isinstance(value, bool) or not isinstance(value, (int, float)) or not 0 < value < 1:
            raise self.bad(key, "a number strictly between 0 and 1", value, "number")
        return float(value)

    def path(self, key: str, value: Any, default: str | None = None) -> Path:
        value = self.text(key, value, default)
        if value is None:
            raise self.error(f"'{key}' is required: the path of a file, relative to the job file's "
                             "folder")
        given = Path(value).expanduser()
        return (given if given.is_absolute() else self.base / given).resolve()

    def day(self, key: str, value: Any) -> date | None:
        if value is None:
            return None
        if isinstance(value, datetime):
            raise self.bad(key, "a date without a time of day (YYYY-MM-DD)", value)
        if isinstance(value, date):
            return value
        if isinstance(value, str) and _ISO_DATE.fullmatch(value.strip()):
            try:
                return date.fromisoformat(value.strip())
            except ValueError:
                pass
        raise self.bad(key, "a calendar date written YYYY-MM-DD", value)


# -- sections -----------------------------------------------------------------------------------


def _build(r: _Reader, raw: dict, job_path: Path) -> Job:
    r.section("", raw, _TOP_KEYS)
    benchmark, bench_file = _benchmark(r, raw.get("benchmark"))
    models = _models(r, raw.get("models"))
    return Job(
        path=job_path,
        name=r.text("name", raw.get("name"), job_path.stem),
        benchmark=benchmark,
        constituents=_constituents(r, raw.get("constituents"), benchmark, bench_file),
        risk_free=_risk_free(r, raw.get("risk_free")),
        data=_data(r, raw.get("data")),
        window=_window(r, raw.get("window")),
        models=models,
        hold=_hold(r, raw.get("hold"), models),
        grid=_grid(r, raw.get("penalty_grid")),
        cv=_cv(r, raw.get("cross_validation")),
        output=_output(r, raw.get("output")),
    )


def _required(r: _Reader, key: str, value: Any, what: str) -> None:
    if value is None:
        raise r.error(f"'{key}' is required: {what}")


def _benchmark(r: _Reader, value: Any) -> tuple[SeriesRef, str]:
    _required(r, "benchmark", value, "a mapping with 'file' and optionally 'column'")
    s = r.section("benchmark", value, ("file", "column"))
    ref = SeriesRef(r.path("benchmark.file", s.get("file")),
                    r.text("benchmark.column", s.get("column")))
    return ref, s["file"]


def _constituents(r: _Reader, value: Any, bench: SeriesRef,
                  bench_file: str) -> tuple[ConstituentSource, ...]:
    what = "a mapping with 'file' and 'columns', or a non-empty list of such mappings"
    _required(r, "constituents", value, what)
    if isinstance(value, dict):
        entries = [("constituents", value)]
    elif isinstance(value, list) and value:
        entries = [(f"constituents[{i}]", item) for i, item in enumerate(value)]
    else:
        raise r.bad("constituents", what, value)
    sources: list[ConstituentSource] = []
    taken: dict[tuple[Path, str | None], str] = {}  # (file, column; None = all) -> key path
    for key, item in entries:
        s = r.section(key, item, ("file", "columns"))
        source = ConstituentSource(r.path(f"{key}.file", s.get("file")),
                                   _columns(r, f"{key}.columns", s.get("columns")))
        shown = s["file"]
        if source.file == bench.file:
            _check_benchmark_overlap(r, key, source, shown, bench, bench_file)
        for column in source.columns or (None,):
            if (source.file, column) in taken and column is not None:
                raise r.error(f"column {column!r} of {shown!r} is listed in both "
                              f"'{taken[source.file, column]}.columns' and '{key}.columns'; "
                              "list each constituent once")
            other = _clash(taken, source.file, column)
            if other is not None:
                raise r.error(f"'{other}' and '{key}' both take columns of {shown!r} and one takes "
                              "them all ('columns: all'); list each constituent once")
            taken[source.file, column] = key
        sources.append(source)
    return tuple(sources)


def _clash(taken: dict[tuple[Path, str | None], str], file: Path, column: str | None) -> str | None:
    """Key path of an earlier source that already takes ``column`` (None = all) of ``file``."""
    for (f, c), key in taken.items():
        if f == file and (c is None or column is None or c == column):
            return key
    return None


def _check_benchmark_overlap(r: _Reader, key: str, source: ConstituentSource, shown: str,
                             bench: SeriesRef, bench_file: str) -> None:
    if source.columns is None:
        raise r.error(f"'{key}' takes every column of {shown!r} ('columns: all'), but that file "
                      f"also holds the benchmark ('benchmark.file' is {bench_file!r}); list the "
                      f"constituent columns in '{key}.columns'")
    if bench.column is None:
        raise r.error(f"'{key}' takes columns of {shown!r}, which also holds the benchmark, so the "
                      "benchmark is not that file's only column; set 'benchmark.column'")
    if bench.column in source.columns:
        raise r.error(f"'{key}.columns' lists {bench.column!r}, the benchmark column of the same "
                      "file; remove it from the constituents")


def _columns(r: _Reader, key: str, value: Any) -> tuple[str, ...] | None:
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


def _risk_free(r: _Reader, value: Any) -> RiskFreeSpec | None:
    if value is None:
        return None
    s = r.section("risk_free", value, ("file", "column", "unit", "quote"))
    return RiskFreeSpec(
        file=r.path("risk_free.file", s.get("file")),
        column=r.text("risk_free.column", s.get("column")),
        unit=r.choice("risk_free.unit", s.get("unit"), UNITS, RiskFreeSpec.unit),
        quote=r.choice("risk_free.quote", s.get("quote"), QUOTES, RiskFreeSpec.quote),
    )


def _data(r: _Reader, value: Any) -> DataSpec:
    s = r.section("data", value, ("date_column", "date_format", "values", "returns_unit",
                                  "missing", "periods_per_year"))
    values = r.choice("data.values", s.get("values"), VALUES, DataSpec.values)
    if values == "prices" and s.get("returns_unit") is not None:
        raise r.error("'data.returns_unit' applies only with 'data.values: returns', but "
                      "'data.values' is 'prices'; remove 'data.returns_unit'")
    ppy = s.get("periods_per_year")
    return DataSpec(
        date_column=r.text("data.date_column", s.get("date_column"), DataSpec.date_column),
        date_format=_date_format(r, s.get("date_format")),
        values=values,
        returns_unit=r.choice("data.returns_unit", s.get("returns_unit"), UNITS,
                              DataSpec.returns_unit),
        missing=r.choice("data.missing", s.get("missing"), MISSING, DataSpec.missing),
        periods_per_year=None if ppy == "auto" else r.integer(
            "data.periods_per_year", ppy, 1, None, "'auto' or an integer >= 1 (252, 52, 12, 4)"),
    )


def _date_format(r: _Reader, value: Any) -> str | None:
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
        raise r.bad("data.date_format", "a strptime format such as '%d/%m/%Y' (or null for "
                    "YYYY-MM-DD)", value)
    return fmt


def _window(r: _Reader, value: Any) -> WindowSpec:
    s = r.section("window", value, ("start", "lookback", "holdout"))
    start = r.day("window.start", s.get("start"))
    lookback = r.integer("window.lookback", s.get("lookback"), 2, None)
    holdout = r.integer("window.holdout", s.get("holdout"), 0, None)
    if start is not None and lookback is not None:
        raise r.error("'window.start' and 'window.lookback' cannot both be set; keep 'start' "
                      "(first return date) or 'lookback' (rows ending at the as-of date)")
    if lookback is not None and holdout is not None and holdout >= lookback:
        raise r.error(f"'window.holdout' ({holdout}) must be smaller than 'window.lookback' "
                      f"({lookback}) so rows are left for choosing the penalty")
    return WindowSpec(start=start, lookback=lookback, holdout=holdout)


def _models(r: _Reader, value: Any) -> tuple[ModelSpec, ...]:
    if value is None:
        return DEFAULT_MODELS
    if not isinstance(value, (dict, list)) or not value:
        raise r.bad("models", f"a non-empty mapping or list of model names ({', '.join(KINDS)})",
                    value)
    if isinstance(value, list):
        names = [_model_name(r, f"models[{i}]", item) for i, item in enumerate(value)]
        for i, name in enumerate(names):
            if name in names[:i]:
                raise r.error(f"'models' lists {name!r} twice; list each model once")
        return tuple(_model(r, name, None) for name in names)
    return tuple(_model(r, _model_name(r, "models", name), options)
                 for name, options in value.items())


def _model_name(r: _Reader, key: str, name: Any) -> str:
    """Check one model name; ``key`` is the list entry's path or 'models' for a mapping key."""
    if name in BASELINES:
        raise r.error(f"{name!r} in '{key}': ols and equal_weight are always computed as "
                      "baselines; do not list them under 'models' (they may still be chosen "
                      "with 'hold')")
    if isinstance(name, str) and name in KINDS:
        return name
    if key == "models":
        raise r.unknown("models", name, KINDS, what="model")
    if isinstance(name, (dict, list)):
        raise r.bad(key, "a model name (" + ", ".join(KINDS) + "); to give options, write 'models' "
                    "as a mapping such as {elastic_net: {l1_ratio: [0.5]}}", name)
    raise r.bad(key, f"one of {', '.join(KINDS)}", name, suggest=_closest(name, KINDS))


def _model(r: _Reader, name: str, options: Any) -> ModelSpec:
    key = f"models.{name}"
    if name != "elastic_net":
        if options not in (None, {}):
            raise r.bad(key, f"empty ('{name}: {{}}' or '{name}:'); only elastic_net takes options "
                        "(l1_ratio)", options)
        return ModelSpec(name, name, (1.0,) if name == "lasso" else (0.0,))
    s = r.section(key, options, ("l1_ratio",))
    ratios = s.get("l1_ratio")
    if ratios is None:
        return ModelSpec(name, name, DEFAULT_L1_RATIOS)
    items = ratios if isinstance(ratios, list) else [ratios]
    if not items:
        raise r.bad(f"{key}.l1_ratio", "a number or a non-empty list of numbers strictly between "
                    "0 and 1", ratios)
    values = [r.fraction(f"{key}.l1_ratio[{i}]" if isinstance(ratios, list) else f"{key}.l1_ratio",
                         v) for i, v in enumerate(items)]
    for i, v in enumerate(values):
        if v in values[:i]:
            raise r.error(f"'{key}.l1_ratio' lists {items[i]!r} twice; list each value once")
    return ModelSpec(name, name, tuple(values))


def _hold(r: _Reader, value: Any, models: tuple[ModelSpec, ...]) -> str:
    if value is None:
        return models[0].name
    allowed = tuple(m.name for m in models) + BASELINES
    if not isinstance(value, str) or value not in allowed:
        raise r.bad("hold", "a model listed under 'models' or a baseline: "
                    + ", ".join(f"'{a}'" for a in allowed), value)
    return value


def _grid(r: _Reader, value: Any) -> GridSpec:
    s = r.section("penalty_grid", value, ("count", "min_ratio"))
    ratio = s.get("min_ratio")
    return GridSpec(
        count=r.integer("penalty_grid.count", s.get("count"), 2, GridSpec.count),
        min_ratio=(GridSpec.min_ratio if ratio is None
                   else r.fraction("penalty_grid.min_ratio", ratio)),
    )


def _cv(r: _Reader, value: Any) -> CVSpec:
    s = r.section("cross_validation", value, ("folds", "min_train", "gap", "scheme", "rule"))
    return CVSpec(
        folds=r.integer("cross_validation.folds", s.get("folds"), 2, CVSpec.folds),
        min_train=r.integer("cross_validation.min_train", s.get("min_train"), 1, CVSpec.min_train),
        gap=r.integer("cross_validation.gap", s.get("gap"), 0, CVSpec.gap),
        scheme=r.choice("cross_validation.scheme", s.get("scheme"), SCHEMES, CVSpec.scheme),
        rule=r.choice("cross_validation.rule", s.get("rule"), RULES, CVSpec.rule),
    )


def _output(r: _Reader, value: Any) -> OutputSpec:
    s = r.section("output", value, ("directory", "top_weights"))
    return OutputSpec(
        directory=r.path("output.directory", s.get("directory"), DEFAULT_OUTPUT_DIRECTORY),
        top_weights=r.integer("output.top_weights", s.get("top_weights"), 1,
                              OutputSpec.top_weights),
    )
