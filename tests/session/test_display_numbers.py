"""Numbers in the window's one-line fit description go through engine/number_text: no
negative zero, and the ASCII minus (issue 8, item 8; docs/decisions.md "One minus sign")."""

from __future__ import annotations

import re

import numpy as np

from scalewright.engine import ColumnChoice, fit_column
from scalewright.session.display import describe_outcome
from scalewright.session.fits import Fitted


def _line(values, method: str) -> str:
    fc = fit_column(np.array(values, dtype=float), ColumnChoice(method), column="x")
    return describe_outcome(Fitted(fc))


def test_a_fitted_minimum_of_negative_zero_is_written_without_a_sign():
    # np.min of [-0.0, ...] is -0.0 (IEEE 754 keeps the sign of zero)
    assert np.signbit(np.min(np.array([-0.0, 1.0, 2.0])))
    line = _line([-0.0, 1.0, 2.0], "minmax")
    assert re.search(r"\b0\b", line), line
    assert "-0" not in line and "\u2212" not in line


def test_negative_parameters_use_the_ascii_minus():
    # mean of -5, -3, -1 is -3 and the sample sd is 2 (worked by hand)
    line = _line([-5.0, -3.0, -1.0], "zscore")
    assert "mean -3" in line, line
    assert "sd 2" in line
    assert "\u2212" not in line  # nor in the words: "divides by n-1"
