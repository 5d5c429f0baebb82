"""Undoable edits: one QUndoCommand per thing the user changes.

Commands are pushed only when something actually changes. Repeated edits of the same
option on the same columns (typing 0, 0.5, 0.55 into a range box) merge into one step,
so one Undo takes the option back to where it was before the typing began.
"""

from __future__ import annotations

from collections.abc import Mapping

from PySide6.QtGui import QUndoCommand, QUndoStack

from ..engine import ColumnChoice, FitSettings, get_method
from ..errors import ScalewrightError
from ..session import Session, choice_key

SET_CHOICES_ID = 4101
SET_SETTINGS_ID = 4102


def _short_list(labels: list[str]) -> str:
    if len(labels) == 1:
        return labels[0]
    if len(labels) <= 3:
        return ", ".join(labels)
    return f"{len(labels)} columns"


class SetChoices(QUndoCommand):
    """Give one or several columns a method and options."""

    def __init__(
        self,
        session: Session,
        new: Mapping[str, ColumnChoice],
        text: str,
        merge_key: str | None = None,
    ) -> None:
        super().__init__(text)
        self.session = session
        self.new = dict(new)
        self.old = {label: session.choice(label) for label in new}
        self.merge_key = merge_key

    def redo(self) -> None:
        self.session.set_choices(self.new)

    def undo(self) -> None:
        self.session.set_choices(self.old)

    def id(self) -> int:
        return SET_CHOICES_ID if self.merge_key else -1

    def mergeWith(self, other: QUndoCommand) -> bool:
        if not isinstance(other, SetChoices) or other.merge_key != self.merge_key:
            return False
        if set(other.new) != set(self.new):
            return False
        if any(other.new[k].method != self.new[k].method for k in self.new):
            return False
        self.new = dict(other.new)
        if all(choice_key(self.new[k]) == choice_key(self.old[k]) for k in self.new):
            self.setObsolete(True)  # typed back to where it was: nothing to undo
        return True


class SetSettings(QUndoCommand):
    """Change which rows the parameters are fitted on, or the grouping."""

    def __init__(self, session: Session, new: FitSettings, text: str) -> None:
        super().__init__(text)
        self.session = session
        self.new = new
        self.old = session.settings

    def redo(self) -> None:
        self.session.set_settings(self.new)

    def undo(self) -> None:
        self.session.set_settings(self.old)


def push_choices(
    stack: QUndoStack,
    session: Session,
    new: Mapping[str, ColumnChoice],
    text: str | None = None,
    merge_key: str | None = None,
) -> bool:
    """Push a SetChoices for the columns whose choice really changes; False if none does.

    Raises OptionError (before pushing anything) when a choice is not valid.
    """
    changed = {}
    for label, choice in new.items():
        choice = choice.normalized()
        if choice.method != "none" and not session.scalable(label):
            raise ScalewrightError(f"'{label}' is {session.why_not_scalable(label)}")
        if choice_key(choice) != choice_key(session.choice(label)):
            changed[label] = choice
    if not changed:
        return False
    labels = list(changed)
    if text is None:
        methods = {c.method for c in changed.values()}
        if len(methods) == 1:
            name = get_method(methods.pop()).name
            text = f"Scale {_short_list(labels)} with {name}"
        else:
            text = f"Change the scaling of {_short_list(labels)}"
    stack.push(SetChoices(session, changed, text, merge_key))
    return True


def set_method(stack: QUndoStack, session: Session, labels: list[str], method: str) -> bool:
    """Give every column in ``labels`` the method, keeping options it already had for it."""
    new = {}
    for label in labels:
        if not session.scalable(label):
            continue
        old = session.choice(label)
        options = dict(old.options) if old.method == method else {}
        new[label] = ColumnChoice(method, options)
    return push_choices(stack, session, new)


def set_option(stack: QUndoStack, session: Session, labels: list[str], name: str, value) -> bool:
    """Set one option on every column in ``labels`` (they share the method)."""
    new = {}
    for label in labels:
        old = session.choice(label)
        options = dict(old.options)
        options[name] = value
        new[label] = ColumnChoice(old.method, options)
    if not new:
        return False
    text = f"Set {name} for {_short_list(list(new))}"
    return push_choices(stack, session, new, text, merge_key=f"option:{name}")


def apply_suggestions(stack: QUndoStack, session: Session, labels: list[str]) -> dict[str, str]:
    """Give each scalable column the engine's suggestion as one undoable step.

    Returns label -> the suggestion's reason, for every column looked at.
    """
    new, reasons = {}, {}
    for label in labels:
        if not session.scalable(label):
            continue
        s = session.suggestion(label)
        new[label] = ColumnChoice(s.method, s.options)
        reasons[label] = s.reason
    if new:
        push_choices(stack, session, new, text=f"Suggest for {_short_list(list(new))}")
    return reasons


def push_settings(stack: QUndoStack, session: Session, new: FitSettings) -> bool:
    if new == session.settings:
        return False
    # Checked here, because an error raised inside QUndoCommand.redo cannot stop the push.
    if new.group_by is not None:
        if new.group_by not in session.labels:
            raise ScalewrightError(f"there is no column '{new.group_by}' to group by")
        if session.choice(new.group_by).method != "none":
            raise ScalewrightError(
                f"'{new.group_by}' is being scaled, so it cannot be the grouping column"
            )
    if new.fit_where is not None and new.fit_where[0] not in session.labels:
        raise ScalewrightError(f"there is no column '{new.fit_where[0]}' to choose rows by")
    if new.fit_where != session.settings.fit_where:
        text = (
            "Fit on all rows"
            if new.fit_where is None
            else f"Fit on rows where {new.fit_where[0]} is {new.fit_where[1]}"
        )
    elif new.group_by is None:
        text = "Fit without groups"
    else:
        text = f"Fit per group of {new.group_by}"
    stack.push(SetSettings(session, new, text))
    return True
