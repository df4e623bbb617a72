"""The expected-tracking-error section of report.md, its summary.json tree and its figure."""

from __future__ import annotations

import dataclasses
import json

import numpy as np
import pytest
from builders import LASSO_FINAL, NAMES, make_outcome

from trackfit.core.risk import ex_ante_risk
from trackfit.report import ex_ante, figure_files, plots, render_markdown, render_summary_json
from trackfit.report.numbers import percent

GROUPS = ["mills", "food", None, "mills", "power"]


@pytest.fixture(scope="module")
def plain(tmp_path_factory):
    return make_outcome(tmp_path_factory.mktemp("exante"))


def _with_risk(outcome, groups=GROUPS):
    data = outcome.data
    risk = ex_ante_risk(
        data.constituents,
        data.benchmark,
        LASSO_FINAL,
        periods_per_year=data.periods_per_year,
        groups=groups,
    )
    return dataclasses.replace(outcome, risk=risk)


@pytest.fixture(scope="module")
def risky(plain):
    return _with_risk(plain)


def test_section_is_inserted_after_tracking_and_nothing_else_changes(plain, risky):
    before, after = render_markdown(plain).split("\n## Penalty choice\n")
    section = "\n".join(ex_ante.ex_ante_section(risky))
    assert render_markdown(risky) == f"{before}\n{section}\n\n## Penalty choice\n{after}"
    assert before.rsplit("\n## ", 1)[1].startswith("Tracking")
    assert ex_ante.ex_ante_section(plain) == []


def test_tables_hold_names_held_then_the_benchmark_and_the_total(risky):
    risk = risky.risk
    text = "\n".join(ex_ante.ex_ante_section(risky))
    te = risk.tracking_error
    assert f"**{percent(te)}** a year" in text
    assert f"gives {percent(risk.sample_tracking_error)};" in text
    by_name = text.split("### By name\n\n")[1].split("\n\n")[0].splitlines()
    # Held: index 0, 3 (-4e-12 is not zero) and 4; -0.0 at index 2 is not held.
    held = sorted([0, 3, 4], key=lambda i: -abs(risk.by_name[i]))
    expected = [
        f"| {NAMES[i]} | {percent(LASSO_FINAL[i])} | {percent(risk.by_name[i])} | "
        f"{percent(risk.by_name[i] / te, 1)} |"
        for i in held
    ]
    expected.append(
        f"| benchmark (NWBI) | -100.00% | {percent(risk.benchmark)} | "
        f"{percent(risk.benchmark / te, 1)} |"
    )
    expected.append(f"| Total |  | {percent(te)} | 100.0% |")
    assert by_name[2:] == expected
    by_group = text.split("### By group\n\n")[1].splitlines()
    labels = [line.split(" | ")[0][2:] for line in by_group[2:-2]]
    assert sorted(labels) == ["(no group)", "food", "mills", "power"]
    sums = {g: risk.by_group[k] for k, g in enumerate(risk.groups)}
    assert [abs(sums[None if g == "(no group)" else g]) for g in labels] == sorted(
        (abs(v) for v in sums.values()), reverse=True
    )


def test_the_rest_of_the_names_held_are_one_row(risky, monkeypatch):
    monkeypatch.setattr(ex_ante, "TOP_NAMES", 1)
    rows = ex_ante.name_rows(risky)
    assert [r.label for r in rows[1:]] == ["the other 2 names held", "benchmark (NWBI)"]
    total = sum(r.contribution for r in rows)
    assert total == pytest.approx(risky.risk.tracking_error, abs=1e-12)


def test_without_groups_there_is_no_group_table(plain):
    outcome = _with_risk(plain, groups=None)
    assert "### By group" not in "\n".join(ex_ante.ex_ante_section(outcome))
    assert json.loads(render_summary_json(outcome))["ex_ante"]["by_group"] is None


def test_summary_holds_ex_ante_after_the_models(plain, risky):
    base = json.loads(render_summary_json(plain))
    tree = json.loads(render_summary_json(risky))
    keys = list(base)
    at = keys.index("models") + 1
    assert list(tree) == [*keys[:at], "ex_ante", *keys[at:]]
    got = tree.pop("ex_ante")
    assert tree == base
    risk = risky.risk
    assert list(got["by_name"]) == [NAMES[i] for i in (0, 3, 4)]
    assert got["by_group"] == {
        "food": pytest.approx(risk.by_group[0], rel=1e-11),
        "mills": pytest.approx(risk.by_group[1], rel=1e-11),
        "power": pytest.approx(risk.by_group[2], rel=1e-11),
        "(no group)": pytest.approx(risk.by_group[3], rel=1e-11),
    }
    total = sum(got["by_name"].values()) + got["benchmark"]
    assert total == pytest.approx(got["tracking_error"], rel=1e-10)  # 12 digits written
    assert got["rows"] == 24 and got["periods_per_year"] == 12


def test_figure_is_listed_after_the_top_weights(plain, risky):
    files = figure_files(risky)
    assert files[1] == ("Contributions to the expected tracking error, lasso", ex_ante.FIGURE_FILE)
    assert files[:1] + files[2:] == figure_files(plain)


@pytest.mark.skipif(not plots.plots_available(), reason="matplotlib missing")
def test_figure_is_a_png_and_the_same_bytes_twice(risky):
    png = ex_ante.ex_ante_png(risky)
    assert png.startswith(plots.PNG_SIGNATURE)
    assert png == ex_ante.ex_ante_png(risky)


def test_figure_needs_the_risk(plain):
    with pytest.raises(ValueError, match="no ex-ante tracking error"):
        ex_ante.ex_ante_png(plain)


def test_contribution_sums_are_exact_for_the_built_outcome(risky):
    risk = risky.risk
    te = risk.tracking_error
    assert abs(float(np.sum(risk.by_name)) + risk.benchmark - te) <= 1e-12
    assert abs(float(np.sum(risk.by_group)) + risk.benchmark - te) <= 1e-12
