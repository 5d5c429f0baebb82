"""The plan over a table: fit rows, groups, apply, clip, restore, mappings.

Expected behaviour from ../shared/DESIGN.md ("Options that apply across methods", "Command
line": restore --as). The tables are invented. Tests marked "bug" failed before the fix.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from scalewright.engine import (
    ColumnChoice,
    FitSettings,
    apply,
    fit,
    fit_column,
    fit_rows,
    group_codes,
    restore,
    value_key,
)
from scalewright.errors import ColumnError


def orchard_table(n: int = 60, seed: int = 11) -> pd.DataFrame:
    rng = np.random.default_rng(seed)
    return pd.DataFrame(
        {
            "tree": [f"{i:04d}" for i in range(n)],
            "site": rng.choice(["upper", "lower", "creek"], n),
            "split": np.where(np.arange(n) % 4 == 0, "test", "train"),
            "yield_kg": rng.lognormal(3.0, 0.5, n),
            "girth_cm": rng.normal(60.0, 12.0, n),
        }
    )


def test_fit_on_rows_where_column_is_value_does_not_leak():
    table = orchard_table()
    settings = FitSettings(fit_where=("split", "train"))
    plan = fit(
        table, {"yield_kg": ColumnChoice("zscore"), "girth_cm": ColumnChoice("minmax")}, settings
    )
    train = table[table["split"] == "train"]
    alone = fit(train, {"yield_kg": ColumnChoice("zscore"), "girth_cm": ColumnChoice("minmax")})
    for column in ("yield_kg", "girth_cm"):
        assert plan[column].pooled.params == alone[column].pooled.params
        assert plan[column].pooled.n == len(train)
    assert plan.n_rows == len(train)
    # ...and the parameters are applied to every row, test rows included
    scaled, _ = apply(table, plan)
    test_rows = table["split"] == "test"
    expected = (table.loc[test_rows, "yield_kg"] - alone["yield_kg"].pooled.params["mean"]) / (
        alone["yield_kg"].pooled.params["sd"]
    )
    np.testing.assert_allclose(scaled.loc[test_rows, "yield_kg"], expected, rtol=1e-15)


def test_fit_where_value_not_found_is_an_error():
    with pytest.raises(ColumnError, match="split.*holdout"):
        fit(
            orchard_table(),
            {"yield_kg": ColumnChoice("zscore")},
            FitSettings(fit_where=("split", "holdout")),
        )
    with pytest.raises(ColumnError, match="phase"):
        fit(
            orchard_table(),
            {"yield_kg": ColumnChoice("zscore")},
            FitSettings(fit_where=("phase", "train")),
        )


def test_bug_fit_where_number_typed_as_text_matches_numeric_column():
    # bug: "3.0" typed by the user did not match the integer 3 of a numeric column.
    table = pd.DataFrame({"season": [3, 3, 4, 4], "v": [1.0, 2.0, 30.0, 40.0]})
    for typed in ("3", "3.0", " 3 ", 3, 3.0):
        mask = fit_rows(table, FitSettings(fit_where=("season", typed)))
        assert mask.tolist() == [True, True, False, False]


def test_groups_get_their_own_parameters_and_unseen_groups_the_pooled_ones():
    table = orchard_table()
    plan = fit(table, {"girth_cm": ColumnChoice("zscore")}, FitSettings(group_by="site"))
    fc = plan["girth_cm"]
    assert set(fc.groups) == {"upper", "lower", "creek"}
    for site in ("upper", "lower", "creek"):
        alone = fit_column(
            table.loc[table["site"] == site, "girth_cm"].to_numpy(),
            ColumnChoice("zscore"),
            column="girth_cm",
        )
        assert fc.groups[site].params == alone.pooled.params
    pooled = fit_column(table["girth_cm"].to_numpy(), ColumnChoice("zscore"), column="girth_cm")
    assert fc.pooled.params == pooled.pooled.params

    new = pd.DataFrame({"site": ["upper", "ridge", "valley", None], "girth_cm": [60.0] * 4})
    scaled, reports = apply(new, plan)
    assert reports[0].unseen_groups == ["ridge", "valley"]
    assert any("'ridge'" in w and "'valley'" in w for w in reports[0].warnings)
    up = fc.groups["upper"].params
    assert scaled["girth_cm"].iloc[0] == pytest.approx((60.0 - up["mean"]) / up["sd"], rel=1e-15)
    p = fc.pooled.params
    assert scaled["girth_cm"].iloc[1] == pytest.approx((60.0 - p["mean"]) / p["sd"], rel=1e-15)
    assert scaled["girth_cm"].iloc[3] == scaled["girth_cm"].iloc[1]  # no group: pooled


def test_groups_with_fit_where():
    table = orchard_table()
    plan = fit(
        table,
        {"girth_cm": ColumnChoice("maxabs")},
        FitSettings(fit_where=("split", "train"), group_by="site"),
    )
    rows = (table["split"] == "train") & (table["site"] == "creek")
    assert (
        plan["girth_cm"].groups["creek"].params["maxabs"] == table.loc[rows, "girth_cm"].abs().max()
    )


def test_bug_equal_group_keys_form_one_group():
    # bug: 3 and 3.0 (and "3") in one object column were separate codes with the same key;
    # the later one overwrote the group, fitted on part of its rows only.
    table = pd.DataFrame(
        {
            "plot": pd.Series([3, 3.0, "3", 4, 4.0, " 4"], dtype=object),
            "v": [1.0, 2.0, 3.0, 10.0, 20.0, 40.0],
        }
    )
    plan = fit(table, {"v": ColumnChoice("minmax")}, FitSettings(group_by="plot"))
    groups = plan["v"].groups
    assert set(groups) == {"3", "4"}
    assert (groups["3"].n, groups["3"].min, groups["3"].max) == (3, 1.0, 3.0)
    assert (groups["4"].n, groups["4"].min, groups["4"].max) == (3, 10.0, 40.0)
    scaled, reports = apply(table, plan)
    assert scaled["v"].tolist() == [0.0, 0.5, 1.0, 0.0, 1 / 3, 1.0]
    assert reports[0].unseen_groups == []


def test_bug_fit_column_merges_equal_keys_it_is_given():
    # bug: callers that factorize themselves (the window does) pass one code per raw value;
    # fit_column overwrote group "3" with the fit on the last code's rows only.
    column = pd.Series([3, 3.0, "3", 4], dtype=object)
    codes, uniques = pd.factorize(column)
    raw_keys = [value_key(u) for u in uniques]
    assert raw_keys == ["3", "3", "4"]  # 3 and 3.0 hash alike; "3" does not
    fc = fit_column(
        np.array([1.0, 2.0, 3.0, 9.0]),
        ColumnChoice("minmax"),
        column="v",
        group_keys=(codes, raw_keys),
    )
    assert (fc.groups["3"].n, fc.groups["3"].min, fc.groups["3"].max) == (3, 1.0, 3.0)
    merged_codes, keys = group_codes(column)
    assert keys == ["3", "4"] and merged_codes.tolist() == [0, 0, 0, 1]


def test_group_keys_written_differently_in_a_new_file_match():
    plan = fit(
        pd.DataFrame({"season": [3, 3, 4, 4], "v": [1.0, 3.0, 10.0, 30.0]}),
        {"v": ColumnChoice("minmax")},
        FitSettings(group_by="season"),
    )
    new = pd.DataFrame({"season": [3.0, 4.0], "v": [2.0, 20.0]})
    scaled, reports = apply(new, plan)
    assert scaled["v"].tolist() == [0.5, 0.5] and reports[0].unseen_groups == []


def test_value_key():
    # common practice for this tool: whole floats read as integers, text trimmed
    assert value_key(3) == value_key(3.0) == value_key(np.float64(3.0)) == value_key("3") == "3"
    assert value_key(3.5) == "3.5"
    assert value_key(" north ") == "north"
    assert value_key(None) == value_key(float("nan")) == value_key(pd.NA) == ""
    assert value_key(True) == "true" and value_key(np.bool_(False)) == "false"
    assert value_key(pd.Timestamp("2026-04-01")) == "2026-04-01T00:00:00"


def test_grouping_column_absent_at_restore_uses_pooled_with_warning():
    table = orchard_table()
    plan = fit(table, {"yield_kg": ColumnChoice("zscore")}, FitSettings(group_by="site"))
    scaled = pd.DataFrame({"yield_kg": [0.0, 1.0]})
    back, reports = restore(scaled, plan)
    p = plan["yield_kg"].pooled.params
    np.testing.assert_allclose(back["yield_kg"], [p["mean"], p["mean"] + p["sd"]], rtol=1e-15)
    assert any("site" in w for w in reports[0].warnings)


def test_grouping_column_cannot_be_scaled():
    with pytest.raises(ColumnError, match="grouping"):
        fit(
            pd.DataFrame({"g": [1.0, 2.0]}),
            {"g": ColumnChoice("zscore")},
            FitSettings(group_by="g"),
        )


def test_apply_counts_values_outside_and_clips():
    plan = fit(pd.DataFrame({"v": [10.0, 20.0, 30.0]}), {"v": ColumnChoice("minmax")})
    new = pd.DataFrame({"v": [5.0, 15.0, 35.0, 40.0, np.nan, np.inf, -np.inf]})
    scaled, reports = apply(new, plan)
    r = reports[0]
    assert (r.n_below, r.n_above, r.n_clipped, r.n_outside) == (1, 2, 0, 3)
    assert r.n_infinite == 2 and r.n_values == 6
    assert any("1 values below and 2 above" in w for w in r.warnings)
    assert scaled["v"].tolist()[:4] == [-0.25, 0.25, 1.25, 1.5]
    clipped, reports = apply(new, plan, clip=True)
    r = reports[0]
    assert (r.n_below, r.n_above, r.n_clipped) == (1, 2, 3)
    values = clipped["v"].tolist()
    assert values[:4] == [0.0, 0.25, 1.0, 1.0]
    assert np.isnan(values[4]) and values[5] == np.inf and values[6] == -np.inf


def test_apply_missing_fitted_column_is_an_error():
    plan = fit(orchard_table(), {"yield_kg": ColumnChoice("zscore")})
    with pytest.raises(ColumnError, match="yield_kg"):
        apply(pd.DataFrame({"girth_cm": [1.0]}), plan)


def test_restore_a_subset_and_pass_the_rest_through():
    table = orchard_table()
    plan = fit(table, {"yield_kg": ColumnChoice("boxcox"), "girth_cm": ColumnChoice("robust")})
    scaled, _ = apply(table, plan)
    only_yield = scaled[["tree", "yield_kg"]]
    back, reports = restore(only_yield, plan)
    assert [r.column for r in reports] == ["yield_kg"]
    np.testing.assert_allclose(back["yield_kg"], table["yield_kg"], rtol=1e-12)
    assert back["tree"].tolist() == table["tree"].tolist()
    back, reports = restore(scaled, plan, {"girth_cm": "girth_cm"})  # one of two columns
    assert [r.column for r in reports] == ["girth_cm"]
    assert back["yield_kg"].tolist() == scaled["yield_kg"].tolist()  # untouched


def test_restore_a_column_with_another_columns_parameters():
    table = orchard_table()
    plan = fit(table, {"yield_kg": ColumnChoice("yeojohnson", {"standardize": "yes"})})
    scaled, _ = apply(table, plan)
    predictions = pd.DataFrame({"prediction": scaled["yield_kg"].to_numpy()[:10] * 0.9})
    back, reports = restore(predictions, plan, {"prediction": "yield_kg"})
    expected = plan["yield_kg"].inverse(predictions["prediction"].to_numpy())
    assert back["prediction"].tolist() == expected.tolist()
    assert reports[0].column == "prediction" and reports[0].fitted_as == "yield_kg"
    with pytest.raises(ColumnError, match="prediction"):
        restore(pd.DataFrame({"other": [1.0]}), plan, {"prediction": "yield_kg"})
    with pytest.raises(ColumnError, match="fruit_count.*no fitted"):
        restore(predictions, plan, {"prediction": "fruit_count"})


def test_apply_and_restore_leave_the_input_alone_and_keep_the_table_shape():
    table = orchard_table().set_index(pd.Index(range(100, 160), name="row"))
    table.insert(1, "dup", 1.0)
    table.insert(2, "dup", "x", allow_duplicates=True)  # untouched duplicate names pass
    before = table.copy()
    plan = fit(table, {"yield_kg": ColumnChoice("minmax")})
    scaled, _ = apply(table, plan)
    pd.testing.assert_frame_equal(table, before)
    assert list(scaled.columns) == list(table.columns)
    assert scaled.index.equals(table.index)
    assert list(scaled.dtypes) == list(table.dtypes)
    untouched = [c for c in range(table.shape[1]) if table.columns[c] != "yield_kg"]
    pd.testing.assert_frame_equal(scaled.iloc[:, untouched], table.iloc[:, untouched])
    # changing the result never changes the input (copy-on-write)
    scaled.iloc[0, 0] = "changed"
    scaled.iloc[0, scaled.columns.get_loc("yield_kg")] = -1.0
    pd.testing.assert_frame_equal(table, before)
    back, _ = restore(apply(table, plan)[0], plan)
    pd.testing.assert_frame_equal(table, before)
    np.testing.assert_allclose(back["yield_kg"], table["yield_kg"], rtol=1e-13)


def test_none_choice_is_not_fitted():
    plan = fit(orchard_table(), {"girth_cm": ColumnChoice("none"), "yield_kg": ColumnChoice("log")})
    assert list(plan.columns) == ["yield_kg"]
