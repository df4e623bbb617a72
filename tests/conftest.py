"""Seeded data shared by the tests; every sample knows the weights that built it.

Shared helpers that are not fixtures live in plain modules beside this file, never in a test
module: ``synthetic`` (factor-model samples), ``builders`` (a hand-built FitOutcome),
``markdown_tables`` (reading report tables back), ``jobs`` (a small job on disk), ``refits``
(the exact reference refit of the max-names tests) and ``orlib`` (the shared OR-Library files).
"""

from __future__ import annotations

import numpy as np
import pytest
from synthetic import Sample, factor_sample

SEED = 20261130


@pytest.fixture
def rng() -> np.random.Generator:
    """A seeded generator, new for every test, so no test depends on another's draws."""
    return np.random.default_rng(SEED)


# Function-scoped: the arrays are mutable, and a sample is cheap to rebuild.


@pytest.fixture
def tall_sample() -> Sample:
    """120 periods of 15 constituents (more periods than names), a true support of 3."""
    return factor_sample(7, 120, 15, noise=0.01)


@pytest.fixture
def wide_sample() -> Sample:
    """40 periods of 120 constituents (more names than periods), a true support of 30."""
    return factor_sample(7, 40, 120)


@pytest.fixture
def exact_sample() -> Sample:
    """240 periods of 6 constituents, a benchmark that is 4 of them plus noise of 1e-7."""
    return factor_sample(7, 240, 6, n_held=4, noise=1e-7)
