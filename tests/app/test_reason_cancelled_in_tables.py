"""A raw value typed over in the standards or the samples table, as a person does it (the cell clicked,
F2, the new value typed, Enter), whose reason-for-change question is cancelled: both tables keep the
run as it was, say why in the status bar in the same words, and show the value as it was entered, not
the one typed (offscreen, on a copy of the nitrate demo run). In the samples table a cell refused
earlier (an id emptied) shows its entered value again too."""

from __future__ import annotations

import shutil

import pytest
from PySide6.QtCore import Qt

from curvewright.app import samples_model as smp
from curvewright.app import standards_model as sm
from curvewright.app.table_view import NO_REASON_GIVEN
from tests.app.conftest import DEMOS, open_cell_editor, settle, type_keys

NITRATE = next(p for p in DEMOS if p.name.startswith("nitrate"))


@pytest.mark.parametrize("table", ["standards", "samples"])
def test_a_change_whose_reason_is_cancelled_changes_nothing_and_says_why(
        make_window, qtbot, tmp_path, answer_dialogs, table) -> None:
    path = tmp_path / "run.json"
    shutil.copy(NITRATE, path)
    window = make_window(path)
    window.left_tabs.setCurrentIndex(0 if table == "standards" else 1)
    view = window.standards_view if table == "standards" else window.samples_view
    model = view.model()
    index = model.index(1, sm.RESP if table == "standards" else smp.RESPONSES)
    shown = model.data(index, Qt.ItemDataRole.DisplayRole)
    run, trail = window.session.run, len(window.session.run.audit)

    if table == "samples":  # an id emptied: refused, and the cell keeps what was typed (nothing)
        first_id = model.index(0, smp.ID)
        editor = open_cell_editor(qtbot, window, view, first_id)
        editor.selectAll()
        type_keys(qtbot, editor, Qt.Key.Key_Backspace)
        type_keys(qtbot, editor, Qt.Key.Key_Return)
        settle(qtbot, window)
        assert model.data(first_id, Qt.ItemDataRole.DisplayRole) == "" and window.session.run is run

    answer_dialogs["reason"] = None  # the analyst cancels the question
    editor = open_cell_editor(qtbot, window, view, index)
    editor.selectAll()
    qtbot.keyClicks(editor, "0.4321")
    type_keys(qtbot, editor, Qt.Key.Key_Return)
    settle(qtbot, window)

    assert answer_dialogs.last_title == "Why does this value change?"
    assert window.session.run is run and len(window.session.run.audit) == trail
    assert window.statusBar().currentMessage() == NO_REASON_GIVEN == "Not changed: a changed value needs a reason."
    assert model.data(index, Qt.ItemDataRole.DisplayRole) == shown != "0.4321"
    assert not window.session.undo_stack.canUndo()
    if table == "samples":
        assert model.data(first_id, Qt.ItemDataRole.DisplayRole) == run.samples[0].id != ""
