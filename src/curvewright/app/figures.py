"""The three views of a calibration on screen, drawn with pyqtgraph from the engine's results (the printed
record draws the same with QPainter: :mod:`.record_figures`).

* the curve: standards (in the fit: filled circles; excluded: open squares), the fitted curve with
  its confidence band (shaded) and prediction band (dashed), unknowns and QC samples placed on the
  curve with horizontal bars for their concentration intervals, the calibrated range (outside it
  shaded) and the LOQ (dotted line);
* relative error of each standard against concentration, with the acceptance limits;
* influence: leverage against the externally studentized residual (the one the influence flags use),
  with the limits of the flags themselves.

Legends sit outside the data, in a column of their own beside each plot (:func:`legend_beside`).

Everything drawn is read from :class:`~curvewright.core.run_analysis.AnalyteResult` and
:func:`~curvewright.core.curve_trace.curve_trace`; nothing here computes a statistic.
"""

from __future__ import annotations

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import Qt
from PySide6.QtGui import QColor, QFont, QImage
from PySide6.QtWidgets import QWidget

from ..core.level_text import percent_label
from ..core.influence import HIGH_LEVERAGE, influence_boundary
from ..core.run import SampleKind
from . import palette
from .plotted import acceptance_steps, excluded_points, sample_points, shaded_ends, wide_range  # noqa: F401 (shared with the record)
from .plotted import finite as _finite
from ..core.notation import entered

TYPE_CHECKING = False
if TYPE_CHECKING:
    from ..core.run_analysis import AnalyteResult


def styled_plot(plot: pg.PlotItem, x_label: str, y_label: str, font_size: int = 10) -> pg.PlotItem:
    font = QFont()
    font.setPointSize(font_size)
    for side in ("left", "bottom"):
        axis = plot.getAxis(side)
        axis.setPen(pg.mkPen("#333333"))
        axis.setTextPen(pg.mkPen("#222222"))
        axis.setTickFont(font)
        axis.label.setFont(font)
        axis.enableAutoSIPrefix(False)  # a scaled axis ("×0.001") is easily misread on a concentration
    plot.setLabel("bottom", x_label)
    plot.setLabel("left", y_label)
    plot.showGrid(x=True, y=True, alpha=0.15)
    return plot


def _axis_transform(plot: pg.PlotItem, log: bool, side: str = "bottom", span: tuple[float, float] | None = None):  # type: ignore[no-untyped-def]
    """Values as drawn on one axis: log10 on a log axis, labelled at powers of ten."""
    if not log:
        return lambda v: np.asarray(v, dtype=float)
    if span is not None:
        _decade_ticks(plot.getAxis(side), *span)
    def log10(v):  # type: ignore[no-untyped-def]
        # values at or below zero (a band's lower edge near a blank) have no place on a log axis: NaN,
        # which the drawing leaves out
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.log10(np.asarray(v, dtype=float))

    return log10


def _decade_ticks(axis: pg.AxisItem, low: float, high: float) -> None:
    """Major ticks labelled at each power of ten, unlabelled minor ticks at 2…9 times it."""
    first, last = int(np.floor(np.log10(low))) - 1, int(np.ceil(np.log10(high))) + 1
    major = [(float(k), f"{entered(10.0 ** k)}") for k in range(first, last + 1)]
    minor = [(float(np.log10(m * 10.0**k)), "") for k in range(first, last) for m in range(2, 10)]
    axis.setTicks([major, minor])


def new_legend(font_size: int = 10) -> pg.LegendItem:
    """An empty legend, to be placed beside its plot with :func:`legend_beside`."""
    return pg.LegendItem(labelTextColor="#222222", brush=pg.mkBrush(255, 255, 255, 0), labelTextSize=f"{font_size - 1}pt",
                         verSpacing=-2)


