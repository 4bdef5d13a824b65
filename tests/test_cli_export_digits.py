"""What the command line exports shows the digits the record prints and the decimal mark it was asked
for. The tables are written as a spreadsheet with a decimal comma saves them (semicolons, a byte-order
mark, CRLF line ends); the run is invented (the Marlbrook pond survey's nickel, ICP-MS counts)."""

from __future__ import annotations

import csv
import io
import re
import subprocess
import unicodedata
from pathlib import Path

import openpyxl
import pytest
from pypdf import PdfReader

from tests.cli_runs import run_cli

STANDARDS = """Standard id;Level;Concentration (µg/L);Response (counts)
Ni-A1-1;A1;0,5;34,71
Ni-A1-2;A1;0,5;33,958
Ni-A2-1;A2;1;66,402
Ni-A2-2;A2;1;65,117
Ni-A3-1;A3;2;131,06
Ni-A3-2;A3;2;127,843
Ni-A4-1;A4;5;322,519
Ni-A4-2;A4;5;325,287
Ni-A5-1;A5;10;641,93
Ni-A5-2;A5;10;650,446
Ni-A6-1;A6;25;1609,118
Ni-A6-2;A6;25;1592,7
Ni-A7-1;A7;50;3236,404
Ni-A7-2;A7;50;3177,815
"""
SAMPLES = """Sample;Type;Dilution;Nominal;Response (counts)
Field blank 3.1;blank;1;;2,406
QC low;QC;1;1,5;97,662
QC high;QC;1;40;2581,02
MB-114 pond;unknown;1;;218,475
MB-114 pond;unknown;1;;224,019
MB-115;unknown;2,5;;1431,77
MB-115;unknown;2,5;;1420,306
MB-116 v1.2;unknown;2,5;;20,613
MB-117;unknown;10;;2790,5
"""
ENTERED = {"Field blank 3.1": ["2,406"], "QC low": ["97,662"], "QC high": ["2581,02"],
           "MB-114 pond": ["218,475", "224,019"], "MB-115": ["1431,77", "1420,306"], "MB-116 v1.2": ["20,613"],
           "MB-117": ["2790,5"]}
AS_TYPED = ("Sample id", "Analyte", "Unit")
"""Columns that hold text as the analyst typed it (a sample id may hold a point of its own)."""


def write_table(path: Path, text: str) -> Path:
    path.write_bytes(b"\xef\xbb\xbf" + text.replace("\n", "\r\n").encode("utf-8"))
    return path


def quantify(folder: Path, *extra: str) -> subprocess.CompletedProcess:
    std = write_table(folder / "nickel_standards.csv", STANDARDS)
    smp = write_table(folder / "nickel_samples.csv", SAMPLES)
    out = run_cli("quantify", "--standards", str(std), "--samples", str(smp), "--analyte", "nickel", "--model",
                  "linear", "--weighting", "1/x^2", *extra)
    assert out.returncode == 0, out.stderr
    return out


@pytest.fixture(scope="module")
def comma_export(tmp_path_factory) -> tuple[list[str], list[list[str]]]:
    folder = tmp_path_factory.mktemp("comma")
    quantify(folder, "--export", str(folder / "nickel.csv"), "--csv-delimiter", ";", "--csv-decimal", ",")
    lines = (folder / "nickel.csv").read_text(encoding="utf-8").splitlines()
    rows = list(csv.reader(io.StringIO("\n".join(line for line in lines if not line.startswith("#"))), delimiter=";"))
    return rows[0], rows[1:]


def test_every_number_in_a_decimal_comma_export_uses_the_comma(comma_export) -> None:
    header, rows = comma_export
    assert len(rows) == 7
    for row in rows:
        for heading, field in zip(header, row, strict=True):
            if heading not in AS_TYPED:
                assert not re.search(r"\d\.\d", field), (row[0], heading, field)
    ids = [row[0] for row in rows]
    assert "Field blank 3.1" in ids and "MB-116 v1.2" in ids  # ids stay as typed


def test_replicate_responses_read_back_as_entered_with_a_separator_apart_from_the_comma(comma_export) -> None:
    header, rows = comma_export
    column = header.index("Replicate responses")
    for row in rows:
        parts = row[column].split(" | ")
        assert parts == ENTERED[row[0]], row[0]
        assert all(re.fullmatch(r"\d+(,\d+)?", p) for p in parts), row[column]


def test_limits_inside_the_flags_use_the_comma_like_the_reported_text(comma_export) -> None:
    header, rows = comma_export
    by_id = {row[0]: row for row in rows}
    blank = by_id["Field blank 3.1"]
    assert blank[header.index("Reported")] == "< 0,500 µg/L (LLOQ)"
    assert blank[header.index("Flags")].startswith("below the reporting limit of 0,500 µg/L (LLOQ)")
    diluted = by_id["MB-116 v1.2"]  # the reporting limit times the dilution 2.5, in the text
    assert diluted[header.index("Reported")] == "< 1,25 µg/L (LLOQ × dilution 2,5)"
    assert "1,25 µg/L (LLOQ × dilution 2,5)" in diluted[header.index("Flags")]


