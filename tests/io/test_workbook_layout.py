"""The workbook as a reviewer opens it: columns wide enough for what they show, headings frozen, a
filter on every table, numbers shown rounded while the cell keeps every digit, a run-information
sheet, and for many analytes a summary of every sample × analyte. Written by the command line and
read back from the file."""

from __future__ import annotations

import shutil
from pathlib import Path

import openpyxl
import pytest

from curvewright import __version__
from curvewright.core.run_analysis import analyse_run
from curvewright.io.integrity import content_sha256
from curvewright.io.result_tables import all_tables, format_value
from curvewright.io.run_document import open_run, save_run
from tests.cli_runs import run_cli
from tests.io.helpers import ICP_ELEMENTS, ROOT, many_element_run

DEMO = ROOT / "sample_runs" / "veltaprine_plasma_weighted.json"
HEADER_ROW = 3


def export(document: Path, folder: Path) -> Path:
    copy = folder / document.name
    if copy != document:
        shutil.copyfile(document, copy)
    book = folder / (document.stem + ".xlsx")
    out = run_cli("quantify", str(copy), "--export", str(book))
    assert out.returncode == 0, out.stderr
    return book


@pytest.fixture(scope="module")
def demo_book(tmp_path_factory):
    folder = tmp_path_factory.mktemp("layout")
    return openpyxl.load_workbook(export(DEMO, folder)), analyse_run(open_run(DEMO).run)


def test_sheets_come_in_the_order_a_reviewer_reads_them(demo_book) -> None:
    book, _ = demo_book
    assert book.sheetnames == ["Run information", "Analytes", "Summary", "Samples", "Calibration – veltaprine",
                               "Standards – veltaprine", "Audit trail"]


def test_every_table_has_frozen_headings_a_filter_and_fitted_columns(demo_book) -> None:
    book, result = demo_book
    for table in all_tables(result):
        sheet = book[table.title[:31]]
        last_row = HEADER_ROW + len(table.rows)
        assert sheet.freeze_panes in ("A4", "B4"), sheet.title
        assert sheet.auto_filter.ref == f"A{HEADER_ROW}:{openpyxl.utils.get_column_letter(len(table.columns))}{last_row}"
        assert sheet.print_title_rows == "$3:$3" and sheet.page_setup.fitToWidth == 1
        for j, column in enumerate(table.columns, start=1):
            letter = openpyxl.utils.get_column_letter(j)
            width = sheet.column_dimensions[letter].width
            assert width is not None and 6 <= width <= 60, (sheet.title, column.heading, width)
            # every heading word fits its column (headings wrap between words, never inside one)
            assert max(len(w) for w in column.heading.split()) <= width, (sheet.title, column.heading)
            # every value shows whole, unless the column is held at the widest and the text wraps in its cell
            for i, row in enumerate(table.rows):
                shown = format_value(row[j - 1], table.columns_for(row)[j - 1], table.rounding)
                cell = sheet.cell(HEADER_ROW + 1 + i, j)
                assert len(shown) <= width or (width == 60 and cell.alignment.wrap_text), \
                    (sheet.title, column.heading, shown, width)
        heading_cells = [sheet.cell(HEADER_ROW, j) for j in range(1, len(table.columns) + 1)]
        assert all(c.font.bold and c.alignment.wrap_text for c in heading_cells)


def test_numbers_keep_every_digit_and_show_as_the_record_prints_them(demo_book) -> None:
    book, result = demo_book
    checked = 0
    for table in all_tables(result):
        sheet = book[table.title[:31]]
        for i, row in enumerate(table.rows):
            for j, (value, column) in enumerate(zip(row, table.columns_for(row)), start=1):
                cell = sheet.cell(HEADER_ROW + 1 + i, j)
                if isinstance(value, float) and value == value and abs(value) != float("inf"):
                    assert cell.value == value, (sheet.title, column.heading)  # full precision
                    assert cell.number_format != "General", (sheet.title, column.heading)
                    # the format's decimals are the decimals the record prints
                    shown = format_value(value, column, table.rounding)
                    if "e" not in shown and "E" not in cell.number_format:
                        decimals = len(shown.split(".", 1)[1]) if "." in shown else 0
                        fmt = cell.number_format.split(";")[0].lstrip("+")
                        assert fmt == ("0" if decimals == 0 else "0." + "0" * decimals), (sheet.title, column.heading,
                                                                                            shown, fmt)
                    checked += 1
    assert checked > 100


