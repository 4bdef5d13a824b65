"""The Qt bindings behave: drawing does not disturb Python's own objects."""

from __future__ import annotations

import sys

import pyqtgraph as pg


def test_drawing_keeps_references_to_true(qtbot) -> None:
    # PySide6 6.12.0 decremented the reference count of True for every pyqtgraph item created, which
    # crashes the interpreter sooner or later on Python 3.11 (pyproject.toml keeps that release out).
    widget = pg.PlotWidget()
    qtbot.addWidget(widget)
    plot = widget.getPlotItem()
    before = sys.getrefcount(True)
    for _ in range(50):
        plot.addItem(pg.PlotDataItem([1, 2, 3], [3, 1, 2]))
        plot.clear()
    assert abs(sys.getrefcount(True) - before) < 20
