"""Kind corrections: the analyst says what a column is when the guess (``kinds``) is wrong.

A correction is kept in ``ReadOptions.kinds`` (and so in the project) and applied where
the table is built, from the cells as the file writes them, "where the cells allow it":
number only when every non-blank cell is a number under the file's decimal and thousands
marks, date only when every cell is a date, identifier and text always (the text kept
exactly as written). A correction the cells do not allow is refused with the file, the
column, the first row that does not fit and its text; nothing is changed silently.
"""

from __future__ import annotations

import re
from pathlib import Path

import numpy as np
import pandas as pd

from ..errors import ReadError
from .kinds import (
    _DMY_DATE,
    _ISO_DATE,
    _YMD_SLASH_DATE,
    MAX_NUMBER_DIGITS,
    MISSING_MARKERS,
    Classified,
    _as_date,
    _as_number,
    _TextCells,
    cell_text,
    empty_column,
    integer_pattern,
    number_pattern,
)
from .options import CORRECTABLE_KINDS, ColumnKind, Table

_KIND_WORDS = {
    ColumnKind.NUMBER: "numbers",
    ColumnKind.IDENTIFIER: "identifiers",
    ColumnKind.TEXT: "text",
    ColumnKind.DATE: "dates",
    ColumnKind.BOOLEAN: "yes/no values",
    ColumnKind.EMPTY: "empty",
}


class KindRefused(ReadError):
    """The cells of a column do not allow the kind asked for (names file, column, row)."""

    def __init__(self, path: object, label: str, kind: ColumnKind, row: int, text: str, why: str):
        self.column, self.kind, self.row, self.text = label, kind, row, text
        super().__init__(
            path,
            f"column '{label}' cannot be read as {_KIND_WORDS[kind]}: data row {row} "
            f"holds '{text}', which {why}",
        )


def read_as(
    text: pd.Series,
    kind: ColumnKind | str,
    label: str,
    path: Path | str,
    decimal: str = ".",
    thousands: str = "",
) -> Classified:
    """The column ``text`` (cells as written, missing as NA) read as ``kind``.

    Raises :class:`KindRefused` when a cell does not allow it.
    """
    kind = ColumnKind(kind)
    if kind not in CORRECTABLE_KINDS:
        raise ValueError(f"{kind} is not a kind a column can be corrected to")
    text = text.astype("str").reset_index(drop=True)
    if kind in (ColumnKind.IDENTIFIER, ColumnKind.TEXT):
        return text, kind, []
    cells = _TextCells.of(text, label)
    if kind is ColumnKind.NUMBER:
        return _numbers(cells, path, decimal, thousands)
    return _dates(cells, path)


def _numbers(cells: _TextCells, path, decimal: str, thousands: str) -> Classified:
    values = cells.values
    markers = values.str.lower().isin(MISSING_MARKERS)
    if not bool((~markers).any()):  # nothing but blanks and missing markers
        return (
            pd.Series(np.full(len(cells.s), np.nan)),
            ColumnKind.NUMBER,
            _marker_notes(cells, markers),
        )
    found = _as_number(cells, decimal, thousands, False)
    if found is not None:
        return found
    # The guessing rules said no: name the first cell that is not a number we can hold.
    numbers = values[~markers]
    fits = numbers.str.fullmatch(number_pattern(decimal, thousands))
    if not bool(fits.all()):
        first = fits.index[~fits.to_numpy()][0]
        raise KindRefused(
            path, cells.label, ColumnKind.NUMBER, first + 1, cells.s[first], _not_number(decimal)
        )
    long = numbers.str.fullmatch(integer_pattern(thousands)) & (
        numbers.str.count(r"\d") > MAX_NUMBER_DIGITS
    )
    if bool(long.any()):
        first = long.index[long.to_numpy()][0]
        why = f"has more than {MAX_NUMBER_DIGITS} digits, more than a number holds exactly"
    else:  # not reached by any cell we know of; still a refusal, never a silent change
        first, why = numbers.index[0], _not_number(decimal)
    raise KindRefused(path, cells.label, ColumnKind.NUMBER, first + 1, cells.s[first], why)


