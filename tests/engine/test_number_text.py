"""Numbers for people: no negative zero, and one minus sign (issue 8, item 8 "Words")."""

from __future__ import annotations

import math

import numpy as np
import pytest

from scalewright.engine.number_text import number_text


@pytest.mark.parametrize(
    ("value", "spec", "shown"),
    [
        (-0.0, ".10g", "0"),
        (-0.04, ".1f", "0.0"),  # the "skewness -0.0" a new user saw
        (-0.00004, ".2%", "0.00%"),
        (-0.0, ".0e", "0e+00"),
        (-0.0, "r", "0.0"),
        (-0.0, ",.0f", "0"),
        # real negatives keep their sign, written with the ASCII hyphen-minus
        (-0.05, ".1f", "-0.1"),
        (-2.5, ".10g", "-2.5"),
        (-1e-17, ".10g", "-1e-17"),
        (-1234.5, ",.0f", "-1,234"),
        (0.1 + 0.2, "r", "0.30000000000000004"),
        (7, "d", "7"),
    ],
)
def test_no_negative_zero_and_one_minus_sign(value, spec, shown):
    assert number_text(value, spec) == shown
    assert "\u2212" not in number_text(value, spec)


def test_missing_is_nan():
    assert number_text(math.nan) == "nan"


def test_suggest_says_skewness_zero_not_minus_zero():
    from scipy import stats

    from scalewright.engine.diagnostics import describe, suggest

    values = np.append(np.arange(1.0, 11.0), 6.0)
    # Reference: scipy.stats.skew (the moment coefficient, as describe computes it).
    assert -0.05 < stats.skew(values) < 0
    reason = suggest(describe(values)).reason
    assert "skewness 0.0)" in reason and "-0.0" not in reason


def test_parameter_words_show_a_zero_parameter_without_a_sign():
    # The method's own description is what the command line's show table, the dialogs and
    # the window print.
    from scalewright.engine import get_method

    z = {"mean": -0.0, "sd": 2.5, "ddof": 1}
    assert get_method("zscore").describe_params(z, brief=True) == "mean 0, sd 2.5"
    mm = {"min": -3.25, "max": 4.0, "low": -1.0, "high": 1.0}
    assert get_method("minmax").describe_params(mm) == (
        "smallest -3.25, largest 4, smallest becomes -1, largest becomes 1"
    )
    # Not "added first 0", as it read before a new user's eye fell on it.
    log = {"base": "e", "shift": -0.0}
    assert get_method("log").describe_params(log) == "logarithm base e, shift 0"


def test_the_window_figures_use_the_ascii_minus_and_no_negative_zero():
    from scalewright.gui.histograms import fmt

    assert fmt(-0.0) == "0"
    assert fmt(-2.5) == "-2.5"
    assert fmt(-1234.0) == "-1,234"
    assert fmt(float("-inf")) == "-∞"


def test_no_method_word_uses_another_minus_sign():
    """Every label, choice, fitted line and guide text of every method uses the ASCII minus,
    as the numbers do (issue 8, item 8: "divides by n-1"); the robust spread's label and
    the sample sd's words had the Unicode one."""
    from scalewright import guide
    from scalewright.engine import METHODS

    words = [guide.guide_markdown()]
    x = np.array([-3.5, -1.0, 0.0, 2.5, 4.0, 9.0])  # values of both signs (invented)
    for method in METHODS.values():
        words += [spec.label for spec in method.param_specs]
        words += [spec.shown_label for spec in method.option_specs]
        words += [spec.choice_words(c) for spec in method.option_specs for c in spec.choices]
        data = x - x.min() + 1.0 if method.id in ("boxcox", "log") else x
        words.append(method.describe_params(method.fit(data, method.options())))
    assert not [w for w in words if "\u2212" in w]
