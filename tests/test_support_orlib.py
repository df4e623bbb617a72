"""The max-names search on real data: OR-Library indtrack1 (31 stocks, 291 weekly levels).

Fitting rows: the first 145 of the 290 weekly simple returns. Objective: long-only, fully
invested least squares, no penalty (``budget_ls`` from tests/refits.py). Skipped when the shared
data folder is absent.
"""

from __future__ import annotations

import numpy as np
import pytest
from orlib import orlib_path, read_orlib
from refits import budget_ls, budget_refit

from trackfit.core.gram import standardized_gram
from trackfit.core.scaling import fit_scaling
from trackfit.core.support import (
    CachedRefit,
    enforce_min_position,
    lasso_path_support,
    search_support,
)

INDTRACK1 = orlib_path("indtrack1")

pytestmark = pytest.mark.skipif(INDTRACK1 is None, reason="shared/data/orlib-indtrack is absent")


@pytest.fixture(scope="module")
def fitting_rows():
    index, stocks = read_orlib(INDTRACK1)
    y = index[1:] / index[:-1] - 1.0
    X = stocks[1:] / stocks[:-1] - 1.0
    assert X.shape == (290, 31)
    return X[:145], y[:145]


def _tracking_error(X, y, w):
    # Annualized tracking error of weekly returns: std(active, ddof=1) * sqrt(52), as the README.
    return float(np.std(X @ w - y, ddof=1) * np.sqrt(52))


@pytest.fixture(scope="module")
def searched(fitting_rows):
    X, y = fitting_rows
    refit = CachedRefit(budget_refit(X, y), 31)
    return refit, search_support(refit, 31, 10)


def test_ten_names_track_within_the_stated_error(fitting_rows, searched, capsys):
    X, y = fitting_rows
    _, (mask, objective, w, record) = searched
    assert np.count_nonzero(mask) <= 10 and w.min() >= 0
    assert w.sum() == pytest.approx(1.0, abs=1e-12)
    ours = _tracking_error(X, y, w)
    # The lasso-path support (long-only lasso on the standardized rows), refitted the same way.
    path = np.zeros(31, dtype=bool)
    data = standardized_gram(X, y, fit_scaling(X, y))
    path[data.columns] = lasso_path_support(data, 10, positive=True)
    assert np.count_nonzero(path) <= 10
    path_objective, path_w = budget_ls(X, y, path)
    lasso = _tracking_error(X, y, path_w)
    every = _tracking_error(X, y, budget_ls(X, y, np.ones(31, bool))[1])
    with capsys.disabled():
        print(
            f"\nindtrack1, 10 names, first 145 weeks: forward selection + swaps {ours:.2%} "
            f"({record.evaluations} refits, {record.swaps} swaps); lasso-path support refitted "
            f"{lasso:.2%}; all 31 names {every:.2%}"
        )
    # The issue reports 2.6% for forward selection and swaps and 4.6% for the lasso-path support.
    assert ours <= 0.027
    assert lasso > ours and path_objective > objective
    # Starting from the lasso-path support does not lead anywhere worse.
    refit, _ = searched
    again = search_support(refit, 31, 10, starts=[path])
    assert again[1] <= objective


def test_screened_search_on_real_data(fitting_rows, searched):
    X, y = fitting_rows
    refit, (_, objective, _, record) = searched
    screened = search_support(CachedRefit(budget_refit(X, y), 31), 31, 10, screen=3)
    assert screened[1] == objective and screened[3].chosen == record.chosen
    quick = search_support(CachedRefit(budget_refit(X, y), 31), 31, 10, screen=3, full_swaps=False)
    assert quick[3].evaluations < record.evaluations
    assert _tracking_error(X, y, quick[2]) <= 0.027


def test_min_position_on_real_data(fitting_rows, searched):
    X, y = fitting_rows
    refit, (mask, objective, w, _) = searched
    # 8 %: above three of the ten weights (about 6.0 %, 6.4 % and 6.7 %).
    mask2, objective2, w2, removed = enforce_min_position(refit, mask, w, 0.08)
    assert removed and not np.any((w2 > 0) & (w2 < 0.08))
    left = mask & ~np.isin(np.arange(31), removed)
    ref_objective, ref_w = budget_ls(X, y, left)
    assert objective2 == ref_objective and w2.tolist() == ref_w.tolist()  # refitted
    assert objective2 > objective and np.array_equal(mask2, w2 != 0)
