"""Read delimited text files (CSV, TSV, TXT).

The bytes are brought to UTF-8 once; the layout (delimiter, header row, number marks) is
detected on a sample; the rows are split by pyarrow's CSV reader; ``kinds`` then decides
each column's type. Cells are kept as text, except in columns whose sample holds decimal
numbers: those are parsed as float64 by the reader itself, and kept only when the whole
column shows nothing the text rules would treat otherwise (else they are read as text
after all), so the result is always the one the text rules give. Rows of the wrong width
are reported by their line number in the file, found with a quote-aware numpy scan.
"""

from __future__ import annotations

import codecs
import re
from dataclasses import dataclass, replace
from pathlib import Path
from typing import NamedTuple

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pc
import pyarrow.csv as pacsv

from ..errors import Cancelled, ReadError
from . import detect as det
from .kinds import (
    MAX_NUMBER_DIGITS,
    arrow_to_numpy,
    classify_arrow,
    decimal_comma_note,
    text_series,
)
from .labels import unique_labels
from .options import CancelCheck, ColumnKind, Progress, ReadOptions, Table
from .table import RawTable, build_table

_UTF8 = {"utf-8", "utf8", "utf_8", "ascii", "us-ascii"}
# Files at least this long are parsed from the disk (see read_text_table); the start read
# first holds the detection sample with room for title lines above the header.
STREAM_HEAD_BYTES = det.SAMPLE_BYTES * 4
# A preview reads this much of the file's start.
PREVIEW_BYTES = det.SAMPLE_BYTES * 4


@dataclass(frozen=True)
class TextLayout:
    """How the rows of a text file are written, resolved from the user's options and the
    file's start: what every parsing step below needs to know."""

    encoding: str
    delimiter: str
    decimal: str
    thousands: str
    header_row: int  # 0-based physical line of the header
    width: int  # fields in every row
    quoted: bool  # a double quote appears below the header (a cell may hold a line end)
    skip_spaces: bool  # some blank row holds spaces (pyarrow needs telling to skip those)

    def read_options(self) -> ReadOptions:
        """The options as resolved, recorded in the Table (and so in a project)."""
        return ReadOptions(
            self.encoding, self.delimiter, self.decimal, self.thousands, self.header_row, None
        )


class _FileTail(NamedTuple):
    """The rest of a file from byte ``start``, for pyarrow to read from the disk."""

    path: Path
    start: int


def read_text_table(
    path: Path,
    options: ReadOptions,
    *,
    progress: Progress | None = None,
    cancelled: CancelCheck | None = None,
    preview_rows: int | None = None,
) -> Table:
    """Read the file (or, with ``preview_rows``, only its start) into a Table.

    A big UTF-8 file is examined from its start and its rows are then parsed by pyarrow
    straight from the disk, which overlaps reading with parsing and spares a copy of the
    whole file; whatever that way cannot settle exactly (another encoding, a header far
    down, a row that does not split) is read again from memory (``_read_whole``).
    """
    if preview_rows is not None:
        start = _read_bytes(path, PREVIEW_BYTES)
        return _read_whole(path, options, start, preview_rows=preview_rows)
    raw = _read_bytes(path, STREAM_HEAD_BYTES)
    if len(raw) == STREAM_HEAD_BYTES:  # a big file, perhaps one to parse from the disk
        table = _read_streamed(path, options, raw, progress, cancelled)
        if table is not None:
            return table
        raw = _read_bytes(path, None)
    return _read_whole(path, options, raw, progress, cancelled)


