"""Standards the analysis cannot use (a response cleared, text typed as the nominal, a nominal below
zero) are shown as not in the fit, with the reason, on the screen, in the workbook and in the record
alike; the cell is marked; nothing is read back off the curve for them; and the verdict says how they
count. Driven as an analyst does: standards pasted, cells typed over and Enter pressed (the reason
dialog answered), the workbook and the record exported through the File menu (pytest-qt, offscreen)."""

from __future__ import annotations


import openpyxl
from PySide6.QtCore import Qt
from PySide6.QtTest import QTest

from curvewright.app import standards_model as sm
from curvewright.app.standards_model import INVALID
from tests.app.conftest import paste_from_menu, settle
from tests.printed import printed_text

STANDARDS = ("Conc\tResponse\n0.5\t0.0123\n0.5\t0.0127\n1\t0.0248\n1\t0.0251\n2.5\t0.0619\n2.5\t0.0622\n"
             "5\t0.1248\n5\t0.1239\n10\t0.2490\n10\t0.2502\n20\t0.4975\n20\t0.5010\n")
EXPECTED = {"STD-3": "no response recorded", "STD-1": "concentration 'abc' is not a number",
            "STD-5": "concentration −2.5 is below zero"}


def _type_over(window, qtbot, row: int, col: int, text: str) -> None:  # type: ignore[no-untyped-def]
    view = window.standards_view
    view.setFocus()
    view.setCurrentIndex(window.standards_model.index(row, col))
    QTest.keyClick(view, Qt.Key.Key_F2)
    editor = view.indexWidget(view.currentIndex())
    editor.selectAll()
    if text:
        QTest.keyClicks(editor, text)
    else:
        QTest.keyClick(editor, Qt.Key.Key_Backspace)
    QTest.keyClick(editor, Qt.Key.Key_Return)
    settle(qtbot, window)


def test_standards_without_a_usable_value_say_so_everywhere(make_window, answer_dialogs, qtbot, tmp_path,
                                                            save_in_tmp_path) -> None:
    window = make_window(None)
    paste_from_menu(qtbot, window, window.standards_view, STANDARDS)
    _type_over(window, qtbot, 2, sm.RESP, "")
    _type_over(window, qtbot, 0, sm.CONC, "abc")
    _type_over(window, qtbot, 4, sm.CONC, "-2.5")
    assert "below zero" in window.statusBar().currentMessage()

    model = window.standards_model
    rows = {model.index(r, sm.ID).data(): r for r in range(model.rowCount())}
    for sid, reason in EXPECTED.items():
        r = rows[sid]
        assert model.index(r, sm.IN_FIT).data() == f"no: {reason}", sid
        assert model.index(r, sm.LIMITS).data() == "not usable", sid
        assert model.index(r, sm.BACK).data() == "" and model.index(r, sm.RE).data() == "", sid
        assert f"{sid} of analyte 1 (row {r + 1}) is not in the fit: {reason}" in window.attention.text()
    assert model.index(rows["STD-5"], sm.CONC).data(Qt.ItemDataRole.BackgroundRole).color() == INVALID
    assert model.index(rows["STD-2"], sm.IN_FIT).data() == "yes"
    reasons = " ".join(window.session.result.analytes[0].verdict.reasons)
    assert "3 standard(s) without a usable value (not in the fit) counted as not passing" in reasons
    assert "the 3 standard(s) without a usable value are in no level" in reasons

    window.actions_by_name["export-xlsx"].trigger()
    settle(qtbot, window)
    book = openpyxl.load_workbook(next(tmp_path.glob("*.xlsx")), read_only=True)
    try:
        sheet = next(book[n] for n in book.sheetnames if n.startswith("Standards"))
        table = [r for r in sheet.iter_rows(values_only=True)]
    finally:
        book.close()
    header = next(r for r in table if r and r[0] == "Standard id")
    at = {name: i for i, name in enumerate(header)}
    for sid, reason in EXPECTED.items():
        row = next(r for r in table if r and r[0] == sid)
        assert row[at["Included"]] == "no" and row[at["Exclusion reason"]] == f"not usable: {reason}", row
        assert row[at["Back-calculated"]] is None and row[at["Relative error (%)"]] is None, row

    window.actions_by_name["export-record"].trigger()
    settle(qtbot, window)
    text = printed_text(next(tmp_path.glob("*.pdf")))
    for sid, reason in EXPECTED.items():
        assert f"{sid} (row {rows[sid] + 1}): {reason}" in text, sid
