"""After an edit, the tables are told only what changed: a header is told of a change only when its
texts change (a header told of a change has its table laid out and repainted whole), and a column
keeps its width unless its contents need another (the last column is never set to its fitted width
and then widened again to fill the table)."""

from __future__ import annotations

from dataclasses import replace

from PySide6.QtCore import Qt
from PySide6.QtWidgets import QDialog

from curvewright.app.results_model import REPORTED
from curvewright.app.standards_model import CONC
from tests.app.conftest import DEMOS, settle
from tests.app.test_redraw import changed_response

WEIGHTED = next(p for p in DEMOS if "weighted" in p.stem)
REAL_EXEC = QDialog.exec
"""The dialogs' own exec, taken when the module loads (before each test refuses unanswered dialogs)."""


def watch(window):  # type: ignore[no-untyped-def]
    """Counts of header changes told and of columns resized, per table."""
    counts = {"headers": [], "resized": []}
    tables = {"standards": window.standards_view, "samples": window.samples_view, "results": window.results_view.table}
    for name, view in tables.items():
        view.model().headerDataChanged.connect(lambda *_a, name=name: counts["headers"].append(name))
        view.horizontalHeader().sectionResized.connect(lambda c, old, new, name=name: counts["resized"].append((name, c, old, new)))
    return counts


def test_an_edit_that_changes_no_header_tells_no_header_and_resizes_no_unchanged_column(qtbot, make_window) -> None:
    window = make_window(WEIGHTED)
    session = window.session
    session.apply(changed_response(session.run, 1), "Change a response")
    settle(qtbot, window)
    counts = watch(window)
    widths = {name: [v.columnWidth(c) for c in range(v.model().columnCount())]
              for name, v in (("samples", window.samples_view), ("results", window.results_view.table))}
    session.apply(changed_response(session.run, 2), "Change a response")
    settle(qtbot, window)
    assert counts["headers"] == []
    # the samples table shows nothing the analysis changes: no column of it is touched, not even for a moment
    assert [r for r in counts["resized"] if r[0] == "samples"] == []
    assert [window.samples_view.columnWidth(c) for c in range(window.samples_view.model().columnCount())] == widths["samples"]
    # the results table's last column still fills the room the others leave
    table = window.results_view.table
    last = table.model().columnCount() - 1
    others = sum(table.columnWidth(c) for c in range(last))
    assert table.columnWidth(last) >= table.viewport().width() - others


def test_a_new_unit_is_told_to_every_header_that_shows_it(qtbot, make_window) -> None:
    window = make_window(WEIGHTED)
    session = window.session
    counts = watch(window)
    analyte = session.run.analytes[0]
    session.apply(replace(session.run, analytes=(replace(analyte, concentration_unit="nmol/L"),)), "Change the unit")
    settle(qtbot, window)
    assert {"standards", "results"} <= set(counts["headers"])
    horizontal = Qt.Orientation.Horizontal
    assert "nmol/L" in window.standards_view.model().headerData(CONC, horizontal)
    assert "nmol/L" in window.results_view.table.model().headerData(REPORTED, horizontal)
    # and what the header shows is the new text
    assert "nmol/L" in window.results_view.table.horizontalHeader().model().headerData(REPORTED, horizontal)


def test_new_curve_words_of_as_many_lines_lay_nothing_out_again(qtbot, make_window) -> None:
    from PySide6.QtCore import QEvent, QObject

    from curvewright.io.model_outputs import curve_words

    window = make_window(WEIGHTED)
    window.resize(1500, 820)  # the words of both curves on two lines (a standard error of 4.51 × 10⁻⁵ takes room)
    settle(qtbot, window)
    session, view = window.session, window.curve_view
    laid_out = []

    class Watch(QObject):
        def eventFilter(self, obj, event):  # type: ignore[no-untyped-def]  # noqa: N802 - Qt override
            if event.type() == QEvent.Type.LayoutRequest:
                laid_out.append(obj)
            return False

    session.apply(changed_response(session.run, 2), "Change a response")  # the first redraw may size the axes
    settle(qtbot, window)
    watcher = Watch()
    for widget in (view, view.parentWidget()):  # the view and the widget it is laid out in
        widget.installEventFilter(watcher)
    before = view.curve_words.text()
    height = view.curve_words.height()
    session.apply(changed_response(session.run, 3), "Change a response")
    settle(qtbot, window)
    a = session.result.analytes[0]
    assert view.curve_words.text() == curve_words(a.calibration, a.analyte.uses_internal_standard) != before
    assert view.curve_words.label.heightForWidth(view.curve_words.width()) == height  # as many lines
    assert laid_out == []
    assert view.curve_words.label.geometry() == view.curve_words.rect()
    # a text of more lines is laid out: the words take the height the label needs at their width
    view.curve_words.setText(" ".join(["a long explanation of the fitted curve"] * 12))
    qtbot.waitUntil(lambda: view.curve_words.height() > height)
    assert view.curve_words.height() == view.curve_words.label.heightForWidth(view.curve_words.width())
    assert view.curve_words.label.geometry() == view.curve_words.rect()


