"""Write tables to CSV, TSV, XLSX and Parquet, and the scaled workbook with its embedded project.

Every writer puts ``headers`` (the file's own header text) in the first row, writes to a
temporary file beside the target and renames it into place (see ``atomic``).
XLSX goes through xlsxwriter in constant-memory mode, the fastest of the writers measured
in ``benchmarks/bench_io.py``.
"""

from __future__ import annotations

import base64
import contextlib
import csv
import datetime as dt
import hashlib
import io
import math
import shutil
import tempfile
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pc
import pyarrow.csv as pacsv
import xlsxwriter
import xlsxwriter.exceptions
from xlsxwriter.worksheet import Worksheet

from ..errors import Cancelled, ReadError, WriteError
from .atomic import atomic_path, signals_held
from .options import SUPPORTED_WRITE, WORKBOOK_SUFFIXES, CancelCheck, Progress
from .parquet import write_parquet

CHUNK_ROWS = 20_000
PROGRESS_ROWS = 5_000
# Excel's limits (Microsoft, "Excel specifications and limits"): 1,048,576 rows per sheet
# and 32,767 characters per cell.
MAX_ROWS = 1_048_576
MAX_CELL_CHARS = 32_767
DATA_SHEET = "data"
PARAMETERS_SHEET = "parameters"
PROJECT_SHEET = "scalewright project"
PROJECT_MARK = "scalewright-project/1"
PROJECT_CHUNK = 30_000  # base64 is ASCII, so this stays below the cell limit
# Day 0 of the 1900 date system as Excel counts from 1900-03-01 on (Excel's 1900 leap-year
# bug shifts earlier serials by one; ECMA-376 Part 1, 18.17.4.1).
_EXCEL_EPOCH = pd.Timestamp("1899-12-30")
_FIRST_SAFE_DATE = pd.Timestamp("1900-03-01")
_WORKBOOK_OPTIONS = {
    "constant_memory": True,
    "strings_to_formulas": False,
    "strings_to_numbers": False,
    "strings_to_urls": False,
    "nan_inf_to_errors": False,
    "remove_timezone": True,
}


class _FullPrecisionWorksheet(Worksheet):
    """xlsxwriter writes numbers with ``%.16G``, which loses the last digit of some doubles
    (0.1 + 0.2 comes back as 0.3). ``repr`` gives the shortest text that reads back to the
    same double (Python docs, "Floating-point arithmetic: issues and limitations")."""

    def _xml_number_element(self, number, attributes=None) -> None:
        # The attributes are a cell reference and a style index: nothing to escape.
        attr = "".join([f' {key}="{value}"' for key, value in attributes or ()])
        self.fh.write(f"<c{attr}><v>{float(number)!r}</v></c>")


def _check(path: Path, data: pd.DataFrame, headers: list[str]) -> None:
    if len(headers) != data.shape[1]:
        raise ValueError(f"{len(headers)} headers for {data.shape[1]} columns")
    suffix = path.suffix.lower()
    if suffix not in SUPPORTED_WRITE:
        raise WriteError(
            path,
            f"cannot write '{suffix or 'no extension'}' files; "
            f"use one of {', '.join(SUPPORTED_WRITE)}",
        )


def write_table(
    path,
    data: pd.DataFrame,
    headers: list[str],
    *,
    progress: Progress | None = None,
    cancelled: CancelCheck | None = None,
) -> None:
    """Write ``data`` under ``headers``; the format follows the extension."""
    path = Path(path)
    _check(path, data, headers)
    suffix = path.suffix.lower()
    if suffix in (".csv", ".tsv"):
        _write_delimited(
            path, data, headers, "," if suffix == ".csv" else "\t", progress, cancelled
        )
        return
    if suffix == ".parquet":
        write_parquet(path, data, headers, _arrow_ready)
        if progress is not None:
            progress(1.0)
        return
    with atomic_path(path) as tmp, _workbook(tmp, path) as book:
        _write_sheet(book, DATA_SHEET, data, headers, progress, cancelled, 0.0, 1.0, path)
    if progress is not None:
        progress(1.0)


