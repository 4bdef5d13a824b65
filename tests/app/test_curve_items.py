"""An edit redraws in place: the curve view keeps its plot items and gives them the new fit's data
(the same data the printed record's drawing functions draw), and the results table shows the new
values without a reset, keeping the analyst's selection (pytest-qt, offscreen). How long a redraw
takes is measured in ``benchmarks/bench_edit_redraw.py``."""

from __future__ import annotations

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import Qt

from curvewright.app import figures
from curvewright.app import results_model as rm
from curvewright.app import standards_model as sm
from curvewright.io.result_tables import display_number
from tests.app.conftest import DEMOS, settle

WEIGHTED = next(p for p in DEMOS if "weighted" in p.stem)


def drawn_by_the_record(window):  # type: ignore[no-untyped-def]
    """The curve plot as the record's drawing function draws the shown analyte on a fresh plot:
    its data items by legend name, and its interval bars."""
    view = window.curve_view
    plot = pg.PlotItem()
    legend = figures.new_legend()
    figures.draw_curve_with_anchors(plot, view.analyte, legend=legend, level=view.level, show_confidence=view.confidence.isChecked(),
                       show_prediction=view.prediction.isChecked(), log_x=view.log_axis.isChecked())
    named = {label.text: sample.item for sample, label in legend.items}
    bars = [item for item in plot.items if isinstance(item, pg.ErrorBarItem)]
    return named, bars


def type_into(qtbot, view, index, text: str) -> None:  # type: ignore[no-untyped-def]
    view.setCurrentIndex(index)
    view.edit(index)
    editor = view.focusWidget()
    editor.selectAll()
    qtbot.keyClicks(editor, text)
    qtbot.keyClick(editor, Qt.Key.Key_Return)


def test_an_edit_gives_the_kept_plot_items_new_data_and_keeps_the_results_selection(
        make_window, qtbot, answer_dialogs) -> None:
    window = make_window(WEIGHTED)
    view = window.curve_view
    kept = view.curve_items
    curve, standards, (bars, points) = kept.curve, kept.standards, next(iter(kept.samples.values()))
    items_before = list(view.curve_plot.items)
    curve_before = np.array(curve.yData, copy=True)
    window.bottom_tabs.setCurrentWidget(window.results_view)
    table = window.results_view.table
    table.selectRow(2)
    estimate_before = window.results_model.index(2, rm.ESTIMATE).data()

    # the analyst types a new response over the first standard's and gives the reason asked for
    model = window.standards_model
    old = float(model.standards[0].response.value)
    type_into(qtbot, window.standards_view, model.index(0, sm.RESP), f"{old * 1.5:.6g}")
    # the edit is committed from the event loop: wait for the run to hold it before waiting for its analysis
    qtbot.waitUntil(lambda: float(window.session.run.analytes[0].standards[0].response.value)
                    == float(f"{old * 1.5:.6g}"), timeout=10000)
    settle(qtbot, window)
    assert answer_dialogs.last_title == "Why does this value change?"

    # the same items, no item made or dropped, now holding the new fit's data
    assert view.curve_items.curve is curve and view.curve_items.standards is standards
    assert list(view.curve_plot.items) == items_before
    assert not np.array_equal(curve.yData, curve_before)
    named, record_bars = drawn_by_the_record(window)
    for text, item in (("fitted curve", curve), ("standard in the fit", standards), ("unknown with interval", points)):
        np.testing.assert_array_equal(item.xData, named[text].xData)
        np.testing.assert_array_equal(item.yData, named[text].yData)
    # all the unknowns' interval bars are one item, as the record draws them
    for key in ("x", "y", "left", "right"):
        np.testing.assert_array_equal(bars.opts[key], record_bars[0].opts[key])

    # the results show the new values; the selected row and its words stay with it
    shown = window.session.result.analyte(window.current_analyte()).samples
    estimate = window.results_model.index(2, rm.ESTIMATE).data()
    assert estimate == display_number(shown[2].estimate) and estimate != estimate_before
    assert [i.row() for i in table.selectionModel().selectedRows()] == [2]
    assert window.results_view.details.text() == window.results_model.description(shown[2])


