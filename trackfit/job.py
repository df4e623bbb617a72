"""The job file: YAML in, one validated, immutable :class:`Job` out.

:func:`load_job` reads the file with ``yaml.safe_load``, rejects unknown keys (suggesting the
closest known one), checks every value, resolves paths against the job file's folder and fills
in defaults. Every problem is a :class:`~trackfit.errors.JobError` whose message names the job
file, the key path (``cross_validation.folds``, ``constituents[1].columns``; list indices count
from 0), the value found and what is allowed. Whether data files exist is the data layer's
business, not this module's.

A key written with no value (YAML null) means the same as leaving the key out.

The dataclasses are defined in :mod:`trackfit.jobfile.specs` and the section parsers in
:mod:`trackfit.jobfile`; import the dataclasses from here.
"""

from __future__ import annotations

from pathlib import Path

from trackfit.jobfile.backtest import parse_backtest
from trackfit.jobfile.checks import Reader
from trackfit.jobfile.limits import parse_holdings, parse_limits
from trackfit.jobfile.models import (
    BASELINES,
    DEFAULT_L1_RATIOS,
    DEFAULT_MODELS,
    parse_hold,
    parse_models,
)
from trackfit.jobfile.reading import check_nodes as _check_nodes
from trackfit.jobfile.reading import read_yaml
from trackfit.jobfile.screen import parse_screen
from trackfit.jobfile.sections import (
    DEFAULT_OUTPUT_DIRECTORY,
    MISSING,
    QUOTES,
    RULES,
    SCHEMES,
    UNITS,
    VALUES,
    parse_benchmark,
    parse_constituents,
    parse_cv,
    parse_data,
    parse_grid,
    parse_output,
    parse_risk_free,
    parse_window,
)
from trackfit.jobfile.specs import (
    BacktestSpec,
    Bounds,
    ConstituentSource,
    CVSpec,
    DataSpec,
    GridSpec,
    GroupsSpec,
    HoldingsSpec,
    Job,
    LimitsSpec,
    OutputSpec,
    RiskFreeSpec,
    ScreenSpec,
    SeriesRef,
    WindowSpec,
)

__all__ = [
    "BASELINES",
    "DEFAULT_L1_RATIOS",
    "DEFAULT_MODELS",
    "DEFAULT_OUTPUT_DIRECTORY",
    "MISSING",
    "QUOTES",
    "RULES",
    "SCHEMES",
    "UNITS",
    "VALUES",
    "BacktestSpec",
    "Bounds",
    "ConstituentSource",
    "CVSpec",
    "DataSpec",
    "GridSpec",
    "GroupsSpec",
    "HoldingsSpec",
    "Job",
    "LimitsSpec",
    "OutputSpec",
    "RiskFreeSpec",
    "ScreenSpec",
    "SeriesRef",
    "WindowSpec",
    "load_job",
]

_TOP_KEYS = (
    "name",
    "benchmark",
    "constituents",
    "risk_free",
    "data",
    "window",
    "models",
    "hold",
    "penalty_grid",
    "cross_validation",
    "output",
    "limits",
    "holdings",
    "backtest",
    "screen",
)


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
    # The node check is looked up here, at call time, so a test can switch it off.
    raw = read_yaml(Path(path), src, _check_nodes)
    job_path = Path(path).expanduser().resolve()
    r = Reader(src, job_path.parent)
    r.section("", raw, _TOP_KEYS)
    benchmark, bench_file = parse_benchmark(r, raw.get("benchmark"))
    models = parse_models(r, raw.get("models"))
    return Job(
        path=job_path,
        name=r.text("name", raw.get("name"), job_path.stem),
        benchmark=benchmark,
        constituents=parse_constituents(r, raw.get("constituents"), benchmark, bench_file),
        risk_free=parse_risk_free(r, raw.get("risk_free")),
        data=parse_data(r, raw.get("data")),
        window=(window := parse_window(r, raw.get("window"))),
        models=models,
        hold=parse_hold(r, raw.get("hold"), models),
        grid=parse_grid(r, raw.get("penalty_grid")),
        cv=parse_cv(r, raw.get("cross_validation")),
        output=parse_output(r, raw.get("output")),
        limits=parse_limits(r, raw.get("limits")),
        holdings=parse_holdings(r, raw.get("holdings")),
        backtest=parse_backtest(r, raw.get("backtest"), window),
        screen=parse_screen(r, raw.get("screen")),
    )
