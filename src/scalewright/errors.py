"""Errors every layer raises, each meant to be shown to the user as one plain line.

They sit below every layer (no imports) so that the engine, io, project, command line and
window can all raise and catch the same types. The message names the file, column, row or
field involved; callers never need the traceback to tell the user what went wrong.
"""

from __future__ import annotations


class ScalewrightError(Exception):
    """Base class: ``str(err)`` is a complete, user-facing sentence."""


class ColumnError(ScalewrightError, ValueError):
    """A column cannot be fitted, applied or restored as asked."""

    def __init__(self, column: str, message: str) -> None:
        self.column = column
        super().__init__(f"column '{column}': {message}")


class OptionError(ScalewrightError, ValueError):
    """A method or option name/value the user gave is not valid."""


class ReadError(ScalewrightError):
    """A file could not be read; the message names the file (and row, where known)."""

    def __init__(self, path: object, message: str) -> None:
        self.path = str(path)
        super().__init__(f"{path}: {message}")


class UnsupportedFile(ReadError):
    """The file is not a table of a type that can be read (a README, a PDF, prose)."""


class WriteError(ScalewrightError):
    """A file could not be written; nothing was left behind at the target path."""

    def __init__(self, path: object, message: str) -> None:
        self.path = str(path)
        super().__init__(f"{path}: {message}")


class ProjectError(ScalewrightError):
    """A project file is invalid; the message names the field and the problem."""

    def __init__(self, where: object, message: str) -> None:
        self.where = str(where)
        super().__init__(f"{where}: {message}")


class Cancelled(ScalewrightError):
    """The user cancelled a long job; no partial output was left behind."""

    def __init__(self) -> None:
        super().__init__("cancelled")
