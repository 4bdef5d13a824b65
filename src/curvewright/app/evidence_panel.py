"""The model-evidence panel: every candidate from the engine's comparison side by side, the
recommended one marked with its reasons, and the analyst's current choice."""

from __future__ import annotations

import math

from PySide6.QtCore import Qt, Signal
from PySide6.QtGui import QFont
from PySide6.QtWidgets import (QAbstractItemView, QHBoxLayout, QLabel, QPushButton, QTableWidget, QTableWidgetItem,
                               QTextBrowser, QVBoxLayout, QWidget)

from ..core.run import Analyte
from ..core.notation import P_FIGURES, p_text
from ..io.model_choice import NOT_CHOSEN
from ..io.result_tables import display_number


def p_shown(value: float | None) -> str:
    """A p-value in a table cell as every output shows it ("> 0.999" where its figures would read 1)."""
    return display_number(value, P_FIGURES) if value is None or not math.isfinite(value) else p_text(value)


TYPE_CHECKING = False
if TYPE_CHECKING:
    from ..core.comparison import ModelComparison

HEADERS = ("Model", "Weighting", "Residual SD", "Adjusted R²", "Lack-of-fit p", "Mandel p", "Σ|%RE|",
           "Standards failing", "AICc", "Recommended", "Chosen")


class EvidencePanel(QWidget):
    choose_requested = Signal(str, str, object)  # model, weighting, recommended (model, weighting), () for none, or None

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.comparison: ModelComparison | None = None
        self.table = QTableWidget(0, len(HEADERS))
        self.table.setHorizontalHeaderLabels(HEADERS)
        self.table.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
        self.table.setSelectionMode(QAbstractItemView.SelectionMode.SingleSelection)
        self.table.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
        self.table.setAccessibleName("Candidate models")
        self.reasons = QTextBrowser()
        self.reasons.setAccessibleName("Reasons for the recommendation")
        self.choice = QLabel("")
        self.choice.setWordWrap(True)
        self.use_button = QPushButton("&Use the selected model…")
        self.use_button.clicked.connect(lambda _checked=False: self._use_selected())
        self.table.doubleClicked.connect(lambda _: self._use_selected())
        row = QHBoxLayout()
        row.addWidget(self.choice, 1)
        row.addWidget(self.use_button)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.addWidget(self.table, 3)
        layout.addLayout(row)
        layout.addWidget(QLabel("Why the recommendation (the choice stays yours):"))
        layout.addWidget(self.reasons, 2)

    def show_evidence(self, evidence: ModelComparison | str | None, analyte: Analyte, method=None) -> None:  # type: ignore[no-untyped-def]
        """The candidates and the recommendation; with a validated ``method`` that fixes the analyte's model,
        the recommendation is shown for information only."""
        from ..core.comparison import ModelComparison

        self.comparison = evidence if isinstance(evidence, ModelComparison) else None
        self.table.setRowCount(0)
        fixed = method.analyte(analyte.name) if method is not None else None
        self.method_fixes = fixed is not None
        self.choice.setText((f"Chosen for {analyte.name}: {analyte.model}, {analyte.weighting} — {analyte.choice_reason}"
                             if analyte.choice_reason else
                             f"{analyte.name}: {analyte.model}, {analyte.weighting}, the {NOT_CHOSEN}")
                            + (f". Method {method.label} fixes {fixed.model}, {fixed.weighting}: the recommendation "
                               "below is for information only, and departing from the method needs a reason."
                               if fixed is not None else ""))
        if self.comparison is None:
            self.reasons.setPlainText(f"No comparison: {evidence}" if evidence else "Waiting for the analysis…")
            return
        bold = QFont()
        bold.setBold(True)
        # the recommended candidate on top, then the chosen one, then the rest in the engine's order
        order = sorted(self.comparison.candidates, key=lambda c: (c is not self.comparison.recommendation,
                       not (c.model.value == analyte.model and c.weighting.value == analyte.weighting)))
        for c in order:
            r = self.table.rowCount()
            self.table.insertRow(r)
            recommended = c is self.comparison.recommendation  # none when no candidate is acceptable
            chosen = c.model.value == analyte.model and c.weighting.value == analyte.weighting
            values = (c.model.value, c.weighting.value, display_number(c.residual_sd, 4),
                      display_number(c.adjusted_r_squared, 6), p_shown(c.lack_of_fit_p), p_shown(c.mandel.p_value if c.mandel else None),
                      display_number(c.sum_abs_relative_error, 4), str(c.standards_failing),
                      display_number(c.aicc, 5),
                      "★ recommended" if recommended else "", "● chosen" if chosen else "")
            for col, text in enumerate(values):
                item = QTableWidgetItem(text)
                item.setData(Qt.ItemDataRole.UserRole, (c.model.value, c.weighting.value))
                if recommended:
                    item.setFont(bold)
                self.table.setItem(r, col, item)
        self.table.resizeColumnsToContents()
        self.table.selectRow(0)
        self.table.scrollToTop()
        lines = [f"• {r}" for r in self.comparison.reasons]
        # the candidates not fitted in the words the command line and the record give them
        from ..io.report import skipped_reasons  # loaded when evidence is first shown, as the record's writer is

        lines += [f"• {r}" for r in skipped_reasons(self.comparison)]
        self.reasons.setPlainText("\n".join(lines))

    def select(self, model: str, weighting: str) -> None:
        for r in range(self.table.rowCount()):
            if self.table.item(r, 0).data(Qt.ItemDataRole.UserRole) == (model, weighting):
                self.table.selectRow(r)
                return

    def _use_selected(self) -> None:
        rows = self.table.selectionModel().selectedRows()
        if not rows or self.comparison is None:
            return
        model, weighting = self.table.item(rows[0].row(), 0).data(Qt.ItemDataRole.UserRole)
        rec = self.comparison.recommendation
        # with a method, what the choice departs from is the method's model (run_edits asks the reason);
        # with no model recommended, () asks the reason for any choice
        self.choose_requested.emit(model, weighting, None if getattr(self, "method_fixes", False)
                                   else () if rec is None else (rec.model.value, rec.weighting.value))
