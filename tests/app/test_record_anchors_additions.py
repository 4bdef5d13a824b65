"""The printed record of a logistic curve with anchor points, and of a sample measured by standard
additions, produced as the user produces it (the app's Export record menu item; the command line) and
read back page by page. The pages are kept under ``test-artefacts/record/`` for a person to look at."""

from __future__ import annotations

import shutil
import unicodedata
from pathlib import Path

import numpy as np
import pyqtgraph as pg
import pypdfium2 as pdfium
import pytest
from PySide6.QtWidgets import QFileDialog

from curvewright.core.run_analysis import analyse_run
from curvewright.core.standard_additions import MATRIX_WARNING
from curvewright.io.report import FigureSlot, build_report
from curvewright.io.run_document import open_run
from tests.app.conftest import ROOT, settle
from tests.app.test_record_pdf import ARTEFACTS, save_preview, text_of
from tests.cli_runs import run_cli

CYTOKINE = ROOT / "sample_runs" / "cytokine_serum_4pl.json"
VOLATILES = ROOT / "sample_runs" / "volatiles_water_average_rf.json"


def page_with(pdf, words: str) -> int:  # type: ignore[no-untyped-def]
    """The 0-based number of the first page whose text holds ``words`` (spaces and line ends ignored)."""
    squeezed = "".join(words.split())
    for n in range(len(pdf)):
        if squeezed in "".join(text_of(pdf[n]).split()):
            return n
    raise AssertionError(f"no page reads {words!r}")


def nfkc(text: str) -> str:
    """Text as :func:`text_of` reads it back (NFKC: the micro sign of µg/L becomes the Greek letter mu)."""
    return unicodedata.normalize("NFKC", text)


def drawn_on(page) -> int:  # type: ignore[no-untyped-def]
    """Lines and shapes on a page (the figures are painted as vectors), images counted too."""
    kinds = (pdfium.raw.FPDF_PAGEOBJ_PATH, pdfium.raw.FPDF_PAGEOBJ_IMAGE)
    return sum(1 for obj in page.get_objects(max_depth=8) if obj.type in kinds)


def test_the_record_exported_from_the_app_says_which_standards_are_anchor_points(make_window, qtbot, tmp_path,
                                                                                 monkeypatch, answer_dialogs) -> None:
    copy = Path(shutil.copy(CYTOKINE, tmp_path / CYTOKINE.name))
    window = make_window(copy)
    target = tmp_path / "cytokine record.pdf"
    monkeypatch.setattr(QFileDialog, "getSaveFileName", lambda *args, **kwargs: (str(target), "PDF (*.pdf)"))
    window.actions_by_name["export-record"].trigger()
    settle(qtbot, window)
    assert window.session.run.audit[-1].action == "report_written"
    pdf = pdfium.PdfDocument(target)
    # the standards table: the four anchor points say so in their Within-limits cell, with their %RE
    n = page_with(pdf, "Standards – cytokine: back-calculated accuracy")
    # the table may run on to the next page
    text = " ".join(" ".join(text_of(pdf[k]) for k in range(n, min(n + 2, len(pdf)))).split())
    for row in ("A1-1 A1 1 0.8 0.0519 0.878 +9.8 anchor point, not judged",
                "A2-1 A2 1 6000 3.0064 3750 −37.5 anchor point, not judged",
                "A2-2 A2 2 6000 3.0968 9190 +53.2 anchor point, not judged",
                "S1-1 S1 1 3 0.0729 3.01 +0.2 25 yes"):
        assert row in text, row
    # beneath it: which standards are anchors, why, who marked them and when (from the audit trail)
    marked = next(e for e in window.session.run.audit if e.action == "anchor_points_marked")
    assert ("Anchor points of cytokine (4): fitted, but not judged for acceptance and outside the calibrated range "
            "(LLOQ to ULOQ)") in text
    assert (f"• A1-1 (0.8 pg/mL), A1-2 (0.8 pg/mL), A2-1 (6000 pg/mL), A2-2 (6000 pg/mL): {marked.details['reason']}; "
            f"marked by Demo Analyst Four (ID DEMO-04, login demo.analyst4), 2026-11-12 09:15:00 UTC") in text
    ARTEFACTS.mkdir(parents=True, exist_ok=True)
    save_preview(pdf[n], ARTEFACTS / "cytokine-anchor-points-table.png")
    # the curve figure rings them, and its caption says what the rings are
    n = page_with(pdf, "ringed by open hexagons: anchor points, fitted but not judged")
    assert drawn_on(pdf[n]) >= 50  # a figure, not only table rules
    assert "anchor points are not judged and not drawn" in " ".join(text_of(pdf[n]).split())
    save_preview(pdf[n], ARTEFACTS / "cytokine-anchor-points-curve.png")
    pdf.close()


