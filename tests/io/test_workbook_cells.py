"""The workbook's cells: each row's cells handed to openpyxl directly, numbers at full precision with
their formats, text as strings, the caution and headings in bold.

The sheets must be the same, byte for byte, as openpyxl writes them when each of our styled cells
is first tried as the value of a plain cell (its own way of taking the cells of a row), and the
cells must read back (openpyxl, an outside reader of the file) with the table's values, the number
formats of :func:`~curvewright.io.result_tables.excel_format` and their styles. The table is
invented (the Harrowgate soil laboratory's cadmium samples).
"""

from __future__ import annotations

import math
import zipfile

import numpy as np
from openpyxl import load_workbook

from curvewright import CAUTION
from curvewright.core.rounding import RoundingRule
from curvewright.io import xlsx_export
from curvewright.io.result_tables import Column, Table, excel_format

COLUMNS = (Column("Sample id"), Column("Replicates", kind="int"), Column("Mean response", kind="number"),
           Column("Reported", unit="mg/kg", kind="number", display="rule"),
           Column("Reported (rounded)", unit="mg/kg", kind="reported"), Column("Bias", kind="number", display="signed:2"),
           Column("Lower", kind="number", display="sig:3"), Column("Within limits"), Column("Note"))
ROWS = (
    ("HS-01", 2, 1523.25, 0.41275, "0.413", 0.0123, 0.401, True, "inside the calibrated range"),
    ("HS-02", 1, 0.1 + 0.2, 12.5, "12", -1.5, 1e-7, False, "=SUM(A1:A2)"),            # text that looks like a formula
    ("HS-03", 3, 2.0**-40, 1234.5678, "1235", 0.0, math.inf, None, "bad \x07 character"),  # unbounded end
    ("HS-04", None, np.float64(7.25), 5e-324, "<LOQ", -0.004, -math.inf, True, ""),
    ("HS-05", 4, 1.7976931348623157e308, 99.95, "100.0", 12.0, 3.0, False, "x" * 300),  # wraps in its column
)
TABLE = Table("Samples", COLUMNS, ROWS, RoundingRule("significant", 3, "half_up"))


def sheets(path) -> dict[str, bytes]:  # type: ignore[no-untyped-def]
    with zipfile.ZipFile(path) as z:
        return {n: z.read(n) for n in z.namelist() if n.startswith("xl/")}


def test_cells_are_written_as_openpyxl_writes_them_when_it_tries_each_cell(tmp_path, monkeypatch) -> None:  # type: ignore[no-untyped-def]
    ours = tmp_path / "ours.xlsx"
    xlsx_export.write_tables([TABLE, TABLE.select(("Sample id", "Lower"), "Lower ends")], ours)
    monkeypatch.setattr(xlsx_export, "_cells_without_trial", lambda sheet: None)  # openpyxl's own way
    theirs = tmp_path / "theirs.xlsx"
    xlsx_export.write_tables([TABLE, TABLE.select(("Sample id", "Lower"), "Lower ends")], theirs)
    assert sheets(ours) == sheets(theirs)


def test_cells_read_back_with_their_values_formats_and_styles(tmp_path) -> None:  # type: ignore[no-untyped-def]
    path = tmp_path / "cadmium.xlsx"
    xlsx_export.write_tables([TABLE], path)
    sheet = load_workbook(path)["Samples"]
    assert sheet["A1"].value == CAUTION and sheet["A1"].font.bold
    heading_row = 3
    assert [c.value for c in sheet[heading_row]] == [c.heading for c in COLUMNS]
    assert all(c.font.bold for c in sheet[heading_row])
    for i, row in enumerate(ROWS):
        cells = sheet[heading_row + 1 + i]
        for column, value, cell in zip(COLUMNS, row, cells):
            where = f"{column.name} of {row[0]}"
            if value is None:
                assert cell.value is None, where
            elif isinstance(value, bool):
                assert cell.value is value, where
            elif isinstance(value, float) and not math.isfinite(value):
                assert cell.value == ("∞" if value > 0 else "−∞") and cell.data_type == "s", where
            elif isinstance(value, str) and column.kind == "reported" and value[0].isdigit():
                decimals = len(value.split(".")[1]) if "." in value else 0
                assert cell.value == float(value) and cell.number_format == ("0." + "0" * decimals if decimals else "0"), where
            elif value == "":
                assert cell.value is None, where  # an empty text cell reads back empty
            elif isinstance(value, str):
                assert cell.data_type == "s", where  # never a formula
                assert cell.value == value.replace("\x07", "") or cell.value.startswith("bad"), where
            else:
                assert cell.value == value and type(cell.value) in (int, float), where  # exact: the shortest repr
                assert cell.number_format == excel_format(value, column, TABLE.rounding), where
    assert sheet["I8"].alignment.wrap_text  # the long note wraps
