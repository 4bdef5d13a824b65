"""The main window: the inputs on the left, the curve and the job's answer on the right, the caution
always in view. Every change goes through the session (undoable, audited); every number comes from the
engine's results.

Every menu item and button is connected through :meth:`MainWindow.command`, which calls its slot with
no arguments: a signal's own argument (``clicked(bool)``, ``triggered(bool)``) never reaches a slot
whose optional parameter it would fill.
"""

from __future__ import annotations

from dataclasses import replace
from pathlib import Path
from typing import Callable

import numpy as np
import shiboken6
from PySide6.QtCore import QSettings, Qt, QTimer
from PySide6.QtGui import QAction, QKeySequence
from PySide6.QtWidgets import (QComboBox, QFileDialog, QFrame, QHBoxLayout, QLabel, QMainWindow, QMenu,
                               QMessageBox, QProgressDialog, QPushButton, QScrollArea, QSplitter, QTabWidget,
                               QVBoxLayout, QWidget)

from .. import CAUTION, __version__
from ..core.errors import CurvewrightError
from ..core.notation import entered_span
from ..core.run import Analyte, Run
from ..io import run_edits
from ..io.atomic import write_atomically
from ..io.errors import ExportError
from ..io.run_document import DocumentChanged, RecordsWouldBeLost, document_sha256
from .curve_view import CurveView, InfluenceView
from ..io.paste import read_block
from .dialogs import AnalyteDialog, ImportDialog, ReasonDialog, SettingsDialog, ask_anchor_points, ask_exclusion
from .audit_view import AuditTrailView
from .paste_dialog import PasteDialog
from .evidence_panel import EvidencePanel
from .figures import plot_image_bytes
from .main import settings_identity
from .results_model import ResultsView
from .samples_model import SamplesModel
from .additions_view import AdditionsView
from .session import RunSession
from .standards_model import StandardsModel
from .table_view import SheetTableView, fit_columns

TYPE_CHECKING = False
if TYPE_CHECKING:
    from ..core.run_analysis import RunResult

MAX_RECENT = 8
PREFERENCES_MENU = "Analysis → Your name and decimal mark…"
"""Where the analyst's own name, laboratory ID and decimal mark are set (a locked run's too)."""


def standards_key_columns() -> tuple[int, ...]:
    """The standards table's columns kept in view where the window is wide enough: the standard, what
    was entered for it, and what the fit found (back-calculated value, %RE, within limits). Whether a
    standard is in the fit shows in its row too (an excluded standard's row is greyed)."""
    from . import standards_model as sm

    return (sm.ID, sm.LEVEL, sm.REP, sm.CONC, sm.RESP, sm.IS, sm.BACK, sm.RE, sm.LIMITS)


def results_key_columns() -> tuple[int, ...]:
    """The results table's columns kept in view: the sample, what is reported, its interval, its flags."""
    from . import results_model as rm

    return (rm.SAMPLE, rm.REPORTED, rm.INTERVAL, rm.FLAGS)


def blank_run(settings: QSettings | None = None) -> Run:
    from ..core.rounding import RoundingRule
    from ..core.run import RunSettings

    run_settings = RunSettings()
    if settings is not None:
        run_settings = RunSettings(
            confidence_level=float(settings.value("defaults/confidence_level", 0.95)),
            acceptance_profile=str(settings.value("defaults/profile", "general")),
            rounding=RoundingRule(str(settings.value("defaults/rounding_kind", "significant")),
                                  int(settings.value("defaults/rounding_digits", 3)),
                                  str(settings.value("defaults/rounding_tie", "half_up"))),
        )
    return run_edits.new_run("Untitled run", (Analyte("analyte 1", "", ""),), settings=run_settings,
                             user=settings_identity(settings) if settings is not None else None)


