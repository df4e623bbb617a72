"""Tests for trackfit.evaluate.backtest.run_backtest: drift, costs, timing, no look-ahead."""

from __future__ import annotations

import dataclasses
from concurrent.futures import ThreadPoolExecutor

import numpy as np
import pytest

from trackfit.evaluate.backtest import BacktestResult, RebalanceFit, run_backtest
from trackfit.evaluate.metrics import tracking_metrics

# --- the hand-worked example: 3 names, rows 0..4, rebalances at rows 0 and 2 -----------------
# Row 0 is the first rebalance row; its returns are never earned by the backtest.
HAND_R = np.array(
    [
        [0.03, -0.01, 0.02],
        [0.10, 0.00, -0.10],
        [-0.05, 0.10, 0.20],
        [0.02, -0.02, 0.05],
        [0.00, 0.05, -0.10],
    ]
)
HAND_RF = np.array([0.05, 0.01, 0.01, 0.02, 0.00])
HAND_B = np.array([0.0, 0.01, 0.02, 0.0, -0.01])
W0 = np.array([0.5, 0.3, 0.1])  # cash 0.1
W2 = np.array([0.4, 0.4, 0.1])  # cash 0.1
# By hand, per unit of value at the close of row 0, buy and hold:
#   row 1: names 0.5*1.10, 0.3*1.00, 0.1*0.90 = 0.55, 0.30, 0.09; cash 0.1*1.01 = 0.101;
#          value 1.041, gross return 0.041.
#   row 2: names 0.55*0.95, 0.30*1.10, 0.09*1.20 = 0.5225, 0.33, 0.108; cash 0.10201;
#          value 1.06251, return 0.02151 / 1.041 (= 0.0206628...).
#   rebalance at the close of row 2 to W2, from (0.5225, 0.33, 0.108) / 1.06251
#          (= 0.491760, 0.310585, 0.101646).
#   row 3: names 0.4*1.02, 0.4*0.98, 0.1*1.05 = 0.408, 0.392, 0.105; cash 0.1*1.02 = 0.102;
#          value 1.007, return 0.007.
#   row 4: names 0.408, 0.392*1.05, 0.105*0.90 = 0.408, 0.4116, 0.0945; cash 0.102;
#          value 1.0161, return 0.0091 / 1.007 (= 0.0090367...).
HAND_DRIFTED_2 = np.array([0.5225, 0.33, 0.108]) / 1.06251
HAND_GROSS = np.array([0.041, 0.02151 / 1.041, 0.007, 0.0091 / 1.007])
HAND_HOLDINGS = np.array(
    [W0, np.array([0.55, 0.30, 0.09]) / 1.041, W2, np.array([0.408, 0.392, 0.105]) / 1.007]
)
HAND_CASH = np.array([0.1, 0.101 / 1.041, 0.1, 0.102 / 1.007])
# |W2 - drifted| = (0.091760, 0.089415, 0.001646), by hand from the values above.
HAND_TRADED_2 = np.array([0.5225 / 1.06251 - 0.4, 0.4 - 0.33 / 1.06251, 0.108 / 1.06251 - 0.1])


def _fixed(targets: dict[int, np.ndarray], calls: list | None = None):
    def fit_at(row, current):
        if calls is not None:
            calls.append((row, None if current is None else current.copy()))
        return RebalanceFit(weights=targets[row], alpha=None, l1_ratio=None, kkt_residual=0.0)

    return fit_at


def _hand(mode="buy_and_hold", cost_bps=0.0, rows=(0, 2), targets=None, **kw) -> BacktestResult:
    targets = targets or {0: W0, 2: W2}
    return run_backtest(
        HAND_R,
        HAND_B,
        HAND_RF,
        np.array(rows),
        _fixed(targets),
        mode=mode,
        cost_bps=cost_bps,
        periods_per_year=4,
        coupled=kw.pop("coupled", False),
        **kw,
    )


