"""Tests for the reporter: weights.csv, summary.json, report.md and write_reports.

The FitOutcome (tests/builders.py) is built by hand from the interface dataclasses with invented
constituents, so every number the reporter shows is known to the test.
"""

from __future__ import annotations

import dataclasses
import json
import re
from pathlib import Path

import numpy as np
import pytest
from builders import N_ROWS, NAMES, make_outcome
from markdown_tables import cells as _cells
from markdown_tables import table_blocks as _table_blocks

import trackfit
from trackfit.errors import DataError, SolverError
from trackfit.evaluate.holdout import HoldoutStudy
from trackfit.evaluate.metrics import TrackingMetrics
from trackfit.outcomes.fit import FitOutcome
from trackfit.report import (
    render_markdown,
    render_summary_json,
    render_weights_csv,
    write_reports,
)
from trackfit.report.caution import CAUTION
from trackfit.report.markdown import HEADINGS

EXPECTED_CSV = (
    "name,weight\n"
    "Alder Mills,0.4125000000\n"
    "Brightwater Foods,0.0000000000\n"
    "Cobalt Rail,0.0000000000\n"
    "Dunmore Textiles,0.0000000000\n"
    "Eastfield Power,-0.0375000000\n"
    "(cash),0.6250000000\n"
)


@pytest.fixture
def outcome(tmp_path) -> FitOutcome:
    return make_outcome(tmp_path)


def _with_lasso_final(outcome: FitOutcome, weights, cash=None) -> FitOutcome:
    weights = np.asarray(weights, dtype=float)
    lasso = outcome.study.models[0]
    cash = 1.0 - float(np.sum(weights)) if cash is None else cash
    final = dataclasses.replace(lasso.final_fit, weights=weights, cash=cash)
    models = (dataclasses.replace(lasso, final_fit=final),) + outcome.study.models[1:]
    return dataclasses.replace(outcome, study=dataclasses.replace(outcome.study, models=models))


# --- weights.csv -------------------------------------------------------------------------


def test_weights_csv_exact_text(outcome):
    assert render_weights_csv(outcome) == EXPECTED_CSV


def test_weights_csv_never_writes_negative_zero(outcome):
    text = render_weights_csv(_with_lasso_final(outcome, [-0.0, -1e-11, -4.9e-11, 0.0, 1.0]))
    assert "-0.0000000000" not in text
    assert text.splitlines()[1:4] == [
        "Alder Mills,0.0000000000",
        "Brightwater Foods,0.0000000000",
        "Cobalt Rail,0.0000000000",
    ]


def test_weights_csv_quotes_names_that_need_it(tmp_path):
    names = ("Harbor, Lane & Co", 'Quill "Q" Press', "Ridge", "Stone", "Tallow")
    base = make_outcome(tmp_path)
    outcome = dataclasses.replace(base, data=dataclasses.replace(base.data, names=names))
    lines = render_weights_csv(outcome).splitlines()
    # RFC 4180 quoting, as Python's csv module writes it with QUOTE_MINIMAL.
    assert lines[1] == '"Harbor, Lane & Co",0.4125000000'
    assert lines[2] == '"Quill ""Q"" Press",0.0000000000'


def test_weights_csv_is_the_held_model(tmp_path):
    text = render_weights_csv(make_outcome(tmp_path, held="equal_weight"))
    assert text.splitlines()[1:] == [f"{n},0.2000000000" for n in NAMES] + ["(cash),0.0000000000"]


def _bad_names(o, names):
    return dataclasses.replace(o, data=dataclasses.replace(o.data, names=names))


