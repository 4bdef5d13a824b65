"""Dialogs that ask for a reason, preview a refit, preview an import, and edit settings."""

from __future__ import annotations

import html
from dataclasses import replace
from pathlib import Path

from PySide6.QtCore import Qt
from PySide6.QtGui import QBrush, QColor
from PySide6.QtWidgets import (QCheckBox, QComboBox, QDialog, QDialogButtonBox, QDoubleSpinBox, QFormLayout, QLabel,
                               QLineEdit, QPlainTextEdit, QSpinBox, QTableWidget, QTableWidgetItem, QVBoxLayout,
                               QWidget)

from ..core.acceptance import available_profiles, load_profile
from ..core.errors import CurvewrightError
from ..core.limits import LIMIT_METHOD_NAMES, LIMIT_METHODS
from ..core.rounding import RoundingRule
from ..core.run import Analyte, Run
from ..io import run_edits
from ..io.audit import Identity
from ..io.importing import SAMPLE_FIELDS, SKIP, STANDARD_FIELDS, ImportResult, import_samples, import_standards
from ..io.tables import (RawTable, default_sheet, hidden_rows_chosen, hidden_rows_listed, table_from_csv, table_from_text,
                         table_from_xlsx, xlsx_sheets)
from .standards_model import INVALID
from ..core.notation import entered, entered_span, figures, fixed

EXCLUSION_REASONS = (
    "preparation error (standard made up wrongly)",
    "injection or instrument fault recorded at the time",
    "internal-standard response outside 70–130 % of the standards' mean",
    "contaminated or broken vial",
    "integration error confirmed by review",
    "other (describe below)",
)

ANCHOR_REASONS = (
    "placed beyond the calibrated range to fix an asymptote, as the plate layout sets out",
    "the validated method names this level as an anchor point",
    "other (describe below)",
)
CLEAR_ANCHOR_REASONS = (
    "marked as an anchor point by mistake",
    "the validated method judges this level as a calibration standard",
    "other (describe below)",
)


class ReasonDialog(QDialog):
    """Asks for a reason: a choice from a list plus free text; OK only once a reason is given.

    With a list, nothing is chosen at first: OK stays disabled until the analyst picks a reason (and,
    for "other", describes it), so that two quick clicks never record a reason nobody gave.
    """

    def __init__(self, title: str, prompt: str, choices: tuple[str, ...] = (), parent: QWidget | None = None,
                 preview: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setWindowTitle(title)
        self.choices = QComboBox()
        self.choices.addItems(list(choices))
        self.choices.setPlaceholderText("choose the reason…")
        self.choices.setCurrentIndex(-1)
        self.choices.setVisible(bool(choices))
        self.choices.setAccessibleName("Reason")
        self.details = QPlainTextEdit()
        self.details.setPlaceholderText("Details (required for 'other', and whenever no reason is listed)")
        self.details.setAccessibleName("Details of the reason")
        self.details.setTabChangesFocus(True)
        self.buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Ok | QDialogButtonBox.StandardButton.Cancel)
        self.buttons.accepted.connect(self.accept)
        self.buttons.rejected.connect(self.reject)
        layout = QVBoxLayout(self)
        label = QLabel(prompt)
        label.setWordWrap(True)
        layout.addWidget(label)
        layout.addWidget(self.choices)
        layout.addWidget(self.details)
        if preview is not None:
            layout.addWidget(preview)
        layout.addWidget(self.buttons)
        self.choices.currentIndexChanged.connect(self._update)
        self.details.textChanged.connect(self._update)
        self._update()

    def reason(self) -> str:
        """The reason given: the chosen item (with any details), or the details when there is no list."""
        details = self.details.toPlainText().strip()
        if not self.choices.count():
            return details
        choice = self.choices.currentText() if self.choices.currentIndex() >= 0 else ""
        if not choice:
            return ""
        if choice.startswith("other"):
            return details
        return f"{choice}: {details}" if details else choice

    def _update(self) -> None:
        self.buttons.button(QDialogButtonBox.StandardButton.Ok).setEnabled(bool(self.reason()))


