"""Bugs found in a code review of the engine, each pinned by a test written before the fix."""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest

import scalewright.engine.plan as plan_module
from scalewright.engine import (
    MAX_GROUPS,
    ColumnChoice,
    FitSettings,
    apply,
    fit,
    fit_column,
    fit_rows,
    get_method,
    group_codes,
    restore,
)
from scalewright.engine.methods import log_shift, robust_scale
from scalewright.engine.plan import rows_by_code
from scalewright.errors import ColumnError

# --------------------------------------------------------------------------- robust


def _narrow_middle() -> np.ndarray:
    # The middle half spans two units in the last place of 1.0 (IQR 4.44e-16), and the
    # extremes are so far out that (max - median) / IQR is beyond the largest float.
    one_up = np.nextafter(1.0, 2.0)
    return np.array([-1e300, 1.0, 1.0, one_up, np.nextafter(one_up, 2.0), 1e300])


def test_bug_robust_fallback_condition_is_one_shared_function():
    # bug: fit fell back to scale 1.0 when dividing by the IQR overflows, but the project
    # validation only allowed 1.0 when q3 <= q1, so the saved project did not load again.
    x = _narrow_middle()
    result = get_method("robust").fit(x, {})
    q1, median, q3 = result["q1"], result["median"], result["q3"]
    assert q3 - q1 == pytest.approx(4.440892098500626e-16, rel=0)
    assert result["scale"] == 1.0
    assert robust_scale(q1, median, q3, float(x.min()), float(x.max())) == 1.0
    assert any("so narrow" in w for w in result.warnings)


def test_robust_scale_is_the_iqr_for_ordinary_values_and_1_for_no_spread():
    assert robust_scale(1.0, 2.0, 4.0, 0.0, 10.0) == 3.0
    assert robust_scale(2.0, 2.0, 2.0, 0.0, 10.0) == 1.0  # IQR 0
    assert robust_scale(1.0, 1.5, 3.0, -1e307, 1e307) == 2.0  # 1e307 / 2 is finite
    assert robust_scale(1.0, 1.5, 1.5, -1e308, 1e308) == 1.0  # 1e308 / 0.5 overflows
    assert robust_scale(1.0, 1.0, 1.0 + 2**-40, 0.0, 1e300) == 1.0  # 1e300 * 2**40 overflows


# --------------------------------------------------------------------------- logarithm


@pytest.mark.parametrize("lo", [-9e15, -1e16, -3.0e17, -1e300, -(2.0**1000)])
def test_bug_log_shift_keeps_the_smallest_value_above_zero(lo):
    # bug: shift = 1 - lo rounded to -lo, so lo + shift == 0 and the smallest value's
    # logarithm was blank (and the project failed its own validation).
    x = np.array([lo, 0.0, 5.0])
    result = get_method("log").fit(x, {"base": "e"})
    shift = result["shift"]
    assert lo + shift > 0
    assert shift == log_shift(lo)
    fc = fit_column(x, ColumnChoice("log"), column="v")
    scaled = fc.forward(x)
    assert np.isfinite(scaled).all()
    # The smallest value keeps a logarithm below the others' (0 and 5 may round alike).
    assert scaled[0] < scaled[1] <= scaled[2]


def test_log_shift_is_unchanged_where_1_minus_min_was_already_enough():
    for lo in (0.0, -1.0, -2.5, -1e15, -123456.789):
        assert log_shift(lo) == 1.0 - lo


def test_log_shift_impossible_at_the_end_of_the_float_range_points_at_yeo_johnson():
    x = np.array([-np.finfo(float).max, 1.0])
    with pytest.raises(ColumnError, match="Yeo-Johnson"):
        fit_column(x, ColumnChoice("log"), column="v")


# --------------------------------------------------------------------------- yes/no columns


@pytest.mark.parametrize(
    "typed, expected",
    [
        ("true", [True, False, True]),
        ("True", [True, False, True]),
        (" YES ", [True, False, True]),
        ("yes", [True, False, True]),
        ("1", [True, False, True]),
        (True, [True, False, True]),
        ("false", [False, True, False]),
        ("False", [False, True, False]),
        ("No", [False, True, False]),
        ("0", [False, True, False]),
        (False, [False, True, False]),
    ],
)
@pytest.mark.parametrize("dtype", ["bool", "boolean"])
def test_bug_fit_where_on_a_yes_no_column_accepts_the_usual_words(typed, expected, dtype):
    # bug: the key of True is "true", so "True", "yes" or "1" typed by the user matched no row.
    table = pd.DataFrame(
        {"train": pd.Series([True, False, True], dtype=dtype), "v": [1.0, 2.0, 3.0]}
    )
    assert fit_rows(table, FitSettings(fit_where=("train", typed))).tolist() == expected


def test_fit_where_on_a_yes_no_column_still_refuses_other_words():
    table = pd.DataFrame({"train": [True, False], "v": [1.0, 2.0]})
    with pytest.raises(ColumnError, match="maybe"):
        fit_rows(table, FitSettings(fit_where=("train", "maybe")))


def test_fit_where_yes_on_a_text_column_is_still_the_text():
    # Only yes/no columns read the words; in a text column "yes" is the text "yes".
    table = pd.DataFrame({"train": ["yes", "true", "yes"], "v": [1.0, 2.0, 3.0]})
    assert fit_rows(table, FitSettings(fit_where=("train", "yes"))).tolist() == [
        True,
        False,
        True,
    ]


# --------------------------------------------------------------------------- grouping