def test_switching_the_lower_plot_keeps_its_tick_labels_unscaled(make_window, qtbot) -> None:
    """The residuals of a small response (thousandths) and the %RE (tens) share one plot: after switching
    back and forth its axis still labels the values themselves, with no hidden scale factor."""
    window = make_window(DEMOS[0])
    view = window.curve_view
    for index in (1, 0, 1, 0, 1):
        view.lower_kind.setCurrentIndex(index)
        qtbot.wait(20)
        view.graphics.grab()
        axis = view.lower_plot.getAxis("left")
        assert axis.autoSIPrefixScale == 1.0 and axis.labelUnitPrefix == ""


def test_the_view_looks_exactly_as_when_it_was_cleared_and_drawn_anew(make_window, qtbot, answer_dialogs) -> None:
    """The kept items are drawn pixel for pixel as the view was drawn when each redraw cleared the
    plots and drew them again with the record's drawing functions, through an edit and the view's
    options (the reference below is that way of drawing, on a view of the same size, less the tick
    scale that way could leave on an axis)."""
    from curvewright.app.curve_view import CurveView, _reset
    from curvewright.io.model_outputs import curve_words

    class DrawnAnew(CurveView):
        def redraw(self) -> None:
            _reset(self.curve_plot, self.curve_legend)
            _reset(self.lower_plot, self.lower_legend)
            a = self.analyte
            self.curve_words.setText(curve_words(a.calibration, a.analyte.uses_internal_standard))
            log_x = self.log_axis.isChecked()
            figures.draw_curve_with_anchors(self.curve_plot, a, legend=self.curve_legend, level=self.level,
                               show_confidence=self.confidence.isChecked(),
                               show_prediction=self.prediction.isChecked(), log_x=log_x)
            draw = figures.draw_relative_errors if self.lower_kind.currentIndex() == 0 else figures.draw_residuals
            draw(self.lower_plot, a, legend=self.lower_legend, log_x=log_x)
            for plot in (self.curve_plot, self.lower_plot):  # without the leftover tick scale (test below)
                for side in ("bottom", "left"):
                    axis = plot.getAxis(side)
                    if axis.autoSIPrefixScale != 1.0:
                        axis.autoSIPrefixScale, axis.labelUnitPrefix = 1.0, ""
                        axis._updateLabel()
            self._fit_legends()
            self.curve_plot.getViewBox().autoRange(padding=0.04)
            self.lower_plot.getViewBox().autoRange(padding=0.08)

    window = make_window(WEIGHTED)
    kept = CurveView()
    anew = DrawnAnew()
    for view in (kept, anew):
        qtbot.addWidget(view)
        view.resize(900, 640)
        view.show()
    qtbot.waitExposed(anew)

    def image(view):  # type: ignore[no-untyped-def]
        for _ in range(4):  # the axes size themselves to the tick labels they last painted
            qtbot.wait(5)
            view.graphics.grab()
        return view.graphics.grab().toImage()

    def both(step) -> None:  # type: ignore[no-untyped-def]
        for view in (kept, anew):
            step(view)
        assert image(kept) == image(anew)

    level = window.session.run.settings.confidence_level
    both(lambda v: v.show_analyte(window.session.result.analytes[0], level))
    model = window.standards_model
    type_into(qtbot, window.standards_view, model.index(4, sm.RESP), f"{float(model.standards[4].response.value) * 1.3:.5g}")
    settle(qtbot, window)
    both(lambda v: v.show_analyte(window.session.result.analytes[0], level))
    both(lambda v: v.log_axis.setChecked(not v.log_axis.isChecked()))
    both(lambda v: v.lower_kind.setCurrentIndex(1))
    both(lambda v: v.confidence.setChecked(False))
    both(lambda v: (v.confidence.setChecked(True), v.lower_kind.setCurrentIndex(0)))
    # a logistic curve with anchor points, ringed on the kept items as the record rings them
    from curvewright.core.run_analysis import analyse_run
    from curvewright.io.run_document import open_run

    immunoassay = analyse_run(open_run(next(p for p in DEMOS if p.stem.startswith("cytokine"))).run)
    assert immunoassay.analytes[0].calibration.anchors.any()
    both(lambda v: v.show_analyte(immunoassay.analytes[0], level))
    both(lambda v: v.log_axis.setChecked(not v.log_axis.isChecked()))
