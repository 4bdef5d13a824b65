"""The curve view's axes lay their tick and grid lines over the plot from an image
(``curve_view._GridAxis``); the view must look pixel for pixel as pyqtgraph's own axes draw it, on
every demo run, linear and log axes (whose minor grid lines are close together), at several window
sizes, and after an edit (pytest-qt, offscreen)."""

from __future__ import annotations

import pyqtgraph as pg
import pytest
from PySide6.QtGui import QPicture

from curvewright.app import curve_view
from curvewright.app import standards_model as sm
from tests.app.conftest import DEMOS, settle


def axes(view):  # type: ignore[no-untyped-def]
    return [plot.getAxis(side) for plot in (view.curve_plot, view.lower_plot) for side in ("left", "bottom")]


def drawn(qtbot, view, monkeypatch, *, as_pyqtgraph: bool):  # type: ignore[no-untyped-def]
    """The view as painted now, its axes drawn afresh either by pyqtgraph's own AxisItem.paint (from
    its own AxisItem.generateDrawSpecs) or by the view's axes."""
    with monkeypatch.context() as patch:
        if as_pyqtgraph:  # pyqtgraph's drawing from its own working out
            patch.setattr(curve_view._GridAxis, "paint", pg.AxisItem.paint)
            patch.setattr(curve_view._GridAxis, "generateDrawSpecs", pg.AxisItem.generateDrawSpecs)
        for axis in axes(view):
            axis.picture = None
        return view.grab().toImage()


def laid_over(monkeypatch) -> list:  # type: ignore[type-arg]
    """Notes each axis painted through its image of lines (True) or as its picture (False)."""
    used: list = []  # type: ignore[type-arg]
    paint_parts = curve_view._GridAxis._paint_parts

    def noting(self, *args):  # type: ignore[no-untyped-def]
        done = paint_parts(self, *args)
        used.append((self, done))
        return done

    monkeypatch.setattr(curve_view._GridAxis, "_paint_parts", noting)
    return used


def closest_lines(view) -> float:  # type: ignore[no-untyped-def]
    """The smallest distance between two neighbouring tick or grid lines of any axis drawn through its image."""
    from PySide6.QtGui import QImage, QPainter

    image = QImage(4, 4, QImage.Format.Format_ARGB32_Premultiplied)
    closest = float("inf")
    for axis in axes(view):
        painter = QPainter(image)
        try:
            specs = axis.generateDrawSpecs(painter)
        finally:
            painter.end()
        if specs is None or axis._split(*specs) is None:
            continue
        across = sorted((a.y() if axis.orientation == "left" else a.x()) for _, a, _ in specs[1])
        closest = min([closest] + [b - a for a, b in zip(across, across[1:])])
    return closest


@pytest.mark.parametrize("path", DEMOS, ids=[p.stem for p in DEMOS])
def test_the_axes_look_as_pyqtgraph_draws_them(make_window, qtbot, monkeypatch, path) -> None:
    window = make_window(path)
    view = window.curve_view
    used = laid_over(monkeypatch)
    closest = float("inf")
    for size in ((1300, 820), (1111, 777), (1457, 901)):
        window.resize(*size)
        for log in (False, True):
            view.log_axis.setChecked(log)
            qtbot.wait(10)
            ours = drawn(qtbot, view, monkeypatch, as_pyqtgraph=False)
            theirs = drawn(qtbot, view, monkeypatch, as_pyqtgraph=True)
            assert ours == theirs, (path.stem, size, log)
            closest = min(closest, closest_lines(view))
    # every axis was drawn through its image, at least once
    assert {id(axis) for axis, done in used if done} == {id(axis) for axis in axes(view)}
    assert closest >= 1.5


