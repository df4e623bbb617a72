"""Conflicting limits are found before any fitting, with messages that say what to change.

Every conflict below is built so that its infeasibility is plain arithmetic (common practice:
a sum of upper bounds below a required total cannot be met); the last test confirms with the
solver that the limits check_feasible lets through can be met.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest
from synthetic import factor_sample

from trackfit.core.constrained import check_feasible, limit_notes, solve_limited
from trackfit.core.gram import standardized_gram
from trackfit.core.limits import GroupLimit, Limits
from trackfit.core.scaling import fit_scaling
from trackfit.errors import SolverError

NAMES = ("Aster", "Birch", "Cedar", "Dune", "Ember", "Fjord")
P = len(NAMES)


def _vec(*values, fill):
    out = np.full(P, fill)
    out[: len(values)] = values
    return out


NORTH = (0, 1, 2)
SOUTH = (3, 4)

CONFLICTS = [
    (
        Limits(lower=_vec(0.3, fill=-np.inf), upper=_vec(0.2, fill=np.inf)),
        r"minimum weight is above the maximum for 'Aster' \(minimum 0\.3, maximum 0\.2\); "
        r"lower the minimum or raise the maximum",
    ),
    (
        Limits(long_only=True, upper=_vec(0.5, -0.1, fill=np.inf)),
        r"long-only \(at least 0\), but the maximum weight is negative for 'Birch' "
        r"\(maximum -0\.1\); raise those maximums to at least 0 or drop long_only",
    ),
    (
        Limits(long_only=True, budget=(-0.5, -0.1)),
        r"long-only, so they cannot sum to at most -0\.1 \(the budget maximum, below 0\); "
        r"raise the budget maximum",
    ),
    (
        Limits(long_only=True, groups=(GroupLimit("north", NORTH, None, -0.05),)),
        r"no group total can be negative, but these groups have a negative maximum: "
        r"'north' \(maximum -0\.05\)",
    ),
    (
        Limits(budget=(1.0, 0.9)),
        r"the budget minimum 1 is above the budget maximum 0\.9",
    ),
    (
        Limits(groups=(GroupLimit("north", NORTH, 0.5, 0.4),)),
        r"group minimum is above the group maximum for 'north' \(minimum 0\.5, maximum 0\.4\)",
    ),
    (
        Limits(current=np.zeros(P), max_turnover=0.05, outside_turnover=0.08),
        r"max_turnover 0\.05 is below the one-way turnover of 0\.08 forced by selling holdings "
        r"that are not constituents; raise max_turnover to at least 0\.08",
    ),
    (
        Limits(lower=_vec(0.1, 0.1, 0.1, fill=0.0), max_names=2),
        r"3 names must be held because their bounds exclude 0 \('Aster', 'Birch', 'Cedar'\), "
        r"but max_names is 2; raise max_names to at least 3",
    ),
    (
        Limits(lower=_vec(0.01, fill=0.0), upper=_vec(0.02, fill=1.0), min_position=0.05),
        r"must be held \(minimum above 0\), but their maximum weight is below min_position "
        r"0\.05: 'Aster' \(maximum 0\.02\)",
    ),
    (
        Limits(
            groups=(GroupLimit("north", NORTH, 0.5, None),), upper=_vec(0.1, 0.1, 0.1, fill=1.0)
        ),
        r"group 'north' has minimum 0\.5, but its members can hold at most 0\.3 in all",
    ),
    (
        Limits(groups=(GroupLimit("south", SOUTH, None, 0.1),), lower=_vec(0, 0, 0, 0.2, fill=0.0)),
        r"group 'south' has maximum 0\.1, but its members hold at least 0\.2 in all",
    ),
    (
        Limits(
            long_only=True,
            budget=(0.0, 1.0),
            groups=(GroupLimit("north", NORTH, 0.6, None), GroupLimit("south", SOUTH, 0.5, None)),
        ),
        r"the group minimums \('north' 0\.6, 'south' 0\.5\) and the minimum weights of names in "
        r"no group \(0\) sum to 1\.1, above the budget maximum 1; lower the group minimums",
    ),
    (
        Limits(budget=(1.0, 1.0), long_only=True, upper=np.full(P, 0.15)),
        r"the maximum weights sum to 0\.9, below the budget minimum 1; raise maximum weights or "
        r"lower the budget minimum",
    ),
    (
        Limits(budget=(1.0, 1.0), long_only=True, upper=np.full(P, 0.3), max_names=3),
        r"with max_names 3, the 3 largest maximum weights sum to 0\.9, below the budget minimum 1; "
        r"raise maximum weights, allow more names",
    ),
    (
        Limits(budget=(0.0, 1.0), lower=np.full(P, 0.2)),
        r"the minimum weights sum to 1\.2, above the budget maximum 1; lower those minimums",
    ),
    (
        Limits(budget=(0.0, 0.5), lower=_vec(0.3, 0.3, fill=-0.1), max_names=2),
        r"with max_names 2, the minimum weights allow a total of no less than 0\.6, above the "
        r"budget maximum 0\.5",
    ),
    (
        Limits(
            budget=(0.9, 1.0),
            long_only=True,
            upper=_vec(1, 1, 1, 1, 1, 0.1, fill=1.0),
            groups=(GroupLimit("north", NORTH, None, 0.3), GroupLimit("south", SOUTH, None, 0.3)),
        ),
        r"the group maximums \('north' 0\.3, 'south' 0\.3\) sum to 0\.7, below the budget "
        r"minimum 0\.9",
    ),
    (
        Limits(long_only=True, current=_vec(0.5, -0.1, 0.6, fill=0.0), max_turnover=0.0),
        r"max_turnover is 0, so the current holdings must be kept as they are, but they break "
        r"long-only \('Birch' held short\); allow some turnover or change those limits",
    ),
    (
        Limits(
            budget=(1.0, 1.0),
            current=_vec(0.5, 0.3, fill=0.0),
            max_turnover=0.0,
            upper=_vec(0.4, fill=1.0),
            groups=(GroupLimit("north", NORTH, None, 0.6),),
            max_names=1,
            min_position=0.35,
        ),
        r"break per-name bounds \('Aster' holds 0\.5\); group 'north' \(holds 0\.8\); the budget "
        r"\(holdings sum to 0\.8\); max_names 1 \(2 names held\); min_position 0\.35 \('Birch' "
        r"holds 0\.3\); allow some turnover or change those limits",
    ),
]


@pytest.mark.parametrize("limits,match", CONFLICTS)
def test_conflicts_are_named(limits, match):
    with pytest.raises(SolverError, match=match):
        check_feasible(limits, NAMES)


@pytest.mark.parametrize(
    "limits,match",
    [
        (
            Limits(upper=np.ones(3)),
            r"The 'limits.upper' parameter of check_feasible must be an array of shape \(6,\)",
        ),
        (
            Limits(groups=(GroupLimit("north", (0, 9)),)),
            r"'limits.groups\['north'\].members' parameter of check_feasible must hold positions "
            r"in \[0, 6\)",
        ),
        (Limits(turnover_penalty=0.01), r"turnover limits need limits.current"),
    ],
)
def test_malformed_limits_are_programming_errors(limits, match):
    with pytest.raises(ValueError, match=match):
        check_feasible(limits, NAMES)


FEASIBLE = [
    Limits(),
    Limits(long_only=True, budget=(1.0, 1.0), upper=np.full(P, 1 / 6)),  # exactly enough room
    Limits(long_only=True, budget=(1.0, 1.0), upper=np.full(P, 0.1 + 1e-13) * 10 / 6),
    # Shorts outside the groups can offset group minimums above the budget: no conflict.
    Limits(
        budget=(1.0, 1.0), groups=(GroupLimit("north", NORTH, 0.8), GroupLimit("south", SOUTH, 0.7))
    ),
    Limits(lower=_vec(0.1, 0.1, fill=0.0), max_names=2, budget=(0.2, 1.0)),
    Limits(
        long_only=True,
        budget=(1.0, 1.0),
        current=np.full(P, 1 / 6),
        max_turnover=0.0,
        upper=np.full(P, 0.2),
    ),
]


@pytest.mark.parametrize("limits", FEASIBLE)
def test_limits_that_can_hold_pass_and_the_solver_meets_them(limits):
    check_feasible(limits, NAMES)
    s = factor_sample(3, 40, P)
    scaling = fit_scaling(s.X, s.y)
    no_count = replace(limits, max_names=None, min_position=None)
    sol = solve_limited(standardized_gram(s.X, s.y, scaling), scaling, 0.001, 1.0, no_count)
    assert all(st.slack >= 0 for st in sol.statuses)


def test_long_only_overriding_negative_minimums_is_a_note_not_an_error():
    limits = Limits(long_only=True, lower=_vec(-0.1, 0.0, -0.2, fill=-np.inf))  # -inf: none
    check_feasible(limits, NAMES)
    assert limit_notes(limits, NAMES) == (
        "long-only overrides the negative minimum weights of 'Aster' (-0.1), 'Cedar' (-0.2): "
        "they are treated as 0",
    )
    assert limit_notes(Limits(lower=_vec(-0.1, fill=0.0)), NAMES) == ()
