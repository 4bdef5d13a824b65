"""Raw tables from pasted text, CSV files and XLSX workbooks, before any column is interpreted.

Every cell keeps its position: ``row`` is the line (text) or row (workbook) number as the analyst
sees it, 1-based, and ``column`` the 1-based column. Workbook numbers stay numbers; text stays text.
"""

from __future__ import annotations

import csv
import datetime
import io
import math
import re
import zipfile
import zlib
from collections.abc import Iterator
from contextlib import contextmanager
from dataclasses import dataclass, replace
from pathlib import Path
from typing import Any

from .audit import file_sha256
from .errors import ImportProblem
from .xlsx_checks import MAX_CELLS, MAX_ROWS, check_workbook, malformed_part

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
    uncalculated: tuple[tuple[int, int, str], ...] = ()
    """(row number, 0-based column, formula) of each workbook cell holding a formula with no
    calculated value: read as empty text, and refused by the importer wherever it is read."""
    hidden_sheet: bool = False
    """The sheet read is hidden in the workbook (read only because it was named)."""
    hidden_rows: tuple[int, ...] = ()
    """Row numbers of the sheet's rows that are hidden and hold a value (the importer asks whether
    they are left out or included: :func:`hidden_rows_chosen`)."""
    hidden_rows_choice: str = ""
    """What was chosen for :attr:`hidden_rows`: "" (not yet), "include" or "skip"."""
    dates: frozenset[tuple[int, int]] = frozenset()
    """(row number, 0-based column) of each workbook cell holding a date or time (its text is the
    date's): the importer says so where a number was expected."""

    @property
    def delimiter_name(self) -> str:
        return {"\t": "tab", ";": "semicolon", ",": "comma", None: "workbook cells"}.get(self.delimiter, repr(self.delimiter))


def detect_delimiter(text: str) -> str:
    """Tab if any line holds a tab (spreadsheets copy as tab-separated), else ';' or ',' by consistency.

    Only what lies outside quoted fields counts: a tab or comma inside a quoted sample id
    (``"Well 3, rinse"``) says nothing about how the columns are separated.
    """
    outside = _outside_quotes(text)
    lines = [line for line in outside.splitlines() if line.strip()]
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
        "cannot tell how the columns are separated (no tab, semicolon or comma on every line)"
        f"{_odd_line(text, outside)}; copy the cells from the spreadsheet, or save as CSV."
    )


def _odd_line(text: str, outside: str) -> str:
    """Words naming the first line that does not split like most lines (a title or batch line above
    the header, a note below the table), or "" when no line stands out. Line numbers are given only
    where no quoted field holds a line break (they are then the file's own)."""
    numbered = [(n, line) for n, line in enumerate(_LINE_BREAK.split(outside), start=1) if line.strip()]
    best: tuple[int, str, int] | None = None  # (lines that agree, delimiter, count per line)
    for d in (";", ","):
        counts = [line.count(d) for _, line in numbered]
        usual = max((c for c in counts if c), key=counts.count, default=0)
        if usual and (best is None or counts.count(usual) > best[0]):
            best = (counts.count(usual), d, usual)
    if best is None or best[0] < 2:
        return ""
    agree, d, usual = best
    first = next(n for n, line in numbered if line.count(d) == usual)
    odd = next(((n, line) for n, line in numbered if line.count(d) != usual), None)
    if odd is None:  # lines split otherwise than by line ends alone (a form feed, a line separator)
        return ""
    originals = _LINE_BREAK.split(text)
    exact = len(originals) == len(_LINE_BREAK.split(outside))
    shown = originals[odd[0] - 1].strip() if exact else odd[1].strip()
    shown = shown if len(shown) <= 60 else shown[:57] + "..."
    name = {";": "semicolon", ",": "comma"}[d]
    where = f"line {odd[0]} " if exact else "the line "
    lines_from = f"from line {first} " if exact else ""
    place = ("the header row must be the first line: delete the lines above it (a title, a batch line)"
             if odd[0] < first else "delete the lines that are not rows of the table (a note below it)")
    held = odd[1].count(d)
    holds = f"no {name}" if held == 0 else f"1 {name}" if held == 1 else f"{held} {name}s"
    return (f": {where}({shown!r}) cannot be made a header or a row of the table: it holds {holds} while "
            f"{agree} lines {lines_from}hold {usual} each; {place}")


