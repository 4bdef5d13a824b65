"""A sample reading that cannot be read is named with its file and its sheet, in the warning and in
the JSON, as the other import messages name them. The tables are invented (the Larkwell lake
survey's manganese, ICP-MS counts) and written as spreadsheet programs write them; the command runs
as a subprocess, as an analyst runs it."""

from __future__ import annotations

import json
from pathlib import Path

import openpyxl

from tests.test_cli_export_cells import SAMPLES, STANDARDS, run_cli, write_csv


def test_a_never_calculated_response_formula_is_named_with_its_sheet(tmp_path: Path) -> None:
    """A workbook written by a program that stores formulas without calculating them (openpyxl leaves
    the stored value empty): the warning and the JSON name the file and the sheet, as the other import
    messages do ("FILE, sheet 'NAME': row …")."""
    book = openpyxl.Workbook()
    book.remove(book.active)
    cal = book.create_sheet("Cal")
    for row in STANDARDS:
        cal.append(row)
    unknowns = book.create_sheet("Unknowns")
    unknowns.append(["Sample", "Type", "Dilution", "Nominal", "Response (counts)"])
    unknowns.append(["LKW-0712", "unknown", 1, None, 640.225])
    unknowns.append(["QC mid", "QC", 1, 5, 503.9])
    unknowns.append(["LKW-0714", "unknown", 1, None, "=600+1"])
    path = tmp_path / "mn_book.xlsx"
    book.save(path)
    common = ("quantify", "--standards", str(path), "--standards-sheet", "Cal", "--samples", str(path),
              "--samples-sheet", "Unknowns", "--model", "linear", "--weighting", "none")

    done = run_cli(*common)
    assert done.returncode == 2, done.stderr  # exit 2 until the unreadable reading is checked
    assert (f"warning: {path}, sheet 'Unknowns': row 4, column 5 (Response (counts)): '=600+1' — a formula "
            "with no calculated value") in done.stderr, done.stderr

    data = json.loads(run_cli(*common, "--json").stdout)
    assert [(u["file"], u["sheet"], u["row"], u["text"]) for u in data["unusable_readings"]] == [
        (str(path), "Unknowns", 4, "=600+1")]


def test_an_unreadable_reading_of_a_text_table_has_no_sheet(tmp_path: Path) -> None:
    rows = [list(r) for r in SAMPLES]
    rows[1][4] = "64O.2"  # a letter O typed for a zero
    std = write_csv(tmp_path / "mn_standards.csv", STANDARDS)
    smp = write_csv(tmp_path / "mn_samples.csv", rows)
    done = run_cli("quantify", "--standards", str(std), "--samples", str(smp), "--model", "linear",
                   "--weighting", "none", "--json")
    data = json.loads(done.stdout)
    assert [(u["sheet"], u["row"], u["text"]) for u in data["unusable_readings"]] == [(None, 2, "64O.2")]
    assert f"warning: {smp}: row 2," in done.stderr, done.stderr
