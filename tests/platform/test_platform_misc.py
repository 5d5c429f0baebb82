"""Parquet in the io layer, and the import weight of the engine.

Sources: the Parquet format keeps column names and types as written (Apache Parquet
specification); the expectations on atomic writing are the project's own rule (nothing is
lost: DEVELOPERS.md, "Conventions").
"""

from __future__ import annotations

import subprocess
import sys

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.parquet as pq
import pytest

from scalewright.errors import ReadError, WriteError
from scalewright.io import ColumnKind, read_table, write_table
from support import SAMPLE_DATA


def test_parquet_round_trip_keeps_values_headers_and_kinds(tmp_path):
    table = read_table(SAMPLE_DATA / "harvest_2025.csv")
    target = tmp_path / "harvest.parquet"
    write_table(target, table.data, table.headers)
    back = read_table(target)
    assert back.headers == table.headers
    for label, kind in table.kinds.items():
        if kind == ColumnKind.NUMBER:
            assert back.kinds[label] == ColumnKind.NUMBER
            a = table.data[label].to_numpy(dtype=float, na_value=np.nan)
            b = back.data[label].to_numpy(dtype=float, na_value=np.nan)
            assert np.array_equal(a, b, equal_nan=True), label  # bit for bit
    assert list(back.data["tree_code"].head(2)) == ["000076", "000081"]  # codes stay text


def test_parquet_with_repeated_and_blank_names_gets_unique_labels(tmp_path):
    path = tmp_path / "odd.parquet"
    arrays = [
        pa.array([1.0, 2.0]),
        pa.array([3, 4]),
        pa.array(["a", None]),
        pa.array([True, False]),
    ]
    pq.write_table(pa.Table.from_arrays(arrays, names=["x", "x", "", "ok"]), path)
    t = read_table(path)
    assert t.headers == ["x", "x", "", "ok"]
    assert list(t.data.columns) == ["x", "x (2)", "column 3", "ok"]
    assert t.kinds == {
        "x": ColumnKind.NUMBER,
        "x (2)": ColumnKind.NUMBER,
        "column 3": ColumnKind.TEXT,
        "ok": ColumnKind.BOOLEAN,
    }
    assert str(t.data["x (2)"].dtype) == "Int64"


def test_a_damaged_parquet_file_is_refused_with_its_name(tmp_path):
    path = tmp_path / "broken.parquet"
    path.write_bytes(b"PAR1 not really")
    with pytest.raises(ReadError, match="broken.parquet"):
        read_table(path)


def test_a_failed_parquet_write_leaves_nothing(tmp_path, monkeypatch):
    target = tmp_path / "out.parquet"
    target.write_bytes(b"the old file")

    def fail(*args, **kwargs):
        raise pa.ArrowInvalid("simulated failure")

    monkeypatch.setattr(pq, "write_table", fail)
    with pytest.raises(WriteError, match="out.parquet"):
        write_table(target, pd.DataFrame({"a": [1.0]}), ["a"])
    assert target.read_bytes() == b"the old file"
    assert [p.name for p in tmp_path.iterdir()] == ["out.parquet"]


def test_importing_the_engine_loads_neither_sqlglot_nor_duckdb():
    code = (
        "import sys, scalewright.engine, scalewright.io, scalewright.platform; "
        "print(sorted(m for m in ('sqlglot', 'duckdb', 'pyspark') if m in sys.modules))"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "[]"
