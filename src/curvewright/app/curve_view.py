"""The curve view: the calibration with its bands and the unknowns, and below it the relative errors
(or residuals) of the standards with the acceptance limits. Hovering a point shows its values.

The view draws what :func:`figures.draw_curve`, :func:`figures.draw_relative_errors` and
:func:`figures.draw_residuals` draw afresh with pyqtgraph (the printed record draws its own figures
with the painter, in ``record_figures.py``, from the same ``plotted.py`` values), but its plot items are made once and
given new data on each redraw (an edit redraws the view): the curve, each band, each set of points
and all the unknowns' interval bars are one item each, and a legend is rebuilt only when its
entries change. ``tests/app/test_curve_items.py`` checks that the view looks pixel for pixel as
when each redraw cleared the plots and drew them with the record's drawing functions.
"""

from __future__ import annotations

from math import hypot

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import QEvent, QPoint, QPointF, QRectF, QSize, Qt, Signal
from PySide6.QtGui import QFont, QImage, QPainter, QPalette, QPen, QPicture, QPixmap, QTransform
from PySide6.QtWidgets import (QCheckBox, QComboBox, QGraphicsItem, QGraphicsObject, QHBoxLayout, QLabel, QSizePolicy,
                               QToolTip, QVBoxLayout, QWidget)

from ..core.level_text import percent_label
from ..io.number_text import signed_text
from . import figures, palette
from .flow_layout import FlowRow
from ..core.notation import entered, figures as sig_figures

TYPE_CHECKING = False
if TYPE_CHECKING:
    from ..core.run_analysis import AnalyteResult


def _reset(plot: pg.PlotItem, legend: pg.LegendItem | None = None) -> None:
    plot.clear()
    if legend is not None:
        legend.clear()
    for side in ("bottom", "left"):
        plot.getAxis(side).setTicks(None)


def _concentration_label(a: AnalyteResult) -> str:
    unit = a.analyte.concentration_unit
    return f"Concentration ({unit})" if unit else "Concentration"


def _decade_ticks(low: float, high: float) -> list:  # type: ignore[type-arg]
    """The ticks :func:`figures._decade_ticks` puts on a log axis from ``low`` to ``high``."""
    first, last = int(np.floor(np.log10(low))) - 1, int(np.ceil(np.log10(high))) + 1
    major = [(float(k), f"{entered(10.0 ** k)}") for k in range(first, last + 1)]
    minor = [(float(np.log10(m * 10.0**k)), "") for k in range(first, last) for m in range(2, 10)]
    return [major, minor]


def _log10(v):  # type: ignore[no-untyped-def]
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.log10(np.asarray(v, dtype=float))


def _as_float(v):  # type: ignore[no-untyped-def]
    return np.asarray(v, dtype=float)


def _axis_state(axis: pg.AxisItem) -> tuple:  # type: ignore[type-arg]
    """Everything an axis's picture is drawn from: its range and scale, ticks, label, style (fonts and
    pens compare by value), text room, grid, and its place and the linked view's place (the grid
    lines cross the view)."""
    view = axis.linkedView()
    return (tuple(axis.range), axis.logMode, axis.scale, axis.autoSIPrefixScale, axis.labelUnitPrefix,
            _levels(axis._tickLevels), axis._tickDensity, _levels(axis._tickSpacing), axis.grid, axis.labelString(),
            axis.textWidth, axis.textHeight, axis.isVisible(), tuple(axis.style.items()),
            axis._pen, axis._textPen, axis.geometry().getRect(), axis.boundingRect().getRect(),
            None if view is None else view.mapRectToItem(axis, view.boundingRect()).getRect())


def _levels(levels):  # type: ignore[no-untyped-def]
    """Tick levels or spacings as values that compare by content (pyqtgraph keeps the lists it is
    given; a copy, so that a list changed later in place would not compare equal to itself)."""
    return None if levels is None else tuple(tuple(level) if isinstance(level, list) else level for level in levels)


def _one_style(data: np.ndarray) -> bool:
    """No point of a scatter's data has a style of its own (all take the item's symbol, size, pen
    and brush)."""
    return (bool(np.all(data["size"] == -1))
            and not any(v is not None for k in ("symbol", "pen", "brush") for v in data[k].tolist()))


_ATLAS_PARTS = ("fragmentAtlas", "_maybeRebuildAtlas", "_updateMaxSpotSizes", "invalidate")
"""What the quick way below uses of a scatter's symbol atlas; a pyqtgraph release without them is
given the general way."""


def _update_spots_of_one_style(scatter: pg.ScatterPlotItem, dataSet=None) -> None:  # type: ignore[no-untyped-def]  # noqa: N803
    """``ScatterPlotItem.updateSpots`` for points that all have the item's style: pyqtgraph looks the
    style up in its symbol atlas point by point (in Python, ~0.1 s per 10,000 points); here it is
    looked up once and every new point is given that place in the atlas, which is what the lookup
    point by point gives each of them. Anything else goes the general way."""
    data = scatter.data if dataSet is None else dataSet
    opts = scatter.opts
    if (not all(hasattr(scatter, part) for part in _ATLAS_PARTS) or "sourceRect" not in (data.dtype.names or ())
            or not (opts["pxMode"] and opts["useCache"]) or opts["hoverable"] or not _one_style(data)):
        type(scatter).updateSpots(scatter, dataSet)
        return
    new = data["sourceRect"]["w"] == 0
    if np.any(new):
        _same_style_objects(scatter)
        style = (opts["symbol"], opts["size"], opts["pen"], opts["brush"])
        data["sourceRect"][new] = scatter.fragmentAtlas[[style]][0]
    scatter._maybeRebuildAtlas()
    scatter._updateMaxSpotSizes(data=data)
    if np.any(new):
        scatter.invalidate()


def _same_style_objects(scatter: pg.ScatterPlotItem) -> None:
    """Give the scatter back the pen and brush objects it drew its symbol with last time when the new
    ones are equal to them. pyqtgraph makes a new brush with every new data and keys its symbol atlas
    by the objects, so each redraw drew the symbol again and added it to the atlas."""
    opts = scatter.opts
    kept = getattr(scatter, "_kept_style_objects", None)
    if kept is not None:
        for key, before in zip(("pen", "brush"), kept):
            if opts[key] is not before and opts[key] == before:
                opts[key] = before
    scatter._kept_style_objects = (opts["pen"], opts["brush"])


def _following_the_range(item: pg.PlotDataItem):  # type: ignore[no-untyped-def]
    """``item.viewRangeChanged`` for a line that gives it its data again only when that changes what
    it shows.

    With a range limit pyqtgraph clips a line's values to a band many view heights (a million here)
    above and below the view, and when the vertical range moves it works the line's shown data out
    again and gives it to the line, which makes its path anew: after every edit, once the view has
    autoranged, for the curve, the prediction band and the acceptance limits. Where the limit clips
    nothing, before and after the move (the values pyqtgraph shows are its values themselves, and
    they fit within the band around the new range: pyqtgraph's own test), the line would be given the
    very arrays it holds; only that the range moved is noted, as pyqtgraph notes it. Any other case (a
    line clipped to the view or downsampled, or clipped by the limit) and an item without these
    parts (another pyqtgraph release) goes pyqtgraph's way."""
    general = item.viewRangeChanged

    def follow(vb=None, ranges=None, changed=None) -> None:  # type: ignore[no-untyped-def]
        if (changed is not None and changed[1] and not item.opts.get("clipToView", True)
                and not item.opts.get("autoDownsample", True) and _clips_nothing(item)):
            # a horizontal move asks nothing of a line neither clipped to the view nor downsampled
            if changed[0]:
                item.setProperty("xViewRangeWasChanged", True)
            item.setProperty("yViewRangeWasChanged", True)
            return
        general(vb, ranges, changed)

    return follow


