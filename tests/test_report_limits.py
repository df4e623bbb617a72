"""Tests for the mandate-limit parts of the reporter: the report.md section and summary.json.

The FitOutcome extends the hand-built one of tests/builders.py with invented limits, limit
statuses, a name-cap search record, uncapped metrics, current holdings and trades, so every
line the reporter writes is known to the test.
"""

from __future__ import annotations

import dataclasses
import json
import re
from pathlib import Path

import numpy as np
import pytest
from builders import N_HOLDOUT, NAMES, make_outcome
from builders import tracking_metrics as _metrics
from markdown_tables import cells as _cells
from markdown_tables import table_blocks as _table_blocks

from trackfit.core.limits import GroupLimit, Limits, LimitStatus
from trackfit.core.results import SupportSearch
from trackfit.evaluate.trades import TradeList, trades
from trackfit.job import Bounds, GroupsSpec, HoldingsSpec, LimitsSpec
from trackfit.outcomes.fit import FitOutcome
from trackfit.report import render_markdown, render_summary_json, render_weights_csv, write_reports
from trackfit.report.limit_labels import status_name, status_words
from trackfit.report.markdown import HEADINGS
from trackfit.report.markdown_limits import TRADE_ROWS

INF = np.inf

# Held lasso weights under the limits: long-only, 95 % invested, three names.
# NAMES: Alder Mills, Brightwater Foods, Cobalt Rail, Dunmore Textiles, Eastfield Power.
LIMITED_FINAL = np.array([0.40, 0.0, 0.25, 0.0, 0.30])
CURRENT_NAMES = ("Alder Mills", "Brightwater Foods", "Zephyr Mining", "Eastfield Power")
CURRENT = np.array([0.35, 0.20, 0.05, 0.30])

# Statuses in the order a solver might give them; 6 of the 13 bind.
STATUSES = (
    LimitStatus("budget_min", None, 0.95, 0.95, 0.0, True),
    LimitStatus("budget_max", None, 1.0, 0.95, 0.05, False),
    LimitStatus("upper", 0, 0.40, 0.40, 0.0, True),
    LimitStatus("upper", 1, 0.40, 0.0, 0.40, False),
    LimitStatus("lower", 2, 0.05, 0.25, 0.20, False),
    LimitStatus("upper", 2, 0.25, 0.25, 0.0, True),
    LimitStatus("long_only", 3, 0.0, 0.0, 0.0, True),
    LimitStatus("group_max", "Industrials", 0.70, 0.65, 0.05, False),
    LimitStatus("group_min", "Utilities", 0.10, 0.30, 0.20, False),
    LimitStatus("group_max", "Utilities", 0.30, 0.30, 0.0, True),
    LimitStatus("max_turnover", None, 0.30, 0.275, 0.025, False),
    LimitStatus("max_names", None, 3.0, 3.0, 0.0, True),
    LimitStatus("min_position", None, 0.0125, 0.25, 0.2375, False),
)

SEARCH = SupportSearch(
    chosen=(0, 2, 4),
    start="forward selection",
    objective=0.0123456789,
    uncapped_objective=0.0110000001,
    evaluations=37,
    swaps=2,
    removed_small=(3,),
)

NOTE = (
    "With more constituents than rows the weights are not unique; the one with the "
    "smallest sum of squared standardized weights is reported."
)


