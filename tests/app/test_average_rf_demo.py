"""The environmental demo in the app: the average relative response factor, its %RSD, the checks, the leachate."""

from __future__ import annotations

from curvewright.core.run_analysis import analyse_run
from curvewright.io.run_document import open_run
from tests.app.conftest import ROOT, settle

DEMO = ROOT / "sample_runs" / "volatiles_water_average_rf.json"


def test_curve_view_shows_equation_mean_rrf_and_its_rsd(make_window, qtbot) -> None:
    engine = analyse_run(open_run(DEMO).run)
    window = make_window(DEMO)
    assert "Run ACCEPTED" in window.verdict.text()
    for index, a in enumerate(engine.analytes):
        window.analyte_box.setCurrentIndex(index)
        settle(qtbot, window)
        words = window.curve_view.curve_words.text()
        rf = a.calibration.response_factors
        assert words.startswith("average response factor y = RF·x")
        assert a.calibration.equation(6) in words
        assert f"mean RRF = {rf.mean:.6g} (standard error {rf.standard_error:.3g}), RRF %RSD = {rf.rsd_percent:.3g} %" in words


def test_evidence_recommends_the_average_rf_and_says_why(make_window, qtbot) -> None:
    window = make_window(DEMO)
    window.bottom_tabs.setCurrentWidget(window.evidence_panel)
    settle(qtbot, window)
    qtbot.waitUntil(lambda: window.evidence_panel.table.rowCount() > 0, timeout=20000)
    panel = window.evidence_panel
    assert panel.table.item(0, 0).text() == "average-rf"
    assert panel.table.item(0, panel.table.columnCount() - 2).text() == "★ recommended"
    assert "%RSD is" in panel.reasons.toPlainText() and "within the profile's 20 %" in panel.reasons.toPlainText()


def test_the_leachate_is_drawn_by_standard_additions(make_window, qtbot) -> None:
    window = make_window(DEMO)
    window.bottom_tabs.setCurrentWidget(window.additions_view)
    settle(qtbot, window)
    assert window.additions_view.sample_box.itemText(0) == "Leachate LF-3 (standard additions)"
    assert "matrix-matched linearity" in window.additions_view.note.text()