def shown_on_screen(window, widget):  # type: ignore[no-untyped-def]
    """What the screen shows of ``widget`` (the window's painted image, as the analyst sees it)."""
    from PySide6.QtGui import QGuiApplication

    screen = QGuiApplication.primaryScreen().grabWindow(window.winId())
    at = widget.mapTo(window, widget.rect().topLeft())
    return screen.copy(at.x(), at.y(), widget.width(), widget.height()).toImage()


def typed_response(run, k: int):  # type: ignore[no-untyped-def]
    """The run with its first standard's response changed as an analyst types it (six figures, so
    that the column keeps its width and nothing but the changed cells is repainted)."""
    from curvewright.core.run import Reading
    from curvewright.io import run_edits

    analyte = run.analytes[0]
    first = analyte.standards[0]
    text = f"{float(first.response.value) * (1 + 0.001 * k):.6g}"
    changed = replace(first, response=Reading(float(text), text))
    return run_edits.update_standards(run, analyte.name, (changed, *analyte.standards[1:]), "typed",
                                      reason="re-read from the instrument")


def test_after_edits_the_tables_on_screen_are_the_tables_painted_anew(qtbot, make_window) -> None:
    """Only the cells that changed are repainted after an edit: what the screen then shows of each
    table is what painting the whole table anew shows, through small and large changes (statuses,
    flags and shading changing too) and a selected row."""
    window = make_window(WEIGHTED)
    session = window.session
    window.results_view.table.selectRow(2)
    window.standards_view.horizontalScrollBar().setValue(window.standards_view.horizontalScrollBar().maximum())
    for k in (1, 2, 300, 301, -400, 5):
        session.apply(typed_response(session.run, k), "Change a response")
        settle(qtbot, window)
        qtbot.wait(30)
        for view in (window.results_view.table, window.standards_view):
            viewport = view.viewport()
            assert shown_on_screen(window, viewport) == viewport.grab().toImage(), (k, view.accessibleName())


def test_an_axis_whose_range_did_not_change_keeps_its_picture(qtbot, make_window) -> None:
    """A response edited: the concentration axes are drawn from the same range, ticks and labels, so
    they keep the picture they were painted with; the response axes, whose range moved, are drawn
    anew. (That the view then looks as one drawn anew is held by tests/app/test_curve_items.py.)"""
    window = make_window(WEIGHTED)
    # plots wide enough that the points' pixel margins leave the concentration ranges as they were
    window.resize(1457, 901)
    session, view = window.session, window.curve_view
    session.apply(typed_response(session.run, 1), "Change a response")
    settle(qtbot, window)
    view.graphics.grab()
    plots = (view.curve_plot, view.lower_plot)
    before = {(i, side): plot.getAxis(side).picture for i, plot in enumerate(plots) for side in ("bottom", "left")}
    ranges = {(i, side): tuple(plot.getAxis(side).range) for i, plot in enumerate(plots) for side in ("bottom", "left")}
    places = {(i, side): plot.getAxis(side).geometry() for i, plot in enumerate(plots) for side in ("bottom", "left")}
    session.last_analysis_work_seconds = 0.0  # analysed at once: the views are redrawn and not yet painted
    # +40 %: the response axes' ranges move and the legends keep their lines (at +60 % the %RE plot's
    # legend gains one, which takes height from the plots and moves every axis)
    session.apply(typed_response(session.run, 400), "Change a response")
    assert session.result.run is session.run
    for (i, side), picture in before.items():
        axis = plots[i].getAxis(side)
        assert picture is not None
        # an axis moved or resized (a legend that gains a line takes height from the plots) is drawn anew
        # like one whose range moved
        if tuple(axis.range) == ranges[(i, side)] and axis.geometry() == places[(i, side)]:
            assert axis.picture is picture, (i, side)
        else:
            assert axis.picture is None, (i, side)  # drawn anew when next painted
    assert any(plots[i].getAxis(side).picture is before[(i, side)] for i in (0, 1) for side in ("bottom",))
    assert any(tuple(plots[i].getAxis("left").range) != ranges[(i, "left")] for i in (0, 1))


