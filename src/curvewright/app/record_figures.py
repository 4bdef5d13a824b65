"""The printed record's figures, drawn straight with QPainter as lines, shapes and text on the page.

Each figure is first described from the engine's results as what it plots, in data units
(:class:`PlottedFigure`: its layers and legend entries, its axes' ranges and ticks); painting it into
a rectangle of the page (:meth:`PlottedFigure.paint`) lays it out in that rectangle, measured in the
fonts it is printed in, and draws it as vectors. The figures show what the screen's plots show
(:mod:`.figures`) from the same values (:mod:`.plotted`), in a printed size: markers about 2 mm
across, lines of 0.5–1 pt (grid lines 0.25 pt), text at 7–7.5 pt.

* the curve: standards (in the fit: filled circles; excluded: open squares with a cross; anchor
  points ringed by open hexagons), the fitted curve with its confidence band (shaded) and prediction
  band (dashed), unknowns and QC samples on the curve with horizontal bars for their concentration
  intervals, the calibrated range (outside it shaded) and the LOQ (dotted line);
* relative error of each standard against concentration, with the acceptance limits;
* influence: leverage against the externally studentized residual, with the limits of the flags;
* a standard-addition series: the mean responses, the line through them extended back to zero
  response, and the x-intercept with its interval.

Axes take "nice" ticks: on a linear axis steps of 1, 2 or 5 times a power of ten, chosen for the
axis's length as the screen's axes choose them; on a log axis each power of ten, labelled, with
unlabelled ticks at 2…9 times it. Everything drawn inside the plot is cut at its edge.

Nothing here imports pyqtgraph, and nothing here computes a statistic.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from math import ceil, floor, frexp, log10, sqrt

import numpy as np
from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QBrush, QColor, QFont, QFontMetricsF, QPainter, QPainterPath, QPen, QPolygonF
from shiboken6 import VoidPtr

from ..core.level_text import percent_label
from . import palette
from .plotted import acceptance_steps, excluded_points, finite, sample_points, shaded_ends
from ..core.notation import entered, figures, is_plain

TYPE_CHECKING = False
if TYPE_CHECKING:
    from ..core.addition_series import AdditionSeriesResult
    from ..core.run_analysis import AnalyteResult

FIGURE_WIDTH_MM = 178.0
"""The record's text width: every figure is described at it (its proportions) and scaled to its place."""
POINT_MM = 25.4 / 72
TICK_PT, TITLE_PT, LEGEND_PT, LABEL_PT = 7.5, 7.5, 7.2, 7.0
"""Point sizes of the tick labels, axis titles, legend entries and labels of flagged standards."""
REFERENCE_PIXELS = 1800 / FIGURE_WIDTH_MM
"""Pixels per millimetre of the screen-sized drawing the ticks are chosen for (1,800 pixels across the
figure, as the record's figures were laid out before they were drawn here): the same axis length gives
the same tick spacing."""


# --- what a figure plots -------------------------------------------------------------------------------

@dataclass(frozen=True)
class Stroke:
    """A pen: colour (name or RGBA), width in points, "solid", "dash" or "dot"."""

    colour: object
    width: float = 0.6
    style: str = "solid"


@dataclass(frozen=True)
class Lines:
    """A polyline in data units (NaN breaks it)."""

    x: np.ndarray
    y: np.ndarray
    stroke: Stroke


@dataclass(frozen=True)
class Band:
    """The area between two curves (each drawn where it is finite)."""

    x_upper: np.ndarray
    y_upper: np.ndarray
    x_lower: np.ndarray
    y_lower: np.ndarray
    colour: tuple


@dataclass(frozen=True)
class Span:
    """A stretch of one axis shaded across the whole plot (``axis`` "x": between x0 and x1), with edges
    drawn in ``edge`` when given."""

    axis: str
    low: float
    high: float
    colour: tuple
    edge: Stroke | None = None


@dataclass(frozen=True)
class Rule:
    """A line across the whole plot at ``at`` on one axis ("x": a vertical line)."""

    axis: str
    at: float
    stroke: Stroke


@dataclass(frozen=True)
class Markers:
    """Markers of one shape ("circle", "square", "diamond", "triangle", "star", "hexagon", "cross"),
    ``size`` millimetres across; ``fill`` None for an open marker."""

    x: np.ndarray
    y: np.ndarray
    shape: str
    size: float
    fill: object | None
    edge: Stroke | None
    name: str = ""


@dataclass(frozen=True)
class Bars:
    """Horizontal interval bars from x_low to x_high at y; ``cap`` the height of an end cap in data units."""

    x_low: np.ndarray
    x_high: np.ndarray
    y: np.ndarray
    stroke: Stroke
    cap: float = 0.0
    name: str = ""


@dataclass(frozen=True)
class Labels:
    """Texts beside points (above and to the right of each), in ``colour``."""

    x: np.ndarray
    y: np.ndarray
    texts: tuple[str, ...]
    colour: str


@dataclass(frozen=True)
class Entry:
    """A legend entry: its text and what it shows (a Stroke: a line; a Markers: a marker; a tuple: a
    filled box of that colour)."""

    text: str
    glyph: object


@dataclass(frozen=True)
class Axis:
    """One axis: its title, range in plotted units (log10 of the values on a log axis) and scale."""

    title: str
    low: float
    high: float
    log: bool = False


@dataclass(frozen=True)
class Frame:
    """Where a figure painted into a rectangle puts its plot, and how it maps data onto the page."""

    plot: QRectF
    x: Axis
    y: Axis

    def page_x(self, x):  # type: ignore[no-untyped-def]
        """Page coordinate of plotted x (log10 of the value on a log axis)."""
        return self.plot.left() + (np.asarray(x, float) - self.x.low) / (self.x.high - self.x.low) * self.plot.width()

    def page_y(self, y):  # type: ignore[no-untyped-def]
        return self.plot.bottom() - (np.asarray(y, float) - self.y.low) / (self.y.high - self.y.low) * self.plot.height()


