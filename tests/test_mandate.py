"""Tests for trackfit.commands.mandate: job limits and data files -> core Limits over the fit's names."""

from __future__ import annotations

import math
import re
from pathlib import Path

import numpy as np
import pytest

from trackfit.commands.mandate import build_limits
from trackfit.core.limits import GroupLimit, Limits
from trackfit.errors import DataError, JobError
from trackfit.job import load_job

# Invented constituents of an invented index.
NAMES = ("kestrel_minerals", "harbour_gas", "reef_bank", "tidewater_power", "lumen_telecom")
SECTORS = (
    "name,sector\n"
    "kestrel_minerals,mining\n"
    "harbour_gas,tidal_energy\n"
    "reef_bank,banks\n"
    "tidewater_power,tidal_energy\n"
    "lumen_telecom,telecom\n"
)
HEAD = "benchmark: {file: index.csv, column: lb60}\nconstituents: {file: constituents.csv}\n"


def _job(tmp_path: Path, text: str, sectors: str = SECTORS, held: str | None = None):
    folder = tmp_path / "jobs"
    (folder / "data").mkdir(parents=True, exist_ok=True)
    (folder / "data" / "sectors.csv").write_text(sectors, encoding="utf-8")
    if held is not None:
        (folder / "current").mkdir(exist_ok=True)
        (folder / "current" / "weights.csv").write_text(held, encoding="utf-8")
    path = folder / "job.yaml"
    path.write_text(HEAD + text, encoding="utf-8")
    return load_job(path)


def test_no_limits_gives_the_empty_limits(tmp_path):
    limits, holdings, warnings, _ = build_limits(_job(tmp_path, ""), NAMES)
    assert isinstance(limits, Limits) and not limits.any
    assert (limits.lower, limits.upper, limits.current, limits.groups) == (None, None, None, ())
    assert (holdings, warnings) == (None, ())


def test_long_only_alone_sets_no_bound_arrays(tmp_path):
    # long-only needs no per-name arrays; they would push the fit to the QP solver for nothing
    limits, _, _, _ = build_limits(_job(tmp_path, "limits: {long_only: true}\n"), NAMES)
    assert limits.long_only and not limits.needs_qp
    assert limits.lower is None and limits.upper is None


@pytest.mark.parametrize(
    "text, lower, upper",
    [
        ("limits: {weight: {min: 0.01, max: 0.1}}\n", [0.01] * 5, [0.1] * 5),
        ("limits: {weight: {max: 0.1}}\n", [-math.inf] * 5, [0.1] * 5),
        ("limits: {weight: {min: -0.05}}\n", [-0.05] * 5, [math.inf] * 5),
        (
            "limits: {names: {reef_bank: {max: 0.05}}}\n",
            [-math.inf] * 5,
            [math.inf, math.inf, 0.05, math.inf, math.inf],
        ),
        (
            "limits:\n  weight: {min: 0.0, max: 0.1}\n"
            "  names: {reef_bank: {max: 0.05}, harbour_gas: {min: 0.02, max: 0.2}}\n",
            [0.0, 0.02, 0.0, 0.0, 0.0],
            [0.1, 0.2, 0.05, 0.1, 0.1],
        ),
        # long-only lifts every lower bound below 0 to 0
        (
            "limits:\n  long_only: true\n  weight: {min: -0.05, max: 0.1}\n"
            "  names: {lumen_telecom: {min: 0.01}}\n",
            # long-only covers minimums at or below 0; only positive ones remain as bounds
            [-np.inf] * 4 + [0.01],
            [0.1] * 5,
        ),
        (
            "limits: {long_only: true, names: {kestrel_minerals: {max: 0.3}}}\n",
            [-np.inf] * 5,
            [0.3, math.inf, math.inf, math.inf, math.inf],
        ),
    ],
)
def test_per_name_bounds(tmp_path, text, lower, upper):
    limits, _, warnings, _ = build_limits(_job(tmp_path, text), NAMES)
    np.testing.assert_array_equal(limits.lower, np.array(lower))
    np.testing.assert_array_equal(limits.upper, np.array(upper))
    assert limits.lower.shape == limits.upper.shape == (len(NAMES),)
    assert warnings == ()


def test_scalar_limits_are_copied(tmp_path):
    text = "limits: {long_only: true, budget: fully_invested, max_names: 3, min_position: 0.005}\n"
    limits, _, _, _ = build_limits(_job(tmp_path, text), NAMES)
    assert (limits.long_only, limits.budget, limits.max_names, limits.min_position) == (
        True,
        (1.0, 1.0),
        3,
        0.005,
    )
    limits, _, _, _ = build_limits(_job(tmp_path, "limits: {budget: {min: 0.95}}\n"), NAMES)
    assert limits.budget == (0.95, math.inf)


