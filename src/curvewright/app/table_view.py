"""A table view that pastes blocks from spreadsheets and copies selections as text, and the rule that
every column is wide enough for its header and its cells (nothing on screen is elided)."""

from __future__ import annotations

import math
from typing import Callable, TypeVar

from PySide6.QtCore import QEvent, QRect
from PySide6.QtGui import QAccessible, QFontMetricsF, QGuiApplication, QKeySequence, QPalette
from PySide6.QtWidgets import QAbstractItemDelegate, QAbstractItemView, QAbstractScrollArea, QTableView


ReasonProvider = Callable[[str], "str | None"]
"""Asks the analyst why a raw value that was entered changes; the reason, or None when cancelled."""
T = TypeVar("T")


def ask_reason_when_required(update: Callable[..., T], provider: ReasonProvider | None) -> T | None:
    """Run ``update()``; when it needs a reason (a raw value that was entered changes), ask ``provider``
    and run ``update(reason)``. None when no reason was given."""
    from ..io.run_edits import ReasonRequired

    try:
        return update()
    except ReasonRequired as exc:
        reason = provider(str(exc)) if provider is not None else None
        if not reason:
            return None
        return update(reason)


NO_REASON_GIVEN = "Not changed: a changed value needs a reason."
"""What a table says when the analyst gives no reason for changing a raw value that was entered."""


def commit_edit(model, update: Callable[..., object], description: str,  # type: ignore[no-untyped-def]
                refused: Callable[[], None] | None = None) -> bool:
    """Make the run ``update()`` returns current in ``model.session`` as one undoable step named
    ``description``; where a raw value that was entered changes, the analyst is first asked why
    (``model.reason_provider``, :func:`ask_reason_when_required`). When the run refuses the edit
    (:class:`~curvewright.core.run.RunError`) or no reason is given, nothing changes: the model says why
    on its ``message`` signal and, after no reason, calls ``refused()`` (to forget what it showed of the
    edit) and has its cells read again. True when the run changed."""
    from ..core.run import RunError

    try:
        new_run = ask_reason_when_required(update, model.reason_provider)
    except RunError as exc:
        model.message.emit(str(exc))
        return False
    if new_run is None:
        model.message.emit(NO_REASON_GIVEN)
        if refused is not None:
            refused()
        model.dataChanged.emit(model.index(0, 0), model.index(max(model.rowCount() - 1, 0), model.columnCount() - 1))
        return False
    model.session.apply(new_run, description)
    return True


FIT_EVERY_ROW_UP_TO = 200
"""Tables up to this many rows are fitted to every row; longer ones to the rows in view, and widened
as more rows scroll into view (:func:`widen_to_rows_in_view`), so that measuring thousands of cells
never holds up a redraw."""


def fit_columns(view: QTableView) -> None:
    """Widen each column to its header and its cells, so that no text is cut to "…", then let the
    last column take any room left (see :func:`fill_last_column`). A long table is fitted to the rows
    in view; its columns widen as other rows come into view.

    A model that tells what its cells' sizes depend on (``fit_key(column, rows)``: per row, the
    cell's text when it is shown in the table's font without decoration, else anything that changes
    with what the cell shows) has only the columns that changed measured again; the others keep the
    width measured for the same content (a table is fitted after every analysis, and most of its
    columns are as they were). A changed column has only its widest texts measured by the delegate."""
    model = view.model()
    if model is None:
        return
    long_table = model.rowCount() > FIT_EVERY_ROW_UP_TO
    if long_table and isinstance(view, FittedTableView) and not view.isVisible():
        view.fit_when_shown = True  # a hidden table has no rows in view: it is fitted when shown
        return
    header = view.horizontalHeader()
    header.setStretchLastSection(False)
    header.setResizeContentsPrecision(0 if long_table else -1)
    if not hasattr(model, "fit_key"):
        view.resizeColumnsToContents()
        view.setProperty("fitted_last_width", None)
    else:
        # the last column is set once, to the room left or its fitted width (never to one, then the other)
        view.setProperty("fitted_last_width", _fit_changed_columns(view, model, long_table))
    fill_last_column(view)


