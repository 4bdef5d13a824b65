"""A sample entered with its response cell left empty is listed wherever the samples are: the Results
tab, the attention area, the workbook's Summary and Samples sheets and the printed record, each saying
"no response recorded" (as a file read with an empty response cell says it). Driven as an analyst
does: standards and samples pasted from the clipboard, the workbook and the record exported from the
File menu's actions, answered through the save dialog (pytest-qt, offscreen)."""

from __future__ import annotations

from curvewright.app import results_model as rm
from tests.app.conftest import exported_record_text, exported_sheets

STANDARDS = ("Conc\tResponse\n0.5\t0.0123\n0.5\t0.0127\n1\t0.0248\n1\t0.0251\n2.5\t0.0619\n2.5\t0.0622\n"
             "5\t0.1248\n5\t0.1239\n10\t0.2490\n10\t0.2502\n20\t0.4975\n20\t0.5010\n")
SAMPLES = "Sample\tResponse\tWeight\tComment\nS1\t0.1\t1.02\tok\nS2\t\t1.01\t\nS3\t0.3\t0.98\tfoam\n"


def test_a_sample_with_an_empty_response_is_listed_everywhere(new_run_pasted, qtbot, tmp_path) -> None:
    window, rows = new_run_pasted(STANDARDS, SAMPLES)
    assert list(rows) == ["S1", "S2", "S3"]
    assert window.results_model.index(rows["S2"], rm.REPORTED).data() == "no response recorded"
    assert "S2" in window.attention.text() and "have no result" in window.attention.text()

    sheets = exported_sheets(qtbot, window, tmp_path, "Summary", "Samples")
    for name, sheet in sheets.items():
        listed = [row for row in sheet if row and row[0] == "S2"]
        assert listed, f"S2 is missing from the workbook's {name} sheet"
        assert any("no response recorded" in str(cell) for cell in listed[0]), listed[0]

    text = exported_record_text(qtbot, window, tmp_path)  # cells wrap over lines
    table = text[text.index("Samples – analyte 1"):]
    row = table[table.index(" S2 unknown"):table.index(" S3 unknown")]
    assert "no response recorded" in row, row
