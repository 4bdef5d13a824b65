"""The standards of one analyte as an editable table (Qt model over the immutable run).

Typing or pasting never loses text: a value that is not a number is kept as typed, marked in red
with the reason in its tooltip, and reported in the status line. Inclusion changes only through
the exclusion dialog, with a reason. Read-only columns show what the engine found for each standard.
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
from PySide6.QtCore import QAbstractTableModel, QModelIndex, Qt, Signal
from PySide6.QtGui import QBrush, QColor, QFont

from ..core.run import Analyte, Reading, Run, RunError, Standard
from ..io import run_edits
from ..io.number_text import number_for_editing, percent_beside_limits, signed_text
from ..io.paste import PastedBlock
from .cells import display_reading, number_from_text, reading_from_text, reading_problem
from .session import RunSession
from .table_view import ReasonProvider, RowCache, commit_edit
from ..core.notation import entered, figures

TYPE_CHECKING = False
if TYPE_CHECKING:
    from ..core.run_analysis import AnalyteResult

COLUMNS = ("Id", "Level", "Rep.", "Nominal", "Response", "IS response", "Back-calc.", "%RE", "Within limits",
           "In fit", "Influence", "Exclusion reason")
ID, LEVEL, REP, CONC, RESP, IS, BACK, RE, LIMITS, IN_FIT, INFLUENCE, REASON = range(len(COLUMNS))
RESULT_COLUMNS = (BACK, RE, LIMITS, IN_FIT, INFLUENCE)
"""The columns that show what the engine found for each standard (read-only); "In fit" says whether
the analysis could use the standard, and if not, why."""
_RESULT_PLACE = {c: j for j, c in enumerate(RESULT_COLUMNS)}
"""A result column's place in the texts kept per standard when a result arrives."""
FIELD_COLUMNS = {"id": ID, "level": LEVEL, "replicate": REP, "concentration": CONC, "response": RESP, "is_response": IS}
"""The column of each field a pasted block can fill."""
FIELD_WORDS = {ID: "id", LEVEL: "level", REP: "replicate", CONC: "nominal concentration", RESP: "response",
               IS: "internal-standard response"}
EDITABLE = (ID, LEVEL, REP, CONC, RESP, IS)
INVALID = QColor(255, 214, 214)
EXCLUDED = QColor(110, 110, 110)
FAILING = QColor(255, 236, 200)
BELOW_ZERO = "below zero: a nominal concentration cannot be negative"
"""Why a nominal concentration below zero is marked (the analysis leaves the standard out of the fit)."""
ANCHOR_WORDS = "anchor point, not judged"
"""What the Within-limits cell of an anchor point says: its %RE is shown, never judged."""
ANCHOR_TIP = ("An anchor point of the logistic curve: fitted, but not judged for acceptance and outside the "
              "calibrated range (LLOQ to ULOQ). Its back-calculated value and %RE are shown for information.")


_ROLES_READ = (Qt.ItemDataRole.ToolTipRole, Qt.ItemDataRole.BackgroundRole, Qt.ItemDataRole.ForegroundRole,
               Qt.ItemDataRole.FontRole, Qt.ItemDataRole.TextAlignmentRole)
