"""Damaged and hostile workbooks: each ends in the project's import error naming the file (and the
sheet and row where known), quickly and in little memory; entities are never resolved."""

from __future__ import annotations

import io
import struct
import subprocess
import sys
import time
import tracemalloc
import zipfile

import pytest

from curvewright.io import xlsx_checks
from curvewright.io.errors import ImportProblem
from curvewright.io.tables import table_from_xlsx, xlsx_sheet_names
from tests.cli_runs import run_cli
from tests.io.helpers import ROOT
from tests.io.workbook_files import (GOOD_ROWS, MAIN, SHEET, STRINGS, parts, rezip, shared_string_workbook,
                                     strings_xml, workbook_bytes)

TWO_STRINGS = strings_xml(["Concentration", "Response"])
DAMAGED_FORMULA = b'<f t="shared" ref="B3:B4" si="0">B2&amp;"x</f>'  # a string left open, no stored value


def refused(tmp_path, data: bytes, message: str, name: str = "cal.xlsx") -> str:
    path = tmp_path / name
    path.write_bytes(data)
    with pytest.raises(ImportProblem) as info:
        table_from_xlsx(path)
    text = str(info.value)
    assert text.startswith(f"{path}: "), text
    assert message in text, text
    return text


# (what was done to a good workbook, what the message says)
DAMAGED = [
    (rezip(workbook_bytes(), {SHEET: lambda x: x.replace(b"</row>", b"</rw>", 1)}), "sheet 'Standards' cannot be read after row 0 (malformed XML at line 1"),
    (rezip(workbook_bytes(), {SHEET: lambda x: x[:-1]}), "malformed XML"),
    (rezip(workbook_bytes(), {"xl/styles.xml": lambda x: x[:40]}), "malformed XML in part xl/styles.xml at line 1"),
    (rezip(workbook_bytes(), {"xl/workbook.xml": None}), "a part it refers to is missing"),
    (rezip(workbook_bytes(), {"[Content_Types].xml": None}), "a part it refers to is missing"),
    (shared_string_workbook(TWO_STRINGS, GOOD_ROWS.replace(b"<v>1</v></c></row>", b"<v>7</v></c></row>", 1)), "cannot be read after row 0"),
    (shared_string_workbook(TWO_STRINGS, GOOD_ROWS.replace(b"<v>10.5</v>", b"<v>abc</v>")), "cannot be read after row 1"),
    (shared_string_workbook(TWO_STRINGS, GOOD_ROWS.replace(b'<c r="A3">', b'<c r="A3" t="d">')), "cannot be read after row 2"),
    (shared_string_workbook(TWO_STRINGS[:-3], GOOD_ROWS), f"malformed XML in part {STRINGS} at line 1"),
    # a never-calculated formula whose text the reader cannot parse: the same words as any damaged row
    (shared_string_workbook(TWO_STRINGS, GOOD_ROWS.replace(b"<v>20.25</v>", DAMAGED_FORMULA)),
     "sheet 'Standards' cannot be read after row 2 (damaged content: Reached end of formula while parsing string"),
    (workbook_bytes()[:-30], "not a valid zip archive"),
    (b"PK\x03\x04" + b"\x00" * 100, "not a valid zip archive"),
    (b"Concentration;Response\n1;2\n", "not a valid zip archive"),
]


@pytest.mark.parametrize("data, message", DAMAGED, ids=[f"damaged-{i}" for i in range(len(DAMAGED))])
def test_a_damaged_workbook_is_an_import_problem_naming_the_file(tmp_path, data, message) -> None:
    refused(tmp_path, data, message)
    try:  # the sheet names need only the workbook's own parts
        xlsx_sheet_names(tmp_path / "cal.xlsx")
    except ImportProblem as exc:
        assert str(exc).startswith(f"{tmp_path / 'cal.xlsx'}: ")


