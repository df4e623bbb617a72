"""Tests for the PNG figures and for writing them beside report.md.

The fit figures are drawn from the hand-built FitOutcome of tests/builders.py; the backtest
figures from seeded invented returns. What is checked about a PNG file comes from the PNG
specification (W3C Recommendation "Portable Network Graphics (PNG) Specification", second
edition, = ISO/IEC 15948): section 5.2 (the 8-byte signature), 5.3 (chunk layout: length,
type, data, CRC) and 11.2.2 (IHDR first, width and height as 4-byte big-endian integers).
"""

from __future__ import annotations

import dataclasses
import struct
import subprocess
import sys
import zlib
from pathlib import Path

import numpy as np
import pytest
from builders import NAMES, make_outcome

from trackfit.report import figure_files, plots, render_markdown, write_reports
from trackfit.report.markdown import FIGURES_HEADING, FIGURES_SKIPPED, HEADINGS

needs_matplotlib = pytest.mark.skipif(not plots.plots_available(), reason="matplotlib missing")

TEXT_FILES = ["weights.csv", "report.md", "summary.json"]
PNG_FILES = ["top_weights.png", "cv_lasso.png", "cv_elastic_net.png"]


def _chunks(png: bytes) -> list[tuple[bytes, bytes]]:
    """``(type, data)`` of every chunk, checking each CRC (PNG spec 5.3: CRC-32 of type+data)."""
    assert png[:8] == plots.PNG_SIGNATURE
    chunks, at = [], 8
    while at < len(png):
        (length,) = struct.unpack(">I", png[at : at + 4])
        kind, data = png[at + 4 : at + 8], png[at + 8 : at + 8 + length]
        (crc,) = struct.unpack(">I", png[at + 8 + length : at + 12 + length])
        assert zlib.crc32(kind + data) == crc, kind
        chunks.append((kind, data))
        at += 12 + length
    return chunks


def _size(png: bytes) -> tuple[int, int]:
    kind, data = _chunks(png)[0]
    assert kind == b"IHDR"
    return struct.unpack(">II", data[:8])


def _backtest_arrays(seed: int = 11):
    rng = np.random.default_rng(seed)
    months = np.arange(np.datetime64("2023-01"), np.datetime64("2026-01"))
    dates = (months + 1).astype("datetime64[D]") - 1  # month ends, 36 periods
    benchmark = rng.normal(0.006, 0.04, dates.size)
    portfolio = benchmark + rng.normal(0.0, 0.003, dates.size)
    rebalance = dates[::3]
    names_held = rng.integers(8, 15, rebalance.size)
    turnover = np.r_[0.49, rng.uniform(0.0, 0.12, rebalance.size - 1)]
    return dates, portfolio, benchmark, rebalance, names_held, turnover


@pytest.fixture(scope="module")
def fit_outcome(tmp_path_factory):
    return make_outcome(tmp_path_factory.mktemp("plots"))


@pytest.fixture(scope="module")
def renders(fit_outcome):
    """Every figure kind, drawn once from the shared inputs."""
    if not plots.plots_available():
        pytest.skip("matplotlib missing")
    dates, port, bench, reb, held, turn = _backtest_arrays()
    lasso, enet = fit_outcome.study.models[:2]
    return {
        "cv_lasso": lambda: plots.cv_curve_png(lasso),
        "cv_elastic_net": lambda: plots.cv_curve_png(enet),
        "top_weights": lambda: plots.top_weights_png(fit_outcome),
        "cumulative": lambda: plots.cumulative_png(dates, port, bench),
        "rolling_te": lambda: plots.rolling_te_png(dates, port - bench, 12, 12),
        "names_turnover": lambda: plots.names_turnover_png(reb, held, turn),
    }


@pytest.fixture(scope="module")
def drawn(renders):
    return {name: render() for name, render in renders.items()}


# --- the PNG files ---------------------------------------------------------------------------


@needs_matplotlib
@pytest.mark.parametrize(
    "kind",
    ["cv_lasso", "cv_elastic_net", "top_weights", "cumulative", "rolling_te", "names_turnover"],
)
def test_every_figure_is_a_well_formed_png_of_the_fixed_width(drawn, kind):
    png = drawn[kind]
    chunks = _chunks(png)
    assert chunks[0][0] == b"IHDR" and chunks[-1] == (b"IEND", b"")
    width, height = _size(png)
    assert width == int(plots.WIDTH * plots.DPI)
    assert 200 <= height <= 1600


@needs_matplotlib
def test_fixed_sizes_where_the_content_does_not_set_the_height(drawn):
    for kind in ("cv_lasso", "cumulative", "rolling_te"):
        assert _size(drawn[kind]) == (800, 450), kind
    assert _size(drawn["names_turnover"]) == (800, 550)


