"""The data screen on arrays and on the OR-Library files: what it flags, and what it leaves alone.

Invented series are built here with seeded numpy, so the flaws and their dates are known.
indtrack1/2 (shared/data/orlib-indtrack, SOURCE.md there) hold no dates: invented weekly dates
are written beside their levels. Those tests skip when the shared folder is absent.
"""

from __future__ import annotations

import json
from datetime import date

import numpy as np
import pandas as pd
import pytest
from click.testing import CliRunner
from orlib import orlib_path, read_orlib

from trackfit.cli import main
from trackfit.data.screen import (
    FINDING_KINDS,
    loo_residuals,
    robust_spread,
    screen_returns,
    split_ratio,
)
from trackfit.errors import JobError
from trackfit.job import ScreenSpec, load_job

SPEC = ScreenSpec()
# Annual volatilities of real series range from ~3 % (bond index) to ~70 % (a wild stock):
# common practice.
FREQUENCIES = {"daily": 252, "weekly": 52, "monthly": 12}


def _returns(periods: int, n: int = 300, names: int = 8, vol: float = 0.2, seed: int = 0):
    rng = np.random.default_rng(seed)
    sd = vol / np.sqrt(periods)
    x = rng.normal(0.0, sd, size=(n, names))
    # an index about 1.5 times calmer than its names (common practice), exactly their mix
    y = x @ np.full(names, 1.0 / (1.5 * np.sqrt(names))) + rng.normal(0.0, sd / 20, size=n)
    dates = np.datetime64("2031-01-06") + np.arange(n) * 7
    labels = ("index.csv: idx", *(f"stocks.csv: s{j}" for j in range(names)))
    return np.column_stack([y, x]), dates, labels


def _screen(r, dates, labels, periods, spec=SPEC, values="returns", unit="decimal"):
    return screen_returns(
        r, dates, labels, spec, values=values, returns_unit=unit, periods_per_year=periods
    )


def test_robust_spread_is_scipys_normal_mad():
    x = np.random.default_rng(3).standard_t(3, size=501)
    # reference: scipy.stats.median_abs_deviation(x, scale="normal") (scale 1/Phi^-1(3/4))
    from scipy.stats import median_abs_deviation

    center, spread = robust_spread(x)
    assert center == np.median(x)
    assert spread == pytest.approx(median_abs_deviation(x, scale="normal"), rel=1e-4)


def test_loo_residuals_equal_refits_on_the_other_rows():
    rng = np.random.default_rng(1)
    X, y = rng.normal(size=(40, 5)), rng.normal(size=40)
    e = loo_residuals(X, y, 0.3)
    for t in (0, 17, 39):
        # reference: the ridge normal equations solved with numpy on the other 39 rows
        keep = np.arange(40) != t
        w = np.linalg.solve(X[keep].T @ X[keep] + 0.3 * np.eye(5), X[keep].T @ y[keep])
        assert e[t] == pytest.approx(y[t] - X[t] @ w, rel=1e-10)


@pytest.mark.parametrize(
    "gross, words",
    [
        (0.5, "a 2-for-1 split"),
        (0.49, "a 2-for-1 split"),
        (1 / 3, "a 3-for-1 split"),
        (0.1, "a 10-for-1 split"),
        (2.0, "a 1-for-2 consolidation"),
        (5.1, "a 1-for-5 consolidation"),
        (0.7, None),
        (1.3, None),
    ],
)
def test_split_ratio(gross, words):
    assert split_ratio(gross) == words


@pytest.mark.parametrize("freq", FREQUENCIES)
@pytest.mark.parametrize("vol", [0.05, 0.7])
def test_clean_series_give_no_finding_in_either_unit(freq, vol):
    periods = FREQUENCIES[freq]
    r, dates, labels = _returns(periods, vol=vol)
    assert _screen(r, dates, labels, periods) == ()
    # the loader divides a percent file by 100 before the screen sees it
    assert _screen(r, dates, labels, periods, unit="percent") == ()


@pytest.mark.parametrize("freq", FREQUENCIES)
@pytest.mark.parametrize("vol", [0.05, 0.7])
def test_wrong_units_are_found_on_every_frequency(freq, vol):
    periods = FREQUENCIES[freq]
    r, dates, labels = _returns(periods, vol=vol)
    as_percent = _screen(r * 100, dates, labels, periods)
    assert {f.kind for f in as_percent} == {"units"} and len(as_percent) == len(labels)
    assert "look like percent" in as_percent[0].message
    as_decimal = _screen(r / 100, dates, labels, periods)  # the loader's /100 of decimal files
    assert {f.kind for f in as_decimal} == set()  # decimal read as decimal is fine ...
    flagged = _screen(r / 100, dates, labels, periods, unit="percent")
    assert all("look like decimal" in f.message for f in flagged) and flagged