def _outside_quotes(text: str) -> str:
    """The text with the content of quoted fields left out (line breaks inside them too).

    A quote opens a field only at the start of a line or after a tab, ';' or ','; a doubled quote
    inside a quoted field is a quote character. An unmatched quote leaves the rest out (the CSV
    reader then reports it).
    """
    if '"' not in text:
        return text
    out: list[str] = []
    previous = "\n"  # the character before the next one looked at
    i = 0
    while True:
        j = text.find('"', i)
        if j < 0:
            out.append(text[i:])
            return "".join(out)
        out.append(text[i:j])
        if (text[j - 1] if j > i else previous) not in "\r\n\t;,":  # a quote inside a field: kept
            out.append('"')
            previous, i = '"', j + 1
            continue
        k = j + 1
        while True:  # the end of the quoted field: a quote not doubled
            k = text.find('"', k)
            if k < 0:
                return "".join(out)  # unmatched: the rest is left out
            if text.startswith('""', k):
                k += 2
                continue
            break
        out.append('""')
        previous, i = '"', k + 1


def table_from_text(text: str, *, delimiter: str | None = None, source: str = "pasted text", sha256: str | None = None) -> RawTable:
    """Split pasted or file text into cells (quoted fields handled as in CSV)."""
    if delimiter is not None and delimiter not in ("\t", ";", ","):
        raise ImportProblem(f"delimiter: {delimiter!r} is not tab, ';' or ','.")
    text = text.lstrip("\ufeff")
    try:
        used = delimiter or detect_delimiter(text)
    except ImportProblem as problem:
        raise ImportProblem(f"{source}: {problem}") from None
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
    return table_from_text(_decoded(data, path), delimiter=delimiter, source=str(path), sha256=file_sha256(data))


ENCODINGS_READ = "UTF-8 (with or without a byte-order mark) or UTF-16 with a byte-order mark"
SAVE_AS_UTF8 = ('save the file as "CSV UTF-8" in the spreadsheet program (or with the encoding UTF-8 in a '
                "text editor) and import again")


def _decoded(data: bytes, path: Path) -> str:
    """The text of a table file: UTF-8, or UTF-16 where a byte-order mark says so (a spreadsheet
    program's "Unicode text"). Anything else is refused naming the line and character where it stops
    being such text."""
    if data.startswith((b"\xff\xfe", b"\xfe\xff")) and not data.startswith(b"\xff\xfe\x00\x00"):
        try:
            text = data.decode("utf-16")
        except UnicodeDecodeError as exc:
            raise ImportProblem(
                f"{path}: the file begins as UTF-16 text but byte {exc.start + 1} is not; {SAVE_AS_UTF8}."
            ) from None
        text = text.lstrip("\ufeff")
    elif b"\x00" in data:
        before = _LINE_BREAK.split(data[:data.index(b"\x00")].decode("utf-8-sig", errors="replace"))
        raise ImportProblem(
            f"{path}: line {len(before)}, character {len(before[-1]) + 1} is a NUL character: the file seems to be "
            f"UTF-16 text without a byte-order mark, or not text at all. Tables are read as {ENCODINGS_READ}: "
            f"{SAVE_AS_UTF8}."
        )
    else:
        try:
            text = data.decode("utf-8-sig")
        except UnicodeDecodeError as exc:
            line, character = _position(data, exc.start)
            byte = data[exc.start]
            try:
                as_windows = f" (as Windows-1252 it would be {bytes([byte]).decode('cp1252')!r})"
            except UnicodeDecodeError:
                as_windows = ""
            raise ImportProblem(
                f"{path}: line {line}, character {character}: byte 0x{byte:02X} is not UTF-8 text{as_windows}; "
                f"the file seems saved in another encoding. Tables are read as {ENCODINGS_READ}: {SAVE_AS_UTF8}."
            ) from None
    return text


_LINE_BREAK = re.compile(r"\r\n|\r|\n")
"""Line ends as the CSV reader counts its lines."""


def _position(data: bytes, offset: int) -> tuple[int, int]:
    """(line, character), both from 1, of the byte at ``offset`` in UTF-8 ``data`` valid up to it."""
    before = _LINE_BREAK.split(data[:offset].decode("utf-8-sig"))
    return len(before), len(before[-1]) + 1


def xlsx_sheet_names(path: str | Path) -> tuple[str, ...]:
    return tuple(sheet.name for sheet in xlsx_sheets(path))


@dataclass(frozen=True)
class SheetInfo:
    """One sheet of a workbook: its name, whether it is shown (not hidden, not "very hidden") and
    whether it is the sheet the workbook opens on (the active one)."""

    name: str
    visible: bool
    active: bool

    @property
    def label(self) -> str:
        """The sheet's name as offered for a choice, a hidden one marked so."""
        return self.name if self.visible else f"{self.name} (hidden)"


