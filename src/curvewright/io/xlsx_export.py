"""The reviewer's workbook: run information, the analytes, a summary of every sample × analyte, the
samples in full, a calibration, standards and checks sheet per analyte, signatures and the audit trail.

Numbers are numeric cells at full double precision (written as their exact shortest repr), each with
the number format that shows it as the printed record does (:func:`.result_tables.excel_format`, in
each row as :meth:`.result_tables.Table.columns_for` settles it: an interval's ends to the record's
digits, a response with the decimals it was entered with); the
"Reported" column holds the value rounded under the run's rule, displayed with exactly its digits.
Each sheet has its columns fitted to what they show (:mod:`.sheet_layout`), its headings frozen, an
autofilter over its table and a print set-up one page wide with the headings repeated. Every text cell is a string
cell, so no cell is ever a formula (:mod:`.safe_text`). The caution stands in the first row of
every sheet. Written in openpyxl's write-only mode (memory stays flat) and saved atomically
(:mod:`.atomic`): the sheets stream to temporaries of our naming beside the target, so a failed or
killed export leaves nothing behind that the next write of the same file does not remove, and a
failure (a full disk) is reported once, as an :class:`~.errors.ExportError`. A number no cell can
hold (an unbounded interval end) is written as the text "∞" or "−∞", never as a number Excel
would refuse.
"""

from __future__ import annotations

import errno
import io
import math
import os
import re
import threading
import zipfile
from contextlib import contextmanager, suppress
from pathlib import Path
from typing import IO, Callable, Iterator, Iterable

from openpyxl import Workbook
from openpyxl.cell import Cell, WriteOnlyCell
from openpyxl.styles import Alignment, Font
from openpyxl.utils import get_column_letter
from openpyxl.worksheet.properties import PageSetupProperties

from .. import CAUTION
from ..core.inverse import INTERVAL_SCOPE_NOTE
from ..core.notation import excel_format as notation_excel_format, machine
from ..core.run_analysis import RunResult
from .atomic import atomic_target, new_temporary, resolve_target
from .audit import file_sha256_streamed
from .result_tables import Table, Value, all_tables, excel_format
from .sheet_layout import HEADER_ROW, MARGIN, MAX_WIDTH, column_widths, freeze_cell, header_height
from .safe_text import ILLEGAL_XML, xml_safe

Progress = Callable[[int, int], None]
_needs_escaping = ILLEGAL_XML.search
_SHEET_FORBIDDEN = str.maketrans({c: "_" for c in "[]:*?/\\"})


def write_xlsx(result: RunResult, path: str | Path, *, progress: Progress | None = None) -> str:
    """Write the workbook for ``result`` to ``path`` atomically; return the SHA-256 of what was written
    (for the audit trail's "export written" entry). The workbook streams to a temporary file beside
    the target, so memory stays flat however many rows there are."""
    return write_tables(all_tables(result), Path(path), progress=progress)


def write_tables(tables: Iterable[Table], path: Path, *, progress: Progress | None = None) -> str:
    target = resolve_target(Path(path))
    with _exact_floats(), atomic_target(path) as temporary:
        try:
            _build(list(tables), progress, temporary, scratch=lambda: new_temporary(target))
        except Exception as exc:  # noqa: BLE001 - only a failed write is turned into its OSError
            failed = _write_failure(exc)
            if failed is None:
                raise
            raise failed from None
        return file_sha256_streamed(temporary)


def _write_failure(exc: Exception) -> OSError | None:
    """The OSError behind a failed write of a sheet: openpyxl writes through lxml when it is installed,
    and lxml reports a failed write as ``SerialisationError('IO_EFBIG')``, naming the errno."""
    if isinstance(exc, OSError):
        return exc
    if type(exc).__name__ == "SerialisationError" and type(exc).__module__.startswith("lxml"):
        code = getattr(errno, str(exc).removeprefix("IO_"), None)
        if isinstance(code, int):
            return OSError(code, os.strerror(code))
        return OSError(errno.EIO, f"{os.strerror(errno.EIO)} ({exc})")
    return None


def xlsx_bytes(tables: Iterable[Table], *, progress: Progress | None = None) -> bytes:
    # write-only sheets stream their rows as they are appended, so the exact number writer must be
    # in place for the whole build, not only for the final save
    buffer = io.BytesIO()
    with _exact_floats():
        _build(list(tables), progress, buffer)
    return buffer.getvalue()


