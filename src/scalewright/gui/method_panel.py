"""The method panel: how the selected columns are scaled, and which rows they are fitted on.

Every edit goes through an undoable command; the panel redraws itself from the session's
events with its own signals blocked, so showing a value never counts as an edit.
"""

from __future__ import annotations

from PySide6.QtCore import Qt
from PySide6.QtGui import QUndoStack
from PySide6.QtWidgets import (
    QCheckBox,
    QComboBox,
    QDoubleSpinBox,
    QFormLayout,
    QGroupBox,
    QHBoxLayout,
    QLabel,
    QPushButton,
    QSizePolicy,
    QStackedWidget,
    QVBoxLayout,
    QWidget,
)

from ..engine import METHODS, FitSettings, OptionSpec, get_method
from ..errors import ScalewrightError
from ..session import FIT_WHERE_KINDS, Session
from . import commands, theme

ALL_ROWS = "all rows"
NO_GROUPS = "no groups"
MAX_FIT_VALUES = 50  # columns with more different values are not offered for choosing rows


def _label(text: str, role: str | None = None, wrap: bool = True) -> QLabel:
    w = QLabel(text)
    w.setWordWrap(wrap)
    w.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
    if role:
        w.setProperty("role", role)
    return w


class MethodPanel(QWidget):
    def __init__(self, session: Session, stack: QUndoStack, parent: QWidget | None = None):
        super().__init__(parent)
        self.session = session
        self.stack = stack
        self._option_widgets: dict[str, QWidget] = {}  # the shown method's option widgets
        self._option_method: str | None = None
        # One page of option widgets per method, built the first time the method is shown
        # and kept: switching methods shows another page instead of building widgets.
        self._option_pages: dict[str, tuple[QWidget, dict[str, QWidget]]] = {}
        self._fit_candidates: list[str] = []

        outer = QVBoxLayout(self)
        outer.setContentsMargins(theme.MARGIN, theme.MARGIN, theme.MARGIN, theme.MARGIN)
        outer.setSpacing(theme.SPACING)

        self.heading = _label("No column selected", "heading")
        outer.addWidget(self.heading)

        row = QHBoxLayout()
        row.addWidget(QLabel("Scale with"))
        self.method_box = QComboBox()
        for m in METHODS.values():
            self.method_box.addItem(m.name, m.id)
            self.method_box.setItemData(
                self.method_box.count() - 1,
                f"{m.summary} {m.when_to_use}",
                Qt.ItemDataRole.ToolTipRole,
            )
        self.method_box.setPlaceholderText("(different methods)")
        self.method_box.setToolTip("How the selected columns are scaled")
        self.method_box.setSizePolicy(QSizePolicy.Policy.Expanding, QSizePolicy.Policy.Fixed)
        self.method_box.activated.connect(self._on_method)
        row.addWidget(self.method_box)
        outer.addLayout(row)

        self.summary = _label("")
        self.summary.setToolTip("What the method does")
        self.when = _label("", "hint")
        self.when.setToolTip("When the method is a good choice")
        outer.addWidget(self.summary)
        outer.addWidget(self.when)

        self.options_box = QGroupBox("Options")
        self.options_box.setToolTip("Settings of the chosen method")
        box_layout = QVBoxLayout(self.options_box)
        self.options_pages = QStackedWidget()
        box_layout.addWidget(self.options_pages)
        outer.addWidget(self.options_box)

        self.fitted = _label("", "hint")
        self.fitted.setToolTip("The values fitted for this column, kept in the project")
        outer.addWidget(self.fitted)
        self.problem = _label("", "warning")
        self.problem.setToolTip("Things to know about this column's scaling")
        outer.addWidget(self.problem)

        suggest_row = QHBoxLayout()
        self.suggest_button = QPushButton("Suggest")
        self.suggest_button.setToolTip(
            "Choose a method for the selected columns from the shape of their values "
            "(you can undo it)"
        )
        self.suggest_button.clicked.connect(self.suggest)
        suggest_row.addWidget(self.suggest_button)
        suggest_row.addStretch(1)
        outer.addLayout(suggest_row)
        self.reason = _label("", "hint")
        # (selected labels, their choices) when Suggest last filled in the reasons.
        self._suggested: tuple[list[str], dict] | None = None
        self.reason.setToolTip("Why the suggested method was chosen")
        outer.addWidget(self.reason)

        fit_box = QGroupBox("Fit settings (all columns)")
        fit_box.setToolTip("Which rows the scaling is learned from; it is then used on every row")
        form = QFormLayout(fit_box)
        form.setSpacing(theme.SPACING)
        self.where_column = QComboBox()
        self.where_column.setToolTip(
            "Learn the scaling only from rows with a certain value in this column "
            "(for example only the training rows), then use it on every row"
        )
        self.where_column.activated.connect(self._on_where_column)
        self.where_value = QComboBox()
        self.where_value.setToolTip("The value the rows must have")
        self.where_value.setPlaceholderText("choose a value")
        self.where_value.activated.connect(self._on_where_value)
        self.is_label = QLabel("is")
        self.is_label.setAlignment(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
        form.addRow("Fit on rows where", self.where_column)
        form.addRow(self.is_label, self.where_value)
        self.group_box = QComboBox()
        self.group_box.setToolTip(
            "Learn one set of scaling values per value of this column (for example per "
            "orchard); groups not seen later use the values learned from all rows"
        )
        self.group_box.activated.connect(self._on_group)
        form.addRow("Group by", self.group_box)
        self.settings_problem = _label("", "warning")
        form.addRow(self.settings_problem)
        outer.addWidget(fit_box)
        outer.addStretch(1)
        for box in (self.method_box, self.where_column, self.where_value, self.group_box):
            # Long column names must not force the panel wide; the list drops down wider.
            box.setSizeAdjustPolicy(
                QComboBox.SizeAdjustPolicy.AdjustToMinimumContentsLengthWithIcon
            )
            box.setMinimumContentsLength(8)

        session.table_loaded.connect(self._on_table)
        session.selection_changed.connect(lambda _labels: self.refresh())
        session.choices_changed.connect(self._on_choices)
        session.settings_changed.connect(self._on_settings)
        session.fitted.connect(self._on_fitted)
        self._on_table()

    # ------------------------------------------------------------------ reading the session

    @property
    def labels(self) -> list[str]:
        return [lab for lab in self.session.selection if self.session.scalable(lab)]

    def _on_table(self) -> None:
        s = self.session
        cands = []
        if s.table is not None:
            for label in s.labels:
                if s.kind(label) not in FIT_WHERE_KINDS:
                    continue
                if s.distinct_count(label) <= MAX_FIT_VALUES:
                    cands.append(label)
        self._fit_candidates = cands
        self.reason.setText("")
        self._on_settings()
        self.refresh()

    def _on_choices(self, labels: list[str]) -> None:
        if set(labels) & set(self.session.selection):
            self.refresh()

    def _forget_stale_reasons(self) -> None:
        """Suggest's reasons hold only while the same columns are selected and still have
        the suggested choices: an undo, another method or another selection clears them."""
        if self._suggested is None:
            return
        labels, choices = self._suggested
        current = {label: self.session.choice(label) for label in choices}
        if list(self.labels) != labels or current != choices:
            self._suggested = None
            self.reason.setText("")

    def _on_fitted(self, label: str) -> None:
        if label in self.session.selection:
            self._show_fit(self.labels)

    def _on_settings(self) -> None:
        s = self.session
        st = s.settings
        for box in (self.where_column, self.where_value, self.group_box):
            box.blockSignals(True)
        try:
            self.where_column.clear()
            self.where_column.addItem(ALL_ROWS, None)
            for label in self._fit_candidates:
                self.where_column.addItem(s.header(label), label)
            self.where_value.clear()
            if st.fit_where is None:
                self.where_column.setCurrentIndex(0)
            else:
                col, val = st.fit_where
                i = self.where_column.findData(col)
                if i < 0:
                    self.where_column.addItem(s.header(col), col)
                    i = self.where_column.count() - 1
                self.where_column.setCurrentIndex(i)
                values = s.values_of_fit_column(col)
                for v in values:
                    self.where_value.addItem(v, v)
                j = self.where_value.findData(val)
                if j < 0:
                    self.where_value.addItem(val, val)
                    j = self.where_value.count() - 1
                self.where_value.setCurrentIndex(j)
            self.where_value.setEnabled(st.fit_where is not None)
            self.is_label.setEnabled(st.fit_where is not None)
            self.group_box.clear()
            self.group_box.addItem(NO_GROUPS, None)
            for label in self._fit_candidates:
                if s.kind(label) != "number":
                    self.group_box.addItem(s.header(label), label)
            k = self.group_box.findData(st.group_by) if st.group_by else 0
            self.group_box.setCurrentIndex(max(k, 0))
        finally:
            for box in (self.where_column, self.where_value, self.group_box):
                box.blockSignals(False)
        self.settings_problem.setText(s.settings_error or "")
        self.settings_problem.setVisible(bool(s.settings_error))
        self.refresh()

    def refresh(self) -> None:
        """Show the selected columns' method, options, fitted values and warnings."""
        self._forget_stale_reasons()
        s = self.session
        labels = self.labels
        has = bool(labels)
        for w in (self.method_box, self.options_box, self.suggest_button):
            w.setEnabled(has)
        if not s.selection:
            self.heading.setText("No column selected" if s.table is not None else "No data open")
        elif not has:
            self.heading.setText(s.header(s.selection[0]))
        elif len(labels) == 1:
            self.heading.setText(s.header(labels[0]))
        else:
            self.heading.setText(f"{len(labels)} columns selected")
        methods = {s.choice(lab).method for lab in labels}
        self.method_box.blockSignals(True)
        if len(methods) == 1:
            method = get_method(methods.pop())
            self.method_box.setCurrentIndex(self.method_box.findData(method.id))
        else:
            method = None
            # Several columns with different methods, or nothing that can be scaled.
            self.method_box.setPlaceholderText(
                "(different methods)" if methods else "(no column selected)"
            )
            self.method_box.setCurrentIndex(-1)
        self.method_box.blockSignals(False)
        if method is not None:
            self.summary.setText(method.summary)
            self.when.setText(f"When to use: {method.when_to_use}")
        else:
            self.summary.setText(
                "The selected columns use different methods; choose one to give it to all."
                if has
                else ""
            )
            self.when.setText("")
        self._build_options(method, labels)
        self._show_fit(labels)
        if len(labels) == 1:
            self.suggest_button.setToolTip(
                "Choose a method from the shape of the values (you can undo it). For this "
                f"column: {s.suggestion(labels[0]).reason}"
            )

    def _show_fit(self, labels: list[str]) -> None:
        """The fitted values and warnings of the selected columns ("Fitting…" meanwhile)."""
        s = self.session
        has = bool(labels)
        if len(labels) == 1:
            if s.fitting(labels[0]):
                self.fitted.setText("Fitting…")
            elif s.fitted_column(labels[0]) is not None:
                self.fitted.setText(s.describe_fit(labels[0]))
            else:
                self.fitted.setText("")
            warnings = s.warnings(labels[0])
            self.problem.setText("\n".join(f"\u26a0 {w}" for w in warnings))
        elif has:
            self.fitted.setText("")
            bad = [lab for lab in labels if s.warnings(lab)]
            self.problem.setText(
                f"\u26a0 {len(bad)} of the selected columns have warnings; see the list"
                if bad
                else ""
            )
        elif s.selection:
            self.fitted.setText("")
            self.problem.setText(
                f"It cannot be scaled: it is {s.why_not_scalable(s.selection[0])}."
            )
        else:
            self.fitted.setText("")
            self.problem.setText("")
        self.fitted.setVisible(bool(self.fitted.text()))
        self.problem.setVisible(bool(self.problem.text()))

    def _build_options(self, method, labels: list[str]) -> None:
        if method is None or not method.option_specs:
            self._option_widgets = {}
            self._option_method = None
            self.options_box.setVisible(False)
            return
        if self._option_method != method.id:
            if method.id not in self._option_pages:
                self._option_pages[method.id] = self._option_page(method)
            page, widgets = self._option_pages[method.id]
            # The box takes the height of the page shown, not of the tallest page built.
            for other, _w in self._option_pages.values():
                policy = (
                    QSizePolicy.Policy.Preferred if other is page else QSizePolicy.Policy.Ignored
                )
                other.setSizePolicy(policy, policy)
            self.options_pages.setCurrentWidget(page)
            self._option_widgets = widgets
            self._option_method = method.id
        self.options_box.setVisible(True)
        options = self.session.choice(labels[0]).options if labels else method.options()
        for name, widget in self._option_widgets.items():
            value = options.get(name)
            widget.blockSignals(True)
            if isinstance(widget, QDoubleSpinBox):
                widget.setValue(float(value))
            elif isinstance(widget, QCheckBox):
                widget.setChecked(bool(value))
            elif isinstance(widget, QComboBox):
                widget.setCurrentIndex(max(widget.findData(value), 0))
            widget.blockSignals(False)

    def _option_page(self, method) -> tuple[QWidget, dict[str, QWidget]]:
        """A page with one row per option of the method, and its widgets by option name."""
        page = QWidget()
        form = QFormLayout(page)
        form.setContentsMargins(0, 0, 0, 0)
        form.setSpacing(theme.SPACING)
        widgets: dict[str, QWidget] = {}
        for spec in method.option_specs:
            widget = self._option_widget(method.id, spec)
            widgets[spec.name] = widget
            text = spec.shown_label
            if isinstance(widget, QCheckBox):
                widget.setText(text)
                form.addRow(widget)
            else:
                label = QLabel(text)
                label.setToolTip(spec.help)
                form.addRow(label, widget)
        self.options_pages.addWidget(page)
        return page, widgets

    def _option_widget(self, method_id: str, spec: OptionSpec) -> QWidget:
        name = spec.name
        if spec.kind == "number":
            w = QDoubleSpinBox()
            w.setRange(-1e12, 1e12)
            # Sized by the panel, not by the widest number the range allows (which would
            # make the panel wider than its column and cut it off on the right).
            w.setSizePolicy(QSizePolicy.Policy.Ignored, QSizePolicy.Policy.Fixed)
            w.setMinimumWidth(90)
            w.setDecimals(4)
            w.setSingleStep(0.1)
            w.setKeyboardTracking(True)
            w.valueChanged.connect(lambda v, n=name: self._on_option(n, v))
        elif spec.kind == "yes/no":
            w = QCheckBox()
            w.toggled.connect(lambda v, n=name: self._on_option(n, v))
        else:
            w = QComboBox()
            for choice in spec.choices:
                w.addItem(spec.choice_words(choice), choice)
            w.activated.connect(lambda _i, n=name, box=w: self._on_option(n, box.currentData()))
        w.setToolTip(spec.help[:1].upper() + spec.help[1:])
        return w

    # ------------------------------------------------------------------ edits (undoable)

    def _on_method(self, index: int) -> None:
        method_id = self.method_box.itemData(index)
        if method_id:
            self.set_method(method_id)

    def set_method(self, method_id: str) -> bool:
        """Give the selected columns this method (one undoable step)."""
        self.reason.setText("")
        return commands.set_method(self.stack, self.session, self.labels, method_id)

    def _on_option(self, name: str, value) -> None:
        try:
            commands.set_option(self.stack, self.session, self.labels, name, value)
        except ScalewrightError as err:
            self.problem.setText(f"\u26a0 {err}")
            self.problem.setVisible(True)

    def suggest(self) -> dict[str, str]:
        """Give the selected columns the engine's suggestion, and say why."""
        reasons = commands.apply_suggestions(self.stack, self.session, self.labels)
        self._suggested = (list(self.labels), {k: self.session.choice(k) for k in reasons})
        if len(reasons) == 1:
            text = "Suggested because the column is " + next(iter(reasons.values())) + "."
        else:
            text = "\n".join(f"{self.session.header(k)}: {v}" for k, v in reasons.items())
        self.reason.setText(text)
        return reasons

    def _on_where_column(self, index: int) -> None:
        col = self.where_column.itemData(index)
        st = self.session.settings
        if col is None:
            commands.push_settings(self.stack, self.session, FitSettings(None, st.group_by))
            return
        # The rows change once a value is picked too: one step for the user's one choice.
        self.where_value.blockSignals(True)
        self.where_value.clear()
        for v in self.session.values_of_fit_column(col):
            self.where_value.addItem(v, v)
        self.where_value.setCurrentIndex(-1)
        self.where_value.setEnabled(True)
        self.is_label.setEnabled(True)
        self.where_value.blockSignals(False)

    def _on_where_value(self, index: int) -> None:
        col = self.where_column.currentData()
        if col is None or index < 0:
            return
        st = self.session.settings
        self._push(FitSettings((col, self.where_value.itemData(index)), st.group_by))

    def _on_group(self, index: int) -> None:
        self._push(FitSettings(self.session.settings.fit_where, self.group_box.itemData(index)))

    def _push(self, settings: FitSettings) -> None:
        try:
            commands.push_settings(self.stack, self.session, settings)
        except ScalewrightError as err:
            self.settings_problem.setText(str(err))
            self.settings_problem.setVisible(True)
            self._on_settings_widgets_only()

    def _on_settings_widgets_only(self) -> None:
        problem = self.settings_problem.text()
        self._on_settings()
        self.settings_problem.setText(problem)
        self.settings_problem.setVisible(bool(problem))

    def set_fit_where(self, column: str | None, value: str | None = None) -> None:
        """Choose the fit rows as a user would with the two boxes."""
        i = self.where_column.findData(column) if column else 0
        self.where_column.setCurrentIndex(i)
        self.where_column.activated.emit(i)
        if column and value is not None:
            j = self.where_value.findData(value)
            self.where_value.setCurrentIndex(j)
            self.where_value.activated.emit(j)
