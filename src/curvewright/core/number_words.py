"""Numbers written as words for a reader: every digit a value holds, as it was entered.

Pure Python (no numpy, no Qt), so that the core's own verdict texts, the command line, the app, the
workbook and the record write an entered value the same way.
"""

from __future__ import annotations

import math

PLAIN_FROM = 1e-6
PLAIN_BELOW = 1e15
"""Magnitudes written without an exponent by :func:`full_number` (zero too): every value a laboratory
types for a concentration, a dilution factor or a response; an exponent only beyond them."""


def full_number(value: float, decimal_mark: str | None = None) -> str:
    """A number written with every digit it holds, so that reading the text back gives the same value
    bit for bit: the shortest such digits (Python's ``repr``), written out without an exponent for
    magnitudes from 1e-6 to below 1e15 ("1234567", "0.000025", "4.123456789"), with one beyond them
    ("2.5e-09"). ``decimal_mark`` "," writes a decimal comma; any other value a point."""
    if not math.isfinite(value):
        return repr(value)
    text = repr(float(value))
    if value == 0 or PLAIN_FROM <= abs(value) < PLAIN_BELOW:
        if "e" in text:  # a repr without an exponent is written out already, as Decimal writes it ("2.5", "0.0001")
            from decimal import Decimal  # loaded when first needed: not on the command line's start-up path

            text = format(Decimal(text), "f")
        if "." in text:
            text = text.rstrip("0").rstrip(".")
        text = "0" if text in ("-0", "") else text
    return text.replace(".", ",") if decimal_mark == "," else text
