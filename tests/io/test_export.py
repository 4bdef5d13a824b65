"""The reviewer's workbook and the CSV, read back as a reviewer's tools would read them."""

from __future__ import annotations

import csv
import io

import openpyxl
import pytest

import curvewright as cw
from curvewright.core.run_analysis import analyse_run
from curvewright.io import run_document as doc
from curvewright.io.csv_export import csv_text, write_csv
from curvewright.io.errors import ExportError
from curvewright.io.importing import import_standards
from curvewright.io.result_tables import samples_table
from curvewright.io.tables import table_from_text, table_from_xlsx
from curvewright.io.xlsx_export import write_xlsx
from tests.io.helpers import STANDARDS_TSV, small_run

FORMULA_TEXTS = ('=HYPERLINK("http://example.invalid")', "+cmd|' /C calc'!A0", "@SUM(1+1)", "=cmd() typed as a reason")


@pytest.fixture(scope="module")
def workbook(tmp_path_factory):
    run = small_run()
    path = tmp_path_factory.mktemp("export") / "results.xlsx"
    write_xlsx(analyse_run(run), path)
    return openpyxl.load_workbook(path), run


def test_every_sheet_carries_the_caution(workbook) -> None:
    book, _ = workbook
    assert book.sheetnames == ["Run information", "Analytes", "Summary", "Samples", "Calibration – cobalt",
                              "Standards – cobalt", "Audit trail"]
    for sheet in book.worksheets:
        assert sheet["A1"].value == cw.CAUTION


def test_no_cell_is_a_formula(workbook) -> None:
    book, _ = workbook
    found = set()
    for sheet in book.worksheets:
        for row in sheet.iter_rows():
            for cell in row:
                assert cell.data_type != "f", f"{sheet.title}!{cell.coordinate} is a formula"
                if isinstance(cell.value, str) and cell.value in FORMULA_TEXTS:
                    found.add(cell.value)
                    assert cell.data_type == "s"
    assert found == set(FORMULA_TEXTS)


def test_numbers_are_full_precision_numeric_cells(workbook) -> None:
    book, run = workbook
    result = analyse_run(run)
    cal = result.analytes[0].calibration
    sheet = book["Calibration – cobalt"]
    values = {row[0].value: row[1].value for row in sheet.iter_rows(min_row=4)}
    assert values["b1 (coefficient of x^1)"] == float(cal.coefficients[1])
    assert values["Residual SD"] == cal.residual_sd
    assert values["Standards verdict"] in ("accepted", "NOT accepted")
    samples = book["Samples"]
    header = [c.value for c in samples[3]]
    col = header.index("Concentration × dilution")
    rounded = header.index("Reported")
    exported = [r for r in samples.iter_rows(min_row=4, values_only=True)]
    expected = [s for s in result.analytes[0].samples]
    assert [r[col] for r in exported] == [s.reported for s in expected]
    cell = samples.cell(row=4, column=rounded + 1)
    assert isinstance(cell.value, float) and cell.number_format.startswith("0")


def test_excluded_standard_and_its_reason_are_listed(workbook) -> None:
    book, _ = workbook
    rows = list(book["Standards – cobalt"].iter_rows(min_row=4, values_only=True))
    excluded = [r for r in rows if r[0] == "S6b"][0]
    assert excluded[-2] == "no" and excluded[-1] == "=cmd() typed as a reason"
    assert isinstance(excluded[6], float)  # still read back through the curve for the reviewer


def test_audit_sheet_says_the_chain_verifies(workbook) -> None:
    book, run = workbook
    rows = list(book["Audit trail"].iter_rows(min_row=4, values_only=True))
    assert rows[0][4].startswith("verified")
    assert [r[3] for r in rows[1:]] == [e.action for e in run.audit]


def test_csv_records_its_format_and_protects_text(tmp_path) -> None:
    result = analyse_run(small_run())
    path = tmp_path / "samples.csv"
    write_csv(result, path, delimiter=";", decimal_mark=",")
    text = path.read_text(encoding="utf-8")
    lines = text.splitlines()
    assert lines[0] == "# " + cw.CAUTION
    assert "delimiter: semicolon; decimal mark: ','" in lines[1]
    rows = list(csv.reader(io.StringIO("\n".join(lines[2:])), delimiter=";"))
    ids = [r[0] for r in rows[1:]]
    assert "'=HYPERLINK(\"http://example.invalid\")" in ids and "'@SUM(1+1)" in ids
    reported = rows[1][rows[0].index("Concentration × dilution")]
    value = result.analytes[0].samples[0].reported
    assert float(reported.replace(",", ".")) == value  # full precision survives the decimal comma


