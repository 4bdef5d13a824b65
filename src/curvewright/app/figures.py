"""The three views of a calibration, drawn with pyqtgraph from the engine's results.

* the curve: standards (in the fit: filled circles; excluded: open squares), the fitted curve with
  its confidence band (shaded) and prediction band (dashed), unknowns and QC samples placed on the
  curve with horizontal bars for their concentration intervals, the calibrated range (outside it
  shaded) and the LOQ (dotted line);
* relative error of each standard against concentration, with the acceptance limits;
* influence: leverage against internally studentized residual with Cook's distance contours.

Everything drawn is read from :class:`~curvewright.core.run_analysis.AnalyteResult` and
:func:`~curvewright.core.curve_trace.curve_trace`; nothing here computes a statistic.
"""

from __future__ import annotations

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import Qt
from PySide6.QtGui import QColor, QFont, QImage

from ..core.curve_trace import curve_trace
from ..core.influence import cooks_contour
from ..core.run import SampleKind
from ..core.run_analysis import AnalyteResult
from ..core.run_analysis import response_value
from . import palette
from .qt_runtime import ensure_application


def styled_plot(plot: pg.PlotItem, x_label: str, y_label: str, font_size: int = 10) -> pg.PlotItem:
    font = QFont()
    font.setPointSize(font_size)
    for side in ("left", "bottom"):
        axis = plot.getAxis(side)
        axis.setPen(pg.mkPen("#333333"))
        axis.setTextPen(pg.mkPen("#222222"))
        axis.setTickFont(font)
        axis.label.setFont(font)
    plot.setLabel("bottom", x_label)
    plot.setLabel("left", y_label)
    plot.showGrid(x=True, y=True, alpha=0.15)
    return plot


def wide_range(a: AnalyteResult) -> bool:
    """True when the positive standards span two decades or more: a log concentration axis reads better."""
    cal = a.calibration
    if cal is None:
        return False
    positive = cal.concentration[cal.concentration > 0]
    return positive.size > 1 and positive.max() / positive.min() >= 100


def _axis_transform(plot: pg.PlotItem, log: bool, side: str = "bottom", span: tuple[float, float] | None = None):  # type: ignore[no-untyped-def]
    """Values as drawn on one axis: log10 on a log axis, labelled at powers of ten."""
    if not log:
        return lambda v: np.asarray(v, dtype=float)
    if span is not None:
        _decade_ticks(plot.getAxis(side), *span)
    with np.errstate(divide="ignore", invalid="ignore"):
        return lambda v: np.log10(np.asarray(v, dtype=float))


def _decade_ticks(axis: pg.AxisItem, low: float, high: float) -> None:
    """Major ticks labelled at each power of ten, unlabelled minor ticks at 2…9 times it."""
    first, last = int(np.floor(np.log10(low))) - 1, int(np.ceil(np.log10(high))) + 1
    major = [(float(k), f"{10.0 ** k:g}") for k in range(first, last + 1)]
    minor = [(float(np.log10(m * 10.0**k)), "") for k in range(first, last) for m in range(2, 10)]
    axis.setTicks([major, minor])


