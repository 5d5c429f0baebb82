"""Read delimited text files (CSV, TSV, TXT).

The bytes are brought to UTF-8 once; the layout (delimiter, header row, number marks) is
detected on a sample; the rows are split by pyarrow's CSV reader with every cell kept as
text; ``kinds`` then decides each column's type. Rows of the wrong width are reported by
their line number in the file, found with a quote-aware numpy scan.
"""

from __future__ import annotations

import codecs
from pathlib import Path
from typing import NamedTuple

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.csv as pacsv

from ..errors import Cancelled, ReadError
from . import detect as det
from .kinds import classify_text
from .labels import unique_labels
from .options import CancelCheck, ColumnKind, Progress, ReadOptions, Table

_UTF8 = {"utf-8", "utf8", "utf_8", "ascii", "us-ascii"}


def read_text_table(
    path: Path,
    options: ReadOptions,
    *,
    progress: Progress | None = None,
    cancelled: CancelCheck | None = None,
    preview_rows: int | None = None,
) -> Table:
    """Read the file (or, with ``preview_rows``, only its start) into a Table."""
    notes: list[str] = []
    raw = _read_bytes(path, det.SAMPLE_BYTES * 4 if preview_rows is not None else None)
    if not raw:
        raise ReadError(path, "the file is empty")
    try:
        if options.encoding is not None:
            encoding, why = options.encoding, None
        else:
            encoding, why = det.detect_encoding(raw)
    except det.NotText:
        raise ReadError(path, "this is not a text table (it contains binary data)") from None
    truncated = preview_rows is not None and len(raw) == det.SAMPLE_BYTES * 4
    try:
        data = _to_utf8(path, raw, encoding, partial=truncated)
    except ReadError:
        if options.encoding is not None or encoding != "utf-8":
            raise
        # UTF-8 at the start, something else further down: a single-byte code page.
        encoding, why = det.single_byte(raw)
        data = _to_utf8(path, raw, encoding, partial=truncated)
    if truncated:
        data = data[: data.rfind(b"\n") + 1] or data
    if b"\n" not in data and b"\r" in data:
        data = data.replace(b"\r", b"\n")  # classic Mac OS line ends
    if why:
        notes.append(f"Encoding: {why}.")

    sample = _sample_text(data)
    if not sample.strip():
        raise ReadError(path, "the file has no data (only blank lines)")
    delimiter = options.delimiter or det.detect_delimiter(sample)
    if options.delimiter is None:
        notes.append(f"Columns separated by {det.describe_delimiter(delimiter)}.")
    rows = det.parse_rows(sample, delimiter)
    if not rows:
        raise ReadError(path, "the file has no data (only blank lines)")
    if options.header_row is None:
        header_row, _ = det.detect_header(rows)
        if header_row > 0:
            notes.append(f"Header found on row {header_row + 1}; the lines above it were skipped.")
    else:
        header_row = options.header_row

    offset = _line_offset(data, header_row)
    if offset is None or not data[offset : offset + det.SAMPLE_BYTES].strip():
        raise ReadError(path, f"row {header_row + 1} is beyond the end of the file")
    body = memoryview(data)[offset:]
    # Only the first stretch is scanned here; the bulk parse checks the rest (and on a
    # failure the whole file is scanned to name the offending row).
    head_len = len(body)
    if head_len > det.SAMPLE_BYTES:
        head_len = bytes(body[: det.SAMPLE_BYTES]).rfind(b"\n") + 1 or det.SAMPLE_BYTES
    scan = _scan_rows(body[:head_len], delimiter)
    starts, counts, blank = scan.starts, scan.counts, scan.blank
    if blank[0]:
        raise ReadError(path, f"row {header_row + 1} is blank, so it cannot be the header")
    width = int(counts[0])
    header_fields = det.parse_rows(
        bytes(body[: _row_end(scan, body, 0)]).decode("utf-8"), delimiter, 1
    )
    headers = header_fields[0][1] if header_fields else [""] * width
    if len(headers) != width:  # header line with unbalanced quotes
        raise ReadError(path, f"row {header_row + 1} (the header) cannot be split into columns")
    data_rows = np.flatnonzero(~blank[1:]) + 1
    if head_len < len(body):
        data_rows = data_rows[:-1]  # the last row of the stretch may continue past it
    if preview_rows is not None:
        data_rows = data_rows[:preview_rows]
    _check_widths(path, scan, data_rows, width, header_row)

    decimal, thousands = _number_marks(body, delimiter, options, notes)

    if progress is not None:
        progress(0.1)
    if len(starts) < 2:
        rest = body[len(body) :]
    elif preview_rows is not None and preview_rows + 1 < len(starts):
        rest = body[int(starts[1]) : int(starts[preview_rows + 1])]
    else:
        rest = body[int(starts[1]) :]
    if cancelled is not None and cancelled():
        raise Cancelled()
    quoted = data.find(b'"', offset) >= 0
    try:
        frame = _parse_body(rest, width, delimiter, quoted, skip_spaces=scan.spaces)
    except pa.ArrowInvalid as err:
        frame = _after_parse_error(path, rest, err, width, delimiter, quoted, header_row, scan)
    used = ReadOptions(encoding, delimiter, decimal, thousands, header_row, None)
    return build_table(
        path,
        frame,
        headers,
        used,
        notes,
        [],
        decimal,
        thousands,
        from_workbook=False,
        progress=progress,
        cancelled=cancelled,
    )


