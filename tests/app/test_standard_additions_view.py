"""The app shows each standard-addition series with its line extrapolated to zero response."""

from __future__ import annotations

import numpy as np
import pyqtgraph as pg
import pytest

from curvewright.core.run_analysis import analyse_run
from curvewright.io.run_document import dumps_run
from tests.app.conftest import settle
from tests.core.test_addition_series import invented_run


def test_the_additions_tab_draws_the_extrapolated_line(make_window, qtbot, tmp_path) -> None:
    path = tmp_path / "lead additions.json"
    path.write_text(dumps_run(invented_run()), encoding="utf-8")
    window = make_window(path)
    view = window.additions_view
    window.bottom_tabs.setCurrentWidget(view)
    settle(qtbot, window)
    assert [view.sample_box.itemText(i) for i in range(view.sample_box.count())] == ["River 4", "Flat"]
    river = analyse_run(invented_run()).analytes[0].additions[0].result
    lines = [item for item in view.plot.listDataItems() if item.opts.get("pen") is not None]
    xs = np.concatenate([item.getData()[0] for item in lines])
    # the line reaches back to the x-intercept, at minus the concentration, where the response is zero
    assert xs.min() == pytest.approx(-river.concentration, rel=1e-12)
    dashed = [item for item in lines if item.getData()[0].min() == xs.min()][0]
    assert dashed.getData()[1][0] == pytest.approx(0.0, abs=1e-9)
    assert any(isinstance(item, pg.ErrorBarItem) for item in view.plot.items)
    assert f"concentration a/b = {river.concentration:.5g} µg/L" in view.note.text()
    assert "matrix-matched linearity" in view.note.text()
    view.sample_box.setCurrentIndex(1)
    assert view.note.text().startswith("Flat: not extrapolated:")


def test_an_analyte_without_additions_says_so(make_window, qtbot) -> None:
    from tests.app.conftest import DEMOS

    window = make_window(DEMOS[0])
    window.bottom_tabs.setCurrentWidget(window.additions_view)
    settle(qtbot, window)
    assert window.additions_view.sample_box.count() == 0
    assert "was measured by standard additions" in window.additions_view.note.text()
