"""A value typed into a table cell but not yet entered with Enter is entered, as Enter would enter it,
before a command reads or writes the run: the analyst clicks the cell, types, and then chooses File →
Save from the menu (or presses its shortcut), exports the workbook, switches analyte or quits. The reason
for the change is asked as for Enter; the saved file holds the typed value and its audit entry, and
the editor is closed. When the analyst cancels the reason, the command goes on without the edit and the
cell shows the value as it was (pytest-qt, offscreen)."""

from __future__ import annotations

import shutil

from PySide6.QtCore import Qt
from PySide6.QtGui import QKeySequence
from PySide6.QtWidgets import QAbstractItemView, QApplication, QFileDialog

from curvewright.app import standards_model as sm
from curvewright.io.run_document import open_run
from tests.app.conftest import DEMOS, settle

NITRATE = next(p for p in DEMOS if "nitrate" in p.stem)
VOLATILES = next(p for p in DEMOS if "volatiles" in p.stem)
TARGET = "N-L1-3"
TYPED = "0.0999"


def _window_on_copy(make_window, tmp_path):  # type: ignore[no-untyped-def]
    path = tmp_path / "nitrate run.json"
    shutil.copyfile(NITRATE, path)
    return make_window(path), path


def _type_without_enter(qtbot, window, standard_id: str, typed: str):  # type: ignore[no-untyped-def]
    """Click the standard's Response cell and type over it, leaving the editor open (no Enter)."""
    window.left_tabs.setCurrentIndex(0)
    model, table = window.standards_model, window.standards_view
    row = next(i for i, s in enumerate(model.standards) if s.id == standard_id)
    index = model.index(row, sm.RESP)
    table.scrollTo(index)
    qtbot.mouseClick(table.viewport(), Qt.MouseButton.LeftButton, pos=table.visualRect(index).center())
    assert table.currentIndex() == index
    qtbot.keyClicks(table, typed[0])
    editor = QApplication.focusWidget()
    assert editor is not table and editor.parent() is table.viewport(), "typing did not open the cell's editor"
    qtbot.keyClicks(editor, typed[1:])
    assert editor.text() == typed and table.state() == QAbstractItemView.State.EditingState
    return table, index, editor


def _saved_response(path, analyte: str, standard_id: str) -> str:  # type: ignore[no-untyped-def]
    return open_run(path).run.analyte(analyte).standard(standard_id).response.text


def test_save_from_the_menu_enters_the_value_left_in_the_open_editor(
        make_window, qtbot, tmp_path, answer_dialogs) -> None:
    window, path = _window_on_copy(make_window, tmp_path)
    analyte = window.current_analyte()
    old = window.session.run.analyte(analyte).standard(TARGET).response.text
    assert old != TYPED
    table, index, _editor = _type_without_enter(qtbot, window, TARGET, TYPED)

    window.actions_by_name["save"].trigger()

    # the reason was asked as Enter asks it, and the value went into the run, the file and the trail
    assert [title for title, _ in answer_dialogs.seen] == ["Why does this value change?"]
    run = window.session.run
    assert run.analyte(analyte).standard(TARGET).response.text == TYPED
    assert _saved_response(path, analyte, TARGET) == TYPED
    saved = open_run(path).run
    entry = saved.audit[-1]
    assert entry.action == "value_edited"
    assert entry.details["changes"] == [{"standard": TARGET, "field": "response", "old": old, "new": TYPED}]
    assert entry.details["reason"].endswith(answer_dialogs["reason"])
    assert not window.session.dirty
    # the editor is closed, the cell shows the value saved
    assert table.state() != QAbstractItemView.State.EditingState
    assert index.data() == TYPED
    settle(qtbot, window)


def test_save_by_its_shortcut_enters_the_value_left_in_the_open_editor(
        make_window, qtbot, tmp_path, answer_dialogs) -> None:
    window, path = _window_on_copy(make_window, tmp_path)
    analyte = window.current_analyte()
    table, index, editor = _type_without_enter(qtbot, window, TARGET, TYPED)
    assert window.actions_by_name["save"].shortcut() == QKeySequence(QKeySequence.StandardKey.Save)

    qtbot.keyClick(editor, Qt.Key.Key_S, Qt.KeyboardModifier.ControlModifier)

    qtbot.waitUntil(lambda: not window.session.dirty, timeout=5000)
    assert [title for title, _ in answer_dialogs.seen] == ["Why does this value change?"]
    assert _saved_response(path, analyte, TARGET) == TYPED
    assert open_run(path).run.audit[-1].details["changes"][0]["new"] == TYPED
    assert table.state() != QAbstractItemView.State.EditingState
    settle(qtbot, window)