def _rows_measured(view: QTableView, long_table: bool) -> range:
    """The rows Qt measures to fit a column: every row, or for a long table those in view."""
    count = view.model().rowCount()
    if not long_table:
        return range(count)
    vertical = view.verticalHeader()
    top = max(0, vertical.visualIndexAt(0))
    bottom = vertical.visualIndexAt(view.viewport().height())
    if not view.isVisible() or bottom == -1:
        bottom = count - 1
    return range(top, bottom + 1)


def _fit_changed_columns(view: QTableView, model, long_table: bool) -> int | None:  # type: ignore[no-untyped-def]
    """Each shown column fitted to its contents (as ``resizeColumnsToContents`` does), measuring
    again only the columns whose header, cells or font changed since they were last measured. The
    last shown column's fitted width is returned rather than set (see :func:`fill_last_column`); a
    column is set only to a width other than its own."""
    from PySide6.QtCore import Qt

    rows = _rows_measured(view, long_table)
    base = (view.font().key(), (rows.start, rows.stop), model.rowCount())
    measured: dict[int, tuple[object, int, float]] = view.__dict__.setdefault("_measured_columns", {})
    widest: dict[int, float] = view.__dict__.setdefault("_widest_text", {})
    """Per column, the widest text it was fitted to (see :func:`widen_to_rows_in_view`)."""
    metrics = QFontMetricsF(view.font())
    shown = [c for c in range(model.columnCount()) if not view.isColumnHidden(c)]
    for c in shown:
        texts = model.fit_key(c, rows)
        key = (base, model.headerData(c, Qt.Orientation.Horizontal), texts)
        known = measured.get(c)
        if known is None or known[0] != key:
            known = measured[c] = (key, *_resize_to_texts(view, model, c, rows, texts, metrics))
        if c != shown[-1] and view.columnWidth(c) != known[1]:
            view.setColumnWidth(c, known[1])
        widest[c] = known[2]
    return measured[shown[-1]][1] if shown else None


def _resize_to_texts(view: QTableView, model, c: int, rows: range, texts: tuple, metrics) -> tuple[int, float]:  # type: ignore[no-untyped-def, type-arg]
    """The width ``view.resizeColumnToContents(c)`` gives the column, asking the delegate only for the
    cells that can be the widest, and the widest text's advance (see :func:`_widest_advance`).

    A cell's width is its text's laid-out width plus the same margins in every row, and texts of
    the same advance in the same font lay out alike. So the delegate measures one cell of each
    advance within two pixels of the widest (Qt rounds a laid-out width up to whole pixels), and
    every cell in another font (keys that are not plain texts) or of several lines or tabs. The
    table's rows are never hidden."""
    from PySide6.QtWidgets import QStyleOptionViewItem

    advances = [_advance(metrics, t) for t in texts]
    plain = [a for a in advances if a is not None]
    floor = max(plain) - 2 if plain else 0
    view.ensurePolished()
    option = QStyleOptionViewItem()
    view.initViewItemOption(option)
    content, seen = 0, set()
    for r, advance in zip(rows, advances):
        if advance is None or (advance >= floor and advance not in seen):
            seen.add(advance)
            index = model.index(r, c)
            content = max(content, view.itemDelegateForIndex(index).sizeHint(option, index).width())
    if view.showGrid():
        content += 1
    header = view.horizontalHeader()
    width = max(content, 0 if header.isHidden() else header.sectionSizeHint(c))
    return width, (math.inf if len(plain) < len(advances) else max(plain, default=0.0))


def _advance(metrics, text: object) -> float | None:  # type: ignore[no-untyped-def]
    """A plain text's advance in the table's font (QFontMetricsF), or None for anything else."""
    if isinstance(text, str) and "\n" not in text and "\t" not in text:
        return metrics.horizontalAdvance(text)
    return None


