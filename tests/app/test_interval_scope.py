"""The results table's interval column says what the interval covers."""

from __future__ import annotations

from PySide6.QtCore import Qt

from curvewright.app import results_model as rm
from curvewright.core.inverse import INTERVAL_SCOPE_NOTE
from tests.app.conftest import ROOT


def test_interval_column_tooltip_says_it_is_not_the_full_uncertainty(make_window) -> None:
    window = make_window(ROOT / "sample_runs" / "nitrate_water_linear.json")
    model = window.results_model
    assert "interval" in model.headerData(rm.INTERVAL, Qt.Orientation.Horizontal)
    tip = model.headerData(rm.INTERVAL, Qt.Orientation.Horizontal, Qt.ItemDataRole.ToolTipRole)
    assert tip == INTERVAL_SCOPE_NOTE and "not the full measurement uncertainty" in tip
