"""Worked examples from Han, Kamber and Pei, Data Mining: Concepts and Techniques,
3rd ed. (Morgan Kaufmann, 2012), section 3.5.2 "Data Transformation by Normalization".
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from scalewright.engine import ColumnChoice, apply, fit, get_method


def test_min_max_income_example():
    # Han, Kamber and Pei 3.5.2: income 12,000..98,000 mapped to [0, 1]; 73,600 -> 0.716.
    params = get_method("minmax").fit(np.array([12_000.0, 98_000.0]), {"low": 0.0, "high": 1.0})
    scaled = get_method("minmax").forward(np.array([73_600.0]), params)
    assert round(float(scaled[0]), 3) == 0.716


def test_z_score_income_example():
    # Han, Kamber and Pei 3.5.2: mean 54,000 and sd 16,000; 73,600 -> 1.225.
    params = {"mean": 54_000.0, "sd": 16_000.0, "ddof": 1}
    scaled = get_method("zscore").forward(np.array([73_600.0]), params)
    assert round(float(scaled[0]), 3) == 1.225


def test_decimal_scaling_example():
    # Han, Kamber and Pei 3.5.2: values from -986 to 917; max |v| = 986, so j = 3 and
    # -986 -> -0.986, 917 -> 0.917.
    values = np.array([-986.0, 0.0, 917.0])
    params = get_method("decimal").fit(values, {})
    assert params["j"] == 3
    scaled = get_method("decimal").forward(values, params)
    assert scaled[0] == -0.986 and scaled[2] == 0.917  # correctly rounded: one division


def test_examples_through_a_table():
    # The same income example, fitted and applied through the plan on an invented table.
    table = pd.DataFrame({"income": [12_000.0, 98_000.0, 73_600.0]})
    plan = fit(table, {"income": ColumnChoice("minmax")})
    scaled, reports = apply(table, plan)
    assert round(float(scaled["income"].iloc[2]), 3) == 0.716  # Han, Kamber and Pei 3.5.2
    assert reports[0].n_outside == 0