def test_drift_by_hand_with_cash_and_risk_free():
    res = _hand()
    np.testing.assert_allclose(res.portfolio_gross, HAND_GROSS, rtol=0, atol=1e-15)
    np.testing.assert_allclose(res.portfolio, HAND_GROSS, rtol=0, atol=1e-15)
    np.testing.assert_allclose(res.holdings, HAND_HOLDINGS, rtol=0, atol=1e-15)
    np.testing.assert_allclose(res.cash, HAND_CASH, rtol=0, atol=1e-15)
    np.testing.assert_allclose(res.holdings.sum(axis=1) + res.cash, 1.0, rtol=0, atol=1e-15)
    assert np.isnan(res.drifted_before[0]).all()
    np.testing.assert_allclose(res.drifted_before[1], HAND_DRIFTED_2, rtol=0, atol=1e-15)
    # First rebalance from all cash: T = sum|W0| / 2 = 0.9 / 2.
    np.testing.assert_allclose(res.turnover, [0.45, HAND_TRADED_2.sum() / 2], rtol=1e-14)
    np.testing.assert_array_equal(res.costs, [0.0, 0.0])
    np.testing.assert_allclose(res.benchmark, [0.01, 0.02, 0.0, -0.01], rtol=0, atol=0)
    np.testing.assert_allclose(res.active, HAND_GROSS - res.benchmark, rtol=0, atol=1e-15)
    assert res.first_row == 0 and res.years == 1.0 and res.portfolio.shape == (4,)
    # P = m = 4, so the annualized factors are the plain products: value 1.06251 * 1.0161
    # (= 1.079616411) against 1.01 * 1.02 * 1.00 * 0.99 (= 1.019898).
    assert res.tracking_difference == pytest.approx(1.06251 * 1.0161 - 1.019898, abs=1e-14)
    assert res.annual_turnover == pytest.approx(HAND_TRADED_2.sum() / 2, rel=1e-14)
    assert res.cost_drag == 0.0


def test_drift_follows_the_weight_recursion():
    # The stated rule w_t = w_t-1 (1 + R_t) / (1 + G_t), cash with rf, between rebalances.
    res = _hand()
    for t in (1, 3):
        row = t + 1
        prev, g = res.holdings[t - 1], res.portfolio_gross[t - 1]
        np.testing.assert_allclose(
            res.holdings[t], prev * (1 + HAND_R[row - 1]) / (1 + g), rtol=1e-14
        )
        np.testing.assert_allclose(
            res.cash[t], res.cash[t - 1] * (1 + HAND_RF[row - 1]) / (1 + g), rtol=1e-14
        )


def test_constant_mix_by_hand():
    res = _hand(mode="constant_mix")
    # Weights reset to the target every period: gross = w . R + cash * rf.
    #   row 1: 0.05 + 0 - 0.01 + 0.001 = 0.041;  row 2: -0.025 + 0.03 + 0.02 + 0.001 = 0.026;
    #   row 3: 0.008 - 0.008 + 0.005 + 0.002 = 0.007;  row 4: 0 + 0.02 - 0.01 + 0 = 0.01.
    np.testing.assert_allclose(res.portfolio, [0.041, 0.026, 0.007, 0.01], rtol=0, atol=1e-15)
    np.testing.assert_array_equal(res.holdings, [W0, W0, W2, W2])
    np.testing.assert_array_equal(res.cash, np.full(4, 1.0 - W0.sum()))
    # Before a constant-mix rebalance the fund holds the previous target: T = (0.1+0.1+0)/2.
    np.testing.assert_array_equal(res.drifted_before[1], W0)
    assert res.turnover[1] == pytest.approx(0.1, abs=1e-15)