def make_limited_outcome(root: Path, **changes) -> FitOutcome:
    """make_outcome's run, with every kind of limit, a name cap and current holdings."""
    base = make_outcome(root)
    job_dir = base.job.path.parent
    spec = LimitsSpec(
        long_only=True,
        budget=(0.95, 1.0),
        weight=Bounds(max=0.40),
        names=(("Cobalt Rail", Bounds(min=0.05, max=0.25)),),
        groups=GroupsSpec(
            file=job_dir / "data" / "sectors.csv",
            group_column="sector",
            each=Bounds(max=0.70),
            bounds=(("Utilities", Bounds(min=0.10, max=0.30)),),
        ),
        max_names=3,
        min_position=0.0125,
    )
    holdings = HoldingsSpec(
        file=job_dir / "data" / "holdings.csv", turnover_penalty=0.001, max_turnover=0.30
    )
    job = dataclasses.replace(base.job, limits=spec, holdings=holdings)
    limits = Limits(
        long_only=True,
        budget=(0.95, 1.0),
        lower=np.array([-INF, -INF, 0.05, -INF, -INF]),
        upper=np.array([0.40, 0.40, 0.25, 0.40, 0.40]),
        groups=(
            GroupLimit("Industrials", (0, 2), None, 0.70),
            GroupLimit("Consumer", (1, 3), None, 0.70),
            GroupLimit("Utilities", (4,), 0.10, 0.30),
        ),
        current=np.array([0.35, 0.20, 0.0, 0.0, 0.30]),
        outside_turnover=0.025,
        turnover_penalty=0.001,
        max_turnover=0.30,
        max_names=3,
        min_position=0.0125,
    )
    lasso, enet, ols, equal = base.study.models
    final = dataclasses.replace(
        lasso.final_fit,
        weights=LIMITED_FINAL,
        cash=1.0 - float(LIMITED_FINAL.sum()),
        limits=STATUSES,
        search=SEARCH,
    )
    lasso = dataclasses.replace(
        lasso,
        final_fit=final,
        uncapped_in_sample=_metrics(0.0110, names_held=5),
        uncapped_holdout=_metrics(0.0215, periods=N_HOLDOUT, names_held=5),
    )
    enet = dataclasses.replace(
        enet,
        uncapped_in_sample=_metrics(0.0125, names_held=4),
        uncapped_holdout=_metrics(0.0222, periods=N_HOLDOUT, names_held=4),
    )
    study = dataclasses.replace(base.study, models=(lasso, enet, ols, equal))
    fields = dict(
        job=job,
        study=study,
        limits=limits,
        trades=trades(NAMES, LIMITED_FINAL, CURRENT_NAMES, CURRENT),
        notes=(NOTE,),
    )
    fields.update(changes)
    return dataclasses.replace(base, **fields)


@pytest.fixture
def limited(tmp_path) -> FitOutcome:
    return make_limited_outcome(tmp_path)


def _section(text: str, heading: str = "## Mandate limits") -> str:
    after = text.split(f"\n{heading}\n", 1)[1]
    return after.split("\n## ", 1)[0]


def _sub(section: str, heading: str) -> str:
    return section.split(f"\n{heading}\n", 1)[1].split("\n### ", 1)[0]


# --- report.md -----------------------------------------------------------------------------


def test_section_sits_after_held_weights_and_before_tracking(limited, outcome_no_limits):
    for o in (limited, outcome_no_limits):
        lines = render_markdown(o).split("\n")
        positions = [lines.index(h) for h in HEADINGS]
        assert positions == sorted(positions)
        assert HEADINGS[1:4] == ("## Held weights", "## Mandate limits", "## Tracking")


@pytest.fixture
def outcome_no_limits(tmp_path) -> FitOutcome:
    return make_outcome(tmp_path)


def test_without_limits_or_holdings_one_line(outcome_no_limits):
    assert _section(render_markdown(outcome_no_limits)) == "\nNo mandate limits were set.\n"


def test_limits_in_force_in_plain_words(limited):
    part = _sub(_section(render_markdown(limited)), "### Limits in force")
    assert part.strip("\n").split("\n") == [
        "- Long-only: no weight below 0.",
        "- Budget: the sum of weights is between 95.00% and 100.00%.",
        "- Every name: at most 40.00%.",
        "- By name (instead of the bound on every name):",
        "  - Cobalt Rail: between 5.00% and 25.00%.",
        "- Group totals (groups from `data/sectors.csv`, column 'sector'):",
        "  - Industrials (2 names): at most 70.00%.",
        "  - Consumer (2 names): at most 70.00%.",
        "  - Utilities (1 name): between 10.00% and 30.00%.",
        "- Maximum names held: 3.",
        "- Minimum position: 1.25%; no weight strictly between 0 and 1.25% in size.",
        "- Current holdings: `data/holdings.csv`.",
        "- Turnover penalty: 0.001 times the sum of absolute changes from the current "
        "holdings, in standardized units, added to the objective.",
        "- Turnover cap: one-way turnover at most 30.00%, of which 2.50% is forced by selling "
        "holdings that are not constituents.",
    ]


