"""Pasting a block whose numbers are written with thousands separators ("12.480,9"), as a spreadsheet
set up for a decimal comma copies them: the clipboard holds the block, Ctrl+V is typed into the
standards table, the preview is answered, and the table, the verdict and the line of what needs
attention are read back."""

from __future__ import annotations

import pytest

import curvewright as cw
from curvewright.app import standards_model as sm
from tests.app.test_paste import type_paste

# An invented six-level calibration (peak areas of a made-up analyte), copied from a sheet that writes
# a decimal comma and groups thousands with a point.
GROUPED = ("Level\tConc. (mg/L)\tArea\n"
           "L1\t0,50\t1.234,5\n" "L1\t0,50\t1.250,1\n"
           "L2\t1,00\t2.480,0\n" "L2\t1,00\t2.510,7\n"
           "L3\t2,50\t6.190,2\n" "L3\t2,50\t6.203,9\n"
           "L4\t5,00\t12.480,9\n" "L4\t5,00\t12.391,0\n"
           "L5\t10,00\t24.900,4\n" "L5\t10,00\t25.020,0\n"
           "L6\t20,00\t49.755,3\n" "L6\t20,00\t50.102,8\n")
AREAS = [1234.5, 1250.1, 2480.0, 2510.7, 6190.2, 6203.9, 12480.9, 12391.0, 24900.4, 25020.0, 49755.3, 50102.8]
CONCS = [0.5, 0.5, 1.0, 1.0, 2.5, 2.5, 5.0, 5.0, 10.0, 10.0, 20.0, 20.0]


def test_a_block_with_thousands_separators_is_read_as_the_block_shows(make_window, qtbot, answer_dialogs) -> None:
    window = make_window()
    type_paste(window, qtbot, window.standards_view, GROUPED)
    dialog = answer_dialogs.paste_dialogs[-1]
    # the preview says what it found and offers the separator, as the file import does
    assert "thousands separator '.'" in dialog.summary.text()
    assert dialog.thousands.count() >= 5 and dialog.thousands.currentData() is None  # "as the block shows it"
    standards = window.session.run.analytes[0].standards
    assert [s.response.value for s in standards] == AREAS
    assert [s.response.text for s in standards] == [line.split("\t")[2] for line in GROUPED.splitlines()[1:]]
    assert [s.concentration for s in standards] == CONCS
    assert "need attention" not in window.statusBar().currentMessage()
    # the curve is the one fitted to the values as numbers (the fit itself is checked against
    # NIST StRD elsewhere; here the pasted values must reach it unchanged)
    expected = cw.fit(CONCS, AREAS)
    assert window.session.result.analytes[0].calibration.coefficients == pytest.approx(expected.coefficients, rel=1e-13)


def test_the_separator_chosen_in_the_preview_is_used(make_window, qtbot, answer_dialogs) -> None:
    window = make_window()
    window.settings.setValue("input/decimal_mark", "ask")
    # "1,250" and "2,500" read two ways; the analyst says the comma separates thousands
    answer_dialogs["paste"] = lambda dialog: dialog.thousands.setCurrentIndex(dialog.thousands.findData(","))
    type_paste(window, qtbot, window.standards_view, "1\t1,250\n2\t2,500\n4\t5,125\n")
    assert [s.response.value for s in window.session.run.analytes[0].standards] == [1250.0, 2500.0, 5125.0]


def test_refused_values_are_kept_and_the_verdict_says_why_no_curve(make_window, qtbot, answer_dialogs) -> None:
    window = make_window()
    window.settings.setValue("input/decimal_mark", "ask")

    def refuse_separators(dialog) -> None:
        dialog.thousands.setCurrentIndex(dialog.thousands.findData(""))  # "none (refuse)"

    answer_dialogs["paste"] = refuse_separators
    type_paste(window, qtbot, window.standards_view, GROUPED)
    standards = window.session.run.analytes[0].standards
    # nothing typed is lost: every response kept as typed, not used
    assert [s.response.text for s in standards] == [line.split("\t")[2] for line in GROUPED.splitlines()[1:]]
    assert all(s.response.value is None for s in standards)
    status = window.statusBar().currentMessage()
    assert "row 1, response: '1.234,5' has thousands separators" in status
    # the model marks the cell with the same reason
    tip = window.standards_model.data(window.standards_model.index(0, sm.RESP), sm.Qt.ItemDataRole.ToolTipRole)
    assert "thousands separators" in str(tip)
    verdict = window.verdict.text()
    assert "none given" not in verdict
    assert "none of the 12 standards entered can be used in the fit" in verdict
    # in the words of the cell's reason (thousands separators), not a bare "is not a number"
    assert ("STD-1: response '1.234,5' has thousands separators, so it was not read as a number" in verdict
            and "and 9 more" in verdict)
    # the line of what needs attention names them, their rows and the reason, in one line, not twelve
    attention = window.attention.text()
    assert window.attention.isVisible() and attention.count("⚠") == 1
    assert ("12 standards of analyte 1 are not in the fit for want of a usable value: STD-1 (row 1): response "
            "'1.234,5' has thousands separators, so it was not read as a number;") in attention
    assert "and 9 more, each marked in its row; 12 of them count as not passing" in attention


def test_sample_responses_with_thousands_separators_are_read(make_window, qtbot, answer_dialogs) -> None:
    window = make_window()
    type_paste(window, qtbot, window.standards_view, GROUPED)
    window.left_tabs.setCurrentIndex(1)
    # two replicate rows of one unknown and one single unknown, as the sheet writes them
    type_paste(window, qtbot, window.samples_view, "Sample\tArea\nU-1\t7.410,6\nU-1\t7.388,2\nU-2\t30.115,0\n")
    samples = window.session.run.samples
    assert [s.id for s in samples] == ["U-1", "U-2"]
    assert [m.response.value for m in samples[0].measurements] == [7410.6, 7388.2]
    assert [m.response.text.strip() for m in samples[0].measurements] == ["7.410,6", "7.388,2"]
    assert samples[1].measurements[0].response.value == 30115.0
    assert "need attention" not in window.statusBar().currentMessage()