@pytest.mark.parametrize("damaged, reason", [(b"<v>20.25</v", "malformed XML"),
                                             (DAMAGED_FORMULA, "damaged content: Reached end of formula")],
                         ids=["malformed-xml", "unparsable-formula"])
def test_a_damaged_workbook_on_the_command_line_exits_2_naming_it(tmp_path, damaged: bytes, reason: str) -> None:
    standards = tmp_path / "standards.xlsx"
    standards.write_bytes(rezip(workbook_bytes(), {SHEET: lambda x: x.replace(b"<v>20.25</v>", damaged, 1)}))
    samples = tmp_path / "samples.csv"
    samples.write_text("Sample;Response\nU1;20,1\n", encoding="utf-8")
    result = run_cli("quantify", "--standards", str(standards), "--samples", str(samples))
    assert result.returncode == 2, result.stderr
    said = f"{standards}: sheet 'Standards' cannot be read after row 2 ("
    assert result.stderr.count(said) == 1 and f"{said}{reason}" in result.stderr, result.stderr
    assert "Traceback" not in result.stderr


def test_numbers_no_double_holds_are_kept_as_text(tmp_path) -> None:
    rows = (b'<row r="1"><c r="A1" t="s"><v>0</v></c><c r="B1" t="s"><v>1</v></c></row>'
            b'<row r="2"><c r="A2"><v>' + b"9" * 400 + b'</v></c><c r="B2"><v>1e999</v></c></row>'
            b'<row r="3"><c r="A3"><v>2</v></c><c r="B3"><v>-1E400</v></c></row>')
    path = tmp_path / "big.xlsx"
    path.write_bytes(shared_string_workbook(TWO_STRINGS, rows))
    table = table_from_xlsx(path)
    assert table.rows[1] == ("9" * 400, "inf") and table.rows[2] == (2.0, "-inf")  # never a silent infinity


def test_rows_beyond_the_dimension_the_sheet_claims_are_read(tmp_path) -> None:
    path = tmp_path / "claims.xlsx"
    path.write_bytes(shared_string_workbook(TWO_STRINGS, GOOD_ROWS + b'<row r="4"><c r="A4"><v>4</v></c><c r="B4">'
                                            b'<v>41</v></c><c r="C4" t="s"><v>0</v></c></row>', dimension=b"A1:B2"))
    assert table_from_xlsx(path).rows == (("Concentration", "Response"), (1.0, 10.5), (2.0, 20.25),
                                          (4.0, 41.0, "Concentration"))


# --- bounds --------------------------------------------------------------------------------------
def bounded(tmp_path, data: bytes, message: str, *, trace_memory: bool = True) -> None:
    """Refused within seconds and, when traced, with little memory (Python allocations)."""
    if trace_memory:
        tracemalloc.start()
    start = time.perf_counter()
    try:
        refused(tmp_path, data, message)
        elapsed = time.perf_counter() - start
        peak = tracemalloc.get_traced_memory()[1] if trace_memory else 0
    finally:
        tracemalloc.stop()
    assert elapsed < 20 and peak < 64e6 + 2 * len(data), (elapsed, peak)


def test_a_million_and_a_half_shared_strings_are_refused_before_they_are_read(tmp_path) -> None:
    out = io.BytesIO()
    with zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as archive:
        for name, content in parts(shared_string_workbook(TWO_STRINGS, GOOD_ROWS)).items():
            if name != STRINGS:
                archive.writestr(name, content)
        with archive.open(STRINGS, "w") as stream:
            stream.write(b"<sst " + MAIN + b">")
            for _ in range(15):
                stream.write(b"<si><t>a</t></si>" * 100_000)
            stream.write(b"</sst>")
    data = out.getvalue()
    assert len(data) < 1_000_000
    bounded(tmp_path, data, f"the shared-string table {STRINGS} holds more than 4,000,000 XML tags")