def test_fully_invested_is_said_in_words(tmp_path):
    o = make_limited_outcome(tmp_path)
    o = dataclasses.replace(o, limits=dataclasses.replace(o.limits, budget=(1.0, 1.0)))
    assert "- Budget: fully invested; the weights sum to 100.00% (no cash)." in render_markdown(o)


def test_status_table_binding_first_with_names_resolved(limited):
    part = _sub(_section(render_markdown(limited)), "### Limit statuses")
    assert "(6 of 13 binding)" in part
    [block] = _table_blocks(part)
    assert _cells(block[0]) == [" Limit ", " Bound ", " Value ", " Slack ", " Binding "]
    assert block[2:] == [
        "| Sum of weights, at least | 95.0000% | 95.0000% | 0.0000% | yes |",
        "| Weight of Alder Mills, at most | 40.0000% | 40.0000% | 0.0000% | yes |",
        "| Weight of Cobalt Rail, at most | 25.0000% | 25.0000% | 0.0000% | yes |",
        "| Weight of Dunmore Textiles (long-only), at least | 0.0000% | 0.0000% | 0.0000% | yes |",
        "| Total weight of group Utilities, at most | 30.0000% | 30.0000% | 0.0000% | yes |",
        "| Names held, at most | 3 | 3 | 0 | yes |",
        "| Sum of weights, at most | 100.0000% | 95.0000% | 5.0000% | no |",
        "| Weight of Brightwater Foods, at most | 40.0000% | 0.0000% | 40.0000% | no |",
        "| Weight of Cobalt Rail, at least | 5.0000% | 25.0000% | 20.0000% | no |",
        "| Total weight of group Industrials, at most | 70.0000% | 65.0000% | 5.0000% | no |",
        "| Total weight of group Utilities, at least | 10.0000% | 30.0000% | 20.0000% | no |",
        "| One-way turnover, at most | 30.0000% | 27.5000% | 2.5000% | no |",
        "| Smallest position held, at least | 1.2500% | 25.0000% | 23.7500% | no |",
    ]


def test_status_pointing_outside_the_constituents_is_a_bug(tmp_path):
    o = make_limited_outcome(tmp_path)
    lasso = o.study.models[0]
    outside = (LimitStatus("upper", 5, 0.4, 0.1, 0.3, False),)
    bad = dataclasses.replace(lasso.final_fit, limits=outside)
    models = (dataclasses.replace(lasso, final_fit=bad),) + o.study.models[1:]
    o = dataclasses.replace(o, study=dataclasses.replace(o.study, models=models))
    for render in (render_markdown, render_summary_json):
        with pytest.raises(
            ValueError,
            match=r"'upper' limit status points at constituent "
            r"position 5, but there are 5 constituents",
        ):
            render(o)


def test_name_cap_names_search_and_cost(limited):
    part = _sub(_section(render_markdown(limited)), "### Name cap")
    assert (
        "The held model lasso holds 3 names (cap: 3), chosen on the whole window by a "
        "search over sets of names, each set refitted under every other limit; the winning "
        "start was forward selection."
    ) in part
    for row in (
        "| Names chosen | 3 |",
        "| Winning start | forward selection |",
        "| Refits tried | 37 |",
        "| Swaps accepted | 2 |",
        "| Removed below the minimum position | Dunmore Textiles |",
        "| Objective with the cap (standardized) | 1.234568e-02 |",
        "| Objective without the cap (standardized) | 1.100000e-02 |",
    ):
        assert row in part
    assert "Names chosen (3): Alder Mills, Cobalt Rail, Eastfield Power." in part
    # Tracking error with and without the cap; added = capped - uncapped, in percent.
    cost = _table_blocks(part)[1]
    assert cost[2:] == [
        # The cap's cost is measured on judged fits (before the holdout), as the tracking tables.
        "| lasso (held model, judged fit) | 1.2346% | 1.1000% | 0.1346% | 2.3457% | 2.1500% "
        "| 0.1957% |",
        "| elastic_net | 1.3100% | 1.2500% | 0.0600% | 2.2200% | 2.2200% | 0.0000% |",
    ]


