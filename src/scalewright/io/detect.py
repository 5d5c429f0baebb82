"""Guess how a delimited text file is written: encoding, delimiter, header row, number marks.

Each guess works on a sample from the start of the file so that an import dialog can
show it at once; the bulk read then uses the guessed (or user-given) values.
"""

from __future__ import annotations

import codecs
import csv
import io
import re
from collections import Counter

import charset_normalizer

from .kinds import SPACE_MARKS

SAMPLE_BYTES = 256 * 1024
SAMPLE_ROWS = 200

_CYRILLIC = {"cp1251", "koi8_r", "koi8_u", "mac_cyrillic", "iso8859_5", "cp866"}


class NotText(Exception):
    """The bytes are not a delimited text file (binary data)."""


def detect_encoding(raw: bytes) -> tuple[str, str]:
    """Return (codec name, plain-language reason), judged on the start of the file.

    The reader checks the whole file afterwards and falls back to ``single_byte`` when
    UTF-8 breaks further down.
    """
    if raw.startswith(codecs.BOM_UTF8):
        return "utf-8-sig", "UTF-8 with a byte-order mark"
    if raw.startswith((codecs.BOM_UTF16_LE, codecs.BOM_UTF16_BE)):
        return "utf-16", "UTF-16 (byte-order mark)"
    head = raw[:SAMPLE_BYTES]
    if b"\x00" in head:
        # UTF-16 without a mark puts a zero byte beside every ASCII character (each is one
        # 16-bit code unit below 0x80; Unicode Standard, chapter 3.9).
        even, odd = head[0::2], head[1::2]
        if odd.count(0) > 0.4 * len(odd) and even.count(0) < 0.05 * len(even):
            return "utf-16-le", "UTF-16 little-endian (no byte-order mark)"
        if even.count(0) > 0.4 * len(even) and odd.count(0) < 0.05 * len(odd):
            return "utf-16-be", "UTF-16 big-endian (no byte-order mark)"
        raise NotText()
    if _looks_binary(head):
        raise NotText()
    try:
        head.decode("utf-8")
        return "utf-8", "UTF-8"
    except UnicodeDecodeError as err:
        # A character cut in two at the end of a sample is not evidence against UTF-8.
        if err.reason == "unexpected end of data" and err.start >= len(head) - 3:
            return "utf-8", "UTF-8"
    # charset-normalizer tells Cyrillic code pages apart reliably, but on short Western
    # samples it often prefers cp1250 over cp1252 (measured on French and German samples),
    # so only its Cyrillic answers are taken; everything else is read as Windows-1252.
    guess = charset_normalizer.from_bytes(head).best()
    if guess is not None and guess.encoding in _CYRILLIC:
        return guess.encoding, f"{guess.encoding} (Cyrillic, guessed from the characters used)"
    return single_byte(raw)


def single_byte(raw: bytes) -> tuple[str, str]:
    try:
        raw.decode("cp1252")
        return "cp1252", "Windows-1252 (Western European)"
    except UnicodeDecodeError:
        return "latin-1", "Latin-1 (ISO 8859-1)"


