"""Pasting from a spreadsheet, as an analyst does it: the block goes on the clipboard, Ctrl+V is typed
into the table (or Edit → Paste chosen), the preview is answered, and the table, the curve and the
audit trail are read back."""

from __future__ import annotations

import numpy as np
import pytest
from PySide6.QtCore import Qt
from PySide6.QtGui import QGuiApplication
from PySide6.QtWidgets import QApplication

import curvewright as cw
from curvewright.app import samples_model as smp
from curvewright.app import standards_model as sm
from curvewright.core.run import SampleKind
from tests.app.conftest import ROOT, settle, type_keys

NITRATE = ROOT / "sample_runs" / "nitrate_water_linear.json"


def type_paste(window, qtbot, view, block: str) -> None:
    """Put ``block`` on the clipboard and type Ctrl+V into ``view``, as the analyst does."""
    QGuiApplication.clipboard().setText(block)
    window.activateWindow()
    qtbot.waitUntil(lambda: QApplication.activeWindow() is window)
    view.setFocus()
    type_keys(qtbot, view, Qt.Key.Key_V, Qt.KeyboardModifier.ControlModifier)
    settle(qtbot, window)


def test_a_block_with_a_header_fills_the_columns_its_header_names(make_window, qtbot, answer_dialogs) -> None:
    window = make_window()
    block = ("Standard\tConcentration (ng/mL)\tPeak area\n"
             "CAL-1a\t1.0\t101.082\nCAL-1b\t1.0\t99.517\nCAL-2\t2.0\t199.514\nCAL-5\t5.0\t502.733\nCAL-10\t10.0\t1003.41\n")
    type_paste(window, qtbot, window.standards_view, block)
    standards = window.session.run.analytes[0].standards
    # the header row is a header, not standard 1; each column went where its header says
    assert [s.id for s in standards] == ["CAL-1a", "CAL-1b", "CAL-2", "CAL-5", "CAL-10"]
    assert [s.concentration for s in standards] == [1.0, 1.0, 2.0, 5.0, 10.0]
    assert [s.response.text for s in standards] == ["101.082", "99.517", "199.514", "502.733", "1003.41"]
    # three decimals are read with the decimal point the other values show, not refused as "ambiguous"
    assert standards[0].response.value == 101.082
    # replicates are numbered as a file import numbers them
    assert [s.replicate for s in standards] == [1, 2, 1, 1, 1]
    # the unit named in the header becomes the analyte's unit
    assert window.session.run.analytes[0].concentration_unit == "ng/mL"
    title, summary = answer_dialogs.seen[-1]
    assert title == "Paste into the standards table" and "header" in summary and "decimal point" in summary
    cal = window.session.result.analytes[0].calibration
    expected = cw.fit([1, 1, 2, 5, 10], [101.082, 99.517, 199.514, 502.733, 1003.41])
    assert cal.coefficients == pytest.approx(expected.coefficients, rel=1e-13)


def test_a_block_without_a_header_fills_from_the_selected_column(make_window, qtbot, answer_dialogs) -> None:
    window = make_window(NITRATE)
    model = window.standards_model
    before = [s.response.text for s in model.standards]
    # overwrite the responses of rows 5 and 6: select the response cell of row 5 and paste one column
    window.standards_view.setCurrentIndex(model.index(4, sm.RESP))
    answer_dialogs["paste"] = lambda dialog: dialog.placement.setCurrentIndex(1)  # "overwrite from the selected row"
    type_paste(window, qtbot, window.standards_view, "0.1040\n0.1011\n")
    after = [s.response.text for s in window.session.run.analyte("nitrate-N").standards]
    assert after[4:6] == ["0.1040", "0.1011"] and after[:4] == before[:4] and after[6:] == before[6:]
    entry = window.session.run.audit[-1]
    assert entry.action == "value_edited" and {c["field"] for c in entry.details["changes"]} == {"response"}


def test_a_decimal_comma_block_is_read_as_the_block_shows(make_window, qtbot, answer_dialogs) -> None:
    window = make_window()
    type_paste(window, qtbot, window.standards_view, "0,5\t0,0512\n1,0\t0,1019\n2,0\t0,2031\n4,0\t0,4077\n")
    standards = window.session.run.analytes[0].standards
    assert [s.concentration for s in standards] == [0.5, 1.0, 2.0, 4.0]
    assert [s.response.value for s in standards] == [0.0512, 0.1019, 0.2031, 0.4077]
    assert "decimal comma" in answer_dialogs.seen[-1][1]


def test_a_block_that_cannot_show_its_mark_asks_in_the_preview(make_window, qtbot, answer_dialogs) -> None:
    window = make_window()
    window.settings.setValue("input/decimal_mark", "ask")

    def choose_comma(dialog) -> None:
        assert "no value shows the decimal mark" in dialog.summary.text()
        dialog.decimal.setCurrentIndex(dialog.decimal.findData(","))

    answer_dialogs["paste"] = choose_comma
    type_paste(window, qtbot, window.standards_view, "1\t1,250\n2\t2,500\n4\t5,125\n")
    assert [s.response.value for s in window.session.run.analytes[0].standards] == [1.25, 2.5, 5.125]


