"""Messages about one file name it once and say what a cell holds: a run document cut short, and a
workbook cell a spreadsheet program turned into a date. The scenario is invented (the Larkmoor
water laboratory's zirconium line, µg/L)."""

from __future__ import annotations

import datetime
from pathlib import Path

import openpyxl

from tests.test_cli_tables import run_cli, write


def test_a_damaged_run_document_is_named_once(tmp_path: Path) -> None:
    path = tmp_path / "zr_batch.json"
    path.write_text('{"format": "x"\n', encoding="utf-8")  # cut short while being written
    done = run_cli("quantify", str(path))
    assert done.returncode != 0
    assert f"{path}: not valid JSON at line 2, column 1" in done.stderr
    assert done.stderr.count("zr_batch.json") == 1


def test_a_date_in_a_number_cell_is_called_a_date(tmp_path: Path) -> None:
    std = write(tmp_path / "std.csv", ["Standard id,Concentration (µg/L),Response (counts)", "Zr-01,0.5,51.2",
                                       "Zr-02,1,101.9", "Zr-03,2,203.1", "Zr-04,5,506.2", "Zr-05,10,1003.5"])
    book = openpyxl.Workbook()
    sheet = book.active
    sheet.title = "Samples"
    sheet.append(["Sample", "Dilution", "Response (counts)"])
    sheet.append(["Fluss-A", datetime.datetime(2026, 1, 10), 640.5])  # "1-10" typed, turned into a date
    sheet.append(["Fluss-B", 2, 503.9])
    book.save(tmp_path / "samples.xlsx")
    done = run_cli("quantify", "--standards", str(std), "--samples", str(tmp_path / "samples.xlsx"))
    assert done.returncode != 0
    assert ("samples table samples.xlsx, sheet 'Samples'" in done.stderr
            or f"samples table {tmp_path / 'samples.xlsx'}, sheet 'Samples'" in done.stderr)
    assert ("row 2, column 2 (Dilution): '2026-01-10' — is a date in the workbook, not a number (the spreadsheet "
            "program probably turned what was typed into a date") in done.stderr
    assert "00:00:00" not in done.stderr