def _clips_nothing(item: pg.PlotDataItem) -> bool:
    """The line shows its values as they are, and pyqtgraph's range limit would clip none of them in
    the view's range now (the conditions of ``PlotDataItem._getDisplayDataset``)."""
    opts = item.opts
    shown, mapped = getattr(item, "_datasetDisplay", None), getattr(item, "_datasetMapped", None)
    limit, hysteresis = opts.get("dynamicRangeLimit"), opts.get("dynamicRangeHyst")
    view = item.getViewBox()
    if (shown is None or mapped is None or limit is None or hysteresis is None or view is None
            or shown.x is not mapped.x or shown.y is not mapped.y or shown.connect is not None):
        return False
    data, in_view = mapped.dataRect(), view.viewRect()
    if data is None:
        return False
    height = in_view.height()
    clips = (height > 0 and not data.bottom() < in_view.top() and not data.top() > in_view.bottom()
             and data.height() > 2 * hysteresis * limit * height)
    return not clips


class _GridLayer:
    """One transparent image, shared by the axes of a view, on which an axis draws its tick and grid
    lines before they are laid over the plot (see :class:`_GridAxis`). It is as large as the device
    coordinates reach, so that the lines are drawn through exactly the transform they would be drawn
    through on the screen; only the part an axis covers is cleared and laid over."""

    def __init__(self) -> None:
        self.image: QImage | None = None

    def covering(self, right: int, bottom: int) -> QImage:
        image = self.image
        if image is None or image.width() < right or image.height() < bottom:
            width, height = max(right, 0 if image is None else image.width()), max(bottom, 0 if image is None else image.height())
            image = self.image = QImage(width, height, QImage.Format.Format_ARGB32_Premultiplied)
        return image


def _pen_drawn_as_spans(pen: QPen) -> bool:
    """A pen whose lines, drawn without antialiasing, cover whole pixels of one colour: cosmetic, at
    most a pixel wide, solid, of a plain colour."""
    return (pen.isCosmetic() and pen.widthF() <= 1.0 and pen.style() == Qt.PenStyle.SolidLine
            and pen.brush().style() == Qt.BrushStyle.SolidPattern)


def _drawn_by_qt_raster(device) -> bool:  # type: ignore[no-untyped-def]
    """Qt's raster engine paints on this device: an image, a pixmap, or a plain widget (a widget's
    backing store; not an OpenGL widget)."""
    return type(device) in (QWidget, QImage, QPixmap)


_LABEL_FLAGS = {
    "left": Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter | Qt.TextFlag.TextDontClip,
    "right": Qt.AlignmentFlag.AlignLeft | Qt.AlignmentFlag.AlignVCenter | Qt.TextFlag.TextDontClip,
    "top": Qt.AlignmentFlag.AlignHCenter | Qt.AlignmentFlag.AlignBottom | Qt.TextFlag.TextDontClip,
    "bottom": Qt.AlignmentFlag.AlignHCenter | Qt.AlignmentFlag.AlignTop | Qt.TextFlag.TextDontClip,
}
"""The flags each side's tick labels are drawn with (as pyqtgraph's axis draws them)."""


class _TitledAxis(pg.AxisItem):
    """A pyqtgraph axis whose title, where it is longer than the axis, goes on to more lines
    (centred) rather than being cut: the axis then takes the room of the added lines beside it (a
    plot's left axis is as long as the plot is high, and a long response title with "(log scale)"
    did not fit a plot of a laptop's height). A title that fits is laid out as pyqtgraph lays it out."""

    def resizeEvent(self, ev=None) -> None:  # type: ignore[no-untyped-def]  # noqa: N802 - Qt override
        if self.label is not None and self._wrap_title():
            # the title took another number of lines: the axis takes their room beside it
            if self.orientation in ("left", "right"):
                self._updateWidth()
            else:
                self._updateHeight()
        super().resizeEvent(ev)

    def _updateLabel(self) -> None:  # noqa: N802 - pyqtgraph override
        self.label.setTextWidth(-1)  # a new title is measured on one line, then wrapped to the axis
        super()._updateLabel()
        if self._wrap_title():
            self._adjustSize()

    def _wrap_title(self) -> bool:
        """Wrap the title to the axis' length where it is longer on one line; True when that changed
        its lines."""
        label = self.label
        vertical = self.orientation in ("left", "right")
        length = self.size().height() if vertical else self.size().width()
        before = label.textWidth()
        if before >= 0:
            label.setTextWidth(-1)
        margin = label.document().documentMargin()  # the text lies this far within the title's box
        one_line = label.boundingRect().width() - 2 * margin
        # a pixel less than the axis: pyqtgraph places the title on whole pixels
        wanted = float(length) - 1 + 2 * margin if 0 < length < one_line else -1.0
        if wanted != -1.0:
            option = label.document().defaultTextOption()
            option.setAlignment(Qt.AlignmentFlag.AlignHCenter)
            label.document().setDefaultTextOption(option)
            label.setTextWidth(wanted)
        return wanted != before


