"""Tables read by the command line as instruments and spreadsheet programs write them: workbook
formulas never calculated, one workbook holding both tables on its own sheets, files not in UTF-8,
lines above the header. The command runs as a subprocess, as an analyst runs it."""

from __future__ import annotations

import io
import json
import re
import zipfile
from pathlib import Path

import openpyxl
import pytest

import curvewright as cw
from tests.cli_runs import run_cli

# Fernhollow cobalt standards (invented): duplicates at six levels, µg/L against counts
CO_X = [0.5, 0.5, 1, 1, 2, 2, 5, 5, 10, 10, 20, 20]
CO_Y = [44.512, 45.087, 88.903, 89.617, 176.244, 177.018, 440.871, 441.930, 881.402, 880.655, 1761.280, 1762.914]
STANDARD_ROWS = [["Standard", "Concentration (µg/L)", "Response (counts)"]] + [
    [f"CO-{i + 1:02d}", x, y] for i, (x, y) in enumerate(zip(CO_X, CO_Y))]
SAMPLE_HEADER = ["Sample", "Kind", "Dilution", "Nominal (µg/L)", "Replicate", "Response (counts)"]
# (id, kind, dilution, nominal, replicate, response)
SAMPLE_ROWS = [["FH-0301", "unknown", 1, None, 1, 301.552],
               ["QC mid", "QC", 1, 4.0, 1, 353.907],
               ["FH-0302", "unknown", 10, None, 1, 288.140]]


def save(book: openpyxl.Workbook, path: Path) -> Path:
    book.save(path)
    return path


def workbook(path: Path, sheets: dict[str, list[list[object]]]) -> Path:
    """A workbook as a program that writes formulas without calculating them leaves it: each formula
    cell holds its formula and an empty stored value."""
    book = openpyxl.Workbook()
    book.remove(book.active)
    for title, rows in sheets.items():
        sheet = book.create_sheet(title)
        for row in rows:
            sheet.append(row)
    return save(book, path)


def with_stored_values(path: Path, values: dict[str, str]) -> Path:
    """The same workbook after a spreadsheet program calculated it: each formula's value stored."""
    out = path.with_name(path.stem + "_calculated.xlsx")
    with zipfile.ZipFile(path) as source, zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as target:
        for name in source.namelist():
            data = source.read(name)
            if name.startswith("xl/worksheets/"):
                for formula, value in values.items():
                    data = data.replace(f"<f>{formula}</f><v></v>".encode(), f"<f>{formula}</f><v>{value}</v>".encode())
            target.writestr(name, data)
    return out


def expected(response: float, dilution: float = 1.0) -> float:
    return dilution * float(cw.fit(CO_X, CO_Y).quantify([response]).estimate[0])  # cw.fit(...).quantify(...)


def quantify(standards: Path, samples: Path, *extra: str):  # type: ignore[no-untyped-def]
    return run_cli("quantify", "--standards", str(standards), "--samples", str(samples), "--analyte", "cobalt",
                   "--model", "linear", "--weighting", "none", *extra)


def test_a_dilution_formula_never_calculated_is_refused_not_read_as_one(tmp_path) -> None:
    rows = [SAMPLE_HEADER] + [list(r) for r in SAMPLE_ROWS]
    rows[3][2] = "=2*5"
    standards = workbook(tmp_path / "std.xlsx", {"Standards": STANDARD_ROWS})
    samples = workbook(tmp_path / "smp.xlsx", {"Samples": rows})
    result = quantify(standards, samples, "--json")
    assert result.returncode == 2, result.stdout
    assert "nothing was quantified" in result.stderr
    assert "row 4, column 3 (Dilution): '=2*5' — a formula with no calculated value" in result.stderr
    assert "open and save the workbook in a spreadsheet program" in result.stderr
    assert "'Samples'" in result.stderr and "smp.xlsx" in result.stderr
    # once calculated and saved, the stored value 10 is the dilution
    calculated = with_stored_values(samples, {"2*5": "10"})
    result = quantify(standards, calculated, "--json")
    assert result.returncode == 0, result.stderr
    reported = {s["id"]: s["reported"] for s in json.loads(result.stdout)["analytes"][0]["samples"]}
    assert reported["FH-0302"] == pytest.approx(expected(288.140, 10), rel=1e-12)


