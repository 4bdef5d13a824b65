"""Hidden rows of a workbook are neither imported nor left out without a word.

An analyst hid one standard's row in the spreadsheet (openpyxl writes the row hidden, as a
spreadsheet program does). The scenario is invented (the Larkmoor water laboratory's zirconium
line, µg/L); the slopes are checked against ``cw.fit`` here.
"""

from __future__ import annotations

import json
from pathlib import Path

import openpyxl
import pytest

import curvewright as cw
from tests.test_cli_tables import run_cli, write

ROWS = [("Zr-01", 0.5, 51.2), ("Zr-02", 1, 101.9), ("Zr-03", 2, 203.1), ("Zr-04", 2, 211.4),
        ("Zr-05", 5, 506.2), ("Zr-06", 10, 1003.5), ("Zr-07", 20, 2011.8)]
HIDDEN = 5  # the sheet's row 5 holds Zr-04, an injection the analyst doubted and hid


def workbook_with_a_hidden_row(path: Path) -> Path:
    book = openpyxl.Workbook()
    sheet = book.active
    sheet.title = "Standards"
    sheet.append(["Standard id", "Concentration (µg/L)", "Response (counts)"])
    for row in ROWS:
        sheet.append(list(row))
    sheet.row_dimensions[HIDDEN].hidden = True
    book.save(path)
    return path


def _args(tmp_path: Path) -> list[str]:
    book = workbook_with_a_hidden_row(tmp_path / "batch.xlsx")
    samples = write(tmp_path / "smp.csv", ["Sample,Response (counts)", "U1,640.5"])
    return ["quantify", "--standards", str(book), "--samples", str(samples), "--model", "linear", "--weighting", "none"]


def test_hidden_rows_without_a_choice_are_refused_and_named(tmp_path: Path) -> None:
    done = run_cli(*_args(tmp_path))
    assert done.returncode != 0 and done.stdout == ""
    assert "batch.xlsx: sheet 'Standards' has hidden rows holding values: row 5 (Zr-04, 2.0, 211.4)" in done.stderr
    assert "--hidden-rows include or --hidden-rows skip" in done.stderr


@pytest.mark.parametrize("choice", ["skip", "include"])
def test_hidden_rows_are_skipped_or_included_as_chosen_and_said(tmp_path: Path, choice: str) -> None:
    done = run_cli(*_args(tmp_path), "--hidden-rows", choice, "--json")
    assert done.returncode == 0, done.stderr
    out = json.loads(done.stdout)
    used = [r for r in ROWS if choice == "include" or r[0] != "Zr-04"]
    expected = cw.fit([x for _, x, _ in used], [y for _, _, y in used], "linear", "none").coefficients[1]
    assert out["analytes"][0]["coefficients"][1] == pytest.approx(expected, rel=1e-9)
    done_words = "left out" if choice == "skip" else "included"
    assert (f"sheet 'Standards': imported {len(used)} standards; columns separated by workbook cells; numbers read "
            f"from workbook cells; hidden row(s) 5 {done_words}, as chosen") in "\n".join(out["notes"])
