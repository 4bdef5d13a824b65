"""The app used as an analyst uses it: every menu item, button and shortcut pressed on every demo run,
with the selection, the clipboard and the dialogs a person would give it.

No slot is called directly here. Menu items are triggered (``QAction.trigger``), buttons are clicked
with the mouse, shortcuts are typed, file dialogs are answered with temporary paths and the other
dialogs with what a person would type. An exception inside any slot fails the test.
"""

from __future__ import annotations

import shutil
import sys
from pathlib import Path

import openpyxl
import pytest
from PySide6.QtCore import QPoint, Qt
from PySide6.QtTest import QTest
from PySide6.QtGui import QGuiApplication, QKeySequence
from PySide6.QtWidgets import QApplication, QDialog, QFileDialog

from curvewright import CAUTION
from curvewright.app import dialogs, main_window
from curvewright.app import standards_model as sm
from curvewright.io.run_document import open_run
from tests.app.conftest import DEMOS, ROOT, settle, type_keys


@pytest.fixture
def slot_errors(monkeypatch):
    """Exceptions raised inside slots (Qt hands them to sys.excepthook); each step asserts there are none."""
    seen: list[BaseException] = []

    def record(kind, value, trace) -> None:  # type: ignore[no-untyped-def]
        import traceback

        value.add_note("".join(traceback.format_tb(trace)))
        seen.append(value)

    monkeypatch.setattr(sys, "excepthook", record)
    return seen


class Files:
    """Answers the file dialogs: the next path to open, and where each save goes."""

    def __init__(self, folder: Path) -> None:
        self.folder = folder
        self.to_open: list[Path] = []
        self.saved: list[Path] = []
        self.asked: list[str] = []

    def open_name(self, parent, caption, *args, **kwargs):  # type: ignore[no-untyped-def]
        self.asked.append(caption)
        return (str(self.to_open.pop(0)), "") if self.to_open else ("", "")

    def save_name(self, parent, caption, suggested="", *args, **kwargs):  # type: ignore[no-untyped-def]
        self.asked.append(caption)
        path = self.folder / Path(suggested).name
        self.saved.append(path)
        return str(path), ""


@pytest.fixture
def files(tmp_path, monkeypatch) -> Files:
    answers = Files(tmp_path / "out")
    answers.folder.mkdir()
    monkeypatch.setattr(QFileDialog, "getOpenFileName", answers.open_name)
    monkeypatch.setattr(QFileDialog, "getSaveFileName", answers.save_name)
    return answers


@pytest.fixture
def demo_copies(tmp_path) -> list[Path]:
    """The demo runs copied to a temporary folder, so that saving never touches the shipped files."""
    folder = tmp_path / "runs"
    folder.mkdir()
    return [Path(shutil.copy(p, folder / p.name)) for p in DEMOS]


@pytest.fixture
def typed_dialogs(monkeypatch):
    """What the analyst types into the settings, analyte and name dialogs, and accepting an import preview."""
    typed = {"run name": "Batch renamed at the bench", "unit": "µg/L", "new analyte": "lead", "level": 0.99}

    def settings_exec(self) -> int:
        self.level.setValue(typed["level"])
        self.reason.setText("method asks for 99 % intervals")
        return QDialog.DialogCode.Accepted

    def analyte_exec(self) -> int:
        if self.windowTitle() == "Add analyte":
            self.name.setText(typed["new analyte"])
        self.concentration_unit.setText(typed["unit"])
        self.response_unit.setText("counts")
        return QDialog.DialogCode.Accepted

    monkeypatch.setattr(dialogs.SettingsDialog, "exec", settings_exec)
    def sign_exec(self) -> int:  # the run may fail its checks after the journey's edits: approved with a reason
        if self.needs_reason:
            self.despite.setChecked(True)
            self.despite_reason.setPlainText("journey: edits made to try every menu item")
        return QDialog.DialogCode.Accepted

    monkeypatch.setattr(dialogs.SignDialog, "exec", sign_exec)
    monkeypatch.setattr(dialogs.AnalyteDialog, "exec", analyte_exec)
    monkeypatch.setattr(dialogs.ImportDialog, "exec", lambda self: QDialog.DialogCode.Accepted)
    def details_exec(self) -> int:
        self.name.setText(typed["run name"])
        self.instrument.setText("UV-Vis spectrophotometer, asset DEMO-7 (invented)")
        return QDialog.DialogCode.Accepted

    monkeypatch.setattr(dialogs.RunDetailsDialog, "exec", details_exec)
    return typed


