"""Reading numbers typed or pasted by people, without silent corruption.

* Decimal comma and decimal point are both read, but one table uses one mark: the caller says
  which, or it is detected from the table as a whole (:func:`detect_decimal_mark`).
* Thousands separators are refused unless the caller names the separator; a token such as
  "1,000" that reads either as one or as a thousand is refused until the caller says which.
* Spaces, non-breaking and narrow no-break spaces around a value are stripped.
* Censored tokens ("<0.5", ">200", "ND", "BLQ") are kept as censored readings, never turned
  into numbers or zeros.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

from ..core.run import CENSORED_WORDS, Reading

SPACES = "\u00a0\u202f\u2007\u2009 \t"
_PLAIN = re.compile(r"^[+-]?(\d+([.,]\d*)?|[.,]\d+)([eE][+-]?\d+)?$")
_GROUPED_POINT = re.compile(r"^[+-]?\d{1,3}(,\d{3})+(\.\d*)?$")
_GROUPED_COMMA = re.compile(r"^[+-]?\d{1,3}(\.\d{3})+(,\d*)?$")
_AMBIGUOUS = re.compile(r"^[+-]?[1-9]\d{0,2}[.,]\d{3}$")
"""1–3 digits (not starting with 0), one mark, exactly 3 digits: "1,000" and "2.500" read two ways;
"0.101" does not (a group of thousands never starts with 0)."""


@dataclass(frozen=True)
class ParsedCell:
    """The outcome of reading one cell: a reading, or the reason it could not be read."""

    reading: Reading | None
    problem: str | None = None


def clean(text: str) -> str:
    return text.strip(SPACES).replace("\u2212", "-")


def ambiguous_problem(text: str) -> str | None:
    """Why a token such as "1,000" or "2.500" cannot be read without being told the decimal mark."""
    t = clean(text).lstrip("<>≤≥").strip(SPACES)
    if _AMBIGUOUS.match(t):
        mark = "," if "," in t else "."
        return (
            f"is ambiguous: it reads as {t.replace(mark, '.')} or as {t.replace(mark, '')}; "
            "say which decimal mark (and thousands separator) the table uses"
        )
    return None


def parse_reading(text: str, decimal_mark: str | None, thousands: str | None = None) -> ParsedCell:
    """Read one cell. ``decimal_mark`` is "." or ","; None means not yet known (refuse what depends on it)."""
    raw = text
    t = clean(text)
    if not t:
        return ParsedCell(Reading(None, raw))
    upper = t.upper().replace(" ", "")
    if upper in CENSORED_WORDS or upper in ("N.D.", "N/D"):
        return ParsedCell(Reading(None, raw, qualifier=upper.replace(".", "").replace("/", "") if upper in ("N.D.", "N/D") else upper))
    if t[0] in "<>≤≥":
        sign = t[0]
        rest = clean(t[1:])
        inner = parse_reading(rest, decimal_mark, thousands)
        if inner.reading is None or not inner.reading.is_number:
            return ParsedCell(None, f"{raw!r}: a censored value needs a number after '{sign}' (e.g. '<0.5')")
        return ParsedCell(Reading(None, raw, qualifier=sign, limit=inner.reading.value))
    value, problem = parse_number(t, decimal_mark, thousands)
    if problem:
        return ParsedCell(None, f"{raw!r}: {problem}")
    return ParsedCell(Reading(value, raw))


def parse_number(t: str, decimal_mark: str | None, thousands: str | None = None) -> tuple[float | None, str | None]:
    """The number in cleaned text ``t``, or (None, the reason)."""
    if thousands is not None:
        if thousands == decimal_mark:
            return None, "the thousands separator cannot also be the decimal mark"
        grouped = _GROUPED_POINT if thousands == "," else _GROUPED_COMMA if thousands == "." else None
        if thousands in (" ", "'"):
            t = t.replace(thousands, "")
        elif grouped is not None and grouped.match(t):
            t = t.replace(thousands, "")
    if not _PLAIN.match(t):
        if _GROUPED_POINT.match(t) or _GROUPED_COMMA.match(t) or re.match(r"^[+-]?\d+[ '’]\d{3}", t):
            return None, "has thousands separators; remove them or say which separator the table uses"
        if t.count(",") + t.count(".") > 1:
            return None, "mixes decimal marks or separators; it is not a number as it stands"
        return None, "is not a number"
    mark = "," if "," in t else "." if "." in t else None
    if mark is not None:
        if decimal_mark is None:
            problem = ambiguous_problem(t)
            if problem:
                return None, problem
            decimal_mark = mark
        if mark != decimal_mark:
            return None, f"uses '{mark}' but the table's decimal mark is '{decimal_mark}'"
        t = t.replace(",", ".")
    try:
        value = float(t)
    except ValueError:
        return None, "is not a number"
    if not math.isfinite(value):
        return None, "is not a finite number"
    return value, None


def detect_decimal_mark(tokens: list[str]) -> tuple[str | None, str]:
    """The decimal mark a table's numeric tokens use, and how that was decided.

    Returns (None, reason) when the tokens use both marks unambiguously or give no evidence.
    """
    comma = point = 0
    for token in tokens:
        t = clean(token).lstrip("<>≤≥").strip(SPACES)
        if not _PLAIN.match(t) or _AMBIGUOUS.match(t):
            continue
        if "," in t:
            comma += 1
        elif "." in t:
            point += 1
    if comma and point:
        return None, f"both decimal marks appear ({point} values with '.', {comma} with ','); say which the table uses"
    if comma:
        return ",", f"decimal comma detected ({comma} values)"
    if point:
        return ".", f"decimal point detected ({point} values)"
    return None, "no value shows its decimal mark"
