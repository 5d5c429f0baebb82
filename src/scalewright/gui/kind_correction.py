"""Reading a column as another kind, from the column list, as one undoable step.

The file is read again through ``io`` with the correction added to ``ReadOptions.kinds``
(so the saved project keeps it, and apply and restore read new files with it); the
correction is refused with the row that does not fit when the cells do not allow it.
Both tables stay in memory, so Undo and Redo show them again without reading the file.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from typing import Any

from PySide6.QtGui import QUndoCommand

from .. import io as swio
from ..session import column_facts


@dataclass(frozen=True)
class Shown:
    """A table with its column facts (worked out in the reading job)."""

    table: Any
    facts: Any


def corrected_options(table: Any, label: str, kind: str) -> swio.ReadOptions:
    """The table's read options with ``label`` read as ``kind``."""
    kinds = {**table.options.kinds, label: str(kind)}
    return dataclasses.replace(table.options, kinds=kinds)


def show(session: Any, shown: Shown, label: str, choices: dict | None = None) -> None:
    """Load ``shown`` into the session, keeping every choice a number column can hold
    (or ``choices``), the settings, the project path and the saved parameters kept from
    a project."""
    table = shown.table
    numbers = {lab for lab, kind in table.kinds.items() if kind is swio.ColumnKind.NUMBER}
    wanted = session.choices if choices is None else choices
    choices = {lab: c for lab, c in wanted.items() if lab in numbers}
    kept = {
        lab: (fc, on)
        for lab in choices
        if lab != label
        and (on := session.fitted_on(lab)) is not None
        and (fc := session.fitted_column(lab)) is not None
    }
    selection = session.selection
    session.load_table(
        table,
        choices=choices,
        settings=session.settings,
        project_path=session.project_path,
        fitted={lab: fc for lab, (fc, _on) in kept.items()},
        fitted_on={lab: on for lab, (_fc, on) in kept.items()},
        facts=shown.facts,
        dirty=True,
    )
    if session.scalable(label):
        session.set_selection([label])
    else:
        session.set_selection([lab for lab in selection if session.scalable(lab)])


class CorrectKind(QUndoCommand):
    """Read one column as another kind (both tables kept: Undo reads nothing)."""

    def __init__(self, session: Any, label: str, kind: str, before: Shown, after: Shown):
        super().__init__(f"Read {label} as {kind}")
        self.session, self.label = session, label
        self.before, self.after = before, after
        self.choices_before = session.choices  # what Undo gives back

    def redo(self) -> None:
        show(self.session, self.after, self.label)

    def undo(self) -> None:
        show(self.session, self.before, self.label, self.choices_before)


def start(window: Any, label: str, kind: str):
    """Read the window's file again with ``label`` as ``kind`` in a background job; push
    the change on the undo stack when it is read (a refusal is shown, nothing changes)."""
    session = window.session
    table, bins = session.table, session.bins
    options = corrected_options(table, label, kind)

    def work(progress, cancelled):
        new = swio.read_table(table.source, options, progress=progress, cancelled=cancelled)
        return Shown(new, column_facts(new, bins, cancelled)), column_facts(table, bins, cancelled)

    def done(result) -> None:
        after, old_facts = result
        before = Shown(table, old_facts)
        window.stack.push(CorrectKind(session, label, kind, before, after))
        window.notify(f"{session.header(label)} is now read as {kind}")

    return window.jobs.run(
        f"Reading {label} as {kind}",
        work,
        done,
        window.show_message,
        lambda: window.notify(f"Stopped; {label} is read as before"),
    )