def test_samples_block_with_a_header_fills_id_and_response_not_the_kind(make_window, qtbot, answer_dialogs) -> None:
    window = make_window(NITRATE)
    window.left_tabs.setCurrentIndex(1)
    before = len(window.session.run.samples)
    window.samples_view.setCurrentIndex(window.samples_model.index(-1, -1))
    type_paste(window, qtbot, window.samples_view, "Sample\tAbsorbance\nCreek 9\t0.3012\nCreek 9\t0.2990\nPond 2\t0.1804\n")
    samples = window.session.run.samples
    assert len(samples) == before + 2
    creek = next(s for s in samples if s.id == "Creek 9")
    assert creek.kind is SampleKind.UNKNOWN
    assert [m.response.value for m in creek.measurements] == [0.3012, 0.2990]
    result = next(s for s in window.session.result.analytes[0].samples if s.sample_id == "Creek 9")
    assert result.reported is not None and len(result.replicate_responses) == 2
    assert window.samples_model.data(window.samples_model.index(before, smp.KIND)) == "unknown"


def test_a_headerless_two_column_block_of_samples_is_id_and_response(make_window, qtbot, answer_dialogs) -> None:
    window = make_window(NITRATE)
    window.left_tabs.setCurrentIndex(1)
    window.samples_view.setCurrentIndex(window.samples_model.index(-1, -1))
    type_paste(window, qtbot, window.samples_view, "Ditch 4\t0.2207\nDitch 5\t0.3301\n")
    ids = [s.id for s in window.session.run.samples]
    assert ids[-2:] == ["Ditch 4", "Ditch 5"]
    reported = {s.sample_id: s.reported for s in window.session.result.analytes[0].samples}
    assert reported["Ditch 4"] is not None and reported["Ditch 5"] is not None


def test_samples_without_a_result_are_named_beside_the_verdict(make_window, qtbot, answer_dialogs) -> None:
    window = make_window(NITRATE)
    window.left_tabs.setCurrentIndex(1)
    window.samples_view.setCurrentIndex(window.samples_model.index(-1, -1))
    type_paste(window, qtbot, window.samples_view, "Sample\tAbsorbance\nDrain 1\tn/a\n")
    assert "Drain 1" in window.attention.text() and "no result" in window.attention.text()
    assert window.attention.isVisible()


def test_a_new_run_asks_for_units_and_never_shows_a_verdict_without_standards(make_window, qtbot, answer_dialogs,
                                                                              monkeypatch) -> None:
    window = make_window()
    assert "No standards yet" in window.verdict.text() and "NOT ACCEPTED" not in window.verdict.text()
    type_paste(window, qtbot, window.standards_view, "1\t0.101\n2\t0.199\n4\t0.405\n8\t0.796\n")
    assert "concentration unit of analyte 1 is not set" in window.attention.text()
    from PySide6.QtWidgets import QDialog

    from curvewright.app import dialogs

    def name_it(self) -> int:
        self.name.setText("nitrite-N")
        self.concentration_unit.setText("mg/L")
        return QDialog.DialogCode.Accepted

    monkeypatch.setattr(dialogs.AnalyteDialog, "exec", name_it)
    qtbot.mouseClick(window.analyte_button, Qt.MouseButton.LeftButton)
    settle(qtbot, window)
    analyte = window.session.run.analytes[0]
    assert (analyte.name, analyte.concentration_unit) == ("nitrite-N", "mg/L")
    assert window.analyte_box.currentText() == "nitrite-N"
    assert "concentration unit" not in window.attention.text()
    assert window.standards_model.headerData(sm.CONC, Qt.Orientation.Horizontal) == "Nominal (mg/L)"
    entry = window.session.run.audit[-1]
    assert entry.action == "analyte_edited" and entry.details["changes"]["name"] == {"old": "analyte 1", "new": "nitrite-N"}


def test_paste_keeps_unreadable_cells_as_typed(make_window, qtbot, answer_dialogs) -> None:
    window = make_window()
    type_paste(window, qtbot, window.standards_view, "Conc\tResponse\n1\t0.10\nabc\t0.20\n4\t0.41\n8\tND\n")
    standards = window.session.run.analytes[0].standards
    assert len(standards) == 4 and standards[1].concentration_text == "abc" and np.isnan(standards[1].concentration)
    assert standards[3].response.qualifier == "ND"
    assert "need attention" in window.statusBar().currentMessage() and "row 2" in window.statusBar().currentMessage()


