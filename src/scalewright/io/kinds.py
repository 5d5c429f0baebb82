"""Decide what each column holds, and convert it to the dtype the engine expects.

The rules lean towards keeping text: a column becomes a number only when every non-blank
cell parses, and anything that looks like a code (leading zeros, long digit strings) stays
text so that it is never scaled. Every conversion that changes how a value is written is
reported in a note.
"""

from __future__ import annotations

import datetime as dt
import re
from dataclasses import dataclass

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pc

from .options import ColumnKind

# What classifying a column gives: the converted values, the kind, and notes for the user.
Classified = tuple[pd.Series, ColumnKind, list[str]]

# Spreadsheet and statistics exports commonly write these for "no value" (common practice).
MISSING_MARKERS = frozenset({"na", "n/a", "nan", "null", "#n/a", "none"})
# Beyond 15 significant digits a double cannot hold every integer exactly (IEEE 754
# binary64 has a 53-bit significand, about 15.95 decimal digits), so such digit strings
# are codes, not quantities.
MAX_NUMBER_DIGITS = 15
# Digit-only columns whose every value has this many digits or more, all the same width,
# are account numbers, article codes or yyyymmdd stamps rather than quantities (our rule).
FIXED_WIDTH_CODE_DIGITS = 8
SPACE_MARKS = " \u00a0\u202f"
_MARK_NAMES = {",": "commas", ".": "points", " ": "spaces", "'": "apostrophes"}
# One unit for every date column, whatever the source, so values compare across files;
# microseconds cover years 1..9999 (nanoseconds stop at 2262).
DATE_DTYPE = "datetime64[us]"


def digit_code_reason(cells: int, shortest: int, longest: int, leading_zero: bool) -> str | None:
    """Why a column whose every non-blank cell is a string of digits holds codes rather
    than quantities, or None when it holds numbers.

    The one place these rules live (every reading path gathers the four facts its own way
    and asks here): a leading zero, more digits than a double holds exactly, or two or
    more values all of one width of ``FIXED_WIDTH_CODE_DIGITS`` digits or more.
    """
    if leading_zero:
        return "some values start with a zero"
    if longest > MAX_NUMBER_DIGITS:
        return f"some values have more than {MAX_NUMBER_DIGITS} digits"
    if cells > 1 and shortest == longest >= FIXED_WIDTH_CODE_DIGITS:
        return f"all values have {longest} digits"
    return None


_CODE = re.compile(r"[A-Za-z0-9][A-Za-z0-9_\-/.#:]*")
_ISO_DATE = r"\d{4}-\d{2}-\d{2}(?:[ T]\d{2}:\d{2}(?::\d{2}(?:\.\d+)?)?)?"
_DMY_DATE = r"(\d{1,2})([/.\-])(\d{1,2})\2(\d{4})(?: (\d{1,2}:\d{2}(?::\d{2})?))?"
_YMD_SLASH_DATE = r"\d{4}/\d{2}/\d{2}"


def number_pattern(decimal: str, thousands: str) -> str:
    """Regular expression for one number written with the given marks (no blanks).

    ASCII digits only: the text is parsed by Arrow, which reads no other digits."""
    d = re.escape(decimal)
    if thousands:
        t = f"[{re.escape(SPACE_MARKS)}]" if thousands == " " else re.escape(thousands)
        whole = rf"(?:[0-9]{{1,3}}(?:{t}[0-9]{{3}})+|[0-9]+)"
    else:
        whole = r"[0-9]+"
    return rf"[+-]?(?:(?:{whole}(?:{d}[0-9]*)?|{d}[0-9]+)(?:[eE][+-]?[0-9]+)?|inf|infinity|Inf|Infinity|INF)"


def integer_pattern(thousands: str) -> str:
    if thousands:
        t = f"[{re.escape(SPACE_MARKS)}]" if thousands == " " else re.escape(thousands)
        return rf"[+-]?(?:[0-9]{{1,3}}(?:{t}[0-9]{{3}})+|[0-9]+)"
    return r"[+-]?[0-9]+"


def to_float(s: pd.Series) -> np.ndarray:
    """Parse number text with Arrow's cast (correctly rounded, and far quicker than
    ``astype`` on Arrow strings, which goes through Python objects)."""
    return pc.cast(pa.array(s, type=pa.large_string()), pa.float64()).to_numpy(zero_copy_only=False)


