"""Tests for the job file's `limits` and `holdings` sections, through load_job."""

from __future__ import annotations

import math
import re
from pathlib import Path

import pytest

from trackfit.errors import JobError
from trackfit.job import Bounds, GroupsSpec, HoldingsSpec, LimitsSpec, load_job

BC = "benchmark: {file: index.csv, column: lbx60}\nconstituents: {file: constituents.csv}\n"

FULL = (
    BC
    + """\
limits:
  long_only: true
  budget: {min: 0.95, max: 1.0}
  weight: {min: 0.0, max: 0.10}
  names:
    kestrel_minerals: {max: 0.05}
    tidewater_power: {min: 0.01, max: 0.08}
  groups:
    file: data/sectors.csv
    name_column: company
    group_column: sector
    each: {max: 0.30}
    bounds:
      tidal_energy: {min: 0.05, max: 0.25}
      "2020": {max: 0.1}
  max_names: 25
  min_position: 0.005
holdings:
  file: current/weights.csv
  turnover_penalty: 0.0005
  max_turnover: 0.10
"""
)


def _write(folder: Path, text: str) -> Path:
    folder.mkdir(parents=True, exist_ok=True)
    path = folder / "job.yaml"
    path.write_text(text, encoding="utf-8")
    return path


def test_full_limits_round_trip(tmp_path):
    job = load_job(_write(tmp_path / "jobs", FULL))
    base = (tmp_path / "jobs").resolve()
    assert job.limits == LimitsSpec(
        long_only=True,
        budget=(0.95, 1.0),
        weight=Bounds(0.0, 0.10),
        names=(("kestrel_minerals", Bounds(None, 0.05)), ("tidewater_power", Bounds(0.01, 0.08))),
        groups=GroupsSpec(
            file=base / "data" / "sectors.csv",
            name_column="company",
            group_column="sector",
            each=Bounds(None, 0.30),
            bounds=(("tidal_energy", Bounds(0.05, 0.25)), ("2020", Bounds(None, 0.1))),
        ),
        max_names=25,
        min_position=0.005,
    )
    assert job.holdings == HoldingsSpec(base / "current" / "weights.csv", 0.0005, 0.10)


def test_no_limits_and_no_holdings_by_default(tmp_path):
    job = load_job(_write(tmp_path, BC))
    assert job.limits == LimitsSpec()
    assert job.holdings is None
    with_nulls = load_job(_write(tmp_path, BC + "limits:\nholdings:\n"))
    assert (with_nulls.limits, with_nulls.holdings) == (LimitsSpec(), None)


def test_null_values_inside_limits_mean_defaults(tmp_path):
    text = BC + (
        "limits:\n  long_only:\n  budget:\n  weight:\n  names:\n  groups:\n  max_names:\n"
        "  min_position:\nholdings: {file: h.csv, turnover_penalty: null, max_turnover: null}\n"
    )
    job = load_job(_write(tmp_path, text))
    assert job.limits == LimitsSpec()
    assert job.holdings == HoldingsSpec(tmp_path.resolve() / "h.csv", 0.0, None)


@pytest.mark.parametrize(
    "budget, expected",
    [
        ("fully_invested", (1.0, 1.0)),
        ("{min: 0.95, max: 1.0}", (0.95, 1.0)),
        ("{min: 0.95}", (0.95, math.inf)),
        ("{max: 1}", (-math.inf, 1.0)),
        ("{min: -10, max: 10}", (-10.0, 10.0)),
        ("{min: 1, max: 1}", (1.0, 1.0)),
    ],
)
def test_budget_forms(tmp_path, budget, expected):
    job = load_job(_write(tmp_path, BC + f"limits: {{budget: {budget}}}\n"))
    assert job.limits.budget == expected
    assert all(type(v) is float for v in job.limits.budget)


def test_groups_defaults_and_numbers_are_floats(tmp_path):
    text = BC + (
        "limits:\n  weight: {max: 1}\n  groups: {file: ../g.csv, bounds: {banks: {min: 0}}}\n"
    )
    job = load_job(_write(tmp_path / "jobs", text))
    groups = job.limits.groups
    assert groups == GroupsSpec(
        file=tmp_path.resolve() / "g.csv", bounds=(("banks", Bounds(0.0, None)),)
    )
    assert (groups.name_column, groups.group_column, groups.each) == ("name", "group", None)
    assert type(job.limits.weight.max) is float and type(groups.bounds[0][1].min) is float


