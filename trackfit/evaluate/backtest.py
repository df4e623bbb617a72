"""Walk-forward backtest: refit at each rebalance row, hold the weights, pay costs, measure.

Conventions (all returns are total returns, decimal, per period):

- Timing. ``fit_at(row, current)`` may use rows ``<= row`` only. The new target weights are set
  at the close of ``row`` and first earn the returns of ``row + 1``. The realized out-of-sample
  series cover rows ``first_row + 1, ..., n - 1`` (``first_row`` = the first rebalance row);
  element ``t`` of every out-of-sample array is data row ``first_row + 1 + t``.
- Holdings. Weights are fractions of portfolio value per name; cash is ``1 - sum(w)`` and earns
  ``risk_free`` (0 when not given). With ``mode="buy_and_hold"`` the weights drift between
  rebalances, ``w_j,t = w_j,t-1 (1 + R_j,t) / (1 + G_t)`` and cash likewise with ``rf_t``, where
  ``G_t = sum_j w_j,t-1 R_j,t + cash_t-1 rf_t`` is the gross portfolio return of period ``t``.
  With ``mode="constant_mix"`` the weights are reset to the target at every close for free: it
  models an idealised fund rebalanced every period, and costs are charged only at the
  scheduled rebalances. The holdings "just before" a constant-mix rebalance are therefore the
  previous target.
- Turnover. One-way, ``T = sum_j |w_target_j - w_before_j| / 2`` over the names (cash is not
  traded). The first rebalance buys from all cash: ``w_before = 0`` and ``T = sum_j |w_j| / 2``.
- Costs. ``cost = sum_j (cost_bps_j / 1e4) |w_target_j - w_before_j|``, a fraction of the
  portfolio value before the trade: the bps are paid per unit of value traded, on each side
  (with flat bps, ``cost = cost_bps / 1e4 * 2 T``). The cost is taken off the value at the close
  of the rebalance row, before the target weights are set, so it shows in the return of the
  next period: ``1 + R_r+1 = (1 - cost_r) (1 + G_r+1)``. Costs scale every holding alike, so the
  weights (and their drift) do not depend on them. A rebalance on the last row has no next
  period: its cost is recorded but not charged.
- Summary. ``tracking_difference = prod(1 + r_p)^(P/m) - prod(1 + r_b)^(P/m)`` (annualized,
  geometric; ``P`` periods a year, ``m`` out-of-sample periods, ``years = m / P``).
  ``annual_turnover`` is the turnover of every rebalance after the first (the build from cash
  is left out) per year. ``cost_drag`` is the sum of the costs charged in the out-of-sample
  returns (the build included) per year.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass
from functools import partial

import numpy as np

from trackfit.evaluate.metrics import TrackingMetrics, tracking_metrics

MODES = ("buy_and_hold", "constant_mix")


@dataclass(frozen=True)
class RebalanceFit:
    """What ``fit_at`` returns for one rebalance row.

    Attributes
    ----------
    weights : ndarray of shape (n_assets,)
        Target weights of the names, cash excluded (cash is ``1 - weights.sum()``).
    alpha, l1_ratio : float or None
        Penalty and mix used (None for unpenalized fits).
    kkt_residual : float
        Optimality residual of the fit.
    """

    weights: np.ndarray
    alpha: float | None
    l1_ratio: float | None
    kkt_residual: float


#: ``fit_at(row, current)``: fit on rows ``<= row``; ``current`` is the drifted holdings just
#: before rebalancing (``None`` at the first rebalance and whenever the run is not coupled).
FitAt = Callable[[int, "np.ndarray | None"], RebalanceFit]

#: ``parallel(fn, rows) -> list``: a map, in order, possibly run in parallel.
ParallelMap = Callable[[Callable[[int], RebalanceFit], Sequence[int]], Sequence[RebalanceFit]]


@dataclass(frozen=True)
class BacktestResult:
    """A walk-forward backtest on arrays (no dates; rows index the input arrays).

    Attributes
    ----------
    rebalance : ndarray of int, shape (n_rebalances,)
        Rebalance rows, increasing.
    targets : ndarray of shape (n_rebalances, n_assets)
        Target weights set at each rebalance.
    drifted_before : ndarray of shape (n_rebalances, n_assets)
        Holdings just before each rebalance; the first row is nan (nothing held before).
    turnover, costs : ndarray of shape (n_rebalances,)
        One-way turnover and cost (fraction of value) of each rebalance.
    alphas, l1_ratios : ndarray of shape (n_rebalances,)
        Penalty and mix of each fit; nan where the fit had none.
    names_held : ndarray of int, shape (n_rebalances,)
        Count of nonzero target weights.
    kkt : ndarray of shape (n_rebalances,)
        Optimality residual of each fit.
    first_row : int
        The first rebalance row; out-of-sample element ``t`` is row ``first_row + 1 + t``.
    portfolio : ndarray of shape (m,)
        Realized portfolio returns, after costs.
    portfolio_gross : ndarray of shape (m,)
        The same before costs.
    benchmark, active : ndarray of shape (m,)
        Benchmark returns and ``portfolio - benchmark``.
    holdings : ndarray of shape (m, n_assets)
        Weights held during each period (set at the previous close, after any rebalance).
    cash : ndarray of shape (m,)
        Cash weight held during each period.
    metrics : TrackingMetrics
        Of ``portfolio`` against ``benchmark``; ``names_held`` and ``gross_exposure`` are those
        of the last target.
    mode : str
    periods_per_year : int
    years : float
        ``m / periods_per_year``.
    tracking_difference, annual_turnover, cost_drag : float
        Annualized, as defined in the module docstring.
    mean_names_held : float
        Mean of ``names_held`` over the rebalances.
    """

    rebalance: np.ndarray
    targets: np.ndarray
    drifted_before: np.ndarray
    turnover: np.ndarray
    costs: np.ndarray
    alphas: np.ndarray
    l1_ratios: np.ndarray
    names_held: np.ndarray
    kkt: np.ndarray
    first_row: int
    portfolio: np.ndarray
    portfolio_gross: np.ndarray
    benchmark: np.ndarray
    active: np.ndarray
    holdings: np.ndarray
    cash: np.ndarray
    metrics: TrackingMetrics
    mode: str
    periods_per_year: int
    years: float
    tracking_difference: float
    annual_turnover: float
    cost_drag: float
    mean_names_held: float


def run_backtest(
    total_returns: np.ndarray,
    benchmark_total: np.ndarray,
    risk_free: np.ndarray | None,
    rebalance: np.ndarray,
    fit_at: FitAt,
    *,
    mode: str = "buy_and_hold",
    cost_bps: float | np.ndarray = 0.0,
    periods_per_year: int,
    coupled: bool,
    parallel: ParallelMap | None = None,
) -> BacktestResult:
    """Refit at every rebalance row and simulate holding the weights until the next.

    Parameters
    ----------
    total_returns : ndarray of shape (n_periods, n_assets)
        Constituent total returns.
    benchmark_total : ndarray of shape (n_periods,)
        Benchmark total returns.
    risk_free : ndarray of shape (n_periods,) or None
        Per-period return of cash; None for 0.
    rebalance : ndarray of int, shape (n_rebalances,)
        Strictly increasing rows in ``[0, n_periods - 1]``; the first must leave at least one
        row after it.
    fit_at : callable ``(row, current) -> RebalanceFit``
        Must use rows ``<= row`` only.
    mode : {"buy_and_hold", "constant_mix"}
    cost_bps : float or ndarray of shape (n_assets,)
        Cost per unit of value traded, in basis points, flat or per name; >= 0.
    periods_per_year : int
    coupled : bool
        True when a fit depends on the holdings (a turnover limit or penalty): fits run in
        order and get the drifted holdings. False: every fit gets ``current=None`` and, when
        ``parallel`` is given, the fits run through it (the result is the same as serial).
    parallel : callable ``(fn, rows) -> list`` or None
        A map used only when ``coupled`` is False.

    Returns
    -------
    BacktestResult

    Raises
    ------
    ValueError
        Bad shapes, non-finite values, a bad schedule, mode or cost, a fit returning weights
        of the wrong shape or non-finite, or a portfolio whose value falls to zero or below.
    """
    R, bench, rf, rows, bps = _validated(
        total_returns, benchmark_total, risk_free, rebalance, mode, cost_bps, periods_per_year
    )
    n, p = R.shape
    k = len(rows)
    first = int(rows[0])
    m = n - 1 - first

    fits: list[RebalanceFit] | None = None
    if not coupled:
        fn = partial(_fit_fresh, fit_at)
        as_ints = [int(r) for r in rows]
        fits = list(parallel(fn, as_ints)) if parallel is not None else [fn(r) for r in as_ints]
        if len(fits) != k:
            raise ValueError(
                f"The 'parallel' map of run_backtest returned {len(fits)} fits for {k} "
                "rebalance rows; it must return one result per row, in order."
            )

    targets = np.empty((k, p))
    before = np.full((k, p), np.nan)
    turnover = np.empty(k)
    costs = np.empty(k)
    alphas = np.empty(k)
    l1_ratios = np.empty(k)
    kkt = np.empty(k)
    gross = np.empty(m)
    holdings = np.empty((m, p))
    cash = np.empty(m)

    current: np.ndarray | None = None
    for i, r in enumerate(int(x) for x in rows):
        if i > 0:
            prev = int(rows[i - 1])
            current = _hold(R, rf, targets[i - 1], prev, r, first, mode, gross, holdings, cash)
        fit = fit_at(r, None if current is None else current.copy()) if coupled else fits[i]
        w = _checked_weights(fit, r, p)
        held = np.zeros(p) if current is None else current
        if current is not None:
            before[i] = current
        traded = np.abs(w - held)
        targets[i] = w
        turnover[i] = traded.sum() / 2.0
        costs[i] = float(traded @ bps) / 1e4
        alphas[i] = np.nan if fit.alpha is None else float(fit.alpha)
        l1_ratios[i] = np.nan if fit.l1_ratio is None else float(fit.l1_ratio)
        kkt[i] = float(fit.kkt_residual)
    _hold(R, rf, targets[-1], int(rows[-1]), n - 1, first, mode, gross, holdings, cash)

    portfolio = gross.copy()
    charged = rows < n - 1
    at = rows[charged] - first  # out-of-sample position of each row after a rebalance
    growth = (1.0 - costs[charged]) * (1.0 + gross[at])
    for r, g in zip(rows[charged], growth):
        _check_positive(np.array([g]), int(r) + 1, int(r))
    portfolio[at] = growth - 1.0
    benchmark = bench[first + 1 :].copy()
    active = portfolio - benchmark
    years = m / periods_per_year
    names_held = np.count_nonzero(targets, axis=1)
    return BacktestResult(
        rebalance=rows.copy(),
        targets=targets,
        drifted_before=before,
        turnover=turnover,
        costs=costs,
        alphas=alphas,
        l1_ratios=l1_ratios,
        names_held=names_held,
        kkt=kkt,
        first_row=first,
        portfolio=portfolio,
        portfolio_gross=gross,
        benchmark=benchmark,
        active=active,
        holdings=holdings,
        cash=cash,
        metrics=tracking_metrics(portfolio, benchmark, targets[-1], periods_per_year),
        mode=mode,
        periods_per_year=int(periods_per_year),
        years=years,
        tracking_difference=_annualized(portfolio, periods_per_year)
        - _annualized(benchmark, periods_per_year),
        annual_turnover=float(turnover[1:].sum()) / years,
        cost_drag=float(costs[charged].sum()) / years,
        mean_names_held=float(np.mean(names_held)),
    )


def _fit_fresh(fit_at: FitAt, row: int) -> RebalanceFit:
    """One uncoupled fit (module level so process-based maps can pickle it)."""
    return fit_at(row, None)


def _hold(R, rf, w, start, stop, first, mode, gross, holdings, cash) -> np.ndarray:
    """Hold target ``w`` set at the close of row ``start`` through the close of row ``stop``.

    Fills rows ``start + 1 .. stop`` of the out-of-sample ``gross``, ``holdings`` and ``cash``
    in place; returns the holdings at the close of ``stop``, before any rebalance there.
    """
    if stop == start:
        return w.copy()
    Rs, fs = R[start + 1 : stop + 1], rf[start + 1 : stop + 1]
    c0 = 1.0 - w.sum()
    if mode == "constant_mix":
        h = np.broadcast_to(w, Rs.shape)
        c = np.full(len(fs), c0)
        end = w.copy()
    else:
        # Values per unit of value at the close of ``start``: the drift formula without
        # renormalizing every period.
        names = w * np.cumprod(1.0 + Rs, axis=0)
        money = c0 * np.cumprod(1.0 + fs)
        value = names.sum(axis=1) + money
        _check_positive(value, start + 1, start)
        h = np.vstack([w, names[:-1] / value[:-1, None]])
        c = np.concatenate([[c0], money[:-1] / value[:-1]])
        end = names[-1] / value[-1]
    g = (h * Rs).sum(axis=1) + c * fs
    _check_positive(1.0 + g, start + 1, start)
    seg = slice(start - first, stop - first)
    gross[seg], holdings[seg], cash[seg] = g, h, c
    return end


def _check_positive(growth: np.ndarray, row0: int, start: int) -> None:
    """Raise when a value (or one-period growth) starting at ``row0`` is not positive."""
    if (growth <= 0.0).any():
        row = row0 + int(np.flatnonzero(growth <= 0.0)[0])
        raise ValueError(
            f"The backtest portfolio's value fell to zero or below at row {row} (holding the "
            f"weights set at row {start}); its returns are undefined from there. Check the "
            "returns and costs for errors, or limit leverage and short positions."
        )


def _annualized(r: np.ndarray, periods_per_year: int) -> float:
    """``prod(1 + r) ** (P / m) - 1`` through logs (nan when some ``r <= -1``)."""
    with np.errstate(invalid="ignore", divide="ignore"):
        logs = np.log1p(r)
    if not np.isfinite(logs).all():
        return float("nan")
    return float(np.expm1(logs.sum() * periods_per_year / len(r)))


def _checked_weights(fit: RebalanceFit, row: int, p: int) -> np.ndarray:
    if not isinstance(fit, RebalanceFit):
        raise ValueError(
            f"fit_at must return a RebalanceFit. Got {type(fit).__name__} at row {row}."
        )
    w = np.asarray(fit.weights, dtype=float)
    if w.shape != (p,):
        raise ValueError(
            f"fit_at returned weights of shape {w.shape} at row {row}; expected ({p},), one "
            "per constituent."
        )
    if not np.isfinite(w).all():
        raise ValueError(f"fit_at returned non-finite weights at row {row}.")
    return w.copy()


def _validated(total_returns, benchmark_total, risk_free, rebalance, mode, cost_bps, ppy):
    def bad(name: str, allowed: str, got: str) -> ValueError:
        return ValueError(f"The '{name}' parameter of run_backtest must be {allowed}. Got {got}.")

    R = np.asarray(total_returns, dtype=float)
    if R.ndim != 2 or R.shape[0] < 2 or R.shape[1] < 1:
        raise bad("total_returns", "a 2-d array with >= 2 rows and >= 1 column", f"{R.shape}")
    n, p = R.shape
    b = np.asarray(benchmark_total, dtype=float)
    if b.shape != (n,):
        raise bad("benchmark_total", f"a 1-d array of length {n}", f"shape {b.shape}")
    rf = np.zeros(n) if risk_free is None else np.asarray(risk_free, dtype=float)
    if rf.shape != (n,):
        raise bad("risk_free", f"None or a 1-d array of length {n}", f"shape {rf.shape}")
    for name, arr in (("total_returns", R), ("benchmark_total", b), ("risk_free", rf)):
        if not np.isfinite(arr).all():
            where = [int(i) for i in np.argwhere(~np.isfinite(arr))[0]]
            at = f"row {where[0]}" + (f", column {where[1]}" if len(where) == 2 else "")
            raise bad(name, "finite", f"a nan or inf at {at}")

    rows = np.asarray(rebalance)
    if rows.ndim != 1 or rows.size == 0 or not np.issubdtype(rows.dtype, np.integer):
        raise bad(
            "rebalance", "a non-empty 1-d array of int rows", f"{rows.dtype} of shape {rows.shape}"
        )
    rows = rows.astype(np.int64)
    if (np.diff(rows) <= 0).any():
        raise bad("rebalance", "strictly increasing", f"{rows.tolist()}")
    if rows[0] < 0 or rows[-1] > n - 1:
        raise bad("rebalance", f"rows in [0, {n - 1}]", f"rows {rows[0]} to {rows[-1]}")
    if rows[0] == n - 1:
        raise bad(
            "rebalance",
            f"a first row before the last row {n - 1}, since weights set at a rebalance are "
            "first held on the next row",
            f"first row {rows[0]}",
        )

    if mode not in MODES:
        raise bad("mode", f"one of {', '.join(repr(x) for x in MODES)}", repr(mode))
    allowed = f"a float >= 0 or an array of {p} values >= 0 (basis points)"
    if isinstance(cost_bps, bool):
        raise bad("cost_bps", allowed, repr(cost_bps))
    bps = np.asarray(cost_bps, dtype=float)
    if bps.ndim == 0:
        bps = np.full(p, float(bps))
    if bps.shape != (p,):
        raise bad("cost_bps", allowed, f"shape {bps.shape}")
    if not (np.isfinite(bps).all() and (bps >= 0).all()):
        raise bad("cost_bps", allowed, f"{np.asarray(cost_bps).tolist()!r}")

    if isinstance(ppy, bool) or not isinstance(ppy, (int, np.integer)) or ppy < 1:
        raise bad("periods_per_year", "an int >= 1", repr(ppy))
    return R, b, rf, rows, bps