def _marker_notes(cells: _TextCells, markers: pd.Series) -> list[str]:
    if not bool(markers.any()):
        return []
    words = ", ".join(sorted(set(cells.values[markers])))
    return [f"Column '{cells.label}': {int(markers.sum())} cells marked {words} read as missing."]


def _not_number(decimal: str) -> str:
    mark = "a decimal comma" if decimal == "," else "a decimal point"
    return f"is not a number (this file is read with {mark})"


_DATE_FORMS = (_ISO_DATE, _YMD_SLASH_DATE, _DMY_DATE)


def _dates(cells: _TextCells, path) -> Classified:
    values = cells.values
    if values.empty:
        s = pd.Series(pd.NaT, index=cells.s.index, dtype="datetime64[us]")
        return s, ColumnKind.DATE, []
    found = _as_date(cells)
    if found is not None:
        return found
    # Name the first cell not written the way the first date is (or not a date at all).
    form = next((f for f in _DATE_FORMS if re.fullmatch(f, values.iloc[0])), None)
    if form is not None:
        off = ~values.str.fullmatch(form)
        if bool(off.any()):
            first = off.index[off.to_numpy()][0]
            why = "is not a date written like the one in the first row"
        else:
            fmt = {_ISO_DATE: "ISO8601", _YMD_SLASH_DATE: "%Y/%m/%d"}.get(form, "mixed")
            parsed = pd.to_datetime(values, format=fmt, errors="coerce", dayfirst=True)
            bad = parsed.isna()
            if not bool(bad.any()):
                first, why = values.index[0], "leaves day and month ambiguous in this column"
            else:
                first, why = bad.index[bad.to_numpy()][0], "is not a date on the calendar"
    else:
        first, why = values.index[0], "is not a date (write dates as 2025-04-03)"
    raise KindRefused(path, cells.label, ColumnKind.DATE, first + 1, cells.s[first], why)


def column_text(table: Table, label: str) -> pd.Series | None:
    """The cells of a column as text, where the table still holds them as written
    (identifier, text and empty columns); None for numbers, dates and yes/no values."""
    kind = table.kinds.get(label)
    if kind in (ColumnKind.IDENTIFIER, ColumnKind.TEXT):
        return table.data[label].astype("str")
    if kind is ColumnKind.EMPTY:
        return empty_column(len(table.data))
    return None


def allowed_kinds(table: Table, label: str) -> tuple[ColumnKind, ...]:
    """The kinds column ``label`` of ``table`` may be read as, in menu order (number,
    identifier, text, date): what a Kind menu offers. Identifier and text always; number
    and date when every cell allows it (tried on the text the table holds; a number column
    is numbers and a date column dates already)."""
    kind = table.kinds[label]
    text = column_text(table, label)
    allowed = []
    for option in CORRECTABLE_KINDS:
        if (
            option in (ColumnKind.IDENTIFIER, ColumnKind.TEXT)
            or option == kind
            or text is not None
            and _allows(table, label, text, option)
        ):
            allowed.append(option)
    return tuple(allowed)


def _allows(table: Table, label: str, text: pd.Series, kind: ColumnKind) -> bool:
    options = table.options
    try:
        read_as(text, kind, label, table.source, options.decimal or ".", options.thousands or "")
    except KindRefused:
        return False
    return True


def identifier_of_numbers(table: Table, label: str) -> str | None:
    """Why a column read as an identifier is one, when every cell is a number it could be
    read as instead (for example "all values have 8 digits"); None otherwise."""
    if table.kinds.get(label) is not ColumnKind.IDENTIFIER:
        return None
    text = column_text(table, label)
    assert text is not None
    reason = _TextCells.of(text, label).digit_code_reason()
    if reason is None or ColumnKind.NUMBER not in allowed_kinds(table, label):
        return None
    return reason


def described(kind: ColumnKind | str) -> str:
    """The plural word for a kind, as in "read as numbers"."""
    return _KIND_WORDS[ColumnKind(kind)]


def workbook_text(cells: np.ndarray) -> pd.Series:
    """Workbook cells as text, as a person would type them (blank cells missing)."""
    blank = (cells == "") | np.equal(cells, None)
    text = [
        None if b else (v if isinstance(v, str) else cell_text(v))
        for v, b in zip(cells, blank, strict=True)
    ]
    return pd.Series(text, dtype="str")
