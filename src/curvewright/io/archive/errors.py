"""The archive's error: what could not be done, where, and how to put it right."""

from __future__ import annotations

from ...core.errors import CurvewrightError


class ArchiveError(CurvewrightError, ValueError):
    """The archive cannot be reached, read or written as asked (the message names the archive, what was
    being done and how to put it right)."""
