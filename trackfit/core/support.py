"""Which names to hold under a maximum number of names, and the minimum position size.

Holding at most ``K`` names makes the fit a search over supports (sets of names). Every
support is judged by a *refit*: a callable that solves the fit under every other limit with
weights restricted to the support and returns its objective. The search here only calls it.

The search: greedy forward selection (at each step add the name whose refit lowers the
objective most), then best-improvement swaps (one name out, one in) until no swap lowers the
objective. Caller-given starts (trackfit gives the lasso-path support) are grown to ``K``
names the same way; the swaps start from the best of these supports.

It relies on one property of a refit, true of any exact minimization over weights supported on
the mask: a larger mask never has a larger objective. Hence the objective of ``S + {j}``
bounds from below that of every swap bringing ``j`` into ``S``, so a name whose addition does
not help is never tried in a swap, candidates are tried in the order of that bound, and a pass
stops as soon as the bound cannot beat the best swap found. These cuts are exact: they never
skip a swap that would have been accepted. Screening (for cross-validation) is the one cut
that is not: it tries only the few names whose addition helps most.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence

import numpy as np

from trackfit.core.gram import GramData
from trackfit.core.grid import alpha_max
from trackfit.core.results import SupportSearch
from trackfit.core.solvers import ExactPathSolver
from trackfit.core.solvers.active_set import solve_enet
from trackfit.errors import SolverError

#: ``refit(mask) -> (objective, weights)``; ``mask`` bool of shape (n_assets,), ``weights`` of
#: shape (n_assets,) in original units with exact zeros off the mask; ``objective`` is +inf
#: when no weights on that support satisfy the other limits. Any mask, even empty, is valid.
Refit = Callable[[np.ndarray], tuple[float, np.ndarray]]

# Refits are exact to rounding, so a decrease smaller than this (relative) is noise: accepting
# it would make the names held depend on the machine's rounding.
_RTOL = 1e-10
# The lasso path is solved on this log grid below alpha_max, then its crossing of the cap is
# located by bisection to far below the grid step.
_PATH_DECADES = 6
_PATH_PER_DECADE = 20
_BISECTIONS = 40


def _check_int(func: str, name: str, value: object, minimum: int) -> int:
    is_int = isinstance(value, (int, np.integer)) and not isinstance(value, (bool, np.bool_))
    if not (is_int and value >= minimum):
        raise ValueError(
            f"The '{name}' parameter of {func} must be an int >= {minimum}. Got {value!r}."
        )
    return int(value)


def _check_mask(func: str, name: str, mask: object, n_assets: int) -> np.ndarray:
    arr = np.asarray(mask)
    if arr.dtype != bool or arr.shape != (n_assets,):
        raise ValueError(
            f"The '{name}' parameter of {func} must be a bool array of shape ({n_assets},). "
            f"Got dtype {arr.dtype}, shape {arr.shape}."
        )
    return arr.copy()


def _improves(new: float, old: float) -> bool:
    """True when ``new`` is lower than ``old`` by more than rounding (anything finite beats inf)."""
    if old == np.inf:
        return new < np.inf
    return new < old - _RTOL * abs(old)


class CachedRefit:
    """A refit that solves each support once and counts the supports it solved.

    Pass one instance to :func:`search_support` and then to :func:`enforce_min_position` so
    the second reuses the first's refits.

    Parameters
    ----------
    refit : Refit
    n_assets : int
    """

    def __init__(self, refit: Refit, n_assets: int):
        self._refit = refit
        self.n_assets = n_assets
        self._memo: dict[frozenset[int], tuple[float, np.ndarray]] = {}
        self.evaluations = 0

    def solve(self, held: frozenset[int]) -> tuple[float, np.ndarray]:
        """Objective and weights (read-only) of the refit on the positions ``held``."""
        hit = self._memo.get(held)
        if hit is None:
            mask = np.zeros(self.n_assets, dtype=bool)
            mask[sorted(held)] = True
            objective, weights = self._refit(mask.copy())
            objective = float(objective)
            weights = np.array(weights, dtype=float)
            if weights.shape != (self.n_assets,):
                raise ValueError(
                    f"refit returned weights of shape {weights.shape}; expected ({self.n_assets},)"
                )
            if np.isnan(objective) or np.any(weights[~mask] != 0.0):
                raise ValueError(
                    "refit broke its contract on support "
                    f"{sorted(held)}: the objective must not be NaN and the weights must be "
                    "exactly 0 off the mask"
                )
            weights.setflags(write=False)
            hit = (objective, weights)
            self._memo[held] = hit
            self.evaluations += 1
        return hit

    def __call__(self, mask: np.ndarray) -> tuple[float, np.ndarray]:
        objective, weights = self.solve(frozenset(np.flatnonzero(mask).tolist()))
        return objective, weights.copy()


def _cached(refit: Refit, n_assets: int, func: str) -> CachedRefit:
    if isinstance(refit, CachedRefit):
        if refit.n_assets != n_assets:
            raise ValueError(
                f"{func}: the CachedRefit was made for {refit.n_assets} names, not {n_assets}"
            )
        return refit
    return CachedRefit(refit, n_assets)


def lasso_path_support(data: GramData, max_names: int, *, positive: bool) -> np.ndarray:
    """Names held at the least-penalized point of the lasso path that holds at most ``max_names``.

    The path (long-only when ``positive``) is solved exactly at ``20`` log-spaced penalties per
    decade from ``alpha_max`` down to ``1e-6 alpha_max``. The smallest of these within the cap
    is then lowered by bisection towards the next grid penalty (over the cap), so the support
    returned is the path's just above the penalty where it goes over the cap. A stretch of the
    path within the cap narrower than the grid step (12 %) can be missed; the support only
    seeds :func:`search_support`, which does not depend on it being the best.

    Parameters
    ----------
    data : GramData
    max_names : int
        At least 1.
    positive : bool

    Returns
    -------
    ndarray of bool, shape (k,)
        Over ``data.columns``; all False when no name can enter the path.
    """
    max_names = _check_int("lasso_path_support", "max_names", max_names, 1)
    k = len(data.xty)
    top = alpha_max(data, 1.0, positive=positive)
    if k == 0 or top == 0.0:
        return np.zeros(k, dtype=bool)
    count = _PATH_DECADES * _PATH_PER_DECADE + 1
    alphas = top * np.logspace(0.0, -_PATH_DECADES, count)
    coefs = ExactPathSolver().path(data, alphas, 1.0, positive=positive).coefs
    within = np.flatnonzero(np.count_nonzero(coefs, axis=1) <= max_names)
    i = int(within[-1])  # the top of the grid holds nothing, so there is always one
    best = coefs[i]
    if i + 1 < count:
        hi, lo = alphas[i], alphas[i + 1]
        for _ in range(_BISECTIONS):
            mid = float(np.sqrt(hi * lo))
            w, _steps = solve_enet(data.gram, data.xty, mid, 0.0, positive=positive, start=best)
            if np.count_nonzero(w) <= max_names:
                hi, best = mid, w
            else:
                lo = mid
    return best != 0.0


class _Search:
    """State of one search: the cache, the candidates and the counts."""

    def __init__(self, cache: CachedRefit, candidates: np.ndarray, max_names: int):
        self.cache = cache
        self.candidates = [int(j) for j in candidates]
        self.max_names = max_names
        self.swaps = 0

    def step(
        self, held: frozenset[int], current: float, *, swaps: bool, screen: int | None
    ) -> tuple[frozenset[int], float] | None:
        """One move from ``held``: the best addition while below the cap, else the best swap.

        Returns None when no move lowers the objective. While the support is infeasible
        (``current`` is inf) and no addition makes it feasible, the first candidate is added
        anyway: fewer names can only be less feasible, so the search must grow to find any.
        """
        outside = [j for j in self.candidates if j not in held]
        if not outside or (not swaps and len(held) >= self.max_names):
            return None
        adds = [(self.cache.solve(held | {j})[0], j) for j in outside]
        if len(held) < self.max_names:
            best_add, j = min(adds)
            if _improves(best_add, current) or current == np.inf:
                return held | {j}, best_add
        if not swaps:
            return None
        # obj(S - i + j) >= obj(S + j): only names whose addition helps can give a better swap.
        ranked = sorted(a for a in adds if _improves(a[0], current))
        if screen is not None:
            ranked = ranked[:screen]
        best, best_key = None, (current, -1, -1)
        for bound, j in ranked:
            if bound > best_key[0]:
                break  # no later candidate can beat (or tie) the best swap found
            for i in sorted(held):
                key = (self.cache.solve((held - {i}) | {j})[0], j, i)
                if key < best_key:  # lower objective, or equal and lower positions
                    best, best_key = (held - {i}) | {j}, key
        if best is None or not _improves(best_key[0], current):
            return None
        best_obj = best_key[0]
        self.swaps += 1
        return best, best_obj

    def grow(self, held: frozenset[int], current: float) -> tuple[frozenset[int], float]:
        """Forward selection from ``held`` until the cap, or until no addition helps."""
        while True:
            move = self.step(held, current, swaps=False, screen=None)
            if move is None:
                return held, current
            held, current = move

    def swap(
        self, held: frozenset[int], current: float, *, screen: int | None, full_swaps: bool
    ) -> tuple[frozenset[int], float]:
        """Best-improvement swaps; screened passes, then a full pass when ``full_swaps``."""
        full = screen is None
        while True:
            move = self.step(held, current, swaps=True, screen=None if full else screen)
            if move is not None:
                held, current = move
                full = screen is None
            elif full or not full_swaps:
                return held, current
            else:
                full = True


def search_support(
    refit: Refit,
    n_assets: int,
    max_names: int,
    *,
    starts: Sequence[np.ndarray] = (),
    eligible: np.ndarray | None = None,
    full_swaps: bool = True,
    screen: int | None = None,
    forward: bool = True,
) -> tuple[np.ndarray, float, np.ndarray, SupportSearch]:
    """Choose at most ``max_names`` names by forward selection and swaps, each support refitted.

    The uncapped fit (every eligible name) is refitted first; when it holds at most
    ``max_names`` names nothing is searched and it is returned (``start="uncapped fit"``).
    Otherwise forward selection runs from no names, each start is grown to ``max_names``
    names the same way, and best-improvement swaps run from the best of these (ties go to
    forward selection, then to the starts in order); swapping from every start cost two to
    three times the refits and found nothing better on the real problems measured. Equal objectives between moves go to the
    lower position of the name brought in, then of the name taken out. A move must lower the
    objective by more than ``1e-10`` of it.

    Parameters
    ----------
    refit : Refit or CachedRefit
        See :data:`Refit`. Wrapped in a :class:`CachedRefit` unless it is one.
    n_assets : int
    max_names : int
        At least 1.
    starts : sequence of ndarray of bool, shape (n_assets,)
        Supports to start from besides forward selection, each within ``eligible`` and holding
        at most ``max_names`` names. One of them winning is recorded as ``"lasso path"``.
    eligible : ndarray of bool, shape (n_assets,), optional
        Names that may be held; default all.
    full_swaps : bool
        With ``screen``, end with full passes until one finds no swap, so that the answer is
        swap-optimal. Without ``screen`` every pass is full.
    screen : int, optional
        Try in each swap pass only the ``screen`` outside names whose addition lowers the
        objective most (for cross-validation, where thousands of searches run).
    forward : bool
        Run forward selection from no names. False skips it when ``starts`` are given (inside
        cross-validation, where the previous penalty's support is a better start at a fraction
        of the cost); it is still run when there are no starts.

    Returns
    -------
    mask : ndarray of bool, shape (n_assets,)
        Names held (weights != 0).
    objective : float
    weights : ndarray of shape (n_assets,)
    record : SupportSearch
        ``evaluations`` counts the refits this call solved (supports found in a shared cache
        are not counted again).

    Raises
    ------
    SolverError
        When no support within ``eligible`` and the cap satisfies the other limits.
    """
    func = "search_support"
    n_assets = _check_int(func, "n_assets", n_assets, 1)
    max_names = _check_int(func, "max_names", max_names, 1)
    if screen is not None:
        screen = _check_int(func, "screen", screen, 1)
    allowed = (
        np.ones(n_assets, dtype=bool)
        if eligible is None
        else _check_mask(func, "eligible", eligible, n_assets)
    )
    start_sets = []
    for s, start in enumerate(starts):
        mask = _check_mask(func, f"starts[{s}]", start, n_assets)
        if np.any(mask & ~allowed) or np.count_nonzero(mask) > max_names:
            raise ValueError(
                f"The 'starts[{s}]' parameter of {func} must hold at most {max_names} names, "
                f"all eligible. Got {np.count_nonzero(mask)} names, "
                f"{np.count_nonzero(mask & ~allowed)} not eligible."
            )
        start_sets.append(frozenset(np.flatnonzero(mask).tolist()))

    cache = _cached(refit, n_assets, func)
    before = cache.evaluations
    candidates = np.flatnonzero(allowed)
    uncapped, full_weights = cache.solve(frozenset(candidates.tolist()))
    if uncapped == np.inf:
        raise SolverError(
            "the other limits cannot be met even with every eligible name; loosen them "
            "before capping the number of names"
        )
    if np.count_nonzero(full_weights) <= max_names:
        objective, weights, label, swaps = uncapped, full_weights, "uncapped fit", 0
    else:
        search = _Search(cache, candidates, max_names)
        found = []
        if forward or not start_sets:
            found.append(("forward selection", *search.grow(frozenset(), np.inf)))
        for held in start_sets:
            current = cache.solve(held)[0] if held else np.inf
            found.append(("lasso path", *search.grow(held, current)))
        label, held, objective = min(found, key=lambda f: f[2])  # min keeps the first of ties
        held, objective = search.swap(held, objective, screen=screen, full_swaps=full_swaps)
        if objective == np.inf:
            raise SolverError(
                f"no {max_names} names or fewer satisfy the other limits; raise the maximum "
                "number of names or loosen the other limits"
            )
        weights, swaps = cache.solve(held)[1], search.swaps
    weights = weights.copy()
    mask = weights != 0.0
    record = SupportSearch(
        chosen=tuple(int(j) for j in np.flatnonzero(mask)),
        start=label,
        objective=float(objective),
        uncapped_objective=float(uncapped),
        evaluations=cache.evaluations - before,
        swaps=swaps,
    )
    return mask, float(objective), weights, record


def enforce_min_position(
    refit: Refit, mask: np.ndarray, weights: np.ndarray, min_position: float
) -> tuple[np.ndarray, float, np.ndarray, tuple[int, ...]]:
    """Remove positions smaller than ``min_position`` one at a time, refitting after each.

    The smallest position (in absolute value; ties to the lower position) is removed from the
    support and the rest refitted, until no weight lies strictly between 0 and
    ``min_position``. One at a time, because each refit moves the removed weight onto the
    others and can lift other small positions above the size: removing them all at once would
    drop names the limit allows. It costs at most one refit per name removed.

    Parameters
    ----------
    refit : Refit or CachedRefit
    mask : ndarray of bool, shape (n_assets,)
        The support ``weights`` were fitted on; names in it with weight 0 stay available.
    weights : ndarray of shape (n_assets,)
        The refit on ``mask``; exactly 0 off it.
    min_position : float
        Positive.

    Returns
    -------
    mask : ndarray of bool, shape (n_assets,)
        Names held (weights != 0).
    objective : float
        Of the last refit (of ``mask`` itself when nothing was removed).
    weights : ndarray of shape (n_assets,)
    removed : tuple of int
        Positions removed, in the order they were removed.

    Raises
    ------
    SolverError
        When a removal leaves a support on which the other limits cannot be met.
    """
    func = "enforce_min_position"
    support = np.array(mask)
    if support.dtype != bool or support.ndim != 1:
        raise ValueError(
            f"The 'mask' parameter of {func} must be a 1-d bool array. "
            f"Got dtype {support.dtype}, shape {support.shape}."
        )
    weights = np.array(weights, dtype=float)
    if weights.shape != support.shape or np.any(weights[~support] != 0.0):
        raise ValueError(
            f"The 'weights' parameter of {func} must have shape {support.shape} and be exactly "
            f"0 off the mask. Got shape {weights.shape}."
        )
    if not (np.isfinite(min_position) and min_position > 0):
        raise ValueError(
            f"The 'min_position' parameter of {func} must be a finite number > 0. "
            f"Got {min_position!r}."
        )
    cache = _cached(refit, len(support), func)
    removed: list[int] = []
    objective = None
    while True:
        size = np.abs(weights)
        small = np.flatnonzero((size > 0.0) & (size < min_position))
        if len(small) == 0:
            break
        j = int(small[np.argmin(size[small])])
        support[j] = False
        removed.append(j)
        objective, weights = cache(support)
        if objective == np.inf:
            raise SolverError(
                f"removing positions below the minimum size {min_position:g} left "
                f"{np.count_nonzero(support)} names, on which the other limits cannot be met; "
                "lower the minimum position size or loosen the other limits"
            )
    if objective is None:
        objective = cache(support)[0]
    return weights != 0.0, float(objective), weights, tuple(removed)


__all__ = [
    "CachedRefit",
    "Refit",
    "enforce_min_position",
    "lasso_path_support",
    "search_support",
]
