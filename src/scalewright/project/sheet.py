"""The parameters sheet of a scaled workbook: one readable row per fitted parameter."""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

import pandas as pd

from ..engine import FittedPlan, get_method

PARAMETER_SHEET_COLUMNS = [
    "column",
    "method",
    "options",
    "group",
    "parameter",
    "value",
    "fitted on (values)",
    "smallest fitted value",
    "largest fitted value",
    "how to reverse (x = original, y = scaled)",
]
ALL_ROWS = "all fitted rows"
UNSEEN_GROUPS = "all groups (used for groups not seen when fitting)"


def options_text(options: Mapping[str, Any]) -> str:
    """Options as ``name=value, ...`` with yes/no for switches and repr for numbers."""
    parts = []
    for key, value in options.items():
        if isinstance(value, bool):
            value = "yes" if value else "no"
        elif isinstance(value, float):
            value = repr(value)
        parts.append(f"{key}={value}")
    return ", ".join(parts)


def parameter_sheet(plan: FittedPlan) -> pd.DataFrame:
    """One row per fitted parameter (and per group), readable by a person.

    Values keep full precision; a yes/no parameter reads ``yes``/``no``; a list of
    numbers (fitted quantiles) takes one row per number, named ``name[i]``.
    """
    rows: list[list[Any]] = []
    for label, fc in plan.columns.items():
        method = get_method(fc.method)
        sets = [(ALL_ROWS if not fc.groups else UNSEEN_GROUPS, fc.pooled)]
        sets += [(str(k), ps) for k, ps in fc.groups.items()]
        for group, ps in sets:
            items = [
                item
                for name, value in ps.params.items()
                for item in (
                    [(f"{name}[{i}]", v) for i, v in enumerate(value)]
                    if isinstance(value, list)
                    else [(name, value)]
                )
            ] or [("(none)", "")]
            for name, value in items:
                if isinstance(value, bool):
                    value = "yes" if value else "no"
                rows.append(
                    [
                        label,
                        method.name,
                        options_text(fc.options),
                        group,
                        name,
                        value,
                        ps.n,
                        ps.min,
                        ps.max,
                        method.inverse_formula,
                    ]
                )
    return pd.DataFrame(rows, columns=PARAMETER_SHEET_COLUMNS, dtype=object)