def _build(tables: list[Table], progress: Progress | None, target: Path | IO[bytes],
           scratch: Callable[[], Path] | None = None) -> None:
    """Write the workbook to ``target``; each sheet streams to ``scratch()`` (a temporary of ours)
    when given, else to openpyxl's own temporary. On failure everything is closed and removed."""
    workbook = Workbook(write_only=True)
    try:
        bold = Font(bold=True)
        used: set[str] = set()
        total = sum(len(t.rows) for t in tables)
        done = 0
        for table in tables:
            sheet = workbook.create_sheet(_sheet_name(table.title, used))
            _cells_without_trial(sheet)
            widths = _lay_out(sheet, table)  # before the first row: widths and panes are written at the top of the sheet
            if scratch is not None:
                _stream_to(sheet, scratch())
            caution = WriteOnlyCell(sheet, value=CAUTION)
            caution.font = bold
            sheet.append([caution])
            note = [_text_cell(sheet, INTERVAL_SCOPE_NOTE)] if any(c.heading == "Interval" for c in table.columns) else []
            alarm = [_text_cell(sheet, table.notice, _ALARM)] if table.notice else []
            sheet.append([_text_cell(sheet, table.title, bold)] + note + alarm)
            headings = [_text_cell(sheet, c.heading, bold) for c in table.columns]
            for cell in headings:
                cell.alignment = _WRAPPED
            sheet.append(headings)
            cells = _NumberCells(sheet, table, widths)
            for row in table.rows:
                sheet.append(cells.row(row))
                done += 1
                if progress is not None and done % 5000 == 0:
                    progress(done, total)
        _save(workbook, target)
    except BaseException:
        _abandon(workbook)
        raise
    if progress is not None:
        progress(total, total)


def _cells_without_trial(sheet) -> None:  # type: ignore[no-untyped-def]
    """Make a write-only sheet take the cells of an appended row as openpyxl's own ``_values_to_row``
    takes them (a plain value in a plain cell of the sheet's, written before the next value is put
    in it; a cell given as it is), without first trying each of our styled cells as the value of
    the plain cell (which fails, with an exception and the cell's repr, for every styled cell
    written) and so without a new plain cell after each styled one."""
    plain = WriteOnlyCell(sheet)

    def values_to_row(values, row_idx):  # type: ignore[no-untyped-def]
        for col_idx, value in enumerate(values, 1):
            if value is None:
                continue
            if isinstance(value, Cell):
                cell = value
            else:
                cell = plain
                cell.value = value  # a plain value never gives the cell a style or a hyperlink
            cell.column = col_idx
            cell.row = row_idx
            if cell.hyperlink is not None:
                cell.hyperlink.ref = cell.coordinate
            yield cell

    sheet._values_to_row = values_to_row


def _stream_to(sheet, path: Path) -> None:  # type: ignore[no-untyped-def]
    """Make a write-only sheet stream its rows to ``path`` instead of the system's temporary folder."""
    from openpyxl.worksheet._writer import ALL_TEMP_FILES, WorksheetWriter

    ALL_TEMP_FILES.append(str(path))  # openpyxl removes the file from this list when it is done with it
    sheet._writer = WorksheetWriter(sheet, out=str(path))
    sheet._writer.write_top()


def _save(workbook: Workbook, target: Path | IO[bytes]) -> None:
    """Save with an archive we close ourselves, so that a failure leaves no half-closed zip behind
    to complain when it is collected."""
    from openpyxl.writer.excel import ExcelWriter

    archive = zipfile.ZipFile(target, "w", zipfile.ZIP_DEFLATED, allowZip64=True)
    try:
        ExcelWriter(workbook, archive).save()  # writes every part, then closes the archive
    except BaseException:
        with suppress(Exception):
            archive.close()
        raise


def _abandon(workbook: Workbook) -> None:
    """After a failed write: close every sheet's stream (their errors are the one already being
    reported) and remove the files they were writing."""
    from openpyxl.worksheet._writer import ALL_TEMP_FILES

    for sheet in workbook._sheets:
        for stream in (getattr(sheet, "_rows", None), getattr(getattr(sheet, "_writer", None), "xf", None)):
            if stream is not None:
                with suppress(Exception):
                    stream.close()
        writer = getattr(sheet, "_writer", None)
        out = getattr(writer, "out", None)
        if isinstance(out, str):
            with suppress(OSError):
                os.remove(out)
            with suppress(ValueError):
                ALL_TEMP_FILES.remove(out)


def _lay_out(sheet, table: Table) -> tuple[float, ...]:  # type: ignore[no-untyped-def]
    """Column widths that fit, the header row's height, frozen headings (and first column on wide
    tables), an autofilter over the table, and a page set-up that prints it across one page width
    with the headings repeated (landscape when wide)."""
    widths = column_widths(table)
    for j, width in enumerate(widths, start=1):
        sheet.column_dimensions[get_column_letter(j)].width = width
    sheet.row_dimensions[HEADER_ROW].height = header_height(table, widths)
    sheet.freeze_panes = freeze_cell(table)
    last = get_column_letter(max(len(table.columns), 1))
    if table.rows:
        sheet.auto_filter.ref = f"A{HEADER_ROW}:{last}{HEADER_ROW + len(table.rows)}"
    sheet.print_title_rows = f"{HEADER_ROW}:{HEADER_ROW}"
    sheet.sheet_properties.pageSetUpPr = PageSetupProperties(fitToPage=True)
    sheet.page_setup.fitToWidth = 1
    sheet.page_setup.fitToHeight = 0
    sheet.page_setup.orientation = "landscape" if sum(widths) > 100 else "portrait"
    return widths