@pytest.mark.parametrize("column, formula, text", [
    (1, '="QC"', 'column 2 (Kind)'),                  # empty would be read as an unknown
    (3, "=8/2", "column 4 (Nominal (µg/L))"),         # empty would leave the QC without a nominal
    (4, "=1+0", "column 5 (Replicate)"),              # empty would be counted
    (0, '="QC "&"mid"', "column 1 (Sample)"),
])
def test_no_default_stands_in_for_an_uncalculated_formula(tmp_path, column: int, formula: str, text: str) -> None:
    rows = [SAMPLE_HEADER] + [list(r) for r in SAMPLE_ROWS]
    rows[2][column] = formula
    standards = workbook(tmp_path / "std.xlsx", {"Standards": STANDARD_ROWS})
    samples = workbook(tmp_path / "smp.xlsx", {"Samples": rows})
    result = quantify(standards, samples)
    assert result.returncode == 2, result.stdout
    assert f"row 3, {text}: {formula!r} — a formula with no calculated value" in result.stderr
    assert "a sample needs an id" not in result.stderr
    assert result.stderr.count("row 3,") == 1


def test_a_standards_row_of_uncalculated_formulas_is_refused_not_passed_over(tmp_path) -> None:
    rows = [list(r) for r in STANDARD_ROWS]
    rows[5] = [None, "=1+1", "=F6*2"]
    standards = workbook(tmp_path / "std.xlsx", {"Standards": rows})
    samples = workbook(tmp_path / "smp.xlsx", {"Samples": [SAMPLE_HEADER] + SAMPLE_ROWS})
    result = quantify(standards, samples)
    assert result.returncode == 2, result.stdout
    assert "row 6, column 2 (Concentration (µg/L)): '=1+1' — a formula with no calculated value" in result.stderr
    assert "row 6, column 3 (Response (counts)): '=F6*2' — a formula with no calculated value" in result.stderr
    assert "empty rows passed over" not in result.stderr


def test_an_uncalculated_sample_response_is_named_as_a_formula(tmp_path) -> None:
    rows = [SAMPLE_HEADER] + [list(r) for r in SAMPLE_ROWS]
    rows[1][5] = "=300+1.552"
    standards = workbook(tmp_path / "std.xlsx", {"Standards": STANDARD_ROWS})
    samples = workbook(tmp_path / "smp.xlsx", {"Samples": rows})
    result = quantify(standards, samples, "--json")
    assert result.returncode == 2, result.stderr  # as a reading that cannot be read: the other samples are reported
    assert "could not be read" in result.stderr
    assert ("row 2, column 6 (Response (counts)): '=300+1.552' — a formula with no calculated value" in result.stderr)
    assert "'' — empty" not in result.stderr
    reported = {s["id"]: s["reported"] for s in json.loads(result.stdout)["analytes"][0]["samples"]}
    assert reported["FH-0301"] is None
    assert reported["FH-0302"] == pytest.approx(expected(288.140, 10), rel=1e-12)


def both_tables(tmp_path: Path) -> Path:
    """One workbook with the standards and the samples on sheets of their own, standards first."""
    return workbook(tmp_path / "run.xlsx", {"Standards": STANDARD_ROWS, "Samples": [SAMPLE_HEADER] + SAMPLE_ROWS})


