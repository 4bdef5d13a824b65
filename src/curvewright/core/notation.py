"""One notation for every number Curvewright writes for a person.

The digits come from elsewhere; this module decides only how they are written:

* an entered value (a nominal concentration, a dilution factor, a QC level, a range end taken from
  the standards) keeps every digit it was entered with (:func:`.number_words.full_number`):
  :func:`entered`;
* a computed value (LOD, LOQ, x_c, y_c, x_d, an estimate, an interval's ends) has the digits the
  run's rounding rule gives it (:class:`.rounding.RoundingRule`): :func:`computed`,
  :func:`computed_within`; a statistic no rule governs (a test statistic, a p-value, a coefficient)
  the significant figures its caller states: :func:`figures`.

The notation. A magnitude from ``PLAIN_FROM`` (1e-4) to below ``PLAIN_BELOW`` (1e7), and zero, is
written in plain decimals ("0.000250", "2500000"); a magnitude outside it in scientific notation with
the same significant digits, "3.20 × 10⁻⁵" (a multiplication sign between no-break spaces and a
superscript exponent; the mantissa's minus as the plain text writes it). The bounds (common
practice, our choice): a laboratory writes 0.0001 to 9 999 999 plainly (mg/L, µg/L, counts of a few
million), while four zeros after the decimal point or eight digits before it are miscounted at a
glance. Both ends of a range are written in the same notation (:func:`span`): if either needs an
exponent, both have one. Whether a value is plain is judged on the written (rounded) value, so 9999999.7
rounded to 1.00 × 10⁷ is written with its exponent.

The minus sign. Text for a person writes a negative number with the minus sign U+2212 ("−0.042",
"−3.2 × 10⁻⁵"), as the equations write their terms, so that a sign is never read as a hyphen or a
dash beside the en dash between an interval's ends; text for programs (:func:`machine`, the
``machine`` form of :func:`written`) writes the ASCII hyphen-minus, which ``float()`` and every
spreadsheet read. :func:`written` is the one place a person's minus is made.

Python's exponent forms ("1e-06", "3e+06") are never shown to a person. Where a file's text field is
read by programs (CSV cells, JSON strings), :func:`machine` writes the same digits as "3.20e-5",
which every spreadsheet and ``float()`` read back; JSON numbers stay numbers and workbook cells that
hold numbers stay numbers (their number format is :func:`excel_format`).

Pure Python (no numpy, no Qt).
"""

from __future__ import annotations

import math
import re
from decimal import Decimal, InvalidOperation

from .number_words import full_number

# "RoundingRule" in the annotations is .rounding.RoundingRule, not imported: the rule's module reads this one
# (a rounded text's notation), and the core's modules form no circle

PLAIN_FROM = Decimal("1e-4")
PLAIN_BELOW = Decimal("1e7")
"""Magnitudes written in plain decimals (zero too); an exponent outside them."""

MINUS = "\u2212"
"""The minus sign of a negative number written for a person (U+2212)."""
_HYPHEN_SIGN = re.compile(r"^-(?=[\d.,])")
_HUMAN_SIGN = re.compile(r"\u2212(?=[\d.,])")

TIMES = "\u00a0×\u00a010"
"""Between the mantissa and the power: no-break spaces, so that a table cell never breaks a number."""
_SUPERSCRIPT = str.maketrans("0123456789-", "⁰¹²³⁴⁵⁶⁷⁸⁹⁻")


def _parsed(text: str) -> tuple[Decimal, str] | None:
    """The decimal a number's text holds and its decimal mark; None for a text that is no number
    ("", "∞", "no solution")."""
    mark = "," if "," in text else "."
    try:
        d = Decimal(text.strip().replace("−", "-").replace(",", "."))
    except InvalidOperation:
        return None
    return (d, mark) if d.is_finite() else None


_SURELY_PLAIN = re.compile(r"^-?(?:[1-9]\d{0,6}(?:[.,]\d*)?|0(?:[.,](?:0{0,3}[1-9]\d*|0*))?)$")
"""Texts plain at a glance, read without a decimal: 1 to 9 999 999.…, 0.0001… and above, zero."""


_SMALL = re.compile(r"^(-?)0([.,])(0{4,})(\d+)$")
"""A decimal below 1e-4 written out: sign, mark, the zeros after the mark, its significant digits."""


def is_plain(text: str) -> bool:
    """Whether the number ``text`` holds is written without an exponent (texts that are no number: True)."""
    if _SURELY_PLAIN.match(text):
        return True
    parsed = _parsed(text)
    if parsed is None:
        return True
    d = parsed[0]
    return d.is_zero() or PLAIN_FROM <= abs(d) < PLAIN_BELOW