def legend_beside(layout: pg.GraphicsLayout, legend: pg.LegendItem, row: int, col: int = 1) -> None:
    """Put ``legend`` in the layout cell (row, col), sized to its entries and aligned to the top left,
    so that it never covers a plotted point."""
    if legend.parentItem() is None:
        layout.addItem(legend, row=row, col=col)
    fit_legend(layout, legend)


def fit_legend(layout: pg.GraphicsLayout, legend: pg.LegendItem) -> float:
    """Size a legend placed in a layout cell to its entries (call after adding or clearing entries);
    returns the width it takes."""
    width = float(legend.layout.preferredWidth()) if legend.items else 0.0
    height = float(legend.layout.preferredHeight()) if legend.items else 0.0
    legend.setFixedWidth(width)
    legend.setFixedHeight(height)
    legend.setVisible(bool(legend.items))
    layout.layout.setAlignment(legend, Qt.AlignmentFlag.AlignTop | Qt.AlignmentFlag.AlignLeft)
    return width


def _name(legend: pg.LegendItem | None, item, text: str) -> None:  # type: ignore[no-untyped-def]
    if legend is not None:
        legend.addItem(item, text)


def draw_curve(plot: pg.PlotItem, a: AnalyteResult, *, legend: pg.LegendItem | None = None, level: float = 0.95,
               show_confidence: bool = True, show_prediction: bool = True, log_x: bool = False,
               font_size: int = 10) -> None:
    """Fill ``plot`` with the calibration view of one analyte (zero concentrations are left off a log axis);
    its entries go into ``legend``, which the caller places outside the plot."""
    from ..core.curve_trace import curve_trace  # the engine is loaded by the time a result is drawn

    cal = a.calibration
    unit = a.analyte.concentration_unit
    styled_plot(plot, f"Concentration ({unit})" if unit else "Concentration",
                f"Response ({a.analyte.response_unit})" if a.analyte.response_unit else "Response", font_size)
    if cal is None:
        return
    low, high = cal.calibrated_range
    log_y = log_x and bool(np.all(cal.response > 0))
    if log_x and low <= 0:  # a blank at the bottom of the range has no place on a log axis
        low = float(cal.concentration[cal.concentration > 0].min())
    tx = _axis_transform(plot, log_x, "bottom", (low, high))
    ty = _axis_transform(plot, log_y, "left", (float(cal.response.min()), float(cal.response.max())) if log_y else None)
    if log_x:
        plot.setLabel("bottom", plot.getAxis("bottom").labelText + " (log scale)")
    if log_y:
        plot.setLabel("left", plot.getAxis("left").labelText + " (log scale)")
    trace = curve_trace(cal, level=level, log_spacing=log_x)
    x = tx(trace.concentration)
    low, high = float(tx(low)), float(tx(high))
    if show_confidence:
        upper = pg.PlotDataItem(*_finite(x, ty(trace.confidence_upper)), pen=None)
        lower = pg.PlotDataItem(*_finite(x, ty(trace.confidence_lower)), pen=None)
        plot.addItem(pg.FillBetweenItem(upper, lower, brush=pg.mkBrush(*palette.CONFIDENCE_FILL)))
        _name(legend, pg.BarGraphItem(x=[0], height=[0], width=0, brush=pg.mkBrush(*palette.CONFIDENCE_FILL)),
              f"{percent_label(level)} confidence band")
    if show_prediction:
        dashed = pg.mkPen(palette.PREDICTION, width=1.2, style=Qt.PenStyle.DashLine)
        band = plot.plot(*_finite(x, ty(trace.prediction_upper)), pen=dashed, name=f"{percent_label(level)} prediction band")
        _name(legend, band, f"{percent_label(level)} prediction band")
        plot.plot(*_finite(x, ty(trace.prediction_lower)), pen=dashed)
    _name(legend, plot.plot(*_finite(x, ty(trace.response)), pen=pg.mkPen(palette.CURVE, width=2), name="fitted curve"),
          "fitted curve")
    low, high = shaded_ends(a, low, high, tx)
    for region in ((x.min(), low), (high, x.max())):
        if region[1] > region[0]:
            plot.addItem(pg.LinearRegionItem(values=region, movable=False, brush=pg.mkBrush(*palette.RANGE_SHADE),
                                             pen=pg.mkPen(None)))
    if a.limits is not None and a.limits.loq is not None and a.limits.loq > 0 and tx(a.limits.loq) > x.min():
        pen = pg.mkPen(palette.LIMIT, style=Qt.PenStyle.DotLine, width=1.5)
        plot.addItem(pg.InfiniteLine(pos=float(tx(a.limits.loq)), angle=90, pen=pen))
        _name(legend, pg.PlotDataItem([0], [0], pen=pen), "LOQ")
    shown = cal.concentration > 0 if log_x else np.ones(cal.n_standards, dtype=bool)
    _name(legend, plot.plot(tx(cal.concentration[shown]), ty(cal.response[shown]), pen=None, symbol=palette.SYMBOL_INCLUDED,
                            symbolSize=8, symbolBrush=palette.INCLUDED, symbolPen=pg.mkPen("w", width=0.8),
                            name="standard in the fit"), "standard in the fit")
    ex_x, ex_y = excluded_points(a, tx, ty, log_x, log_y)
    if ex_x:
        _name(legend, plot.plot(ex_x, ex_y, pen=None, symbol=palette.SYMBOL_EXCLUDED, symbolSize=10, symbolBrush=None,
                                symbolPen=pg.mkPen(palette.EXCLUDED, width=2), name="standard excluded"),
              "standard excluded")
        plot.plot(ex_x, ex_y, pen=None, symbol="x", symbolSize=7, symbolBrush=palette.EXCLUDED, symbolPen=None)
    for kind, colour, symbol, label in ((SampleKind.UNKNOWN, palette.UNKNOWN, palette.SYMBOL_UNKNOWN, "unknown"),
                                        (SampleKind.QC, palette.QC, palette.SYMBOL_QC, "QC sample")):
        points = sample_points(a, kind, tx, ty, log_x, log_y)
        if points is None:
            continue
        sx, sy, lo, hi = points
        plot.addItem(pg.ErrorBarItem(x=sx, y=sy, left=sx - lo, right=hi - sx, beam=0, pen=pg.mkPen(colour, width=1.5)))
        _name(legend, plot.plot(sx, sy, pen=None, symbol=symbol, symbolSize=9, symbolBrush=colour,
                                symbolPen=pg.mkPen("w", width=0.6), name=f"{label} with interval"),
              f"{label} with interval")


