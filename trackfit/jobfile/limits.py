"""Parsers for ``limits`` (the mandate) and ``holdings`` (what is held now, and turnover).

Names and group labels are kept as written; whether they exist among the constituents or in
the groups file is checked when the data are known (:mod:`trackfit.commands.mandate`). Every bound is a
decimal weight (0.05 = 5 %).
"""

from __future__ import annotations

import math
from typing import Any

from trackfit.jobfile.checks import Reader, closest
from trackfit.jobfile.specs import Bounds, GroupsSpec, HoldingsSpec, LimitsSpec

#: Word for a budget of exactly 1 (no cash).
FULLY_INVESTED = "fully_invested"
#: Every bound (on a weight, a group or the sum of weights) lies in [-BOUND_LIMIT, BOUND_LIMIT];
#: anything larger is far more likely a percentage than a decimal weight.
BOUND_LIMIT = 10.0

_LIMIT_KEYS = ("long_only", "budget", "weight", "names", "groups", "max_names", "min_position")
# Keys added since: accepted and offered in unknown-key messages, but not listed when
# 'limits' is not a mapping at all (that message keeps its original wording).
_LATER_KEYS = ("beta",)
#: Every bound on beta to the benchmark lies in [-BETA_LIMIT, BETA_LIMIT].
BETA_LIMIT = 10.0
_GROUP_KEYS = ("file", "name_column", "group_column", "each", "bounds")
_HOLDINGS_KEYS = ("file", "date", "turnover_penalty", "max_turnover")
_SIDES = ("min", "max")
_IN_RANGE = f"a number from {-BOUND_LIMIT:g} to {BOUND_LIMIT:g}, in decimal units (0.05 = 5 %)"


def parse_limits(r: Reader, value: Any) -> LimitsSpec:
    """The ``limits`` section; absent or null means no limits."""
    keys = _LIMIT_KEYS + _LATER_KEYS if isinstance(value, dict) else _LIMIT_KEYS
    s = r.section("limits", value, keys)
    weight = None if s.get("weight") is None else _bounds(r, "limits.weight", s["weight"])
    names = tuple(
        (name, _override(r, f"limits.names.{name}", bounds, weight))
        for name, bounds in r.labelled("limits.names", s.get("names"), "constituent name").items()
    )
    return LimitsSpec(
        long_only=r.boolean("limits.long_only", s.get("long_only"), LimitsSpec.long_only),
        budget=_budget(r, s.get("budget")),
        weight=weight,
        names=names,
        groups=_groups(r, s.get("groups")),
        max_names=r.integer("limits.max_names", s.get("max_names"), 1, None),
        min_position=(
            None
            if s.get("min_position") is None
            else r.fraction("limits.min_position", s["min_position"])
        ),
        beta=(
            None
            if s.get("beta") is None
            else _bounds(
                r,
                "limits.beta",
                s["beta"],
                BETA_LIMIT,
                f"a number from {-BETA_LIMIT:g} to {BETA_LIMIT:g} (1 = moves with the benchmark)",
            )
        ),
    )


def parse_holdings(r: Reader, value: Any) -> HoldingsSpec | None:
    """The ``holdings`` section; absent or null means no current holdings."""
    if value is None:
        return None
    s = r.section("holdings", value, _HOLDINGS_KEYS)
    penalty = s.get("turnover_penalty")
    cap = s.get("max_turnover")
    return HoldingsSpec(
        file=r.path("holdings.file", s.get("file")),
        turnover_penalty=(
            HoldingsSpec.turnover_penalty
            if penalty is None
            else r.number("holdings.turnover_penalty", penalty, 0.0)
        ),
        max_turnover=None if cap is None else r.number("holdings.max_turnover", cap, 0.0, 1.0),
        date=r.day("holdings.date", s.get("date")),
    )


def _bounds(
    r: Reader, key: str, value: Any, limit: float = BOUND_LIMIT, in_range: str = _IN_RANGE
) -> Bounds:
    """A ``{min, max}`` mapping with at least one side, each in range, ``min <= max``."""
    must = "a mapping with 'min', 'max' or both, such as {min: 0.0, max: 0.1}"
    if not isinstance(value, dict):
        raise r.bad(key, must, value)
    s = r.section(key, value, _SIDES)
    low, high = (
        None if s.get(side) is None else r.number(f"{key}.{side}", s[side], -limit, limit, in_range)
        for side in _SIDES
    )
    if low is None and high is None:
        raise r.bad(key, must, value)
    if low is not None and high is not None and low > high:
        raise r.error(
            f"'{key}.min' ({low:g}) is above '{key}.max' ({high:g}); the minimum must "
            "not exceed the maximum"
        )
    return Bounds(low, high)


def _override(r: Reader, key: str, value: Any, weight: Bounds | None) -> Bounds:
    """One ``limits.names`` entry, checked with the side it takes from ``limits.weight``."""
    own = _bounds(r, key, value)
    if weight is None:
        return own
    if own.min is None and weight.min is not None and weight.min > own.max:
        raise r.error(
            f"'{key}.max' ({own.max:g}) is below 'limits.weight.min' ({weight.min:g}), "
            f"which applies to this name because '{key}' gives no 'min'; give '{key}' "
            "a 'min' too, or lower 'limits.weight.min'"
        )
    if own.max is None and weight.max is not None and own.min > weight.max:
        raise r.error(
            f"'{key}.min' ({own.min:g}) is above 'limits.weight.max' ({weight.max:g}), "
            f"which applies to this name because '{key}' gives no 'max'; give '{key}' "
            "a 'max' too, or raise 'limits.weight.max'"
        )
    return own


def _budget(r: Reader, value: Any) -> tuple[float, float] | None:
    """``fully_invested`` -> (1, 1); ``{min, max}`` -> (min, max), a side left out infinite."""
    if value is None:
        return None
    if not isinstance(value, dict):
        if value == FULLY_INVESTED:
            return (1.0, 1.0)
        raise r.bad(
            "limits.budget",
            f"'{FULLY_INVESTED}' or a mapping with 'min', 'max' or "
            "both (bounds on the sum of weights)",
            value,
            suggest=closest(value, (FULLY_INVESTED,)),
        )
    bounds = _bounds(r, "limits.budget", value)
    return (
        -math.inf if bounds.min is None else bounds.min,
        math.inf if bounds.max is None else bounds.max,
    )


def _groups(r: Reader, value: Any) -> GroupsSpec | None:
    if value is None:
        return None
    key = "limits.groups"
    s = r.section(key, value, _GROUP_KEYS)
    file = r.path(f"{key}.file", s.get("file"))
    name_column = r.text(f"{key}.name_column", s.get("name_column"), GroupsSpec.name_column)
    group_column = r.text(f"{key}.group_column", s.get("group_column"), GroupsSpec.group_column)
    if name_column == group_column:
        raise r.error(
            f"'{key}.name_column' and '{key}.group_column' are both {name_column!r}; "
            "the names and the groups must come from different columns"
        )
    each = None if s.get("each") is None else _bounds(r, f"{key}.each", s["each"])
    bounds = tuple(
        (label, _bounds(r, f"{key}.bounds.{label}", b))
        for label, b in r.labelled(f"{key}.bounds", s.get("bounds"), "group label").items()
    )
    if each is None and not bounds:
        raise r.error(
            f"'{key}' sets no bounds: give '{key}.each' (bounds for every group), "
            f"'{key}.bounds' (bounds per group) or both, or remove '{key}'"
        )
    return GroupsSpec(
        file=file, name_column=name_column, group_column=group_column, each=each, bounds=bounds
    )
