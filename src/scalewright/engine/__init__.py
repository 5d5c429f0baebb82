"""The scaling engine: methods, fitting, applying, restoring and diagnostics.

numpy, pandas and scipy only: no files, no Qt, no project format. Everything the window
and the command line do to data goes through these calls.
"""

from .diagnostics import ColumnSummary, Suggestion, describe, suggest
from .histogram import Histogram, bars_in_range, histogram, mapped_edges
from .method_base import (
    FitError,
    LinearMethod,
    Method,
    OptionSpec,
    ParamError,
    ParamSpec,
    format_number,
)
from .methods import METHODS, get_method, log_shift, robust_scale
from .plan import (
    MAX_GROUPS,
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
    "MAX_GROUPS",
    "METHODS",
    "ColumnChoice",
    "ColumnReport",
    "ColumnSummary",
    "FitError",
    "FitSettings",
    "FittedColumn",
    "FittedPlan",
    "Histogram",
    "LinearMethod",
    "Method",
    "OptionSpec",
    "ParamError",
    "ParamSet",
    "ParamSpec",
    "Suggestion",
    "apply",
    "bars_in_range",
    "column_values",
    "describe",
    "fit",
    "fit_column",
    "fit_rows",
    "format_number",
    "get_method",
    "group_codes",
    "histogram",
    "log_shift",
    "mapped_edges",
    "restore",
    "robust_scale",
    "rows_by_code",
    "suggest",
    "value_key",
]