def _digits(d: Decimal, significant: int | None, padded: bool = True) -> tuple[str, int]:
    """The significant digits of ``d`` and the power of ten of the first. A whole number's trailing
    zeros written out (``padded``: not in an exponent form) are padding, as a reader takes them, unless
    ``significant`` says how many digits it holds."""
    sign, digits, exponent = d.as_tuple()
    shown = "".join(map(str, digits)).lstrip("0") or "0"
    first = d.adjusted()
    if significant is not None:
        keep = max(significant, len(shown.rstrip("0")))
        shown = (shown + "0" * keep)[:keep]
    elif padded and isinstance(exponent, int) and exponent >= 0:
        shown = shown.rstrip("0") or "0"
    return shown, first


def written(text: str, *, significant: int | None = None, scientific: bool | None = None,
            machine: bool = False) -> str:
    """A number's plain text in this module's notation, a negative one with the person's minus sign
    (``machine``: the hyphen-minus programs read); see :func:`_written`."""
    if not scientific and _SURELY_PLAIN.match(text):  # the common case, plain as it stands
        return MINUS + text[1:] if text[:1] == "-" and not machine else text
    out = _written(text, significant=significant, scientific=scientific, machine=machine)
    if machine:
        return _HUMAN_SIGN.sub("-", out) if MINUS in out else out
    return _HYPHEN_SIGN.sub(MINUS, out) if out[:1] == "-" else out


def _written(text: str, *, significant: int | None = None, scientific: bool | None = None,
             machine: bool = False) -> str:
    """A number's plain text (as a rounding rule, :func:`.number_words.full_number` or a format gives it)
    in the notation of this module: unchanged where plain, else "3.20 × 10⁻⁵" (``machine``: "3.20e-5").
    ``significant`` is the count of significant figures the text holds when it is a whole number whose
    trailing zeros are digits ("12000000" rounded to 3 figures). ``scientific`` forces the choice (a
    range's ends). A text that is no number ("", "∞") is returned as it is."""
    if not scientific and _SURELY_PLAIN.match(text):
        return text
    small = _SMALL.match(text) if significant is None else None
    if small is not None and small.group(4)[0] != "0":  # "0.0000320": its digits read off the text
        sign, mark, zeros, shown = small.groups()
        mantissa = shown[0] + (mark + shown[1:] if len(shown) > 1 else "")
        power = -(len(zeros) + 1)
        return f"{sign}{mantissa}e{power}" if machine else f"{sign}{mantissa}{TIMES}{str(power).translate(_SUPERSCRIPT)}"
    parsed = _parsed(text)
    if parsed is None:
        return text
    d, mark = parsed
    exponent_form = not is_plain(text) if scientific is None else scientific
    if not exponent_form or d.is_zero():
        return format(d, "f").replace(".", mark) if "e" in text.lower() else text
    shown, power = _digits(d, significant, "e" not in text.lower())
    mantissa = shown[0] + (mark + shown[1:] if len(shown) > 1 else "")
    sign = "-" if d.is_signed() else ""
    if machine:
        return f"{sign}{mantissa}e{power}"
    return f"{sign}{mantissa}{TIMES}{str(power).translate(_SUPERSCRIPT)}"


_WRITTEN = re.compile(r"(-?\d+(?:[.,]\d+)?)[ \u00a0]×[ \u00a0]10([⁻⁰¹²³⁴⁵⁶⁷⁸⁹]+)")
_PLAIN_SUPERSCRIPT = str.maketrans("⁰¹²³⁴⁵⁶⁷⁸⁹⁻", "0123456789-")


def machine(text: str) -> str:
    """A text for a file's text field (a CSV cell, a JSON string): every number :func:`written` put in
    scientific notation ("< 3.20 × 10⁻⁵ mg/L (LLOQ)") in the form programs read ("< 3.20e-5 mg/L
    (LLOQ)"), and a person's minus sign before a number as the hyphen-minus ("−0.042": "-0.042");
    the rest unchanged."""
    if MINUS in text:
        text = _HUMAN_SIGN.sub("-", text)  # a person's minus sign before a number: the hyphen-minus
    if "×" not in text:
        return text
    return _WRITTEN.sub(lambda m: f"{m.group(1)}e{m.group(2).translate(_PLAIN_SUPERSCRIPT)}", text)


def span(low: str, high: str, between: str = "–", *, significant: int | None = None,
         machine: bool = False) -> str:
    """Both ends of a range, given as plain texts (as :func:`written` takes them), written in one
    notation: with an exponent if either needs one."""
    scientific = not (is_plain(low) and is_plain(high))
    return (written(low, significant=significant, scientific=scientific, machine=machine) + between
            + written(high, significant=significant, scientific=scientific, machine=machine))


def entered(value: float, decimal_mark: str | None = None) -> str:
    """An entered value with every digit it holds, in this module's notation ("0.0025", "1 × 10⁻⁶")."""
    if not math.isfinite(value):
        return full_number(value)
    return written(full_number(value, decimal_mark))


def entered_span(low: float, high: float, between: str = "–") -> str:
    """A range whose ends were entered (the standards' lowest and highest nominal concentrations):
    every digit of each, both in one notation ("1 × 10⁻⁶–3.2 × 10⁻⁵", "150000–3000000")."""
    return span(full_number(low), full_number(high), between)