def refit_preview(before: Run, after: Run, analyte: str) -> QLabel:
    """A side-by-side of the calibration before and after a change, shown before it is committed."""
    from ..core.run_analysis import analyse_run

    rows = []
    results = []
    for run in (before, after):
        try:
            results.append(analyse_run(run, analytes=(analyte,)).analytes[0])
        except CurvewrightError as exc:
            results.append(str(exc))

    def describe(a) -> list[str]:  # type: ignore[no-untyped-def]
        if isinstance(a, str) or a.calibration is None:
            return [a if isinstance(a, str) else a.not_fitted_words] + [""] * 7
        cal = a.calibration
        # counted as the verdict counts (excluded standards and those without a usable value included
        # where the profile counts them as not passing)
        judged = a.verdict.count_words() if a.verdict is not None else ""
        return [cal.equation(6), f"{figures(cal.residual_sd, 5)}", fixed(cal.adjusted_r_squared, 6),
                f"{cal.n_standards}", reporting_range_words(a), judged, "accepted" if a.accepted else "NOT accepted",
                "<br>".join(html.escape(r) for r in failing_reasons(a))]

    names = ("Curve", "Residual SD", "Adjusted R²", "Standards in fit", "Calibrated range", "Standards within limits",
             "Verdict", "Checks that fail")
    old, new = describe(results[0]), describe(results[1])
    if not old[-1] and not new[-1]:
        names, old, new = names[:-1], old[:-1], new[:-1]
    rows = "".join(f"<tr><td>{n}</td><td>{o}</td><td><b>{w}</b></td></tr>" for n, o, w in zip(names, old, new))
    label = QLabel(f"<p>The refit, before it is committed:</p><table cellpadding='3'><tr><th></th><th>now</th>"
                   f"<th>after the change</th></tr>{rows}</table>")
    label.setTextFormat(Qt.TextFormat.RichText)
    label.setWordWrap(True)  # a failing check's words wrap within the dialog
    # wide enough for the equations and counts on one line each (about 110 characters)
    label.setMinimumWidth(label.fontMetrics().averageCharWidth() * 110)
    return label


def failing_reasons(a) -> list[str]:  # type: ignore[no-untyped-def]
    """The analysed analyte's checks that fail, in the verdict's own words (standards, QC samples,
    calibration checks, method), as the run's reasons give them."""
    groups = (("standards", a.verdict.reasons if a.verdict else ()), ("QC", a.qc_verdict.reasons if a.qc_verdict else ()),
              ("calibration check", a.checks.reasons if a.checks else ()), ("method", a.method_reasons))
    return [f"{name}: {r[len('FAIL: '):]}" for name, reasons in groups for r in reasons if r.startswith("FAIL")]


def reporting_range_words(a) -> str:  # type: ignore[no-untyped-def]
    """The calibrated range of an analysed analyte as every output gives it: the analysis's reporting
    range (LLOQ–ULOQ, the non-zero standards in the fit, narrowed where a failing end level narrows it),
    with "narrowed" said when it is; "not defined" without one."""
    rng = a.reporting
    if rng is None:
        return "not defined"
    unit = f" {a.analyte.concentration_unit}" if a.analyte.concentration_unit else ""
    return f"{entered_span(rng.lloq, rng.uloq)}{unit} (LLOQ–ULOQ{', narrowed' if rng.narrowing else ''})"


def ask_exclusion(parent: QWidget, run: Run, analyte: str, standard_id: str, *, row: int | None = None) -> str | None:
    """Ask why a standard is excluded, naming it and showing the refit; the reason, or None if cancelled."""
    try:
        after = run_edits.exclude_standard(run, analyte, standard_id, "preview")
    except CurvewrightError as exc:
        from PySide6.QtWidgets import QMessageBox

        QMessageBox.information(parent, "Exclude standard", str(exc))
        return None
    a = run.analyte(analyte)
    s = a.standard(standard_id)
    where = f"row {row + 1}, " if row is not None else ""
    conc = f"{entered(s.concentration)} {a.concentration_unit}".strip() if s.has_concentration else repr(s.concentration_text)
    dialog = ReasonDialog(f"Exclude standard {standard_id}",
                          f"Why is standard {standard_id} ({where}nominal {conc}, response {s.response.text.strip()}) "
                          f"of {analyte} excluded from the fit? The standard stays in the run, flagged, with your "
                          "reason in the audit trail.",
                          EXCLUSION_REASONS, parent, refit_preview(run, after, analyte))
    return dialog.reason() if dialog.exec() == QDialog.DialogCode.Accepted else None


def anchor_refusal(run: Run, analyte: str) -> str | None:
    """Why the fit refuses the anchor points of ``analyte`` in ``run`` (the core's words), or None."""
    from ..core.run_analysis import analyse_run

    result = analyse_run(run, analytes=(analyte,)).analytes[0]
    if result.calibration is None and result.error and result.error.startswith("anchor points:"):
        return result.error
    return None


