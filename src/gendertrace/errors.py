"""Errors the command line turns into one-line messages naming the file, the line and what was expected."""

from __future__ import annotations


class GendertraceError(Exception):
    """Base class of the errors the tool reports to its user (never as a traceback)."""


class InputError(GendertraceError):
    """Bad input: names the file, the line (when known) and what was expected."""

    def __init__(self, path: str, line: int | None, message: str) -> None:
        self.path = str(path)
        self.line = line
        self.message = message
        where = f"{self.path}:{line}" if line else self.path
        super().__init__(f"{where}: {message}")


class RulesError(GendertraceError):
    """A rules file that does not match its schema: names the file and the key."""

    def __init__(self, path: str, key: str, message: str) -> None:
        self.path = str(path)
        self.key = key
        super().__init__(f"{path}: {key}: {message}")


class ModelError(GendertraceError):
    """A language pipeline that cannot be loaded."""