def test_trades_turnover_counts_and_table(limited):
    part = _sub(_section(render_markdown(limited)), "### Trades")
    # (0.25 + 0.20 + 0.05 + 0.05) / 2 = 0.275, worked by hand from CURRENT and LIMITED_FINAL.
    assert "One-way turnover from the current holdings to the held weights: 27.5000%" in part
    counts, rows = _table_blocks(part)
    assert counts[2:] == [
        "| Buys | 1 |",
        "| Sells | 0 |",
        "| New names | 1 |",
        "| Dropped names | 2 |",
        "| Holds (no change) | 2 |",
    ]
    # Only real trades are listed; the two names that hold are counted, not listed.
    assert "All 4 trades, largest change first (weights in percent); the 2 names that hold" in part
    assert rows[2:] == [
        "| Cobalt Rail | 0.0000% | 25.0000% | 25.0000% | new |",
        "| Brightwater Foods | 20.0000% | 0.0000% | -20.0000% | dropped |",
        "| Alder Mills | 35.0000% | 40.0000% | 5.0000% | buy |",
        "| Zephyr Mining | 5.0000% | 0.0000% | -5.0000% | dropped |",
    ]


def _many_trades(n: int) -> TradeList:
    names = tuple(f"Member {i:03d}" for i in range(n))
    target = np.linspace(0.001, 0.02, n)
    return trades(names, target, (), np.array([]))


@pytest.mark.parametrize(("n", "shown"), [(TRADE_ROWS, TRADE_ROWS), (TRADE_ROWS + 17, TRADE_ROWS)])
def test_trades_table_is_cut_at_forty_rows(tmp_path, n, shown):
    many = _many_trades(n)
    text = render_markdown(make_limited_outcome(tmp_path, trades=many))
    part = _sub(_section(text), "### Trades")
    rows = _table_blocks(part)[1][2:]
    assert len(rows) == shown
    assert [_cells(r)[0].strip() for r in rows] == [t.name for t in many.trades[:shown]]
    if n > TRADE_ROWS:
        assert (
            f"The 40 largest of {n} trades, largest change first (weights in percent); the "
            "other 17 are listed in summary.json:"
        ) in part
    else:
        assert f"All {n} trades" in part
    assert f"| New names | {n} |" in part


def test_holdings_without_limits(tmp_path):
    base = make_outcome(tmp_path)
    holdings = HoldingsSpec(file=base.job.path.parent / "data" / "holdings.csv")
    o = dataclasses.replace(
        base,
        job=dataclasses.replace(base.job, holdings=holdings),
        trades=trades(NAMES, base.study.models[0].final_fit.weights, CURRENT_NAMES, CURRENT),
    )
    section = _section(render_markdown(o))
    assert "- No limit on the weights was set.\n- Current holdings: `data/holdings.csv`." in section
    assert "### Limit statuses" not in section and "### Name cap" not in section
    assert "### Trades" in section


def test_per_name_bounds_built_without_job_words_are_listed_from_the_arrays(tmp_path):
    o = make_limited_outcome(tmp_path)
    o = dataclasses.replace(o, job=dataclasses.replace(o.job, limits=LimitsSpec()))
    part = _sub(_section(render_markdown(o)), "### Limits in force")
    assert (
        "- By name:\n"
        "  - Alder Mills: at most 40.00%.\n"
        "  - Brightwater Foods: at most 40.00%.\n"
        "  - Cobalt Rail: between 5.00% and 25.00%.\n"
        "  - Dunmore Textiles: at most 40.00%.\n"
        "  - Eastfield Power: at most 40.00%.\n"
    ) in part
    assert "Every name" not in part and "groups from" not in part


