"""Edit → redraw: a fast run is analysed at once, a slow one on the analysis thread without waiting
for a timer, and edits made while it runs are analysed together; long tables are fitted to the rows
in view and widen as wider rows scroll into view. How long a redraw takes is measured in
``benchmarks/bench_edit_redraw.py``."""

from __future__ import annotations

import numpy as np
from PySide6.QtCore import QAbstractTableModel, QModelIndex, Qt
from PySide6.QtGui import QStandardItem, QStandardItemModel

from curvewright.app import session as session_module
from curvewright.app.table_view import FIT_EVERY_ROW_UP_TO, FittedTableView, fit_columns
from curvewright.io import run_edits
from tests.app.conftest import DEMOS, settle

WEIGHTED = next(p for p in DEMOS if "weighted" in p.stem)


def changed_response(run, k: int):  # type: ignore[no-untyped-def]
    """The run with its first standard's response changed (a new value for each k), with a reason."""
    from dataclasses import replace

    from curvewright.core.run import Reading

    analyte = run.analytes[0]
    first = analyte.standards[0]
    changed = replace(first, response=Reading.of(float(first.response.value) * (1 + 0.001 * k)))
    return run_edits.update_standards(run, analyte.name, (changed, *analyte.standards[1:]), "typed",
                                      reason="re-read from the instrument")


def test_a_run_that_fits_within_a_frame_is_analysed_at_once(make_window, monkeypatch) -> None:
    window = make_window(WEIGHTED)
    session = window.session
    session.last_analysis_work_seconds = 0.0  # as if the last fit took less than a frame
    calls = []
    real = session_module.analyse_with_evidence
    monkeypatch.setattr(session_module, "analyse_with_evidence", lambda run: calls.append(run) or real(run))
    session.apply(changed_response(session.run, 1), "Change a response")
    # no event loop has run: the answer is already there, and the views show it
    assert calls == [session.run]
    assert not session.analysis_pending and session.result.run is session.run
    assert window.results_model.rowCount() > 0


def test_a_slow_run_goes_to_the_analysis_thread_and_a_burst_of_edits_is_analysed_together(
        qtbot, make_window, monkeypatch) -> None:
    window = make_window(WEIGHTED)
    session = window.session
    session.last_analysis_work_seconds = 1.0  # as if the last fit took a second
    analysed = []
    real = session_module.analyse_with_evidence
    monkeypatch.setattr(session_module, "analyse_with_evidence", lambda run: analysed.append(run) or real(run))
    for k in range(1, 6):
        session.apply(changed_response(session.run, k), "Change a response")
    assert session.analysis_pending  # started on the analysis thread, nothing waited for a timer
    settle(qtbot, window)
    # the first edit's run, then (once it answered) only the newest: never one analysis per edit
    assert len(analysed) <= 2 and analysed[-1] is session.run
    assert session.result.run is session.run


def test_time_an_analysis_spent_waiting_on_the_thread_does_not_send_the_next_one_there(
        qtbot, make_window, monkeypatch) -> None:
    # On the analysis thread the elapsed time also counts waiting (for the interpreter lock while the
    # GUI thread draws); the choice of thread goes by the analysis's own work, so a small run whose
    # answer was slow to arrive is analysed at once after the next edit, with no queued hop.
    import time

    window = make_window(WEIGHTED)
    session = window.session
    real = session_module.analyse_with_evidence

    def waiting(run):  # type: ignore[no-untyped-def]
        time.sleep(0.1)  # waits without working, as a thread waiting for the lock does
        return real(run)

    monkeypatch.setattr(session_module, "analyse_with_evidence", waiting)
    # a "frame" longer than this small run's work (a few ms) but shorter than the wait, so that the
    # check does not depend on how fast the machine is
    monkeypatch.setattr(session_module, "FRAME_SECONDS", 0.09)
    session.last_analysis_work_seconds = 1.0  # this edit goes to the analysis thread
    session.apply(changed_response(session.run, 1), "Change a response")
    assert session.analysis_pending
    settle(qtbot, window)
    assert session.last_analysis_seconds >= 0.1  # the status line shows the time it took to answer
    assert session.last_analysis_work_seconds <= session.last_analysis_seconds - 0.09  # the wait is not work
    monkeypatch.setattr(session_module, "analyse_with_evidence", real)
    session.apply(changed_response(session.run, 2), "Change a response")
    assert not session.analysis_pending and session.result.run is session.run  # answered at once