def _number_marks(body, delimiter: str, options: ReadOptions, notes: list[str]):
    """Decimal and thousands marks: the user's choice, else what the sample shows."""
    sample = bytes(body[: det.SAMPLE_BYTES]).decode("utf-8", errors="ignore")
    rows = det.parse_rows(sample, delimiter, det.SAMPLE_ROWS)[1:]
    decimal, thousands = det.detect_marks([c for _, f in rows for c in f], delimiter)
    if options.decimal is not None:
        decimal = options.decimal
    if options.thousands is not None:
        thousands = options.thousands
    if thousands == decimal:
        thousands = ""
    if options.decimal is None and decimal == ",":
        notes.append("Numbers use a decimal comma.")
    if options.thousands is None and thousands:
        name = {",": "commas", ".": "points", " ": "spaces", "'": "apostrophes"}[thousands]
        notes.append(f"Thousands are separated by {name}.")
    return decimal, thousands


def _read_bytes(path: Path, limit: int | None) -> bytes:
    try:
        with open(path, "rb") as fh:
            return fh.read() if limit is None else fh.read(limit)
    except FileNotFoundError:
        raise ReadError(path, "the file does not exist") from None
    except IsADirectoryError:
        raise ReadError(path, "this is a folder, not a file") from None
    except OSError as err:
        raise ReadError(path, f"the file cannot be opened ({err.strerror})") from None


def _to_utf8(path: Path, raw: bytes, encoding: str, *, partial: bool) -> bytes:
    """The file's bytes as UTF-8 without a byte-order mark."""
    try:
        name = codecs.lookup(encoding).name
    except LookupError:
        raise ReadError(path, f"unknown encoding '{encoding}'") from None
    if name in _UTF8 or name == "utf-8-sig":
        data = raw[3:] if raw.startswith(codecs.BOM_UTF8) else raw
        try:
            data.decode("utf-8")
        except UnicodeDecodeError as err:
            if not (partial and err.reason == "unexpected end of data"):
                raise ReadError(
                    path,
                    f"the text is not valid {encoding} (at byte {err.start}); "
                    "choose another encoding",
                ) from None
        return data
    try:
        text = codecs.getincrementaldecoder(name)().decode(raw, final=not partial)
    except UnicodeDecodeError as err:
        raise ReadError(
            path, f"the text is not valid {encoding} (at byte {err.start}); choose another encoding"
        ) from None
    return text.removeprefix("\ufeff").encode("utf-8")


def _sample_text(data: bytes) -> str:
    head = data[: det.SAMPLE_BYTES]
    if len(data) > det.SAMPLE_BYTES:
        head = head[: head.rfind(b"\n") + 1] or head
    return head.decode("utf-8", errors="ignore")


def _line_offset(data: bytes, line: int) -> int | None:
    pos = 0
    for _ in range(line):
        pos = data.find(b"\n", pos)
        if pos < 0:
            return None
        pos += 1
    return pos


class Scan(NamedTuple):
    starts: np.ndarray  # byte offset where each row starts
    counts: np.ndarray  # fields in each row
    lines: np.ndarray  # 0-based physical line of each row start
    blank: np.ndarray  # row is empty or only spaces
    spaces: bool  # some blank row holds spaces (pyarrow needs telling to skip those)
    quoted: bool  # the stretch holds a double quote


def _scan_rows(body: memoryview, delimiter: str) -> Scan:
    """Row starts, field counts, physical line index and blank flag of every row.

    Delimiters and line breaks inside double quotes do not count: a running XOR over the
    quote characters marks the quoted stretches (a doubled quote toggles twice).
    """
    a = np.frombuffer(body, dtype=np.uint8)
    newline = a == 10
    is_delim = a == ord(delimiter)
    quotes = a == 34
    if quotes.any():
        outside = ~np.bitwise_xor.accumulate(quotes)
        row_nl = np.flatnonzero(newline & outside)
        delims = np.flatnonzero(is_delim & outside)
    else:
        row_nl = np.flatnonzero(newline)
        delims = np.flatnonzero(is_delim)
    ends = row_nl
    if len(a) and (not len(row_nl) or row_nl[-1] != len(a) - 1):
        ends = np.append(row_nl, len(a))
    starts = np.concatenate(([0], row_nl + 1))[: len(ends)]
    counts = np.searchsorted(delims, ends) - np.searchsorted(delims, starts) + 1
    lines = np.searchsorted(np.flatnonzero(newline), starts)
    length = ends - starts
    blank = length == 0
    short = np.flatnonzero((counts == 1) & ~blank)
    spaces = False
    for r in short:
        if not bytes(body[starts[r] : ends[r]]).strip():
            blank[r] = True
            spaces = spaces or ends[r] - starts[r] > 1 or body[starts[r]] != 13
    return Scan(starts, counts, lines, blank, spaces, bool(quotes.any()))


