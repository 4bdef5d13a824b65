"""An approved run is locked. The analyst who tries to change it is told what was refused and how to
unlock it, before any reason for the change is asked: its cells open no editor, and excluding,
including again or removing a standard is refused in words that say it did not happen ("Cannot
exclude standard …: the run was approved by … and is locked; withdraw the approval, with a reason,
to change it."). Driven as a person would (pytest-qt, offscreen), on an approved copy of a demo run."""

from __future__ import annotations

import re
from dataclasses import replace

import pytest
from PySide6.QtCore import Qt
from PySide6.QtWidgets import QAbstractItemView, QApplication

from curvewright.app import standards_model as sm
from curvewright.core.run import Reading
from curvewright.io import run_edits
from curvewright.io.audit import Identity
from curvewright.io.run_document import open_run, save_run
from curvewright.io.run_edits import RunLocked
from curvewright.io.signatures import sign
from tests.app.conftest import DEMOS, settle

NITRATE = next(p for p in DEMOS if "nitrate" in p.stem)
APPROVER = Identity("Sam Approver", "QA-0007", "sam")  # an invented person
REFUSAL = re.compile(r"^Cannot (?P<what>.+): the run was approved by Sam Approver \(.+\) and is locked; withdraw the "
                     r"approval, with a reason, to change it\.$")


@pytest.fixture
def approved_window(make_window, tmp_path):  # type: ignore[no-untyped-def]
    run = sign(open_run(NITRATE).run, "approver", APPROVER, meaning="released")
    path = tmp_path / "approved nitrate.json"
    save_run(run, path)
    window = make_window(path)
    assert window.session.run.approval is not None
    return window


def _click(qtbot, table, index) -> None:  # type: ignore[no-untyped-def]
    table.scrollTo(index)
    qtbot.mouseClick(table.viewport(), Qt.MouseButton.LeftButton, pos=table.visualRect(index).center())
    assert table.currentIndex() == index


def test_a_locked_runs_cells_open_no_editor_and_ask_no_reason(approved_window, qtbot, answer_dialogs) -> None:
    window = approved_window
    run = window.session.run
    window.left_tabs.setCurrentIndex(0)
    table, model = window.standards_view, window.standards_model
    index = model.index(2, sm.RESP)
    _click(qtbot, table, index)
    qtbot.keyClicks(table, "9")  # typing over a cell opens its editor on a run that is not locked
    qtbot.keyClick(table, Qt.Key.Key_F2)
    qtbot.mouseDClick(table.viewport(), Qt.MouseButton.LeftButton, pos=table.visualRect(index).center())
    assert table.state() != QAbstractItemView.State.EditingState
    assert QApplication.focusWidget() is table or QApplication.focusWidget().parent() is not table.viewport()
    assert answer_dialogs.seen == []  # no "Why does this value change?" asked and thrown away
    assert window.session.run is run

    window.left_tabs.setCurrentIndex(1)
    samples = window.samples_view
    _click(qtbot, samples, window.samples_model.index(0, 0))
    qtbot.keyClicks(samples, "7")
    assert samples.state() != QAbstractItemView.State.EditingState
    assert answer_dialogs.seen == [] and window.session.run is run
    settle(qtbot, window)


def test_excluding_a_standard_of_a_locked_run_says_what_was_refused(approved_window, qtbot, answer_dialogs) -> None:
    window = approved_window
    run = window.session.run
    analyte = window.current_analyte()
    window.left_tabs.setCurrentIndex(0)
    standard = window.standards_model.standards[1]
    _click(qtbot, window.standards_view, window.standards_model.index(1, sm.ID))

    window.actions_by_name["exclude"].trigger()

    assert len(answer_dialogs.seen) == 1, answer_dialogs.seen  # the refusal only: no reason was asked
    title, text = answer_dialogs.seen[0]
    found = REFUSAL.match(text)
    assert found, text
    assert found["what"] == f"exclude standard {standard.id} of {analyte}"
    assert "standard excluded" not in text
    assert window.session.run is run and window.session.run.analyte(analyte).standard(standard.id).included
    settle(qtbot, window)


def test_removing_a_standard_of_a_locked_run_is_refused_before_a_reason_is_asked(
        approved_window, qtbot, answer_dialogs) -> None:
    window = approved_window
    run = window.session.run
    window.left_tabs.setCurrentIndex(0)
    standard = window.standards_model.standards[0]
    _click(qtbot, window.standards_view, window.standards_model.index(0, sm.ID))

    window.actions_by_name["remove-row"].trigger()

    assert len(answer_dialogs.seen) == 1, answer_dialogs.seen
    found = REFUSAL.match(answer_dialogs.seen[0][1])
    assert found and found["what"] == f"remove standard {standard.id}", answer_dialogs.seen
    assert window.session.run is run
    settle(qtbot, window)