def _read_whole(
    path: Path,
    options: ReadOptions,
    raw: bytes,
    progress: Progress | None = None,
    cancelled: CancelCheck | None = None,
    *,
    preview_rows: int | None = None,
) -> Table:
    """Read from memory: ``raw`` is the whole file, or with ``preview_rows`` its start."""
    if not raw:
        raise ReadError(path, "the file is empty")
    truncated = preview_rows is not None and len(raw) == PREVIEW_BYTES
    encoding, why = _encoding(path, options, raw)
    try:
        data = _to_utf8(path, raw, encoding, partial=truncated)
    except ReadError:
        if options.encoding is not None or encoding != "utf-8":
            raise
        # UTF-8 at the start, something else further down: a single-byte code page.
        encoding, why = det.single_byte(raw)
        data = _to_utf8(path, raw, encoding, partial=truncated)
    if truncated:
        data = _whole_lines(data)
    if b"\n" not in data and b"\r" in data:
        data = data.replace(b"\r", b"\n")  # classic Mac OS line ends
    found = _find_header(path, options, data, why)
    head = _examine(path, options, data, found, preview_rows)
    if progress is not None:
        progress(0.1)
    body, starts = head.body, head.scan.starts
    if len(starts) < 2:
        rest = body[len(body) :]
    elif preview_rows is not None and preview_rows + 1 < len(starts):
        rest = body[int(starts[1]) : int(starts[preview_rows + 1])]
    else:
        rest = body[int(starts[1]) :]
    _check_cancelled(cancelled)
    layout = head.layout(encoding, quoted=data.find(b'"', found.offset) >= 0)
    floats = _planned_floats(head, layout, options) if preview_rows is None else set()
    frame = _read_body(path, rest, layout, head.scan, floats)
    return _finish(path, options, frame, rest, layout, head, progress=progress, cancelled=cancelled)


def _read_streamed(
    path: Path,
    options: ReadOptions,
    start: bytes,
    progress: Progress | None,
    cancelled: CancelCheck | None,
) -> Table | None:
    """Read a big file whose rows pyarrow parses from the disk, examined from ``start``
    (its first ``STREAM_HEAD_BYTES``); None when only a read from memory gives the exact
    result, which each check below says why."""
    encoding, why = _encoding(path, options, start)
    if _codec_name(encoding) not in _UTF8 | {"utf-8-sig"}:
        return None  # other encodings are converted in memory
    data = _utf8_start(start)
    if data is None:
        return None  # not UTF-8 after all: the whole read finds the code page
    skipped = len(start) - len(data)  # a byte-order mark
    data = _whole_lines(data)
    if b"\n" not in data:
        return None
    found = _find_header(path, options, data, why)
    if found.offset is None or found.offset + 2 * det.SAMPLE_BYTES > len(data):
        return None  # the header is too far down for a full sample after it
    if data.find(b'"', found.offset) < 0:
        # Whether a quote comes further down decides how pyarrow splits the rows, and a
        # file without quotes splits faster, so such a file is read whole to find out.
        return None
    head = _examine(path, options, data, found, None)
    if len(head.scan.starts) < 3:
        return None  # rows too long for the stretch to hold a sample
    if progress is not None:
        progress(0.1)
    _check_cancelled(cancelled)
    layout = head.layout(encoding, quoted=True)
    rest = _FileTail(Path(path), skipped + found.offset + int(head.scan.starts[1]))
    floats = _planned_floats(head, layout, options)
    try:
        frame = _read_body(path, rest, layout, head.scan, floats)
    except (pa.ArrowException, OSError):
        return None  # a row that does not split, or bytes that are not UTF-8, further down
    return _finish(path, options, frame, rest, layout, head, progress=progress, cancelled=cancelled)


def _check_cancelled(cancelled: CancelCheck | None) -> None:
    if cancelled is not None and cancelled():
        raise Cancelled()


def _encoding(path: Path, options: ReadOptions, raw: bytes) -> tuple[str, str | None]:
    """The user's encoding, else the one detected with the reason to show."""
    if options.encoding is not None:
        return options.encoding, None
    try:
        return det.detect_encoding(raw)
    except det.NotText:
        raise ReadError(path, "this is not a text table (it contains binary data)") from None


def _whole_lines(data: bytes) -> bytes:
    """The start of a file up to its last complete line."""
    return data[: data.rfind(b"\n") + 1] or data


class _HeaderLine(NamedTuple):
    """Where the header is: found from the sample, before the rows are scanned."""

    delimiter: str
    header_row: int
    offset: int | None  # byte where the header line starts; None past the end of the data
    notes: list[str]


def _find_header(path: Path, options: ReadOptions, data: bytes, why: str | None) -> _HeaderLine:
    """Delimiter and header row: the user's choice, else what the sample shows."""
    notes: list[str] = []
    if why:
        notes.append(f"Encoding: {why}.")
    sample = _sample_text(data)
    if not sample.strip():
        raise ReadError(path, "the file has no data (only blank lines)")
    default = "\t" if path.suffix.lower() == ".tsv" else ","
    delimiter = options.delimiter or det.detect_delimiter(sample, default)
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
    return _HeaderLine(delimiter, header_row, _line_offset(data, header_row), notes)


