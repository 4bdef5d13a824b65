"""Two windows on one run's file: a save from the window that read the file before it was approved
elsewhere never drops the approval. The save is refused with what the file records; the user saves
this run under another name, or opens the file again."""

from __future__ import annotations

import shutil

from PySide6.QtWidgets import QDialog, QFileDialog, QMessageBox

from curvewright.app import dialogs
from curvewright.app import standards_model as sm
from curvewright.io.run_document import open_run
from tests.app.conftest import DEMOS, settle


def approved_in_a_second_window(make_window, qtbot, monkeypatch, path):  # type: ignore[no-untyped-def]
    """Window 1 has the file open and edits a response; window 2 opens the same file, approves it
    and saves. Returns window 1 and the bytes of the approved file."""
    first = make_window(path)
    second = make_window(path)
    monkeypatch.setattr(dialogs.SignDialog, "exec", lambda self: QDialog.DialogCode.Accepted)
    second.actions_by_name["sign-approver"].trigger()
    settle(qtbot, second)
    second.actions_by_name["save"].trigger()
    assert [s.role for s in open_run(path).run.signatures][-1:] == ["approver"]
    model = first.standards_model
    assert model.setData(model.index(3, sm.RESP), "0.2037")
    settle(qtbot, first)
    return first, path.read_bytes()


def test_an_out_of_date_window_saves_under_another_name_and_the_approval_stays(
        make_window, qtbot, tmp_path, monkeypatch, answer_dialogs) -> None:
    path = tmp_path / "run.json"
    shutil.copy(DEMOS[0], path)
    first, approved = approved_in_a_second_window(make_window, qtbot, monkeypatch, path)
    other = tmp_path / "my version.json"
    monkeypatch.setattr(QFileDialog, "getSaveFileName", lambda *a, **k: (str(other), ""))
    answer_dialogs["question"] = QMessageBox.StandardButton.Save  # "save this run under another name"
    first.actions_by_name["save"].trigger()
    title, text = answer_dialogs.seen[-1]
    assert title == "The file records more than this run"
    assert "the approver signature of Robin Example" in text and "under another name" in text
    assert path.read_bytes() == approved  # the approved file is untouched
    assert open_run(other).run == first.session.run and first.session.path == other
    assert not open_run(other).run.signatures  # my version was never approved


def test_an_out_of_date_window_opens_the_approved_file_again(
        make_window, qtbot, tmp_path, monkeypatch, answer_dialogs) -> None:
    path = tmp_path / "run.json"
    shutil.copy(DEMOS[0], path)
    first, approved = approved_in_a_second_window(make_window, qtbot, monkeypatch, path)
    answer_dialogs["question"] = QMessageBox.StandardButton.Open  # "open the file again as it is now"
    first.actions_by_name["save"].trigger()
    settle(qtbot, first)
    assert path.read_bytes() == approved
    assert first.session.run.approval is not None and not first.session.dirty


def test_the_out_of_date_window_cannot_overwrite_even_when_asked_to(
        make_window, qtbot, tmp_path, monkeypatch, answer_dialogs) -> None:
    """Cancel leaves the file and the window as they were; nothing offers to overwrite the approval."""
    path = tmp_path / "run.json"
    shutil.copy(DEMOS[0], path)
    first, approved = approved_in_a_second_window(make_window, qtbot, monkeypatch, path)
    answer_dialogs["question"] = QMessageBox.StandardButton.Cancel
    first.actions_by_name["save"].trigger()
    assert path.read_bytes() == approved and first.session.dirty
    assert not any("Overwrite" in text for _title, text in answer_dialogs.seen)


def test_choosing_the_same_name_again_is_refused_once(make_window, qtbot, tmp_path, monkeypatch,
                                                       answer_dialogs) -> None:
    """"Save under another name" answered with the file's own name: said once, nothing written."""
    path = tmp_path / "run.json"
    shutil.copy(DEMOS[0], path)
    first, approved = approved_in_a_second_window(make_window, qtbot, monkeypatch, path)
    monkeypatch.setattr(QFileDialog, "getSaveFileName", lambda *a, **k: (str(path), ""))
    answer_dialogs["question"] = QMessageBox.StandardButton.Save
    first.actions_by_name["save"].trigger()
    assert answer_dialogs.seen[-1] == ("Not saved", f"{path} is the file that records more than this run; it was left "
                                       "as it is. Save this run under another name, or open the file again.")
    assert [title for title, _ in answer_dialogs.seen].count("The file records more than this run") == 1
    assert path.read_bytes() == approved and first.session.dirty
