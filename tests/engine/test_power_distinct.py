"""The lambda search over distinct values and their counts (large columns that repeat
their values) finds scipy's maximum-likelihood lambda, as the search over every value does.
Reference: scipy.stats.boxcox_normmax (method "mle") and yeojohnson_normmax; the data are
invented here from fixed seeds."""

from __future__ import annotations

import numpy as np
import pytest
from scipy import stats

from scalewright.engine import power


def _rounded(seed: int, n: int = 200_000) -> np.ndarray:
    rng = np.random.default_rng(seed)
    return rng.lognormal(4.2, 0.45, n).round(1)  # a measurement written to one decimal


def test_repeated_values_are_counted_and_nothing_is_lost():
    x = _rounded(1)
    values, counts = power.distinct_values(x)
    assert values.size < x.size // 8 and counts.sum() == x.size
    np.testing.assert_array_equal(np.sort(np.repeat(values, counts.astype(int))), np.sort(x))


def test_values_that_do_not_repeat_are_searched_one_by_one():
    x = np.random.default_rng(2).lognormal(0, 1, 100_000)
    assert power.distinct_values(x) is None
    assert power.distinct_values(_rounded(3, 1000)) is None  # small: nothing to gain


@pytest.mark.parametrize("seed", [4, 5])
def test_box_cox_lambda_over_distinct_values_is_scipys(seed):
    x = _rounded(seed)
    assert power.distinct_values(x) is not None
    lam = power.boxcox_lambda(x)
    assert abs(lam - stats.boxcox_normmax(x, method="mle")) <= 1e-6  # scipy


@pytest.mark.parametrize("shift", [0.0, -60.0])  # all positive; both signs
def test_yeo_johnson_lambda_over_distinct_values_is_scipys(shift):
    x = _rounded(6) + shift
    assert power.distinct_values(x) is not None
    lam = power.yeojohnson_lambda(x)
    assert abs(lam - stats.yeojohnson_normmax(x)) <= 1e-6  # scipy
    # the same likelihood as over every value, at the lambda found (weighted sums)
    every = power.YeoJohnsonLikelihood(x).neg_llf(lam)
    counted = power.YeoJohnsonLikelihood(*power.distinct_values(x)).neg_llf(lam)
    assert counted == pytest.approx(every, rel=1e-12)


def test_box_cox_likelihood_over_distinct_values_is_the_same_sum():
    x = _rounded(7)
    every = power.BoxCoxLikelihood(x.copy())
    counted = power.BoxCoxLikelihood(*power.distinct_values(x))
    for lam in (-1.0, 0.0, 0.3, 1.5):
        assert counted.neg_llf(lam) == pytest.approx(every.neg_llf(lam), rel=1e-12)
