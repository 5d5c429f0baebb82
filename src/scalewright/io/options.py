"""The plain data types the io layer hands to the rest of the program.

They are kept free of any reading logic so that the project file, the command line and the
window can build, store and compare them without touching a file.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import asdict, dataclass, field, fields
from enum import StrEnum
from pathlib import Path

import pandas as pd

SUPPORTED_READ = (".csv", ".tsv", ".txt", ".xlsx", ".xlsm", ".xls", ".ods", ".parquet")
SUPPORTED_WRITE = (".csv", ".tsv", ".xlsx", ".parquet")
TEXT_SUFFIXES = (".csv", ".tsv", ".txt")
WORKBOOK_SUFFIXES = (".xlsx", ".xlsm", ".xls", ".ods")

DELIMITERS = (",", ";", "\t", "|")
DECIMALS = (".", ",")
THOUSANDS = ("", ",", ".", " ", "'")

Progress = Callable[[float], None]
CancelCheck = Callable[[], bool]


@dataclass(frozen=True)
class ReadOptions:
    """How to read a file; ``None`` means "detect it". Stored in the project file."""

    encoding: str | None = None
    delimiter: str | None = None
    decimal: str | None = None
    thousands: str | None = None
    header_row: int | None = None
    sheet: str | None = None
    # Kind corrections: column label -> "number", "identifier", "text" or "date", applied
    # where the cells allow it (see ``io.corrections``); {} keeps every guess.
    kinds: dict[str, str] = field(default_factory=dict)

    def __post_init__(self) -> None:
        _check_value("encoding", self.encoding, str)
        _check_value("delimiter", self.delimiter, str)
        _check_value("decimal", self.decimal, str)
        _check_value("thousands", self.thousands, str)
        _check_value("header_row", self.header_row, int)
        _check_value("sheet", self.sheet, str)
        if self.encoding is not None:
            import codecs

            try:
                codecs.lookup(self.encoding)
            except LookupError:
                raise ValueError(f"encoding: unknown encoding {self.encoding!r}") from None
        if self.delimiter is not None and (
            len(self.delimiter) != 1 or self.delimiter in '"\r\n' or self.delimiter.isalnum()
        ):
            raise ValueError(
                f"delimiter: must be one character other than a quote, line end, letter or "
                f"digit (usually one of {', '.join(map(repr, DELIMITERS))}), not {self.delimiter!r}"
            )
        if self.decimal is not None and self.decimal not in DECIMALS:
            raise ValueError(f"decimal: must be '.' or ',', not {self.decimal!r}")
        if self.thousands is not None and self.thousands not in THOUSANDS:
            raise ValueError(f"thousands: must be one of {THOUSANDS!r}, not {self.thousands!r}")
        if (
            self.decimal is not None
            and self.thousands is not None
            and self.decimal == self.thousands
        ):
            raise ValueError("thousands: cannot be the same mark as decimal")
        if self.header_row is not None and self.header_row < 0:
            raise ValueError(f"header_row: must be 0 or more, not {self.header_row}")
        object.__setattr__(self, "kinds", _checked_kinds(self.kinds))

    def to_dict(self) -> dict:
        """JSON-ready: plain strings, ints and None. ``kinds`` only when there are
        corrections, so a project without any is written as before."""
        d = asdict(self)
        if not self.kinds:
            del d["kinds"]
        return d

    @classmethod
    def from_dict(cls, d: dict) -> ReadOptions:
        """Build from ``to_dict`` output; a missing key means "detect"."""
        if not isinstance(d, dict):
            raise ValueError(f"read options: expected an object, not {type(d).__name__}")
        known = {f.name for f in fields(cls)}
        for key in d:
            if key not in known:
                raise ValueError(f"{key}: not a read option (known: {', '.join(sorted(known))})")
        return cls(**d)


def _check_value(name: str, value: object, kind: type) -> None:
    if value is None:
        return
    if kind is int and isinstance(value, bool) or not isinstance(value, kind):
        raise ValueError(f"{name}: expected {kind.__name__} or null, not {value!r}")


class ColumnKind(StrEnum):
    NUMBER = "number"
    IDENTIFIER = "identifier"
    DATE = "date"
    BOOLEAN = "boolean"
    TEXT = "text"
    EMPTY = "empty"


# The kinds a user may ask a column to be read as (``ReadOptions.kinds``).
CORRECTABLE_KINDS = (ColumnKind.NUMBER, ColumnKind.IDENTIFIER, ColumnKind.TEXT, ColumnKind.DATE)


def _checked_kinds(kinds: object) -> dict[str, str]:
    """``ReadOptions.kinds`` checked: a label (text) to one of ``CORRECTABLE_KINDS``."""
    if not isinstance(kinds, dict):
        raise ValueError(f"kinds: expected an object (column -> kind), not {kinds!r}")
    words = ", ".join(CORRECTABLE_KINDS)
    out: dict[str, str] = {}
    for label, kind in kinds.items():
        if not isinstance(label, str) or not label:
            raise ValueError(f"kinds: a column name must be non-empty text, not {label!r}")
        if kind not in CORRECTABLE_KINDS:
            raise ValueError(f"kinds: column '{label}': {kind!r} is not one of {words}")
        out[label] = str(ColumnKind(kind))
    return out


@dataclass
class Table:
    """A loaded table: unique labels in ``data``, the file's own header text in ``headers``."""

    data: pd.DataFrame
    headers: list[str]
    kinds: dict[str, ColumnKind]
    source: Path
    options: ReadOptions
    notes: list[str] = field(default_factory=list)
    sheets: list[str] = field(default_factory=list)
    # The file as it was read: size in bytes and SHA-256, so a project records exactly the
    # bytes its parameters were fitted on (None for a table not read from a file).
    size: int | None = None
    sha256: str | None = None


@dataclass
class Detection:
    """What an import dialog shows while the user adjusts the options."""

    options: ReadOptions
    sheets: list[str]
    preview: pd.DataFrame
    notes: list[str]
    headers: list[str] = field(default_factory=list)
    kinds: dict[str, ColumnKind] = field(default_factory=dict)
