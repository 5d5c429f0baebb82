"""Reading the legacy .xls format (BIFF8), from a committed file made by xls/make_xls.py."""

from pathlib import Path

import numpy as np
import pandas as pd

from scalewright.io import ColumnKind, list_sheets, read_table

XLS = Path(__file__).resolve().parent / "xls" / "harvest_small.xls"


def test_xls_reads_with_kinds_dates_and_text():
    table = read_table(XLS)
    assert list_sheets(XLS) == ["harvest"]
    assert table.headers == ["tree_code", "yield_kg", "planted_on", "note"]
    assert table.kinds == {
        "tree_code": ColumnKind.IDENTIFIER,  # text cells with leading zeros
        "yield_kg": ColumnKind.NUMBER,
        "planted_on": ColumnKind.DATE,  # number cells with a date format
        "note": ColumnKind.TEXT,
    }
    data = table.data
    assert data["tree_code"].tolist() == ["000412", "000413", "000414"]
    np.testing.assert_array_equal(data["yield_kg"].to_numpy(float), [81.5, 55.25, np.nan])
    assert data["planted_on"].tolist() == [
        pd.Timestamp("2006-03-27"),
        pd.Timestamp("1998-04-15"),
        pd.Timestamp("2010-05-08"),
    ]
    # formula-like text stays the text it was
    assert data["note"].iloc[0] == "=SUM(A1)"
    assert data["note"].isna().iloc[2]
