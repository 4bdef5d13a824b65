"""The curve view's axes work out their drawing (``curve_view._GridAxis.generateDrawSpecs``) with
less Python per tick than pyqtgraph's ``AxisItem.generateDrawSpecs``; the axis line, every tick (pen
and ends) and every label (box, flags and text) must be the same numbers, in the same order, as
pyqtgraph's: on every demo run's plots, linear and log, and on axes of every side with automatic
and given ticks, grid or not, over many ranges and sizes (pytest-qt, offscreen)."""

from __future__ import annotations

import numpy as np
import pyqtgraph as pg
import pytest
from PySide6.QtGui import QImage, QPainter

from curvewright.app import curve_view
from tests.app.conftest import DEMOS


def _points(*points) -> tuple:  # type: ignore[no-untyped-def, type-arg]
    return tuple((p.x(), p.y()) for p in points)


def _comparable(specs):  # type: ignore[no-untyped-def]
    """The specs as plain values: pens compared by Qt's equality (colour, width, style...)."""
    if specs is None:
        return None
    (pen, a, b), ticks, texts = specs
    return ((pen, _points(a, b)), [(tick_pen, _points(p, q)) for tick_pen, p, q in ticks],
            [((r.x(), r.y(), r.width(), r.height()), int(flags), text) for r, flags, text in texts])


def _specs(axis, how):  # type: ignore[no-untyped-def]
    image = QImage(8, 8, QImage.Format.Format_ARGB32_Premultiplied)
    painter = QPainter(image)
    try:
        return _comparable(how(axis, painter))
    finally:
        painter.end()


def assert_same_specs(axis) -> int:  # type: ignore[no-untyped-def]
    """The axis' own specs equal pyqtgraph's, worked out in the same state; the number of labels."""
    theirs = _specs(axis, pg.AxisItem.generateDrawSpecs)
    # working them out may size the axis to its labels: again until the axis keeps its size
    for _ in range(4):
        again = _specs(axis, pg.AxisItem.generateDrawSpecs)
        if again == theirs:
            break
        theirs = again
    ours = _specs(axis, curve_view._GridAxis.generateDrawSpecs)
    assert ours == theirs, (axis.orientation, axis.range)
    assert _specs(axis, pg.AxisItem.generateDrawSpecs) == theirs  # and it left the axis as pyqtgraph does
    return 0 if theirs is None else len(theirs[2])


@pytest.mark.parametrize("path", DEMOS, ids=[p.stem for p in DEMOS])
def test_the_views_axes_work_out_what_pyqtgraph_works_out(make_window, qtbot, path) -> None:
    window = make_window(path)
    view = window.curve_view
    labels = 0
    for log in (False, True):
        view.log_axis.setChecked(log)
        qtbot.wait(10)
        for plot in (view.curve_plot, view.lower_plot):
            for side in ("left", "bottom"):
                axis = plot.getAxis(side)
                assert type(axis) is curve_view._GridAxis
                labels += assert_same_specs(axis)
    assert labels > 0  # labels were compared, not only empty axes


def test_axes_of_every_side_over_many_ranges(qtbot) -> None:
    rng = np.random.default_rng(15)
    layer = curve_view._GridLayer()
    widget = pg.GraphicsLayoutWidget()
    qtbot.addWidget(widget)
    axes = {side: curve_view._GridAxis(side, layer) for side in ("left", "bottom", "right", "top")}
    plot = widget.addPlot(axisItems=axes)
    for side in axes:
        plot.showAxis(side)
    widget.resize(640, 420)
    widget.show()
    qtbot.waitExposed(widget)
    labels = 0
    for k in range(60):
        grid = bool(k % 2)
        plot.showGrid(x=grid, y=grid, alpha=0.15 + 0.5 * rng.random())
        low = float(rng.choice([-1.0, 1.0]) * 10.0 ** rng.uniform(-6, 6))
        width = float(10.0 ** rng.uniform(-7, 7))
        plot.setXRange(low, low + width, padding=0)
        plot.setYRange(-low, -low + width * rng.uniform(0.1, 10), padding=0)
        if k % 5 == 0:  # given ticks, as the log axes' decades are given
            for side in ("left", "right"):
                plot.getAxis(side).setTicks([[(v, f"{v:g}") for v in np.linspace(-low, -low + width, 6)],
                                             [(v, "") for v in np.linspace(-low, -low + width, 21)]])
        else:
            for side in ("left", "right"):
                plot.getAxis(side).setTicks(None)
        if k % 7 == 3:
            axes["top"].setStyle(tickAlpha=0.4, stopAxisAtTick=(True, True))
            axes["right"].setStyle(tickAlpha=90)
        if k % 7 == 4:
            axes["top"].setStyle(tickAlpha=None, stopAxisAtTick=(False, False))
            axes["right"].setStyle(tickAlpha=None)
        if k % 11 == 6:
            widget.resize(int(rng.integers(200, 900)), int(rng.integers(150, 700)))
        qtbot.wait(1)
        for axis in axes.values():
            labels += assert_same_specs(axis)
    assert labels > 500