def xlsx_sheets(path: str | Path) -> tuple[SheetInfo, ...]:
    """The sheets of a workbook, in their order, each with whether it is shown and active."""
    path = Path(path)
    data = _read_bytes(path)
    check_workbook(data, str(path))
    with _workbook(path, data) as workbook:
        return _sheet_infos(workbook)


def _sheet_infos(workbook: Any) -> tuple[SheetInfo, ...]:
    try:
        active = workbook.active.title if workbook.active is not None else None
    except (AttributeError, IndexError):
        active = None
    return tuple(SheetInfo(name, getattr(workbook[name], "sheet_state", "visible") == "visible", name == active)
                 for name in workbook.sheetnames)


def default_sheet(sheets: tuple[SheetInfo, ...]) -> SheetInfo | None:
    """The sheet read when none is named: the active sheet when it is shown, else the first shown
    sheet. A hidden sheet (often an old template's data) is never read unless it is named."""
    shown = [s for s in sheets if s.visible]
    return next((s for s in shown if s.active), shown[0] if shown else None)


def table_from_xlsx(path: str | Path, sheet: str | None = None) -> RawTable:
    """Read one sheet (when ``sheet`` is None the active sheet, or the first shown one: never a
    hidden sheet, :func:`default_sheet`) in read-only mode, taking the values the
    spreadsheet stored (a formula cell gives its last calculated value; one never calculated reads
    as empty and is listed in ``RawTable.uncalculated``, which the importer refuses wherever it is
    read, so that no default stands in for it). Every row the sheet holds is read,
    each up to its last cell, whatever range the sheet's own dimension claims (a wrong claim would
    otherwise drop rows or pad every row to thousands of columns).

    The workbook is checked before it is parsed and its cells are bounded while they are read
    (:mod:`.xlsx_checks`); whatever is wrong with the file ends in :class:`ImportProblem` naming the
    file and, where it is known, the part, the sheet and the row."""
    path = Path(path)
    data = _read_bytes(path)
    check_workbook(data, str(path))
    rows: list[tuple[Cell, ...]] = []
    numbers: list[int] = []
    formulas = _holds_formulas(data)
    empties: list[tuple[int, int]] = []
    dates: list[tuple[int, int]] = []
    with _workbook(path, data) as workbook:
        infos = _sheet_infos(workbook)
        listed = ", ".join(s.label for s in infos)
        if not workbook.sheetnames:
            raise ImportProblem(f"{path}: the workbook has no sheets.")
        chosen = default_sheet(infos)
        if sheet is None and chosen is None:
            raise ImportProblem(f"{path}: every sheet of the workbook is hidden ({listed}); name the sheet to read.")
        name = sheet or chosen.name  # type: ignore[union-attr]
        if name not in workbook.sheetnames:
            raise ImportProblem(f"{path}: there is no sheet {name!r} (sheets: {listed}).")
        hidden = not next(s for s in infos if s.name == name).visible
        cells = 0
        for index, record in enumerate(_sheet_records(path, workbook, name), start=1):
            cells += len(record)
            if cells > MAX_CELLS or index > MAX_ROWS:
                raise ImportProblem(
                    f"{path}: sheet {name!r} holds more than {MAX_CELLS:,} cells or {MAX_ROWS:,} rows (counting "
                    f"the empty cells up to the last one used, at row {index:,}); a table to import is smaller. "
                    "Copy the table to a new workbook and import that."
                )
            rows.append(tuple(_cell(v) for v in record))
            numbers.append(index)
            dates += [(index, column) for column, v in enumerate(record) if isinstance(v, _DATES)]
            if formulas:
                empties += [(index, column) for column, v in enumerate(record) if v is None]
        part = getattr(workbook[name], "_worksheet_path", None)
    uncalculated = _formulas_among(path, data, name, empties) if empties else ()
    filled = {n for n, row in zip(numbers, rows) if any(c != "" for c in row)}
    hidden_rows = tuple(n for n in _hidden_row_numbers(data, part) if n in filled) if part else ()
    return RawTable(tuple(rows), tuple(numbers), None, str(path), file_sha256(data), name, uncalculated,
                    hidden_sheet=hidden, hidden_rows=hidden_rows, dates=frozenset(dates))


HIDDEN_ROW_CHOICES = ("include", "skip")
_ROW_TAG = re.compile(rb"<(?:\w+:)?row\b([^>]*)>")
_ROW_NUMBER = re.compile(rb'\br="(\d+)"')
_HIDDEN = re.compile(rb'\bhidden="(?:1|true)"')


