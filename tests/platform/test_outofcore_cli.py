"""The command line's DuckDB engine (files larger than memory) against the in-memory path,
on the same files: CSV and Parquet, every method, groups, fit rows, apply with clipping,
restore with --as, and the ``sql`` command's round trip through a platform result.

Expected values: the in-memory path (checked against published references elsewhere).
Agreement (issue 9): 1e-12 relative for straight-line methods, quartiles exactly,
lambdas to 1e-6 (and the values they scale accordingly).
"""

from __future__ import annotations

import json
import shutil

import numpy as np
import pandas as pd
import pytest
import sqlglot
from platform_support import duckdb_table
from test_fit_query import compare_plans

from scalewright import cli
from scalewright.engine import get_method
from scalewright.errors import OptionError
from scalewright.io import read_table, write_table
from scalewright.platform import files
from scalewright.project import load_project
from support import SAMPLE_DATA

ALL = ["minmax", "zscore", "decimal", "robust", "maxabs", "log", "boxcox", "yeojohnson"]


@pytest.fixture
def folder(tmp_path):
    for name in ("harvest_2025.csv", "harvest_2026.csv", "predicted_yield_scaled.csv"):
        shutil.copy(SAMPLE_DATA / name, tmp_path / name)
    return tmp_path


def run(*args) -> int:
    return cli.main([str(a) for a in args])


def read_any(path) -> pd.DataFrame:
    return read_table(path).data


def assert_frames_agree(a: pd.DataFrame, b: pd.DataFrame, methods: dict[str, str]) -> None:
    assert list(a.columns) == list(b.columns)
    for column in a.columns:
        x, y = a[column], b[column]
        if column in methods:
            rtol = 1e-12 if get_method(methods[column]).linear else 1e-5
            xv = x.to_numpy(dtype=float, na_value=np.nan)
            yv = y.to_numpy(dtype=float, na_value=np.nan)
            assert np.array_equal(np.isnan(xv), np.isnan(yv)), column
            ok = ~np.isnan(xv)
            np.testing.assert_allclose(xv[ok], yv[ok], rtol=rtol, atol=rtol, err_msg=column)
        else:
            assert [str(v) for v in x.fillna("")] == [str(v) for v in y.fillna("")], column


def method_args(shift: int) -> tuple[list[str], dict[str, str]]:
    table = read_table(SAMPLE_DATA / "harvest_2025.csv")
    numbers = [c for c, k in table.kinds.items() if k == "number"]
    args, chosen = [], {}
    for i, column in enumerate(numbers):
        method = ALL[(i + shift) % len(ALL)]
        if method in ("boxcox", "log") and not table.data[column].min() > 0:
            method = "yeojohnson"
        chosen[column] = method
        args += ["-m", f"{column}={method}"]
    return args, chosen


@pytest.mark.parametrize("shift", [0, 3, 5])
@pytest.mark.parametrize("suffix", [".csv", ".parquet"])
def test_fit_with_output_agrees_between_engines(folder, shift, suffix, capsys):
    source = folder / "harvest_2025.csv"
    if suffix == ".parquet":
        table = read_table(source)
        source = folder / "harvest_2025.parquet"
        write_table(source, table.data, table.headers)
    args, chosen = method_args(shift)
    common = [*args, "--group-by", "orchard", "--fit-where", "split=train"]
    for engine in ("memory", "duckdb"):
        out = folder / f"scaled_{engine}{suffix}"
        assert (
            run(
                "fit",
                source,
                *common,
                "-p",
                folder / f"{engine}.swproj",
                "-o",
                out,
                "--engine",
                engine,
            )
            == 0
        )
    memory, duck = load_project(folder / "memory.swproj"), load_project(folder / "duckdb.swproj")
    compare_plans(duck.plan, memory.plan)
    assert (duck.columns, duck.headers, duck.source) == (
        memory.columns,
        memory.headers,
        memory.source,
    )
    assert_frames_agree(
        read_any(folder / f"scaled_duckdb{suffix}"),
        read_any(folder / f"scaled_memory{suffix}"),
        chosen,
    )
    assert "scaled data written" in capsys.readouterr().out


def test_apply_and_restore_agree_between_engines(folder, capsys):
    args, chosen = method_args(1)
    assert (
        run(
            "fit",
            folder / "harvest_2025.csv",
            *args,
            "--group-by",
            "orchard",
            "-p",
            folder / "p.swproj",
        )
        == 0
    )
    new = pd.read_csv(folder / "harvest_2026.csv", dtype=str, keep_default_na=False)
    new.loc[:30, "orchard"] = "Far Field"  # a group not seen when fitting
    new.to_csv(folder / "new.csv", index=False)
    printed = {}
    for engine in ("memory", "duckdb"):
        capsys.readouterr()
        assert (
            run(
                "apply",
                folder / "p.swproj",
                folder / "new.csv",
                "-o",
                folder / f"a_{engine}.csv",
                "--clip",
                "--engine",
                engine,
            )
            == 0
        )
        printed[engine] = capsys.readouterr().out.replace(f"a_{engine}.csv", "")
    assert printed["memory"] == printed["duckdb"]  # the same counts, word for word
    a_mem, a_duck = read_any(folder / "a_memory.csv"), read_any(folder / "a_duckdb.csv")
    assert_frames_agree(a_duck, a_mem, chosen)
    for engine in ("memory", "duckdb"):
        capsys.readouterr()
        assert (
            run(
                "restore",
                folder / "p.swproj",
                folder / "a_memory.csv",
                "-o",
                folder / f"r_{engine}.csv",
                "--engine",
                engine,
            )
            == 0
        )
        printed[engine] = capsys.readouterr().out.replace(f"r_{engine}.csv", "")
    assert printed["memory"] == printed["duckdb"]
    assert_frames_agree(
        read_any(folder / "r_duckdb.csv"), read_any(folder / "r_memory.csv"), chosen
    )


