"""Tests for trackfit.job: the YAML job file -> one validated, immutable Job."""

from __future__ import annotations

import dataclasses
import re
from datetime import date
from pathlib import Path

import pytest

import trackfit.job as job_module
from trackfit.core.models import ModelSpec
from trackfit.errors import JobError
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
    load_job,
)

FULL = """\
name: Lumen Bay tracker
benchmark:
  file: data/index.csv
  column: lbx60
constituents:
  - file: data/constituents.csv
    columns: all
  - file: ../shared/extra.csv
    columns: [kestrel_minerals, tidewater_power]
risk_free:
  file: data/deposit_rate.csv
  column: rate
  unit: percent
  quote: annual
data:
  date_column: day
  date_format: "%d/%m/%Y"
  values: prices
  missing: drop_dates
  periods_per_year: 252
window:
  start: 2021-01-04
  holdout: 126
models:
  ridge: {}
  elastic_net:
    l1_ratio: [0.5, 0.9]
  lasso:
hold: elastic_net
penalty_grid:
  count: 50
  min_ratio: 0.0001
cross_validation:
  folds: 4
  min_train: 60
  gap: 5
  scheme: rolling
  rule: one_standard_error
output:
  directory: results/monthly
  top_weights: 15
"""

MINIMAL = """\
benchmark: {file: index.csv, column: lbx60}
constituents: {file: constituents.csv}
"""


def _write(folder: Path, text: str, name: str = "job.yaml") -> Path:
    folder.mkdir(parents=True, exist_ok=True)
    path = folder / name
    path.write_text(text, encoding="utf-8")
    return path


def test_full_job_round_trip(tmp_path):
    path = _write(tmp_path / "jobs", FULL)
    job = load_job(path)
    base = (tmp_path / "jobs").resolve()
    assert job == Job(
        path=base / "job.yaml",
        name="Lumen Bay tracker",
        benchmark=SeriesRef(base / "data" / "index.csv", "lbx60"),
        constituents=(
            ConstituentSource(base / "data" / "constituents.csv", None),
            ConstituentSource(
                tmp_path.resolve() / "shared" / "extra.csv", ("kestrel_minerals", "tidewater_power")
            ),
        ),
        risk_free=RiskFreeSpec(base / "data" / "deposit_rate.csv", "rate", "percent", "annual"),
        data=DataSpec(
            date_column="day",
            date_format="%d/%m/%Y",
            values="prices",
            returns_unit="decimal",
            missing="drop_dates",
            periods_per_year=252,
        ),
        window=WindowSpec(start=date(2021, 1, 4), lookback=None, holdout=126),
        models=(
            ModelSpec("ridge", "ridge", (0.0,)),
            ModelSpec("elastic_net", "elastic_net", (0.5, 0.9)),
            ModelSpec("lasso", "lasso", (1.0,)),
        ),
        hold="elastic_net",
        grid=GridSpec(count=50, min_ratio=0.0001),
        cv=CVSpec(folds=4, min_train=60, gap=5, scheme="rolling", rule="one_standard_error"),
        output=OutputSpec(directory=base / "results" / "monthly", top_weights=15),
    )
    for p in (
        job.path,
        job.benchmark.file,
        job.risk_free.file,
        job.output.directory,
        *(c.file for c in job.constituents),
    ):
        assert p.is_absolute() and ".." not in p.parts
    assert not job.output.directory.exists()  # the output folder need not exist


def test_full_job_is_immutable_and_uses_tuples(tmp_path):
    job = load_job(_write(tmp_path, FULL))
    with pytest.raises(dataclasses.FrozenInstanceError):
        job.name = "other"  # type: ignore[misc]
    assert isinstance(job.constituents, tuple)
    assert isinstance(job.constituents[1].columns, tuple)
    assert isinstance(job.models, tuple)
    assert all(isinstance(m.l1_ratios, tuple) for m in job.models)
    assert all(isinstance(v, float) for m in job.models for v in m.l1_ratios)


