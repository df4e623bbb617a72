"""Engine benchmark: trackfit's cross-validation timed against scikit-learn's in the same run.

Measurement only. For seeded synthetic factor-model returns of three sizes it prints, per case,
median times, the ratio scikit-learn / trackfit, each side's chosen penalty, the optimality (KKT)
residual of each side's refitted solution, a stability check, peak memory of a large fit, and a
final table of the speed and accuracy targets with PASS/FAIL. See benchmarks/README.md.

Usage::

    python benchmarks/engine.py [--sizes A,B,C] [--repeats N] [--quick]
        [--cases lasso,slow,enet,walk,memory] [--threads T] [--slow-limit S]
        [--memory-limit S] [--profile]
"""

from __future__ import annotations

import os
import sys

_THREAD_VARS = ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS")


def _threads_from_argv(argv: list[str]) -> int | None:
    """``--threads`` read before numpy loads, since BLAS reads its thread count at import."""
    for i, arg in enumerate(argv):
        if arg == "--threads" and i + 1 < len(argv):
            return int(argv[i + 1])
        if arg.startswith("--threads="):
            return int(arg.split("=", 1)[1])
    return None


_FOUND = {var: os.environ.get(var) for var in _THREAD_VARS}
_THREADS = _threads_from_argv(sys.argv) or int(
    next((v for v in _FOUND.values() if v), os.cpu_count() or 1)
)
for _var in _THREAD_VARS:
    os.environ[_var] = str(_THREADS)
sys.path.insert(0, os.path.dirname(os.path.dirname(os.path.abspath(__file__))))

import argparse  # noqa: E402
import cProfile  # noqa: E402
import gc  # noqa: E402
import multiprocessing  # noqa: E402
import pstats  # noqa: E402
import queue  # noqa: E402
import resource  # noqa: E402
import time  # noqa: E402
import tracemalloc  # noqa: E402
import warnings  # noqa: E402
from dataclasses import dataclass, field  # noqa: E402

import numpy as np  # noqa: E402
from factor_data import factor_returns  # noqa: E402
from sklearn.exceptions import ConvergenceWarning  # noqa: E402
from sklearn.linear_model import ElasticNetCV, LassoCV  # noqa: E402
from sklearn.model_selection import TimeSeriesSplit  # noqa: E402
from sklearn.preprocessing import StandardScaler  # noqa: E402
from threadpoolctl import threadpool_info, threadpool_limits  # noqa: E402

from trackfit.commands.backtest import RebalanceFitter, shared_blocks  # noqa: E402
from trackfit.core.cv import cross_validate  # noqa: E402
from trackfit.core.fit import fit_penalized  # noqa: E402
from trackfit.core.folds import ForwardChaining  # noqa: E402
from trackfit.core.limits import NO_LIMITS  # noqa: E402
from trackfit.core.models import ModelSpec  # noqa: E402
from trackfit.evaluate.recipe import Model, StudyDesign, choose_penalty, fit_model  # noqa: E402
from trackfit.job import BacktestSpec  # noqa: E402

SIZES = {"A": (2520, 500), "B": (750, 2000), "C": (260, 100)}
SEEDS = {"A": 1, "B": 2, "C": 3}
CASES = ("lasso", "slow", "enet", "walk", "memory")
LASSO = ModelSpec("lasso", "lasso", (1.0,))
EN_RATIOS = (0.25, 0.5, 0.75)
ENET = ModelSpec("elastic_net", "elastic_net", EN_RATIOS)
FOLDS, COUNT, MIN_RATIO = 5, 100, 1e-3
WALK = dict(window=756, step=21, dates=60, assets=500)
MEMORY = dict(rows=1260, assets=3000)
QUICK = 4  # --quick divides every row and column count by this
GIB = 2**30


# ---------------------------------------------------------------------------------------------
# Data


