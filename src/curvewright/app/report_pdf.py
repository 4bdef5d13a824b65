"""Write the calibration record (:mod:`curvewright.io.report`) as a PDF on A4.

The content is placed with :class:`curvewright.app.record_layout.RecordLayout` (measured in the
fonts it is printed in, rows never split, headers repeated, figures scaled to the text width) and
painted on a QPdfWriter at 300 dpi. Each figure is drawn straight on its page with QPainter as lines,
shapes and text (:mod:`curvewright.app.record_figures`), not as an image. The PDF carries
its title, author (the analyst), subject, creator and creation date, in the document information
dictionary and in the XMP metadata. Works offscreen.
"""

from __future__ import annotations

import re
from html import escape
from pathlib import Path

from .. import CAUTION, __version__
from ..io.atomic import write_atomically
from ..io.audit import file_sha256
from ..io.report import (FigureSlot, PageBreak, Paragraph, PrintedTable, ReportContent, Section, SignatureLines,
                         printed)
from ..io.result_tables import Table
from . import record_figures
from .plotted import wide_range
from .qt_runtime import ensure_application

FIGURE_HEIGHTS_MM = {"curve": 96.9, "residuals": 71.2, "influence": 71.2, "additions": 89.0}
"""Height of each figure as described at the text width (178 mm): its proportions as printed."""


def lay_out(content: ReportContent, device):  # type: ignore[no-untyped-def]
    """Place every block of ``content`` on pages measured for ``device`` (a QPdfWriter)."""
    from .record_layout import RecordLayout

    layout = RecordLayout(device, content.header or content.title, content.footer or f"Curvewright {__version__}",
                          CAUTION)
    level = content.result.run.settings.confidence_level
    rule = content.result.run.settings.rounding
    for block in content.blocks:
        if isinstance(block, Section):
            layout.set_section(block.text)
        elif isinstance(block, PageBreak):
            if layout.y > layout.top:
                layout.new_page()
        elif isinstance(block, Paragraph):
            layout.paragraph(block.text, block.style)
        elif isinstance(block, (PrintedTable, Table)):
            table = block if isinstance(block, PrintedTable) else printed(block, rule)
            layout.table(table.title, list(table.headings), [list(r) for r in table.rows], list(table.numeric),
                         table.note, list(table.breakable) or None)
        elif isinstance(block, FigureSlot):
            layout.figure(record_figure(content, block, level), block.caption)
        elif isinstance(block, SignatureLines):
            layout.signatures(list(block.lines))
    return layout


def record_figure(content: ReportContent, block: FigureSlot, level: float):  # type: ignore[no-untyped-def]
    """The figure ``block`` asks for, described from the analysis (:mod:`.record_figures`): the curve,
    the relative errors, the influence plot, or one sample's standard-addition series."""
    analyte = content.result.analyte(block.analyte)
    height = FIGURE_HEIGHTS_MM[block.kind]
    if block.kind == "curve":
        return record_figures.curve_figure(analyte, level=level, log_x=wide_range(analyte), height=height)
    if block.kind == "residuals":
        return record_figures.relative_error_figure(analyte, log_x=wide_range(analyte), height=height)
    if block.kind == "influence":
        return record_figures.influence_figure(analyte, height=height)
    if block.kind == "additions":
        series = next(s for s in analyte.additions if s.sample_id == block.sample)
        return record_figures.additions_figure(analyte, series, height=height)
    raise ValueError(f"figure {block.kind!r} of {block.analyte}: not a figure the record draws")


def xmp_metadata(content: ReportContent) -> bytes:
    """XMP packet with the title, author, subject (dc:description) and the producing program."""
    def alt(text: str) -> str:
        return f"<rdf:Alt><rdf:li xml:lang='x-default'>{escape(text)}</rdf:li></rdf:Alt>"

    return (
        "<?xpacket begin='' id='W5M0MpCehiHzreSzNTczkc9d'?>"
        "<x:xmpmeta xmlns:x='adobe:ns:meta/'><rdf:RDF xmlns:rdf='http://www.w3.org/1999/02/22-rdf-syntax-ns#'>"
        "<rdf:Description rdf:about='' xmlns:dc='http://purl.org/dc/elements/1.1/' "
        "xmlns:xmp='http://ns.adobe.com/xap/1.0/' xmlns:pdf='http://ns.adobe.com/pdf/1.3/'>"
        f"<dc:title>{alt(content.title)}</dc:title>"
        f"<dc:creator><rdf:Seq><rdf:li>{escape(content.author)}</rdf:li></rdf:Seq></dc:creator>"
        f"<dc:description>{alt(content.subject)}</dc:description>"
        f"<xmp:CreatorTool>Curvewright {escape(__version__)}</xmp:CreatorTool>"
        f"<pdf:Producer>Curvewright {escape(__version__)}</pdf:Producer>"
        "</rdf:Description></rdf:RDF></x:xmpmeta><?xpacket end='w'?>"
    ).encode("utf-8")