def test_minimal_job_defaults(tmp_path):
    path = _write(tmp_path, MINIMAL, name="lumen_bay.yaml")
    job = load_job(path)
    base = tmp_path.resolve()
    assert job.path == base / "lumen_bay.yaml"
    assert job.name == "lumen_bay"
    assert job.benchmark == SeriesRef(base / "index.csv", "lbx60")
    assert job.constituents == (ConstituentSource(base / "constituents.csv", None),)
    assert job.risk_free is None
    assert job.data == DataSpec()
    assert job.data.periods_per_year is None
    assert job.window == WindowSpec(start=None, lookback=None, holdout=None)
    assert job.models == (
        ModelSpec("lasso", "lasso", (1.0,)),
        ModelSpec("elastic_net", "elastic_net", (0.25, 0.5, 0.75)),
        ModelSpec("ridge", "ridge", (0.0,)),
    )
    assert job.hold == "lasso"
    assert job.grid == GridSpec(count=100, min_ratio=0.001)
    assert job.cv == CVSpec(folds=5, min_train=1, gap=0, scheme="expanding", rule="min_error")
    assert job.output == OutputSpec(directory=base / "out", top_weights=10)


def test_null_values_mean_defaults(tmp_path):
    text = MINIMAL + (
        "name:\nrisk_free:\ndata:\n  date_format:\n  periods_per_year: auto\nwindow:\n"
        "models:\nhold:\npenalty_grid: {count: null}\ncross_validation:\n"
        "output: {directory: null}\n"
    )
    with_nulls = load_job(_write(tmp_path, text))
    assert with_nulls == load_job(_write(tmp_path, MINIMAL))


@pytest.mark.parametrize(
    "extra, models, hold",
    [
        (
            "models: [ridge, lasso]\n",
            (ModelSpec("ridge", "ridge", (0.0,)), ModelSpec("lasso", "lasso", (1.0,))),
            "ridge",
        ),
        (
            "models: {elastic_net: {l1_ratio: 0.5}}\n",
            (ModelSpec("elastic_net", "elastic_net", (0.5,)),),
            "elastic_net",
        ),
        (
            "models: {elastic_net: }\nhold: equal_weight\n",
            (ModelSpec("elastic_net", "elastic_net", (0.25, 0.5, 0.75)),),
            "equal_weight",
        ),
        ("models: [lasso]\nhold: ols\n", (ModelSpec("lasso", "lasso", (1.0,)),), "ols"),
    ],
)
def test_models_forms(tmp_path, extra, models, hold):
    job = load_job(_write(tmp_path, MINIMAL + extra))
    assert job.models == models
    assert job.hold == hold


@pytest.mark.parametrize(
    "extra, field, expected",
    [
        ("window: {start: '2022-03-01'}\n", "window", WindowSpec(start=date(2022, 3, 1))),
        ("window: {lookback: 756, holdout: 0}\n", "window", WindowSpec(lookback=756, holdout=0)),
        (
            "data: {values: returns, returns_unit: percent, periods_per_year: 12}\n",
            "data",
            DataSpec(returns_unit="percent", periods_per_year=12),
        ),
        (
            "penalty_grid: {min_ratio: 1.0e-4, count: 2}\n",
            "grid",
            GridSpec(count=2, min_ratio=1e-4),
        ),
        ("cross_validation: {folds: 2, gap: 0, min_train: 1}\n", "cv", CVSpec(folds=2)),
    ],
)
def test_other_valid_values(tmp_path, extra, field, expected):
    assert getattr(load_job(_write(tmp_path, MINIMAL + extra)), field) == expected