def test_flat_costs_by_hand():
    free, res = _hand(), _hand(cost_bps=10.0)
    # cost = 10 bps * sum|dw|: build 0.001 * 0.9 = 9e-4 (= 10e-4 * 2 * T with T = 0.45);
    # at row 2, 0.001 * sum|W2 - drifted| (= 1.8282e-4).
    c2 = 1e-3 * HAND_TRADED_2.sum()
    np.testing.assert_allclose(res.costs, [9e-4, c2], rtol=1e-13)
    np.testing.assert_allclose(res.costs, 10.0 / 1e4 * 2 * res.turnover, rtol=1e-13)
    # Each cost comes off the value at the rebalance close: 1 + r = (1 - cost) (1 + gross)
    # in the next period only.
    expected = HAND_GROSS.copy()
    expected[0] = (1 - 9e-4) * 1.041 - 1
    expected[2] = (1 - c2) * 1.007 - 1
    np.testing.assert_allclose(res.portfolio, expected, rtol=0, atol=1e-15)
    np.testing.assert_array_equal(res.portfolio_gross, free.portfolio_gross)
    np.testing.assert_array_equal(res.holdings, free.holdings)  # costs scale every holding alike
    assert res.cost_drag == pytest.approx((9e-4 + c2) / 1.0, rel=1e-13)
    assert res.tracking_difference == pytest.approx(
        (1 - 9e-4) * (1 - c2) * 1.06251 * 1.0161 - 1.019898, abs=1e-14
    )


def test_per_name_costs_by_hand():
    res = _hand(cost_bps=np.array([5.0, 10.0, 20.0]))
    # Build: (5 * 0.5 + 10 * 0.3 + 20 * 0.1) / 1e4 = 7.5e-4.
    c2 = (5 * HAND_TRADED_2[0] + 10 * HAND_TRADED_2[1] + 20 * HAND_TRADED_2[2]) / 1e4
    np.testing.assert_allclose(res.costs, [7.5e-4, c2], rtol=1e-13)
    assert c2 == pytest.approx(1.38587e-4, rel=1e-5)  # by hand from the |dw| above
    assert res.portfolio[0] == pytest.approx((1 - 7.5e-4) * 1.041 - 1, abs=1e-15)
    assert res.portfolio[2] == pytest.approx((1 - c2) * 1.007 - 1, abs=1e-15)


def test_constant_mix_charges_costs_only_at_scheduled_rebalances():
    res = _hand(mode="constant_mix", cost_bps=10.0)
    np.testing.assert_allclose(res.costs, [9e-4, 1e-3 * 0.2], rtol=1e-13)
    gross = np.array([0.041, 0.026, 0.007, 0.01])
    np.testing.assert_allclose(
        res.portfolio, [(1 - 9e-4) * 1.041 - 1, 0.026, (1 - 2e-4) * 1.007 - 1, 0.01], atol=1e-15
    )
    np.testing.assert_allclose(res.portfolio_gross, gross, atol=1e-15)


def test_rebalance_on_the_last_row_is_recorded_but_not_charged():
    w4 = np.array([0.2, 0.2, 0.2])
    res = _hand(rows=(0, 2, 4), targets={0: W0, 2: W2, 4: w4}, cost_bps=10.0)
    drifted_4 = np.array([0.408, 0.4116, 0.0945]) / 1.0161  # row 4 values above
    np.testing.assert_allclose(res.drifted_before[2], drifted_4, rtol=1e-14)
    traded_4 = np.abs(w4 - drifted_4)
    np.testing.assert_allclose(res.turnover[2], traded_4.sum() / 2, rtol=1e-14)
    np.testing.assert_allclose(res.costs[2], 1e-3 * traded_4.sum(), rtol=1e-14)
    two = _hand(cost_bps=10.0)
    np.testing.assert_array_equal(res.portfolio, two.portfolio)  # nothing after row 4
    assert res.cost_drag == two.cost_drag
    assert res.annual_turnover == pytest.approx(res.turnover[1:].sum(), rel=1e-14)
    assert res.metrics.names_held == 3 and res.names_held.tolist() == [3, 3, 3]


