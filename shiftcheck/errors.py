"""One exception family for everything shiftcheck refuses.

The command line turns any :class:`ShiftcheckError` into a single line
``shiftcheck: error: FILE:LINE: message`` and exit code 2 (a traceback only with
``--debug``). Library users catch :class:`ShiftcheckError`.
"""
from __future__ import annotations

__all__ = ["ShiftcheckError", "InputError", "MappingError", "ParameterError", "OutputError"]


class ShiftcheckError(Exception):
    """Base class. ``path`` and ``line`` say where the problem is, when known."""

    def __init__(self, message: str, path: str | None = None, line: int | None = None):
        super().__init__(message)
        self.message = message
        self.path = None if path is None else str(path)
        self.line = line

    def __str__(self) -> str:
        where = ""
        if self.path:
            where = self.path + (f":{self.line}" if self.line else "") + ": "
        # always one line
        return where + " ".join(str(self.message).split())


class InputError(ShiftcheckError):
    """A file cannot be read or does not hold what is needed."""


class MappingError(ShiftcheckError):
    """Shifts and coordinates cannot be put in correspondence (e.g. another protein)."""


class ParameterError(ShiftcheckError):
    """A parameter file is malformed or incomplete."""


class OutputError(ShiftcheckError):
    """An output location cannot be used (non-empty directory without --force, ...)."""
