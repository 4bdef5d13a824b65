"""The History view: a tracked quantity through the archive's runs as a control chart.

The chart shows each filed run's value in run order (accepted runs as filled circles, runs not
accepted as open squares), the mean of the baseline and the limits at ± 2 s and ± 3 s, the
baseline's runs shaded, today's run marked with a ringed diamond and its name, and over each point
that breaks a rule the rules it breaks. Below it the runs that break rules are listed. Everything
drawn is read from :func:`curvewright.io.archive.history`; nothing here computes a statistic.

The archive is the one named when the view opens, else the one chosen before (kept in the settings
without any password), else ``CURVEWRIGHT_ARCHIVE_URL``. Errors are shown in the view, in words.
"""

from __future__ import annotations

import os
from pathlib import Path

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import QSettings, Qt
from PySide6.QtGui import QFont, QFontMetrics
from PySide6.QtWidgets import (QComboBox, QFileDialog, QHBoxLayout, QHeaderView, QInputDialog, QLabel, QMessageBox,
                               QPushButton, QSpinBox, QTableWidget, QTableWidgetItem, QVBoxLayout, QWidget)

from .. import CAUTION
from ..core.errors import CurvewrightError
from ..core.run_analysis import RunResult
from ..core.tracked import quantity_words
from ..core.trends import DEFAULT_BASELINE_RUNS, RULES, Baseline
from ..io.archive import (ENVIRONMENT, ArchiveError, History, RecordNotIntact, Today, history, locate,
                          open_archive)
from . import figures, palette
from ..core.notation import figures as sig_figures, fixed

SETTINGS_KEY = "archive/location"
TODAY_COLOUR = "#2a7f62"
MEAN_COLOUR = "#333333"
LIMIT_3S_COLOUR = "#b01c2e"


class PlainAxis(pg.AxisItem):
    """An axis whose tick labels are the plotted values themselves, never rescaled by an SI prefix
    (a slope of 0.0042 reads 0.0042, a count of 248806 reads 248806)."""

    def updateAutoSIPrefix(self) -> None:  # noqa: N802 - pyqtgraph override
        self.autoSIPrefixScale = 1.0
        self.labelUnitPrefix = ""
        self._updateLabel()


