"""Property test: any table of numbers and text survives write -> read in every format."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from test_io_read_text import values

from scalewright.io import read_table, write_table

# Printable text: letters, digits, punctuation, symbols and spaces (no control characters,
# which a workbook cell cannot hold as such).
TEXT = st.text(
    st.characters(whitelist_categories=("L", "N", "P", "S", "Zs"), max_codepoint=0x2FFF),
    max_size=12,
)
FLOATS = st.floats(allow_nan=True, allow_infinity=False, width=64)


@st.composite
def tables(draw):
    rows = draw(st.integers(1, 12))
    n_float = draw(st.integers(1, 3))
    n_text = draw(st.integers(0, 2))
    headers = [draw(TEXT) for _ in range(n_float + n_text)]
    if len(headers) > 1:
        # A header whose only filled cell is the first looks like a title line
        # (detect.is_title_like), so keep a second name.
        headers[1] = "h" + headers[1]
    elif draw(st.booleans()):
        headers[0] = "h" + headers[0]  # a lone blank header is tried, in text files only
    data = {}
    for j in range(n_float):
        col = draw(st.lists(FLOATS, min_size=rows, max_size=rows))
        data[f"f{j}"] = np.array(col, dtype="float64") + 0.0  # no negative zero: "-0" reads as 0
    for j in range(n_text):
        # A letter first keeps the column text (not a number, date or code).
        col = draw(
            st.lists(
                st.one_of(st.none(), TEXT.map(lambda t: "t" + t)), min_size=rows, max_size=rows
            )
        )
        data[f"t{j}"] = pd.Series(col, dtype="str")
    frame = pd.DataFrame(data)
    # Trailing rows and right-edge columns with nothing in them are left out on reading
    # (spreadsheet exports pad with them), so the table ends in a value.
    if np.isnan(frame.iloc[-1, 0]):
        frame.iloc[-1, 0] = 1.25
    if frame.iloc[:, -1].isna().all() and not headers[-1].strip():
        headers[-1] = "h" + headers[-1]
    return frame, headers


@pytest.mark.parametrize("suffix", [".csv", ".tsv", ".xlsx"])
@settings(
    max_examples=40, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture]
)
@given(table=tables())
def test_any_table_round_trips(tmp_path, suffix, table):
    frame, headers = table
    if suffix == ".xlsx" and not any(h.strip() for h in headers):
        # A workbook row of blank cells is indistinguishable from no row at all.
        headers = ["h", *headers[1:]]
    target = tmp_path / f"r{suffix}"
    write_table(target, frame, headers)
    back = read_table(target)
    assert back.headers == headers
    assert len(back.data) == len(frame)
    for j in range(frame.shape[1]):
        got, want = back.data.iloc[:, j], frame.iloc[:, j]
        if want.dtype == "float64":
            g = got.to_numpy(dtype="float64", na_value=np.nan)
            w = want.to_numpy()
            assert np.array_equal(np.isnan(g), np.isnan(w))
            keep = ~np.isnan(w)
            assert g[keep].view(np.uint64).tolist() == w[keep].view(np.uint64).tolist()
        else:
            assert values(got) == values(want)