def test_holdings_without_turnover_limits_is_allowed(tmp_path):
    # Trades are still reported, so holdings alone are useful.
    job = load_job(_write(tmp_path, BC + "holdings: {file: ~/held.csv}\n"))
    assert job.holdings == HoldingsSpec(Path("~/held.csv").expanduser().resolve(), 0.0, None)


def test_override_may_take_the_other_side_from_weight(tmp_path):
    text = BC + (
        "limits:\n  weight: {min: 0.01, max: 0.1}\n  names: {a: {max: 0.01}, b: {min: 0.1}}\n"
    )
    job = load_job(_write(tmp_path, text))
    assert job.limits.names == (("a", Bounds(None, 0.01)), ("b", Bounds(0.1, None)))


L = BC + "limits:\n"
G = L + "  groups:\n    file: s.csv\n"

# (YAML text, expected message after "<file>: ")
ERRORS = [
    (BC + "limit: {long_only: true}\n", "unknown key 'limit'; did you mean 'limits'?"),
    (BC + "holding: {file: h.csv}\n", "unknown key 'holding'; did you mean 'holdings'?"),
    (
        L + "  long_only: yes please\n",
        "'limits.long_only' must be true or false; got 'yes please'.",
    ),
    (L + "  long_only: 1\n", "'limits.long_only' must be true or false; got 1."),
    (L + "  longonly: true\n", "unknown key 'limits.longonly'; did you mean 'long_only'?"),
    (
        L + "  sectors: {}\n",
        "unknown key 'limits.sectors'; allowed: long_only, budget, weight, "
        "names, groups, max_names, min_position",
    ),
    (
        "limits: [long_only]\n" + BC,
        "'limits' must be a mapping with keys among 'long_only', "
        "'budget', 'weight', 'names', 'groups', 'max_names', 'min_position'; got ['long_only'].",
    ),
    # budget
    (
        L + "  budget: fully-invested\n",
        "'limits.budget' must be 'fully_invested' or a mapping "
        "with 'min', 'max' or both (bounds on the sum of weights); got 'fully-invested'; did you "
        "mean 'fully_invested'?",
    ),
    (
        L + "  budget: 1\n",
        "'limits.budget' must be 'fully_invested' or a mapping with 'min', "
        "'max' or both (bounds on the sum of weights); got 1.",
    ),
    (
        L + "  budget: {}\n",
        "'limits.budget' must be a mapping with 'min', 'max' or both, such as "
        "{min: 0.0, max: 0.1}; got {}.",
    ),
    (L + "  budget: {min: null}\n", "'limits.budget' must be a mapping with 'min', 'max' or both"),
    (L + "  budget: {low: 0.9}\n", "unknown key 'limits.budget.low'; allowed: min, max"),
    (L + "  budget: {minimum: 0.9}\n", "unknown key 'limits.budget.minimum'; did you mean 'min'?"),
    (
        L + "  budget: {min: 1.0, max: 0.95}\n",
        "'limits.budget.min' (1) is above "
        "'limits.budget.max' (0.95); the minimum must not exceed the maximum",
    ),
    (
        L + "  budget: {max: 100}\n",
        "'limits.budget.max' must be a number from -10 to 10, in "
        "decimal units (0.05 = 5 %); got 100.",
    ),
    (L + "  budget: {min: -10.5}\n", "'limits.budget.min' must be a number from -10 to 10"),
    (
        L + "  budget: {max: .inf}\n",
        "'limits.budget.max' must be a number from -10 to 10, in "
        "decimal units (0.05 = 5 %); got inf.",
    ),
    (L + "  budget: {max: .nan}\n", "'limits.budget.max' must be a number from -10 to 10"),
    (
        L + "  budget: {max: '1.0'}\n",
        "'limits.budget.max' must be a number from -10 to 10, in "
        "decimal units (0.05 = 5 %); got '1.0' (text, not a number; remove the quotes).",
    ),
    (
        L + "  budget: {max: true}\n",
        "'limits.budget.max' must be a number from -10 to 10, in "
        "decimal units (0.05 = 5 %); got True.",
    ),
    # weight and names
    (
        L + "  weight: 0.1\n",
        "'limits.weight' must be a mapping with 'min', 'max' or both, such as "
        "{min: 0.0, max: 0.1}; got 0.1.",
    ),
    (
        L + "  weight: {max: 1e-1}\n",
        "'limits.weight.max' must be a number from -10 to 10, in "
        "decimal units (0.05 = 5 %); got '1e-1' (YAML reads this exponent form as text; write it "
        "as 0.001 or 1.0e-3).",
    ),
    (L + "  weight: {max: 10%}\n", "'limits.weight.max' must be a number from -10 to 10"),
    (
        L + "  weight: {min: 0.2, max: 0.1}\n",
        "'limits.weight.min' (0.2) is above "
        "'limits.weight.max' (0.1); the minimum must not exceed the maximum",
    ),
    (L + "  weight: {max: 0.1, mx: 0.2}\n", "unknown key 'limits.weight.mx'; did you mean 'max'?"),
    (
        L + "  names: [kestrel]\n",
        "'limits.names' must be a mapping from constituent name to "
        "{min, max} bounds; got ['kestrel'].",
    ),
    (
        L + "  names: {2020: {max: 0.1}}\n",
        "every constituent name under 'limits.names' must be a "
        "non-empty string; got 2020 (YAML read this as a number; put it in quotes).",
    ),
    (
        L + "  names: {yes: {max: 0.1}}\n",
        "every constituent name under 'limits.names' must be a "
        "non-empty string; got True (YAML read this as a boolean; put it in quotes).",
    ),
    (
        L + "  names: {kestrel: 0.05}\n",
        "'limits.names.kestrel' must be a mapping with 'min', "
        "'max' or both, such as {min: 0.0, max: 0.1}; got 0.05.",
    ),
    (
        L + "  names: {kestrel: }\n",
        "'limits.names.kestrel' must be a mapping with 'min', 'max' "
        "or both, such as {min: 0.0, max: 0.1}; got None.",
    ),
    (
        L + "  names: {kestrel: {maximum: 0.05}}\n",
        "unknown key 'limits.names.kestrel.maximum'; did you mean 'max'?",
    ),
    (
        L + "  names: {kestrel: {min: 0.1, max: 0.05}}\n",
        "'limits.names.kestrel.min' (0.1) is "
        "above 'limits.names.kestrel.max' (0.05); the minimum must not exceed the maximum",
    ),
    (
        L + "  weight: {min: 0.02}\n  names: {kestrel: {max: 0.01}}\n",
        "'limits.names.kestrel.max' (0.01) is below 'limits.weight.min' (0.02), which applies to "
        "this name because 'limits.names.kestrel' gives no 'min'; give 'limits.names.kestrel' a "
        "'min' too, or lower 'limits.weight.min'",
    ),
    (
        L + "  weight: {max: 0.1}\n  names: {kestrel: {min: 0.2}}\n",
        "'limits.names.kestrel.min' (0.2) is above 'limits.weight.max' (0.1), which applies to this "
        "name because 'limits.names.kestrel' gives no 'max'; give 'limits.names.kestrel' a 'max' "
        "too, or raise 'limits.weight.max'",
    ),
    # groups
    (
        L + "  groups: sectors.csv\n",
        "'limits.groups' must be a mapping with keys among 'file', "
        "'name_column', 'group_column', 'each', 'bounds'; got 'sectors.csv'.",
    ),
    (
        L + "  groups: {each: {max: 0.3}}\n",
        "'limits.groups.file' is required: the path of a file, relative to the job file's folder",
    ),
    (
        G + "    sheet: 1\n",
        "unknown key 'limits.groups.sheet'; allowed: file, name_column, group_column, each, bounds",
    ),
    (
        G + "    group_col: sector\n",
        "unknown key 'limits.groups.group_col'; did you mean 'group_column'?",
    ),
    (
        G,
        "'limits.groups' sets no bounds: give 'limits.groups.each' (bounds for every group), "
        "'limits.groups.bounds' (bounds per group) or both, or remove 'limits.groups'",
    ),
    (G + "    each:\n    bounds: {}\n", "'limits.groups' sets no bounds"),
    (
        G + "    group_column: 2020\n    each: {max: 0.3}\n",
        "'limits.groups.group_column' must be "
        "a non-empty string; got 2020 (YAML read this as a number; put it in quotes).",
    ),
    (
        G + "    name_column: ''\n    each: {max: 0.3}\n",
        "'limits.groups.name_column' must be a non-empty string; got ''.",
    ),
    (
        G + "    name_column: sector\n    group_column: sector\n    each: {max: 0.3}\n",
        "'limits.groups.name_column' and 'limits.groups.group_column' are both 'sector'; the names "
        "and the groups must come from different columns",
    ),
    (
        G + "    each: 0.3\n",
        "'limits.groups.each' must be a mapping with 'min', 'max' or both, "
        "such as {min: 0.0, max: 0.1}; got 0.3.",
    ),
    (
        G + "    each: {min: 0.4, max: 0.3}\n",
        "'limits.groups.each.min' (0.4) is above 'limits.groups.each.max' (0.3)",
    ),
    (
        G + "    bounds: [tidal_energy]\n",
        "'limits.groups.bounds' must be a mapping from group "
        "label to {min, max} bounds; got ['tidal_energy'].",
    ),
    (
        G + "    bounds: {tidal_energy: {max: 25}}\n",
        "'limits.groups.bounds.tidal_energy.max' must "
        "be a number from -10 to 10, in decimal units (0.05 = 5 %); got 25.",
    ),
    (
        G + "    bounds: {tidal_energy: }\n",
        "'limits.groups.bounds.tidal_energy' must be a mapping with 'min', 'max' or both",
    ),
    (
        G + "    bounds: {1: {max: 0.2}}\n",
        "every group label under 'limits.groups.bounds' must be "
        "a non-empty string; got 1 (YAML read this as a number; put it in quotes).",
    ),
    # max_names, min_position
    (L + "  max_names: 0\n", "'limits.max_names' must be an integer >= 1; got 0."),
    (L + "  max_names: 25.0\n", "'limits.max_names' must be an integer >= 1; got 25.0."),
    (
        L + "  max_names: '25'\n",
        "'limits.max_names' must be an integer >= 1; got '25' (text, "
        "not a number; remove the quotes).",
    ),
    (
        L + "  min_position: 0\n",
        "'limits.min_position' must be a number strictly between 0 and 1; got 0.",
    ),
    (
        L + "  min_position: 1\n",
        "'limits.min_position' must be a number strictly between 0 and 1; got 1.",
    ),
    (
        L + "  min_position: 5e-3\n",
        "'limits.min_position' must be a number strictly between 0 "
        "and 1; got '5e-3' (YAML reads this exponent form as text",
    ),
    # holdings
    (
        BC + "holdings: current/weights.csv\n",
        "'holdings' must be a mapping with keys among "
        "'file', 'date', 'turnover_penalty', 'max_turnover'; got 'current/weights.csv'.",
    ),
    (
        BC + "holdings: {turnover_penalty: 0.001}\n",
        "'holdings.file' is required: the path of a file, relative to the job file's folder",
    ),
    (
        BC + "holdings: {file: h.csv, penalty: 0.001}\n",
        "unknown key 'holdings.penalty'; did you mean 'turnover_penalty'?",
    ),
    (
        BC + "holdings: {file: h.csv, cost: 0.001}\n",
        "unknown key 'holdings.cost'; allowed: file, date, turnover_penalty, max_turnover",
    ),
    (
        BC + "holdings: {file: h.csv, max_turnover: 10}\n",
        "'holdings.max_turnover' must be a number from 0 to 1; got 10.",
    ),
    (
        BC + "holdings: {file: h.csv, max_turnover: -0.1}\n",
        "'holdings.max_turnover' must be a number from 0 to 1; got -0.1.",
    ),
    (
        BC + "holdings: {file: h.csv, max_turnover: .nan}\n",
        "'holdings.max_turnover' must be a number from 0 to 1; got nan.",
    ),
    (
        BC + "holdings: {file: h.csv, turnover_penalty: -0.001}\n",
        "'holdings.turnover_penalty' must be a number >= 0; got -0.001.",
    ),
    (
        BC + "holdings: {file: h.csv, turnover_penalty: .inf}\n",
        "'holdings.turnover_penalty' must be a number >= 0; got inf.",
    ),
    (
        BC + "holdings: {file: h.csv, turnover_penalty: 'none'}\n",
        "'holdings.turnover_penalty' must be a number >= 0; got 'none'.",
    ),
    (
        BC + "holdings: {file: 5}\n",
        "'holdings.file' must be a non-empty string; got 5 (YAML "
        "read this as a number; put it in quotes).",
    ),
]


@pytest.mark.parametrize("text, message", ERRORS, ids=[f"{i:03d}" for i in range(len(ERRORS))])
def test_validation_messages(tmp_path, text, message):
    path = _write(tmp_path, text)
    with pytest.raises(JobError, match=re.escape(message)) as info:
        load_job(path)
    assert str(info.value).startswith(f"{path}: ")


@pytest.mark.parametrize("value", ["0", "0.0", "1", "1.0", "0.25"])
def test_max_turnover_range_is_closed(tmp_path, value):
    job = load_job(_write(tmp_path, BC + f"holdings: {{file: h.csv, max_turnover: {value}}}\n"))
    assert job.holdings.max_turnover == float(value)