class HistoryWindow(QWidget):
    """The History view. ``today`` is the run open in the main window (marked on the chart and filed by
    "File this run"); ``location`` the archive to open (else the one remembered, else the environment)."""

    def __init__(self, settings: QSettings, *, location: str | None = None, today: RunResult | None = None,
                 analyte: str | None = None, quantity: str = "slope", today_label: str = "today",
                 parent: QWidget | None = None) -> None:
        super().__init__(parent)
        if parent is not None:
            self.setWindowFlag(Qt.WindowType.Window, True)
        self.setWindowTitle("Calibration history — Curvewright")
        self.setAccessibleName("Calibration history")
        self.settings = settings
        self.today_result = today
        self.today = Today.of(today) if today is not None else None
        self.today_label = today_label
        self.wanted_analyte = analyte
        self.wanted_quantity = quantity
        self.location_text = location or str(settings.value(SETTINGS_KEY, "") or "") or os.environ.get(ENVIRONMENT, "")
        self.history: History | None = None
        self.rule_labels: list[tuple[int, str, pg.TextItem]] = []
        self.limit_lines: dict[str, pg.InfiniteLine] = {}
        self.today_marker: pg.PlotDataItem | None = None
        self._build()
        self.reload()

    # --- layout ------------------------------------------------------------------------------------
    def _build(self) -> None:
        caution = QLabel("⚠ " + CAUTION)
        caution.setWordWrap(True)
        caution.setAccessibleName("Caution")
        caution.setStyleSheet("background:#fff4e5; color:#6b3000; border:1px solid #d9a066; padding:4px;")
        self.caution = caution
        self.location_label = QLabel("")
        self.location_label.setAccessibleName("Archive")
        self.location_label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        self.folder_button = QPushButton("Choose archive &folder…")
        self.folder_button.setToolTip("A folder: the SQLite archive curvewright-archive.sqlite is kept in it")
        self.folder_button.clicked.connect(lambda *_: self.choose_folder())
        self.url_button = QPushButton("PostgreSQL &URL…")
        self.url_button.setToolTip("A laboratory-wide archive: postgresql://USER@HOST:PORT/DATABASE (the password is "
                                   "read from PGPASSWORD or ~/.pgpass, never kept by Curvewright)")
        self.url_button.clicked.connect(lambda *_: self.choose_url())
        self.file_button = QPushButton("File &this run into the archive")
        self.file_button.setToolTip("File the run open in the main window (the same content twice is one entry)")
        self.file_button.clicked.connect(lambda *_: self.file_today())
        self.file_button.setVisible(self.today is not None)
        self.analyte_box = QComboBox()
        self.analyte_box.setAccessibleName("Analyte")
        self.method_box = QComboBox()
        self.method_box.setAccessibleName("Method (profile | model | weighting)")
        self.quantity_box = QComboBox()
        self.quantity_box.setAccessibleName("Quantity")
        self.baseline_box = QSpinBox()
        self.baseline_box.setRange(2, 1000)
        self.baseline_box.setValue(DEFAULT_BASELINE_RUNS)
        self.baseline_box.setAccessibleName("Baseline: the first N accepted runs")
        self.baseline_box.setToolTip("The control limits come from the first N accepted runs (20 or more is common "
                                     "practice)")
        self.analyte_box.currentIndexChanged.connect(lambda *_: self._on_analyte())
        self.method_box.currentIndexChanged.connect(lambda *_: self._on_method())
        self.quantity_box.currentIndexChanged.connect(lambda *_: self.redraw())
        self.baseline_box.valueChanged.connect(lambda *_: self.redraw())
        self.summary = QLabel("")
        self.summary.setWordWrap(True)
        self.summary.setAccessibleName("Control limits")
        self.summary.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        self.verdict = QLabel("")
        self.verdict.setWordWrap(True)
        self.verdict.setAccessibleName("Rules broken by today's run")
        self.graphics = pg.GraphicsLayoutWidget()
        self.graphics.setBackground("w")
        self.plot = self.graphics.addPlot(row=0, col=0, axisItems={"left": PlainAxis("left")})
        self.legend = figures.new_legend()
        figures.legend_beside(self.graphics.ci, self.legend, row=0)
        self.breaks_table = QTableWidget(0, 5)
        self.breaks_table.setAccessibleName("Runs that break a rule")
        self.breaks_table.setHorizontalHeaderLabels(["Run", "Run date", "Value", "z", "Rules broken"])
        self.breaks_table.horizontalHeader().setSectionResizeMode(QHeaderView.ResizeMode.ResizeToContents)
        self.breaks_table.horizontalHeader().setStretchLastSection(True)
        self.breaks_table.setEditTriggers(QTableWidget.EditTrigger.NoEditTriggers)
        self.breaks_table.setMaximumHeight(170)

        where = QHBoxLayout()
        where.addWidget(QLabel("Archive:"))
        where.addWidget(self.location_label, 1)
        for b in (self.folder_button, self.url_button, self.file_button):
            where.addWidget(b)
        choose = QHBoxLayout()
        for text, box in (("A&nalyte:", self.analyte_box), ("&Method:", self.method_box),
                          ("&Quantity:", self.quantity_box), ("&Baseline: first", self.baseline_box)):
            label = QLabel(text)
            label.setBuddy(box)
            choose.addWidget(label)
            choose.addWidget(box, 1 if box is not self.baseline_box else 0)
        choose.addWidget(QLabel("accepted runs"))
        layout = QVBoxLayout(self)
        layout.setContentsMargins(6, 4, 6, 4)
        layout.addWidget(self.caution)
        layout.addLayout(where)
        layout.addLayout(choose)
        layout.addWidget(self.summary)
        layout.addWidget(self.verdict)
        layout.addWidget(self.graphics, 1)
        layout.addWidget(self.breaks_table)
        self.resize(1200, 780)

    # --- the archive -------------------------------------------------------------------------------
    def set_location(self, text: str) -> None:
        """Use the archive at ``text``; it is remembered without any password."""
        self.location_text = text
        try:
            location = locate(text)
        except ArchiveError as exc:
            self._problem(str(exc))
            return
        self.settings.setValue(SETTINGS_KEY, location.remembered)
        self.reload()

    def choose_folder(self) -> None:
        folder = QFileDialog.getExistingDirectory(self, "Choose the archive's folder")
        if folder:
            self.set_location(folder)

    def choose_url(self) -> None:
        text, ok = QInputDialog.getText(self, "PostgreSQL archive", "postgresql://USER@HOST:PORT/DATABASE (the "
                                        "password comes from PGPASSWORD or ~/.pgpass; it is never kept):")
        if ok and text.strip():
            self.set_location(text.strip())

    def _problem(self, text: str) -> None:
        self.history = None
        self.summary.setText(f"<b>{_escape(text)}</b>")
        self.verdict.setText("")
        self._clear_chart()
        figures.fit_legend(self.graphics.ci, self.legend)
        self.breaks_table.setRowCount(0)

    def reload(self) -> None:
        """Read the analytes and methods of the archive again and redraw."""
        if not self.location_text:
            self.location_label.setText("none chosen")
            self._problem(f"No archive chosen: choose a folder, a PostgreSQL URL, or set {ENVIRONMENT}.")
            return
        try:
            location = locate(self.location_text)
            self.location_label.setText(location.shown)
            with open_archive(location) as archive:
                analytes = archive.analytes()
        except CurvewrightError as exc:
            self._problem(str(exc))
            return
        current = self.analyte_box.currentText() or self.wanted_analyte
        if current not in analytes and self.today is not None:
            current = next((v.analyte for v in self.today.values if v.analyte in analytes), current)
        self.analyte_box.blockSignals(True)
        self.analyte_box.clear()
        self.analyte_box.addItems(list(analytes))
        if current in analytes:
            self.analyte_box.setCurrentText(current)
        self.analyte_box.blockSignals(False)
        self._on_analyte()

    def _on_analyte(self) -> None:
        analyte = self.analyte_box.currentText()
        if not analyte:
            self._problem("The archive holds no run yet.")
            return
        try:
            with open_archive(self.location_text) as archive:
                methods = archive.methods(analyte)
        except CurvewrightError as exc:
            self._problem(str(exc))
            return
        mine = self.today.analyte(analyte) if self.today is not None else None
        keys = [m.method_key for m in methods]
        self.method_box.blockSignals(True)
        self.method_box.clear()
        for m in methods:
            self.method_box.addItem(f"{m.method_key} ({m.runs} run{'s' if m.runs != 1 else ''})", m.method_key)
        if mine is not None and mine.method_key in keys:
            self.method_box.setCurrentIndex(keys.index(mine.method_key))
        self.method_box.blockSignals(False)
        self._on_method()

    def _on_method(self) -> None:
        analyte, method = self.analyte_box.currentText(), self.method_box.currentData()
        if not analyte or method is None:
            return
        try:
            with open_archive(self.location_text) as archive:
                quantities = archive.quantities(analyte, method)
                units = archive.units(analyte, method)
        except CurvewrightError as exc:
            self._problem(str(exc))
            return
        wanted = self.quantity_box.currentData() or self.wanted_quantity
        self.quantity_box.blockSignals(True)
        self.quantity_box.clear()
        for q in quantities:
            self.quantity_box.addItem(quantity_words(q, *units), q)
        index = self.quantity_box.findData(wanted)
        self.quantity_box.setCurrentIndex(index if index >= 0 else 0)
        self.quantity_box.blockSignals(False)
        self.redraw()

    def choose(self, *, analyte: str | None = None, quantity: str | None = None) -> None:
        """Choose the analyte and the quantity as the analyst does in the boxes."""
        if analyte is not None:
            self.analyte_box.setCurrentText(analyte)
        if quantity is not None:
            index = self.quantity_box.findData(quantity)
            if index < 0:
                raise KeyError(f"quantity {quantity!r} is not offered (offered: "
                               f"{[self.quantity_box.itemData(i) for i in range(self.quantity_box.count())]})")
            self.quantity_box.setCurrentIndex(index)

    def file_today(self) -> None:
        """File the run open in the main window into the archive (made when it does not exist yet). A run
        whose record is not intact (what ``curvewright check`` reports) is refused as ``curvewright archive
        add`` refuses it, naming the problems; the analyst may then file it all the same, marked "record
        NOT intact" and kept out of the control limits (``--despite-problems``), or not file it."""
        if self.today_result is None:
            return
        if not self.location_text:
            self._problem(f"Choose the archive first (a folder or a PostgreSQL URL, or set {ENVIRONMENT}).")
            return
        run, despite = self.today_result.run, False
        while True:
            try:
                with open_archive(self.location_text, create=True) as archive:
                    receipt = archive.file(run, result=self.today_result, despite_problems=despite)
                break
            except RecordNotIntact as refused:
                if despite or not self._file_despite(refused):
                    self.verdict.setText(f"<b>Not filed: {_escape(refused.what)}:</b> "
                                         + _escape("; ".join(refused.problems)) + ".")
                    return
                despite = True
            except CurvewrightError as exc:
                said = str(exc)
                self._problem(said[:1].upper() + said[1:] if said.startswith("not filed: ") else f"Not filed: {said}")
                return
        entry = receipt.run
        self.reload()
        self.file_button.setText("Filed" if receipt.new else "Already filed")
        marked = (f" Marked: its record is NOT intact ({entry.record_problems}); filed on request, it never sets "
                  "control limits." if entry.record_problems else "")
        self.verdict.setText(_escape(f"{'Filed' if receipt.new else 'Already filed'} as entry {entry.entry} "
                                     f"(SHA-256 {entry.key[:16]}…).{marked} ") + self.verdict.text())

    def _file_despite(self, refused: RecordNotIntact) -> bool:
        """Ask whether a run whose record is not intact is filed all the same, marked; True only when the
        analyst says so (the default is not to file it)."""
        answer = QMessageBox.question(
            self, "Record not intact: not filed",
            f"{refused.run_name} is not filed: {refused.what}:\n\n" + "\n".join(f"• {p}" for p in refused.problems)
            + "\n\nThe archive keeps only runs whose record is intact (curvewright check names the same problems). "
            "File it all the same, marked “record NOT intact” and kept out of the control limits?",
            QMessageBox.StandardButton.Yes | QMessageBox.StandardButton.No, QMessageBox.StandardButton.No)
        return answer == QMessageBox.StandardButton.Yes

    # --- drawing -----------------------------------------------------------------------------------
    def _clear_chart(self) -> None:
        self.plot.clear()
        self.legend.clear()
        self.rule_labels = []
        self.limit_lines = {}
        self.today_marker = None

    def redraw(self) -> None:
        analyte, method, quantity = (self.analyte_box.currentText(), self.method_box.currentData(),
                                     self.quantity_box.currentData())
        if not analyte or method is None or quantity is None:
            return
        try:
            with open_archive(self.location_text) as archive:
                h = history(archive, analyte, quantity, method=method,
                            baseline=Baseline(self.baseline_box.value()), today=self.today)
        except CurvewrightError as exc:
            self._problem(str(exc))
            return
        self.history = h
        self._draw()
        self._describe(h)
        self._list_breaks(h)

    def _draw(self) -> None:
        if self.history is None:
            return
        self._clear_chart()
        draw_control_chart(self.plot, self.history, legend=self.legend, view=self, today_label=self.today_label,
                           height_px=float(self.plot.getViewBox().height()))
        figures.fit_legend(self.graphics.ci, self.legend)
        # lay the legend's entries out and place it in its column now, not at the next event
        self.legend.layout.activate()
        self.graphics.ci.layout.activate()

    def resizeEvent(self, event) -> None:  # noqa: N802 - Qt override
        super().resizeEvent(event)
        self._draw()  # the room left for the labels depends on the chart's height

    def showEvent(self, event) -> None:  # noqa: N802 - Qt override
        super().showEvent(event)
        self._draw()

    def _describe(self, h: History) -> None:
        if h.trend is None:
            self.summary.setText(f"{_escape(h.words)}: <b>no control limits</b>: {_escape(h.problem or '')}")
        else:
            lim = h.trend.limits
            (l2, u2), (l3, u3) = lim.limit(2), lim.limit(3)
            self.summary.setText(
                f"{_escape(h.words)} — limits from {_escape(h.trend.baseline_words)}: mean {sig_figures(lim.mean, 6)}, "
                f"s {sig_figures(lim.sd, 4)}; ±2 s {sig_figures(l2, 6)} to {sig_figures(u2, 6)}; ±3 s {sig_figures(l3, 6)} to {sig_figures(u3, 6)}. Rules: {', '.join(RULES)} "
                "(Westgard et al., Clin. Chem. 1981).")
        which = "Today's run" if self.today_label == "today" else f"The {self.today_label}"
        if self.today is None:
            self.verdict.setText("")
        elif h.today is None:
            self.verdict.setText(f"{which} is not on this chart: {_escape(h.today_note)}.")
        else:
            broken = h.breaks_at(h.today)
            name = _escape(h.points[h.today].label)
            self.verdict.setText(f"{which} ({name}) breaks: <b>" + "; ".join(_escape(b.words) for b in broken)
                                 + "</b> (a warning unless the profile makes it a failure)." if broken else
                                 f"{which} ({name}) breaks no rule on this chart.")

    def _list_breaks(self, h: History) -> None:
        rows = [i for i in range(len(h.points)) if h.breaks_at(i)]
        self.breaks_table.setRowCount(len(rows))
        for r, i in enumerate(rows):
            p = h.points[i]
            z = float(h.trend.z[i]) if h.trend is not None else float("nan")
            cells = (f"{i + 1}: {p.label}", p.day[:10], f"{sig_figures(p.value, 6)}", fixed(z, 2, plus=True),
                     "; ".join(b.words for b in h.breaks_at(i)))
            for c, text in enumerate(cells):
                self.breaks_table.setItem(r, c, QTableWidgetItem(text))