def test_constituent_forms_and_paths(tmp_path, monkeypatch):
    monkeypatch.setenv("HOME", str(tmp_path / "home"))
    text = (
        "benchmark: {file: index.csv, column: lbx60}\n"
        "constituents:\n"
        "  - {file: index.csv, columns: [harbour_a, harbour_b]}\n"
        "  - {file: ~/prices.csv, columns: all}\n"
        f'  - {{file: {tmp_path / "abs.csv"}, columns: ["2020", "all"]}}\n'
    )
    job = load_job(_write(tmp_path / "jobs", text))
    assert job.constituents == (
        ConstituentSource((tmp_path / "jobs" / "index.csv").resolve(), ("harbour_a", "harbour_b")),
        ConstituentSource((tmp_path / "home" / "prices.csv").resolve(), None),
        ConstituentSource((tmp_path / "abs.csv").resolve(), ("2020", "all")),
    )


def test_relative_job_path_is_resolved(tmp_path, monkeypatch):
    _write(tmp_path / "jobs", MINIMAL)
    monkeypatch.chdir(tmp_path)
    job = load_job("jobs/job.yaml")
    assert job.path == (tmp_path / "jobs" / "job.yaml").resolve()
    assert job.benchmark.file == (tmp_path / "jobs" / "index.csv").resolve()


def test_data_files_are_not_checked(tmp_path):
    job = load_job(_write(tmp_path, MINIMAL))
    assert not job.benchmark.file.exists()


# Every validation message, one row each: (YAML text, expected message after "<file>: ").
B = "benchmark: {file: index.csv, column: lbx60}\n"
C = "constituents: {file: constituents.csv}\n"
BC = B + C

