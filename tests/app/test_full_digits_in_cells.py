"""Opening a number's cell and pressing Enter changes nothing: the editor holds every digit of the value
(a dilution factor of 1234567, a QC nominal of 4.123456789, a standard at 1234567), so nothing is
asked and no audit entry is written; the cells show the values without an exponent; and a real change
is written in the audit trail with its full old and new values. Driven as an analyst does: paste from
the clipboard, select the cell, F2, Enter (pytest-qt, offscreen)."""

from __future__ import annotations

from PySide6.QtCore import Qt
from PySide6.QtTest import QTest

from curvewright.app import samples_model as smod
from curvewright.app import standards_model as stmod
from curvewright.io.audit_words import entry_words
from tests.app.conftest import paste_from_menu, settle
from tests.printed import printed_text

STANDARDS = ("Conc\tResponse\n0.5\t0.0123\n1\t0.0248\n2.5\t0.0619\n5\t0.1248\n10\t0.2490\n20\t0.4975\n"
             "1234567\t0.61\n")
SAMPLES = ("Sample\tType\tDilution\tNominal\tResponse\nQC-A\tQC\t1\t4.123456789\t0.1030\n"
           "R-1\tunknown\t1234567\t\t0.2\nR-3\tunknown\t1.125\t\t0.3\n")


def _open_and_enter(window, qtbot, view, row: int, col: int) -> str:  # type: ignore[no-untyped-def]
    """F2 on the cell, Enter in its editor; what the editor showed."""
    view.setFocus()
    view.setCurrentIndex(view.model().index(row, col))
    QTest.keyClick(view, Qt.Key.Key_F2)
    editor = view.indexWidget(view.currentIndex())
    assert editor is not None, "F2 opened no editor"
    shown = editor.text()
    QTest.keyClick(editor, Qt.Key.Key_Return)
    settle(qtbot, window)
    return shown


def _fill(window, qtbot) -> None:  # type: ignore[no-untyped-def]
    paste_from_menu(qtbot, window, window.standards_view, STANDARDS)
    window.left_tabs.setCurrentIndex(1)
    paste_from_menu(qtbot, window, window.samples_view, SAMPLES)


def test_enter_in_an_unchanged_cell_keeps_every_digit_and_asks_nothing(make_window, answer_dialogs, qtbot) -> None:
    window = make_window(None)
    _fill(window, qtbot)
    run, asked = window.session.run, len(answer_dialogs.seen)
    samples = window.samples_model
    assert samples.index(1, smod.DILUTION).data() == "1234567"  # not 1.23457e+06
    assert samples.index(0, smod.NOMINAL).data() == "4.123456789"
    assert "e+" not in window.standards_model.index(6, stmod.CONC).data()

    assert _open_and_enter(window, qtbot, window.samples_view, 0, smod.NOMINAL) == "4.123456789"
    assert _open_and_enter(window, qtbot, window.samples_view, 1, smod.DILUTION) == "1234567"
    assert _open_and_enter(window, qtbot, window.samples_view, 2, smod.DILUTION) == "1.125"
    window.left_tabs.setCurrentIndex(0)
    assert _open_and_enter(window, qtbot, window.standards_view, 6, stmod.CONC) == "1234567"

    assert window.session.run is run  # nothing changed, no audit entry
    assert len(answer_dialogs.seen) == asked  # no "why does this value change?"
    assert window.session.run.samples[0].nominal_of("analyte 1") == 4.123456789
    assert window.session.run.samples[1].dilution_factor == 1234567.0
    assert window.session.run.analytes[0].standards[6].concentration == 1234567.0


def test_a_real_change_is_recorded_with_its_full_values(make_window, answer_dialogs, qtbot) -> None:
    window = make_window(None)
    _fill(window, qtbot)
    view = window.samples_view
    view.setFocus()
    view.setCurrentIndex(window.samples_model.index(1, smod.DILUTION))
    QTest.keyClick(view, Qt.Key.Key_F2)
    editor = view.indexWidget(view.currentIndex())
    editor.selectAll()
    QTest.keyClicks(editor, "1234568")
    QTest.keyClick(editor, Qt.Key.Key_Return)
    settle(qtbot, window)
    assert answer_dialogs.last_title == "Why does this value change?"
    words = entry_words(window.session.run.audit[-1])
    assert "dilution factor of R-1 from 1234567 to 1234568" in words, words


def test_a_decimal_comma_table_reads_back_what_its_editor_shows(make_window, answer_dialogs, qtbot, settings) -> None:
    settings.setValue("input/decimal_mark", ",")
    window = make_window(None)
    paste_from_menu(qtbot, window, window.standards_view, STANDARDS.replace("0.", "0,").replace("2.5", "2,5"))
    window.left_tabs.setCurrentIndex(1)
    paste_from_menu(qtbot, window, window.samples_view, SAMPLES.replace(".", ","))
    run, asked = window.session.run, len(answer_dialogs.seen)
    assert _open_and_enter(window, qtbot, window.samples_view, 0, smod.NOMINAL) == "4,123456789"
    window.left_tabs.setCurrentIndex(0)
    assert _open_and_enter(window, qtbot, window.standards_view, 2, stmod.CONC) == "2,5"
    assert window.session.run is run
    assert len(answer_dialogs.seen) == asked
    assert window.session.run.analytes[0].standards[2].has_concentration


def test_the_workbook_and_the_record_show_entered_values_in_full(make_window, answer_dialogs, qtbot, tmp_path,
                                                                 save_in_tmp_path) -> None:
    """The dilution factor and the nominal value an analyst entered are printed as entered in the
    record and formatted so in the workbook: 1234567, not 1.23457e+06; 4.123456789, not 4.12346."""
    import openpyxl

    window = make_window(None)
    _fill(window, qtbot)
    window.actions_by_name["export-record"].trigger()
    settle(qtbot, window)
    text = printed_text(next(tmp_path.glob("*.pdf")))
    samples = text[text.index("Samples – analyte 1 Sample"):]
    assert "R-1 unknown 1 1234567 " in samples, samples[:400]
    # the standards as entered (the lowest level fails its limits here, so the range is narrowed to the highest)
    assert "Range of the standards in the fit 0.5–1234567" in text
    assert "narrowed to the passing levels 1234567–1234567" in text
    window.actions_by_name["export-xlsx"].trigger()
    settle(qtbot, window)
    book = openpyxl.load_workbook(next(tmp_path.glob("*.xlsx")))
    try:
        sheet = book["Samples"]
        header_row = next(r for r in sheet.iter_rows() if r[0].value == "Sample id")
        at = {c.value: c.column - 1 for c in header_row}
        rows = {r[0].value: r for r in sheet.iter_rows(min_row=header_row[0].row + 1) if r[0].value}
        dilution, nominal = rows["R-1"][at["Dilution factor"]], rows["QC-A"][at["Nominal"]]
        assert dilution.value == 1234567 and dilution.number_format == "0"
        assert nominal.value == 4.123456789 and nominal.number_format == "0.000000000"
    finally:
        book.close()
