"""Numbers written for people: one rule for the window, the command line and the files.

The sign is always the ASCII hyphen-minus, so that any number a user reads (a fitted
parameter, a histogram readout, a cell) can be copied into an option, a command or a file
and read back. A value that rounds to zero is written without a sign: "-0.0" says nothing
a reader needs and looks like a fault. No imports; it sits in the engine, the lowest layer, so every layer may use it.
"""

from __future__ import annotations

import math

MINUS = "-"  # the one minus sign (see docs/decisions.md, "One minus sign")


def number_text(value: float | int, spec: str = ".10g") -> str:
    """``value`` formatted with ``spec`` (``"r"`` for the shortest text that reads back to
    the same double), with no sign on a result that is zero ("-0", "-0.0", "-0e+00")."""
    if isinstance(value, float) and math.isnan(value):
        return "nan"
    text = repr(float(value)) if spec == "r" else format(value, spec)
    if text.startswith(MINUS) and _is_zero(text[1:]):
        return text[1:]
    return text


def _is_zero(text: str) -> bool:
    try:
        return float(text.replace(",", "").rstrip("%")) == 0.0
    except ValueError:
        return False
