"""The scaling engine: methods, fitting, applying, restoring and diagnostics.

numpy, pandas and scipy only: no files, no Qt, no project format. Everything the window
and the command line do to data goes through these calls.
"""

from .diagnostics import ColumnSummary, Suggestion, describe, suggest
from .histogram import Histogram, bars_in_range, histogram, mapped_edges
from .methods import METHODS, FitError, Method, OptionSpec, get_method
from .plan import (
    ColumnChoice,
    ColumnReport,
    FitSettings,
    FittedColumn,
    FittedPlan,
    ParamSet,
    apply,
    column_values,
    fit,
    fit_column,
    fit_rows,
    group_codes,
    restore,
    value_key,
)

__all__ = [
    "METHODS",
    "ColumnChoice",
    "ColumnReport",
    "ColumnSummary",
    "FitError",
    "FitSettings",
    "FittedColumn",
    "FittedPlan",
    "Histogram",
    "Method",
    "OptionSpec",
    "ParamSet",
    "Suggestion",
    "apply",
    "bars_in_range",
    "column_values",
    "describe",
    "fit",
    "fit_column",
    "fit_rows",
    "get_method",
    "group_codes",
    "histogram",
    "mapped_edges",
    "restore",
    "suggest",
    "value_key",
]
