"""Quantile (rank) scaling, checked against scikit-learn's QuantileTransformer.

The reference is sklearn.preprocessing.QuantileTransformer with n_quantiles=min(1000, n)
and no subsampling (subsample=None), which fits type-7 quantiles (numpy's default linear
interpolation) and maps through them the same way. The round trip, the missing-value mask
and the order are also covered for every method in test_engine_every_method.py.
"""

from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest
from sklearn.preprocessing import QuantileTransformer

from scalewright.engine import ColumnChoice, fit, fit_column, get_method, restore
from scalewright.errors import ProjectError
from scalewright.project import (
    Project,
    load_project,
    parameter_sheet,
    project_from_json,
    project_to_json,
    save_project,
)

RNG = np.random.default_rng(2025)
DATA = {
    "lognormal_300": RNG.lognormal(1.0, 0.8, 300),
    "normal_5000": RNG.normal(50.0, 7.0, 5000),  # more values than quantiles
    "ties": np.repeat([1.0, 2.0, 2.0, 2.0, 3.0, 10.0], 40),  # repeated quantiles
    "signed_wide": np.concatenate([RNG.normal(0, 1, 800), [-1e6, 5e5]]),
}


def reference(x: np.ndarray, shape: str) -> QuantileTransformer:
    qt = QuantileTransformer(
        n_quantiles=min(1000, x.size), output_distribution=shape, subsample=None
    )
    return qt.fit(x.reshape(-1, 1))


def fitted(x, **options):
    return fit_column(x, ColumnChoice("quantile", options).normalized(), column="x")


@pytest.mark.parametrize("shape", ["uniform", "normal"])
@pytest.mark.parametrize("name", list(DATA))
def test_matches_sklearn_quantile_transformer(name, shape):
    x = DATA[name]
    fc = fitted(x, shape=shape)
    qt = reference(x, shape)
    quantiles = np.asarray(fc.pooled.params["quantiles"])
    np.testing.assert_allclose(quantiles, qt.quantiles_[:, 0], rtol=1e-13, atol=0)
    # New values inside and outside the fitted range, and the fitted values themselves.
    probe = np.concatenate([x, np.linspace(x.min() - 1, x.max() + 1, 501)])
    ours = fc.forward(probe)
    ref = qt.transform(probe.reshape(-1, 1))[:, 0]
    # sklearn sends values within 1e-7 (absolute) of either end straight to that end; away
    # from the ends the two must agree to rounding.
    inside = (probe > x.min() + 1e-7) & (probe < x.max() - 1e-7)
    np.testing.assert_allclose(ours[inside], ref[inside], rtol=1e-9, atol=1e-12)
    ends = ~inside
    np.testing.assert_allclose(ours[ends], ref[ends], rtol=1e-6, atol=1e-6)


@pytest.mark.parametrize("shape", ["uniform", "normal"])
def test_inverse_matches_sklearn_within_the_fitted_range(shape):
    x = DATA["lognormal_300"]
    fc = fitted(x, shape=shape)
    qt = reference(x, shape)
    y = fc.forward(x)
    inner = (x > x.min()) & (x < x.max())  # the normal shape's ends are cut at +-5.2 sd
    back = fc.inverse(y)
    np.testing.assert_allclose(back[inner], x[inner], rtol=1e-9)
    ref_back = qt.inverse_transform(y.reshape(-1, 1))[:, 0]
    np.testing.assert_allclose(back[inner], ref_back[inner], rtol=1e-9)


def test_uniform_ranks_are_even_and_ties_take_the_middle():
    # Five distinct values: the quantiles are the values, the ranks 0, 1/4, ... 1 (by
    # definition of the empirical distribution with linear interpolation; common practice).
    x = np.array([3.0, 1.0, 5.0, 2.0, 4.0])
    fc = fitted(x)
    np.testing.assert_allclose(fc.forward(np.array([1, 2, 3, 4, 5.0])), [0, 0.25, 0.5, 0.75, 1])
    np.testing.assert_allclose(fc.forward(np.array([1.5, 0.0, 9.0])), [0.125, 0.0, 1.0])
    # Tied inside the range: the middle of their ranks (as sklearn); every value tied:
    # 0, as min-max gives its low, with a warning.
    tied = fitted(np.array([1.0, 2.0, 2.0, 2.0, 3.0]))
    np.testing.assert_allclose(tied.forward(np.array([1.0, 2.0, 3.0])), [0.0, 0.5, 1.0])
    const = fitted(np.full(10, 7.0))
    assert const.forward(np.array([7.0]))[0] == 0.0
    assert any("same" in w for w in const.warnings)