class MainWindow(QMainWindow):
    def __init__(self, session: RunSession, settings: QSettings) -> None:
        super().__init__()
        self.settings = settings
        self.session: RunSession = session
        self.actions_by_name: dict[str, QAction] = {}
        self._build()
        self._menus()
        self.attach(session)

    # --- layout ----------------------------------------------------------------------------------
    def command(self, slot: Callable[[], object]) -> Callable[..., None]:
        """A receiver for a signal that calls ``slot()`` with no arguments, whatever the signal carries."""
        def receive(*_signal_arguments: object) -> None:
            slot()
        return receive

    def user_command(self, slot: Callable[[], object]) -> Callable[..., None]:
        """A receiver for what the analyst asks for (a menu action, its shortcut, a button): like
        :meth:`command`, after entering any value left typed in an open cell editor
        (:meth:`commit_open_editors`)."""
        def receive(*_signal_arguments: object) -> None:
            self.commit_open_editors()
            slot()
        return receive

    def commit_open_editors(self) -> None:
        """Enter a value typed into a table cell but not yet entered with Enter, as Enter would (asking
        why where a changed value needs a reason), before any command reads or writes the run: saving,
        exporting, the record, signing, opening another run, switching analyte, closing. When the value is
        refused or its reason is not given, the command goes on without it and the cell shows its value."""
        for view in (self.standards_view, self.samples_view):
            view.commit_open_editor()

    def _build(self) -> None:
        self.caution = QLabel("⚠ " + CAUTION)
        self.caution.setWordWrap(True)
        self.caution.setAccessibleName("Caution")
        self.caution.setStyleSheet("background:#fff4e5; color:#6b3000; border:1px solid #d9a066; padding:4px;")
        self.verdict = QLabel("")
        self.verdict.setWordWrap(True)
        self.verdict.setAccessibleName("Verdict of the run")
        self.verdict.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        self.attention = QLabel("")
        self.attention.setWordWrap(True)
        self.attention.setAccessibleName("What needs attention")
        self.attention.setStyleSheet("color:#6b4a00;")
        self.default_model_note = QLabel("")
        self.default_model_note.setWordWrap(True)
        self.default_model_note.setAccessibleName("Calibration function not chosen")
        self.default_model_note.setStyleSheet("color:#6b4a00;")
        self.take_recommendation_button = QPushButton("")
        self.take_recommendation_button.setAccessibleName("Use the recommended calibration function")
        self.take_recommendation_button.clicked.connect(self.user_command(self.take_recommendation))
        self.default_model_row = QWidget()
        note_row = QHBoxLayout(self.default_model_row)
        note_row.setContentsMargins(0, 0, 0, 0)
        note_row.addWidget(self.default_model_note, 1)
        note_row.addWidget(self.take_recommendation_button, 0, Qt.AlignmentFlag.AlignVCenter)
        self.default_model_row.setVisible(False)
        self.analyte_box = QComboBox()
        self.analyte_box.setAccessibleName("Analyte")
        self.analyte_box.currentTextChanged.connect(self._on_analyte)
        self.analyte_button = QPushButton("Name and &units…")
        self.analyte_button.setToolTip("Rename the analyte or set its concentration and response units")
        self.analyte_button.clicked.connect(self.user_command(self.edit_analyte))
        self.standards_view = SheetTableView("Standards")
        self.samples_view = SheetTableView("Samples")
        self.results_view = ResultsView()
        self.results_model = self.results_view.results_model
        self.exclude_button = QPushButton("E&xclude / include…")
        self.exclude_button.setAccessibleName("Exclude or include the selected standard")
        self.exclude_button.clicked.connect(self.user_command(self.toggle_exclusion))
        self.anchor_button = QPushButton("Anchor poin&ts…")
        self.anchor_button.setAccessibleName("Mark the selected standards as anchor points, or clear the mark")
        self.anchor_button.clicked.connect(self.user_command(self.change_anchor_points))
        self.add_standard_button = QPushButton("&Add standard")
        self.add_standard_button.clicked.connect(self.user_command(self.add_standard))
        self.remove_button = QPushButton("Remo&ve…")
        self.remove_button.setToolTip("Remove the selected row (entered by mistake), with a reason")
        self.remove_button.clicked.connect(self.user_command(self.remove_row))
        left_tabs = QTabWidget()
        standards_page = QWidget()
        v = QVBoxLayout(standards_page)
        v.setContentsMargins(0, 0, 0, 0)
        v.addWidget(self.standards_view)
        row = QHBoxLayout()
        row.addWidget(self.add_standard_button)
        row.addWidget(self.exclude_button)
        row.addWidget(self.anchor_button)
        row.addWidget(self.remove_button)
        row.addStretch(1)
        v.addLayout(row)
        left_tabs.addTab(standards_page, "&Standards")
        left_tabs.addTab(self.samples_view, "Sa&mples")
        left_tabs.currentChanged.connect(self.command(self._update_buttons))
        self._unfitted_tables: set[SheetTableView] = set()
        left_tabs.currentChanged.connect(self._fit_opened_table)
        self.left_tabs = left_tabs
        left = QWidget()
        lv = QVBoxLayout(left)
        lv.setContentsMargins(0, 0, 0, 0)
        top = QHBoxLayout()
        label = QLabel("A&nalyte:")
        label.setBuddy(self.analyte_box)
        top.addWidget(label)
        top.addWidget(self.analyte_box, 1)
        top.addWidget(self.analyte_button)
        lv.addLayout(top)
        lv.addWidget(left_tabs, 1)
        self.curve_view = CurveView()
        self.influence_view = InfluenceView()
        self.evidence_panel = EvidencePanel()
        self.evidence_panel.choose_requested.connect(self.choose_model)
        self.bottom_tabs = QTabWidget()
        self.bottom_tabs.addTab(self.results_view, "&Results")
        self.bottom_tabs.addTab(self.evidence_panel, "Model &evidence")
        self.bottom_tabs.addTab(self.influence_view, "&Influence")
        self.additions_view = AdditionsView()
        self.bottom_tabs.addTab(self.additions_view, "Standard a&dditions")
        self.audit_view = AuditTrailView()
        self.bottom_tabs.addTab(self.audit_view, "A&udit trail")
        self.bottom_tabs.currentChanged.connect(self._refresh_tab)
        # the plots keep the height they need whole; on a screen too short for them and the results,
        # their part of the window scrolls
        self.curve_area = QScrollArea()
        self.curve_area.setWidget(self.curve_view)
        self.curve_area.setWidgetResizable(True)
        self.curve_area.setFrameShape(QFrame.Shape.NoFrame)
        self.curve_area.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        self.curve_area.setMinimumWidth(self.curve_view.minimumSizeHint().width()
                                        + self.curve_area.verticalScrollBar().sizeHint().width())
        right = QSplitter(Qt.Orientation.Vertical)
        right.addWidget(self.curve_area)
        right.addWidget(self.bottom_tabs)
        right.setStretchFactor(0, 5)
        right.setStretchFactor(1, 4)
        self.right_splitter = right
        split = QSplitter(Qt.Orientation.Horizontal)
        split.addWidget(left)
        split.addWidget(right)
        split.setStretchFactor(0, 2)
        split.setStretchFactor(1, 3)
        self.splitter = split
        self._arranged_by_user: set[QSplitter] = set()
        self._panes_arranged_for: tuple[RunSession, bool, str, str] | None = None
        """The session whose result last arranged the panes, whether that result held a fitted curve, and
        the analyte shown then with its concentration unit."""
        self._key_widths: dict[str, int | None] = {}
        """The pane widths the tables' key columns needed when last laid out (see :meth:`arrange_panes`)."""
        for splitter in (split, right):
            splitter.splitterMoved.connect(lambda _pos, _index, moved=splitter: self._arranged_by_user.add(moved))
        central = QWidget()
        layout = QVBoxLayout(central)
        layout.setContentsMargins(6, 4, 6, 2)
        layout.setSpacing(3)
        layout.addWidget(self.caution)
        layout.addWidget(self.verdict)
        layout.addWidget(self.attention)
        layout.addWidget(self.default_model_row)
        layout.addWidget(split, 1)
        self.setCentralWidget(central)
        self.refit_label = QLabel("")
        self.refit_label.setAccessibleName("Time of the last refit")
        self.statusBar().addPermanentWidget(self.refit_label)
        self.statusBar().showMessage("Ready")

    def resizeEvent(self, event) -> None:  # noqa: N802 - Qt override
        super().resizeEvent(event)
        self.arrange_panes()

    def showEvent(self, event) -> None:  # noqa: N802 - Qt override
        super().showEvent(event)
        self.arrange_panes()

    def arrange_panes(self) -> None:
        """Share the window between the panes, until the analyst moves a divider (then that divider
        stays where it was put).

        Across: the inputs take two fifths of the width, or more (up to eleven twentieths) where that
        leaves the standards' key columns (the id to the judgement against the limits) to be scrolled
        to sideways, as long as the results keep theirs (the sample to its flags) in view. Down: the
        plots take five ninths of the height, or more where they need it whole, as long as the results
        keep their smallest height; on a screen too short for both, the plots' part scrolls.

        The panes are arranged when the window is shown or resized, when the first result of the open
        run is shown, when its first fitted curve is shown (the columns of what the fit found then
        take their widths; a run begun empty is fitted only once standards are entered or pasted), and
        when the shown analyte's concentration unit is set or changed (a unit named by a pasted header
        widens the nominal and back-calculated headers): no other edit moves them."""
        if not self.isVisible():
            return
        if self.splitter not in self._arranged_by_user and self.splitter.width() > 0:
            self._arrange_across()
        if self.right_splitter not in self._arranged_by_user and self.right_splitter.height() > 0:
            self._arrange_down()

    def _arrange_across(self) -> None:
        split, right = self.splitter, self.right_splitter
        shown = split.sizes()
        needed_left = self._key_columns_width(self.standards_view, standards_key_columns(), shown[0])
        needed_right = self._key_columns_width(self.results_view.table, results_key_columns(), shown[1])
        # a table behind another tab keeps the width it needed when last seen
        needed_left = self._key_widths["standards"] = needed_left or self._key_widths.get("standards")
        needed_right = self._key_widths["results"] = needed_right or self._key_widths.get("results")
        room = split.width() - split.handleWidth()
        left = int(room * 0.4)
        if needed_left is not None:
            left = max(left, min(needed_left, room - (needed_right or 0), int(room * 0.55)))
        left = max(split.widget(0).minimumSizeHint().width(),
                   min(left, room - right.minimumSizeHint().width()))
        if shown != [left, room - left]:
            split.setSizes([left, room - left])

    def _arrange_down(self) -> None:
        right = self.right_splitter
        shown = right.sizes()
        needed = self.curve_view.heightForWidth(self.curve_area.width())
        room = right.height() - right.handleWidth()
        top = max(room * 5 // 9, min(needed, room - self.bottom_tabs.minimumSizeHint().height()))
        if shown != [top, room - top]:
            right.setSizes([top, room - top])

    @staticmethod
    def _key_columns_width(view, columns, pane_width: int) -> int | None:  # type: ignore[no-untyped-def]
        """The pane width at which ``view`` shows ``columns`` (leftmost first) without scrolling
        sideways: their widths, and what the pane takes besides its table's cells (row numbers, frames,
        scroll bar), as laid out now; room for the upright scroll bar is kept while it is hidden, as
        a note shown above the panes (a function nobody chose) can make the table too short for its rows.
        None while the table is not laid out."""
        if not view.isVisible() or view.model() is None or view.viewport().width() <= 0:
            return None
        cells = sum(view.columnWidth(c) for c in columns if not view.isColumnHidden(c))
        bar = view.verticalScrollBar()
        return cells + pane_width - view.viewport().width() + (0 if bar.isVisible() else bar.sizeHint().width())

    def paintEvent(self, event) -> None:  # noqa: N802 - Qt override
        super().paintEvent(event)
        if not getattr(self, "_painted", False):
            # the first analysis of an opened run starts once the window is on screen (see RunSession)
            self._painted = True
            QTimer.singleShot(0, self, self.session.start_deferred_analysis)

    def _menus(self) -> None:
        def action(menu: QMenu, name: str, text: str, slot: Callable[[], object], shortcut=None) -> QAction:  # type: ignore[no-untyped-def]
            act = QAction(text, self)
            act.setObjectName(f"action-{name}")
            if shortcut is not None:
                act.setShortcut(shortcut)
            act.triggered.connect(self.user_command(slot))
            menu.addAction(act)
            self.actions_by_name[name] = act
            return act

        file_menu = self.menuBar().addMenu("&File")
        action(file_menu, "new", "&New run", self.new_run, QKeySequence.StandardKey.New)
        action(file_menu, "open", "&Open…", self.open_dialog, QKeySequence.StandardKey.Open)
        action(file_menu, "new-from-method", "New run from &method…", self.new_run_from_method)
        self.recent_menu = file_menu.addMenu("Open &recent")
        self.demo_menu = file_menu.addMenu("Open &demo run")
        from .main import demo_run_paths

        for path in demo_run_paths():
            action(self.demo_menu, f"demo-{path.stem}", path.stem.replace("_", " "),
                   lambda p=path: self.open_path(p))
        action(file_menu, "save", "&Save", self.save, QKeySequence.StandardKey.Save)
        action(file_menu, "save-as", "Save &as…", self.save_as, QKeySequence.StandardKey.SaveAs)
        file_menu.addSeparator()
        action(file_menu, "import-standards", "Import s&tandards…", lambda: self.import_table("standards"), "Ctrl+Shift+I")
        action(file_menu, "import-samples", "Import sa&mples…", lambda: self.import_table("samples"), "Ctrl+Alt+I")
        file_menu.addSeparator()
        action(file_menu, "export-xlsx", "Export results as &XLSX…", lambda: self.export_results("xlsx"), "Ctrl+E")
        action(file_menu, "export-csv", "Export samples as &CSV…", lambda: self.export_results("csv"))
        action(file_menu, "export-plot", "Export &plot image…", self.export_plot)
        action(file_menu, "export-record", "Export calibration &record (PDF)…", self.export_report, "Ctrl+P")
        file_menu.addSeparator()
        action(file_menu, "quit", "&Quit", self.close, "Ctrl+Q")

        edit = self.menuBar().addMenu("&Edit")
        self.undo_action = action(edit, "undo", "&Undo", self.undo, QKeySequence.StandardKey.Undo)
        self.redo_action = action(edit, "redo", "&Redo", self.redo, QKeySequence.StandardKey.Redo)
        edit.addSeparator()
        action(edit, "copy", "&Copy", self.copy_selection, QKeySequence.StandardKey.Copy)
        action(edit, "paste", "&Paste", self.paste, QKeySequence.StandardKey.Paste)
        action(edit, "copy-table", "Copy &table as text", self.copy_table, "Ctrl+Shift+C")
        edit.addSeparator()
        action(edit, "add-standard", "Add &standard", self.add_standard, "Ctrl+Shift+N")
        action(edit, "add-sample", "Add sa&mple", self.add_sample)
        action(edit, "remove-row", "&Remove row…", self.remove_row, "Ctrl+Shift+Delete")
        action(edit, "exclude", "E&xclude or include standard…", self.toggle_exclusion, "Ctrl+Shift+X")
        action(edit, "anchor", "Mark or clear anc&hor points…", self.change_anchor_points)

        analysis = self.menuBar().addMenu("&Analysis")
        action(analysis, "choose-model", "&Choose model…", self.choose_model_dialog, "Ctrl+M")
        action(analysis, "settings", "Run &settings…", self.edit_settings, "Ctrl+,")
        action(analysis, "preferences", "Your &name and decimal mark…", self.edit_preferences)
        action(analysis, "rename-run", "Run name and &instrument…", self.rename_run)
        action(analysis, "edit-analyte", "Analyte name and &units…", self.edit_analyte)
        action(analysis, "add-analyte", "Add &analyte…", self.add_analyte)
        analysis.addSeparator()
        action(analysis, "history", "Calibration &history…", self.open_history)

        review = self.menuBar().addMenu("Re&view")
        action(review, "sign-analyst", "Sign as &analyst…", lambda: self.sign_run("analyst"))
        action(review, "sign-reviewer", "Sign as &reviewer…", lambda: self.sign_run("reviewer"))
        action(review, "sign-approver", "A&pprove (locks the run)…", lambda: self.sign_run("approver"))
        action(review, "withdraw-approval", "&Withdraw approval…", self.withdraw_approval)

        help_menu = self.menuBar().addMenu("&Help")
        action(help_menu, "about", "&About Curvewright", self.about)

    # --- session wiring --------------------------------------------------------------------------
    def attach(self, session: RunSession) -> None:
        self.session = session
        session.evidence_wanted = self.bottom_tabs.currentWidget() is self.evidence_panel
        first = session.run.analytes[0].name
        self.standards_model = StandardsModel(session, first)
        self.samples_model = SamplesModel(session, first)
        self.standards_view.setModel(self.standards_model)
        self.samples_view.setModel(self.samples_model)
        for view in (self.standards_view, self.samples_view):
            view.paste_handler = self.paste_into
            view.selectionModel().selectionChanged.connect(self.command(self._update_buttons))
            view.selectionModel().currentChanged.connect(self.command(self._update_buttons))
        for model in (self.standards_model, self.samples_model):
            model.decimal_mark = self.decimal_mark()
            model.reason_provider = self.ask_value_change_reason
            model.message.connect(self.show_message)
        session.run_changed.connect(self._on_run_changed)
        session.analysis_ready.connect(self._on_result)
        session.analysis_failed.connect(lambda e: self.show_message(f"analysis failed: {e}"))
        session.dirty_changed.connect(lambda _: self._update_title())
        session.path_changed.connect(lambda _: self._update_title())
        session.path_changed.connect(self._hold_marker)
        self._hold_marker()
        session.undo_stack.undoTextChanged.connect(self.command(self._update_undo_texts))
        session.undo_stack.redoTextChanged.connect(self.command(self._update_undo_texts))
        session.undo_stack.canUndoChanged.connect(self.command(self._update_undo_texts))
        session.undo_stack.canRedoChanged.connect(self.command(self._update_undo_texts))
        session.recovery_failed.connect(self.warn_recovery_failed)
        self._fill_analytes()
        self._update_title()
        self._update_undo_texts()
        self._fill_recent()
        self._show_verdict(session.result)
        if session.result is not None:
            self._on_result(session.result)

    def decimal_mark(self) -> str | None:
        """The decimal mark typed and pasted values use: the setting, else the system's."""
        value = str(self.settings.value("input/decimal_mark", "system"))
        if value in (".", ","):
            return value
        if value == "ask":
            return None
        from PySide6.QtCore import QLocale

        return QLocale.system().decimalPoint() if QLocale.system().decimalPoint() in (".", ",") else None

    def current_analyte(self) -> str:
        names = [a.name for a in self.session.run.analytes]
        current = self.analyte_box.currentText()
        return current if current in names else names[0]

    def _fill_analytes(self, shown: str | None = None) -> None:
        """The analyte box filled with the run's analytes, showing ``shown`` when given and in the run,
        else the analyte shown before (the first when it is gone)."""
        names = [a.name for a in self.session.run.analytes]
        current = shown if shown in names else self.analyte_box.currentText()
        self.analyte_box.blockSignals(True)
        self.analyte_box.clear()
        self.analyte_box.addItems(names)
        self.analyte_box.setCurrentText(current if current in names else names[0])
        self.analyte_box.blockSignals(False)
        self._on_analyte(self.analyte_box.currentText())

    def _on_analyte(self, name: str) -> None:
        if not name:
            return
        self.commit_open_editors()  # entered into the analyte it was typed for
        self.standards_model.set_analyte(name)
        self.samples_model.set_analyte(name)
        self._show_internal_standard_column()
        self._show_views()
        for view in (self.standards_view, self.samples_view):
            fit_columns(view)
        self._update_buttons()

    def _show_internal_standard_column(self) -> None:
        """The IS-response column only for an analyte calibrated against an internal standard (and in
        the samples table also where a sample holds an internal-standard response for it)."""
        from . import samples_model
        from .standards_model import IS

        uses = self.session.run.analyte(self.current_analyte()).uses_internal_standard
        self.standards_view.setColumnHidden(IS, not uses)
        self.samples_view.setColumnHidden(samples_model.IS, not self.samples_model.has_internal_standard())

    def _on_run_changed(self, run: Run) -> None:
        acted_on = self.session.acted_on  # an undo or redo shows the analyte it acts on
        if [a.name for a in run.analytes] != [self.analyte_box.itemText(i) for i in range(self.analyte_box.count())]:
            self._fill_analytes(acted_on)
        elif acted_on is not None and acted_on != self.analyte_box.currentText():
            self.analyte_box.setCurrentText(acted_on)
        self._show_internal_standard_column()
        self._update_title()
        self._update_buttons()
        self._update_undo_texts()  # a signature empties the undo history
        self._show_verdict(self.session.result)
        # the audit trail grows with every change, undo, redo and signature
        self._stale_tabs = getattr(self, "_stale_tabs", set()) | {self.evidence_panel, self.audit_view}
        self._refresh_tab(self.bottom_tabs.currentIndex())

    def _on_result(self, result: RunResult) -> None:
        self._show_views()
        self.refit_label.setText(f"refit in {self.session.last_analysis_seconds * 1000:.0f} ms")
        # the columns that show the engine's answers (back-calculated, %RE, flags) fit their text; a
        # table behind the other tab when its tab is opened
        for view in (self.standards_view, self.samples_view):
            if view.isVisibleTo(self):
                fit_columns(view)
            else:
                self._unfitted_tables.add(view)
        # the open run's first result, its first with a fitted curve (a run begun empty and pasted into),
        # and one after the shown analyte's unit was set or changed (it widens two key headers): the
        # widths of the key columns are known only then
        model = self.standards_model
        fitted = model.result is not None and model.result.calibration is not None
        analyte = model.analyte
        unit = analyte.concentration_unit if analyte is not None else ""
        arranged = self._panes_arranged_for
        if self.isVisible() and (arranged is None or arranged[0] is not self.session or (fitted and not arranged[1])
                                 or (arranged[2] == model.analyte_name and arranged[3] != unit)):
            self._panes_arranged_for = (self.session, fitted, model.analyte_name, unit)
            self.arrange_panes()

    def _fit_opened_table(self, _index: int) -> None:
        for view in list(self._unfitted_tables):
            if view.isVisibleTo(self):
                self._unfitted_tables.discard(view)
                fit_columns(view)

    def _show_views(self) -> None:
        result = self.session.result
        name = self.current_analyte()
        analyte = None
        if result is not None:
            try:
                analyte = result.analyte(name)
            except KeyError:
                analyte = None
        level = self.session.run.settings.confidence_level
        self.curve_view.show_analyte(analyte, level)
        self._shown_analyte = analyte
        # the views behind other tabs are drawn when their tab is opened
        self._stale_tabs = {self.influence_view, self.evidence_panel, self.additions_view, self.audit_view}
        self._refresh_tab(self.bottom_tabs.currentIndex())
        self.results_view.show_result(result, name)
        self._show_verdict(result)

    def _refresh_tab(self, index: int) -> None:
        widget = self.bottom_tabs.widget(index)
        # the model comparison is worked out with each analysis only while its tab is shown
        self.session.evidence_wanted = widget is self.evidence_panel
        if widget not in getattr(self, "_stale_tabs", set()):
            return
        self._stale_tabs.discard(widget)
        name = self.current_analyte()
        if widget is self.influence_view:
            self.influence_view.show_analyte(getattr(self, "_shown_analyte", None))
        elif widget is self.additions_view:
            self.additions_view.show_analyte(getattr(self, "_shown_analyte", None))
        elif widget is self.audit_view:
            self.audit_view.show_run(self.session.run)
        elif widget is self.evidence_panel:
            self.evidence_panel.show_evidence(self.session.evidence.get(name), self.session.run.analyte(name),
                                              method=self.session.result.method if self.session.result else None)

    def _show_verdict(self, result: RunResult | None) -> None:
        run = self.session.run
        self._show_default_model(result)
        self.attention.setText(" ".join(f"⚠ {line}" for line in self.attention_lines(result)))
        self.attention.setVisible(bool(self.attention.text()))
        if not any(a.standards for a in run.analytes):
            self.verdict.setText("<b>No standards yet.</b> Paste them (Edit → Paste, Ctrl+V) or import a table "
                                 "(File → Import standards…); the verdict appears once a curve can be fitted.")
            self.verdict.setToolTip("")
            return
        if result is None or result.run is not run:
            if result is None:
                self.verdict.setText("Analysing…")
            return
        word = "✔ Run ACCEPTED" if result.accepted else "✖ Run NOT ACCEPTED"
        colour = "#1d6b36" if result.accepted else "#a11b1b"
        failing = [r for r in result.reasons if "FAIL" in r]
        detail = "; ".join(failing[:3]) if failing else f"all checks of {result.profile.name} pass"
        self.verdict.setText(f"<b style='color:{colour}'>{word}</b> — {detail}")
        self.verdict.setToolTip("\n".join(result.reasons + ((result.profile.caveat,) if result.profile.caveat else ())))

    def _show_default_model(self, result: RunResult | None) -> None:
        """For the analyte shown, when its calibration function is the default nobody chose: say so, say
        what the model comparison recommends and why, and offer to take the recommendation."""
        from ..io.model_choice import chosen, function_words

        run, name = self.session.run, self.current_analyte()
        analyte = run.analyte(name)
        method = result.method if result is not None and result.run is run else None
        if (not analyte.standards or chosen(run, name) or (method is not None and method.analyte(name) is not None)
                or result is None or result.run is not run):
            self.default_model_row.setVisible(False)
            self._recommendation = None
            return
        comparison = self.session.evidence.get(name)
        from ..core.comparison import ModelComparison

        text = (f"<b>{name}: the calibration function is the default ({function_words(analyte.model, analyte.weighting)}); "
                "nobody has chosen it.</b> ")
        rec = comparison.recommendation if isinstance(comparison, ModelComparison) else None
        self._recommendation = (rec.model.value, rec.weighting.value) if rec is not None else None
        if not isinstance(comparison, ModelComparison):
            text += f"No model comparison: {comparison or 'not worked out'}."
        elif rec is None:
            text += (f"The model comparison recommends no model: {comparison.no_recommendation}. Choose one in the "
                     "Model evidence tab, with your reason.")
        elif self._recommendation == (analyte.model, analyte.weighting):
            text += "The model comparison recommends this function too; taking it records who chose it and why."
        else:
            text += (f"The model comparison recommends {function_words(*self._recommendation)}: "
                     + _compared(comparison, analyte))
        self.default_model_note.setText(text)
        self.default_model_note.setToolTip("\n".join(f"• {r}" for r in comparison.reasons)
                                           if isinstance(comparison, ModelComparison) else "")
        self.take_recommendation_button.setVisible(self._recommendation is not None)
        if self._recommendation is not None:
            self.take_recommendation_button.setText(f"Use {function_words(*self._recommendation)}")
        self.default_model_row.setVisible(True)

    def take_recommendation(self) -> None:
        """Take the model comparison's recommendation for the analyte shown, as the Model evidence tab's
        choice does (:meth:`choose_model`: who chose it and the recommendation's reasons are recorded)."""
        recommended = getattr(self, "_recommendation", None)
        if recommended is not None:
            self.choose_model(*recommended, recommended)

    def attention_lines(self, result: RunResult | None) -> list[str]:
        """What the analyst should see to before signing, beyond the verdict (missing units, samples
        without a result), each with where to fix it."""
        lines = []
        run = self.session.run
        if run.approval is not None:
            from ..io.signatures import approval_problem

            problem = approval_problem(run)
            if problem is not None:
                lines.append(f"Approved by {run.approval.name} ({run.approval.time_utc}), but the approval does NOT "
                             f"hold: {problem} (Review → Withdraw approval… to change it).")
            else:
                lines.append(f"Approved by {run.approval.name} ({run.approval.time_utc}): the run is locked "
                             "(Review → Withdraw approval… to change it).")
        if not self.session.identity.name:
            lines.append("Your full name is not set, so the audit trail records only your login "
                         f"({PREFERENCES_MENU}).")
        for a in run.analytes:
            if a.standards and not a.concentration_unit.strip():
                lines.append(f"The concentration unit of {a.name} is not set (Analysis → Analyte name and units…).")
        if result is not None and result.run is run:
            for a in result.analytes:
                lines += self._unusable_lines(a)
                rng = a.reporting
                if rng is not None and rng.narrowing:  # said with the verdict's own words
                    lines.append(f"{a.analyte.name}: {rng.narrowing} (the standards in the fit span "
                                 f"{entered_span(*rng.standards_range)}).")
                columns = a.sample_columns
                if columns is None or a.calibration is None:
                    continue
                # a sample without a reported number: not read through the curve, or no estimate
                missing = [columns.ids[i] for i in np.flatnonzero(~columns.quantified | np.isnan(columns.estimate)).tolist()]
                if missing:
                    shown = ", ".join(missing[:3]) + (f" and {len(missing) - 3} more" if len(missing) > 3 else "")
                    lines.append(f"{len(missing)} of {len(columns)} samples of {a.analyte.name} have no result "
                                 f"({shown}); see the Results tab.")
                # what the QC verdict notes (a nominal value given to a sample of kind unknown)
                notes = [r[len("note: "):] for r in (a.qc_verdict.reasons if a.qc_verdict else ()) if r.startswith("note: ")]
                lines += [f"{a.analyte.name}: {note}." for note in notes]
        return lines

    @staticmethod
    def _unusable_lines(a) -> list[str]:  # type: ignore[no-untyped-def]
        """The analyte's standards that are not in the fit for want of a usable value, with their rows
        and reasons: one line each for up to three, else one line naming the first three and the count
        (each row's cell is marked with its reason), so that a pasted table nothing of which could be
        read does not push the rest of the window away."""
        unusable = a.unusable_standards
        rows = {s.id: i + 1 for i, s in enumerate(a.analyte.standards)}
        # as the verdict counts them: a blank's does not count
        counts = [a.analyte.standard(u.standard_id).concentration != 0 for u in unusable]
        if len(unusable) <= 3:
            return [f"Standard {u.standard_id} of {a.analyte.name} (row {rows.get(u.standard_id, '—')}) "
                    f"is not in the fit: {u.reason}"
                    + ("; it counts as not passing until its value is entered or it is excluded with a "
                       "reason." if counted else ".")
                    for u, counted in zip(unusable, counts)]
        shown = "; ".join(f"{u.standard_id} (row {rows.get(u.standard_id, '—')}): {u.reason}" for u in unusable[:3])
        passing = sum(counts)
        return [f"{len(unusable)} standards of {a.analyte.name} are not in the fit for want of a usable value: "
                f"{shown}; and {len(unusable) - 3} more, each marked in its row"
                + (f"; {passing} of them count as not passing until their values are entered or they are excluded "
                   "with a reason." if passing else ".")]

    def _update_title(self) -> None:
        self.setWindowTitle(f"{self.session.run.name}[*] — Curvewright")
        self.setWindowModified(self.session.dirty)

    def _update_undo_texts(self) -> None:
        stack = self.session.undo_stack
        if not shiboken6.isValid(stack) or not shiboken6.isValid(self.undo_action):
            return  # the stack is going away with its session
        self.undo_action.setText(f"&Undo {stack.undoText()}" if stack.canUndo() else "&Undo")
        self.redo_action.setText(f"&Redo {stack.redoText()}" if stack.canRedo() else "&Redo")
        # back at a signature, Undo and Redo stay available to say why they go no further
        floor = self.session.undo_floor
        for act, can in ((self.undo_action, stack.canUndo()), (self.redo_action, stack.canRedo())):
            act.setEnabled(can or floor is not None)
            act.setStatusTip("" if can or floor is None else floor)

    def _update_buttons(self) -> None:
        """The buttons say what they will act on: the standard selected, or that one must be selected."""
        rows = self.selected_rows(self.standards_view)
        standards = self.session.run.analyte(self.current_analyte()).standards
        if len(rows) == 1 and rows[0] < len(standards):
            s = standards[rows[0]]
            self.exclude_button.setText(f"E&xclude {s.id}…" if s.included else f"Include {s.id} a&gain…")
            self.exclude_button.setEnabled(True)
        else:
            self.exclude_button.setText("E&xclude / include…")
            self.exclude_button.setEnabled(False)
            self.exclude_button.setToolTip("Select one standard (click its row) to exclude or include it")
        self.remove_button.setEnabled(len(rows) == 1)
        chosen = [standards[r] for r in rows if r < len(standards)]
        if chosen:
            mark = not all(s.anchor for s in chosen)
            named = chosen[0].id if len(chosen) == 1 else f"{len(chosen)} standards"
            self.anchor_button.setText(f"Mark {named} as anchor poin&t{'s' if len(chosen) > 1 else ''}…" if mark
                                       else f"Clear the anchor poin&t mark of {named}…")
            self.anchor_button.setEnabled(True)
        else:
            self.anchor_button.setText("Anchor poin&ts…")
            self.anchor_button.setEnabled(False)
            self.anchor_button.setToolTip("Select one or more standards (click their rows) to mark them as anchor "
                                          "points of a logistic curve, or to clear the mark")

    @staticmethod
    def selected_rows(view: SheetTableView) -> list[int]:
        """The rows the analyst selected in a table (the current cell's row when nothing is selected)."""
        model = view.selectionModel()
        rows = sorted({i.row() for i in model.selectedIndexes()}) if model is not None else []
        if not rows and view.currentIndex().isValid():
            rows = [view.currentIndex().row()]
        return rows

    def warn_recovery_failed(self, text: str) -> None:
        """The recovery file cannot be written: said once, in the status bar and a dialog."""
        self.show_message(text)
        QMessageBox.warning(self, "Unsaved work is not protected", text)

    def show_message(self, text: str) -> None:
        self.statusBar().showMessage(text, 15000)

    # --- files -----------------------------------------------------------------------------------
    def maybe_save(self) -> bool:
        """True when it is safe to drop the current run (saved, discarded, or nothing to lose)."""
        if not self.session.dirty:
            return True
        answer = QMessageBox.question(
            self, "Unsaved changes", f"Save the changes to {self.session.run.name!r}?",
            QMessageBox.StandardButton.Save | QMessageBox.StandardButton.Discard | QMessageBox.StandardButton.Cancel)
        if answer == QMessageBox.StandardButton.Save:
            return self.save()
        return answer == QMessageBox.StandardButton.Discard

    def _hold_marker(self, *_args) -> None:  # type: ignore[no-untyped-def]
        """Mark the run's file as open here (``.NAME.open``, refreshed while it stays open), so that
        another Curvewright opening it tells its user; a marker for a file left behind is removed."""
        from PySide6.QtCore import QTimer

        from ..io import open_marker
        from ..io.audit import utc_now

        path = self.session.path
        held = getattr(self, "_marked", None)
        if held is not None and held != path:
            open_marker.let_go(held)
        if path is not None and held != path:
            self._marked_since = utc_now().strftime("%Y-%m-%dT%H:%M:%SZ")
        self._marked = path
        if path is not None:
            open_marker.hold(path, self.session.identity, self._marked_since)
        if not hasattr(self, "_marker_timer"):
            self._marker_timer = QTimer(self)
            self._marker_timer.setInterval(int(open_marker.REFRESH_SECONDS * 1000))
            self._marker_timer.timeout.connect(self._hold_marker)
            self._marker_timer.start()

    def _let_go_marker(self) -> None:
        from ..io import open_marker

        held = getattr(self, "_marked", None)
        if held is not None:
            open_marker.let_go(held)
        self._marked = None

    def _already_open(self, path: Path) -> bool:
        """When ``path`` is open in this window or another window of this program, bring that window
        forward and say so; return True (nothing else is opened)."""
        from PySide6.QtWidgets import QApplication

        from ..io.atomic import same_file

        others = [w for w in QApplication.topLevelWidgets() if isinstance(w, MainWindow) and w is not self and w.isVisible()]
        for window in [self] + others:  # a closed window (hidden, not yet deleted) holds nothing open
            if window.session.path is not None and same_file(window.session.path, path):
                window.show()
                window.raise_()
                window.activateWindow()
                window.show_message(f"{path} is already open in this window.")
                if window is self:
                    self.check_file_on_disk()
                return True
        return False

    def _open_elsewhere_agreed(self, path: Path) -> bool:
        """When another Curvewright holds ``path`` open (its marker), tell the user who, where and
        since when, and ask whether to open it anyway; True to go on."""
        from ..io import open_marker

        marker = open_marker.current(path)
        if marker is None:
            return True
        answer = QMessageBox.question(
            self, "The run is open elsewhere",
            f"{path} is open in another Curvewright: {marker.words()}.\n\nIf you both change it, the second to "
            "save is refused and must save under another name or open the file again. Open it here anyway?",
            QMessageBox.StandardButton.Open | QMessageBox.StandardButton.Cancel)
        return answer == QMessageBox.StandardButton.Open

    def replace_session(self, session: RunSession) -> None:
        old = self.session
        self._let_go_marker()
        for signal in (old.run_changed, old.analysis_ready, old.analysis_failed, old.dirty_changed, old.path_changed,
                       old.recovery_failed,
                       old.undo_stack.undoTextChanged, old.undo_stack.redoTextChanged, old.undo_stack.canUndoChanged,
                       old.undo_stack.canRedoChanged):
            try:
                signal.disconnect()
            except (RuntimeError, TypeError):
                pass
        old.discard_recovery()
        old.deleteLater()
        self.analyte_box.clear()
        self.attach(session)

    def new_run(self) -> None:
        if self.maybe_save():
            self.replace_session(RunSession(blank_run(self.settings), recovery_folder=self.session.recovery_folder,
                                            identity=settings_identity(self.settings)))

    def new_run_from_method(self) -> bool:
        """File → New run from method: a run of a validated method (its analytes, units, fixed models,
        profile and rounding), ready for its standards and samples."""
        from ..core.method import load_method

        path, _ = QFileDialog.getOpenFileName(self, "New run from a validated method", "", "Method files (*.json)")
        if not path or not self.maybe_save():
            return False
        try:
            method = load_method(path)
            run = run_edits.run_from_method(method, f"{method.name} — new run", user=settings_identity(self.settings))
        except CurvewrightError as exc:
            QMessageBox.warning(self, "New run from method", str(exc))
            return False
        self.replace_session(RunSession(run, recovery_folder=self.session.recovery_folder,
                                        identity=settings_identity(self.settings)))
        self.show_message(f"New run of method {method.label}; paste or import its standards and samples.")
        return True

    def open_dialog(self) -> None:
        path, _ = QFileDialog.getOpenFileName(self, "Open run", "", "Curvewright runs (*.json)")
        if path:
            self.open_path(Path(path))

    def open_path(self, path: Path, *, again: bool = False) -> bool:
        """Open the run at ``path`` in this window; ``again``: the window's own file read anew. A run
        already open in a window of this program is brought forward instead; one open in another
        Curvewright (its marker) is opened only when the user agrees."""
        if not again:
            if self._already_open(Path(path)):
                return True
            if not self._open_elsewhere_agreed(Path(path)):
                return False
        if not self.maybe_save():
            return False
        try:
            session, problems = RunSession.open(path, recovery_folder=self.session.recovery_folder,
                                                identity=settings_identity(self.settings))
        except CurvewrightError as exc:
            QMessageBox.warning(self, "Cannot open", str(exc))
            return False
        self.replace_session(session)
        self._remember(path)
        if problems:
            QMessageBox.warning(self, "Not as Curvewright left it",
                                "This run opened, but it is not as Curvewright left it:\n\n" + "\n".join(problems)
                                + ("\n\nThe change is now recorded in the audit trail; save the run to keep that record."
                                   if self.session.dirty else ""))
        return True

    def save(self) -> bool:
        if self.session.path is None:
            return self.save_as()
        return self._save_to(self.session.path)

    def save_as(self) -> bool:
        path, _ = QFileDialog.getSaveFileName(self, "Save run", f"{self.session.run.name}.json", "Curvewright runs (*.json)")
        return self._save_to(Path(path)) if path else False

    def _save_to(self, path: Path) -> bool:
        try:
            self.session.save(path)
        except RecordsWouldBeLost as exc:
            return self._records_on_disk(path, exc)
        except DocumentChanged:
            answer = QMessageBox.question(
                self, "The file was changed on disk",
                f"{path} was changed by another program (or a command that recorded an export in it) after "
                "you opened it. Overwrite it with this run (the other changes are kept in its .bak copy), or "
                "cancel and save this run under another name?",
                QMessageBox.StandardButton.Save | QMessageBox.StandardButton.Cancel)
            if answer != QMessageBox.StandardButton.Save:
                return False
            try:
                self.session.save(path, overwrite_changes=True)
            except RecordsWouldBeLost as exc:  # recorded in it between the question and the save
                return self._records_on_disk(path, exc)
            except CurvewrightError as exc:
                QMessageBox.warning(self, "Not saved", str(exc))
                return False
        except CurvewrightError as exc:
            QMessageBox.warning(self, "Not saved", str(exc))
            return False
        self._remember(path)
        self.show_message(f"Saved {path}")
        return True

    def _records_on_disk(self, path: Path, refused: RecordsWouldBeLost) -> bool:
        """A save over ``path`` was refused because the file records what this run does not (a
        signature, an approval, audit entries written by another window or command since it was read):
        never overwritten; the user saves this run under another name, or opens the file again."""
        unsaved = ("Your unsaved changes here would be lost: save them under another name first if you need them."
                   if self.session.dirty else "")
        answer = QMessageBox.question(
            self, "The file records more than this run",
            f"{path} was not saved: since it was opened here, it was signed or recorded in elsewhere, and "
            "saving this run over it would drop what it records:\n\n"
            + "\n".join(f"- {line}" for line in refused.records)
            + "\n\nSave: save this run under another name (the file stays as it is).\n"
            f"Open: open the file again as it is now. {unsaved}\nCancel: do neither.",
            QMessageBox.StandardButton.Save | QMessageBox.StandardButton.Open | QMessageBox.StandardButton.Cancel)
        if answer == QMessageBox.StandardButton.Save:
            from ..io.atomic import same_file

            chosen, _ = QFileDialog.getSaveFileName(self, "Save run under another name", f"{self.session.run.name}.json",
                                                    "Curvewright runs (*.json)")
            if not chosen:
                return False
            if same_file(Path(chosen), path):
                QMessageBox.warning(self, "Not saved", f"{chosen} is the file that records more than this run; it was "
                                    "left as it is. Save this run under another name, or open the file again.")
                return False
            return self._save_to(Path(chosen))
        if answer == QMessageBox.StandardButton.Open:
            self.session.undo_stack.setClean()
            self.session._unsaved_records = False
            self.open_path(path, again=True)
        return False

    def changeEvent(self, event) -> None:  # noqa: N802 - Qt override
        super().changeEvent(event)
        from PySide6.QtCore import QEvent

        if event.type() == QEvent.Type.ActivationChange and self.isActiveWindow():
            self.check_file_on_disk()

    def check_file_on_disk(self) -> bool:
        """When the run's file was changed by someone else since it was opened, offer to reload it.
        Returns True when the file was reloaded."""
        if getattr(self, "_asking_about_disk", False) or not self.session.changed_on_disk():
            return False
        on_disk = document_sha256(self.session.path)  # type: ignore[arg-type]
        if on_disk is not None and on_disk == getattr(self, "_reload_declined_for", None):
            return False  # asked about this version of the file already
        self._asking_about_disk = True
        try:
            path = self.session.path
            unsaved = " Your unsaved changes here would be lost." if self.session.dirty else ""
            answer = QMessageBox.question(
                self, "The file was changed on disk",
                f"{path} was changed by another program (or by a command that recorded an export in it) since "
                f"it was opened here. Reload it to see those changes?{unsaved}",
                QMessageBox.StandardButton.Yes | QMessageBox.StandardButton.No)
            if answer != QMessageBox.StandardButton.Yes:
                self._reload_declined_for = on_disk  # not asked again for this version; a save still asks
                return False
            self.session.undo_stack.setClean()
            self.session._unsaved_records = False
            return self.open_path(path, again=True)  # type: ignore[arg-type]
        finally:
            self._asking_about_disk = False

    def _remember(self, path: Path) -> None:
        recent = [str(Path(path).resolve())] + [p for p in self._recent() if p != str(Path(path).resolve())]
        self.settings.setValue("recent_files", recent[:MAX_RECENT])
        self._fill_recent()

    def _recent(self) -> list[str]:
        value = self.settings.value("recent_files", [])
        return [value] if isinstance(value, str) else list(value or [])

    def _fill_recent(self) -> None:
        self.recent_menu.clear()
        for p in self._recent():
            act = self.recent_menu.addAction(p)
            act.setObjectName("action-recent")
            act.triggered.connect(self.user_command(lambda path=p: self.open_path(Path(path))))
        self.recent_menu.setEnabled(bool(self._recent()))

    def import_table(self, what: str, *, path: str | None = None) -> bool:
        """File → Import standards/samples: a table file read with a preview of every value (a locked run
        refuses before a file is asked for)."""
        if self.refused_when_locked(f"Import {what}", f"import {what}"):
            return False
        if path is None:
            path, _ = QFileDialog.getOpenFileName(self, f"Import {what}", "", "Tables (*.csv *.txt *.tsv *.xlsx)")
            if not path:
                return False
        busy = QProgressDialog(f"Reading {Path(path).name}…", "", 0, 0, self)
        busy.setCancelButton(None)
        busy.setMinimumDuration(300)
        busy.setValue(0)
        from PySide6.QtWidgets import QApplication

        QApplication.processEvents()
        try:
            dialog = ImportDialog(what, path, self, analyte=self.current_analyte())
        except CurvewrightError as exc:
            QMessageBox.warning(self, f"Import {what}", str(exc))
            return False
        finally:
            busy.close()
        if dialog.exec() != ImportDialog.DialogCode.Accepted or dialog.result is None:
            return False
        return self.apply_import(what, dialog.result)

    def apply_import(self, what: str, result) -> bool:  # type: ignore[no-untyped-def]
        from ..io.importing import analytes_from_import

        run = self.session.run
        details = {"what": what, "source": result.source, "sha256": result.sha256,
                   "rejected_cells": [str(r) for r in result.rejected]}
        try:
            if what == "standards":
                for analyte in analytes_from_import(result):
                    if analyte.name in {a.name for a in run.analytes}:
                        existing = run.analyte(analyte.name)
                        run = run_edits.update_standards(run, analyte.name, existing.standards + analyte.standards,
                                                         f"imported from {result.source}", user=self.session.identity)
                        if not existing.concentration_unit and analyte.concentration_unit:
                            run = run_edits.edit_analyte(run, analyte.name, name=analyte.name,
                                                         concentration_unit=analyte.concentration_unit,
                                                         response_unit=existing.response_unit or analyte.response_unit,
                                                         reason=f"units from the header of {result.source}",
                                                         user=self.session.identity)
                    elif len(run.analytes) == 1 and not run.analytes[0].standards:
                        run = replace(run, analytes=(replace(analyte, name=analyte.name),))
                    else:
                        run = replace(run, analytes=run.analytes + (analyte,))
            else:
                known = {s.id for s in run.samples}
                clash = [s.id for s in result.samples if s.id in known]
                if clash:
                    raise CurvewrightError(f"sample id {clash[0]!r} is already in the run; rename it in the table first.")
                names = {a.name for a in run.analytes}
                missing = sorted({m.analyte for s in result.samples for m in s.measurements} - names)
                if missing:
                    raise CurvewrightError(f"the samples name analyte {missing[0]!r}, which the run does not have; "
                                           "import its standards first or set the analyte name.")
                run = run_edits.update_samples(run, run.samples + result.samples, f"imported from {result.source}",
                                               user=self.session.identity)
            run = run_edits.record(run, "imported", details, user=self.session.identity)
        except CurvewrightError as exc:
            QMessageBox.warning(self, f"Import {what}", str(exc))
            return False
        self.session.apply(run, f"Import {what}")
        self.show_message(result.summary().splitlines()[0])
        return True

    def export_results(self, kind: str, *, path: str | None = None) -> bool:
        """File → Export results as XLSX / samples as CSV."""
        result = self._fresh_result()
        if result is None:
            return False
        if path is None:
            path, _ = QFileDialog.getSaveFileName(self, "Export results", f"{self.session.run.name}.{kind}",
                                                  "Workbook (*.xlsx)" if kind == "xlsx" else "CSV (*.csv)")
            if not path:
                return False
        from ..io.csv_export import write_csv
        from ..io.xlsx_export import write_xlsx

        progress = QProgressDialog("Writing the workbook…", "", 0, 100, self)
        progress.setCancelButton(None)
        progress.setMinimumDuration(400)

        def step(done: int, total: int) -> None:
            progress.setValue(int(100 * done / max(total, 1)))

        try:
            sha = write_xlsx(result, path, progress=step) if kind == "xlsx" else write_csv(result, path)
        except (ExportError, CurvewrightError) as exc:
            QMessageBox.warning(self, "Not exported", str(exc))
            return False
        finally:
            progress.close()
        self.session.record("export_written", {"path": str(path), "format": kind, "sha256": sha})
        self.show_message(f"Exported {path}")
        return True

    def export_report(self, *, path: str | None = None) -> bool:
        """File → Export calibration record (PDF)."""
        result = self._fresh_result()
        if result is None:
            return False
        if path is None:
            path, _ = QFileDialog.getSaveFileName(self, "Calibration record", f"{self.session.run.name}.pdf", "PDF (*.pdf)")
            if not path:
                return False
        from ..io.report import build_report
        from .report_pdf import write_report

        try:
            sha = write_report(build_report(result), path)
        except (ExportError, CurvewrightError) as exc:
            QMessageBox.warning(self, "Not written", str(exc))
            return False
        self.session.record("report_written", {"path": str(path), "sha256": sha})
        self.show_message(f"Calibration record written: {path}")
        return True

    def export_plot(self, *, path: str | None = None) -> bool:
        """File → Export plot image: the curve view as PNG or SVG."""
        if path is None:
            path, _ = QFileDialog.getSaveFileName(self, "Export plot", "curve.png", "PNG image (*.png);;SVG drawing (*.svg)")
            if not path:
                return False
        try:
            data = plot_image_bytes(self.curve_view.graphics, svg=str(path).lower().endswith(".svg"))
            write_atomically(Path(path), data)
        except ExportError as exc:
            QMessageBox.warning(self, "Plot not exported", str(exc))
            return False
        self.show_message(f"Plot exported: {path}")
        return True

    def _fresh_result(self) -> RunResult | None:
        """The results of the run as it is now, shown in the window before a command uses them
        (:meth:`RunSession.current_result`); None when the analysis fails (the status line says why)."""
        return self.session.current_result()

    # --- edits -----------------------------------------------------------------------------------
    def undo(self) -> None:
        refused = self.session.undo()
        if refused:
            self.show_message(refused)

    def redo(self) -> None:
        refused = self.session.redo()
        if refused:
            self.show_message(refused)

    def add_standard(self) -> None:
        self.left_tabs.setCurrentIndex(0)
        if self.refused_when_locked("Add standard", f"add a standard to {self.current_analyte()}"):
            return
        self.standards_model.add_row()
        self.standards_view.setCurrentIndex(self.standards_model.index(self.standards_model.rowCount() - 1, 0))

    def add_sample(self) -> None:
        self.left_tabs.setCurrentIndex(1)
        if self.refused_when_locked("Add sample", "add a sample"):
            return
        self.samples_model.add_row()
        self.samples_view.setCurrentIndex(self.samples_model.index(self.samples_model.rowCount() - 1, 0))

    def toggle_exclusion(self, *, row: int | None = None) -> None:
        """Exclude the selected standard (asking why, with the refit shown) or include it again."""
        if row is None:
            rows = self.selected_rows(self.standards_view)
            if len(rows) != 1:
                self.show_message("Select one standard (click its row in the Standards table) to exclude or include it."
                                  if not rows else f"{len(rows)} rows are selected; select one standard to exclude or "
                                  "include it.")
                return
            row = rows[0]
        analyte = self.current_analyte()
        standards = self.session.run.analyte(analyte).standards
        if not 0 <= row < len(standards):
            self.show_message(f"There is no standard in row {row + 1}.")
            return
        standard = standards[row]
        if standard.included:
            reason = ask_exclusion(self, self.session.run, analyte, standard.id, row=row)
            if reason:
                self.session.apply(run_edits.exclude_standard(self.session.run, analyte, standard.id, reason,
                                                              user=self.session.identity),
                                   f"Exclude {standard.id}")
                self.show_message(f"Standard {standard.id} (row {row + 1}) excluded: {reason}")
        else:
            if self.refused_when_locked("Include standard", f"include standard {standard.id} of {analyte} again"):
                return
            dialog = ReasonDialog(f"Include standard {standard.id} again",
                                  f"Why is standard {standard.id} (row {row + 1}) of {analyte} put back in the fit? "
                                  f"It was excluded because: {standard.exclusion_reason}", (), self)
            if dialog.exec() == ReasonDialog.DialogCode.Accepted:
                self.session.apply(run_edits.include_standard(self.session.run, analyte, standard.id, dialog.reason(),
                                                              user=self.session.identity),
                                   f"Include {standard.id}")
                self.show_message(f"Standard {standard.id} (row {row + 1}) is in the fit again.")
        self._select_row(self.standards_view, row)

    def change_anchor_points(self) -> None:
        """Mark the selected standards as anchor points of a logistic curve (fitted, never judged), or clear
        the mark when every selected standard carries it; asks why, shows the refit, and refuses in the
        fit's own words a mark the curve cannot take."""
        rows = self.selected_rows(self.standards_view)
        analyte = self.current_analyte()
        standards = self.session.run.analyte(analyte).standards
        chosen = [standards[r] for r in rows if 0 <= r < len(standards)]
        if not chosen:
            self.show_message("Select one or more standards (click their rows in the Standards table) to mark them "
                              "as anchor points or to clear the mark.")
            return
        mark = not all(s.anchor for s in chosen)
        changing = [(r, s) for r, s in zip(rows, chosen) if s.anchor != mark]
        excluded = [s.id for _, s in changing if not s.included]
        if mark and excluded:
            self.show_message(f"Not marked: standard(s) {', '.join(excluded)} of {analyte} are excluded from the fit; "
                              "an anchor point is a standard in the fit. Include them first.")
            return
        ids = [s.id for _, s in changing]
        reason = ask_anchor_points(self, self.session.run, analyte, ids, mark=mark, rows=[r for r, _ in changing])
        if not reason:
            return
        change = run_edits.mark_anchor_points if mark else run_edits.clear_anchor_points
        description = (f"Mark {', '.join(ids)} as anchor point{'s' if len(ids) > 1 else ''}" if mark
                       else f"Clear the anchor point mark of {', '.join(ids)}")
        try:
            new_run = change(self.session.run, analyte, ids, reason, user=self.session.identity)
        except CurvewrightError as exc:
            self.show_message(str(exc))
            return
        self.session.apply(new_run, description)
        self.show_message(f"{description} ({analyte}): {reason}")
        self._select_rows(self.standards_view, rows)

    @staticmethod
    def _select_rows(view: SheetTableView, rows: list[int]) -> None:
        """Select ``rows`` again (after an edit the buttons act on the same standards)."""
        from PySide6.QtCore import QItemSelection, QItemSelectionModel

        model, selection = view.model(), QItemSelection()
        if model is None:
            return
        for row in rows:
            if 0 <= row < model.rowCount():
                selection.select(model.index(row, 0), model.index(row, model.columnCount() - 1))
        view.selectionModel().select(selection, QItemSelectionModel.SelectionFlag.ClearAndSelect)

    @staticmethod
    def _select_row(view: SheetTableView, row: int) -> None:
        model = view.model()
        if model is not None and 0 <= row < model.rowCount():
            view.setCurrentIndex(model.index(row, 0))
            view.selectRow(row)

    def choose_model(self, model: str, weighting: str, recommended) -> bool:  # type: ignore[no-untyped-def]
        analyte = self.current_analyte()
        if self.refused_when_locked("Choose the model", f"choose the model for {analyte}"):
            return False
        method = self.session.result.method if self.session.result is not None else None
        fixed = method.analyte(analyte) if method is not None else None
        if fixed is not None:
            needs_reason = (model, weighting) != (fixed.model, fixed.weighting)
            prompt = (f"{model}, {weighting} departs from the {fixed.model}, {fixed.weighting} that the validated method "
                      f"{method.label} fixes. Why?")
            settled = f"fixed by the validated method {method.label}"
        else:
            needs_reason = recommended is not None and (model, weighting) != tuple(recommended)
            prompt = ("" if not needs_reason else
                      f"No model is recommended for {analyte}: no candidate is acceptable (see the model evidence). "
                      f"Why is {model}, {weighting} chosen?" if not recommended else
                      f"{model}, {weighting} is not the recommended {recommended[0]}, {recommended[1]}. Why is it chosen?")
            settled = self._recommendation_reason(analyte)
        if needs_reason:
            dialog = ReasonDialog(f"Choose the model for {analyte}", prompt, (), self)
            if dialog.exec() != ReasonDialog.DialogCode.Accepted:
                return False
            reason = dialog.reason()
        else:
            reason = settled
        try:
            new_run = run_edits.choose_model(self.session.run, analyte, model, weighting, reason, recommended=recommended,
                                             user=self.session.identity)
        except CurvewrightError as exc:
            self.show_message(str(exc))
            return False
        self.session.apply(new_run, f"Choose {model}, {weighting} for {analyte}")
        return True

    def _recommendation_reason(self, analyte: str) -> str:
        """The reason recorded when the recommendation is taken: the comparison's reasons, in the words
        ``quantify --standards`` records."""
        from ..core.comparison import ModelComparison
        from ..io.model_choice import recommendation_reason

        comparison, result = self.session.evidence.get(analyte), self.session.result
        if not isinstance(comparison, ModelComparison) or result is None:
            return "the recommended model (see the model evidence)"
        return recommendation_reason(comparison, len(result.analyte(analyte).fitted_standards), result.profile.name)

    def choose_model_dialog(self) -> None:
        """Analysis → Choose model: opens the model evidence with the recommended model selected."""
        self.bottom_tabs.setCurrentWidget(self.evidence_panel)
        self.evidence_panel.table.setFocus()
        self.show_message("Select a candidate and press 'Use the selected model'.")

    def edit_settings(self) -> None:
        """Analysis → Run settings: the run's confidence level, interval, limits, profile and rounding, with
        the analyst's name and decimal mark. A locked run's settings are refused before anything is asked
        (the analyst's own name and decimal mark stay at Analysis → Your name and decimal mark…)."""
        if self.refused_when_locked("Run settings", run_edits.refused_change("settings_changed", {}),
                                    also=f"Your name, ID and decimal mark: {PREFERENCES_MENU}"):
            return
        dialog = SettingsDialog(self.session.run, self, str(self.settings.value("input/decimal_mark", "system")),
                                identity=self.session.identity)
        if dialog.exec() != SettingsDialog.DialogCode.Accepted:
            return
        self._keep_preferences(dialog)
        try:
            new_run = run_edits.change_settings(self.session.run, dialog.settings(self.session.run), dialog.reason.text(),
                                                user=self.session.identity)
        except CurvewrightError as exc:
            QMessageBox.warning(self, "Settings", str(exc))
            return
        self.session.apply(new_run, "Change run settings")
        self.settings.setValue("defaults/confidence_level", new_run.settings.confidence_level)
        self.settings.setValue("defaults/profile", new_run.settings.acceptance_profile)
        self.settings.setValue("defaults/rounding_kind", new_run.settings.rounding.kind)
        self.settings.setValue("defaults/rounding_digits", new_run.settings.rounding.digits)
        self.settings.setValue("defaults/rounding_tie", new_run.settings.rounding.tie)

    def edit_preferences(self) -> None:
        """Analysis → Your name and decimal mark: the analyst's own settings (kept in the app's settings,
        not in the run), which a locked run does not refuse."""
        dialog = SettingsDialog(self.session.run, self, str(self.settings.value("input/decimal_mark", "system")),
                                identity=self.session.identity, personal_only=True)
        if dialog.exec() != SettingsDialog.DialogCode.Accepted:
            return
        self._keep_preferences(dialog)

    def _keep_preferences(self, dialog: SettingsDialog) -> None:
        """Keep the name, laboratory ID and decimal mark typed in ``dialog`` in the app's settings."""
        name, person_id = dialog.identity()
        self.settings.setValue("identity/name", name)
        self.settings.setValue("identity/id", person_id)
        self.session.identity = settings_identity(self.settings)
        self.settings.setValue("input/decimal_mark", dialog.decimal_setting())
        for model in (self.standards_model, self.samples_model):
            model.decimal_mark = self.decimal_mark()
        self._show_verdict(self.session.result)

    def open_history(self) -> None:
        """Analysis → Calibration history: the archive's control charts, with this run marked."""
        from .history_view import open_history

        self.history_window = open_history(self)

    def rename_run(self) -> None:
        """Analysis → Run name and instrument: the run's name, instrument and description."""
        from .dialogs import RunDetailsDialog

        if self.refused_when_locked("Run name and instrument", "change the run's name, instrument or description"):
            return
        dialog = RunDetailsDialog(self.session.run, self)
        if dialog.exec() != RunDetailsDialog.DialogCode.Accepted:
            return
        try:
            new_run = run_edits.edit_run_details(self.session.run, **dialog.values(), user=self.session.identity)
        except CurvewrightError as exc:
            QMessageBox.warning(self, "Run name and instrument", str(exc))
            return
        self.session.apply(new_run, "Edit the run's name and instrument")

    def edit_analyte(self) -> None:
        """Analysis → Analyte name and units: rename the current analyte or set its units."""
        name = self.current_analyte()
        if self.refused_when_locked("Analyte name and units", f"change the name or units of {name}"):
            return
        dialog = AnalyteDialog(self.session.run.analyte(name), self)
        if dialog.exec() != AnalyteDialog.DialogCode.Accepted:
            return
        try:
            new_run = run_edits.edit_analyte(self.session.run, name, **dialog.values(), user=self.session.identity)
        except CurvewrightError as exc:
            QMessageBox.warning(self, "Analyte name and units", str(exc))
            return
        if new_run is self.session.run:
            return
        self.session.apply(new_run, f"Edit name and units of {name}")
        self.analyte_box.setCurrentText(dialog.values()["name"])

    def add_analyte(self) -> None:
        """Analysis → Add analyte: a new analyte with its name and units."""
        if self.refused_when_locked("Add analyte", "add an analyte"):
            return
        dialog = AnalyteDialog(None, self)
        if dialog.exec() != AnalyteDialog.DialogCode.Accepted:
            return
        values = dialog.values()
        if values["name"] in {a.name for a in self.session.run.analytes}:
            QMessageBox.warning(self, "Add analyte", f"analyte {values['name']!r} is already in the run.")
            return
        new_run = run_edits.record(
            replace(self.session.run, analytes=self.session.run.analytes
                    + (Analyte(values["name"], values["concentration_unit"], values["response_unit"]),)),
            "settings_changed", {"changes": {"analyte_added": values["name"]}, "reason": values["reason"]}, user=self.session.identity)
        self.session.apply(new_run, f"Add analyte {values['name']}")
        self.analyte_box.setCurrentText(values["name"])

    def remove_row(self) -> None:
        """Edit → Remove row: the selected standard or sample, entered by mistake, with a reason."""
        on_standards = self.left_tabs.currentIndex() == 0
        view = self.standards_view if on_standards else self.samples_view
        rows = self.selected_rows(view)
        if len(rows) != 1:
            self.show_message("Select one row to remove." if not rows else
                              f"{len(rows)} rows are selected; remove rows one at a time, each with its reason.")
            return
        row = rows[0]
        model = self.standards_model if on_standards else self.samples_model
        if row >= model.rowCount():
            return
        what = "standard" if on_standards else "sample"
        ident = model.index(row, 0).data()
        if self.refused_when_locked(f"Remove {what}", f"remove {what} {ident}"):
            return
        dialog = ReasonDialog(f"Remove {what} {ident}", f"Why is {what} {ident} (row {row + 1}) removed? (To keep a "
                              "measured standard out of the fit, exclude it instead; its values stay in the audit trail "
                              "either way.)", (), self)
        if dialog.exec() == ReasonDialog.DialogCode.Accepted:
            model.remove_row(row, dialog.reason())

    def sign_run(self, role: str) -> bool:
        """Review → Sign / Approve: the person's signature, keyed when a signing key is given."""
        from ..io.signatures import sign
        from .dialogs import SignDialog

        if role == "approver" and self.refused_when_locked("Approve the run", "approve the run again"):
            return False
        person = self.session.identity
        if not person.name:
            QMessageBox.warning(self, "Sign the run", f"A signature needs your full name: set it under "
                                f"{PREFERENCES_MENU} (“Your full name”), then sign.")
            return False
        from ..io.signatures import roles_signed_by, signature_list

        result = self._fresh_result()  # the verdict shown (in the window and the dialog) is that of the run as it is now
        run = self.session.run
        if result is None:
            QMessageBox.warning(self, "Not signed", "The run as it is now could not be analysed, so its verdict is "
                                "not known (the status line says why). Nothing was signed.")
            return False
        accepted = result.accepted
        failing = [r for r in result.reasons if "FAIL" in r]
        verdict = ("ACCEPTED" if accepted else "NOT ACCEPTED") + (" — " + "; ".join(failing) if failing else "")
        from ..io.record_check import record_problems

        dialog = SignDialog(role, person.words, str(self.settings.value("signing/key_file", "") or ""), self,
                            verdict=verdict, accepted=accepted, given=signature_list(self.session.run),
                            also_signed_as=roles_signed_by(self.session.run, person, besides=role),
                            record_problems=record_problems(self.session.run))
        if dialog.exec() != SignDialog.DialogCode.Accepted:
            return False
        meaning, key_file = dialog.values()
        if self.session.run is not run or result.run is not run:
            QMessageBox.warning(self, "Not signed", "The run changed while the sign dialog was open, so the verdict "
                                "it showed is not that of the run as it is now. Nothing was signed; sign again.")
            return False
        try:
            signed = sign(run, role, person, meaning=meaning, key_file=key_file,
                          verdict_accepted=accepted, not_accepted_reason=dialog.not_accepted_reason(),
                          record_problems_reason=dialog.record_problems_reason())
        except CurvewrightError as exc:
            QMessageBox.warning(self, "Not signed", str(exc))
            return False
        if key_file:
            self.settings.setValue("signing/key_file", key_file)
        self.session.record_run(signed)
        self.show_message(f"Signed as {role} by {person.name}" + (" (keyed)" if key_file else "")
                          + ("; the run is approved and locked." if role == "approver" else "."))
        return True

    def withdraw_approval(self) -> bool:
        """Review → Withdraw approval: with a reason, so that the run can be edited again."""
        from ..io.signatures import withdraw_approval

        approval = self.session.run.approval
        if approval is None:
            self.show_message("The run is not approved; there is nothing to withdraw.")
            return False
        dialog = ReasonDialog("Withdraw the approval", f"Why is the approval by {approval.name} ({approval.time_utc}) "
                              "withdrawn? The run can then be edited; the approval and your reason stay on record.",
                              (), self)
        if dialog.exec() != ReasonDialog.DialogCode.Accepted:
            return False
        try:
            unlocked = withdraw_approval(self.session.run, self.session.identity, dialog.reason())
        except CurvewrightError as exc:
            QMessageBox.warning(self, "Approval not withdrawn", str(exc))
            return False
        self.session.record_run(unlocked)
        self.show_message("Approval withdrawn; the run can be edited again.")
        return True

    def refused_when_locked(self, title: str, what: str, *, also: str = "") -> bool:
        """True, having said so, when the run is approved and locked: ``what`` (a change, as the analyst
        asked for it) is refused before anything is asked (a reason, a file, a preview, a form); ``also``
        is said after the refusal (where something related can still be done)."""
        try:
            run_edits.refuse_if_locked(self.session.run, what)
        except run_edits.RunLocked as exc:
            QMessageBox.information(self, title, str(exc) + (f"\n\n{also}" if also else ""))
            self.show_message(str(exc) + (f" {also}" if also else ""))
            return True
        return False

    def ask_value_change_reason(self, what: str) -> str | None:
        """Why a raw value that was already entered changes: a reason from the list, or typed."""
        dialog = ReasonDialog("Why does this value change?",
                              f"{what} The old and the new value and your reason go into the audit trail.",
                              run_edits.VALUE_CHANGE_REASONS, self)
        return dialog.reason() if dialog.exec() == ReasonDialog.DialogCode.Accepted else None

    def input_view(self) -> SheetTableView:
        """The input table the analyst is working in: the focused one, else the one on the open tab."""
        focused = self.focusWidget()
        if isinstance(focused, SheetTableView):
            return focused
        return self.standards_view if self.left_tabs.currentIndex() == 0 else self.samples_view

    def paste(self) -> None:
        """Edit → Paste: the clipboard's cells into the standards or samples table, at the selected cell."""
        view = self.input_view()
        self.left_tabs.setCurrentIndex(0 if view is self.standards_view else 1)
        view.paste()

    def stated_decimal_mark(self) -> str | None:
        """The decimal mark the analyst set in the settings ("." or ","), None when left to detection."""
        value = str(self.settings.value("input/decimal_mark", "system"))
        return value if value in (".", ",") else None

    def paste_into(self, view: SheetTableView, text: str) -> int:
        """Enter pasted text into a table: one cell as if typed; a block read as a file is read (header
        names, decimal mark from the whole block), previewed, then entered as one audited step."""
        model = view.model()
        current = view.currentIndex()
        one_cell = text.rstrip("\r\n")
        if not one_cell.strip():
            self.show_message("The clipboard holds no text to paste.")
            return 0
        if self.refused_when_locked("Paste", f"paste into the {model.target} table"):
            return 0  # before the block is read and previewed
        if current.isValid() and not any(ch in one_cell for ch in "\t\r\n"):
            return 1 if model.setData(current, one_cell) else 0
        fields = {column: field for field, column in model.field_columns().items()}
        start = fields.get(current.column()) if current.isValid() else None
        try:
            block = read_block(text, model.target, start_field=start, usual_mark=self.stated_decimal_mark())
        except CurvewrightError as exc:
            self.show_message(f"Not pasted: {exc}")
            return 0
        dialog = PasteDialog(block, model.rowCount(), current.row() if current.isValid() else None, self)
        if dialog.exec() != PasteDialog.DialogCode.Accepted:
            return 0
        entered, notes = model.apply_block(dialog.block, dialog.top)
        if entered and model.target == "standards":
            self._units_from_header(dialog.block)
        if entered:
            attention = (f"; {len(notes)} cell(s) need attention: " + " | ".join(notes[:4])
                         + (f" … and {len(notes) - 4} more" if len(notes) > 4 else "")) if notes else "."
            self.show_message(f"Pasted {entered} row(s) into the {model.target} table{attention}")
        return entered

    def _units_from_header(self, block) -> None:  # type: ignore[no-untyped-def]
        """An analyte without a concentration unit takes the one a pasted header names ("Conc. (ng/mL)")."""
        name = self.current_analyte()
        analyte = self.session.run.analyte(name)
        unit = next((c.unit for c in block.columns if c.field == "concentration" and c.unit), "")
        if analyte.concentration_unit or not unit:
            return
        response_unit = analyte.response_unit or next((c.unit for c in block.columns if c.field == "response" and c.unit), "")
        self.session.apply(run_edits.edit_analyte(self.session.run, name, name=name, concentration_unit=unit,
                                                  response_unit=response_unit, reason="unit named in the pasted header",
                                                  user=self.session.identity),
                           f"Set the units of {name} from the pasted header")

    def copy_selection(self) -> str:
        """Edit → Copy: the selected cells of the focused table (all of it when nothing is selected)."""
        focused = self.focusWidget()
        if isinstance(focused, SheetTableView):
            return focused.copy_selection()
        if focused is self.results_view.table:
            return self.results_view.copy_selection()
        return self.copy_table()

    def copy_table(self) -> str:
        """Edit → Copy table as text: the focused input table, else the results, tab-separated."""
        view = self.focusWidget()
        from PySide6.QtGui import QGuiApplication

        if isinstance(view, SheetTableView):
            text = view.model().as_text()
        else:
            text = self.results_model.as_text()
        QGuiApplication.clipboard().setText(text)
        self.show_message(f"Copied {text.count(chr(10)) - 1} row(s) as tab-separated text.")
        return text

    def about(self) -> None:
        QMessageBox.about(self, "About Curvewright", f"Curvewright {__version__}\n\nCalibration curves for testing "
                          f"laboratories.\n\n{CAUTION}")

    def closeEvent(self, event) -> None:  # noqa: N802 - Qt override
        self.commit_open_editors()
        if self.maybe_save():
            self.session.discard_recovery()
            self._let_go_marker()
            event.accept()
        else:
            event.ignore()


def _compared(comparison, analyte) -> str:  # type: ignore[no-untyped-def]
    """The default and the recommended candidate side by side: lack-of-fit p and standards outside the
    acceptance limits (every reason in the tooltip and the Model evidence tab)."""
    from ..io.result_tables import display_number

    def described(c) -> str:  # type: ignore[no-untyped-def]
        p = display_number(c.lack_of_fit_p, 3)
        return (f"lack-of-fit p = {p}, " if c.lack_of_fit_p is not None and p else "") + \
            f"{c.standards_failing} standard(s) outside the acceptance limits"

    rec = comparison.recommendation
    try:
        default = comparison.candidate(analyte.model, analyte.weighting)
    except KeyError:
        default = None
    return ((f"the default has {described(default)}; the recommended {described(rec)}" if default is not None
             else f"the recommended has {described(rec)}") + ". Every reason: Model evidence tab.")
