"""The results of the unknowns and QC samples of one analyte (read-only): the job's answer first.

The first columns are what the analyst reports and signs: the sample, what is reported for it (the
concentration rounded by the run's rule, or "< 1.00 ng/mL (LLOQ)", "> 1000 ng/mL (ULOQ)", "not
reportable"), its interval and the flags as short words. Kind, QC recovery and the
working (replicates, mean response, estimate before dilution, dilution factor, full precision) follow.
Selecting a row shows everything about that sample in words beneath the table.
"""

from __future__ import annotations

from PySide6.QtCore import QAbstractTableModel, QModelIndex, Qt
from PySide6.QtGui import QBrush, QColor, QGuiApplication
from PySide6.QtWidgets import QAbstractItemView, QLabel, QVBoxLayout, QWidget

from ..core.level_text import percent_label
from ..core.notation import computed_within, entered, machine
from ..io.number_text import percent_beside_limits
from ..io.result_tables import display_number, interval_text, limits_words, recovery_windows
from .table_view import FittedTableView, fit_columns

TYPE_CHECKING = False
if TYPE_CHECKING:
    from ..core.run_analysis import AnalyteResult, RunResult, SampleColumns, SampleResult

COLUMNS = ("Sample", "Reported", "Interval", "Flags", "Kind", "QC / check", "n", "Mean response",
           "Estimate", "Dilution", "Value × dilution")
