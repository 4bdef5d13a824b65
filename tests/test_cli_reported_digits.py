"""The digits a reported result is shown with, as the command line prints and exports them.

The tin runs are invented: a straight line y = 5 + 10·x counts per mg/L, each level measured twice at
±0.25 counts around the line, so the fitted intercept carries binary round-off (4.999999999999972)."""

from __future__ import annotations

import json
import re
import subprocess
import unicodedata
from pathlib import Path

import openpyxl
import pytest
from pypdf import PdfReader

from tests.cli_runs import run_cli
from tests.io.helpers import ROOT
from tests.test_cli_export_digits import shown, sheet_rows

TIN_STANDARDS = "Std,Concentration (mg/L),Response\n" + "".join(
    f"T{c}-{i},{c}.0,{5 + 10 * c + d}\n" for c in (1, 2, 4, 8, 16, 32) for i, d in ((1, 0.25), (2, -0.25)))
TIN_TIES = "Sample,Type,Dilution,Nominal,Response\nA,unknown,1,,28.45\nB,unknown,1,,28.55\nC,unknown,1,,28.65\n"
"""Exact concentrations 2.345, 2.355 and 2.365 mg/L: ties at the second decimal."""


def tin_method(folder: Path, tie: str) -> Path:
    path = folder / f"tin_{tie}.json"
    path.write_text(json.dumps({
        "format": "curvewright-method/1", "id": "TIN-1", "name": "Tin in extract (invented)", "version": "1",
        "source": "invented validation report",
        "analytes": [{"name": "tin", "concentration_unit": "mg/L", "response_unit": "counts", "model": "linear",
                      "weighting": "none", "levels": [1, 2, 4, 8, 16, 32]}],
        "profile": "general", "rounding": {"kind": "decimals", "digits": 2, "tie": tie},
        "confidence_level": 0.95, "interval": "band", "limits_method": "residual_sd"}), encoding="utf-8")
    return path


def quantify(folder: Path, standards: str, samples: str, *extra: str) -> subprocess.CompletedProcess:
    std, smp = folder / "standards.csv", folder / "samples.csv"
    std.write_text(standards, encoding="utf-8")
    smp.write_text(samples, encoding="utf-8")
    out = run_cli("quantify", "--standards", str(std), "--samples", str(smp), *extra)
    assert out.returncode == 0, out.stderr
    return out


@pytest.mark.parametrize("tie, expected", [("half_even", {"A": "2.34", "B": "2.36", "C": "2.36"}),
                                           ("half_up", {"A": "2.35", "B": "2.36", "C": "2.37"})])
def test_a_method_tie_break_rounds_the_exact_value_not_its_round_off(tmp_path, tie, expected) -> None:
    # Exact arithmetic: (28.45 − 5)/10 = 2.345 and so on (the line is y = 5 + 10·x by construction);
    # half to even keeps the even last digit, half up raises it (USP General Notices 7.20 for half up).
    out = quantify(tmp_path, TIN_STANDARDS, TIN_TIES, "--analyte", "tin", "--method", str(tin_method(tmp_path, tie)),
                   "--json", "--export", str(tmp_path / "tin.xlsx"))
    rows = {r["id"]: r for r in json.loads(out.stdout)["analytes"][0]["samples"]}
    assert {k: r["reported_rounded"] for k, r in rows.items()} == expected
    text = quantify(tmp_path, TIN_STANDARDS, TIN_TIES, "--analyte", "tin", "--method",
                    str(tin_method(tmp_path, tie))).stdout
    for sample, digits in expected.items():
        line = next(line for line in text.splitlines() if line.startswith(f"  {sample} "))
        assert line.split()[1:3] == [digits, digits], line
    book = openpyxl.load_workbook(tmp_path / "tin.xlsx")
    try:
        found = {r["Sample id"].value: shown(r["Reported"]) for r in sheet_rows(book, "Summary")}
        assert found == expected
    finally:
        book.close()


def test_the_residual_is_named_externally_studentized_in_the_workbook_and_the_record(tmp_path) -> None:
    # The values are the externally studentized (deleted) residuals (Belsley, Kuh & Welsch 1980), which the
    # influence flags use; a heading saying only "Studentized residual" leaves the internal one possible.
    quantify(tmp_path, TIN_STANDARDS, TIN_TIES, "--analyte", "tin", "--model", "linear", "--weighting", "none",
             "--concentration-unit", "mg/L", "--export", str(tmp_path / "tin.xlsx"), "--report", str(tmp_path / "tin.pdf"))
    book = openpyxl.load_workbook(tmp_path / "tin.xlsx")
    try:
        headings = list(sheet_rows(book, "Standards – tin")[0])
    finally:
        book.close()
    assert "Externally studentized residual" in headings
    assert not [h for h in headings if h and "tudentized" in h and not h.startswith("Externally")], headings
    text = " ".join(page.extract_text() for page in PdfReader(tmp_path / "tin.pdf").pages)
    record = " ".join(unicodedata.normalize("NFKC", text).replace("-\n", "").split()).lower()
    named = re.findall(r"(\S+) studentized residuals? ?(\(external\))?", record)
    assert named and all(before.endswith("externally") or external for before, external in named), named
    assert "externally studentized residual" in record


def pontius_table() -> str:
    """NIST StRD Pontius (the project's copy in tests/reference_data) as a two-column table of loads and
    deflections, as a spreadsheet saves it."""
    lines = (ROOT / "tests" / "reference_data" / "nist_strd_pontius.csv").read_text(encoding="utf-8").splitlines()
    rows = [line for line in lines if line and not line.startswith("#")]
    header, data = rows[0].split(","), [r.split(",") for r in rows[1:]]
    x, y = header.index("x"), header.index("y")
    return "Concentration,Response\n" + "".join(f"{r[x]},{r[y]}\n" for r in data)