# --- seeded data whose truth the test builds ---------------------------------------------------


def _market(seed=11, n=160, p=8):
    rng = np.random.default_rng(seed)
    common = rng.normal(0.0004, 0.01, size=n)
    R = common[:, None] * rng.uniform(0.7, 1.3, p) + rng.normal(0.0, 0.006, size=(n, p))
    w = rng.dirichlet(np.ones(p))
    return R, w, rng


def test_exact_constant_mix_benchmark_tracks_to_machine_precision():
    R, w, rng = _market()
    bench = R @ w  # a benchmark rebalanced to fixed weights every period, no cash
    rf = rng.normal(0.0001, 0.00002, size=len(bench))  # earns nothing: no cash is held
    rows = np.arange(10, len(bench), 21)
    res = run_backtest(
        R,
        bench,
        rf,
        rows,
        _fixed(dict.fromkeys(rows.tolist(), w)),
        mode="constant_mix",
        periods_per_year=252,
        coupled=False,
    )
    assert res.metrics.tracking_error < 1e-12
    assert np.max(np.abs(res.active)) < 1e-15
    assert abs(res.tracking_difference) < 1e-12
    np.testing.assert_array_equal(res.turnover[1:], 0.0)
    assert res.portfolio.shape == (len(bench) - 11,)


def test_exact_buy_and_hold_benchmark_tracks_to_machine_precision():
    R, w, _ = _market(seed=12)
    w = 0.9 * w  # 10% cash
    rf = np.full(len(R), 0.0002)
    # Benchmark: the same weights bought at the close of row 5 and left to drift, built
    # with the weight recursion w_t = w_t-1 (1 + R_t) / (1 + b_t), cash likewise.
    held, cash, bench = w.copy(), 0.1, np.zeros(len(R))
    for t in range(6, len(R)):
        bench[t] = held @ R[t] + cash * rf[t]
        held, cash = held * (1 + R[t]) / (1 + bench[t]), cash * (1 + rf[t]) / (1 + bench[t])
    res = run_backtest(
        R, bench, rf, np.array([5]), _fixed({5: w}), periods_per_year=252, coupled=False
    )
    assert res.metrics.tracking_error < 1e-12
    assert np.max(np.abs(res.active)) < 1e-14
    assert abs(res.tracking_difference) < 1e-12


def test_summary_against_numpy_and_tracking_metrics():
    R, w, rng = _market(seed=13, n=37)
    bench = R @ w + rng.normal(0.0, 0.001, size=len(R))
    rows = np.array([0, 12, 24, 36])
    targets = {r: rng.dirichlet(np.ones(R.shape[1])) for r in rows.tolist()}
    targets[24] = np.where(np.arange(R.shape[1]) < 3, 0.0, targets[24])
    res = run_backtest(
        R, bench, None, rows, _fixed(targets), cost_bps=7.5, periods_per_year=12, coupled=False
    )
    m = len(R) - 1
    # numpy.prod of the growth factors, to the power P / m.
    expected = np.prod(1 + res.portfolio) ** (12 / m) - np.prod(1 + res.benchmark) ** (12 / m)
    assert res.tracking_difference == pytest.approx(expected, rel=1e-12)
    assert res.years == m / 12
    assert res.annual_turnover == pytest.approx(res.turnover[1:].sum() / (m / 12), rel=1e-14)
    assert res.cost_drag == pytest.approx(res.costs[:3].sum() / (m / 12), rel=1e-14)
    assert res.metrics == tracking_metrics(res.portfolio, res.benchmark, targets[36], 12)
    assert res.names_held.tolist() == [8, 8, 5, 8]
    assert res.mean_names_held == 7.25
    assert np.isnan(res.alphas).all() and np.isnan(res.l1_ratios).all()


# --- timing and look-ahead ---------------------------------------------------------------------


