"""Dated holdings drifted to the as-of date before trades, turnover and the turnover limits.

The truth in these tests is a hand computation of buy-and-hold drift with pandas, common
practice: a weight w held from date d grows by the product of (1 + total return) of its name
over the return dates after d, cash by the risk-free rate, and every value is divided by the
portfolio's value at the end.
"""

from __future__ import annotations

import json
import re

import numpy as np
import pandas as pd
import pytest
from click.testing import CliRunner

from trackfit.cli import EXIT_INPUT, EXIT_WARNINGS, main
from trackfit.commands.prepare import prepare
from trackfit.errors import JobError
from trackfit.job import load_job

NAMES = [f"wharf_{c}" for c in "abcdef"]
# Invested 90 %, 10 % in cash; wharf_f is not held.
HELD = {"wharf_a": 0.3, "wharf_b": 0.2, "wharf_c": 0.15, "wharf_d": 0.15, "wharf_e": 0.1}
N_DATES = 120
RATE_PERCENT = 4.0  # annual deposit rate, percent


@pytest.fixture(scope="module")
def folder(tmp_path_factory):
    """Weekday prices of six invented wharf companies, a benchmark and a deposit rate."""
    root = tmp_path_factory.mktemp("drift")
    rng = np.random.default_rng(11)
    dates = pd.bdate_range("2025-01-01", periods=N_DATES)
    r = 0.01 * rng.standard_normal((N_DATES, len(NAMES))) + 0.0005
    prices = 50.0 * np.cumprod(1.0 + r, axis=0)
    bench = 100.0 * np.cumprod(1.0 + r[:, :4].mean(axis=1) + 0.0005 * rng.standard_normal(N_DATES))
    frame = pd.DataFrame(prices, index=dates, columns=NAMES)
    frame.index.name = "date"
    frame.to_csv(root / "prices.csv", float_format="%.6f", date_format="%Y-%m-%d")
    pd.DataFrame({"idx": bench}, index=frame.index).to_csv(
        root / "index.csv", float_format="%.6f", date_format="%Y-%m-%d"
    )
    pd.DataFrame({"rate": np.full(N_DATES, RATE_PERCENT)}, index=frame.index).to_csv(
        root / "rate.csv", date_format="%Y-%m-%d"
    )
    frame.pct_change().iloc[1:].to_csv(
        root / "returns.csv", float_format="%.10f", date_format="%Y-%m-%d"
    )
    pd.DataFrame({"idx": bench}, index=frame.index).pct_change().iloc[1:].to_csv(
        root / "index_returns.csv", float_format="%.10f", date_format="%Y-%m-%d"
    )
    _held(root / "held.csv", HELD)
    _held(root / "held_ghost.csv", {**HELD, "ghost_quay": 0.05})
    return root


def _held(path, weights):
    path.write_text("name,weight\n" + "".join(f"{k},{v}\n" for k, v in weights.items()))


def _job(folder, name, *, holdings="{file: held.csv, date: 2025-05-02}", rf=False, extra=""):
    text = (
        "benchmark: {file: index.csv, column: idx}\n"
        "constituents: [{file: prices.csv}]\n"
        + (
            "risk_free: {file: rate.csv, column: rate, unit: percent, quote: annual}\n"
            if rf
            else ""
        )
        + "data: {values: prices}\n"
        "window: {holdout: 20}\n"
        "models: {ridge: {}}\n"
        "hold: ridge\n"
        "penalty_grid: {count: 5}\n"
        "cross_validation: {folds: 3}\n"
        "limits: {long_only: true, budget: fully_invested}\n"
        f"holdings: {holdings}\n" + extra
    )
    path = folder / f"{name}.yaml"
    path.write_text(text)
    return path


def _prices(folder):
    return pd.read_csv(folder / "prices.csv", index_col="date", parse_dates=True)


def _hand_drift(folder, start, end, weights, cash_growth=1.0):
    """Buy-and-hold drift by hand (common practice), from prices with pandas."""
    prices = _prices(folder)
    r = prices.pct_change().loc[pd.Timestamp(start) + pd.Timedelta(days=1) : pd.Timestamp(end)]
    growth = (1.0 + r).prod()
    w = pd.Series(weights, dtype=float)
    cash = 1.0 - w.sum()
    grown = w * growth.reindex(w.index).fillna(1.0)  # a name with no prices keeps its value
    value = grown.sum() + cash * cash_growth
    return grown / value, cash * cash_growth / value, len(r)


