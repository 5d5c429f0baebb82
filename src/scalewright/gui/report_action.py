"""File > Report…: write a report of the window's project as a web page or a PDF.

The project is the window's current choices with their fitted values (or, with no data
open, a project or scaled workbook the user picks), as for Apply and Restore. The report's
content is gathered in the background (the open table serves for the histograms); the file
is then written on the interface thread, because Qt prints the PDF there.
"""

from __future__ import annotations

from pathlib import Path

from ..errors import ScalewrightError
from ..report import REPORT_SUFFIXES, build_report, check_report_target, save_report

REPORT_FILTER = "Web page (*.html);;PDF document (*.pdf)"


def report_from_window(window) -> None:
    """Ask for the project (when no data is open) and a file name, then write the report."""
    window.current_project(lambda project: ask_and_write(window, project))


def ask_and_write(window, project):
    """Ask where to save the report of ``project``; returns the job writing it, or None."""
    stem = Path(project.source).stem if project.source is not None else "scalewright"
    path = window.ask_save_path("Save report", REPORT_FILTER, f"{stem}_report.html")
    if not path:
        return None
    return write(window, project, Path(path))


def write(window, project, target: Path):
    """Write the report of ``project`` to ``target`` (``.html`` added when it has no report
    ending); returns the background job, or None when the name is refused."""
    if target.suffix.lower() not in REPORT_SUFFIXES:
        target = target.with_name(target.name + ".html")
    try:
        check_report_target(target, project)
    except ScalewrightError as err:
        window.show_message(err)
        return None
    from_window = project.loaded_from is None  # the window's own choices and open table
    table = window.session.table if from_window else None
    project_path = window.session.project_path if from_window else project.loaded_from

    def work(progress, cancelled):
        return build_report(
            project, project_path, table=table, progress=progress, cancelled=cancelled
        )

    def done(report) -> None:
        try:
            save_report(report, target)
        except ScalewrightError as err:
            window.show_message(err)
            return
        message = f"Wrote the report {target.name}"
        if report.figures_missing:
            message += " without histograms: " + report.figures_missing
        window.notify(message)
        window.file_written.emit(target)

    return window.jobs.run(
        f"Writing the report {target.name}",
        work,
        done,
        window.show_message,
        lambda: window.notify("The report was stopped; no file was written"),
    )