def test_one_constituent_in_percent_and_benchmark_in_other_units():
    r, dates, labels = _returns(252)
    one = r.copy()
    one[:, 3] *= 100
    found = _screen(one, dates, labels, 252)
    assert [f.series for f in found] == ["stocks.csv: s2"]
    bench = r.copy()
    bench[:, 0] /= 30  # not small enough to be "decimal read as percent" on its own
    found = _screen(bench * np.array([1] + [1] * 8), dates, labels, 252)
    assert [f.kind for f in found] == ["units"] and "different units" in found[0].message


def test_spike_jump_stale_and_benchmark_on_their_dates():
    r, dates, labels = _returns(252, n=400)
    r[100, 2] = 9.0  # a x10 print ...
    r[101, 2] = 1 / 10 - 1  # ... undone the next day
    r[200, 5] = -0.5  # an unadjusted 2-for-1 split
    r[250:257, 0] -= r[250:257, 7] / (1.5 * np.sqrt(8))  # the index held it unchanged too
    r[250:257, 7] = 0.0  # seven unchanged prices
    r[300, 0] += 0.05  # a benchmark move no constituent shares
    days = [d.item() for d in dates]
    found = _screen(r, dates, labels, 252)
    got = [(f.kind, f.series, f.dates) for f in found]
    assert got == [
        ("spike", "stocks.csv: s1", (days[100], days[101])),
        ("jump", "stocks.csv: s4", (days[200],)),
        ("benchmark", "index.csv: idx", (days[300],)),
        ("stale", "stocks.csv: s6", tuple(days[250:257])),
    ]
    assert list(FINDING_KINDS).index("spike") < list(FINDING_KINDS).index("stale")
    assert "2-for-1 split" in found[1].message and str(days[200]) in found[1].message
    assert all(f.action == "warn" and "fitted anyway" in f.message for f in found)


def test_stale_run_at_the_limit_passes():
    r, dates, labels = _returns(252)
    r[10:15, 1] = 0.0
    assert _screen(r, dates, labels, 252) == ()
    r[15, 1] = 0.0
    assert [f.value for f in _screen(r, dates, labels, 252)] == [6.0]


@pytest.mark.parametrize(
    "section, match",
    [
        ("{units: leave_out}", r"'screen.units' cannot be 'leave_out'"),
        ("{spikes: drop}", r"'screen.spikes' must be one of 'stop', 'warn', 'leave_out'"),
        ("{jump_mads: 0}", r"'screen.jump_mads' must be a number of robust spreads > 0"),
        ("{benchmark_mads: '8'}", r"'screen.benchmark_mads' must be"),
        ("{stale_periods: 0}", r"'screen.stale_periods' must be an integer >= 1"),
        ("{stale: warn, jumpz: 3}", r"unknown key 'screen.jumpz'"),
    ],
)
def test_screen_section_messages(tmp_path, section, match):
    job = tmp_path / "job.yaml"
    job.write_text(
        f"benchmark: {{file: i.csv}}\nconstituents: {{file: s.csv}}\nscreen: {section}\n"
    )
    with pytest.raises(JobError, match=match):
        load_job(job)


def test_screen_section_defaults_and_values(tmp_path):
    job = tmp_path / "job.yaml"
    job.write_text("benchmark: {file: i.csv}\nconstituents: {file: s.csv}\n")
    assert load_job(job).screen == ScreenSpec()
    job.write_text(
        "benchmark: {file: i.csv}\nconstituents: {file: s.csv}\n"
        "screen: {units: warn, jumps: leave_out, jump_mads: 9.5, stale_periods: 3}\n"
    )
    spec = load_job(job).screen
    assert (spec.units, spec.jumps, spec.jump_mads, spec.stale_periods) == (
        "warn",
        "leave_out",
        9.5,
        3,
    )


# --- the OR-Library files -------------------------------------------------------------------

INDTRACK = {name: orlib_path(name) for name in ("indtrack1", "indtrack2")}
needs_orlib = pytest.mark.skipif(
    None in INDTRACK.values(), reason="shared/data/orlib-indtrack is absent"
)
#: Invented weekly dates (the files carry none); t = 234 and t = 235 fall on these.
WEEKS = pd.date_range("2001-01-05", periods=291, freq="W-FRI")
T234, T235 = WEEKS[234].date(), WEEKS[235].date()


