"""Unique column labels for the DataFrame, while the file's header text is kept apart.

pandas needs unique labels; the analyst needs their own names back in every output. So a
label is derived from the header (blank -> ``column N``, repeats -> ``name (2)``) and the
original text travels separately in ``Table.headers``.
"""

from __future__ import annotations


def unique_labels(headers: list[str]) -> list[str]:
    """One unique, non-blank label per header, in order (see module docstring)."""
    taken = {h for h in headers if h.strip()}
    used: set[str] = set()
    labels: list[str] = []
    for position, text in enumerate(headers, start=1):
        if text.strip() and text not in used:
            label = text
        else:
            base = text if text.strip() else f"column {position}"
            label = base
            if not (label not in used and (not text.strip() and label not in taken)):
                n = 2
                while f"{base} ({n})" in used or f"{base} ({n})" in taken:
                    n += 1
                label = f"{base} ({n})"
        used.add(label)
        labels.append(label)
    return labels