def _lookahead_harness(R, bench, seen, window=40):
    """fit_at that only ever receives rows [0, row]: least squares on the last `window` rows."""

    def fit_on(Xs, ys, row, current):
        seen.append((row, len(Xs) - 1))
        Xw, yw = Xs[-window:], ys[-window:]
        w = np.linalg.lstsq(Xw, yw, rcond=None)[0]
        return RebalanceFit(weights=w, alpha=0.0, l1_ratio=None, kkt_residual=0.0)

    return lambda row, current: fit_on(R[: row + 1], bench[: row + 1], row, current)


def _lookahead_case():
    R, w, rng = _market(seed=21, n=200, p=6)
    bench = R @ w + rng.normal(0.0, 0.002, size=len(R))
    return R, bench, np.arange(49, 200, 25)


def test_fit_at_sees_only_rows_up_to_its_rebalance_row():
    R, bench, rows = _lookahead_case()
    seen: list = []
    res = run_backtest(
        R,
        bench,
        None,
        rows,
        _lookahead_harness(R, bench, seen),
        periods_per_year=52,
        coupled=False,
    )
    assert [r for r, _ in seen] == rows.tolist()
    assert all(max_row == row for row, max_row in seen)
    # Weights set at row r are first held in row r + 1 (the last rebalance is on the last row).
    assert rows[-1] == len(R) - 1
    for i, r in enumerate(rows[:-1]):
        np.testing.assert_array_equal(res.holdings[r + 1 - res.first_row - 1], res.targets[i])
    np.testing.assert_array_equal(res.alphas, 0.0)


@pytest.mark.parametrize("j", [0, 3, 5])
def test_changing_returns_after_a_rebalance_row_never_changes_its_target(j):
    R, bench, rows = _lookahead_case()
    base = run_backtest(
        R,
        bench,
        None,
        rows,
        _lookahead_harness(R, bench, []),
        cost_bps=3.0,
        periods_per_year=52,
        coupled=False,
    )
    r = int(rows[j])
    R2, b2 = R.copy(), bench.copy()
    rng = np.random.default_rng(5)
    R2[r + 1 :] += rng.normal(0.0, 0.05, size=R2[r + 1 :].shape)
    b2[r + 1 :] += rng.normal(0.0, 0.05, size=b2[r + 1 :].shape)
    moved = run_backtest(
        R2,
        b2,
        None,
        rows,
        _lookahead_harness(R2, b2, []),
        cost_bps=3.0,
        periods_per_year=52,
        coupled=False,
    )
    np.testing.assert_array_equal(moved.targets[: j + 1], base.targets[: j + 1])
    np.testing.assert_array_equal(moved.turnover[: j + 1], base.turnover[: j + 1])
    np.testing.assert_array_equal(moved.costs[: j + 1], base.costs[: j + 1])
    upto = r - base.first_row  # out-of-sample rows first_row + 1 .. r
    np.testing.assert_array_equal(moved.portfolio[:upto], base.portfolio[:upto])
    if j < len(rows) - 1:
        assert not np.array_equal(moved.targets[j + 1], base.targets[j + 1])


# --- parallel and coupled runs -----------------------------------------------------------------


def _assert_same(a: BacktestResult, b: BacktestResult) -> None:
    for field in dataclasses.fields(BacktestResult):
        x, y = getattr(a, field.name), getattr(b, field.name)
        if isinstance(x, np.ndarray):
            np.testing.assert_array_equal(x, y, err_msg=field.name)
        elif dataclasses.is_dataclass(x):
            np.testing.assert_array_equal(
                dataclasses.astuple(x), dataclasses.astuple(y), err_msg=field.name
            )
        else:
            assert x == y or (np.isnan(x) and np.isnan(y)), field.name