class _GridAxis(_TitledAxis):
    """A pyqtgraph axis that draws the same pixels as pyqtgraph's, faster where it has a grid.

    pyqtgraph records an axis as one picture: the axis line, then each tick with its grid line across
    the view (a faint, translucent line), then the tick labels; Qt blends a translucent line into the
    screen pixel by pixel, and the grid took most of the plot's repaint. Here the tick and grid lines
    are drawn on a transparent image (:class:`_GridLayer`) in the source composition mode, which stores
    each covered pixel as the line's colour, through the same transform and the same line drawing, and
    that image is laid over the screen (source over) between the axis line and the labels: each pixel
    a line covers becomes what blending the line there gives (the colour plus the pixel below times one
    less the line's opacity; the same arithmetic in both), and every other pixel is untouched. This
    holds while no two lines share a pixel, so it is used only where the lines are parallel to each
    other, at least one and a half pixels apart, drawn with a cosmetic solid pen at most a pixel wide, without
    antialiasing, through a translation only, on Qt's raster engine (:func:`_drawn_by_qt_raster`); otherwise the axis draws its
    picture as pyqtgraph does. ``tests/app/test_curve_items.py`` compares both ways pixel for pixel."""

    def __init__(self, orientation: str, layer: _GridLayer) -> None:
        super().__init__(orientation)
        self._layer = layer
        self._parts: tuple[object, tuple | None, tuple | None] = (None, None, None)  # type: ignore[type-arg]
        """(the picture, its three parts or None, the drawing's specs while the picture is still empty)"""
        self._bounds_while_recording: QRectF | None = None

    def boundingRect(self) -> QRectF:  # noqa: N802 - Qt override
        # working out the drawing asks for the bounds once per tick label; they do not change meanwhile
        bounds = self._bounds_while_recording
        return QRectF(bounds) if bounds is not None else super().boundingRect()

    def paint(self, p, opt, widget) -> None:  # type: ignore[no-untyped-def]
        if self.picture is None:
            self._record()
        picture, parts, specs = self._parts
        if picture is not self.picture or parts is None or not self._paint_parts(p, *parts):
            if picture is self.picture and specs is not None:
                self._draw_whole_picture(specs)
            self.picture.play(p)

    def _record(self) -> None:
        """The picture pyqtgraph records, or where the lines can be laid over as an image the same
        drawing in three parts (axis line, tick and grid lines, labels). The whole picture is then
        drawn only if it is ever played (on a device the image cannot be laid over): the
        drawing is worked out once, and drawn once."""
        picture = QPicture()
        painter = QPainter(picture)
        specs = None
        try:
            if self.style["tickFont"]:
                painter.setFont(self.style["tickFont"])
            self._bounds_while_recording = super().boundingRect()
            try:
                specs = self.generateDrawSpecs(painter)  # it sizes the axis to its labels only at its end
            finally:
                self._bounds_while_recording = None
            parts = self._split(*specs) if specs is not None else None
            if specs is not None and parts is None:
                self.drawPicture(painter, *specs)
        finally:
            painter.end()
        self.picture = picture
        self._parts = (picture, parts, specs if parts is not None else None)

    def generateDrawSpecs(self, p):  # type: ignore[no-untyped-def]  # noqa: N802 - pyqtgraph override
        """The axis line, the ticks and the tick labels pyqtgraph's ``AxisItem.generateDrawSpecs`` works
        out, the same numbers in the same order (``tests/app/test_axis_specs.py`` compares the two over
        many ranges, sizes and both tick kinds), with less Python per tick: each tick's ends are made
        as plain points, and the label flags, the text offset and the axis' bounds are looked up once
        rather than once per label. An edit works this out for each axis whose range moved (the two
        response axes after a response is edited)."""
        style = self.style
        if style["tickFont"] is not None:
            p.setFont(style["tickFont"])
        bounds = self.mapRectFromParent(self.geometry())
        linked = self.linkedView()
        tick_bounds = bounds if linked is None or self.grid is False else linked.mapRectToItem(self, linked.boundingRect())
        side = self.orientation
        if side == "left":
            span = (bounds.topRight() + QPointF(-1.0, -1.0), bounds.bottomRight() + QPointF(-1.0, 1.0))
            tick_start, tick_stop, tick_dir, axis = tick_bounds.right(), bounds.right(), -1, 0
        elif side == "right":
            span = (bounds.topLeft() + QPointF(1.0, -1.0), bounds.bottomLeft() + QPointF(1.0, 1.0))
            tick_start, tick_stop, tick_dir, axis = tick_bounds.left(), bounds.left(), 1, 0
        elif side == "top":
            span = (bounds.bottomLeft() + QPointF(-1.0, -1.0), bounds.bottomRight() + QPointF(1.0, -1.0))
            tick_start, tick_stop, tick_dir, axis = tick_bounds.bottom(), bounds.bottom(), -1, 1
        elif side == "bottom":
            span = (bounds.topLeft() + QPointF(-1.0, 1.0), bounds.topRight() + QPointF(1.0, 1.0))
            tick_start, tick_stop, tick_dir, axis = tick_bounds.top(), bounds.top(), 1, 1
        else:
            raise ValueError("self.orientation must be in {'left', 'right', 'top', 'bottom'}")
        points = [self.mapToDevice(point) for point in span]
        if None in points:
            return None
        along = points[1] - points[0]
        length = hypot(along.x(), along.y())
        if length == 0:
            return None
        if self._tickLevels is None:
            levels = self.tickValues(self.range[0], self.range[1], length)
            given_strings = None
        else:
            levels = [(None, [value for value, _text in level]) for level in self._tickLevels]
            given_strings = [[text for _value, text in level] for level in self._tickLevels]
        low, high = self.range[0], self.range[1]
        dif = high - low
        if dif == 0:
            scale, offset = 1, 0
        elif axis == 0:
            scale = -bounds.height() / dif
            offset = low * scale - bounds.height()
        else:
            scale = bounds.width() / dif
            offset = low * scale
        ends = [low * scale - offset, high * scale - offset]
        x_min, x_max = min(ends), max(ends)
        positions: list[list[float | None]] = []
        tick_specs = []
        for i, (_spacing, ticks) in enumerate(levels):
            at: list[float | None] = []
            positions.append(at)
            tick_length = style["tickLength"] / ((i * 0.5) + 1.0)
            alpha = style["tickAlpha"]
            if alpha is None:
                alpha = 255 / (i + 1)
                if self.grid is not False:
                    alpha *= self.grid / 255. * pg.functions.clip_scalar((0.05 * length / (len(ticks) + 1)), 0., 1.)
            elif isinstance(alpha, float):
                alpha = min(255, int(round(max(0, int(round(alpha * 255))))))
            elif isinstance(alpha, int):
                if alpha > 255 or alpha < 0:
                    raise ValueError("lineAlpha should be [0..255]")
            else:
                raise TypeError("Line Alpha should be of type None, float or int")
            pen = self.tickPen()
            if pen.brush().style() == Qt.BrushStyle.SolidPattern:
                pen = QPen(pen)
                colour = pen.color()
                colour.setAlpha(int(alpha))
                pen.setColor(colour)
            stop = tick_stop if self.grid is not False else tick_stop + tick_length * tick_dir
            for v in ticks:
                x = (v * scale) - offset
                if x < x_min or x > x_max:
                    at.append(None)
                    continue
                at.append(x)
                if axis == 0:
                    tick_specs.append((pen, QPointF(tick_start, x), QPointF(stop, x)))
                else:
                    tick_specs.append((pen, QPointF(x, tick_start), QPointF(x, stop)))
        if style["stopAxisAtTick"][0] is True:
            first = min(map(min, positions))
            if axis == 0:
                span[0].setY(max(span[0].y(), first))
            else:
                span[0].setX(max(span[0].x(), first))
        if style["stopAxisAtTick"][1] is True:
            last = max(map(max, positions))
            if axis == 0:
                span[1].setY(min(span[1].y(), last))
            else:
                span[1].setX(min(span[1].x(), last))
        axis_spec = (self.pen(), span[0], span[1])
        text_specs: list[tuple] = []  # type: ignore[type-arg]
        if not style["showValues"]:
            return axis_spec, tick_specs, text_specs
        text_offset = style["tickTextOffset"][axis]
        label_offset = max(0, style["tickLength"]) + text_offset
        flags = _LABEL_FLAGS[side]
        own = self.boundingRect()
        measure = p.boundingRect
        square = QRectF(0, 0, 100, 100)
        centre = Qt.AlignmentFlag.AlignCenter
        text_size2 = last_text_size2 = 0
        text_rects: list[QRectF] = []
        for i in range(min(len(levels), style["maxTextLevel"] + 1)):
            if given_strings is None:
                spacing, values = levels[i]
                strings = self.tickStrings(values, self.autoSIPrefixScale * self.scale, spacing)
            else:
                strings = given_strings[i]
            if len(strings) == 0:
                continue
            at = positions[i]
            rects: list[QRectF | None] = []
            for j, s in enumerate(strings):
                if at[j] is None:
                    strings[j] = None
                    rects.append(None)
                    continue
                br = measure(square, centre, s)
                br.setHeight(br.height() * 0.8)
                rects.append(br)
                text_rects.append(br)
            if text_rects:
                if axis == 0:
                    text_size = np.sum([r.height() for r in text_rects])
                    text_size2 = np.max([r.width() for r in text_rects])
                else:
                    text_size = np.sum([r.width() for r in text_rects])
                    text_size2 = np.max([r.height() for r in text_rects])
            else:
                text_size = text_size2 = 0
            if i > 0:
                fill = float(text_size) / length
                if any(len(text_specs) >= n and fill >= limit for n, limit in style["textFillLimits"]):
                    break
            last_text_size2 = text_size2
            for j, text in enumerate(strings):
                if text is None:
                    continue
                x = at[j]
                box = rects[j]
                height, width = box.height(), box.width()
                if side == "left":
                    rect = QRectF(tick_stop - label_offset - width, x - (height / 2), width, height)
                elif side == "right":
                    rect = QRectF(tick_stop + label_offset, x - (height / 2), width, height)
                elif side == "top":
                    rect = QRectF(x - width / 2., tick_stop - label_offset - height, width, height)
                else:
                    rect = QRectF(x - width / 2., tick_stop + label_offset, width, height)
                if own & rect != rect:
                    continue
                text_specs.append((rect, flags, text))
        self._updateMaxTextSize(last_text_size2)
        return axis_spec, tick_specs, text_specs

    def _draw_whole_picture(self, specs: tuple) -> None:  # type: ignore[type-arg]
        """Draw the picture pyqtgraph records (left empty by :meth:`_record`) from its specs, once, on
        the same picture object."""
        painter = QPainter(self.picture)
        try:
            if self.style["tickFont"]:
                painter.setFont(self.style["tickFont"])
            self.drawPicture(painter, *specs)
        finally:
            painter.end()
        self._parts = (self.picture, self._parts[1], None)

    def _split(self, axis_spec, tick_specs, text_specs):  # type: ignore[no-untyped-def]
        vertical = self.orientation in ("left", "right")  # the grid lines run across: horizontal on a left axis
        if not tick_specs or not all(_pen_drawn_as_spans(pen) for pen in {id(pen): pen for pen, _, _ in tick_specs}.values()):
            return None
        if vertical:
            if any(a.y() != b.y() for _, a, b in tick_specs):
                return None
            across = sorted(a.y() for _, a, _ in tick_specs)
        else:
            if any(a.x() != b.x() for _, a, b in tick_specs):
                return None
            across = sorted(a.x() for _, a, _ in tick_specs)
        if any(b - a < 1.5 for a, b in zip(across, across[1:])):
            # Two lines might share a pixel. A line one pixel wide, parallel to an axis and drawn
            # without antialiasing, covers one row (or column) of pixels, the one its position rounds
            # to; positions a pixel and more apart round to different rows, whatever the rounding
            # (its fixed-point steps are 1/64 pixel), and 1.5 leaves room for that.
            return None
        line, ticks, labels = QPicture(), QPicture(), QPicture()
        bounds = QRectF()
        # as AxisItem.drawPicture draws them, each part on its own picture
        painter = QPainter(line)
        try:
            self._set_up_as_drawn(painter)
            pen, p1, p2 = axis_spec
            painter.setPen(pen)
            painter.drawLine(p1, p2)
        finally:
            painter.end()
        painter = QPainter(ticks)
        try:
            painter.setRenderHint(QPainter.RenderHint.Antialiasing, False)
            for pen, p1, p2 in tick_specs:
                painter.setPen(pen)
                painter.drawLine(p1, p2)
                bounds |= QRectF(p1, p2).normalized()
        finally:
            painter.end()
        painter = QPainter(labels)
        try:
            self._set_up_as_drawn(painter)
            painter.setPen(self.textPen())
            painter.setClipRect(self.boundingRect().toAlignedRect())
            for rect, flags, text in text_specs:
                painter.drawText(rect, int(flags), text)
        finally:
            painter.end()
        return line, ticks, labels, bounds.adjusted(-2.0, -2.0, 2.0, 2.0)

    def _set_up_as_drawn(self, painter: QPainter) -> None:
        """The font and render hints AxisItem.drawPicture sets before the axis line and the labels."""
        if self.style["tickFont"]:
            painter.setFont(self.style["tickFont"])
        painter.setRenderHint(QPainter.RenderHint.Antialiasing, False)
        painter.setRenderHint(QPainter.RenderHint.TextAntialiasing, True)

    def _paint_parts(self, p, line, ticks, labels, bounds) -> bool:  # type: ignore[no-untyped-def]
        device = p.deviceTransform()
        world = p.worldTransform()
        if (not _drawn_by_qt_raster(p.device())
                or device.type().value > QTransform.TransformationType.TxTranslate.value
                or world.type().value > QTransform.TransformationType.TxTranslate.value
                or p.testRenderHint(QPainter.RenderHint.Antialiasing)):
            return False
        # where the lines fall in device pixels, and the offset of the device from the painter's
        # coordinates once the item's own translation is undone (a whole number of pixels)
        area = device.mapRect(bounds).toAlignedRect()
        shift_x, shift_y = round(device.dx() - world.dx()), round(device.dy() - world.dy())
        if (area.left() < 0 or area.top() < 0 or abs(device.dx() - world.dx() - shift_x) > 1e-6
                or abs(device.dy() - world.dy() - shift_y) > 1e-6):
            return False
        image = self._layer.covering(area.right() + 1, area.bottom() + 1)
        layer = QPainter(image)
        try:
            layer.setCompositionMode(QPainter.CompositionMode.CompositionMode_Source)
            layer.fillRect(area, Qt.GlobalColor.transparent)
            layer.setTransform(device)
            layer.setRenderHint(QPainter.RenderHint.Antialiasing, False)
            ticks.play(layer)
        finally:
            layer.end()
        line.play(p)
        p.save()
        try:
            p.resetTransform()
            p.drawImage(QPoint(area.left() - shift_x, area.top() - shift_y), image, area)
        finally:
            p.restore()
        labels.play(p)
        return True