@dataclass(frozen=True)
class _Head:
    """The rows from the header down, as far as the first stretch shows them."""

    found: _HeaderLine
    body: memoryview  # the bytes from the header line on
    stretch: int  # how many of them were scanned (``scan``)
    scan: Scan
    headers: list[str]
    decimal: str
    thousands: str

    def layout(self, encoding: str, *, quoted: bool) -> TextLayout:
        found = self.found
        return TextLayout(
            encoding,
            found.delimiter,
            self.decimal,
            self.thousands,
            found.header_row,
            len(self.headers),
            quoted,
            self.scan.spaces,
        )


def _examine(
    path: Path, options: ReadOptions, data: bytes, found: _HeaderLine, preview_rows: int | None
) -> _Head:
    """Scan the first stretch below the header: header text, row widths, number marks."""
    header_row, delimiter, offset = found.header_row, found.delimiter, found.offset
    if offset is None or not data[offset : offset + det.SAMPLE_BYTES].strip():
        raise ReadError(path, f"row {header_row + 1} is beyond the end of the file")
    body = memoryview(data)[offset:]
    # Only the first stretch is scanned here; the bulk parse checks the rest (and on a
    # failure the whole file is scanned to name the offending row).
    stretch = len(body)
    if stretch > det.SAMPLE_BYTES:
        stretch = bytes(body[: det.SAMPLE_BYTES]).rfind(b"\n") + 1 or det.SAMPLE_BYTES
    scan = _scan_rows(body[:stretch], delimiter)
    if scan.blank[0]:
        raise ReadError(path, f"row {header_row + 1} is blank, so it cannot be the header")
    width = int(scan.counts[0])
    header_fields = det.parse_rows(
        bytes(body[: _row_end(scan, body, 0)]).decode("utf-8"), delimiter, 1
    )
    headers = header_fields[0][1] if header_fields else [""] * width
    if len(headers) != width:  # header line with unbalanced quotes
        raise ReadError(path, f"row {header_row + 1} (the header) cannot be split into columns")
    data_rows = np.flatnonzero(~scan.blank[1:]) + 1
    if stretch < len(body):
        data_rows = data_rows[:-1]  # the last row of the stretch may continue past it
    if preview_rows is not None:
        data_rows = data_rows[:preview_rows]
    _check_widths(path, scan, data_rows, width, header_row)
    decimal, thousands = _number_marks(body, delimiter, options, found.notes)
    return _Head(found, body, stretch, scan, headers, decimal, thousands)


def _planned_floats(head: _Head, layout: TextLayout, options: ReadOptions) -> set[int]:
    """Columns to parse as numbers directly, judged on the scanned stretch; never a column
    the options read as another kind, which needs its cells as written."""
    starts = head.scan.starts
    if head.stretch < len(head.body) and len(starts) > 2:
        # The sample stops before the last scanned row, which may continue past the stretch.
        floats = _float_columns(head.body[int(starts[1]) : int(starts[-1])], layout)
        labels = unique_labels(head.headers)
        return {i for i in floats if labels[i] not in options.kinds}
    return set()


def _finish(
    path, options: ReadOptions, frame, rest, layout: TextLayout, head: _Head, *, progress, cancelled
) -> Table:
    """Classify the parsed columns into the Table (``table.build_table``)."""
    decimal, thousands = layout.decimal, layout.thousands

    def classify(cells, _i, label):
        return _classify_read(cells, label, decimal, thousands)

    def text(cells, _i):
        return text_series(cells)

    raw = RawTable(
        path,
        frame,
        head.headers,
        replace(layout.read_options(), kinds=options.kinds),
        classify,
        text,
        head.found.notes,
        bare_tail=lambda limit: _bare_tail(rest, limit, layout.width),
    )
    return build_table(raw, progress=progress, cancelled=cancelled)


_TAIL_BLOCK = 1 << 16