def _row_end(scan: Scan, body: memoryview, r: int) -> int:
    starts = scan.starts
    return int(starts[r + 1]) if r + 1 < len(starts) else len(body)


def _check_widths(path, scan, rows, width, header_row) -> None:
    counts, lines = scan.counts, scan.lines
    bad = rows[counts[rows] != width]
    if len(bad):
        r = int(bad[0])
        raise ReadError(
            path,
            f"row {header_row + 1 + int(lines[r])} has {int(counts[r])} fields but the header "
            f"(row {header_row + 1}) has {width}",
        )


def _parse_body(rest, width, delimiter, quoted, *, skip_spaces) -> pd.DataFrame:
    """Split the data rows into string columns with pyarrow's CSV reader.

    Every cell is kept as text so that leading zeros and long codes survive; pyarrow builds
    those strings without Python objects, about ten times faster than the pandas C reader
    with ``dtype=str`` (``benchmarks/bench_io.py``). Rows of the wrong width raise.
    """
    if not len(rest):
        return pd.DataFrame({i: pd.Series([], dtype="str") for i in range(width)})
    names = [str(i) for i in range(width)]
    table = pacsv.read_csv(
        pa.BufferReader(pa.py_buffer(rest)),
        read_options=pacsv.ReadOptions(column_names=names),
        parse_options=pacsv.ParseOptions(
            delimiter=delimiter,
            quote_char='"',
            double_quote=True,
            newlines_in_values=quoted,
            ignore_empty_lines=True,
            # The handler slows pyarrow threefold, so only files with such lines pay.
            invalid_row_handler=_skip_blank_row if skip_spaces else None,
        ),
        convert_options=pacsv.ConvertOptions(
            column_types=dict.fromkeys(names, pa.string()),
            strings_can_be_null=True,
            quoted_strings_can_be_null=True,
            null_values=[""],
        ),
    )
    frame = table.to_pandas()
    frame.columns = range(width)
    return frame


def _after_parse_error(path, rest, err, width, delimiter, quoted, header_row, head_scan):
    """Scan every row to name the one that broke the parse, or retry past blank lines."""
    scan = _scan_rows(rest, delimiter)
    offset_lines = int(head_scan.lines[1]) if len(head_scan.lines) > 1 else 1
    counts, lines, blank, spaces = scan.counts, scan.lines, scan.blank, scan.spaces
    rows = np.flatnonzero(~blank)
    bad = rows[counts[rows] != width]
    if len(bad):
        r = int(bad[0])
        raise ReadError(
            path,
            f"row {header_row + 1 + offset_lines + int(lines[r])} has {int(counts[r])} fields "
            f"but the header (row {header_row + 1}) has {width}",
        )
    if spaces:
        try:
            return _parse_body(rest, width, delimiter, quoted, skip_spaces=True)
        except pa.ArrowInvalid as again:
            err = again
    raise ReadError(path, f"the rows cannot be split into columns ({err})")


def _skip_blank_row(row) -> str:
    """Lines of spaces only are blank lines, not rows (the width check ran before)."""
    return "skip" if not (row.text or "").strip() else "error"


def build_table(
    path: Path,
    frame: pd.DataFrame,
    headers: list[str],
    used: ReadOptions,
    notes: list[str],
    sheets: list[str],
    decimal: str,
    thousands: str,
    *,
    from_workbook: bool,
    classify=None,
    progress: Progress | None = None,
    cancelled: CancelCheck | None = None,
    span: tuple[float, float] = (0.4, 1.0),
) -> Table:
    """Drop empty edge rows/columns, classify every column and attach unique labels.

    Progress moves through ``span`` column by column.
    """
    # Trailing rows with no value at all (left behind by spreadsheet exports).
    filled = frame.notna().to_numpy().any(axis=1) if frame.shape[1] else np.zeros(0, bool)
    if len(filled) and not filled[-1]:
        last = np.flatnonzero(filled)
        frame = frame.iloc[: (int(last[-1]) + 1 if len(last) else 0)]
    # Columns with no header text and no values at the right edge are not part of the table.
    keep = list(range(frame.shape[1]))
    while keep and not headers[keep[-1]].strip() and not frame.iloc[:, keep[-1]].notna().any():
        keep.pop()
    dropped = frame.shape[1] - len(keep)
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
        if classify is not None:
            series, kind, col_notes = classify(i, label)
        else:
            series, kind, col_notes = classify_text(
                frame.iloc[:, i], label, decimal, thousands, from_workbook=from_workbook
            )
        columns[label] = series.reset_index(drop=True)
        kinds[label] = kind
        notes.extend(col_notes)
    data = pd.DataFrame(columns, index=pd.RangeIndex(len(frame)))
    if list(data.columns) != labels:  # no columns at all
        data = pd.DataFrame(index=pd.RangeIndex(len(frame)))
    renamed = [f"'{h}' as '{lab}'" for h, lab in zip(headers, labels, strict=True) if h != lab]
    if renamed:
        notes.append("Column names repeated or blank, shown as: " + ", ".join(renamed) + ".")
    return Table(data, headers, kinds, Path(path), used, notes, sheets)
