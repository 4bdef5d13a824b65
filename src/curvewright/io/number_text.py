"""Reading numbers typed or pasted by people, without silent corruption.

* Decimal comma and decimal point are both read, but one table uses one mark: the caller says
  which, or it is decided from the table as a whole (:func:`decimal_evidence`), as an analyst
  would: a value with other than three digits after its mark ("1.5", "0.101" with its leading
  zero, "1010.82" with four digits before) or with two marks ("1,234.5") decides it; in a
  comma-separated file an unquoted cell cannot hold a comma, so when no value holds one the mark
  is the point. Only when no value gives evidence are values such as "1,000" refused.
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

from ..core.notation import fixed
from ..core.number_words import PLAIN_BELOW, PLAIN_FROM, full_number  # noqa: F401  (read from here too)
from ..core.run import CENSORED_WORDS, Reading
# one set of patterns and words for the cells and for the analysis's account of text it cannot use
from ..core.unread_text import GROUPED_COMMA as _GROUPED_COMMA
from ..core.unread_text import GROUPED_OTHER as _GROUPED_OTHER
from ..core.unread_text import GROUPED_POINT as _GROUPED_POINT
from ..core.unread_text import MIXED_WORDS, NOT_A_NUMBER_WORDS, THOUSANDS_WORDS
from ..core.unread_text import PLAIN as _PLAIN
from ..core.unread_text import SPACES, clean  # noqa: F401  (read from here too)

_AMBIGUOUS = re.compile(r"^[+-]?[1-9]\d{0,2}[.,]\d{3}$")
"""1–3 digits (not starting with 0), one mark, exactly 3 digits: "1,000" and "2.500" read two ways;
"0.101" does not (a group of thousands never starts with 0)."""


@dataclass(frozen=True)
class ParsedCell:
    """The outcome of reading one cell: a reading, or the reason it could not be read."""

    reading: Reading | None
    problem: str | None = None


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
        if _GROUPED_POINT.match(t) or _GROUPED_COMMA.match(t) or _GROUPED_OTHER.match(t):
            return None, f"{THOUSANDS_WORDS}; remove them or say which separator the table uses"
        if t.count(",") + t.count(".") > 1:
            return None, f"{MIXED_WORDS}; it is not a number as it stands"
        return None, NOT_A_NUMBER_WORDS
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


@dataclass(frozen=True)
class DecimalEvidence:
    """What a table's values show about their decimal mark.

    ``point`` and ``comma`` count the values that show their mark, ``undecided`` those that read
    two ways ("1,000"); ``mark`` is the decision (None when the values conflict or show nothing)
    and ``note`` says how it was reached, in words for the analyst.
    """

    mark: str | None
    note: str
    point: int = 0
    comma: int = 0
    undecided: int = 0

    @property
    def conflict(self) -> bool:
        return bool(self.point and self.comma)


def decimal_evidence(tokens: list[str], delimiter: str | None = None) -> DecimalEvidence:
    """Decide the decimal mark from all of a table's numeric cells (``delimiter`` as the text was split).

    A value with one mark and other than three digits after it, or three digits after a leading
    zero or after more than three digits, shows its mark; a value with two marks ("1,234.5",
    "1.234.567") shows the decimal mark to be the other one. When no value shows it: in a
    comma-separated table with no value holding a comma the mark is the point (an unquoted cell
    cannot hold the delimiter); otherwise it stays undecided.
    """
    comma = point = undecided = 0
    holds_comma = False
    for token in tokens:
        t = clean(token).lstrip("<>≤≥").strip(SPACES)
        holds_comma = holds_comma or "," in t
        if _AMBIGUOUS.match(t):
            undecided += 1
        elif _PLAIN.match(t):
            if "," in t:
                comma += 1
            elif "." in t:
                point += 1
        elif _GROUPED_POINT.match(t):
            point += 1
        elif _GROUPED_COMMA.match(t):
            comma += 1
    if comma and point:
        return DecimalEvidence(
            None, f"both decimal marks appear ({_values(point)} with '.', {comma} with ',')", point, comma, undecided
        )
    if comma:
        return DecimalEvidence(",", f"decimal comma (shown by {_values(comma)})", point, comma, undecided)
    if point:
        return DecimalEvidence(".", f"decimal point (shown by {_values(point)})", point, comma, undecided)
    if delimiter == "," and not holds_comma:
        note = "decimal point (the columns are separated by commas and no value holds one)"
        return DecimalEvidence(".", note, point, comma, undecided)
    if undecided:
        return DecimalEvidence(
            None,
            f"no value shows the decimal mark: {_values(undecided)} with three digits after a single mark "
            "(such as '1,000') read either as a decimal or as thousands",
            point, comma, undecided,
        )
    return DecimalEvidence(None, "no value shows its decimal mark", point, comma, undecided)


def detect_decimal_mark(tokens: list[str], delimiter: str | None = None) -> tuple[str | None, str]:
    """The decimal mark a table's numeric tokens use, and how that was decided (:func:`decimal_evidence`).

    Returns (None, reason) when the tokens use both marks unambiguously or give no evidence.
    """
    evidence = decimal_evidence(tokens, delimiter)
    return evidence.mark, evidence.note


def thousands_separator_in(text: str) -> str | None:
    """The thousands separator a token such as "1,234.5", "12 500" or "1'000" appears to use."""
    t = clean(text).lstrip("<>≤≥").strip(SPACES)
    if _GROUPED_POINT.match(t):
        return ","
    if _GROUPED_COMMA.match(t):
        return "."
    match = re.match(r"^[+-]?\d+([ '’\u00a0\u202f])\d{3}", t)
    if match:
        return "'" if match.group(1) in "'’" else " "
    return None


def thousands_evidence(tokens: list[str], decimal_mark: str | None) -> tuple[str | None, str]:
    """The thousands separator a table's values show one way only, and how it was found.

    A value that is not a plain number and names a separator (:func:`thousands_separator_in`:
    "12.480,9", "1,234.5", "12 480", "1'000") counts for it. The separator is taken when every such value
    names the same one and it is not the table's decimal mark; otherwise none is taken and those values
    stay refused until the analyst names the separator. A value such as "1,000" that reads two ways
    counts for nothing.
    """
    found: dict[str, int] = {}
    example: dict[str, str] = {}
    for token in tokens:
        t = clean(token).lstrip("<>≤≥").strip()
        if not t or _PLAIN.match(t):
            continue
        sep = thousands_separator_in(t)
        if sep is not None:
            found[sep] = found.get(sep, 0) + 1
            example.setdefault(sep, t)
    if not found:
        return None, ""
    shown = {" ": "a space", "'": "an apostrophe"}
    if len(found) > 1:
        names = " and ".join(shown.get(sep, repr(sep)) for sep in found)
        return None, f"values group thousands with {names}; choose the separator the table uses"
    sep, count = next(iter(found.items()))
    if sep == decimal_mark:
        return None, f"{count} value(s) such as {example[sep]!r} group thousands with the decimal mark {sep!r}"
    return sep, f"thousands separator {shown.get(sep, repr(sep))} (shown by {count} value(s) such as {example[sep]!r})"


def number_for_editing(value: float, decimal_mark: str | None = None) -> str:
    """The text a cell's editor opens with: :func:`full_number` in the table's decimal mark, which
    :func:`parse_number` reads back as the same value. When the table's mark is not known, a value
    such as "1.125" that would read two ways is written "1.1250", which reads one way."""
    text = full_number(value, decimal_mark)
    if decimal_mark is None and ambiguous_problem(text):
        text += "0"
    return text


def _values(count: int) -> str:
    return f"{count} value" if count == 1 else f"{count} values"


def signed_text(value: float, decimals: int) -> str:
    """``value`` with ``decimals`` decimals and its sign, for a person ("+1.2", "−0.4" with the minus sign
    U+2212), except where it rounds to zero at those decimals: "0.0", with no sign, as a sign on zero would
    state a direction the printed digits do not have (a %RE of 0.017 % at one decimal is "0.0", not
    "+0.0"; −1e-14 is "0.00", not "−0.00"): :func:`curvewright.core.notation.fixed`."""
    return fixed(value, decimals, plus=True)


def percent_beside_limits(value: float, usual: int, centre: float, window: float | None, signed: bool = False) -> str:
    """A recovery or %RE judged within ``centre`` ± ``window`` (None: not judged), printed with
    ``usual`` decimals, or with more where ``usual`` would show it on or across a limit it does not
    lie on (:func:`curvewright.core.limit_digits.decimals_beside_limits`): 115.01 beside FAIL, never
    "115.0". The workbook's and the record's tables apply the same rule (``"beside:"`` columns of
    :mod:`.result_tables`)."""
    from ..core.limit_digits import decimals_beside_limits

    decimals = usual
    if window is not None and math.isfinite(value) and math.isfinite(window):
        decimals = decimals_beside_limits(value, usual, (centre - window, centre + window))
    return fixed(value, decimals, plus=signed)
