"""Tests for trackfit.core.folds.ForwardChaining: time-ordered folds with tested indices."""

from __future__ import annotations

import numpy as np
import pytest
from sklearn.model_selection import TimeSeriesSplit

from trackfit.core.folds import ForwardChaining
from trackfit.errors import SolverError

# (n rows, folds, gap): cases TimeSeriesSplit accepts, including uneven splits and big gaps.
CASES = [
    (10, 2, 0),
    (12, 5, 0),
    (100, 5, 0),
    (101, 5, 3),
    (60, 3, 2),
    (37, 4, 1),
    (240, 10, 12),
    (6, 5, 0),
    (61, 5, 9),
    (120, 2, 39),
]


def _indices(folds):
    return [
        (np.arange(f.train_start, f.train_stop), np.arange(f.val_start, f.val_stop)) for f in folds
    ]


def _assert_same_splits(ours, reference):
    assert len(ours) == len(reference)
    for (train, val), (ref_train, ref_val) in zip(ours, reference):
        np.testing.assert_array_equal(train, ref_train)
        np.testing.assert_array_equal(val, ref_val)


@pytest.mark.parametrize(("n", "k", "gap"), CASES)
def test_expanding_equals_time_series_split(n, k, gap):
    # scikit-learn sklearn/model_selection TimeSeriesSplit(n_splits, gap): the reference indices.
    reference = list(TimeSeriesSplit(n_splits=k, gap=gap).split(np.zeros((n, 1))))
    _assert_same_splits(_indices(ForwardChaining(n_folds=k, gap=gap).split(n)), reference)


@pytest.mark.parametrize(("n", "k", "gap"), CASES)
def test_rolling_equals_time_series_split_with_max_train_size(n, k, gap):
    folds = ForwardChaining(n_folds=k, gap=gap, rolling=True).split(n)
    first_train = folds[0].train_stop - folds[0].train_start
    # scikit-learn TimeSeriesSplit with max_train_size set to the first fold's training length.
    splitter = TimeSeriesSplit(n_splits=k, gap=gap, max_train_size=first_train)
    reference = list(splitter.split(np.zeros((n, 1))))
    _assert_same_splits(_indices(folds), reference)
    assert {f.train_stop - f.train_start for f in folds} == {first_train}


# min_train larger than the default first training block: validation blocks shrink.
# Worked by hand: n=30, 5 folds -> default test size 30 // 6 = 5 leaves 30 - 25 = 5 < 20 rows,
# so the test size becomes (30 - 0 - 20) // 5 = 2 and the first fold trains on 30 - 10 = 20 rows.
BY_HAND = [
    (
        dict(n_folds=5, min_train=20),
        30,
        [(0, 20, 20, 22), (0, 22, 22, 24), (0, 24, 24, 26), (0, 26, 26, 28), (0, 28, 28, 30)],
    ),
    # gap 2: test size (30 - 2 - 20) // 5 = 1, first train stop 30 - 5 - 2 = 23.
    (
        dict(n_folds=5, min_train=20, gap=2),
        30,
        [(0, 23, 25, 26), (0, 24, 26, 27), (0, 25, 27, 28), (0, 26, 28, 29), (0, 27, 29, 30)],
    ),
    # rolling keeps the 20-row training length.
    (
        dict(n_folds=3, min_train=20, rolling=True),
        29,
        [(0, 20, 20, 23), (3, 23, 23, 26), (6, 26, 26, 29)],
    ),
    # 48 rows, 3 folds, min_train 36: test size (48 - 36) // 3 = 4.
    (
        dict(n_folds=3, min_train=36),
        48,
        [(0, 36, 36, 40), (0, 40, 40, 44), (0, 44, 44, 48)],
    ),
    # 50 rows, 4 folds, min_train 37: (50 - 37) // 4 = 3; first train 50 - 12 = 38 >= 37.
    (
        dict(n_folds=4, min_train=37),
        50,
        [(0, 38, 38, 41), (0, 41, 41, 44), (0, 44, 44, 47), (0, 47, 47, 50)],
    ),
    # min_train already met by the default split: nothing changes (120 // 6 = 20 per block).
    (
        dict(n_folds=5, min_train=20),
        120,
        [(0, 20, 20, 40), (0, 40, 40, 60), (0, 60, 60, 80), (0, 80, 80, 100), (0, 100, 100, 120)],
    ),
]