def draw_control_chart(plot: pg.PlotItem, h: History, *, legend: pg.LegendItem | None = None,
                       view: HistoryWindow | None = None, today_label: str = "today", height_px: float = 0.0) -> None:
    """Draw ``h`` into ``plot``: run number along, the quantity up; limits, baseline, today, rule labels.
    ``height_px`` is the height of the chart on screen, when known (it leaves room for the labels)."""
    figures.styled_plot(plot, "Run (in order of run date)", h.words)
    n = len(h.points)
    if n == 0:
        return
    x = np.arange(1, n + 1, dtype=float)
    y = np.array([p.value for p in h.points])
    step = max(1, int(np.ceil(n / 8)))
    plot.getAxis("bottom").setHeight(62)  # room for the run numbers, their dates and the axis title
    plot.getAxis("bottom").setTicks([[(float(i + 1), f"{i + 1}\n{h.points[i].day[:10]}") for i in range(0, n, step)],
                                     [(float(i + 1), "") for i in range(n)]])
    lines: dict[str, pg.InfiniteLine] = {}
    if h.trend is not None:
        base = h.trend.baseline_indices
        region = pg.LinearRegionItem(values=(base[0] + 0.5, base[-1] + 1.5), movable=False,
                                     brush=pg.mkBrush(*palette.RANGE_SHADE), pen=pg.mkPen(None))
        plot.addItem(region)
        if legend is not None:
            legend.addItem(pg.BarGraphItem(x=[0], height=[0], width=0, brush=pg.mkBrush(*palette.RANGE_SHADE)),
                           f"baseline ({len(base)} runs)")
        lim = h.trend.limits
        styles = (("mean", lim.mean, pg.mkPen(MEAN_COLOUR, width=1.5)),
                  ("+2s", lim.limit(2)[1], pg.mkPen(palette.LIMIT, width=1.3, style=Qt.PenStyle.DashLine)),
                  ("-2s", lim.limit(2)[0], pg.mkPen(palette.LIMIT, width=1.3, style=Qt.PenStyle.DashLine)),
                  ("+3s", lim.limit(3)[1], pg.mkPen(LIMIT_3S_COLOUR, width=1.3, style=Qt.PenStyle.DashDotLine)),
                  ("-3s", lim.limit(3)[0], pg.mkPen(LIMIT_3S_COLOUR, width=1.3, style=Qt.PenStyle.DashDotLine)))
        for name, value, pen in styles:
            label = {"mean": "mean", "+2s": "+2 s", "-2s": "−2 s", "+3s": "+3 s", "-3s": "−3 s"}[name]
            line = pg.InfiniteLine(pos=value, angle=0, pen=pen, label=label,
                                   labelOpts={"position": 0.01, "color": "#333333", "anchors": [(0, 1), (0, 1)]})
            plot.addItem(line)
            lines[name] = line
        if legend is not None:
            for text, name in (("mean of the baseline", "mean"), ("mean ± 2 s", "+2s"), ("mean ± 3 s", "+3s")):
                legend.addItem(pg.PlotDataItem([0], [0], pen=lines[name].pen), text)
    plot.plot(x, y, pen=pg.mkPen("#9a9a9a", width=1))
    accepted = np.array([p.accepted for p in h.points])
    item = plot.plot(x[accepted], y[accepted], pen=None, symbol=palette.SYMBOL_INCLUDED, symbolSize=8,
                     symbolBrush=palette.INCLUDED, symbolPen=pg.mkPen("w", width=0.8))
    if legend is not None and accepted.any():
        legend.addItem(item, "run accepted")
    if (~accepted).any():
        rejected = plot.plot(x[~accepted], y[~accepted], pen=None, symbol=palette.SYMBOL_EXCLUDED, symbolSize=9,
                             symbolBrush=None, symbolPen=pg.mkPen(palette.EXCLUDED, width=2))
        if legend is not None:
            legend.addItem(rejected, "run not accepted")
    flagged = [i for i in range(n) if h.breaks_at(i)]
    labels: list[tuple[int, str, pg.TextItem]] = []
    if flagged:
        stars = plot.plot(x[flagged], y[flagged], pen=None, symbol="star", symbolSize=14,
                          symbolBrush=palette.FLAGGED, symbolPen=None)
        if legend is not None:
            legend.addItem(stars, "breaks a rule (labelled)")
        font = QFont()
        font.setPointSize(8)
        for i in flagged:
            # one column per run: the label reads upward along its point's run, on the far side of the mean,
            # so that the labels of neighbouring runs never cover each other
            rules = [b.rule for b in h.breaks_at(i)]
            outward_up = h.trend is None or h.trend.z[i] >= 0
            gap = " " * 5  # clear of the point's marker (and of today's ring)
            label = pg.TextItem(gap + "  ".join(rules) if outward_up else "  ".join(rules) + gap, color=palette.FLAGGED,
                                angle=90, anchor=(0.0, 0.5) if outward_up else (1.0, 0.5))
            label.setFont(font)
            label.setPos(float(x[i]), float(y[i]))
            plot.addItem(label)
            labels.append((i, ", ".join(rules), label))
    marker = None
    if h.today is not None:
        i = h.today
        marker = plot.plot([x[i]], [y[i]], pen=None, symbol="d", symbolSize=20, symbolBrush=None,
                           symbolPen=pg.mkPen(TODAY_COLOUR, width=2.5))
        if legend is not None:
            legend.addItem(marker, f"{today_label}'s run" if today_label == "today" else today_label)
        name = pg.TextItem(today_label, color=TODAY_COLOUR, anchor=(-0.25, 0.5))
        name.setPos(float(x[i]), float(y[i]))
        plot.addItem(name)
    low = [float(y.min())] + ([lines["-3s"].value()] if "-3s" in lines else [])
    high = [float(y.max())] + ([lines["+3s"].value()] if "+3s" in lines else [])
    span = (max(high) - min(low)) or abs(max(high)) or 1.0
    # room beyond the outermost points for the longest rule label, worked out in pixels when the chart's
    # height is known (m = L·(span + other margin)/(H − L) for a label L pixels long on a chart H pixels high)
    longest = max((QFontMetrics(label.textItem.font()).horizontalAdvance(label.toPlainText()) + 24  # text margins
                   for _, _, label in labels), default=0)
    below = any(label.anchor.x() > 0.5 for _, _, label in labels)
    above = any(label.anchor.x() <= 0.5 for _, _, label in labels)
    plain = 0.08 * span
    if height_px > 3 * longest > 0:
        sides = int(below) + int(above)
        margin = longest * (span + (2 - sides) * plain) / (height_px - sides * longest) + 0.02 * span
    else:
        margin = 0.45 * span
    plot.setYRange(min(low) - (margin if below else plain), max(high) + (margin if above else plain), padding=0)
    plot.setXRange(0.5, n + 0.5 + max(1.5, 0.1 * n), padding=0)
    if view is not None:
        view.rule_labels, view.limit_lines, view.today_marker = labels, lines, marker


