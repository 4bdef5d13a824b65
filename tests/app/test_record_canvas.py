"""The record draws all its figures, one after another, on one off-screen canvas. Each figure must
look exactly as the same figure drawn on a widget of its own: nothing of the figures drawn before it
(items, legend entries, ranges, tick labels, the room kept for tick labels, an axis scale) may show.
"""

from __future__ import annotations

import numpy as np
import pytest
from PySide6.QtCore import QRectF
from PySide6.QtGui import QColor, QImage, QPainter

from curvewright.app import figures, report_pdf
from curvewright.app.additions_view import draw_additions
from curvewright.core.run_analysis import analyse_run
from curvewright.io.run_document import open_run
from tests.io.helpers import DEMO_RUNS

DRAW = {"curve": figures.draw_curve_with_anchors, "residuals": figures.draw_relative_errors,
        "influence": figures.draw_influence, "additions": draw_additions}


def pixels(figure: figures.Figure) -> np.ndarray:
    """The figure painted at its own size, as an array of pixels."""
    image = QImage(figure.width, figure.height, QImage.Format.Format_ARGB32)
    image.fill(QColor("white"))
    painter = QPainter(image)
    figure.paint(painter, QRectF(0, 0, figure.width, figure.height))
    painter.end()
    data = image.constBits()
    return np.frombuffer(data, dtype=np.uint8, count=image.sizeInBytes()).reshape(image.height(), -1).copy()


def record_figures():  # type: ignore[no-untyped-def]
    """(kind, analyte, options) of the figures the demo runs' records draw: each analyte's curve, relative
    errors and influence, and its standard-addition series."""
    for document in DEMO_RUNS:
        result = analyse_run(open_run(document).run)
        level = result.run.settings.confidence_level
        for a in result.analytes:
            if a.calibration is None:
                continue
            for kind in ("curve", "residuals", "influence"):
                options: dict[str, object] = {"font_size": report_pdf.FIGURE_FONT_SIZE}
                if kind == "curve":
                    options["level"] = level
                if kind in ("curve", "residuals"):
                    options["log_x"] = figures.wide_range(a)
                yield kind, a, options
            for series in a.additions:  # a standard-addition series is drawn on the same canvas
                yield "additions", a, {"font_size": report_pdf.FIGURE_FONT_SIZE, "series": series}


@pytest.mark.usefixtures("qapp")
def test_each_figure_drawn_on_the_shared_canvas_looks_as_one_drawn_on_its_own() -> None:
    canvas = figures.Canvas(report_pdf.FIGURE_FONT_SIZE)
    drawn: list[str] = []
    try:
        # every demo run's figures on one canvas: log and linear axes, responses in thousands and
        # residuals in thousandths, legends of different lengths, figures of different heights and a
        # standard-addition series follow one another
        for kind, a, options in record_figures():
            size = report_pdf.ADDITIONS_PIXELS if kind == "additions" else report_pdf.FIGURE_PIXELS[kind]
            shared = figures.figure(DRAW[kind], a, *size, canvas=canvas, **options)
            alone = figures.figure(DRAW[kind], a, *size, **options)
            assert np.array_equal(pixels(shared), pixels(alone)), (a.analyte.name, kind)
            drawn.append(kind)
    finally:
        canvas.close()
    # seven analytes in the five demo runs with three figures each, and a standard-addition series
    assert len(drawn) >= 20 and set(drawn) == {"curve", "residuals", "influence", "additions"}
