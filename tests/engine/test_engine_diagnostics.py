"""Column summaries against numpy/scipy, and every branch of the method suggestion.

Sources: numpy (mean, std ddof=1, median, quantile method "linear" = Hyndman-Fan type 7),
scipy.stats.skew(bias=True) (the moment skewness g1); Tukey's 1.5 x IQR fences (Tukey,
Exploratory Data Analysis, 1977). Thresholds for the suggestion are common practice.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy import stats

from scalewright.engine import ColumnSummary, describe, suggest

RNG = np.random.default_rng(99)


def test_describe_matches_numpy_and_scipy():
    x = np.concatenate([RNG.gamma(2.0, 5.0, 500), [0.0, 0.0, -3.0, 250.0]])
    with_holes = np.concatenate([x, [np.nan, np.nan, np.inf]])
    s = describe(with_holes)
    assert (s.count, s.missing, s.infinite) == (x.size, 2, 1)
    assert (s.min, s.max) == (np.min(x), np.max(x))
    assert s.mean == pytest.approx(np.mean(x), rel=1e-14)  # numpy
    assert s.sd == pytest.approx(np.std(x, ddof=1), rel=1e-13)  # numpy, ddof=1
    assert s.median == np.median(x)  # numpy
    q1, q3 = np.percentile(x, [25, 75])  # numpy default = type 7
    assert (s.q1, s.q3) == (q1, q3)
    assert s.skewness == pytest.approx(stats.skew(x, bias=True), rel=1e-12)  # scipy
    iqr = q3 - q1
    assert s.n_beyond_fences == int(np.sum((x < q1 - 1.5 * iqr) | (x > q3 + 1.5 * iqr)))
    assert s.share_zero == 2 / x.size and s.share_negative == 1 / x.size
    assert set(s.as_dict()) >= {"count", "skewness", "share_zero"}


def test_describe_of_nothing_is_nan_not_an_error():
    s = describe(np.array([np.nan, np.nan]))
    assert s.count == 0 and s.missing == 2 and np.isnan(s.mean)
    assert suggest(s).method == "none"


@pytest.mark.parametrize(
    "sample", [RNG.normal(3, 1, 50), RNG.lognormal(0, 1.2, 400), -RNG.gamma(1, 1, 80)]
)
def test_skewness_matches_scipy(sample):
    assert describe(sample).skewness == pytest.approx(stats.skew(sample, bias=True), rel=1e-12)


def summary(x) -> ColumnSummary:
    return describe(np.asarray(x, dtype=np.float64))


def test_suggest_leave_as_is_for_constant():
    s = suggest(summary([4.0, 4.0, 4.0]))
    assert s.method == "none" and "leave as is" in s.reason


def test_suggest_maxabs_for_mostly_zeros():
    x = np.concatenate([np.zeros(70), RNG.poisson(3.0, 30) + 1.0])  # like a pest-trap count
    s = suggest(summary(x))
    assert s.method == "maxabs"
    assert "70%" in s.reason  # the figure behind the choice


def test_suggest_boxcox_for_right_skewed_positive():
    x = RNG.lognormal(0.0, 1.0, 2000)
    figures = summary(x)
    s = suggest(figures)
    assert s.method == "boxcox" and s.options == {"standardize": True}
    assert f"{figures.skewness:.1f}" in s.reason and "right" in s.reason


def test_suggest_yeojohnson_for_skewed_with_negatives():
    x = RNG.lognormal(0.0, 1.0, 2000) - 0.5
    figures = summary(x)
    s = suggest(figures)
    assert s.method == "yeojohnson"
    assert f"{figures.skewness:.1f}" in s.reason


def test_suggest_yeojohnson_for_left_skewed_with_negatives():
    x = -RNG.lognormal(0.0, 1.0, 2000)
    s = suggest(summary(x))
    assert s.method == "yeojohnson" and "left" in s.reason


def test_suggest_robust_for_outliers():
    x = np.concatenate([RNG.normal(0, 1, 1000), [-15.0, -12.0, -11.0, 12.0, 13.0, 16.0] * 3])
    figures = summary(x)
    assert abs(figures.skewness) <= 1.0  # symmetric outliers: not a skewness case
    s = suggest(figures)
    assert s.method == "robust"
    assert str(figures.n_beyond_fences) in s.reason


def test_suggest_zscore_for_bell_shaped():
    x = RNG.normal(50.0, 5.0, 3000)
    x = x[np.abs(x - 50.0) < 2.5 * 5.0]  # no values far out
    figures = summary(x)
    s = suggest(figures)
    assert s.method == "zscore"
    assert f"{figures.skewness:.1f}" in s.reason
