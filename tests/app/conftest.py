"""Fixtures for the app tests: a main window on a temporary settings file and recovery folder."""

from __future__ import annotations

import os
from pathlib import Path

import pytest

os.environ["QT_QPA_PLATFORM"] = "offscreen"

from PySide6.QtCore import QSettings  # noqa: E402

ROOT = Path(__file__).resolve().parents[2]
DEMOS = sorted((ROOT / "sample_runs").glob("*.json"))


@pytest.fixture
def settings(tmp_path) -> QSettings:
    values = QSettings(str(tmp_path / "settings.ini"), QSettings.Format.IniFormat)
    values.setValue("input/decimal_mark", ".")  # the tests type decimal points, whatever the machine's locale
    return values


@pytest.fixture
def make_window(qtbot, tmp_path, settings):
    from curvewright.app.main import build_window

    made = []

    def make(path: Path | None = None):
        window = build_window(path, settings=settings, recovery_folder=tmp_path / "recovery")
        window.resize(1300, 820)
        window.show()
        settle(qtbot, window)
        made.append(window)
        return window

    yield make
    # closed here rather than by qtbot, after their changes are marked saved: closing a window with
    # unsaved changes asks a question, which would wait for an answer nobody gives
    for window in made:
        window.session.wait_for_analysis()
        window.session.undo_stack.setClean()
        window.session._unsaved_records = False
        window.close()
        window.deleteLater()
    qtbot.wait(10)


def settle(qtbot, window) -> None:
    """Wait until the latest edit has been analysed and shown."""
    session = window.session
    qtbot.waitUntil(lambda: session.result is not None and session.result.run is session.run, timeout=10000)
    qtbot.wait(20)


@pytest.fixture
def answer_dialogs(monkeypatch):
    """Answer reason dialogs and questions without a person at the keyboard."""
    from PySide6.QtWidgets import QDialog, QMessageBox

    from curvewright.app import dialogs

    replies = {"reason": "bench note 14: vial cracked", "question": QMessageBox.StandardButton.Yes}

    def exec_reason(self) -> int:
        self.details.setPlainText(replies["reason"])
        if self.choices.count():
            self.choices.setCurrentIndex(self.choices.count() - 1)  # "other (describe below)"
        return QDialog.DialogCode.Accepted

    monkeypatch.setattr(dialogs.ReasonDialog, "exec", exec_reason)
    monkeypatch.setattr(QMessageBox, "question", lambda *a, **k: replies["question"])
    monkeypatch.setattr(QMessageBox, "warning", lambda *a, **k: QMessageBox.StandardButton.Ok)
    return replies