class _NumberCells:
    """The cells of one sheet's rows. A number is a numeric cell at full precision with the number
    format that shows it as the record prints it (:func:`~.result_tables.excel_format`). Rows are
    written as soon as they are appended, so one styled cell per column and format is reused."""

    def __init__(self, sheet, table: Table, widths: tuple[float, ...]) -> None:  # type: ignore[no-untyped-def]
        self.sheet = sheet
        self.columns = table.columns
        self.rule = table.rounding
        self.wrap_beyond = [w - MARGIN if w >= MAX_WIDTH else math.inf for w in widths]
        """Text longer than its column, in a column held at the widest, wraps inside its cell."""
        self._styled: dict[tuple[int, str], object] = {}
        self._columns_for = table.columns_for

    def row(self, row: tuple[Value, ...]) -> list:  # type: ignore[type-arg]
        """The cells of one row, each number shown as the record prints it in this row."""
        columns = self._columns_for(row)
        return [self.cell(j, value, columns[j]) for j, value in enumerate(row)]

    def cell(self, j: int, value: Value, column=None):  # type: ignore[no-untyped-def]
        column = self.columns[j] if column is None else column
        if value is None:
            return None
        if isinstance(value, float) and not math.isfinite(value):
            return _text_cell(self.sheet, "∞" if value > 0 else "−∞" if value < 0 else "not a number")
        if isinstance(value, str):
            if column.kind == "reported" and value:
                number = machine(value)  # "3.20 × 10⁻⁵" read back as the number it writes
                if _REPORTED_NUMBER.match(number):
                    return self._numeric(j, float(number), notation_excel_format(number))
            if value.startswith("=") or _needs_escaping(value) or len(value) > self.wrap_beyond[j]:
                return _text_cell(self.sheet, value, wrap=len(value) > self.wrap_beyond[j])
            return value  # openpyxl writes any other text as a plain string cell
        if isinstance(value, bool):
            return value
        fmt = excel_format(value, column, self.rule)
        return value if fmt is None else self._numeric(j, value, fmt)

    def _numeric(self, j: int, value: float | int, fmt: str):  # type: ignore[no-untyped-def]
        cell = self._styled.get((j, fmt))
        if cell is None:
            cell = WriteOnlyCell(self.sheet, value=value)
            cell.number_format = fmt
            self._styled[(j, fmt)] = cell
        elif type(value) is float or type(value) is int:
            cell._value = value  # a number, as the cell already holds one (its type stays numeric)
        else:
            cell.value = value
        return cell


def _text_cell(sheet, text: str, font: Font | None = None, wrap: bool = False):  # type: ignore[no-untyped-def]
    cell = WriteOnlyCell(sheet, value=xml_safe(text))
    cell.data_type = "s"  # a string, even when it starts with "=": never a formula
    if font is not None:
        cell.font = font
    if wrap:
        cell.alignment = _WRAPPED
    return cell


_REPORTED_NUMBER = re.compile(r"^-?\d+(?:\.\d+)?(?:e-?\d+)?$")
"""A reported text that is the rounded number itself ("0.0125", "3.20e-5" as :func:`machine` reads
"3.20 × 10⁻⁵"), written to its cell as a number."""
_WRAPPED = Alignment(wrap_text=True, vertical="top")
_ALARM = Font(bold=True, color="A11B1B")
"""A table's notice (a record that is not intact): bold and red, as the record prints it."""


def _sheet_name(title: str, used: set[str]) -> str:
    """A legal, unique sheet name: at most 31 characters, none of []:*?/\\ or characters XML cannot
    hold, not starting or ending with an apostrophe."""
    base = xml_safe(title).translate(_SHEET_FORBIDDEN).strip("'")[:31] or "Sheet"
    name, n = base, 2
    while name.lower() in used:
        suffix = f" ({n})"
        name = base[: 31 - len(suffix)] + suffix
        n += 1
    used.add(name.lower())
    return name


_WRITER_LOCK = threading.Lock()


def _exact_number_text(value: object) -> str:
    """Numbers as their shortest round-trip repr (17 significant digits when needed)."""
    kind = type(value)
    if kind is float:
        if value - value == 0.0:  # finite (NaN and the infinities make NaN)
            return float.__repr__(value)
    elif kind is int:
        return int.__repr__(value)
    from openpyxl.compat.numbers import NUMERIC_TYPES
    from openpyxl.compat.strings import safe_string

    if isinstance(value, NUMERIC_TYPES) and not isinstance(value, bool):
        number = float(value)
        if math.isfinite(number):
            return repr(int(value)) if isinstance(value, int) else repr(number)
    return safe_string(value)


@contextmanager
def _exact_floats() -> Iterator[None]:
    """openpyxl writes numbers with 16 significant digits, which changes some doubles in the last
    bit; while our workbook is saved its cell writer uses the exact repr instead."""
    from openpyxl.cell import _writer

    with _WRITER_LOCK:
        original = _writer.safe_string
        _writer.safe_string = _exact_number_text
        try:
            yield
        finally:
            _writer.safe_string = original
