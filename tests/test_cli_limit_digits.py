"""A recovery or %RE is shown with the decimals that tell on which side of its acceptance limit it
lies: never "115.0" beside FAIL, nor beside pass for 114.99 (the rule of
:mod:`curvewright.core.limit_digits`). The command runs as a subprocess on CSV files as a spreadsheet
writes them; the tables are invented data (a tin line y = 5 + 10·x, with standards placed at chosen
%RE and QC samples at chosen recoveries). The limits are the profile's: ±15 % for a standard above the
lowest level and for a QC sample (ICH M10, section 3.2.5 and 3.2.6, from memory; the profile itself
says they must be confirmed against the guideline)."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import openpyxl
import pypdfium2

from tests.io.helpers import ROOT

# y = 5 + 10·x; each level's pair lies symmetrically about the line, so the fitted line is exactly it
# and a standard's %RE is ±100·d/(10·x) for a pair at ±d: ±15.01 % at 2 mg/L (d = 3.002),
# ±14.999 % at 4 mg/L (d = 5.9996), ±15 % at 8 mg/L (d = 12).
STANDARDS = """Standard id,Concentration (mg/L),Response
T-1a,1.0,15.25
T-1b,1.0,14.75
T-2a,2.0,28.002
T-2b,2.0,21.998
T-4a,4.0,50.9996
T-4b,4.0,39.0004
T-8a,8.0,97
T-8b,8.0,73
T-16a,16.0,165.25
T-16b,16.0,164.75
T-32a,32.0,325.25
T-32b,32.0,324.75
"""
# found (response − 5)/10 against a nominal of 20 mg/L (above the LOQ these standards give):
# 115.000 %, 115.010 %, 114.990 %, 84.990 %
SAMPLES = """Sample,Type,Dilution,Nominal,Response
U1,unknown,1,,128.45
QA,QC,1,20.0,235.0
QB,QC,1,20.0,235.02
QC3,QC,1,20.0,234.98
QD,QC,1,20.0,174.98
"""


def run(folder: Path) -> subprocess.CompletedProcess:
    (folder / "std.csv").write_bytes(STANDARDS.replace("\n", "\r\n").encode())
    (folder / "smp.csv").write_bytes(SAMPLES.replace("\n", "\r\n").encode())
    return subprocess.run(
        [sys.executable, "-m", "curvewright", "quantify", "--standards", str(folder / "std.csv"),
         "--samples", str(folder / "smp.csv"), "--analyte", "tin", "--model", "linear", "--weighting", "none",
         "--profile", "ich-m10-chromatographic", "--export", str(folder / "out.xlsx"),
         "--report", str(folder / "out.pdf")],
        capture_output=True, text=True, cwd=ROOT, env={"PYTHONPATH": str(ROOT / "src"), "PATH": "/usr/bin:/bin"},
        timeout=300)


def column(sheet, heading: str) -> dict[str, openpyxl.cell.Cell]:
    """The cells of the column headed ``heading``, by the row's first cell."""
    rows = list(sheet.iter_rows())
    for r, row in enumerate(rows):
        for c in row:
            if c.value == heading:
                return {str(x[0].value): x[c.column - 1] for x in rows[r + 1:] if x[0].value is not None}
    raise AssertionError(f"no column {heading!r} in {sheet.title}")


def test_recovery_and_relative_error_show_their_side_of_the_limit(tmp_path: Path) -> None:
    done = run(tmp_path)
    assert done.returncode in (0, 1), done.stderr  # 1: the run is not accepted (its QC fails)
    book = openpyxl.load_workbook(tmp_path / "out.xlsx")

    recovery = column(book["Samples"], "Recovery (%)")
    verdict = column(book["Samples"], "QC or check")
    shown = {sid: (recovery[sid].number_format, verdict[sid].value) for sid in ("QA", "QB", "QC3", "QD")}
    assert shown == {"QA": ("0.0", "pass"), "QB": ("0.00", "FAIL"), "QC3": ("0.00", "pass"), "QD": ("0.00", "FAIL")}
    assert abs(recovery["QB"].value - 115.01) < 1e-9  # the cell keeps the number, only its format changes

    sheet = next(s for s in book.worksheets if s.title.startswith("Standards"))
    relative = column(sheet, "Relative error (%)")
    within = column(sheet, "Within limits")
    formats = {sid: (relative[sid].number_format, within[sid].value) for sid in ("T-2a", "T-4a", "T-8a", "T-16a")}
    assert formats == {"T-2a": ("+0.00;-0.00;0.00", "NO"), "T-4a": ("+0.000;-0.000;0.000", "yes"),
                       "T-8a": ("+0.0;-0.0;0.0", "yes"), "T-16a": ("+0.0;-0.0;0.0", "yes")}

    pdf = pypdfium2.PdfDocument(tmp_path / "out.pdf")
    try:
        text = "\n".join(pdf[i].get_textpage().get_text_range() for i in range(len(pdf)))
    finally:
        pdf.close()
    for words in ("115.0 pass", "115.01 FAIL", "114.99 pass", "84.99 FAIL"):
        assert words in text, words
    assert "115.0 FAIL" not in text and "85.0 FAIL" not in text
    for words in ("+15.01 15 NO", "+14.999 15 yes", "+15.0 15 yes"):  # the standards' table: %RE, tolerance, verdict
        assert words in text, words


# continuing calibration verifications at 20 mg/L found at 110.010 %, 109.990 % and 110.000 %; the
# general profile judges a CCV within ±10 % (the profile's own window)
CHECKS = """K1,ccv,1,20.0,225.02
K2,ccv,1,20.0,224.98
K3,ccv,1,20.0,225.0
"""


def test_a_calibration_check_shows_its_side_of_its_window(tmp_path: Path) -> None:
    import json

    (tmp_path / "std.csv").write_bytes(STANDARDS.replace("\n", "\r\n").encode())
    (tmp_path / "smp.csv").write_bytes((SAMPLES + CHECKS).replace("\n", "\r\n").encode())
    done = subprocess.run(
        [sys.executable, "-m", "curvewright", "quantify", "--standards", str(tmp_path / "std.csv"),
         "--samples", str(tmp_path / "smp.csv"), "--analyte", "tin", "--model", "linear", "--weighting", "none",
         "--profile", "general", "--export", str(tmp_path / "out.xlsx"), "--json"],
        capture_output=True, text=True, cwd=ROOT, env={"PYTHONPATH": str(ROOT / "src"), "PATH": "/usr/bin:/bin"},
        timeout=300)
    assert done.returncode in (0, 1), done.stderr
    reasons = [c["reason"] for a in json.loads(done.stdout)["analytes"] for c in a["calibration_checks"]["checks"]]
    assert [r.split(" of ")[0] for r in reasons] == ["FAIL: CCV K1: recovery 110.01 %", "pass: CCV K2: recovery 109.99 %",
                                                     "pass: CCV K3: recovery 110.0 %"], reasons
    book = openpyxl.load_workbook(tmp_path / "out.xlsx")
    for sheet in (book["Samples"], next(s for s in book.worksheets if s.title.startswith("Calibration checks"))):
        recovery = column(sheet, "Recovery (%)")
        assert [recovery[k].number_format for k in ("K1", "K2", "K3")] == ["0.00", "0.00", "0.0"], sheet.title
