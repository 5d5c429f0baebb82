"""The SELECT of ``scalewright sql``, executed in DuckDB and in Spark SQL, against the engine.

Expected values: the engine's own ``apply`` and ``restore`` on the same table (the
in-memory path, itself checked against published references in tests/engine). Tolerances
(issue 9): 1e-12 relative for the straight-line methods, 1e-9 for the others; a value
near 0 is compared with an absolute slack of the same fraction of the column's largest
value (subtracting a mean makes such values' relative error meaningless; common practice).
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
import sqlglot
from platform_support import duckdb_table, numeric_frame, spark_table

from scalewright.engine import ColumnChoice, FitSettings, apply, get_method, restore
from scalewright.errors import ScalewrightError
from scalewright.io import read_table
from scalewright.platform.names import DIALECTS
from scalewright.platform.select import select_sql
from scalewright.tasks import fit_project
from support import SAMPLE_DATA

METHODS = ["minmax", "zscore", "decimal", "robust", "maxabs", "log", "boxcox", "yeojohnson"]


def tolerance(method: str) -> float:
    return 1e-12 if get_method(method).linear else 1e-9


def assert_same(got: pd.Series, want: np.ndarray, method: str, what: str) -> None:
    got = pd.to_numeric(got, errors="coerce").to_numpy(dtype=np.float64, na_value=np.nan)
    want = np.asarray(want, dtype=np.float64)
    assert np.array_equal(np.isnan(got), np.isnan(want)), f"{what}: missing values differ"
    finite = np.isfinite(want)
    assert np.array_equal(got[~finite & ~np.isnan(want)], want[~finite & ~np.isnan(want)])
    rtol = tolerance(method)
    scale = float(np.max(np.abs(want[finite]), initial=1.0))
    np.testing.assert_allclose(
        got[finite], want[finite], rtol=rtol, atol=rtol * scale, err_msg=what
    )


def sample_table():
    return read_table(SAMPLE_DATA / "harvest_2025.csv")


def sample_choices(table, shift: int = 0) -> dict:
    numbers = [c for c, k in table.kinds.items() if k == "number"]
    choices = {}
    for i, column in enumerate(numbers):
        method = METHODS[(i + shift) % len(METHODS)]
        if method == "boxcox" and not (table.data[column].min() > 0):
            method = "yeojohnson"
        options = {"standardize": "no"} if method in ("boxcox", "yeojohnson") and i % 2 else {}
        if method == "minmax":
            options = {"low": -1, "high": 1}
        choices[column] = ColumnChoice(method, options)
    return choices


def awkward_frame() -> pd.DataFrame:
    """Zeros, negatives, missing values, infinities, tiny and huge values, a column name
    with spaces and quotes, a repeated header, and a group column of whole numbers."""
    rng = np.random.default_rng(7)
    n = 400
    skewed = rng.lognormal(0.0, 1.2, n)
    signed = rng.normal(0.0, 3.0, n) ** 3
    tiny = rng.uniform(1e-300, 5e-300, n)
    huge = rng.uniform(1e300, 1.7e300, n)
    near_one = 1.0 + rng.normal(0, 1e-9, n)
    skewed[[3, 50]] = np.nan
    signed[7] = np.inf
    signed[8] = -np.inf
    signed[9] = 0.0
    return pd.DataFrame(
        {
            "id": [f"{i:06d}" for i in range(n)],
            "block": rng.integers(1, 5, n).astype(np.float64),
            'yield "kg" / tree': skewed,
            "signed": signed,
            "tiny": tiny,
            "huge": huge,
            "near one": near_one,
        }
    )


class FrameTable:
    """A frame with labels and header text, as io gives them (for fit_project)."""

    def __init__(self, frame: pd.DataFrame, headers=None) -> None:
        from pathlib import Path

        from scalewright.io import ColumnKind, ReadOptions

        self.data = frame
        self.headers = list(headers or frame.columns)
        self.kinds = {
            c: ColumnKind.NUMBER if frame[c].dtype == np.float64 else ColumnKind.TEXT
            for c in frame.columns
        }
        self.source = Path("awkward.csv")
        self.options = ReadOptions()
        self.size = self.sha256 = None


def awkward_project(clip_range_shift: bool = False, group: str | None = None):
    frame = awkward_frame()
    choices = {
        'yield "kg" / tree': ColumnChoice("boxcox"),
        "signed": ColumnChoice("yeojohnson"),
        "tiny": ColumnChoice("zscore"),
        "huge": ColumnChoice("minmax"),
        "near one": ColumnChoice("log", {"base": "10"}),
    }
    table = FrameTable(frame)
    return table, fit_project(table, choices, FitSettings(group_by=group))


def run_duckdb(frame, table_name, sql):
    con = duckdb_table(frame, table_name)
    return con.execute(sql).df()


def check_apply_and_restore(run, table, project, clip: bool = False, new_data=None):
    """Apply (then restore the engine's scaled values) in SQL; compare with the engine."""
    data = table.data if new_data is None else new_data
    plan = project.plan
    scaled_sql = run(data, "source", "apply", clip)
    want, _ = apply(data, plan, clip=clip)
    for column, fc in plan.columns.items():
        assert_same(scaled_sql[column], want[column].to_numpy(), fc.method, f"apply {column}")
    # Columns that are not fitted pass through unchanged.
    for column in data.columns:
        if column not in plan.columns and data[column].dtype != np.float64:
            got = [None if pd.isna(v) else str(v) for v in scaled_sql[column]]
            want_text = [None if pd.isna(v) else str(v) for v in numeric_frame(data)[column]]
            assert got == want_text, column
    assert list(scaled_sql.columns) == list(data.columns)
    back_sql = run(want, "scaled", "restore", False)
    back, _ = restore(want, plan)
    for column, fc in plan.columns.items():
        assert_same(back_sql[column], back[column].to_numpy(), fc.method, f"restore {column}")


def make_runner(engine, project, spark=None):
    def run(frame, name, what, clip):
        sql = select_sql(
            project,
            dialect="duckdb" if engine == "duckdb" else "spark",
            restoring=what == "restore",
            clip=clip,
            table=name,
        )
        if engine == "duckdb":
            return run_duckdb(frame, name, sql)
        spark_table(spark, frame, name)
        return spark.sql(sql).toPandas()

    return run


@pytest.mark.parametrize("shift", range(len(METHODS)))
def test_every_method_on_the_sample_data_in_duckdb(shift):
    table = sample_table()
    project = fit_project(table, sample_choices(table, shift), FitSettings(group_by="orchard"))
    check_apply_and_restore(make_runner("duckdb", project), table, project)


def test_new_data_with_unseen_groups_and_clipping_in_duckdb():
    table = sample_table()
    project = fit_project(table, sample_choices(table, 3), FitSettings(group_by="orchard"))
    new = read_table(SAMPLE_DATA / "harvest_2026.csv").data.copy()
    new.loc[new.index[:40], "orchard"] = "Far Field"  # a group not seen when fitting
    new.loc[new.index[40:45], "orchard"] = None  # no group: the pooled parameters
    for clip in (False, True):
        check_apply_and_restore(make_runner("duckdb", project), table, project, clip, new)


def test_awkward_values_in_duckdb():
    table, project = awkward_project()
    check_apply_and_restore(make_runner("duckdb", project), table, project)
    check_apply_and_restore(make_runner("duckdb", project), table, project, clip=True)


def test_groups_on_a_number_column_in_duckdb():
    table, project = awkward_project(group="block")
    assert set(project.plan.columns["signed"].groups) == {"1", "2", "3", "4"}
    check_apply_and_restore(make_runner("duckdb", project), table, project)


def test_sample_data_in_spark(spark):
    table = sample_table()
    project = fit_project(table, sample_choices(table, 0), FitSettings(group_by="orchard"))
    check_apply_and_restore(make_runner("spark", project, spark), table, project)


def test_awkward_values_with_groups_and_clipping_in_spark(spark):
    table, project = awkward_project(group="block")
    check_apply_and_restore(make_runner("spark", project, spark), table, project, clip=True)


@pytest.mark.parametrize("dialect", DIALECTS)
@pytest.mark.parametrize("restoring", [False, True])
def test_every_dialect_parses_back(dialect, restoring):
    table, project = awkward_project(group="block")
    text = select_sql(project, dialect=dialect, restoring=restoring, table="my_schema.awkward")
    tree = sqlglot.parse_one(text, read=dialect)
    assert isinstance(tree, sqlglot.exp.Select)
    # The header text comes through quoted and whole, quotes included.
    names = [s.alias_or_name for s in tree.expressions]
    assert names == list(table.data.columns)


def test_literals_keep_every_digit():
    # repr() of a double reads back to the same double (Python docs, "Floating-point
    # arithmetic: issues and limitations"); the SQL must carry that text unchanged.
    table, project = awkward_project()
    params = project.plan.columns["tiny"].pooled.params
    text = select_sql(project, dialect="postgres")
    assert repr(params["mean"]).upper() in text.upper()
    assert "AS DOUBLE PRECISION" in text
    assert "AS FLOAT64" in select_sql(project, dialect="bigquery")


def test_repeated_headers_use_the_unique_labels():
    frame = pd.DataFrame({"x": [1.0, 2.0, 4.0], "x (2)": [3.0, 5.0, 9.0], "note": ["a", "b", None]})
    table = FrameTable(frame, headers=["x", "x", "note"])
    project = fit_project(table, {"x (2)": ColumnChoice("zscore")}, FitSettings())
    got = run_duckdb(frame, "t", select_sql(project, table="t"))
    assert list(got.columns) == ["x", "x (2)", "note"]
    assert_same(got["x (2)"], apply(frame, project.plan)[0]["x (2)"].to_numpy(), "zscore", "x (2)")
    assert pd.isna(got["note"].iloc[2]) and list(got["note"].iloc[:2]) == ["a", "b"]


@pytest.mark.parametrize("engine", ["duckdb", "spark"])
def test_quantile_scaling_is_a_piecewise_linear_case(engine, request):
    # Ties (many equal values) map to the middle of their ranks, as the engine does.
    frame = awkward_frame()
    frame["ties"] = np.repeat([1.0, 2.0, 2.0, 2.0, 5.0, 7.5, 7.5, 9.0], len(frame) // 8)
    choices = {"ties": ColumnChoice("quantile"), "signed": ColumnChoice("quantile")}
    project = fit_project(FrameTable(frame), choices, FitSettings(group_by="block"))
    spark = request.getfixturevalue("spark") if engine == "spark" else None
    new = frame.copy()
    new.loc[new.index[:5], "ties"] = [0.5, 2.0, 3.0, 9.5, 7.5]  # outside, tied, between
    check_apply_and_restore(
        make_runner(engine, project, spark), FrameTable(frame), project, new_data=new
    )


def test_quantile_scaling_with_the_normal_shape_has_no_sql():
    frame = awkward_frame()
    project = fit_project(
        FrameTable(frame), {"tiny": ColumnChoice("quantile", {"shape": "normal"})}, FitSettings()
    )
    with pytest.raises(ScalewrightError, match="normal quantile function"):
        select_sql(project)
