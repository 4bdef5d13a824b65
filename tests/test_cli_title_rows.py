"""A workbook whose first row is a merged title and whose header stands in row 2, as laboratories
lay out their sheets: the same advice as a text table with a title line gets, naming the sheet.
The scenario is invented (the Larkmoor water laboratory's zirconium series)."""

from __future__ import annotations

from pathlib import Path

import openpyxl

from tests.test_cli_tables import run_cli, write


def titled_workbook(path: Path) -> Path:
    book = openpyxl.Workbook()
    sheet = book.active
    sheet.title = "Calibration"
    sheet["A1"] = "Larkmoor laboratory - Zr series 12"
    sheet.merge_cells("A1:C1")
    sheet.append(["Standard id", "Concentration (µg/L)", "Response (counts)"])
    for row in (["K1", 0.5, 51.2], ["K2", 1, 101.9], ["K3", 2, 203.1]):
        sheet.append(row)
    book.save(path)
    return path


def test_a_title_above_the_header_is_named_as_for_a_text_table(tmp_path: Path) -> None:
    samples = write(tmp_path / "smp.csv", ["Sample,Response (counts)", "U1,140.5"])
    book = run_cli("quantify", "--standards", str(titled_workbook(tmp_path / "zr.xlsx")), "--samples", str(samples))
    text = write(tmp_path / "zr.csv", ["Larkmoor laboratory - Zr series 12", "Standard id,Concentration (µg/L),Response",
                                       "K1,0.5,51.2", "K2,1,101.9"])
    csv = run_cli("quantify", "--standards", str(text), "--samples", str(samples))
    advice = "delete the rows above it (a title, a batch line)"
    assert book.returncode != 0 and csv.returncode != 0
    assert ("zr.xlsx, sheet 'Calibration': the header row must be the first row of the table: " + advice
            + ": row 1 ('Larkmoor laboratory - Zr series 12'). The header stands in row 2 ('Standard id', "
              "'Concentration (µg/L)', 'Response (counts)').") in book.stderr
    assert "rename" not in book.stderr.lower()
    assert "delete the lines above it (a title, a batch line)" in csv.stderr  # the text table's advice