def ask_anchor_points(parent: QWidget, run: Run, analyte: str, standard_ids: list[str], *, mark: bool,
                      rows: list[int]) -> str | None:
    """Ask why standards are marked as anchor points (or their mark cleared), naming them and showing the
    refit; a mark the curve cannot take (not a logistic curve, a point inside the calibrated range) is
    refused with the fit's reason. The reason, or None if refused or cancelled."""
    from PySide6.QtWidgets import QMessageBox

    title = "Mark anchor points" if mark else "Clear anchor points"
    change = run_edits.mark_anchor_points if mark else run_edits.clear_anchor_points
    try:
        after = change(run, analyte, standard_ids, "preview")
    except CurvewrightError as exc:
        QMessageBox.information(parent, title, str(exc))
        return None
    refusal = anchor_refusal(after, analyte)
    if refusal is not None:
        QMessageBox.warning(parent, title, f"{'Not marked' if mark else 'Not cleared'}: standard(s) "
                            f"{', '.join(standard_ids)} of {analyte}. The fit refuses it: {refusal}")
        return None
    a = run.analyte(analyte)
    named = "; ".join(f"{s.id} (row {row + 1}, nominal {entered(s.concentration)} {a.concentration_unit})".replace(" )", ")")
                      for s, row in zip((a.standard(i) for i in standard_ids), rows))
    prompt = (f"Why are standard(s) {named} of {analyte} marked as anchor points? They stay in the fit, but are not "
              "judged for acceptance and lie outside the calibrated range (LLOQ to ULOQ); your reason goes into the "
              "audit trail." if mark else
              f"Why is the anchor-point mark of standard(s) {named} of {analyte} cleared? They will be judged for "
              "acceptance like any standard; your reason goes into the audit trail.")
    dialog = ReasonDialog(title, prompt, ANCHOR_REASONS if mark else CLEAR_ANCHOR_REASONS, parent,
                          refit_preview(run, after, analyte))
    return dialog.reason() if dialog.exec() == QDialog.DialogCode.Accepted else None


class AnalyteDialog(QDialog):
    """An analyte's name and units: editing one (``analyte`` given) or adding one (``analyte`` None)."""

    def __init__(self, analyte: Analyte | None, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setWindowTitle(f"Name and units of {analyte.name}" if analyte else "Add analyte")
        self.name = QLineEdit(analyte.name if analyte else "")
        self.name.setAccessibleName("Analyte name")
        self.concentration_unit = QLineEdit(analyte.concentration_unit if analyte else "")
        self.concentration_unit.setPlaceholderText("e.g. mg/L, ng/mL, µg/kg")
        self.concentration_unit.setAccessibleName("Concentration unit")
        self.response_unit = QLineEdit(analyte.response_unit if analyte else "")
        self.response_unit.setPlaceholderText("e.g. absorbance, peak area, counts/s (optional)")
        self.response_unit.setAccessibleName("Response unit")
        self.reason = QLineEdit()
        self.reason.setPlaceholderText("why (recorded in the audit trail; optional)")
        self.buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Ok | QDialogButtonBox.StandardButton.Cancel)
        self.buttons.accepted.connect(self.accept)
        self.buttons.rejected.connect(self.reject)
        form = QFormLayout(self)
        form.addRow("&Name", self.name)
        form.addRow("&Concentration unit", self.concentration_unit)
        form.addRow("&Response unit", self.response_unit)
        form.addRow("R&eason", self.reason)
        form.addRow(self.buttons)
        self.name.textChanged.connect(self._update)
        self.concentration_unit.textChanged.connect(self._update)
        self._update()

    def values(self) -> dict[str, str]:
        return {"name": self.name.text().strip(), "concentration_unit": self.concentration_unit.text().strip(),
                "response_unit": self.response_unit.text().strip(), "reason": self.reason.text().strip()}

    def _update(self) -> None:
        self.buttons.button(QDialogButtonBox.StandardButton.Ok).setEnabled(bool(self.name.text().strip()))


LEFT_TO_HEADER = "(by its header)"
"""A column-meaning choice that gives no meaning of its own: the import reads the column by its header."""
NOT_USED = "not used"
"""A column-meaning choice: the column is left out (the command line's ``--map samples.skip=…``)."""


