"""A sample entered with its response cell left empty is listed wherever the samples are: the Results
tab, the attention area, the workbook's Summary and Samples sheets and the printed record, each saying
"no response recorded" (as a file read with an empty response cell says it). Driven as an analyst
does: standards and samples pasted from the clipboard, the workbook and the record exported from the
File menu's actions, answered through the save dialog (pytest-qt, offscreen)."""

from __future__ import annotations


import openpyxl

from curvewright.app import results_model as rm
from tests.app.conftest import paste_from_menu, settle
from tests.printed import printed_text

STANDARDS = ("Conc\tResponse\n0.5\t0.0123\n0.5\t0.0127\n1\t0.0248\n1\t0.0251\n2.5\t0.0619\n2.5\t0.0622\n"
             "5\t0.1248\n5\t0.1239\n10\t0.2490\n10\t0.2502\n20\t0.4975\n20\t0.5010\n")
SAMPLES = "Sample\tResponse\tWeight\tComment\nS1\t0.1\t1.02\tok\nS2\t\t1.01\t\nS3\t0.3\t0.98\tfoam\n"


def test_a_sample_with_an_empty_response_is_listed_everywhere(make_window, answer_dialogs, qtbot, tmp_path,
                                                              save_in_tmp_path) -> None:
    window = make_window(None)
    paste_from_menu(qtbot, window, window.standards_view, STANDARDS)
    window.left_tabs.setCurrentIndex(1)
    paste_from_menu(qtbot, window, window.samples_view, SAMPLES)

    results = window.results_model
    rows = {results.index(r, rm.SAMPLE).data(): r for r in range(results.rowCount())}
    assert list(rows) == ["S1", "S2", "S3"]
    assert results.index(rows["S2"], rm.REPORTED).data() == "no response recorded"
    assert "S2" in window.attention.text() and "have no result" in window.attention.text()

    window.actions_by_name["export-xlsx"].trigger()
    settle(qtbot, window)
    workbook = openpyxl.load_workbook(next(tmp_path.glob("*.xlsx")), read_only=True)
    try:
        for name in ("Summary", "Samples"):
            sheet = [row for row in workbook[name].iter_rows(values_only=True)]
            listed = [row for row in sheet if row and row[0] == "S2"]
            assert listed, f"S2 is missing from the workbook's {name} sheet"
            assert any("no response recorded" in str(cell) for cell in listed[0]), listed[0]
    finally:
        workbook.close()

    window.actions_by_name["export-record"].trigger()
    settle(qtbot, window)
    text = printed_text(next(tmp_path.glob("*.pdf")))  # cells wrap over lines
    table = text[text.index("Samples – analyte 1"):]
    row = table[table.index(" S2 unknown"):table.index(" S3 unknown")]
    assert "no response recorded" in row, row