def record_writer(device):  # type: ignore[no-untyped-def]
    """A QPdfWriter writing to ``device`` (an open QIODevice) as the record is written: A4 portrait with
    no page margins (the layout keeps its own), at 300 dpi (what :mod:`.record_layout` measures in)."""
    ensure_application()
    from PySide6.QtCore import QMarginsF
    from PySide6.QtGui import QPageLayout, QPageSize, QPdfWriter

    writer = QPdfWriter(device)
    writer.setResolution(300)
    writer.setPageLayout(QPageLayout(QPageSize(QPageSize.PageSizeId.A4), QPageLayout.Orientation.Portrait,
                                     QMarginsF(0, 0, 0, 0), QPageLayout.Unit.Millimeter))
    return writer


def pdf_bytes(content: ReportContent) -> bytes:
    ensure_application()
    from PySide6.QtCore import QBuffer, QByteArray, QIODevice

    data = QByteArray()
    buffer = QBuffer(data)
    buffer.open(QIODevice.OpenModeFlag.WriteOnly)
    writer = record_writer(buffer)
    writer.setTitle(content.title)
    writer.setCreator(f"Curvewright {__version__}")
    if hasattr(writer, "setAuthor"):  # Qt 6.8 and later
        writer.setAuthor(content.author)
    writer.setDocumentXmpMetadata(xmp_metadata(content))
    layout = lay_out(content, writer)
    layout.paint(writer)
    del writer
    buffer.close()
    return with_document_info(bytes(data.data()), content)


def _pdf_text(text: str) -> bytes:
    """A PDF text string: UTF-16BE with its byte-order mark, written in hex (ISO 32000-1 §7.9.2.2)."""
    return b"<" + ("\ufeff" + text).encode("utf-16-be").hex().upper().encode("ascii") + b">"


def with_document_info(data: bytes, content: ReportContent) -> bytes:
    """``data`` with an incremental update (ISO 32000-1 §7.5.6) that rewrites the document information
    dictionary: title, author, subject (which QPdfWriter cannot set), creator, producer and the dates
    QPdfWriter wrote. The original bytes stay as they were; readers take the latest definition."""
    tail = data[data.rindex(b"trailer"):]
    found = {key: re.search(pattern, tail) for key, pattern in (
        ("info", rb"/Info (\d+) 0 R"), ("root", rb"/Root (\d+) 0 R"), ("size", rb"/Size (\d+)"),
        ("id", rb"/ID \[[^\]]*\]"), ("prev", rb"startxref\s+(\d+)"))}
    missing = [key for key in ("info", "root", "size", "prev") if found[key] is None]
    if missing:
        raise ValueError(f"the PDF written for the record has no {', '.join(missing)} in its trailer")
    info, root, size, prev = (int(found[k].group(1)) for k in ("info", "root", "size", "prev"))  # type: ignore[union-attr]
    dates = b"".join(m.group(0) + b"\n" for m in re.finditer(rb"/(?:CreationDate|ModDate) \(D:[0-9Z+\-']*\)", data[:4096]))
    dictionary = (b"<<\n/Title " + _pdf_text(content.title) + b"\n/Author " + _pdf_text(content.author)
                  + b"\n/Subject " + _pdf_text(content.subject) + b"\n/Creator " + _pdf_text(f"Curvewright {__version__}")
                  + b"\n/Producer " + _pdf_text(f"Curvewright {__version__}") + b"\n" + dates + b">>")
    start = data if data.endswith(b"\n") else data + b"\n"
    body = b"%d 0 obj\n" % info + dictionary + b"\nendobj\n"
    xref_at = len(start) + len(body)
    ident = (b" " + found["id"].group(0)) if found["id"] is not None else b""
    update = (body + b"xref\n0 1\n0000000000 65535 f \n%d 1\n%010d 00000 n \n" % (info, len(start))
              + b"trailer\n<< /Size %d /Root %d 0 R /Info %d 0 R%s /Prev %d >>\nstartxref\n%d\n%%%%EOF\n"
              % (size, root, info, ident, prev, xref_at))
    return start + update


def write_report(content: ReportContent, path: str | Path) -> str:
    """Write the PDF atomically; return the SHA-256 of the file."""
    data = pdf_bytes(content)
    write_atomically(Path(path), data)
    return file_sha256(data)
