"""Replicate responses pasted from a sheet that writes a decimal comma and groups thousands with a
point ("7.388,2"), then edited in the samples table as a person does: the cell is clicked, its editor
opened with F2, and Enter pressed (unchanged), or a new value typed over it. The kept text is the cell
as the analyst would type it again (no space left from the "; " that joins replicates); a cell left
as it was is not refused; a typed value with thousands separators is kept as typed, and its cell and
the analysis's account of it give the same reason."""

from __future__ import annotations

from PySide6.QtCore import Qt

from curvewright.app import samples_model as smp
from tests.app.conftest import open_cell_editor, settle, type_keys
from tests.app.test_paste import type_paste
from tests.app.test_paste_grouped import GROUPED

SAMPLES = "Sample\tArea\nU-1\t7.410,6\nU-1\t7.388,2\nU-2\t30.115,0\n"


def open_editor(qtbot, window, row: int):  # type: ignore[no-untyped-def]
    """Click the sample's Responses cell and open its editor with F2, as the analyst does."""
    return open_cell_editor(qtbot, window, window.samples_view, window.samples_model.index(row, smp.RESPONSES))


def test_pasted_replicates_keep_trimmed_text_and_an_unchanged_cell_is_not_refused(
        make_window, settings, qtbot, tmp_path, answer_dialogs) -> None:
    settings.setValue("input/decimal_mark", ",")  # the analyst's own decimal mark, as the sheet writes it
    window = make_window()
    type_paste(window, qtbot, window.standards_view, GROUPED)
    window.left_tabs.setCurrentIndex(1)
    type_paste(window, qtbot, window.samples_view, SAMPLES)
    session = window.session
    u1 = session.run.samples[0]
    assert [m.response.text for m in u1.measurements] == ["7.410,6", "7.388,2"]  # as typed again: trimmed
    assert [m.response.value for m in u1.measurements] == [7410.6, 7388.2]

    # F2 and Enter on the pasted cell, nothing changed: not refused, no reason asked, nothing recorded
    asked, trail, run = len(answer_dialogs.seen), len(session.run.audit), session.run
    editor = open_editor(qtbot, window, 0)
    assert editor.text() == "7.410,6; 7.388,2"
    type_keys(qtbot, editor, Qt.Key.Key_Return)
    settle(qtbot, window)
    assert session.run.samples[0].measurements == u1.measurements
    assert [m.response.value for m in session.run.samples[0].measurements] == [7410.6, 7388.2]
    assert len(answer_dialogs.seen) == asked and len(session.run.audit) == trail and session.run is run
    assert "not used" not in window.statusBar().currentMessage()
    assert window.samples_model.data(window.samples_model.index(0, smp.RESPONSES), Qt.ItemDataRole.ToolTipRole) is None

    # one replicate changed, the other left: the one left keeps its value, the new one is read
    editor = open_editor(qtbot, window, 0)
    editor.selectAll()
    qtbot.keyClicks(editor, "7.410,6; 7401,9")
    type_keys(qtbot, editor, Qt.Key.Key_Return)
    settle(qtbot, window)
    assert [m.response.value for m in session.run.samples[0].measurements] == [7410.6, 7401.9]

    # a new value typed with thousands separators is kept as typed; the cell and the analysis say why alike
    editor = open_editor(qtbot, window, 1)
    editor.selectAll()
    qtbot.keyClicks(editor, "31.002,5")
    type_keys(qtbot, editor, Qt.Key.Key_Return)
    settle(qtbot, window)
    reading = session.run.samples[1].measurements[0].response
    assert reading.text == "31.002,5" and reading.value is None
    tip = window.samples_model.data(window.samples_model.index(1, smp.RESPONSES), Qt.ItemDataRole.ToolTipRole)
    assert tip == "Not used: replicate 1: has thousands separators; remove them or say which separator the table uses"
    notes = session.result.analytes[0].sample_columns.notes[1]
    assert notes == "replicate 1: response '31.002,5' has thousands separators, so it was not read as a number"
    assert "is not a number" not in notes
    window.grab().save(str(tmp_path / "samples-after-edits.png"))


def test_a_pasted_standard_entered_again_unchanged_is_not_refused(
        make_window, settings, qtbot, answer_dialogs) -> None:
    """The same for a standard's response pasted as "1.234,5": F2 and Enter on it changes nothing."""
    from curvewright.app import standards_model as sm

    settings.setValue("input/decimal_mark", ",")
    window = make_window()
    type_paste(window, qtbot, window.standards_view, GROUPED)
    session = window.session
    run, asked = session.run, len(answer_dialogs.seen)
    view, model = window.standards_view, window.standards_model
    index = model.index(0, sm.RESP)
    editor = open_cell_editor(qtbot, window, view, index)
    assert editor.text() == "1.234,5"
    type_keys(qtbot, editor, Qt.Key.Key_Return)
    settle(qtbot, window)
    assert session.run is run and len(answer_dialogs.seen) == asked
    assert session.run.analytes[0].standards[0].response.value == 1234.5
    assert model.data(index, Qt.ItemDataRole.ToolTipRole) is None
    assert "not used" not in window.statusBar().currentMessage()
