"""The calibrated range's ends are standards' concentrations as entered: every output shows them so.

Invented scenario: nickel standards from 250 to 1234567 ng/L in duplicate, ±0.2 % about
y = 40 + 0.8·x. The ULOQ is the entered 1234567; six significant figures would print it "1.23457e+06"
(and the LLOQ, also the reporting limit, is 250 as entered).
"""

from __future__ import annotations

import unicodedata
from pathlib import Path

import openpyxl
from pypdf import PdfReader

from tests.test_cli_export_digits import shown, sheet_rows
from tests.test_cli_tables import run_cli, write

LEVELS = (250, 1000, 5000, 20000, 100000, 500000, 1234567)


def test_the_range_ends_are_shown_as_entered(tmp_path: Path) -> None:
    std = write(tmp_path / "nickel_std.csv", ["Standard,Concentration (ng/L),Response",
                                              *[f"N{c}-{i},{c},{(40 + 0.8 * c) * d:.1f}" for c in LEVELS
                                                for i, d in ((1, 1.002), (2, 0.998))]])
    smp = write(tmp_path / "nickel_smp.csv", ["Sample,Response", "W-1,50000", "W-2,900000"])
    book, record = tmp_path / "nickel.xlsx", tmp_path / "nickel.pdf"
    out = run_cli("quantify", "--standards", str(std), "--samples", str(smp), "--analyte", "nickel",
                  "--model", "linear", "--weighting", "1/x^2", "--export", str(book), "--report", str(record))
    assert out.returncode == 0, out.stderr
    assert "  calibrated range 250–1234567 ng/L (LLOQ–ULOQ); reporting limit 250 ng/L (LLOQ)" in out.stdout
    assert "1.23457e+06" not in out.stdout

    text = " ".join(unicodedata.normalize("NFKC", " ".join(p.extract_text() for p in PdfReader(record).pages)).split())
    assert "1.23457e+06" not in text and "1.23457E+06" not in text
    assert ("Calibrated range, LLOQ (lowest non-zero standard) 250 Calibrated range, ULOQ (highest standard) 1234567 "
            "Reporting limit (LLOQ) 250 ") in text

    opened = openpyxl.load_workbook(book)
    try:
        cells = {r["Item"].value: r["Value"] for r in sheet_rows(opened, "Calibration – nickel")}
    finally:
        opened.close()
    ends = [cells[k] for k in ("Calibrated range, LLOQ (lowest non-zero standard)", "Calibrated range, ULOQ (highest standard)",
                               "Reporting limit (LLOQ)")]
    assert [c.value for c in ends] == [250, 1234567, 250]  # numbers, at full precision
    assert [shown(c) for c in ends] == ["250", "1234567", "250"]