def test_drift_matches_a_hand_computation(folder):
    prepared = prepare(load_job(_job(folder, "plain")))
    as_of = prepared.as_of
    hand, cash, periods = _hand_drift(folder, "2025-05-02", as_of, HELD)
    current = dict(zip(prepared.data.names, prepared.limits.current))
    for name in NAMES:
        assert current[name] == pytest.approx(hand.get(name, 0.0), rel=1e-12, abs=1e-15)
    h = prepared.holdings
    assert h.cash == pytest.approx(cash, rel=1e-12)
    drift = h.drift
    assert (str(drift.date), str(drift.start), drift.end, drift.periods) == (
        "2025-05-02",
        "2025-05-02",
        as_of,
        periods,
    )
    np.testing.assert_array_equal(drift.file_weights, list(HELD.values()))
    assert drift.kept == ()
    # Drift changes the weights: the test would prove nothing if the returns were flat.
    assert np.abs(np.array(list(hand.values)) - np.array(list(HELD.values()))).max() > 1e-3


def test_cash_grows_with_the_risk_free_rate(folder):
    prepared = prepare(load_job(_job(folder, "rf", rf=True)))
    ppy = prepared.data.periods_per_year
    # An annual rate compounded down to one period: (1 + r) ** (1 / periods) - 1, as the data
    # layer converts it (common practice); constant here, so its growth is a power.
    _, _, periods = _hand_drift(folder, "2025-05-02", prepared.as_of, HELD)
    cash_growth = (1.0 + RATE_PERCENT / 100.0) ** (periods / ppy)
    hand, cash, _ = _hand_drift(folder, "2025-05-02", prepared.as_of, HELD, cash_growth)
    np.testing.assert_allclose(
        prepared.limits.current[:5], hand[NAMES[:5]].to_numpy(), rtol=1e-12, atol=0
    )
    assert prepared.holdings.cash == pytest.approx(cash, rel=1e-12)
    # Without a risk-free series cash does not grow, so its drifted share is smaller.
    without = prepare(load_job(_job(folder, "plain")))
    assert prepared.holdings.cash > without.holdings.cash


def test_names_outside_the_constituents_keep_their_value(folder):
    job = _job(folder, "ghost", holdings="{file: held_ghost.csv, date: 2025-05-02}")
    prepared = prepare(load_job(job))
    hand, _, _ = _hand_drift(folder, "2025-05-02", prepared.as_of, {**HELD, "ghost_quay": 0.05})
    assert prepared.holdings.drift.kept == ("ghost_quay",)
    drifted = dict(zip(prepared.holdings.names, prepared.holdings.weights))
    assert drifted["ghost_quay"] == pytest.approx(hand["ghost_quay"], rel=1e-12)
    # Its sale is forced turnover, measured on the drifted weight.
    assert prepared.limits.outside_turnover == pytest.approx(hand["ghost_quay"] / 2, rel=1e-12)


def test_a_date_that_is_not_a_data_date_drifts_from_the_data_date_before_it(folder):
    saturday = prepare(load_job(_job(folder, "sat", holdings="{file: held.csv, date: 2025-05-03}")))
    friday = prepare(load_job(_job(folder, "fri")))
    assert str(saturday.holdings.drift.start) == "2025-05-02"
    assert str(saturday.holdings.drift.date) == "2025-05-03"
    np.testing.assert_array_equal(saturday.limits.current, friday.limits.current)


def test_no_date_uses_the_file_weights_as_given(folder):
    prepared = prepare(load_job(_job(folder, "undated", holdings="{file: held.csv}")))
    assert prepared.holdings.drift is None
    expected = [HELD.get(n, 0.0) for n in prepared.data.names]
    np.testing.assert_array_equal(prepared.limits.current, expected)


def test_stale_holdings_date_is_warned(folder):
    prepared = prepare(
        load_job(_job(folder, "stale", holdings="{file: held.csv, date: 2025-01-10}"))
    )
    assert any("days before the as-of date" in w for w in prepared.warnings)
    fresh = prepare(load_job(_job(folder, "fresh")))
    assert not any("days before the as-of date" in w for w in fresh.warnings)


DATE_ERRORS = [
    (
        "2025-08-01",
        "'holdings.date' is 2025-08-01, after the as-of date 2025-06-17; the holdings cannot "
        "be from after the fit's last date",
    ),
    (
        "2024-12-31",
        "'holdings.date' is 2024-12-31, before the first data date 2025-01-01; the weights "
        "cannot be drifted from it",
    ),
]


@pytest.mark.parametrize("when, message", DATE_ERRORS)
def test_holdings_dates_that_cannot_be_drifted(folder, when, message):
    job = load_job(_job(folder, f"bad_{when}", holdings=f"{{file: held.csv, date: {when}}}"))
    with pytest.raises(JobError, match=re.escape(message)):
        prepare(job)


