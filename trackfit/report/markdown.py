"""report.md: the run explained for a committee, in plain words and fixed number formats."""

from __future__ import annotations

import re
from collections.abc import Sequence
from pathlib import PurePosixPath, PureWindowsPath

import numpy as np

from trackfit.core.results import CVCurve, CVResult, Fold
from trackfit.evaluate.holdout import ModelOutcome
from trackfit.evaluate.metrics import TrackingMetrics
from trackfit.outcomes.fit import FitOutcome
from trackfit.report.caution import CAUTION
from trackfit.report.data_quality import quality_section
from trackfit.report.ex_ante import ex_ante_section
from trackfit.report.held import held_model, held_weights, judged_label
from trackfit.report.markdown_limits import HEADING as LIMITS_HEADING
from trackfit.report.markdown_limits import mandate_section
from trackfit.report.numbers import NOT_AVAILABLE, fixed, percent, row_dates
from trackfit.report.periods import periods_words
from trackfit.report.tables import inline, table

#: Section headings, in the order they appear.
HEADINGS = (
    "## What was done",
    "## Held weights",
    LIMITS_HEADING,
    "## Tracking",
    "## Penalty choice",
    "## Accuracy",
    "## Warnings",
)

#: Heading of the last section, present only when figures were asked for.
FIGURES_HEADING = "## Figures"

#: The one line of that section when the figures could not be drawn.
FIGURES_SKIPPED = (
    "The figures were skipped because matplotlib is not installed; to draw them, install it "
    "with `pip install 'trackfit[plots]'`."
)

#: Rows of a cross-validation curve shown, spread evenly along the grid (plus the marked ones).
CURVE_ROWS = 12

_RULES = {
    "min_error": "the penalty with the smallest mean cross-validation error",
    "one_standard_error": (
        "the one-standard-error rule (the largest penalty whose mean cross-validation error "
        "is within one standard error of the smallest)"
    ),
}


def render_markdown(
    outcome: FitOutcome,
    *,
    figures: Sequence[tuple[str, str]] | None = None,
    figures_skipped: bool = False,
) -> str:
    """The text of report.md.

    Parameters
    ----------
    outcome : FitOutcome
    figures : sequence of (caption, file) or None
        Figures written beside report.md, listed as Markdown images in a last "Figures"
        section; ``file`` is relative to report.md's folder. None or empty: no section.
    figures_skipped : bool
        True when figures were asked for but matplotlib is not installed: the section is one
        line saying so (``figures`` must then be empty).

    Returns
    -------
    str
        Markdown with ``"\\n"`` line endings, ending in one ``"\\n"``.

    Raises
    ------
    ValueError
        If a figure file is given as an absolute path, or figures are given as skipped too.
    """
    held_weights(outcome)  # fail before rendering anything if the weights cannot be shown
    job = outcome.job
    lines = [f"# {inline(job.name)}: tracking weights as of {outcome.as_of.isoformat()}", ""]
    lines += [f"> {inline(CAUTION)}", ""]
    sections = (
        _what_was_done,
        _held,
        mandate_section,
        _tracking,
        ex_ante_section,
        _penalty_choice,
        _accuracy,
        _warnings,
    )
    for section in sections:
        part = section(outcome)
        if part:  # the ex-ante section is absent when nothing was computed for it
            lines += part + [""]
    lines += figures_section(tuple(figures or ()), figures_skipped)
    return "\n".join(lines).rstrip("\n") + "\n"


def _date_range(first: str | None, last: str | None) -> str:
    return NOT_AVAILABLE if first is None else f"{first} to {last}"


def _or_na(dates: tuple[str | None, str | None]) -> list[str]:
    return [d or NOT_AVAILABLE for d in dates]


def _rows(n: int) -> str:
    return f"{n} row" if n == 1 else f"{n} rows"


def _what_was_done(outcome: FitOutcome) -> list[str]:
    lines = _data_and_split(outcome)
    lines += ["", "### Cross-validation", ""] + _cross_validation(outcome)
    if outcome.notes:
        lines += ["", "### Method notes", ""] + [f"- {inline(n)}" for n in outcome.notes]
    return lines


