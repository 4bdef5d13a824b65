"""The results of the unknowns and QC samples of one analyte (read-only), flags in words."""

from __future__ import annotations

from PySide6.QtCore import QAbstractTableModel, QModelIndex, Qt
from PySide6.QtGui import QBrush, QColor

from ..core.inverse import QuantFlag
from ..core.run_analysis import AnalyteResult, RunResult, SampleResult
from ..io.result_tables import display_number

COLUMNS = ("Sample", "Kind", "n", "Mean response", "Estimate", "Dilution", "Reported", "Reported (rounded)",
           "Lower", "Upper", "Flags", "Recovery (%)", "QC")
ATTENTION = QColor(255, 236, 200)


class ResultsModel(QAbstractTableModel):
    def __init__(self) -> None:
        super().__init__()
        self.result: RunResult | None = None
        self.analyte: AnalyteResult | None = None

    def show(self, result: RunResult | None, analyte: str) -> None:
        self.beginResetModel()
        self.result = result
        try:
            self.analyte = result.analyte(analyte) if result is not None else None
        except KeyError:
            self.analyte = None
        self.endResetModel()

    @property
    def rows(self) -> tuple[SampleResult, ...]:
        return self.analyte.samples if self.analyte is not None else ()

    def rowCount(self, parent: QModelIndex = QModelIndex()) -> int:  # noqa: N802
        return 0 if parent.isValid() else len(self.rows)

    def columnCount(self, parent: QModelIndex = QModelIndex()) -> int:  # noqa: N802
        return 0 if parent.isValid() else len(COLUMNS)

    def headerData(self, section: int, orientation: Qt.Orientation, role: int = Qt.ItemDataRole.DisplayRole):  # noqa: N802
        if role != Qt.ItemDataRole.DisplayRole:
            return None
        if orientation == Qt.Orientation.Vertical:
            return str(section + 1)
        unit = self.analyte.analyte.concentration_unit if self.analyte else ""
        if unit and COLUMNS[section] in ("Estimate", "Reported", "Reported (rounded)", "Lower", "Upper"):
            return f"{COLUMNS[section]} ({unit})"
        return COLUMNS[section]

    def data(self, index: QModelIndex, role: int = Qt.ItemDataRole.DisplayRole):
        if not index.isValid():
            return None
        s = self.rows[index.row()]
        col = index.column()
        if role == Qt.ItemDataRole.DisplayRole:
            return self.text(s, col)
        if role == Qt.ItemDataRole.ToolTipRole and col == 10:
            return s.flag_words
        if role == Qt.ItemDataRole.BackgroundRole and self._needs_attention(s):
            return QBrush(ATTENTION)
        if role == Qt.ItemDataRole.TextAlignmentRole and 2 <= col <= 9:
            return int(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
        return None

    def _needs_attention(self, s: SampleResult) -> bool:
        if s.reported is None or s.flags is None:
            return True
        return not (s.flags & QuantFlag.IN_RANGE) or bool(s.flags & (QuantFlag.BELOW_LOQ | QuantFlag.UNBOUNDED_INTERVAL))

    def text(self, s: SampleResult, col: int) -> str:
        rule = self.result.run.settings.rounding if self.result else None
        values = {
            0: s.sample_id, 1: s.kind.words, 2: str(len(s.replicate_responses)), 3: display_number(s.mean_response),
            4: display_number(s.estimate), 5: f"{s.dilution_factor:g}", 6: display_number(s.reported),
            7: rule.text(s.reported) if (rule and s.reported is not None) else "—",
            8: display_number(s.reported_lower), 9: display_number(s.reported_upper), 10: s.flag_words,
            11: "" if s.recovery_percent is None else f"{s.recovery_percent:.1f}",
            12: self._qc(s),
        }
        return values[col]

    def _qc(self, s: SampleResult) -> str:
        if s.within_limits is None:
            return ""
        return "pass" if s.within_limits else "FAIL"

    def as_text(self) -> str:
        lines = ["\t".join(self.headerData(c, Qt.Orientation.Horizontal) for c in range(len(COLUMNS)))]
        lines += ["\t".join(self.text(s, c) for c in range(len(COLUMNS))) for s in self.rows]
        return "\n".join(lines) + "\n"