def _bare_tail(rest, limit: int, width: int) -> int:
    """How many of the last rows (at most ``limit``, all of them without a value) are
    lines of bare separators, counted from the end up to the first line holding a quote.

    Spreadsheet exports leave rows of bare separators below the data; they are not rows.
    Scalewright writes a row of missing values that ends a file as quoted empty cells
    (``""``), which marks it as a row that belongs to the table.
    """
    streamed = isinstance(rest, _FileTail)
    size = Path(rest.path).stat().st_size - rest.start if streamed else len(rest)
    block = _TAIL_BLOCK
    while True:
        whole = block >= size
        if streamed:
            with open(rest.path, "rb") as fh:
                fh.seek(rest.start + max(size - block, 0))
                blob = fh.read()
        else:
            blob = bytes(rest[max(size - block, 0) :])
        lines = blob.split(b"\n")
        if not whole:
            lines = lines[1:]  # the first may be the end of a longer line
        count = 0
        for line in reversed(lines):
            if not line.strip():
                if width > 1 or not line.strip(b"\r"):
                    continue  # a blank line, which is no row at all
                return count
            if b'"' in line:
                return count
            count += 1
            if count >= limit:
                return count
        if whole:
            return count
        block *= 16


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


def _codec_name(encoding: str) -> str | None:
    try:
        return codecs.lookup(encoding).name
    except LookupError:
        return None


def _to_utf8(path: Path, raw: bytes, encoding: str, *, partial: bool) -> bytes:
    """The file's bytes as UTF-8 without a byte-order mark."""
    try:
        name = codecs.lookup(encoding).name
    except LookupError:
        raise ReadError(path, f"unknown encoding '{encoding}'") from None
    if name in _UTF8 or name == "utf-8-sig":
        data = _without_bom(raw)
        err = _utf8_error(data, partial=partial)
        if err is not None:
            raise ReadError(
                path,
                f"the text is not valid {encoding} (at byte {err.start}); choose another encoding",
            )
        return data
    try:
        text = codecs.getincrementaldecoder(name)().decode(raw, final=not partial)
    except UnicodeDecodeError as err:
        raise ReadError(
            path, f"the text is not valid {encoding} (at byte {err.start}); choose another encoding"
        ) from None
    return text.removeprefix("\ufeff").encode("utf-8")


def _utf8_start(start: bytes) -> bytes | None:
    """The start of a UTF-8 file without a byte-order mark; None if it is not UTF-8."""
    data = _without_bom(start)
    return None if _utf8_error(data, partial=True) is not None else data


def _without_bom(raw: bytes) -> bytes:
    return raw[3:] if raw.startswith(codecs.BOM_UTF8) else raw


def _utf8_error(data: bytes, *, partial: bool) -> UnicodeDecodeError | None:
    """Why ``data`` is not UTF-8 (a character cut at the end of a ``partial`` start is)."""
    try:
        if not data.isascii():  # ASCII is UTF-8; the check is a fast scan
            data.decode("utf-8")
    except UnicodeDecodeError as err:
        if not (partial and err.reason == "unexpected end of data"):
            return err
    return None


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


def _parse_body(
    rest, layout: TextLayout, *, floats=(), only=None, skip_spaces: bool | None = None
) -> pa.Table:
    """Split the data rows into columns named "0", "1", ... with pyarrow's CSV reader.

    Cells are kept as text so that leading zeros and long codes survive; pyarrow builds
    those strings without Python objects, about ten times faster than the pandas C reader
    with ``dtype=str`` (``benchmarks/bench_io.py``). The columns in ``floats`` are read as
    numbers with the layout's decimal mark directly, which saves building and casting their
    text; a cell there that is not a number raises. ``only`` reads just those columns. Rows
    of the wrong width raise. ``skip_spaces`` overrides the layout's.
    """
    names = [str(i) for i in range(layout.width)]
    streamed = isinstance(rest, _FileTail)
    if not streamed and not len(rest):
        return pa.table({name: pa.array([], pa.string()) for name in names})
    types = dict.fromkeys(names, pa.string())
    types.update((str(i), pa.float64()) for i in floats)
    skip = layout.skip_spaces if skip_spaces is None else skip_spaces
    if streamed:
        with pa.OSFile(str(rest.path)) as source:
            source.seek(rest.start)
            return _arrow_csv(source, layout, types, skip, only)
    source = pa.BufferReader(pa.py_buffer(rest))
    return _arrow_csv(source, layout, types, skip, only)


