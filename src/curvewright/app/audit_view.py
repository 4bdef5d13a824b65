"""The Audit trail tab: what the reviewer signs for, read on screen without exporting anything.

Read only. It shows the chain check's finding (:func:`curvewright.io.audit.chain_claim`), every audit
entry in order in the record's words (:func:`curvewright.io.audit_words.audit_rows`: number, time, who,
what changed from what to what and why, entry hash) and the run's signatures as the record lists
them (:func:`curvewright.io.signatures.signature_rows`: role, person, time, meaning, whether each holds).
Nothing is worded here: the record's audit-trail pages and this tab take the same rows.
"""

from __future__ import annotations

from PySide6.QtGui import QColor
from PySide6.QtWidgets import (QAbstractItemView, QHeaderView, QLabel, QTableWidget, QTableWidgetItem, QVBoxLayout,
                               QWidget)

from ..core.run import Run
from ..io.audit import chain_claim
from ..io.audit_words import AUDIT_COLUMNS, audit_rows
from ..io.signatures import SIGNATURE_COLUMNS, check_signatures, signature_rows

NOT_HOLDING = "#a11b1b"
PERSON_WIDTH = 170
"""Pixels of the column naming a person, before the reader widens it."""


class AuditTrailView(QWidget):
    """The chain check, the entries and the signatures of one run, as the record prints them."""

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.chain = QLabel()
        self.chain.setWordWrap(True)
        self.chain.setAccessibleName("Chain check of the audit trail")
        self.entries = _table(AUDIT_COLUMNS, "Audit trail entries in order", AUDIT_COLUMNS.index("What was done"),
                              AUDIT_COLUMNS.index("Who"))
        self.signatures_title = QLabel()
        self.signatures = _table(SIGNATURE_COLUMNS, "Signatures and whether each holds", SIGNATURE_COLUMNS.index("Meaning"),
                                 SIGNATURE_COLUMNS.index("Name"))
        layout = QVBoxLayout(self)
        layout.addWidget(self.chain)
        layout.addWidget(self.entries, 3)
        layout.addWidget(self.signatures_title)
        layout.addWidget(self.signatures, 1)

    def show_run(self, run: Run) -> None:
        ok, claim = chain_claim(run)
        self.chain.setText(f"Chain check: {claim}")
        self.chain.setStyleSheet("" if ok else f"color:{NOT_HOLDING}; font-weight:bold;")
        _fill(self.entries, audit_rows(run))
        self.entries.scrollToBottom()
        rows = signature_rows(check_signatures(run), run)
        removed = len(rows) - len(run.signatures)
        self.signatures_title.setText(
            (f"Signatures ({len(rows)}" + (f", {removed} of them NOT in the file" if removed else "") + "):")
            if rows else "Signatures: none yet.")
        self.signatures_title.setStyleSheet(f"color:{NOT_HOLDING}; font-weight:bold;" if removed else "")
        _fill(self.signatures, rows)
        self.signatures.setVisible(bool(rows))

    def rows(self, table: QTableWidget) -> list[tuple[str, ...]]:
        """The texts of a table's rows, as shown."""
        return [tuple(table.item(r, c).text() for c in range(table.columnCount())) for r in range(table.rowCount())]


def _table(columns: tuple[str, ...], name: str, wrapped: int, person: int) -> QTableWidget:
    """A read-only table whose column ``wrapped`` takes the width left and wraps its text, and whose
    ``person`` column (name, ID and login) wraps at a fixed width the reader can drag wider."""
    table = QTableWidget(0, len(columns))
    table.setHorizontalHeaderLabels(list(columns))
    table.setAccessibleName(name)
    table.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
    table.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
    table.setWordWrap(True)
    table.verticalHeader().setVisible(False)
    header = table.horizontalHeader()
    for c in range(len(columns)):
        header.setSectionResizeMode(c, QHeaderView.ResizeMode.Stretch if c == wrapped
                                    else QHeaderView.ResizeMode.Interactive if c == person
                                    else QHeaderView.ResizeMode.ResizeToContents)
    header.resizeSection(person, PERSON_WIDTH)
    return table


def _fill(table: QTableWidget, rows: tuple[tuple[str, ...], ...]) -> None:
    table.setRowCount(len(rows))
    for r, row in enumerate(rows):
        for c, text in enumerate(row):
            item = QTableWidgetItem(text)
            item.setToolTip(text)
            if "does NOT hold" in text:
                item.setForeground(QColor(NOT_HOLDING))
            table.setItem(r, c, item)
    table.resizeRowsToContents()