def _holds(item, *data) -> bool:  # type: ignore[no-untyped-def]
    """The plot item holds these values already (x and y, the same numbers of the same type): given
    them again, pyqtgraph would only work everything out anew and mark the item changed (the
    acceptance limits, after a response is edited)."""
    if len(data) != 2 or not isinstance(item, pg.PlotDataItem) or item.xData is None or item.yData is None:
        return False
    x, y = np.asarray(data[0]), np.asarray(data[1])
    return (x.dtype == item.xData.dtype and y.dtype == item.yData.dtype
            and np.array_equal(x, item.xData) and np.array_equal(y, item.yData))


class _KeptPlot:
    """A plot whose items are made once, shown or hidden, and given new data; its legend is built
    again only when its entries change. Its axes are styled, labelled and ticked on every drawing,
    in the order the record's drawing functions do it (an axis sizes itself to what it last drew)."""

    def __init__(self, plot: pg.PlotItem, legend: pg.LegendItem) -> None:
        self.plot, self.legend = plot, legend
        self._entries: list[tuple[object, str]] = []
        self._shown: set[int] = set()
        self._labelled: tuple[str, str, bool, bool] | None = None
        self._pictures: dict[str, tuple[object, tuple]] = {}  # type: ignore[type-arg]

    def add(self, item, ignore_bounds: bool = False):  # type: ignore[no-untyped-def]
        if isinstance(item, pg.PlotDataItem) and item.opts["pen"] is None:
            # Points only: with its range limit pyqtgraph gives such an item its data again whenever
            # the vertical range changes, rebuilding every point a second time on each redraw. The
            # limit keeps lines that run far outside a zoomed view drawable; points are drawn one
            # by one, and after autoranging every point lies in the view, so they look the same.
            item.setDynamicRangeLimit(None)
            # all its points have one style: looked up once per drawing, not once per point
            scatter = item.scatter
            scatter.updateSpots = lambda dataSet=None: _update_spots_of_one_style(scatter, dataSet)  # noqa: N803
        elif isinstance(item, pg.PlotDataItem):
            # a line keeps its range limit; it is given its data again only where the limit clips
            # (connected when the item joins the plot, so set before)
            item.viewRangeChanged = _following_the_range(item)
        self.plot.addItem(item, ignoreBounds=ignore_bounds)
        item.hide()
        return item

    def begin(self) -> None:
        self._shown = set()
        self._legend_wanted: list[tuple[object, str]] = []
        # each axis's picture as last painted, with what it was drawn from (see keep_unchanged_axes)
        self._pictures = {side: (axis.picture, _axis_state(axis)) for side in ("bottom", "left")
                          if (axis := self.plot.getAxis(side)).picture is not None}
        for side in ("bottom", "left"):  # as a cleared plot starts
            self.ticks(side, None)

    def keep_unchanged_axes(self) -> None:
        """Give back to each axis the picture it was last painted with when it is drawn from the same
        range, ticks, labels, style and geometry as then (once the view's ranges are worked out): the
        drawing restyles, labels and ticks every axis, which has pyqtgraph draw its picture anew, but an
        axis whose range did not change (the concentrations' axis, after a response is edited) would be
        drawn the same."""
        for side, (picture, state) in self._pictures.items():
            axis = self.plot.getAxis(side)
            if axis.picture is None and _axis_state(axis) == state:
                axis.picture = picture
        self._pictures = {}

    def show(self, item, *data, name: str | None = None, legend_item=None, named: bool = False, **options):  # type: ignore[no-untyped-def]
        """Give ``item`` its data (positional for a PlotDataItem, keywords for an ErrorBarItem) and show it;
        ``name`` is its legend entry, and ``named`` gives the item that name too (as the drawing functions do)."""
        if named:
            item.opts["name"] = name
        if data:
            if not _holds(item, *data):
                item.setData(*data)
        elif options:
            item.setData(**options)
        item.show()
        self._shown.add(id(item))
        if name is not None:
            self._legend_wanted.append((legend_item or item, name))
        return item

    def finish(self, items) -> bool:  # type: ignore[no-untyped-def]
        """Hide the items not shown in this drawing; True when the legend's entries changed (then
        :meth:`rebuild_legend`)."""
        for item in items:
            if id(item) not in self._shown and item.isVisible():
                item.hide()
        return [(id(i), t) for i, t in self._legend_wanted] != [(id(i), t) for i, t in self._entries]

    def rebuild_legend(self) -> None:
        self.legend.clear()
        for item, text in self._legend_wanted:
            self.legend.addItem(item, text)
        self._entries = self._legend_wanted

    def labels(self, x_label: str, y_label: str, log_x: bool = False, log_y: bool = False) -> None:
        """The axis labels, set on every drawing and in the order the drawing functions set them
        (setting a label also sizes its axis to the tick texts last drawn, so the plots keep the
        widths they had). Labels as set last time are not set again: each axis is only sized to the tick
        texts it last drew, which is all setting them again would change."""
        if self._labelled == (x_label, y_label, log_x, log_y):
            for side in ("bottom", "left"):
                self.plot.getAxis(side)._adjustSize()
        else:
            self._labelled = (x_label, y_label, log_x, log_y)
            figures.styled_plot(self.plot, x_label, y_label)
            if log_x:
                self.plot.setLabel("bottom", x_label + " (log scale)")
            if log_y:
                self.plot.setLabel("left", y_label + " (log scale)")
        for side in ("bottom", "left"):
            axis = self.plot.getAxis(side)
            if axis.autoSIPrefixScale != 1.0 or axis.labelUnitPrefix:
                # Turning the SI prefix off on an axis that shows its label makes pyqtgraph keep a
                # scale worked out from the range then shown (the residuals' thousandths), which would
                # then label 0.004 as "4" with no sign of it: the values are labelled as they are.
                axis.autoSIPrefixScale, axis.labelUnitPrefix = 1.0, ""
                axis._updateLabel()

    def ticks(self, side: str, ticks) -> None:  # type: ignore[no-untyped-def]
        self.plot.getAxis(side).setTicks(ticks)


