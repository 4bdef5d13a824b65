"""Numbers as the command line, the JSON, the CSV, the workbook and the record write them: plain decimals
from 1e-4 to below 1e7, "3.20 × 10⁻⁵" outside (core/notation.py), never Python's "1e-06" or "3e+06".

The trace and the load-cell runs are invented: a straight line of about 1e8 counts per mg/L over
1e-6 to 3.2e-5 mg/L, and about 1e-4 counts per unit over 1e6 to 3.2e7 units. The NIST StRD Pontius
data (tests/reference_data) give loads of 150000 to 3000000, which a laboratory writes plainly."""

from __future__ import annotations

import json
import re

import openpyxl
import pypdfium2 as pdfium

from tests.test_cli_export_digits import sheet_rows
from tests.test_cli_reported_digits import pontius_table, quantify

PYTHON_EXPONENT = re.compile(r"\d[eE][+-]0\d")
"""Python's exponent forms ("1e-06", "3e+06"); a hexadecimal digest ("6a31e7f2") has no sign after its e,
and the machine-readable form of a text field ("9.95e-6") no zero before its power."""

TRACE_STANDARDS = "Standard,Concentration (mg/L),Response\n" + "".join(
    f"S{i + 1},{c},{r}\n" for i, (c, r) in enumerate([("0.000001", 102.1), ("0.000002", 205.3), ("0.000004", 398.7),
                                                      ("0.000008", 812.4), ("0.000016", 1597.2), ("0.000032", 3221.5)]))
TRACE_SAMPLES = "Sample,Type,Dilution,Nominal,Response\nU1,unknown,1,,1001.3\nU2,unknown,1,,1507.8\nQC low,QC,1,0.000003,301.2\n"
LOAD_STANDARDS = "Standard,Concentration (units),Response\n" + "".join(
    f"L{i + 1},{c},{r}\n" for i, (c, r) in enumerate([(1000000, 101.2), (2000000, 199.1), (4000000, 402.3),
                                                      (8000000, 797.6), (16000000, 1603.9), (32000000, 3198.8)]))
LOAD_SAMPLES = "Sample,Type,Dilution,Nominal,Response\nB1,unknown,1,,1250.4\n"


def nfkc(text: str) -> str:
    """Text as read: no-break spaces as spaces, runs of white space as one (superscripts kept)."""
    return " ".join(text.replace("\u00a0", " ").split())


def test_tiny_concentrations_read_in_one_notation_on_the_command_line(tmp_path) -> None:
    out = quantify(tmp_path, TRACE_STANDARDS, TRACE_SAMPLES, "--analyte", "tracer", "--model", "linear",
                   "--weighting", "none").stdout
    assert not PYTHON_EXPONENT.search(out), out
    text = nfkc(out)
    assert "calibrated range 1 × 10⁻⁶–3.2 × 10⁻⁵ mg/L (LLOQ–ULOQ); reporting limit 1 × 10⁻⁶ mg/L (LLOQ)" in text
    # LOD and LOQ by the run's rule (three significant figures, the default)
    assert re.search(r"LOD \d\.\d\d × 10⁻⁷ mg/L, LOQ \d\.\d\d × 10⁻⁷ mg/L", text), text
    assert "QC level 3 × 10⁻⁶: 1 of 1 within limits" in text
    line = next(nfkc(line) for line in out.splitlines() if line.startswith("  U1 "))
    assert re.fullmatch(r"U1 9\.95 × 10⁻⁶ 9\.95 × 10⁻⁶ \d\.\d+ × 10⁻⁶ – \d\.\d+ × 10⁻⁵ inside the calibrated range", line), line


def test_large_concentrations_share_the_notation_of_both_range_ends(tmp_path) -> None:
    out = quantify(tmp_path, LOAD_STANDARDS, LOAD_SAMPLES, "--analyte", "load", "--model", "linear",
                   "--weighting", "none").stdout
    assert not PYTHON_EXPONENT.search(out), out
    text = nfkc(out)
    # 1000000 is plain on its own, but beside 3.2 × 10⁷ the range's two ends are written alike
    assert "calibrated range 1 × 10⁶–3.2 × 10⁷ units (LLOQ–ULOQ)" in text
    line = next(nfkc(line) for line in out.splitlines() if line.startswith("  B1 "))
    # to the units its interval supports (the rounding rule's own choice), written with an exponent
    assert re.fullmatch(r"B1 1\.2\d+ × 10⁷ 1\.2\d+ × 10⁷ 1\.2\d+ × 10⁷ – 1\.2\d+ × 10⁷ inside the calibrated range", line), line