def test_an_edit_repaints_the_cells_told_changed_and_no_cell_beside_them(qtbot, make_window) -> None:
    """Qt marks a changed block of cells for repainting one pixel wider and taller than the block, so
    every cell in the next column and the next row was laid out and painted again too (their texts
    unchanged). The tables repaint the cells they are told changed and no other cell. What the
    screen then shows is held to tables painted anew above."""
    from PySide6.QtCore import QEvent, QObject, QRect
    from PySide6.QtGui import QRegion

    window = make_window(WEIGHTED)
    session = window.session
    session.apply(typed_response(session.run, 1), "Change a response")
    settle(qtbot, window)
    qtbot.wait(30)
    views = (window.standards_view, window.results_view.table)
    painted = {view: QRegion() for view in views}
    told: dict[object, list[tuple[int, int, int, int]]] = {view: [] for view in views}

    class Watch(QObject):
        def eventFilter(self, obj, event):  # type: ignore[no-untyped-def]  # noqa: N802 - Qt override
            if event.type() == QEvent.Type.Paint:
                for view in views:
                    if obj is view.viewport():
                        painted[view] = painted[view].united(event.region())
            return False

    watch = Watch()
    for view in views:
        view.viewport().installEventFilter(watch)
        view.model().dataChanged.connect(
            lambda a, b, *_roles, view=view: told[view].append((a.row(), b.row(), a.column(), b.column())))
    session.apply(typed_response(session.run, 2), "Change a response")
    settle(qtbot, window)
    qtbot.wait(30)
    for view in views:
        name = view.accessibleName()
        assert told[view] and not painted[view].isEmpty(), name  # some cells changed, and were repainted
        model = view.model()
        in_view = QRect(0, 0, view.viewport().width(), view.viewport().height())
        beside = [(r, c) for r in range(model.rowCount()) for c in range(model.columnCount())
                  if not view.isColumnHidden(c) and view.visualRect(model.index(r, c)).intersects(in_view)
                  and not any(r0 <= r <= r1 and c0 <= c <= c1 for r0, r1, c0, c1 in told[view])]
        assert beside, name  # cells in view that were not told changed
        repainted = [(r, c) for r, c in beside if painted[view].intersects(view.visualRect(model.index(r, c)))]
        assert repainted == [], (name, repainted[:5])


def test_the_reason_dialog_opening_and_closing_repaints_nothing_of_the_plots(qtbot, make_window, monkeypatch) -> None:
    """The reason dialog of a typed response deactivates the window while it is open, and closing it
    activates the window again. The plots look the same in an active and an inactive window (they
    draw with their own colours, never the palette's), so neither repaints them: they were painted
    whole each time. Shown here with a palette whose inactive colours differ, and the app's own
    modal dialog, answered from a timer inside its event loop."""
    from PySide6.QtCore import QEvent, QObject, QTimer
    from PySide6.QtGui import QColor, QPalette
    from PySide6.QtWidgets import QApplication, QDialogButtonBox

    from curvewright.app.dialogs import ReasonDialog

    monkeypatch.setattr(ReasonDialog, "exec", REAL_EXEC)
    window = make_window(WEIGHTED)
    graphics = window.curve_view.graphics
    palette = window.palette()  # as on a desktop whose inactive windows look different
    for role in (QPalette.ColorRole.Window, QPalette.ColorRole.Base, QPalette.ColorRole.Text,
                 QPalette.ColorRole.WindowText, QPalette.ColorRole.Highlight):
        palette.setColor(QPalette.ColorGroup.Inactive, role, QColor(200, 30, 160))
    window.setPalette(palette)
    window.activateWindow()
    qtbot.waitUntil(lambda: QApplication.activeWindow() is window)
    qtbot.wait(50)
    active = graphics.grab().toImage()
    painted: list[object] = []

    class Watch(QObject):
        def eventFilter(self, obj, event):  # type: ignore[no-untyped-def]  # noqa: N802 - Qt override
            if event.type() == QEvent.Type.Paint and obj is graphics.viewport() and not grabbing:
                painted.append(event.region().boundingRect())
            return False

    grabbing = False  # a grab paints the view itself
    watch = Watch()
    graphics.viewport().installEventFilter(watch)
    for _ in range(50):  # whatever was still to be painted has been, before the dialog opens
        painted.clear()
        qtbot.wait(100)
        if not painted:
            break
    assert painted == []
    seen: dict[str, object] = {}

    def answer() -> None:
        dialog = QApplication.activeModalWidget()
        if not isinstance(dialog, ReasonDialog):
            QTimer.singleShot(20, answer)
            return
        qtbot.wait(50)  # the window, deactivated, would repaint here
        seen["active window"] = QApplication.activeWindow()
        seen["painted while open"] = list(painted)
        nonlocal grabbing
        grabbing = True
        seen["inactive"] = graphics.grab().toImage()
        grabbing = False
        dialog.choices.setCurrentIndex(1)
        dialog.buttons.button(QDialogButtonBox.StandardButton.Ok).click()

    QTimer.singleShot(20, answer)
    assert window.ask_value_change_reason("The response changes.")
    window.activateWindow()  # the window is active again once the dialog has closed
    qtbot.waitUntil(lambda: QApplication.activeWindow() is window)
    qtbot.wait(50)
    graphics.viewport().removeEventFilter(watch)
    assert seen["active window"] is not window  # the window was inactive while the dialog was open
    assert seen["painted while open"] == [], seen["painted while open"]
    assert painted == [], painted
    assert seen["inactive"] == active == graphics.grab().toImage()


