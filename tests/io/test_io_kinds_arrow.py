"""Column kinds decided on Arrow buffers: every memory layout gives the same answer.

A text file's columns reach ``kinds.classify_arrow`` as Arrow strings in many chunks; the
quick tests there read the raw offsets and bytes. Arrow allows chunks that start part way
into their buffers (slices) and null cells that still cover bytes (Arrow columnar format,
"Variable-size Binary Layout": a null slot's offsets may span any bytes), so each case is
tried in those layouts too, against the kind and values the rules in ``io/__init__`` give.
"""

from __future__ import annotations

import math

import numpy as np
import pyarrow as pa
import pytest

from scalewright.io import ColumnKind
from scalewright.io.kinds import classify_arrow, classify_text


def one_array(cells):
    return pa.array(cells, pa.string())


def two_chunks(cells):
    cut = len(cells) // 2
    return pa.chunked_array(
        [pa.array(cells[:cut], pa.string()), pa.array(cells[cut:], pa.string())]
    )


def sliced(cells):
    """The cells as a slice that starts two cells into its buffers."""
    return pa.array(["ignored", "9999999999999999", *cells], pa.string()).slice(2)


def nulls_holding(filler: str):
    """Null cells whose offsets cover ``filler`` (allowed by the format). Read as a cell,
    "1.5" would turn whole numbers into decimals and "01" a number into a code."""

    def layout(cells):
        offsets, data, valid = [0], b"", []
        for cell in cells:
            data += (cell if cell is not None else filler).encode()
            offsets.append(len(data))
            valid.append(cell is not None)
        bitmap = np.packbits(np.array(valid, dtype=bool), bitorder="little").tobytes()
        buffers = [bitmap, np.array(offsets, np.int32).tobytes(), data]
        return pa.Array.from_buffers(
            pa.string(),
            len(cells),
            [pa.py_buffer(b) for b in buffers],
            null_count=valid.count(False),
        )

    layout.__name__ = f"nulls_holding_{filler}"
    return layout


def large_strings(cells):
    return pa.array(cells, pa.large_string())


LAYOUTS = [one_array, two_chunks, sliced, nulls_holding("1.5"), nulls_holding("01"), large_strings]

N, ID, D, T = ColumnKind.NUMBER, ColumnKind.IDENTIFIER, ColumnKind.DATE, ColumnKind.TEXT
CASES = [
    (["1.5", None, "-2", "3e2"], N, "float64", [1.5, None, -2.0, 300.0]),
    (["12", None, "-3", "40"], N, "Int64", [12, None, -3, 40]),
    (["12", "-3", "40"], N, "Int64", [12, -3, 40]),
    (["120", "33", "4"], N, "Int64", [120, 33, 4]),
    (["12", "007", None, "40"], ID, "str", ["12", "007", None, "40"]),
    (["12345678", None], N, "Int64", [12345678, None]),  # one 8-digit value is a number
    (["+05", "1", None, "2"], N, "Int64", [5, 1, None, 2]),  # a sign before the zero
    (["0.5", "-0.25", None, "10"], N, "float64", [0.5, -0.25, None, 10.0]),
    (["12345678", "23456789", None, "34567890"], ID, "str", ["12345678", "23456789", None, "34567890"]),
    (["1234567890123456", "1", None, "2"], ID, "str", ["1234567890123456", "1", None, "2"]),
    (["2019-04-03", None, "2020-02-29", "2021-12-31"], D, "datetime64[us]",
     ["2019-04-03", None, "2020-02-29", "2021-12-31"]),
    (["2019-04-03", None, "2019-02-29", "2021-12-31"], T, "str",
     ["2019-04-03", None, "2019-02-29", "2021-12-31"]),
    (["x1", "A-12", None, "QQ-9"], ID, "str", ["x1", "A-12", None, "QQ-9"]),
    (["alpha", "beta", None, "gamma"], T, "str", ["alpha", "beta", None, "gamma"]),
]  # fmt: skip


def plain(series) -> list:
    out = []
    for v in series.tolist():
        if (
            v is None
            or v is pa.NA
            or (isinstance(v, float) and math.isnan(v))
            or str(v) in ("<NA>", "NaT")
        ):
            out.append(None)
        elif hasattr(v, "isoformat"):
            out.append(v.isoformat()[:10])
        else:
            out.append(v)
    return out


@pytest.mark.parametrize("layout", LAYOUTS, ids=lambda f: f.__name__)
@pytest.mark.parametrize(("cells", "kind", "dtype", "expected"), CASES)
def test_every_layout_gives_the_rules_answer(layout, cells, kind, dtype, expected):
    arr = layout(cells)
    assert arr.to_pylist() == cells  # the layout holds the same cells
    series, got_kind, notes = classify_arrow(arr, "c")
    assert got_kind is kind
    assert str(series.dtype) == dtype
    assert plain(series) == expected
    assert notes == []


@pytest.mark.parametrize(("cells", "kind", "dtype", "expected"), CASES)
def test_text_cells_from_pandas_take_the_same_rules(cells, kind, dtype, expected):
    import pandas as pd

    series, got_kind, _ = classify_text(pd.Series(cells, dtype="str"), "c")
    assert (got_kind, str(series.dtype), plain(series)) == (kind, dtype, expected)