def _arrow_csv(source, layout: TextLayout, types, skip_spaces: bool, only) -> pa.Table:
    return pacsv.read_csv(
        source,
        read_options=pacsv.ReadOptions(column_names=list(types)),
        parse_options=pacsv.ParseOptions(
            delimiter=layout.delimiter,
            quote_char='"',
            double_quote=True,
            newlines_in_values=layout.quoted,
            ignore_empty_lines=True,
            # The handler slows pyarrow threefold, so only files with such lines pay.
            invalid_row_handler=_skip_blank_row if skip_spaces else None,
        ),
        convert_options=pacsv.ConvertOptions(
            column_types=types,
            strings_can_be_null=True,
            quoted_strings_can_be_null=True,
            null_values=[""],
            decimal_point=layout.decimal,
            # Bytes in memory were checked (or made) UTF-8 on loading; a file read from the
            # disk is checked here.
            check_utf8=isinstance(source, pa.OSFile),
            include_columns=None if only is None else [str(i) for i in only],
        ),
    )


# How often a number column that its sample promised may turn out to hold text before the
# whole file is read as text instead (each discovery costs one more parse).
_NUMBER_RETRIES = 3
_FAILED_COLUMN = re.compile(r"In CSV column #(\d+):.*CSV conversion error to double")


def _float_columns(sample, layout: TextLayout) -> set[int]:
    """Columns whose sample rows read, by the rules of ``kinds``, as float64 numbers that
    a direct number parse gives identically (see ``_rows_to_check``)."""
    try:
        table = _parse_body(sample, layout)
    except pa.ArrowInvalid:
        return set()
    comma_note = [decimal_comma_note("c")] if layout.decimal == "," else []
    found = set()
    for i in range(layout.width):
        series, kind, notes = classify_arrow(table.column(i), "c", layout.decimal, layout.thousands)
        if kind is not ColumnKind.NUMBER or series.dtype != np.float64 or notes != comma_note:
            continue
        # The text rules read these very cells, so whole numbers among them need no look.
        if _rows_to_check(series.to_numpy(), int(series.isna().sum())) is not None:
            found.add(i)
    return found


def _rows_to_check(x: np.ndarray, nulls: int) -> np.ndarray | None:
    """The rows whose text decides whether numbers read straight from the file are what
    the text rules (``kinds``) give: None when only the whole column's text can tell.

    That is so when a value is not finite ("nan" and "inf" words could hide behind it) or
    every value is a whole number (counts and codes are told apart by their text). In a
    column with decimals, a whole number stays a number, leading zeros and all ("007" is 7),
    unless it has more than ``MAX_NUMBER_DIGITS`` digits, which can make the column text;
    so only the rows with whole numbers need a look, and none when there are none.
    """
    if int(np.count_nonzero(~np.isfinite(x))) != nulls:
        return None
    whole = np.flatnonzero(x == np.floor(x))  # never a missing value: NaN equals nothing
    if len(whole) == len(x) - nulls:
        return None
    return whole


def _read_body(path, rest, layout: TextLayout, scan: Scan, floats) -> pa.Table:
    """The data rows as an Arrow table: ``floats`` columns as float64 where the whole
    column bears that out, every other column (and every column on any doubt) as text."""
    floats = set(floats)
    for _ in range(_NUMBER_RETRIES):
        if not floats:
            break
        try:
            table = _parse_body(rest, layout, floats=floats)
        except pa.ArrowInvalid as err:
            failed = _FAILED_COLUMN.search(str(err))
            if failed is None or int(failed.group(1)) not in floats:
                break  # not a number problem: the text read below names it
            floats.discard(int(failed.group(1)))
            continue
        return _settle_doubts(rest, layout, table, floats)
    try:
        return _parse_body(rest, layout)
    except pa.ArrowInvalid as err:
        if isinstance(rest, _FileTail):
            raise  # the whole file is read into memory to name the row
        return _after_parse_error(path, rest, err, layout, scan)


def _settle_doubts(rest, layout: TextLayout, table: pa.Table, floats: set[int]) -> pa.Table:
    """``table`` with each number column the text rules would read otherwise replaced by
    its text (``_rows_to_check``). Whole numbers in a column of decimals are looked at
    only if the file holds a long enough run of digits anywhere, which is rare."""
    as_text, to_check = [], {}
    for i in sorted(floats):
        column = table.column(i)
        rows = _rows_to_check(arrow_to_numpy(column), column.null_count)
        if rows is None:
            as_text.append(i)
        elif len(rows):
            to_check[i] = rows
    if to_check and not _may_hold_long_digit_string(rest):
        to_check = {}
    if not as_text and not to_check:
        return table
    text = _parse_body(rest, layout, only=sorted([*as_text, *to_check]))
    for i in sorted(floats):
        if i in as_text or (i in to_check and _long_digit_string(text.column(str(i)), to_check[i])):
            table = table.set_column(i, str(i), text.column(str(i)))
    return table