ERRORS = [
    # reading
    ("", "job file is empty; it needs at least 'benchmark' and 'constituents'"),
    ("# nothing but a comment\n", "job file is empty"),
    (
        "- benchmark\n- constituents\n",
        "the top level must be a mapping of keys such as 'benchmark:' and 'constituents:'; "
        "got a list",
    ),
    (
        "just text\n",
        "the top level must be a mapping of keys such as 'benchmark:' and "
        "'constituents:'; got a string",
    ),
    (
        "benchmark: {file: index.csv\nconstituents: x\n",
        "YAML error at line 2, column 13: while parsing a flow mapping, "
        "expected ',' or '}', but got ':'; fix the YAML syntax",
    ),
    (
        "benchmark: [a, b\n",
        "YAML error at line 2, column 1: while parsing a flow sequence, "
        "expected ',' or ']', but got '<stream end>'",
    ),
    (
        BC + "---\nname: second document\n",
        "YAML error at line 3, column 1: expected a single document in the stream, but found "
        "another document",
    ),
    (
        "a: !!python/object:os.system x\n",
        "YAML error at line 1, column 4: could not determine a "
        "constructor for the tag 'tag:yaml.org,2002:python/object:os.system'; fix the YAML syntax",
    ),
    (
        BC + "cross_validation:\n  folds: 5\n  folds: 6\n",
        "key 'folds' appears twice in one mapping (lines 4 and 5); keep one",
    ),
    (
        BC + "window: {start: 2021-02-30}\n",
        "'2021-02-30' at line 3, column 17 is not a real date "
        "(day is out of range for month); write a calendar date as YYYY-MM-DD",
    ),
    (
        BC + "window: {start: !!timestamp soon}\n",
        "'soon' at line 3, column 17 is not a real date; write a calendar date as YYYY-MM-DD",
    ),
    (
        BC + "window: {lookback: !!int many}\n",
        "a value cannot be read (invalid literal for int() "
        "with base 10: 'many'); check the dates and any value with an explicit YAML tag such as "
        "!!int",
    ),
    # unknown keys, each level, with and without a suggestion
    (BC + "modles: [lasso]\n", "unknown key 'modles'; did you mean 'models'?"),
    (
        BC + "xyz: 1\n",
        "unknown key 'xyz'; allowed: name, benchmark, constituents, risk_free, data, "
        "window, models, hold, penalty_grid, cross_validation, output",
    ),
    (BC + "1: x\n", "unknown key '1' (YAML read it as a number); allowed: name, benchmark"),
    (
        "benchmark: {file: index.csv, colum: lbx60}\n" + C,
        "unknown key 'benchmark.colum'; did you mean 'column'?",
    ),
    (
        B + "constituents:\n  - file: a.csv\n  - file: b.csv\n    column: [x]\n",
        "unknown key 'constituents[1].column'; did you mean 'columns'?",
    ),
    (
        B + "constituents: {file: a.csv, sheet: 1}\n",
        "unknown key 'constituents.sheet'; allowed: file, columns",
    ),
    (
        BC + "risk_free: {file: r.csv, units: percent}\n",
        "unknown key 'risk_free.units'; did you mean 'unit'?",
    ),
    (BC + "data: {date_col: day}\n", "unknown key 'data.date_col'; did you mean 'date_column'?"),
    (BC + "window: {look_back: 10}\n", "unknown key 'window.look_back'; did you mean 'lookback'?"),
    (
        BC + "models: {elastic_net: {l1_ratios: [0.5]}}\n",
        "unknown key 'models.elastic_net.l1_ratios'; did you mean 'l1_ratio'?",
    ),
    (BC + "penalty_grid: {n: 10}\n", "unknown key 'penalty_grid.n'; allowed: count, min_ratio"),
    (
        BC + "cross_validation:\n  fold: 5\n",
        "unknown key 'cross_validation.fold'; did you mean 'folds'?",
    ),
    (BC + "output: {dir: out}\n", "unknown key 'output.dir'; allowed: directory, top_weights"),
    (
        BC + "output: {top_weight: 5}\n",
        "unknown key 'output.top_weight'; did you mean 'top_weights'?",
    ),
    # required and shapes
    (C, "'benchmark' is required: a mapping with 'file' and optionally 'column'"),
    (B, "'constituents' is required: a mapping with 'file' and 'columns', or a non-empty list"),
    (
        "benchmark: index.csv\n" + C,
        "'benchmark' must be a mapping with keys among 'file', 'column', "
        "'layout', 'format', 'name_column', 'value_column'; got 'index.csv'.",
    ),
    (
        "benchmark: {column: lbx60}\n" + C,
        "'benchmark.file' is required: the path of a file, relative to the job file's folder",
    ),
    ("benchmark: {file: ''}\n" + C, "'benchmark.file' must be a non-empty string; got ''."),
    (
        "benchmark: {file: index.csv, column: 2020}\n" + C,
        "'benchmark.column' must be a non-empty string; got 2020 (YAML read this as a number; "
        "put it in quotes).",
    ),
    (
        "benchmark: {file: index.csv, column: yes}\n" + C,
        "'benchmark.column' must be a non-empty string; got True (YAML read this as a boolean; "
        "put it in quotes).",
    ),
    (
        B + "constituents: []\n",
        "'constituents' must be a mapping with 'file' and 'columns', or a "
        "non-empty list of such mappings; got [].",
    ),
    (
        B + "constituents: a.csv\n",
        "'constituents' must be a mapping with 'file' and 'columns', or "
        "a non-empty list of such mappings; got 'a.csv'.",
    ),
    (
        B + "constituents: [a.csv]\n",
        "'constituents[0]' must be a mapping with keys among 'file', 'columns', "
        "'layout', 'format', 'name_column', 'value_column'; got 'a.csv'.",
    ),
    (B + "constituents: [{columns: all}]\n", "'constituents[0].file' is required"),
    # constituent columns
    (
        B + "constituents: {file: a.csv, columns: kestrel}\n",
        "'constituents.columns' must be 'all' "
        "or a non-empty list of column names; got 'kestrel' (for one column write [kestrel])",
    ),
    (
        B + "constituents: {file: a.csv, columns: []}\n",
        "'constituents.columns' must be 'all' or a non-empty list of column names; got [].",
    ),
    (
        B + "constituents: {file: a.csv, columns: 5}\n",
        "'constituents.columns' must be 'all' or a non-empty list of column names; got 5.",
    ),
    (
        B + "constituents: {file: a.csv, columns: [x, 2021-01-04]}\n",
        "'constituents.columns[1]' must be a non-empty string; got datetime.date(2021, 1, 4) "
        "(YAML read this as a date; put it in quotes).",
    ),
    (
        B + "constituents: {file: a.csv, columns: [x, y, x]}\n",
        "'constituents.columns' lists 'x' twice; list each column once",
    ),
    (
        B + "constituents:\n  - {file: a.csv, columns: [x, y]}\n"
        "  - {file: ./a.csv, columns: [z, y]}\n",
        "column 'y' of './a.csv' is listed in both 'constituents[0].columns' and "
        "'constituents[1].columns'; list each constituent once",
    ),
    (
        B + "constituents:\n  - {file: a.csv}\n  - {file: a.csv, columns: [z]}\n",
        "'constituents[0]' and 'constituents[1]' both take columns of 'a.csv' and one takes them all "
        "('columns: all'); list each constituent once",
    ),
    (
        B + "constituents:\n  - {file: a.csv, columns: [z]}\n  - {file: a.csv}\n",
        "'constituents[0]' and 'constituents[1]' both take columns of 'a.csv' and one takes them all",
    ),
    (
        B + "constituents: {file: index.csv}\n",
        "'constituents' takes every column of 'index.csv' "
        "('columns: all'), but that file also holds the benchmark ('benchmark.file' is 'index.csv'); "
        "list the constituent columns in 'constituents.columns'",
    ),
    (
        "benchmark: {file: index.csv}\nconstituents: [{file: index.csv, columns: [a]}]\n",
        "'constituents[0]' takes columns of 'index.csv', which also holds the benchmark, so the "
        "benchmark is not that file's only column; set 'benchmark.column'",
    ),
    (
        B + "constituents: [{file: index.csv, columns: [a, lbx60]}]\n",
        "'constituents[0].columns' lists 'lbx60', the benchmark column of the same file; remove it "
        "from the constituents",
    ),
    # risk-free and data enumerations (case-sensitive)
    (
        BC + "risk_free: {file: r.csv, unit: Percent}\n",
        "'risk_free.unit' must be one of 'decimal', 'percent'; got 'Percent'; "
        "did you mean 'percent'?",
    ),
    (
        BC + "risk_free: {file: r.csv, quote: yearly}\n",
        "'risk_free.quote' must be one of 'per_period', 'annual'; got 'yearly'.",
    ),
    (BC + "risk_free: {column: rate}\n", "'risk_free.file' is required"),
    (
        BC + "risk_free: r.csv\n",
        "'risk_free' must be a mapping with keys among 'file', 'column', "
        "'unit', 'quote', 'layout', 'format', 'name_column', 'value_column'; got 'r.csv'.",
    ),
    (
        BC + "data: {values: price}\n",
        "'data.values' must be one of 'returns', 'prices'; got 'price'; did you mean 'prices'?",
    ),
    (
        BC + "data: {returns_unit: percentage}\n",
        "'data.returns_unit' must be one of 'decimal', 'percent'; got 'percentage'; "
        "did you mean 'percent'?",
    ),
    (
        BC + "data: {values: prices, returns_unit: percent}\n",
        "'data.returns_unit' applies only with 'data.values: returns', but 'data.values' is 'prices'; "
        "remove 'data.returns_unit'",
    ),
    (
        BC + "data: {missing: drop}\n",
        "'data.missing' must be one of 'error', 'drop_dates'; got 'drop'.",
    ),
    (BC + "data: {date_column: ''}\n", "'data.date_column' must be a non-empty string; got ''."),
    (
        BC + "data: {periods_per_year: 0}\n",
        "'data.periods_per_year' must be 'auto' or an integer >= 1 (252, 52, 12, 4); got 0.",
    ),
    (
        BC + "data: {periods_per_year: Auto}\n",
        "'data.periods_per_year' must be 'auto' or an integer >= 1 (252, 52, 12, 4); got 'Auto'.",
    ),
    (
        BC + "data: {periods_per_year: '252'}\n",
        "'data.periods_per_year' must be 'auto' or an "
        "integer >= 1 (252, 52, 12, 4); got '252' (text, not a number; remove the quotes).",
    ),
    (
        BC + "data: {date_format: '%Q'}\n",
        "'data.date_format' must be a strptime format such as "
        "'%d/%m/%Y' (or null for YYYY-MM-DD); got '%Q'.",
    ),
    (BC + "data: {date_format: dd/mm/yyyy}\n", "'data.date_format' must be a strptime format"),
    (BC + "data: [prices]\n", "'data' must be a mapping with keys among 'date_column'"),
    # window
    (
        BC + "window: {start: 2021-01-04, lookback: 756}\n",
        "'window.start' and 'window.lookback' cannot both be set; keep 'start' (first return date) "
        "or 'lookback' (rows ending at the as-of date)",
    ),
    (
        BC + "window: {start: '2021-1-4'}\n",
        "'window.start' must be a calendar date written YYYY-MM-DD; got '2021-1-4'.",
    ),
    (
        BC + "window: {start: '2021-02-30'}\n",
        "'window.start' must be a calendar date written YYYY-MM-DD; got '2021-02-30'.",
    ),
    (
        BC + "window: {start: 20210104}\n",
        "'window.start' must be a calendar date written YYYY-MM-DD; got 20210104.",
    ),
    (
        BC + "window: {start: 2021-01-04 10:00:00}\n",
        "'window.start' must be a date without a time "
        "of day (YYYY-MM-DD); got datetime.datetime(2021, 1, 4, 10, 0).",
    ),
    (BC + "window: {lookback: 1}\n", "'window.lookback' must be an integer >= 2; got 1."),
    (BC + "window: {holdout: -1}\n", "'window.holdout' must be an integer >= 0; got -1."),
    (
        BC + "window: {lookback: 100, holdout: 100}\n",
        "'window.holdout' (100) must be smaller than "
        "'window.lookback' (100) so rows are left for choosing the penalty",
    ),
    # models and hold
    (
        BC + "models: {}\n",
        "'models' must be a non-empty mapping or list of model names (lasso, "
        "ridge, elastic_net, adaptive_lasso); got {}.",
    ),
    (BC + "models: lasso\n", "'models' must be a non-empty mapping or list of model names"),
    (BC + "models: {lass: {}}\n", "unknown model 'models.lass'; did you mean 'lasso'?"),
    (BC + "models: {svm: {}}\n", "unknown model 'models.svm'; allowed: lasso, ridge, elastic_net"),
    (
        BC + "models: {ols: {}}\n",
        "'ols' in 'models': ols and equal_weight are always computed as "
        "baselines; do not list them under 'models' (they may still be chosen with 'hold')",
    ),
    (
        BC + "models: [lasso, equal_weight]\n",
        "'equal_weight' in 'models[1]': ols and equal_weight are always computed as baselines",
    ),
    (
        BC + "models: [lasso, Ridge]\n",
        "'models[1]' must be one of lasso, ridge, elastic_net, adaptive_lasso; got 'Ridge'; did you "
        "mean 'ridge'?",
    ),
    (
        BC + "models: [lasso, 3]\n",
        "'models[1]' must be one of lasso, ridge, elastic_net, adaptive_lasso; got 3.",
    ),
    (
        BC + "models: [lasso, {elastic_net: {l1_ratio: 0.5}}]\n",
        "'models[1]' must be a model name "
        "(lasso, ridge, elastic_net, adaptive_lasso); to give options, write 'models' as a mapping",
    ),
    (BC + "models: [lasso, ridge, lasso]\n", "'models' lists 'lasso' twice; list each model once"),
    (
        BC + "models: {lasso: {alpha: 0.1}}\n",
        "'models.lasso' must be empty ('lasso: {}' or "
        "'lasso:'); only elastic_net (l1_ratio) and adaptive_lasso (gamma) take options; got "
        "{'alpha': 0.1}.",
    ),
    (
        BC + "models: {ridge: {l1_ratio: 0}}\n",
        "'models.ridge' must be empty ('ridge: {}' or "
        "'ridge:'); only elastic_net (l1_ratio) and adaptive_lasso (gamma) take options",
    ),
    (
        BC + "models: {elastic_net: [0.5]}\n",
        "'models.elastic_net' must be a mapping with keys among 'l1_ratio'; got [0.5].",
    ),
    (
        BC + "models: {elastic_net: {l1_ratio: []}}\n",
        "'models.elastic_net.l1_ratio' must be a "
        "number or a non-empty list of numbers strictly between 0 and 1; got [].",
    ),
    (
        BC + "models: {elastic_net: {l1_ratio: [0.5, 1]}}\n",
        "'models.elastic_net.l1_ratio[1]' must be a number strictly between 0 and 1; got 1.",
    ),
    (
        BC + "models: {elastic_net: {l1_ratio: 0}}\n",
        "'models.elastic_net.l1_ratio' must be a number strictly between 0 and 1; got 0.",
    ),
    (
        BC + "models: {elastic_net: {l1_ratio: [0.5, true]}}\n",
        "'models.elastic_net.l1_ratio[1]' must be a number strictly between 0 and 1; got True.",
    ),
    (
        BC + "models: {elastic_net: {l1_ratio: [0.5, 0.50]}}\n",
        "'models.elastic_net.l1_ratio' lists 0.5 twice; list each value once",
    ),
    (
        BC + "models: [lasso]\nhold: ridge\n",
        "'hold' must be a model listed under 'models' or a baseline: 'lasso', 'ols', 'equal_weight'; "
        "got 'ridge'.",
    ),
    (
        BC + "hold: OLS\n",
        "'hold' must be a model listed under 'models' or a baseline: 'lasso', "
        "'elastic_net', 'ridge', 'ols', 'equal_weight'; got 'OLS'.",
    ),
    # grid, cross-validation, output: integers are integers
    (BC + "penalty_grid: {count: 1}\n", "'penalty_grid.count' must be an integer >= 2; got 1."),
    (
        BC + "penalty_grid: {min_ratio: 1e-3}\n",
        "'penalty_grid.min_ratio' must be a number strictly "
        "between 0 and 1; got '1e-3' (YAML reads this exponent form as text; write it as 0.001 or "
        "1.0e-3).",
    ),
    (
        BC + "penalty_grid: {min_ratio: 1}\n",
        "'penalty_grid.min_ratio' must be a number strictly between 0 and 1; got 1.",
    ),
    (
        BC + "penalty_grid: {min_ratio: .nan}\n",
        "'penalty_grid.min_ratio' must be a number strictly between 0 and 1; got nan.",
    ),
    (
        BC + "cross_validation: {folds: 1}\n",
        "'cross_validation.folds' must be an integer >= 2; got 1.",
    ),
    (
        BC + "cross_validation: {folds: true}\n",
        "'cross_validation.folds' must be an integer >= 2; got True.",
    ),
    (
        BC + "cross_validation: {folds: 5.0}\n",
        "'cross_validation.folds' must be an integer >= 2; got 5.0.",
    ),
    (
        BC + "cross_validation: {folds: '5'}\n",
        "'cross_validation.folds' must be an integer >= 2; "
        "got '5' (text, not a number; remove the quotes).",
    ),
    (
        BC + "cross_validation: {min_train: 0}\n",
        "'cross_validation.min_train' must be an integer >= 1; got 0.",
    ),
    (
        BC + "cross_validation: {gap: -2}\n",
        "'cross_validation.gap' must be an integer >= 0; got -2.",
    ),
    (
        BC + "cross_validation: {scheme: Expanding}\n",
        "'cross_validation.scheme' must be one of "
        "'expanding', 'rolling'; got 'Expanding'; did you mean 'expanding'?",
    ),
    (
        BC + "cross_validation: {rule: one_se}\n",
        "'cross_validation.rule' must be one of 'min_error', 'one_standard_error'; got 'one_se'.",
    ),
    (BC + "cross_validation: 5\n", "'cross_validation' must be a mapping with keys among 'folds'"),
    (BC + "output: {top_weights: 0}\n", "'output.top_weights' must be an integer >= 1; got 0."),
    (
        BC + "output: {directory: 7}\n",
        "'output.directory' must be a non-empty string; got 7 "
        "(YAML read this as a number; put it in quotes).",
    ),
    (BC + "name: ' '\n", "'name' must be a non-empty string; got ' '."),
    (BC + "name: [a]\n", "'name' must be a non-empty string; got ['a']."),
]