def test_the_reason_dialog_repaints_a_table_only_where_its_palette_differs_when_inactive(
        qtbot, make_window, monkeypatch) -> None:
    """Qt's item views repaint all their cells when the window is activated or deactivated, for the
    colours of a selection in an inactive window. With a palette whose inactive colours are the
    active ones (as here) a table with a selected row looks the same either way and nothing of it is
    repainted when the reason dialog opens or closes; with a palette whose inactive colours differ,
    it is repainted as Qt does (this platform draws the selection alike in both states, so the pixels
    themselves cannot show the difference here)."""
    from PySide6.QtCore import QEvent, QObject, QTimer
    from PySide6.QtGui import QColor, QPalette
    from PySide6.QtWidgets import QApplication, QDialogButtonBox

    from curvewright.app.dialogs import ReasonDialog

    monkeypatch.setattr(ReasonDialog, "exec", REAL_EXEC)
    window = make_window(WEIGHTED)
    tables = (window.standards_view, window.results_view.table)
    window.results_view.table.selectRow(2)
    window.standards_view.selectRow(1)

    def through_the_dialog():  # type: ignore[no-untyped-def]
        window.activateWindow()
        qtbot.waitUntil(lambda: QApplication.activeWindow() is window)
        painted: dict[object, list[object]] = {view: [] for view in tables}
        grabbing = [False]

        class Watch(QObject):
            def eventFilter(self, obj, event):  # type: ignore[no-untyped-def]  # noqa: N802 - Qt override
                if event.type() == QEvent.Type.Paint and not grabbing[0]:
                    for view in tables:
                        if obj is view.viewport():
                            painted[view].append(event.region().boundingRect())
                return False

        watch = Watch()
        for view in tables:
            view.viewport().installEventFilter(watch)
        for _ in range(50):  # whatever was still to be painted has been
            for view in tables:
                painted[view].clear()
            qtbot.wait(100)
            if not any(painted.values()):
                break
        grabbing[0] = True
        active = [view.viewport().grab().toImage() for view in tables]
        grabbing[0] = False
        inactive: list[object] = []

        def answer() -> None:
            dialog = QApplication.activeModalWidget()
            if not isinstance(dialog, ReasonDialog):
                QTimer.singleShot(20, answer)
                return
            qtbot.wait(50)
            grabbing[0] = True
            inactive.extend(view.viewport().grab().toImage() for view in tables)
            grabbing[0] = False
            dialog.choices.setCurrentIndex(1)
            dialog.buttons.button(QDialogButtonBox.StandardButton.Ok).click()

        QTimer.singleShot(20, answer)
        assert window.ask_value_change_reason("The response changes.")
        window.activateWindow()
        qtbot.waitUntil(lambda: QApplication.activeWindow() is window)
        qtbot.wait(50)
        for view in tables:
            view.viewport().removeEventFilter(watch)
        return painted, active, inactive

    assert window.palette().isEqual(QPalette.ColorGroup.Active, QPalette.ColorGroup.Inactive)
    painted, active, inactive = through_the_dialog()
    assert all(rects == [] for rects in painted.values()), painted
    assert inactive == active
    palette = window.palette()  # a desktop whose inactive windows look different
    palette.setColor(QPalette.ColorGroup.Inactive, QPalette.ColorRole.Highlight, QColor(200, 30, 160))
    window.setPalette(palette)
    painted, _active, _inactive = through_the_dialog()
    assert all(rects for rects in painted.values()), painted  # repainted, as Qt does
