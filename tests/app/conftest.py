"""Fixtures for the app tests: a main window on a temporary settings file and recovery folder."""

from __future__ import annotations

import os
from collections.abc import Iterator
from contextlib import contextmanager
from pathlib import Path

import pytest

os.environ["QT_QPA_PLATFORM"] = "offscreen"

from PySide6.QtCore import QSettings  # noqa: E402

ROOT = Path(__file__).resolve().parents[2]
DEMOS = sorted((ROOT / "sample_runs").glob("*.json"))


@pytest.fixture(autouse=True)
def unanswered_dialogs_fail(monkeypatch):
    """A dialog that waits for an answer the test does not give fails the test instead of hanging it
    (tests answer dialogs with ``answer_dialogs`` or by patching that dialog's ``exec``)."""
    from PySide6.QtWidgets import QDialog, QFileDialog, QInputDialog, QMessageBox

    def waits(what: str):  # type: ignore[no-untyped-def]
        def refuse(*args, **kwargs):  # type: ignore[no-untyped-def]
            shown = args[0].windowTitle() if args and hasattr(args[0], "windowTitle") and what == "dialog" else args[1:3]
            raise AssertionError(f"{what} {shown!r} waits for an answer this test does not give")
        return refuse

    monkeypatch.setattr(QDialog, "exec", waits("dialog"))
    for name in ("question", "warning", "information", "critical", "about"):
        monkeypatch.setattr(QMessageBox, name, waits(f"message box ({name})"))
    for name in ("getOpenFileName", "getSaveFileName", "getExistingDirectory"):
        monkeypatch.setattr(QFileDialog, name, waits(f"file dialog ({name})"))
    monkeypatch.setattr(QInputDialog, "getText", waits("input dialog"))


@pytest.fixture
def settings(tmp_path) -> QSettings:
    values = QSettings(str(tmp_path / "settings.ini"), QSettings.Format.IniFormat)
    values.setValue("input/decimal_mark", ".")  # the tests type decimal points, whatever the machine's locale
    values.setValue("identity/name", "Robin Example")  # an invented analyst, recorded in every audit entry
    values.setValue("identity/id", "QA-0042")
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


@pytest.fixture
def import_csv(qtbot, tmp_path, monkeypatch):
    """Import tables into a window as an analyst does: ``import_csv(window, standards=TEXT, samples=TEXT)``
    writes each table as ``KIND.csv`` with CRLF line ends, as a spreadsheet saves it, imports it through
    the window's import command with its preview accepted as shown, in the order given, and waits until
    the run with all of them is analysed and shown."""
    from curvewright.app import main_window

    monkeypatch.setattr(main_window.ImportDialog, "exec", lambda self: main_window.ImportDialog.DialogCode.Accepted)

    def imported(window, **tables: str) -> None:  # type: ignore[no-untyped-def]
        for kind, text in tables.items():
            path = tmp_path / f"{kind}.csv"
            path.write_bytes(text.replace("\n", "\r\n").encode())
            assert window.import_table(kind, path=str(path))
            settle(qtbot, window)
        window.session.wait_for_analysis()
        settle(qtbot, window)

    return imported


@pytest.fixture
def save_in_tmp_path(monkeypatch, tmp_path) -> Path:
    """Every "save as" file dialog answered with the name it suggests, in ``tmp_path`` (returned), as an
    analyst who accepts the suggested name in that folder."""
    from PySide6.QtWidgets import QFileDialog

    monkeypatch.setattr(QFileDialog, "getSaveFileName",
                        lambda parent, caption, suggested="", *a, **k: (str(tmp_path / Path(suggested).name), ""))
    return tmp_path


def settle(qtbot, window) -> None:
    """Wait until the latest edit has been analysed and shown."""
    session = window.session

    def analysed() -> bool:
        return not session.analysis_pending and session.result is not None and session.result.run is session.run

    qtbot.waitUntil(analysed, timeout=10000)
    qtbot.wait(20)
    # an edit committed while the events were processed (an editor's commit that arrives late on a busy
    # machine) is analysed too, on the worker thread when the analysis takes more than a frame
    qtbot.waitUntil(analysed, timeout=10000)


def close_unasked(window) -> None:  # type: ignore[no-untyped-def]
    """Close a window once its analysis is done, as if its work had been saved (no question asked)."""
    window.session.wait_for_analysis()
    window.session.undo_stack.setClean()
    window.session._unsaved_records = False
    window.close()
    window.deleteLater()