def test_parallel_threads_equal_serial():
    R, bench, rows = _lookahead_case()
    used: list = []

    def threads(fn, rows_):
        used.append(list(rows_))
        with ThreadPoolExecutor(max_workers=4) as pool:
            return list(pool.map(fn, rows_))

    def run(parallel):
        return run_backtest(
            R,
            bench,
            None,
            rows,
            _lookahead_harness(R, bench, []),
            cost_bps=2.0,
            periods_per_year=52,
            coupled=False,
            parallel=parallel,
        )

    _assert_same(run(threads), run(None))
    assert used == [rows.tolist()]


def _damped(R, bench, calls):
    """A coupled fit: half way from the current holdings to the least-squares weights."""
    inner = _lookahead_harness(R, bench, [])

    def fit_at(row, current):
        calls.append((row, None if current is None else current.copy()))
        fit = inner(row, current)
        w = fit.weights if current is None else 0.5 * fit.weights + 0.5 * current
        return dataclasses.replace(fit, weights=w)

    return fit_at


@pytest.mark.parametrize("mode", ["buy_and_hold", "constant_mix"])
def test_coupled_runs_in_order_with_drifted_holdings(mode):
    R, bench, rows = _lookahead_case()
    calls: list = []

    def never(fn, rows_):
        raise AssertionError("a coupled backtest must not use the parallel map")

    res = run_backtest(
        R,
        bench,
        None,
        rows,
        _damped(R, bench, calls),
        mode=mode,
        cost_bps=4.0,
        periods_per_year=52,
        coupled=True,
        parallel=never,
    )
    assert [r for r, _ in calls] == rows.tolist()
    assert calls[0][1] is None
    for i in range(1, len(rows)):
        np.testing.assert_array_equal(calls[i][1], res.drifted_before[i])
    if mode == "constant_mix":
        np.testing.assert_array_equal(res.drifted_before[1:], res.targets[:-1])
    else:
        # The drifted holdings are those held in the rebalance row, drifted by its returns.
        t = rows[1] - res.first_row - 1
        drifted = res.holdings[t] * (1 + R[rows[1]]) / (1 + res.portfolio_gross[t])
        np.testing.assert_allclose(res.drifted_before[1], drifted, rtol=1e-13)
    # The damping really used them: each target is half the way from the holdings.
    ls = _lookahead_harness(R, bench, [])
    for i in range(1, len(rows)):
        expected = 0.5 * ls(int(rows[i]), None).weights + 0.5 * res.drifted_before[i]
        np.testing.assert_allclose(res.targets[i], expected, rtol=0, atol=1e-15)


def test_uncoupled_passes_no_holdings_and_equals_coupled_when_the_fit_ignores_them():
    R, bench, rows = _lookahead_case()
    calls: list = []
    ls = _lookahead_harness(R, bench, [])

    def recording(row, current):
        calls.append(current)
        return ls(row, current)

    loose = run_backtest(
        R, bench, None, rows, recording, cost_bps=4.0, periods_per_year=52, coupled=False
    )
    assert calls == [None] * len(rows)
    tight = run_backtest(R, bench, None, rows, ls, cost_bps=4.0, periods_per_year=52, coupled=True)
    _assert_same(loose, tight)


# --- errors ------------------------------------------------------------------------------------


def _call(**overrides):
    kwargs = dict(
        total_returns=HAND_R,
        benchmark_total=HAND_B,
        risk_free=HAND_RF,
        rebalance=np.array([0, 2]),
        fit_at=_fixed({0: W0, 2: W2}),
        mode="buy_and_hold",
        cost_bps=0.0,
        periods_per_year=4,
        coupled=False,
    )
    kwargs.update(overrides)
    return run_backtest(**kwargs)