def _widest_advance(metrics, texts: tuple) -> float:  # type: ignore[no-untyped-def, type-arg]
    """The widest of the texts of a column's cells (all in the view's font, one line each), or
    infinity when some cell is not such a text (its font or its lines may differ), so that the
    column is always measured."""
    widest = 0.0
    for t in texts:
        advance = _advance(metrics, t)
        if advance is None:
            return math.inf
        widest = max(widest, advance)
    return widest


def fill_last_column(view: QTableView) -> None:
    """Let the last shown column fill the room the others leave, never narrower than its own text.

    (Qt's stretched last section shrinks below its header's width when the other columns need
    more room than there is; this one scrolls instead.)"""
    model = view.model()
    if model is None or model.columnCount() == 0:
        return
    shown = [c for c in range(model.columnCount()) if not view.isColumnHidden(c)]
    if not shown:
        return
    last = shown[-1]
    natural = view.property("fitted_last_width")
    if natural is None:
        natural = view.columnWidth(last)
        view.setProperty("fitted_last_width", natural)
    others = sum(view.columnWidth(c) for c in shown[:-1])
    width = max(int(natural), view.viewport().width() - others)
    if view.columnWidth(last) != width:
        view.setColumnWidth(last, width)


def widen_to_rows_in_view(view: QTableView) -> None:
    """Widen the columns that are narrower than a cell now in view (a long table's columns are fitted
    to the rows in view only; see :func:`fit_columns`). Columns never narrow here.

    A model that tells its cells' texts (``fit_key``, plain texts in the view's font) has a column
    measured only when a text in view is wider than every text the column was measured for: one no
    wider needs no more room. Scrolling then measures nothing until a wider text comes into view."""
    model = view.model()
    if model is None or model.rowCount() <= FIT_EVERY_ROW_UP_TO:
        return
    shown = [c for c in range(model.columnCount()) if not view.isColumnHidden(c)]
    if not shown:
        return
    last = shown[-1]
    widest: dict[int, float] | None = view.__dict__.get("_widest_text") if hasattr(model, "fit_key") else None
    rows = _rows_measured(view, True) if widest is not None else range(0)
    metrics = QFontMetricsF(view.font())
    for c in shown:
        if widest is not None and widest.get(c, math.inf) < math.inf:
            in_view = _widest_advance(metrics, model.fit_key(c, rows))
            if in_view <= widest[c]:
                continue  # no text in view is wider than one the column already fits
            widest[c] = in_view
        need = view.sizeHintForColumn(c)
        if c == last:
            natural = view.property("fitted_last_width")
            if natural is not None and need > int(natural):
                view.setProperty("fitted_last_width", need)
                fill_last_column(view)
        elif need > view.columnWidth(c):
            view.setColumnWidth(c, need)


_ADJUST_IGNORED = QAbstractScrollArea.SizeAdjustPolicy.AdjustIgnored
_EDITING = QAbstractItemView.State.EditingState
_ACTIVATION = (QEvent.Type.WindowActivate, QEvent.Type.WindowDeactivate)