class _CurveItems(_KeptPlot):
    """The items of the calibration plot, in the order :func:`figures.draw_curve` adds them."""

    def __init__(self, plot: pg.PlotItem, legend: pg.LegendItem) -> None:
        super().__init__(plot, legend)
        self.confidence_upper = pg.PlotDataItem(pen=None)
        self.confidence_lower = pg.PlotDataItem(pen=None)
        self.confidence = self.add(pg.FillBetweenItem(self.confidence_upper, self.confidence_lower,
                                                      brush=pg.mkBrush(*palette.CONFIDENCE_FILL)))
        self.confidence_sample = pg.BarGraphItem(x=[0], height=[0], width=0, brush=pg.mkBrush(*palette.CONFIDENCE_FILL))
        dashed = pg.mkPen(palette.PREDICTION, width=1.2, style=Qt.PenStyle.DashLine)
        self.prediction_upper = self.add(pg.PlotDataItem(pen=dashed))
        self.prediction_lower = self.add(pg.PlotDataItem(pen=dashed))
        self.curve = self.add(pg.PlotDataItem(pen=pg.mkPen(palette.CURVE, width=2)))
        self.regions = [self.add(pg.LinearRegionItem(values=(0, 1), movable=False, brush=pg.mkBrush(*palette.RANGE_SHADE),
                                                     pen=pg.mkPen(None))) for _ in range(2)]
        loq_pen = pg.mkPen(palette.LIMIT, style=Qt.PenStyle.DotLine, width=1.5)
        self.loq = self.add(pg.InfiniteLine(pos=0, angle=90, pen=loq_pen))
        self.loq_sample = pg.PlotDataItem([0], [0], pen=loq_pen)
        self.standards = self.add(pg.PlotDataItem(pen=None, symbol=palette.SYMBOL_INCLUDED, symbolSize=8,
                                                  symbolBrush=palette.INCLUDED, symbolPen=pg.mkPen("w", width=0.8)))
        self.excluded = self.add(pg.PlotDataItem(pen=None, symbol=palette.SYMBOL_EXCLUDED, symbolSize=10, symbolBrush=None,
                                                 symbolPen=pg.mkPen(palette.EXCLUDED, width=2)))
        self.excluded_cross = self.add(pg.PlotDataItem(pen=None, symbol="x", symbolSize=7, symbolBrush=palette.EXCLUDED,
                                                       symbolPen=None))
        self.samples = {}
        from ..core.run import SampleKind

        for kind, colour, symbol in ((SampleKind.UNKNOWN, palette.UNKNOWN, palette.SYMBOL_UNKNOWN),
                                     (SampleKind.QC, palette.QC, palette.SYMBOL_QC)):
            bars = self.add(pg.ErrorBarItem(x=None, y=None, beam=0, pen=pg.mkPen(colour, width=1.5)))
            points = self.add(pg.PlotDataItem(pen=None, symbol=symbol, symbolSize=9, symbolBrush=colour,
                                              symbolPen=pg.mkPen("w", width=0.6)))
            self.samples[kind] = (bars, points)
        # drawn last, as figures.draw_anchor_points rings them after draw_curve
        self.anchors = self.add(pg.PlotDataItem(pen=None, symbol=palette.SYMBOL_ANCHOR, symbolSize=17, symbolBrush=None,
                                                symbolPen=pg.mkPen(palette.ANCHOR, width=2)))
        self.items = [self.confidence, self.prediction_upper, self.prediction_lower, self.curve, *self.regions,
                      self.loq, self.standards, self.excluded, self.excluded_cross,
                      *(item for pair in self.samples.values() for item in pair), self.anchors]

    def draw(self, a: AnalyteResult, *, level: float, show_confidence: bool, show_prediction: bool,
             log_x: bool) -> bool:
        """What :func:`figures.draw_curve_with_anchors` draws for ``a``, on the kept items; True when the legend
        changed."""
        from ..core.curve_trace import curve_trace
        from ..core.run import SampleKind

        self.begin()
        cal = a.calibration
        x_label = _concentration_label(a)
        y_label = f"Response ({a.analyte.response_unit})" if a.analyte.response_unit else "Response"
        low, high = cal.calibrated_range
        log_y = log_x and bool(np.all(cal.response > 0))
        if log_x and low <= 0:  # a blank at the bottom of the range has no place on a log axis
            low = float(cal.concentration[cal.concentration > 0].min())
        self.labels(x_label, y_label, log_x, log_y)
        self.ticks("bottom", _decade_ticks(low, high) if log_x else None)
        self.ticks("left", _decade_ticks(float(cal.response.min()), float(cal.response.max())) if log_y else None)
        tx = _log10 if log_x else _as_float
        ty = _log10 if log_y else _as_float
        trace = curve_trace(cal, level=level, log_spacing=log_x)
        x = tx(trace.concentration)
        low, high = float(tx(low)), float(tx(high))
        finite = figures._finite
        if show_confidence:
            # the band's outline is made once from both new edges (each edge given its data would
            # otherwise have it made again, the first time with the other edge's old data)
            for edge, edge_y in ((self.confidence_upper, trace.confidence_upper),
                                 (self.confidence_lower, trace.confidence_lower)):
                edge.blockSignals(True)
                try:
                    edge.setData(*finite(x, ty(edge_y)))
                finally:
                    edge.blockSignals(False)
            self.confidence.updatePath()
            self.show(self.confidence, name=f"{percent_label(level)} confidence band", legend_item=self.confidence_sample)
        if show_prediction:
            self.show(self.prediction_upper, *finite(x, ty(trace.prediction_upper)), name=f"{percent_label(level)} prediction band", named=True)
            self.show(self.prediction_lower, *finite(x, ty(trace.prediction_lower)))
        self.show(self.curve, *finite(x, ty(trace.response)), name="fitted curve", named=True)
        low, high = figures.shaded_ends(a, low, high, tx)
        for item, region in zip(self.regions, ((x.min(), low), (high, x.max()))):
            if region[1] > region[0]:
                item.setRegion(region)
                self.show(item)
        if a.limits is not None and a.limits.loq is not None and a.limits.loq > 0 and tx(a.limits.loq) > x.min():
            self.loq.setValue(float(tx(a.limits.loq)))
            self.show(self.loq, name="LOQ", legend_item=self.loq_sample)
        shown = cal.concentration > 0 if log_x else np.ones(cal.n_standards, dtype=bool)
        self.show(self.standards, tx(cal.concentration[shown]), ty(cal.response[shown]), name="standard in the fit",
                  named=True)
        ex_x, ex_y = figures.excluded_points(a, tx, ty, log_x, log_y)
        if ex_x:
            self.show(self.excluded, ex_x, ex_y, name="standard excluded", named=True)
            self.show(self.excluded_cross, ex_x, ex_y)
        for kind, label in ((SampleKind.UNKNOWN, "unknown"), (SampleKind.QC, "QC sample")):
            drawn = figures.sample_points(a, kind, tx, ty, log_x, log_y)
            if drawn is None:
                continue
            sx, sy, lo, hi = drawn
            bars, points = self.samples[kind]
            self.show(bars, x=sx, y=sy, left=sx - lo, right=hi - sx)
            self.show(points, sx, sy, name=f"{label} with interval", named=True)
        anchors = getattr(cal, "anchors", None)
        if anchors is not None and np.any(anchors):
            ringed = anchors & (cal.concentration > 0) if log_x else anchors
            self.show(self.anchors, tx(cal.concentration[ringed]), ty(cal.response[ringed]),
                      name="anchor point (fitted, not judged)", named=True)
        return self.finish(self.items)


