"""The window's state without Qt: column figures, fits and the session that holds choices.

- ``figures``: each column's values, histogram, summary and suggestion, computed once;
- ``fits``: every column's fit as a typed outcome (``Fitted`` or ``FitFailed``), slow ones
  scheduled off the interface thread;
- ``session``: choices, fit settings, selection, the unsaved flag and where each column's
  parameters came from, announced with psygnal events;
- ``columns``: the per-column reads the panels make (figures, outcome, scaled values);
- ``display``: a range in both units and the fit in words, for the panels.
"""

from .figures import (
    BINS,
    FIT_WHERE_KINDS,
    ColumnFacts,
    ColumnFigures,
    Figures,
    RangeInfo,
    TableFacts,
    column_facts,
    figures_of,
)
from .fits import (
    BACKGROUND_VALUES,
    FitFailed,
    FitOutcome,
    FitStore,
    Fitted,
    choice_key,
    scale_with,
)
from .session import Session

__all__ = [
    "BACKGROUND_VALUES",
    "BINS",
    "FIT_WHERE_KINDS",
    "ColumnFacts",
    "ColumnFigures",
    "FitFailed",
    "FitOutcome",
    "FitStore",
    "Fitted",
    "Figures",
    "RangeInfo",
    "Session",
    "TableFacts",
    "choice_key",
    "column_facts",
    "figures_of",
    "scale_with",
]