def draw_anchor_points(plot: pg.PlotItem, a: AnalyteResult, *, legend: pg.LegendItem | None = None,
                       log_x: bool = False, font_size: int = 10) -> None:
    """Ring the anchor points of a logistic curve (drawn by :func:`draw_curve` as standards in the fit)
    with an open hexagon, named in the legend: they are fitted but never judged."""
    cal = a.calibration
    anchors = getattr(cal, "anchors", None)
    if anchors is None or not np.any(anchors):
        return
    log_y = log_x and bool(np.all(cal.response > 0))
    shown = anchors & (cal.concentration > 0) if log_x else anchors
    with np.errstate(divide="ignore"):
        x = np.log10(cal.concentration[shown]) if log_x else cal.concentration[shown]
        y = np.log10(cal.response[shown]) if log_y else cal.response[shown]
    k = font_size / 10  # the ring grows with the lettering (a printed figure is drawn larger)
    ring = plot.plot(x, y, pen=None, symbol=palette.SYMBOL_ANCHOR, symbolSize=17 * k, symbolBrush=None,
                     symbolPen=pg.mkPen(palette.ANCHOR, width=2 * k), name="anchor point (fitted, not judged)")
    _name(legend, ring, "anchor point (fitted, not judged)")


def draw_curve_with_anchors(plot: pg.PlotItem, a: AnalyteResult, *, legend: pg.LegendItem | None = None,
                            **options) -> None:  # type: ignore[no-untyped-def]
    """:func:`draw_curve` with the anchor points ringed (the curve view's plot)."""
    draw_curve(plot, a, legend=legend, **options)
    if a.calibration is not None:
        draw_anchor_points(plot, a, legend=legend, log_x=bool(options.get("log_x", False)),
                           font_size=int(options.get("font_size", 10)))


