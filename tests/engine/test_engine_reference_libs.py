"""Each method against a reference implementation (test-only dependencies).

Sources: scikit-learn (MinMaxScaler, StandardScaler, RobustScaler, MaxAbsScaler,
PowerTransformer) and scipy.stats (boxcox, boxcox_normmax, yeojohnson,
yeojohnson_normmax). The data are invented here from fixed seeds.
No published Yeo-Johnson worked example is used: I do not know one reliably from memory.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy import stats
from sklearn import preprocessing

from scalewright.engine import ColumnChoice, fit_column, get_method

RNG = np.random.default_rng(20260402)
SIGNED = {
    "normal": RNG.normal(40.0, 12.0, 500),
    "skewed_signed": RNG.gamma(1.5, 8.0, 400) - 4.0,
    "wide": RNG.standard_t(3, 300) * 1e4,
}
POSITIVE = {
    "lognormal": RNG.lognormal(2.0, 1.0, 500),
    "gamma": RNG.gamma(2.0, 3.0, 400),
    "left_skewed": 100.0 - RNG.gamma(2.0, 3.0, 300),  # all positive, skewed to the left
    "small": RNG.lognormal(-6.0, 0.5, 200),
}
ALL = {**SIGNED, **POSITIVE}


def fitted(method: str, x: np.ndarray, **options):
    fc = fit_column(x, ColumnChoice(method, options), column="c")
    return fc, fc.pooled.params


def close(ours, ref, rtol):
    ours, ref = np.asarray(ours), np.asarray(ref)
    scale = np.max(np.abs(ref))
    np.testing.assert_allclose(ours, ref, rtol=rtol, atol=rtol * scale)


@pytest.mark.parametrize("name", ALL)
@pytest.mark.parametrize("low_high", [(0.0, 1.0), (-1.0, 1.0)])
def test_minmax_matches_sklearn(name, low_high):
    x = ALL[name]
    fc, params = fitted("minmax", x, low=low_high[0], high=low_high[1])
    ref = preprocessing.MinMaxScaler(feature_range=low_high).fit(x[:, None])  # scikit-learn
    assert params["min"] == ref.data_min_[0] and params["max"] == ref.data_max_[0]
    close(fc.forward(x), ref.transform(x[:, None])[:, 0], 1e-13)
    y = np.linspace(-2.0, 2.0, 9)  # values outside the fitted range too
    close(fc.inverse(y), ref.inverse_transform(y[:, None])[:, 0], 1e-13)


@pytest.mark.parametrize("name", ALL)
def test_zscore_population_matches_sklearn_standard_scaler(name):
    x = ALL[name]
    fc, params = fitted("zscore", x, sd="population")
    ref = preprocessing.StandardScaler().fit(x[:, None])  # scikit-learn: population sd
    assert params["ddof"] == 0
    assert params["mean"] == pytest.approx(ref.mean_[0], rel=1e-14, abs=1e-14)
    assert params["sd"] == pytest.approx(ref.scale_[0], rel=1e-13)
    close(fc.forward(x), ref.transform(x[:, None])[:, 0], 1e-12)


@pytest.mark.parametrize("name", ALL)
def test_zscore_sample_sd_matches_numpy_ddof1(name):
    x = ALL[name]
    _, params = fitted("zscore", x)
    assert params["ddof"] == 1
    assert params["sd"] == pytest.approx(np.std(x, ddof=1), rel=1e-13)  # numpy, ddof=1


@pytest.mark.parametrize("name", ALL)
def test_robust_matches_sklearn_and_type7_quantiles(name):
    x = ALL[name]
    fc, params = fitted("robust", x)
    ref = preprocessing.RobustScaler().fit(x[:, None])  # scikit-learn, quantile_range 25..75
    assert params["median"] == pytest.approx(ref.center_[0], rel=1e-15)
    assert params["scale"] == pytest.approx(ref.scale_[0], rel=1e-14)
    # numpy's "linear" method is Hyndman and Fan's type 7 (numpy documentation).
    q1, q3 = np.quantile(x, [0.25, 0.75], method="linear")
    assert (params["q1"], params["q3"]) == (q1, q3)
    close(fc.forward(x), ref.transform(x[:, None])[:, 0], 1e-13)


@pytest.mark.parametrize("name", ALL)
def test_maxabs_matches_sklearn(name):
    x = ALL[name]
    fc, params = fitted("maxabs", x)
    ref = preprocessing.MaxAbsScaler().fit(x[:, None])  # scikit-learn
    assert params["maxabs"] == ref.max_abs_[0]
    close(fc.forward(x), ref.transform(x[:, None])[:, 0], 1e-15)


@pytest.mark.parametrize("name", POSITIVE)
def test_boxcox_matches_scipy(name):
    x = POSITIVE[name]
    fc, params = fitted("boxcox", x, standardize="no")  # the raw transform, as scipy
    ref_y, ref_lambda = stats.boxcox(x)  # scipy.stats.boxcox (maximum likelihood)
    assert abs(params["lambda"] - ref_lambda) <= 1e-6
    assert abs(params["lambda"] - stats.boxcox_normmax(x, method="mle")) <= 1e-6  # scipy
    # Transformed values with scipy's own lambda agree to rounding (scipy.special.boxcox).
    ours = get_method("boxcox").forward(x, {"lambda": ref_lambda, "standardize": False})
    close(ours, ref_y, 1e-12)
    close(fc.forward(x), ref_y, 1e-6)  # with our lambda (within 1e-6 of scipy's)


@pytest.mark.parametrize("name", ALL)
def test_yeojohnson_matches_scipy(name):
    x = ALL[name]
    fc, params = fitted("yeojohnson", x, standardize="no")  # the raw transform, as scipy
    ref_y, ref_lambda = stats.yeojohnson(x)  # scipy.stats.yeojohnson (maximum likelihood)
    assert abs(params["lambda"] - ref_lambda) <= 1e-6
    assert abs(params["lambda"] - stats.yeojohnson_normmax(x)) <= 1e-6  # scipy
    ours = get_method("yeojohnson").forward(x, {"lambda": ref_lambda, "standardize": False})
    close(ours, ref_y, 1e-12)
    # Transformed values with our lambda, relative to scipy's: ~1e-9.
    close(fc.forward(x), stats.yeojohnson(x, lmbda=params["lambda"]), 1e-9)


@pytest.mark.parametrize("name", ALL)
def test_yeojohnson_standardized_matches_sklearn_power_transformer(name):
    x = ALL[name]
    fc, params = fitted("yeojohnson", x, standardize="yes")
    ref = preprocessing.PowerTransformer(method="yeo-johnson", standardize=True)
    ref_scaled = ref.fit_transform(x[:, None])[:, 0]  # scikit-learn
    assert abs(params["lambda"] - ref.lambdas_[0]) <= 1e-6
    # scikit-learn divides by the population sd; we divide by the sample sd (ddof=1, kept
    # in the parameters), so ours = sklearn * sqrt((n-1)/n).
    assert params["ddof"] == 1
    n = x.size
    close(fc.forward(x), ref_scaled * np.sqrt((n - 1) / n), 1e-6)


@pytest.mark.parametrize("name", POSITIVE)
def test_boxcox_standardized_matches_sklearn_power_transformer(name):
    x = POSITIVE[name]
    fc, params = fitted("boxcox", x, standardize=True)
    ref = preprocessing.PowerTransformer(method="box-cox", standardize=True)
    ref_scaled = ref.fit_transform(x[:, None])[:, 0]  # scikit-learn
    assert abs(params["lambda"] - ref.lambdas_[0]) <= 1e-6
    n = x.size
    close(fc.forward(x), ref_scaled * np.sqrt((n - 1) / n), 1e-6)  # sample vs population sd
    t = stats.boxcox(x, lmbda=params["lambda"])  # scipy
    assert params["mean"] == pytest.approx(np.mean(t), rel=1e-12, abs=1e-12)
    assert params["sd"] == pytest.approx(np.std(t, ddof=1), rel=1e-12)


@pytest.mark.parametrize("base,func", [("e", np.log), ("10", np.log10), ("2", np.log2)])
def test_log_matches_numpy(base, func):
    x = POSITIVE["lognormal"]
    fc, params = fitted("log", x, base=base)
    assert params["shift"] == 0.0
    close(fc.forward(x), func(x), 1e-15)  # numpy's logarithms