def _data_and_split(outcome: FitOutcome) -> list[str]:
    data, study = outcome.data, outcome.study
    first, last = row_dates(data.dates, 0, len(data.dates))
    ppy = periods_words(data)
    lines = [HEADINGS[0], "", "### Data", ""]
    lines += table(
        ["Item", "Value"],
        [
            ["Benchmark", data.benchmark_name],
            ["Constituents", str(len(data.names))],
            ["Window", _date_range(first, last)],
            ["Rows", str(len(data.dates))],
            ["Periods per year", ppy],
            [
                "Risk-free rate",
                "subtracted from every return" if data.risk_free is not None else "not used",
            ],
        ],
        [False, False],
    )
    lines += ["", "### Cleaning steps", ""]
    if data.steps:
        lines += table(
            ["Step", "Rows before", "Rows after", "Rows dropped"],
            [
                [s.description, str(s.rows_before), str(s.rows_after), str(s.dropped)]
                for s in data.steps
            ],
            [False, True, True, True],
        )
    else:
        lines.append("No cleaning steps were needed.")
    quality = quality_section(data.screen, level=3)
    if quality:
        lines += [""] + quality

    train = row_dates(data.dates, 0, study.n_train)
    hold = row_dates(data.dates, study.n_train, study.n_train + study.n_holdout)
    lines += ["", "### Split", ""]
    if study.n_holdout > 0:
        lines.append(
            f"The first {_rows(study.n_train)} were used to choose each penalty and fit the "
            f"weights that were then judged on the last {_rows(study.n_holdout)} (the holdout)."
        )
    else:
        lines.append(
            f"All {_rows(study.n_train)} were used to choose each penalty and fit the weights; "
            "there was no holdout."
        )
    lines.append("")
    lines += table(
        ["Part", "Rows", "First date", "Last date"],
        [
            ["Choosing and fitting", str(study.n_train), *_or_na(train)],
            ["Holdout", str(study.n_holdout), *_or_na(hold)],
        ],
        [False, True, False, False],
    )
    return lines


def _cross_validation(outcome: FitOutcome) -> list[str]:
    data, cv_spec = outcome.data, outcome.job.cv
    penalized = [m for m in outcome.study.models if m.cv is not None]
    if not penalized:
        return ["No penalized model was cross-validated."]
    lines = []
    lines.append(
        "Penalties were chosen by time-ordered cross-validation on the choosing-and-fitting "
        f"rows only: {cv_spec.scheme} training windows, each followed by its validation rows "
        f"after a gap of {_rows(cv_spec.gap)}; folds are never shuffled."
    )
    rules = dict.fromkeys(m.cv.rule for m in penalized)
    for rule in rules:
        users = [m.name for m in penalized if m.cv.rule == rule]
        who = "" if len(rules) == 1 else f" ({', '.join(users)})"
        lines += ["", f"Rule{who}: {_RULES.get(rule, rule)}."]
    # Models normally share one set of folds; show each distinct set once.
    fold_sets: dict[tuple[Fold, ...], list[str]] = {}
    for m in penalized:
        fold_sets.setdefault(m.cv.folds, []).append(m.name)
    for folds, users in fold_sets.items():
        lines += ["", f"Folds used by {', '.join(users)}:", ""]
        lines += _fold_table(folds, data.dates)
    return lines


def _fold_table(folds: tuple[Fold, ...], dates: np.ndarray) -> list[str]:
    rows = []
    for i, f in enumerate(folds, start=1):
        rows.append(
            [
                str(i),
                str(f.train_stop - f.train_start),
                _date_range(*row_dates(dates, f.train_start, f.train_stop)),
                str(f.val_stop - f.val_start),
                _date_range(*row_dates(dates, f.val_start, f.val_stop)),
            ]
        )
    return table(
        ["Fold", "Training rows", "Training dates", "Validation rows", "Validation dates"],
        rows,
        [True, True, False, True, False],
    )


def _held(outcome: FitOutcome) -> list[str]:
    model = held_model(outcome)
    weights, cash = held_weights(outcome)
    names = outcome.data.names
    first, _ = row_dates(outcome.data.dates, 0, len(outcome.data.dates))
    through = (
        f"the whole window, {first or NOT_AVAILABLE} through the as-of date "
        f"{outcome.as_of.isoformat()}"
    )
    if model.cv is not None:
        before = (
            "the rows before the holdout"
            if outcome.study.n_holdout > 0
            else "the same rows (there was no holdout)"
        )
        how = (
            f"These weights were refitted on {through}, with the penalty chosen on {before} "
            f"(alpha {fixed(model.cv.alpha, '.4e')}, l1_ratio {fixed(model.cv.l1_ratio, '.2f')})."
        )
    elif model.kind == "equal_weight":
        how = "These are fixed equal weights; nothing was fitted."
    else:
        how = f"These weights were refitted on {through}; this model has no penalty to choose."
    lines = [HEADINGS[1], "", f"Held model: {inline(model.name)}. {how}", ""]

    top_n = max(int(outcome.job.output.top_weights), 0)
    order = np.argsort(-np.abs(weights), kind="stable")  # ties keep job order
    shown = [i for i in order if weights[i] != 0.0][:top_n]
    held_count = int(np.count_nonzero(weights))
    if shown:
        lines.append(f"The {len(shown)} largest weights by size (of {held_count} names held):")
        lines.append("")
        lines += table(
            ["Rank", "Constituent", "Weight"],
            [[str(r), names[i], percent(weights[i])] for r, i in enumerate(shown, start=1)],
            [True, False, True],
        )
        lines.append("")
    lines += table(
        ["Item", "Value"],
        [
            ["Cash", percent(cash)],
            ["Names held", f"{held_count} of {len(names)}"],
            ["Gross exposure", percent(float(np.sum(np.abs(weights))))],
        ],
        [False, True],
    )
    lines += ["", "Every constituent, zeros included, is listed in weights.csv."]
    return lines


