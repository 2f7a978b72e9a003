"""Typed exceptions. Core code raises these; the CLI turns them into one ``Error: ...`` line.

Every user mistake is a :class:`UserError` (exit status 2). Messages that concern an input file
name the file, the line and the field as ``FILE:LINE: field 'NAME': what is wrong``.
"""

from __future__ import annotations

from pathlib import Path


class SaltbenchError(Exception):
    """Base class of every error saltbench raises on purpose."""

    exit_code = 1


class UserError(SaltbenchError):
    """A mistake in what the user asked for or supplied; reported without a traceback."""

    exit_code = 2


class InputFileError(UserError):
    """A problem at a known place in an input file."""

    def __init__(self, path: str | Path, line: int | None, field: str | None, problem: str):
        self.path = str(path)
        self.line = line
        self.field = field
        self.problem = problem
        where = self.path if line is None else f"{self.path}:{line}"
        what = f"field '{field}': " if field else ""
        super().__init__(f"{where}: {what}{problem}")


class InputFileErrors(UserError):
    """Several input files failed; each keeps its own one-line message (file, line, field)."""

    def __init__(self, problems: list[InputFileError]):
        self.problems = problems
        super().__init__(f"{len(problems)} files have problems; nothing was added:\n"
                         + "\n".join(str(p) for p in problems))


class StoreError(UserError):
    """The store cannot be opened or used as asked (newer schema, unwritable path...)."""


class ModelError(SaltbenchError):
    """A model plugin misbehaved (raised, returned NaN or the wrong shape)."""


class ModelDomainError(UserError):
    """A model was asked for something outside what it supports (charge type, range)."""


class FitError(SaltbenchError):
    """A fit could not be set up or did not produce a usable result."""