def _all_match(values: pd.Series, pattern: str, head: int = 1000) -> bool:
    """Every value matches; the first rows are tried alone first, since most columns that
    fail a pattern fail it early and the whole-column test is the slow part."""
    if not bool(values.iloc[:head].str.fullmatch(pattern).all()):
        return False
    return len(values) <= head or bool(values.iloc[head:].str.fullmatch(pattern).all())


def _all_contain(values: pd.Series, pattern: str, head: int = 1000) -> bool:
    """Every value contains the pattern, tried on the first rows first as ``_all_match``."""
    if not bool(values.iloc[:head].str.contains(pattern).all()):
        return False
    return len(values) <= head or bool(values.iloc[head:].str.contains(pattern).all())


def _plain_numbers(arr: pa.Array | pa.ChunkedArray, thousands: str = "") -> pd.Series | None:
    """The common case at full speed: every cell is a plain number such as ``-12.5``.

    Digit codes (``_digit_code``) are told apart before this is asked. Returns None whenever the column needs a closer look (codes, marks, words), and the
    general rules below then decide. The text checks run on the Arrow buffers: once the
    cast has succeeded every cell is ASCII, so bytes are characters.
    """
    if arr.null_count == len(arr):
        return None
    try:
        floats = pc.cast(arr, pa.float64())
    except (pa.ArrowInvalid, pa.ArrowNotImplementedError):
        return None
    x = arrow_to_numpy(floats)
    if int(np.count_nonzero(~np.isfinite(x))) != arr.null_count:
        return None  # "nan"/"inf" written out: leave them to the marker rules
    digits_only = pc.ascii_is_decimal(arr)
    if pc.any(digits_only).as_py():
        longest = pc.max(pc.filter(pc.binary_length(arr), digits_only)).as_py()
        if longest > MAX_NUMBER_DIGITS:
            return None  # long digit strings are codes (see ``_as_number``)
    text = _StringBytes(arr)
    if thousands == "." and text.contains_any(b"."):
        return None  # a point between thousands is no decimal point ("1.500" is 1500)
    if text.any_leading_zero():
        return None
    # Arrow's cast accepts exactly [+-]digits[.digits][e[+-]digits] (no spaces, no marks),
    # the plain form this shortcut is for.
    out = pd.Series(x)
    if text.contains_any(b".eE"):
        return out
    if text.longest() > MAX_NUMBER_DIGITS:
        return None  # a signed whole number this long may not fit a double exactly
    return out.astype("Int64")


def arrow_to_numpy(arr: pa.Array | pa.ChunkedArray) -> np.ndarray:
    """Values as numpy (nulls as NaN/NaT), for one array or many chunks."""
    if isinstance(arr, pa.ChunkedArray):
        if arr.num_chunks == 1:
            arr = arr.chunk(0)
        else:
            return arr.to_numpy()
    return arr.to_numpy(zero_copy_only=False)


class _StringBytes:
    """The characters of a string column seen as raw bytes, chunk by chunk.

    Null cells must hold no bytes (Arrow writes them so); anything else is read through
    Arrow's own functions instead.
    """

    def __init__(self, arr: pa.Array | pa.ChunkedArray) -> None:
        chunks = arr.chunks if isinstance(arr, pa.ChunkedArray) else [arr]
        self.parts: list[tuple[np.ndarray, np.ndarray, np.ndarray | None]] = []
        self.plain = True
        for chunk in chunks:
            if len(chunk) == 0:
                continue
            kind = np.int64 if pa.types.is_large_string(chunk.type) else np.int32
            _, offs_buf, data_buf = chunk.buffers()
            offs = np.frombuffer(offs_buf, dtype=kind)[chunk.offset : chunk.offset + len(chunk) + 1]
            data = (
                np.frombuffer(data_buf, dtype=np.uint8)
                if data_buf is not None
                else np.zeros(0, np.uint8)
            )
            valid = None if chunk.null_count == 0 else np.asarray(chunk.is_valid())
            if valid is not None and np.any(np.diff(offs)[~valid]):
                self.plain = False
            self.parts.append((offs, data, valid))
        self.arr = arr

    def contains_any(self, marks: bytes) -> bool:
        if not self.plain:
            return any(pc.any(pc.match_substring(self.arr, chr(m))).as_py() for m in marks)
        for offs, data, _ in self.parts:
            stretch = data[offs[0] : offs[-1]].tobytes()
            if any(stretch.find(bytes([m])) >= 0 for m in marks):
                return True
        return False

    def longest(self) -> int:
        """Longest cell in bytes (characters for ASCII text)."""
        if not self.plain:
            return int(pc.max(pc.binary_length(self.arr)).as_py() or 0)
        return max((int(np.diff(offs).max()) for offs, _, _ in self.parts), default=0)

    def any_leading_zero(self) -> bool:
        """Some cell starts with ``[+-]?0`` followed by a digit."""
        if not self.plain:
            return bool(
                pc.any(pc.starts_with(self.arr, "0")).as_py()
                and pc.any(pc.match_substring_regex(self.arr, r"^[+-]?0[0-9]")).as_py()
            )
        for offs, data, _ in self.parts:
            start, length = offs[:-1], np.diff(offs)
            two = start[length >= 2]
            first, second = data[two], data[two + 1]
            if np.any((first == ord("0")) & (second - ord("0") < 10)):
                return True
            signed = ((first == ord("+")) | (first == ord("-"))) & (second == ord("0"))
            three = two[signed & (length[length >= 2] >= 3)]
            if np.any(data[three + 2] - ord("0") < 10):
                return True
        return False


