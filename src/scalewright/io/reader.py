"""Entry points for reading: choose the reader by extension and check the file first."""

from __future__ import annotations

import hashlib
import os
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

from ..errors import ReadError
from .csv_reader import read_text_table
from .file_types import SNIFF_BYTES, check_extension, check_text_content
from .options import (
    TEXT_SUFFIXES,
    CancelCheck,
    Detection,
    Progress,
    ReadOptions,
    Table,
)
from .parquet import read_parquet_table
from .workbook_reader import list_workbook_sheets, read_workbook_table


def _checked(path) -> Path:
    path = Path(path)
    if not path.exists():
        raise ReadError(path, "the file does not exist")
    if path.is_dir():
        raise ReadError(path, "this is a folder, not a file")
    check_extension(path)
    return path


def _check_content(path: Path, options: ReadOptions) -> None:
    """A text file that is really a PDF, a workbook or prose is refused before parsing."""
    if path.suffix.lower() not in TEXT_SUFFIXES:
        return
    try:
        with open(path, "rb") as fh:
            head = fh.read(SNIFF_BYTES)
    except OSError as err:
        raise ReadError(path, f"the file cannot be opened ({err.strerror})") from None
    check_text_content(path, head, delimiter_given=options.delimiter is not None)


def read_table(
    path,
    options: ReadOptions | None = None,
    *,
    progress: Progress | None = None,
    cancelled: CancelCheck | None = None,
) -> Table:
    """Read a whole CSV/TSV/TXT or workbook file; every detected option is filled in.

    The table records the file's size and SHA-256 as read; a file that changes while it
    is read is refused rather than recorded with a fingerprint it does not match.
    """
    path = _checked(path)
    options = options or ReadOptions()
    _check_content(path, options)
    before = _stamp(path)
    # The digest is taken on a second thread while the rows are parsed (hashlib and file
    # reads let other threads run): a tenth of the time of a large CSV's read.
    with ThreadPoolExecutor(max_workers=1) as pool:
        digest = pool.submit(fingerprint, path)
        try:
            if path.suffix.lower() in TEXT_SUFFIXES:
                table = read_text_table(path, options, progress=progress, cancelled=cancelled)
            elif path.suffix.lower() == ".parquet":
                table = read_parquet_table(path, options)
            else:
                table = read_workbook_table(path, options, progress=progress, cancelled=cancelled)
        finally:
            size, sha256 = digest.result()  # its error first, as when it ran before the read
    if _stamp(path) != before or size != before[0]:
        raise ReadError(path, "the file changed while it was being read; read it again")
    table.size, table.sha256 = size, sha256
    if progress is not None:
        progress(1.0)
    return table


def detect(path, options: ReadOptions | None = None, *, preview_rows: int = 50) -> Detection:
    """Read only the start of the file: what would be detected and how the rows would load."""
    path = _checked(path)
    options = options or ReadOptions()
    _check_content(path, options)
    if path.suffix.lower() in TEXT_SUFFIXES:
        table = read_text_table(path, options, preview_rows=preview_rows)
    elif path.suffix.lower() == ".parquet":
        table = read_parquet_table(path, options, preview_rows=preview_rows)
    else:
        table = read_workbook_table(path, options, preview_rows=preview_rows)
    return Detection(
        table.options, table.sheets, table.data, table.notes, table.headers, table.kinds
    )


def list_sheets(path) -> list[str]:
    """Visible worksheet names of a workbook; [] for delimited text files."""
    path = _checked(path)
    if path.suffix.lower() in TEXT_SUFFIXES or path.suffix.lower() == ".parquet":
        return []
    return list_workbook_sheets(path)


def _stamp(path: Path) -> tuple[int, int]:
    try:
        st = os.stat(path)
    except OSError as err:
        raise ReadError(path, f"the file cannot be opened ({err.strerror})") from None
    return st.st_size, st.st_mtime_ns


def fingerprint(path) -> tuple[int, str]:
    """(size in bytes, SHA-256 hex) so a project can tell whether its source changed."""
    path = Path(path)
    digest = hashlib.sha256()
    size = 0
    try:
        with open(path, "rb") as fh:
            while block := fh.read(1 << 20):
                digest.update(block)
                size += len(block)
    except FileNotFoundError:
        raise ReadError(path, "the file does not exist") from None
    except OSError as err:
        raise ReadError(path, f"the file cannot be opened ({err.strerror})") from None
    return size, digest.hexdigest()
