"""The model evidence on screen when no candidate is acceptable because the quadratic lacks fit too.

Invented scenario (the Harrowgate zinc standards of ``tests/test_cli_quadratic_lacks_fit.py``, where
the lack-of-fit p values are checked against statsmodels): the straight line is rejected and the
quadratic lacks fit, so the evidence panel marks no candidate recommended, says why first, and a
quadratic chosen from it asks for a reason and is recorded with no recommendation beside it.
"""

from __future__ import annotations

from PySide6.QtCore import Qt

from tests.app.conftest import settle
from tests.test_cli_quadratic_lacks_fit import zinc_run_document


def test_evidence_panel_recommends_no_quadratic_that_lacks_fit(make_window, qtbot, answer_dialogs, tmp_path) -> None:
    window = make_window(zinc_run_document(tmp_path / "zinc.json"))
    window.bottom_tabs.setCurrentWidget(window.evidence_panel)
    panel = window.evidence_panel
    assert panel.comparison.recommendation is None
    marks = [panel.table.item(r, 9).text() for r in range(panel.table.rowCount())]
    assert marks == [""] * len(marks)
    assert panel.reasons.toPlainText().startswith(
        "• no candidate is acceptable, so none is recommended: the quadratic (unweighted (ordinary least squares)) "
        "is rejected by its lack-of-fit test (p = 7.49 × 10⁻⁷)")  # the panel's plain text gives no-break spaces as spaces
    assert "the quadratic is recommended" not in panel.reasons.toPlainText()

    panel.select("quadratic", "none")
    answer_dialogs["reason"] = "cubic rise above 8 mg/L; the range is to be narrowed in the next batch"
    qtbot.mouseClick(panel.use_button, Qt.MouseButton.LeftButton)
    settle(qtbot, window)
    asked = answer_dialogs.seen[-1][1]
    assert "No model is recommended for zinc: no candidate is acceptable" in asked
    entry = window.session.run.audit[-1]
    assert entry.action == "model_chosen" and entry.details["new"] == ["quadratic", "none"]
    assert entry.details["recommended"] is None  # the workbook's and the record's audit trail print this entry
