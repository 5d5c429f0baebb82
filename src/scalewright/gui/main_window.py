"""The main window: column list, method panel, linked histograms and the data preview.

Menus, toolbar and shortcuts reach every file operation; long work runs in the job strip
of the status bar. Everything the window does to data goes through ``io``, ``tasks`` and
``project`` — the same calls the command line makes.

Entry points for the dialogs (kept as methods so that tests and other modules can call
them): ``open_import_dialog(path)``, ``open_apply_dialog()``, ``open_restore_dialog()``.
Questions to the user go through ``ask_open_path``, ``ask_save_path`` and
``ask_unsaved_changes``, which tests replace.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

from PySide6.QtCore import QByteArray, QSettings, Qt, QTimer, QUrl, Signal
from PySide6.QtGui import (
    QAction,
    QCloseEvent,
    QDesktopServices,
    QIcon,
    QKeySequence,
    QUndoStack,
)
from PySide6.QtWidgets import (
    QApplication,
    QDockWidget,
    QLabel,
    QMainWindow,
    QMessageBox,
    QPushButton,
    QScrollArea,
    QSplitter,
    QStyle,
    QUndoView,
    QVBoxLayout,
    QWidget,
)

from .. import io as swio
from .. import projects, tasks
from ..errors import Cancelled, ScalewrightError
from ..guide import CAUTION_KEEP_PROJECT
from ..project import load_project, save_project
from ..projects import PROJECT_SUFFIX
from ..session import Session, column_facts, large_file
from . import commands, file_dialogs, kind_correction, report_action, theme
from .apply_dialog import ApplyDialog
from .column_list import ColumnList
from .errors import show_error
from .file_rows import READ_FILTER, WRITE_FILTER, WRITE_TYPES, with_chosen_type
from .histograms import HistogramPanel
from .import_dialog import ImportDialog
from .jobs import JobRunner, QuickCalls
from .method_panel import MethodPanel
from .preview import PreviewPanel
from .restore_dialog import RestoreDialog

READ_SUFFIXES = tuple(swio.SUPPORTED_READ)
DATA_FILTER = READ_FILTER
PROJECT_FILTER = f"Scalewright projects (*{PROJECT_SUFFIX})"
PROJECT_OR_WORKBOOK_FILTER = f"Projects or scaled workbooks (*{PROJECT_SUFFIX} *.xlsx)"
EXPORT_FILTER = WRITE_FILTER.replace("Workbook (", "Workbook with parameters (")
MAX_RECENT = 8


class MainWindow(QMainWindow):
    """The Scalewright window over one ``Session``."""

    file_written = Signal(object)  # Path of a project or data file the window wrote

    def __init__(
        self,
        session: Session | None = None,
        settings: QSettings | None = None,
        parent: QWidget | None = None,
    ) -> None:
        super().__init__(parent)
        self.session = session or Session()
        # Slow fits of large columns run off the interface thread (see session/fits.py).
        self.fits = QuickCalls(self)
        if self.session.fit_runner is None:
            self.session.fit_runner = self.fits
        self.settings = settings or QSettings()
        self.stack = QUndoStack(self)
        self.last_message: QMessageBox | None = None
        self.import_dialog = None
        self.apply_dialog = None
        self.restore_dialog = None
        self.setAcceptDrops(True)
        self.setWindowIcon(app_icon())
        self._fit_to_screen(1360, 860)

        self.columns = ColumnList(self.session)
        self.columns.kind_chosen.connect(self.correct_kind)
        self.method_panel = MethodPanel(self.session, self.stack)
        self.histograms = HistogramPanel(self.session)
        self.preview = PreviewPanel(self.session)

        left = QWidget()
        lay = QVBoxLayout(left)
        lay.setContentsMargins(theme.MARGIN, theme.MARGIN, 0, theme.MARGIN)
        title = QLabel("Columns")
        title.setProperty("role", "heading")
        lay.addWidget(title)
        lay.addWidget(self.columns, 1)
        self.columns_hint = QLabel(
            "Click a column to choose how to scale it; Ctrl+click or Shift+click to choose "
            "several at once. Greyed columns cannot be scaled: hover them to see why, and "
            "right-click one to read it as another kind (number, identifier, text, date)."
        )
        self.columns_hint.setWordWrap(True)
        self.columns_hint.setProperty("role", "hint")
        lay.addWidget(self.columns_hint)
        self.centre = QSplitter(Qt.Orientation.Vertical)
        self.centre.addWidget(self.histograms)
        self.centre.addWidget(self.preview)
        self.centre.setStretchFactor(0, 3)
        self.centre.setStretchFactor(1, 2)
        self.centre.setSizes([560, 260])
        self.centre.setChildrenCollapsible(False)
        self.main_split = QSplitter(Qt.Orientation.Horizontal)
        self.main_split.addWidget(left)
        self.main_split.addWidget(self.centre)
        # The method panel scrolls on its own: what it shows (an options box or not, a long
        # fitted line) then never changes the width of the centre, and it fits low screens.
        self.method_scroll = QScrollArea()
        self.method_scroll.setWidget(self.method_panel)
        self.method_scroll.setWidgetResizable(True)
        self.method_scroll.setFrameShape(QScrollArea.Shape.NoFrame)
        self.method_scroll.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        self.method_scroll.setMinimumWidth(300)
        self.main_split.addWidget(self.method_scroll)
        self.main_split.setStretchFactor(0, 0)
        self.main_split.setStretchFactor(1, 1)
        self.main_split.setStretchFactor(2, 0)
        self.main_split.setSizes([320, 700, 330])
        self.main_split.setChildrenCollapsible(False)
        self.setCentralWidget(self.main_split)

        self.history = QDockWidget("Changes", self)
        self.history.setObjectName("history")
        view = QUndoView(self.stack)
        view.setEmptyLabel("(as opened)")
        view.setToolTip("Every change to a choice; click a line to go back to it")
        self.history.setWidget(view)
        self.addDockWidget(Qt.DockWidgetArea.RightDockWidgetArea, self.history)
        # Narrow when shown, so that opening it leaves the histograms room for their titles.
        self.resizeDocks([self.history], [200], Qt.Orientation.Horizontal)
        self.history.hide()

        self.jobs = JobRunner(self)
        # After a file is written, a button offers its folder (hidden again after a while).
        self.written_folder: Path | None = None
        self.open_folder_button = QPushButton("Open folder")
        self.open_folder_button.setIcon(
            self.style().standardIcon(QStyle.StandardPixmap.SP_DirOpenIcon)
        )
        self.open_folder_button.setFlat(True)
        self.open_folder_button.clicked.connect(self.open_written_folder)
        self.open_folder_button.hide()
        self._folder_timer = QTimer(self)
        self._folder_timer.setSingleShot(True)
        self._folder_timer.timeout.connect(self.open_folder_button.hide)
        self.statusBar().addPermanentWidget(self.open_folder_button)
        self.statusBar().addPermanentWidget(self.jobs)
        self.jobs.busy_changed.connect(self._on_busy)

        self._make_actions()
        self._make_menus()
        self._make_toolbar()

        self.session.dirty_changed.connect(self._update_title)
        self.session.project_path_changed.connect(lambda _p: self._update_title())
        self.session.table_loaded.connect(self._on_table)
        self.file_written.connect(self.offer_folder)
        # Writing waits for fits still running in the background (see _update_actions).
        self.session.fitted.connect(self._update_actions)
        self.session.choices_changed.connect(self._update_actions)
        self.session.settings_changed.connect(self._update_actions)
        self.stack.cleanChanged.connect(self._on_clean)
        self._update_title()
        self._on_table()
        self._restore_geometry()

    # ================================================================== building

    def _action(self, text, slot, shortcut=None, tip="", icon=None) -> QAction:
        a = QAction(text, self)
        if shortcut is not None:
            a.setShortcut(QKeySequence(shortcut))
        a.setToolTip(tip or text.replace("…", ""))
        a.setStatusTip(tip or text.replace("…", ""))
        if isinstance(icon, str):
            a.setIcon(drawn_icon(icon))
        elif icon is not None:
            a.setIcon(self.style().standardIcon(icon))
        a.triggered.connect(lambda _checked=False: slot())
        return a

    def _make_actions(self) -> None:
        sp = QStyle.StandardPixmap
        self.act_open = self._action(
            "Open data…",
            self.choose_and_open_data,
            QKeySequence.StandardKey.Open,
            "Open a CSV or spreadsheet file",
            "open-data",
        )
        self.act_open_project = self._action(
            "Open project…",
            self.choose_and_open_project,
            "Ctrl+Shift+O",
            "Open a saved Scalewright project and its data",
            "open-project",
        )
        self.act_save = self._action(
            "Save project",
            self.save,
            QKeySequence.StandardKey.Save,
            "Save the choices and fitted values as a project file",
            sp.SP_DialogSaveButton,
        )
        self.act_save_as = self._action(
            "Save project as…",
            self.save_as,
            "Ctrl+Shift+S",
            "Save the project under a new name",
        )
        self.act_export = self._action(
            "Export scaled data…",
            self.choose_and_export,
            "Ctrl+E",
            "Write the scaled table as a workbook (with a parameters sheet) or as CSV",
            "export",
        )
        self.act_apply = self._action(
            "Apply to another file…",
            self.open_apply_dialog,
            "Ctrl+Shift+A",
            "Scale another file (for example next season's) with these same fitted values",
            "apply",
        )
        self.act_restore = self._action(
            "Restore original units…",
            self.open_restore_dialog,
            "Ctrl+Shift+R",
            "Turn scaled values (for example a model's predictions) back into original units",
            "restore",
        )
        self.act_copy_sql = self._action(
            "Copy as SQL…",
            self.open_sql_dialog,
            "Ctrl+Shift+C",
            "The query that scales (or turns back) a table with these fitted values in a "
            "data platform, to copy",
        )
        self.act_report = self._action(
            "Report…",
            lambda: report_action.report_from_window(self),
            None,
            "Write a report of the project (web page or PDF) for colleagues and auditors",
        )
        self.act_quit = self._action("Quit", self.close, QKeySequence.StandardKey.Quit)
        self.act_undo = self.stack.createUndoAction(self, "Undo")
        self.act_undo.setShortcut(QKeySequence.StandardKey.Undo)
        self.act_undo.setIcon(self.style().standardIcon(sp.SP_ArrowBack))
        self.act_undo.setToolTip("Undo the last change to a choice")
        self.act_redo = self.stack.createRedoAction(self, "Redo")
        self.act_redo.setShortcut(QKeySequence.StandardKey.Redo)
        self.act_redo.setIcon(self.style().standardIcon(sp.SP_ArrowForward))
        self.act_redo.setToolTip("Redo the change you undid")
        self.act_suggest = self._action(
            "Suggest for selected columns",
            self.method_panel.suggest,
            "Ctrl+G",
            "Choose a method for the selected columns from the shape of their values",
        )
        self.act_leave = self._action(
            "Leave selected columns as they are",
            self.leave_selected,
            "Ctrl+0",
            "Set the selected columns back to 'leave as is'",
        )
        self.act_select_all = self._action(
            "Select all number columns",
            self.select_all_numbers,
            "Ctrl+Shift+L",
            "Select every column that can be scaled",
        )
        self.act_scaled_preview = self._switch(
            "Show scaled values in the data",
            self.preview.set_show_scaled,
            "Ctrl+T",
            "Switch the data table between original and scaled values",
        )
        self.preview.mode.currentIndexChanged.connect(
            lambda i: self._set_checked(self.act_scaled_preview, i == 1)
        )
        self.act_range = self._switch(
            "Select a range on the histograms",
            self.histograms.show_range,
            "Ctrl+R",
            "Show a range you can drag on either histogram",
        )
        self.histograms.range_button.toggled.connect(
            lambda on: self._set_checked(self.act_range, on)
        )
        self.act_history = self.history.toggleViewAction()
        self.act_history.setText("List of changes")
        self.act_history.setToolTip("Show every change made, to go back to any of them")
        self.act_help = self._action(
            "Method guide",
            self.show_methods_help,
            QKeySequence.StandardKey.HelpContents,
            "What each scaling method does, when to use it, what it assumes, how it reverses",
        )
        self.act_about = self._action("About Scalewright", self.show_about)

    def _switch(self, text, on_toggle, shortcut, tip) -> QAction:
        """A checkable action (menu item with a tick) that calls ``on_toggle(checked)``."""
        a = self._action(text, lambda: None, shortcut, tip)
        a.setCheckable(True)
        a.toggled.connect(on_toggle)
        return a

    @staticmethod
    def _set_checked(action: QAction, on: bool) -> None:
        if action.isChecked() != on:
            action.blockSignals(True)
            action.setChecked(on)
            action.blockSignals(False)

    def _make_menus(self) -> None:
        mb = self.menuBar()
        m = mb.addMenu("&File")
        m.addActions([self.act_open, self.act_open_project])
        self.recent_menu = m.addMenu("Open recent")
        self.recent_menu.setToolTipsVisible(True)
        self.recent_menu.aboutToShow.connect(self._fill_recent)
        m.addSeparator()
        m.addActions([self.act_save, self.act_save_as])
        m.addSeparator()
        m.addActions(
            [self.act_export, self.act_apply, self.act_restore, self.act_copy_sql, self.act_report]
        )
        m.addSeparator()
        m.addAction(self.act_quit)
        m = mb.addMenu("&Edit")
        m.addActions([self.act_undo, self.act_redo])
        m.addSeparator()
        m.addActions([self.act_suggest, self.act_leave, self.act_select_all])
        m = mb.addMenu("&View")
        m.addActions([self.act_scaled_preview, self.act_range, self.act_history])
        m = mb.addMenu("&Help")
        m.addActions([self.act_help, self.act_about])
        self._fill_recent()

    def _make_toolbar(self) -> None:
        tb = self.addToolBar("Main")
        tb.setObjectName("main_toolbar")
        tb.setMovable(False)
        tb.setToolButtonStyle(Qt.ToolButtonStyle.ToolButtonTextBesideIcon)
        tb.addActions([self.act_open, self.act_open_project, self.act_save])
        tb.addSeparator()
        # Toolbar buttons keep short names; the menu's Undo/Redo say what they would undo.
        sp = QStyle.StandardPixmap
        self.tb_undo = self._action(
            "Undo", self.stack.undo, None, "Undo the last change to a choice", sp.SP_ArrowBack
        )
        self.tb_redo = self._action(
            "Redo", self.stack.redo, None, "Redo the change you undid", sp.SP_ArrowForward
        )
        self.tb_undo.setEnabled(False)
        self.tb_redo.setEnabled(False)
        self.stack.canUndoChanged.connect(self.tb_undo.setEnabled)
        self.stack.canRedoChanged.connect(self.tb_redo.setEnabled)
        self.stack.undoTextChanged.connect(
            lambda t: self.tb_undo.setToolTip(f"Undo: {t}" if t else "Undo the last change")
        )
        self.stack.redoTextChanged.connect(
            lambda t: self.tb_redo.setToolTip(f"Redo: {t}" if t else "Redo the change you undid")
        )
        tb.addActions([self.tb_undo, self.tb_redo])
        tb.addSeparator()
        tb.addActions([self.act_export, self.act_apply, self.act_restore])

    # ================================================================== state display

    def _update_title(self, *_args) -> None:
        s = self.session
        if s.project_path is not None:
            name = s.project_path.name
        elif s.table is not None:
            name = Path(s.table.source).name
        else:
            name = "no data open"
        self.setWindowTitle(f"{name}[*] — Scalewright")
        self.setWindowModified(s.dirty)

    def _on_clean(self, clean: bool) -> None:
        if clean:
            self.session.set_dirty(False)

    def _on_table(self) -> None:
        self._update_actions()
        self._update_title()

    def _on_busy(self, busy: bool) -> None:
        for a in (
            self.act_open,
            self.act_open_project,
            self.recent_menu.menuAction(),
        ):
            a.setEnabled(not busy)
        self._update_actions()

    def _update_actions(self, *_args) -> None:
        """Enable what can be done now: nothing that writes while a job runs or while a
        column is still being fitted in the background."""
        has = self.session.table is not None
        idle = not self.jobs.busy
        fitted = not self.session.fits_pending
        for a in (self.act_save, self.act_save_as, self.act_export, self.act_copy_sql):
            a.setEnabled(has and idle and fitted)
        # Exporting writes the loaded rows: of a sampled file, only the sample. The whole
        # file is scaled with "Apply to another file" (or `scalewright apply`) instead.
        self.act_export.setEnabled(self.act_export.isEnabled() and self.session.sample is None)
        for a in (self.act_suggest, self.act_leave, self.act_select_all):
            a.setEnabled(has and idle)
        for a in (self.act_apply, self.act_restore, self.act_report):
            a.setEnabled(idle and fitted)

    def _ready_to_write(self, refusal: str = "", *, wait: bool = False) -> bool:
        """The one check before saving, exporting or applying: every chosen column is
        fitted (``wait`` lets background fits land first; otherwise they refuse quietly),
        and none failed (the reason is shown after ``refusal``)."""
        if self.session.fits_pending:
            if not wait:
                self._still_fitting()
                return False
            self._wait_for_fits()
        problem = projects.why_not_ready(self.session)
        if problem is not None:
            self.show_message(refusal + problem)
            return False
        return True

    def _still_fitting(self) -> bool:
        """True (and says so) while a column is still being fitted in the background."""
        if self.session.fits_pending:
            self.notify("A column is still being fitted; try again when it is done")
            return True
        return False

    def show_message(self, err: BaseException | str, details: str | None = None) -> QMessageBox:
        """A short plain message (details on demand); the window keeps everything as it was."""
        self.last_message = show_error(self, err, details=details)
        return self.last_message

    def notify(self, text: str, msecs: int = 8000) -> None:
        self.statusBar().showMessage(text, msecs)

    # The opener of folders; tests replace it.
    open_url = staticmethod(QDesktopServices.openUrl)

    def offer_folder(self, path: str | Path) -> None:
        """After a save, an export, an apply or a restore: offer the written file's folder."""
        self.written_folder = Path(path).absolute().parent
        self.open_folder_button.setToolTip(f"Show {self.written_folder} in the file manager")
        self.open_folder_button.show()
        self._folder_timer.start(30000)

    def open_written_folder(self) -> None:
        if self.written_folder is not None:
            self.open_url(QUrl.fromLocalFile(str(self.written_folder)))

    # ================================================================== questions (replaced in tests)

    def ask_open_path(self, title: str, filter_: str) -> str | None:
        path, _ = file_dialogs.open_file_name(self, title, self._last_dir(), filter_)
        return path or None

    def ask_save_path(self, title: str, filter_: str, suggested: str = "") -> str | None:
        start = str(Path(self._last_dir()) / suggested) if suggested else self._last_dir()
        path, chosen = file_dialogs.save_file_name(self, title, start, filter_)
        if path and any(f"*{s}" in chosen for s in WRITE_TYPES):
            path = str(with_chosen_type(path, chosen))  # the type chosen sets the ending
        return path or None

    def ask_unsaved_changes(self) -> str:
        """'save', 'discard' or 'cancel'."""
        box = QMessageBox(self)
        box.setIcon(QMessageBox.Icon.Question)
        box.setWindowTitle("Unsaved changes")
        box.setText("Your choices have changed since the project was last saved.")
        box.setInformativeText("Save them before going on?")
        box.setStandardButtons(
            QMessageBox.StandardButton.Save
            | QMessageBox.StandardButton.Discard
            | QMessageBox.StandardButton.Cancel
        )
        box.setDefaultButton(QMessageBox.StandardButton.Save)
        answer = box.exec()
        return {
            QMessageBox.StandardButton.Save: "save",
            QMessageBox.StandardButton.Discard: "discard",
        }.get(QMessageBox.StandardButton(answer), "cancel")

    def _last_dir(self) -> str:
        return str(self.settings.value("last_dir", str(Path.home())))

    def _remember_dir(self, path: str | Path) -> None:
        self.settings.setValue("last_dir", str(Path(path).parent))

    def _may_discard(self) -> bool:
        """True when there are no unsaved changes, or the user saved or dropped them."""
        if not self.session.dirty:
            return True
        answer = self.ask_unsaved_changes()
        if answer == "save":
            return self.save(wait=True)
        return answer == "discard"

    # ================================================================== opening

    def open_path(self, path: str | Path) -> None:
        """Open a data file (through the import dialog) or a project, by its extension."""
        path = Path(path)
        if projects.is_project_file(path):
            self.open_project(path)
        else:
            self.open_import_dialog(path)

    def choose_and_open_data(self) -> None:
        if not self._may_discard():
            return
        path = self.ask_open_path("Open data", DATA_FILTER)
        if path:
            self.open_import_dialog(path, asked=True)

    def open_import_dialog(self, path: str | Path, *, asked: bool = False):
        """Show how the file will be read, and load it once the user agrees."""
        if not asked and not self._may_discard():
            return None
        try:
            dialog = ImportDialog(path, self)
        except Exception as err:  # any failure to build it is shown plainly
            self.show_message(err)
            return None
        dialog.accepted.connect(lambda: self.load_data(path, dialog.options()))
        dialog.setModal(True)
        dialog.open()
        self.import_dialog = dialog
        return dialog

    def load_data(self, path: str | Path, options: Any = None, *, find=None, show=None):
        """Read the file in the background and show it; on error nothing changes.

        The job also computes every number column's figures, so that showing the table
        does no pass over the values on the interface thread. Opening a project uses the
        two hooks: ``find()`` runs first in the job and returns ``(file to read or None,
        anything)``; ``show(table, facts, found)`` then shows the table in place of the
        plain ``session.load_table`` (exactly one call, with the facts) and returns True
        when it did; with no file to read it is called with ``table`` None.
        """
        path = Path(path)
        bins = self.session.bins

        sampled: list = []  # the SampleInfo of a file too large to hold whole

        def work(progress, cancelled):
            where, found = (path, None) if find is None else find()
            if where is None:
                return None, None, found
            if show is None and large_file.too_large(where):
                # Too large to hold whole (the command line's rule): a sample is shown,
                # and every fit reads the whole file through DuckDB.
                table, info = large_file.read_sample(where)
                sampled.append(info)
            else:
                table = swio.read_table(where, options, progress=progress, cancelled=cancelled)
            # Histogram and summary of every number column, here rather than on the
            # interface thread the first time each column is selected.
            facts = column_facts(table, bins, cancelled)
            if cancelled():
                raise Cancelled()
            return table, facts, found

        def done(result) -> None:
            table, facts, found = result
            if show is not None:
                if not show(table, facts, found):
                    return
            else:
                self.session.load_table(table, facts=facts, sample=sampled[0] if sampled else None)
                self.stack.clear()
                self.stack.setClean()
            source = Path(table.source)
            self.add_recent(source)
            self._remember_dir(source)
            if show is None and sampled:
                self.notify(f"Opened {source.name}. {sampled[0].describe()}.", 20000)
            elif show is None:
                notes = list(getattr(table, "notes", []) or [])
                self.notify(
                    f"Opened {source.name}: {len(table.data):,} rows"
                    + (f". {notes[0]}" if notes else "")
                )

        return self.jobs.run(
            f"Reading {path.name}",
            work,
            done,
            self.show_message,
            lambda: self.notify(f"Stopped reading {path.name}; nothing changed"),
        )

    def choose_and_open_project(self) -> None:
        if not self._may_discard():
            return
        path = self.ask_open_path("Open project", PROJECT_FILTER)
        if path:
            self.open_project(path, asked=True)

    def choose_source_for_project(self, message: str) -> str | None:
        """Ask where the project's data file is now (it was not found)."""
        box = QMessageBox(self)
        box.setIcon(QMessageBox.Icon.Information)
        box.setText(f"The project's data file was not found: {message}.")
        box.setInformativeText("Show where it is now?")
        box.setStandardButtons(QMessageBox.StandardButton.Open | QMessageBox.StandardButton.Cancel)
        if box.exec() != QMessageBox.StandardButton.Open:
            return None
        return self.ask_open_path("Where is the data file?", DATA_FILTER)

    def ask_keep_saved_parameters(self, data_name: str) -> bool:
        """The data file changed since saving: keep the saved parameters, or fit again?"""
        box = QMessageBox(self)
        box.setIcon(QMessageBox.Icon.Question)
        box.setText(f"{data_name} has changed since the project was saved.")
        box.setInformativeText(
            "Keep the saved parameters, so the data is scaled exactly as before, "
            "or fit them again on the file as it is now?"
        )
        keep = box.addButton("Keep saved parameters", QMessageBox.ButtonRole.AcceptRole)
        box.addButton("Fit again", QMessageBox.ButtonRole.RejectRole)
        box.setDefaultButton(keep)
        box.exec()
        return box.clickedButton() is keep

    def open_project(self, path: str | Path, *, asked: bool = False):
        """Load a project and its data file (found, checked and read in the background).

        The saved parameters are used when the data file is as it was when they were
        fitted; when it changed, the user chooses to keep them or fit again.
        """
        if not asked and not self._may_discard():
            return None
        path = Path(path)
        try:
            project = load_project(path)
        except ScalewrightError as err:
            self.show_message(err)
            return None
        return self._open_project_with(path, project, None)

    def _open_project_with(self, path: Path, project, chosen: Path | None):
        """Read the project's data file (``chosen`` by the user when it was not found)."""

        def find():
            check = projects.find_source(project, path, chosen)
            return check.path, check

        def show(table, facts, check) -> bool:
            if table is None:
                picked = self.choose_source_for_project(check.message)
                if not picked:
                    self.notify("The project was not opened: its data file was not found")
                else:
                    self._open_project_with(path, project, Path(picked))
                return False
            return self._show_project(path, project, check, table, facts)

        return self.load_data(project.source or path, project.read_options, find=find, show=show)

    def _show_project(self, path: Path, project, check, table, facts) -> bool:
        opening = projects.open_on(project, check, table, self.ask_keep_saved_parameters)
        try:
            self.session.load_table(
                table,
                choices=opening.choices,
                settings=opening.settings,
                project_path=path,
                fitted=opening.fitted,
                fitted_on=opening.fitted_on,
                facts=facts,
            )
        except ScalewrightError as err:
            self.show_message(err)
            return False
        self.add_recent(path)
        self.stack.clear()
        self.stack.setClean()
        if opening.dirty:
            self.session.set_dirty(True)  # changed or moved: the project should be saved
        if opening.message:
            self.show_message(opening.message)
        self.notify(f"Opened project {path.name} with {Path(table.source).name}")
        return True

    # ================================================================== saving and exporting

    def save(self, *, wait: bool = False) -> bool:
        if self.session.project_path is None:
            return self.save_as(wait=wait)
        return self.save_project(self.session.project_path, wait=wait)

    def save_as(self, *, wait: bool = False) -> bool:
        if self.session.table is None:
            return False
        # Say which column is the problem before asking for a name (issue 8, item 3).
        if not self._ready_to_write("The project was not saved: ", wait=wait):
            return False
        suggested = projects.suggested_project_name(self.session.table.source)
        path = self.ask_save_path("Save project", PROJECT_FILTER, suggested)
        if not path:
            return False
        return self.save_project(projects.with_project_suffix(path), wait=wait)

    def save_project(self, path: str | Path, *, wait: bool = False) -> bool:
        """Fit the choices and write the project file (in the background)."""
        if self.session.table is None:
            return False
        if not self._ready_to_write("The project was not saved: ", wait=wait):
            return False
        path = Path(path)
        make = projects.project_builder(self.session)
        clean_index = self.stack.index()
        result = {"ok": False}

        def work(progress, cancelled):
            project = make()
            if cancelled():
                raise Cancelled()
            save_project(project, path)
            return project

        def done(project) -> None:
            result["ok"] = True
            self.session.set_project_path(path)
            if self.stack.index() == clean_index:
                self.stack.setClean()
                self.session.set_dirty(False)
            self.add_recent(path)
            self._remember_dir(path)
            # Said once, at the moment it matters (the guide says it too).
            self.notify(f"Saved {path.name}. {CAUTION_KEEP_PROJECT}", 15000)
            self.file_written.emit(path)

        job = self.jobs.run(f"Saving {path.name}", work, done, self.show_message)
        if wait:
            self._wait_for(job)
            return result["ok"]
        return True

    def _wait_for_fits(self) -> None:
        """Let the background fits land (saving before closing cannot wait for a click)."""
        from PySide6.QtCore import QCoreApplication

        self.fits.wait()
        QCoreApplication.processEvents()  # deliver their results

    def _wait_for(self, job) -> None:
        from PySide6.QtCore import QEventLoop

        loop = QEventLoop()
        job.ended.connect(loop.quit)
        if not job.done:
            loop.exec()

    def open_sql_dialog(self):
        """Copy as SQL (the same SELECT as ``scalewright sql``); None when not ready."""
        if self.session.table is None or not self._ready_to_write("Nothing to copy: "):
            return None
        from .sql_dialog import SqlDialog

        dialog = SqlDialog(projects.project_builder(self.session), self)
        dialog.show()
        return dialog

    def choose_and_export(self) -> None:
        if self.session.table is None or not self._ready_to_write("Nothing was exported: "):
            return  # checked before the file dialog, which would ask for nothing
        suggested = Path(self.session.table.source).stem + "_scaled.xlsx"
        path = self.ask_save_path("Export scaled data", EXPORT_FILTER, suggested)
        if path:
            self.export(path)

    def export(self, target: str | Path):
        """Write the scaled table (workbook with parameters, or CSV/TSV) in the background."""
        if self.session.table is None or not self._ready_to_write("Nothing was exported: "):
            return None
        target = Path(target)
        if not target.suffix:
            target = target.with_suffix(".xlsx")
        table = self.session.table
        make = projects.project_builder(self.session)

        def work(progress, cancelled):
            project = make()
            return tasks.export_scaled(
                table, project, target, progress=progress, cancelled=cancelled
            )

        def done(reports) -> None:
            self._remember_dir(target)
            self.notify(f"Exported {target.name}")
            self.file_written.emit(target)

        return self.jobs.run(
            f"Exporting {target.name}",
            work,
            done,
            self.show_message,
            lambda: self.notify("Export stopped; no file was written"),
        )

    # ================================================================== apply and restore

    def current_project(self, then) -> None:
        """Call ``then(project)`` with the project for the current choices (fitted in the
        background), or with one the user picks when no data is open."""
        if self.session.table is not None and self.session.chosen():
            if not self._ready_to_write():
                return
            make = projects.project_builder(self.session)  # the fits are done: this records them
            self.jobs.run("Preparing the parameters", lambda p, c: make(), then, self.show_message)
            return
        path = self.ask_open_path("Which project?", PROJECT_OR_WORKBOOK_FILTER)
        if not path:
            return
        try:
            project = tasks.load_project_or_workbook(path)
        except ScalewrightError as err:
            self.show_message(err)
            return
        then(project)

    def open_apply_dialog(self) -> None:
        """Scale another file with the current fitted values (a dialog shows what happens)."""
        self.current_project(self._show_apply)

    def _show_apply(self, project) -> None:
        dialog = ApplyDialog(project, self)
        dialog.fileWritten.connect(lambda path, _reports: self.file_written.emit(Path(path)))
        dialog.setModal(True)
        dialog.open()
        self.apply_dialog = dialog

    def open_restore_dialog(self) -> None:
        """Turn scaled values back into original units (a dialog maps the columns).

        With choices in the window, their fitted values are used; otherwise the dialog
        lets the user pick a project or a scaled workbook.
        """
        if self.session.table is not None and self.session.chosen():
            self.current_project(self._show_restore)
        else:
            self._show_restore(None)

    def _show_restore(self, project) -> None:
        dialog = RestoreDialog(project, self)
        dialog.fileWritten.connect(lambda path, _reports: self.file_written.emit(Path(path)))
        dialog.setModal(True)
        dialog.open()
        self.restore_dialog = dialog

    # ================================================================== edit helpers

    def correct_kind(self, label: str, kind: str):
        """Read a column as another kind (the file is read again; one undoable step)."""
        if self.session.table is None or self.jobs.busy:
            return None
        return kind_correction.start(self, label, kind)

    def leave_selected(self) -> None:
        commands.set_method(self.stack, self.session, self.session.selection, "none")

    def select_all_numbers(self) -> None:
        self.columns.select_labels(
            [lab for lab in self.session.labels if self.session.scalable(lab)]
        )

    # ================================================================== recent files

    def recent_files(self) -> list[str]:
        value = self.settings.value("recent_files", [])
        if isinstance(value, str):
            value = [value]
        return [str(v) for v in (value or [])]

    def add_recent(self, path: str | Path) -> None:
        path = str(Path(path).absolute())
        files = [p for p in self.recent_files() if p != path]
        files.insert(0, path)
        self.settings.setValue("recent_files", files[:MAX_RECENT])

    def _fill_recent(self) -> None:
        self.recent_menu.clear()
        files = self.recent_files()
        for path in files:
            a = self.recent_menu.addAction(Path(path).name)
            a.setToolTip(path)
            a.triggered.connect(lambda _c=False, p=path: self._open_recent(p))
        if not files:
            a = self.recent_menu.addAction("(no recent files)")
            a.setEnabled(False)

    def _open_recent(self, path: str) -> None:
        if not Path(path).exists():
            self.settings.setValue("recent_files", [p for p in self.recent_files() if p != path])
            self.show_message(f"{path} is no longer there.")
            return
        self.open_path(path)

    # ================================================================== drag and drop

    @staticmethod
    def _dropped_path(event) -> Path | None:
        md = event.mimeData()
        if not md.hasUrls():
            return None
        for url in md.urls():
            if url.isLocalFile():
                p = Path(url.toLocalFile())
                if p.suffix.lower() in READ_SUFFIXES + (PROJECT_SUFFIX,):
                    return p
        return None

    def dragEnterEvent(self, event) -> None:
        if self._dropped_path(event) is not None and not self.jobs.busy:
            event.acceptProposedAction()
        else:
            event.ignore()

    def dropEvent(self, event) -> None:
        path = self._dropped_path(event)
        if path is not None:
            event.acceptProposedAction()
            QTimer.singleShot(0, lambda: self.open_path(path))

    # ================================================================== help

    def show_methods_help(self) -> None:
        """Help > Method guide: the README's method guide, from the same source."""
        from .guide_dialog import GuideDialog

        # Not modal: the guide can stay open beside the window while choosing methods.
        if getattr(self, "guide_dialog", None) is None:
            self.guide_dialog = GuideDialog(self)
        self.guide_dialog.show()
        self.guide_dialog.raise_()

    def show_about(self) -> None:
        from .about_dialog import AboutDialog

        self.about_dialog = AboutDialog(self)
        self.about_dialog.open()

    # ================================================================== geometry and closing

    def _fit_to_screen(self, width: int, height: int) -> None:
        """Open at the preferred size, but never larger than the screen's free area (a
        1360 x 860 window on a 1280 x 800 screen put the method panel past its edge)."""
        screen = self.screen() or QApplication.primaryScreen()
        if screen is not None:
            free = screen.availableGeometry()
            width, height = min(width, free.width()), min(height, free.height() - 40)
        self.resize(width, height)

    def _restore_geometry(self) -> None:
        geometry = self.settings.value("window/geometry")
        if isinstance(geometry, QByteArray) and not geometry.isEmpty():
            self.restoreGeometry(geometry)
        state = self.settings.value("window/state")
        if isinstance(state, QByteArray) and not state.isEmpty():
            self.restoreState(state)
        split = self.settings.value("window/splitter")
        if isinstance(split, QByteArray) and not split.isEmpty():
            self.main_split.restoreState(split)

    def save_geometry(self) -> None:
        self.settings.setValue("window/geometry", self.saveGeometry())
        self.settings.setValue("window/state", self.saveState())
        self.settings.setValue("window/splitter", self.main_split.saveState())
        self.settings.sync()

    def closeEvent(self, event: QCloseEvent) -> None:
        if not self._may_discard():
            event.ignore()
            return
        if self.jobs.busy:
            self.jobs.cancel()
            self.jobs.wait()
        self.fits.wait()
        self.save_geometry()
        event.accept()