def test_the_record_has_a_figure_for_each_standard_addition_series(tmp_path) -> None:
    copy = Path(shutil.copy(VOLATILES, tmp_path / VOLATILES.name))
    pdf_path = tmp_path / "volatiles.pdf"
    out = run_cli("quantify", str(copy), "--report", str(pdf_path), timeout=600)
    assert out.returncode == 0, out.stderr
    result = analyse_run(open_run(VOLATILES).run)
    series = [(a, s) for a in result.analytes for s in a.additions]
    assert [(a.analyte.name, s.sample_id) for a, s in series] == [("benzene", "Leachate LF-3 (standard additions)")]
    benzene, leachate = series[0]
    r = leachate.result
    slots = [b for b in build_report(result).blocks if isinstance(b, FigureSlot) and b.kind == "additions"]
    assert [(b.analyte, b.sample) for b in slots] == [("benzene", leachate.sample_id)]
    pdf = pdfium.PdfDocument(pdf_path)
    n = page_with(pdf, "benzene, Leachate LF-3 (standard additions): the standard-addition series.")
    text = " ".join(text_of(pdf[n]).split())
    assert drawn_on(pdf[n]) >= 50  # a figure, not only table rules
    # the caption in words, with the engine's numbers and the warning
    assert nfkc("against the concentration added (µg/L)") in text
    assert nfkc(f"the line {r.equation(6)} through them, dashed where it is extended back to zero response") in text
    assert nfkc(f"its x-intercept at −{r.concentration:.5g} µg/L gives the concentration {r.concentration:.5g} µg/L in "
                f"the measured solution, with its 95% interval {r.lower:.5g} to {r.upper:.5g} µg/L shaded (from "
                f"−{r.upper:.5g} to −{r.lower:.5g}) on the concentration axis") in text
    assert nfkc("−9.2666 µg/L") in text and nfkc("7.5545 to 10.979 µg/L") in text
    assert nfkc(f"Warning: {MATRIX_WARNING}.") in text
    ARTEFACTS.mkdir(parents=True, exist_ok=True)
    save_preview(pdf[n], ARTEFACTS / "volatiles-standard-additions-figure.png")
    pdf.close()


def test_the_additions_figure_draws_the_line_to_its_intercept_and_shades_the_interval(qtbot) -> None:
    from curvewright.app.additions_view import draw_additions

    a = next(a for a in analyse_run(open_run(VOLATILES).run).analytes if a.additions)
    series = a.additions[0]
    r = series.result
    widget = pg.PlotWidget()
    qtbot.addWidget(widget)
    draw_additions(widget.getPlotItem(), a, series, font_size=20)
    plot = widget.getPlotItem()
    assert plot.getAxis("bottom").labelText == "Concentration added (µg/L)"
    assert plot.getAxis("left").labelText == "Response (area ratio)"
    lines = [item for item in plot.listDataItems() if item.opts.get("pen") is not None]
    dashed = next(item for item in lines if item.name() == "extrapolated")
    x, y = dashed.getData()
    assert x[0] == pytest.approx(-r.concentration, rel=1e-12) and y[0] == pytest.approx(0.0, abs=1e-9)
    points = next(item for item in plot.listDataItems() if item.name() == "mean response")
    np.testing.assert_array_equal(points.getData()[0], series.added)
    region = next(item for item in plot.items if isinstance(item, pg.LinearRegionItem))
    assert region.getRegion() == pytest.approx((-r.upper, -r.lower), rel=1e-12)
    bar = next(item for item in plot.items if isinstance(item, pg.ErrorBarItem))
    assert float(bar.opts["x"][0] - bar.opts["left"][0]) == pytest.approx(-r.upper, rel=1e-12)
    assert float(bar.opts["x"][0] + bar.opts["right"][0]) == pytest.approx(-r.lower, rel=1e-12)
