"""The record's figures as a reviewer reads them: each standard, excluded standard and unknown drawn
where its values put it on the axes, each unknown's interval bar spanning its interval, the tick labels
the numbers at their places, excluded standards marked differently from those in the fit, the legend
naming what the screen's plot names, and all of it drawn without pyqtgraph.

Positions are checked in the written PDF itself (pdfium reads the paths and text back) against the
linear map of each axis from its range to the plot's place on the page."""

from __future__ import annotations

import math

import ctypes
import re
import subprocess
import sys
from pathlib import Path

import numpy as np
import pypdfium2 as pdfium
import pypdfium2.raw as pdfium_c
import pytest
from PySide6.QtCore import QRectF
from PySide6.QtGui import QColor, QImage, QPainter

from curvewright.app import palette, record_figures, report_pdf
from curvewright.app.plotted import wide_range
from curvewright.app.record_layout import MM, FigureOp
from curvewright.core.run import SampleKind
from curvewright.core.run_analysis import analyse_run
from curvewright.io.report import build_report
from curvewright.io.run_document import open_run
from tests.app.conftest import in_memory_record
from tests.io.helpers import DEMO_RUNS, ROOT

TO_PT = 72 / 300
"""PDF points per device unit of the record's 300-dpi writer."""


def demo(stem: str) -> Path:
    return next(d for d in DEMO_RUNS if d.stem == stem)


def page_x(frame, value: float) -> float:  # type: ignore[no-untyped-def]
    """The linear axis map, written out: the axis range onto the plot's width (device units)."""
    return frame.plot.left() + (value - frame.x.low) / (frame.x.high - frame.x.low) * frame.plot.width()


def page_y(frame, value: float) -> float:  # type: ignore[no-untyped-def]
    return frame.plot.bottom() - (value - frame.y.low) / (frame.y.high - frame.y.low) * frame.plot.height()


def painted(figure, width: float = 2100.0):  # type: ignore[no-untyped-def]
    """The figure painted into an image ``width`` pixels wide; returns (image, frame)."""
    rect = QRectF(0, 0, width, width * figure.height / figure.width)
    image = QImage(int(rect.width()), int(rect.height()) + 1, QImage.Format.Format_ARGB32)
    image.fill(QColor("white"))
    painter = QPainter(image)
    figure.paint(painter, rect)
    painter.end()
    return image, figure.frame(rect, image)


@pytest.fixture(scope="module")
def results():  # type: ignore[no-untyped-def]
    return {d.stem: analyse_run(open_run(d).run) for d in DEMO_RUNS}


def curve_of(a, level: float):  # type: ignore[no-untyped-def]
    return record_figures.curve_figure(a, level=level, log_x=wide_range(a))


def test_each_standard_and_unknown_is_drawn_where_its_values_put_it(qapp, results) -> None:  # type: ignore[no-untyped-def]
    checked = 0
    for stem, result in results.items():
        for a in result.analytes:
            if a.calibration is None:
                continue
            figure = curve_of(a, result.run.settings.confidence_level)
            _, frame = painted(figure)
            log = frame.x.log

            def at(c: float, r: float):  # type: ignore[no-untyped-def]
                if log:
                    c, r = np.log10(c), (np.log10(r) if frame.y.log else r)
                return page_x(frame, c), page_y(frame, r)

            # the standards in the fit, read from the standards themselves (their responses as used)
            cal = a.calibration
            wanted = sorted(at(c, r) for c, r in zip(cal.concentration, cal.response) if c > 0 or not log)
            got = sorted(map(tuple, figure.marks["standard in the fit"]))
            assert np.allclose(got, wanted, atol=1e-6), (stem, a.analyte.name)
            # the unknowns and QC samples, read from the per-sample results (not the columns the figure
            # reads): each at (estimate, mean response), its bar from the interval's lower to upper end
            for kind, label in ((SampleKind.UNKNOWN, "unknown"), (SampleKind.QC, "QC sample")):
                samples = [s for s in a.samples if s.kind is kind and s.estimate is not None
                           and (not log or (s.estimate > 0 and s.mean_response > 0))]
                if not samples:
                    assert f"{label} with interval" not in figure.marks
                    continue
                wanted = sorted(at(s.estimate, s.mean_response) for s in samples)
                assert np.allclose(sorted(map(tuple, figure.marks[f"{label} with interval"])), wanted, atol=1e-6)
                plot = frame.plot
                expected = []
                for s in samples:
                    x, y = at(s.estimate, s.mean_response)
                    lo = at(s.lower, s.mean_response)[0] if s.lower is not None and (s.lower > 0 or not log) else x
                    hi = at(s.upper, s.mean_response)[0] if s.upper is not None else x
                    assert lo <= x + 1e-9 <= hi + 2e-9  # the interval holds the estimate
                    # cut at the plot's edges, as everything inside the plot is
                    expected.append((min(max(lo, plot.left()), plot.right()), min(max(hi, plot.left()), plot.right()), y))
                got = sorted(map(tuple, figure.marks[f"{label} interval"]))
                assert np.allclose(got, sorted(expected), atol=1e-6), (stem, a.analyte.name, label)
                checked += len(samples)
    assert checked >= 40  # the demo runs' unknowns and QC samples