def test_bug_too_many_groups_is_an_error_naming_the_column_and_the_count():
    # bug: each group scanned every row (rows x groups); 20,000 groups took seconds and a
    # million rows would not finish. Now there is one limit, in the engine.
    n = 20_000
    table = pd.DataFrame({"plot": np.arange(n), "v": np.arange(n, dtype=float)})
    message = r"column 'plot': has 20,000 different values; grouping works with at most 1,000"
    with pytest.raises(ColumnError, match=message):
        fit(table, {"v": ColumnChoice("zscore")}, FitSettings(group_by="plot"))
    with pytest.raises(ColumnError, match=message):
        group_codes(table["plot"])  # what the window calls


def test_max_groups_is_the_limit_exactly():
    assert MAX_GROUPS == 1_000
    table = pd.DataFrame(
        {"plot": np.repeat(np.arange(MAX_GROUPS), 2), "v": np.arange(2.0 * MAX_GROUPS)}
    )
    plan = fit(table, {"v": ColumnChoice("minmax")}, FitSettings(group_by="plot"))
    assert len(plan["v"].groups) == MAX_GROUPS
    assert plan["v"].groups["999"].min == 1998.0 and plan["v"].groups["999"].max == 1999.0
    more = pd.concat([table, pd.DataFrame({"plot": [MAX_GROUPS], "v": [0.0]})])
    with pytest.raises(ColumnError, match="1,001 different values"):
        fit(more, {"v": ColumnChoice("minmax")}, FitSettings(group_by="plot"))


def _group_by_group(values, codes, keys, use, method, options):
    """The fit of each group on its own, the obvious (slow) way, in order of the rows."""
    out = {}
    for code, key in enumerate(keys):
        rows = use & (codes == code)
        if rows.any():
            out[key] = get_method(method).fit(values[rows], options)
    return out


@pytest.mark.parametrize("method", ["zscore", "robust", "yeojohnson", "minmax", "log"])
def test_grouped_fit_in_one_pass_equals_fitting_each_group_alone(method):
    rng = np.random.default_rng(7)
    n = 3_000
    values = rng.lognormal(2.0, 1.0, n)
    values[rng.integers(0, n, 60)] = np.nan
    values[rng.integers(0, n, 5)] = np.inf
    group = pd.Series(rng.choice(["a", "b", "c", "d", "e", None], n), dtype=object)
    mask = rng.random(n) < 0.7
    choice = ColumnChoice(method).normalized()
    codes, keys = group_codes(group)
    fc = fit_column(values, choice, column="v", fit_mask=mask, group_keys=(codes, keys))
    use = np.isfinite(values) & mask
    expected = _group_by_group(values, codes, keys, use, method, choice.options)
    assert list(fc.groups) == list(expected)  # same groups, same order
    for key, result in expected.items():
        assert fc.groups[key].params == dict(result)  # bit for bit
        assert fc.groups[key].n == int(np.count_nonzero(use & (codes == keys.index(key))))


def test_applying_to_a_file_with_many_unseen_groups_uses_the_pooled_parameters():
    # A new file may hold more group values than were fitted; those rows use the pooled
    # parameters, in one pass as well.
    plan = fit(
        pd.DataFrame({"plot": ["a", "a", "b", "b"], "v": [0.0, 2.0, 10.0, 20.0]}),
        {"v": ColumnChoice("minmax")},
        FitSettings(group_by="plot"),
    )
    n = 5_000
    new = pd.DataFrame(
        {
            "plot": ["a", "b", None] + [f"p{i}" for i in range(n)],
            "v": [1.0, 15.0, 10.0] + [5.0] * n,
        }
    )
    scaled, reports = apply(new, plan)
    assert scaled["v"].tolist() == [0.5, 0.5, 0.5] + [0.25] * n
    assert len(reports[0].unseen_groups) == n
    back, _ = restore(scaled, plan)
    assert back["v"].tolist() == new["v"].tolist()
    assert not math.isnan(back["v"].iloc[2])


def test_rows_by_code_splits_in_row_order_and_leaves_out_missing():
    codes = np.array([2, 0, -1, 2, 0, 1, 2])
    use = np.array([True, True, True, False, True, True, True])
    split = rows_by_code(codes, use)
    assert list(split) == [0, 1, 2]
    assert [split[c].tolist() for c in split] == [[1, 4], [5], [0, 6]]
    assert rows_by_code(codes[:0]) == {}
    assert rows_by_code(np.array([-1, -1])) == {}


def test_applying_to_an_empty_grouped_table_gives_an_empty_column():
    plan = fit(
        pd.DataFrame({"plot": ["a", "b"], "v": [1.0, 2.0]}),
        {"v": ColumnChoice("zscore")},
        FitSettings(group_by="plot"),
    )
    empty = pd.DataFrame({"plot": pd.Series([], dtype=str), "v": pd.Series([], dtype=float)})
    scaled, reports = apply(empty, plan)
    assert scaled["v"].tolist() == [] and reports[0].n_values == 0


# --------------------------------------------------------------------------- no copies


def test_fit_without_a_fit_row_condition_passes_no_mask(monkeypatch):
    # Review item: with no 'fit on rows where', fit must not build and pass an all-true mask
    # (fit_column then fits on the column itself without copying it).
    seen = {}
    original = plan_module.fit_column

    def spy(values, choice, **kwargs):
        seen["fit_mask"] = kwargs["fit_mask"]
        return original(values, choice, **kwargs)

    monkeypatch.setattr(plan_module, "fit_column", spy)
    fit(pd.DataFrame({"v": [1.0, 2.0, 3.0]}), {"v": ColumnChoice("zscore")})
    assert seen["fit_mask"] is None