class ImportDialog(QDialog):
    """Shows how every value of a table was read before it is imported, and lets the analyst say which
    column is which: one choice per column of the preview, prefilled with the field its header was
    taken for (the command line's ``--map``; the samples' response chosen for several columns reads
    each as a further replicate)."""

    def __init__(self, what: str, source: Path | str, parent: QWidget | None = None, *, text: bool = False,
                 analyte: str = "analyte") -> None:
        super().__init__(parent)
        self.what, self.source, self.is_text = what, source, text
        self.setWindowTitle(f"Import {what}")
        self.resize(900, 560)
        self.result: ImportResult | None = None
        self.sheet = QComboBox()
        self.decimal = QComboBox()
        self.decimal.addItems(["detect", ". (point)", ", (comma)"])
        self.thousands = QComboBox()
        self.thousands.addItems(["none (refuse)", ",", ".", "space", "'"])
        self.analyte = QLineEdit(analyte)
        form = QFormLayout()
        if not text and str(source).lower().endswith((".xlsx", ".xlsm")):
            sheets = xlsx_sheets(source)
            for info in sheets:  # a hidden sheet is offered marked as such, never chosen first
                self.sheet.addItem(info.label, info.name)
            chosen = default_sheet(sheets)
            if chosen is not None:
                self.sheet.setCurrentIndex(sheets.index(chosen))
            form.addRow("&Sheet", self.sheet)
        self.hidden_rows = QComboBox()  # shown only for a sheet with hidden rows: the analyst must choose
        self.hidden_rows.addItems(list(HIDDEN_ROW_LABELS))
        form.addRow("&Hidden rows", self.hidden_rows)
        self.form = form
        form.addRow("&Decimal mark", self.decimal)
        form.addRow("&Thousands separator", self.thousands)
        form.addRow("&Analyte name (when the table has no analyte column)", self.analyte)
        self.summary = QPlainTextEdit()
        self.summary.setReadOnly(True)
        self.preview = QTableWidget()
        self.preview.setAccessibleName("How each value was read")
        self.meanings: list[QComboBox] = []
        self._meaning_headers: list[str] = []
        self.columns_row = QTableWidget(1, 0)
        self.columns_row.setAccessibleName("What each column holds")
        self.columns_row.verticalHeader().setVisible(False)
        self.columns_row.horizontalScrollBar().valueChanged.connect(self.preview.horizontalScrollBar().setValue)
        self.preview.horizontalScrollBar().valueChanged.connect(self.columns_row.horizontalScrollBar().setValue)
        self.buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Ok | QDialogButtonBox.StandardButton.Cancel)
        self.buttons.accepted.connect(self.accept)
        self.buttons.rejected.connect(self.reject)
        layout = QVBoxLayout(self)
        layout.addLayout(form)
        layout.addWidget(QLabel("What each column holds (guessed from its header; choose to change):"))
        layout.addWidget(self.columns_row)
        layout.addWidget(QLabel("Each cell shows the text found → the value read; red cells cannot be used:"))
        layout.addWidget(self.preview, 3)
        layout.addWidget(self.summary, 1)
        layout.addWidget(self.buttons)
        for combo in (self.sheet, self.hidden_rows, self.decimal, self.thousands):
            combo.currentIndexChanged.connect(self.refresh)
        self.sheet.currentIndexChanged.connect(self._forget_meanings)
        self.analyte.editingFinished.connect(self.refresh)
        self.refresh()

    def table(self) -> RawTable:
        if self.is_text:
            return table_from_text(str(self.source))
        path = str(self.source)
        if path.lower().endswith((".xlsx", ".xlsm")):
            return table_from_xlsx(path, self.sheet.currentData() or None)
        return table_from_csv(path)

    def refresh(self) -> None:
        decimal = {0: None, 1: ".", 2: ","}[self.decimal.currentIndex()]
        thousands = {0: None, 1: ",", 2: ".", 3: " ", 4: "'"}[self.thousands.currentIndex()]
        importer = import_standards if self.what == "standards" else import_samples
        options = dict(decimal_mark=decimal, thousands=thousands, analyte=self.analyte.text() or "analyte",
                       mapping=self.column_mapping() or None)
        try:
            read = self.table()
            self._offer_meanings(read)
            self.form.setRowVisible(self.hidden_rows, bool(read.hidden_rows))
            choice = HIDDEN_ROW_LABELS[self.hidden_rows.currentText()]
            if read.hidden_rows and choice is None:  # shown, marked, but nothing imported until the analyst chooses
                asked = hidden_rows_message(read)
                self.result = None
                self._fill(read, importer(read, **options), set(read.hidden_rows))
                self.summary.setPlainText(asked)
                self.buttons.button(QDialogButtonBox.StandardButton.Ok).setEnabled(False)
                return
            table = hidden_rows_chosen(read, choice)
            self.result = importer(table, **options)
        except CurvewrightError as exc:
            self.result = None
            self.summary.setPlainText(str(exc))
            self.preview.setRowCount(0)
            self.buttons.button(QDialogButtonBox.StandardButton.Ok).setEnabled(False)
            return
        self._fill(read, self.result, set(read.hidden_rows))
        self._show_guess(self.result)
        self.summary.setPlainText(self.result.summary())
        self.buttons.button(QDialogButtonBox.StandardButton.Ok).setEnabled(bool(self.result.standards or self.result.samples))

    def column_mapping(self) -> dict[str, object]:
        """The meanings chosen, as the importers take them: field → 1-based column (a list for the samples'
        response over several columns, each a further replicate), ``skip`` → the columns not used.
        Columns left to their header are not named: the import reads them by their header."""
        mapping: dict[str, object] = {}
        for column, combo in enumerate(self.meanings, start=1):
            field = combo.currentData()
            if field is None:
                continue
            if field in mapping:  # several columns: the importer reads them as replicates, or says why it cannot
                before = mapping[field]
                mapping[field] = [*(before if isinstance(before, list) else [before]), column]
            else:
                mapping[field] = column
        return mapping

    def _offer_meanings(self, table: RawTable) -> None:
        """One choice per column of ``table`` (kept while the table's columns stay the same)."""
        headers = next((row for row in table.rows if any(str(c).strip() for c in row)), ())
        names = [entered(h) if isinstance(h, float) else str(h) for h in headers]
        if len(names) == len(self.meanings) and names == self._meaning_headers:
            return
        self._meaning_headers = names
        fields = STANDARD_FIELDS if self.what == "standards" else SAMPLE_FIELDS
        self.meanings = []
        self.columns_row.setColumnCount(len(names))
        self.columns_row.setHorizontalHeaderLabels(names)
        for j, name in enumerate(names):
            combo = QComboBox()
            combo.setAccessibleName(f"What column {j + 1} ({name}) holds")
            combo.setSizeAdjustPolicy(QComboBox.SizeAdjustPolicy.AdjustToContents)
            combo.addItem(LEFT_TO_HEADER, None)
            combo.addItem(NOT_USED, SKIP)
            for field in fields:
                combo.addItem(field.replace("_", " "), field)
            combo.currentIndexChanged.connect(self.refresh)
            self.columns_row.setCellWidget(0, j, combo)
            self.meanings.append(combo)

    def _forget_meanings(self) -> None:
        """Another sheet: its columns are offered afresh (on the next refresh)."""
        self._meaning_headers = []

    def _show_guess(self, result: ImportResult) -> None:
        """Each column left to its header shows the field the import took it for."""
        taken = {column: field for field, column in result.mapping.items()}
        for j, combo in enumerate(self.meanings, start=1):
            if combo.currentData() is None:
                field = taken.get(j)
                combo.setItemText(0, LEFT_TO_HEADER if field is None else
                                  f"{field.replace('_', ' ')} {LEFT_TO_HEADER}")
        for j in range(len(self.meanings)):
            self.columns_row.setColumnWidth(j, max(self.preview.columnWidth(j), self.meanings[j].sizeHint().width()))
            self.preview.setColumnWidth(j, self.columns_row.columnWidth(j))
        if self.meanings:
            self.columns_row.setRowHeight(0, self.meanings[0].sizeHint().height())
            self.columns_row.setFixedHeight(self.columns_row.horizontalHeader().sizeHint().height()
                                            + self.columns_row.rowHeight(0) + 2 * self.columns_row.frameWidth()
                                            + self.columns_row.horizontalScrollBar().sizeHint().height())

    def _fill(self, table: RawTable, result: ImportResult, hidden: set[int] = frozenset()) -> None:  # type: ignore[assignment]
        """The preview: every row read, each cell with the value read from it, cells that cannot be used
        red, and the sheet's hidden rows marked grey (row header "5 (hidden)")."""
        rows = list(zip(table.row_numbers, table.rows))
        width = max((len(r) for _, r in rows), default=0)
        self.preview.setRowCount(len(rows))
        self.preview.setColumnCount(width)
        self.preview.setVerticalHeaderLabels([f"{n} (hidden)" if n in hidden else str(n) for n, _ in rows])
        bad = {(r.row, r.column.split(" ")[0]): r.reason for r in result.rejected}
        from ..io.number_text import parse_reading

        for i, (number, cells) in enumerate(rows):
            for j, cell in enumerate(cells):
                text = entered(cell) if isinstance(cell, float) else cell
                shown = text
                if i > 0 and isinstance(cell, str) and cell.strip():
                    parsed = parse_reading(cell, result.decimal_mark)
                    if parsed.reading is not None and parsed.reading.is_number:
                        shown = f"{cell} → {entered(parsed.reading.value)}"
                    elif parsed.reading is not None and parsed.reading.is_censored:
                        shown = f"{cell} → censored"
                item = QTableWidgetItem(shown)
                if number in hidden:
                    item.setBackground(QBrush(HIDDEN_ROW))
                    item.setToolTip("a hidden row of the sheet: choose whether hidden rows are included")
                reason = bad.get((number, str(j + 1)))
                if reason:
                    item.setBackground(QBrush(INVALID))
                    item.setToolTip(reason)
                self.preview.setItem(i, j, item)
        self.preview.resizeColumnsToContents()


