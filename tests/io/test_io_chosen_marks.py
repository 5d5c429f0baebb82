"""Numbers are read under the decimal and thousands marks in force, also when every cell
looks like a plain number with a point (found while building kind corrections: the
plain-number shortcut read "1.500" as 1.5 in a file whose thousands mark is a point)."""

from __future__ import annotations

import pandas as pd
import pyarrow as pa

from scalewright.io import ColumnKind, ReadOptions, read_table
from scalewright.io.kinds import classify_arrow, classify_text


def test_points_are_thousands_when_the_decimal_mark_is_a_comma(tmp_path):
    # "1.500" with a decimal comma and points between thousands is one thousand five
    # hundred (common practice in continental European exports).
    path = tmp_path / "marks.csv"
    path.write_text("a;b\n1.500;x\n2.250;y\n", encoding="utf-8")
    table = read_table(path, ReadOptions(decimal=",", thousands="."))
    assert table.kinds["a"] is ColumnKind.NUMBER
    assert table.data["a"].tolist() == [1500, 2250]


def test_both_classifiers_agree_on_points_under_a_decimal_comma():
    cells = ["1.500", "12", "-3.000"]
    for series, kind, _ in (
        classify_arrow(pa.array(cells), "c", ",", "."),
        classify_text(pd.Series(cells, dtype="str"), "c", ",", "."),
    ):
        assert kind is ColumnKind.NUMBER
        assert series.tolist() == [1500, 12, -3000]