def test_restore_with_as_agrees_between_engines(folder):
    assert (
        run("fit", folder / "harvest_2025.csv", "-m", "yield_kg=boxcox", "-p", folder / "y.swproj")
        == 0
    )
    for engine in ("memory", "duckdb"):
        assert (
            run(
                "restore",
                folder / "y.swproj",
                folder / "predicted_yield_scaled.csv",
                "--as",
                "predicted_yield=yield_kg",
                "-o",
                folder / f"{engine}.parquet",
                "--engine",
                engine,
            )
            == 0
        )
    assert_frames_agree(
        read_any(folder / "duckdb.parquet"),
        read_any(folder / "memory.parquet"),
        {"predicted_yield": "boxcox"},
    )


def test_a_cell_that_is_not_a_number_is_named_and_nothing_is_written(folder, capsys):
    lines = (folder / "harvest_2025.csv").read_text(encoding="utf-8").splitlines()
    head, *rows = lines
    rows = rows * 12  # longer than the stretch whose kinds are detected (1 MB)
    bad = 20_000  # beyond the start read to detect the kinds
    cells = rows[bad].split(",")
    cells[head.split(",").index("soil_ph")] = "acid"
    rows[bad] = ",".join(cells)
    (folder / "late.csv").write_text("\n".join([head, *rows]) + "\n", encoding="utf-8")
    status = run(
        "fit",
        folder / "late.csv",
        "-m",
        "soil_ph=zscore",
        "-p",
        folder / "x.swproj",
        "-o",
        folder / "x.csv",
        "--engine",
        "duckdb",
    )
    err = capsys.readouterr().err
    assert status == 1
    assert f"row {bad + 2}" in err and "'acid' is not a number" in err and "soil_ph" in err
    assert not (folder / "x.csv").exists() and not (folder / "x.swproj").exists()
    assert not [p for p in folder.iterdir() if p.name.startswith(".x.")]  # no temporary left


def test_engine_choice(folder, monkeypatch):
    csv = folder / "harvest_2025.csv"
    assert files.choose_engine(csv, None) == "memory"  # small beside the free memory
    monkeypatch.setattr(files, "available_memory", lambda: csv.stat().st_size)
    assert files.choose_engine(csv, None) == "duckdb"  # would need more than half of it
    assert files.choose_engine(csv, "memory") == "memory"  # asked for: always that one
    assert files.choose_engine(SAMPLE_DATA / "harvest_2025.xlsx", None) == "memory"
    with pytest.raises(OptionError, match="CSV, TSV, TXT and Parquet"):
        files.choose_engine(SAMPLE_DATA / "harvest_2025.xlsx", "duckdb")


def test_sql_command_prints_a_select_each_dialect_reads(folder, capsys):
    assert (
        run(
            "fit",
            folder / "harvest_2025.csv",
            "-m",
            "*=robust",
            "--group-by",
            "orchard",
            "-p",
            folder / "p.swproj",
        )
        == 0
    )
    for dialect in ("duckdb", "postgres", "spark", "snowflake", "bigquery", "tsql"):
        capsys.readouterr()
        assert (
            run(
                "sql",
                folder / "p.swproj",
                "--dialect",
                dialect,
                "--table",
                "farm.harvest",
                "--clip",
            )
            == 0
        )
        text = capsys.readouterr().out
        assert sqlglot.parse_one(text.rstrip().rstrip(";"), read=dialect) is not None
    capsys.readouterr()
    assert run("sql", folder / "p.swproj", "--restore", "--table", "harvest_2025") == 0
    restore_sql = capsys.readouterr().out
    scaled = read_any(folder / "harvest_2025.csv")
    con = duckdb_table(scaled, "harvest_2025")
    assert len(con.execute(restore_sql).fetchall()) == len(scaled)


def test_sql_fit_round_trip_through_a_platform_result(folder, capsys):
    assert (
        run(
            "fit",
            folder / "harvest_2025.csv",
            "-m",
            "*=zscore",
            "-m",
            "soil_ph=yeojohnson",
            "--fit-where",
            "split=train",
            "-p",
            folder / "local.swproj",
        )
        == 0
    )
    con = duckdb_table(read_any(folder / "harvest_2025.csv"), "harvest_2025")
    args = ["sql", folder / "local.swproj", "--fit"]
    for _round in range(10):
        capsys.readouterr()
        assert run(*args) == 0
        cursor = con.execute(capsys.readouterr().out)
        names = [d[0] for d in cursor.description]
        rows = [dict(zip(names, r, strict=True)) for r in cursor.fetchall()]
        result = folder / "result.json"
        result.write_text(json.dumps(rows), encoding="utf-8")
        status = run(
            "fit",
            folder / "local.swproj",
            "--from-sql-result",
            result,
            "-p",
            folder / "platform.swproj",
        )
        if status == 0:
            break
        assert "another round" in capsys.readouterr().err
        args = ["sql", folder / "local.swproj", "--fit", "--after", result]
    else:
        pytest.fail("the rounds did not finish")
    made = load_project(folder / "platform.swproj")
    compare_plans(made.plan, load_project(folder / "local.swproj").plan)


def test_quantile_scaling_is_refused_by_the_aggregate_fit_with_a_reason(folder, capsys):
    status = run(
        "fit",
        folder / "harvest_2025.csv",
        "-m",
        "yield_kg=quantile",
        "-p",
        folder / "q.swproj",
        "--engine",
        "duckdb",
    )
    assert status == 1
    err = capsys.readouterr().err
    assert "yield_kg" in err and "fit it in memory" in err
    assert not (folder / "q.swproj").exists()