def test_at_most_1000_quantiles_kept_exactly_through_the_project(tmp_path):
    x = DATA["normal_5000"]
    table = pd.DataFrame({"x": x, "y": x[::-1]})
    plan = fit(
        table, {"x": ColumnChoice("quantile"), "y": ColumnChoice("quantile", {"shape": "normal"})}
    )
    assert len(plan["x"].pooled.params["quantiles"]) == 1000
    project = Project(columns=["x", "y"], headers=["x", "y"], plan=plan,
                      choices={c: ColumnChoice(plan[c].method, plan[c].options) for c in "xy"})  # fmt: skip
    save_project(project, tmp_path / "q.swproj")
    back = load_project(tmp_path / "q.swproj")
    assert back.plan["x"].pooled.params == plan["x"].pooled.params  # bit for bit
    assert back.plan["y"].pooled.params["shape"] == "normal"
    sheet = parameter_sheet(plan)
    last = sheet[(sheet["column"] == "x") & (sheet["parameter"] == "quantiles[999]")]
    assert last["value"].tolist() == [plan["x"].pooled.params["quantiles"][999]]
    assert (sheet["parameter"].str.startswith("quantiles[")).sum() == 2000


def _doc_with(quantiles):
    x = np.array([1.0, 2.0, 3.0, 4.0])
    plan = fit(pd.DataFrame({"x": x}), {"x": ColumnChoice("quantile")})
    doc = json.loads(project_to_json(Project(columns=["x"], headers=["x"], plan=plan,
                                             choices={"x": ColumnChoice("quantile")})))  # fmt: skip
    doc["columns"]["x"]["params"]["quantiles"] = quantiles
    return json.dumps(doc)


@pytest.mark.parametrize(
    ("quantiles", "message"),
    [
        ([1.0, 3.0, 2.0, 4.0], "quantiles: must never decrease"),
        ([1.0, 2.0, 3.0, 5.0], "quantiles: must run from the smallest to the largest"),
        ([1.0, "2", 3.0, 4.0], r"quantiles\[1\]: must be a number"),
        ([], "quantiles: must be a non-empty list of numbers"),
        (4.0, "quantiles: must be a non-empty list of numbers"),
    ],
)
def test_saved_quantiles_are_checked(quantiles, message):
    with pytest.raises(ProjectError, match=message):
        project_from_json(_doc_with(quantiles), "q.swproj")


def test_restore_reports_ranks_outside_0_to_1_and_new_values_outside_the_range():
    x = DATA["lognormal_300"]
    plan = fit(pd.DataFrame({"x": x}), {"x": ColumnChoice("quantile")})
    back, reports = restore(pd.DataFrame({"x": [0.5, 1.5, -0.1, np.nan]}), plan)
    assert reports[0].n_undefined == 2  # a rank above 1 or below 0 has no original value
    assert np.isfinite(back["x"].iloc[0]) and np.isnan(back["x"].iloc[3])


def test_described_in_words_with_the_option_labels():
    m = get_method("quantile")
    fc = fitted(np.array([1.0, 2.0, 4.0]))
    assert m.describe_params(fc.pooled.params, brief=True) == ("3 fitted quantiles from 1 to 4")
    many = {"shape": "uniform", "quantiles": list(np.linspace(5.67, 7.31, 1000))}
    assert m.describe_params(many, brief=True) == "1,000 fitted quantiles from 5.67 to 7.31"
    spec = m.option_specs[0]
    assert (
        spec.shown_label == "Result shape" and spec.choice_words("normal") == "bell curve (normal)"
    )
