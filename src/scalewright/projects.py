"""Opening a project and building one to save: the steps both faces take.

The window and the command line differ only in how they ask and how they show; what a
project file is called, where its data file is, whether saved parameters are kept or
fitted again, and what a saved project records of each column are decided here, without
Qt. The window passes its ``Session`` (from ``scalewright.session``) where one is needed.
"""

from __future__ import annotations

import dataclasses
import os
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from .engine import ColumnChoice, FitSettings, FittedColumn
from .errors import WriteError
from .io import ensure_not_source
from .project import SUFFIX, FittedOn, Project, SourceCheck, locate_source
from .tasks import fit_project

PROJECT_SUFFIX = SUFFIX

# ------------------------------------------------------------------ the file name rule


def is_project_file(path: str | os.PathLike) -> bool:
    """Whether the name is a project file's (by its ending)."""
    return Path(path).suffix.lower() == PROJECT_SUFFIX


def with_project_suffix(path: str | os.PathLike) -> Path:
    """The name a save dialog's answer stands for: ``.swproj`` added when missing."""
    path = Path(path)
    return path if is_project_file(path) else path.with_name(path.name + PROJECT_SUFFIX)


def suggested_project_name(data_file: str | os.PathLike) -> str:
    """The project name offered for a data file: its name with ``.swproj``."""
    return Path(data_file).with_suffix(PROJECT_SUFFIX).name


def check_project_target(path: str | os.PathLike, data_file: str | os.PathLike | None) -> Path:
    """The path a project may be written to given on a command line (where nothing is
    added to a name), or :class:`WriteError` saying why not."""
    path = Path(path)
    if not is_project_file(path):
        raise WriteError(path, f"a project file name must end in {PROJECT_SUFFIX}")
    ensure_not_source(path, data_file)
    if not path.absolute().parent.is_dir():
        raise WriteError(path, "the folder does not exist")
    return path


# ------------------------------------------------------------------ opening


def find_source(project: Project, project_path: Path, chosen: Path | None = None) -> SourceCheck:
    """Where the project's data file is now and whether it changed (``chosen`` by the
    user when it was not found: then compared with the saved size and SHA-256 like the
    file at its old place)."""
    if chosen is None:
        return locate_source(project, project_path)
    return locate_source(dataclasses.replace(project, source=chosen), None)


@dataclass(frozen=True)
class Opening:
    """What to show for a project opened on a table: the arguments for
    ``Session.load_table`` and what to tell the user."""

    choices: dict[str, ColumnChoice]
    settings: FitSettings
    fitted: dict[str, FittedColumn] | None  # saved parameters to use, or None: fit again
    fitted_on: dict[str, FittedOn]  # what the kept parameters were fitted on
    dirty: bool  # the data file changed or moved: the project is worth saving again
    notes: list[str]

    @property
    def message(self) -> str | None:
        """The sentence to show after opening, or None when there is nothing to say."""
        return "Opened the project; " + "; ".join(self.notes) + "." if self.notes else None


def open_on(
    project: Project, check: SourceCheck, table: Any, keep_saved: Callable[[str], bool]
) -> Opening:
    """Decide how to show ``project`` on ``table`` (read from ``check.path``).

    The saved parameters are used when the data file is as it was when they were fitted;
    when it changed, ``keep_saved(file name)`` asks whether to keep them or fit again.
    Kept parameters stay recorded as fitted on the file as it was.
    """
    source = Path(table.source)
    keep = project.plan is not None and (not check.changed or keep_saved(source.name))
    fitted_on: dict[str, FittedOn] = {}
    if keep:
        assert project.plan is not None
        if check.changed:
            fitted_on = {
                label: on
                for label in project.plan.columns
                if (on := project.fitted_on(label)) is not None
            }
        else:  # the file is as saved: only columns kept from an earlier file say so
            fitted_on = dict(project.column_fitted_on)
    notes = []
    if check.changed:
        notes.append(
            "the data file has changed since the project was saved; "
            + (
                "the saved parameters were kept"
                if keep
                else "the parameters were fitted again on the current data"
            )
        )
    missing = [c for c in project.choices if c not in table.data.columns]
    if missing:
        notes.append("not in the data any more: " + ", ".join(missing))
    return Opening(
        choices=dict(project.choices),
        settings=project.settings,
        fitted=dict(project.plan.columns) if keep and project.plan is not None else None,
        fitted_on=fitted_on,
        dirty=check.changed or source != project.source,
        notes=notes,
    )


# ------------------------------------------------------------------ saving


def why_not_ready(session: Any) -> str | None:
    """The one check before saving, exporting or applying the session's choices: the
    first column whose choice cannot be fitted, with the reason (None: all fitted)."""
    return next(iter(session.problems().values()), None)


def project_builder(session: Any) -> Callable[[], Project]:
    """A function recording the session's choices and fitted values as a Project.

    The session's fitted columns are used as they are (no fitting again), so saved
    parameters the user chose to keep are what gets written. Each column records what it
    was fitted on: when every column's parameters were kept from one saved file, the
    project names that file (its size, SHA-256 and row count) as before; otherwise the
    project names the data as read now, and each kept column its own file.
    Call it after ``why_not_ready`` found nothing; the function may run in a job.
    """
    table, choices, settings = session.table, session.chosen(), session.settings
    plan = session.plan()  # cached fits
    kept = {label: on for label in plan.columns if (on := session.fitted_on(label)) is not None}
    records = set(kept.values())
    if kept and len(kept) == len(plan.columns) and len(records) == 1:
        (saved,) = records
        plan = dataclasses.replace(plan, n_rows=saved.rows)
        fingerprint = (saved.size, saved.sha256)
        return lambda: fit_project(table, choices, settings, plan=plan, fingerprint=fingerprint)

    def build() -> Project:
        project = fit_project(table, choices, settings, plan=plan)
        here = FittedOn(project.source_size, project.source_sha256, plan.n_rows)
        project.column_fitted_on = _differing(kept, here)
        return project

    return build


def _differing(kept: Mapping[str, FittedOn], here: FittedOn) -> dict[str, FittedOn]:
    return {label: on for label, on in kept.items() if on != here}