def test_a_value_change_on_a_locked_run_is_refused_before_its_reason_is_asked() -> None:
    """The edit functions themselves refuse a locked run before they ask for the reason a changed value
    needs, so that no caller asks for a reason it then throws away."""
    run = sign(open_run(NITRATE).run, "approver", APPROVER)
    analyte = run.analytes[0]
    first = analyte.standards[0]
    changed = (replace(first, response=Reading.of(first.response.value * 2)),
               *analyte.standards[1:])
    with pytest.raises(RunLocked) as refused:
        run_edits.update_standards(run, analyte.name, changed, "typed")  # no reason given: refused, not asked
    found = REFUSAL.match(str(refused.value))
    assert found and found["what"] == f"change the response of standard {first.id} of {analyte.name}"
    with pytest.raises(RunLocked, match=f"^Cannot change the response of standard {first.id} of "):
        run_edits.edit_standard(run, analyte.name, first.id, "response", first.response.value * 2)


def test_including_again_a_standard_of_a_locked_run_is_refused_before_a_reason_is_asked(
        make_window, qtbot, tmp_path, answer_dialogs) -> None:
    run = open_run(NITRATE).run
    analyte = run.analytes[0].name
    excluded = run.analytes[0].standards[3].id
    run = run_edits.exclude_standard(run, analyte, excluded, "vial cracked (bench note 3)")
    path = tmp_path / "approved with an exclusion.json"
    save_run(sign(run, "approver", APPROVER), path)
    window = make_window(path)
    locked = window.session.run
    window.left_tabs.setCurrentIndex(0)
    _click(qtbot, window.standards_view, window.standards_model.index(3, sm.ID))

    window.exclude_button.click()

    assert len(answer_dialogs.seen) == 1, answer_dialogs.seen
    found = REFUSAL.match(answer_dialogs.seen[0][1])
    assert found and found["what"] == f"include standard {excluded} of {analyte} again", answer_dialogs.seen
    assert window.session.run is locked and not locked.analyte(analyte).standard(excluded).included
    settle(qtbot, window)


@pytest.fixture
def forms_opened(monkeypatch):
    """Every form, file chooser and preview that would ask the analyst something, recorded instead of
    shown (each answered "Cancel"): a refusal must come before any of them."""
    from PySide6.QtWidgets import QDialog, QFileDialog

    from curvewright.app import dialogs, paste_dialog

    opened: list[str] = []

    def record(name: str):  # type: ignore[no-untyped-def]
        def exec_(self) -> int:
            opened.append(f"{name}: {self.windowTitle()}")
            return QDialog.DialogCode.Rejected
        return exec_

    for cls in (dialogs.SettingsDialog, dialogs.AnalyteDialog, dialogs.RunDetailsDialog, dialogs.ImportDialog,
                dialogs.SignDialog, dialogs.ReasonDialog, paste_dialog.PasteDialog):
        monkeypatch.setattr(cls, "exec", record(cls.__name__))
    monkeypatch.setattr(QFileDialog, "getOpenFileName", lambda *a, **k: (opened.append("file chooser"), ("", ""))[1])
    return opened


def _one_refusal(answer_dialogs, forms_opened, what: str) -> str:
    """The one message shown: the refusal of ``what``; nothing was asked before it."""
    assert forms_opened == [], forms_opened
    assert len(answer_dialogs.seen) == 1, answer_dialogs.seen
    text = answer_dialogs.seen[0][1]
    found = REFUSAL.match(text.split("\n\n")[0])
    assert found, text
    assert found["what"] == what
    return text


def _refused_unchanged(qtbot, window, run, answer_dialogs, forms_opened, what: str) -> str:  # type: ignore[no-untyped-def]
    """:func:`_one_refusal` of ``what``, the window's run still ``run``, and the window settled."""
    text = _one_refusal(answer_dialogs, forms_opened, what)
    assert window.session.run is run
    settle(qtbot, window)
    return text


@pytest.mark.parametrize("action, what", [
    ("settings", "change the run settings"),
    ("rename-run", "change the run's name, instrument or description"),
    ("edit-analyte", "change the name or units of {analyte}"),
    ("add-analyte", "add an analyte"),
    ("import-standards", "import standards"),
    ("import-samples", "import samples"),
    ("add-standard", "add a standard to {analyte}"),
    ("add-sample", "add a sample"),
    ("sign-approver", "approve the run again"),
])
def test_a_locked_run_refuses_each_change_from_the_menus_before_asking_anything(
        approved_window, qtbot, answer_dialogs, forms_opened, action, what) -> None:
    window = approved_window
    run = window.session.run
    window.actions_by_name[action].trigger()
    text = _one_refusal(answer_dialogs, forms_opened, what.format(analyte=window.current_analyte()))
    assert window.session.run is run
    assert text.split("\n\n")[0] in window.statusBar().currentMessage()
    settle(qtbot, window)