@needs_matplotlib
@pytest.mark.parametrize(
    "kind",
    ["cv_lasso", "cv_elastic_net", "top_weights", "cumulative", "rolling_te", "names_turnover"],
)
def test_same_input_gives_the_same_bytes_with_no_software_or_time_tag(renders, drawn, kind):
    again = renders[kind]()
    assert again == drawn[kind]
    kinds = {k for k, _ in _chunks(again)}
    assert not kinds & {b"tIME", b"iTXt", b"zTXt"}
    assert b"matplotlib" not in again.lower() and b"Software" not in again


@needs_matplotlib
def test_the_users_matplotlib_settings_do_not_change_the_bytes(drawn):
    import matplotlib

    dates, port, bench, *_ = _backtest_arrays()
    changed = {
        "lines.linewidth": 5.0,
        "font.size": 20,
        "axes.facecolor": "yellow",
        "figure.dpi": 33,
        "savefig.dpi": 300,
    }
    with matplotlib.rc_context(changed):
        png = plots.cumulative_png(dates, port, bench)
    assert png == drawn["cumulative"]


@needs_matplotlib
def test_different_data_gives_a_different_picture(drawn):
    dates, port, bench, *_ = _backtest_arrays(seed=12)
    assert plots.cumulative_png(dates, port, bench) != drawn["cumulative"]


@needs_matplotlib
def test_drawing_neither_imports_pyplot_nor_switches_the_backend(tmp_path):
    code = (
        "import sys, matplotlib, numpy as np\n"
        "before = dict.__getitem__(matplotlib.rcParams, 'backend')\n"
        "from trackfit.report import plots\n"
        "d = np.array(['2026-01-31', '2026-02-28', '2026-03-31'], dtype='datetime64[D]')\n"
        "png = plots.cumulative_png(d, [0.01, -0.02, 0.03], [0.011, -0.019, 0.028])\n"
        "assert png.startswith(plots.PNG_SIGNATURE)\n"
        "assert 'matplotlib.pyplot' not in sys.modules, 'pyplot was imported'\n"
        "assert dict.__getitem__(matplotlib.rcParams, 'backend') == before\n"
    )
    done = subprocess.run(
        [sys.executable, "-c", code], capture_output=True, text=True, cwd=tmp_path, timeout=60
    )
    assert done.returncode == 0, done.stderr


# --- edge cases still draw -------------------------------------------------------------------


def _with_held_weights(outcome, weights, top_weights=None):
    lasso = outcome.study.models[0]
    weights = np.asarray(weights, dtype=float)
    final = dataclasses.replace(lasso.final_fit, weights=weights, cash=1.0 - weights.sum())
    models = (dataclasses.replace(lasso, final_fit=final),) + outcome.study.models[1:]
    out = dataclasses.replace(outcome, study=dataclasses.replace(outcome.study, models=models))
    if top_weights is not None:
        job = out.job
        out = dataclasses.replace(
            out,
            job=dataclasses.replace(
                job, output=dataclasses.replace(job.output, top_weights=top_weights)
            ),
        )
    return out


@needs_matplotlib
def test_top_weights_grows_with_the_bars_and_copes_with_odd_names(fit_outcome, drawn):
    # A "$" would start matplotlib's mathematics; an unknown command there would fail to parse.
    names = ("Tallow $\\nocommand$ Ltd", "Quill & Press " * 6, *NAMES[2:])
    base = dataclasses.replace(fit_outcome, data=dataclasses.replace(fit_outcome.data, names=names))
    png = plots.top_weights_png(_with_held_weights(base, [0.3, -0.2, 0.1, 0.25, 0.15], 5))
    assert _size(png)[1] > _size(drawn["top_weights"])[1]


@needs_matplotlib
@pytest.mark.parametrize(("weights", "top"), [([0.0] * 5, 2), ([0.2] * 5, 0)])
def test_top_weights_with_nothing_to_show(fit_outcome, weights, top):
    png = plots.top_weights_png(_with_held_weights(fit_outcome, weights, top))
    assert png.startswith(plots.PNG_SIGNATURE)


@needs_matplotlib
def test_cv_curve_without_any_finite_error(fit_outcome):
    lasso = fit_outcome.study.models[0]
    curve = dataclasses.replace(
        lasso.cv.curves[0], mean_error=np.full(lasso.cv.curves[0].alphas.size, np.nan)
    )
    model = dataclasses.replace(lasso, cv=dataclasses.replace(lasso.cv, curves=(curve,)))
    assert plots.cv_curve_png(model).startswith(plots.PNG_SIGNATURE)