def write_scaled_workbook(
    path,
    data: pd.DataFrame,
    headers: list[str],
    parameters: pd.DataFrame,
    project_json: str,
    *,
    progress: Progress | None = None,
    cancelled: CancelCheck | None = None,
) -> None:
    """The workbook handed on: data, a readable parameters sheet and the project itself."""
    path = Path(path)
    _check(path, data, headers)
    if path.suffix.lower() != ".xlsx":
        raise WriteError(path, "the scaled workbook must be an .xlsx file")
    with atomic_path(path) as tmp, _workbook(tmp, path) as book:
        _write_sheet(book, DATA_SHEET, data, headers, progress, cancelled, 0.0, 0.95, path)
        _write_sheet(
            book,
            PARAMETERS_SHEET,
            parameters.reset_index(drop=True),
            [str(c) for c in parameters.columns],
            None,
            cancelled,
            0,
            0,
            path,
        )
        _write_project(book, project_json)
        if cancelled is not None and cancelled():
            raise Cancelled()
    if progress is not None:
        progress(1.0)


@contextlib.contextmanager
def _workbook(tmp: Path, path: Path):
    """An xlsxwriter workbook writing to ``tmp``, closed (written out) on success.

    In constant-memory mode xlsxwriter keeps each sheet's rows, and later each part of the
    package, in temporary files that it removes only when ``close()`` succeeds. They go in
    a folder of our own under the system's temporary folder, removed whatever happens, so
    a failed, cancelled or stopped write leaves nothing there either.
    """
    scratch = None
    try:
        with signals_held():  # see atomic_path: the folder is recorded before any signal
            scratch = tempfile.mkdtemp(prefix="scalewright-workbook-")
        book = xlsxwriter.Workbook(str(tmp), {**_WORKBOOK_OPTIONS, "tmpdir": scratch})
        try:
            yield book
            book.close()
        except (xlsxwriter.exceptions.XlsxWriterException, OSError) as err:
            raise WriteError(path, f"the workbook could not be written ({err})") from None
        finally:
            _close_row_files(book)
    finally:
        if scratch is not None:
            with signals_held():
                shutil.rmtree(scratch, ignore_errors=True)


def _close_row_files(book: xlsxwriter.Workbook) -> None:
    """Close the sheets' row files a failed write left open (Windows cannot delete open
    files)."""
    for sheet in book.worksheets():
        fh = getattr(sheet, "row_data_fh", None)
        if fh is not None and not fh.closed:
            with contextlib.suppress(OSError):
                fh.close()


def _write_sheet(book, name, data, headers, progress, cancelled, start, span, path) -> None:
    n, m = data.shape
    if n + 1 > MAX_ROWS:
        raise WriteError(
            path,
            f"{n:,} rows do not fit in a workbook sheet "
            f"(at most {MAX_ROWS - 1:,}); write a .csv instead",
        )
    sheet = book.add_worksheet(name, worksheet_class=_FullPrecisionWorksheet)
    bold = book.add_format({"bold": True})
    formats = {
        "date": book.add_format({"num_format": "yyyy-mm-dd"}),
        "datetime": book.add_format({"num_format": "yyyy-mm-dd hh:mm:ss"}),
    }
    columns = [_prepare(path, data.iloc[:, j], headers[j], formats, sheet, j) for j in range(m)]
    for j, (_, _, _, width) in enumerate(columns):
        sheet.set_column(j, j, max(min(max(width, len(headers[j])) + 2, 60), 8))
    sheet.freeze_panes(1, 0)
    for j, text in enumerate(headers):
        if text:
            _string(path, sheet, 0, j, text, bold, headers[j])
    writers = [c[0] for c in columns]
    values = [c[1] for c in columns]
    fmts = [c[2] for c in columns]
    rng = range(m)
    for r in range(n):
        if r % PROGRESS_ROWS == 0:
            if cancelled is not None and cancelled():
                raise Cancelled()
            if progress is not None and n:
                progress(start + span * r / n)
        row = r + 1
        for j in rng:
            v = values[j][r]
            if v is not None:
                writers[j](row, j, v, fmts[j])