def _orlib_job(folder, name, holdout, action):
    index, stocks = read_orlib(INDTRACK[name])
    days = list(WEEKS.strftime("%Y-%m-%d"))
    cols = [f"stock_{i:02d}" for i in range(1, stocks.shape[1] + 1)]
    rows = [f"{d},{v:.8f}" for d, v in zip(days, index)]
    (folder / "index.csv").write_text("date,index\n" + "\n".join(rows) + "\n")
    rows = [d + "," + ",".join(f"{v:.8f}" for v in row) for d, row in zip(days, stocks)]
    (folder / "stocks.csv").write_text("date," + ",".join(cols) + "\n" + "\n".join(rows) + "\n")
    (folder / "job.yaml").write_text(
        "benchmark: {file: index.csv}\nconstituents: {file: stocks.csv}\n"
        f"data: {{values: prices}}\nwindow: {{holdout: {holdout}}}\nmodels: {{lasso: {{}}}}\n"
        f"screen: {{benchmark: {action}}}\n"
    )
    return folder / "job.yaml"


@needs_orlib
def test_indtrack1_has_no_finding(tmp_path):
    result = CliRunner().invoke(main, ["check", str(_orlib_job(tmp_path, "indtrack1", 58, "warn"))])
    assert result.exit_code == 0, result.output
    assert "screen" not in result.output


@needs_orlib
@pytest.mark.parametrize("command", ["check", "fit"])
def test_indtrack2_flags_the_benchmark_at_t234_and_t235_only(tmp_path, command):
    job = _orlib_job(tmp_path, "indtrack2", 145, "warn")
    extra = ["--out", str(tmp_path / "out"), "-q"] if command == "fit" else []
    result = CliRunner().invoke(main, [command, str(job), *extra])
    if command == "fit":
        lines = json.loads((tmp_path / "out" / "summary.json").read_text())["warnings"]
    else:
        lines = result.stdout.splitlines()
    flagged = [line for line in lines if "screen." in line]
    assert len(flagged) == 2, result.output
    assert f"index.csv: index: the benchmark return on {T234}" in flagged[0]
    assert f"index.csv: index: the benchmark return on {T235}" in flagged[1]


@needs_orlib
def test_indtrack2_leave_out_brings_the_holdout_tracking_error_down(tmp_path):
    # Protocol: every one of the 290 weekly returns in the window, the last 145 (half) held
    # out, lasso with the default grid and folds; t = 234 and 235 fall in the holdout.
    te = {}
    for action in ("warn", "leave_out"):
        folder = tmp_path / action
        folder.mkdir()
        job = _orlib_job(folder, "indtrack2", 145, action)
        result = CliRunner().invoke(main, ["fit", str(job), "--out", str(folder / "out"), "-q"])
        assert result.exit_code == 1, result.output  # fitted, with the screen's warnings
        summary = json.loads((folder / "out" / "summary.json").read_text())
        te[action] = {m["name"]: m["holdout"]["tracking_error"] for m in summary["models"]}
    # reference: numpy least squares without intercept on the 143 training weeks of the
    # returns without t = 234 and 235, tracking error std(active, ddof=1) * sqrt(52) on the
    # 145 weeks after them
    index, stocks = read_orlib(INDTRACK["indtrack2"])
    levels = np.column_stack([index, stocks])
    r = np.delete(levels[1:] / levels[:-1] - 1, [233, 234], axis=0)
    train, hold = r[:143], r[143:]
    w = np.linalg.lstsq(train[:, 1:], train[:, 0], rcond=None)[0]
    reference = np.std(hold[:, 0] - hold[:, 1:] @ w, ddof=1) * np.sqrt(52)
    assert te["leave_out"]["ols"] == pytest.approx(reference, rel=1e-8)
    assert te["warn"]["lasso"] == pytest.approx(0.055, abs=0.003)
    assert te["leave_out"]["lasso"] == pytest.approx(0.019, abs=0.002)
    assert te["leave_out"]["lasso"] == pytest.approx(reference, abs=0.002)


def test_screen_record_on_the_tracking_data():
    from trackfit.data.screen import Screen

    s = Screen(
        findings=(), left_out=(date(2031, 1, 6),), rows_before=10, rows_after=9, names_kept=3
    )
    assert s.warnings == ()