class DialogAnswers(dict):
    """How the dialogs are answered, and what each one showed (``seen``: title and prompt)."""

    def __init__(self) -> None:
        super().__init__(reason="bench note 14: vial cracked", question=None, choice=None, paste=None)
        self.seen: list[tuple[str, str]] = []
        self.paste_dialogs: list = []

    @property
    def last_title(self) -> str:
        return self.seen[-1][0] if self.seen else ""


@pytest.fixture
def answer_dialogs(monkeypatch):
    """Answer reason dialogs, questions and warnings without a person at the keyboard, and record what
    each showed. By default a reason dialog gets the last listed reason ("other") and the details text;
    ``answers["choice"] = i`` picks list item i instead; ``answers["reason"] = None`` cancels it. A paste
    preview is accepted as shown, after ``answers["paste"](dialog)`` when that is set."""
    from PySide6.QtWidgets import QDialog, QLabel, QMessageBox

    from curvewright.app import dialogs, paste_dialog

    answers = DialogAnswers()
    answers["question"] = QMessageBox.StandardButton.Yes

    def exec_reason(self) -> int:
        prompt = " ".join(label.text() for label in self.findChildren(QLabel))
        answers.seen.append((self.windowTitle(), prompt))
        if answers["reason"] is None:
            return QDialog.DialogCode.Rejected
        self.details.setPlainText(answers["reason"])
        if self.choices.count():
            chosen = answers["choice"]
            self.choices.setCurrentIndex(self.choices.count() - 1 if chosen is None else chosen)
        assert self.buttons.button(self.buttons.StandardButton.Ok).isEnabled(), "OK is disabled: no reason given"
        return QDialog.DialogCode.Accepted

    def message(kind):  # type: ignore[no-untyped-def]
        def show(parent, title, text, *args, **kwargs):  # type: ignore[no-untyped-def]
            answers.seen.append((title, text))
            return answers["question"] if kind == "question" else QMessageBox.StandardButton.Ok
        return show

    def exec_paste(self) -> int:
        answers.seen.append((self.windowTitle(), self.summary.text()))
        answers.paste_dialogs.append(self)
        if answers["paste"] is not None:
            answers["paste"](self)
        return QDialog.DialogCode.Accepted

    monkeypatch.setattr(dialogs.ReasonDialog, "exec", exec_reason)
    monkeypatch.setattr(paste_dialog.PasteDialog, "exec", exec_paste)
    for kind in ("question", "warning", "information", "critical"):
        monkeypatch.setattr(QMessageBox, kind, message(kind))
    monkeypatch.setattr(QMessageBox, "about", lambda parent, title, text: answers.seen.append((title, text)))
    return answers


def type_keys(qtbot, widget, key, modifiers=None) -> None:  # type: ignore[no-untyped-def]
    """Type a key combination into ``widget`` as the analyst does, then let go of every modifier key
    (the test driver can leave Ctrl or Shift held in Qt's record, which turns the next click on a
    table row into a toggle)."""
    from PySide6.QtCore import Qt

    if modifiers is None:
        qtbot.keyClick(widget, key)
    else:
        qtbot.keyClick(widget, key, modifiers)
    for held in (Qt.Key.Key_Control, Qt.Key.Key_Shift, Qt.Key.Key_Alt):
        qtbot.keyRelease(widget, held, Qt.KeyboardModifier.NoModifier)


def paste_from_menu(qtbot, window, view, text: str) -> None:  # type: ignore[no-untyped-def]
    """Put ``text`` on the clipboard and paste it into ``view`` with Edit → Paste, as the analyst does;
    then wait until the run is analysed and shown."""
    from PySide6.QtGui import QGuiApplication

    view.setFocus()
    QGuiApplication.clipboard().setText(text)
    window.actions_by_name["paste"].trigger()
    settle(qtbot, window)


def paste_standards_and_samples(qtbot, window, standards: str, samples: str) -> dict[str, int]:  # type: ignore[no-untyped-def]
    """Paste ``standards`` into the Standards table and ``samples`` into the Samples table with Edit → Paste,
    as the analyst does in a new run; the results table's row of each sample, by sample id, in its order."""
    from curvewright.app import results_model as rm

    paste_from_menu(qtbot, window, window.standards_view, standards)
    window.left_tabs.setCurrentIndex(1)
    paste_from_menu(qtbot, window, window.samples_view, samples)
    results = window.results_model
    return {results.index(r, rm.SAMPLE).data(): r for r in range(results.rowCount())}