def icon_folder() -> Path:
    """Where the drawn icons are: resources/icons, installed as scalewright.resources."""
    from importlib.resources import files

    return Path(str(files("scalewright.resources").joinpath("icons")))


def drawn_icon(name: str) -> QIcon:
    """One of the toolbar icons drawn for Scalewright (resources/icons/NAME.svg)."""
    return QIcon(str(icon_folder() / f"{name}.svg"))


def app_icon() -> QIcon:
    """A small drawn icon: two bars, blue and orange (the original and scaled colours)."""
    from PySide6.QtGui import QColor, QPainter, QPixmap

    pm = QPixmap(64, 64)
    pm.fill(Qt.GlobalColor.transparent)
    p = QPainter(pm)
    p.setRenderHint(QPainter.RenderHint.Antialiasing)
    p.setPen(Qt.PenStyle.NoPen)
    p.setBrush(QColor("#ffffff"))
    p.drawRoundedRect(2, 2, 60, 60, 12, 12)
    p.setBrush(QColor(theme.ORIGINAL))
    for i, h in enumerate((18, 34, 44, 26)):
        p.drawRect(8 + i * 7, 56 - h, 6, h)
    p.setBrush(QColor(theme.SCALED))
    for i, h in enumerate((22, 40, 30, 14)):
        p.drawRect(36 + i * 5, 56 - h, 4, h)
    p.end()
    return QIcon(pm)
