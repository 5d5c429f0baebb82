"""The project document and its writer: what was chosen, what was fitted, on which file.

Floats are written with Python's ``repr`` (which is what :mod:`json` does), so every fitted
parameter loads back bit for bit; non-finite numbers are refused.
"""

from __future__ import annotations

import datetime as dt
import json
import math
import os
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from .. import __version__
from ..engine import ColumnChoice, FitSettings, FittedPlan, ParamSet
from ..errors import ProjectError, ScalewrightError, WriteError
from ..io import ReadOptions, atomic_path, ensure_not_source

FORMAT_NAME = "scalewright-project"
FORMAT_VERSION = 1
SUFFIX = ".swproj"
# A project holds parameters, not data: anything this large is not one of ours.
MAX_PROJECT_BYTES = 200 * 1024 * 1024


def now_iso() -> str:
    """The current time in UTC as ISO 8601 text, to the second."""
    return dt.datetime.now(dt.UTC).isoformat(timespec="seconds")


@dataclass(frozen=True)
class FittedOn:
    """The data one column's parameters were fitted on: the file's size and SHA-256 as it
    was read, and the number of rows fitted."""

    size: int | None
    sha256: str | None
    rows: int


@dataclass
class Project:
    """Everything needed to re-apply or reverse a scaling, without the data itself."""

    source: Path | None = None  # absolute path of the data file the parameters were fitted on
    source_size: int | None = None
    source_sha256: str | None = None
    read_options: ReadOptions = field(default_factory=ReadOptions)
    columns: list[str] = field(default_factory=list)  # table labels in order
    headers: list[str] = field(default_factory=list)  # the file's own header text
    choices: dict[str, ColumnChoice] = field(default_factory=dict)  # label -> normalized choice
    settings: FitSettings = field(default_factory=FitSettings)
    plan: FittedPlan | None = None  # None until fitted
    created: str = field(default_factory=now_iso)
    modified: str = field(default_factory=now_iso)
    app_version: str = __version__
    # Columns whose parameters were fitted on other data than the project's source as
    # recorded above (saved parameters kept after the file changed, beside columns fitted
    # again): label -> what they were fitted on. Saved as the column's "fitted_on".
    column_fitted_on: dict[str, FittedOn] = field(default_factory=dict)
    # The file this project was loaded from (a .swproj or a scaled workbook), so that no
    # output is written over it. Not saved, and not part of what makes two projects equal.
    loaded_from: Path | None = field(default=None, compare=False)

    def fitted_on(self, label: str) -> FittedOn | None:
        """What the column's parameters were fitted on (None when it is not fitted)."""
        if self.plan is None or label not in self.plan.columns:
            return None
        own = self.column_fitted_on.get(label)
        if own is not None:
            return own
        return FittedOn(self.source_size, self.source_sha256, self.plan.n_rows)


# =========================================================================== writing


def _finite(value: Any, where: str) -> float:
    number = float(value)
    if not math.isfinite(number):
        raise ProjectError(where, "is not a finite number, so it cannot be saved")
    return number


def _plain(value: Any, where: str) -> Any:
    """A parameter or option value as a JSON-ready Python value (numbers kept exact)."""
    if isinstance(value, bool) or value is None or isinstance(value, str):
        return value
    if isinstance(value, list | tuple) or getattr(value, "ndim", 0) == 1:
        return [_plain(v, f"{where}[{i}]") for i, v in enumerate(value)]
    if hasattr(value, "dtype") and getattr(value.dtype, "kind", "") == "b":
        return bool(value)
    if isinstance(value, int) or (hasattr(value, "dtype") and value.dtype.kind in "iu"):
        return int(value)
    return _finite(value, where)


def _param_set_json(ps: ParamSet, where: str) -> dict[str, Any]:
    return {
        "params": {k: _plain(v, f"{where}.params.{k}") for k, v in ps.params.items()},
        "n": int(ps.n),
        "min": _finite(ps.min, f"{where}.min"),
        "max": _finite(ps.max, f"{where}.max"),
    }


def _column_order(project: Project) -> list[str]:
    labels = list(project.choices)
    if project.plan is not None:
        labels += [c for c in project.plan.columns if c not in project.choices]
    position = {c: i for i, c in enumerate(project.columns)}
    return sorted(labels, key=lambda c: (position.get(c, len(position)), labels.index(c)))