def table_of(texts: list[str]) -> QStandardItemModel:
    model = QStandardItemModel(len(texts), 2)
    for r, text in enumerate(texts):
        model.setItem(r, 0, QStandardItem(text))
        model.setItem(r, 1, QStandardItem("x"))
    return model


def needed(view: FittedTableView, text: str) -> int:
    return view.fontMetrics().horizontalAdvance(text)


def fitted_on_screen(qtbot, texts: list[str]) -> FittedTableView:  # type: ignore[no-untyped-def]
    """A 400 × 200 table view of one column of ``texts``, shown, with its columns fitted."""
    view = FittedTableView()
    qtbot.addWidget(view)
    view.setModel(table_of(texts))
    view.resize(400, 200)
    view.show()
    qtbot.waitExposed(view)
    fit_columns(view)
    return view


def test_a_short_table_is_fitted_to_every_row(qtbot) -> None:
    texts = ["a"] * (FIT_EVERY_ROW_UP_TO - 1) + ["a much longer sample name, far below the rows in view"]
    view = fitted_on_screen(qtbot, texts)
    assert view.columnWidth(0) >= needed(view, texts[-1])


def test_a_long_table_widens_as_wider_rows_scroll_into_view(qtbot) -> None:
    long_text = "a much longer sample name, far below the rows in view"
    texts = ["a"] * (5 * FIT_EVERY_ROW_UP_TO) + [long_text]
    view = fitted_on_screen(qtbot, texts)
    assert view.columnWidth(0) < needed(view, long_text)  # fitted to the rows in view only
    view.scrollToBottom()
    assert view.columnWidth(0) >= needed(view, long_text)  # widened once the row is in view
    view.scrollToTop()
    assert view.columnWidth(0) >= needed(view, long_text)  # and never narrowed again while scrolling


def test_a_hidden_long_table_is_fitted_when_shown(qtbot) -> None:
    texts = ["b" * 30] * (2 * FIT_EVERY_ROW_UP_TO)
    view = FittedTableView()
    qtbot.addWidget(view)
    view.setModel(table_of(texts))
    view.resize(500, 200)
    fit_columns(view)  # hidden: nothing measured yet
    assert view.fit_when_shown
    view.show()
    qtbot.waitExposed(view)
    assert not view.fit_when_shown and view.columnWidth(0) >= needed(view, texts[0])


class TextsModel(QAbstractTableModel):
    """A read-only table of texts that tells what its columns' widths depend on (``fit_key``), as
    the app's models do; counts the rows whose cells are asked for their texts."""

    def __init__(self, texts: list[str]) -> None:
        super().__init__()
        self.texts = texts
        self.asked: set[int] = set()

    def rowCount(self, parent: QModelIndex = QModelIndex()) -> int:  # noqa: N802
        return 0 if parent.isValid() else len(self.texts)

    def columnCount(self, parent: QModelIndex = QModelIndex()) -> int:  # noqa: N802
        return 0 if parent.isValid() else 2

    def data(self, index: QModelIndex, role: int = Qt.ItemDataRole.DisplayRole):  # type: ignore[no-untyped-def]
        if role == Qt.ItemDataRole.DisplayRole and index.isValid():
            self.asked.add(index.row())
            return self.texts[index.row()] if index.column() == 0 else "x"
        return None

    def fit_key(self, col: int, rows: range) -> tuple[str, ...]:
        return tuple(self.texts[r] if col == 0 else "x" for r in rows)