def test_pasted_censored_responses_are_never_shown_as_concentrations(make_window, qtbot, answer_dialogs) -> None:
    """"<0.1" is a limit of the ABSORBANCE: the results table shows a concentration statement read
    through the curve (times the dilution) or no number, and a sample with a censored and a measured
    replicate keeps both readings in its words and is not quantified."""
    window = make_window(NITRATE)
    window.left_tabs.setCurrentIndex(1)
    window.samples_view.setCurrentIndex(window.samples_model.index(-1, -1))
    type_paste(window, qtbot, window.samples_view,
               "Sample\tDilution\tResponse\nRiver-M\t1\t<0.1\nRiver-M\t1\t0.6262\nRiver-Q\t10\t<0.1\n")
    results = {s.sample_id: s for s in window.session.result.analytes[0].samples}
    unit = window.session.run.analytes[0].concentration_unit
    mixed, diluted = results["River-M"], results["River-Q"]
    assert mixed.reported is None and mixed.reported_text == "not quantified"
    assert "replicate 1 <0.1" in mixed.words and "replicate 2 0.6262" in mixed.words
    # an absorbance below 0.1 reads below the lowest standard (0.5 mg/L), times the dilution of 10
    assert diluted.reported_text == f"< 5.00 {unit} (LLOQ × dilution 10)"
    assert "<0.1" not in diluted.reported_text and "a limit of the response" in diluted.words
    table = window.results_view.table.model()
    shown = [[table.index(r, c).data() for c in range(table.columnCount())] for r in range(table.rowCount())]
    assert not any(str(cell).startswith("<0.1") for row in shown for cell in row)


def test_typed_replicates_mixing_a_censored_reading_keep_both(make_window, qtbot, answer_dialogs) -> None:
    """Replicates typed into one cell, one of them a limit: the sample is not quantified, both readings
    named in its result and in the results table's words for the row."""
    window = make_window(NITRATE)
    window.left_tabs.setCurrentIndex(1)
    view = window.samples_view
    index = view.model().index(0, smp.RESPONSES)
    sid = window.session.run.samples[0].id
    view.setCurrentIndex(index)
    view.setFocus()
    view.edit(index)
    qtbot.wait(50)
    editor = QApplication.focusWidget()
    editor.selectAll()
    qtbot.keyClicks(editor, "0.0887; <0.05")
    qtbot.keyClick(editor, Qt.Key.Key_Return)
    settle(qtbot, window)
    assert [m.response.text.strip() for m in window.session.run.samples[0].measurements] == ["0.0887", "<0.05"]

    def result_of_sample():  # type: ignore[no-untyped-def]
        return next(s for s in window.session.result.analytes[0].samples if s.sample_id == sid)

    qtbot.waitUntil(lambda: len(result_of_sample().replicate_responses) == 1, timeout=10000)  # the refit is done
    result = result_of_sample()
    assert result.reported is None and result.reported_text == "not quantified"
    assert "replicate 2 <0.05" in result.words and "replicate 1 0.0887" in result.words
    table = window.results_view.table.model()
    row = next(r for r in range(table.rowCount()) if table.index(r, 0).data() == sid)
    shown = str(table.index(row, 0).data(Qt.ItemDataRole.ToolTipRole))  # the row's result in words
    assert "replicate 2 <0.05" in shown and "replicate 1 0.0887" in shown


GERMAN_BLOCK = ("Konzentration (mg/L)\tFläche\n0,5\t512,4\n1\t1.021,7\n2\t2.040,3\n5\t5.112,9\n10\t10.207,5\n"
                "20\t20.390,1\n")


def test_a_header_in_words_the_import_does_not_know_is_a_header_not_a_standard(make_window, qtbot,
                                                                                 answer_dialogs) -> None:
    window = make_window()
    window.left_tabs.setCurrentIndex(0)
    type_paste(window, qtbot, window.standards_view, GERMAN_BLOCK)
    standards = window.session.run.analytes[0].standards
    # the row of text above the numbers is the header: six standards, none of them made of its words
    assert [s.concentration for s in standards] == [0.5, 1.0, 2.0, 5.0, 10.0, 20.0]
    assert [s.response.value for s in standards] == [512.4, 1021.7, 2040.3, 5112.9, 10207.5, 20390.1]
    # the unit in its brackets is taken as for a header the import knows
    assert window.session.run.analytes[0].concentration_unit == "mg/L"
    title, summary = answer_dialogs.seen[-1]
    assert "first row is text above rows of numbers, read as a header" in summary
    assert window.session.result.analytes[0].calibration is not None


def test_the_preview_enters_a_header_of_text_as_data_when_the_analyst_says_so(make_window, qtbot,
                                                                              answer_dialogs) -> None:
    window = make_window()
    offered = []

    def untick(dialog) -> None:  # type: ignore[no-untyped-def]
        offered.append((dialog.first_row_header.isEnabled(), dialog.first_row_header.isChecked()))
        dialog.first_row_header.click()

    answer_dialogs["paste"] = untick
    type_paste(window, qtbot, window.standards_view, GERMAN_BLOCK)
    assert offered == [(True, True)]  # offered, preselected
    standards = window.session.run.analytes[0].standards
    # nothing typed is lost: the row is entered as typed and marked, the numbers below it as before
    assert len(standards) == 7 and standards[0].response.text == "Fläche"
    assert [s.response.value for s in standards[1:]] == [512.4, 1021.7, 2040.3, 5112.9, 10207.5, 20390.1]
