"""The app with the nonlinear calibration curves: the invented immunoassay demo on its 4PL, choosing
the 5PL from the model evidence, and what the views show (pytest-qt, offscreen)."""

from __future__ import annotations

import numpy as np
from PySide6.QtCore import Qt

import curvewright as cw
from tests.app.conftest import ROOT, settle

CYTOKINE = ROOT / "sample_runs" / "cytokine_serum_4pl.json"


def row_of(table, model: str, weighting: str) -> int:
    return next(r for r in range(table.rowCount())
                if (table.item(r, 0).text(), table.item(r, 1).text()) == (model, weighting))


def test_immunoassay_demo_shows_its_4pl_and_the_logistic_evidence(make_window, qtbot) -> None:
    window = make_window(CYTOKINE)
    cal = window.session.result.analytes[0].calibration
    assert cal.model is cw.Model.FOUR_PL and cal.weighting is cw.Weighting.INVERSE_Y2
    assert cal.anchors.sum() == 4 and cal.calibrated_range == (3.0, 1600.0)
    window.bottom_tabs.setCurrentWidget(window.evidence_panel)
    table = window.evidence_panel.table
    recommended = row_of(table, "4pl", "1/y^2")
    assert "recommended" in table.item(recommended, 9).text()
    assert "● chosen" in table.item(recommended, 10).text()
    assert table.item(row_of(table, "5pl", "1/y^2"), 0).text() == "5pl"
    # the curve view draws the fitted 4PL across every standard, the anchor points included
    view = window.curve_view
    view.log_axis.setChecked(False)
    qtbot.wait(20)
    curve = next(item for item in view.curve_plot.listDataItems() if item.name() == "fitted curve")
    x_curve, y_curve = curve.getData()
    np.testing.assert_allclose(y_curve, cal.predict(x_curve), rtol=1e-12)
    assert x_curve.min() <= 0.8 and x_curve.max() >= 6000.0
    # a donor read beyond the upper asymptote is shown above the range, with no number and the reason
    model = window.results_model
    row = next(r for r in model.rows if r.sample_id == "Donor 035")
    assert row.reported_text.startswith("> ") and "(ULOQ" in row.reported_text, row.reported_text
    assert "asymptote" in model.description(row) and "re-assay the sample diluted" in model.description(row)


def test_choosing_the_5pl_from_the_evidence_panel(make_window, qtbot, answer_dialogs) -> None:
    window = make_window(CYTOKINE)
    window.bottom_tabs.setCurrentWidget(window.evidence_panel)
    table = window.evidence_panel.table
    table.selectRow(row_of(table, "5pl", "1/y^2"))
    answer_dialogs["reason"] = "validation study: the 5PL follows the asymmetry of this lot"
    qtbot.mouseClick(window.evidence_panel.use_button, Qt.MouseButton.LeftButton)
    settle(qtbot, window)
    analyte = window.session.run.analyte("cytokine")
    assert (analyte.model, analyte.weighting) == ("5pl", "1/y^2")
    cal = window.session.result.analytes[0].calibration
    assert cal.model is cw.Model.FIVE_PL and cal.coefficient_names == ("a", "b", "c", "d", "g")
    entry = window.session.run.audit[-1]
    assert entry.action == "model_chosen" and entry.details["recommended"] == ["4pl", "1/y^2"]
    # the app's numbers are the engine's: a fit of the same standards with the same anchor points
    standards = [s for s in analyte.standards if s.included]
    expected = cw.fit([s.concentration for s in standards], [s.response.value for s in standards], "5pl", "1/y^2",
                      anchor_points=[s.anchor for s in standards])
    np.testing.assert_allclose(cal.coefficients, expected.coefficients, rtol=1e-12)
    row = next(r for r in window.results_model.rows if r.sample_id == "Donor 032")
    q = expected.quantify([row.mean_response], replicates=len(row.replicate_responses))
    assert row.reported == float(q.estimate[0])