def decimal_comma_note(label: str) -> str:
    """The note for a column whose numbers were written with a decimal comma alone."""
    return f"Column '{label}': numbers written with a decimal comma were converted."


def empty_column(n: int, index=None) -> pd.Series:
    return pd.Series([pd.NA] * n, dtype="str", index=index)


def classify_text(
    s: pd.Series, label: str, decimal: str = ".", thousands: str = "", *, from_workbook=False
) -> tuple[pd.Series, ColumnKind, list[str]]:
    """Classify a column of strings (missing as NA) and convert it.

    ``from_workbook`` means the strings were text cells, so any number found is reported
    as "stored as text" even when written plainly.
    """
    s = s.astype("str")
    if not from_workbook:
        arr = pa.array(s, type=pa.large_string())
        if _digit_code(arr):
            return s, ColumnKind.IDENTIFIER, []
        fast = _plain_numbers(arr, thousands)
        if fast is not None:
            return fast.set_axis(s.index), ColumnKind.NUMBER, []
    return _classify_rest(_TextCells.of(s, label), decimal, thousands, from_workbook)


def classify_arrow(
    arr: pa.Array | pa.ChunkedArray, label: str, decimal: str = ".", thousands: str = ""
) -> tuple[pd.Series, ColumnKind, list[str]]:
    """Classify a column of a delimited text file held as Arrow strings (missing as null).

    The result is the one ``classify_text`` gives for the same cells; plain numbers, digit
    codes and ISO dates are decided on the Arrow buffers without building Python objects,
    and every other column takes the general rules.
    """
    n = len(arr)
    if arr.null_count == n:
        return empty_column(n), ColumnKind.EMPTY, []
    if _digit_code(arr):
        return text_series(arr), ColumnKind.IDENTIFIER, []
    fast = _plain_numbers(arr, thousands)
    if fast is not None:
        return fast, ColumnKind.NUMBER, []
    dates = _iso_dates(arr)
    if dates is not None:
        return dates, ColumnKind.DATE, []
    return _classify_rest(_TextCells.of(text_series(arr), label), decimal, thousands, False)


def text_series(arr: pa.Array | pa.ChunkedArray) -> pd.Series:
    """Arrow strings as a pandas ``str`` column with a 0-based index."""
    return arr.to_pandas().astype("str")


def _digit_code(arr: pa.Array | pa.ChunkedArray) -> bool:
    """Every cell is a digit string and ``digit_code_reason`` makes the column an
    identifier; told on the Arrow buffers."""
    if arr.null_count == len(arr) or not pc.all(pc.ascii_is_decimal(arr)).as_py():
        return False
    shortest, longest = (v.as_py() for v in pc.min_max(pc.binary_length(arr)).values())
    if not shortest:
        return False  # an empty string is a blank cell, not a digit string
    present = len(arr) - arr.null_count
    leading_zero = _StringBytes(arr).any_leading_zero()
    return digit_code_reason(present, shortest, longest, leading_zero) is not None