@pytest.fixture
def new_run_pasted(make_window, qtbot, answer_dialogs, save_in_tmp_path):  # type: ignore[no-untyped-def]
    """A new run's window with blocks pasted as the analyst pastes them (:func:`paste_standards_and_samples`),
    its dialogs answered and its exports saved in ``tmp_path``: call it with the standards' and the samples'
    blocks; the window and the results table's row of each sample, by sample id."""
    def pasted(standards: str, samples: str):  # type: ignore[no-untyped-def]
        window = make_window(None)
        return window, paste_standards_and_samples(qtbot, window, standards, samples)

    return pasted


def exported_sheets(qtbot, window, folder: Path, *names: str) -> dict[str, list[list]]:  # type: ignore[no-untyped-def]
    """Export the results workbook with File → Export results as XLSX (saved in ``folder``) and read the sheets ``names``, row by row."""
    import openpyxl

    window.actions_by_name["export-xlsx"].trigger()
    settle(qtbot, window)
    workbook = openpyxl.load_workbook(next(folder.glob("*.xlsx")), read_only=True)
    try:
        return {name: [list(row) for row in workbook[name].iter_rows(values_only=True)] for name in names}
    finally:
        workbook.close()


def exported_record_text(qtbot, window, folder: Path) -> str:  # type: ignore[no-untyped-def]
    """Export the calibration record with File → Export calibration record (saved in ``folder``); the text of its pages."""
    from tests.printed import printed_text

    window.actions_by_name["export-record"].trigger()
    settle(qtbot, window)
    return printed_text(next(folder.glob("*.pdf")))


def show_evidence(window):  # type: ignore[no-untyped-def]
    """Show the Model evidence tab of ``window``, as the analyst does; its panel."""
    window.bottom_tabs.setCurrentWidget(window.evidence_panel)
    return window.evidence_panel


def recommended_marks(panel) -> list[str]:  # type: ignore[no-untyped-def]
    """The Recommended column of the model evidence table, row by row."""
    return [panel.table.item(r, 9).text() for r in range(panel.table.rowCount())]


def use_from_evidence(qtbot, window, answer_dialogs, model: str, weighting: str, reason: str):  # type: ignore[no-untyped-def]
    """Select the candidate ``model`` × ``weighting`` in the model evidence table, click its Use button and
    give ``reason`` when asked; the reason dialog's prompt and the audit entry it made."""
    from PySide6.QtCore import Qt

    panel = window.evidence_panel
    panel.select(model, weighting)
    answer_dialogs["reason"] = reason
    qtbot.mouseClick(panel.use_button, Qt.MouseButton.LeftButton)
    settle(qtbot, window)
    return answer_dialogs.seen[-1][1], window.session.run.audit[-1]


def open_cell_editor(qtbot, window, view, index):  # type: ignore[no-untyped-def]
    """Click the cell at ``index`` of ``view`` in ``window`` and open its editor with F2, as the analyst
    does; the editor, which has the keyboard focus."""
    from PySide6.QtCore import Qt
    from PySide6.QtWidgets import QApplication

    window.activateWindow()
    qtbot.waitUntil(lambda: QApplication.activeWindow() is window)
    view.scrollTo(index)
    qtbot.mouseClick(view.viewport(), Qt.MouseButton.LeftButton, pos=view.visualRect(index).center())
    assert view.currentIndex() == index
    type_keys(qtbot, view, Qt.Key.Key_F2)
    editor = QApplication.focusWidget()
    assert editor is not view and editor.parent() is view.viewport(), "F2 did not open the cell's editor"
    return editor


class InMemoryRecord:
    """A QPdfWriter set up as the record's (``report_pdf.record_writer``: A4, no page margins, 300 dpi)
    writing into memory; :meth:`pdf` is what it wrote once a painter on it has ended."""

    def __init__(self) -> None:
        from PySide6.QtCore import QBuffer, QByteArray, QIODevice

        from curvewright.app.report_pdf import record_writer

        self.data = QByteArray()
        self.buffer = QBuffer(self.data)
        self.buffer.open(QIODevice.OpenModeFlag.WriteOnly)
        self.writer = record_writer(self.buffer)

    def pdf(self) -> bytes:
        return bytes(self.data.data())


@contextmanager
def in_memory_record() -> Iterator[InMemoryRecord]:
    """An :class:`InMemoryRecord` for the ``with`` block; the writer is let go and the buffer closed after
    it (the writer before its buffer)."""
    record = InMemoryRecord()
    try:
        yield record
    finally:
        del record.writer
        record.buffer.close()