def shown_table(qtbot, texts: list[str], width: int, height: int) -> tuple[TextsModel, FittedTableView]:
    """A fitted table of one column of ``texts``, shown at ``width`` × ``height`` pixels."""
    model = TextsModel(texts)
    view = FittedTableView()
    qtbot.addWidget(view)
    view.setModel(model)
    view.resize(width, height)
    view.show()
    return model, view


def test_a_long_table_that_tells_its_texts_is_measured_only_when_a_wider_text_scrolls_into_view(qtbot) -> None:
    long_text = "a much longer sample name, far below the rows in view"
    texts = ["sample 12"] * (5 * FIT_EVERY_ROW_UP_TO) + ["s 1"] * 50 + [long_text]
    model, view = shown_table(qtbot, texts, 400, 200)
    qtbot.waitExposed(view)
    fit_columns(view)
    fitted = view.columnWidth(0)
    assert fitted >= needed(view, "sample 12") and fitted < needed(view, long_text)
    model.asked.clear()
    view.scrollTo(model.index(5 * FIT_EVERY_ROW_UP_TO + 10, 0))  # texts no wider than those fitted
    assert view.columnWidth(0) == fitted
    assert model.asked == set()  # no cell was measured (and none painted yet)
    view.scrollToBottom()  # the wider text comes into view: the column widens
    assert view.columnWidth(0) >= needed(view, long_text)
    # fitted again to the same rows at the top (after an analysis that changed nothing): back to the
    # width those rows need, and widened again when the wider text comes back into view
    view.scrollToTop()
    fit_columns(view)
    assert view.columnWidth(0) == fitted
    view.scrollToBottom()
    assert view.columnWidth(0) >= needed(view, long_text)