HIDDEN_ROW_LABELS = {"choose whether they are imported…": None, "leave them out": "skip", "include them": "include"}
"""The import dialog's choice for a sheet's hidden rows: words shown, and the choice of
:func:`..io.tables.hidden_rows_chosen` (None: not yet chosen, nothing is imported)."""
HIDDEN_ROW = QColor(215, 215, 215)


def hidden_rows_message(table: RawTable) -> str:
    """Why nothing is imported yet from a sheet with hidden rows, naming them."""
    return (f"{table.source}: sheet {table.sheet!r} has hidden rows holding values: {hidden_rows_listed(table)}. "
            "A hidden row may have been hidden to leave it out, or by accident: choose above whether they are "
            "left out or included (they are marked grey below).")


INTERVAL_LABELS = (
    ("prediction band inverted (Fieller's interval for a straight line; the band's ends for every other curve)", "band"),
    ("symmetric: estimate ± t·standard error", "symmetric"),
)
LIMITS_LABELS = tuple((LIMIT_METHOD_NAMES[m], m) for m in LIMIT_METHODS)
"""The limits methods in the words every list of them uses (:data:`~..core.limits.LIMIT_METHOD_NAMES`)."""
ROUNDING_KIND_LABELS = (("significant figures", "significant"), ("decimal places", "decimals"))
TIE_LABELS = (("round half up (5 rounds up)", "half_up"), ("round half to even", "half_even"))


