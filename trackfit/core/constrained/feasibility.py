"""Conflicting limits, found before any fitting, with messages that say what to change.

Each check is a necessary condition for some weights to satisfy every limit: a name's bounds,
sums of bounds against the budget (with ``max_names``, only the names that may be held count),
groups against their members and the budget, the turnover cap against the turnover forced from
outside, every linear limit's minimum against its maximum, and, when no turnover is allowed,
the current holdings against every other limit. Limits whose coefficients depend on the fit
rows (beta) are known only at fitting time: beyond their range, the solver checks them.
Conflicts these checks cannot see (overlapping groups, several limits at once) are found by the
solver, whose message names the limits involved.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from trackfit.core.limits import STATUS_RANK, GroupLimit, Limits
from trackfit.errors import SolverError

# Sums of bounds are compared with this allowance: rounding (0.1 * 10 != 1.0) is no conflict.
_TOL = 1e-12
_SHOWN = 5
# How a broken linear limit reads when the holdings must be kept; others: "<what> (holds x)".
_HELD_WORDS = {"budget": "the budget (holdings sum to {total:g})"}


def _listed(items: Sequence[str]) -> str:
    more = f", ... ({len(items)} in all)" if len(items) > _SHOWN else ""
    return ", ".join(items[:_SHOWN]) + more


def _arrays(limits: Limits, p: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    out = []
    for name, value, fill in (
        ("lower", limits.lower, -np.inf),
        ("upper", limits.upper, np.inf),
        ("current", limits.current, 0.0),
    ):
        if value is None:
            out.append(np.full(p, fill))
            continue
        arr = np.asarray(value, dtype=float)
        if arr.shape != (p,) or np.isnan(arr).any():
            raise ValueError(
                f"The 'limits.{name}' parameter of check_feasible must be an array of shape "
                f"({p},) without NaN. Got {value!r}."
            )
        out.append(arr)
    for item in limits.linear:
        if item.coef is not None or not item.depends_on_rows:
            item.coefficients(p, "check_feasible")  # raises on bad members or coefficients
    return out[0], out[1], out[2]


def _g(value: float | None, default: float) -> float:
    return default if value is None or not np.isfinite(value) else float(value)


def check_feasible(limits: Limits, names: Sequence[str]) -> None:
    """Raise :class:`SolverError` when the limits cannot all hold, before any fitting.

    Parameters
    ----------
    limits : Limits
        Over the constituents ``names`` (positions index ``names``).
    names : sequence of str, length n_assets

    Raises
    ------
    SolverError
        Naming the conflicting limits (with constituent and group names) and what to change.
    ValueError
        Arrays of the wrong shape, or turnover limits without current holdings.
    """
    p = len(names)
    lower, upper, current = _arrays(limits, p)
    if (limits.turnover_penalty or limits.max_turnover is not None) and limits.current is None:
        raise ValueError("turnover limits need limits.current, the current holdings")
    lo = np.maximum(lower, 0.0) if limits.long_only else lower
    _check_names(limits, names, lower, lo, upper)
    _check_long_only(limits)
    _check_ranges(limits)
    _check_counts(limits, names, lo, upper)
    _check_groups(limits, lo, upper)
    _check_budget(limits, names, lo, upper)
    _check_turnover(limits, names, lower, upper, current)


def limit_notes(limits: Limits, names: Sequence[str]) -> tuple[str, ...]:
    """Limits that are allowed but overridden by another, one sentence each (for the report)."""
    notes = []
    if limits.long_only and limits.lower is not None:
        lower = np.asarray(limits.lower, dtype=float)
        negative = np.flatnonzero(np.isfinite(lower) & (lower < 0))
        neg = [f"{names[j]!r} ({lower[j]:g})" for j in negative]
        if neg:
            notes.append(
                f"long-only overrides the negative minimum weights of {_listed(neg)}: they are "
                "treated as 0"
            )
    return tuple(notes)


def _check_names(limits, names, lower, lo, upper) -> None:
    crossed = np.flatnonzero(lower > upper + _TOL)
    if len(crossed):
        shown = [f"{names[j]!r} (minimum {lower[j]:g}, maximum {upper[j]:g})" for j in crossed]
        raise SolverError(
            f"the minimum weight is above the maximum for {_listed(shown)}; lower the minimum "
            "or raise the maximum of each"
        )
    below = np.flatnonzero(lo > upper + _TOL)  # only long-only can do this now
    if len(below):
        shown = [f"{names[j]!r} (maximum {upper[j]:g})" for j in below]
        raise SolverError(
            f"the weights are long-only (at least 0), but the maximum weight is negative for "
            f"{_listed(shown)}; raise those maximums to at least 0 or drop long_only"
        )


def _check_long_only(limits: Limits) -> None:
    if not limits.long_only:
        return
    if limits.budget is not None and _g(limits.budget[1], np.inf) < -_TOL:
        raise SolverError(
            f"the weights are long-only, so they cannot sum to at most {limits.budget[1]:g} "
            "(the budget maximum, below 0); raise the budget maximum to at least 0 or drop "
            "long_only"
        )
    neg = [
        f"{g.name!r} (maximum {g.upper:g})" for g in limits.groups if _g(g.upper, np.inf) < -_TOL
    ]
    if neg:
        raise SolverError(
            f"the weights are long-only, so no group total can be negative, but these groups "
            f"have a negative maximum: {_listed(neg)}; raise them to at least 0 or drop long_only"
        )


def _check_ranges(limits: Limits) -> None:
    if limits.budget is not None:
        lo, hi = _g(limits.budget[0], -np.inf), _g(limits.budget[1], np.inf)
        if lo > hi + _TOL:
            raise SolverError(
                f"the budget minimum {lo:g} is above the budget maximum {hi:g}; swap or change them"
            )
    bad = [
        f"{g.name!r} (minimum {g.lower:g}, maximum {g.upper:g})"
        for g in limits.groups
        if _g(g.lower, -np.inf) > _g(g.upper, np.inf) + _TOL
    ]
    if bad:
        raise SolverError(
            f"the group minimum is above the group maximum for {_listed(bad)}; change one of each"
        )
    for item in limits.linear:
        lo, hi = item.bounds()
        if item.kind not in ("budget", "group") and lo > hi + _TOL:  # those two are above
            raise SolverError(
                f"the {item.what} minimum {lo:g} is above its maximum {hi:g}; change one of them"
            )
    if limits.max_turnover is not None and limits.max_turnover < limits.outside_turnover - _TOL:
        raise SolverError(
            f"max_turnover {limits.max_turnover:g} is below the one-way turnover of "
            f"{limits.outside_turnover:g} forced by selling holdings that are not "
            f"constituents; raise max_turnover to at least {limits.outside_turnover:g}"
        )


def _forced(lo: np.ndarray, upper: np.ndarray) -> np.ndarray:
    """Names whose bounds exclude 0: they must be held."""
    return (lo > _TOL) | (upper < -_TOL)


def _check_counts(limits, names, lo, upper) -> None:
    forced = np.flatnonzero(_forced(lo, upper))
    k = limits.max_names
    if k is not None and len(forced) > k:
        shown = [f"{names[j]!r}" for j in forced]
        raise SolverError(
            f"{len(forced)} names must be held because their bounds exclude 0 ({_listed(shown)}), "
            f"but max_names is {k}; raise max_names to at least {len(forced)} or set those "
            "minimums to 0"
        )
    if limits.min_position is not None:
        small = [
            f"{names[j]!r} (maximum {upper[j]:g})"
            for j in forced
            if 0 < upper[j] < limits.min_position - _TOL
        ]
        if small:
            raise SolverError(
                f"these names must be held (minimum above 0), but their maximum weight is below "
                f"min_position {limits.min_position:g}: {_listed(small)}; raise their maximums, "
                "lower min_position or set their minimums to 0"
            )


def _member_sums(group: GroupLimit, lo: np.ndarray, upper: np.ndarray) -> tuple[float, float]:
    idx = np.asarray(group.members, dtype=int)
    return float(lo[idx].sum()), float(upper[idx].sum())


def _check_groups(limits, lo, upper) -> None:
    for g in limits.groups:
        least, most = _member_sums(g, lo, upper)
        if _g(g.lower, -np.inf) > most + _TOL:
            raise SolverError(
                f"group {g.name!r} has minimum {g.lower:g}, but its members can hold at most "
                f"{most:g} in all (the sum of their maximum weights); lower the group minimum "
                "or raise those maximums"
            )
        if _g(g.upper, np.inf) < least - _TOL:
            raise SolverError(
                f"group {g.name!r} has maximum {g.upper:g}, but its members hold at least "
                f"{least:g} in all (the sum of their minimum weights); raise the group maximum "
                "or lower those minimums"
            )


def _disjoint(groups: tuple[GroupLimit, ...]) -> bool:
    seen: set[int] = set()
    for g in groups:
        if seen & set(g.members):
            return False
        seen |= set(g.members)
    return True


def _names_extreme(values: np.ndarray, forced: np.ndarray, k: int | None, side: float) -> float:
    """Most (side=+1) or least (side=-1) total of ``values`` over names that may be held."""
    if k is None:
        return float(values.sum())
    rest = np.sort(side * np.where(forced, 0.0, values))[::-1]  # most helpful first
    free = max(k - int(forced.sum()), 0)
    return float(values[forced].sum()) + side * float(np.maximum(rest[:free], 0.0).sum())


def _check_budget(limits, names, lo, upper) -> None:
    if limits.budget is None:
        return
    b_lo, b_hi = _g(limits.budget[0], -np.inf), _g(limits.budget[1], np.inf)
    forced = _forced(lo, upper)
    k = limits.max_names
    by_groups = bool(limits.groups) and _disjoint(limits.groups)
    grouped = np.zeros(len(lo), dtype=bool)
    for g in limits.groups:
        grouped[list(g.members)] = True

    least = _names_extreme(lo, forced, k, -1.0)
    if least > b_hi + _TOL:
        how = (
            f"with max_names {k}, the minimum weights allow a total of no less than {least:g}"
            if k is not None
            else f"the minimum weights sum to {least:g}"
        )
        raise SolverError(
            f"{how}, above the budget maximum {b_hi:g}; lower those minimums or raise the "
            "budget maximum"
        )
    if by_groups and any(np.isfinite(_g(g.lower, -np.inf)) for g in limits.groups):
        parts = [max(_g(g.lower, -np.inf), _member_sums(g, lo, upper)[0]) for g in limits.groups]
        total = sum(parts) + float(lo[~grouped].sum())
        if total > b_hi + _TOL:
            shown = [f"{g.name!r} {v:g}" for g, v in zip(limits.groups, parts)]
            rest = (
                f" and the minimum weights of names in no group ({float(lo[~grouped].sum()):g})"
                if (~grouped).any()
                else ""
            )
            raise SolverError(
                f"the group minimums ({_listed(shown)}){rest} sum to {total:g}, above the "
                f"budget maximum {b_hi:g}; lower the group minimums or raise the budget maximum"
            )

    most = _names_extreme(upper, forced, k, 1.0)
    if most < b_lo - _TOL:
        how = (
            f"with max_names {k}, the {k} largest maximum weights"
            if k is not None
            else "the maximum weights"
        )
        raise SolverError(
            f"{how} sum to {most:g}, below the budget minimum {b_lo:g}; raise maximum weights"
            f"{', allow more names' if k is not None else ''} or lower the budget minimum"
        )
    if by_groups and any(np.isfinite(_g(g.upper, np.inf)) for g in limits.groups):
        parts = [min(_g(g.upper, np.inf), _member_sums(g, lo, upper)[1]) for g in limits.groups]
        total = sum(parts) + float(upper[~grouped].sum())
        if total < b_lo - _TOL:
            shown = [f"{g.name!r} {v:g}" for g, v in zip(limits.groups, parts)]
            raise SolverError(
                f"the group maximums ({_listed(shown)}) sum to {total:g}, below the budget "
                f"minimum {b_lo:g}; raise the group maximums or lower the budget minimum"
            )


def _check_turnover(limits, names, lower, upper, current) -> None:
    if limits.max_turnover is None or limits.max_turnover > _TOL:
        return
    broken = []
    if limits.long_only and (current < 0).any():
        short = [repr(names[j]) for j in np.flatnonzero(current < 0)]
        broken.append(f"long-only ({_listed(short)} held short)")
    out = np.flatnonzero((current < lower - _TOL) | (current > upper + _TOL))
    if len(out):
        broken.append(
            "per-name bounds (" + _listed([f"{names[j]!r} holds {current[j]:g}" for j in out]) + ")"
        )
    for item in sorted(limits.linear, key=lambda i: STATUS_RANK.get(i.kind, len(STATUS_RANK))):
        if item.coef is None and item.depends_on_rows:
            continue
        total = float(item.coefficients(len(current), "check_feasible") @ current)
        lo, hi = item.bounds()
        if total < lo - _TOL or total > hi + _TOL:
            broken.append(
                _HELD_WORDS.get(item.kind, "{what} (holds {total:g})").format(
                    what=item.what, total=total
                )
            )
    held = int(np.count_nonzero(current))
    if limits.max_names is not None and held > limits.max_names:
        broken.append(f"max_names {limits.max_names} ({held} names held)")
    if limits.min_position is not None:
        tiny = np.flatnonzero((current != 0) & (np.abs(current) < limits.min_position - _TOL))
        if len(tiny):
            broken.append(
                f"min_position {limits.min_position:g} ("
                + _listed([f"{names[j]!r} holds {current[j]:g}" for j in tiny])
                + ")"
            )
    if broken:
        raise SolverError(
            "max_turnover is 0, so the current holdings must be kept as they are, but they break "
            + "; ".join(broken)
            + "; allow some turnover or change those limits"
        )
