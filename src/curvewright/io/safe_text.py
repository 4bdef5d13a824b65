"""Keeping text text: no exported cell may become a formula the user did not ask for.

Text that a spreadsheet would evaluate — starting with ``=``, ``+``, ``-``, ``@``, a tab or a
carriage return — is written as plain text: in XLSX as a string cell (never a formula), in CSV
with a leading apostrophe, the usual spreadsheet sign for "this is text" (the CSV's header line
says so).
"""

from __future__ import annotations

import re

FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r")
ILLEGAL_XML = re.compile(r"[\x00-\x08\x0b\x0c\x0e-\x1f]")


def looks_like_formula(text: str) -> bool:
    return text.startswith(FORMULA_STARTS)


def xml_safe(text: str) -> str:
    """Control characters XML cannot hold, shown as \\xNN so that nothing is silently lost."""
    return ILLEGAL_XML.sub(lambda m: f"\\x{ord(m.group()):02x}", text)


def csv_safe(text: str) -> str:
    return "'" + text if looks_like_formula(text) else text