def test_excluded_standards_are_marked_apart_from_those_in_the_fit(qapp, results) -> None:  # type: ignore[no-untyped-def]
    result = results["zinc_emission_quadratic"]
    a = result.analytes[0]
    assert a.excluded_standards, "the zinc demo run has an excluded standard"
    figure = curve_of(a, result.run.settings.confidence_level)
    image, frame = painted(figure)
    for s, (x, y) in zip(a.excluded_standards, figure.marks["standard excluded"]):
        assert (x, y) == pytest.approx((page_x(frame, s.concentration), page_y(frame, s.response.value)), abs=1e-6)
        # an open square with a cross: its centre is the cross's colour, the inside of the square is not
        # filled (white, or the light band behind it), unlike a standard in the fit, filled in blue
        centre = image.pixelColor(round(x), round(y))
        assert centre.red() > 150 and centre.blue() < 120, centre.name()
        per_mm = image.width() / figure.width
        inside = image.pixelColor(round(x + 0.7 * per_mm), round(y))  # 0.7 mm right: off the cross, inside the square
        assert min(inside.red(), inside.green(), inside.blue()) > 170, inside.name()
    x, y = figure.marks["standard in the fit"][0]
    filled = image.pixelColor(round(x), round(y))
    assert filled.blue() > filled.red() + 60, filled.name()
    texts = [e.text for e in figure.legend]
    assert texts.index("standard excluded") == texts.index("standard in the fit") + 1


def test_the_legends_name_what_the_screens_plots_name(qtbot, results) -> None:  # type: ignore[no-untyped-def]
    import pyqtgraph as pg  # the screen's drawing, to compare with (the record itself never loads it)

    from curvewright.app import figures
    from curvewright.app.additions_view import draw_additions

    compared = 0
    for result in results.values():
        level = result.run.settings.confidence_level
        for a in result.analytes:
            if a.calibration is None:
                continue
            pairs = [(figures.draw_curve_with_anchors, {"level": level, "log_x": wide_range(a)}, curve_of(a, level)),
                     (figures.draw_relative_errors, {"log_x": wide_range(a)},
                      record_figures.relative_error_figure(a, log_x=wide_range(a))),
                     (figures.draw_influence, {}, record_figures.influence_figure(a))]
            pairs += [(lambda plot, a, legend, s=s: draw_additions(plot, a, s, legend=legend), {},
                       record_figures.additions_figure(a, s)) for s in a.additions]
            for draw, options, record in pairs:
                widget = pg.GraphicsLayoutWidget()
                qtbot.addWidget(widget)
                plot, legend = widget.addPlot(row=0, col=0), figures.new_legend()
                figures.legend_beside(widget.ci, legend, row=0)
                draw(plot, a, legend=legend, **options)
                screen = [label.text for _, label in legend.items]
                assert [e.text for e in record.legend] == screen, a.analyte.name
                assert record.x.title == plot.getAxis("bottom").labelText
                assert record.y.title == plot.getAxis("left").labelText
                compared += 1
    assert compared >= 22


