"""Reading tables from files and writing results (no Qt, no scaling methods here).

Everything other layers need is importable from ``scalewright.io``. The decisions an
analyst may ask about, in one place:

- Labels: ``Table.data`` columns are unique labels (blank header -> ``column N``, a repeat
  -> ``name (2)``); ``Table.headers`` keeps the file's text, and every writer writes it back.
- Kinds: a column is a number only when every non-blank cell parses (``NA``, ``N/A``,
  ``NaN``, ``null``, ``#N/A``, ``none`` count as blank in number columns, with a note).
  Leading zeros, digit strings over 15 digits, all-same-width digit strings of 8 or more
  digits, and letter+digit codes are identifiers and stay text. Whole numbers written
  without a decimal point load as ``Int64``; other numbers as ``float64``.
- Corrections: ``ReadOptions.kinds`` reads a column as number, identifier, text or date
  where its cells allow it (``io.corrections``); ``allowed_kinds`` says which they allow.
- Dates: ISO (``2019-04-03``, with or without a time), ``yyyy/mm/dd``, and
  ``dd/mm/yyyy``-like with one separator; month-first only when a first field goes above
  12, else day-first with a note.
- Encodings: UTF-8 (with or without BOM), UTF-16 (BOM, or clear zero-byte pattern),
  Cyrillic code pages when charset-normalizer says so, otherwise Windows-1252 (Latin-1
  when Windows-1252 cannot decode the bytes).
- Workbooks: the first visible sheet with data; title rows above the header skipped; a
  merged header cell names every column it spans; hidden sheets are not listed.
- Writing: CSV/TSV are UTF-8 without BOM, CR LF line ends, ``.`` decimals, shortest
  round-trip floats, ISO dates, empty for missing, every text cell quoted. A missing
  value in a one-column file, and a row of only missing values at the end, is written as
  quoted empty cells (``""``): reading keeps those rows, while rows of bare separators at
  the end (spreadsheet export leftovers) are left out. XLSX holds
  numbers at full precision, dates as dates, text as text (never a formula).
"""

from .atomic import atomic_path, ensure_not_source
from .corrections import KindRefused, allowed_kinds, identifier_of_numbers
from .labels import unique_labels
from .options import (
    CORRECTABLE_KINDS,
    SUPPORTED_READ,
    SUPPORTED_WRITE,
    ColumnKind,
    Detection,
    ReadOptions,
    Table,
)
from .reader import detect, fingerprint, list_sheets, read_table
from .writers import read_embedded_project, write_scaled_workbook, write_table

__all__ = [
    "CORRECTABLE_KINDS",
    "SUPPORTED_READ",
    "SUPPORTED_WRITE",
    "ColumnKind",
    "Detection",
    "KindRefused",
    "ReadOptions",
    "Table",
    "allowed_kinds",
    "atomic_path",
    "detect",
    "ensure_not_source",
    "fingerprint",
    "identifier_of_numbers",
    "list_sheets",
    "read_embedded_project",
    "read_table",
    "unique_labels",
    "write_scaled_workbook",
    "write_table",
]