def _iso_dates(arr: pa.Array | pa.ChunkedArray) -> pd.Series | None:
    """Every cell is a plain ISO date (``2019-04-03``) that Arrow can read; else None.

    For such cells Arrow's ISO 8601 cast and pandas' ISO8601 parser give the same
    midnights; anything Arrow refuses (year 0, Feb 30) goes the general way."""
    text = _StringBytes(arr)
    if not text.plain or not text.parts:
        return None
    for offs, data, valid in text.parts:
        length = np.diff(offs)
        if np.any(length[valid] != 10 if valid is not None else length != 10):
            return None
        grid = data[offs[0] : offs[-1]].reshape(-1, 10)
        digits = grid[:, [0, 1, 2, 3, 5, 6, 8, 9]] - ord("0") < 10
        if not (digits.all() and (grid[:, [4, 7]] == ord("-")).all()):
            return None
    try:
        stamps = pc.cast(arr, pa.timestamp("us"))
    except (pa.ArrowInvalid, pa.ArrowNotImplementedError):
        return None
    return pd.Series(arrow_to_numpy(stamps).astype(DATE_DTYPE))


@dataclass(frozen=True)
class _TextCells:
    """A column of text cells (missing as NA) seen the ways the general rules need it."""

    s: pd.Series  # the cells as given
    label: str
    stripped: pd.Series
    blank: pd.Series  # missing, or only spaces
    values: pd.Series  # the non-blank cells, stripped

    @classmethod
    def of(cls, s: pd.Series, label: str) -> _TextCells:
        stripped = s.str.strip()
        blank = stripped.isna() | (stripped == "")
        return cls(s, label, stripped, blank, stripped[~blank])

    def digit_code_reason(self) -> str | None:
        """``digit_code_reason`` when every non-blank cell is a digit string, else None."""
        values = self.values
        if values.empty or not _all_match(values, r"\d+"):
            return None
        width = values.str.len()
        leading_zero = bool(values.str.match(r"0\d").any())
        return digit_code_reason(len(values), int(width.min()), int(width.max()), leading_zero)


def _classify_rest(cells: _TextCells, decimal, thousands, from_workbook):
    """The general rules, for columns the plain-number shortcut did not settle."""
    s, blank, values = cells.s, cells.blank, cells.values
    if values.empty:
        return empty_column(len(s), s.index), ColumnKind.EMPTY, []
    if cells.digit_code_reason() is not None:
        return s, ColumnKind.IDENTIFIER, []

    number = _as_number(cells, decimal, thousands, from_workbook)
    if number is not None:
        return number

    if bool(values.iloc[:1000].str.lower().isin(["true", "false"]).all()) and bool(
        (lowered := values.str.lower()).isin(["true", "false"]).all()
    ):
        out = pd.Series(pd.NA, index=s.index, dtype="boolean")
        out[~blank] = (lowered == "true").to_numpy()
        return out, ColumnKind.BOOLEAN, []

    dates = _as_date(cells)
    if dates is not None:
        return dates

    if (
        _all_contain(values, r"\d")  # the cheapest of the three tests first
        and _all_match(values, _CODE.pattern)
        and bool(values.str.contains(r"[A-Za-z]").any())
    ):
        return s, ColumnKind.IDENTIFIER, []
    return s, ColumnKind.TEXT, []