def prescale(X: np.ndarray, y: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """``StandardScaler(with_mean=False)`` on X and y, the scaling both sides then share."""
    Xs = StandardScaler(with_mean=False).fit_transform(X)
    ys = StandardScaler(with_mean=False).fit_transform(y[:, None]).ravel()
    return Xs, ys


def perturbed(X: np.ndarray, y: np.ndarray, seed: int) -> tuple[np.ndarray, np.ndarray]:
    """The data multiplied elementwise by ``1 + 1e-12 * noise`` (rounding-level change)."""
    rng = np.random.default_rng(seed)
    X = X * (1 + 1e-12 * rng.standard_normal(X.shape))
    return X, y * (1 + 1e-12 * rng.standard_normal(len(y)))


def grid(X: np.ndarray, y: np.ndarray, l1_ratio: float) -> np.ndarray:
    """The shared penalty grid: ``max|X'y|/(n l1_ratio)`` down 1e-3, 100 log-spaced points."""
    top = float(np.max(np.abs(X.T @ y))) / (len(y) * l1_ratio)
    return np.logspace(np.log10(top), np.log10(top * MIN_RATIO), COUNT)


# ---------------------------------------------------------------------------------------------
# One solve by each side


def kkt_residual(
    X: np.ndarray, y: np.ndarray, w: np.ndarray, alpha: float, l1_ratio: float
) -> float:
    """Elastic-net KKT residual from the rows, relative to ``max|X'y|/n``.

    ``r = X'(y - Xw)/n - alpha (1 - l1_ratio) w``; active: ``|r_j - alpha l1_ratio sign(w_j)|``,
    inactive: ``max(|r_j| - alpha l1_ratio, 0)``; the largest, over ``max|X'y|/n``.
    """
    n = len(y)
    l1, l2 = alpha * l1_ratio, alpha * (1.0 - l1_ratio)
    r = X.T @ (y - X @ w) / n - l2 * w
    viol = np.where(w != 0, np.abs(r - l1 * np.sign(w)), np.maximum(np.abs(r) - l1, 0.0))
    return float(np.max(viol)) / (float(np.max(np.abs(X.T @ y))) / n)


@dataclass
class Solve:
    """One timed solve: seconds, choice, refitted weights, and what else is worth printing."""

    seconds: float
    alpha: float
    l1_ratio: float
    weights: np.ndarray
    grids: list = field(default_factory=list)  # per l1_ratio, as the side used them
    notes: tuple = ()
    warnings: int = 0
    split: tuple = ()  # trackfit: (cv seconds, refit seconds)


def trackfit_solve(X: np.ndarray, y: np.ndarray, spec: ModelSpec) -> Solve:
    """``cross_validate`` on pre-scaled data, then the refit at the chosen penalty.

    The refit is timed too, since ``LassoCV.fit`` also refits on all rows.
    """
    gc.collect()
    t0 = time.perf_counter()
    cv = cross_validate(X, y, spec, ForwardChaining(FOLDS), count=COUNT, refit_scaling=False)
    t1 = time.perf_counter()
    fit = fit_penalized(X, y, cv.alpha, cv.l1_ratio)
    t2 = time.perf_counter()
    return Solve(
        seconds=t2 - t0,
        alpha=cv.alpha,
        l1_ratio=cv.l1_ratio,
        weights=fit.weights,
        grids=[c.alphas for c in cv.curves],
        notes=cv.notes,
        split=(t1 - t0, t2 - t1),
    )


def sklearn_solve(X: np.ndarray, y: np.ndarray, spec: ModelSpec, tol: float = 1e-4) -> Solve:
    """``LassoCV`` (explicit shared grid) or ``ElasticNetCV`` (its own per-l1_ratio grid,
    which is the same formula; an explicit array would be shared across l1_ratios)."""
    extra = {} if tol == 1e-4 else {"tol": tol, "max_iter": 10**7}
    if spec.l1_ratios == (1.0,):
        model = LassoCV(
            alphas=grid(X, y, 1.0), cv=TimeSeriesSplit(FOLDS), fit_intercept=False, **extra
        )
    else:
        model = ElasticNetCV(
            l1_ratio=list(spec.l1_ratios),
            alphas=COUNT,
            eps=MIN_RATIO,
            cv=TimeSeriesSplit(FOLDS),
            fit_intercept=False,
            **extra,
        )
    gc.collect()
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", ConvergenceWarning)
        t0 = time.perf_counter()
        model.fit(X, y)
        seconds = time.perf_counter() - t0
    alphas = np.atleast_2d(model.alphas_)
    return Solve(
        seconds=seconds,
        alpha=float(model.alpha_),
        l1_ratio=float(getattr(model, "l1_ratio_", 1.0)),
        weights=model.coef_.copy(),
        grids=list(alphas),
        warnings=sum(issubclass(w.category, ConvergenceWarning) for w in caught),
    )


def in_child(fn, limit: float):
    """Run ``fn()`` in a forked child (fresh peak-memory counters, stoppable).

    Returns ``fn()``'s result, or None when the child ran past ``limit`` seconds (it is then
    terminated). An exception in the child is raised again here as RuntimeError.
    """
    ctx = multiprocessing.get_context("fork")  # the child shares the parent's arrays, unpickled
    results = ctx.Queue()

    def target() -> None:
        try:
            results.put(("ok", fn()))
        except BaseException as exc:  # report it to the parent instead of dying silently
            results.put(("error", f"{type(exc).__name__}: {exc}"))

    child = ctx.Process(target=target)
    child.start()
    deadline = time.monotonic() + limit
    outcome = None
    while outcome is None and time.monotonic() < deadline:
        try:
            outcome = results.get(timeout=min(1.0, max(deadline - time.monotonic(), 0.01)))
        except queue.Empty:
            if not child.is_alive() and results.empty():
                outcome = ("error", f"child exited with code {child.exitcode}")
    if outcome is None:
        child.terminate()
    child.join()
    if outcome is None:
        return None
    if outcome[0] == "error":
        raise RuntimeError(outcome[1])
    return outcome[1]


# ---------------------------------------------------------------------------------------------
# Printing


@dataclass
class Row:
    case: str
    side: str
    times: list[float]
    solve: Solve
    kkt: float
    index: str

    @property
    def median(self) -> float:
        return float(np.median(self.times))


def grid_index(s: Solve) -> str:
    """Position of the chosen penalty in its grid, and its l1_ratio when there are several."""
    for ratio_at, g in enumerate(s.grids):
        hits = np.flatnonzero(np.isclose(g, s.alpha, rtol=1e-9, atol=0.0))
        if len(hits) and (len(s.grids) == 1 or np.isclose(EN_RATIOS[ratio_at], s.l1_ratio)):
            return f"{hits[0]}" if len(s.grids) == 1 else f"{s.l1_ratio:g}/{hits[0]}"
    return "off-grid"


HEADER = (
    f"{'case':<16} {'side':<9} {'median s':>9}  {'runs s':<22} {'alpha':>11} {'l1r':>5} "
    f"{'index':>7} {'names':>5} {'KKT rel':>9} {'conv.warn':>9}"
)


def print_row(r: Row) -> None:
    runs = ",".join(f"{t:.2f}" for t in r.times)
    print(
        f"{r.case:<16} {r.side:<9} {r.median:9.3f}  {runs:<22} {r.solve.alpha:11.4e} "
        f"{r.solve.l1_ratio:5.2f} {r.index:>7} {np.count_nonzero(r.solve.weights):5d} "
        f"{r.kkt:9.1e} {r.solve.warnings if r.side == 'sklearn' else '':>9}"
    )


def grid_gap(a: Solve, b: Solve) -> float:
    """Largest relative difference between the two sides' grids over their common length."""
    gaps = [
        float(np.max(np.abs(ga[: len(gb)] - gb[: len(ga)]) / gb[: len(ga)]))
        for ga, gb in zip(a.grids, b.grids)
    ]
    return max(gaps)


# ---------------------------------------------------------------------------------------------
# Cases


def timed(fn, repeats: int) -> tuple[list[float], Solve]:
    solves = [fn() for _ in range(repeats)]
    return [s.seconds for s in solves], solves[-1]


def _row(case: str, side: str, times: list[float], s: Solve, X, y) -> Row:
    kkt = kkt_residual(X, y, s.weights, s.alpha, s.l1_ratio)
    return Row(case, side, times, s, kkt, grid_index(s))


def _say(text: str) -> None:
    print(f"{'':<17}{text}")


def size_cases(name: str, X: np.ndarray, y: np.ndarray, args, targets: Targets) -> None:
    """Lasso at both tolerances, elastic net, and the stability check on one size."""
    print(f"\n== size {name}: {X.shape[0]} rows x {X.shape[1]} constituents ==")
    print(HEADER)
    Xs, ys = prescale(X, y)
    Xp, yp = perturbed(Xs, ys, seed=99)
    plans = []  # (label, spec, sklearn tolerances)
    lasso_tols = [tol for case, tol in (("lasso", 1e-4), ("slow", 1e-8)) if case in args.cases]
    if lasso_tols:
        plans.append(("lasso", LASSO, lasso_tols))
    if "enet" in args.cases:
        plans.append(("enet", ENET, [1e-4]))
    for label, spec, tols in plans:
        times, t = timed(lambda spec=spec: trackfit_solve(Xs, ys, spec), args.repeats)
        rt = _row(f"{label} CV", "trackfit", times, t, Xs, ys)
        print_row(rt)
        _say(f"(last run: cross_validate {t.split[0]:.3f} s + refit {t.split[1]:.3f} s)")
        for note in t.notes:
            _say(f"note: {note}")
        targets.kkt.append((f"{label} {name}", rt.kkt))
        moved = trackfit_solve(Xp, yp, spec)
        same = grid_index(moved) == rt.index
        targets.stable.append((f"{label} {name}", same))
        _say(
            f"stability: chosen {grid_index(moved)} after 1e-12 perturbation (alpha relative "
            f"change {abs(moved.alpha - t.alpha) / t.alpha:.1e}) -> "
            f"{'unchanged' if same else 'CHANGED'}"
        )
        for tol in tols:
            tag = f"tol={tol:.0e}".replace("e-0", "e-")
            if tol == 1e-4:
                s_times, s = timed(
                    lambda spec=spec, tol=tol: sklearn_solve(Xs, ys, spec, tol), args.repeats
                )
            else:
                s = in_child(
                    lambda spec=spec, tol=tol: sklearn_solve(Xs, ys, spec, tol), args.slow_limit
                )
                if s is None:
                    ratio = args.slow_limit / rt.median
                    case = f"{label} {tag}"
                    print(f"{case:<16} {'sklearn':<9} stopped after {args.slow_limit:.0f} s")
                    _say(f"ratio sklearn/trackfit > {ratio:.2f}")
                    targets.ratio[(label, tag, name)] = (ratio, True)
                    continue
                s_times = [s.seconds]
            rs = _row(f"{label} {tag}", "sklearn", s_times, s, Xs, ys)
            print_row(rs)
            ratio = rs.median / rt.median
            targets.ratio[(label, tag, name)] = (ratio, False)
            _say(
                f"ratio sklearn/trackfit {ratio:.2f}; chosen penalty "
                f"{'same' if rs.index == rt.index else 'DIFFERENT'}; grids differ by at most "
                f"{grid_gap(t, s):.1e} (relative)"
            )
            if label == "lasso" and tol == 1e-4:
                other = grid_index(sklearn_solve(Xp, yp, spec, tol))
                _say(
                    f"sklearn stability (information): chosen {other} after perturbation -> "
                    f"{'unchanged' if other == rs.index else 'CHANGED'}"
                )


def walk_forward(args, targets: Targets) -> None:
    """60 monthly rebalances: a full lasso CV on the trailing window at each month-end."""
    div = QUICK if args.quick else 1
    window, step, p = WALK["window"] // div, WALK["step"] // div, WALK["assets"] // div
    dates = WALK["dates"]
    X, y = factor_returns(window + dates * step, p, seed=7)
    ends = [window + step * i for i in range(1, dates + 1)]
    print(
        f"\n== walk-forward: {dates} rebalances every {step} rows on the trailing {window} rows, "
        f"{p} constituents ({len(y)} rows) =="
    )
    windows = [prescale(X[e - window : e], y[e - window : e]) for e in ends]
    spans = [(e - window, e) for e in ends]

    def run_trackfit():
        # The code `trackfit backtest` runs at every rebalance (commands.backtest): the raw
        # series, row blocks shared by every window within the default memory cap, the model
        # recipe (cross-validation with the scaling refitted in every fold, then the fit on the
        # window at the chosen penalty, scaled on the window's rows as prescale does for LassoCV).
        gc.collect()
        t0 = time.perf_counter()
        design = StudyDesign(ForwardChaining(FOLDS), count=COUNT, min_ratio=MIN_RATIO)
        rows = np.array([e - 1 for e in ends])
        blocks, note = shared_blocks(X, y, rows, window, design.splitter, BacktestSpec.memory_mb)
        fitter = RebalanceFitter(
            X=X,
            y=y,
            dates=np.arange(len(y)).astype("datetime64[D]"),
            names=tuple(f"n{j}" for j in range(p)),
            model=Model.of(LASSO),
            design=design,
            limits=NO_LIMITS,
            lookback=window,
            blocks=blocks,
        )
        out = []
        for start, stop in spans:
            Xw, yw = X[start:stop], y[start:stop]
            cv = choose_penalty(Xw, yw, Model.of(LASSO), design, blocks=blocks, row_offset=start)
            out.append((cv, fit_model(Xw, yw, Model.of(LASSO), cv, design)))
        seconds = time.perf_counter() - t0
        # The fitter is the backtest's own object: it must give these very weights.
        assert fitter(int(rows[-1])).weights.tobytes() == out[-1][1].weights.tobytes()
        return seconds, out, 0

    def run_sklearn():
        # scikit-learn's own grid for l1_ratio=1, no intercept, is trackfit's grid (checked below).
        gc.collect()
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always", ConvergenceWarning)
            t0 = time.perf_counter()
            out = [
                LassoCV(
                    alphas=COUNT, eps=MIN_RATIO, cv=TimeSeriesSplit(FOLDS), fit_intercept=False
                ).fit(Xw, yw)
                for Xw, yw in windows
            ]
            seconds = time.perf_counter() - t0
        return seconds, out, sum(issubclass(w.category, ConvergenceWarning) for w in caught)

    t_runs = [run_trackfit() for _ in range(args.repeats)]
    s_runs = [run_sklearn() for _ in range(args.repeats)]
    t_med = float(np.median([r[0] for r in t_runs]))
    s_med = float(np.median([r[0] for r in s_runs]))
    pairs = list(zip(windows, t_runs[-1][1], s_runs[-1][1]))
    same = sum(bool(np.isclose(cv.alpha, m.alpha_, rtol=1e-9)) for _, (cv, _), m in pairs)
    gap = max(
        float(np.max(np.abs(cv.curves[0].alphas[:COUNT] - m.alphas_) / m.alphas_))
        for _, (cv, _), m in pairs
    )
    # coef_std: trackfit's weights in the units of the prescaled window.
    kkt_t = max(kkt_residual(Xw, yw, f.coef_std, cv.alpha, 1.0) for (Xw, yw), (cv, f), _ in pairs)
    kkt_s = max(kkt_residual(Xw, yw, m.coef_, m.alpha_, 1.0) for (Xw, yw), _, m in pairs)
    notes = sum(len(cv.notes) for _, (cv, _), _ in pairs)
    for side, med, runs, extra in (
        ("trackfit", t_med, t_runs, f"worst KKT {kkt_t:.1e}  grid notes {notes}"),
        ("sklearn", s_med, s_runs, f"worst KKT {kkt_s:.1e}  conv.warn {s_runs[-1][2]}"),
    ):
        shown = ",".join(f"{r[0]:.2f}" for r in runs)
        print(f"{side:<9} median {med:8.2f} s  runs {shown}  ({med / dates:.3f} s a date)  {extra}")
    print(
        f"ratio sklearn/trackfit {s_med / t_med:.2f}; same chosen penalty on {same}/{dates} "
        f"dates (trackfit refits the scaling inside every fold, LassoCV on prescaled windows "
        f"does not); grids differ by at most {gap:.1e}"
    )
    targets.walk = s_med / t_med
    targets.kkt.append(("walk-forward", kkt_t))


def memory(args, targets: Targets) -> None:
    """Peak memory of one full lasso CV (and refit) at p = 3000, n = 1260, in fresh children.

    One child reads its own maxrss before and after (no tracing, so its time is clean); a
    second runs under tracemalloc, which sees numpy's allocations but adds bookkeeping.
    """
    div = QUICK if args.quick else 1
    n, p = MEMORY["rows"] // div, MEMORY["assets"] // div
    Xs, ys = prescale(*factor_returns(n, p, seed=11))
    print(f"\n== memory: {n} rows x {p} constituents (input X {Xs.nbytes / 2**20:.0f} MiB) ==")

    def rss_run():
        before = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
        s = trackfit_solve(Xs, ys, LASSO)
        after = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss  # KiB on Linux
        return s.seconds, (after - before) * 1024, kkt_residual(Xs, ys, s.weights, s.alpha, 1.0)

    def traced_run():
        tracemalloc.start()
        trackfit_solve(Xs, ys, LASSO)
        peak = tracemalloc.get_traced_memory()[1]
        tracemalloc.stop()
        return peak

    seconds, rss, kkt = in_child(rss_run, args.memory_limit) or (None, None, None)
    if seconds is None:
        print(f"trackfit  stopped after {args.memory_limit:.0f} s")
        return
    peak = in_child(traced_run, 3 * args.memory_limit)
    print(f"trackfit  {seconds:.2f} s  KKT {kkt:.1e}")
    print(
        f"peak above the input: tracemalloc {peak / 2**20:.0f} MiB, "
        f"maxrss delta {rss / 2**20:.0f} MiB"
    )
    targets.memory = (peak, rss)
    targets.kkt.append(("memory", kkt))


def profile(X: np.ndarray, y: np.ndarray) -> None:
    """cProfile of trackfit's lasso CV (with refit) on the given size."""
    Xs, ys = prescale(X, y)
    prof = cProfile.Profile()
    prof.runcall(trackfit_solve, Xs, ys, LASSO)
    stats = pstats.Stats(prof, stream=sys.stdout).strip_dirs()
    print("\n== profile: trackfit lasso CV, by own time ==")
    stats.sort_stats("tottime").print_stats(15)
    print("== profile: by cumulative time ==")
    stats.sort_stats("cumulative").print_stats(20)


# ---------------------------------------------------------------------------------------------
# Targets

SPEED_TARGETS = (  # (case, sklearn tolerance, size, required ratio, label)
    ("lasso", "tol=1e-4", "A", 3, "L1 CV vs LassoCV tol=1e-4, A"),
    ("lasso", "tol=1e-4", "B", 3, "L1 CV vs LassoCV tol=1e-4, B"),
    ("lasso", "tol=1e-8", "A", 30, "L1 CV vs LassoCV tol=1e-8, A"),
    ("enet", "tol=1e-4", "A", 3, "EN CV vs ElasticNetCV tol=1e-4, A"),
    ("enet", "tol=1e-4", "B", 3, "EN CV vs ElasticNetCV tol=1e-4, B"),
)


@dataclass
class Targets:
    ratio: dict = field(default_factory=dict)  # (case, tol tag, size) -> (ratio, lower bound?)
    kkt: list = field(default_factory=list)  # (case, trackfit KKT residual)
    stable: list = field(default_factory=list)  # (case, chosen penalty unchanged?)
    walk: float | None = None
    memory: tuple | None = None  # (tracemalloc peak, maxrss delta) in bytes

    def rows(self) -> list[tuple[str, str, str, str]]:
        rows = []
        for case, tag, size, need, what in SPEED_TARGETS:
            got = self.ratio.get((case, tag, size))
            if got is None:
                rows.append((what, f">= {need}x", "not run", "-"))
            else:
                shown = (">" if got[1] else "") + f"{got[0]:.2f}x"
                rows.append((what, f">= {need}x", shown, _verdict(got[0] >= need)))
        what = "backtest-path walk-forward, 60 dates, vs LassoCV loop"
        if self.walk is None:
            rows.append((what, ">= 5x", "not run", "-"))
        else:
            rows.append((what, ">= 8x", f"{self.walk:.2f}x", _verdict(self.walk >= 8)))
        what = "peak memory p=3000, n=1260 (trace/rss)"
        if self.memory is None:
            rows.append((what, "< 2 GiB", "not run", "-"))
        else:
            peak, rss = self.memory
            shown = f"{peak / GIB:.2f} / {rss / GIB:.2f} GiB"
            rows.append((what, "< 2 GiB", shown, _verdict(max(peak, rss) < 2 * GIB)))
        what = "trackfit KKT residual, every case"
        if not self.kkt:
            rows.append((what, "< 1e-8", "not run", "-"))
        else:
            worst = max(k for _, k in self.kkt)
            rows.append((what, "< 1e-8", f"{worst:.1e}", _verdict(worst < 1e-8)))
        what = "stability under 1e-12 perturbation"
        if not self.stable:
            rows.append((what, "unchanged", "not run", "-"))
        else:
            kept = sum(same for _, same in self.stable)
            shown = f"{kept}/{len(self.stable)} unchanged"
            rows.append((what, "unchanged", shown, _verdict(kept == len(self.stable))))
        return rows

    def report(self, quick: bool) -> None:
        scope = " (quick mode: measured at a quarter of each size)" if quick else ""
        print(f"\n== targets =={scope}")
        for what, need, got, verdict in self.rows():
            print(f"{what:<42} {need:>10} {got:>22}  {verdict}")


def _verdict(ok: bool) -> str:
    return "PASS" if ok else "FAIL"


def main(argv: list[str] | None = None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    add = parser.add_argument
    add("--sizes", default="A,B,C", help="comma-separated subset of A,B,C")
    add("--repeats", type=int, default=3, help="runs per timed case; the median is shown")
    add("--quick", action="store_true", help="divide every row and column count by 4")
    add("--cases", default=",".join(CASES), help=f"comma-separated subset of {','.join(CASES)}")
    add("--threads", type=int, default=_THREADS, help="BLAS/OpenMP threads (read before numpy)")
    add("--slow-limit", type=float, default=600.0, help="seconds before sklearn tol=1e-8 stops")
    add("--memory-limit", type=float, default=1800.0, help="seconds before the memory case stops")
    add("--profile", action="store_true", help="cProfile trackfit's lasso CV on size A")
    args = parser.parse_args(argv)
    args.cases = [c for c in args.cases.split(",") if c]
    sizes = [s for s in args.sizes.split(",") if s]
    unknown = sorted(set(args.cases) - set(CASES)) + sorted(set(sizes) - set(SIZES))
    if unknown:
        parser.error(f"unknown case or size: {', '.join(unknown)}")

    with threadpool_limits(limits=args.threads):
        found = ", ".join(f"{k}={v}" for k, v in _FOUND.items())
        print(f"threads: {args.threads} (environment as found: {found})")
        for lib in threadpool_info():
            print(
                f"  {lib['user_api']}/{lib['internal_api']} {lib.get('version')}: "
                f"{lib['num_threads']} threads"
            )
        mode = "quick (rows and columns / 4)" if args.quick else "full"
        print(f"cpu cores: {os.cpu_count()}; numpy {np.__version__}; mode: {mode}")
        targets = Targets()
        for name in sizes:
            n, p = SIZES[name]
            if args.quick:
                n, p = n // QUICK, p // QUICK
            X, y = factor_returns(n, p, seed=SEEDS[name])
            if {"lasso", "slow", "enet"} & set(args.cases):
                size_cases(name, X, y, args, targets)
            if args.profile and name == "A":
                profile(X, y)
        if "walk" in args.cases:
            walk_forward(args, targets)
        if "memory" in args.cases:
            memory(args, targets)
        targets.report(args.quick)


if __name__ == "__main__":
    main()