def fill_rgb(obj) -> tuple[int, int, int, int] | None:  # type: ignore[no-untyped-def]
    """The fill colour of a filled path (None for a path that is only stroked)."""
    mode, stroke = ctypes.c_int(), ctypes.c_int()
    if not pdfium_c.FPDFPath_GetDrawMode(obj.raw, ctypes.byref(mode), ctypes.byref(stroke)) or mode.value == 0:
        return None
    r, g, b, alpha = (ctypes.c_uint() for _ in range(4))
    if not pdfium_c.FPDFPageObj_GetFillColor(obj.raw, ctypes.byref(r), ctypes.byref(g), ctypes.byref(b),
                                             ctypes.byref(alpha)):
        return None
    return r.value, g.value, b.value, alpha.value


def words_on(page) -> list[tuple[str, float, float, float, float]]:  # type: ignore[no-untyped-def]
    """The page's words with their boxes (left, bottom, right, top, in points), from pdfium's characters."""
    textpage = page.get_textpage()
    words: list = []
    current, box = "", None
    for i in range(textpage.count_chars()):
        ch = textpage.get_text_range(i, 1)
        if not ch.strip():
            if current:
                words.append((current, *box))
            current, box = "", None
            continue
        left, bottom, right, top = textpage.get_charbox(i)
        if current and (abs(bottom - box[1]) > 0.5 or left - box[2] > 1.5):
            words.append((current, *box))
            current, box = "", None
        current += ch
        box = (left, bottom, right, top) if box is None else (box[0], min(box[1], bottom), right, max(box[3], top))
    if current:
        words.append((current, *box))
    return words


def test_in_the_written_pdf_tick_labels_and_standards_stand_where_the_axes_put_them(qapp, tmp_path, results) -> None:  # type: ignore[no-untyped-def]
    result = results["nitrate_water_linear"]
    content = build_report(result)
    with in_memory_record() as record:
        layout = report_pdf.lay_out(content, record.writer)
        layout.paint(record.writer)
        n, op = next((n, op) for n, page in enumerate(layout.pages) for op in page.ops if isinstance(op, FigureOp))
        frame = op.figure.frame(op.rect, record.writer)  # measured on the writer, as when it was painted
    path = tmp_path / "nitrate.pdf"
    path.write_bytes(record.pdf())
    pdf = pdfium.PdfDocument(path)
    page = pdf[n]
    height = page.get_size()[1]
    plot = frame.plot
    to_page = lambda x, y: (x * TO_PT, height - y * TO_PT)  # noqa: E731 (device units → PDF points, y up)
    left, bottom = to_page(plot.left(), plot.bottom())
    right, top = to_page(plot.right(), plot.top())
    # the tick labels under the plot: each reads as a number and is centred on that number's place
    under = [w for w in words_on(page) if left - 10 < (w[1] + w[3]) / 2 < right + 10 and bottom - 12 < w[4] <= bottom]
    values = [(float(w[0].replace("−", "-")), (w[1] + w[3]) / 2) for w in under]
    assert [v for v, _ in values] == [0, 1, 2, 3, 4, 5, 6, 7, 8, 9]
    for value, centre in values:
        assert centre == pytest.approx(page_x(frame, value) * TO_PT, abs=0.4), value
    # the labels left of the plot: each centred on its number's height
    beside = [w for w in words_on(page) if re.fullmatch(r"-?[0-9.]+", w[0]) and w[3] <= left and left - 30 < w[1] and bottom - 4 < (w[2] + w[4]) / 2 < top + 4]
    values = sorted((float(w[0]), (w[2] + w[4]) / 2) for w in beside)
    assert [v for v, _ in values] == [0.0, 0.5, 1.0, 1.5]
    for value, middle in values:
        assert middle == pytest.approx(height - page_y(frame, value) * TO_PT, abs=0.6), value
    # every standard in the fit is a filled shape of its own, about 2 mm across, centred where its
    # concentration and response put it
    blue = QColor(palette.INCLUDED)
    shapes = []
    for obj in page.get_objects(max_depth=8):
        colour = fill_rgb(obj) if obj.type == pdfium.raw.FPDF_PAGEOBJ_PATH else None
        # (the confidence band is the same blue, shaded: not opaque)
        if colour is not None and colour == (blue.red(), blue.green(), blue.blue(), 255):
            l, b, r, t = obj.get_bounds()
            if bottom - 1 < (b + t) / 2 < top + 1 and left - 1 < (l + r) / 2 < right + 1:
                shapes.append(((l + r) / 2, (b + t) / 2, r - l))
    cal = result.analytes[0].calibration
    assert len(shapes) == cal.n_standards
    for c, resp in zip(cal.concentration, cal.response):
        x, y = to_page(page_x(frame, c), page_y(frame, resp))
        nearest = min(shapes, key=lambda s: (s[0] - x) ** 2 + (s[1] - y) ** 2)
        assert (nearest[0], nearest[1]) == pytest.approx((x, y), abs=0.05)
        assert nearest[2] >= 2.0 / 25.4 * 72 - 0.1  # at least 2 mm across
    pdf.close()