@pytest.mark.parametrize(
    ("change", "error", "match"),
    [
        (lambda o: _bad_names(o, ("(cash)",) + NAMES[1:]), DataError, r"named '\(cash\)'.* rename"),
        (
            lambda o: _bad_names(o, ("Ridge", "Stone", "Ridge", "Stone", "Tallow")),
            DataError,
            r"more than once: 'Ridge', 'Stone'; give every constituent",
        ),
        (
            lambda o: _with_lasso_final(o, [0.1, np.nan, 0.2, 0.0, 0.0]),
            SolverError,
            r"'lasso' gave a weight that is not a finite number for 'Brightwater Foods' "
            r"\(as of 2026-11-30\)",
        ),
        (
            lambda o: _with_lasso_final(o, [0.1, 0.2, 0.2, 0.0, 0.0], cash=np.inf),
            SolverError,
            r"not a finite number for '\(cash\)'",
        ),
        (
            lambda o: _with_lasso_final(o, [0.5, 0.5]),
            ValueError,
            r"final weights of 'lasso' have shape \(2,\), but there are 5 constituent names",
        ),
        (
            lambda o: dataclasses.replace(o, held="ridge"),
            ValueError,
            r"held model 'ridge' is not among the models of the study \('lasso', "
            r"'elastic_net', 'ols', 'equal_weight'\)",
        ),
    ],
)
@pytest.mark.parametrize("render", [render_weights_csv, render_markdown, render_summary_json])
def test_unwritable_weights_are_refused_by_every_renderer(outcome, change, error, match, render):
    with pytest.raises(error, match=match):
        render(change(outcome))


# --- summary.json ------------------------------------------------------------------------


def test_summary_json_layout(outcome):
    text = render_summary_json(outcome)
    assert text.endswith("}\n") and not text.endswith("\n\n")
    assert "\r" not in text
    summary = json.loads(text)
    assert list(summary) == [
        "trackfit_version",
        "caution",
        "job",
        "as_of",
        "data",
        "split",
        "held",
        "limits",
        "models",
        "trades",
        "notes",
        "warnings",
    ]
    assert summary["trackfit_version"] == trackfit.__version__
    assert summary["caution"] == CAUTION
    assert summary["as_of"] == "2026-11-30"
    assert summary["held"] == "lasso"
    assert summary["warnings"] == list(outcome.warnings)
    assert summary["split"] == {
        "n_train": 18,
        "n_holdout": 6,
        "train_first_date": "2024-12-31",
        "train_last_date": "2026-05-31",
        "holdout_first_date": "2026-06-30",
        "holdout_last_date": "2026-11-30",
    }
    assert [m["name"] for m in summary["models"]] == ["lasso", "elastic_net", "ols", "equal_weight"]


def test_summary_json_job_names_files_relative_to_the_job_folder(outcome):
    job = json.loads(render_summary_json(outcome))["job"]
    assert job["name"] == "Northwind Broad Index"
    assert job["file"] == "northwind.yaml"
    assert job["benchmark"] == {"file": "data/benchmark.csv", "column": "NWBI"}
    assert job["constituents"] == [{"file": "data/members.csv", "columns": None}]
    assert job["risk_free"] == {
        "file": "data/cash_rate.csv",
        "column": None,
        "unit": "percent",
        "quote": "annual",
    }
    assert job["window"] == {"start": "2024-12-01", "lookback": None, "holdout": 6}
    assert job["models"][1] == {
        "name": "elastic_net",
        "kind": "elastic_net",
        "l1_ratios": [0.5, 0.9],
    }
    assert job["cv"]["rule"] == "one_standard_error"
    assert "directory" not in json.dumps(job)


def test_summary_json_data_summary(outcome):
    data = json.loads(render_summary_json(outcome))["data"]
    assert data == {
        "benchmark": "NWBI",
        "constituents": 5,
        # one object since periods per year are measured (was a number and a flag)
        "periods_per_year": {
            "value": 12,
            "measured": 12.0,
            "source": "measured",
            "calendar": "monthly",
            "rows": 12,
            "full_years": [2025, 2025],
            "first_date": "2024-12-31",
            "last_date": "2026-11-30",
        },
        "first_date": "2024-12-31",
        "last_date": "2026-11-30",
        "rows": 24,
        "excess_of_risk_free": True,
        "steps": [
            {
                "description": "align benchmark and constituent dates",
                "rows_before": 26,
                "rows_after": 25,
                "dropped": 1,
            },
            {
                "description": "drop dates with missing values",
                "rows_before": 25,
                "rows_after": 25,
                "dropped": 0,
            },
            {
                "description": "keep the fit window",
                "rows_before": 25,
                "rows_after": 24,
                "dropped": 1,
            },
        ],
    }


