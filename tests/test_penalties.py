"""Every model kind of the registry through the same checks.

A new penalty is one entry in trackfit.core.models.MODEL_KINDS, its solver support, and one
entry in CASES below; test_every_kind_has_a_case fails until that entry exists.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
import yaml

from trackfit.core.cv import cross_validate, window_bounds
from trackfit.core.fit import KKT_LIMIT
from trackfit.core.folds import ForwardChaining
from trackfit.core.gram import prefix_blocks
from trackfit.core.limited_fit import fit_limited
from trackfit.core.limits import NO_LIMITS, Limits
from trackfit.core.model_fit import fit_model
from trackfit.core.models import KINDS, MODEL_KINDS, ModelSpec, describe_model
from trackfit.core.penalties import Penalty
from trackfit.core.scaling import fit_scaling, to_original_units
from trackfit.job import load_job

# (kind, its options as written in a job file, the spec they must parse to).
CASES = [
    ("lasso", None, ModelSpec("lasso", "lasso", (1.0,))),
    ("ridge", None, ModelSpec("ridge", "ridge", (0.0,))),
    ("elastic_net", {"l1_ratio": [0.5, 0.8]}, ModelSpec("elastic_net", "elastic_net", (0.5, 0.8))),
    (
        "adaptive_lasso",
        {"gamma": 2},
        ModelSpec("adaptive_lasso", "adaptive_lasso", (1.0,), (("gamma", 2.0),)),
    ),
]
IDS = [c[0] for c in CASES]
SPLITTER = ForwardChaining(4)
COUNT = 20


def _data(seed: int = 3, n: int = 200, p: int = 15):
    """Seeded returns whose benchmark holds the first five names plus noise."""
    rng = np.random.default_rng(seed)
    X = rng.normal(0.0005, 0.01, (n, p))
    truth = np.zeros(p)
    truth[:5] = [0.3, 0.25, 0.2, 0.15, 0.1]
    return X, X @ truth + rng.normal(0.0, 0.002, n)


def test_every_kind_has_a_case():
    assert list(KINDS) == IDS


@pytest.mark.parametrize("kind, options, spec", CASES, ids=IDS)
def test_job_round_trip(tmp_path: Path, kind, options, spec):
    text = yaml.safe_dump(
        {
            "benchmark": {"file": "index.csv", "column": "lbx"},
            "constituents": {"file": "members.csv"},
            "models": {kind: options},
        }
    )
    (tmp_path / "job.yaml").write_text(text, encoding="utf-8")
    assert load_job(tmp_path / "job.yaml").models == (spec,)
    # Listed by name alone: the kind's defaults.
    (tmp_path / "plain.yaml").write_text(
        text.split("models:")[0] + f"models: [{kind}]\n", encoding="utf-8"
    )
    assert load_job(tmp_path / "plain.yaml").models == (MODEL_KINDS[kind].spec(),)


@pytest.mark.parametrize("kind, options, spec", CASES, ids=IDS)
def test_flags_and_description(kind, options, spec):
    entry = MODEL_KINDS[kind]
    assert entry.has_l1 == any(Penalty(r).has_l1 for r in spec.l1_ratios)
    assert describe_model(spec).startswith(kind)
    for option in entry.options:
        assert option.name in describe_model(spec)


@pytest.mark.parametrize("limits", [NO_LIMITS, Limits(long_only=True)], ids=["free", "long_only"])
@pytest.mark.parametrize("kind, options, spec", CASES, ids=IDS)
def test_cv_then_fit(kind, options, spec, limits):
    X, y = _data()
    cv = cross_validate(X, y, spec, SPLITTER, count=COUNT, limits=limits)
    assert len(cv.curves) == len(spec.l1_ratios)
    assert any(cv.alpha in c.alphas for c in cv.curves)
    fit = fit_model(X, y, spec, cv.alpha, cv.l1_ratio, limits, splitter=SPLITTER)
    assert fit.kkt_residual < KKT_LIMIT
    if limits.long_only:
        assert np.all(fit.weights >= 0)
    # Original units through the TRUE scaling of these rows, whatever the kind solved in.
    scaling = fit_scaling(X, y)
    np.testing.assert_array_equal(fit.scaling.x_scale, scaling.x_scale)
    np.testing.assert_allclose(
        to_original_units(fit.coef_std, fit.scaling), fit.weights, rtol=1e-12, atol=1e-15
    )
    assert fit.cash == 1.0 - float(fit.weights.sum())
    assert np.count_nonzero(fit.weights[:5]) == 5  # the true names are held


@pytest.mark.parametrize("kind, options, spec", CASES, ids=IDS)
def test_fit_under_a_budget(kind, options, spec):
    X, y = _data()
    limits = Limits(long_only=True, budget=(1.0, 1.0))
    cv = cross_validate(X, y, spec, SPLITTER, count=COUNT)
    fit = fit_model(X, y, spec, cv.alpha, cv.l1_ratio, limits, splitter=SPLITTER)
    assert fit.kkt_residual < KKT_LIMIT
    assert abs(fit.weights.sum() - 1.0) < 1e-9
    assert np.all(fit.weights >= 0)


@pytest.mark.parametrize("kind, options, spec", CASES, ids=IDS)
def test_grid_top(kind, options, spec):
    X, y = _data()
    cv = cross_validate(X, y, spec, SPLITTER, count=COUNT)
    for curve in cv.curves:
        fit = fit_model(X, y, spec, curve.alphas[0], curve.l1_ratio, NO_LIMITS, splitter=SPLITTER)
        if MODEL_KINDS[kind].has_l1:
            assert not np.any(fit.weights)  # alpha_max: the smallest penalty holding no names
        else:
            assert np.all(fit.weights[:5] != 0)  # an L2 penalty shrinks, never zeroes


@pytest.mark.parametrize("kind, options, spec", CASES, ids=IDS)
def test_blocks_change_nothing_but_rounding(kind, options, spec):
    X, y = _data()
    n = len(y)
    plain = cross_validate(X, y, spec, SPLITTER, count=COUNT)
    blocks = prefix_blocks(X, y, window_bounds([(0, n)], SPLITTER))
    shared = cross_validate(X, y, spec, SPLITTER, count=COUNT, blocks=blocks)
    assert shared.alpha == pytest.approx(plain.alpha, rel=1e-12)
    for a, b in zip(plain.curves, shared.curves):
        np.testing.assert_allclose(b.mean_error, a.mean_error, rtol=1e-9)


@pytest.mark.parametrize("kind, options, spec", CASES, ids=IDS)
def test_plain_kinds_fit_as_fit_limited(kind, options, spec):
    if MODEL_KINDS[kind].reweight is not None:
        pytest.skip("reweighted kinds are checked against scikit-learn in test_adaptive.py")
    X, y = _data()
    limits = Limits(long_only=True, budget=(0.9, 1.0))
    for lim in (NO_LIMITS, limits):
        a = fit_model(X, y, spec, 1e-3, spec.l1_ratios[0], lim, splitter=SPLITTER)
        b = fit_limited(X, y, 1e-3, spec.l1_ratios[0], lim)
        assert a.weights.tobytes() == b.weights.tobytes()
        assert a.coef_std.tobytes() == b.coef_std.tobytes()
        assert a.kkt_residual == b.kkt_residual
