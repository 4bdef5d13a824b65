"""Raw tables from pasted text, CSV files and XLSX workbooks, before any column is interpreted.

Every cell keeps its position: ``row`` is the line (text) or row (workbook) number as the analyst
sees it, 1-based, and ``column`` the 1-based column. Workbook numbers stay numbers; text stays text.
"""

from __future__ import annotations

import csv
import io
from dataclasses import dataclass
from pathlib import Path

from .audit import file_sha256
from .errors import ImportProblem

MAX_TABLE_BYTES = 200 * 1024 * 1024

Cell = str | float


@dataclass(frozen=True)
class RawTable:
    """Rows of cells with their source row numbers, and how the text was split."""

    rows: tuple[tuple[Cell, ...], ...]
    row_numbers: tuple[int, ...]
    delimiter: str | None
    source: str
    sha256: str | None = None
    sheet: str | None = None

    @property
    def delimiter_name(self) -> str:
        return {"\t": "tab", ";": "semicolon", ",": "comma", None: "workbook cells"}.get(self.delimiter, repr(self.delimiter))


def detect_delimiter(text: str) -> str:
    """Tab if any line holds a tab (spreadsheets copy as tab-separated), else ';' or ',' by consistency.

    Only what lies outside quoted fields counts: a tab or comma inside a quoted sample id
    (``"Well 3, rinse"``) says nothing about how the columns are separated.
    """
    lines = [line for line in _outside_quotes(text).splitlines() if line.strip()]
    if not lines:
        raise ImportProblem("the table is empty: nothing was pasted or the file holds no rows.")
    if any("\t" in line for line in lines):
        return "\t"
    counts = {d: [line.count(d) for line in lines] for d in (";", ",")}
    semicolons = counts[";"]
    if semicolons[0] > 0 and all(c == semicolons[0] for c in semicolons):
        return ";"
    commas = counts[","]
    if commas[0] > 0 and all(c == commas[0] for c in commas):
        return ","
    if semicolons[0] > 0:
        return ";"
    if commas[0] > 0:
        return ","
    if len(lines) == 1 or all(len(line.split()) == 1 for line in lines):
        return "\t"  # a single column
    raise ImportProblem(
        "cannot tell how the columns are separated (no tab, semicolon or comma on every line); "
        "copy the cells from the spreadsheet, or save as CSV."
    )


def _outside_quotes(text: str) -> str:
    """The text with the content of quoted fields left out (line breaks inside them too).

    A quote opens a field only at the start of a line or after a tab, ';' or ','; a doubled quote
    inside a quoted field is a quote character. An unmatched quote leaves the rest out (the CSV
    reader then reports it).
    """
    out: list[str] = []
    quoted = False
    previous = "\n"
    i = 0
    while i < len(text):
        ch = text[i]
        if quoted:
            if ch == '"':
                if text.startswith('""', i):
                    i += 2
                    continue
                quoted = False
                out.append('""')
        elif ch == '"' and previous in "\r\n\t;,":
            quoted = True
        else:
            out.append(ch)
        previous = ch
        i += 1
    return "".join(out)


def table_from_text(text: str, *, delimiter: str | None = None, source: str = "pasted text", sha256: str | None = None) -> RawTable:
    """Split pasted or file text into cells (quoted fields handled as in CSV)."""
    if delimiter is not None and delimiter not in ("\t", ";", ","):
        raise ImportProblem(f"delimiter: {delimiter!r} is not tab, ';' or ','.")
    text = text.lstrip("\ufeff")
    used = delimiter or detect_delimiter(text)
    rows, numbers = [], []
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=used, quotechar='"', strict=True)
    try:
        for record in reader:
            rows.append(tuple(record))
            numbers.append(reader.line_num)
    except csv.Error as exc:
        raise ImportProblem(f"{source}: line {reader.line_num}: {exc} (an unmatched quote?).") from None
    return RawTable(tuple(rows), tuple(numbers), used, source, sha256)


def table_from_csv(path: str | Path, *, delimiter: str | None = None) -> RawTable:
    path = Path(path)
    data = _read_bytes(path)
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise ImportProblem(
            f"{path}: byte {exc.start} is not UTF-8 text; save the file as CSV UTF-8 and import again."
        ) from None
    return table_from_text(text, delimiter=delimiter, source=str(path), sha256=file_sha256(data))


def xlsx_sheet_names(path: str | Path) -> tuple[str, ...]:
    workbook = _open_workbook(Path(path))
    try:
        return tuple(workbook.sheetnames)
    finally:
        workbook.close()


def table_from_xlsx(path: str | Path, sheet: str | None = None) -> RawTable:
    """Read one sheet (the first when ``sheet`` is None) in read-only mode, taking the values the
    spreadsheet stored (a formula cell gives its last calculated value; one never calculated reads
    as empty, and the importer then reports the cell as missing)."""
    path = Path(path)
    data = _read_bytes(path)
    workbook = _open_workbook(path)
    try:
        name = sheet or workbook.sheetnames[0]
        if name not in workbook.sheetnames:
            raise ImportProblem(f"{path}: there is no sheet {name!r} (sheets: {', '.join(workbook.sheetnames)}).")
        rows, numbers = [], []
        for index, record in enumerate(workbook[name].iter_rows(values_only=True), start=1):
            rows.append(tuple(_cell(v) for v in record))
            numbers.append(index)
    finally:
        workbook.close()
    return RawTable(tuple(rows), tuple(numbers), None, str(path), file_sha256(data), name)


def _cell(value: object) -> Cell:
    if value is None:
        return ""
    if isinstance(value, bool):
        return str(value).upper()
    if isinstance(value, (int, float)):
        return float(value)
    return str(value)


def _read_bytes(path: Path) -> bytes:
    try:
        size = path.stat().st_size
        if size > MAX_TABLE_BYTES:
            raise ImportProblem(f"{path}: {size / 1e6:.0f} MB is more than an import may be ({MAX_TABLE_BYTES / 1e6:.0f} MB).")
        return path.read_bytes()
    except OSError as exc:
        raise ImportProblem(f"{path}: cannot read ({exc.strerror or exc}).") from None


def _open_workbook(path: Path):  # type: ignore[no-untyped-def]
    from zipfile import BadZipFile

    import openpyxl

    try:
        return openpyxl.load_workbook(path, read_only=True, data_only=True)
    except (OSError, BadZipFile, KeyError, ValueError) as exc:
        raise ImportProblem(f"{path}: not a readable XLSX workbook ({exc}).") from None
