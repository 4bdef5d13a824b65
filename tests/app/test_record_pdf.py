"""The printed calibration record as a reviewer holds it: every page of every demo run's record,
written by the command line, rendered and read back.

Each page must keep everything inside the printable area, carry the running header (the run) and
"page N of M", and never split a word of a table heading or a number across lines. The pages are
kept as images under ``test-artefacts/record/`` for a person to look at.
"""

from __future__ import annotations

import re
import shutil
import unicodedata
from functools import lru_cache
from pathlib import Path

import pypdf
import pypdfium2 as pdfium
import pytest
from PySide6.QtGui import QImage

from curvewright import CAUTION
from curvewright.core.run_analysis import analyse_run
from curvewright.io.report import PrintedTable, build_report
from curvewright.io.run_document import open_run, save_run
from tests.app.conftest import in_memory_record
from tests.cli_runs import run_cli
from tests.io.helpers import DEMO_RUNS, ICP_ELEMENTS, ROOT, many_element_run

PRINTABLE_MARGIN_PT = 8 / 25.4 * 72
"""8 mm: inside it, every printer prints (common practice for office printers; many need about 4–6 mm)."""
BAND_PT = 45.0
"""The running header and the footer lie within this distance of the page's top and bottom edges."""
ARTEFACTS = ROOT / "test-artefacts" / "record"
PREVIEW_DPI = 100


def text_of(page) -> str:  # type: ignore[no-untyped-def]
    """The page's text as a reader sees it: NFKC (ligatures undone), no-break spaces as spaces."""
    text = page.get_textpage().get_text_range()
    return unicodedata.normalize("NFKC", text).replace("\u00a0", " ").replace("\u202f", " ")


def write_record(document: Path, folder: Path) -> Path:
    """Run ``curvewright quantify DOC --report record.pdf`` as a user does, on a copy of the run."""
    copy = folder / document.name
    shutil.copyfile(document, copy)
    pdf = folder / (document.stem + ".pdf")
    out = run_cli("quantify", str(copy), "--report", str(pdf), timeout=600)
    assert out.returncode == 0, out.stderr
    return pdf


@lru_cache(maxsize=None)
def printed_words(document: str) -> frozenset[str]:
    """Every whitespace-separated word of every printed table's headings and cells in the record."""
    content = build_report(analyse_run(open_run(Path(document)).run))
    words: set[str] = set()
    for block in content.blocks:
        if isinstance(block, PrintedTable):
            for text in (*block.headings, *(cell for row in block.rows for cell in row)):
                words.update(unicodedata.normalize("NFKC", str(text)).split())
    return frozenset(words)


@lru_cache(maxsize=None)
def figure_spans(document: str) -> tuple[tuple[tuple[float, float], ...], ...]:
    """For each page of the record, the vertical spans (top, bottom, in points from the page's top
    edge) of the figures on it, from the record's own layout of the same content."""
    from curvewright.app.record_layout import FigureOp
    from curvewright.app.report_pdf import lay_out

    with in_memory_record() as record:
        layout = lay_out(build_report(analyse_run(open_run(Path(document)).run)), record.writer)
        to_pt = 72 / 300
        spans = tuple(tuple((op.rect.top() * to_pt, op.rect.bottom() * to_pt) for op in page.ops
                            if isinstance(op, FigureOp))
                      for page in layout.pages)
        del layout
    return spans


def text_beside_figures(page, spans) -> str:  # type: ignore[no-untyped-def]
    """The page's text from top to bottom, leaving out the text drawn inside the figures (their axis
    labels and legends), which is no part of the record's running text or tables."""
    width, height = page.get_size()
    textpage = page.get_textpage()
    parts, top = [], 0.0
    for start, end in (*sorted(spans), (height, height)):
        if start > top:  # pdfium measures from the bottom edge
            parts.append(textpage.get_text_bounded(0, height - start, width, height - top))
        top = max(top, end)
    text = "\n".join(parts)
    return unicodedata.normalize("NFKC", text).replace("\u00a0", " ").replace("\u202f", " ")


def split_pieces(text: str, whole: frozenset[str]) -> list[str]:
    """Places where a line ends and the next begins with two pieces of one printed word (or the first
    pieces of a word broken more than once), at least one of them no printed word by itself."""
    lines = [line.split() for line in re.split(r"\r\n|\n|\r", text)]
    found = []
    for before, after in zip(lines, lines[1:]):
        if before and after:
            a, b = before[-1], after[0]
            if (a not in whole or b not in whole) and any(w.startswith(a + b) for w in whole):
                found.append(f"{a}|{b}")
    return found


def save_preview(page, path: Path) -> None:  # type: ignore[no-untyped-def]
    pixels = page.render(scale=PREVIEW_DPI / 72, rev_byteorder=True).to_numpy()
    height, width, channels = pixels.shape
    image = QImage(pixels.tobytes(), width, height, width * channels,
                   QImage.Format.Format_RGBA8888 if channels == 4 else QImage.Format.Format_RGB888)
    assert image.save(str(path)), path


