"""Behaviour every method must share (scikit-learn's "common tests" style).

Expected behaviour from the design (../shared/DESIGN.md, "Methods"): missing values stay
missing, infinite values pass through and are reported, inverse(forward(x)) == x to within
rounding, and every method is increasing.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from scalewright.engine import METHODS, ColumnChoice, apply, fit, fit_column, restore

RNG = np.random.default_rng(7)
POSITIVE = RNG.lognormal(1.0, 0.9, 200)  # every method accepts positive data
SIGNED = RNG.normal(-3.0, 20.0, 200)

AFFINE = {"none", "minmax", "zscore", "decimal", "robust", "maxabs"}
# Stated round-trip tolerances, relative to the column's largest size: an affine map and
# its inverse each round a few times, so 1e-12; log, exp and powers lose a few more
# digits (more where lambda is far from 1), so 1e-9.
RTOL = {m: (1e-12 if m in AFFINE else 1e-9) for m in METHODS}

CASES = [(m, {}) for m in METHODS] + [
    ("minmax", {"low": -1, "high": 1}),
    ("zscore", {"sd": "population"}),
    ("log", {"base": "10"}),
    ("log", {"base": "2"}),
    ("boxcox", {"standardize": "yes"}),
    ("yeojohnson", {"standardize": "yes"}),
]
IDS = [m + "".join(f"-{k}={v}" for k, v in o.items()) for m, o in CASES]


def data_for(method: str) -> np.ndarray:
    return POSITIVE if method in ("boxcox",) else SIGNED


def with_holes(x: np.ndarray) -> np.ndarray:
    y = x.copy()
    y[[3, 50, 120]] = np.nan
    y[10] = np.inf
    y[11] = -np.inf
    return y


@pytest.mark.parametrize(("method", "options"), CASES, ids=IDS)
def test_missing_stay_missing_and_infinities_pass(method, options):
    x = with_holes(data_for(method))
    fc = fit_column(x, ColumnChoice(method, options), column="c")
    assert fc.n_missing == 3
    assert fc.n_infinite == 2
    if method != "none":
        assert any("infinite" in w for w in fc.warnings)
    # The fit ignored the holes: it equals a fit on the finite values alone.
    clean = fit_column(x[np.isfinite(x)], ColumnChoice(method, options), column="c")
    assert fc.pooled.params == clean.pooled.params
    y = fc.forward(x)
    assert np.array_equal(np.isnan(y), np.isnan(x))
    assert y[10] == np.inf and y[11] == -np.inf
    back = fc.inverse(y)
    assert np.array_equal(np.isnan(back), np.isnan(x))
    assert back[10] == np.inf and back[11] == -np.inf


@pytest.mark.parametrize(("method", "options"), CASES, ids=IDS)
def test_round_trip(method, options):
    x = data_for(method)
    fc = fit_column(x, ColumnChoice(method, options), column="c")
    back = fc.inverse(fc.forward(x))
    scale = np.max(np.abs(x))
    np.testing.assert_allclose(back, x, rtol=RTOL[method], atol=RTOL[method] * scale)


@pytest.mark.parametrize(("method", "options"), CASES, ids=IDS)
def test_order_is_kept(method, options):
    x = data_for(method)
    fc = fit_column(x, ColumnChoice(method, options), column="c")
    order = np.argsort(x, kind="stable")
    y = fc.forward(x)[order]
    assert np.all(np.diff(y) >= 0)
    if method not in ("none",):
        # strictly increasing where the values differ enough to be told apart
        assert np.all(np.diff(y)[np.diff(x[order]) > 1e-6 * np.max(np.abs(x))] > 0)


@pytest.mark.parametrize(("method", "options"), CASES, ids=IDS)
def test_table_round_trip_reports_infinities(method, options):
    x = with_holes(data_for(method))
    table = pd.DataFrame({"c": x, "label": [f"r{i}" for i in range(x.size)]})
    plan = fit(table, {"c": ColumnChoice(method, options)})
    scaled, reports = apply(table, plan)
    if method == "none":
        assert plan.columns == {} and reports == []
        return
    assert reports[0].n_infinite == 2 and reports[0].n_values == x.size - 3
    assert any("infinite" in w for w in reports[0].warnings)
    assert scaled["label"].tolist() == table["label"].tolist()
    back, back_reports = restore(scaled, plan)
    assert back_reports[0].n_undefined == 0
    finite = np.isfinite(x)
    np.testing.assert_allclose(
        back["c"].to_numpy()[finite],
        x[finite],
        rtol=RTOL[method],
        atol=RTOL[method] * np.max(np.abs(x[finite])),
    )
    assert np.array_equal(np.isnan(back["c"].to_numpy()), np.isnan(x))


def test_every_method_has_words_and_a_way_back():
    for method in METHODS.values():
        assert method.id and method.name and method.summary and method.when_to_use
        assert method.inverse_formula
        assert set(method.options()) == {spec.name for spec in method.option_specs}