def press(window, qtbot, slot_errors, name: str) -> None:
    """Trigger the menu item ``name`` as a click on it would, wait for the refit, fail on any slot error."""
    action = window.actions_by_name[name]
    assert action.isEnabled(), f"menu item {action.text()!r} is disabled"
    action.trigger()
    if window.isVisible():
        settle(qtbot, window)
    assert not slot_errors, f"{action.text()!r} raised {slot_errors[0]!r}\n{''.join(getattr(slot_errors[0], '__notes__', []))}"


def menu_items(window) -> set[str]:
    """Every named menu item of the window (the submenus' entries included)."""
    return set(window.actions_by_name)


def select_standard(window, row: int) -> str:
    """Click a standard's row (its number in the row header), as the analyst selects it."""
    window.left_tabs.setCurrentIndex(0)
    view = window.standards_view
    view.scrollTo(window.standards_model.index(row, 0))
    header = view.verticalHeader()
    QTest.mouseClick(header.viewport(), Qt.MouseButton.LeftButton, Qt.KeyboardModifier.NoModifier,
                     QPoint(header.width() // 2, header.sectionViewportPosition(row) + header.sectionSize(row) // 2))
    assert sorted({i.row() for i in view.selectionModel().selectedIndexes()}) == [row]
    return window.standards_model.standards[row].id


@pytest.mark.parametrize("demo", range(len(DEMOS)), ids=[p.stem for p in DEMOS])
def test_every_menu_item_does_what_it_says(demo, make_window, qtbot, slot_errors, files, demo_copies, typed_dialogs,
                                           answer_dialogs, tmp_path) -> None:
    path = demo_copies[demo]
    window = make_window(path)
    pressed: set[str] = set()

    def do(name: str) -> None:
        press(window, qtbot, slot_errors, name)
        pressed.add(name)

    run = window.session.run
    analyte = window.current_analyte()

    # Edit: exclude the selected standard, then put it back; the dialogs name that standard
    chosen = select_standard(window, 4)
    do("exclude")
    assert answer_dialogs.last_title == f"Exclude standard {chosen}"
    assert not window.session.run.analyte(analyte).standard(chosen).included
    assert window.session.run.audit[-1].details["standard"] == chosen
    do("exclude")
    assert answer_dialogs.last_title == f"Include standard {chosen} again"
    assert window.session.run.analyte(analyte).standard(chosen).included

    # Undo and redo name the change they act on
    assert window.undo_action.text() == f"&Undo Include {chosen}"
    do("undo")
    assert not window.session.run.analyte(analyte).standard(chosen).included
    assert window.redo_action.text() == f"&Redo Include {chosen}"
    do("redo")
    assert window.session.run.analyte(analyte).standard(chosen).included

    # Edit: mark the selected standard as an anchor point; every demo's row 5 is a calibration standard of a
    # straight line, a quadratic, a response factor, or inside the range of a logistic curve: refused in words
    count = len(window.session.run.audit)
    chosen = select_standard(window, 4)
    do("anchor")
    assert answer_dialogs.last_title == "Mark anchor points"
    assert answer_dialogs.seen[-1][1].startswith(f"Not marked: standard(s) {chosen} of {analyte}. The fit refuses "
                                                 "it: anchor points: ")
    assert len(window.session.run.audit) == count

    # Copy the selected cells; copy the whole table; paste a block of new standards below the last
    window.standards_view.setFocus()
    select_standard(window, 2)
    do("copy")
    copied = QGuiApplication.clipboard().text()
    assert window.standards_model.standards[2].id in copied and copied.count("\n") == 1
    do("copy-table")
    assert QGuiApplication.clipboard().text().startswith("Id\t")
    before = window.standards_model.rowCount()
    window.standards_view.clearSelection()
    window.standards_view.setCurrentIndex(window.standards_model.index(before - 1, sm.CONC))
    window.standards_view.clearSelection()
    window.standards_view.setCurrentIndex(window.standards_model.index(-1, -1))
    QGuiApplication.clipboard().setText("Nominal\tResponse\n123\t4567\n")
    do("paste")
    standards = window.session.run.analyte(analyte).standards
    assert len(standards) == before + 1 and standards[-1].concentration == 123.0
    assert standards[-1].response.text == "4567"

    # Add and remove rows (the removal names the row and keeps a reason)
    do("add-standard")
    assert len(window.session.run.analyte(analyte).standards) == before + 2
    added = window.session.run.analyte(analyte).standards[-1].id
    select_standard(window, before + 1)
    do("remove-row")
    assert answer_dialogs.last_title == f"Remove standard {added}"
    assert added not in {s.id for s in window.session.run.analyte(analyte).standards}
    window.left_tabs.setCurrentIndex(1)
    samples_before = len(window.session.run.samples)
    do("add-sample")
    assert len(window.session.run.samples) == samples_before + 1

    # Analysis
    do("choose-model")
    assert window.bottom_tabs.currentWidget() is window.evidence_panel
    comparison, top = window.evidence_panel.comparison, window.evidence_panel.table.item(0, 9).text()
    if comparison.recommendation is None:  # the standard pasted above (123, 4567) can leave no candidate acceptable
        assert top == "" and window.evidence_panel.reasons.toPlainText().startswith("• no candidate is acceptable")
    else:
        assert "recommended" in top
    assert window.evidence_panel.table.selectionModel().selectedRows()[0].row() == 0
    do("settings")
    assert window.session.run.settings.confidence_level == 0.99
    audited = len(window.session.run.audit)
    do("preferences")  # the analyst's own name and decimal mark: kept in the app's settings, not the run
    assert len(window.session.run.audit) == audited and window.session.identity.name == "Robin Example"
    do("rename-run")
    assert window.session.run.name == typed_dialogs["run name"]
    assert window.session.run.instrument == "UV-Vis spectrophotometer, asset DEMO-7 (invented)"
    do("edit-analyte")
    assert window.session.run.analyte(analyte).concentration_unit == "µg/L"
    do("add-analyte")
    assert "lead" in [a.name for a in window.session.run.analytes]
    do("history")
    assert window.history_window.isVisible() and CAUTION in window.history_window.caution.text()
    window.history_window.close()
    window.analyte_box.setCurrentText(analyte)
    do("about")
    assert CAUTION in answer_dialogs.seen[-1][1]

    # File: exports land where the dialog said, in their format, and the audit trail names them
    do("export-xlsx")
    assert files.saved[-1].suffix == ".xlsx" and "Samples" in openpyxl.load_workbook(files.saved[-1]).sheetnames
    assert window.session.run.audit[-1].action == "export_written"
    do("export-csv")
    assert files.saved[-1].read_text(encoding="utf-8").startswith("# " + CAUTION)
    do("export-plot")
    assert files.saved[-1].read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    do("export-record")
    assert files.saved[-1].read_bytes()[:5] == b"%PDF-"
    assert window.session.run.audit[-1].action == "report_written"

    # Imports through the file dialog and the preview
    standards_file = tmp_path / "lead_standards.csv"
    standards_file.write_text("Analyte,Id,Concentration (µg/L),Response\nlead,Pb-1,1.0,101.082\nlead,Pb-2,2.0,199.514\n"
                              "lead,Pb-3,5.0,502.733\nlead,Pb-4,10.0,1003.41\n", encoding="utf-8")
    files.to_open.append(standards_file)
    do("import-standards")
    assert len(window.session.run.analyte("lead").standards) == 4
    samples_file = tmp_path / "more_samples.csv"
    samples_file.write_text("Sample,Response\nBench check 1,0.41\n", encoding="utf-8")
    files.to_open.append(samples_file)
    do("import-samples")
    assert "Bench check 1" in {s.id for s in window.session.run.samples}

    # Review: signatures in each role; approval locks the run until it is withdrawn with a reason
    do("sign-analyst")
    do("sign-reviewer")
    assert [sig.role for sig in window.session.run.signatures] == ["analyst", "reviewer"]
    assert window.session.run.signatures[0].name == "Robin Example"
    do("sign-approver")
    assert window.session.run.approval is not None and "locked" in window.attention.text()
    locked = select_standard(window, 1)
    count = len(window.session.run.audit)
    do("exclude")
    assert len(window.session.run.audit) == count and window.session.run.analyte(analyte).standard(locked).included
    assert "locked" in window.statusBar().currentMessage() or "locked" in answer_dialogs.seen[-1][1]
    do("withdraw-approval")
    assert window.session.run.approval is None and window.session.run.audit[-1].action == "approval_withdrawn"
    do("exclude")
    assert not window.session.run.analyte(analyte).standard(locked).included

    # Save, save as (into the dialog's folder), open, recent, demo
    do("save")
    assert open_run(path).run == window.session.run and not window.isWindowModified()
    do("save-as")
    assert files.saved[-1].suffix == ".json" and open_run(files.saved[-1]).run == window.session.run
    other = demo_copies[(demo + 1) % len(demo_copies)]
    files.to_open.append(other)
    do("open")
    assert window.session.path == other
    recent = [a for a in window.recent_menu.actions()]
    assert recent and recent[0].text() == str(other.resolve())
    recent[-1].trigger()
    settle(qtbot, window)
    assert not slot_errors
    demo_item = f"demo-{DEMOS[demo].stem}"
    answer_dialogs["question"] = __import__("PySide6.QtWidgets", fromlist=["QMessageBox"]).QMessageBox.StandardButton.Discard
    do(demo_item)
    assert window.session.run == open_run(DEMOS[demo]).run
    files.to_open.append(ROOT / "sample_runs" / "methods" / "demo_nitrate_uv_method.json")
    do("new-from-method")
    made = window.session.run
    assert made.settings.method["id"] == "DEMO-NO3-UV" and made.analytes[0].name == "nitrate-N"
    assert made.analytes[0].concentration_unit == "mg/L" and "fixed by the validated method" in made.analytes[0].choice_reason
    do("new")
    assert window.session.run.name == "Untitled run" and not window.session.run.analytes[0].standards
    assert "No standards yet" in window.verdict.text() and "NOT ACCEPTED" not in window.verdict.text()
    do("quit")
    assert not window.isVisible()

    others = {n for n in menu_items(window) if n.startswith("demo-")} - {demo_item}
    assert menu_items(window) - pressed - others == set(), "a menu item was not pressed"
    assert run is not window.session.run


def test_buttons_act_on_the_selected_row(make_window, qtbot, slot_errors, answer_dialogs, demo_copies) -> None:
    window = make_window(demo_copies[0])
    analyte = window.current_analyte()
    for row in (7, 0, 12):
        chosen = select_standard(window, row)
        assert window.exclude_button.text() == f"E&xclude {chosen}…"
        qtbot.mouseClick(window.exclude_button, Qt.MouseButton.LeftButton)
        settle(qtbot, window)
        assert not slot_errors
        excluded = [s.id for s in window.session.run.analyte(analyte).standards if not s.included]
        assert chosen in excluded, f"row {row + 1} selected, but {excluded} excluded"
        # the selection survives the refit: the same button now puts that standard back
        assert window.exclude_button.text() == f"Include {chosen} a&gain…"
        qtbot.mouseClick(window.exclude_button, Qt.MouseButton.LeftButton)
        settle(qtbot, window)
        assert window.session.run.analyte(analyte).standard(chosen).included
    assert "(row 13," in answer_dialogs.seen[-2][1]
    # with no standard selected the button says what it needs instead of acting on row 1
    window.standards_view.clearSelection()
    window.standards_view.setCurrentIndex(window.standards_model.index(-1, -1))
    window._update_buttons()
    assert not window.exclude_button.isEnabled()
    count = len(window.session.run.audit)
    window.actions_by_name["exclude"].trigger()
    assert len(window.session.run.audit) == count
    assert "Select one standard" in window.statusBar().currentMessage()


@pytest.mark.parametrize("damage", ["one character short", "not a zip", "empty"])
def test_a_damaged_workbook_imported_from_the_menu_is_named_in_a_message(make_window, qtbot, slot_errors, files,
                                                                          answer_dialogs, demo_copies, tmp_path,
                                                                          monkeypatch, damage: str) -> None:
    from tests.io.workbook_files import SHEET, rezip, workbook_bytes

    good = workbook_bytes()
    data = {"one character short": rezip(good, {SHEET: lambda xml: xml[:-1]}),  # a sheet XML missing its last ">"
            "not a zip": good[: len(good) // 2], "empty": b""}[damage]
    path = tmp_path / "Cal batch 7.xlsx"
    path.write_bytes(data)
    shown: list[tuple[str, bool]] = []

    def preview_exec(self) -> int:  # the preview opens when the file's sheets can be listed: what does it say?
        shown.append((self.summary.toPlainText(), self.buttons.button(self.buttons.StandardButton.Ok).isEnabled()))
        return QDialog.DialogCode.Rejected

    monkeypatch.setattr(dialogs.ImportDialog, "exec", preview_exec)
    window = make_window(demo_copies[0])
    before = window.session.run
    files.to_open.append(path)
    window.actions_by_name["import-standards"].trigger()
    settle(qtbot, window)
    assert not slot_errors
    if shown:  # a sheet that cannot be read: the preview says why, naming the file, and cannot be accepted
        text, can_accept = shown[-1]
        assert text.startswith(f"{path}: ") and not can_accept
    else:  # a file that is no workbook at all: a message names it
        title, text = answer_dialogs.seen[-1]
        assert title == "Import standards" and str(path) in text
    assert window.session.run is before  # nothing imported, nothing lost


def test_the_exclusion_dialog_needs_a_chosen_reason(qtbot, demo_copies) -> None:
    from curvewright.app.dialogs import EXCLUSION_REASONS, ReasonDialog

    dialog = ReasonDialog("Exclude standard N-L2-1", "Why?", EXCLUSION_REASONS)
    qtbot.addWidget(dialog)
    ok = dialog.buttons.button(dialog.buttons.StandardButton.Ok)
    assert not ok.isEnabled() and dialog.reason() == ""
    dialog.choices.setCurrentIndex(0)
    assert ok.isEnabled() and dialog.reason() == EXCLUSION_REASONS[0]
    dialog.choices.setCurrentIndex(len(EXCLUSION_REASONS) - 1)  # "other": details are needed
    assert not ok.isEnabled()
    dialog.details.setPlainText("the autosampler skipped this vial")
    assert ok.isEnabled() and dialog.reason() == "the autosampler skipped this vial"


def test_other_buttons_and_view_controls(make_window, qtbot, slot_errors, answer_dialogs, typed_dialogs,
                                         demo_copies) -> None:
    window = make_window(demo_copies[2])
    analyte = window.current_analyte()
    count = window.standards_model.rowCount()
    qtbot.mouseClick(window.add_standard_button, Qt.MouseButton.LeftButton)
    settle(qtbot, window)
    assert window.standards_model.rowCount() == count + 1
    select_standard(window, count)
    qtbot.mouseClick(window.remove_button, Qt.MouseButton.LeftButton)
    settle(qtbot, window)
    assert window.standards_model.rowCount() == count
    qtbot.mouseClick(window.analyte_button, Qt.MouseButton.LeftButton)
    settle(qtbot, window)
    assert window.session.run.analyte(analyte).concentration_unit == "µg/L"
    view = window.curve_view
    for box in (view.confidence, view.prediction, view.log_axis):
        box.click()
        qtbot.wait(10)
        box.click()
    # the log-axis box: the concentration axis says it is logarithmic, and so does the response axis when
    # every response in the fit is positive (only then is it drawn on a log scale too)
    if not view.log_axis.isChecked():
        view.log_axis.click()
        settle(qtbot, window)
    positive = all(s.response.value > 0 for s in window.session.run.analyte(analyte).standards
                   if s.included and s.response.value is not None)
    assert view.curve_plot.getAxis("bottom").labelText.endswith("(log scale)")
    assert view.curve_plot.getAxis("left").labelText.endswith("(log scale)") == positive
    view.log_axis.click()
    settle(qtbot, window)
    assert "(log scale)" not in view.curve_plot.getAxis("left").labelText
    view.lower_kind.setCurrentIndex(1)
    assert view.lower_plot.getAxis("left").labelText.startswith("Residual")
    view.lower_kind.setCurrentIndex(0)
    # the evidence panel's button: choosing a model that is not the recommendation asks why
    window.bottom_tabs.setCurrentWidget(window.evidence_panel)
    table = window.evidence_panel.table
    other = next(r for r in range(table.rowCount()) if not table.item(r, 9).text())
    table.selectRow(other)
    model, weighting = table.item(other, 0).text(), table.item(other, 1).text()
    answer_dialogs["reason"] = "method file fixes this model"
    qtbot.mouseClick(window.evidence_panel.use_button, Qt.MouseButton.LeftButton)
    settle(qtbot, window)
    chosen = window.session.run.analyte(analyte)
    assert (chosen.model, chosen.weighting, chosen.choice_reason) == (model, weighting, "method file fixes this model")
    assert not slot_errors


def test_every_shortcut_triggers_its_menu_item(make_window, qtbot, slot_errors, files, demo_copies, typed_dialogs,
                                               answer_dialogs) -> None:
    window = make_window(demo_copies[0])
    window.activateWindow()
    qtbot.waitUntil(lambda: QGuiApplication.focusWindow() is not None)
    fired: list[str] = []
    for name, action in window.actions_by_name.items():
        action.triggered.connect(lambda _checked=False, name=name: fired.append(name))
    select_standard(window, 3)
    window.standards_view.setFocus()
    order = ["copy", "paste", "copy-table", "exclude", "undo", "redo", "add-standard", "remove-row", "choose-model",
             "settings", "export-xlsx", "export-record", "import-standards", "import-samples", "save", "save-as", "open",
             "new", "quit"]
    with_keys = {n for n, a in window.actions_by_name.items() if not a.shortcut().isEmpty()}
    assert with_keys == set(order), with_keys ^ set(order)
    for name in order:
        if name not in with_keys:
            continue
        if name == "new":
            answer_dialogs["question"] = __import__("PySide6.QtWidgets", fromlist=["QMessageBox"]).QMessageBox.StandardButton.Discard
        sequence: QKeySequence = window.actions_by_name[name].shortcut()
        combination = sequence[0]
        # the analyst types into the active window (a dialog answered without being shown can leave the
        # offscreen platform with no active window)
        window.activateWindow()
        qtbot.waitUntil(lambda: QApplication.activeWindow() is window)
        target = window.focusWidget() or window
        type_keys(qtbot, target, combination.key(), combination.keyboardModifiers())
        qtbot.wait(20)
        assert fired and fired[-1] == name, (f"{sequence.toString()} did not trigger {name!r}", window.focusWidget(), window.actions_by_name[name].isEnabled())
        assert not slot_errors, slot_errors
        if name == "settings":
            settle(qtbot, window)
    assert not window.isVisible()


def test_changing_an_entered_value_asks_why_and_cancel_keeps_it(make_window, qtbot, slot_errors, answer_dialogs,
                                                                demo_copies) -> None:
    from curvewright.io.run_edits import VALUE_CHANGE_REASONS

    window = make_window(demo_copies[0])
    model = window.standards_model
    index = model.index(5, sm.RESP)
    before = model.standards[5].response.text
    window.standards_view.setCurrentIndex(index)
    # typing over the cell: the editor opens, the text is typed, Enter commits it
    window.standards_view.edit(index)
    editor = window.standards_view.focusWidget()
    answer_dialogs["reason"] = None  # the analyst cancels the question
    editor.selectAll()
    qtbot.keyClicks(editor, "0.4321")
    qtbot.keyClick(editor, Qt.Key.Key_Return)
    settle(qtbot, window)
    assert answer_dialogs.last_title == "Why does this value change?"
    assert model.standards[5].response.text == before and "needs a reason" in window.statusBar().currentMessage()
    answer_dialogs["reason"] = ""
    answer_dialogs["choice"] = VALUE_CHANGE_REASONS.index("data entry error corrected against the raw data")
    window.standards_view.edit(index)
    editor = window.standards_view.focusWidget()
    editor.selectAll()
    qtbot.keyClicks(editor, "0.4321")
    qtbot.keyClick(editor, Qt.Key.Key_Return)
    settle(qtbot, window)
    assert model.standards[5].response.text == "0.4321"
    entry = window.session.run.audit[-1]
    assert entry.details["reason"] == "data entry error corrected against the raw data"
    assert entry.details["changes"][0]["old"] == before and not slot_errors
