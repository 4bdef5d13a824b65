"""The model-evidence panel shows a lack-of-fit p below 1 whose three figures would read 1 as "> 0.999",
as the command's text, the workbook and the record do (tests/test_cli_p_near_one.py holds the same tin
standards and where the p comes from)."""

from __future__ import annotations

from tests.app.test_curves_in_app import row_of
from tests.test_cli_p_near_one import STANDARDS


def test_the_evidence_panel_shows_a_p_near_one_as_above_0_999(make_window, qtbot, import_csv, answer_dialogs) -> None:
    from curvewright.app.evidence_panel import HEADERS

    window = make_window(None)
    import_csv(window, standards=STANDARDS)
    window.bottom_tabs.setCurrentWidget(window.evidence_panel)
    table = window.evidence_panel.table
    qtbot.waitUntil(lambda: table.rowCount() > 0, timeout=20000)
    row = row_of(table, "linear", "none")
    assert table.item(row, HEADERS.index("Lack-of-fit p")).text() == "> 0.999"
    candidate = next(c for c in window.evidence_panel.comparison.candidates
                     if (c.model.value, c.weighting.value) == ("linear", "none"))
    assert 0.9995 < candidate.lack_of_fit_p < 1.0