def test_results_below_the_range_read_as_text_with_the_estimate_beside_them(demo_book) -> None:
    book, result = demo_book
    rows = list(book["Summary"].iter_rows(min_row=HEADER_ROW, values_only=True))
    header, body = rows[0], rows[1:]
    reported, estimate = header.index("Reported"), header.index("Estimate × dilution")
    below = [r for r in body if isinstance(r[reported], str) and r[reported].startswith("<")]
    assert below, "the demo run has a result below the LLOQ"
    for r in below:
        assert r[reported].endswith("ng/mL (LLOQ)") and isinstance(r[estimate], float)
    in_range = [r for r in body if isinstance(r[reported], float)]
    assert in_range and all(r[header.index("Status")] == "reported" for r in in_range)


def test_the_run_information_sheet_names_method_instrument_analyst_version_and_content_hash(demo_book) -> None:
    book, result = demo_book
    items = {r[0]: r[1] for r in book["Run information"].iter_rows(min_row=HEADER_ROW + 1, values_only=True) if r[0]}
    assert items["Instrument"] == result.run.instrument and "DEMO-MS-3" in items["Instrument"]
    assert items["Software"] == f"Curvewright {__version__}"
    assert items["Content SHA-256"] == content_sha256(open_run(DEMO).run)
    assert "Demo Analyst Two" in items["Analysts"] and items["Method"]
    assert items["Run verdict"] in ("ACCEPTED", "NOT ACCEPTED") and items["Audit trail"].split(";")[0].endswith("entries")


def test_the_audit_sheet_says_each_entry_in_words(demo_book) -> None:
    book, result = demo_book
    rows = list(book["Audit trail"].iter_rows(min_row=HEADER_ROW, values_only=True))
    header, body = rows[0], rows[2:]  # the first body row is the chain check
    words = header.index("What was done")
    assert len(body) == len(result.run.audit)
    assert all(isinstance(r[words], str) and r[words] and not r[words].startswith("{") for r in body)


def test_a_thirty_element_run_has_a_summary_of_every_sample_and_element(tmp_path) -> None:
    document = tmp_path / "metals-batch-12.json"
    save_run(many_element_run(), document)
    book = openpyxl.load_workbook(export(document, tmp_path))
    assert book.sheetnames[:4] == ["Run information", "Analytes", "Summary", "Samples"]
    analytes = list(book["Analytes"].iter_rows(min_row=HEADER_ROW + 1, values_only=True))
    assert [r[0] for r in analytes] == list(ICP_ELEMENTS)
    assert all(r[1].startswith("y = ") and r[8] == "accepted" for r in analytes)
    summary = list(book["Summary"].iter_rows(min_row=HEADER_ROW, values_only=True))
    header, body = summary[0], summary[1:]
    samples = ["Well 4 raw", "Well 9 raw", "Effluent A", "Effluent B ×10", "Leachate 2", "QC 20"]
    # sample by sample in run order, each with every element in the run's order
    assert [(r[0], r[2]) for r in body] == [(s, e) for s in samples for e in ICP_ELEMENTS]
    flags = header.index("Flags (short)")
    assert {r[flags] for r in body if r[0] == "Leachate 2"} == {"> ULOQ"}
    assert all(isinstance(r[header.index("Reported")], str) and "ULOQ" in r[header.index("Reported")]
               for r in body if r[0] == "Leachate 2")