def test_the_run_settings_of_a_locked_run_are_refused_and_the_analysts_own_settings_stay_reachable(
        approved_window, qtbot, answer_dialogs, forms_opened, monkeypatch) -> None:
    from PySide6.QtWidgets import QDialog

    from curvewright.app import dialogs

    window = approved_window
    run = window.session.run
    assert window.actions_by_name["settings"].shortcut().toString() == "Ctrl+,"
    window.actions_by_name["settings"].trigger()
    text = _one_refusal(answer_dialogs, forms_opened, "change the run settings")
    assert text.endswith("\n\nYour name, ID and decimal mark: Analysis → Your name and decimal mark…")

    shown: list[list[str]] = []

    def type_a_name(self) -> int:  # the analyst's own form: no run setting, no reason asked
        from PySide6.QtWidgets import QFormLayout

        form = self.layout()
        labels = [form.itemAt(r, QFormLayout.ItemRole.LabelRole) for r in range(form.rowCount())]
        shown.append([label.widget().text() for label in labels if label is not None])
        self.person_name.setText("Kim Reviewer")  # an invented person
        return QDialog.DialogCode.Accepted

    monkeypatch.setattr(dialogs.SettingsDialog, "exec", type_a_name)
    window.actions_by_name["preferences"].trigger()
    assert shown == [["Decimal mark of typed and &pasted values", "Your &full name", "Your laboratory &ID"]]
    assert window.session.identity.name == "Kim Reviewer" and window.settings.value("identity/name") == "Kim Reviewer"
    assert window.session.run is run and window.session.run.settings == run.settings
    settle(qtbot, window)


def test_the_name_and_units_button_of_a_locked_run_refuses_before_its_form(
        approved_window, qtbot, answer_dialogs, forms_opened) -> None:
    window = approved_window
    run = window.session.run
    qtbot.mouseClick(window.analyte_button, Qt.MouseButton.LeftButton)
    _refused_unchanged(qtbot, window, run, answer_dialogs, forms_opened,
                       f"change the name or units of {window.current_analyte()}")


def test_choosing_another_model_for_a_locked_run_is_refused_before_its_reason_is_asked(
        approved_window, qtbot, answer_dialogs, forms_opened) -> None:
    window = approved_window
    run = window.session.run
    window.bottom_tabs.setCurrentWidget(window.evidence_panel)
    table = window.evidence_panel.table
    qtbot.waitUntil(lambda: table.rowCount() > 1, timeout=10000)
    recommended = window.evidence_panel.comparison.recommended
    row = next(r for r in range(table.rowCount())
               if table.item(r, 0).data(Qt.ItemDataRole.UserRole) != (recommended.model.value, recommended.weighting.value))
    table.selectRow(row)
    qtbot.mouseClick(window.evidence_panel.use_button, Qt.MouseButton.LeftButton)
    _refused_unchanged(qtbot, window, run, answer_dialogs, forms_opened,
                       f"choose the model for {window.current_analyte()}")


@pytest.mark.parametrize("tab", [0, 1])
def test_pasting_into_a_locked_run_is_refused_before_the_preview(
        approved_window, qtbot, answer_dialogs, forms_opened, tab) -> None:
    from PySide6.QtGui import QGuiApplication

    from tests.app.conftest import type_keys

    window = approved_window
    run = window.session.run
    window.left_tabs.setCurrentIndex(tab)
    view = (window.standards_view, window.samples_view)[tab]
    _click(qtbot, view, view.model().index(0, 0))
    block = ("Conc\tResponse\n0.5\t0.051\n1.0\t0.102\n" if tab == 0 else "Sample\tResponse\nLake 9\t0.31\nLake 10\t0.29\n")
    QGuiApplication.clipboard().setText(block)
    type_keys(qtbot, view, Qt.Key.Key_V, Qt.KeyboardModifier.ControlModifier)  # the paste shortcut
    _refused_unchanged(qtbot, window, run, answer_dialogs, forms_opened,
                       f"paste into the {('standards', 'samples')[tab]} table")
    assert answer_dialogs.paste_dialogs == []


def test_marking_anchor_points_and_removing_a_sample_of_a_locked_run_ask_nothing_first(
        approved_window, qtbot, answer_dialogs, forms_opened) -> None:
    window = approved_window
    run = window.session.run
    window.left_tabs.setCurrentIndex(0)
    _click(qtbot, window.standards_view, window.standards_model.index(1, sm.ID))
    window.actions_by_name["anchor"].trigger()
    _refused_unchanged(qtbot, window, run, answer_dialogs, forms_opened,
                       f"mark anchor points of {window.current_analyte()}")

    answer_dialogs.seen.clear()
    window.left_tabs.setCurrentIndex(1)
    sample = window.samples_model.samples[0]
    _click(qtbot, window.samples_view, window.samples_model.index(0, 0))
    window.actions_by_name["remove-row"].trigger()
    _refused_unchanged(qtbot, window, run, answer_dialogs, forms_opened, f"remove sample {sample.id}")
