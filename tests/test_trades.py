"""Tests for trackfit.evaluate.trades: every move, its action, the order and the turnover.

The expected trades are worked out by hand from the small invented holdings below.
"""

from __future__ import annotations

import numpy as np
import pytest

from trackfit.evaluate.trades import TradeList, trades

NAMES = ("Alder Mills", "Brightwater Foods", "Cobalt Rail", "Dunmore Textiles", "Eastfield Power")
TARGET = np.array([0.30, 0.25, 0.0, 0.20, 0.25])
# Held now: Cobalt Rail (to be dropped), two non-constituents (sold), Alder Mills unchanged.
CURRENT_NAMES = (
    "Zephyr Mining",
    "Cobalt Rail",
    "Alder Mills",
    "Brightwater Foods",
    "Orchard Glass",
)
CURRENT = np.array([0.05, 0.15, 0.30, 0.35, 0.05])


def test_every_trade_by_hand():
    result = trades(NAMES, TARGET, CURRENT_NAMES, CURRENT)
    got = [(t.name, t.current, t.target, t.action) for t in result.trades]
    # change = target - current:
    #   Eastfield Power  0    -> 0.25  +0.25  new
    #   Dunmore Textiles 0    -> 0.20  +0.20  new
    #   Cobalt Rail      0.15 -> 0    -0.15  dropped
    #   Brightwater      0.35 -> 0.25 -0.10  sell
    #   Orchard Glass    0.05 -> 0    -0.05  dropped (not a constituent)
    #   Zephyr Mining    0.05 -> 0    -0.05  dropped (tie with Orchard Glass: by name)
    #   Alder Mills      0.30 -> 0.30  0     hold
    assert got == [
        ("Eastfield Power", 0.0, 0.25, "new"),
        ("Dunmore Textiles", 0.0, 0.20, "new"),
        ("Cobalt Rail", 0.15, 0.0, "dropped"),
        ("Brightwater Foods", 0.35, 0.25, "sell"),
        ("Orchard Glass", 0.05, 0.0, "dropped"),
        ("Zephyr Mining", 0.05, 0.0, "dropped"),
        ("Alder Mills", 0.30, 0.30, "hold"),
    ]
    changes = [t.change for t in result.trades]
    assert changes == pytest.approx([0.25, 0.20, -0.15, -0.10, -0.05, -0.05, 0.0], abs=1e-15)
    assert all(t.change == t.target - t.current for t in result.trades)
    # (0.25 + 0.20 + 0.15 + 0.10 + 0.05 + 0.05) / 2 = 0.40
    assert result.one_way_turnover == pytest.approx(0.40, abs=1e-15)


def test_buy_and_sell_by_sign():
    result = trades(("A", "B"), np.array([0.6, 0.4]), ("B", "A"), np.array([0.5, 0.5]))
    # Both changes are 0.09999999999999998 in size in binary, so the tie goes by name.
    assert [(t.name, t.current, t.target, t.change, t.action) for t in result.trades] == [
        ("A", 0.5, 0.6, 0.6 - 0.5, "buy"),
        ("B", 0.5, 0.4, 0.4 - 0.5, "sell"),
    ]
    assert result.one_way_turnover == pytest.approx(0.1)


def test_a_sell_to_a_short_position_is_a_sell_not_dropped():
    result = trades(("A",), np.array([-0.1]), ("A",), np.array([0.2]))
    assert result.trades[0].action == "sell"
    assert result.trades[0].change == pytest.approx(-0.3)


def test_union_order_before_sorting_ties_by_name():
    # Every change is equal in size, so the order is by name alone.
    ten = np.array([0.1, 0.1])
    result = trades(("Delta", "Bravo"), ten, ("Echo", "Alpha"), ten)
    assert [t.name for t in result.trades] == ["Alpha", "Bravo", "Delta", "Echo"]
    assert [t.action for t in result.trades] == ["dropped", "new", "new", "dropped"]
    assert result.one_way_turnover == pytest.approx(0.2)


def test_zero_on_both_sides_is_a_hold_and_negative_zero_is_zero():
    result = trades(("A", "B"), np.array([-0.0, 1.0]), ("A", "B"), np.array([0.0, 1.0]))
    assert [(t.name, t.action) for t in result.trades] == [("A", "hold"), ("B", "hold")]
    assert all(str(t.change) == "0.0" for t in result.trades)
    assert result.one_way_turnover == 0.0


def test_no_current_holdings_means_everything_is_new():
    result = trades(("A", "B", "C"), np.array([0.5, 0.0, 0.5]), (), np.array([]))
    actions = [(t.name, t.action) for t in result.trades]
    assert actions == [("A", "new"), ("C", "new"), ("B", "hold")]
    # Buying a fully invested portfolio from cash: one-way turnover 1 / 2 (common practice:
    # one-way turnover is half the sum of absolute weight changes, cash excluded).
    assert result.one_way_turnover == pytest.approx(0.5)


def test_turnover_does_not_depend_on_the_order_of_the_inputs():
    rng = np.random.default_rng(11)
    names = tuple(f"Name {i:02d}" for i in range(30))
    target, current = rng.normal(0, 0.1, 30), rng.normal(0, 0.1, 30)
    order = rng.permutation(30)
    a = trades(names, target, names, current)
    b = trades(tuple(names[i] for i in order), target[order], names[::-1], current[::-1])
    assert a == b
    assert a.one_way_turnover == pytest.approx(np.abs(target - current).sum() / 2, rel=1e-14)


def test_returns_plain_floats():
    result = trades(("A",), np.array([0.5], dtype=np.float32), ("A",), np.array([0.25]))
    trade = result.trades[0]
    assert type(trade.current) is float and type(trade.target) is float
    assert type(trade.change) is float and type(result.one_way_turnover) is float
    assert isinstance(result, TradeList)


@pytest.mark.parametrize(
    ("args", "match"),
    [
        (
            (("A", "B"), np.array([0.5]), (), np.array([])),
            r"The target weights have shape \(1,\), but there are 2 target names\.",
        ),
        (
            (("A",), np.array([0.5]), ("B",), np.array([0.1, 0.2])),
            r"The current weights have shape \(2,\), but there are 1 current names\.",
        ),
        (
            (("A", "A"), np.array([0.5, 0.5]), (), np.array([])),
            r"The target names list 'A' more than once\.",
        ),
        (
            (("A",), np.array([0.5]), ("B", "B"), np.array([0.1, 0.2])),
            r"The current names list 'B' more than once\.",
        ),
        (
            (("A", "B"), np.array([np.nan, 0.5]), (), np.array([])),
            r"The target weight of 'A' is not a finite number\.",
        ),
        (
            (("A",), np.array([0.5]), ("B", "C"), np.array([0.1, np.inf])),
            r"The current weight of 'C' is not a finite number\.",
        ),
    ],
)
def test_bad_inputs_are_refused(args, match):
    with pytest.raises(ValueError, match=match):
        trades(*args)