@dataclass
class PlottedFigure:
    """One figure: ``width`` × ``height`` in millimetres (its proportions as printed), its axes, the
    layers drawn inside the plot in order and its legend, placed in a column beside the plot.

    After :meth:`paint`, ``marks`` holds, for each named set of markers, the page coordinates of the
    centres drawn, and for each named set of interval bars their ends and height (x_low, x_high, y), in
    device units (a check that each point and interval is where its values put it)."""

    width: float
    height: float
    x: Axis
    y: Axis
    layers: list = field(default_factory=list)
    legend: list = field(default_factory=list)
    marks: dict = field(default_factory=dict)

    def frame(self, rect: QRectF, device) -> Frame:  # type: ignore[no-untyped-def]
        """The plot's place inside ``rect`` of ``device`` (room left for the tick labels, axis titles and
        the legend, measured in their fonts)."""
        return _Layout(self, rect, device).frame

    def paint(self, painter: QPainter, rect: QRectF) -> None:
        """Draw the figure into ``rect`` (device units of ``painter``)."""
        layout = _Layout(self, rect, painter.device())
        painter.save()
        painter.setRenderHint(QPainter.RenderHint.Antialiasing)
        self.marks = {}
        layout.draw(painter, self.marks)
        painter.restore()


# --- ticks ---------------------------------------------------------------------------------------------

def linear_tick_levels(low: float, high: float, pixels: float) -> list[float]:
    """Major and minor tick spacing for an axis from ``low`` to ``high`` that is ``pixels`` long on the
    1,800-pixel reference drawing: the major spacing the largest of 1, 2 or 5 times a power of ten that
    leaves at least 2.25·√(pixels/300) intervals (at least 2.25), the minor one a tenth or a fifth of it
    no closer than two pixels (the screen's axes use the same rule)."""
    span = abs(high - low)
    if span == 0 or not np.isfinite(span):
        return []
    intervals = max(2.25, 2.25 * sqrt(pixels / 300.0))
    widest = span / intervals
    _, exp2 = frexp(widest)
    unit = 10.0 ** (floor((exp2 - 1) / 3.32192809488736) - 1)
    if 100.0 * unit <= widest:
        factor, unit = 10, unit * 10.0
    else:
        for factor in (50, 20, 10):
            if factor * unit <= widest:
                break
    major = factor * unit
    closest = 2 * span / pixels
    for minor_factor in ((5, 10) if factor == 10 else (10, 20, 50)):
        minor = minor_factor * unit
        if minor >= closest:
            break
    return [major, minor]


def tick_values(low: float, high: float, spacing: float) -> np.ndarray:
    start = ceil(low / spacing) * spacing
    count = int((high - start) / spacing) + 1
    return np.arange(max(count, 0)) * spacing + start


def tick_text(value: float, spacing: float) -> str:
    """A tick label: as many decimals as the spacing needs; zero as "0"; a value the notation writes
    with an exponent (:mod:`curvewright.core.notation`) to six significant figures ("2 × 10⁻⁶")."""
    if value == 0:
        return "0"
    if not is_plain(repr(float(value))):
        return figures(value, 6)
    places = max(0, ceil(-log10(spacing)))
    return f"{value:.{places}f}"


def decade_ticks(low: float, high: float) -> tuple[list[tuple[float, str]], list[float]]:
    """On a log axis showing log10 values from ``low`` to ``high``: each power of ten inside, labelled
    with its value ("0.01", "100"), and unlabelled ticks at 2…9 times each."""
    major = [(float(k), f"{entered(10.0 ** k)}") for k in range(int(floor(low)), int(ceil(high)) + 1) if low <= k <= high]
    minor = [float(log10(m * 10.0 ** k)) for k in range(int(floor(low)) - 1, int(ceil(high)) + 1) for m in range(2, 10)]
    return major, [v for v in minor if low <= v <= high]


# --- laying out and drawing ----------------------------------------------------------------------------

def _font(points: float, bold: bool = False) -> QFont:
    found = QFont("DejaVu Sans")
    found.setPointSizeF(points)
    found.setBold(bold)
    return found


def _colour(value) -> QColor:  # type: ignore[no-untyped-def]
    return QColor(*value) if isinstance(value, tuple) else QColor(value)


