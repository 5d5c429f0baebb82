"""Helpers for the platform tests: DuckDB and Spark tables built from pandas frames."""

from __future__ import annotations

import duckdb
import numpy as np
import pandas as pd


def numeric_frame(data: pd.DataFrame) -> pd.DataFrame:
    """Number columns as float64 (NaN for missing), every other column as text (None)."""
    out = {}
    for column in data.columns:
        s = data[column]
        if pd.api.types.is_numeric_dtype(s.dtype) and not pd.api.types.is_bool_dtype(s.dtype):
            out[column] = s.to_numpy(dtype=np.float64, na_value=np.nan)
        else:
            out[column] = [None if pd.isna(v) else str(v) for v in s]
    return pd.DataFrame(out).astype({c: object for c, v in out.items() if isinstance(v, list)})


def duckdb_table(frame: pd.DataFrame, name: str) -> duckdb.DuckDBPyConnection:
    con = duckdb.connect()
    con.register("frame_view", numeric_frame(frame))
    con.execute(f'CREATE TABLE "{name}" AS SELECT * FROM frame_view')
    con.unregister("frame_view")
    return con


def spark_table(spark, frame: pd.DataFrame, name: str) -> None:
    from pyspark.sql import types as T

    plain = numeric_frame(frame)
    fields = []
    for column in plain.columns:
        kind = T.DoubleType() if plain[column].dtype == np.float64 else T.StringType()
        fields.append(T.StructField(column, kind, True))
    rows = [
        tuple(None if (isinstance(v, float) and np.isnan(v)) else v for v in row)
        for row in plain.itertuples(index=False, name=None)
    ]
    spark.createDataFrame(rows, T.StructType(fields)).createOrReplaceTempView(name)
