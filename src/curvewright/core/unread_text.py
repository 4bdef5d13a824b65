"""Why a value kept as typed was not read as a number, in the words the tables' cells use.

A response or concentration whose text could not be read is kept as typed (never dropped) and the
analysis reports it as not usable. The cell that holds it says why, read with the table's decimal mark
and thousands separator (:mod:`curvewright.io.number_text`); the analysis does not know those, so it
says what the text alone shows, with the same words: a value written with thousands separators
("7.401,5", "1,234.5", "12 480") "has thousands separators", one with two marks that are not a
grouping "mixes decimal marks or separators", a plain number with one mark ("1,000", "7,5") was not
read for its decimal mark, and anything else "is not a number". The patterns here are the ones the
cells are read with, so the two never disagree.
"""

from __future__ import annotations

import re
import unicodedata

SPACES = "\u00a0\u202f\u2007\u2009 \t"
"""Spaces stripped around a value: no-break, narrow no-break, figure and thin spaces, space and tab."""
PLAIN = re.compile(r"^[+-]?(\d+([.,]\d*)?|[.,]\d+)([eE][+-]?\d+)?$")
"""A number with at most one mark and no grouping."""
GROUPED_POINT = re.compile(r"^[+-]?\d{1,3}(,\d{3})+(\.\d*)?$")
"""Thousands grouped with commas, a decimal point: "1,234.5"."""
GROUPED_COMMA = re.compile(r"^[+-]?\d{1,3}(\.\d{3})+(,\d*)?$")
"""Thousands grouped with points, a decimal comma: "12.480,9"."""
GROUPED_OTHER = re.compile(r"^[+-]?\d+[ '’]\d{3}")
"""Thousands grouped with a space or an apostrophe: "12 480", "1'000"."""

THOUSANDS_WORDS = "has thousands separators"
MIXED_WORDS = "mixes decimal marks or separators"
NOT_A_NUMBER_WORDS = "is not a number"
DECIMAL_MARK_WORDS = ("was not read as a number: it reads one way with a decimal point and another with a decimal "
                      "comma, or its mark is not the table's")


def clean(text: str) -> str:
    """The text as a number is read from it: spaces around it stripped, the minus sign as "-", and
    digits of any script (full-width "１", Arabic-Indic "١"…) and full-width signs and marks as their
    ASCII forms."""
    t = text.strip(SPACES).replace("\u2212", "-")
    return t if t.isascii() else _ascii_digits(t)


def _ascii_digits(text: str) -> str:
    folded = unicodedata.normalize("NFKC", text)  # full-width digits, signs, comma and full stop
    return "".join(str(unicodedata.decimal(c)) if not c.isascii() and c.isdecimal() else c
                   for c in folded).strip(SPACES).replace("\u2212", "-")


def is_grouped(t: str) -> bool:
    """Whether cleaned text ``t`` is a number written with thousands separators."""
    return bool(GROUPED_POINT.match(t) or GROUPED_COMMA.match(t) or GROUPED_OTHER.match(t))


def why_not_read(text: str) -> str:
    """Why ``text``, kept as typed, is not a usable number, from the text alone (see the module)."""
    t = clean(text)
    if is_grouped(t):
        return f"{THOUSANDS_WORDS}, so it was not read as a number"
    if PLAIN.match(t):
        return DECIMAL_MARK_WORDS
    if t.count(",") + t.count(".") > 1:
        return f"{MIXED_WORDS}; it is not a number as it stands"
    return NOT_A_NUMBER_WORDS