def _choices(labels: tuple[tuple[str, str], ...], current: str) -> QComboBox:
    """A combo box showing words, holding the setting's value as item data, set to ``current``."""
    box = QComboBox()
    for label, value in labels:
        box.addItem(label, value)
    box.setCurrentIndex(max(box.findData(current), 0))
    return box


class SettingsDialog(QDialog):
    """The run's confidence level, acceptance profile and rounding rule, with the analyst's own name,
    laboratory ID and decimal mark; ``personal_only``: these last alone (kept in the app's settings, not
    in the run, so that a locked run does not refuse them)."""

    def __init__(self, run: Run, parent: QWidget | None = None, decimal_mark: str = "system",
                 identity: Identity | None = None, *, personal_only: bool = False) -> None:
        super().__init__(parent)
        self.setWindowTitle("Your name and decimal mark" if personal_only else "Run settings")
        self.person_name = QLineEdit(identity.name if identity else "")
        self.person_name.setPlaceholderText("as it should appear in the audit trail and the record")
        self.person_id = QLineEdit(identity.id if identity else "")
        self.person_id.setPlaceholderText("laboratory ID (optional)")
        self.decimal = QComboBox()
        for label, value in (("as the system sets it", "system"), (". (point)", "."), (", (comma)", ","),
                             ("ask: refuse values that read two ways", "ask")):
            self.decimal.addItem(label, value)
        self.decimal.setCurrentIndex(max(self.decimal.findData(decimal_mark), 0))
        s = run.settings
        self.level = QDoubleSpinBox()
        self.level.setRange(0.5, 0.999)
        self.level.setDecimals(3)
        self.level.setSingleStep(0.01)
        self.level.setValue(s.confidence_level)
        self.interval = _choices(INTERVAL_LABELS, s.interval)
        self.limits = _choices(LIMITS_LABELS, s.limits_method)
        self.profile = QComboBox()
        for pid in available_profiles():
            self.profile.addItem(load_profile(pid).name, pid)
        index = self.profile.findData(s.acceptance_profile)
        if index >= 0:
            self.profile.setCurrentIndex(index)
        self.rounding_kind = _choices(ROUNDING_KIND_LABELS, s.rounding.kind)
        self.rounding_digits = QSpinBox()
        self.rounding_digits.setRange(0, 15)
        self.rounding_digits.setValue(s.rounding.digits)
        self.rounding_tie = _choices(TIE_LABELS, s.rounding.tie)
        self.reason = QLineEdit()
        self.reason.setPlaceholderText("why the settings change (recorded in the audit trail)")
        form = QFormLayout(self)
        if not personal_only:
            form.addRow("&Confidence level", self.level)
            form.addRow("&Interval", self.interval)
            form.addRow("&LOD/LOQ method", self.limits)
            form.addRow("Acceptance &profile", self.profile)
            form.addRow("&Rounding of reported values", self.rounding_kind)
            form.addRow("&Digits (figures or places)", self.rounding_digits)
            form.addRow("&Tie-break", self.rounding_tie)
        form.addRow("Decimal mark of typed and &pasted values", self.decimal)
        form.addRow("Your &full name", self.person_name)
        form.addRow("Your laboratory &ID", self.person_id)
        if not personal_only:
            form.addRow("R&eason", self.reason)
        buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Ok | QDialogButtonBox.StandardButton.Cancel)
        buttons.accepted.connect(self.accept)
        buttons.rejected.connect(self.reject)
        form.addRow(buttons)

    def identity(self) -> tuple[str, str]:
        """The person's full name and laboratory ID as typed (kept in the app's settings, not the run)."""
        return self.person_name.text().strip(), self.person_id.text().strip()

    def decimal_setting(self) -> str:
        return str(self.decimal.currentData())

    def settings(self, run: Run):  # type: ignore[no-untyped-def]
        return replace(run.settings, confidence_level=round(self.level.value(), 3), interval=self.interval.currentData(),
                       limits_method=self.limits.currentData(), acceptance_profile=self.profile.currentData(),
                       custom_profile=None if self.profile.currentData() != run.settings.acceptance_profile
                       else run.settings.custom_profile,
                       rounding=RoundingRule(self.rounding_kind.currentData(), self.rounding_digits.value(),
                                             self.rounding_tie.currentData()))