def _string(path, sheet, row, col, text, fmt, header) -> None:
    if len(text) > MAX_CELL_CHARS:
        raise _too_long(path, header, col, row, len(text))
    sheet.write_string(row, col, text, fmt)


def _too_long(path, header: str, col: int, sheet_row: int, length: int) -> WriteError:
    """A cell over the workbook's limit: which one, and what to do instead."""
    where = (
        f"the header of column {col + 1}"
        if sheet_row == 0
        else f"column '{header}', row {sheet_row} of the data,"
    )
    return WriteError(
        path,
        f"{where} holds {length:,} characters; a workbook cell holds at most "
        f"{MAX_CELL_CHARS:,}, so write a .csv or .tsv file instead",
    )


def _prepare(path, s: pd.Series, header: str, formats, sheet, col: int):
    """(write method, per-row values with None for missing, cell format, display width)."""
    dtype = s.dtype
    missing = s.isna().to_numpy()
    if pd.api.types.is_bool_dtype(dtype):
        vals = np.where(missing, None, s.to_numpy(dtype=object, na_value=False)).tolist()
        return sheet.write_boolean, vals, None, 6
    if pd.api.types.is_integer_dtype(dtype):
        ints = s.to_numpy(dtype="float64", na_value=np.nan)
        if np.nanmax(np.abs(ints), initial=0) < 2.0**53:
            vals = np.where(missing, None, s.to_numpy(dtype=object, na_value=0)).tolist()
            return sheet.write_number, vals, None, _width(s)
        return _strings(path, s.astype("str"), header, sheet, col)
    if pd.api.types.is_float_dtype(dtype):
        x = s.to_numpy(dtype="float64", na_value=np.nan)
        obj = x.astype(object)
        obj[np.isnan(x)] = None
        infinite = np.isinf(x)
        if infinite.any():
            # A workbook cell cannot hold an infinity; the text reads back as one.
            return _numbers_or_text(sheet), obj.tolist(), None, 12
        return sheet.write_number, obj.tolist(), None, 12
    if pd.api.types.is_datetime64_any_dtype(dtype):
        if getattr(dtype, "tz", None) is not None:
            s = s.dt.tz_localize(None)
        has_time = bool((s.dropna() != s.dropna().dt.normalize()).any())
        fmt = formats["datetime" if has_time else "date"]
        serial = ((s - _EXCEL_EPOCH) / pd.Timedelta(days=1)).to_numpy(
            dtype="float64", na_value=np.nan
        )
        obj = serial.astype(object)
        obj[np.isnan(serial)] = None
        early = (s < _FIRST_SAFE_DATE).to_numpy(dtype=bool, na_value=False)
        if early.any():
            iso = s[early].dt.strftime("%Y-%m-%d %H:%M:%S" if has_time else "%Y-%m-%d")
            obj[early] = iso.to_numpy(dtype=object)
            return _numbers_or_text(sheet), obj.tolist(), fmt, 20
        return sheet.write_number, obj.tolist(), fmt, 20 if has_time else 11
    if pd.api.types.is_object_dtype(dtype):
        return _any_values(path, s, header, sheet)
    return _strings(path, s, header, sheet, col)


def _any_values(path, s: pd.Series, header: str, sheet):
    """Object columns (such as the parameters sheet): each cell written by its own type."""
    vals = [None if _is_missing(v) else v for v in s.to_numpy(dtype=object)]

    def write(row, col, value, fmt):
        if isinstance(value, bool | np.bool_):
            sheet.write_boolean(row, col, bool(value))
        elif isinstance(value, int | float | np.integer | np.floating):
            if math.isinf(value):
                sheet.write_string(row, col, "inf" if value > 0 else "-inf")
            else:
                sheet.write_number(row, col, float(value))
        else:
            _string(path, sheet, row, col, _text(value), None, header)

    return write, vals, None, max((len(_text(v)) for v in vals[:1000] if v is not None), default=8)


def _is_missing(v: object) -> bool:
    if v is None or v is pd.NA or v is pd.NaT:
        return True
    return isinstance(v, float) and math.isnan(v)