class _LowerItems(_KeptPlot):
    """The items of the plot below the curve: relative errors with their acceptance limits, in the
    order :func:`figures.draw_relative_errors` adds them, or residuals as
    :func:`figures.draw_residuals` draws them."""

    def __init__(self, plot: pg.PlotItem, legend: pg.LegendItem) -> None:
        super().__init__(plot, legend)
        limit_pen = pg.mkPen(palette.LIMIT, width=1.2, style=Qt.PenStyle.DashLine)
        self.limit_upper = self.add(pg.PlotDataItem(stepMode="center", pen=limit_pen))
        self.limit_lower = self.add(pg.PlotDataItem(stepMode="center", pen=limit_pen))
        self.re_zero = self.add(pg.InfiniteLine(pos=0, angle=0, pen=pg.mkPen("#777777", width=1)))
        self.passing = self.add(pg.PlotDataItem(pen=None, symbol=palette.SYMBOL_INCLUDED, symbolSize=8,
                                                symbolBrush=palette.INCLUDED, symbolPen=pg.mkPen("w", width=0.8)))
        self.failing = self.add(pg.PlotDataItem(pen=None, symbol="star", symbolSize=12, symbolBrush=palette.FLAGGED,
                                                symbolPen=None))
        self.residual_zero = self.add(pg.InfiniteLine(pos=0, angle=0, pen=pg.mkPen("#777777", width=1)))
        self.residuals = self.add(pg.PlotDataItem(pen=None, symbol=palette.SYMBOL_INCLUDED, symbolSize=8,
                                                  symbolBrush=palette.INCLUDED, symbolPen=pg.mkPen("w", width=0.8)))
        self.items = [self.limit_upper, self.limit_lower, self.re_zero, self.passing, self.failing,
                      self.residual_zero, self.residuals]

    def _axis(self, cal, log_x: bool):  # type: ignore[no-untyped-def]
        positive = cal.concentration[cal.concentration > 0]
        span = (float(positive.min()), float(positive.max())) if log_x and positive.size else None
        self.ticks("bottom", _decade_ticks(*span) if span is not None else None)
        return _log10 if log_x else _as_float

    def draw_relative_errors(self, a: AnalyteResult, *, log_x: bool) -> bool:
        self.begin()
        self.ticks("left", None)
        cal, verdict = a.calibration, a.verdict
        if cal is None or verdict is None:
            self.labels(_concentration_label(a), "%RE")
            self.ticks("bottom", None)
            return self.finish(self.items)
        self.labels(_concentration_label(a), "%RE", log_x)
        tx = self._axis(cal, log_x)
        x = tx(cal.concentration)
        steps = figures.acceptance_steps(x, verdict)
        if steps is not None:
            edges, tol_at = steps
            self.show(self.limit_upper, edges, tol_at, name="acceptance limit", named=True)
            self.show(self.limit_lower, edges, -tol_at)
        self.show(self.re_zero)
        judged = verdict.judged & np.isfinite(cal.relative_error)
        passing = judged & verdict.passing
        failing = judged & ~verdict.passing
        self.show(self.passing, x[passing], cal.relative_error[passing], name="within limits")
        if failing.any():
            self.show(self.failing, x[failing], cal.relative_error[failing], name="outside the limits")
        return self.finish(self.items)

    def draw_residuals(self, a: AnalyteResult, *, log_x: bool) -> bool:
        self.begin()
        self.ticks("left", None)
        self.labels(_concentration_label(a), f"Residual ({a.analyte.response_unit})" if a.analyte.response_unit else "Residual")
        cal = a.calibration
        if cal is None:
            self.ticks("bottom", None)
            return self.finish(self.items)
        tx = self._axis(cal, log_x)
        keep = cal.concentration > 0 if log_x else np.ones(cal.n_standards, dtype=bool)
        self.show(self.residual_zero)
        self.show(self.residuals, tx(cal.concentration[keep]), cal.residuals[keep], name="standard in the fit")
        return self.finish(self.items)