class FittedTableView(QTableView):
    """A table whose last column fills the room left whenever the table changes size, and whose
    columns widen when a wider cell scrolls into view."""

    def __init__(self, parent=None) -> None:  # type: ignore[no-untyped-def]
        super().__init__(parent)
        self.fit_when_shown = False
        self.verticalScrollBar().valueChanged.connect(lambda _value: widen_to_rows_in_view(self))

    def viewportEvent(self, event) -> bool:  # type: ignore[no-untyped-def]  # noqa: N802 - Qt override
        """The window's activation repaints the table only where it can look different.

        Qt's item views repaint all of their cells when the window is activated or deactivated (a
        dialog opens or closes: the reason asked for a typed response), for the colours a selection
        takes in an inactive window: 8 ms for the standards table here. With a palette whose inactive
        colours are the active ones the table looks the same either way (``tests/app/test_repaint_scope.py``
        compares it), and the cells are handled as any widget handles the event: repainted where the
        palette differs, children told. The keyboard focus the window loses or regains reaches the
        table apart, as in Qt."""
        if event.type() in _ACTIVATION and self.palette().isEqual(QPalette.ColorGroup.Active, QPalette.ColorGroup.Inactive):
            return False
        return super().viewportEvent(event)

    def dataChanged(self, top_left, bottom_right, roles=()) -> None:  # type: ignore[no-untyped-def]  # noqa: N802 - Qt override
        """Repaint the cells of a changed block, and nothing beside them.

        For a block of more than one cell Qt marks for repainting the block's rectangle one pixel wider
        and taller, into the next column and the next row: the grid line after the last cell and the
        first pixel of each cell beyond it. The table then lays out and paints every cell that pixel
        touches (its texts unchanged), which after an edit doubled the cells painted. Here a block in
        plain rows and columns (none moved, no spans, both corner cells shown) marks the cells' own
        rectangle, from the first cell's top left to the last cell's bottom right, the grid lines
        between them included. What Qt does besides is done as Qt does it: the cell being edited, if
        any in the block, is told on its own (its editor is given the new value), and a single cell, a
        view that adjusts its size to its contents, the accessibility tools, a hidden view and moved
        sections take Qt's own way."""
        first, last = self.visualRect(top_left), self.visualRect(bottom_right)  # empty: hidden or not a cell here
        if (top_left == bottom_right or first.isEmpty() or last.isEmpty() or not self.isVisible()
                or self.horizontalHeader().sectionsMoved() or self.verticalHeader().sectionsMoved()
                or QAccessible.isActive() or self.sizeAdjustPolicy() != _ADJUST_IGNORED):
            super().dataChanged(top_left, bottom_right, roles)
            return
        if self.state() == _EDITING:
            editing = self.currentIndex()
            if (top_left.row() <= editing.row() <= bottom_right.row()
                    and top_left.column() <= editing.column() <= bottom_right.column()):
                super().dataChanged(editing, editing, roles)
        self.viewport().update(QRect(first.topLeft(), last.bottomRight()))

    def showEvent(self, event) -> None:  # noqa: N802 - Qt override
        super().showEvent(event)
        if self.fit_when_shown:
            self.fit_when_shown = False
            fit_columns(self)

    def resizeEvent(self, event) -> None:  # noqa: N802 - Qt override
        super().resizeEvent(event)
        fill_last_column(self)


class SheetTableView(FittedTableView):
    """An editable table that takes pasted blocks (Ctrl+V) and copies its selection as text.

    What a paste does is decided by ``paste_handler(view, text)`` (the window reads the block and
    shows its preview); without one, nothing is pasted.
    """

    def __init__(self, name: str) -> None:
        super().__init__()
        self.setAccessibleName(name)
        self.setSelectionMode(QAbstractItemView.SelectionMode.ExtendedSelection)
        self.setAlternatingRowColors(True)
        self.setEditTriggers(QAbstractItemView.EditTrigger.DoubleClicked | QAbstractItemView.EditTrigger.EditKeyPressed
                             | QAbstractItemView.EditTrigger.AnyKeyPressed)
        self.paste_handler: Callable[["SheetTableView", str], int] | None = None

    def keyPressEvent(self, event) -> None:  # noqa: N802 - Qt override
        if event.matches(QKeySequence.StandardKey.Paste):
            self.paste()
            return
        if event.matches(QKeySequence.StandardKey.Copy):
            self.copy_selection()
            return
        super().keyPressEvent(event)

    def commit_open_editor(self) -> None:
        """Enter the text of a cell editor left open, as Enter would, and close the editor: its value is
        entered (asking why where a changed value needs a reason), or, when refused or the reason is not
        given, the cell shows its value as before; the typed text is never left in an open editor."""
        if self.state() != QAbstractItemView.State.EditingState:
            return
        editor = self.indexWidget(self.currentIndex())
        if editor is None:
            return
        self.commitData(editor)
        self.closeEditor(editor, QAbstractItemDelegate.EndEditHint.NoHint)

    def paste(self, text: str | None = None) -> int:
        """Paste ``text`` (the clipboard's when None) at the current cell; returns the rows entered."""
        text = QGuiApplication.clipboard().text() if text is None else text
        return self.paste_handler(self, text) if self.paste_handler is not None else 0

    def copy_selection(self) -> str:
        indexes = sorted(self.selectedIndexes(), key=lambda i: (i.row(), i.column()))
        if not indexes:
            text = self.model().as_text() if hasattr(self.model(), "as_text") else ""
        else:
            rows: dict[int, list[str]] = {}
            for index in indexes:
                rows.setdefault(index.row(), []).append(str(index.data() or ""))
            text = "\n".join("\t".join(cells) for cells in rows.values()) + "\n"
        QGuiApplication.clipboard().setText(text)
        return text


