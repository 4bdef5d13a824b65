"""A row of controls that goes on to a second row when the window is too narrow for it.

Laid out in one row where there is room, the controls sit as a horizontal box layout would put them:
each at its preferred width, left to right, with the style's spacing, and centred in the row's
height when its height is fixed (buttons, check boxes, combo boxes). Where the row is narrower than
the controls need, the next control starts a new row, so that no control is ever squeezed below the
width its text needs. The layout answers its height for a width (two rows take twice the height), and
its smallest width is its widest control's.
"""

from __future__ import annotations

from PySide6.QtCore import QPoint, QRect, QSize, Qt
from PySide6.QtWidgets import QLayout, QLayoutItem, QSizePolicy, QStyle, QWidget


class FlowRow(QLayout):
    """Controls in rows, left to right, a new row started where the next control does not fit."""

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self._items: list[QLayoutItem] = []
        self.setContentsMargins(0, 0, 0, 0)

    # --- the QLayout interface ------------------------------------------------------------------
    def addItem(self, item: QLayoutItem) -> None:  # noqa: N802 - Qt override
        self._items.append(item)

    def count(self) -> int:
        return len(self._items)

    def itemAt(self, index: int) -> QLayoutItem | None:  # noqa: N802 - Qt override
        return self._items[index] if 0 <= index < len(self._items) else None

    def takeAt(self, index: int) -> QLayoutItem | None:  # noqa: N802 - Qt override
        return self._items.pop(index) if 0 <= index < len(self._items) else None

    def expandingDirections(self) -> Qt.Orientation:  # noqa: N802 - Qt override
        return Qt.Orientation(0)

    def hasHeightForWidth(self) -> bool:  # noqa: N802 - Qt override
        return True

    def heightForWidth(self, width: int) -> int:  # noqa: N802 - Qt override
        return self._place(QRect(0, 0, width, 0), move=False)

    def setGeometry(self, rect: QRect) -> None:  # noqa: N802 - Qt override
        super().setGeometry(rect)
        self._place(rect, move=True)

    def sizeHint(self) -> QSize:  # noqa: N802 - Qt override
        """All the controls in one row."""
        shown = self._shown()
        margins = self.contentsMargins()
        width = sum(item.sizeHint().width() for item in shown) + self._spacing() * max(0, len(shown) - 1)
        height = max((item.sizeHint().height() for item in shown), default=0)
        return QSize(width + margins.left() + margins.right(), height + margins.top() + margins.bottom())

    def minimumSize(self) -> QSize:  # noqa: N802 - Qt override
        """One control a row: as wide as the widest control, as tall as one row (the height a
        narrower width needs is answered by :meth:`heightForWidth`)."""
        shown = self._shown()
        margins = self.contentsMargins()
        width = max((item.sizeHint().width() for item in shown), default=0)
        height = max((item.sizeHint().height() for item in shown), default=0)
        return QSize(width + margins.left() + margins.right(), height + margins.top() + margins.bottom())

    # --- the layout -----------------------------------------------------------------------------
    def _shown(self) -> list[QLayoutItem]:
        return [item for item in self._items if not item.isEmpty()]

    def _spacing(self) -> int:
        if self.spacing() >= 0:
            return self.spacing()
        parent = self.parentWidget()
        style = parent.style() if parent is not None else None
        return style.pixelMetric(QStyle.PixelMetric.PM_LayoutHorizontalSpacing, None, parent) if style else 6

    def _rows(self, width: int) -> list[list[QLayoutItem]]:
        """The controls in rows within ``width``: a control that does not fit after another starts a row."""
        rows: list[list[QLayoutItem]] = []
        used = 0
        for item in self._shown():
            wanted = item.sizeHint().width()
            if rows and used + self._spacing() + wanted <= width:
                rows[-1].append(item)
                used += self._spacing() + wanted
            else:
                rows.append([item])
                used = wanted
        return rows

    def _place(self, rect: QRect, *, move: bool) -> int:
        """Place the controls within ``rect`` (only measure, when not ``move``); the height they take."""
        margins = self.contentsMargins()
        inner = rect.adjusted(margins.left(), margins.top(), -margins.right(), -margins.bottom())
        y = inner.y()
        spacing = self._spacing()
        for n, row in enumerate(self._rows(inner.width())):
            if n:
                y += spacing
            height = max(item.sizeHint().height() for item in row)
            x = inner.x()
            for item in row:
                hint = item.sizeHint()
                width = min(hint.width(), max(inner.width(), item.minimumSize().width()))
                fixed = item.widget() is not None and \
                    item.widget().sizePolicy().verticalPolicy() == QSizePolicy.Policy.Fixed
                item_height = hint.height() if fixed else height
                if move:
                    item.setGeometry(QRect(QPoint(x, y + (height - item_height) // 2), QSize(width, item_height)))
                x += width + spacing
            y += height
        return y - inner.y() + margins.top() + margins.bottom()