def _same_when_inactive(graphics: pg.GraphicsLayoutWidget) -> QGraphicsItem:
    """Keep the window's activation from repainting the plots, which look the same either way.

    When the window is deactivated or activated again (a dialog opens or closes: the reason asked
    for a typed response), Qt repaints a widget whose palette has other colours for an inactive
    window, and the scene tells its top-level item, the layout that holds the plots, which as any Qt
    graphics widget marks all of itself for repainting whatever its palette. After a typed edit the
    plots were so painted whole when the dialog opened and again when it closed. They draw with their
    own pens, brushes, text colours and background, never the palette's (the view has no frame and
    no scroll bars), so they look the same in an inactive window (``tests/app/test_repaint_scope.py``
    compares them). The view's palette is given the same colours in both states, and the layout is
    not told of the activation (the scene itself still follows it). Returns the item that filters
    the layout's events (it draws nothing and takes no room)."""
    palette = graphics.palette()
    for role in QPalette.ColorRole:
        if role is not QPalette.ColorRole.NColorRoles:  # every group set, so none follows the window's
            palette.setBrush(QPalette.ColorGroup.All, role, palette.brush(QPalette.ColorGroup.Active, role))
    graphics.setPalette(palette)
    return _ActivationFilter(graphics.ci)


class _ActivationFilter(QGraphicsObject):
    """Filters the window's activation and deactivation out of what an item is sent (see
    :func:`_same_when_inactive`)."""

    _ACTIVATION = (QEvent.Type.WindowActivate, QEvent.Type.WindowDeactivate)

    def __init__(self, item: QGraphicsItem) -> None:
        super().__init__()
        self.setFlag(QGraphicsItem.GraphicsItemFlag.ItemHasNoContents, True)
        item.scene().addItem(self)
        item.installSceneEventFilter(self)

    def boundingRect(self) -> QRectF:  # noqa: N802 - Qt override
        return QRectF()

    def paint(self, painter, option, widget=None) -> None:  # type: ignore[no-untyped-def]
        return None

    def sceneEventFilter(self, watched, event) -> bool:  # type: ignore[no-untyped-def]  # noqa: N802 - Qt override
        return event.type() in self._ACTIVATION


class _Words(QWidget):
    """A word-wrapped, selectable text, laid out exactly as the label it holds would be.

    A label laid out with the view tells the layouts above it that its size may have changed with
    every new text, and the window was laid out again and partly repainted after each redraw. The
    box answers the label's size hints and height for a width, and tells its layout of a change only
    when a new text changes where the words go (another number of lines, a longer word: see
    :meth:`_hints`); otherwise the text is only repainted."""

    def __init__(self, name: str) -> None:
        super().__init__()
        self.label = QLabel("", self)
        self.label.setWordWrap(True)
        self.label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        self.label.setAccessibleName(name)
        self.setSizePolicy(self.label.sizePolicy())
        self._kept_hints: tuple[str, int, QFont, tuple[QSize, int]] | None = None

    def text(self) -> str:
        return self.label.text()

    def setText(self, text: str) -> None:  # noqa: N802 - as QLabel
        if text == self.label.text():
            return
        kept = self._kept_hints  # the hints after the last new text, while its text, width and font are the same
        before = kept[3] if kept is not None and kept[:3] == (self.label.text(), self.width(), self.label.font()) \
            else self._hints()
        self.label.setText(text)
        after = self._hints()
        self._kept_hints = (text, self.width(), self.label.font(), after)
        if after != before:
            self.updateGeometry()

    def _hints(self) -> tuple[QSize, int]:
        """What the words' place in the view depends on: the smallest size the label takes, and its
        height at the width it has (the view's layout gives it that height; its preferred size, which
        moves with nearly every text, only adds to the view's preferred size and is told with the next
        change that moves anything)."""
        label = self.label
        return label.minimumSizeHint(), label.heightForWidth(self.width())

    def resizeEvent(self, event) -> None:  # type: ignore[no-untyped-def]  # noqa: N802 - Qt override
        super().resizeEvent(event)
        self.label.setGeometry(self.rect())

    def sizeHint(self) -> QSize:  # noqa: N802 - Qt override
        return self.label.sizeHint()

    def minimumSizeHint(self) -> QSize:  # noqa: N802 - Qt override
        return self.label.minimumSizeHint()

    def hasHeightForWidth(self) -> bool:  # noqa: N802 - Qt override
        return self.label.hasHeightForWidth()

    def heightForWidth(self, width: int) -> int:  # noqa: N802 - Qt override
        return self.label.heightForWidth(width)


