"""The run's file changed on disk while it is open: the app notices, offers to reload, and a save
never overwrites someone else's changes without asking. Unsaved work that cannot be protected is
said once."""

from __future__ import annotations

import shutil

from PySide6.QtWidgets import QFileDialog, QMessageBox

from curvewright.app import standards_model as sm
from curvewright.io.run_document import open_run
from tests.app.conftest import DEMOS, settle
from tests.cli_runs import run_cli


def record_an_export_from_another_process(path, tmp_path) -> None:
    """What a colleague's command does to the file: append an export entry to its audit trail."""
    done = run_cli("quantify", str(path), "--export", str(tmp_path / "colleague.xlsx"), "--record")
    assert done.returncode in (0, 1), done.stderr


def edited_demo_copy(make_window, qtbot, tmp_path):  # type: ignore[no-untyped-def]
    """A copy of the first demo run (``tmp_path/run.json``) open in a window, standard 4's response typed
    over and not saved: the copy and the window."""
    path = tmp_path / "run.json"
    shutil.copy(DEMOS[0], path)
    window = make_window(path)
    model = window.standards_model
    assert model.setData(model.index(3, sm.RESP), "0.2037")
    settle(qtbot, window)
    return path, window


def test_a_file_changed_on_disk_is_offered_for_reload(make_window, qtbot, tmp_path, answer_dialogs) -> None:
    path = tmp_path / "run.json"
    shutil.copy(DEMOS[0], path)
    window = make_window(path)
    before = len(window.session.run.audit)
    record_an_export_from_another_process(path, tmp_path)
    assert window.check_file_on_disk()  # what the window does when it becomes active again
    settle(qtbot, window)
    title, text = answer_dialogs.seen[-1]
    assert title == "The file was changed on disk" and "Reload it" in text
    assert len(window.session.run.audit) == before + 1
    assert window.session.run.audit[-1].action == "export_written"
    assert not window.check_file_on_disk()  # nothing changed since the reload: nothing asked


def test_a_save_never_overwrites_entries_recorded_on_disk(make_window, qtbot, tmp_path, monkeypatch,
                                                         answer_dialogs) -> None:
    path, window = edited_demo_copy(make_window, qtbot, tmp_path)
    record_an_export_from_another_process(path, tmp_path)
    theirs = path.read_bytes()
    answer_dialogs["question"] = QMessageBox.StandardButton.No  # keep working on my version
    assert not window.check_file_on_disk()
    answer_dialogs["question"] = QMessageBox.StandardButton.Cancel  # then save: refused, and cancelled
    window.actions_by_name["save"].trigger()
    assert path.read_bytes() == theirs and answer_dialogs.seen[-1][0] == "The file records more than this run"
    assert "1 audit trail entry (export_written)" in answer_dialogs.seen[-1][1]  # their entry is never dropped
    answer_dialogs["question"] = QMessageBox.StandardButton.Save  # refused again: save mine under another name
    monkeypatch.setattr(QFileDialog, "getSaveFileName", lambda *a, **k: (str(tmp_path / "mine.json"), ""))
    window.actions_by_name["save"].trigger()
    assert path.read_bytes() == theirs and open_run(tmp_path / "mine.json").run == window.session.run


def test_a_file_changed_outside_curvewright_is_overwritten_only_when_asked(make_window, qtbot, tmp_path,
                                                                          answer_dialogs) -> None:
    """A change that records nothing (the same document laid out anew by a text editor) may be
    overwritten, after a question; its version is kept as .bak."""
    path, window = edited_demo_copy(make_window, qtbot, tmp_path)
    theirs = path.read_bytes().replace(b"\n", b"\r\n")
    path.write_bytes(theirs)
    answer_dialogs["question"] = QMessageBox.StandardButton.Cancel
    window.actions_by_name["save"].trigger()
    assert path.read_bytes() == theirs and answer_dialogs.seen[-1][0] == "The file was changed on disk"
    answer_dialogs["question"] = QMessageBox.StandardButton.Save  # asked again, and overwritten this time
    window.actions_by_name["save"].trigger()
    assert open_run(path).run == window.session.run
    assert path.with_name(path.name + ".bak").read_bytes() == theirs  # their version kept beside it


def test_unprotected_unsaved_work_is_said_once(make_window, qtbot, answer_dialogs) -> None:
    window = make_window(DEMOS[0])
    text = "Unsaved changes cannot be kept for recovery after a crash: the folder is read-only."
    window.session.recovery_failed.emit(text)
    assert window.statusBar().currentMessage() == text
    assert answer_dialogs.seen[-1] == ("Unsaved work is not protected", text)
