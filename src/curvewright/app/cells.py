"""Turning what the analyst types into a cell into values, keeping the text when it is not a number."""

from __future__ import annotations

import math

from ..core.run import Reading
from ..core.unread_text import why_not_read
from ..io.number_text import clean, parse_number, parse_reading


def reading_from_text(text: str, decimal_mark: str | None = None,
                      thousands: str | None = None) -> tuple[Reading, str | None]:
    """A reading and, when the text is not usable, why (the text is kept either way).

    ``decimal_mark`` is the analyst's stated mark ("." or ","); None refuses tokens that read two ways.
    ``thousands`` the separator a pasted block groups thousands with; None refuses grouped values.
    The kept text is the cell's text trimmed of spaces around it, as the analyst would type it again.
    """
    text = text.strip()  # kept as the analyst would type it again: a pasted "a; b" keeps no space before b
    parsed = parse_reading(text, decimal_mark, thousands)
    if parsed.reading is not None:
        return parsed.reading, None
    return Reading(None, text), (parsed.problem or why_not_read(text)).split(": ", 1)[-1]


def number_from_text(text: str, decimal_mark: str | None = None,
                     thousands: str | None = None) -> tuple[float, str | None]:
    """A finite number, or NaN and why (``thousands`` as for :func:`reading_from_text`)."""
    t = clean(text)
    if not t:
        return math.nan, "empty: a number is needed here"
    value, problem = parse_number(t, decimal_mark, thousands)
    if problem or value is None:
        return math.nan, problem or "not a number"
    return value, None


def reading_problem(reading: Reading | None, decimal_mark: str | None = None) -> str | None:
    """Why a stored reading is not usable (None when it is a number, censored or empty); where its text
    reads now (the decimal mark was changed since), why it was not read when entered."""
    if reading is None or not reading.is_unreadable:
        return None
    return reading_from_text(reading.text, decimal_mark)[1] or why_not_read(reading.text)


def display_reading(reading: Reading | None) -> str:
    return "" if reading is None else reading.text.strip()
