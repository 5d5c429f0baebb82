"""The dialog that shows how a data file will be read, and lets the user correct it.

Everything the reader guessed (encoding, column separator, decimal and thousands marks,
the line that holds the column names, the sheet of a workbook) is shown in a control the
user can change. A change re-reads the start of the file with that setting fixed and
everything the user has not touched guessed again, so the preview always shows the rows
exactly as they would load. A setting that makes the file unreadable is explained in the
dialog and the Open button stays disabled until it is fixed.
"""

from __future__ import annotations

from dataclasses import fields
from pathlib import Path
from typing import Any

from PySide6.QtCore import Qt, QTimer, Signal
from PySide6.QtWidgets import (
    QComboBox,
    QDialog,
    QDialogButtonBox,
    QFormLayout,
    QGroupBox,
    QHBoxLayout,
    QLabel,
    QPushButton,
    QSpinBox,
    QVBoxLayout,
    QWidget,
)

from .. import io as swio
from ..errors import UnsupportedFile
from ..io import ReadOptions
from ..io.options import WORKBOOK_SUFFIXES
from .frame_view import FrameModel, make_preview_view
from .widgets import MUTED_STYLE, escape_html, kind_word, message_label

PREVIEW_ROWS = 50
REFRESH_DELAY_MS = 150

ENCODINGS = (
    ("utf-8", "UTF-8"),
    ("utf-8-sig", "UTF-8 with byte-order mark"),
    ("utf-16", "UTF-16"),
    ("utf-16-le", "UTF-16 little-endian"),
    ("utf-16-be", "UTF-16 big-endian"),
    ("cp1252", "Windows-1252 (Western European)"),
    ("latin-1", "Latin-1 (ISO 8859-1)"),
    ("cp1250", "Windows-1250 (Central European)"),
)
DELIMITER_WORDS = (
    (",", "Comma  ,"),
    (";", "Semicolon  ;"),
    ("\t", "Tab"),
    ("|", "Vertical bar  |"),
)
DECIMAL_WORDS = (
    (".", "Point  1234.5"),
    (",", "Comma  1234,5"),
)
THOUSANDS_WORDS = (
    ("", "None  1234567"),
    (",", "Comma  1,234,567"),
    (".", "Point  1.234.567"),
    (" ", "Space  1 234 567"),
    ("'", "Apostrophe  1'234'567"),
)


def describe_error(err: BaseException) -> str:
    """One plain line for an error from the io layer (or an unexpected one)."""
    text = str(err).strip()
    where = getattr(err, "path", None)
    if where and text.startswith(f"{where}: "):
        text = text[len(where) + 2 :]  # the dialog already names the file
    if isinstance(err, ValueError) and not hasattr(err, "path"):
        # ReadOptions names the field first ("thousands: cannot be ..."); say it plainly.
        field, _, rest = text.partition(": ")
        words = {
            "thousands": "Thousands separator",
            "decimal": "Decimal separator",
            "encoding": "Encoding",
            "delimiter": "Column separator",
            "header_row": "Column names row",
            "sheet": "Sheet",
        }
        if field in words and rest:
            return f"{words[field]}: {rest}."
    return text or type(err).__name__


