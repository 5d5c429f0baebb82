"""What the apply and restore dialogs share: a file to read, a file to write, and the
background jobs in between.

A ``WritingDialog`` lays itself out as an introduction, the subclass's own boxes, a
"Save … as" box, a result line and a bottom strip with the job's progress bar and
Cancel, and the Save and Close buttons. Reading the chosen file and writing the output
run as background jobs; a cancelled or failed write leaves no file behind, and closing
while a job runs stops it first.

Subclasses fill in: ``_reader(path, sheet)`` (the read job), ``_take_read(result)``,
``_show_file()`` (redraw from what was read, then ``_update_state``), ``_data_problem()``,
``_update_state()``, ``_writer(target)`` (the write job) and ``_write_done(reports)``.
"""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path
from typing import Any

from PySide6.QtCore import Qt, QTimer, Signal
from PySide6.QtWidgets import (
    QDialog,
    QDialogButtonBox,
    QGroupBox,
    QHBoxLayout,
    QLabel,
    QLayout,
    QVBoxLayout,
    QWidget,
)

from .. import engine, tasks
from .. import io as swio
from ..errors import ScalewrightError
from . import jobs, theme
from .errors import details_of, plain_message
from .file_rows import FileRow, OutputRow
from .widgets import ERROR_STYLE, MUTED_STYLE, OK_STYLE, escape_html, message_label


def saved_parameters(fc) -> str:
    """A fitted column's pooled parameters in one line of plain words, e.g. 'mean 75.5,
    sd 36.7, sample sd (divides by n-1)': the method's own description."""
    return engine.get_method(fc.method).describe_params(fc.pooled.params)


def boxed(title: str, *widgets: QWidget) -> QGroupBox:
    """A titled box holding the widgets one under the other."""
    box = QGroupBox(title)
    layout = QVBoxLayout(box)
    for w in widgets:
        layout.addWidget(w)
    return box


