"""The note naming the results shown to their interval's decimal place names only those whose text changed.

Invented scenario: cobalt standards at six levels in duplicate, ±0.12 about y = 2 + 0.01·x, so the
fitted line is that line (each pair is symmetric about it) and a response r reads (r − 2)/0.01 ng/mL.
QC-H (5.702) reads 370.2: three significant figures show "370", and so does the unit place of its
interval (about ±31), so the rule's text stands and the note must not name it. U-1 (15.724) reads
1372.4: three figures would show "1370", zeros read as exact digits where the interval supports the
unit, so it is shown as "1372" and named (GUM JCGM 100:2008 §7.2.6, the project's rounding rule).
"""

from __future__ import annotations

import unicodedata
from pathlib import Path

import openpyxl
from pypdf import PdfReader

from tests.test_cli_export_digits import shown, sheet_rows
from tests.test_cli_tables import run_cli, write

STANDARDS = ["Standard,Concentration (ng/mL),Response",
             *[f"S{c}-{i},{c},{2 + 0.01 * c + d:.3f}" for c in (100, 250, 500, 1000, 1500, 2000)
               for i, d in ((1, 0.12), (2, -0.12))]]
SAMPLES = ["Sample,Type,Dilution,Nominal,Response", "QC-H,QC,1,370,5.702", "U-1,unknown,1,,15.724",
           "U-2,unknown,1,,9.871"]


def test_only_results_whose_text_changed_are_named(tmp_path: Path) -> None:
    std = write(tmp_path / "cobalt_std.csv", STANDARDS)
    smp = write(tmp_path / "cobalt_smp.csv", SAMPLES)
    book, record = tmp_path / "cobalt.xlsx", tmp_path / "cobalt.pdf"
    out = run_cli("quantify", "--standards", str(std), "--samples", str(smp), "--analyte", "cobalt",
                  "--model", "linear", "--weighting", "none", "--export", str(book), "--report", str(record))
    assert out.returncode == 0, out.stderr
    rows = {line.split()[0]: line.split() for line in out.stdout.splitlines() if line.startswith(("  QC-H ", "  U-"))}
    assert rows["QC-H"][1] == "370" and rows["U-1"][1] == "1372" and rows["U-2"][1] == "787"
    low, high = float(rows["QC-H"][3]), float(rows["QC-H"][5])
    assert 10 <= (high - low) / 2 < 100  # the interval's resolution is the unit place: "370" either way
    assert ("  shown to the decimal place of their interval: U-1 (the rounding rule, 3 significant figures, "
            "round half up, would show it outside") in out.stdout

    opened = openpyxl.load_workbook(book)
    try:
        summary = {r["Sample id"].value: shown(r["Reported"]) for r in sheet_rows(opened, "Summary")}
        said = {r["Item"].value: r["Value"].value for r in sheet_rows(opened, "Calibration – cobalt")}
    finally:
        opened.close()
    assert summary == {"QC-H": "370", "U-1": "1372", "U-2": "787"}
    assert said["Shown to the decimal place of their interval instead"].startswith("U-1: the rule (3 significant")
    text = " ".join(unicodedata.normalize("NFKC", " ".join(p.extract_text() for p in PdfReader(record).pages)).split())
    at = text.index("Shown to the decimal place of their interval instead")
    assert text[at:].split(" ", 9)[9].startswith("U-1: the rule"), text[at:at + 200]