def test_printed_sizes_are_legible(results) -> None:  # type: ignore[no-untyped-def]
    # on paper: markers of about 2 mm and more, lines of at least 0.25 pt, text of at least 7 pt
    # (common practice for printed figures)
    assert min(record_figures.TICK_PT, record_figures.TITLE_PT, record_figures.LEGEND_PT, record_figures.LABEL_PT) >= 7
    for result in results.values():
        for a in result.analytes:
            if a.calibration is None:
                continue
            for figure in (curve_of(a, 0.95), record_figures.relative_error_figure(a), record_figures.influence_figure(a),
                           *(record_figures.additions_figure(a, s) for s in a.additions)):
                for layer in figure.layers:
                    if isinstance(layer, record_figures.Markers) and layer.shape != "cross":
                        assert layer.size >= 2.0, (a.analyte.name, layer.name)
                    stroke = getattr(layer, "stroke", None) or getattr(layer, "edge", None)
                    if stroke is not None and stroke.colour != "#ffffff":
                        assert stroke.width >= 0.25, (a.analyte.name, type(layer).__name__)


def test_the_record_is_written_without_loading_pyqtgraph(tmp_path) -> None:
    # a fresh process writes each demo run's record and then lists what it loaded
    script = (
        "import sys\n"
        "from pathlib import Path\n"
        "from curvewright.app import report_pdf\n"
        "from curvewright.core.run_analysis import analyse_run\n"
        "from curvewright.io.report import build_report\n"
        "from curvewright.io.run_document import open_run\n"
        f"for name in {[str(d) for d in DEMO_RUNS]!r}:\n"
        "    report_pdf.write_report(build_report(analyse_run(open_run(Path(name)).run)),"
        f" Path({str(tmp_path)!r}) / (Path(name).stem + '.pdf'))\n"
        "print(sorted(m for m in sys.modules if m.split('.')[0] == 'pyqtgraph'))\n")
    out = subprocess.run([sys.executable, "-c", script], capture_output=True, text=True, cwd=ROOT, timeout=600,
                         env={**__import__("os").environ, "QT_QPA_PLATFORM": "offscreen"})
    assert out.returncode == 0, out.stderr
    assert out.stdout.strip() == "[]"
    assert len(list(tmp_path.glob("*.pdf"))) == len(DEMO_RUNS)
    # nor does the module that draws the figures name it
    source = Path(record_figures.__file__).read_text(encoding="utf-8")
    assert "import pyqtgraph" not in source and "from pyqtgraph" not in source


def test_a_figure_of_a_record_fits_its_place_on_the_page(qapp, results) -> None:  # type: ignore[no-untyped-def]
    # everything a figure draws (its plot, tick labels, titles and legend) lies inside the rectangle the
    # record gave it: nothing is cut at the page's text width
    for result in results.values():
        for a in result.analytes:
            if a.calibration is None:
                continue
            for figure in (curve_of(a, 0.95), record_figures.relative_error_figure(a, log_x=wide_range(a)),
                           record_figures.influence_figure(a), *(record_figures.additions_figure(a, s) for s in a.additions)):
                rect = QRectF(0, 0, 178 * MM, figure.height * MM)
                picture_image = QImage(int(rect.width()) + 40, int(rect.height()) + 40, QImage.Format.Format_ARGB32)
                picture_image.fill(QColor("white"))
                painter = QPainter(picture_image)
                painter.translate(20, 20)
                figure.paint(painter, rect)
                painter.end()
                pixels = np.frombuffer(picture_image.constBits(), np.uint8,
                                       picture_image.sizeInBytes()).reshape(picture_image.height(), -1, 4)
                ink = np.argwhere(pixels[..., :3].min(axis=2) < 250)
                assert ink[:, 0].min() >= 20 - 1 and ink[:, 0].max() <= 20 + rect.height() + 1, a.analyte.name
                assert ink[:, 1].min() >= 20 - 1 and ink[:, 1].max() <= 20 + rect.width() + 1, a.analyte.name