@pytest.mark.parametrize(
    ("status", "words"),
    [
        (
            LimitStatus("long_only", 1, 0.0, 0.0, 0.0, True),
            "Weight of Brightwater Foods (long-only), at least",
        ),
        (
            LimitStatus("lower", np.int64(4), 0.01, 0.02, 0.01, False),
            "Weight of Eastfield Power, at least",
        ),
        (LimitStatus("upper", 0, 0.4, 0.4, 0.0, True), "Weight of Alder Mills, at most"),
        (LimitStatus("budget_min", None, 1.0, 1.0, 0.0, True), "Sum of weights, at least"),
        (LimitStatus("budget_max", None, 1.0, 1.0, 0.0, True), "Sum of weights, at most"),
        (
            LimitStatus("group_min", "Energy", 0.1, 0.2, 0.1, False),
            "Total weight of group Energy, at least",
        ),
        (
            LimitStatus("group_max", "Energy", 0.3, 0.2, 0.1, False),
            "Total weight of group Energy, at most",
        ),
        (LimitStatus("max_turnover", None, 0.2, 0.1, 0.1, False), "One-way turnover, at most"),
        (LimitStatus("max_names", None, 3.0, 3.0, 0.0, True), "Names held, at most"),
        (
            LimitStatus("min_position", None, 0.01, 0.02, 0.01, False),
            "Smallest position held, at least",
        ),
        # A kind this reporter does not know yet is shown as it is named, never dropped.
        (LimitStatus("sector_neutral", "Energy", 0.0, 0.0, 0.0, True), "sector neutral: Energy"),
    ],
)
def test_status_words(status, words):
    assert status_words(status, NAMES) == words


@pytest.mark.parametrize(
    ("target", "match"),
    [
        (-1, r"points at constituent position -1, but there are 5 constituents"),
        (True, r"has a target of type bool; expected a constituent position"),
        (1.0, r"has a target of type float; expected a constituent position"),
    ],
)
def test_status_names_refuse_bad_targets(target, match):
    with pytest.raises(ValueError, match=match):
        status_name(LimitStatus("upper", target, 0.4, 0.1, 0.3, False), NAMES)


def test_held_baseline_has_no_statuses_or_search(tmp_path):
    section = _section(render_markdown(make_limited_outcome(tmp_path, held="equal_weight")))
    assert "The held model equal_weight reported no limit statuses for its final fit." in section
    assert "The held model equal_weight was not fitted under the cap on names." in section
    # The cost of the cap is still shown for the models fitted under it.
    assert "| lasso | 1.2346% |" in section


def test_method_notes_under_what_was_done(limited, outcome_no_limits):
    done = _section(render_markdown(limited), "## What was done")
    assert done.endswith(f"\n### Method notes\n\n- {NOTE}\n")
    assert "### Method notes" not in render_markdown(outcome_no_limits)


def test_markdown_tables_are_well_formed(limited):
    blocks = _table_blocks(render_markdown(limited))
    for block in blocks:
        assert len({len(_cells(line)) for line in block}) == 1, block
        assert re.fullmatch(r"\|(?:(?::---|---:)\|)+", block[1]), block[1]


def test_weights_csv_is_unchanged_in_layout(limited):
    assert render_weights_csv(limited).split("\n") == [
        "name,weight",
        "Alder Mills,0.4000000000",
        "Brightwater Foods,0.0000000000",
        "Cobalt Rail,0.2500000000",
        "Dunmore Textiles,0.0000000000",
        "Eastfield Power,0.3000000000",
        "(cash),0.0500000000",
        "",
    ]


# --- summary.json --------------------------------------------------------------------------


def test_summary_json_job_limits_as_written(limited):
    job = json.loads(render_summary_json(limited))["job"]
    assert job["limits"] == {
        "long_only": True,
        "budget": {"min": 0.95, "max": 1.0},
        "weight": {"min": None, "max": 0.4},
        "names": [{"name": "Cobalt Rail", "min": 0.05, "max": 0.25}],
        "groups": {
            "file": "data/sectors.csv",
            "name_column": "name",
            "group_column": "sector",
            "each": {"min": None, "max": 0.7},
            "bounds": [{"group": "Utilities", "min": 0.1, "max": 0.3}],
        },
        "max_names": 3,
        "min_position": 0.0125,
    }
    assert job["holdings"] == {
        "file": "data/holdings.csv",
        "turnover_penalty": 0.001,
        "max_turnover": 0.3,
    }


