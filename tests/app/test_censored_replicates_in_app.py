"""The results table counts a censored reading among a sample's replicates, as the workbook and record do.

Invented scenario: standards and samples pasted from a spreadsheet; sample W-7 was read twice, "<20" and
300.2, W-8 twice and measured both times. The results table's n column shows W-7's two replicates, one
measured and one censored, and the workbook and the record exported from the menu say the same.
"""

from __future__ import annotations

from curvewright.app import results_model as rm
from tests.app.conftest import exported_record_text, exported_sheets

STANDARDS = ("Conc\tResponse\n0.5\t51.2\n0.5\t50.8\n1\t101.9\n1\t99.7\n2\t203.1\n2\t198.4\n5\t506.2\n5\t497.0\n"
             "10\t1003.5\n10\t995.1\n20\t2011.8\n20\t1992.2\n")
SAMPLES = "Sample\tResponse\nW-7\t<20\nW-7\t300.2\nW-8\t412.5\nW-8\t409.1\n"


def test_a_censored_reading_is_counted_among_the_replicates(new_run_pasted, qtbot, tmp_path) -> None:
    window, rows = new_run_pasted(STANDARDS, SAMPLES)
    assert list(rows) == ["W-7", "W-8"]
    counts = {sid: window.results_model.index(row, rm.N).data() for sid, row in rows.items()}
    assert counts == {"W-7": "2 (1\u00a0measured, 1\u00a0censored)", "W-8": "2"}

    sheet = exported_sheets(qtbot, window, tmp_path, "Samples")["Samples"]
    names = next(r for r in sheet if r and r[0] == "Sample id")
    w7 = next(r for r in sheet if r and r[0] == "W-7")
    assert [w7[names.index(c)] for c in ("Replicates", "Measured", "Censored")] == [2, 1, 1]

    text = " ".join(exported_record_text(qtbot, window, tmp_path).split())
    table = text[text.index("Samples – analyte 1"):]
    assert table[table.index(" W-7 unknown"):].startswith(" W-7 unknown 2 (1 measured, 1 censored)"), table[:300]