def test_each_table_is_read_from_its_own_sheet(tmp_path) -> None:
    book = both_tables(tmp_path)
    for sheets in (("--standards-sheet", "Standards", "--samples-sheet", "Samples"),
                   ("--sheet", "Samples", "--standards-sheet", "Standards")):  # --sheet for the table not named
        result = quantify(book, book, *sheets, "--json")
        assert result.returncode == 0, result.stderr
        rows = json.loads(result.stdout)["analytes"][0]["samples"]
        reported = {s["id"]: s["reported"] for s in rows}
        assert set(reported) == {"FH-0301", "QC mid", "FH-0302"}
        assert reported["FH-0301"] == pytest.approx(expected(301.552), rel=1e-12)
        assert reported["FH-0302"] == pytest.approx(expected(288.140, 10), rel=1e-12)


@pytest.mark.parametrize("sheets", [("--sheet", "Standards"), (), ("--standards-sheet", "Standards"),
                                    ("--samples-sheet", "Samples", "--sheet", "Samples")])
def test_one_sheet_is_never_read_as_both_tables(tmp_path, sheets: tuple[str, ...]) -> None:
    book = both_tables(tmp_path)
    result = quantify(book, book, *sheets)
    assert result.returncode == 2, result.stdout
    assert result.stdout == ""
    assert re.search(r"the standards and the samples would both be read from sheet '(Standards|Samples)' of", result.stderr)
    assert "--standards-sheet SHEET --samples-sheet SHEET (sheets: 'Standards', 'Samples')" in result.stderr


def test_one_text_file_is_never_read_as_both_tables(tmp_path) -> None:
    standards = tmp_path / "std.csv"
    standards.write_bytes("\r\n".join(",".join(str(c) for c in row) for row in STANDARD_ROWS).encode() + b"\r\n")
    result = quantify(standards, tmp_path / "." / "std.csv")
    assert result.returncode == 2, result.stdout
    assert "the standards and the samples would both be read from" in result.stderr


def test_tables_failing_alike_are_each_named_once(tmp_path) -> None:
    # both tables hold only values with three digits after one mark: each reads two ways
    standards = tmp_path / "std.csv"
    standards.write_bytes(b"Concentration;Response\r\n1;1,250\r\n2;2,500\r\n4;5,125\r\n")
    samples = tmp_path / "smp.csv"
    samples.write_bytes(b"Sample;Response\r\nS1;1,750\r\n")
    result = quantify(standards, samples)
    assert result.returncode == 2, result.stdout
    assert result.stderr.count(f"standards table {standards}: 3 cell(s) cannot be used") == 1
    assert result.stderr.count(f"samples table {samples}: 1 cell(s) cannot be used") == 1


def standards_lines() -> list[str]:
    return ["Standard,Concentration (µg/L),Response (counts)"] + [
        f"CO-{i + 1:02d},{x:g},{y:.3f}" for i, (x, y) in enumerate(zip(CO_X, CO_Y))]


def samples_csv(tmp_path: Path) -> Path:
    path = tmp_path / "smp.csv"
    path.write_bytes(b"Sample,Dilution,Response (counts)\r\nFH-0301,1,301.552\r\nFH-0302,10,288.140\r\n")
    return path


def test_lines_above_the_header_are_named(tmp_path) -> None:
    # an instrument's export: a title line, a batch line and a blank line before the header
    standards = tmp_path / "std.csv"
    lines = ["Fernhollow laboratory (invented) - export", "Batch,FH-B-0301", ""] + standards_lines()
    standards.write_bytes("\r\n".join(lines).encode("utf-8") + b"\r\n")
    result = quantify(standards, samples_csv(tmp_path))
    assert result.returncode == 2, result.stdout
    assert ("line 1 ('Fernhollow laboratory (invented) - export') cannot be made a header or a row of the table: "
            "it holds no comma while 13 lines from line 4 hold 2 each") in result.stderr
    assert "delete the lines above it" in result.stderr