def draw_curve(plot: pg.PlotItem, a: AnalyteResult, *, level: float = 0.95, show_confidence: bool = True,
               show_prediction: bool = True, log_x: bool = False, font_size: int = 10) -> None:
    """Fill ``plot`` with the calibration view of one analyte (zero concentrations are left off a log axis)."""
    cal = a.calibration
    unit = a.analyte.concentration_unit
    styled_plot(plot, f"Concentration ({unit})" if unit else "Concentration",
                f"Response ({a.analyte.response_unit})" if a.analyte.response_unit else "Response", font_size)
    # bottom right: a rising calibration leaves that corner empty
    legend = plot.addLegend(offset=(-10, -10), labelTextColor="#222222", brush=pg.mkBrush(255, 255, 255, 220),
                            labelTextSize=f"{font_size - 1}pt")
    if cal is None:
        return
    low, high = cal.calibrated_range
    log_y = log_x and bool(np.all(cal.response > 0))
    if log_x:
        low = float(cal.concentration[cal.concentration > 0].min())
    tx = _axis_transform(plot, log_x, "bottom", (low, high))
    ty = _axis_transform(plot, log_y, "left", (float(cal.response.min()), float(cal.response.max())) if log_y else None)
    if log_y:
        plot.setLabel("left", plot.getAxis("left").labelText + " (log scale)")
    if log_x:
        plot.setLabel("bottom", plot.getAxis("bottom").labelText + " (log scale)")
    trace = curve_trace(cal, level=level, log_spacing=log_x)
    x = tx(trace.concentration)
    low, high = float(tx(low)), float(tx(high))
    if show_confidence:
        upper = pg.PlotDataItem(*_finite(x, ty(trace.confidence_upper)), pen=None)
        lower = pg.PlotDataItem(*_finite(x, ty(trace.confidence_lower)), pen=None)
        plot.addItem(pg.FillBetweenItem(upper, lower, brush=pg.mkBrush(*palette.CONFIDENCE_FILL)))
        legend.addItem(pg.BarGraphItem(x=[0], height=[0], width=0, brush=pg.mkBrush(*palette.CONFIDENCE_FILL)),
                       f"{level:.0%} confidence band")
    if show_prediction:
        dashed = pg.mkPen(palette.PREDICTION, width=1.2, style=Qt.PenStyle.DashLine)
        plot.plot(*_finite(x, ty(trace.prediction_upper)), pen=dashed, name=f"{level:.0%} prediction band")
        plot.plot(*_finite(x, ty(trace.prediction_lower)), pen=dashed)
    plot.plot(*_finite(x, ty(trace.response)), pen=pg.mkPen(palette.CURVE, width=2), name="fitted curve")
    for region in ((x.min(), low), (high, x.max())):
        if region[1] > region[0]:
            plot.addItem(pg.LinearRegionItem(values=region, movable=False, brush=pg.mkBrush(*palette.RANGE_SHADE),
                                             pen=pg.mkPen(None)))
    if a.limits is not None and a.limits.loq is not None and a.limits.loq > 0 and tx(a.limits.loq) > x.min():
        line = pg.InfiniteLine(pos=float(tx(a.limits.loq)), angle=90, pen=pg.mkPen(palette.LIMIT, style=Qt.PenStyle.DotLine, width=1.5),
                               label="LOQ", labelOpts={"color": palette.LIMIT, "position": 0.92})
        plot.addItem(line)
    shown = cal.concentration > 0 if log_x else np.ones(cal.n_standards, dtype=bool)
    plot.plot(tx(cal.concentration[shown]), ty(cal.response[shown]), pen=None, symbol=palette.SYMBOL_INCLUDED, symbolSize=8,
              symbolBrush=palette.INCLUDED, symbolPen=pg.mkPen("w", width=0.8), name="standard in the fit")
    ex_x, ex_y = [], []
    for s in a.excluded_standards:
        used, _ = response_value(s.response, s.internal_standard_response, a.analyte.uses_internal_standard)
        if used is not None and (s.concentration > 0 or not log_x) and (used > 0 or not log_y):
            ex_x.append(float(tx(s.concentration)))
            ex_y.append(float(ty(used)))
    if ex_x:
        plot.plot(ex_x, ex_y, pen=None, symbol=palette.SYMBOL_EXCLUDED, symbolSize=10, symbolBrush=None,
                  symbolPen=pg.mkPen(palette.EXCLUDED, width=2), name="standard excluded")
        plot.plot(ex_x, ex_y, pen=None, symbol="x", symbolSize=7, symbolBrush=palette.EXCLUDED, symbolPen=None)
    for kind, colour, symbol, label in ((SampleKind.UNKNOWN, palette.UNKNOWN, palette.SYMBOL_UNKNOWN, "unknown"),
                                        (SampleKind.QC, palette.QC, palette.SYMBOL_QC, "QC sample")):
        chosen = [s for s in a.samples if s.kind is kind and s.estimate is not None
                  and (s.estimate > 0 or not log_x) and (s.mean_response > 0 or not log_y)]
        if not chosen:
            continue
        sy = ty([s.mean_response for s in chosen])
        lo_raw = [s.lower if s.lower is not None and np.isfinite(s.lower) and (s.lower > 0 or not log_x) else s.estimate
                  for s in chosen]
        hi_raw = [s.upper if s.upper is not None and np.isfinite(s.upper) else s.estimate for s in chosen]
        sx, lo, hi = tx([s.estimate for s in chosen]), tx(lo_raw), tx(hi_raw)
        plot.addItem(pg.ErrorBarItem(x=sx, y=sy, left=sx - lo, right=hi - sx, beam=0, pen=pg.mkPen(colour, width=1.5)))
        plot.plot(sx, sy, pen=None, symbol=symbol, symbolSize=9, symbolBrush=colour, symbolPen=pg.mkPen("w", width=0.6),
                  name=f"{label} with interval")