def _escape(text: str) -> str:
    return text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")


def open_history(main_window) -> HistoryWindow:  # type: ignore[no-untyped-def]
    """Analysis → Calibration history: the History view with the open run as today's run."""
    session = main_window.session
    result = session.result if session.result is not None and session.result.run is session.run else None
    if result is None:
        from ..core.run_analysis import analyse_run

        result = analyse_run(session.run)
    window = HistoryWindow(main_window.settings, today=result, analyte=main_window.current_analyte(),
                           parent=main_window)
    window.show()
    return window


def run_history_app(location: str | None, *, analyte: str | None = None, quantity: str = "slope",
                    run_path: Path | None = None) -> int:
    """``curvewright archive show``: the History view on its own, with the run of ``run_path`` as today's
    run, or else the latest run filed (of ``analyte`` when given) marked as the latest."""
    import sys

    from ..core.run_analysis import analyse_run
    from .qt_runtime import ensure_application

    app = ensure_application(offscreen_if_headless=False)
    try:
        if run_path is not None:
            from ..io.run_document import open_run

            today, label = analyse_run(open_run(run_path).run), "today"
        else:
            today, label = latest_run(location, analyte), "latest run"
    except CurvewrightError as exc:
        print(f"curvewright: {exc}", file=sys.stderr)
        return 2
    window = HistoryWindow(QSettings("Curvewright", "Curvewright"), location=location, today=today, analyte=analyte,
                           quantity=quantity, today_label=label)
    window.file_button.setVisible(False)
    window.show()
    return app.exec()


def latest_run(location: str | None, analyte: str | None = None) -> RunResult | None:
    """The latest run filed in the archive (with ``analyte`` when given), analysed; None when there is none."""
    from ..core.run_analysis import analyse_run

    with open_archive(location) as archive:
        entries = archive.entries(analyte)
        run = archive.run(entries[-1].key) if entries else None
    return analyse_run(run) if run is not None else None
