"""Parquet files: reading into the in-memory table and writing results (pyarrow).

Parquet carries its own column types, so nothing is guessed: integer and floating-point
columns are numbers (whole numbers as ``Int64``, the rest as ``float64``), booleans yes/no,
dates and timestamps dates, everything else text. Column names are kept exactly; a blank
or repeated name gets a unique label as for any file (``labels``).
"""

from __future__ import annotations

from pathlib import Path

import pandas as pd
import pyarrow as pa
import pyarrow.parquet as pq

from ..errors import ReadError, WriteError
from .atomic import atomic_path
from .labels import unique_labels
from .options import CancelCheck, ColumnKind, Progress, ReadOptions, Table


def _kind(arrow_type: pa.DataType, column: pa.ChunkedArray) -> ColumnKind:
    if column.null_count == len(column):
        return ColumnKind.EMPTY
    if pa.types.is_boolean(arrow_type):
        return ColumnKind.BOOLEAN
    if pa.types.is_integer(arrow_type) or pa.types.is_floating(arrow_type):
        return ColumnKind.NUMBER
    if pa.types.is_decimal(arrow_type):
        return ColumnKind.NUMBER
    if pa.types.is_timestamp(arrow_type) or pa.types.is_date(arrow_type):
        return ColumnKind.DATE
    return ColumnKind.TEXT


def _series(column: pa.ChunkedArray, kind: ColumnKind) -> pd.Series:
    t = column.type
    if kind == ColumnKind.NUMBER:
        if pa.types.is_integer(t):
            return pd.Series(column.to_pandas(types_mapper=pd.ArrowDtype)).astype("Int64")
        return pd.Series(column.to_numpy(zero_copy_only=False), dtype="float64")
    if kind == ColumnKind.EMPTY:
        return pd.Series([pd.NA] * len(column), dtype="str")
    if kind == ColumnKind.BOOLEAN:
        return pd.Series(column.to_pandas()).astype("boolean")
    if kind == ColumnKind.DATE:
        return pd.Series(pd.to_datetime(column.to_pandas()))
    return pd.Series(column.to_pandas()).astype("str")


def read_parquet_table(
    path: Path,
    options: ReadOptions,
    *,
    progress: Progress | None = None,
    cancelled: CancelCheck | None = None,
    preview_rows: int | None = None,
) -> Table:
    """Read a Parquet file (or its first ``preview_rows`` rows) into a table."""
    try:
        if preview_rows is not None:
            reader = pq.ParquetFile(path)
            batches = []
            count = 0
            for batch in reader.iter_batches(batch_size=max(preview_rows, 1)):
                batches.append(batch)
                count += batch.num_rows
                if count >= preview_rows:
                    break
            table = pa.Table.from_batches(batches, schema=reader.schema_arrow).slice(
                0, preview_rows
            )
        else:
            table = pq.ParquetFile(path).read()  # (the dataset reader refuses repeated names)
    except (pa.ArrowException, OSError) as err:
        raise ReadError(path, f"this is not a Parquet file that can be read ({err})") from None
    headers = [str(n) for n in table.column_names]
    labels = unique_labels(headers)
    data = {}
    kinds: dict[str, ColumnKind] = {}
    for i, label in enumerate(labels):
        column = table.column(i)
        kind = _kind(column.type, column)
        kinds[label] = kind
        data[label] = _series(column, kind)
    frame = pd.DataFrame(data, index=pd.RangeIndex(table.num_rows))
    return Table(frame, headers, kinds, Path(path), options)


def write_parquet(path: Path, data: pd.DataFrame, headers: list[str], arrow_ready) -> None:
    """Write ``data`` under ``headers`` to a Parquet file, atomically."""
    table = arrow_ready(data)
    table = table.rename_columns([str(h) for h in headers])
    with atomic_path(path, keep_suffix=True) as tmp:
        try:
            pq.write_table(table, tmp)
        except pa.ArrowException as err:
            raise WriteError(path, f"the Parquet file could not be written ({err})") from None
