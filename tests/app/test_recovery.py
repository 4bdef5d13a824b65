"""Crash recovery as the analyst meets it: saved work is never offered again, the recovery file
knows which document it belongs to, and a recovery folder that cannot be written is reported."""

from __future__ import annotations

import json
import shutil

from curvewright.app import standards_model as sm
from curvewright.io.run_document import dumps_run, open_run
from tests.app.conftest import ROOT, close_unasked, settle

NITRATE = ROOT / "sample_runs" / "nitrate_water_linear.json"


def recovery_files(folder) -> list[str]:  # type: ignore[no-untyped-def]
    return sorted(p.name for p in folder.iterdir()) if folder.exists() else []


def edit_a_response(window, qtbot, text: str = "0.1111") -> None:  # type: ignore[no-untyped-def]
    model = window.standards_model
    model.setData(model.index(3, sm.RESP), text)
    settle(qtbot, window)
    window.session.flush_recovery()


def test_save_as_of_a_new_run_leaves_nothing_to_recover(make_window, qtbot, tmp_path, settings, monkeypatch,
                                                         answer_dialogs) -> None:
    from PySide6.QtWidgets import QFileDialog, QMessageBox

    from curvewright.app.main import build_window

    window = make_window()  # a new run, never saved
    assert window.standards_view.paste("1\t0.101\n2\t0.199\n4\t0.405\n") == 3
    settle(qtbot, window)
    window.session.flush_recovery()
    folder = tmp_path / "recovery"
    assert [n for n in recovery_files(folder) if n.endswith(".json")]  # the unsaved run is kept for recovery
    target = tmp_path / "first batch.json"
    monkeypatch.setattr(QFileDialog, "getSaveFileName", lambda *a, **k: (str(target), "Curvewright runs (*.json)"))
    assert window.save_as()
    assert open_run(target).run == window.session.run
    assert recovery_files(folder) == []
    asked = []
    monkeypatch.setattr(QMessageBox, "question", lambda *a, **k: asked.append(a) or QMessageBox.StandardButton.Yes)
    restarted = build_window(None, settings=settings, recovery_folder=folder)
    assert asked == [] and restarted.session.path is None  # nothing offered as unsaved work
    close_unasked(restarted)


def test_the_recovery_file_names_its_document_by_itself(make_window, qtbot, tmp_path, settings, answer_dialogs) -> None:
    from curvewright.app.main import build_window

    document = tmp_path / "nitrate.json"
    shutil.copyfile(NITRATE, document)
    window = make_window(document)
    edit_a_response(window, qtbot)
    folder = tmp_path / "recovery"
    recovery = window.session.recovery_path()
    assert recovery.exists() and not recovery.with_suffix(".source").exists()  # one file, nothing beside it to lose
    assert json.loads(recovery.read_text(encoding="utf-8"))["source"] == str(document)
    window.session.undo_stack.setClean()  # the crash: the window is gone, the recovery file stays
    restored = build_window(None, settings=settings, recovery_folder=folder)
    settle(qtbot, restored)
    assert restored.session.path == document
    assert restored.session.run.analyte("nitrate-N").standards[3].response.text == "0.1111"
    close_unasked(restored)


def test_a_recovery_file_of_the_earlier_kind_is_still_offered(qtbot, tmp_path, settings, answer_dialogs) -> None:
    from curvewright.app.main import build_window

    folder = tmp_path / "recovery"
    folder.mkdir()
    run = open_run(NITRATE).run
    (folder / "recovery-0123456789abcdef.json").write_text(dumps_run(run), encoding="utf-8")
    (folder / "recovery-0123456789abcdef.source").write_text(str(NITRATE), encoding="utf-8")
    restored = build_window(None, settings=settings, recovery_folder=folder)
    settle(qtbot, restored)
    assert restored.session.path == NITRATE and restored.session.run.audit[-1].action == "recovered_after_crash"
    assert "recovery-0123456789abcdef.source" not in recovery_files(folder)  # offered once, then removed
    close_unasked(restored)


def test_a_damaged_recovery_file_falls_back_to_its_backup(qtbot, tmp_path, settings, answer_dialogs) -> None:
    from curvewright.app.main import build_window
    from curvewright.io.run_document import save_recovery

    folder = tmp_path / "recovery"
    folder.mkdir()
    recovery = folder / "recovery-0123456789abcdef.json"
    save_recovery(open_run(NITRATE).run, recovery, NITRATE)
    save_recovery(open_run(NITRATE).run, recovery, NITRATE)  # now with a backup beside it
    recovery.write_text('{"format": "curvewright-recovery", "sch', encoding="utf-8")  # damaged by hand
    restored = build_window(None, settings=settings, recovery_folder=folder)
    settle(qtbot, restored)
    assert restored.session.path == NITRATE
    close_unasked(restored)


def test_a_recovery_folder_that_cannot_be_written_is_reported_once(qtbot, tmp_path, settings, answer_dialogs) -> None:
    from curvewright.app.main import build_window

    blocker = tmp_path / "not a folder"
    blocker.write_text("a file where the recovery folder should be", encoding="utf-8")
    window = build_window(NITRATE, settings=settings, recovery_folder=blocker / "recovery")
    window.show()
    settle(qtbot, window)
    warnings: list[str] = []
    window.session.recovery_failed.connect(warnings.append)
    edit_a_response(window, qtbot, "0.1111")
    qtbot.waitUntil(lambda: len(warnings) == 1, timeout=5000)
    edit_a_response(window, qtbot, "0.1112")
    qtbot.wait(200)
    assert len(warnings) == 1
    assert "cannot be kept for recovery" in warnings[0] and str(blocker) in warnings[0]
    assert "Save the run to keep your changes" in warnings[0]
    close_unasked(window)


def test_edits_made_while_a_recovery_write_is_under_way_are_written_once_together(make_window, qtbot, tmp_path,
                                                                                  monkeypatch, answer_dialogs) -> None:  # type: ignore[no-untyped-def]
    """A burst of typed edits does not queue one whole-run write per edit: while a write is under way
    the later edits wait, and the latest run is written once as soon as it ends (nothing typed is
    lost: the recovery file ends holding the last edit)."""
    import threading

    from curvewright.app import session as session_module
    from curvewright.io.run_document import open_recovery

    window = make_window(shutil.copy(NITRATE, tmp_path / "nitrate.json"))
    session = window.session
    release = threading.Event()
    written = []
    save_recovery = session_module.save_recovery

    def slow_save(run, path, source):  # type: ignore[no-untyped-def]
        written.append(run)
        release.wait(10)
        save_recovery(run, path, source)

    monkeypatch.setattr(session_module, "save_recovery", slow_save)
    model = window.standards_model
    model.setData(model.index(3, sm.RESP), "0.1111")
    settle(qtbot, window)
    session.write_recovery()  # the first write starts and is held up
    qtbot.waitUntil(lambda: len(written) == 1)
    for text in ("0.1112", "0.1113", "0.1114"):
        model.setData(model.index(3, sm.RESP), text)
        settle(qtbot, window)
        session.write_recovery()
    assert len(written) == 1  # nothing queued behind the write under way
    release.set()
    qtbot.waitUntil(lambda: len(written) == 2 and session._recovery_writing is None, timeout=10000)
    session.flush_recovery()
    assert written[1] is session.run  # the latest run, written once
    recovered, _ = open_recovery(session.recovery_path())
    assert recovered.run == session.run
    assert "0.1114" in [s.response.text for s in recovered.run.analytes[0].standards]
    close_unasked(window)