def _finite(x: np.ndarray, y: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    keep = np.isfinite(x) & np.isfinite(y)
    return x[keep], y[keep]


def draw_relative_errors(plot: pg.PlotItem, a: AnalyteResult, *, log_x: bool = False, font_size: int = 10) -> None:
    unit = a.analyte.concentration_unit
    styled_plot(plot, f"Concentration ({unit})" if unit else "Concentration", "Relative error (%)", font_size)
    cal, verdict = a.calibration, a.verdict
    if cal is None or verdict is None:
        return
    positive = cal.concentration[cal.concentration > 0]
    span = (float(positive.min()), float(positive.max())) if log_x and positive.size else None
    tx = _axis_transform(plot, log_x, "bottom", span)
    if log_x:
        plot.setLabel("bottom", plot.getAxis("bottom").labelText + " (log scale)")
    with np.errstate(divide="ignore"):
        x = tx(cal.concentration)
    # acceptance limits as steps: each judged level's tolerance held from midway to its neighbours
    judged_levels = np.unique(x[verdict.judged])
    if judged_levels.size:
        tol_at = np.array([verdict.tolerance_percent[x == lv][0] for lv in judged_levels])
        mids = (judged_levels[1:] + judged_levels[:-1]) / 2
        spread = (judged_levels[-1] - judged_levels[0]) or abs(judged_levels[0]) or 1.0
        edges = np.concatenate([[judged_levels[0] - 0.03 * spread], mids, [judged_levels[-1] + 0.03 * spread]])
        limit_pen = pg.mkPen(palette.LIMIT, width=1.2, style=Qt.PenStyle.DashLine)
        plot.plot(edges, tol_at, stepMode="center", pen=limit_pen, name="acceptance limit")
        plot.plot(edges, -tol_at, stepMode="center", pen=limit_pen)
    plot.addItem(pg.InfiniteLine(pos=0, angle=0, pen=pg.mkPen("#777777", width=1)))
    judged = verdict.judged & np.isfinite(cal.relative_error)
    passing = judged & verdict.passing
    failing = judged & ~verdict.passing
    plot.plot(x[passing], cal.relative_error[passing], pen=None, symbol=palette.SYMBOL_INCLUDED, symbolSize=8,
              symbolBrush=palette.INCLUDED, symbolPen=pg.mkPen("w", width=0.8))
    if failing.any():
        plot.plot(x[failing], cal.relative_error[failing], pen=None, symbol="star", symbolSize=12,
                  symbolBrush=palette.FLAGGED, symbolPen=None)


def draw_residuals(plot: pg.PlotItem, a: AnalyteResult, *, log_x: bool = False, font_size: int = 10) -> None:
    """Residuals y − ŷ of the standards in the fit, in response units, against concentration."""
    unit = a.analyte.concentration_unit
    styled_plot(plot, f"Concentration ({unit})" if unit else "Concentration",
                f"Residual ({a.analyte.response_unit})" if a.analyte.response_unit else "Residual", font_size)
    cal = a.calibration
    if cal is None:
        return
    positive = cal.concentration[cal.concentration > 0]
    span = (float(positive.min()), float(positive.max())) if log_x and positive.size else None
    tx = _axis_transform(plot, log_x, "bottom", span)
    keep = cal.concentration > 0 if log_x else np.ones(cal.n_standards, dtype=bool)
    plot.addItem(pg.InfiniteLine(pos=0, angle=0, pen=pg.mkPen("#777777", width=1)))
    plot.plot(tx(cal.concentration[keep]), cal.residuals[keep], pen=None, symbol=palette.SYMBOL_INCLUDED, symbolSize=8,
              symbolBrush=palette.INCLUDED, symbolPen=pg.mkPen("w", width=0.8))


def draw_influence(plot: pg.PlotItem, a: AnalyteResult, *, font_size: int = 10) -> None:
    styled_plot(plot, "Leverage", "Studentized residual (internal)", font_size)
    cal = a.calibration
    if cal is None:
        return
    h = cal.leverage
    r = cal.influence.internal_studentized
    n, p = cal.n_standards, cal.n_parameters
    grid = np.linspace(max(1e-3, 0.5 * h.min()), min(0.999, max(h.max() * 1.1, 2.5 * p / n)), 200)
    for distance, style in ((4.0 / n, Qt.PenStyle.DashLine), (1.0, Qt.PenStyle.SolidLine)):
        bound = cooks_contour(distance, p, grid)
        pen = pg.mkPen(palette.LIMIT, width=1.2, style=style)
        plot.plot(grid, bound, pen=pen)
        plot.plot(grid, -bound, pen=pen)
        text = pg.TextItem(f"Cook's D = {distance:.2g}", color=palette.LIMIT, anchor=(0, 1))
        at = len(grid) // 6
        text.setPos(float(grid[at]), float(bound[at]))
        plot.addItem(text)
    plot.addItem(pg.InfiniteLine(pos=2.0 * p / n, angle=90, pen=pg.mkPen("#888888", style=Qt.PenStyle.DotLine),
                                 label="2p/n", labelOpts={"color": "#555555", "position": 0.95}))
    finite = np.isfinite(r)
    flagged = np.array([bool(f) for f in cal.influence_flags])
    plain = finite & ~flagged
    plot.plot(h[plain], r[plain], pen=None, symbol=palette.SYMBOL_INCLUDED, symbolSize=8,
              symbolBrush=palette.INCLUDED, symbolPen=pg.mkPen("w", width=0.8))
    marked = flagged & finite
    if marked.any():
        plot.plot(h[marked], r[marked], pen=None, symbol="star", symbolSize=13, symbolBrush=palette.FLAGGED, symbolPen=None)
    ids = [s.id for s in a.fitted_standards]
    for i in np.flatnonzero(flagged):
        label = pg.TextItem(ids[i] if i < len(ids) else str(i + 1), color=palette.FLAGGED, anchor=(-0.1, 1.1))
        label.setPos(float(h[i]), float(r[i]) if np.isfinite(r[i]) else 0.0)
        plot.addItem(label)
    limit = float(np.nanmax(np.abs(r[finite]))) if finite.any() else 1.0
    plot.setYRange(-max(3.2, 1.15 * limit), max(3.2, 1.15 * limit))


def render(draw, a: AnalyteResult, width: int = 1400, height: int = 820, **options) -> QImage:  # type: ignore[no-untyped-def]
    """Draw one view off screen into an image (for the report and for exported plot images)."""
    ensure_application()
    widget = pg.PlotWidget(background="w")
    widget.resize(width, height)
    draw(widget.getPlotItem(), a, **options)
    # lay the plot out as if shown, so that the axes size themselves to their tick labels
    widget.show()
    from PySide6.QtWidgets import QApplication

    QApplication.processEvents()
    widget.getPlotItem().getViewBox().autoRange(padding=0.04)
    QApplication.processEvents()
    image = QImage(width, height, QImage.Format.Format_ARGB32)
    image.fill(QColor("white"))
    from PySide6.QtGui import QPainter

    painter = QPainter(image)
    painter.setRenderHint(QPainter.RenderHint.Antialiasing)
    widget.render(painter)
    painter.end()
    widget.deleteLater()
    return image
