"""Anchor points of a logistic curve marked and cleared in the app, as the analyst does it: rows clicked in
the Standards table, the button or the Edit menu, the reason dialog answered, Undo and Redo."""

from __future__ import annotations

import re

import numpy as np
from PySide6.QtCore import QPoint, Qt
from PySide6.QtTest import QTest

from curvewright.app import standards_model as sm
from curvewright.io.audit_words import entry_words
from tests.app.conftest import ROOT, settle

CYTOKINE = ROOT / "sample_runs" / "cytokine_serum_4pl.json"
NITRATE = ROOT / "sample_runs" / "nitrate_water_linear.json"


def click_rows(window, rows: list[int]) -> None:
    """Click the first row's number in the row header, then Ctrl+click the others."""
    window.left_tabs.setCurrentIndex(0)
    header = window.standards_view.verticalHeader()
    for k, row in enumerate(rows):
        window.standards_view.scrollTo(window.standards_model.index(row, 0))
        modifier = Qt.KeyboardModifier.NoModifier if k == 0 else Qt.KeyboardModifier.ControlModifier
        QTest.mouseClick(header.viewport(), Qt.MouseButton.LeftButton, modifier,
                         QPoint(header.width() // 2, header.sectionViewportPosition(row) + header.sectionSize(row) // 2))
    assert sorted({i.row() for i in window.standards_view.selectionModel().selectedIndexes()}) == sorted(rows)


def cell(window, row: int, column: int, role=Qt.ItemDataRole.DisplayRole):  # type: ignore[no-untyped-def]
    return window.standards_model.data(window.standards_model.index(row, column), role)


def anchors(window) -> list[str]:
    return [s.id for s in window.session.run.analyte("cytokine").standards if s.anchor]


def drawn(window, name: str):  # type: ignore[no-untyped-def]
    return [i for i in window.curve_view.curve_plot.listDataItems() if i.name() == name]


def test_the_standards_table_and_the_curve_show_the_anchor_points(make_window) -> None:
    window = make_window(CYTOKINE)
    cal = window.session.result.analytes[0].calibration
    for row in (0, 1, 18, 19):  # A1-1, A1-2 (0.8 pg/mL) and A2-1, A2-2 (6000 pg/mL)
        assert cell(window, row, sm.IN_FIT) == "yes, anchor point"
        assert cell(window, row, sm.LIMITS) == "anchor point, not judged"
        assert "not judged for acceptance" in cell(window, row, sm.LIMITS, Qt.ItemDataRole.ToolTipRole)
        # the back-calculated value and %RE are shown, for information
        assert cell(window, row, sm.RE) == f"{cal.relative_error[row]:+.2f}".replace("-", "−")  # the minus sign
    assert cell(window, 18, sm.RE) == "−37.50" and cell(window, 19, sm.RE) == "+53.18"
    assert cell(window, 2, sm.IN_FIT) == "yes" and cell(window, 2, sm.LIMITS) == "yes"
    rings = drawn(window, "anchor point (fitted, not judged)")
    assert len(rings) == 1
    x, y = rings[0].getData()
    log_x = window.curve_view.log_axis.isChecked()
    assert log_x  # 0.8 to 6000 pg/mL: the view chooses a log concentration axis
    np.testing.assert_allclose(sorted(10 ** x), [0.8, 0.8, 6000.0, 6000.0], rtol=1e-14)
    np.testing.assert_allclose(10 ** y, cal.response[[0, 1, 18, 19]], rtol=1e-14)
    legend = [label.text for _, label in window.curve_view.curve_legend.items]
    assert "anchor point (fitted, not judged)" in legend
    hover = window.curve_view.hover_text_at(float(x[0]), float(y[0]))
    assert hover is not None and "(anchor point: fitted, not judged)" in hover


def test_clear_and_mark_anchor_points_with_a_reason_then_undo_and_redo(make_window, qtbot, answer_dialogs) -> None:
    window = make_window(CYTOKINE)
    count = len(window.session.run.audit)
    # clear the mark of the upper pair: rows 19 and 20 clicked, the button says what it will do
    click_rows(window, [18, 19])
    assert window.anchor_button.text() == "Clear the anchor poin&t mark of 2 standards…"
    answer_dialogs["choice"] = 0  # "marked as an anchor point by mistake"
    answer_dialogs["reason"] = "plate map shows A2 as the top calibrator"
    qtbot.mouseClick(window.anchor_button, Qt.MouseButton.LeftButton)
    settle(qtbot, window)
    title, prompt = answer_dialogs.seen[-1]
    assert title == "Clear anchor points"
    assert "A2-1 (row 19, nominal 6000 pg/mL); A2-2 (row 20, nominal 6000 pg/mL)" in prompt
    # the refit is shown before the change is made: the same curve, judged over a wider range
    assert "after the change" in prompt
    preview = " ".join(re.sub(r"<[^>]+>", " ", prompt).split())
    # the range every output reports (LLOQ–ULOQ): the failing top level narrows it back to 3–1600
    assert "Calibrated range 3–1600 pg/mL (LLOQ–ULOQ) 3–1600 pg/mL (LLOQ–ULOQ, narrowed)" in preview
    # counted as the verdict counts them (anchor points are fitted, never judged)
    assert "Standards within limits 16 of 16 16 of 18 Verdict" in preview
    assert anchors(window) == ["A1-1", "A1-2"]
    entry = window.session.run.audit[-1]
    assert len(window.session.run.audit) == count + 1 and entry.action == "anchor_points_cleared"
    assert entry.details == {"analyte": "cytokine", "standards": ["A2-1", "A2-2"],
                             "reason": "marked as an anchor point by mistake: plate map shows A2 as the top calibrator"}
    assert entry.analyst == "Robin Example"
    assert entry_words(entry).startswith("cleared the anchor-point mark of standard(s) A2-1, A2-2 of cytokine")
    # judged now: both fail the ±25 % of the top level, which the table and the verdict say
    assert cell(window, 18, sm.IN_FIT) == "yes" and cell(window, 18, sm.LIMITS) == "NO"
    assert cell(window, 19, sm.LIMITS) == "NO"
    assert "2 anchor point(s) fitted but not judged" in window.verdict.text() or \
        "16 of 18" in " ".join(window.session.result.analytes[0].verdict.reasons)
    assert "the highest level (6000) fails" in " ".join(window.session.result.analytes[0].verdict.reasons)
    assert window.session.result.analytes[0].calibration.calibrated_range == (3.0, 6000.0)
    assert len(drawn(window, "anchor point (fitted, not judged)")[0].getData()[0]) == 2
    # the selection stays on the two rows: the same button now marks them again, from the Edit menu
    assert window.anchor_button.text() == "Mark 2 standards as anchor poin&ts…"
    answer_dialogs["choice"] = None  # "other (describe below)"
    answer_dialogs["reason"] = "reread the plate map: A2 is an anchor after all"
    window.actions_by_name["anchor"].trigger()
    settle(qtbot, window)
    assert answer_dialogs.last_title == "Mark anchor points"
    assert anchors(window) == ["A1-1", "A1-2", "A2-1", "A2-2"]
    assert window.session.run.audit[-1].action == "anchor_points_marked"
    assert window.session.run.audit[-1].details["reason"] == "reread the plate map: A2 is an anchor after all"
    assert cell(window, 19, sm.LIMITS) == "anchor point, not judged"
    assert window.session.result.analytes[0].accepted
    # Undo names the change and takes it back; Redo makes it again; both are audited
    assert window.undo_action.text() == "&Undo Mark A2-1, A2-2 as anchor points"
    window.actions_by_name["undo"].trigger()
    settle(qtbot, window)
    assert anchors(window) == ["A1-1", "A1-2"] and cell(window, 19, sm.LIMITS) == "NO"
    assert window.session.run.audit[-1].action == "change_undone"
    assert window.undo_action.text() == "&Undo Clear the anchor point mark of A2-1, A2-2"
    assert window.redo_action.text() == "&Redo Mark A2-1, A2-2 as anchor points"
    window.actions_by_name["redo"].trigger()
    settle(qtbot, window)
    assert anchors(window) == ["A1-1", "A1-2", "A2-1", "A2-2"]
    assert window.session.run.audit[-1].action == "change_redone"


def test_a_standard_inside_the_range_is_refused_in_the_fits_words(make_window, qtbot, answer_dialogs) -> None:
    window = make_window(CYTOKINE)
    count = len(window.session.run.audit)
    click_rows(window, [8])  # S4-1, 45 pg/mL, in the middle of the curve
    assert window.anchor_button.text() == "Mark S4-1 as anchor poin&t…"
    qtbot.mouseClick(window.anchor_button, Qt.MouseButton.LeftButton)
    settle(qtbot, window)
    title, text = answer_dialogs.seen[-1]
    assert title == "Mark anchor points"
    assert text.startswith("Not marked: standard(s) S4-1 of cytokine. The fit refuses it: anchor points: the standard at "
                           "concentration 45 is marked as an anchor point but lies within the range of the "
                           "calibration standards (3 to 1600)")
    assert len(window.session.run.audit) == count and anchors(window) == ["A1-1", "A1-2", "A2-1", "A2-2"]
    assert not window.undo_action.isEnabled()


def test_a_straight_line_has_no_anchor_points(make_window, qtbot, answer_dialogs) -> None:
    window = make_window(NITRATE)
    count = len(window.session.run.audit)
    click_rows(window, [20])
    window.actions_by_name["anchor"].trigger()
    settle(qtbot, window)
    title, text = answer_dialogs.seen[-1]
    assert title == "Mark anchor points"
    assert "The fit refuses it: anchor points: a straight line y = b0 + b1·x has no asymptotes to anchor; anchor " \
           "points belong to the logistic curves (4pl, 5pl)." in text
    assert len(window.session.run.audit) == count
    assert not any(s.anchor for s in window.session.run.analytes[0].standards)


def test_nothing_selected_or_an_excluded_standard_is_said_in_the_status_bar(make_window, qtbot, answer_dialogs) -> None:
    window = make_window(CYTOKINE)
    window.standards_view.clearSelection()
    window.standards_view.setCurrentIndex(window.standards_model.index(-1, -1))
    window._update_buttons()
    assert not window.anchor_button.isEnabled()
    count = len(window.session.run.audit)
    window.actions_by_name["anchor"].trigger()
    assert "Select one or more standards" in window.statusBar().currentMessage()
    # an excluded standard is not marked: it is not in the fit
    click_rows(window, [17])
    answer_dialogs["reason"] = "bubble in well H2"
    qtbot.mouseClick(window.exclude_button, Qt.MouseButton.LeftButton)
    settle(qtbot, window)
    count = len(window.session.run.audit)
    click_rows(window, [17])
    window.actions_by_name["anchor"].trigger()
    assert "S8-2 of cytokine are excluded from the fit" in window.statusBar().currentMessage()
    assert len(window.session.run.audit) == count
