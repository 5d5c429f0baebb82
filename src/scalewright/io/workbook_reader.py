"""Read workbooks (XLSX, XLSM, XLS, ODS) through python-calamine.

calamine is several times faster than openpyxl (see ``benchmarks/bench_io.py``) and gives
typed cells: floats for numbers, ``date``/``datetime`` for date-formatted cells, bools and
strings. The table is found inside the sheet (title rows skipped, merged header cells
spread over the columns they cover) and each column is classified by ``kinds``.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd
import python_calamine as calamine

from ..errors import Cancelled, ReadError
from .corrections import workbook_text
from .detect import is_title_like
from .kinds import cell_text, classify_cells
from .options import CancelCheck, Progress, ReadOptions, Table
from .table import RawTable, build_table

_ZIP_MAGIC = b"PK\x03\x04"
_OLE_MAGIC = b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1"
# An encrypted OOXML package is an OLE compound file holding an "EncryptedPackage" stream
# ([MS-OFFCRYPTO] 2.3.4.4); its name is stored in UTF-16LE in the directory.
_ENCRYPTED = "EncryptedPackage".encode("utf-16-le")
HEADER_SEARCH_ROWS = 50


def open_workbook(path: Path) -> calamine.CalamineWorkbook:
    """Open with calamine, turning every failure into a plain ReadError."""
    try:
        with open(path, "rb") as fh:
            head = fh.read(8)
            size = fh.seek(0, 2)
    except FileNotFoundError:
        raise ReadError(path, "the file does not exist") from None
    except IsADirectoryError:
        raise ReadError(path, "this is a folder, not a file") from None
    except OSError as err:
        raise ReadError(path, f"the file cannot be opened ({err.strerror})") from None
    if size == 0:
        raise ReadError(path, "the file is empty")
    suffix = path.suffix.lower()
    if head.startswith(_OLE_MAGIC) and suffix != ".xls":
        if _ENCRYPTED in path.read_bytes():
            raise ReadError(
                path,
                "the workbook is protected with a password; save an unprotected copy and open that",
            )
        raise ReadError(path, f"this is not a valid {suffix} workbook")
    if suffix != ".xls" and not head.startswith(_ZIP_MAGIC):
        raise ReadError(
            path, f"this is not a valid {suffix} workbook (damaged or another kind of file)"
        )
    if suffix == ".xls" and not head.startswith(_OLE_MAGIC):
        raise ReadError(path, "this is not a valid .xls workbook (damaged or another kind of file)")
    try:
        return calamine.CalamineWorkbook.from_path(str(path))
    except calamine.PasswordError:
        raise ReadError(
            path,
            "the workbook is protected with a password; save an unprotected copy and open that",
        ) from None
    except Exception as err:  # calamine raises several unrelated types for damaged files
        raise ReadError(
            path, f"the workbook is damaged and cannot be read ({_short(err)})"
        ) from None


def _short(err: Exception) -> str:
    text = str(err).strip().splitlines()[0] if str(err).strip() else type(err).__name__
    return text[:120]


def visible_sheets(book: calamine.CalamineWorkbook) -> list[str]:
    """Worksheets a person sees in the workbook (hidden sheets hold machinery, not data)."""
    names = []
    for meta in book.sheets_metadata:
        if meta.typ != calamine.SheetTypeEnum.WorkSheet:
            continue
        if meta.visible != calamine.SheetVisibleEnum.Visible:
            continue
        names.append(meta.name)
    return names


def list_workbook_sheets(path: Path) -> list[str]:
    book = open_workbook(path)
    try:
        return visible_sheets(book)
    finally:
        book.close()


def _load_rows(path, book, name, nrows=None):
    try:
        sheet = book.get_sheet_by_name(name)
        rows = sheet.to_python(skip_empty_area=False, nrows=nrows)
        merged = sheet.merged_cell_ranges or []
    except Exception as err:
        raise ReadError(path, f"sheet '{name}' cannot be read ({_short(err)})") from None
    return rows, merged


def _header_text(v) -> str:
    """A header cell as the file has it (text untouched, spaces included)."""
    if v is None:
        return ""
    return v if isinstance(v, str) else cell_text(v)


def _is_blank(v) -> bool:
    return v is None or (isinstance(v, str) and not v.strip())


def read_workbook_table(
    path: Path,
    options: ReadOptions,
    *,
    progress: Progress | None = None,
    cancelled: CancelCheck | None = None,
    preview_rows: int | None = None,
) -> Table:
    book = open_workbook(path)
    notes: list[str] = []
    try:
        sheets = visible_sheets(book)
        if not sheets:
            raise ReadError(path, "the workbook has no worksheets")
        limit = None
        if preview_rows is not None:
            limit = (options.header_row or 0) + HEADER_SEARCH_ROWS + preview_rows
        if options.sheet is not None:
            if options.sheet not in book.sheet_names:
                raise ReadError(
                    path, f"there is no sheet named '{options.sheet}' (sheets: {', '.join(sheets)})"
                )
            name = options.sheet
            rows, merged = _load_rows(path, book, name, limit)
        else:
            name, rows, merged = None, [], []
            for candidate in sheets:
                rows, merged = _load_rows(path, book, candidate, limit)
                if any(not _is_blank(v) for row in rows for v in row):
                    name = candidate
                    break
            if name is None:
                raise ReadError(path, "every sheet in the workbook is empty")
            if len(sheets) > 1:
                notes.append(f"Read sheet '{name}' (the workbook has {len(sheets)} sheets).")
    finally:
        book.close()
    if cancelled is not None and cancelled():
        raise Cancelled()
    if progress is not None:
        progress(0.5)
    if not rows or all(_is_blank(v) for row in rows for v in row):
        raise ReadError(path, f"sheet '{name}' is empty")

    grid = _to_grid(rows)
    filled = (grid != "") & np.not_equal(grid, None)
    used_cols = np.flatnonzero(filled.any(axis=0))
    first_col, last_col = int(used_cols[0]), int(used_cols[-1])
    width = last_col - first_col + 1

    if options.header_row is None:
        header_row = _find_header(grid, filled, first_col, last_col)
        if header_row > 0:
            notes.append(f"Header found on row {header_row + 1}; the rows above it were skipped.")
    else:
        header_row = options.header_row
        if header_row >= len(grid) or not filled[header_row].any():
            raise ReadError(
                path, f"row {header_row + 1} of sheet '{name}' is blank, so it cannot be the header"
            )

    headers = [_header_text(v) for v in grid[header_row, first_col : last_col + 1]]
    data_start = header_row + 1
    for (r1, c1), (r2, c2) in merged:
        if r1 <= header_row <= r2 and c1 < grid.shape[1]:
            data_start = max(data_start, r2 + 1)
            text = _header_text(grid[r1, c1])
            for c in range(max(c1, first_col), min(c2, last_col) + 1):
                headers[c - first_col] = text
            if c2 > c1 and text:
                notes.append(
                    f"Header '{text}' spans {c2 - c1 + 1} merged cells; "
                    "each column under it takes that name."
                )
    body = grid[data_start:, first_col : last_col + 1]
    if preview_rows is not None:
        body = body[:preview_rows]
    body_filled = filled[data_start:, first_col : last_col + 1][: len(body)]
    keep_rows = np.flatnonzero(body_filled.any(axis=1))
    n_rows = int(keep_rows[-1]) + 1 if len(keep_rows) else 0
    body = body[:n_rows]

    def classify(_cells, i, label):
        return classify_cells(body[:, i], label)

    frame = pd.DataFrame(body_filled[:n_rows].astype(object)).where(body_filled[:n_rows])

    def text(_cells, i):
        return workbook_text(body[:, i])

    raw = RawTable(
        path,
        frame.reindex(columns=range(width)),
        headers,
        ReadOptions(header_row=header_row, sheet=name, kinds=options.kinds),
        classify,
        text,
        notes,
        sheets,
    )
    return build_table(raw, progress=progress, cancelled=cancelled, span=(0.5, 1.0))


def _find_header(grid, filled, first_col, last_col) -> int:
    """First row in the top of the sheet that is not a title line (see ``is_title_like``)."""
    top = min(len(grid), HEADER_SEARCH_ROWS)
    width = last_col - first_col + 1
    for r in range(top):
        if not filled[r].any():
            continue
        fields = ["x" if f else "" for f in filled[r, first_col : last_col + 1]]
        # Left-align the test: a title sits in the first filled column of the sheet.
        if not is_title_like(fields, width):
            return r
    return int(np.flatnonzero(filled.any(axis=1))[0])


def _to_grid(rows: list[list]) -> np.ndarray:
    width = max(len(r) for r in rows)
    if all(len(r) == width for r in rows):
        grid = np.empty((len(rows), width), dtype=object)
        grid[:] = rows
        return grid
    grid = np.empty((len(rows), width), dtype=object)
    grid.fill("")
    for i, row in enumerate(rows):
        grid[i, : len(row)] = row
    return grid