def draw_relative_errors(plot: pg.PlotItem, a: AnalyteResult, *, legend: pg.LegendItem | None = None,
                         log_x: bool = False, font_size: int = 10) -> None:
    """%RE of each standard in the fit against concentration, with the profile's acceptance limits."""
    unit = a.analyte.concentration_unit
    styled_plot(plot, f"Concentration ({unit})" if unit else "Concentration", "%RE", font_size)
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
    steps = acceptance_steps(x, verdict)
    if steps is not None:
        edges, tol_at = steps
        limit_pen = pg.mkPen(palette.LIMIT, width=1.2, style=Qt.PenStyle.DashLine)
        _name(legend, plot.plot(edges, tol_at, stepMode="center", pen=limit_pen, name="acceptance limit"),
              "acceptance limit")
        plot.plot(edges, -tol_at, stepMode="center", pen=limit_pen)
    plot.addItem(pg.InfiniteLine(pos=0, angle=0, pen=pg.mkPen("#777777", width=1)))
    judged = verdict.judged & np.isfinite(cal.relative_error)
    passing = judged & verdict.passing
    failing = judged & ~verdict.passing
    _name(legend, plot.plot(x[passing], cal.relative_error[passing], pen=None, symbol=palette.SYMBOL_INCLUDED,
                            symbolSize=8, symbolBrush=palette.INCLUDED, symbolPen=pg.mkPen("w", width=0.8)),
          "within limits")
    if failing.any():
        outside = plot.plot(x[failing], cal.relative_error[failing], pen=None, symbol="star", symbolSize=12,
                            symbolBrush=palette.FLAGGED, symbolPen=None)
        _name(legend, outside, "outside the limits")


def draw_residuals(plot: pg.PlotItem, a: AnalyteResult, *, legend: pg.LegendItem | None = None, log_x: bool = False,
                   font_size: int = 10) -> None:
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
    _name(legend, plot.plot(tx(cal.concentration[keep]), cal.residuals[keep], pen=None, symbol=palette.SYMBOL_INCLUDED,
                            symbolSize=8, symbolBrush=palette.INCLUDED, symbolPen=pg.mkPen("w", width=0.8)),
          "standard in the fit")