def test_group_limits_in_sorted_order_with_each_and_bounds(tmp_path):
    text = (
        "limits:\n  groups:\n    file: data/sectors.csv\n    group_column: sector\n"
        "    each: {max: 0.3}\n    bounds: {tidal_energy: {min: 0.05, max: 0.25}}\n"
    )
    limits, _, warnings, _ = build_limits(_job(tmp_path, text), NAMES)
    assert limits.groups == (
        GroupLimit("banks", (2,), None, 0.3),
        GroupLimit("mining", (0,), None, 0.3),
        GroupLimit("telecom", (4,), None, 0.3),
        GroupLimit("tidal_energy", (1, 3), 0.05, 0.25),
    )
    assert warnings == ()


def test_only_groups_with_bounds_are_limited(tmp_path):
    text = (
        "limits:\n  groups:\n    file: data/sectors.csv\n    group_column: sector\n"
        "    bounds: {telecom: {max: 0.1}, banks: {min: 0.02}}\n"
    )
    limits, _, _, _ = build_limits(_job(tmp_path, text), NAMES)
    assert limits.groups == (
        GroupLimit("banks", (2,), 0.02, None),
        GroupLimit("telecom", (4,), None, 0.1),
    )


def test_positions_follow_the_fits_names_not_the_file(tmp_path):
    # A zero-variance constituent left out of the fit: positions index the names given.
    names = ("tidewater_power", "reef_bank", "kestrel_minerals", "harbour_gas")
    text = (
        "limits:\n  groups:\n    file: data/sectors.csv\n    group_column: sector\n"
        "    bounds: {tidal_energy: {max: 0.2}}\n"
    )
    limits, _, warnings, notes = build_limits(_job(tmp_path, text), names)
    assert limits.groups == (GroupLimit("tidal_energy", (0, 3), None, 0.2),)
    # Groups-file rows of names outside the fit are routine (a note: no exit code).
    assert warnings == ()
    assert notes == (
        "data/sectors.csv: 1 name(s) in the groups file are not constituents of "
        "this fit; their rows are ignored",
    )


def test_group_bounds_for_a_group_without_constituents(tmp_path):
    sectors = SECTORS + "old_shipping,shipping\n"
    text = (
        "limits:\n  groups:\n    file: data/sectors.csv\n    group_column: sector\n"
        "    bounds: {shipping: {max: 0.1}}\n"
    )
    limits, _, warnings, notes = build_limits(_job(tmp_path, text, sectors), NAMES)
    assert limits.groups == ()
    assert notes == (
        "data/sectors.csv: 1 name(s) in the groups file are not constituents of this fit; their "
        "rows are ignored",
    )
    assert warnings == (
        "group 'shipping' has no constituent in this fit; its bounds in 'limits.groups.bounds' "
        "have nothing to limit",
    )


def test_holdings_aligned_to_the_names(tmp_path):
    held = (
        "name,weight\nreef_bank,0.25\nold_shipping,0.04\nkestrel_minerals,0.5\n"
        "retired_co,0\nformer_mill,-0.02\n(cash),0.23\n"
    )
    text = (
        "holdings:\n  file: current/weights.csv\n  turnover_penalty: 0.0005\n  max_turnover: 0.1\n"
    )
    limits, holdings, warnings, _ = build_limits(_job(tmp_path, text, held=held), NAMES)
    np.testing.assert_array_equal(limits.current, [0.5, 0.0, 0.25, 0.0, 0.0])
    assert limits.outside_turnover == pytest.approx((0.04 + 0.02) / 2, abs=1e-15)
    assert (limits.turnover_penalty, limits.max_turnover) == (0.0005, 0.1)
    assert holdings.names == (
        "reef_bank",
        "old_shipping",
        "kestrel_minerals",
        "retired_co",
        "former_mill",
    )
    assert holdings.cash == 0.23
    # a zero row for a former constituent is nothing to sell, so no warning names it
    assert warnings == (
        "current/weights.csv: 2 name(s) held now are not constituents of this fit and will be "
        "sold: 'old_shipping' (0.0400), 'former_mill' (-0.0200); one-way turnover 0.0300 from "
        "them alone",
    )


def test_holdings_without_turnover_limits_still_set_current(tmp_path):
    held = "name,weight\nharbour_gas,1.0\n"
    limits, holdings, warnings, _ = build_limits(
        _job(tmp_path, "holdings: {file: current/weights.csv}\n", held=held), NAMES
    )
    np.testing.assert_array_equal(limits.current, [0.0, 1.0, 0.0, 0.0, 0.0])
    assert (limits.outside_turnover, limits.turnover_penalty, limits.max_turnover) == (
        0.0,
        0.0,
        None,
    )
    assert holdings.cash is None and warnings == ()


