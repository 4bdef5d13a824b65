"""The import dialog, as the analyst opens it on a workbook with a formula never calculated and on a
file whose dilution cells are partly empty."""

from __future__ import annotations

import openpyxl


def test_the_dialog_refuses_an_uncalculated_dilution_formula(qtbot, tmp_path) -> None:
    from curvewright.app.dialogs import ImportDialog
    from PySide6.QtWidgets import QDialogButtonBox

    book = openpyxl.Workbook()
    sheet = book.active
    sheet.title = "Samples"
    for row in (["Sample", "Dilution", "Response (counts)"], ["FH-0401", 1, 301.552], ["FH-0402", "=2*5", 288.140]):
        sheet.append(row)  # the formula is stored without a calculated value
    path = tmp_path / "samples.xlsx"
    book.save(path)
    dialog = ImportDialog("samples", path)
    qtbot.addWidget(dialog)
    summary = dialog.summary.toPlainText()
    assert "row 3, column 2 (Dilution): '=2*5' — a formula with no calculated value" in summary
    assert [s.id for s in dialog.result.samples] == ["FH-0401"]
    assert dialog.buttons.button(QDialogButtonBox.StandardButton.Ok).isEnabled()  # the rest can still be imported


def test_the_dialog_says_an_empty_dilution_is_taken_as_one(qtbot, tmp_path) -> None:
    from curvewright.app.dialogs import ImportDialog

    path = tmp_path / "samples.csv"
    path.write_bytes(b"Sample;Dilution;Response (counts)\r\nFH-0401;;301,55\r\nFH-0402;10;288,1\r\n")
    dialog = ImportDialog("samples", path)
    qtbot.addWidget(dialog)
    assert "dilution cell empty, taken as 1 (no dilution): row(s) 2" in dialog.summary.toPlainText()
    assert [s.dilution_factor for s in dialog.result.samples] == [1.0, 10.0]
