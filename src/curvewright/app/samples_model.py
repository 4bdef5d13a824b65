"""The samples of the run as an editable table, showing the responses of the selected analyte.

Responses of replicates are typed in one cell separated by ";" (e.g. "0.512; 0.508"), and so are
their internal-standard responses in the IS column (shown where the analyte has any); a block pasted
into either column is entered as the same cells typed would be, responses before their IS responses. A value
that cannot be used is never dropped: a response that is not a number is kept as typed and marked;
a dilution factor, run order or nominal value that is not a number is refused, stays in the cell
marked in red with the reason, and is named in the status line.
"""

from __future__ import annotations

from dataclasses import replace
from typing import Callable

from PySide6.QtCore import QAbstractTableModel, QModelIndex, Qt, Signal
from PySide6.QtGui import QBrush

from ..core.run import Measurement, Run, RunError, Sample, SampleKind
from ..io import run_edits
from ..io.importing import KIND_CHOICES, KIND_WORDS
from ..core.notation import entered
from ..io.number_text import number_for_editing
from ..io.paste import PastedBlock
from .cells import number_from_text, reading_from_text, reading_problem
from .session import RunSession
from .table_view import ReasonProvider, RowCache, commit_edit
from .standards_model import INVALID

COLUMNS = ("Id", "Kind", "Order", "Dilution", "Nominal", "Responses", "IS responses")
ID, KIND, ORDER, DILUTION, NOMINAL, RESPONSES, IS = range(len(COLUMNS))
FIELD_COLUMNS = {"id": ID, "kind": KIND, "run_order": ORDER, "dilution": DILUTION, "nominal": NOMINAL, "response": RESPONSES,
                 "is_response": IS}
"""The column of each field a pasted block can fill."""
FIELD_WORDS = {ID: "id", KIND: "kind", ORDER: "run order", DILUTION: "dilution factor", NOMINAL: "nominal value",
               RESPONSES: "responses", IS: "internal-standard responses"}