@pytest.mark.parametrize(
    ("overrides", "match"),
    [
        (dict(total_returns=HAND_R[:, 0]), r"'total_returns' .* 2-d array .* Got \(5,\)"),
        (dict(total_returns=HAND_R[:1]), r"'total_returns' .* >= 2 rows"),
        (dict(benchmark_total=HAND_B[:4]), r"'benchmark_total' .* length 5\. Got shape \(4,\)"),
        (dict(risk_free=HAND_RF[:, None]), r"'risk_free' .* None or a 1-d array of length 5"),
        (
            dict(total_returns=np.where(np.arange(15).reshape(5, 3) == 7, np.nan, HAND_R)),
            r"'total_returns' .* must be finite\. Got a nan or inf at row 2, column 1",
        ),
        (
            dict(benchmark_total=np.array([0, 0, np.inf, 0, 0.0])),
            r"'benchmark_total' .* finite\. Got a nan or inf at row 2\.",
        ),
        (dict(rebalance=np.array([], dtype=int)), r"'rebalance' .* non-empty 1-d array of int"),
        (dict(rebalance=np.array([0.0, 2.0])), r"'rebalance' .* int rows\. Got float64"),
        (dict(rebalance=np.array([2, 0])), r"'rebalance' .* strictly increasing\. Got \[2, 0\]"),
        (dict(rebalance=np.array([2, 2])), r"strictly increasing"),
        (dict(rebalance=np.array([0, 5])), r"rows in \[0, 4\]\. Got rows 0 to 5"),
        (dict(rebalance=np.array([-1, 2])), r"rows in \[0, 4\]"),
        (dict(rebalance=np.array([4])), r"first row before the last row 4.* Got first row 4"),
        (dict(mode="daily"), r"'mode' .* one of 'buy_and_hold', 'constant_mix'\. Got 'daily'"),
        (dict(cost_bps=-1.0), r"'cost_bps' .* >= 0 .* Got -1\.0"),
        (dict(cost_bps=np.array([1.0, 2.0])), r"'cost_bps' .* array of 3 values .* shape \(2,\)"),
        (dict(cost_bps=np.array([1.0, np.nan, 2.0])), r"'cost_bps' .* Got \[1\.0, nan, 2\.0\]"),
        (dict(cost_bps=True), r"'cost_bps' .* Got True"),
        (dict(periods_per_year=0), r"'periods_per_year' .* int >= 1\. Got 0"),
        (dict(periods_per_year=12.0), r"'periods_per_year' .* Got 12\.0"),
        (
            dict(fit_at=lambda row, current: W0),
            r"must return a RebalanceFit\. Got ndarray at row 0",
        ),
        (
            dict(fit_at=_fixed({0: W0[:2], 2: W2})),
            r"weights of shape \(2,\) at row 0; expected \(3,\)",
        ),
        (
            dict(fit_at=_fixed({0: W0, 2: np.array([0.1, np.nan, 0.1])})),
            r"non-finite weights at row 2",
        ),
        (dict(parallel=lambda fn, rows: [fn(rows[0])]), r"returned 1 fits for 2 rebalance rows"),
    ],
)
def test_errors(overrides, match):
    with pytest.raises(ValueError, match=match):
        _call(**overrides)


def test_value_falling_to_zero_is_an_error():
    R = HAND_R.copy()
    R[3] = [-1.5, 0.0, 0.0]
    with pytest.raises(
        ValueError,
        match=r"fell to zero or below at row 3 \(holding the "
        r"weights set at row 2\)",
    ):
        _call(total_returns=R, fit_at=_fixed({0: W0, 2: np.array([1.0, 0.0, 0.0])}))
    with pytest.raises(ValueError, match=r"fell to zero or below at row 3"):
        _call(
            total_returns=R,
            mode="constant_mix",
            fit_at=_fixed({0: W0, 2: np.array([1.0, 0.0, 0.0])}),
        )
    with pytest.raises(
        ValueError,
        match=r"fell to zero or below at row 1 \(holding the "
        r"weights set at row 0\)",
    ):
        _call(cost_bps=2e4, fit_at=_fixed({0: np.array([0.5, 0.5, 0.0]), 2: W2}))