def _strings(path, s: pd.Series, header: str, sheet, col: int):
    obj = s.to_numpy(dtype=object, na_value=None)
    vals = [v if v is None or isinstance(v, str) else _text(v) for v in obj]
    lengths = [len(v) for v in vals if v is not None]
    if lengths and max(lengths) > MAX_CELL_CHARS:
        row = next(i for i, v in enumerate(vals) if v is not None and len(v) > MAX_CELL_CHARS)
        raise _too_long(path, header, col, row + 1, len(vals[row]))
    width = max(lengths[:1000], default=8)
    return sheet.write_string, vals, None, width


def _text(v: object) -> str:
    if isinstance(v, float) and v.is_integer():
        return str(int(v))
    if isinstance(v, dt.datetime | pd.Timestamp):
        return v.isoformat(sep=" ")
    return str(v)


def _numbers_or_text(sheet):
    """For number columns holding a few cells a workbook cannot store as numbers."""

    def write(row, col, value, fmt):
        if isinstance(value, str):
            sheet.write_string(row, col, value)
        elif isinstance(value, float) and math.isinf(value):
            sheet.write_string(row, col, "inf" if value > 0 else "-inf")
        else:
            sheet.write_number(row, col, value, fmt)

    return write


def _width(s: pd.Series) -> int:
    head = s.head(1000).dropna()
    return max((len(str(v)) for v in head), default=8)


def _write_project(book, project_json: str) -> None:
    """Hidden sheet: a mark, the SHA-256, the chunk count, then base64 chunks of the JSON.

    base64 keeps the text byte-identical through the XML of the workbook (which would turn
    CR LF into LF and has its own escapes for control characters).
    """
    raw = project_json.encode("utf-8")
    encoded = base64.b64encode(raw).decode("ascii")
    chunks = [encoded[i : i + PROJECT_CHUNK] for i in range(0, len(encoded), PROJECT_CHUNK)]
    sheet = book.add_worksheet(PROJECT_SHEET)
    sheet.write_string(0, 0, PROJECT_MARK)
    sheet.write_string(0, 1, hashlib.sha256(raw).hexdigest())
    sheet.write_number(0, 2, len(chunks))
    sheet.write_string(
        0, 3, "The Scalewright project that made this workbook (base64 of UTF-8 JSON)."
    )
    for i, chunk in enumerate(chunks, start=1):
        sheet.write_string(i, 0, chunk)
    sheet.hide()


def read_embedded_project(path) -> str | None:
    """The project JSON embedded by ``write_scaled_workbook``, or None if there is none."""
    from .workbook_reader import open_workbook

    path = Path(path)
    if path.suffix.lower() not in WORKBOOK_SUFFIXES:
        return None
    book = open_workbook(path)
    try:
        if PROJECT_SHEET not in book.sheet_names:
            return None
        rows = book.get_sheet_by_name(PROJECT_SHEET).to_python(skip_empty_area=False)
    except Exception as err:
        raise ReadError(path, f"the embedded project cannot be read ({err})") from None
    finally:
        book.close()
    if not rows or not rows[0] or rows[0][0] != PROJECT_MARK or len(rows[0]) < 3:
        return None
    digest, count = rows[0][1], rows[0][2]
    try:
        chunks = [rows[i][0] for i in range(1, int(count) + 1)]
        raw = base64.b64decode("".join(chunks), validate=True)
    except (IndexError, ValueError, TypeError):
        raise ReadError(path, "the project embedded in this workbook is damaged") from None
    if hashlib.sha256(raw).hexdigest() != digest:
        raise ReadError(path, "the project embedded in this workbook was changed or is damaged")
    try:
        return raw.decode("utf-8")
    except UnicodeDecodeError:
        raise ReadError(path, "the project embedded in this workbook is damaged") from None


