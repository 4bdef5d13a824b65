"""Write the calibration record (:mod:`curvewright.io.report`) as a PDF on A4.

The content is placed with :class:`curvewright.app.record_layout.RecordLayout` (measured in the
fonts it is printed in, rows never split, headers repeated, figures scaled to the text width) and
painted on a QPdfWriter at 300 dpi. The PDF carries its title, author, creator and subject (the
subject in the XMP metadata as dc:description). Works offscreen.
"""

from __future__ import annotations

from html import escape
from pathlib import Path

from .. import CAUTION, __version__
from ..io.atomic import write_atomically
from ..io.audit import file_sha256
from ..io.report import (FigureSlot, PageBreak, Paragraph, PrintedTable, ReportContent, Section, SignatureLines,
                         printed)
from ..io.result_tables import Table
from . import figures
from .qt_runtime import ensure_application

FIGURE_PIXELS = {"curve": (1800, 980), "residuals": (1800, 720), "influence": (1800, 720)}
"""Pixels of each figure as drawn; printed at the text width (178 mm), about 250 dpi."""


def lay_out(content: ReportContent, device):  # type: ignore[no-untyped-def]
    """Place every block of ``content`` on pages measured for ``device`` (a QPdfWriter)."""
    from .record_layout import RecordLayout

    layout = RecordLayout(device, content.header or content.title, content.footer or f"Curvewright {__version__}",
                          CAUTION)
    draw = {"curve": figures.draw_curve, "residuals": figures.draw_relative_errors,
            "influence": figures.draw_influence}
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
                         table.note)
        elif isinstance(block, FigureSlot):
            analyte = content.result.analyte(block.analyte)
            options: dict[str, object] = {"font_size": 20}
            if block.kind == "curve":
                options["level"] = level
            if block.kind in ("curve", "residuals"):
                options["log_x"] = figures.wide_range(analyte)
            image = figures.render(draw[block.kind], analyte, *FIGURE_PIXELS[block.kind], **options)
            layout.figure(image, block.caption)
        elif isinstance(block, SignatureLines):
            layout.signatures(list(block.lines))
    return layout


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


def pdf_bytes(content: ReportContent) -> bytes:
    ensure_application()
    from PySide6.QtCore import QBuffer, QByteArray, QIODevice, QMarginsF
    from PySide6.QtGui import QPageLayout, QPageSize, QPdfWriter

    data = QByteArray()
    buffer = QBuffer(data)
    buffer.open(QIODevice.OpenModeFlag.WriteOnly)
    writer = QPdfWriter(buffer)
    writer.setTitle(content.title)
    writer.setCreator(f"Curvewright {__version__}")
    if hasattr(writer, "setAuthor"):  # Qt 6.8 and later
        writer.setAuthor(content.author)
    writer.setDocumentXmpMetadata(xmp_metadata(content))
    writer.setResolution(300)
    writer.setPageLayout(QPageLayout(QPageSize(QPageSize.PageSizeId.A4), QPageLayout.Orientation.Portrait,
                                     QMarginsF(0, 0, 0, 0), QPageLayout.Unit.Millimeter))
    layout = lay_out(content, writer)
    layout.paint(writer)
    del writer
    buffer.close()
    return bytes(data.data())


def write_report(content: ReportContent, path: str | Path) -> str:
    """Write the PDF atomically; return the SHA-256 of the file."""
    data = pdf_bytes(content)
    write_atomically(Path(path), data)
    return file_sha256(data)