def test_json_text_fields_are_machine_readable_and_numbers_stay_numbers(tmp_path) -> None:
    data = json.loads(quantify(tmp_path, TRACE_STANDARDS, TRACE_SAMPLES, "--analyte", "tracer", "--model", "linear",
                               "--weighting", "none", "--json").stdout)
    analyte = data["analytes"][0]
    rows = {r["id"]: r for r in analyte["samples"]}
    assert rows["U1"]["reported_text"] == rows["U1"]["reported_rounded"] == "9.95e-6"
    assert float(rows["U2"]["reported_rounded"]) == 1.50e-5
    assert isinstance(rows["U1"]["reported"], float) and isinstance(analyte["reporting_range"]["lloq"], float)
    assert "(1e-6 mg/L)" in analyte["reporting_range"]["note"]
    assert "QC level 3e-6:" in " ".join(analyte["qc_verdict"]["reasons"])
    assert not re.search(r"×\s10", json.dumps(data, ensure_ascii=False))


def test_csv_workbook_and_record_write_the_same_digits(tmp_path) -> None:
    quantify(tmp_path, TRACE_STANDARDS, TRACE_SAMPLES, "--analyte", "tracer", "--model", "linear", "--weighting", "none",
             "--export", str(tmp_path / "trace.csv"))
    csv_text = (tmp_path / "trace.csv").read_text(encoding="utf-8")
    assert ",9.95e-6," in csv_text and not re.search(r"×\s10", csv_text) and not PYTHON_EXPONENT.search(csv_text)
    quantify(tmp_path, TRACE_STANDARDS, TRACE_SAMPLES, "--analyte", "tracer", "--model", "linear", "--weighting", "none",
             "--export", str(tmp_path / "trace.xlsx"), "--report", str(tmp_path / "trace.pdf"))
    book = openpyxl.load_workbook(tmp_path / "trace.xlsx")
    try:
        summary = {r["Sample id"].value: r for r in sheet_rows(book, "Summary")}
        cell = summary["U1"]["Reported"]
        # a number, shown with the three figures of "9.95 × 10⁻⁶" in the spreadsheet's own exponent form
        assert isinstance(cell.value, float) and cell.value == 9.95e-6 and cell.number_format == "0.00E+00"
        assert summary["U2"]["Reported"].number_format == "0.00E+00" and summary["U2"]["Reported"].value == 1.5e-5
    finally:
        book.close()
    pdf = pdfium.PdfDocument(tmp_path / "trace.pdf")
    try:
        pages = [pdf[i].get_textpage().get_text_range() for i in range(len(pdf))]
    finally:
        pdf.close()
    record = nfkc(" ".join(pages))
    # a number is never broken across the lines of a table cell: U1's concentration × dilution and
    # reported value each whole on their line, and its interval broken only after its dash
    lines = [nfkc(line) for page in pages for line in page.splitlines()]
    assert sum(line.count("9.95 × 10⁻⁶") for line in lines) == 2, [line for line in lines if "9.95" in line]
    assert any(re.search(r"\d\.\d+ × 10⁻⁶ –", line) for line in lines if "U1" in line)
    assert not PYTHON_EXPONENT.search(record)
    assert "Calibrated range 1 × 10⁻⁶–3.2 × 10⁻⁵ (LLOQ–ULOQ)" in record
    assert "U1 unknown 1 1 9.95 × 10⁻⁶ 9.95 × 10⁻⁶" in record
    assert "QC level 3 × 10⁻⁶" in record


def test_nist_pontius_range_and_inverse_prediction_read_plainly(tmp_path) -> None:
    # NIST StRD Pontius: loads 150000 to 3000000. NIST/SEMATECH e-Handbook §4.6.1.10: the deflection
    # 1.239722 gives a load of 1705106; its interval's half-width (about 592) has its second figure in the
    # tens (GUM JCGM 100:2008 §7.2.6), so the value and the ends are printed to the tens.
    out = quantify(tmp_path, pontius_table(), "Sample,Response\nLC-1,1.239722\n", "--analyte", "load",
                   "--model", "quadratic", "--weighting", "none").stdout
    assert not PYTHON_EXPONENT.search(out), out
    assert "calibrated range 150000–3000000 (LLOQ–ULOQ)" in out
    line = next(line for line in out.splitlines() if line.startswith("  LC-1 "))
    assert line.split()[1:6] == ["1705110", "1705110", "1704510", "–", "1705700"], line