def test_summary_json_models(outcome):
    lasso, enet, ols, equal = json.loads(render_summary_json(outcome))["models"]
    cv = outcome.study.models[0].cv
    assert lasso["kind"] == "lasso"
    assert lasso["alpha"] == float(f"{cv.alpha:.12g}")
    assert lasso["l1_ratio"] == 1.0
    assert lasso["best_alpha"] == float(f"{cv.best_alpha:.12g}")
    assert lasso["rule"] == "one_standard_error"
    assert lasso["notes"] == ["grid extended by 10 smaller penalties"]
    assert len(lasso["curves"]) == 1 and len(enet["curves"]) == 2
    assert list(lasso["curves"][0]) == ["l1_ratio", "alphas", "mean_error", "std_error"]
    assert len(lasso["curves"][0]["alphas"]) == 30
    assert lasso["folds"][0] == {
        "train_start": 0,
        "train_stop": 9,
        "val_start": 9,
        "val_stop": 12,
        "train_first_date": "2024-12-31",
        "train_last_date": "2025-08-31",
        "val_first_date": "2025-09-30",
        "val_last_date": "2025-11-30",
    }
    assert lasso["kkt_residual"] == {"train_fit": 2.5e-9, "final_fit": 7.25e-10}
    assert list(lasso["in_sample"]) == [f.name for f in dataclasses.fields(TrackingMetrics)]
    assert lasso["in_sample"]["tracking_error"] == 0.0123456
    assert lasso["holdout"]["periods"] == 6
    assert lasso["final_weights"]["weights"] == {
        "Alder Mills": 0.4125,
        "Brightwater Foods": 0.0,
        "Cobalt Rail": 0.0,
        "Dunmore Textiles": -4e-12,
        "Eastfield Power": -0.0375,
    }
    assert lasso["final_weights"]["cash"] == pytest.approx(0.625, abs=1e-11)
    for baseline in (ols, equal):
        assert baseline["alpha"] is None and baseline["best_alpha"] is None
        assert baseline["rule"] is None and baseline["curves"] == [] and baseline["folds"] == []
    assert equal["kkt_residual"] == {"train_fit": 0.0, "final_fit": 0.0}


def test_summary_json_nan_is_null_and_floats_have_12_significant_digits(outcome):
    text = render_summary_json(outcome)
    assert "NaN" not in text and "Infinity" not in text
    lasso = json.loads(text)["models"][0]
    assert lasso["holdout"]["information_ratio"] is None
    assert lasso["in_sample"]["information_ratio"] == 0.5
    # The tiny negative weight keeps its sign: only exact zeros are written as 0.0.
    assert '"Cobalt Rail": 0.0,' in text and '"Dunmore Textiles": -4e-12,' in text
    alphas = lasso["curves"][0]["alphas"]
    raw = outcome.study.models[0].cv.curves[0].alphas
    assert alphas == [float(f"{a:.12g}") for a in raw]
    assert any(a != r for a, r in zip(alphas, raw))  # rounding did happen somewhere


def test_summary_json_without_risk_free_or_holdout(tmp_path):
    base = make_outcome(tmp_path)
    models = tuple(dataclasses.replace(m, holdout=None) for m in base.study.models)
    outcome = dataclasses.replace(
        base,
        job=dataclasses.replace(base.job, risk_free=None),
        data=dataclasses.replace(base.data, risk_free=None),
        study=HoldoutStudy(n_train=N_ROWS, n_holdout=0, models=models, warnings=()),
    )
    summary = json.loads(render_summary_json(outcome))
    assert summary["job"]["risk_free"] is None
    assert summary["data"]["excess_of_risk_free"] is False
    assert summary["split"]["holdout_first_date"] is None
    assert all(m["holdout"] is None for m in summary["models"])


# --- report.md ---------------------------------------------------------------------------


def test_markdown_sections_in_order_with_the_caution(outcome):
    text = render_markdown(outcome)
    lines = text.split("\n")
    assert lines[0] == "# Northwind Broad Index: tracking weights as of 2026-11-30"
    assert f"> {CAUTION}" in lines
    positions = [lines.index(h) for h in HEADINGS]
    assert positions == sorted(positions)
    assert lines.index(f"> {CAUTION}") < positions[0]
    for word in (
        "not investment advice",
        "does not promise future tracking error",
        "mandate",
        "local regulation",
        "qualified professionals",
    ):
        assert word in CAUTION
    assert text.endswith("\n") and not text.endswith("\n\n") and "\r" not in text


