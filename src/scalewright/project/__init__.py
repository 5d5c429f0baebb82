"""The project document (``.swproj``): what was chosen, what was fitted, and on which file.

A project is UTF-8 JSON (see ``docs/project-file.md``). Loading validates every field and
fails with a :class:`~scalewright.errors.ProjectError` whose message names the field, for
example ``columns.yield_kg.params.sd: must be a number``. No pickle, no eval.

- ``document``: the :class:`Project` record and its writer;
- ``loading``: strict JSON parsing and one loader per format version (``v1``), with the
  saved parameters checked by each method's own rules (``params``);
- ``source``: finding the data file the project was fitted on, and whether it changed;
- ``sheet``: the readable parameters sheet of a scaled workbook.
"""

from .document import (
    FORMAT_NAME,
    FORMAT_VERSION,
    MAX_PROJECT_BYTES,
    SUFFIX,
    FittedOn,
    Project,
    now_iso,
    project_to_dict,
    project_to_json,
    save_project,
)
from .loading import load_project, project_from_json
from .params import param_kinds
from .sheet import (
    ALL_ROWS,
    PARAMETER_SHEET_COLUMNS,
    UNSEEN_GROUPS,
    options_text,
    parameter_sheet,
)
from .source import SourceCheck, locate_source

__all__ = [
    "ALL_ROWS",
    "FORMAT_NAME",
    "FORMAT_VERSION",
    "MAX_PROJECT_BYTES",
    "PARAMETER_SHEET_COLUMNS",
    "SUFFIX",
    "UNSEEN_GROUPS",
    "FittedOn",
    "Project",
    "SourceCheck",
    "load_project",
    "locate_source",
    "now_iso",
    "options_text",
    "param_kinds",
    "parameter_sheet",
    "project_from_json",
    "project_to_dict",
    "project_to_json",
    "save_project",
]
