"""Limit statuses measured on weights whose every sum the test works out by hand."""

from __future__ import annotations

import numpy as np
import pytest

from trackfit.core.constrained import BINDING, limit_statuses
from trackfit.core.limits import GroupLimit, Limits, LimitStatus

W = np.array([0.4, 0.35, 0.25, 0.0, -0.05])
CURRENT = np.array([0.3, 0.3, 0.3, 0.1, 0.0])


def test_every_limit_in_the_documented_order():
    limits = Limits(
        long_only=True,
        budget=(0.95, 1.0),
        lower=np.array([-np.inf, 0.35, -np.inf, -np.inf, -0.05]),
        upper=np.array([0.4, np.inf, np.inf, np.inf, np.inf]),
        groups=(GroupLimit("north", (0, 1), 0.5, 0.8), GroupLimit("south", (3, 4), None, 0.1)),
        current=CURRENT,
        outside_turnover=0.02,
        max_turnover=0.2,
    )
    # Sums by hand: total 0.95; north 0.75; south -0.05; turnover (0.1+0.05+0.05+0.1+0.05)/2
    # = 0.175, plus 0.02 from outside = 0.195.
    expected = [
        LimitStatus("long_only", 4, 0.0, -0.05, -0.05, False),
        LimitStatus("upper", 0, 0.4, 0.4, 0.0, True),
        LimitStatus("lower", 1, 0.35, 0.35, 0.0, True),
        LimitStatus("lower", 4, -0.05, -0.05, 0.0, True),
        LimitStatus("group_min", "north", 0.5, 0.75, 0.25, False),
        LimitStatus("group_max", "north", 0.8, 0.75, 0.05, False),
        LimitStatus("group_max", "south", 0.1, -0.05, 0.15, False),
        LimitStatus("budget_min", None, 0.95, 0.95, 0.0, True),
        LimitStatus("budget_max", None, 1.0, 0.95, 0.05, False),
        LimitStatus("max_turnover", None, 0.2, 0.195, 0.005, False),
    ]
    got = limit_statuses(W, limits)
    assert [(s.kind, s.target, s.binding) for s in got] == [
        (s.kind, s.target, s.binding) for s in expected
    ]
    for g, e in zip(got, expected):
        assert g.bound == e.bound
        assert g.value == pytest.approx(e.value, abs=1e-15)
        assert g.slack == pytest.approx(e.slack, abs=1e-15)


@pytest.mark.parametrize(
    "gap,binding,slack",
    [
        (0.0, True, 0.0),
        (0.5 * BINDING, True, 0.0),
        (-0.5 * BINDING, True, 0.0),
        (2 * BINDING, False, 2 * BINDING),
        (-2 * BINDING, False, -2 * BINDING),
    ],
)
def test_binding_within_tolerance_reads_zero_slack(gap, binding, slack):
    limits = Limits(budget=(None, 1.0))
    (status,) = limit_statuses(np.array([0.5, 0.5 - gap]), limits)
    assert status.kind == "budget_max" and status.binding is binding
    assert status.slack == pytest.approx(slack, abs=1e-15)
    if binding:
        assert status.slack == 0.0


def test_no_limits_no_statuses():
    assert limit_statuses(W, Limits()) == ()
    assert limit_statuses(W, Limits(max_names=3, min_position=0.01)) == ()  # the search's