def test_after_edits_every_column_is_as_wide_as_qt_fits_it(qtbot, make_window) -> None:
    # The tables measure only their widest texts (and every cell in another font); each column must
    # come out exactly as wide as Qt's own fitting to every cell makes it.
    window = make_window(WEIGHTED)
    session = window.session
    analyte = session.run.analytes[0]
    excluded = analyte.standards[len(analyte.standards) // 2]
    session.apply(run_edits.exclude_standard(session.run, analyte.name, excluded.id, "pipetting error noted"),
                  f"Exclude {excluded.id}")
    settle(qtbot, window)
    session.apply(changed_response(session.run, 3), "Change a response")
    settle(qtbot, window)
    assert not window.standards_model.standards[len(analyte.standards) // 2].included
    for view in (window.standards_view, window.results_view.table):
        model = view.model()
        shown = [c for c in range(model.columnCount()) if not view.isColumnHidden(c)]
        for c in shown[:-1]:  # the last one also takes the room left
            fitted = view.columnWidth(c)
            view.resizeColumnToContents(c)
            assert fitted == view.columnWidth(c), (view.accessibleName(), model.headerData(c, Qt.Orientation.Horizontal))


def test_a_column_of_texts_is_fitted_as_qt_fits_it_whatever_the_texts(qtbot) -> None:
    # the widest texts decide; a text of several lines is measured by Qt, never judged by its length
    cases = [["12.5", "1.25e+03", "—", "no solution", ""],
             ["short", "a text of two lines\nand this is the second one, longer", "medium text here"],
             ["x\tin columns", "wider than the tabbed text", "ab"],
             ["", ""], ["0.001", "0.002", "0.003"]]
    for texts in cases:
        _model, view = shown_table(qtbot, texts, 600, 300)
        fit_columns(view)
        fitted = view.columnWidth(0)
        view.resizeColumnToContents(0)
        assert fitted == view.columnWidth(0), texts


def test_a_redraw_gives_the_unknowns_points_their_data_once(qtbot, make_window, monkeypatch) -> None:
    # pyqtgraph rebuilds a set of points when it is given data; with its range limit it also gives it
    # its data again when the vertical range changes, which every edit does
    from curvewright.core.run import SampleKind

    window = make_window(WEIGHTED)
    session = window.session
    points = window.curve_view.curve_items.samples[SampleKind.UNKNOWN][1]
    given = []
    real = points.scatter.setData
    monkeypatch.setattr(points.scatter, "setData", lambda *a, **k: given.append(1) or real(*a, **k))
    session.apply(changed_response(session.run, 5), "Change a response")
    settle(qtbot, window)
    assert points.isVisible() and len(given) == 1


def test_a_redraw_gives_each_line_its_data_once(qtbot, make_window, monkeypatch) -> None:
    # with its range limit pyqtgraph worked a line's shown data out again when the vertical range
    # moved, which every response edit does, and gave the line the same arrays a second time; the
    # lines then show the data pyqtgraph works out (and the view looks as one drawn anew:
    # tests/app/test_curve_items.py)
    import pyqtgraph as pg

    window = make_window(WEIGHTED)
    session, view = window.session, window.curve_view
    lines = [item for kept in (view.curve_items, view.lower_items) for item in kept.items
             if isinstance(item, pg.PlotDataItem) and item.opts["pen"] is not None]
    ranges = [tuple(plot.getViewBox().viewRange()[1]) for plot in (view.curve_plot, view.lower_plot)]
    given: list = []  # type: ignore[type-arg]
    update = pg.PlotDataItem.updateItems
    monkeypatch.setattr(pg.PlotDataItem, "updateItems",
                        lambda self, *a, **k: given.append(self) or update(self, *a, **k))
    session.apply(changed_response(session.run, 40), "Change a response")
    settle(qtbot, window)
    moved = [tuple(plot.getViewBox().viewRange()[1]) for plot in (view.curve_plot, view.lower_plot)]
    assert moved[0] != ranges[0] and moved[1] != ranges[1]  # both vertical ranges moved
    shown = [line for line in lines if line.isVisible()]
    # the curve and the prediction band's edges take new data once; the acceptance limits, which the
    # edit does not move, keep theirs
    times = {id(line): sum(item is line for item in given) for line in shown}
    assert [times[id(line)] for line in (view.curve_items.curve, view.curve_items.prediction_upper,
                                         view.curve_items.prediction_lower)] == [1, 1, 1]
    assert max(times.values()) == 1
    for line in shown:
        x, y = line.getData()  # what pyqtgraph shows of the line's values in the view now
        assert np.array_equal(line.curve.xData, x) and np.array_equal(line.curve.yData, y)


def test_a_line_the_range_limit_clips_is_given_its_clipped_data(qtbot) -> None:
    # zoomed in far enough, pyqtgraph's range limit clips a line's values around the view: the kept
    # line then goes pyqtgraph's way and shows what pyqtgraph shows
    import pyqtgraph as pg

    from curvewright.app.curve_view import _KeptPlot

    widget = pg.PlotWidget()
    qtbot.addWidget(widget)
    widget.resize(400, 300)
    widget.show()
    kept = _KeptPlot(widget.getPlotItem(), pg.LegendItem())
    line = kept.add(pg.PlotDataItem(pen=pg.mkPen("k")))
    x = np.linspace(0.0, 1.0, 201)
    kept.show(line, x, 1e9 * x ** 3)
    box = widget.getPlotItem().getViewBox()
    box.autoRange()
    qtbot.wait(10)
    assert np.array_equal(line.curve.yData, 1e9 * x ** 3)  # nothing clipped: the values themselves
    box.setYRange(0.0, 1e-3, padding=0)  # a view a trillionth of the data's height: the limit clips
    qtbot.wait(10)
    shown_x, shown_y = line.getData()
    assert shown_y.max() < 1e9 * 0.5  # pyqtgraph's clipped values
    assert np.array_equal(line.curve.xData, shown_x) and np.array_equal(line.curve.yData, shown_y)