def project_to_dict(project: Project, project_path: Path | None = None) -> dict[str, Any]:
    """The JSON document as plain Python objects (see :func:`project_to_json`)."""
    source = None
    if project.source is not None:
        absolute = Path(os.path.abspath(project.source))
        relative = None
        if project_path is not None:
            try:
                folder = os.path.abspath(Path(project_path).parent)
                relative = Path(os.path.relpath(absolute, folder)).as_posix()
            except ValueError:  # another drive on Windows: no relative path exists
                relative = None
        source = {
            "relative": relative,
            "absolute": str(absolute),
            "size": project.source_size,
            "sha256": project.source_sha256,
        }
    plan = project.plan
    settings = plan.settings if plan is not None else project.settings
    fit_where = None
    if settings.fit_where is not None:
        fit_where = {"column": settings.fit_where[0], "value": settings.fit_where[1]}
    columns: dict[str, Any] = {}
    for label in _column_order(project):
        where = f"columns.{label}"
        fitted = plan.columns.get(label) if plan is not None else None
        choice = project.choices.get(label)
        if choice is None:
            assert fitted is not None
            choice = ColumnChoice(fitted.method, fitted.options)
        try:
            choice = choice.normalized()
        except ScalewrightError as err:
            raise ProjectError(where, str(err)) from None
        if fitted is not None and (
            fitted.method != choice.method or dict(fitted.options) != dict(choice.options)
        ):
            raise ProjectError(
                where, "the method or its options changed after fitting; fit again before saving"
            )
        if fitted is None and plan is not None and choice.method != "none":
            raise ProjectError(
                where, "has a method but no fitted parameters; fit again before saving"
            )
        entry: dict[str, Any] = {
            "method": choice.method,
            "options": {k: _plain(v, f"{where}.options.{k}") for k, v in choice.options.items()},
        }
        if fitted is not None:
            entry.update(_param_set_json(fitted.pooled, where))
            entry["n_missing"] = int(fitted.n_missing)
            entry["n_infinite"] = int(fitted.n_infinite)
            entry["groups"] = {
                str(key): _param_set_json(ps, f"{where}.groups.{key}")
                for key, ps in fitted.groups.items()
            }
            entry["warnings"] = [str(w) for w in fitted.warnings]
            own = project.column_fitted_on.get(label)
            if own is not None:
                entry["fitted_on"] = {"size": own.size, "sha256": own.sha256, "rows": own.rows}
        columns[label] = entry
    return {
        "format": FORMAT_NAME,
        "version": FORMAT_VERSION,
        "app_version": project.app_version,
        "created": project.created,
        "modified": project.modified,
        "source": source,
        "read_options": project.read_options.to_dict(),
        "table": {"columns": list(project.columns), "headers": list(project.headers)},
        "fit": {
            "fit_where": fit_where,
            "group_by": settings.group_by,
            "rows_fitted": int(plan.n_rows) if plan is not None else None,
        },
        "columns": columns,
    }


def project_to_json(project: Project, project_path: Path | None = None) -> str:
    """The project as indented UTF-8 JSON text; the source is stored relative to
    ``project_path``'s folder (when given) and as an absolute path."""
    doc = project_to_dict(project, project_path)
    return json.dumps(doc, indent=2, ensure_ascii=False, allow_nan=False) + "\n"


def save_project(project: Project, path: str | os.PathLike) -> None:
    """Write the project to ``path`` atomically, updating ``project.modified``.

    The text goes to a temporary file in the same folder which is then renamed over the
    target, so a failed save leaves any earlier file untouched. The data source is never
    overwritten, and the name must end in ``.swproj``.
    """
    path = Path(path)
    if path.suffix.lower() != SUFFIX:
        raise WriteError(path, f"a project file name must end in {SUFFIX}")
    if project.source is not None:
        ensure_not_source(path, project.source)
    modified_before = project.modified
    project.modified = now_iso()
    try:
        text = project_to_json(project, path)
    except BaseException:
        project.modified = modified_before
        raise
    with atomic_path(path) as tmp, open(tmp, "w", encoding="utf-8", newline="\n") as fh:
        fh.write(text)
        fh.flush()
        os.fsync(fh.fileno())
