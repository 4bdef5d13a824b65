"""Errors of reading and writing files. Each names the file, the row or path, and the reason."""

from __future__ import annotations

from ..core.errors import CurvewrightError


class DocumentError(CurvewrightError, ValueError):
    """A run document cannot be opened: malformed JSON, wrong version, invalid content.

    ``problems`` lists every problem found, each with its path in the document
    (e.g. ``analytes[0].standards[3].concentration``).
    """

    def __init__(self, message: str, problems: tuple[str, ...] = ()) -> None:
        super().__init__(message if not problems else message + "\n" + "\n".join(f"  - {p}" for p in problems))
        self.problems = problems


class ImportProblem(CurvewrightError, ValueError):
    """A table cannot be imported as asked (ambiguous separators, no usable columns, unreadable file)."""


class ExportError(CurvewrightError, OSError):
    """A file cannot be written (locked, not writable, disk full); nothing was lost."""