"""The roles this table answers besides its texts (a view asks for many more, for every cell)."""
_RIGHT = int(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
_RIGHT_ALIGNED = frozenset((REP, CONC, RESP, IS, BACK, RE))
_DISPLAY, _EDIT, _FONT, _FOREGROUND, _ALIGNMENT = (int(r) for r in (
    Qt.ItemDataRole.DisplayRole, Qt.ItemDataRole.EditRole, Qt.ItemDataRole.FontRole, Qt.ItemDataRole.ForegroundRole,
    Qt.ItemDataRole.TextAlignmentRole))
_ROLES_ANSWERED = frozenset((_DISPLAY, _EDIT, *(int(r) for r in _ROLES_READ)))


def _context(analyte: Analyte) -> Analyte:
    """What the cells show besides the standards themselves: the analyte's settings (whether an
    internal standard is used decides whether its responses are checked)."""
    return replace(analyte, standards=())


class StandardsModel(QAbstractTableModel):
    message = Signal(str)
    target = "standards"
    """What a pasted block fills (see :mod:`curvewright.io.paste`)."""

    def __init__(self, session: RunSession, analyte: str) -> None:
        super().__init__()
        self.session = session
        self.analyte_name = analyte
        self.decimal_mark: str | None = None  # the analyst's decimal mark for typed and pasted values
        self.reason_provider: ReasonProvider | None = None  # asks why a raw value that was entered changes
        self._input_texts: dict[int, tuple[Standard, tuple[str, ...]]] = {}
        """Each standard shown and its texts in the columns of what was entered (by ``id``, the standard
        kept beside them so that the number is never taken for another's)."""
        self._result_texts: tuple[object, tuple, list, tuple] | None = None  # type: ignore[type-arg]
        """The result columns' texts last shown: (the analyte's result, the standards' ids, inclusion and
        anchor marks, the texts per standard, the standards they were worked out for), to compare the next
        result's with and to answer the table from while the same result and standards are shown."""
        self.result: AnalyteResult | None = None
        self._positions: dict[str, int] = {}
        """Each fitted standard's place in the result's arrays, by id."""
        self._unusable: dict[str, str] | None = None
        """Why each standard the analysis could not use is not in the fit, by id."""
        first = session.run.analyte(analyte)
        self._cache = RowCache(self, first.standards, _context(first))
        session.run_changed.connect(self._reload)
        session.analysis_ready.connect(self._on_result)
        if session.result is not None:
            self._on_result(session.result)

    # --- reading ---------------------------------------------------------------------------------
    @property
    def standards(self) -> tuple[Standard, ...]:
        return self._cache.rows

    @property
    def analyte(self) -> Analyte | None:
        """The analyte shown (None for a moment while it is being renamed)."""
        try:
            return self.session.run.analyte(self.analyte_name)
        except RunError:
            return None

    def set_analyte(self, name: str) -> None:
        self.analyte_name = name
        self.result = None
        self._positions = {}
        self._unusable = None
        if self.session.result is not None:
            self._pick(self.session.result)
        analyte = self.session.run.analyte(name)
        self._cache.reset(analyte.standards, _context(analyte))

    def rowCount(self, parent: QModelIndex = QModelIndex()) -> int:  # noqa: N802 - Qt override
        return 0 if parent.isValid() else len(self.standards)

    def columnCount(self, parent: QModelIndex = QModelIndex()) -> int:  # noqa: N802
        return 0 if parent.isValid() else len(COLUMNS)

    def headerData(self, section: int, orientation: Qt.Orientation, role: int = Qt.ItemDataRole.DisplayRole):  # noqa: N802
        if role != Qt.ItemDataRole.DisplayRole:
            return None
        if orientation == Qt.Orientation.Horizontal:
            analyte = self.analyte
            unit = analyte.concentration_unit if analyte is not None else ""
            if section in (CONC, BACK) and unit:
                return f"{COLUMNS[section]} ({unit})"
            return COLUMNS[section]
        return str(section + 1)

    def flags(self, index: QModelIndex) -> Qt.ItemFlag:
        base = Qt.ItemFlag.ItemIsEnabled | Qt.ItemFlag.ItemIsSelectable
        # an approved run is locked: its cells open no editor (the approval is withdrawn first, with a reason)
        editable = index.column() in EDITABLE and self.session.run.approval is None
        return base | Qt.ItemFlag.ItemIsEditable if editable else base

    def data(self, index: QModelIndex, role: int = Qt.ItemDataRole.DisplayRole):  # noqa: C901
        if role not in _ROLES_ANSWERED or not index.isValid():
            return None  # a role this table leaves to the view, turned away first
        standards = self.standards
        row, col = index.row(), index.column()
        s = standards[row]
        if role == _DISPLAY or role == _EDIT:
            kept, j = self._result_texts, _RESULT_PLACE.get(col)
            if j is not None and kept is not None and kept[0] is self.result and kept[3] is standards:
                return kept[2][row][j]  # the texts worked out when this result arrived, for these standards
            return self._text(s, col, edit=role == _EDIT)
        if role == _ALIGNMENT:
            return _RIGHT if col in _RIGHT_ALIGNED else None
        if role == _FONT or role == _FOREGROUND:
            if s.included:
                return None
            if role == _FOREGROUND:
                return QBrush(EXCLUDED)
            font = QFont()
            font.setItalic(True)
            return font
        problem = self._problem(s, col)
        if role == Qt.ItemDataRole.ToolTipRole:
            if problem:
                return f"Not used: {problem}"
            if col == REASON and s.exclusion_reason:
                return s.exclusion_reason
            if col == INFLUENCE:
                return self._text(s, col) or "nothing stands out"
            if col in (LIMITS, IN_FIT) and s.anchor:
                return ANCHOR_TIP
            return None
        # the background
        if problem:
            return QBrush(INVALID)
        if col == LIMITS and self._text(s, col) == "NO":
            return QBrush(FAILING)
        return None

    def fit_key(self, col: int, rows: range) -> tuple:  # type: ignore[type-arg]
        """What the widths of column ``col``'s cells in ``rows`` depend on: their texts, in the table's
        font, or for an excluded standard its text in italics (see
        :func:`~curvewright.app.table_view.fit_columns`)."""
        standards = self.standards
        kept, j = self._result_texts, _RESULT_PLACE.get(col)
        if j is not None and kept is not None and kept[0] is self.result and kept[3] is standards:
            texts_of = kept[2]  # worked out when this result arrived, for these standards
            return tuple(texts_of[r][j] if standards[r].included else (texts_of[r][j], "italic") for r in rows)
        if col in RESULT_COLUMNS:
            return tuple(self._text(s, col) if s.included else (self._text(s, col), "italic")
                         for s in (standards[r] for r in rows))
        texts = self._input_texts_of
        return tuple(texts(s)[col] if s.included else (texts(s)[col], "italic") for s in (standards[r] for r in rows))

    def _input_texts_of(self, s: Standard) -> tuple[str, ...]:
        """A standard's texts in the columns of what was entered (the result columns left empty),
        worked out once per standard: standards are immutable, and an edit replaces only those it
        changes, so a table fitted after every analysis measures the others' texts again without
        working them out again."""
        kept = self._input_texts.get(id(s))
        if kept is not None and kept[0] is s:
            return kept[1]
        if len(self._input_texts) > 4 * len(self.standards) + 64:
            self._input_texts = {}  # standards no longer shown
        texts = tuple("" if c in RESULT_COLUMNS else self._text(s, c) for c in range(len(COLUMNS)))
        self._input_texts[id(s)] = (s, texts)
        return texts

    def _problem(self, s: Standard, col: int) -> str | None:
        if col == CONC and not s.has_concentration:
            return number_from_text(s.concentration_text, self.decimal_mark)[1] if s.concentration_text.strip() else "no concentration entered"
        if col == CONC and s.concentration < 0:
            return BELOW_ZERO
        if col == RESP:
            return reading_problem(s.response, self.decimal_mark) or ("no response entered" if s.response.is_missing else None)
        if col == IS and self.analyte is not None and self.analyte.uses_internal_standard:
            return reading_problem(s.internal_standard_response, self.decimal_mark)
        return None

    def _text(self, s: Standard, col: int, edit: bool = False) -> str:
        if col == ID:
            return s.id
        if col == LEVEL:
            return s.level
        if col == REP:
            return str(s.replicate)
        if col == CONC:
            if not s.has_concentration:
                return s.concentration_text
            return number_for_editing(s.concentration, self.decimal_mark) if edit else entered(s.concentration)
        if col == RESP:
            return display_reading(s.response)
        if col == IS:
            return display_reading(s.internal_standard_response)
        if col == REASON:
            return s.exclusion_reason
        return self._result_text(s, col)

    def _not_usable(self, s: Standard) -> str | None:
        """Why the analysis could not use an included standard (None when it could, or before a result)."""
        if self.result is None:
            return None
        if self._unusable is None:
            self._unusable = {u.standard_id: u.reason for u in self.result.unusable_standards}
        return self._unusable.get(s.id)

    def _result_text(self, s: Standard, col: int) -> str:
        if col == IN_FIT:
            if not s.included:
                return "excluded"
            why = self._not_usable(s)
            return f"no: {why}" if why else ("yes, anchor point" if s.anchor else "yes")
        a = self.result
        if a is None or a.calibration is None:
            return ""
        cal = a.calibration
        if not self._positions and a.fitted_standards:
            self._positions = {f.id: i for i, f in enumerate(a.fitted_standards)}
        position = self._positions.get(s.id)
        if position is None:
            if col == LIMITS:
                return "excluded" if not s.included else "not usable"
            if col in (BACK, RE) and self.analyte is not None and not s.included:
                # read off the curve as the record and the workbook show it, though not in the fit
                from ..core.run_analysis import back_calculated_outside_fit

                back, relative = back_calculated_outside_fit(cal, s, self.analyte.uses_internal_standard)
                if col == BACK:
                    return "" if back is None else f"{figures(back, 5)}"
                return "" if relative is None else signed_text(relative, 2)
            return ""
        if col == BACK:
            value = cal.back_calculated[position]
            return f"{figures(value, 5)}" if np.isfinite(value) else "no solution"
        if col == RE:
            value = cal.relative_error[position]
            if not np.isfinite(value):
                return "—"
            judged = a.verdict is not None and bool(a.verdict.judged[position])
            return percent_beside_limits(float(value), 2, 0.0,
                                         float(a.verdict.tolerance_percent[position]) if judged else None, signed=True)
        if col == LIMITS and a.verdict is not None:
            if not a.verdict.judged[position]:
                return ANCHOR_WORDS if s.anchor else "not judged (blank)"
            return "yes" if a.verdict.passing[position] else "NO"
        if col == INFLUENCE:
            return "; ".join(f.value for f in cal.influence_flags[position])
        return ""

    # --- editing ---------------------------------------------------------------------------------
    def setData(self, index: QModelIndex, value, role: int = Qt.ItemDataRole.EditRole) -> bool:  # noqa: N802
        if role != Qt.ItemDataRole.EditRole or index.column() not in EDITABLE:
            return False
        standards = list(self.standards)
        row = index.row()
        try:
            updated, warning = self._with_cell(standards[row], index.column(), str(value), row + 1, self.decimal_mark)
        except RunError as exc:
            self.message.emit(str(exc))
            return False
        standards[row] = updated
        return self._commit(tuple(standards), f"Edit {FIELD_WORDS[index.column()]} of {updated.id}", warning)

    def _with_cell(self, s: Standard, col: int, text: str, row_number: int,
                   decimal_mark: str | None, thousands: str | None = None) -> tuple[Standard, str | None]:
        """The standard with one cell's text entered (kept as typed when it is not a usable value), and
        a warning naming the row, the field and the reason when it is not. ``thousands`` is the
        separator of a pasted block (None: grouped values are refused)."""
        where = f"row {row_number}, {FIELD_WORDS[col]}"
        if col == ID:
            if not text.strip():
                raise RunError(f"{where}: a standard needs an id.")
            if any(x.id == text.strip() for x in self.standards if x is not s):
                raise RunError(f"{where}: id {text.strip()!r} is already used by another standard.")
            return replace(s, id=text.strip()), None
        if col == LEVEL:
            return replace(s, level=text.strip()), None
        if col == REP:
            value, problem = number_from_text(text, decimal_mark, thousands)
            if problem or value != int(value) or value < 1:
                raise RunError(f"{where}: {text!r} is not a whole number of 1 or more; the replicate stays {s.replicate}.")
            return replace(s, replicate=int(value)), None
        if col == CONC:
            value, problem = number_from_text(text, decimal_mark, thousands)
            if problem:
                return replace(s, concentration=math.nan, concentration_text=text), f"{where}: {text!r} {problem}; kept as typed, not used"
            below = f"{where}: {text.strip()!r} is {BELOW_ZERO}; kept, not used in the fit" if value < 0 else None
            return replace(s, concentration=value, concentration_text=""), below
        old = s.response if col == RESP else s.internal_standard_response
        if old is not None and text.strip() == old.text.strip() and (old.is_number or old.is_censored):
            return s, None  # left as it was: the reading it was entered with (pasted with a thousands separator)
        reading, problem = reading_from_text(text, decimal_mark, thousands)
        warning = f"{where}: {text!r} {problem}; kept as typed, not used" if problem else None
        if col == RESP:
            return replace(s, response=reading), warning
        return replace(s, internal_standard_response=reading if text.strip() else None), warning

    def _commit(self, standards: tuple[Standard, ...], description: str, warning: str | None = None) -> bool:
        """Make the standards current as one undoable step; a changed raw value first asks why
        (``reason_provider``), and nothing changes when no reason is given."""
        def update(reason: str = "") -> Run:
            return run_edits.update_standards(self.session.run, self.analyte_name, standards, description, reason=reason,
                                              user=self.session.identity)

        if not commit_edit(self, update, description):
            return False
        if warning:
            self.message.emit(warning)
        return True

    @staticmethod
    def field_columns() -> dict[str, int]:
        """The column of each field a pasted block can fill."""
        return dict(FIELD_COLUMNS)

    def apply_block(self, block: PastedBlock, top: int | None) -> tuple[int, tuple[str, ...]]:
        """Enter a pasted block (read by :func:`curvewright.io.paste.read_block`) from row ``top``
        (0-based; None adds every row below the last), as one undoable, audited step.

        Values that cannot be used are kept as typed and marked; new standards without a replicate
        number get the next one at their concentration, as a file import numbers them. Returns the
        rows entered and what needs attention (row, field, reason).
        """
        standards = list(self.standards)
        start = len(standards) if top is None else top
        warnings: list[str] = []
        records = block.records()
        for i, (cells, _) in enumerate(records):
            row = start + i
            is_new = row >= len(standards)
            if is_new:
                standards.append(Standard(self._new_id(standards), math.nan, Reading(None, ""), 1))
            for name, text in cells.items():
                try:
                    standards[row], warning = self._with_cell(standards[row], FIELD_COLUMNS[name], text, row + 1,
                                                              block.decimal_mark, block.thousands)
                except RunError as exc:
                    warnings.append(str(exc))
                    continue
                if warning:
                    warnings.append(warning)
            if is_new and "replicate" not in cells:
                conc = standards[row].concentration
                same = sum(1 for other in standards[:row] if other.has_concentration and other.concentration == conc)
                standards[row] = replace(standards[row], replicate=same + 1 if standards[row].has_concentration else 1)
        if not records:
            return 0, ()
        where = "added below the last" if top is None or start >= len(self.standards) else f"from row {start + 1}"
        if not self._commit(tuple(standards), f"Paste {len(records)} row(s) of standards ({where})"):
            return 0, ()
        return len(records), tuple(warnings)

    def add_row(self) -> None:
        standards = list(self.standards)
        standards.append(Standard(self._new_id(standards), math.nan, Reading(None, ""), 1))
        self._commit(tuple(standards), "Add a standard")

    def remove_row(self, row: int, reason: str) -> None:
        s = self.standards[row]
        try:
            self.session.apply(run_edits.remove_standard(self.session.run, self.analyte_name, s.id, reason,
                                                         user=self.session.identity), f"Remove {s.id}")
        except RunError as exc:
            self.message.emit(str(exc))

    def _new_id(self, standards: list[Standard]) -> str:
        taken = {s.id for s in standards}
        n = len(standards) + 1
        while f"STD-{n}" in taken:
            n += 1
        return f"STD-{n}"

    def as_text(self, rows: list[int] | None = None) -> str:
        """Tab-separated text of the table (header and rows), for the clipboard."""
        chosen = range(self.rowCount()) if rows is None else rows
        lines = ["\t".join(self.headerData(c, Qt.Orientation.Horizontal) for c in range(len(COLUMNS)))]
        for r in chosen:
            lines.append("\t".join(self._text(self.standards[r], c) for c in range(len(COLUMNS))))
        return "\n".join(lines) + "\n"

    # --- updates ---------------------------------------------------------------------------------
    def _reload(self, run) -> None:  # type: ignore[no-untyped-def]
        try:
            rows = run.analyte(self.analyte_name).standards
        except RunError:
            rows = ()  # the analyte was renamed or removed; the window selects another
            self._cache.update(rows, key=lambda s: s.id)
            return
        self._cache.update(rows, key=lambda s: s.id, context=_context(run.analyte(self.analyte_name)))

    def _pick(self, result) -> None:  # type: ignore[no-untyped-def]
        self._positions = {}
        self._unusable = None
        try:
            self.result = result.analyte(self.analyte_name)
        except KeyError:
            self.result = None

    def _on_result(self, result) -> None:  # type: ignore[no-untyped-def]
        """Show a new result: the view is told only of the result cells whose text changed (their
        shading follows the text), one signal per column and run of rows."""
        standards = self.standards
        # what the result columns' texts depend on besides the result: each standard's place in the fit
        shown = tuple((s.id, s.included, s.anchor) for s in standards)
        kept = self._result_texts
        if self.result is None:
            before = None
        elif kept is not None and kept[0] is self.result and kept[1] == shown:
            before = kept[2]  # worked out for this result and these standards after the last analysis
        else:
            before = [tuple(self._text(s, c) for c in RESULT_COLUMNS) for s in standards]
        self._pick(result)
        self._result_texts = None
        if not standards:
            return
        if before is None:
            self.dataChanged.emit(self.index(0, min(RESULT_COLUMNS)), self.index(len(standards) - 1, max(RESULT_COLUMNS)))
            return
        after = [tuple(self._text(s, c) for c in RESULT_COLUMNS) for s in standards]
        self._result_texts = (self.result, shown, after, standards)
        for j, column in enumerate(RESULT_COLUMNS):
            rows = [r for r in range(len(standards)) if before[r][j] != after[r][j]]
            start = 0
            while start < len(rows):
                stop = start
                while stop + 1 < len(rows) and rows[stop + 1] == rows[stop] + 1:
                    stop += 1
                self.dataChanged.emit(self.index(rows[start], column), self.index(rows[stop], column))
                start = stop + 1
