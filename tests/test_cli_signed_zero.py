"""A signed percentage that rounds to zero at the decimals shown is printed with no sign: "0.0", never
"+0.0" or "-0.0" (common practice in printed tables: a sign on zero states a direction the printed
digits do not have). Checked in the record and the workbook written by the command line.

The zinc run is the project's invented demo run (sample_runs/zinc_emission_quadratic.json): standard Zn-8a
back-calculates 0.017 % above its nominal value. The copper run is invented: responses exactly on
y = 5 + 10·x counts per mg/L, so each %RE is zero up to the fit's binary round-off, of either sign."""

from __future__ import annotations

import re

import openpyxl

from tests.cli_runs import run_cli
from tests.io.helpers import ROOT
from tests.printed import printed_text
from tests.test_cli_export_digits import sheet_rows

COPPER = "Standard id,Concentration (mg/L),Response\n" + "".join(
    f"Cu{c}-{i},{c},{5 + 10 * c}\n" for c in (1, 2, 4, 8, 16, 32) for i in (1, 2))


def quantify(*args: str) -> None:
    """``curvewright quantify ARGS`` run as a person runs it; it must succeed."""
    out = run_cli("quantify", *args)
    assert out.returncode == 0, out.stderr


def shown_in_spreadsheet(value: float, number_format: str) -> str:
    """A "0.0"-style number format of up to three sections (positive; negative; zero) applied as a
    spreadsheet program applies it (from memory: with two or more sections the second shows a negative
    number without its minus sign, which the section writes itself where it has one; a zero takes the
    third section, else the first)."""
    sections = number_format.split(";")
    if len(sections) == 1:
        section, number = sections[0], value
    elif value < 0:
        section, number = sections[1], -value
    elif value == 0 and len(sections) > 2:
        section, number = sections[2], value
    else:
        section, number = sections[0], value
    sign = section[0] if section[0] in "+-" else ""
    body = section[len(sign):]
    decimals = len(body.split(".")[1]) if "." in body else 0
    return sign + f"{number:.{decimals}f}"


def relative_errors(book: openpyxl.Workbook, sheet: str) -> dict[str, str]:
    return {r["Standard id"].value: shown_in_spreadsheet(r["Relative error (%)"].value, r["Relative error (%)"].number_format)
            for r in sheet_rows(book, sheet) if isinstance(r["Relative error (%)"].value, float)}


def test_a_relative_error_that_rounds_to_zero_has_no_sign(tmp_path) -> None:
    quantify(str(ROOT / "sample_runs" / "zinc_emission_quadratic.json"), "--export", str(tmp_path / "zn.xlsx"),
            "--report", str(tmp_path / "zn.pdf"))
    record = printed_text(tmp_path / "zn.pdf")
    # the record's standards table: id, level, replicate, nominal, response, back-calculated, %RE, tolerance
    assert re.search(r"Zn-8a S8 1 10 11391\.5 10\.0 0\.0 20 yes", record), record
    assert re.search(r"Zn-2a S2 1 1 1476\.1 0\.997 −0\.3 30 yes", record), record  # a sign where digits show
    book = openpyxl.load_workbook(tmp_path / "zn.xlsx")
    try:
        shown = relative_errors(book, "Standards – zinc")
    finally:
        book.close()
    assert shown["Zn-8a"] == "0.0" and shown["Zn-2a"] == "-0.3" and shown["Zn-4b"] == "+0.4", shown


def test_round_off_on_an_exact_line_reads_as_zero_either_side(tmp_path) -> None:
    std, smp = tmp_path / "copper.csv", tmp_path / "digests.csv"
    std.write_text(COPPER, encoding="utf-8")
    smp.write_text("Sample,Response\nDigest 1,125\n", encoding="utf-8")
    quantify("--standards", str(std), "--samples", str(smp), "--analyte", "copper", "--model", "linear", "--weighting", "none",
            "--export", str(tmp_path / "cu.xlsx"), "--report", str(tmp_path / "cu.pdf"))
    record = printed_text(tmp_path / "cu.pdf")
    # id, replicate, nominal, response, back-calculated, %RE, tolerance, within limits
    rows = re.findall(r"(Cu\d+-\d) (\d) (\d+) (\d+) (\S+) (\S+) \d+ yes", record)
    assert len(rows) == 12, record
    assert {row[5] for row in rows} == {"0.0"}, rows
    book = openpyxl.load_workbook(tmp_path / "cu.xlsx")
    try:
        shown = relative_errors(book, "Standards – copper")
    finally:
        book.close()
    assert len(shown) == 12 and set(shown.values()) == {"0.0"}, shown