@needs_matplotlib
def test_rolling_te_with_fewer_rows_than_the_window():
    dates, port, bench, *_ = _backtest_arrays()
    png = plots.rolling_te_png(dates[:5], (port - bench)[:5], 12, 6)
    assert png.startswith(plots.PNG_SIGNATURE)


# --- validation ------------------------------------------------------------------------------

_D = np.array(["2026-01-31", "2026-02-28", "2026-03-31"], dtype="datetime64[D]")


@pytest.mark.parametrize(
    ("call", "match"),
    [
        (
            lambda: plots.cumulative_png(_D, [0.1, 0.2], [0.1, 0.2, 0.3]),
            r"'portfolio' parameter of cumulative_png must be a 1-d array with one value per date "
            r"\(3\)\. Got shape \(2,\)",
        ),
        (
            lambda: plots.cumulative_png(_D, [0.1, 0.2, 0.3], [0.1, np.nan, 0.3]),
            r"'benchmark' parameter of cumulative_png must hold finite numbers\. Got a non-finite "
            r"value at position 1",
        ),
        (
            lambda: plots.cumulative_png([], [], []),
            r"'dates' parameter of cumulative_png must be a non-empty 1-d array\. Got shape \(0,\)",
        ),
        (
            lambda: plots.cumulative_png(["2026-01-31", "not a date", "x"], [0] * 3, [0] * 3),
            r"'dates' parameter of cumulative_png must hold dates",
        ),
        (
            lambda: plots.cumulative_png(
                np.array(["2026-01-31", "NaT", "2026-03-31"], dtype="datetime64[D]"),
                [0] * 3,
                [0] * 3,
            ),
            r"must not hold missing dates \(NaT\)",
        ),
        (
            lambda: plots.rolling_te_png(_D, [0.0] * 3, 12, 1),
            r"'window' parameter of rolling_te_png must be an integer >= 2\. Got 1\.",
        ),
        (
            lambda: plots.rolling_te_png(_D, [0.0] * 3, 12, True),
            r"'window' parameter of rolling_te_png must be an integer >= 2\. Got True\.",
        ),
        (
            lambda: plots.rolling_te_png(_D, [0.0] * 3, 0, 2),
            r"'periods_per_year' parameter of rolling_te_png must be an integer >= 1\. Got 0\.",
        ),
        (
            lambda: plots.rolling_te_png(_D, [0.0] * 3, 12.0, 2),
            r"'periods_per_year' parameter of rolling_te_png must be an integer >= 1\. Got 12\.0\.",
        ),
        (
            lambda: plots.names_turnover_png(_D, [3, 4, 5], [[0.1, 0.2, 0.3]]),
            r"'turnover' parameter of names_turnover_png must be a 1-d array with one value per "
            r"date \(3\)\. Got shape \(1, 3\)",
        ),
    ],
)
def test_bad_backtest_arrays_are_refused(call, match):
    with pytest.raises(ValueError, match=match):
        call()


def test_a_model_without_cross_validation_has_no_curve(fit_outcome):
    ols = fit_outcome.study.models[2]
    with pytest.raises(ValueError, match=r"Model 'ols' has no cross-validation result"):
        plots.cv_curve_png(ols)


# --- report.md's figure section ----------------------------------------------------------------


def test_markdown_lists_figures_last_as_relative_images(fit_outcome):
    text = render_markdown(
        fit_outcome,
        figures=[("Largest weights held, lasso", "top.png"), ("Odd [caption]", "with space.png")],
    )
    tail = text.split(HEADINGS[-1])[1]
    assert tail.split(FIGURES_HEADING)[1] == (
        "\n\n![Largest weights held, lasso](top.png)\n\n![Odd \\[caption\\]](<with space.png>)\n"
    )
    assert text.endswith("\n") and not text.endswith("\n\n")


def test_markdown_without_figures_has_no_figure_section(fit_outcome):
    assert FIGURES_HEADING not in render_markdown(fit_outcome)
    assert render_markdown(fit_outcome, figures=[]) == render_markdown(fit_outcome)


def test_markdown_says_when_figures_were_skipped(fit_outcome):
    text = render_markdown(fit_outcome, figures_skipped=True)
    assert text.endswith(f"\n{FIGURES_HEADING}\n\n{FIGURES_SKIPPED}\n")
    assert "matplotlib is not installed" in FIGURES_SKIPPED
    assert "`pip install 'trackfit[plots]'`" in FIGURES_SKIPPED


@pytest.mark.parametrize(
    ("kwargs", "match"),
    [
        ({"figures": [("x", "/tmp/x.png")]}, r"'/tmp/x.png' must be given relative"),
        ({"figures": [("x", "C:\\out\\x.png")]}, r"must be given relative to report.md's folder"),
        ({"figures": [("x", "x.png")], "figures_skipped": True}, r"both listed and skipped"),
    ],
)
def test_markdown_refuses_bad_figure_lists(fit_outcome, kwargs, match):
    with pytest.raises(ValueError, match=match):
        render_markdown(fit_outcome, **kwargs)