def computed(value: float, rule: "RoundingRule") -> str:
    """A computed value rounded by the run's rule (:meth:`.rounding.RoundingRule.text`), in this
    module's notation."""
    return written(rule.text(value), significant=rule.digits if rule.kind == "significant" else None)


def computed_within(value: float, lower: float | None, upper: float | None, rule: "RoundingRule",
                    text: str | None = None) -> str:
    """:meth:`.rounding.RoundingRule.text_within` (never coarser than the interval supports; ``text``
    when the caller has it already) in this module's notation. A decimal text shows its figures; a
    whole number's trailing zeros are figures where the rule's own text stands, or down to the
    interval's place."""
    text = rule.text_within(value, lower, upper) if text is None else text
    if _SURELY_PLAIN.match(text):
        return _HYPHEN_SIGN.sub(MINUS, text) if text[:1] == "-" else text
    if "." in text or "," in text:
        return written(text)  # its zeros after the mark are figures
    if text == rule.text(value):
        return written(text, significant=rule.digits if rule.kind == "significant" else None)
    places = rule.places_within(value, lower, upper)  # the interval's place: its zeros are digits
    parsed = _parsed(text)
    if places is None or parsed is None or parsed[0].is_zero():
        return written(text)
    return written(text, significant=max(1, parsed[0].adjusted() + places + 1))


def figures(value: float, significant: int) -> str:
    """A statistic no rounding rule governs (a test statistic, a p-value, a coefficient) to
    ``significant`` figures as Python's "g" format gives them (trailing zeros dropped), in this
    module's notation: "2.564 × 10⁻⁷", "0.0123", "3000000"; "—" for a statistic that is not a number."""
    if not math.isfinite(value):
        return "—" if math.isnan(value) else ("∞" if value > 0 else "−∞")
    text = f"{value:.{significant}g}"
    return written(format(Decimal(text), "f") if "e" in text else text)


def fixed(value: float, places: int, *, plus: bool = False, machine: bool = False) -> str:
    """``value`` with ``places`` decimals for a person: a negative value with the minus sign ("−2.97";
    ``machine``: the hyphen-minus programs read), a positive one with "+" where ``plus`` asks for its
    direction ("+2.97", a %RE or a z-score), and a value that rounds to zero at those decimals with no
    sign ("0.00", never "−0.00" or "+0.00": a sign would state a direction the printed digits do not
    have). A value that is not a number: as :func:`figures` writes it."""
    if not math.isfinite(value):
        return figures(value, 1)
    text = f"{value:+.{places}f}"
    if text[1:].strip("0.") == "":
        return text[1:]
    if text[0] == "-":
        return ("-" if machine else MINUS) + text[1:]
    return text if plus else text[1:]


P_FIGURES = 3
"""The significant figures every p-value is shown with (text, tables, workbook, record; common practice)."""


def p_text(value: float, significant: int = P_FIGURES) -> str:
    """A p-value as a table cell shows it, to ``significant`` figures as :func:`figures` gives them
    ("0.994", "2.6 × 10⁻⁷"); a p-value below 1 whose figures round up to 1 is "> 0.999" (as many nines
    as figures), so that a test's p is never shown as certain; a p of exactly 1 (a statistic of zero)
    is "1"."""
    text = figures(value, significant)
    if text == "1" and value < 1.0:
        return f"> 0.{'9' * significant}"
    return text


def p_equals(value: float, significant: int) -> str:
    """A p-value in running text, to ``significant`` figures as :func:`figures` gives them: "p = 0.994",
    "p = 2.6 × 10⁻⁷". A p-value below 1 whose figures round up to 1 is written "p > 0.999" (as many nines
    as figures), so that a test's p is never shown as certain; a p of exactly 1 (a statistic of zero) is
    "p = 1"."""
    text = p_text(value, significant)
    return f"p {text}" if text.startswith(">") else f"p = {text}"


def excel_format(text: str, significant: int | None = None, scientific: bool | None = None) -> str:
    """A workbook number format that shows a cell's number with the digits and notation :func:`written`
    gives its plain ``text`` (the rule's text, before the notation): "0.000" for "0.123"; "0.00E+00"
    for "0.0000320" (written "3.20 × 10⁻⁵"; a spreadsheet's number formats know only their own
    exponent form)."""
    parsed = _parsed(text)
    if parsed is None:
        return "General"
    d = parsed[0]
    if (is_plain(text) if scientific is None else not scientific) or d.is_zero():
        places = max(0, -d.as_tuple().exponent) if isinstance(d.as_tuple().exponent, int) else 0
        return "0." + "0" * places if places else "0"
    shown, _ = _digits(d, significant, "e" not in text.lower())
    return ("0." + "0" * (len(shown) - 1) if len(shown) > 1 else "0") + "E+00"