class WritingDialog(QDialog):
    """Base of the apply and restore dialogs (see the module's description).

    ``start_write(title, func, target)`` runs ``func(progress, cancelled)``, which does the
    whole write and returns the column reports; ``_write_done(reports)`` is then called on
    the interface thread and ``fileWritten(path, reports)`` emitted.
    """

    fileWritten = Signal(object, object)  # (output path, list[ColumnReport])
    previewReady = Signal()  # what the chosen file holds is shown (or why it cannot be read)
    stopped_reading = "Reading was stopped; choose the file again."

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self._project = None
        self._table: swio.Table | None = None
        self._read_error = ""
        self._written: Path | None = None
        self._reports: list[engine.ColumnReport] = []
        self._close_when_idle = False
        self._reload_queued = False  # a read is being stopped to read the chosen file
        self.runner = jobs.JobRunner(self)
        self.runner.busy_changed.connect(self._on_busy)
        # Return in a path field must never press Cancel (which takes the focus, and with
        # it the default, when the fields are disabled at the start of a job).
        self.runner.cancel_button.setAutoDefault(False)
        self.result_label = QLabel()
        self.result_label.setObjectName("result")
        self.result_label.setWordWrap(True)
        self.result_label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        self.result_label.hide()
        self.reading_label: QLabel | None = None  # says "Reading …" while the file is read

    # ------------------------------------------------------------------ building

    def make_file_box(self, title: str, caption: str, tooltip: str) -> QGroupBox:
        """The box for the file to read: ``data_row`` and its inline problem ``data_error``."""
        self.data_row = FileRow(caption, tooltip)
        self.data_row.changed.connect(self._load_data)
        self.data_error = message_label()
        self.data_error.setObjectName("dataError")
        return boxed(title, self.data_row, self.data_error)

    def make_output_box(self, title: str, tooltip: str) -> QGroupBox:
        """The box for the file to write: ``output_row`` and its problem ``output_error``."""
        self.output_row = OutputRow(tooltip)
        self.output_row.changed.connect(self._update_state)
        self.output_error = message_label()
        self.output_error.setObjectName("outputError")
        return boxed(title, self.output_row, self.output_error)

    def lay_out(self, intro: str, save_text: str, *parts: QWidget | QLayout | tuple) -> None:
        """Introduction (under the window title in bold), ``parts`` (a ``(part, stretch)``
        pair gives a stretch), the result line, and the job strip with Save and Close."""
        heading = QLabel(
            f"<span style='font-size:12pt'><b>{escape_html(self.windowTitle())}</b></span>"
            f"<br>{intro}"
        )
        heading.setWordWrap(True)
        self.buttons = QDialogButtonBox()
        self.save_button = self.buttons.addButton(save_text, QDialogButtonBox.ButtonRole.ActionRole)
        self.save_button.setObjectName("save")
        self.save_button.setDefault(True)
        self.close_button = self.buttons.addButton(QDialogButtonBox.StandardButton.Close)
        self.close_button.setAutoDefault(False)
        self.close_button.setToolTip("Close this window (a file being written is stopped first).")
        self.save_button.clicked.connect(self.save)
        self.close_button.clicked.connect(self.reject)
        bottom = QHBoxLayout()
        bottom.setSpacing(theme.SPACING)
        bottom.addWidget(self.runner, 1)
        bottom.addWidget(self.buttons)

        layout = QVBoxLayout(self)
        layout.setContentsMargins(16, 16, 16, 16)
        layout.setSpacing(10)
        layout.addWidget(heading)
        for part in parts:
            part, stretch = part if isinstance(part, tuple) else (part, 0)
            if isinstance(part, QLayout):
                layout.addLayout(part, stretch)
            else:
                layout.addWidget(part, stretch)
        layout.addWidget(self.result_label)
        layout.addLayout(bottom)

    # ------------------------------------------------------------------ public API

    def set_data_file(self, path: str | Path, sheet: str | None = None) -> None:
        """Choose the file to read (as the Choose button does); it is read in the background."""
        self.data_row.set_path(path, sheet=sheet)

    def set_output(self, path: str | Path) -> None:
        self.output_row.set_path(path)

    def table_read(self) -> swio.Table | None:
        """The chosen file as read (None until read, or when unreadable)."""
        return self._table

    def data_problem(self) -> str:
        """Why the chosen file cannot be used ("" when it can)."""
        return self._data_problem()

    def output_problem(self) -> str:
        return self.output_error.toolTip() if self.output_error.isVisibleTo(self) else ""

    def can_save(self) -> bool:
        return self.save_button.isEnabled()

    def is_busy(self) -> bool:
        """True while a file is being read or written."""
        return self.runner.busy

    def written_path(self) -> Path | None:
        """The file written by this dialog, or None."""
        return self._written

    def reports(self) -> list[engine.ColumnReport]:
        """The per-column reports of the last successful write."""
        return list(self._reports)

    def cancel_job(self) -> None:
        self.runner.cancel()

    def result_text(self) -> str:
        return self.result_label.text() if self.result_label.isVisibleTo(self) else ""

    # ------------------------------------------------------------------ reading

    def _load_data(self) -> None:
        """Read the chosen file in the background (a read still running is stopped first)."""
        self._table = None
        self._read_error = ""
        self._forget_file()
        self.result_label.hide()
        path, sheet = self.data_row.path(), self.data_row.sheet()
        if path is None:
            self._show_file()
            return
        self.output_row.suggested_folder = path.parent
        if self.runner.busy:  # a read of another file is still running: stop it first
            self.cancel_job()
            if not self._reload_queued:  # one reload, of whatever is chosen by then
                self._reload_queued = True
                self.runner.job.ended.connect(self._reload)
            return
        if self.reading_label is not None:
            self.reading_label.setText(f"Reading {escape_html(path.name)}…")
        self.run_job(
            f"Reading {path.name}…",
            self._reader(path, sheet),
            self._data_read,
            self._data_failed,
            self._data_stopped,
        )

    def _reload(self) -> None:
        self._reload_queued = False
        self._load_data()

    def _data_read(self, result) -> None:
        self._take_read(result)
        self._show_file()
        self.previewReady.emit()

    def _data_failed(self, err: BaseException) -> None:
        self._read_error = plain_message(err)
        self._show_file()
        self.previewReady.emit()

    def _data_stopped(self) -> None:
        self._read_error = self.stopped_reading
        self._show_file()

    def output_check(self) -> str:
        """Why the output path cannot be written ("" when it can): what the tasks refuse
        (the file being read, the project's data file or the file its parameters come
        from, a format not written, a folder), or a folder that does not exist."""
        path = self.output_row.path()
        if path is None:
            return ""
        try:
            tasks.check_target(path, source=self.data_row.path(), project=self._project)
        except ScalewrightError as err:
            return str(err)
        if not path.parent.is_dir():
            return f"The folder {path.parent} does not exist."
        return ""

    # ------------------------------------------------------------------ writing

    def run_job(self, title: str, func, on_done, on_error=None, on_cancel=None):
        return self.runner.run(
            title, func, on_done, on_error or self._job_failed, on_cancel or (lambda: None)
        )

    def save(self) -> None:
        """Write the output in the background (does nothing unless Save is enabled)."""
        self._update_state()
        if not self.save_button.isEnabled():
            return
        target = self.output_row.path()
        self.start_write(f"Writing {target.name}…", self._writer(target), target)

    def start_write(
        self, title: str, func: Callable[[Callable, Callable], Any], target: Path
    ) -> None:
        self.result_label.hide()
        finished: dict[str, Any] = {}

        def job(progress, cancelled):
            finished["reports"] = func(progress, cancelled)
            return finished["reports"]

        def done(reports) -> None:
            self._written = target
            self._reports = list(reports or [])
            self._write_done(self._reports)
            self.fileWritten.emit(target, self.reports())

        def stopped() -> None:
            if "reports" in finished:  # Cancel came after the file was complete
                done(finished["reports"])
            else:
                self.show_result("Stopped. No file was written.", MUTED_STYLE)

        def failed(err: BaseException) -> None:
            self.show_result(
                f"⚠  Nothing was written. {plain_message(err)}",
                ERROR_STYLE,
                details="" if isinstance(err, ScalewrightError) else details_of(err),
            )

        self.run_job(title, job, done, failed, stopped)

    def show_written(self, text: str, lines: list[str]) -> None:
        """Say what was saved (details on hover), and turn Close into Done."""
        self.show_result(text, OK_STYLE, details="\n".join(lines))
        self.close_button.setText("Done")
        self.close_button.setToolTip("Close this window; the file has been saved.")

    def _job_failed(self, err: BaseException) -> None:
        self.show_result(
            f"⚠  {plain_message(err)}",
            ERROR_STYLE,
            details="" if isinstance(err, ScalewrightError) else details_of(err),
        )

    def show_result(self, text: str, style: str, *, details: str = "") -> None:
        self.result_label.setText(text)
        self.result_label.setStyleSheet(style)
        self.result_label.setToolTip(details or text)
        self.result_label.show()

    def _on_busy(self, busy: bool) -> None:
        self._set_busy(busy)
        if not busy and self._close_when_idle:
            # busy_changed comes before the job's own outcome: close after that has run.
            self._close_when_idle = False
            QTimer.singleShot(0, self.reject)

    # ------------------------------------------------------------------ for subclasses

    def _forget_file(self) -> None:
        """Drop what was shown for the previous file (beyond the table itself)."""

    def _reader(self, path: Path, sheet: str | None) -> Callable[[Callable, Callable], Any]:
        """The read job for the chosen file: ``func(progress, cancelled) -> result``."""
        raise NotImplementedError

    def _take_read(self, result) -> None:
        """Keep what the read job returned (sets ``self._table``)."""
        raise NotImplementedError

    def _show_file(self) -> None:
        """Show what was read (or why not), then update the state of the controls."""
        raise NotImplementedError

    def _data_problem(self) -> str:
        return self._read_error

    def _update_state(self) -> None:
        """Enable Save when everything is ready, and say what is missing otherwise."""

    def _writer(self, target: Path) -> Callable[[Callable, Callable], Any]:
        """The write job: ``func(progress, cancelled) -> list[ColumnReport]``."""
        raise NotImplementedError

    def _set_busy(self, busy: bool) -> None:
        """Enable or disable the controls while a job runs (subclasses extend)."""

    def _write_done(self, reports) -> None:
        """Show the summary of a successful write (subclasses override)."""

    # ------------------------------------------------------------------ closing

    def reject(self) -> None:
        if self.runner.busy:  # Escape or Close while working: stop first, close after
            self._close_when_idle = True
            self.cancel_job()
            return
        if self._written is not None:
            self.accept()
            return
        super().reject()

    def closeEvent(self, event) -> None:
        if self.runner.busy:
            self._close_when_idle = True
            self.cancel_job()
            event.ignore()
            return
        super().closeEvent(event)