class SamplesModel(QAbstractTableModel):
    message = Signal(str)
    target = "samples"
    """What a pasted block fills (see :mod:`curvewright.io.paste`)."""

    def __init__(self, session: RunSession, analyte: str) -> None:
        super().__init__()
        self.session = session
        self.analyte_name = analyte
        self.decimal_mark: str | None = None  # the analyst's decimal mark for typed and pasted values
        self.pending: dict[tuple[str, int], tuple[str, str]] = {}
        self.reason_provider: ReasonProvider | None = None  # asks why a raw value that was entered changes
        self._cache = RowCache(self, session.run.samples)
        session.run_changed.connect(self._reload)

    @property
    def samples(self) -> tuple[Sample, ...]:
        return self._cache.rows

    def set_analyte(self, name: str) -> None:
        self.analyte_name = name
        self._cache.reset(self.session.run.samples)

    def rowCount(self, parent: QModelIndex = QModelIndex()) -> int:  # noqa: N802
        return 0 if parent.isValid() else len(self.samples)

    def columnCount(self, parent: QModelIndex = QModelIndex()) -> int:  # noqa: N802
        return 0 if parent.isValid() else len(COLUMNS)

    def headerData(self, section: int, orientation: Qt.Orientation, role: int = Qt.ItemDataRole.DisplayRole):  # noqa: N802
        if role == Qt.ItemDataRole.ToolTipRole and orientation == Qt.Orientation.Horizontal and section == RESPONSES:
            return "The responses of the replicates, separated by ';' (e.g. 0.512; 0.508)"
        if role == Qt.ItemDataRole.ToolTipRole and orientation == Qt.Orientation.Horizontal and section == IS:
            return "The internal-standard responses of the replicates, in the order of their responses, separated by ';'"
        if role != Qt.ItemDataRole.DisplayRole:
            return None
        if orientation == Qt.Orientation.Vertical:
            return str(section + 1)
        try:
            unit = self.session.run.analyte(self.analyte_name).concentration_unit
        except RunError:
            unit = ""  # the analyte is being renamed; the window shows the new name next
        if section == NOMINAL:
            return f"Nominal ({unit})" if unit else "Nominal"
        if section == RESPONSES:
            return f"{self.analyte_name} responses (replicates: a; b)"
        if section == IS:
            return "IS responses (replicates: a; b)"
        return COLUMNS[section]

    def flags(self, index: QModelIndex) -> Qt.ItemFlag:
        base = Qt.ItemFlag.ItemIsEnabled | Qt.ItemFlag.ItemIsSelectable
        # an approved run is locked: its cells open no editor (the approval is withdrawn first, with a reason)
        return base | Qt.ItemFlag.ItemIsEditable if self.session.run.approval is None else base

    def data(self, index: QModelIndex, role: int = Qt.ItemDataRole.DisplayRole):
        if not index.isValid():
            return None
        s = self.samples[index.row()]
        col = index.column()
        pending = self.pending.get((s.id, col))
        problem = pending[1] if pending else self._problem(s, col)
        if role in (Qt.ItemDataRole.DisplayRole, Qt.ItemDataRole.EditRole):
            return pending[0] if pending else self._text(s, col, edit=role == Qt.ItemDataRole.EditRole)
        if role == Qt.ItemDataRole.ToolTipRole:
            tip = [f"Not used: {problem}"] if problem else []
            if col == RESPONSES and not pending:
                tip += [kept] if (kept := self._internal_standard_words(s)) else []
            return "\n".join(tip) or None
        if role == Qt.ItemDataRole.BackgroundRole and problem:
            return QBrush(INVALID)
        return None

    def _problem(self, s: Sample, col: int) -> str | None:
        if col == IS:
            problems = [f"replicate {m.replicate}: {p}" for m in s.measurements_of(self.analyte_name)
                        if m.internal_standard_response is not None
                        and (p := reading_problem(m.internal_standard_response, self.decimal_mark))]
            return "; ".join(problems) or None
        if col != RESPONSES:
            return None
        problems = [f"replicate {m.replicate}: {p}" for m in s.measurements_of(self.analyte_name)
                    if (p := reading_problem(m.response, self.decimal_mark))]
        return "; ".join(problems) or None

    def has_internal_standard(self) -> bool:
        """The analyte is calibrated against an internal standard, or a sample holds an internal-standard
        response for it: the IS column is shown."""
        run = self.session.run
        try:
            if run.analyte(self.analyte_name).uses_internal_standard:
                return True
        except RunError:
            return False
        return any(m.internal_standard_response is not None and m.analyte == self.analyte_name
                   for s in run.samples for m in s.measurements)

    def _internal_standard_words(self, s: Sample) -> str:
        """The internal-standard responses of the analyte's replicates, which this table has no cell
        for: they are kept when a response is corrected, and named here so the analyst sees them."""
        held = [f"replicate {m.replicate}: {m.internal_standard_response.text.strip() or '(empty)'}"
                for m in s.measurements_of(self.analyte_name) if m.internal_standard_response is not None]
        return ("Internal-standard responses (kept when a response is corrected): " + "; ".join(held)) if held else ""

    def _text(self, s: Sample, col: int, edit: bool = False) -> str:
        """The cell's text: a number with every digit it holds (never rounded, so that opening a cell
        and pressing Enter changes nothing), in the table's decimal mark in the editor."""
        number = (lambda v: number_for_editing(v, self.decimal_mark)) if edit else entered
        if col == ID:
            return s.id
        if col == KIND:
            return s.kind.words
        if col == ORDER:
            return "" if s.run_order is None else str(s.run_order)
        if col == DILUTION:
            return number(s.dilution_factor)
        if col == NOMINAL:
            value = s.nominal_of(self.analyte_name)
            return "" if value is None else number(value)
        if col == IS:
            return "; ".join("" if m.internal_standard_response is None else m.internal_standard_response.text.strip()
                             for m in s.measurements_of(self.analyte_name))
        return "; ".join(m.response.text.strip() for m in s.measurements_of(self.analyte_name))

    # --- editing ---------------------------------------------------------------------------------
    def setData(self, index: QModelIndex, value, role: int = Qt.ItemDataRole.EditRole) -> bool:  # noqa: N802
        if role != Qt.ItemDataRole.EditRole:
            return False
        samples = list(self.samples)
        row, col = index.row(), index.column()
        ok, sample = self._with_cell(samples[row], col, str(value), row + 1, self.decimal_mark, self.message.emit)
        if not ok:
            self.dataChanged.emit(index, index)
            return False
        samples[row] = sample
        return self._commit(tuple(samples), f"Edit {FIELD_WORDS[col]} of {sample.id}")

    def _with_cell(self, s: Sample, col: int, text: str, row_number: int, decimal_mark: str | None,
                   report: Callable[[str], object], thousands: str | None = None) -> tuple[bool, Sample]:
        """The sample with one cell's text entered, or (False, the sample unchanged) when the value is
        refused (the cell then keeps the text, marked); ``report`` receives what needs attention.
        ``thousands`` is the separator of a pasted block (None: grouped values are refused)."""
        where = f"samples row {row_number}, {FIELD_WORDS[col]}"
        self.pending.pop((s.id, col), None)
        t = text.strip()

        def refuse(reason: str) -> tuple[bool, Sample]:
            self.pending[(s.id, col)] = (text, reason)
            report(f"{where}: {text!r} {reason}; not applied (the cell keeps what you typed)")
            return False, s

        if col == ID:
            if not t:
                return refuse("is empty: a sample needs an id")
            if any(x.id == t for x in self.samples if x is not s):
                return refuse("is already the id of another sample")
            return True, replace(s, id=t)
        if col == KIND:
            kind = KIND_WORDS.get(t.lower()) or next((k for k in SampleKind if k.words == t.lower()), None)
            if kind is None:
                return refuse(f"is not a sample kind ({KIND_CHOICES})")
            return True, replace(s, kind=kind)
        if col == ORDER:
            if not t:
                return True, replace(s, run_order=None)
            value, problem = number_from_text(t, decimal_mark, thousands)
            if problem or value != int(value) or value < 0:
                return refuse("is not a whole number")
            return True, replace(s, run_order=int(value))
        if col == DILUTION:
            value, problem = number_from_text(t, decimal_mark, thousands)
            if problem or value <= 0:
                return refuse(problem or "must be above zero")
            return True, replace(s, dilution_factor=value)
        if col == NOMINAL:
            others = tuple((a, v) for a, v in s.nominal if a != self.analyte_name)
            if not t:
                return True, replace(s, nominal=others)
            value, problem = number_from_text(t, decimal_mark, thousands)
            if problem:
                return refuse(problem)
            return True, replace(s, nominal=others + ((self.analyte_name, value),))
        if col == IS:
            return self._with_internal_standard(s, text, where, decimal_mark, thousands, refuse, report)
        parts = text.split(";") if t else [""]  # an empty cell: one reading with none recorded, as a file import keeps it
        before = s.measurements_of(self.analyte_name)
        others = tuple(m for m in s.measurements if m.analyte != self.analyte_name)
        mine: list[Measurement] = []
        bad = []
        for i, part in enumerate(parts):
            old = before[i] if i < len(before) else None
            if old is not None and part.strip() == old.response.text.strip() and (
                    old.response.is_number or old.response.is_censored):
                # a replicate left as it was keeps the reading it was entered with (a pasted "7.388,2" was
                # read with the block's thousands separator, which a typed edit does not take)
                mine.append(replace(old, replicate=i + 1))
                continue
            reading, problem = reading_from_text(part, decimal_mark, thousands)
            # the table has no cell for the internal-standard response: a corrected analyte response
            # keeps the one entered or imported with its replicate (nothing typed is lost)
            mine.append(Measurement(self.analyte_name, i + 1, reading,
                                    old.internal_standard_response if old is not None else None))
            if problem:
                bad.append(f"replicate {i + 1}: {problem}")
        if bad:
            report(f"{where}: " + "; ".join(bad) + "; kept as typed, not used")
        return True, replace(s, measurements=others + tuple(mine))

    def _with_internal_standard(self, s: Sample, text: str, where: str, decimal_mark: str | None,
                                thousands: str | None, refuse, report) -> tuple[bool, Sample]:  # type: ignore[no-untyped-def]
        """The sample with the internal-standard responses of its replicates entered, in their order
        (";" between them; an empty part: none for that replicate). Each belongs to a replicate's
        response: more than the replicates entered are refused."""
        mine = s.measurements_of(self.analyte_name)
        parts = text.split(";") if text.strip() else [""] * len(mine)
        if len(parts) > len(mine):
            return refuse(f"gives {len(parts)} internal-standard responses for {len(mine)} replicate(s); enter "
                          "each replicate's response first")
        changed, bad = [], []
        for i, m in enumerate(mine):
            part = parts[i] if i < len(parts) else ""
            old = m.internal_standard_response
            if old is not None and part.strip() == old.text.strip():
                changed.append(m)  # left as it was: the reading it was entered with
                continue
            reading, problem = reading_from_text(part, decimal_mark, thousands) if part.strip() else (None, None)
            changed.append(replace(m, internal_standard_response=reading))
            if problem:
                bad.append(f"replicate {m.replicate}: {problem}")
        if bad:
            report(f"{where}: " + "; ".join(bad) + "; kept as typed, not used")
        others = tuple(m for m in s.measurements if m.analyte != self.analyte_name)
        return True, replace(s, measurements=others + tuple(changed))

    def _commit(self, samples: tuple[Sample, ...], description: str, reason: str = "") -> bool:
        """Make the samples current as one undoable step (``reason`` for a removal); a changed raw value
        first asks why (``reason_provider``), and nothing changes when no reason is given."""
        def update(why: str = "") -> Run:
            return run_edits.update_samples(self.session.run, samples, description, reason=why, removed_reason=reason,
                                            user=self.session.identity)

        return commit_edit(self, update, description, refused=self.pending.clear)

    @staticmethod
    def field_columns() -> dict[str, int]:
        """The column of each field a pasted block can fill."""
        return dict(FIELD_COLUMNS)

    def apply_block(self, block: PastedBlock, top: int | None) -> tuple[int, tuple[str, ...]]:
        """Enter a pasted block (read by :func:`curvewright.io.paste.read_block`) from row ``top``
        (0-based; None adds every row below the last), as one undoable, audited step. Rows with the
        same sample id are one sample with replicate responses, as in a file import. Returns the
        samples entered and what needs attention (row, field, reason)."""
        samples = list(self.samples)
        start = len(samples) if top is None else top
        notes: list[str] = []
        records = block.records()
        for i, (cells, _) in enumerate(records):
            row = start + i
            if row >= len(samples):
                sid = cells.get("id", "").strip()
                if not sid or any(x.id == sid for x in samples):
                    if sid:
                        notes.append(f"samples row {row + 1}: id {sid!r} is already used; the new sample is named "
                                     f"{self._new_id(samples)!r}")
                    sid = self._new_id(samples)
                samples.append(Sample(sid))
                cells = {k: v for k, v in cells.items() if k != "id"}
            # the internal-standard responses last: each belongs to a replicate's response, entered first
            for name, text in sorted(cells.items(), key=lambda item: item[0] == "is_response"):
                ok, sample = self._with_cell(samples[row], FIELD_COLUMNS[name], text, row + 1, block.decimal_mark,
                                             notes.append, block.thousands)
                if ok:
                    samples[row] = sample
        if not records:
            return 0, ()
        where = "added below the last" if start >= len(self.samples) else f"from row {start + 1}"
        if not self._commit(tuple(samples), f"Paste {len(records)} sample(s) ({where})"):
            return 0, ()
        return len(records), tuple(notes)

    def add_row(self) -> None:
        samples = list(self.samples)
        samples.append(Sample(self._new_id(samples)))
        self._commit(tuple(samples), "Add a sample")

    def remove_row(self, row: int, reason: str) -> None:
        samples = list(self.samples)
        removed = samples.pop(row)
        self._commit(tuple(samples), f"Remove sample {removed.id}", reason)

    def _new_id(self, samples: list[Sample]) -> str:
        taken = {s.id for s in samples}
        n = len(samples) + 1
        while f"Sample {n}" in taken:
            n += 1
        return f"Sample {n}"

    def as_text(self) -> str:
        lines = ["\t".join(self.headerData(c, Qt.Orientation.Horizontal) for c in range(len(COLUMNS)))]
        lines += ["\t".join(self._text(s, c) for c in range(len(COLUMNS))) for s in self.samples]
        return "\n".join(lines) + "\n"

    def _reload(self, run) -> None:  # type: ignore[no-untyped-def]
        self._cache.update(run.samples, key=lambda s: s.id)

    def fit_key(self, col: int, rows: range) -> tuple[str, ...]:
        """What the widths of column ``col``'s cells in ``rows`` depend on: their texts (see
        :func:`~curvewright.app.table_view.fit_columns`)."""
        samples, pending = self.samples, self.pending
        return tuple(p[0] if (p := pending.get((samples[r].id, col))) else self._text(samples[r], col) for r in rows)
