"""Workbooks for the reading tests: made with openpyxl, then altered part by part at the XML and
zip level the way damaged or hostile files are."""

from __future__ import annotations

import io
import zipfile
from typing import Callable, Mapping

import openpyxl

Edit = bytes | None | Callable[[bytes], bytes]


def workbook_bytes(rows: list[list[object]] | None = None, title: str = "Standards") -> bytes:
    """A small workbook of standards (shared strings for the text, numbers as numbers)."""
    book = openpyxl.Workbook()
    sheet = book.active
    sheet.title = title
    for row in rows if rows is not None else [["Concentration", "Response"], [1.0, 10.5], [2.0, 20.25], [4.0, 41.0]]:
        sheet.append(row)
    buffer = io.BytesIO()
    book.save(buffer)
    return buffer.getvalue()


def parts(data: bytes) -> dict[str, bytes]:
    with zipfile.ZipFile(io.BytesIO(data)) as archive:
        return {name: archive.read(name) for name in archive.namelist()}


def rezip(data: bytes, edits: Mapping[str, Edit], *, extra: Mapping[str, bytes] | None = None) -> bytes:
    """``data`` with parts replaced (bytes), removed (None) or transformed (a function of the old
    bytes), and ``extra`` parts added."""
    out = io.BytesIO()
    with zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as archive:
        for name, content in parts(data).items():
            edit = edits.get(name, content)
            if edit is None:
                continue
            archive.writestr(name, edit(content) if callable(edit) else edit)
        for name, content in (extra or {}).items():
            archive.writestr(name, content)
    return out.getvalue()


SHEET = "xl/worksheets/sheet1.xml"
STRINGS = "xl/sharedStrings.xml"

MAIN = b'xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main"'
STRINGS_TYPE = b"application/vnd.openxmlformats-officedocument.spreadsheetml.sharedStrings+xml"


def sheet_xml(sheet_data: bytes, dimension: bytes = b"A1:B3") -> bytes:
    return (b'<worksheet ' + MAIN + b'><dimension ref="' + dimension + b'"/><sheetData>' + sheet_data
            + b"</sheetData></worksheet>")


def strings_xml(strings: list[str]) -> bytes:
    items = b"".join(b"<si><t>" + s.encode("utf-8") + b"</t></si>" for s in strings)
    return b"<sst " + MAIN + b' count="%d" uniqueCount="%d">' % (len(strings), len(strings)) + items + b"</sst>"


def shared_string_workbook(strings: bytes, sheet_data: bytes, dimension: bytes = b"A1:B3") -> bytes:
    """A workbook whose sheet refers to a shared-string table, as spreadsheet programs write them."""
    def declare(types: bytes) -> bytes:
        override = b'<Override PartName="/xl/sharedStrings.xml" ContentType="' + STRINGS_TYPE + b'"/>'
        return types.replace(b"</Types>", override + b"</Types>")

    return rezip(workbook_bytes(), {SHEET: sheet_xml(sheet_data, dimension), "[Content_Types].xml": declare},
                 extra={STRINGS: strings})


GOOD_ROWS = (b'<row r="1"><c r="A1" t="s"><v>0</v></c><c r="B1" t="s"><v>1</v></c></row>'
             b'<row r="2"><c r="A2"><v>1</v></c><c r="B2"><v>10.5</v></c></row>'
             b'<row r="3"><c r="A3"><v>2</v></c><c r="B3"><v>20.25</v></c></row>')
