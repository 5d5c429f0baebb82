"""Is this file a table we can read? Judged by its extension and by its first bytes.

A file that is not a table (a README, a PDF, a document, prose saved as .txt) gets one
clear message, ``UnsupportedFile``, that says what it seems to be and lists the types that
open, instead of a parsing error about rows and fields. A ``.txt`` or ``.csv`` that really
holds a delimited table still opens; only text with no column separator used the same way
on each line and written in sentences is refused as "not a table".
"""

from __future__ import annotations

import collections
import re
from pathlib import Path

from ..errors import UnsupportedFile
from . import detect as det
from .options import DELIMITERS, SUPPORTED_READ

SUPPORTED_WORDS = (
    "CSV (.csv), TSV (.tsv), delimited text (.txt), Workbook (.xlsx, .xlsm), "
    "older workbook (.xls), OpenDocument spreadsheet (.ods) and Parquet (.parquet)"
)

# What a user may have picked by mistake, by extension (common practice: the usual uses
# of these endings).
_KNOWN_SUFFIXES = {
    ".md": "a Markdown text",
    ".rst": "a text document",
    ".pdf": "a PDF document",
    ".doc": "a word-processor document",
    ".docx": "a word-processor document",
    ".odt": "a word-processor document",
    ".rtf": "a word-processor document",
    ".ppt": "a presentation",
    ".pptx": "a presentation",
    ".odp": "a presentation",
    ".json": "a JSON file",
    ".xml": "an XML file",
    ".html": "a web page",
    ".htm": "a web page",
    ".png": "an image",
    ".jpg": "an image",
    ".jpeg": "an image",
    ".gif": "an image",
    ".zip": "a zip archive",
    ".swproj": "a Scalewright project (open it as a project)",
}

# File signatures ("magic numbers"): PDF 1.7 (ISO 32000-1, 7.5.2) starts with "%PDF-";
# zip archives, and so .docx/.xlsx/.ods, with "PK\x03\x04" (PKWARE APPNOTE 4.3.7); the
# older Office formats (.doc, .xls) are OLE2 compound files starting D0 CF 11 E0 A1 B1 1A E1
# ([MS-CFB] 2.2); PNG, JPEG and GIF by their published headers.
_SIGNATURES = (
    (b"%PDF-", "a PDF document"),
    (b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1", "an older Office file (.doc or .xls)"),
    (b"\x89PNG\r\n\x1a\n", "an image"),
    (b"\xff\xd8\xff", "an image"),
    (b"GIF8", "an image"),
)

SNIFF_BYTES = 64 * 1024
SNIFF_LINES = 30
_QUOTED = re.compile(r'"[^"]*"')
_PROSE_WORDS = 6  # a line of this many words or more reads as a sentence


def refuse(path: Path, what: str, advice: str = "") -> UnsupportedFile:
    return UnsupportedFile(
        path,
        f"{what}; Scalewright opens tables: {SUPPORTED_WORDS}" + (f". {advice}" if advice else ""),
    )


def check_extension(path: Path) -> None:
    """Refuse an extension no reader handles, saying what the file seems to be."""
    suffix = path.suffix.lower()
    if suffix in SUPPORTED_READ:
        return
    seems = _KNOWN_SUFFIXES.get(suffix)
    kind = f"'{suffix}'" if suffix else "no extension"
    what = f"this type of file ({kind}{', ' + seems if seems else ''}) is not supported"
    raise refuse(path, what)


def check_text_content(path: Path, head: bytes, *, delimiter_given: bool) -> None:
    """Refuse a .csv/.tsv/.txt whose first bytes show it is not a text table.

    Only what is clear is refused: a known binary format, or (when the delimiter is left
    to detection) lines written in sentences with no column separator used alike on each.
    Everything else goes on to the reader, whose messages name the row at fault.
    """
    for signature, what in _SIGNATURES:
        if head.startswith(signature):
            raise refuse(path, f"this is {what} saved under a '{path.suffix}' name, not a table")
    if head.startswith(b"PK\x03\x04"):
        if b"xl/" in head[:SNIFF_BYTES]:
            raise refuse(
                path,
                f"this is a workbook saved under a '{path.suffix}' name",
                "Rename it to end in .xlsx to open it",
            )
        if b"content.xml" in head[:SNIFF_BYTES] and b"spreadsheet" in head[:SNIFF_BYTES]:
            raise refuse(
                path,
                f"this is an OpenDocument spreadsheet saved under a '{path.suffix}' name",
                "Rename it to end in .ods to open it",
            )
        raise refuse(path, "this is a zipped file (a document or archive), not a table")
    if delimiter_given:
        return
    try:
        encoding, _ = det.detect_encoding(head)
    except det.NotText:
        return  # the reader says "binary data" in its own words
    text = head.decode(encoding, errors="replace")
    if looks_like_prose(text):
        raise refuse(
            path,
            "this does not look like a table: its lines are sentences, with no column "
            "separator (comma, semicolon, tab or bar) used the same way on each line",
        )


def looks_like_prose(text: str) -> bool:
    """Sentences rather than rows: no delimiter appears the same number of times (at least
    once) on most lines, and most lines hold many words. A one-column table has no
    delimiter either, but its cells are short."""
    lines = [line.strip() for line in text.splitlines() if line.strip()][:SNIFF_LINES]
    if len(lines) < 3:
        return False
    # Quoted cells may hold any character, so separators are counted outside quotes.
    bare = [_QUOTED.sub("", line) for line in lines]
    for d in DELIMITERS:
        count, times = collections.Counter(line.count(d) for line in bare).most_common(1)[0]
        if count >= 1 and times >= 0.8 * len(lines):
            return False
    # Words are counted between spaces only: tab-separated cells are not words.
    wordy = sum(len(line.split(" ")) >= _PROSE_WORDS for line in lines)
    return wordy >= 0.5 * len(lines)
