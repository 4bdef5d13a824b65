"""The model evidence on screen when the ligand-binding profile's logistic curve lacks fit.

Invented scenario (the Fernhollow cytokine plate of ``tests/test_cli_logistic_lacks_fit.py``, where the
4PL's lack-of-fit p is checked with scipy): the evidence panel marks no candidate recommended and says
why first, with the p value, and a 4PL chosen from it asks for a reason and is recorded with no
recommendation beside it (the entry the workbook's and the record's audit trail print).
"""

from __future__ import annotations

from PySide6.QtCore import Qt

from tests.app.conftest import settle
from tests.test_cli_logistic_lacks_fit import plate_run_document


def test_evidence_panel_recommends_no_logistic_curve_that_lacks_fit(make_window, qtbot, answer_dialogs, tmp_path) -> None:
    window = make_window(plate_run_document(tmp_path / "plate.json"))
    window.bottom_tabs.setCurrentWidget(window.evidence_panel)
    panel = window.evidence_panel
    assert panel.comparison.recommendation is None
    marks = [panel.table.item(r, 9).text() for r in range(panel.table.rowCount())]
    assert marks == [""] * len(marks)
    assert panel.reasons.toPlainText().startswith(
        "• no candidate is acceptable, so none is recommended: the 4PL logistic curve (weighted 1/y²) "
        "is rejected by its lack-of-fit test (p = 1.22 × 10⁻⁹)")  # the panel's plain text gives no-break spaces as spaces

    panel.select("4pl", "1/y^2")
    answer_dialogs["reason"] = "distortion above 32 pg/mL under investigation; reported for information only"
    qtbot.mouseClick(panel.use_button, Qt.MouseButton.LeftButton)
    settle(qtbot, window)
    asked = answer_dialogs.seen[-1][1]
    assert "No model is recommended for cytokine: no candidate is acceptable" in asked
    entry = window.session.run.audit[-1]
    assert entry.action == "model_chosen" and entry.details["new"] == ["4pl", "1/y^2"]
    assert entry.details["recommended"] is None
