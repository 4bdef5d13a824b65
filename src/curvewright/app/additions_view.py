"""The standard-additions view: one sample's spiked portions, the fitted line extrapolated to zero response,
and the extrapolated concentration with its interval on the concentration axis.

Everything drawn is read from :class:`~curvewright.core.addition_series.AdditionSeriesResult`; nothing
here computes a statistic. Concentrations on the axis are as measured (before the dilution factor).
"""

from __future__ import annotations

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import Qt
from PySide6.QtWidgets import QComboBox, QHBoxLayout, QLabel, QVBoxLayout, QWidget

from ..core.level_text import percent_label
from . import figures, palette
from ..core.notation import entered, figures as sig_figures

TYPE_CHECKING = False
if TYPE_CHECKING:  # the engine loads on the analysis thread, after the window is painted
    from ..core.addition_series import AdditionSeriesResult
    from ..core.run_analysis import AnalyteResult


def draw_additions(plot: pg.PlotItem, a: AnalyteResult, series: AdditionSeriesResult, *,
                   legend: pg.LegendItem | None = None, font_size: int = 10) -> None:
    """Fill ``plot`` with one standard-addition series: the mean responses, the line through them drawn
    back to zero response (dashed beyond the first addition), and the x-intercept with its interval."""
    unit = a.analyte.concentration_unit
    figures.styled_plot(plot, f"Concentration added ({unit})" if unit else "Concentration added",
                        f"Response ({a.analyte.response_unit})" if a.analyte.response_unit else "Response", font_size)
    added = np.asarray(series.added)
    means = np.asarray(series.mean_response)
    r = series.result
    k = font_size / 10  # markers and lines grow with the lettering (a printed figure is drawn larger)
    if r is not None:
        x_low = -r.concentration
        lower, upper = -r.upper, -r.lower
        # the interval of the extrapolated concentration, shaded across the plot and barred on the zero line
        plot.addItem(pg.LinearRegionItem(values=(lower, upper), movable=False, brush=pg.mkBrush(42, 127, 98, 40),
                                         pen=pg.mkPen(palette.UNKNOWN, width=k, style=Qt.PenStyle.DotLine)))
        top = float(added.max())
        solid = plot.plot([float(added.min()), top], list(r.line([float(added.min()), top])),
                          pen=pg.mkPen(palette.CURVE, width=2 * k), name="line through the additions")
        _name(legend, solid, "line through the additions")
        dashed = plot.plot([x_low, float(added.min())], list(r.line([x_low, float(added.min())])),
                           pen=pg.mkPen(palette.CURVE, width=1.5 * k, style=Qt.PenStyle.DashLine), name="extrapolated")
        _name(legend, dashed, "extrapolated to zero response")
        plot.addItem(pg.InfiniteLine(pos=0.0, angle=0, pen=pg.mkPen("#888888", width=k)))
        bar = pg.ErrorBarItem(x=np.array([x_low]), y=np.array([0.0]), left=np.array([x_low - lower]),
                              right=np.array([upper - x_low]), beam=0.04 * float(np.ptp(means) or 1.0),
                              pen=pg.mkPen(palette.UNKNOWN, width=2 * k))
        plot.addItem(bar)
        _name(legend, plot.plot([x_low], [0.0], pen=None, symbol=palette.SYMBOL_UNKNOWN, symbolSize=10 * k,
                                symbolBrush=palette.UNKNOWN, symbolPen=pg.mkPen("w", width=0.6 * k),
                                name="x-intercept with interval"),
              f"x-intercept −{sig_figures(r.concentration, 4)} with {percent_label(r.level)} interval (shaded)")
    _name(legend, plot.plot(added, means, pen=None, symbol=palette.SYMBOL_INCLUDED, symbolSize=8 * k,
                            symbolBrush=palette.INCLUDED, symbolPen=pg.mkPen("w", width=0.8 * k), name="mean response"),
          "mean response of each addition")


def _name(legend: pg.LegendItem | None, item, text: str) -> None:  # type: ignore[no-untyped-def]
    if legend is not None:
        legend.addItem(item, text)


def series_words(a: AnalyteResult, series: AdditionSeriesResult) -> str:
    """The series' result in words, under the plot."""
    unit = a.analyte.concentration_unit.strip()
    in_unit = f" {unit}" if unit else ""
    r = series.result
    if r is None:
        return f"{series.sample_id}: {series.note}"
    words = (f"{series.sample_id}: {r.equation(6)}; concentration a/b = {sig_figures(r.concentration, 5)}{in_unit} "
             f"(standard error {sig_figures(r.standard_error, 3)}; {percent_label(r.level)} interval {sig_figures(r.lower, 5)} to {sig_figures(r.upper, 5)})")
    if series.dilution_factor != 1:
        words += (f"; × dilution factor {entered(series.dilution_factor)} = {sig_figures(series.reported, 5)}{in_unit} "
                  f"({sig_figures(series.reported_lower, 5)} to {sig_figures(series.reported_upper, 5)})")
    extra = [w for w in r.warnings[1:]] + ([series.note] if series.note else [])
    from ..core.standard_additions import MATRIX_WARNING

    return words + "".join(f". Note: {w}" for w in extra) + f". Warning: {MATRIX_WARNING}."


class AdditionsView(QWidget):
    """Choose a sample measured by standard additions and see its extrapolated line."""

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.analyte: AnalyteResult | None = None
        self.sample_box = QComboBox()
        self.sample_box.setAccessibleName("Sample measured by standard additions")
        self.sample_box.currentIndexChanged.connect(self._draw)
        self.widget = pg.GraphicsLayoutWidget()
        self.widget.setBackground("w")
        self.plot = self.widget.addPlot(row=0, col=0)
        self.legend = figures.new_legend()
        figures.legend_beside(self.widget.ci, self.legend, row=0)
        self.note = QLabel("")
        self.note.setWordWrap(True)
        label = QLabel("Sample measured &by additions:")
        label.setBuddy(self.sample_box)
        top = QHBoxLayout()
        top.addWidget(label)
        top.addWidget(self.sample_box, 1)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.addLayout(top)
        layout.addWidget(self.widget, 1)
        layout.addWidget(self.note)

    def show_analyte(self, analyte: AnalyteResult | None) -> None:
        self.analyte = analyte
        chosen = self.sample_box.currentText()
        self.sample_box.blockSignals(True)
        self.sample_box.clear()
        for s in (analyte.additions if analyte is not None else ()):
            self.sample_box.addItem(s.sample_id)
        index = self.sample_box.findText(chosen)
        self.sample_box.setCurrentIndex(index if index >= 0 else 0)
        self.sample_box.blockSignals(False)
        self._draw()

    def current_series(self) -> AdditionSeriesResult | None:
        if self.analyte is None or not self.analyte.additions:
            return None
        index = max(self.sample_box.currentIndex(), 0)
        return self.analyte.additions[index]

    def _draw(self) -> None:
        self.plot.clear()
        self.legend.clear()
        series = self.current_series()
        if series is None or self.analyte is None:
            name = self.analyte.analyte.name if self.analyte is not None else "this analyte"
            self.note.setText(f"No sample of {name} was measured by standard additions.")
        else:
            draw_additions(self.plot, self.analyte, series, legend=self.legend)
            self.note.setText(series_words(self.analyte, series))
        figures.fit_legend(self.widget.ci, self.legend)