class CurveView(QWidget):
    """The curve above, relative errors or residuals below."""

    options_changed = Signal()

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.analyte: AnalyteResult | None = None
        self.level = 0.95
        self.graphics = pg.GraphicsLayoutWidget()
        self.graphics.setBackground("w")
        grid_layer = _GridLayer()
        self.curve_plot = self.graphics.addPlot(row=0, col=0, axisItems={
            side: _GridAxis(side, grid_layer) for side in ("left", "bottom")})
        self.lower_plot = self.graphics.addPlot(row=1, col=0, axisItems={
            side: _GridAxis(side, grid_layer) for side in ("left", "bottom")})
        # the legends sit in a column of their own, beside the data, never over it
        self.curve_legend = figures.new_legend()
        self.lower_legend = figures.new_legend()
        figures.legend_beside(self.graphics.ci, self.curve_legend, row=0)
        figures.legend_beside(self.graphics.ci, self.lower_legend, row=1)
        self.graphics.ci.layout.setRowStretchFactor(0, 3)
        self.graphics.ci.layout.setRowStretchFactor(1, 2)
        # each plot keeps room for its data (four text lines high) and its legend beside it whole;
        # the view asks its window for that height (see _fit_plot_heights)
        for plot in (self.curve_plot, self.lower_plot):
            plot.getViewBox().setMinimumHeight(4 * self.fontMetrics().height())
        self.confidence = QCheckBox("&Confidence band")
        self.prediction = QCheckBox("&Prediction band")
        self.log_axis = QCheckBox("&Log concentration axis")
        for box in (self.confidence, self.prediction):
            box.setChecked(True)
        self.lower_kind = QComboBox()
        self.lower_kind.addItems(["Relative error (%) with acceptance limits", "Residuals (response units)"])
        self.lower_kind.setAccessibleName("Lower plot")
        self.empty_note = QLabel("")
        self.curve_words = _Words("The fitted curve: equation and parameters")
        # the options in one row where the view is wide enough, else on as many rows as they need
        # (never squeezed below their texts); the lower plot's choice stays beside its label
        below = QWidget()
        below_row = QHBoxLayout(below)
        below_row.setContentsMargins(0, 0, 0, 0)
        below_row.addWidget(QLabel("Below:"))
        below_row.addWidget(self.lower_kind)
        controls = FlowRow()
        for w in (self.confidence, self.prediction, self.log_axis, below):
            controls.addWidget(w)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.addLayout(controls)
        layout.addWidget(self.empty_note)
        layout.addWidget(self.curve_words)
        layout.addWidget(self.graphics, 1)
        for box in (self.confidence, self.prediction, self.log_axis):
            box.toggled.connect(self.redraw)
        self.lower_kind.currentIndexChanged.connect(self.redraw)
        for plot in (self.curve_plot, self.lower_plot):
            for side in ("right", "top"):
                # hidden, but pyqtgraph works out a unit prefix for their labels at every new range
                # (the label's text laid out again each time)
                plot.getAxis(side).enableAutoSIPrefix(False)
        self.curve_items = _CurveItems(self.curve_plot, self.curve_legend)
        self.lower_items = _LowerItems(self.lower_plot, self.lower_legend)
        # the items whose bounds follow the view's range: pyqtgraph's lines across the view and shaded
        # ranges (with their edge lines) work their bounds out when asked and then mark themselves changed
        following = [item for kept in (self.curve_items, self.lower_items) for item in kept.items
                     if isinstance(item, (pg.InfiniteLine, pg.LinearRegionItem))]
        self._view_following = following + [line for item in following if isinstance(item, pg.LinearRegionItem)
                                             for line in item.lines]
        self._hover_source: tuple[AnalyteResult, bool] | None = None
        self._hover_cache: list[tuple[float, float, str]] | None = None
        self._proxy = pg.SignalProxy(self.graphics.scene().sigMouseMoved, rateLimit=30, slot=self._on_mouse)
        self._activation_filter = _same_when_inactive(self.graphics)
        self._smallest_height: int | None = None
        """The height the view needs at its width, as last told to its layout (see :meth:`resizeEvent`)."""

    @property
    def _hover_points(self) -> list[tuple[float, float, str]]:
        """The points hovering can name, worked out when first asked for after a redraw."""
        if self._hover_cache is None:
            self._hover_cache = [] if self._hover_source is None else self._points(*self._hover_source)
        return self._hover_cache

    def show_analyte(self, analyte: AnalyteResult | None, level: float) -> None:
        self.analyte = analyte
        self.level = level
        if analyte is not None and not self.log_axis.isChecked() and figures.wide_range(analyte):
            self.log_axis.blockSignals(True)
            self.log_axis.setChecked(True)
            self.log_axis.blockSignals(False)
        self.redraw()

    def redraw(self) -> None:
        """Give the kept plot items the shown analyte's data (see the module's note)."""
        a = self.analyte
        self._hover_cache = None
        if a is None or a.calibration is None:
            self.empty_note.setText("No curve: " + (a.error if a is not None and a.error else "no standards yet."))
            self.curve_words.setText("")
            self._hover_source = None
            for kept in (self.curve_items, self.lower_items):
                kept.begin()
                kept.ticks("bottom", None)
                kept.ticks("left", None)
                kept.finish(kept.items)
                kept.rebuild_legend()
            self._fit_legends()
            return
        self.empty_note.setText("")
        from ..io.model_outputs import curve_words  # the engine loads on the analysis thread, not with the window

        self.curve_words.setText(curve_words(a.calibration, a.analyte.uses_internal_standard))
        log_x = self.log_axis.isChecked()
        changed = self.curve_items.draw(a, level=self.level, show_confidence=self.confidence.isChecked(),
                                        show_prediction=self.prediction.isChecked(), log_x=log_x)
        if self.lower_kind.currentIndex() == 0:
            changed |= self.lower_items.draw_relative_errors(a, log_x=log_x)
        else:
            changed |= self.lower_items.draw_residuals(a, log_x=log_x)
        if changed:  # both legends are built again and share one width, as the two plots share one axis
            self.curve_items.rebuild_legend()
            self.lower_items.rebuild_legend()
            self._fit_legends()
        self._hover_source = (a, log_x)
        self.curve_plot.getViewBox().autoRange(padding=0.04)
        self.lower_plot.getViewBox().autoRange(padding=0.08)
        self._settle_before_paint()
        for kept in (self.curve_items, self.lower_items):
            kept.keep_unchanged_axes()
        self.options_changed.emit()

    def _settle_before_paint(self) -> None:
        """Work out now what pyqtgraph otherwise works out at the start of the next paint: the view
        boxes' ranges and transforms, and the bounds of the items that follow them (lines across the
        view, shaded ranges). Worked out during the paint, they mark those items changed again, and
        the plot was painted a second time after every redraw. The same values either way. (Other
        items work their bounds out when painted without marking anything changed.)"""
        self.graphics.scene().prepareForPaint()
        for item in self._view_following:
            if item.isVisible():
                item.boundingRect()

    def _fit_legends(self) -> None:
        # both legends take the wider one's width, so that the two plots keep one concentration axis
        legends = (self.curve_legend, self.lower_legend)
        width = max(figures.fit_legend(self.graphics.ci, legend) for legend in legends)
        for legend in legends:
            legend.setFixedWidth(width)
        self._fit_plot_heights()

    def _fit_plot_heights(self) -> None:
        """Ask for the height the plots need at the least: each plot's row as tall as its legend, and
        as its axes and four text lines of data. (A graphics view tells its layout nothing of the
        items it shows: without this the window let the lower plot shrink to a line and cut the
        legends.)"""
        from math import ceil

        needed = self.graphics.ci.effectiveSizeHint(Qt.SizeHint.MinimumSize).height()
        self.graphics.setMinimumHeight(ceil(needed) + 2 * self.graphics.frameWidth())

    def minimumSizeHint(self) -> QSize:  # noqa: N802 - Qt override
        """The smallest size of the view at its width: the options take more rows when narrow."""
        hint = super().minimumSizeHint()
        if self.width() > 0:
            hint.setHeight(max(hint.height(), self.heightForWidth(self.width())))
        return hint

    def heightForWidth(self, width: int) -> int:  # noqa: N802 - Qt override
        """The height the view needs at ``width`` (its options' rows, the words' lines, the plots'
        smallest height); any more height goes to the plots."""
        return self.layout().minimumHeightForWidth(width)

    def resizeEvent(self, event) -> None:  # type: ignore[no-untyped-def]  # noqa: N802 - Qt override
        super().resizeEvent(event)
        if event.size().width() != event.oldSize().width():
            smallest = self.layout().minimumHeightForWidth(self.width())
            if smallest != self._smallest_height:
                self._smallest_height = smallest
                self.updateGeometry()  # the options took another number of rows

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
                        f"standard {s.id}{' (anchor point: fitted, not judged)' if s.anchor else ''}: nominal {entered(s.concentration)} {unit}, response {sig_figures(cal.response[i], 6)}, "
                        f"back-calculated {sig_figures(cal.back_calculated[i], 5)} ({signed_text(float(cal.relative_error[i]), 2)} %)"))
        for s in a.excluded_standards:
            used, _ = response_value(s.response, s.internal_standard_response, a.analyte.uses_internal_standard)
            if used is not None and (s.concentration > 0 or not log_x) and (used > 0 or not log_y):
                out.append((tx(s.concentration), ty(used), f"standard {s.id} (excluded: {s.exclusion_reason}): "
                                                           f"nominal {entered(s.concentration)} {unit}, response {sig_figures(used, 6)}"))
        columns = a.sample_columns  # read as columns: no result object is made per sample
        if columns is None:
            return out
        from ..core.run_analysis import flag_words_of

        estimated = np.flatnonzero(columns.quantified & ~np.isnan(columns.estimate)).tolist()
        estimate, mean = columns.estimate.tolist(), columns.mean_response.tolist()
        lower, upper = columns.lower.tolist(), columns.upper.tolist()
        for i in estimated:
            if (log_x and estimate[i] <= 0) or (log_y and mean[i] <= 0):
                continue
            out.append((tx(estimate[i]), ty(mean[i]), f"{columns.kinds[i].named(columns.ids[i])}: {sig_figures(estimate[i], 5)} {unit} "
                        f"({sig_figures(lower[i], 5)} to {sig_figures(upper[i], 5)}); {flag_words_of(columns.words[i], columns.notes[i])}"))
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
        self.plot = self.widget.addPlot(row=0, col=0, axisItems={side: _TitledAxis(side) for side in ("left", "bottom")})
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