@pytest.mark.parametrize("document", DEMO_RUNS, ids=[d.stem for d in DEMO_RUNS])
def test_every_page_of_each_demo_record_reads_whole(document: Path, tmp_path: Path) -> None:
    pdf_path = write_record(document, tmp_path)
    run = open_run(document).run
    pdf = pdfium.PdfDocument(pdf_path)
    pages = len(pdf)
    assert pages >= 3
    whole = printed_words(str(document))
    ARTEFACTS.mkdir(parents=True, exist_ok=True)
    for stale in ARTEFACTS.glob(f"{document.stem}-*.png"):
        stale.unlink()
    squeezed_caution = re.sub(r"\s+", "", CAUTION)
    for n in range(pages):
        page = pdf[n]
        width, height = page.get_size()
        # nothing drawn outside the printable area: text, lines and the figures alike
        for obj in page.get_objects(max_depth=8):
            left, bottom, right, top = obj.get_bounds()
            assert (left >= PRINTABLE_MARGIN_PT - 0.01 and bottom >= PRINTABLE_MARGIN_PT - 0.01
                    and right <= width - PRINTABLE_MARGIN_PT + 0.01 and top <= height - PRINTABLE_MARGIN_PT + 0.01), \
                f"{document.stem} page {n + 1}: an object at ({left:.1f}, {bottom:.1f})–({right:.1f}, {top:.1f}) pt " \
                f"lies outside the printable area"
        text = text_of(page)
        # the running header (the run) stands at the top of the page, and the footer numbers it "page N of M"
        textpage = page.get_textpage()
        header = unicodedata.normalize("NFKC", textpage.get_text_bounded(0, height - BAND_PT, width, height))
        footer = unicodedata.normalize("NFKC", textpage.get_text_bounded(0, 0, width, BAND_PT))
        assert run.name[:40] in header, f"{document.stem} page {n + 1}: header {header!r}"
        assert f"page {n + 1} of {pages}" in footer, f"{document.stem} page {n + 1}: footer {footer!r}"
        assert squeezed_caution in re.sub(r"\s+", "", text), f"{document.stem} page {n + 1}: no caution"
        # no word of a table heading or cell, and no number, broken across two lines (the figures, drawn
        # as lines and text, hold tick labels that stand one above the other: they are read apart)
        spans = figure_spans(str(document))
        assert len(spans) == pages, f"{document.stem}: the record's layout has {len(spans)} pages, the PDF {pages}"
        assert split_pieces(text_beside_figures(page, spans[n]), whole) == [], f"{document.stem} page {n + 1}"
        save_preview(page, ARTEFACTS / f"{document.stem}-{n + 1:02d}.png")
    # the document's own description of itself
    meta = pdf.get_metadata_dict()
    assert meta["Title"] == f"Calibration record — {run.name}"
    assert meta["Author"] and meta["Author"] in {e.analyst or e.user for e in run.audit} | {s.name for s in run.signatures}
    assert meta["Subject"].startswith(f"Calibration record of run {run.name}")
    assert meta["Creator"].startswith("Curvewright ") and meta["CreationDate"].startswith("D:20")
    data = pdf_path.read_bytes()
    assert b"<dc:description>" in data and b"<dc:creator>" in data
    pdf.close()
    # a strict reader of another make finds the same pages and the same document information
    strict = pypdf.PdfReader(pdf_path, strict=True)
    assert len(strict.pages) == pages and strict.metadata["/Subject"] == meta["Subject"]


def test_a_thirty_element_run_is_summarised_on_the_first_page(tmp_path: Path) -> None:
    document = tmp_path / "metals-batch-12.json"
    save_run(many_element_run(), document)
    folder = tmp_path / "out"
    folder.mkdir()
    pdf_path = write_record(document, folder)
    pdf = pdfium.PdfDocument(pdf_path)
    first = text_of(pdf[0])
    lines = re.split(r"\r\n|\n|\r", first)
    listed = [e for e in ICP_ELEMENTS if any(re.match(rf"{re.escape(e)} y = ", line.strip()) for line in lines)]
    assert listed == list(ICP_ELEMENTS), f"missing from page 1: {sorted(set(ICP_ELEMENTS) - set(listed))}"
    assert "Run verdict: ACCEPTED" in first and "ICP emission spectrometer" in first
    ARTEFACTS.mkdir(parents=True, exist_ok=True)
    save_preview(pdf[0], ARTEFACTS / "metals-batch-12-01.png")
    pdf.close()


def test_figures_are_drawn_as_lines_and_text_inside_their_place(tmp_path: Path) -> None:
    document = next(d for d in DEMO_RUNS if d.stem == "nitrate_water_linear")
    pdf_path = write_record(document, tmp_path)
    strict = pypdf.PdfReader(pdf_path, strict=True)
    assert all(not page.images for page in strict.pages)  # no figure is a picture of pixels
    pdf = pdfium.PdfDocument(pdf_path)
    spans = figure_spans(str(document))
    assert sum(len(s) for s in spans) == 3  # the curve, the relative errors and the influence plot
    found = ""
    for n, page_spans in enumerate(spans):
        width, height = pdf[n].get_size()
        textpage = pdf[n].get_textpage()
        for top, bottom in page_spans:
            found += textpage.get_text_bounded(0, height - bottom, width, height - top) + "\n"
    for label in ("Concentration (mg/L)", "Response (AU)", "%RE", "Leverage", "Studentized residual (external)",
                  "fitted curve", "acceptance limit", "influence limit (Cook's D and residual)"):
        assert label in unicodedata.normalize("NFKC", found), label
    pdf.close()
