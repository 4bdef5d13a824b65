"""The screen shows the job's answer at common desktop sizes, with nothing cut or covered.

At 1366×768 and 1920×1080, for every demo run:
* each sample's id, reported value, interval and flags are visible without scrolling sideways;
* no header or cell of any table is cut short ("…");
* the legends sit beside the plots and never over a plotted point;
* the recommended candidate is in view in the model evidence.

The window is rendered to PNG for each size, demo and tab, in ``test-artefacts/screens/`` (kept
out of version control) so that a person can look at them.
"""

from __future__ import annotations

from pathlib import Path

import pytest
from PySide6.QtCore import QPointF, Qt
from PySide6.QtWidgets import QStyle, QTableView

from curvewright.app import results_model as rm
from tests.app.conftest import DEMOS, ROOT, settle

SIZES = ((1366, 768), (1920, 1080))
ARTEFACTS = ROOT / "test-artefacts" / "screens"


def text_width_needed(view: QTableView, text: str) -> int:
    """Pixels a cell needs to show ``text`` whole: the text and the item view's margins on both sides."""
    margin = view.style().pixelMetric(QStyle.PixelMetric.PM_FocusFrameHMargin, None, view) + 1
    return view.fontMetrics().horizontalAdvance(text) + 2 * margin


def cut_cells(view: QTableView) -> list[str]:
    """Headers and cells (every row, not just those in view) narrower than their text."""
    model = view.model()
    header = view.horizontalHeader()
    cut = []
    for c in range(model.columnCount()):
        if view.isColumnHidden(c):
            continue
        width = view.columnWidth(c)
        title = str(model.headerData(c, Qt.Orientation.Horizontal))
        if header.sectionSizeFromContents(c).width() > header.sectionSize(c):
            cut.append(f"header {title!r} ({header.sectionSize(c)} px)")
        for r in range(model.rowCount()):
            text = str(model.index(r, c).data() or "")
            if text and text_width_needed(view, text) > width:
                cut.append(f"row {r + 1}, {title}: {text!r} ({width} px)")
    return cut


def shoot(window, name: str) -> Path:
    ARTEFACTS.mkdir(parents=True, exist_ok=True)
    path = ARTEFACTS / f"{name}.png"
    assert window.grab().save(str(path)), path
    return path


@pytest.mark.parametrize("size", SIZES, ids=[f"{w}x{h}" for w, h in SIZES])
@pytest.mark.parametrize("demo", DEMOS, ids=[p.stem for p in DEMOS])
def test_the_answer_is_in_view_and_nothing_is_cut(demo, size, make_window, qtbot) -> None:
    window = make_window(demo)
    window.resize(*size)
    settle(qtbot, window)
    qtbot.wait(50)
    width, height = size
    assert window.width() == width and window.height() == height
    stem = f"{demo.stem}-{width}x{height}"

    # the results: id, reported value, interval and flags without scrolling sideways
    table = window.results_view.table
    assert table.horizontalScrollBar().value() == 0
    visible = table.viewport().width()
    for column in (rm.SAMPLE, rm.REPORTED, rm.INTERVAL, rm.FLAGS):
        right = table.columnViewportPosition(column) + table.columnWidth(column)
        assert 0 <= table.columnViewportPosition(column) and right <= visible, (
            f"{rm.COLUMNS[column]} ends at {right} px, the table shows {visible} px")
    for view in (window.standards_view, table):
        assert cut_cells(view) == [], view.accessibleName()
    shoot(window, f"{stem}-results")

    # the legends sit beside the plots: no point drawn under them
    curve = window.curve_view
    for plot, legend in ((curve.curve_plot, curve.curve_legend), (curve.lower_plot, curve.lower_legend)):
        assert legend.isVisible() and legend.items
        box = legend.sceneBoundingRect()
        assert not box.intersects(plot.getViewBox().sceneBoundingRect())
        assert box.right() <= curve.graphics.width() and box.bottom() <= curve.graphics.height()
        for item in plot.listDataItems():
            xs, ys = item.getData()
            for x, y in zip(xs if xs is not None else (), ys if ys is not None else ()):
                assert not box.contains(plot.getViewBox().mapViewToScene(QPointF(float(x), float(y))))

    # the samples table, and the recommended candidate of the model evidence in view
    window.left_tabs.setCurrentIndex(1)
    qtbot.wait(20)
    assert cut_cells(window.samples_view) == []
    window.bottom_tabs.setCurrentWidget(window.evidence_panel)
    qtbot.wait(20)
    evidence = window.evidence_panel.table
    row = next(r for r in range(evidence.rowCount()) if "recommended" in evidence.item(r, 9).text())
    rect = evidence.visualItemRect(evidence.item(row, 0))
    assert evidence.viewport().rect().contains(rect), "the recommended candidate is scrolled out of view"
    assert cut_cells(evidence) == []
    shoot(window, f"{stem}-evidence")
    window.bottom_tabs.setCurrentWidget(window.influence_view)
    qtbot.wait(20)
    influence = window.influence_view
    assert not influence.legend.sceneBoundingRect().intersects(influence.plot.getViewBox().sceneBoundingRect())
    shoot(window, f"{stem}-influence")