def _as_number(cells: _TextCells, decimal, thousands, from_workbook):
    s, values, label = cells.s, cells.values, cells.label
    pattern = number_pattern(decimal, thousands)
    head = values.iloc[:1000]
    head = head[~head.str.lower().isin(MISSING_MARKERS)]
    if not bool(head.str.fullmatch(pattern).all()):
        return None  # most text columns are told apart here, without a full pass
    markers = values.str.lower().isin(MISSING_MARKERS)
    numbers = values[~markers]
    if numbers.empty:
        return None
    if not _all_match(numbers, pattern):
        return None
    integers = numbers.str.fullmatch(integer_pattern(thousands))
    long = integers & (numbers.str.len() > MAX_NUMBER_DIGITS)
    if bool(long.any()) and bool((numbers[long].str.count(r"\d") > MAX_NUMBER_DIGITS).any()):
        # A long whole number written out in full is a code; exponent forms stay numbers.
        return None
    whole = bool(integers.all())
    clean = numbers
    used: list[str] = []
    if thousands:
        marks = SPACE_MARKS if thousands == " " else thousands
        grouped = clean.str.contains(f"[{re.escape(marks)}]")
        if bool(grouped.any()):
            used.append(f"{_MARK_NAMES[thousands]} between thousands")
            clean = clean.str.replace(f"[{re.escape(marks)}]", "", regex=True)
    if decimal == ",":
        has_comma = clean.str.contains(",", regex=False)
        if bool(has_comma.any()):
            used.insert(0, "a decimal comma")
            clean = clean.str.replace(",", ".", regex=False)
    try:
        floats = to_float(clean)
    except pa.ArrowInvalid:
        return None
    notes: list[str] = []
    if from_workbook:
        notes.append(
            f"Column '{label}': {len(numbers)} numbers stored as text were converted to numbers."
        )
    elif used:
        notes.append(f"Column '{label}': numbers written with {' and '.join(used)} were converted.")
    if bool(markers.any()):
        words = ", ".join(sorted(set(values[markers])))
        notes.append(
            f"Column '{label}': {int(markers.sum())} cells marked {words} read as missing."
        )
    full = np.full(len(s), np.nan)
    full[s.index.get_indexer(clean.index)] = floats
    full = pd.Series(full, index=s.index)
    if whole:
        return full.astype("Int64"), ColumnKind.NUMBER, notes
    return full, ColumnKind.NUMBER, notes


def _as_date(cells: _TextCells):
    """ISO dates, yyyy/mm/dd, or dd/mm/yyyy-like dates in one consistent order."""
    s, values, label = cells.s, cells.values, cells.label
    notes: list[str] = []
    if _all_match(values, _ISO_DATE):
        fmt = "ISO8601"
    elif _all_match(values, _YMD_SLASH_DATE):
        fmt = "%Y/%m/%d"
    elif _all_match(values, _DMY_DATE):
        fmt = _day_month_format(values, label, notes)
        if fmt is None:
            return None
    else:
        return None
    parsed = pd.to_datetime(values, format=fmt, errors="coerce")
    if bool(parsed.isna().any()):
        return None
    parsed = parsed.astype(DATE_DTYPE)
    out = pd.Series(pd.NaT, index=s.index, dtype=parsed.dtype)
    out[parsed.index] = parsed.to_numpy()
    return out, ColumnKind.DATE, notes


def _day_month_format(values: pd.Series, label: str, notes: list[str]) -> str | None:
    """Day first or month first, decided by which field goes above 12; day first when no
    value tells (our choice), with a note saying so, so the user can correct it."""
    parts = values.str.extract(_DMY_DATE)
    seps = parts[1].unique()
    with_time = parts[4].notna()
    if len(seps) != 1 or (bool(with_time.any()) and not bool(with_time.all())):
        return None
    first = int(parts[0].astype(int).max())
    second = int(parts[2].astype(int).max())
    if first > 12 and second > 12:
        return None
    if second > 12:
        order = ("%m", "%d", "month/day/year")
        notes.append(f"Column '{label}': dates read as month/day/year.")
    else:
        order = ("%d", "%m", "day/month/year")
        if first > 12:
            notes.append(f"Column '{label}': dates read as day/month/year.")
        else:
            notes.append(
                f"Column '{label}': dates could be day/month or month/day; read as day/month/year."
            )
    sep = seps[0]
    fmt = f"{order[0]}{sep}{order[1]}{sep}%Y"
    if bool(with_time.any()):
        fmt += " %H:%M:%S" if bool(parts[4].str.count(":").eq(2).all()) else " %H:%M"
    return fmt


def classify_cells(cells: np.ndarray, label: str) -> tuple[pd.Series, ColumnKind, list[str]]:
    """Classify one workbook column from the typed cell values calamine returns.

    Blank cells come as ``""``. Number cells are floats, date cells ``date``/``datetime``.
    """
    n = len(cells)
    blank = (cells == "") | np.equal(cells, None)
    values = cells[~blank]
    if len(values) == 0:
        return empty_column(n), ColumnKind.EMPTY, []
    inferred = pd.api.types.infer_dtype(values, skipna=False)
    if inferred in ("floating", "integer", "mixed-integer-float"):
        return _numbers(values.astype("float64"), blank), ColumnKind.NUMBER, []
    if inferred == "boolean":
        out = pd.Series(pd.NA, index=range(n), dtype="boolean")
        out[~blank] = values.astype(bool)
        return out, ColumnKind.BOOLEAN, []
    if inferred in ("date", "datetime", "datetime64") or _all_dates(values):
        parsed = pd.to_datetime(pd.Series(values), errors="coerce").astype(DATE_DTYPE)
        out = pd.Series(pd.NaT, index=range(n), dtype=parsed.dtype)
        out[~blank] = parsed.to_numpy()
        return out, ColumnKind.DATE, []
    if inferred == "string":
        text = pd.Series(np.where(blank, None, cells), dtype="str")
        return classify_text(text, label, from_workbook=True)
    numbers = _mixed_numbers(cells, blank, label)
    if numbers is not None:
        return numbers
    dates = _mixed_dates(values, blank)
    if dates is not None:
        return dates, ColumnKind.DATE, []
    text = [None if b else cell_text(v) for v, b in zip(cells, blank, strict=True)]
    return pd.Series(text, dtype="str"), ColumnKind.TEXT, []