def test_many_sold_names_are_listed_up_to_ten(tmp_path):
    held = "name,weight\n" + "".join(f"gone_{i:02d},0.01\n" for i in range(12))
    _, _, warnings, _ = build_limits(
        _job(tmp_path, "holdings: {file: current/weights.csv}\n", held=held), NAMES
    )
    assert "12 name(s) held now" in warnings[0]
    assert "'gone_09' (0.0100), ... (12 in all)" in warnings[0]
    assert "gone_10" not in warnings[0]


GROUPS = "limits:\n  groups:\n    file: data/sectors.csv\n    group_column: sector\n"

# (job text after the head, groups file, expected error class, message after "<file>: ")
ERRORS = [
    (
        "limits: {names: {kestrel_mineral: {max: 0.05}}}\n",
        SECTORS,
        JobError,
        "'limits.names' lists 'kestrel_mineral', which is not a constituent of this fit; close "
        "matches: 'kestrel_minerals'; fix the name or remove it (constituents whose return never "
        "varies in the window are left out of the fit; see the warnings)",
    ),
    (
        "limits: {names: {zzz: {max: 0.05}}}\n",
        SECTORS,
        JobError,
        "'limits.names' lists 'zzz', which is not a constituent of this fit; fix the name",
    ),
    (
        GROUPS + "    bounds: {tidal_enrgy: {max: 0.2}}\n",
        SECTORS,
        JobError,
        "'limits.groups.bounds' names group 'tidal_enrgy', which no row of data/sectors.csv has in "
        "column 'sector'; close matches: 'tidal_energy'; fix the label in the job file or the "
        "groups file",
    ),
    (
        GROUPS + "    bounds: {shipping: {min: 0.05}}\n",
        SECTORS + "old_shipping,shipping\n",
        JobError,
        "'limits.groups.bounds.shipping.min' is 0.05, but no constituent of this fit is "
        "in group 'shipping' (data/sectors.csv), so the minimum cannot be met; remove the minimum "
        "or add constituents of that group",
    ),
    (
        GROUPS + "    each: {max: 0.3}\n",
        "name,sector\nreef_bank,banks\n",
        DataError,
        "no group for 4 constituent(s): 'kestrel_minerals', 'harbour_gas', 'tidewater_power', "
        "'lumen_telecom'; add a row for each with its group in column 'sector'",
    ),
    (
        GROUPS + "    each: {max: 0.3}\n",
        "name,group\nreef_bank,banks\n",
        DataError,
        "no column 'sector' (named by limits.groups.group_column); columns found: 'name', 'group'",
    ),
]


@pytest.mark.parametrize(
    "text, sectors, error, message", ERRORS, ids=[f"{i:03d}" for i in range(len(ERRORS))]
)
def test_validation_messages(tmp_path, text, sectors, error, message):
    job = _job(tmp_path, text, sectors)
    where = job.path if error is JobError else "data/sectors.csv"
    with pytest.raises(error, match="^" + re.escape(f"{where}: {message}")):
        build_limits(job, NAMES)


def test_missing_groups_are_listed_up_to_ten(tmp_path):
    names = tuple(f"name_{i:02d}" for i in range(14))
    with pytest.raises(
        DataError,
        match=re.escape(
            "no group for 14 constituent(s): 'name_00', 'name_01', 'name_02', 'name_03', "
            "'name_04', 'name_05', 'name_06', 'name_07', 'name_08', 'name_09', ... (14 in all); "
            "add a row"
        ),
    ):
        build_limits(_job(tmp_path, GROUPS + "    each: {max: 0.3}\n"), names)


def test_holdings_file_problems_name_the_file_relative_to_the_job(tmp_path):
    job = _job(tmp_path, "holdings: {file: current/weights.csv}\n", held="a,0.5\n")
    with pytest.raises(DataError, match=r"^current/weights\.csv: line 1: the first line"):
        build_limits(job, NAMES)
    job = _job(tmp_path, "holdings: {file: current/none.csv}\n")
    with pytest.raises(DataError, match=r"^current/none\.csv: the holdings file does not exist"):
        build_limits(job, NAMES)


def test_files_outside_the_job_folder_are_named_by_full_path(tmp_path):
    outside = tmp_path / "elsewhere.csv"
    outside.write_text("name,weight\nx,2\ny,4\n", encoding="utf-8")
    job = _job(tmp_path, f"holdings: {{file: {outside}}}\n")
    with pytest.raises(DataError, match="^" + re.escape(f"{outside.resolve()}: the weights add")):
        build_limits(job, NAMES)
