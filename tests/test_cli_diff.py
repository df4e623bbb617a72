"""trackfit diff through click's CliRunner on known weight files."""

from __future__ import annotations

import json
import re

import pytest
from click.testing import CliRunner

from trackfit.cli import EXIT_INPUT, main

OLD = "name,weight\na,0.5000000000\nb,0.3000000000\nc,0.2000000000\n(cash),0.0000000000\n"
NEW = "name,weight\na,0.4000000000\nb,0.3000000000\nd,0.2500000000\n(cash),0.0500000000\n"


def _run(*args):
    return CliRunner().invoke(main, [str(a) for a in args])


@pytest.fixture
def files(tmp_path):
    (tmp_path / "old.csv").write_text(OLD)
    (tmp_path / "new.csv").write_text(NEW)
    return tmp_path / "old.csv", tmp_path / "new.csv"


def test_text_lists_changes_largest_first(files):
    old, new = files
    result = _run("diff", old, new)
    assert result.exit_code == 0, result.stderr
    lines = result.stdout.splitlines()
    # Hand count: d +0.25 (new), c -0.20 (dropped), a -0.10 (sell); b holds. The words are the
    # report's trades table's: new, dropped, buy, sell, hold.
    # One-way turnover (0.25 + 0.20 + 0.10) / 2 = 0.275.
    assert lines[2] == "new 1, dropped 1, buy 0, sell 1, hold 1; one-way turnover 0.275000"
    assert lines[1].endswith("(3 names held, cash 0.050000)")
    table = [line.split() for line in lines[4:]]
    assert table == [
        ["name", "old", "new", "change", "action"],
        ["d", "0.000000", "0.250000", "+0.250000", "new"],
        ["c", "0.200000", "0.000000", "-0.200000", "dropped"],
        ["a", "0.500000", "0.400000", "-0.100000", "sell"],
    ]


def test_csv_bytes(files, tmp_path):
    old, new = files
    out = tmp_path / "diff.csv"
    result = _run("diff", old, new, "--format", "csv", "--out", out)
    assert result.exit_code == 0, result.stderr
    assert result.stdout == f"{out}\n"
    assert out.read_bytes() == (
        b"name,old,new,change,action\n"
        b"d,0.0000000000,0.2500000000,0.2500000000,new\n"
        b"c,0.2000000000,0.0000000000,-0.2000000000,dropped\n"
        b"a,0.5000000000,0.4000000000,-0.1000000000,sell\n"
    )


def test_json(files):
    old, new = files
    result = _run("diff", old, new, "--format", "json")
    assert result.exit_code == 0, result.stderr
    tree = json.loads(result.stdout)
    assert tree["one_way_turnover"] == 0.275
    assert tree["counts"] == {"new": 1, "dropped": 1, "buy": 0, "sell": 1, "hold": 1}
    assert tree["cash"] == {"old": 0.0, "new": 0.05, "change": 0.05}
    assert [c["name"] for c in tree["changes"]] == ["d", "c", "a"]
    assert tree["changes"][2] == {
        "name": "a",
        "old": 0.5,
        "new": 0.4,
        "change": -0.1,
        "action": "sell",
    }


def test_identical_files_say_so(files):
    old, _ = files
    result = _run("diff", old, old)
    assert result.exit_code == 0
    assert result.stdout.splitlines()[-1] == "no weight changed"


@pytest.mark.parametrize(
    "text, match",
    [
        ("name,weight\na,1,2\n", "exactly two columns"),
        ("name,weight\na,5%\n", "not a number"),
    ],
)
def test_bad_files_exit_2_naming_the_file(files, tmp_path, text, match):
    old, _ = files
    bad = tmp_path / "bad.csv"
    bad.write_text(text)
    result = _run("diff", old, bad)
    assert result.exit_code == EXIT_INPUT
    assert "bad.csv" in result.stderr and match in result.stderr
    assert result.stdout == ""


def test_a_missing_file_exits_2(files, tmp_path):
    old, _ = files
    result = _run("diff", old, tmp_path / "nope.csv")
    assert result.exit_code == EXIT_INPUT and "nope.csv" in result.stderr


@pytest.mark.parametrize(
    "content, match",
    [
        (
            None,
            r"no\.csv: the weights file does not exist \(.*no\.csv\); check the path given on the command line$",
        ),
        ("", r"no\.csv: the weights file is empty; expected a header line"),
        ("name,weight\n", r"no\.csv: the weights file has a header but no rows"),
        (
            "name,weight\na,0.5,1\n",
            r"no\.csv: line 2 has 3 field\(s\); a weights file has exactly two",
        ),
    ],
)
def test_diff_names_a_bad_weights_file_as_a_weights_file(tmp_path, content, match):
    bad = tmp_path / "no.csv"
    if content is not None:
        bad.write_text(content)
    good = tmp_path / "good.csv"
    good.write_text("name,weight\na,0.5\n(cash),0.5\n")
    result = CliRunner().invoke(main, ["diff", str(bad), str(good)])
    assert result.exit_code == 2
    assert re.search(match, result.stderr.strip().removeprefix("Error: ")), result.stderr
    assert "holdings" not in result.stderr