SAMPLE, REPORTED, INTERVAL, FLAGS, KIND, QC, N, MEAN, ESTIMATE, DILUTION, FULL = range(len(COLUMNS))
WITH_UNIT = (REPORTED, INTERVAL, ESTIMATE, FULL)
NUMERIC = (REPORTED, QC, N, MEAN, ESTIMATE, DILUTION, FULL)
ATTENTION = QColor(255, 236, 200)
_ATTENTION_BRUSH = QBrush(ATTENTION)
_RIGHT = int(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
_DISPLAY, _TOOLTIP, _BACKGROUND, _ALIGNMENT = (int(r) for r in (
    Qt.ItemDataRole.DisplayRole, Qt.ItemDataRole.ToolTipRole, Qt.ItemDataRole.BackgroundRole,
    Qt.ItemDataRole.TextAlignmentRole))
_ANSWERED = frozenset((_DISPLAY, _TOOLTIP, _BACKGROUND, _ALIGNMENT))
"""The roles this table answers. A view asks for about eight roles of every cell it paints or
measures (font, colours, check state, decoration, size...); the others are turned away first."""
_BLOCK = 64
COMPARED_ROWS_UP_TO = 512
"""After an edit, the cells of up to this many rows shown since the last result are compared, and
only those that changed are told to the view (then repainted); beyond it, every cell is."""
"""Rows whose result objects are made together (a short table's, or a screenful and more of a long one)."""
_ALIGNMENTS = tuple(_RIGHT if c in NUMERIC else None for c in range(len(COLUMNS)))


class ResultsModel(QAbstractTableModel):
    def __init__(self) -> None:
        super().__init__()
        self.result: RunResult | None = None
        self.analyte: AnalyteResult | None = None
        self.columns: SampleColumns | None = None
        self._headers: tuple[str, ...] | None = None
        self._blocks: dict[int, tuple[SampleResult, ...]] = {}
        """The rows' result objects made so far, by block of rows (see :meth:`sample`)."""
        self._texts: dict[int, tuple[str, ...]] = {}
        self._attention: dict[int, bool] = {}
        """Each row's cell texts and whether it needs attention, worked out once per result (a table
        asks for the same cells many times: sizing its columns, painting, scrolling)."""
        self._attention_terms: tuple[object, object] | None = None
        """The status and the flags that shade a row, looked up when first needed."""

    def show(self, result: RunResult | None, analyte: str) -> bool:
        """Show ``analyte``'s samples in ``result``. The same samples as shown (a new analysis of the
        same run, after an edit) are updated in place, keeping the selection and scroll position;
        the table is reset only when the rows are other samples. True when updated in place.

        The table reads the analysis's sample columns (:attr:`AnalyteResult.sample_columns`): a row's
        texts are worked out when it is first shown, with no result object for the rows never shown."""
        try:
            shown = result.analyte(analyte) if result is not None else None
        except KeyError:
            shown = None
        old_ids = self.columns.ids if self.columns is not None else []
        new_columns = shown.sample_columns if shown is not None else None
        new_ids = new_columns.ids if new_columns is not None else []
        in_place = bool(old_ids) and old_ids == new_ids
        if not in_place:
            self.beginResetModel()
        old_texts, old_attention = self._texts, self._attention
        self._texts, self._attention, self._blocks = {}, {}, {}
        self.result, self.analyte, self.columns = result, shown, new_columns
        if not in_place:
            self.endResetModel()
            self._headers_changed()
            return False
        last = len(COLUMNS) - 1
        if len(old_texts) + len(old_attention) > COMPARED_ROWS_UP_TO:
            self.dataChanged.emit(self.index(0, 0), self.index(len(new_ids) - 1, last))
        else:
            self._tell_changed_cells(old_texts, old_attention)
        if self._headers_changed():  # a header told of a change lays the table out again and repaints it all
            self.headerDataChanged.emit(Qt.Orientation.Horizontal, 0, last)
        return True

    def _tell_changed_cells(self, old_texts: dict[int, tuple[str, ...]], old_attention: dict[int, bool]) -> None:
        """Tell the view which cells changed: of the rows shown since the last result (every row in
        view has been: it was painted, or its texts were worked out to fit the columns), the cells
        whose text changed, and every cell of a row whose shading changed. A row not shown since is
        worked out afresh when it is shown. One signal per column and run of rows."""
        every = range(len(COLUMNS))
        rows_of: dict[int, list[int]] = {}
        for row in sorted(old_texts.keys() | old_attention.keys()):
            before, shading = old_texts.get(row), old_attention.get(row)
            after = self.row_texts(row)
            if before is None or (shading is not None and self._attention_of(row) != shading):
                changed = every
            else:
                changed = [c for c in every if after[c] != before[c]]
            for c in changed:
                rows_of.setdefault(c, []).append(row)
        for c, rows in rows_of.items():
            first = previous = rows[0]
            for row in rows[1:] + [None]:
                if row is not None and row == previous + 1:
                    previous = row
                    continue
                self.dataChanged.emit(self.index(first, c), self.index(previous, c))
                if row is not None:
                    first = previous = row

    def _attention_of(self, row: int) -> bool:
        attention = self._attention.get(row)
        if attention is None:
            attention = self._attention[row] = self._needs_attention(self.sample(row))
        return attention

    def _headers_changed(self) -> bool:
        """True when the column headers' texts differ from those last shown (kept here)."""
        headers = tuple(self.headerData(c, Qt.Orientation.Horizontal) for c in range(len(COLUMNS)))
        changed, self._headers = headers != self._headers, headers
        return changed

    @property
    def rows(self) -> tuple[SampleResult, ...]:
        """Every row's result object (all made when first read; the table itself reads :meth:`sample`)."""
        return self.analyte.samples if self.analyte is not None else ()

    def sample(self, row: int) -> SampleResult:
        """The result shown in ``row``, made from the sample columns (or the result objects, where the
        analysis has made them already). Rows are made a block at a time, as a table shows them: the
        rows in view, or all the rows of a short table it fits its columns to."""
        made = vars(self.analyte).get("samples")
        if made is not None:
            return made[row]
        block, at = divmod(row, _BLOCK)
        rows = self._blocks.get(block)
        if rows is None:
            rows = self._blocks[block] = self.columns.results(block * _BLOCK, (block + 1) * _BLOCK)  # type: ignore[union-attr]
        return rows[at]

    def rowCount(self, parent: QModelIndex = QModelIndex()) -> int:  # noqa: N802
        return 0 if parent.isValid() or self.columns is None else len(self.columns)

    def columnCount(self, parent: QModelIndex = QModelIndex()) -> int:  # noqa: N802
        return 0 if parent.isValid() else len(COLUMNS)

    def headerData(self, section: int, orientation: Qt.Orientation, role: int = Qt.ItemDataRole.DisplayRole):  # noqa: N802
        if role == Qt.ItemDataRole.ToolTipRole and orientation == Qt.Orientation.Horizontal and section == INTERVAL:
            from ..core.inverse import INTERVAL_SCOPE_NOTE  # the engine loads on the analysis thread

            return INTERVAL_SCOPE_NOTE
        if role != Qt.ItemDataRole.DisplayRole:
            return None
        if orientation == Qt.Orientation.Vertical:
            return str(section + 1)
        name = COLUMNS[section]
        if section == INTERVAL and self.result is not None:
            name = f"{percent_label(self.result.run.settings.confidence_level)} interval"
        unit = self.analyte.analyte.concentration_unit if self.analyte else ""
        if unit and section in WITH_UNIT:
            return f"{name} ({unit})"
        return name

    def data(self, index: QModelIndex, role: int = _DISPLAY):
        """A lookup of what was worked out once per row (painting and scrolling ask for every cell in
        view, several roles each)."""
        if role not in _ANSWERED or not index.isValid():
            return None
        if role == _DISPLAY:
            texts = self._texts.get(index.row())
            return (texts if texts is not None else self.row_texts(index.row()))[index.column()]
        if role == _ALIGNMENT:
            return _ALIGNMENTS[index.column()]
        row = index.row()
        if role == _BACKGROUND:
            return _ATTENTION_BRUSH if self._attention_of(row) else None
        return self.description(self.sample(row))  # the tooltip, asked for one cell at a time

    def row_texts(self, row: int) -> tuple[str, ...]:
        """The cell texts of one row, worked out when the row is first shown and kept for the result
        (a table asks for the same cells many times: sizing its columns, painting, scrolling)."""
        texts = self._texts.get(row)
        if texts is None:
            s = self.sample(row)
            texts = self._texts[row] = tuple(self.text(s, c) for c in range(len(COLUMNS)))
        return texts

    def fit_key(self, col: int, rows: range) -> tuple[str, ...]:
        """What the widths of column ``col``'s cells in ``rows`` depend on: their texts (see
        :func:`~curvewright.app.table_view.fit_columns`)."""
        known, row_texts = self._texts, self.row_texts
        return tuple((known.get(r) or row_texts(r))[col] for r in rows)

    def _needs_attention(self, s: SampleResult) -> bool:
        terms = self._attention_terms
        if terms is None:
            from ..core.inverse import QuantFlag  # loaded: rows exist only once a result has arrived
            from ..core.reporting import ReportStatus

            # looked up once, not once per row (an edit shades every row shown again)
            terms = self._attention_terms = (ReportStatus.IN_RANGE, QuantFlag.UNBOUNDED_INTERVAL | QuantFlag.AMBIGUOUS_ROOT)
        in_range, flagged = terms
        if s.within_limits is False or s.status is not in_range:
            return True
        return bool(s.flags and s.flags & flagged)

    @property
    def _rule(self):  # type: ignore[no-untyped-def]
        return self.result.run.settings.rounding if self.result else None

    def _rounded(self, s: SampleResult) -> str:
        """The sample's reported value under the run's rule, never more coarsely than its interval supports."""
        value = s.reported
        if value is None:
            return "—"
        if value in (float("inf"), float("-inf")):
            return display_number(value)
        if self._rule is None:
            return display_number(value)
        return computed_within(value, s.reported_lower, s.reported_upper, self._rule)

    def text(self, s: SampleResult, col: int) -> str:
        if col == SAMPLE:
            return s.sample_id
        if col == REPORTED:
            return s.reported_text or self._rounded(s)
        if col == INTERVAL:
            if s.reported is None:
                return ""
            return interval_text(s.reported_lower, s.reported_upper, self._rule)
        if col == FLAGS:
            return s.short_flags
        if col == KIND:
            return s.kind.words
        if col == QC:
            verdict = "" if s.within_limits is None else ("pass" if s.within_limits else "FAIL")
            if s.recovery_percent is None:
                return verdict
            return f"{self._recovery_text(s)} % {verdict}".rstrip()
        if col == N:
            return s.replicate_words
        if col == MEAN:
            return display_number(s.mean_response)
        if col == ESTIMATE:
            return display_number(s.estimate)
        if col == DILUTION:
            return entered(s.dilution_factor)
        return display_number(s.reported, 12)  # the number behind what is reported, at full precision

    def _recovery_text(self, s: SampleResult) -> str:
        """The recovery with the decimals that show on which side of its window's limits it lies
        (one, or more near a limit: :func:`~..io.number_text.percent_beside_limits`)."""
        window = None
        if self.result is not None and s.within_limits is not None:
            window = recovery_windows(self.result).get(s.kind.words)
        return percent_beside_limits(s.recovery_percent, 1, 100.0, window)

    def description(self, s: SampleResult) -> str:
        """Everything about one sample's result in words (the tooltip and the details line)."""
        unit = self.analyte.analyte.concentration_unit if self.analyte else ""
        level = f"{percent_label(self.result.run.settings.confidence_level)}" if self.result else ""
        parts = [s.kind.named(s.sample_id)]
        if s.reported is not None:
            parts.append(f"reported {s.reported_text or self._rounded(s)}; value {self._rounded(s)} {unit} ({level} interval "
                         f"{interval_text(s.reported_lower, s.reported_upper, self._rule)} {unit}); estimate {display_number(s.estimate)} {unit} × dilution "
                         f"{entered(s.dilution_factor)}, from the mean of {len(s.replicate_responses)} response(s) "
                         f"{display_number(s.mean_response)}")
        if s.flag_words:
            parts.append(s.flag_words)
        if s.recovery_percent is not None:
            window = "its check window" if s.kind.is_check else "the QC tolerance"
            parts.append(f"recovery {self._recovery_text(s)} % of nominal {entered(s.nominal)} {unit}"
                         + ("" if s.within_limits is None else (f", within {window}" if s.within_limits
                                                                 else f", OUTSIDE {window}")))
        elif s.kind.is_check and s.within_limits is not None:
            parts.append("calibration check " + ("passed" if s.within_limits else "FAILED"))
        return "; ".join(p.replace("  ", " ") for p in parts)

    def as_text(self) -> str:
        lines = ["\t".join(self.headerData(c, Qt.Orientation.Horizontal) for c in range(len(COLUMNS)))]
        # for a spreadsheet: a number in scientific notation as programs read it ("3.20e-5")
        lines += ["\t".join(machine(t) for t in self.row_texts(r)) for r in range(self.rowCount())]
        return "\n".join(lines) + "\n"


class ResultsView(QWidget):
    """The results table and, beneath it, the selected sample's result in words."""

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.results_model = ResultsModel()
        self.table = FittedTableView()
        self.table.setAccessibleName("Results of the samples")
        self.table.setModel(self.results_model)
        self.table.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
        self.table.setAlternatingRowColors(True)
        self.limits = QLabel("")
        self.limits.setWordWrap(True)
        self.limits.setAccessibleName("Detection and quantitation limits")
        self.limits.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        self.limits.setVisible(False)
        self.details = QLabel("Select a sample to read its result in words.")
        self.details.setWordWrap(True)
        self.details.setAccessibleName("The selected sample's result in words")
        self.details.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.addWidget(self.limits)
        layout.addWidget(self.table, 1)
        layout.addWidget(self.details)
        self.table.selectionModel().currentRowChanged.connect(self._on_row)

    def show_result(self, result: RunResult | None, analyte: str) -> None:
        self._show_limits(result, analyte)
        selected = self.table.currentIndex().row()
        in_place = self.results_model.show(result, analyte)
        fit_columns(self.table)
        if in_place and selected >= 0:
            # the same samples, updated: the selection and current row stay; the words follow the values
            self.details.setText(self.results_model.description(self.results_model.sample(selected)))
        elif 0 <= selected < self.results_model.rowCount():
            self.table.selectRow(selected)
        else:
            self.details.setText("Select a sample to read its result in words.")

    def _show_limits(self, result: RunResult | None, analyte: str) -> None:
        """The analyte's LOD and LOQ above the table, as the command's text and the record give them
        (:func:`~..io.result_tables.limits_words`), or why there are none."""
        found = [a for a in result.analytes if a.analyte.name == analyte] if result is not None else []
        text = limits_words(found[0], result) if found and found[0].calibration is not None else ""
        self.limits.setText(text)
        self.limits.setVisible(bool(text))

    def _on_row(self, current: QModelIndex, _previous: QModelIndex) -> None:
        if current.isValid() and current.row() < self.results_model.rowCount():
            self.details.setText(self.results_model.description(self.results_model.sample(current.row())))

    def copy_selection(self) -> str:
        rows = sorted({i.row() for i in self.table.selectionModel().selectedIndexes()})
        model = self.results_model
        lines = ["\t".join(model.headerData(c, Qt.Orientation.Horizontal) for c in range(len(COLUMNS)))]
        lines += ["\t".join(model.row_texts(r)) for r in rows or range(model.rowCount())]
        text = "\n".join(lines) + "\n"
        QGuiApplication.clipboard().setText(text)
        return text