def test_a_cancelled_reason_saves_without_the_edit_and_keeps_no_typed_text(
        make_window, qtbot, tmp_path, answer_dialogs) -> None:
    window, path = _window_on_copy(make_window, tmp_path)
    analyte = window.current_analyte()
    old = window.session.run.analyte(analyte).standard(TARGET).response.text
    audit_before = len(window.session.run.audit)
    table, index, _editor = _type_without_enter(qtbot, window, TARGET, TYPED)
    answer_dialogs["reason"] = None  # the analyst cancels the reason dialog

    window.actions_by_name["save"].trigger()

    assert [title for title, _ in answer_dialogs.seen] == ["Why does this value change?"]
    assert _saved_response(path, analyte, TARGET) == old
    assert window.session.run.analyte(analyte).standard(TARGET).response.text == old
    assert len(open_run(path).run.audit) == audit_before
    # the typed text is not left in an open editor as if it were saved: the cell shows the old value
    assert table.state() != QAbstractItemView.State.EditingState
    assert index.data() == old
    assert not window.session.dirty
    settle(qtbot, window)


def test_exporting_the_workbook_enters_the_value_left_in_the_open_editor(
        make_window, qtbot, tmp_path, answer_dialogs, monkeypatch) -> None:
    window, _path = _window_on_copy(make_window, tmp_path)
    analyte = window.current_analyte()
    book = tmp_path / "nitrate.xlsx"
    monkeypatch.setattr(QFileDialog, "getSaveFileName", lambda *a, **k: (str(book), ""))
    _type_without_enter(qtbot, window, TARGET, TYPED)

    window.actions_by_name["export-xlsx"].trigger()

    assert book.exists()
    run = window.session.run
    assert run.analyte(analyte).standard(TARGET).response.text == TYPED
    # the edit is recorded before the export, which was made from the run holding it
    actions = [e.action for e in run.audit]
    assert actions[-2:] == ["value_edited", "export_written"]
    from openpyxl import load_workbook

    workbook = load_workbook(book, read_only=True)
    try:
        cells = [str(c.value) for ws in workbook.worksheets for r in ws.iter_rows() for c in r if c.value is not None]
    finally:
        workbook.close()
    assert TYPED in cells
    settle(qtbot, window)


def test_switching_analyte_enters_the_value_into_the_analyte_it_was_typed_for(
        make_window, qtbot, tmp_path, answer_dialogs) -> None:
    path = tmp_path / "volatiles.json"
    shutil.copyfile(VOLATILES, path)
    window = make_window(path)
    first, second = window.session.run.analytes[0].name, window.session.run.analytes[1].name
    assert window.current_analyte() == first
    standard = window.standards_model.standards[1]
    typed = "123456"
    assert standard.response.text != typed
    _type_without_enter(qtbot, window, standard.id, typed)

    window.analyte_box.setCurrentText(second)  # as picking it from the list does

    assert window.current_analyte() == second
    assert window.session.run.analyte(first).standard(standard.id).response.text == typed
    if standard.id in {s.id for s in window.session.run.analyte(second).standards}:
        other = window.session.run.analyte(second).standard(standard.id).response.text
        assert other != typed
    assert [title for title, _ in answer_dialogs.seen] == ["Why does this value change?"]
    assert window.standards_view.state() != QAbstractItemView.State.EditingState
    settle(qtbot, window)


def test_closing_the_window_enters_the_value_then_offers_to_save_it(
        make_window, qtbot, tmp_path, answer_dialogs) -> None:
    from PySide6.QtWidgets import QMessageBox

    window, path = _window_on_copy(make_window, tmp_path)
    analyte = window.current_analyte()
    assert not window.session.dirty
    _type_without_enter(qtbot, window, TARGET, TYPED)
    answer_dialogs["question"] = QMessageBox.StandardButton.Save  # "Save the changes?" → Save

    window.actions_by_name["quit"].trigger()

    titles = [title for title, _ in answer_dialogs.seen]
    assert titles == ["Why does this value change?", "Unsaved changes"], titles
    assert _saved_response(path, analyte, TARGET) == TYPED
    assert not window.isVisible()