def test_close_grid_lines_and_an_edit_look_the_same(make_window, qtbot, monkeypatch, answer_dialogs) -> None:
    """A log axis's minor grid lines under two pixels apart, and the axes after an edit moved the
    response axis."""
    window = make_window(next(p for p in DEMOS if "weighted" in p.stem))
    view = window.curve_view
    view.log_axis.setChecked(True)
    seen_close = False
    for height in range(560, 900, 23):
        window.resize(1000, height)
        qtbot.wait(5)
        gap = closest_lines(view)
        if 1.5 <= gap < 2.0:
            seen_close = True
            assert drawn(qtbot, view, monkeypatch, as_pyqtgraph=False) == drawn(qtbot, view, monkeypatch, as_pyqtgraph=True)
    assert seen_close, "no size gave grid lines between 1.5 and 2 pixels apart"
    model = window.standards_model
    session = window.session
    row = 3
    old = float(model.standards[row].response.value)
    analyte = window.current_analyte()
    model.setData(model.index(row, sm.RESP), f"{old * 1.4:.6g}")  # the reason asked for is answered
    settle(qtbot, window)
    assert float(session.run.analyte(analyte).standards[row].response.value) == pytest.approx(old * 1.4, rel=1e-5)
    assert drawn(qtbot, view, monkeypatch, as_pyqtgraph=False) == drawn(qtbot, view, monkeypatch, as_pyqtgraph=True)


def test_where_the_image_cannot_be_laid_over_the_axes_draw_pyqtgraphs_picture(make_window, qtbot, monkeypatch) -> None:
    """An axis whose lines can be laid over as an image keeps its whole picture undrawn until it is
    played: where the image is not laid over (here a painter that antialiases; also a printer or a
    picture) the picture is drawn then, and the view looks as pyqtgraph draws it; on the screen the
    axis still lays its image over."""
    from PySide6.QtGui import QPainter

    window = make_window(next(p for p in DEMOS if "weighted" in p.stem))
    window.resize(1457, 901)  # a curve plot tall enough for its log axis' minor grid lines to lie apart
    qtbot.wait(20)
    view = window.curve_view
    view.graphics.grab()  # recorded for the screen: the lines in an image, the whole picture left undrawn
    assert all(axis._parts[1] is not None and axis._parts[2] is not None for axis in axes(view))
    empty = [axis.picture.size() for axis in axes(view)]
    used = laid_over(monkeypatch)
    view.graphics.setRenderHint(QPainter.RenderHint.Antialiasing, True)
    for axis in axes(view):
        axis.update()
    view.graphics.grab()
    assert used and not any(done for _axis, done in used)  # the whole picture played
    assert all(axis.picture.size() > size for axis, size in zip(axes(view), empty))  # drawn when played
    assert drawn(qtbot, view, monkeypatch, as_pyqtgraph=False) == drawn(qtbot, view, monkeypatch, as_pyqtgraph=True)
    # an axis once played whole keeps its parts, and lays its image over where it can
    view.graphics.setRenderHint(QPainter.RenderHint.Antialiasing, False)
    pictures = [axis.picture for axis in axes(view)]
    used.clear()
    for axis in axes(view):
        axis.update()
    view.graphics.grab()
    assert [axis.picture for axis in axes(view)] == pictures
    assert {id(axis) for axis, done in used if done} == {id(axis) for axis in axes(view)}
    assert drawn(qtbot, view, monkeypatch, as_pyqtgraph=False) == drawn(qtbot, view, monkeypatch, as_pyqtgraph=True)


def test_the_comparison_sees_the_grid(make_window, qtbot, monkeypatch) -> None:
    """Without its tick and grid lines the view no longer looks as pyqtgraph draws it: the
    comparisons above would see a line drawn wrong."""
    window = make_window(DEMOS[0])
    view = window.curve_view
    split = curve_view._GridAxis._split

    def without_lines(self, *specs):  # type: ignore[no-untyped-def]
        parts = split(self, *specs)
        return None if parts is None else (parts[0], QPicture(), parts[2], parts[3])

    theirs = drawn(qtbot, view, monkeypatch, as_pyqtgraph=True)
    monkeypatch.setattr(curve_view._GridAxis, "_split", without_lines)
    assert drawn(qtbot, view, monkeypatch, as_pyqtgraph=False) != theirs


