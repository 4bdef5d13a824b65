"""The results table counts a censored reading among a sample's replicates, as the workbook and record do.

Invented scenario: standards and samples pasted from a spreadsheet; sample W-7 was read twice, "<20" and
300.2, W-8 twice and measured both times. The results table's n column shows W-7's two replicates, one
measured and one censored, and the workbook and the record exported from the menu say the same.
"""

from __future__ import annotations

from pathlib import Path

import openpyxl
from PySide6.QtWidgets import QFileDialog

from curvewright.app import results_model as rm
from tests.app.conftest import paste_from_menu, settle
from tests.printed import printed_text

STANDARDS = ("Conc\tResponse\n0.5\t51.2\n0.5\t50.8\n1\t101.9\n1\t99.7\n2\t203.1\n2\t198.4\n5\t506.2\n5\t497.0\n"
             "10\t1003.5\n10\t995.1\n20\t2011.8\n20\t1992.2\n")
SAMPLES = "Sample\tResponse\nW-7\t<20\nW-7\t300.2\nW-8\t412.5\nW-8\t409.1\n"


def test_a_censored_reading_is_counted_among_the_replicates(make_window, answer_dialogs, qtbot, tmp_path,
                                                             monkeypatch) -> None:
    monkeypatch.setattr(QFileDialog, "getSaveFileName",
                        lambda parent, caption, suggested="", *a, **k: (str(tmp_path / Path(suggested).name), ""))
    window = make_window(None)
    paste_from_menu(qtbot, window, window.standards_view, STANDARDS)
    window.left_tabs.setCurrentIndex(1)
    paste_from_menu(qtbot, window, window.samples_view, SAMPLES)

    results = window.results_model
    rows = {results.index(r, rm.SAMPLE).data(): r for r in range(results.rowCount())}
    assert list(rows) == ["W-7", "W-8"]
    assert results.index(rows["W-7"], rm.N).data() == "2 (1\u00a0measured, 1\u00a0censored)"
    assert results.index(rows["W-8"], rm.N).data() == "2"

    window.actions_by_name["export-xlsx"].trigger()
    settle(qtbot, window)
    workbook = openpyxl.load_workbook(next(tmp_path.glob("*.xlsx")), read_only=True)
    try:
        sheet = [list(row) for row in workbook["Samples"].iter_rows(values_only=True)]
    finally:
        workbook.close()
    names = next(r for r in sheet if r and r[0] == "Sample id")
    w7 = next(r for r in sheet if r and r[0] == "W-7")
    assert [w7[names.index(c)] for c in ("Replicates", "Measured", "Censored")] == [2, 1, 1]

    window.actions_by_name["export-record"].trigger()
    settle(qtbot, window)
    text = " ".join(printed_text(next(tmp_path.glob("*.pdf"))).split())
    table = text[text.index("Samples – analyte 1"):]
    assert table[table.index(" W-7 unknown"):].startswith(" W-7 unknown 2 (1 measured, 1 censored)"), table[:300]