class RowCache:
    """The rows a table model shows, kept in step with the run without resetting the view.

    A model reset clears the analyst's selection and scroll position, so that after an edit the
    buttons would no longer act on the row just edited. Changes are told to the view as what they
    are: cells changed, rows appended, one row removed; only anything else resets.
    """

    def __init__(self, model, rows: tuple, context: object = None) -> None:  # type: ignore[no-untyped-def]
        self.model, self.rows, self.context = model, rows, context
        self.headers: tuple | None = None  # type: ignore[type-arg]
        """The column headers' texts last told to the view (None: not yet)."""

    def _headers_changed(self) -> bool:
        """True when the column headers' texts differ from those last told to the view (a header told
        of a change lays its table out again and repaints all of it)."""
        from PySide6.QtCore import Qt

        model = self.model
        headers = tuple(model.headerData(c, Qt.Orientation.Horizontal) for c in range(model.columnCount()))
        changed, self.headers = headers != self.headers, headers
        return changed

    def update(self, rows: tuple, key, context: object = None) -> None:  # type: ignore[no-untyped-def]
        """Take the rows of a new run. Rows are immutable: a row that is the same object as before
        shows the same cells, so only the span of rows that changed is told to the view, unless
        ``context`` (what else the cells show, e.g. the analyte's settings) changed too."""
        from PySide6.QtCore import QModelIndex, Qt

        model, old = self.model, self.rows
        same_context = context == self.context
        self.context = context
        last_column = model.columnCount() - 1
        old_keys, new_keys = [key(r) for r in old], [key(r) for r in rows]
        if new_keys[: len(old_keys)] == old_keys and len(rows) > len(old):
            model.beginInsertRows(QModelIndex(), len(old), len(rows) - 1)
            self.rows = rows
            model.endInsertRows()
        elif len(rows) == len(old) - 1 and any(new_keys == old_keys[:i] + old_keys[i + 1:] for i in range(len(old))):
            i = next(i for i in range(len(old)) if new_keys == old_keys[:i] + old_keys[i + 1:])
            model.beginRemoveRows(QModelIndex(), i, i)
            self.rows = rows
            model.endRemoveRows()
        elif len(rows) != len(old):
            model.beginResetModel()
            self.rows = rows
            model.endResetModel()
            return
        else:
            self.rows = rows
        changed = range(len(rows)) if not same_context else [
            i for i in range(min(len(old), len(rows))) if old[i] is not rows[i]]
        if len(changed):
            model.dataChanged.emit(model.index(changed[0], 0), model.index(changed[-1], last_column))
        if self._headers_changed():
            model.headerDataChanged.emit(Qt.Orientation.Horizontal, 0, last_column)

    def reset(self, rows: tuple, context: object = None) -> None:
        self.model.beginResetModel()
        self.rows, self.context = rows, context
        self.model.endResetModel()
        self._headers_changed()  # a reset shows the headers anew