def test_a_sheet_claiming_every_cell_reads_only_what_it_holds(tmp_path) -> None:
    path = tmp_path / "claims.xlsx"
    path.write_bytes(shared_string_workbook(TWO_STRINGS, GOOD_ROWS, dimension=b"A1:XFD1048576"))
    start = time.perf_counter()
    assert table_from_xlsx(path).rows == (("Concentration", "Response"), (1.0, 10.5), (2.0, 20.25))
    assert time.perf_counter() - start < 20


def test_rows_reaching_the_last_column_are_refused_while_reading(tmp_path) -> None:
    rows = GOOD_ROWS + b"".join(b'<row r="%d"><c r="XFD%d"><v>1</v></c></row>' % (n, n) for n in range(4, 400))
    bounded(tmp_path, shared_string_workbook(TWO_STRINGS, rows), "sheet 'Standards' holds more than 5,000,000 cells")


def test_rows_beyond_any_sheet_are_refused_while_reading(tmp_path) -> None:
    data = shared_string_workbook(TWO_STRINGS, GOOD_ROWS + b'<row r="99999999999"><c r="A99999999999"><v>1</v></c></row>',
                                  dimension=b"A1:B3")
    bounded(tmp_path, data, "holds more than 5,000,000 cells or 1,048,576 rows", trace_memory=False)


def test_a_part_declared_larger_than_allowed_is_refused_before_it_is_unpacked(tmp_path, monkeypatch) -> None:
    monkeypatch.setattr(xlsx_checks, "MAX_PART_BYTES", 1000)
    refused(tmp_path, workbook_bytes(), "unpacks to 0 MB, more than the 0 MB one part")
    monkeypatch.setattr(xlsx_checks, "MAX_PART_BYTES", 128 * 1024 * 1024)
    monkeypatch.setattr(xlsx_checks, "MAX_UNCOMPRESSED_BYTES", 5000)
    refused(tmp_path, workbook_bytes(), "the workbook unpacks to 0 MB, more than the 0 MB")