_METRIC_HEADERS = [
    "Model",
    "Rows",
    "Tracking error",
    "Mean active",
    "Information ratio",
    "R-squared",
    "Correlation",
    "Beta",
    "Max active drawdown",
    "Names held",
    "Gross exposure",
]


def _metric_row(label: str, m: TrackingMetrics | None) -> list[str]:
    if m is None:
        return [label] + [NOT_AVAILABLE] * (len(_METRIC_HEADERS) - 1)
    return [
        label,
        str(m.periods),
        percent(m.tracking_error),
        percent(m.mean_active),
        fixed(m.information_ratio, ".2f"),
        fixed(m.r_squared, ".4f"),
        fixed(m.correlation, ".4f"),
        fixed(m.beta, ".4f"),
        percent(m.max_drawdown_active),
        str(m.names_held),
        percent(m.gross_exposure),
    ]


def _label(model: ModelOutcome, held: str) -> str:
    return f"{model.name} (held)" if model.name == held else model.name


def _held_row(outcome: FitOutcome) -> list[list[str]]:
    """The weights to hold, on the whole window: a row of their own under the judged fits."""
    model = next(m for m in outcome.study.models if m.name == outcome.held)
    if model.final_in_sample is None or outcome.study.n_holdout == 0:
        return []  # no holdout: the judged fit is the held one
    return [_metric_row(f"{model.name} (held weights, whole window)", model.final_in_sample)]


def _tracking(outcome: FitOutcome) -> list[str]:
    study, dates = outcome.study, outcome.data.dates
    right = [False] + [True] * (len(_METRIC_HEADERS) - 1)
    train = _date_range(*row_dates(dates, 0, study.n_train))
    lines = [HEADINGS[3], ""]
    lines.append(
        "Tracking error and mean active return are annualized with "
        f"{outcome.data.periods_per_year} periods a year; the maximum active drawdown is the "
        "largest fall of the summed active return from its running peak. These three and the "
        "gross exposure are in percent. Every model here is its judged fit: fitted on the "
        "choosing-and-fitting rows, before the refit on the whole window."
    )
    lines += ["", "### In-sample", ""]
    lines += [f"Measured on the rows the weights were fitted on ({train}).", ""]
    held_row = _held_row(outcome)
    if held_row:
        lines[-1] = (
            f"Measured on the rows the weights were fitted on ({train}); the last row is the "
            f"weights to hold, refitted on the whole window ({_date_range(*row_dates(dates, 0, len(dates)))}), "
            "measured there."
        )
        lines.append("")
    lines += table(
        _METRIC_HEADERS,
        [_metric_row(judged_label(m, outcome.held), m.in_sample) for m in study.models] + held_row,
        right,
    )
    lines += ["", "### Holdout", ""]
    if study.n_holdout == 0:
        lines.append("There was no holdout, so nothing was measured out of sample.")
        return lines
    hold = _date_range(*row_dates(dates, study.n_train, study.n_train + study.n_holdout))
    lines.append(f"The same weights, unchanged, on rows they had not seen ({hold}).")
    lines.append("")
    lines += table(
        _METRIC_HEADERS,
        [_metric_row(judged_label(m, outcome.held), m.holdout) for m in study.models],
        right,
    )
    return lines


def _penalty_choice(outcome: FitOutcome) -> list[str]:
    lines = [HEADINGS[4], ""]
    penalized = [m for m in outcome.study.models if m.cv is not None]
    if not penalized:
        return lines + ["No penalized model was fitted."]
    lines.append(
        "Penalties (alpha) are in standardized units. The cross-validation error is the mean "
        "over folds of the validation mean squared active return per period."
    )
    for model in penalized:
        lines += [""] + _one_penalty(model.name, model.cv)
    return lines


