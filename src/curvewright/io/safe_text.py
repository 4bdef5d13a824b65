"""Keeping text text: no exported cell may become a formula the user did not ask for.

In XLSX every text is a string cell, never a formula. In CSV, text that a spreadsheet would
evaluate is written with a leading apostrophe, the usual spreadsheet sign for "this is text" (the
CSV's header line says so). The rule follows the OWASP "CSV Injection" guidance: a cell beginning
with ``=``, ``+``, ``-``, ``@``, a tab or a carriage return is prefixed with a single quote. It is
applied after any leading spaces, no-break spaces, zero-width and other invisible characters or a
byte-order mark (which spreadsheets skip before they look for a formula), and to the full-width
forms ``＝ ＋ － ＠`` as well; a line feed at the start counts like a carriage return. A text that is
exactly a plain number ("-12.5", "+3", "1,5e-3") is a number, not a formula, and stays as it is.
"""

from __future__ import annotations

import re
import unicodedata

FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r", "\n", "＝", "＋", "－", "＠")
ILLEGAL_XML = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f\ud800-\udfff\ufffe\uffff]")
_PLAIN_NUMBER = re.compile(r"[-+]?(?:\d+(?:[.,]\d*)?|[.,]\d+)(?:[eE][-+]?\d+)?")
_INVISIBLE_CATEGORIES = ("Zs", "Zl", "Zp", "Cc", "Cf")


def _visible_start(text: str) -> str:
    """``text`` without the leading characters a spreadsheet skips: spaces of every kind, control
    and format characters (zero-width space and joiners, byte-order mark, direction marks)."""
    for i, c in enumerate(text):
        if unicodedata.category(c) not in _INVISIBLE_CATEGORIES:
            return text[i:]
    return ""


def looks_like_formula(text: str) -> bool:
    """True when a spreadsheet could read ``text`` as a formula (see the module docstring)."""
    if not text:
        return False
    if _PLAIN_NUMBER.fullmatch(text):
        return False
    return text.startswith(FORMULA_STARTS) or _visible_start(text).startswith(FORMULA_STARTS)


def xml_safe(text: str) -> str:
    """Characters XML cannot hold (control characters, unpaired surrogates, U+FFFE and U+FFFF),
    shown as ``\\xNN`` or ``\\uNNNN`` so that nothing is silently lost."""
    return ILLEGAL_XML.sub(lambda m: f"\\x{ord(m.group()):02x}" if ord(m.group()) < 0x100 else f"\\u{ord(m.group()):04x}",
                           text)


def csv_safe(text: str) -> str:
    """``text`` for a CSV cell: preceded by an apostrophe when a spreadsheet could read it as a formula."""
    return "'" + text if looks_like_formula(text) else text
