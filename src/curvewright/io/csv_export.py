"""CSV export of the samples table, with its delimiter and decimal mark recorded in the file.

The first two lines start with "#": the caution, then the format (delimiter, decimal mark, text
protection). Numbers are written at full precision (shortest round-trip repr), with a decimal comma
when asked; the delimiter then cannot be a comma. The decimal mark holds for the numbers inside the
program's own texts too (the reported text, the replicate responses, the flags and the interval's
words: columns of kind "reported" or "words"), while text as the analyst typed it (a sample id, a
unit, a refused entry quoted back) is written as it stands. Text that a spreadsheet could read as a formula
is preceded by an apostrophe (:mod:`.safe_text`). Every field holding the delimiter, a double
quote, a carriage return or a line feed is quoted (RFC 4180, with embedded quotes doubled), so no
character inside a field can start a new record.
"""

from __future__ import annotations

import io
from pathlib import Path
import re
from typing import Sequence

from .. import CAUTION, __version__
from ..core.notation import machine, written
from ..core.number_words import full_number
from ..core.run_analysis import RunResult
from .atomic import write_atomically
from .audit import file_sha256
from .errors import ExportError
from .result_tables import Table, samples_table
from .safe_text import csv_safe

DELIMITERS = {",": "comma", ";": "semicolon", "\t": "tab"}
_QUOTED = re.compile(r"""(?<!\w)'[^']*'(?!\w)|(?<!\w)"[^"]*"(?!\w)""")
"""Text quoted back as it was typed (a refused entry, 'n.d.'): its points are the analyst's own."""
_DECIMAL_POINT = re.compile(r"(?<=\d)\.(?=\d)")


def write_csv(result: RunResult, path: str | Path, *, delimiter: str = ",", decimal_mark: str = ".") -> str:
    """Write the samples table as CSV atomically; return the SHA-256 of what was written."""
    data = csv_text(samples_table(result), delimiter=delimiter, decimal_mark=decimal_mark).encode("utf-8")
    write_atomically(Path(path), data)
    return file_sha256(data)


def csv_text(table: Table, *, delimiter: str = ",", decimal_mark: str = ".") -> str:
    if delimiter not in DELIMITERS:
        raise ExportError(f"CSV delimiter: {delimiter!r} is not a comma, semicolon or tab.")
    if decimal_mark not in (".", ","):
        raise ExportError(f"CSV decimal mark: {decimal_mark!r} is not '.' or ','.")
    if delimiter == "," and decimal_mark == ",":
        raise ExportError("CSV: a decimal comma needs a semicolon or tab delimiter.")
    out = io.StringIO(newline="")
    out.write(f"# {CAUTION}\n")
    out.write(
        f"# Curvewright {__version__} {table.title.lower()} export; delimiter: {DELIMITERS[delimiter]}; "
        f"decimal mark: '{decimal_mark}'; text a spreadsheet could read as a formula (starting with = + - @, "
        "a tab or a line break, also after spaces or invisible characters) is preceded by an apostrophe\n"
    )
    out.write(_record([csv_safe(c.heading) for c in table.columns], delimiter))
    for row in table.rows:
        out.write(_record([_field(v, c.kind, decimal_mark) for v, c in zip(row, table.columns)], delimiter))
    return out.getvalue()


def _record(fields: Sequence[str], delimiter: str) -> str:
    """One CSV line; a field is quoted when it holds the delimiter, a quote, CR or LF (the csv
    module's writer leaves a lone CR unquoted, which splits the record in a spreadsheet)."""
    return delimiter.join(_quoted(f, delimiter) for f in fields) + "\n"


def _quoted(field: str, delimiter: str) -> str:
    if delimiter in field or '"' in field or "\r" in field or "\n" in field:
        return '"' + field.replace('"', '""') + '"'
    return field


def _field(value: object, kind: str, decimal_mark: str) -> str:
    if value is None:
        return ""
    if isinstance(value, float):
        text = written(full_number(value), machine=True) if "e" in repr(value) else repr(value)  # "3000000", "2.5e-9"
    elif isinstance(value, int):
        text = str(value)
    else:
        text = str(value)
        if kind in ("reported", "words"):
            text = machine(text)  # "3.20 × 10⁻⁵" as programs read it: "3.20e-5"
        if kind not in ("reported", "words") or decimal_mark != ",":
            return csv_safe(text)
        return csv_safe(decimal_comma_in_words(text))
    return text.replace(".", ",") if decimal_mark == "," else text


def decimal_comma_in_words(text: str) -> str:
    """``text`` with the decimal point of every number in it ("0.500 µg/L", "133.925 | 3454.305",
    "× dilution 2.5") written as a comma; text quoted back as typed keeps its points."""
    out, at = [], 0
    for quoted in _QUOTED.finditer(text):
        out += [_DECIMAL_POINT.sub(",", text[at:quoted.start()]), quoted.group()]
        at = quoted.end()
    out.append(_DECIMAL_POINT.sub(",", text[at:]))
    return "".join(out)