def test_markdown_tables_are_well_formed(outcome):
    blocks = _table_blocks(render_markdown(outcome))
    assert len(blocks) >= 10
    for block in blocks:
        widths = {len(_cells(line)) for line in block}
        assert len(widths) == 1, block
        assert re.fullmatch(r"\|(?:(?::---|---:)\|)+", block[1]), block[1]


def test_markdown_what_was_done(outcome):
    text = render_markdown(outcome)
    assert "| Benchmark | NWBI |" in text
    assert "| Window | 2024-12-31 to 2026-11-30 |" in text
    # states what was measured since periods per year are measured (was "inferred from the
    # date spacing"); the month ends of 2025 are the window's one full calendar year
    assert (
        "| Periods per year | 12 (monthly; measured: 12.0 rows a year over 2025, "
        "1 full calendar year) |" in text
    )
    assert "| Risk-free rate | subtracted from every return |" in text
    assert "| align benchmark and constituent dates | 26 | 25 | 1 |" in text
    assert "| Choosing and fitting | 18 | 2024-12-31 | 2026-05-31 |" in text
    assert "| Holdout | 6 | 2026-06-30 | 2026-11-30 |" in text
    assert "Folds used by lasso, elastic_net:" in text
    assert "| 1 | 9 | 2024-12-31 to 2025-08-31 | 3 | 2025-09-30 to 2025-11-30 |" in text
    assert "one-standard-error rule" in text


def test_markdown_held_weights_top_n_cash_and_exposure(outcome):
    text = render_markdown(outcome)
    assert "Held model: lasso." in text
    assert (
        "refitted on the whole window, 2024-12-31 through the as-of date 2026-11-30, with the "
        "penalty chosen on the rows before the holdout"
    ) in text
    # top_weights = 2: the two largest |weight|, by size, no zeros.
    assert "The 2 largest weights by size (of 3 names held):" in text
    assert "| 1 | Alder Mills | 41.25% |" in text
    assert "| 2 | Eastfield Power | -3.75% |" in text
    assert "| 3 |" not in text.split("## Held weights")[1].split("## Tracking")[0]
    assert "| Cash | 62.50% |" in text
    assert "| Names held | 3 of 5 |" in text
    assert "| Gross exposure | 45.00% |" in text


def test_markdown_tracking_tables_have_every_model(outcome):
    section = render_markdown(outcome).split("## Tracking")[1].split("## Penalty choice")[0]
    in_sample, holdout = section.split("### Holdout")
    for part in (in_sample, holdout):
        # Every row is a judged fit (before the holdout), the held model's too, and says so.
        for label in ("lasso (held model, judged fit)", "elastic_net", "ols", "equal_weight"):
            assert f"| {label} |" in part
    assert (
        "| lasso (held model, judged fit) | 18 | 1.23% | 0.12% | 0.50 | 0.9877 | 0.9938 | "
        "0.9721 | 0.88% | 3 | 45.00% |"
    ) in in_sample
    assert "| lasso (held model, judged fit) | 6 | 2.35% | 0.12% | n/a |" in holdout


def test_markdown_penalty_choice_marks_the_chosen_row(outcome):
    section = render_markdown(outcome).split("## Penalty choice")[1].split("## Accuracy")[0]
    lasso, enet = section.split("### lasso")[1].split("### elastic_net")
    cv = outcome.study.models[0].cv
    assert f"| Chosen alpha | {cv.alpha:.4e} |" in lasso
    assert "| Rule | one_standard_error |" in lasso
    assert "- grid extended by 10 smaller penalties" in lasso
    curve_rows = [l for l in lasso.split("\n") if re.match(r"\| \d\.\d{4}e[-+]\d\d \|", l)]
    assert 12 <= len(curve_rows) <= 14
    assert sum(l.endswith("| chosen |") for l in curve_rows) == 1
    assert sum(l.endswith("| smallest error |") for l in curve_rows) == 1
    assert f"| {cv.alpha:.4e} |" in next(l for l in curve_rows if l.endswith("| chosen |"))
    assert "Grid notes: none." in enet
    assert "Other mixes searched:" in enet and "| 0.90 |" in enet


def test_markdown_accuracy_and_warnings(outcome):
    text = render_markdown(outcome)
    assert "| lasso (held) | 7.2e-10 | 2.5e-09 |" in text  # 7.25e-10 is a hair below in binary
    assert "| equal_weight | 0.0e+00 | 0.0e+00 |" in text
    assert text.split("## Warnings")[1] == (
        "\n\n- Cobalt Rail had 2 returns above 50 %; check its prices.\n"
    )