def _long_digit_string(cells: pa.ChunkedArray, rows: np.ndarray) -> bool:
    """Some of these cells has more than ``MAX_NUMBER_DIGITS`` digits. A whole number
    that long is a code to the text rules when written as digits alone, and may be one
    with a sign; the column then goes through those rules, which decide."""
    digits = pc.count_substring_regex(cells.take(pa.array(rows)), "[0-9]")
    return bool(pc.any(pc.greater(digits, MAX_NUMBER_DIGITS)).as_py())


# Bytes looked at per step when searching the rows for a long run of digits.
_DIGIT_SCAN_BLOCK = 1 << 18  # small blocks stay in the cache: 7 ms for 50 MB, 30 with 4 MiB
_EIGHT_DIGITS = np.uint64(0x0101010101010101)


def _may_hold_long_digit_string(rest) -> bool:
    """Whether the rows hold a run of more than ``MAX_NUMBER_DIGITS`` ASCII digits.

    Any run of 15 or more digits holds an aligned block of eight, so eight bytes are tested
    at once. A yes may come from the long fraction of a decimal number; the cells
    themselves are then looked at (``_long_digit_string``)."""
    if isinstance(rest, _FileTail):
        with open(rest.path, "rb") as fh:
            fh.seek(rest.start)
            carry = b""
            while block := fh.read(_DIGIT_SCAN_BLOCK):
                if _eight_digit_block(carry + block):
                    return True
                carry = block[-16:]  # a run across the two blocks is whole in the next
        return False
    data = np.frombuffer(rest, dtype=np.uint8)
    return any(
        _eight_digit_block(data[start : start + _DIGIT_SCAN_BLOCK + 16])
        for start in range(0, len(data), _DIGIT_SCAN_BLOCK)
    )


def _eight_digit_block(data) -> bool:
    """Some aligned block of eight bytes of ``data`` is all ASCII digits."""
    b = np.frombuffer(data, dtype=np.uint8) if isinstance(data, bytes) else data
    usable = len(b) // 8 * 8
    digits = (b[:usable] - ord("0")) < 10
    return bool(np.any(digits.view(np.uint64) == _EIGHT_DIGITS))


def _after_parse_error(path, rest, err, layout: TextLayout, head_scan: Scan) -> pa.Table:
    """Scan every row to name the one that broke the parse, or retry past blank lines."""
    scan = _scan_rows(rest, layout.delimiter)
    offset_lines = int(head_scan.lines[1]) if len(head_scan.lines) > 1 else 1
    counts, lines, blank, spaces = scan.counts, scan.lines, scan.blank, scan.spaces
    rows = np.flatnonzero(~blank)
    bad = rows[counts[rows] != layout.width]
    if len(bad):
        r = int(bad[0])
        header_row = layout.header_row
        raise ReadError(
            path,
            f"row {header_row + 1 + offset_lines + int(lines[r])} has {int(counts[r])} fields "
            f"but the header (row {header_row + 1}) has {layout.width}",
        )
    if spaces:
        try:
            return _parse_body(rest, layout, skip_spaces=True)
        except pa.ArrowInvalid as again:
            err = again
    raise ReadError(path, f"the rows cannot be split into columns ({err})")


def _skip_blank_row(row) -> str:
    """Lines of spaces only are blank lines, not rows (the width check ran before)."""
    return "skip" if not (row.text or "").strip() else "error"


def _classify_read(column: pa.ChunkedArray, label: str, decimal: str, thousands: str):
    """A text-file column: numbers read directly are final (``_settle_doubts``
    checked them), text goes through the rules of ``kinds``."""
    if pa.types.is_floating(column.type):
        notes = [decimal_comma_note(label)] if decimal == "," else []
        values = arrow_to_numpy(column)
        # A column of several chunks arrives as a new array: no need to copy it again.
        return pd.Series(values, copy=not values.flags.writeable), ColumnKind.NUMBER, notes
    return classify_arrow(column, label, decimal, thousands)