def test_a_decimal_point_export_keeps_its_points(tmp_path) -> None:
    quantify(tmp_path, "--export", str(tmp_path / "nickel.csv"))
    text = (tmp_path / "nickel.csv").read_text(encoding="utf-8")
    assert "218.475 | 224.019" in text and "below the reporting limit of 0.500 µg/L (LLOQ)" in text
    assert "< 1.25 µg/L (LLOQ × dilution 2.5)" in text


HEADER_ROW = 3


def shown(cell) -> str:  # type: ignore[no-untyped-def]
    """A numeric cell as a spreadsheet shows it: its number format applied to its value."""
    fmt = cell.number_format.split(";")[0]
    assert re.fullmatch(r"\+?0(\.0+)?", fmt), (cell.coordinate, fmt)
    decimals = len(fmt.split(".")[1]) if "." in fmt else 0
    return f"{cell.value:{'+' if fmt.startswith('+') else ''}.{decimals}f}"


def sheet_rows(book, name: str) -> list[dict]:  # type: ignore[no-untyped-def, type-arg]
    rows = list(book[name].iter_rows(min_row=HEADER_ROW))
    headings = [c.value for c in rows[0]]
    return [dict(zip(headings, row)) for row in rows[1:]]


@pytest.fixture(scope="module")
def book_and_record(tmp_path_factory):  # type: ignore[no-untyped-def]
    folder = tmp_path_factory.mktemp("digits")
    out = quantify(folder, "--export", str(folder / "nickel.xlsx"), "--report", str(folder / "nickel.pdf"))
    text = " ".join(page.extract_text() for page in PdfReader(folder / "nickel.pdf").pages)
    record = " ".join(unicodedata.normalize("NFKC", text).split())
    return openpyxl.load_workbook(folder / "nickel.xlsx"), record, out.stdout


@pytest.mark.parametrize("sheet", ["Summary", "Samples"])
def test_workbook_intervals_show_the_digits_of_the_record_and_the_command_line(book_and_record, sheet) -> None:
    book, record, printed = book_and_record
    lines = {line.split("  ")[1].strip(): line for line in printed.splitlines() if line.startswith("  MB-")
             or line.startswith("  QC ") or line.startswith("  Field blank")}
    rows = sheet_rows(book, sheet)
    assert len(rows) == 7
    # both sheets name the scale of their ends: after dilution, as reported
    low, high = "Lower limit × dilution", "Upper limit × dilution"
    for row in rows:
        sample = row["Sample id"].value
        # the cells' numbers as their formats show them, each minus sign as a person reads it (U+2212)
        interval = f"{shown(row[low])} – {shown(row[high])}".replace("-", "−")
        where = record.index(f"{sample} {row['Kind'].value} ")  # the sample's row in the record's samples table
        assert interval in record[where:where + 120], (sheet, sample, interval, record[where:where + 120])
        assert interval in lines[sample], (sheet, sample, interval, lines[sample])
    by_id = {row["Sample id"].value: row for row in rows}
    # the intervals the record prints for these rows (read from it by eye as well)
    assert f"{shown(by_id['QC low'][low])} – {shown(by_id['QC low'][high])}" == "1.455 – 1.529"
    assert f"{shown(by_id['MB-117'][low])} – {shown(by_id['MB-117'][high])}" == "424 – 447"


def test_workbook_cells_keep_every_digit_of_the_interval(book_and_record) -> None:
    book, _, _ = book_and_record
    for row in sheet_rows(book, "Samples"):
        for end in ("Lower limit × dilution", "Upper limit × dilution"):
            assert len(repr(row[end].value)) > len(shown(row[end])), (row["Sample id"].value, end)  # full precision


def test_workbook_responses_show_as_entered(book_and_record) -> None:
    book, record, _ = book_and_record
    typed = {line.split(";")[0]: line.split(";")[3] for line in STANDARDS.splitlines()[1:]}
    rows = sheet_rows(book, "Standards – nickel")
    assert len(rows) == len(typed) == 14
    for row in rows:
        standard = row["Standard id"].value
        assert row["Response as entered"].value == typed[standard]
        assert shown(row["Response used"]) == typed[standard].replace(",", "."), standard  # 1592,7 → 1592.7
        assert row["Response used"].value == float(typed[standard].replace(",", "."))
        assert f"{standard} " in record and f" {typed[standard]} " in record  # the record prints it as entered


def test_the_command_names_a_csv_export_as_a_samples_table(tmp_path) -> None:
    done = quantify(tmp_path, "--export", str(tmp_path / "nickel.csv"))
    said = [line for line in done.stdout.splitlines() if " written: " in line]
    assert said and said[0].startswith("samples table written: "), done.stdout
    assert not any(line.startswith("workbook written") for line in said)