def test_markdown_without_warnings_or_holdout(tmp_path):
    base = make_outcome(tmp_path, warnings=())
    models = tuple(dataclasses.replace(m, holdout=None) for m in base.study.models)
    outcome = dataclasses.replace(
        base, study=HoldoutStudy(n_train=N_ROWS, n_holdout=0, models=models, warnings=())
    )
    text = render_markdown(outcome)
    assert text.endswith("## Warnings\n\nNone.\n")
    assert "There was no holdout, so nothing was measured out of sample." in text
    assert "| Holdout | 0 | n/a | n/a |" in text
    assert "penalty chosen on the same rows (there was no holdout)" in text


def test_markdown_for_a_held_baseline(tmp_path):
    text = render_markdown(make_outcome(tmp_path, held="equal_weight"))
    assert "Held model: equal_weight. These are fixed equal weights; nothing was fitted." in text
    assert "| equal_weight (held) |" in text


def test_markdown_escapes_pipes_in_names(tmp_path):
    base = make_outcome(tmp_path)
    names = ("Alder|Mills",) + NAMES[1:]
    text = render_markdown(_bad_names(base, names))
    assert "| 1 | Alder\\|Mills | 41.25% |" in text


# --- write_reports -------------------------------------------------------------------------


def _outputs(out_dir: Path) -> dict[str, bytes]:
    return {p.name: p.read_bytes() for p in sorted(out_dir.iterdir())}


def test_write_reports_writes_three_files_in_order(outcome, tmp_path):
    out = tmp_path / "out" / "2026-11-30"
    paths = write_reports(outcome, out)
    assert paths == [out / "weights.csv", out / "report.md", out / "summary.json"]
    assert sorted(p.name for p in out.iterdir()) == ["report.md", "summary.json", "weights.csv"]
    assert (out / "weights.csv").read_bytes() == EXPECTED_CSV.encode()
    assert (out / "report.md").read_text(encoding="utf-8") == render_markdown(outcome)
    json.loads((out / "summary.json").read_text(encoding="utf-8"))


def test_no_absolute_path_in_any_output(outcome, tmp_path):
    write_reports(outcome, tmp_path / "out")
    for name, content in _outputs(tmp_path / "out").items():
        text = content.decode("utf-8")
        assert str(tmp_path) not in text, name
        assert tmp_path.as_posix() not in text, name


def test_writing_twice_gives_identical_bytes(tmp_path):
    first = write_reports(make_outcome(tmp_path), tmp_path / "a")
    second = write_reports(make_outcome(tmp_path), tmp_path / "b")
    again = write_reports(make_outcome(tmp_path), tmp_path / "a")
    assert [p.read_bytes() for p in first] == [p.read_bytes() for p in second]
    assert [p.read_bytes() for p in again] == [p.read_bytes() for p in second]
    assert sorted(p.name for p in (tmp_path / "a").iterdir()) == [
        "report.md",
        "summary.json",
        "weights.csv",
    ]


def test_rendering_error_writes_nothing(outcome, tmp_path):
    out = tmp_path / "out"
    with pytest.raises(ValueError, match="held model 'ridge'"):
        write_reports(dataclasses.replace(outcome, held="ridge"), out)
    assert not out.exists()


def test_rendering_error_keeps_earlier_reports(outcome, tmp_path, monkeypatch):
    out = tmp_path / "out"
    write_reports(outcome, out)
    before = _outputs(out)

    def broken(_outcome):
        raise RuntimeError("renderer broke")

    # summary.json is rendered last: weights.csv and report.md must not be rewritten either.
    monkeypatch.setattr("trackfit.report.render_summary_json", broken)
    changed = _with_lasso_final(outcome, [0.2, 0.2, 0.2, 0.2, 0.2])
    with pytest.raises(RuntimeError, match="renderer broke"):
        write_reports(changed, out)
    assert _outputs(out) == before


def test_reports_hold_no_nan_text(outcome, tmp_path):
    write_reports(outcome, tmp_path / "out")
    for name, content in _outputs(tmp_path / "out").items():
        assert not re.search(rb"\b(nan|inf|infinity)\b", content.lower()), name
