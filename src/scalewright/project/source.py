"""Finding the data file a project was fitted on, and whether it changed since."""

from __future__ import annotations

import os
from dataclasses import dataclass
from pathlib import Path

from ..io import fingerprint
from .document import Project


@dataclass(frozen=True)
class SourceCheck:
    """Where the data a project was fitted on is now, and whether it changed."""

    saved: Path | None  # the path the project holds
    path: Path | None  # where the file is now; None when it was not found
    moved: bool = False  # found beside the project file rather than at the saved path
    changed: bool = False  # size or SHA-256 differ from when the parameters were fitted

    @property
    def found(self) -> bool:
        return self.path is not None

    @property
    def message(self) -> str:
        if self.saved is None:
            return "the project does not name a data file"
        if self.path is None:
            return f"the data file {self.saved} was not found (nor beside the project file)"
        parts = [f"data file {self.path}"]
        if self.moved:
            parts.append(f"found beside the project file (it was saved as {self.saved})")
        if self.changed:
            parts.append("it has changed since the parameters were fitted")
        return "; ".join(parts)


def locate_source(project: Project, project_path: str | os.PathLike | None) -> SourceCheck:
    """Find the project's data file: the saved path, else a file of that name beside the
    project file. ``changed`` compares size and then SHA-256 with the saved fingerprint."""
    saved = project.source
    if saved is None:
        return SourceCheck(None, None)
    found: Path | None = None
    moved = False
    if saved.is_file():
        found = saved
    elif project_path is not None:
        beside = Path(project_path).absolute().parent / saved.name
        if beside.is_file():
            found, moved = beside, True
    if found is None:
        return SourceCheck(saved, None)
    changed = False
    if project.source_size is not None or project.source_sha256 is not None:
        size = found.stat().st_size
        if project.source_size is not None and size != project.source_size:
            changed = True
        elif project.source_sha256 is not None:
            changed = fingerprint(found)[1] != project.source_sha256
    return SourceCheck(saved, found, moved, changed)
