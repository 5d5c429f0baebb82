"""Edge cases: each gives a clear warning or a ColumnError naming the column, never a
silent NaN or a crash. Expected behaviour from ../shared/DESIGN.md ("Methods") unless a
comment names another source. Tests marked "bug" were written first, from a bug found in
the engine, and failed before the fix.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from scalewright.engine import ColumnChoice, apply, fit, fit_column, get_method, restore
from scalewright.errors import ColumnError, OptionError


def fit_one(method, values, **options):
    table = pd.DataFrame({"weight_g": np.asarray(values, dtype=np.float64)})
    return fit(table, {"weight_g": ColumnChoice(method, options)})


# ------------------------------------------------------------------ constant columns


def test_constant_minmax_maps_to_low_with_warning():
    plan = fit_one("minmax", [4.0, 4.0, np.nan, 4.0], low=-1, high=1)
    assert any("same" in w for w in plan["weight_g"].warnings)
    y = plan["weight_g"].forward(np.array([4.0, np.nan, 9.0, np.inf]))
    assert y[0] == -1.0 and np.isnan(y[1]) and y[2] == -1.0 and y[3] == np.inf
    assert plan["weight_g"].inverse(np.array([-1.0]))[0] == 4.0


def test_constant_zscore_maps_to_zero_with_warning():
    plan = fit_one("zscore", [0.1] * 7)
    assert plan["weight_g"].pooled.params["sd"] == 0.0
    assert any("same" in w for w in plan["weight_g"].warnings)
    assert plan["weight_g"].forward(np.array([0.1, np.nan])).tolist()[0] == 0.0


@pytest.mark.parametrize("value", [0.1, 1 / 3, 1e15 + 0.3, 123.456, -7.77])
@pytest.mark.parametrize("n", [3, 10, 1001])
def test_constant_zscore_sd_is_exactly_zero(value, n):
    # A constant column must never get a tiny positive sd from rounding in the sums.
    params = get_method("zscore").fit(np.full(n, value), {"sd": "population"})
    assert params["sd"] == 0.0 and params["mean"] == value


def test_single_value_zscore_warns_too_few():
    plan = fit_one("zscore", [5.0, np.nan])
    assert any("too few" in w for w in plan["weight_g"].warnings)


@pytest.mark.parametrize("method", ["boxcox", "yeojohnson"])
def test_constant_power_transform_is_an_error(method):
    with pytest.raises(ColumnError, match="weight_g.*same"):
        fit_one(method, [3.0, 3.0, 3.0])


@pytest.mark.parametrize(
    "method", ["minmax", "zscore", "decimal", "robust", "maxabs", "log", "boxcox", "yeojohnson"]
)
def test_all_missing_column_is_an_error(method):
    with pytest.raises(ColumnError, match="weight_g.*no numbers"):
        fit_one(method, [np.nan, np.nan, np.inf])


def test_text_column_is_an_error_naming_it():
    table = pd.DataFrame({"orchard": ["north", "south"]})
    with pytest.raises(ColumnError, match="orchard.*not a numeric"):
        fit(table, {"orchard": ColumnChoice("zscore")})


def test_missing_column_is_an_error_naming_it():
    with pytest.raises(ColumnError, match="girth_cm.*no such column"):
        fit(pd.DataFrame({"a": [1.0]}), {"girth_cm": ColumnChoice("zscore")})


# ------------------------------------------------------------------ zeros and spreads


def test_iqr_zero_uses_scale_one_with_warning():
    plan = fit_one("robust", [0, 0, 0, 0, 0, 0, 0, 5.0, 9.0])
    params = plan["weight_g"].pooled.params
    assert params["q1"] == params["q3"] == 0.0 and params["scale"] == 1.0
    assert any("IQR 0" in w for w in plan["weight_g"].warnings)
    assert plan["weight_g"].forward(np.array([5.0]))[0] == 5.0


def test_bug_robust_with_an_iqr_too_narrow_for_the_other_values():
    # bug (found by hypothesis): IQR 2.2e-308 sent -4 to -inf; now a scale of 1, warned.
    plan = fit_one("robust", [0.0, 0.0, 0.0, -4.0, -2.2250738585072014e-308])
    assert plan["weight_g"].pooled.params["scale"] == 1.0
    assert any("too narrow" in w or "so narrow" in w for w in plan["weight_g"].warnings)
    assert plan["weight_g"].forward(np.array([-4.0]))[0] == -4.0


def test_all_zeros_decimal_keeps_j_zero_with_warning():
    plan = fit_one("decimal", [0.0, 0.0, -0.0])
    assert plan["weight_g"].pooled.params["j"] == 0
    assert any("zero" in w for w in plan["weight_g"].warnings)


def test_all_zeros_maxabs_divides_by_one_with_warning():
    plan = fit_one("maxabs", [0.0, 0.0])
    assert plan["weight_g"].pooled.params["maxabs"] == 1.0
    assert any("zero" in w for w in plan["weight_g"].warnings)


def test_boxcox_non_positive_points_to_yeojohnson():
    with pytest.raises(ColumnError, match="weight_g.*Yeo-Johnson"):
        fit_one("boxcox", [0.0, 1.0, 2.0])
    with pytest.raises(ColumnError, match="Yeo-Johnson"):
        fit_one("boxcox", [-1.0, 1.0, 2.0])


@pytest.mark.parametrize("values", [[0.0, 1.0, 9.0], [-4.0, 0.5, 3.0]])
def test_log_with_zero_or_negative_fits_a_shift_with_warning(values):
    plan = fit_one("log", values)
    fc = plan["weight_g"]
    shift = fc.pooled.params["shift"]
    assert shift == 1.0 - min(values)  # common practice: the smallest value maps to log(1) = 0
    assert any(repr(shift) in w for w in fc.warnings)  # the shift is shown to the user
    y = fc.forward(np.array(values))
    assert y[0] == 0.0 and np.all(np.isfinite(y))


def test_log_of_new_values_below_the_shift_is_reported_not_silent():
    plan = fit_one("log", [1.0, 2.0, 3.0])
    scaled, reports = apply(pd.DataFrame({"weight_g": [2.0, 0.0, -5.0]}), plan)
    assert reports[0].n_undefined == 2
    assert any("left blank" in w for w in reports[0].warnings)
    assert reports[0].n_below == 2


# ------------------------------------------------------------------ inverse out of domain


def test_boxcox_inverse_out_of_domain_is_counted_in_restore():
    plan = fit_one("boxcox", [1.0, 2.0, 3.0, 4.0, 10.0], standardize="no")  # raw transform
    lam = plan["weight_g"].pooled.params["lambda"]
    # Box and Cox (1964): y = (x^lam - 1)/lam, so x = (lam*y + 1)^(1/lam) needs lam*y > -1;
    # y = -2/lam gives lam*y + 1 = -1, which no original value maps to.
    scaled = pd.DataFrame({"weight_g": [0.5, -2.0 / lam, np.nan]})
    back, reports = restore(scaled, plan)
    assert reports[0].n_undefined == 1
    assert any("no value in original units" in w for w in reports[0].warnings)
    assert np.isnan(back["weight_g"].iloc[1]) and np.isfinite(back["weight_g"].iloc[0])


def test_yeojohnson_inverse_out_of_domain_is_counted_in_restore():
    x = np.random.default_rng(3).lognormal(0.0, 1.0, 300)
    plan = fit_one("yeojohnson", x, standardize="no")  # raw transform
    lam = plan["weight_g"].pooled.params["lambda"]
    assert lam < 0  # right-skewed: the positive branch is bounded above by -1/lam
    back, reports = restore(pd.DataFrame({"weight_g": [0.1, -2.0 / lam]}), plan)
    assert reports[0].n_undefined == 1
    assert any("left blank" in w for w in reports[0].warnings)


def test_bug_restore_overflow_to_infinity_is_reported():
    # bug: exp(1000) overflowed to inf in restore with n_undefined == 0 and no warning.
    plan = fit_one("log", [1.0, 2.0, 4.0])
    back, reports = restore(pd.DataFrame({"weight_g": [1000.0, 1.0, np.inf]}), plan)
    assert reports[0].n_undefined == 1
    assert np.isnan(back["weight_g"].iloc[0])
    assert back["weight_g"].iloc[2] == np.inf  # a real infinity passes through
    assert any("left blank" in w for w in reports[0].warnings)


# ------------------------------------------------------------------ decimal scaling


@pytest.mark.parametrize(
    ("biggest", "j"),
    [
        (1000.0, 4),  # exactly a power of ten: 1000/10^3 = 1 is not < 1 (textbook definition)
        (999.0, 3),
        (1.0, 1),
        (0.5, 0),
        (0.00123, -2),  # 0.00123 * 100 = 0.123; 0.00123 * 1000 = 1.23
        (0.001, -2),
        (986.0, 3),  # Han, Kamber and Pei 3rd ed., 3.5.2
    ],
)
def test_decimal_j(biggest, j):
    x = np.array([-biggest / 2, biggest])
    params = get_method("decimal").fit(x, {})
    assert params["j"] == j
    assert np.max(np.abs(get_method("decimal").forward(x, params))) < 1


@pytest.mark.parametrize("value", [1e308, 1.7976931348623157e308, 5e-324, 1e-310])
def test_bug_decimal_at_float_limits_is_a_clear_error(value):
    # bug: OverflowError (10.0**309) and ZeroDivisionError (10.0**-324) escaped the engine.
    with pytest.raises(ColumnError, match="weight_g.*max-abs"):
        fit_one("decimal", [value])


# ------------------------------------------------------------------ float limits


def test_bug_minmax_span_beyond_float_range():
    # bug: max - min overflowed to inf, and every value became 0 or NaN.
    plan = fit_one("minmax", [-1.7e308, 0.0, 1.7e308])
    y = plan["weight_g"].forward(np.array([-1.7e308, 0.0, 1.7e308]))
    assert y.tolist() == [0.0, 0.5, 1.0]
    back = plan["weight_g"].inverse(y)
    assert back.tolist() == [-1.7e308, 0.0, 1.7e308]


def test_bug_minmax_subnormal_span():
    # bug (found by hypothesis): (high-low)/span overflowed for the span 5e-324.
    plan = fit_one("minmax", [0.0, 5e-324])
    assert plan["weight_g"].forward(np.array([0.0, 5e-324])).tolist() == [0.0, 1.0]


def test_bug_zscore_of_huge_values():
    # bug: the squares overflowed (|x| > 1e154), sd became inf and every value 0, silently.
    plan = fit_one("zscore", [1e200, 2e200, 3e200])
    assert plan["weight_g"].pooled.params["sd"] == pytest.approx(1e200, rel=1e-15)
    y = plan["weight_g"].forward(np.array([1e200, 2e200, 3e200]))
    np.testing.assert_allclose(y, [-1.0, 0.0, 1.0], atol=1e-15)


def test_zscore_spread_beyond_float_range_is_an_error():
    with pytest.raises(ColumnError, match="weight_g.*too far apart"):
        fit_one("zscore", [-1.7e308, 1.7e308])


def test_bug_yeojohnson_on_values_next_to_zero():
    # bug (found by hypothesis): scipy's bound formula divided by log1p(20 * 5e-324) == 0
    # and optimize.fminbound raised "bounds must be finite".
    plan = fit_one("yeojohnson", [0.0, 5e-324])
    assert plan["weight_g"].pooled.params["lambda"] == 1.0


def test_bug_extreme_lambda_is_reported():
    # bug (found by hypothesis): with lambda = 19 the Yeo-Johnson transform squeezes these
    # values together and turning them back loses ~5 digits, silently.
    # scipy.stats.yeojohnson_normmax gives the same lambda (19.03...) for these values.
    plan = fit_one("yeojohnson", [-5.0, -4.5, -4.5])
    assert plan["weight_g"].pooled.params["lambda"] > 10
    assert any("extreme" in w for w in plan["weight_g"].warnings)


# ------------------------------------------------------------------ options


def test_minmax_low_not_below_high_is_an_option_error():
    with pytest.raises(OptionError, match="low < high"):
        ColumnChoice("minmax", {"low": 1, "high": 1}).normalized()
    with pytest.raises(OptionError):
        get_method("minmax").options({"low": "2", "high": "-1"})


def test_unknown_method_lists_the_methods():
    with pytest.raises(OptionError) as err:
        get_method("sort-of-scale")
    for name in [
        "none",
        "minmax",
        "zscore",
        "decimal",
        "robust",
        "maxabs",
        "log",
        "boxcox",
        "yeojohnson",
    ]:
        assert name in str(err.value)


def test_unknown_option_lists_the_options():
    with pytest.raises(OptionError, match="low, high"):
        get_method("minmax").options({"lo": 0})
    with pytest.raises(OptionError, match="none"):
        get_method("maxabs").options({"base": 10})


def test_options_parsed_from_text():
    assert get_method("minmax").options({"low": "-1", "high": " 1 "}) == {"low": -1.0, "high": 1.0}
    assert get_method("zscore").options({"sd": "Population"}) == {"sd": "population"}
    assert get_method("boxcox").options({"standardize": "yes"}) == {"standardize": True}
    assert get_method("yeojohnson").options({"standardize": "no"}) == {"standardize": False}
    assert get_method("log").options({"base": "10"}) == {"base": "10"}
    assert get_method(" ZScore ").id == "zscore"


@pytest.mark.parametrize(
    ("method", "options", "words"),
    [
        ("zscore", {"sd": "median"}, "sample, population"),
        ("log", {"base": "3"}, "e, 10, 2"),
        ("boxcox", {"standardize": "maybe"}, "yes or no"),
        ("minmax", {"low": "abc"}, "number"),
        ("minmax", {"high": "inf"}, "finite"),
    ],
)
def test_bad_option_values_say_what_is_allowed(method, options, words):
    with pytest.raises(OptionError, match=words):
        get_method(method).options(options)


def test_fit_column_names_the_group_in_errors():
    x = np.array([1.0, 2.0, 3.0, 5.0, 5.0, 5.0])
    codes = np.array([0, 0, 0, 1, 1, 1])
    with pytest.raises(ColumnError, match="weight_g.*group 'B'"):
        fit_column(x, ColumnChoice("boxcox"), column="weight_g", group_keys=(codes, ["A", "B"]))