def test_csv_refuses_a_comma_with_decimal_comma() -> None:
    with pytest.raises(ExportError, match="needs a semicolon or tab"):
        csv_text(samples_table(analyse_run(small_run())), delimiter=",", decimal_mark=",")


def test_locked_target_loses_nothing(tmp_path) -> None:
    target = tmp_path / "locked"
    target.mkdir()  # a folder where the file should go: the rename fails like a locked file
    with pytest.raises(ExportError, match=r"locked: not written \(.+\); .+locked is unchanged\."):
        write_xlsx(analyse_run(small_run()), target)
    assert target.is_dir() and not [p for p in tmp_path.iterdir() if p.name.endswith(".tmp")]


def test_paste_to_document_to_workbook_round_trip_is_exact(tmp_path) -> None:
    """paste → document → save → open → export → read back: every value bit for bit."""
    run = small_run()
    path = tmp_path / "run.json"
    doc.save_run(run, path)
    reopened = doc.open_run(path).run
    out = tmp_path / "results.xlsx"
    write_xlsx(analyse_run(reopened), out)
    book = openpyxl.load_workbook(out)
    rows = list(book["Standards – cobalt"].iter_rows(min_row=4, values_only=True))
    pasted = import_standards(table_from_text(STANDARDS_TSV), analyte="cobalt").standards
    for (_, standard), row in zip(pasted, rows, strict=True):
        assert row[0] == standard.id
        assert row[3] == standard.concentration
        assert row[4] == standard.response.text
        assert row[5] == standard.response.value


def test_workbook_standards_import_back(tmp_path) -> None:
    """A workbook of standards imports to the same numbers (XLSX import path)."""
    book = openpyxl.Workbook()
    sheet = book.active
    sheet.title = "Cal"
    sheet.append(["Concentration (ng/mL)", "Area", "Note"])
    values = [(1.0, 1020.125), (2.5, 2551.0), (5.0, 5100.5), (10.0, 10203.75)]
    for x, y in values:
        sheet.append([x, y, "=1+1"])
    path = tmp_path / "cal.xlsx"
    book.save(path)
    result = import_standards(table_from_xlsx(path, "Cal"))
    assert [(s.concentration, s.response.value) for _, s in result.standards] == values
    assert result.units == {"concentration": "ng/mL"}
    assert any("columns not used" in w for w in result.warnings)


def test_a_calibration_that_cannot_read_back_still_exports_its_standards(tmp_path) -> None:
    from curvewright.core.run import Analyte, Reading, Run, Standard
    from curvewright.io.xlsx_export import write_xlsx

    # invented: a response that does not change with concentration, one standard excluded
    flat = tuple(Standard(f"F{i}", float(c), Reading.of(50.0 + (0.4 if i % 2 else -0.4)), 1)
                 for i, c in enumerate((1, 2, 3, 4, 5, 6)))
    flat += (Standard("F-x", 7.0, Reading.of(50.1), 1, included=False, exclusion_reason="vial broken"),)
    result = analyse_run(Run("flat batch (invented)", (Analyte("tin", "mg/L", "counts", flat),)))
    path = tmp_path / "flat.xlsx"
    write_xlsx(result, path)
    rows = list(openpyxl.load_workbook(path)["Standards – tin"].iter_rows(min_row=4, values_only=True))
    excluded = [r for r in rows if r[0] == "F-x"][0]
    assert excluded[6] is None and excluded[-1] == "vial broken"


def test_decimal_comma_reaches_numbers_in_words_but_not_text_quoted_as_typed() -> None:
    from curvewright.io.csv_export import decimal_comma_in_words

    assert decimal_comma_in_words("below the reporting limit of 0.500 µg/L (LLOQ × dilution 2.5)") == \
        "below the reporting limit of 0,500 µg/L (LLOQ × dilution 2,5)"
    assert decimal_comma_in_words("12.5 | 3.0 | 1e-05 | 2.5e-07") == "12,5 | 3,0 | 1e-05 | 2,5e-07"
    assert decimal_comma_in_words("replicate 2: response '1.2.3' is not a number; the sample's mean of 4.5") == \
        "replicate 2: response '1.2.3' is not a number; the sample's mean of 4,5"
    assert decimal_comma_in_words("response is censored (<0.5). Read again.") == "response is censored (<0,5). Read again."
