"""The workbook holds only what a spreadsheet program opens: no number it cannot store, no
character XML cannot carry, no sheet name it refuses."""

from __future__ import annotations

import math

import openpyxl

from curvewright.io.result_tables import Column, Table
from curvewright.io.xlsx_export import write_tables


def test_unbounded_values_and_odd_text_are_written_as_readable_text(tmp_path) -> None:
    columns = (Column("Sample id"), Column("Upper limit", kind="number"), Column("Reported (rounded)", kind="reported"))
    rows = (("U1", math.inf, "∞"), ("U2", -math.inf, "−∞"), ("U3", math.nan, ""),
            ("bad\ud800 text\uffff and \x01", 1.5, "1.50"))
    path = tmp_path / "results.xlsx"
    write_tables([Table("Samples ['main']: 1/2*?", columns, rows)], path)
    book = openpyxl.load_workbook(path)
    sheet = book.worksheets[0]
    assert sheet.title == "Samples _'main'__ 1_2__"  # []:*?/\ replaced; no leading or trailing apostrophe
    values = [[c.value for c in row] for row in sheet.iter_rows(min_row=4)]
    assert values[0][1] == "∞" and values[1][1] == "−∞" and values[2][1] == "not a number"
    assert all(sheet.cell(row=r, column=2).data_type == "s" for r in (4, 5, 6))
    assert values[3] == ["bad\\ud800 text\\uffff and \\x01", 1.5, 1.5]  # shown by code, never dropped