def test_a_directory_that_lies_about_a_size_is_caught_by_the_checksum(tmp_path) -> None:
    data = bytearray(workbook_bytes())
    central = data.rfind(b"PK\x01\x02" )  # the last entry of the central directory
    (size,) = struct.unpack_from("<I", data, central + 24)
    struct.pack_into("<I", data, central + 24, size // 2)  # declares half of what the part holds
    refused(tmp_path, bytes(data), "not a readable XLSX workbook")


def test_a_directory_of_too_many_parts_is_refused_before_it_is_read(tmp_path) -> None:
    data = bytearray(workbook_bytes())
    end = data.rfind(b"PK\x05\x06")
    struct.pack_into("<HH", data, end + 8, 60_000, 60_000)  # the end record claims 60,000 parts
    refused(tmp_path, bytes(data), "the workbook's zip directory lists 60,000 parts")


def test_an_encrypted_part_is_refused(tmp_path) -> None:
    data = bytearray(workbook_bytes())
    at = data.find(b"PK\x01\x02")
    (flags,) = struct.unpack_from("<H", data, at + 8)
    struct.pack_into("<H", data, at + 8, flags | 1)
    refused(tmp_path, bytes(data), "the workbook is encrypted")


# --- entities ------------------------------------------------------------------------------------
def entity_workbook(secret_file) -> bytes:  # type: ignore[no-untyped-def]
    declaration = (b'<?xml version="1.0"?><!DOCTYPE sst [<!ENTITY leak SYSTEM "' + secret_file.as_uri().encode()
                   + b'"><!ENTITY lol "lol"><!ENTITY lol2 "&lol;&lol;&lol;&lol;&lol;&lol;&lol;&lol;">]>')
    strings = declaration + strings_xml(["&leak;&lol2;", "Response"])
    return shared_string_workbook(strings, GOOD_ROWS)


def test_a_document_type_declaration_is_refused(tmp_path) -> None:
    secret = tmp_path / "secret.txt"
    secret.write_text("LAB-SECRET-7731", encoding="utf-8")
    text = refused(tmp_path, entity_workbook(secret), f"part {STRINGS} holds a document type declaration (<!DOCTYPE)")
    assert "LAB-SECRET" not in text


def test_external_entities_stay_unresolved_even_past_the_declaration_check(tmp_path, monkeypatch) -> None:
    """The XML parser under the reader never fetches an external entity: with the check switched
    off, the workbook is refused or read without the file's content."""
    secret = tmp_path / "secret.txt"
    secret.write_text("LAB-SECRET-7731", encoding="utf-8")
    monkeypatch.setattr(xlsx_checks, "_DECLARATIONS", ())
    path = tmp_path / "entity.xlsx"
    path.write_bytes(entity_workbook(secret))
    try:
        table = table_from_xlsx(path)
    except ImportProblem as exc:
        assert "LAB-SECRET" not in str(exc)
    else:
        assert "LAB-SECRET" not in repr(table.rows)


def test_a_chart_sheet_is_not_a_table(tmp_path) -> None:
    from openpyxl import Workbook
    from openpyxl.chart import BarChart, Reference

    book = Workbook()
    book.active.append(["Concentration", "Response"])
    book.active.append([1.0, 10.5])
    chart = BarChart()
    chart.add_data(Reference(book.active, min_col=2, min_row=1, max_row=2))
    book.create_chartsheet("Curve").add_chart(chart)
    path = tmp_path / "chart.xlsx"
    book.save(path)
    assert xlsx_sheet_names(path) == ("Sheet", "Curve")
    with pytest.raises(ImportProblem, match="sheet 'Curve' is a chart, not a table of cells"):
        table_from_xlsx(path, "Curve")


def test_a_good_workbook_still_reads(tmp_path) -> None:
    path = tmp_path / "good.xlsx"
    path.write_bytes(shared_string_workbook(TWO_STRINGS, GOOD_ROWS))
    assert table_from_xlsx(path).rows == (("Concentration", "Response"), (1.0, 10.5), (2.0, 20.25))



DAMAGED_MESSAGE = r"""
import sys
from pathlib import Path
import openpyxl
from curvewright.io.errors import ImportProblem
from curvewright.io.tables import table_from_xlsx
try:
    table_from_xlsx(Path(sys.argv[1]))
except ImportProblem as exc:
    print(openpyxl.LXML)
    print(exc)
"""


@pytest.mark.parametrize("use_lxml", [True, False], ids=["lxml reader", "standard-library reader"])
def test_malformed_xml_is_placed_alike_by_either_xml_reader(tmp_path, use_lxml: bool) -> None:
    """The XLSX reader parses with lxml where it is installed (a dependency), else with the standard
    library, which counts columns from 0 where lxml counts from 1; the message counts from 1 either way."""
    import importlib.util
    import os

    if use_lxml and importlib.util.find_spec("lxml") is None:
        pytest.skip("lxml is not installed here: the reader parses with the standard library")
    path = tmp_path / "cal.xlsx"
    # an attribute value without quotes: the 15th character of line 1 is where a quote must be
    path.write_bytes(rezip(workbook_bytes(), {"xl/styles.xml": lambda _x: b"<styleSheet a=1/>"}))
    done = subprocess.run([sys.executable, "-c", DAMAGED_MESSAGE, str(path)], capture_output=True, text=True,
                          env={**os.environ, "OPENPYXL_LXML": str(use_lxml)}, cwd=ROOT, timeout=300)
    assert done.returncode == 0, done.stderr[-2000:]
    used, message = done.stdout.strip().splitlines()
    assert used == str(use_lxml)  # the reader asked for is the one used
    assert message == (f"{path}: not a readable XLSX workbook (malformed XML in part xl/styles.xml at line 1, "
                       "column 15); open it in the spreadsheet program and save it again as .xlsx.")