def test_a_standard_outside_its_limits_and_one_flagged_for_influence_are_starred_and_named(qapp) -> None:  # type: ignore[no-untyped-def]
    from curvewright.io import run_edits

    run = open_run(demo("nitrate_water_linear")).run
    top = next(s for s in run.analyte("nitrate-N").standards if s.concentration == 8)
    # a response typed 35 % high at the top level: far outside its ±20 % and, at the top's leverage, an
    # influential point
    run = run_edits.edit_standard(run, "nitrate-N", top.id, "response", top.response.value * 1.35,
                                  "typed high for the test", user="tester")
    a = analyse_run(run).analytes[0]
    cal, verdict = a.calibration, a.verdict
    failing = verdict.judged & ~verdict.passing
    flagged = np.array([bool(f) for f in cal.influence_flags])
    assert failing.sum() == 1 and [s.id for s, f in zip(a.fitted_standards, flagged) if f] == [top.id]
    errors = record_figures.relative_error_figure(a)
    _, frame = painted(errors)
    stars = errors.marks["outside the limits"]
    wanted = [(page_x(frame, c), page_y(frame, e)) for c, e in zip(cal.concentration[failing], cal.relative_error[failing])]
    assert np.allclose(stars, wanted, atol=1e-6)
    assert len(errors.marks["within limits"]) == int((verdict.judged & verdict.passing).sum())
    assert [e.text for e in errors.legend] == ["acceptance limit", "within limits", "outside the limits"]
    influence = record_figures.influence_figure(a)
    _, frame = painted(influence)
    star = influence.marks["flagged standard (labelled)"]
    assert np.allclose(star, [(page_x(frame, cal.leverage[flagged][0]),
                               page_y(frame, cal.studentized_residuals[flagged][0]))], atol=1e-6)
    labels = [layer for layer in influence.layers if isinstance(layer, record_figures.Labels)]
    assert [layer.texts for layer in labels] == [(top.id,)]
    assert "flagged standard (labelled)" in [e.text for e in influence.legend]


def test_the_additions_figure_puts_the_intercept_and_its_interval_on_the_concentration_axis(qapp, results) -> None:  # type: ignore[no-untyped-def]
    a = next(a for a in results["volatiles_water_average_rf"].analytes if a.additions)
    series = a.additions[0]
    r = series.result
    figure = record_figures.additions_figure(a, series)
    _, frame = painted(figure)
    assert figure.x.title == "Concentration added (µg/L)" and figure.y.title == "Response (area ratio)"
    # the x-intercept at minus the concentration found, on the zero-response line, its bar from minus the
    # interval's upper end to minus its lower end
    assert np.allclose(figure.marks["x-intercept"], [(page_x(frame, -r.concentration), page_y(frame, 0.0))], atol=1e-6)
    assert np.allclose(figure.marks["x-intercept interval"],
                       [(page_x(frame, -r.upper), page_x(frame, -r.lower), page_y(frame, 0.0))], atol=1e-6)
    means = figure.marks["mean response"]
    wanted = [(page_x(frame, x), page_y(frame, y)) for x, y in zip(series.added, series.mean_response)]
    assert np.allclose(sorted(map(tuple, means)), sorted(wanted), atol=1e-6)
    # the dashed line runs from the intercept back up to the first addition, on the fitted line
    dashed = next(layer for layer in figure.layers if isinstance(layer, record_figures.Lines)
                  and layer.stroke.style == "dash")
    assert dashed.x[0] == pytest.approx(-r.concentration, rel=1e-12) and dashed.y[0] == pytest.approx(0.0, abs=1e-9)
    assert dashed.x[1] == pytest.approx(min(series.added), rel=1e-12)


