"""Reading a project: parse the JSON strictly, then one loader per format version.

``LOADERS`` has one loader per version the program can build a :class:`Project` from, and
``MIGRATIONS`` upgrades an older document one version at a time (``n -> n + 1``), so a
future version adds one migration and one loader. Every version has committed fixture
files in ``tests/project/fixtures`` that must keep loading.
"""

from __future__ import annotations

import json
import os
from collections.abc import Callable
from pathlib import Path
from typing import Any

from ..errors import ProjectError, ReadError
from . import v1
from .document import FORMAT_NAME, FORMAT_VERSION, MAX_PROJECT_BYTES, Project
from .fields import Invalid

LOADERS: dict[int, Callable[[dict[str, Any]], tuple[Project, str | None]]] = {1: v1.load}
# version n -> function turning a version-n document into a version n+1 document.
MIGRATIONS: dict[int, Callable[[dict[str, Any]], dict[str, Any]]] = {}


def _reject_constant(name: str) -> float:
    raise ValueError(f"'{name}' is not a number a project file may contain")


def _no_duplicates(pairs: list[tuple[str, Any]]) -> dict[str, Any]:
    out: dict[str, Any] = {}
    for key, value in pairs:
        if key in out:
            raise ValueError(f"the key '{key}' appears twice in one object")
        out[key] = value
    return out


def _parse(text: str, where: str) -> Any:
    try:
        return json.loads(text, parse_constant=_reject_constant, object_pairs_hook=_no_duplicates)
    except json.JSONDecodeError as err:
        raise ProjectError(
            where,
            f"is not a Scalewright project file (not valid JSON: {err.msg} at line "
            f"{err.lineno}, column {err.colno})",
        ) from None
    except (ValueError, RecursionError) as err:
        raise ProjectError(where, f"is not a Scalewright project file ({err})") from None


def project_from_json(text: str, where: str = "project") -> Project:
    """Build a Project from JSON text, validating every field.

    ``where`` names the file in messages: ``"plan.swproj: columns.a.params.sd: must be a
    number"``. The source path is taken as stored (absolute); :func:`load_project` resolves
    the relative path against the project's folder.
    """
    doc = _parse(text, where)
    project, _relative = _from_document(doc, where)
    return project


def _from_document(doc: Any, where: str) -> tuple[Project, str | None]:
    if not isinstance(doc, dict):
        raise ProjectError(where, "is not a Scalewright project file (not a JSON object)")
    name = doc.get("format")
    if name != FORMAT_NAME:
        if name is None:
            raise ProjectError(where, "is not a Scalewright project file (no 'format' field)")
        raise ProjectError(
            f"{where}: format", f"is {name!r}, not {FORMAT_NAME!r}: not a Scalewright project file"
        )
    version = doc.get("version")
    if isinstance(version, bool) or not isinstance(version, int):
        raise ProjectError(f"{where}: version", "must be a whole number")
    if version > FORMAT_VERSION:
        raise ProjectError(
            where,
            f"made by a newer Scalewright (format version {version}); "
            f"this one reads up to {FORMAT_VERSION}",
        )
    if version < 1 or (version not in LOADERS and version not in MIGRATIONS):
        raise ProjectError(f"{where}: version", f"{version} is not a known format version")
    try:
        while version not in LOADERS:
            doc = MIGRATIONS[version](doc)
            version += 1
        return LOADERS[version](doc)
    except Invalid as err:
        raise ProjectError(f"{where}: {err.path}" if where else err.path, err.message) from None


def load_project(path: str | os.PathLike) -> Project:
    """Read and validate a ``.swproj`` file.

    The source is the stored relative path resolved against the project's folder when a
    file is there (project and data moved together), otherwise the stored absolute path.
    """
    path = Path(path)
    try:
        size = path.stat().st_size
        if size > MAX_PROJECT_BYTES:
            raise ProjectError(path, "is too large to be a Scalewright project file")
        raw = path.read_bytes()
    except FileNotFoundError:
        raise ReadError(path, "there is no such file") from None
    except IsADirectoryError:
        raise ReadError(path, "is a folder, not a project file") from None
    except OSError as err:
        raise ReadError(path, f"cannot be read ({err.strerror or err})") from None
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError:
        raise ProjectError(path, "is not a Scalewright project file (not UTF-8 text)") from None
    doc = _parse(text, str(path))
    project, relative = _from_document(doc, str(path))
    if project.source is not None and relative is not None:
        beside = Path(os.path.normpath(path.parent.absolute() / relative))
        if beside.is_file():
            project.source = beside
    project.loaded_from = path
    return project
