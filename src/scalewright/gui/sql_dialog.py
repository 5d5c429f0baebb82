"""Copy as SQL: the SELECT that applies (or undoes) the current fitted scaling in a data
platform, written by the same builder as ``scalewright sql`` so the two never differ."""

from __future__ import annotations

from collections.abc import Callable

from PySide6.QtGui import QFontDatabase, QGuiApplication
from PySide6.QtWidgets import (
    QCheckBox,
    QComboBox,
    QDialog,
    QDialogButtonBox,
    QFormLayout,
    QLabel,
    QLineEdit,
    QPlainTextEdit,
    QPushButton,
    QVBoxLayout,
    QWidget,
)

from ..errors import ScalewrightError
from ..platform.names import DIALECTS
from ..platform.select import default_table_name, select_sql
from ..project import Project

DIALECT_NAMES = {
    "duckdb": "DuckDB",
    "postgres": "PostgreSQL",
    "spark": "Spark SQL",
    "snowflake": "Snowflake",
    "bigquery": "BigQuery",
    "tsql": "SQL Server (T-SQL)",
}


class SqlDialog(QDialog):
    """A dialect box, what to do (scale or turn back), a read-only preview and Copy."""

    def __init__(self, make_project: Callable[[], Project], parent: QWidget | None = None):
        super().__init__(parent)
        self.setWindowTitle("Copy as SQL")
        self.project = make_project()
        layout = QVBoxLayout(self)
        layout.addWidget(
            QLabel(
                "One SELECT that scales a table with these fitted values inside your data "
                "platform; other columns pass through unchanged and blanks stay NULL."
            )
        )
        form = QFormLayout()
        self.dialect = QComboBox()
        for d in DIALECTS:
            self.dialect.addItem(DIALECT_NAMES.get(d, d), d)
        self.dialect.setToolTip("The SQL flavour of the platform that will run the query")
        form.addRow("Write for", self.dialect)
        self.table_name = QLineEdit(default_table_name(self.project))
        self.table_name.setToolTip("The name of the table the query reads from")
        form.addRow("Table", self.table_name)
        self.restoring = QCheckBox("Turn scaled values back into original units")
        self.restoring.setToolTip(
            "Write the query that undoes the scaling, for a table of scaled values"
        )
        form.addRow("", self.restoring)
        layout.addLayout(form)
        self.text = QPlainTextEdit()
        self.text.setReadOnly(True)
        self.text.setFont(QFontDatabase.systemFont(QFontDatabase.SystemFont.FixedFont))
        self.text.setMinimumSize(560, 300)
        layout.addWidget(self.text, 1)
        self.message = QLabel("")
        self.message.setProperty("role", "hint")
        layout.addWidget(self.message)
        buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Close)
        self.copy_button = QPushButton("Copy")
        self.copy_button.setToolTip("Put the query on the clipboard")
        buttons.addButton(self.copy_button, QDialogButtonBox.ButtonRole.ActionRole)
        buttons.rejected.connect(self.reject)
        self.copy_button.clicked.connect(self.copy)
        layout.addWidget(buttons)
        self.dialect.currentIndexChanged.connect(self.refresh)
        self.restoring.toggled.connect(self.refresh)
        self.table_name.textChanged.connect(self.refresh)
        self.refresh()

    def set_dialect(self, dialect: str) -> None:
        self.dialect.setCurrentIndex(self.dialect.findData(dialect))

    def refresh(self) -> None:
        """Write the query again for the current choices."""
        try:
            sql = select_sql(
                self.project,
                dialect=str(self.dialect.currentData()),
                restoring=self.restoring.isChecked(),
                table=self.table_name.text().strip() or None,
            )
        except ScalewrightError as err:
            self.text.setPlainText("")
            self.message.setText(str(err))
            self.copy_button.setEnabled(False)
            return
        self.text.setPlainText(sql.rstrip() + ";")
        self.message.setText("")
        self.copy_button.setEnabled(True)

    def copy(self) -> str:
        text = self.text.toPlainText()
        QGuiApplication.clipboard().setText(text)
        self.message.setText("Copied to the clipboard.")
        return text