def _hidden_row_numbers(data: bytes, part: str) -> tuple[int, ...]:
    """The numbers of the rows a worksheet part marks hidden (``<row r="5" hidden="1">``, ECMA-376
    Part 1, 18.3.1.73). Only the row start tags are read; a part without the word "hidden" is
    passed over at once."""
    with zipfile.ZipFile(io.BytesIO(data)) as archive:
        try:
            xml = archive.read(part.lstrip("/"))
        except KeyError:
            return ()
    if b"hidden=" not in xml:
        return ()
    out = []
    for tag in _ROW_TAG.finditer(xml):
        attributes = tag.group(1)
        number = _ROW_NUMBER.search(attributes)
        if number and _HIDDEN.search(attributes):
            out.append(int(number.group(1)))
    return tuple(out)


def hidden_rows_chosen(table: RawTable, choice: str | None) -> RawTable:
    """The table with its hidden rows included or left out, as ``choice`` says ("include" or "skip").

    A hidden row usually means the analyst chose to leave it out, but the workbook cannot say so:
    neither importing it nor leaving it out is done without a word. With no choice and hidden rows
    holding values, :class:`ImportProblem` names the sheet, the rows and their cells and how to
    choose; the choice made is kept on the table (:attr:`RawTable.hidden_rows_choice`) for the notes.
    """
    if not table.hidden_rows:
        return table
    if choice not in HIDDEN_ROW_CHOICES:
        raise ImportProblem(
            f"{table.source}: sheet {table.sheet!r} has hidden rows holding values: {hidden_rows_listed(table)}. "
            "A hidden row may have been hidden to leave it out, or by accident: choose whether they are "
            "included or left out (on the command line --hidden-rows include or --hidden-rows skip; in the "
            "import dialog, the choice for hidden rows).")
    if choice == "include":
        return replace(table, hidden_rows_choice="include")
    hidden = set(table.hidden_rows)
    kept = [(n, r) for n, r in zip(table.row_numbers, table.rows) if n not in hidden]
    return replace(table, rows=tuple(r for _, r in kept), row_numbers=tuple(n for n, _ in kept),
                   hidden_rows_choice="skip")


def hidden_rows_listed(table: RawTable) -> str:
    """The hidden rows of a table, each with its cells ("row 5 (Std-04, 1, 99.7)")."""
    cells_of = dict(zip(table.row_numbers, table.rows))
    listed = []
    for n in table.hidden_rows[:20]:
        cells = ", ".join((repr(c) if isinstance(c, float) else c) for c in cells_of.get(n, ()) if c != "")
        listed.append(f"row {n} ({cells})")
    more = len(table.hidden_rows) - 20
    return "; ".join(listed) + (f"; and {more} more" if more > 0 else "")


def hidden_rows_note(table: RawTable) -> str:
    """What was done with the table's hidden rows, in words ("" when it has none)."""
    if not table.hidden_rows or not table.hidden_rows_choice:
        return ""
    done = "included" if table.hidden_rows_choice == "include" else "left out"
    numbers = ", ".join(map(str, table.hidden_rows[:20])) + (" …" if len(table.hidden_rows) > 20 else "")
    return f"hidden row(s) {numbers} {done}, as chosen"


@contextmanager
def _workbook(path: Path, data: bytes, *, formulas: bool = False) -> Iterator[Any]:
    """The workbook opened read-only, closed on leaving: with the values the spreadsheet stored, or
    with ``formulas`` the formulas' text in their place. ``data`` must have passed
    :func:`~.xlsx_checks.check_workbook`; what the reader still finds wrong ends in
    :class:`ImportProblem` naming the file and the damaged part."""
    import openpyxl

    try:
        workbook = openpyxl.load_workbook(io.BytesIO(data), read_only=True, data_only=not formulas, keep_links=False)
    except Exception as exc:  # noqa: BLE001 - the XLSX reader raises many types on damaged files
        raise ImportProblem(
            f"{path}: not a readable XLSX workbook ({_damage(exc, malformed_part(data))}); open it in the "
            "spreadsheet program and save it again as .xlsx."
        ) from None
    try:
        yield workbook
    finally:
        workbook.close()


def _sheet_records(path: Path, workbook: Any, name: str) -> Iterator[tuple[object, ...]]:
    """The rows of sheet ``name`` as the reader gives them, each up to its last cell, whatever range
    the sheet's own dimension claims. A sheet that is a chart, and a row the reader cannot parse,
    end in :class:`ImportProblem` (naming the sheet and the last row read)."""
    worksheet = workbook[name]
    if not hasattr(worksheet, "reset_dimensions"):
        raise ImportProblem(f"{path}: sheet {name!r} is a chart, not a table of cells; choose another sheet.")
    worksheet.reset_dimensions()
    read = 0
    try:  # only the reader's errors arrive here: the caller's own are raised in the caller
        for record in worksheet.iter_rows(values_only=True):
            read += 1
            yield record
    except Exception as exc:  # noqa: BLE001 - the XLSX reader raises many types on damaged files
        raise ImportProblem(
            f"{path}: sheet {name!r} cannot be read after row {read} ({_damage(exc)}); open the "
            "workbook in the spreadsheet program and save it again as .xlsx."
        ) from None