def test_a_file_in_a_windows_code_page_is_named_by_line_and_character(tmp_path) -> None:
    standards = tmp_path / "std.csv"
    standards.write_bytes("\r\n".join(standards_lines()).encode("cp1252") + b"\r\n")
    result = quantify(standards, samples_csv(tmp_path))
    assert result.returncode == 2, result.stdout
    # the micro sign is the 25th character of line 1: "Standard,Concentration (" is 24 characters
    assert "line 1, character 25: byte 0xB5 is not UTF-8 text (as Windows-1252 it would be 'µ')" in result.stderr
    assert "UTF-8 (with or without a byte-order mark) or UTF-16 with a byte-order mark" in result.stderr
    assert 'save the file as "CSV UTF-8"' in result.stderr
    # a later line: counted from 1 after the line end
    lines = [line.replace("µg/L", "mg/L") for line in standards_lines()] + ["CO-13,25,2203.4 ±"]
    standards.write_bytes(("\r\n".join(lines) + "\r\n").encode("cp1252"))
    result = quantify(standards, samples_csv(tmp_path))
    assert "line 14, character 17: byte 0xB1 is not UTF-8 text (as Windows-1252 it would be '±')" in result.stderr


def test_a_unicode_text_file_with_a_byte_order_mark_is_read(tmp_path) -> None:
    # a spreadsheet program's "Unicode text": UTF-16 little-endian with a byte-order mark, tab-separated
    standards = tmp_path / "std.txt"
    standards.write_bytes("\r\n".join(line.replace(",", "\t") for line in standards_lines()).encode("utf-16") + b"")
    result = quantify(standards, samples_csv(tmp_path), "--json")
    assert result.returncode == 0, result.stderr
    reported = {s["id"]: s["reported"] for s in json.loads(result.stdout)["analytes"][0]["samples"]}
    assert reported["FH-0302"] == pytest.approx(expected(288.140, 10), rel=1e-12)
    # without its byte-order mark the same text is refused, naming where
    standards.write_bytes("\r\n".join(line.replace(",", "\t") for line in standards_lines()).encode("utf-16-le"))
    result = quantify(standards, samples_csv(tmp_path))
    assert result.returncode == 2, result.stdout
    assert "line 1, character 2 is a NUL character: the file seems to be UTF-16 text without a byte-order mark" \
        in result.stderr


def test_a_kind_is_quoted_back_as_typed(tmp_path) -> None:
    samples = tmp_path / "smp.csv"
    samples.write_bytes(b"Sample,Kind,Response (counts)\r\nFH-0301,QCC,301.552\r\n")
    standards = tmp_path / "std.csv"
    standards.write_bytes("\r\n".join(standards_lines()).encode("utf-8") + b"\r\n")
    result = quantify(standards, samples)
    assert result.returncode == 2, result.stdout
    assert "row 2, column 2 (Kind): 'QCC' — not a sample kind" in result.stderr


def test_an_empty_dilution_cell_is_said_to_be_taken_as_one(tmp_path) -> None:
    standards = tmp_path / "std.csv"
    standards.write_bytes("\r\n".join(standards_lines()).encode("utf-8") + b"\r\n")
    samples = tmp_path / "smp.csv"
    samples.write_bytes(b"Sample,Dilution,Response (counts)\r\nFH-0301,,301.552\r\nFH-0302,10,288.140\r\n")
    result = quantify(standards, samples, "--json")
    assert result.returncode == 0, result.stderr
    data = json.loads(result.stdout)
    note = f"samples: {samples}: dilution cell empty in row(s) 2: taken as 1 (no dilution)"
    assert note in data["notes"]
    reported = {s["id"]: s["reported"] for s in data["analytes"][0]["samples"]}
    assert reported["FH-0301"] == pytest.approx(expected(301.552), rel=1e-12)
    assert note in quantify(standards, samples).stdout
    # every dilution given: nothing is said
    samples.write_bytes(b"Sample,Dilution,Response (counts)\r\nFH-0301,1,301.552\r\nFH-0302,10,288.140\r\n")
    assert "taken as 1" not in quantify(standards, samples).stdout