def _write_delimited(path, data, headers, sep, progress, cancelled) -> None:
    """UTF-8, ``.`` decimals, shortest round-trip floats, ISO dates, empty for missing.

    The rows go through pyarrow's CSV writer: its numbers read back to the same doubles
    and it is several times faster than ``DataFrame.to_csv`` (``benchmarks/bench_io.py``).
    It quotes every text cell, which RFC 4180 allows; lines end in CR LF as RFC 4180
    specifies.
    """
    table = _arrow_ready(data)
    n = table.num_rows
    options = pacsv.WriteOptions(
        include_header=False, delimiter=sep, quoting_style="needed", eol="\r\n"
    )
    with atomic_path(path) as tmp, open(tmp, "wb") as fh:
        header = io.StringIO()
        csv.writer(header, delimiter=sep, lineterminator="\r\n").writerow(headers)
        fh.write(header.getvalue().encode("utf-8"))
        if table.num_columns == 1:
            _write_one_column(fh, table, sep, progress, cancelled)
        else:
            filled = n - _missing_tail(data)
            for start in range(0, filled, CHUNK_ROWS):
                if cancelled is not None and cancelled():
                    raise Cancelled()
                pacsv.write_csv(table.slice(start, min(CHUNK_ROWS, filled - start)), fh, options)
                if progress is not None:
                    progress(min(1.0, (start + CHUNK_ROWS) / n))
            # Rows of bare separators at the end read as export leftovers; quoted empty
            # cells mark these as rows of missing values (see csv_reader._bare_tail).
            row = sep.join(['""'] * table.num_columns) + "\r\n"
            fh.write(row.encode("utf-8") * (n - filled))
        if cancelled is not None and cancelled():
            raise Cancelled()
    if progress is not None:
        progress(1.0)


def _missing_tail(data: pd.DataFrame) -> int:
    """How many rows at the end of ``data`` hold no value at all."""
    if not len(data) or data.iloc[-1].notna().any():
        return 0
    filled = np.flatnonzero(data.notna().to_numpy().any(axis=1))
    return len(data) - (int(filled[-1]) + 1 if len(filled) else 0)


def _write_one_column(fh, table: pa.Table, sep: str, progress, cancelled) -> None:
    """With one column a missing value would be an empty line, which readers skip; it is
    written as ``""`` instead, which the reader keeps as a row even at the end. Text is
    quoted as the CSV writer quotes it with more columns; values are turned to text by
    the same Arrow cast the CSV writer uses, so numbers look the same either way."""
    column = table.column(0)
    text_column = pa.types.is_string(column.type) or pa.types.is_large_string(column.type)
    if not text_column:
        column = pc.cast(column, pa.string())
    quoting = csv.QUOTE_ALL if text_column else csv.QUOTE_MINIMAL
    for start in range(0, len(column), CHUNK_ROWS):
        if cancelled is not None and cancelled():
            raise Cancelled()
        text = io.StringIO()
        writer = csv.writer(text, delimiter=sep, lineterminator="\r\n", quoting=quoting)
        writer.writerows(
            [v if v is not None else ""] for v in column.slice(start, CHUNK_ROWS).to_pylist()
        )
        fh.write(text.getvalue().encode("utf-8"))
        if progress is not None:
            progress(min(1.0, (start + CHUNK_ROWS) / len(column)))


def _arrow_ready(data: pd.DataFrame) -> pa.Table:
    """Columns by position (labels may repeat), date-times as ISO text."""
    arrays = []
    for j in range(data.shape[1]):
        s = data.iloc[:, j]
        if pd.api.types.is_datetime64_any_dtype(s.dtype):
            if getattr(s.dtype, "tz", None) is not None:
                s = s.dt.tz_localize(None)
            d = s.dropna()
            if (d != d.dt.normalize()).any():
                micro = (d.dt.microsecond != 0).any()
                fmt = "%Y-%m-%d %H:%M:%S.%f" if micro else "%Y-%m-%d %H:%M:%S"
            else:
                fmt = "%Y-%m-%d"
            s = s.dt.strftime(fmt)
        elif pd.api.types.is_object_dtype(s.dtype):
            s = s.map(lambda v: None if _is_missing(v) else _text(v)).astype("str")
        arrays.append(pa.array(s, from_pandas=True))
    return pa.Table.from_arrays(arrays, names=[str(j) for j in range(len(arrays))])