@pytest.mark.parametrize(("params", "n", "expected"), BY_HAND)
def test_min_train_shrinks_validation_blocks(params, n, expected):
    folds = ForwardChaining(**params).split(n)
    got = [(f.train_start, f.train_stop, f.val_start, f.val_stop) for f in folds]
    assert got == expected


@pytest.mark.parametrize("rolling", [False, True])
@pytest.mark.parametrize(
    ("n", "k", "gap", "min_train"),
    [(30, 5, 0, 20), (37, 4, 1, 1), (100, 5, 3, 60), (240, 10, 12, 120), (26, 2, 0, 24)],
)
def test_fold_structure(n, k, gap, min_train, rolling):
    folds = ForwardChaining(n_folds=k, gap=gap, min_train=min_train, rolling=rolling).split(n)
    assert len(folds) == k
    sizes = {f.val_stop - f.val_start for f in folds}
    assert len(sizes) == 1 and sizes.pop() >= 1
    assert folds[-1].val_stop == n
    assert folds[0].train_stop - folds[0].train_start >= min_train
    for before, after in zip(folds, folds[1:]):
        assert after.val_start == before.val_stop  # consecutive validation blocks
    for f in folds:
        assert 0 <= f.train_start < f.train_stop
        assert f.val_start - f.train_stop == gap  # never a validation row in or next to training


@pytest.mark.parametrize(("n", "k", "gap"), [(12, 5, 3), (20, 6, 10), (30, 4, 20)])
def test_shrinks_where_time_series_split_refuses(n, k, gap):
    # scikit-learn TimeSeriesSplit raises when the default test size leaves no training rows;
    # trackfit shrinks the validation blocks instead, as far as one training row.
    with pytest.raises(ValueError, match="Too many splits"):
        list(TimeSeriesSplit(n_splits=k, gap=gap).split(np.zeros((n, 1))))
    folds = ForwardChaining(n_folds=k, gap=gap).split(n)
    size = (n - gap - 1) // k
    assert [f.val_stop - f.val_start for f in folds] == [size] * k
    assert folds[0].train_stop == n - k * size - gap >= 1


TOO_FEW = [
    (dict(n_folds=5), 5, r"^5 rows cannot hold 5 cross-validation folds with gap 0 and at least 1"),
    (dict(n_folds=5, gap=5), 10, r"^10 rows cannot hold 5 cross-validation folds with gap 5 "),
    (dict(n_folds=3, min_train=36), 38, r"^38 rows cannot hold 3 .* at least 36 training rows"),
    (dict(n_folds=2, min_train=60, gap=1), 62, r"^62 rows .* gap 1 and at least 60 training"),
    (dict(n_folds=4, gap=3, rolling=True), 6, r"^6 rows cannot hold 4 cross-validation folds "),
    (dict(n_folds=2), 0, r"^0 rows cannot hold 2 cross-validation folds"),
]


@pytest.mark.parametrize(("params", "n", "match"), TOO_FEW)
def test_too_few_rows_raises(params, n, match):
    with pytest.raises(SolverError, match=match) as info:
        ForwardChaining(**params).split(n)
    advice = "lengthen the window or lower cross_validation.folds, gap or min_train"
    assert advice in str(info.value)


def test_splitter_is_frozen():
    splitter = ForwardChaining(n_folds=4)
    with pytest.raises(AttributeError):
        splitter.n_folds = 3