def clipped_segment_by_segment(x, y, box):  # type: ignore[no-untyped-def]
    """The clipped polyline worked out one segment at a time in plain floats (Liang–Barsky clipping of
    each segment, from its textbook statement), then joined: a NaN before each kept segment that does not
    start where the last one ended. Separate from the figures' code, which works over all segments at once."""
    xs: list[float] = []
    ys: list[float] = []
    x0, x1, y0, y1 = box
    pts = [(float(a), float(b)) for a, b in zip(x, y)]
    if len(pts) >= 2 and all(math.isfinite(a) and math.isfinite(b) and x0 <= a <= x1 and y0 <= b <= y1 for a, b in pts):
        return np.asarray(x, dtype=float).copy(), np.asarray(y, dtype=float).copy()  # wholly inside: kept as given
    for (ax, ay), (bx, by) in zip(pts, pts[1:]):
        if not all(math.isfinite(v) for v in (ax, ay, bx, by)):
            continue
        dx, dy = bx - ax, by - ay
        low, high, inside = 0.0, 1.0, True
        for p, q in ((-dx, ax - x0), (dx, x1 - ax), (-dy, ay - y0), (dy, y1 - ay)):
            if p == 0:
                inside = inside and q >= 0
            elif p < 0:
                low = max(low, q / p)
            else:
                high = min(high, q / p)
        if not inside or low > high:
            continue
        start, end = (ax + low * dx, ay + low * dy), (ax + high * dx, ay + high * dy)
        if not xs or (xs[-1], ys[-1]) != start:
            if xs:
                xs.append(math.nan)
                ys.append(math.nan)
            xs.append(start[0])
            ys.append(start[1])
        xs.append(end[0])
        ys.append(end[1])
    return np.asarray(xs, dtype=float), np.asarray(ys, dtype=float)


def test_clipping_a_line_joins_its_kept_segments_exactly_as_segment_by_segment() -> None:
    # invented polylines: random walks across a box, with breaks (NaN), points on its edges, repeated
    # points and lines along an edge; the parts must be the same numbers, the NaN breaks at the same places
    rng = np.random.default_rng(20261203)
    points = 0
    for _ in range(6000):
        k = int(rng.integers(0, 40))
        x, y = rng.normal(0, 2, k), rng.normal(0, 2, k)
        if k and rng.random() < 0.3:
            x[rng.integers(0, k, 3)] = np.nan
        if rng.random() < 0.2:
            y = np.round(y)
        if rng.random() < 0.2:
            x = np.round(x)
        box = (-1.0, 1.0, -1.0, 1.0) if rng.random() < 0.7 else (float(rng.integers(-2, 1)), 1.0, -1.0,
                                                                   float(rng.integers(0, 3)))
        got, expected = record_figures.clip_polyline(x, y, box), clipped_segment_by_segment(x, y, box)
        for a, b in zip(got, expected):
            assert a.dtype == b.dtype and a.shape == b.shape
            assert np.array_equal(a, b, equal_nan=True)
        points += got[0].size
    assert points > 100_000  # most lines cross the box


def test_a_lines_points_are_handed_to_qt_exactly_as_point_by_point(qapp) -> None:  # type: ignore[no-untyped-def]
    """The figures' lines and bands are made into polygons from the arrays in one step: every point must
    be the one a QPointF of its two values gives, in order, for any length (none, one, hundreds)."""
    from PySide6.QtCore import QPointF
    from PySide6.QtGui import QPolygonF

    rng = np.random.default_rng(20261203)
    for n in (0, 1, 2, 7, 240, 1000):
        x = rng.uniform(-5e3, 5e3, n)
        y = np.concatenate([rng.normal(0, 1e-9, n // 2), rng.uniform(1e5, 1e6, n - n // 2)])
        made = record_figures.polygon_of(x, y)
        expected = QPolygonF([QPointF(a, b) for a, b in zip(x.tolist(), y.tolist())])
        assert made == expected, n
        assert [(p.x(), p.y()) for p in made] == list(zip(x.tolist(), y.tolist()))
    # a slice taken backwards (the band's lower edge) and integer arrays are read by value
    x = np.arange(10.0)[::-1]
    assert [p.x() for p in record_figures.polygon_of(x, np.arange(10))] == x.tolist()
    with pytest.raises(ValueError, match="x values against"):
        record_figures.polygon_of(np.arange(3.0), np.arange(4.0))