def draw_influence(plot: pg.PlotItem, a: AnalyteResult, *, legend: pg.LegendItem | None = None,
                   font_size: int = 10) -> None:
    """Leverage against the externally studentized residual, the one the influence flags and the tables
    use, with the limits of the flags themselves: the Bonferroni outlier limit, and the boundary of the
    influence rule (Cook's distance above the median of F(p, n − p) together with a residual beyond
    chance for its leverage), drawn from :mod:`curvewright.core.influence`."""
    styled_plot(plot, "Leverage", "Studentized residual (external)", font_size)
    cal = a.calibration
    if cal is None:
        return
    h = cal.leverage
    t = cal.studentized_residuals
    n, p = cal.n_standards, cal.n_parameters
    inf = cal.influence
    grid = np.linspace(max(1e-3, 0.5 * float(np.nanmin(h))), min(0.999, max(float(np.nanmax(h)) * 1.1, 0.6)), 240)
    finite = np.isfinite(t)
    limit = float(np.nanmax(np.abs(t[finite]))) if finite.any() else 1.0
    top = max(1.15 * limit, 1.15 * inf.studentized_threshold if np.isfinite(inf.studentized_threshold) else 3.5, 3.5)
    if np.isfinite(inf.studentized_threshold):
        outlier_pen = pg.mkPen(palette.LIMIT, width=1.2, style=Qt.PenStyle.DashLine)
        for sign in (1.0, -1.0):
            plot.addItem(pg.InfiniteLine(pos=sign * inf.studentized_threshold, angle=0, pen=outlier_pen))
        _name(legend, pg.PlotDataItem([0], [0], pen=outlier_pen),
              f"outlier limit (Bonferroni), |t| = {inf.studentized_threshold:.2f}")
        # the boundary rises steeply where Cook's distance becomes reachable and runs off the top of
        # the plot (nothing is drawn where no standard can be flagged for influence at all); the
        # curve does not set the plot's range, the standards and the outlier limit do
        bound = influence_boundary(grid, p, n, inf.cooks_threshold)
        bound = np.where(bound <= 3 * top, bound, np.nan)
        influence_pen = pg.mkPen(palette.LIMIT, width=1.2)
        upper = pg.PlotDataItem(*_finite(grid, bound), pen=influence_pen)
        lower = pg.PlotDataItem(*_finite(grid, -bound), pen=influence_pen)
        for curve in (upper, lower):
            plot.addItem(curve, ignoreBounds=True)
        _name(legend, upper, "influence limit (Cook's D and residual)")
    leverage_pen = pg.mkPen("#888888", style=Qt.PenStyle.DotLine)
    plot.addItem(pg.InfiniteLine(pos=HIGH_LEVERAGE, angle=90, pen=leverage_pen))
    _name(legend, pg.PlotDataItem([0], [0], pen=leverage_pen), f"leverage {entered(HIGH_LEVERAGE)} (noted)")
    flagged = np.array([bool(f) for f in cal.influence_flags])
    plain = finite & ~flagged
    _name(legend, plot.plot(h[plain], t[plain], pen=None, symbol=palette.SYMBOL_INCLUDED, symbolSize=8,
                            symbolBrush=palette.INCLUDED, symbolPen=pg.mkPen("w", width=0.8)), "standard")
    marked = flagged & finite
    if marked.any():
        _name(legend, plot.plot(h[marked], t[marked], pen=None, symbol="star", symbolSize=13, symbolBrush=palette.FLAGGED,
                                symbolPen=None), "flagged standard (labelled)")
    ids = [s.id for s in a.fitted_standards]
    for i in np.flatnonzero(flagged):
        label = pg.TextItem(ids[i] if i < len(ids) else str(i + 1), color=palette.FLAGGED, anchor=(-0.1, 1.1))
        label.setPos(float(h[i]), float(t[i]) if np.isfinite(t[i]) else 0.0)
        plot.addItem(label)
    plot.addItem(pg.PlotDataItem([grid[0], grid[-1]], [-top, top], pen=None))  # the range to show
    plot.setYRange(-top, top)


def plot_image_bytes(widget: QWidget, *, svg: bool = False, scale: float = 2.0) -> bytes:
    """The widget drawn as PNG (at ``scale`` times its size) or as an SVG drawing."""
    from PySide6.QtCore import QBuffer, QByteArray, QIODevice, QRect, QSize
    from PySide6.QtGui import QPainter

    data = QByteArray()
    buffer = QBuffer(data)
    buffer.open(QIODevice.OpenModeFlag.WriteOnly)
    if svg:
        from PySide6.QtSvg import QSvgGenerator

        generator = QSvgGenerator()
        generator.setOutputDevice(buffer)
        generator.setSize(widget.size())
        generator.setViewBox(QRect(0, 0, widget.width(), widget.height()))
        generator.setTitle("Curvewright calibration plot")
        painter = QPainter(generator)
        widget.render(painter)
        painter.end()
    else:
        size = QSize(int(widget.width() * scale), int(widget.height() * scale))
        image = QImage(size, QImage.Format.Format_ARGB32)
        image.fill(QColor("white"))
        painter = QPainter(image)
        painter.setRenderHint(QPainter.RenderHint.Antialiasing)
        painter.scale(scale, scale)
        widget.render(painter)
        painter.end()
        image.save(buffer, "PNG")
    buffer.close()
    return bytes(data.data())
