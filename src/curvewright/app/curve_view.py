"""The curve view: the calibration with its bands and the unknowns, and below it the relative errors
(or residuals) of the standards with the acceptance limits. Hovering a point shows its values."""

from __future__ import annotations

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import QPointF, Qt, Signal
from PySide6.QtWidgets import QCheckBox, QComboBox, QHBoxLayout, QLabel, QToolTip, QVBoxLayout, QWidget

from . import figures

TYPE_CHECKING = False
if TYPE_CHECKING:
    from ..core.run_analysis import AnalyteResult


def _reset(plot: pg.PlotItem, legend: pg.LegendItem | None = None) -> None:
    plot.clear()
    if legend is not None:
        legend.clear()
    for side in ("bottom", "left"):
        plot.getAxis(side).setTicks(None)


class CurveView(QWidget):
    """The curve above, relative errors or residuals below."""

    options_changed = Signal()

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.analyte: AnalyteResult | None = None
        self.level = 0.95
        self.graphics = pg.GraphicsLayoutWidget()
        self.graphics.setBackground("w")
        self.curve_plot = self.graphics.addPlot(row=0, col=0)
        self.lower_plot = self.graphics.addPlot(row=1, col=0)
        # the legends sit in a column of their own, beside the data, never over it
        self.curve_legend = figures.new_legend()
        self.lower_legend = figures.new_legend()
        figures.legend_beside(self.graphics.ci, self.curve_legend, row=0)
        figures.legend_beside(self.graphics.ci, self.lower_legend, row=1)
        self.graphics.ci.layout.setRowStretchFactor(0, 3)
        self.graphics.ci.layout.setRowStretchFactor(1, 2)
        self.confidence = QCheckBox("&Confidence band")
        self.prediction = QCheckBox("&Prediction band")
        self.log_axis = QCheckBox("&Log concentration axis")
        for box in (self.confidence, self.prediction):
            box.setChecked(True)
        self.lower_kind = QComboBox()
        self.lower_kind.addItems(["Relative error (%) with acceptance limits", "Residuals (response units)"])
        self.lower_kind.setAccessibleName("Lower plot")
        self.empty_note = QLabel("")
        self.curve_words = QLabel("")
        self.curve_words.setWordWrap(True)
        self.curve_words.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        self.curve_words.setAccessibleName("The fitted curve: equation and parameters")
        controls = QHBoxLayout()
        for w in (self.confidence, self.prediction, self.log_axis, QLabel("Below:"), self.lower_kind):
            controls.addWidget(w)
        controls.addStretch(1)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.addLayout(controls)
        layout.addWidget(self.empty_note)
        layout.addWidget(self.curve_words)
        layout.addWidget(self.graphics, 1)
        for box in (self.confidence, self.prediction, self.log_axis):
            box.toggled.connect(self.redraw)
        self.lower_kind.currentIndexChanged.connect(self.redraw)
        self._hover_points: list[tuple[float, float, str]] = []
        self._proxy = pg.SignalProxy(self.graphics.scene().sigMouseMoved, rateLimit=30, slot=self._on_mouse)

    def show_analyte(self, analyte: AnalyteResult | None, level: float) -> None:
        self.analyte = analyte
        self.level = level
        if analyte is not None and not self.log_axis.isChecked() and figures.wide_range(analyte):
            self.log_axis.blockSignals(True)
            self.log_axis.setChecked(True)
            self.log_axis.blockSignals(False)
        self.redraw()

    def redraw(self) -> None:
        _reset(self.curve_plot, self.curve_legend)
        _reset(self.lower_plot, self.lower_legend)
        a = self.analyte
        if a is None or a.calibration is None:
            self.empty_note.setText("No curve: " + (a.error if a is not None and a.error else "no standards yet."))
            self.curve_words.setText("")
            self._hover_points = []
            self._fit_legends()
            return
        self.empty_note.setText("")
        from ..io.model_outputs import curve_words  # the engine loads on the analysis thread, not with the window

        self.curve_words.setText(curve_words(a.calibration, a.analyte.uses_internal_standard))
        log_x = self.log_axis.isChecked()
        figures.draw_curve(self.curve_plot, a, legend=self.curve_legend, level=self.level,
                           show_confidence=self.confidence.isChecked(), show_prediction=self.prediction.isChecked(),
                           log_x=log_x)
        figures.draw_anchor_points(self.curve_plot, a, legend=self.curve_legend, log_x=log_x)
        if self.lower_kind.currentIndex() == 0:
            figures.draw_relative_errors(self.lower_plot, a, legend=self.lower_legend, log_x=log_x)
        else:
            figures.draw_residuals(self.lower_plot, a, legend=self.lower_legend, log_x=log_x)
        self._fit_legends()
        self._hover_points = self._points(a, log_x)
        self.curve_plot.getViewBox().autoRange(padding=0.04)
        self.lower_plot.getViewBox().autoRange(padding=0.08)
        self.options_changed.emit()

    def _fit_legends(self) -> None:
        # both legends take the wider one's width, so that the two plots keep one concentration axis
        legends = (self.curve_legend, self.lower_legend)
        width = max(figures.fit_legend(self.graphics.ci, legend) for legend in legends)
        for legend in legends:
            legend.setFixedWidth(width)

    def _points(self, a: AnalyteResult, log_x: bool) -> list[tuple[float, float, str]]:
        from ..core.run_analysis import response_value

        cal = a.calibration
        log_y = log_x and bool(np.all(cal.response > 0))

        def tx(v: float) -> float:
            return float(np.log10(v)) if log_x else float(v)

        def ty(v: float) -> float:
            return float(np.log10(v)) if log_y else float(v)

        unit = a.analyte.concentration_unit
        out = []
        for i, s in enumerate(a.fitted_standards):
            if log_x and s.concentration <= 0:
                continue
            out.append((tx(s.concentration), ty(cal.response[i]),
                        f"standard {s.id}{' (anchor point: fitted, not judged)' if s.anchor else ''}: nominal {s.concentration:g} {unit}, response {cal.response[i]:.6g}, "
                        f"back-calculated {cal.back_calculated[i]:.5g} ({cal.relative_error[i]:+.2f} %)"))
        for s in a.excluded_standards:
            used, _ = response_value(s.response, s.internal_standard_response, a.analyte.uses_internal_standard)
            if used is not None and (s.concentration > 0 or not log_x) and (used > 0 or not log_y):
                out.append((tx(s.concentration), ty(used), f"standard {s.id} (excluded: {s.exclusion_reason}): "
                                                           f"nominal {s.concentration:g} {unit}, response {used:.6g}"))
        for s in a.samples:
            if s.estimate is None or (log_x and s.estimate <= 0) or (log_y and (s.mean_response or 0) <= 0):
                continue
            out.append((tx(s.estimate), ty(s.mean_response), f"{s.kind.words} {s.sample_id}: {s.estimate:.5g} {unit} "
                        f"({s.lower:.5g} to {s.upper:.5g}); {s.flag_words}"))
        return out

    def _on_mouse(self, event) -> None:  # type: ignore[no-untyped-def]
        position = event[0]
        box = self.curve_plot.getViewBox()
        if not self.curve_plot.sceneBoundingRect().contains(position) or not self._hover_points:
            return
        best, best_distance = None, 12.0
        for x, y, text in self._hover_points:
            scene = box.mapViewToScene(QPointF(x, y))
            distance = ((scene.x() - position.x()) ** 2 + (scene.y() - position.y()) ** 2) ** 0.5
            if distance < best_distance:
                best, best_distance = text, distance
        if best:
            view_pos = self.graphics.mapFromScene(position)
            QToolTip.showText(self.graphics.mapToGlobal(view_pos), best, self.graphics)

    def hover_text_at(self, x: float, y: float) -> str | None:
        """The text hovering shows for the point drawn at (x, y) in plot coordinates (for tests and keyboard users)."""
        for px, py, text in self._hover_points:
            if abs(px - x) <= 1e-9 * max(1.0, abs(x)) and abs(py - y) <= 1e-9 * max(1.0, abs(y)):
                return text
        return None


class InfluenceView(QWidget):
    """Leverage against the externally studentized residual, the same measures as the standards table."""

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.widget = pg.GraphicsLayoutWidget()
        self.widget.setBackground("w")
        self.plot = self.widget.addPlot(row=0, col=0)
        self.legend = figures.new_legend()
        figures.legend_beside(self.widget.ci, self.legend, row=0)
        self.note = QLabel("Leverage against the externally studentized residual (as in the standards table and its "
                           "flags), with the limits the flags use; stars mark flagged standards.")
        self.note.setWordWrap(True)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.addWidget(self.note)
        layout.addWidget(self.widget, 1)

    def show_analyte(self, analyte: AnalyteResult | None) -> None:
        _reset(self.plot, self.legend)
        if analyte is not None and analyte.calibration is not None:
            figures.draw_influence(self.plot, analyte, legend=self.legend)
        figures.fit_legend(self.widget.ci, self.legend)
