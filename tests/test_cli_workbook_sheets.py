"""Which sheet of a workbook is read, and that the notes name it.

A workbook whose first sheet is hidden (an old template's data kept in it) and whose active, shown
sheet holds the batch's standards, as spreadsheet programs save it. The scenario is invented (the
Larkmoor water laboratory's zirconium line, µg/L); the slope is checked against ``cw.fit`` here.
"""

from __future__ import annotations

import json
from pathlib import Path

import openpyxl
import pytest

import curvewright as cw
from tests.test_cli_tables import run_cli, write

TEMPLATE = [(0.5, 10.0), (1, 20.0), (2, 40.0), (5, 100.0), (10, 200.0), (20, 400.0)]  # old template: 20 per µg/L
BATCH = [(0.5, 51.2), (1, 101.9), (2, 203.1), (5, 506.2), (10, 1003.5), (20, 2011.8)]  # this batch: about 100


def hidden_template_workbook(path: Path) -> Path:
    book = openpyxl.Workbook()
    old = book.active
    old.title = "Template"
    new = book.create_sheet("Standards")
    for sheet, rows in ((old, TEMPLATE), (new, BATCH)):
        sheet.append(["Standard id", "Concentration (µg/L)", "Response (counts)"])
        for i, (x, y) in enumerate(rows, start=1):
            sheet.append([f"Zr-{i:02d}", x, y])
    old.sheet_state = "hidden"
    book.active = 1
    book.save(path)
    return path


def _slope(stdout: str) -> float:
    return json.loads(stdout)["analytes"][0]["coefficients"][1]


@pytest.mark.parametrize("named", [False, True])
def test_the_active_shown_sheet_is_read_and_named(tmp_path: Path, named: bool) -> None:
    book = hidden_template_workbook(tmp_path / "batch.xlsx")
    samples = write(tmp_path / "smp.csv", ["Sample,Response (counts)", "U1,640.5"])
    args = ["quantify", "--standards", str(book), "--samples", str(samples), "--model", "linear",
            "--weighting", "none"] + (["--standards-sheet", "Template"] if named else [])
    text, js = run_cli(*args), run_cli(*args, "--json")
    assert text.returncode == 0 and js.returncode == 0, text.stderr + js.stderr
    rows = TEMPLATE if named else BATCH
    expected = cw.fit([x for x, _ in rows], [y for _, y in rows], "linear", "none").coefficients[1]
    assert _slope(js.stdout) == pytest.approx(expected, rel=1e-9)
    notes = "\n".join(json.loads(js.stdout)["notes"])
    if named:  # a hidden sheet only when named, and said to be hidden
        note = "sheet 'Template' (hidden in the workbook; read because it was named): imported 6 standards"
    else:
        note = "batch.xlsx, sheet 'Standards': imported 6 standards"
    assert note in notes and note in text.stdout