class ImportDialog(QDialog):
    """Check and correct how a data file is read before it is opened.

    ``exec()`` returns Accepted when the user pressed Open; ``options()`` then gives the
    complete ``ReadOptions`` the preview was made with. ``optionsChanged`` is emitted each
    time the preview is rebuilt successfully.
    """

    optionsChanged = Signal(object)  # ReadOptions

    def __init__(
        self, path: str | Path, parent: QWidget | None = None, *, options: ReadOptions | None = None
    ) -> None:
        super().__init__(parent)
        self._path = Path(path)
        self._fixed: dict[str, Any] = {
            f.name: getattr(options, f.name)
            for f in fields(ReadOptions)
            if options is not None and getattr(options, f.name) is not None
        }
        self._detection: swio.Detection | None = None
        self._error: str = ""
        self._is_workbook = self._path.suffix.lower() in WORKBOOK_SUFFIXES

        self.setWindowTitle(f"Open {self._path.name}")
        self.setObjectName("importDialog")
        self.resize(900, 620)

        self._timer = QTimer(self)
        self._timer.setSingleShot(True)
        self._timer.setInterval(REFRESH_DELAY_MS)
        self._timer.timeout.connect(self.refresh)

        self._build()
        self.refresh()

    # ------------------------------------------------------------------ building

    def _build(self) -> None:
        intro = QLabel(
            f"<span style='font-size:12pt'><b>{escape_html(self._path.name)}</b></span><br>"
            "This is how the file will be read. Change a setting if something looks wrong; "
            "the preview follows."
        )
        intro.setWordWrap(True)
        intro.setToolTip(str(self._path))

        self.encoding_box = self._combo(
            "encoding",
            ENCODINGS,
            "How the characters of the file are stored. Change it if letters such as "
            "ä, é or ñ look garbled in the preview.",
        )
        self.delimiter_box = self._combo(
            "delimiter",
            DELIMITER_WORDS,
            "The character between the columns of a row.",
        )
        self.decimal_box = self._combo(
            "decimal",
            DECIMAL_WORDS,
            "The mark between the whole part and the fraction of a number.",
        )
        self.thousands_box = self._combo(
            "thousands",
            THOUSANDS_WORDS,
            "The mark that groups the digits of large numbers, if any.",
        )
        self.sheet_box = QComboBox()
        self.sheet_box.setObjectName("sheet")
        self.sheet_box.setToolTip("The sheet of the workbook that holds the table.")
        self.sheet_box.activated.connect(lambda _i: self._user_changed("sheet"))

        self.header_spin = QSpinBox()
        self.header_spin.setObjectName("header_row")
        self.header_spin.setRange(1, 1_000_000)
        self.header_spin.setToolTip(
            "The row that holds the column names; the rows above it (titles, notes, blank "
            "lines) are skipped. Counted from 1, the first row of the file."
        )
        self.header_spin.setKeyboardTracking(False)
        self.header_spin.valueChanged.connect(lambda _v: self._user_changed("header_row"))

        self.redetect_button = QPushButton("Guess again")
        self.redetect_button.setToolTip(
            "Forget the settings you changed and let Scalewright guess all of them again."
        )
        self.redetect_button.clicked.connect(self.redetect)

        form = QFormLayout()
        form.setFieldGrowthPolicy(QFormLayout.FieldGrowthPolicy.FieldsStayAtSizeHint)
        form.setHorizontalSpacing(12)
        form.setVerticalSpacing(8)
        form.addRow("Sheet:", self.sheet_box)
        form.addRow("Encoding:", self.encoding_box)
        form.addRow("Columns separated by:", self.delimiter_box)
        form.addRow("Decimal separator:", self.decimal_box)
        form.addRow("Thousands separator:", self.thousands_box)
        form.addRow("Column names on row:", self.header_spin)
        form.setRowVisible(self.sheet_box, self._is_workbook)
        for box in (self.encoding_box, self.delimiter_box, self.decimal_box, self.thousands_box):
            form.setRowVisible(box, not self._is_workbook)
        self._form = form

        settings = QGroupBox("How the file is read")
        settings_layout = QVBoxLayout(settings)
        settings_layout.addLayout(form)
        guessed = QLabel(
            "Settings in <i>italics</i> were guessed; the ones you change stay as you set them."
        )
        guessed.setWordWrap(True)
        guessed.setProperty("role", "hint")
        guessed.setStyleSheet(MUTED_STYLE)
        guessed.setToolTip("Press Guess again to let Scalewright guess every setting anew.")
        settings_layout.addWidget(guessed)
        settings_layout.addWidget(self.redetect_button, 0, Qt.AlignmentFlag.AlignLeft)
        settings_layout.addStretch(1)

        self.notes_label = QLabel()
        self.notes_label.setObjectName("notes")
        self.notes_label.setWordWrap(True)
        self.notes_label.setTextFormat(Qt.TextFormat.RichText)
        self.notes_label.setAlignment(Qt.AlignmentFlag.AlignTop | Qt.AlignmentFlag.AlignLeft)
        self.notes_label.setToolTip(
            "What was found while reading, and every change made to a value on the way in."
        )
        notes = QGroupBox("What was found")
        notes_layout = QVBoxLayout(notes)
        notes_layout.addWidget(self.notes_label)
        notes_layout.addStretch(1)

        top = QHBoxLayout()
        top.setSpacing(12)
        top.addWidget(settings, 0)
        top.addWidget(notes, 1)

        self.error_label = message_label()
        self.error_label.setObjectName("error")

        self.preview_model = FrameModel(parent=self)
        self.preview_view = make_preview_view(
            self.preview_model,
            f"The first {PREVIEW_ROWS} rows as they will load. Hover a column name to see "
            "what kind of values the column holds.",
        )
        self.preview_caption = QLabel()
        self.preview_caption.setProperty("role", "hint")
        self.preview_caption.setStyleSheet(MUTED_STYLE)

        self.buttons = QDialogButtonBox(
            QDialogButtonBox.StandardButton.Ok | QDialogButtonBox.StandardButton.Cancel
        )
        self.ok_button = self.buttons.button(QDialogButtonBox.StandardButton.Ok)
        self.ok_button.setText("Open")
        self.ok_button.setToolTip("Read the whole file with these settings.")
        cancel = self.buttons.button(QDialogButtonBox.StandardButton.Cancel)
        cancel.setToolTip("Close without opening the file.")
        self.buttons.accepted.connect(self.accept)
        self.buttons.rejected.connect(self.reject)

        layout = QVBoxLayout(self)
        layout.setContentsMargins(16, 16, 16, 16)
        layout.setSpacing(10)
        layout.addWidget(intro)
        layout.addLayout(top)
        layout.addWidget(self.error_label)
        layout.addWidget(self.preview_caption)
        layout.addWidget(self.preview_view, 1)
        layout.addWidget(self.buttons)

    def _combo(self, name: str, items, tooltip: str) -> QComboBox:
        box = QComboBox()
        box.setObjectName(name)
        box.setToolTip(tooltip)
        for value, text in items:
            box.addItem(text, value)
        box.activated.connect(lambda _i, n=name: self._user_changed(n))
        return box

    # ------------------------------------------------------------------ public API

    def path(self) -> Path:
        return self._path

    def options(self) -> ReadOptions:
        """The complete read options the current preview was made with."""
        if self._detection is None:
            return ReadOptions(**self._fixed) if not self._error else ReadOptions()
        return self._detection.options

    def detection(self) -> swio.Detection | None:
        """The last successful detection (None while the settings make the file unreadable)."""
        return self._detection

    def error_text(self) -> str:
        return self._error

    def set_option(self, name: str, value: Any) -> None:
        """Fix one setting as if the user had chosen it, and rebuild the preview now."""
        if name not in {f.name for f in fields(ReadOptions)}:
            raise KeyError(name)
        self._fixed[name] = value
        self.refresh()

    def redetect(self) -> None:
        """Forget every setting the user changed and guess them all again."""
        self._fixed.clear()
        self.refresh()

    # ------------------------------------------------------------------ behaviour

    def _user_changed(self, name: str) -> None:
        value = self._control_value(name)
        if value is None:
            return
        if self._fixed.get(name, object()) == value and self._detection is not None:
            return
        self._fixed[name] = value
        if name in ("decimal", "thousands"):
            # The two marks are read together: keep the other one as shown, so that
            # choosing the same mark for both is reported instead of silently undone.
            other = "thousands" if name == "decimal" else "decimal"
            shown = self._control_value(other)
            if shown is not None:
                self._fixed.setdefault(other, shown)
        self._timer.start()

    def _control_value(self, name: str) -> Any:
        if name == "header_row":
            return self.header_spin.value() - 1
        box = {
            "encoding": self.encoding_box,
            "delimiter": self.delimiter_box,
            "decimal": self.decimal_box,
            "thousands": self.thousands_box,
            "sheet": self.sheet_box,
        }[name]
        return box.currentData() if box.currentIndex() >= 0 else None

    def refresh(self) -> None:
        """Read the start of the file with the current settings and show the result."""
        self._timer.stop()
        try:
            wanted = ReadOptions(**self._fixed)
            detection = swio.detect(self._path, wanted, preview_rows=PREVIEW_ROWS)
        except UnsupportedFile as err:  # no setting will make it a table
            self._show_error(describe_error(err), unsupported=True)
            return
        except Exception as err:  # every failure is shown, none may crash
            self._show_error(describe_error(err))
            return
        self._detection = detection
        self._error = ""
        self.error_label.hide()
        self._show_controls(detection)
        self._show_preview(detection)
        self._show_notes(detection.notes)
        self.ok_button.setEnabled(True)
        self.optionsChanged.emit(detection.options)

    def _show_error(self, text: str, *, unsupported: bool = False) -> None:
        self._detection = None
        self._error = text
        if unsupported:
            self.error_label.setText(f"⚠  This file cannot be opened: {text}")
            self.error_label.setToolTip("Choose a table saved in one of the types listed.")
            caption = "Nothing to preview: this file is not a table Scalewright can read."
        else:
            self.error_label.setText(f"⚠  The file cannot be read with these settings: {text}")
            self.error_label.setToolTip("Change the setting named here, or press Guess again.")
            caption = "Nothing to preview until the settings fit the file."
        self.error_label.show()
        self.preview_model.set_frame(None)
        self.preview_caption.setText(caption)
        self.ok_button.setEnabled(False)

    def _show_controls(self, detection) -> None:
        opts = detection.options
        widgets = (
            self.encoding_box,
            self.delimiter_box,
            self.decimal_box,
            self.thousands_box,
            self.sheet_box,
            self.header_spin,
        )
        for w in widgets:
            w.blockSignals(True)
        try:
            if self._is_workbook:
                self.sheet_box.clear()
                for name in detection.sheets:
                    self.sheet_box.addItem(name, name)
                _select(self.sheet_box, opts.sheet)
            else:
                _select(self.encoding_box, _canonical_encoding(opts.encoding), add=opts.encoding)
                _select(self.delimiter_box, opts.delimiter, add=opts.delimiter)
                _select(self.decimal_box, opts.decimal)
                _select(self.thousands_box, opts.thousands if opts.thousands is not None else "")
            if opts.header_row is not None:
                self.header_spin.setValue(opts.header_row + 1)
        finally:
            for w in widgets:
                w.blockSignals(False)
        for name, box in (
            ("encoding", self.encoding_box),
            ("delimiter", self.delimiter_box),
            ("decimal", self.decimal_box),
            ("thousands", self.thousands_box),
            ("sheet", self.sheet_box),
            ("header_row", self.header_spin),
        ):
            font = box.font()
            font.setItalic(name not in self._fixed)
            box.setFont(font)

    def _show_preview(self, detection) -> None:
        frame = detection.preview
        headers = list(detection.headers) or [str(c) for c in frame.columns]
        tips: dict[str, str] = {}
        texts: dict[str, str] = {}
        for i, label in enumerate(frame.columns):
            kind = detection.kinds.get(label)
            word, explain = kind_word(kind) if kind is not None else ("", "")
            original = headers[i] if i < len(headers) else str(label)
            texts[label] = f"{label}\n{word}" if word else str(label)
            tip = [f"<b>{escape_html(str(label))}</b>"]
            if original != label:
                tip.append(f"Name in the file: '{escape_html(original)}'")
            if word:
                tip.append(f"Kind: {word}. {explain}")
            tips[label] = "<br>".join(tip)
        self.preview_model.set_frame(frame, header_tips=tips, header_texts=texts)
        self.preview_view.resizeColumnsToContents()
        n = len(frame)
        self.preview_caption.setText(
            f"Preview: the first {n} row{'s' if n != 1 else ''} as they will load "
            f"({frame.shape[1]} columns). Hover a column name for its kind."
        )

    def _show_notes(self, notes: list[str]) -> None:
        if notes:
            items = "".join(f"<li>{escape_html(n)}</li>" for n in notes)
            self.notes_label.setText(f"<ul style='margin-left:-20px'>{items}</ul>")
        else:
            self.notes_label.setText("Nothing unusual: the file reads as it is.")


def _select(box: QComboBox, value: Any, *, add: Any = None) -> None:
    """Select the item whose data is ``value``; add it first when it is not listed."""
    if value is None:
        return
    i = box.findData(value)
    if i < 0 and add is not None:
        box.addItem(str(add), add)
        i = box.count() - 1
    if i >= 0:
        box.setCurrentIndex(i)


def _canonical_encoding(name: str | None) -> str | None:
    """Map codec aliases (utf_8, latin1, windows-1252) to the names in the list."""
    if name is None:
        return None
    import codecs

    try:
        target = codecs.lookup(name).name
    except LookupError:
        return name
    for value, _text in ENCODINGS:
        if codecs.lookup(value).name == target:
            return value
    return name