_DASHES = {"solid": Qt.PenStyle.SolidLine, "dash": Qt.PenStyle.DashLine, "dot": Qt.PenStyle.DotLine}
_LEFT_MIDDLE = int(Qt.AlignmentFlag.AlignLeft | Qt.AlignmentFlag.AlignVCenter)
_CENTRE_TOP = int(Qt.AlignmentFlag.AlignHCenter | Qt.AlignmentFlag.AlignTop)
_RIGHT_MIDDLE = int(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
"""The drawing flags of the figures' texts (labels and legend, tick labels and titles, the y axis's tick
labels), combined once rather than for each of the few hundred texts a record's figures draw."""


class _Layout:
    """A figure placed in a rectangle of a device: plot area, ticks and legend measured in their fonts."""

    def __init__(self, fig: PlottedFigure, rect: QRectF, device) -> None:  # type: ignore[no-untyped-def]
        self.fig, self.rect = fig, rect
        self.mm = rect.width() / fig.width  # device units per millimetre
        self.fonts = {"tick": _font(TICK_PT), "title": _font(TITLE_PT), "legend": _font(LEGEND_PT),
                      "label": _font(LABEL_PT)}
        self.metrics = {k: QFontMetricsF(f, device) for k, f in self.fonts.items()}
        self._advances: dict[tuple[str, str], float] = {}
        mm = self.mm
        tick_h = self.metrics["tick"].height()
        title_h = self.metrics["title"].height()
        legend_w = 0.0
        if fig.legend:
            legend_w = 7 * mm + max(self.advance("legend", e.text) for e in fig.legend)
        self.legend_w = legend_w
        # the y axis's tick labels are measured once its ticks are known, which depend on its length only
        top = rect.top() + tick_h / 2 + 0.5 * mm
        bottom = rect.bottom() - (1.2 * mm + tick_h + 0.6 * mm + title_h + 0.3 * mm)
        self.y_ticks = self._ticks(fig.y, (bottom - top) / mm)
        widest = max((self.advance("tick", t) for _, t in self.y_ticks[0]), default=0.0)
        left = rect.left() + title_h + 1.0 * mm + widest + 1.2 * mm
        right = rect.right() - (legend_w + 3 * mm if legend_w else 0.0)
        self.x_ticks = self._ticks(fig.x, (right - left) / mm)
        # the last x label may stand out past the plot by half its width: keep it inside the rectangle
        if self.x_ticks[0] and not legend_w:
            last = self.x_ticks[0][-1]
            half = self.advance("tick", last[1]) / 2
            overhang = left + (last[0] - fig.x.low) / (fig.x.high - fig.x.low) * (right - left) + half - rect.right()
            if overhang > 0:
                right -= overhang
        self.frame = Frame(QRectF(left, top, right - left, bottom - top), fig.x, fig.y)

    def advance(self, kind: str, text: str) -> float:
        """The width of ``text`` in the font of ``kind`` (a tick label is measured to choose the ticks, to
        place the plot and to centre it: once)."""
        found = self._advances.get((kind, text))
        if found is None:
            found = self._advances[(kind, text)] = self.metrics[kind].horizontalAdvance(text)
        return found

    def _ticks(self, axis: Axis, length_mm: float) -> tuple[list[tuple[float, str]], list[float]]:
        """(labelled ticks as (value, text), unlabelled ticks) for an axis ``length_mm`` long."""
        if axis.log:
            return decade_ticks(axis.low, axis.high)
        pixels = length_mm * REFERENCE_PIXELS
        levels = linear_tick_levels(axis.low, axis.high, pixels)
        if not levels:
            return [], []
        major, minor = levels
        major_values = tick_values(axis.low, axis.high, major)
        labelled = [(float(v), tick_text(float(v), major)) for v in major_values]
        candidates = tick_values(axis.low, axis.high, minor)
        on_major = (np.abs(candidates[:, None] - major_values[None, :]) <= minor * 0.01).any(axis=1)
        minor_values = candidates[~on_major].tolist()
        # the minor ticks are labelled too unless all the labels together would crowd the axis: fill
        # more than 80 % of it, or 60 % with two major labels, 40 % with four, 20 % with six (the
        # screen's axes' rule; a label's height counted at 80 %)
        minor_texts = [tick_text(v, minor) for v in minor_values]
        if axis is self.fig.x:
            size = sum(self.advance("tick", t) for t in [t for _, t in labelled] + minor_texts)
        else:
            size = 0.8 * self.metrics["tick"].height() * (len(labelled) + len(minor_texts))
        ratio = size / (length_mm * self.mm)
        crowded = any(len(labelled) >= count and ratio >= limit
                      for count, limit in ((0, 0.8), (2, 0.6), (4, 0.4), (6, 0.2)))
        if minor_values and not crowded:
            return sorted(labelled + list(zip(minor_values, minor_texts))), []
        return labelled, minor_values

    # --- drawing ---
    def pen(self, stroke: Stroke) -> QPen:
        pen = QPen(_colour(stroke.colour), stroke.width * POINT_MM * self.mm)
        pen.setStyle(_DASHES[stroke.style])
        pen.setCapStyle(Qt.PenCapStyle.FlatCap)
        return pen

    def draw(self, painter: QPainter, marks: dict) -> None:
        f, plot = self.frame, self.frame.plot
        grid = QPen(QColor(0, 0, 0, 38), 0.25 * POINT_MM * self.mm)
        faint = QPen(QColor(0, 0, 0, 18), 0.25 * POINT_MM * self.mm)
        painter.setBrush(Qt.BrushStyle.NoBrush)
        for values, pen in (([v for v, _ in self.x_ticks[0]], grid), (self.x_ticks[1], faint)):
            painter.setPen(pen)
            for px in f.page_x(values):
                painter.drawLine(QPointF(px, plot.top()), QPointF(px, plot.bottom()))
        for values, pen in (([v for v, _ in self.y_ticks[0]], grid), (self.y_ticks[1], faint)):
            painter.setPen(pen)
            for py in f.page_y(values):
                painter.drawLine(QPointF(plot.left(), py), QPointF(plot.right(), py))
        painter.save()
        painter.setClipRect(plot)
        for layer in self.fig.layers:
            self._layer(painter, layer, marks)
        painter.restore()
        self._axes(painter)
        self._legend(painter)

    def _layer(self, painter: QPainter, layer, marks: dict) -> None:  # type: ignore[no-untyped-def]
        f, plot = self.frame, self.frame.plot
        if isinstance(layer, Span):
            if layer.axis == "x":
                a, b = sorted(float(v) for v in f.page_x([layer.low, layer.high]))
                box = QRectF(a, plot.top(), b - a, plot.height()).intersected(plot)
            else:
                a, b = sorted(float(v) for v in f.page_y([layer.low, layer.high]))
                box = QRectF(plot.left(), a, plot.width(), b - a).intersected(plot)
            if box.isEmpty():
                return
            painter.fillRect(box, _colour(layer.colour))
            if layer.edge is not None:
                painter.setPen(self.pen(layer.edge))
                if layer.axis == "x":
                    for at in (box.left(), box.right()):
                        painter.drawLine(QPointF(at, box.top()), QPointF(at, box.bottom()))
        elif isinstance(layer, Band):
            xu, yu = finite(f.page_x(layer.x_upper), f.page_y(layer.y_upper))
            xl, yl = finite(f.page_x(layer.x_lower), f.page_y(layer.y_lower))
            if not xu.size or not xl.size:
                return
            polygon = polygon_of(np.concatenate([xu, xl[::-1]]), np.concatenate([yu, yl[::-1]]))
            path = QPainterPath()
            path.addPolygon(polygon)
            box = QPainterPath()
            box.addRect(plot)
            painter.setPen(Qt.PenStyle.NoPen)
            painter.setBrush(_colour(layer.colour))
            painter.drawPath(path.intersected(box))
            painter.setBrush(Qt.BrushStyle.NoBrush)
        elif isinstance(layer, Lines):
            x, y = clip_polyline(f.page_x(layer.x), f.page_y(layer.y),
                                 (plot.left(), plot.right(), plot.top(), plot.bottom()))
            painter.setPen(self.pen(layer.stroke))
            painter.setBrush(Qt.BrushStyle.NoBrush)
            for part_x, part_y in _parts(x, y):
                painter.drawPolyline(polygon_of(part_x, part_y))
        elif isinstance(layer, Rule):
            painter.setPen(self.pen(layer.stroke))
            if layer.axis == "x":
                at = float(f.page_x(layer.at))
                if plot.left() <= at <= plot.right():
                    painter.drawLine(QPointF(at, plot.top()), QPointF(at, plot.bottom()))
            else:
                at = float(f.page_y(layer.at))
                if plot.top() <= at <= plot.bottom():
                    painter.drawLine(QPointF(plot.left(), at), QPointF(plot.right(), at))
        elif isinstance(layer, Bars):
            painter.setPen(self.pen(layer.stroke))
            lo, hi, y = f.page_x(layer.x_low), f.page_x(layer.x_high), f.page_y(layer.y)
            cap = abs(float(f.page_y(layer.cap) - f.page_y(0.0))) / 2 if layer.cap else 0.0
            lo, hi = np.clip(lo, plot.left(), plot.right()), np.clip(hi, plot.left(), plot.right())
            if layer.name:
                marks[layer.name] = np.column_stack([lo, hi, y])
            for a, b, c in zip(lo.tolist(), hi.tolist(), y.tolist()):
                painter.drawLine(QPointF(a, c), QPointF(b, c))
                if cap:
                    for end in (a, b):
                        painter.drawLine(QPointF(end, c - cap), QPointF(end, c + cap))
        elif isinstance(layer, Markers):
            x, y = finite(f.page_x(layer.x), f.page_y(layer.y))
            inside = (x >= plot.left()) & (x <= plot.right()) & (y >= plot.top()) & (y <= plot.bottom())
            x, y = x[inside], y[inside]
            self._markers(painter, layer, x, y)
            if layer.name:
                marks[layer.name] = np.column_stack([x, y])
        elif isinstance(layer, Labels):
            painter.setFont(self.fonts["label"])
            painter.setPen(QColor(layer.colour))
            height = self.metrics["label"].height()
            for x, y, text in zip(f.page_x(layer.x).tolist(), f.page_y(layer.y).tolist(), layer.texts):
                width = self.advance("label", text)
                box = QRectF(x + 1.2 * self.mm, y - 1.0 * self.mm - height, width, height)
                if box.right() > plot.right():  # keep the label inside the plot: to the left of its point
                    box.moveRight(x - 1.2 * self.mm)
                if box.top() < plot.top():
                    box.moveTop(y + 1.0 * self.mm)
                painter.drawText(box, _LEFT_MIDDLE, text)

    def _markers(self, painter: QPainter, layer: Markers, x: np.ndarray, y: np.ndarray) -> None:
        shape = marker_path(layer.shape, layer.size * self.mm)
        painter.setPen(self.pen(layer.edge) if layer.edge is not None else Qt.PenStyle.NoPen)
        painter.setBrush(QBrush(_colour(layer.fill)) if layer.fill is not None else Qt.BrushStyle.NoBrush)
        for a, b in zip(x.tolist(), y.tolist()):  # one path each: every marker is its own shape on the page
            painter.drawPath(shape.translated(a, b))
        painter.setBrush(Qt.BrushStyle.NoBrush)

    def _axes(self, painter: QPainter) -> None:
        f, plot, mm = self.frame, self.frame.plot, self.mm
        axis_pen = QPen(QColor("#333333"), 0.5 * POINT_MM * mm)
        painter.setPen(axis_pen)
        painter.setBrush(Qt.BrushStyle.NoBrush)
        painter.drawLine(QPointF(plot.left(), plot.bottom()), QPointF(plot.right(), plot.bottom()))
        painter.drawLine(QPointF(plot.left(), plot.top()), QPointF(plot.left(), plot.bottom()))
        tick = 1.0 * mm
        painter.setFont(self.fonts["tick"])
        height = self.metrics["tick"].height()
        labels_x = [(float(p), t) for (_, t), p in zip(self.x_ticks[0], f.page_x([v for v, _ in self.x_ticks[0]]))]
        labels_y = [(float(p), t) for (_, t), p in zip(self.y_ticks[0], f.page_y([v for v, _ in self.y_ticks[0]]))]
        for px in [p for p, _ in labels_x]:
            painter.drawLine(QPointF(px, plot.bottom()), QPointF(px, plot.bottom() + tick))
        for px in f.page_x(self.x_ticks[1]).tolist():
            painter.drawLine(QPointF(px, plot.bottom()), QPointF(px, plot.bottom() + tick / 2))
        for py in [p for p, _ in labels_y]:
            painter.drawLine(QPointF(plot.left() - tick, py), QPointF(plot.left(), py))
        for py in f.page_y(self.y_ticks[1]).tolist():
            painter.drawLine(QPointF(plot.left() - tick / 2, py), QPointF(plot.left(), py))
        painter.setPen(QColor("#222222"))
        for px, text in labels_x:
            width = self.advance("tick", text)
            painter.drawText(QRectF(px - width / 2 - 0.5 * mm, plot.bottom() + tick + 0.2 * mm, width + mm, height),
                             _CENTRE_TOP, text)
        for py, text in labels_y:
            width = self.advance("tick", text)
            painter.drawText(QRectF(plot.left() - tick - 0.3 * mm - width - mm, py - height / 2, width + mm, height),
                             _RIGHT_MIDDLE, text)
        painter.setFont(self.fonts["title"])
        title_h = self.metrics["title"].height()
        below = plot.bottom() + tick + 0.2 * mm + height + 0.4 * mm
        painter.drawText(QRectF(plot.left(), below, plot.width(), title_h),
                         _CENTRE_TOP, f.x.title)
        painter.save()
        painter.translate(self.rect.left(), plot.center().y())
        painter.rotate(-90)
        painter.drawText(QRectF(-plot.height() / 2, 0, plot.height(), title_h),
                         _CENTRE_TOP, f.y.title)
        painter.restore()

    def _legend(self, painter: QPainter) -> None:
        if not self.fig.legend:
            return
        mm, plot = self.mm, self.frame.plot
        x0 = self.rect.right() - self.legend_w
        row = self.metrics["legend"].height() * 1.25
        painter.setFont(self.fonts["legend"])
        for k, entry in enumerate(self.fig.legend):
            y = plot.top() + k * row + row / 2
            glyph = entry.glyph
            if isinstance(glyph, Stroke):
                painter.setPen(self.pen(glyph))
                painter.drawLine(QPointF(x0, y), QPointF(x0 + 5 * mm, y))
            elif isinstance(glyph, Markers):
                self._markers(painter, glyph, np.array([x0 + 2.5 * mm]), np.array([y]))
            elif isinstance(glyph, tuple):
                painter.fillRect(QRectF(x0 + 0.5 * mm, y - 1.3 * mm, 4 * mm, 2.6 * mm), _colour(glyph))
            painter.setPen(QColor("#222222"))
            painter.drawText(QRectF(x0 + 7 * mm, y - row / 2, self.legend_w - 7 * mm, row),
                             _LEFT_MIDDLE, entry.text)


def polygon_of(x: np.ndarray, y: np.ndarray) -> QPolygonF:
    """The points (x[i], y[i]) as a QPolygonF, in device units: the polygon is sized first, then its
    points (pairs of doubles, one after the other in its memory) are written from the arrays in one
    step, the same values as QPointF by QPointF without making a Python object per point."""
    x, y = np.asarray(x, dtype=np.float64), np.asarray(y, dtype=np.float64)
    if x.shape != y.shape or x.ndim != 1:
        raise ValueError(f"a figure's line: {x.shape} x values against {y.shape} y values")
    if not _POINTS_ARE_DOUBLES:  # a Qt built with single-precision coordinates: point by point
        return QPolygonF([QPointF(a, b) for a, b in zip(x.tolist(), y.tolist())])
    polygon = QPolygonF()
    polygon.resize(len(x))
    if len(x):
        points = np.frombuffer(VoidPtr(polygon.data(), 16 * len(x), True), dtype=np.float64).reshape(-1, 2)
        points[:, 0] = x
        points[:, 1] = y
    return polygon


def _points_are_doubles() -> bool:
    """True when a QPolygonF keeps its points as pairs of doubles one after the other (read from a probe of
    four points, whose first 32 bytes lie inside the polygon whatever the size of a coordinate)."""
    probe = QPolygonF([QPointF(1.5, -2.25), QPointF(3.0, 4.0), QPointF(0.0, 0.0), QPointF(0.0, 0.0)])
    found = np.frombuffer(VoidPtr(probe.data(), 32, False), dtype=np.float64)
    return found.tolist() == [1.5, -2.25, 3.0, 4.0]


_POINTS_ARE_DOUBLES = _points_are_doubles()


def marker_path(shape: str, size: float) -> QPainterPath:
    """A marker ``size`` device units across, centred on the origin."""
    r = size / 2
    path = QPainterPath()
    if shape == "circle":
        path.addEllipse(QPointF(0, 0), r, r)
    elif shape == "square":
        path.addRect(QRectF(-r, -r, size, size))
    elif shape == "cross":
        path.moveTo(-r, -r)
        path.lineTo(r, r)
        path.moveTo(-r, r)
        path.lineTo(r, -r)
    else:
        if shape == "diamond":
            corners = [(0, -r), (r, 0), (0, r), (-r, 0)]
        elif shape == "triangle":  # pointing up
            corners = [(0, -r), (r * 0.866, r * 0.5), (-r * 0.866, r * 0.5)]
        elif shape == "hexagon":
            corners = [(r * np.cos(a), r * np.sin(a)) for a in np.pi / 3 * np.arange(6)]
        elif shape == "star":
            angles = -np.pi / 2 + np.pi / 5 * np.arange(10)
            radii = np.where(np.arange(10) % 2 == 0, r, 0.42 * r)
            corners = list(zip(radii * np.cos(angles), radii * np.sin(angles)))
        else:
            raise ValueError(f"marker shape {shape!r}: not one of the record's shapes")
        path.addPolygon(QPolygonF([QPointF(float(a), float(b)) for a, b in corners]))
        path.closeSubpath()
    return path


def _parts(x: np.ndarray, y: np.ndarray):  # type: ignore[no-untyped-def]
    """The runs of finite points of a NaN-separated polyline, each with at least two points."""
    good = np.isfinite(x) & np.isfinite(y)
    if not good.any():
        return
    edges = np.flatnonzero(np.diff(np.concatenate([[0], good.view(np.int8), [0]])))
    for start, end in zip(edges[::2], edges[1::2]):
        if end - start >= 2:
            yield x[start:end], y[start:end]


def clip_polyline(x: np.ndarray, y: np.ndarray, box: tuple[float, float, float, float]) -> tuple[np.ndarray, np.ndarray]:
    """The parts of the polyline (x, y) inside ``box`` = (x0, x1, y0, y1), each segment cut where it
    crosses the box's edge (Liang–Barsky clipping, worked over all segments at once); separate parts are
    separated by NaN, and a point that is not finite breaks the line."""
    x, y = np.asarray(x, float), np.asarray(y, float)
    if x.size < 2:
        return np.empty(0), np.empty(0)
    x0, x1, y0, y1 = box
    if np.all(np.isfinite(x) & np.isfinite(y) & (x >= x0) & (x <= x1) & (y >= y0) & (y <= y1)):
        return x.copy(), y.copy()  # wholly inside: nothing to cut
    ax, ay, bx, by = x[:-1], y[:-1], x[1:], y[1:]
    ok = np.isfinite(ax) & np.isfinite(ay) & np.isfinite(bx) & np.isfinite(by)
    dx, dy = bx - ax, by - ay
    low, high = np.zeros(ax.size), np.ones(ax.size)
    with np.errstate(divide="ignore", invalid="ignore"):
        for p, q in ((-dx, ax - x0), (dx, x1 - ax), (-dy, ay - y0), (dy, y1 - ay)):
            ratio = q / p
            parallel_outside = (p == 0) & (q < 0)
            low = np.where(p < 0, np.maximum(low, ratio), low)
            high = np.where(p > 0, np.minimum(high, ratio), high)
            ok &= ~parallel_outside
    ok &= low <= high
    sx, sy, ex, ey = ax + low * dx, ay + low * dy, ax + high * dx, ay + high * dy
    kept = np.flatnonzero(ok)
    if not kept.size:
        return np.empty(0), np.empty(0)
    sx, sy, ex, ey = sx[kept], sy[kept], ex[kept], ey[kept]
    # a kept segment that starts where the one before it ends continues its part (its end is added);
    # any other starts a new part (NaN, unless it is the first, then its start and its end)
    goes_on = np.zeros(kept.size, dtype=bool)
    goes_on[1:] = (sx[1:] == ex[:-1]) & (sy[1:] == ey[:-1])
    counts = np.where(goes_on, 1, 3)
    counts[0] = 2
    last = np.cumsum(counts) - 1  # where each segment's end goes
    begins = ~goes_on
    out_x, out_y = np.empty(int(last[-1]) + 1), np.empty(int(last[-1]) + 1)
    out_x[last], out_y[last] = ex, ey
    out_x[last[begins] - 1], out_y[last[begins] - 1] = sx[begins], sy[begins]
    gaps = last[begins][1:] - 2
    out_x[gaps], out_y[gaps] = np.nan, np.nan
    return out_x, out_y


# --- the figures ---------------------------------------------------------------------------------------

STANDARD_MM, EXCLUDED_MM, SAMPLE_MM, STAR_MM, ANCHOR_MM = 2.0, 2.4, 2.3, 3.0, 3.8
"""Marker sizes on paper, millimetres across (legible when printed: about 2 mm and more)."""
WHITE_EDGE = Stroke("#ffffff", 0.3)


def _log(values):  # type: ignore[no-untyped-def]
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.log10(np.asarray(values, dtype=float))


def _plain(values):  # type: ignore[no-untyped-def]
    return np.asarray(values, dtype=float)


def _range(xs: list, ys: list, padding: float = 0.04) -> tuple[tuple[float, float], tuple[float, float]]:
    """The smallest range holding every finite value of ``xs`` and ``ys``, widened by ``padding`` of its
    span on each side (a range of one value is widened by 1 on each side)."""
    def span(parts) -> tuple[float, float]:  # type: ignore[no-untyped-def]
        values = np.concatenate([np.ravel(np.asarray(p, float)) for p in parts]) if parts else np.empty(0)
        values = values[np.isfinite(values)]
        if not values.size:
            return 0.0, 1.0
        low, high = float(values.min()), float(values.max())
        if high == low:
            return low - 1.0, high + 1.0
        pad = padding * (high - low)
        return low - pad, high + pad

    return span(xs), span(ys)


def _titles(a: AnalyteResult, x_word: str, y_word: str, y_unit: bool = True) -> tuple[str, str]:
    unit = a.analyte.concentration_unit
    response = a.analyte.response_unit
    return (f"{x_word} ({unit})" if unit else x_word,
            f"{y_word} ({response})" if response and y_unit else y_word)


def curve_figure(a: AnalyteResult, *, level: float = 0.95, log_x: bool = False, height: float = 96.9) -> PlottedFigure:
    """The calibration figure of one analyte (see the module's description); zero concentrations are left
    off a log axis."""
    from ..core.curve_trace import curve_trace
    from ..core.run import SampleKind

    x_title, y_title = _titles(a, "Concentration", "Response")
    cal = a.calibration
    if cal is None:
        return PlottedFigure(FIGURE_WIDTH_MM, height, Axis(x_title, 0, 1), Axis(y_title, 0, 1))
    low, high = cal.calibrated_range
    log_y = log_x and bool(np.all(cal.response > 0))
    if log_x and low <= 0:
        low = float(cal.concentration[cal.concentration > 0].min())
    tx = _log if log_x else _plain
    ty = _log if log_y else _plain
    trace = curve_trace(cal, level=level, log_spacing=log_x)
    x = tx(trace.concentration)
    low, high = float(tx(low)), float(tx(high))
    layers: list = []
    legend: list[Entry] = []
    xs: list = [x]
    ys: list = []
    band_colour = palette.CONFIDENCE_FILL
    upper = finite(x, ty(trace.confidence_upper))
    lower = finite(x, ty(trace.confidence_lower))
    layers.append(Band(*upper, *lower, band_colour))
    ys += [upper[1], lower[1]]
    legend.append(Entry(f"{percent_label(level)} confidence band", band_colour))
    dashed = Stroke(palette.PREDICTION, 0.6, "dash")
    for end in (trace.prediction_upper, trace.prediction_lower):
        px, py = finite(x, ty(end))
        layers.append(Lines(px, py, dashed))
        xs.append(px)
        ys.append(py)
    legend.append(Entry(f"{percent_label(level)} prediction band", dashed))
    cx, cy = finite(x, ty(trace.response))
    curve = Stroke(palette.CURVE, 1.0)
    layers.append(Lines(cx, cy, curve))
    ys.append(cy)
    legend.append(Entry("fitted curve", curve))
    finite_x = x[np.isfinite(x)]
    low, high = shaded_ends(a, low, high, tx)
    for region in ((float(finite_x.min()), low), (high, float(finite_x.max()))):
        if region[1] > region[0]:
            layers.insert(0, Span("x", region[0], region[1], palette.RANGE_SHADE))
    loq_at = None
    if a.limits is not None and a.limits.loq is not None and a.limits.loq > 0 and tx(a.limits.loq) > finite_x.min():
        loq_at = float(tx(a.limits.loq))
        dotted = Stroke(palette.LIMIT, 0.7, "dot")
        layers.append(Rule("x", loq_at, dotted))
        legend.append(Entry("LOQ", dotted))
    shown = cal.concentration > 0 if log_x else np.ones(cal.n_standards, dtype=bool)
    sx, sy = tx(cal.concentration[shown]), ty(cal.response[shown])
    xs.append(sx)
    ys.append(sy)
    standard = Markers(sx, sy, "circle", STANDARD_MM, palette.INCLUDED, WHITE_EDGE, "standard in the fit")
    later = [standard]
    legend.append(Entry("standard in the fit", standard))
    ex_x, ex_y = excluded_points(a, tx, ty, log_x, log_y)
    if ex_x:
        ex_x, ex_y = np.asarray(ex_x), np.asarray(ex_y)
        xs.append(ex_x)
        ys.append(ex_y)
        square = Markers(ex_x, ex_y, "square", EXCLUDED_MM, None, Stroke(palette.EXCLUDED, 0.8), "standard excluded")
        later += [square, Markers(ex_x, ex_y, "cross", 1.5, None, Stroke(palette.EXCLUDED, 0.7))]
        legend.append(Entry("standard excluded", square))
    for kind, colour, shape, label in ((SampleKind.UNKNOWN, palette.UNKNOWN, "diamond", "unknown"),
                                       (SampleKind.QC, palette.QC, "triangle", "QC sample")):
        points = sample_points(a, kind, tx, ty, log_x, log_y)
        if points is None:
            continue
        px, py, lo, hi = points
        xs += [px, lo, hi]
        ys.append(py)
        later.append(Bars(lo, hi, py, Stroke(colour, 0.8), name=f"{label} interval"))
        marker = Markers(px, py, shape, SAMPLE_MM, colour, WHITE_EDGE, f"{label} with interval")
        later.append(marker)
        legend.append(Entry(f"{label} with interval", marker))
    anchors = getattr(cal, "anchors", None)
    if anchors is not None and np.any(anchors):
        ring_shown = anchors & (cal.concentration > 0) if log_x else anchors
        ring = Markers(tx(cal.concentration[ring_shown]), ty(cal.response[ring_shown]), "hexagon", ANCHOR_MM, None,
                       Stroke(palette.ANCHOR, 0.9), "anchor point (fitted, not judged)")
        later.append(ring)
        legend.append(Entry("anchor point (fitted, not judged)", ring))
    layers += later
    (x0, x1), (y0, y1) = _range(xs, ys)
    return PlottedFigure(FIGURE_WIDTH_MM, height, Axis(x_title + (" (log scale)" if log_x else ""), x0, x1, log_x),
                         Axis(y_title + (" (log scale)" if log_y else ""), y0, y1, log_y), layers, legend)


def relative_error_figure(a: AnalyteResult, *, log_x: bool = False, height: float = 71.2) -> PlottedFigure:
    """%RE of each standard in the fit against concentration, with the profile's acceptance limits."""
    x_title, _ = _titles(a, "Concentration", "%RE")
    x_title += " (log scale)" if log_x else ""
    cal, verdict = a.calibration, a.verdict
    if cal is None or verdict is None:
        return PlottedFigure(FIGURE_WIDTH_MM, height, Axis(x_title, 0, 1, log_x), Axis("%RE", 0, 1))
    x = _log(cal.concentration) if log_x else _plain(cal.concentration)
    layers: list = []
    legend: list[Entry] = []
    xs: list = []
    ys: list = []
    steps = acceptance_steps(x, verdict)
    if steps is not None:
        edges, tol_at = steps
        limit = Stroke(palette.LIMIT, 0.6, "dash")
        for sign in (1.0, -1.0):
            step_x = np.repeat(edges, 2)[1:-1]
            step_y = sign * np.repeat(tol_at, 2)
            layers.append(Lines(step_x, step_y, limit))
            xs.append(step_x)
            ys.append(step_y)
        legend.append(Entry("acceptance limit", limit))
    layers.append(Rule("y", 0.0, Stroke("#777777", 0.5)))
    judged = verdict.judged & np.isfinite(cal.relative_error)
    passing, failing = judged & verdict.passing, judged & ~verdict.passing

    def standards(which: np.ndarray, shape: str, size: float, fill: object, edge: Stroke | None, name: str) -> None:
        """The standards ``which`` as markers named in the legend, their values held in the axes' ranges."""
        markers = Markers(x[which], cal.relative_error[which], shape, size, fill, edge, name)
        layers.append(markers)
        legend.append(Entry(name, markers))
        xs.append(markers.x)
        ys.append(markers.y)

    standards(passing, "circle", STANDARD_MM, palette.INCLUDED, WHITE_EDGE, "within limits")
    if failing.any():
        standards(failing, "star", STAR_MM, palette.FLAGGED, None, "outside the limits")
    (x0, x1), (y0, y1) = _range(xs, ys)
    return PlottedFigure(FIGURE_WIDTH_MM, height, Axis(x_title, x0, x1, log_x), Axis("%RE", y0, y1), layers, legend)


def influence_figure(a: AnalyteResult, *, height: float = 71.2) -> PlottedFigure:
    """Leverage against the externally studentized residual (the one the influence flags and tables use),
    with the limits of the flags: the Bonferroni outlier limit and the boundary of the influence rule,
    from :mod:`curvewright.core.influence`."""
    from ..core.influence import HIGH_LEVERAGE, influence_boundary

    x_axis, y_title = "Leverage", "Studentized residual (external)"
    cal = a.calibration
    if cal is None:
        return PlottedFigure(FIGURE_WIDTH_MM, height, Axis(x_axis, 0, 1), Axis(y_title, 0, 1))
    h, t = cal.leverage, cal.studentized_residuals
    n, p = cal.n_standards, cal.n_parameters
    inf = cal.influence
    grid = np.linspace(max(1e-3, 0.5 * float(np.nanmin(h))), min(0.999, max(float(np.nanmax(h)) * 1.1, 0.6)), 240)
    ok = np.isfinite(t)
    limit = float(np.nanmax(np.abs(t[ok]))) if ok.any() else 1.0
    threshold = inf.studentized_threshold
    top = max(1.15 * limit, 1.15 * threshold if np.isfinite(threshold) else 3.5, 3.5)
    layers: list = []
    legend: list[Entry] = []
    if np.isfinite(threshold):
        outlier = Stroke(palette.LIMIT, 0.6, "dash")
        layers += [Rule("y", threshold, outlier), Rule("y", -threshold, outlier)]
        legend.append(Entry(f"outlier limit (Bonferroni), |t| = {threshold:.2f}", outlier))
        bound = influence_boundary(grid, p, n, inf.cooks_threshold)
        bound = np.where(bound <= 3 * top, bound, np.nan)
        boundary = Stroke(palette.LIMIT, 0.6)
        layers += [Lines(grid, bound, boundary), Lines(grid, -bound, boundary)]
        legend.append(Entry("influence limit (Cook's D and residual)", boundary))
    noted = Stroke("#888888", 0.5, "dot")
    layers.append(Rule("x", HIGH_LEVERAGE, noted))
    legend.append(Entry(f"leverage {entered(HIGH_LEVERAGE)} (noted)", noted))
    flagged = np.array([bool(f) for f in cal.influence_flags], dtype=bool)
    plain = ok & ~flagged
    standard = Markers(h[plain], t[plain], "circle", STANDARD_MM, palette.INCLUDED, WHITE_EDGE, "standard")
    layers.append(standard)
    legend.append(Entry("standard", standard))
    marked = flagged & ok
    if marked.any():
        star = Markers(h[marked], t[marked], "star", STAR_MM, palette.FLAGGED, None, "flagged standard (labelled)")
        layers.append(star)
        legend.append(Entry("flagged standard (labelled)", star))
    ids = [s.id for s in a.fitted_standards]
    which = np.flatnonzero(flagged)
    if which.size:
        layers.append(Labels(h[which], np.where(np.isfinite(t[which]), t[which], 0.0),
                             tuple(ids[i] if i < len(ids) else str(i + 1) for i in which), palette.FLAGGED))
    (x0, x1), (y0, y1) = _range([h[ok], grid[[0, -1]]], [t[ok], [-top, top]])
    return PlottedFigure(FIGURE_WIDTH_MM, height, Axis(x_axis, x0, x1), Axis(y_title, y0, y1), layers, legend)


def additions_figure(a: AnalyteResult, series: AdditionSeriesResult, *, height: float = 89.0) -> PlottedFigure:
    """One standard-addition series: the mean responses, the line through them drawn back to zero response
    (dashed beyond the first addition), and the x-intercept with its interval, shaded on the axis."""
    x_title, y_title = _titles(a, "Concentration added", "Response")
    added = np.asarray(series.added, dtype=float)
    means = np.asarray(series.mean_response, dtype=float)
    r = series.result
    layers: list = []
    legend: list[Entry] = []
    xs: list = [added]
    ys: list = [means]
    if r is not None:
        x_low = -r.concentration
        lower, upper = -r.upper, -r.lower
        layers.append(Span("x", lower, upper, (42, 127, 98, 40), Stroke(palette.UNKNOWN, 0.5, "dot")))
        xs.append([lower, upper])
        first, last = float(added.min()), float(added.max())
        solid = Stroke(palette.CURVE, 1.0)
        layers.append(Lines(np.array([first, last]), np.asarray(r.line([first, last]), float), solid))
        legend.append(Entry("line through the additions", solid))
        extended = Stroke(palette.CURVE, 0.8, "dash")
        back = np.asarray(r.line([x_low, first]), float)
        layers.append(Lines(np.array([x_low, first]), back, extended))
        legend.append(Entry("extrapolated to zero response", extended))
        xs.append([x_low])
        ys.append(back)
        layers.append(Rule("y", 0.0, Stroke("#888888", 0.5)))
        layers.append(Bars(np.array([lower]), np.array([upper]), np.array([0.0]), Stroke(palette.UNKNOWN, 1.0),
                           cap=0.04 * float(np.ptp(means) or 1.0), name="x-intercept interval"))
        intercept = Markers(np.array([x_low]), np.array([0.0]), "diamond", SAMPLE_MM, palette.UNKNOWN, WHITE_EDGE,
                            "x-intercept")
        layers.append(intercept)
        legend.append(Entry(f"x-intercept −{figures(r.concentration, 4)} with {percent_label(r.level)} interval (shaded)", intercept))
    points = Markers(added, means, "circle", STANDARD_MM, palette.INCLUDED, WHITE_EDGE, "mean response")
    layers.append(points)
    legend.append(Entry("mean response of each addition", points))
    (x0, x1), (y0, y1) = _range(xs, ys)
    return PlottedFigure(FIGURE_WIDTH_MM, height, Axis(x_title, x0, x1), Axis(y_title, y0, y1), layers, legend)