def _looks_binary(head: bytes) -> bool:
    control = sum(head.count(bytes([c])) for c in range(32) if c not in (9, 10, 12, 13))
    return control > max(2, len(head) // 100)


def parse_rows(text: str, delimiter: str, limit: int = SAMPLE_ROWS) -> list[tuple[int, list[str]]]:
    """(0-based physical line index, fields) for the first rows; blank lines are skipped."""
    reader = csv.reader(
        io.StringIO(text, newline=""), delimiter=delimiter, quotechar='"', strict=False
    )
    rows: list[tuple[int, list[str]]] = []
    start = 0
    try:
        for fields in reader:
            # [] is an empty line; [""] is a lone quoted empty field, a real (blank) cell.
            if len(fields) > 1 or fields == [""] or (fields and fields[0].strip()):
                rows.append((start, fields))
            start = reader.line_num
            if len(rows) >= limit:
                break
    except csv.Error:
        pass
    return rows


def detect_delimiter(text: str, default: str = ",") -> str:
    """The candidate that splits the most lines into the same number (>1) of fields.

    A candidate must split at least two lines, and more than half of them, alike: a comma
    inside the one header of a one-column file is not a delimiter. With no such candidate, ``default`` (a tab for
    ``.tsv`` files, else a comma) is the answer.
    """
    best, best_score = default, (-1, 0, 0)
    for rank, cand in enumerate(("\t", ";", "|", ",")):
        if cand not in text:
            continue
        rows = parse_rows(text, cand, 100)
        counts = [len(f) for _, f in rows]
        if not counts:
            continue
        mode, n = Counter(counts).most_common(1)[0]
        if mode < 2 or n < 2 or 2 * n <= len(counts):
            continue
        score = (n, mode, -rank)
        if score > best_score:
            best, best_score = cand, score
    return best


def is_title_like(fields: list[str], width: int) -> bool:
    """A title or note line above the header: wrong width, or only its first cell filled."""
    filled = [i for i, f in enumerate(fields) if f.strip()]
    if not filled:
        return True
    if len(fields) != width:
        return True
    return width > 1 and filled == [0]


def detect_header(rows: list[tuple[int, list[str]]]) -> tuple[int, int]:
    """Return (physical line index of the header, number of columns)."""
    counts = Counter(len(f) for _, f in rows[len(rows) // 4 :] or rows)
    width = counts.most_common(1)[0][0]
    if width == 1:
        return rows[0][0], 1  # with one column a title cannot be told from a header
    for line, fields in rows:
        if not is_title_like(fields, width):
            return line, width
    return rows[0][0], width


_GROUP_COMMA = re.compile(r"[+-]?\d{1,3}(?:,\d{3})+(?:\.\d+)?")
_GROUP_DOT = re.compile(r"[+-]?\d{1,3}(?:\.\d{3})+(?:,\d+)?")
_GROUP_SPACE = re.compile(rf"[+-]?\d{{1,3}}(?:[{SPACE_MARKS}]\d{{3}})+(?:[.,]\d+)?")
_GROUP_APOS = re.compile(r"[+-]?\d{1,3}(?:'\d{3})+(?:\.\d+)?")
_DEC_COMMA = re.compile(r"[+-]?\d*,\d+")
_DEC_POINT = re.compile(r"[+-]?\d*\.\d+(?:[eE][+-]?\d+)?")
_AMBIGUOUS = re.compile(r"[+-]?[1-9]\d{0,2}[.,]\d{3}")


def detect_marks(cells: list[str], delimiter: str) -> tuple[str, str]:
    """(decimal, thousands) from the number-looking cells of a sample."""
    votes: Counter[str] = Counter()
    for raw in cells:
        c = raw.strip()
        if not c or not c[-1].isdigit():
            continue
        if _AMBIGUOUS.fullmatch(c):
            votes["ambiguous_" + ("comma" if "," in c else "dot")] += 1
            continue
        if _GROUP_COMMA.fullmatch(c):
            votes["dec_point"] += "." in c
            votes["th_comma"] += 1
        elif _GROUP_DOT.fullmatch(c):
            votes["dec_comma"] += "," in c
            votes["th_dot"] += 1
        elif _GROUP_SPACE.fullmatch(c):
            votes["dec_comma"] += "," in c
            votes["dec_point"] += "." in c
            votes["th_space"] += 1
        elif _GROUP_APOS.fullmatch(c):
            votes["dec_point"] += "." in c
            votes["th_apos"] += 1
        elif _DEC_COMMA.fullmatch(c):
            votes["dec_comma"] += 1
        elif _DEC_POINT.fullmatch(c):
            votes["dec_point"] += 1
    decimal = "," if votes["dec_comma"] > votes["dec_point"] else "."
    if decimal == "." and not votes["dec_point"] and votes["ambiguous_comma"] and delimiter != ",":
        decimal = ","
    if decimal == ",":
        options = {".": votes["th_dot"] + votes["ambiguous_dot"], " ": votes["th_space"]}
    else:
        options = {
            ",": votes["th_comma"] + (votes["ambiguous_comma"] if votes["th_comma"] else 0),
            " ": votes["th_space"],
            "'": votes["th_apos"],
        }
    mark, count = max(options.items(), key=lambda kv: kv[1])
    if decimal == "," and mark == "." and votes["th_dot"] == 0:
        mark, count = "", 0
    return decimal, (mark if count else "")


def describe_delimiter(d: str) -> str:
    return {",": "comma", ";": "semicolon", "\t": "tab", "|": "vertical bar"}.get(d, repr(d))


_MARK_WORDS = {".": "point", ",": "comma", " ": "space", "'": "apostrophe"}


def describe_read_options(options) -> str:
    """A file's read settings (``ReadOptions``) in the import settings' words, for the
    report and ``scalewright show``; "" when every setting is left to detection."""
    words = []
    if options.encoding:
        words.append(f"encoding {options.encoding.upper()}")
    if options.delimiter:
        words.append(f"columns separated by {describe_delimiter(options.delimiter)}")
    if options.decimal:
        words.append(f"decimal {_MARK_WORDS.get(options.decimal, repr(options.decimal))}")
    if options.thousands:
        mark = _MARK_WORDS.get(options.thousands, repr(options.thousands))
        words.append(f"thousands separated by {mark}")
    if options.header_row is not None:
        words.append(f"column names on row {options.header_row + 1}")
    if options.sheet:
        words.append(f"sheet '{options.sheet}'")
    return ", ".join(words)