@pytest.mark.parametrize("text, message", ERRORS, ids=[f"{i:03d}" for i in range(len(ERRORS))])
def test_validation_messages(tmp_path, text, message):
    path = _write(tmp_path, text)
    with pytest.raises(JobError, match=re.escape(message)) as info:
        load_job(path)
    assert str(info.value).startswith(f"{path}: ")


def test_missing_job_file(tmp_path):
    path = tmp_path / "nope.yaml"
    with pytest.raises(JobError, match=re.escape(f"{path}: job file not found; check the path")):
        load_job(path)


def test_job_path_is_a_folder(tmp_path):
    with pytest.raises(JobError, match=re.escape(f"{tmp_path}: is a folder, not a job file")):
        load_job(tmp_path)


def test_job_file_not_utf8(tmp_path):
    path = tmp_path / "job.yaml"
    path.write_bytes(b"name: caf\xe9\n")
    message = (
        f"{path}: job file is not UTF-8 text (invalid continuation byte at byte offset 9); "
        "save it as UTF-8"
    )
    with pytest.raises(JobError, match=re.escape(message)):
        load_job(path)


def test_unreadable_job_file(tmp_path, monkeypatch):
    path = _write(tmp_path, MINIMAL)

    def refuse(self, *args, **kwargs):
        raise PermissionError(13, "Permission denied", str(self))

    monkeypatch.setattr(Path, "read_text", refuse)
    with pytest.raises(
        JobError,
        match=re.escape(
            f"{path}: cannot read the job file (Permission denied); check its permissions"
        ),
    ):
        load_job(path)


