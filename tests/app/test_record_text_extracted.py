"""The text a reader's PDF software takes from the written record, page by page, is the text the record
placed on that page: every line of the running text and tables where the layout put it, every figure's
tick labels, axis titles and legend, and the running header and footer with the caution.

The record is written as the command line writes it (``report_pdf.pdf_bytes``); what each page should
hold is worked out from the same run's content, laid out again on the record's writer. The words must be
the same, in the same order, page by page: a change to how the pages are painted (fewer text runs, fonts
or positions set otherwise) must leave the text a reviewer copies or searches exactly as it is.
"""

from __future__ import annotations

import unicodedata
from datetime import datetime, timezone

import pypdfium2 as pdfium
import pytest

from curvewright import CAUTION
from curvewright.app import record_figures, report_pdf
from curvewright.app.record_layout import FigureOp, RecordLayout, TextOp
from curvewright.core.run_analysis import analyse_run
from curvewright.io.report import build_report
from curvewright.io.run_document import open_run
from tests.app.conftest import in_memory_record
from tests.io.helpers import DEMO_RUNS

GENERATED = datetime(2026, 12, 3, 7, 0, tzinfo=timezone.utc)
"""When the records below say they were made (the record prints it; fixed so that both writes agree)."""


def words(text: str) -> list[str]:
    """The words of ``text`` as a reader's software gives them: NFKC (ligatures undone), no-break spaces
    as spaces."""
    return unicodedata.normalize("NFKC", text).replace("\u00a0", " ").replace("\u202f", " ").split()


def figure_texts(op: FigureOp, device) -> list[str]:  # type: ignore[no-untyped-def]
    """The texts a figure draws, in the order it draws them: labels beside flagged points, the tick
    labels under and beside the plot, the axis titles and the legend."""
    fig = op.figure
    placed = record_figures._Layout(fig, op.rect, device)  # measured on the writer, as when it is painted
    texts = [t for layer in fig.layers if isinstance(layer, record_figures.Labels) for t in layer.texts]
    texts += [t for _, t in placed.x_ticks[0]] + [t for _, t in placed.y_ticks[0]]
    texts += [fig.x.title, fig.y.title] + [entry.text for entry in fig.legend]
    return texts


def placed_words(layout: RecordLayout, device) -> list[list[str]]:  # type: ignore[no-untyped-def]
    """For each page, the words the layout placed on it, in the order they are drawn."""
    pages = []
    for number, page in enumerate(layout.pages, start=1):
        texts: list[str] = []
        for op in page.ops:
            if isinstance(op, TextOp):
                texts.append(op.text)
            elif isinstance(op, FigureOp):
                texts += figure_texts(op, device)
        header = layout._fit("running", layout.header_left, layout.width * 0.62)
        section = layout._fit("running", page.section, layout.width * 0.38)
        caution = layout.wrap("running", layout.caution, layout.width)[:2]
        texts += [header, section, layout.footer_left, f"page {number} of {len(layout.pages)}", *caution]
        pages.append([w for t in texts for w in words(t)])
    return pages


@pytest.mark.parametrize("stem", ["nitrate_water_linear", "zinc_emission_quadratic"])
def test_each_pages_text_is_the_text_placed_on_it(qapp, stem: str) -> None:  # type: ignore[no-untyped-def]
    run = open_run(next(d for d in DEMO_RUNS if d.stem == stem)).run
    content = build_report(analyse_run(run), generated=GENERATED)
    pdf = pdfium.PdfDocument(report_pdf.pdf_bytes(content))
    with in_memory_record() as record:
        layout = report_pdf.lay_out(content, record.writer)
        expected = placed_words(layout, record.writer)
    assert len(pdf) == len(expected) >= 5
    for number, (page, wanted) in enumerate(zip(pdf, expected), start=1):
        got = words(page.get_textpage().get_text_range())
        first = next((i for i, (a, b) in enumerate(zip(got + [""], wanted + [""])) if a != b), None)
        assert got == wanted, f"page {number}: from word {first}: {got[first:first + 8]} ≠ {wanted[first:first + 8]}"
        # the caution closes every page (its first words at least: the footer shows two lines of it)
        assert " ".join(got).find(" ".join(words(CAUTION))[:60]) > 0, number
    pdf.close()