class SignDialog(QDialog):
    """Signing the run: the run's verdict and the signatures already given (role, person, time), the
    role, what the signature means (the role's usual words, which the signer may change), and the
    laboratory's signing key when the signature is to be keyed. Approving a NOT ACCEPTED run needs an
    explicit confirmation and a reason; signing a second role as the same person is said plainly
    (it is allowed: laboratories differ). A run whose record is not intact (``record_problems``, what
    ``curvewright check`` reports) shows its problems first, in red, and is signed only with an
    explicit confirmation and a reason too."""

    def __init__(self, role: str, signer: str, key_file: str = "", parent: QWidget | None = None, *,
                 verdict: str = "", accepted: bool | None = None, given: str = "No signatures yet.",
                 also_signed_as: tuple[str, ...] = (), record_problems: tuple[str, ...] = ()) -> None:
        from ..io.signatures import DEFAULT_MEANINGS

        super().__init__(parent)
        self.setWindowTitle(f"Sign the run as {role}")
        self.role = role
        self.meaning = QPlainTextEdit(DEFAULT_MEANINGS[role])
        self.meaning.setAccessibleName("What the signature means")
        self.meaning.setTabChangesFocus(True)
        self.key_file = QLineEdit(key_file)
        self.key_file.setPlaceholderText("optional: the laboratory's signing key (PEM); the signature is then keyed")
        self.key_file.setAccessibleName("Signing key file")
        self.buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Ok | QDialogButtonBox.StandardButton.Cancel)
        self.buttons.accepted.connect(self.accept)
        self.buttons.rejected.connect(self.reject)
        form = QFormLayout(self)
        self.record_problems = QLabel(
            "<b>The run's record is NOT intact.</b> Curvewright's check found:<br>"
            + "<br>".join(f"• {html.escape(p)}" for p in record_problems)
            + "<br>A signature now covers the run as it is; the problems stay on record (the check and the "
              "printed record go on naming them). Sign only if your laboratory's procedures allow it, and say why."
            if record_problems else "")
        self.record_problems.setObjectName("sign-record-problems")
        self.record_problems.setWordWrap(True)
        self.record_problems.setTextFormat(Qt.TextFormat.RichText)
        self.record_problems.setStyleSheet("color:#a11b1b; border:2px solid #a11b1b; padding:6px;")
        self.record_problems.setVisible(bool(record_problems))
        if record_problems:
            form.addRow(self.record_problems)
        self.verdict = QLabel(f"Run verdict: {verdict}" if verdict else "Run verdict: not yet analysed")
        self.verdict.setObjectName("sign-verdict")
        self.verdict.setWordWrap(True)
        form.addRow(self.verdict)
        self.given = QLabel(given)  # io.signatures.signature_list: held and removed signatures alike
        self.given.setObjectName("sign-given")
        self.given.setWordWrap(True)
        form.addRow(self.given)
        self.same_person = QLabel(
            f"You have already signed this run as {' and '.join(also_signed_as)}. You may sign as {role} too if "
            "your laboratory's procedures allow one person in several roles; the record will say so."
            if also_signed_as else "")
        self.same_person.setObjectName("sign-same-person")
        self.same_person.setWordWrap(True)
        self.same_person.setVisible(bool(also_signed_as))
        if also_signed_as:
            form.addRow(self.same_person)
        note = QLabel(f"Signed by {signer}. The signature records your name, ID and login, the role, its meaning, the "
                      "time and the SHA-256 of the data and of the audit trail."
                      + (" Approval locks the run: edits are refused until the approval is withdrawn with a reason."
                         if role == "approver" else ""))
        note.setWordWrap(True)
        form.addRow(note)
        form.addRow("&Meaning", self.meaning)
        self.needs_reason = role == "approver" and accepted is False
        self.despite = QCheckBox("I approve these results although the run is NOT ACCEPTED")
        self.despite.setObjectName("sign-despite")
        self.despite_reason = QPlainTextEdit()
        self.despite_reason.setAccessibleName("Why the run is approved although it is not accepted")
        self.despite_reason.setPlaceholderText("required: why these results are released although the run's "
                                               "checks fail (recorded in the audit trail and printed beside "
                                               "the approval)")
        self.despite_reason.setTabChangesFocus(True)
        if self.needs_reason:
            form.addRow(self.despite)
            form.addRow("&Reason", self.despite_reason)
        self.needs_record_reason = bool(record_problems)
        self.despite_record = QCheckBox("I sign although the run's record is NOT intact")
        self.despite_record.setObjectName("sign-despite-record")
        self.despite_record_reason = QPlainTextEdit()
        self.despite_record_reason.setAccessibleName("Why the run is signed although its record is not intact")
        self.despite_record_reason.setPlaceholderText("required: why you sign although the record is not intact "
                                                      "(recorded in the audit trail with the problems, and printed "
                                                      "beside the signature)")
        self.despite_record_reason.setTabChangesFocus(True)
        if self.needs_record_reason:
            form.addRow(self.despite_record)
            form.addRow("Reason for the &record", self.despite_record_reason)
        form.addRow("Signing &key", self.key_file)
        form.addRow(self.buttons)
        self.meaning.textChanged.connect(self._update)
        self.despite.toggled.connect(self._update)
        self.despite_reason.textChanged.connect(self._update)
        self.despite_record.toggled.connect(self._update)
        self.despite_record_reason.textChanged.connect(self._update)
        self._update()

    def values(self) -> tuple[str, str | None]:
        return self.meaning.toPlainText().strip(), (self.key_file.text().strip() or None)

    def not_accepted_reason(self) -> str:
        """Why a NOT ACCEPTED run is approved ("" when the dialog did not ask)."""
        return self.despite_reason.toPlainText().strip() if self.needs_reason and self.despite.isChecked() else ""

    def record_problems_reason(self) -> str:
        """Why a run whose record is not intact is signed ("" when the dialog did not ask)."""
        return (self.despite_record_reason.toPlainText().strip()
                if self.needs_record_reason and self.despite_record.isChecked() else "")

    def _update(self) -> None:
        ready = bool(self.meaning.toPlainText().strip())
        if self.needs_reason:
            ready = ready and self.despite.isChecked() and bool(self.despite_reason.toPlainText().strip())
        if self.needs_record_reason:
            ready = ready and self.despite_record.isChecked() and bool(self.despite_record_reason.toPlainText().strip())
        self.buttons.button(QDialogButtonBox.StandardButton.Ok).setEnabled(ready)