def _one_penalty(name: str, cv: CVResult) -> list[str]:
    lines = [f"### {inline(name)}", ""]
    lines += table(
        ["Item", "Value"],
        [
            ["Chosen alpha", fixed(cv.alpha, ".4e")],
            ["Chosen l1_ratio", fixed(cv.l1_ratio, ".2f")],
            ["Alpha with the smallest error", fixed(cv.best_alpha, ".4e")],
            ["l1_ratio with the smallest error", fixed(cv.best_l1_ratio, ".2f")],
            ["Rule", cv.rule],
        ],
        [False, True],
    )
    lines.append("")
    if cv.notes:
        lines += ["Grid notes:", ""] + [f"- {inline(n)}" for n in cv.notes]
    else:
        lines.append("Grid notes: none.")
    if not cv.curves:
        return lines
    chosen = _nearest([c.l1_ratio for c in cv.curves], cv.l1_ratio)
    curve = cv.curves[chosen]
    lines += [""] + _curve_table(curve, cv)
    others = [c for i, c in enumerate(cv.curves) if i != chosen]
    if others:
        lines += ["", "Other mixes searched:", ""]
        rows = []
        for c in others:
            if c.mean_error.size and np.any(np.isfinite(c.mean_error)):
                k = int(np.nanargmin(c.mean_error))
                rows.append(
                    [
                        fixed(c.l1_ratio, ".2f"),
                        fixed(c.mean_error[k], ".4e"),
                        fixed(c.alphas[k], ".4e"),
                    ]
                )
            else:
                rows.append([fixed(c.l1_ratio, ".2f"), NOT_AVAILABLE, NOT_AVAILABLE])
        lines += table(["l1_ratio", "Smallest mean CV error", "At alpha"], rows, [True, True, True])
    return lines


def _curve_table(curve: CVCurve, cv: CVResult) -> list[str]:
    n = curve.alphas.size
    if n == 0:
        return [f"The grid for l1_ratio {fixed(curve.l1_ratio, '.2f')} is empty."]
    marks: dict[int, list[str]] = {}
    if curve.l1_ratio == cv.l1_ratio or len(cv.curves) == 1:
        marks.setdefault(_nearest(curve.alphas, cv.alpha), []).append("chosen")
    if curve.l1_ratio == cv.best_l1_ratio or len(cv.curves) == 1:
        marks.setdefault(_nearest(curve.alphas, cv.best_alpha), []).append("smallest error")
    spread = np.round(np.linspace(0, n - 1, min(CURVE_ROWS, n))).astype(int)
    rows_shown = sorted(set(spread.tolist()) | set(marks))
    lines = [
        f"Cross-validation error for l1_ratio {fixed(curve.l1_ratio, '.2f')} "
        f"({len(rows_shown)} of {n} grid points, largest penalty first):",
        "",
    ]
    lines += table(
        ["Alpha", "Mean CV error", "Standard error", "Note"],
        [
            [
                fixed(curve.alphas[i], ".4e"),
                fixed(curve.mean_error[i], ".4e"),
                fixed(curve.std_error[i], ".4e"),
                ", ".join(marks.get(i, [])),
            ]
            for i in rows_shown
        ],
        [True, True, True, False],
    )
    return lines


def _nearest(values, target: float) -> int:
    """Index of the entry of ``values`` closest to ``target`` (first on ties)."""
    return int(np.argmin(np.abs(np.asarray(values, dtype=float) - float(target))))


def _accuracy(outcome: FitOutcome) -> list[str]:
    lines = [HEADINGS[5], ""]
    lines.append(
        "The KKT residual is the largest violation of the optimality conditions, relative to "
        "`max(abs(X'y)) / n` on the standardized data; 0 for fixed weights. Smaller is better."
    )
    lines.append("")
    lines += table(
        ["Model", "KKT residual, final fit", "KKT residual, fit before the holdout"],
        [
            [
                _label(m, outcome.held),
                fixed(m.final_fit.kkt_residual, ".1e"),
                fixed(m.train_fit.kkt_residual, ".1e"),
            ]
            for m in outcome.study.models
        ],
        [False, True, True],
    )
    return lines


def _warnings(outcome: FitOutcome) -> list[str]:
    lines = [HEADINGS[6], ""]
    if not outcome.warnings:
        return lines + ["None."]
    return lines + [f"- {inline(w)}" for w in outcome.warnings]


def figures_section(figures: tuple[tuple[str, str], ...], skipped: bool) -> list[str]:
    """The last "Figures" section of a report: images with relative links, or why none."""
    if skipped:
        if figures:
            raise ValueError("Figures cannot be both listed and skipped in report.md.")
        return [FIGURES_HEADING, "", FIGURES_SKIPPED]
    if not figures:
        return []
    lines = [FIGURES_HEADING]
    for caption, file in figures:
        path = PurePosixPath(str(file).replace("\\", "/"))
        if path.is_absolute() or PureWindowsPath(str(file)).is_absolute():
            raise ValueError(
                f"The figure file {file!r} must be given relative to report.md's folder."
            )
        text = inline(caption).replace("[", "\\[").replace("]", "\\]")
        link = path.as_posix()
        if not re.fullmatch(r"[A-Za-z0-9._/-]+", link):
            link = f"<{link}>"  # CommonMark's form for destinations with spaces or brackets
        lines += ["", f"![{text}]({link})"]
    return lines
