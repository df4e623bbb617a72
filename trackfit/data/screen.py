"""The data screen: values that cannot be what the job says, bad prints, splits, stale prices.

trackfit solves exactly whatever it is given, so the loader runs this screen on every series of
the window once returns are computed (decimal, before any risk-free rate is subtracted) and
before anything is fitted. Each finding is stopped on, warned about or has its dates left out,
per the job's ``screen`` section.

Thresholds, and why they separate (measured on weekly OR-Library indtrack1/2 and the demo's
daily Lumen Bay data, and on invented daily, weekly and monthly series in the tests):

- units are judged on the *yearly size* ``median |r| * sqrt(periods_per_year)``. Real return
  series fall between about 0.02 (a bond index, 3 % volatility) and 0.5 (a 70 % volatility
  stock); the same series in percent read as decimal are 100 times larger (>= 2), in decimal
  read as percent 100 times smaller (<= 0.005). :data:`PERCENT_SIZE` (1.5) and
  :data:`DECIMAL_SIZE` (0.01) sit in those gaps on any frequency. Price levels read as
  returns are almost all positive (:data:`PRICE_SHARE`) with a median far above any one-period
  return (:data:`PRICE_LEVEL`, 0.5). Benchmark and constituents in different units differ in
  typical size by about 100; an index is 1.5 to 3 times calmer than its names, so
  :data:`MIXED_RATIO` (20) separates them.
- a spike or jump is a move beyond ``jump_mads`` robust spreads (1.4826 * MAD) of the series'
  own returns. The largest real moves reach 12 and 14 spreads in weekly indtrack1/2
  (takeovers, crashes of -45 %) and 16.8 in the demo's daily data (+22 % in a day), hence the
  default 20. A move whose ``1 + r`` lies within :data:`SPLIT_TOLERANCE` of a split ratio needs
  only :data:`SPLIT_SHARE` of that (10 spreads), since such a move is far more often a split
  than news: an unadjusted 2-for-1 split is 20 to 50 spreads on daily and weekly data and about
  10 on volatile monthly data. A one-period x10 bad print is hundreds of spreads.
- the benchmark is judged on leave-one-out residuals of a small ridge fit on the constituents,
  ``e_t / (1 - h_tt)``, in robust spreads; on indtrack2 the flawed level at t = 234 gives 18 and
  17 spreads, the next largest 4; the demo's largest is 5. The benchmark check needs
  :data:`MIN_ROWS` more rows than names, spikes and jumps :data:`MIN_ROWS` rows.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date

import numpy as np

from trackfit.errors import DataError
from trackfit.jobfile.specs import SCREEN_ACTION_KEYS, ScreenSpec

#: kind -> what it is, in the words reports use
FINDING_KINDS = {
    "units": "values that cannot be what the job says they are",
    "spike": "a one-period spike that reverses (a bad print)",
    "jump": "a one-period jump that stays (an unadjusted split or consolidation)",
    "benchmark": "a benchmark return the constituents cannot explain",
    "stale": "a run of unchanged prices",
}
#: Normal-consistency factor of the median absolute deviation (1 / Phi^-1(3/4)).
MAD_SCALE = 1.4826
#: Yearly size above which returns declared decimal are taken for percent.
PERCENT_SIZE = 1.5
#: Yearly size (after dividing by 100) below which returns declared percent are decimal.
DECIMAL_SIZE = 0.01
#: Median |value| above which an almost all positive series is price levels, not returns.
PRICE_LEVEL = 0.5
#: Share of positive values that makes a series "almost all positive".
PRICE_SHARE = 0.95
#: Benchmark vs constituents typical size ratio beyond which their units differ.
MIXED_RATIO = 20.0
#: A spike's next return undoes at least this share of it (in log terms).
REVERSAL = 0.75
#: 1 + r within this relative distance of a split ratio names the ratio.
SPLIT_TOLERANCE = 0.04
#: Share of ``jump_mads`` a move must exceed when it looks like a split or consolidation.
SPLIT_SHARE = 0.5
#: Fewest rows on which a robust spread (spikes, jumps, the benchmark check) means anything.
MIN_ROWS = 20
#: Ridge penalty of the quick benchmark fit, relative to the mean diagonal of X'X.
RIDGE_SHARE = 1e-3

_WHAT = {
    "stop": "stopped",
    "warn": "fitted anyway",
}


@dataclass(frozen=True)
class Finding:
    """One thing the screen found.

    Attributes
    ----------
    kind : str
        One of :data:`FINDING_KINDS`.
    series : str
        The series as messages name it, e.g. ``"constituents.csv: kestrel_quays"``.
    dates : tuple of date
        The date(s) concerned, sorted.
    value : float or None
        The offending number (a return, a median size, a run length).
    action : str
        "stop", "warn" or "leave_out".
    message : str
        One line naming the file and series, the date(s), the value and what trackfit did.
    """

    kind: str
    series: str
    dates: tuple[date, ...]
    value: float | None
    action: str
    message: str


@dataclass(frozen=True)
class Screen:
    """What the screen found in one window and what it did.

    Attributes
    ----------
    findings : tuple of Finding
        By kind (in :data:`FINDING_KINDS` order), then series, then date.
    left_out : tuple of date
        Dates removed from every fit and metric (sorted, unique).
    rows_before, rows_after : int
        Rows in the window before and after dates were left out.
    names_kept : int
        Constituents kept in the fit.
    """

    findings: tuple[Finding, ...]
    left_out: tuple[date, ...]
    rows_before: int
    rows_after: int
    names_kept: int

    @property
    def warnings(self) -> tuple[Finding, ...]:
        """The findings fitted through: action "warn" or "leave_out"."""
        return tuple(f for f in self.findings if f.action in ("warn", "leave_out"))


def screen_returns(
    returns: np.ndarray,
    dates: np.ndarray,
    series: tuple[str, ...],
    spec: ScreenSpec,
    *,
    values: str,
    returns_unit: str,
    periods_per_year: int,
) -> tuple[Finding, ...]:
    """Every finding in a window's returns, in the stable order of :class:`Screen`.

    Parameters
    ----------
    returns : ndarray of shape (n_dates, 1 + n_assets)
        Decimal returns, benchmark first, no missing values, before any risk-free rate.
    dates : ndarray of datetime64[D], shape (n_dates,)
    series : tuple of str, length 1 + n_assets
        How messages name each column.
    spec : ScreenSpec
    values : str
        The job's ``data.values``: "returns" or "prices".
    returns_unit : str
        The job's ``data.returns_unit``: "decimal" or "percent".
    periods_per_year : int

    Returns
    -------
    tuple of Finding
        Empty for a clean window. When the units are wrong, only the units findings: spikes
        and residuals of values in the wrong units mean nothing.
    """
    days = tuple(d.item() for d in dates.astype("datetime64[D]"))
    found = _units(returns, days, series, spec, values, returns_unit, periods_per_year)
    if not found:
        flat = np.ptp(returns, axis=0) == 0  # left out by the loader with its own warning
        # Every series' robust spread at once, as robust_spread gives it one by one.
        centers = np.median(returns, axis=0)
        spreads = MAD_SCALE * np.median(np.abs(returns - centers), axis=0)
        moves: list[Finding] = []
        for j in np.flatnonzero(~flat):
            center, spread = float(centers[j]), float(spreads[j])
            moves += _moves(returns[:, j], days, series[j], spec, center, spread)
            found += _stale(returns[:, j], days, series[j], spec)
        found += moves
        found += _benchmark(returns, flat, days, series, spec, moves)
    order = list(FINDING_KINDS)
    return tuple(sorted(found, key=lambda f: (order.index(f.kind), f.series, f.dates)))


def enforce(findings: tuple[Finding, ...]) -> tuple[date, ...]:
    """Raise on the first "stop" finding; else the dates the "leave_out" findings remove.

    Raises
    ------
    DataError
        Naming the first finding to stop on and how many more findings there are.
    """
    stops = [f for f in findings if f.action == "stop"]
    if stops:
        more = len(findings) - 1
        tail = f" (and {more} more finding(s) of the data screen)" if more else ""
        raise DataError(f"{stops[0].message}{tail}")
    out = {d for f in findings if f.action == "leave_out" for d in f.dates}
    return tuple(sorted(out))


def robust_spread(x: np.ndarray) -> tuple[float, float]:
    """Median and normal-consistent MAD (1.4826 * median |x - median|) of ``x``."""
    center = float(np.median(x))
    return center, MAD_SCALE * float(np.median(np.abs(x - center)))


def split_ratio(gross: float) -> str | None:
    """The split or consolidation a gross return ``1 + r`` looks like, or None."""
    for n in (2, 3, 4, 5, 10):
        if abs(gross * n - 1.0) <= SPLIT_TOLERANCE:
            return f"a {n}-for-1 split"
        if abs(gross / n - 1.0) <= SPLIT_TOLERANCE:
            return f"a 1-for-{n} consolidation"
    return None


def _did(spec: ScreenSpec, kind: str, dates: tuple[date, ...]) -> tuple[str, str]:
    """(action, the words of what trackfit did) for a finding of ``kind``."""
    action = spec.action(kind)
    key = f"screen.{_key(kind)}: {action}"
    if action == "leave_out":
        return action, f"left out {_days(dates)} from every fit and metric ({key})"
    return action, f"{_WHAT[action]} ({key})"


def _key(kind: str) -> str:
    return SCREEN_ACTION_KEYS[kind]


def _days(dates: tuple[date, ...]) -> str:
    if len(dates) <= 3:
        return ", ".join(str(d) for d in dates)
    return f"{len(dates)} dates {dates[0]} to {dates[-1]}"


def _units(returns, days, series, spec, values, unit, periods) -> list[Finding]:
    if values == "prices":
        return []  # returns computed from prices are decimal by construction
    span = (days[0], days[-1])
    sizes = np.median(np.abs(returns), axis=0)
    root = np.sqrt(periods)
    found = []

    def add(j: int, value: float, what: str, fix: str) -> None:
        action, did = _did(spec, "units", span)
        found.append(
            Finding(
                "units",
                series[j],
                span,
                value,
                action,
                f"{series[j]}: {what} ({span[0]} to {span[1]}); {did}; {fix}",
            )
        )

    per_series = set()
    for j, size in enumerate(sizes):
        r = returns[:, j]
        positive = float(np.mean(r > 0))
        if unit == "decimal" and positive >= PRICE_SHARE and size > PRICE_LEVEL:
            add(
                j,
                float(size),
                f"the values look like price levels, not returns: median {size:.6g}, "
                f"{positive:.0%} above zero",
                "set data.values: prices if the file holds prices",
            )
        elif unit == "decimal" and size * root > PERCENT_SIZE:
            add(
                j,
                float(size),
                f"returns declared decimal look like percent: median |r| {size:.6g} per period "
                f"(a 1 % move would be 0.01)",
                "set data.returns_unit: percent or divide the file by 100",
            )
        elif unit == "percent" and size * root < DECIMAL_SIZE:
            add(
                j,
                float(size),
                f"returns declared percent look like decimal: median |r| {size:.6g} per period "
                "after dividing by 100",
                "set data.returns_unit: decimal or multiply the file by 100",
            )
        else:
            continue
        per_series.add(j)
    if 0 not in per_series and len(sizes) > 1:
        typical = float(np.median(sizes[1:]))
        ratio = sizes[0] / typical if typical > 0 else np.inf
        if not 1 / MIXED_RATIO <= ratio <= MIXED_RATIO:
            add(
                0,
                float(sizes[0]),
                f"the benchmark and the constituents look like different units: benchmark "
                f"median |r| {sizes[0]:.6g}, constituents' typical {typical:.6g} "
                f"({ratio:.3g} times)",
                "put every file in the same unit",
            )
    return found


def _moves(
    r: np.ndarray, days, name: str, spec: ScreenSpec, center: float, spread: float
) -> list[Finding]:
    if spread == 0.0 or len(r) < MIN_ROWS:
        return []  # mostly unchanged (the stale check speaks for it), or too few rows
    z = np.abs(r - center) / spread
    with np.errstate(divide="ignore", invalid="ignore"):
        logs = np.log1p(r)
    found = []
    # Only moves past the lowest threshold can be findings: test those alone (one name's
    # series is a few thousand rows, the candidates a handful).
    lowest = spec.jump_mads * min(SPLIT_SHARE, 1.0)
    after_spike = -1
    for t in np.flatnonzero(z > lowest).tolist():
        if t == after_spike:  # the return that undid a spike belongs to it
            continue
        limit = spec.jump_mads * (SPLIT_SHARE if split_ratio(1.0 + r[t]) else 1.0)
        if z[t] <= limit:
            continue
        size = f"{r[t]:+.2%} ({z[t]:.1f} robust spreads)"
        step = logs[t]
        back = logs[t + 1] if t + 1 < len(r) else np.nan
        if (
            np.isfinite(step)
            and np.isfinite(back)
            and abs(step + back) <= (1 - REVERSAL) * abs(step)
        ):
            dates = (days[t], days[t + 1])
            action, did = _did(spec, "spike", dates)
            message = (
                f"{name}: a spike on {days[t]}: return {size}, undone on {days[t + 1]} "
                f"({r[t + 1]:+.2%}), as a bad print is; {did}"
            )
            found.append(Finding("spike", name, dates, float(r[t]), action, message))
            after_spike = t + 1
            continue
        dates = (days[t],)
        ratio = split_ratio(1.0 + r[t])
        like = f", as {ratio} would be" if ratio else ""
        action, did = _did(spec, "jump", dates)
        message = f"{name}: a jump on {days[t]}: return {size} that stays{like}; {did}"
        if ratio:
            message += "; adjust the prices for it"
        found.append(Finding("jump", name, dates, float(r[t]), action, message))
    return found


def _stale(r: np.ndarray, days, name: str, spec: ScreenSpec) -> list[Finding]:
    zero = np.concatenate([[False], r == 0.0, [False]])
    edges = np.flatnonzero(np.diff(zero.astype(np.int8)))
    found = []
    for start, stop in zip(edges[::2], edges[1::2]):
        run = int(stop - start)
        if run <= spec.stale_periods:
            continue
        dates = tuple(days[start:stop])
        action, did = _did(spec, "stale", dates)
        message = (
            f"{name}: the price is unchanged for {run} periods in a row ({days[start]} to "
            f"{days[stop - 1]}; screen.stale_periods is {spec.stale_periods}); {did}"
        )
        found.append(Finding("stale", name, dates, float(run), action, message))
    return found


def loo_residuals(X: np.ndarray, y: np.ndarray, penalty: float) -> np.ndarray:
    """Leave-one-out residuals ``e_t / (1 - h_tt)`` of a ridge fit without intercept.

    Parameters
    ----------
    X : ndarray of shape (n_dates, n_assets)
    y : ndarray of shape (n_dates,)
    penalty : float
        Ridge penalty added to the diagonal of X'X (> 0 keeps every h_tt below 1).

    Returns
    -------
    ndarray of shape (n_dates,)
        Exactly the residual of a fit on the other dates at each date (ridge has a closed form
        leave-one-out, the PRESS residual); NaN where ``1 - h_tt`` vanishes.
    """
    gram = X.T @ X + penalty * np.eye(X.shape[1])
    chol = np.linalg.cholesky(gram)
    half = np.linalg.solve(chol, X.T)  # L^-1 X', so H = half' half
    leverage = np.einsum("ij,ij->j", half, half)
    fitted = half.T @ (half @ y)
    room = 1.0 - leverage
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(room > 1e-10, (y - fitted) / room, np.nan)


def _benchmark(returns, flat, days, series, spec, moves) -> list[Finding]:
    columns = np.flatnonzero(~flat[1:]) + 1
    if flat[0] or columns.size == 0 or len(days) < columns.size + MIN_ROWS:
        return []  # with barely more rows than names, every leave-one-out fit is loose
    X = returns[:, columns].copy()
    # A constituent's own bad print would show as a benchmark residual too: report it once.
    where = {name: j for j, name in enumerate(series[c] for c in columns)}
    index = {d: t for t, d in enumerate(days)}
    for f in moves:
        if f.series in where:
            j = where[f.series]
            X[[index[d] for d in f.dates], j] = np.median(X[:, j])
    y = returns[:, 0]
    scale = np.sqrt(np.mean(X * X, axis=0))  # standardize without centering
    X = X / scale
    penalty = RIDGE_SHARE * float(np.mean(np.einsum("ij,ij->j", X, X)))
    e = loo_residuals(X, y, penalty)
    ok = np.isfinite(e)
    if ok.sum() < 3:
        return []
    center, spread = robust_spread(e[ok])
    spread = max(spread, 1e-12 * float(np.median(np.abs(y))))
    if spread == 0.0:
        return []
    z = np.where(ok, np.abs(e - center) / spread, 0.0)
    found = []
    for t in np.flatnonzero(z > spec.benchmark_mads):
        dates = (days[t],)
        action, did = _did(spec, "benchmark", dates)
        message = (
            f"{series[0]}: the benchmark return on {days[t]} ({y[t]:+.2%}) is not explained by "
            f"the constituents: {e[t]:+.2%} off a fit on the other dates ({z[t]:.1f} robust "
            f"spreads; screen.benchmark_mads is {spec.benchmark_mads:g}); {did}"
        )
        found.append(Finding("benchmark", series[0], dates, float(y[t]), action, message))
    return found
