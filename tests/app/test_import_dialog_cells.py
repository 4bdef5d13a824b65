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


def test_a_standard_whose_id_or_level_is_an_uncalculated_formula_is_not_imported(qtbot, tmp_path) -> None:
    from curvewright.app.dialogs import ImportDialog

    book = openpyxl.Workbook()
    sheet = book.active
    sheet.title = "Standards"
    rows = [["Standard", "Level", "Concentration (µg/L)", "Response (counts)"],
            ["CO-01", "L1", 0.5, 44.512], ['="CO-"&"02"', "L1", 0.5, 45.087], ["CO-03", '="L"&2', 1, 88.903],
            ["CO-04", "L2", 1, 89.617]]
    for row in rows:
        sheet.append(row)
    path = tmp_path / "standards.xlsx"
    book.save(path)
    dialog = ImportDialog("standards", path)
    qtbot.addWidget(dialog)
    summary = dialog.summary.toPlainText()
    assert "row 3, column 1 (Standard): '=\"CO-\"&\"02\"' — a formula with no calculated value" in summary
    assert "row 4, column 2 (Level): '=\"L\"&2' — a formula with no calculated value" in summary
    assert [s.id for _, s in dialog.result.standards] == ["CO-01", "CO-04"]


def test_the_dialog_starts_on_the_shown_sheet_and_marks_a_hidden_one(qtbot, tmp_path) -> None:
    from curvewright.app.dialogs import ImportDialog
    from tests.test_cli_workbook_sheets import BATCH, TEMPLATE, hidden_template_workbook

    path = hidden_template_workbook(tmp_path / "batch.xlsx")
    dialog = ImportDialog("standards", path)
    qtbot.addWidget(dialog)
    offered = [dialog.sheet.itemText(i) for i in range(dialog.sheet.count())]
    assert offered == ["Template (hidden)", "Standards"]
    assert dialog.sheet.currentText() == "Standards"
    assert [s.response.value for _, s in dialog.result.standards] == [y for _, y in BATCH]
    assert "sheet 'Standards'" in dialog.summary.toPlainText()
    dialog.sheet.setCurrentIndex(0)  # the analyst chooses the hidden sheet on purpose
    assert [s.response.value for _, s in dialog.result.standards] == [y for _, y in TEMPLATE]
    assert "sheet 'Template' (hidden in the workbook" in dialog.summary.toPlainText()


def test_the_dialog_marks_hidden_rows_and_imports_only_after_a_choice(qtbot, tmp_path) -> None:
    from curvewright.app.dialogs import ImportDialog
    from PySide6.QtWidgets import QDialogButtonBox
    from tests.test_cli_hidden_rows import HIDDEN, ROWS, workbook_with_a_hidden_row

    dialog = ImportDialog("standards", workbook_with_a_hidden_row(tmp_path / "batch.xlsx"))
    qtbot.addWidget(dialog)
    ok = dialog.buttons.button(QDialogButtonBox.StandardButton.Ok)
    headers = [dialog.preview.verticalHeaderItem(i).text() for i in range(dialog.preview.rowCount())]
    assert headers[HIDDEN - 1] == f"{HIDDEN} (hidden)" and headers.count(f"{HIDDEN} (hidden)") == 1
    assert "row 5 (Zr-04, 2.0, 211.4)" in dialog.summary.toPlainText()
    assert dialog.result is None and not ok.isEnabled()
    dialog.hidden_rows.setCurrentText("leave them out")
    assert [s.id for _, s in dialog.result.standards] == [r[0] for r in ROWS if r[0] != "Zr-04"]
    assert "hidden row(s) 5 left out, as chosen" in dialog.summary.toPlainText() and ok.isEnabled()
    dialog.hidden_rows.setCurrentText("include them")
    assert [s.id for _, s in dialog.result.standards] == [r[0] for r in ROWS]
    assert "hidden row(s) 5 included, as chosen" in dialog.summary.toPlainText()


def test_the_hidden_rows_choice_is_not_shown_for_a_sheet_without_them(qtbot, tmp_path) -> None:
    from curvewright.app.dialogs import ImportDialog

    path = tmp_path / "standards.csv"
    path.write_text("Standard id,Concentration (µg/L),Response (counts)\nZr-01,0.5,51.2\nZr-02,1,101.9\n")
    dialog = ImportDialog("standards", path)
    qtbot.addWidget(dialog)
    assert not dialog.form.isRowVisible(dialog.hidden_rows) and dialog.result is not None