_FORMULA_TAG = re.compile(rb"<(?:[A-Za-z_][\w.-]{0,31}:)?f[\s/>]")


def _holds_formulas(data: bytes) -> bool:
    """True when a worksheet part of the workbook holds a formula element (ECMA-376 Part 1, the
    cell's ``f`` child). Only then are the empty cells looked at a second time."""
    try:
        with zipfile.ZipFile(io.BytesIO(data)) as archive:
            return any(_FORMULA_TAG.search(archive.read(info))
                       for info in archive.infolist() if info.filename.startswith("xl/worksheets/"))
    except (zipfile.BadZipFile, OSError, ValueError, RuntimeError, EOFError, zlib.error):
        return True  # the reading itself has passed: look again rather than guess


def _formulas_among(path: Path, data: bytes, name: str, empties: list[tuple[int, int]]) -> tuple[tuple[int, int, str], ...]:
    """Which of the empty cells (row number, 0-based column) of sheet ``name`` hold a formula, with
    the formula's text: the sheet read again with the formulas instead of their stored values, opened
    and guarded as the first reading was."""
    wanted: dict[int, set[int]] = {}
    for row, column in empties:
        wanted.setdefault(row, set()).add(column)
    found: list[tuple[int, int, str]] = []
    with _workbook(path, data, formulas=True) as workbook:
        for index, record in enumerate(_sheet_records(path, workbook, name), start=1):
            columns = wanted.get(index)
            if columns:
                found += [(index, c, _formula_text(record[c])) for c in sorted(columns)
                          if c < len(record) and record[c] is not None]
    return tuple(found)


def _formula_text(value: object) -> str:
    """A formula as the analyst typed it ("=2*5"); an array formula by its text."""
    text = getattr(value, "text", value)
    return text if isinstance(text, str) else "a formula"


_DATES = (datetime.date, datetime.time, datetime.timedelta)


def _cell(value: object) -> Cell:
    """A workbook value as a cell: numbers as finite floats; everything else as text, including a
    number no double holds (kept as its digits or "inf"/"nan", which the importer reports)."""
    if value is None:
        return ""
    if isinstance(value, bool):
        return str(value).upper()
    if isinstance(value, (int, float)):
        try:
            number = float(value)
        except OverflowError:
            return str(value)
        return number if math.isfinite(number) else repr(number)
    if isinstance(value, datetime.datetime) and value.time() == datetime.time(0):
        return value.date().isoformat()  # a date the spreadsheet holds, without its midnight
    return str(value)


def _read_bytes(path: Path) -> bytes:
    try:
        size = path.stat().st_size
        if size > MAX_TABLE_BYTES:
            raise ImportProblem(f"{path}: {size / 1e6:.0f} MB is more than an import may be ({MAX_TABLE_BYTES / 1e6:.0f} MB).")
        return path.read_bytes()
    except OSError as exc:
        raise ImportProblem(f"{path}: cannot read ({exc.strerror or exc}).") from None


def _damage(exc: BaseException, part: str | None = None) -> str:
    """What is wrong with a damaged workbook, in words (the reader wraps the first cause).

    The XLSX reader parses with lxml (a dependency, for speed) or, where it is absent, with the
    standard library's ElementTree. Both report malformed XML as a ``SyntaxError`` subclass with a
    ``position`` (line, column); ElementTree counts columns from 0 and lxml from 1, and the message
    gives the column counted from 1 whichever parsed the part.
    """
    while exc.__cause__ is not None:
        exc = exc.__cause__
    if isinstance(exc, SyntaxError) and isinstance(getattr(exc, "position", None), tuple):
        line, column = exc.position  # type: ignore[attr-defined]
        if not type(exc).__module__.startswith("lxml"):
            column += 1
        return f"malformed XML{f' in part {part}' if part else ''} at line {line}, column {column}"
    if isinstance(exc, KeyError):
        return f"a part it refers to is missing: {exc.args[0] if exc.args else exc}"
    text = str(exc).strip() or type(exc).__name__
    return f"damaged content{f' in part {part}' if part else ''}: {text[:200]}"