# --- write_reports -----------------------------------------------------------------------------


def test_figure_files_are_top_weights_then_each_cross_validated_model(fit_outcome):
    assert figure_files(fit_outcome) == [
        ("Largest weights held, lasso", "top_weights.png"),
        ("Cross-validation error, lasso", "cv_lasso.png"),
        ("Cross-validation error, elastic_net", "cv_elastic_net.png"),
    ]


@needs_matplotlib
def test_write_reports_with_figures_lists_and_links_them(fit_outcome, drawn, tmp_path):
    out = tmp_path / "out" / "2026-11-30"
    paths = write_reports(fit_outcome, out, figures=True)
    assert paths == [out / name for name in TEXT_FILES + PNG_FILES]
    assert sorted(p.name for p in out.iterdir()) == sorted(TEXT_FILES + PNG_FILES)
    assert (out / "top_weights.png").read_bytes() == drawn["top_weights"]
    assert (out / "cv_lasso.png").read_bytes() == drawn["cv_lasso"]
    assert (out / "cv_elastic_net.png").read_bytes() == drawn["cv_elastic_net"]
    report = (out / "report.md").read_text(encoding="utf-8")
    assert report == render_markdown(fit_outcome, figures=figure_files(fit_outcome))
    section = report.split(f"\n{FIGURES_HEADING}\n")[1]
    links = [line for line in section.splitlines() if line.startswith("![")]
    assert links == [
        "![Largest weights held, lasso](top_weights.png)",
        "![Cross-validation error, lasso](cv_lasso.png)",
        "![Cross-validation error, elastic_net](cv_elastic_net.png)",
    ]
    for line in links:
        target = line.rsplit("(", 1)[1].rstrip(")")
        assert not Path(target).is_absolute() and (out / target).is_file()
    assert str(tmp_path) not in report and tmp_path.as_posix() not in report


@needs_matplotlib
def test_write_reports_with_figures_twice_gives_identical_bytes(fit_outcome, tmp_path):
    first = write_reports(fit_outcome, tmp_path / "a", figures=True)
    second = write_reports(fit_outcome, tmp_path / "b", figures=True)
    assert [p.read_bytes() for p in first] == [p.read_bytes() for p in second]


def test_write_reports_without_figures_writes_only_the_text_files(
    fit_outcome, tmp_path, monkeypatch
):
    def never(*_args):
        raise AssertionError("no figure should be drawn")

    monkeypatch.setattr(plots, "top_weights_png", never)
    monkeypatch.setattr(plots, "cv_curve_png", never)
    paths = write_reports(fit_outcome, tmp_path / "out")
    assert [p.name for p in paths] == TEXT_FILES
    assert FIGURES_HEADING not in (tmp_path / "out" / "report.md").read_text(encoding="utf-8")


def test_without_matplotlib_no_png_is_written_and_the_report_says_so(
    fit_outcome, tmp_path, monkeypatch
):
    def never(*_args):
        raise AssertionError("no figure should be drawn without matplotlib")

    monkeypatch.setattr(plots, "plots_available", lambda: False)
    monkeypatch.setattr(plots, "top_weights_png", never)
    monkeypatch.setattr(plots, "cv_curve_png", never)
    out = tmp_path / "out"
    paths = write_reports(fit_outcome, out, figures=True)
    assert paths == [out / name for name in TEXT_FILES]
    assert sorted(p.name for p in out.iterdir()) == sorted(TEXT_FILES)
    report = (out / "report.md").read_text(encoding="utf-8")
    assert report.endswith(f"{FIGURES_HEADING}\n\n{FIGURES_SKIPPED}\n")
    assert report == render_markdown(fit_outcome, figures_skipped=True)


def test_a_failing_figure_writes_nothing_and_keeps_earlier_reports(
    fit_outcome, tmp_path, monkeypatch
):
    out = tmp_path / "out"
    write_reports(fit_outcome, out)
    before = {p.name: p.read_bytes() for p in out.iterdir()}

    def broken(_model):
        raise RuntimeError("figure broke")

    monkeypatch.setattr(plots, "plots_available", lambda: True)
    monkeypatch.setattr(plots, "top_weights_png", lambda _outcome: plots.PNG_SIGNATURE)
    monkeypatch.setattr(plots, "cv_curve_png", broken)
    with pytest.raises(RuntimeError, match="figure broke"):
        write_reports(_with_held_weights(fit_outcome, [0.2] * 5), out, figures=True)
    assert {p.name: p.read_bytes() for p in out.iterdir()} == before