def test_a_large_result_is_shown_to_the_digits_of_its_interval_not_three_figures(tmp_path) -> None:
    # NIST/SEMATECH e-Handbook §4.6.1.10: deflection 1.239722 gives a load of 1705106 (printed to the unit);
    # its 95 % interval 1704513.37 – 1705697.76 as held in tests/core/test_reference_nist.py. Its half-width,
    # 592.2, has its second significant figure in the tens, so the ends are printed to the tens and so is
    # the load (GUM JCGM 100:2008 §7.2.6: the uncertainty to at most two significant figures and the result
    # to the same decimal place). Three significant figures (1710000) would lie outside that interval and
    # look exact.
    samples = "Sample,Response\nLC-1,1.239722\n"
    out = quantify(tmp_path, pontius_table(), samples, "--analyte", "load", "--model", "quadratic", "--weighting",
                   "none", "--export", str(tmp_path / "load.xlsx"), "--report", str(tmp_path / "load.pdf"))
    line = next(line for line in out.stdout.splitlines() if line.startswith("  LC-1 "))
    assert line.split()[1:6] == ["1705110", "1705110", "1704510", "–", "1705700"], line
    assert "shown to the decimal place of their interval: LC-1 (the rounding rule, 3 significant figures" in out.stdout
    data = json.loads(quantify(tmp_path, pontius_table(), samples, "--analyte", "load", "--model", "quadratic",
                               "--weighting", "none", "--json").stdout)
    assert data["analytes"][0]["samples"][0]["reported_rounded"] == "1705110"
    book = openpyxl.load_workbook(tmp_path / "load.xlsx")
    try:
        summary = sheet_rows(book, "Summary")[0]
        samples_row = sheet_rows(book, "Samples")[0]
        # the Reported cell holds the number rounded to the tens; the cells that keep the full number show
        # it to the unit, as a number format cannot round to the tens
        assert [shown(summary[c]) for c in ("Reported", "Estimate × dilution", "Lower limit × dilution", "Upper limit × dilution")] == \
            ["1705110", "1705106", "1704513", "1705698"]
        assert [shown(samples_row[c]) for c in ("Estimated concentration", "Concentration × dilution", "Reported")] == \
            ["1705106", "1705106", "1705110"]
        said = {r["Item"].value: r["Value"].value for r in sheet_rows(book, "Calibration – load")}
        assert said["Shown to the decimal place of their interval instead"].startswith("LC-1: the rule")
    finally:
        book.close()
    record = " ".join(unicodedata.normalize("NFKC", " ".join(
        page.extract_text() for page in PdfReader(tmp_path / "load.pdf").pages)).split())
    assert "1710000" not in record and "1705110 1705110 1704510 – 1705700" in record


def test_a_whole_number_keeps_the_digits_its_interval_supports() -> None:
    # GUM §7.2.6 (JCGM 100:2008): with a half-width of 125 (its second significant figure in the tens) the
    # result is given to the tens, the place of its printed interval; "14500" would read as five exact
    # figures. With ±1500, three figures say no more than the interval does, and the rule stands.
    from curvewright.core.rounding import RoundingRule

    rule = RoundingRule("significant", 3)
    assert rule.text_within(14524.0, 14399.0, 14649.0) == "14520"
    assert rule.text_within(14524.0, 13024.0, 16024.0) == "14500"
    # decimals stop where they are shown: 2 decimals with a half-width of 0.065 stand (common practice)
    assert RoundingRule("decimals", 2, "half_even").text_within(2.345, 2.28, 2.41) == "2.34"


def test_a_value_at_zero_within_its_resolution_reads_as_zero_not_round_off(tmp_path) -> None:
    # A response equal to the intercept (5 counts on y = 5 + 10·x) is zero; the fit's round-off leaves
    # about 3.6e-15 mg/L. Its 95 % interval of about ±0.066 mg/L is printed to 4 decimals (the second
    # significant figure of the half-width, GUM §7.2.6), and so is the zero.
    samples = "Sample,Type,Dilution,Nominal,Response\nZ,unknown,1,,5.0\n"
    out = quantify(tmp_path, TIN_STANDARDS, samples, "--analyte", "tin", "--model", "linear", "--weighting", "none",
                   "--concentration-unit", "mg/L", "--export", str(tmp_path / "tin.xlsx"), "--report",
                   str(tmp_path / "tin.pdf"))
    line = next(line for line in out.stdout.splitlines() if line.startswith("  Z "))
    assert "0.0000  −0.0658 – 0.0657" in line and "e-" not in line and "00000000" not in line, line
    book = openpyxl.load_workbook(tmp_path / "tin.xlsx")
    try:
        summary = sheet_rows(book, "Summary")[0]
        samples_row = sheet_rows(book, "Samples")[0]
        assert shown(summary["Estimate × dilution"]) == "0.0000"
        assert [shown(samples_row[c]) for c in ("Estimated concentration", "Concentration × dilution")] == \
            ["0.0000", "0.0000"]
    finally:
        book.close()
    record = " ".join(unicodedata.normalize("NFKC", " ".join(
        page.extract_text() for page in PdfReader(tmp_path / "tin.pdf").pages)).split())
    assert "0.0000 < 1.00 mg/L (LLOQ) −0.0658 – 0.0657" in record
    assert not re.search(r"(?<![\d.])-?0\.0{10,}[1-9]", record)  # no round-off shown as digits of a result
