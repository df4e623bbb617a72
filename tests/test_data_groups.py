"""Tests for trackfit.data.groups: the groups file -> name -> group mapping."""

from __future__ import annotations

import re
from pathlib import Path

import pytest

from trackfit.data.groups import read_groups
from trackfit.errors import DataError
from trackfit.job import Bounds, GroupsSpec

EACH = Bounds(None, 0.3)


def _spec(path: Path, **changes) -> GroupsSpec:
    return GroupsSpec(file=path, each=EACH, **changes)


def _write(tmp_path: Path, data: bytes | str) -> Path:
    path = tmp_path / "sectors.csv"
    path.write_bytes(data.encode("utf-8") if isinstance(data, str) else data)
    return path


def test_reads_names_and_groups_in_file_order(tmp_path):
    path = _write(
        tmp_path, "name,group\nkestrel_minerals,mining\nharbour_gas,tidal_energy\nreef_bank,banks\n"
    )
    mapping = read_groups(_spec(path))
    assert mapping == {
        "kestrel_minerals": "mining",
        "harbour_gas": "tidal_energy",
        "reef_bank": "banks",
    }
    assert list(mapping) == ["kestrel_minerals", "harbour_gas", "reef_bank"]


def test_named_columns_extra_columns_blank_lines_bom_and_repeats(tmp_path):
    text = (
        "\ufeffcountry, company ,sector\r\n"
        "Lumen,  kestrel_minerals , mining\r\n\r\n"
        'Lumen,"Harbour Gas, Preferred",tidal_energy\r\n'
        "Lumen,kestrel_minerals,mining\r\n"
    )  # the same group twice is fine
    mapping = read_groups(
        _spec(_write(tmp_path, text), name_column="company", group_column="sector")
    )
    assert mapping == {"kestrel_minerals": "mining", "Harbour Gas, Preferred": "tidal_energy"}


def test_label_names_the_file(tmp_path):
    path = _write(tmp_path, "name,group\na,\n")
    with pytest.raises(DataError, match=r"^data/sectors\.csv: line 2: "):
        read_groups(_spec(path), label="data/sectors.csv")


# (file text, spec changes, expected message after "<path>: ")
ERRORS = [
    (
        "",
        {},
        "the groups file is empty; expected a header line with the columns 'name' and "
        "'group', then one line per name",
    ),
    (
        "name\na\n",
        {},
        "the header has 1 column(s); a groups file needs at least two: the names and their groups",
    ),
    ("name,,group\na,x,b\n", {}, "column 2 of the header has no name; give every column a name"),
    (
        "name,group,name\na,b,c\n",
        {},
        "column name 'name' appears more than once in the header; column names must be unique",
    ),
    (
        "company,group\na,b\n",
        {},
        "no column 'name' (named by limits.groups.name_column); columns "
        "found: 'company', 'group'; fix the name in the job file or the file's header",
    ),
    (
        "name,sektor\na,b\n",
        {"group_column": "sector"},
        "no column 'sector' (named by "
        "limits.groups.group_column); columns found: 'name', 'sektor' (close match: 'sektor'); fix "
        "the name in the job file or the file's header",
    ),
    (
        "name,group\n",
        {},
        "the groups file has a header but no rows; add one line per name with its group",
    ),
    (
        "name,group\na,x\nb\n",
        {},
        "line 3 has 1 field(s) but the header has 2; every line needs one field per column",
    ),
    (
        "name,group\na,x\n,y\n",
        {},
        "line 3: the name in column 'name' is blank; give every row a name",
    ),
    (
        "name,group\n\na, \n",
        {},
        "line 3: 'a' has a blank group label in column 'group'; give every name a group",
    ),
    (
        "name,group\na,mining\nb,banks\na,banks\n",
        {},
        "'a' is in group 'mining' on line 2 and in "
        "group 'banks' on line 4; a name belongs to one group",
    ),
    (
        'name,group\n"a,x\n',
        {},
        "line 2: not well-formed CSV (unexpected end of data); check the quotes on that line",
    ),
    (b"name,group\na,caf\xe9\n", {}, "not UTF-8 text"),
]


@pytest.mark.parametrize(
    "data, changes, message", ERRORS, ids=[f"{i:03d}" for i in range(len(ERRORS))]
)
def test_validation_messages(tmp_path, data, changes, message):
    path = _write(tmp_path, data)
    with pytest.raises(DataError, match=re.escape(f"{path}: {message}")):
        read_groups(_spec(path, **changes))


def test_missing_file(tmp_path):
    path = tmp_path / "nope.csv"
    with pytest.raises(
        DataError,
        match=re.escape(
            f"{path}: the groups file does not exist ({path}); check 'limits.groups.file' in the "
            "job file (relative paths start from the job file's folder)"
        ),
    ):
        read_groups(_spec(path))
