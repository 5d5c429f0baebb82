"""Which name a column has in the data platform, and the dialects we write.

A table in a warehouse cannot hold two columns of one name nor a blank one, so a column is
known there by the file's own header text when that text is unique and not blank, and by
Scalewright's label (``name (2)``, ``column 3``) otherwise; see docs/decisions.md.
"""

from __future__ import annotations

from ..errors import OptionError

#: The dialects ``scalewright sql`` writes (sqlglot's names for them).
DIALECTS = ("duckdb", "postgres", "spark", "snowflake", "bigquery", "tsql")


def check_dialect(dialect: str) -> str:
    d = dialect.strip().lower()
    if d not in DIALECTS:
        raise OptionError(f"unknown SQL dialect '{dialect}' (dialects: {', '.join(DIALECTS)})")
    return d


def platform_names(labels: list[str], headers: list[str]) -> dict[str, str]:
    """label -> the column's name in the platform table (see module docstring)."""
    if len(headers) != len(labels):
        return {label: label for label in labels}
    counts: dict[str, int] = {}
    for h in headers:
        counts[h] = counts.get(h, 0) + 1
    out = {}
    for label, header in zip(labels, headers, strict=True):
        out[label] = header if header.strip() and counts[header] == 1 else label
    taken: set[str] = set()
    for label, name in out.items():  # a header equal to another column's label: use labels
        if name in taken:
            out[label] = label
        taken.add(out[label])
    return out
