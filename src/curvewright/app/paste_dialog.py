"""The preview of a pasted block: where each column goes, how each value reads, where the rows land.

The block is read by :func:`curvewright.io.paste.read_block` (the same header names and decimal-mark
rule as a file import). The analyst can move a column to another field, set the decimal mark and the
thousands separator (as the file import offers them), say whether the first row is a header (offered,
and preselected as read, whenever it holds no value; a row of text above numbers is read as one), and
choose between adding the rows below the last and overwriting from the selected row, before anything
changes.
"""

from __future__ import annotations

from PySide6.QtGui import QBrush
from PySide6.QtWidgets import (QCheckBox, QComboBox, QDialog, QDialogButtonBox, QFormLayout, QLabel, QTableWidget,
                               QTableWidgetItem, QVBoxLayout, QWidget)

from ..core.notation import entered
from ..io.number_text import parse_reading
from ..io.paste import FIELD_WORDS, TEXT_FIELDS, PastedBlock, table_fields
from .standards_model import INVALID

NOT_USED = "(not used)"


class PasteDialog(QDialog):
    """Shows how a pasted block will be entered; ``block`` and ``top`` hold the analyst's answer."""

    def __init__(self, block: PastedBlock, rows_in_table: int, selected_row: int | None,
                 parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.block = block
        self.rows_in_table = rows_in_table
        self.selected_row = selected_row
        self.setWindowTitle(f"Paste into the {block.target} table")
        self.resize(820, 480)
        self.summary = QLabel()
        self.summary.setWordWrap(True)
        self.placement = QComboBox()
        self.placement.setAccessibleName("Where the pasted rows go")
        self.decimal = QComboBox()
        self.decimal.setAccessibleName("Decimal mark of the pasted values")
        self.decimal.addItem("as the block shows it", None)
        self.decimal.addItem(". (point)", ".")
        self.decimal.addItem(", (comma)", ",")
        if block.decimal_note.endswith("as chosen") and block.decimal_mark in (".", ","):
            self.decimal.setCurrentIndex(self.decimal.findData(block.decimal_mark))
        self.thousands = QComboBox()
        self.thousands.setAccessibleName("Thousands separator of the pasted values")
        self.thousands.addItem("as the block shows it", None)
        self.thousands.addItem("none (refuse values written with one)", "")
        for label, separator in ((",", ","), (".", "."), ("space", " "), ("'", "'")):
            self.thousands.addItem(label, separator)
        self.first_row_header = QCheckBox("First row is a header (its texts name the columns; not entered)")
        self.first_row_header.setAccessibleName("Whether the first pasted row is a header")
        self.first_row_header.setChecked(block.has_header)
        self.first_row_header.setEnabled(block.can_have_header())
        self.preview = QTableWidget()
        self.preview.setAccessibleName("How each pasted value was read")
        self.field_boxes: list[QComboBox] = []
        self.buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Ok | QDialogButtonBox.StandardButton.Cancel)
        self.buttons.accepted.connect(self.accept)
        self.buttons.rejected.connect(self.reject)
        form = QFormLayout()
        form.addRow("&Rows", self.placement)
        form.addRow("&Decimal mark", self.decimal)
        form.addRow("&Thousands separator", self.thousands)
        form.addRow("&Header", self.first_row_header)
        layout = QVBoxLayout(self)
        layout.addWidget(self.summary)
        layout.addLayout(form)
        layout.addWidget(QLabel("Each column's field (change it if the block put it in the wrong place), and each "
                                "cell as found → as read; red cells are kept as typed and marked, not used:"))
        layout.addWidget(self.preview, 1)
        layout.addWidget(self.buttons)
        self._fill_placement(block.has_header or selected_row is None)
        self.decimal.currentIndexChanged.connect(lambda _index: self._reread())
        self.thousands.currentIndexChanged.connect(lambda _index: self._reread())
        self.first_row_header.toggled.connect(self._header_chosen)
        self.placement.currentIndexChanged.connect(lambda _index: self._describe())
        self._fill_preview()

    @property
    def top(self) -> int | None:
        """The first row overwritten (0-based), or None to add the rows below the last."""
        return self.placement.currentData()

    def _fill_placement(self, add_by_default: bool) -> None:
        n = len(self.block.records())
        noun = "standard(s)" if self.block.target == "standards" else "sample(s)"
        self.placement.clear()
        self.placement.addItem(f"add {n} new {noun} below the last", None)
        if self.selected_row is not None:
            changed = max(0, min(n, self.rows_in_table - self.selected_row))
            self.placement.addItem(f"overwrite from the selected row {self.selected_row + 1} ({changed} existing "
                                   f"row(s) change, {n - changed} added)", self.selected_row)
            self.placement.setCurrentIndex(0 if add_by_default else 1)

    def _reread(self) -> None:
        fields = {i: (box.currentData() or None) for i, box in enumerate(self.field_boxes)}
        self.block = self.block.with_fields(fields, self.decimal.currentData(), self.thousands.currentData())
        self._fill_placement(self.top is None)
        self._fill_preview()

    def _header_chosen(self, as_header: bool) -> None:
        """The analyst's answer to "First row is a header": the columns are placed again as read."""
        self.block = self.block.with_header(as_header, self.decimal.currentData(), self.thousands.currentData())
        self._fill_placement(self.block.has_header or self.selected_row is None)
        self._fill_preview()

    def _describe(self) -> None:
        b = self.block
        if b.has_header and b.header_named:
            header = "its first row is a header, so each column goes where its header says"
        elif b.has_header:
            header = ("its first row is text above rows of numbers, read as a header and not entered; the columns "
                      "fill the table from the selected column; untick \"First row is a header\" to enter it as data")
        else:
            header = "it has no header row, so the columns fill the table from the selected column"
        unused = f" Columns not used: {', '.join(b.unused())}." if b.unused() else ""
        grouped = f"; {b.thousands_note}" if b.thousands_note else ""
        self.summary.setText(f"{len(b.rows)} row(s) read ({header}); columns separated by {b.delimiter}; "
                             f"{b.decimal_note}{grouped}.{unused}")
        ok = self.buttons.button(QDialogButtonBox.StandardButton.Ok)
        ok.setEnabled(any(f is not None for f in b.fields) and bool(b.rows))

    def _fill_preview(self) -> None:
        b = self.block
        self.preview.clear()
        self.preview.setColumnCount(len(b.columns))
        self.preview.setRowCount(len(b.rows) + 1)
        self.preview.setHorizontalHeaderLabels([c.header or f"column {i + 1}" for i, c in enumerate(b.columns)])
        self.preview.setVerticalHeaderLabels(["field"] + [str(i + 1) for i in range(len(b.rows))])
        self.field_boxes = []
        for j, column in enumerate(b.columns):
            box = QComboBox()
            box.addItem(NOT_USED, "")
            for field in table_fields(b.target):
                box.addItem(FIELD_WORDS[field], field)
            box.setCurrentIndex(max(box.findData(column.field or ""), 0))
            box.currentIndexChanged.connect(lambda _index: self._reread())
            self.preview.setCellWidget(0, j, box)
            self.field_boxes.append(box)
            for i, cells in enumerate(b.rows):
                text = cells[j]
                item = QTableWidgetItem(self._shown(text, column.field))
                problem = self._problem(text, column.field)
                if problem:
                    item.setBackground(QBrush(INVALID))
                    item.setToolTip(problem)
                self.preview.setItem(i + 1, j, item)
        self.preview.resizeColumnsToContents()
        self._describe()

    def _shown(self, text: str, field: str | None) -> str:
        if field is None or field in TEXT_FIELDS or not text.strip():
            return text
        parsed = parse_reading(text, self.block.decimal_mark, self.block.thousands)
        if parsed.reading is None:
            return text
        if parsed.reading.is_censored:
            return f"{text} → censored"
        return f"{text} → {entered(parsed.reading.value)}"

    def _problem(self, text: str, field: str | None) -> str | None:
        if field is None or field in TEXT_FIELDS or not text.strip():
            return None
        if field == "response" and self.block.target == "samples":
            problems = [parse_reading(p, self.block.decimal_mark, self.block.thousands).problem
                        for p in text.split(";") if p.strip()]
            return "; ".join(p for p in problems if p) or None
        return parse_reading(text, self.block.decimal_mark, self.block.thousands).problem