def test_bad_value_not_caught_by_node_check(tmp_path, monkeypatch):
    # The node check normally reports impossible dates with a line; this is the fallback.
    monkeypatch.setattr(job_module, "_check_nodes", lambda root, src: None)
    path = _write(tmp_path, BC + "window: {start: 2021-02-30}\n")
    with pytest.raises(
        JobError,
        match=re.escape(
            f"{path}: a value cannot be read (day is out of range for month); check the dates"
        ),
    ):
        load_job(path)


def test_utf8_bom_and_non_ascii_name(tmp_path):
    path = tmp_path / "job.yaml"
    path.write_bytes("\ufeffname: Île Lumen\n".encode() + BC.encode())
    assert load_job(path).name == "Île Lumen"


def test_yaml_alias_is_not_a_duplicate_key(tmp_path):
    text = "benchmark: &series {file: index.csv, column: lbx60}\n" + C + "risk_free: *series\n"
    job = load_job(_write(tmp_path, text))
    assert job.risk_free == RiskFreeSpec(job.benchmark.file, "lbx60")


def test_public_names_stay_importable_from_trackfit_job():
    # Other layers import the job's dataclasses from trackfit.job; they live in trackfit.jobfile.
    import trackfit.jobfile.specs as specs

    for name in (
        "SeriesRef",
        "ConstituentSource",
        "RiskFreeSpec",
        "DataSpec",
        "WindowSpec",
        "GridSpec",
        "CVSpec",
        "OutputSpec",
        "Bounds",
        "GroupsSpec",
        "LimitsSpec",
        "HoldingsSpec",
        "Job",
    ):
        assert getattr(job_module, name) is getattr(specs, name)
    assert callable(job_module.load_job)
    assert job_module.BASELINES == ("ols", "equal_weight")
