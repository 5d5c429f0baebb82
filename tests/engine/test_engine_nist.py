"""Z-score fitting against the NIST StRD univariate reference datasets.

Source of every expected value: NIST Statistical Reference Datasets, Univariate Summary
Statistics (certified sample mean and sample sd, denominator n-1), as stored in
``../shared/reference/nist_strd/``. Tolerances from ``../shared/reference/README.md``.
"""

from __future__ import annotations

import json

import numpy as np
import pytest

from scalewright.engine import ColumnChoice, fit_column, get_method
from support import SHARED_REFERENCE

NIST = SHARED_REFERENCE / "nist_strd"
NAMES = [
    "Lew",
    "Lottery",
    "Mavro",
    "Michelso",
    "NumAcc1",
    "NumAcc2",
    "NumAcc3",
    "NumAcc4",
    "PiDigits",
]
# Relative sd tolerance per set (reference README: what a double two-pass computation reaches).
SD_RTOL = {"NumAcc3": 1e-8, "NumAcc4": 1e-7}


def load(name: str) -> tuple[np.ndarray, float, float]:
    record = json.loads((NIST / f"{name}.json").read_text(encoding="utf-8"))
    values = np.array([float(text) for text in record["values_text"]])
    assert values.size == record["n"]
    return values, float(record["certified_text"]["mean"]), float(record["certified_text"]["sd"])


def test_all_nine_sets_are_there():
    assert sorted(p.stem for p in NIST.glob("*.json")) == sorted(NAMES)


@pytest.mark.parametrize("name", NAMES)
def test_zscore_fit_matches_certified_mean_and_sd(name):
    values, mean, sd = load(name)
    params = get_method("zscore").fit(values, {"sd": "sample"})
    assert params["ddof"] == 1
    assert abs(params["mean"] - mean) <= 1e-13 * abs(mean)  # NIST certified mean
    assert abs(params["sd"] - sd) <= SD_RTOL.get(name, 1e-11) * sd  # NIST certified sd


@pytest.mark.parametrize("name", NAMES)
def test_same_figures_through_the_plan(name):
    values, mean, sd = load(name)
    fitted = fit_column(values, ColumnChoice("zscore"), column=name)
    assert abs(fitted.pooled.params["mean"] - mean) <= 1e-13 * abs(mean)  # NIST certified
    assert abs(fitted.pooled.params["sd"] - sd) <= SD_RTOL.get(name, 1e-11) * sd  # NIST certified
    scaled = fitted.forward(values)
    # The scaled column has mean 0 and sample sd 1 (definition of the z-score).
    assert abs(np.mean(scaled)) < 1e-6
    assert abs(np.std(scaled, ddof=1) - 1.0) < 1e-6


def test_one_pass_formula_would_fail_numacc4():
    """Why the engine uses two passes (documentation by test; reference README).

    The textbook one-pass formula var = (sum(x^2) - n*mean^2) / (n-1) loses every digit
    on NumAcc4 (mean 1e7, sd 0.1): it misses the certified sd by far more than 1e-7.
    """
    values, mean, sd = load("NumAcc4")
    n = values.size
    one_pass_var = (float(np.sum(values * values)) - n * float(np.mean(values)) ** 2) / (n - 1)
    one_pass_sd = np.sqrt(one_pass_var) if one_pass_var > 0 else float("nan")
    assert not abs(one_pass_sd - sd) <= 1e-7 * sd  # fails (or is NaN for a negative variance)
    ours = get_method("zscore").fit(values, {"sd": "sample"})["sd"]
    assert abs(ours - sd) <= 1e-7 * sd