def _mixed_numbers(cells: np.ndarray, blank: np.ndarray, label: str):
    """Number cells mixed with text cells that hold numbers (or say "NA"): all numbers."""
    blank = blank.copy()
    texts: dict[int, str] = {}
    for i, v in enumerate(cells):
        if blank[i] or (isinstance(v, float | int) and not isinstance(v, bool)):
            continue
        if not isinstance(v, str):
            return None
        if not v.strip():
            blank[i] = True
        else:
            texts[i] = v.strip()
    if not texts:
        return None
    markers = {i for i, t in texts.items() if t.lower() in MISSING_MARKERS}
    strings = pd.Series([t for i, t in texts.items() if i not in markers], dtype="str")
    if not bool(strings.str.fullmatch(number_pattern(".", "")).all()):
        return None
    numbers = cells.copy()
    for i in markers:
        blank[i] = True
    numbers[[i for i in texts if i not in markers]] = to_float(strings)
    notes = []
    if len(strings):
        notes.append(
            f"Column '{label}': {len(strings)} numbers stored as text were converted to numbers."
        )
    if markers:
        words = ", ".join(sorted({texts[i] for i in markers}))
        notes.append(f"Column '{label}': {len(markers)} cells marked {words} read as missing.")
    return _numbers(numbers[~blank].astype("float64"), blank), ColumnKind.NUMBER, notes


def _mixed_dates(values: np.ndarray, blank: np.ndarray) -> pd.Series | None:
    """Date cells mixed with ISO date text (dates before 1900-03-01 are written as text,
    since the 1900 date system cannot hold them exactly)."""
    texts = [v for v in values if not isinstance(v, dt.date)]
    if not texts or not all(isinstance(v, str) for v in texts):
        return None
    if not bool(pd.Series(texts, dtype="str").str.fullmatch(_ISO_DATE).all()):
        return None
    parsed = pd.to_datetime(
        pd.Series([v if isinstance(v, str) else pd.Timestamp(v) for v in values]),
        format="ISO8601",
        errors="coerce",
    )
    if bool(parsed.isna().any()):
        return None
    out = pd.Series(pd.NaT, index=range(len(blank)), dtype=DATE_DTYPE)
    out[~blank] = parsed.astype(DATE_DTYPE).to_numpy()
    return out


def _all_dates(values: np.ndarray) -> bool:
    return all(isinstance(v, dt.date) for v in values)


def _numbers(x: np.ndarray, blank: np.ndarray) -> pd.Series:
    """Whole numbers become Int64 (they were integers in the sheet), others float64."""
    full = np.full(len(blank), np.nan)
    full[~blank] = x
    finite = x[np.isfinite(x)]
    if (
        len(finite) == len(x)
        and np.all(finite == np.floor(finite))
        and np.all(np.abs(finite) < 2.0**53)
    ):
        return pd.Series(full).astype("Int64")
    return pd.Series(full)


def cell_text(v: object) -> str:
    """How a non-text cell reads when its column is text: as a person would type it."""
    if isinstance(v, bool):
        return "TRUE" if v else "FALSE"
    if isinstance(v, float):
        return str(int(v)) if v.is_integer() and abs(v) < 2.0**53 else repr(v)
    if isinstance(v, dt.datetime):
        return (
            v.isoformat(sep=" ")
            if (v.hour, v.minute, v.second, v.microsecond) != (0, 0, 0, 0)
            else v.date().isoformat()
        )
    if isinstance(v, dt.date | dt.time):
        return v.isoformat()
    return str(v)