@pytest.mark.parametrize("path", DEMOS, ids=[p.stem for p in DEMOS])
def test_an_edit_paints_the_plots_once(make_window, qtbot, path) -> None:
    """The bounds of the lines across the view and the shaded ranges are worked out before the
    paint, so that working them out does not mark the plot changed and paint it a second time. (The
    reason is given without a dialog here: a dialog that opens and closes has the window painted
    again, as any window that another covered.)"""
    from PySide6.QtCore import QEvent, QObject

    window = make_window(path)
    viewport = window.curve_view.graphics.viewport()
    paints: list[int] = []

    class Count(QObject):
        def eventFilter(self, obj, event):  # type: ignore[no-untyped-def]  # noqa: N802 - Qt override
            if event.type() == QEvent.Type.Paint:
                paints.append(1)
            return False

    counter = Count()
    viewport.installEventFilter(counter)
    model = window.standards_model
    model.reason_provider = lambda _what: "re-read from the instrument's record"
    row = next(r for r, s in enumerate(model.standards) if s.response.is_number and s.included)
    from curvewright.app import figures

    wide = figures.wide_range(window.curve_view.analyte)  # shown on a log axis whatever the box said
    for log, factor in ((True, 1.05),) if wide else ((False, 1.05), (True, 1.1)):
        window.curve_view.log_axis.setChecked(log)
        qtbot.wait(500)  # the window's own first paints are over
        window.session.last_analysis_work_seconds = 0.0  # analysed at once, on this thread
        paints.clear()
        value = float(window.session.run.analyte(window.current_analyte()).standards[row].response.value)
        model.setData(model.index(row, sm.RESP), f"{value * factor:.6g}")
        settle(qtbot, window)
        qtbot.wait(100)
        assert len(paints) == 1, (path.stem, log, len(paints))
    viewport.removeEventFilter(counter)


def test_edits_draw_no_symbol_again(make_window, qtbot) -> None:
    """The points' symbols are drawn once: after many edits each set of points still has the one
    symbol it had (pyqtgraph made a new brush with each new data, and drew and kept the symbol
    again for it)."""
    window = make_window(next(p for p in DEMOS if "weighted" in p.stem))
    model = window.standards_model
    model.reason_provider = lambda _what: "re-read from the instrument's record"
    points = [item.scatter for kept in (window.curve_view.curve_items, window.curve_view.lower_items)
              for item in kept.items if isinstance(item, pg.PlotDataItem) and item.opts["symbol"] is not None]
    before = [len(scatter.fragmentAtlas) for scatter in points]
    assert max(before) == 1
    value = float(model.standards[2].response.value)
    for k in range(8):
        model.setData(model.index(2, sm.RESP), f"{value * (1 + 0.01 * (k + 1)):.6g}")
        settle(qtbot, window)
    assert [len(scatter.fragmentAtlas) for scatter in points] == before


def test_items_whose_values_did_not_change_are_not_given_them_again(make_window, qtbot, monkeypatch) -> None:
    """A response edited moves no acceptance limit: the limit lines keep their data (pyqtgraph would
    work them out anew and mark them changed), and the plot still looks as drawn anew (the pixel
    comparisons in test_curve_items.py)."""
    window = make_window(next(p for p in DEMOS if "weighted" in p.stem))
    lower = window.curve_view.lower_items
    given: list = []  # type: ignore[type-arg]
    set_data = pg.PlotDataItem.setData

    def noting(self, *args, **kwargs):  # type: ignore[no-untyped-def]
        given.append(self)
        return set_data(self, *args, **kwargs)

    monkeypatch.setattr(pg.PlotDataItem, "setData", noting)
    assert lower.limit_upper.isVisible()
    limits_before = (lower.limit_upper.xData.copy(), lower.limit_upper.yData.copy())
    model = window.standards_model
    model.reason_provider = lambda _what: "re-read from the instrument's record"
    value = float(model.standards[2].response.value)
    model.setData(model.index(2, sm.RESP), f"{value * 1.03:.6g}")
    settle(qtbot, window)
    assert lower.passing in given and window.curve_view.curve_items.curve in given  # what moved was given its values
    assert lower.limit_upper not in given and lower.limit_lower not in given
    assert (lower.limit_upper.xData == limits_before[0]).all() and (lower.limit_upper.yData == limits_before[1]).all()