def test_a_holdings_date_after_an_earlier_as_of_is_an_error(folder):
    job = load_job(_job(folder, "early"))
    with pytest.raises(JobError, match=re.escape("after the as-of date 2025-04-30")):
        prepare(job, as_of=pd.Timestamp("2025-04-30").date())


def test_cli_reports_file_and_drifted_weights_and_the_turnover_from_the_drifted(folder, tmp_path):
    result = CliRunner().invoke(
        main,
        [
            "fit",
            str(_job(folder, "cli", extra="output: {top_weights: 3}\n")),
            "--out",
            str(tmp_path),
        ],
    )
    assert result.exit_code == 0, result.stderr
    summary = json.loads((tmp_path / "summary.json").read_text())
    assert summary["job"]["holdings"]["date"] == "2025-05-02"
    held = summary["trades"]["holdings"]
    assert held["date"] == "2025-05-02" and held["drifted"] is True
    assert held["file_weights"] == HELD
    hand, _, _ = _hand_drift(folder, "2025-05-02", summary["as_of"], HELD)
    for name, weight in held["drifted_weights"].items():
        assert weight == pytest.approx(hand[name], rel=1e-9)
    lines = (tmp_path / "weights.csv").read_text().splitlines()[1:-1]
    target = {line.split(",")[0]: float(line.split(",")[1]) for line in lines}
    turnover = sum(abs(target[n] - held["drifted_weights"].get(n, 0.0)) for n in NAMES) / 2
    assert summary["trades"]["one_way_turnover"] == pytest.approx(turnover, abs=1e-9)
    report = (tmp_path / "report.md").read_text()
    assert "One-way turnover from the drifted holdings to the held weights" in report
    assert "| Name | In file | Drifted | Target | Change | Action |" in report
    assert "The holdings file's weights are as of 2025-05-02" in report


def test_cli_without_a_date_says_the_weights_were_not_drifted(folder, tmp_path):
    job = _job(folder, "cli_undated", holdings="{file: held.csv}")
    result = CliRunner().invoke(main, ["fit", str(job), "--out", str(tmp_path)])
    assert result.exit_code == 0, result.stderr
    report = (tmp_path / "report.md").read_text()
    assert "they were not drifted, because no 'holdings.date' was given" in report
    assert "| Name | Current | Target | Change | Action |" in report
    held = json.loads((tmp_path / "summary.json").read_text())["trades"]["holdings"]
    assert held["drifted"] is False and held["date"] is None
    assert held["file_weights"] == held["drifted_weights"] == HELD


def test_cli_a_holdings_date_after_as_of_exits_with_an_input_error(folder, tmp_path):
    job = _job(folder, "cli_late", holdings="{file: held.csv, date: 2025-08-01}")
    result = CliRunner().invoke(main, ["fit", str(job), "--out", str(tmp_path)])
    assert result.exit_code == EXIT_INPUT
    assert "after the as-of date 2025-06-17" in result.stderr


def test_backtest_with_dated_holdings_runs(folder, tmp_path):
    job = _job(
        folder,
        "bt",
        holdings="{file: held.csv, date: 2025-05-02, turnover_penalty: 0.001}",
        extra="backtest: {window: expanding, every: periods, periods: 20, start: 2025-04-01}\n",
    )
    result = CliRunner().invoke(main, ["backtest", str(job), "--out", str(tmp_path)])
    assert result.exit_code == EXIT_WARNINGS, result.stderr  # written, with the warning
    assert "'holdings.date' is not used" in result.stderr
    assert (tmp_path / "report.md").exists()


def test_returns_data_drift_by_the_product_of_one_plus_the_returns(folder):
    text = _job(folder, "returns").read_text()
    text = text.replace("index.csv", "index_returns.csv").replace("prices.csv", "returns.csv")
    path = folder / "returns.yaml"
    path.write_text(text.replace("data: {values: prices}", "data: {values: returns}"))
    prepared = prepare(load_job(path))
    r = pd.read_csv(folder / "returns.csv", index_col="date", parse_dates=True)
    growth = (1.0 + r.loc["2025-05-03" : str(prepared.as_of)]).prod()  # common practice
    w = pd.Series(HELD)
    grown = w * growth[w.index]
    hand = grown / (grown.sum() + 1.0 - w.sum())
    np.testing.assert_allclose(prepared.limits.current[:5], hand.to_numpy(), rtol=1e-12, atol=0)
