"""A table view that pastes blocks from spreadsheets and copies selections as text."""

from __future__ import annotations

from PySide6.QtGui import QGuiApplication, QKeySequence
from PySide6.QtWidgets import QAbstractItemView, QTableView


class SheetTableView(QTableView):
    def __init__(self, name: str) -> None:
        super().__init__()
        self.setAccessibleName(name)
        self.setSelectionMode(QAbstractItemView.SelectionMode.ExtendedSelection)
        self.setAlternatingRowColors(True)
        self.setEditTriggers(QAbstractItemView.EditTrigger.DoubleClicked | QAbstractItemView.EditTrigger.EditKeyPressed
                             | QAbstractItemView.EditTrigger.AnyKeyPressed)
        self.horizontalHeader().setStretchLastSection(True)

    def keyPressEvent(self, event) -> None:  # noqa: N802 - Qt override
        if event.matches(QKeySequence.StandardKey.Paste):
            self.paste()
            return
        if event.matches(QKeySequence.StandardKey.Copy):
            self.copy_selection()
            return
        super().keyPressEvent(event)

    def paste(self, text: str | None = None) -> int:
        model = self.model()
        if not hasattr(model, "paste_block"):
            return 0
        text = QGuiApplication.clipboard().text() if text is None else text
        current = self.currentIndex()
        top = current.row() if current.isValid() else model.rowCount()
        left = current.column() if current.isValid() else getattr(model, "default_paste_column", 0)
        return model.paste_block(max(top, 0), max(left, 0), text)

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