def test_summary_json_limits_in_force_statuses_and_search(limited):
    limits = json.loads(render_summary_json(limited))["limits"]
    assert list(limits) == ["any", "in_force", "statuses", "search"]
    assert limits["any"] is True
    in_force = limits["in_force"]
    assert list(in_force) == [
        "long_only",
        "budget",
        "per_name",
        "groups",
        "max_names",
        "min_position",
        "turnover_penalty",
        "max_turnover",
        "outside_turnover",
    ]
    # Infinite bounds (no bound on that side) are null.
    assert in_force["per_name"]["Cobalt Rail"] == {"min": 0.05, "max": 0.25}
    assert in_force["per_name"]["Alder Mills"] == {"min": None, "max": 0.4}
    assert list(in_force["per_name"]) == list(NAMES)
    assert in_force["groups"][0] == {
        "name": "Industrials",
        "members": ["Alder Mills", "Cobalt Rail"],
        "min": None,
        "max": 0.7,
    }
    assert in_force["outside_turnover"] == 0.025
    # Statuses in the order the fit gave them, with positions resolved to names.
    assert len(limits["statuses"]) == len(STATUSES)
    assert limits["statuses"][2] == {
        "kind": "upper",
        "name": "Alder Mills",
        "bound": 0.4,
        "value": 0.4,
        "slack": 0.0,
        "binding": True,
    }
    assert limits["statuses"][7]["name"] == "Industrials"
    assert limits["statuses"][0]["name"] is None
    assert limits["search"] == {
        "chosen": ["Alder Mills", "Cobalt Rail", "Eastfield Power"],
        "start": "forward selection",
        "objective": 0.0123456789,
        "uncapped_objective": 0.0110000001,
        "evaluations": 37,
        "swaps": 2,
        "removed_small": ["Dunmore Textiles"],
    }


def test_summary_json_uncapped_metrics_per_model(limited):
    models = json.loads(render_summary_json(limited))["models"]
    lasso, enet, ols, _ = models
    for m in models:
        keys = list(m)
        assert keys[keys.index("holdout") + 1 : keys.index("holdout") + 3] == [
            "uncapped_in_sample",
            "uncapped_holdout",
        ]
    assert lasso["uncapped_in_sample"]["tracking_error"] == 0.011
    assert lasso["uncapped_holdout"]["periods"] == N_HOLDOUT
    assert enet["uncapped_in_sample"]["names_held"] == 4
    assert ols["uncapped_in_sample"] is None and ols["uncapped_holdout"] is None


def test_summary_json_trades_and_notes(limited):
    summary = json.loads(render_summary_json(limited))
    t = summary["trades"]
    assert list(t) == ["one_way_turnover", "counts", "trades"]
    assert t["one_way_turnover"] == 0.275
    assert t["counts"] == {"buy": 1, "sell": 0, "new": 1, "dropped": 2, "hold": 2}
    assert [x["name"] for x in t["trades"]] == [
        "Cobalt Rail",
        "Brightwater Foods",
        "Alder Mills",
        "Zephyr Mining",
        "Dunmore Textiles",
        "Eastfield Power",
    ]
    assert t["trades"][1] == {
        "name": "Brightwater Foods",
        "current": 0.2,
        "target": 0.0,
        "change": -0.2,
        "action": "dropped",
    }
    assert summary["notes"] == [NOTE]


def test_summary_json_every_trade_even_past_forty(tmp_path):
    o = make_limited_outcome(tmp_path, trades=_many_trades(TRADE_ROWS + 17))
    assert len(json.loads(render_summary_json(o))["trades"]["trades"]) == TRADE_ROWS + 17


def test_summary_json_without_limits(outcome_no_limits):
    summary = json.loads(render_summary_json(outcome_no_limits))
    assert summary["limits"]["any"] is False
    assert summary["limits"]["statuses"] == [] and summary["limits"]["search"] is None
    assert summary["limits"]["in_force"]["per_name"] is None
    assert summary["trades"] is None and summary["notes"] == []
    assert summary["job"]["holdings"] is None
    assert summary["job"]["limits"]["groups"] is None


# --- files ---------------------------------------------------------------------------------


def test_limited_reports_are_deterministic_and_hold_no_absolute_path(tmp_path):
    first = write_reports(make_limited_outcome(tmp_path), tmp_path / "a")
    second = write_reports(make_limited_outcome(tmp_path), tmp_path / "b")
    assert [p.read_bytes() for p in first] == [p.read_bytes() for p in second]
    for path in first:
        text = path.read_text(encoding="utf-8")
        assert str(tmp_path) not in text and tmp_path.as_posix() not in text, path.name
        assert "\r" not in text
        assert not re.search(r"\b(nan|inf|infinity)\b", text.lower()), path.name
