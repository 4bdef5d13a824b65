"""A response typed over a standard's cell as a person does it: the cell is selected, the new value
typed and Enter pressed; the app's own reason-for-change dialog opens (modal, in its own event loop)
and is answered by picking a reason, typing details and clicking OK. Then the results table, the
curve's kept plot items, the equation and the audit entry show the change, and the window is
rendered to PNG (pytest-qt, offscreen).

The dialog is the real one here, not a stand-in: while it waits, the code that pressed Enter does
not go on, so it is answered from a timer that runs inside the dialog's event loop."""

from __future__ import annotations

import getpass

import numpy as np
from PySide6.QtCore import Qt, QTimer
from PySide6.QtWidgets import QApplication, QDialog, QDialogButtonBox

from curvewright import CAUTION
from curvewright.app import results_model as rm
from curvewright.app import standards_model as sm
from curvewright.app.dialogs import ReasonDialog
from curvewright.core.run_analysis import analyse_run
from curvewright.io.model_outputs import curve_words
from curvewright.io.result_tables import display_number
from curvewright.io.run_edits import VALUE_CHANGE_REASONS
from tests.app.conftest import DEMOS, settle

NITRATE = next(p for p in DEMOS if "nitrate" in p.stem)
_REAL_EXEC = QDialog.exec  # taken when the module loads, before each test refuses dialogs nobody answers
REASON = VALUE_CHANGE_REASONS.index("data entry error corrected against the raw data")
DETAILS = "peak height re-read from the printout of injection 5"


class ReasonAnswerer:
    """Waits for the reason dialog to be shown modally, then answers it as the analyst would:
    picks a reason from the list, types the details and clicks OK. Notes what it saw on the way."""

    def __init__(self, qtbot) -> None:  # type: ignore[no-untyped-def]
        self.qtbot = qtbot
        self.seen: list[dict] = []  # type: ignore[type-arg]
        self.tries = 0

    def start(self) -> None:
        QTimer.singleShot(20, self.answer)

    def answer(self) -> None:
        dialog = QApplication.activeModalWidget()
        if not isinstance(dialog, ReasonDialog):
            self.tries += 1
            if self.tries < 500:  # about ten seconds, then the test's own wait reports the failure
                QTimer.singleShot(20, self.answer)
            return
        ok = dialog.buttons.button(QDialogButtonBox.StandardButton.Ok)
        seen = {"title": dialog.windowTitle(), "modal": dialog.isModal() and dialog.isVisible(),
                "ok_before": ok.isEnabled(), "choices": [dialog.choices.itemText(i) for i in range(dialog.choices.count())]}
        dialog.choices.setCurrentIndex(REASON)
        seen["ok_with_choice"] = ok.isEnabled()
        dialog.details.setFocus()
        self.qtbot.keyClicks(dialog.details, DETAILS)
        seen["reason"] = dialog.reason()
        self.seen.append(seen)
        self.qtbot.mouseClick(ok, Qt.MouseButton.LeftButton)


def test_a_typed_response_asks_why_in_the_real_dialog_and_shows_the_refit(
        make_window, qtbot, monkeypatch, tmp_path) -> None:
    monkeypatch.setattr(ReasonDialog, "exec", _REAL_EXEC)  # the app's dialog itself, answered below
    window = make_window(NITRATE)
    session = window.session
    view = window.curve_view
    window.bottom_tabs.setCurrentWidget(window.results_view)
    settle(qtbot, window)
    before_png = window.grab()
    kept = view.curve_items
    curve, standards = kept.curve, kept.standards
    plot_items = list(view.curve_plot.items)
    curve_y_before = np.array(curve.yData, copy=True)
    estimates_before = [window.results_model.index(r, rm.ESTIMATE).data() for r in range(window.results_model.rowCount())]
    audit_before = len(session.run.audit)

    row = 4  # the second replicate of the 0.5 mg/L standard
    model = window.standards_model
    target = model.standards[row]
    old_text = target.response.text
    typed = "0.1102"
    table = window.standards_view
    window.left_tabs.setCurrentIndex(0)
    index = model.index(row, sm.RESP)
    table.scrollTo(index)
    # the person clicks the cell, types over it (typing opens the editor) and presses Enter
    qtbot.mouseClick(table.viewport(), Qt.MouseButton.LeftButton, pos=table.visualRect(index).center())
    assert table.currentIndex() == index
    answerer = ReasonAnswerer(qtbot)
    answerer.start()
    qtbot.keyClicks(table, typed[0])
    editor = QApplication.focusWidget()
    assert editor is not table and editor.parent() is table.viewport(), "typing did not open the cell's editor"
    qtbot.keyClicks(editor, typed[1:])
    qtbot.keyClick(editor, Qt.Key.Key_Return)
    qtbot.waitUntil(lambda: session.run.analyte(target_analyte(window)).standard(target.id).response.text == typed,
                    timeout=10000)
    settle(qtbot, window)

    # the dialog was the app's modal one; OK waited for a reason; it was asked once
    assert len(answerer.seen) == 1, answerer.seen
    seen = answerer.seen[0]
    assert seen["title"] == "Why does this value change?" and seen["modal"]
    assert not seen["ok_before"] and seen["ok_with_choice"]
    assert seen["choices"] == list(VALUE_CHANGE_REASONS)
    assert seen["reason"] == f"{VALUE_CHANGE_REASONS[REASON]}: {DETAILS}"
    assert QApplication.activeModalWidget() is None

    # the audit entry: one step, who made it (the settings' analyst and the login), why, old and new
    run = session.run
    assert len(run.audit) == audit_before + 1
    entry = run.audit[-1]
    assert entry.action == "value_edited"
    assert (entry.analyst, entry.analyst_id, entry.user) == ("Robin Example", "QA-0042", getpass.getuser())
    assert entry.details["reason"] == seen["reason"]
    assert entry.details["changes"] == [{"standard": target.id, "field": "response", "old": old_text, "new": typed}]

    # the results shown are those of the run analysed afresh, and they moved
    fresh = analyse_run(run).analyte(target_analyte(window))
    shown = [window.results_model.index(r, rm.ESTIMATE).data() for r in range(window.results_model.rowCount())]
    assert shown == [display_number(s.estimate) for s in fresh.samples]
    assert shown != estimates_before

    # the curve view kept its items and gives them the new fit's data
    assert view.curve_items.curve is curve and view.curve_items.standards is standards
    assert list(view.curve_plot.items) == plot_items
    assert not np.array_equal(curve.yData, curve_y_before)
    np.testing.assert_allclose(curve.yData, fresh.calibration.predict(np.asarray(curve.xData)), rtol=1e-12, atol=1e-15)
    points = set(zip(np.asarray(standards.xData).tolist(), np.asarray(standards.yData).tolist()))
    assert (target.concentration, float(typed)) in points and (target.concentration, float(old_text)) not in points
    assert view.curve_words.text() == curve_words(fresh.calibration, fresh.analyte.uses_internal_standard)
    assert CAUTION in window.caution.text() and window.caution.isVisible()

    # the window after the edit, as a person sees it
    after_png = window.grab()
    path = tmp_path / "after_typed_edit.png"
    assert after_png.save(str(path)) and path.stat().st_size > 10_000
    before_png.save(str(tmp_path / "before_typed_edit.png"))
    assert after_png.size() == before_png.size() and after_png.toImage() != before_png.toImage()


def target_analyte(window) -> str:  # type: ignore[no-untyped-def]
    return window.current_analyte()
