"""Turn the cells a reader found into a ``Table``: the step every reader ends with.

Both readers (delimited text and workbooks) hand over a ``RawTable``; the shared rules
live here once: empty rows at the end and empty unnamed columns at the right edge are left
out, every column is classified, and every column gets a unique label beside the file's
own header text.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow as pa

from ..errors import Cancelled
from .corrections import described, read_as
from .kinds import Classified
from .labels import unique_labels
from .options import CancelCheck, ColumnKind, Progress, ReadOptions, Table

# A column's cells as the reader holds them (an Arrow column, or a pandas column).
Cells = pa.ChunkedArray | pd.Series


@dataclass
class RawTable:
    """A file's cells before any column is classified.

    ``frame`` is a DataFrame (workbooks: filled cells non-null) or the Arrow table of a
    text file. ``classify(cells, i, label)`` decides column ``i``, whose cells in ``frame``
    are ``cells``; ``text(cells, i)`` gives those cells as the file writes them, for a
    column the options ask to read as another kind (``corrections``). ``bare_tail(n)`` (text files) says how many of the last ``n`` rows with
    no value are export leftovers to leave out; without it all of them are.
    """

    path: Path
    frame: pd.DataFrame | pa.Table
    headers: list[str]
    options: ReadOptions  # the options as resolved, recorded in the Table
    classify: Callable[[Cells, int, str], Classified]
    text: Callable[[Cells, int], pd.Series]
    notes: list[str] = field(default_factory=list)
    sheets: list[str] = field(default_factory=list)
    bare_tail: Callable[[int], int] | None = None


def build_table(
    raw: RawTable,
    *,
    progress: Progress | None = None,
    cancelled: CancelCheck | None = None,
    span: tuple[float, float] = (0.4, 1.0),
) -> Table:
    """Drop empty edge rows/columns, classify every column and attach unique labels.

    Progress moves through ``span`` column by column.
    """
    notes = raw.notes
    headers = raw.headers
    cells = _Cells(raw.frame)
    # Trailing rows with no value at all (left behind by spreadsheet exports).
    cells.drop_empty_tail(raw.bare_tail)
    # Columns with no header text and no values at the right edge are not part of the table.
    keep = list(range(cells.width))
    while keep and not headers[keep[-1]].strip() and not cells.has_values(keep[-1]):
        keep.pop()
    dropped = cells.width - len(keep)
    if dropped:
        notes.append(f"{dropped} empty column(s) at the right edge were left out.")
    headers = [headers[i] for i in keep]
    labels = unique_labels(headers)
    columns: dict[str, pd.Series] = {}
    kinds: dict[str, ColumnKind] = {}
    for done, (i, label) in enumerate(zip(keep, labels, strict=True)):
        if cancelled is not None and cancelled():
            raise Cancelled()
        if progress is not None:
            progress(span[0] + (span[1] - span[0]) * done / len(keep))
        column = cells.column(i)
        series, kind, col_notes = raw.classify(column, i, label)
        wanted = raw.options.kinds.get(label)
        if wanted is not None and wanted != kind:
            series, kind, col_notes = _corrected(raw, column, i, label, kind)
        columns[label] = series.reset_index(drop=True)
        kinds[label] = kind
        notes.extend(col_notes)
    # copy=False keeps each column as built (no stacking of same-dtype columns into one
    # block, which would copy every number column once more; the engine reads by column).
    data = pd.DataFrame(columns, index=pd.RangeIndex(cells.rows), copy=False)
    if list(data.columns) != labels:  # no columns at all
        data = pd.DataFrame(index=pd.RangeIndex(cells.rows))
    renamed = [f"'{h}' as '{lab}'" for h, lab in zip(headers, labels, strict=True) if h != lab]
    if renamed:
        notes.append("Column names repeated or blank, shown as: " + ", ".join(renamed) + ".")
    return Table(data, headers, kinds, Path(raw.path), raw.options, notes, raw.sheets)


def _corrected(raw: RawTable, column: Cells, i: int, label: str, guessed: ColumnKind):
    """Column ``i`` read as the options ask, from its cells as written (or refused)."""
    options = raw.options
    wanted = options.kinds[label]
    series, kind, notes = read_as(
        raw.text(column, i),
        wanted,
        label,
        raw.path,
        options.decimal or ".",
        options.thousands or "",
    )
    note = f"Column '{label}': read as {described(kind)}, as asked (it looked like {described(guessed)})."
    return series, kind, [note, *notes]


class _Cells:
    """Row and column tests over either a DataFrame or an Arrow table."""

    def __init__(self, frame: pd.DataFrame | pa.Table) -> None:
        self.frame = frame

    @property
    def rows(self) -> int:
        return len(self.frame) if isinstance(self.frame, pd.DataFrame) else self.frame.num_rows

    @property
    def width(self) -> int:
        return self.frame.shape[1]

    def column(self, i: int) -> Cells:
        if isinstance(self.frame, pd.DataFrame):
            return self.frame.iloc[:, i]
        return self.frame.column(i)

    def drop_empty_tail(self, bare_tail=None) -> None:
        frame = self.frame
        if not self.width or not self.rows:
            return
        if isinstance(frame, pd.DataFrame):
            filled = frame.notna().to_numpy().any(axis=1)
        else:
            if any(col[len(col) - 1].is_valid for col in frame.columns):
                return  # the usual case, told from the last row alone
            filled = np.zeros(self.rows, bool)
            for col in frame.columns:
                filled |= np.asarray(col.is_valid())
        if filled[-1]:
            return
        last = np.flatnonzero(filled)
        end = int(last[-1]) + 1 if len(last) else 0
        if bare_tail is not None:
            end = self.rows - bare_tail(self.rows - end)
        self.frame = frame.iloc[:end] if isinstance(frame, pd.DataFrame) else frame.slice(0, end)

    def has_values(self, i: int) -> bool:
        if isinstance(self.frame, pd.DataFrame):
            return bool(self.frame.iloc[:, i].notna().any())
        column = self.frame.column(i)
        return column.null_count < len(column)
