"""A report of a project for colleagues and auditors: one HTML file, or a PDF.

``write_report(project, target)`` gathers what the report says (:mod:`.content`), checks the
target as every output is checked (never the data file or the project's own file), and
writes it atomically: HTML with inline SVG images (:mod:`.html`, :mod:`.svg`, no Qt), or a
PDF printed by Qt (:mod:`.pdf`, imported only for a ``.pdf`` target).
"""

from __future__ import annotations

import os
from pathlib import Path

from ..io import atomic_path
from ..project import Project
from ..tasks import check_target
from .content import Report, build_report
from .html import render_html

REPORT_SUFFIXES = (".html", ".htm", ".pdf")

__all__ = [
    "REPORT_SUFFIXES",
    "Report",
    "build_report",
    "check_report_target",
    "render_html",
    "save_report",
    "write_report",
]


def check_report_target(target: str | os.PathLike, project: Project | None = None) -> Path:
    """The path a report may be written to, or WriteError saying why not."""
    return check_target(target, project=project, formats=REPORT_SUFFIXES)


def save_report(report: Report, target: str | os.PathLike) -> None:
    """Write a built report as HTML or PDF, by the target's extension."""
    target = Path(target)
    if target.suffix.lower() == ".pdf":
        from .pdf import write_pdf

        write_pdf(report, target)
        return
    text = render_html(report)
    with atomic_path(target) as tmp, open(tmp, "w", encoding="utf-8", newline="\n") as fh:
        fh.write(text)
        fh.flush()
        os.fsync(fh.fileno())


def write_report(
    project: Project,
    target: str | os.PathLike,
    *,
    project_path: str | os.PathLike | None = None,
    table=None,
    progress=None,
    cancelled=None,
) -> Report:
    """Build the report of ``project`` and write it to ``target`` (.html or .pdf).

    ``project_path`` is the file the project came from (to find a moved data file beside
    it); ``table``, when given, is the data already open (see :func:`build_report`).
    """
    target = check_report_target(target, project)
    if project_path is None:
        project_path = project.loaded_from
    report = build_report(
        project, project_path, table=table, progress=progress, cancelled=cancelled
    )
    save_report(report, target)
    return report