class RunDetailsDialog(QDialog):
    """The run's name, the instrument it was measured on, and its description."""

    def __init__(self, run: Run, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setWindowTitle("Run name and instrument")
        self.name = QLineEdit(run.name)
        self.name.setAccessibleName("Run name")
        self.instrument = QLineEdit(run.instrument)
        self.instrument.setPlaceholderText("e.g. UV-Vis spectrophotometer, asset 0412")
        self.instrument.setAccessibleName("Instrument")
        self.description = QPlainTextEdit(run.description)
        self.description.setTabChangesFocus(True)
        self.buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Ok | QDialogButtonBox.StandardButton.Cancel)
        self.buttons.accepted.connect(self.accept)
        self.buttons.rejected.connect(self.reject)
        form = QFormLayout(self)
        form.addRow("&Name", self.name)
        form.addRow("&Instrument", self.instrument)
        form.addRow("&Description", self.description)
        form.addRow(self.buttons)
        self.name.textChanged.connect(
            lambda text: self.buttons.button(QDialogButtonBox.StandardButton.Ok).setEnabled(bool(text.strip())))

    def values(self) -> dict[str, str]:
        return {"name": self.name.text().strip(), "instrument": self.instrument.text().strip(),
                "description": self.description.toPlainText().strip()}

